//! Golden tests of rendered diagnostics: every error kind the checker and
//! evaluator report, located (file:line:col) and worded. Each
//! `cli/tests/golden/errors/NAME.sheaf` has `NAME.stderr` holding the exit
//! status and the exact text `sheaf run` prints on stderr.
//! Regenerate after an intended change with `UPDATE_GOLDEN=1 cargo test -p sheaf-cli --test golden`
//! and review the diff.

use std::path::Path;
use std::process::Command;

fn golden_dir() -> std::path::PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/golden/errors")
}

/// Compare `actual` with the golden file (or rewrite it under
/// `UPDATE_GOLDEN`); a difference is added to `failures`.
fn compare(golden: &Path, actual: &str, failures: &mut Vec<String>) {
    if std::env::var_os("UPDATE_GOLDEN").is_some() {
        std::fs::write(golden, actual).unwrap();
        return;
    }
    let expected = std::fs::read_to_string(golden)
        .unwrap_or_else(|_| panic!("missing golden file {}", golden.display()));
    if expected != actual {
        failures.push(format!(
            "--- {}\n=== expected\n{expected}\n=== actual\n{actual}",
            golden.display()
        ));
    }
}

#[test]
fn rendered_diagnostics_match_golden_files() {
    let dir = golden_dir();
    let mut cases: Vec<_> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "sheaf"))
        .collect();
    cases.sort();
    assert!(
        cases.len() >= 10,
        "expected the golden cases, found {}",
        cases.len()
    );
    let mut failures = Vec::new();
    for case in &cases {
        let file_name = case.file_name().unwrap().to_str().unwrap();
        let out = Command::new(env!("CARGO_BIN_EXE_sheaf"))
            .current_dir(&dir)
            .env("NO_COLOR", "1")
            .args(["run", file_name])
            .output()
            .unwrap();
        let actual = format!(
            "exit: {}\n{}",
            out.status.code().unwrap_or(-1),
            String::from_utf8_lossy(&out.stderr)
        );
        compare(&case.with_extension("stderr"), &actual, &mut failures);
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// Golden reports: the text and Markdown layouts of two example worksheets
/// (a water/steam calculation with states, and one with a failing check).
/// Rounded to 4 significant figures, so they do not depend on the last bits
/// of the platform's libm.
#[test]
fn report_layouts_match_golden_files() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("..");
    let dir = root.join("cli/tests/golden/reports");
    let mut failures = Vec::new();
    for (sheet, format, ext) in [
        ("worksheets/tank_heatup.sheaf", "text", "txt"),
        ("worksheets/tank_heatup.sheaf", "md", "md"),
        ("worksheets/feed_pump.sheaf", "text", "txt"),
        ("worksheets/feed_pump.sheaf", "md", "md"),
        ("worksheets/steam_turbine.sheaf", "text", "txt"),
        ("worksheets/steam_turbine.sheaf", "md", "md"),
        (
            "cli/tests/golden/reports/state_columns.sheaf",
            "text",
            "txt",
        ),
        ("cli/tests/golden/reports/state_columns.sheaf", "md", "md"),
    ] {
        let out = Command::new(env!("CARGO_BIN_EXE_sheaf"))
            .current_dir(&root)
            .env("NO_COLOR", "1")
            .args(["run", sheet, "--format", format])
            .output()
            .unwrap();
        let actual = String::from_utf8_lossy(&out.stdout).into_owned();
        let stem = Path::new(sheet).file_stem().unwrap().to_str().unwrap();
        compare(&dir.join(format!("{stem}.{ext}")), &actual, &mut failures);
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}
