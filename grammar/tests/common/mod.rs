//! Helpers shared by the grammar's integration tests: compact
//! S-expressions of trees, and one-statement / one-error parsing.
#![allow(dead_code)] // each test file uses its own subset

use sheaf_grammar::*;

/// Compact S-expression of an expression, for asserting tree shapes.
pub fn sx(e: &Expr) -> String {
    match &e.kind {
        ExprKind::Number { text, unit, .. } => match unit {
            Some(u) => format!("{text}[{}]", ux(u)),
            None => text.clone(),
        },
        ExprKind::Str(s) => format!("{s:?}"),
        ExprKind::Name(n) => n.clone(),
        ExprKind::Neg(x) => format!("(neg {})", sx(x)),
        ExprKind::Binary { op, left, right } => {
            format!("({} {} {})", op.symbol(), sx(left), sx(right))
        }
        ExprKind::Call { func, args } => {
            let mut s = format!("(call {}", func.name);
            for a in args {
                match &a.name {
                    Some(n) => s += &format!(" {}:{}", n.name, sx(&a.value)),
                    None => s += &format!(" {}", sx(&a.value)),
                }
            }
            s + ")"
        }
        ExprKind::Field { base, field } => format!("(. {} {})", sx(base), field.name),
        ExprKind::Paren(x) => format!("(paren {})", sx(x)),
        ExprKind::Compare { first, rest } => {
            let mut s = format!("(cmp {}", sx(first));
            for l in rest {
                s += &format!(" {} {}", l.op.symbol(), sx(&l.operand));
            }
            s + ")"
        }
        ExprKind::Logic {
            op, left, right, ..
        } => format!("({} {} {})", op.keyword(), sx(left), sx(right)),
        ExprKind::Not(x) => format!("(not {})", sx(x)),
        ExprKind::If {
            cond,
            then_branch,
            else_branch,
        } => format!("(if {} {} {})", sx(cond), sx(then_branch), sx(else_branch)),
    }
}

pub fn ux(u: &UnitExpr) -> String {
    match &u.kind {
        UnitKind::Atom(a) => a.clone(),
        UnitKind::One => "1".into(),
        UnitKind::Mul(a, b) => format!("(* {} {})", ux(a), ux(b)),
        UnitKind::Div(a, b) => format!("(/ {} {})", ux(a), ux(b)),
        UnitKind::Pow(a, n) => format!("(^ {} {n})", ux(a)),
    }
}

pub fn e(src: &str) -> String {
    sx(&parse_expr(src).unwrap_or_else(|err| panic!("{src}: {err:?}")))
}

pub fn u(src: &str) -> String {
    ux(&parse_unit(src).unwrap_or_else(|err| panic!("{src}: {err:?}")))
}

pub fn one(src: &str) -> Statement {
    let mut w = parse(src).unwrap_or_else(|err| panic!("{src}: {err:?}"));
    assert_eq!(w.statements.len(), 1, "{src}");
    w.statements.remove(0)
}

pub fn err1(src: &str) -> ParseError {
    let errs = parse(src).expect_err(src);
    assert_eq!(errs.len(), 1, "{src}: {errs:?}");
    errs[0].clone()
}
