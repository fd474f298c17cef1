//! Canonical layout of a worksheet (`sheaf fmt`).

use crate::ParseError;

pub(crate) fn format(src: &str) -> Result<String, Vec<ParseError>> {
    let _ = crate::parser::parse_lines(src)?;
    Ok(src.to_string())
}
