//! External inputs: values a worksheet takes from outside its own text.
//!
//! The engine reads no files. A worksheet's `cell("book.xlsx", "Sheet!C7")`
//! calls are listed by [`cell_requests`] (both arguments are string
//! literals, so this needs no evaluation); the caller reads the workbooks
//! — relative to the worksheet's folder, under its own file-access policy —
//! and hands the numbers in as [`Externals`] before the worksheet is
//! checked, so that a cell may even feed a constant exponent.

use std::collections::HashMap;

use sheaf_grammar::{Expr, ExprKind, Span, StatementKind, SweepPoints, Worksheet};

/// One `cell()` call of a worksheet.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct CellRequest {
    /// The workbook path as written (relative to the worksheet's folder).
    pub book: String,
    /// The cell (`Sheet!C7`) or defined name as written.
    pub reference: String,
    /// Where the call is written.
    pub span: Span,
}

/// One `use "PATH" as PREFIX` statement of a worksheet.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct UseRequest {
    /// The path as written (relative to the worksheet's folder).
    pub path: String,
    pub prefix: String,
    /// Where the path is written.
    pub span: Span,
}

/// A worksheet named by `use`, as the caller read it.
#[derive(Clone, Debug)]
pub struct UsedSource {
    /// How the file is named in messages, reports and on the package
    /// cover (e.g. `site.sheaf`).
    pub name: String,
    /// Where the caller read it (opaque to the engine; kept for the caller,
    /// e.g. to write a pulled input back there).
    pub path: String,
    pub text: String,
    /// The external inputs of the used worksheet (its own `cell()` values
    /// and `use`d worksheets).
    pub externals: Externals,
}

/// Values the caller read for a worksheet's external inputs.
#[derive(Clone, Debug, Default)]
pub struct Externals {
    cells: HashMap<(String, String), Result<f64, String>>,
    /// Whether the caller read workbooks at all (`sheaf eval` does not).
    cells_read: bool,
    used: HashMap<String, Result<UsedSource, String>>,
    /// Whether the caller read used worksheets at all.
    uses_read: bool,
}

impl Externals {
    /// No external values: `cell()` calls are errors.
    pub fn none() -> Externals {
        Externals::default()
    }

    /// Record the value of `cell(book, reference)`, or why it could not be
    /// read (a message in words, shown at the call).
    pub fn set_cell(&mut self, book: &str, reference: &str, value: Result<f64, String>) {
        self.cells_read = true;
        self.cells
            .insert((book.to_string(), reference.to_string()), value);
    }

    /// Record the worksheet read for `use "path"` (the path as written), or
    /// why it could not be read (a message in words, shown at the `use`;
    /// a cycle of `use` is such a message).
    pub fn set_used(&mut self, path: &str, source: Result<UsedSource, String>) {
        self.uses_read = true;
        self.used.insert(path.to_string(), source);
    }

    /// The worksheet recorded for `use "path"`.
    pub(crate) fn used(&self, path: &str) -> Result<&UsedSource, String> {
        match self.used.get(path) {
            Some(Ok(u)) => Ok(u),
            Some(Err(e)) => Err(e.clone()),
            None if self.uses_read => Err(format!("internal: the worksheet `{path}` was not read")),
            None => Err(
                "other worksheets can be used only when a worksheet file is run (`sheaf run`, \
                 `sheaf xlsx`), not here"
                    .to_string(),
            ),
        }
    }

    /// The value recorded for `cell(book, reference)`.
    pub(crate) fn cell(&self, book: &str, reference: &str) -> Result<f64, String> {
        match self.cells.get(&(book.to_string(), reference.to_string())) {
            Some(v) => v.clone(),
            None if self.cells_read => Err(format!(
                "internal: the workbook cell `{book}` `{reference}` was not read"
            )),
            None => Err(
                "workbook cells can be read only when a worksheet file is run (`sheaf run`, \
                 `sheaf xlsx`), not here"
                    .to_string(),
            ),
        }
    }
}

/// Every `use` statement of a worksheet, in file order.
pub fn use_requests(ws: &Worksheet) -> Vec<UseRequest> {
    ws.statements
        .iter()
        .filter_map(|s| match &s.kind {
            StatementKind::Use { path, prefix } => Some(UseRequest {
                path: path.value.clone(),
                prefix: prefix.name.clone(),
                span: path.span,
            }),
            _ => None,
        })
        .collect()
}

/// Every `cell(book, ref)` call of a worksheet whose two arguments are
/// string literals, in file order (repeats included). Calls written
/// otherwise are left to the checker, which reports them.
pub fn cell_requests(ws: &Worksheet) -> Vec<CellRequest> {
    let mut out = Vec::new();
    for stmt in &ws.statements {
        match &stmt.kind {
            StatementKind::Input { value, .. }
            | StatementKind::Define { value, .. }
            | StatementKind::Check { cond: value, .. }
            | StatementKind::Gauge { value, .. } => collect(value, &mut out),
            StatementKind::Case { settings, .. } => {
                for s in settings {
                    collect(&s.value, &mut out);
                }
            }
            StatementKind::Sweep { points, .. } => match points {
                SweepPoints::Step { from, to, step } => {
                    for e in [from, to, step] {
                        collect(e, &mut out);
                    }
                }
                SweepPoints::Count { from, to, count } => {
                    for e in [from, to, count] {
                        collect(e, &mut out);
                    }
                }
                SweepPoints::Over(values) => {
                    for e in values {
                        collect(e, &mut out);
                    }
                }
            },
            StatementKind::Find {
                low,
                high,
                left,
                right,
                ..
            } => {
                for e in [low, high, left, right] {
                    collect(e, &mut out);
                }
            }
            StatementKind::Heading { .. }
            | StatementKind::Note { .. }
            | StatementKind::Comment { .. }
            | StatementKind::Meta { .. }
            | StatementKind::Use { .. }
            | StatementKind::Blank => {}
        }
    }
    out
}

fn collect(e: &Expr, out: &mut Vec<CellRequest>) {
    // An explicit stack: expressions can be deep.
    let mut stack = vec![e];
    while let Some(e) = stack.pop() {
        match &e.kind {
            ExprKind::Call { func, args } => {
                if func.name == "cell"
                    && let [book, reference] = args.as_slice()
                    && let (ExprKind::Str(b), ExprKind::Str(r)) =
                        (&strip(&book.value).kind, &strip(&reference.value).kind)
                {
                    out.push(CellRequest {
                        book: b.clone(),
                        reference: r.clone(),
                        span: e.span,
                    });
                }
                stack.extend(args.iter().rev().map(|a| &a.value));
            }
            ExprKind::Neg(a) | ExprKind::Paren(a) | ExprKind::Not(a) => stack.push(a),
            ExprKind::Binary { left, right, .. } | ExprKind::Logic { left, right, .. } => {
                stack.push(right);
                stack.push(left);
            }
            ExprKind::Compare { first, rest } => {
                stack.extend(rest.iter().rev().map(|l| &l.operand));
                stack.push(first);
            }
            ExprKind::If {
                cond,
                then_branch,
                else_branch,
            } => {
                stack.push(else_branch);
                stack.push(then_branch);
                stack.push(cond);
            }
            ExprKind::Field { base, .. } => stack.push(base),
            ExprKind::Number { .. } | ExprKind::Str(_) | ExprKind::Name(_) => {}
        }
    }
}

fn strip(e: &Expr) -> &Expr {
    match &e.kind {
        ExprKind::Paren(a) => strip(a),
        _ => e,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cell_calls_are_listed_in_file_order() {
        let ws = sheaf_grammar::parse(
            "input a = cell(\"b.xlsx\", \"S!A1\") * 1 kPa\nx = (2 * cell(\"c.xlsx\", \"n\"))\n\
             y = cell(a, \"n\")\n",
        )
        .unwrap();
        let r = cell_requests(&ws);
        assert_eq!(r.len(), 2);
        assert_eq!(
            (r[0].book.as_str(), r[0].reference.as_str()),
            ("b.xlsx", "S!A1")
        );
        assert_eq!(
            (r[1].book.as_str(), r[1].reference.as_str()),
            ("c.xlsx", "n")
        );
    }

    #[test]
    fn values_are_looked_up_by_book_and_reference() {
        let mut x = Externals::none();
        assert!(x.cell("b.xlsx", "n").unwrap_err().contains("only when"));
        x.set_cell("b.xlsx", "n", Ok(2.5));
        x.set_cell("b.xlsx", "m", Err("no such cell".into()));
        assert_eq!(x.cell("b.xlsx", "n"), Ok(2.5));
        assert_eq!(x.cell("b.xlsx", "m"), Err("no such cell".into()));
    }
}
