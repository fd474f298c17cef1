//! Renderers of a worksheet report: text (terminal), json (tools), md.

use serde::Serialize;
use sheaf_engine::CAUTION;
use sheaf_engine::report::{Block, CheckRow, FoundRow, QuantityRow, Report, Shown, StateColumn};
use sheaf_engine::units::format_sig;

/// Terminal styles; empty strings when colour is off.
pub struct Style {
    pub bold: &'static str,
    pub dim: &'static str,
    pub input: &'static str,
    pub pass: &'static str,
    pub fail: &'static str,
    pub warn: &'static str,
    pub reset: &'static str,
}

impl Style {
    pub fn new(colour: bool) -> Style {
        if colour {
            Style {
                bold: "\x1b[1m",
                dim: "\x1b[2m",
                input: "\x1b[34m",
                pass: "\x1b[32m",
                fail: "\x1b[31;1m",
                warn: "\x1b[33m",
                reset: "\x1b[0m",
            }
        } else {
            Style {
                bold: "",
                dim: "",
                input: "",
                pass: "",
                fail: "",
                warn: "",
                reset: "",
            }
        }
    }
}

/// User-supplied text made safe for a terminal or a text file: control
/// characters (ESC, CR, BEL, backspace, C1 controls, ...) and the Unicode
/// bidirectional overrides, which can redraw or reorder what a terminal
/// shows, are written as visible escapes (`\u{1b}`, `\r`).
pub fn escape_controls(s: &str) -> String {
    let unsafe_char =
        |c: char| c.is_control() || matches!(c, '\u{202a}'..='\u{202e}' | '\u{2066}'..='\u{2069}');
    if !s.chars().any(unsafe_char) {
        return s.to_string();
    }
    let mut out = String::with_capacity(s.len() + 8);
    for c in s.chars() {
        match c {
            '\n' => out.push_str("\\n"),
            '\r' => out.push_str("\\r"),
            '\t' => out.push_str("\\t"),
            c if unsafe_char(c) => out.push_str(&format!("\\u{{{:x}}}", u32::from(c))),
            c => out.push(c),
        }
    }
    out
}

/// Short name of [`escape_controls`] for the text renderer.
pub fn t(s: &str) -> String {
    escape_controls(s)
}

pub fn value_text(row: &QuantityRow, sig: usize) -> String {
    if let (Some(w), Some(_)) = (&row.written, row.value) {
        return t(w);
    }
    match (row.value, &row.text, &row.problem) {
        (_, _, Some(p)) if row.value.is_none() => format!("({})", t(p)),
        (Some(v), _, _) => format_sig(v, sig),
        (None, Some(x), _) => t(x),
        _ => String::new(),
    }
}

pub fn pad(s: &str, w: usize) -> String {
    let n = s.chars().count();
    if n >= w {
        s.to_string()
    } else {
        format!("{s}{}", " ".repeat(w - n))
    }
}

/// The results as a terminal report.
pub fn text(report: &Report, file: &str, sig: usize, st: &Style) -> String {
    let mut out = String::new();
    let file = &t(file);
    let title = t(report.title.as_deref().unwrap_or(file));
    out.push_str(&format!("{}{}{}\n", st.bold, title, st.reset));
    out.push_str(&format!(
        "{}{}{}\n",
        st.dim,
        "─".repeat(title.chars().count().max(20)),
        st.reset
    ));
    out.push_str(&format!("{}worksheet {file}{}\n", st.dim, st.reset));
    for (k, v) in shown_meta(report) {
        out.push_str(&format!("{}{}: {}{}\n", st.dim, t(k), t(v), st.reset));
    }

    // Column widths over all quantity rows (fields included).
    let rows: Vec<&QuantityRow> = report
        .blocks
        .iter()
        .filter_map(|b| match b {
            Block::Quantity(q) => Some(q.as_ref()),
            _ => None,
        })
        .filter(|q| q.value.is_some())
        .collect();
    let wn = rows
        .iter()
        .map(|r| t(&r.name).chars().count())
        .max()
        .unwrap_or(4)
        .max(4);
    // The value text of every quantity block with a value, formatted once
    // (for the column width and for the line).
    let vtexts: Vec<Option<String>> = report
        .blocks
        .iter()
        .map(|b| match b {
            Block::Quantity(q) if q.value.is_some() => Some(value_text(q, sig)),
            _ => None,
        })
        .collect();
    let wv = vtexts
        .iter()
        .flatten()
        .map(|v| v.chars().count())
        .max()
        .unwrap_or(5)
        .clamp(5, 28);
    let wu = rows
        .iter()
        .map(|r| t(&r.unit).chars().count())
        .max()
        .unwrap_or(4)
        .max(4);

    let mut first_heading = true;
    let mut in_states = false;
    let table = state_text_table(report, sig);
    // Row of each state's node (a map: a look-up per quantity stays cheap
    // with many states).
    let row_of: std::collections::HashMap<usize, usize> = table
        .rows
        .iter()
        .enumerate()
        .rev()
        .map(|(k, (n, _))| (*n, k))
        .collect();
    for (bi, b) in report.blocks.iter().enumerate() {
        let state_row = match b {
            Block::Quantity(q) => row_of.get(&q.node).copied(),
            _ => None,
        };
        if let Some(k) = state_row {
            if !in_states {
                out.push_str(&format!("  {}{}{}\n", st.dim, table.header, st.reset));
                in_states = true;
            }
            out.push_str(&format!("  {}\n", table.rows[k].1.trim_end()));
            continue;
        }
        in_states = false;
        match b {
            Block::Heading { level, text } => {
                if *level == 1 && first_heading {
                    first_heading = false;
                    continue;
                }
                let mark = if *level <= 2 { "■" } else { "□" };
                out.push_str(&format!("\n{}{mark} {}{}\n", st.bold, t(text), st.reset));
            }
            Block::Note(n) => out.push_str(&format!("  {}{}{}\n", st.dim, t(n), st.reset)),
            Block::Quantity(q) => {
                let tag = if q.kind == "found" {
                    format!("{}fd{}", st.input, st.reset)
                } else if q.kind == "input" {
                    format!("{}in{}", st.input, st.reset)
                } else {
                    "  ".into()
                };
                let name = if q.kind == "input" {
                    format!("{}{}{}", st.input, pad(&t(&q.name), wn), st.reset)
                } else {
                    pad(&t(&q.name), wn)
                };
                let mut desc = t(q.description.as_deref().unwrap_or_default());
                if let Some(f) = &q.found {
                    desc = format!("{}[{}]{} {desc}", st.dim, found_text(q, f, sig), st.reset);
                }
                if let Some(o) = &q.overridden {
                    desc = format!("{}[overridden: {}]{} {desc}", st.warn, t(o), st.reset);
                }
                let line = if let Some(v) = &vtexts[bi] {
                    format!(
                        "  {tag} {name}  {:>wv$}  {}  {desc}",
                        v,
                        pad(&t(&q.unit), wu),
                        wv = wv
                    )
                } else if let Some(p) = &q.problem {
                    format!("  {tag} {name}  {}({}){}  {desc}", st.fail, t(p), st.reset)
                } else if !q.fields.is_empty()
                    && q.text.as_deref().is_some_and(|t| t.starts_with("state"))
                {
                    format!(
                        "  {tag} {name}  {}  {}{desc}{}",
                        state_summary(q, sig),
                        st.dim,
                        st.reset
                    )
                } else {
                    let extra = q
                        .fields
                        .iter()
                        .map(|f| {
                            format!(
                                "{} {} {}",
                                t(short(&f.name)),
                                value_text(f, sig),
                                t(&f.unit)
                            )
                            .trim_end()
                            .to_string()
                        })
                        .collect::<Vec<_>>()
                        .join(", ");
                    let extra = if extra.is_empty() {
                        String::new()
                    } else {
                        format!(" ({extra})")
                    };
                    format!(
                        "  {tag} {name}  {}{extra}  {desc}",
                        t(q.text.as_deref().unwrap_or_default())
                    )
                };
                out.push_str(line.trim_end());
                out.push('\n');
            }
            Block::Check(i) => {
                out.push_str(&check_line(&report.checks[*i], st, sig));
            }
        }
    }
    if !report.checks.is_empty() {
        let passed = report
            .checks
            .iter()
            .filter(|c| c.passed == Some(true))
            .count();
        let failed = report
            .checks
            .iter()
            .filter(|c| c.passed == Some(false))
            .count();
        out.push_str(&format!(
            "\n{}checks{}: {passed} passed, {}{failed} failed{}",
            st.bold,
            st.reset,
            if failed > 0 { st.fail } else { "" },
            st.reset
        ));
        let open = report.checks.len() - passed - failed;
        if open > 0 {
            out.push_str(&format!(", {open} not evaluated"));
        }
        out.push('\n');
    }
    if !report.warnings.is_empty() {
        out.push_str(&format!("\n{}warnings{}\n", st.bold, st.reset));
        for w in &report.warnings {
            out.push_str(&format!(
                "  {}!{} {}\n",
                st.warn,
                st.reset,
                t(&w.to_string())
            ));
        }
    }
    for n in &report.states.notes {
        out.push_str(&format!("\n{}{}{}\n", st.dim, t(n), st.reset));
    }
    if !report.methods.is_empty() {
        out.push_str(&format!("\n{}methods{}\n", st.bold, st.reset));
        for m in &report.methods {
            out.push_str(&format!(
                "  {} ({})\n    source: {}\n    range: {}\n    reference state: {}\n",
                t(&m.model),
                t(&m.used_by.join(", ")),
                t(&m.citation),
                t(&m.range),
                t(&m.reference)
            ));
        }
    }
    out.push('\n');
    if report.uses_gauge {
        out.push_str(&format!(
            "{}{}{}\n",
            st.dim,
            t(&report.gauge_note()),
            st.reset
        ));
    }
    out.push_str(&format!("{}{CAUTION}{}\n", st.dim, st.reset));
    out
}

/// How a value was found: "found where T4 = T_max in 2 .. 12 bar, 8
/// steps, residual 1.2e-13 (SI)".
pub fn found_text(q: &QuantityRow, f: &FoundRow, sig: usize) -> String {
    format!(
        "found where {} in {} .. {} {}, {} steps, residual {} (SI)",
        t(&f.condition),
        format_sig(f.low_shown, sig),
        format_sig(f.high_shown, sig),
        t(&q.unit),
        f.iterations,
        format_sig(f.residual, 2)
    )
}

/// Meta lines worth printing: not empty, not layout settings.
fn shown_meta(report: &Report) -> impl Iterator<Item = &(String, String)> {
    report
        .meta
        .iter()
        .filter(|(k, v)| !v.trim().is_empty() && k != "state_columns")
}

/// Column header of a state-table column: `T degC`, `x`.
fn state_head(c: &StateColumn) -> String {
    if c.unit.is_empty() {
        c.field.name().to_string()
    } else {
        format!("{} {}", c.field.name(), c.unit)
    }
}

fn state_cell(v: Option<f64>, sig: usize) -> String {
    v.map_or("–".to_string(), |x| format_sig(x, sig))
}

/// The state-point table laid out for a terminal: a header line and a
/// line per state (node, text).
struct TextTable {
    header: String,
    rows: Vec<(usize, String)>,
}

fn state_text_table(report: &Report, sig: usize) -> TextTable {
    let s = &report.states;
    let wn = s
        .rows
        .iter()
        .map(|r| t(&r.name).chars().count())
        .max()
        .unwrap_or(5)
        .max(5);
    let widths: Vec<usize> = s
        .columns
        .iter()
        .enumerate()
        .map(|(k, c)| {
            s.rows
                .iter()
                .map(|r| state_cell(r.cells[k], sig).chars().count())
                .chain(std::iter::once(state_head(c).chars().count()))
                .max()
                .unwrap_or(4)
        })
        .collect();
    let mut header = format!("   {}", pad("state", wn));
    for (k, c) in s.columns.iter().enumerate() {
        header.push_str(&format!("  {:>w$}", state_head(c), w = widths[k]));
    }
    let rows = s
        .rows
        .iter()
        .map(|r| {
            let mut line = format!("   {}", pad(&t(&r.name), wn));
            for (k, v) in r.cells.iter().enumerate() {
                line.push_str(&format!("  {:>w$}", state_cell(*v, sig), w = widths[k]));
            }
            if let Some(d) = &r.description {
                line.push_str(&format!("  {}", t(d)));
            }
            (r.node, line)
        })
        .collect();
    TextTable { header, rows }
}

/// Last segment of `name.field`.
fn short(name: &str) -> &str {
    name.rsplit('.').next().unwrap_or(name)
}

/// One-line state summary: the properties an engineer reads off a state
/// point (all fields are in the json output).
fn state_summary(q: &QuantityRow, sig: usize) -> String {
    let parts: Vec<String> = q
        .fields
        .iter()
        .filter(|f| matches!(short(&f.name), "T" | "p" | "h" | "s" | "x"))
        .map(|f| {
            let u = if f.unit.is_empty() {
                String::new()
            } else {
                format!(" {}", t(&f.unit))
            };
            format!("{} {}{u}", t(short(&f.name)), value_text(f, sig))
        })
        .collect();
    format!("[{}]", parts.join(" | "))
}

/// A value and its unit with `sig` significant figures.
fn shown(s: &Shown, sig: usize) -> String {
    let v = format_sig(s.value, sig);
    if s.unit.is_empty() {
        v
    } else {
        format!("{v} {}", t(&s.unit))
    }
}

/// A check's operand values, "334 degC vs 220 degC" (all evaluated), else
/// None.
fn operands_text(c: &CheckRow, sig: usize) -> Option<String> {
    let parts: Option<Vec<String>> = c
        .operands
        .iter()
        .map(|o| o.shown.as_ref().map(|s| shown(s, sig)))
        .collect();
    parts.filter(|p| !p.is_empty()).map(|p| p.join(" vs "))
}

fn check_line(c: &CheckRow, st: &Style, sig: usize) -> String {
    let verdict = match c.passed {
        Some(true) => format!("{}PASS{}", st.pass, st.reset),
        Some(false) => format!("{}FAIL{}", st.fail, st.reset),
        None => "----".to_string(),
    };
    let values = match operands_text(c, sig) {
        Some(v) => format!("  {}[{v}]{}", st.dim, st.reset),
        None => String::new(),
    };
    let desc = c
        .description
        .as_ref()
        .map(|d| format!("  {}", t(d)))
        .unwrap_or_default();
    format!("  {verdict}  check {}{values}{desc}\n", t(&c.text))
}

/// A number for json: None when absent or not finite (written `null`).
fn opt_num(x: Option<f64>) -> Option<f64> {
    x.filter(|v| v.is_finite())
}

/// A sequence serialized from an iterator as it is written: no list of
/// rows is built first (a 100 000-statement report is written row by row).
pub struct Seq<F>(pub F);

impl<F, I> Serialize for Seq<F>
where
    F: Fn() -> I,
    I: Iterator,
    I::Item: Serialize,
{
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.collect_seq((self.0)())
    }
}

/// A value written as its `Display` text (a json string).
pub struct AsText<'a, T: std::fmt::Display>(pub &'a T);

impl<T: std::fmt::Display> Serialize for AsText<'_, T> {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.collect_str(self.0)
    }
}

/// The `value` of a json quantity: a true/false value, else the number
/// in the display unit (`null` when there is none).
#[derive(Serialize)]
#[serde(untagged)]
enum JsonValue {
    Bool(bool),
    Num(Option<f64>),
}

/// How a `find` found an input, as json (README "Commands").
#[derive(Serialize)]
struct JsonFound {
    high: f64,
    iterations: usize,
    low: f64,
    residual: f64,
}

/// One quantity of the json report (README "Commands"). Keys are written in
/// alphabetical order, as the json output has always listed them.
#[derive(Serialize)]
pub struct JsonQuantity<'a> {
    description: &'a str,
    #[serde(skip_serializing_if = "Option::is_none")]
    error: Option<&'a str>,
    #[serde(skip_serializing_if = "Option::is_none")]
    found: Option<JsonFound>,
    kind: &'a str,
    name: &'a str,
    #[serde(skip_serializing_if = "Option::is_none")]
    overridden: Option<bool>,
    si_unit: &'a str,
    si_value: Option<f64>,
    unit: &'a str,
    value: JsonValue,
}

impl<'a> JsonQuantity<'a> {
    fn new(q: &'a QuantityRow) -> Self {
        JsonQuantity {
            description: q.description.as_deref().unwrap_or_default(),
            error: q.problem.as_deref(),
            found: q.found.as_ref().map(|f| JsonFound {
                high: f.high,
                iterations: f.iterations,
                low: f.low,
                residual: f.residual,
            }),
            kind: q.kind,
            name: &q.name,
            overridden: q.overridden.as_ref().map(|_| true),
            si_unit: &q.si_unit,
            si_value: opt_num(q.si_value),
            unit: &q.unit,
            value: match q.boolean {
                Some(b) => JsonValue::Bool(b),
                None => JsonValue::Num(opt_num(q.value)),
            },
        }
    }
}

/// One operand of a check, as json.
#[derive(Serialize)]
struct JsonOperand<'a> {
    text: &'a str,
    unit: &'a str,
    value: Option<f64>,
}

/// One check of the json report (README "Commands").
#[derive(Serialize)]
pub struct JsonCheck<'a> {
    description: &'a str,
    line: usize,
    operands: Vec<JsonOperand<'a>>,
    passed: Option<bool>,
    text: &'a str,
}

impl<'a> JsonCheck<'a> {
    fn new(c: &'a CheckRow) -> Self {
        JsonCheck {
            description: c.description.as_deref().unwrap_or_default(),
            line: c.line,
            operands: c
                .operands
                .iter()
                .map(|o| JsonOperand {
                    text: &o.text,
                    unit: o.shown.as_ref().map_or("", |s| s.unit.as_str()),
                    value: o.shown.as_ref().map(|s| s.value),
                })
                .collect(),
            passed: c.passed,
            text: &c.text,
        }
    }
}

/// Every quantity row of a report as the json output lists them: states
/// and substances by their fields.
fn json_rows(report: &Report) -> impl Iterator<Item = &QuantityRow> {
    report
        .blocks
        .iter()
        .filter_map(|b| match b {
            Block::Quantity(q) => Some(q.as_ref()),
            _ => None,
        })
        .flat_map(|q| {
            if q.fields.is_empty() {
                std::slice::from_ref(q)
            } else {
                q.fields.as_slice()
            }
        })
}

/// The `quantities` list of a json report, written as it is serialized.
pub fn json_quantities(report: &Report) -> impl Serialize + '_ {
    Seq(move || json_rows(report).map(JsonQuantity::new))
}

/// The `checks` list of a json report, written as it is serialized.
pub fn json_checks(report: &Report) -> impl Serialize + '_ {
    Seq(move || report.checks.iter().map(JsonCheck::new))
}

/// The results as json, with the keys README "Commands" fixes (written by
/// `serde_json::to_writer`; nothing is built before writing).
#[derive(Serialize)]
pub struct JsonReport<'a, Q, C, W> {
    checks: C,
    /// What gauge pressures are relative to, one sentence per worksheet
    /// (only when a gauge unit or a `gauge` statement is used).
    #[serde(skip_serializing_if = "<[String]>::is_empty")]
    gauge: &'a [String],
    quantities: Q,
    title: String,
    /// The worksheets used (`use`), with their sha256 (only when any).
    #[serde(skip_serializing_if = "<[sheaf_engine::UsedFile]>::is_empty")]
    used_files: &'a [sheaf_engine::UsedFile],
    warnings: W,
}

/// The json report of `report` (see [`JsonReport`]).
pub fn json(report: &Report) -> impl Serialize + '_ {
    JsonReport {
        checks: json_checks(report),
        gauge: if report.uses_gauge {
            &report.gauge_notes
        } else {
            &[]
        },
        quantities: json_quantities(report),
        used_files: &report.used_files,
        title: report.title.clone().unwrap_or_default(),
        warnings: Seq(move || report.warnings.iter().map(AsText)),
    }
}

/// Text for a Markdown line or table cell: control characters escaped
/// ([`escape_controls`]), HTML-sensitive characters as entities (raw
/// HTML does not pass through), `|` escaped for tables.
pub fn md_escape(s: &str) -> String {
    let s = escape_controls(s);
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '|' => out.push_str("\\|"),
            c => out.push(c),
        }
    }
    out
}

/// A Markdown code span of user text: fenced with more backticks than
/// any run inside it (so it cannot be closed early; HTML inside a code
/// span is shown, not interpreted), control characters escaped, `|`
/// escaped for tables.
pub fn md_code(s: &str) -> String {
    let s = escape_controls(s).replace('|', "\\|");
    let mut longest = 0;
    let mut run = 0;
    for c in s.chars() {
        run = if c == '`' { run + 1 } else { 0 };
        longest = longest.max(run);
    }
    let fence = "`".repeat(longest + 1);
    let pad = if s.starts_with('`') || s.ends_with('`') {
        " "
    } else {
        ""
    };
    format!("{fence}{pad}{s}{pad}{fence}")
}

/// Header of the Markdown state-point table.
fn md_state_header(states: &sheaf_engine::report::StateTable) -> String {
    let mut h = "| state |".to_string();
    let mut sep = "|---|".to_string();
    for c in &states.columns {
        h.push_str(&format!(" {} |", md_escape(&state_head(c))));
        sep.push_str("---:|");
    }
    format!("{h} description |\n{sep}---|\n")
}

/// The results as Markdown (for a calc note or a pull request).
pub fn markdown(report: &Report, file: &str, sig: usize) -> String {
    let mut out = String::new();
    let title = report.title.clone().unwrap_or_else(|| file.to_string());
    out.push_str(&format!("# {}\n\n", md_escape(&title)));
    out.push_str(&format!("Worksheet: {}\n\n", md_code(file)));
    for (k, v) in shown_meta(report) {
        out.push_str(&format!("- {}: {}\n", md_escape(k), md_escape(v)));
    }
    if shown_meta(report).next().is_some() {
        out.push('\n');
    }
    let mut in_table = false;
    let mut first_heading = true;
    let close = |out: &mut String, in_table: &mut bool| {
        if *in_table {
            out.push('\n');
            *in_table = false;
        }
    };
    let states = &report.states;
    // Row of each state's node (first row wins, as a search would find).
    let row_of: std::collections::HashMap<usize, usize> = states
        .rows
        .iter()
        .enumerate()
        .rev()
        .map(|(k, r)| (r.node, k))
        .collect();
    let mut in_states = false;
    let mut last_note = false;
    for b in &report.blocks {
        let is_state = matches!(b, Block::Quantity(q) if row_of.contains_key(&q.node));
        if in_states && !is_state {
            out.push('\n');
            in_states = false;
        }
        let this_note = matches!(b, Block::Note(_));
        let prev_note = last_note;
        last_note = this_note;
        let last_note = prev_note;
        match b {
            Block::Heading { level, text } => {
                if *level == 1 && first_heading {
                    first_heading = false;
                    continue;
                }
                close(&mut out, &mut in_table);
                out.push_str(&format!(
                    "{} {}\n\n",
                    "#".repeat(usize::from(*level).max(2)),
                    md_escape(text)
                ));
            }
            Block::Note(t) => {
                close(&mut out, &mut in_table);
                // Consecutive note lines are one paragraph.
                if out.ends_with("\n\n") && last_note {
                    out.truncate(out.len() - 2);
                    out.push_str(&format!(" {}\n\n", md_escape(t)));
                } else {
                    out.push_str(&format!("> {}\n\n", md_escape(t)));
                }
            }
            Block::Quantity(q) if row_of.contains_key(&q.node) => {
                if !in_states {
                    close(&mut out, &mut in_table);
                    out.push_str(&md_state_header(states));
                    in_states = true;
                }
                if let Some(r) = row_of.get(&q.node).map(|&k| &states.rows[k]) {
                    let mut line = format!("| {} |", md_code(&r.name));
                    for v in &r.cells {
                        line.push_str(&format!(" {} |", state_cell(*v, sig)));
                    }
                    line.push_str(&format!(
                        " {} |\n",
                        md_escape(r.description.as_deref().unwrap_or_default())
                    ));
                    out.push_str(&line);
                }
            }
            Block::Quantity(q) => {
                if !in_table {
                    out.push_str(
                        "| | name | value | unit | description |\n|---|---|---:|---|---|\n",
                    );
                    in_table = true;
                }
                let tag = match (&q.overridden, q.kind) {
                    (Some(o), _) => format!("input, overridden: {}", md_escape(o)),
                    (None, "input") => "input".to_string(),
                    (None, "found") => match &q.found {
                        Some(f) => md_escape(&found_text(q, f, sig)),
                        None => "found".to_string(),
                    },
                    (None, _) => String::new(),
                };
                for r in std::iter::once(q.as_ref()).chain(q.fields.iter()) {
                    out.push_str(&format!(
                        "| {} | {} | {} | {} | {} |\n",
                        if std::ptr::eq(r, q.as_ref()) {
                            tag.as_str()
                        } else {
                            ""
                        },
                        md_code(&r.name),
                        md_escape(&value_text(r, sig)),
                        md_escape(&r.unit),
                        md_escape(&r.description.clone().unwrap_or_default())
                    ));
                }
            }
            Block::Check(i) => {
                close(&mut out, &mut in_table);
                let c = &report.checks[*i];
                let v = match c.passed {
                    Some(true) => "**PASS**",
                    Some(false) => "**FAIL**",
                    None => "not evaluated",
                };
                out.push_str(&format!(
                    "- {v} {}{}{}\n\n",
                    md_code(&c.text),
                    match operands_text(c, sig) {
                        Some(v) => format!(" ({})", md_escape(&v)),
                        None => String::new(),
                    },
                    c.description
                        .as_ref()
                        .map(|d| format!(": {}", md_escape(d)))
                        .unwrap_or_default()
                ));
            }
        }
    }
    close(&mut out, &mut in_table);
    if in_states {
        out.push('\n');
    }
    for n in &states.notes {
        out.push_str(&format!("{}\n\n", md_escape(n)));
    }
    if !report.warnings.is_empty() {
        out.push_str("## Warnings\n\n");
        for w in &report.warnings {
            out.push_str(&format!("- {}\n", md_escape(&w.to_string())));
        }
        out.push('\n');
    }
    if !report.methods.is_empty() {
        out.push_str("## Methods\n\n");
        for m in &report.methods {
            out.push_str(&format!(
                "- **{}** (used by {}): {}. Range: {}. Reference state of h and s: {}.\n",
                md_escape(&m.model),
                m.used_by
                    .iter()
                    .map(|n| md_code(n))
                    .collect::<Vec<_>>()
                    .join(", "),
                md_escape(m.citation.trim_end_matches('.')),
                md_escape(m.range.trim_end_matches('.')),
                md_escape(m.reference.trim_end_matches('.'))
            ));
        }
        out.push('\n');
    }
    if report.uses_gauge {
        out.push_str(&format!("{}\n\n", md_escape(&report.gauge_note())));
    }
    out.push_str(&format!("*{CAUTION}*\n"));
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn control_characters_become_visible() {
        assert_eq!(escape_controls("plain µ text"), "plain µ text");
        assert_eq!(escape_controls("a\rb\nc\td"), "a\\rb\\nc\\td");
        assert_eq!(escape_controls("\u{1b}[31m"), "\\u{1b}[31m");
        assert_eq!(escape_controls("\u{9b}2K\u{7f}"), "\\u{9b}2K\\u{7f}");
        assert_eq!(
            escape_controls("x\u{202e}y\u{2066}"),
            "x\\u{202e}y\\u{2066}"
        );
    }

    #[test]
    fn markdown_escapes_html_and_code_spans_cannot_be_closed() {
        assert_eq!(md_escape("<b>&</b> | x"), "&lt;b&gt;&amp;&lt;/b&gt; \\| x");
        assert_eq!(md_code("a > b"), "`a > b`");
        assert_eq!(md_code("x ` <i>"), "``x ` <i>``");
        assert_eq!(md_code("`a`"), "`` `a` ``");
    }
}
