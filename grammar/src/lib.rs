//! sheaf worksheet grammar: a pest grammar and a parser that turns worksheet
//! text into a spanned AST ([`ast`]). No I/O.

pub mod ast;
mod format;
mod parser;

pub use ast::*;

/// Deepest nesting accepted in one expression: parentheses, calls, fields,
/// prefix operators (`-`, `not`), powers, comparisons and `if` each add a
/// level; a left-associative chain (`a + b + c + ...`, `p and q and ...`) is
/// one level however many operands it has. Deeper input is rejected with a
/// located error instead of exhausting the stack.
pub const MAX_NESTING: usize = 256;

/// Most operands of one left-associative chain (`a + b - c + ...`,
/// `a * b / c`, `p and q and ...`). Interim: the grammar builds, formats
/// and drops any chain without recursion, but the engine's checker and
/// evaluator still recurse once per operand; raise this when they do not.
pub const MAX_CHAIN_OPERANDS: usize = 1024;

/// Largest worksheet accepted (64 MiB); a larger one is refused with an
/// error located at the first byte past the limit.
pub const MAX_SOURCE_BYTES: usize = 64 << 20;

/// Longest statement (logical line, continuations included) accepted
/// (1 MiB); a longer one is refused with an error located at its start.
pub const MAX_STATEMENT_BYTES: usize = 1 << 20;

/// A syntax error: where, and what was expected, in words.
#[derive(Clone, Debug, PartialEq)]
pub struct ParseError {
    pub span: Span,
    pub message: String,
}

/// 1-based line and column (in characters) of a byte offset. A line ends
/// at LF, CR LF or a lone CR (as in the parser).
pub fn line_col(src: &str, offset: usize) -> (usize, usize) {
    let mut offset = offset.min(src.len());
    while !src.is_char_boundary(offset) {
        offset -= 1;
    }
    let before = &src.as_bytes()[..offset];
    let (line, line_start) = if !before.contains(&b'\r') {
        // Common case, kept fast (callers may ask for many offsets).
        let lf = before.iter().filter(|b| **b == b'\n').count();
        let start = before
            .iter()
            .rposition(|b| *b == b'\n')
            .map_or(0, |i| i + 1);
        (lf + 1, start)
    } else {
        let mut line = 1;
        let mut line_start = 0;
        for (i, &b) in before.iter().enumerate() {
            if b == b'\n' || (b == b'\r' && src.as_bytes().get(i + 1) != Some(&b'\n')) {
                line += 1;
                line_start = i + 1;
            }
        }
        (line, line_start)
    };
    let col = src.get(line_start..offset).map_or(0, |s| s.chars().count()) + 1;
    (line, col)
}

/// Parses a whole worksheet. Every bad statement (logical line) yields one
/// error; all of them are returned, in source order.
pub fn parse(src: &str) -> Result<Worksheet, Vec<ParseError>> {
    parser::parse_statements(src).map(|statements| Worksheet { statements })
}

/// Parses one expression (for `sheaf eval "EXPR"`). Spans are offsets into
/// `src`.
pub fn parse_expr(src: &str) -> Result<Expr, ParseError> {
    parser::parse_expr(src)
}

/// Parses a unit (for `--in UNIT` and the like) with the annotation rules:
/// spaces allowed anywhere, a space between factors multiplies and binds
/// tighter than `*` and `/` (`kJ/kg K` = kJ/(kg K)), `1` allowed (`1/s`).
pub fn parse_unit(src: &str) -> Result<UnitExpr, ParseError> {
    parser::parse_unit(src)
}

/// Formats a worksheet in the canonical layout (`sheaf fmt`).
pub fn format(src: &str) -> Result<String, Vec<ParseError>> {
    format::format(src)
}

pub use parser::KEYWORDS;
