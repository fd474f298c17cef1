//! sheaf worksheet grammar: a pest grammar and a parser that turns worksheet
//! text into a spanned AST ([`ast`]). No I/O.

pub mod ast;
mod format;
mod parser;

pub use ast::*;

/// Deepest nesting of parentheses / unary minus / calls accepted in one
/// expression. Deeper input is rejected with a located error instead of
/// exhausting the stack.
pub const MAX_NESTING: usize = 256;

/// A syntax error: where, and what was expected, in words.
#[derive(Clone, Debug, PartialEq)]
pub struct ParseError {
    pub span: Span,
    pub message: String,
}

/// 1-based line and column (in characters) of a byte offset.
pub fn line_col(src: &str, offset: usize) -> (usize, usize) {
    let offset = offset.min(src.len());
    let before = src.get(..offset).unwrap_or("");
    let line = before.matches('\n').count() + 1;
    let line_start = before.rfind('\n').map_or(0, |i| i + 1);
    let col = src.get(line_start..offset).map_or(0, |s| s.chars().count()) + 1;
    (line, col)
}

/// Parses a whole worksheet. Every bad statement (logical line) yields one
/// error; all of them are returned, in source order.
pub fn parse(src: &str) -> Result<Worksheet, Vec<ParseError>> {
    parser::parse_lines(src).map(|lines| Worksheet {
        statements: lines.into_iter().map(|l| l.stmt).collect(),
    })
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
