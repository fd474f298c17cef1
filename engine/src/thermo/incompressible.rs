//! Incompressible liquids and solids: constant specific heat c and density.
//!
//! Reference point T_ref = 298.15 K, p_ref = 101325 Pa:
//! h = c (T − T_ref) + v (p − p_ref); u = c (T − T_ref); s = c ln(T/T_ref);
//! v = 1/rho; cp = cv = c (k = 1).

use super::ideal_gas::{T_REF, check_p, pair_unsupported};
use super::process::fmt_num;
use super::{Result, Spec, State, ThermoError};

/// Reference pressure of the enthalpy, Pa (standard atmosphere).
pub const P_REF: f64 = super::consts::P_ATM;

#[derive(Clone, Debug, PartialEq)]
pub struct Incompressible {
    /// Specific heat, J/(kg K).
    pub c: f64,
    /// Density, kg/m^3.
    pub rho: f64,
}

impl Incompressible {
    /// A model from c (J/(kg K)) and rho (kg/m^3), both positive.
    pub fn new(c: f64, rho: f64) -> Result<Incompressible> {
        let m = Incompressible { c, rho };
        m.validate()?;
        Ok(m)
    }

    fn validate(&self) -> Result<()> {
        if !(self.c.is_finite() && self.c > 0.0) {
            return Err(ThermoError::InvalidArgument(format!(
                "incompressible substance needs c > 0, got c = {} J/(kg K)",
                fmt_num(self.c)
            )));
        }
        if !(self.rho.is_finite() && self.rho > 0.0) {
            return Err(ThermoError::InvalidArgument(format!(
                "incompressible substance needs rho > 0, got rho = {} kg/m^3",
                fmt_num(self.rho)
            )));
        }
        Ok(())
    }

    fn model(&self) -> String {
        format!(
            "incompressible (c = {} J/(kg K), rho = {} kg/m^3)",
            fmt_num(self.c),
            fmt_num(self.rho)
        )
    }

    fn state_tp(&self, t: f64, p: f64) -> State {
        let v = 1.0 / self.rho;
        let u = self.c * (t - T_REF);
        State {
            t,
            p,
            h: u + v * (p - P_REF),
            u,
            s: self.c * (t / T_REF).ln(),
            v,
            cp: Some(self.c),
            cv: Some(self.c),
            x: None,
            w: None,
        }
    }

    fn positive_t(&self, t: f64, what: impl FnOnce() -> String) -> Result<f64> {
        super::positive_t(t, || self.model(), what)
    }

    /// Fix a state: (T, p), (p, h) or (p, s).
    pub fn state(&self, spec: Spec) -> Result<State> {
        self.validate()?;
        match spec {
            Spec::TP { t, p } => {
                check_p(p)?;
                let t = self.positive_t(t, || format!("T = {} K", fmt_num(t)))?;
                Ok(self.state_tp(t, p))
            }
            Spec::PH { p, h } => {
                check_p(p)?;
                let t = T_REF + (h - (p - P_REF) / self.rho) / self.c;
                let t = self.positive_t(t, || {
                    format!("h = {} J/kg at p = {} Pa", fmt_num(h), fmt_num(p))
                })?;
                Ok(self.state_tp(t, p))
            }
            Spec::PS { p, s } => {
                check_p(p)?;
                let t = T_REF * (s / self.c).exp();
                let t = self.positive_t(t, || format!("s = {} J/(kg K)", fmt_num(s)))?;
                Ok(self.state_tp(t, p))
            }
            other => Err(pair_unsupported(other)),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn liquid() -> Incompressible {
        // Illustrative inputs (not reference values): c = 4180 J/(kg K), rho = 1000 kg/m^3.
        Incompressible::new(4180.0, 1000.0).unwrap()
    }

    #[test]
    fn relations() {
        // Definitions of the model at 350 K, 5 bar:
        // h = 4180 · 51.85 + 1e-3 · (5e5 − 101325), s = 4180 ln(350/298.15).
        let m = liquid();
        let st = m.state(Spec::TP { t: 350.0, p: 5e5 }).unwrap();
        assert!((st.h - (4180.0 * 51.85 + 1e-3 * (5e5 - 101_325.0))).abs() < 1e-6);
        assert!((st.u - 4180.0 * 51.85).abs() < 1e-6);
        assert!((st.s - 4180.0 * (350.0f64 / 298.15).ln()).abs() < 1e-9);
        assert_eq!(st.v, 1e-3);
        assert_eq!(st.get(super::super::Field::K), Some(1.0));
        let a = m.state(Spec::PH { p: 5e5, h: st.h }).unwrap();
        let b = m.state(Spec::PS { p: 2e6, s: st.s }).unwrap();
        assert!((a.t - 350.0).abs() < 1e-9);
        // Common practice: same entropy ⇒ same temperature, whatever the pressure.
        assert!((b.t - 350.0).abs() < 1e-9);
    }

    #[test]
    fn errors() {
        assert!(Incompressible::new(0.0, 1000.0).is_err());
        assert!(Incompressible::new(4180.0, -1.0).is_err());
        let m = liquid();
        assert!(matches!(
            m.state(Spec::TP { t: 0.0, p: 1e5 }),
            Err(ThermoError::OutOfRange { .. })
        ));
        assert!(matches!(
            m.state(Spec::PH { p: 1e5, h: -2e6 }),
            Err(ThermoError::OutOfRange { .. })
        ));
        assert!(matches!(
            m.state(Spec::TX { t: 300.0, x: 0.0 }),
            Err(ThermoError::Unsupported(_))
        ));
        let e = m.state(Spec::TP { t: -3.0, p: 1e5 }).unwrap_err();
        assert_eq!(
            e.to_string(),
            "T = -3 K is outside the range of incompressible (c = 4180 J/(kg K), rho = 1000 kg/m^3) (T > 0 K)"
        );
    }
}
