//! `sheaf run FILE --format html`: one self-contained printable page
//! (inline CSS with an A4 print stylesheet, no scripts, nothing fetched).

use sheaf_engine::CAUTION;
use sheaf_engine::report::{Block, GAUGE_NOTE, QuantityRow, Report};
use sheaf_engine::units::format_sig;

/// Text for HTML element content and attribute values.
fn esc(s: &str) -> String {
    let s = crate::render::escape_controls(s);
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

const CSS: &str = r#"
:root { --ink:#1f2a33; --rule:#9aa5b1; --head:#24405e; --soft:#eef2f6; --bad:#a3142b; --good:#2e6b3a; }
* { box-sizing: border-box; }
body { font: 10.5pt/1.35 "DejaVu Sans", "Liberation Sans", Arial, sans-serif; color: var(--ink); margin: 1.5em auto; max-width: 60em; padding: 0 1em; }
h1 { font-size: 15pt; margin: 0 0 .2em; color: var(--head); }
h2 { font-size: 11.5pt; margin: 1.1em 0 .35em; color: var(--head); border-bottom: 1.5px solid var(--head); padding-bottom: .1em; }
p { margin: .3em 0; }
.sub { color: #4a5560; font-size: 9pt; }
table { border-collapse: collapse; width: 100%; margin: .2em 0 .4em; }
th, td { border-bottom: 1px solid var(--rule); padding: .15em .4em; text-align: left; vertical-align: top; }
th { background: var(--soft); font-weight: 600; }
td.n, th.n { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
code { font: 9pt "DejaVu Sans Mono", monospace; }
.sign td { height: 1.9em; }
.sign th { width: 9em; }
.status { font-weight: 700; padding: .35em .6em; color: #fff; display: inline-block; margin: .3em 0; }
.status.pass { background: var(--good); color: #fff; }
.status.fail, .mark { background: var(--bad); color: #fff; }
.mark { color: #fff; font-weight: 700; padding: .35em .6em; display: inline-block; margin: .3em 0 .3em .5em; }
.fail { color: var(--bad); font-weight: 700; }
.pass { color: var(--good); font-weight: 700; }
.in { background: #fff3df; }
.note { font-style: italic; color: #4a5560; }
.caution { border: 1.5px solid var(--bad); padding: .4em .6em; color: #6e1120; font-weight: 600; margin-top: 1em; }
dl { margin: .2em 0; } dt { font-weight: 600; margin-top: .35em; } dd { margin: 0 0 0 1.2em; }
@page { size: A4; margin: 14mm 12mm 16mm; }
@media print {
  body { margin: 0; max-width: none; padding: 0; font-size: 9.5pt; }
  h2 { break-after: avoid; }
  tr, .caution, dl { break-inside: avoid; }
  a { color: inherit; text-decoration: none; }
}
"#;

fn value_cell(q: &QuantityRow, sig: usize) -> String {
    match (&q.written, q.value, &q.text, &q.problem) {
        (Some(w), Some(_), _, _) => esc(w),
        (_, Some(v), _, _) => format_sig(v, sig),
        (_, None, _, Some(p)) => format!("<span class=\"fail\">{}</span>", esc(p)),
        (_, None, Some(t), _) => esc(t),
        _ => String::new(),
    }
}

/// The report as one self-contained HTML page.
pub fn html(report: &Report, file: &str, sig: usize) -> String {
    let title = report.title.clone().unwrap_or_else(|| file.to_string());
    let meta = |k: &str| {
        report
            .meta
            .iter()
            .find(|(key, _)| key == k)
            .map_or(String::new(), |(_, v)| v.clone())
    };
    let mut o = String::new();
    o.push_str("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n");
    o.push_str("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n");
    o.push_str(&format!(
        "<title>{}</title>\n<style>{CSS}</style>\n</head>\n<body>\n",
        esc(&title)
    ));

    // Title block and sign-off.
    o.push_str(&format!("<h1>{}</h1>\n", esc(&title)));
    o.push_str(&format!(
        "<p class=\"sub\">Worksheet <code>{}</code> · calculation by sheaf {}</p>\n",
        esc(file),
        env!("CARGO_PKG_VERSION")
    ));
    let failed = report
        .checks
        .iter()
        .filter(|c| c.passed == Some(false))
        .count();
    let n = report.checks.len();
    if n > 0 {
        let (cls, text) = if failed > 0 {
            ("fail", format!("FAIL: {failed} of {n} checks fail"))
        } else {
            ("pass", format!("all {n} checks pass"))
        };
        o.push_str(&format!("<span class=\"status {cls}\">{text}</span>"));
    }
    if meta("checked").trim().is_empty() {
        o.push_str("<span class=\"mark\">NOT CHECKED</span>");
    }
    o.push_str("\n<table class=\"sign\">\n");
    for (label, key) in [
        ("Project", "project"),
        ("Prepared by", "prepared"),
        ("Checked by", "checked"),
        ("Revision", "revision"),
        ("Date", "date"),
    ] {
        o.push_str(&format!(
            "<tr><th>{label}</th><td>{}</td></tr>\n",
            esc(&meta(key))
        ));
    }
    o.push_str("</table>\n");
    for (name, text, source) in &report.overrides {
        o.push_str(&format!(
            "<p class=\"fail\">Input <code>{}</code> overridden: {} ({})</p>\n",
            esc(name),
            esc(text),
            esc(source)
        ));
    }
    for b in &report.blocks {
        if let Block::Note(t) = b {
            o.push_str(&format!("<p class=\"note\">{}</p>\n", esc(t)));
        } else if matches!(b, Block::Quantity(_)) {
            break;
        }
    }

    // Inputs.
    let quantities: Vec<&QuantityRow> = report
        .blocks
        .iter()
        .filter_map(|b| match b {
            Block::Quantity(q) => Some(q.as_ref()),
            _ => None,
        })
        .collect();
    o.push_str("<h2>Inputs</h2>\n<table>\n<tr><th>name</th><th class=\"n\">value</th><th>unit</th><th>description</th></tr>\n");
    for q in quantities.iter().filter(|q| q.kind == "input") {
        o.push_str(&format!(
            "<tr class=\"in\"><td><code>{}</code></td><td class=\"n\">{}</td><td>{}</td><td>{}</td></tr>\n",
            esc(&q.name),
            value_cell(q, sig),
            esc(&q.unit),
            esc(q.description.as_deref().unwrap_or_default())
        ));
    }
    o.push_str("</table>\n");

    // State points.
    let states = &report.states;
    if !states.rows.is_empty() {
        o.push_str("<h2>State points</h2>\n<table>\n<tr><th>state</th>");
        for c in &states.columns {
            let h = if c.unit.is_empty() {
                c.field.name().to_string()
            } else {
                format!("{} [{}]", c.field.name(), c.unit)
            };
            o.push_str(&format!("<th class=\"n\">{}</th>", esc(&h)));
        }
        o.push_str("<th>description</th></tr>\n");
        for r in &states.rows {
            o.push_str(&format!("<tr><td><code>{}</code></td>", esc(&r.name)));
            for v in &r.cells {
                o.push_str(&format!(
                    "<td class=\"n\">{}</td>",
                    v.map_or("–".to_string(), |x| format_sig(x, sig))
                ));
            }
            o.push_str(&format!(
                "<td>{}</td></tr>\n",
                esc(r.description.as_deref().unwrap_or_default())
            ));
        }
        o.push_str("</table>\n");
        for n in &states.notes {
            o.push_str(&format!("<p class=\"sub\">{}</p>\n", esc(n)));
        }
    }

    // Results with their expressions, in worksheet order with headings.
    o.push_str("<h2>Results</h2>\n<table>\n<tr><th>name</th><th class=\"n\">value</th><th>unit</th><th>expression</th><th>description</th></tr>\n");
    let state_nodes: Vec<usize> = states.rows.iter().map(|r| r.node).collect();
    let mut first = true;
    let mut pending: Option<&str> = None;
    for b in &report.blocks {
        match b {
            Block::Heading { level, text } if *level > 1 || !first => pending = Some(text),
            Block::Heading { .. } => first = false,
            Block::Quantity(q) if q.kind != "input" && !state_nodes.contains(&q.node) => {
                if let Some(h) = pending.take() {
                    o.push_str(&format!("<tr><th colspan=\"5\">{}</th></tr>\n", esc(h)));
                }
                o.push_str(&format!(
                    "<tr><td><code>{}</code></td><td class=\"n\">{}</td><td>{}</td><td><code>{}</code></td><td>{}</td></tr>\n",
                    esc(&q.name),
                    value_cell(q, sig),
                    esc(&q.unit),
                    esc(&q.expr),
                    esc(q.description.as_deref().unwrap_or_default())
                ));
            }
            _ => {}
        }
    }
    o.push_str("</table>\n");

    // Checks with actual value and limit.
    if !report.checks.is_empty() {
        o.push_str("<h2>Checks</h2>\n<table>\n<tr><th>result</th><th>check</th><th class=\"n\">value</th><th class=\"n\">limit</th><th>description</th></tr>\n");
        for c in &report.checks {
            let (cls, v) = match c.passed {
                Some(true) => ("pass", "pass"),
                Some(false) => ("fail", "FAIL"),
                None => ("", "not evaluated"),
            };
            let shown: Vec<String> = c
                .operands
                .iter()
                .map(|op| {
                    op.shown.as_ref().map_or(String::new(), |s| {
                        format!("{} {}", format_sig(s.value, sig), s.unit)
                            .trim_end()
                            .to_string()
                    })
                })
                .collect();
            let (val, lim) = match shown.as_slice() {
                [a, b] => (a.clone(), b.clone()),
                all => (all.join(" / "), String::new()),
            };
            o.push_str(&format!(
                "<tr><td class=\"{cls}\">{v}</td><td><code>{}</code></td><td class=\"n\">{}</td><td class=\"n\">{}</td><td>{}</td></tr>\n",
                esc(&c.text),
                esc(&val),
                esc(&lim),
                esc(c.description.as_deref().unwrap_or_default())
            ));
        }
        o.push_str("</table>\n");
    }
    if !report.warnings.is_empty() {
        o.push_str("<h2>Warnings</h2>\n<ul>\n");
        for w in &report.warnings {
            o.push_str(&format!("<li>{}</li>\n", esc(&w.to_string())));
        }
        o.push_str("</ul>\n");
    }
    if !report.methods.is_empty() {
        o.push_str("<h2>Methods and sources</h2>\n<dl>\n");
        for m in &report.methods {
            o.push_str(&format!(
                "<dt>{} <span class=\"sub\">(used by {})</span></dt>\n<dd>Source: {}</dd>\n<dd>Validity: {}</dd>\n<dd>Reference state of h and s: {}</dd>\n",
                esc(&m.model),
                esc(&m.used_by.join(", ")),
                esc(&m.citation),
                esc(&m.range),
                esc(&m.reference)
            ));
        }
        o.push_str("</dl>\n");
    }
    if report.uses_gauge {
        o.push_str(&format!("<p class=\"sub\">{}</p>\n", esc(GAUGE_NOTE)));
    }
    o.push_str(&format!(
        "<p class=\"caution\">{}</p>\n</body>\n</html>\n",
        esc(CAUTION)
    ));
    o
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn user_text_cannot_open_markup() {
        assert_eq!(esc("<script>&\"'"), "&lt;script&gt;&amp;&quot;&#39;");
    }
}
