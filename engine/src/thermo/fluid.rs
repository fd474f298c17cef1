//! The real-fluid interface and the fluid registry.
//!
//! A real fluid (liquid, vapour, two-phase and supercritical states from one
//! equation of state) implements [`RealFluid`]; the registry [`FLUIDS`]
//! maps the names a worksheet may write (`fluid("water")`) to it. Adding a
//! fluid is one module implementing the trait plus one line in [`FLUIDS`].

use std::fmt;

use super::{Result, Spec, State};

/// The critical point of a fluid, SI.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Critical {
    /// Temperature, K.
    pub t: f64,
    /// Pressure, Pa.
    pub p: f64,
    /// Density, kg/m^3.
    pub rho: f64,
}

/// A saturated pair: temperature, pressure and the two coexisting phases.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Saturation {
    /// Temperature, K.
    pub t: f64,
    /// Pressure, Pa.
    pub p: f64,
    /// Saturated liquid (x = 0).
    pub liquid: State,
    /// Saturated vapour (x = 1).
    pub vapour: State,
}

/// A fluid described by one equation of state over liquid, vapour,
/// two-phase and supercritical states.
///
/// Every method returns states in SI; errors name the valid range in words.
pub trait RealFluid: fmt::Debug + Send + Sync {
    /// Canonical name as a worksheet writes it: `water`, `R134a`.
    fn name(&self) -> &'static str;
    /// Words for reports: "water/steam (IAPWS-IF97)".
    fn describe(&self) -> &'static str;
    /// The equation of state and where it is published.
    fn citation(&self) -> &'static str;
    /// The validity range of the equation, in words.
    fn range(&self) -> &'static str;
    /// The reference state of h and s, in words.
    fn reference_state(&self) -> &'static str;
    /// Molar mass, kg/mol.
    fn molar_mass(&self) -> f64;
    /// The critical point.
    fn critical(&self) -> Critical;
    /// Fix a state from a property pair. Pairs the fluid does not support
    /// are [`super::ThermoError::Unsupported`].
    fn state(&self, spec: Spec) -> Result<State>;
    /// Saturated liquid and vapour at temperature `t` (K).
    fn saturation_t(&self, t: f64) -> Result<Saturation>;
    /// Saturated liquid and vapour at pressure `p` (Pa).
    fn saturation_p(&self, p: f64) -> Result<Saturation>;
}

/// A registered fluid: the names a worksheet may use for it (the first is
/// canonical; matching ignores ASCII case) and its implementation.
pub struct FluidEntry {
    pub names: &'static [&'static str],
    pub fluid: &'static dyn RealFluid,
}

/// Every real fluid the worksheet language offers.
pub static FLUIDS: &[FluidEntry] = &[
    FluidEntry {
        names: &["water", "steam"],
        fluid: &super::if97::Water,
    },
    FluidEntry {
        names: &["R134a"],
        fluid: &super::helmholtz::R134A,
    },
    FluidEntry {
        names: &["R1234yf"],
        fluid: &super::helmholtz::R1234YF,
    },
    FluidEntry {
        names: &["R32"],
        fluid: &super::helmholtz::R32,
    },
    FluidEntry {
        names: &["ammonia", "R717"],
        fluid: &super::helmholtz::AMMONIA,
    },
    FluidEntry {
        names: &["CO2", "R744"],
        fluid: &super::helmholtz::CO2,
    },
];

/// The fluid registered under `name` (ASCII case ignored).
pub fn fluid(name: &str) -> Option<&'static dyn RealFluid> {
    FLUIDS
        .iter()
        .find(|e| e.names.iter().any(|n| n.eq_ignore_ascii_case(name)))
        .map(|e| e.fluid)
}

/// The names a worksheet may write, for messages and listings.
pub fn fluid_names() -> impl Iterator<Item = &'static str> {
    FLUIDS.iter().flat_map(|e| e.names.iter().copied())
}

/// A reference to a registered fluid; two are equal when they name the same
/// fluid.
#[derive(Clone, Copy, Debug)]
pub struct FluidRef(pub &'static dyn RealFluid);

impl PartialEq for FluidRef {
    fn eq(&self, other: &Self) -> bool {
        self.0.name() == other.0.name()
    }
}

impl std::ops::Deref for FluidRef {
    type Target = dyn RealFluid;
    fn deref(&self) -> &Self::Target {
        self.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn registry_finds_water_by_any_of_its_names() {
        assert_eq!(fluid("water").map(|f| f.name()), Some("water"));
        assert_eq!(fluid("Steam").map(|f| f.name()), Some("water"));
        assert!(fluid("mercury").is_none());
    }

    #[test]
    fn registry_names_are_unique() {
        let names: Vec<String> = fluid_names().map(|n| n.to_ascii_lowercase()).collect();
        let mut sorted = names.clone();
        sorted.sort();
        sorted.dedup();
        assert_eq!(names.len(), sorted.len(), "{names:?}");
    }
}
