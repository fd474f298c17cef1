//! Units and dimensions.
//!
//! A [`Dim`] is an exponent vector over the SI base quantities. A [`Unit`]
//! converts a number written in it to coherent SI: `si = value * factor +
//! offset` (offset is non-zero only for degC, degF and gauge pressures).
//! [`Affinity`] tracks absolute vs. difference quantities (DESIGN §3).
//!
//! Interface used by the checker and the CLI:
//! - [`lookup`]: one unit symbol (with SI prefix) -> [`Unit`];
//! - [`resolve`]: a parsed unit expression -> [`Unit`], or a located error
//!   with a suggestion;
//! - [`auto_display`]: coherent SI unit with an engineering prefix for a
//!   dimension and value;
//! - [`quantity_name`]: "pressure", "specific entropy", ... for messages;
//! - [`format_sig`]: significant-figure formatting;
//! - [`catalogue`]: the table, for `sheaf units`.

use std::fmt;
use std::ops::{Div, Mul};

use sheaf_grammar::{Span, UnitExpr};

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

    pub fn is_none(self) -> bool {
        self == Dim::NONE
    }

    /// Raise to an integer power (exponents must stay within i8).
    pub fn powi(self, n: i32) -> Option<Dim> {
        let mut out = [0i8; BASE_COUNT];
        for (o, e) in out.iter_mut().zip(self.0) {
            *o = i8::try_from(i32::from(e).checked_mul(n)?).ok()?;
        }
        Some(Dim(out))
    }

    /// Raise to a rational power `num/den`; `None` if an exponent would not
    /// be an integer.
    pub fn pow_ratio(self, num: i32, den: i32) -> Option<Dim> {
        if den == 0 {
            return None;
        }
        let mut out = [0i8; BASE_COUNT];
        for (o, e) in out.iter_mut().zip(self.0) {
            let m = i32::from(e).checked_mul(num)?;
            if m % den != 0 {
                return None;
            }
            *o = i8::try_from(m / den).ok()?;
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
                e => den.push(format!("{sym}^{}", -e)),
            }
        }
        let n = if num.is_empty() { "1".to_string() } else { num.join(" ") };
        match den.len() {
            0 if num.is_empty() => String::new(),
            0 => n,
            1 => format!("{n}/{}", den[0]),
            _ => format!("{n}/({})", den.join(" ")),
        }
    }
}

impl Mul for Dim {
    type Output = Dim;
    fn mul(self, rhs: Dim) -> Dim {
        let mut out = self.0;
        for (o, e) in out.iter_mut().zip(rhs.0) {
            *o = o.saturating_add(e);
        }
        Dim(out)
    }
}

impl Div for Dim {
    type Output = Dim;
    fn div(self, rhs: Dim) -> Dim {
        let mut out = self.0;
        for (o, e) in out.iter_mut().zip(rhs.0) {
            *o = o.saturating_sub(e);
        }
        Dim(out)
    }
}

impl fmt::Display for Dim {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let s = self.base_symbol();
        if s.is_empty() { f.write_str("1") } else { f.write_str(&s) }
    }
}

/// Absolute vs. difference quantities (temperature, gauge pressure).
///
/// Units with an offset (`degC`, `degF`, `barg`, ...) and `degR` give
/// `Absolute`; `delta_degC`, `delta_degF` give `Difference`; every other
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

/// A unit that could not be resolved, with where and a suggestion.
#[derive(Clone, Debug, PartialEq)]
pub struct UnitError {
    pub span: Span,
    pub message: String,
    /// "did you mean `kPa`?"
    pub suggestion: Option<String>,
}

/// Look up one unit symbol, with an optional SI prefix (`kJ`, `MPa`,
/// `degC`, `°C`, `barg`).
pub fn lookup(_symbol: &str) -> Option<Unit> {
    None
}

/// Resolve a parsed unit expression. An offset unit keeps its offset only
/// when it stands alone; inside a compound (`kJ/(kg degC)`) it acts as its
/// difference unit.
pub fn resolve(u: &UnitExpr) -> Result<Unit, UnitError> {
    Err(UnitError {
        span: u.span,
        message: "units not yet available".into(),
        suggestion: None,
    })
}

/// The coherent SI unit with an engineering prefix for showing `si` of
/// dimension `dim`: returns (value in that unit, unit text).
pub fn auto_display(dim: Dim, si: f64) -> (f64, String) {
    (si, dim.base_symbol())
}

/// The coherent SI unit text for a dimension (`Pa`, `J/kg`, `J/(kg K)`).
pub fn si_unit(dim: Dim) -> String {
    dim.base_symbol()
}

/// Name of the quantity in words, e.g. "pressure"; falls back to
/// "quantity of dimension kg/(m s^2)".
pub fn quantity_name(dim: Dim) -> String {
    format!("quantity of dimension {dim}")
}

/// Format with `sig` significant figures, plain decimal for moderate
/// magnitudes, exponent form otherwise.
pub fn format_sig(v: f64, sig: usize) -> String {
    format!("{v:.sig$}")
}
