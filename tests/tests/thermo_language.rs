//! The thermodynamic built-ins as the worksheet language exposes them:
//! check-time errors for fields and pairs a model cannot supply, worded
//! argument errors, range errors, warnings, and common-practice results.

use sheaf_engine::Model;

fn run(src: &str) -> Model {
    let mut m = Model::new(src).unwrap_or_else(|d| panic!("{src}\n{d:#?}"));
    m.evaluate();
    let errs = m.runtime_errors();
    assert!(errs.is_empty(), "{errs:#?}");
    m
}

fn check_errors(src: &str) -> String {
    match Model::new(src) {
        Ok(_) => panic!("expected check errors for:\n{src}"),
        Err(d) => d
            .into_iter()
            .map(|d| d.message)
            .collect::<Vec<_>>()
            .join("\n"),
    }
}

fn runtime_error(src: &str) -> String {
    let mut m = Model::new(src).unwrap_or_else(|d| panic!("{src}\n{d:#?}"));
    m.evaluate();
    let e = m.runtime_errors();
    assert!(!e.is_empty(), "expected a run-time error for:\n{src}");
    e[0].message.clone()
}

#[test]
fn the_iapws_example_point() {
    // IAPWS R7-97(2012) region 2 at 3 MPa, 673.15 K: h = 3231.57 kJ/kg (also iapws 1.5.5).
    let m = run("w = fluid(\"water\")\nh : kJ/kg = state(w, p: 3 MPa, T: 400 degC).h\n");
    let h = m.number("h").unwrap();
    assert!((h - 3_231_570.0).abs() < 10.0, "{h}");
}

#[test]
fn quality_of_a_gas_is_a_check_time_error() {
    let e = check_errors("g = ideal_gas(\"air\")\nst = state(g, T: 300 K, p: 1 bar)\nq = st.x\n");
    assert!(e.contains("has no `.x`"), "{e}");
    let e = check_errors("g = ideal_gas(\"air\")\nst = state(g, p: 1 bar, x: 0.5)\n");
    assert!(e.contains("cannot be fixed by (p, x)"), "{e}");
}

#[test]
fn field_dimensions_are_known_to_the_checker() {
    let e = check_errors(
        "w = fluid(\"water\")\nst = state(w, T: 300 K, p: 1 bar)\nbad = st.h + st.s\n",
    );
    assert!(
        e.contains("specific energy") && e.contains("specific entropy"),
        "{e}"
    );
    let e = check_errors(
        "w = fluid(\"water\")\nst = state(w, T: 300 K, p: 1 bar)\nbad = st.enthalpy\n",
    );
    assert!(e.contains("unknown field"), "{e}");
}

#[test]
fn argument_errors_are_worded() {
    let e = check_errors(
        "g = ideal_gas(\"air\")\nst = state(g, T: 300 K, p: 1 bar)\nb = compressor(st, p: 300 K, eta: 0.8)\n",
    );
    assert!(e.contains("`p` of `compressor` must be pressure"), "{e}");
    let e = check_errors(
        "g = ideal_gas(\"air\")\nst = state(g, T: 300 K, p: 1 bar)\nb = compressor(st, p: 3 bar)\n",
    );
    assert!(
        e.contains("needs an efficiency: `eta:` (isentropic) or `eta_p:`"),
        "{e}"
    );
    let e = check_errors("g = ideal_gas(\"argon\")\n");
    assert!(e.contains("argon"), "{e}");
    let e = check_errors(
        "g = ideal_gas(\"air\")\nst = state(g, T: 300 K, p: 1 bar)\nb = pump(st, p: 3 bar, eta: 0.8)\n",
    );
    assert!(e.contains("`pump` needs a liquid"), "{e}");
    let e = check_errors("g = ideal_gas(\"air\")\nst = state(g, T: 10 degC_diff, p: 1 bar)\n");
    assert!(e.contains("absolute temperature"), "{e}");
}

#[test]
fn efficiency_above_one_and_a_compressor_that_expands_are_errors() {
    let base = "g = ideal_gas(\"air\")\nst = state(g, T: 300 K, p: 1 bar)\n";
    let e = runtime_error(&format!("{base}b = compressor(st, p: 3 bar, eta: 1.3)\n"));
    assert!(e.contains("`eta` must be in (0, 1], got 1.3"), "{e}");
    let e = runtime_error(&format!("{base}b = compressor(st, p: 0.5 bar, eta: 0.8)\n"));
    assert!(e.contains("compressor must raise the pressure"), "{e}");
    let e = runtime_error(&format!("{base}b = turbine(st, p: 2 bar, eta: 0.8)\n"));
    assert!(e.contains("turbine must lower the pressure"), "{e}");
}

#[test]
fn states_outside_a_model_range_name_the_range() {
    let e = runtime_error("g = ideal_gas(\"N2\")\nst = state(g, T: 7000 K, p: 1 bar)\n");
    assert!(e.contains("6000 K"), "{e}");
    let e = runtime_error("w = fluid(\"water\")\nst = state(w, T: 1200 degC, p: 80 MPa)\n");
    assert!(e.contains("IAPWS-IF97") && e.contains("MPa"), "{e}");
}

#[test]
fn common_practice_results() {
    // Common practice: isentropic pumping of an incompressible liquid leaves T unchanged
    // (ds = c ln(T2/T1) = 0); a throttle keeps h; perfect gas k = 1.4 from 300 K at
    // pressure ratio 8 gives T2s = 300 * 8^(0.4/1.4) K (closed form).
    let m = run("l = incompressible(c: 4.18 kJ/(kg K), rho: 998 kg/m^3)\n\
         a = state(l, T: 300 K, p: 1 bar)\n\
         b = isentropic(a, p: 50 bar)\n\
         dT = b.T - a.T\n\
         w = fluid(\"water\")\n\
         s1 = state(w, T: 250 degC, p: 20 bar)\n\
         s2 = throttle(s1, p: 5 bar)\n\
         dh = s2.h - s1.h\n\
         pg = perfect_gas(R: 287 J/(kg K), k: 1.4)\n\
         c1 = state(pg, T: 300 K, p: 1 bar)\n\
         c2 = isentropic(c1, p: 8 bar)\n\
         T2s = c2.T\n");
    assert!(m.number("dT").unwrap().abs() < 1e-9);
    assert!(m.number("dh").unwrap().abs() < 1e-6);
    let t2s = 300.0 * 8f64.powf(0.4 / 1.4);
    assert!((m.number("T2s").unwrap() - t2s).abs() < 1e-9 * t2s);
}

#[test]
fn warnings_for_model_limits_reach_the_report() {
    // Perfect gas over a 350 K span: constant cp is doubtful (common practice: > 200 K).
    let m = run("pg = perfect_gas(R: 287 J/(kg K), cp: 1005 J/(kg K))\n\
         a = state(pg, T: 300 K, p: 1 bar)\n\
         b = compressor(a, p: 20 bar, eta: 0.8)\n");
    let r = m.report();
    assert!(
        r.warnings
            .iter()
            .any(|w| w.diagnostic.message.contains("constant cp")),
        "{:?}",
        r.warnings
    );
}

#[test]
fn two_phase_states_have_quality_and_single_phase_ones_do_not() {
    let m = run("w = fluid(\"water\")\na = state(w, p: 1 bar, x: 0.25)\nq = a.x\n");
    assert!((m.number("q").unwrap() - 0.25).abs() < 1e-12);
    let e = runtime_error("w = fluid(\"water\")\na = state(w, p: 1 bar, T: 20 degC)\nq = a.x\n");
    assert!(e.contains("quality"), "{e}");
}

#[test]
fn substances_have_molar_mass_and_gas_constant_fields() {
    let src = "air = ideal_gas(\"air\")\npg = perfect_gas(R: 287 J/(kg K), k: 1.4)\n\
               w = fluid(\"water\")\nM_air = air.M\nR_air = air.R\nM_pg = pg.M\nM_w = w.M\n\
               n_dot = 1 kg/s / M_air\n";
    let mut m = sheaf_engine::Model::new(src).unwrap();
    m.evaluate();
    assert!(m.runtime_errors().is_empty(), "{:?}", m.runtime_errors());
    let r_u = 8.314_462_618; // CODATA 2018
    // R = R_u / M for every gas model (definition of the specific gas constant).
    let (m_air, r_air) = (m.number("M_air").unwrap(), m.number("R_air").unwrap());
    assert!((m_air * r_air / r_u - 1.0).abs() < 1e-12);
    // Dry air 28.9645 g/mol (U.S. Standard Atmosphere 1976 composition; value from memory): 1e-4.
    assert!((m_air / 0.028_964_5 - 1.0).abs() < 1e-4, "{m_air}");
    assert!((m.number("M_pg").unwrap() - r_u / 287.0).abs() < 1e-15);
    // Water: M = 18.015268 g/mol (IAPWS R6-95(2018), from memory); IF97's
    // R = 461.526 J/(kg K) with its R_u = 8.31451 J/(mol K) agrees to 1e-6.
    let m_w = m.number("M_w").unwrap();
    assert!((m_w / 0.018_015_268 - 1.0).abs() < 1e-12);
    assert!((m_w / (8.314_51 / 461.526) - 1.0).abs() < 1e-6);
    // A molar flow: mass flow / M, in mol/s.
    assert!((m.number("n_dot").unwrap() - 1.0 / m_air).abs() < 1e-12);
    // Fields of a substance are refused on a state, and vice versa.
    let e = sheaf_engine::Model::new(
        "g = ideal_gas(\"N2\")\nst = state(g, T: 300 K, p: 1 bar)\nx = st.M\n",
    )
    .unwrap_err();
    assert!(
        e[0].message.contains("field of the substance"),
        "{}",
        e[0].message
    );
    let e = sheaf_engine::Model::new(
        "l = incompressible(c: 4.18 kJ/(kg K), rho: 998 kg/m^3)\nx = l.M\n",
    )
    .unwrap_err();
    assert!(e[0].message.contains("has no `.M`"), "{}", e[0].message);
}

#[test]
fn saturation_pairs_of_water_follow_the_if97_tables() {
    let src = "w = fluid(\"water\")\nsp = saturation(w, p: 0.1 MPa)\nst = saturation(w, T: 300 K)\n\
               T1 = sp.T\np1 = st.p\nhf = sp.liquid.h\nhg = sp.vapour.h\nxf = sp.liquid.x\n\
               xg = sp.vapour.x\n";
    let mut m = sheaf_engine::Model::new(src).unwrap();
    m.evaluate();
    assert!(m.runtime_errors().is_empty(), "{:?}", m.runtime_errors());
    // IAPWS R7-97(2012) Table 36: T_s(0.1 MPa) = 0.372755919e3 K; Table 35:
    // p_s(300 K) = 0.353658941e-2 MPa (9 significant figures: half a unit
    // of the last printed digit).
    assert!((m.number("T1").unwrap() - 372.755_919).abs() < 5e-7);
    assert!((m.number("p1").unwrap() - 3_536.589_41).abs() < 5e-6);
    // The phases are on the saturation line: x = 0 and x = 1; h_fg at 1 bar
    // is about 2258 kJ/kg (steam tables, common knowledge): 0.1 %.
    assert_eq!(m.number("xf"), Some(0.0));
    assert_eq!(m.number("xg"), Some(1.0));
    let hfg = m.number("hg").unwrap() - m.number("hf").unwrap();
    assert!((hfg / 2_258e3 - 1.0).abs() < 1e-3, "{hfg}");
    // Only real fluids have a saturation line; one of T or p.
    assert!(
        sheaf_engine::Model::new("g = ideal_gas(\"N2\")\ns = saturation(g, p: 1 bar)\n").is_err()
    );
    assert!(
        sheaf_engine::Model::new("w = fluid(\"water\")\ns = saturation(w, p: 1 bar, T: 300 K)\n")
            .is_err()
    );
}

#[test]
fn polytropic_compressor_of_a_perfect_gas_matches_the_closed_form() {
    // Closed form for constant cp: T2/T1 = (p2/p1)^((k-1)/(k eta_p)) —
    // from dh = v dp / eta_p, cp dT = R T dp / (p eta_p).
    let src = "g = perfect_gas(R: 287 J/(kg K), k: 1.4)\nst1 = state(g, T: 300 K, p: 1 bar)\n\
               st2 = compressor(st1, p: 8 bar, eta_p: 0.85)\nT2 = st2.T\n\
               t3 = turbine(st2, p: 1 bar, eta_p: 0.9)\nT3 = t3.T\n";
    let mut m = sheaf_engine::Model::new(src).unwrap();
    m.evaluate();
    assert!(m.runtime_errors().is_empty(), "{:?}", m.runtime_errors());
    let want = 300.0 * 8f64.powf(0.4 / (1.4 * 0.85));
    assert!(
        (m.number("T2").unwrap() / want - 1.0).abs() < 1e-8,
        "{}",
        m.number("T2").unwrap()
    );
    // Expansion: T3/T2 = (p3/p2)^((k-1) eta_p / k).
    let want3 = want * (1.0f64 / 8.0).powf(0.4 * 0.9 / 1.4);
    assert!((m.number("T3").unwrap() / want3 - 1.0).abs() < 1e-8);
    // One efficiency, not both, not none.
    for bad in ["eta: 0.8, eta_p: 0.85", "p: 8 bar"] {
        let src = format!(
            "g = perfect_gas(R: 287 J/(kg K), k: 1.4)\nst1 = state(g, T: 300 K, p: 1 bar)\n\
             st2 = compressor(st1, p: 8 bar, {bad})\n"
        );
        assert!(
            sheaf_engine::Model::new(src.replace(", p: 8 bar)", ")")).is_err(),
            "{bad}"
        );
    }
}

#[test]
fn mixing_two_water_streams_closes_the_energy_balance() {
    // 1 kg/s at 20 °C and 3 kg/s of steam at 150 °C, both 2 bar, mixed to
    // 2 bar: h3 = (h_a + 3 h_b)/4 exactly; the outlet is wet steam; the
    // entropy generated is positive (second law).
    let src = "w = fluid(\"water\")\na = state(w, p: 2 bar, T: 20 degC)\n\
               b = state(w, p: 2 bar, T: 150 degC)\nc = mix(a, 1 kg/s, b, 3 kg/s, p: 2 bar)\n\
               dh = c.h - (a.h + 3 * b.h) / 4\nS_gen = 4 kg/s * c.s - 1 kg/s * a.s - 3 kg/s * b.s\n\
               x3 = c.x\n";
    let mut m = sheaf_engine::Model::new(src).unwrap();
    m.evaluate();
    assert!(m.runtime_errors().is_empty(), "{:?}", m.runtime_errors());
    assert!(m.number("dh").unwrap().abs() < 1e-6);
    assert!(m.number("S_gen").unwrap() > 0.0);
    let x = m.number("x3").unwrap();
    assert!(x > 0.0 && x < 1.0, "{x}");
    let e = sheaf_engine::Model::new(
        "w = fluid(\"water\")\ng = ideal_gas(\"air\")\na = state(w, p: 2 bar, T: 20 degC)\n\
         b = state(g, p: 2 bar, T: 150 degC)\nc = mix(a, 1 kg/s, b, 3 kg/s, p: 2 bar)\n",
    )
    .unwrap_err();
    assert!(e[0].message.contains("one substance"), "{}", e[0].message);
}

#[test]
fn a_natural_gas_mixture_by_mole_fraction() {
    // M = 0.92 M_CH4 + 0.08 M_N2 (ideal mixture; M_CH4 = 16.04246, M_N2 =
    // 28.0134 g/mol, IUPAC atomic weights, from memory): 1e-4.
    let src = "ng = gas_mix(\"CH4\", 0.92, \"N2\", 0.08)\nM = ng.M\n";
    let mut m = sheaf_engine::Model::new(src).unwrap();
    m.evaluate();
    let want = 0.92 * 16.042_46e-3 + 0.08 * 28.013_4e-3;
    assert!((m.number("M").unwrap() / want - 1.0).abs() < 1e-4);
    // Fractions must sum to 1.
    let mut bad = sheaf_engine::Model::new("ng = gas_mix(\"CH4\", 0.9, \"N2\", 0.08)\n").unwrap();
    bad.evaluate();
    assert_eq!(bad.runtime_errors().len(), 1);
    assert!(sheaf_engine::Model::new("ng = gas_mix(\"CH4\", 0.92, \"N2\")\n").is_err());
    assert!(sheaf_engine::Model::new("ng = gas_mix(\"CH4\", 0.92 m, \"N2\", 0.08)\n").is_err());
}

#[test]
fn subtracting_enthalpies_of_different_substances_warns() {
    // ideal_gas("H2O") h is sensible enthalpy from 298.15 K; IF97 h is from
    // the triple-point liquid: their difference means nothing.
    let src = "g = ideal_gas(\"H2O\")\nw = fluid(\"water\")\na = state(g, T: 500 K, p: 1 bar)\n\
               b = state(w, T: 500 K, p: 1 bar)\ndh = a.h - b.h\nc = state(w, T: 400 K, p: 1 bar)\n\
               ok = b.h - c.h\n";
    let mut m = sheaf_engine::Model::new(src).unwrap();
    m.evaluate();
    let r = m.report();
    let ws: Vec<String> = r.warnings.iter().map(|w| w.to_string()).collect();
    assert_eq!(ws.len(), 1, "{ws:?}");
    assert!(
        ws[0].contains("`dh`") && ws[0].contains("different substances"),
        "{ws:?}"
    );
}
