//! Process-level tests of the `sheaf` binary: exit statuses, output formats,
//! `--set`, `eval`, help texts.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("..")
}

fn sheaf(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(root())
        .env("NO_COLOR", "1")
        .args(args)
        .output()
        .unwrap()
}

fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

#[test]
fn eval_converts_psi_to_kpa_with_four_significant_figures() {
    // 14.7 psi x 6894.757 Pa/psi (NIST SP 811, App. B.8) = 101 352.9 Pa -> "101.4 kPa".
    let o = sheaf(&["eval", "14.7 psi", "--in", "kPa"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert_eq!(stdout(&o).trim(), "101.4 kPa");
}

#[test]
fn eval_json_has_the_fixed_keys() {
    let o = sheaf(&["eval", "0 barg", "--format", "json"]);
    assert_eq!(o.status.code(), Some(0));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    // Gauge zero is the standard atmosphere, 101 325 Pa (README, units in "A short tour of the language"; 10th CGPM 1954).
    assert_eq!(v["si_value"].as_f64().unwrap(), 101_325.0);
    assert_eq!(v["si_unit"], "Pa");
    assert!(v.get("value").is_some() && v.get("unit").is_some());
}

#[test]
fn eval_temperature_difference_in_kelvin_and_refuses_degc() {
    let o = sheaf(&["eval", "20 degC - 10 degC", "--in", "K"]);
    assert_eq!(stdout(&o).trim(), "10 K");
    let o = sheaf(&["eval", "20 degC - 10 degC", "--in", "degC"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("difference"), "{}", stderr(&o));
}

#[test]
fn check_exits_1_with_a_located_message_on_a_unit_error() {
    let o = sheaf(&["check", "cli/tests/golden/errors/dimension_mismatch.sheaf"]);
    assert_eq!(o.status.code(), Some(1));
    let e = stderr(&o);
    assert!(e.contains("dimension_mismatch.sheaf:4:7"), "{e}");
    assert!(
        e.contains("left is pressure (bar), right is temperature (K)"),
        "{e}"
    );
}

#[test]
fn check_passes_a_good_worksheet() {
    let o = sheaf(&["check", "worksheets/air_receiver.sheaf"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(stdout(&o).contains("ok"));
}

#[test]
fn run_exit_status_3_when_a_check_fails_and_0_when_all_pass() {
    let o = sheaf(&["run", "worksheets/tank_heatup.sheaf"]);
    assert_eq!(o.status.code(), Some(3), "{}", stderr(&o));
    let out = stdout(&o);
    assert!(out.contains("PASS") && out.contains("FAIL"), "{out}");
    assert!(
        out.contains("qualified engineer"),
        "the caution must be printed"
    );
    let o = sheaf(&["run", "worksheets/air_receiver.sheaf"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
}

#[test]
fn run_json_keys_are_the_documented_ones() {
    let o = sheaf(&["run", "worksheets/tank_heatup.sheaf", "--format", "json"]);
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    let mut keys: Vec<&str> = v.as_object().unwrap().keys().map(String::as_str).collect();
    keys.sort();
    assert_eq!(keys, ["checks", "quantities", "title", "warnings"]);
    let q = &v["quantities"][0];
    let mut qk: Vec<&str> = q.as_object().unwrap().keys().map(String::as_str).collect();
    qk.sort();
    assert_eq!(
        qk,
        [
            "description",
            "kind",
            "name",
            "si_unit",
            "si_value",
            "unit",
            "value"
        ]
    );
    let c = &v["checks"][0];
    let mut ck: Vec<&str> = c.as_object().unwrap().keys().map(String::as_str).collect();
    ck.sort();
    assert_eq!(ck, ["description", "line", "operands", "passed", "text"]);
    // Operands (README "Commands"): every operand of the check's comparisons, each
    // with its value in the comparison's display unit.
    let ops = c["operands"].as_array().unwrap();
    assert_eq!(ops.len(), 2);
    for o in ops {
        let mut ok: Vec<&str> = o.as_object().unwrap().keys().map(String::as_str).collect();
        ok.sort();
        assert_eq!(ok, ["text", "unit", "value"]);
    }
    // T_start = 12 degC is 285.15 K in SI (degC offset 273.15 K, NIST SP 811 §4.2.1.1).
    let t = v["quantities"]
        .as_array()
        .unwrap()
        .iter()
        .find(|q| q["name"] == "T_start")
        .unwrap();
    assert_eq!(t["kind"], "input");
    assert_eq!(t["unit"], "degC");
    assert!((t["value"].as_f64().unwrap() - 12.0).abs() < 1e-12);
    assert!((t["si_value"].as_f64().unwrap() - 285.15).abs() < 1e-9);
}

#[test]
fn set_overrides_an_input_and_is_dimension_checked() {
    // Larger heater: heat-up time falls; dT check still fails (depends only on temperatures).
    let base = sheaf(&["run", "worksheets/tank_heatup.sheaf", "--format", "json"]);
    let set = sheaf(&[
        "run",
        "worksheets/tank_heatup.sheaf",
        "--format",
        "json",
        "--set",
        "P_heater=120 kW",
    ]);
    let t = |o: &Output| {
        let v: serde_json::Value = serde_json::from_str(&stdout(o)).unwrap();
        v["quantities"]
            .as_array()
            .unwrap()
            .iter()
            .find(|q| q["name"] == "t_heat")
            .unwrap()["si_value"]
            .as_f64()
            .unwrap()
    };
    assert!(t(&set) < t(&base));
    let bad = sheaf(&[
        "run",
        "worksheets/tank_heatup.sheaf",
        "--set",
        "P_heater=120 kPa",
    ]);
    assert_eq!(bad.status.code(), Some(2));
    assert!(stderr(&bad).contains("power"), "{}", stderr(&bad));
    let unknown = sheaf(&[
        "run",
        "worksheets/tank_heatup.sheaf",
        "--set",
        "P_heatr=1 kW",
    ]);
    assert_eq!(unknown.status.code(), Some(2));
}

#[test]
fn markdown_output_has_tables_and_the_caution() {
    let o = sheaf(&["run", "worksheets/air_receiver.sheaf", "--format", "md"]);
    let out = stdout(&o);
    assert!(out.starts_with("# Kestrel Fen"));
    assert!(out.contains("| input | `V_rec` |"), "{out}");
    assert!(out.contains("qualified engineer"));
}

#[test]
fn missing_file_is_a_usage_error() {
    let o = sheaf(&["run", "no/such/file.sheaf"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("cannot read"));
}

#[test]
fn help_shows_examples() {
    for args in [
        vec!["--help"],
        vec!["run", "--help"],
        vec!["eval", "--help"],
        vec!["units", "--help"],
    ] {
        let o = sheaf(&args);
        assert_eq!(o.status.code(), Some(0));
        assert!(stdout(&o).contains("Example"), "{args:?}: {}", stdout(&o));
    }
}

#[test]
fn units_lists_pressure_units() {
    let o = sheaf(&["units", "psi"]);
    assert_eq!(o.status.code(), Some(0));
    assert!(stdout(&o).contains("psig"));
}

#[test]
fn cell_reads_a_workbook_beside_the_worksheet_whatever_the_working_folder() {
    // Workbook a.xlsx is written by sheaf itself (its input cell for `len` is
    // the defined name `i_len`); b.sheaf reads it by that name. Both live in
    // a temporary folder; sheaf runs from the repository root.
    let dir = std::env::temp_dir().join(format!("sheaf-cell-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(
        dir.join("a.sheaf"),
        "# A\ninput len = 2.5 m\ninput n = 2\ncheck len > 0 m\n",
    )
    .unwrap();
    std::fs::write(
        dir.join("b.sheaf"),
        "# B\ninput x = cell(\"a.xlsx\", \"i_len\") * 1 m \"from the basis workbook\"\n\
         area = (x)^cell(\"a.xlsx\", \"i_n\")\ncheck x > 0 m\n",
    )
    .unwrap();
    let a = dir.join("a.sheaf");
    let o = sheaf(&["xlsx", a.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let b = dir.join("b.sheaf");
    let o = sheaf(&["run", b.to_str().unwrap(), "--format", "json"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    assert_eq!(v["quantities"][0]["si_value"].as_f64(), Some(2.5));
    // A cell inside a constant exponent is read before checking, relative
    // to the worksheet's folder (area = (2.5 m)^2).
    assert_eq!(v["quantities"][1]["si_value"].as_f64(), Some(6.25));
    assert_eq!(v["quantities"][1]["si_unit"].as_str(), Some("m^2"));
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn fmt_is_stable_on_the_examples_and_keeps_results() {
    // Formatting an example and formatting the result again give the same
    // text, and the formatted worksheet evaluates to the same json.
    let dir = std::env::temp_dir().join(format!("sheaf-fmt-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    for name in ["air_compressor", "steam_turbine", "tank_heatup"] {
        let src = format!("worksheets/{name}.sheaf");
        let once = sheaf(&["fmt", &src]);
        assert_eq!(once.status.code(), Some(0), "{}", stderr(&once));
        let copy = dir.join(format!("{name}.sheaf"));
        std::fs::write(&copy, &once.stdout).unwrap();
        let twice = sheaf(&["fmt", copy.to_str().unwrap()]);
        assert_eq!(
            stdout(&twice),
            stdout(&once),
            "{name}: fmt is not idempotent"
        );
        let a = sheaf(&["run", &src, "--format", "json"]);
        let b = sheaf(&["run", copy.to_str().unwrap(), "--format", "json"]);
        let qa: serde_json::Value = serde_json::from_str(&stdout(&a)).unwrap();
        let qb: serde_json::Value = serde_json::from_str(&stdout(&b)).unwrap();
        assert_eq!(qa["quantities"], qb["quantities"], "{name}");
    }
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn a_closed_output_pipe_is_not_a_panic() {
    // `sheaf run big.sheaf | head -1`: the reader goes away while sheaf is
    // still writing more than a pipe buffer holds.
    use std::io::Read;
    use std::process::Stdio;
    let dir = std::env::temp_dir().join(format!("sheaf-pipe-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let mut src = String::from("# big\n");
    for i in 0..4000 {
        src.push_str(&format!(
            "input x{i} = {i} kPa \"a long description to fill the pipe quickly\"\n"
        ));
    }
    let file = dir.join("big.sheaf");
    std::fs::write(&file, src).unwrap();
    let mut child = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .env("NO_COLOR", "1")
        .args(["run", file.to_str().unwrap()])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut first = [0u8; 16];
    child
        .stdout
        .as_mut()
        .unwrap()
        .read_exact(&mut first)
        .unwrap();
    drop(child.stdout.take());
    let mut err = String::new();
    child
        .stderr
        .take()
        .unwrap()
        .read_to_string(&mut err)
        .unwrap();
    let status = child.wait().unwrap();
    assert_ne!(status.code(), Some(101), "panicked: {err}");
    assert!(!err.contains("panicked"), "{err}");
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn cell_reads_are_confined_to_the_worksheets_folder_with_one_neutral_message() {
    // A workbook outside the worksheet's folder exists; a missing one does
    // not: both get the same message, so existence cannot be probed.
    let dir = std::env::temp_dir().join(format!("sheaf-confine-{}", std::process::id()));
    let sub = dir.join("calc");
    std::fs::create_dir_all(&sub).unwrap();
    std::fs::write(dir.join("a.sheaf"), "# A\ninput len = 2.5 m\n").unwrap();
    let o = sheaf(&["xlsx", dir.join("a.sheaf").to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let mut messages = Vec::new();
    for book in ["../a.xlsx", "../missing.xlsx", "/etc/passwd"] {
        std::fs::write(
            sub.join("b.sheaf"),
            format!("# B\ninput x = cell(\"{book}\", \"i_len\") * 1 m\n"),
        )
        .unwrap();
        let o = sheaf(&["run", sub.join("b.sheaf").to_str().unwrap()]);
        assert_eq!(o.status.code(), Some(1), "{book}: {}", stderr(&o));
        let e = stderr(&o);
        assert!(
            e.contains("not a readable file in the worksheet's folder"),
            "{e}"
        );
        messages.push(e.lines().next().unwrap_or_default().replace(book, "BOOK"));
    }
    assert_eq!(messages[0], messages[1]);
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn xlsx_exits_3_after_writing_when_a_check_fails() {
    let dir = std::env::temp_dir().join(format!("sheaf-cli-xlsx3-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let out = dir.join("tank.xlsx");
    let o = sheaf(&[
        "xlsx",
        "worksheets/tank_heatup.sheaf",
        "-o",
        out.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(3), "{}", stderr(&o));
    assert!(out.exists(), "the package is written before exit 3");
    assert!(stderr(&o).contains("failed"), "{}", stderr(&o));
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn eval_keeps_the_unit_typed_and_formats_states() {
    assert_eq!(stdout(&sheaf(&["eval", "3 bar"])).trim(), "3 bar");
    assert_eq!(
        stdout(&sheaf(&["eval", "20 degC + 10 K"])).trim(),
        "30 degC"
    );
    // A difference of two absolute temperatures is not shown in degC.
    assert_eq!(
        stdout(&sheaf(&["eval", "20 degC - 10 degC"])).trim(),
        "10 K"
    );
    let o = sheaf(&[
        "eval",
        "state(fluid(\"water\"), p: 3 MPa, T: 400 degC)",
        "--format",
        "json",
    ]);
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    let h = v["fields"]
        .as_array()
        .unwrap()
        .iter()
        .find(|f| f["name"] == "h")
        .unwrap();
    assert_eq!(h["unit"], "kJ/kg");
    assert_eq!(h["si_unit"], "J/kg");
    let o = sheaf(&[
        "eval",
        "state(fluid(\"water\"), p: 3 MPa, T: 400 degC)",
        "--format",
        "md",
    ]);
    assert!(stdout(&o).contains("| `.h` |"), "{}", stdout(&o));
}

#[test]
fn html_report_is_one_self_contained_page() {
    let o = sheaf(&["run", "worksheets/steam_turbine.sheaf", "--format", "html"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let html = stdout(&o);
    assert!(html.starts_with("<!DOCTYPE html>"));
    assert!(html.contains("@page { size: A4"), "print stylesheet");
    assert!(
        !html.contains("<script") && !html.contains("http"),
        "no network"
    );
    for part in [
        "NOT CHECKED",
        "<h2>State points</h2>",
        "<code>mdot * (st1.h - st2.h)</code>",
        "<h2>Checks</h2>",
        "IAPWS R7-97(2012)",
        "qualified engineer",
    ] {
        assert!(html.contains(part), "missing {part}");
    }
}
