//! The independent recalculation check: LibreOffice Calc recalculates the
//! packages of every worksheet and must reproduce the engine's numbers.
//! Needs LibreOffice (`soffice`); run it with `scripts/recalc-check`.
//! Without soffice the test fails loudly, it never passes silently.

mod xlsx_common;

use std::path::{Path, PathBuf};
use std::process::Command;

use sheaf_engine::xlsx::names::{self, NameKind};
use xlsx_common::*;

/// Relative tolerance. LibreOffice keeps full doubles in formulas but the
/// polynomial and logarithm evaluations of two libm implementations may
/// differ in the last bits; 1e-9 is far above that and far below any
/// engineering significance.
const REL: f64 = 1e-9;

fn recalc(files: &[PathBuf], outdir: &Path) {
    let prof = outdir.join("profile");
    std::fs::create_dir_all(prof.join("user")).unwrap();
    std::fs::write(
        prof.join("user/registrymodifications.xcu"),
        r#"<?xml version="1.0" encoding="UTF-8"?>
<oor:items xmlns:oor="http://openoffice.org/2001/registry" xmlns:xs="http://www.w3.org/2001/XMLSchema" xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance">
<item oor:path="/org.openoffice.Office.Calc/Formula/Load"><prop oor:name="OOXMLRecalcMode" oor:op="fuse"><value>0</value></prop></item>
</oor:items>
"#,
    )
    .unwrap();
    let recalc_dir = outdir.join("recalc");
    let out = Command::new("soffice")
        .arg(format!("-env:UserInstallation=file://{}", prof.display()))
        .args([
            "--headless",
            "--norestore",
            "--convert-to",
            "xlsx",
            "--outdir",
        ])
        .arg(&recalc_dir)
        .args(files)
        .output()
        .unwrap_or_else(|e| {
            panic!("LibreOffice (soffice) is needed for this check and could not be run: {e}")
        });
    assert!(
        out.status.success(),
        "soffice failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
}

/// Which rows are live formulas and which are flagged (by defined name).
fn basis(book: &Book, name: &str) -> String {
    book.basis(name)
}

/// The cover's status line (Cover!B4) as recalculated.
fn cover_status(book: &Book) -> String {
    match book.values.get(&("Cover".to_string(), 3, 1)) {
        Some(calamine::Data::String(s)) => s.clone(),
        other => panic!("cover status: {other:?}"),
    }
}

#[test]
#[ignore = "needs LibreOffice: run scripts/recalc-check"]
fn libreoffice_reproduces_the_engine() {
    let dir = tmp_dir("xlsx-recalc");
    let sheets = worksheets();
    // Packages as written, and one edited copy per worksheet (its last
    // number input raised by 10 % plus 0.5).
    let mut files = Vec::new();
    // (worksheet, input edited, new value, edited package)
    let mut edits = Vec::new();
    let mut with_use = 0;
    for (k, ws) in sheets.iter().enumerate() {
        let (src, m) = load(ws);
        let out = dir.join(format!("p{k}.xlsx"));
        write(ws, &src, &m, &out);
        files.push(out.clone());
        let book = Book::read(&out);
        let input = m
            .nodes()
            .iter()
            .filter_map(|n| n.name.as_ref().map(|x| x.name.clone()))
            .rfind(|n| {
                book.names
                    .iter()
                    .any(|(d, _)| *d == names::name_of(NameKind::Input, n))
            })
            .expect("an input");
        // A worksheet with `use`: also an input of the used worksheet that
        // feeds both live formulas and the used worksheet's own results.
        let mut inputs = vec![input];
        if !m.used_files().is_empty() {
            with_use += 1;
            if m.node_index("site.T_cw").is_some() {
                inputs.push("site.T_cw".to_string());
            }
        }
        for (e, input) in inputs.into_iter().enumerate() {
            let ipos = book.pos(&names::name_of(NameKind::Input, &input)).clone();
            let old = book.number(&ipos).unwrap();
            let new = old * 1.1 + 0.5;
            let cell = format!(
                "{}{}",
                sheaf_engine::xlsx::reader::col_letters(ipos.col),
                ipos.row + 1
            );
            let edited = dir.join(format!("e{k}_{e}.xlsx"));
            edit_number(&out, &edited, 1, &cell, new);
            files.push(edited);
            edits.push((k, input, new, format!("recalc/e{k}_{e}.xlsx")));
        }
    }
    assert!(with_use > 0, "no example worksheet uses another");
    assert!(
        edits.len() > sheets.len(),
        "no input of a used worksheet was edited"
    );
    // A package written with an override (`sheaf xlsx --set 'p2=5 barg'`):
    // its input cells hold the value the engine used.
    let set_ws = root().join("worksheets/steam_turbine.sheaf");
    let set_src = std::fs::read_to_string(&set_ws).unwrap();
    let mut set_model = sheaf_engine::Model::new(set_src.clone()).unwrap();
    set_model.set_input_text("p2", "5 barg").unwrap();
    set_model.evaluate();
    let set_out = dir.join("set.xlsx");
    write(&set_ws, &set_src, &set_model, &set_out);
    files.push(set_out);
    recalc(&files, &dir);
    {
        let book = Book::read(&dir.join("recalc/set.xlsx"));
        let mut n = 0;
        for (name, pos) in &book.names {
            let Some(engine) = engine_value(&set_model, name) else {
                continue;
            };
            let got = book.number(pos).unwrap();
            assert!(
                close(got, engine, REL),
                "--set package: {name}: LibreOffice {got}, engine {engine}"
            );
            n += 1;
        }
        assert!(n > 30, "{n}");
        let p2 = book.pos(&names::name_of(NameKind::Input, "p2"));
        assert_eq!(book.number(p2), Some(5.0));
        let d = book.pos(&names::name_of(NameKind::Differs, "p2"));
        assert_eq!(book.number(d), Some(0.0), "no stale flag for the override");
        let status = cover_status(&book);
        assert!(status.starts_with("all 3 checks pass"), "{status}");
    }

    let mut compared = 0;
    let mut flagged = 0;
    for (k, ws) in sheets.iter().enumerate() {
        let (_, m) = load(ws);
        // 1. As written: every live formula equals the engine's value.
        let book = Book::read(&dir.join(format!("recalc/p{k}.xlsx")));
        if ws.ends_with("fuel_gas_booster.sheaf") {
            // The gas_mix mixture's states are live formulas.
            let h = book.pos(&names::field_name("st1", "h"));
            let f = book.formula(h).cloned().unwrap_or_default();
            assert!(f.contains("ng_mix"), "fuel-gas st1.h: {f:?}");
        }
        for (name, pos) in &book.names {
            let Some(engine) = engine_value(&m, name) else {
                continue;
            };
            let got = book.number(pos).unwrap_or_else(|| {
                panic!(
                    "{}: {name} = {:?} after recalculation",
                    ws.display(),
                    book.value(pos)
                )
            });
            assert!(
                close(got, engine, REL),
                "{}: {name}: LibreOffice {got}, engine {engine}",
                ws.display()
            );
            compared += 1;
        }
    }
    for (k, input, new_display, recalculated) in &edits {
        let ws = &sheets[*k];
        let (_, m) = load(ws);
        // 2. Edited input: closed forms follow the engine; engine-only rows
        // (and rows using them) are flagged stale.
        let mut m2 = load(ws).1;
        let i = m2.node_index(input).unwrap();
        let (sh, _) = sheaf_engine::xlsx::input_shown(&m2, i).unwrap();
        m2.set_input(input, new_display * sh.factor + sh.offset)
            .unwrap();
        m2.evaluate();
        let book = Book::read(&dir.join(recalculated));
        let mut changed = 0;
        for (name, pos) in &book.names {
            let Some(engine) = engine_value(&m2, name) else {
                continue;
            };
            let Some(before) = engine_value(&m, name) else {
                continue;
            };
            let flag = book.text(&book.flag_pos(name)).unwrap_or_default();
            let depends = before != engine;
            match basis(&book, name).as_str() {
                "engine" if depends => {
                    assert!(
                        flag.starts_with("stale"),
                        "{}: {name} must be flagged stale",
                        ws.display()
                    );
                    flagged += 1;
                }
                _ if flag.starts_with("stale") => flagged += 1,
                _ => {
                    let got = book.number(pos).unwrap();
                    assert!(
                        close(got, engine, REL),
                        "{}: after editing {input}: {name}: LibreOffice {got}, engine {engine}",
                        ws.display()
                    );
                    if depends {
                        changed += 1;
                    }
                }
            }
        }
        assert!(
            changed > 0,
            "{}: editing {input} changed no closed-form result",
            ws.display()
        );
        // The cover's live status says the results are stale.
        let status = cover_status(&book);
        assert!(
            status.starts_with("results stale"),
            "{}: cover status after an edit: {status}",
            ws.display()
        );
        // The data sheet records the edit.
        let d = book.pos(&names::name_of(NameKind::Differs, input));
        assert_eq!(book.number(d), Some(1.0), "{}", ws.display());
    }
    assert!(compared > 50, "{compared}");
    assert!(flagged > 0, "no stale flag was exercised");
    eprintln!("recalc-check: {compared} values compared, {flagged} stale flags");
}
