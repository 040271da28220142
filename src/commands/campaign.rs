//! `thetaseek analyze` on a campaign (more than [`report::CAMPAIGN_SERIES`] series, no figures):
//! the series are analysed a chunk at a time, each chunk's JSON and table rows written straight
//! into the (temporary) output files, the summary and digest tallied as they go; only the
//! series that share a name with another route are kept, for the route comparison. Memory then
//! grows with the input, not with the report.
//!
//! One large osmometry file is also *streamed* ([`stream`]): its series are analysed while the
//! next block of the file is read, and freed once written, so the dataset is never held whole.
//! A series whose rows come back after other series makes the run start again the usual way.

use super::analyze::{add_critical_series, add_scattering_series, names_in_order};
use super::{hashing, open_input, unused_columns, Bar, Loaded};
use crate::cli::AnalyzeArgs;
use rayon::prelude::*;
use std::collections::HashSet;
use std::io::{Seek, Write};
use std::path::PathBuf;
use thetaseek::analysis::{self, Settings};
use thetaseek::dataset::{Dataset, Series};
use thetaseek::error::Error;
use thetaseek::input::{BlockReader, Opened, ReadOptions, BLOCK_BYTES};
use thetaseek::output::{commit_all, target_of, write_in_place, write_stream, AtomicFile, Destination, Target};
use thetaseek::report::{
    self, Detail, InputFile, Report, ReportSettings, ReportStream, SeriesFilter, SeriesReport, Tally,
};

/// Series analysed and written together (one chunk is written while the next is analysed):
/// enough to keep both cores busy, few enough that the two chunks in flight stay a few
/// megabytes. 256 was the fastest and smallest of 256, 512 and 1024 on a 20 000-series campaign.
const CHUNK_SERIES: usize = 256;

/// Bytes written between syncs started behind the writer: a 100 MB report then waits for
/// the disk a few megabytes at the end, not for all of it (on a 20 000-series campaign the
/// final sync took 0.10 s, now 0.03 s).
const SYNC_BEHIND_BYTES: usize = 4 << 20;

/// An output written as the run goes: a temporary file renamed at the end, or standard output,
/// a device or a pipe (held until the end, so that a run that fails writes no partial report).
struct Sink {
    path: PathBuf,
    /// Where held bytes go when the output is not a file.
    target: Target,
    file: Option<AtomicFile>,
    held: Vec<u8>,
    written: u64,
    unsynced: usize,
}

impl Sink {
    fn open(destination: Destination) -> Result<Self, Error> {
        let path = match &destination {
            Destination::Stdout => PathBuf::from("-"),
            Destination::File(path) => path.clone(),
        };
        let target = target_of(&destination).map_err(|source| io_error(&path, source))?;
        let file = match &target {
            Target::Replace(real) => Some(AtomicFile::create(real, &path).map_err(|source| io_error(&path, source))?),
            _ => None,
        };
        Ok(Sink { path, target, file, held: Vec::new(), written: 0, unsynced: 0 })
    }

    /// Moves what was written since the last call into the file, and every
    /// [`SYNC_BEHIND_BYTES`] starts it on its way to the disk.
    fn flush(&mut self) -> Result<(), Error> {
        if let Some(file) = &mut self.file {
            file.file().write_all(&self.held).map_err(|source| io_error(&self.path, source))?;
            self.written += self.held.len() as u64;
            self.unsynced += self.held.len();
            self.held.clear();
            if self.unsynced >= SYNC_BEHIND_BYTES {
                file.sync_behind().map_err(|source| io_error(&self.path, source))?;
                self.unsynced = 0;
            }
        }
        Ok(())
    }

    /// Overwrites bytes already written at `offset` (from the start of the output), all of
    /// them in the file or all still held (each flush moves whole pieces).
    fn patch(&mut self, offset: u64, bytes: &[u8]) -> Result<(), Error> {
        match &mut self.file {
            Some(file) if offset < self.written => {
                let f = file.file();
                let io = |source| io_error(&self.path, source);
                f.seek(std::io::SeekFrom::Start(offset)).map_err(io)?;
                f.write_all(bytes).map_err(io)?;
                f.seek(std::io::SeekFrom::End(0)).map_err(io)?;
            }
            _ => {
                let at = (offset - self.written) as usize;
                self.held[at..at + bytes.len()].copy_from_slice(bytes);
            }
        }
        Ok(())
    }

    /// Writes what is held: into the file (returned, to be committed with the others), or in
    /// place (standard output, a device, a pipe).
    fn close(mut self) -> Result<Option<AtomicFile>, Error> {
        self.flush()?;
        let path = self.path.clone();
        let written = match (&self.target, self.file.take()) {
            (_, Some(file)) => return Ok(Some(file)),
            (Target::InPlace(device), None) => write_in_place(device, |w| w.write_all(&self.held)),
            _ => write_stream(std::io::stdout().lock(), |w| w.write_all(&self.held)),
        };
        written.map_err(|source| io_error(&path, source))?;
        Ok(None)
    }
}

fn io_error(path: &std::path::Path, source: std::io::Error) -> Error {
    Error::Io { action: "cannot write", path: path.to_path_buf(), source }
}

/// One series' report and its JSON, analysed but not yet written.
type Analysed = (SeriesReport, Vec<u8>);

/// A campaign's outputs being written, and what is tallied and kept as the series go by.
struct Campaign<'a> {
    settings: &'a Settings,
    detail: Detail,
    filter: SeriesFilter,
    json: Option<(Sink, ReportStream)>,
    table: Option<Sink>,
    series_table: Option<Sink>,
    /// No table row written yet: the next one brings the header line.
    header: bool,
    tally: Tally,
    /// Series that share their name with another route, for the comparison.
    kept: Vec<SeriesReport>,
    other_routes: HashSet<String>,
    /// Series analysed so far (each one's bootstrap seed follows its index).
    analysed: u64,
    /// The last chunk analysed, written while the next one is analysed.
    pending: Option<Vec<Analysed>>,
    stdout_taken: bool,
}

impl<'a> Campaign<'a> {
    /// Opens the outputs and writes the report's opening (inputs, settings, warnings).
    fn open(
        args: &AnalyzeArgs,
        settings: &'a Settings,
        inputs: &[InputFile],
        report_settings: &ReportSettings,
        run_warnings: &[String],
        other_routes: HashSet<String>,
    ) -> Result<Self, Error> {
        let open = |path: &Option<String>| path.as_deref().map(|p| Sink::open(Destination::parse(p))).transpose();
        let json = match open(&args.report)? {
            Some(mut sink) => {
                let stream = ReportStream::begin(&mut sink.held, inputs, report_settings, run_warnings)
                    .map_err(|source| io_error(&sink.path, source))?;
                Some((sink, stream))
            }
            None => None,
        };
        let stdout_taken = [&args.report, &args.table, &args.series_table]
            .into_iter()
            .flatten()
            .any(|p| Destination::parse(p) == Destination::Stdout);
        Ok(Campaign {
            settings,
            detail: report_settings.report_detail,
            filter: if args.needs_attention { SeriesFilter::NeedsAttention } else { SeriesFilter::All },
            json,
            table: open(&args.table)?,
            series_table: open(&args.series_table)?,
            header: true,
            tally: Tally::default(),
            kept: Vec::new(),
            other_routes,
            analysed: 0,
            pending: None,
            stdout_taken,
        })
    }

    /// Analyses osmometry series (each with its solvent) a chunk at a time, each chunk written
    /// while the next one is analysed.
    fn analyse(&mut self, series: &[(Series, Option<String>)], bar: &Bar) -> Result<(), Error> {
        for chunk in series.chunks(CHUNK_SERIES) {
            let (settings, detail, first) = (self.settings, self.detail, self.analysed);
            let want_json = self.json.is_some();
            let analyse = || -> Vec<Analysed> {
                chunk
                    .par_iter()
                    .enumerate()
                    .map(|(i, (s, solvent))| {
                        let result = analysis::analyze_series_with_progress(s, settings, first + i as u64, bar);
                        let mut r = SeriesReport::new(&result, Some(s), detail);
                        r.solvent = solvent.clone();
                        let bytes = if want_json { report::series_json(&r) } else { Vec::new() };
                        (r, bytes)
                    })
                    .collect()
            };
            let previous = self.pending.take();
            let (written, reports) = rayon::join(|| previous.map_or(Ok(()), |p| self.emit(p)), analyse);
            written?;
            self.pending = Some(reports);
            self.analysed += chunk.len() as u64;
        }
        Ok(())
    }

    /// Writes reports made elsewhere (tables, critical temperatures, light scattering) after
    /// the osmometry series, their solvent from `solvent_of`.
    fn add(&mut self, reports: Vec<SeriesReport>, solvent_of: impl Fn(&str) -> Option<String>) -> Result<(), Error> {
        if let Some(p) = self.pending.take() {
            self.emit(p)?;
        }
        let want_json = self.json.is_some();
        let reports = reports
            .into_iter()
            .map(|mut r| {
                r.solvent = solvent_of(&r.name);
                let bytes = if want_json { report::series_json(&r) } else { Vec::new() };
                (r, bytes)
            })
            .collect();
        self.emit(reports)
    }

    /// Writes one chunk's reports, tallies them, keeps those another route shares a name with.
    fn emit(&mut self, reports: Vec<Analysed>) -> Result<(), Error> {
        if let Some((sink, stream)) = &mut self.json {
            for (_, bytes) in &reports {
                stream.push(&mut sink.held, bytes).map_err(|source| io_error(&sink.path, source))?;
            }
            sink.flush()?;
        }
        let reports: Vec<SeriesReport> = reports.into_iter().map(|(r, _)| r).collect();
        if let Some(sink) = &mut self.table {
            report::table_rows_csv(&mut sink.held, &reports, self.header);
            sink.flush()?;
        }
        if let Some(sink) = &mut self.series_table {
            report::series_table_rows_csv(&mut sink.held, &reports, self.filter, self.header);
            sink.flush()?;
        }
        self.header = false;
        for r in reports {
            self.tally.add(&r);
            if r.route != thetaseek::dataset::Route::Osmometry || self.other_routes.contains(r.name.as_str()) {
                self.kept.push(r.into_record());
            }
        }
        Ok(())
    }

    /// Compares the routes, closes the report and commits every output; `report` holds the
    /// run's inputs, settings and warnings. `digest` replaces a placeholder written at the
    /// start, for a file hashed as it was streamed.
    fn finish(mut self, mut report: Report, digest: Option<(u64, String)>, quiet: bool) -> Result<(), Error> {
        if let Some(p) = self.pending.take() {
            self.emit(p)?;
        }
        if self.header {
            // No series at all reached a table: the files still get their header line.
            if let Some(sink) = &mut self.table {
                report::table_rows_csv(&mut sink.held, &[], true);
            }
            if let Some(sink) = &mut self.series_table {
                report::series_table_rows_csv(&mut sink.held, &[], self.filter, true);
            }
        }
        report.series = std::mem::take(&mut self.kept);
        report.compare_routes();
        if self.tally.all_refused() {
            if !quiet {
                eprint!("{}", self.tally.render(&report.routes, &report.warnings));
            }
            return Err(Error::NothingAnalysed(self.tally.refusals_in_brief()));
        }
        let json = match self.json.take() {
            Some((mut sink, stream)) => {
                stream.finish(&mut sink.held, &report.routes).map_err(|source| io_error(&sink.path, source))?;
                if let Some((offset, hex)) = &digest {
                    sink.patch(*offset, hex.as_bytes())?;
                }
                Some(sink)
            }
            None => None,
        };
        let mut files = Vec::new();
        for sink in [json, self.table.take(), self.series_table.take()].into_iter().flatten() {
            files.extend(sink.close()?);
        }
        commit_all(files).map_err(|(path, source)| io_error(&path, source))?;
        if !quiet {
            let text = self.tally.render(&report.routes, &report.warnings);
            if self.stdout_taken {
                eprint!("{text}");
            } else {
                print!("{text}");
            }
        }
        Ok(())
    }
}

/// Every output is checked before anything is written (one stdout at most, no input overwritten).
fn check_outputs(args: &AnalyzeArgs) -> Result<(), Error> {
    let destinations: Vec<Destination> =
        [&args.report, &args.table, &args.series_table].into_iter().flatten().map(|p| Destination::parse(p)).collect();
    super::check_one_stdout(&destinations)?;
    super::check_destinations(&destinations, &super::analyze::input_paths(args))
}

/// Runs `analyze` on a campaign already read.
pub fn run(
    args: &AnalyzeArgs,
    loaded: Loaded,
    settings: &Settings,
    report_settings: ReportSettings,
) -> Result<(), Error> {
    let Loaded { inputs, mut dataset, warnings: run_warnings, critical, volumes, scattering, refused } = loaded;
    check_outputs(args)?;
    let series = std::mem::take(&mut dataset.series);
    // Only a series that shares its name with another route is compared, so only those are kept.
    let other_routes: HashSet<String> = dataset
        .tabulated
        .iter()
        .map(|s| s.name.as_str())
        .chain(names_in_order(critical.iter().map(|r| r.series.as_str())))
        .chain(names_in_order(scattering.iter().map(|r| r.series.as_str())))
        .map(str::to_string)
        .collect();
    let mut campaign = Campaign::open(args, settings, &inputs, &report_settings, &run_warnings, other_routes)?;
    let bar = Bar::new(analysis::work_units(&series, &dataset.tabulated, settings), args.quiet);
    let solvents: std::collections::HashMap<&str, &str> =
        dataset.solvents.iter().map(|(s, v)| (s.as_str(), v.as_str())).collect();
    let solvent_of = |name: &str| solvents.get(name).map(|v| v.to_string());
    let with_solvents: Vec<(Series, Option<String>)> = series
        .into_iter()
        .map(|s| {
            let solvent = solvent_of(&s.name);
            (s, solvent)
        })
        .collect();
    campaign.analyse(&with_solvents, &bar)?;
    // Freeing 10⁵ small vectors takes tens of milliseconds: done beside the rest of the run.
    let freeing = std::thread::spawn(move || drop(with_solvents));
    let tabulated: Vec<SeriesReport> = dataset
        .tabulated
        .par_iter()
        .map(|s| {
            let result = analysis::analyze_tabulated(s, settings);
            thetaseek::progress::Progress::advance(&bar, 1);
            SeriesReport::new(&result, None, campaign.detail)
        })
        .collect();
    campaign.add(tabulated, solvent_of)?;
    bar.finish();
    // Critical-temperature and light-scattering series are few: added as the whole-run path does.
    let mut report = Report::new(inputs, report_settings, run_warnings, &[], &dataset);
    add_critical_series(&mut report, &critical, &volumes, settings);
    add_scattering_series(&mut report, &scattering, &volumes, settings);
    campaign.add(std::mem::take(&mut report.series), solvent_of)?;
    campaign.add(refused.iter().map(SeriesReport::refused_input).collect(), solvent_of)?;
    let finished = campaign.finish(report, None, args.quiet);
    let _ = freeing.join();
    finished?;
    some_refused(refused.len())
}

/// The run's end when some series were refused for their values (the others written).
fn some_refused(n: usize) -> Result<(), Error> {
    match n {
        0 => Ok(()),
        n => Err(Error::SomeSeriesRefused(n)),
    }
}

/// How a streamed run ended.
pub enum Streamed {
    /// Analysed and written.
    Done,
    /// The file holds too few series for a campaign, or is not an osmometry file read in
    /// blocks: here it is, read, for the usual path.
    Loaded(Box<Loaded>),
    /// A series came back after the file had moved past it: read the file again the usual way.
    Reread,
}

/// Streams the one osmometry file of `args` (see the module notes); `report_settings` gives
/// the settings for a number of series.
pub fn stream(
    args: &AnalyzeArgs,
    options: &ReadOptions,
    settings: &Settings,
    report_settings: impl Fn(usize) -> ReportSettings,
    table: Option<&super::analyze::SolventTable>,
) -> Result<Streamed, Error> {
    let path = &args.files[0];
    let name = path.display().to_string();
    let file = open_input(path, args.read.max_input_mb)?;
    let file_bytes = file.size();
    let mut source = hashing(file);
    let mut reader = match BlockReader::open(&name, 0, &mut source, options, BLOCK_BYTES)? {
        Opened::Blocks(reader) => reader,
        Opened::Whole(contents) => {
            let mut loading = super::Loading::default();
            loading.add(&name, &sha2::Digest::finalize(source.hasher), *contents);
            return Ok(Streamed::Loaded(Box::new(loading.finish())));
        }
    };
    let run_warnings = unused_columns(&name, &reader.ignored_columns());
    // The file's SHA-256 is known only at its end: the report opens with zeros in its place.
    let placeholder = InputFile { path: name.clone(), sha256: "0".repeat(64) };
    let bar = Bar::new(0, args.quiet);
    let mut ready: Vec<(Series, Option<String>)> = Vec::new();
    let mut campaign: Option<(Campaign, Option<u64>)> = None;
    let mut read_bytes = 0u64;
    let units_per_series = 1 + settings.theta.bootstrap_replicates as u64;
    loop {
        // The next block is read while the series finished so far are analysed and written.
        let batch = if campaign.is_some() { std::mem::take(&mut ready) } else { Vec::new() };
        let (more, written) =
            rayon::join(|| reader.next_block(), || campaign.as_mut().map_or(Ok(()), |(c, _)| c.analyse(&batch, &bar)));
        let more = more?;
        written?;
        drop(batch);
        if reader.readings.reopened().is_some() {
            return Ok(Streamed::Reread);
        }
        read_bytes += BLOCK_BYTES as u64;
        // The series the file has moved past; at its end, every series left.
        let finished =
            if more { reader.readings.take_finished() } else { std::mem::take(&mut reader.readings).into_series() };
        ready.extend(finished.into_iter().map(|mut s| {
            s.volumes = reader.volumes_of(&s.name);
            let solvent = reader.solvent_of(&s.name).map(str::to_string);
            if let Some(table) = table {
                // Per-series notes of a streamed campaign are not kept (its opening is written).
                let v = args.polymer_specific_volume.map(|v| v * 1e-3);
                let flag = args.solvent_molar_volume.map(|v| v * 1e-6);
                let _ = thetaseek::solvent::attach_molar_volume(&mut s, solvent.as_deref(), &table.rows, v, flag);
            }
            (s, solvent)
        }));
        if campaign.is_none() && ready.len() > report::CAMPAIGN_SERIES {
            // The opening is written now: one molar volume over several solvents is judged on
            // the series read so far (those the table or their own columns leave to the flag).
            let covered: Vec<&str> = ready
                .iter()
                .filter(|(s, _)| s.volumes.is_none())
                .filter_map(|(_, solvent)| solvent.as_deref())
                .collect();
            let flag = args.solvent_molar_volume.map(|v| v * 1e-6);
            let mut warnings = run_warnings.clone();
            warnings.extend(thetaseek::solvent::one_volume_for_several_solvents(flag, &covered));
            campaign =
                Some(open_streamed(args, settings, &report_settings(ready.len()), &placeholder, table, &warnings)?);
        }
        if !more {
            break;
        }
        if let Some((c, _)) = &campaign {
            // The bar's length is estimated from the series per byte read so far.
            let seen = c.analysed + ready.len() as u64;
            bar.set_total(seen * units_per_series * file_bytes.max(read_bytes) / read_bytes.max(1));
        }
    }
    let contents = reader.finish()?;
    let input = InputFile::from_digest(&name, &sha2::Digest::finalize(source.hasher));
    let Some((mut campaign, digest_at)) = campaign else {
        // Too few series for a campaign: the usual path, with what was read.
        let series = ready.into_iter().map(|(s, _)| s).collect();
        let dataset = Dataset { series, tabulated: Vec::new(), solvents: contents.solvents };
        return Ok(Streamed::Loaded(Box::new(Loaded {
            inputs: vec![input],
            dataset,
            warnings: run_warnings,
            critical: Vec::new(),
            volumes: contents.volumes,
            scattering: Vec::new(),
            refused: contents.refused,
        })));
    };
    bar.set_total((campaign.analysed + ready.len() as u64) * units_per_series);
    campaign.analyse(&ready, &bar)?;
    drop(ready);
    bar.finish();
    let digest = digest_at.map(|at| (at, input.sha256.clone()));
    let report =
        Report::new(vec![input], report_settings(campaign.analysed as usize), run_warnings, &[], &Dataset::default());
    campaign.add(contents.refused.iter().map(SeriesReport::refused_input).collect(), |_| None)?;
    campaign.finish(report, digest, args.quiet)?;
    some_refused(contents.refused.len()).map(|_| Streamed::Done)
}

/// Opens a streamed campaign's outputs; also gives where the file's SHA-256 placeholder sits
/// in the report.
fn open_streamed<'a>(
    args: &AnalyzeArgs,
    settings: &'a Settings,
    report_settings: &ReportSettings,
    placeholder: &InputFile,
    table: Option<&super::analyze::SolventTable>,
    run_warnings: &[String],
) -> Result<(Campaign<'a>, Option<u64>), Error> {
    check_outputs(args)?;
    let mut inputs = vec![placeholder.clone()];
    inputs.extend(table.map(|t| t.input.clone()));
    let campaign = Campaign::open(args, settings, &inputs, report_settings, run_warnings, HashSet::new())?;
    let digest_at = campaign.json.as_ref().map(|(sink, _)| {
        let key = format!("\"sha256\":\"{}\"", placeholder.sha256);
        let at = sink.held.windows(key.len()).position(|w| w == key.as_bytes()).expect("the opening names the input");
        (at + key.len() - 1 - placeholder.sha256.len()) as u64
    });
    Ok((campaign, digest_at))
}
