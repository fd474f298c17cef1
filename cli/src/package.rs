//! `sheaf xlsx` and `sheaf pull`: the calculation package.

use std::path::Path;

use sheaf_engine::Model;
use sheaf_engine::units::format_sig;
use sheaf_engine::xlsx::{self, PackageInfo};

use crate::diagnostics;

const EXIT_ERRORS: u8 = 1;
const EXIT_USAGE: u8 = 2;
const EXIT_CHECK_FAILED: u8 = 3;

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
    let changes = xlsx::pull_changes(&model, &reviewed);
    if changes.is_empty() {
        outln!("no input changed in {}", from.display());
        return 0;
    }
    outln!("inputs changed in {}:", from.display());
    for c in &changes {
        let note = match (&c.note, c.literal) {
            (Some(n), _) => format!("  ({n})"),
            (None, None) => "  (not a plain number in the worksheet: edit it by hand)".to_string(),
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
    let new_src = xlsx::rewrite_inputs(&src, &changes);
    if let Err(diags) = Model::new(new_src.clone()) {
        diagnostics::emit(&name, &new_src, &diags);
        eprintln!("error: the rewritten worksheet would not check; {name} not changed");
        return EXIT_ERRORS;
    }
    match crate::files::write_file(file, new_src.as_bytes()) {
        Ok(()) => {
            let n = changes.iter().filter(|c| c.literal.is_some()).count();
            outln!("rewrote {n} input(s) in {name}");
            0
        }
        Err(e) => {
            eprintln!("error: {e}; {name} not changed");
            EXIT_USAGE
        }
    }
}
