//! The what-if statements of a worksheet as the checker produces them
//! (`case`, `sweep`, `find`: values folded to SI, names resolved,
//! dimensions checked) and the rules for sweep points. `whatif` applies
//! them to a `Model`; this module depends on neither, so the checker can
//! build them without an import cycle.

use sheaf_grammar::Span;

use crate::eval::Code;
use crate::thermo::Field;
use crate::units::{Dim, DisplayUnit};
use crate::value::Value;

/// The what-if statements of a worksheet, checked.
#[derive(Clone, Debug, Default)]
pub struct WhatIf {
    pub cases: Vec<CaseDef>,
    pub sweeps: Vec<SweepDef>,
    /// In solving order (a find whose condition uses another find's input
    /// comes after it).
    pub finds: Vec<FindDef>,
}

/// `case NAME: INPUT = VALUE, ...`.
#[derive(Clone, Debug)]
pub struct CaseDef {
    pub name: String,
    /// Where the name is written.
    pub span: Span,
    pub description: Option<String>,
    pub settings: Vec<CaseSetting>,
}

/// One `INPUT = VALUE` of a case.
#[derive(Clone, Debug)]
pub struct CaseSetting {
    /// The input's node.
    pub input: usize,
    pub si_value: f64,
    /// The value as written (`9 barg`).
    pub text: String,
    pub span: Span,
}

/// `sweep INPUT ... show ...`.
#[derive(Clone, Debug)]
pub struct SweepDef {
    /// The swept input's node.
    pub input: usize,
    /// Where the input is named.
    pub span: Span,
    pub description: Option<String>,
    /// The points, SI, in order.
    pub points: Vec<f64>,
    pub show: Vec<ShowColumn>,
}

/// A quantity shown by a sweep: a number, or a number field of a state.
#[derive(Clone, Debug)]
pub struct ShowColumn {
    /// As written (`T2`, `st2.T`).
    pub name: String,
    pub node: usize,
    pub field: Option<Field>,
    pub dim: Dim,
    pub display: DisplayUnit,
}

impl ShowColumn {
    /// The column's SI value among `values`, if it has one.
    pub fn value_in(&self, values: &[Value]) -> Option<f64> {
        match (&values[self.node], self.field) {
            (Value::Num(x), None) => Some(*x),
            (Value::State(sv), Some(f)) => sv.st.get(f),
            _ => None,
        }
    }
}

/// `find INPUT in LOW .. HIGH where LEFT = RIGHT`.
#[derive(Clone, Debug)]
pub struct FindDef {
    /// The solved input's node.
    pub input: usize,
    pub input_name: String,
    /// Where the input is named in the `find`.
    pub span: Span,
    /// The whole condition `LEFT = RIGHT` as written.
    pub condition: String,
    pub condition_span: Span,
    pub description: Option<String>,
    /// The bracket, SI.
    pub low: f64,
    pub high: f64,
    pub left: Code,
    pub right: Code,
    /// Dimension of the two sides and the unit they are shown in.
    pub dim: Dim,
    pub side_display: DisplayUnit,
    /// The input's display unit and dimension (for messages).
    pub input_display: DisplayUnit,
    pub input_dim: Dim,
    /// Nodes evaluated for one trial value, in evaluation order: the
    /// input, then what lies between it and the condition.
    pub plan: Vec<usize>,
    /// Other inputs the found value depends on (the package flags the
    /// value stale when one of them changes).
    pub depends_on: Vec<usize>,
}

/// How a `find` found its input's value.
#[derive(Clone, Debug, PartialEq)]
pub struct Found {
    /// Index into the model's finds.
    pub find: usize,
    /// The bracket, SI.
    pub low: f64,
    pub high: f64,
    /// Brent steps after the two ends of the bracket.
    pub iterations: usize,
    /// LEFT − RIGHT at the found value, SI.
    pub residual: f64,
}

/// Relative tolerance of the root finder: it stops when the bracket
/// around the root is narrower than `XTOL_REL · |HIGH − LOW|` (plus four
/// machine epsilons of the value), i.e. the input is found to about 13
/// significant digits of the bracket, or when the residual is exactly 0.
pub const XTOL_REL: f64 = 1e-13;

/// Most Brent steps before a find is declared not converged.
pub const MAX_ITERATIONS: usize = 200;

/// Most points in one sweep.
pub const MAX_POINTS: usize = 10_000_000;

/// Points `A + i·D` for i = 0, 1, ... up to `B`; `B` is included when it
/// lies within 1e-9·|D| of a point. `D` must be non-zero and point from
/// `A` towards `B` (negative when B < A); `A == B` gives one point.
pub fn step_points(a: f64, b: f64, d: f64) -> Result<Vec<f64>, String> {
    if a == b {
        return Ok(vec![a]);
    }
    if d == 0.0 || !d.is_finite() {
        return Err("the step must not be zero".into());
    }
    if (b - a).signum() != d.signum() {
        return Err(format!(
            "the step goes the wrong way: from the first value to the last it must be {}",
            if b > a { "positive" } else { "negative" }
        ));
    }
    let span = (b - a) / d;
    let n = (span + 1e-9).floor();
    if n.is_nan() || n >= MAX_POINTS as f64 {
        return Err(format!(
            "{} points; a sweep has at most {MAX_POINTS}",
            n + 1.0
        ));
    }
    let n = n as usize;
    Ok((0..=n)
        .map(|i| {
            if i == n && (span - n as f64).abs() <= 1e-9 {
                b
            } else {
                a + i as f64 * d
            }
        })
        .collect())
}

/// `count N` points from `A` to `B` inclusive, evenly spaced.
pub fn count_points(a: f64, b: f64, n: usize) -> Result<Vec<f64>, String> {
    if n < 2 {
        return Err("`count` needs at least 2 points".into());
    }
    if n > MAX_POINTS {
        return Err(format!("{n} points; a sweep has at most {MAX_POINTS}"));
    }
    let d = (b - a) / (n - 1) as f64;
    Ok((0..n)
        .map(|i| if i == n - 1 { b } else { a + i as f64 * d })
        .collect())
}
