//! Deeply nested input must give one clean error, never a stack overflow.
//! `cargo test` runs each test on a 2 MiB thread, which is part of the point.

use sheaf_grammar::{MAX_CHAIN_OPERANDS, MAX_NESTING, Span, parse, parse_expr, parse_unit};

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
    // A chain of one operator family is one level, however long (up to
    // MAX_CHAIN_OPERANDS operands, an interim limit for the engine's sake).
    let n = MAX_CHAIN_OPERANDS - 1;
    for op in ["+", "-", "*", "/", " and ", " or "] {
        let src = format!("x = a{}", format!("{op}a").repeat(n));
        let w = parse(&src).unwrap_or_else(|e| panic!("{op}: {:?}", &e[..1]));
        assert_eq!(w.statements.len(), 1);
        sheaf_grammar::format(&src).unwrap_or_else(|e| panic!("{op}: {:?}", &e[..1]));
    }
    let src = format!(
        "x = a1{}",
        (2..=1000).map(|i| format!(" + a{i}")).collect::<String>()
    );
    assert!(parse(&src).is_ok());
    // Mixed `+` and `-` are one chain; a product inside is its own chain.
    let src = format!("x = a{}", " + b * c - d".repeat(n / 2));
    assert!(parse(&src).is_ok());
    // A comparison chain is a list, not limited.
    assert!(parse_expr(&format!("a{}", " < a".repeat(10_000))).is_ok());
}

#[test]
fn chain_operand_limit() {
    let n = MAX_CHAIN_OPERANDS;
    assert_eq!(n, 1024);
    let src = format!("x = a{}", " + a".repeat(n));
    let errs = parse(&src).unwrap_err();
    assert_eq!(errs.len(), 1);
    assert_eq!(
        errs[0].message,
        "more than 1024 operands joined by `+` and operators like it in one chain; split it into named intermediate values"
    );
    // At the operator that adds operand 1025.
    assert_eq!(errs[0].span.start, 4 + 1 + 4 * (n - 1) + 1);
    assert_eq!(&src[errs[0].span.start..errs[0].span.end], "+");
    let e = parse_expr(&format!("p{}", " and p".repeat(100_000))).unwrap_err();
    assert!(
        e.message
            .starts_with("more than 1024 operands joined by `and`")
    );
    // Parentheses start a new chain.
    let half = format!("a{}", " + a".repeat(n - 1));
    assert!(parse(&format!("x = ({half}) + ({half})")).is_ok());
}

#[test]
fn dropping_a_very_deep_tree_does_not_recurse() {
    // Built by hand (the parser would refuse it): 1 000 000 nested `+`.
    use sheaf_grammar::{Expr, ExprKind};
    let leaf = || Expr {
        kind: ExprKind::Name("a".into()),
        span: Span::default(),
    };
    let mut e = leaf();
    for _ in 0..1_000_000 {
        e = Expr {
            kind: ExprKind::Binary {
                op: sheaf_grammar::BinOp::Add,
                left: Box::new(e),
                right: Box::new(leaf()),
            },
            span: Span::default(),
        };
    }
    drop(e);
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
