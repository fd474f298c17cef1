//! The calculator behind `sheaf eval`: one expression with the built-ins,
//! checked and evaluated, returned in display form.

use sheaf_grammar::{Expr, ExprKind, Span};

use crate::check::{self, DisplayUnit};
use crate::diag::Diagnostic;
use crate::eval;
use crate::fields;
use crate::report::{field_words, substance_fields};
use crate::thermo::Field;
use crate::types::{Ty, describe_qty};
use crate::units::{self, Affinity, Dim, Unit};
use crate::value::Value;

/// A number in a display unit, with its SI value.
#[derive(Clone, Debug, PartialEq)]
pub struct Reading {
    /// `""` for the expression's own value, else the field name (`h`).
    pub name: String,
    pub value: f64,
    pub unit: String,
    pub si_value: f64,
    pub si_unit: String,
    /// Words for a field ("specific enthalpy"); empty for a plain value.
    pub words: &'static str,
}

/// What an expression evaluated to.
#[derive(Clone, Debug, PartialEq)]
pub enum Evaluated {
    Number(Reading),
    Bool(bool),
    Text(String),
    /// A state or a substance: what it is and its fields.
    Fields {
        what: String,
        fields: Vec<Reading>,
    },
}

/// The result of [`evaluate_expression`] with the warnings met.
#[derive(Clone, Debug)]
pub struct Calculated {
    pub result: Evaluated,
    pub warnings: Vec<Diagnostic>,
}

/// Why an expression could not be shown.
#[derive(Clone, Debug)]
pub enum CalcError {
    /// Errors in the expression, located in its text.
    Expression(Vec<Diagnostic>),
    /// The requested display unit is unknown or does not fit (a usage
    /// error), in words.
    Unit(String),
}

/// Check and evaluate one expression. A plain quantity keeps the unit it
/// was written in (`3 bar` shows in bar, `20 degC + 10 K` in degC) unless
/// `in_unit` is given; states and substances list their fields.
pub fn evaluate_expression(text: &str, in_unit: Option<&str>) -> Result<Calculated, CalcError> {
    let expr =
        sheaf_grammar::parse_expr(text).map_err(|e| CalcError::Expression(vec![e.into()]))?;
    let (ty, code) = check::check_standalone(&expr, text).map_err(CalcError::Expression)?;
    let mut warnings = Vec::new();
    let value = eval::eval(&code, &[], expr.span, &mut warnings)
        .map_err(|e| CalcError::Expression(vec![Diagnostic::error(e.message, e.span)]))?;
    let result = match (ty, value) {
        (Ty::Num(q), Value::Num(si)) => {
            let (value, unit) = match in_unit {
                Some(u) => {
                    let target = resolve_target(u)?;
                    if target.dim != q.dim {
                        return Err(CalcError::Unit(format!(
                            "`{u}` is {}, but the value is {}",
                            units::quantity_name(target.dim),
                            describe_qty(q)
                        )));
                    }
                    if q.aff == Affinity::Difference && target.affinity == Affinity::Absolute {
                        return Err(CalcError::Unit(
                            "the value is a difference; show it in K or degC_diff".into(),
                        ));
                    }
                    (target.from_si(si), check::normalise_unit_text(u))
                }
                None => match written_unit(&expr, text, q.dim, q.aff) {
                    Some(d) => crate::report::shown(&d, q.dim, si),
                    None => units::auto_display(q.dim, si),
                },
            };
            Evaluated::Number(Reading {
                name: String::new(),
                value,
                unit,
                si_value: si,
                si_unit: units::si_unit(q.dim),
                words: "",
            })
        }
        (_, value) => {
            if in_unit.is_some() {
                return Err(CalcError::Unit(
                    "--in applies to a number; pick a field, e.g. `(...).h`".into(),
                ));
            }
            match value {
                Value::Bool(b) => Evaluated::Bool(b),
                Value::Str(s) => Evaluated::Text(format!("\"{s}\"")),
                Value::State(sv) => Evaluated::Fields {
                    what: format!("state of {}", sv.sub),
                    fields: Field::ALL
                        .iter()
                        .filter_map(|&f| sv.st.get(f).map(|x| reading(f, x)))
                        .collect(),
                },
                Value::Substance(sub) => Evaluated::Fields {
                    what: sub.to_string(),
                    fields: substance_fields(&sub)
                        .into_iter()
                        .map(|(name, dim, x, words)| {
                            let (value, unit) = units::auto_display(dim, x);
                            Reading {
                                name: name.to_string(),
                                value,
                                unit,
                                si_value: x,
                                si_unit: units::si_unit(dim),
                                words,
                            }
                        })
                        .collect(),
                },
                Value::Saturation(sv) => Evaluated::Fields {
                    what: format!("saturated {}", sv.sub),
                    fields: crate::report::saturation_fields(&sv)
                        .into_iter()
                        .map(|(name, dim, x, words)| {
                            let (value, unit) = units::auto_display(dim, x);
                            Reading {
                                name,
                                value,
                                unit,
                                si_value: x,
                                si_unit: units::si_unit(dim),
                                words,
                            }
                        })
                        .collect(),
                },
                Value::Num(_) | Value::Absent => {
                    return Err(CalcError::Expression(vec![Diagnostic::error(
                        "the expression has no value",
                        expr.span,
                    )]));
                }
            }
        }
    };
    Ok(Calculated { result, warnings })
}

fn reading(f: Field, x: f64) -> Reading {
    let dim = fields::info(f).dim;
    // Specific energies in kJ/kg and entropies in kJ/(kg K), as reports
    // show state fields; the rest in coherent SI with a prefix.
    let fixed = match f {
        Field::H | Field::U => crate::report::fixed_unit("kJ/kg"),
        Field::S | Field::Cp | Field::Cv => crate::report::fixed_unit("kJ/(kg K)"),
        _ => None,
    };
    let (value, unit) = match fixed {
        Some(d) => crate::report::shown(&d, dim, x),
        None => units::auto_display(dim, x),
    };
    Reading {
        name: f.name().to_string(),
        value,
        unit,
        si_value: x,
        si_unit: units::si_unit(dim),
        words: field_words(f),
    }
}

fn resolve_target(u: &str) -> Result<Unit, CalcError> {
    let parsed = sheaf_grammar::parse_unit(u).map_err(|e| CalcError::Unit(e.message))?;
    units::resolve(&parsed).map_err(|e| {
        let hint = e
            .suggestion
            .map(|s| format!(" (did you mean `{s}`?)"))
            .unwrap_or_default();
        CalcError::Unit(format!("{}{hint}", e.message))
    })
}

/// The unit a plain quantity was written in: the first literal unit of the
/// result's dimension, preferring an offset unit (degC, barg) when the
/// result is absolute.
fn written_unit(e: &Expr, src: &str, dim: Dim, aff: Affinity) -> Option<DisplayUnit> {
    let mut found: Vec<(Unit, Span)> = Vec::new();
    let mut stack = vec![e];
    while let Some(e) = stack.pop() {
        match &e.kind {
            ExprKind::Number { unit: Some(u), .. } => {
                if let Ok(unit) = units::resolve(u)
                    && unit.dim == dim
                {
                    found.push((unit, u.span));
                }
            }
            ExprKind::Binary { left, right, .. } => {
                stack.push(right);
                stack.push(left);
            }
            ExprKind::Neg(a) | ExprKind::Paren(a) => stack.push(a),
            _ => {}
        }
    }
    found.sort_by_key(|(_, s)| s.start);
    let pick = match aff {
        Affinity::Absolute => found
            .iter()
            .find(|(u, _)| u.affinity == Affinity::Absolute)
            .or(found.first()),
        Affinity::Difference => found.iter().find(|(u, _)| u.affinity != Affinity::Absolute),
        Affinity::Neutral => found.first(),
    }?;
    Some(DisplayUnit::Fixed {
        unit: pick.0,
        text: check::normalise_unit_text(pick.1.slice(src)),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn number(text: &str, unit: Option<&str>) -> Reading {
        match evaluate_expression(text, unit).map(|c| c.result) {
            Ok(Evaluated::Number(r)) => r,
            other => panic!("{text}: {other:?}"),
        }
    }

    #[test]
    fn a_plain_quantity_keeps_the_unit_it_was_written_in() {
        let r = number("3 bar", None);
        assert_eq!((r.value, r.unit.as_str(), r.si_value), (3.0, "bar", 3e5));
        // 20 degC + 10 K = 30 degC (an absolute temperature keeps degC).
        let r = number("20 degC + 10 K", None);
        assert_eq!(r.unit, "degC");
        assert!((r.value - 30.0).abs() < 1e-12);
        // 14.7 psi in kPa: 101.35 kPa (psi = 6894.757 Pa, NIST SP 811 App. B).
        let r = number("14.7 psi", Some("kPa"));
        assert!((r.value - 101.352_93).abs() < 1e-4, "{}", r.value);
        // No literal of the result's dimension: coherent SI with a prefix.
        let r = number("2 m * 3 m", None);
        assert_eq!(r.unit, "m^2");
    }

    #[test]
    fn unit_errors_are_usage_errors_in_words() {
        assert!(matches!(
            evaluate_expression("3 bar", Some("kg")),
            Err(CalcError::Unit(m)) if m.contains("mass")
        ));
        assert!(matches!(
            evaluate_expression("3 bar +", None),
            Err(CalcError::Expression(_))
        ));
    }

    #[test]
    fn a_state_lists_its_fields() {
        let c = evaluate_expression("state(ideal_gas(\"N2\"), T: 300 K, p: 1 bar)", None).unwrap();
        let Evaluated::Fields { what, fields } = c.result else {
            panic!()
        };
        assert!(what.contains("N2"));
        let t = fields.iter().find(|f| f.name == "T").unwrap();
        assert_eq!(t.si_value, 300.0);
        assert!(
            fields
                .iter()
                .any(|f| f.name == "h" && f.words == "specific enthalpy")
        );
    }
}
