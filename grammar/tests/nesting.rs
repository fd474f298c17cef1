//! Deeply nested input must give one clean error, never a stack overflow.
//! `cargo test` runs each test on a 2 MiB thread, which is part of the point.

use sheaf_grammar::{MAX_NESTING, parse, parse_expr, parse_unit};

const MSG: &str =
    "expression nested too deeply (more than 256 levels); split it into named intermediate values";

fn one_nesting_error(src: &str) -> sheaf_grammar::ParseError {
    let errs = parse(src).unwrap_err();
    assert_eq!(errs.len(), 1, "{errs:?}");
    assert_eq!(errs[0].message, MSG);
    errs[0].clone()
}

#[test]
fn message_names_the_limit() {
    assert_eq!(MAX_NESTING, 256);
}

#[test]
fn ten_thousand_open_parens() {
    let src = format!("x = {}1", "(".repeat(10_000));
    let e = one_nesting_error(&src);
    // The 257th `(` is where the limit is passed.
    assert_eq!(e.span.start, 4 + MAX_NESTING);
    let e = parse_expr(&format!("{}1{}", "(".repeat(10_000), ")".repeat(10_000))).unwrap_err();
    assert_eq!(e.message, MSG);
}

#[test]
fn ten_thousand_unary_minus() {
    let src = format!("x = {}1", "-".repeat(10_000));
    one_nesting_error(&src);
    let e = parse_expr(&format!("{}a", "- ".repeat(10_000))).unwrap_err();
    assert_eq!(e.message, MSG);
}

#[test]
fn long_flat_chains_are_not_nesting() {
    // A chain of one operator family is one level, however long; the
    // tree is as deep as the chain, so building, formatting and dropping it
    // must not recurse per operand (this runs on a 2 MiB test thread).
    for (op, n) in [
        ("+", 100_000),
        ("-", 1_000),
        ("*", 10_000),
        ("/", 258),
        (" and ", 10_000),
    ] {
        let src = format!("x = a{}", format!("{op}a").repeat(n));
        let w = parse(&src).unwrap_or_else(|e| panic!("{op}: {:?}", &e[..1]));
        assert_eq!(w.statements.len(), 1);
        let out = sheaf_grammar::format(&src).unwrap_or_else(|e| panic!("{op}: {:?}", &e[..1]));
        assert_eq!(
            out.len(),
            src.len() + 2 * n + 1 - if op == " and " { 2 * n } else { 0 }
        );
        drop(w);
    }
    let src = format!(
        "x = a1{}",
        (2..=1000).map(|i| format!(" + a{i}")).collect::<String>()
    );
    assert!(parse(&src).is_ok());
    let e = parse_expr(&format!("a{}", " or a".repeat(50_000))).unwrap();
    drop(e);
    // A comparison chain is a list.
    assert!(parse_expr(&format!("a{}", " < a".repeat(10_000))).is_ok());
}

#[test]
fn ten_thousand_power_chain() {
    let src = format!("x = a{}", "^a".repeat(9_999));
    one_nesting_error(&src);
}

#[test]
fn ten_thousand_fields_and_calls() {
    let src = format!("x = a{}", ".b".repeat(10_000));
    one_nesting_error(&src);
    let src = format!("x = {}1{}", "f(".repeat(10_000), ")".repeat(10_000));
    one_nesting_error(&src);
}

#[test]
fn deep_units() {
    let src = format!("x = 1 kg{}", "*m".repeat(10_000));
    one_nesting_error(&src);
    let e = parse_unit(&format!("{}kg{}", "(".repeat(10_000), ")".repeat(10_000))).unwrap_err();
    assert_eq!(e.message, MSG);
    let e = parse_unit(&"kg ".repeat(10_000)).unwrap_err();
    assert_eq!(e.message, MSG);
}

#[test]
fn exactly_at_the_limit_is_accepted() {
    // MAX_NESTING parentheses around a leaf: depth MAX_NESTING.
    let n = MAX_NESTING;
    let src = format!("x = {}1{}", "(".repeat(n), ")".repeat(n));
    assert!(parse(&src).is_ok());
    let src = format!("x = {}1{}", "(".repeat(n + 1), ")".repeat(n + 1));
    one_nesting_error(&src);
    // Operator families nest: `a + a * (...)` is three levels (sum,
    // product, parenthesis) per repetition; 85 * 3 = 255, 86 * 3 = 258.
    let src = format!("x = {}a{}", "a + a * (".repeat(85), ")".repeat(85));
    assert!(parse(&src).is_ok());
    let src = format!("x = {}a{}", "a + a * (".repeat(86), ")".repeat(86));
    one_nesting_error(&src);
    // `if` nests like a parenthesis.
    let src = format!("x = {}1{}", "if c then 1 else ".repeat(n), "");
    assert!(parse(&src).is_ok());
    let src = format!("x = {}1", "if c then 1 else ".repeat(n + 1));
    one_nesting_error(&src);
    let src = format!("x = {}1", "not ".repeat(n + 1));
    one_nesting_error(&src);
    // Mixed nesting at the limit: calls inside parentheses inside minus.
    let src = format!("x = {}1{}", "-(f(".repeat(n / 3), "))".repeat(n / 3));
    assert!(parse(&src).is_ok());
}

#[test]
fn other_statements_still_reported() {
    let src = format!("x = {}1\ny = 2 +\nz = 3", "(".repeat(10_000));
    let errs = parse(&src).unwrap_err();
    assert_eq!(errs.len(), 2);
    assert_eq!(errs[0].message, MSG);
    assert_eq!(errs[1].message, "expected an expression after `+`");
}
