//! sheaf worksheet grammar: a pest grammar and a parser that turns worksheet
//! text into a spanned AST ([`ast`]). No I/O.

pub mod ast;

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
