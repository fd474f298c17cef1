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
