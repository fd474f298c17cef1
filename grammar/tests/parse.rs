//! Parser tests: statement kinds, expression forms, units, spans, errors.

use sheaf_grammar::*;

mod common;
use common::{e, err1, one, sx, u, ux};

fn msg(src: &str) -> String {
    err1(src).message
}

fn sp(s: Span, src: &str) -> &str {
    s.slice(src)
}

// ------------------------------------------------------------ statements

#[test]
fn headings_notes_comments_blank() {
    let src = "# C-2 compressor  \n## Suction\n###  Sub \n> a note  \n// a comment\n\n   \n";
    let w = parse(src).unwrap();
    let k: Vec<_> = w.statements.iter().map(|s| s.kind.clone()).collect();
    assert_eq!(
        k,
        vec![
            StatementKind::Heading {
                level: 1,
                text: "C-2 compressor".into()
            },
            StatementKind::Heading {
                level: 2,
                text: "Suction".into()
            },
            StatementKind::Heading {
                level: 3,
                text: "Sub".into()
            },
            StatementKind::Note {
                text: "a note".into()
            },
            StatementKind::Comment {
                text: "a comment".into()
            },
            StatementKind::Blank,
            StatementKind::Blank,
        ]
    );
    assert_eq!(sp(w.statements[0].span, src), "# C-2 compressor");
    assert_eq!(sp(w.statements[3].span, src), "> a note");
}

#[test]
fn empty_source_has_no_statements() {
    assert_eq!(parse("").unwrap().statements.len(), 0);
    assert_eq!(parse("\n").unwrap().statements.len(), 1);
}

#[test]
fn meta_statement() {
    let src = "meta prepared = \"A. Person\"";
    let StatementKind::Meta { key, value } = one(src).kind else {
        panic!()
    };
    assert_eq!(key.name, "prepared");
    assert_eq!(sp(key.span, src), "prepared");
    assert_eq!(value.value, "A. Person");
    assert_eq!(sp(value.span, src), "\"A. Person\"");
}

#[test]
fn input_statement() {
    let src = "input T1 = 24 degC            \"suction temperature\"";
    let st = one(src);
    assert_eq!(sp(st.span, src), src);
    let StatementKind::Input {
        name,
        value,
        description,
    } = st.kind
    else {
        panic!()
    };
    assert_eq!(name.name, "T1");
    assert_eq!(sx(&value), "24[degC]");
    assert_eq!(sp(value.span, src), "24 degC");
    let d = description.unwrap();
    assert_eq!(d.value, "suction temperature");
    assert_eq!(sp(d.span, src), "\"suction temperature\"");
}

#[test]
fn define_with_and_without_annotation() {
    let src = "T2 : degC = st2.T             \"discharge temperature\"";
    let StatementKind::Define {
        name,
        unit,
        value,
        description,
    } = one(src).kind
    else {
        panic!()
    };
    assert_eq!(name.name, "T2");
    let unit = unit.unwrap();
    assert_eq!(ux(&unit), "degC");
    assert_eq!(sp(unit.span, src), "degC");
    assert_eq!(sx(&value), "(. st2 T)");
    assert_eq!(sp(value.span, src), "st2.T");
    assert_eq!(description.unwrap().value, "discharge temperature");

    let src = "cp : kJ/kg K = 1.005 kJ/(kg K)";
    let StatementKind::Define {
        unit,
        value,
        description,
        ..
    } = one(src).kind
    else {
        panic!()
    };
    let unit = unit.unwrap();
    assert_eq!(ux(&unit), "(/ kJ (* kg K))");
    assert_eq!(sp(unit.span, src), "kJ/kg K");
    assert_eq!(sx(&value), "1.005[(/ kJ (* kg K))]");
    assert!(description.is_none());

    let StatementKind::Define { unit, .. } = one("gas = ideal_gas(\"air\")").kind else {
        panic!()
    };
    assert!(unit.is_none());
}

#[test]
fn check_statement() {
    let src = "check T2 <= 220 degC          \"discharge temperature limit\"";
    let StatementKind::Check { cond, description } = one(src).kind else {
        panic!()
    };
    let (left, op, op_span, right) = cond.as_single_comparison().unwrap();
    assert_eq!(sx(left), "T2");
    assert_eq!(op, CompareOp::Le);
    assert_eq!(sp(op_span, src), "<=");
    assert_eq!(sx(right), "220[degC]");
    assert_eq!(description.unwrap().value, "discharge temperature limit");
    for (s, want) in [
        ("<", CompareOp::Lt),
        ("<=", CompareOp::Le),
        (">", CompareOp::Gt),
        (">=", CompareOp::Ge),
        ("==", CompareOp::Eq),
        ("!=", CompareOp::Ne),
    ] {
        let StatementKind::Check { cond, .. } = one(&format!("check a {s} b")).kind else {
            panic!()
        };
        let op = cond.as_single_comparison().unwrap().1;
        assert_eq!(op, want, "{s}");
        assert_eq!(op.symbol(), s);
    }
}

#[test]
fn design_example_parses() {
    let src = include_str!("data/design_example.sheaf");
    let w = parse(src).unwrap();
    let n = |f: fn(&StatementKind) -> bool| w.statements.iter().filter(|s| f(&s.kind)).count();
    assert_eq!(n(|k| matches!(k, StatementKind::Input { .. })), 5);
    assert_eq!(n(|k| matches!(k, StatementKind::Define { .. })), 7);
    assert_eq!(n(|k| matches!(k, StatementKind::Check { .. })), 1);
    assert_eq!(n(|k| matches!(k, StatementKind::Heading { .. })), 2);
}

#[test]
fn trailing_comment_is_ignored() {
    let src = "x = 1 kg // one kilogram";
    let st = one(src);
    assert_eq!(sp(st.span, src), "x = 1 kg");
    let StatementKind::Define { value, .. } = st.kind else {
        panic!()
    };
    assert_eq!(sx(&value), "1[kg]");
    // `//` right after a unit or name is a comment, not two divisions.
    let StatementKind::Define { value, .. } = one("x = a//b").kind else {
        panic!()
    };
    assert_eq!(sx(&value), "a");
    let StatementKind::Define { value, .. } = one("x = 2 m/s// c").kind else {
        panic!()
    };
    assert_eq!(sx(&value), "2[(/ m s)]");
    // `//` inside a string is text.
    let StatementKind::Define { value, .. } = one("x = \"a//b\" // c").kind else {
        panic!()
    };
    assert_eq!(sx(&value), "\"a//b\"");
}

#[test]
fn continuation_lines_and_original_offsets() {
    let src = "a = 1\nW = mdot * \\\n    (h2 - h1) \\\r\n    \"power\"\nb = 2\n";
    let w = parse(src).unwrap();
    assert_eq!(w.statements.len(), 3);
    let st = &w.statements[1];
    assert_eq!(
        sp(st.span, src),
        "W = mdot * \\\n    (h2 - h1) \\\r\n    \"power\""
    );
    let StatementKind::Define {
        value, description, ..
    } = &st.kind
    else {
        panic!()
    };
    assert_eq!(sx(value), "(* mdot (paren (- h2 h1)))");
    assert_eq!(sp(value.span, src), "mdot * \\\n    (h2 - h1)");
    let d = description.as_ref().unwrap();
    assert_eq!(sp(d.span, src), "\"power\"");
    assert_eq!(line_col(src, d.span.start), (4, 5));
    // A comment line ending in `\` does not swallow the next line.
    let w = parse("// C:\\\nx = 1").unwrap();
    assert_eq!(w.statements.len(), 2);
    // Nor does a trailing comment ending in `\`.
    let w = parse("y = 2 // dir\\\nx = 1").unwrap();
    assert_eq!(w.statements.len(), 2);
}

#[test]
fn crlf_and_bom() {
    let src = "\u{feff}# T\r\nx = 1\r\n\r\ny = x\r\n";
    let w = parse(src).unwrap();
    assert_eq!(w.statements.len(), 4);
    assert_eq!(sp(w.statements[1].span, src), "x = 1");
    assert_eq!(
        w.statements[0].kind,
        StatementKind::Heading {
            level: 1,
            text: "T".into()
        }
    );
}

#[test]
fn keyword_prefixed_names_are_names() {
    let StatementKind::Define { name, value, .. } = one("inputs = checked + meta_x").kind else {
        panic!()
    };
    assert_eq!(name.name, "inputs");
    assert_eq!(sx(&value), "(+ checked meta_x)");
}

// ------------------------------------------------------------ expressions

#[test]
fn precedence_and_associativity() {
    assert_eq!(e("a + b * c"), "(+ a (* b c))");
    assert_eq!(e("a - b - c"), "(- (- a b) c)");
    assert_eq!(e("a / b / c"), "(/ (/ a b) c)");
    assert_eq!(e("a * b / c"), "(/ (* a b) c)");
    assert_eq!(e("a ^ b ^ c"), "(^ a (^ b c))");
    assert_eq!(e("-2^2"), "(neg (^ 2 2))");
    assert_eq!(e("-a * b"), "(* (neg a) b)");
    assert_eq!(e("a * -b"), "(* a (neg b))");
    assert_eq!(e("a - -b"), "(- a (neg b))");
    assert_eq!(e("a--b"), "(- a (neg b))");
    assert_eq!(e("2^-1"), "(^ 2 (neg 1))");
    assert_eq!(e("2^-1*3"), "(* (^ 2 (neg 1)) 3)");
    assert_eq!(e("a*-b^c"), "(* a (neg (^ b c)))");
    assert_eq!(e("--a"), "(neg (neg a))");
    assert_eq!(e("(a + b) * c"), "(* (paren (+ a b)) c)");
    assert_eq!(
        e("(T2/T1)^((k-1)/k)"),
        "(^ (paren (/ T2 T1)) (paren (/ (paren (- k 1)) k)))"
    );
}

#[test]
fn unary_plus_has_no_node() {
    let src = "+a * b";
    let x = parse_expr(src).unwrap();
    assert_eq!(sx(&x), "(* a b)");
    let ExprKind::Binary { left, .. } = &x.kind else {
        panic!()
    };
    assert_eq!(sp(left.span, src), "+a");
}

#[test]
fn numbers() {
    for (s, v) in [
        ("1", 1.0),
        ("1.5", 1.5),
        (".5", 0.5),
        ("2e5", 2e5),
        ("1.5E-3", 1.5e-3),
        ("3e+2", 300.0),
    ] {
        let x = parse_expr(s).unwrap();
        let ExprKind::Number { value, text, unit } = &x.kind else {
            panic!()
        };
        assert_eq!(*value, v, "{s}");
        assert_eq!(text, s);
        assert!(unit.is_none());
    }
}

#[test]
fn strings_and_escapes() {
    let src = r#"f("a \"q\" \\ b")"#;
    assert_eq!(e(src), r#"(call f "a \"q\" \\ b")"#);
}

#[test]
fn calls_fields_and_named_args() {
    assert_eq!(e("state(gas, T: T1, p: p1)"), "(call state gas T:T1 p:p1)");
    assert_eq!(e("f(a, eta: 0.8, b)"), "(call f a eta:0.8 b)");
    assert_eq!(e("f(a, b,)"), "(call f a b)");
    assert_eq!(e("f()"), "(call f)");
    assert_eq!(e("st1.h"), "(. st1 h)");
    assert_eq!(e("state(g, T: T1).h"), "(. (call state g T:T1) h)");
    assert_eq!(e("a.b.c"), "(. (. a b) c)");
    assert_eq!(e("(a).b"), "(. (paren a) b)");
    assert_eq!(
        e("mdot * (st2.h - st1.h)"),
        "(* mdot (paren (- (. st2 h) (. st1 h))))"
    );
    let src = "state(gas, T: T1 + 1)";
    let x = parse_expr(src).unwrap();
    let ExprKind::Call { func, args } = &x.kind else {
        panic!()
    };
    assert_eq!(sp(func.span, src), "state");
    assert_eq!(sp(args[0].span, src), "gas");
    assert_eq!(sp(args[1].span, src), "T: T1 + 1");
    assert_eq!(sp(args[1].name.as_ref().unwrap().span, src), "T");
    assert_eq!(sp(args[1].value.span, src), "T1 + 1");
    assert_eq!(sp(x.span, src), src);
}

#[test]
fn spans_of_expression_nodes() {
    let src = "  a + 2 m * -x  ";
    let x = parse_expr(src).unwrap();
    assert_eq!(sp(x.span, src), "a + 2 m * -x");
    let ExprKind::Binary { right, .. } = &x.kind else {
        panic!()
    };
    assert_eq!(sp(right.span, src), "2 m * -x");
    let ExprKind::Binary { left, right, .. } = &right.kind else {
        panic!()
    };
    assert_eq!(sp(left.span, src), "2 m");
    assert_eq!(sp(right.span, src), "-x");
    let ExprKind::Number { unit: Some(un), .. } = &left.kind else {
        panic!()
    };
    assert_eq!(sp(un.span, src), "m");
}

// ------------------------------------------------------------ units

#[test]
fn units_after_numbers() {
    assert_eq!(e("20 degC"), "20[degC]");
    assert_eq!(e("3 m^3/h"), "3[(/ (^ m 3) h)]");
    assert_eq!(e("1.005 kJ/(kg*K)"), "1.005[(/ kJ (* kg K))]");
    assert_eq!(e("1.005 kJ/(kg K)"), "1.005[(/ kJ (* kg K))]");
    assert_eq!(e("1.005 kJ/( kg  K )"), "1.005[(/ kJ (* kg K))]");
    assert_eq!(e("0.52 kg/s"), "0.52[(/ kg s)]");
    assert_eq!(e("9.81 m/s^2"), "9.81[(/ m (^ s 2))]");
    assert_eq!(e("2 s^-1"), "2[(^ s -1)]");
    assert_eq!(e("5 %"), "5[%]");
    assert_eq!(e("20 °C"), "20[°C]");
    assert_eq!(e("3 µm"), "3[µm]");
    assert_eq!(e("2kg"), "2[kg]");
    assert_eq!(e("7.5 barg"), "7.5[barg]");
    assert_eq!(e("1 degC_diff"), "1[degC_diff]");
}

#[test]
fn spaces_separate_units_from_operators() {
    assert_eq!(e("2 m * x"), "(* 2[m] x)");
    assert_eq!(e("2 m*x"), "2[(* m x)]");
    assert_eq!(e("5 m/s"), "5[(/ m s)]");
    assert_eq!(e("5 m / s"), "(/ 5[m] s)");
    assert_eq!(e("2 m ^ 2"), "(^ 2[m] 2)");
    assert_eq!(e("2*x"), "(* 2 x)");
    assert_eq!(e("2 * m"), "(* 2 m)");
    // names m, s, h, g stay free
    assert_eq!(e("m * s + h - g"), "(- (+ (* m s) h) g)");
    // a unit after a number does not take a parenthesised start
    assert!(parse_expr("2 (y)").is_err());
    // `kg*(x+1)` is not a unit: the unit stops at `kg`
    assert_eq!(e("2 kg*(x + 1)"), "(* 2[kg] (paren (+ x 1)))");
}

#[test]
fn annotation_and_parse_unit_rules() {
    assert_eq!(u("kJ/kg K"), "(/ kJ (* kg K))");
    assert_eq!(u("kJ / (kg K)"), "(/ kJ (* kg K))");
    assert_eq!(u("W/m^2 K"), "(/ W (* (^ m 2) K))");
    assert_eq!(u("kg m/s^2"), "(/ (* kg m) (^ s 2))");
    assert_eq!(u("kJ/kg*K"), "(* (/ kJ kg) K)");
    assert_eq!(u("1/s"), "(/ 1 s)");
    assert_eq!(u("1/min"), "(/ 1 min)");
    assert_eq!(u("  degC "), "degC");
    assert_eq!(u("°F"), "°F");
    assert_eq!(u("%"), "%");
    assert_eq!(u("(m/s)^2"), "(^ (/ m s) 2)");
    let src = "kJ/(kg K)";
    let x = parse_unit(src).unwrap();
    let UnitKind::Div(_, den) = &x.kind else {
        panic!()
    };
    assert_eq!(sp(den.span, src), "(kg K)");
    assert_eq!(sp(x.span, src), src);
}

// ------------------------------------------------------------ errors

#[test]
fn error_expected_expression() {
    let src = "x = ";
    let err = err1(src);
    assert_eq!(err.message, "expected an expression after `=`");
    assert_eq!(err.span, Span::new(4, 4));
    assert_eq!(msg("input x = 1 +"), "expected an expression after `+`");
    assert_eq!(msg("x = f(a, b: )"), "expected an expression after `:`");
    assert_eq!(msg("check a <"), "expected an expression after `<`");
    assert_eq!(
        parse_expr("").unwrap_err().message,
        "expected an expression"
    );
    assert_eq!(
        parse_expr("   ").unwrap_err().message,
        "expected an expression"
    );
}

#[test]
fn error_unclosed_paren_names_its_line() {
    let src = "# t\n\nx = (a + \\\n  (b + c)\ny = 1";
    let err = err1(src);
    assert_eq!(
        err.message,
        "expected `)` to close the `(` opened at line 3"
    );
    assert_eq!(line_col(src, err.span.start), (4, 10));
    assert_eq!(
        msg("x = f(a,"),
        "expected `)` to close the `(` opened at line 1"
    );
    assert_eq!(msg("x = (a b)"), "a unit can only follow a number or `:`");
    assert_eq!(msg("x = (a))"), "unexpected `)` without a matching `(`");
}

#[test]
fn error_unexpected_character() {
    let err = err1("x = a @ b");
    assert_eq!(err.message, "unexpected `@`");
    assert_eq!(err.span, Span::new(6, 7));
    assert_eq!(msg("x = a;"), "unexpected `;`");
    assert_eq!(
        msg("x = 1\u{a0}kg"),
        "unexpected a non-breaking space (U+00A0)"
    );
    // inside strings and comments anything goes
    assert!(parse("x = \"@;{}\" // @;{}").is_ok());
}

#[test]
fn error_unit_placement() {
    let err = err1("x = a kg");
    assert_eq!(err.message, "a unit can only follow a number or `:`");
    assert_eq!(err.span, Span::new(6, 8));
    assert_eq!(
        msg("x = (1 + 2) kg"),
        "a unit can only follow a number or `:`"
    );
    let err = err1("x = 1.005 kJ/kg K");
    assert_eq!(
        err.message,
        "unexpected `K`: a unit after a number cannot contain spaces except inside parentheses, e.g. `kJ/(kg K)`"
    );
    assert_eq!(err.span, Span::new(16, 17));
    assert_eq!(msg("x : = 3"), "expected a unit after `:`");
    assert_eq!(parse_unit("").unwrap_err().message, "expected a unit");
    assert_eq!(
        parse_unit("kg/").unwrap_err().message,
        "expected a unit after `/`"
    );
}

#[test]
fn error_keywords() {
    for kw in ["input", "check", "meta"] {
        let err = err1(&format!("{kw} = 3"));
        assert_eq!(
            err.message,
            format!("`{kw}` is a keyword and cannot be a name")
        );
        assert_eq!(err.span, Span::new(0, kw.len()));
    }
    let err = err1("x = 2 * input");
    assert_eq!(err.message, "`input` is a keyword and cannot be a name");
    assert_eq!(err.span, Span::new(8, 13));
    assert_eq!(
        msg("input check = 1"),
        "`check` is a keyword and cannot be a name"
    );
    assert_eq!(
        msg("x = f(meta: 1)"),
        "`meta` is a keyword and cannot be a name"
    );
    assert_eq!(
        msg("x : kg = check"),
        "`check` is a keyword and cannot be a name"
    );
}

#[test]
fn error_comparisons() {
    // Any condition is a check as far as the grammar goes (the checker
    // decides what a check may hold); `=` is the usual slip.
    for ok in [
        "check a",
        "check a < b < c",
        "x = a < b",
        "check a and not b",
    ] {
        parse(ok).unwrap_or_else(|e| panic!("{ok}: {e:?}"));
    }
    let c = "`=` is not a comparison (`<`, `<=`, `>`, `>=`, `==`, `!=`); use `==` to test equality";
    let err = err1("check a = b");
    assert_eq!(err.message, c);
    assert_eq!(err.span, Span::new(8, 9));
    assert_eq!(msg("x = a = b"), c);
}

#[test]
fn error_strings() {
    let err = err1("input x = 1 \"no end");
    assert_eq!(err.message, "unterminated string");
    assert_eq!(err.span, Span::new(12, 19));
    let err = err1("x = \"a\\n\"");
    assert_eq!(
        err.message,
        "unknown escape `\\n` in a string; only `\\\"` and `\\\\` are allowed"
    );
    assert_eq!(err.span, Span::new(6, 8));
    assert_eq!(
        msg("meta by = 3"),
        "expected a text in quotes after `=`, e.g. `meta prepared = \"A. Person\"`"
    );
}

#[test]
fn error_names_and_statements() {
    assert_eq!(
        msg("x"),
        "expected `=` after `x`, found the end of the line"
    );
    assert_eq!(msg("x 3"), "expected `=` after `x`, found `3`");
    assert_eq!(
        msg("input"),
        "expected a name after `input`, found the end of the line"
    );
    assert_eq!(
        msg("3x = 1"),
        "`3x` is not a valid name: a name starts with a letter or `_`"
    );
    assert_eq!(
        msg("η = 1"),
        "`η` is not a valid name: names use ASCII letters, digits and `_`"
    );
    assert_eq!(
        msg("= 3"),
        "expected a statement (a name, `input`, `check`, `meta`, `case`, `sweep`, `find`, `use`, `gauge`, `#` heading, `>` note or `//` comment), found `=`"
    );
    assert_eq!(msg("x = 1 2"), "expected an operator before `2`");
    assert_eq!(
        msg("x = 1 \"d\" y"),
        "expected the end of the statement after the description, found `y` (a comment starts with `//`)"
    );
    assert_eq!(
        msg("x = st.f(2)"),
        "only a name can be called; `st.f` is a field access"
    );
    assert_eq!(
        msg("#### too deep"),
        "a heading has at most three `#` (`#` title, `##` section, `###` subsection)"
    );
    assert_eq!(msg("x = 1e999"), "the number `1e999` is too large");
}

#[test]
fn all_errors_one_per_statement() {
    let src = "# ok\nx = \ny = 2\nz = a @ b\ncheck q = 1\nw = (1\n";
    let errs = parse(src).unwrap_err();
    let got: Vec<_> = errs
        .iter()
        .map(|e| (line_col(src, e.span.start).0, e.message.as_str()))
        .collect();
    assert_eq!(
        got,
        vec![
            (2, "expected an expression after `=`"),
            (4, "unexpected `@`"),
            (
                5,
                "`=` is not a comparison (`<`, `<=`, `>`, `>=`, `==`, `!=`); use `==` to test equality"
            ),
            (6, "expected `)` to close the `(` opened at line 6"),
        ]
    );
}

#[test]
fn pest_rule_names_never_leak() {
    let bad = [
        "x = ",
        "x",
        "input",
        "check",
        "meta",
        "meta x",
        "meta x =",
        "x : kg",
        "x = f(",
        "x = (",
        "x = a.",
        "x = 1 kg/",
        "x = 2 kg^",
        "x = ,",
        "x = f(a:)",
        "x : kg/ = 1",
        "check a < b c",
        "x = a b",
        "x = )",
        "x ==",
        "x = 1 \"d\" \"e\"",
        "x = -",
        "x = 2^",
        "x: (kg = 1",
        "x = 2 kg/(m",
    ];
    for b in bad {
        let errs = parse(b).expect_err(b);
        for e in errs {
            for leak in [
                "EOI",
                "Rule",
                "positives",
                "unit_",
                "_only",
                "stmt_",
                "num_lit",
                "cmp_op",
                "postfix",
                "lparen",
                "rparen",
                "trailing_comment",
                "ident",
            ] {
                assert!(!e.message.contains(leak), "{b:?}: {}", e.message);
            }
        }
    }
}
