//! The calculation sheet: the worksheet in its own order. Headings and
//! notes as rows; a row per number (symbol, description, value in the
//! display unit, unit, SI value with its defined name, SI unit, basis,
//! flag, expression as written); states as a state-point table (one row
//! per state, display units per column, each cell a formula on the
//! state's named SI cell on the data sheet); checks with a live pass/FAIL.

use std::collections::BTreeSet;

use rust_xlsxwriter::{ConditionalFormatFormula, Format, FormatAlign, Formula, Worksheet};

use super::names::{self, NameKind};
use super::plan::{Basis, NodeRows, Row, flag_formula};
use super::style::{fail_highlight, fit_height, page_setup, sig_format, sig_format_n};
use super::writer::{CALC, SheetLayout, convert_formula, display_formula, num_result};
use crate::check::DisplayUnit;
use crate::report::Block;

// Columns of the calculation sheet.
pub(super) const C_SYM: u16 = 0;
pub(super) const C_DESC: u16 = 1;
pub(super) const C_VAL: u16 = 2;
pub(super) const C_UNIT: u16 = 3;
pub(super) const C_SI: u16 = 4;
pub(super) const C_SIU: u16 = 5;
pub(super) const C_BASIS: u16 = 6;
pub(super) const C_FLAG: u16 = 7;
pub(super) const C_EXPR: u16 = 8;
const HEADER_ROW: u32 = 3;
const WIDTHS: [f64; 9] = [12.0, 30.0, 13.0, 10.0, 15.0, 10.0, 8.0, 17.0, 34.0];

type XResult<T> = Result<T, rust_xlsxwriter::XlsxError>;

pub(super) fn write(l: &mut SheetLayout) -> XResult<Worksheet> {
    let mut w = CalcWriter {
        ws: Worksheet::new(),
        row: HEADER_ROW + 1,
        in_state_table: false,
    };
    w.head(l)?;
    // Consecutive note lines are one paragraph.
    let mut blocks: Vec<Block> = Vec::new();
    for b in &l.report.blocks {
        match (blocks.last_mut(), b) {
            (Some(Block::Note(prev)), Block::Note(t)) => {
                prev.push(' ');
                prev.push_str(t);
            }
            _ => blocks.push(b.clone()),
        }
    }
    let mut skipped_title = false;
    for block in &blocks {
        let is_state = matches!(block, Block::Quantity(q)
            if matches!(l.plan[q.node], Some(NodeRows::Compound { .. }))
                && l.report.states.rows.iter().any(|r| r.node == q.node));
        if !is_state {
            w.in_state_table = false;
        }
        match block {
            Block::Heading { level, text } => {
                if *level == 1 && !skipped_title && l.report.title.as_deref() == Some(text) {
                    skipped_title = true;
                    continue;
                }
                w.heading(l, *level, text)?;
            }
            Block::Note(text) => w.note(l, text)?,
            Block::Check(k) => w.check(l, *k)?,
            Block::Quantity(q) if is_state => w.state_row(l, q.node)?,
            Block::Quantity(q) => w.quantity(l, q)?,
        }
    }
    w.foot(l)?;
    Ok(w.ws)
}

struct CalcWriter {
    ws: Worksheet,
    row: u32,
    /// The previous row was a state-point table row (no new header).
    in_state_table: bool,
}

impl CalcWriter {
    fn head(&mut self, l: &mut SheetLayout) -> XResult<()> {
        let ws = &mut self.ws;
        ws.set_name(CALC)?;
        ws.write_string_with_format(0, 0, &l.title, &l.st.title)?;
        ws.write_string_with_format(
            1,
            0,
            format!(
                "{} · sha256 {} · sheaf {} · {}",
                l.info.source_name,
                &l.info
                    .source_sha256
                    .get(..12)
                    .unwrap_or(&l.info.source_sha256),
                l.info.tool_version,
                l.info.date
            ),
            &l.st.small,
        )?;
        let overridden: Vec<String> = l
            .report
            .overrides
            .iter()
            .map(|(n, t, s)| format!("{n} = {t} ({s})"))
            .collect();
        if !overridden.is_empty() {
            ws.write_string_with_format(
                2,
                0,
                format!(
                    "Inputs overridden for this package: {}",
                    overridden.join("; ")
                ),
                &l.st.flag,
            )?;
        }
        let heads = [
            "Symbol",
            "Description",
            "Value",
            "Unit",
            "SI value",
            "SI unit",
            "Basis",
            "Flag",
            "Expression as written",
        ];
        for (c, h) in heads.iter().enumerate() {
            ws.write_string_with_format(HEADER_ROW, c as u16, *h, &l.st.header)?;
        }
        for (c, w) in WIDTHS.iter().enumerate() {
            ws.set_column_width(c as u16, *w)?;
        }
        ws.set_freeze_panes(HEADER_ROW + 1, 0)?;
        ws.set_repeat_rows(HEADER_ROW, HEADER_ROW)?;
        page_setup(ws, false);
        // Results are formulas: locked; only the input cells are unlocked
        // (their format). No password: the protection prevents accidents.
        ws.protect();
        ws.set_formula_result_default("");
        Ok(())
    }

    fn fit(&mut self, texts: &[(&str, u16)]) -> XResult<()> {
        self.fit_row(self.row, texts)
    }

    fn fit_row(&mut self, row: u32, texts: &[(&str, u16)]) -> XResult<()> {
        let h = texts
            .iter()
            .map(|(t, c)| fit_height(t, WIDTHS[usize::from(*c)]))
            .fold(15.0, f64::max);
        if h > 15.0 {
            self.ws.set_row_height(row, h)?;
        }
        Ok(())
    }

    fn heading(&mut self, l: &SheetLayout, level: u8, text: &str) -> XResult<()> {
        let f = if level <= 2 { &l.st.h2 } else { &l.st.h3 };
        for c in 0..=C_EXPR {
            self.ws.write_blank(self.row, c, f)?;
        }
        self.ws.write_string_with_format(self.row, 0, text, f)?;
        self.row += 1;
        Ok(())
    }

    fn note(&mut self, l: &SheetLayout, text: &str) -> XResult<()> {
        let wide: f64 = WIDTHS[1..].iter().sum();
        let f =
            l.st.note
                .clone()
                .set_text_wrap()
                .set_align(FormatAlign::Top);
        self.ws
            .merge_range(self.row, C_DESC, self.row, C_EXPR, text, &f)?;
        let h = fit_height(text, wide);
        if h > 15.0 {
            self.ws.set_row_height(self.row, h)?;
        }
        self.row += 1;
        Ok(())
    }

    fn check(&mut self, l: &mut SheetLayout, k: usize) -> XResult<()> {
        let c = l.report.checks[k].clone();
        let row = self.row;
        let passed = c.passed.map(|p| if p { "pass" } else { "FAIL" });
        let desc = c.description.clone().unwrap_or_default();
        self.ws
            .write_string_with_format(row, C_SYM, "check", &l.st.label)?;
        self.ws
            .write_string_with_format(row, C_DESC, &desc, &l.st.wrap)?;
        self.ws
            .write_string_with_format(row, C_EXPR, &c.text, &l.st.wrap)?;
        let plan_e = match &l.plan[c.node] {
            Some(NodeRows::Check(e, _)) => e.clone(),
            _ => None,
        };
        match (plan_e, passed) {
            (Some(e), Some(p)) => {
                let f = Formula::new(format!("IF({},\"pass\",\"FAIL\")", e.text)).set_result(p);
                self.ws
                    .write_formula_with_format(row, C_VAL, f, &l.st.check)?;
                self.ws
                    .add_conditional_format(row, C_VAL, row, C_VAL, &fail_highlight())?;
                self.ws
                    .write_string_with_format(row, C_BASIS, "formula", &l.st.unit)?;
            }
            (None, Some(p)) => {
                self.ws
                    .write_string_with_format(row, C_VAL, p, &l.st.engine)?;
                self.ws
                    .write_string_with_format(row, C_BASIS, "engine", &l.st.unit)?;
            }
            (_, None) => {
                self.ws
                    .write_string_with_format(row, C_VAL, "not evaluated", &l.st.flag)?;
            }
        }
        if let Some(f) = flag_formula(l.model, &l.stale[c.node], "stale: re-run sheaf") {
            self.ws.write_formula_with_format(
                row,
                C_FLAG,
                Formula::new(f).set_result(""),
                &l.st.flag,
            )?;
        }
        self.fit(&[(&desc, C_DESC), (&c.text, C_EXPR)])?;
        l.check_cells.push((k, row));
        self.row += 1;
        Ok(())
    }

    fn quantity(&mut self, l: &mut SheetLayout, q: &crate::report::QuantityRow) -> XResult<()> {
        let i = q.node;
        let plan = l.plan[i].take();
        match &plan {
            Some(NodeRows::Number(r)) => {
                self.number_row(l, r, i)?;
            }
            Some(NodeRows::Compound {
                head,
                text,
                expr,
                fields,
            }) => {
                let desc = q.description.clone().unwrap_or_default();
                self.ws
                    .write_string_with_format(self.row, C_SYM, head, &l.st.label)?;
                self.ws
                    .write_string_with_format(self.row, C_DESC, &desc, &l.st.wrap)?;
                self.ws
                    .write_string_with_format(self.row, C_VAL, text, &l.st.unit)?;
                self.ws
                    .write_string_with_format(self.row, C_EXPR, expr, &l.st.wrap)?;
                self.fit(&[(&desc, C_DESC), (expr, C_EXPR)])?;
                self.row += 1;
                for r in fields {
                    self.number_row(l, r, i)?;
                }
            }
            Some(NodeRows::Text(t)) => {
                let desc = q.description.clone().unwrap_or_default();
                let expr = l.model.nodes()[i].expr_span.slice(l.model.source());
                self.ws
                    .write_string_with_format(self.row, C_SYM, &q.name, &l.st.label)?;
                self.ws
                    .write_string_with_format(self.row, C_DESC, &desc, &l.st.wrap)?;
                self.ws.write_string(self.row, C_VAL, t)?;
                self.ws
                    .write_string_with_format(self.row, C_EXPR, expr, &l.st.wrap)?;
                self.fit(&[(&desc, C_DESC), (expr, C_EXPR)])?;
                self.row += 1;
            }
            _ => {}
        }
        l.plan[i] = plan;
        Ok(())
    }

    /// A row of the state-point table; the table's header comes before
    /// the first state of a run of states.
    fn state_row(&mut self, l: &mut SheetLayout, node: usize) -> XResult<()> {
        let table = &l.report.states;
        let Some(sr) = table.rows.iter().find(|r| r.node == node) else {
            return Ok(());
        };
        let ncols = table.columns.len() as u16;
        let expr_col = (C_VAL + ncols).max(C_EXPR);
        if !self.in_state_table {
            self.ws
                .write_string_with_format(self.row, C_SYM, "State", &l.st.subheader)?;
            self.ws
                .write_string_with_format(self.row, C_DESC, "Description", &l.st.subheader)?;
            for (k, c) in table.columns.iter().enumerate() {
                let h = if c.unit.is_empty() {
                    c.field.name().to_string()
                } else {
                    format!("{} {}", c.field.name(), c.unit)
                };
                self.ws.write_string_with_format(
                    self.row,
                    C_VAL + k as u16,
                    h,
                    &l.st.subheader_num,
                )?;
            }
            for c in C_VAL + ncols..expr_col {
                self.ws.write_blank(self.row, c, &l.st.subheader)?;
            }
            self.ws.write_string_with_format(
                self.row,
                expr_col,
                "Expression as written",
                &l.st.subheader,
            )?;
            self.row += 1;
            self.in_state_table = true;
        }
        let fields: Vec<Row> = match &l.plan[node] {
            Some(NodeRows::Compound { fields, .. }) => fields
                .iter()
                .map(|r| Row {
                    symbol: r.symbol.clone(),
                    description: r.description.clone(),
                    expr: r.expr.clone(),
                    si_name: r.si_name.clone(),
                    si: r.si,
                    dim: r.dim,
                    display: r.display.clone(),
                    basis: r.basis.clone(),
                })
                .collect(),
            _ => Vec::new(),
        };
        let row = self.row;
        let desc = sr.description.clone().unwrap_or_default();
        self.ws
            .write_string_with_format(row, C_SYM, &sr.name, &l.st.label)?;
        self.ws
            .write_string_with_format(row, C_DESC, &desc, &l.st.wrap)?;
        let stale = flag_condition(l, &l.stale[node]);
        for (k, c) in table.columns.iter().enumerate() {
            let col = C_VAL + k as u16;
            let name = format!("{}.{}", sr.name, c.field.name());
            let Some(f) = fields.iter().find(|f| f.symbol == name) else {
                self.ws
                    .write_string_with_format(row, col, "–", &l.st.live_center)?;
                continue;
            };
            let Some(si) = f.si else { continue };
            let (factor, offset) = match &c.display {
                DisplayUnit::Fixed { unit, .. } => (unit.factor, unit.offset),
                DisplayUnit::Auto => (1.0, 0.0),
            };
            let shown = sr.cells.get(k).copied().flatten().unwrap_or(si);
            let engine = matches!(f.basis, Basis::Engine);
            let base = if engine { &l.st.engine } else { &l.st.live };
            let fmt = base.clone().set_num_format(sig_format(shown));
            self.ws.write_formula_with_format(
                row,
                col,
                Formula::new(convert_formula(&f.si_name, factor, offset))
                    .set_result(num_result(shown)),
                &fmt,
            )?;
            if engine && let Some(cond) = &stale {
                self.ws.add_conditional_format(
                    row,
                    col,
                    row,
                    col,
                    &ConditionalFormatFormula::new()
                        .set_rule(Formula::new(format!("={cond}")))
                        .set_format(l.st.stale_cell.clone()),
                )?;
            }
        }
        self.ws
            .write_string_with_format(row, expr_col, &sr.expr, &l.st.wrap)?;
        self.fit(&[(&desc, C_DESC), (&sr.expr, C_EXPR)])?;
        self.row += 1;
        Ok(())
    }

    fn number_row(&mut self, l: &mut SheetLayout, r: &Row, node: usize) -> XResult<()> {
        let row = self.row;
        self.row += 1;
        l.define(r.si_name.clone(), CALC, row, C_SI);
        let st = &l.st;
        self.ws
            .write_string_with_format(row, C_SYM, &r.symbol, &st.label)?;
        self.ws
            .write_string_with_format(row, C_DESC, &r.description, &st.wrap)?;
        self.ws
            .write_string_with_format(row, C_EXPR, &r.expr, &st.wrap)?;
        self.ws
            .write_string_with_format(row, C_SIU, crate::units::si_unit(r.dim), &st.unit)?;
        self.fit_row(row, &[(&r.description, C_DESC), (&r.expr, C_EXPR)])?;
        let Some(si) = r.si else {
            self.ws
                .write_string_with_format(row, C_VAL, "not evaluated", &st.flag)?;
            return Ok(());
        };
        let si_fmt = |f: &Format| f.clone().set_num_format(sig_format_n(si, 7));
        match &r.basis {
            Basis::Input => {
                let Some((sh, _)) = super::input_shown(l.model, node) else {
                    return Ok(());
                };
                let iname = names::name_of(NameKind::Input, &r.symbol);
                // An input solved by a `find` is a computed value: shaded and
                // locked like an engine value (its stale flag is on the
                // Cases sheet).
                let found = l.model.find_of(node).is_some();
                let value_fmt = if found { &st.engine } else { &st.input };
                self.ws
                    .write_number_with_format(row, C_VAL, sh.value, value_fmt)?;
                self.ws
                    .write_string_with_format(row, C_UNIT, &sh.unit, &st.unit)?;
                let mut f = iname.clone();
                if sh.factor != 1.0 {
                    f = format!("{f}*{}", super::formula::number_text(sh.factor));
                }
                if sh.offset != 0.0 {
                    f = format!("{f}+{}", super::formula::number_text(sh.offset));
                }
                self.ws.write_formula_with_format(
                    row,
                    C_SI,
                    Formula::new(f).set_result(num_result(si)),
                    &si_fmt(&st.live),
                )?;
                let basis = if found { "found" } else { "input" };
                self.ws
                    .write_string_with_format(row, C_BASIS, basis, &st.unit)?;
                if found {
                    self.ws.write_string_with_format(
                        row,
                        C_FLAG,
                        "solved by find; see the Cases sheet",
                        &st.flag_wrap,
                    )?;
                } else if let Some(o) = l.model.override_of(node) {
                    let written = l.model.nodes()[node].expr_span.slice(l.model.source());
                    let from = match &o.source {
                        crate::model::OverrideSource::CommandLine => "--set".to_string(),
                        other => other.to_string(),
                    };
                    let text = format!("set by {from}; worksheet {written}");
                    self.ws
                        .write_string_with_format(row, C_FLAG, &text, &st.flag_wrap)?;
                    let h = fit_height(&text, WIDTHS[usize::from(C_FLAG)]);
                    self.ws.set_row_height(row, h.max(15.0))?;
                }
                l.defined
                    .push((iname, super::writer::abs_ref(CALC, row, C_VAL)));
                l.input_rows.push((node, row));
            }
            Basis::Live(_) | Basis::Engine => {
                let (df, dv, unit) = display_formula(&r.si_name, &r.display, r.dim, si);
                let (fmt, basis) = match &r.basis {
                    Basis::Live(e) => {
                        self.ws.write_formula_with_format(
                            row,
                            C_SI,
                            Formula::new(&e.text).set_result(num_result(si)),
                            &si_fmt(&st.live),
                        )?;
                        (&st.live, "formula")
                    }
                    _ => {
                        self.ws
                            .write_number_with_format(row, C_SI, si, &si_fmt(&st.engine))?;
                        (&st.engine, "engine")
                    }
                };
                self.ws.write_formula_with_format(
                    row,
                    C_VAL,
                    Formula::new(df).set_result(num_result(dv)),
                    &fmt.clone().set_num_format(sig_format(dv)),
                )?;
                self.ws
                    .write_string_with_format(row, C_UNIT, &unit, &st.unit)?;
                self.ws
                    .write_string_with_format(row, C_BASIS, basis, &st.unit)?;
                let text = if basis == "engine" {
                    "stale: re-run sheaf"
                } else {
                    "stale: uses an engine value"
                };
                if let Some(f) = flag_formula(l.model, &l.stale[node], text) {
                    self.ws.write_formula_with_format(
                        row,
                        C_FLAG,
                        Formula::new(f).set_result(""),
                        &st.flag,
                    )?;
                }
            }
        }
        Ok(())
    }

    /// Notes under the table, each merged across the table's columns and
    /// wrapped, so that no text runs past the last column: text that spills
    /// over the edge widens the printed area and shrinks the whole sheet
    /// on the page.
    fn foot(&mut self, l: &SheetLayout) -> XResult<()> {
        let wide: f64 = WIDTHS.iter().sum();
        let f =
            l.st.small
                .clone()
                .set_text_wrap()
                .set_align(FormatAlign::Top);
        let basis = "Basis: input = editable value (the only unlocked cells); formula = live formula on the SI cells; \
             engine = value computed by sheaf (no closed form), flagged when an input it depends on is edited; \
             found = input solved by sheaf from a `find` condition (not editable; its stale flag is on the Cases sheet).";
        let states = "State points: each value is a formula on the state's named SI cell (Data sheet); \
             an engine value turns red when an input it depends on is edited.";
        let notes = l.report.states.notes.iter().map(String::as_str);
        for (row, text) in (self.row + 1..).zip(notes.chain([basis, states])) {
            self.ws.merge_range(row, C_SYM, row, C_EXPR, text, &f)?;
            self.ws.set_row_height(row, fit_height(text, wide))?;
        }
        Ok(())
    }
}

/// `OR(d_..., ...)` over the inputs in `set` (None when empty).
pub(super) fn flag_condition(l: &SheetLayout, set: &BTreeSet<usize>) -> Option<String> {
    if set.is_empty() {
        return None;
    }
    let conds: Vec<String> = set
        .iter()
        .filter_map(|&i| l.model.nodes()[i].name.as_ref())
        .map(|n| names::name_of(NameKind::Differs, &n.name))
        .collect();
    Some(format!("OR({})", conds.join(",")))
}
