//! One file per subcommand: orchestration and file I/O only; the science is in the library.

pub mod analyze;
pub mod next;
pub mod plan;
mod sinks;

use std::path::{Path, PathBuf};
use thetaseek::dataset::Quantity;
use thetaseek::dataset::{Dataset, TabulatedRow};
use thetaseek::error::Error;
use thetaseek::input::{self, ReadOptions};
use thetaseek::output::{
    commit_all, identity, same_file, target_of, write_in_place, write_stream, AtomicFile, Destination, Target,
};
use thetaseek::report::InputFile;

/// An output rendered in memory, waiting to be written (figures, HTML, a plan; `analyze`'s
/// report and tables are written as the run goes, see `sinks`).
pub struct PendingOutput {
    /// Where it goes.
    pub destination: Destination,
    /// What goes there.
    pub bytes: Vec<u8>,
}

impl PendingOutput {
    /// An output already rendered.
    pub fn bytes(destination: Destination, bytes: Vec<u8>) -> Self {
        PendingOutput { destination, bytes }
    }

    fn write_to(&self, out: &mut dyn std::io::Write) -> std::io::Result<()> {
        out.write_all(&self.bytes)
    }
}

/// Opens an input file for reading (inputs are only ever opened for reading), refusing one
/// larger than `max_mb` megabytes before reading it; a pipe or device, whose size is not
/// known beforehand, is refused as soon as that many bytes have been read ([`Limited`]).
pub fn open_input(path: &Path, max_mb: u64) -> Result<Limited<std::fs::File>, Error> {
    let io = |source| Error::Io { action: "cannot read", path: path.to_path_buf(), source };
    let file = std::fs::File::open(path).map_err(io)?;
    let metadata = file.metadata().map_err(io)?;
    if metadata.is_dir() {
        return Err(io(std::io::Error::other("it is a folder, not a file")));
    }
    let limit = max_mb.saturating_mul(1 << 20);
    let size = metadata.len();
    if size > limit {
        let shown = if size < 1 << 20 { format!("{size} bytes") } else { format!("{} MB", size >> 20) };
        return Err(too_large(path, &format!("the file is {shown}, above the limit of {max_mb} MB")));
    }
    Ok(Limited { inner: file, left: limit, max_mb })
}

fn too_large(path: &Path, what: &str) -> Error {
    Error::Input(thetaseek::error::InputError::file(
        &path.display().to_string(),
        format!("{what}; raise it with --max-input-mb"),
    ))
}

/// A reader that fails once more than its limit has been read: the input limit counted in
/// bytes read, for inputs whose size the file system does not tell (a pipe, `/dev/urandom`).
pub struct Limited<R> {
    inner: R,
    left: u64,
    max_mb: u64,
}

impl Limited<std::fs::File> {
    /// The file's size as the file system gives it (0 for a pipe).
    pub fn size(&self) -> u64 {
        self.inner.metadata().map(|m| m.len()).unwrap_or(0)
    }
}

impl<R: std::io::Read> std::io::Read for Limited<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let n = self.inner.read(buf)?;
        self.left = self.left.checked_sub(n as u64).ok_or_else(|| {
            std::io::Error::new(
                std::io::ErrorKind::FileTooLarge,
                format!("more than the limit of {} MB was read; raise it with --max-input-mb", self.max_mb),
            )
        })?;
        Ok(n)
    }
}

/// Reads an input file whole (see [`open_input`]).
pub fn read_input(path: &Path, max_mb: u64) -> Result<Vec<u8>, Error> {
    let mut bytes = Vec::new();
    std::io::Read::read_to_end(&mut open_input(path, max_mb)?, &mut bytes).map_err(|source| {
        if source.kind() == std::io::ErrorKind::FileTooLarge {
            too_large(path, &format!("more than {max_mb} MB were read"))
        } else {
            Error::Io { action: "cannot read", path: path.to_path_buf(), source }
        }
    })?;
    Ok(bytes)
}

/// Reads an earlier report of `analyze` for `plan` or `next` through the report's own types,
/// refusing a string that holds a character that would act on the terminal or a figure (a
/// hand-edited `\u001b`).
pub fn read_report(path: &Path, max_mb: u64) -> Result<(thetaseek::report::Report, InputFile), Error> {
    let bytes = read_input(path, max_mb)?;
    let name = path.display().to_string();
    let refuse =
        |line: usize, what: String| Error::Input(thetaseek::error::InputError::at(&name, line, None, None, what));
    let value: serde_json::Value =
        serde_json::from_slice(&bytes).map_err(|e| refuse(e.line(), format!("not a JSON report: {e}")))?;
    fn hidden(v: &serde_json::Value) -> Option<char> {
        match v {
            serde_json::Value::String(s) => input::first_hidden_character(s).map(|(_, c)| c),
            serde_json::Value::Array(items) => items.iter().find_map(hidden),
            serde_json::Value::Object(map) => {
                map.iter().find_map(|(k, v)| input::first_hidden_character(k).map(|(_, c)| c).or_else(|| hidden(v)))
            }
            _ => None,
        }
    }
    if let Some(c) = hidden(&value) {
        return Err(Error::Input(thetaseek::error::InputError::file(
            &name,
            format!("a text holds an invisible control character (U+{:04X}); remove it", c as u32),
        )));
    }
    let report: thetaseek::report::Report = serde_json::from_slice(&bytes).map_err(|e| {
        let version = value.get("schema_version").and_then(|v| v.as_u64());
        let written = match version {
            Some(v) if v != u64::from(thetaseek::report::SCHEMA_VERSION) => format!(
                " (written with schema_version {v}; this version reads {}: run analyze again)",
                thetaseek::report::SCHEMA_VERSION
            ),
            Some(_) => String::new(),
            None => " (is this a report written by thetaseek analyze?)".into(),
        };
        refuse(e.line(), format!("not a report of analyze: {e}{written}"))
    })?;
    Ok((report, InputFile::new(&name, &bytes)))
}

/// A reader that hashes every byte it passes on, so that a file read a block at a time is
/// still recorded with its SHA-256.
pub(crate) struct Hashing<R> {
    inner: R,
    pub(crate) hasher: sha2::Sha256,
}

impl<R: std::io::Read> std::io::Read for Hashing<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let n = self.inner.read(buf)?;
        sha2::Digest::update(&mut self.hasher, &buf[..n]);
        Ok(n)
    }
}

/// A terminal progress bar on stderr (hidden when stderr is not a terminal or `quiet`).
pub struct Bar(indicatif::ProgressBar);

impl Bar {
    /// A bar for `total` units of work.
    pub fn new(total: u64, quiet: bool) -> Self {
        use std::io::IsTerminal;
        if quiet || !std::io::stderr().is_terminal() {
            return Bar(indicatif::ProgressBar::hidden());
        }
        let bar = indicatif::ProgressBar::new(total);
        if let Ok(style) = indicatif::ProgressStyle::with_template("{elapsed_precise} [{bar:40}] {percent:>3}% {msg}") {
            bar.set_style(style.progress_chars("=> "));
        }
        Bar(bar)
    }

    /// Sets the units of work the bar counts to (a streamed run knows them only at the end).
    pub fn set_total(&self, total: u64) {
        self.0.set_length(total);
    }

    /// Removes the bar from the terminal.
    pub fn finish(&self) {
        self.0.finish_and_clear();
    }
}

impl thetaseek::progress::Progress for Bar {
    fn advance(&self, n: u64) {
        self.0.inc(n);
    }
}

/// Refuses any output that would overwrite one of the inputs, and two outputs to one file.
pub fn check_outputs(outputs: &[PendingOutput], inputs: &[PathBuf]) -> Result<(), Error> {
    check_destinations(outputs.iter().map(|o| &o.destination), inputs)
}

/// [`check_outputs`] on destinations alone (a campaign checks them before writing anything):
/// an input reached by any name (itself, a symbolic or a hard link) is never an output, and
/// no file receives two outputs.
pub fn check_destinations<'d>(
    destinations: impl IntoIterator<Item = &'d Destination>,
    inputs: &[PathBuf],
) -> Result<(), Error> {
    let mut seen: Vec<(PathBuf, &Path)> = Vec::new();
    for destination in destinations {
        let Destination::File(path) = destination else { continue };
        if inputs.iter().any(|input| same_file(path, input)) {
            return Err(Error::OutputIsInput(path.clone()));
        }
        let Some(id) = identity(path) else { continue };
        if let Some((_, first)) = seen.iter().find(|(other, _)| *other == id) {
            return Err(Error::Setting(format!(
                "two outputs would be written to one file: '{}' and '{}'; give each its own name",
                first.display(),
                path.display()
            )));
        }
        seen.push((id, path));
    }
    Ok(())
}

/// `analyze` writes at most one of its report, table and series table to standard output.
pub fn check_one_stdout<'d>(destinations: impl IntoIterator<Item = &'d Destination>) -> Result<(), Error> {
    if destinations.into_iter().filter(|d| **d == Destination::Stdout).count() > 1 {
        return Err(Error::Setting(
            "only one of --report, --table and --series-table can go to standard output ('-')".into(),
        ));
    }
    Ok(())
}

/// Writes every pending output, all or none: every destination is resolved and its temporary
/// file created before anything is written; files are filled, then devices, pipes and standard
/// output are written in place, and only then are the files renamed into place together.
pub fn write_outputs(outputs: Vec<PendingOutput>) -> Result<(), Error> {
    let staged = stage_outputs(outputs)?;
    commit_all(staged).map_err(|(path, source)| Error::Io { action: "cannot write", path, source })
}

/// [`write_outputs`] up to the renames: the files filled (returned, to be committed with
/// others), devices, pipes and standard output written.
pub fn stage_outputs(outputs: Vec<PendingOutput>) -> Result<Vec<AtomicFile>, Error> {
    let shown = |d: &Destination| match d {
        Destination::Stdout => PathBuf::from("-"),
        Destination::File(path) => path.clone(),
    };
    let failed = |path: PathBuf| move |source| Error::Io { action: "cannot write", path, source };
    let mut files = Vec::new();
    let mut in_place = Vec::new();
    for out in &outputs {
        let path = shown(&out.destination);
        match target_of(&out.destination).map_err(failed(path.clone()))? {
            Target::Replace(real) => {
                files.push((AtomicFile::create(&real, &path).map_err(failed(path.clone()))?, out));
            }
            target => in_place.push((target, out)),
        }
    }
    let mut staged = Vec::with_capacity(files.len());
    for (mut file, out) in files {
        let mut buffered = std::io::BufWriter::with_capacity(1 << 20, file.file());
        out.write_to(&mut buffered)
            .and_then(|_| std::io::Write::flush(&mut buffered))
            .map_err(failed(shown(&out.destination)))?;
        drop(buffered);
        staged.push(file);
    }
    for (target, out) in in_place {
        let written = match &target {
            Target::InPlace(path) => write_in_place(path, |w| out.write_to(w)),
            _ => write_stream(std::io::stdout().lock(), |w| out.write_to(w)),
        };
        written.map_err(failed(shown(&out.destination)))?;
    }
    Ok(staged)
}

/// Every input file read, hashed and grouped into one dataset.
pub struct Loaded {
    /// The files with their SHA-256.
    pub inputs: Vec<InputFile>,
    /// Series of every file together.
    pub dataset: Dataset,
    /// Run-level warnings (columns not used, ...).
    pub warnings: Vec<String>,
    /// Series refused for a value that cannot be used (the others were read).
    pub refused: Vec<input::RefusedSeries>,
}

/// Reads every data file (osmometry, A2 or χ tables) into one dataset.
pub fn load(files: &[PathBuf], options: &ReadOptions, max_mb: u64) -> Result<Loaded, Error> {
    let mut loading = Loading::default();
    for (index, path) in files.iter().enumerate() {
        let name = path.display().to_string();
        if input::is_workbook(&name) {
            let bytes = read_input(path, max_mb)?;
            let digest = sha2::Digest::finalize(<sha2::Sha256 as sha2::Digest>::new_with_prefix(&bytes));
            loading.add(&name, &digest, input::read_workbook(&name, index, bytes, options)?);
            continue;
        }
        let mut source = hashing(open_input(path, max_mb)?);
        let contents = input::read_source(&name, index, &mut source, options, input::BLOCK_BYTES)?;
        loading.add(&name, &sha2::Digest::finalize(source.hasher), contents);
    }
    Ok(loading.finish())
}

pub(crate) fn hashing<R: std::io::Read>(file: R) -> Hashing<R> {
    Hashing { inner: file, hasher: sha2::Sha256::default() }
}

/// Files read so far, gathered into what [`Loaded`] holds.
#[derive(Default)]
pub(crate) struct Loading {
    inputs: Vec<InputFile>,
    readings: thetaseek::dataset::GroupedReadings,
    a2_rows: Vec<TabulatedRow>,
    chi_rows: Vec<TabulatedRow>,
    volumes: Vec<(String, thetaseek::dataset::Volumes)>,
    solvents: Vec<(String, String)>,
    other_routes: thetaseek::dataset::OtherRoutes,
    refused: Vec<input::RefusedSeries>,
    warnings: Vec<String>,
}

impl Loading {
    pub(crate) fn add(&mut self, name: &str, digest: &[u8], contents: input::FileContents) {
        self.inputs.push(InputFile::from_digest(name, digest));
        self.warnings.extend(unused_columns(name, &contents.ignored_columns));
        self.warnings.extend(
            contents
                .excluded_rows
                .iter()
                .map(|(series, line, reason)| format!("{name}: line {line} ({series}) excluded, not used: {reason}")),
        );
        self.readings.absorb(contents.readings);
        match contents.quantity {
            Some(Quantity::SecondVirial) => self.a2_rows.extend(contents.tabulated),
            Some(Quantity::HalfMinusChi) => self.chi_rows.extend(contents.tabulated),
            None => {}
        }
        self.volumes.extend(contents.volumes);
        self.solvents.extend(contents.solvents);
        self.other_routes.critical.extend(contents.critical);
        self.other_routes.scattering.extend(contents.scattering);
        self.other_routes.viscometry.extend(contents.viscometry);
        self.refused.extend(contents.refused);
    }

    pub(crate) fn finish(self) -> Loaded {
        let dataset = Dataset::new(
            self.readings,
            &self.a2_rows,
            &self.chi_rows,
            self.other_routes,
            &self.volumes,
            &self.solvents,
        );
        Loaded { inputs: self.inputs, dataset, warnings: self.warnings, refused: self.refused }
    }
}

/// The run-level warning for each header cell that was not used.
pub(crate) fn unused_columns(name: &str, columns: &[String]) -> Vec<String> {
    columns.iter().map(|column| format!("{name}: column '{column}' is not used")).collect()
}

/// A figure's bytes in the format its path names: `.png` (300 dpi) and `.pdf` rendered from
/// the SVG with the shipped fonts, any other extension the SVG itself.
pub(crate) fn figure_bytes(path: &std::path::Path, svg: String) -> Result<Vec<u8>, Error> {
    let extension = path.extension().and_then(|e| e.to_str()).map(str::to_ascii_lowercase);
    let rendered = match extension.as_deref() {
        Some("png") => thetaseek::plot::to_png(&svg),
        Some("pdf") => thetaseek::plot::to_pdf(&svg),
        _ => return Ok(svg.into_bytes()),
    };
    rendered.map_err(|e| Error::Setting(e.to_string()))
}
