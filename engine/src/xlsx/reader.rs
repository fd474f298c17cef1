//! Reading workbooks from their bytes (the CLI reads the file): cells for
//! the `cell` built-in and the input cells of a reviewed package for
//! `pull`.
//!
//! A workbook may come from anyone, so reading is bounded: at most
//! [`Limits::parts`] zip entries; each part is inflated through a counter
//! that stops at [`Limits::part_bytes`] (the sizes a zip declares are not
//! trusted); no single tag or text run may exceed [`Limits::run_bytes`]
//! (that bounds what the XML parser buffers); a sheet is read only up to
//! the last row asked for; the shared-string table is read only when a
//! requested cell holds a shared string, and only those strings are kept.
//! Messages never echo a cell's text (only its length) nor list sheets.

use std::cell::Cell;
use std::collections::{BTreeMap, HashMap, HashSet};
use std::io::{BufReader, Cursor, Read};
use std::rc::Rc;

use quick_xml::Reader;
use quick_xml::events::{BytesStart, Event};
use zip::ZipArchive;

use super::XlsxError;
use super::names::{self, NameKind};

/// A cell position: sheet, 0-based row and column.
#[derive(Clone, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
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
    if d.is_empty() || d.len() > 7 || !d.chars().all(|c| c.is_ascii_digit()) {
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

/// Bounds on what reading a workbook inflates and holds.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Limits {
    /// Most zip entries.
    pub parts: usize,
    /// Most bytes inflated from one part.
    pub part_bytes: u64,
    /// Longest tag or text run (what the XML parser buffers at once).
    pub run_bytes: u64,
}

/// The limits used by [`read_cells`] and [`read_inputs`].
pub const LIMITS: Limits = Limits {
    parts: 10_000,
    part_bytes: 256 << 20,
    run_bytes: 4 << 20,
};

/// Longest text kept of a cell (its length is always counted).
const TEXT_KEPT: usize = 1024;

/// A requested cell that has no usable number.
#[derive(Clone, Debug, PartialEq)]
pub struct CellError {
    /// The reference as asked (`Calc!C7`, or a defined name and its cell).
    pub cell: String,
    pub message: String,
}

impl std::fmt::Display for CellError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "cell {}: {}", self.cell, self.message)
    }
}

/// A cell's content, as far as sheaf cares.
#[derive(Clone, Debug, PartialEq)]
enum Raw {
    Number(f64),
    /// Text: its length in characters and its first [`TEXT_KEPT`] bytes.
    Text(usize, String),
    Shared(usize),
    Bool(bool),
    Error(String),
    /// The stored result of a formula (it may be stale).
    Computed(f64),
    /// A number shown as a date or time.
    Date,
    /// A formula whose result was never calculated.
    FormulaNoValue,
    Empty,
}

/// A number, or why not.
fn number(raw: &Raw) -> Result<f64, String> {
    match raw {
        Raw::Number(x) | Raw::Computed(x) if x.is_finite() => Ok(*x),
        Raw::Number(_) | Raw::Computed(_) => {
            Err("the cell holds a number that is not finite".into())
        }
        Raw::Text(n, _) => Err(format!(
            "the cell holds text ({n} character{}), not a number",
            if *n == 1 { "" } else { "s" }
        )),
        Raw::Shared(_) => Err("the cell holds text, not a number".into()),
        Raw::Bool(b) => Err(format!(
            "the cell holds {}, not a number",
            if *b { "TRUE" } else { "FALSE" }
        )),
        Raw::Error(e) => Err(format!("the cell holds the error {e}")),
        Raw::Date => Err(
            "the cell holds a date or time, not a number (format it as a number in the workbook)"
                .into(),
        ),
        Raw::FormulaNoValue => Err(
            "the cell holds a formula that was never calculated (no stored result); \
             open and save the workbook in a spreadsheet program, or type the number"
                .into(),
        ),
        Raw::Empty => Err("the cell is empty".into()),
    }
}

// ------------------------------------------------------------------ zip

/// Shared note of why a bounded reader stopped.
type Tripped = Rc<Cell<Option<&'static str>>>;

/// Counts inflated bytes and the length of the current run between `<`
/// and `>`; fails past the limits.
struct Bounded<R> {
    inner: R,
    total: u64,
    run: u64,
    limits: Limits,
    tripped: Tripped,
}

impl<R: Read> Read for Bounded<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let n = self.inner.read(buf)?;
        self.total += n as u64;
        if self.total > self.limits.part_bytes {
            self.tripped.set(Some("part"));
            return Err(std::io::Error::other("part too large"));
        }
        let chunk = &buf[..n];
        match chunk.iter().rposition(|&b| b == b'<' || b == b'>') {
            Some(i) => {
                // The longest run inside this chunk, then the open tail.
                let mut last = None::<usize>;
                for (j, &b) in chunk[..=i].iter().enumerate() {
                    if b == b'<' || b == b'>' {
                        let len = match last {
                            Some(l) => (j - l) as u64,
                            None => self.run + j as u64,
                        };
                        if len > self.limits.run_bytes {
                            self.tripped.set(Some("run"));
                            return Err(std::io::Error::other("run too long"));
                        }
                        last = Some(j);
                    }
                }
                self.run = (n - 1 - i) as u64;
            }
            None => self.run += n as u64,
        }
        if self.run > self.limits.run_bytes {
            self.tripped.set(Some("run"));
            return Err(std::io::Error::other("run too long"));
        }
        Ok(n)
    }
}

struct Package<'a> {
    zip: ZipArchive<Cursor<&'a [u8]>>,
    limits: Limits,
}

fn book_err(message: impl Into<String>) -> XlsxError {
    XlsxError::Book(message.into())
}

impl<'a> Package<'a> {
    fn open(bytes: &'a [u8], limits: Limits) -> Result<Package<'a>, XlsxError> {
        let zip = ZipArchive::new(Cursor::new(bytes))
            .map_err(|_| book_err("not a readable xlsx workbook (not a zip archive)"))?;
        if zip.len() > limits.parts {
            return Err(book_err(format!(
                "not read: the workbook has more than {} parts",
                limits.parts
            )));
        }
        Ok(Package { zip, limits })
    }

    /// Stream the XML of part `name` through `f`. `Ok(false)` when the
    /// part does not exist.
    fn with_part<T>(
        &mut self,
        name: &str,
        f: impl FnOnce(
            &mut Reader<BufReader<Bounded<zip::read::ZipFile<'_, Cursor<&'a [u8]>>>>>,
        ) -> Result<T, quick_xml::Error>,
    ) -> Result<Option<T>, XlsxError> {
        let limits = self.limits;
        let file = match self.zip.by_name(name) {
            Ok(f) => f,
            Err(zip::result::ZipError::FileNotFound) => return Ok(None),
            Err(_) => {
                return Err(book_err(format!(
                    "not a readable xlsx workbook (part `{name}` cannot be read)"
                )));
            }
        };
        let tripped: Tripped = Rc::new(Cell::new(None));
        let bounded = Bounded {
            inner: file,
            total: 0,
            run: 0,
            limits,
            tripped: tripped.clone(),
        };
        let mut reader = Reader::from_reader(BufReader::with_capacity(64 << 10, bounded));
        let result = f(&mut reader);
        match (result, tripped.get()) {
            (Ok(v), _) => Ok(Some(v)),
            (Err(_), Some("part")) => Err(book_err(format!(
                "not read: part `{name}` inflates to more than {} MiB (a compressed bomb?)",
                limits.part_bytes >> 20
            ))),
            (Err(_), Some(_)) => Err(book_err(format!(
                "not read: part `{name}` has a tag or text longer than {} MiB",
                limits.run_bytes >> 20
            ))),
            (Err(e), None) => Err(book_err(format!(
                "not a readable xlsx workbook (part `{name}`: {})",
                short_xml_error(&e)
            ))),
        }
    }
}

fn short_xml_error(e: &quick_xml::Error) -> String {
    match e {
        quick_xml::Error::Io(_) => "damaged compressed data".into(),
        _ => "malformed XML".into(),
    }
}

fn local(name: &str) -> &str {
    name.rsplit_once(':').map_or(name, |(_, l)| l)
}

fn attr(e: &BytesStart, key: &str) -> Option<String> {
    e.attributes()
        .flatten()
        .find(|a| local(a.key.as_ref()) == key)
        .and_then(|a| {
            a.normalized_value(quick_xml::XmlVersion::Implicit1_0)
                .ok()
                .map(|v| v.into_owned())
        })
}

/// Append the text of a text or entity event to `out` (kept up to
/// `TEXT_KEPT` bytes; `len` counts every character).
fn push_text(ev: &Event, out: &mut String, len: &mut usize) {
    let mut add = |s: &str| {
        *len += s.chars().count();
        for c in s.chars() {
            if out.len() + c.len_utf8() > TEXT_KEPT {
                break;
            }
            out.push(c);
        }
    };
    match ev {
        Event::Text(t) => add(&t.xml10_content()),
        Event::CData(t) => add(&t.xml10_content()),
        Event::GeneralRef(r) => {
            if let Ok(Some(c)) = r.resolve_char_ref() {
                add(c.encode_utf8(&mut [0; 4]));
            } else {
                let s = match &*r.xml10_content() {
                    "amp" => "&",
                    "lt" => "<",
                    "gt" => ">",
                    "quot" => "\"",
                    "apos" => "'",
                    _ => "",
                };
                add(s);
            }
        }
        _ => {}
    }
}

// ------------------------------------------------------------- workbook

/// A defined name: its text, the sheet it is scoped to, what it refers to.
#[derive(Clone, Debug)]
struct DefinedName {
    name: String,
    local_sheet: Option<usize>,
    target: String,
}

struct Workbook {
    /// (sheet name, part path), in workbook order.
    sheets: Vec<(String, String)>,
    names: Vec<DefinedName>,
    /// Whether each cell style (`s` index) shows a date or time.
    date_styles: Vec<bool>,
}

fn read_workbook(pkg: &mut Package) -> Result<Workbook, XlsxError> {
    // Sheets and defined names.
    let (sheets_rid, names) = pkg
        .with_part("xl/workbook.xml", |r| {
            let mut buf = Vec::new();
            let mut sheets = Vec::new();
            let mut names = Vec::new();
            let mut current: Option<(String, Option<usize>, String)> = None;
            let mut len = 0;
            loop {
                let ev = r.read_event_into(&mut buf)?;
                match &ev {
                    Event::Start(e) | Event::Empty(e) if local(e.name().as_ref()) == "sheet" => {
                        if let (Some(n), Some(id)) = (attr(e, "name"), rid(e)) {
                            sheets.push((n, id));
                        }
                    }
                    Event::Start(e) if local(e.name().as_ref()) == "definedName" => {
                        current = attr(e, "name").map(|n| {
                            let ls = attr(e, "localSheetId").and_then(|x| x.parse().ok());
                            (n, ls, String::new())
                        });
                    }
                    Event::End(e) if local(e.name().as_ref()) == "definedName" => {
                        if let Some((name, local_sheet, target)) = current.take() {
                            names.push(DefinedName {
                                name,
                                local_sheet,
                                target,
                            });
                        }
                    }
                    Event::Text(_) | Event::GeneralRef(_) | Event::CData(_) => {
                        if let Some((_, _, t)) = current.as_mut() {
                            push_text(&ev, t, &mut len);
                        }
                    }
                    Event::Eof => break,
                    _ => {}
                }
                buf.clear();
            }
            Ok((sheets, names))
        })?
        .ok_or_else(|| book_err("not a readable xlsx workbook (no xl/workbook.xml)"))?;
    // Sheet parts.
    let rels = pkg
        .with_part("xl/_rels/workbook.xml.rels", |r| {
            let mut buf = Vec::new();
            let mut rels = HashMap::new();
            loop {
                match r.read_event_into(&mut buf)? {
                    Event::Start(e) | Event::Empty(e)
                        if local(e.name().as_ref()) == "Relationship" =>
                    {
                        if let (Some(id), Some(t)) = (attr(&e, "Id"), attr(&e, "Target")) {
                            rels.insert(id, t);
                        }
                    }
                    Event::Eof => break,
                    _ => {}
                }
                buf.clear();
            }
            Ok(rels)
        })?
        .unwrap_or_default();
    let sheets = sheets_rid
        .into_iter()
        .filter_map(|(name, id)| {
            let t = rels.get(&id)?;
            let path = match t.strip_prefix('/') {
                Some(abs) => abs.to_string(),
                None => format!("xl/{t}"),
            };
            Some((name, path))
        })
        .collect();
    let date_styles = read_styles(pkg)?;
    Ok(Workbook {
        sheets,
        names,
        date_styles,
    })
}

/// The relationship id of a `<sheet>` (`r:id`, any prefix).
fn rid(e: &BytesStart) -> Option<String> {
    e.attributes()
        .flatten()
        .find(|a| {
            let k: &str = a.key.as_ref();
            k.contains(':') && local(k) == "id"
        })
        .and_then(|a| {
            a.normalized_value(quick_xml::XmlVersion::Implicit1_0)
                .ok()
                .map(|v| v.into_owned())
        })
}

/// Built-in number formats that show dates or times (ECMA-376 Part 1,
/// 18.8.30).
fn builtin_date_format(id: u32) -> bool {
    matches!(id, 14..=22 | 27..=36 | 45..=47 | 50..=58)
}

/// Whether a custom number format code shows a date or time: a y, m, d,
/// h or s outside quotes, brackets and escapes.
fn date_format_code(code: &str) -> bool {
    let mut in_quote = false;
    let mut in_bracket = false;
    let mut escaped = false;
    for c in code.chars() {
        if escaped {
            escaped = false;
            continue;
        }
        match c {
            '\\' | '_' | '*' => escaped = true,
            '"' => in_quote = !in_quote,
            '[' if !in_quote => in_bracket = true,
            ']' if !in_quote => in_bracket = false,
            'y' | 'Y' | 'm' | 'M' | 'd' | 'D' | 'h' | 'H' | 's' | 'S'
                if !in_quote && !in_bracket =>
            {
                return !code.eq_ignore_ascii_case("general");
            }
            _ => {}
        }
    }
    false
}

fn read_styles(pkg: &mut Package) -> Result<Vec<bool>, XlsxError> {
    Ok(pkg
        .with_part("xl/styles.xml", |r| {
            let mut buf = Vec::new();
            let mut custom: HashMap<u32, bool> = HashMap::new();
            let mut xfs = Vec::new();
            let mut in_cell_xfs = false;
            loop {
                match r.read_event_into(&mut buf)? {
                    Event::Start(e) | Event::Empty(e) => match local(e.name().as_ref()) {
                        "numFmt" => {
                            if let (Some(id), Some(code)) = (
                                attr(&e, "numFmtId").and_then(|x| x.parse().ok()),
                                attr(&e, "formatCode"),
                            ) {
                                custom.insert(id, date_format_code(&code));
                            }
                        }
                        "cellXfs" => in_cell_xfs = true,
                        "xf" if in_cell_xfs => {
                            let id: u32 = attr(&e, "numFmtId")
                                .and_then(|x| x.parse().ok())
                                .unwrap_or(0);
                            xfs.push(
                                custom
                                    .get(&id)
                                    .copied()
                                    .unwrap_or_else(|| builtin_date_format(id)),
                            );
                        }
                        _ => {}
                    },
                    Event::End(e) if local(e.name().as_ref()) == "cellXfs" => in_cell_xfs = false,
                    Event::Eof => break,
                    _ => {}
                }
                buf.clear();
            }
            Ok(xfs)
        })?
        .unwrap_or_default())
}

// ---------------------------------------------------------------- sheets

/// Read the wanted cells of one sheet part, stopping after the last row
/// wanted or once every cell is found.
fn read_sheet(
    pkg: &mut Package,
    part: &str,
    wanted: &HashSet<(u32, u32)>,
    date_styles: &[bool],
) -> Result<HashMap<(u32, u32), Raw>, XlsxError> {
    let max_row = wanted.iter().map(|w| w.0).max().unwrap_or(0);
    let found = pkg.with_part(part, |r| {
        let mut out = HashMap::new();
        scan_cells(
            r,
            |pos, _, _| wanted.contains(&pos),
            |row| row <= max_row,
            |c| {
                if wanted.contains(&c.pos) {
                    let date = date_styles.get(c.style).copied().unwrap_or(false);
                    out.insert(
                        c.pos,
                        classify(c.t, c.value, c.text, c.text_len, c.formula, date),
                    );
                }
                out.len() < wanted.len()
            },
        )?;
        Ok(out)
    })?;
    found.ok_or_else(|| book_err(format!("not a readable xlsx workbook (no part `{part}`)")))
}

/// One cell of a sheet as [`scan_cells`] read it.
struct ScannedCell<'t> {
    pos: (u32, u32),
    /// The `t` attribute (cell type), "" when absent.
    t: &'t str,
    /// The `s` attribute (style index), 0 when absent.
    style: usize,
    /// Whether the cell holds a formula.
    formula: bool,
    /// The `<v>` text, when collected.
    value: Option<String>,
    /// Inline-string text (bounded) and its full length in characters.
    text: &'t str,
    text_len: usize,
}

/// Stream the cells of a sheet part in order. `collect(pos, t, formula)`
/// says whether a cell's value and inline text are kept (so text of cells
/// nobody asked for is never held); `row(r)` is called at each row and
/// `cell(c)` at the end of each cell, empty cells included; either stops
/// the scan by returning false. Stops at the end of `sheetData`.
fn scan_cells<R: std::io::BufRead>(
    r: &mut Reader<R>,
    collect: impl Fn((u32, u32), &str, bool) -> bool,
    mut row_start: impl FnMut(u32) -> bool,
    mut cell_end: impl FnMut(ScannedCell) -> bool,
) -> Result<(), quick_xml::Error> {
    let mut buf = Vec::new();
    let mut row: u32 = 0;
    let mut next_col: u32 = 0;
    // The cell being read: position, type, style, formula seen.
    let mut cell: Option<((u32, u32), String, usize, bool)> = None;
    let mut value: Option<String> = None;
    let mut in_v = false;
    let mut in_is_t = false;
    let mut text = String::new();
    let mut text_len = 0usize;
    loop {
        let ev = r.read_event_into(&mut buf)?;
        match &ev {
            Event::Start(e) | Event::Empty(e) => {
                let empty = matches!(ev, Event::Empty(_));
                match local(e.name().as_ref()) {
                    "row" => {
                        row = attr(e, "r")
                            .and_then(|x| x.parse::<u32>().ok())
                            .map_or(row + 1, |r| r.saturating_sub(1));
                        next_col = 0;
                        if !row_start(row) {
                            break;
                        }
                    }
                    "c" => {
                        let pos = attr(e, "r")
                            .and_then(|x| parse_a1(&x))
                            .unwrap_or((row, next_col));
                        row = pos.0;
                        next_col = pos.1 + 1;
                        let t = attr(e, "t").unwrap_or_default();
                        let s = attr(e, "s").and_then(|x| x.parse().ok()).unwrap_or(0);
                        value = None;
                        text.clear();
                        text_len = 0;
                        if empty {
                            let c = ScannedCell {
                                pos,
                                t: &t,
                                style: s,
                                formula: false,
                                value: None,
                                text: "",
                                text_len: 0,
                            };
                            if !cell_end(c) {
                                break;
                            }
                        } else {
                            cell = Some((pos, t, s, false));
                        }
                    }
                    "f" => {
                        if let Some(c) = cell.as_mut() {
                            c.3 = true;
                        }
                    }
                    "v" if !empty => in_v = true,
                    "t" if !empty => in_is_t = true,
                    _ => {}
                }
            }
            Event::Text(_) | Event::GeneralRef(_) | Event::CData(_) => {
                if let Some((pos, t, _, formula)) = &cell
                    && collect(*pos, t, *formula)
                {
                    if in_v {
                        let v = value.get_or_insert_with(String::new);
                        let mut n = 0;
                        push_text(&ev, v, &mut n);
                    } else if in_is_t {
                        push_text(&ev, &mut text, &mut text_len);
                    }
                }
            }
            Event::End(e) => match local(e.name().as_ref()) {
                "v" => in_v = false,
                "t" => in_is_t = false,
                "c" => {
                    if let Some((pos, t, s, formula)) = cell.take() {
                        let c = ScannedCell {
                            pos,
                            t: &t,
                            style: s,
                            formula,
                            value: value.take(),
                            text: &text,
                            text_len,
                        };
                        if !cell_end(c) {
                            break;
                        }
                    }
                }
                "sheetData" => break,
                _ => {}
            },
            Event::Eof => break,
            _ => {}
        }
        buf.clear();
    }
    Ok(())
}

fn classify(
    t: &str,
    v: Option<String>,
    text: &str,
    text_len: usize,
    formula: bool,
    date: bool,
) -> Raw {
    let v = v.map(|s| s.trim().to_string());
    match (t, v) {
        ("inlineStr", _) => Raw::Text(text_len, text.to_string()),
        (_, None) if formula => Raw::FormulaNoValue,
        (_, None) => Raw::Empty,
        ("s", Some(v)) => v.parse().map_or(Raw::Empty, Raw::Shared),
        ("str", Some(v)) => Raw::Text(v.chars().count(), v),
        ("b", Some(v)) => Raw::Bool(v == "1"),
        ("e", Some(v)) => Raw::Error(error_code(&v)),
        ("d", Some(_)) => Raw::Date,
        (_, Some(v)) => match v.parse::<f64>() {
            Ok(_) if date => Raw::Date,
            Ok(x) if formula => Raw::Computed(x),
            Ok(x) => Raw::Number(x),
            Err(_) => Raw::Text(v.chars().count(), String::new()),
        },
    }
}

/// A spreadsheet error code as shown; anything else is not echoed.
fn error_code(v: &str) -> String {
    const CODES: &[&str] = &[
        "#NULL!",
        "#DIV/0!",
        "#VALUE!",
        "#REF!",
        "#NAME?",
        "#NUM!",
        "#N/A",
        "#GETTING_DATA",
        "#SPILL!",
        "#CALC!",
    ];
    CODES
        .iter()
        .find(|c| **c == v)
        .map_or_else(|| "value (an error)".to_string(), |c| (*c).to_string())
}

/// Texts of the wanted shared strings (length and kept text), reading the
/// table only as far as the last index wanted.
fn read_shared(
    pkg: &mut Package,
    wanted: &HashSet<usize>,
) -> Result<HashMap<usize, (usize, String)>, XlsxError> {
    if wanted.is_empty() {
        return Ok(HashMap::new());
    }
    let last = wanted.iter().copied().max().unwrap_or(0);
    Ok(pkg
        .with_part("xl/sharedStrings.xml", |r| {
            let mut buf = Vec::new();
            let mut out = HashMap::new();
            let mut index: Option<usize> = None;
            let mut count = 0usize;
            let mut depth_rph = 0usize;
            let mut in_t = false;
            let mut text = String::new();
            let mut len = 0usize;
            loop {
                let ev = r.read_event_into(&mut buf)?;
                match &ev {
                    Event::Start(e) => match local(e.name().as_ref()) {
                        "si" => {
                            index = Some(count);
                            count += 1;
                            text.clear();
                            len = 0;
                        }
                        "rPh" => depth_rph += 1,
                        "t" => in_t = true,
                        _ => {}
                    },
                    Event::Empty(e) if local(e.name().as_ref()) == "si" => {
                        if wanted.contains(&count) {
                            out.insert(count, (0, String::new()));
                        }
                        count += 1;
                        if count > last {
                            break;
                        }
                    }
                    Event::Text(_) | Event::GeneralRef(_) | Event::CData(_)
                        if in_t && depth_rph == 0 && index.is_some_and(|i| wanted.contains(&i)) =>
                    {
                        push_text(&ev, &mut text, &mut len);
                    }
                    Event::End(e) => match local(e.name().as_ref()) {
                        "t" => in_t = false,
                        "rPh" => depth_rph = depth_rph.saturating_sub(1),
                        "si" => {
                            if let Some(i) = index.take()
                                && wanted.contains(&i)
                            {
                                out.insert(i, (len, std::mem::take(&mut text)));
                            }
                            if count > last {
                                break;
                            }
                        }
                        _ => {}
                    },
                    Event::Eof => break,
                    _ => {}
                }
                buf.clear();
            }
            Ok(out)
        })?
        .unwrap_or_default())
}

/// Read cells of several sheets in one pass per sheet; shared strings
/// resolved to text (length and kept text).
fn read_positions(
    pkg: &mut Package,
    wb: &Workbook,
    wanted: &[CellPos],
) -> Result<HashMap<CellPos, Raw>, XlsxError> {
    let mut by_sheet: BTreeMap<&str, HashSet<(u32, u32)>> = BTreeMap::new();
    for w in wanted {
        by_sheet
            .entry(w.sheet.as_str())
            .or_default()
            .insert((w.row, w.col));
    }
    let mut out = HashMap::new();
    for (sheet, cells) in by_sheet {
        let Some((_, part)) = wb
            .sheets
            .iter()
            .find(|(n, _)| n.eq_ignore_ascii_case(sheet))
        else {
            continue; // reported per cell
        };
        let found = read_sheet(pkg, part, &cells, &wb.date_styles)?;
        for ((row, col), raw) in found {
            out.insert(
                CellPos {
                    sheet: sheet.to_string(),
                    row,
                    col,
                },
                raw,
            );
        }
    }
    let shared: HashSet<usize> = out
        .values()
        .filter_map(|r| match r {
            Raw::Shared(i) => Some(*i),
            _ => None,
        })
        .collect();
    let texts = read_shared(pkg, &shared)?;
    for raw in out.values_mut() {
        if let Raw::Shared(i) = raw {
            *raw = match texts.get(i) {
                Some((len, t)) => Raw::Text(*len, t.clone()),
                None => Raw::Text(0, String::new()),
            };
        }
    }
    Ok(out)
}

/// Resolve a reference (`Sheet!C7` or a defined name) to a cell.
fn resolve(wb: &Workbook, reference: &str) -> Result<CellPos, String> {
    if let Some(p) = parse_sheet_ref(reference) {
        if !wb
            .sheets
            .iter()
            .any(|(n, _)| n.eq_ignore_ascii_case(&p.sheet))
        {
            return Err(format!("the workbook has no sheet `{}`", p.sheet));
        }
        return Ok(p);
    }
    let matches: Vec<&DefinedName> = wb
        .names
        .iter()
        .filter(|n| n.name.eq_ignore_ascii_case(reference))
        .collect();
    let global: Vec<&&DefinedName> = matches.iter().filter(|n| n.local_sheet.is_none()).collect();
    let chosen = match (global.len(), matches.len()) {
        (_, 0) => {
            return Err(
                "there is no defined name or `Sheet!C7` reference of that text in the workbook"
                    .into(),
            );
        }
        (1, _) | (0, 1) => {
            if global.len() == 1 {
                *global[0]
            } else {
                matches[0]
            }
        }
        _ => return Err(ambiguous(reference)),
    };
    if global.len() == 1 && matches.iter().any(|m| m.name != chosen.name) {
        // `p_site` and `P_SITE`: one name to a spreadsheet, two here.
        return Err(ambiguous(reference));
    }
    let pos = parse_sheet_ref(&chosen.target)
        .ok_or_else(|| "the name does not refer to a single cell".to_string())?;
    if !wb
        .sheets
        .iter()
        .any(|(n, _)| n.eq_ignore_ascii_case(&pos.sheet))
    {
        return Err("the name refers to a sheet the workbook does not have".into());
    }
    Ok(pos)
}

fn ambiguous(reference: &str) -> String {
    format!(
        "the workbook defines `{reference}` more than once (sheet-scoped copies, or names that differ \
         only in letter case, which a spreadsheet treats as one); not read"
    )
}

/// The numbers in workbook cells: each reference is `Sheet!C7` or a
/// defined name. The workbook is read once; each sheet once, only as far
/// as its last requested row. `Err` when the workbook itself cannot be
/// read (not an xlsx, or beyond the [`LIMITS`]); otherwise one result per
/// reference.
pub fn read_cells(bytes: &[u8], refs: &[&str]) -> Result<Vec<Result<f64, CellError>>, XlsxError> {
    read_cells_with(bytes, refs, LIMITS)
}

/// [`read_cells`] under other limits.
pub fn read_cells_with(
    bytes: &[u8],
    refs: &[&str],
    limits: Limits,
) -> Result<Vec<Result<f64, CellError>>, XlsxError> {
    let mut pkg = Package::open(bytes, limits)?;
    let wb = read_workbook(&mut pkg)?;
    let resolved: Vec<Result<CellPos, String>> = refs.iter().map(|r| resolve(&wb, r)).collect();
    let wanted: Vec<CellPos> = resolved.iter().filter_map(|r| r.clone().ok()).collect();
    let vals = read_positions(&mut pkg, &wb, &wanted)?;
    Ok(refs
        .iter()
        .zip(resolved)
        .map(|(r, pos)| {
            let shown = |p: Option<&CellPos>| match p {
                Some(p) if parse_sheet_ref(r).is_none() => format!("{r} ({})", p.a1()),
                Some(p) => p.a1(),
                None => (*r).to_string(),
            };
            let pos = pos.map_err(|message| CellError {
                cell: shown(None),
                message,
            })?;
            let raw = vals.get(&pos).unwrap_or(&Raw::Empty);
            number(raw).map_err(|message| CellError {
                cell: shown(Some(&pos)),
                message,
            })
        })
        .collect())
}

/// One input cell of a reviewed package.
#[derive(Clone, Debug, PartialEq)]
pub struct ReviewedInput {
    /// The sheaf name of the input.
    pub name: String,
    /// The value in the cell (in the unit of the Unit cell beside it).
    pub value: f64,
    /// Where it is (`Calculation!C8`).
    pub cell: String,
    /// The text of the Unit cell beside the value (`None`: empty).
    pub unit: Option<String>,
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

/// Read the input cells of a package (by their defined names), the unit
/// beside each, and its package information. An input defined more than
/// once (a sheet-scoped copy, or a name differing only in letter case), a
/// date, a formula or text in an input cell is an error: nothing is
/// guessed.
pub fn read_inputs(bytes: &[u8]) -> Result<Reviewed, XlsxError> {
    read_inputs_with(bytes, LIMITS)
}

/// [`read_inputs`] under other limits.
pub fn read_inputs_with(bytes: &[u8], limits: Limits) -> Result<Reviewed, XlsxError> {
    let mut pkg = Package::open(bytes, limits)?;
    let wb = read_workbook(&mut pkg)?;
    let mut inputs: Vec<(String, CellPos)> = Vec::new();
    let mut seen: HashMap<String, String> = HashMap::new();
    let mut info: HashMap<&'static str, CellPos> = HashMap::new();
    for dn in &wb.names {
        for key in [super::NAME_SHA, super::NAME_SOURCE, super::NAME_VERSION] {
            if dn.name.eq_ignore_ascii_case(key)
                && let Some(p) = parse_sheet_ref(&dn.target)
            {
                info.insert(key, p);
            }
        }
        // `decode` ignores letter case as a spreadsheet does, so a copy
        // in other case lands on the same input.
        if let Some((NameKind::Input, name, None)) = names::decode(&dn.name) {
            if let Some(first) = seen.insert(name.clone(), dn.target.clone()) {
                return Err(XlsxError::Cell {
                    cell: name.clone(),
                    message: format!(
                        "the package defines the input `{name}` more than once ({} and {}: a \
                         sheet-scoped copy or a name in other letter case); nothing pulled",
                        first.trim_start_matches('='),
                        dn.target.trim_start_matches('=')
                    ),
                });
            }
            let p = parse_sheet_ref(&dn.target).ok_or_else(|| XlsxError::Cell {
                cell: name.clone(),
                message: format!(
                    "the defined name of input `{name}` does not refer to a single cell"
                ),
            })?;
            inputs.push((name, p));
        }
    }
    let mut wanted: Vec<CellPos> = Vec::new();
    for (_, p) in &inputs {
        wanted.push(p.clone());
        wanted.push(CellPos {
            col: p.col + 1,
            ..p.clone()
        });
    }
    wanted.extend(info.values().cloned());
    let vals = read_positions(&mut pkg, &wb, &wanted)?;
    let text = |key: &str| -> Option<String> {
        match info.get(key).and_then(|p| vals.get(p)) {
            Some(Raw::Text(_, t)) => Some(t.clone()),
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
        let raw = vals.get(&pos).unwrap_or(&Raw::Empty);
        if matches!(raw, Raw::Computed(_)) {
            return Err(XlsxError::Cell {
                cell: pos.a1(),
                message: format!(
                    "input `{name}`: the cell holds a formula (its stored result may be stale); \
                     type the number; nothing pulled"
                ),
            });
        }
        let value = number(raw).map_err(|message| XlsxError::Cell {
            cell: pos.a1(),
            message: format!("input `{name}`: {message}"),
        })?;
        let unit_pos = CellPos {
            col: pos.col + 1,
            ..pos.clone()
        };
        let unit = match vals.get(&unit_pos) {
            Some(Raw::Text(_, t)) if !t.trim().is_empty() => Some(t.trim().to_string()),
            _ => None,
        };
        out.inputs.push(ReviewedInput {
            name,
            value,
            cell: pos.a1(),
            unit,
        });
    }
    Ok(out)
}

/// Most plain numbers [`plain_numbers`] keeps (the rest are counted).
pub const PLAIN_KEPT: usize = 1000;

/// The cells of one sheet that hold a number typed in (no formula), with
/// what is needed to name them: the defined names that refer to a cell of
/// that sheet, and the text in column A of each row with such a number.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct PlainNumbers {
    /// Cells holding a number and no formula, in sheet order (at most
    /// [`PLAIN_KEPT`]).
    pub numbers: Vec<(CellPos, f64)>,
    /// Plain numbers beyond [`PLAIN_KEPT`] (counted, not kept).
    pub omitted: usize,
    /// Defined names referring to a single cell of the sheet.
    pub names: Vec<(String, CellPos)>,
    /// Text of column A in the rows of `numbers` (rows without text absent).
    pub labels: HashMap<u32, String>,
}

/// Every cell of `sheet` that holds a number without a formula (the sheet
/// is streamed once, whole, under the [`LIMITS`]; only the numbers kept),
/// for `pull` to find a number typed over a formula or an engine value.
/// A sheet the workbook does not have gives nothing.
pub fn plain_numbers(bytes: &[u8], sheet: &str) -> Result<PlainNumbers, XlsxError> {
    plain_numbers_with(bytes, sheet, LIMITS)
}

/// [`plain_numbers`] under other limits.
pub fn plain_numbers_with(
    bytes: &[u8],
    sheet: &str,
    limits: Limits,
) -> Result<PlainNumbers, XlsxError> {
    let mut pkg = Package::open(bytes, limits)?;
    let wb = read_workbook(&mut pkg)?;
    let Some((real, part)) = wb
        .sheets
        .iter()
        .find(|(n, _)| n.eq_ignore_ascii_case(sheet))
        .cloned()
    else {
        return Ok(PlainNumbers::default());
    };
    let mut out = PlainNumbers {
        names: wb
            .names
            .iter()
            .filter_map(|n| {
                let p = parse_sheet_ref(&n.target)?;
                p.sheet.eq_ignore_ascii_case(&real).then(|| {
                    (
                        n.name.clone(),
                        CellPos {
                            sheet: real.clone(),
                            ..p
                        },
                    )
                })
            })
            .collect(),
        ..PlainNumbers::default()
    };
    let date_styles = wb.date_styles.clone();
    let numeric = |t: &str| matches!(t, "" | "n");
    let scanned = pkg.with_part(&part, |r| {
        let mut kept: Vec<((u32, u32), f64)> = Vec::new();
        let mut omitted = 0usize;
        scan_cells(
            r,
            |_, t, formula| !formula && numeric(t),
            |_| true,
            |c| {
                if !c.formula
                    && numeric(c.t)
                    && !date_styles.get(c.style).copied().unwrap_or(false)
                    && let Some(x) = c.value.and_then(|v| v.trim().parse::<f64>().ok())
                {
                    if kept.len() < PLAIN_KEPT {
                        kept.push((c.pos, x));
                    } else {
                        omitted += 1;
                    }
                }
                true
            },
        )?;
        Ok((kept, omitted))
    })?;
    let Some((kept, omitted)) = scanned else {
        return Err(book_err(format!(
            "not a readable xlsx workbook (no part `{part}`)"
        )));
    };
    out.omitted = omitted;
    let label_cells: Vec<CellPos> = kept
        .iter()
        .map(|((r, _), _)| CellPos {
            sheet: real.clone(),
            row: *r,
            col: 0,
        })
        .collect::<HashSet<_>>()
        .into_iter()
        .collect();
    let labels = read_positions(&mut pkg, &wb, &label_cells)?;
    for (p, raw) in labels {
        if let Raw::Text(_, t) = raw
            && !t.trim().is_empty()
        {
            out.labels.insert(p.row, t);
        }
    }
    out.numbers = kept
        .into_iter()
        .map(|((row, col), x)| {
            (
                CellPos {
                    sheet: real.clone(),
                    row,
                    col,
                },
                x,
            )
        })
        .collect();
    Ok(out)
}

#[cfg(test)]
mod tests;
