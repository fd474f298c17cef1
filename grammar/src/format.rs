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
//! - a single space before a description string and before a trailing
//!   `// comment` (both kept);
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
    let mut out = String::with_capacity(src.len() + 16);
    let mut pending_blank = false;
    for line in &lines {
        if line.stmt.kind == StatementKind::Blank {
            pending_blank = !out.is_empty();
            continue;
        }
        if pending_blank {
            out.push('\n');
            pending_blank = false;
        }
        f.statement(&line.stmt, &mut out);
        if let Some(c) = line.trailing_comment {
            out.push(' ');
            out.push_str(c.slice(&norm).trim_end());
        }
        out.push('\n');
    }
    Ok(out)
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
