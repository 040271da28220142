//! The report as JSON, whole or one series at a time: pretty at [`Detail::Full`], one line at
//! [`Detail::Fits`], the same bytes either way.

use super::{Detail, InputFile, Report, ReportSettings, SeriesReport, SCHEMA_VERSION};
use crate::theta::RouteComparison;
use serde::Serialize;
use std::io::Write;

/// Any report as pretty-printed JSON with a trailing newline.
pub fn to_json<T: Serialize>(report: &T) -> Vec<u8> {
    let mut bytes = serde_json::to_vec_pretty(report).expect("the report holds only serialisable values");
    bytes.push(b'\n');
    bytes
}

/// The analysis report as JSON, pretty or on one line by its detail.
pub fn report_json(report: &Report) -> Vec<u8> {
    let mut bytes = Vec::new();
    write_report_json(report, &mut bytes).expect("writing to memory cannot fail");
    bytes
}

/// [`report_json`] written straight into `out`.
pub fn write_report_json(report: &Report, mut out: &mut dyn Write) -> std::io::Result<()> {
    match report.settings.report_detail {
        Detail::Full => serde_json::to_writer_pretty(&mut out, report)?,
        Detail::Fits => serde_json::to_writer(&mut out, report)?,
    }
    out.write_all(b"\n")
}

/// A report written one series at a time, with the same bytes as [`report_json`] of the whole
/// report: the opening fields, each series as it is ready, then the route comparisons and the
/// run's warnings. The writer is passed to each call, so that the caller may move the bytes on
/// (to a file, chunk by chunk) in between.
#[derive(Debug)]
pub struct ReportStream {
    pretty: bool,
    written: usize,
}

impl ReportStream {
    /// Writes everything before the first series.
    pub fn begin(out: &mut dyn Write, inputs: &[InputFile], settings: &ReportSettings) -> std::io::Result<Self> {
        let pretty = settings.report_detail == Detail::Full;
        // Keys in the order of the fields of [`Report`].
        if pretty {
            write!(out, "{{\n  \"schema_version\": {SCHEMA_VERSION},\n  \"tool_version\": ")?;
        } else {
            write!(out, "{{\"schema_version\":{SCHEMA_VERSION},\"tool_version\":")?;
        }
        serde_json::to_writer(&mut *out, env!("CARGO_PKG_VERSION"))?;
        key(out, pretty, "inputs")?;
        value(out, pretty, 1, inputs)?;
        key(out, pretty, "settings")?;
        value(out, pretty, 1, settings)?;
        key(out, pretty, "series")?;
        out.write_all(b"[")?;
        Ok(ReportStream { pretty, written: 0 })
    }

    /// Appends one series already serialised by [`series_json`] (with the same detail).
    pub fn push(&mut self, out: &mut dyn Write, series_json: &[u8]) -> std::io::Result<()> {
        match (self.pretty, self.written) {
            (true, 0) => out.write_all(b"\n    ")?,
            (true, _) => out.write_all(b",\n    ")?,
            (false, 0) => {}
            (false, _) => out.write_all(b",")?,
        }
        self.written += 1;
        out.write_all(series_json)
    }

    /// Writes the route comparisons and the run's warnings, and closes the report.
    pub fn finish(self, out: &mut dyn Write, routes: &[RouteComparison], warnings: &[String]) -> std::io::Result<()> {
        if self.pretty && self.written > 0 {
            out.write_all(b"\n  ")?;
        }
        out.write_all(b"]")?;
        key(out, self.pretty, "routes")?;
        value(out, self.pretty, 1, routes)?;
        key(out, self.pretty, "warnings")?;
        value(out, self.pretty, 1, warnings)?;
        out.write_all(if self.pretty { b"\n}\n" } else { b"}\n" })
    }
}

/// One series as JSON for [`ReportStream::push`]: pretty at [`Detail::Full`] (indented for its
/// place in the report), one line at [`Detail::Fits`].
pub fn series_json(series: &SeriesReport, detail: Detail) -> Vec<u8> {
    // A series takes a few kilobytes: one allocation instead of a doubling from 128 bytes.
    let mut bytes = Vec::with_capacity(8 << 10);
    value(&mut bytes, detail == Detail::Full, 2, series).expect("writing to memory cannot fail");
    bytes
}

/// `,"name":` (or its pretty form on a new line at depth 1).
fn key(out: &mut dyn Write, pretty: bool, name: &str) -> std::io::Result<()> {
    if pretty {
        write!(out, ",\n  \"{name}\": ")
    } else {
        write!(out, ",\"{name}\":")
    }
}

/// A value as serde_json writes it at `depth` inside a pretty document (two spaces a level;
/// a JSON string never holds a raw line end, so every line end is the printer's own), or on
/// one line.
fn value<T: Serialize + ?Sized>(out: &mut dyn Write, pretty: bool, depth: usize, v: &T) -> std::io::Result<()> {
    if !pretty {
        return serde_json::to_writer(&mut *out, v).map_err(std::io::Error::from);
    }
    let text = serde_json::to_vec_pretty(v).map_err(std::io::Error::from)?;
    let indent = " ".repeat(2 * depth);
    for (i, line) in text.split(|b| *b == b'\n').enumerate() {
        if i > 0 {
            out.write_all(b"\n")?;
            out.write_all(indent.as_bytes())?;
        }
        out.write_all(line)?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::virial::FormChoice;

    #[test]
    fn a_report_without_series_streams_to_the_bytes_of_the_whole() {
        for detail in [Detail::Full, Detail::Fits] {
            let settings = ReportSettings { report_detail: detail, ..ReportSettings::new(FormChoice::Auto) };
            let inputs = vec![InputFile::new("a.csv", b"x")];
            let warnings = vec!["a \"quoted\"\nwarning".to_string()];
            let report = Report::new(inputs, settings, warnings, &[], &Default::default());
            let mut streamed = Vec::new();
            let stream = ReportStream::begin(&mut streamed, &report.inputs, &report.settings).unwrap();
            stream.finish(&mut streamed, &report.routes, &report.warnings).unwrap();
            assert_eq!(String::from_utf8(streamed).unwrap(), String::from_utf8(report_json(&report)).unwrap());
        }
    }
}
