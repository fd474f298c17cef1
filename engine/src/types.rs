//! Static types of worksheet values, inferred by the checker before any
//! evaluation.

use crate::thermo::ModelKind;
use crate::units::{self, Affinity, Dim};

/// The type of a number: its dimension and whether it is an absolute value
/// (a temperature or gauge pressure written with an offset unit), a
/// difference, or neutral (usable as either).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct QuantityType {
    pub dim: Dim,
    pub aff: Affinity,
}

impl QuantityType {
    pub const DIMENSIONLESS: QuantityType = QuantityType {
        dim: Dim::NONE,
        aff: Affinity::Neutral,
    };
    pub fn neutral(dim: Dim) -> QuantityType {
        QuantityType {
            dim,
            aff: Affinity::Neutral,
        }
    }
    pub fn absolute(dim: Dim) -> QuantityType {
        QuantityType {
            dim,
            aff: Affinity::Absolute,
        }
    }

    /// One is absolute and the other a difference (a neutral value agrees
    /// with either): such values cannot be compared, set or bracketed
    /// together.
    pub fn kinds_clash(self, other: QuantityType) -> bool {
        matches!(
            (self.aff, other.aff),
            (Affinity::Absolute, Affinity::Difference) | (Affinity::Difference, Affinity::Absolute)
        )
    }

    /// A value of type `got` may stand where `self` is wanted: same
    /// dimension, no absolute/difference clash.
    pub fn accepts(self, got: QuantityType) -> bool {
        self.dim == got.dim && !self.kinds_clash(got)
    }
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Ty {
    Num(QuantityType),
    Bool,
    Str,
    Substance(ModelKind),
    State(ModelKind),
    /// A saturated pair of a real fluid (`saturation(...)`): `.T`, `.p`,
    /// `.liquid`, `.vapour`.
    Saturation,
    /// The type of something that failed to check; suppresses follow-on
    /// errors.
    Error,
}

impl Ty {
    pub fn num(dim: Dim) -> Ty {
        Ty::Num(QuantityType::neutral(dim))
    }

    /// Words for messages: "pressure (Pa)", "an absolute temperature (K)",
    /// "a state of ideal gas".
    pub fn describe(&self) -> String {
        match self {
            Ty::Num(q) => describe_qty(*q),
            Ty::Bool => "a true/false value".into(),
            Ty::Str => "a string".into(),
            Ty::Substance(k) => format!("a substance ({})", k.describe()),
            Ty::State(k) => format!("a state of {}", k.describe()),
            Ty::Saturation => "a saturated pair (liquid and vapour)".into(),
            Ty::Error => "an erroneous value".into(),
        }
    }
}

/// "pressure (Pa)", "temperature difference (K)", "dimensionless number".
pub fn describe_qty(q: QuantityType) -> String {
    if q.dim.is_none() {
        return "a dimensionless number".into();
    }
    let name = units::quantity_name(q.dim);
    let unit = units::si_unit(q.dim);
    let qual = match q.aff {
        Affinity::Neutral => "",
        Affinity::Absolute => "absolute ",
        Affinity::Difference => "",
    };
    let suffix = match q.aff {
        Affinity::Difference => " difference",
        _ => "",
    };
    format!("{qual}{name}{suffix} ({unit})")
}
