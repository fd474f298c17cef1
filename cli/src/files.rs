//! Every file the tool reads on a worksheet's behalf or writes goes
//! through here (the engine does no file I/O).
//!
//! Writing ([`write_file`]), the policy the README states ("Files sheaf
//! writes"):
//! - a regular file is replaced atomically: the bytes go to a temporary
//!   file created exclusively, with an unpredictable name, in the target's
//!   folder (`tempfile`), are flushed to disk, and the temporary file is
//!   renamed over the target. The target keeps its permission bits. Any
//!   error removes the temporary file (a killed process can leave one
//!   behind: `.NAME.XXXXXX.sheaf-tmp`);
//! - a symbolic link is followed: its final target is replaced, the link
//!   stays; a link to a missing file is refused;
//! - a file with more than one hard link is refused (replacing it would
//!   split the links; writing in place would not be atomic);
//! - a read-only file, or one the user cannot write, is refused;
//! - a target that is not a regular file (`/dev/null`, `/dev/stdout`, a
//!   FIFO, a terminal or another device) is written into, never replaced;
//!   a folder or socket is refused.
//!
//! Reading ([`read_confined`]): a file a worksheet names (a `cell()`
//! workbook, a `use`d worksheet) is read only when, after resolving
//! symbolic links, it lies in the worksheet's folder or below, or in a
//! folder the user allowed; only regular files are opened, with a size
//! bound; every refusal gives one neutral message.

use std::fmt;
use std::fs::{self, File, OpenOptions};
use std::io::{self, Read, Write};
use std::path::{Path, PathBuf};

/// Why a file was not written. The message names the file.
#[derive(Debug)]
pub struct WriteError {
    pub path: PathBuf,
    pub message: String,
}

impl fmt::Display for WriteError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "cannot write {}: {}", self.path.display(), self.message)
    }
}

impl std::error::Error for WriteError {}

fn werr(path: &Path, message: impl Into<String>) -> WriteError {
    WriteError {
        path: path.to_path_buf(),
        message: message.into(),
    }
}

/// Whether two paths name the same file (same device and inode, so also
/// through another spelling, a symbolic link or a hard link). `false`
/// when either does not exist.
pub fn same_file(a: &Path, b: &Path) -> bool {
    match (fs::metadata(a), fs::metadata(b)) {
        (Ok(x), Ok(y)) => same_meta(&x, &y),
        _ => false,
    }
}

#[cfg(unix)]
fn same_meta(x: &fs::Metadata, y: &fs::Metadata) -> bool {
    use std::os::unix::fs::MetadataExt;
    x.dev() == y.dev() && x.ino() == y.ino()
}

#[cfg(not(unix))]
fn same_meta(_: &fs::Metadata, _: &fs::Metadata) -> bool {
    false
}

#[cfg(unix)]
fn link_count(m: &fs::Metadata) -> u64 {
    use std::os::unix::fs::MetadataExt;
    m.nlink()
}

#[cfg(not(unix))]
fn link_count(_: &fs::Metadata) -> u64 {
    1
}

/// Write `bytes` to `path` under the policy of this module.
pub fn write_file(path: &Path, bytes: &[u8]) -> Result<(), WriteError> {
    // Follow a symbolic link to its final target.
    let target = match fs::symlink_metadata(path) {
        Ok(m) if m.file_type().is_symlink() => match fs::canonicalize(path) {
            Ok(t) => t,
            // `/dev/stdout` -> `/proc/self/fd/1` -> `pipe:[...]`: no path,
            // but the kernel follows it to a pipe or terminal.
            Err(_) => match fs::metadata(path) {
                Ok(meta) if !meta.is_file() && !meta.is_dir() => {
                    return write_into(path, path, &meta, bytes);
                }
                _ => {
                    return Err(werr(
                        path,
                        "it is a symbolic link to a file that does not exist (not followed)",
                    ));
                }
            },
        },
        Ok(_) => path.to_path_buf(),
        Err(e) if e.kind() == io::ErrorKind::NotFound => {
            return replace(path, bytes, None);
        }
        Err(e) => return Err(werr(path, e.to_string())),
    };
    let meta = fs::metadata(&target).map_err(|e| werr(path, e.to_string()))?;
    let ft = meta.file_type();
    if ft.is_dir() {
        return Err(werr(path, "it is a folder"));
    }
    if !ft.is_file() {
        return write_into(path, &target, &meta, bytes);
    }
    if meta.permissions().readonly() {
        return Err(werr(path, "the file is read-only (not replaced)"));
    }
    // Can this user write it? (Replacing by rename needs only the folder's
    // permission; a file the user may not write is not theirs to replace.)
    if let Err(e) = OpenOptions::new().write(true).open(&target) {
        return Err(werr(
            path,
            format!("the file is not writable ({e}); not replaced"),
        ));
    }
    let links = link_count(&meta);
    if links > 1 {
        return Err(werr(
            path,
            format!(
                "the file has {links} hard links; replacing it would split them (write to another file, or remove the other links)"
            ),
        ));
    }
    replace(&target, bytes, Some(meta.permissions()))
}

/// A device, FIFO or terminal: write into it, never replace it.
fn write_into(
    path: &Path,
    target: &Path,
    meta: &fs::Metadata,
    bytes: &[u8],
) -> Result<(), WriteError> {
    if is_socket(meta) {
        return Err(werr(path, "it is a socket"));
    }
    let mut f = OpenOptions::new()
        .write(true)
        .open(target)
        .map_err(|e| werr(path, e.to_string()))?;
    f.write_all(bytes)
        .and_then(|()| f.flush())
        .map_err(|e| werr(path, e.to_string()))
}

#[cfg(unix)]
fn is_socket(m: &fs::Metadata) -> bool {
    use std::os::unix::fs::FileTypeExt;
    m.file_type().is_socket()
}

#[cfg(not(unix))]
fn is_socket(_: &fs::Metadata) -> bool {
    false
}

/// Write through an exclusive temporary file in the target's folder and
/// rename it over `target`. `perms`: the permission bits to keep (a new
/// file gets the usual ones: 0666 less the umask).
fn replace(target: &Path, bytes: &[u8], perms: Option<fs::Permissions>) -> Result<(), WriteError> {
    let dir = match target.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    };
    let name = target
        .file_name()
        .map_or("out".into(), |n| n.to_string_lossy().into_owned());
    let prefix = format!(".{name}.");
    let mut builder = tempfile::Builder::new();
    builder.prefix(&prefix).suffix(".sheaf-tmp");
    #[cfg(unix)]
    if perms.is_none() {
        use std::os::unix::fs::PermissionsExt;
        // Passed to open(2), so the umask applies, as for any new file.
        builder.permissions(fs::Permissions::from_mode(0o666));
    }
    let mut tmp = builder
        .tempfile_in(dir)
        .map_err(|e| werr(target, format!("cannot create a temporary file ({e})")))?;
    // From here on, dropping `tmp` (any error below) removes it.
    if let Some(p) = perms {
        fs::set_permissions(tmp.path(), p).map_err(|e| werr(target, e.to_string()))?;
    }
    tmp.write_all(bytes)
        .and_then(|()| tmp.as_file().sync_all())
        .map_err(|e| werr(target, e.to_string()))?;
    tmp.persist(target)
        .map_err(|e| werr(target, e.error.to_string()))?;
    Ok(())
}

/// Why a file a worksheet asked for was not read.
#[derive(Debug, Clone, PartialEq)]
pub enum AccessError {
    /// Missing, outside the allowed folders, not a regular file, or not
    /// readable: deliberately one message, so a worksheet cannot probe
    /// which paths exist outside its folder.
    Refused { requested: String },
    /// An allowed, readable regular file over the size bound.
    TooLarge { requested: String, max_bytes: u64 },
}

impl fmt::Display for AccessError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            AccessError::Refused { requested } => write!(
                f,
                "cannot read `{requested}`: not a readable file in the worksheet's folder \
                 or a folder allowed with --allow"
            ),
            AccessError::TooLarge {
                requested,
                max_bytes,
            } => write!(
                f,
                "cannot read `{requested}`: the file is larger than {max_bytes} bytes"
            ),
        }
    }
}

impl std::error::Error for AccessError {}

/// Read a file a worksheet names: `requested` is resolved relative to
/// `base_dir` (the worksheet's folder; an absolute path stays as it is),
/// symbolic links are resolved, and the result must lie in `base_dir` or
/// one of `allowed` (or below), be a regular file and hold at most
/// `max_bytes`. Returns the resolved path and the bytes.
pub fn read_confined(
    base_dir: &Path,
    requested: &str,
    allowed: &[PathBuf],
    max_bytes: u64,
) -> Result<(PathBuf, Vec<u8>), AccessError> {
    let refused = || AccessError::Refused {
        requested: requested.to_string(),
    };
    let base = if base_dir.as_os_str().is_empty() {
        Path::new(".")
    } else {
        base_dir
    };
    if requested.is_empty() || requested.contains('\0') {
        return Err(refused());
    }
    let real = fs::canonicalize(base.join(requested)).map_err(|_| refused())?;
    let inside = std::iter::once(base)
        .chain(allowed.iter().map(PathBuf::as_path))
        .filter_map(|root| fs::canonicalize(root).ok())
        .any(|root| real.starts_with(&root));
    if !inside {
        return Err(refused());
    }
    let meta = fs::metadata(&real).map_err(|_| refused())?;
    if !meta.is_file() {
        return Err(refused());
    }
    let file = open_nonblocking(&real).map_err(|_| refused())?;
    // What was opened must be what was checked (no swap in between).
    let opened = file.metadata().map_err(|_| refused())?;
    if !opened.is_file() || (cfg!(unix) && !same_meta(&meta, &opened)) {
        return Err(refused());
    }
    if opened.len() > max_bytes {
        return Err(AccessError::TooLarge {
            requested: requested.to_string(),
            max_bytes,
        });
    }
    let mut bytes = Vec::with_capacity(usize::try_from(opened.len()).unwrap_or(0));
    file.take(max_bytes.saturating_add(1))
        .read_to_end(&mut bytes)
        .map_err(|_| refused())?;
    if bytes.len() as u64 > max_bytes {
        return Err(AccessError::TooLarge {
            requested: requested.to_string(),
            max_bytes,
        });
    }
    Ok((real, bytes))
}

/// Open for reading without blocking (a FIFO swapped in after the check
/// must not hang the run).
#[cfg(unix)]
#[allow(dead_code)]
fn open_nonblocking(p: &Path) -> io::Result<File> {
    use std::os::unix::fs::OpenOptionsExt;
    OpenOptions::new()
        .read(true)
        .custom_flags(libc::O_NONBLOCK)
        .open(p)
}

#[cfg(not(unix))]
#[allow(dead_code)]
fn open_nonblocking(p: &Path) -> io::Result<File> {
    File::open(p)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn dir() -> tempfile::TempDir {
        tempfile::tempdir().unwrap()
    }

    fn leftovers(d: &Path) -> Vec<String> {
        fs::read_dir(d)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .filter(|n| n.ends_with(".sheaf-tmp"))
            .collect()
    }

    #[test]
    fn new_and_replaced_files() {
        let d = dir();
        let p = d.path().join("a.txt");
        write_file(&p, b"one").unwrap();
        assert_eq!(fs::read(&p).unwrap(), b"one");
        write_file(&p, b"two").unwrap();
        assert_eq!(fs::read(&p).unwrap(), b"two");
        assert!(leftovers(d.path()).is_empty());
    }

    #[cfg(unix)]
    #[test]
    fn mode_is_kept() {
        use std::os::unix::fs::PermissionsExt;
        let d = dir();
        let p = d.path().join("private.sheaf");
        fs::write(&p, "x").unwrap();
        fs::set_permissions(&p, fs::Permissions::from_mode(0o600)).unwrap();
        write_file(&p, b"y").unwrap();
        let mode = fs::metadata(&p).unwrap().permissions().mode() & 0o777;
        assert_eq!(mode, 0o600);
        fs::set_permissions(&p, fs::Permissions::from_mode(0o640)).unwrap();
        write_file(&p, b"z").unwrap();
        assert_eq!(
            fs::metadata(&p).unwrap().permissions().mode() & 0o777,
            0o640
        );
    }

    #[cfg(unix)]
    #[test]
    fn symlink_is_written_through() {
        let d = dir();
        let real = d.path().join("real.sheaf");
        let link = d.path().join("link.sheaf");
        fs::write(&real, "old").unwrap();
        std::os::unix::fs::symlink(&real, &link).unwrap();
        write_file(&link, b"new").unwrap();
        assert!(
            fs::symlink_metadata(&link)
                .unwrap()
                .file_type()
                .is_symlink()
        );
        assert_eq!(fs::read(&real).unwrap(), b"new");
        // A dangling link is refused, nothing created.
        let dangling = d.path().join("dangling");
        std::os::unix::fs::symlink(d.path().join("nowhere"), &dangling).unwrap();
        assert!(write_file(&dangling, b"x").is_err());
        assert!(!d.path().join("nowhere").exists());
    }

    #[cfg(unix)]
    #[test]
    fn hard_links_and_read_only_are_refused() {
        use std::os::unix::fs::PermissionsExt;
        let d = dir();
        let a = d.path().join("a");
        let b = d.path().join("b");
        fs::write(&a, "keep").unwrap();
        fs::hard_link(&a, &b).unwrap();
        let e = write_file(&a, b"x").unwrap_err().to_string();
        assert!(e.contains("hard links"), "{e}");
        assert_eq!(fs::read(&b).unwrap(), b"keep");
        fs::remove_file(&b).unwrap();
        fs::set_permissions(&a, fs::Permissions::from_mode(0o444)).unwrap();
        let e = write_file(&a, b"x").unwrap_err().to_string();
        assert!(e.contains("read-only"), "{e}");
        assert_eq!(fs::read(&a).unwrap(), b"keep");
        assert!(leftovers(d.path()).is_empty());
    }

    #[cfg(unix)]
    #[test]
    fn special_files_are_written_into_not_replaced() {
        write_file(Path::new("/dev/null"), b"bytes").unwrap();
        let m = fs::metadata("/dev/null").unwrap();
        assert!(!m.is_file(), "/dev/null must stay a device");
        let d = dir();
        let e = write_file(d.path(), b"x").unwrap_err().to_string();
        assert!(e.contains("folder"), "{e}");
    }

    #[test]
    fn error_leaves_no_temporary_file() {
        let d = dir();
        // The target is a folder inside a folder: rename fails after the
        // temporary file was written.
        let p = d.path().join("sub");
        fs::create_dir(&p).unwrap();
        fs::write(p.join("f"), "x").unwrap();
        assert!(replace(&p, b"data", None).is_err());
        assert!(leftovers(d.path()).is_empty());
        // A missing folder: nothing to create, a clear error.
        let e = write_file(&d.path().join("no/such/dir/x"), b"x").unwrap_err();
        assert!(e.to_string().contains("temporary"), "{e}");
    }

    #[test]
    fn same_file_sees_through_spellings() {
        let d = dir();
        let a = d.path().join("a.sheaf");
        fs::write(&a, "x").unwrap();
        let dotted = d.path().join(".").join("a.sheaf");
        assert!(same_file(&a, &dotted));
        #[cfg(unix)]
        {
            let h = d.path().join("h");
            fs::hard_link(&a, &h).unwrap();
            assert!(same_file(&a, &h));
            let s = d.path().join("s");
            std::os::unix::fs::symlink(&a, &s).unwrap();
            assert!(same_file(&s, &a));
        }
        assert!(!same_file(&a, &d.path().join("missing")));
    }

    #[test]
    fn confined_reads() {
        let d = dir();
        let base = d.path().join("ws");
        fs::create_dir_all(base.join("data")).unwrap();
        fs::write(base.join("data/in.xlsx"), "inside").unwrap();
        let outside = d.path().join("secret");
        fs::create_dir_all(&outside).unwrap();
        fs::write(outside.join("private.xlsx"), "secret").unwrap();

        let (p, b) = read_confined(&base, "data/in.xlsx", &[], 100).unwrap();
        assert_eq!(b, b"inside");
        assert!(p.ends_with("data/in.xlsx"));

        let refused = |req: &str| read_confined(&base, req, &[], 100).unwrap_err();
        let neutral = |req: &str| AccessError::Refused {
            requested: req.to_string(),
        };
        // Outside by `..`, absolute, missing, a folder: one message each.
        for req in [
            "../secret/private.xlsx",
            outside.join("private.xlsx").to_str().unwrap(),
            "../secret/missing.xlsx",
            "missing.xlsx",
            "data",
            "",
        ] {
            assert_eq!(refused(req), neutral(req), "{req}");
        }
        // Same wording for an existing and a missing file outside.
        let a = refused("../secret/private.xlsx").to_string();
        let b = refused("../secret/missing.xlsx").to_string();
        assert_eq!(
            a.replace("private", "X"),
            b.replace("missing", "X"),
            "messages must not tell existence apart"
        );
        // Allowed folder.
        let (_, b) = read_confined(
            &base,
            "../secret/private.xlsx",
            std::slice::from_ref(&outside),
            100,
        )
        .unwrap();
        assert_eq!(b, b"secret");
        // Size bound.
        assert!(matches!(
            read_confined(&base, "data/in.xlsx", &[], 3),
            Err(AccessError::TooLarge { .. })
        ));
        #[cfg(unix)]
        {
            // A symbolic link out of the folder is refused.
            std::os::unix::fs::symlink(outside.join("private.xlsx"), base.join("link.xlsx"))
                .unwrap();
            assert_eq!(refused("link.xlsx"), neutral("link.xlsx"));
            // A symbolic link inside the folder is fine.
            std::os::unix::fs::symlink(base.join("data/in.xlsx"), base.join("ok.xlsx")).unwrap();
            assert_eq!(
                read_confined(&base, "ok.xlsx", &[], 100).unwrap().1,
                b"inside"
            );
        }
    }

    #[cfg(unix)]
    #[test]
    fn fifo_and_devices_are_refused_without_hanging() {
        let d = dir();
        let fifo = d.path().join("pipe.xlsx");
        let ok = std::process::Command::new("mkfifo")
            .arg(&fifo)
            .status()
            .is_ok_and(|s| s.success());
        if ok {
            assert!(matches!(
                read_confined(d.path(), "pipe.xlsx", &[], 100),
                Err(AccessError::Refused { .. })
            ));
        }
        assert!(matches!(
            read_confined(d.path(), "/dev/zero", &[PathBuf::from("/dev")], 100),
            Err(AccessError::Refused { .. })
        ));
    }
}
