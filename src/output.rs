//! Writing outputs so that nothing is ever half-written: each file goes to a temporary file
//! in the destination's folder and is renamed over the destination only when complete. An
//! interrupt (Ctrl-C) removes the temporary files still being written.

use std::fs::File;
use std::io::{self, Write};
use std::path::{Path, PathBuf};
use std::sync::Mutex;

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

/// Temporary files being written right now, for the interrupt handler to remove.
static IN_PROGRESS: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

fn in_progress() -> std::sync::MutexGuard<'static, Vec<PathBuf>> {
    IN_PROGRESS.lock().unwrap_or_else(|poisoned| poisoned.into_inner())
}

/// Installs a Ctrl-C handler that removes every temporary output file and exits with 130
/// (128 + SIGINT), so that an interrupted run leaves neither partial nor temporary files.
pub fn remove_partial_files_on_interrupt() {
    let _ = ctrlc::set_handler(|| {
        for path in in_progress().iter() {
            let _ = std::fs::remove_file(path);
        }
        std::process::exit(130);
    });
}

/// Writes `bytes` to `path` atomically: a temporary file beside it, flushed and synced, then
/// renamed. On any error the destination is left as it was.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> io::Result<()> {
    write_atomic_with(path, |file| file.write_all(bytes))
}

/// [`write_atomic`] with the writing done by `fill`, so that failures part-way (a full disk)
/// can be tested with a writer that fails.
pub fn write_atomic_with(path: &Path, fill: impl FnOnce(&mut File) -> io::Result<()>) -> io::Result<()> {
    let mut file = AtomicFile::create(path)?;
    fill(file.file())?;
    file.commit()
}

/// A file being written beside its destination, renamed over it by [`AtomicFile::commit`];
/// dropped without a commit (an error, an interrupt), it leaves the destination as it was and
/// no temporary file behind. Several can be open at once, for outputs written side by side.
pub struct AtomicFile {
    temp: Option<tempfile::NamedTempFile>,
    temp_path: PathBuf,
    path: PathBuf,
    /// A sync of what was written so far, running beside the writer ([`AtomicFile::sync_behind`]).
    syncing: Option<std::thread::JoinHandle<io::Result<()>>>,
}

impl AtomicFile {
    /// Starts a file that will replace `path`.
    pub fn create(path: &Path) -> io::Result<Self> {
        let dir = match path.parent() {
            Some(p) if !p.as_os_str().is_empty() => p,
            _ => Path::new("."),
        };
        let temp = tempfile::Builder::new().prefix(".thetaseek-").suffix(".part").tempfile_in(dir)?;
        in_progress().push(temp.path().to_path_buf());
        // Temporary files are private (0600); a report is an ordinary file: keep the mode of
        // the file it replaces, or rw-r--r-- for a new one.
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            let mode = std::fs::metadata(path).map(|m| m.permissions().mode() & 0o777).unwrap_or(0o644);
            temp.as_file().set_permissions(std::fs::Permissions::from_mode(mode))?;
        }
        Ok(AtomicFile {
            temp_path: temp.path().to_path_buf(),
            temp: Some(temp),
            path: path.to_path_buf(),
            syncing: None,
        })
    }

    /// The temporary file, to write into.
    pub fn file(&mut self) -> &mut File {
        self.temp.as_mut().expect("present until commit").as_file_mut()
    }

    /// Starts syncing what has been written so far on another thread, unless a sync is still
    /// running, so that a long output reaches the disk while it is written and the final sync
    /// in [`AtomicFile::commit`] has little left to wait for.
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

    /// Flushes to disk and renames over the destination.
    pub fn commit(mut self) -> io::Result<()> {
        self.join_sync()?;
        let temp = self.temp.take().expect("present until commit");
        temp.as_file().sync_all()?;
        temp.persist(&self.path).map(|_| ()).map_err(|e| e.error)
    }
}

impl Drop for AtomicFile {
    fn drop(&mut self) {
        // Uncommitted, tempfile removes the file itself; either way it is no longer in progress.
        in_progress().retain(|p| *p != self.temp_path);
    }
}

/// Writes through any writer (stdout in use, a failing writer in tests) with `fill`; a broken
/// pipe is not an error, since the reader simply stopped reading.
pub fn write_stream(out: impl Write, fill: impl FnOnce(&mut dyn Write) -> io::Result<()>) -> io::Result<()> {
    let mut out = io::BufWriter::with_capacity(1 << 16, out);
    match fill(&mut out).and_then(|_| out.flush()) {
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_disk_that_fills_part_way_leaves_the_old_file_and_no_temporary() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("report.json");
        std::fs::write(&target, b"previous report").unwrap();
        let err = write_atomic_with(&target, |f| {
            f.write_all(b"{\"half\": ")?;
            Err(io::Error::new(io::ErrorKind::StorageFull, "no space left on device"))
        })
        .unwrap_err();
        assert_eq!(err.kind(), io::ErrorKind::StorageFull);
        assert_eq!(std::fs::read(&target).unwrap(), b"previous report");
        let names: Vec<_> = std::fs::read_dir(dir.path()).unwrap().map(|e| e.unwrap().file_name()).collect();
        assert_eq!(names, vec![std::ffi::OsString::from("report.json")]);
        assert!(!in_progress().iter().any(|p| p.starts_with(dir.path())));
    }

    #[test]
    fn syncs_behind_the_writer_lose_nothing_and_an_uncommitted_file_still_vanishes() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("r.json");
        let mut file = AtomicFile::create(&target).unwrap();
        for part in [&b"{\"a\": "[..], b"1, ", b"\"b\": 2}"] {
            file.file().write_all(part).unwrap();
            file.sync_behind().unwrap();
        }
        file.commit().unwrap();
        assert_eq!(std::fs::read(&target).unwrap(), b"{\"a\": 1, \"b\": 2}");
        let mut abandoned = AtomicFile::create(&dir.path().join("t.csv")).unwrap();
        abandoned.file().write_all(b"a,b\n").unwrap();
        abandoned.sync_behind().unwrap();
        drop(abandoned);
        let names: Vec<_> = std::fs::read_dir(dir.path()).unwrap().map(|e| e.unwrap().file_name()).collect();
        assert_eq!(names, vec![std::ffi::OsString::from("r.json")]);
    }

    #[test]
    fn a_complete_write_replaces_the_file_with_ordinary_permissions() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("t.csv");
        write_atomic(&target, b"a,b\n").unwrap();
        assert_eq!(std::fs::read(&target).unwrap(), b"a,b\n");
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            assert_eq!(std::fs::metadata(&target).unwrap().permissions().mode() & 0o777, 0o644);
        }
    }

    #[test]
    fn a_broken_pipe_is_not_an_error_but_other_failures_are() {
        struct Failing(io::ErrorKind);
        impl Write for Failing {
            fn write(&mut self, _: &[u8]) -> io::Result<usize> {
                Err(io::Error::from(self.0))
            }
            fn flush(&mut self) -> io::Result<()> {
                Ok(())
            }
        }
        assert!(write_stream(Failing(io::ErrorKind::BrokenPipe), |w| w.write_all(b"x")).is_ok());
        assert!(write_stream(Failing(io::ErrorKind::StorageFull), |w| w.write_all(b"x")).is_err());
    }
}
