//! Conditions in the worksheet language: comparisons as true/false values,
//! chains, `and` / `or` / `not`, `if ... then ... else ...`, checks on any
//! condition, and their dimension errors.

use sheaf_engine::value::Value;
use sheaf_engine::{Model, Status};

fn run(src: &str) -> Model {
    let mut m = Model::new(src).unwrap_or_else(|d| panic!("{src}\n{d:#?}"));
    m.evaluate();
    let errs = m.runtime_errors();
    assert!(errs.is_empty(), "{errs:#?}");
    m
}

fn boolean(m: &Model, name: &str) -> bool {
    match m.value(m.node_index(name).unwrap()) {
        Value::Bool(b) => *b,
        other => panic!("{name} is not true/false: {other:?}"),
    }
}

fn errors(src: &str) -> Vec<String> {
    match Model::new(src) {
        Ok(_) => panic!("expected errors for:\n{src}"),
        Err(d) => d.into_iter().map(|d| d.message).collect(),
    }
}

#[test]
fn comparisons_are_values_and_chains_mean_every_pair() {
    let m = run(
        "x = 0.9\nin_band = 0.88 <= x <= 1\nabove = 0.88 <= 1.2 <= 1\n\
                 a = 2 bar > 150 kPa\nb = 20 degC == 293.15 K\n",
    );
    assert!(boolean(&m, "in_band"));
    assert!(!boolean(&m, "above"), "1.2 <= 1 fails, so the chain fails");
    assert!(boolean(&m, "a"), "200 kPa > 150 kPa");
    assert!(
        boolean(&m, "b"),
        "20 degC is 293.15 K exactly (NIST SP 811 §4.2.1.1)"
    );
}

#[test]
fn and_or_not_follow_their_truth_tables() {
    let m = run("t = 1 < 2\nf = 2 < 1\n\
                 tt = t and t\ntf = t and f\nft = f or t\nff = f or f\n\
                 nf = not f\nprec = f and f or t\n");
    assert!(boolean(&m, "tt"));
    assert!(!boolean(&m, "tf"));
    assert!(boolean(&m, "ft"));
    assert!(!boolean(&m, "ff"));
    assert!(boolean(&m, "nf"));
    // `and` binds tighter than `or`: (f and f) or t.
    assert!(boolean(&m, "prec"));
}

#[test]
fn if_then_else_evaluates_only_the_branch_taken() {
    // The branch not taken divides by zero: no error.
    let m = run(
        "input p2 = 6 bar\nr = if p2 > 5 bar then 2 m else 1 m / 0\n\
                 s = if p2 > 7 bar then 1 / 0 else 3\n",
    );
    assert_eq!(m.number("r"), Some(2.0));
    assert_eq!(m.number("s"), Some(3.0));
    // After a change the other branch is taken, and its error is reported.
    let mut m = Model::new("input p2 = 6 bar\nr = if p2 > 5 bar then 2 else 1 / 0\n").unwrap();
    m.set_input("p2", 4e5).unwrap();
    m.evaluate();
    let i = m.node_index("r").unwrap();
    assert!(matches!(m.status(i), Status::Failed(d) if d.message.contains("division by zero")));
}

#[test]
fn if_branches_keep_the_absolute_or_difference_kind() {
    // then: absolute degC; else: neutral K -> an absolute temperature,
    // shown in degC.
    let m = run("input T1 = 20 degC\nT2 : degC = if T1 > 10 degC then T1 else 300 K\n");
    assert!((m.number("T2").unwrap() - 293.15).abs() < 1e-12);
}

#[test]
fn a_check_takes_any_condition() {
    let mut m = run("input x2 = 0.93\ninput T2 = 180 degC\n\
                     check 0.88 <= x2 <= 1 \"quality band\"\n\
                     check T2 < 200 degC and x2 > 0.9\ncheck not (x2 > 0.95) or T2 > 500 degC\n");
    let r = m.report();
    assert!(
        r.checks.iter().all(|c| c.passed == Some(true)),
        "{:#?}",
        r.checks
    );
    // Operands of the chain, each with its value (README "Commands" "operands").
    let c = &r.checks[0];
    let texts: Vec<&str> = c.operands.iter().map(|o| o.text.as_str()).collect();
    assert_eq!(texts, ["0.88", "x2", "1"]);
    let vals: Vec<f64> = c
        .operands
        .iter()
        .map(|o| o.shown.as_ref().unwrap().value)
        .collect();
    assert_eq!(vals, [0.88, 0.93, 1.0]);
    // The temperature operands are shown in the limit's unit.
    let t = &r.checks[1].operands[0];
    assert_eq!(t.shown.as_ref().unwrap().unit, "degC");
    assert!((t.shown.as_ref().unwrap().value - 180.0).abs() < 1e-9);
    m.set_input("x2", 0.85).unwrap();
    m.evaluate();
    assert_eq!(m.report().checks[0].passed, Some(false));
}

#[test]
fn dimension_errors_in_conditions_are_located_and_worded() {
    let e = errors("a = 1 bar < 20 degC\n");
    assert!(
        e[0].contains("different dimensions") && e[0].contains("pressure"),
        "{e:?}"
    );
    let e = errors("a = 0 <= 2 m <= 1 s\n");
    assert!(e[0].contains("different dimensions"), "{e:?}");
    let e = errors("a = (1 < 2) and 3 m\n");
    assert!(e[0].contains("`and` joins true/false values"), "{e:?}");
    let e = errors("a = not 2\n");
    assert!(e[0].contains("`not` takes a true/false value"), "{e:?}");
    let e = errors("a = if 1 then 2 else 3\n");
    assert!(e[0].contains("`if` needs a true/false condition"), "{e:?}");
    let e = errors("a = if 1 < 2 then 2 m else 3 s\n");
    assert!(
        e[0].contains("branches of `if` must be one quantity"),
        "{e:?}"
    );
    let e = errors("input T = 20 degC\na = if 1 < 2 then T else T - 10 degC\n");
    assert!(
        e[0].contains("mix an absolute temperature with a difference"),
        "{e:?}"
    );
    let e = errors("check 2 m\n");
    assert!(e[0].contains("a check needs a condition"), "{e:?}");
    let e = errors("a = 20 degC > (30 degC - 20 degC)\n");
    assert!(
        e[0].contains("absolute temperature with a temperature difference"),
        "{e:?}"
    );
}

#[test]
fn the_phase_of_a_state_can_be_branched_on() {
    // Superheated steam at 1 bar, 150 °C has no quality; a wet outlet at
    // (1 bar, x = 0.9) has one. `is_two_phase` tells them apart.
    let m = run(
        "w = fluid(\"water\")\ndry = state(w, p: 1 bar, T: 150 degC)\n\
                 wet = state(w, p: 1 bar, x: 0.9)\n\
                 x_dry = if is_two_phase(dry) then dry.x else 1\n\
                 x_wet = if is_two_phase(wet) then wet.x else 1\n",
    );
    assert_eq!(m.number("x_dry"), Some(1.0));
    assert!((m.number("x_wet").unwrap() - 0.9).abs() < 1e-15);
}
