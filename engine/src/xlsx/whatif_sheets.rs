//! The what-if sheets of the package: *Cases* (every quantity a row, one
//! column per case, engine values; inputs that differ from the base
//! highlighted; checks per case; the found inputs with a stale flag) and
//! one sheet per sweep (its table and a line chart of each shown quantity
//! against the swept input, axis titles with units).

use rust_xlsxwriter::{
    Chart, ChartType, Color, Format, FormatAlign, FormatBorder, Formula, Workbook, Worksheet,
    XlsxError,
};

use crate::check::{DisplayUnit, NodeKind};
use crate::model::Model;
use crate::report::{Block, QuantityRow, Report};
use crate::units;

use super::names::{self, NameKind};
use super::style::{page_setup, sig_format};

/// Add the Cases sheet (when the worksheet has cases or finds) and a
/// sheet per sweep. `model` is the evaluated model the package is written
/// for.
pub(super) fn add_whatif_sheets(wb: &mut Workbook, model: &Model) -> Result<(), XlsxError> {
    if !model.cases().is_empty() || !model.finds().is_empty() {
        wb.push_worksheet(cases_sheet(model)?);
    }
    for k in 0..model.sweeps().len() {
        wb.push_worksheet(sweep_sheet(model, k)?);
    }
    Ok(())
}

struct St {
    title: Format,
    header: Format,
    input: Format,
    differs: Format,
    plain: Format,
    pass: Format,
    fail: Format,
    note: Format,
}

fn st() -> St {
    let header = Format::new()
        .set_bold()
        .set_background_color(Color::RGB(0x2F4F4F))
        .set_font_color(Color::White)
        .set_border_bottom(FormatBorder::Thin);
    St {
        title: Format::new().set_bold().set_font_size(14),
        header,
        input: Format::new().set_font_color(Color::RGB(0x1F4E9A)),
        differs: Format::new()
            .set_font_color(Color::RGB(0x1F4E9A))
            .set_bold()
            .set_background_color(Color::RGB(0xFFE7A3)),
        plain: Format::new(),
        pass: Format::new().set_font_color(Color::RGB(0x1B7F3A)),
        fail: Format::new()
            .set_bold()
            .set_font_color(Color::RGB(0xB00020))
            .set_background_color(Color::RGB(0xF8D7DA)),
        note: Format::new()
            .set_italic()
            .set_font_color(Color::RGB(0x555555)),
    }
}

fn rows(r: &Report) -> Vec<&QuantityRow> {
    r.blocks
        .iter()
        .filter_map(|b| match b {
            Block::Quantity(q) => Some(q.as_ref()),
            _ => None,
        })
        .flat_map(|q| q.flatten())
        .collect()
}

fn cases_sheet(model: &Model) -> Result<Worksheet, XlsxError> {
    let s = st();
    let mut ws = Worksheet::new();
    ws.set_name("Cases")?;
    let base = model.report();
    let mut runs: Vec<(String, String, Report)> = vec![(
        "base".into(),
        "the worksheet as written".into(),
        base.clone(),
    )];
    for c in model.cases() {
        let mut m = model.clone();
        if m.apply_case(&c.name).is_err() {
            continue;
        }
        m.evaluate();
        runs.push((
            c.name.clone(),
            c.description.clone().unwrap_or_default(),
            m.report(),
        ));
    }
    ws.write_string_with_format(
        0,
        0,
        "Cases: the worksheet evaluated by sheaf for each case (engine values)",
        &s.title,
    )?;
    ws.write_string_with_format(
        1,
        0,
        "Highlighted: an input set by the case (differs from base). Values are sheaf's, not formulas: re-run sheaf after editing the worksheet.",
        &s.note,
    )?;
    let hr = 3u32;
    ws.write_string_with_format(hr, 0, "Quantity", &s.header)?;
    ws.write_string_with_format(hr, 1, "Unit", &s.header)?;
    for (c, (name, desc, _)) in runs.iter().enumerate() {
        ws.write_string_with_format(hr, 2 + c as u16, name, &s.header)?;
        ws.write_string_with_format(
            hr + 1,
            2 + c as u16,
            desc,
            &s.note.clone().set_text_wrap().set_align(FormatAlign::Top),
        )?;
    }
    let longest = runs.iter().map(|r| r.1.as_str()).max_by_key(|d| d.len());
    ws.set_row_height(
        hr + 1,
        super::style::fit_height(longest.unwrap_or(""), 16.0),
    )?;
    ws.set_column_width(0, 18)?;
    ws.set_column_width(1, 11)?;
    for c in 0..runs.len() {
        ws.set_column_width(2 + c as u16, 16)?;
    }
    ws.set_freeze_panes(hr + 1, 2)?;
    let cols: Vec<Vec<&QuantityRow>> = runs.iter().map(|r| rows(&r.2)).collect();
    let mut r = hr + 2;
    for (k, b) in cols[0].iter().enumerate() {
        ws.write_string(r, 0, &b.name)?;
        ws.write_string(r, 1, &b.unit)?;
        for (c, col) in cols.iter().enumerate() {
            let Some(q) = col.get(k) else { continue };
            let cc = 2 + c as u16;
            let f = if q.kind == "input" && q.si_value != b.si_value {
                &s.differs
            } else if q.kind == "input" {
                &s.input
            } else {
                &s.plain
            };
            // Automatic units may pick another prefix per case: every case
            // in the base's unit.
            let v = match (q.si_value, b.si_value, b.value) {
                (Some(x), Some(bs), Some(bv)) if q.unit != b.unit && bs != 0.0 => {
                    Some(x * (bv / bs))
                }
                _ => q.value,
            };
            match (v, &q.text, q.boolean) {
                (_, _, Some(x)) => {
                    ws.write_string_with_format(r, cc, if x { "yes" } else { "no" }, f)?
                }
                (Some(v), _, _) => {
                    ws.write_number_with_format(r, cc, v, &f.clone().set_num_format(sig_format(v)))?
                }
                (None, Some(t), _) => ws.write_string_with_format(r, cc, t, f)?,
                (None, None, _) => ws.write_string_with_format(
                    r,
                    cc,
                    q.problem.as_deref().unwrap_or("not evaluated"),
                    &s.fail,
                )?,
            };
        }
        r += 1;
    }
    if !base.checks.is_empty() {
        r += 1;
        ws.write_string_with_format(r, 0, "Checks", &s.header)?;
        ws.write_string_with_format(r, 1, "", &s.header)?;
        for c in 0..runs.len() {
            ws.write_string_with_format(r, 2 + c as u16, "", &s.header)?;
        }
        r += 1;
        for (k, chk) in base.checks.iter().enumerate() {
            ws.write_string(r, 0, format!("check {}", chk.text))?;
            for (c, run) in runs.iter().enumerate() {
                let (text, f) = match run.2.checks.get(k).and_then(|c| c.passed) {
                    Some(true) => ("pass", &s.pass),
                    Some(false) => ("FAIL", &s.fail),
                    None => ("not evaluated", &s.fail),
                };
                ws.write_string_with_format(r, 2 + c as u16, text, f)?;
            }
            r += 1;
        }
    }
    if !model.finds().is_empty() {
        r += 1;
        for (c, h) in [
            "Found input",
            "Unit",
            "Value (sheaf)",
            "Condition",
            "Bracket",
            "Steps",
            "Residual (SI)",
            "Flag",
        ]
        .iter()
        .enumerate()
        {
            ws.write_string_with_format(r, c as u16, *h, &s.header)?;
        }
        r += 1;
        for f in model.finds() {
            let node = &model.nodes()[f.input];
            let (v, unit) = match model.value(f.input).as_num() {
                Some(x) => crate::report::shown(&node.display, f.input_dim, x),
                None => (f64::NAN, String::new()),
            };
            ws.write_string(r, 0, &f.input_name)?;
            ws.write_string(r, 1, &unit)?;
            if v.is_finite() {
                ws.write_number_with_format(
                    r,
                    2,
                    v,
                    &s.plain.clone().set_num_format(sig_format(v)),
                )?;
            } else {
                ws.write_string_with_format(r, 2, "not found", &s.fail)?;
            }
            ws.write_string(r, 3, &f.condition)?;
            let lo = crate::report::shown(&node.display, f.input_dim, f.low).0;
            let hi = crate::report::shown(&node.display, f.input_dim, f.high).0;
            ws.write_string(
                r,
                4,
                format!(
                    "{} .. {} {unit}",
                    units::format_sig(lo, 6),
                    units::format_sig(hi, 6)
                ),
            )?;
            if let Some(fd) = model.found(f.input) {
                ws.write_number(r, 5, fd.iterations as f64)?;
                ws.write_number(r, 6, fd.residual)?;
            }
            // Stale as soon as an input the condition depends on (other
            // than the found one) is edited: no formula can solve it.
            let conds: Vec<String> = f
                .depends_on
                .iter()
                .filter(|&&i| {
                    model.nodes()[i].kind == NodeKind::Input
                        && matches!(model.nodes()[i].ty, crate::types::Ty::Num(_))
                })
                .filter_map(|&i| model.nodes()[i].name.as_ref())
                .map(|n| names::name_of(NameKind::Differs, &n.name))
                .collect();
            if !conds.is_empty() {
                ws.write_formula_with_format(
                    r,
                    7,
                    Formula::new(format!(
                        "IF(OR({}),\"stale: re-run sheaf\",\"\")",
                        conds.join(",")
                    ))
                    .set_result(""),
                    &s.fail,
                )?;
            }
            r += 1;
        }
    }
    // Print: landscape, one page wide, over the table's columns only (the
    // notes run past them on screen).
    page_setup(&mut ws, true);
    let last_col = (1 + runs.len() as u16).max(7);
    ws.set_print_area(0, 0, r, last_col)?;
    Ok(ws)
}

/// A sheet name for sweep `k` of `input` (at most 31 characters).
fn sweep_sheet_name(k: usize, input: &str) -> String {
    let clean: String = input
        .chars()
        .filter(|c| !matches!(c, '[' | ']' | ':' | '*' | '?' | '/' | '\\' | '\''))
        .take(20)
        .collect();
    format!("Sweep {} {clean}", k + 1)
}

fn sweep_sheet(model: &Model, k: usize) -> Result<Worksheet, XlsxError> {
    let s = st();
    let sweep = model.sweeps()[k].clone();
    let node = &model.nodes()[sweep.input];
    let input_name = node.name.as_ref().map_or(String::new(), |n| n.name.clone());
    let input_dim = match node.ty {
        crate::types::Ty::Num(q) => q.dim,
        _ => units::Dim::NONE,
    };
    let conv = |d: &DisplayUnit, dim| match d {
        DisplayUnit::Fixed { unit, text } => (unit.factor, unit.offset, text.clone()),
        DisplayUnit::Auto => (1.0, 0.0, units::si_unit(dim)),
    };
    let mut cv = vec![conv(&node.display, input_dim)];
    cv.extend(sweep.show.iter().map(|c| conv(&c.display, c.dim)));
    let name = sweep_sheet_name(k, &input_name);
    let mut ws = Worksheet::new();
    ws.set_name(&name)?;
    let title = format!(
        "Sweep of {input_name}{}",
        sweep
            .description
            .as_ref()
            .map(|d| format!(": {d}"))
            .unwrap_or_default()
    );
    ws.write_string_with_format(0, 0, &title, &s.title)?;
    ws.write_string_with_format(
        1,
        0,
        "Values computed by sheaf at each point (engine values); a blank row is a point that could not be evaluated.",
        &s.note,
    )?;
    let hr = 3u32;
    let head = |n: &str, u: &str| {
        if u.is_empty() {
            n.to_string()
        } else {
            format!("{n} [{u}]")
        }
    };
    ws.write_string_with_format(hr, 0, head(&input_name, &cv[0].2), &s.header)?;
    for (c, col) in sweep.show.iter().enumerate() {
        ws.write_string_with_format(hr, 1 + c as u16, head(&col.name, &cv[c + 1].2), &s.header)?;
    }
    let ncol = sweep.show.len() as u16;
    ws.write_string_with_format(hr, ncol + 1, "Note", &s.header)?;
    for c in 0..=ncol {
        ws.set_column_width(c, 16)?;
    }
    ws.set_column_width(ncol + 1, 40)?;
    ws.set_freeze_panes(hr + 1, 1)?;
    let mut m = model.clone();
    let mut cells: Vec<(u32, u16, f64)> = Vec::new();
    let mut notes: Vec<(u32, String)> = Vec::new();
    let _ = m.run_sweep(k, |p| {
        let r = hr + 1 + p.index as u32;
        cells.push((r, 0, (p.x - cv[0].1) / cv[0].0));
        match p.result {
            Ok(vals) => {
                for (c, v) in vals.iter().enumerate() {
                    cells.push((r, 1 + c as u16, (v - cv[c + 1].1) / cv[c + 1].0));
                }
            }
            Err(msg) => notes.push((r, msg.to_string())),
        }
    });
    for (r, c, v) in cells {
        ws.write_number_with_format(r, c, v, &s.plain.clone().set_num_format(sig_format(v)))?;
    }
    for (r, n) in notes {
        ws.write_string_with_format(r, ncol + 1, n, &s.fail)?;
    }
    let last = hr + sweep.points.len() as u32;
    for (c, col) in sweep.show.iter().enumerate() {
        let mut chart = Chart::new(ChartType::ScatterStraightWithMarkers);
        chart
            .add_series()
            .set_name(col.name.as_str())
            .set_categories((name.as_str(), hr + 1, 0, last, 0))
            .set_values((name.as_str(), hr + 1, 1 + c as u16, last, 1 + c as u16));
        chart
            .title()
            .set_name(&format!("{} against {input_name}", col.name));
        chart.x_axis().set_name(&head(&input_name, &cv[0].2));
        chart.y_axis().set_name(&head(&col.name, &cv[c + 1].2));
        chart.legend().set_hidden();
        chart.set_width(560).set_height(300);
        ws.insert_chart(last + 3 + 16 * c as u32, 0, &chart)?;
    }
    // Print: one page wide over the table (and the charts below it, about
    // five columns wide), not the note of row 2 that runs past them.
    page_setup(&mut ws, false);
    let last_row = last + 3 + 16 * sweep.show.len() as u32;
    ws.set_print_area(0, 0, last_row, (ncol + 1).max(5))?;
    Ok(ws)
}
