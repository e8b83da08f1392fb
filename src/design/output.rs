//! The one writer for every file the program produces: designs, exports and the command line's
//! `--out` files.
//!
//! Rules, in order:
//! * A path that names a device, a named pipe or a socket (`/dev/stdout`, a FIFO, a shell's
//!   `>(gzip)`) is written straight into; replacing it with a regular file would break the
//!   pipe.
//! * A folder is refused.
//! * An existing regular file that is read-only (no write permission bit set, or not openable
//!   for writing by this user) is refused, as an editor would refuse it.
//! * Everything else goes through a temporary file beside the target that is written, synced and
//!   renamed over it, so the file is either the old one or the whole new one. A replaced file
//!   keeps its permissions (and, where the platform allows, its owner and group). A symbolic
//!   link is followed: the file it points to is replaced and the link stays.
//!
//! [`refuse_input`] is the check callers make first when a command also reads files: an output
//! that is one of the inputs (compared as canonical paths, so `./d.ron`, `d.ron` and a link to it
//! are the same file) is refused.

use std::fs::{self, OpenOptions};
use std::io::{self, Write as _};
use std::path::{Path, PathBuf};

/// How many temporary names are tried before giving up (`<name>.tmp`, `<name>.1.tmp`, …).
const TEMP_NAMES: u32 = 100;

fn refused(kind: io::ErrorKind, msg: String) -> io::Error {
    io::Error::new(kind, msg)
}

/// Writes `bytes` to `path` following the rules of this module: straight into a device or named
/// pipe; a read-only or folder target refused; otherwise atomically through a temporary file
/// that keeps the replaced file's permissions. On any failure an existing file is left as it
/// was.
///
/// ```
/// let dir = tempfile::tempdir()?;
/// let path = dir.path().join("out.csv");
/// stackwise::design::file::write_atomic(&path, b"a,b\n")?;
/// assert_eq!(std::fs::read(&path)?, b"a,b\n");
/// # Ok::<(), std::io::Error>(())
/// ```
pub fn write_atomic(path: &Path, bytes: &[u8]) -> io::Result<()> {
    let target = match fs::symlink_metadata(path) {
        Ok(m) if m.file_type().is_symlink() => fs::canonicalize(path).or_else(|err| {
            if err.kind() == io::ErrorKind::NotFound {
                // A dangling link: create the file beside the link's own name instead of
                // following it into a folder that may not exist.
                Ok(path.to_path_buf())
            } else {
                Err(err)
            }
        })?,
        _ => path.to_path_buf(),
    };
    let existing = match fs::metadata(&target) {
        Ok(m) => Some(m),
        Err(err) if err.kind() == io::ErrorKind::NotFound => None,
        Err(err) => return Err(err),
    };
    if let Some(meta) = &existing {
        let kind = meta.file_type();
        if kind.is_dir() {
            return Err(refused(
                io::ErrorKind::IsADirectory,
                format!("{} is a folder; give a file name", path.display()),
            ));
        }
        if !kind.is_file() {
            // A device, named pipe or socket: write into it as it is.
            let mut f = OpenOptions::new().write(true).open(&target)?;
            f.write_all(bytes)?;
            return f.flush();
        }
        if meta.permissions().readonly() || is_locked_for_us(&target) {
            return Err(refused(
                io::ErrorKind::PermissionDenied,
                format!(
                    "{} is read-only; it was left as it is (make it writable or choose \
                     another file)",
                    path.display()
                ),
            ));
        }
    }
    replace(&target, bytes, existing.as_ref())
}

/// Whether an existing file cannot be opened for writing by this user (opening without
/// truncating changes nothing).
fn is_locked_for_us(path: &Path) -> bool {
    matches!(
        OpenOptions::new().write(true).open(path),
        Err(e) if e.kind() == io::ErrorKind::PermissionDenied
    )
}

/// Creates a fresh temporary file beside `path`, never touching an existing file.
fn create_temp(path: &Path) -> io::Result<(PathBuf, fs::File)> {
    let Some(file_name) = path.file_name() else {
        return Err(refused(
            io::ErrorKind::InvalidInput,
            format!("{} does not end in a file name", path.display()),
        ));
    };
    let mut last = None;
    for i in 0..TEMP_NAMES {
        let mut name = file_name.to_os_string();
        if i > 0 {
            name.push(format!(".{i}"));
        }
        name.push(".tmp");
        let tmp = path.with_file_name(name);
        match OpenOptions::new().write(true).create_new(true).open(&tmp) {
            Ok(f) => return Ok((tmp, f)),
            Err(e) if e.kind() == io::ErrorKind::AlreadyExists => last = Some(e),
            Err(e) => return Err(e),
        }
    }
    Err(last.unwrap_or_else(|| io::Error::other("no free temporary file name")))
}

fn replace(path: &Path, bytes: &[u8], existing: Option<&fs::Metadata>) -> io::Result<()> {
    let (tmp, mut f) = create_temp(path)?;
    let written = (|| {
        f.write_all(bytes)?;
        if let Some(meta) = existing {
            f.set_permissions(meta.permissions())?;
            keep_owner(&f, meta);
        }
        f.sync_all()?;
        drop(f);
        fs::rename(&tmp, path)
    })();
    if let Err(err) = written {
        // Best effort: the write already failed, and a leftover temporary file is harmless.
        fs::remove_file(&tmp).ok();
        return Err(err);
    }
    sync_folder(path);
    Ok(())
}

/// Gives the new file the replaced file's owner and group where allowed; a user may not give
/// files away, so failure is expected and ignored (the permissions are kept regardless).
fn keep_owner(f: &fs::File, old: &fs::Metadata) {
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt as _;
        if let Ok(new) = f.metadata()
            && (new.uid(), new.gid()) != (old.uid(), old.gid())
        {
            std::os::unix::fs::fchown(f, Some(old.uid()), Some(old.gid())).ok();
        }
    }
    #[cfg(not(unix))]
    let _ = (f, old);
}

/// Flushes the folder entry after a rename where the platform allows it (Unix); failure only
/// weakens durability after a power cut, so it is not an error.
fn sync_folder(path: &Path) {
    #[cfg(unix)]
    {
        let dir = match path.parent() {
            Some(p) if !p.as_os_str().is_empty() => p,
            _ => Path::new("."),
        };
        if let Ok(d) = fs::File::open(dir) {
            d.sync_all().ok();
        }
    }
    #[cfg(not(unix))]
    let _ = path;
}

/// Whether two paths name the same existing file: equal canonical paths (so `./d.ron`,
/// `d.ron` and a symbolic link to it match) or, on Unix, the same device and inode (a hard
/// link). A path that does not exist matches nothing.
#[must_use]
pub fn same_file(a: &Path, b: &Path) -> bool {
    let (Ok(ca), Ok(cb)) = (fs::canonicalize(a), fs::canonicalize(b)) else {
        return false;
    };
    if ca == cb {
        return true;
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt as _;
        if let (Ok(ma), Ok(mb)) = (fs::metadata(&ca), fs::metadata(&cb)) {
            return ma.is_file() && (ma.dev(), ma.ino()) == (mb.dev(), mb.ino());
        }
    }
    false
}

/// Refuses an output path that is one of `inputs` (see [`same_file`]): writing there would
/// destroy the input. Devices and pipes (`/dev/stdout` given twice) are not files to protect.
///
/// ```
/// use std::path::Path;
/// use stackwise::design::output::refuse_input;
/// let dir = tempfile::tempdir()?;
/// let design = dir.path().join("d.ron");
/// std::fs::write(&design, "(format: 1)")?;
/// let same = dir.path().join(".").join("d.ron");
/// let e = refuse_input(&same, &[design.as_path()]).unwrap_err();
/// assert!(e.to_string().contains("is also an input"));
/// assert!(refuse_input(&dir.path().join("d.csv"), &[design.as_path()]).is_ok());
/// # Ok::<(), std::io::Error>(())
/// ```
pub fn refuse_input(out: &Path, inputs: &[&Path]) -> io::Result<()> {
    if !fs::metadata(out).is_ok_and(|m| m.is_file()) {
        return Ok(());
    }
    match inputs.iter().find(|input| same_file(out, input)) {
        Some(input) => Err(refused(
            io::ErrorKind::AlreadyExists,
            format!(
                "{} is also an input of this command ({}); writing there would destroy it, so \
                 choose another output file",
                out.display(),
                input.display()
            ),
        )),
        None => Ok(()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[cfg(unix)]
    #[test]
    fn replaced_file_keeps_its_mode_and_readonly_is_refused() {
        use std::os::unix::fs::PermissionsExt as _;
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("a.csv");
        fs::write(&path, "old").unwrap();
        fs::set_permissions(&path, fs::Permissions::from_mode(0o640)).unwrap();
        write_atomic(&path, b"new").unwrap();
        let mode = fs::metadata(&path).unwrap().permissions().mode() & 0o777;
        assert_eq!(mode, 0o640, "mode kept");
        assert_eq!(fs::read(&path).unwrap(), b"new", "content replaced");

        fs::set_permissions(&path, fs::Permissions::from_mode(0o444)).unwrap();
        let e = write_atomic(&path, b"newer").unwrap_err();
        assert_eq!(e.kind(), io::ErrorKind::PermissionDenied, "{e}");
        assert!(e.to_string().contains("read-only"), "{e}");
        assert_eq!(fs::read(&path).unwrap(), b"new", "read-only file untouched");
    }

    #[cfg(unix)]
    #[test]
    fn a_link_is_followed_and_stays_a_link() {
        let dir = tempfile::tempdir().unwrap();
        let real = dir.path().join("real.csv");
        let link = dir.path().join("link.csv");
        fs::write(&real, "old").unwrap();
        std::os::unix::fs::symlink(&real, &link).unwrap();
        write_atomic(&link, b"new").unwrap();
        assert!(
            fs::symlink_metadata(&link)
                .unwrap()
                .file_type()
                .is_symlink(),
            "link kept"
        );
        assert_eq!(fs::read(&real).unwrap(), b"new", "target replaced");
    }

    #[test]
    fn an_existing_temporary_name_is_never_clobbered() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("x.csv");
        fs::write(dir.path().join("x.csv.tmp"), "keep me").unwrap();
        write_atomic(&path, b"data").unwrap();
        assert_eq!(fs::read(&path).unwrap(), b"data", "written");
        assert_eq!(
            fs::read(dir.path().join("x.csv.tmp")).unwrap(),
            b"keep me",
            "other file untouched"
        );
    }

    #[test]
    fn a_folder_is_refused() {
        let dir = tempfile::tempdir().unwrap();
        let e = write_atomic(dir.path(), b"x").unwrap_err();
        assert!(e.to_string().contains("is a folder"), "{e}");
    }

    #[cfg(unix)]
    #[test]
    fn hard_links_and_symlinks_are_the_same_file() {
        let dir = tempfile::tempdir().unwrap();
        let a = dir.path().join("a.ron");
        fs::write(&a, "x").unwrap();
        let hard = dir.path().join("hard.ron");
        fs::hard_link(&a, &hard).unwrap();
        let soft = dir.path().join("soft.ron");
        std::os::unix::fs::symlink(&a, &soft).unwrap();
        assert!(same_file(&a, &hard), "hard link");
        assert!(same_file(&soft, &a), "symlink");
        assert!(!same_file(&a, &dir.path().join("missing.ron")), "missing");
        assert!(refuse_input(&soft, &[a.as_path()]).is_err(), "refused");
    }
}
