//! Rendering engine diagnostics with source snippets (codespan-reporting).

use std::io::IsTerminal;

use codespan_reporting::diagnostic::{Diagnostic as CsDiagnostic, Label as CsLabel};
use codespan_reporting::files::SimpleFile;
use codespan_reporting::term::{self, Config, termcolor};
use sheaf_engine::{Diagnostic, Severity};

use crate::render::escape_controls;

/// The source as shown in snippets, with every byte offset unchanged (the
/// spans index it): a lone CR becomes the line break the parser reads it
/// as, the CR of CR LF a space, and any other control character (ESC, BEL,
/// backspace, C1 controls) or bidirectional override becomes `?` per byte,
/// so a worksheet cannot drive the terminal through an error message.
fn terminal_safe(source: &str) -> String {
    let mut out = String::with_capacity(source.len());
    let mut chars = source.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '\n' | '\t' => out.push(c),
            '\r' if chars.peek() == Some(&'\n') => out.push(' '),
            '\r' => out.push('\n'),
            c if c.is_control()
                || matches!(c, '\u{202a}'..='\u{202e}' | '\u{2066}'..='\u{2069}') =>
            {
                out.extend(std::iter::repeat_n('?', c.len_utf8()));
            }
            c => out.push(c),
        }
    }
    out
}

/// Render diagnostics for a file as plain text (no colour).
pub fn render_plain(file_name: &str, source: &str, diags: &[Diagnostic]) -> String {
    let shown = terminal_safe(source);
    let name = escape_controls(file_name);
    let file = SimpleFile::new(name.as_str(), shown.as_str());
    let config = Config::default();
    let mut out = String::new();
    for d in diags {
        match term::emit_into_string(&config, &file, &convert(d, source)) {
            Ok(s) => out.push_str(&s),
            Err(_) => out.push_str(&format!("error: {}\n", d.message)),
        }
    }
    out
}

/// Print diagnostics to stderr, in colour when stderr is a terminal.
pub fn emit(file_name: &str, source: &str, diags: &[Diagnostic]) {
    if std::io::stderr().is_terminal() && std::env::var_os("NO_COLOR").is_none() {
        let shown = terminal_safe(source);
        let name = escape_controls(file_name);
        let file = SimpleFile::new(name.as_str(), shown.as_str());
        let config = Config::default();
        let stream = termcolor::StandardStream::stderr(termcolor::ColorChoice::Auto);
        let mut lock = stream.lock();
        for d in diags {
            if term::emit_to_write_style(&mut lock, &config, &file, &convert(d, source)).is_err() {
                eprintln!("error: {}", d.message);
            }
        }
    } else {
        eprint!("{}", render_plain(file_name, source, diags));
    }
}

fn convert(d: &Diagnostic, source: &str) -> CsDiagnostic<()> {
    let base = match d.severity {
        Severity::Error => CsDiagnostic::error(),
        Severity::Warning => CsDiagnostic::warning(),
    };
    let clamp = |s: usize| s.min(source.len());
    let labels = d
        .labels
        .iter()
        .map(|l| {
            let range = clamp(l.span.start)..clamp(l.span.end.max(l.span.start));
            let label = if l.primary {
                CsLabel::primary((), range)
            } else {
                CsLabel::secondary((), range)
            };
            label.with_message(escape_controls(&l.message))
        })
        .collect();
    base.with_message(escape_controls(&d.message))
        .with_labels(labels)
        .with_notes(d.notes.iter().map(|n| escape_controls(n)).collect())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn snippets_keep_offsets_and_drop_terminal_controls() {
        let src = "x = 1 m # \u{1b}[2K\u{1b}[1A PASS\r\ny = \u{202e}z\rw = \u{85}q\n";
        let safe = terminal_safe(src);
        assert_eq!(safe.len(), src.len());
        assert!(
            !safe
                .chars()
                .any(|c| c.is_control() && c != '\n' && c != '\t')
        );
        assert!(!safe.contains('\u{202e}'));
        // A lone CR is a line break, as the parser reads it; CR LF one.
        assert_eq!(
            safe.lines().count(),
            src.split(['\n', '\r']).filter(|l| !l.is_empty()).count()
        );
        // A diagnostic in the line after the escapes points at `z`.
        let at = src.find('z').unwrap_or(0);
        let d = Diagnostic::error(
            "unknown name `z`\u{1b}[31m",
            sheaf_grammar::Span::new(at, at + 1),
        );
        let text = render_plain("w\u{1b}s.sheaf", src, &[d]);
        assert!(!text.contains('\u{1b}'), "{text:?}");
        assert!(text.contains(":2:"), "{text}");
    }
}
