//! The checker: resolves names, builds the dependency graph, infers every
//! expression's type (dimension, absolute/difference, state model) and
//! compiles it to [`Code`]. Runs once, before any evaluation; all errors it
//! finds are reported together.

use rustc_hash::FxHashMap as HashMap;
use std::borrow::Cow;
use std::sync::Arc;

use sheaf_grammar::{
    Arg, BinOp, CompareLink, Expr, ExprKind, Ident, LogicOp, Span, StatementKind, StringLit,
    UnitExpr, Worksheet,
};

use crate::builtins::{self, BoundArg, Builtin};
use crate::diag::Diagnostic;
use crate::eval::{CallSpans, Code};
use crate::externals::Externals;
use crate::graph;
use crate::thermo::{Field, ModelKind};
use crate::types::{QuantityType, Ty, describe_qty};
use crate::units::{self, Affinity, Dim, Unit};

/// What a node is.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum NodeKind {
    Input,
    Computed,
    Check,
}

pub use crate::units::DisplayUnit;

/// One evaluable item of the worksheet: an input, a computed value or a
/// check.
#[derive(Clone, Debug)]
pub struct Node {
    pub kind: NodeKind,
    /// Name (inputs and computed values).
    pub name: Option<Ident>,
    /// Index of the statement in the worksheet.
    pub stmt: usize,
    pub ty: Ty,
    pub display: DisplayUnit,
    pub code: Code,
    /// Nodes this one reads.
    pub deps: Vec<usize>,
    /// Span of the defining expression (for a check: the whole comparison).
    pub expr_span: Span,
    pub description: Option<String>,
    /// For a check: every operand of its comparisons, in order, with the
    /// display unit the checker chose for it (for showing actual values and
    /// limits).
    pub operands: Vec<Operand>,
    /// Warnings found while checking (reported with the node's results).
    pub warnings: Vec<Diagnostic>,
}

/// One operand of a comparison in a check.
#[derive(Clone, Debug)]
pub struct Operand {
    /// Where it is written.
    pub span: Span,
    pub code: Code,
    pub dim: Dim,
    /// Common to the operands of one comparison (chain).
    pub display: DisplayUnit,
}

/// The checked and compiled worksheet.
#[derive(Clone, Debug)]
pub struct Checked {
    pub nodes: Vec<Node>,
    /// Topological order (every node after its dependencies).
    pub order: Vec<usize>,
    pub names: HashMap<String, usize>,
    /// Cases, sweeps and finds.
    pub whatif: crate::study::WhatIf,
    /// The reference pressure of the worksheet's gauge units.
    pub gauge: GaugeRef,
    /// Whether a gauge unit is written anywhere in the worksheet (resolved
    /// units, not a text search).
    pub uses_gauge: bool,
    /// Nodes `0..imports` are the names of used worksheets (see
    /// [`Import`]); they have no code and are filled in by the model.
    pub imports: usize,
}

/// The reference pressure of a worksheet's gauge units (`gauge EXPR`).
#[derive(Clone, Debug, PartialEq)]
pub struct GaugeRef {
    /// Absolute pressure, Pa.
    pub si: f64,
    /// The expression as written (`95 kPa`); `None` for the default.
    pub text: Option<String>,
    pub description: Option<String>,
    /// Where the `gauge` statement is written.
    pub span: Option<Span>,
}

impl GaugeRef {
    /// The default: the standard atmosphere.
    pub fn standard() -> GaugeRef {
        GaugeRef {
            si: units::standard_atmosphere(),
            text: None,
            description: None,
            span: None,
        }
    }

    /// Whether the worksheet states its own reference.
    pub fn is_stated(&self) -> bool {
        self.text.is_some()
    }

    /// "95 kPa (site barometric pressure)" or "the standard atmosphere,
    /// 101.325 kPa".
    pub fn describe(&self) -> String {
        match &self.text {
            Some(t) => {
                let kpa = units::format_sig(self.si / 1000.0, 6);
                let shown = if normalise_unit_text(t) == format!("{kpa} kPa") {
                    t.clone()
                } else {
                    format!("{t} = {kpa} kPa")
                };
                match &self.description {
                    Some(d) => format!("{shown} ({d})"),
                    None => shown,
                }
            }
            None => format!(
                "the standard atmosphere, {} kPa",
                units::format_sig(self.si / 1000.0, 6)
            ),
        }
    }
}

/// A name (or check) of a used worksheet, handed to the checker by the
/// model: it becomes node `k` of the using worksheet for the `k`-th import.
#[derive(Clone, Debug)]
pub struct Import {
    /// `PREFIX.NAME`; `None` for a check.
    pub name: Option<String>,
    pub kind: NodeKind,
    pub ty: Ty,
    pub display: DisplayUnit,
    pub description: Option<String>,
    /// Index of the `use` statement in the using worksheet.
    pub stmt: usize,
    /// Where the `use` statement is written.
    pub span: Span,
}

/// What the checker is told about the `use` statements: the imported
/// names and each prefix (with whether its worksheet could be checked; the
/// names of a failed one are not reported unknown again).
#[derive(Clone, Debug, Default)]
pub struct Imports {
    pub names: Vec<Import>,
    pub prefixes: Vec<(String, bool)>,
}

/// Check and compile a parsed worksheet. `src` is the source the spans
/// point into.
pub fn check(ws: &Worksheet, src: &str, externals: &Externals) -> Result<Checked, Vec<Diagnostic>> {
    check_with(ws, src, externals, &Imports::default())
}

/// [`check`] with the names of used worksheets (`use`).
pub fn check_with(
    ws: &Worksheet,
    src: &str,
    externals: &Externals,
    imports: &Imports,
) -> Result<Checked, Vec<Diagnostic>> {
    let mut diags = Vec::new();
    let mut nodes: Vec<Node> = Vec::new();
    let mut names: HashMap<String, usize> = HashMap::default();
    let mut exprs: Vec<Option<(&Expr, Option<&UnitExpr>)>> = Vec::new();
    let mut gauge = GaugeRef::standard();
    let mut uses_gauge = false;
    let prefixes: HashMap<&str, bool> = imports
        .prefixes
        .iter()
        .map(|(p, ok)| (p.as_str(), *ok))
        .collect();
    let mut prefix_spans: HashMap<&str, Span> = HashMap::default();

    // 0. Names of used worksheets come first.
    for im in &imports.names {
        if let Some(n) = &im.name {
            names.insert(n.clone(), nodes.len());
        }
        nodes.push(Node {
            kind: im.kind,
            name: im.name.as_ref().map(|n| Ident {
                name: n.clone(),
                span: im.span,
            }),
            stmt: im.stmt,
            ty: im.ty,
            display: im.display.clone(),
            code: Code::Absent,
            deps: Vec::new(),
            expr_span: im.span,
            description: im.description.clone(),
            operands: Vec::new(),
            warnings: Vec::new(),
        });
        exprs.push(None);
    }

    // 1. Collect named nodes and checks.
    for (i, stmt) in ws.statements.iter().enumerate() {
        let (kind, name, value, unit, desc) = match &stmt.kind {
            StatementKind::Input {
                name,
                value,
                description,
            } => (NodeKind::Input, Some(name), value, None, description),
            StatementKind::Define {
                name,
                unit,
                value,
                description,
            } => (
                NodeKind::Computed,
                Some(name),
                value,
                unit.as_ref(),
                description,
            ),
            StatementKind::Check { cond, description } => {
                (NodeKind::Check, None, cond, None, description)
            }
            // Checked after the nodes (whatif_statements).
            StatementKind::Case { .. }
            | StatementKind::Sweep { .. }
            | StatementKind::Find { .. } => continue,
            StatementKind::Use { prefix, .. } => {
                if let Some(&first) = prefix_spans.get(prefix.name.as_str()) {
                    diags.push(
                        Diagnostic::error(
                            format!("the prefix `{}` is used twice", prefix.name),
                            prefix.span,
                        )
                        .with_secondary(first, "first used here")
                        .with_note("help: give each used worksheet its own prefix"),
                    );
                } else {
                    prefix_spans.insert(prefix.name.as_str(), prefix.span);
                }
                continue;
            }
            StatementKind::Gauge { value, description } => {
                if let Some(first) = gauge.span {
                    diags.push(
                        Diagnostic::error("a worksheet has one `gauge` reference", value.span)
                            .with_label("second `gauge`")
                            .with_secondary(first, "the reference is set here")
                            .with_note("help: remove one of them"),
                    );
                    continue;
                }
                match gauge_value(value, src) {
                    Ok(si) => {
                        gauge = GaugeRef {
                            si,
                            text: Some(normalise_unit_text(value.span.slice(src))),
                            description: description.as_ref().map(|d| d.value.clone()),
                            span: Some(stmt.span),
                        };
                    }
                    Err(ds) => {
                        diags.extend(ds);
                        gauge.span = Some(stmt.span);
                    }
                }
                continue;
            }
            _ => continue,
        };
        if let Some(n) = name {
            if let Some(&first) = prefix_spans.get(n.name.as_str()) {
                diags.push(
                    Diagnostic::error(
                        format!("`{}` is the prefix of a used worksheet", n.name),
                        n.span,
                    )
                    .with_secondary(first, "used here")
                    .with_note("help: rename the value or the prefix"),
                );
                continue;
            }
            if let Some(&prev) = names.get(&n.name) {
                let prev_span = nodes[prev].name.as_ref().map_or(n.span, |p| p.span);
                diags.push(
                    Diagnostic::error(format!("`{}` is defined twice", n.name), n.span)
                        .with_label("second definition")
                        .with_secondary(prev_span, "first defined here")
                        .with_note("help: names are unique in a worksheet; rename one of them"),
                );
                continue;
            }
            if builtins::constant(&n.name).is_some() {
                diags.push(
                    Diagnostic::error(
                        format!(
                            "`{}` is a built-in constant and cannot be redefined",
                            n.name
                        ),
                        n.span,
                    )
                    .with_note("help: choose another name"),
                );
                continue;
            }
            names.insert(n.name.clone(), nodes.len());
        }
        let expr_span = value.span;
        nodes.push(Node {
            kind,
            name: name.cloned(),
            stmt: i,
            ty: Ty::Error,
            display: DisplayUnit::Auto,
            code: Code::Absent,
            deps: Vec::new(),
            expr_span,
            description: desc.as_ref().map(|d: &StringLit| d.value.clone()),
            operands: Vec::new(),
            warnings: Vec::new(),
        });
        exprs.push(Some((value, unit)));
    }
    // A prefix named by a `use` that the model did not hand in (a second
    // use of one prefix) still counts as a prefix.
    let mut prefixes = prefixes;
    for p in prefix_spans.keys() {
        prefixes.entry(p).or_insert(false);
    }
    let rx = Resolve {
        names: &names,
        prefixes: &prefixes,
    };

    // 2. Dependencies (by name), unknown names.
    let mut all_deps: Vec<Vec<usize>> = Vec::with_capacity(nodes.len());
    let mut refs = Vec::new();
    // Built once: suggestions for every unknown name stay bounded.
    let suggester = name_suggester(&names);
    for e in &exprs {
        let Some((value, _)) = e else {
            all_deps.push(Vec::new());
            continue;
        };
        refs.clear();
        collect_names(value, &rx, &mut refs);
        let mut deps = Vec::new();
        for (name, span) in &refs {
            if let Some(&j) = names.get(name.as_ref()) {
                if !deps.contains(&j) {
                    deps.push(j);
                }
            } else if let Some(d) = rx.unknown(name, *span, &suggester) {
                diags.push(d);
            }
        }
        all_deps.push(deps);
    }

    // 3. Order; cycles.
    let order = graph::topo_order(&all_deps);
    for (node, deps) in nodes.iter_mut().zip(all_deps) {
        node.deps = deps;
    }
    let order = match order {
        Ok(o) => o,
        Err(cycle) => {
            let refs_of = |i: usize| {
                let mut refs = Vec::new();
                if let Some((e, _)) = exprs[i] {
                    collect_names(e, &rx, &mut refs);
                }
                refs
            };
            diags.push(cycle_diagnostic(&cycle, &nodes, &names, refs_of));
            return Err(diags);
        }
    };

    // 4. Types and code, in dependency order.
    let mut cx = Checker {
        src,
        names: &names,
        types: vec![Ty::Error; nodes.len()],
        displays: vec![None; nodes.len()],
        display_of: vec![DisplayUnit::Auto; nodes.len()],
        diags: Vec::new(),
        operands: None,
        warnings: Vec::new(),
        input_nodes: nodes.iter().map(|n| n.kind == NodeKind::Input).collect(),
        input_consts: vec![None; nodes.len()],
        unit_cache: HashMap::default(),
        externals,
        gauge: gauge.si,
        uses_gauge: false,
        prefixes: !prefixes.is_empty(),
    };
    for &i in &order {
        let Some((value, unit)) = exprs[i] else {
            cx.types[i] = nodes[i].ty;
            cx.display_of[i] = nodes[i].display.clone();
            continue;
        };
        let node_kind = nodes[i].kind;
        let (ty, code, display) = match node_kind {
            NodeKind::Check => {
                cx.operands = Some(Vec::new());
                let (ty, code) = cx.condition(value);
                nodes[i].operands = cx.operands.take().unwrap_or_default();
                (ty, code, DisplayUnit::Auto)
            }
            NodeKind::Input | NodeKind::Computed => {
                let (ty, code) = cx.expr(value);
                let (display, written) =
                    cx.display_unit(ty, value, unit, node_kind == NodeKind::Input);
                cx.displays[i] = written;
                if node_kind == NodeKind::Input {
                    cx.input_consts[i] = const_value(&code);
                }
                (ty, code, display)
            }
        };
        cx.types[i] = ty;
        cx.display_of[i] = display.clone();
        nodes[i].warnings = std::mem::take(&mut cx.warnings);
        nodes[i].ty = ty;
        nodes[i].code = code;
        nodes[i].display = display;
    }
    let whatif = whatif_statements(&mut cx, ws, &nodes, &order);
    diags.extend(cx.diags);
    uses_gauge |= cx.uses_gauge;
    if diags.is_empty() {
        Ok(Checked {
            nodes,
            order,
            names,
            whatif,
            gauge,
            uses_gauge,
            imports: imports.names.len(),
        })
    } else {
        diags.sort_by_key(|d| d.span().map_or(0, |s| s.start));
        Err(diags)
    }
}

/// Check `case`, `sweep` and `find` statements against the checked nodes
/// (README "A short tour of the language"): a case and a sweep set only inputs, with values of the
/// input's quantity; a find solves an input for a condition of one
/// dimension, and the input it solves cannot be set otherwise.
fn whatif_statements(
    cx: &mut Checker,
    ws: &Worksheet,
    nodes: &[Node],
    order: &[usize],
) -> crate::study::WhatIf {
    use crate::study::{self as whatif, CaseDef, CaseSetting, FindDef, SweepDef};
    use sheaf_grammar::SweepPoints;
    let mut out = whatif::WhatIf::default();
    let n = nodes.len();
    // Transitive dependencies, by node (bit sets would do; worksheets with
    // finds are small).
    let upstream_of = |start: &[usize]| -> Vec<bool> {
        let mut seen = vec![false; n];
        let mut stack = start.to_vec();
        while let Some(i) = stack.pop() {
            if !seen[i] {
                seen[i] = true;
                stack.extend(nodes[i].deps.iter().copied());
            }
        }
        seen
    };

    // Finds first: cases and sweeps must not set their inputs.
    let mut finds: Vec<FindDef> = Vec::new();
    let mut find_up: Vec<Vec<bool>> = Vec::new();
    let mut find_spans: Vec<Span> = Vec::new();
    for stmt in &ws.statements {
        let StatementKind::Find {
            input,
            low,
            high,
            left,
            eq_span: _,
            right,
            description,
        } = &stmt.kind
        else {
            continue;
        };
        let Some((x, want)) = cx.input_for(input, nodes, "a `find`") else {
            continue;
        };
        if let Some(k) = finds.iter().position(|f| f.input == x) {
            cx.diags.push(
                Diagnostic::error(
                    format!("`{}` is solved by two `find`s", input.name),
                    input.span,
                )
                .with_secondary(find_spans[k], "first solved here")
                .with_note("help: one `find` per input"),
            );
            continue;
        }
        let lo = cx.constant_of(low, want, &input.name, "the bracket");
        let hi = cx.constant_of(high, want, &input.name, "the bracket");
        let (lt, lc) = cx.expr(left);
        let (rt, rc) = cx.expr(right);
        let dim = match (lt, rt) {
            (Ty::Error, _) | (_, Ty::Error) => continue,
            (Ty::Num(a), Ty::Num(b)) if a.dim == b.dim => {
                if a.kinds_clash(b) {
                    cx.diags.push(
                        Diagnostic::error(
                            "the two sides of `where` mix an absolute value with a difference",
                            right.span,
                        )
                        .with_secondary(left.span, cx.side(left, a)),
                    );
                    continue;
                }
                a.dim
            }
            (Ty::Num(a), Ty::Num(b)) => {
                cx.diags.push(
                    Diagnostic::error(
                        format!(
                            "the two sides of `where` must be one quantity: the left is {}, the right is {}",
                            cx.side(left, a),
                            cx.side(right, b)
                        ),
                        right.span,
                    )
                    .with_secondary(left.span, cx.side(left, a)),
                );
                continue;
            }
            (a, b) => {
                let (bad, ty) = if matches!(a, Ty::Num(_)) {
                    (right, b)
                } else {
                    (left, a)
                };
                cx.diags.push(Diagnostic::error(
                    format!(
                        "the two sides of `where` must be numbers, but this is {}",
                        ty.describe()
                    ),
                    bad.span,
                ));
                continue;
            }
        };
        let (Some(lo), Some(hi)) = (lo, hi) else {
            continue;
        };
        if lo == hi {
            cx.diags.push(Diagnostic::error(
                "the bracket of a `find` needs two different ends",
                low.span.join(high.span),
            ));
            continue;
        }
        let side_display = cx.comparison_display(&[left, right]);
        let mut refs = Vec::new();
        let no_prefixes = HashMap::default();
        let rx = Resolve {
            names: cx.names,
            prefixes: &no_prefixes,
        };
        collect_names(left, &rx, &mut refs);
        collect_names(right, &rx, &mut refs);
        let direct: Vec<usize> = refs
            .iter()
            .filter_map(|(name, _)| cx.names.get(name.as_ref()).copied())
            .collect();
        let up = upstream_of(&direct);
        if !up[x] {
            cx.diags.push(
                Diagnostic::error(
                    format!(
                        "the condition of this `find` does not depend on `{}`",
                        input.name
                    ),
                    left.span.join(right.span),
                )
                .with_secondary(input.span, "the input to solve for")
                .with_note("help: the condition must change when the input changes"),
            );
            continue;
        }
        let mut plan = vec![x];
        plan.extend(order.iter().copied().filter(|&i| up[i] && i != x));
        let depends_on: Vec<usize> = (0..n)
            .filter(|&i| up[i] && i != x && nodes[i].kind == NodeKind::Input)
            .collect();
        let condition_span = left.span.join(right.span);
        find_up.push(up);
        find_spans.push(input.span);
        finds.push(FindDef {
            input: x,
            input_name: input.name.clone(),
            span: input.span,
            condition: condition_span.slice(cx.src).to_string(),
            condition_span,
            description: description.as_ref().map(|d| d.value.clone()),
            low: lo,
            high: hi,
            left: lc,
            right: rc,
            dim,
            side_display,
            input_display: cx.display_of[x].clone(),
            input_dim: want.dim,
            plan,
            depends_on,
        });
    }
    // Solving order: a find whose condition uses another's input after it.
    let fdeps: Vec<Vec<usize>> = (0..finds.len())
        .map(|a| {
            (0..finds.len())
                .filter(|&b| b != a && find_up[a][finds[b].input])
                .collect()
        })
        .collect();
    match graph::topo_order(&fdeps) {
        Ok(o) => {
            let mut slots: Vec<Option<FindDef>> = finds.into_iter().map(Some).collect();
            out.finds = o.into_iter().filter_map(|k| slots[k].take()).collect();
        }
        Err(cycle) => {
            let names: Vec<String> = cycle
                .iter()
                .map(|&k| format!("`{}`", finds[k].input_name))
                .collect();
            let mut d = Diagnostic::error(
                format!(
                    "these `find`s depend on each other ({}): each condition uses an input another one solves",
                    names.join(", ")
                ),
                finds[cycle[0]].span,
            );
            for &k in &cycle[1..] {
                d = d.with_secondary(finds[k].span, "solved here");
            }
            cx.diags.push(d.with_note(
                "help: solving several finds together (a simultaneous solve) is not supported yet and may come later; make one of them an input",
            ));
        }
    }
    let solved_by =
        |x: usize, out: &whatif::WhatIf| out.finds.iter().find(|f| f.input == x).map(|f| f.span);

    for stmt in &ws.statements {
        match &stmt.kind {
            StatementKind::Case {
                name,
                settings,
                description,
            } => {
                if let Some(prev) = out.cases.iter().find(|c| c.name == name.name) {
                    cx.diags.push(
                        Diagnostic::error(
                            format!("case `{}` is defined twice", name.name),
                            name.span,
                        )
                        .with_secondary(prev.span, "first defined here"),
                    );
                    continue;
                }
                if name.name == "base" {
                    cx.diags.push(Diagnostic::error(
                        "`base` is the worksheet as written; name the case otherwise",
                        name.span,
                    ));
                    continue;
                }
                let mut case = CaseDef {
                    name: name.name.clone(),
                    span: name.span,
                    description: description.as_ref().map(|d| d.value.clone()),
                    settings: Vec::new(),
                };
                for s in settings {
                    let Some((x, want)) = cx.input_for(&s.input, nodes, "a case") else {
                        continue;
                    };
                    if let Some(fs) = solved_by(x, &out) {
                        cx.diags.push(found_set_error(&s.input, fs, "a case"));
                        continue;
                    }
                    if case.settings.iter().any(|c| c.input == x) {
                        cx.diags.push(Diagnostic::error(
                            format!("case `{}` sets `{}` twice", name.name, s.input.name),
                            s.span,
                        ));
                        continue;
                    }
                    if let Some(v) = cx.constant_of(&s.value, want, &s.input.name, "a case value") {
                        case.settings.push(CaseSetting {
                            input: x,
                            si_value: v,
                            text: s.value.span.slice(cx.src).trim().to_string(),
                            span: s.span,
                        });
                    }
                }
                out.cases.push(case);
            }
            StatementKind::Sweep {
                input,
                points,
                show,
                description,
            } => {
                let Some((x, want)) = cx.input_for(input, nodes, "a sweep") else {
                    continue;
                };
                if let Some(fs) = solved_by(x, &out) {
                    cx.diags.push(found_set_error(input, fs, "a sweep"));
                    continue;
                }
                let name = input.name.as_str();
                let pts = match points {
                    SweepPoints::Step { from, to, step } => {
                        let a = cx.constant_of(from, want, name, "a sweep value");
                        let b = cx.constant_of(to, want, name, "a sweep value");
                        let d = cx.step_of(step, want, name);
                        match (a, b, d) {
                            (Some(a), Some(b), Some(d)) => whatif::step_points(a, b, d)
                                .map_err(|m| (m, from.span.join(step.span))),
                            _ => continue,
                        }
                    }
                    SweepPoints::Count { from, to, count } => {
                        let a = cx.constant_of(from, want, name, "a sweep value");
                        let b = cx.constant_of(to, want, name, "a sweep value");
                        let c = cx.constant_of(
                            count,
                            QuantityType::DIMENSIONLESS,
                            "count",
                            "the count",
                        );
                        match (a, b, c) {
                            (Some(a), Some(b), Some(c)) if c.fract() == 0.0 && c >= 0.0 => {
                                whatif::count_points(a, b, c as usize).map_err(|m| (m, count.span))
                            }
                            (Some(_), Some(_), Some(_)) => Err((
                                "`count` must be a whole number of points".to_string(),
                                count.span,
                            )),
                            _ => continue,
                        }
                    }
                    SweepPoints::Over(list) => {
                        let vals: Vec<Option<f64>> = list
                            .iter()
                            .map(|e| cx.constant_of(e, want, name, "a sweep value"))
                            .collect();
                        match vals.into_iter().collect::<Option<Vec<f64>>>() {
                            Some(v) => Ok(v),
                            None => continue,
                        }
                    }
                };
                let pts = match pts {
                    Ok(p) => p,
                    Err((m, span)) => {
                        cx.diags
                            .push(Diagnostic::error(format!("sweep of `{name}`: {m}"), span));
                        continue;
                    }
                };
                let mut cols = Vec::new();
                for target in show {
                    if let Some(c) = cx.show_column(target, nodes) {
                        cols.push(c);
                    }
                }
                if cols.len() != show.len() {
                    continue;
                }
                out.sweeps.push(SweepDef {
                    input: x,
                    span: input.span,
                    description: description.as_ref().map(|d| d.value.clone()),
                    points: pts,
                    show: cols,
                });
            }
            _ => {}
        }
    }
    out
}

fn found_set_error(input: &Ident, find_span: Span, what: &str) -> Diagnostic {
    Diagnostic::error(
        format!(
            "`{}` is solved by a `find`, so {what} cannot set it",
            input.name
        ),
        input.span,
    )
    .with_secondary(find_span, "solved here")
    .with_note("help: remove the `find`, or set another input")
}

impl Checker<'_> {
    /// The input named by a case, sweep or find: its node and quantity
    /// (located errors otherwise).
    fn input_for(
        &mut self,
        id: &Ident,
        nodes: &[Node],
        what: &str,
    ) -> Option<(usize, QuantityType)> {
        let Some(&i) = self.names.get(&id.name) else {
            let d = unknown_name(&id.name, id.span, &name_suggester(self.names));
            self.diags.push(d);
            return None;
        };
        if nodes[i].kind != NodeKind::Input {
            let def = nodes[i]
                .name
                .as_ref()
                .map_or(nodes[i].expr_span, |n| n.span);
            self.diags.push(
                Diagnostic::error(
                    format!(
                        "`{}` is computed, not an input; {what} can only set inputs",
                        id.name
                    ),
                    id.span,
                )
                .with_secondary(def, "defined here by a formula")
                .with_note("help: set one of the inputs it is computed from"),
            );
            return None;
        }
        match self.types[i] {
            Ty::Num(q) => Some((i, q)),
            Ty::Error => None,
            t => {
                self.diags.push(Diagnostic::error(
                    format!(
                        "input `{}` is {}; {what} can only set numbers",
                        id.name,
                        t.describe()
                    ),
                    id.span,
                ));
                None
            }
        }
    }

    /// `e` as a number: its type and code, or a located error (`what` names
    /// it in the message).
    fn number_of(&mut self, e: &Expr, what: &str) -> Option<(QuantityType, Code)> {
        match self.expr(e) {
            (Ty::Error, _) => None,
            (Ty::Num(q), code) => Some((q, code)),
            (t, _) => {
                self.diags.push(Diagnostic::error(
                    format!("{what} must be a number, but this is {}", t.describe()),
                    e.span,
                ));
                None
            }
        }
    }

    /// The value of `code` when it is a finite constant, else a located
    /// error.
    fn constant_value(&mut self, code: &Code, e: &Expr, what: &str) -> Option<f64> {
        match const_value(code) {
            Some(v) if v.is_finite() => Some(v),
            _ => {
                self.diags.push(
                    Diagnostic::error(
                        format!("{what} must be a constant (a number with its unit)"),
                        e.span,
                    )
                    .with_note(
                        "help: cases, sweeps and brackets cannot use other names of the worksheet",
                    ),
                );
                None
            }
        }
    }

    /// A constant of the quantity `want` (dimension-checked like `--set`).
    fn constant_of(&mut self, e: &Expr, want: QuantityType, name: &str, what: &str) -> Option<f64> {
        let (got, code) = self.number_of(e, what)?;
        if !want.accepts(got) {
            let msg = if want.dim.is_none() && name == "count" {
                format!(
                    "{what} must be a plain number, but this is {}",
                    self.side(e, got)
                )
            } else {
                format!(
                    "`{name}` is {}, but {what} here is {}",
                    describe_qty(want),
                    self.side(e, got)
                )
            };
            self.diags.push(Diagnostic::error(msg, e.span));
            return None;
        }
        self.constant_value(&code, e, what)
    }

    /// The step of a sweep: a constant of the input's dimension, never
    /// absolute (`5 degC` as a step would be 278.15 K).
    fn step_of(&mut self, e: &Expr, want: QuantityType, name: &str) -> Option<f64> {
        let what = "the step";
        let (got, code) = self.number_of(e, what)?;
        if got.dim != want.dim {
            let msg = format!(
                "the step of `{name}` must be {}, but this is {}",
                units::quantity_name(want.dim),
                self.side(e, got)
            );
            self.diags.push(Diagnostic::error(msg, e.span));
            return None;
        }
        if got.aff == Affinity::Absolute {
            self.diags.push(
                Diagnostic::error(
                    "the step is a difference, but this is written in an absolute (offset) unit",
                    e.span,
                )
                .with_note("help: write a temperature step in K or degC_diff, a pressure step in bar or kPa"),
            );
            return None;
        }
        self.constant_value(&code, e, what)
    }

    /// A shown column of a sweep: a number, or `state.field`.
    fn show_column(&mut self, target: &Ident, nodes: &[Node]) -> Option<crate::study::ShowColumn> {
        let (base, field) = match target.name.split_once('.') {
            Some((b, f)) => (b, Some(f)),
            None => (target.name.as_str(), None),
        };
        let Some(&i) = self.names.get(base) else {
            let d = unknown_name(base, target.span, &name_suggester(self.names));
            self.diags.push(d);
            return None;
        };
        let _ = nodes;
        match (self.types[i], field) {
            (Ty::Num(q), None) => Some(crate::study::ShowColumn {
                name: target.name.clone(),
                node: i,
                field: None,
                dim: q.dim,
                display: self.display_of[i].clone(),
            }),
            (Ty::State(k), Some(f)) => match Field::from_name(f) {
                Some(fld) if k.has_field(fld) => {
                    let dim = match field_type(fld) {
                        Ty::Num(q) => q.dim,
                        _ => Dim::NONE,
                    };
                    Some(crate::study::ShowColumn {
                        name: target.name.clone(),
                        node: i,
                        field: Some(fld),
                        dim,
                        display: DisplayUnit::Auto,
                    })
                }
                _ => {
                    self.diags.push(Diagnostic::error(
                        format!("`{}` has no field `.{f}` to show", base),
                        target.span,
                    ));
                    None
                }
            },
            (Ty::Error, _) => None,
            (t, _) => {
                self.diags.push(
                    Diagnostic::error(
                        format!(
                            "a sweep shows numbers, but `{}` is {}",
                            target.name,
                            t.describe()
                        ),
                        target.span,
                    )
                    .with_note("help: show a number, or a field of a state such as `st2.T`"),
                );
                None
            }
        }
    }
}

/// Name lookup for references: plain names, and `PREFIX.NAME` paths of
/// used worksheets.
struct Resolve<'n> {
    names: &'n HashMap<String, usize>,
    /// Prefixes of `use` statements, with whether the used worksheet was
    /// checked (its names are known).
    prefixes: &'n HashMap<&'n str, bool>,
}

impl Resolve<'_> {
    /// The error for a reference that is not a name, or `None` when it
    /// needs none (a built-in constant, a name of a used worksheet that
    /// failed to check: reported at its `use`).
    fn unknown(
        &self,
        name: &str,
        span: Span,
        suggester: &crate::suggest::Suggester,
    ) -> Option<Diagnostic> {
        if builtins::constant(name).is_some() {
            return None;
        }
        if let Some(ok) = self.prefixes.get(name) {
            return ok.then(|| {
                Diagnostic::error(
                    format!("`{name}` names a used worksheet, not a value"),
                    span,
                )
                .with_note(format!("help: write one of its names, e.g. `{name}.NAME`"))
            });
        }
        if let Some((root, _)) = name.split_once('.')
            && let Some(ok) = self.prefixes.get(root)
        {
            if !ok {
                return None;
            }
            let cands = self
                .names
                .keys()
                .filter(|k| k.starts_with(root) && k[root.len()..].starts_with('.'))
                .map(String::as_str);
            let d = Diagnostic::error(
                format!("unknown name `{name}`: the worksheet used as `{root}` has no such value"),
                span,
            );
            return Some(match closest(name, cands) {
                Some(s) => d.with_note(format!("help: did you mean `{s}`?")),
                None => d,
            });
        }
        Some(unknown_name(name, span, suggester))
    }
}

/// `a.b.c` for a chain of field accesses on a name.
fn name_path(e: &Expr) -> Option<String> {
    match &e.kind {
        ExprKind::Name(n) => Some(n.clone()),
        ExprKind::Field { base, field } => {
            let mut p = name_path(base)?;
            p.push('.');
            p.push_str(&field.name);
            Some(p)
        }
        _ => None,
    }
}

/// Names referenced by an expression (not function names, field names or
/// argument names), with their spans. A `PREFIX.NAME` path of a used
/// worksheet counts as one name (the longest path that is a name; a
/// further `.field` is a field of it).
fn collect_names<'a>(e: &'a Expr, rx: &Resolve, out: &mut Vec<(Cow<'a, str>, Span)>) {
    match &e.kind {
        ExprKind::Name(n) => out.push((Cow::Borrowed(n), e.span)),
        ExprKind::Number { .. } | ExprKind::Str(_) => {}
        ExprKind::Neg(a) | ExprKind::Paren(a) | ExprKind::Not(a) => collect_names(a, rx, out),
        ExprKind::Field { base, .. } => {
            if !rx.prefixes.is_empty()
                && let Some(p) = name_path(e)
                && let Some((root, _)) = p.split_once('.')
                && rx.prefixes.contains_key(root)
            {
                if rx.names.contains_key(&p) {
                    out.push((Cow::Owned(p), e.span));
                    return;
                }
                if matches!(&base.kind, ExprKind::Name(_)) {
                    // `site.x` with no such name: unknown.
                    out.push((Cow::Owned(p), e.span));
                    return;
                }
            }
            collect_names(base, rx, out)
        }
        ExprKind::Compare { first, rest } => {
            collect_names(first, rx, out);
            for l in rest {
                collect_names(&l.operand, rx, out);
            }
        }
        ExprKind::If {
            cond,
            then_branch,
            else_branch,
        } => {
            collect_names(cond, rx, out);
            collect_names(then_branch, rx, out);
            collect_names(else_branch, rx, out);
        }
        ExprKind::Binary { left, right, .. } | ExprKind::Logic { left, right, .. } => {
            collect_names(left, rx, out);
            collect_names(right, rx, out);
        }
        ExprKind::Call { args, .. } => {
            for a in args {
                collect_names(&a.value, rx, out);
            }
        }
    }
}

use crate::suggest::closest;

/// Suggestions among a worksheet's names and the built-in constants.
fn name_suggester(names: &HashMap<String, usize>) -> crate::suggest::Suggester<'_> {
    crate::suggest::Suggester::new(
        names
            .keys()
            .map(String::as_str)
            .chain(builtins::CONSTANTS.iter().map(|c| c.name)),
    )
}

/// The value of a `gauge` statement's expression: a constant absolute
/// pressure above zero (no names but built-in constants, no gauge unit).
fn gauge_value(e: &Expr, src: &str) -> Result<f64, Vec<Diagnostic>> {
    let names = HashMap::default();
    let prefixes = HashMap::default();
    let rx = Resolve {
        names: &names,
        prefixes: &prefixes,
    };
    let mut refs = Vec::new();
    collect_names(e, &rx, &mut refs);
    let bad: Vec<Diagnostic> = refs
        .iter()
        .filter(|(n, _)| builtins::constant(n).is_none())
        .map(|(n, s)| {
            Diagnostic::error(
                format!("the gauge reference is a constant; it cannot use the name `{n}`"),
                *s,
            )
            .with_note("help: write the site's reference pressure as a number, e.g. `gauge 95 kPa`")
        })
        .collect();
    if !bad.is_empty() {
        return Err(bad);
    }
    let (ty, code) = check_standalone(e, src)?;
    let err = |m: String| vec![Diagnostic::error(m, e.span)];
    match ty {
        Ty::Num(q) if q.dim == Dim::PRESSURE && q.aff == Affinity::Absolute => Err(err(
            "the gauge reference is an absolute pressure; write it in an absolute unit (kPa, bar, psi), not a gauge unit"
                .to_string(),
        )),
        Ty::Num(q) if q.dim == Dim::PRESSURE => match const_value(&code) {
            Some(v) if v.is_finite() && v > 0.0 => Ok(v),
            Some(v) => Err(err(format!(
                "the gauge reference must be an absolute pressure above zero, got {} Pa",
                units::format_sig(v, 6)
            ))),
            None => Err(err("the gauge reference must be a constant".to_string())),
        },
        other => Err(err(format!(
            "the gauge reference is a pressure, but this is {}",
            other.describe()
        ))),
    }
}

fn unknown_name(name: &str, span: Span, names: &crate::suggest::Suggester) -> Diagnostic {
    let d = Diagnostic::error(format!("unknown name `{name}`"), span)
        .with_label("not defined in this worksheet");
    match names.closest(name) {
        Some(s) => d.with_note(format!("help: did you mean `{s}`?")),
        None => d.with_note("help: define it with `input` or `NAME = ...`"),
    }
}

fn cycle_diagnostic<'a>(
    cycle: &[usize],
    nodes: &[Node],
    names: &HashMap<String, usize>,
    refs_of: impl Fn(usize) -> Vec<(Cow<'a, str>, Span)>,
) -> Diagnostic {
    let name = |i: usize| {
        nodes[i]
            .name
            .as_ref()
            .map_or("(check)".to_string(), |n| n.name.clone())
    };
    let mut chain: Vec<String> = cycle.iter().map(|&i| name(i)).collect();
    chain.push(name(cycle[0]));
    let first = cycle[0];
    let first_span = nodes[first]
        .name
        .as_ref()
        .map_or(nodes[first].expr_span, |n| n.span);
    let mut d = Diagnostic::error(
        format!("circular definition: {}", chain.join(" -> ")),
        first_span,
    )
    .with_label(format!("`{}` is part of the cycle", name(first)));
    for (k, &i) in cycle.iter().enumerate() {
        let next = cycle[(k + 1) % cycle.len()];
        if let Some((_, span)) = refs_of(i)
            .into_iter()
            .find(|(n, _)| names.get(n.as_ref()) == Some(&next))
        {
            d = d.with_secondary(span, format!("`{}` uses `{}`", name(i), name(next)));
        }
    }
    d.with_note(
        "help: a value cannot depend on itself; break the loop by making one of these an input",
    )
}

struct Checker<'a> {
    src: &'a str,
    names: &'a HashMap<String, usize>,
    types: Vec<Ty>,
    /// Fixed display unit text of nodes checked so far (for messages).
    displays: Vec<Option<Span>>,
    /// Display units of nodes checked so far.
    display_of: Vec<DisplayUnit>,
    diags: Vec<Diagnostic>,
    /// While a check's condition is compiled: the operands of its
    /// comparisons so far.
    operands: Option<Vec<Operand>>,
    /// Warnings of the node being checked.
    warnings: Vec<Diagnostic>,
    /// Which nodes are inputs.
    input_nodes: Vec<bool>,
    /// The SI value of each input checked so far, when it is a constant.
    input_consts: Vec<Option<f64>>,
    /// Units resolved so far, by their text (worksheets repeat a few units).
    unit_cache: HashMap<&'a str, Unit>,
    /// Values read by the caller for `cell()` calls.
    externals: &'a Externals,
    /// The reference pressure of gauge units (Pa).
    gauge: f64,
    /// Set when a gauge unit is resolved.
    uses_gauge: bool,
    /// Whether the worksheet uses other worksheets (`PREFIX.NAME` paths).
    prefixes: bool,
}

/// Static result of an expression.
type Typed = (Ty, Code);

const ERR: Typed = (Ty::Error, Code::Absent);

impl Checker<'_> {
    fn error(&mut self, d: Diagnostic) -> Typed {
        self.diags.push(d);
        ERR
    }

    fn expr(&mut self, e: &Expr) -> Typed {
        match &e.kind {
            ExprKind::Number { value, unit, .. } => self.literal(*value, unit.as_ref()),
            ExprKind::Str(s) => (Ty::Str, Code::Str(Arc::from(s.as_str()))),
            ExprKind::Name(n) => {
                if let Some(&i) = self.names.get(n) {
                    (self.types[i], Code::Slot(i))
                } else if let Some(c) = builtins::constant(n) {
                    (Ty::num(c.dim), Code::Const(c.value))
                } else {
                    ERR // reported when collecting names
                }
            }
            ExprKind::Paren(a) => self.expr(a),
            ExprKind::Neg(a) => {
                // `-40 degF`, `-10 degC`: a negative reading, not a negation.
                if let ExprKind::Number { value, unit, .. } = &a.kind {
                    return self.literal(-*value, unit.as_ref());
                }
                let (ty, code) = self.expr(a);
                match ty {
                    Ty::Error => ERR,
                    Ty::Num(q) if q.aff == Affinity::Absolute => self.error(
                        Diagnostic::error(
                            format!("cannot negate an absolute {}", units::quantity_name(q.dim)),
                            e.span,
                        )
                        .with_note("help: subtract from a reference instead, e.g. `T_ref - T`"),
                    ),
                    Ty::Num(q) => (Ty::Num(q), Code::Neg(Box::new(code))),
                    other => self.error(Diagnostic::error(
                        format!("cannot negate {}", other.describe()),
                        e.span,
                    )),
                }
            }
            ExprKind::Binary { op, left, right } => self.binary(*op, left, right, e.span),
            ExprKind::Call { func, args } => self.call(func, args, e.span),
            ExprKind::Field { base, field } => {
                if self.prefixes
                    && let Some(p) = name_path(e)
                    && let Some(&i) = self.names.get(&p)
                {
                    return (self.types[i], Code::Slot(i));
                }
                self.field(base, field)
            }
            ExprKind::Compare { first, rest } => self.compare(first, rest),
            ExprKind::Logic {
                op,
                op_span,
                left,
                right,
            } => {
                let (lt, lc) = self.expr(left);
                let (rt, rc) = self.expr(right);
                match (lt, rt) {
                    (Ty::Error, _) | (_, Ty::Error) => ERR,
                    (Ty::Bool, Ty::Bool) => {
                        let (a, b) = (Box::new(lc), Box::new(rc));
                        let code = match op {
                            LogicOp::And => Code::And(a, b),
                            LogicOp::Or => Code::Or(a, b),
                        };
                        (Ty::Bool, code)
                    }
                    (a, b) => {
                        let (span, ty) = if a == Ty::Bool {
                            (right.span, b)
                        } else {
                            (left.span, a)
                        };
                        self.error(
                            Diagnostic::error(
                                format!(
                                    "`{}` joins true/false values, but this is {}",
                                    op.keyword(),
                                    ty.describe()
                                ),
                                span,
                            )
                            .with_secondary(*op_span, "joined here")
                            .with_note("help: compare it first, e.g. `x > 0 m`"),
                        )
                    }
                }
            }
            ExprKind::Not(a) => match self.expr(a) {
                (Ty::Error, _) => ERR,
                (Ty::Bool, c) => (Ty::Bool, Code::Not(Box::new(c))),
                (ty, _) => self.error(Diagnostic::error(
                    format!(
                        "`not` takes a true/false value, but this is {}",
                        ty.describe()
                    ),
                    a.span,
                )),
            },
            ExprKind::If {
                cond,
                then_branch,
                else_branch,
            } => self.if_then_else(cond, then_branch, else_branch),
        }
    }

    /// A number literal with an optional unit, folded to SI.
    fn literal(&mut self, value: f64, unit: Option<&UnitExpr>) -> Typed {
        match unit {
            None => (Ty::Num(QuantityType::DIMENSIONLESS), Code::Const(value)),
            Some(u) => match self.unit(u) {
                Some(unit) => (
                    Ty::Num(QuantityType {
                        dim: unit.dim,
                        aff: unit.affinity,
                    }),
                    Code::Const(unit.to_si(value)),
                ),
                None => ERR,
            },
        }
    }

    fn unit(&mut self, u: &UnitExpr) -> Option<Unit> {
        let text = u.span.slice(self.src);
        if let Some(unit) = self.unit_cache.get(text) {
            self.uses_gauge |= unit.is_gauge();
            return Some(*unit);
        }
        match units::resolve(u) {
            Ok(unit) => {
                let unit = unit.with_gauge(self.gauge);
                self.uses_gauge |= unit.is_gauge();
                if !text.is_empty() {
                    self.unit_cache.insert(text, unit);
                }
                Some(unit)
            }
            Err(err) => {
                let mut d = Diagnostic::error(err.message, err.span).with_label("unknown unit");
                if let Some(s) = err.suggestion {
                    d = d.with_note(format!("help: did you mean `{s}`?"));
                }
                self.diags
                    .push(d.with_note("help: `sheaf units WORD` lists the units sheaf knows"));
                None
            }
        }
    }

    /// "pressure (kPa)" using the unit the user sees for this operand when
    /// there is one.
    fn side(&self, e: &Expr, q: QuantityType) -> String {
        let written = match &inner(e).kind {
            ExprKind::Number { unit: Some(u), .. } => Some(u.span.slice(self.src).to_string()),
            ExprKind::Name(n) => self
                .names
                .get(n)
                .and_then(|&i| self.displays[i])
                .map(|s| normalise_unit_text(s.slice(self.src))),
            _ => None,
        };
        match written {
            Some(w) if !q.dim.is_none() => {
                let base = describe_qty(q);
                match base.rfind(" (") {
                    Some(p) => format!("{} ({w})", &base[..p]),
                    None => base,
                }
            }
            _ => describe_qty(q),
        }
    }

    fn binary(&mut self, op: BinOp, l: &Expr, r: &Expr, span: Span) -> Typed {
        let (lt, lc) = self.expr(l);
        let (rt, rc) = self.expr(r);
        let (lq, rq) = match (lt, rt) {
            (Ty::Error, _) | (_, Ty::Error) => return ERR,
            (Ty::Num(a), Ty::Num(b)) => (a, b),
            (a, b) => {
                let bad = if matches!(a, Ty::Num(_)) {
                    (r.span, b)
                } else {
                    (l.span, a)
                };
                return self.error(
                    Diagnostic::error(
                        format!(
                            "`{}` needs numbers, but this is {}",
                            op.symbol(),
                            bad.1.describe()
                        ),
                        bad.0,
                    )
                    .with_note("help: use a field of a state, e.g. `st1.h`"),
                );
            }
        };
        let (lc, rc) = (Box::new(lc), Box::new(rc));
        match op {
            BinOp::Add | BinOp::Sub => {
                if lq.dim != rq.dim {
                    let verb = if op == BinOp::Add { "add" } else { "subtract" };
                    return self.error(
                        Diagnostic::error(
                            format!(
                                "cannot {verb} quantities of different dimensions: left is {}, right is {}",
                                self.side(l, lq),
                                self.side(r, rq)
                            ),
                            span,
                        )
                        .with_secondary(l.span, self.side(l, lq))
                        .with_secondary(r.span, self.side(r, rq)),
                    );
                }
                match affinity(op, lq.aff, rq.aff) {
                    Ok(aff) => {
                        self.kelvin_reading_as_difference(op, (l, lq, &lc), (r, rq, &rc));
                        let ty = Ty::Num(QuantityType { dim: lq.dim, aff });
                        let energy_of_states = |c: &Code| {
                            matches!(c, Code::Field(_, Field::H | Field::S | Field::U, _))
                        };
                        let code = if op == BinOp::Add {
                            Code::Add(lc, rc)
                        } else if energy_of_states(&lc) && energy_of_states(&rc) {
                            // h, s or u of two states: warn at run time when the
                            // states are of different substances (their
                            // reference states differ).
                            Code::StateDiff(lc, rc, span)
                        } else {
                            Code::Sub(lc, rc)
                        };
                        (ty, code)
                    }
                    Err(msg) => {
                        let what = units::quantity_name(lq.dim);
                        self.error(
                            Diagnostic::error(msg.replace("{q}", &what), span)
                                .with_secondary(l.span, self.side(l, lq))
                                .with_secondary(r.span, self.side(r, rq))
                                .with_note(
                                    "help: absolute values (degC, degF, gauge units) can be subtracted to give a difference, \
                                     and a difference added to an absolute value; to average two, write `T1 + (T2 - T1)/2`",
                                ),
                        )
                    }
                }
            }
            BinOp::Mul | BinOp::Div => {
                if op == BinOp::Mul {
                    for (t, tq, o, other) in [(l, lq, r, rq), (r, rq, l, lq)] {
                        if self.celsius_reading(t, tq)
                            && other.dim.0[3] == -1
                            && self.looks_like_specific_heat(o)
                        {
                            self.warnings.push(Diagnostic::warning(
                                "an absolute temperature in degC or degF is multiplied by a \
                                     quantity per kelvin (a specific heat?): it is computed in \
                                     kelvin, T + 273.15; for a heat from a temperature change, \
                                     multiply by a difference such as (T2 - T1)",
                                t.span,
                            ));
                        }
                    }
                }
                let (dim, code) = if op == BinOp::Mul {
                    (lq.dim.checked_mul(rq.dim), Code::Mul(lc, rc))
                } else {
                    (lq.dim.checked_div(rq.dim), Code::Div(lc, rc, r.span))
                };
                match dim {
                    Some(d) => (Ty::num(d), code),
                    None => self.error(Diagnostic::error(
                        format!(
                            "the dimension of this result has an exponent beyond ±{} ({} and {})",
                            units::MAX_EXPONENT,
                            self.side(l, lq),
                            self.side(r, rq)
                        ),
                        span,
                    )),
                }
            }
            BinOp::Pow => {
                if !rq.dim.is_none() {
                    return self.error(Diagnostic::error(
                        format!(
                            "an exponent must be dimensionless, got {}",
                            self.side(r, rq)
                        ),
                        r.span,
                    ));
                }
                if lq.dim.is_none() {
                    return (
                        Ty::Num(QuantityType::DIMENSIONLESS),
                        Code::Pow(lc, rc, span),
                    );
                }
                let Some(x) = const_value(&rc) else {
                    return self.error(
                        Diagnostic::error(
                            format!(
                                "{} can only be raised to a constant power, not to a computed value",
                                self.side(l, lq)
                            ),
                            r.span,
                        )
                        .with_note("help: write the exponent as a number, e.g. `^2` or `^(1/3)`"),
                    );
                };
                let dim = rational(x).and_then(|(n, d)| lq.dim.pow_ratio(n, d));
                match dim {
                    Some(d) => (Ty::num(d), Code::Pow(lc, rc, span)),
                    None => self.error(Diagnostic::error(
                        format!(
                            "{} raised to {x} has no whole-number dimension",
                            self.side(l, lq)
                        ),
                        span,
                    )),
                }
            }
        }
    }

    fn call(&mut self, func: &Ident, args: &[Arg], span: Span) -> Typed {
        let Some(sig) = builtins::lookup(&func.name) else {
            let d = Diagnostic::error(format!("unknown function `{}`", func.name), func.span);
            let d = match closest(&func.name, builtins::ALL.iter().map(|s| s.name)) {
                Some(s) => d.with_note(format!("help: did you mean `{s}`?")),
                None => d.with_note("help: `sheaf functions` lists the built-in functions"),
            };
            // still check the arguments for their own errors
            for a in args {
                self.expr(&a.value);
            }
            return self.error(d);
        };
        let bound = match bind(sig, args, func.span, span) {
            Ok(b) => b,
            Err(d) => {
                for a in args {
                    self.expr(&a.value);
                }
                return self.error(d);
            }
        };
        let mut targs = Vec::with_capacity(bound.len());
        let mut codes = Vec::with_capacity(bound.len());
        for b in &bound {
            match b {
                Some(e) => {
                    let (ty, code) = self.expr(e);
                    let literal = match &inner(e).kind {
                        ExprKind::Str(s) => Some(s.clone()),
                        _ => None,
                    };
                    targs.push(Some(BoundArg { ty, literal }));
                    codes.push(code);
                }
                None => {
                    targs.push(None);
                    codes.push(Code::Absent);
                }
            }
        }
        match (sig.typing)(sig, &targs) {
            Ok(Ty::Error) => ERR,
            Ok(ty) => {
                let args = bound
                    .iter()
                    .map(|a| a.map_or(Span::default(), |e| e.span))
                    .collect();
                let spans = CallSpans { call: span, args };
                if std::ptr::eq(sig, &builtins::cells::CELL) {
                    return self.external_cell(&targs, spans);
                }
                (ty, Code::Call(sig, codes, spans))
            }
            Err(e) => {
                let at = e
                    .param
                    .and_then(|i| bound.get(i).copied().flatten())
                    .map_or(span, |x| x.span);
                self.error(
                    Diagnostic::error(e.message, at).with_note(format!("usage: {}", sig.usage)),
                )
            }
        }
    }

    /// A `cell(book, ref)` call (already typed: two string literals)
    /// compiled to the value the caller read.
    fn external_cell(&mut self, targs: &[Option<BoundArg>], spans: CallSpans) -> Typed {
        let lit = |i: usize| {
            targs
                .get(i)
                .and_then(|a| a.as_ref())
                .and_then(|a| a.literal.clone())
                .unwrap_or_default()
        };
        match self.externals.cell(&lit(0), &lit(1)) {
            Ok(v) => (
                Ty::Num(QuantityType::DIMENSIONLESS),
                Code::Call(&builtins::cells::CELL, vec![Code::Const(v)], spans),
            ),
            Err(message) => self.error(Diagnostic::error(message, spans.call)),
        }
    }

    fn field(&mut self, base: &Expr, field: &Ident) -> Typed {
        let (ty, code) = self.expr(base);
        if ty == Ty::Saturation {
            return match field.name.as_str() {
                "liquid" | "vapour" => (
                    Ty::State(ModelKind::RealFluid),
                    Code::Phase(Box::new(code), field.name == "liquid"),
                ),
                "T" => (field_type(Field::T), Code::Field(Box::new(code), Field::T, field.span)),
                "p" => (field_type(Field::P), Code::Field(Box::new(code), Field::P, field.span)),
                other => self.error(
                    Diagnostic::error(
                        format!("a saturated pair has no `.{other}`"),
                        field.span,
                    )
                    .with_note(
                        "help: its fields are .T, .p, .liquid and .vapour (e.g. `sat.vapour.h`)",
                    ),
                ),
            };
        }
        let Some(f) = Field::from_name(&field.name) else {
            if ty == Ty::Error {
                return ERR;
            }
            let names: Vec<&str> = Field::ALL.iter().map(|f| f.name()).collect();
            let d = Diagnostic::error(format!("unknown field `.{}`", field.name), field.span)
                .with_note(format!(
                    "help: the fields of a state are {}",
                    names.join(", ")
                ));
            let d = match closest(&field.name, names.iter().copied()) {
                Some(s) => d.with_note(format!("help: did you mean `.{s}`?")),
                None => d,
            };
            return self.error(d);
        };
        let fty = match ty {
            Ty::Error => return ERR,
            Ty::State(k) => {
                if matches!(f, Field::M | Field::R) {
                    return self.error(
                        Diagnostic::error(
                            format!(
                                "`.{}` is a field of the substance, not of a state",
                                f.name()
                            ),
                            field.span,
                        )
                        .with_note("help: write it on the substance, e.g. `gas.M`"),
                    );
                }
                if !k.has_field(f) {
                    return self.error(Diagnostic::error(
                        format!(
                            "a state of {} has no `.{}`: quality is defined only for water/steam",
                            k.describe(),
                            f.name()
                        ),
                        field.span,
                    ));
                }
                field_type(f)
            }
            Ty::Substance(k) => {
                let ok = matches!(
                    (k, f),
                    (
                        ModelKind::IdealGas | ModelKind::PerfectGas | ModelKind::RealFluid,
                        Field::M
                    ) | (ModelKind::IdealGas | ModelKind::PerfectGas, Field::R)
                        | (ModelKind::PerfectGas, Field::Cp | Field::Cv | Field::K)
                        | (
                            ModelKind::Incompressible,
                            Field::Cp | Field::Cv | Field::Rho | Field::V
                        )
                );
                if !ok {
                    return self.error(
                        Diagnostic::error(
                            format!("a substance ({}) has no `.{}`", k.describe(), f.name()),
                            field.span,
                        )
                        .with_note("help: fix a state first, e.g. `state(gas, T: T1, p: p1).h`"),
                    );
                }
                field_type(f)
            }
            other => {
                return self.error(Diagnostic::error(
                    format!(
                        "`.{}` needs a state, but this is {}",
                        f.name(),
                        other.describe()
                    ),
                    base.span,
                ));
            }
        };
        (fty, Code::Field(Box::new(code), f, field.span))
    }

    /// An absolute temperature written in an offset unit (a degC or degF
    /// literal, or a name shown in one).
    fn celsius_reading(&self, e: &Expr, q: QuantityType) -> bool {
        if q.aff != Affinity::Absolute || q.dim != Dim::TEMPERATURE {
            return false;
        }
        // degC and degF have an offset from kelvin; K and degR do not.
        let offset = |u: &Unit| u.offset != 0.0;
        match &inner(e).kind {
            ExprKind::Number { unit: Some(u), .. } => units::resolve(u).is_ok_and(|u| offset(&u)),
            ExprKind::Name(n) => self.names.get(n).is_some_and(|&i| {
                matches!(&self.display_of.get(i), Some(DisplayUnit::Fixed { unit, .. }) if offset(unit))
            }),
            _ => false,
        }
    }

    /// The rule for a neutral kelvin value taken as a difference (README,
    /// "Absolute values and differences"): in `A + B`, `B + A` and `A - B`
    /// with `A` an absolute temperature (degC, degF, a state's T), a
    /// temperature `B` written in K or degR has no kind of its own and is
    /// read as a difference. When `B` is a constant (a literal or an input)
    /// of 200 K or more, it is far more likely a reading typed in kelvin
    /// (`20 degC + 300 K` gives 320 degC): warn, located on `B`.
    fn kelvin_reading_as_difference(
        &mut self,
        op: BinOp,
        (l, lq, lc): (&Expr, QuantityType, &Code),
        (r, rq, rc): (&Expr, QuantityType, &Code),
    ) {
        if lq.dim != Dim::TEMPERATURE {
            return;
        }
        let taken = match (op, lq.aff, rq.aff) {
            (BinOp::Add | BinOp::Sub, Affinity::Absolute, Affinity::Neutral) => (r, rc),
            (BinOp::Add, Affinity::Neutral, Affinity::Absolute) => (l, lc),
            _ => return,
        };
        let (e, code) = taken;
        let value = match &inner(e).kind {
            ExprKind::Name(n) => self
                .names
                .get(n)
                .and_then(|&i| self.input_consts.get(i).copied().flatten()),
            _ => const_value(code),
        };
        let Some(kelvin) = value else { return };
        if kelvin.abs() < KELVIN_READING_THRESHOLD {
            return;
        }
        let what = match &inner(e).kind {
            ExprKind::Name(n) => format!("`{n}` ({} K)", crate::units::format_sig(kelvin, 6)),
            _ => format!("{} K", crate::units::format_sig(kelvin, 6)),
        };
        let verb = if op == BinOp::Add {
            "added to"
        } else {
            "subtracted from"
        };
        self.warnings.push(
            Diagnostic::warning(
                format!(
                    "{what} is {verb} an absolute temperature, so it is taken as a temperature \
                     difference; a kelvin value this large is usually a reading"
                ),
                e.span,
            )
            .with_note(
                "help: for a reading, subtract the two temperatures to get a difference; \
                 for a difference, write it in degC_diff to say so",
            ),
        );
    }

    /// A factor that is a specific heat: a `.cp` / `.cv` field, or an
    /// input named like one (`c`, `cp`, `c_w`, ...). The dimension alone
    /// cannot tell a specific heat from a gas constant (R T is right in
    /// kelvin) or an entropy (T0 S_gen is exergy), so the rule looks at
    /// what the factor is.
    fn looks_like_specific_heat(&self, e: &Expr) -> bool {
        match &inner(e).kind {
            ExprKind::Field { field, .. } => matches!(field.name.as_str(), "cp" | "cv"),
            ExprKind::Name(n) => {
                let heat_name =
                    n == "c" || n.starts_with("c_") || n.starts_with("cp") || n.starts_with("cv");
                heat_name
                    && self
                        .names
                        .get(n)
                        .is_some_and(|&i| self.input_nodes.get(i).copied().unwrap_or(false))
            }
            _ => false,
        }
    }

    /// A check's condition: a true/false expression.
    fn condition(&mut self, e: &Expr) -> Typed {
        match self.expr(e) {
            (Ty::Error, _) => ERR,
            (Ty::Bool, c) => (Ty::Bool, c),
            (ty, _) => self.error(
                Diagnostic::error(
                    format!("a check needs a condition, but this is {}", ty.describe()),
                    e.span,
                )
                .with_note("help: compare values, e.g. `check T2 <= 220 degC`"),
            ),
        }
    }

    /// A comparison or a chain of comparisons (`0.88 <= x2 <= 1`): numbers
    /// of one dimension, no absolute value compared with a difference.
    fn compare(&mut self, first: &Expr, rest: &[CompareLink]) -> Typed {
        let mut exprs: Vec<&Expr> = vec![first];
        exprs.extend(rest.iter().map(|l| &l.operand));
        let typed: Vec<Typed> = exprs.iter().map(|e| self.expr(e)).collect();
        if typed.iter().any(|(t, _)| *t == Ty::Error) {
            return ERR;
        }
        let mut qs = Vec::with_capacity(typed.len());
        for ((ty, _), e) in typed.iter().zip(&exprs) {
            match ty {
                Ty::Num(q) => qs.push(*q),
                other => {
                    return self.error(Diagnostic::error(
                        format!(
                            "a comparison takes numbers, but this is {}",
                            other.describe()
                        ),
                        e.span,
                    ));
                }
            }
        }
        for (k, link) in rest.iter().enumerate() {
            let (l, r) = (exprs[k], exprs[k + 1]);
            let (a, b) = (qs[k], qs[k + 1]);
            if a.dim != b.dim {
                return self.error(
                    Diagnostic::error(
                        format!(
                            "cannot compare quantities of different dimensions: left is {}, right is {}",
                            self.side(l, a),
                            self.side(r, b)
                        ),
                        link.op_span,
                    )
                    .with_secondary(l.span, self.side(l, a))
                    .with_secondary(r.span, self.side(r, b)),
                );
            }
            if a.kinds_clash(b) {
                return self.error(
                    Diagnostic::error(
                        format!(
                            "cannot compare an absolute {q} with a {q} difference",
                            q = units::quantity_name(a.dim)
                        ),
                        link.op_span,
                    )
                    .with_secondary(l.span, self.side(l, a))
                    .with_secondary(r.span, self.side(r, b)),
                );
            }
        }
        let mut codes: Vec<Code> = typed.into_iter().map(|(_, c)| c).collect();
        if self.operands.is_some() {
            let display = self.comparison_display(&exprs);
            let dim = qs[0].dim;
            if let Some(ops) = self.operands.as_mut() {
                for (e, c) in exprs.iter().zip(&codes) {
                    ops.push(Operand {
                        span: e.span,
                        code: c.clone(),
                        dim,
                        display: display.clone(),
                    });
                }
            }
        }
        let code = if let ([_, _], [link]) = (codes.as_slice(), rest) {
            let b = codes.pop().unwrap_or(Code::Absent);
            let a = codes.pop().unwrap_or(Code::Absent);
            Code::Cmp(link.op, Box::new(a), Box::new(b))
        } else {
            let mut it = codes.into_iter();
            let first = it.next().unwrap_or(Code::Absent);
            Code::Chain(Box::new(first), rest.iter().map(|l| l.op).zip(it).collect())
        };
        (Ty::Bool, code)
    }

    /// The unit in which the operands of one comparison are shown: the
    /// last unit written in a literal (a limit is usually written on the
    /// right), else the display unit of the first named operand.
    fn comparison_display(&mut self, exprs: &[&Expr]) -> DisplayUnit {
        for e in exprs.iter().rev() {
            if let ExprKind::Number { unit: Some(u), .. } = &inner(e).kind
                && let Some(unit) = self.unit(u)
            {
                return DisplayUnit::Fixed {
                    unit,
                    text: normalise_unit_text(u.span.slice(self.src)),
                };
            }
        }
        exprs
            .iter()
            .find_map(|e| match &inner(e).kind {
                ExprKind::Name(n) => self.names.get(n).map(|&i| self.display_of[i].clone()),
                _ => None,
            })
            .unwrap_or(DisplayUnit::Auto)
    }

    /// `if C then A else B`: C true/false; A and B of one type (numbers:
    /// one dimension, affinities that agree as for `+`).
    fn if_then_else(&mut self, cond: &Expr, a: &Expr, b: &Expr) -> Typed {
        let (ct, cc) = self.expr(cond);
        let (at, ac) = self.expr(a);
        let (bt, bc) = self.expr(b);
        if ct != Ty::Bool && ct != Ty::Error {
            return self.error(
                Diagnostic::error(
                    format!(
                        "`if` needs a true/false condition, but this is {}",
                        ct.describe()
                    ),
                    cond.span,
                )
                .with_note("help: compare values, e.g. `if p2 > 5 bar then ... else ...`"),
            );
        }
        let ty = match (at, bt) {
            (Ty::Error, _) | (_, Ty::Error) => return ERR,
            (Ty::Num(x), Ty::Num(y)) => {
                if x.dim != y.dim {
                    return self.error(
                        Diagnostic::error(
                            format!(
                                "the branches of `if` must be one quantity: `then` is {}, `else` is {}",
                                self.side(a, x),
                                self.side(b, y)
                            ),
                            b.span,
                        )
                        .with_secondary(a.span, self.side(a, x)),
                    );
                }
                let aff = match (x.aff, y.aff) {
                    (p, q) if p == q => p,
                    (Affinity::Neutral, q) => q,
                    (p, Affinity::Neutral) => p,
                    _ => {
                        return self.error(
                            Diagnostic::error(
                                format!(
                                    "the branches of `if` mix an absolute {} with a difference",
                                    units::quantity_name(x.dim)
                                ),
                                b.span,
                            )
                            .with_secondary(a.span, self.side(a, x)),
                        );
                    }
                };
                Ty::Num(QuantityType { dim: x.dim, aff })
            }
            (x, y) if x == y => x,
            (x, y) => {
                return self.error(
                    Diagnostic::error(
                        format!(
                            "the branches of `if` must be of one kind: `then` is {}, `else` is {}",
                            x.describe(),
                            y.describe()
                        ),
                        b.span,
                    )
                    .with_secondary(a.span, x.describe()),
                );
            }
        };
        if ct == Ty::Error {
            return ERR;
        }
        (ty, Code::If(Box::new(cc), Box::new(ac), Box::new(bc)))
    }

    /// The display unit of a named value: its annotation, else for an
    /// input (or a plain literal) the unit of its literal, else automatic;
    /// with the span of the unit text that fixed it.
    fn display_unit(
        &mut self,
        ty: Ty,
        value: &Expr,
        annotation: Option<&UnitExpr>,
        input: bool,
    ) -> (DisplayUnit, Option<Span>) {
        let text_of = |u: &UnitExpr| normalise_unit_text(u.span.slice(self.src));
        if let Some(ann) = annotation {
            let Some(unit) = self.unit(ann) else {
                return (DisplayUnit::Auto, None);
            };
            match ty {
                Ty::Error => {}
                Ty::Num(q) => {
                    if q.dim != unit.dim {
                        self.diags.push(
                            Diagnostic::error(
                                format!(
                                    "the unit `{}` is {}, but the value is {}",
                                    text_of(ann),
                                    units::quantity_name(unit.dim),
                                    describe_qty(q)
                                ),
                                ann.span,
                            )
                            .with_secondary(value.span, describe_qty(q)),
                        );
                    } else if q.aff == Affinity::Difference && unit.affinity == Affinity::Absolute {
                        let alt = if units::quantity_name(q.dim) == "temperature" {
                            "`K` or `degC_diff`"
                        } else {
                            "an absolute unit such as `kPa` or `bar`"
                        };
                        self.diags.push(
                            Diagnostic::error(
                                format!(
                                    "a {} difference cannot be shown in `{}`, which is a scale with an offset",
                                    units::quantity_name(q.dim),
                                    text_of(ann)
                                ),
                                ann.span,
                            )
                            .with_secondary(value.span, "this is a difference")
                            .with_note(format!("help: show it in {alt}")),
                        );
                    } else if q.aff == Affinity::Absolute && unit.affinity == Affinity::Difference {
                        self.diags.push(
                            Diagnostic::error(
                                format!(
                                    "an absolute {} cannot be shown in the difference unit `{}`",
                                    units::quantity_name(q.dim),
                                    text_of(ann)
                                ),
                                ann.span,
                            )
                            .with_note("help: show it in `K` or `degC`"),
                        );
                    }
                }
                other => {
                    self.diags.push(Diagnostic::error(
                        format!(
                            "{} has no unit; remove the `: {}`",
                            other.describe(),
                            text_of(ann)
                        ),
                        ann.span,
                    ));
                }
            }
            return (
                DisplayUnit::Fixed {
                    unit,
                    text: text_of(ann),
                },
                Some(ann.span),
            );
        }
        let Ty::Num(q) = ty else {
            return (DisplayUnit::Auto, None);
        };
        let literal = if input {
            last_literal_unit(value, q.dim)
        } else {
            plain_literal_unit(value)
        };
        match literal {
            Some(u) => match units::resolve(u).map(|x| x.with_gauge(self.gauge)) {
                Ok(unit)
                    if unit.dim == q.dim
                        && !(q.aff == Affinity::Difference
                            && unit.affinity == Affinity::Absolute) =>
                {
                    (
                        DisplayUnit::Fixed {
                            unit,
                            text: text_of(u),
                        },
                        Some(u.span),
                    )
                }
                _ => (DisplayUnit::Auto, None),
            },
            None => (DisplayUnit::Auto, None),
        }
    }
}

/// Strip parentheses.
fn inner(e: &Expr) -> &Expr {
    match &e.kind {
        ExprKind::Paren(a) => inner(a),
        _ => e,
    }
}

/// The unit of an expression that is just a literal (possibly negated).
fn plain_literal_unit(e: &Expr) -> Option<&UnitExpr> {
    match &inner(e).kind {
        ExprKind::Number { unit, .. } => unit.as_ref(),
        ExprKind::Neg(a) => plain_literal_unit(a),
        _ => None,
    }
}

/// The last literal unit of dimension `dim` in an expression (the display
/// unit of an input such as `cell(...) * 1 kPa`).
fn last_literal_unit(e: &Expr, dim: Dim) -> Option<&UnitExpr> {
    match &e.kind {
        ExprKind::Number { unit: Some(u), .. } => match units::resolve(u) {
            Ok(unit) if unit.dim == dim => Some(u),
            _ => None,
        },
        ExprKind::Number { .. }
        | ExprKind::Str(_)
        | ExprKind::Name(_)
        | ExprKind::Compare { .. }
        | ExprKind::Logic { .. }
        | ExprKind::Not(_)
        | ExprKind::If { .. } => None,
        ExprKind::Neg(a) | ExprKind::Paren(a) => last_literal_unit(a, dim),
        ExprKind::Field { base, .. } => last_literal_unit(base, dim),
        ExprKind::Binary { left, right, .. } => {
            last_literal_unit(right, dim).or_else(|| last_literal_unit(left, dim))
        }
        ExprKind::Call { args, .. } => args
            .iter()
            .rev()
            .find_map(|a| last_literal_unit(&a.value, dim)),
    }
}

/// Collapse runs of whitespace in a unit as written.
pub fn normalise_unit_text(s: &str) -> String {
    s.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// The type of a field.
pub fn field_type(f: Field) -> Ty {
    let info = crate::fields::info(f);
    if info.absolute {
        Ty::Num(QuantityType::absolute(info.dim))
    } else {
        Ty::num(info.dim)
    }
}

/// A neutral kelvin value at or above this, taken as a difference next to an
/// absolute temperature, gets a warning (see
/// `Checker::kelvin_reading_as_difference`). Temperature differences in the
/// devices sheaf rates (approaches, rises, superheat) are mostly well below
/// 200 K, and readings in kelvin well above it: common practice, not a law.
const KELVIN_READING_THRESHOLD: f64 = 200.0;

/// Affinity rules for `+` and `-` (README, units in "A short tour of the language"). `{q}` in an error message
/// stands for the quantity name.
fn affinity(op: BinOp, a: Affinity, b: Affinity) -> Result<Affinity, &'static str> {
    use Affinity::*;
    match (op, a, b) {
        (BinOp::Add, Absolute, Absolute) => Err("cannot add two absolute values of {q}"),
        (BinOp::Add, Absolute, _) | (BinOp::Add, _, Absolute) => Ok(Absolute),
        (BinOp::Add, Difference, _) | (BinOp::Add, _, Difference) => Ok(Difference),
        (BinOp::Sub, Absolute, Absolute) => Ok(Difference),
        (BinOp::Sub, Absolute, _) => Ok(Absolute),
        (BinOp::Sub, _, Absolute) => {
            Err("cannot subtract an absolute value of {q} from a difference")
        }
        (BinOp::Sub, Difference, _) | (BinOp::Sub, _, Difference) => Ok(Difference),
        _ => Ok(Neutral),
    }
}

/// Bind call arguments to parameters. Returns one entry per parameter (or,
/// for a variadic function, one per argument).
fn bind<'a>(
    sig: &Builtin,
    args: &'a [Arg],
    fspan: Span,
    call_span: Span,
) -> Result<Vec<Option<&'a Expr>>, Diagnostic> {
    if sig.variadic {
        if let Some(a) = args.iter().find(|a| a.name.is_some()) {
            return Err(Diagnostic::error(
                format!("`{}` takes only positional arguments", sig.name),
                a.span,
            ));
        }
        if args.is_empty() {
            return Err(Diagnostic::error(
                format!("`{}` needs at least one argument", sig.name),
                call_span,
            )
            .with_note(format!("usage: {}", sig.usage)));
        }
        return Ok(args.iter().map(|a| Some(&a.value)).collect());
    }
    let mut out: Vec<Option<&Expr>> = vec![None; sig.params.len()];
    let mut next_pos = 0;
    for a in args {
        match &a.name {
            Some(n) => {
                let Some(i) = sig.params.iter().position(|p| p.name == n.name) else {
                    let names: Vec<&str> = sig.params.iter().map(|p| p.name).collect();
                    let mut d = Diagnostic::error(
                        format!("`{}` has no argument `{}`", sig.name, n.name),
                        n.span,
                    );
                    if let Some(s) = closest(&n.name, names.iter().copied()) {
                        d = d.with_note(format!("help: did you mean `{s}:`?"));
                    }
                    return Err(d.with_note(format!("usage: {}", sig.usage)));
                };
                if out[i].is_some() {
                    return Err(
                        Diagnostic::error(format!("`{}` is given twice", n.name), a.span)
                            .with_note(format!("usage: {}", sig.usage)),
                    );
                }
                out[i] = Some(&a.value);
            }
            None => {
                while next_pos < sig.params.len()
                    && (out[next_pos].is_some() || !sig.params[next_pos].positional)
                {
                    if !sig.params[next_pos].positional && out[next_pos].is_none() {
                        return Err(Diagnostic::error(
                            format!(
                                "`{}` must be given by name here, e.g. `{}: ...`",
                                sig.params[next_pos].name, sig.params[next_pos].name
                            ),
                            a.span,
                        )
                        .with_note(format!("usage: {}", sig.usage)));
                    }
                    next_pos += 1;
                }
                if next_pos >= sig.params.len() {
                    return Err(Diagnostic::error(
                        format!("too many arguments for `{}`", sig.name),
                        a.span,
                    )
                    .with_note(format!("usage: {}", sig.usage)));
                }
                out[next_pos] = Some(&a.value);
                next_pos += 1;
            }
        }
    }
    // `state` words a missing substance itself.
    if !std::ptr::eq(sig, &builtins::substances::STATE) {
        for (i, p) in sig.params.iter().enumerate() {
            if p.required && out[i].is_none() {
                let how = if p.positional {
                    format!("`{}`", p.name)
                } else {
                    format!("`{}: ...`", p.name)
                };
                return Err(Diagnostic::error(
                    format!("`{}` is missing the argument {how}", sig.name),
                    call_span,
                )
                .with_secondary(fspan, "in this call")
                .with_note(format!("usage: {}", sig.usage)));
            }
        }
    }
    Ok(out)
}

/// Value of a compiled expression with no references to other nodes.
pub fn const_value(code: &Code) -> Option<f64> {
    fn has_slot(c: &Code) -> bool {
        match c {
            Code::Slot(_) => true,
            Code::Const(_) | Code::Str(_) | Code::Absent => false,
            Code::Neg(a) => has_slot(a),
            Code::Add(a, b)
            | Code::Sub(a, b)
            | Code::StateDiff(a, b, _)
            | Code::Mul(a, b)
            | Code::Cmp(_, a, b)
            | Code::And(a, b)
            | Code::Or(a, b) => has_slot(a) || has_slot(b),
            Code::Not(a) | Code::Phase(a, _) => has_slot(a),
            Code::If(c, a, b) => has_slot(c) || has_slot(a) || has_slot(b),
            Code::Chain(first, rest) => has_slot(first) || rest.iter().any(|(_, c)| has_slot(c)),
            Code::Div(a, b, _) | Code::Pow(a, b, _) => has_slot(a) || has_slot(b),
            Code::Field(a, _, _) => has_slot(a),
            Code::Call(_, args, _) => args.iter().any(has_slot),
        }
    }
    if has_slot(code) {
        return None;
    }
    let mut w = Vec::new();
    crate::eval::eval(code, &[], Span::default(), &mut w)
        .ok()?
        .as_num()
}

/// A rational approximation n/d (d <= 12) of an exponent, if it is one.
fn rational(x: f64) -> Option<(i32, i32)> {
    for d in 1..=12 {
        let n = x * f64::from(d);
        let r = n.round();
        if (n - r).abs() < 1e-9 && r.abs() < 1000.0 {
            return Some((r as i32, d));
        }
    }
    None
}

/// Check a statement of a worksheet-independent expression (for `eval` and
/// `--set`): only built-in constants may be referenced.
pub fn check_standalone(e: &Expr, src: &str) -> Result<(Ty, Code), Vec<Diagnostic>> {
    check_standalone_gauge(e, src, units::standard_atmosphere())
}

/// [`check_standalone`] with gauge units relative to `gauge` (Pa): a value
/// set on a worksheet with its own `gauge` reference.
pub fn check_standalone_gauge(
    e: &Expr,
    src: &str,
    gauge: f64,
) -> Result<(Ty, Code), Vec<Diagnostic>> {
    let names = HashMap::default();
    let prefixes = HashMap::default();
    let rx = Resolve {
        names: &names,
        prefixes: &prefixes,
    };
    let mut refs = Vec::new();
    collect_names(e, &rx, &mut refs);
    let mut diags: Vec<Diagnostic> = refs
        .iter()
        .filter(|(n, _)| builtins::constant(n).is_none())
        .map(|(n, s)| unknown_name(n, *s, &name_suggester(&names)))
        .collect();
    let mut cx = Checker {
        src,
        names: &names,
        types: Vec::new(),
        displays: Vec::new(),
        display_of: Vec::new(),
        diags: Vec::new(),
        operands: None,
        warnings: Vec::new(),
        input_nodes: Vec::new(),
        input_consts: Vec::new(),
        unit_cache: HashMap::default(),
        externals: &Externals::default(),
        gauge,
        uses_gauge: false,
        prefixes: false,
    };
    let (ty, code) = cx.expr(e);
    diags.extend(cx.diags);
    if diags.is_empty() {
        Ok((ty, code))
    } else {
        Err(diags)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use Affinity::*;

    #[test]
    fn affinity_rules_of_design_section_3() {
        assert_eq!(affinity(BinOp::Sub, Absolute, Absolute), Ok(Difference));
        assert_eq!(affinity(BinOp::Add, Absolute, Difference), Ok(Absolute));
        assert_eq!(affinity(BinOp::Add, Difference, Absolute), Ok(Absolute));
        assert_eq!(affinity(BinOp::Sub, Absolute, Neutral), Ok(Absolute));
        assert!(affinity(BinOp::Add, Absolute, Absolute).is_err());
        assert!(affinity(BinOp::Sub, Difference, Absolute).is_err());
        assert!(affinity(BinOp::Sub, Neutral, Absolute).is_err());
        assert_eq!(affinity(BinOp::Add, Difference, Neutral), Ok(Difference));
        assert_eq!(affinity(BinOp::Add, Neutral, Neutral), Ok(Neutral));
        assert_eq!(affinity(BinOp::Mul, Absolute, Absolute), Ok(Neutral));
    }

    #[test]
    fn exponents_as_small_rationals() {
        assert_eq!(rational(2.0), Some((2, 1)));
        assert_eq!(rational(-0.5), Some((-1, 2)));
        assert_eq!(rational(1.0 / 3.0), Some((1, 3)));
        assert_eq!(rational(0.4 / 1.4), Some((2, 7)));
        assert_eq!(rational(std::f64::consts::PI), None);
    }

    fn checked(src: &str) -> Result<Checked, Vec<Diagnostic>> {
        let ws = sheaf_grammar::parse(src).unwrap();
        check(&ws, src, &Externals::none())
    }

    #[test]
    fn units_are_folded_into_si_constants() {
        let c = checked("a = 2 kPa\n").unwrap();
        assert_eq!(c.nodes[0].code, Code::Const(2000.0));
        assert_eq!(c.nodes[0].ty, Ty::num(Dim::PRESSURE));
        let c = checked("t = 20 degC\n").unwrap();
        assert_eq!(
            c.nodes[0].ty,
            Ty::Num(QuantityType::absolute(Dim::TEMPERATURE))
        );
    }

    #[test]
    fn names_compile_to_slots_and_order_follows_dependencies() {
        let c = checked("b = a * 2\na = 3 m\n").unwrap();
        assert_eq!(c.order, vec![1, 0]);
        assert_eq!(c.nodes[0].deps, vec![1]);
        assert_eq!(
            c.nodes[0].code,
            Code::Mul(Box::new(Code::Slot(1)), Box::new(Code::Const(2.0)))
        );
    }

    #[test]
    fn arguments_bind_by_position_and_name() {
        let ok = checked(
            "g = ideal_gas(\"air\")\ns = state(g, T: 300 K, p: 1 bar)\nt = isentropic(s, p: 2 bar)\n",
        );
        assert!(ok.is_ok(), "{ok:?}");
        let e = checked(
            "g = ideal_gas(\"air\")\ns = state(g, T: 300 K, p: 1 bar)\nt = isentropic(s, 2 bar)\n",
        )
        .unwrap_err();
        assert!(
            e[0].message.contains("must be given by name"),
            "{}",
            e[0].message
        );
        let e = checked("g = ideal_gas(\"air\")\ns = state(g, T: 300 K, p: 1 bar)\nt = isentropic(s, pp: 2 bar)\n").unwrap_err();
        assert!(
            e[0].message.contains("has no argument `pp`"),
            "{}",
            e[0].message
        );
        assert!(
            e[0].notes.iter().any(|n| n.contains("`p:`")),
            "{:?}",
            e[0].notes
        );
        let e = checked("x = min()\n").unwrap_err();
        assert!(e[0].message.contains("at least one"), "{}", e[0].message);
    }

    #[test]
    fn constant_folding_for_exponents() {
        let c = checked("x = 1\n").unwrap();
        assert_eq!(const_value(&c.nodes[0].code), Some(1.0));
        assert_eq!(const_value(&Code::Slot(0)), None);
    }
}
