//! Device models: isentropic, compressor, turbine, pump, nozzle, throttle.
//!
//! Each takes the inlet state and the outlet pressure and returns the outlet
//! state. They are generic over the substance: they only call
//! [`Substance::state`], so every model (including water by IAPWS-IF97)
//! works the same way. Steady flow, adiabatic, kinetic and potential energy
//! changes neglected except in the nozzle's [`jet_speed`].
//!
//! - isentropic: state(p2, s1);
//! - compressor and pump: h2 = h1 + (h2s − h1)/eta;
//! - turbine and nozzle: h2 = h1 − eta (h1 − h2s);
//! - throttle: h2 = h1.

use super::{Result, Spec, State, Substance, ThermoError};

/// A number for a message: up to 6 significant figures, no trailing zeros
/// ("7000", "0.15", "1.3", "1.23457e+07").
pub(crate) fn fmt_num(x: f64) -> String {
    if !x.is_finite() {
        return format!("{x}");
    }
    if x == 0.0 {
        return "0".to_string();
    }
    let mag = x.abs().log10().floor();
    if (-4.0..10.0).contains(&mag) {
        let decimals = (5.0 - mag).max(0.0) as usize;
        let s = format!("{x:.decimals$}");
        if s.contains('.') {
            s.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            s
        }
    } else {
        let s = format!("{x:.5e}");
        match s.split_once('e') {
            Some((m, e)) => {
                let m = if m.contains('.') {
                    m.trim_end_matches('0').trim_end_matches('.')
                } else {
                    m
                };
                format!("{m}e{e}")
            }
            None => s,
        }
    }
}

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

/// Isentropic outlet state at p2: state(p2, s1).
pub fn isentropic(sub: &Substance, inlet: &State, p2: f64) -> Result<State> {
    check_p2(p2)?;
    sub.state(Spec::PS { p: p2, s: inlet.s })
}

/// Adiabatic compressor with isentropic efficiency eta:
/// h2 = h1 + (h2s − h1)/eta. Requires p2 > p1.
pub fn compressor(sub: &Substance, inlet: &State, p2: f64, eta: f64) -> Result<State> {
    check_eta(eta)?;
    check_p2(p2)?;
    must_raise("a compressor", inlet, p2)?;
    let h2s = isentropic(sub, inlet, p2)?.h;
    sub.state(Spec::PH {
        p: p2,
        h: inlet.h + (h2s - inlet.h) / eta,
    })
}

/// Adiabatic turbine with isentropic efficiency eta:
/// h2 = h1 − eta (h1 − h2s). Requires p2 < p1.
pub fn turbine(sub: &Substance, inlet: &State, p2: f64, eta: f64) -> Result<State> {
    check_eta(eta)?;
    check_p2(p2)?;
    must_lower("a turbine", inlet, p2)?;
    let h2s = isentropic(sub, inlet, p2)?.h;
    sub.state(Spec::PH {
        p: p2,
        h: inlet.h - eta * (inlet.h - h2s),
    })
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
    let h2s = isentropic(sub, inlet, p2)?.h;
    sub.state(Spec::PH {
        p: p2,
        h: inlet.h + (h2s - inlet.h) / eta,
    })
}

/// Adiabatic nozzle with isentropic efficiency eta:
/// h2 = h1 − eta (h1 − h2s). Requires p2 < p1. See [`jet_speed`].
pub fn nozzle(sub: &Substance, inlet: &State, p2: f64, eta: f64) -> Result<State> {
    check_eta(eta)?;
    check_p2(p2)?;
    must_lower("a nozzle", inlet, p2)?;
    let h2s = isentropic(sub, inlet, p2)?.h;
    sub.state(Spec::PH {
        p: p2,
        h: inlet.h - eta * (inlet.h - h2s),
    })
}

/// Throttling valve: h2 = h1. Requires p2 <= p1.
pub fn throttle(sub: &Substance, inlet: &State, p2: f64) -> Result<State> {
    check_p2(p2)?;
    if p2 > inlet.p {
        return Err(ThermoError::InvalidArgument(format!(
            "a throttle cannot raise the pressure: p2 = {} is above p1 = {}",
            kpa(p2),
            kpa(inlet.p)
        )));
    }
    sub.state(Spec::PH { p: p2, h: inlet.h })
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
        // Compressing beyond the polynomial range is an error naming the range.
        let e = compressor(&sub, &inlet, 1e12, 0.8).unwrap_err();
        assert!(matches!(e, ThermoError::OutOfRange { .. }), "{e}");
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
