//! Saturated liquid and vapour.
//!
//! Below 623.15 K the saturated phases come from regions 1 and 2 at
//! (T_sat, p_sat) of region 4. From 623.15 K to the critical point they lie
//! in region 3: their densities are found from the phase-equilibrium
//! conditions of the region-3 Helmholtz equation, equal pressure and equal
//! Gibbs free energy of both phases at the region-4 saturation temperature,
//! solved by Newton's method from the auxiliary saturated-density equations
//! of IAPWS SR1-86(1992) ("Revised Supplementary Release on Saturation
//! Properties of Ordinary Water Substance", Eqs. (2) and (3)).

use super::forward::{Props, R3Point, region1, region2};
use super::{RHO_CRIT, T_CRIT, T13, ThermoError};

/// Saturated liquid density, IAPWS SR1-86(1992) Eq. (2), kg/m^3
/// (a starting value only).
fn rho_liq_aux(t: f64) -> f64 {
    const B: [(f64, f64); 6] = [
        (1.992_740_64, 1.0),
        (1.099_653_42, 2.0),
        (-0.510_839_303, 5.0),
        (-1.754_934_79, 16.0),
        (-45.517_035_2, 43.0),
        (-6.746_944_50e5, 110.0),
    ];
    let theta = (1.0 - t / T_CRIT).max(0.0).cbrt();
    RHO_CRIT * (1.0 + B.iter().map(|&(b, e)| b * theta.powf(e)).sum::<f64>())
}

/// Saturated vapour density, IAPWS SR1-86(1992) Eq. (3), kg/m^3
/// (a starting value only).
fn rho_vap_aux(t: f64) -> f64 {
    const C: [(f64, f64); 6] = [
        (-2.031_502_40, 1.0),
        (-2.683_029_40, 2.0),
        (-5.386_264_92, 4.0),
        (-17.299_160_5, 9.0),
        (-44.758_658_1, 18.5),
        (-63.920_106_3, 35.5),
    ];
    let theta = (1.0 - t / T_CRIT).max(0.0).cbrt();
    RHO_CRIT * C.iter().map(|&(c, e)| c * theta.powf(e)).sum::<f64>().exp()
}

/// Coexisting phases of the region-3 equation at temperature `t`.
#[derive(Clone, Copy, Debug)]
pub(super) struct Coexist {
    pub liq: R3Point,
    pub vap: R3Point,
}

/// Temperature distance from the critical point below which both phases are
/// taken as the critical state (the equilibrium system becomes singular).
const T_CRIT_EPS: f64 = 1e-9;

/// An upper density for the liquid iteration, kg/m^3.
const RHO_MAX: f64 = 1100.0;

/// Phase equilibrium of the region-3 equation at `t` (623.15 K ..= T_c):
/// solves p(rho_l) = p(rho_v) and g(rho_l) = g(rho_v) for (rho_l, rho_v).
pub(super) fn coexist3(t: f64) -> Result<Coexist, ThermoError> {
    if t >= T_CRIT - T_CRIT_EPS {
        let c = R3Point::new(RHO_CRIT, t);
        return Ok(Coexist { liq: c, vap: c });
    }
    let mut rl = rho_liq_aux(t);
    let mut rv = rho_vap_aux(t);
    let rt = super::R * t;
    // Residual norm of the best iterate so far. Close to the critical point
    // the system is ill-conditioned and the iteration ends in rounding
    // noise (about 1e-10 relative); the best iterate is kept.
    let mut best: Option<(f64, f64, f64)> = None;
    let mut noisy = 0;
    for _ in 0..100 {
        let l = R3Point::new(rl, t);
        let v = R3Point::new(rv, t);
        let pl = l.p();
        let pv = v.p();
        let f1 = pl - pv;
        let f2 = l.g() - v.g();
        let dl = l.dp_drho();
        let dv = v.dp_drho();
        if !(dl > 0.0 && dv > 0.0) {
            // A starting value fell into the unstable part of the isotherm:
            // move both towards their own side.
            if dl <= 0.0 {
                rl += 0.25 * (rl - RHO_CRIT).abs().max(1.0);
            }
            if dv <= 0.0 {
                rv -= 0.25 * (RHO_CRIT - rv).abs().max(1.0);
            }
            continue;
        }
        let norm = f1.abs() / pl.abs().max(1.0) + f2.abs() / rt;
        if best.is_none_or(|b| norm < b.0) {
            best = Some((norm, rl, rv));
        }
        if norm <= 1e-14 {
            break;
        }
        if norm <= 1e-9 {
            noisy += 1;
            if noisy > 4 {
                break;
            }
        }
        // Jacobian: d(f1)/d(rl) = dl, d(f1)/d(rv) = -dv,
        // d(f2)/d(rl) = dl/rl, d(f2)/d(rv) = -dv/rv (dg = dp/rho at const T).
        // With a = dl*drl and b = dv*drv: a - b = -f1, a/rl - b/rv = -f2.
        let k = 1.0 / rl - 1.0 / rv;
        let b = (f1 / rl - f2) / k;
        let a = b - f1;
        let mut drl = a / dl;
        let mut drv = b / dv;
        // Keep each phase on its own side of the critical density and
        // within the range of the equation.
        let lim_l = 0.5 * (rl - RHO_CRIT);
        let lim_v = 0.5 * (RHO_CRIT - rv);
        drl = drl.clamp(-lim_l, 0.5 * (RHO_MAX - rl));
        drv = drv.clamp(-0.5 * rv, lim_v);
        rl += drl;
        rv += drv;
        if !(rl.is_finite() && rv.is_finite()) {
            break;
        }
    }
    if let Some((norm, rl, rv)) = best
        && norm <= 1e-9
    {
        return Ok(Coexist {
            liq: R3Point::new(rl, t),
            vap: R3Point::new(rv, t),
        });
    }
    Err(ThermoError::NoConvergence(format!(
        "the saturated densities of water at T = {t} K did not converge"
    )))
}

/// Saturated liquid and vapour at temperature `t` and pressure `p`
/// (`p` = p_sat(t) of region 4 given by the caller).
pub(super) fn sat_props(t: f64, p: f64) -> Result<(Props, Props), ThermoError> {
    if t <= T13 {
        Ok((region1(t, p), region2(t, p)))
    } else {
        let c = coexist3(t)?;
        Ok((c.liq.props(), c.vap.props()))
    }
}
