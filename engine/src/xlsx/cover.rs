//! The cover: title block, a live status (stale inputs, failed checks),
//! a "not checked" mark until a checker signs, sign-off fields, the
//! overridden inputs, the worksheets used (path and sha256), the checks with value and limit, method and
//! sources, the caution, warnings and legend.

use rust_xlsxwriter::{
    Color, ConditionalFormatText, ConditionalFormatTextRule, Format, FormatAlign, FormatBorder,
    Formula, Worksheet,
};

use super::calc_sheet::{C_VAL, flag_condition};
use super::plan::NodeRows;
use super::style::{fail_highlight, fit_height, page_setup, sig_format};
use super::writer::{CALC, COVER, DATA, SheetLayout, cell_ref, convert_formula, num_result};

type XResult<T> = Result<T, rust_xlsxwriter::XlsxError>;

const WIDTHS: [f64; 5] = [20.0, 42.0, 15.0, 15.0, 13.0];
/// Characters across columns B..E (merged text).
const WIDE: f64 = 85.0;

/// Text of the cover's status line for the engine's results.
pub(super) fn status_text(l: &SheetLayout) -> String {
    let n = l.report.checks.len();
    let failed = l
        .report
        .checks
        .iter()
        .filter(|c| c.passed == Some(false))
        .count();
    if n == 0 {
        "no checks in this worksheet".into()
    } else if failed > 0 {
        format!("FAIL: {failed} of {n} checks fail")
    } else {
        format!("all {n} checks pass")
    }
}

pub(super) fn write(l: &mut SheetLayout) -> XResult<Worksheet> {
    let mut cover = Worksheet::new();
    cover.set_name(COVER)?;
    for (c, w) in WIDTHS.iter().enumerate() {
        cover.set_column_width(c as u16, *w)?;
    }
    page_setup(&mut cover, false);
    cover.set_formula_result_default("");
    let st = &l.st;
    let big = Format::new()
        .set_bold()
        .set_font_size(13)
        .set_border(FormatBorder::Medium)
        .set_align(FormatAlign::VerticalCenter);
    let bad = Format::new()
        .set_bold()
        .set_font_color(Color::White)
        .set_background_color(Color::RGB(0xB0_00_20));
    let good = Format::new()
        .set_bold()
        .set_font_color(Color::White)
        .set_background_color(Color::RGB(0x2E_6B_3A));
    let wrap = st.wrap.clone();

    cover.write_string_with_format(0, 0, "Calculation package", &st.title)?;
    cover.merge_range(1, 0, 1, 4, &l.title, &st.h3)?;

    // Sign-off and package fields (rows 5..), the status lines (3, 4)
    // refer to them and to the check rows below.
    let mut cr = 6;
    let checked_row;
    {
        let fields: Vec<(&str, String, bool)> = vec![
            ("Project", l.meta("project"), false),
            ("Source file", l.info.source_name.clone(), false),
            ("Source sha256", l.info.source_sha256.clone(), false),
            ("sheaf version", l.info.tool_version.clone(), false),
            ("Date", l.info.date.clone(), false),
            ("Prepared by", l.meta("prepared"), false),
            ("Checked by", l.meta("checked"), true),
            ("Revision", l.meta("revision"), false),
        ];
        let mut crow = cr;
        for (label, value, editable) in fields {
            cover.write_string_with_format(cr, 0, label, &st.label)?;
            let f = if editable {
                st.input.clone()
            } else {
                Format::new()
            };
            cover.merge_range(cr, 1, cr, 4, &value, &f)?;
            if editable {
                crow = cr;
            }
            cr += 1;
        }
        checked_row = crow;
    }
    for (k, v) in l.report.meta.clone() {
        if ["project", "prepared", "checked", "revision"].contains(&k.as_str()) || v.is_empty() {
            continue;
        }
        cover.write_string_with_format(cr, 0, &k, &st.label)?;
        cover.merge_range(cr, 1, cr, 4, &v, &wrap)?;
        cr += 1;
    }
    if !l.report.overrides.is_empty() {
        cr += 1;
        section(&mut cover, cr, "Inputs overridden for this package", &st.h2)?;
        cr += 1;
        for (name, text, source) in l.report.overrides.clone() {
            let written = l
                .model
                .node_index(&name)
                .map(|i| l.model.nodes()[i].expr_span.slice(l.model.source()))
                .unwrap_or_default();
            cover.write_string_with_format(cr, 0, &name, &st.label)?;
            cover.merge_range(
                cr,
                1,
                cr,
                4,
                &format!("{text}, from the {source}; the worksheet says {written}"),
                &st.flag_wrap,
            )?;
            cr += 1;
        }
    }

    // The worksheets this one uses (`use`, at any depth): the path as
    // written in the using worksheet and the sha256 of the text read, so a
    // reviewer can tell which version of each file the results rest on.
    let used = l.report.used_files.clone();
    if !used.is_empty() {
        cr += 1;
        section(&mut cover, cr, "Worksheets used", &st.h2)?;
        cr += 1;
        for (c, h) in ["Used as", "File (as written)"].iter().enumerate() {
            cover.write_string_with_format(cr, c as u16, *h, &st.subheader)?;
        }
        cover.merge_range(cr, 2, cr, 4, "sha256", &st.subheader)?;
        cr += 1;
        let hash = st.small.clone().set_text_wrap();
        for u in &used {
            cover.write_string_with_format(cr, 0, &u.prefix, &st.label)?;
            cover.write_string_with_format(cr, 1, &u.name, &wrap)?;
            cover.merge_range(cr, 2, cr, 4, &u.sha256, &hash)?;
            let h = fit_height(&u.name, WIDTHS[1])
                .max(fit_height(&u.sha256, WIDTHS[2] + WIDTHS[3] + WIDTHS[4]));
            if h > 15.0 {
                cover.set_row_height(cr, h)?;
            }
            cr += 1;
        }
    }

    // Checks: value and limit beside a live result.
    cr += 1;
    section(&mut cover, cr, "Checks", &st.h2)?;
    cr += 1;
    for (c, h) in ["Check", "Description", "Value", "Limit", "Result"]
        .iter()
        .enumerate()
    {
        cover.write_string_with_format(cr, c as u16, *h, &st.subheader)?;
    }
    cr += 1;
    let first_check = cr;
    for (k, calc_row) in l.check_cells.clone() {
        let c = l.report.checks[k].clone();
        cover.write_string_with_format(cr, 0, &c.text, &st.label_wrap)?;
        let desc = c.description.clone().unwrap_or_default();
        cover.write_string_with_format(cr, 1, &desc, &wrap)?;
        let ops: Vec<Option<super::formula::Fragment>> = match &l.plan[c.node] {
            Some(NodeRows::Check(_, ops)) => ops.clone(),
            _ => Vec::new(),
        };
        let node_ops = l.model.nodes()[c.node].operands.clone();
        if c.operands.len() == 2 {
            for k in 0..2 {
                let col = 2 + k as u16;
                let (Some(sh), Some(op)) = (&c.operands[k].shown, node_ops.get(k)) else {
                    continue;
                };
                let si = l.model.operand_values(c.node).get(k).copied().flatten();
                let fmt = Format::new()
                    .set_num_format(format!("{} \"{}\"", sig_format(sh.value), sh.unit))
                    .set_align(FormatAlign::Right);
                match (ops.get(k).cloned().flatten(), si) {
                    (Some(e), Some(si)) => {
                        let s = super::shown(&op.display, op.dim, si);
                        let (factor, offset) = if sh.unit.is_empty() {
                            (1.0, 0.0)
                        } else {
                            (s.factor, s.offset)
                        };
                        let x = if e.text.chars().all(|ch| ch.is_alphanumeric() || ch == '_') {
                            e.text.clone()
                        } else {
                            format!("({})", e.text)
                        };
                        cover.write_formula_with_format(
                            cr,
                            col,
                            Formula::new(convert_formula(&x, factor, offset))
                                .set_result(num_result(sh.value)),
                            &fmt,
                        )?;
                    }
                    _ => {
                        cover.write_number_with_format(cr, col, sh.value, &fmt)?;
                    }
                }
            }
        } else {
            let parts: Vec<String> = c
                .operands
                .iter()
                .filter_map(|o| o.shown.as_ref())
                .map(|s| {
                    format!("{} {}", crate::units::format_sig(s.value, 4), s.unit)
                        .trim_end()
                        .to_string()
                })
                .collect();
            cover.merge_range(cr, 2, cr, 3, &parts.join(" / "), &wrap)?;
        }
        let res = c
            .passed
            .map_or("not evaluated", |p| if p { "pass" } else { "FAIL" });
        let target = cell_ref(CALC, calc_row, C_VAL);
        let f = match flag_condition(l, &l.stale[c.node]) {
            Some(cond) => format!("IF({cond},\"stale: re-run sheaf\",{target})"),
            None => target,
        };
        cover.write_formula_with_format(
            cr,
            4,
            Formula::new(f).set_result(res),
            &st.check.clone().set_text_wrap(),
        )?;
        cover.add_conditional_format(cr, 4, cr, 4, &fail_highlight())?;
        cover.add_conditional_format(
            cr,
            4,
            cr,
            4,
            &ConditionalFormatText::new()
                .set_rule(ConditionalFormatTextRule::BeginsWith("stale".into()))
                .set_format(bad.clone()),
        )?;
        let h = fit_height(&desc, WIDTHS[1]).max(fit_height(&c.text, WIDTHS[0]));
        if h > 15.0 {
            cover.set_row_height(cr, h)?;
        }
        cr += 1;
    }
    let last_check = cr;
    if l.check_cells.is_empty() {
        cover.write_string(cr, 0, "(no checks)")?;
        cr += 1;
    }

    // Status (live) and review mark, at the top.
    let n = l.check_cells.len();
    let range = format!(
        "{}:{}",
        cell_ref(COVER, first_check, 4),
        cell_ref(COVER, last_check.saturating_sub(1).max(first_check), 4)
            .rsplit('!')
            .next()
            .unwrap_or_default()
    );
    let checks_status = if n == 0 {
        "\"no checks in this worksheet\"".to_string()
    } else {
        format!(
            "IF(COUNTIF({range},\"FAIL\")>0,\"FAIL: \"&COUNTIF({range},\"FAIL\")&\" of {n} checks fail\",\"all {n} checks pass\")"
        )
    };
    let status = match l.differs_rows {
        Some((a, b)) => format!(
            "IF(SUM({}:{})>0,\"results stale: re-run sheaf (an input differs from the value sheaf used)\",{checks_status})",
            cell_ref(DATA, a, 4),
            cell_ref(DATA, b, 4).rsplit('!').next().unwrap_or_default()
        ),
        None => checks_status,
    };
    cover.write_string_with_format(3, 0, "Status", &big)?;
    cover.merge_range(3, 1, 3, 4, "", &big)?;
    cover.write_formula_with_format(3, 1, Formula::new(status).set_result(status_text(l)), &big)?;
    cover.set_row_height(3, 24)?;
    for (rule, f) in [
        ("FAIL", &bad),
        ("results stale", &bad),
        ("all", &good),
        ("no checks", &good),
    ] {
        cover.add_conditional_format(
            3,
            1,
            3,
            4,
            &ConditionalFormatText::new()
                .set_rule(ConditionalFormatTextRule::BeginsWith(rule.into()))
                .set_format(f.clone()),
        )?;
    }
    let checked = cell_ref(COVER, checked_row, 1);
    let checked_now = l.meta("checked");
    let review = format!(
        "IF(LEN(TRIM({checked}))=0,\"NOT CHECKED: no checker has signed this package\",\"checked by \"&{checked})"
    );
    let review_now = if checked_now.trim().is_empty() {
        "NOT CHECKED: no checker has signed this package".to_string()
    } else {
        format!("checked by {checked_now}")
    };
    cover.write_string_with_format(4, 0, "Review", &big)?;
    cover.merge_range(4, 1, 4, 4, "", &big)?;
    cover.write_formula_with_format(4, 1, Formula::new(review).set_result(review_now), &big)?;
    cover.set_row_height(4, 24)?;
    for (rule, f) in [("NOT CHECKED", &bad), ("checked by", &good)] {
        cover.add_conditional_format(
            4,
            1,
            4,
            4,
            &ConditionalFormatText::new()
                .set_rule(ConditionalFormatTextRule::BeginsWith(rule.into()))
                .set_format(f.clone()),
        )?;
    }

    // Method and sources.
    cr += 1;
    section(&mut cover, cr, "Method and sources", &st.h2)?;
    cr += 1;
    for m in l.report.methods.clone() {
        let text = format!(
            "Source: {}\nValidity: {}\nReference state of h and s: {}\nUsed by: {}",
            m.citation,
            m.range,
            m.reference,
            m.used_by.join(", ")
        );
        cover.write_string_with_format(cr, 0, &m.model, &st.label_wrap)?;
        cover.merge_range(cr, 1, cr, 4, &text, &wrap)?;
        cover.set_row_height(
            cr,
            fit_height(&text, WIDE).max(fit_height(&m.model, WIDTHS[0])),
        )?;
        cr += 1;
    }
    let method_note = "Relations: mass and energy balances and the device models as written on the \
                       calculation sheet; entropy generation and exergy with the dead state written \
                       in the worksheet.";
    cover.merge_range(cr, 0, cr, 4, method_note, &st.small.clone().set_text_wrap())?;
    cover.set_row_height(cr, fit_height(method_note, WIDE + WIDTHS[0]))?;
    cr += 2;

    let caution = Format::new()
        .set_text_wrap()
        .set_bold()
        .set_font_color(Color::RGB(0x8A_1C_1C))
        .set_align(FormatAlign::Top);
    cover.merge_range(cr, 0, cr, 4, crate::report::CAUTION, &caution)?;
    cover.set_row_height(
        cr,
        fit_height(crate::report::CAUTION, WIDE + WIDTHS[0]) + 4.0,
    )?;
    cr += 1;
    // What gauge pressures are relative to: this worksheet's reference and
    // each used worksheet's own (a used worksheet keeps its `gauge`).
    let gauge = l.report.gauge_note();
    let gauge = if gauge.is_empty() && l.report.uses_gauge {
        crate::report::GAUGE_NOTE.to_string()
    } else {
        gauge
    };
    if !gauge.is_empty() {
        cover.merge_range(cr, 0, cr, 4, &gauge, &wrap)?;
        cover.set_row_height(cr, fit_height(&gauge, WIDE + WIDTHS[0]))?;
        cr += 1;
    }
    for w in l.report.warnings.clone() {
        let text = format!("Warning: {w}");
        cover.merge_range(cr, 0, cr, 4, &text, &wrap)?;
        cover.set_row_height(cr, fit_height(&text, WIDE + WIDTHS[0]))?;
        cr += 1;
    }
    cr += 1;
    cover.write_string_with_format(cr, 0, "Legend", &st.label)?;
    cr += 1;
    cover.write_string_with_format(cr, 0, "input", &st.input)?;
    cover.write_string(cr, 1, "editable input value (in the unit shown)")?;
    cr += 1;
    cover.write_string_with_format(cr, 0, "formula", &st.live)?;
    cover.write_string(cr, 1, "live formula, recomputes when an input is edited")?;
    cr += 1;
    cover.write_string_with_format(cr, 0, "engine", &st.engine)?;
    cover.merge_range(
        cr,
        1,
        cr,
        4,
        "value computed by sheaf (no closed form); flagged stale when an input it depends on is edited",
        &Format::new(),
    )?;
    cover.protect();
    Ok(cover)
}

fn section(ws: &mut Worksheet, row: u32, text: &str, f: &Format) -> XResult<()> {
    for c in 0..5u16 {
        ws.write_blank(row, c, f)?;
    }
    ws.write_string_with_format(row, 0, text, f)?;
    Ok(())
}
