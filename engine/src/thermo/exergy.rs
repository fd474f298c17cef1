//! Entropy change and exergy functions.
//!
//! - `ds_incompressible(c, T1, T2)` = c ln(T2/T1);
//! - `ds_ideal_gas(gas, T1, p1, T2, p2)` = s°(T2) − s°(T1) − R ln(p2/p1);
//! - `flow_exergy(st, dead, V, z)` = (h − h0) − T0 (s − s0) + V²/2 + g_n z;
//! - `closed_exergy(st, dead)` = (u − u0) + p0 (v − v0) − T0 (s − s0);
//! - `heat_exergy(Q, T_b, T0)` = Q (1 − T0/T_b).

use super::ideal_gas::check_p;
use super::process::fmt_num;
use super::{Result, State, Substance, ThermoError};

pub use super::consts::G_N;

fn positive_t(name: &'static str, t: f64) -> Result<()> {
    if t.is_finite() && t > 0.0 {
        Ok(())
    } else {
        Err(ThermoError::Parameter {
            name,
            message: format!(
                "must be a positive absolute temperature, got {} K",
                fmt_num(t)
            ),
        })
    }
}

/// Entropy change of an incompressible substance, J/(kg K): c ln(T2/T1).
pub fn ds_incompressible(c: f64, t1: f64, t2: f64) -> Result<f64> {
    if !(c.is_finite() && c > 0.0) {
        return Err(ThermoError::Parameter {
            name: "c",
            message: format!("must be positive, got {}", fmt_num(c)),
        });
    }
    positive_t("T1", t1)?;
    positive_t("T2", t2)?;
    Ok(c * (t2 / t1).ln())
}

/// Entropy change of an ideal or perfect gas, J/(kg K):
/// s°(T2) − s°(T1) − R ln(p2/p1) (for a perfect gas s° = cp ln T + const).
pub fn ds_ideal_gas(gas: &Substance, t1: f64, p1: f64, t2: f64, p2: f64) -> Result<f64> {
    check_p(p1)?;
    check_p(p2)?;
    match gas {
        Substance::IdealGas(_) | Substance::PerfectGas(_) => {
            // Through the model's own states, so range checks apply.
            let a = gas.state(super::Spec::TP { t: t1, p: p1 })?;
            let b = gas.state(super::Spec::TP { t: t2, p: p2 })?;
            Ok(b.s - a.s)
        }
        other => Err(ThermoError::InvalidArgument(format!(
            "ds_ideal_gas needs an ideal or perfect gas, got {other}"
        ))),
    }
}

/// Specific flow exergy, J/kg: (h − h0) − T0 (s − s0) + V²/2 + g_n z,
/// with V in m/s and z in m.
pub fn flow_exergy(st: &State, dead: &State, v: f64, z: f64) -> f64 {
    (st.h - dead.h) - dead.t * (st.s - dead.s) + 0.5 * v * v + G_N * z
}

/// Specific exergy of a closed system, J/kg:
/// (u − u0) + p0 (v − v0) − T0 (s − s0).
pub fn closed_exergy(st: &State, dead: &State) -> f64 {
    (st.u - dead.u) + dead.p * (st.v - dead.v) - dead.t * (st.s - dead.s)
}

/// Exergy of heat Q crossing a boundary at T_b with surroundings at T0:
/// Q (1 − T0/T_b). Same unit as Q.
pub fn heat_exergy(q: f64, t_b: f64, t0: f64) -> Result<f64> {
    positive_t("T_b", t_b)?;
    positive_t("T0", t0)?;
    if !q.is_finite() {
        return Err(ThermoError::Parameter {
            name: "Q",
            message: format!("must be finite, got {q}"),
        });
    }
    Ok(q * (1.0 - t0 / t_b))
}

#[cfg(test)]
mod tests {
    use super::super::ideal_gas::IdealGas;
    use super::super::perfect_gas::PerfectGas;
    use super::super::{Spec, Substance};
    use super::*;

    const PROCESS: &str = include_str!(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/../tests/reference/ideal_gas_cantera_process.csv"
    ));

    #[test]
    fn ds_incompressible_closed_form() {
        // c ln(T2/T1) = 4180 ln(2) = 2897.355 J/(kg K) (closed form).
        let ds = ds_incompressible(4180.0, 300.0, 600.0).unwrap();
        assert!((ds - 4180.0 * 2f64.ln()).abs() < 1e-9);
        assert!((ds - 2897.355).abs() < 0.001);
        assert!(ds_incompressible(4180.0, 0.0, 300.0).is_err());
        assert!(ds_incompressible(-1.0, 300.0, 300.0).is_err());
    }

    #[test]
    fn ds_ideal_gas_against_cantera() {
        // air_compressor row of ideal_gas_cantera_process.csv (cantera 3.2.0):
        // inlet 300 K, 100 kPa; outlet at 800 kPa with the tabulated T2; the
        // tabulated ds = s2 − s1. Tolerance 0.1 % of R (the polynomial sets
        // agree within 0.1 % in s°).
        let row = PROCESS
            .lines()
            .find(|l| l.starts_with("air_compressor,"))
            .unwrap();
        let f: Vec<f64> = row.split(',').skip(3).map(|x| x.parse().unwrap()).collect();
        let (t1, p1, p2, t2, ds_ref) = (f[0], f[1], f[2], f[5], f[7]);
        let air = Substance::IdealGas(IdealGas::by_name("air").unwrap());
        let ds = ds_ideal_gas(&air, t1, p1, t2, p2).unwrap();
        assert!((ds - ds_ref).abs() < 1e-3 * 287.0, "{ds} vs {ds_ref}");
    }

    #[test]
    fn ds_perfect_gas_closed_form() {
        // cp ln(T2/T1) − R ln(p2/p1) with cp = 1004.5, R = 287 (cold air,
        // common practice): 1004.5 ln 2 − 287 ln 4 = 298.400 J/(kg K).
        let g = Substance::PerfectGas(PerfectGas::from_k(287.0, 1.4).unwrap());
        let ds = ds_ideal_gas(&g, 300.0, 1e5, 600.0, 4e5).unwrap();
        assert!((ds - (1004.5 * 2f64.ln() - 287.0 * 4f64.ln())).abs() < 1e-9);
        assert!((ds - 298.400).abs() < 0.001);
        assert!(ds_ideal_gas(&Substance::water(), 300.0, 1e5, 400.0, 1e5).is_err());
        let air = Substance::IdealGas(IdealGas::by_name("air").unwrap());
        assert!(matches!(
            ds_ideal_gas(&air, 300.0, 1e5, 7000.0, 1e5),
            Err(ThermoError::OutOfRange { .. })
        ));
    }

    #[test]
    fn exergy_at_dead_state_is_zero_and_kinetic_terms() {
        // By definition the dead state has zero exergy; V²/2 and g_n z add
        // (closed form: 100²/2 + 9.80665 · 10 = 5098.0665 J/kg).
        let g = Substance::IdealGas(IdealGas::by_name("air").unwrap());
        let dead = g
            .state(Spec::TP {
                t: 298.15,
                p: 101_325.0,
            })
            .unwrap();
        assert_eq!(flow_exergy(&dead, &dead, 0.0, 0.0), 0.0);
        assert_eq!(closed_exergy(&dead, &dead), 0.0);
        assert!((flow_exergy(&dead, &dead, 100.0, 10.0) - 5098.0665).abs() < 1e-9);
    }

    #[test]
    fn flow_exergy_of_compressed_air_closed_form() {
        // Perfect gas, isothermal at T0: h = h0, s − s0 = −R ln(p/p0), so
        // ψ = R T0 ln(p/p0) = 287 · 298.15 · ln 8 = 177,935.8 J/kg (closed form).
        // Closed system, same state: φ = p0 (v − v0) + R T0 ln(p/p0)
        // = R T0 (p0/p − 1 + ln(p/p0)).
        let g = Substance::PerfectGas(PerfectGas::from_k(287.0, 1.4).unwrap());
        let dead = g.state(Spec::TP { t: 298.15, p: 1e5 }).unwrap();
        let st = g.state(Spec::TP { t: 298.15, p: 8e5 }).unwrap();
        let rt0 = 287.0 * 298.15;
        assert!((flow_exergy(&st, &dead, 0.0, 0.0) - rt0 * 8f64.ln()).abs() < 1e-6);
        assert!((flow_exergy(&st, &dead, 0.0, 0.0) - 177_935.8).abs() < 0.1);
        let phi = rt0 * (1.0 / 8.0 - 1.0 + 8f64.ln());
        assert!((closed_exergy(&st, &dead) - phi).abs() < 1e-6);
    }

    #[test]
    fn heat_exergy_carnot() {
        // Carnot factor: 1000 J at 600 K with T0 = 300 K → 500 J (closed form).
        assert!((heat_exergy(1000.0, 600.0, 300.0).unwrap() - 500.0).abs() < 1e-12);
        // Below T0 the factor is negative (heat out of a cold space).
        assert!(heat_exergy(1000.0, 250.0, 300.0).unwrap() < 0.0);
        assert!(heat_exergy(1000.0, 0.0, 300.0).is_err());
        assert!(heat_exergy(1000.0, 600.0, -1.0).is_err());
        assert_eq!(G_N, 9.80665);
    }
}
