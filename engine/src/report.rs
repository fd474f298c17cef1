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

/// Note printed once when gauge units are used and the worksheet keeps
/// the default reference ([`Report::gauge_note`] gives the actual one).
pub const GAUGE_NOTE: &str = "Gauge pressures (barg, psig, kPag, MPag) are relative to the standard atmosphere, 101.325 kPa.";

#[derive(Clone, Debug, Serialize)]
pub struct Report {
    pub title: Option<String>,
    pub meta: Vec<(String, String)>,
    pub blocks: Vec<Block>,
    pub checks: Vec<CheckRow>,
    /// Warnings in file order: the located diagnostic and its line.
    pub warnings: Vec<WarningRow>,
    /// Whether any gauge unit is used or a reference is stated (the report
    /// then says what gauge means: [`Report::gauge_note`]).
    pub uses_gauge: bool,
    /// What gauge pressures are relative to: one sentence for this
    /// worksheet, one for each used worksheet that has gauge pressures.
    pub gauge_notes: Vec<String>,
    /// The worksheets used (`use`), at any depth.
    pub used_files: Vec<crate::model::UsedFile>,
    /// The state-point table: one row per state, in worksheet order.
    pub states: StateTable,
    /// The property models used, with their sources (the "Methods" block).
    pub methods: Vec<MethodRow>,
    /// Inputs whose value is not the worksheet's: (name, value as given,
    /// where from).
    pub overrides: Vec<(String, String, String)>,
}

/// The state-point table: one row per state, one column per chosen field,
/// one display unit per column.
#[derive(Clone, Debug, Default, Serialize)]
pub struct StateTable {
    pub columns: Vec<StateColumn>,
    pub rows: Vec<StateTableRow>,
    /// Said under the table (gauge inputs shown as absolute pressures).
    pub notes: Vec<String>,
}

/// A column of the state-point table.
#[derive(Clone, Debug, Serialize)]
pub struct StateColumn {
    #[serde(skip)]
    pub field: Field,
    /// Unit text of the column ("degC", "bar"; empty when dimensionless).
    pub unit: String,
    #[serde(skip)]
    pub display: DisplayUnit,
}

/// One state of the table.
#[derive(Clone, Debug, Serialize)]
pub struct StateTableRow {
    pub name: String,
    pub description: Option<String>,
    /// The expression as written.
    pub expr: String,
    /// Value per column in the column's unit (None: the model has no such
    /// field, e.g. x of a superheated state).
    pub cells: Vec<Option<f64>>,
    pub node: usize,
}

/// A property model used by the worksheet and where it comes from.
#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct MethodRow {
    /// "water/steam (IAPWS-IF97)", "ideal gas air".
    pub model: String,
    pub citation: String,
    /// Validity range in words.
    pub range: String,
    /// Reference state of h and s in words.
    pub reference: String,
    /// Worksheet names (substances and states) that use it.
    pub used_by: Vec<String>,
}

impl Report {
    /// The gauge reference(s) in words, one sentence each; empty when no
    /// gauge unit is used.
    pub fn gauge_note(&self) -> String {
        self.gauge_notes.join(" ")
    }
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
    /// An input written as a plain number in its display unit: the number
    /// text as written (`1.01325`), shown instead of a rounded value.
    pub written: Option<String>,
    /// Why there is no value ("not evaluated: ..."), if so.
    pub problem: Option<String>,
    /// States and substances: their fields as `name.field` rows.
    pub fields: Vec<QuantityRow>,
    /// The defining expression as written.
    pub expr: String,
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
        written: None,
        problem: None,
        fields: Vec::new(),
        expr: String::new(),
        node,
    }
}

/// A row for a value with fields (a state, a substance, a saturated
/// pair): its words, and a row per field (name, display unit, dimension,
/// SI value, words).
fn compound_row(
    name: &str,
    kind: &'static str,
    line: usize,
    node: usize,
    text: String,
    fields: Vec<(String, DisplayUnit, Dim, f64, &'static str)>,
) -> QuantityRow {
    let mut row = number_row(
        name.to_string(),
        kind,
        &DisplayUnit::Auto,
        Dim::NONE,
        None,
        line,
        node,
    );
    row.text = Some(text);
    row.si_unit = String::new();
    row.unit = String::new();
    for (fname, display, dim, x, words) in fields {
        let mut fr = number_row(
            format!("{name}.{fname}"),
            kind,
            &display,
            dim,
            Some(x),
            line,
            node,
        );
        fr.description = Some(words.to_string());
        row.fields.push(fr);
    }
    row
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
            uses_gauge: false,
            gauge_notes: self.gauge_notes(""),
            used_files: self.used_files(),
            states: StateTable::default(),
            methods: Vec::new(),
            overrides: Vec::new(),
        };
        r.uses_gauge = !r.gauge_notes.is_empty();
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
                StatementKind::Use { .. } => {
                    let Some((k, u)) = self.used().iter().enumerate().find(|(_, u)| u.stmt == si)
                    else {
                        continue;
                    };
                    r.blocks.push(Block::Note(format!(
                        "Uses {} as `{}`: its values are named `{}.NAME`.",
                        u.name, u.prefix, u.prefix
                    )));
                    for i in 0..self.nodes().len() {
                        let Some((kk, j)) = self.import_of(i) else {
                            break;
                        };
                        if kk != k {
                            continue;
                        }
                        if self.nodes()[i].kind == NodeKind::Check {
                            let mut c = u.model.check_row(j, line);
                            c.text = format!("{}: {}", u.prefix, c.text);
                            c.node = i;
                            r.blocks.push(Block::Check(r.checks.len()));
                            r.checks.push(c);
                        } else {
                            let mut q = u.model.quantity_row(j, line);
                            q.name = format!("{}.{}", u.prefix, q.name);
                            q.node = i;
                            for f in &mut q.fields {
                                f.name = format!("{}.{}", u.prefix, f.name);
                                f.node = i;
                                f.line = line;
                            }
                            q.overridden = self.override_of(i).map(|o| o.source.to_string());
                            r.blocks.push(Block::Quantity(Box::new(q)));
                        }
                    }
                }
                StatementKind::Comment { .. } | StatementKind::Blank => {}
                // Refused by the checker for now.
                _ => {}
            }
        }
        // Seen warning texts: a set, so that many warnings stay linear.
        let mut seen: rustc_hash::FxHashSet<String> = rustc_hash::FxHashSet::default();
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
                if seen.insert(row.to_string()) {
                    r.warnings.push(row);
                }
            }
        }
        r.states = self.state_table(&r);
        r.methods = self.methods();
        for (i, n) in self.nodes().iter().enumerate() {
            if let (Some(o), Some(name)) = (self.override_of(i), &n.name) {
                r.overrides
                    .push((name.name.clone(), o.text.clone(), o.source.to_string()));
            }
        }
        r
    }

    /// The gauge sentences of this worksheet and the worksheets it uses
    /// (`prefix`: the prefix chain of this one, empty for the top).
    fn gauge_notes(&self, prefix: &str) -> Vec<String> {
        let mut out = Vec::new();
        let g = self.gauge_reference();
        if self.uses_gauge() || g.is_stated() {
            let reference = g.describe();
            out.push(if prefix.is_empty() {
                format!("Gauge pressures (barg, psig, kPag, MPag) are relative to {reference}.")
            } else {
                format!("In the worksheet used as `{prefix}`, gauge pressures are relative to {reference}.")
            });
        }
        for u in self.used() {
            let p = if prefix.is_empty() {
                u.prefix.clone()
            } else {
                format!("{prefix}.{}", u.prefix)
            };
            out.extend(u.model.gauge_notes(&p));
        }
        out
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
                let fields = STATE_FIELDS
                    .iter()
                    .filter_map(|&f| {
                        let x = sv.st.get(f)?;
                        let display = self.state_field_display(i, f);
                        Some((
                            f.name().to_string(),
                            display,
                            field_dim(f),
                            x,
                            field_words(f),
                        ))
                    })
                    .collect();
                compound_row(&name, kind, line, i, format!("state of {}", sv.sub), fields)
            }
            (_, Value::Substance(sub)) => {
                let fields = substance_fields(sub)
                    .into_iter()
                    .filter(|(fname, ..)| is_substance_field(fname))
                    .map(|(fname, dim, x, words)| {
                        (fname.to_string(), substance_display(fname), dim, x, words)
                    })
                    .collect();
                compound_row(&name, kind, line, i, sub.to_string(), fields)
            }
            (_, Value::Saturation(sv)) => {
                let fields = saturation_fields(sv)
                    .into_iter()
                    .map(|(fname, dim, x, words)| (fname, DisplayUnit::Auto, dim, x, words))
                    .collect();
                compound_row(
                    &name,
                    kind,
                    line,
                    i,
                    format!("saturated {}", sv.sub),
                    fields,
                )
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
        row.expr = node.expr_span.slice(self.source()).to_string();
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
        if row.overridden.is_none() && node.kind == NodeKind::Input {
            row.written = self.written_digits(i);
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

/// The literal of an input written as a plain number (possibly negated or
/// in parentheses): (span to replace, value as written incl. sign, unit
/// text).
pub(crate) fn input_literal<'a>(
    e: &'a sheaf_grammar::Expr,
    src: &str,
) -> Option<(
    sheaf_grammar::Span,
    f64,
    Option<&'a sheaf_grammar::UnitExpr>,
)> {
    match &e.kind {
        sheaf_grammar::ExprKind::Paren(a) => input_literal(a, src),
        sheaf_grammar::ExprKind::Number { value, text, unit } => {
            let span = sheaf_grammar::Span::new(e.span.start, e.span.start + text.len());
            (span.slice(src) == text).then_some((span, *value, unit.as_ref()))
        }
        sheaf_grammar::ExprKind::Neg(a) => match &a.kind {
            sheaf_grammar::ExprKind::Number { value, text, unit } => {
                let end = a.span.start + text.len();
                (sheaf_grammar::Span::new(a.span.start, end).slice(src) == text).then_some((
                    sheaf_grammar::Span::new(e.span.start, end),
                    -value,
                    unit.as_ref(),
                ))
            }
            _ => None,
        },
        _ => None,
    }
}

fn src_of(m: &Model) -> &str {
    m.source()
}

/// Display unit from unit text (`kJ/kg`); None if it does not resolve.
pub fn fixed_unit(text: &str) -> Option<DisplayUnit> {
    let u = sheaf_grammar::parse_unit(text).ok()?;
    let unit = units::resolve(&u).ok()?;
    Some(DisplayUnit::Fixed {
        unit,
        text: text.to_string(),
    })
}

/// The absolute unit of a gauge unit's text (`barg` -> `bar`).
fn absolute_of(text: &str) -> &str {
    match text {
        "barg" => "bar",
        "psig" => "psi",
        "kPag" => "kPa",
        t => t,
    }
}

/// Default columns of the state-point table.
pub const DEFAULT_STATE_COLUMNS: &str = "T p h s x v";

impl Model {
    /// Unit of the first number the node reads (directly, or through the
    /// states it reads) with dimension `dim` and a fixed display unit.
    fn unit_from_deps(&self, node: usize, dim: Dim, depth: usize) -> Option<String> {
        let nodes = self.nodes();
        let n = nodes.get(node)?;
        for &d in &n.deps {
            if let (Ty::Num(q), DisplayUnit::Fixed { text, .. }) = (nodes[d].ty, &nodes[d].display)
                && q.dim == dim
            {
                return Some(text.clone());
            }
        }
        if depth < 8 {
            for &d in &n.deps {
                if matches!(nodes[d].ty, Ty::State(_))
                    && let Some(u) = self.unit_from_deps(d, dim, depth + 1)
                {
                    return Some(u);
                }
            }
        }
        None
    }

    /// Unit of the first input of dimension `dim` written with a unit.
    fn first_input_unit(&self, dim: Dim) -> Option<String> {
        self.nodes().iter().find_map(|n| match (&n.ty, &n.display) {
            (Ty::Num(q), DisplayUnit::Fixed { text, .. })
                if n.kind == NodeKind::Input && q.dim == dim =>
            {
                Some(text.clone())
            }
            _ => None,
        })
    }

    /// Display unit of a state field (README, units in "A short tour of the language"): temperatures and
    /// pressures in the units of the inputs that fixed the state (gauge
    /// shown absolute), kJ/kg and kJ/(kg K) for specific energies and
    /// entropies, otherwise coherent SI.
    pub fn state_field_display(&self, node: usize, f: Field) -> DisplayUnit {
        let text = match f {
            Field::T | Field::P => {
                let dim = if f == Field::T {
                    Dim::TEMPERATURE
                } else {
                    Dim::PRESSURE
                };
                self.unit_from_deps(node, dim, 0)
                    .or_else(|| self.first_input_unit(dim))
                    .map(|t| absolute_of(&t).to_string())
            }
            Field::H | Field::U => Some("kJ/kg".to_string()),
            Field::S | Field::Cp | Field::Cv => Some("kJ/(kg K)".to_string()),
            Field::V => Some("m^3/kg".to_string()),
            Field::Rho => Some("kg/m^3".to_string()),
            Field::W => Some("m/s".to_string()),
            Field::M => Some("g/mol".to_string()),
            Field::R => Some("J/(kg K)".to_string()),
            Field::K | Field::X => None,
        };
        text.and_then(|t| fixed_unit(&t))
            .filter(|d| match d {
                DisplayUnit::Fixed { unit, .. } => unit.dim == field_dim(f),
                DisplayUnit::Auto => true,
            })
            .unwrap_or(DisplayUnit::Auto)
    }

    /// The columns chosen by `meta state_columns = "..."` (unknown field
    /// names are skipped), else the default (x only when a state has it).
    pub fn state_columns(&self) -> Vec<Field> {
        let chosen = self
            .worksheet()
            .statements
            .iter()
            .find_map(|s| match &s.kind {
                StatementKind::Meta { key, value } if key.name == "state_columns" => {
                    Some(value.value.clone())
                }
                _ => None,
            });
        let explicit = chosen.is_some();
        let text = chosen.unwrap_or_else(|| DEFAULT_STATE_COLUMNS.to_string());
        let any_x = self.values().iter().any(|v| match v {
            Value::State(sv) => sv.st.get(Field::X).is_some(),
            _ => false,
        });
        let mut out: Vec<Field> = Vec::new();
        for w in text.split([' ', ',']).filter(|w| !w.is_empty()) {
            if let Some(f) = Field::from_name(w.trim_start_matches('.'))
                && !out.contains(&f)
                && (explicit || f != Field::X || any_x)
            {
                out.push(f);
            }
        }
        out
    }

    /// The number text of an input written as a plain literal in its
    /// display unit (`1.01325` of `1.01325 bar`).
    fn written_digits(&self, i: usize) -> Option<String> {
        let n = self.nodes().get(i)?;
        let StatementKind::Input { value, .. } = &self.worksheet().statements.get(n.stmt)?.kind
        else {
            return None;
        };
        let src = src_of(self);
        let (span, _, unit) = input_literal(value, src)?;
        let same_unit = match (&n.display, unit) {
            (DisplayUnit::Fixed { text, .. }, Some(u)) => {
                crate::check::normalise_unit_text(u.span.slice(src)) == *text
            }
            (DisplayUnit::Auto, None) => {
                let Ty::Num(q) = n.ty else { return None };
                q.dim == Dim::NONE
            }
            _ => false,
        };
        same_unit.then(|| span.slice(src).to_string())
    }

    fn state_table(&self, r: &Report) -> StateTable {
        let mut rows_nodes = Vec::new();
        for b in &r.blocks {
            if let Block::Quantity(q) = b
                && matches!(self.value(q.node), Value::State(_))
            {
                rows_nodes.push(q.node);
            }
        }
        let fields = self.state_columns();
        let columns: Vec<StateColumn> = fields
            .iter()
            .map(|&f| {
                let display = rows_nodes
                    .first()
                    .map_or(DisplayUnit::Auto, |&n| self.state_field_display(n, f));
                let unit = match &display {
                    DisplayUnit::Fixed { text, .. } => text.clone(),
                    DisplayUnit::Auto => units::si_unit(field_dim(f)),
                };
                let unit = if field_dim(f) == Dim::NONE {
                    String::new()
                } else {
                    unit
                };
                StateColumn {
                    field: f,
                    unit,
                    display,
                }
            })
            .collect();
        let mut rows = Vec::new();
        for &n in &rows_nodes {
            let Value::State(sv) = self.value(n) else {
                continue;
            };
            let node = &self.nodes()[n];
            rows.push(StateTableRow {
                name: node.name.as_ref().map_or(String::new(), |x| x.name.clone()),
                description: node.description.clone(),
                expr: node.expr_span.slice(self.source()).to_string(),
                cells: columns
                    .iter()
                    .map(|c| {
                        sv.st.get(c.field).map(|x| match &c.display {
                            DisplayUnit::Fixed { unit, .. } => unit.from_si(x),
                            DisplayUnit::Auto => x,
                        })
                    })
                    .collect(),
                node: n,
            });
        }
        let mut notes = Vec::new();
        if let Some(c) = columns.iter().find(|c| c.field == Field::P) {
            let gauge: Vec<String> = self
                .nodes()
                .iter()
                .filter(|n| {
                    n.kind == NodeKind::Input
                        && matches!(&n.display, DisplayUnit::Fixed { text, .. }
                            if absolute_of(text) != text.as_str() && absolute_of(text) == c.unit)
                })
                .filter_map(|n| n.name.as_ref().map(|x| format!("`{}`", x.name)))
                .collect();
            if !gauge.is_empty() && !rows.is_empty() {
                notes.push(format!(
                    "Pressures in the state table are absolute ({}); the gauge input{} {} {} shown absolute.",
                    c.unit,
                    if gauge.len() == 1 { "" } else { "s" },
                    gauge.join(", "),
                    if gauge.len() == 1 { "is" } else { "are" }
                ));
            }
        }
        StateTable {
            columns,
            rows,
            notes,
        }
    }

    /// Every property model the worksheet used, with its source, range and
    /// reference state, in order of first use.
    pub fn methods(&self) -> Vec<MethodRow> {
        let mut out: Vec<MethodRow> = Vec::new();
        for &i in self.order() {
            let sub = match self.value(i) {
                Value::Substance(s) => &**s,
                Value::State(sv) => &*sv.sub,
                _ => continue,
            };
            let name = self.nodes()[i]
                .name
                .as_ref()
                .map_or(String::new(), |n| n.name.clone());
            let m = method_of(sub);
            match out.iter_mut().find(|x| x.model == m.model) {
                Some(x) => x.used_by.push(name),
                None => {
                    let mut m = m;
                    m.used_by.push(name);
                    out.push(m);
                }
            }
        }
        // Worksheet order of the names.
        out.sort_by_key(|m| {
            m.used_by
                .iter()
                .filter_map(|n| self.node_index(n))
                .map(|i| self.nodes()[i].stmt)
                .min()
        });
        for m in &mut out {
            m.used_by
                .sort_by_key(|n| self.node_index(n).map(|i| self.nodes()[i].stmt));
        }
        out
    }
}

/// Source, range and reference state of a substance's model.
pub fn method_of(sub: &Substance) -> MethodRow {
    let (model, citation, range, reference) = match sub {
        Substance::IdealGas(g) => (
            format!("ideal gas {} (temperature-dependent cp)", g.name()),
            "NASA Glenn 7-coefficient polynomials: McBride, Zehe & Gordon, NASA/TP-2002-211556 (2002), coefficients as distributed in the Burcat thermochemical database"
                .to_string(),
            "200 K to 6000 K; ideal-gas behaviour (low pressure, far from condensation)".to_string(),
            "h = 0 at 298.15 K (sensible enthalpy); s is the absolute (third-law) entropy at 100 kPa, s = s°(T) - R ln(p / 100 kPa)"
                .to_string(),
        ),
        Substance::PerfectGas(_) => (
            "perfect gas (constant cp)".to_string(),
            "ideal-gas relations with the constant cp and R written in the worksheet".to_string(),
            "constant cp: a warning beyond a 200 K temperature span (common practice)".to_string(),
            "h = 0 at 298.15 K; s = 0 at 298.15 K and 100 kPa".to_string(),
        ),
        Substance::Incompressible(_) => (
            "incompressible substance (constant c and density)".to_string(),
            "h = c (T - T_ref) + v (p - p_ref), s = c ln(T / T_ref), with c and density written in the worksheet"
                .to_string(),
            "liquids and solids far from saturation; the worksheet's values set the accuracy"
                .to_string(),
            "h = 0 at 298.15 K and 101.325 kPa; s = 0 at 298.15 K".to_string(),
        ),
        Substance::Fluid(f) => (
            f.describe().to_string(),
            f.citation().to_string(),
            f.range().to_string(),
            f.reference_state().to_string(),
        ),
    };
    MethodRow {
        model,
        citation,
        range,
        reference,
        used_by: Vec::new(),
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

/// Fields of a substance: (name, dimension, SI value, words). First the
/// fields the language offers (`.M` molar mass when the model knows it,
/// `.R` for gases; [`is_substance_field`]), then the model's parameters
/// (cp, cv, k, density) that the package's formulas use.
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

/// Display unit of a substance field: molar mass in g/mol.
pub fn substance_display(name: &str) -> DisplayUnit {
    match name {
        "M" => fixed_unit("g/mol").unwrap_or(DisplayUnit::Auto),
        _ => DisplayUnit::Auto,
    }
}

/// Whether a substance field is one the language offers (`.M`, `.R`;
/// README, substances in "A short tour of the language"); the others are model parameters.
pub fn is_substance_field(name: &str) -> bool {
    matches!(name, "M" | "R")
}
