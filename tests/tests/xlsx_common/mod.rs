//! Helpers shared by the xlsx tests: writing packages of worksheets,
//! reading cells back, editing a cell inside the zip.
#![allow(dead_code)]

use std::collections::HashMap;
use std::io::{Read, Write};
use std::path::{Path, PathBuf};

use calamine::{Data, Reader, Xlsx, open_workbook};
use sheaf_engine::Model;
use sheaf_engine::eval::Value;
use sheaf_engine::report::substance_fields;
use sheaf_engine::thermo::Field;
use sheaf_engine::xlsx::names::{self, NameKind};
use sheaf_engine::xlsx::{PackageInfo, reader, sha256_hex, write_package};

pub fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("..")
}

/// Every example worksheet and the xlsx test worksheets.
pub fn worksheets() -> Vec<PathBuf> {
    let mut v = Vec::new();
    for dir in [root().join("worksheets"), root().join("tests/data")] {
        if let Ok(rd) = std::fs::read_dir(&dir) {
            for e in rd.flatten() {
                let p = e.path();
                let is_sheaf = p.extension().is_some_and(|x| x == "sheaf");
                let in_data = dir.ends_with("data");
                let name = p
                    .file_name()
                    .map(|n| n.to_string_lossy().into_owned())
                    .unwrap_or_default();
                if is_sheaf && (!in_data || name.starts_with("xlsx_")) {
                    v.push(p);
                }
            }
        }
    }
    v.sort();
    v
}

pub fn tmp_dir(tag: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("sheaf-{tag}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// The external inputs of a worksheet's `use` statements, read relative
/// to its folder (recursively), as the CLI reads them.
pub fn used_externals(dir: &Path, parsed: &sheaf_engine::Parsed) -> sheaf_engine::Externals {
    let mut ext = sheaf_engine::Externals::none();
    for req in parsed.use_requests() {
        let path = dir.join(&req.path);
        let got = std::fs::read_to_string(&path)
            .map_err(|e| format!("{}: {e}", path.display()))
            .map(|text| {
                let sub = sheaf_engine::Parsed::new(text.clone())
                    .map(|p| used_externals(path.parent().unwrap(), &p))
                    .unwrap_or_default();
                sheaf_engine::UsedSource {
                    name: req.path.clone(),
                    path: path.display().to_string(),
                    text,
                    externals: sub,
                }
            });
        ext.set_used(&req.path, got);
    }
    ext
}

/// A worksheet file checked with the worksheets it uses.
pub fn model_of(path: &Path) -> Result<Model, Vec<sheaf_engine::Diagnostic>> {
    let src = std::fs::read_to_string(path).unwrap();
    let parsed = sheaf_engine::Parsed::new(src)?;
    let ext = used_externals(path.parent().unwrap(), &parsed);
    parsed.check(&ext)
}

pub fn load(path: &Path) -> (String, Model) {
    let src = std::fs::read_to_string(path).unwrap();
    let mut m = model_of(path).unwrap_or_else(|d| panic!("{}: {d:#?}", path.display()));
    m.evaluate();
    assert!(
        m.runtime_errors().is_empty(),
        "{}: {:?}",
        path.display(),
        m.runtime_errors()
    );
    (src, m)
}

pub fn write(path: &Path, src: &str, m: &Model, out: &Path) {
    let info = PackageInfo {
        source_name: path.file_name().unwrap().to_string_lossy().into_owned(),
        source_sha256: sha256_hex(src.as_bytes()),
        tool_version: "test".into(),
        date: "2026-01-01".into(),
    };
    std::fs::write(out, write_package(m, &info).unwrap()).unwrap();
}

/// The engine's SI value behind a defined name of the scheme.
pub fn engine_value(m: &Model, defined: &str) -> Option<f64> {
    match names::decode(defined)? {
        (NameKind::Quantity, n, None) => m.number(&n),
        (NameKind::Field, n, Some(f)) => match m.value(m.node_index(&n)?) {
            Value::State(sv) => sv.st.get(Field::from_name(&f)?),
            Value::Substance(s) => substance_fields(s)
                .into_iter()
                .find(|x| x.0 == f)
                .map(|x| x.2),
            _ => None,
        },
        _ => None,
    }
}

/// Defined names with their cells, values (cached or recalculated) and
/// formula text.
pub struct Book {
    pub names: Vec<(String, reader::CellPos)>,
    pub values: HashMap<(String, u32, u32), Data>,
    pub formulas: HashMap<(String, u32, u32), String>,
}

impl Book {
    pub fn read(path: &Path) -> Book {
        let mut wb: Xlsx<_> = open_workbook(path).unwrap();
        let names = wb
            .defined_names()
            .iter()
            .filter_map(|(n, t)| reader::parse_sheet_ref(t).map(|p| (n.clone(), p)))
            .collect();
        let mut values = HashMap::new();
        let mut formulas = HashMap::new();
        for sheet in wb.sheet_names() {
            let r = wb.worksheet_range(&sheet).unwrap();
            for (row, col, v) in r.used_cells() {
                let (r0, c0) = r.start().unwrap();
                values.insert((sheet.clone(), r0 + row as u32, c0 + col as u32), v.clone());
            }
            let f = wb.worksheet_formula(&sheet).unwrap();
            for (row, col, v) in f.used_cells() {
                let (r0, c0) = f.start().unwrap();
                formulas.insert((sheet.clone(), r0 + row as u32, c0 + col as u32), v.clone());
            }
        }
        Book {
            names,
            values,
            formulas,
        }
    }

    pub fn pos(&self, name: &str) -> &reader::CellPos {
        &self.names.iter().find(|(n, _)| n == name).unwrap().1
    }

    pub fn value(&self, p: &reader::CellPos) -> Option<&Data> {
        self.values.get(&(p.sheet.clone(), p.row, p.col))
    }

    pub fn number(&self, p: &reader::CellPos) -> Option<f64> {
        match self.value(p)? {
            Data::Float(x) => Some(*x),
            Data::Int(i) => Some(*i as f64),
            _ => None,
        }
    }

    pub fn text(&self, p: &reader::CellPos) -> Option<String> {
        match self.value(p)? {
            Data::String(s) => Some(s.clone()),
            _ => None,
        }
    }

    pub fn formula(&self, p: &reader::CellPos) -> Option<&String> {
        self.formulas.get(&(p.sheet.clone(), p.row, p.col))
    }

    /// How the value behind a defined name is obtained: "input",
    /// "formula" or "engine". Calculation-sheet rows say it in their Basis
    /// column (two right of the SI cell); the state fields on the data
    /// sheet are formulas or plain engine numbers.
    pub fn basis(&self, name: &str) -> String {
        let p = self.pos(name);
        if p.sheet == "Data" {
            return if self.formula(p).is_some() {
                "formula".into()
            } else {
                "engine".into()
            };
        }
        self.text(&Book::at(p, 2)).unwrap_or_default()
    }

    /// The stale flag cell of a defined name's row (calculation sheet:
    /// three right of the SI cell; data-sheet state table: column N).
    pub fn flag_pos(&self, name: &str) -> reader::CellPos {
        let p = self.pos(name);
        if p.sheet == "Data" {
            reader::CellPos {
                sheet: p.sheet.clone(),
                row: p.row,
                col: 13,
            }
        } else {
            Book::at(p, 3)
        }
    }

    /// Cell to the right of `p` by `dc` columns.
    pub fn at(p: &reader::CellPos, dc: u32) -> reader::CellPos {
        reader::CellPos {
            sheet: p.sheet.clone(),
            row: p.row,
            col: p.col + dc,
        }
    }
}

/// Relative agreement with an absolute floor for values that are zero by
/// cancellation.
pub fn close(a: f64, b: f64, rel: f64) -> bool {
    (a - b).abs() <= rel * a.abs().max(b.abs()) + 1e-12
}

/// Copy of an xlsx with one number cell of a sheet replaced (edits the
/// sheet XML inside the zip, as a reviewer's spreadsheet would store it).
pub fn edit_number(src: &Path, dst: &Path, sheet_index: usize, cell: &str, value: f64) {
    let f = std::fs::File::open(src).unwrap();
    let mut zin = zip::ZipArchive::new(f).unwrap();
    let out = std::fs::File::create(dst).unwrap();
    let mut zout = zip::ZipWriter::new(out);
    let target = format!("xl/worksheets/sheet{}.xml", sheet_index + 1);
    let opts = zip::write::SimpleFileOptions::default()
        .compression_method(zip::CompressionMethod::Deflated);
    let mut edited = false;
    for k in 0..zin.len() {
        let mut e = zin.by_index(k).unwrap();
        let name = e.name().unwrap().to_string();
        let mut buf = Vec::new();
        e.read_to_end(&mut buf).unwrap();
        if name == target {
            let mut xml = String::from_utf8(buf).unwrap();
            let open = format!("<c r=\"{cell}\"");
            let at = xml.find(&open).expect("cell in sheet xml");
            let v0 = at + xml[at..].find("<v>").unwrap() + 3;
            let v1 = v0 + xml[v0..].find("</v>").unwrap();
            xml.replace_range(v0..v1, &format!("{value}"));
            buf = xml.into_bytes();
            edited = true;
        }
        zout.start_file(name, opts).unwrap();
        zout.write_all(&buf).unwrap();
    }
    zout.finish().unwrap();
    assert!(edited);
}
