//! Process-level regression tests of the hardening issue: files the tool
//! writes are never lost, replaced or widened; exit statuses tell the
//! truth when stdout fails; text output cannot carry terminal escapes.

use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

const WS: &str = "# Tank\ninput V = 2 m^3 \"volume\"\nm = V * 1000 kg/m^3\ncheck m > 1 kg\n";

fn sheaf_in(dir: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(dir)
        .env("NO_COLOR", "1")
        .args(args)
        .stdin(Stdio::null())
        .output()
        .unwrap()
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

fn leftovers(d: &Path) -> Vec<PathBuf> {
    fs::read_dir(d)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.to_string_lossy().contains(".sheaf-tmp"))
        .collect()
}

#[test]
fn xlsx_refuses_to_overwrite_its_own_source() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path();
    // The worksheet named .xlsx: the default output is the source itself.
    fs::write(p.join("calc.xlsx"), WS).unwrap();
    let o = sheaf_in(p, &["xlsx", "calc.xlsx"]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(
        stderr(&o).contains("would replace the worksheet"),
        "{}",
        stderr(&o)
    );
    assert_eq!(fs::read_to_string(p.join("calc.xlsx")).unwrap(), WS);
    // -o equal to the source, by the same name, another spelling, a
    // symbolic link and a hard link.
    fs::write(p.join("same.sheaf"), WS).unwrap();
    fs::create_dir(p.join("sub")).unwrap();
    #[cfg(unix)]
    {
        std::os::unix::fs::symlink(p.join("same.sheaf"), p.join("link.xlsx")).unwrap();
        fs::hard_link(p.join("same.sheaf"), p.join("hard.xlsx")).unwrap();
    }
    for out in [
        "same.sheaf",
        "./sub/../same.sheaf",
        "link.xlsx",
        "hard.xlsx",
    ] {
        if !p.join(out).exists() {
            continue;
        }
        let o = sheaf_in(p, &["xlsx", "same.sheaf", "-o", out]);
        assert_eq!(o.status.code(), Some(2), "{out}: {}", stderr(&o));
        assert_eq!(
            fs::read_to_string(p.join("same.sheaf")).unwrap(),
            WS,
            "{out}"
        );
    }
    assert!(leftovers(p).is_empty());
}

#[cfg(unix)]
#[test]
fn fmt_write_keeps_mode_symlink_and_refuses_read_only() {
    use std::os::unix::fs::PermissionsExt;
    let d = tempfile::tempdir().unwrap();
    let p = d.path();
    let ugly = "# T\ninput   a=2 m\n";
    let real = p.join("real.sheaf");
    fs::write(&real, ugly).unwrap();
    fs::set_permissions(&real, fs::Permissions::from_mode(0o600)).unwrap();
    std::os::unix::fs::symlink(&real, p.join("link.sheaf")).unwrap();
    let o = sheaf_in(p, &["fmt", "--write", "link.sheaf"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(
        fs::symlink_metadata(p.join("link.sheaf"))
            .unwrap()
            .file_type()
            .is_symlink(),
        "the link must stay a link"
    );
    let formatted = fs::read_to_string(&real).unwrap();
    assert_ne!(formatted, ugly, "the real file is the one rewritten");
    assert_eq!(
        fs::metadata(&real).unwrap().permissions().mode() & 0o777,
        0o600,
        "a private worksheet stays private"
    );
    // Read-only: refused, exit 2, file unchanged.
    fs::write(&real, ugly).unwrap();
    fs::set_permissions(&real, fs::Permissions::from_mode(0o400)).unwrap();
    let o = sheaf_in(p, &["fmt", "--write", "real.sheaf"]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(stderr(&o).contains("read-only"), "{}", stderr(&o));
    assert_eq!(fs::read_to_string(&real).unwrap(), ugly);
    // Hard link: refused, both names unchanged.
    fs::set_permissions(&real, fs::Permissions::from_mode(0o600)).unwrap();
    fs::hard_link(&real, p.join("twin.sheaf")).unwrap();
    let o = sheaf_in(p, &["fmt", "--write", "real.sheaf"]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(stderr(&o).contains("hard links"), "{}", stderr(&o));
    assert_eq!(fs::read_to_string(p.join("twin.sheaf")).unwrap(), ugly);
    assert!(leftovers(p).is_empty());
}

#[cfg(unix)]
#[test]
fn xlsx_into_a_device_or_fifo_writes_into_it() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path();
    fs::write(p.join("ws.sheaf"), WS).unwrap();
    let o = sheaf_in(p, &["xlsx", "ws.sheaf", "-o", "/dev/null"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(!fs::metadata("/dev/null").unwrap().is_file());
    // A FIFO stays a FIFO; a reader gets the workbook.
    let fifo = p.join("pipe.xlsx");
    let made = Command::new("mkfifo")
        .arg(&fifo)
        .status()
        .is_ok_and(|s| s.success());
    if made {
        let reader = {
            let f = fifo.clone();
            std::thread::spawn(move || fs::read(f).unwrap())
        };
        let o = sheaf_in(p, &["xlsx", "ws.sheaf", "-o", "pipe.xlsx"]);
        assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
        let bytes = reader.join().unwrap();
        assert!(
            bytes.starts_with(b"PK"),
            "the workbook went through the FIFO"
        );
        use std::os::unix::fs::FileTypeExt;
        assert!(fs::symlink_metadata(&fifo).unwrap().file_type().is_fifo());
    }
    assert!(leftovers(p).is_empty());
}

#[test]
fn xlsx_new_file_and_failed_write_leave_no_temporary() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path();
    fs::write(p.join("ws.sheaf"), WS).unwrap();
    let o = sheaf_in(p, &["xlsx", "ws.sheaf"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(p.join("ws.xlsx").is_file());
    // A folder where the package should go: refused, nothing left behind.
    fs::create_dir(p.join("dir.xlsx")).unwrap();
    let o = sheaf_in(p, &["xlsx", "ws.sheaf", "-o", "dir.xlsx"]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(leftovers(p).is_empty());
    let _ = stdout(&o);
}

const FAILING: &str = "# Tank\ninput V = 2 m^3\ncheck V > 3 m^3 \"big enough\"\n";

#[cfg(target_os = "linux")]
#[test]
fn a_full_stdout_is_exit_2() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path();
    fs::write(p.join("fail.sheaf"), FAILING).unwrap();
    for args in [
        &["run", "fail.sheaf"][..],
        &["run", "fail.sheaf", "--format", "json"],
        &["units"],
        &["check", "fail.sheaf"],
    ] {
        let full = fs::OpenOptions::new()
            .write(true)
            .open("/dev/full")
            .unwrap();
        let o = Command::new(env!("CARGO_BIN_EXE_sheaf"))
            .current_dir(p)
            .args(args)
            .stdout(full)
            .output()
            .unwrap();
        assert_eq!(o.status.code(), Some(2), "{args:?}: {}", stderr(&o));
        assert!(
            stderr(&o).contains("cannot write to standard output"),
            "{args:?}: {}",
            stderr(&o)
        );
    }
}

#[cfg(unix)]
#[test]
fn a_closed_pipe_keeps_the_run_status_quietly() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path();
    fs::write(p.join("fail.sheaf"), FAILING).unwrap();
    fs::write(p.join("ok.sheaf"), WS).unwrap();
    for (file, want) in [("fail.sheaf", 3), ("ok.sheaf", 0)] {
        let mut child = Command::new(env!("CARGO_BIN_EXE_sheaf"))
            .current_dir(p)
            .args(["run", file])
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .unwrap();
        // The reader goes away before reading anything (`| head -0`).
        drop(child.stdout.take());
        let o = child.wait_with_output().unwrap();
        assert_eq!(o.status.code(), Some(want), "{file}: {}", stderr(&o));
        assert!(
            !stderr(&o).contains("cannot write"),
            "a closed pipe is quiet: {}",
            stderr(&o)
        );
    }
}

#[test]
fn terminal_escapes_and_html_are_neutralised() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path();
    // A description that would erase the FAIL line and draw a fake PASS;
    // a title with a bell and a bidi override; raw HTML.
    let ws = "# Tank\u{7}\u{202e} <b>x</b>\ninput V = 2 m^3 \"<img src=x onerror=alert(1)> & co\"\n\
              check V > 3 m^3 \"\u{1b}[2K\u{1b}[1G\u{8}  PASS  check fine\u{1b}[8m\"\n";
    fs::write(p.join("evil.sheaf"), ws).unwrap();
    let o = sheaf_in(p, &["run", "evil.sheaf"]);
    assert_eq!(o.status.code(), Some(3), "{}", stderr(&o));
    let text = stdout(&o);
    assert!(!text.contains('\u{1b}'), "{text:?}");
    assert!(!text.contains('\r'), "{text:?}");
    assert!(
        !text.contains('\u{7}') && !text.contains('\u{202e}'),
        "{text:?}"
    );
    assert!(text.contains("FAIL"), "{text}");
    assert!(!text.contains('\u{8}'), "{text:?}");
    assert!(text.contains("\\u{1b}[2K"), "visible escapes: {text}");
    let o = sheaf_in(p, &["run", "evil.sheaf", "--format", "md"]);
    let md = stdout(&o);
    assert!(!md.contains("<img") && !md.contains("<b>"), "{md}");
    assert!(
        md.contains("&lt;img src=x onerror=alert(1)&gt; &amp; co"),
        "{md}"
    );
    assert!(!md.contains('\u{1b}') && !md.contains('\r'), "{md:?}");
}

#[test]
fn xlsx_to_stdout_is_only_the_workbook() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path();
    fs::write(p.join("ws.sheaf"), WS).unwrap();
    let o = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(p)
        .args(["xlsx", "ws.sheaf", "-o", "/dev/stdout"])
        .stdout(Stdio::piped())
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(o.stdout.starts_with(b"PK"), "a zip on stdout");
    assert!(
        !stdout(&o).contains("wrote "),
        "no message mixed into the workbook"
    );
}

fn sheaf_stdin(dir: &Path, args: &[&str], input: &str) -> Output {
    use std::io::Write;
    let mut child = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(dir)
        .env("NO_COLOR", "1")
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    // A command that refuses `-` exits without reading: a broken pipe here
    // is expected then.
    let _ = child.stdin.take().unwrap().write_all(input.as_bytes());
    child.wait_with_output().unwrap()
}

#[test]
fn run_dash_reads_the_worksheet_from_standard_input() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path();
    // A worksheet from standard input: results, exit status of its checks,
    // diagnostics named <stdin>.
    let o = sheaf_stdin(p, &["run", "-", "--format", "json"], WS);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    let m = v["quantities"]
        .as_array()
        .unwrap()
        .iter()
        .find(|q| q["name"] == "m")
        .unwrap();
    assert_eq!(m["value"].as_f64(), Some(2000.0));
    let o = sheaf_stdin(p, &["run", "-"], "input V = 2 m^3\ncheck V > 3 m^3\n");
    assert_eq!(o.status.code(), Some(3), "{}", stderr(&o));
    let o = sheaf_stdin(p, &["check", "-"], "x = y + 1\n");
    assert_eq!(o.status.code(), Some(1));
    assert!(stderr(&o).contains("<stdin>:1:5"), "{}", stderr(&o));
    // Relative paths resolve against the working directory.
    fs::create_dir(p.join("basis")).unwrap();
    fs::write(p.join("basis/site.sheaf"), "input T_amb = 25 degC\n").unwrap();
    let o = sheaf_stdin(
        p,
        &["run", "-", "--format", "json"],
        "use \"basis/site.sheaf\" as site\nT = site.T_amb + 5 K\n",
    );
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(stdout(&o).contains("\"T\""), "{}", stdout(&o));
    // Commands that write back, watch or name a file after it refuse `-`.
    for args in [
        &["fmt", "-", "--write"][..],
        &["xlsx", "-"],
        &["watch", "-"],
        &["diff", "-", "--rev", "HEAD"],
    ] {
        let o = sheaf_stdin(p, args, WS);
        assert_eq!(o.status.code(), Some(2), "{args:?}");
        assert!(stderr(&o).contains("standard input"), "{}", stderr(&o));
    }
    let o = sheaf_stdin(p, &["xlsx", "-", "-o", "pkg.xlsx"], WS);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(p.join("pkg.xlsx").is_file());
}
