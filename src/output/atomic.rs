//! Files replaced whole: each output is written to a temporary file in its destination's folder
//! and renamed over the destination only when every output of the run is complete
//! ([`commit_all`]), so that a run replaces all of its outputs or none.

use super::interrupt::{committing, in_progress};
use std::fs::File;
use std::io;
use std::path::{Path, PathBuf};

/// The operating system's reason without the temporary file's name that `tempfile` adds: a
/// message names the destination the user gave, never `.thetaseek-….part`.
fn plain(error: io::Error) -> io::Error {
    match error.raw_os_error() {
        Some(code) => io::Error::from_raw_os_error(code),
        None => io::Error::new(error.kind(), error.kind().to_string()),
    }
}

/// A file being written beside its destination, renamed over it by [`commit_all`]; dropped
/// without a commit (an error, a signal), it leaves the destination as it was and no temporary
/// file behind.
pub struct AtomicFile {
    temp: Option<tempfile::NamedTempFile>,
    temp_path: PathBuf,
    /// The file replaced (a symbolic link's target).
    path: PathBuf,
    /// The destination as the user gave it, for messages.
    shown: PathBuf,
    /// A sync of what was written so far, running beside the writer ([`AtomicFile::sync_behind`]).
    syncing: Option<std::thread::JoinHandle<io::Result<()>>>,
}

impl AtomicFile {
    /// Starts a file that will replace `path`; `shown` is the name the user gave for it.
    pub fn create(path: &Path, shown: &Path) -> io::Result<Self> {
        let dir = match path.parent() {
            Some(p) if !p.as_os_str().is_empty() => p,
            _ => Path::new("."),
        };
        // Created and listed under one lock, so that a signal never finds an unlisted file.
        let mut listed = in_progress();
        let temp = tempfile::Builder::new().prefix(".thetaseek-").suffix(".part").tempfile_in(dir).map_err(plain)?;
        listed.push(temp.path().to_path_buf());
        drop(listed);
        // Temporary files are private (0600); a report is an ordinary file: keep the mode of
        // the file it replaces, or rw-r--r-- for a new one.
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            let mode = std::fs::metadata(path).map(|m| m.permissions().mode() & 0o777).unwrap_or(0o644);
            temp.as_file().set_permissions(std::fs::Permissions::from_mode(mode)).map_err(plain)?;
        }
        Ok(AtomicFile {
            temp_path: temp.path().to_path_buf(),
            temp: Some(temp),
            path: path.to_path_buf(),
            shown: shown.to_path_buf(),
            syncing: None,
        })
    }

    /// The destination as the user gave it.
    pub fn shown(&self) -> &Path {
        &self.shown
    }

    /// The temporary file, to write into.
    pub fn file(&mut self) -> &mut File {
        self.temp.as_mut().expect("present until commit").as_file_mut()
    }

    /// Starts syncing what has been written so far on another thread, unless a sync is still
    /// running, so that a long output reaches the disk while it is written and the final sync
    /// has little left to wait for.
    pub fn sync_behind(&mut self) -> io::Result<()> {
        if self.syncing.as_ref().is_some_and(|s| !s.is_finished()) {
            return Ok(());
        }
        self.join_sync()?;
        let file = self.file().try_clone()?;
        self.syncing = Some(std::thread::spawn(move || file.sync_data()));
        Ok(())
    }

    fn join_sync(&mut self) -> io::Result<()> {
        match self.syncing.take() {
            Some(handle) => handle.join().unwrap_or_else(|_| Err(io::Error::other("the sync thread panicked"))),
            None => Ok(()),
        }
    }

    /// Waits for every byte to reach the disk (a full disk shows here at the latest).
    fn sync(&mut self) -> io::Result<()> {
        self.join_sync()?;
        self.file().sync_all()
    }
}

impl Drop for AtomicFile {
    fn drop(&mut self) {
        // Uncommitted, tempfile removes the file itself, under the list's lock so that a signal
        // never finds the file present but no longer listed; either way it is no longer in
        // progress.
        let mut listed = in_progress();
        drop(self.temp.take());
        listed.retain(|p| *p != self.temp_path);
    }
}

/// Replaces every destination by its file, or none: all are synced first; an existing
/// destination is kept under a second name (a hard link) until every rename has succeeded, and
/// put back if one fails. Signals wait until the renames are over. On failure, returns the
/// destination (as the user gave it) that failed, and why.
pub fn commit_all(mut files: Vec<AtomicFile>) -> Result<(), (PathBuf, io::Error)> {
    for file in &mut files {
        file.sync().map_err(|e| (file.shown.clone(), plain(e)))?;
    }
    let _gate = committing();
    // Each destination replaced so far: whether it existed, and its old file's second name.
    let mut done: Vec<(PathBuf, bool, Option<tempfile::NamedTempFile<()>>)> = Vec::new();
    for mut file in files {
        let existed = std::fs::symlink_metadata(&file.path).is_ok();
        let backup = if existed { keep_old(&file.path) } else { None };
        let temp = file.temp.take().expect("present until commit");
        if let Err(e) = temp.persist(&file.path) {
            for (path, existed, backup) in done.into_iter().rev() {
                match (backup, existed) {
                    (Some(old), _) => drop(old.persist(&path)),
                    (None, false) => drop(std::fs::remove_file(&path)),
                    // No second name (a file system without hard links): the new file stays.
                    (None, true) => {}
                }
            }
            return Err((file.shown.clone(), plain(e.error)));
        }
        done.push((file.path.clone(), existed, backup));
    }
    // Success: the second names of the old files are dropped, which removes them.
    Ok(())
}

/// A second name for an existing destination, removed when dropped; `None` on a file system
/// without hard links, where a failed rename cannot be undone.
fn keep_old(path: &Path) -> Option<tempfile::NamedTempFile<()>> {
    let dir = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
    };
    tempfile::Builder::new()
        .prefix(".thetaseek-")
        .suffix(".old")
        .make_in(dir, |name| std::fs::hard_link(path, name))
        .ok()
}
