//! Reading files from disk (the CLI and recipes run by it; the page has only
//! the files the user dropped). The one place mortise opens a file to read:
//!
//! - only **regular files** are read: a device (`/dev/zero`), a named pipe,
//!   a socket or a directory is refused before it is opened, so nothing
//!   reads without end or waits forever for a writer;
//! - a file larger than the budget ([`Limits::file_bytes`], 256 MiB by
//!   default, `--max-file-mb`) is refused before it is read (except a file
//!   opened by [`open_stream`] to be read in blocks, never held whole), and reading
//!   stops one byte past the budget should the file grow meanwhile;
//! - [`DirSource`] confines the names a recipe (or a bundle) gives to the
//!   recipe's own folder: absolute names, `..` that leave the folder and
//!   symbolic links pointing out of it are refused unless the user allowed
//!   reading outside (`mortise run --read-outside`).
//!
//! Errors name the file as given and never quote its content.

use crate::error::{Error, Result};
use crate::limits::Limits;
use std::io::Read;
use std::path::{Component, Path, PathBuf};

/// Read one regular file of at most `limits.file_bytes` bytes. `shown` is the
/// name errors give (as the user wrote it).
pub fn read_file(path: &Path, shown: &str, limits: &Limits) -> Result<Vec<u8>> {
    // the regular-file checks (before and after opening) are open_stream's
    let file = open_stream(path, shown)?;
    let opened = file
        .metadata()
        .map_err(|e| Error::io(format!("cannot read: {}", plain_io(&e))).in_file(shown))?;
    limits
        .check_file(&format!("'{shown}'"), opened.len())
        .map_err(|e| e.in_file(shown))?;
    #[cfg(unix)]
    if opened.len() >= SPLIT_READ {
        let halves = read_halves(&file, opened.len())
            .map_err(|e| Error::io(format!("cannot read: {}", plain_io(&e))).in_file(shown))?;
        if let Some(bytes) = halves {
            return Ok(bytes);
        }
        // the file changed size while read: read again from its start, as below
    }
    // room for the whole file (within the budget just checked) and the one
    // byte that tells it grew: read once, never copied into a larger buffer
    let room = opened.len().min(limits.file_bytes).saturating_add(1);
    let mut bytes: Vec<u8> = crate::mem::large_vec(usize::try_from(room).unwrap_or(1 << 26));
    file.take(limits.file_bytes.saturating_add(1))
        .read_to_end(&mut bytes)
        .map_err(|e| Error::io(format!("cannot read: {}", plain_io(&e))).in_file(shown))?;
    limits
        .check_file(&format!("'{shown}'"), bytes.len() as u64)
        .map_err(|e| e.in_file(shown))?;
    Ok(bytes)
}

/// Files from this size on are read by two threads, a half each (Unix).
#[cfg(unix)]
const SPLIT_READ: u64 = 8 << 20;

/// The `len` bytes of `file`, the first half read on this thread while a
/// second thread reads the second (copying from the system's file cache
/// is the work, and two cores do it in about half the time: on the
/// 81 MB benchmark file 0.025–0.033 s against 0.048–0.056 s). Reads at
/// offsets, so the file's position is untouched. None when the file is
/// not `len` bytes long when read (it shrank or grew since it was
/// opened): the caller then reads it from its start.
#[cfg(unix)]
fn read_halves(file: &std::fs::File, len: u64) -> std::io::Result<Option<Vec<u8>>> {
    let Ok(n) = usize::try_from(len) else {
        return Ok(None);
    };
    let mut bytes = crate::mem::large_zeroed_bytes(n);
    let half = n / 2;
    let (first, second) = bytes.split_at_mut(half);
    let (a, b) = std::thread::scope(|sc| {
        let other =
            std::thread::Builder::new().spawn_scoped(sc, || fill_at(file, second, half as u64));
        let a = fill_at(file, first, 0);
        // None: no thread could be started, or it failed (it cannot panic
        // on a read); the second half is then read here, below
        let b = other.ok().and_then(|h| h.join().ok());
        (a, b)
    });
    let b = match b {
        Some(b) => b?,
        None => fill_at(file, &mut bytes[half..], half as u64)?,
    };
    if !(a? && b) {
        return Ok(None);
    }
    // one byte past the end tells the file grew
    if fill_at(file, &mut [0u8; 1], len)? {
        return Ok(None);
    }
    Ok(Some(bytes))
}

/// Fill `buf` from `file` at `offset` (std's `read_exact_at`: reads
/// retried when interrupted): true when filled, false when the file ended
/// first.
#[cfg(unix)]
fn fill_at(file: &std::fs::File, buf: &mut [u8], offset: u64) -> std::io::Result<bool> {
    use std::os::unix::fs::FileExt;
    match file.read_exact_at(buf, offset) {
        Ok(()) => Ok(true),
        Err(e) if e.kind() == std::io::ErrorKind::UnexpectedEof => Ok(false),
        Err(e) => Err(e),
    }
}

/// Open one regular file to read block by block (a WAV recording streamed
/// by `signal::analyse`): the same checks as [`read_file`] but no size
/// budget, since the file is never held whole.
pub fn open_stream(path: &Path, shown: &str) -> Result<std::fs::File> {
    let meta = std::fs::metadata(path)
        .map_err(|e| Error::io(format!("cannot read: {}", plain_io(&e))).in_file(shown))?;
    if !meta.is_file() {
        return Err(Error::io(format!(
            "not a regular file ({}); mortise reads only regular files",
            kind_of(&meta)
        ))
        .in_file(shown));
    }
    let file = std::fs::File::open(path)
        .map_err(|e| Error::io(format!("cannot read: {}", plain_io(&e))).in_file(shown))?;
    let opened = file
        .metadata()
        .map_err(|e| Error::io(format!("cannot read: {}", plain_io(&e))).in_file(shown))?;
    if !opened.is_file() {
        return Err(
            Error::io("not a regular file; mortise reads only regular files").in_file(shown),
        );
    }
    Ok(file)
}

/// The operating system's reason, without the Rust wording ("os error 2").
fn plain_io(e: &std::io::Error) -> String {
    match e.kind() {
        std::io::ErrorKind::NotFound => "no such file".into(),
        std::io::ErrorKind::PermissionDenied => "permission denied".into(),
        _ => {
            let t = e.to_string();
            match t.find(" (os error") {
                Some(i) => t[..i].to_string(),
                None => t,
            }
        }
    }
}

fn kind_of(meta: &std::fs::Metadata) -> &'static str {
    let t = meta.file_type();
    if t.is_dir() {
        return "a directory";
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if t.is_fifo() {
            return "a named pipe";
        }
        if t.is_char_device() || t.is_block_device() {
            return "a device";
        }
        if t.is_socket() {
            return "a socket";
        }
    }
    "not a file"
}

/// The folder a recipe's (or a bundle's) file names are read from.
#[derive(Debug, Clone)]
pub struct DirSource {
    dir: PathBuf,
    /// Names may leave the folder (the user said so).
    outside: bool,
    limits: Limits,
}

impl DirSource {
    /// Names are confined to `dir`.
    pub fn confined(dir: impl Into<PathBuf>, limits: Limits) -> DirSource {
        DirSource {
            dir: dir.into(),
            outside: false,
            limits,
        }
    }
    /// Names may be absolute or leave `dir` (the user allowed it, or typed
    /// the names themselves).
    pub fn anywhere(dir: impl Into<PathBuf>, limits: Limits) -> DirSource {
        DirSource {
            dir: dir.into(),
            outside: true,
            limits,
        }
    }

    pub fn dir(&self) -> &Path {
        &self.dir
    }

    /// The path `name` stands for, refused when it leaves the folder and
    /// that is not allowed.
    pub fn resolve(&self, name: &str) -> Result<PathBuf> {
        let given = Path::new(name);
        let p = self.dir.join(given);
        if self.outside {
            return Ok(p);
        }
        let refuse = |why: &str| {
            Error::io(format!(
                "{why}; a recipe reads only files in its own folder ({}) unless run with --read-outside",
                shown_dir(&self.dir)
            ))
            .in_file(name)
        };
        if name.is_empty() {
            return Err(Error::io("the file name is empty").in_file(name));
        }
        if given.is_absolute()
            || given
                .components()
                .any(|c| matches!(c, Component::Prefix(_) | Component::RootDir))
        {
            return Err(refuse("an absolute path"));
        }
        // The real path (links and `..` resolved) must stay inside the real
        // folder; a name that does not exist is judged lexically: `..` may
        // not climb above the folder.
        match (p.canonicalize(), self.dir_real()) {
            (Ok(real), Ok(root)) => {
                if !real.starts_with(&root) {
                    return Err(refuse("the name leads to a file outside the folder"));
                }
            }
            _ => {
                let mut depth = 0i64;
                for c in given.components() {
                    match c {
                        Component::ParentDir => depth -= 1,
                        Component::Normal(_) => depth += 1,
                        _ => {}
                    }
                    if depth < 0 {
                        return Err(refuse("the name leaves the folder ('..')"));
                    }
                }
            }
        }
        Ok(p)
    }

    fn dir_real(&self) -> std::io::Result<PathBuf> {
        if self.dir.as_os_str().is_empty() {
            Path::new(".").canonicalize()
        } else {
            self.dir.canonicalize()
        }
    }

    /// Read the file `name` names (confined, regular, within the budget).
    pub fn read(&self, name: &str) -> Result<Vec<u8>> {
        let p = self.resolve(name)?;
        read_file(&p, name, &self.limits)
    }
}

fn shown_dir(d: &Path) -> String {
    if d.as_os_str().is_empty() {
        ".".into()
    } else {
        d.display().to_string()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::error::ErrorKind;

    fn scratch(name: &str) -> PathBuf {
        let d = std::env::temp_dir().join(format!("mortise-disk-{name}-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&d);
        std::fs::create_dir_all(d.join("sub")).unwrap();
        d
    }

    #[test]
    fn devices_and_directories_are_refused_before_reading() {
        let l = Limits::default();
        #[cfg(unix)]
        {
            let e = read_file(Path::new("/dev/zero"), "/dev/zero", &l).unwrap_err();
            assert_eq!(e.kind, ErrorKind::Io);
            assert!(e.to_string().contains("a device"), "{e}");
        }
        let e = read_file(&std::env::temp_dir(), "tmp", &l).unwrap_err();
        assert!(e.to_string().contains("a directory"), "{e}");
        let e = read_file(Path::new("/no/such/file"), "x.uff", &l).unwrap_err();
        assert_eq!(e.to_string(), "x.uff: cannot read: no such file");
    }

    #[cfg(unix)]
    #[test]
    fn a_named_pipe_is_refused_without_waiting() {
        let d = scratch("fifo");
        let p = d.join("pipe.uff");
        let made = std::process::Command::new("mkfifo").arg(&p).status();
        if !matches!(made, Ok(s) if s.success()) {
            return; // no mkfifo here: nothing to check
        }
        let e = read_file(&p, "pipe.uff", &Limits::default()).unwrap_err();
        assert!(e.to_string().contains("a named pipe"), "{e}");
        let _ = std::fs::remove_dir_all(&d);
    }

    #[test]
    fn files_over_the_budget_are_refused() {
        let d = scratch("size");
        std::fs::write(d.join("a.csv"), vec![b'x'; 2000]).unwrap();
        let small = Limits {
            file_bytes: 1000,
            ..Limits::default()
        };
        let e = DirSource::confined(&d, small).read("a.csv").unwrap_err();
        assert_eq!(e.kind, ErrorKind::Budget);
        assert!(e.to_string().contains("--max-file-mb"), "{e}");
        assert_eq!(
            DirSource::confined(&d, Limits::default())
                .read("a.csv")
                .unwrap()
                .len(),
            2000
        );
        let _ = std::fs::remove_dir_all(&d);
    }

    /// A file read in two halves on two threads is its bytes, whatever its
    /// length's parity; a budget it exceeds still refuses it; a file that
    /// is not the length it was opened at is read again whole.
    #[cfg(unix)]
    #[test]
    fn a_large_file_read_in_halves_is_its_bytes() {
        let d = scratch("halves");
        let l = Limits::default();
        for n in [
            SPLIT_READ as usize,
            SPLIT_READ as usize + 1,
            3 * SPLIT_READ as usize / 2 + 7,
        ] {
            let data: Vec<u8> = (0..n).map(|i| (i * 7 + i / 4093) as u8).collect();
            std::fs::write(d.join("big"), &data).unwrap();
            let got = read_file(&d.join("big"), "big", &l).unwrap();
            assert!(got == data, "{n} bytes");
            let f = std::fs::File::open(d.join("big")).unwrap();
            assert!(read_halves(&f, n as u64)
                .unwrap()
                .is_some_and(|b| b == data));
            // opened at another length: not taken
            assert!(read_halves(&f, n as u64 - 1).unwrap().is_none());
            assert!(read_halves(&f, n as u64 + 1).unwrap().is_none());
        }
        let tight = Limits {
            file_bytes: SPLIT_READ,
            ..Limits::default()
        };
        assert_eq!(
            read_file(&d.join("big"), "big", &tight).unwrap_err().kind,
            ErrorKind::Budget
        );
        let _ = std::fs::remove_dir_all(&d);
    }

    #[test]
    fn names_stay_in_the_folder_unless_allowed() {
        let d = scratch("confine");
        std::fs::write(d.join("sub/in.csv"), b"x").unwrap();
        std::fs::write(d.join("out.csv"), b"y").unwrap();
        let inner = DirSource::confined(d.join("sub"), Limits::default());
        assert_eq!(inner.read("in.csv").unwrap(), b"x");
        assert_eq!(inner.read("./in.csv").unwrap(), b"x");
        assert_eq!(inner.read("../sub/in.csv").unwrap(), b"x");
        for bad in ["../out.csv", "../../../../etc/passwd", "/etc/passwd", ""] {
            let e = inner.read(bad).unwrap_err();
            assert_eq!(e.kind, ErrorKind::Io, "{bad}");
            assert!(!e.to_string().contains("root:"), "no content quoted: {e}");
        }
        assert!(inner
            .read("../out.csv")
            .unwrap_err()
            .to_string()
            .contains("--read-outside"));
        #[cfg(unix)]
        {
            std::os::unix::fs::symlink(d.join("out.csv"), d.join("sub/link.csv")).unwrap();
            let e = inner.read("link.csv").unwrap_err();
            assert!(e.to_string().contains("outside the folder"), "{e}");
            assert!(inner
                .read("../nothing-here.csv")
                .unwrap_err()
                .to_string()
                .contains("leaves the folder"));
        }
        let anywhere = DirSource::anywhere(d.join("sub"), Limits::default());
        assert_eq!(anywhere.read("../out.csv").unwrap(), b"y");
        let _ = std::fs::remove_dir_all(&d);
    }
}
