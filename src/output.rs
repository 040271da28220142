//! Writing outputs so that nothing is ever half-written: each file goes to a temporary file
//! in the destination's folder and is renamed over the destination only when complete.

use std::io::{self, Write};
use std::path::{Path, PathBuf};

/// Where an output goes: a file, or standard output for `-`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Destination {
    /// Standard output.
    Stdout,
    /// A file path.
    File(PathBuf),
}

impl Destination {
    /// `-` means standard output; anything else is a path.
    pub fn parse(text: &str) -> Self {
        if text == "-" {
            Destination::Stdout
        } else {
            Destination::File(PathBuf::from(text))
        }
    }
}

/// Writes `bytes` to `path` atomically: a temporary file beside it, flushed and synced, then
/// renamed. On any error the destination is left as it was.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> io::Result<()> {
    let dir = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
    };
    let mut temp = tempfile::Builder::new().prefix(".thetaseek-").suffix(".part").tempfile_in(dir)?;
    // Temporary files are private (0600); a report is an ordinary file: keep the mode of the
    // file it replaces, or rw-r--r-- for a new one.
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        let mode = std::fs::metadata(path).map(|m| m.permissions().mode() & 0o777).unwrap_or(0o644);
        temp.as_file().set_permissions(std::fs::Permissions::from_mode(mode))?;
    }
    temp.write_all(bytes)?;
    temp.as_file().sync_all()?;
    temp.persist(path).map_err(|e| e.error)?;
    Ok(())
}

/// Writes through any writer (a failing writer in tests, stdout in use); a broken pipe is not
/// an error, since the reader simply stopped reading.
pub fn write_stream(mut out: impl Write, bytes: &[u8]) -> io::Result<()> {
    match out.write_all(bytes).and_then(|_| out.flush()) {
        Err(e) if e.kind() == io::ErrorKind::BrokenPipe => Ok(()),
        other => other,
    }
}

/// True when two paths name the same file (an output that would overwrite an input).
/// Compares canonical paths; a destination that does not exist yet is compared through its
/// canonical parent folder.
pub fn same_file(a: &Path, b: &Path) -> bool {
    fn canonical(p: &Path) -> Option<PathBuf> {
        if let Ok(c) = p.canonicalize() {
            return Some(c);
        }
        let parent = match p.parent() {
            Some(d) if !d.as_os_str().is_empty() => d.canonicalize().ok()?,
            _ => std::env::current_dir().ok()?,
        };
        Some(parent.join(p.file_name()?))
    }
    matches!((canonical(a), canonical(b)), (Some(x), Some(y)) if x == y)
}
