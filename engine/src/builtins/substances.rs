//! Substances (property models) and states.

use std::sync::Arc;

use super::{
    Builtin, CallError, Family, Rule, Sheet, TypeErr, err_at, err_call, named, new_state, opt, p,
    string_literal, unless_error, want_dimensionless, want_num,
};
use crate::thermo::{
    ModelKind, Spec, SpecKind, Substance,
    fluid::{self, FluidRef},
    ideal_gas::IdealGas,
    incompressible::Incompressible,
    perfect_gas::PerfectGas,
};
use crate::types::Ty;
use crate::units::Dim;
use crate::value::Value;

fn substance(s: Substance) -> Result<Value, CallError> {
    Ok(Value::Substance(Arc::new(s)))
}

pub static IDEAL_GAS: Builtin = Builtin {
    name: "ideal_gas",
    family: Family::Substances,
    params: &[p("name")],
    variadic: false,
    usage: "ideal_gas(\"air\")",
    description: "ideal gas with cp(T) from NASA 7-coefficient polynomials: air, N2, O2, Ar, CO2, \
                  H2O, CH4, H2, He, CO",
    typing: |b, args| {
        let name = string_literal(b, args, 0)?;
        if let Err(e) = IdealGas::by_name(&name) {
            return err_at(0, e.to_string());
        }
        Ok(Ty::Substance(ModelKind::IdealGas))
    },
    eval: |a, _| {
        let g = a.thermo(IdealGas::by_name(a.text(0)?))?;
        substance(Substance::IdealGas(g))
    },
    sheet: Sheet::Rule(Rule::IdealGas),
};

pub static PERFECT_GAS: Builtin = Builtin {
    name: "perfect_gas",
    family: Family::Substances,
    params: &[named("R"), opt("cp"), opt("k")],
    variadic: false,
    usage: "perfect_gas(R: 287 J/(kg K), cp: 1005 J/(kg K))  or  perfect_gas(R: ..., k: 1.4)",
    description: "gas with constant cp",
    typing: |b, args| {
        want_num(b, args, 0, Dim::SPECIFIC_ENTROPY, false)?;
        want_num(b, args, 1, Dim::SPECIFIC_ENTROPY, false)?;
        want_dimensionless(b, args, 2)?;
        match (&args[1], &args[2]) {
            (Some(_), Some(_)) => err_call("`perfect_gas` takes either `cp:` or `k:`, not both"),
            (None, None) => err_call("`perfect_gas` needs `cp:` or `k:` besides `R:`"),
            _ => Ok(unless_error(args, Ty::Substance(ModelKind::PerfectGas))),
        }
    },
    eval: |a, _| {
        let r = a.num(0)?;
        let g = if a.given(1) {
            a.thermo(PerfectGas::new(r, a.num(1)?))?
        } else {
            a.thermo(PerfectGas::from_k(r, a.num(2)?))?
        };
        substance(Substance::PerfectGas(g))
    },
    sheet: Sheet::Rule(Rule::PerfectGas),
};

pub static INCOMPRESSIBLE: Builtin = Builtin {
    name: "incompressible",
    family: Family::Substances,
    params: &[named("c"), named("rho")],
    variadic: false,
    usage: "incompressible(c: 4.18 kJ/(kg K), rho: 998 kg/m^3)",
    description: "liquid or solid with constant specific heat and density",
    typing: |b, args| {
        want_num(b, args, 0, Dim::SPECIFIC_ENTROPY, false)?;
        want_num(b, args, 1, Dim::DENSITY, false)?;
        Ok(unless_error(args, Ty::Substance(ModelKind::Incompressible)))
    },
    eval: |a, _| {
        let m = a.thermo(Incompressible::new(a.num(0)?, a.num(1)?))?;
        substance(Substance::Incompressible(m))
    },
    sheet: Sheet::Rule(Rule::Incompressible),
};

pub static FLUID: Builtin = Builtin {
    name: "fluid",
    family: Family::Substances,
    params: &[p("name")],
    variadic: false,
    usage: "fluid(\"water\")",
    description: "a real fluid by its reference equation of state (`sheaf functions` lists them)",
    typing: |b, args| {
        let name = string_literal(b, args, 0)?;
        if fluid::fluid(&name).is_none() {
            let known: Vec<String> = fluid::FLUIDS
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
        Ok(Ty::Substance(ModelKind::RealFluid))
    },
    eval: |a, _| {
        let name = a.text(0)?;
        let f = fluid::fluid(name)
            .ok_or_else(|| CallError::at(0, format!("unknown fluid \"{name}\"")))?;
        substance(Substance::Fluid(FluidRef(f)))
    },
    sheet: Sheet::Rule(Rule::RealFluid),
};

/// Parameters of `state` after the substance, in order.
const STATE_PROPS: usize = 6;

/// The property pair from which of (T, p, h, s, x, v) are given.
fn spec_kind(given: [bool; STATE_PROPS]) -> Option<SpecKind> {
    match given {
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

pub fn spec_words(s: SpecKind) -> &'static str {
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

const PAIRS_WORDS: &str = "`state` needs exactly two properties from the pairs (T, p), (p, h), \
                           (p, s), (p, x), (T, x), (T, h), (h, s), (T, s), (T, v)";

pub static STATE: Builtin = Builtin {
    name: "state",
    family: Family::Substances,
    params: &[
        p("substance"),
        opt("T"),
        opt("p"),
        opt("h"),
        opt("s"),
        opt("x"),
        opt("v"),
    ],
    variadic: false,
    usage: "state(gas, T: 300 K, p: 1 bar)",
    description: "state fixed by two properties: (T, p), (p, h), (p, s); real fluids also (p, x), \
                  (T, x) and, where the fluid supports them, (T, h), (h, s), (T, s), (T, v)",
    typing: |b, args| {
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
                return err_call("`state` needs a substance, e.g. state(gas, T: 300 K, p: 1 bar)");
            }
        };
        want_num(b, args, 1, Dim::TEMPERATURE, true)?;
        want_num(b, args, 2, Dim::PRESSURE, false)?;
        want_num(b, args, 3, Dim::SPECIFIC_ENERGY, false)?;
        want_num(b, args, 4, Dim::SPECIFIC_ENTROPY, false)?;
        want_dimensionless(b, args, 5)?;
        want_num(b, args, 6, Dim::SPECIFIC_VOLUME, false)?;
        let mut given = [false; STATE_PROPS];
        for (g, a) in given.iter_mut().zip(&args[1..]) {
            *g = a.is_some();
        }
        let spec = spec_kind(given).ok_or_else(|| TypeErr {
            message: PAIRS_WORDS.into(),
            param: None,
        })?;
        match kind {
            Some(k) if !k.accepts(spec) => err_call(format!(
                "a state of {} cannot be fixed by {}: {}",
                k.describe(),
                spec_words(spec),
                if matches!(spec, SpecKind::PX | SpecKind::TX) {
                    "quality is defined only for real fluids"
                } else {
                    "this model takes (T, p), (p, h) or (p, s)"
                }
            )),
            Some(k) => Ok(unless_error(args, Ty::State(k))),
            None => Ok(Ty::Error),
        }
    },
    eval: |a, w| {
        let sub = a.substance(0)?;
        let mut given = [false; STATE_PROPS];
        for (i, g) in given.iter_mut().enumerate() {
            *g = a.given(i + 1);
        }
        let g = |i: usize| a.num(i);
        let spec = match spec_kind(given) {
            Some(SpecKind::TP) => Spec::TP { t: g(1)?, p: g(2)? },
            Some(SpecKind::PH) => Spec::PH { p: g(2)?, h: g(3)? },
            Some(SpecKind::PS) => Spec::PS { p: g(2)?, s: g(4)? },
            Some(SpecKind::PX) => Spec::PX { p: g(2)?, x: g(5)? },
            Some(SpecKind::TX) => Spec::TX { t: g(1)?, x: g(5)? },
            Some(SpecKind::TH) => Spec::TH { t: g(1)?, h: g(3)? },
            Some(SpecKind::HS) => Spec::HS { h: g(3)?, s: g(4)? },
            Some(SpecKind::TS) => Spec::TS { t: g(1)?, s: g(4)? },
            Some(SpecKind::TV) => Spec::TV { t: g(1)?, v: g(6)? },
            None => return Err(CallError::call(PAIRS_WORDS)),
        };
        let st = a.thermo(sub.state(spec))?;
        Ok(new_state(sub, st, w))
    },
    sheet: Sheet::Rule(Rule::State),
};

pub static IS_TWO_PHASE: Builtin = Builtin {
    name: "is_two_phase",
    family: Family::Substances,
    params: &[p("st")],
    variadic: false,
    usage: "if is_two_phase(st2) then st2.x else 1",
    description: "true when a state is inside the saturation dome or on its edge (it has a \
                  quality `.x`); lets a worksheet branch on the phase of an outlet",
    typing: |b, args| {
        super::want_state(b, args, 0)?;
        Ok(unless_error(args, Ty::Bool))
    },
    eval: |a, _| Ok(Value::Bool(a.state(0)?.st.x.is_some())),
    sheet: Sheet::EngineOnly,
};

pub static GAS_MIX: Builtin = Builtin {
    name: "gas_mix",
    family: Family::Substances,
    params: &[],
    variadic: true,
    usage: "gas_mix(\"CH4\", 0.92, \"N2\", 0.08)",
    description: "ideal-gas mixture of the ideal gases above by mole fraction (the fractions sum \
                  to 1), with the ideal mixing entropy",
    typing: |b, args| {
        if args.len() < 2 || args.len() % 2 != 0 {
            return err_call(format!(
                "`gas_mix` takes pairs of a gas name and its mole fraction, e.g. {}",
                b.usage
            ));
        }
        for i in (0..args.len()).step_by(2) {
            let name = string_literal(b, args, i)?;
            if let Err(e) = IdealGas::by_name(&name) {
                return err_at(i, e.to_string());
            }
            match args[i + 1].as_ref().map(|a| a.ty) {
                Some(Ty::Num(q)) if q.dim.is_none() => {}
                Some(Ty::Error) => {}
                Some(other) => {
                    return err_at(
                        i + 1,
                        format!(
                            "the mole fraction of \"{name}\" must be a dimensionless number, got {}",
                            other.describe()
                        ),
                    );
                }
                None => return err_call("`gas_mix` is missing a mole fraction"),
            }
        }
        Ok(unless_error(args, Ty::Substance(ModelKind::IdealGas)))
    },
    eval: |a, _| {
        let mut parts = Vec::with_capacity(a.len() / 2);
        for i in (0..a.len()).step_by(2) {
            parts.push((a.text(i)?, a.num(i + 1)?));
        }
        let g = a.thermo(IdealGas::mixture(&parts))?;
        substance(Substance::IdealGas(g))
    },
    // Constant fractions: the blended coefficients go on the data sheet
    // and the states are live formulas like a pure gas's; fractions that
    // are names make the states engine values.
    sheet: Sheet::Rule(Rule::GasMix),
};

pub static SATURATION: Builtin = Builtin {
    name: "saturation",
    family: Family::Substances,
    params: &[p("fluid"), opt("T"), opt("p")],
    variadic: false,
    usage: "saturation(fluid(\"water\"), p: 1 bar).vapour.h",
    description: "the saturated pair of a real fluid at T or p: fields .T, .p and the states \
                  .liquid and .vapour",
    typing: |b, args| {
        match args[0].as_ref().map(|a| a.ty) {
            Some(Ty::Substance(ModelKind::RealFluid)) | Some(Ty::Error) => {}
            Some(other) => {
                return err_at(
                    0,
                    format!(
                        "`saturation` needs a real fluid (`fluid(\"water\")`), got {}",
                        other.describe()
                    ),
                );
            }
            None => return err_call("`saturation` needs a fluid"),
        }
        want_num(b, args, 1, Dim::TEMPERATURE, true)?;
        want_num(b, args, 2, Dim::PRESSURE, false)?;
        if args[1].is_some() == args[2].is_some() {
            return err_call("`saturation` takes one of `T:` or `p:`");
        }
        Ok(unless_error(args, Ty::Saturation))
    },
    eval: |a, _| {
        let sub = a.substance(0)?;
        let Substance::Fluid(f) = &**sub else {
            return Err(CallError::at(0, "`saturation` needs a real fluid"));
        };
        let sat = if a.given(1) {
            a.thermo(f.saturation_t(a.num(1)?))?
        } else {
            a.thermo(f.saturation_p(a.num(2)?))?
        };
        Ok(Value::Saturation(Arc::new(crate::value::SaturationVal {
            sub: Arc::clone(sub),
            sat,
        })))
    },
    sheet: Sheet::EngineOnly,
};
