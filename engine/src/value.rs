//! Run-time values of the worksheet language. Numbers are SI `f64`.

use std::sync::Arc;

use crate::thermo::{State, Substance};

/// A state value: the state and the substance it belongs to.
#[derive(Clone, Debug, PartialEq)]
pub struct StateVal {
    pub sub: Arc<Substance>,
    pub st: State,
}

/// A saturated pair and the fluid it belongs to.
#[derive(Clone, Debug, PartialEq)]
pub struct SaturationVal {
    pub sub: Arc<Substance>,
    pub sat: crate::thermo::fluid::Saturation,
}

/// A run-time value. Numbers are SI `f64`.
#[derive(Clone, Debug, PartialEq)]
pub enum Value {
    Num(f64),
    Bool(bool),
    Str(Arc<str>),
    Substance(Arc<Substance>),
    State(Arc<StateVal>),
    /// A saturated pair of a real fluid.
    Saturation(Arc<SaturationVal>),
    /// An optional argument that was not given.
    Absent,
}

impl Value {
    pub fn as_num(&self) -> Option<f64> {
        match self {
            Value::Num(x) => Some(*x),
            _ => None,
        }
    }
}
