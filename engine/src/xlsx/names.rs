//! Workbook defined names for sheaf quantities.
//!
//! sheaf names are case-sensitive (`T1` and `t1` may both exist); workbook
//! names are not, and must not look like A1 (`T1`, `XFD7`) or R1C1 (`R2C3`)
//! cell references or like function names. The scheme:
//!
//! ```text
//! <kind><mask>_<sheaf name>        q1_T1, q_rho_fad, q3_UA_loss
//! <kind><mask>_<node>_<field>      f_st1_h, f_st1_T, f1_Gas_cp
//! ```
//!
//! - `<kind>` is one lowercase letter: `q` the SI value of a quantity, `f`
//!   the SI value of a field of a state or substance, `i` the value of an
//!   input as shown (in its display unit: the cell a reviewer edits), `r`
//!   the input value the engine used (recorded on the data sheet), `d`
//!   whether that input now differs from the recorded value.
//! - `<mask>` records which letters of the sheaf name are upper case: bit k
//!   (least significant first) is set when the k-th letter is upper case,
//!   written in lowercase hexadecimal without leading zeros, and omitted
//!   when no letter is upper case. `T1` -> `q1_T1`, `t1` -> `q_t1`,
//!   `UA_loss` -> `q3_UA_loss`. Two names that differ only in case thus
//!   get different masks, and names that differ otherwise differ after the
//!   first `_`: the mapping is one-to-one under case-insensitive comparison.
//! - The kind letter, optional hex digits and the `_` that always follows
//!   make every name contain an underscore, so no name is an A1 or R1C1
//!   reference. Spreadsheets also refuse names that merely *start* like an
//!   R1C1 reference (`R1x`, `C2x`, `RC3x`): no kind letter is `r` or `c`.
//!   No spreadsheet function name has the form letter-hex-underscore.
//! - Field names (`T p h u s v rho cp cv k x R`) are distinct ignoring
//!   case, and the field is the text after the last `_`.
//!
//! Other names the package defines: `ng_<gas>_<lo|hi>_a<k>`, `ng_<gas>_R`,
//! `ng_<gas>_hoff` (ideal-gas polynomial data) and `sheaf_*` (package
//! information); none starts with a single letter followed by `_` or a hex
//! digit run and `_`, so they cannot collide with the scheme above.

/// What a name refers to.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum NameKind {
    /// SI value of a quantity.
    Quantity,
    /// SI value of a field of a state or substance.
    Field,
    /// Input value in its display unit (the editable cell).
    Input,
    /// Input value the engine used, display unit (data sheet).
    Recorded,
    /// Whether an input differs from the recorded value (data sheet).
    Differs,
}

impl NameKind {
    fn letter(self) -> char {
        match self {
            NameKind::Quantity => 'q',
            NameKind::Field => 'f',
            NameKind::Input => 'i',
            NameKind::Recorded => 'u',
            NameKind::Differs => 'd',
        }
    }

    fn from_letter(c: char) -> Option<NameKind> {
        Some(match c {
            'q' => NameKind::Quantity,
            'f' => NameKind::Field,
            'i' => NameKind::Input,
            'u' => NameKind::Recorded,
            'd' => NameKind::Differs,
            _ => return None,
        })
    }
}

/// Hex mask of the upper-case letters of `name` ("" when there are none).
fn case_mask(name: &str) -> String {
    let bits: Vec<bool> = name
        .chars()
        .filter(|c| c.is_alphabetic())
        .map(char::is_uppercase)
        .collect();
    // Nibbles, most significant first.
    let mut digits = Vec::new();
    for chunk in bits.chunks(4) {
        let mut v = 0u32;
        for (k, b) in chunk.iter().enumerate() {
            if *b {
                v |= 1 << k;
            }
        }
        digits.push(v);
    }
    while digits.last() == Some(&0) {
        digits.pop();
    }
    digits
        .iter()
        .rev()
        .filter_map(|d| char::from_digit(*d, 16))
        .collect()
}

/// Apply a hex mask to a name compared case-insensitively.
fn apply_mask(mask: &str, name: &str) -> Option<String> {
    let mut bits = Vec::new();
    for c in mask.chars().rev() {
        let d = c.to_digit(16)?;
        for k in 0..4 {
            bits.push(d & (1 << k) != 0);
        }
    }
    let mut k = 0;
    let mut out = String::with_capacity(name.len());
    for c in name.chars() {
        if c.is_alphabetic() {
            if bits.get(k).copied().unwrap_or(false) {
                out.extend(c.to_uppercase());
            } else {
                out.extend(c.to_lowercase());
            }
            k += 1;
        } else {
            out.push(c);
        }
    }
    // Bits beyond the letters would mean a mask that this scheme never writes.
    if bits.iter().skip(k).any(|b| *b) {
        return None;
    }
    Some(out)
}

/// The defined name of a quantity or input (`kind` other than `Field`).
pub fn name_of(kind: NameKind, sheaf_name: &str) -> String {
    format!("{}{}_{sheaf_name}", kind.letter(), case_mask(sheaf_name))
}

/// The defined name of a field of a state or substance node.
pub fn field_name(node: &str, field: &str) -> String {
    format!("f{}_{node}_{field}", case_mask(node))
}

/// Decode a defined name of the scheme: (kind, sheaf name, field).
/// Returns `None` for names not of the scheme.
pub fn decode(defined: &str) -> Option<(NameKind, String, Option<String>)> {
    let mut chars = defined.chars();
    let kind = NameKind::from_letter(chars.next()?.to_ascii_lowercase())?;
    let rest = chars.as_str();
    let (mask, name) = rest.split_once('_')?;
    if !mask.chars().all(|c| c.is_ascii_hexdigit()) || name.is_empty() {
        return None;
    }
    match kind {
        NameKind::Field => {
            let (node, field) = name.rsplit_once('_')?;
            Some((kind, apply_mask(mask, node)?, Some(field.to_string())))
        }
        _ => Some((kind, apply_mask(mask, name)?, None)),
    }
}

/// Whether a text looks like an A1 (`T1`, `xfd1048576`) or R1C1 (`R2C3`,
/// `R`, `C`, `RC`, `R1`) reference, compared case-insensitively.
pub fn looks_like_cell_ref(s: &str) -> bool {
    let u = s.to_ascii_uppercase();
    let letters = u.chars().take_while(char::is_ascii_alphabetic).count();
    let digits = &u[letters..];
    if (1..=3).contains(&letters)
        && !digits.is_empty()
        && digits.chars().all(|c| c.is_ascii_digit())
    {
        return true;
    }
    // Names that start like an R1C1 reference (R1..., C1..., RC1...) are
    // refused by spreadsheets too.
    for p in ["RC", "R", "C"] {
        if let Some(rest) = u.strip_prefix(p)
            && rest.starts_with(|c: char| c.is_ascii_digit() && c != '0')
        {
            return true;
        }
    }
    // R1C1: R[digits]C[digits], or R[digits], or C[digits].
    let r1c1 = |t: &str| -> bool {
        let t = match t.strip_prefix('R') {
            Some(rest) => rest.trim_start_matches(|c: char| c.is_ascii_digit()),
            None => t,
        };
        let t = match t.strip_prefix('C') {
            Some(rest) => rest.trim_start_matches(|c: char| c.is_ascii_digit()),
            None => return t.is_empty() && u.starts_with('R'),
        };
        t.is_empty()
    };
    r1c1(&u)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn examples() {
        assert_eq!(name_of(NameKind::Quantity, "T1"), "q1_T1");
        assert_eq!(name_of(NameKind::Quantity, "t1"), "q_t1");
        assert_eq!(name_of(NameKind::Quantity, "UA_loss"), "q3_UA_loss");
        assert_eq!(name_of(NameKind::Input, "p_high"), "i_p_high");
        assert_eq!(field_name("st1", "h"), "f_st1_h");
        assert_eq!(field_name("St", "T"), "f1_St_T");
        // 5 letters, the 5th upper case: bit 4 -> 0x10.
        assert_eq!(name_of(NameKind::Quantity, "abcdE"), "q10_abcdE");
    }

    #[test]
    fn case_variants_do_not_collide() {
        let names = [
            "T1", "t1", "Tt", "tT", "TT", "tt", "T_1", "t_1", "x", "X", "xY_z", "Xy_Z",
        ];
        let mut seen = std::collections::HashSet::new();
        for n in names {
            for kind in [NameKind::Quantity, NameKind::Input] {
                let d = name_of(kind, n);
                assert!(
                    seen.insert(d.to_ascii_lowercase()),
                    "collision for {n}: {d}"
                );
            }
            let f = field_name(n, "h");
            assert!(seen.insert(f.to_ascii_lowercase()), "collision for {n}.h");
        }
    }

    #[test]
    fn never_a_cell_reference() {
        assert!(looks_like_cell_ref("T1"));
        assert!(looks_like_cell_ref("p2"));
        assert!(looks_like_cell_ref("R2C3"));
        assert!(looks_like_cell_ref("rc"));
        assert!(looks_like_cell_ref("R"));
        assert!(looks_like_cell_ref("XFD7"));
        assert!(looks_like_cell_ref("r1_x"));
        assert!(looks_like_cell_ref("c12abc"));
        assert!(!looks_like_cell_ref("T_in"));
        let masks = [
            "x",
            "X",
            "aX",
            "abcdefghijklmnopqrstuvwxyZ",
            "ABCDEFGH",
            "T1",
            "R2C3",
            "C",
            "R",
            "A1",
            "XFD1048576",
            "p2",
            "rc1",
        ];
        for n in masks {
            for kind in [
                NameKind::Quantity,
                NameKind::Field,
                NameKind::Input,
                NameKind::Recorded,
                NameKind::Differs,
            ] {
                let d = if kind == NameKind::Field {
                    field_name(n, "T")
                } else {
                    name_of(kind, n)
                };
                assert!(!looks_like_cell_ref(&d), "{d}");
                assert!(d.contains('_'));
            }
        }
    }

    #[test]
    fn decode_round_trip() {
        for n in [
            "T1",
            "t1",
            "UA_loss",
            "rho_fad",
            "abcdefghijK",
            "X_Y_Z_w",
            "a__b",
        ] {
            for kind in [NameKind::Quantity, NameKind::Input, NameKind::Recorded] {
                let d = name_of(kind, n);
                assert_eq!(decode(&d), Some((kind, n.to_string(), None)));
                // Case-insensitive spreadsheets may change the case of the name.
                assert_eq!(
                    decode(&d.to_ascii_uppercase()).map(|x| x.1),
                    Some(n.to_string())
                );
            }
            assert_eq!(
                decode(&field_name(n, "rho")),
                Some((NameKind::Field, n.to_string(), Some("rho".into())))
            );
        }
        assert_eq!(decode("sheaf_source_sha256"), None);
        assert_eq!(decode("ng_air_R"), None);
        assert_eq!(decode("Sales"), None);
    }
}
