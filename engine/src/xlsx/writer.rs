//! Laying the package out: one [`SheetLayout`] shared by the cover, the
//! calculation sheet and the data sheet writers (`cover.rs`,
//! `calc_sheet.rs`, `data_sheet.rs`). Extra sheets (cases, sweeps) are
//! added in one place, [`write_extra_sheets`].

use std::collections::BTreeSet;
use std::path::Path;

use rust_xlsxwriter::{Workbook, Worksheet};

use super::formula;
use super::plan::{self, NodeRows};
use super::style::{Styles, styles};
use super::whatif_sheets::add_whatif_sheets;
use super::{PackageInfo, XlsxError, shown};
use crate::check::DisplayUnit;
use crate::model::Model;
use crate::report::Report;
use crate::units::Dim;

pub(super) const CALC: &str = "Calculation";
pub(super) const COVER: &str = "Cover";
pub(super) const DATA: &str = "Data";

/// Everything the sheet writers share: the model, its report and plan,
/// the formats, and what one sheet tells the others (where the inputs and
/// checks are, which defined names point where).
pub(super) struct SheetLayout<'a> {
    pub model: &'a Model,
    pub info: &'a PackageInfo,
    pub report: Report,
    pub plan: Vec<Option<NodeRows>>,
    /// Per node: the inputs whose edit makes it stale.
    pub stale: Vec<BTreeSet<usize>>,
    pub st: Styles,
    pub title: String,
    /// Workbook defined names: (name, `=Sheet!$C$5`).
    pub defined: Vec<(String, String)>,
    /// Inputs in worksheet order: (node, calculation-sheet row).
    pub input_rows: Vec<(usize, u32)>,
    /// Checks: (index into `report.checks`, calculation-sheet row).
    pub check_cells: Vec<(usize, u32)>,
    /// Data-sheet range of the "differs" cells (first, last row), if any.
    pub differs_rows: Option<(u32, u32)>,
}

impl<'a> SheetLayout<'a> {
    fn new(model: &'a Model, info: &'a PackageInfo) -> SheetLayout<'a> {
        let report = model.report();
        let plan = plan::plan(model);
        let stale = plan::stale_inputs(model, &plan);
        let title = report
            .title
            .clone()
            .unwrap_or_else(|| info.source_name.clone());
        SheetLayout {
            model,
            info,
            report,
            plan,
            stale,
            st: styles(),
            title,
            defined: Vec::new(),
            input_rows: Vec::new(),
            check_cells: Vec::new(),
            differs_rows: None,
        }
    }

    pub fn define(&mut self, name: String, sheet: &str, row: u32, col: u16) {
        self.defined.push((name, abs_ref(sheet, row, col)));
    }

    /// A `meta` value, empty when absent.
    pub fn meta(&self, key: &str) -> String {
        self.report
            .meta
            .iter()
            .find(|(k, _)| k == key)
            .map_or(String::new(), |(_, v)| v.clone())
    }
}

fn werr(path: &Path) -> impl Fn(rust_xlsxwriter::XlsxError) -> XlsxError + '_ {
    move |e| XlsxError::Write {
        path: path.display().to_string(),
        message: e.to_string(),
    }
}

/// Cached result text of a number formula.
pub(super) fn num_result(x: f64) -> String {
    format!("{x}")
}

/// Display formula of an SI cell: (name - offset) / factor.
pub(super) fn display_formula(
    si_name: &str,
    display: &DisplayUnit,
    dim: Dim,
    si: f64,
) -> (String, f64, String) {
    let sh = shown(display, dim, si);
    (
        convert_formula(si_name, sh.factor, sh.offset),
        sh.value,
        sh.unit,
    )
}

/// `(x - offset) / factor` as formula text over the SI expression `x`.
pub(super) fn convert_formula(x: &str, factor: f64, offset: f64) -> String {
    let mut f = x.to_string();
    if offset != 0.0 {
        f = format!("({f}-{})", formula::number_text(offset));
    }
    if factor != 1.0 {
        f = format!("{f}/{}", formula::number_text(factor));
    }
    f
}

/// `=Sheet!$C$5`.
pub(super) fn abs_ref(sheet: &str, row: u32, col: u16) -> String {
    format!("={}", cell_ref(sheet, row, col))
}

/// `Sheet!$C$5`.
pub(super) fn cell_ref(sheet: &str, row: u32, col: u16) -> String {
    format!(
        "{sheet}!${}${}",
        super::reader::col_letters(u32::from(col)),
        row + 1
    )
}

/// The calculation package of an evaluated model, as the bytes of an
/// xlsx file (the CLI writes them to disk).
pub fn write_package(model: &Model, info: &PackageInfo) -> Result<Vec<u8>, XlsxError> {
    package_bytes(model, info).map_err(werr(Path::new("the package")))
}

fn package_bytes(model: &Model, info: &PackageInfo) -> Result<Vec<u8>, rust_xlsxwriter::XlsxError> {
    let mut layout = SheetLayout::new(model, info);
    let calc: Worksheet = super::calc_sheet::write(&mut layout)?;
    let data: Worksheet = super::data_sheet::write(&mut layout)?;
    let cover: Worksheet = super::cover::write(&mut layout)?;
    let mut wb = Workbook::new();
    wb.push_worksheet(cover);
    wb.push_worksheet(calc);
    wb.push_worksheet(data);
    // Sheets after Cover, Calculation and Data (their order is relied on by
    // pull and the recalculation check): cases and sweeps.
    add_whatif_sheets(&mut wb, model)?;
    for (n, target) in &layout.defined {
        wb.define_name(n, target)?;
    }
    let props = rust_xlsxwriter::DocProperties::new()
        .set_title(&layout.title)
        .set_comment(format!(
            "sheaf calculation package; source {} sha256 {}",
            info.source_name, info.source_sha256
        ));
    wb.set_properties(&props);
    wb.save_to_buffer()
}
