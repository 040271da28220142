//! The results as CSV tables: one row per fitted temperature, or one row per series, the unit
//! in every header.
//!
//! Written a field at a time into one buffer (a campaign writes 10⁵ rows; see
//! docs/performance.md for why not a polars frame). The text follows RFC 4180 as polars' writer
//! does (a test compares the two): a field holding a comma, quote or line break is quoted with
//! its quotes doubled, an empty text is `""`, a missing value is empty; numbers in their
//! shortest round-trip form.

use super::Report;

/// The first characters that make a spreadsheet read a cell as a formula (OWASP, "CSV
/// Injection": `=`, `+`, `-`, `@`, tab and carriage return).
const FORMULA_STARTS: [char; 6] = ['=', '+', '-', '@', '\t', '\r'];

/// One CSV line being written into `out`.
struct Line<'a> {
    out: &'a mut Vec<u8>,
    first: bool,
}

impl<'a> Line<'a> {
    fn new(out: &'a mut Vec<u8>) -> Self {
        Line { out, first: true }
    }

    fn separate(&mut self) {
        if !std::mem::take(&mut self.first) {
            self.out.push(b',');
        }
    }

    fn text(&mut self, s: &str) {
        self.separate();
        // A cell that a spreadsheet would run as a formula (a series named `=HYPERLINK(…)`) is
        // set as text: a leading apostrophe, the cell quoted (OWASP, "CSV Injection").
        let guarded;
        let formula = s.starts_with(FORMULA_STARTS);
        let s = if formula {
            guarded = format!("'{s}");
            guarded.as_str()
        } else {
            s
        };
        if s.is_empty() {
            self.out.extend_from_slice(b"\"\"");
        } else if formula || s.bytes().any(|b| matches!(b, b',' | b'"' | b'\n' | b'\r')) {
            self.out.push(b'"');
            for piece in s.split_inclusive('"') {
                self.out.extend_from_slice(piece.as_bytes());
                if piece.ends_with('"') {
                    self.out.push(b'"');
                }
            }
            self.out.push(b'"');
        } else {
            self.out.extend_from_slice(s.as_bytes());
        }
    }

    fn number(&mut self, v: Option<f64>) {
        self.separate();
        if let Some(v) = v {
            self.out.extend_from_slice(zmij::Buffer::new().format(v).as_bytes());
        }
    }

    fn count(&mut self, v: usize) {
        self.separate();
        self.out.extend_from_slice(itoa::Buffer::new().format(v).as_bytes());
    }

    fn end(self) {
        self.out.push(b'\n');
    }
}

/// The header line of `names`.
fn header(out: &mut Vec<u8>, names: &[&str]) {
    let mut line = Line::new(out);
    names.iter().for_each(|n| line.text(n));
    line.end();
}

const TABLE_HEADER: [&str; 27] = [
    "series",
    "series status",
    "temperature (K)",
    "temperature (C)",
    "points",
    "virial form",
    "Mn (g/mol)",
    "Mn se (g/mol)",
    "A2 (mol mL/g2)",
    "A2 se (mol mL/g2)",
    "A3 (mol mL2/g3)",
    "A3 se (mol mL2/g3)",
    "dof",
    "reduced chi2",
    "warnings",
    "excluded readings",
    "fraction",
    "molar mass (g/mol)",
    "intrinsic viscosity (mL/g)",
    "intrinsic viscosity se (mL/g)",
    "huggins constant",
    "kraemer constant",
    "mark-houwink exponent",
    "mark-houwink exponent se",
    "mark-houwink K (mL/g)",
    "k theta (mL mol^0.5/g^1.5)",
    "viscosity expansion factor",
];

/// Columns of the table only viscometry rows fill.
const VISCOMETRY_COLUMNS: usize = 11;

/// Renders the table: series, temperature, form, Mn, A2, A3 with SEs, dof, reduced χ², warnings;
/// a viscometry series gives one row per fraction and temperature ([η], kH, kK, and the
/// temperature's Mark–Houwink a and K and Stockmayer–Fixman Kθ).
pub fn table_csv(report: &Report) -> Vec<u8> {
    let mut out = Vec::new();
    table_rows_csv(&mut out, &report.series, true);
    out
}

/// Appends the table's rows for some series to `out`, with or without the header line: a
/// campaign writes its table one chunk of series at a time.
pub fn table_rows_csv(out: &mut Vec<u8>, series_reports: &[super::SeriesReport], with_header: bool) {
    if with_header {
        header(out, &TABLE_HEADER);
    }
    for s in series_reports {
        for f in &s.fits {
            let mut line = Line::new(out);
            line.text(&s.name);
            line.text(s.status.name());
            line.number(Some(f.temperature_k));
            line.number(Some(f.temperature_c));
            line.count(f.n_points);
            line.text(f.virial_form.name());
            line.number(Some(f.mn_g_per_mol));
            line.number(Some(f.mn_se_g_per_mol));
            line.number(Some(f.a2_mol_ml_per_g2));
            line.number(Some(f.a2_se_mol_ml_per_g2));
            line.number(f.a3_mol_ml2_per_g3);
            line.number(f.a3_se_mol_ml2_per_g3);
            line.count(f.dof);
            line.number(f.reduced_chi2);
            match f.warnings.as_slice() {
                [] => line.text(""),
                [one] => line.text(one.code.name()),
                many => line.text(&many.iter().map(|w| w.code.name()).collect::<Vec<_>>().join(";")),
            }
            // Excluded readings of this temperature (grouped as readings are, to 0.05 K).
            line.count(
                s.excluded_readings
                    .iter()
                    .filter(|e| e.temperature_k.is_some_and(|t| (t - f.temperature_k).abs() < 0.05))
                    .count(),
            );
            (0..VISCOMETRY_COLUMNS).for_each(|_| line.number(None));
            line.end();
        }
        if let Some(v) = &s.viscometry {
            viscometry_rows(out, s, v);
        }
    }
}

/// One row per fraction and temperature of a viscometry series.
fn viscometry_rows(out: &mut Vec<u8>, s: &super::SeriesReport, v: &crate::viscometry::ViscometryResult) {
    for d in &v.dilutions {
        let at = v.temperatures.iter().find(|t| (t.temperature_k - d.temperature_k).abs() < 1e-9);
        let mut line = Line::new(out);
        line.text(&s.name);
        line.text(s.status.name());
        line.number(Some(d.temperature_k));
        line.number(Some(d.temperature_c));
        line.count(d.n_readings);
        // Virial form, Mn, A2, A3 (with SEs): osmometry's columns.
        (0..7).for_each(|_| line.number(None));
        match d.se_dof {
            Some(dof) => line.count(dof),
            None => line.number(None),
        }
        line.number(None);
        line.text(&d.warnings.iter().map(|w| w.code.as_str()).collect::<Vec<_>>().join(";"));
        line.count(0);
        line.text(&d.fraction);
        line.number(v.fractions.iter().find(|f| f.name == d.fraction).and_then(|f| f.molar_mass_g_per_mol));
        line.number(Some(d.intrinsic_viscosity_ml_per_g));
        line.number(d.intrinsic_viscosity_se_ml_per_g);
        line.number(d.huggins_constant);
        line.number(d.kraemer_constant);
        line.number(at.and_then(|t| t.mark_houwink_exponent));
        line.number(at.and_then(|t| t.mark_houwink_exponent_se));
        line.number(at.and_then(|t| t.mark_houwink_k_ml_per_g));
        line.number(at.and_then(|t| t.k_theta_ml_mol_half_per_g_three_halves));
        line.number(d.viscosity_expansion_factor);
        line.end();
    }
}

/// Which series the per-series table lists.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SeriesFilter {
    /// Every series.
    All,
    /// Only series that need a look: refused, partial, without a bracketed θ, or with warnings.
    NeedsAttention,
}

const SERIES_TABLE_HEADER: [&str; 15] = [
    "series",
    "status",
    "theta (K)",
    "theta (C)",
    "theta se (K)",
    "ci low (K)",
    "ci high (K)",
    "ci kind",
    "crossing",
    "Mn (g/mol)",
    "warnings",
    "reason",
    "excluded readings",
    "route",
    "unperturbed r2/M (nm2 mol/g)",
];

/// One row per series: θ (K and °C), interval, crossing, weighted-mean Mn, warnings count.
pub fn series_table_csv(report: &Report, filter: SeriesFilter) -> Vec<u8> {
    let mut out = Vec::new();
    series_table_rows_csv(&mut out, &report.series, filter, true);
    out
}

/// Appends the per-series table's rows for some series to `out`, with or without the header
/// line (a campaign writes it a chunk of series at a time).
pub fn series_table_rows_csv(
    out: &mut Vec<u8>,
    series_reports: &[super::SeriesReport],
    filter: SeriesFilter,
    with_header: bool,
) {
    if with_header {
        header(out, &SERIES_TABLE_HEADER);
    }
    let keep = |s: &&super::SeriesReport| match filter {
        SeriesFilter::All => true,
        SeriesFilter::NeedsAttention => super::needs_attention(s),
    };
    for s in series_reports.iter().filter(keep) {
        let theta = s.theta.as_ref();
        let viscometric = s.viscometry.as_ref().and_then(|v| v.viscometric_theta.as_ref());
        let mut line = Line::new(out);
        line.text(&s.name);
        line.text(s.status.name());
        match viscometric {
            Some(v) => {
                for value in [Some(v.theta_k), Some(v.theta_c), v.se_k, v.interval.low_k, v.interval.high_k] {
                    line.number(value);
                }
                line.text(v.interval.kind.name());
                line.text(v.crossing.name());
            }
            None => {
                let values: [fn(&super::ThetaReport) -> Option<f64>; 5] =
                    [|t| t.theta_k, |t| t.theta_c, |t| t.se_k, |t| t.ci_low_k, |t| t.ci_high_k];
                for value in values {
                    line.number(theta.and_then(value));
                }
                line.text(&theta.map_or("none".into(), |t| t.ci_kind.name().to_string()));
                line.text(&theta.map_or("none".into(), |t| t.crossing.name().to_string()));
            }
        }
        line.number(theta.and_then(|t| t.mn_consistency.as_ref().map(|m| m.mean_mn_g_per_mol)));
        line.count(s.warnings.len() + s.fit_warnings);
        line.text(s.reason.as_deref().or_else(|| theta.and_then(|t| t.reason.as_deref())).unwrap_or_default());
        line.count(s.excluded_readings.len());
        line.text(s.route.name());
        line.number(s.unperturbed_dimensions.as_ref().map(|d| d.unperturbed_r2_over_m_nm2_mol_per_g));
        line.end();
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use polars::prelude::*;

    /// Our fields against polars' own CSV writer (the reference for the format, and what
    /// wrote these tables before): quoting, doubled quotes, empty and missing values, and
    /// numbers from tiny to huge, non-finite included.
    #[test]
    fn fields_are_written_as_polars_writes_them() {
        let texts =
            ["plain", "", "a,b", "say \"hi\"", "two\nlines", "cr\rhere", "\"", "θ-grade ≥ 2", "x\"\"y", "a=b-c"];
        let numbers = [
            Some(0.0),
            Some(-0.0),
            Some(1.0),
            Some(6.0e5),
            Some(2.2600000000000477),
            Some(5.85213347056835e-6),
            Some(-1.797991973260684e-13),
            Some(1e300),
            Some(f64::NAN),
            Some(f64::INFINITY),
            Some(f64::NEG_INFINITY),
            None,
            Some(123456789012345680.0),
        ];
        let n = texts.len().max(numbers.len());
        let text = |i: usize| texts[i % texts.len()];
        let number = |i: usize| numbers[i % numbers.len()];
        let mut frame = DataFrame::new(
            n,
            vec![
                Column::new("a name".into(), (0..n).map(text).collect::<Vec<_>>()),
                Column::new("value (K)".into(), (0..n).map(number).collect::<Vec<_>>()),
                Column::new("count".into(), (0..n).map(|i| (i * 1000) as u32).collect::<Vec<_>>()),
            ],
        )
        .unwrap();
        let mut expected = Vec::new();
        CsvWriter::new(&mut expected).include_header(true).finish(&mut frame).unwrap();
        let mut ours = Vec::new();
        header(&mut ours, &["a name", "value (K)", "count"]);
        for i in 0..n {
            let mut line = Line::new(&mut ours);
            line.text(text(i));
            line.number(number(i));
            line.count(i * 1000);
            line.end();
        }
        assert_eq!(String::from_utf8(ours).unwrap(), String::from_utf8(expected).unwrap());
    }

    /// Issue #28, item 6: a series name beginning with `=`, `+`, `-` or `@` was written raw as
    /// the first cell of a row, where a spreadsheet runs it. The rule is OWASP's ("CSV
    /// Injection"): prefix an apostrophe and quote the cell; other texts are unchanged.
    #[test]
    fn a_cell_a_spreadsheet_would_run_as_a_formula_is_set_as_text() {
        let mut out = Vec::new();
        let mut line = Line::new(&mut out);
        for text in ["=HYPERLINK(\"http://x\")", "+1", "-2+3", "@SUM(A1)", "\tx", "PX-40", "a=b"] {
            line.text(text);
        }
        line.end();
        assert_eq!(
            String::from_utf8(out).unwrap(),
            "\"'=HYPERLINK(\"\"http://x\"\")\",\"'+1\",\"'-2+3\",\"'@SUM(A1)\",\"'\tx\",PX-40,a=b\n"
        );
    }
}
