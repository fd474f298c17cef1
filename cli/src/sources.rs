//! Reading a worksheet and everything it names (`use`d worksheets, `cell()`
//! workbooks) before the engine checks it, from the working tree or from a
//! git revision (`sheaf diff --rev`). The engine receives text only.
//!
//! Git is run as a subprocess (`git show REV:./PATH`): no library to keep
//! in step with the repository format, and the user's own git (with its
//! configuration) reads the repository.

use std::path::{Component, Path, PathBuf};
use std::sync::OnceLock;

use sheaf_engine::{Diagnostic, Externals, Model, Parsed, UsedSource};

use crate::files;

/// Largest worksheet read through `use` (the grammar's own bound).
const MAX_WORKSHEET_BYTES: u64 = sheaf_grammar::MAX_SOURCE_BYTES as u64;

/// Folders the user allowed with `--allow DIR` (besides each worksheet's
/// own folder).
static ALLOWED: OnceLock<Vec<PathBuf>> = OnceLock::new();

/// Set the allowed folders once, at start.
pub fn set_allowed(dirs: Vec<PathBuf>) {
    let _ = ALLOWED.set(dirs);
}

fn allowed() -> &'static [PathBuf] {
    ALLOWED.get().map_or(&[], Vec::as_slice)
}

/// Where files are read from.
#[derive(Clone, Debug, PartialEq)]
pub enum Rev {
    /// The working tree.
    Work,
    /// A git revision (`HEAD`, `main~2`, a commit).
    Git(String),
}

/// A worksheet as read and checked.
pub struct Loaded {
    /// The file as named on the command line.
    pub name: String,
    pub source: String,
    /// The checked model, or the diagnostics (located in `source`).
    pub model: Result<Model, Vec<Diagnostic>>,
    /// Every file read: the worksheet, used worksheets, workbooks.
    pub files: Vec<PathBuf>,
}

/// Read `file` at `rev` with everything it names, and check it. `Err`: the
/// worksheet itself could not be read (message).
pub fn load(file: &Path, rev: &Rev) -> Result<Loaded, String> {
    let source = read_main(file, rev)?;
    let name = if is_stdin(file) {
        STDIN_NAME.to_string()
    } else {
        file.display().to_string()
    };
    let dir = folder(file);
    let mut files = vec![file.to_path_buf()];
    let real = match rev {
        Rev::Work => std::fs::canonicalize(file).unwrap_or_else(|_| file.to_path_buf()),
        Rev::Git(_) => normalise(&std::env::current_dir().unwrap_or_default().join(file)),
    };
    let model = Parsed::new(source.clone()).and_then(|parsed| {
        let mut stack = vec![real];
        let ext = externals(&dir, &parsed, rev, &mut stack, &mut files);
        parsed.check(&ext)
    });
    Ok(Loaded {
        name,
        source,
        model,
        files,
    })
}

fn folder(file: &Path) -> PathBuf {
    match file.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    }
}

/// The worksheet named `-` on the command line is read from standard
/// input; the paths it names then resolve against the working directory.
pub fn is_stdin(file: &Path) -> bool {
    file.as_os_str() == "-"
}

/// How a worksheet read from standard input is named in messages.
pub const STDIN_NAME: &str = "<stdin>";

/// Standard input as text, bounded like a worksheet file.
fn read_stdin() -> Result<String, String> {
    use std::io::Read;
    let mut bytes = Vec::new();
    std::io::stdin()
        .lock()
        .take(MAX_WORKSHEET_BYTES + 1)
        .read_to_end(&mut bytes)
        .map_err(|e| format!("cannot read the worksheet from standard input: {e}"))?;
    if bytes.len() as u64 > MAX_WORKSHEET_BYTES {
        return Err(format!(
            "the worksheet on standard input is larger than {} MiB; sheaf reads worksheets up to that size",
            MAX_WORKSHEET_BYTES >> 20
        ));
    }
    String::from_utf8(bytes)
        .map_err(|_| "the worksheet on standard input is not UTF-8 text".to_string())
}

fn read_main(file: &Path, rev: &Rev) -> Result<String, String> {
    match rev {
        Rev::Work if is_stdin(file) => read_stdin(),
        Rev::Git(_) if is_stdin(file) => {
            Err("a worksheet from standard input has no git revision; name the file".to_string())
        }
        Rev::Work => std::fs::read_to_string(file)
            .map_err(|e| format!("cannot read {}: {e}", file.display())),
        Rev::Git(r) => git_show(file, r),
    }
}

/// The text of `file` as committed in revision `rev`.
pub fn git_show(file: &Path, rev: &str) -> Result<String, String> {
    if rev.starts_with('-') || rev.contains(':') {
        return Err(format!("`{rev}` is not a revision"));
    }
    let dir = folder(file);
    let name = file
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let out = std::process::Command::new("git")
        .arg("-C")
        .arg(&dir)
        .arg("show")
        .arg(format!("{rev}:./{name}"))
        .output()
        .map_err(|e| format!("cannot run git: {e}"))?;
    if !out.status.success() {
        let msg = String::from_utf8_lossy(&out.stderr).trim().to_string();
        return Err(format!(
            "cannot read {} at revision {rev}: {msg}",
            file.display()
        ));
    }
    String::from_utf8(out.stdout)
        .map_err(|_| format!("{} at revision {rev} is not UTF-8 text", file.display()))
}

/// `a/./b/../c` -> `a/c` (no file system access).
fn normalise(p: &Path) -> PathBuf {
    let mut out = PathBuf::new();
    for c in p.components() {
        match c {
            Component::CurDir => {}
            Component::ParentDir => {
                out.pop();
            }
            other => out.push(other.as_os_str()),
        }
    }
    out
}

/// Read a used worksheet: its identity (for cycles), the path to show and
/// its text.
fn read_used(dir: &Path, requested: &str, rev: &Rev) -> Result<(PathBuf, String), String> {
    match rev {
        Rev::Work => {
            let (real, bytes) =
                files::read_confined(dir, requested, allowed(), MAX_WORKSHEET_BYTES)
                    .map_err(|e| e.to_string())?;
            let text = String::from_utf8(bytes)
                .map_err(|_| format!("cannot read `{requested}`: it is not UTF-8 text"))?;
            Ok((real, text))
        }
        Rev::Git(r) => {
            // The same policy, on paths: the worksheet's folder or an
            // allowed one.
            let cwd = std::env::current_dir().unwrap_or_default();
            let base = normalise(&cwd.join(dir));
            let target = normalise(&base.join(requested));
            let inside = std::iter::once(base)
                .chain(allowed().iter().map(|a| normalise(&cwd.join(a))))
                .any(|root| target.starts_with(root));
            if !inside || requested.is_empty() {
                return Err(format!(
                    "cannot read `{requested}`: not a readable file in the worksheet's folder or a folder allowed with --allow"
                ));
            }
            let text = git_show(&target, r)?;
            Ok((target, text))
        }
    }
}

/// The external inputs of a worksheet in folder `dir`: its workbook cells
/// and used worksheets (recursively). `stack`: the worksheets being read,
/// outermost first (a `use` of one of them is a cycle).
fn externals(
    dir: &Path,
    parsed: &Parsed,
    rev: &Rev,
    stack: &mut Vec<PathBuf>,
    files: &mut Vec<PathBuf>,
) -> Externals {
    let cells = parsed.cell_requests();
    let mut ext = crate::workbooks::read_cells(dir, &cells, allowed());
    for c in &cells {
        let p = dir.join(&c.book);
        if !files.contains(&p) {
            files.push(p);
        }
    }
    for req in parsed.use_requests() {
        let got = read_used(dir, &req.path, rev).and_then(|(real, text)| {
            if let Some(at) = stack.iter().position(|p| *p == real) {
                let mut chain: Vec<String> = stack[at..]
                    .iter()
                    .map(|p| {
                        p.file_name()
                            .map_or(String::new(), |n| n.to_string_lossy().into_owned())
                    })
                    .collect();
                chain.push(req.path.clone());
                return Err(format!("cycle of `use`: {}", chain.join(" -> ")));
            }
            if !files.contains(&real) {
                files.push(real.clone());
            }
            let sub_dir = folder(&real);
            let sub_ext = match Parsed::new(text.clone()) {
                Ok(p) => {
                    stack.push(real.clone());
                    let e = externals(&sub_dir, &p, rev, stack, files);
                    stack.pop();
                    e
                }
                // The engine parses it again and reports the errors.
                Err(_) => Externals::none(),
            };
            Ok(UsedSource {
                name: req.path.clone(),
                path: real.display().to_string(),
                text,
                externals: sub_ext,
            })
        });
        ext.set_used(&req.path, got);
    }
    ext
}

/// Check a new text of the worksheet `file` (e.g. after `pull --write`),
/// with everything it names read as for a run.
pub fn check_text(file: &Path, text: &str) -> Result<(), Vec<Diagnostic>> {
    let dir = folder(file);
    let parsed = Parsed::new(text.to_string())?;
    let real = std::fs::canonicalize(file).unwrap_or_else(|_| file.to_path_buf());
    let mut files = Vec::new();
    let ext = externals(&dir, &parsed, &Rev::Work, &mut vec![real], &mut files);
    parsed.check(&ext).map(|_| ())
}
