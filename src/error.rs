//! Typed errors of each stage and the exit code each maps to.
//!
//! Exit codes follow sysexits: 65 (EX_DATAERR) for refused input data, 74 (EX_IOERR) for
//! failures to read or write files; clap exits with 2 for usage errors on its own.

use std::fmt;
use std::path::PathBuf;

/// Exit code for a command line that does not fit the data (clap uses it for its own errors).
pub const EXIT_USAGE: i32 = 2;
/// Exit code for input data that was refused.
pub const EXIT_DATA: i32 = 65;
/// Exit code for a file that could not be read or written.
pub const EXIT_IO: i32 = 74;
/// Exit code for a run in which some series were refused for values that cannot be used while
/// the others were analysed and written (`--strict` refuses the whole run instead).
pub const EXIT_SOME_REFUSED: i32 = 3;

/// Where in an input file a problem was found, and what was expected there.
#[derive(Debug, Clone, PartialEq)]
pub struct InputError {
    /// The file as the user named it (boxed: the error travels in many `Result`s).
    pub file: Box<str>,
    /// 1-based line number in the file (the header is line 1 unless comments precede it).
    pub line: Option<usize>,
    /// The column as written in the header.
    pub column: Option<String>,
    /// The offending value, verbatim.
    pub value: Option<String>,
    /// What is wrong and what is expected.
    pub message: String,
    /// The refusal is of one reading's value (not of the header, a unit or a column as a
    /// whole): in a run of several series it costs that reading's series only.
    pub of_reading: bool,
}

impl InputError {
    /// A problem with the file as a whole (empty, no header, ...).
    pub fn file(file: &str, message: impl Into<String>) -> Self {
        InputError {
            file: file.into(),
            line: None,
            column: None,
            value: None,
            message: message.into(),
            of_reading: false,
        }
    }

    /// A problem on one line, optionally in one column with one value.
    pub fn at(file: &str, line: usize, column: Option<&str>, value: Option<&str>, message: impl Into<String>) -> Self {
        InputError {
            file: file.into(),
            line: Some(line),
            column: column.map(str::to_string),
            value: value.map(shortened),
            message: message.into(),
            of_reading: false,
        }
    }
}

/// The longest value quoted whole in a refusal, in characters.
const MAX_QUOTED_CHARS: usize = 80;

/// A value as a refusal quotes it: whole, or its start and its length when it is longer than
/// [`MAX_QUOTED_CHARS`] (a refusal of a 32 MB line stays one line).
fn shortened(value: &str) -> String {
    match value.char_indices().nth(MAX_QUOTED_CHARS) {
        None => value.to_string(),
        Some((cut, _)) => format!("{}… ({} bytes in all)", &value[..cut], value.len()),
    }
}

impl fmt::Display for InputError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.file)?;
        if let Some(line) = self.line {
            write!(f, ", line {line}")?;
        }
        if let Some(column) = &self.column {
            write!(f, ", column '{column}'")?;
        }
        if let Some(value) = &self.value {
            write!(f, ", value '{value}'")?;
        }
        write!(f, ": {}", self.message)
    }
}

impl std::error::Error for InputError {}

/// Every failure the command line reports, each with its exit code.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// The input data was refused.
    #[error("refused input: {0}")]
    Input(#[from] InputError),
    /// No series could be analysed at all.
    #[error("no series could be analysed: {0}")]
    NothingAnalysed(String),
    /// A setting on the command line is inconsistent with the data.
    #[error("{0}")]
    Setting(String),
    /// A file could not be read or written.
    #[error("{action} '{path}': {source}")]
    Io {
        /// "cannot read", "cannot write", ...
        action: &'static str,
        /// The path involved.
        path: PathBuf,
        /// The operating system's reason.
        #[source]
        source: std::io::Error,
    },
    /// An output would overwrite an input file.
    #[error("refusing to write '{0}': it is one of the input files")]
    OutputIsInput(PathBuf),
    /// Some series were refused for their values; the others were analysed and written.
    #[error("{0} series refused for values that cannot be used (each named above and in the report, with its line); the others were analysed and written")]
    SomeSeriesRefused(usize),
}

impl Error {
    /// The process exit code for this error.
    pub fn exit_code(&self) -> i32 {
        match self {
            Error::Input(_) | Error::NothingAnalysed(_) => EXIT_DATA,
            Error::Setting(_) => EXIT_USAGE,
            Error::Io { .. } | Error::OutputIsInput(_) => EXIT_IO,
            Error::SomeSeriesRefused(_) => EXIT_SOME_REFUSED,
        }
    }
}
