//! Every example worksheet checks and evaluates without errors; the
//! acceptance checks come out as the examples intend.

mod xlsx_common;

use std::path::Path;

fn worksheets() -> Vec<std::path::PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("../worksheets");
    let mut v: Vec<_> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "sheaf"))
        .collect();
    v.sort();
    v
}

#[test]
fn every_example_runs_clean() {
    let all = worksheets();
    assert!(all.len() >= 8, "examples missing: {all:?}");
    for path in all {
        let mut m =
            xlsx_common::model_of(&path).unwrap_or_else(|d| panic!("{}: {d:#?}", path.display()));
        m.evaluate();
        assert!(
            m.runtime_errors().is_empty(),
            "{}: {:#?}",
            path.display(),
            m.runtime_errors()
        );
        let r = m.report();
        assert!(r.title.is_some(), "{} has no title", path.display());
        assert!(!r.checks.is_empty(), "{} has no checks", path.display());
        let failed: Vec<_> = r
            .checks
            .iter()
            .filter(|c| c.passed != Some(true))
            .map(|c| c.text.clone())
            .collect();
        let name = path.file_stem().unwrap().to_str().unwrap();
        if name == "tank_heatup" {
            // This example shows a failing check on purpose.
            assert_eq!(failed, ["dT <= 40 K"]);
        } else {
            assert!(failed.is_empty(), "{name}: failed checks {failed:?}");
        }
    }
}

#[test]
fn examples_describe_an_invented_plant_and_carry_metadata() {
    for path in worksheets() {
        let src = std::fs::read_to_string(&path).unwrap();
        assert!(src.contains("Kestrel Fen"), "{}", path.display());
        assert!(src.contains("meta prepared"), "{}", path.display());
    }
}
