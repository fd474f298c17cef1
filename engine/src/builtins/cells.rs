//! Numbers read from workbooks.
//!
//! The engine reads no files: the checker lists every `cell(book, ref)`
//! call (both arguments are string literals) as an external input
//! ([`crate::Externals`]); the caller reads the workbooks and hands the
//! values in before checking, and the checker compiles each call to its
//! value. The function's own evaluation only passes that value on.

use super::{Builtin, CallError, Family, Sheet, p, string_literal};
use crate::types::{QuantityType, Ty};
use crate::value::Value;

pub static CELL: Builtin = Builtin {
    name: "cell",
    family: Family::Cells,
    params: &[p("book"), p("ref")],
    variadic: false,
    usage: "cell(\"basis.xlsx\", \"Site!C7\") * 1 kPa  or  cell(\"basis.xlsx\", \"p_site\") * 1 kPa",
    description: "number from a workbook cell (Sheet!C7) or defined name; dimensionless, multiply \
                  by a unit; the path is relative to the worksheet",
    typing: |b, args| {
        string_literal(b, args, 0)?;
        string_literal(b, args, 1)?;
        Ok(Ty::Num(QuantityType::DIMENSIONLESS))
    },
    // The checker compiles a call to `cell(value)`: one argument, the
    // number read by the caller.
    eval: |a, _| match a.values {
        [Value::Num(x)] => Ok(Value::Num(*x)),
        _ => Err(CallError::call(
            "internal: workbook cells are read before checking",
        )),
    },
    sheet: Sheet::EngineOnly,
};
