//! The results of a worksheet in display form: what `run` prints (text,
//! json, markdown) and what the xlsx package lays out. Numbers are kept at
//! full precision; rounding is the renderer's business.

use serde::Serialize;
use sheaf_grammar::StatementKind;

use crate::diag::LineIndex;

use crate::check::{DisplayUnit, NodeKind};
use crate::eval::{Value, substance_field};
use crate::model::{Model, Status};
use crate::thermo::{Field, Substance};
use crate::types::Ty;
use crate::units::{self, Dim};

/// The safety caution carried by every report and workbook.
pub const CAUTION: &str = "Caution: sheaf is an engineering aid. Its results must be checked by a qualified \
engineer and do not replace the design codes, standards and licensed practice in force where the \
equipment is used.";

/// Note printed once when gauge units are used.
pub const GAUGE_NOTE: &str =
    "Gauge pressures (barg, psig, kPag) are relative to the standard atmosphere, 101.325 kPa.";

#[derive(Clone, Debug, Serialize)]
pub struct Report {
    pub title: Option<String>,
    pub meta: Vec<(String, String)>,
    pub blocks: Vec<Block>,
    pub checks: Vec<CheckRow>,
    /// Warnings in file order: the located diagnostic and its line.
    pub warnings: Vec<WarningRow>,
    /// Whether any gauge unit appears (the report then says what gauge means).
    pub uses_gauge: bool,
}

/// A warning of the report.
#[derive(Clone, Debug, Serialize)]
pub struct WarningRow {
    /// 1-based line of the place it points at.
    pub line: usize,
    /// The quantity it belongs to (`check` for a check).
    pub name: String,
    pub diagnostic: crate::diag::Diagnostic,
}

/// "line 12, `st2`: message".
impl std::fmt::Display for WarningRow {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "line {}, `{}`: {}",
            self.line, self.name, self.diagnostic.message
        )
    }
}

#[derive(Clone, Debug, Serialize)]
pub enum Block {
    Heading {
        level: u8,
        text: String,
    },
    Note(String),
    Quantity(Box<QuantityRow>),
    /// Index into `Report::checks`.
    Check(usize),
}

#[derive(Clone, Debug, Serialize)]
pub struct QuantityRow {
    pub name: String,
    /// "input" or "computed".
    pub kind: &'static str,
    /// Value in the display unit (None: not a number, or not evaluated).
    pub value: Option<f64>,
    pub unit: String,
    pub si_value: Option<f64>,
    pub si_unit: String,
    pub description: Option<String>,
    /// 1-based line of the statement.
    pub line: usize,
    /// For values that are not numbers: what they are ("ideal gas air",
    /// "yes" / "no" for a true/false value).
    pub text: Option<String>,
    /// A true/false value.
    pub boolean: Option<bool>,
    /// An input whose value is not the worksheet's: where it came from.
    pub overridden: Option<String>,
    /// An input solved by a `find`: how.
    pub found: Option<FoundRow>,
    /// Why there is no value ("not evaluated: ..."), if so.
    pub problem: Option<String>,
    /// States and substances: their fields as `name.field` rows.
    pub fields: Vec<QuantityRow>,
    pub node: usize,
}

/// How a `find` found an input: bracket (SI and as shown), steps,
/// residual (LEFT − RIGHT, SI) and the condition as written.
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct FoundRow {
    pub low: f64,
    pub high: f64,
    pub low_shown: f64,
    pub high_shown: f64,
    pub iterations: usize,
    pub residual: f64,
    pub condition: String,
}

#[derive(Clone, Debug, Serialize)]
pub struct CheckRow {
    pub line: usize,
    /// The comparison as written.
    pub text: String,
    /// None when it could not be evaluated.
    pub passed: Option<bool>,
    pub description: Option<String>,
    /// Every operand of its comparisons, in order, each comparison's
    /// operands in one display unit (the unit of the last literal, usually
    /// the limit, else the first name's display unit).
    pub operands: Vec<OperandRow>,
    pub node: usize,
}

/// One operand of a check: as written, and its value when evaluated.
#[derive(Clone, Debug, Serialize)]
pub struct OperandRow {
    pub text: String,
    pub shown: Option<Shown>,
}

/// A value in a display unit, at full precision.
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct Shown {
    pub value: f64,
    pub unit: String,
}

impl QuantityRow {
    /// This row and, for states and substances, their fields, flattened as
    /// the json output lists them.
    pub fn flatten(&self) -> Vec<&QuantityRow> {
        if self.fields.is_empty() {
            vec![self]
        } else {
            self.fields.iter().collect()
        }
    }
}

/// Shown value and unit text for an SI value under a display unit.
pub fn shown(display: &DisplayUnit, dim: Dim, si: f64) -> (f64, String) {
    match display {
        DisplayUnit::Fixed { unit, text } => (unit.from_si(si), text.clone()),
        DisplayUnit::Auto => units::auto_display(dim, si),
    }
}

fn number_row(
    name: String,
    kind: &'static str,
    display: &DisplayUnit,
    dim: Dim,
    si: Option<f64>,
    line: usize,
    node: usize,
) -> QuantityRow {
    let (value, unit) = match si {
        Some(x) => {
            let (v, u) = shown(display, dim, x);
            (Some(v), u)
        }
        None => (
            None,
            match display {
                DisplayUnit::Fixed { text, .. } => text.clone(),
                DisplayUnit::Auto => units::si_unit(dim),
            },
        ),
    };
    QuantityRow {
        name,
        kind,
        value,
        unit,
        si_value: si,
        si_unit: units::si_unit(dim),
        description: None,
        line,
        text: None,
        boolean: None,
        overridden: None,
        found: None,
        problem: None,
        fields: Vec::new(),
        node,
    }
}

fn field_dim(f: Field) -> Dim {
    crate::fields::info(f).dim
}

/// Fields listed for a state in reports.
const STATE_FIELDS: [Field; 12] = Field::ALL;

impl Model {
    /// Build the report of the current values.
    pub fn report(&self) -> Report {
        let src = self.source();
        let lines = LineIndex::new(src);
        let ws = self.worksheet();
        let mut node_of_stmt = vec![None; ws.statements.len()];
        for (i, n) in self.nodes().iter().enumerate() {
            node_of_stmt[n.stmt] = Some(i);
        }
        let mut r = Report {
            title: None,
            meta: Vec::new(),
            blocks: Vec::new(),
            checks: Vec::new(),
            warnings: Vec::new(),
            uses_gauge: ["barg", "psig", "kPag"].iter().any(|g| src.contains(g)),
        };
        for (si, stmt) in ws.statements.iter().enumerate() {
            let line = lines.line(stmt.span.start);
            match &stmt.kind {
                StatementKind::Heading { level, text } => {
                    if *level == 1 && r.title.is_none() {
                        r.title = Some(text.clone());
                    }
                    r.blocks.push(Block::Heading {
                        level: *level,
                        text: text.clone(),
                    });
                }
                StatementKind::Note { text } => r.blocks.push(Block::Note(text.clone())),
                StatementKind::Meta { key, value } => {
                    r.meta.push((key.name.clone(), value.value.clone()))
                }
                StatementKind::Input { .. } | StatementKind::Define { .. } => {
                    let Some(i) = node_of_stmt[si] else { continue };
                    r.blocks
                        .push(Block::Quantity(Box::new(self.quantity_row(i, line))));
                }
                StatementKind::Check { .. } => {
                    let Some(i) = node_of_stmt[si] else { continue };
                    r.blocks.push(Block::Check(r.checks.len()));
                    r.checks.push(self.check_row(i, line));
                }
                StatementKind::Comment { .. } | StatementKind::Blank => {}
                // Refused by the checker for now.
                _ => {}
            }
        }
        for &i in self.order() {
            for w in self.warnings(i) {
                let name = self.nodes()[i]
                    .name
                    .as_ref()
                    .map_or("check".to_string(), |n| n.name.clone());
                let at = w.span().unwrap_or(self.nodes()[i].expr_span);
                let row = WarningRow {
                    line: lines.line(at.start),
                    name,
                    diagnostic: w.clone(),
                };
                if !r.warnings.iter().any(|x| x.to_string() == row.to_string()) {
                    r.warnings.push(row);
                }
            }
        }
        r
    }

    fn quantity_row(&self, i: usize, line: usize) -> QuantityRow {
        let node = &self.nodes()[i];
        let name = node.name.as_ref().map_or(String::new(), |n| n.name.clone());
        let kind = if node.kind == NodeKind::Input {
            "input"
        } else {
            "computed"
        };
        let problem = match self.status(i) {
            Status::Ok => None,
            Status::Pending => Some("not evaluated".to_string()),
            Status::Skipped => Some("not evaluated: a value it depends on failed".to_string()),
            Status::Failed(d) => Some(d.message.clone()),
        };
        let mut row = match (node.ty, self.value(i)) {
            (Ty::Num(q), v) => number_row(
                name.clone(),
                kind,
                &node.display,
                q.dim,
                v.as_num(),
                line,
                i,
            ),
            (_, Value::State(sv)) => {
                let mut row = number_row(
                    name.clone(),
                    kind,
                    &DisplayUnit::Auto,
                    Dim::NONE,
                    None,
                    line,
                    i,
                );
                row.text = Some(format!("state of {}", sv.sub));
                row.si_unit = String::new();
                row.unit = String::new();
                for f in STATE_FIELDS {
                    if let Some(x) = sv.st.get(f) {
                        let fname = format!("{name}.{}", f.name());
                        let mut fr = number_row(
                            fname,
                            kind,
                            &DisplayUnit::Auto,
                            field_dim(f),
                            Some(x),
                            line,
                            i,
                        );
                        fr.description = Some(field_words(f).to_string());
                        row.fields.push(fr);
                    }
                }
                row
            }
            (_, Value::Substance(sub)) => {
                let mut row = number_row(
                    name.clone(),
                    kind,
                    &DisplayUnit::Auto,
                    Dim::NONE,
                    None,
                    line,
                    i,
                );
                row.text = Some(sub.to_string());
                row.si_unit = String::new();
                row.unit = String::new();
                for (fname, dim, x, words) in substance_fields(sub) {
                    let mut fr = number_row(
                        format!("{name}.{fname}"),
                        kind,
                        &DisplayUnit::Auto,
                        dim,
                        Some(x),
                        line,
                        i,
                    );
                    fr.description = Some(words.to_string());
                    row.fields.push(fr);
                }
                row
            }
            (_, Value::Saturation(sv)) => {
                let mut row = number_row(
                    name.clone(),
                    kind,
                    &DisplayUnit::Auto,
                    Dim::NONE,
                    None,
                    line,
                    i,
                );
                row.text = Some(format!("saturated {}", sv.sub));
                row.si_unit = String::new();
                row.unit = String::new();
                for (fname, dim, x, words) in saturation_fields(sv) {
                    let mut fr = number_row(
                        format!("{name}.{fname}"),
                        kind,
                        &DisplayUnit::Auto,
                        dim,
                        Some(x),
                        line,
                        i,
                    );
                    fr.description = Some(words.to_string());
                    row.fields.push(fr);
                }
                row
            }
            (ty, v) => {
                let mut row = number_row(
                    name.clone(),
                    kind,
                    &DisplayUnit::Auto,
                    Dim::NONE,
                    None,
                    line,
                    i,
                );
                row.text = Some(match v {
                    Value::Str(s) => format!("\"{s}\""),
                    Value::Bool(b) => {
                        row.boolean = Some(*b);
                        if *b { "yes" } else { "no" }.to_string()
                    }
                    _ => ty.describe(),
                });
                row.unit = String::new();
                row.si_unit = String::new();
                row
            }
        };
        row.description = node.description.clone();
        row.problem = problem;
        row.overridden = self.override_of(i).map(|o| o.source.to_string());
        if let Some(f) = self.find_of(i) {
            row.kind = "found";
            row.found = self.found(i).map(|fd| FoundRow {
                low: fd.low,
                high: fd.high,
                low_shown: shown(&node.display, f.input_dim, fd.low).0,
                high_shown: shown(&node.display, f.input_dim, fd.high).0,
                iterations: fd.iterations,
                residual: fd.residual,
                condition: f.condition.clone(),
            });
        }
        row
    }

    fn check_row(&self, i: usize, line: usize) -> CheckRow {
        let node = &self.nodes()[i];
        let src = self.source();
        let passed = match self.value(i) {
            Value::Bool(b) => Some(*b),
            _ => None,
        };
        let values = self.operand_values(i);
        let operands = node
            .operands
            .iter()
            .enumerate()
            .map(|(k, o)| OperandRow {
                text: o.span.slice(src).to_string(),
                shown: values.get(k).copied().flatten().map(|x| {
                    let (value, unit) = match (&o.display, o.dim == Dim::NONE) {
                        (DisplayUnit::Auto, true) => (x, String::new()),
                        _ => shown(&o.display, o.dim, x),
                    };
                    Shown { value, unit }
                }),
            })
            .collect();
        CheckRow {
            line,
            text: node.expr_span.slice(src).to_string(),
            passed,
            description: node.description.clone(),
            operands,
            node: i,
        }
    }
}

/// Words for a field.
pub fn field_words(f: Field) -> &'static str {
    crate::fields::info(f).words
}

/// Fields listed for a saturated pair: T, p and the main properties of
/// both phases, as (name, dimension, SI value, words).
pub fn saturation_fields(
    sv: &crate::value::SaturationVal,
) -> Vec<(String, Dim, f64, &'static str)> {
    let mut out = vec![
        (
            "T".to_string(),
            Dim::TEMPERATURE,
            sv.sat.t,
            "saturation temperature",
        ),
        (
            "p".to_string(),
            Dim::PRESSURE,
            sv.sat.p,
            "saturation pressure",
        ),
    ];
    for (phase, st) in [("liquid", &sv.sat.liquid), ("vapour", &sv.sat.vapour)] {
        for f in [Field::H, Field::S, Field::V] {
            if let Some(x) = st.get(f) {
                out.push((
                    format!("{phase}.{}", f.name()),
                    field_dim(f),
                    x,
                    field_words(f),
                ));
            }
        }
    }
    out
}

/// Fields listed for a substance: (name, dimension, SI value, words).
pub fn substance_fields(sub: &Substance) -> Vec<(&'static str, Dim, f64, &'static str)> {
    let mut out = Vec::new();
    for f in [
        Field::M,
        Field::R,
        Field::Cp,
        Field::Cv,
        Field::K,
        Field::Rho,
    ] {
        if let Some(x) = substance_field(sub, f) {
            out.push((f.name(), field_dim(f), x, field_words(f)));
        }
    }
    out
}
