//! Typed (uom) facade over the property models.
//!
//! The same models and device functions as the `f64` core, with `uom`
//! quantities at the surface so a Rust caller cannot mix up units. Every
//! function converts to coherent SI, calls the core and converts back.
//! Specific entropy has the dimension of a specific heat capacity, so it is
//! carried as [`SpecificHeatCapacity`]. Dimensionless inputs (efficiency,
//! quality) stay `f64`.

use uom::si::available_energy::joule_per_kilogram;
use uom::si::energy::joule;
use uom::si::f64::{
    AvailableEnergy, Energy, Length, MassDensity, Pressure, SpecificHeatCapacity, SpecificVolume,
    ThermodynamicTemperature, Velocity,
};
use uom::si::length::meter;
use uom::si::mass_density::kilogram_per_cubic_meter;
use uom::si::pressure::pascal;
use uom::si::specific_heat_capacity::joule_per_kilogram_kelvin;
use uom::si::specific_volume::cubic_meter_per_kilogram;
use uom::si::thermodynamic_temperature::kelvin;
use uom::si::velocity::meter_per_second;

use super::{Result, Spec, State, Substance, exergy, process};

/// A fully evaluated state with typed fields (see [`State`]).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TypedState {
    pub t: ThermodynamicTemperature,
    pub p: Pressure,
    pub h: AvailableEnergy,
    pub u: AvailableEnergy,
    /// Specific entropy.
    pub s: SpecificHeatCapacity,
    pub v: SpecificVolume,
    pub cp: Option<SpecificHeatCapacity>,
    pub cv: Option<SpecificHeatCapacity>,
    /// Vapour quality, 0..=1, two-phase states only.
    pub x: Option<f64>,
    /// Speed of sound (single-phase states of models that give it).
    pub w: Option<Velocity>,
}

fn k(t: ThermodynamicTemperature) -> f64 {
    t.get::<kelvin>()
}

fn pa(p: Pressure) -> f64 {
    p.get::<pascal>()
}

fn jkg(e: AvailableEnergy) -> f64 {
    e.get::<joule_per_kilogram>()
}

fn jkgk(c: SpecificHeatCapacity) -> f64 {
    c.get::<joule_per_kilogram_kelvin>()
}

fn cap(x: f64) -> SpecificHeatCapacity {
    SpecificHeatCapacity::new::<joule_per_kilogram_kelvin>(x)
}

fn energy(x: f64) -> AvailableEnergy {
    AvailableEnergy::new::<joule_per_kilogram>(x)
}

impl TypedState {
    pub fn from_state(st: &State) -> TypedState {
        TypedState {
            t: ThermodynamicTemperature::new::<kelvin>(st.t),
            p: Pressure::new::<pascal>(st.p),
            h: energy(st.h),
            u: energy(st.u),
            s: cap(st.s),
            v: SpecificVolume::new::<cubic_meter_per_kilogram>(st.v),
            cp: st.cp.map(cap),
            cv: st.cv.map(cap),
            x: st.x,
            w: st.w.map(Velocity::new::<meter_per_second>),
        }
    }

    /// Back to the plain SI state.
    pub fn to_state(&self) -> State {
        State {
            t: k(self.t),
            p: pa(self.p),
            h: jkg(self.h),
            u: jkg(self.u),
            s: jkgk(self.s),
            v: self.v.get::<cubic_meter_per_kilogram>(),
            cp: self.cp.map(jkgk),
            cv: self.cv.map(jkgk),
            x: self.x,
            w: self.w.map(|w| w.get::<meter_per_second>()),
        }
    }

    /// Density 1/v.
    pub fn rho(&self) -> MassDensity {
        MassDensity::new::<kilogram_per_cubic_meter>(1.0 / self.v.get::<cubic_meter_per_kilogram>())
    }

    /// Ratio of specific heats cp/cv, where both exist.
    pub fn k(&self) -> Option<f64> {
        self.to_state().get(super::Field::K)
    }
}

fn typed(st: Result<State>) -> Result<TypedState> {
    st.map(|s| TypedState::from_state(&s))
}

pub fn state_tp(sub: &Substance, t: ThermodynamicTemperature, p: Pressure) -> Result<TypedState> {
    typed(sub.state(Spec::TP { t: k(t), p: pa(p) }))
}

pub fn state_ph(sub: &Substance, p: Pressure, h: AvailableEnergy) -> Result<TypedState> {
    typed(sub.state(Spec::PH {
        p: pa(p),
        h: jkg(h),
    }))
}

pub fn state_ps(sub: &Substance, p: Pressure, s: SpecificHeatCapacity) -> Result<TypedState> {
    typed(sub.state(Spec::PS {
        p: pa(p),
        s: jkgk(s),
    }))
}

pub fn state_px(sub: &Substance, p: Pressure, x: f64) -> Result<TypedState> {
    typed(sub.state(Spec::PX { p: pa(p), x }))
}

pub fn state_tx(sub: &Substance, t: ThermodynamicTemperature, x: f64) -> Result<TypedState> {
    typed(sub.state(Spec::TX { t: k(t), x }))
}

/// See [`process::isentropic`].
pub fn isentropic(sub: &Substance, inlet: &TypedState, p2: Pressure) -> Result<TypedState> {
    typed(process::isentropic(sub, &inlet.to_state(), pa(p2)))
}

/// See [`process::compressor`].
pub fn compressor(
    sub: &Substance,
    inlet: &TypedState,
    p2: Pressure,
    eta: f64,
) -> Result<TypedState> {
    typed(process::compressor(sub, &inlet.to_state(), pa(p2), eta))
}

/// See [`process::turbine`].
pub fn turbine(sub: &Substance, inlet: &TypedState, p2: Pressure, eta: f64) -> Result<TypedState> {
    typed(process::turbine(sub, &inlet.to_state(), pa(p2), eta))
}

/// See [`process::pump`].
pub fn pump(sub: &Substance, inlet: &TypedState, p2: Pressure, eta: f64) -> Result<TypedState> {
    typed(process::pump(sub, &inlet.to_state(), pa(p2), eta))
}

/// See [`process::nozzle`].
pub fn nozzle(sub: &Substance, inlet: &TypedState, p2: Pressure, eta: f64) -> Result<TypedState> {
    typed(process::nozzle(sub, &inlet.to_state(), pa(p2), eta))
}

/// See [`process::throttle`].
pub fn throttle(sub: &Substance, inlet: &TypedState, p2: Pressure) -> Result<TypedState> {
    typed(process::throttle(sub, &inlet.to_state(), pa(p2)))
}

/// See [`process::jet_speed`].
pub fn jet_speed(inlet: &TypedState, outlet: &TypedState, v1: Velocity) -> Result<Velocity> {
    process::jet_speed(
        &inlet.to_state(),
        &outlet.to_state(),
        v1.get::<meter_per_second>(),
    )
    .map(Velocity::new::<meter_per_second>)
}

/// See [`exergy::ds_incompressible`].
pub fn ds_incompressible(
    c: SpecificHeatCapacity,
    t1: ThermodynamicTemperature,
    t2: ThermodynamicTemperature,
) -> Result<SpecificHeatCapacity> {
    exergy::ds_incompressible(jkgk(c), k(t1), k(t2)).map(cap)
}

/// See [`exergy::ds_ideal_gas`].
pub fn ds_ideal_gas(
    gas: &Substance,
    t1: ThermodynamicTemperature,
    p1: Pressure,
    t2: ThermodynamicTemperature,
    p2: Pressure,
) -> Result<SpecificHeatCapacity> {
    exergy::ds_ideal_gas(gas, k(t1), pa(p1), k(t2), pa(p2)).map(cap)
}

/// See [`exergy::flow_exergy`].
pub fn flow_exergy(st: &TypedState, dead: &TypedState, v: Velocity, z: Length) -> AvailableEnergy {
    energy(exergy::flow_exergy(
        &st.to_state(),
        &dead.to_state(),
        v.get::<meter_per_second>(),
        z.get::<meter>(),
    ))
}

/// See [`exergy::closed_exergy`].
pub fn closed_exergy(st: &TypedState, dead: &TypedState) -> AvailableEnergy {
    energy(exergy::closed_exergy(&st.to_state(), &dead.to_state()))
}

/// See [`exergy::heat_exergy`].
pub fn heat_exergy(
    q: Energy,
    t_b: ThermodynamicTemperature,
    t0: ThermodynamicTemperature,
) -> Result<Energy> {
    exergy::heat_exergy(q.get::<joule>(), k(t_b), k(t0)).map(Energy::new::<joule>)
}

#[cfg(test)]
mod tests {
    use super::super::ideal_gas::IdealGas;
    use super::super::perfect_gas::PerfectGas;
    use super::*;
    use uom::si::available_energy::kilojoule_per_kilogram;
    use uom::si::energy::kilojoule;
    use uom::si::pressure::{bar, kilopascal};
    use uom::si::thermodynamic_temperature::degree_celsius;

    #[test]
    fn typed_matches_core_and_converts_units() {
        // 26.85 °C is 300 K (exact offset 273.15 K, SI brochure); 1 bar = 100 kPa.
        let air = Substance::IdealGas(IdealGas::by_name("air").unwrap());
        let a = state_tp(
            &air,
            ThermodynamicTemperature::new::<degree_celsius>(26.85),
            Pressure::new::<bar>(1.0),
        )
        .unwrap();
        let core = air.state(Spec::TP { t: 300.0, p: 1e5 }).unwrap();
        assert!((a.t.get::<kelvin>() - 300.0).abs() < 1e-9);
        assert!((a.h.get::<joule_per_kilogram>() - core.h).abs() < 1e-6);
        let back = a.to_state();
        assert!((back.s - core.s).abs() < 1e-9 && (back.v - core.v).abs() < 1e-15);
        assert!((a.rho().get::<kilogram_per_cubic_meter>() - 1.0 / core.v).abs() < 1e-9);
        let out = compressor(&air, &a, Pressure::new::<kilopascal>(800.0), 0.85).unwrap();
        let out_core = process::compressor(&air, &core, 8e5, 0.85).unwrap();
        assert!((out.t.get::<kelvin>() - out_core.t).abs() < 1e-9);
        let h = state_ph(&air, out.p, out.h).unwrap();
        assert!((h.t.get::<kelvin>() - out_core.t).abs() < 1e-7);
    }

    #[test]
    fn typed_cold_air_and_exergy() {
        // Cold-air standard k = 1.4 (common practice): T2s = 300 · 8^(0.4/1.4)
        // = 543.434 K (closed form). Heat exergy: 10 kJ at 600 K with
        // T0 = 300 K is 5 kJ (Carnot factor 1/2).
        let g = Substance::PerfectGas(PerfectGas::from_k(287.0, 1.4).unwrap());
        let a = state_tp(
            &g,
            ThermodynamicTemperature::new::<kelvin>(300.0),
            Pressure::new::<bar>(1.0),
        )
        .unwrap();
        let b = isentropic(&g, &a, Pressure::new::<bar>(8.0)).unwrap();
        assert!((b.t.get::<kelvin>() - 543.4342).abs() < 1e-3);
        assert_eq!(a.k(), Some(1.4));
        let w = b.h - a.h;
        assert!((w.get::<kilojoule_per_kilogram>() - 1.0045 * 243.4342).abs() < 1e-3);
        let q = heat_exergy(
            Energy::new::<kilojoule>(10.0),
            ThermodynamicTemperature::new::<kelvin>(600.0),
            ThermodynamicTemperature::new::<kelvin>(300.0),
        )
        .unwrap();
        assert!((q.get::<kilojoule>() - 5.0).abs() < 1e-12);
        assert!(state_px(&g, Pressure::new::<bar>(1.0), 0.5).is_err());
    }
}
