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
    assert!(e.contains("missing the argument `eta: ...`"), "{e}");
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
