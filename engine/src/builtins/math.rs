//! Mathematical functions.

use super::{
    Args, BoundArg, Builtin, CallError, Family, Param, Rule, Sheet, TypeErr, Warnings, any_error,
    err_at, err_call, num_arg, p,
};
use crate::types::{QuantityType, Ty, describe_qty};
use crate::units::Affinity;
use crate::value::Value;

const X: &[Param] = &[p("x")];

/// Typing of a function of one dimensionless number.
fn dimensionless_1(b: &Builtin, args: &[Option<BoundArg>]) -> Result<Ty, TypeErr> {
    if any_error(args) {
        return Ok(Ty::Error);
    }
    let q = num_arg(b, args, 0)?;
    if !q.dim.is_none() {
        return err_at(
            0,
            format!(
                "`{}` takes a dimensionless argument, got {}",
                b.name,
                describe_qty(q)
            ),
        );
    }
    Ok(Ty::Num(QuantityType::DIMENSIONLESS))
}

fn num(x: f64) -> Result<Value, CallError> {
    Ok(Value::Num(x))
}

macro_rules! dimensionless_fn {
    ($id:ident, $name:literal, $sheet:expr, $desc:literal, $eval:expr) => {
        pub static $id: Builtin = Builtin {
            name: $name,
            family: Family::Math,
            params: X,
            variadic: false,
            usage: concat!($name, "(x)"),
            description: $desc,
            typing: dimensionless_1,
            eval: $eval,
            sheet: $sheet,
        };
    };
}

dimensionless_fn!(
    LN,
    "ln",
    Sheet::Function("LN"),
    "natural logarithm of a dimensionless number",
    |a, _| {
        let x = a.num(0)?;
        if x <= 0.0 {
            return Err(CallError::at(
                0,
                format!("`ln` of {x}, which is not positive"),
            ));
        }
        num(x.ln())
    }
);
dimensionless_fn!(
    EXP,
    "exp",
    Sheet::Function("EXP"),
    "e to the power x (dimensionless)",
    |a, _| num(a.num(0)?.exp())
);
dimensionless_fn!(
    LOG10,
    "log10",
    Sheet::Function("LOG10"),
    "base-10 logarithm of a dimensionless number",
    |a, _| {
        let x = a.num(0)?;
        if x <= 0.0 {
            return Err(CallError::at(
                0,
                format!("`log10` of {x}, which is not positive"),
            ));
        }
        num(x.log10())
    }
);
dimensionless_fn!(
    SIN,
    "sin",
    Sheet::Function("SIN"),
    "sine of an angle (rad, or a number with unit deg)",
    |a, _| num(a.num(0)?.sin())
);
dimensionless_fn!(
    COS,
    "cos",
    Sheet::Function("COS"),
    "cosine of an angle",
    |a, _| num(a.num(0)?.cos())
);
dimensionless_fn!(
    TAN,
    "tan",
    Sheet::Function("TAN"),
    "tangent of an angle",
    |a, _| num(a.num(0)?.tan())
);
dimensionless_fn!(
    ASIN,
    "asin",
    Sheet::Function("ASIN"),
    "inverse sine, in rad",
    |a, _| num(in_unit_range(a, "asin")?.asin())
);
dimensionless_fn!(
    ACOS,
    "acos",
    Sheet::Function("ACOS"),
    "inverse cosine, in rad",
    |a, _| num(in_unit_range(a, "acos")?.acos())
);
dimensionless_fn!(
    ATAN,
    "atan",
    Sheet::Function("ATAN"),
    "inverse tangent, in rad",
    |a, _| num(a.num(0)?.atan())
);
dimensionless_fn!(
    FLOOR,
    "floor",
    Sheet::Rule(Rule::Floor),
    "largest integer not above a dimensionless x",
    |a, _| num(a.num(0)?.floor())
);
dimensionless_fn!(
    CEIL,
    "ceil",
    Sheet::Rule(Rule::Ceil),
    "smallest integer not below a dimensionless x",
    |a, _| num(a.num(0)?.ceil())
);
dimensionless_fn!(
    ROUND,
    "round",
    Sheet::Rule(Rule::Round),
    "nearest integer to a dimensionless x (halves away from zero)",
    |a, _| num(a.num(0)?.round())
);

fn in_unit_range(a: &Args<'_>, name: &str) -> Result<f64, CallError> {
    let x = a.num(0)?;
    if (-1.0..=1.0).contains(&x) {
        Ok(x)
    } else {
        Err(CallError::at(
            0,
            format!("`{name}` of {x}, outside [-1, 1]"),
        ))
    }
}

pub static SQRT: Builtin = Builtin {
    name: "sqrt",
    family: Family::Math,
    params: X,
    variadic: false,
    usage: "sqrt(x)",
    description: "square root; the dimension must have even exponents",
    typing: |b, args| {
        if any_error(args) {
            return Ok(Ty::Error);
        }
        let q = num_arg(b, args, 0)?;
        match q.dim.pow_ratio(1, 2) {
            Some(d) => Ok(Ty::num(d)),
            None => err_at(
                0,
                format!(
                    "`sqrt` needs a quantity whose dimension has even exponents, got {}",
                    describe_qty(q)
                ),
            ),
        }
    },
    eval: |a, _| {
        let x = a.num(0)?;
        if x < 0.0 {
            return Err(CallError::at(
                0,
                format!("`sqrt` of a negative value ({x} in SI)"),
            ));
        }
        num(x.sqrt())
    },
    sheet: Sheet::Function("SQRT"),
};

pub static ABS: Builtin = Builtin {
    name: "abs",
    family: Family::Math,
    params: X,
    variadic: false,
    usage: "abs(x)",
    description: "absolute value",
    typing: |b, args| {
        if any_error(args) {
            return Ok(Ty::Error);
        }
        Ok(Ty::Num(num_arg(b, args, 0)?))
    },
    eval: |a, _| num(a.num(0)?.abs()),
    sheet: Sheet::Function("ABS"),
};

/// Typing of `min`/`max`: arguments of one quantity, one affinity.
fn one_quantity(b: &Builtin, args: &[Option<BoundArg>]) -> Result<Ty, TypeErr> {
    if any_error(args) {
        return Ok(Ty::Error);
    }
    if args.is_empty() {
        return err_call(format!("`{}` needs at least one argument", b.name));
    }
    let first = num_arg(b, args, 0)?;
    let mut aff = first.aff;
    for i in 1..args.len() {
        let q = num_arg(b, args, i)?;
        if q.dim != first.dim {
            return err_at(
                i,
                format!(
                    "arguments of `{}` must be one quantity: the first is {}, this one is {}",
                    b.name,
                    describe_qty(first),
                    describe_qty(q)
                ),
            );
        }
        aff = match (aff, q.aff) {
            (a, b) if a == b => a,
            (Affinity::Neutral, b) => b,
            (a, Affinity::Neutral) => a,
            _ => {
                return err_at(
                    i,
                    format!(
                        "`{}` mixes an absolute {} with a difference",
                        b.name,
                        crate::units::quantity_name(first.dim)
                    ),
                );
            }
        };
    }
    Ok(Ty::Num(QuantityType {
        dim: first.dim,
        aff,
    }))
}

fn fold(a: &Args<'_>, f: fn(f64, f64) -> f64) -> Result<Value, CallError> {
    let mut acc = a.num(0)?;
    for i in 1..a.len() {
        acc = f(acc, a.num(i)?);
    }
    num(acc)
}

pub static MIN: Builtin = Builtin {
    name: "min",
    family: Family::Math,
    params: &[],
    variadic: true,
    usage: "min(a, b, ...)",
    description: "smallest of values of one quantity",
    typing: one_quantity,
    eval: |a, _| fold(a, f64::min),
    sheet: Sheet::Rule(Rule::Min),
};

pub static MAX: Builtin = Builtin {
    name: "max",
    family: Family::Math,
    params: &[],
    variadic: true,
    usage: "max(a, b, ...)",
    description: "largest of values of one quantity",
    typing: one_quantity,
    eval: |a, _| fold(a, f64::max),
    sheet: Sheet::Rule(Rule::Max),
};

pub static ATAN2: Builtin = Builtin {
    name: "atan2",
    family: Family::Math,
    params: &[p("y"), p("x")],
    variadic: false,
    usage: "atan2(y, x)",
    description: "angle of the point (x, y), in rad; y and x of one quantity",
    typing: |b, args| {
        if any_error(args) {
            return Ok(Ty::Error);
        }
        let y = num_arg(b, args, 0)?;
        let x = num_arg(b, args, 1)?;
        if y.dim != x.dim {
            return err_at(
                1,
                format!(
                    "`atan2` needs y and x of one quantity: y is {}, x is {}",
                    describe_qty(y),
                    describe_qty(x)
                ),
            );
        }
        Ok(Ty::Num(QuantityType::DIMENSIONLESS))
    },
    eval: |a, _: &mut Warnings| num(a.num(0)?.atan2(a.num(1)?)),
    sheet: Sheet::Rule(Rule::Atan2),
};
