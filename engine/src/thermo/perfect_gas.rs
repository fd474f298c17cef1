//! Perfect gas: constant cp. (to be written)

use super::{Result, Spec, State, ThermoError};

#[derive(Clone, Debug, PartialEq)]
pub struct PerfectGas {
    /// Specific gas constant, J/(kg K).
    pub r: f64,
    /// Isobaric specific heat, J/(kg K).
    pub cp: f64,
}

impl PerfectGas {
    pub fn state(&self, _spec: Spec) -> Result<State> {
        Err(ThermoError::Unsupported("not yet".into()))
    }
    pub fn process_warning(&self, _a: &State, _b: &State) -> Option<String> {
        None
    }
}
