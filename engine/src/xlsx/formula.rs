//! The formula compiler: compiled worksheet code ([`Code`]) to spreadsheet
//! formula text over the package's defined names (SI values).
//!
//! Every formula keeps the engine's order of operations, so that an
//! independent spreadsheet engine reproduces the engine's numbers to the
//! last few bits: parentheses are written wherever the spreadsheet's
//! precedence or associativity differs from the engine's (unary minus binds
//! tighter than `^` in spreadsheets, `^` is left-associative there, and
//! `a+(b+c)` is kept as written because floating-point addition is not
//! associative).
//!
//! What has a closed form compiles to a formula; what has none (ideal-gas
//! inversions, IAPWS-IF97, `cell`) gives `None` and the writer puts the
//! engine's value in its place.

use crate::builtins::{Builtin, Rule, Sheet};
use crate::eval::Code;
use crate::thermo::Field;
use crate::thermo::consts::R_U;
use crate::thermo::exergy::G_N;
use crate::thermo::ideal_gas::{P_STD, T_MID, T_REF};
use crate::thermo::incompressible::P_REF;
use sheaf_grammar::CompareOp;

use super::names;

/// Precedence of a formula fragment (higher binds tighter).
const P_CMP: u8 = 1;
const P_ADD: u8 = 2;
const P_MUL: u8 = 3;
const P_NEG: u8 = 4;
const P_ATOM: u8 = 6;

/// A formula fragment with its precedence.
#[derive(Clone, Debug, PartialEq)]
pub struct Fragment {
    pub text: String,
    prec: u8,
}

/// A number as formula text: shortest text that reads back as the same
/// `f64`; scientific notation outside 1e-4..1e15.
pub fn number_text(x: f64) -> String {
    // The shortest decimal within one unit in the last place of `x`:
    // constants folded from units (16.043 g/mol * 0.001) carry binary
    // noise (0.016042999999999998) that says nothing to a reader; the
    // neighbouring double 0.016043 differs by 2e-16 relative.
    let mut y = x;
    if x.is_finite() && x != 0.0 {
        for digits in 1..17 {
            let t = format!("{:.*e}", digits - 1, x);
            if let Ok(v) = t.parse::<f64>()
                && (v - x).abs() <= x.abs() * f64::EPSILON
            {
                y = v;
                break;
            }
        }
    }
    super::literal_text(y).replace('e', "E")
}

impl Fragment {
    pub fn name(s: impl Into<String>) -> Fragment {
        Fragment {
            text: s.into(),
            prec: P_ATOM,
        }
    }

    pub fn num(x: f64) -> Fragment {
        let text = number_text(x);
        let prec = if text.starts_with('-') { P_NEG } else { P_ATOM };
        Fragment { text, prec }
    }

    fn call(f: &str, args: &[Fragment]) -> Fragment {
        let inner: Vec<&str> = args.iter().map(|a| a.text.as_str()).collect();
        Fragment {
            text: format!("{f}({})", inner.join(",")),
            prec: P_ATOM,
        }
    }

    /// Text, in parentheses unless it binds at least as tight as `min`.
    fn at(&self, min: u8) -> String {
        if self.prec >= min {
            self.text.clone()
        } else {
            format!("({})", self.text)
        }
    }

    fn neg(a: &Fragment) -> Fragment {
        Fragment {
            text: format!("-{}", a.at(P_ATOM)),
            prec: P_NEG,
        }
    }

    fn bin(a: &Fragment, op: &str, b: &Fragment) -> Fragment {
        let prec = match op {
            "+" | "-" => P_ADD,
            "*" | "/" => P_MUL,
            _ => P_CMP,
        };
        // Left-associative: the left operand may be of the same level, the
        // right one must bind tighter (a-(b-c), a/(b*c), a+(b+c)). A
        // negative right operand is parenthesised for legibility.
        let right = if b.prec == P_NEG {
            format!("({})", b.text)
        } else {
            b.at(prec + 1)
        };
        let left = if prec == P_CMP {
            a.at(P_ADD)
        } else {
            a.at(prec)
        };
        Fragment {
            text: format!("{left}{op}{right}"),
            prec,
        }
    }

    fn pow(a: &Fragment, b: &Fragment) -> Fragment {
        Fragment {
            text: format!("{}^{}", a.at(P_ATOM), b.at(P_ATOM)),
            prec: P_ATOM - 1,
        }
    }
}

fn add(a: &Fragment, b: &Fragment) -> Fragment {
    Fragment::bin(a, "+", b)
}
fn sub(a: &Fragment, b: &Fragment) -> Fragment {
    Fragment::bin(a, "-", b)
}
fn mul(a: &Fragment, b: &Fragment) -> Fragment {
    Fragment::bin(a, "*", b)
}
fn div(a: &Fragment, b: &Fragment) -> Fragment {
    Fragment::bin(a, "/", b)
}
fn n(x: f64) -> Fragment {
    Fragment::num(x)
}
fn ln(a: &Fragment) -> Fragment {
    Fragment::call("LN", std::slice::from_ref(a))
}
fn exp(a: &Fragment) -> Fragment {
    Fragment::call("EXP", std::slice::from_ref(a))
}
/// A comparison operator in spreadsheet notation.
fn cmp_symbol(op: CompareOp) -> &'static str {
    match op {
        CompareOp::Lt => "<",
        CompareOp::Le => "<=",
        CompareOp::Gt => ">",
        CompareOp::Ge => ">=",
        CompareOp::Eq => "=",
        CompareOp::Ne => "<>",
    }
}

/// Speed of sound of a gas, sqrt(cp/cv R T) (engine: same operation order).
fn gas_w(cp: &Fragment, cv: &Fragment, r: &Fragment, t: &Fragment) -> Fragment {
    Fragment::call("SQRT", &[mul(&mul(&div(cp, cv), r), t)])
}

/// A substance as formulas of its parameters.
#[derive(Clone, Debug, PartialEq)]
pub enum SubSym {
    Perfect {
        r: Fragment,
        cp: Fragment,
    },
    Incompressible {
        c: Fragment,
        rho: Fragment,
    },
    /// Ideal gas by canonical name: its polynomial data is on the data sheet.
    Ideal(String),
    /// A real fluid: no closed form.
    RealFluid,
}

/// Where a state's fields come from.
#[derive(Clone, Debug)]
pub enum StateSrc {
    /// Fields are cells of the node of that name.
    Node(String),
    /// Fields computed from temperature and pressure formulas.
    Inline { t: Fragment, p: Fragment },
}

#[derive(Clone, Debug)]
pub struct StateRef {
    pub sub: SubSym,
    pub src: StateSrc,
}

/// A state fixed by formulas for T and p, of a known substance.
#[derive(Clone, Debug)]
pub struct StateDef {
    pub sub: SubSym,
    pub t: Fragment,
    pub p: Fragment,
}

/// The key of an ideal gas in the names of its data cells: the canonical
/// name of a pure gas or air; for a mixture `mix` and 12 hex digits of the
/// sha256 of its composition (species and the exact bits of each mole
/// fraction), so equal mixtures share their cells and different ones never
/// do.
pub fn gas_key(g: &crate::thermo::ideal_gas::IdealGas) -> String {
    if crate::thermo::ideal_gas::IdealGas::by_name(g.name()).is_ok() {
        return g.name().to_string();
    }
    let mut text = String::new();
    for (name, x) in g.components() {
        text.push_str(&format!("{name}:{:016x};", x.to_bits()));
    }
    let h = super::sha256_hex(text.as_bytes());
    format!("mix{}", &h[..12])
}

/// Name of the ideal-gas data cells.
pub fn gas_coef_name(gas: &str, high: bool, k: usize) -> String {
    format!("ng_{gas}_{}_a{k}", if high { "hi" } else { "lo" })
}
pub fn gas_r_name(gas: &str) -> String {
    format!("ng_{gas}_R")
}
pub fn gas_hoff_name(gas: &str) -> String {
    format!("ng_{gas}_hoff")
}

/// What the compiler knows about the nodes compiled so far.
pub struct Env<'a> {
    /// Node names (None for checks).
    pub names: &'a [Option<String>],
    /// Substance of state and substance nodes, as formulas over their cells.
    pub subs: Vec<Option<SubSym>>,
    /// Whether node `i` is a state with field `f` (has a cell).
    pub has_field: &'a dyn Fn(usize, Field) -> bool,
    /// Whether node `i` is a number (has a `q` cell).
    pub is_number: &'a dyn Fn(usize) -> bool,
    /// Whether node `i` is a state.
    pub is_state: &'a dyn Fn(usize) -> bool,
}

impl Env<'_> {
    fn node_name(&self, i: usize) -> Option<&str> {
        self.names.get(i).and_then(|n| n.as_deref())
    }

    /// A number-valued expression.
    pub fn num(&self, code: &Code) -> Option<Fragment> {
        Some(match code {
            Code::Const(x) => n(*x),
            Code::Slot(i) => {
                if !(self.is_number)(*i) {
                    return None;
                }
                Fragment::name(names::name_of(
                    names::NameKind::Quantity,
                    self.node_name(*i)?,
                ))
            }
            Code::Neg(a) => Fragment::neg(&self.num(a)?),
            Code::Add(a, b) => add(&self.num(a)?, &self.num(b)?),
            Code::Sub(a, b) | Code::StateDiff(a, b, _) => sub(&self.num(a)?, &self.num(b)?),
            Code::Mul(a, b) => mul(&self.num(a)?, &self.num(b)?),
            Code::Div(a, b, _) => div(&self.num(a)?, &self.num(b)?),
            Code::Pow(a, b, _) => Fragment::pow(&self.num(a)?, &self.num(b)?),
            Code::Cmp(op, a, b) => Fragment::bin(&self.num(a)?, cmp_symbol(*op), &self.num(b)?),
            Code::Chain(first, rest) => {
                let mut parts = Vec::with_capacity(rest.len());
                let mut x = self.num(first)?;
                for (op, c) in rest {
                    let y = self.num(c)?;
                    parts.push(Fragment::bin(&x, cmp_symbol(*op), &y));
                    x = y;
                }
                Fragment::call("AND", &parts)
            }
            Code::And(a, b) => Fragment::call("AND", &[self.num(a)?, self.num(b)?]),
            Code::Or(a, b) => Fragment::call("OR", &[self.num(a)?, self.num(b)?]),
            Code::Not(a) => Fragment::call("NOT", &[self.num(a)?]),
            Code::If(c, a, b) => Fragment::call("IF", &[self.num(c)?, self.num(a)?, self.num(b)?]),
            Code::Field(base, f, _) => self.field(base, *f)?,
            Code::Call(b, args, _) => self.call(b, args)?,
            Code::Str(_) | Code::Absent | Code::Phase(..) => return None,
        })
    }

    /// A field of a state or substance expression.
    fn field(&self, base: &Code, f: Field) -> Option<Fragment> {
        if let Code::Slot(i) = base
            && (self.is_state)(*i)
        {
            if !(self.has_field)(*i, f) {
                return None;
            }
            return Some(Fragment::name(names::field_name(
                self.node_name(*i)?,
                f.name(),
            )));
        }
        if let Some(sub) = self.substance(base) {
            return substance_field(&sub, f);
        }
        let st = self.state(base)?;
        self.state_field(&st, f)
    }

    /// A number-valued call, by the built-in's spreadsheet form.
    fn call(&self, b: &Builtin, args: &[Code]) -> Option<Fragment> {
        match b.sheet {
            Sheet::Function(name) => {
                let xs: Option<Vec<Fragment>> = args.iter().map(|c| self.num(c)).collect();
                Some(Fragment::call(name, &xs?))
            }
            Sheet::Rule(rule) => self.rule(rule, args),
            Sheet::EngineOnly => None,
        }
    }

    /// A number-valued call compiled by a formula rule. Rules of
    /// substance- and state-valued built-ins give no number.
    fn rule(&self, rule: Rule, args: &[Code]) -> Option<Fragment> {
        let a = |i: usize| args.get(i).and_then(|c| self.num(c));
        let f1 = |name: &str| -> Option<Fragment> { Some(Fragment::call(name, &[a(0)?])) };
        Some(match rule {
            // Spreadsheets take ATAN2(x, y); the engine atan2(y, x).
            Rule::Atan2 => Fragment::call("ATAN2", &[a(1)?, a(0)?]),
            Rule::Min | Rule::Max => {
                let xs: Option<Vec<Fragment>> = args.iter().map(|c| self.num(c)).collect();
                Fragment::call(if rule == Rule::Min { "MIN" } else { "MAX" }, &xs?)
            }
            Rule::Floor => f1("INT")?,
            Rule::Ceil => Fragment::neg(&Fragment::call("INT", &[Fragment::neg(&a(0)?)])),
            // Halves away from zero, like the engine (ROUND differs at
            // binary fractions close to a half).
            Rule::Round => {
                let x = a(0)?;
                mul(
                    &Fragment::call("SIGN", std::slice::from_ref(&x)),
                    &Fragment::call("INT", &[add(&Fragment::call("ABS", &[x]), &n(0.5))]),
                )
            }
            Rule::DsIncompressible => mul(&a(0)?, &ln(&div(&a(2)?, &a(1)?))),
            Rule::HeatExergy => mul(&a(0)?, &sub(&n(1.0), &div(&a(2)?, &a(1)?))),
            Rule::DsIdealGas => {
                let sub_sym = self.substance(args.first()?)?;
                let s2 = self.state_field(
                    &StateRef {
                        sub: sub_sym.clone(),
                        src: StateSrc::Inline { t: a(3)?, p: a(4)? },
                    },
                    Field::S,
                )?;
                let s1 = self.state_field(
                    &StateRef {
                        sub: sub_sym,
                        src: StateSrc::Inline { t: a(1)?, p: a(2)? },
                    },
                    Field::S,
                )?;
                sub(&s2, &s1)
            }
            Rule::JetSpeed => {
                let s1 = self.state(args.first()?)?;
                let s2 = self.state(args.get(1)?)?;
                let dh = mul(
                    &n(2.0),
                    &sub(
                        &self.state_field(&s1, Field::H)?,
                        &self.state_field(&s2, Field::H)?,
                    ),
                );
                let inner = match args.get(2) {
                    Some(Code::Absent) | None => dh,
                    Some(_) => {
                        let v = a(2)?;
                        add(&mul(&v, &v), &dh)
                    }
                };
                Fragment::call("SQRT", &[inner])
            }
            Rule::FlowExergy | Rule::ClosedExergy => {
                let st = self.state(args.first()?)?;
                let d = self.state(args.get(1)?)?;
                let fld = |s: &StateRef, f: Field| self.state_field(s, f);
                let t0 = fld(&d, Field::T)?;
                let ds = mul(&t0, &sub(&fld(&st, Field::S)?, &fld(&d, Field::S)?));
                if rule == Rule::FlowExergy {
                    let mut e = sub(&sub(&fld(&st, Field::H)?, &fld(&d, Field::H)?), &ds);
                    if !matches!(args.get(2), Some(Code::Absent) | None) {
                        let v = a(2)?;
                        e = add(&e, &mul(&mul(&n(0.5), &v), &v));
                    }
                    if !matches!(args.get(3), Some(Code::Absent) | None) {
                        e = add(&e, &mul(&n(G_N), &a(3)?));
                    }
                    e
                } else {
                    let du = sub(&fld(&st, Field::U)?, &fld(&d, Field::U)?);
                    let pv = mul(
                        &fld(&d, Field::P)?,
                        &sub(&fld(&st, Field::V)?, &fld(&d, Field::V)?),
                    );
                    sub(&add(&du, &pv), &ds)
                }
            }
            Rule::PerfectGas
            | Rule::Incompressible
            | Rule::IdealGas
            | Rule::GasMix
            | Rule::RealFluid
            | Rule::State
            | Rule::Isentropic
            | Rule::Throttle
            | Rule::EtaDivides
            | Rule::EtaMultiplies => return None,
        })
    }

    /// A substance-valued expression.
    pub fn substance(&self, code: &Code) -> Option<SubSym> {
        match code {
            Code::Slot(i) => self
                .subs
                .get(*i)
                .cloned()
                .flatten()
                .filter(|_| !(self.is_state)(*i)),
            Code::Call(b, args, _) => self.substance_call(b.sheet, args),
            _ => None,
        }
    }

    /// A substance built by a call, as formulas of its parameters.
    fn substance_call(&self, sheet: Sheet, args: &[Code]) -> Option<SubSym> {
        let Sheet::Rule(rule) = sheet else {
            return None;
        };
        match rule {
            Rule::PerfectGas => {
                let r = self.num(args.first()?)?;
                let cp = match (args.get(1), args.get(2)) {
                    (Some(c), _) if *c != Code::Absent => self.num(c)?,
                    (_, Some(k)) if *k != Code::Absent => {
                        let k = self.num(k)?;
                        div(&mul(&k, &r), &sub(&k, &n(1.0)))
                    }
                    _ => return None,
                };
                Some(SubSym::Perfect { r, cp })
            }
            Rule::Incompressible => Some(SubSym::Incompressible {
                c: self.num(args.first()?)?,
                rho: self.num(args.get(1)?)?,
            }),
            Rule::IdealGas => match args.first()? {
                Code::Str(s) => crate::thermo::ideal_gas::IdealGas::by_name(s)
                    .ok()
                    .map(|g| SubSym::Ideal(g.name().to_string())),
                _ => None,
            },
            Rule::GasMix => {
                // Constant fractions only: the mixture's coefficients are
                // numbers on the data sheet, under a key of its composition.
                let mut parts = Vec::with_capacity(args.len() / 2);
                for pair in args.chunks(2) {
                    match pair {
                        [Code::Str(s), Code::Const(x)] => parts.push((&**s, *x)),
                        _ => return None,
                    }
                }
                let g = crate::thermo::ideal_gas::IdealGas::mixture(&parts).ok()?;
                Some(SubSym::Ideal(gas_key(&g)))
            }
            Rule::RealFluid => Some(SubSym::RealFluid),
            _ => None,
        }
    }

    /// A state-valued expression as a reference to its fields.
    pub fn state(&self, code: &Code) -> Option<StateRef> {
        if let Code::Slot(i) = code
            && (self.is_state)(*i)
        {
            return Some(StateRef {
                sub: self.subs.get(*i).cloned().flatten()?,
                src: StateSrc::Node(self.node_name(*i)?.to_string()),
            });
        }
        let d = self.state_def(code)?;
        Some(StateRef {
            sub: d.sub,
            src: StateSrc::Inline { t: d.t, p: d.p },
        })
    }

    /// The substance of a state expression, even when the state has no
    /// closed form.
    pub fn state_substance(&self, code: &Code) -> Option<SubSym> {
        match code {
            Code::Slot(i) => self.subs.get(*i).cloned().flatten(),
            Code::Call(b, args, _) if b.sheet == Sheet::Rule(Rule::State) => {
                self.substance(args.first()?)
            }
            Code::Call(_, args, _) => self.state_substance(args.first()?),
            _ => None,
        }
    }

    /// A state expression as formulas for T and p (closed forms only).
    pub fn state_def(&self, code: &Code) -> Option<StateDef> {
        let rule = match code {
            Code::Call(b, _, _) => match b.sheet {
                Sheet::Rule(r) => Some(r),
                _ => None,
            },
            _ => None,
        };
        match (code, rule) {
            // Only a state node has fields to refer to (`state` falls back
            // to this function for anything else, which must end here).
            (Code::Slot(i), _) if !(self.is_state)(*i) => None,
            (Code::Slot(_), _) => {
                let st = self.state(code)?;
                let t = self.state_field(&st, Field::T)?;
                let p = self.state_field(&st, Field::P)?;
                Some(StateDef { sub: st.sub, t, p })
            }
            (Code::Call(_, args, _), Some(Rule::State)) => {
                let sub = self.substance(args.first()?)?;
                let given = |i: usize| !matches!(args.get(i), Some(Code::Absent) | None);
                let a = |i: usize| args.get(i).and_then(|c| self.num(c));
                let p = a(2)?;
                let t = match (given(1), given(3), given(4)) {
                    (true, false, false) if given(2) => match sub {
                        SubSym::RealFluid => return None,
                        _ => a(1)?,
                    },
                    (false, true, false) => t_from_ph(&sub, &p, &a(3)?)?,
                    (false, false, true) => t_from_ps(&sub, &p, &a(4)?)?,
                    _ => return None,
                };
                Some(StateDef { sub, t, p })
            }
            (
                Code::Call(_, args, _),
                Some(
                    rule @ (Rule::Isentropic
                    | Rule::Throttle
                    | Rule::EtaDivides
                    | Rule::EtaMultiplies),
                ),
            ) => {
                let inlet = self.state(args.first()?)?;
                let sub = inlet.sub.clone();
                let p2 = self.num(args.get(1)?)?;
                let h1 = self.state_field(&inlet, Field::H)?;
                let s1 = self.state_field(&inlet, Field::S)?;
                let t = match rule {
                    Rule::Isentropic => t_from_ps(&sub, &p2, &s1)?,
                    Rule::Throttle => t_from_ph(&sub, &p2, &h1)?,
                    _ => {
                        let eta = self.num(args.get(2)?)?;
                        let t2s = t_from_ps(&sub, &p2, &s1)?;
                        let h2s = self.state_field(
                            &StateRef {
                                sub: sub.clone(),
                                src: StateSrc::Inline {
                                    t: t2s,
                                    p: p2.clone(),
                                },
                            },
                            Field::H,
                        )?;
                        let h2 = match rule {
                            Rule::EtaDivides => add(&h1, &div(&sub_(&h2s, &h1), &eta)),
                            _ => sub_(&h1, &mul(&eta, &sub_(&h1, &h2s))),
                        };
                        t_from_ph(&sub, &p2, &h2)?
                    }
                };
                Some(StateDef { sub, t, p: p2 })
            }
            _ => None,
        }
    }

    /// A field of a state reference.
    pub fn state_field(&self, st: &StateRef, f: Field) -> Option<Fragment> {
        match &st.src {
            StateSrc::Node(name) => Some(Fragment::name(names::field_name(name, f.name()))),
            StateSrc::Inline { t, p } => field_formula(&st.sub, f, &Own::Inline(t, p)),
        }
    }
}

fn sub_(a: &Fragment, b: &Fragment) -> Fragment {
    sub(a, b)
}

/// How a field formula reaches the state's other fields.
pub enum Own<'a> {
    /// Cells of the node of that name.
    Node(&'a str),
    /// Formulas for T and p.
    Inline(&'a Fragment, &'a Fragment),
}

fn dep(sub: &SubSym, f: Field, own: &Own) -> Option<Fragment> {
    match own {
        Own::Node(name) => Some(Fragment::name(names::field_name(name, f.name()))),
        Own::Inline(t, p) => match f {
            Field::T => Some((*t).clone()),
            Field::P => Some((*p).clone()),
            _ => field_formula(sub, f, own),
        },
    }
}

/// T from (p, h), closed forms only (engine: perfect_gas.rs and
/// incompressible.rs).
fn t_from_ph(sub: &SubSym, p: &Fragment, h: &Fragment) -> Option<Fragment> {
    match sub {
        SubSym::Perfect { cp, .. } => Some(add(&n(T_REF), &div(h, cp))),
        SubSym::Incompressible { c, rho } => Some(add(
            &n(T_REF),
            &div(&sub_(h, &div(&sub_(p, &n(P_REF)), rho)), c),
        )),
        _ => None,
    }
}

/// T from (p, s), closed forms only.
fn t_from_ps(sub: &SubSym, p: &Fragment, s: &Fragment) -> Option<Fragment> {
    match sub {
        SubSym::Perfect { r, cp } => Some(mul(
            &n(T_REF),
            &exp(&div(&add(s, &mul(r, &ln(&div(p, &n(P_STD))))), cp)),
        )),
        SubSym::Incompressible { c, .. } => Some(mul(&n(T_REF), &exp(&div(s, c)))),
        _ => None,
    }
}

/// A field of a substance value (`gas.cp`, `liquid.rho`).
pub fn substance_field(sub: &SubSym, f: Field) -> Option<Fragment> {
    match (sub, f) {
        (SubSym::Perfect { cp, .. }, Field::Cp) => Some(cp.clone()),
        (SubSym::Perfect { cp, r }, Field::Cv) => Some(sub_(cp, r)),
        (SubSym::Perfect { cp, r }, Field::K) => Some(div(cp, &sub_(cp, r))),
        (SubSym::Incompressible { c, .. }, Field::Cp | Field::Cv) => Some(c.clone()),
        (SubSym::Incompressible { rho, .. }, Field::Rho) => Some(rho.clone()),
        (SubSym::Incompressible { rho, .. }, Field::V) => Some(div(&n(1.0), rho)),
        (SubSym::Perfect { r, .. }, Field::R) => Some(r.clone()),
        (SubSym::Perfect { r, .. }, Field::M) => Some(div(&n(R_U), r)),
        (SubSym::Ideal(gas), Field::R) => Some(Fragment::name(gas_r_name(gas))),
        (SubSym::Ideal(gas), Field::M) => Some(div(&n(R_U), &Fragment::name(gas_r_name(gas)))),
        _ => None,
    }
}

/// Polynomial of the NASA 7-coefficient fit in one range (engine:
/// ideal_gas.rs `cp_over_r`, `h_over_r`, `s_over_r`, same operation order).
fn nasa(gas: &str, high: bool, f: Field, t: &Fragment) -> Fragment {
    let a = |k: usize| Fragment::name(gas_coef_name(gas, high, k));
    match f {
        Field::Cp => add(
            &a(1),
            &mul(
                t,
                &add(
                    &a(2),
                    &mul(t, &add(&a(3), &mul(t, &add(&a(4), &mul(t, &a(5)))))),
                ),
            ),
        ),
        Field::H => add(
            &mul(
                t,
                &add(
                    &a(1),
                    &mul(
                        t,
                        &add(
                            &div(&a(2), &n(2.0)),
                            &mul(
                                t,
                                &add(
                                    &div(&a(3), &n(3.0)),
                                    &mul(
                                        t,
                                        &add(&div(&a(4), &n(4.0)), &div(&mul(t, &a(5)), &n(5.0))),
                                    ),
                                ),
                            ),
                        ),
                    ),
                ),
            ),
            &a(6),
        ),
        _ => add(
            &add(
                &mul(&a(1), &ln(t)),
                &mul(
                    t,
                    &add(
                        &a(2),
                        &mul(
                            t,
                            &add(
                                &div(&a(3), &n(2.0)),
                                &mul(t, &add(&div(&a(4), &n(3.0)), &div(&mul(t, &a(5)), &n(4.0)))),
                            ),
                        ),
                    ),
                ),
            ),
            &a(7),
        ),
    }
}

fn nasa_branch(gas: &str, f: Field, t: &Fragment) -> Fragment {
    Fragment::call(
        "IF",
        &[
            Fragment::bin(t, "<", &n(T_MID)),
            nasa(gas, false, f, t),
            nasa(gas, true, f, t),
        ],
    )
}

/// Formula of a field other than T and p of a state of `sub`, from the
/// state's T and p (and its other fields through `own`). Engine: the
/// `state_tp` functions of the models, same operation order.
pub fn field_formula(sub: &SubSym, f: Field, own: &Own) -> Option<Fragment> {
    let d = |g: Field| dep(sub, g, own);
    let t_ref = n(T_REF);
    match sub {
        SubSym::Perfect { r, cp } => Some(match f {
            Field::T | Field::P => d(f)?,
            Field::H => mul(cp, &sub_(&d(Field::T)?, &t_ref)),
            Field::U => sub_(&d(Field::H)?, &mul(r, &d(Field::T)?)),
            Field::S => sub_(
                &mul(cp, &ln(&div(&d(Field::T)?, &t_ref))),
                &mul(r, &ln(&div(&d(Field::P)?, &n(P_STD)))),
            ),
            Field::V => div(&mul(r, &d(Field::T)?), &d(Field::P)?),
            Field::Rho => div(&n(1.0), &d(Field::V)?),
            Field::Cp => cp.clone(),
            Field::Cv => sub_(cp, r),
            Field::K => div(&d(Field::Cp)?, &d(Field::Cv)?),
            Field::W => gas_w(&d(Field::Cp)?, &d(Field::Cv)?, r, &d(Field::T)?),
            Field::X | Field::M | Field::R => return None,
        }),
        SubSym::Incompressible { c, rho } => Some(match f {
            Field::T | Field::P => d(f)?,
            Field::H => add(
                &d(Field::U)?,
                &mul(&d(Field::V)?, &sub_(&d(Field::P)?, &n(P_REF))),
            ),
            Field::U => mul(c, &sub_(&d(Field::T)?, &t_ref)),
            Field::S => mul(c, &ln(&div(&d(Field::T)?, &t_ref))),
            Field::V => div(&n(1.0), rho),
            Field::Rho => div(&n(1.0), &d(Field::V)?),
            Field::Cp | Field::Cv => c.clone(),
            Field::K => div(&d(Field::Cp)?, &d(Field::Cv)?),
            Field::X | Field::W | Field::M | Field::R => return None,
        }),
        SubSym::Ideal(gas) => {
            let r = Fragment::name(gas_r_name(gas));
            Some(match f {
                Field::T | Field::P => d(f)?,
                Field::Cp => mul(&r, &nasa_branch(gas, Field::Cp, &d(Field::T)?)),
                Field::H => sub_(
                    &mul(&r, &nasa_branch(gas, Field::H, &d(Field::T)?)),
                    &Fragment::name(gas_hoff_name(gas)),
                ),
                Field::S => mul(
                    &r,
                    &sub_(
                        &nasa_branch(gas, Field::S, &d(Field::T)?),
                        &ln(&div(&d(Field::P)?, &n(P_STD))),
                    ),
                ),
                Field::U => sub_(&d(Field::H)?, &mul(&r, &d(Field::T)?)),
                Field::V => div(&mul(&r, &d(Field::T)?), &d(Field::P)?),
                Field::Rho => div(&n(1.0), &d(Field::V)?),
                Field::Cv => sub_(&d(Field::Cp)?, &r),
                Field::K => div(&d(Field::Cp)?, &d(Field::Cv)?),
                Field::W => gas_w(&d(Field::Cp)?, &d(Field::Cv)?, &r, &d(Field::T)?),
                Field::X | Field::M | Field::R => return None,
            })
        }
        SubSym::RealFluid => None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn nm(s: &str) -> Fragment {
        Fragment::name(s)
    }

    #[test]
    fn numbers_round_trip() {
        for x in [
            0.0,
            1.0,
            -2.5,
            101325.0,
            1e-7,
            6.02214076e23,
            1.0 / 3.0,
            298.15,
            1e15,
        ] {
            let t = number_text(x);
            let back = t.parse::<f64>().unwrap();
            assert!((back - x).abs() <= x.abs() * f64::EPSILON, "{t}");
        }
        // Binary noise of folded constants is not written.
        assert_eq!(16.043 * 0.001, 0.016042999999999998);
        assert_eq!(number_text(16.043 * 0.001), "0.016043");
        assert_eq!(number_text(1.0 / 3.0), "0.3333333333333333");
        assert_eq!(number_text(1e-7), "1E-7");
        assert_eq!(number_text(101325.0), "101325");
    }

    #[test]
    fn precedence_and_associativity() {
        let (a, b, c) = (nm("a"), nm("b"), nm("c"));
        assert_eq!(sub(&a, &sub(&b, &c)).text, "a-(b-c)");
        assert_eq!(sub(&sub(&a, &b), &c).text, "a-b-c");
        assert_eq!(add(&a, &add(&b, &c)).text, "a+(b+c)");
        assert_eq!(div(&a, &mul(&b, &c)).text, "a/(b*c)");
        assert_eq!(mul(&add(&a, &b), &c).text, "(a+b)*c");
        // Spreadsheets read -a^2 as (-a)^2: the engine's -(a^2) is explicit.
        assert_eq!(Fragment::neg(&Fragment::pow(&a, &n(2.0))).text, "-(a^2)");
        assert_eq!(Fragment::pow(&Fragment::neg(&a), &n(2.0)).text, "(-a)^2");
        // ^ is left-associative in spreadsheets: a^(b^c) stays explicit.
        assert_eq!(Fragment::pow(&a, &Fragment::pow(&b, &c)).text, "a^(b^c)");
        assert_eq!(Fragment::pow(&n(-2.0), &n(2.0)).text, "(-2)^2");
        assert_eq!(mul(&a, &n(-3.0)).text, "a*(-3)");
        assert_eq!(Fragment::bin(&add(&a, &b), "<=", &c).text, "a+b<=c");
    }

    fn env_none<'a>(names: &'a [Option<String>]) -> Env<'a> {
        Env {
            names,
            subs: vec![None; names.len()],
            has_field: &|_, _| true,
            is_number: &|_| true,
            is_state: &|_| false,
        }
    }

    #[test]
    fn code_to_formula() {
        let names = vec![Some("T1".to_string()), Some("p_2".to_string())];
        let env = env_none(&names);
        let code = Code::Div(
            Box::new(Code::Sub(
                Box::new(Code::Slot(0)),
                Box::new(Code::Const(273.15)),
            )),
            Box::new(Code::Slot(1)),
            Default::default(),
        );
        assert_eq!(env.num(&code).unwrap().text, "(q1_T1-273.15)/q_p_2");
        let round = Code::Call(
            &crate::builtins::math::ROUND,
            vec![Code::Slot(1)],
            Default::default(),
        );
        assert_eq!(
            env.num(&round).unwrap().text,
            "SIGN(q_p_2)*INT(ABS(q_p_2)+0.5)"
        );
        let atan2 = Code::Call(
            &crate::builtins::math::ATAN2,
            vec![Code::Slot(0), Code::Slot(1)],
            Default::default(),
        );
        assert_eq!(env.num(&atan2).unwrap().text, "ATAN2(q_p_2,q1_T1)");
        let ceil = Code::Call(
            &crate::builtins::math::CEIL,
            vec![Code::Slot(1)],
            Default::default(),
        );
        assert_eq!(env.num(&ceil).unwrap().text, "-INT(-q_p_2)");
        // No closed form: a string argument, an IF97 state.
        assert!(env.num(&Code::Str("x".into())).is_none());
    }

    #[test]
    fn perfect_gas_state_fields() {
        let sub = SubSym::Perfect {
            r: nm("f_gas_R"),
            cp: nm("f_gas_cp"),
        };
        let own = Own::Node("st1");
        assert_eq!(
            field_formula(&sub, Field::H, &own).unwrap().text,
            "f_gas_cp*(f_st1_T-298.15)"
        );
        assert_eq!(
            field_formula(&sub, Field::S, &own).unwrap().text,
            "f_gas_cp*LN(f_st1_T/298.15)-f_gas_R*LN(f_st1_p/100000)"
        );
        assert_eq!(
            t_from_ps(&sub, &nm("p2"), &nm("s1")).unwrap().text,
            "298.15*EXP((s1+f_gas_R*LN(p2/100000))/f_gas_cp)"
        );
        assert!(field_formula(&SubSym::RealFluid, Field::H, &own).is_none());
    }
}
