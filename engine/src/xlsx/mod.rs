//! The xlsx calculation package: writer (rust_xlsxwriter), formula
//! compiler, reader (bounded, from bytes) for `cell()` and `pull`, and the rewriting
//! of input literals for `pull --write`.
//!
//! Layout, name scheme and what is live are described in DEVELOPERS.md
//! ("xlsx package") and in [`names`].

mod calc_sheet;
mod cover;
mod data_sheet;
pub mod formula;
pub mod names;
mod plan;
mod pull;
pub mod reader;
mod style;
mod whatif_sheets;
mod writer;

use sha2::{Digest, Sha256};
use sheaf_grammar::{Span, StatementKind};

use crate::check::{DisplayUnit, NodeKind};
use crate::model::Model;
use crate::types::Ty;

pub use pull::{Change, TypedOver, literal_text, pull_changes, rewrite_inputs, typed_over};
pub use reader::{CellError, Limits, Reviewed, ReviewedInput, read_cells, read_inputs};
pub use writer::write_package;

/// Defined names of the package information cells (data sheet).
pub const NAME_SHA: &str = "sheaf_source_sha256";
pub const NAME_SOURCE: &str = "sheaf_source_name";
pub const NAME_VERSION: &str = "sheaf_version";

/// Errors of writing or reading workbooks, worded for the user (the CLI
/// names the file).
#[derive(Debug, thiserror::Error)]
pub enum XlsxError {
    #[error("cannot write {path}: {message}")]
    Write { path: String, message: String },
    /// The workbook as a whole cannot be read (not an xlsx, or beyond the
    /// reading limits).
    #[error("{0}")]
    Book(String),
    /// A cell or defined name the reader was asked for.
    #[error("cell {cell}: {message}")]
    Cell { cell: String, message: String },
}

impl From<XlsxError> for String {
    fn from(e: XlsxError) -> String {
        e.to_string()
    }
}

/// What the cover and data sheet say about the package.
#[derive(Clone, Debug, PartialEq)]
pub struct PackageInfo {
    /// The worksheet's file name as given.
    pub source_name: String,
    /// sha256 of the worksheet text, lowercase hex ([`sha256_hex`]).
    pub source_sha256: String,
    pub tool_version: String,
    /// Date of writing, e.g. "2026-12-01".
    pub date: String,
}

/// sha256 of bytes, lowercase hex.
pub fn sha256_hex(bytes: &[u8]) -> String {
    let d = Sha256::digest(bytes);
    d.iter().map(|b| format!("{b:02x}")).collect()
}

/// How a number is shown: `shown = (si - offset) / factor`.
#[derive(Clone, Debug, PartialEq)]
pub struct Shown {
    pub value: f64,
    pub factor: f64,
    pub offset: f64,
    pub unit: String,
}

/// Shown value of an SI number under a display unit (automatic units: the
/// engineering prefix chosen for this value).
pub fn shown(display: &DisplayUnit, dim: crate::units::Dim, si: f64) -> Shown {
    match display {
        DisplayUnit::Fixed { unit, text } => Shown {
            value: unit.from_si(si),
            factor: unit.factor,
            offset: unit.offset,
            unit: text.clone(),
        },
        DisplayUnit::Auto => {
            let (v, u) = crate::units::auto_display(dim, si);
            let factor = if v != 0.0 && si != 0.0 && v.is_finite() {
                10f64.powi((si / v).log10().round() as i32)
            } else {
                1.0
            };
            Shown {
                value: v,
                factor,
                offset: 0.0,
                unit: u,
            }
        }
    }
}

/// An input as shown in the package: its value in its display unit and
/// the conversion, and the literal span when the input is a plain literal
/// in that unit (the value then is the literal as written).
pub fn input_shown(model: &Model, node: usize) -> Option<(Shown, Option<Span>)> {
    let n = model.nodes().get(node)?;
    let Ty::Num(q) = n.ty else { return None };
    if n.kind != NodeKind::Input {
        return None;
    }
    let si = model.value(node).as_num()?;
    let mut sh = shown(&n.display, q.dim, si);
    let stmt = model.worksheet().statements.get(n.stmt)?;
    let StatementKind::Input { value, .. } = &stmt.kind else {
        return Some((sh, None));
    };
    let src = model.source();
    if let Some(o) = model.override_of(node) {
        // The value the engine used: the override, in the input's unit
        // (the number as given when it was given in that unit).
        if let Some(v) = number_in_unit(&o.text, &sh.unit) {
            sh.value = v;
        }
        let span = crate::report::input_literal(value, src).map(|(span, _, _)| span);
        return Some((sh, span));
    }
    let lit = crate::report::input_literal(value, src).and_then(|(span, v, unit)| {
        let same_unit = match (&n.display, unit) {
            (DisplayUnit::Fixed { text, .. }, Some(u)) => {
                crate::check::normalise_unit_text(u.span.slice(src)) == *text
            }
            (DisplayUnit::Auto, None) => sh.factor == 1.0 && sh.offset == 0.0,
            _ => false,
        };
        same_unit.then_some((span, v))
    });
    // The literal's digits as written, unless the value is not the
    // worksheet's own (set by --set or a case, or solved by a find).
    let own = model.override_of(node).is_none() && model.find_of(node).is_none();
    match lit {
        Some((span, v)) => {
            if own {
                sh.value = v;
            }
            Some((sh, Some(span)))
        }
        None => Some((sh, None)),
    }
}

/// The number of `text` ("5 barg") when it is a plain number followed by
/// exactly `unit` (or no unit when `unit` is empty).
fn number_in_unit(text: &str, unit: &str) -> Option<f64> {
    let t = text.trim();
    let end = t
        .find(|c: char| !(c.is_ascii_digit() || matches!(c, '.' | '-' | '+' | 'e' | 'E')))
        .unwrap_or(t.len());
    let (num, rest) = t.split_at(end);
    let v: f64 = num.parse().ok()?;
    (crate::check::normalise_unit_text(rest) == unit && v.is_finite()).then_some(v)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rewrite_keeps_every_other_byte() {
        let src = "# t\n// keep   this\ninput p = 8.5 barg   \"x\"\ninput  q=(2 m) // c\ninput n = -3 K\ny = p * 2\n";
        let mut m = Model::new(src).unwrap();
        m.evaluate();
        let reviewed = Reviewed {
            source_name: None,
            source_sha256: None,
            tool_version: None,
            inputs: vec![
                ReviewedInput {
                    name: "p".into(),
                    value: 9.25,
                    cell: "C1".into(),
                    unit: None,
                },
                ReviewedInput {
                    name: "q".into(),
                    value: 2.0,
                    cell: "C2".into(),
                    unit: None,
                },
                ReviewedInput {
                    name: "n".into(),
                    value: 4.0,
                    cell: "C3".into(),
                    unit: None,
                },
            ],
        };
        let ch = pull_changes(&m, &reviewed);
        assert_eq!(ch.len(), 2, "{ch:?}");
        assert_eq!(ch[0].old, 8.5);
        assert_eq!(ch[0].unit, "barg");
        let out = rewrite_inputs(src, &ch);
        assert_eq!(
            out,
            "# t\n// keep   this\ninput p = 9.25 barg   \"x\"\ninput  q=(2 m) // c\ninput n = 4 K\ny = p * 2\n"
        );
        // Gauge: new SI value 9.25 bar + 1 atm.
        assert!((ch[0].new_si - (9.25e5 + 101_325.0)).abs() < 1e-6);
    }

    #[test]
    fn inputs_that_are_not_literals_are_not_rewritten() {
        let src = "input a = 2 * 3 m\n";
        let mut m = Model::new(src).unwrap();
        m.evaluate();
        let (sh, lit) = input_shown(&m, 0).unwrap();
        assert_eq!(lit, None);
        assert_eq!(sh.value, 6.0);
        let ch = Change {
            name: "a".into(),
            old: 6.0,
            new: 7.0,
            unit: "m".into(),
            new_si: 7.0,
            cell: "C1".into(),
            literal: None,
            note: None,
        };
        assert_eq!(rewrite_inputs(src, &[ch]), src);
    }

    #[test]
    fn a_changed_unit_is_converted_or_refused() {
        let src = "input p = 120 barg\ninput L = 2 m\n";
        let mut m = Model::new(src).unwrap();
        m.evaluate();
        let input = |name: &str, value: f64, unit: &str| ReviewedInput {
            name: name.into(),
            value,
            cell: "C1".into(),
            unit: Some(unit.into()),
        };
        let reviewed = Reviewed {
            source_name: None,
            source_sha256: None,
            tool_version: None,
            inputs: vec![input("p", 120.0, "psig"), input("L", 2.0, "kg")],
        };
        let ch = pull_changes(&m, &reviewed);
        assert_eq!(ch.len(), 2, "{ch:?}");
        // 120 psig = 120 x 6894.757 Pa (NIST SP 811 B.8) above 1 atm =
        // 8.273708 bar above 1 atm: written as barg, and said so.
        assert!((ch[0].new - 8.273_708).abs() < 1e-5, "{}", ch[0].new);
        assert!(ch[0].literal.is_some());
        assert!(ch[0].note.as_deref().unwrap().contains("psig"));
        // A unit of another quantity: not written.
        assert_eq!(ch[1].literal, None);
        assert!(
            ch[1].note.as_deref().unwrap().contains("not written"),
            "{:?}",
            ch[1].note
        );
        // The same unit: no change at all.
        let same = Reviewed {
            inputs: vec![input("p", 120.0, "barg")],
            ..reviewed
        };
        assert!(pull_changes(&m, &same).is_empty());
    }

    /// The package with cell `cell` of the calculation sheet (the second
    /// sheet part) replaced by a plain number, as a reviewer typing would.
    fn typed(bytes: &[u8], cell: &str, value: &str) -> Vec<u8> {
        use std::io::{Read, Write};
        let mut zin = zip::ZipArchive::new(std::io::Cursor::new(bytes)).unwrap();
        let mut z = zip::ZipWriter::new(std::io::Cursor::new(Vec::new()));
        for i in 0..zin.len() {
            let mut f = zin.by_index(i).unwrap();
            let name = f.name().unwrap().to_string();
            let mut data = Vec::new();
            f.read_to_end(&mut data).unwrap();
            if name == "xl/worksheets/sheet2.xml" {
                let mut x = String::from_utf8(data).unwrap();
                let start = x.find(&format!("<c r=\"{cell}\"")).unwrap();
                let rest = &x[start..];
                let end = match rest.find("/>").filter(|e| !rest[..*e].contains('>')) {
                    Some(e) => start + e + 2,
                    None => start + rest.find("</c>").unwrap() + 4,
                };
                x.replace_range(start..end, &format!("<c r=\"{cell}\"><v>{value}</v></c>"));
                data = x.into_bytes();
            }
            z.start_file(name, zip::write::SimpleFileOptions::default())
                .unwrap();
            z.write_all(&data).unwrap();
        }
        z.finish().unwrap().into_inner()
    }

    #[test]
    fn numbers_typed_over_computed_cells_are_found() {
        let src = "# t\ninput p2 = 2 bar\nwater = fluid(\"water\")\n\
                   T_sat: degC = state(water, p: p2, x: 1).T\n\
                   st1 = state(water, T: 150 degC, p: p2)\nk = p2 * 2\n";
        let mut m = Model::new(src).unwrap();
        m.evaluate();
        let info = PackageInfo {
            source_name: "t.sheaf".into(),
            source_sha256: sha256_hex(src.as_bytes()),
            tool_version: "test".into(),
            date: "2026-01-01".into(),
        };
        let bytes = write_package(&m, &info).unwrap();
        // As written: nothing typed (the engine value's plain number and the
        // input's are the package's own).
        assert_eq!(typed_over(&m, &bytes).unwrap(), (vec![], 0));
        // Written with an override (`--set p2=3 bar`): its engine values are
        // those of 3 bar, and still nothing was typed.
        let mut set = m.clone();
        set.set_input_text("p2", "3 bar").unwrap();
        set.evaluate();
        let set_bytes = write_package(&set, &info).unwrap();
        assert_ne!(set.number("T_sat"), m.number("T_sat"));
        assert_eq!(typed_over(&m, &set_bytes).unwrap(), (vec![], 0));
        let scan = reader::plain_numbers(&bytes, "Calculation").unwrap();
        let pos = |n: &str| {
            scan.names
                .iter()
                .find(|(d, _)| d == n)
                .map(|(_, p)| p.clone())
                .unwrap()
        };
        let a1 = |p: &reader::CellPos| format!("{}{}", reader::col_letters(p.col), p.row + 1);
        let t_sat = pos(&names::name_of(names::NameKind::Quantity, "T_sat"));
        let k = pos(&names::name_of(names::NameKind::Quantity, "k"));
        let input = pos(&names::name_of(names::NameKind::Input, "p2"));
        // The state-table cell of st1's temperature: the first formula on
        // the calculation sheet that refers to f_st1_T.
        let xml = {
            use std::io::Read;
            let mut z = zip::ZipArchive::new(std::io::Cursor::new(&bytes[..])).unwrap();
            let mut x = String::new();
            z.by_name("xl/worksheets/sheet2.xml")
                .unwrap()
                .read_to_string(&mut x)
                .unwrap();
            x
        };
        let f = xml.find("<f>f_st1_T").unwrap();
        let open = xml[..f].rfind("<c r=\"").unwrap() + 6;
        let st_cell = xml[open..open + xml[open..].find('"').unwrap()].to_string();
        // The engine value unchanged is not a warning; changed, it is.
        let si = m.number("T_sat").unwrap();
        let same = typed(&bytes, &a1(&t_sat), &format!("{si}"));
        assert_eq!(typed_over(&m, &same).unwrap().0, vec![]);
        let mut b = typed(&bytes, &a1(&t_sat), "400");
        // Over the shown value of a formula row, over a state-table cell,
        // and (not a warning) a new value in the input cell.
        let k_shown = reader::CellPos {
            col: u32::from(calc_sheet::C_VAL),
            ..k.clone()
        };
        b = typed(&b, &a1(&k_shown), "99");
        b = typed(&b, &st_cell, "151");
        b = typed(&b, &a1(&input), "3");
        let (got, more) = typed_over(&m, &b).unwrap();
        assert_eq!(more, 0);
        let want = |cell: String, value: f64, q: &str| TypedOver {
            cell: format!("Calculation!{cell}"),
            value,
            quantity: Some(q.to_string()),
        };
        // In sheet order (the rows follow the worksheet).
        assert_eq!(
            got,
            vec![
                want(a1(&t_sat), 400.0, "T_sat"),
                want(st_cell, 151.0, "st1.T"),
                want(a1(&k_shown), 99.0, "k"),
            ]
        );
    }

    #[test]
    fn sha256_known_value() {
        // FIPS 180-2 example: sha256("abc").
        assert_eq!(
            sha256_hex(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }
}
