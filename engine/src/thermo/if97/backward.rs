//! Backward equations of IAPWS-IF97, used as starting values for Newton
//! refinement on the forward equations:
//! - T(p,h) and T(p,s) for regions 1 and 2 (IAPWS R7-97(2012), Eqs. (11),
//!   (13), (22)-(27));
//! - T(p,h), v(p,h), T(p,s), v(p,s) for region 3 (IAPWS SR3-03(2014),
//!   "Revised Supplementary Release on Backward Equations for the Functions
//!   T(p,h), v(p,h) and T(p,s), v(p,s) for Region 3", Eqs. (1)-(9)).
//!
//! SI in and out (Pa, J/kg, J/(kg K), K, m^3/kg).

use super::coef;
use super::forward::{b2bc_h, powers};

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
