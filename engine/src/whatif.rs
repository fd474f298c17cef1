//! What-if: named cases, parameter sweeps and back-calculation (`find`).
//!
//! The checker ([`crate::check`]) turns `case`, `sweep` and `find`
//! statements into the definitions below (values folded to SI, names
//! resolved, dimensions checked). [`Model`] applies them:
//!
//! - [`Model::cases`], [`Model::apply_case`]: a case sets inputs like
//!   `--set`, recorded as overridden by the case.
//! - [`Model::sweeps`], [`Model::run_sweep`]: every point of a sweep,
//!   re-evaluating only what depends on the swept input (a straight-line
//!   pass over those nodes when the worksheet has no `find`).
//! - `find`: solved by [`Model::evaluate`] before the rest of the
//!   worksheet, again whenever an input changed (so for every case and
//!   every sweep point); [`Model::found`] tells how.
//!
//! Root finding is Brent's method on the bracket written in the
//! worksheet ([`brent`]); see [`XTOL_REL`] for the tolerance.

use crate::check::DisplayUnit;
use crate::diag::Diagnostic;
use crate::eval::{self, Code, Value};
use crate::model::{Model, OverrideSource, Status};
use crate::units::{self, Dim};

pub use crate::study::*;

/// Why [`brent`] stopped without a root.
#[derive(Clone, Debug, PartialEq)]
pub enum RootError<E> {
    /// The function failed at a trial value.
    Eval(f64, E),
    /// No convergence after [`MAX_ITERATIONS`] steps: the last value and
    /// its residual.
    NotConverged(f64, f64),
}

/// Brent's method (inverse quadratic interpolation, secant and
/// bisection steps) for a root of `f` in `[a, b]`, where `fa = f(a)` and
/// `fb = f(b)` have opposite signs (or one is zero). Stops when the
/// bracket is narrower than `2·(2ε|x| + xtol/2)` or `f(x) == 0`. Returns
/// (x, f(x), steps).
pub fn brent<E>(
    mut f: impl FnMut(f64) -> Result<f64, E>,
    a: f64,
    b: f64,
    fa: f64,
    fb: f64,
    xtol: f64,
) -> Result<(f64, f64, usize), RootError<E>> {
    let (mut a, mut b, mut fa, mut fb) = (a, b, fa, fb);
    if fa == 0.0 {
        return Ok((a, fa, 0));
    }
    if fb == 0.0 {
        return Ok((b, fb, 0));
    }
    let (mut c, mut fc) = (b, fb);
    let mut d = b - a;
    let mut e = d;
    for iter in 0..=MAX_ITERATIONS {
        if (fb > 0.0) == (fc > 0.0) {
            c = a;
            fc = fa;
            d = b - a;
            e = d;
        }
        if fc.abs() < fb.abs() {
            a = b;
            b = c;
            c = a;
            fa = fb;
            fb = fc;
            fc = fa;
        }
        let tol1 = 2.0 * f64::EPSILON * b.abs() + 0.5 * xtol;
        let xm = 0.5 * (c - b);
        if xm.abs() <= tol1 || fb == 0.0 {
            return Ok((b, fb, iter));
        }
        if iter == MAX_ITERATIONS {
            break;
        }
        if e.abs() >= tol1 && fa.abs() > fb.abs() {
            let s = fb / fa;
            let (mut p, mut q);
            if a == c {
                p = 2.0 * xm * s;
                q = 1.0 - s;
            } else {
                let q0 = fa / fc;
                let r = fb / fc;
                p = s * (2.0 * xm * q0 * (q0 - r) - (b - a) * (r - 1.0));
                q = (q0 - 1.0) * (r - 1.0) * (s - 1.0);
            }
            if p > 0.0 {
                q = -q;
            }
            p = p.abs();
            let min1 = 3.0 * xm * q - (tol1 * q).abs();
            let min2 = (e * q).abs();
            if 2.0 * p < min1.min(min2) {
                e = d;
                d = p / q;
            } else {
                d = xm;
                e = d;
            }
        } else {
            d = xm;
            e = d;
        }
        a = b;
        fa = fb;
        b += if d.abs() > tol1 { d } else { tol1.copysign(xm) };
        fb = f(b).map_err(|err| RootError::Eval(b, err))?;
    }
    Err(RootError::NotConverged(b, fb))
}

/// One point of a sweep as [`Model::run_sweep`] hands it over.
#[derive(Debug)]
pub struct SweepPoint<'a> {
    pub index: usize,
    /// The swept input's value, SI.
    pub x: f64,
    /// The shown columns' values (SI), or why the point failed.
    pub result: Result<&'a [f64], &'a str>,
    /// Whether any check of the worksheet fails at this point.
    pub check_failed: bool,
}

/// What a whole sweep did.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct SweepSummary {
    pub points: usize,
    /// Points that could not be evaluated.
    pub failed: usize,
    /// Points where a check failed.
    pub check_failed: usize,
}

fn shown_text(display: &DisplayUnit, dim: Dim, si: f64) -> String {
    let (v, u) = crate::report::shown(display, dim, si);
    let v = units::format_sig(v, 6);
    if u.is_empty() { v } else { format!("{v} {u}") }
}

impl Model {
    /// The worksheet's cases, in file order.
    pub fn cases(&self) -> &[CaseDef] {
        &self.checked.whatif.cases
    }

    /// The worksheet's sweeps, in file order.
    pub fn sweeps(&self) -> &[SweepDef] {
        &self.checked.whatif.sweeps
    }

    /// The worksheet's finds, in solving order.
    pub fn finds(&self) -> &[FindDef] {
        &self.checked.whatif.finds
    }

    /// How input `node` was found, when a `find` solves it (after
    /// [`Model::evaluate`]).
    pub fn found(&self, node: usize) -> Option<&Found> {
        self.found.get(node).and_then(|f| f.as_ref())
    }

    /// The find that solves input `node`, if any.
    pub fn find_of(&self, node: usize) -> Option<&FindDef> {
        self.checked.whatif.finds.iter().find(|f| f.input == node)
    }

    /// Set the inputs of case `name` (recorded as overridden by the case).
    /// Call [`Model::evaluate`] afterwards.
    pub fn apply_case(&mut self, name: &str) -> Result<(), String> {
        let Some(case) = self.checked.whatif.cases.iter().find(|c| c.name == name) else {
            let names: Vec<&str> = self.cases().iter().map(|c| c.name.as_str()).collect();
            return Err(if names.is_empty() {
                format!("no case named `{name}`: the worksheet has no cases")
            } else {
                format!(
                    "no case named `{name}`; the cases are: {}",
                    names.join(", ")
                )
            });
        };
        let settings = case.settings.clone();
        for s in settings {
            self.set_input_node(s.input, s.si_value);
            self.overrides[s.input] = Some(crate::model::Override {
                si_value: s.si_value,
                text: s.text.clone(),
                source: OverrideSource::Case(name.to_string()),
            });
        }
        Ok(())
    }

    /// Solve every `find` whose inputs may have changed, in order. Called
    /// by [`Model::evaluate`]. A find that fails leaves its input failed
    /// (a located diagnostic), so what depends on it is skipped.
    pub(crate) fn solve_finds(&mut self) {
        if !self.finds_dirty || self.checked.whatif.finds.is_empty() {
            return;
        }
        self.finds_dirty = false;
        for k in 0..self.checked.whatif.finds.len() {
            let x = self.checked.whatif.finds[k].input;
            self.found[x] = None;
            match self.solve_find(k) {
                Ok(found) => {
                    self.found[x] = Some(found);
                }
                Err(d) => {
                    self.dirty[x] = false;
                    graph_mark(self, x);
                    self.dirty[x] = false;
                    self.values[x] = Value::Absent;
                    self.status[x] = Status::Failed(d);
                }
            }
        }
    }

    /// Evaluate the trial value `x` of find `k`: LEFT and RIGHT (SI).
    fn find_sides(&mut self, k: usize, x: f64) -> Result<(f64, f64), String> {
        let f = &self.checked.whatif.finds[k];
        let input = f.input;
        // A trial value: not an input change (the finds stay solved).
        self.checked.nodes[input].code = Code::Const(x);
        crate::graph::mark_downstream(&self.users, input, &mut self.dirty);
        let plan = std::mem::take(&mut self.checked.whatif.finds[k].plan);
        for &i in &plan {
            if self.dirty[i] {
                self.eval_node(i);
            }
        }
        self.checked.whatif.finds[k].plan = plan;
        let f = &self.checked.whatif.finds[k];
        for &i in &f.plan {
            if let Status::Failed(d) = &self.status[i] {
                return Err(d.message.clone());
            }
        }
        let mut w = Vec::new();
        let side = |c: &Code, w: &mut Vec<Diagnostic>| {
            eval::eval(c, &self.values, f.condition_span, w)
                .map_err(|e| e.message)
                .and_then(|v| {
                    v.as_num()
                        .ok_or_else(|| "a value it depends on failed".to_string())
                })
        };
        let l = side(&f.left, &mut w)?;
        let r = side(&f.right, &mut w)?;
        Ok((l, r))
    }

    fn solve_find(&mut self, k: usize) -> Result<Found, Diagnostic> {
        let f = &self.checked.whatif.finds[k];
        let (lo, hi, span, name) = (f.low, f.high, f.span, f.input_name.clone());
        let at = |m: &Model, x: f64| {
            let f = &m.checked.whatif.finds[k];
            shown_text(&f.input_display, f.input_dim, x)
        };
        let sides = |m: &Model, l: f64, r: f64| {
            let f = &m.checked.whatif.finds[k];
            let (rv, ru) = units::auto_display(f.dim, l - r);
            let ru = if ru.is_empty() { ru } else { format!(" {ru}") };
            format!(
                "{} vs {} (residual {}{ru})",
                shown_text(&f.side_display, f.dim, l),
                shown_text(&f.side_display, f.dim, r),
                units::format_sig(rv, 4)
            )
        };
        let mut ends = Vec::new();
        for x in [lo, hi] {
            match self.find_sides(k, x) {
                Ok(s) => ends.push(s),
                Err(m) => {
                    return Err(Diagnostic::error(
                        format!(
                            "find `{name}`: cannot evaluate the condition at {name} = {}: {m}",
                            at(self, x)
                        ),
                        span,
                    ));
                }
            }
        }
        let (fa, fb) = (ends[0].0 - ends[0].1, ends[1].0 - ends[1].1);
        if (fa > 0.0 && fb > 0.0) || (fa < 0.0 && fb < 0.0) {
            return Err(Diagnostic::error(
                format!(
                    "find `{name}`: the two sides do not cross between {} and {}: at {name} = {} they are {}; at {name} = {} they are {}",
                    at(self, lo),
                    at(self, hi),
                    at(self, lo),
                    sides(self, ends[0].0, ends[0].1),
                    at(self, hi),
                    sides(self, ends[1].0, ends[1].1)
                ),
                span,
            )
            .with_note("help: widen the bracket `in LOW .. HIGH` so that the difference of the two sides changes sign in it"));
        }
        let xtol = XTOL_REL * (hi - lo).abs();
        let mut last = (0.0, 0.0);
        let result = brent(
            |x| {
                let (l, r) = self.find_sides(k, x)?;
                last = (l, r);
                Ok::<f64, String>(l - r)
            },
            lo,
            hi,
            fa,
            fb,
            xtol,
        );
        match result {
            Ok((x, res, iterations)) => {
                // Leave the model at the found value.
                let _ = self.find_sides(k, x);
                Ok(Found {
                    find: k,
                    low: lo,
                    high: hi,
                    iterations,
                    residual: res,
                })
            }
            Err(RootError::Eval(x, m)) => Err(Diagnostic::error(
                format!(
                    "find `{name}`: cannot evaluate the condition at {name} = {}: {m}",
                    at(self, x)
                ),
                span,
            )),
            Err(RootError::NotConverged(x, _)) => Err(Diagnostic::error(
                format!(
                    "find `{name}`: no convergence after {MAX_ITERATIONS} steps; last value {name} = {}, where the two sides are {}",
                    at(self, x),
                    sides(self, last.0, last.1)
                ),
                span,
            )
            .with_note("help: the condition may jump (an `if`) or be flat; narrow the bracket")),
        }
    }

    /// Run sweep `k`: for each point, `on_point` receives the shown values
    /// (SI) or why the point failed. The model is left as it was (its
    /// inputs and values restored). Only what depends on the swept input
    /// is re-evaluated; without `find`s this is a straight-line pass over
    /// those nodes on a copy of the values.
    pub fn run_sweep(
        &mut self,
        k: usize,
        mut on_point: impl FnMut(&SweepPoint),
    ) -> Result<SweepSummary, String> {
        let Some(sweep) = self.checked.whatif.sweeps.get(k).cloned() else {
            return Err(format!("no sweep number {k}"));
        };
        self.evaluate();
        let mut summary = SweepSummary::default();
        let mut row = vec![0.0; sweep.show.len()];
        let x_node = sweep.input;
        let base_code = self.checked.nodes[x_node].code.clone();
        let base_override = self.overrides[x_node].clone();
        let nodes = &self.checked.nodes;
        let checks: Vec<usize> = (0..nodes.len())
            .filter(|&i| nodes[i].kind == crate::check::NodeKind::Check)
            .collect();
        if self.checked.whatif.finds.is_empty() {
            // Straight-line program: the swept input's dependents that a
            // shown column or a check needs, in evaluation order.
            let n = nodes.len();
            let mut down = vec![false; n];
            down[x_node] = true;
            for &i in &self.checked.order {
                if !down[i] && nodes[i].deps.iter().any(|&d| down[d]) {
                    down[i] = true;
                }
            }
            let mut need = vec![false; n];
            let mut stack: Vec<usize> = sweep.show.iter().map(|c| c.node).collect();
            stack.extend(checks.iter().copied());
            while let Some(i) = stack.pop() {
                if need[i] || !down[i] {
                    continue;
                }
                need[i] = true;
                stack.extend(nodes[i].deps.iter().copied());
            }
            let prog: Vec<usize> = self
                .checked
                .order
                .iter()
                .copied()
                .filter(|&i| need[i] && i != x_node)
                .collect();
            let fixed_check_failed = checks
                .iter()
                .any(|&c| !down[c] && matches!(self.values[c], Value::Bool(false)));
            let mut values = self.values.clone();
            let mut ok: Vec<bool> = self
                .status
                .iter()
                .map(|s| matches!(s, Status::Ok))
                .collect();
            // Plain arithmetic nodes run as stack programs on f64; the
            // rest (calls, states, conditions) through the evaluator.
            let numeric: Vec<bool> = nodes
                .iter()
                .map(|n| matches!(n.ty, crate::types::Ty::Num(_)))
                .collect();
            let mut nums: Vec<f64> = values.iter().map(|v| v.as_num().unwrap_or(0.0)).collect();
            let ops: Vec<Option<Vec<Op>>> = prog
                .iter()
                .map(|&i| {
                    let mut out = Vec::new();
                    (numeric[i] && compile_ops(&nodes[i].code, &numeric, &mut out)).then_some(out)
                })
                .collect();
            let mut stack: Vec<f64> = Vec::with_capacity(16);
            let mut w = Vec::new();
            let mut message = String::new();
            for (index, &x) in sweep.points.iter().enumerate() {
                values[x_node] = Value::Num(x);
                nums[x_node] = x;
                ok[x_node] = true;
                let mut failed = false;
                message.clear();
                for (k, &i) in prog.iter().enumerate() {
                    let node = &nodes[i];
                    if !node.deps.iter().all(|&d| ok[d]) {
                        ok[i] = false;
                        continue;
                    }
                    if let Some(ops) = &ops[k]
                        && let Some(r) = run_ops(ops, &nums, &mut stack)
                    {
                        nums[i] = r;
                        values[i] = Value::Num(r);
                        ok[i] = true;
                        continue;
                    }
                    w.clear();
                    match eval::eval(&node.code, &values, node.expr_span, &mut w) {
                        Ok(v) => {
                            if let Value::Num(r) = v {
                                nums[i] = r;
                            }
                            values[i] = v;
                            ok[i] = true;
                        }
                        Err(e) => {
                            ok[i] = false;
                            if !failed {
                                failed = true;
                                message = failure_text(node, &e.message);
                            }
                        }
                    }
                }
                let mut complete = true;
                for (c, col) in sweep.show.iter().enumerate() {
                    match (ok[col.node], col.value_in(&values)) {
                        (true, Some(v)) => row[c] = v,
                        _ => complete = false,
                    }
                }
                if !complete && message.is_empty() {
                    message = first_failure(self, &ok);
                }
                let check_failed = fixed_check_failed
                    || checks
                        .iter()
                        .any(|&c| down[c] && ok[c] && matches!(values[c], Value::Bool(false)));
                summary.points += 1;
                summary.check_failed += usize::from(check_failed);
                let result = if complete && !failed {
                    Ok(&row[..])
                } else {
                    summary.failed += 1;
                    Err(message.as_str())
                };
                on_point(&SweepPoint {
                    index,
                    x,
                    result,
                    check_failed,
                });
            }
            return Ok(summary);
        }
        // With finds: every point solves them again (Model::evaluate).
        let mut message = String::new();
        for (index, &x) in sweep.points.iter().enumerate() {
            self.set_input_node(x_node, x);
            self.evaluate();
            let ok: Vec<bool> = self
                .status
                .iter()
                .map(|s| matches!(s, Status::Ok))
                .collect();
            let errors = self.runtime_errors();
            let mut complete = errors.is_empty();
            for (c, col) in sweep.show.iter().enumerate() {
                match (ok[col.node], col.value_in(&self.values)) {
                    (true, Some(v)) => row[c] = v,
                    _ => complete = false,
                }
            }
            message = errors
                .first()
                .map_or_else(String::new, |d| d.message.clone());
            if !complete && message.is_empty() {
                message = first_failure(self, &ok);
            }
            let check_failed = checks
                .iter()
                .any(|&c| matches!(self.values[c], Value::Bool(false)));
            summary.points += 1;
            summary.check_failed += usize::from(check_failed);
            let result = if complete {
                Ok(&row[..])
            } else {
                summary.failed += 1;
                Err(message.as_str())
            };
            on_point(&SweepPoint {
                index,
                x,
                result,
                check_failed,
            });
        }
        let _ = message;
        // Restore the input as it was.
        if let Code::Const(v) = base_code {
            self.set_input_node(x_node, v);
        }
        self.overrides[x_node] = base_override;
        self.evaluate();
        Ok(summary)
    }
}

/// One step of a stack program over f64 (plain arithmetic only).
#[derive(Clone, Copy, Debug)]
enum Op {
    Const(f64),
    Slot(usize),
    Neg,
    Add,
    Sub,
    Mul,
    Div,
    Pow,
}

/// Compile plain arithmetic on numbers to a stack program, operands in
/// the evaluator's order (so results are bit for bit the same); false
/// for anything else.
fn compile_ops(code: &Code, numeric: &[bool], out: &mut Vec<Op>) -> bool {
    let bin = |a: &Code, b: &Code, op: Op, out: &mut Vec<Op>| {
        if compile_ops(a, numeric, out) && compile_ops(b, numeric, out) {
            out.push(op);
            true
        } else {
            false
        }
    };
    match code {
        Code::Const(x) => {
            out.push(Op::Const(*x));
            true
        }
        Code::Slot(i) if numeric.get(*i).copied().unwrap_or(false) => {
            out.push(Op::Slot(*i));
            true
        }
        Code::Neg(a) => {
            let ok = compile_ops(a, numeric, out);
            out.push(Op::Neg);
            ok
        }
        Code::Add(a, b) => bin(a, b, Op::Add, out),
        Code::Sub(a, b) => bin(a, b, Op::Sub, out),
        Code::Mul(a, b) => bin(a, b, Op::Mul, out),
        Code::Div(a, b, _) => bin(a, b, Op::Div, out),
        Code::Pow(a, b, _) => bin(a, b, Op::Pow, out),
        _ => false,
    }
}

/// Run a stack program; None when the evaluator would report an error
/// (division by zero, a power or result that is not finite), which the
/// caller then gets, worded, from the evaluator.
fn run_ops(ops: &[Op], nums: &[f64], stack: &mut Vec<f64>) -> Option<f64> {
    stack.clear();
    for op in ops {
        let v = match *op {
            Op::Const(x) => x,
            Op::Slot(i) => *nums.get(i)?,
            Op::Neg => -stack.pop()?,
            _ => {
                let b = stack.pop()?;
                let a = stack.pop()?;
                match *op {
                    Op::Add => a + b,
                    Op::Sub => a - b,
                    Op::Mul => a * b,
                    Op::Div if b == 0.0 => return None,
                    Op::Div => a / b,
                    _ => {
                        let r = a.powf(b);
                        if !r.is_finite() {
                            return None;
                        }
                        r
                    }
                }
            }
        };
        stack.push(v);
    }
    let r = stack.pop()?;
    r.is_finite().then_some(r)
}

fn graph_mark(m: &mut Model, x: usize) {
    crate::graph::mark_downstream(&m.users, x, &mut m.dirty);
}

fn failure_text(node: &crate::check::Node, message: &str) -> String {
    match &node.name {
        Some(n) => format!("cannot evaluate `{}`: {message}", n.name),
        None => format!("cannot evaluate a check: {message}"),
    }
}

/// Why a point has no value when no node of its own pass failed: a node
/// that failed in the base evaluation.
fn first_failure(m: &Model, ok: &[bool]) -> String {
    for &i in m.order() {
        if !ok[i]
            && let Status::Failed(d) = m.status(i)
        {
            return d.message.clone();
        }
    }
    "a shown value could not be evaluated".to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn step_points_include_the_end_within_a_tolerance() {
        assert_eq!(
            step_points(0.0, 1.0, 0.25).unwrap(),
            vec![0.0, 0.25, 0.5, 0.75, 1.0]
        );
        // 0.7 + 4*0.05 = 0.9000000000000001 in floating point: the end is taken as written.
        let p = step_points(0.7, 0.9, 0.05).unwrap();
        assert_eq!(p.len(), 5);
        assert_eq!(p[4], 0.9);
        // The end is not a point: stop before it.
        assert_eq!(step_points(0.0, 1.0, 0.3).unwrap().len(), 4);
        // Downwards.
        assert_eq!(
            step_points(10.0, 4.0, -2.0).unwrap(),
            vec![10.0, 8.0, 6.0, 4.0]
        );
        assert!(step_points(0.0, 1.0, -0.1).is_err());
        assert!(step_points(0.0, 1.0, 0.0).is_err());
        assert_eq!(step_points(2.0, 2.0, 1.0).unwrap(), vec![2.0]);
    }

    #[test]
    fn count_points_are_inclusive() {
        assert_eq!(
            count_points(1.0, 2.0, 5).unwrap(),
            vec![1.0, 1.25, 1.5, 1.75, 2.0]
        );
        assert!(count_points(1.0, 2.0, 1).is_err());
    }

    #[test]
    fn brent_finds_roots_to_the_stated_tolerance() {
        // x^3 - 2x - 5 = 0 has its real root at 2.0945514815423265 (the
        // classic test equation; value from the cubic formula, checked by
        // substitution below).
        let f = |x: f64| Ok::<f64, ()>(x * x * x - 2.0 * x - 5.0);
        let (x, r, n) = brent(f, 2.0, 3.0, f(2.0).unwrap(), f(3.0).unwrap(), 1e-13).unwrap();
        assert!((x - 2.094_551_481_542_326_5).abs() < 1e-12, "{x}");
        assert!(r.abs() < 1e-10);
        assert!(n < 15, "{n} steps");
        // sqrt(2) from x^2 - 2, bracket reversed.
        let g = |x: f64| Ok::<f64, ()>(x * x - 2.0);
        let (x, _, _) = brent(g, 3.0, 0.0, 7.0, -2.0, 3e-13).unwrap();
        assert!((x - std::f64::consts::SQRT_2).abs() < 1e-12);
        // A step function: converges to the jump.
        let h = |x: f64| Ok::<f64, ()>(if x < 0.3 { -1.0 } else { 1.0 });
        let (x, _, _) = brent(h, 0.0, 1.0, -1.0, 1.0, 1e-13).unwrap();
        assert!((x - 0.3).abs() < 1e-12);
    }
}
