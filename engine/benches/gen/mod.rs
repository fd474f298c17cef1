//! Synthetic worksheets for the pipeline benchmark.
//!
//! [`worksheet`] writes a worksheet of exactly `n` statements that checks
//! and evaluates without errors: a random acyclic graph of unit-carrying
//! arithmetic over sixteen quantities a thermal engineer uses (pressure,
//! specific energy, mass flow, power, temperature, ...). Inputs carry units
//! (`input p_17 = 3.2 bar`), computed values reference names defined before
//! or after them in the file, some carry `: UNIT` annotations, some take
//! `sqrt`/`ln` of dimensionless ratios, and some statements are checks,
//! headings, notes and comments.
//!
//! Every sub-expression's SI value is tracked while it is built, so the
//! generator can keep each value positive and within a band around a
//! typical magnitude (a constant factor rescales it when it drifts), and
//! report the value it expects the engine to compute for every name.
//!
//! Deterministic from the seed: a small xorshift generator, no `rand`.
//! Shared by `benches/pipeline.rs` and `tests/synthetic_worksheet.rs`.

#![allow(dead_code)]

use std::fmt::Write as _;

/// A generated worksheet.
pub struct Synth {
    pub source: String,
    /// Statements (lines) in `source`, headings and comments included.
    pub statements: usize,
    /// Evaluable nodes: inputs, computed values and checks.
    pub nodes: usize,
    /// Inputs: name and SI value, in generation (dependency) order.
    pub inputs: Vec<(String, f64)>,
    /// Every named value (inputs and computed) with the SI value the
    /// generator computed for it.
    pub expected: Vec<(String, f64)>,
}

/// xorshift64* (Vigna 2016); plenty for shaping test data.
struct Rng(u64);

impl Rng {
    fn new(seed: u64) -> Rng {
        Rng(seed.wrapping_mul(0x9E37_79B9_7F4A_7C15) | 1)
    }
    fn next(&mut self) -> u64 {
        let mut x = self.0;
        x ^= x >> 12;
        x ^= x << 25;
        x ^= x >> 27;
        self.0 = x;
        x.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }
    /// Uniform in [0, 1).
    fn unit(&mut self) -> f64 {
        (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }
    fn below(&mut self, n: usize) -> usize {
        (self.next() % n as u64) as usize
    }
    fn chance(&mut self, p: f64) -> bool {
        self.unit() < p
    }
    fn pick<'a, T>(&mut self, xs: &'a [T]) -> &'a T {
        &xs[self.below(xs.len())]
    }
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Q {
    Ratio,
    Pressure,
    SpecVol,
    SpecEnergy,
    MassFlow,
    Power,
    SpecHeat,
    TempDiff,
    Temp,
    Length,
    Time,
    Speed,
    Density,
    Energy,
    Mass,
    Volume,
}

const ALL: [Q; 16] = [
    Q::Ratio,
    Q::Pressure,
    Q::SpecVol,
    Q::SpecEnergy,
    Q::MassFlow,
    Q::Power,
    Q::SpecHeat,
    Q::TempDiff,
    Q::Temp,
    Q::Length,
    Q::Time,
    Q::Speed,
    Q::Density,
    Q::Energy,
    Q::Mass,
    Q::Volume,
];

/// A unit as written, and SI = value * factor + offset. The generator only
/// needs these to predict values; the engine uses its own table.
struct U {
    text: &'static str,
    factor: f64,
    offset: f64,
}

const fn u(text: &'static str, factor: f64) -> U {
    U {
        text,
        factor,
        offset: 0.0,
    }
}

impl Q {
    fn index(self) -> usize {
        self as usize
    }

    fn prefix(self) -> &'static str {
        match self {
            Q::Ratio => "r",
            Q::Pressure => "p",
            Q::SpecVol => "v",
            Q::SpecEnergy => "h",
            Q::MassFlow => "mdot",
            Q::Power => "W",
            Q::SpecHeat => "cp",
            Q::TempDiff => "dT",
            Q::Temp => "T",
            Q::Length => "L",
            Q::Time => "t",
            Q::Speed => "V",
            Q::Density => "rho",
            Q::Energy => "E",
            Q::Mass => "m",
            Q::Volume => "Vol",
        }
    }

    /// Units for literals and annotations (SI factors, exact or from the
    /// unit definitions: psi = lbf/in^2, lb = 0.45359237 kg, degF offset).
    fn units(self) -> &'static [U] {
        match self {
            Q::Ratio => const { &[u("", 1.0)] },
            Q::Pressure => {
                const {
                    &[
                        u("kPa", 1e3),
                        u("bar", 1e5),
                        u("MPa", 1e6),
                        u("psi", 6_894.757_293_168_361),
                    ]
                }
            }
            Q::SpecVol => const { &[u("m^3/kg", 1.0), u("L/kg", 1e-3)] },
            Q::SpecEnergy => const { &[u("kJ/kg", 1e3), u("J/kg", 1.0), u("MJ/kg", 1e6)] },
            Q::MassFlow => {
                const {
                    &[
                        u("kg/s", 1.0),
                        u("kg/h", 1.0 / 3600.0),
                        u("t/h", 1000.0 / 3600.0),
                    ]
                }
            }
            Q::Power => const { &[u("kW", 1e3), u("MW", 1e6), u("W", 1.0)] },
            Q::SpecHeat => const { &[u("kJ/(kg K)", 1e3), u("J/(kg*K)", 1.0)] },
            Q::TempDiff => const { &[u("K", 1.0), u("degC_diff", 1.0)] },
            Q::Temp => {
                const {
                    &[
                        U {
                            text: "degC",
                            factor: 1.0,
                            offset: 273.15,
                        },
                        U {
                            text: "degF",
                            factor: 5.0 / 9.0,
                            offset: 459.67 * 5.0 / 9.0,
                        },
                    ]
                }
            }
            Q::Length => const { &[u("m", 1.0), u("mm", 1e-3), u("km", 1e3)] },
            Q::Time => const { &[u("s", 1.0), u("min", 60.0), u("h", 3600.0)] },
            Q::Speed => const { &[u("m/s", 1.0), u("km/h", 1.0 / 3.6)] },
            Q::Density => const { &[u("kg/m^3", 1.0), u("g/L", 1.0)] },
            Q::Energy => const { &[u("kJ", 1e3), u("MJ", 1e6), u("kWh", 3.6e6)] },
            Q::Mass => const { &[u("kg", 1.0), u("t", 1e3), u("lb", 0.453_592_37)] },
            Q::Volume => const { &[u("m^3", 1.0), u("L", 1e-3)] },
        }
    }

    /// A typical SI magnitude; values are kept within a factor of BAND of
    /// it.
    fn typical(self) -> f64 {
        match self {
            Q::Ratio => 1.0,
            Q::Pressure => 2e5,
            Q::SpecVol => 0.5,
            Q::SpecEnergy => 2e5,
            Q::MassFlow => 3.0,
            Q::Power => 6e5,
            Q::SpecHeat => 1.5e3,
            Q::TempDiff => 40.0,
            Q::Temp => 350.0,
            Q::Length => 20.0,
            Q::Time => 300.0,
            Q::Speed => 30.0,
            Q::Density => 500.0,
            Q::Energy => 2e8,
            Q::Mass => 1e3,
            Q::Volume => 2.0,
        }
    }

    fn noun(self) -> &'static str {
        match self {
            Q::Ratio => "ratio",
            Q::Pressure => "pressure",
            Q::SpecVol => "specific volume",
            Q::SpecEnergy => "specific enthalpy rise",
            Q::MassFlow => "mass flow",
            Q::Power => "shaft power",
            Q::SpecHeat => "specific heat",
            Q::TempDiff => "temperature rise",
            Q::Temp => "temperature",
            Q::Length => "pipe length",
            Q::Time => "hold time",
            Q::Speed => "velocity",
            Q::Density => "density",
            Q::Energy => "energy",
            Q::Mass => "mass",
            Q::Volume => "volume",
        }
    }
}

const BAND: f64 = 30.0;

const KELVIN: U = u("K", 1.0);

/// Precedence of an expression's top operator, for parenthesising.
const SUM: u8 = 0;
const PROD: u8 = 1;
const ATOM: u8 = 2;

struct Fragment {
    text: String,
    val: f64,
    prec: u8,
}

impl Fragment {
    fn at_least(self, prec: u8) -> String {
        if self.prec >= prec {
            self.text
        } else {
            format!("({})", self.text)
        }
    }
}

/// A number with about three significant figures, written as the grammar
/// reads it, and its value as parsed back.
fn num(x: f64) -> (String, f64) {
    let a = x.abs();
    let text = if (0.01..1e6).contains(&a) {
        let decimals = (2 - a.log10().floor() as i32).max(0) as usize;
        let s = format!("{x:.decimals$}");
        if s.contains('.') {
            s.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            s
        }
    } else {
        format!("{x:.2e}")
    };
    let v = text.parse::<f64>().unwrap_or(x);
    (text, v)
}

struct Gen {
    rng: Rng,
    /// Named values so far per quantity (indices into `names`/`vals`).
    by_q: Vec<Vec<usize>>,
    names: Vec<String>,
    vals: Vec<f64>,
    /// Names referenced by the expression being built.
    refs: usize,
}

impl Gen {
    /// A literal of quantity `q` near its typical value, in a random unit.
    fn literal(&mut self, q: Q) -> Fragment {
        let unit = self.rng.pick(q.units());
        let si = if q == Q::Temp {
            // 5 .. 95 degC
            278.15 + 90.0 * self.rng.unit()
        } else {
            q.typical() * 10f64.powf(self.rng.unit() - 0.5)
        };
        let (text, x) = num((si - unit.offset) / unit.factor);
        let val = x * unit.factor + unit.offset;
        let text = if unit.text.is_empty() {
            text
        } else {
            format!("{text} {}", unit.text)
        };
        Fragment {
            text,
            val,
            prec: ATOM,
        }
    }

    /// A name of quantity `q` defined so far (in dependency order), or
    /// sometimes (always, when there is none) a literal.
    fn leaf(&mut self, q: Q) -> Fragment {
        if self.by_q[q.index()].is_empty() || self.rng.chance(0.15) {
            return self.literal(q);
        }
        self.named(q)
    }

    /// A name of quantity `q` defined so far; the caller makes sure there
    /// is one (the first statements define one input of each quantity).
    fn named(&mut self, q: Q) -> Fragment {
        let len = self.by_q[q.index()].len();
        // half local (recent), half anywhere: mixes short and long edges
        let k = if self.rng.chance(0.5) {
            len - 1 - self.rng.below(len.min(20))
        } else {
            self.rng.below(len)
        };
        let id = self.by_q[q.index()][k];
        self.refs += 1;
        Fragment {
            text: self.names[id].clone(),
            val: self.vals[id],
            prec: ATOM,
        }
    }

    fn ratio_of(&mut self, depth: u32) -> Fragment {
        let q = loop {
            let q = *self.rng.pick(&ALL);
            if q != Q::Ratio {
                break q;
            }
        };
        let a = self.expr(q, depth.saturating_sub(1));
        let b = self.expr(q, depth.saturating_sub(1));
        let (a, b) = if a.val >= b.val { (a, b) } else { (b, a) };
        let val = a.val / b.val;
        Fragment {
            text: format!("{} / {}", a.at_least(PROD), b.at_least(ATOM)),
            val,
            prec: PROD,
        }
    }

    /// A sum or difference of two expressions of `q` (not `Temp`), kept
    /// positive.
    fn sum(&mut self, q: Q, depth: u32) -> Fragment {
        let a = self.expr(q, depth - 1);
        let b = self.expr(q, depth - 1);
        if self.rng.chance(0.5) {
            let (a, b) = if a.val >= b.val { (a, b) } else { (b, a) };
            if a.val > 1.3 * b.val {
                let val = a.val - b.val;
                return Fragment {
                    text: format!("{} - {}", a.text, b.at_least(PROD)),
                    val,
                    prec: SUM,
                };
            }
            let val = a.val + b.val;
            return Fragment {
                text: format!("{} + {}", a.text, b.at_least(PROD)),
                val,
                prec: SUM,
            };
        }
        let val = a.val + b.val;
        Fragment {
            text: format!("{} + {}", a.text, b.at_least(PROD)),
            val,
            prec: SUM,
        }
    }

    fn mul(&mut self, a: Q, b: Q, depth: u32) -> Fragment {
        let x = self.expr(a, depth - 1);
        let y = self.expr(b, depth - 1);
        let val = x.val * y.val;
        Fragment {
            text: format!("{} * {}", x.at_least(PROD), y.at_least(ATOM)),
            val,
            prec: PROD,
        }
    }

    fn div(&mut self, a: Q, b: Q, depth: u32) -> Fragment {
        let x = self.expr(a, depth - 1);
        let y = self.expr(b, depth - 1);
        let val = x.val / y.val;
        Fragment {
            text: format!("{} / {}", x.at_least(PROD), y.at_least(ATOM)),
            val,
            prec: PROD,
        }
    }

    /// An expression of quantity `q` with at most `depth` levels of
    /// operators.
    fn expr(&mut self, q: Q, depth: u32) -> Fragment {
        if depth == 0 || self.rng.chance(0.25) {
            return self.leaf(q);
        }
        self.compound(q, depth)
    }

    /// An expression of quantity `q` with one to `depth` (>= 1) levels of
    /// operators.
    fn compound(&mut self, q: Q, depth: u32) -> Fragment {
        let e = match q {
            Q::Temp => return self.temperature(depth),
            Q::Ratio => match self.rng.below(6) {
                0 => self.ratio_of(depth),
                1 => {
                    let r = self.ratio_of(depth);
                    let val = r.val.sqrt();
                    Fragment {
                        text: format!("sqrt({})", r.text),
                        val,
                        prec: ATOM,
                    }
                }
                2 => {
                    let r = self.ratio_of(depth);
                    let l = r.val.ln();
                    if l > 1.0 / BAND {
                        Fragment {
                            text: format!("ln({})", r.text),
                            val: l,
                            prec: ATOM,
                        }
                    } else {
                        Fragment {
                            text: format!("exp({})", r.text),
                            val: r.val.exp(),
                            prec: ATOM,
                        }
                    }
                }
                3 => {
                    let r = self.ratio_of(depth);
                    let (k, kv) = num(0.2 + 0.4 * self.rng.unit());
                    Fragment {
                        text: format!("({})^{k}", r.text),
                        val: r.val.powf(kv),
                        prec: PROD,
                    }
                }
                4 => self.mul(Q::Ratio, Q::Ratio, depth),
                _ => self.sum(Q::Ratio, depth),
            },
            _ => {
                let recipes = recipes(q);
                match self.rng.below(4 + recipes.len()) {
                    0 => self.sum(q, depth),
                    1 => {
                        let a = self.expr(q, depth - 1);
                        let b = self.expr(q, depth - 1);
                        let f = if self.rng.chance(0.5) { "max" } else { "min" };
                        let val = if f == "max" {
                            a.val.max(b.val)
                        } else {
                            a.val.min(b.val)
                        };
                        Fragment {
                            text: format!("{f}({}, {})", a.text, b.text),
                            val,
                            prec: ATOM,
                        }
                    }
                    2 => {
                        let r = self.expr(Q::Ratio, depth - 1);
                        let x = self.expr(q, depth - 1);
                        let val = r.val * x.val;
                        Fragment {
                            text: format!("{} * {}", r.at_least(PROD), x.at_least(ATOM)),
                            val,
                            prec: PROD,
                        }
                    }
                    3 => self.special(q, depth),
                    k => match recipes[k - 4] {
                        (a, '*', b) => self.mul(a, b, depth),
                        (a, _, b) => self.div(a, b, depth),
                    },
                }
            }
        };
        self.rescale(q, e)
    }

    /// Quantity-specific forms: `sqrt(2 * h)`, `V^2 / 2`, `T_a - T_b`.
    fn special(&mut self, q: Q, depth: u32) -> Fragment {
        match q {
            Q::Speed => {
                let h = self.expr(Q::SpecEnergy, depth - 1);
                let val = (2.0 * h.val).sqrt();
                Fragment {
                    text: format!("sqrt(2 * {})", h.at_least(ATOM)),
                    val,
                    prec: ATOM,
                }
            }
            Q::SpecEnergy => {
                let v = self.leaf(Q::Speed);
                if v.text.contains(' ') {
                    // a literal cannot take `^` (it would belong to its unit)
                    let val = v.val * v.val / 2.0;
                    return Fragment {
                        text: format!("({})^2 / 2", v.text),
                        val,
                        prec: PROD,
                    };
                }
                let val = v.val.powi(2) / 2.0;
                Fragment {
                    text: format!("{}^2 / 2", v.text),
                    val,
                    prec: PROD,
                }
            }
            Q::TempDiff => {
                let a = self.leaf(Q::Temp);
                let b = self.leaf(Q::Temp);
                let (a, b) = if a.val >= b.val { (a, b) } else { (b, a) };
                if a.val - b.val < 1.0 {
                    return self.leaf(Q::TempDiff);
                }
                let val = a.val - b.val;
                Fragment {
                    text: format!("{} - {}", a.text, b.text),
                    val,
                    prec: SUM,
                }
            }
            _ => self.sum(q, depth),
        }
    }

    /// An absolute temperature: a temperature plus or minus a difference,
    /// steered towards the typical value and kept within 150..2000 K.
    fn temperature(&mut self, depth: u32) -> Fragment {
        let t = self.leaf(Q::Temp);
        let d = self.expr(Q::TempDiff, depth - 1);
        let down = t.val > Q::Temp.typical();
        let val = if down { t.val - d.val } else { t.val + d.val };
        if !(150.0..2000.0).contains(&val) {
            let d = self.literal(Q::TempDiff);
            let val = t.val + d.val;
            return Fragment {
                text: format!("{} + {}", t.text, d.text),
                val,
                prec: SUM,
            };
        }
        let op = if down { '-' } else { '+' };
        Fragment {
            text: format!("{} {op} {}", t.text, d.at_least(PROD)),
            val,
            prec: SUM,
        }
    }

    /// Multiply by a constant when the value has drifted out of its band.
    fn rescale(&mut self, q: Q, e: Fragment) -> Fragment {
        let t = q.typical();
        if e.val > t / BAND && e.val < t * BAND {
            return e;
        }
        let (k, kv) = num(t / e.val * 10f64.powf(0.5 * self.rng.unit() - 0.25));
        let val = e.val * kv;
        Fragment {
            text: format!("{} * {k}", e.at_least(PROD)),
            val,
            prec: PROD,
        }
    }
}

/// Ways to make `q` from a product or quotient of two other quantities.
fn recipes(q: Q) -> &'static [(Q, char, Q)] {
    use Q::*;
    match q {
        SpecEnergy => &[
            (Pressure, '*', SpecVol),
            (SpecHeat, '*', TempDiff),
            (SpecHeat, '*', Temp),
            (Power, '/', MassFlow),
            (Energy, '/', Mass),
            (Pressure, '/', Density),
        ],
        Power => &[(MassFlow, '*', SpecEnergy), (Energy, '/', Time)],
        Energy => &[(Power, '*', Time), (Mass, '*', SpecEnergy)],
        Pressure => &[(Density, '*', SpecEnergy), (SpecEnergy, '/', SpecVol)],
        SpecVol => &[(Volume, '/', Mass), (Ratio, '/', Density)],
        Density => &[(Mass, '/', Volume), (Pressure, '/', SpecEnergy)],
        Speed => &[(Length, '/', Time)],
        Time => &[
            (Length, '/', Speed),
            (Energy, '/', Power),
            (Mass, '/', MassFlow),
        ],
        Length => &[(Speed, '*', Time)],
        MassFlow => &[(Mass, '/', Time), (Power, '/', SpecEnergy)],
        Mass => &[(Density, '*', Volume), (MassFlow, '*', Time)],
        Volume => &[(Mass, '/', Density), (Mass, '*', SpecVol)],
        SpecHeat => &[(SpecEnergy, '/', TempDiff), (SpecEnergy, '/', Temp)],
        TempDiff => &[(SpecEnergy, '/', SpecHeat)],
        Ratio | Temp => &[],
    }
}

/// A worksheet of exactly `n` statements (n >= 1), deterministic in `seed`.
pub fn worksheet(n: usize, seed: u64) -> Synth {
    let mut g = Gen {
        rng: Rng::new(seed),
        by_q: vec![Vec::new(); ALL.len()],
        names: Vec::new(),
        vals: Vec::new(),
        refs: 0,
    };
    let title = format!("# Synthetic worksheet: {n} statements, seed {seed}");
    // Statements besides the title: about 3 % headings, notes and comments
    // (placed after shuffling), the rest inputs, computed values, checks.
    let extra = n.saturating_sub(1) / 32;
    let body = n.saturating_sub(1) - extra;
    let mut lines: Vec<String> = Vec::with_capacity(body);
    let mut inputs = Vec::new();
    let mut nodes = 0;
    for rank in 0..body {
        nodes += 1;
        let roll = g.rng.unit();
        if rank < ALL.len() || roll < 0.18 {
            // input
            let q = match ALL.get(rank) {
                Some(&q) => q,
                None => *g.rng.pick(&ALL),
            };
            let lit = g.literal(q);
            let name = format!("{}_{}", q.prefix(), g.names.len());
            let mut line = format!("input {name} = {}", lit.text);
            if g.rng.chance(0.6) {
                let _ = write!(line, "  \"{}, from the data sheet\"", q.noun());
            }
            inputs.push((name.clone(), lit.val));
            g.by_q[q.index()].push(g.names.len());
            g.names.push(name);
            g.vals.push(lit.val);
            lines.push(line);
        } else if roll < 0.23 {
            // check on an earlier value against a literal it satisfies
            let q = loop {
                let q = *g.rng.pick(&ALL);
                if !g.by_q[q.index()].is_empty() {
                    break q;
                }
            };
            let x = g.named(q);
            let upper = g.rng.chance(0.5);
            let mut unit = g.rng.pick(q.units());
            let bound = match (q, upper) {
                (Q::Temp, true) => x.val + 30.0,
                (Q::Temp, false) => x.val - 30.0,
                (_, true) => x.val * 1.5,
                (_, false) => x.val / 1.5,
            };
            if bound < unit.offset {
                // `-40 degC` negates an absolute value, which the checker
                // refuses; write such a bound in kelvin
                unit = &KELVIN;
            }
            let (b, _) = num((bound - unit.offset) / unit.factor);
            let (op, what) = if upper {
                ("<=", "limit")
            } else {
                (">=", "minimum")
            };
            let sp = if unit.text.is_empty() { "" } else { " " };
            lines.push(format!(
                "check {} {op} {b}{sp}{}  \"{} {what}\"",
                x.text,
                unit.text,
                q.noun()
            ));
        } else {
            // computed value
            let q = *g.rng.pick(&ALL);
            g.refs = 0;
            let depth = 1 + g.rng.below(3) as u32;
            let mut e = g.compound(q, depth);
            if g.refs == 0 {
                // every computed value depends on at least one name
                e = if q == Q::Temp {
                    let t = g.named(Q::Temp);
                    let d = g.literal(Q::TempDiff);
                    let val = t.val + d.val;
                    Fragment {
                        text: format!("{} + {}", t.text, d.text),
                        val,
                        prec: SUM,
                    }
                } else {
                    let r = g.named(Q::Ratio);
                    let val = r.val * e.val;
                    let product = Fragment {
                        text: format!("{} * {}", r.text, e.at_least(ATOM)),
                        val,
                        prec: PROD,
                    };
                    g.rescale(q, product)
                };
            }
            let name = format!("{}_{}", q.prefix(), g.names.len());
            let mut line = name.clone();
            if q != Q::Ratio && g.rng.chance(0.3) {
                let _ = write!(line, " : {}", g.rng.pick(q.units()).text);
            }
            let _ = write!(line, " = {}", e.text);
            if g.rng.chance(0.3) {
                let _ = write!(line, "  \"{}\"", q.noun());
            }
            g.by_q[q.index()].push(g.names.len());
            g.names.push(name);
            g.vals.push(e.val);
            lines.push(line);
        }
    }
    // Any order: move about a third of the statements to random places.
    for i in 0..lines.len() {
        if g.rng.chance(0.35) {
            let j = g.rng.below(lines.len());
            lines.swap(i, j);
        }
    }
    let mut source = String::with_capacity(lines.len() * 48);
    source.push_str(&title);
    source.push('\n');
    let every = body.checked_div(extra).map_or(usize::MAX, |e| e.max(1));
    let mut extras_left = extra;
    for (i, l) in lines.iter().enumerate() {
        if extras_left > 0 && i % every == 0 {
            extras_left -= 1;
            match g.rng.below(4) {
                0 | 1 => {
                    let _ = writeln!(source, "## Section {}", i / every + 1);
                }
                2 => {
                    let _ = writeln!(source, "> Figures in this section are synthetic.");
                }
                _ => {
                    let _ = writeln!(source, "// generated statement {i}");
                }
            }
        }
        source.push_str(l);
        source.push('\n');
    }
    for _ in 0..extras_left {
        source.push_str("// end\n");
    }
    let expected = g.names.into_iter().zip(g.vals).collect();
    Synth {
        source,
        statements: n,
        nodes,
        inputs,
        expected,
    }
}
