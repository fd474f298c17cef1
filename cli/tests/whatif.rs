//! `sheaf run --case/--cases` and `sheaf sweep` as a user runs them:
//! output keys, values and exit statuses.

use std::path::Path;
use std::process::{Command, Output};

fn sheaf(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(Path::new(env!("CARGO_MANIFEST_DIR")).join(".."))
        .env("NO_COLOR", "1")
        .args(args)
        .output()
        .unwrap()
}

const EX: &str = "worksheets/plant_air_whatif.sheaf";

fn json(o: &Output) -> serde_json::Value {
    serde_json::from_slice(&o.stdout)
        .unwrap_or_else(|e| panic!("{e}: {}", String::from_utf8_lossy(&o.stdout)))
}

#[test]
fn cases_side_by_side() {
    let o = sheaf(&["run", EX, "--cases"]);
    // hot_day fails the discharge temperature check: exit 3.
    assert_eq!(
        o.status.code(),
        Some(3),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let text = String::from_utf8_lossy(&o.stdout);
    let head = text.lines().find(|l| l.contains("quantity")).unwrap();
    for c in ["base", "design_day", "hot_day", "high_header"] {
        assert!(head.contains(c), "{head}");
    }
    let t1 = text
        .lines()
        .find(|l| l.trim_start().starts_with("T1 "))
        .unwrap();
    assert!(t1.contains("36 *"), "{t1}");
    assert!(text.contains("FAIL"));

    let o = sheaf(&["run", EX, "--cases", "--format", "json"]);
    assert_eq!(o.status.code(), Some(3));
    let j = json(&o);
    assert!(j["title"].as_str().unwrap().contains("C-3"));
    let cases = j["cases"].as_array().unwrap();
    assert_eq!(cases[0]["name"], "base");
    assert_eq!(cases.len(), 4);
    for c in cases {
        for k in ["name", "description", "quantities", "checks"] {
            assert!(c.get(k).is_some(), "{k}");
        }
    }
    let hot = &cases[2];
    let t1 = hot["quantities"]
        .as_array()
        .unwrap()
        .iter()
        .find(|q| q["name"] == "T1")
        .unwrap();
    assert_eq!(t1["value"], 36.0);
    assert_eq!(t1["overridden"], true);
    let p_lim = hot["quantities"]
        .as_array()
        .unwrap()
        .iter()
        .find(|q| q["name"] == "p_lim")
        .unwrap();
    assert_eq!(p_lim["kind"], "found");
    for k in ["low", "high", "iterations", "residual"] {
        assert!(p_lim["found"].get(k).is_some(), "{k}");
    }
    assert!(
        hot["checks"]
            .as_array()
            .unwrap()
            .iter()
            .any(|c| c["passed"] == false)
    );
    assert!(j["warnings"].is_array());

    let o = sheaf(&["run", EX, "--cases", "--format", "md"]);
    let md = String::from_utf8_lossy(&o.stdout);
    assert!(
        md.contains("| quantity | unit | base | design_day | hot_day | high_header |"),
        "{md}"
    );
}

#[test]
fn run_one_case() {
    let o = sheaf(&["run", EX, "--case", "design_day"]);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let o = sheaf(&["run", EX, "--case", "hot_day", "--format", "json"]);
    assert_eq!(o.status.code(), Some(3));
    let o = sheaf(&["run", EX, "--case", "nope"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("hot_day"));
    // A found input cannot be set.
    let o = sheaf(&["run", EX, "--set", "p_lim=3 barg"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("solved by"));
}

#[test]
fn sweep_csv_and_json() {
    let o = sheaf(&["sweep", EX, "--format", "csv"]);
    // The high end of the sweep exceeds the discharge limit: exit 3.
    assert_eq!(
        o.status.code(),
        Some(3),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let csv = String::from_utf8_lossy(&o.stdout);
    let lines: Vec<&str> = csv.lines().collect();
    assert_eq!(lines[0], "p2 [barg],T2 [degC],W [kW],r_p");
    assert_eq!(lines.len(), 14);
    let first: Vec<f64> = lines[1].split(',').map(|x| x.parse().unwrap()).collect();
    assert_eq!(first[0], 2.0);
    // r_p = (2 barg + 1.01325 bar) / 0.985 bar.
    assert!((first[3] - 3.01325 / 0.985).abs() < 1e-12, "{}", first[3]);

    let o = sheaf(&["sweep", EX, "--format", "json"]);
    let j = json(&o);
    let s = &j["sweeps"][0];
    assert_eq!(s["input"], "p2");
    assert_eq!(s["unit"], "barg");
    assert_eq!(s["values"].as_array().unwrap().len(), 13);
    let cols = s["columns"].as_array().unwrap();
    assert_eq!(cols.len(), 3);
    for c in cols {
        for k in ["name", "unit", "values"] {
            assert!(c.get(k).is_some(), "{k}");
        }
    }
    assert_eq!(cols[0]["unit"], "degC");
    assert!(s["failed"].as_array().unwrap().is_empty());
}

#[test]
fn sweep_with_a_failing_point_exits_1_after_every_point() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("f.sheaf");
    std::fs::write(
        &f,
        "# f\ninput x = 1\ny = 1 / (x - 2)\ncheck y < 10\nsweep x over 1, 2, 3 show y\n",
    )
    .unwrap();
    let o = sheaf(&["sweep", f.to_str().unwrap(), "--format", "json"]);
    assert_eq!(o.status.code(), Some(1));
    let j = json(&o);
    let s = &j["sweeps"][0];
    assert_eq!(
        s["columns"][0]["values"],
        serde_json::json!([-1.0, null, 1.0])
    );
    assert_eq!(s["failed"][0]["index"], 1);
    assert!(
        s["failed"][0]["message"]
            .as_str()
            .unwrap()
            .contains("division by zero")
    );
    let o = sheaf(&["sweep", f.to_str().unwrap(), "--format", "csv"]);
    assert_eq!(o.status.code(), Some(1));
    assert_eq!(String::from_utf8_lossy(&o.stdout), "x,y\n1,-1\n2,\n3,1\n");
}
