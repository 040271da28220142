//! `thetaseek analyze`: read → group → fit → θ → report, one path for every size of input.

use super::sinks::{Finished, RunOutputs};
use super::{check_outputs, hashing, load, open_input, unused_columns, Bar, Loaded, PendingOutput};
use crate::cli::{AnalyzeArgs, DetailArg, FigureFormatArg, ReadArgs, VirialArg};
use thetaseek::analysis::{self, Settings};
use thetaseek::chain_dimensions::RepeatUnit;
use thetaseek::dataset::{Series, Volumes};
use thetaseek::error::Error;
use thetaseek::input::{BlockReader, Opened, ReadOptions, BLOCK_BYTES};
use thetaseek::output::Destination;
use thetaseek::plot;
use thetaseek::report::{Detail, InputFile, ReportSettings};
use thetaseek::theta::ThetaSettings;
use thetaseek::units::{ConcentrationUnit, PressureUnit, TemperatureUnit};
use thetaseek::virial::{FormChoice, VirialForm};
use thetaseek::viscometry::ViscometrySettings;

/// Runs the subcommand: one path for every size of input. The input yields series as it is
/// read ([`read_into`]), [`RunOutputs`] analyses them a chunk at a time and writes the JSON and
/// the tables as it goes, and the end of the run compares the routes, draws the figures and
/// commits every output together.
pub fn run(args: &AnalyzeArgs) -> Result<(), Error> {
    let mut options = read_options(&args.read)?;
    let settings = settings(args)?;
    let table = read_solvent_table(args)?;
    if let Some(table) = &table {
        options.solvent_densities = table.rows.iter().filter_map(|r| r.density.map(|d| (r.name.clone(), d))).collect();
    }
    if args.bootstrap > args.max_bootstrap {
        return Err(Error::Setting(format!(
            "--bootstrap {} is above --max-bootstrap {} (memory grows by 8 bytes per replicate per series in flight, time by one refit each); raise --max-bootstrap to run it",
            args.bootstrap, args.max_bootstrap
        )));
    }
    let report_settings = ReportSettings {
        temperature_unit: options.temperature_unit,
        concentration_unit: options.concentration_unit,
        pressure_unit: options.pressure_unit,
        solvent_density_g_per_ml: args.read.solvent_density,
        confidence: args.confidence,
        bootstrap_replicates: args.bootstrap,
        seed: args.seed,
        polymer_specific_volume_ml_per_g: args.polymer_specific_volume,
        solvent_molar_volume_ml_per_mol: args.solvent_molar_volume,
        a2_tolerance_mol_ml_per_g2: args.a2_tolerance,
        report_detail: match args.report_detail {
            DetailArg::Full => Detail::Full,
            DetailArg::Fits => Detail::Fits,
        },
        ..ReportSettings::new(settings.virial)
    };
    check_destinations(args)?;
    let bar = Bar::new(0, args.quiet);
    let run = RunContext { args, options: &options, settings: &settings, table: table.as_ref(), bar: &bar };
    let read = read_all(&run, &report_settings)?;
    bar.finish();
    let Done { outputs, inputs, warnings, digest, refused } = read;
    let finished = outputs.finish(inputs, warnings, digest, args.quiet)?;
    commit(args, finished)?;
    match refused {
        0 => Ok(()),
        n => Err(Error::SomeSeriesRefused(n)),
    }
}

/// What every step of reading needs.
struct RunContext<'a> {
    args: &'a AnalyzeArgs,
    options: &'a ReadOptions,
    settings: &'a Settings,
    table: Option<&'a SolventTable>,
    bar: &'a Bar,
}

/// When series read from a file are analysed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Release {
    /// As soon as the file has moved past them (each series' rows together, the usual layout).
    AsRead,
    /// At the end of the input.
    AtEnd,
}

/// How reading a file as it streams ended.
enum Read<'a> {
    /// Every series analysed and written into the outputs.
    Done(Box<Done<'a>>),
    /// A series' rows came back after it had been analysed.
    SeriesReturned,
}

/// A run read and analysed, its outputs still to be finished.
struct Done<'a> {
    outputs: RunOutputs<'a>,
    inputs: Vec<InputFile>,
    warnings: Vec<String>,
    /// The first input's SHA-256, where it was hashed as it was streamed.
    digest: Option<String>,
    refused: usize,
}

/// Reads every input and analyses it into freshly opened outputs. One CSV file is read a block
/// at a time, each series analysed once the file has moved past it, so a campaign never holds
/// its dataset whole; several files (a series may continue in a later one) or a workbook are
/// read whole first. A copy of a streamed file's bytes is kept as they are read (on disk, in an
/// anonymous temporary file): if a series comes back after it was analysed, nothing has been
/// committed, and the run goes on from that copy and the rest of the file, holding every series
/// to the end (the file itself is read once, so a pipe works too).
fn read_all<'a>(run: &RunContext<'a>, report_settings: &ReportSettings) -> Result<Done<'a>, Error> {
    let args = run.args;
    let open_outputs = || RunOutputs::open(args, run.settings, report_settings.clone());
    let streamable = args.files.len() == 1 && !thetaseek::input::is_workbook(&args.files[0].display().to_string());
    if !streamable {
        let loaded = load(&args.files, run.options, args.read.max_input_mb)?;
        return analyse_loaded(run, open_outputs()?, loaded, false);
    }
    let path = &args.files[0];
    let name = path.display().to_string();
    let file = open_input(path, args.read.max_input_mb)?;
    let file_bytes = file.size();
    let mut source = Recording::new(hashing(file));
    let done = match stream_file(run, &name, file_bytes, &mut source, open_outputs()?, Release::AsRead)? {
        Read::Done(done) => done,
        Read::SeriesReturned => {
            let recorded = source.replay().ok_or_else(|| {
                Error::Input(thetaseek::error::InputError::file(
                    &name,
                    "a series' rows come back after other series, and no temporary copy of the file could be kept to read it whole (set TMPDIR to a writable folder, or sort the file by series)",
                ))
            })?;
            let mut replay = std::io::Read::chain(recorded, &mut source);
            match stream_file(run, &name, file_bytes, &mut replay, open_outputs()?, Release::AtEnd)? {
                Read::Done(done) => done,
                Read::SeriesReturned => unreachable!("nothing is released before the end"),
            }
        }
    };
    let mut done = *done;
    if done.digest.is_some() {
        let digest = InputFile::from_digest(&name, &sha2::Digest::finalize(source.inner.hasher)).sha256;
        done.inputs[0].sha256 = digest.clone();
        done.digest = Some(digest);
    }
    Ok(done)
}

/// A reader that keeps a copy of what it passes on in an anonymous temporary file (no memory,
/// and nothing left behind however the run ends), until [`Recording::replay`] takes it. Where
/// no temporary file can be written the copy is given up, and only a file whose series come
/// back late is refused for it.
struct Recording<R> {
    inner: R,
    copy: Option<std::io::BufWriter<std::fs::File>>,
}

impl<R> Recording<R> {
    fn new(inner: R) -> Self {
        let copy = tempfile::tempfile().ok().map(|file| std::io::BufWriter::with_capacity(1 << 20, file));
        Recording { inner, copy }
    }

    /// What was read so far, from its start (`None` when no copy could be kept); nothing more
    /// is copied.
    fn replay(&mut self) -> Option<std::fs::File> {
        let mut file = self.copy.take()?.into_inner().ok()?;
        std::io::Seek::rewind(&mut file).ok()?;
        Some(file)
    }
}

impl<R: std::io::Read> std::io::Read for Recording<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let n = self.inner.read(buf)?;
        if let Some(copy) = &mut self.copy {
            if std::io::Write::write_all(copy, &buf[..n]).is_err() {
                self.copy = None;
            }
        }
        Ok(n)
    }
}

/// Reads one CSV file from `source` a block at a time into `outputs`, releasing each series to
/// the analysis as `release` says. The first input's SHA-256 is left as a placeholder (the
/// caller hashes the file).
fn stream_file<'a>(
    run: &RunContext<'a>,
    name: &str,
    file_bytes: u64,
    source: &mut (dyn std::io::Read + Send),
    mut outputs: RunOutputs<'a>,
    release: Release,
) -> Result<Read<'a>, Error> {
    let mut reader = match BlockReader::open(name, 0, source, run.options, BLOCK_BYTES)? {
        Opened::Blocks(reader) => reader,
        Opened::Whole(contents) => {
            // A small file, or not osmometry: read whole; its SHA-256 (a placeholder of zeros
            // here) is patched in once the caller has hashed it.
            let mut loading = super::Loading::default();
            loading.add(name, &[0; 32], *contents);
            let mut done = analyse_loaded(run, outputs, loading.finish(), true)?;
            done.digest = Some(String::new());
            return Ok(Read::Done(Box::new(done)));
        }
    };
    let mut warnings = unused_columns(name, &reader.ignored_columns());
    // The file's SHA-256 is known only at its end: the report opens with zeros in its place.
    let mut inputs = vec![InputFile { path: name.to_string(), sha256: "0".repeat(64) }];
    inputs.extend(run.table.map(|t| t.input.clone()));
    outputs.begin(&inputs, true)?;
    let mut volumes = SolventVolumes::new(run);
    let mut ready: Vec<(Series, Option<String>)> = Vec::new();
    let mut read_bytes = 0u64;
    let units_per_series = analysis::osmometry_work_units(1, run.settings);
    loop {
        // The next block is read while the series finished so far are analysed and written.
        let batch = std::mem::take(&mut ready);
        let (more, written) = rayon::join(|| reader.next_block(), || outputs.analyse(&batch, run.bar));
        let more = more?;
        written?;
        drop(batch);
        if reader.readings.reopened().is_some() {
            return Ok(Read::SeriesReturned);
        }
        read_bytes += BLOCK_BYTES as u64;
        if !more {
            break;
        }
        if release == Release::AsRead {
            let finished = reader.readings.take_finished();
            ready.extend(finished.into_iter().map(|s| volumes.attach(s, &reader)));
            // The bar's length is estimated from the series per byte read so far.
            let seen = outputs.analysed() + ready.len() as u64;
            run.bar.set_total(seen * units_per_series * file_bytes.max(read_bytes) / read_bytes.max(1));
        }
    }
    let rest = std::mem::take(&mut reader.readings).into_series();
    ready.extend(rest.into_iter().map(|s| volumes.attach(s, &reader)));
    let contents = reader.finish()?;
    run.bar.set_total((outputs.analysed() + ready.len() as u64) * units_per_series);
    outputs.analyse(&ready, run.bar)?;
    drop(ready);
    warnings.extend(volumes.finish());
    outputs.add_refused(&contents.refused)?;
    let refused = contents.refused.len();
    Ok(Read::Done(Box::new(Done { outputs, inputs, warnings, digest: Some(String::new()), refused })))
}

/// Analyses a dataset read whole: the osmometry series, then the other routes, then the
/// series refused at reading.
/// `hashed_later`: the first input's SHA-256 is a placeholder, patched in at the end.
fn analyse_loaded<'a>(
    run: &RunContext<'a>,
    mut outputs: RunOutputs<'a>,
    mut loaded: Loaded,
    hashed_later: bool,
) -> Result<Done<'a>, Error> {
    let mut volumes = SolventVolumes::new(run);
    if let Some(table) = run.table {
        if !loaded.inputs.iter().any(|i| i.path == table.input.path) {
            loaded.inputs.push(table.input.clone());
        }
    }
    outputs.begin(&loaded.inputs, hashed_later)?;
    let Loaded { inputs, mut dataset, mut warnings, refused } = loaded;
    run.bar.set_total(analysis::work_units(&dataset, run.settings));
    let solvents: std::collections::HashMap<String, String> = dataset.solvents.iter().cloned().collect();
    let solvent_of = |name: &str| solvents.get(name).cloned();
    let series: Vec<(Series, Option<String>)> = std::mem::take(&mut dataset.series)
        .into_iter()
        .map(|s| {
            let solvent = solvent_of(&s.name);
            (volumes.attach_named(s, solvent.as_deref()), solvent)
        })
        .collect();
    outputs.analyse(&series, run.bar)?;
    // Freeing 10⁵ small vectors takes tens of milliseconds: done beside the rest of the run.
    let freeing = std::thread::spawn(move || drop(series));
    let others = analysis::analyze_other_routes(&dataset, run.settings, run.bar, outputs.route_findings());
    outputs.add(&others, solvent_of)?;
    outputs.add_refused(&refused)?;
    warnings.extend(volumes.finish());
    let _ = freeing.join();
    Ok(Done { outputs, inputs, warnings, digest: None, refused: refused.len() })
}

/// Each series' solvent molar volume from the solvents table (a series' own columns win),
/// with the run's warnings about it.
struct SolventVolumes<'a> {
    table: Option<&'a SolventTable>,
    specific_volume: Option<f64>,
    flag: Option<f64>,
    warnings: Vec<String>,
    /// Solvents of series that rely on the one `--solvent-molar-volume`.
    covered: Vec<String>,
}

impl<'a> SolventVolumes<'a> {
    fn new(run: &RunContext<'a>) -> Self {
        SolventVolumes {
            table: run.table,
            // mL/g → m³/kg, mL/mol → m³/mol.
            specific_volume: run.args.polymer_specific_volume.map(|v| v * 1e-3),
            flag: run.args.solvent_molar_volume.map(|v| v * 1e-6),
            warnings: Vec::new(),
            covered: Vec::new(),
        }
    }

    /// A series read in blocks: its own v̄ and V1 from the file, then the table's.
    fn attach(&mut self, mut series: Series, reader: &BlockReader) -> (Series, Option<String>) {
        series.volumes = reader.volumes_of(&series.name);
        let solvent = reader.solvent_of(&series.name).map(str::to_string);
        (self.attach_named(series, solvent.as_deref()), solvent)
    }

    fn attach_named(&mut self, mut series: Series, solvent: Option<&str>) -> Series {
        if let Some(table) = self.table {
            let warning = thetaseek::solvent::attach_molar_volume(
                &mut series,
                solvent,
                &table.rows,
                self.specific_volume,
                self.flag,
            );
            self.warnings.extend(warning);
        }
        if series.volumes.is_none() {
            if let Some(solvent) = solvent {
                if !self.covered.iter().any(|c| c == solvent) {
                    self.covered.push(solvent.to_string());
                }
            }
        }
        series
    }

    /// The warnings, with one for a single molar volume over several solvents.
    fn finish(self) -> Vec<String> {
        let covered: Vec<&str> = self.covered.iter().map(String::as_str).collect();
        let mut warnings = self.warnings;
        warnings.extend(thetaseek::solvent::one_volume_for_several_solvents(self.flag, &covered));
        warnings
    }
}

/// Refuses, before anything is read, two outputs on standard output and any output that is an
/// input or shares a file with another output.
fn check_destinations(args: &AnalyzeArgs) -> Result<(), Error> {
    let mut destinations: Vec<Destination> =
        [&args.report, &args.table, &args.series_table].into_iter().flatten().map(|p| Destination::parse(p)).collect();
    super::check_one_stdout(&destinations)?;
    destinations.extend(args.html.iter().map(|p| Destination::File(p.clone())));
    super::check_destinations(&destinations, &input_paths(args))
}

/// One figure in every format asked for: (file name, bytes).
pub(crate) fn figure_files(
    figure: &plot::Figure,
    formats: &[FigureFormatArg],
) -> Result<Vec<(String, Vec<u8>)>, Error> {
    let stem = figure.file_name.strip_suffix(".svg").unwrap_or(&figure.file_name);
    let mut seen = Vec::new();
    let mut out = Vec::new();
    for format in formats {
        if seen.contains(format) {
            continue;
        }
        seen.push(*format);
        let (extension, bytes) = match format {
            FigureFormatArg::Svg => ("svg", figure.svg.clone().into_bytes()),
            FigureFormatArg::Png => ("png", plot::to_png(&figure.svg).map_err(|e| Error::Setting(e.to_string()))?),
            FigureFormatArg::Pdf => ("pdf", plot::to_pdf(&figure.svg).map_err(|e| Error::Setting(e.to_string()))?),
        };
        out.push((format!("{stem}.{extension}"), bytes));
    }
    Ok(out)
}

/// Draws the figures and HTML (when asked for) and commits every output together, then
/// prints the terminal text.
fn commit(args: &AnalyzeArgs, finished: Finished) -> Result<(), Error> {
    let Finished { mut files, report, terminal, stdout_taken } = finished;
    let mut outputs = Vec::new();
    if let Some(report) = &report {
        let figures = plot::figures_for_report(report).map_err(|e| Error::Setting(e.to_string()))?;
        if let Some(path) = &args.html {
            let html = thetaseek::html::analyze_html(report, &figures, &thetaseek::html::report_date());
            outputs.push(PendingOutput::bytes(Destination::File(path.clone()), html.into_bytes()));
        }
        if let Some(dir) = &args.figures {
            for figure in figures {
                for (name, bytes) in figure_files(&figure, &args.figure_format)? {
                    outputs.push(PendingOutput::bytes(Destination::File(dir.join(name)), bytes));
                }
            }
        }
    }
    check_outputs(&outputs, &input_paths(args))?;
    // The figures folder is made only once every check has passed, and removed again if it
    // was new and the outputs could not be written.
    let new_folder = args.figures.as_ref().filter(|dir| !dir.exists());
    if let Some(dir) = &args.figures {
        std::fs::create_dir_all(dir).map_err(|source| Error::Io {
            action: "cannot create",
            path: dir.clone(),
            source,
        })?;
    }
    let written = super::stage_outputs(outputs).and_then(|staged| {
        files.extend(staged);
        thetaseek::output::commit_all(files).map_err(|(path, source)| Error::Io {
            action: "cannot write",
            path,
            source,
        })
    });
    if let Err(error) = written {
        if let Some(dir) = new_folder {
            let _ = std::fs::remove_dir(dir);
        }
        return Err(error);
    }
    if let Some(text) = terminal {
        if stdout_taken {
            eprint!("{text}");
        } else {
            print!("{text}");
        }
    }
    Ok(())
}

/// Every file the run reads (none may be an output).
pub(crate) fn input_paths(args: &AnalyzeArgs) -> Vec<std::path::PathBuf> {
    args.files.iter().chain(&args.solvents).cloned().collect()
}

/// A solvents table given to analyze, read once, with its hash for the report's inputs.
pub(crate) struct SolventTable {
    /// Its rows.
    pub rows: Vec<thetaseek::input::SolventProperties>,
    /// Its name and SHA-256.
    pub input: InputFile,
}

fn read_solvent_table(args: &AnalyzeArgs) -> Result<Option<SolventTable>, Error> {
    let Some(path) = &args.solvents else { return Ok(None) };
    let name = path.display().to_string();
    let bytes = super::read_input(path, args.read.max_input_mb)?;
    let rows = thetaseek::input::read_solvents(&name, &bytes)?;
    Ok(Some(SolventTable { rows, input: InputFile::new(&name, &bytes) }))
}

/// The library's form choice for the command-line value.
pub(crate) fn virial_choice(arg: VirialArg) -> FormChoice {
    match arg {
        VirialArg::Auto => FormChoice::Auto,
        VirialArg::Linear => FormChoice::Fixed(VirialForm::Linear),
        VirialArg::Quadratic => FormChoice::Fixed(VirialForm::Quadratic),
        VirialArg::Sqrt => FormChoice::Fixed(VirialForm::Sqrt),
    }
}

fn settings(args: &AnalyzeArgs) -> Result<Settings, Error> {
    let virial = virial_choice(args.read.virial);
    let volumes = match (args.polymer_specific_volume, args.solvent_molar_volume) {
        // mL/g → m³/kg and mL/mol → m³/mol.
        (Some(v), Some(m)) => Some(Volumes { specific_volume: v * 1e-3, molar_volume: m * 1e-6 }),
        (None, None) => None,
        // The solvents table gives each series its V1; v̄ is the polymer's.
        (Some(_), None) if args.solvents.is_some() => None,
        _ => {
            return Err(Error::Setting(
                "give both --polymer-specific-volume and --solvent-molar-volume (or --solvents with the molar volumes), or neither".into(),
            ))
        }
    };
    Ok(Settings {
        virial,
        theta: ThetaSettings {
            confidence: args.confidence,
            bootstrap_replicates: args.bootstrap,
            seed: args.seed,
            // mol mL/g² is numerically mol m³/kg² (see units).
            a2_tolerance: args.a2_tolerance,
            virial,
        },
        volumes,
        viscometry: viscometry_settings(&args.read, args.confidence),
    })
}

/// The viscometry route's constants from the command line (g/mol → kg/mol, nm → m).
pub(crate) fn viscometry_settings(read: &ReadArgs, confidence: f64) -> ViscometrySettings {
    ViscometrySettings {
        confidence,
        flory_fox_per_mol: read.flory_fox_constant,
        repeat_unit: read.repeat_unit_molar_mass.map(|m| RepeatUnit {
            molar_mass: m * 1e-3,
            bonds: read.backbone_bonds,
            bond_length_m: read.bond_length * 1e-9,
        }),
    }
}

pub(crate) fn read_options(args: &ReadArgs) -> Result<ReadOptions, Error> {
    fn unit<U: std::str::FromStr<Err = thetaseek::units::UnknownUnit>>(
        text: &Option<String>,
        flag: &str,
    ) -> Result<Option<U>, Error> {
        text.as_deref().map(|t| t.parse::<U>().map_err(|e| Error::Setting(format!("{flag}: {e}")))).transpose()
    }
    let density = match args.solvent_density {
        Some(d) if !(d.is_finite() && d > 0.0) => {
            return Err(Error::Setting(format!("--solvent-density: {d} is not a positive density in g/mL")));
        }
        Some(d) => Some(d * 1000.0),
        None => None,
    };
    Ok(ReadOptions {
        solvent_densities: Vec::new(),
        temperature_unit: unit::<TemperatureUnit>(&args.temperature_unit, "--temperature-unit")?,
        concentration_unit: unit::<ConcentrationUnit>(&args.concentration_unit, "--concentration-unit")?,
        pressure_unit: unit::<PressureUnit>(&args.pressure_unit, "--pressure-unit")?,
        solvent_density_kg_per_m3: density,
        // mol cm²/g² → mol m²/kg²: 10⁻⁴ m² over 10⁻⁶ kg²; mL/g → m³/kg; nm → m.
        optical_constant: args.optical_constant.map(|k| k * 1e2),
        refractive_index: args.refractive_index,
        dn_dc: args.dn_dc.map(|d| d * 1e-3),
        wavelength_m: args.wavelength.map(|l| l * 1e-9),
        strict: args.strict,
        sheet: args.sheet.clone(),
        columns: args.columns.iter().map(|c| column_mapping(c)).collect::<Result<_, _>>()?,
    })
}

/// One `--column NAME=HEADER`: a column name we read, and the header cell to read as it.
fn column_mapping(text: &str) -> Result<(thetaseek::input::Role, String), Error> {
    let refuse = |why: &str| {
        Error::Setting(format!("--column {text}: {why}; write it as NAME=HEADER, e.g. temperature=\"Temp (°C)\""))
    };
    let (name, header) = text.split_once('=').ok_or_else(|| refuse("no '='"))?;
    let name = name.split_whitespace().collect::<Vec<_>>().join(" ").to_lowercase();
    let role = thetaseek::input::Role::from_name(&name)
        .ok_or_else(|| refuse(&format!("'{name}' is not a column name we read")))?;
    if header.trim().is_empty() {
        return Err(refuse("the header is empty"));
    }
    Ok((role, header.trim().to_string()))
}
