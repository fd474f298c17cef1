//! `sheaf watch FILE [--xlsx OUT]`: run (and export) once, then again on
//! every save of the worksheet or of a file it reads (used worksheets,
//! `cell()` workbooks).
//!
//! The folders of those files are watched (not the files: editors save by
//! writing a new file and renaming it over the old one); events on other
//! files, such as the package this command writes and its temporary file,
//! are ignored, so it does not re-trigger itself. Events are debounced.
//! Ctrl-C stops it with exit status 0.

use std::collections::BTreeSet;
use std::io::IsTerminal;
use std::path::{Path, PathBuf};
use std::sync::mpsc;
use std::time::Duration;

use notify::{RecursiveMode, Watcher};

use crate::sources::{self, Rev};

/// Quiet time after the last event before re-running.
const DEBOUNCE: Duration = Duration::from_millis(200);

enum Msg {
    Changed(Vec<PathBuf>),
    Stop,
}

/// The path a file is watched as: its folder resolved, joined with its
/// name (the file itself may be mid-rename).
fn watched_path(p: &Path) -> Option<PathBuf> {
    let dir = match p.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    };
    let dir = std::fs::canonicalize(dir).ok()?;
    Some(dir.join(p.file_name()?))
}

pub fn cmd_watch(
    file: &Path,
    xlsx: Option<&Path>,
    format: crate::Format,
    sig: usize,
    sets: &[String],
) -> u8 {
    let (tx, rx) = mpsc::channel::<Msg>();
    let stop = tx.clone();
    if let Err(e) = ctrlc::set_handler(move || {
        let _ = stop.send(Msg::Stop);
    }) {
        eprintln!("error: cannot handle Ctrl-C: {e}");
        return crate::EXIT_USAGE;
    }
    let mut watcher =
        match notify::recommended_watcher(move |res: notify::Result<notify::Event>| {
            if let Ok(ev) = res
                && !ev.kind.is_access()
            {
                let _ = tx.send(Msg::Changed(ev.paths));
            }
        }) {
            Ok(w) => w,
            Err(e) => {
                eprintln!("error: cannot watch files: {e}");
                return crate::EXIT_USAGE;
            }
        };
    let terminal = std::io::stdout().is_terminal();
    let mut dirs: BTreeSet<PathBuf> = BTreeSet::new();
    loop {
        let files = run_once(file, xlsx, format, sig, sets, terminal);
        let wanted: BTreeSet<PathBuf> = files.iter().filter_map(|f| watched_path(f)).collect();
        let new_dirs: BTreeSet<PathBuf> = wanted
            .iter()
            .filter_map(|f| f.parent().map(Path::to_path_buf))
            .collect();
        for d in dirs.difference(&new_dirs) {
            let _ = watcher.unwatch(d);
        }
        for d in new_dirs.difference(&dirs) {
            if let Err(e) = watcher.watch(d, RecursiveMode::NonRecursive) {
                eprintln!("warning: cannot watch {}: {e}", d.display());
            }
        }
        dirs = new_dirs;
        crate::stdout_flush();
        // Wait for a change to one of the files read.
        let relevant = |paths: &[PathBuf]| {
            paths
                .iter()
                .any(|p| watched_path(p).is_some_and(|w| wanted.contains(&w)))
        };
        loop {
            match rx.recv() {
                Ok(Msg::Stop) | Err(_) => return stop_cleanly(),
                Ok(Msg::Changed(paths)) if relevant(&paths) => break,
                Ok(Msg::Changed(_)) => {}
            }
        }
        // Debounce: wait until the events stop.
        loop {
            match rx.recv_timeout(DEBOUNCE) {
                Ok(Msg::Stop) => return stop_cleanly(),
                Ok(Msg::Changed(_)) => {}
                Err(mpsc::RecvTimeoutError::Timeout) => break,
                Err(mpsc::RecvTimeoutError::Disconnected) => return stop_cleanly(),
            }
        }
    }
}

fn stop_cleanly() -> u8 {
    outln!("sheaf watch: stopped");
    0
}

/// One run: print the report (or the errors), export the package when
/// asked. Returns every file read.
fn run_once(
    file: &Path,
    xlsx: Option<&Path>,
    format: crate::Format,
    sig: usize,
    sets: &[String],
    terminal: bool,
) -> Vec<PathBuf> {
    if terminal {
        // Clear the screen and go home.
        out!("\x1b[2J\x1b[H");
    }
    let loaded = match sources::load(file, &Rev::Work) {
        Ok(l) => l,
        Err(e) => {
            eprintln!("error: {e}");
            outln!(
                "sheaf watch: {} cannot be read; waiting for it",
                file.display()
            );
            return vec![file.to_path_buf()];
        }
    };
    let files = loaded.files.clone();
    let mut model = match loaded.model {
        Ok(m) => m,
        Err(diags) => {
            crate::diagnostics::emit(&loaded.name, &loaded.source, &diags);
            outln!(
                "sheaf watch: {} has {} error(s); waiting for the next save",
                loaded.name,
                diags.len()
            );
            return files;
        }
    };
    for s in sets {
        if let Some((n, v)) = s.split_once('=')
            && let Err(e) = model.set_input_text(n.trim(), v.trim())
        {
            eprintln!("error: --set {e}");
        }
    }
    model.evaluate();
    let errors = model.runtime_errors();
    if !errors.is_empty() {
        crate::diagnostics::emit(&loaded.name, model.source(), &errors);
    }
    let report = model.report();
    let colour = terminal && std::env::var_os("NO_COLOR").is_none();
    crate::print_report(&report, &loaded.name, format, sig, colour);
    if let Some(out) = xlsx {
        // Written atomically (files::write_file): a spreadsheet program
        // never opens half a package.
        crate::package::cmd_xlsx(file, Some(out), sets, None);
    }
    outln!(
        "sheaf watch: watching {} and {} file(s) it reads (Ctrl-C to stop)",
        loaded.name,
        files.len() - 1
    );
    files
}
