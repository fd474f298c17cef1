//! `sheaf diff OLD NEW` and `sheaf diff FILE --rev REV`: what changed
//! between two worksheets, both evaluated (README "Commands").

use std::collections::{BTreeSet, HashMap};
use std::io::IsTerminal;
use std::path::Path;

use serde::Serialize;
use sheaf_engine::report::{QuantityRow, Report};
use sheaf_engine::units::format_sig;

use crate::render::{Style, escape_controls as t, md_code, md_escape};
use crate::sources::{self, Rev};

pub const DIFF_HELP: &str = "Examples:\n  sheaf diff pump-rev-A.sheaf pump-rev-B.sheaf\n  \
sheaf diff pump.sheaf --rev HEAD\n  sheaf diff pump.sheaf --rev main --format md > comment.md\n  \
sheaf diff pump.sheaf --rev HEAD --strict --format json\n\n\
Lists inputs changed (old -> new), results changed beyond the tolerance (default: any change \
at the displayed precision; --rel TOL), checks whose status changed (pass -> fail first), \
quantities added and removed, and changed descriptions and units. With --rev the file (and \
the worksheets it uses) are read as committed in that git revision.\n\n\
Exit status: 0 both evaluated; 1 either has errors; 2 usage or file error; with --strict, 3 \
when a check that passed in OLD fails in NEW.";

/// One side of the comparison.
struct Side {
    name: String,
    report: Option<Report>,
    errors: Vec<String>,
}

fn side(file: &Path, rev: &Rev, name: String) -> Result<Side, String> {
    let loaded = sources::load(file, rev)?;
    let place = |d: &sheaf_engine::Diagnostic, src: &str| match d.span() {
        Some(s) => {
            let (l, c) = sheaf_grammar::line_col(src, s.start);
            format!("{name}:{l}:{c}: {}", d.message)
        }
        None => format!("{name}: {}", d.message),
    };
    match loaded.model {
        Err(ds) => Ok(Side {
            errors: ds.iter().map(|d| place(d, &loaded.source)).collect(),
            name,
            report: None,
        }),
        Ok(mut m) => {
            m.evaluate();
            let errors = m
                .runtime_errors()
                .iter()
                .map(|d| place(d, m.source()))
                .collect();
            Ok(Side {
                report: Some(m.report()),
                errors,
                name,
            })
        }
    }
}

/// Options of `sheaf diff`.
pub struct Options {
    pub rel: Option<f64>,
    pub sig: usize,
    pub strict: bool,
}

/// An input whose value changed (json keys in alphabetical order).
#[derive(Serialize)]
struct InputChange {
    name: String,
    new: f64,
    old: f64,
    unit: String,
}

/// A result that moved beyond the tolerance.
#[derive(Serialize)]
struct ResultChange {
    name: String,
    new: f64,
    old: f64,
    /// (new − old) / |old| in SI; None when old is zero.
    rel_change: Option<f64>,
    unit: String,
}

/// A changed description or unit.
#[derive(Serialize)]
struct Changed {
    name: String,
    new: Option<String>,
    old: Option<String>,
    what: &'static str,
}

#[derive(Default)]
struct Diff {
    inputs: Vec<InputChange>,
    results: Vec<ResultChange>,
    checks: Vec<(String, Option<bool>, Option<bool>)>,
    added: Vec<String>,
    removed: Vec<String>,
    changed: Vec<Changed>,
}

fn rows(r: &Report) -> Vec<&QuantityRow> {
    r.blocks
        .iter()
        .filter_map(|b| match b {
            sheaf_engine::report::Block::Quantity(q) => Some(q.as_ref()),
            _ => None,
        })
        .collect()
}

fn status(p: Option<bool>) -> Option<&'static str> {
    match p {
        Some(true) => Some("pass"),
        Some(false) => Some("fail"),
        None => None,
    }
}

fn compare(old: &Report, new: &Report, opt: &Options) -> Diff {
    let mut d = Diff::default();
    let old_rows = rows(old);
    let new_rows = rows(new);
    let old_by: HashMap<&str, &QuantityRow> =
        old_rows.iter().map(|q| (q.name.as_str(), *q)).collect();
    let new_names: BTreeSet<&str> = new_rows.iter().map(|q| q.name.as_str()).collect();
    for q in &new_rows {
        let Some(o) = old_by.get(q.name.as_str()) else {
            d.added.push(q.name.clone());
            continue;
        };
        if o.description != q.description {
            d.changed.push(Changed {
                name: q.name.clone(),
                new: q.description.clone(),
                old: o.description.clone(),
                what: "description",
            });
        }
        if o.unit != q.unit {
            d.changed.push(Changed {
                name: q.name.clone(),
                new: Some(q.unit.clone()),
                old: Some(o.unit.clone()),
                what: "unit",
            });
        }
        let pairs: Vec<(&QuantityRow, &QuantityRow)> = if q.fields.is_empty() {
            vec![(*o, *q)]
        } else {
            q.fields
                .iter()
                .filter_map(|f| o.fields.iter().find(|x| x.name == f.name).map(|x| (x, f)))
                .collect()
        };
        for (a, b) in pairs {
            let (Some(av), Some(bv)) = (a.value, b.value) else {
                continue;
            };
            let (Some(asi), Some(bsi)) = (a.si_value, b.si_value) else {
                continue;
            };
            if q.kind == "input" {
                if asi != bsi {
                    d.inputs.push(InputChange {
                        name: b.name.clone(),
                        new: bv,
                        old: av,
                        unit: b.unit.clone(),
                    });
                }
                continue;
            }
            let moved = match opt.rel {
                Some(tol) => (bsi - asi).abs() > tol * asi.abs().max(bsi.abs()),
                None => format_sig(av, opt.sig) != format_sig(bv, opt.sig) || a.unit != b.unit,
            };
            if moved {
                let rel = if asi != 0.0 {
                    Some((bsi - asi) / asi.abs()).filter(|x| x.is_finite())
                } else {
                    None
                };
                d.results.push(ResultChange {
                    name: b.name.clone(),
                    new: bv,
                    old: av,
                    rel_change: rel,
                    unit: b.unit.clone(),
                });
            }
        }
    }
    for o in &old_rows {
        if !new_names.contains(o.name.as_str()) {
            d.removed.push(o.name.clone());
        }
    }
    let old_checks: HashMap<&str, Option<bool>> = old
        .checks
        .iter()
        .map(|c| (c.text.as_str(), c.passed))
        .collect();
    let new_texts: BTreeSet<&str> = new.checks.iter().map(|c| c.text.as_str()).collect();
    for c in &new.checks {
        let was = old_checks.get(c.text.as_str()).copied().flatten();
        if !old_checks.contains_key(c.text.as_str()) || was != c.passed {
            d.checks.push((c.text.clone(), was, c.passed));
        }
    }
    for c in &old.checks {
        if !new_texts.contains(c.text.as_str()) {
            d.checks.push((c.text.clone(), c.passed, None));
        }
    }
    // pass -> fail first.
    d.checks
        .sort_by_key(|(_, o, n)| !(*o == Some(true) && *n == Some(false)));
    d
}

pub fn cmd_diff(
    old: &Path,
    new: Option<&Path>,
    rev: Option<&str>,
    format: crate::Format,
    opt: &Options,
) -> u8 {
    let sides = match (new, rev) {
        (Some(n), None) => side(old, &Rev::Work, old.display().to_string())
            .and_then(|a| Ok((a, side(n, &Rev::Work, n.display().to_string())?))),
        (None, Some(r)) => side(
            old,
            &Rev::Git(r.to_string()),
            format!("{}@{r}", old.display()),
        )
        .and_then(|a| Ok((a, side(old, &Rev::Work, old.display().to_string())?))),
        _ => Err("give two worksheets (OLD NEW) or one worksheet and --rev REV".to_string()),
    };
    let (a, b) = match sides {
        Ok(x) => x,
        Err(e) => {
            eprintln!("error: {e}");
            return crate::EXIT_USAGE;
        }
    };
    let d = match (&a.report, &b.report) {
        (Some(x), Some(y)) => compare(x, y, opt),
        _ => Diff::default(),
    };
    let errors = !a.errors.is_empty() || !b.errors.is_empty();
    let broke = d
        .checks
        .iter()
        .any(|(_, o, n)| *o == Some(true) && *n == Some(false));
    match format {
        crate::Format::Json => {
            /// A check whose status changed.
            #[derive(Serialize)]
            struct CheckChange<'a> {
                new: Option<&'static str>,
                old: Option<&'static str>,
                text: &'a str,
            }
            /// The errors of both sides.
            #[derive(Serialize)]
            struct Errors<'a> {
                new: &'a [String],
                old: &'a [String],
            }
            /// The json diff (README "Commands"; keys in alphabetical order).
            #[derive(Serialize)]
            struct JsonDiff<'a> {
                added: &'a [String],
                changed: &'a [Changed],
                checks: Vec<CheckChange<'a>>,
                errors: Errors<'a>,
                inputs: &'a [InputChange],
                removed: &'a [String],
                results: &'a [ResultChange],
            }
            crate::out_json(
                &JsonDiff {
                    added: &d.added,
                    changed: &d.changed,
                    checks: d
                        .checks
                        .iter()
                        .map(|(t, o, n)| CheckChange {
                            new: status(*n),
                            old: status(*o),
                            text: t,
                        })
                        .collect(),
                    errors: Errors {
                        new: &b.errors,
                        old: &a.errors,
                    },
                    inputs: &d.inputs,
                    removed: &d.removed,
                    results: &d.results,
                },
                true,
            );
        }
        crate::Format::Md | crate::Format::Html => out!("{}", markdown(&a, &b, &d, opt.sig)),
        crate::Format::Text => {
            let colour = std::io::stdout().is_terminal() && std::env::var_os("NO_COLOR").is_none();
            out!("{}", text(&a, &b, &d, opt.sig, &Style::new(colour)));
        }
    }
    if errors {
        crate::EXIT_ERRORS
    } else if opt.strict && broke {
        crate::EXIT_CHECK_FAILED
    } else {
        0
    }
}

fn num(v: f64, sig: usize) -> String {
    if v.is_finite() {
        format_sig(v, sig)
    } else {
        "-".to_string()
    }
}

fn word(p: Option<bool>) -> &'static str {
    match p {
        Some(true) => "pass",
        Some(false) => "FAIL",
        None => "-",
    }
}

fn text(a: &Side, b: &Side, d: &Diff, sig: usize, st: &Style) -> String {
    let mut out = format!(
        "{}diff {} -> {}{}\n",
        st.bold,
        t(&a.name),
        t(&b.name),
        st.reset
    );
    for (side, errs) in [(a, &a.errors), (b, &b.errors)] {
        if !errs.is_empty() {
            out.push_str(&format!(
                "{}errors in {}:{}\n",
                st.fail,
                t(&side.name),
                st.reset
            ));
            for e in errs.iter() {
                out.push_str(&format!("  {}\n", t(e)));
            }
        }
    }
    if !d.checks.is_empty() {
        out.push_str("checks changed:\n");
        for (c, o, n) in &d.checks {
            let colour = if *n == Some(false) { st.fail } else { st.pass };
            out.push_str(&format!(
                "  {colour}{:<4} -> {:<4}{}  {}\n",
                word(*o),
                word(*n),
                st.reset,
                t(c)
            ));
        }
    }
    if !d.inputs.is_empty() {
        out.push_str("inputs changed:\n");
        for i in &d.inputs {
            out.push_str(&format!(
                "  {:<16} {} -> {} {}\n",
                t(&i.name),
                num(i.old, 15),
                num(i.new, 15),
                t(&i.unit)
            ));
        }
    }
    if !d.results.is_empty() {
        out.push_str("results changed:\n");
        for r in &d.results {
            let rel = r
                .rel_change
                .map_or(String::new(), |x| format!("  ({:+.3} %)", 100.0 * x));
            out.push_str(&format!(
                "  {:<16} {} -> {} {}{rel}\n",
                t(&r.name),
                num(r.old, sig),
                num(r.new, sig),
                t(&r.unit)
            ));
        }
    }
    if !d.added.is_empty() {
        out.push_str(&format!("added: {}\n", t(&d.added.join(", "))));
    }
    if !d.removed.is_empty() {
        out.push_str(&format!("removed: {}\n", t(&d.removed.join(", "))));
    }
    for c in &d.changed {
        out.push_str(&format!(
            "changed {} of {}: \"{}\" -> \"{}\"\n",
            c.what,
            t(&c.name),
            t(c.old.as_deref().unwrap_or_default()),
            t(c.new.as_deref().unwrap_or_default())
        ));
    }
    if a.errors.is_empty()
        && b.errors.is_empty()
        && d.checks.is_empty()
        && d.inputs.is_empty()
        && d.results.is_empty()
        && d.added.is_empty()
        && d.removed.is_empty()
        && d.changed.is_empty()
    {
        out.push_str("no change\n");
    }
    out
}

fn markdown(a: &Side, b: &Side, d: &Diff, sig: usize) -> String {
    let mut out = format!(
        "### sheaf diff: {} → {}\n\n",
        md_code(&a.name),
        md_code(&b.name)
    );
    for side in [a, b] {
        if !side.errors.is_empty() {
            out.push_str(&format!("**Errors in {}:**\n\n", md_code(&side.name)));
            for e in &side.errors {
                out.push_str(&format!("- {}\n", md_escape(e)));
            }
            out.push('\n');
        }
    }
    if !d.checks.is_empty() {
        out.push_str("**Checks changed**\n\n| check | old | new |\n|---|---|---|\n");
        for (c, o, n) in &d.checks {
            let newer = if *n == Some(false) {
                "**FAIL**".to_string()
            } else {
                word(*n).to_string()
            };
            out.push_str(&format!("| {} | {} | {newer} |\n", md_code(c), word(*o)));
        }
        out.push('\n');
    }
    if !d.inputs.is_empty() {
        out.push_str("**Inputs changed**\n\n| input | old | new | unit |\n|---|---:|---:|---|\n");
        for i in &d.inputs {
            out.push_str(&format!(
                "| {} | {} | {} | {} |\n",
                md_code(&i.name),
                num(i.old, 15),
                num(i.new, 15),
                md_escape(&i.unit)
            ));
        }
        out.push('\n');
    }
    if !d.results.is_empty() {
        out.push_str(
            "**Results changed**\n\n| result | old | new | unit | change |\n|---|---:|---:|---|---:|\n",
        );
        for r in &d.results {
            let rel = r
                .rel_change
                .map_or(String::new(), |x| format!("{:+.3} %", 100.0 * x));
            out.push_str(&format!(
                "| {} | {} | {} | {} | {rel} |\n",
                md_code(&r.name),
                num(r.old, sig),
                num(r.new, sig),
                md_escape(&r.unit)
            ));
        }
        out.push('\n');
    }
    let list = |v: &[String]| v.iter().map(|x| md_code(x)).collect::<Vec<_>>().join(", ");
    if !d.added.is_empty() {
        out.push_str(&format!("**Added:** {}\n\n", list(&d.added)));
    }
    if !d.removed.is_empty() {
        out.push_str(&format!("**Removed:** {}\n\n", list(&d.removed)));
    }
    if !d.changed.is_empty() {
        out.push_str("**Changed**\n\n| name | what | old | new |\n|---|---|---|---|\n");
        for c in &d.changed {
            out.push_str(&format!(
                "| {} | {} | {} | {} |\n",
                md_code(&c.name),
                c.what,
                md_escape(c.old.as_deref().unwrap_or_default()),
                md_escape(c.new.as_deref().unwrap_or_default())
            ));
        }
        out.push('\n');
    }
    out
}
