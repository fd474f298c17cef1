//! sheaf engine: units and dimensions, checker, dependency graph, evaluator,
//! thermodynamic models. A library: no terminal I/O, never exits the process.

pub mod thermo;
pub mod units;
