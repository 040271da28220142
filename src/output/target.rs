//! How each output reaches its destination, decided before anything is written: a regular file
//! is replaced by a rename; a device, a named pipe or standard output cannot be replaced and
//! is written in place; a symbolic link is followed (its target is replaced, the link kept).

use super::Destination;
use std::io;
use std::path::{Path, PathBuf};

/// The longest file name most file systems take, in bytes.
const MAX_NAME_BYTES: usize = 255;

/// Where one output's bytes go.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Target {
    /// Standard output (`-`).
    Stdout,
    /// A device or named pipe, opened and written in place.
    InPlace(PathBuf),
    /// A regular file, new or replaced: the path of the file itself (a link's target).
    Replace(PathBuf),
}

/// Decides how `destination` is written, refusing a folder, a link to nothing and a file name
/// longer than the file system takes.
pub fn target_of(destination: &Destination) -> io::Result<Target> {
    let path = match destination {
        Destination::Stdout => return Ok(Target::Stdout),
        Destination::File(path) => path,
    };
    if path.file_name().is_some_and(|n| n.len() > MAX_NAME_BYTES) {
        return Err(io::Error::new(
            io::ErrorKind::InvalidInput,
            format!("the file name is longer than {MAX_NAME_BYTES} bytes"),
        ));
    }
    let linked = std::fs::symlink_metadata(path).is_ok_and(|m| m.file_type().is_symlink());
    let metadata = match std::fs::metadata(path) {
        Ok(m) => m,
        Err(_) if linked => {
            return Err(io::Error::new(io::ErrorKind::NotFound, "it is a symbolic link to a file that does not exist"))
        }
        Err(e) if e.kind() == io::ErrorKind::NotFound => return Ok(Target::Replace(path.clone())),
        Err(e) => return Err(e),
    };
    if metadata.is_dir() {
        return Err(io::Error::new(io::ErrorKind::IsADirectory, "it is a folder"));
    }
    if !metadata.is_file() {
        return Ok(Target::InPlace(path.clone()));
    }
    Ok(Target::Replace(if linked { path.canonicalize()? } else { path.clone() }))
}

/// The file an output path names, for telling two outputs apart: the canonical folder joined
/// with the name (the canonical path itself when the file exists).
pub fn identity(path: &Path) -> Option<PathBuf> {
    if let Ok(c) = path.canonicalize() {
        return Some(c);
    }
    let parent = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.canonicalize().ok()?,
        _ => std::env::current_dir().ok()?,
    };
    Some(parent.join(path.file_name()?))
}

/// True when two existing paths are the same file: the same path, a symbolic link to it, or a
/// hard link (same device and inode).
pub fn same_file(a: &Path, b: &Path) -> bool {
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt;
        if let (Ok(x), Ok(y)) = (std::fs::metadata(a), std::fs::metadata(b)) {
            return x.dev() == y.dev() && x.ino() == y.ino();
        }
        false
    }
    #[cfg(not(unix))]
    {
        matches!((a.canonicalize(), b.canonicalize()), (Ok(x), Ok(y)) if x == y)
    }
}
