//! Revisions: `sheaf diff` (two files, a git revision), `use` through the
//! command line, `sheaf watch`.

use std::path::Path;
use std::process::{Command, Output};

use serde_json::{Value, json};

fn sheaf_in(dir: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .args(args)
        .current_dir(dir)
        .env("NO_COLOR", "1")
        .output()
        .unwrap()
}

fn out(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

fn err(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

const OLD: &str = "# Pump\n\
input p1 = 1 bar \"suction pressure\"\n\
input p2 = 6 bar \"discharge pressure\"\n\
input V = 10 m^3/h \"flow\"\n\
dp : kPa = p2 - p1 \"pressure rise\"\n\
P : kW = V * (p2 - p1)\n\
gone = 2 m\n\
check dp <= 550 kPa \"casing rating\"\n\
check P >= 1 kW \"motor minimum\"\n";

const NEW: &str = "# Pump\n\
input p1 = 1 bar \"suction pressure, absolute\"\n\
input p2 = 7 bar \"discharge pressure\"\n\
input V = 10 m^3/h \"flow\"\n\
dp : kPa = p2 - p1 \"pressure rise\"\n\
P : W = V * (p2 - p1)\n\
extra = 3 m\n\
check dp <= 550 kPa \"casing rating\"\n\
check P >= 1 kW \"motor minimum\"\n";

fn json_of(o: &Output) -> Value {
    serde_json::from_str(&out(o)).unwrap_or_else(|e| panic!("{e}: {}", out(o)))
}

/// Every category of README "Commands"'s diff json, key by key.
fn assert_every_category(v: &Value) {
    assert_eq!(
        v["inputs"],
        json!([{"name": "p2", "old": 6.0, "new": 7.0, "unit": "bar"}])
    );
    let results = v["results"].as_array().unwrap();
    assert_eq!(results.len(), 2, "{results:?}");
    assert_eq!(results[0]["name"], "dp");
    assert_eq!(results[0]["old"], 500.0);
    assert_eq!(results[0]["new"], 600.0);
    assert_eq!(results[0]["unit"], "kPa");
    assert!((results[0]["rel_change"].as_f64().unwrap() - 0.2).abs() < 1e-12);
    // P: 10 m^3/h x 5 bar = 1.3889 kW -> x 6 bar = 1666.7 W (unit changed too).
    assert_eq!(results[1]["name"], "P");
    assert!((results[1]["old"].as_f64().unwrap() - 10.0 / 3600.0 * 5e5 / 1000.0).abs() < 1e-9);
    assert!((results[1]["new"].as_f64().unwrap() - 10.0 / 3600.0 * 6e5).abs() < 1e-9);
    assert_eq!(results[1]["unit"], "W");
    assert_eq!(
        v["checks"],
        json!([{"text": "dp <= 550 kPa", "old": "pass", "new": "fail"}])
    );
    assert_eq!(v["added"], json!(["extra"]));
    assert_eq!(v["removed"], json!(["gone"]));
    assert_eq!(
        v["changed"],
        json!([
            {"name": "p1", "what": "description", "old": "suction pressure", "new": "suction pressure, absolute"},
            {"name": "P", "what": "unit", "old": "kW", "new": "W"}
        ])
    );
    assert_eq!(v["errors"], json!({"old": [], "new": []}));
}

#[test]
fn diff_of_two_files_every_category() {
    let d = tempfile::tempdir().unwrap();
    std::fs::write(d.path().join("old.sheaf"), OLD).unwrap();
    std::fs::write(d.path().join("new.sheaf"), NEW).unwrap();
    let o = sheaf_in(
        d.path(),
        &["diff", "old.sheaf", "new.sheaf", "--format", "json"],
    );
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert_every_category(&json_of(&o));
    // --strict: a check that passed now fails.
    let o = sheaf_in(d.path(), &["diff", "old.sheaf", "new.sheaf", "--strict"]);
    assert_eq!(o.status.code(), Some(3));
    let text = out(&o);
    assert!(text.contains("pass -> FAIL  dp <= 550 kPa"), "{text}");
    assert!(text.contains("p2               6 -> 7 bar"), "{text}");
    assert!(text.contains("added: extra"), "{text}");
    let o = sheaf_in(
        d.path(),
        &["diff", "old.sheaf", "new.sheaf", "--format", "md"],
    );
    let md = out(&o);
    assert!(md.contains("| `dp <= 550 kPa` | pass | **FAIL** |"), "{md}");
    assert!(md.contains("| `p2` | 6 | 7 | bar |"), "{md}");
    // A tolerance above the change hides the results.
    let o = sheaf_in(
        d.path(),
        &[
            "diff",
            "old.sheaf",
            "new.sheaf",
            "--format",
            "json",
            "--rel",
            "0.5",
        ],
    );
    assert_eq!(json_of(&o)["results"], json!([]));
    // Same file: nothing changed.
    let o = sheaf_in(d.path(), &["diff", "old.sheaf", "old.sheaf"]);
    assert_eq!(out(&o).lines().last(), Some("no change"));
    // A worksheet with errors is reported as such, exit 1.
    std::fs::write(d.path().join("bad.sheaf"), "x = 1 m + 1 s\n").unwrap();
    let o = sheaf_in(
        d.path(),
        &["diff", "old.sheaf", "bad.sheaf", "--format", "json"],
    );
    assert_eq!(o.status.code(), Some(1));
    let v = json_of(&o);
    assert_eq!(v["errors"]["old"], json!([]));
    let e = v["errors"]["new"][0].as_str().unwrap();
    assert!(e.starts_with("bad.sheaf:1:5: cannot add"), "{e}");
}

fn git(dir: &Path, args: &[&str]) {
    let s = Command::new("git")
        .args(args)
        .current_dir(dir)
        .env("GIT_AUTHOR_NAME", "t")
        .env("GIT_AUTHOR_EMAIL", "t@example.invalid")
        .env("GIT_COMMITTER_NAME", "t")
        .env("GIT_COMMITTER_EMAIL", "t@example.invalid")
        .output()
        .unwrap();
    assert!(s.status.success(), "git {args:?}: {}", err(&s));
}

#[test]
fn diff_against_a_git_revision_follows_use() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path();
    git(p, &["init", "-q"]);
    std::fs::create_dir(p.join("basis")).unwrap();
    std::fs::write(p.join("pump.sheaf"), OLD).unwrap();
    std::fs::write(
        p.join("basis/site.sheaf"),
        "input T_amb = 25 degC \"ambient\"\n",
    )
    .unwrap();
    std::fs::write(
        p.join("cooler.sheaf"),
        "use \"basis/site.sheaf\" as site\nT_out : degC = site.T_amb + 5 K\n",
    )
    .unwrap();
    git(p, &["add", "."]);
    git(p, &["commit", "-qm", "rev A"]);
    std::fs::write(p.join("pump.sheaf"), NEW).unwrap();
    std::fs::write(
        p.join("basis/site.sheaf"),
        "input T_amb = 30 degC \"ambient\"\n",
    )
    .unwrap();
    let o = sheaf_in(
        p,
        &["diff", "pump.sheaf", "--rev", "HEAD", "--format", "json"],
    );
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert_every_category(&json_of(&o));
    // A changed used file is seen by diff: at HEAD it said 25 degC.
    let o = sheaf_in(
        p,
        &["diff", "cooler.sheaf", "--rev", "HEAD", "--format", "json"],
    );
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let v = json_of(&o);
    assert_eq!(
        v["inputs"],
        json!([{"name": "site.T_amb", "old": 25.0, "new": 30.0, "unit": "degC"}])
    );
    assert_eq!(v["results"][0]["name"], "T_out");
    assert_eq!(v["results"][0]["old"], 30.0);
    assert_eq!(v["results"][0]["new"], 35.0);
    // An unknown revision is a usage error.
    let o = sheaf_in(p, &["diff", "pump.sheaf", "--rev", "nosuchrev"]);
    assert_eq!(o.status.code(), Some(2), "{}", err(&o));
}

#[test]
fn use_through_the_command_line() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path();
    std::fs::create_dir_all(p.join("ws/basis")).unwrap();
    std::fs::write(
        p.join("ws/basis/site.sheaf"),
        "gauge 95 kPa \"site barometric pressure\"\ninput T_amb = 25 degC \"ambient\"\n\
         input p_amb = 0 barg\ncheck T_amb <= 40 degC \"cooler limit\"\n",
    )
    .unwrap();
    std::fs::write(
        p.join("ws/c2.sheaf"),
        "# C-2\nuse \"basis/site.sheaf\" as site\nT1 : degC = site.T_amb + 2 K\np1 : kPa = site.p_amb\n",
    )
    .unwrap();
    let o = sheaf_in(
        p,
        &[
            "run",
            "ws/c2.sheaf",
            "--set",
            "site.T_amb=45 degC",
            "--format",
            "json",
        ],
    );
    assert_eq!(o.status.code(), Some(3), "{}", err(&o));
    let v = json_of(&o);
    let q = |n: &str| {
        v["quantities"]
            .as_array()
            .unwrap()
            .iter()
            .find(|q| q["name"] == n)
            .unwrap_or_else(|| panic!("{n}"))
            .clone()
    };
    assert_eq!(q("site.T_amb")["value"], 45.0);
    assert_eq!(q("site.T_amb")["overridden"], true);
    assert_eq!(q("T1")["value"], 47.0);
    assert_eq!(q("p1")["value"], 95.0);
    // The json report states the gauge reference and the used file.
    assert!(
        v["gauge"][0]
            .as_str()
            .is_some_and(|g| g.contains("relative to 95 kPa")),
        "{}",
        v["gauge"]
    );
    assert_eq!(v["used_files"][0]["prefix"], "site");
    assert_eq!(
        v["used_files"][0]["sha256"].as_str().map(str::len),
        Some(64)
    );
    assert!(v["used_files"][0].get("path").is_none());
    assert_eq!(v["checks"][0]["text"], "site: T_amb <= 40 degC");
    assert_eq!(v["checks"][0]["passed"], false);
    let o = sheaf_in(p, &["run", "ws/c2.sheaf"]);
    assert!(
        out(&o).contains("In the worksheet used as `site`, gauge pressures are relative to 95 kPa"),
        "{}",
        out(&o)
    );
    // Outside the worksheet's folder: refused unless allowed.
    std::fs::write(p.join("outside.sheaf"), "input k = 2\n").unwrap();
    std::fs::write(
        p.join("ws/o.sheaf"),
        "use \"../outside.sheaf\" as o\nx = o.k * 2\n",
    )
    .unwrap();
    let o = sheaf_in(p, &["check", "ws/o.sheaf"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(
        err(&o).contains("folder allowed with --allow"),
        "{}",
        err(&o)
    );
    let allow = p.to_str().unwrap();
    let o = sheaf_in(p, &["check", "ws/o.sheaf", "--allow", allow]);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    // Cycles are located errors, in the file where the cycle closes.
    std::fs::write(p.join("ws/a.sheaf"), "use \"b.sheaf\" as b\n").unwrap();
    std::fs::write(p.join("ws/b.sheaf"), "\nuse \"a.sheaf\" as a\n").unwrap();
    let o = sheaf_in(p, &["check", "ws/a.sheaf"]);
    assert_eq!(o.status.code(), Some(1));
    let e = err(&o);
    assert!(
        e.contains("in b.sheaf:2:5: cycle of `use`: a.sheaf -> b.sheaf -> a.sheaf"),
        "{e}"
    );
    assert!(e.contains("ws/a.sheaf:1:5"), "{e}");
}

/// Lines of a child's stdout, as they come.
fn lines_of(child: &mut std::process::Child) -> mpsc::Receiver<String> {
    use std::io::BufRead;
    let (tx, rx) = mpsc::channel();
    let stdout = child.stdout.take().unwrap();
    std::thread::spawn(move || {
        for l in std::io::BufReader::new(stdout).lines() {
            let Ok(l) = l else { break };
            if tx.send(l).is_err() {
                break;
            }
        }
    });
    rx
}

/// Wait (at most 30 s) for a line containing `what`; every line seen.
fn wait_for(rx: &mpsc::Receiver<String>, what: &str) -> Vec<String> {
    let deadline = Instant::now() + Duration::from_secs(30);
    let mut seen = Vec::new();
    while Instant::now() < deadline {
        if let Ok(l) = rx.recv_timeout(Duration::from_millis(100)) {
            let hit = l.contains(what);
            seen.push(l);
            if hit {
                return seen;
            }
        }
    }
    panic!(
        "no line with `{what}` within 30 s; saw:\n{}",
        seen.join("\n")
    );
}

use std::sync::mpsc;
use std::time::{Duration, Instant};

#[cfg(unix)]
#[test]
fn watch_reruns_on_save_and_reexports() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path();
    std::fs::create_dir(p.join("basis")).unwrap();
    std::fs::write(p.join("basis/site.sheaf"), "input k = 2\n").unwrap();
    std::fs::write(
        p.join("w.sheaf"),
        "# W\nuse \"basis/site.sheaf\" as site\ninput a = 3 m\nb : m = a * site.k \"doubled\"\n",
    )
    .unwrap();
    let mut child = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .args(["watch", "w.sheaf", "--xlsx", "w.xlsx"])
        .current_dir(p)
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    let rx = lines_of(&mut child);
    let first = wait_for(&rx, "sheaf watch: watching");
    assert!(
        first.iter().any(|l| l.contains(" b ") && l.contains(" 6 ")),
        "{first:?}"
    );
    assert!(
        first.iter().any(|l| l.contains("wrote w.xlsx")),
        "{first:?}"
    );
    let before = std::fs::read(p.join("w.xlsx")).unwrap();
    // Save as editors do: a new file renamed over the old one.
    std::thread::sleep(Duration::from_millis(300));
    std::fs::write(
        p.join(".w.sheaf.new"),
        "# W\nuse \"basis/site.sheaf\" as site\ninput a = 5 m\nb : m = a * site.k \"doubled\"\n",
    )
    .unwrap();
    std::fs::rename(p.join(".w.sheaf.new"), p.join("w.sheaf")).unwrap();
    let second = wait_for(&rx, "sheaf watch: watching");
    assert!(
        second
            .iter()
            .any(|l| l.contains(" b ") && l.contains(" 10 ")),
        "{second:?}"
    );
    assert!(
        second.iter().any(|l| l.contains("wrote w.xlsx")),
        "{second:?}"
    );
    let after = std::fs::read(p.join("w.xlsx")).unwrap();
    assert_ne!(before, after, "the package was re-exported");
    // A change in the used worksheet re-runs too.
    std::fs::write(p.join("basis/site.sheaf"), "input k = 3\n").unwrap();
    let third = wait_for(&rx, "sheaf watch: watching");
    assert!(
        third
            .iter()
            .any(|l| l.contains(" b ") && l.contains(" 15 ")),
        "{third:?}"
    );
    // Its own write of the package did not re-trigger it: no further run
    // without a save.
    std::thread::sleep(Duration::from_millis(1000));
    assert!(rx.try_recv().is_err(), "ran again without a save");
    // An error is shown and watching goes on.
    std::fs::write(p.join("w.sheaf"), "x = 1 m + 1 s\n").unwrap();
    wait_for(&rx, "has 1 error(s); waiting");
    // Ctrl-C: exit 0.
    let pid = child.id().to_string();
    Command::new("kill").args(["-INT", &pid]).status().unwrap();
    let deadline = Instant::now() + Duration::from_secs(20);
    let status = loop {
        if let Some(s) = child.try_wait().unwrap() {
            break s;
        }
        assert!(Instant::now() < deadline, "watch did not stop on SIGINT");
        std::thread::sleep(Duration::from_millis(50));
    };
    assert_eq!(status.code(), Some(0));
}

/// Replace cell `cell` of sheet `sheet` (1-based sheet file index) of a
/// package with a plain number, as a reviewer typing into it would.
fn type_into(xlsx: &Path, sheet: usize, cell: &str, value: &str) {
    use std::io::{Read, Write};
    let bytes = std::fs::read(xlsx).unwrap();
    let mut zin = zip::ZipArchive::new(std::io::Cursor::new(bytes)).unwrap();
    let mut outb = Vec::new();
    {
        let mut zout = zip::ZipWriter::new(std::io::Cursor::new(&mut outb));
        let target = format!("xl/worksheets/sheet{sheet}.xml");
        for i in 0..zin.len() {
            let mut f = zin.by_index(i).unwrap();
            let name = f.name().unwrap().to_string();
            let mut data = Vec::new();
            f.read_to_end(&mut data).unwrap();
            if name == target {
                let mut x = String::from_utf8(data).unwrap();
                let open = format!("<c r=\"{cell}\"");
                let start = x.find(&open).unwrap_or_else(|| panic!("no {cell}"));
                let rest = &x[start..];
                let end = if let Some(e) = rest.find("/>").filter(|e| !rest[..*e].contains('>')) {
                    start + e + 2
                } else {
                    start + rest.find("</c>").unwrap() + 4
                };
                x.replace_range(start..end, &format!("<c r=\"{cell}\"><v>{value}</v></c>"));
                data = x.into_bytes();
            }
            zout.start_file(name, zip::write::SimpleFileOptions::default())
                .unwrap();
            zout.write_all(&data).unwrap();
        }
        zout.finish().unwrap();
    }
    std::fs::write(xlsx, outb).unwrap();
}

/// The cell (`C9`) a defined name of a package refers to.
fn named(xlsx: &Path, name: &str) -> String {
    use std::io::Read;
    let bytes = std::fs::read(xlsx).unwrap();
    let mut z = zip::ZipArchive::new(std::io::Cursor::new(bytes)).unwrap();
    let mut wb = String::new();
    z.by_name("xl/workbook.xml")
        .unwrap()
        .read_to_string(&mut wb)
        .unwrap();
    let key = format!("<definedName name=\"{name}\">");
    let at = wb.find(&key).unwrap_or_else(|| panic!("no name {name}")) + key.len();
    let target = &wb[at..at + wb[at..].find('<').unwrap()];
    target.split('!').nth(1).unwrap().replace('$', "")
}

#[test]
fn pull_writes_used_inputs_there_warns_on_typed_over_cells_keeps_alignment() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path();
    std::fs::create_dir(p.join("basis")).unwrap();
    std::fs::write(
        p.join("basis/site.sheaf"),
        "input T_amb = 25 degC \"ambient\"\n",
    )
    .unwrap();
    let main = "# C-2\nuse \"basis/site.sheaf\" as site\n\
                input p2 = 7 barg     \"discharge\"\n\
                input n  = 1500 rpm   \"speed\"\n\
                T1 : degC = site.T_amb + 2 K\n";
    std::fs::write(p.join("c2.sheaf"), main).unwrap();
    let o = sheaf_in(p, &["xlsx", "c2.sheaf", "-o", "c2.xlsx"]);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    // Calculation is the second sheet; the input cells by their names, and
    // the shown value of T1 (column C of the row of its SI cell).
    let x = p.join("c2.xlsx");
    type_into(&x, 2, &named(&x, "i10_site.T_amb"), "30");
    type_into(&x, 2, &named(&x, "i_n"), "1480.5");
    type_into(&x, 2, &named(&x, "i_p2"), "10.25");
    let t1 = named(&x, "q1_T1").replace('F', "C");
    type_into(&x, 2, &t1, "99");
    let o = sheaf_in(p, &["pull", "c2.sheaf", "--from", "c2.xlsx"]);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let text = out(&o);
    // Worksheet order: the used input (at the `use`), then p2, then n.
    let lines: Vec<&str> = text.lines().skip(1).take(3).collect();
    assert!(
        lines[0].contains("site.T_amb")
            && lines[0].contains("25 -> 30 degC")
            && lines[0].contains("(in basis/site.sheaf)"),
        "{text}"
    );
    assert!(
        lines[1].contains("p2") && lines[1].contains("7 -> 10.25 barg"),
        "{text}"
    );
    assert!(
        lines[2].contains("n") && lines[2].contains("1500 -> 1480.5 rpm"),
        "{text}"
    );
    // The number typed over the computed T1 is a warning naming the cell
    // and the quantity; it is not pulled (no line for it above).
    let e = err(&o);
    assert!(
        e.contains(&format!(
            "warning: Calculation!{t1} holds the number 99 typed over the value of `T1` \
             (a computed value, not an input); it is not pulled"
        )),
        "{e}"
    );
    assert_eq!(e.matches("warning:").count(), 1, "{e}");
    assert!(!text.contains("T1"), "{text}");
    let o = sheaf_in(p, &["pull", "c2.sheaf", "--from", "c2.xlsx", "--write"]);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert_eq!(
        std::fs::read_to_string(p.join("basis/site.sheaf")).unwrap(),
        "input T_amb = 30 degC \"ambient\"\n"
    );
    // The descriptions stay in their column.
    assert_eq!(
        std::fs::read_to_string(p.join("c2.sheaf")).unwrap(),
        "# C-2\nuse \"basis/site.sheaf\" as site\n\
         input p2 = 10.25 barg \"discharge\"\n\
         input n  = 1480.5 rpm \"speed\"\n\
         T1 : degC = site.T_amb + 2 K\n"
    );
}

#[test]
fn pull_on_the_site_basis_example_writes_the_used_file() {
    // The example pair: worksheets/process_air_aftercooler.sheaf uses
    // worksheets/site_basis.sheaf as `site`.
    let d = tempfile::tempdir().unwrap();
    let p = d.path();
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("../worksheets");
    for f in ["site_basis.sheaf", "process_air_aftercooler.sheaf"] {
        std::fs::copy(root.join(f), p.join(f)).unwrap();
    }
    let site_before = std::fs::read_to_string(p.join("site_basis.sheaf")).unwrap();
    let main_before = std::fs::read_to_string(p.join("process_air_aftercooler.sheaf")).unwrap();
    let o = sheaf_in(
        p,
        &["xlsx", "process_air_aftercooler.sheaf", "-o", "pa.xlsx"],
    );
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let x = p.join("pa.xlsx");
    // The used worksheet's input is an editable input cell of the package.
    type_into(&x, 2, &named(&x, "i10_site.T_cw"), "25");
    let o = sheaf_in(
        p,
        &[
            "pull",
            "process_air_aftercooler.sheaf",
            "--from",
            "pa.xlsx",
            "--write",
        ],
    );
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let text = out(&o);
    assert!(
        text.contains("site.T_cw") && text.contains("23 -> 25 degC"),
        "{text}"
    );
    assert!(
        text.contains("rewrote 1 input(s) in site_basis.sheaf"),
        "{text}"
    );
    assert_eq!(
        std::fs::read_to_string(p.join("site_basis.sheaf")).unwrap(),
        site_before.replace("input T_cw = 23 degC", "input T_cw = 25 degC")
    );
    assert_ne!(
        site_before,
        std::fs::read_to_string(p.join("site_basis.sheaf")).unwrap()
    );
    assert_eq!(
        std::fs::read_to_string(p.join("process_air_aftercooler.sheaf")).unwrap(),
        main_before
    );
}
