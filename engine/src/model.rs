//! The engine's public face: a checked, compiled worksheet that can be
//! evaluated, have inputs changed, and be re-evaluated incrementally.

use sheaf_grammar::{Span, Worksheet};

use sha2::{Digest, Sha256};
use sheaf_grammar::StatementKind;

use crate::check::{self, Checked, DisplayUnit, GaugeRef, Import, Imports, Node, NodeKind};
use crate::diag::Diagnostic;
use crate::eval::{self, Code, Value};
use crate::externals::{CellRequest, Externals, UseRequest, cell_requests, use_requests};
use crate::graph;
use crate::types::{QuantityType, Ty, describe_qty};
use crate::units::Affinity;

/// Evaluation state of a node.
#[derive(Clone, Debug, PartialEq)]
pub enum Status {
    /// Not evaluated yet.
    Pending,
    Ok,
    /// Evaluation failed; the diagnostic says why.
    Failed(Diagnostic),
    /// Not evaluated because something it depends on failed.
    Skipped,
}

/// Where an input's value came from when it is not the worksheet's own.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum OverrideSource {
    /// `--set NAME=VALUE` on the command line.
    CommandLine,
    /// A `case` of the worksheet, by name.
    Case(String),
    /// Set through the API ([`Model::set_input`]).
    Program,
}

impl std::fmt::Display for OverrideSource {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            OverrideSource::CommandLine => f.write_str("command line (--set)"),
            OverrideSource::Case(c) => write!(f, "case `{c}`"),
            OverrideSource::Program => f.write_str("set by the calling program"),
        }
    }
}

/// An input's value as overridden: the value (SI), the text it was given
/// as (`5 barg`), and where it came from.
#[derive(Clone, Debug, PartialEq)]
pub struct Override {
    pub si_value: f64,
    pub text: String,
    pub source: OverrideSource,
}

/// A checked and compiled worksheet with its current values.
#[derive(Clone, Debug)]
pub struct Model {
    source: String,
    worksheet: Worksheet,
    pub(crate) checked: Checked,
    pub(crate) users: Vec<Vec<usize>>,
    pub(crate) values: Vec<Value>,
    pub(crate) status: Vec<Status>,
    warnings: Vec<Vec<Diagnostic>>,
    /// For each check: the values of its comparisons' operands (SI), kept
    /// for reports (actual value and limit).
    operand_values: Vec<Vec<Option<f64>>>,
    /// Inputs whose value is not the worksheet's own.
    pub(crate) overrides: Vec<Option<Override>>,
    pub(crate) dirty: Vec<bool>,
    /// Inputs solved by a `find`: how (see [`crate::whatif`]).
    pub(crate) found: Vec<Option<crate::study::Found>>,
    /// An input changed since the finds were last solved.
    pub(crate) finds_dirty: bool,
    /// The worksheets named by `use`, checked.
    used: Vec<Used>,
    /// For nodes `0..checked.imports`: (index into `used`, node there).
    import_of: Vec<(usize, usize)>,
}

/// A worksheet named by `use "PATH" as PREFIX`, checked as a model of its
/// own (with its own gauge reference); its names appear in the using
/// model as `PREFIX.NAME`.
#[derive(Clone, Debug)]
pub struct Used {
    pub prefix: String,
    /// The file as named in messages and reports (`site.sheaf`).
    pub name: String,
    /// Where the caller read it ([`crate::UsedSource::path`]).
    pub path: String,
    /// Index of the `use` statement in the using worksheet.
    pub stmt: usize,
    pub model: Model,
}

/// A file a package depends on through `use` (at any depth).
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct UsedFile {
    /// The prefix chain its names appear under (`site`, `site.fluids`).
    pub prefix: String,
    /// The path as written in the `use` statement.
    pub name: String,
    /// Where it was read (not in json output: machine-specific).
    #[serde(skip)]
    pub path: String,
    /// sha256 of its text, lowercase hex.
    pub sha256: String,
}

/// A parsed worksheet, not yet checked: the caller may read the external
/// inputs it asks for ([`Parsed::cell_requests`]) and then check it
/// ([`Parsed::check`]).
#[derive(Clone, Debug)]
pub struct Parsed {
    source: String,
    worksheet: Worksheet,
}

impl Parsed {
    /// Parse a worksheet. All syntax errors are returned together.
    pub fn new(source: impl Into<String>) -> Result<Parsed, Vec<Diagnostic>> {
        let source = source.into();
        let worksheet = sheaf_grammar::parse(&source)
            .map_err(|es| es.into_iter().map(Diagnostic::from).collect::<Vec<_>>())?;
        Ok(Parsed { source, worksheet })
    }

    pub fn source(&self) -> &str {
        &self.source
    }

    /// The workbook cells the worksheet reads (`cell()` calls).
    pub fn cell_requests(&self) -> Vec<CellRequest> {
        cell_requests(&self.worksheet)
    }

    /// The worksheets it uses (`use` statements), in file order.
    pub fn use_requests(&self) -> Vec<UseRequest> {
        use_requests(&self.worksheet)
    }

    /// Check and compile, with the values the caller read for the external
    /// inputs. All checking errors are returned together.
    pub fn check(self, externals: &Externals) -> Result<Model, Vec<Diagnostic>> {
        Model::from_parts(self.source, self.worksheet, externals)
    }
}

impl Model {
    /// Parse and check a worksheet that reads no workbook cells (a `cell()`
    /// call is an error; see [`Parsed`]). All syntax errors, or else all
    /// checking errors, are returned together.
    pub fn new(source: impl Into<String>) -> Result<Model, Vec<Diagnostic>> {
        Parsed::new(source)?.check(&Externals::none())
    }

    fn from_parts(
        source: String,
        worksheet: Worksheet,
        externals: &Externals,
    ) -> Result<Model, Vec<Diagnostic>> {
        let mut diags = Vec::new();
        let mut used: Vec<Used> = Vec::new();
        let mut imports = Imports::default();
        let mut import_of = Vec::new();
        for (si, stmt) in worksheet.statements.iter().enumerate() {
            let StatementKind::Use { path, prefix } = &stmt.kind else {
                continue;
            };
            if imports.prefixes.iter().any(|(p, _)| *p == prefix.name) {
                continue; // the checker reports the second use of a prefix
            }
            let checked = externals.used(&path.value).and_then(|u| {
                Parsed::new(u.text.clone())
                    .and_then(|p| p.check(&u.externals))
                    .map(|m| (u, m))
                    .map_err(|ds| {
                        diags.extend(ds.iter().map(|d| relocate(d, &u.name, &u.text, path.span)));
                        String::new()
                    })
            });
            match checked {
                Ok((u, m)) => {
                    let k = used.len();
                    for (j, n) in m.nodes().iter().enumerate() {
                        imports.names.push(Import {
                            name: n
                                .name
                                .as_ref()
                                .map(|x| format!("{}.{}", prefix.name, x.name)),
                            kind: n.kind,
                            ty: n.ty,
                            display: n.display.clone(),
                            description: n.description.clone(),
                            stmt: si,
                            span: stmt.span,
                        });
                        import_of.push((k, j));
                    }
                    imports.prefixes.push((prefix.name.clone(), true));
                    used.push(Used {
                        prefix: prefix.name.clone(),
                        name: u.name.clone(),
                        path: u.path.clone(),
                        stmt: si,
                        model: m,
                    });
                }
                Err(msg) => {
                    if !msg.is_empty() {
                        diags.push(
                            Diagnostic::error(msg, path.span)
                                .with_label(format!("used as `{}`", prefix.name)),
                        );
                    }
                    imports.prefixes.push((prefix.name.clone(), false));
                }
            }
        }
        let checked = match check::check_with(&worksheet, &source, externals, &imports) {
            Ok(c) if diags.is_empty() => c,
            Ok(_) => return Err(diags),
            Err(mut ds) => {
                ds.extend(diags);
                ds.sort_by_key(|d| d.span().map_or(0, |s| s.start));
                return Err(ds);
            }
        };
        let n = checked.nodes.len();
        Ok(Model {
            users: graph::users(checked.nodes.iter().map(|n| n.deps.as_slice())),
            source,
            worksheet,
            checked,
            values: vec![Value::Absent; n],
            status: vec![Status::Pending; n],
            warnings: vec![Vec::new(); n],
            operand_values: vec![Vec::new(); n],
            overrides: vec![None; n],
            dirty: vec![true; n],
            found: vec![None; n],
            finds_dirty: true,
            used,
            import_of,
        })
    }

    /// The reference pressure of this worksheet's gauge units (`gauge`
    /// statement, else the standard atmosphere). A used worksheet keeps its
    /// own: see [`Model::used`].
    pub fn gauge_reference(&self) -> &GaugeRef {
        &self.checked.gauge
    }

    /// Whether a gauge unit (barg, psig, kPag, MPag) is written in this
    /// worksheet (from the resolved units).
    pub fn uses_gauge(&self) -> bool {
        self.checked.uses_gauge
    }

    /// The worksheets this one uses directly.
    pub fn used(&self) -> &[Used] {
        &self.used
    }

    /// Every used worksheet at any depth, depth first, with its prefix chain
    /// and the sha256 of its text (for the package cover).
    pub fn used_files(&self) -> Vec<UsedFile> {
        let mut out = Vec::new();
        for u in &self.used {
            out.push(UsedFile {
                prefix: u.prefix.clone(),
                name: u.name.clone(),
                path: u.path.clone(),
                sha256: sha256_hex(u.model.source().as_bytes()),
            });
            for mut f in u.model.used_files() {
                f.prefix = format!("{}.{}", u.prefix, f.prefix);
                out.push(f);
            }
        }
        out
    }

    /// For a node that holds a name of a used worksheet: that worksheet
    /// (index into [`Model::used`]) and its node.
    pub fn import_of(&self, node: usize) -> Option<(usize, usize)> {
        self.import_of.get(node).copied()
    }

    /// Copy the values of used worksheets into their import nodes; mark
    /// what changed (and its users) dirty.
    fn pull_imports(&mut self) -> usize {
        let mut count = 0;
        for u in &mut self.used {
            count += u.model.evaluate();
        }
        for i in 0..self.import_of.len() {
            let (k, j) = self.import_of[i];
            let u = &self.used[k];
            let sub = &u.model;
            let value = sub.values[j].clone();
            let status = match &sub.status[j] {
                Status::Failed(d) => Status::Failed(relocate(
                    d,
                    &u.name,
                    sub.source(),
                    self.checked.nodes[i].expr_span,
                )),
                other => other.clone(),
            };
            let warnings: Vec<Diagnostic> = sub.warnings[j]
                .iter()
                .map(|w| relocate(w, &u.name, sub.source(), self.checked.nodes[i].expr_span))
                .collect();
            let operands = sub.operand_values[j].clone();
            let changed = self.status[i] != status || self.values[i] != value;
            if changed || self.dirty[i] {
                self.checked.nodes[i].code = match value {
                    Value::Num(x) => Code::Const(x),
                    _ => Code::Absent,
                };
                self.values[i] = value;
                self.status[i] = status;
                self.warnings[i] = warnings;
                self.operand_values[i] = operands;
                self.dirty[i] = false;
                graph::mark_downstream(&self.users, i, &mut self.dirty);
                self.dirty[i] = false;
            }
        }
        count
    }

    pub fn source(&self) -> &str {
        &self.source
    }

    pub fn worksheet(&self) -> &Worksheet {
        &self.worksheet
    }

    pub fn nodes(&self) -> &[Node] {
        &self.checked.nodes
    }

    /// Evaluation order (topological).
    pub fn order(&self) -> &[usize] {
        &self.checked.order
    }

    pub fn node_index(&self, name: &str) -> Option<usize> {
        self.checked.names.get(name).copied()
    }

    pub fn value(&self, node: usize) -> &Value {
        &self.values[node]
    }

    /// All current values, indexed by node.
    pub fn values(&self) -> &[Value] {
        &self.values
    }

    pub fn status(&self, node: usize) -> &Status {
        &self.status[node]
    }

    /// The operand values (SI) of a check's comparisons, in order.
    pub fn operand_values(&self, node: usize) -> &[Option<f64>] {
        &self.operand_values[node]
    }

    /// Located warnings (severity warning) of a node's last evaluation.
    pub fn warnings(&self, node: usize) -> &[Diagnostic] {
        &self.warnings[node]
    }

    /// Value of a named number, SI.
    pub fn number(&self, name: &str) -> Option<f64> {
        self.node_index(name).and_then(|i| self.values[i].as_num())
    }

    /// Evaluate everything not yet evaluated or affected by a change since
    /// the last evaluation; `find`s are solved first when an input
    /// changed. Returns how many nodes were evaluated (outside the finds).
    pub fn evaluate(&mut self) -> usize {
        self.solve_finds();
        let mut count = self.pull_imports();
        for k in 0..self.checked.order.len() {
            let i = self.checked.order[k];
            // Names of used worksheets are filled in by `pull_imports`.
            if i < self.import_of.len() {
                self.dirty[i] = false;
                continue;
            }
            if self.dirty[i] && self.eval_node(i) {
                count += 1;
            }
        }
        count
    }

    /// Evaluate node `i` (its dependencies evaluated); false when it was
    /// skipped because a dependency failed.
    pub(crate) fn eval_node(&mut self, i: usize) -> bool {
        self.dirty[i] = false;
        self.warnings[i].clear();
        let node = &self.checked.nodes[i];
        if node
            .deps
            .iter()
            .any(|&d| !matches!(self.status[d], Status::Ok))
        {
            self.status[i] = Status::Skipped;
            self.values[i] = Value::Absent;
            return false;
        }
        let mut w = Vec::new();
        let result =
            eval::eval(&node.code, &self.values, node.expr_span, &mut w).and_then(
                |v| match physical(node, &v) {
                    Ok(()) => Ok(v),
                    Err(message) => Err(eval::EvalError {
                        span: node.expr_span,
                        message,
                    }),
                },
            );
        match result {
            Ok(v) => {
                self.values[i] = v;
                self.status[i] = Status::Ok;
                if !node.operands.is_empty() {
                    self.operand_values[i] = node
                        .operands
                        .iter()
                        .map(|o| {
                            eval::eval(&o.code, &self.values, o.span, &mut Vec::new())
                                .ok()
                                .and_then(|v| v.as_num())
                        })
                        .collect();
                }
            }
            Err(e) => {
                self.values[i] = Value::Absent;
                self.status[i] = Status::Failed(runtime_diagnostic(node, e.span, &e.message));
            }
        }
        w.extend(self.checked.nodes[i].warnings.iter().cloned());
        w.dedup();
        self.warnings[i] = w;
        true
    }

    /// Replace an input's value (SI) and mark what depends on it for
    /// re-evaluation. Call [`Model::evaluate`] afterwards. The input is
    /// recorded as overridden by the calling program.
    pub fn set_input(&mut self, name: &str, si_value: f64) -> Result<(), String> {
        let i = self.input_index(name)?;
        if let Some((k, j)) = self.import_of(i) {
            let inner_name = self.inner_name(k, j);
            let sub = &mut self.used[k].model;
            sub.set_input(&inner_name, si_value)?;
            self.overrides[i] = sub.overrides[j].clone();
            self.dirty[i] = true;
            return Ok(());
        }
        self.set_input_si(i, name, si_value)?;
        self.overrides[i] = Some(Override {
            si_value,
            text: crate::units::shortest_text(si_value),
            source: OverrideSource::Program,
        });
        Ok(())
    }

    /// The override of input `node`, if its value is not the worksheet's.
    pub fn override_of(&self, node: usize) -> Option<&Override> {
        self.overrides.get(node).and_then(|o| o.as_ref())
    }

    fn set_input_si(&mut self, i: usize, name: &str, si_value: f64) -> Result<(), String> {
        if !matches!(self.checked.nodes[i].ty, Ty::Num(_)) {
            return Err(format!("input `{name}` is not a number"));
        }
        if !si_value.is_finite() {
            return Err(format!("input `{name}`: the value must be a finite number"));
        }
        if let Some(f) = self.find_of(i) {
            return Err(format!(
                "input `{name}` is solved by `find {name} ... where {}`; it cannot be set",
                f.condition
            ));
        }
        self.set_input_node(i, si_value);
        Ok(())
    }

    /// Set input node `i` to an SI value (checked by the caller) and mark
    /// what depends on it, finds included.
    pub(crate) fn set_input_node(&mut self, i: usize, si_value: f64) {
        self.checked.nodes[i].code = Code::Const(si_value);
        graph::mark_downstream(&self.users, i, &mut self.dirty);
        self.finds_dirty = true;
    }

    /// Replace an input's value from text such as `8 barg`, checked against
    /// the input's quantity, as given on the command line. Errors are
    /// worded for a command line.
    pub fn set_input_text(&mut self, name: &str, text: &str) -> Result<(), String> {
        self.set_input_from(name, text, OverrideSource::CommandLine)
    }

    /// [`Model::set_input_text`] with the source of the value recorded.
    pub fn set_input_from(
        &mut self,
        name: &str,
        text: &str,
        source: OverrideSource,
    ) -> Result<(), String> {
        let i = self.input_index(name)?;
        if let Some((k, j)) = self.import_of(i) {
            // A used worksheet's input: set there (its own gauge reference
            // applies), seen here on the next evaluation.
            let inner_name = self.inner_name(k, j);
            let sub = &mut self.used[k].model;
            sub.set_input_from(&inner_name, text, source)
                .map_err(|e| e.replacen(&format!("`{inner_name}="), &format!("`{name}="), 1))?;
            self.overrides[i] = sub.overrides[j].clone();
            self.dirty[i] = true;
            return Ok(());
        }
        let expr = sheaf_grammar::parse_expr(text)
            .map_err(|e| format!("`{name}={text}`: {}", e.message))?;
        let (ty, code) = check::check_standalone_gauge(&expr, text, self.checked.gauge.si)
            .map_err(|ds| {
                let msgs: Vec<String> = ds
                    .into_iter()
                    .map(|d| {
                        let mut m = d.message;
                        for n in d.notes {
                            m.push_str(&format!(" ({n})"));
                        }
                        m
                    })
                    .collect();
                format!("`{name}={text}`: {}", msgs.join("; "))
            })?;
        let want = self.checked.nodes[i].ty;
        let si = check::const_value(&code);
        match (want, ty, si) {
            (Ty::Num(w), Ty::Num(g), Some(v)) if QuantityType::accepts(w, g) => {
                self.set_input_si(i, name, v)?;
                self.overrides[i] = Some(Override {
                    si_value: v,
                    text: text.trim().to_string(),
                    source,
                });
                Ok(())
            }
            (Ty::Num(w), Ty::Num(g), Some(_)) => Err(format!(
                "`{name}={text}`: `{name}` is {}, but the new value is {}",
                describe_qty(w),
                describe_qty(g)
            )),
            (Ty::Num(_), _, _) => Err(format!(
                "`{name}={text}`: the value must be a number with a unit"
            )),
            _ => Err(format!(
                "input `{name}` is not a number and cannot be set from the command line"
            )),
        }
    }

    /// The name of node `j` of used worksheet `k`, in that worksheet.
    fn inner_name(&self, k: usize, j: usize) -> String {
        self.used[k].model.checked.nodes[j]
            .name
            .as_ref()
            .map_or(String::new(), |n| n.name.clone())
    }

    fn input_index(&self, name: &str) -> Result<usize, String> {
        match self.node_index(name) {
            Some(i) if self.checked.nodes[i].kind == NodeKind::Input => Ok(i),
            Some(_) => Err(format!(
                "`{name}` is computed, not an input; only inputs can be set"
            )),
            None => {
                let inputs: Vec<&str> = self
                    .checked
                    .nodes
                    .iter()
                    .filter(|n| n.kind == NodeKind::Input)
                    .filter_map(|n| n.name.as_ref().map(|n| n.name.as_str()))
                    .collect();
                Err(format!(
                    "no input named `{name}`; the inputs are: {}",
                    inputs.join(", ")
                ))
            }
        }
    }

    /// Errors met during evaluation, in file order.
    pub fn runtime_errors(&self) -> Vec<Diagnostic> {
        let mut v: Vec<Diagnostic> = self
            .status
            .iter()
            .filter_map(|s| match s {
                Status::Failed(d) => Some(d.clone()),
                _ => None,
            })
            .collect();
        v.sort_by_key(|d| d.span().map_or(0, |s| s.start));
        v
    }

    /// The display unit chosen for a node.
    pub fn display(&self, node: usize) -> &DisplayUnit {
        &self.checked.nodes[node].display
    }
}

/// A value that cannot be physical or cannot be shown: an absolute
/// temperature or pressure below zero (however it arose: a literal, an
/// override, a computation), or a number that is not finite in its
/// display unit.
fn physical(node: &Node, v: &Value) -> Result<(), String> {
    let (Value::Num(x), Ty::Num(q)) = (v, node.ty) else {
        return Ok(());
    };
    let shown_absolute = matches!(
        &node.display,
        DisplayUnit::Fixed { unit, .. } if unit.affinity == Affinity::Absolute
    );
    if (q.aff == Affinity::Absolute || shown_absolute) && *x < 0.0 {
        if q.dim == crate::units::Dim::TEMPERATURE {
            return Err(format!(
                "the absolute temperature would be {} K, below absolute zero",
                crate::units::format_sig(*x, 6)
            ));
        }
        if q.dim == crate::units::Dim::PRESSURE {
            return Err(format!(
                "the absolute pressure would be {} Pa, below zero (a gauge value below the \
                 reference pressure?)",
                crate::units::format_sig(*x, 6)
            ));
        }
    }
    if let DisplayUnit::Fixed { unit, text } = &node.display
        && !unit.from_si(*x).is_finite()
    {
        return Err(format!(
            "the value is not a finite number in `{text}` (too large for this unit)"
        ));
    }
    Ok(())
}

fn runtime_diagnostic(node: &Node, span: Span, message: &str) -> Diagnostic {
    let what = match (&node.name, node.kind) {
        (Some(n), _) => format!("cannot evaluate `{}`: {message}", n.name),
        (None, _) => format!("cannot evaluate this check: {message}"),
    };
    Diagnostic::error(what, span)
}

/// A diagnostic of a used worksheet, shown at the `use` statement of the
/// using worksheet: the used file's name, line and column lead the message.
fn relocate(d: &Diagnostic, file: &str, text: &str, at: Span) -> Diagnostic {
    let place = match d.span() {
        Some(s) => {
            let (l, c) = sheaf_grammar::line_col(text, s.start);
            format!("{file}:{l}:{c}")
        }
        None => file.to_string(),
    };
    let mut out = Diagnostic::error(format!("in {place}: {}", d.message), at)
        .with_label(format!("in the worksheet used here ({file})"));
    out.severity = d.severity;
    out.notes = d.notes.clone();
    out
}

/// sha256 of bytes, lowercase hex.
fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}
