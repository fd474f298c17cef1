//! The property pairs (h, s), (T, s) and (T, v) of water and steam.
//!
//! Each is solved for the pressure on the forward equations (the same
//! equations as every other pair), so the state returned reproduces the
//! given pair to about 1e-12 relative and is consistent with (T, p), (p, h)
//! and (p, s):
//!
//! - (h, s): at constant h, ds/dp = −v/T < 0 in every phase, so s(p; h) is
//!   strictly decreasing. The IAPWS backward equations of SR2-01(2014) and
//!   SR4-04(2014) (module `backward`: the region from the boundary
//!   equations in h and s, then p(h,s) in regions 1 to 3 or T_sat(h,s) for
//!   wet states; T_sat(h,s) extrapolated below its range s >= s''(623.15 K)
//!   as a rough start) give a starting pressure, refined by a safeguarded
//!   Newton iteration in ln p on the (p, h) solve with the exact slope
//!   −p v / T. Region 5 starts from the region-2 equations. Where a (p, h)
//!   state on the way is outside the formulation or the refinement does not
//!   converge, the pressure is bracketed on a coarse logarithmic scan of
//!   (p, h) states (the edges of the range refined by bisection) and found
//!   by Illinois false position in ln p. Either way two-phase states follow
//!   from the (p, h) solve and the same tolerance on s ends the search.
//! - (T, s) and (T, v): below the critical temperature the saturated
//!   values at T decide the phase (two-phase with the quality from the
//!   lever rule; liquid above p_sat; vapour below); along an isotherm v and
//!   (outside the density maximum of cold liquid) s decrease with p, and p
//!   is found by Illinois false position in ln p on the (T, p) equations.
//!   Below the temperature of maximum density (about 277 K) a compressed
//!   liquid's s rises with p and may equal s of a wet state at the same T:
//!   there (T, s) is not unique and the wet state is returned.
//!
//! Pressures are searched between [`P_LO`] and the upper pressure of the
//! formulation at that temperature.

use super::backward;
use super::forward::{self, Props};
use super::{
    MODEL, P_CRIT, P_MAX, P_MAX5, P_SAT_MIN, T_CRIT, T_MAX, T_MAX5, T_MIN, fmt_h, fmt_p, fmt_s,
    fmt_t, num, out_of_range, sat, state_ph, two_phase,
};
use crate::thermo::{Result, State, ThermoError};

/// Lowest pressure searched by the (h, s), (T, s) and (T, v) solves, Pa.
pub const P_LO: f64 = 1.0;

/// Illinois false position for a sign change of `f` on [a, b] (values fa,
/// fb of opposite sign); stops when |f| <= tol or the bracket is below
/// 1e-15 relative. Returns x.
fn illinois(
    mut f: impl FnMut(f64) -> Result<f64>,
    mut a: f64,
    mut fa: f64,
    mut b: f64,
    mut fb: f64,
    tol: f64,
) -> Result<Option<f64>> {
    if fa.abs() <= tol {
        return Ok(Some(a));
    }
    if fb.abs() <= tol {
        return Ok(Some(b));
    }
    if fa.signum() == fb.signum() {
        return Ok(None);
    }
    let mut side = 0i32;
    for _ in 0..200 {
        let mut x = (a * fb - b * fa) / (fb - fa);
        if !(x > a.min(b) && x < a.max(b)) {
            x = 0.5 * (a + b);
        }
        let fx = f(x)?;
        if fx.abs() <= tol || (b - a).abs() <= 1e-15 * x.abs().max(1.0) {
            return Ok(Some(x));
        }
        if fx.signum() == fa.signum() {
            a = x;
            fa = fx;
            if side == -1 {
                fb *= 0.5;
            }
            side = -1;
        } else {
            b = x;
            fb = fx;
            if side == 1 {
                fa *= 0.5;
            }
            side = 1;
        }
    }
    Ok(Some(0.5 * (a + b)))
}

fn no_convergence(what: String) -> ThermoError {
    ThermoError::NoConvergence(format!("the state of {MODEL} at {what} did not converge"))
}

/// Tolerance for s: 1e-12 relative, with a floor of 1e-9 J/(kg K) (the
/// (p, h) solve reproduces h to 1e-12 of max(|h|, 1 kJ/kg), which moves s
/// by up to that much near the zero of s at 0 degC).
fn tol_s(s: f64) -> f64 {
    1e-12 * s.abs().max(1e3)
}

// ------------------------------------------------------------ (h, s)

/// State from specific enthalpy (J/kg) and specific entropy (J/(kg K)).
pub fn state_hs(h: f64, s: f64) -> Result<State> {
    super::finite("h", h)?;
    super::finite("s", s)?;
    let st = match refine_hs(h, s) {
        Some(st) => st,
        None => scan_hs(h, s)?,
    };
    Ok(on_saturation_line(h, s, &st).unwrap_or(st))
}

/// The (h, s) solve from the backward equations p(h,s) (regions 1 to 3)
/// or T_sat(h,s) (wet): Newton's method in ln p on
/// s(p; h) = s with the exact slope ds/d(ln p) = −p v / T at constant h
/// (from dh = T ds + v dp; continuous across the saturation lines),
/// safeguarded by the bracket the iterates build (s decreases with p).
/// `None` where the backward equations give no finite starting value, a
/// (p, h) state on the way is outside the formulation, or the iteration
/// does not meet the tolerance: the caller then scans.
pub(super) fn refine_hs(h: f64, s: f64) -> Option<State> {
    let p0 = backward::p_hs(h, s)?;
    let (x_min, x_max) = (P_LO.ln(), P_MAX.ln());
    let (mut lo, mut hi) = (x_min, x_max);
    let (mut lo_known, mut hi_known) = (false, false);
    let tol = tol_s(s);
    let mut x = p0.ln().clamp(x_min, x_max);
    let mut best: Option<(f64, State)> = None;
    for _ in 0..80 {
        let st = state_ph(x.exp().clamp(P_LO, P_MAX), h).ok()?;
        let f = st.s - s;
        // Not a saturated phase taken for a state in the sliver at the edge
        // of the region-3 dome (see `region3`), whose h is off.
        let h_ok = (st.h - h).abs() <= 1e-9 * h.abs().max(1e3);
        if f.abs() <= tol {
            return h_ok.then_some(st);
        }
        if h_ok && best.is_none_or(|(fb, _)| f.abs() < fb) {
            best = Some((f.abs(), st));
        }
        if f > 0.0 {
            lo = x;
            lo_known = true;
        } else {
            hi = x;
            hi_known = true;
        }
        // Newton step, at most a factor e^2 in p.
        let step = (f * st.t / (st.p * st.v)).clamp(-2.0, 2.0);
        let mut next = x + step;
        if !(next > lo && next < hi) {
            next = match (lo_known, hi_known) {
                (true, true) => 0.5 * (lo + hi),
                // An unexplored end of the pressure range: go there.
                (true, false) => hi,
                (false, true) => lo,
                (false, false) => return None,
            };
        }
        if (next - x).abs() <= 1e-15 * x.abs().max(1.0) {
            // The bracket has closed round a step of s: at the corners of
            // the region-3 dome, where the (p, h) solve jumps between the
            // saturated phase and the single-phase branch (the region-4
            // saturation pressure and the region-3 phase equilibrium agree
            // only to IF97's consistency limits). The closest state seen
            // is taken if it is within 1e-9 of s (measured: 3e-12 for the
            // saturated liquid at 639 K, where the scan ended 1e-5 off);
            // otherwise the scan decides.
            return best.and_then(|(fb, st)| (fb <= 1e3 * tol).then_some(st));
        }
        x = next;
    }
    None
}

/// The (h, s) solve without a starting value: a coarse logarithmic scan of
/// (p, h) states brackets the pressure (the edges of the feasible range
/// refined by bisection), then Illinois false position in ln p.
pub(super) fn scan_hs(h: f64, s: f64) -> Result<State> {
    let what = || format!("h = {}, s = {}", fmt_h(h), fmt_s(s));
    // s(ln p) at constant h; None where (p, h) is outside the formulation.
    let eval = |x: f64| state_ph(x.exp().clamp(P_LO, P_MAX), h).ok();
    const N: usize = 17;
    let (x_lo, x_hi) = (P_LO.ln(), P_MAX.ln());
    let grid: Vec<f64> = (0..N)
        .map(|i| x_lo + (x_hi - x_lo) * i as f64 / (N - 1) as f64)
        .collect();
    let vals: Vec<Option<State>> = grid.iter().map(|&x| eval(x)).collect();
    let feasible: Vec<usize> = (0..N).filter(|&i| vals[i].is_some()).collect();
    let (Some(&first), Some(&last)) = (feasible.first(), feasible.last()) else {
        return Err(out_of_range(
            what(),
            &format!(
                "no state with this h between {} and {}",
                fmt_p(P_LO),
                fmt_p(P_MAX)
            ),
        ));
    };
    // The feasible edge between an infeasible grid point `out` and a
    // feasible one `inn` (bisection on feasibility).
    let edge = |mut out: f64, mut inn: f64| -> (f64, Option<State>) {
        let mut st = eval(inn);
        for _ in 0..60 {
            let mid = 0.5 * (out + inn);
            match eval(mid) {
                Some(m) => {
                    inn = mid;
                    st = Some(m);
                }
                None => out = mid,
            }
            if (inn - out).abs() < 1e-14 * inn.abs().max(1.0) {
                break;
            }
        }
        (inn, st)
    };
    let s_of = |st: &Option<State>| st.map(|v| v.s).unwrap_or(f64::NAN);
    // A grid point that already meets the tolerance (e.g. at the top of the
    // pressure range).
    if let Some(st) = vals
        .iter()
        .flatten()
        .find(|st| (st.s - s).abs() <= tol_s(s))
    {
        return Ok(*st);
    }
    // Bracket [a, b] in ln p with s(a) >= s >= s(b).
    let mut bracket: Option<(f64, f64, f64, f64)> = None;
    for w in feasible.windows(2) {
        let (i, j) = (w[0], w[1]);
        let (si, sj) = (s_of(&vals[i]), s_of(&vals[j]));
        if si >= s && s >= sj {
            bracket = Some((grid[i], si, grid[j], sj));
            break;
        }
    }
    if bracket.is_none() && s > s_of(&vals[first]) && first > 0 {
        let (x, st) = edge(grid[first - 1], grid[first]);
        if let Some(e) = st
            && (e.s - s).abs() <= tol_s(s)
        {
            return Ok(e);
        }
        if s_of(&st) >= s {
            bracket = Some((x, s_of(&st), grid[first], s_of(&vals[first])));
        }
    }
    if bracket.is_none() && s < s_of(&vals[last]) && last + 1 < N {
        let (x, st) = edge(grid[last + 1], grid[last]);
        if let Some(e) = st
            && (e.s - s).abs() <= tol_s(s)
        {
            return Ok(e);
        }
        if s_of(&st) <= s {
            bracket = Some((grid[last], s_of(&vals[last]), x, s_of(&st)));
        }
    }
    if feasible.len() == 1 && bracket.is_none() {
        // A single feasible grid point: refine both edges around it.
        let i = first;
        let lo = if i > 0 {
            edge(grid[i - 1], grid[i])
        } else {
            (grid[i], vals[i])
        };
        let hi = if i + 1 < N {
            edge(grid[i + 1], grid[i])
        } else {
            (grid[i], vals[i])
        };
        if s_of(&lo.1) >= s && s >= s_of(&hi.1) {
            bracket = Some((lo.0, s_of(&lo.1), hi.0, s_of(&hi.1)));
        }
    }
    let Some((a, sa, b, sb)) = bracket else {
        return Err(out_of_range(
            what(),
            "no pressure of the formulation gives this pair (s must lie between the entropies of \
             this h at the highest and the lowest pressure of the formulation)",
        ));
    };
    let f = |x: f64| -> Result<f64> {
        eval(x)
            .map(|st| st.s - s)
            .ok_or_else(|| no_convergence(what()))
    };
    let x = illinois(f, a, sa - s, b, sb - s, tol_s(s))?.ok_or_else(|| no_convergence(what()))?;
    state_ph(x.exp().clamp(P_LO, P_MAX), h)
}

/// A (h, s) pair of a saturated phase is a corner of the dome, where the
/// pressure solve ends within round-off on either side (x of 1e-12, or
/// single-phase at T_sat). If the result is that close to the line, look
/// for the saturated phase with this h (secant in p on h_sat(p) = h) and
/// return it with x = 0 or 1 when its s matches too.
fn on_saturation_line(h: f64, s: f64, st: &State) -> Option<State> {
    if !(P_SAT_MIN..P_CRIT).contains(&st.p) {
        return None;
    }
    let ts = super::t_sat(st.p).ok()?;
    let near: Vec<f64> = match st.x {
        Some(q) if q > 0.0 && q < 1e-6 => vec![0.0],
        Some(q) if q < 1.0 && q > 1.0 - 1e-6 => vec![1.0],
        // A saturated phase that does not reproduce the pair (the sliver
        // at the edge of the region-3 dome, see `region3`).
        Some(q) if (q == 0.0 || q == 1.0) && (st.h - h).abs() > 1e-11 * h.abs().max(1e3) => {
            vec![q]
        }
        None if (st.t - ts).abs() <= 1e-6 * ts => vec![0.0, 1.0],
        _ => return None,
    };
    for x in near {
        let g = |p: f64| super::state_px(p, x).map(|sat| sat.h - h);
        let (mut p0, mut p1) = (st.p, st.p * (1.0 + 1e-6));
        let (mut g0, mut g1) = (g(p0).ok()?, g(p1).ok()?);
        for _ in 0..20 {
            if g1 == g0 {
                break;
            }
            let p2 = (p1 - g1 * (p1 - p0) / (g1 - g0)).clamp(P_SAT_MIN, P_CRIT);
            (p0, g0) = (p1, g1);
            p1 = p2;
            g1 = g(p1).ok()?;
            if g1.abs() <= 1e-12 * h.abs().max(1e3) {
                break;
            }
        }
        let sat = super::state_px(p1, x).ok()?;
        if (sat.h - h).abs() <= 1e-11 * h.abs().max(1e3) && (sat.s - s).abs() <= 10.0 * tol_s(s) {
            return Some(sat);
        }
    }
    None
}

// ------------------------------------------------------------ (T, s), (T, v)

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Prop {
    S,
    V,
}

impl Prop {
    fn of(self, st: &State) -> f64 {
        match self {
            Prop::S => st.s,
            Prop::V => st.v,
        }
    }
    fn of_props(self, pr: &Props) -> f64 {
        match self {
            Prop::S => pr.s,
            Prop::V => pr.v,
        }
    }
    fn name(self) -> &'static str {
        match self {
            Prop::S => "s",
            Prop::V => "v",
        }
    }
    fn fmt(self, y: f64) -> String {
        match self {
            Prop::S => fmt_s(y),
            Prop::V => format!("{} m^3/kg", num(y)),
        }
    }
    fn tol(self, y: f64) -> f64 {
        match self {
            Prop::S => tol_s(y),
            // On ln(v / v_given): 1e-13 relative.
            Prop::V => 1e-13,
        }
    }
}

/// State from temperature (K) and specific entropy (J/(kg K)).
pub fn state_ts(t: f64, s: f64) -> Result<State> {
    super::finite("s", s)?;
    state_t_y(t, s, Prop::S)
}

/// State from temperature (K) and specific volume (m^3/kg), e.g. a closed
/// rigid vessel; two-phase inside the saturation dome.
pub fn state_tv(t: f64, v: f64) -> Result<State> {
    super::finite("v", v)?;
    if v <= 0.0 {
        return Err(ThermoError::InvalidArgument(format!(
            "the specific volume of {MODEL} must be positive, got v = {} m^3/kg",
            num(v)
        )));
    }
    state_t_y(t, v, Prop::V)
}

fn state_t_y(t: f64, y: f64, prop: Prop) -> Result<State> {
    super::finite("T", t)?;
    if !(T_MIN..=T_MAX5).contains(&t) {
        return Err(out_of_range(format!("T = {}", fmt_t(t)), super::RANGE));
    }
    let p_top = if t > T_MAX { P_MAX5 } else { P_MAX };
    let what = || format!("T = {} and {} = {}", fmt_t(t), prop.name(), prop.fmt(y));
    let at = |p: f64| super::tp_unchecked(t, p);
    // The residual: s − s_given, or ln(v / v_given) (v spans decades over
    // the pressure range and is nearly a power of p for a gas, so its
    // logarithm is nearly linear in ln p).
    let f = |x: f64| -> Result<f64> {
        let val = prop.of(&at(x.exp().clamp(P_LO, p_top))?);
        Ok(match prop {
            Prop::S => val - y,
            Prop::V => (val / y).ln(),
        })
    };
    let tol = prop.tol(y);
    // Search [p_a, p_b] (ln p) with the values at the ends known.
    let search = |pa: f64, pb: f64| -> Result<Option<State>> {
        let (xa, xb) = (pa.ln(), pb.ln());
        let (fa, fb) = (f(xa)?, f(xb)?);
        match illinois(f, xa, fa, xb, fb, tol)? {
            Some(x) => at(x.exp().clamp(P_LO, p_top)).map(Some),
            None => Ok(None),
        }
    };
    let range_err = |p_hi: f64| {
        let lo = at(P_LO).map(|st| prop.of(&st));
        let hi = at(p_hi).map(|st| prop.of(&st));
        match (lo, hi) {
            (Ok(lo), Ok(hi)) => out_of_range(
                what(),
                &format!(
                    "{} from {} ({}) to {} ({}) at this temperature",
                    prop.name(),
                    prop.fmt(hi.min(lo)),
                    if hi < lo { fmt_p(p_hi) } else { fmt_p(P_LO) },
                    prop.fmt(hi.max(lo)),
                    if hi < lo { fmt_p(P_LO) } else { fmt_p(p_hi) },
                ),
            ),
            (Err(e), _) | (_, Err(e)) => e,
        }
    };
    if t < T_CRIT {
        let ps = forward::psat(t).min(P_CRIT);
        let (l, v) = sat::sat_props(t, ps)?;
        let (yl, yv) = (prop.of_props(&l), prop.of_props(&v));
        let near = |a: f64, b: f64| match prop {
            Prop::S => (a - b).abs() <= tol,
            Prop::V => (a - b).abs() <= tol * b.abs(),
        };
        if near(y, yl) {
            return Ok(two_phase(t, ps, &l, &v, 0.0));
        }
        if near(y, yv) {
            return Ok(two_phase(t, ps, &l, &v, 1.0));
        }
        if y > yl && y < yv {
            return Ok(two_phase(t, ps, &l, &v, (y - yl) / (yv - yl)));
        }
        if y > yv {
            // Vapour, below p_sat (a pressure just below, so that the
            // (T, p) equations take the vapour branch).
            let p_end = ps.next_down();
            if ps <= P_LO {
                return Err(range_err(p_top));
            }
            return match search(P_LO, p_end)? {
                Some(st) => Ok(st),
                // In the sliver between the saturated value of region 4 and
                // the vapour equation just below p_sat: saturated vapour.
                None if f(p_end.ln())? > 0.0 => Ok(two_phase(t, ps, &l, &v, 1.0)),
                None => Err(range_err(p_top)),
            };
        }
        let p_start = if ps < P_SAT_MIN { P_SAT_MIN } else { ps };
        return match search(p_start, p_top)? {
            Some(st) => Ok(st),
            None if f(p_start.ln())? < 0.0 => Ok(two_phase(t, ps, &l, &v, 0.0)),
            None => Err(range_err(p_top)),
        };
    }
    match search(P_LO, p_top)? {
        Some(st) => Ok(st),
        None => Err(range_err(p_top)),
    }
}
