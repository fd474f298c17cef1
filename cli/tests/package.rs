//! The package through the command line: the cover lists the worksheets a
//! worksheet uses with their sha256.

use std::path::Path;
use std::process::{Command, Output};

use calamine::{Data, Reader, Xlsx, open_workbook};
use sha2::{Digest, Sha256};

fn sheaf_in(dir: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .args(args)
        .current_dir(dir)
        .env("NO_COLOR", "1")
        .output()
        .unwrap()
}

/// sha256 in lowercase hex, computed here (not by the engine).
fn sha256(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// The text of every non-empty cell of a sheet, by (row, col).
fn cells(path: &Path, sheet: &str) -> Vec<(u32, u32, String)> {
    let mut wb: Xlsx<_> = open_workbook(path).unwrap();
    let r = wb.worksheet_range(sheet).unwrap();
    let (r0, c0) = r.start().unwrap();
    r.used_cells()
        .filter_map(|(row, col, v)| match v {
            Data::String(s) => Some((r0 + row as u32, c0 + col as u32, s.clone())),
            _ => None,
        })
        .collect()
}

#[test]
fn the_cover_lists_every_used_file_with_its_sha256() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path();
    std::fs::create_dir_all(p.join("basis/fluids")).unwrap();
    let site = "gauge 95 kPa \"site barometric\"\nuse \"fluids/cw.sheaf\" as cw\n\
                input T_amb = 25 degC \"ambient\"\ninput p_amb = 0 barg\n";
    let cw = "input c_w = 4.18 kJ/(kg K) \"cooling water\"\n";
    std::fs::write(p.join("basis/site.sheaf"), site).unwrap();
    std::fs::write(p.join("basis/fluids/cw.sheaf"), cw).unwrap();
    std::fs::write(
        p.join("c2.sheaf"),
        "# C-2\nuse \"basis/site.sheaf\" as site\n\
         T1 : degC = site.T_amb + 2 K\nq : kJ/kg = site.cw.c_w * 5 K\n\
         check T1 <= 40 degC\n",
    )
    .unwrap();
    let o = sheaf_in(p, &["xlsx", "c2.sheaf", "-o", "c2.xlsx"]);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let cover = cells(&p.join("c2.xlsx"), "Cover");
    let at = |text: &str| {
        cover
            .iter()
            .find(|(_, _, t)| t == text)
            .map(|(r, c, _)| (*r, *c))
            .unwrap_or_else(|| panic!("no cell `{text}` on the cover: {cover:?}"))
    };
    let text_at = |r: u32, c: u32| {
        cover
            .iter()
            .find(|(rr, cc, _)| (*rr, *cc) == (r, c))
            .map(|x| x.2.clone())
    };
    let (head, _) = at("Worksheets used");
    // Depth first: the used file, then the one it uses (prefix chain; the
    // path as written in the worksheet that uses it).
    for (prefix, path, text) in [
        ("site", "basis/site.sheaf", site),
        ("site.cw", "fluids/cw.sheaf", cw),
    ] {
        let (r, c) = at(prefix);
        assert!(r > head && c == 0, "{prefix} at {r},{c}");
        assert_eq!(text_at(r, 1).as_deref(), Some(path));
        assert_eq!(text_at(r, 2), Some(sha256(text.as_bytes())));
    }
    // The gauge note says what the used worksheet's gauge pressures mean.
    assert!(
        cover.iter().any(|(_, _, t)| t
            .contains("In the worksheet used as `site`, gauge pressures are relative to 95 kPa")),
        "{cover:?}"
    );
    // A worksheet without `use` has no such section.
    std::fs::write(p.join("plain.sheaf"), "# P\ninput a = 2 m\ncheck a > 1 m\n").unwrap();
    let o = sheaf_in(p, &["xlsx", "plain.sheaf", "-o", "plain.xlsx"]);
    assert_eq!(o.status.code(), Some(0));
    let cover = cells(&p.join("plain.xlsx"), "Cover");
    assert!(!cover.iter().any(|(_, _, t)| t == "Worksheets used"));
}
