//! Built-in constants and functions: their signatures, their typing rules
//! (used once, by the checker) and their evaluation on plain values.

use std::sync::Arc;

use crate::eval::{StateVal, Value};
use crate::thermo::{
    self, ModelKind, Spec, SpecKind, Substance, exergy, ideal_gas::IdealGas,
    incompressible::Incompressible, perfect_gas::PerfectGas, process,
};
use crate::types::{QTy, Ty, describe_qty};
use crate::units::{Affinity, Dim};

/// Universal gas constant, J/(mol K) — CODATA 2018 (exact since the 2019 SI).
pub const R_U: f64 = 8.314_462_618;
/// Standard acceleration of gravity, m/s^2 (3rd CGPM 1901; NIST SP 811).
pub const G_N: f64 = 9.806_65;
/// Standard atmosphere, Pa (10th CGPM 1954; NIST SP 811).
pub const P_ATM: f64 = 101_325.0;

/// A built-in constant: name, value (SI), type, description.
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

/// Every built-in function.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Builtin {
    Ln,
    Exp,
    Log10,
    Sqrt,
    Abs,
    Min,
    Max,
    Sin,
    Cos,
    Tan,
    Asin,
    Acos,
    Atan,
    Atan2,
    Floor,
    Ceil,
    Round,
    IdealGas,
    PerfectGas,
    Incompressible,
    Fluid,
    State,
    Isentropic,
    Compressor,
    Turbine,
    Pump,
    Nozzle,
    Throttle,
    JetSpeed,
    DsIncompressible,
    DsIdealGas,
    FlowExergy,
    ClosedExergy,
    HeatExergy,
    /// A number read from a workbook cell or defined name.
    Cell,
}

/// One parameter of a built-in.
pub struct Param {
    pub name: &'static str,
    /// May be given by position (otherwise only by name).
    pub positional: bool,
    pub required: bool,
}

const fn p(name: &'static str) -> Param {
    Param {
        name,
        positional: true,
        required: true,
    }
}
const fn named(name: &'static str) -> Param {
    Param {
        name,
        positional: false,
        required: true,
    }
}
const fn opt(name: &'static str) -> Param {
    Param {
        name,
        positional: false,
        required: false,
    }
}
const fn opt_pos(name: &'static str) -> Param {
    Param {
        name,
        positional: true,
        required: false,
    }
}

pub struct Signature {
    pub builtin: Builtin,
    pub name: &'static str,
    pub params: &'static [Param],
    /// Takes any number (at least one) of positional arguments.
    pub variadic: bool,
    pub usage: &'static str,
    pub description: &'static str,
}

const X: &[Param] = &[p("x")];
const DEVICE: &[Param] = &[p("st"), named("p"), named("eta")];

macro_rules! sig {
    ($b:ident, $name:literal, $params:expr, $usage:literal, $desc:literal) => {
        Signature {
            builtin: Builtin::$b,
            name: $name,
            params: $params,
            variadic: false,
            usage: $usage,
            description: $desc,
        }
    };
}

pub const SIGNATURES: &[Signature] = &[
    sig!(
        Ln,
        "ln",
        X,
        "ln(x)",
        "natural logarithm of a dimensionless number"
    ),
    sig!(Exp, "exp", X, "exp(x)", "e to the power x (dimensionless)"),
    sig!(
        Log10,
        "log10",
        X,
        "log10(x)",
        "base-10 logarithm of a dimensionless number"
    ),
    sig!(
        Sqrt,
        "sqrt",
        X,
        "sqrt(x)",
        "square root; the dimension must have even exponents"
    ),
    sig!(Abs, "abs", X, "abs(x)", "absolute value"),
    Signature {
        builtin: Builtin::Min,
        name: "min",
        params: &[],
        variadic: true,
        usage: "min(a, b, ...)",
        description: "smallest of values of one quantity",
    },
    Signature {
        builtin: Builtin::Max,
        name: "max",
        params: &[],
        variadic: true,
        usage: "max(a, b, ...)",
        description: "largest of values of one quantity",
    },
    sig!(
        Sin,
        "sin",
        X,
        "sin(x)",
        "sine of an angle (rad, or a number with unit deg)"
    ),
    sig!(Cos, "cos", X, "cos(x)", "cosine of an angle"),
    sig!(Tan, "tan", X, "tan(x)", "tangent of an angle"),
    sig!(Asin, "asin", X, "asin(x)", "inverse sine, in rad"),
    sig!(Acos, "acos", X, "acos(x)", "inverse cosine, in rad"),
    sig!(Atan, "atan", X, "atan(x)", "inverse tangent, in rad"),
    sig!(
        Atan2,
        "atan2",
        &[p("y"), p("x")],
        "atan2(y, x)",
        "angle of the point (x, y), in rad; y and x of one quantity"
    ),
    sig!(
        Floor,
        "floor",
        X,
        "floor(x)",
        "largest integer not above a dimensionless x"
    ),
    sig!(
        Ceil,
        "ceil",
        X,
        "ceil(x)",
        "smallest integer not below a dimensionless x"
    ),
    sig!(
        Round,
        "round",
        X,
        "round(x)",
        "nearest integer to a dimensionless x (halves away from zero)"
    ),
    sig!(
        IdealGas,
        "ideal_gas",
        &[p("name")],
        "ideal_gas(\"air\")",
        "ideal gas with cp(T) from NASA 7-coefficient polynomials: air, N2, O2, Ar, CO2, H2O, CH4, H2, He, CO"
    ),
    sig!(
        PerfectGas,
        "perfect_gas",
        &[named("R"), opt("cp"), opt("k")],
        "perfect_gas(R: 287 J/(kg K), cp: 1005 J/(kg K))  or  perfect_gas(R: ..., k: 1.4)",
        "gas with constant cp"
    ),
    sig!(
        Incompressible,
        "incompressible",
        &[named("c"), named("rho")],
        "incompressible(c: 4.18 kJ/(kg K), rho: 998 kg/m^3)",
        "liquid or solid with constant specific heat and density"
    ),
    sig!(
        Fluid,
        "fluid",
        &[p("name")],
        "fluid(\"water\")",
        "water and steam by IAPWS-IF97"
    ),
    sig!(
        State,
        "state",
        &[
            p("substance"),
            opt("T"),
            opt("p"),
            opt("h"),
            opt("s"),
            opt("x"),
            opt("v")
        ],
        "state(gas, T: 300 K, p: 1 bar)",
        "state fixed by two properties: (T, p), (p, h), (p, s); real fluids also (p, x), (T, x) and, \
         where the fluid supports them, (T, h), (h, s), (T, s), (T, v)"
    ),
    sig!(
        Isentropic,
        "isentropic",
        &[p("st"), named("p")],
        "isentropic(st1, p: p2)",
        "outlet state at pressure p with the inlet's entropy"
    ),
    sig!(
        Compressor,
        "compressor",
        DEVICE,
        "compressor(st1, p: p2, eta: 0.8)",
        "compressor outlet: h2 = h1 + (h2s - h1)/eta"
    ),
    sig!(
        Turbine,
        "turbine",
        DEVICE,
        "turbine(st1, p: p2, eta: 0.85)",
        "turbine outlet: h2 = h1 - eta (h1 - h2s)"
    ),
    sig!(
        Pump,
        "pump",
        DEVICE,
        "pump(st1, p: p2, eta: 0.75)",
        "liquid pump outlet: h2 = h1 + (h2s - h1)/eta (v dp / eta for an incompressible liquid)"
    ),
    sig!(
        Nozzle,
        "nozzle",
        DEVICE,
        "nozzle(st1, p: p2, eta: 0.95)",
        "nozzle outlet: h2 = h1 - eta (h1 - h2s)"
    ),
    sig!(
        Throttle,
        "throttle",
        &[p("st"), named("p")],
        "throttle(st1, p: p2)",
        "throttling valve outlet: h2 = h1"
    ),
    sig!(
        JetSpeed,
        "jet_speed",
        &[p("st1"), p("st2"), opt_pos("V1")],
        "jet_speed(st1, st2, 20 m/s)",
        "outlet speed sqrt(V1^2 + 2 (h1 - h2)) of an adiabatic nozzle"
    ),
    sig!(
        DsIncompressible,
        "ds_incompressible",
        &[p("c"), p("T1"), p("T2")],
        "ds_incompressible(c, T1, T2)",
        "entropy change c ln(T2/T1) of an incompressible substance"
    ),
    sig!(
        DsIdealGas,
        "ds_ideal_gas",
        &[p("gas"), p("T1"), p("p1"), p("T2"), p("p2")],
        "ds_ideal_gas(gas, T1, p1, T2, p2)",
        "entropy change s°(T2) - s°(T1) - R ln(p2/p1) of an ideal or perfect gas"
    ),
    sig!(
        FlowExergy,
        "flow_exergy",
        &[p("st"), named("dead"), opt("V"), opt("z")],
        "flow_exergy(st, dead: st0, V: 30 m/s, z: 2 m)",
        "specific flow exergy (h - h0) - T0 (s - s0) + V^2/2 + g z"
    ),
    sig!(
        ClosedExergy,
        "closed_exergy",
        &[p("st"), named("dead")],
        "closed_exergy(st, dead: st0)",
        "specific exergy of a closed system (u - u0) + p0 (v - v0) - T0 (s - s0)"
    ),
    sig!(
        HeatExergy,
        "heat_exergy",
        &[p("Q"), p("T_b"), p("T0")],
        "heat_exergy(Q, T_b, T0)",
        "exergy of heat Q crossing a boundary at T_b: Q (1 - T0/T_b)"
    ),
    sig!(
        Cell,
        "cell",
        &[p("book"), p("ref")],
        "cell(\"basis.xlsx\", \"Site!C7\") * 1 kPa  or  cell(\"basis.xlsx\", \"p_site\") * 1 kPa",
        "number from a workbook cell (Sheet!C7) or defined name; dimensionless, multiply by a unit; the path is relative to the worksheet"
    ),
];

pub fn signature(name: &str) -> Option<&'static Signature> {
    SIGNATURES.iter().find(|s| s.name == name)
}

/// The signature of a built-in.
pub fn signature_of(b: Builtin) -> Option<&'static Signature> {
    SIGNATURES.iter().find(|s| s.builtin == b)
}

/// An argument after binding, as the typing rule sees it.
pub struct TArg {
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

fn err_at<T>(param: usize, message: impl Into<String>) -> Result<T, TypeErr> {
    Err(TypeErr {
        message: message.into(),
        param: Some(param),
    })
}

fn err_call<T>(message: impl Into<String>) -> Result<T, TypeErr> {
    Err(TypeErr {
        message: message.into(),
        param: None,
    })
}

/// Expect argument `i` (present) to be a number of dimension `dim`.
/// `absolute`: it is an absolute quantity (a temperature); a difference is
/// refused.
fn want_num(
    sig: &Signature,
    args: &[Option<TArg>],
    i: usize,
    dim: Dim,
    absolute: bool,
) -> Result<Option<QTy>, TypeErr> {
    let Some(a) = &args[i] else { return Ok(None) };
    let pname = sig.params.get(i).map_or("x", |p| p.name);
    match a.ty {
        Ty::Error => Ok(None),
        Ty::Num(q) if q.dim == dim => {
            if absolute && q.aff == Affinity::Difference {
                return err_at(
                    i,
                    format!(
                        "`{pname}` of `{}` must be an absolute {}, got a difference",
                        sig.name,
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
                sig.name,
                describe_qty(QTy::neutral(dim)),
                other.describe()
            ),
        ),
    }
}

fn want_state(
    sig: &Signature,
    args: &[Option<TArg>],
    i: usize,
) -> Result<Option<ModelKind>, TypeErr> {
    let Some(a) = &args[i] else { return Ok(None) };
    let pname = sig.params.get(i).map_or("st", |p| p.name);
    match a.ty {
        Ty::Error => Ok(None),
        Ty::State(k) => Ok(Some(k)),
        other => err_at(
            i,
            format!(
                "`{pname}` of `{}` must be a state, got {}",
                sig.name,
                other.describe()
            ),
        ),
    }
}

fn want_dimensionless(sig: &Signature, args: &[Option<TArg>], i: usize) -> Result<(), TypeErr> {
    want_num(sig, args, i, Dim::NONE, false).map(|_| ())
}

/// Type a call. `args` has one entry per parameter (None: not given), or
/// for a variadic function one per argument. Returns the result type, or
/// `Ty::Error` when an argument was already erroneous.
pub fn type_call(sig: &Signature, args: &[Option<TArg>]) -> Result<Ty, TypeErr> {
    use Builtin as B;
    let any_error = args.iter().flatten().any(|a| a.ty == Ty::Error);
    let num_arg = |i: usize| -> Result<QTy, TypeErr> {
        match args.get(i).and_then(|a| a.as_ref()).map(|a| a.ty) {
            Some(Ty::Num(q)) => Ok(q),
            Some(other) => err_at(
                i,
                format!("`{}` expects a number, got {}", sig.name, other.describe()),
            ),
            None => err_call(format!("`{}` is missing an argument", sig.name)),
        }
    };
    let ty = match sig.builtin {
        B::Ln
        | B::Exp
        | B::Log10
        | B::Sin
        | B::Cos
        | B::Tan
        | B::Asin
        | B::Acos
        | B::Atan
        | B::Floor
        | B::Ceil
        | B::Round => {
            if any_error {
                return Ok(Ty::Error);
            }
            let q = num_arg(0)?;
            if !q.dim.is_none() {
                return err_at(
                    0,
                    format!(
                        "`{}` takes a dimensionless argument, got {}",
                        sig.name,
                        describe_qty(q)
                    ),
                );
            }
            Ty::Num(QTy::DIMENSIONLESS)
        }
        B::Sqrt => {
            if any_error {
                return Ok(Ty::Error);
            }
            let q = num_arg(0)?;
            match q.dim.pow_ratio(1, 2) {
                Some(d) => Ty::num(d),
                None => {
                    return err_at(
                        0,
                        format!(
                            "`sqrt` needs a quantity whose dimension has even exponents, got {}",
                            describe_qty(q)
                        ),
                    );
                }
            }
        }
        B::Abs => {
            if any_error {
                return Ok(Ty::Error);
            }
            Ty::Num(num_arg(0)?)
        }
        B::Min | B::Max => {
            if any_error {
                return Ok(Ty::Error);
            }
            if args.is_empty() {
                return err_call(format!("`{}` needs at least one argument", sig.name));
            }
            let first = num_arg(0)?;
            let mut aff = first.aff;
            for i in 1..args.len() {
                let q = num_arg(i)?;
                if q.dim != first.dim {
                    return err_at(
                        i,
                        format!(
                            "arguments of `{}` must be one quantity: the first is {}, this one is {}",
                            sig.name,
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
                                sig.name,
                                crate::units::quantity_name(first.dim)
                            ),
                        );
                    }
                };
            }
            Ty::Num(QTy {
                dim: first.dim,
                aff,
            })
        }
        B::Atan2 => {
            if any_error {
                return Ok(Ty::Error);
            }
            let y = num_arg(0)?;
            let x = num_arg(1)?;
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
            Ty::Num(QTy::DIMENSIONLESS)
        }
        B::Cell => {
            string_literal(sig, args, 0)?;
            string_literal(sig, args, 1)?;
            Ty::Num(QTy::DIMENSIONLESS)
        }
        B::IdealGas => {
            let name = string_literal(sig, args, 0)?;
            if let Err(e) = IdealGas::by_name(&name) {
                return err_at(0, e.to_string());
            }
            Ty::Substance(ModelKind::IdealGas)
        }
        B::Fluid => {
            let name = string_literal(sig, args, 0)?;
            if thermo::fluid::fluid(&name).is_none() {
                let known: Vec<String> = thermo::fluid::FLUIDS
                    .iter()
                    .map(|e| format!("\"{}\"", e.names[0]))
                    .collect();
                return err_at(
                    0,
                    format!(
                        "unknown fluid \"{name}\": the real fluids available are {}",
                        known.join(", ")
                    ),
                );
            }
            Ty::Substance(ModelKind::RealFluid)
        }
        B::PerfectGas => {
            want_num(sig, args, 0, Dim::SPECIFIC_ENTROPY, false)?;
            want_num(sig, args, 1, Dim::SPECIFIC_ENTROPY, false)?;
            want_dimensionless(sig, args, 2)?;
            match (&args[1], &args[2]) {
                (Some(_), Some(_)) => {
                    return err_call("`perfect_gas` takes either `cp:` or `k:`, not both");
                }
                (None, None) => return err_call("`perfect_gas` needs `cp:` or `k:` besides `R:`"),
                _ => {}
            }
            Ty::Substance(ModelKind::PerfectGas)
        }
        B::Incompressible => {
            want_num(sig, args, 0, Dim::SPECIFIC_ENTROPY, false)?;
            want_num(sig, args, 1, Dim::DENSITY, false)?;
            Ty::Substance(ModelKind::Incompressible)
        }
        B::State => {
            let kind = match args[0].as_ref().map(|a| a.ty) {
                Some(Ty::Substance(k)) => Some(k),
                Some(Ty::Error) => None,
                Some(other) => {
                    return err_at(
                        0,
                        format!("`state` needs a substance first, got {}", other.describe()),
                    );
                }
                None => {
                    return err_call(
                        "`state` needs a substance, e.g. state(gas, T: 300 K, p: 1 bar)",
                    );
                }
            };
            want_num(sig, args, 1, Dim::TEMPERATURE, true)?;
            want_num(sig, args, 2, Dim::PRESSURE, false)?;
            want_num(sig, args, 3, Dim::SPECIFIC_ENERGY, false)?;
            want_num(sig, args, 4, Dim::SPECIFIC_ENTROPY, false)?;
            want_dimensionless(sig, args, 5)?;
            want_num(sig, args, 6, Dim::SPECIFIC_VOLUME, false)?;
            let spec = spec_kind(args.iter().skip(1).map(Option::is_some)).ok_or_else(|| TypeErr {
                message: "`state` needs exactly two properties from the pairs (T, p), (p, h), (p, s), (p, x), (T, x), (T, h), (h, s), (T, s), (T, v)".into(),
                param: None,
            })?;
            match kind {
                Some(k) if !k.accepts(spec) => {
                    return err_call(format!(
                        "a state of {} cannot be fixed by {}: {}",
                        k.describe(),
                        spec_words(spec),
                        if matches!(spec, SpecKind::PX | SpecKind::TX) {
                            "quality is defined only for real fluids"
                        } else {
                            "this model takes (T, p), (p, h) or (p, s)"
                        }
                    ));
                }
                Some(k) => Ty::State(k),
                None => Ty::Error,
            }
        }
        B::Isentropic | B::Throttle | B::Compressor | B::Turbine | B::Pump | B::Nozzle => {
            let k = want_state(sig, args, 0)?;
            want_num(sig, args, 1, Dim::PRESSURE, false)?;
            if sig.params.len() > 2 {
                want_dimensionless(sig, args, 2)?;
            }
            match k {
                Some(ModelKind::IdealGas | ModelKind::PerfectGas) if sig.builtin == B::Pump => {
                    return err_at(0, "`pump` needs a liquid; use `compressor` for a gas");
                }
                Some(k) => Ty::State(k),
                None => Ty::Error,
            }
        }
        B::JetSpeed => {
            let a = want_state(sig, args, 0)?;
            let b = want_state(sig, args, 1)?;
            want_num(sig, args, 2, Dim::VELOCITY, false)?;
            if a.is_none() || b.is_none() {
                Ty::Error
            } else {
                Ty::num(Dim::VELOCITY)
            }
        }
        B::DsIncompressible => {
            want_num(sig, args, 0, Dim::SPECIFIC_ENTROPY, false)?;
            want_num(sig, args, 1, Dim::TEMPERATURE, true)?;
            want_num(sig, args, 2, Dim::TEMPERATURE, true)?;
            if any_error {
                Ty::Error
            } else {
                Ty::num(Dim::SPECIFIC_ENTROPY)
            }
        }
        B::DsIdealGas => {
            match args[0].as_ref().map(|a| a.ty) {
                Some(Ty::Substance(ModelKind::IdealGas | ModelKind::PerfectGas))
                | Some(Ty::Error) => {}
                Some(other) => {
                    return err_at(
                        0,
                        format!(
                            "`ds_ideal_gas` needs an ideal or perfect gas, got {}",
                            other.describe()
                        ),
                    );
                }
                None => return err_call("`ds_ideal_gas` needs a gas"),
            }
            want_num(sig, args, 1, Dim::TEMPERATURE, true)?;
            want_num(sig, args, 2, Dim::PRESSURE, false)?;
            want_num(sig, args, 3, Dim::TEMPERATURE, true)?;
            want_num(sig, args, 4, Dim::PRESSURE, false)?;
            if any_error {
                Ty::Error
            } else {
                Ty::num(Dim::SPECIFIC_ENTROPY)
            }
        }
        B::FlowExergy | B::ClosedExergy => {
            let a = want_state(sig, args, 0)?;
            let b = want_state(sig, args, 1)?;
            if sig.builtin == B::FlowExergy {
                want_num(sig, args, 2, Dim::VELOCITY, false)?;
                want_num(sig, args, 3, Dim::LENGTH, false)?;
            }
            if let (Some(a), Some(b)) = (a, b)
                && a != b
            {
                return err_at(
                    1,
                    format!(
                        "the dead state must be of the same substance: the state is of {}, the dead state of {}",
                        a.describe(),
                        b.describe()
                    ),
                );
            }
            if any_error {
                Ty::Error
            } else {
                Ty::num(Dim::SPECIFIC_ENERGY)
            }
        }
        B::HeatExergy => {
            if any_error {
                return Ok(Ty::Error);
            }
            let q = num_arg(0)?;
            want_num(sig, args, 1, Dim::TEMPERATURE, true)?;
            want_num(sig, args, 2, Dim::TEMPERATURE, true)?;
            Ty::num(q.dim)
        }
    };
    Ok(if any_error { Ty::Error } else { ty })
}

fn string_literal(sig: &Signature, args: &[Option<TArg>], i: usize) -> Result<String, TypeErr> {
    match &args[i] {
        Some(TArg {
            literal: Some(s), ..
        }) => Ok(s.clone()),
        _ => err_at(
            i,
            format!("`{}` needs a name in quotes, e.g. {}", sig.name, sig.usage),
        ),
    }
}

/// The property pair from which of (T, p, h, s, x, v) are given.
fn spec_kind(given: impl Iterator<Item = bool>) -> Option<SpecKind> {
    let g: Vec<bool> = given.collect();
    match g.as_slice() {
        [true, true, false, false, false, false] => Some(SpecKind::TP),
        [false, true, true, false, false, false] => Some(SpecKind::PH),
        [false, true, false, true, false, false] => Some(SpecKind::PS),
        [false, true, false, false, true, false] => Some(SpecKind::PX),
        [true, false, false, false, true, false] => Some(SpecKind::TX),
        [true, false, true, false, false, false] => Some(SpecKind::TH),
        [false, false, true, true, false, false] => Some(SpecKind::HS),
        [true, false, false, true, false, false] => Some(SpecKind::TS),
        [true, false, false, false, false, true] => Some(SpecKind::TV),
        _ => None,
    }
}

fn spec_words(s: SpecKind) -> &'static str {
    match s {
        SpecKind::TP => "(T, p)",
        SpecKind::PH => "(p, h)",
        SpecKind::PS => "(p, s)",
        SpecKind::PX => "(p, x)",
        SpecKind::TX => "(T, x)",
        SpecKind::TH => "(T, h)",
        SpecKind::HS => "(h, s)",
        SpecKind::TS => "(T, s)",
        SpecKind::TV => "(T, v)",
    }
}

// ---------------------------------------------------------------- evaluation

/// Side output of a call: warnings about model limits.
pub type Warnings = Vec<String>;

fn num(v: &Value) -> Result<f64, String> {
    match v {
        Value::Num(x) => Ok(*x),
        _ => Err("internal: expected a number".into()),
    }
}

fn opt_num(v: &Value, default: f64) -> Result<f64, String> {
    match v {
        Value::Absent => Ok(default),
        other => num(other),
    }
}

fn state(v: &Value) -> Result<&StateVal, String> {
    match v {
        Value::State(s) => Ok(s),
        _ => Err("internal: expected a state".into()),
    }
}

fn substance(v: &Value) -> Result<&Arc<Substance>, String> {
    match v {
        Value::Substance(s) => Ok(s),
        _ => Err("internal: expected a substance".into()),
    }
}

fn text(v: &Value) -> Result<&str, String> {
    match v {
        Value::Str(s) => Ok(s),
        _ => Err("internal: expected a string".into()),
    }
}

fn th<T>(r: thermo::Result<T>) -> Result<T, String> {
    r.map_err(|e| e.to_string())
}

fn new_state(sub: &Arc<Substance>, st: thermo::State, warnings: &mut Warnings) -> Value {
    if let Some(w) = sub.state_warning(&st) {
        warnings.push(w);
    }
    Value::State(Arc::new(StateVal {
        sub: Arc::clone(sub),
        st,
    }))
}

fn device_out(inlet: &StateVal, out: thermo::State, warnings: &mut Warnings) -> Value {
    if let Some(w) = inlet.sub.process_warning(&inlet.st, &out) {
        warnings.push(w);
    }
    new_state(&inlet.sub, out, warnings)
}

/// Evaluate a built-in on argument values (one per parameter, `Absent` for
/// optional parameters not given). Errors are worded for the user.
pub fn call(b: Builtin, args: &[Value], warnings: &mut Warnings) -> Result<Value, String> {
    use Builtin as B;
    let n = |i: usize| num(&args[i]);
    let f1 = |f: fn(f64) -> f64| -> Result<Value, String> { Ok(Value::Num(f(n(0)?))) };
    match b {
        B::Ln => {
            let x = n(0)?;
            if x <= 0.0 {
                return Err(format!("`ln` of {x}, which is not positive"));
            }
            Ok(Value::Num(x.ln()))
        }
        B::Log10 => {
            let x = n(0)?;
            if x <= 0.0 {
                return Err(format!("`log10` of {x}, which is not positive"));
            }
            Ok(Value::Num(x.log10()))
        }
        B::Exp => f1(f64::exp),
        B::Sqrt => {
            let x = n(0)?;
            if x < 0.0 {
                return Err(format!("`sqrt` of a negative value ({x} in SI)"));
            }
            Ok(Value::Num(x.sqrt()))
        }
        B::Abs => f1(f64::abs),
        B::Min | B::Max => {
            let mut acc = n(0)?;
            for i in 1..args.len() {
                let x = n(i)?;
                acc = if b == B::Min { acc.min(x) } else { acc.max(x) };
            }
            Ok(Value::Num(acc))
        }
        B::Sin => f1(f64::sin),
        B::Cos => f1(f64::cos),
        B::Tan => f1(f64::tan),
        B::Asin | B::Acos => {
            let x = n(0)?;
            if !(-1.0..=1.0).contains(&x) {
                return Err(format!(
                    "`{}` of {x}, outside [-1, 1]",
                    if b == B::Asin { "asin" } else { "acos" }
                ));
            }
            Ok(Value::Num(if b == B::Asin { x.asin() } else { x.acos() }))
        }
        B::Atan => f1(f64::atan),
        B::Atan2 => Ok(Value::Num(n(0)?.atan2(n(1)?))),
        B::Floor => f1(f64::floor),
        B::Ceil => f1(f64::ceil),
        B::Round => f1(f64::round),
        B::IdealGas => {
            let g = th(IdealGas::by_name(text(&args[0])?))?;
            Ok(Value::Substance(Arc::new(Substance::IdealGas(g))))
        }
        B::Fluid => {
            let name = text(&args[0])?;
            let f =
                thermo::fluid::fluid(name).ok_or_else(|| format!("unknown fluid \"{name}\""))?;
            Ok(Value::Substance(Arc::new(Substance::Fluid(
                thermo::fluid::FluidRef(f),
            ))))
        }
        B::PerfectGas => {
            let r = n(0)?;
            let g = match (&args[1], &args[2]) {
                (Value::Num(cp), _) => th(PerfectGas::new(r, *cp))?,
                (_, Value::Num(k)) => th(PerfectGas::from_k(r, *k))?,
                _ => return Err("`perfect_gas` needs `cp:` or `k:`".into()),
            };
            Ok(Value::Substance(Arc::new(Substance::PerfectGas(g))))
        }
        B::Incompressible => {
            let m = th(Incompressible::new(n(0)?, n(1)?))?;
            Ok(Value::Substance(Arc::new(Substance::Incompressible(m))))
        }
        B::State => {
            let sub = substance(&args[0])?;
            let g = |i: usize| opt_num(&args[i], f64::NAN);
            let given: Vec<bool> = args[1..7]
                .iter()
                .map(|a| !matches!(a, Value::Absent))
                .collect();
            let spec = match spec_kind(given.into_iter()) {
                Some(SpecKind::TP) => Spec::TP { t: g(1)?, p: g(2)? },
                Some(SpecKind::PH) => Spec::PH { p: g(2)?, h: g(3)? },
                Some(SpecKind::PS) => Spec::PS { p: g(2)?, s: g(4)? },
                Some(SpecKind::PX) => Spec::PX { p: g(2)?, x: g(5)? },
                Some(SpecKind::TX) => Spec::TX { t: g(1)?, x: g(5)? },
                Some(SpecKind::TH) => Spec::TH { t: g(1)?, h: g(3)? },
                Some(SpecKind::HS) => Spec::HS { h: g(3)?, s: g(4)? },
                Some(SpecKind::TS) => Spec::TS { t: g(1)?, s: g(4)? },
                Some(SpecKind::TV) => Spec::TV { t: g(1)?, v: g(6)? },
                None => return Err("`state` needs exactly two properties".into()),
            };
            let st = th(sub.state(spec))?;
            Ok(new_state(sub, st, warnings))
        }
        B::Isentropic => {
            let s = state(&args[0])?;
            let out = th(process::isentropic(&s.sub, &s.st, n(1)?))?;
            Ok(device_out(s, out, warnings))
        }
        B::Throttle => {
            let s = state(&args[0])?;
            let out = th(process::throttle(&s.sub, &s.st, n(1)?))?;
            Ok(device_out(s, out, warnings))
        }
        B::Compressor | B::Turbine | B::Pump | B::Nozzle => {
            let s = state(&args[0])?;
            let f = match b {
                B::Compressor => process::compressor,
                B::Turbine => process::turbine,
                B::Pump => process::pump,
                _ => process::nozzle,
            };
            let out = th(f(&s.sub, &s.st, n(1)?, n(2)?))?;
            Ok(device_out(s, out, warnings))
        }
        B::JetSpeed => {
            let a = state(&args[0])?;
            let c = state(&args[1])?;
            Ok(Value::Num(th(process::jet_speed(
                &a.st,
                &c.st,
                opt_num(&args[2], 0.0)?,
            ))?))
        }
        B::DsIncompressible => Ok(Value::Num(th(exergy::ds_incompressible(
            n(0)?,
            n(1)?,
            n(2)?,
        ))?)),
        B::DsIdealGas => {
            let g = substance(&args[0])?;
            Ok(Value::Num(th(exergy::ds_ideal_gas(
                g,
                n(1)?,
                n(2)?,
                n(3)?,
                n(4)?,
            ))?))
        }
        B::FlowExergy | B::ClosedExergy => {
            let a = state(&args[0])?;
            let d = state(&args[1])?;
            if a.sub != d.sub {
                return Err(format!(
                    "the dead state is of {} but the state is of {}: use one substance",
                    d.sub, a.sub
                ));
            }
            Ok(Value::Num(if b == B::FlowExergy {
                exergy::flow_exergy(
                    &a.st,
                    &d.st,
                    opt_num(&args[2], 0.0)?,
                    opt_num(&args[3], 0.0)?,
                )
            } else {
                exergy::closed_exergy(&a.st, &d.st)
            }))
        }
        B::HeatExergy => Ok(Value::Num(th(exergy::heat_exergy(n(0)?, n(1)?, n(2)?))?)),
        B::Cell => Ok(Value::Num(crate::xlsx::read_cell(
            std::path::Path::new(text(&args[0])?),
            text(&args[1])?,
        )?)),
    }
}
