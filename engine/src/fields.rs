//! The fields of states and substances in one table: name, words for
//! reports, dimension, whether the value is absolute. Which models have a
//! field is the models' business (`ModelKind::has_field`; substance fields
//! in the checker).

use crate::thermo::Field;
use crate::units::Dim;

/// What the language and the reports know about a field.
#[derive(Clone, Copy, Debug)]
pub struct FieldInfo {
    pub field: Field,
    /// Words for reports: "specific enthalpy".
    pub words: &'static str,
    pub dim: Dim,
    /// An absolute value (temperature), not usable as a difference.
    pub absolute: bool,
}

const fn row(field: Field, words: &'static str, dim: Dim) -> FieldInfo {
    FieldInfo {
        field,
        words,
        dim,
        absolute: false,
    }
}

/// Every field, state fields first in report order.
pub static FIELDS: [FieldInfo; 14] = [
    FieldInfo {
        field: Field::T,
        words: "temperature",
        dim: Dim::TEMPERATURE,
        absolute: true,
    },
    row(Field::P, "pressure", Dim::PRESSURE),
    row(Field::H, "specific enthalpy", Dim::SPECIFIC_ENERGY),
    row(Field::U, "specific internal energy", Dim::SPECIFIC_ENERGY),
    row(Field::S, "specific entropy", Dim::SPECIFIC_ENTROPY),
    row(Field::V, "specific volume", Dim::SPECIFIC_VOLUME),
    row(Field::Rho, "density", Dim::DENSITY),
    row(Field::Cp, "isobaric specific heat", Dim::SPECIFIC_ENTROPY),
    row(Field::Cv, "isochoric specific heat", Dim::SPECIFIC_ENTROPY),
    // For a real fluid cp/cv is not the isentropic exponent; the
    // README and `sheaf functions` say so.
    row(Field::K, "ratio of specific heats cp/cv", Dim::NONE),
    row(Field::X, "vapour quality", Dim::NONE),
    row(Field::W, "speed of sound", Dim::VELOCITY),
    row(Field::M, "molar mass", Dim::MOLAR_MASS),
    row(Field::R, "specific gas constant", Dim::SPECIFIC_ENTROPY),
];

/// The table row of a field.
pub fn info(f: Field) -> &'static FieldInfo {
    FIELDS.iter().find(|i| i.field == f).unwrap_or(&FIELDS[0])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_field_has_exactly_one_row() {
        for f in Field::ALL.into_iter().chain(Field::SUBSTANCE) {
            assert_eq!(FIELDS.iter().filter(|i| i.field == f).count(), 1, "{f:?}");
        }
        assert_eq!(FIELDS.len(), Field::ALL.len() + 2);
    }
}
