//! `sheaf pull`: the inputs a reviewer changed in a package (read from its
//! bytes), numbers typed over computed cells, and the worksheet text with
//! the changed literals rewritten (every other byte kept).

use sheaf_grammar::Span;

use super::reader::{self, Reviewed};
use super::{XlsxError, calc_sheet, input_shown, names, plan, writer};
use crate::check::NodeKind;
use crate::model::Model;
use crate::types::Ty;

/// An input whose value a reviewer changed.
#[derive(Clone, Debug, PartialEq)]
pub struct Change {
    pub name: String,
    /// Old and new value in the display unit.
    pub old: f64,
    pub new: f64,
    pub unit: String,
    /// New value in SI.
    pub new_si: f64,
    /// Where the reviewer changed it (`Calculation!C8`).
    pub cell: String,
    /// The literal to rewrite; `None` when the input is not a plain
    /// literal, or its new value is in doubt (then it is not written back).
    pub literal: Option<Span>,
    /// Said to the user: a unit the reviewer changed (converted, or why it
    /// could not be).
    pub note: Option<String>,
}

/// A unit a reviewer typed, if it is one of the input's dimension.
fn reviewer_unit(text: &str, dim: crate::units::Dim) -> Result<crate::units::Unit, String> {
    let parsed =
        sheaf_grammar::parse_unit(text).map_err(|_| "not a unit sheaf knows".to_string())?;
    let unit = crate::units::resolve(&parsed).map_err(|e| e.message)?;
    if unit.dim != dim {
        return Err(format!(
            "it is {}, the input is {}",
            crate::units::quantity_name(unit.dim),
            crate::units::quantity_name(dim)
        ));
    }
    Ok(unit)
}

/// Inputs whose reviewed value differs from the model's (inputs unknown
/// to the model are ignored; the CLI lists them from `reviewed`).
pub fn pull_changes(model: &Model, reviewed: &Reviewed) -> Vec<Change> {
    let mut out = Vec::new();
    for r in &reviewed.inputs {
        let Some(i) = model.node_index(&r.name) else {
            continue;
        };
        let Some((sh, literal)) = input_shown(model, i) else {
            continue;
        };
        let Ty::Num(q) = model.nodes()[i].ty else {
            continue;
        };
        // The Unit cell beside the value: a reviewer may have changed it.
        let changed_unit = r
            .unit
            .as_deref()
            .filter(|u| crate::check::normalise_unit_text(u) != sh.unit);
        let (new, note, literal) = match changed_unit {
            None => (r.value, None, literal),
            Some(u) => match reviewer_unit(u, q.dim) {
                Ok(unit) => {
                    let new = (unit.to_si(r.value) - sh.offset) / sh.factor;
                    let note = format!(
                        "the reviewer wrote {} {u}; converted to {}",
                        literal_text(r.value),
                        sh.unit
                    );
                    if new.is_finite() {
                        (new, Some(note), literal)
                    } else {
                        (
                            r.value,
                            Some(format!("{note}: not a finite number; not written")),
                            None,
                        )
                    }
                }
                Err(why) => (
                    r.value,
                    Some(format!(
                        "the reviewer changed the unit to `{u}` ({why}); not written: edit it by hand"
                    )),
                    None,
                ),
            },
        };
        if new == sh.value && note.is_none() {
            continue;
        }
        out.push(Change {
            name: r.name.clone(),
            old: sh.value,
            new,
            unit: sh.unit.clone(),
            new_si: new * sh.factor + sh.offset,
            cell: r.cell.clone(),
            literal,
            note,
        });
    }
    out
}

/// Number text for a worksheet literal: the shortest text that reads back
/// as the same number ([`crate::units::shortest_text`]).
pub fn literal_text(x: f64) -> String {
    crate::units::shortest_text(x)
}

/// The worksheet text with the literals of the changed inputs replaced;
/// every other byte is kept. Changes without a literal are skipped.
pub fn rewrite_inputs(source: &str, changes: &[Change]) -> String {
    let mut spans: Vec<(Span, String)> = changes
        .iter()
        .filter_map(|c| c.literal.map(|s| (s, literal_text(c.new))))
        .collect();
    spans.sort_by_key(|(s, _)| s.start);
    let mut out = String::with_capacity(source.len() + 16);
    let mut pos = 0;
    for (s, text) in spans {
        if s.start < pos || s.end > source.len() {
            continue;
        }
        out.push_str(&source[pos..s.start]);
        out.push_str(&text);
        pos = s.end;
    }
    out.push_str(&source[pos..]);
    out
}

/// The model at the input values a package records as used (its `u`
/// cells), when any differs from the model's own; `None` when none does
/// (or none can be read).
fn as_written(model: &Model, bytes: &[u8]) -> Result<Option<Model>, XlsxError> {
    let inputs: Vec<(usize, String)> = model
        .nodes()
        .iter()
        .enumerate()
        .filter(|(_, n)| n.kind == NodeKind::Input)
        .filter_map(|(i, n)| n.name.as_ref().map(|x| (i, x.name.clone())))
        .collect();
    let refs: Vec<String> = inputs
        .iter()
        .map(|(_, n)| names::name_of(names::NameKind::Recorded, n))
        .collect();
    let refs: Vec<&str> = refs.iter().map(String::as_str).collect();
    let used = reader::read_cells(bytes, &refs)?;
    let mut out: Option<Model> = None;
    for ((i, name), v) in inputs.iter().zip(used) {
        let (Ok(v), Some((sh, _))) = (v, input_shown(model, *i)) else {
            continue;
        };
        if v != sh.value {
            let m = out.get_or_insert_with(|| model.clone());
            // An input the model refuses keeps its own value.
            let _ = m.set_input(name, v * sh.factor + sh.offset);
        }
    }
    if let Some(m) = out.as_mut() {
        m.evaluate();
    }
    Ok(out)
}

/// A number a reviewer typed into the calculation sheet outside the input
/// cells (over a formula, over an engine value, or into a cell the package
/// left without a number): `pull` warns and takes nothing from it.
#[derive(Clone, Debug, PartialEq)]
pub struct TypedOver {
    /// Where (`Calculation!C9`).
    pub cell: String,
    pub value: f64,
    /// The quantity of the row (`T1`, `st1.T` in the state table), when
    /// the row has one.
    pub quantity: Option<String>,
}

/// The numbers typed over cells of the calculation sheet that are not
/// input cells, and how many more there were beyond
/// [`reader::PLAIN_KEPT`]. The package writes a plain number on that sheet
/// only into an input cell and into the SI cell of an engine value; any
/// other plain number was typed, and so is an engine value that is no
/// longer the engine's (1e-9 relative).
pub fn typed_over(model: &Model, bytes: &[u8]) -> Result<(Vec<TypedOver>, usize), XlsxError> {
    use std::collections::{HashMap, HashSet};
    let scan = reader::plain_numbers(bytes, writer::CALC)?;
    // The engine values in the package are those of the input values it
    // was written with (the data sheet's `u` cells: `--set`, a case): the
    // model is brought to them before comparing.
    let written = as_written(model, bytes)?;
    let model = written.as_ref().unwrap_or(model);
    // Rows of the plan by the lower-case defined name of their SI cell.
    let mut rows: HashMap<String, (String, bool, Option<f64>)> = HashMap::new();
    for nr in plan::plan(model).into_iter().flatten() {
        let mut add = |r: &plan::Row| {
            rows.insert(
                r.si_name.to_ascii_lowercase(),
                (
                    r.symbol.clone(),
                    matches!(r.basis, plan::Basis::Engine),
                    r.si,
                ),
            );
        };
        match &nr {
            plan::NodeRows::Number(r) => add(r),
            plan::NodeRows::Compound { fields, .. } => fields.iter().for_each(add),
            _ => {}
        }
    }
    let mut inputs: HashSet<&reader::CellPos> = HashSet::new();
    let mut engine: HashMap<&reader::CellPos, Option<f64>> = HashMap::new();
    let mut row_quantity: HashMap<u32, String> = HashMap::new();
    for (name, pos) in &scan.names {
        if let Some((names::NameKind::Input, _, None)) = names::decode(name) {
            inputs.insert(pos);
        } else if let Some((symbol, is_engine, si)) = rows.get(&name.to_ascii_lowercase()) {
            row_quantity.insert(pos.row, symbol.clone());
            if *is_engine {
                engine.insert(pos, *si);
            }
        }
    }
    let report = model.report();
    let states = &report.states;
    let mut out = Vec::new();
    for (pos, x) in &scan.numbers {
        if inputs.contains(pos) {
            continue;
        }
        if let Some(Some(si)) = engine.get(pos)
            && (x - si).abs() <= 1e-9 * si.abs()
        {
            continue;
        }
        let quantity = row_quantity.get(&pos.row).cloned().or_else(|| {
            // A state-point table row: the state's name in column A, a
            // field per column from the Value column on.
            let label = scan.labels.get(&pos.row)?;
            states.rows.iter().find(|r| r.name == *label)?;
            let k = pos.col.checked_sub(u32::from(calc_sheet::C_VAL))?;
            let c = states.columns.get(k as usize)?;
            Some(format!("{label}.{}", c.field.name()))
        });
        out.push(TypedOver {
            cell: pos.a1(),
            value: *x,
            quantity,
        });
    }
    Ok((out, scan.omitted))
}
