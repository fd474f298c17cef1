//! Entropy change and exergy.

use super::{
    Builtin, CallError, Family, Rule, Sheet, any_error, err_at, err_call, named, num_arg, opt, p,
    unless_error, want_num, want_state,
};
use crate::thermo::{ModelKind, exergy};
use crate::types::Ty;
use crate::units::Dim;
use crate::value::Value;

fn num(x: f64) -> Result<Value, CallError> {
    Ok(Value::Num(x))
}

pub static DS_INCOMPRESSIBLE: Builtin = Builtin {
    name: "ds_incompressible",
    family: Family::SecondLaw,
    params: &[p("c"), p("T1"), p("T2")],
    variadic: false,
    usage: "ds_incompressible(c, T1, T2)",
    description: "entropy change c ln(T2/T1) of an incompressible substance",
    typing: |b, args| {
        want_num(b, args, 0, Dim::SPECIFIC_ENTROPY, false)?;
        want_num(b, args, 1, Dim::TEMPERATURE, true)?;
        want_num(b, args, 2, Dim::TEMPERATURE, true)?;
        Ok(unless_error(args, Ty::num(Dim::SPECIFIC_ENTROPY)))
    },
    eval: |a, _| {
        let ds = a.thermo(exergy::ds_incompressible(a.num(0)?, a.num(1)?, a.num(2)?))?;
        num(ds)
    },
    sheet: Sheet::Rule(Rule::DsIncompressible),
};

pub static DS_IDEAL_GAS: Builtin = Builtin {
    name: "ds_ideal_gas",
    family: Family::SecondLaw,
    params: &[p("gas"), p("T1"), p("p1"), p("T2"), p("p2")],
    variadic: false,
    usage: "ds_ideal_gas(gas, T1, p1, T2, p2)",
    description: "entropy change s°(T2) - s°(T1) - R ln(p2/p1) of an ideal or perfect gas",
    typing: |b, args| {
        match args[0].as_ref().map(|a| a.ty) {
            Some(Ty::Substance(ModelKind::IdealGas | ModelKind::PerfectGas)) | Some(Ty::Error) => {}
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
        want_num(b, args, 1, Dim::TEMPERATURE, true)?;
        want_num(b, args, 2, Dim::PRESSURE, false)?;
        want_num(b, args, 3, Dim::TEMPERATURE, true)?;
        want_num(b, args, 4, Dim::PRESSURE, false)?;
        Ok(unless_error(args, Ty::num(Dim::SPECIFIC_ENTROPY)))
    },
    eval: |a, _| {
        let g = a.substance(0)?;
        let ds = a.thermo(exergy::ds_ideal_gas(
            g,
            a.num(1)?,
            a.num(2)?,
            a.num(3)?,
            a.num(4)?,
        ))?;
        num(ds)
    },
    sheet: Sheet::Rule(Rule::DsIdealGas),
};

/// Typing of the exergy of a state relative to a dead state of the same
/// model; `flow` adds the optional speed and height.
fn exergy_typing(
    b: &Builtin,
    args: &[Option<super::BoundArg>],
    flow: bool,
) -> Result<Ty, super::TypeErr> {
    let a = want_state(b, args, 0)?;
    let d = want_state(b, args, 1)?;
    if flow {
        want_num(b, args, 2, Dim::VELOCITY, false)?;
        want_num(b, args, 3, Dim::LENGTH, false)?;
    }
    if let (Some(a), Some(d)) = (a, d)
        && a != d
    {
        return err_at(
            1,
            format!(
                "the dead state must be of the same substance: the state is of {}, the dead \
                 state of {}",
                a.describe(),
                d.describe()
            ),
        );
    }
    Ok(unless_error(args, Ty::num(Dim::SPECIFIC_ENERGY)))
}

/// The state and the dead state, which must be of one substance.
fn with_dead_state<'a>(
    a: &'a super::Args<'_>,
) -> Result<(&'a crate::value::StateVal, &'a crate::value::StateVal), CallError> {
    let (st, dead) = (a.state(0)?, a.state(1)?);
    if st.sub != dead.sub {
        return Err(CallError::at(
            1,
            format!(
                "the dead state is of {} but the state is of {}: use one substance",
                dead.sub, st.sub
            ),
        ));
    }
    Ok((st, dead))
}

pub static FLOW_EXERGY: Builtin = Builtin {
    name: "flow_exergy",
    family: Family::SecondLaw,
    params: &[p("st"), named("dead"), opt("V"), opt("z")],
    variadic: false,
    usage: "flow_exergy(st, dead: st0, V: 30 m/s, z: 2 m)",
    description: "specific flow exergy (h - h0) - T0 (s - s0) + V^2/2 + g z",
    typing: |b, args| exergy_typing(b, args, true),
    eval: |a, _| {
        let (st, dead) = with_dead_state(a)?;
        num(exergy::flow_exergy(
            &st.st,
            &dead.st,
            a.opt_num(2, 0.0)?,
            a.opt_num(3, 0.0)?,
        ))
    },
    sheet: Sheet::Rule(Rule::FlowExergy),
};

pub static CLOSED_EXERGY: Builtin = Builtin {
    name: "closed_exergy",
    family: Family::SecondLaw,
    params: &[p("st"), named("dead")],
    variadic: false,
    usage: "closed_exergy(st, dead: st0)",
    description: "specific exergy of a closed system (u - u0) + p0 (v - v0) - T0 (s - s0)",
    typing: |b, args| exergy_typing(b, args, false),
    eval: |a, _| {
        let (st, dead) = with_dead_state(a)?;
        num(exergy::closed_exergy(&st.st, &dead.st))
    },
    sheet: Sheet::Rule(Rule::ClosedExergy),
};

pub static HEAT_EXERGY: Builtin = Builtin {
    name: "heat_exergy",
    family: Family::SecondLaw,
    params: &[p("Q"), p("T_b"), p("T0")],
    variadic: false,
    usage: "heat_exergy(Q, T_b, T0)",
    description: "exergy of heat Q crossing a boundary at T_b: Q (1 - T0/T_b)",
    typing: |b, args| {
        if any_error(args) {
            return Ok(Ty::Error);
        }
        let q = num_arg(b, args, 0)?;
        want_num(b, args, 1, Dim::TEMPERATURE, true)?;
        want_num(b, args, 2, Dim::TEMPERATURE, true)?;
        Ok(Ty::num(q.dim))
    },
    eval: |a, _| num(a.thermo(exergy::heat_exergy(a.num(0)?, a.num(1)?, a.num(2)?))?),
    sheet: Sheet::Rule(Rule::HeatExergy),
};
