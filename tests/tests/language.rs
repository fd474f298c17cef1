//! End-to-end tests of the worksheet language through the engine API:
//! units and dimensions, absolute/difference temperatures, gauge pressure,
//! ordering, cycles, incremental re-evaluation, run-time errors.

use sheaf_engine::{Model, Status};

fn run(src: &str) -> Model {
    let mut m = Model::new(src).unwrap_or_else(|d| panic!("{src}\n{d:#?}"));
    m.evaluate();
    let errs = m.runtime_errors();
    assert!(errs.is_empty(), "{errs:#?}");
    m
}

fn errors(src: &str) -> Vec<String> {
    match Model::new(src) {
        Ok(_) => panic!("expected errors for:\n{src}"),
        Err(d) => d.into_iter().map(|d| d.message).collect(),
    }
}

fn close(a: f64, b: f64, rel: f64) -> bool {
    (a - b).abs() <= rel * b.abs().max(1e-300)
}

#[test]
fn temperature_difference_of_two_celsius_values_is_kelvin() {
    // README, units in "A short tour of the language": abs - abs -> difference; 20 degC - 10 degC = 10 K.
    let m = run("a = 20 degC\nb = 10 degC\nd : K = a - b\n");
    assert!(close(m.number("d").unwrap(), 10.0, 1e-12));
    let r = m.report();
    let d = r.blocks.iter().find_map(|b| match b {
        sheaf_engine::report::Block::Quantity(q) if q.name == "d" => Some(q.clone()),
        _ => None,
    });
    let d = d.unwrap();
    assert_eq!(d.unit, "K");
    assert!(close(d.value.unwrap(), 10.0, 1e-12));
}

#[test]
fn adding_two_absolute_temperatures_is_an_error() {
    let e = errors("a = 20 degC\nb = a + 10 degC\n");
    assert!(
        e[0].contains("cannot add two absolute values of temperature"),
        "{e:?}"
    );
}

#[test]
fn a_degc_diff_difference_shown_in_kelvin_is_numerically_equal() {
    let m = run("d : K = 10 degC_diff\n");
    assert!(close(m.number("d").unwrap(), 10.0, 1e-12));
    // An absolute temperature plus a difference stays absolute and may be shown in degC.
    let m = run("t : degC = 20 degC + 10 degC_diff\n");
    assert!(close(m.number("t").unwrap(), 303.15, 1e-12));
    // The symbol spellings Δ°C and Δ°F are the same units.
    let m = run("a : K = 10 Δ°C\nb : K = 18 Δ°F\nc : degC = 20 °C + 5 Δ°C\n");
    assert!(close(m.number("a").unwrap(), 10.0, 1e-12));
    assert!(close(m.number("b").unwrap(), 10.0, 1e-12));
    assert!(close(m.number("c").unwrap(), 298.15, 1e-12));
}

#[test]
fn a_difference_shown_in_degc_is_an_error() {
    let e = errors("a = 80 degC\nb = 20 degC\nd : degC = a - b\n");
    assert!(
        e[0].contains("difference cannot be shown in `degC`"),
        "{e:?}"
    );
}

#[test]
fn fahrenheit_and_rankine() {
    // NIST SP 811 (2008) §B.8: T/K = (t/°F + 459.67)/1.8; T/K = (T/°R)/1.8.
    let m = run("a = 212 degF\nb = 491.67 degR\nd : degF_diff = 212 degF - 32 degF\n");
    assert!(close(m.number("a").unwrap(), 373.15, 1e-12));
    assert!(close(m.number("b").unwrap(), 273.15, 1e-12));
    assert!(close(m.number("d").unwrap(), 100.0, 1e-12)); // 180 degF_diff = 100 K
}

#[test]
fn gauge_pressure_is_offset_by_the_standard_atmosphere() {
    // README, units in "A short tour of the language": barg = absolute pressure - 101.325 kPa (standard atmosphere, 10th CGPM 1954).
    let m = run("p = 0 barg\nq = 7.5 barg\nr = 0 psig\n");
    assert!(close(m.number("p").unwrap(), 101_325.0, 1e-15));
    assert!(close(m.number("q").unwrap(), 851_325.0, 1e-15));
    assert!(close(m.number("r").unwrap(), 101_325.0, 1e-15));
    // The difference of two gauge readings is a plain pressure difference.
    let m = run("a = 8.5 barg\nb = 5.5 barg\nd : kPa = a - b\n");
    assert!(close(m.number("d").unwrap(), 300_000.0, 1e-12));
    let e = errors("a = 8.5 barg\nb = 5.5 barg\nd : barg = a - b\n");
    assert!(
        e[0].contains("pressure difference cannot be shown in `barg`"),
        "{e:?}"
    );
}

#[test]
fn nist_conversions_through_the_language() {
    // NIST SP 811 (2008) Appendix B.8 factors.
    let m = run("a = 1 psi\nb = 1 Btu\nc = 1 lb\nd = 1 ft\ne = 1 kWh\nf = 1 atm\n");
    assert!(close(m.number("a").unwrap(), 6894.757, 1e-6)); // psi -> Pa 6.894757 E+03
    assert!(close(m.number("b").unwrap(), 1055.056, 1e-6)); // Btu(IT) -> J 1.055056 E+03
    assert!(close(m.number("c").unwrap(), 0.45359237, 1e-15)); // lb -> kg, exact
    assert!(close(m.number("d").unwrap(), 0.3048, 1e-15)); // ft -> m, exact
    assert!(close(m.number("e").unwrap(), 3.6e6, 1e-15)); // kW h -> J 3.6 E+06 exact
    assert!(close(m.number("f").unwrap(), 101_325.0, 1e-15)); // atm -> Pa, exact
}

#[test]
fn compound_units_and_annotations() {
    let m = run("cp = 1.005 kJ/(kg K)\nq : kJ/kg = cp * 20 K\nflow : m^3/h = 3 L/s\n");
    assert!(close(m.number("cp").unwrap(), 1005.0, 1e-12));
    assert!(close(m.number("q").unwrap(), 20_100.0, 1e-12));
    assert!(close(m.number("flow").unwrap(), 0.003, 1e-12));
}

#[test]
fn definitions_in_any_order_evaluate_as_in_order() {
    let ordered = "input a = 2 m\nb = a * 3\nc = b + a\nd = c / b\n";
    let shuffled = "d = c / b\nc = b + a\ninput a = 2 m\nb = a * 3\n";
    let m1 = run(ordered);
    let m2 = run(shuffled);
    for n in ["a", "b", "c", "d"] {
        assert_eq!(m1.number(n), m2.number(n), "{n}");
    }
    assert!(close(m2.number("d").unwrap(), 8.0 / 6.0, 1e-15));
}

#[test]
fn a_cycle_is_reported_with_its_path() {
    let e = errors("a = b + 1\nb = c * 2\nc = a - 3\nd = 5\n");
    assert_eq!(e.len(), 1);
    assert_eq!(e[0], "circular definition: a -> b -> c -> a");
}

#[test]
fn changing_one_input_reevaluates_only_its_dependents() {
    // Two independent chains; changing x touches x, x2, x3 and the sum only.
    let src = "input x = 1 m\ninput y = 2 m\nx2 = x * 2\nx3 = x2 * 2\ny2 = y * 2\ny3 = y2 * 2\ns = x3 + y3\n";
    let mut m = Model::new(src).unwrap();
    assert_eq!(m.evaluate(), 7);
    assert_eq!(m.evaluate(), 0, "nothing changed");
    m.set_input("x", 10.0).unwrap();
    assert_eq!(m.evaluate(), 4);
    assert_eq!(m.number("s"), Some(40.0 + 8.0));
    m.set_input_text("y", "3 m").unwrap();
    assert_eq!(m.evaluate(), 4);
    assert_eq!(m.number("s"), Some(40.0 + 12.0));
    assert!(
        m.set_input_text("y", "3 kg")
            .unwrap_err()
            .contains("length")
    );
    assert!(m.set_input("y2", 1.0).unwrap_err().contains("computed"));
}

#[test]
fn runtime_errors_name_the_statement_and_skip_dependents() {
    let mut m = Model::new("input a = 0 m\nb = 1 m / a\nc = b * 2\nd = sqrt(a^2 - 1 m^2)\ne = 5\n")
        .unwrap();
    m.evaluate();
    let e = m.runtime_errors();
    assert_eq!(e.len(), 2, "{e:#?}");
    assert!(e[0].message.contains("`b`") && e[0].message.contains("division by zero"));
    assert!(
        e[1].message.contains("`d`") && e[1].message.contains("sqrt"),
        "{}",
        e[1].message
    );
    assert_eq!(m.status(m.node_index("c").unwrap()), &Status::Skipped);
    assert_eq!(m.number("e"), Some(5.0));
}

#[test]
fn non_finite_results_are_errors() {
    let mut m = Model::new("a = exp(1000)\n").unwrap();
    m.evaluate();
    assert_eq!(m.runtime_errors().len(), 1);
}

#[test]
fn powers_of_dimensioned_values_need_constant_rational_exponents() {
    let m = run("a = 2 m\nA = a^2\nr = (8 m^3)^(1/3)\n");
    assert!(close(m.number("A").unwrap(), 4.0, 1e-15));
    assert!(close(m.number("r").unwrap(), 2.0, 1e-12));
    let e = errors("a = 2 m\nn = 2\nA = a^n\n");
    assert!(e[0].contains("constant power"), "{e:?}");
    let e = errors("a = 2 m\nA = sqrt(a)\n");
    assert!(e[0].contains("even exponents"), "{e:?}");
    let e = errors("a = 2 m\nA = 2^a\n");
    assert!(e[0].contains("exponent must be dimensionless"), "{e:?}");
}

#[test]
fn unknown_names_units_and_functions_get_suggestions() {
    let src = "input mdot = 1 kg/s\nw = mdto * 2\nq = 3 kpa\nz = sqr(4)\n";
    let d = Model::new(src).unwrap_err();
    let all: Vec<String> = d
        .iter()
        .map(|d| format!("{} {}", d.message, d.notes.join(" ")))
        .collect();
    assert_eq!(all.len(), 3, "{all:#?}");
    assert!(all[0].contains("`mdto`") && all[0].contains("`mdot`"));
    assert!(all[1].contains("`kpa`") && all[1].contains("`kPa`"));
    assert!(all[2].contains("`sqr`") && all[2].contains("`sqrt`"));
}

#[test]
fn constants_are_codata_and_standard_values() {
    let m = run("a = R_u\nb = g_n\nc = p_atm\nd = pi\n");
    assert_eq!(m.number("a"), Some(8.314_462_618)); // CODATA 2018, J/(mol K), exact
    assert_eq!(m.number("b"), Some(9.806_65)); // standard gravity, m/s^2, exact
    assert_eq!(m.number("c"), Some(101_325.0)); // standard atmosphere, Pa, exact
    assert_eq!(m.number("d"), Some(std::f64::consts::PI));
}

#[test]
fn checks_compare_in_consistent_units() {
    let m = run("t = 95 min\ncheck t >= 1.5 h \"long enough\"\ncheck t < 1 h\n");
    let r = m.report();
    assert_eq!(r.checks.len(), 2);
    assert_eq!(r.checks[0].passed, Some(true));
    assert_eq!(r.checks[1].passed, Some(false));
    assert_eq!(r.checks[0].description.as_deref(), Some("long enough"));
    let e = errors("t = 95 min\ncheck t >= 1.5 m\n");
    assert!(e[0].contains("cannot compare"), "{e:?}");
}

#[test]
fn negative_readings_on_offset_scales_are_literals() {
    // -40 degF = -40 degC = 233.15 K (NIST SP 811 §B.8 conversion formulas).
    let m = run("a = -40 degF\nb : degC = -40 degC\n");
    assert!(close(m.number("a").unwrap(), 233.15, 1e-12));
    assert!(close(m.number("b").unwrap(), 233.15, 1e-12));
    let e = errors("a = 20 degC\nb = -a\n");
    assert!(
        e[0].contains("cannot negate an absolute temperature"),
        "{e:?}"
    );
}

#[test]
fn impossible_absolute_values_and_unshowable_numbers_are_errors() {
    // An absolute temperature or pressure below zero, however it arises
    // (-300 degC = -26.85 K; -2 barg = -98.675 kPa absolute with the
    // standard atmosphere 101.325 kPa as gauge reference).
    for (src, want) in [
        ("input T = -300 degC\n", "below absolute zero"),
        (
            "input p = -2 barg\n",
            "absolute pressure would be -98675 Pa",
        ),
        ("x : degC = -1 K\n", "below absolute zero"),
        ("input T = 20 degC\nT2 = T - 400 K\n", "below absolute zero"),
        ("x : nm = 1e300 m\n", "not a finite number in `nm`"),
    ] {
        let mut m = Model::new(src).unwrap();
        m.evaluate();
        let errs = m.runtime_errors();
        assert_eq!(errs.len(), 1, "{src}");
        assert!(errs[0].message.contains(want), "{src}: {}", errs[0].message);
    }
    // An override is checked the same way.
    let mut m = Model::new("input T = 20 degC\n").unwrap();
    m.set_input_text("T", "-500 degC").unwrap();
    m.evaluate();
    assert_eq!(m.runtime_errors().len(), 1);
    // A negative difference is fine.
    let m = run("a = 10 degC - 30 degC\nb = -5 kPa\n");
    assert!(close(m.number("a").unwrap(), -20.0, 1e-12));
}

#[test]
fn a_celsius_reading_times_a_specific_heat_warns() {
    // m c T with T in degC is computed in kelvin (correct arithmetic, almost
    // always a mistake): a located warning; a difference does not warn, nor
    // does a kelvin value.
    let src = "input T = 80 degC\ninput c = 4.18 kJ/(kg K)\nq = c * T\n\
               q2 = c * (T - 20 degC)\nq3 = 4.18 kJ/(kg K) * 300 K\nq4 = 2 * T\n\
               input R = 287 J/(kg K)\nrho = 1 bar / (R * T)\nS = 2 W/K\nX = T * S\n";
    let m = run(src);
    let r = m.report();
    let ws: Vec<String> = r.warnings.iter().map(|w| w.to_string()).collect();
    assert_eq!(ws.len(), 1, "{ws:?}");
    assert!(
        ws[0].contains("`q`") && ws[0].contains("difference"),
        "{ws:?}"
    );
    // The value itself is the kelvin product: 4180 J/(kg K) x 353.15 K.
    assert!(close(m.number("q").unwrap(), 4180.0 * 353.15, 1e-12));
}

#[test]
fn a_kelvin_reading_taken_as_a_difference_warns() {
    // Hardening item: `20 degC + 300 K` with 300 K a gas temperature is read
    // as 320 degC (a neutral kelvin value next to an absolute one is a
    // difference). The rule: a constant of 200 K or more taken as a
    // difference warns, located on it; small kelvin differences, degC_diff
    // and kelvin readings subtracted from each other stay quiet.
    let src = "input T_gas = 300 K \"gas temperature\"\ninput T1 = 20 degC\n\
               input dT = 15 K\nT2 = T1 + T_gas\nT3 = T1 + dT\nT4 = T1 - 250 K\n\
               T5 = 250 K + T1\nT6 = T1 + 300 degC_diff\nd = T_gas - 280 K\n\
               T7 = T1 + 150 K\n";
    let m = run(src);
    let r = m.report();
    let ws: Vec<String> = r.warnings.iter().map(|w| w.to_string()).collect();
    assert_eq!(ws.len(), 3, "{ws:?}");
    assert!(
        ws[0].contains("`T2`") && ws[0].contains("`T_gas` (300 K) is added to"),
        "{ws:?}"
    );
    assert!(
        ws[1].contains("`T4`") && ws[1].contains("250 K is subtracted from"),
        "{ws:?}"
    );
    assert!(
        ws[2].contains("`T5`") && ws[2].contains("250 K is added to"),
        "{ws:?}"
    );
    // The arithmetic is unchanged: 293.15 K + 300 K.
    assert!(close(m.number("T2").unwrap(), 593.15, 1e-12));
}
