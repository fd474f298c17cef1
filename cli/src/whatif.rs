//! `sheaf run --cases` and `sheaf sweep`: renderers of cases side by side
//! and of sweep tables (text, json, Markdown, csv).

use std::io::IsTerminal;
use std::time::{Duration, Instant};

use serde::Serialize;
use sheaf_engine::Model;
use sheaf_engine::report::{QuantityRow, Report};
use sheaf_engine::units::format_sig;
use sheaf_engine::whatif::SweepDef;

use crate::render::{self, md_code, md_escape, pad, t, value_text};
use crate::{EXIT_CHECK_FAILED, EXIT_ERRORS, EXIT_USAGE, Format, diagnostics};

pub const SWEEP_HELP: &str = "Examples:\n  sheaf sweep worksheets/plant_air_whatif.sheaf\n  \
sheaf sweep worksheets/plant_air_whatif.sheaf --format csv > sweep.csv\n  \
sheaf sweep worksheets/plant_air_whatif.sheaf --case hot_day --format json\n\n\
Runs every `sweep INPUT from A to B step D show ...` of the worksheet. A point that cannot be \
evaluated is reported with its message and the other points still run.\n\n\
Exit status: 0 fine; 1 errors, or a point could not be evaluated; 2 usage or file error; 3 a \
check failed at some point.";

/// Output formats of `sweep`.
#[derive(Clone, Copy, clap::ValueEnum, PartialEq)]
pub enum SweepFormat {
    Text,
    Json,
    Md,
    Csv,
}

/// One evaluated case: its name, description and report.
struct CaseRun {
    name: String,
    description: String,
    report: Report,
    errors: bool,
}

/// `sheaf run FILE --cases`: the worksheet as written (`base`) and every
/// case, side by side.
pub fn cmd_cases(name: &str, model: &Model, format: Format, sig: usize) -> u8 {
    let mut runs = Vec::new();
    let mut base = model.clone();
    base.evaluate();
    let emit = |m: &Model, case: &str| {
        let errors = m.runtime_errors();
        if !errors.is_empty() {
            eprintln!("in case `{case}`:");
            diagnostics::emit(name, m.source(), &errors);
        }
        !errors.is_empty()
    };
    runs.push(CaseRun {
        name: "base".into(),
        description: "the worksheet as written".into(),
        errors: emit(&base, "base"),
        report: base.report(),
    });
    for c in model.cases() {
        let mut m = model.clone();
        if let Err(e) = m.apply_case(&c.name) {
            eprintln!("error: {e}");
            return EXIT_USAGE;
        }
        m.evaluate();
        runs.push(CaseRun {
            name: c.name.clone(),
            description: c.description.clone().unwrap_or_default(),
            errors: emit(&m, &c.name),
            report: m.report(),
        });
    }
    match format {
        Format::Json => {
            /// One case of the json output (keys in alphabetical order).
            #[derive(Serialize)]
            struct JsonCase<'a, Q, C> {
                checks: C,
                description: &'a str,
                name: &'a str,
                quantities: Q,
            }
            /// The json output of `--cases`.
            #[derive(Serialize)]
            struct JsonCases<C> {
                cases: C,
                title: String,
                warnings: Vec<String>,
            }
            let mut warnings: Vec<String> = Vec::new();
            for r in &runs {
                for w in r.report.warnings.iter().map(|w| w.to_string()) {
                    let w = format!("case {}: {w}", r.name);
                    if !warnings.contains(&w) {
                        warnings.push(w);
                    }
                }
            }
            let runs = &runs;
            crate::out_json(
                &JsonCases {
                    cases: render::Seq(move || {
                        runs.iter().map(|r| JsonCase {
                            checks: render::json_checks(&r.report),
                            description: &r.description,
                            name: &r.name,
                            quantities: render::json_quantities(&r.report),
                        })
                    }),
                    title: runs[0].report.title.clone().unwrap_or_default(),
                    warnings,
                },
                true,
            );
        }
        Format::Text => out!("{}", cases_table(&runs, name, sig, false)),
        Format::Md => out!("{}", cases_table(&runs, name, sig, true)),
        Format::Html => {
            eprintln!("error: --cases prints text, md or json (html is for one case)");
            return EXIT_USAGE;
        }
    }
    if runs.iter().any(|r| r.errors) {
        EXIT_ERRORS
    } else if runs
        .iter()
        .any(|r| r.report.checks.iter().any(|c| c.passed == Some(false)))
    {
        EXIT_CHECK_FAILED
    } else {
        0
    }
}

fn rows(r: &Report) -> Vec<&QuantityRow> {
    r.blocks
        .iter()
        .filter_map(|b| match b {
            sheaf_engine::report::Block::Quantity(q) => Some(q.as_ref()),
            _ => None,
        })
        .flat_map(|q| q.flatten())
        .collect()
}

/// One column per case; an input that differs from the base is marked `*`,
/// a failed check `FAIL`.
fn cases_table(runs: &[CaseRun], file: &str, sig: usize, md: bool) -> String {
    let base = &runs[0].report;
    let title = base.title.clone().unwrap_or_else(|| file.to_string());
    let cols: Vec<Vec<&QuantityRow>> = runs.iter().map(|r| rows(&r.report)).collect();
    let cell = |q: &QuantityRow, b: &QuantityRow| {
        // Automatic units may pick another prefix per case: show every
        // case in the base's unit.
        let v = match (q.si_value, b.si_value, b.value) {
            (Some(x), Some(bs), Some(bv)) if q.unit != b.unit && bs != 0.0 => {
                format_sig(x * (bv / bs), sig)
            }
            _ => value_text(q, sig),
        };
        let differs = q.kind == "input" && q.si_value != b.si_value;
        if differs { format!("{v} *") } else { v }
    };
    let mut table: Vec<Vec<String>> = Vec::new();
    let mut head = vec!["quantity".to_string(), "unit".to_string()];
    head.extend(runs.iter().map(|r| r.name.clone()));
    for (k, b) in cols[0].iter().enumerate() {
        let mut line = vec![b.name.clone(), b.unit.clone()];
        for c in &cols {
            line.push(c.get(k).map_or(String::new(), |q| cell(q, b)));
        }
        table.push(line);
    }
    let mut checks: Vec<Vec<String>> = Vec::new();
    for (k, c) in base.checks.iter().enumerate() {
        let mut line = vec![format!("check {}", c.text), String::new()];
        for r in runs {
            line.push(
                match r.report.checks.get(k).and_then(|c| c.passed) {
                    Some(true) => "pass",
                    Some(false) => "FAIL",
                    None => "----",
                }
                .to_string(),
            );
        }
        checks.push(line);
    }
    let mut out = String::new();
    if md {
        out.push_str(&format!("# {} — cases\n\n", md_escape(&title)));
        out.push_str(&format!("Worksheet: {}\n\n", md_code(file)));
        for r in &runs[1..] {
            out.push_str(&format!(
                "- {}: {}\n",
                md_code(&r.name),
                md_escape(&r.description)
            ));
        }
        out.push('\n');
        let esc: Vec<String> = head.iter().map(|h| md_escape(h)).collect();
        out.push_str(&format!("| {} |\n", esc.join(" | ")));
        out.push_str(&format!("|---|---|{}\n", "---:|".repeat(runs.len())));
        for (k, line) in table.iter().chain(checks.iter()).enumerate() {
            let first = if k < table.len() {
                md_code(&line[0])
            } else {
                md_escape(&line[0])
            };
            let rest: Vec<String> = line[1..].iter().map(|c| md_escape(c)).collect();
            out.push_str(&format!("| {first} | {} |\n", rest.join(" | ")));
        }
        out.push_str("\n`*` an input set by the case (differs from base).\n\n");
        out.push_str(&format!("*{}*\n", sheaf_engine::CAUTION));
        return out;
    }
    out.push_str(&format!("{} — cases\n", t(&title)));
    out.push_str(&format!("worksheet {}\n", t(file)));
    for r in &runs[1..] {
        out.push_str(&format!("  {}: {}\n", t(&r.name), t(&r.description)));
    }
    out.push('\n');
    let all: Vec<&Vec<String>> = std::iter::once(&head)
        .chain(table.iter())
        .chain(checks.iter())
        .collect();
    let ncol = head.len();
    let widths: Vec<usize> = (0..ncol)
        .map(|c| {
            all.iter()
                .filter(|l| !(c == 0 && l[0].starts_with("check ")))
                .map(|l| t(&l[c]).chars().count())
                .max()
                .unwrap_or(4)
                .min(40)
        })
        .collect();
    let fmt_line = |l: &Vec<String>| {
        let mut s = String::from("  ");
        for (c, x) in l.iter().enumerate() {
            let x = t(x);
            if c >= 2 {
                let w = widths[c];
                s.push_str(&format!("{x:>w$}  "));
            } else {
                s.push_str(&pad(&x, widths[c]));
                s.push_str("  ");
            }
        }
        s.trim_end().to_string()
    };
    out.push_str(&fmt_line(&head));
    out.push('\n');
    for l in &table {
        out.push_str(&fmt_line(l));
        out.push('\n');
    }
    if !checks.is_empty() {
        out.push_str("\n  checks\n");
        for l in &checks {
            out.push_str(&format!("  {}\n", t(&l[0])));
            let mut s = format!("  {}", pad("", widths[0] + widths[1] + 2));
            for (c, x) in l.iter().enumerate().skip(2) {
                let w = widths[c];
                s.push_str(&format!("  {x:>w$}"));
            }
            out.push_str(s.trim_end());
            out.push('\n');
        }
    }
    out.push_str("\n  * an input set by the case (differs from base)\n\n");
    out.push_str(&format!("{}\n", sheaf_engine::CAUTION));
    out
}

/// Column heading `name [unit]`.
fn heading(name: &str, unit: &str) -> String {
    if unit.is_empty() {
        name.to_string()
    } else {
        format!("{name} [{unit}]")
    }
}

/// A sweep's input and column units (fixed display units, else the SI
/// unit: a column has one unit for every point).
fn sweep_units(model: &Model, s: &SweepDef) -> (String, Vec<(f64, f64, String)>) {
    use sheaf_engine::check::DisplayUnit;
    let conv = |d: &DisplayUnit, dim| match d {
        DisplayUnit::Fixed { unit, text } => (unit.factor, unit.offset, text.clone()),
        DisplayUnit::Auto => (1.0, 0.0, sheaf_engine::units::si_unit(dim)),
    };
    let node = &model.nodes()[s.input];
    let dim = match node.ty {
        sheaf_engine::types::Ty::Num(q) => q.dim,
        _ => sheaf_engine::units::Dim::NONE,
    };
    let mut v = vec![conv(&node.display, dim)];
    v.extend(s.show.iter().map(|c| conv(&c.display, c.dim)));
    (v[0].2.clone(), v)
}

/// Progress on stderr (only when it is a terminal and the sweep runs
/// longer than a second).
struct Progress {
    on: bool,
    start: Instant,
    last: Instant,
    shown: bool,
}

impl Progress {
    fn new() -> Progress {
        let now = Instant::now();
        Progress {
            on: std::io::stderr().is_terminal(),
            start: now,
            last: now,
            shown: false,
        }
    }
    fn tick(&mut self, label: &str, done: usize, total: usize) {
        if !self.on || !done.is_multiple_of(1024) {
            return;
        }
        let now = Instant::now();
        if now - self.start > Duration::from_secs(1) && now - self.last > Duration::from_millis(200)
        {
            self.last = now;
            self.shown = true;
            eprint!("\r{label}: {done}/{total} points");
        }
    }
    fn done(&mut self) {
        if self.shown {
            eprintln!();
            self.shown = false;
        }
        self.start = Instant::now();
    }
}

/// `sheaf sweep FILE`.
pub fn cmd_sweep(name: &str, mut model: Model, format: SweepFormat, sig: usize) -> u8 {
    model.evaluate();
    let base_errors = model.runtime_errors();
    if model.sweeps().is_empty() {
        eprintln!("error: {name} has no `sweep` statement");
        return EXIT_USAGE;
    }
    let mut any_failed = false;
    let mut any_check = false;
    let mut json_sweeps: Vec<JsonSweep> = Vec::new();
    let mut text = String::new();
    let mut progress = Progress::new();
    let flush = |buf: &mut String| {
        out!("{buf}");
        buf.clear();
    };
    for k in 0..model.sweeps().len() {
        let s = model.sweeps()[k].clone();
        let input_name = model.nodes()[s.input]
            .name
            .as_ref()
            .map_or(String::new(), |n| n.name.clone());
        let (unit, conv) = sweep_units(&model, &s);
        let total = s.points.len();
        let label = format!("sweep {input_name}");
        let show = |x: f64, c: usize| (x - conv[c].1) / conv[c].0;
        let mut values: Vec<f64> = Vec::new();
        let mut columns: Vec<Vec<Option<f64>>> = vec![Vec::new(); s.show.len()];
        let mut failed: Vec<(usize, String)> = Vec::new();
        let mut buf = String::new();
        match format {
            SweepFormat::Csv => {
                if k > 0 {
                    buf.push('\n');
                }
                let mut h = vec![csv_field(&heading(&input_name, &unit))];
                h.extend(
                    s.show
                        .iter()
                        .enumerate()
                        .map(|(c, col)| csv_field(&heading(&col.name, &conv[c + 1].2))),
                );
                buf.push_str(&h.join(","));
                buf.push('\n');
            }
            SweepFormat::Text | SweepFormat::Md => {}
            SweepFormat::Json => {}
        }
        let result = model.run_sweep(k, |p| {
            use std::fmt::Write as _;
            match format {
                SweepFormat::Csv => {
                    let _ = write!(buf, "{}", show(p.x, 0));
                    match p.result {
                        Ok(vals) => {
                            for (c, v) in vals.iter().enumerate() {
                                let _ = write!(buf, ",{}", show(*v, c + 1));
                            }
                        }
                        Err(_) => {
                            for _ in 0..s.show.len() {
                                buf.push(',');
                            }
                        }
                    }
                    buf.push('\n');
                    if buf.len() > 1 << 16 {
                        flush(&mut buf);
                    }
                }
                _ => {
                    values.push(show(p.x, 0));
                    for (c, col) in columns.iter_mut().enumerate() {
                        col.push(p.result.ok().map(|v| show(v[c], c + 1)));
                    }
                }
            }
            if let Err(m) = p.result {
                failed.push((p.index, m.to_string()));
            }
            any_check |= p.check_failed;
            progress.tick(&label, p.index + 1, total);
        });
        progress.done();
        if let Err(e) = result {
            eprintln!("error: {e}");
            return EXIT_USAGE;
        }
        any_failed |= !failed.is_empty();
        for (i, m) in &failed {
            eprintln!(
                "{name}: sweep of `{input_name}`, point {} ({input_name} = {} {unit}): {m}",
                i + 1,
                format_sig(show(s.points[*i], 0), 10)
            );
        }
        match format {
            SweepFormat::Csv => flush(&mut buf),
            SweepFormat::Json => {
                json_sweeps.push(JsonSweep {
                    columns: s
                        .show
                        .iter()
                        .zip(std::mem::take(&mut columns))
                        .enumerate()
                        .map(|(c, (col, values))| JsonSweepColumn {
                            name: col.name.clone(),
                            unit: conv[c + 1].2.clone(),
                            values,
                        })
                        .collect(),
                    description: s.description.clone().unwrap_or_default(),
                    failed: failed
                        .iter()
                        .map(|(i, m)| JsonFailed {
                            index: *i,
                            message: m.clone(),
                        })
                        .collect(),
                    input: input_name.clone(),
                    unit: unit.clone(),
                    values: std::mem::take(&mut values),
                });
            }
            SweepFormat::Text | SweepFormat::Md => {
                let md = format == SweepFormat::Md;
                let mut head = vec![heading(&input_name, &unit)];
                head.extend(
                    s.show
                        .iter()
                        .enumerate()
                        .map(|(c, col)| heading(&col.name, &conv[c + 1].2)),
                );
                let mut lines: Vec<Vec<String>> = Vec::new();
                for (i, x) in values.iter().enumerate() {
                    let mut l = vec![format_sig(*x, sig)];
                    for col in &columns {
                        l.push(col[i].map_or("failed".to_string(), |v| format_sig(v, sig)));
                    }
                    lines.push(l);
                }
                let desc = s
                    .description
                    .as_ref()
                    .map(|d| format!(": {d}"))
                    .unwrap_or_default();
                if md {
                    text.push_str(&format!(
                        "## Sweep of {}{}\n\n",
                        md_code(&input_name),
                        md_escape(&desc)
                    ));
                    let esc: Vec<String> = head.iter().map(|h| md_escape(h)).collect();
                    text.push_str(&format!("| {} |\n", esc.join(" | ")));
                    text.push_str(&format!("|{}\n", "---:|".repeat(head.len())));
                    for l in &lines {
                        text.push_str(&format!("| {} |\n", l.join(" | ")));
                    }
                    text.push('\n');
                    for (i, m) in &failed {
                        text.push_str(&format!("- point {}: {}\n", i + 1, md_escape(m)));
                    }
                    if !failed.is_empty() {
                        text.push('\n');
                    }
                } else {
                    text.push_str(&format!("sweep of {}{}\n", t(&input_name), t(&desc)));
                    let w: Vec<usize> = (0..head.len())
                        .map(|c| {
                            std::iter::once(&head)
                                .chain(lines.iter())
                                .map(|l| t(&l[c]).chars().count())
                                .max()
                                .unwrap_or(4)
                        })
                        .collect();
                    for l in std::iter::once(&head).chain(lines.iter()) {
                        let cells: Vec<String> = l
                            .iter()
                            .enumerate()
                            .map(|(c, x)| format!("{:>w$}", t(x), w = w[c]))
                            .collect();
                        text.push_str(&format!("  {}\n", cells.join("  ")));
                    }
                    for (i, m) in &failed {
                        text.push_str(&format!("  point {}: {}\n", i + 1, t(m)));
                    }
                    text.push('\n');
                }
            }
        }
    }
    match format {
        SweepFormat::Json => {
            /// The json output of `sheaf sweep`.
            #[derive(Serialize)]
            struct JsonSweeps {
                sweeps: Vec<JsonSweep>,
            }
            crate::out_json(
                &JsonSweeps {
                    sweeps: json_sweeps,
                },
                true,
            );
        }
        SweepFormat::Text | SweepFormat::Md => out!("{text}"),
        SweepFormat::Csv => {}
    }
    if !base_errors.is_empty() && any_failed {
        diagnostics::emit(name, model.source(), &base_errors);
    }
    if any_failed {
        EXIT_ERRORS
    } else if any_check {
        EXIT_CHECK_FAILED
    } else {
        0
    }
}

/// One sweep of the json output (keys in alphabetical order).
#[derive(Serialize)]
struct JsonSweep {
    columns: Vec<JsonSweepColumn>,
    description: String,
    failed: Vec<JsonFailed>,
    input: String,
    unit: String,
    values: Vec<f64>,
}

/// A shown column of a sweep: its values (None where the point failed).
#[derive(Serialize)]
struct JsonSweepColumn {
    name: String,
    unit: String,
    values: Vec<Option<f64>>,
}

/// A point of a sweep that failed.
#[derive(Serialize)]
struct JsonFailed {
    index: usize,
    message: String,
}

/// A csv field, quoted when it holds a comma, quote or line end.
fn csv_field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}
