//! Canonical layout of a worksheet (`sheaf fmt`).
//!
//! The layout, decided here and documented for users:
//! - one statement per line; a statement the user continued over several
//!   lines with `\` keeps its line breaks where they were (before the token
//!   that started each continuation line), each continuation line indented
//!   by four spaces; no new breaks are added (no automatic wrapping);
//! - one space around `=` and around the binary operators `+ - * / ^`, the
//!   comparisons and `and` / `or`; unary minus is written tight (`-x`),
//!   `not` with one space; `if C then A else B` with single spaces;
//! - `case NAME: A = 1, B = 2`, `sweep X from A to B step D show P, Q`,
//!   `sweep X over A, B show P`, `find X in A .. B where L = R`,
//!   `use "FILE" as P`, `gauge EXPR`: single spaces, `, ` between list items,
//!   ` .. ` between the bounds of a `find`;
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
    // Render each line as its code part, description and trailing comment;
    // descriptions are aligned afterwards.
    let mut rendered: Vec<Rendered> = Vec::with_capacity(lines.len());
    let mut pending_blank = false;
    for line in &lines {
        if line.stmt.kind == StatementKind::Blank {
            pending_blank = !rendered.is_empty();
            continue;
        }
        let end = line.trailing_comment.map_or(line.stmt.span.end, |c| c.end);
        let mut f = Fmt {
            norm: &norm,
            breaks: continuation_breaks(src, line.stmt.span.start, end),
            next_break: 0,
            out: String::new(),
        };
        f.statement(&line.stmt);
        let desc = description_of(&line.stmt).map(|d| {
            let mut q = String::new();
            if f.break_before(d.span.start) {
                q.push_str(CONT);
            }
            push_string(&d.value, &mut q);
            q
        });
        let comment = line.trailing_comment.map(|c| {
            let mut q = String::new();
            if f.break_before(c.start) {
                q.push_str(CONT);
            }
            q.push_str(c.slice(&norm).trim_end());
            q
        });
        rendered.push(Rendered {
            blank_before: pending_blank,
            statement: desc.is_some() || is_statement(&line.stmt),
            code: f.out,
            desc,
            comment,
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
            if d.starts_with(CONT) {
                out.push_str(d);
            } else {
                let width = last_line_width(&r.code);
                let pad = if width < col { col - width } else { 1 };
                out.extend(std::iter::repeat_n(' ', pad));
                out.push_str(d);
            }
        }
        if let Some(c) = &r.comment {
            if !c.starts_with(CONT) {
                out.push(' ');
            }
            out.push_str(c);
        }
        out.push('\n');
    }
    Ok(out)
}

/// What ends a line that continues: a space, `\`, the line end and the
/// continuation line's indentation.
const CONT: &str = " \\\n    ";

/// Byte offsets of the line breaks inside a logical line (each one was a
/// `\` continuation).
fn continuation_breaks(src: &str, start: usize, end: usize) -> Vec<usize> {
    let Some(text) = src.get(start..end) else {
        return Vec::new();
    };
    let b = text.as_bytes();
    let mut out = Vec::new();
    let mut i = 0;
    while let Some(k) = b[i..].iter().position(|c| *c == b'\n' || *c == b'\r') {
        out.push(start + i + k);
        // CR LF is one break.
        i += k + if b[i + k] == b'\r' && b.get(i + k + 1) == Some(&b'\n') {
            2
        } else {
            1
        };
    }
    out
}

fn last_line_width(code: &str) -> usize {
    code.rsplit('\n').next().unwrap_or(code).chars().count()
}

/// One formatted line before alignment.
struct Rendered {
    blank_before: bool,
    /// A statement that can carry a description (these align their
    /// descriptions).
    statement: bool,
    code: String,
    /// The description, starting with `CONT` when the user put it on a
    /// continuation line (then it is not aligned).
    desc: Option<String>,
    /// The trailing comment, starting with `CONT` likewise.
    comment: Option<String>,
}

/// Code wider than this does not push the description column of its block
/// further right; its description follows after one space.
const ALIGN_LIMIT: usize = 48;

/// The column at which each line's description starts: within a block of
/// consecutive statements (no blank line, heading, note or comment
/// between), two spaces after the widest code part of the block that has a
/// description and is not wider than `ALIGN_LIMIT` (for a continued
/// statement, the width of its last line).
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
            .filter(|l| l.desc.as_ref().is_some_and(|d| !d.starts_with(CONT)))
            .map(|l| last_line_width(&l.code))
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
        StatementKind::Input { .. }
            | StatementKind::Define { .. }
            | StatementKind::Check { .. }
            | StatementKind::Case { .. }
            | StatementKind::Sweep { .. }
            | StatementKind::Find { .. }
            | StatementKind::Gauge { .. }
    )
}

fn description_of(st: &Statement) -> Option<&StringLit> {
    match &st.kind {
        StatementKind::Input { description, .. }
        | StatementKind::Define { description, .. }
        | StatementKind::Check { description, .. }
        | StatementKind::Case { description, .. }
        | StatementKind::Sweep { description, .. }
        | StatementKind::Find { description, .. }
        | StatementKind::Gauge { description, .. } => description.as_ref(),
        _ => None,
    }
}

struct Fmt<'a> {
    /// Source with continuations blanked (same offsets as the original).
    norm: &'a str,
    /// Continuation line breaks of this statement (source offsets), and the
    /// first one not yet written.
    breaks: Vec<usize>,
    next_break: usize,
    out: String,
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
    /// Whether a continuation break lies before source offset `pos`
    /// (consumes it).
    fn break_before(&mut self, pos: usize) -> bool {
        let mut any = false;
        while self.breaks.get(self.next_break).is_some_and(|&b| b < pos) {
            self.next_break += 1;
            any = true;
        }
        any
    }

    /// Before writing the token that starts at source offset `pos`: write
    /// the user's continuation break if one lies before it.
    fn at(&mut self, pos: usize) {
        if self.break_before(pos) {
            let n = self.out.trim_end_matches(' ').len();
            self.out.truncate(n);
            self.out.push_str(CONT);
        }
    }

    fn push(&mut self, s: &str) {
        self.out.push_str(s);
    }

    /// A single space, unless a continuation line just started.
    fn space(&mut self) {
        if !self.out.ends_with(CONT) {
            self.out.push(' ');
        }
    }

    /// Source offset of the first non-blank character in `from..to` (where
    /// an operator or keyword between two spans stands).
    fn token_between(&self, from: usize, to: usize) -> usize {
        self.norm
            .get(from..to)
            .and_then(|t| t.find(|c: char| c != ' ' && c != '\t'))
            .map_or(from, |i| from + i)
    }

    /// ` WORD ` (an operator or keyword) standing between `from` and `to`.
    fn infix(&mut self, word: &str, from: usize, to: usize) {
        let at = self.token_between(from, to);
        self.at(at);
        self.space();
        self.push(word);
        self.push(" ");
    }

    fn ident(&mut self, id: &Ident) {
        self.at(id.span.start);
        self.push(&id.name);
    }

    fn statement(&mut self, st: &Statement) {
        match &st.kind {
            StatementKind::Heading { level, text } => {
                for _ in 0..*level {
                    self.push("#");
                }
                if !text.is_empty() {
                    self.push(" ");
                    self.push(text);
                }
            }
            StatementKind::Note { .. } | StatementKind::Comment { .. } => {
                let t = st.span.slice(self.norm).trim();
                self.out.push_str(t);
            }
            StatementKind::Meta { key, value } => {
                self.push("meta ");
                self.ident(key);
                self.infix("=", key.span.end, value.span.start);
                self.at(value.span.start);
                push_string(&value.value, &mut self.out);
            }
            StatementKind::Input { name, value, .. } => {
                self.push("input ");
                self.ident(name);
                self.infix("=", name.span.end, value.span.start);
                self.expr(value);
            }
            StatementKind::Define {
                name, unit, value, ..
            } => {
                self.ident(name);
                let mut after = name.span.end;
                if let Some(u) = unit {
                    let colon = self.token_between(name.span.end, u.span.start);
                    self.at(colon);
                    self.push(": ");
                    self.at(u.span.start);
                    let text = collapse_ws(u.span.slice(self.norm));
                    self.push(&text);
                    after = u.span.end;
                }
                self.infix("=", after, value.span.start);
                self.expr(value);
            }
            StatementKind::Check { cond, .. } => {
                self.push("check ");
                self.expr(cond);
            }
            StatementKind::Gauge { value, .. } => {
                self.push("gauge ");
                self.expr(value);
            }
            StatementKind::Case { name, settings, .. } => {
                self.push("case ");
                self.ident(name);
                self.push(":");
                for (i, s) in settings.iter().enumerate() {
                    if i > 0 {
                        self.push(",");
                    }
                    self.at(s.span.start);
                    self.space();
                    self.ident(&s.input);
                    self.infix("=", s.input.span.end, s.value.span.start);
                    self.expr(&s.value);
                }
            }
            StatementKind::Sweep {
                input,
                points,
                show,
                ..
            } => {
                self.push("sweep ");
                self.ident(input);
                let mut prev = input.span.end;
                match points {
                    SweepPoints::Step { from, to, step }
                    | SweepPoints::Count {
                        from,
                        to,
                        count: step,
                    } => {
                        let last = if matches!(points, SweepPoints::Step { .. }) {
                            "step"
                        } else {
                            "count"
                        };
                        for (word, e) in [("from", from), ("to", to), (last, step)] {
                            self.infix(word, prev, e.span.start);
                            self.expr(e);
                            prev = e.span.end;
                        }
                    }
                    SweepPoints::Over(values) => {
                        for (i, e) in values.iter().enumerate() {
                            if i == 0 {
                                self.infix("over", prev, e.span.start);
                            } else {
                                self.push(", ");
                            }
                            self.expr(e);
                            prev = e.span.end;
                        }
                    }
                }
                for (i, n) in show.iter().enumerate() {
                    if i == 0 {
                        self.infix("show", prev, n.span.start);
                    } else {
                        self.push(", ");
                    }
                    self.ident(n);
                }
            }
            StatementKind::Find {
                input,
                low,
                high,
                left,
                eq_span,
                right,
                ..
            } => {
                self.push("find ");
                self.ident(input);
                self.infix("in", input.span.end, low.span.start);
                self.expr(low);
                self.infix("..", low.span.end, high.span.start);
                self.expr(high);
                self.infix("where", high.span.end, left.span.start);
                self.expr(left);
                self.at(eq_span.start);
                self.space();
                self.push("= ");
                self.expr(right);
            }
            StatementKind::Use { path, prefix } => {
                self.push("use ");
                self.at(path.span.start);
                push_string(&path.value, &mut self.out);
                self.infix("as", path.span.end, prefix.span.start);
                self.ident(prefix);
            }
            StatementKind::Blank => {}
        }
    }

    /// Recursion depth is bounded by the nesting the parser accepts
    /// (`MAX_NESTING`); a left-associative chain, which is as deep as it is
    /// long, is walked in a loop.
    fn expr(&mut self, e: &Expr) {
        // The left spine of a chain of infix operators, outermost first.
        let mut spine = Vec::new();
        let mut cur = e;
        while let ExprKind::Binary { left, .. } | ExprKind::Logic { left, .. } = &cur.kind {
            spine.push(cur);
            cur = left;
        }
        self.operand(cur);
        for node in spine.iter().rev() {
            match &node.kind {
                ExprKind::Binary { op, left, right } => {
                    self.infix(op.symbol(), left.span.end, right.span.start);
                    self.expr(right);
                }
                ExprKind::Logic {
                    op, op_span, right, ..
                } => {
                    self.at(op_span.start);
                    self.space();
                    self.push(op.keyword());
                    self.push(" ");
                    self.expr(right);
                }
                _ => {}
            }
        }
    }

    /// An expression that is not an infix chain (or whose chain `expr`
    /// walks).
    fn operand(&mut self, e: &Expr) {
        self.at(e.span.start);
        match &e.kind {
            ExprKind::Number { text, unit, .. } => {
                self.push(text);
                if let Some(u) = unit {
                    self.at(u.span.start);
                    self.space();
                    let t = collapse_ws(u.span.slice(self.norm));
                    self.push(&t);
                }
            }
            ExprKind::Str(s) => push_string(s, &mut self.out),
            ExprKind::Name(n) => self.push(n),
            ExprKind::Neg(x) => {
                self.push("-");
                self.expr(x);
            }
            ExprKind::Not(x) => {
                self.push("not ");
                self.expr(x);
            }
            ExprKind::Binary { .. } | ExprKind::Logic { .. } => self.expr(e),
            ExprKind::Compare { first, rest } => {
                self.expr(first);
                for l in rest {
                    self.at(l.op_span.start);
                    self.space();
                    self.push(l.op.symbol());
                    self.push(" ");
                    self.expr(&l.operand);
                }
            }
            ExprKind::If {
                cond,
                then_branch,
                else_branch,
            } => {
                self.push("if ");
                self.expr(cond);
                self.infix("then", cond.span.end, then_branch.span.start);
                self.expr(then_branch);
                self.infix("else", then_branch.span.end, else_branch.span.start);
                self.expr(else_branch);
            }
            ExprKind::Call { func, args } => {
                self.push(&func.name);
                self.push("(");
                for (i, a) in args.iter().enumerate() {
                    if i > 0 {
                        self.push(",");
                        self.at(a.span.start);
                        self.space();
                    }
                    if let Some(n) = &a.name {
                        self.ident(n);
                        self.push(": ");
                    }
                    self.expr(&a.value);
                }
                self.at(e.span.end.saturating_sub(1));
                self.push(")");
            }
            ExprKind::Field { base, field } => {
                self.expr(base);
                self.at(field.span.start);
                self.push(".");
                self.push(&field.name);
            }
            ExprKind::Paren(x) => {
                self.push("(");
                self.expr(x);
                self.at(e.span.end.saturating_sub(1));
                self.push(")");
            }
        }
    }
}
