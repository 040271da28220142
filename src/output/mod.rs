//! Writing outputs so that nothing is ever half-written and a run replaces all of its outputs or
//! none: regular files through temporary files renamed together ([`atomic`]), devices, pipes
//! and standard output in place ([`target`]), and signals that wait for the renames
//! ([`interrupt`]).

pub mod atomic;
pub mod interrupt;
pub mod target;

pub use atomic::{commit_all, AtomicFile};
pub use interrupt::clean_up_on_signals;
pub use target::{identity, same_file, target_of, Target};

use std::fs::File;
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
    write_atomic_with(path, |file| file.write_all(bytes))
}

/// [`write_atomic`] with the writing done by `fill`, so that failures part-way (a full disk)
/// can be tested with a writer that fails.
pub fn write_atomic_with(path: &Path, fill: impl FnOnce(&mut File) -> io::Result<()>) -> io::Result<()> {
    let mut file = AtomicFile::create(path, path)?;
    fill(file.file())?;
    commit_all(vec![file]).map_err(|(_, e)| e)
}

/// Writes into an existing device or named pipe (`/dev/null`, a FIFO) without replacing it;
/// a device that takes nothing (`/dev/full`) is a failure.
pub fn write_in_place(path: &Path, fill: impl FnOnce(&mut dyn Write) -> io::Result<()>) -> io::Result<()> {
    let file = std::fs::OpenOptions::new().write(true).open(path)?;
    let mut out = io::BufWriter::with_capacity(1 << 16, file);
    fill(&mut out)?;
    out.flush()
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

#[cfg(test)]
mod tests {
    use super::interrupt::in_progress;
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
        let mut file = AtomicFile::create(&target, &target).unwrap();
        for part in [&b"{\"a\": "[..], b"1, ", b"\"b\": 2}"] {
            file.file().write_all(part).unwrap();
            file.sync_behind().unwrap();
        }
        commit_all(vec![file]).unwrap();
        assert_eq!(std::fs::read(&target).unwrap(), b"{\"a\": 1, \"b\": 2}");
        let mut abandoned = AtomicFile::create(&dir.path().join("t.csv"), Path::new("t.csv")).unwrap();
        abandoned.file().write_all(b"a,b\n").unwrap();
        abandoned.sync_behind().unwrap();
        drop(abandoned);
        let names: Vec<_> = std::fs::read_dir(dir.path()).unwrap().map(|e| e.unwrap().file_name()).collect();
        assert_eq!(names, vec![std::ffi::OsString::from("r.json")]);
    }

    #[test]
    fn a_rename_that_fails_puts_back_every_output_already_replaced() {
        let dir = tempfile::tempdir().unwrap();
        let (report, table) = (dir.path().join("r.json"), dir.path().join("t.csv"));
        std::fs::write(&report, b"old report").unwrap();
        let mut first = AtomicFile::create(&report, &report).unwrap();
        first.file().write_all(b"new report").unwrap();
        let mut second = AtomicFile::create(&table, Path::new("t.csv")).unwrap();
        second.file().write_all(b"new table").unwrap();
        // The table's destination becomes a folder holding a file: its rename must fail.
        std::fs::create_dir(&table).unwrap();
        std::fs::write(table.join("x"), b"").unwrap();
        let (failed, _) = commit_all(vec![first, second]).unwrap_err();
        assert_eq!(failed, Path::new("t.csv"));
        assert_eq!(std::fs::read(&report).unwrap(), b"old report");
        let mut names: Vec<_> = std::fs::read_dir(dir.path()).unwrap().map(|e| e.unwrap().file_name()).collect();
        names.sort();
        assert_eq!(names, vec![std::ffi::OsString::from("r.json"), std::ffi::OsString::from("t.csv")]);
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
