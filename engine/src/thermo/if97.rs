//! Water and steam by IAPWS-IF97. (to be written)

use super::{Result, Spec, State, ThermoError};

pub fn state(_spec: Spec) -> Result<State> {
    Err(ThermoError::Unsupported("not yet".into()))
}
