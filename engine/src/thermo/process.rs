//! Device models: isentropic, compressor, turbine, pump, nozzle, throttle,
//! the polytropic compressor and turbine, and adiabatic mixing.
//!
//! Each takes the inlet state and the outlet pressure and returns the outlet
//! state. They are generic over the substance: they only call
//! [`Substance::state`], so every model (including water by IAPWS-IF97 and
//! the refrigerants) works the same way. Steady flow, adiabatic, kinetic and
//! potential energy changes neglected except in the nozzle's [`jet_speed`].
//!
//! - isentropic: state(p2, s1);
//! - compressor and pump: h2 = h1 + (h2s − h1)/eta;
//! - turbine and nozzle: h2 = h1 − eta (h1 − h2s);
//! - polytropic compressor: dh = v dp / eta_p along the path; polytropic
//!   turbine: dh = eta_p v dp (module [`super::polytropic`]);
//! - throttle: h2 = h1;
//! - mix: h = (ma ha + mb hb)/(ma + mb) at the outlet pressure.
//!
//! # Device rules
//!
//! What each device accepts is decided by the phase of the inlet, the same
//! way everywhere ([`inlet_phase`]): a state of an incompressible model is a
//! liquid; an ideal or perfect gas is a gas; a real-fluid state is two-phase
//! when 0 < x < 1, liquid when x = 0 or when it is below the critical
//! temperature and pressure and denser than the critical density, and a gas
//! (vapour or supercritical fluid) otherwise. At or above the critical
//! pressure there is no phase boundary: a dense fluid below T_c is then
//! accepted by the compressor and turbine as well as by the pump (whose
//! rule is the liquid test without the pressure condition).
//!
//! | device | pressure | inlet accepted | refused | warning |
//! |---|---|---|---|---|
//! | `compressor` (eta or eta_p) | p2 > p1 | gas, vapour, supercritical | liquid ("use pump") | two-phase inlet (wet compression) |
//! | `turbine` (eta or eta_p) | p2 < p1 | gas, vapour, supercritical | liquid | two-phase inlet; outlet wetter than x = 0.88 (common practice for steam turbines) |
//! | `pump` | p2 >= p1 | liquid | gas, vapour, two-phase ("use compressor") | — |
//! | `nozzle` | p2 < p1 | any phase | — | — |
//! | `throttle` | p2 <= p1 | any phase | — | — |
//! | `isentropic` | any | any phase | — | — |
//! | `mix` | p <= both inlet pressures | any phase, same substance | streams of different substances | — |
//!
//! Efficiencies are in (0, 1]. An outlet (or an isentropic outlet) that
//! falls outside the model's range is an error in words naming the device,
//! the temperature it would reach and the limit of the data ("the nozzle
//! outlet would be at 180 K, below the 200 K limit of the data of ideal gas
//! air"). Warnings are returned by [`device_warning`], not by the device
//! functions themselves.

pub use super::polytropic::{compressor_polytropic, turbine_polytropic};
use super::{Result, Spec, State, Substance, ThermoError};

pub(crate) use super::text::fmt_num;

/// A pressure for a message, in kPa: "90 kPa".
fn kpa(p: f64) -> String {
    format!("{} kPa", fmt_num(p / 1000.0))
}

fn check_eta(eta: f64) -> Result<()> {
    if eta.is_finite() && eta > 0.0 && eta <= 1.0 {
        Ok(())
    } else {
        Err(ThermoError::Parameter {
            name: "eta",
            message: format!("must be in (0, 1], got {}", fmt_num(eta)),
        })
    }
}

fn check_p2(p2: f64) -> Result<()> {
    if p2.is_finite() && p2 > 0.0 {
        Ok(())
    } else {
        Err(ThermoError::InvalidArgument(format!(
            "the outlet pressure must be positive and finite, got p2 = {} Pa",
            fmt_num(p2)
        )))
    }
}

fn must_raise(device: &str, inlet: &State, p2: f64) -> Result<()> {
    if p2 > inlet.p {
        Ok(())
    } else {
        let rel = if p2 == inlet.p { "equals" } else { "is below" };
        Err(ThermoError::InvalidArgument(format!(
            "{device} must raise the pressure: p2 = {} {rel} p1 = {}",
            kpa(p2),
            kpa(inlet.p)
        )))
    }
}

fn must_lower(device: &str, inlet: &State, p2: f64) -> Result<()> {
    if p2 < inlet.p {
        Ok(())
    } else {
        let rel = if p2 == inlet.p { "equals" } else { "is above" };
        Err(ThermoError::InvalidArgument(format!(
            "{device} must lower the pressure: p2 = {} {rel} p1 = {}",
            kpa(p2),
            kpa(inlet.p)
        )))
    }
}

/// The phase of a state as the device rules see it (see the module
/// documentation).
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum InletPhase {
    /// Compressed or saturated liquid (x = 0), or an incompressible model.
    Liquid,
    /// Two-phase, with the quality 0 < x < 1.
    TwoPhase(f64),
    /// Gas, vapour (including saturated vapour, x = 1) or supercritical
    /// fluid.
    Gas,
}

/// The phase of `st` under the model `sub`, for the device rules.
pub fn inlet_phase(sub: &Substance, st: &State) -> InletPhase {
    match sub {
        Substance::Incompressible(_) => InletPhase::Liquid,
        Substance::IdealGas(_) | Substance::PerfectGas(_) => InletPhase::Gas,
        Substance::Fluid(f) => match st.x {
            Some(q) if q > 0.0 && q < 1.0 => InletPhase::TwoPhase(q),
            Some(q) if q <= 0.0 => InletPhase::Liquid,
            Some(_) => InletPhase::Gas,
            None => {
                let c = f.critical();
                if st.t < c.t && st.v < 1.0 / c.rho && st.p < c.p {
                    InletPhase::Liquid
                } else {
                    InletPhase::Gas
                }
            }
        },
    }
}

/// Why a state counts as a liquid, for messages.
fn liquid_why(sub: &Substance, st: &State) -> String {
    match sub {
        Substance::Fluid(f) => {
            if st.x == Some(0.0) {
                "saturated liquid, x = 0".to_string()
            } else {
                let c = f.critical();
                format!(
                    "T = {} K below the critical temperature {} K and v = {} m^3/kg below the \
                     critical specific volume of {}",
                    fmt_num(st.t),
                    fmt_num(c.t),
                    fmt_num(st.v),
                    f.name()
                )
            }
        }
        _ => "an incompressible substance".to_string(),
    }
}

/// Pressure direction and inlet phase of a compressor or turbine (`device`
/// is "compressor" or "turbine"); shared by the isentropic-efficiency and
/// the polytropic forms.
pub(crate) fn check_device(device: &str, sub: &Substance, inlet: &State, p2: f64) -> Result<()> {
    check_p2(p2)?;
    let hint = if device == "compressor" {
        must_raise("a compressor", inlet, p2)?;
        "use pump for a liquid"
    } else {
        must_lower("a turbine", inlet, p2)?;
        "model the expansion of a liquid with nozzle or throttle"
    };
    if inlet_phase(sub, inlet) == InletPhase::Liquid {
        return Err(ThermoError::InvalidArgument(format!(
            "a {device} needs a gas or vapour: the inlet is a liquid ({}); {hint}",
            liquid_why(sub, inlet)
        )));
    }
    Ok(())
}

/// Rephrase a range error of an ideal gas at a device outlet in words: the
/// temperature the outlet would reach and the limit of the data.
fn outlet_words(what: &str, sub: &Substance, e: ThermoError, t_est: Option<f64>) -> ThermoError {
    match (sub, &e, t_est) {
        (Substance::IdealGas(g), ThermoError::OutOfRange { .. }, Some(t)) => {
            use super::ideal_gas::{T_MAX, T_MIN};
            let (side, limit) = if t < T_MIN {
                ("below", T_MIN)
            } else if t > T_MAX {
                ("above", T_MAX)
            } else {
                return e;
            };
            ThermoError::OutletOutOfRange(format!(
                "{what} would be at about {} K, {side} the {} K limit of the data of ideal gas {}",
                fmt_num(t.round()),
                fmt_num(limit),
                g.name()
            ))
        }
        // Other models: name the device, then the model's own words.
        (_, ThermoError::OutOfRange { .. }, _) => {
            ThermoError::OutletOutOfRange(format!("{what} leaves the model's range: {e}"))
        }
        _ => e,
    }
}

/// The outlet state at (p2, h2) of `device`, with range errors in words.
pub(crate) fn outlet(device: &str, sub: &Substance, p2: f64, h2: f64) -> Result<State> {
    sub.state(Spec::PH { p: p2, h: h2 }).map_err(|e| {
        let t = match sub {
            Substance::IdealGas(g) => Some(g.t_estimate_h(h2)),
            _ => None,
        };
        outlet_words(&format!("the {device} outlet"), sub, e, t)
    })
}

/// The isentropic outlet of `device` at p2, with range errors in words.
fn isentropic_of(device: &str, sub: &Substance, inlet: &State, p2: f64) -> Result<State> {
    check_p2(p2)?;
    sub.state(Spec::PS { p: p2, s: inlet.s }).map_err(|e| {
        let t = match sub {
            Substance::IdealGas(g) => Some(g.t_estimate_s(inlet.s, p2)),
            _ => None,
        };
        let what = if device == "isentropic" {
            "the isentropic outlet".to_string()
        } else {
            format!("the isentropic outlet of the {device}")
        };
        outlet_words(&what, sub, e, t)
    })
}

/// Isentropic outlet state at p2: state(p2, s1). Any phase.
pub fn isentropic(sub: &Substance, inlet: &State, p2: f64) -> Result<State> {
    isentropic_of("isentropic", sub, inlet, p2)
}

/// Adiabatic compressor with isentropic efficiency eta:
/// h2 = h1 + (h2s − h1)/eta. Requires p2 > p1 and a gas or vapour inlet.
pub fn compressor(sub: &Substance, inlet: &State, p2: f64, eta: f64) -> Result<State> {
    check_eta(eta)?;
    check_device("compressor", sub, inlet, p2)?;
    let h2s = isentropic_of("compressor", sub, inlet, p2)?.h;
    outlet("compressor", sub, p2, inlet.h + (h2s - inlet.h) / eta)
}

/// Adiabatic turbine with isentropic efficiency eta:
/// h2 = h1 − eta (h1 − h2s). Requires p2 < p1 and a gas or vapour inlet.
pub fn turbine(sub: &Substance, inlet: &State, p2: f64, eta: f64) -> Result<State> {
    check_eta(eta)?;
    check_device("turbine", sub, inlet, p2)?;
    let h2s = isentropic_of("turbine", sub, inlet, p2)?.h;
    outlet("turbine", sub, p2, inlet.h - eta * (inlet.h - h2s))
}

/// The inlet of a pump must be a liquid. Incompressible models always are;
/// for a real fluid the rule is: not two-phase (x absent or 0), below the
/// critical temperature, and denser than the critical density (below T_c a
/// liquid's specific volume is below 1/rho_c and a vapour's above it).
fn check_liquid(sub: &Substance, inlet: &State) -> Result<()> {
    match sub {
        Substance::Incompressible(_) => Ok(()),
        Substance::Fluid(f) => {
            let crit = f.critical();
            if let Some(q) = inlet.x
                && q > 0.0
            {
                return Err(ThermoError::InvalidArgument(format!(
                    "pump needs a liquid: the inlet is two-phase (x = {})",
                    fmt_num(q)
                )));
            }
            if inlet.t >= crit.t {
                return Err(ThermoError::InvalidArgument(format!(
                    "pump needs a liquid: T = {} K is not below the critical temperature of {} ({} K)",
                    fmt_num(inlet.t),
                    f.name(),
                    fmt_num(crit.t)
                )));
            }
            if inlet.v >= 1.0 / crit.rho {
                return Err(ThermoError::InvalidArgument(format!(
                    "pump needs a liquid: the inlet is vapour (v = {} m^3/kg, above the critical \
                     specific volume of {}, 1/{} m^3/kg); use compressor for a gas",
                    fmt_num(inlet.v),
                    f.name(),
                    fmt_num(crit.rho)
                )));
            }
            Ok(())
        }
        Substance::IdealGas(_) | Substance::PerfectGas(_) => Err(ThermoError::InvalidArgument(
            "pump needs a liquid; use compressor for a gas".to_string(),
        )),
    }
}

/// Adiabatic pump with isentropic efficiency eta: h2 = h1 + (h2s − h1)/eta
/// (for an incompressible liquid h2 − h1 = v Δp / eta). Liquids only;
/// requires p2 >= p1.
pub fn pump(sub: &Substance, inlet: &State, p2: f64, eta: f64) -> Result<State> {
    check_eta(eta)?;
    check_p2(p2)?;
    check_liquid(sub, inlet)?;
    if p2 < inlet.p {
        return Err(ThermoError::InvalidArgument(format!(
            "a pump must not lower the pressure: p2 = {} is below p1 = {}",
            kpa(p2),
            kpa(inlet.p)
        )));
    }
    let h2s = isentropic_of("pump", sub, inlet, p2)?.h;
    outlet("pump", sub, p2, inlet.h + (h2s - inlet.h) / eta)
}

/// Adiabatic nozzle with isentropic efficiency eta:
/// h2 = h1 − eta (h1 − h2s). Requires p2 < p1; any phase. See
/// [`jet_speed`].
pub fn nozzle(sub: &Substance, inlet: &State, p2: f64, eta: f64) -> Result<State> {
    check_eta(eta)?;
    check_p2(p2)?;
    must_lower("a nozzle", inlet, p2)?;
    let h2s = isentropic_of("nozzle", sub, inlet, p2)?.h;
    outlet("nozzle", sub, p2, inlet.h - eta * (inlet.h - h2s))
}

/// Throttling valve: h2 = h1. Requires p2 <= p1; any phase.
pub fn throttle(sub: &Substance, inlet: &State, p2: f64) -> Result<State> {
    check_p2(p2)?;
    if p2 > inlet.p {
        return Err(ThermoError::InvalidArgument(format!(
            "a throttle cannot raise the pressure: p2 = {} is above p1 = {}",
            kpa(p2),
            kpa(inlet.p)
        )));
    }
    outlet("throttle", sub, p2, inlet.h)
}

/// Adiabatic mixing of two streams of one substance (`a` with mass flow
/// `mdot_a`, `b` with `mdot_b`, kg/s or any common unit) to the outlet
/// pressure `p` (Pa), without work: the energy balance gives
/// h = (mdot_a h_a + mdot_b h_b) / (mdot_a + mdot_b) and the outlet is the
/// state at (p, h), which may be two-phase. The entropy generated per unit
/// time is (mdot_a + mdot_b) s − mdot_a s_a − mdot_b s_b (>= 0).
///
/// Requires mass flows that are finite and not negative, with a positive
/// sum, and p at most the lower of the two inlet pressures (a mixing
/// chamber without work cannot raise the pressure). Both states must be
/// states of `sub` (the caller checks that the two streams share the
/// substance).
pub fn mix(
    sub: &Substance,
    a: &State,
    mdot_a: f64,
    b: &State,
    mdot_b: f64,
    p: f64,
) -> Result<State> {
    for (name, m) in [("mdot_a", mdot_a), ("mdot_b", mdot_b)] {
        if !(m.is_finite() && m >= 0.0) {
            return Err(ThermoError::InvalidArgument(format!(
                "mixing needs mass flows that are finite and not negative, got {name} = {}",
                fmt_num(m)
            )));
        }
    }
    let total = mdot_a + mdot_b;
    if total <= 0.0 {
        return Err(ThermoError::InvalidArgument(
            "mixing needs a positive total mass flow; both streams are zero".to_string(),
        ));
    }
    check_p2(p)?;
    let p_low = a.p.min(b.p);
    if p > p_low {
        return Err(ThermoError::InvalidArgument(format!(
            "adiabatic mixing without work cannot raise the pressure: the outlet p = {} is above \
             the lower inlet pressure {}",
            kpa(p),
            kpa(p_low)
        )));
    }
    let h = (mdot_a * a.h + mdot_b * b.h) / total;
    outlet("mixer", sub, p, h)
}

/// A device, for [`device_warning`].
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Device {
    Isentropic,
    Compressor,
    Turbine,
    Pump,
    Nozzle,
    Throttle,
    Mix,
}

/// Wet-steam limit of the turbine warning: outlet quality below 0.88
/// (common practice: steam-turbine exhaust moisture held below about 12 %
/// against blade erosion).
pub const TURBINE_X_MIN: f64 = 0.88;

/// The warning the device rules attach to an accepted case (see the module
/// documentation), or `None`: a two-phase compressor or turbine inlet, a
/// turbine outlet wetter than [`TURBINE_X_MIN`]. Common-practice rules.
pub fn device_warning(
    device: Device,
    sub: &Substance,
    inlet: &State,
    outlet: &State,
) -> Option<String> {
    let name = match device {
        Device::Compressor => "compressor",
        Device::Turbine => "turbine",
        _ => return None,
    };
    if let InletPhase::TwoPhase(q) = inlet_phase(sub, inlet) {
        return Some(format!(
            "the {name} inlet is two-phase (x = {}); common practice: a {name} takes a dry or \
             superheated vapour, as liquid droplets erode the blading and the efficiency model \
             assumes a dry gas",
            fmt_num(q)
        ));
    }
    if device == Device::Turbine
        && let InletPhase::TwoPhase(q) = inlet_phase(sub, outlet)
        && q < TURBINE_X_MIN
    {
        return Some(format!(
            "the turbine outlet is wet, x = {} (common practice: steam-turbine exhaust quality \
             x >= {TURBINE_X_MIN}, i.e. at most about 12 % moisture)",
            fmt_num(q)
        ));
    }
    None
}

/// Outlet speed of an adiabatic nozzle, m/s: sqrt(V1² + 2 (h1 − h2)).
pub fn jet_speed(inlet: &State, outlet: &State, v1: f64) -> Result<f64> {
    if !v1.is_finite() {
        return Err(ThermoError::InvalidArgument(format!(
            "inlet speed must be finite, got V1 = {v1}"
        )));
    }
    let sq = v1 * v1 + 2.0 * (inlet.h - outlet.h);
    if sq.is_nan() {
        return Err(ThermoError::InvalidArgument(
            "jet speed of states with non-finite enthalpy".to_string(),
        ));
    }
    if sq < 0.0 {
        return Err(ThermoError::InvalidArgument(format!(
            "no real jet speed: the outlet enthalpy exceeds the inlet's by {} J/kg, more than the \
             inlet kinetic energy V1²/2 = {} J/kg",
            fmt_num(outlet.h - inlet.h),
            fmt_num(0.5 * v1 * v1)
        )));
    }
    Ok(sq.sqrt())
}

#[cfg(test)]
mod tests {
    use super::super::ideal_gas::IdealGas;
    use super::super::incompressible::Incompressible;
    use super::super::perfect_gas::PerfectGas;
    use super::*;

    const PROCESS: &str = include_str!(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/../tests/reference/ideal_gas_cantera_process.csv"
    ));

    fn rows(csv: &str) -> Vec<Vec<&str>> {
        csv.lines()
            .filter(|l| !l.starts_with('#'))
            .skip(1)
            .map(|l| l.split(',').collect())
            .collect()
    }

    fn ig(name: &str) -> Substance {
        Substance::IdealGas(IdealGas::by_name(name).unwrap())
    }

    fn tp(sub: &Substance, t: f64, p: f64) -> State {
        sub.state(Spec::TP { t, p }).unwrap()
    }

    #[test]
    fn fmt_num_examples() {
        assert_eq!(fmt_num(7000.0), "7000");
        assert_eq!(fmt_num(0.15), "0.15");
        assert_eq!(fmt_num(1.3), "1.3");
        assert_eq!(fmt_num(90.0), "90");
        assert_eq!(fmt_num(287.0497), "287.05");
        assert_eq!(fmt_num(-12345678901.0), "-1.23457e10");
        assert_eq!(fmt_num(0.0), "0");
    }

    #[test]
    fn devices_against_cantera() {
        // Reference: tests/reference/ideal_gas_cantera_process.csv (cantera
        // 3.2.0, NASA TM-4513 polynomials; SP for h2s, HP for T2).
        // Tolerances: dh 0.1 % and T2 0.1 % of |T2 - T1| + 0.05 K: the two
        // polynomial sets agree within 0.1 % in cp over 300-1500 K (see the
        // ideal_gas tests); ds 0.1 % of R (= 0.29 J/(kg K) for air); nozzle
        // V2 0.1 %.
        let mut n = 0;
        for r in rows(PROCESS) {
            let sub = ig(r[1]);
            let f = |i: usize| -> f64 { r[i].parse().unwrap() };
            let (t1, p1, p2, eta, v1, t2, dh, ds) =
                (f(3), f(4), f(5), f(6), f(7), f(8), f(9), f(10));
            let inlet = tp(&sub, t1, p1);
            let out = match r[2] {
                "isentropic" => isentropic(&sub, &inlet, p2).unwrap(),
                "compressor" => compressor(&sub, &inlet, p2, eta).unwrap(),
                "turbine" => turbine(&sub, &inlet, p2, eta).unwrap(),
                "nozzle" => nozzle(&sub, &inlet, p2, eta).unwrap(),
                other => panic!("unknown device {other}"),
            };
            let case = r[0];
            assert!(
                (out.t - t2).abs() < 1e-3 * (t2 - t1).abs() + 0.05,
                "{case}: T2 {} vs {t2}",
                out.t
            );
            assert!(
                ((out.h - inlet.h) - dh).abs() < 1e-3 * dh.abs(),
                "{case}: dh {} vs {dh}",
                out.h - inlet.h
            );
            let r_gas = sub.gas_constant().unwrap();
            assert!(
                ((out.s - inlet.s) - ds).abs() < 1e-3 * r_gas,
                "{case}: ds {} vs {ds}",
                out.s - inlet.s
            );
            assert_eq!(out.p, p2);
            if r[2] == "nozzle" {
                let v2 = f(11);
                let v = jet_speed(&inlet, &out, v1).unwrap();
                assert!((v - v2).abs() < 1e-3 * v2, "{case}: V2 {v} vs {v2}");
            }
            n += 1;
        }
        assert_eq!(n, 8);
    }

    #[test]
    fn perfect_gas_cold_air_compression() {
        // Common practice (cold-air standard, k = 1.4) and closed form:
        // s2 = s1 at constant cp ⇒ cp ln(T2/T1) = R ln(p2/p1)
        // ⇒ T2s = T1 (p2/p1)^((k−1)/k) = 300 · 8^(0.4/1.4) = 543.434 K.
        // R = 287 J/(kg K) (common practice, from memory); any R gives the
        // same T2s. Tolerance 1e-9 relative (only rounding).
        let sub = Substance::PerfectGas(PerfectGas::from_k(287.0, 1.4).unwrap());
        let inlet = tp(&sub, 300.0, 100e3);
        let out = isentropic(&sub, &inlet, 800e3).unwrap();
        let t2s = 300.0 * 8f64.powf(0.4 / 1.4);
        assert!((t2s - 543.434).abs() < 1e-3);
        assert!((out.t - t2s).abs() < 1e-9 * t2s, "{}", out.t);
        // Compressor eta 0.8: constant cp ⇒ T2 = T1 + (T2s − T1)/eta (closed form).
        let c = compressor(&sub, &inlet, 800e3, 0.8).unwrap();
        assert!(
            (c.t - (300.0 + (t2s - 300.0) / 0.8)).abs() < 1e-9 * c.t,
            "{}",
            c.t
        );
    }

    #[test]
    fn incompressible_pump() {
        // Common practice: isentropic pumping of an incompressible liquid leaves
        // T unchanged (Δs = c ln(T2/T1) = 0). Closed form: h2 − h1 = v Δp / eta,
        // so c (T2 − T1) = v Δp (1/eta − 1). Liquid-water-like c = 4180 J/(kg K),
        // rho = 1000 kg/m^3 (illustrative inputs, not reference values).
        let m = Incompressible::new(4180.0, 1000.0).unwrap();
        let sub = Substance::Incompressible(m);
        let inlet = tp(&sub, 300.0, 100e3);
        let s = isentropic(&sub, &inlet, 5.0e6).unwrap();
        assert!((s.t - 300.0).abs() < 1e-9, "{}", s.t);
        let out = pump(&sub, &inlet, 5.0e6, 0.75).unwrap();
        let w = 1e-3 * 4.9e6 / 0.75; // v Δp / eta, J/kg
        assert!(((out.h - inlet.h) - w).abs() < 1e-9 * w);
        let dt = 1e-3 * 4.9e6 * (1.0 / 0.75 - 1.0) / 4180.0;
        assert!(
            (out.t - 300.0 - dt).abs() < 1e-9,
            "{} vs {}",
            out.t,
            300.0 + dt
        );
    }

    #[test]
    fn throttle_keeps_enthalpy() {
        // Common practice: a throttle keeps h. For an ideal gas h = h(T), so T
        // is unchanged; for an incompressible liquid c ΔT = −v Δp (closed form).
        let sub = ig("air");
        let inlet = tp(&sub, 350.0, 800e3);
        let out = throttle(&sub, &inlet, 200e3).unwrap();
        assert!((out.h - inlet.h).abs() < 1e-9 * inlet.h.abs().max(1.0));
        assert!((out.t - 350.0).abs() < 1e-7);
        assert!(out.s > inlet.s, "throttling generates entropy");
        let liq = Substance::Incompressible(Incompressible::new(4180.0, 1000.0).unwrap());
        let inlet = tp(&liq, 300.0, 1.0e6);
        let out = throttle(&liq, &inlet, 100e3).unwrap();
        assert!((out.t - (300.0 + 1e-3 * 0.9e6 / 4180.0)).abs() < 1e-9);
    }

    #[test]
    fn device_errors() {
        let sub = ig("air");
        let inlet = tp(&sub, 300.0, 100e3);
        let e = compressor(&sub, &inlet, 800e3, 1.3).unwrap_err();
        assert_eq!(
            e,
            ThermoError::Parameter {
                name: "eta",
                message: "must be in (0, 1], got 1.3".into()
            }
        );
        for eta in [0.0, -0.5, f64::NAN] {
            assert!(turbine(&sub, &tp(&sub, 900.0, 1e6), 1e5, eta).is_err());
        }
        let e = compressor(&sub, &inlet, 90e3, 0.8).unwrap_err();
        assert_eq!(
            e.to_string(),
            "a compressor must raise the pressure: p2 = 90 kPa is below p1 = 100 kPa"
        );
        let e = turbine(&sub, &inlet, 150e3, 0.8).unwrap_err();
        assert_eq!(
            e.to_string(),
            "a turbine must lower the pressure: p2 = 150 kPa is above p1 = 100 kPa"
        );
        assert!(
            nozzle(&sub, &inlet, 100e3, 0.9)
                .unwrap_err()
                .to_string()
                .contains("equals p1")
        );
        assert!(throttle(&sub, &inlet, 200e3).is_err());
        assert!(isentropic(&sub, &inlet, -1.0).is_err());
        assert_eq!(
            pump(&sub, &inlet, 200e3, 0.8).unwrap_err().to_string(),
            "pump needs a liquid; use compressor for a gas"
        );
        let liq = Substance::Incompressible(Incompressible::new(4180.0, 1000.0).unwrap());
        let l_in = tp(&liq, 300.0, 200e3);
        assert!(
            pump(&liq, &l_in, 100e3, 0.8)
                .unwrap_err()
                .to_string()
                .contains("must not lower")
        );
        // Compressing beyond the polynomial range is an error in words.
        let e = compressor(&sub, &inlet, 1e12, 0.8).unwrap_err();
        assert!(matches!(e, ThermoError::OutletOutOfRange(_)), "{e}");
        assert!(
            e.to_string()
                .contains("above the 6000 K limit of the data of ideal gas air"),
            "{e}"
        );
    }

    #[test]
    fn expansion_below_the_data_in_words() {
        // Air at 230 K expanded from 3 bar to 1 bar: the isentropic outlet
        // is at about 230 (1/3)^(0.2857) = 168 K (constant-cp estimate, k =
        // 1.4), below the 200 K end of the NASA polynomials.
        let sub = ig("air");
        let inlet = tp(&sub, 230.0, 3e5);
        let e = nozzle(&sub, &inlet, 1e5, 0.95).unwrap_err();
        assert_eq!(
            e.to_string(),
            "the isentropic outlet of the nozzle would be at about 168 K, below the 200 K limit \
             of the data of ideal gas air"
        );
        let e = isentropic(&sub, &inlet, 1e5).unwrap_err();
        assert!(
            e.to_string()
                .starts_with("the isentropic outlet would be at about 168 K")
        );
    }

    #[test]
    fn water_outlet_beyond_the_formulation_names_the_device() {
        // Steam at 1000 K and 0.1 MPa compressed to 90 MPa: the isentropic
        // outlet lies far above 1073.15 K, where IF97 stops above 50 MPa.
        let water = Substance::water();
        let inlet = tp(&water, 1000.0, 1e5);
        let e = compressor(&water, &inlet, 90e6, 0.8)
            .unwrap_err()
            .to_string();
        assert!(
            e.starts_with("the isentropic outlet of the compressor leaves the model's range: "),
            "{e}"
        );
        assert!(e.contains("IAPWS-IF97"), "{e}");
    }

    #[test]
    fn device_rules_agree() {
        // The same phase rule for every device (module documentation).
        let water = Substance::water();
        let liquid = tp(&water, 300.0, 1e6);
        let steam = tp(&water, 573.15, 1e6);
        let wet = water.state(Spec::PX { p: 1e6, x: 0.95 }).unwrap();
        assert_eq!(inlet_phase(&water, &liquid), InletPhase::Liquid);
        assert_eq!(inlet_phase(&water, &steam), InletPhase::Gas);
        assert_eq!(inlet_phase(&water, &wet), InletPhase::TwoPhase(0.95));
        // Turbine and compressor refuse a liquid, alike.
        let e = turbine(&water, &liquid, 1e5, 0.8).unwrap_err().to_string();
        assert!(
            e.starts_with("a turbine needs a gas or vapour: the inlet is a liquid"),
            "{e}"
        );
        let e = compressor(&water, &tp(&water, 300.0, 1e5), 1e6, 0.8).unwrap_err();
        assert!(e.to_string().contains("use pump"), "{e}");
        assert!(turbine_polytropic(&water, &liquid, 1e5, 0.8).is_err());
        // The pump refuses steam and wet steam.
        assert!(pump(&water, &steam, 2e6, 0.8).is_err());
        assert!(pump(&water, &wet, 2e6, 0.8).is_err());
        // Nozzle and throttle take any phase.
        assert!(nozzle(&water, &liquid, 0.5e6, 0.9).is_ok());
        assert!(throttle(&water, &wet, 0.5e6).is_ok());
        // A wet turbine inlet is accepted with a warning; a dry one is quiet.
        let out = turbine(&water, &wet, 0.1e6, 0.85).unwrap();
        let w = device_warning(Device::Turbine, &water, &wet, &out).unwrap();
        assert!(w.contains("inlet is two-phase (x = 0.95)"), "{w}");
        let hot = tp(&water, 773.15, 10e6);
        let out = turbine(&water, &hot, 10e3, 0.88).unwrap();
        let w = device_warning(Device::Turbine, &water, &hot, &out).unwrap();
        assert!(w.contains("outlet is wet"), "{w}");
        let out = turbine(&water, &hot, 1e6, 0.88).unwrap();
        assert_eq!(device_warning(Device::Turbine, &water, &hot, &out), None);
        let c = compressor(&water, &wet, 2e6, 0.8).unwrap();
        assert!(device_warning(Device::Compressor, &water, &wet, &c).is_some());
    }

    #[test]
    fn mixing_balances_perfect_gas() {
        // Closed form (constant cp): T3 = (ma T_a + mb T_b)/(ma + mb) and
        // S_gen = cp (ma ln(T3/T_a) + mb ln(T3/T_b)) − (ma + mb) R ... with
        // the pressure terms −R (ma ln(p/p_a) + mb ln(p/p_b)).
        // Energy balance to 1e-12 of the enthalpy flows; entropy to 1e-12 of
        // cp (ma + mb).
        let g = PerfectGas::from_k(287.0, 1.4).unwrap();
        let (cp, r) = (287.0 * 1.4 / 0.4, 287.0);
        let sub = Substance::PerfectGas(g);
        let a = tp(&sub, 300.0, 2e5);
        let b = tp(&sub, 450.0, 1.5e5);
        let (ma, mb, p) = (2.0, 3.0, 1.4e5);
        let out = mix(&sub, &a, ma, &b, mb, p).unwrap();
        let energy = (ma + mb) * out.h - ma * a.h - mb * b.h;
        let flows = ma * a.h.abs() + mb * b.h.abs();
        assert!(energy.abs() <= 1e-12 * flows.max(cp * (ma + mb) * 300.0));
        let t3 = (ma * 300.0 + mb * 450.0) / (ma + mb);
        assert!((out.t - t3).abs() < 1e-9 * t3);
        let s_gen = (ma + mb) * out.s - ma * a.s - mb * b.s;
        let closed = cp * (ma * (t3 / 300.0).ln() + mb * (t3 / 450.0).ln())
            - r * (ma * (p / 2e5).ln() + mb * (p / 1.5e5).ln());
        assert!(
            (s_gen - closed).abs() <= 1e-12 * cp * (ma + mb),
            "{s_gen} vs {closed}"
        );
        assert!(s_gen > 0.0);
    }

    #[test]
    fn mixing_water_ends_two_phase() {
        // Saturated liquid and superheated steam at 1 bar mixed 1:1: the
        // outlet enthalpy lies inside the dome (h_f = 417.5, h_g = 2675
        // kJ/kg at 1 bar, IF97), so the outlet is wet with
        // x = (h − h_f)/(h_g − h_f) from the model's own saturated states.
        let water = Substance::water();
        let a = water.state(Spec::PX { p: 1e5, x: 0.0 }).unwrap();
        let b = tp(&water, 473.15, 1e5);
        let out = mix(&water, &a, 1.0, &b, 1.0, 1e5).unwrap();
        let h = 0.5 * (a.h + b.h);
        assert!((out.h - h).abs() <= 1e-12 * h);
        let g = water.state(Spec::PX { p: 1e5, x: 1.0 }).unwrap();
        let x = (h - a.h) / (g.h - a.h);
        assert!((out.x.unwrap() - x).abs() < 1e-12, "{:?} vs {x}", out.x);
        // Entropy balance: generated = 2 s − s_a − s_b, with s the wet
        // state's (1 − x) s_f + x s_g: closes to 1e-12 of s_g.
        let s_gen = 2.0 * out.s - a.s - b.s;
        let expect = 2.0 * ((1.0 - x) * a.s + x * g.s) - a.s - b.s;
        assert!((s_gen - expect).abs() <= 1e-12 * g.s);
        assert!(s_gen > 0.0);
        // Errors in words.
        assert!(mix(&water, &a, -1.0, &b, 1.0, 1e5).is_err());
        assert!(mix(&water, &a, 0.0, &b, 0.0, 1e5).is_err());
        let e = mix(&water, &a, 1.0, &b, 1.0, 2e5).unwrap_err().to_string();
        assert!(e.contains("cannot raise the pressure"), "{e}");
        // One stream of zero flow returns the other at p.
        let one = mix(&water, &a, 0.0, &b, 1.0, 1e5).unwrap();
        assert!((one.t - 473.15).abs() < 1e-8);
    }

    #[test]
    fn pump_liquid_rule_for_water() {
        // The rule is checked before any water property call, so it is
        // testable with hand-made states. IF97 constants: T_c = 647.096 K,
        // rho_c = 322 kg/m^3.
        let base = State {
            t: 300.0,
            p: 1e5,
            h: 0.0,
            u: 0.0,
            s: 0.0,
            v: 1.0e-3,
            cp: None,
            cv: None,
            x: None,
            w: None,
        };
        let two_phase = State {
            x: Some(0.3),
            ..base
        };
        assert!(
            pump(&Substance::water(), &two_phase, 1e6, 0.8)
                .unwrap_err()
                .to_string()
                .contains("two-phase")
        );
        let vapour = State {
            v: 1.7,
            t: 400.0,
            ..base
        };
        assert!(
            pump(&Substance::water(), &vapour, 1e6, 0.8)
                .unwrap_err()
                .to_string()
                .contains("vapour")
        );
        let hot = State {
            t: 700.0,
            v: 2e-3,
            ..base
        };
        assert!(
            pump(&Substance::water(), &hot, 30e6, 0.8)
                .unwrap_err()
                .to_string()
                .contains("critical temperature")
        );
        // A compressed liquid passes the rule and reaches the water model.
        let liquid = State {
            x: Some(0.0),
            ..base
        };
        if let Err(e) = pump(&Substance::water(), &liquid, 1e6, 0.8) {
            assert!(!e.to_string().contains("pump needs a liquid"), "{e}");
        }
    }

    #[test]
    fn jet_speed_cases() {
        // Closed form: sqrt(V1² + 2 (h1 − h2)) with h1 − h2 = 100 kJ/kg and
        // V1 = 0: sqrt(2e5) = 447.214 m/s.
        let a = State {
            t: 500.0,
            p: 2e5,
            h: 200e3,
            u: 0.0,
            s: 0.0,
            v: 1.0,
            cp: None,
            cv: None,
            x: None,
            w: None,
        };
        let b = State { h: 100e3, ..a };
        assert!((jet_speed(&a, &b, 0.0).unwrap() - 447.2136).abs() < 1e-3);
        assert!((jet_speed(&a, &a, 30.0).unwrap() - 30.0).abs() < 1e-12);
        assert!(jet_speed(&b, &a, 10.0).is_err());
    }
}
