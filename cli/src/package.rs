//! `sheaf xlsx` and `sheaf pull`: the calculation package.

use std::path::Path;

use sheaf_engine::Model;
use sheaf_engine::units::format_sig;
use sheaf_engine::xlsx::{self, PackageInfo};

use crate::diagnostics;
use crate::{EXIT_CHECK_FAILED, EXIT_ERRORS, EXIT_USAGE};

pub const XLSX_HELP: &str = "Examples:\n  sheaf xlsx worksheets/air_receiver.sheaf\n  \
sheaf xlsx pump.sheaf -o review/pump-rev-B.xlsx\n  sheaf xlsx pump.sheaf --set 'p2=12 barg'\n  \
sheaf xlsx worksheets/plant_air_whatif.sheaf --case hot_day\n\n\
The package has a cover (checks, sign-off fields, caution), the calculation sheet with live \
formulas on SI cells, and a data sheet with the input values sheaf used.";

pub const PULL_HELP: &str = "Examples:\n  sheaf pull pump.sheaf --from pump-reviewed.xlsx\n  \
sheaf pull pump.sheaf --from pump-reviewed.xlsx --write\n\n\
Lists the inputs a reviewer changed in the package (old -> new, in the unit shown); --write \
rewrites only those numbers in the worksheet, keeping every other byte.";

/// Today's date (UTC) as YYYY-MM-DD.
fn today() -> String {
    let secs = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map_or(0, |d| d.as_secs());
    let days = (secs / 86_400) as i64;
    // Civil date from days since 1970-01-01 (proleptic Gregorian).
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    let y = yoe + era * 400 + i64::from(m <= 2);
    format!("{y:04}-{m:02}-{d:02}")
}

pub fn cmd_xlsx(file: &Path, out: Option<&Path>, sets: &[String], case: Option<&str>) -> u8 {
    let (name, mut model) = match crate::load_with_sets(file, sets, case) {
        Ok(x) => x,
        Err(c) => return c,
    };
    model.evaluate();
    let errors = model.runtime_errors();
    if !errors.is_empty() {
        diagnostics::emit(&name, model.source(), &errors);
        eprintln!("error: {name} has evaluation errors; no package written");
        return EXIT_ERRORS;
    }
    let out = out.map_or_else(|| file.with_extension("xlsx"), Path::to_path_buf);
    if crate::files::same_file(file, &out) {
        eprintln!(
            "error: the package {} would replace the worksheet {name} itself; nothing written (name another file with -o)",
            out.display()
        );
        return EXIT_USAGE;
    }
    let info = PackageInfo {
        source_name: file
            .file_name()
            .filter(|_| !crate::sources::is_stdin(file))
            .map_or(name.clone(), |n| n.to_string_lossy().into_owned()),
        source_sha256: xlsx::sha256_hex(model.source().as_bytes()),
        tool_version: env!("CARGO_PKG_VERSION").to_string(),
        date: today(),
    };
    let bytes = match xlsx::write_package(&model, &info) {
        Ok(b) => b,
        Err(e) => {
            eprintln!("error: {e}");
            return EXIT_USAGE;
        }
    };
    match crate::files::write_file(&out, &bytes) {
        Ok(()) => {
            if std::fs::metadata(&out).is_ok_and(|m| m.is_file()) {
                outln!("wrote {}", out.display());
            } else {
                // `-o /dev/stdout`: keep the workbook's stream clean.
                eprintln!("wrote {}", out.display());
            }
            let failed = model
                .report()
                .checks
                .iter()
                .filter(|c| c.passed == Some(false))
                .count();
            if failed > 0 {
                eprintln!(
                    "{failed} check{} failed (the package says so on its cover)",
                    if failed == 1 { "" } else { "s" }
                );
                EXIT_CHECK_FAILED
            } else {
                0
            }
        }
        Err(e) => {
            eprintln!("error: {e}");
            EXIT_USAGE
        }
    }
}

pub fn cmd_pull(file: &Path, from: &Path, write: bool, force: bool) -> u8 {
    let (name, mut model) = match crate::load(file) {
        Ok(x) => x,
        Err(c) => return c,
    };
    let src = model.source().to_string();
    model.evaluate();
    let bytes = match std::fs::read(from) {
        Ok(b) => b,
        Err(e) => {
            eprintln!("error: cannot read {}: {e}", from.display());
            return EXIT_USAGE;
        }
    };
    let reviewed = match xlsx::read_inputs(&bytes) {
        Ok(r) => r,
        Err(e) => {
            eprintln!("error: {}: {e}", from.display());
            return EXIT_USAGE;
        }
    };
    let hash = xlsx::sha256_hex(src.as_bytes());
    let problem = match &reviewed.source_sha256 {
        None => Some(format!(
            "{} was not written by `sheaf xlsx` (it has no sheaf package information)",
            from.display()
        )),
        Some(h) if *h != hash => Some(format!(
            "{} was written from a different version of {name} (source sha256 {}..., the file now has {}...)",
            from.display(),
            h.get(..12).unwrap_or(h),
            &hash[..12]
        )),
        _ => None,
    };
    if let Some(p) = &problem {
        if !force {
            eprintln!("error: {p}; nothing changed (use --force to pull anyway)");
            return EXIT_USAGE;
        }
        eprintln!("warning: {p}; pulling anyway (--force)");
    }
    for r in &reviewed.inputs {
        if model.node_index(&r.name).is_none() {
            eprintln!(
                "warning: {} holds input `{}`, which {name} does not have; ignored",
                r.cell, r.name
            );
        }
    }
    typed_over_warnings(&model, &bytes, from);
    // Each change, placed in the file that holds the input (a used
    // worksheet's input is written there), in worksheet order.
    let mut placed: Vec<(Placed, xlsx::Change)> = xlsx::pull_changes(&model, &reviewed)
        .into_iter()
        .map(|c| place(&model, file, c))
        .collect();
    placed.sort_by_key(|(p, c)| (p.order, c.literal.map_or(0, |s| s.start)));
    if placed.is_empty() {
        outln!("no input changed in {}", from.display());
        return 0;
    }
    outln!("inputs changed in {}:", from.display());
    for (p, c) in &placed {
        let note = match (&c.note, c.literal) {
            (Some(n), _) => format!("  ({n})"),
            (None, None) => "  (not a plain number in the worksheet: edit it by hand)".to_string(),
            (None, Some(_)) if p.used.is_some() => format!("  (in {})", p.shown),
            (None, Some(_)) => String::new(),
        };
        outln!(
            "  {:<16} {} -> {} {}{note}",
            c.name,
            format_sig(c.old, 15),
            format_sig(c.new, 15),
            c.unit
        );
    }
    if !write {
        outln!("(use --write to change {name})");
        return 0;
    }
    // One rewrite per file; every file checked before any is written.
    let mut files: Vec<(Placed, Vec<xlsx::Change>)> = Vec::new();
    for (p, c) in placed {
        match files.iter_mut().find(|(q, _)| q.path == p.path) {
            Some((_, v)) => v.push(c),
            None => files.push((p, vec![c])),
        }
    }
    let mut writes = Vec::new();
    for (p, changes) in &files {
        let new_src = rewrite_aligned(&p.source, changes);
        if let Err(diags) = sheaf_grammar::parse(&new_src) {
            let diags: Vec<_> = diags.into_iter().map(Into::into).collect();
            diagnostics::emit(&p.shown, &new_src, &diags);
            eprintln!("error: the rewritten worksheet would not parse; nothing changed");
            return EXIT_ERRORS;
        }
        writes.push((
            p,
            new_src,
            changes.iter().filter(|c| c.literal.is_some()).count(),
        ));
    }
    if let Some(main) = writes.iter().find(|(p, _, _)| p.used.is_none())
        && let Err(diags) = crate::sources::check_text(file, &main.1)
    {
        diagnostics::emit(&name, &main.1, &diags);
        eprintln!("error: the rewritten worksheet would not check; {name} not changed");
        return EXIT_ERRORS;
    }
    for (p, new_src, n) in writes {
        match crate::files::write_file(&p.path, new_src.as_bytes()) {
            Ok(()) => outln!("rewrote {n} input(s) in {}", p.shown),
            Err(e) => {
                eprintln!("error: {e}; {} not changed", p.shown);
                return EXIT_USAGE;
            }
        }
    }
    0
}

/// Where a pulled change is written.
struct Placed {
    path: std::path::PathBuf,
    shown: String,
    source: String,
    /// The prefix chain of a used worksheet; `None` for the worksheet itself.
    used: Option<String>,
    /// Position of the statement in the (top) worksheet, for the order.
    order: usize,
}

/// Find the worksheet that holds a changed input: a `PREFIX.NAME` input
/// belongs to the used worksheet (at any depth); its literal span is
/// re-taken there.
fn place(model: &Model, file: &Path, mut c: xlsx::Change) -> (Placed, xlsx::Change) {
    let top = model.node_index(&c.name);
    let order = top.map_or(usize::MAX, |i| {
        let st = model.nodes()[i].stmt;
        model.worksheet().statements[st].span.start
    });
    let mut m = model;
    let mut node = top;
    let mut chain: Vec<String> = Vec::new();
    let mut path = file.to_path_buf();
    let mut shown = file.display().to_string();
    while let Some(i) = node {
        let Some((k, j)) = m.import_of(i) else { break };
        let u = &m.used()[k];
        chain.push(u.prefix.clone());
        path = std::path::PathBuf::from(&u.path);
        shown = u.name.clone();
        m = &u.model;
        node = Some(j);
    }
    if !chain.is_empty() {
        c.literal = node
            .and_then(|j| xlsx::input_shown(m, j))
            .and_then(|(_, l)| l);
    }
    (
        Placed {
            path,
            shown,
            source: m.source().to_string(),
            used: (!chain.is_empty()).then(|| chain.join(".")),
            order,
        },
        c,
    )
}

/// [`xlsx::rewrite_inputs`], keeping the column of a description that
/// follows a rewritten number on its line (the formatter's layout): the
/// spaces before the description absorb the change of length.
fn rewrite_aligned(source: &str, changes: &[xlsx::Change]) -> String {
    let mut out = xlsx::rewrite_inputs(source, changes);
    let mut spans: Vec<(usize, isize)> = changes
        .iter()
        .filter_map(|c| {
            c.literal.map(|s| {
                let new_len = xlsx::literal_text(c.new).len() as isize;
                (s.end, new_len - (s.end - s.start) as isize)
            })
        })
        .collect();
    spans.sort();
    // Positions in `out` shift by the deltas of earlier rewrites.
    let mut shift = 0isize;
    let mut edits: Vec<(usize, isize)> = Vec::new();
    for (end, delta) in spans {
        edits.push(((end as isize + shift + delta) as usize, delta));
        shift += delta;
    }
    for (pos, delta) in edits.into_iter().rev() {
        if delta == 0 {
            continue;
        }
        let line_end = out[pos..].find('\n').map_or(out.len(), |i| pos + i);
        let line = &out[pos..line_end];
        // The gap before the description: the last run of spaces before `"`.
        let Some(q) = line.find('"') else { continue };
        let before = &line[..q];
        let trimmed = before.trim_end_matches(' ');
        let gap = before.len() - trimmed.len();
        let want = (gap as isize - delta).max(1) as usize;
        if gap == 0 {
            continue;
        }
        let at = pos + trimmed.len();
        out.replace_range(at..at + gap, &" ".repeat(want));
    }
    out
}

/// Warn about numbers a reviewer typed into the calculation sheet outside
/// the input cells (over a formula or an engine value): they are not
/// pulled, and saying nothing would lose them silently.
fn typed_over_warnings(model: &Model, bytes: &[u8], from: &Path) {
    let (typed, more) = match xlsx::typed_over(model, bytes) {
        Ok(x) => x,
        Err(e) => {
            eprintln!(
                "warning: {}: cannot look for numbers typed over computed cells: {e}",
                from.display()
            );
            return;
        }
    };
    for t in &typed {
        let value = format_sig(t.value, 15);
        match &t.quantity {
            Some(q) => eprintln!(
                "warning: {} holds the number {value} typed over the value of `{q}` (a computed \
                 value, not an input); it is not pulled",
                t.cell
            ),
            None => eprintln!(
                "warning: {} holds the number {value}, which is not an input cell; it is not pulled",
                t.cell
            ),
        }
    }
    if more > 0 {
        eprintln!(
            "warning: {} holds {more} more number(s) outside the input cells (not listed); they are not pulled",
            from.display()
        );
    }
}
