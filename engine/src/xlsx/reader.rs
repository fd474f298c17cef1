//! Reading workbooks (calamine): single cells for the `cell` built-in and
//! the input cells of a reviewed package for `pull`. Cells are streamed
//! sheet by sheet, so memory stays bounded on a large workbook.

use std::collections::HashMap;
use std::fs::File;
use std::io::BufReader;
use std::path::Path;

use calamine::{DataRef, Reader, Xlsx, open_workbook};

use super::XlsxError;
use super::names::{self, NameKind};

/// A cell position: sheet, 0-based row and column.
#[derive(Clone, Debug, PartialEq, Eq, Hash)]
pub struct CellPos {
    pub sheet: String,
    pub row: u32,
    pub col: u32,
}

impl CellPos {
    /// `Sheet!C7` (quoted when needed).
    pub fn a1(&self) -> String {
        let sheet = if self.sheet.chars().all(|c| c.is_alphanumeric() || c == '_') {
            self.sheet.clone()
        } else {
            format!("'{}'", self.sheet.replace('\'', "''"))
        };
        format!("{sheet}!{}{}", col_letters(self.col), self.row + 1)
    }
}

/// Column letters of a 0-based column: 0 -> A, 27 -> AB.
pub fn col_letters(col: u32) -> String {
    let mut c = col + 1;
    let mut out = Vec::new();
    while c > 0 {
        let r = (c - 1) % 26;
        out.push(char::from(b'A' + r as u8));
        c = (c - 1) / 26;
    }
    out.iter().rev().collect()
}

/// Parse `C7` or `$C$7` to a 0-based (row, col).
pub fn parse_a1(s: &str) -> Option<(u32, u32)> {
    let s = s.replace('$', "");
    let letters = s.chars().take_while(char::is_ascii_alphabetic).count();
    if letters == 0 || letters > 3 {
        return None;
    }
    let (l, d) = s.split_at(letters);
    if d.is_empty() || !d.chars().all(|c| c.is_ascii_digit()) {
        return None;
    }
    let mut col: u32 = 0;
    for c in l.chars() {
        col = col * 26 + (c.to_ascii_uppercase() as u32 - 'A' as u32 + 1);
    }
    let row: u32 = d.parse().ok()?;
    if row == 0 || row > 1_048_576 || col > 16_384 {
        return None;
    }
    Some((row - 1, col - 1))
}

/// Parse `Sheet!C7`, `'My sheet'!$C$7`. `None` when it is not of that form.
pub fn parse_sheet_ref(s: &str) -> Option<CellPos> {
    let s = s.trim().trim_start_matches('=');
    let (sheet, cell) = s.rsplit_once('!')?;
    let sheet = match sheet.strip_prefix('\'').and_then(|x| x.strip_suffix('\'')) {
        Some(q) => q.replace("''", "'"),
        None => sheet.to_string(),
    };
    let (row, col) = parse_a1(cell)?;
    Some(CellPos { sheet, row, col })
}

/// A cell's content, as far as sheaf cares.
#[derive(Clone, Debug, PartialEq)]
pub enum CellValue {
    Number(f64),
    Text(String),
    Bool(bool),
    Error(String),
    Empty,
}

fn value_of(d: &DataRef) -> CellValue {
    match d {
        DataRef::Int(i) => CellValue::Number(*i as f64),
        DataRef::Float(x) => CellValue::Number(*x),
        DataRef::String(s) => CellValue::Text(s.clone()),
        DataRef::SharedString(s) => CellValue::Text((*s).to_string()),
        DataRef::Bool(b) => CellValue::Bool(*b),
        DataRef::DateTime(dt) => CellValue::Number(dt.as_f64()),
        DataRef::DateTimeIso(s) | DataRef::DurationIso(s) => CellValue::Text(s.clone()),
        DataRef::Error(e) => CellValue::Error(e.to_string()),
        DataRef::Empty => CellValue::Empty,
    }
}

/// An open workbook.
pub struct Book {
    path: String,
    wb: Xlsx<BufReader<File>>,
}

impl Book {
    pub fn open(path: &Path) -> Result<Book, XlsxError> {
        let shown = path.display().to_string();
        if !path.exists() {
            return Err(XlsxError::Read {
                path: shown,
                message: "no such file".into(),
            });
        }
        let wb: Xlsx<_> = open_workbook(path).map_err(|e| XlsxError::Read {
            path: shown.clone(),
            message: format!("not a readable xlsx workbook ({e})"),
        })?;
        Ok(Book { path: shown, wb })
    }

    pub fn path(&self) -> &str {
        &self.path
    }

    /// Workbook defined names: (name, refers-to text).
    pub fn defined_names(&self) -> &[(String, String)] {
        self.wb.defined_names()
    }

    /// The cell a defined name refers to (case-insensitive lookup).
    pub fn resolve_name(&self, name: &str) -> Result<CellPos, XlsxError> {
        let target = self
            .defined_names()
            .iter()
            .find(|(n, _)| n.eq_ignore_ascii_case(name))
            .map(|(_, t)| t.clone())
            .ok_or_else(|| XlsxError::Cell {
                book: self.path.clone(),
                cell: name.to_string(),
                message: "there is no defined name or `Sheet!C7` reference of that text".into(),
            })?;
        parse_sheet_ref(&target).ok_or_else(|| XlsxError::Cell {
            book: self.path.clone(),
            cell: name.to_string(),
            message: format!("the name refers to `{target}`, not to a single cell"),
        })
    }

    /// Read the given cells (streaming each sheet once). Cells not found
    /// are `Empty`.
    pub fn read(&mut self, wanted: &[CellPos]) -> Result<HashMap<CellPos, CellValue>, XlsxError> {
        let mut out = HashMap::new();
        let sheets = self.wb.sheet_names();
        let mut by_sheet: HashMap<&str, Vec<&CellPos>> = HashMap::new();
        for w in wanted {
            by_sheet.entry(w.sheet.as_str()).or_default().push(w);
        }
        for (sheet, cells) in by_sheet {
            let Some(real) = sheets.iter().find(|s| s.eq_ignore_ascii_case(sheet)) else {
                return Err(XlsxError::Cell {
                    book: self.path.clone(),
                    cell: cells[0].a1(),
                    message: format!(
                        "the workbook has no sheet `{sheet}`; its sheets are: {}",
                        sheets.join(", ")
                    ),
                });
            };
            let max_row = cells.iter().map(|c| c.row).max().unwrap_or(0);
            let mut reader = self
                .wb
                .worksheet_cells_reader(real)
                .map_err(|e| XlsxError::Read {
                    path: self.path.clone(),
                    message: format!("cannot read sheet `{real}` ({e})"),
                })?;
            let mut found = 0;
            loop {
                let cell = reader.next_cell().map_err(|e| XlsxError::Read {
                    path: self.path.clone(),
                    message: format!("cannot read sheet `{sheet}` ({e})"),
                })?;
                let Some(cell) = cell else { break };
                let (r, c) = cell.get_position();
                if r > max_row {
                    break;
                }
                if let Some(w) = cells.iter().find(|w| w.row == r && w.col == c) {
                    out.insert((*w).clone(), value_of(cell.get_value()));
                    found += 1;
                    if found == cells.len() {
                        break;
                    }
                }
            }
        }
        for w in wanted {
            out.entry(w.clone()).or_insert(CellValue::Empty);
        }
        Ok(out)
    }
}

impl Book {
    /// Every cell in the rows of the given cells (streaming each sheet
    /// once), each with whether it holds a formula: for `pull`, to find a
    /// value typed over a formula or an engine cell.
    pub fn read_rows_with_formulas(
        &mut self,
        rows_of: &[CellPos],
    ) -> Result<HashMap<CellPos, (CellValue, bool)>, XlsxError> {
        let mut out = HashMap::new();
        let sheets = self.wb.sheet_names();
        let mut by_sheet: HashMap<&str, Vec<u32>> = HashMap::new();
        for w in rows_of {
            by_sheet.entry(w.sheet.as_str()).or_default().push(w.row);
        }
        for (sheet, rows) in by_sheet {
            let Some(real) = sheets.iter().find(|s| s.eq_ignore_ascii_case(sheet)) else {
                continue;
            };
            let max_row = rows.iter().copied().max().unwrap_or(0);
            let mut reader = self
                .wb
                .worksheet_cells_reader(real)
                .map_err(|e| XlsxError::Read {
                    path: self.path.clone(),
                    message: format!("cannot read sheet `{real}` ({e})"),
                })?;
            while let Some(cell) =
                reader
                    .next_cell_with_formula_metadata()
                    .map_err(|e| XlsxError::Read {
                        path: self.path.clone(),
                        message: format!("cannot read sheet `{sheet}` ({e})"),
                    })?
            {
                let (r, c) = cell.pos;
                if r > max_row {
                    break;
                }
                if rows.contains(&r) {
                    let pos = CellPos {
                        sheet: sheet.to_string(),
                        row: r,
                        col: c,
                    };
                    out.insert(pos, (value_of(&cell.value), cell.formula.is_some()));
                }
            }
        }
        Ok(out)
    }
}

/// The number in a workbook cell (`Sheet!C7`) or defined name, for the
/// `cell` built-in. Errors name the workbook and the cell.
pub fn read_cell(path: &Path, reference: &str) -> Result<f64, XlsxError> {
    let mut book = Book::open(path)?;
    let pos = match parse_sheet_ref(reference) {
        Some(p) => p,
        None => book.resolve_name(reference)?,
    };
    let vals = book.read(std::slice::from_ref(&pos))?;
    let cell = if parse_sheet_ref(reference).is_some() {
        pos.a1()
    } else {
        format!("{reference} ({})", pos.a1())
    };
    let err = |message: String| XlsxError::Cell {
        book: book.path().to_string(),
        cell: cell.clone(),
        message,
    };
    match vals.get(&pos) {
        Some(CellValue::Number(x)) if x.is_finite() => Ok(*x),
        Some(CellValue::Text(t)) => {
            Err(err(format!("the cell holds text (\"{t}\"), not a number")))
        }
        Some(CellValue::Bool(b)) => Err(err(format!("the cell holds {b}, not a number"))),
        Some(CellValue::Error(e)) => Err(err(format!("the cell holds the error {e}"))),
        _ => Err(err("the cell is empty".into())),
    }
}

/// One input cell of a reviewed package.
#[derive(Clone, Debug, PartialEq)]
pub struct ReviewedInput {
    /// The sheaf name of the input.
    pub name: String,
    /// The value in the cell (in the input's display unit).
    pub value: f64,
    /// Where it is (`Calculation!C8`).
    pub cell: String,
}

/// What `pull` reads from a package.
#[derive(Clone, Debug, PartialEq)]
pub struct Reviewed {
    /// Package information; `None` when the workbook was not written by sheaf.
    pub source_name: Option<String>,
    pub source_sha256: Option<String>,
    pub tool_version: Option<String>,
    pub inputs: Vec<ReviewedInput>,
}

/// Read the input cells of a package (by their defined names) and its
/// package information.
pub fn read_inputs(path: &Path) -> Result<Reviewed, XlsxError> {
    let mut book = Book::open(path)?;
    let mut inputs: Vec<(String, CellPos)> = Vec::new();
    let mut info: HashMap<&'static str, CellPos> = HashMap::new();
    for (n, target) in book.defined_names().to_vec() {
        for key in [super::NAME_SHA, super::NAME_SOURCE, super::NAME_VERSION] {
            if n.eq_ignore_ascii_case(key)
                && let Some(p) = parse_sheet_ref(&target)
            {
                info.insert(key, p);
            }
        }
        if let Some((NameKind::Input, name, None)) = names::decode(&n)
            && let Some(p) = parse_sheet_ref(&target)
        {
            inputs.push((name, p));
        }
    }
    let mut wanted: Vec<CellPos> = inputs.iter().map(|(_, p)| p.clone()).collect();
    wanted.extend(info.values().cloned());
    let vals = book.read(&wanted)?;
    let text = |key: &str| -> Option<String> {
        match info.get(key).and_then(|p| vals.get(p)) {
            Some(CellValue::Text(t)) => Some(t.clone()),
            _ => None,
        }
    };
    let mut out = Reviewed {
        source_name: text(super::NAME_SOURCE),
        source_sha256: text(super::NAME_SHA),
        tool_version: text(super::NAME_VERSION),
        inputs: Vec::new(),
    };
    for (name, pos) in inputs {
        let value = match vals.get(&pos) {
            Some(CellValue::Number(x)) if x.is_finite() => *x,
            other => {
                let what = match other {
                    Some(CellValue::Text(t)) => format!("holds text (\"{t}\"), not a number"),
                    Some(CellValue::Bool(b)) => format!("holds {b}, not a number"),
                    Some(CellValue::Error(e)) => format!("holds the error {e}"),
                    _ => "is empty".to_string(),
                };
                return Err(XlsxError::Cell {
                    book: book.path().to_string(),
                    cell: pos.a1(),
                    message: format!("the input `{name}` {what}"),
                });
            }
        };
        out.inputs.push(ReviewedInput {
            name,
            value,
            cell: pos.a1(),
        });
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn references() {
        assert_eq!(parse_a1("C7"), Some((6, 2)));
        assert_eq!(parse_a1("$AB$10"), Some((9, 27)));
        assert_eq!(parse_a1("C0"), None);
        assert_eq!(parse_a1("7C"), None);
        assert_eq!(col_letters(27), "AB");
        assert_eq!(col_letters(0), "A");
        let p = parse_sheet_ref("'My sheet'!$C$7").unwrap();
        assert_eq!(p.sheet, "My sheet");
        assert_eq!(p.a1(), "'My sheet'!C7");
        assert_eq!(parse_sheet_ref("p_site"), None);
    }

    #[test]
    fn not_a_workbook_is_an_error() {
        let dir = std::env::temp_dir().join(format!("sheaf-xlsx-reader-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let f = dir.join("bad.xlsx");
        std::fs::write(&f, b"PK\x03\x04 truncated").unwrap();
        let e = read_cell(&f, "Sheet1!A1").unwrap_err().to_string();
        assert!(e.contains("bad.xlsx"), "{e}");
        let missing = read_cell(&dir.join("none.xlsx"), "A!B2")
            .unwrap_err()
            .to_string();
        assert!(missing.contains("no such file"), "{missing}");
        std::fs::remove_dir_all(&dir).unwrap();
    }
}
