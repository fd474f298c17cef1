//! Compression and expansion at a given polytropic (small-stage) efficiency.
//!
//! Along the path the efficiency applies to each infinitesimal stage:
//!
//! ```text
//! compression:  dh = v dp / eta_p
//! expansion:    dh = eta_p v dp
//! ```
//!
//! with v = v(p, h) taken from the substance's own model at every point
//! (`Substance::state(Spec::PH { .. })`), so the same code serves ideal
//! gases, mixtures, perfect gases, liquids and real fluids (water, and the
//! refrigerants through the same interface). The ODE is integrated in
//! x = ln p (dh/dx = p v / eta_p, resp. eta_p p v) by the Dormand–Prince
//! 5(4) embedded Runge–Kutta pair with adaptive steps; the local error is
//! held below 1e-12 of the estimated enthalpy change per unit of ln p, so
//! that the global error stays well below 1e-8 of the enthalpy change
//! (checked in the tests against closed forms).

use super::process::fmt_num;
use super::{Result, Spec, State, Substance, ThermoError};

/// Which way the path goes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Dir {
    Compression,
    Expansion,
}

fn check_eta_p(eta_p: f64) -> Result<()> {
    if eta_p.is_finite() && eta_p > 0.0 && eta_p <= 1.0 {
        Ok(())
    } else {
        Err(ThermoError::InvalidArgument(format!(
            "`eta_p` (polytropic efficiency) must be in (0, 1], got {}",
            fmt_num(eta_p)
        )))
    }
}

/// Adiabatic compressor with polytropic efficiency `eta_p`: integrates
/// dh = v dp / eta_p from the inlet to `p2` (Pa) on the substance's own
/// model and returns the outlet state at (p2, h2). Requires p2 > p1 and
/// 0 < eta_p <= 1; the inlet must be one the compressor accepts (see the
/// device rules in [`super::process`]).
pub fn compressor_polytropic(sub: &Substance, inlet: &State, p2: f64, eta_p: f64) -> Result<State> {
    check_eta_p(eta_p)?;
    super::process::check_device("compressor", sub, inlet, p2)?;
    let h2 = integrate(sub, inlet, p2, eta_p, Dir::Compression)?;
    super::process::outlet("compressor", sub, p2, h2)
}

/// Adiabatic turbine with polytropic efficiency `eta_p`: integrates
/// dh = eta_p v dp from the inlet down to `p2` (Pa) on the substance's own
/// model and returns the outlet state at (p2, h2). Requires p2 < p1 and
/// 0 < eta_p <= 1.
pub fn turbine_polytropic(sub: &Substance, inlet: &State, p2: f64, eta_p: f64) -> Result<State> {
    check_eta_p(eta_p)?;
    super::process::check_device("turbine", sub, inlet, p2)?;
    let h2 = integrate(sub, inlet, p2, eta_p, Dir::Expansion)?;
    super::process::outlet("turbine", sub, p2, h2)
}

// Dormand–Prince 5(4) coefficients (Dormand & Prince, J. Comput. Appl.
// Math. 6 (1980) 19–26).
const C: [f64; 7] = [0.0, 0.2, 0.3, 0.8, 8.0 / 9.0, 1.0, 1.0];
const A: [[f64; 6]; 7] = [
    [0.0; 6],
    [0.2, 0.0, 0.0, 0.0, 0.0, 0.0],
    [3.0 / 40.0, 9.0 / 40.0, 0.0, 0.0, 0.0, 0.0],
    [44.0 / 45.0, -56.0 / 15.0, 32.0 / 9.0, 0.0, 0.0, 0.0],
    [
        19372.0 / 6561.0,
        -25360.0 / 2187.0,
        64448.0 / 6561.0,
        -212.0 / 729.0,
        0.0,
        0.0,
    ],
    [
        9017.0 / 3168.0,
        -355.0 / 33.0,
        46732.0 / 5247.0,
        49.0 / 176.0,
        -5103.0 / 18656.0,
        0.0,
    ],
    [
        35.0 / 384.0,
        0.0,
        500.0 / 1113.0,
        125.0 / 192.0,
        -2187.0 / 6784.0,
        11.0 / 84.0,
    ],
];
/// Fifth-order weights (equal to the last row of A: first same as last).
const B5: [f64; 7] = [
    35.0 / 384.0,
    0.0,
    500.0 / 1113.0,
    125.0 / 192.0,
    -2187.0 / 6784.0,
    11.0 / 84.0,
    0.0,
];
/// Embedded fourth-order weights.
const B4: [f64; 7] = [
    5179.0 / 57600.0,
    0.0,
    7571.0 / 16695.0,
    393.0 / 640.0,
    -92097.0 / 339200.0,
    187.0 / 2100.0,
    1.0 / 40.0,
];

/// Relative local error allowed per unit of ln p.
const REL_TOL: f64 = 1e-12;
/// Most accepted plus rejected steps before giving up.
const MAX_STEPS: usize = 20_000;

/// h2 at p2 along the polytropic path from `inlet`.
fn integrate(sub: &Substance, inlet: &State, p2: f64, eta: f64, dir: Dir) -> Result<f64> {
    let factor = match dir {
        Dir::Compression => 1.0 / eta,
        Dir::Expansion => eta,
    };
    // dh/d(ln p) = factor p v(p, h).
    let rhs = |x: f64, h: f64| -> Result<f64> {
        let p = x.exp();
        let st = sub.state(Spec::PH { p, h })?;
        Ok(factor * p * st.v)
    };
    let (x0, x1) = (inlet.p.ln(), p2.ln());
    let span = x1 - x0;
    // Scale of dh/dx for the error tolerance: at the inlet.
    let scale = (factor * inlet.p * inlet.v).abs().max(1e-300);
    let tol_per_x = REL_TOL * scale;
    let mut x = x0;
    let mut h = inlet.h;
    let mut step = span / 16.0;
    let mut k0 = factor * inlet.p * inlet.v;
    let mut n = 0;
    while (x1 - x) * span.signum() > 0.0 {
        n += 1;
        if n > MAX_STEPS {
            return Err(ThermoError::NoConvergence(format!(
                "the polytropic path from p1 = {} Pa to p2 = {} Pa did not converge",
                fmt_num(inlet.p),
                fmt_num(p2)
            )));
        }
        let last = (x + step - x1) * span.signum() >= 0.0;
        let dx = if last { x1 - x } else { step };
        let mut k = [0.0f64; 7];
        k[0] = k0;
        for i in 1..7 {
            let hi = h + dx * (0..i).map(|j| A[i][j] * k[j]).sum::<f64>();
            k[i] = rhs(x + C[i] * dx, hi)?;
        }
        let h5 = h + dx * (0..7).map(|j| B5[j] * k[j]).sum::<f64>();
        let h4 = h + dx * (0..7).map(|j| B4[j] * k[j]).sum::<f64>();
        let err = (h5 - h4).abs();
        let allowed = tol_per_x * dx.abs();
        if err <= allowed || dx.abs() < 1e-12 * span.abs() {
            x = if last { x1 } else { x + dx };
            h = h5;
            k0 = k[6];
        }
        let grow = if err == 0.0 {
            5.0
        } else {
            (0.9 * (allowed / err).powf(0.2)).clamp(0.2, 5.0)
        };
        step = dx * grow;
    }
    Ok(h)
}

#[cfg(test)]
mod tests {
    use super::super::ideal_gas::IdealGas;
    use super::super::perfect_gas::PerfectGas;
    use super::*;

    const REF: &str = include_str!(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/../tests/reference/polytropic_reference.csv"
    ));

    fn tp(sub: &Substance, t: f64, p: f64) -> State {
        sub.state(Spec::TP { t, p }).unwrap()
    }

    #[test]
    fn perfect_gas_closed_form() {
        // Closed form for constant cp (perfect gas): with h = cp T and
        // v = R T / p, compression dh = v dp / eta_p gives
        // cp dT = R T dp / (p eta_p)  =>  dT / T = R / (cp eta_p) dp / p
        // =>  T2/T1 = (p2/p1)^(R / (cp eta_p)) = (p2/p1)^((k-1)/(k eta_p)),
        // using R/cp = (k-1)/k. Expansion dh = eta_p v dp gives the exponent
        // eta_p (k-1)/k instead. The integrator must reproduce the enthalpy
        // change to 1e-8 of itself (DEVELOPERS.md, "Efficiencies").
        let sub = Substance::PerfectGas(PerfectGas::from_k(287.0, 1.4).unwrap());
        for (t1, p1, p2, eta) in [
            (300.0, 1e5, 8e5, 0.85),
            (290.0, 1e5, 40e5, 0.78),
            (300.0, 1e5, 1.05e5, 1.0),
        ] {
            let inlet = tp(&sub, t1, p1);
            let out = compressor_polytropic(&sub, &inlet, p2, eta).unwrap();
            let t2 = t1 * (p2 / p1).powf(0.4 / (1.4 * eta));
            let dh_exact = sub.state(Spec::TP { t: t2, p: p2 }).unwrap().h - inlet.h;
            let dh = out.h - inlet.h;
            assert!(
                (dh - dh_exact).abs() <= 1e-8 * dh_exact.abs(),
                "{t1} K {p1}->{p2}: dh {dh} vs {dh_exact}"
            );
        }
        let inlet = tp(&sub, 1200.0, 16e5);
        let out = turbine_polytropic(&sub, &inlet, 1e5, 0.9).unwrap();
        let t2 = 1200.0 * (1.0f64 / 16.0).powf(0.9 * 0.4 / 1.4);
        let dh_exact = sub.state(Spec::TP { t: t2, p: 1e5 }).unwrap().h - inlet.h;
        assert!(((out.h - inlet.h) - dh_exact).abs() <= 1e-8 * dh_exact.abs());
        // eta_p = 1 is the isentropic path: the closed form and isentropic()
        // agree.
        let inlet = tp(&sub, 300.0, 1e5);
        let a = compressor_polytropic(&sub, &inlet, 8e5, 1.0).unwrap();
        let b = super::super::process::isentropic(&sub, &inlet, 8e5).unwrap();
        assert!((a.t - b.t).abs() < 1e-8 * b.t);
    }

    #[test]
    fn ideal_gas_closed_form_with_variable_cp() {
        // Closed form for an ideal gas with cp(T): cp dT = R T dp/(p eta_p)
        // => ∫cp/T dT = s°(T2) − s°(T1) = (R/eta_p) ln(p2/p1) (compression),
        // resp. eta_p R ln(p2/p1) (expansion). T2 from s° by the model's own
        // inverse (converged to 1e-11): the integrated Δh must agree to 1e-8.
        let natural_gas = IdealGas::mixture(&[("CH4", 0.92), ("N2", 0.08)]).unwrap();
        for name in ["air", "CH4", "CO2", "H2", "mixture"] {
            let g = if name == "mixture" {
                natural_gas.clone()
            } else {
                IdealGas::by_name(name).unwrap()
            };
            let sub = Substance::IdealGas(g.clone());
            let inlet = tp(&sub, 300.0, 1e5);
            let out = compressor_polytropic(&sub, &inlet, 12e5, 0.82).unwrap();
            let s0 = g.s0(300.0) + g.r() / 0.82 * 12f64.ln();
            let t2 = g.t_from_s0(s0, 600.0).unwrap();
            let dh_exact = g.h(t2) - inlet.h;
            assert!(
                ((out.h - inlet.h) - dh_exact).abs() <= 1e-8 * dh_exact.abs(),
                "{name}: {} vs {dh_exact}",
                out.h - inlet.h
            );
            let inlet = tp(&sub, 1500.0, 20e5);
            let out = turbine_polytropic(&sub, &inlet, 1e5, 0.9).unwrap();
            let s0 = g.s0(1500.0) + g.r() * 0.9 * (1.0f64 / 20.0).ln();
            let t2 = g.t_from_s0(s0, 700.0).unwrap();
            let dh_exact = g.h(t2) - inlet.h;
            assert!(
                ((out.h - inlet.h) - dh_exact).abs() <= 1e-8 * dh_exact.abs(),
                "{name} turbine: {} vs {dh_exact}",
                out.h - inlet.h
            );
        }
    }

    #[test]
    fn incompressible_closed_form() {
        // The integrator on a liquid: v constant gives Δh = v Δp / eta_p
        // exactly. (The compressor itself refuses a liquid by the device
        // rules: a liquid is pumped.)
        let m = super::super::incompressible::Incompressible::new(4180.0, 1000.0).unwrap();
        let sub = Substance::Incompressible(m);
        let inlet = tp(&sub, 300.0, 1e5);
        let h2 = integrate(&sub, &inlet, 50e5, 0.7, Dir::Compression).unwrap();
        let dh = 1e-3 * 49e5 / 0.7;
        assert!(((h2 - inlet.h) - dh).abs() < 1e-10 * dh);
        let e = compressor_polytropic(&sub, &inlet, 50e5, 0.7).unwrap_err();
        assert!(e.to_string().contains("use pump"), "{e}");
    }

    fn ref_rows() -> Vec<Vec<&'static str>> {
        REF.lines()
            .filter(|l| !l.starts_with('#'))
            .skip(1)
            .map(|l| l.split(',').collect())
            .collect()
    }

    #[test]
    fn against_independent_small_step_integrations() {
        // Reference: tests/reference/polytropic_reference.csv, written by
        // tests/reference/gen_polytropic.py: an independent fixed-step RK4
        // integration of the same ODE (4000 steps in ln p) on cantera 3.2.0
        // (nasa_gas.yaml; air = the engine's 4-gas mixture) and on iapws
        // 1.5.5 (IAPWS97(P, h)).
        // Tolerances: the gas data sets differ by up to 0.1 % in cp (see the
        // ideal_gas tests), so Δh within 0.1 % and T2 within 0.1 % of
        // |T2 − T1| + 0.05 K. iapws evaluates (P, h) by the IF97 backward
        // equations without refinement (T off by up to about 25 mK, IF97's
        // stated backward consistency), so steam Δh within 2e-5 relative and
        // T2 within 0.05 K.
        let mut n = 0;
        for r in ref_rows() {
            let f = |i: usize| -> f64 { r[i].parse().unwrap() };
            let sub = match r[1] {
                "water" => Substance::water(),
                name => Substance::IdealGas(IdealGas::by_name(name).unwrap()),
            };
            let (t1, p1, p2, eta, t2, dh) = (f(3), f(4), f(5), f(6), f(7), f(8));
            let inlet = tp(&sub, t1, p1);
            let out = match r[2] {
                "compressor" => compressor_polytropic(&sub, &inlet, p2, eta).unwrap(),
                "turbine" => turbine_polytropic(&sub, &inlet, p2, eta).unwrap(),
                other => panic!("unknown device {other}"),
            };
            let (tol_h, tol_t) = if r[1] == "water" {
                (2e-5 * dh.abs(), 0.05)
            } else {
                (1e-3 * dh.abs(), 1e-3 * (t2 - t1).abs() + 0.05)
            };
            assert!(
                ((out.h - inlet.h) - dh).abs() <= tol_h,
                "{}: dh {} vs {dh}",
                r[0],
                out.h - inlet.h
            );
            assert!(
                (out.t - t2).abs() <= tol_t,
                "{}: T2 {} vs {t2}",
                r[0],
                out.t
            );
            if r[1] == "water" && !r[9].is_empty() {
                let x: f64 = r[9].parse().unwrap();
                let got = out.x.unwrap_or(1.0);
                assert!((got - x).abs() < 1e-4, "{}: x {got} vs {x}", r[0]);
            }
            n += 1;
        }
        assert!(n >= 5, "{n}");
    }

    #[test]
    fn steam_path_self_consistent() {
        // Halving the tolerance must not move h2 by more than 1e-8 of Δh:
        // compare with a plain fixed-step RK4 on 20 000 steps (global error
        // O(step^4), far below 1e-8 here).
        let sub = Substance::water();
        let inlet = tp(&sub, 773.15, 10e6);
        let out = turbine_polytropic(&sub, &inlet, 10e3, 0.88).unwrap();
        let (x0, x1) = (10e6f64.ln(), 10e3f64.ln());
        let n = 20_000;
        let dx = (x1 - x0) / n as f64;
        let f = |x: f64, h: f64| {
            let p = f64::exp(x);
            0.88 * p * sub.state(Spec::PH { p, h }).unwrap().v
        };
        let mut h = inlet.h;
        for i in 0..n {
            let x = x0 + i as f64 * dx;
            let k1 = f(x, h);
            let k2 = f(x + dx / 2.0, h + dx / 2.0 * k1);
            let k3 = f(x + dx / 2.0, h + dx / 2.0 * k2);
            let k4 = f(x + dx, h + dx * k3);
            h += dx / 6.0 * (k1 + 2.0 * k2 + 2.0 * k3 + k4);
        }
        let dh = out.h - inlet.h;
        assert!(
            ((h - inlet.h) - dh).abs() < 1e-8 * dh.abs(),
            "{h} vs {}",
            out.h
        );
        assert!(out.x.is_some(), "ends wet");
    }

    #[test]
    fn polytropic_errors() {
        let sub = Substance::IdealGas(IdealGas::by_name("air").unwrap());
        let inlet = tp(&sub, 300.0, 1e5);
        assert_eq!(
            compressor_polytropic(&sub, &inlet, 8e5, 1.2)
                .unwrap_err()
                .to_string(),
            "`eta_p` (polytropic efficiency) must be in (0, 1], got 1.2"
        );
        assert!(compressor_polytropic(&sub, &inlet, 0.5e5, 0.8).is_err());
        assert!(turbine_polytropic(&sub, &inlet, 2e5, 0.8).is_err());
    }
}
