#!/usr/bin/env python3
"""Generate Rust source of the IAPWS-IF97 coefficient tables.

The coefficients are those of the published standard IAPWS R7-97(2012) and
of the supplementary releases IAPWS SR3-03(2014) (backward equations for
region 3), SR2-01(2014) (p(h,s) for regions 1 and 2) and SR4-04(2014)
(p(h,s) for region 3, the region boundaries in h and s, T_sat(h,s)). They are read here from the Python package `iapws` (version
printed in the generated header), module `iapws._iapws97Constants`, which
holds the same tables; this script only reformats them. Every table is
checked in the Rust unit tests against the verification values printed in
the standards, so a copying error would fail those tests.

Usage: python3 tests/reference/gen_if97_coef.py > engine/src/thermo/if97/coef.rs
"""
import importlib.metadata

import iapws._iapws97Constants as C

VERSION = importlib.metadata.version("iapws")

# (rust name, iapws prefix, source table, kind)
# kind "ij": (I, J, n) with integer I and J; "ij4": I stored as 4*I (the
# exponents are multiples of 1/4); "j": (J, n).
TABLES = [
    ("R1_GIBBS", "Region1", "IAPWS R7-97(2012), Table 2: region 1, Eq. (7)", "ij"),
    ("R1_T_PH", "Backward1_T_Ph", "IAPWS R7-97(2012), Table 6: region 1, T(p,h), Eq. (11)", "ij"),
    ("R1_T_PS", "Backward1_T_Ps", "IAPWS R7-97(2012), Table 8: region 1, T(p,s), Eq. (13)", "ij"),
    ("R2_IDEAL", "Region2_cp0", "IAPWS R7-97(2012), Table 10: region 2, ideal-gas part, Eq. (16)", "j0"),
    ("R2_RES", "Region2", "IAPWS R7-97(2012), Table 11: region 2, residual part, Eq. (17)", "ij"),
    ("R2A_T_PH", "Backward2a_T_Ph", "IAPWS R7-97(2012), Table 20: sub-region 2a, T(p,h), Eq. (22)", "ij"),
    ("R2B_T_PH", "Backward2b_T_Ph", "IAPWS R7-97(2012), Table 21: sub-region 2b, T(p,h), Eq. (23)", "ij"),
    ("R2C_T_PH", "Backward2c_T_Ph", "IAPWS R7-97(2012), Table 22: sub-region 2c, T(p,h), Eq. (24)", "ij"),
    ("R2A_T_PS", "Backward2a_T_Ps", "IAPWS R7-97(2012), Table 25: sub-region 2a, T(p,s), Eq. (25); I stored as 4*I", "ij4"),
    ("R2B_T_PS", "Backward2b_T_Ps", "IAPWS R7-97(2012), Table 26: sub-region 2b, T(p,s), Eq. (26)", "ij"),
    ("R2C_T_PS", "Backward2c_T_Ps", "IAPWS R7-97(2012), Table 27: sub-region 2c, T(p,s), Eq. (27)", "ij"),
    ("R3_HELM", "Region3", "IAPWS R7-97(2012), Table 30: region 3, Eq. (28), terms i = 2..40 (n1 ln(delta) separate)", "ij"),
    ("R5_IDEAL", "Region5_cp0", "IAPWS R7-97(2012), Table 37: region 5, ideal-gas part, Eq. (33)", "j0"),
    ("R5_RES", "Region5", "IAPWS R7-97(2012), Table 38: region 5, residual part, Eq. (34)", "ij"),
    ("R3A_T_PH", "Backward3a_T_Ph", "IAPWS SR3-03(2014), Table 3: sub-region 3a, T(p,h), Eq. (2)", "ij"),
    ("R3B_T_PH", "Backward3b_T_Ph", "IAPWS SR3-03(2014), Table 4: sub-region 3b, T(p,h), Eq. (3)", "ij"),
    ("R3A_V_PH", "Backward3a_v_Ph", "IAPWS SR3-03(2014), Table 6: sub-region 3a, v(p,h), Eq. (4)", "ij"),
    ("R3B_V_PH", "Backward3b_v_Ph", "IAPWS SR3-03(2014), Table 7: sub-region 3b, v(p,h), Eq. (5)", "ij"),
    ("R3A_T_PS", "Backward3a_T_Ps", "IAPWS SR3-03(2014), Table 10: sub-region 3a, T(p,s), Eq. (6)", "ij"),
    ("R3B_T_PS", "Backward3b_T_Ps", "IAPWS SR3-03(2014), Table 11: sub-region 3b, T(p,s), Eq. (7)", "ij"),
    ("R3A_V_PS", "Backward3a_v_Ps", "IAPWS SR3-03(2014), Table 13: sub-region 3a, v(p,s), Eq. (8)", "ij"),
    ("R3B_V_PS", "Backward3b_v_Ps", "IAPWS SR3-03(2014), Table 14: sub-region 3b, v(p,s), Eq. (9)", "ij"),
    # IAPWS SR2-01(2014), "Revised Supplementary Release on Backward Equations
    # for Pressure as a Function of Enthalpy and Entropy p(h,s) for Regions 1
    # and 2" (cited by equation number).
    ("R1_P_HS", "Backward1_P_hs", "IAPWS SR2-01(2014), Eq. (1): region 1, p(h,s)", "ij"),
    ("R2A_P_HS", "Backward2a_P_hs", "IAPWS SR2-01(2014), Eq. (3): sub-region 2a, p(h,s)", "ij"),
    ("R2B_P_HS", "Backward2b_P_hs", "IAPWS SR2-01(2014), Eq. (4): sub-region 2b, p(h,s)", "ij"),
    ("R2C_P_HS", "Backward2c_P_hs", "IAPWS SR2-01(2014), Eq. (5): sub-region 2c, p(h,s)", "ij"),
    # IAPWS SR4-04(2014), "Revised Supplementary Release on Backward Equations
    # p(h,s) for Region 3, Equations as a Function of h and s for the Region
    # Boundaries, and an Equation Tsat(h,s) for Region 4" (cited by equation
    # number).
    ("R3A_P_HS", "Backward3a_P_hs", "IAPWS SR4-04(2014), Eq. (1): sub-region 3a, p(h,s)", "ij"),
    ("R3B_P_HS", "Backward3b_P_hs", "IAPWS SR4-04(2014), Eq. (2): sub-region 3b, p(h,s)", "ij"),
    ("H1_SAT_S", "h1_s", "IAPWS SR4-04(2014), Eq. (3): saturated liquid h'_1(s), regions 1/4", "ij"),
    ("H3A_SAT_S", "h3a_s", "IAPWS SR4-04(2014), Eq. (4): saturated liquid h'_3a(s), regions 3a/4", "ij"),
    ("H2AB_SAT_S", "h2ab_s", "IAPWS SR4-04(2014), Eq. (5): saturated vapour h''_2ab(s), regions 2a-2b/4", "ij"),
    ("H2C3B_SAT_S", "h2c3b_s", "IAPWS SR4-04(2014), Eq. (6): saturated vapour h''_2c3b(s), regions 2c-3b/4", "ij"),
    ("H_B13_S", "h13_s", "IAPWS SR4-04(2014), Eq. (7): boundary B13 of regions 1 and 3, h(s)", "ij"),
    ("T_B23_HS", "t_hs", "IAPWS SR4-04(2014), Eq. (8): boundary B23 of regions 2 and 3, T(h,s)", "ij"),
    ("TSAT_HS", "Backward4_T_hs", "IAPWS SR4-04(2014), Eq. (9): region 4, T_sat(h,s)", "ij"),
]


def num(x):
    r = repr(float(x))
    if "e" not in r and "." not in r:
        r += ".0"
    return r


def main():
    print("//! IAPWS-IF97 coefficient tables. Generated by")
    print("//! tests/reference/gen_if97_coef.py from the Python package")
    print(f"//! iapws {VERSION} (module iapws._iapws97Constants); the table")
    print("//! named above each array is the published source.")
    print("//! Do not edit by hand.")
    print()
    for name, pre, src, kind in TABLES:
        if kind == "j0":
            jo = getattr(C, pre + "_Jo")
            no = getattr(C, pre + "_no")
            rows = [f"({int(j)}, {num(n)})" for j, n in zip(jo, no)]
            ty = "(i32, f64)"
        else:
            li = getattr(C, pre + "_Li")
            lj = getattr(C, pre + "_Lj")
            n = getattr(C, pre + "_n")
            assert len(li) == len(lj) == len(n)
            rows = []
            for i, j, c in zip(li, lj, n):
                if kind == "ij4":
                    i4 = float(i) * 4.0
                    assert i4 == int(i4)
                    i = int(i4)
                rows.append(f"({int(i)}, {int(j)}, {num(c)})")
            ty = "(i32, i32, f64)"
        print(f"/// {src}.")
        print(f"pub(super) const {name}: [{ty}; {len(rows)}] = [")
        for r in rows:
            print(f"    {r},")
        print("];")
        if name != TABLES[-1][0]:
            print()


if __name__ == "__main__":
    main()
