//! The what-if and revision language: conditions (`if`, `and`, `or`, `not`,
//! comparison chains), `check` with any condition, `case`, `sweep`, `find`,
//! `use`, `gauge`; the keyword rule; lone CR line breaks; size limits; the
//! tolerance-notation error; continuation lines kept by the formatter.

use sheaf_grammar::*;

mod common;
use common::{e, err1, one, sx};

fn msg(src: &str) -> String {
    err1(src).message
}

fn fmt(src: &str) -> String {
    format(src).unwrap_or_else(|e| panic!("{src:?}: {e:?}"))
}

/// Formats, checks idempotence, and returns the output.
fn fmt2(src: &str) -> String {
    let out = fmt(src);
    assert_eq!(fmt(&out), out, "not idempotent: {src:?}");
    out
}

// ------------------------------------------------------------ conditions

#[test]
fn precedence_of_conditions() {
    // if < or < and < not < comparison < arithmetic
    assert_eq!(e("a < b"), "(cmp a < b)");
    assert_eq!(e("a + 1 < b * 2"), "(cmp (+ a 1) < (* b 2))");
    assert_eq!(e("0.88 <= x2 <= 1"), "(cmp 0.88 <= x2 <= 1)");
    assert_eq!(e("a < b == c != d"), "(cmp a < b == c != d)");
    assert_eq!(e("a < b and c > d"), "(and (cmp a < b) (cmp c > d))");
    assert_eq!(e("p or q and r"), "(or p (and q r))");
    assert_eq!(e("p and q or r"), "(or (and p q) r)");
    assert_eq!(e("p or q or r"), "(or (or p q) r)");
    assert_eq!(e("not a < b"), "(not (cmp a < b))");
    assert_eq!(e("not p and q"), "(and (not p) q)");
    assert_eq!(
        e("p and not q or not not r"),
        "(or (and p (not q)) (not (not r)))"
    );
    assert_eq!(e("not -a < b"), "(not (cmp (neg a) < b))");
    // Parentheses end a chain.
    assert_eq!(e("(a < b) < c"), "(cmp (paren (cmp a < b)) < c)");
    assert_eq!(e("a < (b < c)"), "(cmp a < (paren (cmp b < c)))");
    assert_eq!(e("if a > b then a else b"), "(if (cmp a > b) a b)");
    assert_eq!(
        e("if p then 1 else if q then 2 else 3"),
        "(if p 1 (if q 2 3))"
    );
    assert_eq!(
        e("if if p then q else r then 1 else 2"),
        "(if (if p q r) 1 2)"
    );
    assert_eq!(
        e("if p then if q then 1 else 2 else 3"),
        "(if p (if q 1 2) 3)"
    );
    // `else` takes everything after it (lowest precedence).
    assert_eq!(e("if p then 1 else 2 + 3"), "(if p 1 (+ 2 3))");
    assert_eq!(e("if p then 1 else x and y"), "(if p 1 (and x y))");
    assert_eq!(e("2 * (if p then 1 else 2)"), "(* 2 (paren (if p 1 2)))");
    assert_eq!(
        e("f(if p then 1 else 2, k: not q)"),
        "(call f (if p 1 2) k:(not q))"
    );
    assert_eq!(
        e("st.x >= 0 and st.x <= 1"),
        "(and (cmp (. st x) >= 0) (cmp (. st x) <= 1))"
    );
}

#[test]
fn spans_of_condition_nodes() {
    let src = "if a < 1 and not b then x else -y";
    let x = parse_expr(src).unwrap();
    assert_eq!(x.span, Span::new(0, src.len()));
    let ExprKind::If {
        cond,
        then_branch,
        else_branch,
    } = &x.kind
    else {
        panic!()
    };
    assert_eq!(cond.span.slice(src), "a < 1 and not b");
    assert_eq!(then_branch.span.slice(src), "x");
    assert_eq!(else_branch.span.slice(src), "-y");
    let ExprKind::Logic {
        op,
        op_span,
        left,
        right,
    } = &cond.kind
    else {
        panic!()
    };
    assert_eq!(*op, LogicOp::And);
    assert_eq!(op_span.slice(src), "and");
    assert_eq!(right.span.slice(src), "not b");
    let ExprKind::Compare { first, rest } = &left.kind else {
        panic!()
    };
    assert_eq!(first.span.slice(src), "a");
    assert_eq!(rest.len(), 1);
    assert_eq!(rest[0].op, CompareOp::Lt);
    assert_eq!(rest[0].op_span.slice(src), "<");
    assert_eq!(rest[0].operand.span.slice(src), "1");

    let src = "0.88 <= x2 <= 1";
    let x = parse_expr(src).unwrap();
    let ExprKind::Compare { rest, .. } = &x.kind else {
        panic!()
    };
    assert_eq!(x.span, Span::new(0, src.len()));
    let ops: Vec<_> = rest.iter().map(|l| l.op_span.slice(src)).collect();
    assert_eq!(ops, ["<=", "<="]);
    assert_eq!(rest[1].op_span, Span::new(11, 13));
    assert!(x.as_single_comparison().is_none());
}

#[test]
fn check_takes_any_condition() {
    let src = "check 0.88 <= x2 <= 1 and T2 < 220 degC  \"quality and limit\" // c";
    let StatementKind::Check { cond, description } = one(src).kind else {
        panic!()
    };
    assert_eq!(cond.span.slice(src), "0.88 <= x2 <= 1 and T2 < 220 degC");
    assert_eq!(description.unwrap().value, "quality and limit");
    let st = one("check not (a == b)");
    assert_eq!(st.span, Span::new(0, 18));
    let StatementKind::Check { cond, .. } = st.kind else {
        panic!()
    };
    assert_eq!(sx(&cond), "(not (paren (cmp a == b)))");
    // A single comparison, as the checker reads it today.
    let src = "check T2 <= 220 degC";
    let StatementKind::Check { cond, .. } = one(src).kind else {
        panic!()
    };
    let (l, op, op_span, r) = cond.as_single_comparison().unwrap();
    assert_eq!(
        (l.span.slice(src), op, op_span.slice(src), r.span.slice(src)),
        ("T2", CompareOp::Le, "<=", "220 degC")
    );
}

#[test]
fn comparisons_are_values_anywhere() {
    let src = "ok = T2 <= 220 degC \"within the limit\"";
    let StatementKind::Define { value, .. } = one(src).kind else {
        panic!()
    };
    assert_eq!(value.span.slice(src), "T2 <= 220 degC");
    let StatementKind::Input { value, .. } = one("input x = if a then 1 else 2").kind else {
        panic!()
    };
    assert_eq!(sx(&value), "(if a 1 2)");
}

#[test]
fn condition_errors_in_words() {
    let err = err1("x = 1 + if a then 1 else 2");
    assert_eq!(
        err.message,
        "`if ... then ... else ...` has the lowest precedence: write it in parentheses here, e.g. `2 * (if a > b then a else b)`"
    );
    assert_eq!(err.span, Span::new(8, 10));
    let err = err1("x = a == not b");
    assert_eq!(
        err.message,
        "`not` applies to a whole condition: write it in parentheses here, e.g. `a == (not b)`"
    );
    assert_eq!(err.span, Span::new(9, 12));
    assert_eq!(
        msg("x = if a then 1"),
        "expected `else` after `1`, found the end of the line"
    );
    let err = err1("x = if a 1 else 2");
    assert_eq!(err.message, "expected `then` after `a`, found `1`");
    assert_eq!(err.span, Span::new(9, 10));
    assert_eq!(msg("x = a and"), "expected an expression after `and`");
    assert_eq!(msg("x = not"), "expected an expression after `not`");
    assert_eq!(msg("x = a < "), "expected an expression after `<`");
    assert_eq!(msg("x = and b"), "expected an expression before `and`");
    assert_eq!(
        msg("check x = 1"),
        "`=` is not a comparison (`<`, `<=`, `>`, `>=`, `==`, `!=`); use `==` to test equality"
    );
}

// ------------------------------------------------------------ statements

#[test]
fn case_statement() {
    let src = "case hot_day: T_amb = 35 degC, site.p_amb = 0.95 bar  \"summer design day\"";
    let st = one(src);
    assert_eq!(st.span, Span::new(0, src.len()));
    let StatementKind::Case {
        name,
        settings,
        description,
    } = st.kind
    else {
        panic!()
    };
    assert_eq!(name.name, "hot_day");
    assert_eq!(name.span.slice(src), "hot_day");
    assert_eq!(settings.len(), 2);
    assert_eq!(settings[0].input.name, "T_amb");
    assert_eq!(settings[0].span.slice(src), "T_amb = 35 degC");
    assert_eq!(settings[0].value.span.slice(src), "35 degC");
    assert_eq!(settings[1].input.name, "site.p_amb");
    assert_eq!(settings[1].input.span.slice(src), "site.p_amb");
    assert_eq!(description.unwrap().value, "summer design day");
    let StatementKind::Case { settings, .. } = one("case part:load = 0.5*full").kind else {
        panic!()
    };
    assert_eq!(sx(&settings[0].value), "(* 0.5 full)");
}

#[test]
fn sweep_statements() {
    let src = "sweep p2 from 5 bar to 9 bar step 0.5 bar show T2, W_dot, st2.h \"discharge\"";
    let StatementKind::Sweep {
        input,
        points,
        show,
        description,
    } = one(src).kind
    else {
        panic!()
    };
    assert_eq!(input.name, "p2");
    let SweepPoints::Step { from, to, step } = &points else {
        panic!("{points:?}")
    };
    assert_eq!(from.span.slice(src), "5 bar");
    assert_eq!(to.span.slice(src), "9 bar");
    assert_eq!(step.span.slice(src), "0.5 bar");
    let names: Vec<_> = show.iter().map(|s| s.name.as_str()).collect();
    assert_eq!(names, ["T2", "W_dot", "st2.h"]);
    assert_eq!(show[2].span.slice(src), "st2.h");
    assert_eq!(description.unwrap().value, "discharge");

    // Keywords are never units: `0.7 to` is not "0.7 of unit `to`".
    let src = "sweep eta from 0.7 to 0.9 step 0.05 show W";
    let StatementKind::Sweep { points, .. } = one(src).kind else {
        panic!()
    };
    let SweepPoints::Step { from, to, step } = &points else {
        panic!()
    };
    assert_eq!(
        [from, to, step].map(|x| x.span.slice(src)),
        ["0.7", "0.9", "0.05"]
    );

    let src = "sweep n from 1 to 10 count 19 show y";
    let StatementKind::Sweep { points, .. } = one(src).kind else {
        panic!()
    };
    let SweepPoints::Count { count, .. } = &points else {
        panic!()
    };
    assert_eq!(count.span.slice(src), "19");

    let src = "sweep T1 over 10 degC, 20 degC, -5 degC show T2 // note";
    let StatementKind::Sweep { points, show, .. } = one(src).kind else {
        panic!()
    };
    let SweepPoints::Over(values) = &points else {
        panic!()
    };
    let v: Vec<_> = values.iter().map(|x| x.span.slice(src)).collect();
    assert_eq!(v, ["10 degC", "20 degC", "-5 degC"]);
    assert_eq!(show.len(), 1);
}

#[test]
fn find_statement() {
    let src = "find p2 in 5 bar .. 12 bar where T2 = 200 degC \"pressure at the limit\"";
    let st = one(src);
    let StatementKind::Find {
        input,
        low,
        high,
        left,
        eq_span,
        right,
        description,
    } = st.kind
    else {
        panic!()
    };
    assert_eq!(input.name, "p2");
    assert_eq!(low.span.slice(src), "5 bar");
    assert_eq!(high.span.slice(src), "12 bar");
    assert_eq!(left.span.slice(src), "T2");
    assert_eq!(eq_span.slice(src), "=");
    assert_eq!(right.span.slice(src), "200 degC");
    assert_eq!(description.unwrap().value, "pressure at the limit");
    // `..` needs no blanks; `in` after a number is still the inch.
    let src = "find d in 1..2 in where A(d) = 3 in^2";
    let StatementKind::Find { low, high, .. } = one(src).kind else {
        panic!()
    };
    assert_eq!(low.span.slice(src), "1");
    assert_eq!(high.span.slice(src), "2 in");
}

#[test]
fn use_and_gauge() {
    let src = "use \"site/basis.sheaf\" as site";
    let StatementKind::Use { path, prefix } = one(src).kind else {
        panic!()
    };
    assert_eq!(path.value, "site/basis.sheaf");
    assert_eq!(path.span.slice(src), "\"site/basis.sheaf\"");
    assert_eq!(prefix.name, "site");
    assert_eq!(prefix.span.slice(src), "site");
    let src = "gauge 95 kPa \"barometric pressure at the mill\"";
    let StatementKind::Gauge { value, description } = one(src).kind else {
        panic!()
    };
    assert_eq!(value.span.slice(src), "95 kPa");
    assert!(description.is_some());
}

#[test]
fn in_and_as_stay_units_after_a_number() {
    let StatementKind::Define { value, .. } = one("d = 1 in").kind else {
        panic!()
    };
    let ExprKind::Number { unit: Some(u), .. } = &value.kind else {
        panic!()
    };
    assert_eq!(u.kind, UnitKind::Atom("in".into()));
    let StatementKind::Define { value, .. } = one("t = 5 as + 2 in/s * 1 s").kind else {
        panic!()
    };
    assert!(matches!(value.kind, ExprKind::Binary { .. }));
    // Other keywords are never units.
    let err = err1("x = 2 step");
    assert_eq!(err.message, "`step` is a keyword and cannot be a unit");
    assert_eq!(err.span, Span::new(6, 10));
}

#[test]
fn keywords_are_not_names() {
    for kw in KEYWORDS {
        let src = format!("{kw} = 1");
        let err = err1(&src);
        assert_eq!(
            err.message,
            format!("`{kw}` is a keyword and cannot be a name"),
            "{src}"
        );
        assert_eq!(err.span, Span::new(0, kw.len()), "{src}");
        let src = format!("x = 2 * {kw}");
        assert!(parse(&src).is_err(), "{src}");
        let src = format!("x = st.{kw}");
        assert!(parse(&src).is_err(), "{src}");
    }
    // A keyword inside a longer name is fine.
    for ok in [
        "into = 1",
        "iffy = 1",
        "order = 1",
        "cases = 1",
        "x = st.show_me + total + asset + android + notable",
    ] {
        parse(ok).unwrap_or_else(|e| panic!("{ok}: {e:?}"));
    }
    assert_eq!(
        msg("case to: x = 1"),
        "`to` is a keyword and cannot be a name"
    );
    assert_eq!(
        msg("find in in 1 .. 2 where a = b"),
        "`in` is a keyword and cannot be a name"
    );
}

#[test]
fn statement_errors_in_words() {
    let err = err1("sweep p2 from 5 bar to 9 bar show T2");
    assert_eq!(
        err.message,
        "expected `step` or `count` after `bar`, found `show`"
    );
    assert_eq!(err.span, Span::new(29, 33));
    assert_eq!(
        msg("sweep p2 from 5 to 9 step 1"),
        "expected `show` after `1`, found the end of the line"
    );
    assert_eq!(
        msg("sweep p2 5 to 9 step 1 show x"),
        "expected `from` or `over` after `p2`, found `5`"
    );
    assert_eq!(
        msg("sweep p2 over 1, 2 show"),
        "expected a name after `show`, found the end of the line"
    );
    assert_eq!(
        msg("find p2 in 5 bar where T2 = 1"),
        "expected `..` after `bar`, found `where`"
    );
    assert_eq!(
        msg("find p2 in a .. b T2 = 1"),
        "expected `where` after `b`, found `T2`"
    );
    assert_eq!(
        msg("find p2 in 1 .. 2 where T2 < 1"),
        "expected `=` after `1`, found the end of the line"
    );
    assert_eq!(
        msg("case hot T1 = 1"),
        "expected `:` after `hot`, found `T1`"
    );
    assert_eq!(
        msg("case hot: T1 = 1,"),
        "expected a name after `,`, found the end of the line"
    );
    assert_eq!(
        msg("use \"a.sheaf\" site"),
        "expected `as` after the string, found `site`"
    );
    assert_eq!(msg("use site as x"), "unexpected `site`");
    assert_eq!(msg("gauge"), "expected an expression after `gauge`");
    assert_eq!(msg("case = 1"), "`case` is a keyword and cannot be a name");
}

// ------------------------------------------------------------ tolerance

#[test]
fn tolerance_notation_is_refused() {
    let want = "a tolerance notation (`+-`) is not supported (it may come later); write the value alone, or use parentheses `+ (-0.02)` if you mean a negative addend";
    for (src, span) in [
        ("input eta = 0.78 +- 0.02", "+- 0.02"),
        ("input eta = 0.78 + -0.02", "+ -0.02"),
        ("input eta = 0.78 +-0.02 \"d\"", "+-0.02"),
        ("x = (a +- 0.02)", "+- 0.02"),
    ] {
        let err = err1(src);
        assert_eq!(err.message, want, "{src}");
        assert_eq!(err.span.slice(src), span, "{src}");
    }
    // Still legal: a negative factor, a double minus, a parenthesised
    // negative addend, `+ -name`.
    for ok in [
        "x = a * -2",
        "x = a - -x",
        "x = a - -2",
        "x = a + (-0.02)",
        "x = a + -b",
        "x = +-2",
    ] {
        parse(ok).unwrap_or_else(|e| panic!("{ok}: {e:?}"));
    }
}

// ------------------------------------------------------------ lines, limits

#[test]
fn lone_cr_is_a_line_break() {
    let src = "# T\rinput a = 1\rcheck a > 2\r";
    let w = parse(src).unwrap();
    assert_eq!(w.statements.len(), 3);
    assert!(matches!(w.statements[2].kind, StatementKind::Check { .. }));
    assert_eq!(line_col(src, w.statements[2].span.start), (3, 1));
    // A CR inside a comment ends the comment: the statement after it is
    // seen (as a terminal would show it).
    let src = "x = 1 // note\rcheck x > 2\r\ny = 2\n";
    let w = parse(src).unwrap();
    let kinds: Vec<_> = w
        .statements
        .iter()
        .map(|s| match s.kind {
            StatementKind::Define { .. } => "define",
            StatementKind::Check { .. } => "check",
            _ => "other",
        })
        .collect();
    assert_eq!(kinds, ["define", "check", "define"]);
    assert_eq!(line_col(src, w.statements[2].span.start), (3, 1));
    // Mixed line ends, continuation over a lone CR.
    let src = "x = 1 + \\\r  2\n";
    let StatementKind::Define { value, .. } = one(src).kind else {
        panic!()
    };
    assert_eq!(sx(&value), "(+ 1 2)");
    assert_eq!(fmt(src), "x = 1 + \\\n    2\n");
    assert_eq!(fmt("a = 1\rb = 2\r"), "a = 1\nb = 2\n");
}

#[test]
fn size_limits() {
    assert_eq!(MAX_SOURCE_BYTES, 64 << 20);
    assert_eq!(MAX_STATEMENT_BYTES, 1 << 20);
    // A statement just over the limit.
    let src = format!("ok = 1\nx = a{}\n", " + a".repeat(MAX_STATEMENT_BYTES / 4));
    let errs = parse(&src).unwrap_err();
    assert_eq!(errs.len(), 1);
    assert_eq!(
        errs[0].message,
        "this statement is too long (1.0 MiB); the limit is 1.0 MiB (split it into named intermediate values)"
    );
    assert_eq!(errs[0].span, Span::new(7, 8));
    assert_eq!(line_col(&src, errs[0].span.start), (2, 1));
    assert!(parse_expr(&"1+".repeat(MAX_STATEMENT_BYTES)).is_err());
    // A statement just under it is fine.
    let src = format!("x = 1 \"{}\"\n", "d".repeat(MAX_STATEMENT_BYTES - 8));
    assert!(parse(&src).is_ok());
    // A worksheet over the limit is refused before any work.
    let line = format!("// {}\n", "c".repeat(1000));
    let src = line.repeat(MAX_SOURCE_BYTES / line.len() + 1);
    let errs = parse(&src).unwrap_err();
    assert_eq!(errs.len(), 1);
    assert!(
        errs[0]
            .message
            .starts_with("the worksheet is too large (64.0 MiB); the limit is 64.0 MiB"),
        "{}",
        errs[0].message
    );
    assert_eq!(errs[0].span.start, MAX_SOURCE_BYTES);
    assert!(format(&src).is_err());
}

// ------------------------------------------------------------ formatter

#[test]
fn formatter_layout_of_new_forms() {
    let src = "\
check  0.88<=x2<=1   and(T2<220 degC)\"q\"
ok=if a>b then a else  b
z = not  a==b or  not(c)
case hot :T1=35 degC,site.p= 0.95 bar\"hot day\"
sweep p2 from 5 bar to 9 bar step 0.5 bar show T2,W
sweep n from 1 to 2 count 3 show y
sweep T1 over 10 degC,20 degC show T2   // c
find p2 in 5 bar..12 bar where T2=200 degC
use   \"basis.sheaf\"   as   site
gauge 95 kPa \"site\"
";
    let want = "\
check 0.88 <= x2 <= 1 and (T2 < 220 degC)  \"q\"
ok = if a > b then a else b
z = not a == b or not (c)
case hot: T1 = 35 degC, site.p = 0.95 bar  \"hot day\"
sweep p2 from 5 bar to 9 bar step 0.5 bar show T2, W
sweep n from 1 to 2 count 3 show y
sweep T1 over 10 degC, 20 degC show T2 // c
find p2 in 5 bar .. 12 bar where T2 = 200 degC
use \"basis.sheaf\" as site
gauge 95 kPa  \"site\"
";
    assert_eq!(fmt2(src), want);
}

#[test]
fn formatter_keeps_continuation_lines() {
    // The user's breaks stay where they were (before the token that starts
    // the continuation line), with a four-space indent; nothing else is
    // wrapped.
    let src = "W_dot : kW = mdot *  \\\n      (st2.h - st1.h) \\\n  + Q_loss   \"shaft power\"\n";
    let want = "W_dot: kW = mdot * \\\n    (st2.h - st1.h) \\\n    + Q_loss  \"shaft power\"\n";
    assert_eq!(fmt2(src), want);
    // Breaks after an operator, inside calls and parentheses, before a
    // description and before a trailing comment.
    let src = "s = state(gas, \\\nT: T1, \\\n p: p1)\nx = (a \\\n+ b) \\\n \"d\" \\\n // c\n";
    let want = "s = state(gas, \\\n    T: T1, \\\n    p: p1)\nx = (a \\\n    + b) \\\n    \"d\" \\\n    // c\n";
    assert_eq!(fmt2(src), want);
    // Conditions and the new statements.
    let src = "check a < 1 and \\\n b > 2\nsweep p from 1 to 2 step 0.1 \\\n show y, \\\n z\n";
    let want =
        "check a < 1 and \\\n    b > 2\nsweep p from 1 to 2 step 0.1 \\\n    show y, \\\n    z\n";
    assert_eq!(fmt2(src), want);
    // The tree is unchanged.
    let a = parse(src).unwrap();
    let b = parse(&fmt(src)).unwrap();
    assert_eq!(a.statements.len(), b.statements.len());
    // Descriptions of other statements of the block align on the last
    // line of a continued statement.
    let src = "x = a + \\\n b \"one\"\nlonger_name = 1 \"two\"\n";
    let want = "x = a + \\\n    b            \"one\"\nlonger_name = 1  \"two\"\n";
    assert_eq!(fmt2(src), want);
}

#[test]
fn formatter_handles_long_chains_and_else_if() {
    let src = format!("x = a{}\n", " + a".repeat(MAX_CHAIN_OPERANDS - 1));
    assert_eq!(fmt2(&src), src);
    let src = "y = if p then 1 else if q then 2 else 3\n";
    assert_eq!(fmt2(src), src);
}
