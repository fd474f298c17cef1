//! `gauge` (reference pressure of gauge units) and `use` (names of another
//! worksheet as PREFIX.NAME) through the engine API.

use sheaf_engine::{Externals, Model, Parsed, UsedSource};

fn model(src: &str) -> Model {
    let mut m = Model::new(src).unwrap_or_else(|e| panic!("{e:?}"));
    m.evaluate();
    m
}

#[test]
fn zero_barg_at_a_95_kpa_site_is_95_kpa_absolute() {
    // Definition of gauge pressure: absolute = gauge + reference.
    let m = model(
        "gauge 95 kPa \"site barometric pressure\"\ninput p = 0 barg\ninput q = 0.1 MPag\n\
         input r = 10 psig\np_abs : kPa = p\nq_abs : kPa = q\nr_abs : Pa = r\n",
    );
    assert!((m.number("p").unwrap() - 95_000.0).abs() < 1e-9);
    assert!((m.number("q_abs").unwrap() - 195_000.0).abs() < 1e-9);
    // 1 psi = 6894.757293168 Pa (NIST SP 811, B.8, lbf/in^2).
    assert!((m.number("r").unwrap() - (95_000.0 + 68_947.572_931_68)).abs() < 1e-6);
    assert_eq!(m.gauge_reference().si, 95_000.0);
    assert!(m.uses_gauge());
    let r = m.report();
    assert!(r.uses_gauge);
    assert_eq!(
        r.gauge_note(),
        "Gauge pressures (barg, psig, kPag, MPag) are relative to 95 kPa (site barometric pressure)."
    );
    // Shown back in the unit it was written in: 0 barg.
    let row = r
        .blocks
        .iter()
        .find_map(|b| match b {
            sheaf_engine::report::Block::Quantity(q) if q.name == "p" => Some(q.clone()),
            _ => None,
        })
        .unwrap();
    assert_eq!(row.value, Some(0.0));
}

#[test]
fn default_reference_and_detection_from_units() {
    // Standard atmosphere, 101.325 kPa (CGPM 1954).
    let m = model("input p = 1 MPag\n");
    assert!((m.number("p").unwrap() - 1_101_325.0).abs() < 1e-6);
    assert!(m.report().gauge_note().contains("101.325 kPa"));
    // A comment that mentions barg is not a gauge unit.
    let m = model("// 8 barg in the old design\ninput p = 8 bar\n");
    assert!(!m.uses_gauge());
    assert!(!m.report().uses_gauge);
    assert_eq!(m.report().gauge_note(), "");
}

#[test]
fn set_uses_the_worksheet_reference() {
    let mut m = model("gauge 0.9 bar\ninput p = 2 barg\n");
    m.set_input_text("p", "1 barg").unwrap();
    m.evaluate();
    assert!((m.number("p").unwrap() - 190_000.0).abs() < 1e-9);
}

#[test]
fn gauge_errors_are_located() {
    let err = |src: &str| Model::new(src).unwrap_err();
    let e = err("gauge 95 kPa\ngauge 96 kPa\n");
    assert_eq!(e.len(), 1);
    assert!(e[0].message.contains("one `gauge`"), "{}", e[0].message);
    assert_eq!(e[0].span().unwrap().start, "gauge 95 kPa\ngauge ".len());
    let e = err("input a = 95 kPa\ngauge a\n");
    assert!(e[0].message.contains("constant"), "{}", e[0].message);
    let e = err("gauge 20 degC\n");
    assert!(e[0].message.contains("pressure"), "{}", e[0].message);
    let e = err("gauge 1 barg\n");
    assert!(e[0].message.contains("absolute unit"), "{}", e[0].message);
    let e = err("gauge -1 kPa\n");
    assert!(e[0].message.contains("above zero"), "{}", e[0].message);
}

fn used(name: &str, text: &str, ext: Externals) -> Result<UsedSource, String> {
    Ok(UsedSource {
        name: name.into(),
        path: format!("/x/{name}"),
        text: text.into(),
        externals: ext,
    })
}

const SITE: &str = "# Site\ngauge 95 kPa \"site\"\ninput T_amb = 25 degC \"ambient\"\ninput p_set = 0 barg\n\
gas = ideal_gas(\"air\")\namb = state(gas, T: T_amb, p: p_set)\ncheck T_amb <= 40 degC \"cooler limit\"\n";

fn with_site(src: &str) -> Model {
    let parsed = Parsed::new(src).unwrap();
    let mut ext = Externals::none();
    ext.set_used("site.sheaf", used("site.sheaf", SITE, Externals::none()));
    let mut m = parsed.check(&ext).unwrap_or_else(|e| panic!("{e:?}"));
    m.evaluate();
    m
}

#[test]
fn used_names_overrides_and_report() {
    let src = "use \"site.sheaf\" as site\ninput p2 = 5 barg\ndT = site.T_amb - 20 degC\n\
               h = site.amb.h\np_site : kPa = site.p_set\n";
    let mut m = with_site(src);
    // The used worksheet keeps its own gauge reference (95 kPa) while this
    // one keeps the standard atmosphere.
    assert!((m.number("p_site").unwrap() - 95_000.0).abs() < 1e-9);
    assert!((m.number("p2").unwrap() - 601_325.0).abs() < 1e-9);
    assert!((m.number("dT").unwrap() - 5.0).abs() < 1e-9);
    assert!(m.number("site.T_amb").is_some());
    let h1 = m.number("h").unwrap();
    // --set PREFIX.NAME overrides a used input.
    m.set_input_text("site.T_amb", "35 degC").unwrap();
    m.evaluate();
    assert!((m.number("dT").unwrap() - 15.0).abs() < 1e-9);
    assert!(m.number("h").unwrap() > h1);
    let r = m.report();
    let names: Vec<String> = r
        .blocks
        .iter()
        .filter_map(|b| match b {
            sheaf_engine::report::Block::Quantity(q) => Some(q.name.clone()),
            _ => None,
        })
        .collect();
    assert_eq!(
        names,
        [
            "site.T_amb",
            "site.p_set",
            "site.gas",
            "site.amb",
            "p2",
            "dT",
            "h",
            "p_site"
        ]
    );
    // The used worksheet's check, under its prefix.
    assert_eq!(r.checks.len(), 1);
    assert_eq!(r.checks[0].text, "site: T_amb <= 40 degC");
    assert_eq!(r.checks[0].passed, Some(true));
    // Both references are stated.
    assert_eq!(r.gauge_notes.len(), 2, "{:?}", r.gauge_notes);
    assert!(r.gauge_notes[1].contains("`site`") && r.gauge_notes[1].contains("95 kPa"));
    assert_eq!(r.used_files.len(), 1);
    assert_eq!(r.used_files[0].name, "site.sheaf");
    assert_eq!(r.used_files[0].sha256.len(), 64);
    let over = r.blocks.iter().find_map(|b| match b {
        sheaf_engine::report::Block::Quantity(q) if q.name == "site.T_amb" => q.overridden.clone(),
        _ => None,
    });
    assert_eq!(over.as_deref(), Some("command line (--set)"));
}

#[test]
fn errors_of_used_worksheets_are_located_there() {
    let parsed = Parsed::new("# a\nuse \"bad.sheaf\" as b\nx = b.y * 2\n").unwrap();
    let mut ext = Externals::none();
    ext.set_used(
        "bad.sheaf",
        used(
            "bad.sheaf",
            "input y = 2 m\nz = y + 1 s\n",
            Externals::none(),
        ),
    );
    let e = parsed.check(&ext).unwrap_err();
    assert_eq!(e.len(), 1, "{e:?}");
    assert!(
        e[0].message.starts_with("in bad.sheaf:2:5: cannot add"),
        "{}",
        e[0].message
    );
    assert_eq!(e[0].span().unwrap().start, "# a\nuse ".len());
    // An unknown name of a used worksheet.
    let parsed = Parsed::new("use \"site.sheaf\" as site\nx = site.T_amp\n").unwrap();
    let mut ext = Externals::none();
    ext.set_used("site.sheaf", used("site.sheaf", SITE, Externals::none()));
    let e = parsed.check(&ext).unwrap_err();
    assert!(e[0].message.contains("`site.T_amp`"), "{}", e[0].message);
    assert!(
        e[0].notes.iter().any(|n| n.contains("site.T_amb")),
        "{:?}",
        e[0].notes
    );
    // A cycle found by the caller is a located error at the use.
    let parsed = Parsed::new("use \"a.sheaf\" as a\n").unwrap();
    let mut ext = Externals::none();
    ext.set_used(
        "a.sheaf",
        Err("cycle of `use`: main.sheaf -> a.sheaf -> main.sheaf".into()),
    );
    let e = parsed.check(&ext).unwrap_err();
    assert!(e[0].message.contains("cycle"), "{}", e[0].message);
    // One prefix used twice; a name equal to a prefix.
    let parsed =
        Parsed::new("use \"site.sheaf\" as s\nuse \"site.sheaf\" as s\ninput s = 1\n").unwrap();
    let mut ext = Externals::none();
    ext.set_used("site.sheaf", used("site.sheaf", SITE, Externals::none()));
    let e = parsed.check(&ext).unwrap_err();
    let msgs: Vec<&str> = e.iter().map(|d| d.message.as_str()).collect();
    assert!(msgs.iter().any(|m| m.contains("used twice")), "{msgs:?}");
    assert!(
        msgs.iter()
            .any(|m| m.contains("prefix of a used worksheet")),
        "{msgs:?}"
    );
}

#[test]
fn nested_use_names_chain_their_prefixes() {
    let parsed = Parsed::new("use \"plant.sheaf\" as plant\nT = plant.site.T_amb\n").unwrap();
    let mut inner = Externals::none();
    inner.set_used("site.sheaf", used("site.sheaf", SITE, Externals::none()));
    let mut ext = Externals::none();
    ext.set_used(
        "plant.sheaf",
        used(
            "plant.sheaf",
            "use \"site.sheaf\" as site\ninput k = 2\n",
            inner,
        ),
    );
    let mut m = parsed.check(&ext).unwrap_or_else(|e| panic!("{e:?}"));
    m.evaluate();
    assert!((m.number("T").unwrap() - 298.15).abs() < 1e-9);
    let files = m.used_files();
    assert_eq!(
        files.iter().map(|f| f.prefix.as_str()).collect::<Vec<_>>(),
        ["plant", "plant.site"]
    );
    m.set_input_text("plant.site.T_amb", "30 degC").unwrap();
    m.evaluate();
    assert!((m.number("T").unwrap() - 303.15).abs() < 1e-9);
}
