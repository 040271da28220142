//! `thetaseek analyze` on a campaign (more than [`report::CAMPAIGN_SERIES`] series, no figures):
//! the series are analysed a chunk at a time, each chunk's JSON and table rows written straight
//! into the (temporary) output files, the summary and digest tallied as they go; only the
//! series that share a name with another route are kept, for the route comparison. Memory then
//! grows with the input, not with the report.

use super::analyze::{add_critical_series, add_scattering_series, names_in_order};
use super::{Bar, Loaded};
use crate::cli::AnalyzeArgs;
use rayon::prelude::*;
use std::io::Write;
use std::path::PathBuf;
use thetaseek::analysis::{self, Settings};
use thetaseek::error::Error;
use thetaseek::output::{write_stream, AtomicFile, Destination};
use thetaseek::report::{self, Report, ReportSettings, ReportStream, SeriesFilter, SeriesReport, Tally};

/// Series analysed and written together (one chunk is written while the next is analysed):
/// enough to keep both cores busy, few enough that the two chunks in flight stay a few
/// megabytes. 256 was the fastest and smallest of 256, 512 and 1024 on a 20 000-series campaign.
const CHUNK_SERIES: usize = 256;

/// Bytes written between syncs started behind the writer: a 100 MB report then waits for
/// the disk a few megabytes at the end, not for all of it (on a 20 000-series campaign the final sync took 0.10 s, now 0.03 s).
const SYNC_BEHIND_BYTES: usize = 4 << 20;

/// An output written as the run goes: a temporary file renamed at the end, or standard output
/// (held until the end, so that a run that fails prints no partial report).
struct Sink {
    path: PathBuf,
    file: Option<AtomicFile>,
    held: Vec<u8>,
    unsynced: usize,
}

impl Sink {
    fn open(destination: Destination) -> Result<Self, Error> {
        match destination {
            Destination::Stdout => Ok(Sink { path: PathBuf::from("-"), file: None, held: Vec::new(), unsynced: 0 }),
            Destination::File(path) => {
                let file = AtomicFile::create(&path).map_err(|source| io_error(&path, source))?;
                Ok(Sink { path, file: Some(file), held: Vec::new(), unsynced: 0 })
            }
        }
    }

    /// Moves what was written since the last call into the file, and every
    /// [`SYNC_BEHIND_BYTES`] starts it on its way to the disk.
    fn flush(&mut self) -> Result<(), Error> {
        if let Some(file) = &mut self.file {
            file.file().write_all(&self.held).map_err(|source| io_error(&self.path, source))?;
            self.unsynced += self.held.len();
            self.held.clear();
            if self.unsynced >= SYNC_BEHIND_BYTES {
                file.sync_behind().map_err(|source| io_error(&self.path, source))?;
                self.unsynced = 0;
            }
        }
        Ok(())
    }

    fn commit(mut self) -> Result<(), Error> {
        self.flush()?;
        let path = self.path.clone();
        match self.file.take() {
            Some(file) => file.commit().map_err(|source| io_error(&path, source)),
            None => write_stream(std::io::stdout().lock(), |w| w.write_all(&self.held))
                .map_err(|source| io_error(&path, source)),
        }
    }
}

fn csv(e: polars::prelude::PolarsError) -> Error {
    Error::Setting(format!("cannot render the table: {e}"))
}

fn io_error(path: &std::path::Path, source: std::io::Error) -> Error {
    Error::Io { action: "cannot write", path: path.to_path_buf(), source }
}

/// Runs `analyze` on a campaign.
pub fn run(
    args: &AnalyzeArgs,
    loaded: Loaded,
    settings: &Settings,
    report_settings: ReportSettings,
) -> Result<(), Error> {
    let Loaded { inputs, mut dataset, warnings: run_warnings, critical, volumes, scattering } = loaded;
    let series = std::mem::take(&mut dataset.series);
    // Every output is checked before the first series is analysed.
    let destinations: Vec<Destination> =
        [&args.report, &args.table, &args.series_table].into_iter().flatten().map(|p| Destination::parse(p)).collect();
    super::check_one_stdout(&destinations)?;
    super::check_destinations(&destinations, &args.files)?;
    let stdout_taken = destinations.contains(&Destination::Stdout);
    let open = |path: &Option<String>| path.as_deref().map(|p| Sink::open(Destination::parse(p))).transpose();
    let (mut json, mut table, mut series_table) = (open(&args.report)?, open(&args.table)?, open(&args.series_table)?);
    let mut stream = match &mut json {
        Some(sink) => Some(
            ReportStream::begin(&mut sink.held, &inputs, &report_settings, &run_warnings)
                .map_err(|source| io_error(&sink.path, source))?,
        ),
        None => None,
    };
    let filter = if args.needs_attention { SeriesFilter::NeedsAttention } else { SeriesFilter::All };
    let detail = report_settings.report_detail;
    let solvents: std::collections::HashMap<&str, &str> =
        dataset.solvents.iter().map(|(s, v)| (s.as_str(), v.as_str())).collect();
    // Only a series that shares its name with another route is compared, so only those are kept.
    let other_routes: std::collections::HashSet<&str> = dataset
        .tabulated
        .iter()
        .map(|s| s.name.as_str())
        .chain(names_in_order(critical.iter().map(|r| r.series.as_str())))
        .chain(names_in_order(scattering.iter().map(|r| r.series.as_str())))
        .collect();
    let bar = Bar::new(analysis::work_units(&series, &dataset.tabulated, settings), args.quiet);
    let mut kept: Vec<SeriesReport> = Vec::new();
    let mut tally = Tally::default();
    let mut header = true;
    let want_json = json.is_some();
    // Writes one chunk's reports, tallies them, keeps those another route shares a name with.
    let mut emit = |reports: Vec<(SeriesReport, Vec<u8>)>, kept: &mut Vec<SeriesReport>| -> Result<(), Error> {
        if let (Some(sink), Some(stream)) = (&mut json, &mut stream) {
            for (_, bytes) in &reports {
                stream.push(&mut sink.held, bytes).map_err(|source| io_error(&sink.path, source))?;
            }
            sink.flush()?;
        }
        let reports: Vec<SeriesReport> = reports.into_iter().map(|(r, _)| r).collect();
        if let Some(sink) = &mut table {
            sink.held.extend_from_slice(&report::table_rows_csv(&reports, header).map_err(csv)?);
            sink.flush()?;
        }
        if let Some(sink) = &mut series_table {
            sink.held.extend_from_slice(&report::series_table_rows_csv(&reports, filter, header).map_err(csv)?);
            sink.flush()?;
        }
        header = false;
        for r in reports {
            tally.add(&r);
            if r.route != "osmometry" || other_routes.contains(r.name.as_str()) {
                kept.push(r.into_record());
            }
        }
        Ok(())
    };
    let finish = |mut r: SeriesReport| {
        r.solvent = solvents.get(r.name.as_str()).map(|v| v.to_string());
        let bytes = if want_json { report::series_json(&r) } else { Vec::new() };
        (r, bytes)
    };
    // Each chunk is written while the next one is analysed.
    let mut pending: Option<Vec<(SeriesReport, Vec<u8>)>> = None;
    for (k, chunk) in series.chunks(CHUNK_SERIES).enumerate() {
        let analyse = || -> Vec<(SeriesReport, Vec<u8>)> {
            chunk
                .par_iter()
                .enumerate()
                .map(|(i, s)| {
                    let index = (k * CHUNK_SERIES + i) as u64;
                    let result = analysis::analyze_series_with_progress(s, settings, index, &bar);
                    finish(SeriesReport::new(&result, Some(s), detail))
                })
                .collect()
        };
        let write = || pending.take().map_or(Ok(()), |p| emit(p, &mut kept));
        let (written, reports) = rayon::join(write, analyse);
        written?;
        pending = Some(reports);
    }
    if let Some(p) = pending {
        emit(p, &mut kept)?;
    }
    // Freeing 10⁵ small vectors takes tens of milliseconds: done beside the rest of the run.
    let freeing = std::thread::spawn(move || drop(series));
    let tabulated: Vec<(SeriesReport, Vec<u8>)> = dataset
        .tabulated
        .par_iter()
        .map(|s| {
            let result = analysis::analyze_tabulated(s, settings);
            thetaseek::analysis::Progress::advance(&bar, 1);
            finish(SeriesReport::new(&result, None, detail))
        })
        .collect();
    emit(tabulated, &mut kept)?;
    bar.finish();
    // Critical-temperature and light-scattering series are few: added as the whole-run path does.
    let mut report = Report::new(inputs, report_settings, run_warnings, &[], &dataset);
    add_critical_series(&mut report, &critical, &volumes, settings);
    add_scattering_series(&mut report, &scattering, &volumes, settings);
    let others: Vec<(SeriesReport, Vec<u8>)> = std::mem::take(&mut report.series).into_iter().map(finish).collect();
    emit(others, &mut kept)?;
    if header {
        // No series at all reached a table: the files still get their header line.
        if let Some(sink) = &mut table {
            sink.held.extend_from_slice(&report::table_rows_csv(&[], true).map_err(csv)?);
        }
        if let Some(sink) = &mut series_table {
            sink.held.extend_from_slice(&report::series_table_rows_csv(&[], filter, true).map_err(csv)?);
        }
    }
    report.series = kept;
    report.compare_routes();
    if tally.all_refused() {
        if !args.quiet {
            eprint!("{}", tally.render(&report.routes, &report.warnings));
        }
        return Err(Error::NothingAnalysed(tally.refusals_in_brief()));
    }
    if let (Some(sink), Some(stream)) = (&mut json, stream) {
        stream.finish(&mut sink.held, &report.routes).map_err(|source| io_error(&sink.path, source))?;
    }
    for sink in [json, table, series_table].into_iter().flatten() {
        sink.commit()?;
    }
    if !args.quiet {
        let text = tally.render(&report.routes, &report.warnings);
        if stdout_taken {
            eprint!("{text}");
        } else {
            print!("{text}");
        }
    }
    let _ = freeing.join();
    Ok(())
}
