//! Quantity names, coherent SI unit text and engineering prefixes.

use super::Dim;
use super::table::scale_pow10;

/// A named dimension: words for messages, coherent SI text, and whether
/// an engineering prefix may be put on the first atom of that text.
struct Known {
    dim: Dim,
    name: &'static str,
    si: &'static str,
    prefix: bool,
}

const fn k(d: [i8; 7], name: &'static str, si: &'static str, prefix: bool) -> Known {
    Known {
        dim: Dim(d),
        name,
        si,
        prefix,
    }
}

/// Exponents over (m, kg, s, K, mol, A, cd). Every `si` text is spelled
/// with table symbols so that it resolves back to the same dimension.
/// No prefixes on K, s, kg (so kg/s and kg/mol stay), on atoms raised to a
/// power (`m^2` would scale by 10^6 per step), on velocities and
/// accelerations (engineers write 0.85 m/s, not 850 mm/s), on densities,
/// specific volumes or dimensionless numbers.
const KNOWN: &[Known] = &[
    k([0, 0, 0, 0, 0, 0, 0], "dimensionless", "", false),
    k([1, 0, 0, 0, 0, 0, 0], "length", "m", true),
    k([2, 0, 0, 0, 0, 0, 0], "area", "m^2", false),
    k([3, 0, 0, 0, 0, 0, 0], "volume", "m^3", false),
    k([0, 1, 0, 0, 0, 0, 0], "mass", "kg", false),
    k([0, 0, 1, 0, 0, 0, 0], "time", "s", false),
    k([0, 0, 0, 1, 0, 0, 0], "temperature", "K", false),
    k([0, 0, 0, 0, 1, 0, 0], "amount of substance", "mol", true),
    k([1, 0, -1, 0, 0, 0, 0], "velocity", "m/s", false),
    k([1, 0, -2, 0, 0, 0, 0], "acceleration", "m/s^2", false),
    k([1, 1, -2, 0, 0, 0, 0], "force", "N", true),
    k([-1, 1, -2, 0, 0, 0, 0], "pressure", "Pa", true),
    k([2, 1, -2, 0, 0, 0, 0], "energy", "J", true),
    k([2, 1, -3, 0, 0, 0, 0], "power", "W", true),
    k([2, 0, -2, 0, 0, 0, 0], "specific energy", "J/kg", true),
    k(
        [2, 0, -2, -1, 0, 0, 0],
        "specific entropy or heat capacity",
        "J/(kg K)",
        true,
    ),
    k([2, 1, -2, -1, 0, 0, 0], "entropy", "J/K", true),
    k([2, 1, -3, -1, 0, 0, 0], "entropy rate", "W/K", true),
    k([3, -1, 0, 0, 0, 0, 0], "specific volume", "m^3/kg", false),
    k([-3, 1, 0, 0, 0, 0, 0], "density", "kg/m^3", false),
    k([0, 1, -1, 0, 0, 0, 0], "mass flow rate", "kg/s", false),
    k([3, 0, -1, 0, 0, 0, 0], "volume flow rate", "m^3/s", false),
    k([0, 0, -1, 0, 0, 0, 0], "frequency", "1/s", false),
    k([0, 1, 0, 0, -1, 0, 0], "molar mass", "kg/mol", false),
    k([2, 1, -2, -1, -1, 0, 0], "molar entropy", "J/(mol K)", true),
    k([2, 1, -2, 0, -1, 0, 0], "molar energy", "J/mol", true),
    k([3, 0, 0, 0, -1, 0, 0], "molar volume", "m^3/mol", false),
    k([0, 0, -1, 0, 1, 0, 0], "molar flow rate", "mol/s", true),
    k([0, 1, -3, 0, 0, 0, 0], "heat flux", "W/m^2", true),
    k(
        [0, 1, -3, -1, 0, 0, 0],
        "heat transfer coefficient",
        "W/(m^2 K)",
        true,
    ),
    k(
        [1, 1, -3, -1, 0, 0, 0],
        "thermal conductivity",
        "W/(m K)",
        true,
    ),
    k([-1, 1, -1, 0, 0, 0, 0], "dynamic viscosity", "Pa s", true),
    k(
        [2, 0, -1, 0, 0, 0, 0],
        "kinematic viscosity",
        "m^2/s",
        false,
    ),
    k([0, 0, 0, 0, 0, 1, 0], "electric current", "A", true),
    k([0, 0, 0, 0, 0, 0, 1], "luminous intensity", "cd", false),
];

fn known(dim: Dim) -> Option<&'static Known> {
    KNOWN.iter().find(|q| q.dim == dim)
}

/// Name of the quantity in words, e.g. "pressure"; falls back to
/// "quantity of dimension kg/(m s^2)".
pub fn quantity_name(dim: Dim) -> String {
    match known(dim) {
        Some(q) => q.name.to_string(),
        None => format!("quantity of dimension {dim}"),
    }
}

/// The coherent SI unit text for a dimension (`Pa`, `J/kg`, `J/(kg K)`);
/// "" for a dimensionless quantity; otherwise built from base symbols.
pub fn si_unit(dim: Dim) -> String {
    match known(dim) {
        Some(q) => q.si.to_string(),
        None => dim.base_symbol(),
    }
}

/// Engineering prefixes used for display, steps of 10^3 from micro to giga.
const DISPLAY_PREFIXES: [&str; 6] = ["\u{b5}", "m", "", "k", "M", "G"];
/// Index of the unprefixed entry in [`DISPLAY_PREFIXES`].
const UNPREFIXED: i32 = 2;

/// The coherent SI unit with an engineering prefix for showing `si` of
/// dimension `dim`: returns (value in that unit, unit text), with
/// 1 <= |value| < 1000 where the prefix range allows. Zero, non-finite
/// values and dimensions that take no prefix stay unprefixed.
pub fn auto_display(dim: Dim, si: f64) -> (f64, String) {
    let Some(q) = known(dim) else {
        return (si, dim.base_symbol());
    };
    if !q.prefix || si == 0.0 || !si.is_finite() {
        return (si, q.si.to_string());
    }
    let lo = -UNPREFIXED;
    let hi = DISPLAY_PREFIXES.len() as i32 - 1 - UNPREFIXED;
    let a = si.abs();
    let mut step = ((a.log10() / 3.0).floor() as i32).clamp(lo, hi);
    // log10 can land a hair off at exact powers of ten: settle on the
    // actual quotient.
    let value_at = |s: i32| scale_pow10(si, -3 * s);
    while step < hi && value_at(step).abs() >= 1000.0 {
        step += 1;
    }
    while step > lo && value_at(step).abs() < 1.0 {
        step -= 1;
    }
    let idx = usize::try_from(step + UNPREFIXED).unwrap_or(0);
    let prefix = DISPLAY_PREFIXES.get(idx).copied().unwrap_or("");
    (value_at(step), format!("{prefix}{}", q.si))
}

/// Every dimension that has a name.
#[cfg(test)]
pub(crate) fn known_dims() -> impl Iterator<Item = Dim> {
    KNOWN.iter().map(|q| q.dim)
}

/// How a node's value is shown.
#[derive(Clone, Debug, PartialEq)]
pub enum DisplayUnit {
    /// A unit fixed by an annotation or an input literal; `text` as written.
    Fixed { unit: super::Unit, text: String },
    /// Coherent SI with an engineering prefix chosen from the value.
    Auto,
}
