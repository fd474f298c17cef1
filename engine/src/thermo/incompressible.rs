//! Incompressible liquids and solids. (to be written)

use super::{Result, Spec, State, ThermoError};

#[derive(Clone, Debug, PartialEq)]
pub struct Incompressible {
    /// Specific heat, J/(kg K).
    pub c: f64,
    /// Density, kg/m^3.
    pub rho: f64,
}

impl Incompressible {
    pub fn state(&self, _spec: Spec) -> Result<State> {
        Err(ThermoError::Unsupported("not yet".into()))
    }
}
