//! The xlsx package through the engine API: cached values equal the
//! engine's, the pull round trip equals editing the text, `cell()` reads
//! workbooks with located errors.

mod xlsx_common;

use sheaf_engine::Model;
use sheaf_engine::xlsx::names::{self, NameKind};
use sheaf_engine::xlsx::{pull_changes, read_inputs, rewrite_inputs};
use xlsx_common::*;

#[test]
fn cached_values_equal_engine_values() {
    let dir = tmp_dir("xlsx-cached");
    let sheets = worksheets();
    assert!(sheets.len() >= 3, "{sheets:?}");
    for ws in sheets {
        let (src, m) = load(&ws);
        let out = dir.join("p.xlsx");
        write(&ws, &src, &m, &out);
        let book = Book::read(&out);
        let mut n = 0;
        for (name, pos) in &book.names {
            let Some(engine) = engine_value(&m, name) else {
                continue;
            };
            let cached = book
                .number(pos)
                .unwrap_or_else(|| panic!("{}: {name} has no number", ws.display()));
            // The cached value is the engine's f64 written in shortest
            // round-trip form: exact.
            assert_eq!(cached, engine, "{}: {name}", ws.display());
            n += 1;
        }
        // Every numeric node and field has its SI cell.
        let numbers = m
            .nodes()
            .iter()
            .filter(|x| x.name.is_some() && m.number(&x.name.as_ref().unwrap().name).is_some())
            .count();
        assert!(
            n >= numbers,
            "{}: {n} named values, {numbers} numbers",
            ws.display()
        );
        // Package information and the caution are present.
        let sha = book.pos(sheaf_engine::xlsx::NAME_SHA);
        assert_eq!(
            book.text(sha).unwrap(),
            sheaf_engine::xlsx::sha256_hex(src.as_bytes())
        );
        assert!(
            book.values
                .values()
                .any(|v| matches!(v, calamine::Data::String(s) if s == sheaf_engine::CAUTION))
        );
    }
}

#[test]
fn thermo_rows_are_live_where_a_closed_form_exists() {
    let ws = root().join("tests/data/xlsx_thermo.sheaf");
    let (src, m) = load(&ws);
    let dir = tmp_dir("xlsx-live");
    let out = dir.join("t.xlsx");
    write(&ws, &src, &m, &out);
    let book = Book::read(&out);
    let basis = |name: &str| -> String { book.basis(name) };
    // Perfect gas and incompressible devices are closed forms.
    for n in [
        "f_st2_T",
        "f_st2_h",
        "f_st2s_T",
        "f_st3_s",
        "f_w2_T",
        "q1_W_dot",
        "f_cold_k",
        "q_ex_flow",
        "q_ds_w",
        "q1_V_jet",
    ] {
        assert_eq!(basis(n), "formula", "{n}");
    }
    // Ideal gas at (T, p): the polynomial on the data sheet.
    assert_eq!(basis("f_g1_h"), "formula");
    assert!(
        book.formula(book.pos("f_g1_h"))
            .unwrap()
            .contains("ng_air_lo_a1")
    );
    assert_eq!(basis("q_ds_air"), "formula");
    // Ideal-gas compressor outlet: an inversion, engine-only with a flag.
    assert_eq!(basis("f_g2_T"), "engine");
    let flag = book.flag_pos("f_g2_T");
    let f = book.formula(&flag).unwrap();
    assert!(f.contains("d1_T_g") && f.contains("d_p_g"), "{f}");
    // A live row computed from an engine value is flagged too.
    assert!(
        book.formula(&book.flag_pos("q_dh_g"))
            .unwrap()
            .contains("d1_T_g")
    );
    // T1 and t1 get distinct names.
    assert_ne!(book.pos("q1_T1"), book.pos("q_t1"));
}

/// Edit an input in the package, pull it, rewrite the text: the results
/// equal those of editing the text directly.
#[test]
fn pull_round_trip_equals_editing_the_text() {
    let dir = tmp_dir("xlsx-pull");
    for (ws, input, new_display, text_edit) in [
        (
            "worksheets/tank_heatup.sheaf",
            "T_target",
            60.0,
            ("input T_target = 55 degC", "input T_target = 60 degC"),
        ),
        (
            "worksheets/air_receiver.sheaf",
            "p_high",
            9.25,
            ("input p_high = 8.5 barg", "input p_high = 9.25 barg"),
        ),
        (
            "tests/data/xlsx_thermo.sheaf",
            "eta_c",
            0.75,
            ("input eta_c = 0.80", "input eta_c = 0.75"),
        ),
    ] {
        let path = root().join(ws);
        let (src, m) = load(&path);
        let out = dir.join("pkg.xlsx");
        write(&path, &src, &m, &out);
        let book = Book::read(&out);
        let ipos = book.pos(&names::name_of(NameKind::Input, input)).clone();
        let cell = format!(
            "{}{}",
            sheaf_engine::xlsx::reader::col_letters(ipos.col),
            ipos.row + 1
        );
        let edited = dir.join("reviewed.xlsx");
        // Sheets: Cover (1), Calculation (2), Data (3).
        edit_number(&out, &edited, 1, &cell, new_display);
        let reviewed = read_inputs(&std::fs::read(&edited).unwrap()).unwrap();
        assert_eq!(
            reviewed.source_sha256.as_deref(),
            Some(sheaf_engine::xlsx::sha256_hex(src.as_bytes()).as_str())
        );
        let changes = pull_changes(&m, &reviewed);
        assert_eq!(changes.len(), 1, "{ws}: {changes:?}");
        assert_eq!(changes[0].name, input);
        assert_eq!(changes[0].new, new_display);
        let pulled = rewrite_inputs(&src, &changes);
        let direct = src.replacen(text_edit.0, text_edit.1, 1);
        assert_ne!(direct, src, "{ws}: the text edit must apply");
        assert_eq!(pulled, direct, "{ws}");
        let mut a = Model::new(pulled).unwrap();
        a.evaluate();
        let mut b = Model::new(direct).unwrap();
        b.evaluate();
        assert_eq!(a.values(), b.values());
    }
}

#[test]
fn cell_values_come_from_the_caller_before_checking() {
    // The engine reads no files: the caller reads the cells the worksheet
    // asks for and hands them in; a failure to read one is a located
    // check-time error at the call.
    let src = "input p_site = cell(\"basis.xlsx\", \"Site!C7\") * 1 kPa\n\
               A = (2 m)^cell(\"basis.xlsx\", \"n\")\n\
               input p_n = cell(\"basis.xlsx\", \"site_p\") * 1 kPa\n";
    let parsed = sheaf_engine::Parsed::new(src).unwrap();
    let req = parsed.cell_requests();
    assert_eq!(req.len(), 3);
    let mut ext = sheaf_engine::Externals::none();
    ext.set_cell("basis.xlsx", "Site!C7", Ok(96.5));
    ext.set_cell("basis.xlsx", "n", Ok(2.0));
    ext.set_cell("basis.xlsx", "site_p", Ok(96.5));
    let mut m = parsed.clone().check(&ext).unwrap();
    m.evaluate();
    assert_eq!(m.number("p_site"), Some(96_500.0));
    assert_eq!(m.number("p_n"), Some(96_500.0));
    // A cell feeds a constant exponent: (2 m)^2 is an area.
    assert_eq!(m.number("A"), Some(4.0));
    // Display unit from the literal unit.
    let r = m.report();
    let q = r.blocks.iter().find_map(|b| match b {
        sheaf_engine::report::Block::Quantity(q) if q.name == "p_site" => Some(q.clone()),
        _ => None,
    });
    assert_eq!(q.unwrap().unit, "kPa");

    ext.set_cell("basis.xlsx", "site_p", Err("the cell holds text".into()));
    let errs = parsed.check(&ext).unwrap_err();
    assert_eq!(errs.len(), 1);
    assert_eq!(errs[0].message, "the cell holds text");
    let span = errs[0].span().unwrap();
    assert_eq!(
        &src[span.start..span.end],
        "cell(\"basis.xlsx\", \"site_p\")"
    );
    // Without values (e.g. `sheaf eval`), a cell() call is a located error.
    assert!(Model::new("input y = cell(\"a.xlsx\", \"A1\")\n").is_err());
    // Typing: the arguments must be string literals.
    assert!(Model::new("input y = cell(2, \"A1\")\n").is_err());
}

/// A reviewer who changes an input's Unit cell (barg -> psig) gets the
/// number converted into the worksheet's unit, and is told so.
#[test]
fn pull_reads_the_unit_column() {
    use std::io::{Read, Write};
    let dir = tmp_dir("xlsx-pull-unit");
    let path = root().join("worksheets/air_receiver.sheaf");
    let (src, m) = load(&path);
    let out = dir.join("pkg.xlsx");
    write(&path, &src, &m, &out);
    // Every "barg" text in the package becomes "psig" (shared strings).
    let mut zin = zip::ZipArchive::new(std::fs::File::open(&out).unwrap()).unwrap();
    let mut zout = zip::ZipWriter::new(std::io::Cursor::new(Vec::new()));
    let mut edited = false;
    for k in 0..zin.len() {
        let mut e = zin.by_index(k).unwrap();
        let name = e.name().unwrap().to_string();
        let mut buf = Vec::new();
        e.read_to_end(&mut buf).unwrap();
        if name == "xl/sharedStrings.xml" {
            let xml = String::from_utf8(buf).unwrap();
            edited = xml.contains(">barg<");
            buf = xml.replace(">barg<", ">psig<").into_bytes();
        }
        zout.start_file(name, zip::write::SimpleFileOptions::default())
            .unwrap();
        zout.write_all(&buf).unwrap();
    }
    assert!(edited, "the package has a barg unit cell");
    let bytes = zout.finish().unwrap().into_inner();
    let reviewed = read_inputs(&bytes).unwrap();
    let changes = pull_changes(&m, &reviewed);
    let c = changes
        .iter()
        .find(|c| c.name == "p_high")
        .expect("p_high changed");
    // 8.5 psig = 8.5 x 6894.757 Pa (NIST SP 811 B.8) above 1 atm
    // = 0.586 054 bar above 1 atm.
    assert!((c.new - 0.586_054).abs() < 1e-5, "{}", c.new);
    assert_eq!(c.unit, "barg");
    assert!(c.note.as_deref().unwrap_or("").contains("psig"), "{c:?}");
    assert!(c.literal.is_some());
}

/// The XML of one part of an xlsx (zip) file.
fn part(path: &std::path::Path, name: &str) -> String {
    use std::io::Read;
    let mut z = zip::ZipArchive::new(std::fs::File::open(path).unwrap()).unwrap();
    let mut s = String::new();
    z.by_name(name).unwrap().read_to_string(&mut s).unwrap();
    s
}

/// What a printed, reviewed package needs beyond values: page setup on
/// every sheet, row heights for wrapped text, number formats, protection
/// with only the inputs unlocked, flag formulas caching text, the cover's
/// status and review mark, and an override recorded where it is used.
#[test]
fn package_layout_protection_and_overrides_read_back() {
    let ws = root().join("worksheets/steam_turbine.sheaf");
    let (src, _) = load(&ws);
    let mut m = Model::new(src.clone()).unwrap();
    m.set_input_text("p2", "5 barg").unwrap();
    m.evaluate();
    let dir = tmp_dir("xlsx-layout");
    let out = dir.join("set.xlsx");
    write(&ws, &src, &m, &out);

    // Sheets: Cover, Calculation, Data.
    for (k, landscape) in [(1, false), (2, false), (3, true)] {
        let xml = part(&out, &format!("xl/worksheets/sheet{k}.xml"));
        assert!(xml.contains("paperSize=\"9\""), "sheet{k}: A4");
        assert!(xml.contains("fitToHeight=\"0\""), "sheet{k}: fit to width");
        assert_eq!(
            xml.contains("orientation=\"landscape\""),
            landscape,
            "sheet{k}"
        );
        assert!(xml.contains("<sheetProtection"), "sheet{k}: protected");
        assert!(!xml.contains("password"), "sheet{k}: no password");
    }
    let calc = part(&out, "xl/worksheets/sheet2.xml");
    // Rows with wrapped text are taller than one line.
    let tall = calc
        .split("<row ")
        .filter(|r| r.contains("customHeight=\"1\""))
        .count();
    assert!(tall >= 2, "{tall} rows with a fitted height");
    // Every flag formula caches text (empty), never the number 0.
    let mut flags = 0;
    for c in calc.split("<c ").skip(1) {
        if c.contains("<f>IF(OR(") {
            assert!(c.contains("t=\"str\""), "flag cell caches a number: {c}");
            assert!(c.contains("<v></v>"), "{c}");
            flags += 1;
        }
    }
    assert!(flags > 0);
    // The data sheet's sha256 cell spans columns, so it prints whole.
    let data = part(&out, "xl/worksheets/sheet3.xml");
    assert!(
        data.contains("<mergeCell ref=\"B4:H4\"/>"),
        "sha256 cell merged"
    );
    // Number formats: display values rounded, SI values readable; inputs
    // unlocked.
    let styles = part(&out, "xl/styles.xml");
    assert!(styles.contains("formatCode=\"0.000\""), "display format");
    assert!(styles.contains("formatCode=\"0.0000\""), "SI format");
    assert!(styles.contains("locked=\"0\""), "unlocked input cells");

    let book = Book::read(&out);
    // The input cell holds the override, the data sheet says where from.
    let p2 = book.pos(&names::name_of(NameKind::Input, "p2")).clone();
    assert_eq!(book.number(&p2), Some(5.0));
    let u = book.pos(&names::name_of(NameKind::Recorded, "p2")).clone();
    assert_eq!(book.number(&u), Some(5.0));
    assert_eq!(
        book.text(&Book::at(&u, 4)).as_deref(),
        Some("5 barg (command line (--set))")
    );
    let cover_text = |r: u32, c: u32| match book.values.get(&("Cover".to_string(), r, c)) {
        Some(calamine::Data::String(s)) => s.clone(),
        other => format!("{other:?}"),
    };
    assert_eq!(cover_text(3, 1), "all 3 checks pass");
    assert!(cover_text(4, 1).starts_with("NOT CHECKED"));
    assert!(
        book.values
            .values()
            .any(|v| matches!(v, calamine::Data::String(s) if s == "5 barg, from the command line (--set); the worksheet says 4.5 barg")),
        "the cover names the override"
    );
    // Method and sources on the cover.
    assert!(book.values.values().any(
        |v| matches!(v, calamine::Data::String(s) if s.contains("IAPWS R7-97(2012)") && s.contains("triple point"))
    ));
    // The IF97 results were computed at 5 barg.
    let st2p = book.pos("f_st2_p").clone();
    assert_eq!(book.number(&st2p), Some(601_325.0));
}
