//! One file per subcommand: orchestration and file I/O only; the science is in the library.

pub mod analyze;

use std::path::{Path, PathBuf};
use thetaseek::error::Error;
use thetaseek::output::{same_file, write_atomic, write_stream, Destination};

/// An output rendered in memory, waiting to be written.
pub struct PendingOutput {
    /// Where it goes.
    pub destination: Destination,
    /// Its bytes.
    pub bytes: Vec<u8>,
}

/// Reads an input file whole (inputs are only ever opened for reading).
pub fn read_input(path: &Path) -> Result<Vec<u8>, Error> {
    std::fs::read(path).map_err(|source| Error::Io { action: "cannot read", path: path.to_path_buf(), source })
}

/// Refuses any output that would overwrite one of the inputs.
pub fn check_outputs(outputs: &[PendingOutput], inputs: &[PathBuf]) -> Result<(), Error> {
    for out in outputs {
        if let Destination::File(path) = &out.destination {
            if inputs.iter().any(|input| same_file(path, input)) {
                return Err(Error::OutputIsInput(path.clone()));
            }
        }
    }
    Ok(())
}

/// Writes every pending output: files atomically, '-' to standard output.
pub fn write_outputs(outputs: Vec<PendingOutput>) -> Result<(), Error> {
    for out in outputs {
        match out.destination {
            Destination::Stdout => write_stream(std::io::stdout().lock(), &out.bytes).map_err(|source| Error::Io {
                action: "cannot write",
                path: PathBuf::from("-"),
                source,
            })?,
            Destination::File(path) => write_atomic(&path, &out.bytes).map_err(|source| Error::Io {
                action: "cannot write",
                path: path.clone(),
                source,
            })?,
        }
    }
    Ok(())
}
