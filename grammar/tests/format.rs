//! Formatter: canonical layout, idempotence, AST preservation (proptests),
//! and no panics on arbitrary input.

use proptest::prelude::*;
use sheaf_grammar::*;

// ------------------------------------------------------------ helpers

/// `Debug` text with every span (`Span { start: .., end: .. }`) reduced to
/// `Span`, for comparing trees without positions.
fn drop_spans(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    let mut rest = s;
    while let Some(i) = rest.find("Span { start: ") {
        out.push_str(&rest[..i]);
        out.push_str("Span");
        let close = rest[i..].find('}').map_or(rest.len(), |j| i + j + 1);
        rest = &rest[close..];
    }
    out.push_str(rest);
    out
}

/// The worksheet without spans and without blank lines (the formatter
/// collapses blank runs, which is its job).
fn strip(w: Worksheet) -> String {
    let kept: Vec<&Statement> = w
        .statements
        .iter()
        .filter(|s| s.kind != StatementKind::Blank)
        .collect();
    drop_spans(&format!("{kept:?}"))
}

fn fmt(src: &str) -> String {
    format(src).unwrap_or_else(|e| panic!("{src:?}: {e:?}"))
}

// ------------------------------------------------------------ layout

#[test]
fn canonical_layout() {
    let src = "\n\n# T  \n  x : kJ/kg   K=1.005 kJ/(kg  K)+ -a*f(b,c:d,) // hi  \n\n\n\n>  note  \n\
               y=(a)^-2 \\\n  \"desc \\\" q\"\ncheck a<=+b\nmeta by=\"A\"\ninput  z=2e5  Pa\"p\"\n\n";
    let want = "# T\n\
                x: kJ/kg K = 1.005 kJ/(kg K) + -a * f(b, c: d) // hi\n\
                \n\
                >  note\n\
                y = (a) ^ -2 \\\n    \"desc \\\" q\"\n\
                check a <= b\n\
                meta by = \"A\"\n\
                input z = 2e5 Pa  \"p\"\n";
    assert_eq!(fmt(src), want);
    assert_eq!(fmt(want), want);
}

#[test]
fn empty_and_blank_only() {
    assert_eq!(fmt(""), "");
    assert_eq!(fmt("\n\n  \n"), "");
    assert_eq!(fmt("x = 1"), "x = 1\n");
}

#[test]
fn comments_and_notes_verbatim() {
    assert_eq!(fmt("  //no space  \n>no space"), "//no space\n>no space\n");
    assert_eq!(fmt("##   Section   A"), "## Section   A\n");
}

#[test]
fn units_keep_their_meaning() {
    // the space before `*` makes it an operator; the formatter keeps that
    assert_eq!(
        fmt("x = 2 m*x + 2 m * x + 2 m^2 + 2 m ^ 2"),
        "x = 2 m*x + 2 m * x + 2 m^2 + 2 m ^ 2\n"
    );
    assert_eq!(fmt("x = 2kg"), "x = 2 kg\n");
}

#[test]
fn format_reports_parse_errors() {
    let errs = format("x = \ny = 1 +").unwrap_err();
    assert_eq!(errs.len(), 2);
}

#[test]
fn design_example_round_trip() {
    let src = include_str!("data/design_example.sheaf");
    let out = fmt(src);
    assert_eq!(strip(parse(&out).unwrap()), strip(parse(src).unwrap()));
    assert_eq!(fmt(&out), out);
    // Descriptions of a block start in one column, two spaces after the
    // widest code with a description in the block (here T2 is the only one).
    assert!(
        out.contains("T2: degC = st2.T  \"discharge temperature\"\n"),
        "{out}"
    );
    assert!(
        out.contains("input T1 = 24 degC      \"suction temperature\"\n"),
        "{out}"
    );
}

#[test]
fn descriptions_align_within_a_block() {
    let src =
        "input a = 1 m \"first\"\ninput long_name = 2 m \"second\"\nc = a\n\nd = 1 \"alone\"\n";
    let want = "input a = 1 m          \"first\"\ninput long_name = 2 m  \"second\"\nc = a\n\nd = 1  \"alone\"\n";
    assert_eq!(fmt(src), want);
    assert_eq!(fmt(want), want);
    // Code wider than the limit keeps a single space and does not widen the block.
    let wide = format!("x = {} \"w\"\ny = 1 \"n\"\n", vec!["a"; 30].join(" + "));
    let out = fmt(&wide);
    assert!(
        out.contains("a \"w\"\n") && out.contains("y = 1  \"n\"\n"),
        "{out}"
    );
}

// ------------------------------------------------------------ generators

fn ident() -> BoxedStrategy<String> {
    prop_oneof![
        Just("a".to_string()),
        Just("T1".to_string()),
        Just("st1".to_string()),
        Just("m".to_string()),
        Just("s".to_string()),
        Just("h".to_string()),
        Just("_x2".to_string()),
        Just("inputs".to_string()),
        "[a-z][a-z0-9_]{0,5}".prop_filter("keyword", |s| !KEYWORDS.contains(&s.as_str())),
    ]
    .boxed()
}

fn number() -> BoxedStrategy<String> {
    prop_oneof![
        Just("1".to_string()),
        Just("1.5".to_string()),
        Just(".5".to_string()),
        Just("2e5".to_string()),
        Just("1.5E-3".to_string()),
        "[0-9]{1,4}(\\.[0-9]{1,3})?",
    ]
    .boxed()
}

fn unit_atom() -> BoxedStrategy<String> {
    prop_oneof![
        Just("kg".to_string()),
        Just("m".to_string()),
        Just("s".to_string()),
        Just("K".to_string()),
        Just("kJ".to_string()),
        Just("degC".to_string()),
        Just("°C".to_string()),
        Just("µm".to_string()),
        Just("%".to_string()),
        Just("barg".to_string()),
    ]
    .boxed()
}

/// A unit written with the in-parentheses rules (spaces allowed).
fn unit_loose() -> BoxedStrategy<String> {
    let leaf = (unit_atom(), prop::option::of(-3i32..4)).prop_map(|(a, p)| match p {
        Some(p) => format!("{a}^{p}"),
        None => a,
    });
    leaf.prop_recursive(3, 12, 3, |inner| {
        prop_oneof![
            (inner.clone(), inner.clone())
                .prop_map(|(a, b)| format!("{a} {b}"))
                .boxed(),
            (
                inner.clone(),
                inner.clone(),
                prop_oneof![Just("*"), Just("/"), Just(" / "), Just(" * ")]
            )
                .prop_map(|(a, b, op)| format!("{a}{op}{b}"))
                .boxed(),
            inner.prop_map(|a| format!("({a})")).boxed(),
        ]
    })
    .boxed()
}

/// A unit written right after a number (no top-level spaces).
fn unit_tight() -> BoxedStrategy<String> {
    let factor = prop_oneof![
        3 => (unit_atom(), prop::option::of(-3i32..4)).prop_map(|(a, p)| match p {
            Some(p) => format!("{a}^{p}"),
            None => a,
        }),
        1 => unit_loose().prop_map(|u| format!("({u})")),
    ];
    (
        unit_atom(),
        prop::collection::vec((prop_oneof![Just("*"), Just("/")], factor), 0..3),
    )
        .prop_map(|(first, rest)| {
            let mut s = first;
            for (op, f) in rest {
                s += op;
                s += &f;
            }
            s
        })
        .boxed()
}

fn string_lit() -> BoxedStrategy<String> {
    "[a-z \\\\\"/@;]{0,8}"
        .prop_map(|v| {
            let mut s = String::from("\"");
            for c in v.chars() {
                if c == '"' || c == '\\' {
                    s.push('\\');
                }
                s.push(c);
            }
            s.push('"');
            s
        })
        .boxed()
}

fn ws() -> BoxedStrategy<&'static str> {
    prop_oneof![Just(""), Just(" "), Just("  "), Just("\t")].boxed()
}

/// Blanks after an operator, sometimes a `\` continuation.
fn ws_or_continuation() -> BoxedStrategy<&'static str> {
    prop_oneof![4 => ws(), 1 => Just(" \\\n  "), 1 => Just("\\\r\n")].boxed()
}

fn cmp_op() -> BoxedStrategy<&'static str> {
    prop_oneof![
        Just("<"),
        Just("<="),
        Just(">"),
        Just(">="),
        Just("=="),
        Just("!=")
    ]
    .boxed()
}

fn expr() -> BoxedStrategy<String> {
    let leaf = prop_oneof![
        ident(),
        number(),
        (number(), ws(), unit_tight()).prop_map(|(n, w, u)| {
            // a unit needs a separating blank unless the number cannot run into it
            let w = if w.is_empty() { " " } else { w };
            format!("{n}{w}{u}")
        }),
        string_lit(),
    ];
    leaf.prop_recursive(4, 24, 4, |inner| {
        prop_oneof![
            (
                inner.clone(),
                prop_oneof![Just("+"), Just("-"), Just("*"), Just("/"), Just("^")],
                inner.clone(),
                ws_or_continuation()
            )
                .prop_map(|(a, op, b, w)| {
                    // `+ -NUMBER` is refused as a tolerance notation.
                    if op == "+" && b.starts_with('-') {
                        format!("{a} {op}{w}({b})")
                    } else {
                        format!("{a} {op}{w}{b}")
                    }
                })
                .boxed(),
            (prop_oneof![Just("-"), Just("+"), Just("- ")], inner.clone())
                .prop_map(|(op, a)| format!("{op}{a}"))
                .boxed(),
            (inner.clone(), ws())
                .prop_map(|(a, w)| format!("({w}{a}{w})"))
                .boxed(),
            (
                ident(),
                prop::collection::vec((prop::option::of(ident()), inner.clone()), 0..3),
                any::<bool>()
            )
                .prop_map(|(f, args, trailing)| {
                    let args: Vec<String> = args
                        .into_iter()
                        .map(|(n, v)| match n {
                            Some(n) => format!("{n}:{v}"),
                            None => v,
                        })
                        .collect();
                    let comma = if trailing && !args.is_empty() {
                        ","
                    } else {
                        ""
                    };
                    format!("{f}({}{comma})", args.join(","))
                })
                .boxed(),
            (inner.clone(), ident())
                .prop_map(|(a, f)| format!("({a}).{f}"))
                .boxed(),
            // Conditions: comparisons (chained), `and` / `or`, `not` and
            // `if` (the last two in parentheses, where an operand may
            // stand).
            (
                inner.clone(),
                prop::collection::vec((cmp_op(), inner.clone()), 1..3),
                ws_or_continuation()
            )
                .prop_map(|(a, rest, w)| {
                    let mut s = a;
                    for (op, b) in rest {
                        s += &format!(" {op}{w}{b}");
                    }
                    s
                })
                .boxed(),
            (
                inner.clone(),
                prop_oneof![Just("and"), Just("or")],
                inner.clone(),
                ws_or_continuation()
            )
                .prop_map(|(a, op, b, w)| format!("{a} {op} {w}{b}"))
                .boxed(),
            inner.clone().prop_map(|a| format!("(not {a})")).boxed(),
            (inner.clone(), inner.clone(), inner)
                .prop_map(|(c, a, b)| format!("(if {c} then {a} else {b})"))
                .boxed(),
            (ident(), ident())
                .prop_map(|(a, f)| format!("{a}.{f}"))
                .boxed(),
        ]
    })
    .boxed()
}

fn description() -> BoxedStrategy<String> {
    prop::option::of(string_lit())
        .prop_map(|d| d.map(|d| format!(" {d}")).unwrap_or_default())
        .boxed()
}

fn comment() -> BoxedStrategy<String> {
    prop::option::of("[a-z @;]{0,6}")
        .prop_map(|c| c.map(|c| format!(" // {c}")).unwrap_or_default())
        .boxed()
}

fn statement() -> BoxedStrategy<String> {
    prop_oneof![
        (1usize..4, "[A-Za-z0-9 :-]{0,10}").prop_map(|(l, t)| format!("{} {t}", "#".repeat(l))),
        "[a-z @;]{0,10}".prop_map(|t| format!("> {t}")),
        "[a-z @;]{0,10}".prop_map(|t| format!("// {t}")),
        Just(String::new()),
        Just("   ".to_string()),
        (ident(), string_lit(), comment()).prop_map(|(k, v, c)| format!("meta {k} = {v}{c}")),
        (ident(), expr(), description(), comment())
            .prop_map(|(n, e, d, c)| format!("input {n} = {e}{d}{c}")),
        (
            ident(),
            prop::option::of(unit_loose()),
            expr(),
            description(),
            comment()
        )
            .prop_map(|(n, u, e, d, c)| match u {
                Some(u) => format!("{n} : {u} = {e}{d}{c}"),
                None => format!("{n}={e}{d}{c}"),
            }),
        (
            expr(),
            prop_oneof![
                Just("<"),
                Just("<="),
                Just(">"),
                Just(">="),
                Just("=="),
                Just("!=")
            ],
            expr(),
            description()
        )
            .prop_map(|(a, op, b, d)| format!("check {a} {op} {b}{d}")),
        (expr(), description(), comment()).prop_map(|(a, d, c)| format!("check {a}{d}{c}")),
        (
            ident(),
            prop::collection::vec((ident(), expr()), 1..3),
            description()
        )
            .prop_map(|(n, sets, d)| {
                let sets: Vec<String> = sets
                    .into_iter()
                    .map(|(i, e)| format!("{i} = {e}"))
                    .collect();
                format!("case {n}: {}{d}", sets.join(", "))
            }),
        (
            ident(),
            expr(),
            expr(),
            prop_oneof![Just("step"), Just("count")],
            expr(),
            prop::collection::vec(ident(), 1..3),
            description()
        )
            .prop_map(|(i, a, b, k, c, show, d)| format!(
                "sweep {i} from {a} to {b} {k} {c} show {}{d}",
                show.join(", ")
            )),
        (
            ident(),
            prop::collection::vec(expr(), 1..3),
            prop::collection::vec(ident(), 1..3),
            comment()
        )
            .prop_map(|(i, v, show, c)| format!(
                "sweep {i} over {} show {}{c}",
                v.join(","),
                show.join(",")
            )),
        (ident(), expr(), expr(), expr(), expr(), description())
            .prop_map(|(i, a, b, l, r, d)| format!("find {i} in {a} .. {b} where {l} = {r}{d}")),
        (string_lit(), ident()).prop_map(|(p, n)| format!("use {p} as {n}")),
        (expr(), description()).prop_map(|(e, d)| format!("gauge {e}{d}")),
    ]
    .boxed()
}

fn worksheet() -> impl Strategy<Value = String> {
    prop::collection::vec(statement(), 0..8).prop_map(|v| v.join("\n"))
}

/// Strings made of the language's tokens, valid or not.
fn token_soup() -> impl Strategy<Value = String> {
    let tok = prop_oneof![
        Just("input "),
        Just("check "),
        Just("meta "),
        Just("x"),
        Just("T1"),
        Just("="),
        Just(":"),
        Just("("),
        Just(")"),
        Just(","),
        Just("."),
        Just("+"),
        Just("-"),
        Just("*"),
        Just("/"),
        Just("^"),
        Just("<="),
        Just("<"),
        Just("=="),
        Just("!="),
        Just("\""),
        Just("\\"),
        Just("\\\n"),
        Just("\n"),
        Just("\r\n"),
        Just(" "),
        Just("1.5"),
        Just("2e5"),
        Just(".5"),
        Just("kg"),
        Just("°C"),
        Just("%"),
        Just("//"),
        Just("#"),
        Just(">"),
        Just("@"),
        Just("1e999"),
        Just("η"),
        Just("\u{feff}"),
        Just("\t"),
        Just("\r"),
        Just("and "),
        Just(" or "),
        Just("not "),
        Just("if "),
        Just(" then "),
        Just(" else "),
        Just("case "),
        Just("sweep "),
        Just("find "),
        Just(" from "),
        Just(" to "),
        Just(" step "),
        Just(" count "),
        Just(" over "),
        Just(" show "),
        Just(" where "),
        Just(" in "),
        Just("use "),
        Just(" as "),
        Just("gauge "),
        Just(".."),
        Just("+-"),
    ];
    prop::collection::vec(tok, 0..40).prop_map(|v| v.concat())
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 256, ..ProptestConfig::default() })]

    #[test]
    fn never_panics_on_arbitrary_strings(s in "\\PC*") {
        let _ = parse(&s);
        let _ = parse_expr(&s);
        let _ = parse_unit(&s);
        let _ = format(&s);
    }

    #[test]
    fn never_panics_on_token_soup(s in token_soup()) {
        let _ = parse(&s);
        let _ = parse_expr(&s);
        let _ = parse_unit(&s);
        if let Ok(out) = format(&s) {
            // whatever parses formats to something that parses the same
            prop_assert_eq!(strip(parse(&out).unwrap()), strip(parse(&s).unwrap()));
            prop_assert_eq!(format(&out).unwrap(), out);
        }
    }

    #[test]
    fn errors_have_spans_inside_the_source(s in token_soup()) {
        if let Err(errs) = parse(&s) {
            for e in errs {
                prop_assert!(e.span.start <= e.span.end && e.span.end <= s.len(), "{:?}", e);
                prop_assert!(s.is_char_boundary(e.span.start) && s.is_char_boundary(e.span.end));
                prop_assert!(!e.message.is_empty());
            }
        }
    }

    #[test]
    fn format_is_idempotent_and_preserves_the_ast(src in worksheet()) {
        let w = parse(&src).map_err(|e| TestCaseError::fail(format!("{src:?}: {e:?}")))?;
        let out = format(&src).map_err(|e| TestCaseError::fail(format!("{e:?}")))?;
        let w2 = parse(&out).map_err(|e| TestCaseError::fail(format!("{out:?}: {e:?}")))?;
        prop_assert_eq!(strip(w2), strip(w));
        prop_assert_eq!(format(&out).unwrap(), out.clone());
        prop_assert!(out.is_empty() || (out.ends_with('\n') && !out.ends_with("\n\n")));
        prop_assert!(!out.lines().any(|l| l != l.trim_end()));
    }

    #[test]
    fn parse_expr_agrees_with_statements(e in expr()) {
        // `parse_expr` reads one line (no `\` continuations).
        prop_assume!(!e.contains(['\n', '\r']));
        let a = parse_expr(&e).map_err(|err| TestCaseError::fail(format!("{e:?}: {err:?}")))?;
        let src = format!("x = {e}");
        let w = parse(&src).map_err(|err| TestCaseError::fail(format!("{src:?}: {err:?}")))?;
        let StatementKind::Define { value, .. } = &w.statements[0].kind else {
            return Err(TestCaseError::fail("not a define"));
        };
        prop_assert_eq!(drop_spans(&format!("{a:?}")), drop_spans(&format!("{value:?}")));
        // spans of the statement form are the expression's shifted by 4
        let v = parse_expr(&e).unwrap();
        prop_assert_eq!(value.span, Span::new(v.span.start + 4, v.span.end + 4));
    }

    #[test]
    fn parse_unit_accepts_generated_units(u in unit_loose()) {
        parse_unit(&u).map_err(|err| TestCaseError::fail(format!("{u:?}: {err:?}")))?;
    }
}
