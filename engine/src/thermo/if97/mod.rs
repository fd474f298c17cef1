//! Water and steam by IAPWS-IF97 (IAPWS R7-97(2012), "Revised Release on
//! the IAPWS Industrial Formulation 1997 for the Thermodynamic Properties of
//! Water and Steam").
//!
//! Regions 1 to 5 over the whole range of the formulation:
//! 273.15 K <= T <= 1073.15 K for 0 < p <= 100 MPa, and
//! 1073.15 K < T <= 2273.15 K for 0 < p <= 50 MPa.
//!
//! - (T, p): forward equations; in region 3 the density is solved from the
//!   Helmholtz equation by a bracketed Newton iteration on the correct branch
//!   of the isotherm.
//! - (p, h), (p, s): backward equations of regions 1 and 2 (and of the
//!   supplementary release SR3-03(2014) for region 3) give starting values;
//!   Newton refinement on the forward equations then makes the result
//!   consistent with them: h(p, T(p, h)) = h to about 1e-12 relative.
//!   Region 3 is a 2-D Newton iteration on (rho, T), region 5 a 1-D Newton
//!   iteration on T. Inside the saturation dome the quality follows from the
//!   saturated liquid and vapour at p.
//! - (p, x), (T, x): saturation by region 4; the saturated phases from
//!   regions 1 and 2 below 623.15 K, above it from the phase equilibrium of
//!   the region-3 equation (module `sat`). A (p, h) or (p, s) pair at the
//!   saturated-liquid or -vapour value (to 1e-12 relative) is that
//!   saturated phase with x = 0 or 1; a saturated phase carries the
//!   single-phase cp, cv and w of that phase. A (T, p) pair on the
//!   saturation line is refused (it does not fix the state; give x).
//! - (h, s), (T, s), (T, v): solved for the pressure on the same forward
//!   equations (module `pairs`); (h, s) starts from the backward equations
//!   p(h,s) and T_sat(h,s) of IAPWS SR2-01(2014) and SR4-04(2014).
//! - Speed of sound w for every single-phase state (IF97 Tables 3, 12, 31,
//!   39).
//! - The equations of neighbouring regions agree at their boundaries only to
//!   within IF97's consistency limits (e.g. regions 2 and 5 by up to about
//!   0.1 kJ/kg at 1073.15 K). A (p, h) or (p, s) pair in such a sliver is
//!   solved on the neighbouring equation extended by a fraction of a kelvin,
//!   so the returned state always reproduces the given h or s.
//!
//! All values SI: K, Pa, J/kg, J/(kg K), m^3/kg.

mod backward;
mod coef;
mod forward;
mod pairs;
mod sat;
#[cfg(test)]
mod tests;
#[cfg(test)]
mod tests_hs;
#[cfg(test)]
mod tests_pairs;

use super::fluid::{Critical, RealFluid, Saturation};
use super::{Result, Spec, State, ThermoError};
use forward::{Props, R3Point, Thermal, region1, region2, region5};
pub use pairs::{P_LO, state_hs, state_ts, state_tv};

/// Critical temperature, K (IAPWS R7-97(2012), Eq. (3)).
pub const T_CRIT: f64 = 647.096;
/// Critical pressure, Pa (IAPWS R7-97(2012), Eq. (4)).
pub const P_CRIT: f64 = 22.064e6;
/// Critical density, kg/m^3 (IAPWS R7-97(2012), Eq. (5)).
pub const RHO_CRIT: f64 = 322.0;
/// Specific gas constant of IF97, J/(kg K) (IAPWS R7-97(2012), Eq. (1)).
pub const R: f64 = 461.526;

/// Lowest temperature of the formulation, K.
const T_MIN: f64 = 273.15;
/// Upper temperature of regions 1 to 3, K.
const T_MAX: f64 = 1073.15;
/// Upper temperature of region 5, K.
const T_MAX5: f64 = 2273.15;
/// Upper pressure of regions 1 to 3, Pa.
const P_MAX: f64 = 100e6;
/// Upper pressure of region 5, Pa.
const P_MAX5: f64 = 50e6;
/// Temperature of the region 1-3 boundary, K.
const T13: f64 = 623.15;
/// p_sat(273.15 K) by Eq. (30), Pa (checked in the tests).
const P_SAT_MIN: f64 = 611.212_677_444_344_9;
/// p_sat(623.15 K) by Eq. (30), Pa (checked in the tests).
const P_S13: f64 = 16_529_164.252_604_48;

const MODEL: &str = "water/steam (IAPWS-IF97)";
const RANGE: &str = "273.15 K to 1073.15 K up to 100 MPa; to 2273.15 K up to 50 MPa";
const SAT_T_RANGE: &str = "saturation from 273.15 K to the critical temperature 647.096 K";
const SAT_P_RANGE: &str = "saturation from 611.213 Pa to the critical pressure 22.064 MPa";

/// The regions of IAPWS-IF97.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Region {
    /// Compressed liquid up to 623.15 K.
    R1,
    /// Superheated and supercritical steam up to 1073.15 K.
    R2,
    /// Near-critical fluid between regions 1 and 2.
    R3,
    /// The saturation curve (two-phase states).
    R4,
    /// High-temperature steam, 1073.15 K to 2273.15 K up to 50 MPa.
    R5,
}

// ------------------------------------------------------------ messages

use super::text::{fmt_num as num, fmt_p, fmt_t};

fn fmt_h(h: f64) -> String {
    format!("{} kJ/kg", num(h / 1e3))
}

fn fmt_s(s: f64) -> String {
    format!("{} kJ/(kg K)", num(s / 1e3))
}

fn out_of_range(what: String, range: &str) -> ThermoError {
    ThermoError::OutOfRange {
        what,
        model: MODEL.into(),
        range: range.into(),
    }
}

fn finite(name: &str, x: f64) -> Result<()> {
    if x.is_finite() {
        Ok(())
    } else {
        Err(ThermoError::InvalidArgument(format!(
            "{name} must be a finite number for {MODEL}, got {x}"
        )))
    }
}

fn check_p(p: f64) -> Result<()> {
    finite("p", p)?;
    if p <= 0.0 {
        return Err(ThermoError::InvalidArgument(format!(
            "the pressure of {MODEL} must be positive (absolute), got p = {}",
            fmt_p(p)
        )));
    }
    if p > P_MAX {
        return Err(out_of_range(format!("p = {}", fmt_p(p)), RANGE));
    }
    Ok(())
}

fn check_x(x: f64) -> Result<()> {
    finite("x", x)?;
    if !(0.0..=1.0).contains(&x) {
        return Err(ThermoError::InvalidArgument(format!(
            "the quality x must be between 0 and 1, got x = {}",
            num(x)
        )));
    }
    Ok(())
}

// ------------------------------------------------------------ public API

/// Water and steam as a registered real fluid.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Water;

impl RealFluid for Water {
    fn name(&self) -> &'static str {
        "water"
    }
    fn describe(&self) -> &'static str {
        MODEL
    }
    fn citation(&self) -> &'static str {
        "IAPWS R7-97(2012), Revised Release on the IAPWS Industrial Formulation 1997 for the \
         Thermodynamic Properties of Water and Steam, with the backward equations of IAPWS \
         SR2-01(2014), SR3-03(2014) and SR4-04(2014) as starting values"
    }
    fn range(&self) -> &'static str {
        RANGE
    }
    fn reference_state(&self) -> &'static str {
        "u = 0 and s = 0 for saturated liquid at the triple point (273.16 K)"
    }
    fn molar_mass(&self) -> f64 {
        M
    }
    fn critical(&self) -> Critical {
        Critical {
            t: T_CRIT,
            p: P_CRIT,
            rho: RHO_CRIT,
        }
    }
    fn state(&self, spec: Spec) -> Result<State> {
        state(spec)
    }
    fn saturation_t(&self, t: f64) -> Result<Saturation> {
        let p = p_sat(t)?;
        saturation(t, p)
    }
    fn saturation_p(&self, p: f64) -> Result<Saturation> {
        let t = t_sat(p)?;
        saturation(t, p)
    }
}

/// Molar mass of water, kg/mol: 18.015268 g/mol (IAPWS R6-95(2018); value
/// from memory). IF97's R = 461.526 J/(kg K) corresponds to an older
/// 18.015257 g/mol with R_u = 8.31451 J/(mol K); the difference (6e-7) is
/// far below any property tolerance.
pub const M: f64 = 0.018_015_268;

/// The saturated pair at (t, p) on the saturation line.
fn saturation(t: f64, p: f64) -> Result<Saturation> {
    let (l, v) = sat::sat_props(t, p)?;
    let on_line = |pr: &Props, x: f64| State {
        x: Some(x),
        ..single(pr, p)
    };
    Ok(Saturation {
        t,
        p,
        liquid: on_line(&l, 0.0),
        vapour: on_line(&v, 1.0),
    })
}

/// Fix a state of water/steam from a property pair.
pub fn state(spec: Spec) -> Result<State> {
    match spec {
        Spec::TP { t, p } => state_tp(t, p),
        Spec::PH { p, h } => state_ph(p, h),
        Spec::PS { p, s } => state_ps(p, s),
        Spec::PX { p, x } => state_px(p, x),
        Spec::TX { t, x } => state_tx(t, x),
        Spec::HS { h, s } => state_hs(h, s),
        Spec::TS { t, s } => state_ts(t, s),
        Spec::TV { t, v } => state_tv(t, v),
        Spec::TH { .. } => Err(ThermoError::Unsupported(format!(
            "{MODEL} takes (T, p), (p, h), (p, s), (p, x), (T, x), (h, s), (T, s) or (T, v); \
             (T, h) does not fix a state of water in general"
        ))),
    }
}

/// The region of a (T, p) pair. Never [`Region::R4`]: a (T, p) pair on the
/// saturation curve is taken as saturated liquid (region 1 or 3).
pub fn region_tp(t: f64, p: f64) -> Result<Region> {
    finite("T", t)?;
    check_p(p)?;
    if !(T_MIN..=T_MAX5).contains(&t) || (t > T_MAX && p > P_MAX5) {
        return Err(out_of_range(
            format!("T = {} at p = {}", fmt_t(t), fmt_p(p)),
            RANGE,
        ));
    }
    Ok(if t > T_MAX {
        Region::R5
    } else if t <= T13 {
        if p >= forward::psat(t) {
            Region::R1
        } else {
            Region::R2
        }
    } else if p > forward::b23_p(t) {
        Region::R3
    } else {
        Region::R2
    })
}

/// Relative distance from p_sat(T) within which a (T, p) pair counts as
/// on the saturation line (round-off of a pressure copied from p_sat).
const SAT_LINE_REL: f64 = 1e-9;

/// State from temperature (K) and pressure (Pa). A pair on the saturation
/// line (|p − p_sat(T)| <= 1e-9 p_sat, T below the critical temperature)
/// does not fix the state: an [`ThermoError::InvalidArgument`] asking for
/// the quality.
pub fn state_tp(t: f64, p: f64) -> Result<State> {
    if t.is_finite() && (T_MIN..T_CRIT).contains(&t) && p.is_finite() {
        let ps = forward::psat(t);
        if (p - ps).abs() <= SAT_LINE_REL * ps {
            return Err(ThermoError::InvalidArgument(format!(
                "T = {} and p = {} lie on the saturation line of {MODEL} (p_sat = {}), where \
                 they do not fix the state: give the quality instead, e.g. (T, x: 0) for \
                 saturated liquid or (T, x: 1) for saturated vapour",
                fmt_t(t),
                fmt_p(p),
                fmt_p(ps)
            )));
        }
    }
    tp_unchecked(t, p)
}

/// (T, p) without the saturation-line check (on the line: liquid).
fn tp_unchecked(t: f64, p: f64) -> Result<State> {
    let pr = match region_tp(t, p)? {
        Region::R1 => region1(t, p),
        Region::R2 => region2(t, p),
        Region::R3 => r3_tp(t, p)?.props(),
        Region::R4 => {
            return Err(ThermoError::NoConvergence(
                "internal: a (T, p) pair cannot fix a two-phase state".into(),
            ));
        }
        Region::R5 => region5(t, p),
    };
    Ok(single(&pr, p))
}

/// State from pressure (Pa) and specific enthalpy (J/kg).
pub fn state_ph(p: f64, h: f64) -> Result<State> {
    check_p(p)?;
    finite("h", h)?;
    solve_p(p, h, Which::H)
}

/// State from pressure (Pa) and specific entropy (J/(kg K)).
pub fn state_ps(p: f64, s: f64) -> Result<State> {
    check_p(p)?;
    finite("s", s)?;
    solve_p(p, s, Which::S)
}

/// Two-phase (or saturated) state from pressure (Pa) and quality.
pub fn state_px(p: f64, x: f64) -> Result<State> {
    check_x(x)?;
    let t = t_sat(p)?;
    let (l, v) = sat::sat_props(t, p)?;
    Ok(two_phase(t, p, &l, &v, x))
}

/// Two-phase (or saturated) state from temperature (K) and quality.
pub fn state_tx(t: f64, x: f64) -> Result<State> {
    check_x(x)?;
    let p = p_sat(t)?;
    let (l, v) = sat::sat_props(t, p)?;
    Ok(two_phase(t, p, &l, &v, x))
}

/// Saturation pressure (Pa) at temperature `t` (K), region 4, Eq. (30).
pub fn p_sat(t: f64) -> Result<f64> {
    finite("T", t)?;
    if !(T_MIN..=T_CRIT).contains(&t) {
        return Err(out_of_range(format!("T = {}", fmt_t(t)), SAT_T_RANGE));
    }
    Ok(forward::psat(t).min(P_CRIT))
}

/// Saturation temperature (K) at pressure `p` (Pa), region 4, Eq. (31).
pub fn t_sat(p: f64) -> Result<f64> {
    finite("p", p)?;
    if p <= 0.0 {
        return Err(ThermoError::InvalidArgument(format!(
            "the pressure of {MODEL} must be positive (absolute), got p = {}",
            fmt_p(p)
        )));
    }
    if !(P_SAT_MIN..=P_CRIT).contains(&p) {
        return Err(out_of_range(format!("p = {}", fmt_p(p)), SAT_P_RANGE));
    }
    Ok(forward::tsat(p).clamp(T_MIN, T_CRIT))
}

// ------------------------------------------------------------ states

fn single(pr: &Props, p: f64) -> State {
    State {
        t: pr.t,
        p,
        h: pr.h,
        u: pr.h - p * pr.v,
        s: pr.s,
        v: pr.v,
        cp: Some(pr.cp),
        cv: Some(pr.cv),
        x: None,
        w: Some(pr.w),
    }
}

/// A state on or inside the saturation dome. At x = 0 and x = 1 (a
/// saturated phase) cp, cv and w are the single-phase values of that phase;
/// inside the dome they are undefined.
fn two_phase(t: f64, p: f64, l: &Props, v: &Props, x: f64) -> State {
    // (1 - x) a + x b is exact at x = 0 and x = 1.
    let mix = |a: f64, b: f64| (1.0 - x) * a + x * b;
    let h = mix(l.h, v.h);
    let vol = mix(l.v, v.v);
    let phase = if x == 0.0 {
        Some(l)
    } else if x == 1.0 {
        Some(v)
    } else {
        None
    };
    State {
        t,
        p,
        h,
        u: h - p * vol,
        s: mix(l.s, v.s),
        v: vol,
        cp: phase.map(|pr| pr.cp),
        cv: phase.map(|pr| pr.cv),
        x: Some(x),
        w: phase.map(|pr| pr.w),
    }
}

/// The quality of `y` between the saturated values `yl` and `yv`, snapped
/// to exactly 0 or 1 within the tolerance `tol` of either end; `None`
/// outside the dome.
fn quality(y: f64, yl: f64, yv: f64, tol: f64) -> Option<f64> {
    if (y - yl).abs() <= tol {
        Some(0.0)
    } else if (y - yv).abs() <= tol {
        Some(1.0)
    } else if y > yl && y < yv {
        Some((y - yl) / (yv - yl))
    } else {
        None
    }
}

// ------------------------------------------------------------ region 3 (T, p)

/// Solve `f(x) = 0` for `f` increasing on `[lo, hi]` with `f(lo) < 0 < f(hi)`:
/// Newton's method, falling back to bisection whenever a step would leave
/// the bracket. `f` returns (value, derivative).
fn solve_bracketed(
    mut f: impl FnMut(f64) -> (f64, f64),
    mut lo: f64,
    mut hi: f64,
    x0: f64,
    ftol: f64,
) -> Option<f64> {
    let mut x = if x0 > lo && x0 < hi {
        x0
    } else {
        0.5 * (lo + hi)
    };
    for _ in 0..300 {
        let (fx, dfx) = f(x);
        if !fx.is_finite() {
            return None;
        }
        if fx.abs() <= ftol {
            return Some(x);
        }
        if fx < 0.0 {
            lo = x;
        } else {
            hi = x;
        }
        let newton = x - fx / dfx;
        let next = if dfx > 0.0 && newton > lo && newton < hi {
            newton
        } else {
            0.5 * (lo + hi)
        };
        if (next - x).abs() <= 1e-15 * x.abs() || hi - lo <= 1e-15 * hi.abs() {
            return Some(next);
        }
        x = next;
    }
    None
}

/// Plain Newton iteration from `x0` on a branch where `f` is increasing;
/// used for the small metastable stretch between the region-4 saturation
/// pressure and the region-3 equilibrium pressure.
fn newton_from(mut f: impl FnMut(f64) -> (f64, f64), x0: f64, ftol: f64) -> Option<f64> {
    let mut x = x0;
    for _ in 0..50 {
        let (fx, dfx) = f(x);
        if !(fx.is_finite() && dfx > 0.0) {
            return None;
        }
        if fx.abs() <= ftol {
            return Some(x);
        }
        let step = fx / dfx;
        x -= step;
        if step.abs() <= 1e-15 * x.abs() {
            return Some(x);
        }
    }
    None
}

/// Region-3 point at (T, p): density from the Helmholtz equation.
fn r3_tp(t: f64, p: f64) -> Result<R3Point> {
    let f = |rho: f64| {
        let pt = R3Point::new(rho, t);
        (pt.p() - p, pt.dp_drho())
    };
    let ftol = 1e-13 * p;
    let fail = || {
        ThermoError::NoConvergence(format!(
            "the density of {MODEL} at T = {} and p = {} did not converge",
            fmt_t(t),
            fmt_p(p)
        ))
    };
    let root = if t < T_CRIT {
        // Two branches of the isotherm: pick liquid or vapour by region 4,
        // bracket between the coexisting density and a far end.
        let c = sat::coexist3(t)?;
        if p >= forward::psat(t) {
            let lo = c.liq.rho;
            if f(lo).0 >= 0.0 {
                newton_from(f, lo, ftol)
            } else {
                let hi = far_end(&f, 800.0, 1.1, |v| v > 0.0).ok_or_else(fail)?;
                solve_bracketed(f, lo, hi, lo, ftol)
            }
        } else {
            let hi = c.vap.rho;
            if f(hi).0 <= 0.0 {
                newton_from(f, hi, ftol)
            } else {
                let lo = far_end(&f, 50.0, 0.5, |v| v < 0.0).ok_or_else(fail)?;
                solve_bracketed(f, lo, hi, hi, ftol)
            }
        }
    } else {
        let lo = far_end(&f, 100.0, 0.5, |v| v < 0.0).ok_or_else(fail)?;
        let hi = far_end(&f, 700.0, 1.1, |v| v > 0.0).ok_or_else(fail)?;
        // Start from the secant through the bracket ends.
        let (flo, fhi) = (f(lo).0, f(hi).0);
        let x0 = lo - flo * (hi - lo) / (fhi - flo);
        solve_bracketed(f, lo, hi, x0, ftol)
    };
    root.map(|rho| R3Point::new(rho, t)).ok_or_else(fail)
}

/// From `x0`, multiply by `factor` until `ok(f(x))`; at most 20 steps.
fn far_end(
    f: &impl Fn(f64) -> (f64, f64),
    x0: f64,
    factor: f64,
    ok: impl Fn(f64) -> bool,
) -> Option<f64> {
    let mut x = x0;
    for _ in 0..20 {
        if ok(f(x).0) {
            return Some(x);
        }
        x *= factor;
    }
    None
}

// ------------------------------------------------------------ (p, h), (p, s)

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Which {
    H,
    S,
}

impl Which {
    fn of(self, pr: &Props) -> f64 {
        match self {
            Which::H => pr.h,
            Which::S => pr.s,
        }
    }
    fn of_t(self, pr: &Thermal) -> f64 {
        match self {
            Which::H => pr.h,
            Which::S => pr.s,
        }
    }
    /// First and second derivative of h (s) with respect to T at
    /// constant p: dh/dT = cp, ds/dT = cp/T.
    fn d_dt(self, pr: &Thermal) -> (f64, f64) {
        match self {
            Which::H => (pr.cp, pr.cp_t),
            Which::S => (pr.cp / pr.t, (pr.cp_t - pr.cp / pr.t) / pr.t),
        }
    }
    fn name(self) -> &'static str {
        match self {
            Which::H => "h",
            Which::S => "s",
        }
    }
    fn fmt(self, x: f64) -> String {
        match self {
            Which::H => fmt_h(x),
            Which::S => fmt_s(x),
        }
    }
    /// Convergence tolerance of the refinement: 1e-12 relative, with a floor
    /// for values near zero (liquid at 0 degC): 1e-12 of 1 kJ/kg resp.
    /// 1 J/(kg K).
    fn tol(self, target: f64) -> f64 {
        let floor = match self {
            Which::H => 1e3,
            Which::S => 1.0,
        };
        1e-12 * target.abs().max(floor)
    }
}

/// Which single-phase Gibbs region a (p, h|s) solve uses.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Gibbs {
    R1,
    R2,
    R5,
}

fn gibbs(reg: Gibbs, t: f64, p: f64) -> Props {
    match reg {
        Gibbs::R1 => region1(t, p),
        Gibbs::R2 => region2(t, p),
        Gibbs::R5 => region5(t, p),
    }
}

/// h, s and their T-derivatives only (cheaper than all properties).
fn gibbs_thermal(reg: Gibbs, t: f64, p: f64) -> Thermal {
    match reg {
        Gibbs::R1 => forward::region1_thermal(t, p),
        Gibbs::R2 => forward::region2_thermal(t, p),
        Gibbs::R5 => region5(t, p).thermal(),
    }
}

/// Bounds used to pick the first region to try for a (p, h|s) pair; the
/// choice is then confirmed by the bracketed solve (tested in
/// `tests::dispatch_bounds`).
struct Bounds {
    /// Above the saturated-liquid value at every p <= p_sat(623.15 K), and
    /// above the region-1 value at 623.15 K for every p up to 100 MPa.
    liq_max: f64,
    /// Below the saturated-vapour value at every p <= p_sat(623.15 K).
    vap_min: f64,
    /// Below the region-2 value on the B23 boundary for every p up to
    /// 100 MPa.
    b23_min: f64,
    /// Above the region-2 value at 1073.15 K for every p (none for s,
    /// which grows without bound as p goes to zero).
    r2_top: f64,
}

impl Which {
    fn bounds(self) -> Bounds {
        match self {
            Which::H => Bounds {
                liq_max: 1.671e6,
                vap_min: 2.500e6,
                b23_min: 2.563e6,
                r2_top: 4.161e6,
            },
            Which::S => Bounds {
                liq_max: 3.779e3,
                vap_min: 5.210e3,
                b23_min: 5.048e3,
                r2_top: f64::INFINITY,
            },
        }
    }
    fn backward(self, reg: Gibbs, p: f64, y: f64) -> f64 {
        match (self, reg) {
            (Which::H, Gibbs::R1) => backward::t1_ph(p, y),
            (Which::S, Gibbs::R1) => backward::t1_ps(p, y),
            (Which::H, Gibbs::R2) => backward::t2_ph(p, y),
            (Which::S, Gibbs::R2) => backward::t2_ps(p, y),
            // Region 5: start at its lower end (where the solve evaluates
            // anyway); Halley steps converge in a few iterations on its
            // smooth, nearly ideal-gas isobars.
            (_, Gibbs::R5) => T_MAX,
        }
    }
}

/// Outcome of a bracketed 1-D solve in T on a Gibbs region.
enum Found {
    /// The state with h (s) equal to the target.
    At(Props),
    /// The target is below the value at the lower end.
    Below,
    /// The target is above the value at the upper end.
    Above,
}

/// The out-of-range error for a (p, h|s) pair.
fn y_out_of_range(p: f64, y: f64, which: Which) -> ThermoError {
    let low = if p >= P_SAT_MIN {
        region1(T_MIN, p)
    } else {
        region2(T_MIN, p)
    };
    let (top, t_top) = if p <= P_MAX5 {
        (region5(T_MAX5, p), "2273.15 K")
    } else {
        (region2(T_MAX, p), "1073.15 K")
    };
    out_of_range(
        format!("{} = {} at p = {}", which.name(), which.fmt(y), fmt_p(p)),
        &format!(
            "{} from {} (273.15 K) to {} ({t_top}) at this pressure",
            which.name(),
            which.fmt(which.of(&low)),
            which.fmt(which.of(&top)),
        ),
    )
}

/// Dispatch a (p, h) or (p, s) pair to its region and solve.
fn solve_p(p: f64, y: f64, which: Which) -> Result<State> {
    let b = which.bounds();
    if y > b.r2_top {
        // Above region 2 at every pressure: region 5 (or out of range).
        return vapour5(p, y, which);
    }
    if p < P_SAT_MIN {
        // No liquid at this pressure: region 2, then region 5.
        return vapour(p, y, which, T_MIN);
    }
    if p <= P_S13 {
        let ts = forward::tsat(p);
        let tol = which.tol(y);
        // A single-phase solution at the saturation temperature is the
        // saturated phase itself: keep its quality (x = 0 or 1).
        let at = |pr: Props| -> State {
            if (pr.t - ts).abs() <= 1e-9 * ts {
                let (l, v) = (region1(ts, p), region2(ts, p));
                if let Some(x) = quality(y, which.of(&l), which.of(&v), tol) {
                    return two_phase(ts, p, &l, &v, x);
                }
            }
            single(&pr, p)
        };
        let wet = || {
            let (l, v) = (region1(ts, p), region2(ts, p));
            quality(y, which.of(&l), which.of(&v), tol).map(|x| two_phase(ts, p, &l, &v, x))
        };
        if y >= b.vap_min {
            // Superheated vapour, or wet.
            return match solve_gibbs(Gibbs::R2, p, y, which, ts, T_MAX)? {
                Found::At(pr) => Ok(at(pr)),
                Found::Below => match wet() {
                    Some(st) => Ok(st),
                    None => liquid(p, y, which, ts),
                },
                Found::Above => vapour5(p, y, which),
            };
        }
        if y <= b.liq_max {
            // Compressed liquid, or wet.
            return match solve_gibbs(Gibbs::R1, p, y, which, T_MIN, ts)? {
                Found::At(pr) => Ok(at(pr)),
                Found::Below => Err(y_out_of_range(p, y, which)),
                Found::Above => match wet() {
                    Some(st) => Ok(st),
                    None => vapour(p, y, which, ts),
                },
            };
        }
        // Between the largest saturated-liquid and the smallest
        // saturated-vapour value: wet at every pressure up to 16.5 MPa.
        let (l, v) = (region1(ts, p), region2(ts, p));
        let (yl, yv) = (which.of(&l), which.of(&v));
        let x = quality(y, yl, yv, tol).unwrap_or(((y - yl) / (yv - yl)).clamp(0.0, 1.0));
        return Ok(two_phase(ts, p, &l, &v, x));
    }
    // p > p_sat(623.15 K): region 1 up to 623.15 K, region 3 (with the top
    // of the dome) up to the B23 boundary, then regions 2 and 5.
    if y <= b.liq_max {
        match solve_gibbs(Gibbs::R1, p, y, which, T_MIN, T13)? {
            Found::At(pr) => return Ok(single(&pr, p)),
            Found::Below => return Err(y_out_of_range(p, y, which)),
            Found::Above => {}
        }
    } else if y >= b.b23_min {
        match solve_gibbs(Gibbs::R2, p, y, which, forward::b23_t(p), T_MAX)? {
            Found::At(pr) => return Ok(single(&pr, p)),
            Found::Below => {}
            Found::Above => return vapour5(p, y, which),
        }
    }
    region3(p, y, which)
}

/// Region 1 below `t_hi`.
fn liquid(p: f64, y: f64, which: Which, t_hi: f64) -> Result<State> {
    match solve_gibbs(Gibbs::R1, p, y, which, T_MIN, t_hi)? {
        Found::At(pr) => Ok(single(&pr, p)),
        _ => Err(y_out_of_range(p, y, which)),
    }
}

/// Region 2 from `t_lo` up, then region 5.
fn vapour(p: f64, y: f64, which: Which, t_lo: f64) -> Result<State> {
    match solve_gibbs(Gibbs::R2, p, y, which, t_lo, T_MAX)? {
        Found::At(pr) => Ok(single(&pr, p)),
        Found::Below => Err(y_out_of_range(p, y, which)),
        Found::Above => vapour5(p, y, which),
    }
}

/// Region 5 (up to 50 MPa), for values above region 2 at 1073.15 K.
fn vapour5(p: f64, y: f64, which: Which) -> Result<State> {
    if p > P_MAX5 {
        return Err(y_out_of_range(p, y, which));
    }
    match solve_gibbs(Gibbs::R5, p, y, which, T_MAX, T_MAX5)? {
        Found::At(pr) => Ok(single(&pr, p)),
        Found::Above => Err(y_out_of_range(p, y, which)),
        // In the small gap between region 2 and region 5 at 1073.15 K
        // (the two equations differ there by up to about 0.1 kJ/kg),
        // extend region 5 by a fraction of a kelvin.
        Found::Below => match solve_gibbs(Gibbs::R5, p, y, which, T_MAX - 1.0, T_MAX)? {
            Found::At(pr) => Ok(single(&pr, p)),
            _ => Err(y_out_of_range(p, y, which)),
        },
    }
}

/// Relative width of the sliver at the edge of the region-3 dome (see
/// [`region3`]).
const SLIVER: f64 = 2e-4;

/// Region 3, possibly two-phase below the critical pressure.
fn region3(p: f64, y: f64, which: Which) -> Result<State> {
    let mut branch = Branch::Dense;
    let mut edge: Option<(Props, Props, f64, f64, f64)> = None;
    if p < P_CRIT {
        let ts = forward::tsat(p);
        let c = sat::coexist3(ts)?;
        let (l, v) = (c.liq.props(), c.vap.props());
        let (yl, yv) = (which.of(&l), which.of(&v));
        if let Some(x) = quality(y, yl, yv, which.tol(y)) {
            return Ok(two_phase(ts, p, &l, &v, x));
        }
        edge = Some((l, v, ts, yl, yv));
        branch = if y < yl {
            Branch::Liquid(ts)
        } else {
            Branch::Vapour(ts)
        };
    }
    match solve_r3(p, y, which, branch, forward::b23_t(p)) {
        Ok(pt) => Ok(single(&pt.props(), p)),
        // Next to the edge of the dome, the region-4 saturation line and the
        // region-3 phase equilibrium (consistent only to IF97's stated
        // limits) leave a sliver where neither the wet state nor the
        // single-phase branch at T >= T_sat (liquid: <=) reproduces y. It is
        // at most 2e-4 of y wide (0.25 kJ/kg above h'' at 22 MPa, measured)
        // and is taken as the saturated phase itself, whose h (s) then
        // differs from the given one by at most that.
        Err(e) => match (edge, branch) {
            (Some((l, v, ts, yl, _)), Branch::Liquid(_)) if (y - yl).abs() <= SLIVER * yl.abs() => {
                Ok(two_phase(ts, p, &l, &v, 0.0))
            }
            (Some((l, v, ts, _, yv)), Branch::Vapour(_)) if (y - yv).abs() <= SLIVER * yv.abs() => {
                Ok(two_phase(ts, p, &l, &v, 1.0))
            }
            _ => Err(e),
        },
    }
}

/// 1-D refinement in T on a Gibbs region within [lo, hi]: Halley steps
/// (Newton with the second derivative, from d(cp)/dT) from the backward
/// value, kept inside the bracket by bisection. The bracket ends are only
/// evaluated when a step needs them; if the target lies beyond an end, the
/// state at that end is returned as `Below` or `Above`.
///
/// Iterations far from the solution evaluate only h, s, cp and d(cp)/dT;
/// once a step is small (within 0.1 K; from the backward value that is
/// usually the first), the next point is evaluated in full and, when it
/// meets the tolerance, returned as it is: the result is always the forward
/// equation at the returned temperature.
fn solve_gibbs(reg: Gibbs, p: f64, y: f64, which: Which, lo0: f64, hi0: f64) -> Result<Found> {
    let tol = which.tol(y);
    let (mut lo, mut hi) = (lo0, hi0);
    let (mut lo_known, mut hi_known) = (false, false);
    let t0 = which.backward(reg, p, y);
    let mut t = if t0 > lo && t0 < hi {
        t0
    } else {
        t0.clamp(lo, hi)
    };
    if !t.is_finite() {
        t = 0.5 * (lo + hi);
    }
    let mut full = false;
    for _ in 0..100 {
        let (th, pr) = if full {
            let pr = gibbs(reg, t, p);
            (pr.thermal(), Some(pr))
        } else {
            (gibbs_thermal(reg, t, p), None)
        };
        let r = which.of_t(&th) - y;
        if r.abs() <= tol {
            return Ok(Found::At(pr.unwrap_or_else(|| gibbs(reg, t, p))));
        }
        if r < 0.0 {
            if t >= hi0 {
                return Ok(Found::Above);
            }
            lo = t;
            lo_known = true;
        } else {
            if t <= lo0 {
                return Ok(Found::Below);
            }
            hi = t;
            hi_known = true;
        }
        let (d1, d2) = which.d_dt(&th);
        let newton = -r / d1;
        let den = d1 + 0.5 * d2 * newton;
        let step = if den > 0.0 && (den / d1 - 1.0).abs() < 0.5 {
            -r / den
        } else {
            newton
        };
        let cand = t + step;
        let next = if d1 > 0.0 && cand > lo && cand < hi {
            cand
        } else if d1 > 0.0 && cand >= hi && !hi_known {
            hi
        } else if d1 > 0.0 && cand <= lo && !lo_known {
            lo
        } else {
            0.5 * (lo + hi)
        };
        if (next - t).abs() <= 1e-14 * t {
            return Ok(Found::At(gibbs(reg, next, p)));
        }
        full = (next - t).abs() <= 0.1;
        t = next;
    }
    Err(ThermoError::NoConvergence(format!(
        "the temperature of {MODEL} at p = {} and {} = {} did not converge",
        fmt_p(p),
        which.name(),
        which.fmt(y)
    )))
}

/// Which part of region 3 a (p, h|s) state is in.
#[derive(Clone, Copy, Debug, PartialEq)]
enum Branch {
    /// p >= p_c: no phase split.
    Dense,
    /// p < p_c, liquid side of the dome; the saturation temperature.
    Liquid(f64),
    /// p < p_c, vapour side of the dome; the saturation temperature.
    Vapour(f64),
}

/// Region 3 from (p, h|s): 2-D Newton on (rho, T) from the SR3-03 backward
/// values; if that fails or lands on the wrong branch, a bracketed 1-D
/// iteration on T with the (T, p) density solve inside.
fn solve_r3(p: f64, y: f64, which: Which, branch: Branch, t23: f64) -> Result<R3Point> {
    if let Some(pt) = newton_r3(p, y, which) {
        let ok = match branch {
            Branch::Dense => true,
            Branch::Liquid(ts) => pt.t <= ts + 1e-9 && pt.rho > RHO_CRIT,
            Branch::Vapour(ts) => pt.t >= ts - 1e-9 && pt.rho < RHO_CRIT,
        };
        if ok {
            return Ok(pt);
        }
    }
    // Fallback: y(T) at constant p is increasing; bracket T. The (T, p)
    // density solve picks its branch by the region-4 saturation pressure,
    // so the bracket end at T_sat is moved by a few ulps to the side of the
    // branch wanted (at T_sat itself it would take the liquid).
    let (lo, hi) = match branch {
        Branch::Dense => (T13 - 1.0, t23 + 1.0),
        Branch::Liquid(ts) => {
            let mut hi = ts;
            for _ in 0..64 {
                if forward::psat(hi) <= p {
                    break;
                }
                hi = hi.next_down();
            }
            (T13 - 1.0, hi)
        }
        Branch::Vapour(ts) => {
            let mut lo = ts;
            for _ in 0..64 {
                if forward::psat(lo) > p {
                    break;
                }
                lo = lo.next_up();
            }
            (lo, t23 + 1.0)
        }
    };
    let pt = nested_r3(p, y, which, lo, hi)?;
    let on_side = match branch {
        Branch::Dense => true,
        Branch::Liquid(_) => pt.rho > RHO_CRIT,
        Branch::Vapour(_) => pt.rho < RHO_CRIT,
    };
    if on_side {
        Ok(pt)
    } else {
        Err(ThermoError::NoConvergence(format!(
            "the state of {MODEL} at p = {} and {} = {} did not converge on its branch",
            fmt_p(p),
            which.name(),
            which.fmt(y)
        )))
    }
}

fn r3_y(pt: &R3Point, which: Which) -> (f64, f64, f64) {
    match which {
        Which::H => (pt.h(), pt.dh_drho(), pt.dh_dt()),
        Which::S => (pt.s(), pt.ds_drho(), pt.ds_dt()),
    }
}

fn newton_r3(p: f64, y: f64, which: Which) -> Option<R3Point> {
    let (t0, v0) = match which {
        Which::H => backward::tv3_ph(p, y),
        Which::S => backward::tv3_ps(p, y),
    };
    if !(t0.is_finite() && v0.is_finite() && v0 > 0.0) {
        return None;
    }
    let (mut rho, mut t) = (1.0 / v0, t0);
    let ytol = which.tol(y);
    let ptol = 1e-12 * p;
    for _ in 0..60 {
        let pt = R3Point::new(rho, t);
        let f1 = pt.p() - p;
        let (yy, y_rho, y_t) = r3_y(&pt, which);
        let f2 = yy - y;
        if f1.abs() <= ptol && f2.abs() <= ytol {
            return Some(pt);
        }
        let (p_rho, p_t) = (pt.dp_drho(), pt.dp_dt());
        let det = p_rho * y_t - p_t * y_rho;
        if !(det.is_finite() && det != 0.0) {
            return None;
        }
        let mut drho = -(f1 * y_t - p_t * f2) / det;
        let mut dt = -(p_rho * f2 - y_rho * f1) / det;
        // Damp long steps (the backward values are close).
        let k = (drho.abs() / (0.2 * rho)).max(dt.abs() / 20.0);
        if k > 1.0 {
            drho /= k;
            dt /= k;
        }
        rho += drho;
        t += dt;
        if !(rho > 0.0 && t > 0.0) {
            return None;
        }
        if drho.abs() <= 1e-15 * rho && dt.abs() <= 1e-15 * t {
            return Some(R3Point::new(rho, t));
        }
    }
    None
}

fn nested_r3(p: f64, y: f64, which: Which, mut lo: f64, mut hi: f64) -> Result<R3Point> {
    let fail = || {
        ThermoError::NoConvergence(format!(
            "the state of {MODEL} at p = {} and {} = {} did not converge",
            fmt_p(p),
            which.name(),
            which.fmt(y)
        ))
    };
    let eval = |t: f64| -> Result<(R3Point, f64)> {
        let pt = r3_tp(t, p)?;
        let v = r3_y(&pt, which).0 - y;
        Ok((pt, v))
    };
    let (_, mut flo) = eval(lo)?;
    let (_, mut fhi) = eval(hi)?;
    if flo > 0.0 || fhi < 0.0 {
        return Err(fail());
    }
    // Illinois false position.
    let mut side = 0i32;
    for _ in 0..200 {
        let t = (lo * fhi - hi * flo) / (fhi - flo);
        let t = if t > lo && t < hi { t } else { 0.5 * (lo + hi) };
        let (pt, ft) = eval(t)?;
        if ft.abs() <= which.tol(y) || hi - lo <= 1e-13 * t {
            return Ok(pt);
        }
        if ft < 0.0 {
            lo = t;
            flo = ft;
            if side == -1 {
                fhi *= 0.5;
            }
            side = -1;
        } else {
            hi = t;
            fhi = ft;
            if side == 1 {
                flo *= 0.5;
            }
            side = 1;
        }
    }
    Err(fail())
}
