//! Cases, sweeps and `find` through the engine API: each gives exactly
//! the values of the equivalent `--set` runs; `find` against a closed
//! form and against bisection; failing sweep points; checker errors.

use sheaf_engine::Model;
use sheaf_engine::eval::Value;

fn example() -> String {
    std::fs::read_to_string(
        std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("../worksheets/plant_air_whatif.sheaf"),
    )
    .unwrap()
}

fn model(src: &str) -> Model {
    let mut m = Model::new(src).unwrap_or_else(|d| panic!("{d:#?}"));
    m.evaluate();
    m
}

/// Every value of two models, compared exactly (numbers bit for bit,
/// states field by field).
fn assert_same(a: &Model, b: &Model, what: &str) {
    assert_eq!(a.values().len(), b.values().len());
    let mut numbers = 0;
    for (i, (x, y)) in a.values().iter().zip(b.values()).enumerate() {
        let name = a.nodes()[i]
            .name
            .as_ref()
            .map_or("check", |n| n.name.as_str());
        match (x, y) {
            (Value::Num(p), Value::Num(q)) => {
                assert_eq!(p.to_bits(), q.to_bits(), "{what}: {name}: {p} vs {q}");
                numbers += 1;
            }
            _ => assert_eq!(x, y, "{what}: {name}"),
        }
    }
    assert!(numbers >= 4, "{what}: only {numbers} numbers compared");
}

#[test]
fn cases_give_exactly_the_values_of_the_equivalent_set_runs() {
    let src = example();
    let base = model(&src);
    assert_eq!(base.cases().len(), 3);
    for case in base.cases() {
        let mut by_case = model(&src);
        by_case.apply_case(&case.name).unwrap();
        by_case.evaluate();
        let mut by_set = model(&src);
        for s in &case.settings {
            let name = base.nodes()[s.input].name.as_ref().unwrap().name.clone();
            by_set.set_input_text(&name, &s.text).unwrap();
        }
        by_set.evaluate();
        assert_same(&by_case, &by_set, &case.name);
        // A fresh model with only the --set values: the same again (no
        // trace of the evaluation order).
        let mut fresh = Model::new(src.as_str()).unwrap();
        for s in &case.settings {
            let name = base.nodes()[s.input].name.as_ref().unwrap().name.clone();
            fresh.set_input_text(&name, &s.text).unwrap();
        }
        fresh.evaluate();
        assert_same(&by_case, &fresh, &case.name);
    }
    // hot_day: T1 = 36 degC is set and marked as set by the case.
    let mut hot = model(&src);
    hot.apply_case("hot_day").unwrap();
    hot.evaluate();
    assert_eq!(hot.number("T1"), Some(309.15));
    let t1 = hot.node_index("T1").unwrap();
    assert!(hot.override_of(t1).is_some());
    assert!(
        hot.apply_case("no_such_case")
            .unwrap_err()
            .contains("hot_day")
    );
}

/// Sweep every point, then compare each with a `set_input` run.
fn sweep_matches_set_runs(src: &str, k: usize) -> usize {
    let mut m = model(src);
    let sweep = m.sweeps()[k].clone();
    let input = m.nodes()[sweep.input].name.as_ref().unwrap().name.clone();
    let mut got: Vec<(f64, Option<Vec<f64>>)> = Vec::new();
    let summary = m
        .run_sweep(k, |p| got.push((p.x, p.result.ok().map(<[f64]>::to_vec))))
        .unwrap();
    assert_eq!(summary.points, sweep.points.len());
    assert_eq!(got.len(), sweep.points.len());
    let mut compared = 0;
    for (x, vals) in got {
        let mut s = model(src);
        s.set_input(&input, x).unwrap();
        s.evaluate();
        let vals = vals.expect("every point evaluates");
        for (c, col) in sweep.show.iter().enumerate() {
            let want = col.value_in(s.values()).unwrap();
            assert_eq!(vals[c].to_bits(), want.to_bits(), "{} at {x}", col.name);
            compared += 1;
        }
    }
    // The model is left as it was.
    let fresh = model(src);
    assert_same(&m, &fresh, "after the sweep");
    compared
}

#[test]
fn sweeps_give_exactly_the_values_of_the_equivalent_set_runs() {
    // With a find (every point solves it again).
    assert_eq!(sweep_matches_set_runs(&example(), 0), 13 * 3);
    // Without a find: the straight-line pass.
    let src = "# s\ninput x = 2\ninput a = 3 m\ngas = ideal_gas(\"air\")\n\
               input T = 300 K\nst = state(gas, T: T * x, p: 1 bar)\n\
               y: m = a * x ^ 2 + a\nz = if x > 2.5 then sqrt(x) else ln(x)\n\
               check y <= 100 m\n\
               sweep x from 1 to 3 count 9 show y, z, st.h\n";
    assert_eq!(sweep_matches_set_runs(src, 0), 9 * 3);
}

#[test]
fn sweep_points_follow_the_design_rules() {
    let m = model(
        "# s\ninput p = 2 bar\ny = p / 1 bar\ncheck y > 0\n\
         sweep p from 2 bar to 1 bar step -0.25 bar show y\n\
         sweep p over 1 bar, 5 bar, 3 bar show y\n\
         sweep p from 0.7 bar to 0.9 bar step 0.05 bar show y\n",
    );
    let pts: Vec<Vec<f64>> = m.sweeps().iter().map(|s| s.points.clone()).collect();
    assert_eq!(pts[0], vec![2e5, 1.75e5, 1.5e5, 1.25e5, 1e5]);
    assert_eq!(pts[1], vec![1e5, 5e5, 3e5]);
    assert_eq!(pts[2].len(), 5, "0.9 bar is included: {:?}", pts[2]);
    assert_eq!(*pts[2].last().unwrap(), 0.9e5);
}

#[test]
fn a_failing_sweep_point_is_reported_and_the_rest_complete() {
    // y = 1/(x - 2) cannot be evaluated at x = 2.
    let src = "# f\ninput x = 1\ny = 1 / (x - 2)\ncheck y < 10\n\
               sweep x over 0, 1, 2, 3, 4 show y\n";
    let mut m = model(src);
    let mut out: Vec<(usize, Result<f64, String>)> = Vec::new();
    let s = m
        .run_sweep(0, |p| {
            out.push((p.index, p.result.map(|v| v[0]).map_err(str::to_string)))
        })
        .unwrap();
    assert_eq!(s.points, 5);
    assert_eq!(s.failed, 1);
    assert_eq!(out[0].1, Ok(-0.5));
    assert_eq!(out[1].1, Ok(-1.0));
    assert!(
        out[2].1.as_ref().unwrap_err().contains("division by zero"),
        "{:?}",
        out[2]
    );
    assert_eq!(out[3].1, Ok(1.0));
    assert_eq!(out[4].1, Ok(0.5));
}

#[test]
fn find_matches_the_closed_form_of_a_perfect_gas_compressor() {
    // Perfect gas, k = 1.4: T2s = T1 r^((k-1)/k) and
    // T2 = T1 + (T2s - T1)/eta = T1 (1 + (r^((k-1)/k) - 1)/eta).
    // Solved for the pressure ratio at which T2 reaches T_lim:
    //   r = (1 + eta (T_lim/T1 - 1))^(k/(k-1)).
    // T1 = 297.15 K, T_lim = 523.15 K, eta = 0.78:
    //   T_lim/T1 - 1 = 0.760559; 1 + 0.78 * 0.760559 = 1.593236;
    //   ln 1.593236 = 0.465765; r = exp(3.5 * 0.465765) = 5.1048
    //   (the same in f64 below, to full precision).
    let src = "# c\ninput T1 = 297.15 K\ninput p1 = 1 bar\ninput eta = 0.78\n\
               input T_lim = 523.15 K\ninput p2 = 5 bar\n\
               gas = perfect_gas(R: 287.05 J/(kg K), k: 1.4)\n\
               st1 = state(gas, T: T1, p: p1)\nst2 = compressor(st1, p: p2, eta: eta)\n\
               r = p2 / p1\ncheck st2.T <= T_lim + 1 K\n\
               find p2 in 1.5 bar .. 20 bar where st2.T = T_lim\n";
    let m = model(src);
    let (t1, tl, eta, k) = (297.15f64, 523.15f64, 0.78f64, 1.4f64);
    let r = (1.0 + eta * (tl / t1 - 1.0)).powf(k / (k - 1.0));
    assert!((r - 5.1048).abs() < 1e-4, "{r}");
    let got = m.number("r").unwrap();
    assert!(((got - r) / r).abs() < 1e-9, "{got} vs {r}");
    let p2 = m.node_index("p2").unwrap();
    let f = m.found(p2).expect("found");
    assert!(f.iterations > 0 && f.iterations < 60, "{}", f.iterations);
    assert!(f.residual.abs() < 1e-8, "{}", f.residual);
    assert_eq!((f.low, f.high), (1.5e5, 20e5));
    let row = m.report();
    let json = serde_json::to_value(&row).unwrap();
    assert!(json.to_string().contains("\"found\""));
}

#[test]
fn find_on_an_ideal_gas_worksheet_agrees_with_bisection() {
    let body = "input T1 = 20 degC\ninput p1 = 1 bar\ninput eta = 0.82\n\
                gas = ideal_gas(\"air\")\nst1 = state(gas, T: T1, p: p1)\n\
                st2 = compressor(st1, p: p2, eta: eta)\nT2 = st2.T\ncheck T2 > 0 K\n";
    let with_find =
        format!("# g\ninput p2 = 4 bar\n{body}find p2 in 2 bar .. 12 bar where T2 = 200 degC\n");
    let m = model(&with_find);
    let found = m.number("p2").unwrap();
    // Bisection in the test on the worksheet without the find.
    let plain = format!("# g\ninput p2 = 4 bar\n{body}");
    let mut b = model(&plain);
    let target = 473.15;
    let mut t2 = |p: f64| {
        b.set_input("p2", p).unwrap();
        b.evaluate();
        b.number("T2").unwrap() - target
    };
    let (mut lo, mut hi) = (2e5, 12e5);
    assert!(t2(lo) < 0.0 && t2(hi) > 0.0);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if t2(mid) < 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    let bis = 0.5 * (lo + hi);
    assert!(((found - bis) / bis).abs() < 1e-9, "{found} vs {bis}");
    assert!((m.number("T2").unwrap() - target).abs() < 1e-7);
}

#[test]
fn a_bracket_without_a_sign_change_gives_the_residual_at_both_ends() {
    let src = "# b\ninput x = 1 m\ny: m = 2 * x\ncheck y > 0 m\n\
               find x in 1 m .. 2 m where y = 10 m\n";
    let mut m = Model::new(src).unwrap();
    m.evaluate();
    let errs = m.runtime_errors();
    assert_eq!(errs.len(), 1, "{errs:#?}");
    let msg = &errs[0].message;
    assert!(msg.contains("do not cross"), "{msg}");
    assert!(
        msg.contains("at x = 1 m") && msg.contains("at x = 2 m"),
        "{msg}"
    );
    assert!(
        msg.contains("2 m vs 10 m") && msg.contains("4 m vs 10 m"),
        "{msg}"
    );
    // Located at the find.
    let span = errs[0].span().unwrap();
    assert_eq!(&src[span.start..span.end], "x");
    assert!(span.start > src.find("find").unwrap());
}

fn errors(src: &str) -> Vec<String> {
    match Model::new(src) {
        Ok(_) => Vec::new(),
        Err(ds) => ds.into_iter().map(|d| d.message).collect(),
    }
}

#[test]
fn the_checker_refuses_what_if_statements_that_do_not_make_sense() {
    let head = "# e\ninput x = 1 m\ninput T = 20 degC\ny: m = 2 * x\nz = y / 1 m\ncheck y > 0 m\n";
    let e = errors(&format!("{head}case c: y = 2 m\n"));
    assert!(e[0].contains("`y` is computed, not an input"), "{e:?}");
    let e = errors(&format!("{head}case c: x = 2 kg\n"));
    assert!(
        e[0].contains("`x` is length") && e[0].contains("mass"),
        "{e:?}"
    );
    let e = errors(&format!("{head}case c: x = y\n"));
    assert!(e[0].contains("must be a constant"), "{e:?}");
    let e = errors(&format!("{head}sweep x from 1 m to 2 m step 1 s show y\n"));
    assert!(e[0].contains("step of `x`"), "{e:?}");
    let e = errors(&format!(
        "{head}sweep T from 20 degC to 40 degC step 5 degC show y\n"
    ));
    assert!(e[0].contains("absolute"), "{e:?}");
    let e = errors(&format!(
        "{head}sweep x from 1 m to 2 m step 0.5 m show w\n"
    ));
    assert!(e[0].contains("unknown name `w`"), "{e:?}");
    let e = errors(&format!("{head}find x in 1 m .. 2 m where y = 3 s\n"));
    assert!(e[0].contains("one quantity"), "{e:?}");
    let e = errors(&format!("{head}find x in 1 s .. 2 m where y = 3 m\n"));
    assert!(e[0].contains("`x` is length"), "{e:?}");
    let e = errors(&format!(
        "{head}find T in 1 degC .. 50 degC where y = 3 m\n"
    ));
    assert!(e[0].contains("does not depend on `T`"), "{e:?}");
    let e = errors(&format!(
        "{head}find x in 1 m .. 2 m where y = 3 m\ncase c: x = 2 m\nsweep x over 1 m, 2 m show z\n"
    ));
    assert_eq!(e.len(), 2, "{e:?}");
    assert!(e.iter().all(|m| m.contains("solved by a `find`")), "{e:?}");
    // Two finds that depend on each other.
    let e = errors(
        "# e\ninput a = 1\ninput b = 1\nu = a + b\nv = a - b\ncheck u > 0\n\
         find a in 0 .. 5 where u = 3\nfind b in -5 .. 5 where v = 1\n",
    );
    assert!(e[0].contains("depend on each other"), "{e:?}");
    // The simultaneous-solve note is on the diagnostic.
    let d = Model::new(
        "# e\ninput a = 1\ninput b = 1\nu = a + b\nv = a - b\ncheck u > 0\n\
         find a in 0 .. 5 where u = 3\nfind b in -5 .. 5 where v = 1\n",
    )
    .unwrap_err();
    assert!(
        d[0].notes.iter().any(|n| n.contains("simultaneous solve")),
        "{:?}",
        d[0].notes
    );
    // --set of a found input.
    let mut m = Model::new(format!("{head}find x in 1 m .. 2 m where y = 3 m\n")).unwrap();
    assert!(
        m.set_input_text("x", "1.2 m")
            .unwrap_err()
            .contains("solved by")
    );
    m.evaluate();
    assert_eq!(m.number("x"), Some(1.5));
}

#[test]
fn finds_in_dependency_order() {
    // b's condition uses a (solved first), whatever the file order.
    let m = model(
        "# o\ninput a = 1\ninput b = 1\nu = 2 * a\nv = a + b\ncheck v > 0\n\
         find b in -10 .. 10 where v = 7\nfind a in 0 .. 5 where u = 3\n",
    );
    assert_eq!(m.finds()[0].input_name, "a");
    assert!((m.number("a").unwrap() - 1.5).abs() < 1e-12);
    assert!((m.number("b").unwrap() - 5.5).abs() < 1e-12);
}

#[test]
fn the_package_has_a_cases_sheet_and_a_sheet_with_charts_per_sweep() {
    use calamine::{Data, Reader, Xlsx};
    let m = model(&example());
    let info = sheaf_engine::xlsx::PackageInfo {
        source_name: "plant_air_whatif.sheaf".into(),
        source_sha256: sheaf_engine::xlsx::sha256_hex(example().as_bytes()),
        tool_version: "test".into(),
        date: "2026-12-03".into(),
    };
    let bytes = sheaf_engine::xlsx::write_package(&m, &info).unwrap();
    let mut wb: Xlsx<_> = Xlsx::new(std::io::Cursor::new(bytes.clone())).unwrap();
    let names = wb.sheet_names();
    assert!(names.contains(&"Cases".to_string()), "{names:?}");
    assert!(names.contains(&"Sweep 1 p2".to_string()), "{names:?}");
    // Cases: header row 4 (base, design_day, hot_day, high_header); T1 in
    // hot_day is 36 degC.
    let cases = wb.worksheet_range("Cases").unwrap();
    let cell = |r: u32, c: u32| cases.get_value((r, c)).cloned().unwrap_or(Data::Empty);
    assert_eq!(cell(3, 2), Data::String("base".into()));
    assert_eq!(cell(3, 4), Data::String("hot_day".into()));
    let t1_row = (0..cases.height() as u32)
        .find(|&r| cell(r, 0) == Data::String("T1".into()))
        .unwrap();
    assert_eq!(cell(t1_row, 2), Data::Float(24.0));
    assert_eq!(cell(t1_row, 4), Data::Float(36.0));
    // Sweep: first point 2 barg, T2 as the engine computes it there.
    let sw = wb.worksheet_range("Sweep 1 p2").unwrap();
    assert_eq!(
        sw.get_value((3, 0)),
        Some(&Data::String("p2 [barg]".into()))
    );
    assert_eq!(sw.get_value((4, 0)), Some(&Data::Float(2.0)));
    let mut at2 = model(&example());
    at2.set_input_text("p2", "2 barg").unwrap();
    at2.evaluate();
    let t2 = at2.number("T2").unwrap() - 273.15;
    match sw.get_value((4, 1)) {
        Some(Data::Float(x)) => assert!((x - t2).abs() < 1e-9, "{x} vs {t2}"),
        other => panic!("{other:?}"),
    }
    // One native chart per shown quantity (T2, W, r_p).
    let zip = zip::ZipArchive::new(std::io::Cursor::new(bytes)).unwrap();
    let charts = zip
        .file_names()
        .filter(|n| n.as_ref().is_ok_and(|n| n.starts_with("xl/charts/chart")))
        .count();
    assert_eq!(charts, 3);
}
