//! Diagnostics: what went wrong, where, in words. The engine produces them;
//! the CLI renders them with source snippets.

use serde::Serialize;
use sheaf_grammar::Span;

#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
pub enum Severity {
    Error,
    Warning,
}

/// A span with a short message. The primary label marks the place of the
/// problem; secondary labels point at related places (the other side of a
/// mismatch, the links of a cycle).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Label {
    pub span: Span,
    pub message: String,
    pub primary: bool,
}

#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Diagnostic {
    pub severity: Severity,
    pub message: String,
    pub labels: Vec<Label>,
    /// Extra lines: "help: ...", "note: ...".
    pub notes: Vec<String>,
}

impl Diagnostic {
    pub fn error(message: impl Into<String>, span: Span) -> Self {
        Diagnostic {
            severity: Severity::Error,
            message: message.into(),
            labels: vec![Label {
                span,
                message: String::new(),
                primary: true,
            }],
            notes: Vec::new(),
        }
    }

    /// A located warning: the result stands, but a model is used near or
    /// past a limit of common practice.
    pub fn warning(message: impl Into<String>, span: Span) -> Self {
        Diagnostic {
            severity: Severity::Warning,
            ..Diagnostic::error(message, span)
        }
    }

    /// An error with no location (e.g. a problem with the file as a whole).
    pub fn unlocated(message: impl Into<String>) -> Self {
        Diagnostic {
            severity: Severity::Error,
            message: message.into(),
            labels: Vec::new(),
            notes: Vec::new(),
        }
    }

    /// Set the message of the primary label.
    pub fn with_label(mut self, message: impl Into<String>) -> Self {
        if let Some(l) = self.labels.iter_mut().find(|l| l.primary) {
            l.message = message.into();
        }
        self
    }

    pub fn with_secondary(mut self, span: Span, message: impl Into<String>) -> Self {
        self.labels.push(Label {
            span,
            message: message.into(),
            primary: false,
        });
        self
    }

    pub fn with_note(mut self, note: impl Into<String>) -> Self {
        self.notes.push(note.into());
        self
    }

    /// The primary span, if any.
    pub fn span(&self) -> Option<Span> {
        self.labels.iter().find(|l| l.primary).map(|l| l.span)
    }
}

impl From<sheaf_grammar::ParseError> for Diagnostic {
    fn from(e: sheaf_grammar::ParseError) -> Self {
        Diagnostic::error(e.message, e.span)
    }
}

/// Line numbers of byte offsets, found by binary search over the line
/// starts (computed once), so that numbering every statement of a large
/// worksheet stays linear.
#[derive(Clone, Debug)]
pub struct LineIndex {
    starts: Vec<usize>,
}

impl LineIndex {
    /// Lines end at `\n`, at `\r\n`, and at a lone `\r` (as the grammar
    /// reads them).
    pub fn new(src: &str) -> LineIndex {
        let b = src.as_bytes();
        let mut starts = vec![0];
        for (i, &c) in b.iter().enumerate() {
            if c == b'\n' || (c == b'\r' && b.get(i + 1) != Some(&b'\n')) {
                starts.push(i + 1);
            }
        }
        LineIndex { starts }
    }

    /// 1-based line of a byte offset.
    pub fn line(&self, offset: usize) -> usize {
        match self.starts.binary_search(&offset) {
            Ok(i) => i + 1,
            Err(i) => i,
        }
    }
}

#[cfg(test)]
mod line_tests {
    use super::LineIndex;

    #[test]
    fn lines_of_offsets_for_every_line_end() {
        let src = "a\nb\r\nc\rd";
        let ix = LineIndex::new(src);
        let line = |c: char| ix.line(src.find(c).unwrap());
        assert_eq!([line('a'), line('b'), line('c'), line('d')], [1, 2, 3, 4]);
        // Agrees with the grammar's own numbering on LF and CRLF text.
        let src = "x = 1\n\ny = 2\r\nz = 3\n";
        let ix = LineIndex::new(src);
        for (i, _) in src.char_indices() {
            assert_eq!(ix.line(i), sheaf_grammar::line_col(src, i).0, "offset {i}");
        }
    }
}
