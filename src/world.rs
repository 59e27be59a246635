//! Support below every stage: where files come from (the disk, a confined
//! folder tree, memory in tests), how they are opened safely, and the only
//! clock sheaf reads.

use std::fs::{self, File, OpenOptions};
use std::io::Read;
use std::path::{Path, PathBuf};

/// Where sheaf reads files from: the disk for the CLI, memory in tests.
pub trait World {
    /// Reads `path`, which is relative to the document's folder (or absolute).
    fn read(&self, path: &str) -> std::io::Result<Vec<u8>>;
    /// Opens `path` to be read in chunks, with its size in bytes. Worlds in
    /// memory hand out their bytes.
    fn open(&self, path: &str) -> std::io::Result<(Box<dyn Read + Send>, u64)> {
        let bytes = self.read(path)?;
        let size = bytes.len() as u64;
        Ok((Box::new(std::io::Cursor::new(bytes)), size))
    }
    /// Whether `path` can be opened, and its size, without reading it: the
    /// plan stage finds every missing data file before any data are read.
    fn probe(&self, path: &str) -> std::io::Result<u64> {
        self.open(path).map(|(_, size)| size)
    }
    /// How to show `path` in messages (e.g. joined to the document's folder).
    fn display(&self, path: &str) -> String;
    /// The file on disk behind `path`, for formats read out of order
    /// (Parquet); `None` where files live elsewhere (memory in tests), and
    /// then such a file is read whole.
    fn local_file(&self, _path: &str) -> Option<PathBuf> {
        None
    }
    /// Progress for long work; shown only where someone is watching.
    fn progress(&self, _message: &str) {}
    /// A cached block result, if this world keeps a cache.
    fn cache_get(&self, _key: &str) -> Option<Vec<u8>> {
        None
    }
    /// Today's date (YYYY-MM-DD) for `date: today`; `None` where no clock is
    /// available (tests). The only clock sheaf ever reads.
    fn today(&self) -> Option<String> {
        None
    }
}

/// YYYY-MM-DD of a Unix time (UTC), by the civil-from-days algorithm
/// (Hinnant, "chrono-Compatible Low-Level Date Algorithms").
pub fn civil_date(unix_seconds: i64) -> String {
    let z = unix_seconds.div_euclid(86_400) + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let day = doy - (153 * mp + 2) / 5 + 1;
    let month = if mp < 10 { mp + 3 } else { mp - 9 };
    let year = yoe + era * 400 + i64::from(month <= 2);
    format!("{year:04}-{month:02}-{day:02}")
}

/// Most bytes of a file read into memory whole (the document, spreadsheets,
/// CSV files in wide layout or summary tables); CSV files in long layout
/// are read in chunks whatever their size.
pub const MAX_WHOLE_FILE: u64 = 1 << 30;

/// Opens `path` (links resolved) only if it is a regular file: a named pipe
/// would block forever and a device such as /dev/zero never ends. The type
/// is checked before opening (opening a pipe already blocks) and again on
/// the open handle.
pub fn open_regular(path: &Path) -> std::io::Result<(std::fs::File, u64)> {
    let not_regular = |m: &std::fs::Metadata| {
        let what = if m.is_dir() {
            "it is a folder, not a file"
        } else {
            "it is not a regular file (a pipe, socket or device)"
        };
        Err(std::io::Error::other(what))
    };
    let meta = std::fs::metadata(path)?;
    if !meta.is_file() {
        return not_regular(&meta);
    }
    let file = std::fs::File::open(path)?;
    let meta = file.metadata()?;
    if !meta.is_file() {
        return not_regular(&meta);
    }
    Ok((file, meta.len()))
}

/// Reads a regular file whole, refusing one larger than `limit` bytes; the
/// read itself stops past the limit, whatever the size said.
pub fn read_regular(path: &Path, limit: u64) -> std::io::Result<Vec<u8>> {
    let (file, size) = open_regular(path)?;
    let too_large = || {
        std::io::Error::other(format!(
            "it is larger than {} MiB, the most sheaf reads whole",
            limit >> 20
        ))
    };
    if size > limit {
        return Err(too_large());
    }
    let mut bytes = Vec::with_capacity(size as usize);
    file.take(limit + 1).read_to_end(&mut bytes)?;
    if bytes.len() as u64 > limit {
        return Err(too_large());
    }
    Ok(bytes)
}

/// Today's date: `SOURCE_DATE_EPOCH` when set (reproducible builds), else
/// the system clock. The one place the crate reads the clock.
pub fn system_today() -> Option<String> {
    let seconds = match std::env::var("SOURCE_DATE_EPOCH") {
        Ok(v) => v.trim().parse::<i64>().ok()?,
        Err(_) => std::time::SystemTime::now()
            .duration_since(std::time::UNIX_EPOCH)
            .ok()?
            .as_secs() as i64,
    };
    Some(civil_date(seconds))
}

/// Files on disk, relative to a document's folder.
pub struct DiskWorld {
    pub base: PathBuf,
}

impl World for DiskWorld {
    fn read(&self, path: &str) -> std::io::Result<Vec<u8>> {
        read_regular(&self.base.join(path), MAX_WHOLE_FILE)
    }

    fn open(&self, path: &str) -> std::io::Result<(Box<dyn Read + Send>, u64)> {
        let (file, size) = open_regular(&self.base.join(path))?;
        Ok((Box::new(file), size))
    }

    fn display(&self, path: &str) -> String {
        self.base.join(path).display().to_string()
    }

    fn local_file(&self, path: &str) -> Option<PathBuf> {
        Some(self.base.join(path))
    }

    /// On a terminal only, so logs and CI output stay clean.
    fn progress(&self, message: &str) {
        use std::io::IsTerminal;
        if std::io::stderr().is_terminal() {
            eprintln!("{message}");
        }
    }

    fn today(&self) -> Option<String> {
        system_today()
    }
}

/// Files on disk, confined to the document's folder tree (`--confine`): no
/// absolute paths, no `..` that leaves the folder, no symbolic link that
/// points outside it. For CI systems that build documents nobody has read.
pub struct Confined<W: World> {
    pub inner: W,
    pub base: PathBuf,
}

fn confinement_error(why: &str) -> std::io::Error {
    std::io::Error::new(
        std::io::ErrorKind::PermissionDenied,
        format!("{why} (--confine keeps data inside the document's folder)"),
    )
}

impl<W: World> Confined<W> {
    /// Refuses a path that leaves the document's folder tree.
    fn check(&self, path: &str) -> std::io::Result<()> {
        let p = Path::new(path);
        if p.is_absolute() || path.starts_with('/') || path.starts_with('\\') || path.contains(':')
        {
            return Err(confinement_error("an absolute path"));
        }
        let mut depth: i32 = 0;
        for c in p.components() {
            match c {
                std::path::Component::ParentDir => depth -= 1,
                std::path::Component::Normal(_) => depth += 1,
                _ => {}
            }
            if depth < 0 {
                return Err(confinement_error(
                    "a path that leaves the document's folder",
                ));
            }
        }
        let base = if self.base.as_os_str().is_empty() {
            Path::new(".")
        } else {
            self.base.as_path()
        };
        let root = base.canonicalize()?;
        let full = base.join(p).canonicalize()?;
        if !full.starts_with(&root) {
            return Err(confinement_error(
                "a link that points outside the document's folder",
            ));
        }
        Ok(())
    }
}

impl<W: World> World for Confined<W> {
    fn read(&self, path: &str) -> std::io::Result<Vec<u8>> {
        self.check(path)?;
        self.inner.read(path)
    }

    fn open(&self, path: &str) -> std::io::Result<(Box<dyn Read + Send>, u64)> {
        self.check(path)?;
        self.inner.open(path)
    }

    fn display(&self, path: &str) -> String {
        self.inner.display(path)
    }

    fn local_file(&self, path: &str) -> Option<PathBuf> {
        self.check(path).ok()?;
        self.inner.local_file(path)
    }

    /// None: a cache found in a folder nobody has read could have been
    /// written by anyone, and its checksums catch damage, not forgery.
    fn cache_get(&self, _key: &str) -> Option<Vec<u8>> {
        None
    }

    fn today(&self) -> Option<String> {
        self.inner.today()
    }

    fn progress(&self, message: &str) {
        self.inner.progress(message)
    }
}

/// Whether `path` is a folder itself, not a link to one.
pub fn is_real_dir(path: &Path) -> bool {
    fs::symlink_metadata(path).is_ok_and(|m| m.is_dir())
}

/// Opens options without following a link at the last component, and
/// without blocking on a FIFO (where the platform allows saying so).
pub fn no_follow(options: &mut OpenOptions) -> &mut OpenOptions {
    #[cfg(unix)]
    {
        use std::os::unix::fs::OpenOptionsExt;
        options.custom_flags(libc::O_NOFOLLOW | libc::O_NONBLOCK);
    }
    options
}

/// Opens one of sheaf's own files (outputs, cache, lock) for reading only if it is a regular file reached without a
/// symbolic link at its last component.
pub fn open_own(path: &Path) -> std::io::Result<File> {
    if fs::symlink_metadata(path)?.file_type().is_symlink() {
        return Err(std::io::Error::other("it is a symbolic link"));
    }
    let file = no_follow(OpenOptions::new().read(true)).open(path)?;
    if !file.metadata()?.is_file() {
        return Err(std::io::Error::other("it is not a regular file"));
    }
    Ok(file)
}
