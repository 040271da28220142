//! What a signal may interrupt: the temporary files being written, and the renames that replace
//! a run's outputs. SIGINT (Ctrl-C), SIGTERM (`kill`, `timeout`, a stopping container) and
//! SIGHUP (a closed terminal) are handled alike: every temporary file is removed and the
//! process exits with 128 + the signal's number. A signal that arrives during the renames waits
//! for them to finish, so an interrupted run leaves either every output old or every one new.

use std::path::PathBuf;
use std::sync::{Mutex, MutexGuard};

/// Temporary files being written right now, for the handler to remove.
static IN_PROGRESS: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

/// Held while a run's outputs are renamed into place; the handler takes it before exiting.
static COMMITTING: Mutex<()> = Mutex::new(());

/// The list of temporary files, locked (a panic elsewhere does not disable the clean-up).
pub(crate) fn in_progress() -> MutexGuard<'static, Vec<PathBuf>> {
    IN_PROGRESS.lock().unwrap_or_else(|poisoned| poisoned.into_inner())
}

/// The rename gate, locked for as long as the guard lives.
pub(crate) fn committing() -> MutexGuard<'static, ()> {
    COMMITTING.lock().unwrap_or_else(|poisoned| poisoned.into_inner())
}

/// Installs the handler for SIGINT, SIGTERM and SIGHUP (see the module documentation). It runs
/// on a thread of its own, so it may take locks and remove files.
pub fn clean_up_on_signals() {
    #[cfg(unix)]
    {
        use signal_hook::consts::signal::{SIGHUP, SIGINT, SIGTERM};
        let Ok(mut signals) = signal_hook::iterator::Signals::new([SIGINT, SIGTERM, SIGHUP]) else {
            return;
        };
        std::thread::spawn(move || {
            if let Some(signal) = signals.forever().next() {
                let _renames_done = committing();
                // Held until the process ends: no temporary file is made (or given up) after
                // the list is read.
                let listed = in_progress();
                for path in listed.iter() {
                    let _ = std::fs::remove_file(path);
                }
                std::process::exit(128 + signal);
            }
        });
    }
}
