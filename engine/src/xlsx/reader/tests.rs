//! Tests of the bounded workbook reader on hand-built workbooks.

use std::io::{Cursor, Write};

use zip::write::SimpleFileOptions;

use super::*;

/// A workbook from its parts (only what the reader looks at).
pub(super) fn book(
    sheets: &[(&str, &str)],
    names: &str,
    shared: Option<&str>,
    styles: Option<&str>,
) -> Vec<u8> {
    let mut z = zip::ZipWriter::new(Cursor::new(Vec::new()));
    let opt = SimpleFileOptions::default();
    let mut wb = String::from(r#"<?xml version="1.0"?><workbook xmlns:r="urn:r"><sheets>"#);
    let mut rels = String::from("<Relationships>");
    for (i, (name, _)) in sheets.iter().enumerate() {
        wb.push_str(&format!(
            r#"<sheet name="{name}" sheetId="{}" r:id="rId{i}"/>"#,
            i + 1
        ));
        rels.push_str(&format!(
            r#"<Relationship Id="rId{i}" Target="worksheets/sheet{i}.xml"/>"#
        ));
    }
    wb.push_str(&format!(
        "</sheets><definedNames>{names}</definedNames></workbook>"
    ));
    rels.push_str("</Relationships>");
    z.start_file("xl/workbook.xml", opt).unwrap();
    z.write_all(wb.as_bytes()).unwrap();
    z.start_file("xl/_rels/workbook.xml.rels", opt).unwrap();
    z.write_all(rels.as_bytes()).unwrap();
    for (i, (_, xml)) in sheets.iter().enumerate() {
        z.start_file(format!("xl/worksheets/sheet{i}.xml"), opt)
            .unwrap();
        z.write_all(xml.as_bytes()).unwrap();
    }
    if let Some(s) = shared {
        z.start_file("xl/sharedStrings.xml", opt).unwrap();
        z.write_all(s.as_bytes()).unwrap();
    }
    if let Some(s) = styles {
        z.start_file("xl/styles.xml", opt).unwrap();
        z.write_all(s.as_bytes()).unwrap();
    }
    z.finish().unwrap().into_inner()
}

fn sheet(rows: &str) -> String {
    format!("<worksheet><sheetData>{rows}</sheetData></worksheet>")
}

const STYLES: &str = r#"<styleSheet><numFmts><numFmt numFmtId="164" formatCode="yyyy\-mm\-dd"/><numFmt numFmtId="165" formatCode="0.00&quot; m/s&quot;"/></numFmts>
<cellStyleXfs><xf numFmtId="14"/></cellStyleXfs>
<cellXfs><xf numFmtId="0"/><xf numFmtId="14"/><xf numFmtId="164"/><xf numFmtId="165"/></cellXfs></styleSheet>"#;

fn one(bytes: &[u8], r: &str) -> Result<f64, String> {
    read_cells(bytes, &[r])
        .unwrap()
        .pop()
        .unwrap()
        .map_err(|e| e.to_string())
}

#[test]
fn references() {
    assert_eq!(parse_a1("C7"), Some((6, 2)));
    assert_eq!(parse_a1("$AB$10"), Some((9, 27)));
    assert_eq!(parse_a1("C0"), None);
    assert_eq!(parse_a1("7C"), None);
    assert_eq!(parse_a1("A99999999999"), None);
    assert_eq!(col_letters(27), "AB");
    assert_eq!(col_letters(0), "A");
    let p = parse_sheet_ref("'My sheet'!$C$7").unwrap();
    assert_eq!(p.sheet, "My sheet");
    assert_eq!(p.a1(), "'My sheet'!C7");
    assert_eq!(parse_sheet_ref("p_site"), None);
}

#[test]
fn not_a_workbook_is_an_error() {
    let e = read_cells(b"PK\x03\x04 truncated", &["Sheet1!A1"]).unwrap_err();
    assert!(e.to_string().contains("not a readable xlsx"), "{e}");
    let e = read_inputs(b"").unwrap_err();
    assert!(e.to_string().contains("not a readable xlsx"), "{e}");
}

#[test]
fn values_and_messages() {
    let rows = r#"<row r="1"><c r="A1"><v>2.5</v></c><c r="B1" t="s"><v>0</v></c><c r="C1" t="inlineStr"><is><t>top secret</t></is></c></row>
<row r="2"><c r="A2" t="b"><v>1</v></c><c r="B2" t="e"><v>#DIV/0!</v></c><c r="C2"/><c r="D2" s="1"><v>45000</v></c><c r="E2" s="2"><v>45000</v></c><c r="F2" s="3"><v>7</v></c></row>
<row r="3"><c r="A3"><f>B3*2</f></c><c r="B3"><f>1+1</f><v>2</v></c><c r="C3" t="e"><v>secret text</v></c></row>"#;
    let b = book(
        &[("Calc", &sheet(rows)), ("Hidden plans", &sheet(""))],
        r#"<definedName name="k">Calc!$A$1</definedName>"#,
        Some(r#"<sst><si><t>password123</t></si></sst>"#),
        Some(STYLES),
    );
    assert_eq!(one(&b, "Calc!A1"), Ok(2.5));
    assert_eq!(one(&b, "calc!$A$1"), Ok(2.5));
    assert_eq!(one(&b, "k"), Ok(2.5));
    assert_eq!(
        one(&b, "Calc!F2"),
        Ok(7.0),
        "a number format with units is a number"
    );
    assert_eq!(one(&b, "Calc!B3"), Ok(2.0), "a formula's stored result");
    let e = one(&b, "Calc!B1").unwrap_err();
    assert!(e.contains("holds text (11 characters)"), "{e}");
    assert!(!e.contains("password"), "text is never echoed: {e}");
    let e = one(&b, "Calc!C1").unwrap_err();
    assert!(
        e.contains("holds text (10 characters)") && !e.contains("secret"),
        "{e}"
    );
    assert!(one(&b, "Calc!A2").unwrap_err().contains("TRUE"));
    assert!(one(&b, "Calc!B2").unwrap_err().contains("#DIV/0!"));
    let e = one(&b, "Calc!C3").unwrap_err();
    assert!(!e.contains("secret"), "{e}");
    assert!(one(&b, "Calc!C2").unwrap_err().contains("empty"));
    assert!(one(&b, "Calc!Z9").unwrap_err().contains("empty"));
    assert!(one(&b, "Calc!D2").unwrap_err().contains("date"));
    assert!(one(&b, "Calc!E2").unwrap_err().contains("date"));
    let e = one(&b, "Calc!A3").unwrap_err();
    assert!(e.contains("never calculated"), "{e}");
    let e = one(&b, "Nope!A1").unwrap_err();
    assert!(e.contains("no sheet `Nope`"), "{e}");
    assert!(
        !e.contains("Hidden") && !e.contains("Calc,"),
        "sheets are not listed: {e}"
    );
    assert!(one(&b, "nothing").unwrap_err().contains("no defined name"));
}

#[test]
fn many_cells_of_many_sheets_in_one_call() {
    let b = book(
        &[
            (
                "A",
                &sheet(
                    r#"<row r="1"><c r="A1"><v>1</v></c></row><row r="5"><c r="B5"><v>5</v></c></row>"#,
                ),
            ),
            ("B", &sheet(r#"<row r="2"><c r="C2"><v>22</v></c></row>"#)),
        ],
        r#"<definedName name="five">A!$B$5</definedName>"#,
        None,
        None,
    );
    let r = read_cells(&b, &["A!A1", "B!C2", "five", "A!B5", "X!A1"]).unwrap();
    assert_eq!(r[0], Ok(1.0));
    assert_eq!(r[1], Ok(22.0));
    assert_eq!(r[2], Ok(5.0));
    assert_eq!(r[3], Ok(5.0));
    assert!(r[4].is_err());
    assert!(r[2].as_ref().is_ok());
}

#[test]
fn reading_stops_after_the_last_row_asked_for() {
    // Everything after row 1 is broken XML: never reached.
    let b = book(
        &[(
            "S",
            r#"<worksheet><sheetData><row r="1"><c r="A1"><v>3</v></c></row><row r="2"><c <<<< broken"#,
        )],
        "",
        None,
        None,
    );
    assert_eq!(one(&b, "S!A1"), Ok(3.0));
    assert!(read_cells(&b, &["S!A2"]).is_err());
}

#[test]
fn duplicate_and_case_colliding_names_are_refused() {
    let s = sheet(r#"<row r="1"><c r="A1"><v>1</v></c><c r="B1"><v>2</v></c></row>"#);
    let dup = book(
        &[("S", &s)],
        r#"<definedName name="x" localSheetId="0">S!$A$1</definedName><definedName name="x" localSheetId="0">S!$B$1</definedName>"#,
        None,
        None,
    );
    assert!(one(&dup, "x").unwrap_err().contains("more than once"));
    let case = book(
        &[("S", &s)],
        r#"<definedName name="p_site">S!$A$1</definedName><definedName name="P_SITE">S!$B$1</definedName>"#,
        None,
        None,
    );
    assert!(one(&case, "p_site").unwrap_err().contains("more than once"));
    // One workbook-wide and one sheet-scoped copy of the same name: the
    // workbook-wide one, as a spreadsheet does outside that sheet.
    let scoped = book(
        &[("S", &s)],
        r#"<definedName name="y">S!$A$1</definedName><definedName name="y" localSheetId="0">S!$B$1</definedName>"#,
        None,
        None,
    );
    assert_eq!(one(&scoped, "y"), Ok(1.0));
}

fn small() -> Limits {
    Limits {
        parts: 100,
        part_bytes: 1 << 20,
        run_bytes: 64 << 10,
    }
}

#[test]
fn bombs_fail_cleanly_under_limits() {
    // A sheet whose XML inflates past the part limit before the cell.
    let mut rows = String::new();
    for r in 1..60_000 {
        rows.push_str(&format!(r#"<row r="{r}"><c r="A{r}"><v>1</v></c></row>"#));
    }
    rows.push_str(r#"<row r="70000"><c r="A70000"><v>9</v></c></row>"#);
    let b = book(&[("S", &sheet(&rows))], "", None, None);
    let e = read_cells_with(&b, &["S!A70000"], small())
        .unwrap_err()
        .to_string();
    assert!(e.contains("inflates to more than 1 MiB"), "{e}");
    // The scan for typed-over numbers reads the whole sheet: the same
    // bound stops it.
    let e = plain_numbers_with(&b, "S", small())
        .unwrap_err()
        .to_string();
    assert!(e.contains("inflates to more than 1 MiB"), "{e}");
    // The same workbook, a cell near the top: fine (reading stops there).
    assert_eq!(read_cells_with(&b, &["S!A2"], small()).unwrap()[0], Ok(1.0));
    // One text run longer than the run limit.
    let long = "x".repeat(200 << 10);
    let b = book(
        &[(
            "S",
            &sheet(&format!(
                r#"<row r="1"><c r="A1" t="inlineStr"><is><t>{long}</t></is></c></row><row r="2"><c r="A2"><v>1</v></c></row>"#
            )),
        )],
        "",
        None,
        None,
    );
    let e = read_cells_with(&b, &["S!A2"], small())
        .unwrap_err()
        .to_string();
    assert!(e.contains("longer than"), "{e}");
    // A shared-strings table past the limit: not read at all for a
    // number; read only as far as needed for a string near the top.
    let mut sst = String::from("<sst>");
    for i in 0..100_000 {
        sst.push_str(&format!("<si><t>string number {i}</t></si>"));
    }
    sst.push_str("</sst>");
    let b = book(
        &[(
            "S",
            &sheet(
                r#"<row r="1"><c r="A1"><v>4</v></c><c r="B1" t="s"><v>1</v></c><c r="C1" t="s"><v>99999</v></c></row>"#,
            ),
        )],
        "",
        Some(&sst),
        None,
    );
    assert_eq!(read_cells_with(&b, &["S!A1"], small()).unwrap()[0], Ok(4.0));
    let r = read_cells_with(&b, &["S!B1"], small()).unwrap();
    assert!(
        r[0].as_ref().unwrap_err().message.contains("15 characters"),
        "{r:?}"
    );
    let e = read_cells_with(&b, &["S!C1"], small())
        .unwrap_err()
        .to_string();
    assert!(e.contains("sharedStrings"), "{e}");
    // Too many parts.
    let mut z = zip::ZipWriter::new(Cursor::new(Vec::new()));
    for i in 0..200 {
        z.start_file(format!("p{i}"), SimpleFileOptions::default())
            .unwrap();
    }
    let b = z.finish().unwrap().into_inner();
    let e = read_cells_with(&b, &["S!A1"], small())
        .unwrap_err()
        .to_string();
    assert!(e.contains("more than 100 parts"), "{e}");
}

fn package(names: &str, rows: &str) -> Vec<u8> {
    book(
        &[
            ("Calculation", &sheet(rows)),
            (
                "Data",
                &sheet(r#"<row r="1"><c r="A1" t="inlineStr"><is><t>abc123</t></is></c></row>"#),
            ),
        ],
        &format!(r#"<definedName name="sheaf_source_sha256">Data!$A$1</definedName>{names}"#),
        None,
        None,
    )
}

#[test]
fn pull_reads_units_and_refuses_what_it_cannot_trust() {
    let p = names::name_of(NameKind::Input, "p");
    let rows = r#"<row r="8"><c r="C8"><v>9</v></c><c r="D8" t="inlineStr"><is><t>psig</t></is></c><c r="E8"><f>C8</f><v>9</v></c><c r="F8" s="0"/></row>"#;
    let ok = package(
        &format!(r#"<definedName name="{p}">Calculation!$C$8</definedName>"#),
        rows,
    );
    let r = read_inputs(&ok).unwrap();
    assert_eq!(r.source_sha256.as_deref(), Some("abc123"));
    assert_eq!(r.inputs.len(), 1);
    assert_eq!(r.inputs[0].value, 9.0);
    assert_eq!(r.inputs[0].unit.as_deref(), Some("psig"));
    // A second definition of the same input (sheet-scoped, or in other
    // letter case): refused, nothing pulled.
    for extra in [
        format!(r#"<definedName name="{p}" localSheetId="0">Calculation!$E$8</definedName>"#),
        format!(
            r#"<definedName name="{}">Calculation!$E$8</definedName>"#,
            p.to_uppercase()
        ),
    ] {
        let b = package(
            &format!(r#"<definedName name="{p}">Calculation!$C$8</definedName>{extra}"#),
            rows,
        );
        let e = read_inputs(&b).unwrap_err().to_string();
        assert!(e.contains("more than once"), "{e}");
    }
    // A formula in the input cell (stale cached value possible).
    let f = package(
        &format!(r#"<definedName name="{p}">Calculation!$E$8</definedName>"#),
        rows,
    );
    assert!(read_inputs(&f).unwrap_err().to_string().contains("formula"));
    // An empty input cell.
    let e = package(
        &format!(r#"<definedName name="{p}">Calculation!$F$8</definedName>"#),
        rows,
    );
    assert!(read_inputs(&e).unwrap_err().to_string().contains("empty"));
}

#[test]
fn date_format_codes() {
    assert!(date_format_code("yyyy-mm-dd"));
    assert!(date_format_code("h:mm"));
    assert!(!date_format_code("0.00"));
    assert!(!date_format_code("0.00\" m/s\""));
    assert!(!date_format_code("[Red]0.0"));
    assert!(!date_format_code("General"));
    assert!(!date_format_code("0.0\\s"));
}

#[test]
fn plain_numbers_are_cells_without_formulas_kept_up_to_a_bound() {
    let rows = r#"<row r="1"><c r="A1" t="inlineStr"><is><t>T1</t></is></c><c r="C1"><v>7</v></c><c r="E1"><f>C1*2</f><v>14</v></c><c r="F1" t="b"><v>1</v></c><c r="G1" s="1"><v>45000</v></c></row><row r="2"><c r="C2" t="n"><v>2.5</v></c><c r="D2" t="str"><f>"x"</f><v>x</v></c></row>"#;
    let b = book(
        &[("Other", &sheet("")), ("Calc", &sheet(rows))],
        r#"<definedName name="q_x">Calc!$E$1</definedName><definedName name="q_y">Other!$A$1</definedName>"#,
        None,
        Some(STYLES),
    );
    let got = plain_numbers(&b, "calc").unwrap();
    let at = |row, col| CellPos {
        sheet: "Calc".into(),
        row,
        col,
    };
    // The formula, the boolean and the date are not plain numbers.
    assert_eq!(got.numbers, vec![(at(0, 2), 7.0), (at(1, 2), 2.5)]);
    assert_eq!(got.omitted, 0);
    assert_eq!(got.names, vec![("q_x".to_string(), at(0, 4))]);
    assert_eq!(got.labels.get(&0).map(String::as_str), Some("T1"));
    assert_eq!(got.labels.get(&1), None);
    assert_eq!(
        plain_numbers(&b, "nosuch").unwrap(),
        PlainNumbers::default()
    );
    // Beyond PLAIN_KEPT numbers are counted, not kept.
    let mut many = String::new();
    for r in 1..=PLAIN_KEPT + 5 {
        many.push_str(&format!(r#"<row r="{r}"><c r="B{r}"><v>{r}</v></c></row>"#));
    }
    let b = book(&[("Calc", &sheet(&many))], "", None, None);
    let got = plain_numbers(&b, "Calc").unwrap();
    assert_eq!(got.numbers.len(), PLAIN_KEPT);
    assert_eq!(got.omitted, 5);
}
