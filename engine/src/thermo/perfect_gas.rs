//! Perfect gas: ideal gas with constant cp ("cold-air" style).
//!
//! cv = cp − R, k = cp/cv; h = cp (T − 298.15 K);
//! s = cp ln(T/298.15 K) − R ln(p/100 kPa); u = h − R T; v = R T / p.
//! The reference point (298.15 K, 1 bar) matches the ideal-gas model's
//! enthalpy zero, not its absolute entropy.

use super::ideal_gas::{P_STD, T_REF, check_p, pair_unsupported};
use super::process::fmt_num;
use super::{Result, Spec, State, ThermoError};

/// Temperature span beyond which constant cp is doubtful (common practice).
const SPAN_WARN: f64 = 200.0;

#[derive(Clone, Debug, PartialEq)]
pub struct PerfectGas {
    /// Specific gas constant, J/(kg K).
    pub r: f64,
    /// Isobaric specific heat, J/(kg K).
    pub cp: f64,
}

impl PerfectGas {
    /// A perfect gas from R and cp; requires R > 0 and cp > R (k > 1).
    pub fn new(r: f64, cp: f64) -> Result<PerfectGas> {
        let g = PerfectGas { r, cp };
        g.validate()?;
        Ok(g)
    }

    /// A perfect gas from R and k = cp/cv: cp = k R / (k − 1); requires k > 1.
    pub fn from_k(r: f64, k: f64) -> Result<PerfectGas> {
        if !(k.is_finite() && k > 1.0) {
            return Err(ThermoError::InvalidArgument(format!(
                "perfect gas needs k = cp/cv > 1, got k = {}",
                fmt_num(k)
            )));
        }
        Self::new(r, k * r / (k - 1.0))
    }

    fn validate(&self) -> Result<()> {
        if !(self.r.is_finite() && self.r > 0.0) {
            return Err(ThermoError::InvalidArgument(format!(
                "perfect gas needs R > 0, got R = {} J/(kg K)",
                fmt_num(self.r)
            )));
        }
        if !(self.cp.is_finite() && self.cp > self.r) {
            return Err(ThermoError::InvalidArgument(format!(
                "perfect gas needs cp > R (k > 1), got cp = {} J/(kg K) with R = {} J/(kg K)",
                fmt_num(self.cp),
                fmt_num(self.r)
            )));
        }
        Ok(())
    }

    /// Isochoric specific heat cv = cp − R, J/(kg K).
    pub fn cv(&self) -> f64 {
        self.cp - self.r
    }

    /// Ratio of specific heats k = cp/cv.
    pub fn k(&self) -> f64 {
        self.cp / self.cv()
    }

    fn model(&self) -> String {
        format!(
            "perfect gas (R = {} J/(kg K), cp = {} J/(kg K))",
            fmt_num(self.r),
            fmt_num(self.cp)
        )
    }

    fn state_tp(&self, t: f64, p: f64) -> State {
        let h = self.cp * (t - T_REF);
        State {
            t,
            p,
            h,
            u: h - self.r * t,
            s: self.cp * (t / T_REF).ln() - self.r * (p / P_STD).ln(),
            v: self.r * t / p,
            cp: Some(self.cp),
            cv: Some(self.cv()),
            x: None,
            w: Some((self.cp / self.cv() * self.r * t).sqrt()),
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
                let t =
                    self.positive_t(T_REF + h / self.cp, || format!("h = {} J/kg", fmt_num(h)))?;
                Ok(self.state_tp(t, p))
            }
            Spec::PS { p, s } => {
                check_p(p)?;
                let t = T_REF * ((s + self.r * (p / P_STD).ln()) / self.cp).exp();
                let t = self.positive_t(t, || {
                    format!("s = {} J/(kg K) at p = {} Pa", fmt_num(s), fmt_num(p))
                })?;
                Ok(self.state_tp(t, p))
            }
            other => Err(pair_unsupported(other)),
        }
    }

    /// Common-practice warning: constant cp over a span of more than 200 K.
    pub fn process_warning(&self, a: &State, b: &State) -> Option<String> {
        let span = (b.t - a.t).abs();
        (span > SPAN_WARN).then(|| {
            format!(
                "perfect-gas (constant cp) result over a {} K temperature span: constant cp may be \
                 inaccurate (common practice: use ideal_gas with cp(T) beyond ~200 K)",
                span.round()
            )
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn air() -> PerfectGas {
        // Cold-air standard: R = 287 J/(kg K), k = 1.4 (common practice, from memory).
        PerfectGas::from_k(287.0, 1.4).unwrap()
    }

    #[test]
    fn from_k_gives_cp() {
        // Closed form: cp = k R/(k − 1) = 1.4 · 287 / 0.4 = 1004.5 J/(kg K).
        let g = air();
        assert!((g.cp - 1004.5).abs() < 1e-9);
        assert!((g.k() - 1.4).abs() < 1e-12);
        assert!((g.cv() - 717.5).abs() < 1e-9);
    }

    #[test]
    fn validation() {
        assert!(PerfectGas::new(0.0, 1000.0).is_err());
        assert!(PerfectGas::new(287.0, 287.0).is_err());
        assert!(PerfectGas::new(287.0, f64::NAN).is_err());
        assert!(PerfectGas::from_k(287.0, 1.0).is_err());
        assert!(PerfectGas::from_k(287.0, 0.9).is_err());
        // A hand-built invalid value is caught at use.
        assert!(
            PerfectGas {
                r: -1.0,
                cp: 1000.0
            }
            .state(Spec::TP { t: 300.0, p: 1e5 })
            .is_err()
        );
    }

    #[test]
    fn state_relations_and_inverses() {
        // Definitions: h = cp (T − 298.15), s = cp ln(T/298.15) − R ln(p/1 bar),
        // u = h − R T, v = R T / p. At 400 K, 2 bar: h = 1004.5 · 101.85.
        let g = air();
        let st = g.state(Spec::TP { t: 400.0, p: 2e5 }).unwrap();
        assert!((st.h - 1004.5 * 101.85).abs() < 1e-6);
        assert!((st.s - (1004.5 * (400.0f64 / 298.15).ln() - 287.0 * 2f64.ln())).abs() < 1e-9);
        assert!((st.v - 287.0 * 400.0 / 2e5).abs() < 1e-15);
        assert!((st.u - (st.h - 287.0 * 400.0)).abs() < 1e-9);
        assert_eq!(st.get(super::super::Field::K), Some(1004.5 / 717.5));
        let a = g.state(Spec::PH { p: 2e5, h: st.h }).unwrap();
        let b = g.state(Spec::PS { p: 2e5, s: st.s }).unwrap();
        assert!((a.t - 400.0).abs() < 1e-9 && (b.t - 400.0).abs() < 1e-9);
    }

    #[test]
    fn errors() {
        let g = air();
        assert!(matches!(
            g.state(Spec::TP { t: -5.0, p: 1e5 }),
            Err(ThermoError::OutOfRange { .. })
        ));
        assert!(matches!(
            g.state(Spec::PH { p: 1e5, h: -1e6 }),
            Err(ThermoError::OutOfRange { .. })
        ));
        assert!(matches!(
            g.state(Spec::TP { t: 300.0, p: 0.0 }),
            Err(ThermoError::InvalidArgument(_))
        ));
        assert!(matches!(
            g.state(Spec::PX { p: 1e5, x: 0.1 }),
            Err(ThermoError::Unsupported(_))
        ));
    }

    #[test]
    fn span_warning() {
        let g = air();
        let a = g.state(Spec::TP { t: 300.0, p: 1e5 }).unwrap();
        let b = g.state(Spec::TP { t: 650.0, p: 1e5 }).unwrap();
        assert_eq!(
            g.process_warning(&a, &b).unwrap(),
            "perfect-gas (constant cp) result over a 350 K temperature span: constant cp may be \
             inaccurate (common practice: use ideal_gas with cp(T) beyond ~200 K)"
        );
        let c = g.state(Spec::TP { t: 450.0, p: 1e5 }).unwrap();
        assert_eq!(g.process_warning(&a, &c), None);
    }
}
