//! Laying the package out: cover, calculation and data sheets.

use std::collections::BTreeSet;
use std::path::Path;

use rust_xlsxwriter::{
    Color, ConditionalFormatText, ConditionalFormatTextRule, Format, FormatAlign, FormatBorder,
    Formula, Workbook, Worksheet,
};

use super::formula::{self, Env, Ex, Own, SubSym};
use super::names::{self, NameKind};
use super::{PackageInfo, XlsxError, shown};
use crate::check::{DisplayUnit, NodeKind};
use crate::eval::{Code, Value};
use crate::model::{Model, Status};
use crate::report::{Block, field_words, substance_fields};
use crate::thermo::{Field, Substance};
use crate::types::Ty;
use crate::units::Dim;

pub(super) const CALC: &str = "Calculation";
const COVER: &str = "Cover";
const DATA: &str = "Data";

// Columns of the calculation sheet.
const C_SYM: u16 = 0;
const C_DESC: u16 = 1;
const C_VAL: u16 = 2;
const C_UNIT: u16 = 3;
const C_EXPR: u16 = 4;
const C_SI: u16 = 5;
const C_SIU: u16 = 6;
const C_BASIS: u16 = 7;
const C_FLAG: u16 = 8;
const HEADER_ROW: u32 = 3;

/// How a row's SI value is obtained.
#[derive(Clone, Debug)]
enum Basis {
    /// An input: SI from the editable cell.
    Input,
    /// A live formula.
    Live(Ex),
    /// The engine's value (no closed form).
    Engine,
}

/// One number row of the calculation sheet.
struct Row {
    symbol: String,
    description: String,
    expr: String,
    /// Defined name of the SI cell.
    si_name: String,
    si: Option<f64>,
    dim: Dim,
    display: DisplayUnit,
    basis: Basis,
}

/// What a node contributes.
enum NodeRows {
    Number(Box<Row>),
    Compound {
        head: String,
        text: String,
        expr: String,
        fields: Vec<Row>,
    },
    Check(Option<Ex>),
    Text(String),
}

struct Styles {
    title: Format,
    header: Format,
    h2: Format,
    h3: Format,
    note: Format,
    input: Format,
    live: Format,
    engine: Format,
    wrap: Format,
    flag: Format,
    check: Format,
    label: Format,
    small: Format,
    unit: Format,
}

fn styles() -> Styles {
    let border = Color::RGB(0x9A_A5_B1);
    Styles {
        title: Format::new()
            .set_bold()
            .set_font_size(14)
            .set_font_color(Color::RGB(0x1D_35_57)),
        header: Format::new()
            .set_bold()
            .set_font_color(Color::White)
            .set_background_color(Color::RGB(0x1D_35_57))
            .set_border_bottom(FormatBorder::Medium),
        h2: Format::new()
            .set_bold()
            .set_font_color(Color::RGB(0x1D_35_57))
            .set_background_color(Color::RGB(0xD7_E3_EE))
            .set_border_bottom(FormatBorder::Thin),
        h3: Format::new()
            .set_bold()
            .set_italic()
            .set_font_color(Color::RGB(0x1D_35_57)),
        note: Format::new()
            .set_italic()
            .set_font_color(Color::RGB(0x4A_55_60)),
        input: Format::new()
            .set_background_color(Color::RGB(0xFF_E8_C2))
            .set_border(FormatBorder::Thin)
            .set_border_color(Color::RGB(0xC0_7A_1E))
            .set_bold()
            .set_unlocked(),
        live: Format::new()
            .set_border(FormatBorder::Hair)
            .set_border_color(border),
        engine: Format::new()
            .set_background_color(Color::RGB(0xE6_E0_F0))
            .set_italic()
            .set_font_color(Color::RGB(0x3E_2F_63))
            .set_border(FormatBorder::Hair)
            .set_border_color(border),
        wrap: Format::new().set_text_wrap().set_align(FormatAlign::Top),
        flag: Format::new()
            .set_num_format(";;;@")
            .set_bold()
            .set_font_color(Color::RGB(0xB0_00_20)),
        check: Format::new().set_bold().set_align(FormatAlign::Center),
        label: Format::new().set_bold(),
        small: Format::new().set_font_color(Color::RGB(0x4A_55_60)),
        unit: Format::new().set_indent(1),
    }
}

/// A failed check turns red when a spreadsheet recomputes it.
fn fail_highlight() -> ConditionalFormatText {
    ConditionalFormatText::new()
        .set_rule(ConditionalFormatTextRule::BeginsWith("FAIL".to_string()))
        .set_format(
            Format::new()
                .set_bold()
                .set_font_color(Color::White)
                .set_background_color(Color::RGB(0xB0_00_20)),
        )
}

/// Number format showing about four significant figures of `v` (the
/// shown value of a computed row; the SI cell keeps full precision).
fn sig_format(v: f64) -> String {
    let a = v.abs();
    if a == 0.0 {
        return "0".into();
    }
    if !(1e-3..1e6).contains(&a) {
        return "0.000E+00".into();
    }
    let decimals = (3 - a.log10().floor() as i32).clamp(0, 6) as usize;
    if decimals == 0 {
        "0".into()
    } else {
        format!("0.{}", "0".repeat(decimals))
    }
}

fn werr(path: &Path) -> impl Fn(rust_xlsxwriter::XlsxError) -> XlsxError + '_ {
    move |e| XlsxError::Write {
        path: path.display().to_string(),
        message: e.to_string(),
    }
}

fn num_result(x: f64) -> String {
    format!("{x}")
}

/// Display formula of an SI cell: (name - offset) / factor.
fn display_formula(
    si_name: &str,
    display: &DisplayUnit,
    dim: Dim,
    si: f64,
) -> (String, f64, String) {
    let sh = shown(display, dim, si);
    let mut f = si_name.to_string();
    if sh.offset != 0.0 {
        f = format!("({f}-{})", formula::number_text(sh.offset));
    }
    if sh.factor != 1.0 {
        f = format!("{f}/{}", formula::number_text(sh.factor));
    }
    (f, sh.value, sh.unit)
}

/// The calculation package of an evaluated model, as the bytes of an
/// xlsx file (the CLI writes them to disk).
pub fn write_package(model: &Model, info: &PackageInfo) -> Result<Vec<u8>, XlsxError> {
    package_bytes(model, info).map_err(werr(Path::new("the package")))
}

/// Plan the rows of every node (topological order for the compiler).
fn plan(model: &Model) -> Vec<Option<NodeRows>> {
    let nodes = model.nodes();
    let names: Vec<Option<String>> = nodes
        .iter()
        .map(|n| n.name.as_ref().map(|i| i.name.clone()))
        .collect();
    let is_number = |i: usize| matches!(nodes.get(i).map(|n| n.ty), Some(Ty::Num(_)));
    let is_state = |i: usize| matches!(nodes.get(i).map(|n| n.ty), Some(Ty::State(_)));
    let has_field = |i: usize, f: Field| match model.values().get(i) {
        Some(Value::State(sv)) => sv.st.get(f).is_some(),
        _ => false,
    };
    let mut env = Env {
        names: &names,
        subs: vec![None; nodes.len()],
        has_field: &has_field,
        is_number: &is_number,
        is_state: &is_state,
    };
    let src = model.source();
    let mut out: Vec<Option<NodeRows>> = (0..nodes.len()).map(|_| None).collect();
    for &i in model.order() {
        let node = &nodes[i];
        let name = names[i].clone().unwrap_or_default();
        let expr = node.expr_span.slice(src).to_string();
        let desc = node.description.clone().unwrap_or_default();
        let ok = matches!(model.status(i), Status::Ok);
        let rows = match (node.kind, node.ty, model.value(i)) {
            (NodeKind::Check, _, _) => NodeRows::Check(env.num(&node.code)),
            (_, Ty::Num(q), v) => NodeRows::Number(Box::new(Row {
                si_name: names::name_of(NameKind::Quantity, &name),
                symbol: name,
                description: desc,
                expr,
                si: v.as_num(),
                dim: q.dim,
                display: node.display.clone(),
                basis: if node.kind == NodeKind::Input {
                    Basis::Input
                } else {
                    match env.num(&node.code) {
                        Some(e) => Basis::Live(e),
                        None => Basis::Engine,
                    }
                },
            })),
            (_, _, Value::State(sv)) if ok => {
                let sub = env.state_substance(&node.code);
                let def = match &node.code {
                    Code::Slot(_) => None,
                    c => env.state_def(c),
                };
                let alias = match &node.code {
                    Code::Slot(j) => names.get(*j).cloned().flatten(),
                    _ => None,
                };
                let mut fields = Vec::new();
                for f in Field::ALL {
                    let Some(x) = sv.st.get(f) else { continue };
                    let basis = if let Some(a) = &alias {
                        Basis::Live(Ex::name(names::field_name(a, f.name())))
                    } else {
                        let e = def.as_ref().and_then(|d| match f {
                            Field::T => Some(d.t.clone()),
                            Field::P => Some(d.p.clone()),
                            _ => formula::field_formula(&d.sub, f, &Own::Node(&name)),
                        });
                        e.map_or(Basis::Engine, Basis::Live)
                    };
                    fields.push(Row {
                        symbol: format!("{name}.{}", f.name()),
                        description: field_words(f).to_string(),
                        expr: String::new(),
                        si_name: names::field_name(&name, f.name()),
                        si: Some(x),
                        dim: field_dim(f),
                        display: DisplayUnit::Auto,
                        basis,
                    });
                }
                env.subs[i] = sub;
                NodeRows::Compound {
                    head: name.clone(),
                    text: format!("state of {}", sv.sub),
                    expr,
                    fields,
                }
            }
            (_, _, Value::Substance(s)) if ok => {
                let sym = env.substance(&node.code);
                let mut fields = Vec::new();
                for (fname, dim, x, words) in substance_fields(s) {
                    let own = |f: &str| Ex::name(names::field_name(&name, f));
                    let e = match (&sym, fname) {
                        (Some(SubSym::Perfect { r, .. }), "R") => Some(r.clone()),
                        (Some(SubSym::Perfect { cp, .. }), "cp") => Some(cp.clone()),
                        (Some(SubSym::Perfect { .. }), "cv") => {
                            Some(Ex::name(format!("{}-{}", own("cp").text, own("R").text)))
                        }
                        (Some(SubSym::Perfect { .. }), "k") => Some(Ex::name(format!(
                            "{}/({}-{})",
                            own("cp").text,
                            own("cp").text,
                            own("R").text
                        ))),
                        (Some(SubSym::Incompressible { c, .. }), "cp" | "cv") => Some(c.clone()),
                        (Some(SubSym::Incompressible { rho, .. }), "rho") => Some(rho.clone()),
                        (Some(SubSym::Ideal(_)), "R") => Some(Ex::num(x)),
                        _ => None,
                    };
                    fields.push(Row {
                        symbol: format!("{name}.{fname}"),
                        description: words.to_string(),
                        expr: String::new(),
                        si_name: names::field_name(&name, fname),
                        si: Some(x),
                        dim,
                        display: DisplayUnit::Auto,
                        basis: e.map_or(Basis::Engine, Basis::Live),
                    });
                }
                env.subs[i] = match sym {
                    Some(SubSym::Perfect { .. }) => Some(SubSym::Perfect {
                        r: Ex::name(names::field_name(&name, "R")),
                        cp: Ex::name(names::field_name(&name, "cp")),
                    }),
                    Some(SubSym::Incompressible { .. }) => Some(SubSym::Incompressible {
                        c: Ex::name(names::field_name(&name, "cp")),
                        rho: Ex::name(names::field_name(&name, "rho")),
                    }),
                    other => other,
                };
                NodeRows::Compound {
                    head: name.clone(),
                    text: s.to_string(),
                    expr,
                    fields,
                }
            }
            (_, _, v) => NodeRows::Text(match v {
                Value::Str(s) => format!("\"{s}\""),
                Value::Bool(b) => b.to_string(),
                _ => match model.status(i) {
                    Status::Failed(d) => format!("not evaluated: {}", d.message),
                    _ => "not evaluated: a value it depends on failed".to_string(),
                },
            }),
        };
        out[i] = Some(rows);
    }
    out
}

fn field_dim(f: Field) -> Dim {
    match crate::check::field_type(f) {
        Ty::Num(q) => q.dim,
        _ => Dim::NONE,
    }
}

fn has_engine_rows(r: &NodeRows) -> bool {
    match r {
        NodeRows::Number(row) => matches!(row.basis, Basis::Engine),
        NodeRows::Compound { fields, .. } => {
            fields.iter().any(|f| matches!(f.basis, Basis::Engine))
        }
        NodeRows::Check(e) => e.is_none(),
        NodeRows::Text(_) => false,
    }
}

/// For each node: the inputs whose change makes it stale (it is, or uses,
/// an engine value computed from them).
fn stale_inputs(model: &Model, plan: &[Option<NodeRows>]) -> Vec<BTreeSet<usize>> {
    let nodes = model.nodes();
    let n = nodes.len();
    let mut inputs: Vec<BTreeSet<usize>> = vec![BTreeSet::new(); n];
    let mut stale: Vec<BTreeSet<usize>> = vec![BTreeSet::new(); n];
    for &i in model.order() {
        let mut ins = BTreeSet::new();
        let mut st = BTreeSet::new();
        for &d in &nodes[i].deps {
            if nodes[d].kind == NodeKind::Input && matches!(nodes[d].ty, Ty::Num(_)) {
                ins.insert(d);
            }
            ins.extend(inputs[d].iter().copied());
            st.extend(stale[d].iter().copied());
        }
        if plan[i].as_ref().is_some_and(has_engine_rows) {
            st.extend(ins.iter().copied());
        }
        inputs[i] = ins;
        stale[i] = st;
    }
    stale
}

fn flag_formula(model: &Model, set: &BTreeSet<usize>, text: &str) -> Option<String> {
    if set.is_empty() {
        return None;
    }
    let conds: Vec<String> = set
        .iter()
        .filter_map(|&i| model.nodes()[i].name.as_ref())
        .map(|n| names::name_of(NameKind::Differs, &n.name))
        .collect();
    Some(format!("IF(OR({}),\"{text}\",\"\")", conds.join(",")))
}

fn abs_ref(sheet: &str, row: u32, col: u16) -> String {
    format!(
        "={sheet}!${}${}",
        super::reader::col_letters(u32::from(col)),
        row + 1
    )
}

fn package_bytes(model: &Model, info: &PackageInfo) -> Result<Vec<u8>, rust_xlsxwriter::XlsxError> {
    let st = styles();
    let report = model.report();
    let plan = plan(model);
    let stale = stale_inputs(model, &plan);
    let mut wb = Workbook::new();
    let mut defined: Vec<(String, String)> = Vec::new();

    // ------------------------------------------------------------ calculation
    let mut calc = Worksheet::new();
    calc.set_name(CALC)?;
    let title = report
        .title
        .clone()
        .unwrap_or_else(|| info.source_name.clone());
    calc.write_string_with_format(0, 0, &title, &st.title)?;
    calc.write_string_with_format(
        1,
        0,
        format!(
            "{} · sha256 {} · sheaf {} · {}",
            info.source_name,
            &info.source_sha256.get(..12).unwrap_or(&info.source_sha256),
            info.tool_version,
            info.date
        ),
        &st.small,
    )?;
    let heads = [
        "Symbol",
        "Description",
        "Value",
        "Unit",
        "Expression as written",
        "SI value",
        "SI unit",
        "Basis",
        "Flag",
    ];
    for (c, h) in heads.iter().enumerate() {
        calc.write_string_with_format(HEADER_ROW, c as u16, *h, &st.header)?;
    }
    for (c, w) in [16.0, 38.0, 15.0, 11.0, 38.0, 17.0, 11.0, 9.0, 24.0]
        .iter()
        .enumerate()
    {
        calc.set_column_width(c as u16, *w)?;
    }
    calc.set_freeze_panes(HEADER_ROW + 1, 0)?;
    calc.set_repeat_rows(HEADER_ROW, HEADER_ROW)?;
    calc.set_print_fit_to_pages(1, 0);
    calc.set_landscape();
    calc.set_paper_size(9);
    calc.set_footer("&L&F&C&A&RPage &P of &N");

    let mut row = HEADER_ROW + 1;
    let mut check_cells: Vec<(usize, u32)> = Vec::new();
    let mut input_rows: Vec<(usize, u32)> = Vec::new();
    let mut skipped_title = false;
    for block in &report.blocks {
        match block {
            Block::Heading { level, text } => {
                if *level == 1 && !skipped_title && report.title.as_deref() == Some(text) {
                    skipped_title = true;
                    continue;
                }
                let f = if *level <= 2 { &st.h2 } else { &st.h3 };
                for c in 0..=C_FLAG {
                    calc.write_blank(row, c, f)?;
                }
                calc.write_string_with_format(row, 0, text, f)?;
                row += 1;
            }
            Block::Note(text) => {
                calc.write_string_with_format(row, C_DESC, text, &st.note)?;
                row += 1;
            }
            Block::Check(k) => {
                let c = &report.checks[*k];
                let passed = c.passed.map(|p| if p { "pass" } else { "FAIL" });
                calc.write_string_with_format(row, C_SYM, "check", &st.label)?;
                calc.write_string_with_format(
                    row,
                    C_DESC,
                    c.description.as_deref().unwrap_or(""),
                    &st.wrap,
                )?;
                calc.write_string(row, C_EXPR, &c.text)?;
                let plan_e = match &plan[c.node] {
                    Some(NodeRows::Check(e)) => e.clone(),
                    _ => None,
                };
                match (plan_e, passed) {
                    (Some(e), Some(p)) => {
                        let f =
                            Formula::new(format!("IF({},\"pass\",\"FAIL\")", e.text)).set_result(p);
                        calc.write_formula_with_format(row, C_VAL, f, &st.check)?;
                        calc.add_conditional_format(row, C_VAL, row, C_VAL, &fail_highlight())?;
                        calc.write_string(row, C_BASIS, "formula")?;
                    }
                    (None, Some(p)) => {
                        calc.write_string_with_format(row, C_VAL, p, &st.engine)?;
                        calc.write_string(row, C_BASIS, "engine")?;
                    }
                    (_, None) => {
                        calc.write_string_with_format(row, C_VAL, "not evaluated", &st.flag)?;
                    }
                }
                if let Some(f) = flag_formula(model, &stale[c.node], "stale: re-run sheaf") {
                    calc.write_formula_with_format(
                        row,
                        C_FLAG,
                        Formula::new(f).set_result(""),
                        &st.flag,
                    )?;
                }
                check_cells.push((*k, row));
                row += 1;
            }
            Block::Quantity(q) => {
                let i = q.node;
                match &plan[i] {
                    Some(NodeRows::Number(r)) => {
                        write_row(
                            &mut calc,
                            &st,
                            model,
                            row,
                            r,
                            i,
                            &stale[i],
                            &mut defined,
                            &mut input_rows,
                        )?;
                        row += 1;
                    }
                    Some(NodeRows::Compound {
                        head,
                        text,
                        expr,
                        fields,
                    }) => {
                        calc.write_string_with_format(row, C_SYM, head, &st.label)?;
                        calc.write_string_with_format(
                            row,
                            C_DESC,
                            q.description.as_deref().unwrap_or(text),
                            &st.wrap,
                        )?;
                        calc.write_string(row, C_VAL, text)?;
                        calc.write_string(row, C_EXPR, expr)?;
                        row += 1;
                        for r in fields {
                            write_row(
                                &mut calc,
                                &st,
                                model,
                                row,
                                r,
                                i,
                                &stale[i],
                                &mut defined,
                                &mut input_rows,
                            )?;
                            row += 1;
                        }
                    }
                    Some(NodeRows::Text(t)) => {
                        calc.write_string_with_format(row, C_SYM, &q.name, &st.label)?;
                        calc.write_string_with_format(
                            row,
                            C_DESC,
                            q.description.as_deref().unwrap_or(""),
                            &st.wrap,
                        )?;
                        calc.write_string(row, C_VAL, t)?;
                        calc.write_string(
                            row,
                            C_EXPR,
                            model.nodes()[i].expr_span.slice(model.source()),
                        )?;
                        row += 1;
                    }
                    _ => {}
                }
            }
        }
    }
    row += 1;
    calc.write_string_with_format(row, 0, "Basis: input = editable value; formula = live formula on the SI cells; engine = value computed by sheaf (no closed form), flagged when an input it depends on is edited.", &st.small)?;

    // ------------------------------------------------------------ data
    let mut data = Worksheet::new();
    data.set_name(DATA)?;
    data.set_column_width(0, 26)?;
    data.set_column_width(1, 20)?;
    data.set_column_width(2, 14)?;
    data.set_column_width(3, 18)?;
    data.set_column_width(4, 12)?;
    data.write_string_with_format(
        0,
        0,
        "Package information and the values sheaf used",
        &st.title,
    )?;
    let info_rows = [
        ("sheaf calculation package", "", None),
        (
            "source file",
            info.source_name.as_str(),
            Some(super::NAME_SOURCE),
        ),
        (
            "source sha256",
            info.source_sha256.as_str(),
            Some(super::NAME_SHA),
        ),
        (
            "sheaf version",
            info.tool_version.as_str(),
            Some(super::NAME_VERSION),
        ),
        ("written", info.date.as_str(), None),
    ];
    for (k, (label, value, name)) in info_rows.iter().enumerate() {
        let r = 2 + k as u32;
        data.write_string_with_format(r, 0, *label, &st.label)?;
        data.write_string(r, 1, *value)?;
        if let Some(n) = name {
            defined.push((n.to_string(), abs_ref(DATA, r, 1)));
        }
    }
    let mut r = 9;
    data.write_string_with_format(
        r,
        0,
        "Inputs as used by sheaf (a formula cell compares each with the calculation sheet)",
        &st.label,
    )?;
    r += 1;
    for (c, h) in [
        "Input",
        "Value used",
        "Unit",
        "Now in the sheet",
        "Differs (1)",
    ]
    .iter()
    .enumerate()
    {
        data.write_string_with_format(r, c as u16, *h, &st.header)?;
    }
    r += 1;
    for (i, _) in &input_rows {
        let Some(name) = model.nodes()[*i].name.as_ref().map(|n| n.name.clone()) else {
            continue;
        };
        let Some((sh, _)) = super::input_shown(model, *i) else {
            continue;
        };
        let rn = names::name_of(NameKind::Recorded, &name);
        let inn = names::name_of(NameKind::Input, &name);
        let dn = names::name_of(NameKind::Differs, &name);
        data.write_string(r, 0, &name)?;
        data.write_number(r, 1, sh.value)?;
        data.write_string(r, 2, &sh.unit)?;
        data.write_formula(
            r,
            3,
            Formula::new(inn.clone()).set_result(num_result(sh.value)),
        )?;
        data.write_formula(
            r,
            4,
            Formula::new(format!("IF(ABS({inn}-{rn})>1E-12*ABS({rn}),1,0)")).set_result("0"),
        )?;
        defined.push((rn, abs_ref(DATA, r, 1)));
        defined.push((dn, abs_ref(DATA, r, 4)));
        r += 1;
    }
    // Ideal-gas polynomial data for the gases used.
    let mut gases: Vec<crate::thermo::ideal_gas::IdealGas> = Vec::new();
    for v in model.values() {
        let sub = match v {
            Value::Substance(s) => Some(&**s),
            Value::State(sv) => Some(&*sv.sub),
            _ => None,
        };
        if let Some(Substance::IdealGas(g)) = sub
            && !gases.iter().any(|x| x.name() == g.name())
        {
            gases.push(g.clone());
        }
    }
    if !gases.is_empty() {
        r += 1;
        data.write_string_with_format(
            r,
            0,
            "Ideal-gas data: NASA 7-coefficient polynomials (McBride, Zehe & Gordon, NASA/TP-2002-211556), molar, dimensionless; R in J/(kg K); hoff = R * H/R(298.15 K) in J/kg",
            &st.label,
        )?;
        r += 1;
        for (c, h) in [
            "gas / range",
            "a1",
            "a2",
            "a3",
            "a4",
            "a5",
            "a6",
            "a7",
            "R",
            "hoff",
        ]
        .iter()
        .enumerate()
        {
            data.write_string_with_format(r, c as u16, *h, &st.header)?;
        }
        r += 1;
        for g in &gases {
            let coef = g.coefficients();
            for (hi, label) in [(false, "200-1000 K"), (true, "1000-6000 K")] {
                data.write_string(r, 0, format!("{} {label}", g.name()))?;
                for (k, a) in coef[usize::from(hi)].iter().enumerate() {
                    data.write_number(r, 1 + k as u16, *a)?;
                    defined.push((
                        formula::gas_coef_name(g.name(), hi, k + 1),
                        abs_ref(DATA, r, 1 + k as u16),
                    ));
                }
                if !hi {
                    data.write_number(r, 8, g.r())?;
                    data.write_number(r, 9, g.h_offset())?;
                    defined.push((formula::gas_r_name(g.name()), abs_ref(DATA, r, 8)));
                    defined.push((formula::gas_hoff_name(g.name()), abs_ref(DATA, r, 9)));
                }
                r += 1;
            }
        }
    }
    data.protect();

    // ------------------------------------------------------------ cover
    let mut cover = Worksheet::new();
    cover.set_name(COVER)?;
    cover.set_column_width(0, 22)?;
    cover.set_column_width(1, 60)?;
    cover.set_column_width(2, 12)?;
    cover.set_print_fit_to_pages(1, 0);
    cover.set_paper_size(9);
    cover.write_string_with_format(0, 0, "Calculation package", &st.title)?;
    cover.write_string_with_format(1, 0, &title, &st.h3)?;
    let meta = |k: &str| {
        report
            .meta
            .iter()
            .find(|(key, _)| key == k)
            .map_or(String::new(), |(_, v)| v.clone())
    };
    let mut cr = 3;
    let fields = [
        ("Project", meta("project")),
        ("Source file", info.source_name.clone()),
        ("Source sha256", info.source_sha256.clone()),
        ("sheaf version", info.tool_version.clone()),
        ("Date", info.date.clone()),
        ("Prepared by", meta("prepared")),
        ("Checked by", meta("checked")),
        ("Revision", meta("revision")),
    ];
    for (label, value) in fields {
        cover.write_string_with_format(cr, 0, label, &st.label)?;
        cover.write_string(cr, 1, value)?;
        cr += 1;
    }
    for (k, v) in &report.meta {
        if !["project", "prepared", "checked", "revision"].contains(&k.as_str()) {
            cover.write_string_with_format(cr, 0, k, &st.label)?;
            cover.write_string(cr, 1, v)?;
            cr += 1;
        }
    }
    cr += 1;
    cover.write_string_with_format(cr, 0, "Checks", &st.h2)?;
    cover.write_blank(cr, 1, &st.h2)?;
    cover.write_blank(cr, 2, &st.h2)?;
    cr += 1;
    for (k, calc_row) in &check_cells {
        let c = &report.checks[*k];
        cover.write_string(cr, 0, &c.text)?;
        cover.write_string_with_format(cr, 1, c.description.as_deref().unwrap_or(""), &st.wrap)?;
        let res = c
            .passed
            .map_or("not evaluated", |p| if p { "pass" } else { "FAIL" });
        let f = Formula::new(abs_ref(CALC, *calc_row, C_VAL)).set_result(res);
        cover.write_formula_with_format(cr, 2, f, &st.check)?;
        cover.add_conditional_format(cr, 2, cr, 2, &fail_highlight())?;
        cr += 1;
    }
    if check_cells.is_empty() {
        cover.write_string(cr, 0, "(no checks)")?;
        cr += 1;
    }
    cr += 1;
    let caution = Format::new()
        .set_text_wrap()
        .set_bold()
        .set_font_color(Color::RGB(0x8A_1C_1C))
        .set_align(FormatAlign::Top);
    cover.merge_range(cr, 0, cr, 2, crate::report::CAUTION, &caution)?;
    cover.set_row_height(cr, 48)?;
    cr += 1;
    if report.uses_gauge {
        cover.merge_range(cr, 0, cr, 2, &report.gauge_note(), &st.wrap)?;
        cr += 1;
    }
    for w in &report.warnings {
        cover.merge_range(cr, 0, cr, 2, &format!("Warning: {w}"), &st.wrap)?;
        cover.set_row_height(cr, 30)?;
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
    cover.write_string(
        cr,
        1,
        "value computed by sheaf (no closed form); the Flag column says when it is stale",
    )?;

    wb.push_worksheet(cover);
    wb.push_worksheet(calc);
    wb.push_worksheet(data);
    for (n, target) in &defined {
        wb.define_name(n, target)?;
    }
    let props = rust_xlsxwriter::DocProperties::new()
        .set_title(&title)
        .set_comment(format!(
            "sheaf calculation package; source {} sha256 {}",
            info.source_name, info.source_sha256
        ));
    wb.set_properties(&props);
    wb.save_to_buffer()
}

#[allow(clippy::too_many_arguments)]
fn write_row(
    calc: &mut Worksheet,
    st: &Styles,
    model: &Model,
    row: u32,
    r: &Row,
    node: usize,
    stale: &BTreeSet<usize>,
    defined: &mut Vec<(String, String)>,
    input_rows: &mut Vec<(usize, u32)>,
) -> Result<(), rust_xlsxwriter::XlsxError> {
    calc.write_string_with_format(row, C_SYM, &r.symbol, &st.label)?;
    calc.write_string_with_format(row, C_DESC, &r.description, &st.wrap)?;
    calc.write_string(row, C_EXPR, &r.expr)?;
    calc.write_string_with_format(row, C_SIU, crate::units::si_unit(r.dim), &st.unit)?;
    defined.push((r.si_name.clone(), abs_ref(CALC, row, C_SI)));
    let Some(si) = r.si else {
        calc.write_string_with_format(row, C_VAL, "not evaluated", &st.flag)?;
        return Ok(());
    };
    match &r.basis {
        Basis::Input => {
            let Some((sh, _)) = super::input_shown(model, node) else {
                return Ok(());
            };
            let iname = names::name_of(NameKind::Input, &r.symbol);
            calc.write_number_with_format(row, C_VAL, sh.value, &st.input)?;
            calc.write_string_with_format(row, C_UNIT, &sh.unit, &st.unit)?;
            let mut f = iname.clone();
            if sh.factor != 1.0 {
                f = format!("{f}*{}", formula::number_text(sh.factor));
            }
            if sh.offset != 0.0 {
                f = format!("{f}+{}", formula::number_text(sh.offset));
            }
            calc.write_formula_with_format(
                row,
                C_SI,
                Formula::new(f).set_result(num_result(si)),
                &st.live,
            )?;
            calc.write_string(row, C_BASIS, "input")?;
            defined.push((iname, abs_ref(CALC, row, C_VAL)));
            input_rows.push((node, row));
        }
        Basis::Live(_) | Basis::Engine => {
            let (df, dv, unit) = display_formula(&r.si_name, &r.display, r.dim, si);
            let (fmt, basis) = match &r.basis {
                Basis::Live(e) => {
                    calc.write_formula_with_format(
                        row,
                        C_SI,
                        Formula::new(&e.text).set_result(num_result(si)),
                        &st.live,
                    )?;
                    (&st.live, "formula")
                }
                _ => {
                    calc.write_number_with_format(row, C_SI, si, &st.engine)?;
                    (&st.engine, "engine")
                }
            };
            calc.write_formula_with_format(
                row,
                C_VAL,
                Formula::new(df).set_result(num_result(dv)),
                &fmt.clone().set_num_format(sig_format(dv)),
            )?;
            calc.write_string_with_format(row, C_UNIT, &unit, &st.unit)?;
            calc.write_string(row, C_BASIS, basis)?;
            let text = if basis == "engine" {
                "stale: re-run sheaf"
            } else {
                "stale: uses an engine value"
            };
            if let Some(f) = flag_formula(model, stale, text) {
                calc.write_formula_with_format(
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
