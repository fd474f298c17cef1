//! Units and dimensions.
//!
//! A [`Dim`] is an exponent vector over the SI base quantities. A [`Unit`]
//! converts a number written in it to coherent SI: `si = value * factor +
//! offset` (offset is non-zero only for degC, degF and gauge pressures).
//! [`Affinity`] tracks absolute vs. difference quantities (README, units in "A short tour of the language").
//!
//! Interface used by the checker and the CLI:
//! - [`lookup`]: one unit symbol (with SI prefix) -> [`Unit`];
//! - [`resolve`]: a parsed unit expression -> [`Unit`], or a located error
//!   with a suggestion;
//! - [`auto_display`]: coherent SI unit with an engineering prefix for a
//!   dimension and value;
//! - [`quantity_name`]: "pressure", "specific entropy", ... for messages;
//! - [`format_sig`]: significant-figure formatting;
//! - [`catalogue`], [`search`], [`suggest`]: the table, for `sheaf units`
//!   and "did you mean" hints.

use std::fmt;

use sheaf_grammar::{Span, UnitExpr, UnitKind};

mod display;
mod format;
mod table;
#[cfg(test)]
mod tests;

pub use display::{DisplayUnit, auto_display, quantity_name, si_unit};
pub use format::{format_sig, shortest_text};

/// Number of base quantities: length, mass, time, temperature, amount,
/// electric current, luminous intensity.
pub const BASE_COUNT: usize = 7;
pub const BASE_SYMBOLS: [&str; BASE_COUNT] = ["m", "kg", "s", "K", "mol", "A", "cd"];

/// Exponent vector over the SI base quantities
/// (L, M, T, Θ, N, I, J), in that order.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
pub struct Dim(pub [i8; BASE_COUNT]);

impl Dim {
    pub const NONE: Dim = Dim([0; BASE_COUNT]);
    pub const LENGTH: Dim = Dim([1, 0, 0, 0, 0, 0, 0]);
    pub const MASS: Dim = Dim([0, 1, 0, 0, 0, 0, 0]);
    pub const TIME: Dim = Dim([0, 0, 1, 0, 0, 0, 0]);
    pub const TEMPERATURE: Dim = Dim([0, 0, 0, 1, 0, 0, 0]);
    pub const AMOUNT: Dim = Dim([0, 0, 0, 0, 1, 0, 0]);
    pub const PRESSURE: Dim = Dim([-1, 1, -2, 0, 0, 0, 0]);
    pub const ENERGY: Dim = Dim([2, 1, -2, 0, 0, 0, 0]);
    pub const POWER: Dim = Dim([2, 1, -3, 0, 0, 0, 0]);
    pub const SPECIFIC_ENERGY: Dim = Dim([2, 0, -2, 0, 0, 0, 0]);
    pub const SPECIFIC_ENTROPY: Dim = Dim([2, 0, -2, -1, 0, 0, 0]);
    pub const SPECIFIC_VOLUME: Dim = Dim([3, -1, 0, 0, 0, 0, 0]);
    pub const DENSITY: Dim = Dim([-3, 1, 0, 0, 0, 0, 0]);
    pub const VELOCITY: Dim = Dim([1, 0, -1, 0, 0, 0, 0]);
    pub const ACCELERATION: Dim = Dim([1, 0, -2, 0, 0, 0, 0]);
    pub const MASS_FLOW: Dim = Dim([0, 1, -1, 0, 0, 0, 0]);
    pub const ENTROPY_RATE: Dim = Dim([2, 1, -3, -1, 0, 0, 0]);
    pub const MOLAR_ENTROPY: Dim = Dim([2, 1, -2, -1, -1, 0, 0]);
    pub const MOLAR_MASS: Dim = Dim([0, 1, 0, 0, -1, 0, 0]);

    pub fn is_none(self) -> bool {
        self == Dim::NONE
    }

    /// The product's dimension; `None` when an exponent would leave
    /// ±[`MAX_EXPONENT`] (never saturated: a wrong dimension must not
    /// pass a check).
    pub fn checked_mul(self, rhs: Dim) -> Option<Dim> {
        checked_mul_dim(self, rhs, 1)
    }

    /// The quotient's dimension; `None` on exponent overflow.
    pub fn checked_div(self, rhs: Dim) -> Option<Dim> {
        checked_mul_dim(self, rhs, -1)
    }

    /// Raise to an integer power; `None` on exponent overflow.
    pub fn powi(self, n: i32) -> Option<Dim> {
        let mut out = [0i8; BASE_COUNT];
        for (o, e) in out.iter_mut().zip(self.0) {
            *o = exponent(i64::from(e).checked_mul(i64::from(n))?)?;
        }
        Some(Dim(out))
    }

    /// Raise to a rational power `num/den`; `None` if an exponent would not
    /// be an integer or would overflow.
    pub fn pow_ratio(self, num: i32, den: i32) -> Option<Dim> {
        if den == 0 {
            return None;
        }
        let mut out = [0i8; BASE_COUNT];
        for (o, e) in out.iter_mut().zip(self.0) {
            let m = i64::from(e).checked_mul(i64::from(num))?;
            if m % i64::from(den) != 0 {
                return None;
            }
            *o = exponent(m / i64::from(den))?;
        }
        Some(Dim(out))
    }

    /// Dimension in base SI symbols, e.g. `kg/(m s^2)`; empty for none.
    pub fn base_symbol(self) -> String {
        let mut num = Vec::new();
        let mut den = Vec::new();
        for (sym, e) in BASE_SYMBOLS.iter().zip(self.0) {
            match e {
                0 => {}
                1 => num.push(sym.to_string()),
                e if e > 1 => num.push(format!("{sym}^{e}")),
                -1 => den.push(sym.to_string()),
                e => den.push(format!("{sym}^{}", -i32::from(e))),
            }
        }
        let n = if num.is_empty() {
            "1".to_string()
        } else {
            num.join(" ")
        };
        match den.len() {
            0 if num.is_empty() => String::new(),
            0 => n,
            1 => format!("{n}/{}", den[0]),
            _ => format!("{n}/({})", den.join(" ")),
        }
    }
}

impl fmt::Display for Dim {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let s = self.base_symbol();
        if s.is_empty() {
            f.write_str("1")
        } else {
            f.write_str(&s)
        }
    }
}

/// Absolute vs. difference quantities (temperature, gauge pressure).
///
/// Units with an offset (`degC`, `degF`, `barg`, ...) and `degR` give
/// `Absolute`; `degC_diff`, `degF_diff` give `Difference`; every other
/// unit (including `K`) gives `Neutral`, usable as either.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
pub enum Affinity {
    #[default]
    Neutral,
    Absolute,
    Difference,
}

/// A resolved unit: `si = value * factor + offset`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Unit {
    pub factor: f64,
    pub offset: f64,
    pub dim: Dim,
    pub affinity: Affinity,
}

impl Unit {
    pub fn to_si(&self, value: f64) -> f64 {
        value * self.factor + self.offset
    }
    pub fn from_si(&self, si: f64) -> f64 {
        (si - self.offset) / self.factor
    }
}

impl Unit {
    /// Whether this is a gauge pressure unit (`barg`, `psig`, `kPag`,
    /// `MPag`): a pressure written relative to a reference pressure.
    pub fn is_gauge(&self) -> bool {
        self.dim == Dim::PRESSURE && self.affinity == Affinity::Absolute && self.offset != 0.0
    }

    /// This unit with the gauge reference `reference` (Pa, absolute) when it
    /// is a gauge unit; other units are returned as they are.
    pub fn with_gauge(self, reference: f64) -> Unit {
        if self.is_gauge() {
            Unit {
                offset: reference,
                ..self
            }
        } else {
            self
        }
    }
}

/// The default gauge reference: the standard atmosphere, 101.325 kPa
/// (`uom`'s `pressure::atmosphere`, the offset of the gauge rows of the
/// unit table).
pub fn standard_atmosphere() -> f64 {
    lookup("atm").map_or(crate::thermo::consts::P_ATM, |u| u.factor)
}

/// A unit that could not be resolved, with where and a suggestion.
#[derive(Clone, Debug, PartialEq)]
pub struct UnitError {
    pub span: Span,
    pub message: String,
    /// "did you mean `kPa`?"
    pub suggestion: Option<String>,
}

/// Look up one unit symbol, with an optional SI prefix (`kJ`, `MPa`,
/// `degC`, `°C`, `barg`). A symbol that is itself in the table (`min`,
/// `mm`, `ft`) resolves as itself before any prefix is tried; prefixes
/// apply only to the SI/metric units (m, g, s, Pa, J, W, N, L, mol, Hz,
/// bar, Wh, A).
pub fn lookup(symbol: &str) -> Option<Unit> {
    let (e, exp) = table::find_prefixed(symbol)?;
    Some(Unit {
        factor: table::scale_pow10(e.factor, exp),
        offset: e.offset,
        dim: e.dim,
        affinity: e.affinity,
    })
}

/// Resolve a parsed unit expression. An offset unit keeps its offset only
/// when it stands alone; inside a compound (`kJ/(kg degC)`) it acts as its
/// difference unit.
pub fn resolve(u: &UnitExpr) -> Result<Unit, UnitError> {
    match &u.kind {
        UnitKind::Atom(sym) => atom(sym, u.span),
        _ => {
            let (factor, dim) = combine(u, 0)?;
            Ok(Unit {
                factor,
                offset: 0.0,
                dim,
                affinity: Affinity::Neutral,
            })
        }
    }
}

/// Deepest unit expression accepted (the parser bounds nesting too; this
/// keeps `resolve` safe on any tree).
const MAX_UNIT_DEPTH: usize = 256;

fn atom(sym: &str, span: Span) -> Result<Unit, UnitError> {
    lookup(sym).ok_or_else(|| {
        if sym == "Nm" {
            // Decided in the unit table: `Nm` is not a unit.
            return UnitError {
                span,
                message: "unknown unit `Nm`: write the newton metre as `N*m`; normal cubic \
                          metres of gas are `Nm3` (nanometre: `nm`)"
                    .to_string(),
                suggestion: Some("N*m".to_string()),
            };
        }
        UnitError {
            span,
            message: format!("unknown unit `{sym}`"),
            suggestion: suggest(sym),
        }
    })
}

/// Largest dimension exponent in magnitude (symmetric, so a negated
/// exponent always fits).
pub const MAX_EXPONENT: i8 = 127;

fn exponent(e: i64) -> Option<i8> {
    if e.abs() > i64::from(MAX_EXPONENT) {
        None
    } else {
        i8::try_from(e).ok()
    }
}

fn checked_mul_dim(a: Dim, b: Dim, sign: i64) -> Option<Dim> {
    let mut out = a.0;
    for (o, e) in out.iter_mut().zip(b.0) {
        *o = exponent(i64::from(*o) + sign * i64::from(e))?;
    }
    Some(Dim(out))
}

fn overflow(span: Span) -> UnitError {
    UnitError {
        span,
        message: "unit exponent out of range".into(),
        suggestion: None,
    }
}

/// Factor and dimension of a unit used as part of a compound: offsets are
/// dropped (a `degC` inside `kJ/(kg degC)` is a kelvin-sized step).
fn combine(u: &UnitExpr, depth: usize) -> Result<(f64, Dim), UnitError> {
    if depth > MAX_UNIT_DEPTH {
        return Err(UnitError {
            span: u.span,
            message: "unit expression nested too deeply".into(),
            suggestion: None,
        });
    }
    let (factor, dim) = match &u.kind {
        UnitKind::Atom(sym) => {
            let a = atom(sym, u.span)?;
            (a.factor, a.dim)
        }
        UnitKind::One => (1.0, Dim::NONE),
        UnitKind::Mul(a, b) | UnitKind::Div(a, b) => {
            let (fa, da) = combine(a, depth + 1)?;
            let (fb, db) = combine(b, depth + 1)?;
            if matches!(u.kind, UnitKind::Mul(..)) {
                let d = checked_mul_dim(da, db, 1).ok_or_else(|| overflow(u.span))?;
                (fa * fb, d)
            } else {
                let d = checked_mul_dim(da, db, -1).ok_or_else(|| overflow(u.span))?;
                (fa / fb, d)
            }
        }
        UnitKind::Pow(base, n) => {
            let (fb, db) = combine(base, depth + 1)?;
            let d = db.powi(*n).ok_or_else(|| overflow(u.span))?;
            (fb.powi(*n), d)
        }
    };
    if !factor.is_finite() || factor == 0.0 {
        return Err(UnitError {
            span: u.span,
            message: "unit too large or too small to represent".into(),
            suggestion: None,
        });
    }
    Ok((factor, dim))
}

/// One row of the unit catalogue, for `sheaf units [WORD]`.
#[derive(Clone, Debug, PartialEq)]
pub struct UnitInfo {
    pub symbol: &'static str,
    pub name: &'static str,
    /// The quantity in words ("pressure").
    pub quantity: String,
    /// `si = value * factor + offset`.
    pub factor: f64,
    pub offset: f64,
    /// Other spellings, gauge/absolute, where the factor is defined.
    pub note: &'static str,
}

/// Every unit in the table (without the generated prefixed forms; rows
/// that take SI prefixes say so in `note` or via [`takes_prefixes`]).
pub fn catalogue() -> Vec<UnitInfo> {
    table::entries()
        .iter()
        .map(|e| UnitInfo {
            symbol: e.symbol,
            name: e.name,
            quantity: quantity_name(e.dim),
            factor: e.factor,
            offset: e.offset,
            note: e.note,
        })
        .collect()
}

/// Whether a catalogue symbol accepts SI prefixes (`Pa` -> `kPa`).
pub fn takes_prefixes(symbol: &str) -> bool {
    table::find(symbol).is_some_and(|e| e.prefixable)
}

/// Catalogue rows whose symbol, name or quantity contains `word`
/// (case-insensitive). An empty word gives the whole catalogue.
pub fn search(word: &str) -> Vec<UnitInfo> {
    let w = word.to_lowercase();
    catalogue()
        .into_iter()
        .filter(|u| {
            u.symbol.to_lowercase().contains(&w)
                || u.name.to_lowercase().contains(&w)
                || u.quantity.to_lowercase().contains(&w)
                || table::find(u.symbol)
                    .is_some_and(|e| e.aliases.iter().any(|a| a.to_lowercase().contains(&w)))
        })
        .collect()
}

/// The closest known symbol to an unknown one (`kpa` -> `kPa`,
/// `degc` -> `degC`), or `None` when nothing is close.
pub fn suggest(symbol: &str) -> Option<String> {
    if symbol.is_empty() {
        return None;
    }
    // Common spellings that are not close by edit distance.
    const HINTS: &[(&str, &str)] = &[
        ("C", "degC"),
        ("F", "degF"),
        ("R", "degR"),
        ("°K", "K"),
        ("degK", "K"),
        ("deg_C", "degC"),
        ("deg_F", "degF"),
        ("sec", "s"),
        ("hr", "h"),
        ("hrs", "h"),
        ("lbs", "lb"),
        ("kgs", "kg"),
        ("bara", "bar"),
        ("BTU", "Btu"),
        ("HP", "hp"),
        ("RPM", "rpm"),
        ("tonne", "t"),
        ("litre", "L"),
        ("liter", "L"),
        ("mins", "min"),
        ("kWhr", "kWh"),
    ];
    if let Some((_, to)) = HINTS.iter().find(|(from, _)| *from == symbol) {
        return Some((*to).to_string());
    }
    let candidates = table::suggestion_candidates();
    // Same letters, other case: the usual slip (`kpa`, `KPa`, `degc`).
    let lower = symbol.to_lowercase();
    if let Some(c) = candidates.iter().find(|c| c.to_lowercase() == lower) {
        return Some(c.clone());
    }
    // Edit distance allowed grows with length: a one-letter typo is close
    // to every one-letter unit, so only case slips count there.
    let limit = match symbol.chars().count() {
        0..=1 => 0,
        2..=3 => 1,
        4..=6 => 2,
        _ => 3,
    };
    candidates
        .iter()
        .map(|c| (strsim::damerau_levenshtein(symbol, c), c))
        .filter(|(d, _)| *d <= limit)
        .min_by_key(|(d, _)| *d)
        .map(|(_, c)| c.clone())
}
