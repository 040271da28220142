//! `analyze`'s outputs, fed one chunk of series at a time whatever the size of the run: the
//! JSON report and the CSV tables are written as series are analysed (into temporary files,
//! renamed together at the end); the terminal text, the route comparison and the summary keep
//! what they need as the series go by; figures and HTML keep the series' reports, since they
//! draw every series at the end. Memory then grows with what the requested outputs hold.

use super::Bar;
use crate::cli::AnalyzeArgs;
use rayon::prelude::*;
use std::io::{Seek, Write};
use std::path::PathBuf;
use thetaseek::analysis::{self, SeriesResult, Settings};
use thetaseek::dataset::Series;
use thetaseek::error::Error;
use thetaseek::output::{target_of, write_in_place, write_stream, AtomicFile, Destination, Target};
use thetaseek::report::{
    self, Detail, InputFile, Report, ReportSettings, ReportStream, SeriesFilter, SeriesReport, Tally,
};
use thetaseek::theta::RouteTheta;
use thetaseek::viscometry::RouteFinding;

/// Series analysed and written together (one chunk is written while the next is analysed):
/// enough to keep both cores busy, few enough that the two chunks in flight stay a few
/// megabytes (see docs/performance.md).
const CHUNK_SERIES: usize = 256;

/// Bytes written between syncs started behind the writer, so that a large report waits for
/// the disk a few megabytes at the end rather than all of it.
const SYNC_BEHIND_BYTES: usize = 4 << 20;

/// An output written as the run goes: a temporary file renamed at the end, or standard output,
/// a device or a pipe (held until the end, so that a run that fails writes no partial output).
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

/// One series analysed but not yet written: its report, its JSON, its θ for the routes'
/// comparison, and (where figures or HTML want it) its full report.
struct Analysed {
    report: SeriesReport,
    json: Vec<u8>,
    route: Option<RouteTheta>,
    full: Option<SeriesReport>,
    /// The series' Mn (or Mw), for viscometry fractions named like it.
    known: Option<RouteFinding>,
}

/// Every output of one `analyze` run, open and being written.
pub struct RunOutputs<'a> {
    settings: &'a Settings,
    report_settings: ReportSettings,
    filter: SeriesFilter,
    json: Option<(Sink, Option<ReportStream>)>,
    /// Where the first input's SHA-256 placeholder sits in the JSON (a file hashed as it is
    /// streamed is known only at its end).
    digest_at: Option<u64>,
    table: Option<Sink>,
    series_table: Option<Sink>,
    /// No table row written yet: the next one brings the header line.
    header: bool,
    tally: Tally,
    /// The full terminal listing so far (`None`: quiet, or the digest is wanted).
    terminal: Option<String>,
    /// Full series reports for figures and HTML (`None`: neither asked for).
    kept: Option<Vec<SeriesReport>>,
    /// Each series' θ, for the routes' comparison.
    route_thetas: Vec<(String, Option<RouteTheta>)>,
    /// The molar masses the series measured, for the viscometry route.
    known: Vec<RouteFinding>,
    /// Series analysed so far (each one's bootstrap seed follows its index).
    analysed: u64,
    /// The last chunk analysed, written while the next one is analysed.
    pending: Option<Vec<Analysed>>,
    stdout_taken: bool,
}

impl<'a> RunOutputs<'a> {
    /// Opens every streamed output (temporary files created, nothing renamed yet).
    pub fn open(args: &AnalyzeArgs, settings: &'a Settings, report_settings: ReportSettings) -> Result<Self, Error> {
        let open = |path: &Option<String>| path.as_deref().map(|p| Sink::open(Destination::parse(p))).transpose();
        let stdout_taken = [&args.report, &args.table, &args.series_table]
            .into_iter()
            .flatten()
            .any(|p| Destination::parse(p) == Destination::Stdout);
        let full = report_settings.report_detail == Detail::Full;
        Ok(RunOutputs {
            settings,
            filter: if args.needs_attention { SeriesFilter::NeedsAttention } else { SeriesFilter::All },
            json: open(&args.report)?.map(|sink| (sink, None)),
            digest_at: None,
            table: open(&args.table)?,
            series_table: open(&args.series_table)?,
            header: true,
            tally: Tally::default(),
            terminal: (full && !args.quiet).then(String::new),
            kept: (args.figures.is_some() || args.html.is_some()).then(Vec::new),
            route_thetas: Vec::new(),
            known: Vec::new(),
            analysed: 0,
            pending: None,
            stdout_taken,
            report_settings,
        })
    }

    /// Writes the report's opening; `hashed_later` marks the first input as a file whose
    /// SHA-256 is patched in by [`Self::finish`].
    pub fn begin(&mut self, inputs: &[InputFile], hashed_later: bool) -> Result<(), Error> {
        if let Some((sink, stream)) = &mut self.json {
            let opened = ReportStream::begin(&mut sink.held, inputs, &self.report_settings)
                .map_err(|source| io_error(&sink.path, source))?;
            *stream = Some(opened);
            if hashed_later {
                // The placeholder's hex digits, found after the key (pretty or compact).
                let placeholder = &inputs[0].sha256;
                let key = find(&sink.held, b"\"sha256\":").expect("the opening names the input");
                let at =
                    key + find(&sink.held[key..], placeholder.as_bytes()).expect("the placeholder follows its key");
                self.digest_at = Some(at as u64);
            }
        }
        Ok(())
    }

    /// The molar masses measured by the series written so far (osmometry Mn).
    pub fn route_findings(&self) -> &[RouteFinding] {
        &self.known
    }

    /// Series analysed so far.
    pub fn analysed(&self) -> u64 {
        self.analysed
    }

    /// Analyses osmometry series (each with its solvent) a chunk at a time, each chunk written
    /// while the next one is analysed.
    pub fn analyse(&mut self, series: &[(Series, Option<String>)], bar: &Bar) -> Result<(), Error> {
        for chunk in series.chunks(CHUNK_SERIES) {
            let first = self.analysed;
            let (settings, detail) = (self.settings, self.report_settings.report_detail);
            let (want_json, keep) = (self.json.is_some(), self.kept.is_some());
            let analyse = || -> Vec<Analysed> {
                chunk
                    .par_iter()
                    .enumerate()
                    .map(|(i, (s, solvent))| {
                        let result = analysis::analyze_series_with_progress(s, settings, first + i as u64, bar);
                        prepared(&result, Some(s), solvent.clone(), detail, want_json, keep)
                    })
                    .collect()
            };
            let previous = self.pending.take();
            let (written, reports) = rayon::join(|| previous.map_or(Ok(()), |p| self.emit(p)), analyse);
            written?;
            // Known before the chunk is written: the other routes run before the last write.
            self.known.extend(reports.iter().filter_map(|a| a.known.clone()));
            self.pending = Some(reports);
            self.analysed += chunk.len() as u64;
        }
        Ok(())
    }

    /// Writes results computed elsewhere (the other routes), their solvent from `solvent_of`.
    pub fn add(&mut self, results: &[SeriesResult], solvent_of: impl Fn(&str) -> Option<String>) -> Result<(), Error> {
        let (want_json, keep) = (self.json.is_some(), self.kept.is_some());
        let detail = self.report_settings.report_detail;
        let reports = results.iter().map(|r| prepared(r, None, solvent_of(&r.name), detail, want_json, keep)).collect();
        self.add_analysed(reports)
    }

    /// Writes the series refused at reading (their reason names file, line, column, value).
    pub fn add_refused(&mut self, refused: &[thetaseek::input::RefusedSeries]) -> Result<(), Error> {
        let detail = self.report_settings.report_detail;
        let (want_json, keep) = (self.json.is_some(), self.kept.is_some());
        let reports = refused
            .iter()
            .map(|r| {
                let report = SeriesReport::refused_input(r);
                let json = if want_json { report::series_json(&report, detail) } else { Vec::new() };
                let full = keep.then(|| report.clone());
                Analysed { report, json, route: None, full, known: None }
            })
            .collect();
        self.add_analysed(reports)
    }

    fn add_analysed(&mut self, reports: Vec<Analysed>) -> Result<(), Error> {
        if let Some(p) = self.pending.take() {
            self.emit(p)?;
        }
        self.emit(reports)
    }

    /// Writes one chunk's reports and keeps what the end of the run needs of them.
    fn emit(&mut self, chunk: Vec<Analysed>) -> Result<(), Error> {
        if let Some((sink, stream)) = &mut self.json {
            let stream = stream.as_mut().expect("the report was begun before any series");
            for a in &chunk {
                stream.push(&mut sink.held, &a.json).map_err(|source| io_error(&sink.path, source))?;
            }
            sink.flush()?;
        }
        let mut reports = Vec::with_capacity(chunk.len());
        for a in chunk {
            if let Some(kept) = &mut self.kept {
                kept.extend(a.full);
            }
            self.route_thetas.push((a.report.name.clone(), a.route));
            reports.push(a.report);
        }
        if let Some(sink) = &mut self.table {
            report::table_rows_csv(&mut sink.held, &reports, self.header);
            sink.flush()?;
        }
        if let Some(sink) = &mut self.series_table {
            report::series_table_rows_csv(&mut sink.held, &reports, self.filter, self.header);
            sink.flush()?;
        }
        self.header = false;
        for r in &reports {
            self.tally.add(r);
            if let Some(text) = &mut self.terminal {
                text.push_str(&report::render_series(r));
            }
        }
        Ok(())
    }

    /// Compares the routes, closes the report and the tables, and returns the files to commit
    /// with the report the figures and HTML are drawn from (when asked for). `warnings` are
    /// the run's; `digest` is the first input's SHA-256 when it was hashed as it was streamed.
    pub fn finish(
        mut self,
        inputs: Vec<InputFile>,
        warnings: Vec<String>,
        digest: Option<String>,
        quiet: bool,
    ) -> Result<Finished, Error> {
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
        let entries: Vec<(&str, Option<RouteTheta>)> =
            self.route_thetas.iter().map(|(n, r)| (n.as_str(), r.clone())).collect();
        let routes = thetaseek::theta::compare_routes(&entries);
        let terminal = match self.terminal.take() {
            Some(mut text) => {
                text.push_str(&report::render_ending(&routes, &warnings));
                text.push_str(&self.tally.summary());
                text
            }
            None => self.tally.render(&routes, &warnings),
        };
        if self.tally.all_refused() {
            if !quiet {
                eprint!("{terminal}");
            }
            return Err(Error::NothingAnalysed(self.tally.refusals_in_brief()));
        }
        let json = match self.json.take() {
            Some((mut sink, stream)) => {
                let stream = stream.expect("the report was begun");
                stream.finish(&mut sink.held, &routes, &warnings).map_err(|source| io_error(&sink.path, source))?;
                if let (Some(at), Some(hex)) = (self.digest_at, &digest) {
                    sink.patch(at, hex.as_bytes())?;
                }
                Some(sink)
            }
            None => None,
        };
        let mut files = Vec::new();
        for sink in [json, self.table.take(), self.series_table.take()].into_iter().flatten() {
            files.extend(sink.close()?);
        }
        let report = self.kept.take().map(|series| {
            let mut inputs = inputs;
            if let (Some(first), Some(hex)) = (inputs.first_mut(), digest) {
                first.sha256 = hex;
            }
            let mut report = Report::new(inputs, self.report_settings.clone(), warnings, &[], &Default::default());
            report.series = series;
            report.routes = routes;
            report
        });
        Ok(Finished { files, report, terminal: (!quiet).then_some(terminal), stdout_taken: self.stdout_taken })
    }
}

/// One result made ready for the outputs: its report at the run's detail, its JSON (when a
/// report is written), its θ for the routes' comparison, its full report (for figures).
fn prepared(
    result: &SeriesResult,
    series: Option<&Series>,
    solvent: Option<String>,
    detail: Detail,
    want_json: bool,
    keep: bool,
) -> Analysed {
    let full = keep.then(|| {
        let mut r = SeriesReport::new(result, series, Detail::Full);
        r.solvent = solvent.clone();
        r
    });
    let mut report = match (&full, detail) {
        (Some(full), Detail::Full) => full.clone(),
        _ => SeriesReport::new(result, series, detail),
    };
    report.solvent = solvent;
    let json = if want_json { report::series_json(&report, detail) } else { Vec::new() };
    Analysed { report, json, route: result.route_theta(), full, known: result.finding() }
}

/// What a finished run still has to write: files to commit, and what to draw and print.
pub struct Finished {
    /// Temporary files of the streamed outputs, to be committed with the figures and HTML.
    pub files: Vec<AtomicFile>,
    /// The whole report, for figures and HTML.
    pub report: Option<Report>,
    /// The terminal text (`None` when quiet).
    pub terminal: Option<String>,
    /// Whether a report or table went to standard output (the terminal text then goes to
    /// standard error).
    pub stdout_taken: bool,
}

fn find(haystack: &[u8], needle: &[u8]) -> Option<usize> {
    haystack.windows(needle.len()).position(|w| w == needle)
}
