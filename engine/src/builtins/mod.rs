//! Built-in constants and functions.
//!
//! Every built-in function is **one declaration**, a [`Builtin`] value in
//! the module of its family ([`math`], [`substances`], [`devices`],
//! [`second_law`], [`cells`]): its name and parameters, its typing rule
//! (run once, by the checker), its evaluation on plain values, and its
//! spreadsheet form ([`Sheet`]) — a spreadsheet function, a rule of the
//! package writer, or an explicit "engine only". The struct has no
//! defaults, so a built-in without a formula decision does not compile.
//! [`ALL`] lists every declaration; nothing else needs to change to add
//! one (DEVELOPERS.md shows a worked example).

pub mod cells;
pub mod devices;
pub mod math;
pub mod second_law;
pub mod substances;

use std::fmt;
use std::sync::Arc;

use crate::thermo::{self, ModelKind, Substance};
use crate::types::{QuantityType, Ty, describe_qty};
use crate::units::{Affinity, Dim};
use crate::value::{StateVal, Value};

pub use thermo::consts::{G_N, P_ATM, R_U};

// ---------------------------------------------------------------- constants

/// A built-in constant: name, value (SI), dimension, description.
pub struct Constant {
    pub name: &'static str,
    pub value: f64,
    pub dim: Dim,
    pub description: &'static str,
}

pub const CONSTANTS: &[Constant] = &[
    Constant {
        name: "pi",
        value: std::f64::consts::PI,
        dim: Dim::NONE,
        description: "ratio of a circle's circumference to its diameter",
    },
    Constant {
        name: "R_u",
        value: R_U,
        dim: Dim::MOLAR_ENTROPY,
        description: "universal gas constant, 8.314462618 J/(mol K) (CODATA 2018)",
    },
    Constant {
        name: "g_n",
        value: G_N,
        dim: Dim::ACCELERATION,
        description: "standard acceleration of gravity, 9.80665 m/s^2",
    },
    Constant {
        name: "p_atm",
        value: P_ATM,
        dim: Dim::PRESSURE,
        description: "standard atmosphere, 101.325 kPa",
    },
];

pub fn constant(name: &str) -> Option<&'static Constant> {
    CONSTANTS.iter().find(|c| c.name == name)
}

// ---------------------------------------------------------------- declarations

/// The family a built-in belongs to (for listings).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Family {
    Math,
    Substances,
    Devices,
    SecondLaw,
    Cells,
}

impl Family {
    pub fn title(self) -> &'static str {
        match self {
            Family::Math => "math",
            Family::Substances => "substances and states",
            Family::Devices => "devices",
            Family::SecondLaw => "entropy and exergy",
            Family::Cells => "workbook cells",
        }
    }
}

/// One parameter of a built-in.
pub struct Param {
    pub name: &'static str,
    /// May be given by position (otherwise only by name).
    pub positional: bool,
    pub required: bool,
}

/// A required positional parameter.
pub const fn p(name: &'static str) -> Param {
    Param {
        name,
        positional: true,
        required: true,
    }
}
/// A required parameter given by name.
pub const fn named(name: &'static str) -> Param {
    Param {
        name,
        positional: false,
        required: true,
    }
}
/// An optional parameter given by name.
pub const fn opt(name: &'static str) -> Param {
    Param {
        name,
        positional: false,
        required: false,
    }
}
/// An optional parameter that may be given by position.
pub const fn opt_pos(name: &'static str) -> Param {
    Param {
        name,
        positional: true,
        required: false,
    }
}

/// How a built-in appears in the spreadsheet package.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Sheet {
    /// A spreadsheet function of the same arguments in the same order
    /// (`LN(x)`).
    Function(&'static str),
    /// A formula built by a rule of the package writer
    /// (`xlsx::formula`, which handles every rule).
    Rule(Rule),
    /// No closed form a spreadsheet can evaluate: the engine's value is
    /// written, flagged stale when an input it depends on changes.
    EngineOnly,
}

/// The formula rules of the package writer.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Rule {
    /// `ATAN2(x, y)`: the spreadsheet takes the arguments swapped.
    Atan2,
    /// `MIN(...)` / `MAX(...)` of all arguments.
    Min,
    Max,
    /// `INT(x)`.
    Floor,
    /// `-INT(-x)`.
    Ceil,
    /// Halves away from zero, like the engine.
    Round,
    /// Substances as formulas of their parameters.
    PerfectGas,
    Incompressible,
    IdealGas,
    /// `gas_mix(...)` of constant mole fractions: an ideal gas whose
    /// blended coefficients the package writes on its data sheet.
    GasMix,
    /// A real fluid: no closed form, but its states' cells can be referred to.
    RealFluid,
    /// `state(...)`.
    State,
    /// Device outlets.
    Isentropic,
    Throttle,
    /// h2 = h1 + (h2s − h1)/eta (compressor, pump).
    EtaDivides,
    /// h2 = h1 − eta (h1 − h2s) (turbine, nozzle).
    EtaMultiplies,
    JetSpeed,
    DsIncompressible,
    DsIdealGas,
    FlowExergy,
    ClosedExergy,
    HeatExergy,
}

/// Typing rule: the argument types (one per parameter, `None` when not
/// given; one per argument for a variadic built-in) to the result type.
pub type TypeFn = fn(&Builtin, &[Option<BoundArg>]) -> Result<Ty, TypeErr>;
/// Evaluation on plain values (one per parameter, `Absent` when not given).
pub type EvalFn = fn(&Args<'_>, &mut Warnings) -> Result<Value, CallError>;

/// A built-in function: everything about it in one place.
pub struct Builtin {
    pub name: &'static str,
    pub family: Family,
    pub params: &'static [Param],
    /// Takes any number (at least one) of positional arguments.
    pub variadic: bool,
    pub usage: &'static str,
    pub description: &'static str,
    pub typing: TypeFn,
    pub eval: EvalFn,
    pub sheet: Sheet,
}

impl Builtin {
    /// Index of the parameter called `name`.
    pub fn param_index(&self, name: &str) -> Option<usize> {
        self.params.iter().position(|p| p.name == name)
    }
    fn param_name(&self, i: usize) -> &'static str {
        self.params.get(i).map_or("x", |p| p.name)
    }
}

impl PartialEq for Builtin {
    fn eq(&self, other: &Self) -> bool {
        self.name == other.name
    }
}

impl fmt::Debug for Builtin {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "Builtin({})", self.name)
    }
}

/// Every built-in function, by family.
pub static ALL: &[&Builtin] = &[
    &math::LN,
    &math::EXP,
    &math::LOG10,
    &math::SQRT,
    &math::ABS,
    &math::MIN,
    &math::MAX,
    &math::SIN,
    &math::COS,
    &math::TAN,
    &math::ASIN,
    &math::ACOS,
    &math::ATAN,
    &math::ATAN2,
    &math::FLOOR,
    &math::CEIL,
    &math::ROUND,
    &substances::IDEAL_GAS,
    &substances::PERFECT_GAS,
    &substances::INCOMPRESSIBLE,
    &substances::FLUID,
    &substances::STATE,
    &substances::IS_TWO_PHASE,
    &substances::GAS_MIX,
    &substances::SATURATION,
    &devices::ISENTROPIC,
    &devices::COMPRESSOR,
    &devices::TURBINE,
    &devices::PUMP,
    &devices::NOZZLE,
    &devices::THROTTLE,
    &devices::JET_SPEED,
    &devices::MIX,
    &second_law::DS_INCOMPRESSIBLE,
    &second_law::DS_IDEAL_GAS,
    &second_law::FLOW_EXERGY,
    &second_law::CLOSED_EXERGY,
    &second_law::HEAT_EXERGY,
    &cells::CELL,
];

/// The built-in called `name`.
pub fn lookup(name: &str) -> Option<&'static Builtin> {
    ALL.iter().copied().find(|b| b.name == name)
}

// ---------------------------------------------------------------- typing

/// An argument after binding, as the typing rule sees it.
pub struct BoundArg {
    pub ty: Ty,
    /// The string, when the argument is a string literal.
    pub literal: Option<String>,
}

/// A typing error: message, and index of the parameter at fault (None: the
/// call as a whole).
pub struct TypeErr {
    pub message: String,
    pub param: Option<usize>,
}

pub(crate) fn err_at<T>(param: usize, message: impl Into<String>) -> Result<T, TypeErr> {
    Err(TypeErr {
        message: message.into(),
        param: Some(param),
    })
}

pub(crate) fn err_call<T>(message: impl Into<String>) -> Result<T, TypeErr> {
    Err(TypeErr {
        message: message.into(),
        param: None,
    })
}

/// Whether any given argument is already erroneous.
pub(crate) fn any_error(args: &[Option<BoundArg>]) -> bool {
    args.iter().flatten().any(|a| a.ty == Ty::Error)
}

/// The quantity of argument `i`, which must be a number.
pub(crate) fn num_arg(
    b: &Builtin,
    args: &[Option<BoundArg>],
    i: usize,
) -> Result<QuantityType, TypeErr> {
    match args.get(i).and_then(|a| a.as_ref()).map(|a| a.ty) {
        Some(Ty::Num(q)) => Ok(q),
        Some(other) => err_at(
            i,
            format!("`{}` expects a number, got {}", b.name, other.describe()),
        ),
        None => err_call(format!("`{}` is missing an argument", b.name)),
    }
}

/// Expect argument `i` (if given) to be a number of dimension `dim`.
/// `absolute`: it is an absolute quantity (a temperature); a difference is
/// refused.
pub(crate) fn want_num(
    b: &Builtin,
    args: &[Option<BoundArg>],
    i: usize,
    dim: Dim,
    absolute: bool,
) -> Result<Option<QuantityType>, TypeErr> {
    let Some(a) = &args[i] else { return Ok(None) };
    let pname = b.param_name(i);
    match a.ty {
        Ty::Error => Ok(None),
        Ty::Num(q) if q.dim == dim => {
            if absolute && q.aff == Affinity::Difference {
                return err_at(
                    i,
                    format!(
                        "`{pname}` of `{}` must be an absolute {}, got a difference",
                        b.name,
                        crate::units::quantity_name(dim)
                    ),
                );
            }
            Ok(Some(q))
        }
        other => err_at(
            i,
            format!(
                "`{pname}` of `{}` must be {}, got {}",
                b.name,
                describe_qty(QuantityType::neutral(dim)),
                other.describe()
            ),
        ),
    }
}

pub(crate) fn want_dimensionless(
    b: &Builtin,
    args: &[Option<BoundArg>],
    i: usize,
) -> Result<(), TypeErr> {
    want_num(b, args, i, Dim::NONE, false).map(|_| ())
}

/// Expect argument `i` (if given) to be a state; its model.
pub(crate) fn want_state(
    b: &Builtin,
    args: &[Option<BoundArg>],
    i: usize,
) -> Result<Option<ModelKind>, TypeErr> {
    let Some(a) = &args[i] else { return Ok(None) };
    match a.ty {
        Ty::Error => Ok(None),
        Ty::State(k) => Ok(Some(k)),
        other => err_at(
            i,
            format!(
                "`{}` of `{}` must be a state, got {}",
                b.param_name(i),
                b.name,
                other.describe()
            ),
        ),
    }
}

/// Argument `i` must be a string literal; its text.
pub(crate) fn string_literal(
    b: &Builtin,
    args: &[Option<BoundArg>],
    i: usize,
) -> Result<String, TypeErr> {
    match &args[i] {
        Some(BoundArg {
            literal: Some(s), ..
        }) => Ok(s.clone()),
        _ => err_at(
            i,
            format!("`{}` needs a name in quotes, e.g. {}", b.name, b.usage),
        ),
    }
}

/// `ty` unless an argument was erroneous.
pub(crate) fn unless_error(args: &[Option<BoundArg>], ty: Ty) -> Ty {
    if any_error(args) { Ty::Error } else { ty }
}

// ---------------------------------------------------------------- evaluation

/// Side output of a call: warnings about model limits.
pub type Warnings = Vec<String>;

/// An error from evaluating a built-in: the message and the parameter at
/// fault (None: the call as a whole).
#[derive(Clone, Debug, PartialEq)]
pub struct CallError {
    pub param: Option<usize>,
    pub message: String,
}

impl CallError {
    pub fn call(message: impl Into<String>) -> CallError {
        CallError {
            param: None,
            message: message.into(),
        }
    }
    pub fn at(param: usize, message: impl Into<String>) -> CallError {
        CallError {
            param: Some(param),
            message: message.into(),
        }
    }
    fn internal(what: &str) -> CallError {
        CallError::call(format!("internal: expected {what}"))
    }
}

/// The argument values of a call, with typed accessors.
pub struct Args<'a> {
    pub builtin: &'a Builtin,
    pub values: &'a [Value],
}

impl Args<'_> {
    pub fn len(&self) -> usize {
        self.values.len()
    }
    pub fn is_empty(&self) -> bool {
        self.values.is_empty()
    }
    pub fn num(&self, i: usize) -> Result<f64, CallError> {
        match self.values.get(i) {
            Some(Value::Num(x)) => Ok(*x),
            _ => Err(CallError::internal("a number")),
        }
    }
    /// A number, or `default` when the optional argument was not given.
    pub fn opt_num(&self, i: usize, default: f64) -> Result<f64, CallError> {
        match self.values.get(i) {
            Some(Value::Absent) | None => Ok(default),
            _ => self.num(i),
        }
    }
    pub fn given(&self, i: usize) -> bool {
        !matches!(self.values.get(i), Some(Value::Absent) | None)
    }
    pub fn state(&self, i: usize) -> Result<&StateVal, CallError> {
        match self.values.get(i) {
            Some(Value::State(s)) => Ok(s),
            _ => Err(CallError::internal("a state")),
        }
    }
    pub fn substance(&self, i: usize) -> Result<&Arc<Substance>, CallError> {
        match self.values.get(i) {
            Some(Value::Substance(s)) => Ok(s),
            _ => Err(CallError::internal("a substance")),
        }
    }
    pub fn text(&self, i: usize) -> Result<&str, CallError> {
        match self.values.get(i) {
            Some(Value::Str(s)) => Ok(s),
            _ => Err(CallError::internal("a string")),
        }
    }
    /// A property-model error as a call error; a bad value of a named
    /// parameter points at that argument.
    pub fn thermo<T>(&self, r: thermo::Result<T>) -> Result<T, CallError> {
        r.map_err(|e| {
            let param = match &e {
                thermo::ThermoError::Parameter { name, .. } => self.builtin.param_index(name),
                _ => None,
            };
            CallError {
                param,
                message: e.to_string(),
            }
        })
    }
}

/// Evaluate a built-in on argument values.
pub fn call(b: &Builtin, values: &[Value], warnings: &mut Warnings) -> Result<Value, CallError> {
    (b.eval)(&Args { builtin: b, values }, warnings)
}

/// A state value, with the model's warning about it recorded.
pub(crate) fn new_state(sub: &Arc<Substance>, st: thermo::State, warnings: &mut Warnings) -> Value {
    if let Some(w) = sub.state_warning(&st) {
        warnings.push(w);
    }
    Value::State(Arc::new(StateVal {
        sub: Arc::clone(sub),
        st,
    }))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_are_unique_and_every_builtin_is_listed_once() {
        let mut names: Vec<&str> = ALL.iter().map(|b| b.name).collect();
        names.sort_unstable();
        let n = names.len();
        names.dedup();
        assert_eq!(names.len(), n);
        assert_eq!(lookup("ln").map(|b| b.name), Some("ln"));
        assert!(lookup("nope").is_none());
    }

    #[test]
    fn named_parameter_errors_point_at_their_argument() {
        let args = Args {
            builtin: &devices::COMPRESSOR,
            values: &[],
        };
        let e = args
            .thermo::<()>(Err(thermo::ThermoError::Parameter {
                name: "eta",
                message: "must be in (0, 1], got 1.3".into(),
            }))
            .unwrap_err();
        assert_eq!(e.param, Some(2));
        assert_eq!(e.message, "`eta` must be in (0, 1], got 1.3");
    }
}
