//! Devices: each returns the outlet state of an adiabatic device.

use super::{
    Args, Builtin, CallError, Family, Param, Rule, Sheet, TArg, TypeErr, Warnings, err_at, named,
    new_state, opt_pos, p, unless_error, want_dimensionless, want_num, want_state,
};
use crate::thermo::{self, ModelKind, process};
use crate::types::Ty;
use crate::units::Dim;
use crate::value::{StateVal, Value};

const DEVICE: &[Param] = &[p("st"), named("p"), named("eta")];
const NO_ETA: &[Param] = &[p("st"), named("p")];

/// Typing of a device: an inlet state, an outlet pressure, an efficiency
/// when the device has one; the outlet is a state of the inlet's model.
fn device_typing(b: &Builtin, args: &[Option<TArg>]) -> Result<Ty, TypeErr> {
    let k = want_state(b, args, 0)?;
    want_num(b, args, 1, Dim::PRESSURE, false)?;
    if b.params.len() > 2 {
        want_dimensionless(b, args, 2)?;
    }
    match k {
        Some(ModelKind::IdealGas | ModelKind::PerfectGas) if b.name == "pump" => {
            err_at(0, "`pump` needs a liquid; use `compressor` for a gas")
        }
        Some(k) => Ok(unless_error(args, Ty::State(k))),
        None => Ok(Ty::Error),
    }
}

/// The outlet state, with the model's warnings about the process.
fn outlet(
    a: &Args<'_>,
    w: &mut Warnings,
    f: impl FnOnce(&StateVal) -> thermo::Result<thermo::State>,
) -> Result<Value, CallError> {
    let inlet = a.state(0)?;
    let out = a.thermo(f(inlet))?;
    if let Some(msg) = inlet.sub.process_warning(&inlet.st, &out) {
        w.push(msg);
    }
    Ok(new_state(&inlet.sub, out, w))
}

pub static ISENTROPIC: Builtin = Builtin {
    name: "isentropic",
    family: Family::Devices,
    params: NO_ETA,
    variadic: false,
    usage: "isentropic(st1, p: p2)",
    description: "outlet state at pressure p with the inlet's entropy",
    typing: device_typing,
    eval: |a, w| {
        let p2 = a.num(1)?;
        outlet(a, w, |s| process::isentropic(&s.sub, &s.st, p2))
    },
    sheet: Sheet::Rule(Rule::Isentropic),
};

pub static THROTTLE: Builtin = Builtin {
    name: "throttle",
    family: Family::Devices,
    params: NO_ETA,
    variadic: false,
    usage: "throttle(st1, p: p2)",
    description: "throttling valve outlet: h2 = h1",
    typing: device_typing,
    eval: |a, w| {
        let p2 = a.num(1)?;
        outlet(a, w, |s| process::throttle(&s.sub, &s.st, p2))
    },
    sheet: Sheet::Rule(Rule::Throttle),
};

pub static COMPRESSOR: Builtin = Builtin {
    name: "compressor",
    family: Family::Devices,
    params: DEVICE,
    variadic: false,
    usage: "compressor(st1, p: p2, eta: 0.8)",
    description: "compressor outlet: h2 = h1 + (h2s - h1)/eta",
    typing: device_typing,
    eval: |a, w| {
        let (p2, eta) = (a.num(1)?, a.num(2)?);
        outlet(a, w, |s| process::compressor(&s.sub, &s.st, p2, eta))
    },
    sheet: Sheet::Rule(Rule::EtaDivides),
};

pub static TURBINE: Builtin = Builtin {
    name: "turbine",
    family: Family::Devices,
    params: DEVICE,
    variadic: false,
    usage: "turbine(st1, p: p2, eta: 0.85)",
    description: "turbine outlet: h2 = h1 - eta (h1 - h2s)",
    typing: device_typing,
    eval: |a, w| {
        let (p2, eta) = (a.num(1)?, a.num(2)?);
        outlet(a, w, |s| process::turbine(&s.sub, &s.st, p2, eta))
    },
    sheet: Sheet::Rule(Rule::EtaMultiplies),
};

pub static PUMP: Builtin = Builtin {
    name: "pump",
    family: Family::Devices,
    params: DEVICE,
    variadic: false,
    usage: "pump(st1, p: p2, eta: 0.75)",
    description: "liquid pump outlet: h2 = h1 + (h2s - h1)/eta (v dp / eta for an incompressible \
                  liquid)",
    typing: device_typing,
    eval: |a, w| {
        let (p2, eta) = (a.num(1)?, a.num(2)?);
        outlet(a, w, |s| process::pump(&s.sub, &s.st, p2, eta))
    },
    sheet: Sheet::Rule(Rule::EtaDivides),
};

pub static NOZZLE: Builtin = Builtin {
    name: "nozzle",
    family: Family::Devices,
    params: DEVICE,
    variadic: false,
    usage: "nozzle(st1, p: p2, eta: 0.95)",
    description: "nozzle outlet: h2 = h1 - eta (h1 - h2s)",
    typing: device_typing,
    eval: |a, w| {
        let (p2, eta) = (a.num(1)?, a.num(2)?);
        outlet(a, w, |s| process::nozzle(&s.sub, &s.st, p2, eta))
    },
    sheet: Sheet::Rule(Rule::EtaMultiplies),
};

pub static JET_SPEED: Builtin = Builtin {
    name: "jet_speed",
    family: Family::Devices,
    params: &[p("st1"), p("st2"), opt_pos("V1")],
    variadic: false,
    usage: "jet_speed(st1, st2, 20 m/s)",
    description: "outlet speed sqrt(V1^2 + 2 (h1 - h2)) of an adiabatic nozzle",
    typing: |b, args| {
        let a = want_state(b, args, 0)?;
        let c = want_state(b, args, 1)?;
        want_num(b, args, 2, Dim::VELOCITY, false)?;
        Ok(if a.is_none() || c.is_none() {
            Ty::Error
        } else {
            unless_error(args, Ty::num(Dim::VELOCITY))
        })
    },
    eval: |a, _| {
        let (s1, s2) = (a.state(0)?, a.state(1)?);
        let v = a.thermo(process::jet_speed(&s1.st, &s2.st, a.opt_num(2, 0.0)?))?;
        Ok(Value::Num(v))
    },
    sheet: Sheet::Rule(Rule::JetSpeed),
};
