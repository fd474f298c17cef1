//! Forward (basic) equations of IAPWS-IF97: the Gibbs free energy of regions
//! 1, 2 and 5 as a function of (T, p), the Helmholtz free energy of region 3
//! as a function of (rho, T), the saturation-pressure equation of region 4 and
//! the boundary equations between regions.
//!
//! Source: IAPWS R7-97(2012), "Revised Release on the IAPWS Industrial
//! Formulation 1997 for the Thermodynamic Properties of Water and Steam";
//! the equation and table numbers below are those of that document.
//!
//! All inputs and outputs are SI (K, Pa, kg/m^3, J/kg, J/(kg K)).

use super::coef;
use super::{R, RHO_CRIT, T_CRIT};

/// Properties of a single-phase state, SI units.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(super) struct Props {
    pub t: f64,
    pub p: f64,
    /// Specific volume, m^3/kg.
    pub v: f64,
    pub h: f64,
    pub s: f64,
    pub cp: f64,
    pub cv: f64,
    /// Speed of sound, m/s.
    pub w: f64,
    /// d(cp)/dT at constant p, J/(kg K^2), for the Newton refinement of
    /// regions 1, 2 and 5 (0 for region 3, where it is not used).
    pub cp_t: f64,
}

/// `x^min, x^(min+1), ..., x^(min+N-1)`, by four interleaved chains of
/// multiplications (short dependency chains for speed).
#[inline(always)]
pub(super) fn powers<const N: usize>(x: f64, min: i32) -> [f64; N] {
    let mut out = [0.0; N];
    let x2 = x * x;
    let x4 = x2 * x2;
    let base = x.powi(min);
    let seed = [base, base * x, base * x2, base * x2 * x];
    for k in 0..N {
        out[k] = if k < 4 { seed[k] } else { out[k - 4] * x4 };
    }
    out
}

/// A term `n a^I b^J` of a forward equation, prepared at compile time: the
/// indices of a^I and b^J in the power tables and the coefficient times the
/// exponent factors of the derivatives: n, n J, n J(J-1), n J(J-1)(J-2),
/// n I, n I(I-1), n I J (and a zero pad for even vector lanes). The first
/// four lanes are all the T-derivatives the Newton refinement needs.
#[derive(Clone, Copy)]
struct Term {
    a: usize,
    b: usize,
    c: [f64; 8],
}

const fn prepare<const N: usize>(tab: &[(i32, i32, f64); N], imin: i32, jmin: i32) -> [Term; N] {
    let mut out = [Term {
        a: 0,
        b: 0,
        c: [0.0; 8],
    }; N];
    let mut k = 0;
    while k < N {
        let (i, j, n) = tab[k];
        let (fi, fj) = (i as f64, j as f64);
        out[k] = Term {
            a: (i - imin) as usize,
            b: (j - jmin) as usize,
            c: [
                n,
                n * fj,
                n * fj * (fj - 1.0),
                n * fj * (fj - 1.0) * (fj - 2.0),
                n * fi,
                n * fi * (fi - 1.0),
                n * fi * fj,
                0.0,
            ],
        };
        k += 1;
    }
    out
}

static R1_TERMS: [Term; 34] = prepare(&coef::R1_GIBBS, 0, -41);
static R2_TERMS: [Term; 43] = prepare(&coef::R2_RES, 1, 0);
static R3_TERMS: [Term; 39] = prepare(&coef::R3_HELM, 0, 0);
static R5_TERMS: [Term; 6] = prepare(&coef::R5_RES, 1, 1);

/// Lanes of [`moments`]: all derivatives (forward properties) or only the
/// T-derivatives (h, s, cp and d(cp)/dT for the Newton refinement).
const ALL: usize = 8;
const T_ONLY: usize = 4;

/// Sums over the terms of the term values weighted by the exponent factors
/// (see [`Term`]), for the first `L` lanes: sum t, sum J t, sum J(J-1) t,
/// sum J(J-1)(J-2) t, sum I t, sum I(I-1) t, sum I J t; lanes not computed
/// are zero. Terms are taken in pairs with separate accumulators (shorter
/// addition dependency chains).
///
/// The power tables have power-of-two lengths so that masked indices need
/// no bounds checks (the term indices are below the lengths by
/// construction; the extra entries are unused).
#[inline(always)]
fn moments<const L: usize, const NA: usize, const NB: usize>(
    terms: &[Term],
    pa: &[f64; NA],
    pb: &[f64; NB],
) -> Gibbs {
    const { assert!(NA.is_power_of_two() && NB.is_power_of_two()) };
    let mut a0 = [0.0f64; L];
    for t in terms {
        let x = pa[t.a & (NA - 1)] * pb[t.b & (NB - 1)];
        for (acc, c) in a0.iter_mut().zip(&t.c) {
            *acc += c * x;
        }
    }
    let s = |m: usize| if m < L { a0[m] } else { 0.0 };
    Gibbs {
        // Lane 7 is a zero pad (added so that all lanes stay in use).
        g: s(0) + s(7),
        gt: s(1),
        gtt: s(2),
        gttt: s(3),
        gp: s(4),
        gpp: s(5),
        gpt: s(6),
    }
}

/// The temperature-derivative properties of a Gibbs region, for the Newton
/// refinement of (p, h) and (p, s).
#[derive(Clone, Copy, Debug)]
pub(super) struct Thermal {
    pub t: f64,
    pub h: f64,
    pub s: f64,
    pub cp: f64,
    /// d(cp)/dT at constant p.
    pub cp_t: f64,
}

impl Thermal {
    fn from_gamma(t: f64, tau: f64, g: &Gibbs) -> Thermal {
        Thermal {
            t,
            h: tau * g.gt * R * t,
            s: (tau * g.gt - g.g) * R,
            cp: -R * tau * tau * g.gtt,
            cp_t: cp_t(t, tau, g.gtt, g.gttt),
        }
    }
}

impl Props {
    pub fn thermal(&self) -> Thermal {
        Thermal {
            t: self.t,
            h: self.h,
            s: self.s,
            cp: self.cp,
            cp_t: self.cp_t,
        }
    }
}

/// A dimensionless Gibbs free energy and its derivatives with respect to the
/// reduced pressure (pi) and the inverse reduced temperature (tau).
#[derive(Clone, Copy, Debug, Default)]
pub(super) struct Gibbs {
    pub g: f64,
    pub gp: f64,
    pub gpp: f64,
    pub gt: f64,
    pub gtt: f64,
    pub gpt: f64,
    /// Third derivative with respect to tau.
    pub gttt: f64,
}

impl Gibbs {
    fn plus(&self, o: &Gibbs) -> Gibbs {
        Gibbs {
            g: self.g + o.g,
            gp: self.gp + o.gp,
            gpp: self.gpp + o.gpp,
            gt: self.gt + o.gt,
            gtt: self.gtt + o.gtt,
            gpt: self.gpt + o.gpt,
            gttt: self.gttt + o.gttt,
        }
    }
}

// ---------------------------------------------------------------- region 1

const R1_PSTAR: f64 = 16.53e6;
const R1_TSTAR: f64 = 1386.0;

/// Dimensionless Gibbs free energy of region 1, Eq. (7), and its derivatives
/// (Table 4), for pi = p/16.53 MPa and tau = 1386 K/T.
pub(super) fn gamma1<const L: usize>(pi: f64, tau: f64) -> Gibbs {
    let a = 7.1 - pi;
    let b = tau - 1.222;
    // Exponents in Table 2: I in 0..=32, J in -41..=17.
    let pa: [f64; 64] = powers(a, 0);
    let pb: [f64; 64] = powers(b, -41);
    let mut r = moments::<L, _, _>(&R1_TERMS, &pa, &pb);
    r.gp = -r.gp / a;
    r.gpp /= a * a;
    r.gt /= b;
    r.gtt /= b * b;
    r.gpt = -r.gpt / (a * b);
    r.gttt /= b * b * b;
    r
}

/// Region 1 properties at (T, p), Table 3.
pub(super) fn region1(t: f64, p: f64) -> Props {
    let pi = p / R1_PSTAR;
    let tau = R1_TSTAR / t;
    let g = gamma1::<ALL>(pi, tau);
    let rt = R * t;
    let cp = -R * tau * tau * g.gtt;
    let x = g.gp - tau * g.gpt;
    Props {
        t,
        p,
        v: pi * g.gp * rt / p,
        h: tau * g.gt * rt,
        s: (tau * g.gt - g.g) * R,
        cp,
        cv: cp + R * x * x / g.gpp,
        w: (rt * g.gp * g.gp / (x * x / (tau * tau * g.gtt) - g.gpp)).sqrt(),
        cp_t: cp_t(t, tau, g.gtt, g.gttt),
    }
}

// ---------------------------------------------------------------- region 2

/// Ideal-gas part of region 2, Eq. (16), Table 10, tau = 540 K/T.
fn gamma2_ideal(pi: f64, tau: f64) -> Gibbs {
    // J0 in -5..=3.
    let pt: [f64; 9] = powers(tau, -5);
    let mut r = Gibbs {
        g: pi.ln(),
        gp: 1.0 / pi,
        gpp: -1.0 / (pi * pi),
        ..Gibbs::default()
    };
    for &(j, n) in coef::R2_IDEAL.iter() {
        let term = n * pt[(j + 5) as usize];
        let fj = j as f64;
        r.g += term;
        r.gt += fj * term;
        r.gtt += fj * (fj - 1.0) * term;
        r.gttt += fj * (fj - 1.0) * (fj - 2.0) * term;
    }
    r.gt /= tau;
    r.gtt /= tau * tau;
    r.gttt /= tau * tau * tau;
    r
}

/// Residual part of region 2, Eq. (17), Table 11.
fn gamma2_res<const L: usize>(pi: f64, tau: f64) -> Gibbs {
    let b = tau - 0.5;
    // I in 1..=24, J in 0..=58.
    let pa: [f64; 32] = powers(pi, 1);
    let pb: [f64; 64] = powers(b, 0);
    let mut r = moments::<L, _, _>(&R2_TERMS, &pa, &pb);
    r.gp /= pi;
    r.gpp /= pi * pi;
    r.gt /= b;
    r.gtt /= b * b;
    r.gpt /= pi * b;
    r.gttt /= b * b * b;
    r
}

/// Properties of a Gibbs-type region with ideal and residual parts split
/// (regions 2 and 5, Tables 12 and 39).
fn props_ideal_res(t: f64, p: f64, pi: f64, tau: f64, g0: Gibbs, gr: Gibbs) -> Props {
    let rt = R * t;
    let gt = g0.gt + gr.gt;
    let gtt = g0.gtt + gr.gtt;
    let cp = -R * tau * tau * gtt;
    let x = 1.0 + pi * gr.gp - tau * pi * gr.gpt;
    let y = 1.0 - pi * pi * gr.gpp;
    let z = 1.0 + pi * gr.gp;
    Props {
        t,
        p,
        v: pi * (g0.gp + gr.gp) * rt / p,
        h: tau * gt * rt,
        s: (tau * gt - (g0.g + gr.g)) * R,
        cp,
        cv: cp - R * x * x / y,
        w: (rt * z * z / (y + x * x / (tau * tau * gtt))).sqrt(),
        cp_t: cp_t(t, tau, gtt, g0.gttt + gr.gttt),
    }
}

/// d(cp)/dT at constant p from cp = -R tau^2 g_tautau, d(tau)/dT = -tau/T.
#[inline(always)]
fn cp_t(t: f64, tau: f64, gtt: f64, gttt: f64) -> f64 {
    R * tau * tau * (2.0 * gtt + tau * gttt) / t
}

/// Region 2 properties at (T, p), Eqs. (15)-(17).
pub(super) fn region2(t: f64, p: f64) -> Props {
    let pi = p / 1e6;
    let tau = 540.0 / t;
    props_ideal_res(
        t,
        p,
        pi,
        tau,
        gamma2_ideal(pi, tau),
        gamma2_res::<ALL>(pi, tau),
    )
}

/// Region 1 h, s, cp, d(cp)/dT at (T, p).
pub(super) fn region1_thermal(t: f64, p: f64) -> Thermal {
    let tau = R1_TSTAR / t;
    Thermal::from_gamma(t, tau, &gamma1::<T_ONLY>(p / R1_PSTAR, tau))
}

/// Region 2 h, s, cp, d(cp)/dT at (T, p).
pub(super) fn region2_thermal(t: f64, p: f64) -> Thermal {
    let pi = p / 1e6;
    let tau = 540.0 / t;
    let g0 = gamma2_ideal(pi, tau);
    let gr = gamma2_res::<T_ONLY>(pi, tau);
    Thermal::from_gamma(t, tau, &g0.plus(&gr))
}

// ---------------------------------------------------------------- region 5

/// Region 5 properties at (T, p), Eqs. (32)-(34), Tables 37 and 38.
pub(super) fn region5(t: f64, p: f64) -> Props {
    let pi = p / 1e6;
    let tau = 1000.0 / t;
    // Ideal part: J0 in -3..=2.
    let pt: [f64; 6] = powers(tau, -3);
    let mut g0 = Gibbs {
        g: pi.ln(),
        gp: 1.0 / pi,
        gpp: -1.0 / (pi * pi),
        ..Gibbs::default()
    };
    for &(j, n) in coef::R5_IDEAL.iter() {
        let term = n * pt[(j + 3) as usize];
        let fj = j as f64;
        g0.g += term;
        g0.gt += fj * term;
        g0.gtt += fj * (fj - 1.0) * term;
        g0.gttt += fj * (fj - 1.0) * (fj - 2.0) * term;
    }
    g0.gt /= tau;
    g0.gtt /= tau * tau;
    g0.gttt /= tau * tau * tau;
    // Residual part: I in 1..=3, J in 1..=9.
    let pp: [f64; 4] = powers(pi, 1);
    let ptr: [f64; 16] = powers(tau, 1);
    let mut gr = moments::<ALL, _, _>(&R5_TERMS, &pp, &ptr);
    gr.gp /= pi;
    gr.gpp /= pi * pi;
    gr.gt /= tau;
    gr.gtt /= tau * tau;
    gr.gpt /= pi * tau;
    gr.gttt /= tau * tau * tau;
    props_ideal_res(t, p, pi, tau, g0, gr)
}

// ---------------------------------------------------------------- region 3

/// n1 of Table 30 (coefficient of ln(delta) in Eq. (28)).
const R3_N1: f64 = 1.0658070028513;

/// Dimensionless Helmholtz free energy of region 3 and its derivatives with
/// respect to delta = rho/rho_c and tau = T_c/T (Table 32).
#[derive(Clone, Copy, Debug, Default)]
pub(super) struct Helm {
    pub f: f64,
    pub d: f64,
    pub dd: f64,
    pub t: f64,
    pub tt: f64,
    pub dt: f64,
}

/// Eq. (28) with its derivatives.
pub(super) fn phi3(delta: f64, tau: f64) -> Helm {
    // I in 0..=11, J in 0..=26.
    let pd: [f64; 16] = powers(delta, 0);
    let pt: [f64; 32] = powers(tau, 0);
    let m = moments::<ALL, _, _>(&R3_TERMS, &pd, &pt);
    let mut r = Helm {
        f: m.g,
        d: m.gp,
        dd: m.gpp,
        t: m.gt,
        tt: m.gtt,
        dt: m.gpt,
    };
    r.f += R3_N1 * delta.ln();
    r.d = (r.d + R3_N1) / delta;
    r.dd = (r.dd - R3_N1) / (delta * delta);
    r.t /= tau;
    r.tt /= tau * tau;
    r.dt /= delta * tau;
    r
}

/// A region-3 point with the quantities the solvers need.
#[derive(Clone, Copy, Debug)]
pub(super) struct R3Point {
    pub rho: f64,
    pub t: f64,
    pub phi: Helm,
    pub delta: f64,
    pub tau: f64,
}

impl R3Point {
    pub fn new(rho: f64, t: f64) -> R3Point {
        let delta = rho / RHO_CRIT;
        let tau = T_CRIT / t;
        R3Point {
            rho,
            t,
            phi: phi3(delta, tau),
            delta,
            tau,
        }
    }
    /// Pressure, Pa (Table 31).
    pub fn p(&self) -> f64 {
        self.rho * R * self.t * self.delta * self.phi.d
    }
    /// dp/drho at constant T.
    pub fn dp_drho(&self) -> f64 {
        let f = &self.phi;
        R * self.t * self.delta * (2.0 * f.d + self.delta * f.dd)
    }
    /// dp/dT at constant rho.
    pub fn dp_dt(&self) -> f64 {
        let f = &self.phi;
        self.rho * R * self.delta * (f.d - self.tau * f.dt)
    }
    pub fn h(&self) -> f64 {
        R * self.t * (self.tau * self.phi.t + self.delta * self.phi.d)
    }
    pub fn dh_drho(&self) -> f64 {
        let f = &self.phi;
        let d = self.delta;
        R * self.t / self.rho * (d * self.tau * f.dt + d * f.d + d * d * f.dd)
    }
    pub fn dh_dt(&self) -> f64 {
        let f = &self.phi;
        let d = self.delta;
        let tau = self.tau;
        R * (-tau * tau * f.tt + d * f.d - d * tau * f.dt)
    }
    pub fn s(&self) -> f64 {
        R * (self.tau * self.phi.t - self.phi.f)
    }
    pub fn ds_drho(&self) -> f64 {
        let f = &self.phi;
        R / self.rho * (self.delta * self.tau * f.dt - self.delta * f.d)
    }
    pub fn ds_dt(&self) -> f64 {
        -R * self.tau * self.tau * self.phi.tt / self.t
    }
    /// Specific Gibbs free energy g = f + p/rho, J/kg.
    pub fn g(&self) -> f64 {
        R * self.t * (self.phi.f + self.delta * self.phi.d)
    }
    pub fn props(&self) -> Props {
        let f = &self.phi;
        let d = self.delta;
        let tau = self.tau;
        let rt = R * self.t;
        let cv = -R * tau * tau * f.tt;
        let x = d * f.d - d * tau * f.dt;
        let y = 2.0 * d * f.d + d * d * f.dd;
        Props {
            t: self.t,
            p: self.p(),
            v: 1.0 / self.rho,
            h: self.h(),
            s: self.s(),
            cp: cv + R * x * x / y,
            cv,
            w: (rt * (y - x * x / (tau * tau * f.tt))).sqrt(),
            cp_t: 0.0,
        }
    }
}

// ---------------------------------------------------------------- region 4

/// Table 34.
const R4_N: [f64; 10] = [
    0.11670521452767e4,
    -0.72421316703206e6,
    -0.17073846940092e2,
    0.12020824702470e5,
    -0.32325550322333e7,
    0.14915108613530e2,
    -0.48232657361591e4,
    0.40511340542057e6,
    -0.23855557567849,
    0.65017534844798e3,
];

/// Saturation pressure, Eq. (30). T in 273.15 K ..= 647.096 K (not checked).
pub(super) fn psat(t: f64) -> f64 {
    let n = &R4_N;
    let th = t + n[8] / (t - n[9]);
    let a = th * th + n[0] * th + n[1];
    let b = n[2] * th * th + n[3] * th + n[4];
    let c = n[5] * th * th + n[6] * th + n[7];
    let x = 2.0 * c / (-b + (b * b - 4.0 * a * c).sqrt());
    let x2 = x * x;
    x2 * x2 * 1e6
}

/// Saturation temperature, Eq. (31). p in 611.213 Pa ..= 22.064 MPa (not
/// checked).
pub(super) fn tsat(p: f64) -> f64 {
    let n = &R4_N;
    let beta = (p / 1e6).sqrt().sqrt();
    let b2 = beta * beta;
    let e = b2 + n[2] * beta + n[5];
    let f = n[0] * b2 + n[3] * beta + n[6];
    let g = n[1] * b2 + n[4] * beta + n[7];
    let d = 2.0 * g / (-f - (f * f - 4.0 * e * g).sqrt());
    let k = n[9] + d;
    (k - (k * k - 4.0 * (n[8] + n[9] * d)).sqrt()) / 2.0
}

// ---------------------------------------------------------------- boundaries

/// Table 1: the B23 boundary equation.
const B23_N: [f64; 5] = [
    0.34805185628969e3,
    -0.11671859879975e1,
    0.10192970039326e-2,
    0.57254459862746e3,
    0.13918839778870e2,
];

/// Pressure on the region 2-3 boundary, Eq. (5).
pub(super) fn b23_p(t: f64) -> f64 {
    let n = &B23_N;
    (n[0] + n[1] * t + n[2] * t * t) * 1e6
}

/// Temperature on the region 2-3 boundary, Eq. (6).
pub(super) fn b23_t(p: f64) -> f64 {
    let n = &B23_N;
    let pi = p / 1e6;
    n[3] + ((pi - n[4]) / n[2]).sqrt()
}

/// Table 19: the B2bc boundary equation.
const B2BC_N: [f64; 5] = [
    0.90584278514723e3,
    -0.67955786399241,
    0.12809002730136e-3,
    0.26526571908428e4,
    0.45257578905948e1,
];

/// Pressure on the 2b-2c boundary, Eq. (20); h in J/kg. (The solver uses
/// Eq. (21); Eq. (20) is checked in the verification tests.)
#[cfg(test)]
pub(super) fn b2bc_p(h: f64) -> f64 {
    let n = &B2BC_N;
    let eta = h / 1e3;
    (n[0] + n[1] * eta + n[2] * eta * eta) * 1e6
}

/// Enthalpy on the 2b-2c boundary, Eq. (21), J/kg.
pub(super) fn b2bc_h(p: f64) -> f64 {
    let n = &B2BC_N;
    let pi = p / 1e6;
    (n[3] + ((pi - n[4]) / n[2]).sqrt()) * 1e3
}
