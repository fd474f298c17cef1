//! sheaf engine: units and dimensions, checker, dependency graph, evaluator,
//! thermodynamic models, report model. A library: no terminal I/O, never
//! exits the process.
//!
//! Data flow: text -> [`sheaf_grammar::parse`] (AST with spans) ->
//! [`check::check`] (names, graph, types, compiled [`eval::Code`]) ->
//! [`Model::evaluate`] (plain `f64` in topological order) ->
//! [`Model::report`] (display values) -> CLI renderers and the xlsx writer.

pub mod builtins;
pub mod calc;
pub mod check;
pub mod diag;
pub mod eval;
pub mod externals;
pub mod fields;
pub(crate) mod graph;
pub mod model;
pub mod report;
pub mod study;
mod suggest;
pub mod thermo;
pub mod types;
pub mod units;
pub mod value;
pub mod whatif;
pub mod xlsx;

pub use calc::{CalcError, Calculated, Evaluated, Reading, evaluate_expression};
pub use check::{DisplayUnit, Node, NodeKind};
pub use diag::{Diagnostic, Label, Severity};
pub use externals::{CellRequest, Externals, UseRequest, UsedSource};
pub use model::{Model, Override, OverrideSource, Parsed, Status, Used, UsedFile};
pub use report::{CAUTION, Report};
