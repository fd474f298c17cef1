//! Devices: each returns the outlet state of an adiabatic device.

use super::{
    Args, BoundArg, Builtin, CallError, Family, Param, Rule, Sheet, TypeErr, Warnings, err_at,
    named, new_state, opt, opt_pos, p, unless_error, want_dimensionless, want_num, want_state,
};
use crate::thermo::{self, ModelKind, process, process::Device};
use crate::types::Ty;
use crate::units::Dim;
use crate::value::{StateVal, Value};

const DEVICE: &[Param] = &[p("st"), named("p"), named("eta")];
/// Compressors and turbines: isentropic `eta:` or polytropic `eta_p:`.
const ROTOR: &[Param] = &[p("st"), named("p"), opt("eta"), opt("eta_p")];
const NO_ETA: &[Param] = &[p("st"), named("p")];

/// Typing of a device: an inlet state, an outlet pressure, an efficiency
/// when the device has one; the outlet is a state of the inlet's model.
fn device_typing(b: &Builtin, args: &[Option<BoundArg>]) -> Result<Ty, TypeErr> {
    let k = want_state(b, args, 0)?;
    want_num(b, args, 1, Dim::PRESSURE, false)?;
    for i in 2..b.params.len() {
        want_dimensionless(b, args, i)?;
    }
    if b.params.len() == 4 {
        match (&args[2], &args[3]) {
            (Some(_), Some(_)) => {
                return err_at(
                    3,
                    format!("`{}` takes `eta:` or `eta_p:`, not both", b.name),
                );
            }
            (None, None) => {
                return Err(TypeErr {
                    message: format!(
                        "`{}` needs an efficiency: `eta:` (isentropic) or `eta_p:` (polytropic)",
                        b.name
                    ),
                    param: None,
                });
            }
            _ => {}
        }
    }
    match k {
        Some(ModelKind::IdealGas | ModelKind::PerfectGas) if b.name == "pump" => {
            err_at(0, "`pump` needs a liquid; use `compressor` for a gas")
        }
        Some(k) => Ok(unless_error(args, Ty::State(k))),
        None => Ok(Ty::Error),
    }
}

/// The outlet state, with the model's and the device rules' warnings
/// about the process.
fn outlet(
    a: &Args<'_>,
    w: &mut Warnings,
    device: Device,
    f: impl FnOnce(&StateVal) -> thermo::Result<thermo::State>,
) -> Result<Value, CallError> {
    let inlet = a.state(0)?;
    let out = a.thermo(f(inlet))?;
    if let Some(msg) = inlet.sub.process_warning(&inlet.st, &out) {
        w.push(msg);
    }
    if let Some(msg) = process::device_warning(device, &inlet.sub, &inlet.st, &out) {
        w.push(msg);
    }
    Ok(new_state(&inlet.sub, out, w))
}

/// A compressor or turbine by isentropic or polytropic efficiency.
fn rotor(
    a: &Args<'_>,
    w: &mut Warnings,
    device: Device,
    isentropic: fn(&thermo::Substance, &thermo::State, f64, f64) -> thermo::Result<thermo::State>,
    polytropic: fn(&thermo::Substance, &thermo::State, f64, f64) -> thermo::Result<thermo::State>,
) -> Result<Value, CallError> {
    let p2 = a.num(1)?;
    if a.given(3) {
        let eta_p = a.num(3)?;
        outlet(a, w, device, |s| polytropic(&s.sub, &s.st, p2, eta_p))
    } else {
        let eta = a.num(2)?;
        outlet(a, w, device, |s| isentropic(&s.sub, &s.st, p2, eta))
    }
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
        outlet(a, w, Device::Isentropic, |s| {
            process::isentropic(&s.sub, &s.st, p2)
        })
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
        outlet(a, w, Device::Throttle, |s| {
            process::throttle(&s.sub, &s.st, p2)
        })
    },
    sheet: Sheet::Rule(Rule::Throttle),
};

pub static COMPRESSOR: Builtin = Builtin {
    name: "compressor",
    family: Family::Devices,
    params: ROTOR,
    variadic: false,
    usage: "compressor(st1, p: p2, eta: 0.8)  or  compressor(st1, p: p2, eta_p: 0.85)",
    description: "compressor outlet: h2 = h1 + (h2s - h1)/eta; with eta_p (polytropic), dh = v dp \
                  / eta_p integrated along the path on the substance's own model",
    typing: device_typing,
    eval: |a, w| {
        rotor(
            a,
            w,
            Device::Compressor,
            process::compressor,
            process::compressor_polytropic,
        )
    },
    sheet: Sheet::Rule(Rule::EtaDivides),
};

pub static TURBINE: Builtin = Builtin {
    name: "turbine",
    family: Family::Devices,
    params: ROTOR,
    variadic: false,
    usage: "turbine(st1, p: p2, eta: 0.85)  or  turbine(st1, p: p2, eta_p: 0.88)",
    description: "turbine outlet: h2 = h1 - eta (h1 - h2s); with eta_p (polytropic), dh = eta_p v \
                  dp integrated along the path",
    typing: device_typing,
    eval: |a, w| {
        rotor(
            a,
            w,
            Device::Turbine,
            process::turbine,
            process::turbine_polytropic,
        )
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
        outlet(a, w, Device::Pump, |s| {
            process::pump(&s.sub, &s.st, p2, eta)
        })
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
        outlet(a, w, Device::Nozzle, |s| {
            process::nozzle(&s.sub, &s.st, p2, eta)
        })
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

pub static MIX: Builtin = Builtin {
    name: "mix",
    family: Family::Devices,
    params: &[p("st_a"), p("mdot_a"), p("st_b"), p("mdot_b"), named("p")],
    variadic: false,
    usage: "mix(st_a, mdot_a, st_b, mdot_b, p: p3)",
    description: "adiabatic mixing of two streams of one substance to pressure p: h = (ma ha + mb \
                  hb)/(ma + mb); the outlet may be two-phase",
    typing: |b, args| {
        let ka = want_state(b, args, 0)?;
        want_num(b, args, 1, Dim::MASS_FLOW, false)?;
        let kb = want_state(b, args, 2)?;
        want_num(b, args, 3, Dim::MASS_FLOW, false)?;
        want_num(b, args, 4, Dim::PRESSURE, false)?;
        match (ka, kb) {
            (Some(x), Some(y)) if x != y => err_at(
                2,
                format!(
                    "`mix` needs two streams of one substance: a state of {} and a state of {}",
                    x.describe(),
                    y.describe()
                ),
            ),
            (Some(k), Some(_)) => Ok(unless_error(args, Ty::State(k))),
            _ => Ok(Ty::Error),
        }
    },
    eval: |a, w| {
        let (sa, sb) = (a.state(0)?, a.state(2)?);
        if sa.sub != sb.sub {
            return Err(CallError::at(
                2,
                format!(
                    "`mix` needs two streams of one substance: {} and {}",
                    sa.sub, sb.sub
                ),
            ));
        }
        let out = a.thermo(process::mix(
            &sa.sub,
            &sa.st,
            a.num(1)?,
            &sb.st,
            a.num(3)?,
            a.num(4)?,
        ))?;
        Ok(new_state(&sa.sub, out, w))
    },
    sheet: Sheet::EngineOnly,
};
