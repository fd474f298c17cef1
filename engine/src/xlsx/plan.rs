//! What each node of the worksheet contributes to the package: number
//! rows with their basis (input, live formula, engine value), states and
//! substances with their fields, checks with their compiled comparison
//! and operands; and which inputs make a row stale.

use std::collections::BTreeSet;

use super::formula::{self, Env, Fragment, Own, SubSym};
use super::names::{self, NameKind};
use crate::check::{DisplayUnit, NodeKind};
use crate::eval::{Code, Value};
use crate::model::{Model, Status};
use crate::report::{field_words, substance_fields};
use crate::thermo::Field;
use crate::types::Ty;
use crate::units::Dim;

/// How a row's SI value is obtained.
#[derive(Clone, Debug)]
pub(super) enum Basis {
    /// An input: SI from the editable cell.
    Input,
    /// A live formula.
    Live(Fragment),
    /// The engine's value (no closed form).
    Engine,
}

/// One number row of the calculation sheet.
pub(super) struct Row {
    pub symbol: String,
    pub description: String,
    pub expr: String,
    /// Defined name of the SI cell.
    pub si_name: String,
    pub si: Option<f64>,
    pub dim: Dim,
    pub display: DisplayUnit,
    pub basis: Basis,
}

/// What a node contributes.
pub(super) enum NodeRows {
    Number(Box<Row>),
    Compound {
        head: String,
        text: String,
        expr: String,
        fields: Vec<Row>,
    },
    /// The comparison, and each operand (SI), compiled when closed form.
    Check(Option<Fragment>, Vec<Option<Fragment>>),
    Text(String),
}

/// Plan the rows of every node (topological order for the compiler).
pub(super) fn plan(model: &Model) -> Vec<Option<NodeRows>> {
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
            (NodeKind::Check, _, _) => NodeRows::Check(
                env.num(&node.code),
                node.operands.iter().map(|o| env.num(&o.code)).collect(),
            ),
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
                } else if model.import_of(i).is_some() {
                    // A value computed in a used worksheet: the engine's
                    // (stale when an input of that worksheet is edited).
                    Basis::Engine
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
                        Basis::Live(Fragment::name(names::field_name(a, f.name())))
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
                    let own = |f: &str| Fragment::name(names::field_name(&name, f));
                    let e = match (&sym, fname) {
                        (Some(SubSym::Perfect { r, .. }), "R") => Some(r.clone()),
                        (Some(SubSym::Perfect { cp, .. }), "cp") => Some(cp.clone()),
                        (Some(SubSym::Perfect { .. }), "cv") => Some(Fragment::name(format!(
                            "{}-{}",
                            own("cp").text,
                            own("R").text
                        ))),
                        (Some(SubSym::Perfect { .. }), "k") => Some(Fragment::name(format!(
                            "{}/({}-{})",
                            own("cp").text,
                            own("cp").text,
                            own("R").text
                        ))),
                        (Some(SubSym::Incompressible { c, .. }), "cp" | "cv") => Some(c.clone()),
                        (Some(SubSym::Incompressible { rho, .. }), "rho") => Some(rho.clone()),
                        (Some(SubSym::Ideal(_)), "R") => Some(Fragment::num(x)),
                        _ => None,
                    };
                    let (symbol, description) = if crate::report::is_substance_field(fname) {
                        (format!("{name}.{fname}"), words.to_string())
                    } else {
                        (
                            format!("{name}: {fname}"),
                            format!("{words} (model parameter)"),
                        )
                    };
                    fields.push(Row {
                        symbol,
                        description,
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
                        r: Fragment::name(names::field_name(&name, "R")),
                        cp: Fragment::name(names::field_name(&name, "cp")),
                    }),
                    Some(SubSym::Incompressible { .. }) => Some(SubSym::Incompressible {
                        c: Fragment::name(names::field_name(&name, "cp")),
                        rho: Fragment::name(names::field_name(&name, "rho")),
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

pub(super) fn field_dim(f: Field) -> Dim {
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
        NodeRows::Check(e, _) => e.is_none(),
        NodeRows::Text(_) => false,
    }
}

/// For each node: the inputs whose change makes it stale (it is, or uses,
/// an engine value computed from them). Only nodes with engine rows start
/// a set (their transitive inputs, found by a walk up the graph); the rest
/// inherit their dependencies' sets, so a worksheet without engine values
/// costs one pass (no per-node input sets: those made large worksheets
/// quadratic in time and memory).
pub(super) fn stale_inputs(model: &Model, plan: &[Option<NodeRows>]) -> Vec<BTreeSet<usize>> {
    let nodes = model.nodes();
    let n = nodes.len();
    let mut stale: Vec<BTreeSet<usize>> = vec![BTreeSet::new(); n];
    // Walk state reused by every search: a node is visited in search `k`
    // when `seen[node] == k`.
    let mut seen: Vec<usize> = vec![0; n];
    let mut search = 0;
    let mut stack = Vec::new();
    // The numeric inputs of each used worksheet (by its index in
    // `Model::used`): a value computed there goes stale when any of them is
    // edited in the package (conservative: the used worksheet's own
    // dependencies are not followed).
    let mut used_inputs: Vec<Vec<usize>> = vec![Vec::new(); model.used().len()];
    for (j, node) in nodes.iter().enumerate() {
        if let Some((k, _)) = model.import_of(j)
            && node.kind == NodeKind::Input
            && matches!(node.ty, Ty::Num(_))
            && let Some(v) = used_inputs.get_mut(k)
        {
            v.push(j);
        }
    }
    for &i in model.order() {
        let mut st = BTreeSet::new();
        for &d in &nodes[i].deps {
            st.extend(stale[d].iter().copied());
        }
        if let Some((k, _)) = model.import_of(i)
            && nodes[i].kind != NodeKind::Input
            && let Some(v) = used_inputs.get(k)
        {
            st.extend(v.iter().copied());
        }
        if plan[i].as_ref().is_some_and(has_engine_rows) {
            search += 1;
            stack.clear();
            stack.extend(nodes[i].deps.iter().copied());
            while let Some(d) = stack.pop() {
                if seen[d] == search {
                    continue;
                }
                seen[d] = search;
                if nodes[d].kind == NodeKind::Input && matches!(nodes[d].ty, Ty::Num(_)) {
                    st.insert(d);
                }
                stack.extend(nodes[d].deps.iter().copied());
            }
        }
        stale[i] = st;
    }
    stale
}

pub(super) fn flag_formula(model: &Model, set: &BTreeSet<usize>, text: &str) -> Option<String> {
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
