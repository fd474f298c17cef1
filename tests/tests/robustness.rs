//! The engine never panics, whatever the worksheet: random worksheets built
//! from the language's own tokens (so that many get past the parser and
//! reach the checker and evaluator) go through check, evaluation and the
//! report. Errors are fine; a panic, a NaN in a report or an infinite value
//! is not.

use proptest::prelude::*;
use sheaf_engine::Model;
use sheaf_engine::report::Block;

const TOKENS: &[&str] = &[
    "a",
    "b",
    "c",
    "st",
    "g",
    "w",
    "T1",
    "p1",
    "x",
    "eta",
    "input ",
    "check ",
    "meta ",
    "=",
    " = ",
    ":",
    " : ",
    "+",
    "-",
    "*",
    "/",
    "^",
    "(",
    ")",
    ",",
    ".",
    ".T",
    ".h",
    ".s",
    ".x",
    ".cp",
    ".rho",
    "<=",
    ">",
    "==",
    "0",
    "1",
    "2.5",
    "1e300",
    "-3",
    "300 K",
    "20 degC",
    "-40 degF",
    "5 barg",
    "1 bar",
    "3 MPa",
    "2 kJ/kg",
    "1 kJ/(kg K)",
    "4 m^3/h",
    "10 degC_diff",
    "0.8",
    "1.3",
    "\"air\"",
    "\"water\"",
    "\"desc\"",
    "ln(",
    "exp(",
    "sqrt(",
    "min(",
    "max(",
    "abs(",
    "atan2(",
    "round(",
    "ideal_gas(\"air\")",
    "ideal_gas(\"CO2\")",
    "fluid(\"water\")",
    "perfect_gas(R: 287 J/(kg K), k: 1.4)",
    "incompressible(c: 4.18 kJ/(kg K), rho: 998 kg/m^3)",
    "state(",
    "T: ",
    "p: ",
    "h: ",
    "s: ",
    "x: ",
    "isentropic(",
    "compressor(",
    "turbine(",
    "pump(",
    "nozzle(",
    "throttle(",
    "jet_speed(",
    "flow_exergy(",
    "closed_exergy(",
    "heat_exergy(",
    "ds_ideal_gas(",
    "ds_incompressible(",
    "dead: ",
    "eta: ",
    "V: ",
    "z: ",
    "pi",
    "R_u",
    "g_n",
    "p_atm",
    "\n",
    "\n",
    "\n",
    "# T\n",
    "> note\n",
    "// c\n",
    " \\\n",
    " ",
];

fn worksheet() -> impl Strategy<Value = String> {
    prop::collection::vec(prop::sample::select(TOKENS), 0..80).prop_map(|t| t.concat())
}

/// A small valid worksheet with a random twist: the state pair and values
/// vary, so that evaluation reaches the property models with odd inputs.
fn thermo_worksheet() -> impl Strategy<Value = String> {
    let subst = prop::sample::select(
        &[
            "ideal_gas(\"air\")",
            "ideal_gas(\"H2\")",
            "fluid(\"water\")",
            "perfect_gas(R: 287 J/(kg K), cp: 1005 J/(kg K))",
            "incompressible(c: 4.18 kJ/(kg K), rho: 998 kg/m^3)",
        ][..],
    );
    let device = prop::sample::select(
        &[
            "isentropic",
            "compressor",
            "turbine",
            "pump",
            "nozzle",
            "throttle",
        ][..],
    );
    (subst, device, -100.0f64..3000.0, -1.0f64..300.0, -1.0f64..300.0, -0.5f64..1.5)
        .prop_map(|(s, d, t, p1, p2, eta)| {
            let eta_arg = if matches!(d, "isentropic" | "throttle") { String::new() } else { format!(", eta: {eta}") };
            format!(
                "# t\ng = {s}\nst = state(g, T: {t} K, p: {p1} bar)\nout = {d}(st, p: {p2} bar{eta_arg})\n\
                 v = jet_speed(st, out, 10 m/s)\nd = flow_exergy(out, dead: st)\ncheck out.h >= st.h\n"
            )
        })
}

fn exercise(src: &str) {
    let Ok(mut m) = Model::new(src) else { return };
    m.evaluate();
    let _ = m.runtime_errors();
    let r = m.report();
    for b in &r.blocks {
        if let Block::Quantity(q) = b {
            for row in q.flatten() {
                if let Some(v) = row.si_value {
                    assert!(v.is_finite(), "{src}\n{} = {v}", row.name);
                }
            }
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(600))]

    #[test]
    fn token_soup_never_panics(src in worksheet()) {
        exercise(&src);
    }

    #[test]
    fn odd_states_never_panic(src in thermo_worksheet()) {
        exercise(&src);
    }
}
