//! Rendering engine diagnostics with source snippets (codespan-reporting).

use std::io::IsTerminal;

use codespan_reporting::diagnostic::{Diagnostic as CsDiagnostic, Label as CsLabel};
use codespan_reporting::files::SimpleFile;
use codespan_reporting::term::{self, Config, termcolor};
use sheaf_engine::{Diagnostic, Severity};

/// Render diagnostics for a file as plain text (no colour).
pub fn render_plain(file_name: &str, source: &str, diags: &[Diagnostic]) -> String {
    let file = SimpleFile::new(file_name, source);
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
        let file = SimpleFile::new(file_name, source);
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
            label.with_message(l.message.clone())
        })
        .collect();
    base.with_message(d.message.clone())
        .with_labels(labels)
        .with_notes(d.notes.clone())
}
