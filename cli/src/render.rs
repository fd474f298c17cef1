//! Renderers of a worksheet report: text (terminal), json (tools), md.

use serde_json::{Value as Json, json};
use sheaf_engine::CAUTION;
use sheaf_engine::report::{Block, CheckRow, GAUGE_NOTE, QuantityRow, Report, Shown};
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

fn value_text(row: &QuantityRow, sig: usize) -> String {
    match (row.value, &row.text, &row.problem) {
        (_, _, Some(p)) if row.value.is_none() => format!("({p})"),
        (Some(v), _, _) => format_sig(v, sig),
        (None, Some(t), _) => t.clone(),
        _ => String::new(),
    }
}

fn pad(s: &str, w: usize) -> String {
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
    let title = report.title.clone().unwrap_or_else(|| file.to_string());
    out.push_str(&format!("{}{}{}\n", st.bold, title, st.reset));
    out.push_str(&format!(
        "{}{}{}\n",
        st.dim,
        "─".repeat(title.chars().count().max(20)),
        st.reset
    ));
    out.push_str(&format!("{}worksheet {file}{}\n", st.dim, st.reset));
    for (k, v) in &report.meta {
        out.push_str(&format!("{}{k}: {v}{}\n", st.dim, st.reset));
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
        .map(|r| r.name.chars().count())
        .max()
        .unwrap_or(4)
        .max(4);
    let wv = rows
        .iter()
        .map(|r| value_text(r, sig).chars().count())
        .max()
        .unwrap_or(5)
        .clamp(5, 28);
    let wu = rows
        .iter()
        .map(|r| r.unit.chars().count())
        .max()
        .unwrap_or(4)
        .max(4);

    let mut first_heading = true;
    for b in &report.blocks {
        match b {
            Block::Heading { level, text } => {
                if *level == 1 && first_heading {
                    first_heading = false;
                    continue;
                }
                let mark = if *level <= 2 { "■" } else { "□" };
                out.push_str(&format!("\n{}{mark} {text}{}\n", st.bold, st.reset));
            }
            Block::Note(t) => out.push_str(&format!("  {}{t}{}\n", st.dim, st.reset)),
            Block::Quantity(q) => {
                let tag = if q.kind == "input" {
                    format!("{}in{}", st.input, st.reset)
                } else {
                    "  ".into()
                };
                let name = if q.kind == "input" {
                    format!("{}{}{}", st.input, pad(&q.name, wn), st.reset)
                } else {
                    pad(&q.name, wn)
                };
                let desc = q.description.clone().unwrap_or_default();
                let line = if q.value.is_some() {
                    format!(
                        "  {tag} {name}  {:>wv$}  {}  {desc}",
                        value_text(q, sig),
                        pad(&q.unit, wu),
                        wv = wv
                    )
                } else if let Some(p) = &q.problem {
                    format!("  {tag} {name}  {}({p}){}  {desc}", st.fail, st.reset)
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
                            format!("{} {} {}", short(&f.name), value_text(f, sig), f.unit)
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
                        q.text.clone().unwrap_or_default()
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
            out.push_str(&format!("  {}!{} {w}\n", st.warn, st.reset));
        }
    }
    out.push('\n');
    if report.uses_gauge {
        out.push_str(&format!("{}{GAUGE_NOTE}{}\n", st.dim, st.reset));
    }
    out.push_str(&format!("{}{CAUTION}{}\n", st.dim, st.reset));
    out
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
                format!(" {}", f.unit)
            };
            format!("{} {}{u}", short(&f.name), value_text(f, sig))
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
        format!("{v} {}", s.unit)
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
        .map(|d| format!("  {d}"))
        .unwrap_or_default();
    format!("  {verdict}  check {}{values}{desc}\n", c.text)
}

fn opt_num(x: Option<f64>) -> Json {
    match x {
        Some(v) if v.is_finite() => json!(v),
        _ => Json::Null,
    }
}

/// The results as json, with the keys DESIGN §5 fixes.
pub fn json(report: &Report) -> Json {
    let quantities: Vec<Json> = report
        .blocks
        .iter()
        .filter_map(|b| match b {
            Block::Quantity(q) => Some(q.as_ref()),
            _ => None,
        })
        .flat_map(|q| q.flatten())
        .map(|q| {
            let mut o = json!({
                "name": q.name,
                "kind": q.kind,
                "value": q.boolean.map_or_else(|| opt_num(q.value), Json::from),
                "unit": q.unit,
                "si_value": opt_num(q.si_value),
                "si_unit": q.si_unit,
                "description": q.description.clone().unwrap_or_default(),
            });
            if let Some(p) = &q.problem {
                o["error"] = json!(p);
            }
            o
        })
        .collect();
    let checks: Vec<Json> = report
        .checks
        .iter()
        .map(|c| {
            json!({
                "line": c.line,
                "text": c.text,
                "passed": c.passed,
                "description": c.description.clone().unwrap_or_default(),
                "operands": c.operands.iter().map(|o| json!({
                    "text": o.text,
                    "value": o.shown.as_ref().map(|s| s.value),
                    "unit": o.shown.as_ref().map_or("", |s| s.unit.as_str()),
                })).collect::<Vec<_>>(),
            })
        })
        .collect();
    json!({
        "title": report.title.clone().unwrap_or_default(),
        "quantities": quantities,
        "checks": checks,
        "warnings": report.warnings.iter().map(|w| w.to_string()).collect::<Vec<_>>(),
    })
}

fn md_escape(s: &str) -> String {
    s.replace('|', "\\|")
}

/// The results as Markdown (for a calc note or a pull request).
pub fn markdown(report: &Report, file: &str, sig: usize) -> String {
    let mut out = String::new();
    let title = report.title.clone().unwrap_or_else(|| file.to_string());
    out.push_str(&format!("# {}\n\n", md_escape(&title)));
    out.push_str(&format!("Worksheet: `{file}`\n\n"));
    for (k, v) in &report.meta {
        out.push_str(&format!("- {}: {}\n", md_escape(k), md_escape(v)));
    }
    if !report.meta.is_empty() {
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
    for b in &report.blocks {
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
                out.push_str(&format!("> {}\n\n", md_escape(t)));
            }
            Block::Quantity(q) => {
                if !in_table {
                    out.push_str(
                        "| | name | value | unit | description |\n|---|---|---:|---|---|\n",
                    );
                    in_table = true;
                }
                let tag = if q.kind == "input" { "input" } else { "" };
                for r in std::iter::once(q.as_ref()).chain(q.fields.iter()) {
                    out.push_str(&format!(
                        "| {} | `{}` | {} | {} | {} |\n",
                        if std::ptr::eq(r, q.as_ref()) { tag } else { "" },
                        r.name,
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
                    "- {v} `{}`{}{}\n\n",
                    c.text,
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
    if !report.warnings.is_empty() {
        out.push_str("## Warnings\n\n");
        for w in &report.warnings {
            out.push_str(&format!("- {}\n", md_escape(&w.to_string())));
        }
        out.push('\n');
    }
    if report.uses_gauge {
        out.push_str(&format!("{GAUGE_NOTE}\n\n"));
    }
    out.push_str(&format!("*{CAUTION}*\n"));
    out
}
