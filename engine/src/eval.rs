//! Evaluation of the compiled program: plain `f64` arithmetic over slots,
//! no unit or dimension work (that was done once, by the checker).

use std::sync::Arc;

use sheaf_grammar::{CompareOp, Span};

use crate::builtins::{self, Builtin};
use crate::diag::Diagnostic;

/// Warnings met while evaluating, located (severity warning).
pub type Warnings = Vec<Diagnostic>;
use crate::thermo::{Field, Substance};
pub use crate::value::{SaturationVal, StateVal, Value};

/// A compiled expression: names resolved to node slots, units folded into
/// SI constants, dimension checks already done.
#[derive(Clone, Debug, PartialEq)]
pub enum Code {
    Const(f64),
    Str(Arc<str>),
    Absent,
    /// The value of another node.
    Slot(usize),
    Neg(Box<Code>),
    Add(Box<Code>, Box<Code>),
    Sub(Box<Code>, Box<Code>),
    /// `st_a.h - st_b.h` (or s, u): a subtraction that warns when the two
    /// states are of different substances or models, whose reference
    /// states differ.
    StateDiff(Box<Code>, Box<Code>, Span),
    Mul(Box<Code>, Box<Code>),
    /// Division; the span is the divisor's, for the division-by-zero error.
    Div(Box<Code>, Box<Code>, Span),
    Pow(Box<Code>, Box<Code>, Span),
    Cmp(CompareOp, Box<Code>, Box<Code>),
    /// A comparison chain `a < b <= c`: every adjacent pair holds.
    Chain(Box<Code>, Vec<(CompareOp, Code)>),
    /// `and`, `or` (the right side is evaluated only when needed), `not`.
    And(Box<Code>, Box<Code>),
    Or(Box<Code>, Box<Code>),
    Not(Box<Code>),
    /// `if c then a else b`: only the branch taken is evaluated.
    If(Box<Code>, Box<Code>, Box<Code>),
    /// Field of a state (span of the field name, for "no quality" errors).
    Field(Box<Code>, Field, Span),
    /// The saturated liquid (`true`) or vapour of a saturated pair.
    Phase(Box<Code>, bool),
    /// Built-in call; arguments in parameter order; where the call and its
    /// arguments are written.
    Call(&'static Builtin, Vec<Code>, CallSpans),
}

/// Where a call and each of its arguments (in parameter order; an empty
/// span for an argument not given) are written.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct CallSpans {
    pub call: Span,
    pub args: Box<[Span]>,
}

impl CallSpans {
    /// The span to blame for an error from a built-in: the argument at
    /// fault when the error names one (and it is written), else the call.
    fn blame(&self, param: Option<usize>) -> Span {
        param
            .and_then(|i| self.args.get(i).copied())
            .filter(|s| s.end > s.start)
            .unwrap_or(self.call)
    }
}

/// An evaluation error: where and what.
#[derive(Clone, Debug, PartialEq)]
pub struct EvalError {
    pub span: Span,
    pub message: String,
}

fn fail<T>(span: Span, message: impl Into<String>) -> Result<T, EvalError> {
    Err(EvalError {
        span,
        message: message.into(),
    })
}

/// Evaluate `code` reading other nodes' values from `slots`. `span` is the
/// whole expression's span, used when a sub-expression has none.
pub fn eval(
    code: &Code,
    slots: &[Value],
    span: Span,
    warnings: &mut Warnings,
) -> Result<Value, EvalError> {
    let v = eval_inner(code, slots, span, warnings)?;
    if let Value::Num(x) = v
        && !x.is_finite()
    {
        return fail(span, "the result is not a finite number");
    }
    Ok(v)
}

fn number(code: &Code, slots: &[Value], span: Span, w: &mut Warnings) -> Result<f64, EvalError> {
    match eval_inner(code, slots, span, w)? {
        Value::Num(x) => Ok(x),
        _ => fail(span, "internal: expected a number"),
    }
}

fn boolean(code: &Code, slots: &[Value], span: Span, w: &mut Warnings) -> Result<bool, EvalError> {
    match eval_inner(code, slots, span, w)? {
        Value::Bool(b) => Ok(b),
        _ => fail(span, "internal: expected a true/false value"),
    }
}

/// `x OP y` on plain numbers.
pub fn compare(op: CompareOp, x: f64, y: f64) -> bool {
    match op {
        CompareOp::Lt => x < y,
        CompareOp::Le => x <= y,
        CompareOp::Gt => x > y,
        CompareOp::Ge => x >= y,
        CompareOp::Eq => x == y,
        CompareOp::Ne => x != y,
    }
}

fn eval_inner(
    code: &Code,
    slots: &[Value],
    span: Span,
    w: &mut Warnings,
) -> Result<Value, EvalError> {
    let bin = |a: &Code,
               b: &Code,
               w: &mut Warnings,
               f: fn(f64, f64) -> f64|
     -> Result<Value, EvalError> {
        Ok(Value::Num(f(
            number(a, slots, span, w)?,
            number(b, slots, span, w)?,
        )))
    };
    match code {
        Code::Const(x) => Ok(Value::Num(*x)),
        Code::Str(s) => Ok(Value::Str(Arc::clone(s))),
        Code::Absent => Ok(Value::Absent),
        Code::Slot(i) => match slots.get(*i) {
            Some(v) => Ok(v.clone()),
            None => fail(span, "internal: slot out of range"),
        },
        Code::Neg(a) => Ok(Value::Num(-number(a, slots, span, w)?)),
        Code::Add(a, b) => bin(a, b, w, |x, y| x + y),
        Code::Sub(a, b) => bin(a, b, w, |x, y| x - y),
        Code::StateDiff(a, b, s) => {
            let x = number(a, slots, span, w)?;
            let y = number(b, slots, span, w)?;
            if let (Code::Field(ba, f, _), Code::Field(bb, _, _)) = (&**a, &**b)
                && let (Value::State(sa), Value::State(sb)) = (
                    eval_inner(ba, slots, span, w)?,
                    eval_inner(bb, slots, span, w)?,
                )
                && sa.sub != sb.sub
            {
                w.push(Diagnostic::warning(
                    format!(
                        "subtracting `{}` of states of different substances ({} and {}): their \
                         reference states differ, so the difference has no physical meaning",
                        f.name(),
                        sa.sub,
                        sb.sub
                    ),
                    *s,
                ));
            }
            Ok(Value::Num(x - y))
        }
        Code::Mul(a, b) => bin(a, b, w, |x, y| x * y),
        Code::Div(a, b, s) => {
            let x = number(a, slots, span, w)?;
            let y = number(b, slots, span, w)?;
            if y == 0.0 {
                return fail(*s, "division by zero");
            }
            Ok(Value::Num(x / y))
        }
        Code::Pow(a, b, s) => {
            let x = number(a, slots, span, w)?;
            let y = number(b, slots, span, w)?;
            let r = x.powf(y);
            if !r.is_finite() {
                return fail(*s, format!("{x} ^ {y} (in SI) has no finite real value"));
            }
            Ok(Value::Num(r))
        }
        Code::Cmp(op, a, b) => {
            let x = number(a, slots, span, w)?;
            let y = number(b, slots, span, w)?;
            Ok(Value::Bool(compare(*op, x, y)))
        }
        Code::Chain(first, rest) => {
            // Every operand is evaluated (an error in any is an error).
            let mut x = number(first, slots, span, w)?;
            let mut holds = true;
            for (op, c) in rest {
                let y = number(c, slots, span, w)?;
                holds &= compare(*op, x, y);
                x = y;
            }
            Ok(Value::Bool(holds))
        }
        Code::And(a, b) => Ok(Value::Bool(
            boolean(a, slots, span, w)? && boolean(b, slots, span, w)?,
        )),
        Code::Or(a, b) => Ok(Value::Bool(
            boolean(a, slots, span, w)? || boolean(b, slots, span, w)?,
        )),
        Code::Not(a) => Ok(Value::Bool(!boolean(a, slots, span, w)?)),
        Code::If(c, a, b) => {
            if boolean(c, slots, span, w)? {
                eval_inner(a, slots, span, w)
            } else {
                eval_inner(b, slots, span, w)
            }
        }
        Code::Field(base, field, s) => match eval_inner(base, slots, span, w)? {
            Value::State(st) => match st.st.get(*field) {
                Some(x) => Ok(Value::Num(x)),
                None => fail(
                    *s,
                    format!(
                        "this state has no `{}`: {}",
                        field.name(),
                        match field {
                            Field::X => "quality is defined only for two-phase states",
                            _ => "the property is undefined for a two-phase mixture",
                        }
                    ),
                ),
            },
            Value::Saturation(sv) => match field {
                Field::T => Ok(Value::Num(sv.sat.t)),
                Field::P => Ok(Value::Num(sv.sat.p)),
                _ => fail(*s, format!("a saturated pair has no `{}`", field.name())),
            },
            Value::Substance(sub) => match substance_field(&sub, *field) {
                Some(x) => Ok(Value::Num(x)),
                None => fail(*s, format!("this substance has no `{}`", field.name())),
            },
            _ => fail(*s, "internal: field of a value that is not a state"),
        },
        Code::Phase(base, liquid) => match eval_inner(base, slots, span, w)? {
            Value::Saturation(sv) => Ok(Value::State(Arc::new(StateVal {
                sub: Arc::clone(&sv.sub),
                st: if *liquid {
                    sv.sat.liquid
                } else {
                    sv.sat.vapour
                },
            }))),
            _ => fail(
                span,
                "internal: phase of a value that is not a saturated pair",
            ),
        },
        Code::Call(b, args, s) => {
            let mut vals = Vec::with_capacity(args.len());
            for a in args {
                vals.push(eval_inner(a, slots, span, w)?);
            }
            let mut msgs = Vec::new();
            let v = builtins::call(b, &vals, &mut msgs).map_err(|e| EvalError {
                span: s.blame(e.param),
                message: e.message,
            })?;
            w.extend(msgs.into_iter().map(|m| Diagnostic::warning(m, s.call)));
            if let Value::Num(x) = v
                && !x.is_finite()
            {
                return fail(
                    s.call,
                    "the function returned a value that is not a finite number",
                );
            }
            Ok(v)
        }
    }
}

/// Fields of substances: `gas.M`, `gas.R`, `gas.cp`, `liquid.rho` (the
/// checker decides which exist for which model).
pub fn substance_field(sub: &Substance, field: Field) -> Option<f64> {
    match (sub, field) {
        (_, Field::M) => sub.molar_mass(),
        (_, Field::R) => sub.gas_constant(),
        (Substance::PerfectGas(g), Field::Cp) => Some(g.cp),
        (Substance::PerfectGas(g), Field::Cv) => Some(g.cp - g.r),
        (Substance::PerfectGas(g), Field::K) => Some(g.cp / (g.cp - g.r)),
        (Substance::Incompressible(m), Field::Cp | Field::Cv) => Some(m.c),
        (Substance::Incompressible(m), Field::Rho) => Some(m.rho),
        (Substance::Incompressible(m), Field::V) => Some(1.0 / m.rho),
        _ => None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn c(x: f64) -> Box<Code> {
        Box::new(Code::Const(x))
    }

    fn run(code: &Code, slots: &[Value]) -> Result<Value, EvalError> {
        eval(code, slots, Span::new(0, 1), &mut Vec::new())
    }

    #[test]
    fn arithmetic_on_plain_numbers_and_slots() {
        let code = Code::Add(Box::new(Code::Slot(0)), Box::new(Code::Mul(c(2.0), c(3.0))));
        assert_eq!(run(&code, &[Value::Num(1.0)]), Ok(Value::Num(7.0)));
    }

    #[test]
    fn division_by_zero_points_at_the_divisor() {
        let s = Span::new(4, 5);
        let e = run(&Code::Div(c(1.0), c(0.0), s), &[]).unwrap_err();
        assert_eq!(e.span, s);
        assert_eq!(e.message, "division by zero");
    }

    #[test]
    fn non_finite_results_are_refused() {
        let e = run(&Code::Pow(c(-8.0), c(0.5), Span::new(0, 3)), &[]).unwrap_err();
        assert!(e.message.contains("no finite real value"), "{}", e.message);
        let e = run(&Code::Mul(c(1e200), c(1e200)), &[]).unwrap_err();
        assert!(e.message.contains("not a finite number"), "{}", e.message);
    }

    #[test]
    fn comparisons_give_booleans() {
        let code = Code::Cmp(CompareOp::Le, c(1.0), c(1.0));
        assert_eq!(run(&code, &[]), Ok(Value::Bool(true)));
    }
}
