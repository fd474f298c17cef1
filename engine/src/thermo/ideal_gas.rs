//! Ideal gases with temperature-dependent cp (NASA 7-coefficient polynomials).
//! (to be written)

use super::{Result, Spec, State, ThermoError};

#[derive(Clone, Debug, PartialEq)]
pub struct IdealGas {
    name: String,
}

impl IdealGas {
    pub fn by_name(name: &str) -> Result<IdealGas> {
        Err(ThermoError::Unsupported(format!("unknown gas {name}")))
    }
    pub fn name(&self) -> &str {
        &self.name
    }
    /// Specific gas constant, J/(kg K).
    pub fn r(&self) -> f64 {
        f64::NAN
    }
    pub fn state(&self, _spec: Spec) -> Result<State> {
        Err(ThermoError::Unsupported("not yet".into()))
    }
    pub fn state_warning(&self, _st: &State) -> Option<String> {
        None
    }
}
