//! The benchmark's worksheet generator (benches/gen) must produce worksheets
//! that parse, check and evaluate without errors, to the values it predicts.

#[path = "../benches/gen/mod.rs"]
mod synth;

use sheaf_engine::{Model, Status};

/// Relative tolerance between the generator's own f64 arithmetic and the
/// engine's. Both do the same operations in the same order on SI values;
/// they differ only where a unit factor is computed differently (the
/// generator types exact definitions, e.g. psi = 6894.757293168361 Pa from
/// lbf/in^2, NIST SP 811 (2008) Appendix B.8, and lb = 0.45359237 kg; the
/// engine takes them from `uom`), a difference of a few ulp, amplified at
/// most a few-fold by the subtractions the generator allows (a - b only
/// when a > 1.3 b) along chains of a few dozen operations: far below 1e-9.
const REL_TOL: f64 = 1e-9;

fn assert_clean(s: &synth::Synth) -> Model {
    let ws = sheaf_grammar::parse(&s.source)
        .unwrap_or_else(|e| panic!("syntax errors: {:?}\n{}", &e[..e.len().min(3)], s.source));
    assert_eq!(ws.statements.len(), s.statements, "statement count");
    let mut m = Model::new(s.source.clone()).unwrap_or_else(|ds| {
        let msgs: Vec<String> = ds
            .iter()
            .take(5)
            .map(|d| {
                let at = d.span().map_or(0, |sp| sp.start);
                let line = sheaf_grammar::line_col(&s.source, at).0;
                let text = s.source.lines().nth(line - 1).unwrap_or("");
                format!("line {line}: {}\n    {text}", d.message)
            })
            .collect();
        panic!("check errors:\n{}", msgs.join("\n"))
    });
    assert_eq!(m.nodes().len(), s.nodes, "node count");
    let evaluated = m.evaluate();
    let errors = m.runtime_errors();
    assert!(errors.is_empty(), "runtime errors: {errors:?}");
    assert_eq!(evaluated, s.nodes, "every node evaluated once");
    for i in 0..m.nodes().len() {
        assert_eq!(m.status(i), &Status::Ok, "node {i}");
    }
    for (name, want) in &s.expected {
        let got = m
            .number(name)
            .unwrap_or_else(|| panic!("`{name}` has no number"));
        assert!(
            (got - want).abs() <= REL_TOL * want.abs(),
            "`{name}`: engine {got}, generator {want}"
        );
    }
    m
}

#[test]
fn thousand_statements_check_and_evaluate() {
    let s = synth::worksheet(1000, 42);
    assert_eq!(s.source.lines().count(), 1000);
    let m = assert_clean(&s);
    // the mix the benchmark relies on
    assert!(
        s.inputs.len() > 100 && s.inputs.len() < 300,
        "{}",
        s.inputs.len()
    );
    assert!(s.nodes > 900, "{}", s.nodes);
    let checks = m
        .nodes()
        .iter()
        .filter(|n| n.kind == sheaf_engine::check::NodeKind::Check)
        .count();
    assert!(checks > 10, "{checks} checks");
    for needle in [": ", "sqrt(", "ln(", "degC", "kJ/kg", "## Section", "\""] {
        assert!(s.source.contains(needle), "no `{needle}` in the worksheet");
    }
}

#[test]
fn definitions_come_in_any_order() {
    let s = synth::worksheet(1000, 42);
    let m = assert_clean(&s);
    // A node that reads a node defined further down the file.
    let forward = m
        .nodes()
        .iter()
        .filter(|n| n.deps.iter().any(|&d| m.nodes()[d].stmt > n.stmt))
        .count();
    assert!(forward > 50, "only {forward} forward references");
}

#[test]
fn same_seed_same_worksheet() {
    let a = synth::worksheet(500, 7);
    let b = synth::worksheet(500, 7);
    let c = synth::worksheet(500, 8);
    assert_eq!(a.source, b.source);
    assert_ne!(a.source, c.source);
}

#[test]
fn many_seeds_and_sizes_are_clean() {
    for n in [1, 2, 16, 17, 40, 333] {
        for seed in 0..25 {
            let s = synth::worksheet(n, seed);
            assert_eq!(s.source.lines().count(), n, "n={n} seed={seed}");
            assert_clean(&s);
        }
    }
}

#[test]
fn changing_one_input_re_evaluates_only_dependents() {
    let s = synth::worksheet(1000, 42);
    let mut m = assert_clean(&s);
    let (name, si) = &s.inputs[s.inputs.len() / 2];
    m.set_input(name, si * 1.01).unwrap();
    let again = m.evaluate();
    assert!(again >= 1, "the input itself is re-evaluated");
    assert!(
        again < s.nodes / 2,
        "{again} of {} nodes re-evaluated",
        s.nodes
    );
    assert!(m.runtime_errors().is_empty());
    assert!((m.number(name).unwrap() - si * 1.01).abs() <= 1e-12 * si.abs());
    // nothing left to do
    assert_eq!(m.evaluate(), 0);
}
