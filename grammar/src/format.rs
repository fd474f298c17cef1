//! Canonical layout of a worksheet (`sheaf fmt`).
//!
//! The layout, decided here and documented for users:
//! - one statement per line; continuation lines are joined;
//! - one space around `=` and around the binary operators `+ - * / ^` and
//!   the comparison in a check; unary minus is written tight (`-x`);
//! - calls as `f(a, b, name: value)`: no spaces inside parentheses, `, `
//!   between arguments, `name: value` for named arguments, no trailing comma;
//! - field access tight (`st1.h`);
//! - parentheses are kept exactly where they were written (none added, none
//!   removed); a unary `+` is dropped;
//! - a number and its unit are separated by exactly one space; the unit text
//!   is kept as written (after a number it has no spaces at its top level by
//!   the grammar; runs of blanks inside parentheses become one space);
//! - a unit annotation is written `NAME: UNIT = ...` (like a named argument),
//!   the unit text as written with runs of blanks reduced to one space;
//! - descriptions of consecutive inputs, definitions and checks start in
//!   one column, two spaces after the widest code of the block (code wider
//!   than 48 characters is followed by a single space); a single space
//!   before a trailing `// comment`;
//! - headings as `#`/`##`/`###`, one space, the text; notes (`>`) and
//!   comments (`//`) verbatim;
//! - leading indentation and trailing whitespace removed, runs of blank lines
//!   collapsed to one, no blank lines at the start or end, and the file ends
//!   with exactly one newline (an empty worksheet formats to an empty file);
//! - strings are re-written from their value with the two escapes `\"` and
//!   `\\`, which reproduces what was written.

use crate::ParseError;
use crate::ast::*;
use crate::parser::parse_lines_norm;

pub(crate) fn format(src: &str) -> Result<String, Vec<ParseError>> {
    let (norm, lines) = parse_lines_norm(src)?;
    let f = Fmt { norm: &norm };
    // Render each line as its code part, description and trailing comment;
    // descriptions are aligned afterwards.
    let mut rendered: Vec<Rendered> = Vec::with_capacity(lines.len());
    let mut pending_blank = false;
    for line in &lines {
        if line.stmt.kind == StatementKind::Blank {
            pending_blank = !rendered.is_empty();
            continue;
        }
        let mut code = String::new();
        f.statement(&line.stmt, &mut code);
        let desc = description_of(&line.stmt).map(|d| {
            let mut q = String::new();
            push_string(&d.value, &mut q);
            q
        });
        if let Some(q) = &desc {
            // `statement` wrote " " + the description last; keep it apart.
            code.truncate(code.len().saturating_sub(q.len() + 1));
        }
        rendered.push(Rendered {
            blank_before: pending_blank,
            statement: desc.is_some() || is_statement(&line.stmt),
            code,
            desc,
            comment: line
                .trailing_comment
                .map(|c| c.slice(&norm).trim_end().to_string()),
        });
        pending_blank = false;
    }
    let columns = description_columns(&rendered);
    let mut out = String::with_capacity(src.len() + 16);
    for (r, col) in rendered.iter().zip(columns) {
        if r.blank_before {
            out.push('\n');
        }
        out.push_str(&r.code);
        if let Some(d) = &r.desc {
            let width = r.code.chars().count();
            let pad = if width < col { col - width } else { 1 };
            out.extend(std::iter::repeat_n(' ', pad));
            out.push_str(d);
        }
        if let Some(c) = &r.comment {
            out.push(' ');
            out.push_str(c);
        }
        out.push('\n');
    }
    Ok(out)
}

/// One formatted line before alignment.
struct Rendered {
    blank_before: bool,
    /// An input, definition or check (these align their descriptions).
    statement: bool,
    code: String,
    desc: Option<String>,
    comment: Option<String>,
}

/// Code wider than this does not push the description column of its block
/// further right; its description follows after one space.
const ALIGN_LIMIT: usize = 48;

/// The column at which each line's description starts: within a block of
/// consecutive statements (no blank line, heading, note or comment
/// between), two spaces after the widest code part of the block that has a
/// description and is not wider than `ALIGN_LIMIT`.
fn description_columns(lines: &[Rendered]) -> Vec<usize> {
    let mut cols = vec![0; lines.len()];
    let mut start = 0;
    while start < lines.len() {
        let mut end = start + 1;
        if lines[start].statement {
            while end < lines.len() && lines[end].statement && !lines[end].blank_before {
                end += 1;
            }
        }
        let col = lines[start..end]
            .iter()
            .filter(|l| l.desc.is_some())
            .map(|l| l.code.chars().count())
            .filter(|&w| w <= ALIGN_LIMIT)
            .max()
            .map_or(0, |w| w + 2);
        for c in &mut cols[start..end] {
            *c = col;
        }
        start = end;
    }
    cols
}

fn is_statement(st: &Statement) -> bool {
    matches!(
        st.kind,
        StatementKind::Input { .. } | StatementKind::Define { .. } | StatementKind::Check { .. }
    )
}

fn description_of(st: &Statement) -> Option<&StringLit> {
    match &st.kind {
        StatementKind::Input { description, .. }
        | StatementKind::Define { description, .. }
        | StatementKind::Check { description, .. } => description.as_ref(),
        _ => None,
    }
}

struct Fmt<'a> {
    /// Source with continuations blanked (same offsets as the original).
    norm: &'a str,
}

fn collapse_ws(s: &str) -> String {
    s.split_whitespace().collect::<Vec<_>>().join(" ")
}

fn push_string(value: &str, out: &mut String) {
    out.push('"');
    for c in value.chars() {
        if c == '"' || c == '\\' {
            out.push('\\');
        }
        out.push(c);
    }
    out.push('"');
}

impl Fmt<'_> {
    fn statement(&self, st: &Statement, out: &mut String) {
        match &st.kind {
            StatementKind::Heading { level, text } => {
                for _ in 0..*level {
                    out.push('#');
                }
                if !text.is_empty() {
                    out.push(' ');
                    out.push_str(text);
                }
            }
            StatementKind::Note { .. } | StatementKind::Comment { .. } => {
                out.push_str(st.span.slice(self.norm).trim());
            }
            StatementKind::Meta { key, value } => {
                out.push_str("meta ");
                out.push_str(&key.name);
                out.push_str(" = ");
                push_string(&value.value, out);
            }
            StatementKind::Input {
                name,
                value,
                description,
            } => {
                out.push_str("input ");
                out.push_str(&name.name);
                out.push_str(" = ");
                self.expr(value, out);
                self.description(description, out);
            }
            StatementKind::Define {
                name,
                unit,
                value,
                description,
            } => {
                out.push_str(&name.name);
                if let Some(u) = unit {
                    out.push_str(": ");
                    out.push_str(&collapse_ws(u.span.slice(self.norm)));
                }
                out.push_str(" = ");
                self.expr(value, out);
                self.description(description, out);
            }
            StatementKind::Check {
                left,
                op,
                right,
                description,
                ..
            } => {
                out.push_str("check ");
                self.expr(left, out);
                out.push(' ');
                out.push_str(op.symbol());
                out.push(' ');
                self.expr(right, out);
                self.description(description, out);
            }
            StatementKind::Blank => {}
        }
    }

    fn description(&self, d: &Option<StringLit>, out: &mut String) {
        if let Some(d) = d {
            out.push(' ');
            push_string(&d.value, out);
        }
    }

    /// Recursion depth is bounded: the parser never builds a tree deeper
    /// than `MAX_NESTING`.
    fn expr(&self, e: &Expr, out: &mut String) {
        match &e.kind {
            ExprKind::Number { text, unit, .. } => {
                out.push_str(text);
                if let Some(u) = unit {
                    out.push(' ');
                    out.push_str(&collapse_ws(u.span.slice(self.norm)));
                }
            }
            ExprKind::Str(s) => push_string(s, out),
            ExprKind::Name(n) => out.push_str(n),
            ExprKind::Neg(x) => {
                out.push('-');
                self.expr(x, out);
            }
            ExprKind::Binary { op, left, right } => {
                self.expr(left, out);
                out.push(' ');
                out.push_str(op.symbol());
                out.push(' ');
                self.expr(right, out);
            }
            ExprKind::Call { func, args } => {
                out.push_str(&func.name);
                out.push('(');
                for (i, a) in args.iter().enumerate() {
                    if i > 0 {
                        out.push_str(", ");
                    }
                    if let Some(n) = &a.name {
                        out.push_str(&n.name);
                        out.push_str(": ");
                    }
                    self.expr(&a.value, out);
                }
                out.push(')');
            }
            ExprKind::Field { base, field } => {
                self.expr(base, out);
                out.push('.');
                out.push_str(&field.name);
            }
            ExprKind::Paren(x) => {
                out.push('(');
                self.expr(x, out);
                out.push(')');
            }
        }
    }
}
