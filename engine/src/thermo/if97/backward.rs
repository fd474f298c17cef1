//! Backward equations of IAPWS-IF97, used as starting values for Newton
//! refinement on the forward equations:
//! - T(p,h) and T(p,s) for regions 1 and 2 (IAPWS R7-97(2012), Eqs. (11),
//!   (13), (22)-(27));
//! - T(p,h), v(p,h), T(p,s), v(p,s) for region 3 (IAPWS SR3-03(2014),
//!   "Revised Supplementary Release on Backward Equations for the Functions
//!   T(p,h), v(p,h) and T(p,s), v(p,s) for Region 3", Eqs. (1)-(9));
//! - p(h,s) for regions 1 and 2 (IAPWS SR2-01(2014)), p(h,s) for region 3,
//!   the region boundaries as functions of h and s and T_sat(h,s) for the
//!   wet region (IAPWS SR4-04(2014)): the starting values of the (h, s)
//!   solve in `pairs`.
//!
//! SI in and out (Pa, J/kg, J/(kg K), K, m^3/kg).

use super::coef;
use super::forward::{b2bc_h, b23_p, powers, psat};

/// Smallest and largest exponents (I_min, I_max, J_min, J_max) of a table.
const fn exp_range(tab: &[(i32, i32, f64)]) -> (i32, i32, i32, i32) {
    let (mut imin, mut imax, mut jmin, mut jmax) = (i32::MAX, i32::MIN, i32::MAX, i32::MIN);
    let mut k = 0;
    while k < tab.len() {
        let (i, j, _) = tab[k];
        if i < imin {
            imin = i;
        }
        if i > imax {
            imax = i;
        }
        if j < jmin {
            jmin = j;
        }
        if j > jmax {
            jmax = j;
        }
        k += 1;
    }
    (imin, imax, jmin, jmax)
}

/// `sum n a^I b^J` over a coefficient table, with the powers of `a` and `b`
/// tabulated once (no `powi` per term).
macro_rules! poly {
    ($tab:path, $a:expr, $b:expr) => {{
        const RANGE: (i32, i32, i32, i32) = exp_range(&$tab);
        // Power-of-two table lengths: masked indices need no bounds checks.
        const NI: usize = ((RANGE.1 - RANGE.0 + 1) as usize).next_power_of_two();
        const NJ: usize = ((RANGE.3 - RANGE.2 + 1) as usize).next_power_of_two();
        let pa: [f64; NI] = powers($a, RANGE.0);
        let pb: [f64; NJ] = powers($b, RANGE.2);
        let mut acc = [0.0f64; 2];
        for pair in $tab.chunks(2) {
            for (k, &(i, j, n)) in pair.iter().enumerate() {
                acc[k] += n
                    * pa[(i - RANGE.0) as usize & (NI - 1)]
                    * pb[(j - RANGE.2) as usize & (NJ - 1)];
            }
        }
        acc[0] + acc[1]
    }};
}

/// Region 1, T(p,h), Eq. (11).
pub(super) fn t1_ph(p: f64, h: f64) -> f64 {
    poly!(coef::R1_T_PH, p / 1e6, h / 2500e3 + 1.0)
}

/// Region 1, T(p,s), Eq. (13).
pub(super) fn t1_ps(p: f64, s: f64) -> f64 {
    poly!(coef::R1_T_PS, p / 1e6, s / 1e3 + 2.0)
}

/// Pressure separating sub-regions 2a and 2b/2c, Pa.
pub(super) const P_2AB: f64 = 4e6;
/// Entropy separating sub-regions 2b and 2c for T(p,s), J/(kg K).
pub(super) const S_2BC: f64 = 5.85e3;

/// Region 2, T(p,h), Eqs. (22)-(24) with the sub-region boundaries
/// p = 4 MPa and the B2bc equation (21).
pub(super) fn t2_ph(p: f64, h: f64) -> f64 {
    let pi = p / 1e6;
    let eta = h / 2000e3;
    if p <= P_2AB {
        poly!(coef::R2A_T_PH, pi, eta - 2.1)
    } else if pi <= 6.546_699_678 || h >= b2bc_h(p) {
        // Below 6.5467 MPa the B2bc boundary lies inside region 4: 2b only.
        poly!(coef::R2B_T_PH, pi - 2.0, eta - 2.6)
    } else {
        poly!(coef::R2C_T_PH, pi + 25.0, eta - 1.8)
    }
}

/// Region 2, T(p,s), Eqs. (25)-(27), boundaries p = 4 MPa and
/// s = 5.85 kJ/(kg K).
pub(super) fn t2_ps(p: f64, s: f64) -> f64 {
    let pi = p / 1e6;
    if p <= P_2AB {
        // Table 25 exponents I are multiples of 1/4 (stored as 4 I).
        let sigma = s / 2e3;
        let q = pi.sqrt().sqrt();
        poly!(coef::R2A_T_PS, q, sigma - 2.0)
    } else if s >= S_2BC {
        poly!(coef::R2B_T_PS, pi, 10.0 - s / 785.3)
    } else {
        poly!(coef::R2C_T_PS, pi, 2.0 - s / 2925.1)
    }
}

/// Enthalpy separating sub-regions 3a and 3b, SR3-03(2014) Eq. (1), J/kg.
pub(super) fn h3ab(p: f64) -> f64 {
    let pi = p / 1e6;
    (0.201_464_004_206_875e4
        + pi * (3.746_965_501_369_83
            + pi * (-0.021_992_190_105_418_7 + pi * 0.875_131_686_009_950e-4)))
        * 1e3
}

/// Critical entropy separating sub-regions 3a and 3b for (p,s),
/// SR3-03(2014) Section 3.1, J/(kg K).
pub(super) const S_3AB: f64 = 4.412_021_482_234_76e3;

/// Region 3, (T, v) from (p, h), SR3-03(2014) Eqs. (2)-(5).
pub(super) fn tv3_ph(p: f64, h: f64) -> (f64, f64) {
    let pi = p / 100e6;
    if h <= h3ab(p) {
        let t = 760.0 * poly!(coef::R3A_T_PH, pi + 0.240, h / 2300e3 - 0.615);
        let v = 0.0028 * poly!(coef::R3A_V_PH, pi + 0.128, h / 2100e3 - 0.727);
        (t, v)
    } else {
        let t = 860.0 * poly!(coef::R3B_T_PH, pi + 0.298, h / 2800e3 - 0.720);
        let v = 0.0088 * poly!(coef::R3B_V_PH, pi + 0.0661, h / 2800e3 - 0.720);
        (t, v)
    }
}

/// Region 3, (T, v) from (p, s), SR3-03(2014) Eqs. (6)-(9).
pub(super) fn tv3_ps(p: f64, s: f64) -> (f64, f64) {
    let pi = p / 100e6;
    if s <= S_3AB {
        let sigma = s / 4.4e3;
        let t = 760.0 * poly!(coef::R3A_T_PS, pi + 0.240, sigma - 0.703);
        let v = 0.0028 * poly!(coef::R3A_V_PS, pi + 0.187, sigma - 0.755);
        (t, v)
    } else {
        let sigma = s / 5.3e3;
        let t = 860.0 * poly!(coef::R3B_T_PS, pi + 0.760, sigma - 0.818);
        let v = 0.0088 * poly!(coef::R3B_V_PS, pi + 0.298, sigma - 0.816);
        (t, v)
    }
}

// ------------------------------------------------------------ (h, s)
//
// IAPWS SR2-01(2014), "Revised Supplementary Release on Backward Equations
// for Pressure as a Function of Enthalpy and Entropy p(h,s) for Regions 1
// and 2", and IAPWS SR4-04(2014), "Revised Supplementary Release on
// Backward Equations p(h,s) for Region 3, Equations as a Function of h and
// s for the Region Boundaries, and an Equation Tsat(h,s) for Region 4".
// Coefficient tables in `coef` (R1_P_HS ... TSAT_HS). In J/kg, J/(kg K),
// Pa and K; the releases' reducing values are in kJ and MPa.

/// Region 1, p(h,s), SR2-01(2014) Eq. (1).
pub(super) fn p1_hs(h: f64, s: f64) -> f64 {
    100e6 * poly!(coef::R1_P_HS, h / 3400e3 + 0.05, s / 7.6e3 + 0.05)
}

/// Enthalpy of the boundary between sub-regions 2a and 2b (p = 4 MPa),
/// SR2-01(2014) Eq. (2), J/kg. Coefficients n1..n4 of the release (as
/// carried by iapws 1.5.5, `iapws97._hab_s`; checked in the tests against
/// the release's value at s = 7 kJ/(kg K)).
pub(super) fn h2ab_s(s: f64) -> f64 {
    let s = s / 1e3;
    (-0.349_898_083_432_139e4
        + s * (0.257_560_716_905_876e4
            + s * (-0.421_073_558_227_969e3 + s * 0.276_349_063_799_944e2)))
        * 1e3
}

/// Sub-region 2a, p(h,s), SR2-01(2014) Eq. (3).
pub(super) fn p2a_hs(h: f64, s: f64) -> f64 {
    4e6 * poly!(coef::R2A_P_HS, h / 4200e3 - 0.5, s / 12e3 - 1.2).powi(4)
}

/// Sub-region 2b, p(h,s), SR2-01(2014) Eq. (4).
pub(super) fn p2b_hs(h: f64, s: f64) -> f64 {
    100e6 * poly!(coef::R2B_P_HS, h / 4100e3 - 0.6, s / 7.9e3 - 1.01).powi(4)
}

/// Sub-region 2c, p(h,s), SR2-01(2014) Eq. (5).
pub(super) fn p2c_hs(h: f64, s: f64) -> f64 {
    100e6 * poly!(coef::R2C_P_HS, h / 3500e3 - 0.7, s / 5.9e3 - 1.1).powi(4)
}

/// s''(4 MPa), J/(kg K): below it no region-2 state has p <= 4 MPa.
/// (IF97 forward equations via iapws 1.5.5; checked in the tests against
/// this model.)
pub(super) const S_2AB_MIN: f64 = 6.069_709_159_519_124e3;
/// s(1073.15 K, 4 MPa), J/(kg K): above it every region-2 state has
/// p < 4 MPa. (As above.)
pub(super) const S_2AB_MAX: f64 = 7.852_340_399_878_508e3;

/// Region 2, p(h,s): sub-region 2a below the h2ab(s) boundary, 2b/2c
/// split at s = 5.85 kJ/(kg K) (SR2-01(2014)).
pub(super) fn p2_hs(h: f64, s: f64) -> f64 {
    let is_2a = s > S_2AB_MAX || (s >= S_2AB_MIN && h <= h2ab_s(s));
    if is_2a {
        p2a_hs(h, s)
    } else if s >= S_2BC {
        p2b_hs(h, s)
    } else {
        p2c_hs(h, s)
    }
}

/// Region 3, p(h,s), SR4-04(2014) Eqs. (1) and (2), split at the critical
/// entropy.
pub(super) fn p3_hs(h: f64, s: f64) -> f64 {
    if s <= S_3AB {
        99e6 * poly!(coef::R3A_P_HS, h / 2300e3 - 1.01, s / 4.4e3 - 0.75)
    } else {
        16.6e6 / poly!(coef::R3B_P_HS, h / 2800e3 - 0.681, s / 5.3e3 - 0.792)
    }
}

/// Saturated-liquid enthalpy h'_1(s) between regions 1 and 4,
/// SR4-04(2014) Eq. (3), J/kg; for s'(273.15 K) <= s <= s'(623.15 K).
pub(super) fn h1_sat_s(s: f64) -> f64 {
    let sigma = s / 3.8e3;
    1700e3 * poly!(coef::H1_SAT_S, sigma - 1.09, sigma + 0.366e-4)
}

/// Saturated-liquid enthalpy h'_3a(s) between regions 3a and 4,
/// SR4-04(2014) Eq. (4), J/kg; for s'(623.15 K) <= s <= s_c.
pub(super) fn h3a_sat_s(s: f64) -> f64 {
    let sigma = s / 3.8e3;
    1700e3 * poly!(coef::H3A_SAT_S, sigma - 1.09, sigma + 0.366e-4)
}

/// Saturated-vapour enthalpy h''_2ab(s) between regions 2a/2b and 4,
/// SR4-04(2014) Eq. (5), J/kg; for 5.85 kJ/(kg K) <= s <= s''(273.15 K).
pub(super) fn h2ab_sat_s(s: f64) -> f64 {
    2800e3 * poly!(coef::H2AB_SAT_S, 5.21e3 / s - 0.513, s / 9.2e3 - 0.524).exp()
}

/// Saturated-vapour enthalpy h''_2c3b(s) between regions 2c/3b and 4,
/// SR4-04(2014) Eq. (6), J/kg; for s_c <= s <= 5.85 kJ/(kg K).
pub(super) fn h2c3b_sat_s(s: f64) -> f64 {
    let sigma = s / 5.9e3;
    2800e3 * poly!(coef::H2C3B_SAT_S, sigma - 1.02, sigma - 0.726).powi(4)
}

/// Enthalpy of the boundary B13 between regions 1 and 3, SR4-04(2014)
/// Eq. (7), J/kg; for s(623.15 K, 100 MPa) <= s <= s'(623.15 K).
pub(super) fn hb13_s(s: f64) -> f64 {
    let sigma = s / 3.8e3;
    1700e3 * poly!(coef::H_B13_S, sigma - 0.884, sigma - 0.864)
}

/// Temperature of the boundary B23 between regions 2 and 3 as a function
/// of h and s, SR4-04(2014) Eq. (8), K; inside the box [`B23_S`] x
/// [`B23_H`].
pub(super) fn tb23_hs(h: f64, s: f64) -> f64 {
    900.0 * poly!(coef::T_B23_HS, h / 3000e3 - 0.727, s / 5.3e3 - 0.864)
}

/// Saturation temperature of a wet state, T_sat(h,s), SR4-04(2014)
/// Eq. (9), K; for s >= s''(623.15 K).
pub(super) fn tsat_hs(h: f64, s: f64) -> f64 {
    550.0 * poly!(coef::TSAT_HS, h / 2800e3 - 0.119, s / 9.2e3 - 1.07)
}

// Entropies that bound the equations above, J/(kg K) (the ranges of
// SR4-04(2014) Eqs. (3)-(9); the values are those of the IF97 forward
// equations, from iapws 1.5.5, and are checked in the tests against this
// model).
/// s'(623.15 K).
pub(super) const S1_SAT_MAX: f64 = 3.778_281_339_544_347e3;
/// s(623.15 K, 100 MPa): the lowest entropy of region 3.
pub(super) const S_B13_MIN: f64 = 3.397_782_954_701_890_7e3;
/// s''(623.15 K): the lowest entropy of T_sat(h,s).
pub(super) const S2_SAT_623: f64 = 5.210_887_824_931_644e3;
/// s''(273.15 K): the highest entropy of a saturated state.
pub(super) const S2_SAT_MAX: f64 = 9.155_759_395_224_662e3;
/// Entropy range of the B23 box of Eq. (8), J/(kg K) (SR4-04(2014)).
pub(super) const B23_S: (f64, f64) = (5.048_096_828e3, 5.260_578_707e3);
/// Enthalpy range of the B23 box of Eq. (8): h''(623.15 K) and
/// h(863.15 K, 100 MPa), J/kg.
pub(super) const B23_H: (f64, f64) = (2.563_592_004e6, 2.812_942_061e6);

/// Where a (h, s) pair lies by the boundary equations of SR4-04(2014).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) enum HsRegion {
    R1,
    R2,
    R3,
    /// Wet, with s >= s''(623.15 K): T_sat(h,s) applies.
    Wet,
    /// Wet with s < s''(623.15 K), outside the range of T_sat(h,s).
    WetLow,
}

/// The region of a (h, s) pair of regions 1 to 4 by the boundary equations
/// h'(s), h''(s), h_B13(s) and T_B23(h,s) (SR4-04(2014) Eqs. (3)-(8)). The
/// boundaries approximate the forward equations (to the releases' stated
/// consistency), so a pair right at a boundary may be placed on either
/// side; only a starting value depends on it. Pairs of region 5 or outside
/// the formulation are placed somewhere too (region 2 for high h).
pub(super) fn region_hs(h: f64, s: f64) -> HsRegion {
    if s <= S1_SAT_MAX {
        if h < h1_sat_s(s) {
            HsRegion::WetLow
        } else if s >= S_B13_MIN && h >= hb13_s(s) {
            HsRegion::R3
        } else {
            HsRegion::R1
        }
    } else if s <= S_3AB {
        if h < h3a_sat_s(s) {
            HsRegion::WetLow
        } else {
            HsRegion::R3
        }
    } else if s <= S_2BC {
        if h < h2c3b_sat_s(s) {
            if s >= S2_SAT_623 {
                HsRegion::Wet
            } else {
                HsRegion::WetLow
            }
        } else if s < B23_S.0 || (s < B23_S.1 && h < B23_H.0) {
            HsRegion::R3
        } else if s >= B23_S.1 || h > B23_H.1 || p2c_hs(h, s) <= b23_p(tb23_hs(h, s)) {
            // Inside the B23 box: region 2 where p_2c(h,s) is below the
            // B23 pressure at T_B23(h,s) (the use of Eq. (8); the same test as
            // iapws 1.5.5, `iapws97._Bound_hs`).
            HsRegion::R2
        } else {
            HsRegion::R3
        }
    } else if s <= S2_SAT_MAX && h < h2ab_sat_s(s) {
        HsRegion::Wet
    } else {
        HsRegion::R2
    }
}

/// A starting pressure (Pa) for the (h, s) solve from the backward
/// equations, or `None` where the value is not finite.
///
/// Wet states with s < s''(623.15 K) are outside the range of every
/// equation of the releases (SR4-04(2014) leaves them to iteration); there
/// T_sat(h,s) is extrapolated and the pressure clamped to the saturation
/// range, a rough start only: measured within a factor 0.15 to 4e4 of the
/// solution on liquid-rich wet states (275 K to 645 K), from which the
/// refinement takes at most 12 (p, h) solves, against 2 or 3 from the
/// starts inside the releases' ranges.
pub(super) fn p_hs(h: f64, s: f64) -> Option<f64> {
    let p = match region_hs(h, s) {
        HsRegion::R1 => p1_hs(h, s),
        HsRegion::R2 => p2_hs(h, s),
        HsRegion::R3 => p3_hs(h, s),
        HsRegion::Wet => psat(tsat_hs(h, s)),
        HsRegion::WetLow => psat(tsat_hs(h, s)).clamp(super::P_SAT_MIN, super::P_CRIT),
    };
    (p.is_finite() && p > 0.0).then_some(p)
}
