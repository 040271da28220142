//! The per-temperature results as a CSV table (written by polars), one row per fitted
//! temperature, the unit in every header.

use super::Report;
use polars::prelude::*;

/// Renders the table: series, temperature, form, Mn, A2, A3 with SEs, dof, reduced χ², warnings.
pub fn table_csv(report: &Report) -> PolarsResult<Vec<u8>> {
    table_rows_csv(&report.series, true)
}

/// The table's rows for some series, with or without the header line: a campaign writes its
/// table one chunk of series at a time.
pub fn table_rows_csv(series_reports: &[super::SeriesReport], header: bool) -> PolarsResult<Vec<u8>> {
    let rows = series_reports.iter().flat_map(|s| s.fits.iter().map(move |f| (s, f)));
    let mut series = Vec::new();
    let mut status = Vec::new();
    let mut t_k = Vec::new();
    let mut t_c = Vec::new();
    let mut n = Vec::new();
    let mut form = Vec::new();
    let mut mn = Vec::new();
    let mut mn_se = Vec::new();
    let mut a2 = Vec::new();
    let mut a2_se = Vec::new();
    let mut a3 = Vec::new();
    let mut a3_se = Vec::new();
    let mut dof = Vec::new();
    let mut chi2 = Vec::new();
    let mut warnings = Vec::new();
    for (s, f) in rows {
        series.push(s.name.as_str());
        status.push(s.status.name());
        t_k.push(f.temperature_k);
        t_c.push(f.temperature_c);
        n.push(f.n_points as u32);
        form.push(f.virial_form.name());
        mn.push(f.mn_g_per_mol);
        mn_se.push(f.mn_se_g_per_mol);
        a2.push(f.a2_mol_ml_per_g2);
        a2_se.push(f.a2_se_mol_ml_per_g2);
        a3.push(f.a3_mol_ml2_per_g3);
        a3_se.push(f.a3_se_mol_ml2_per_g3);
        dof.push(f.dof as u32);
        chi2.push(f.reduced_chi2);
        warnings.push(match f.warnings.as_slice() {
            [] => String::new(),
            [one] => one.code.clone(),
            many => many.iter().map(|w| w.code.as_str()).collect::<Vec<_>>().join(";"),
        });
    }
    let height = series.len();
    let columns = vec![
        Column::new("series".into(), series),
        Column::new("series status".into(), status),
        Column::new("temperature (K)".into(), t_k),
        Column::new("temperature (C)".into(), t_c),
        Column::new("points".into(), n),
        Column::new("virial form".into(), form),
        Column::new("Mn (g/mol)".into(), mn),
        Column::new("Mn se (g/mol)".into(), mn_se),
        Column::new("A2 (mol mL/g2)".into(), a2),
        Column::new("A2 se (mol mL/g2)".into(), a2_se),
        Column::new("A3 (mol mL2/g3)".into(), a3),
        Column::new("A3 se (mol mL2/g3)".into(), a3_se),
        Column::new("dof".into(), dof),
        Column::new("reduced chi2".into(), chi2),
        Column::new("warnings".into(), warnings),
    ];
    let mut frame = DataFrame::new(height, columns)?;
    let mut bytes = Vec::new();
    CsvWriter::new(&mut bytes).include_header(header).n_threads(1).finish(&mut frame)?;
    Ok(bytes)
}

/// Which series the per-series table lists.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SeriesFilter {
    /// Every series.
    All,
    /// Only series that need a look: refused, partial, without a bracketed θ, or with warnings.
    NeedsAttention,
}

/// One row per series: θ (K and °C), interval, crossing, weighted-mean Mn, warnings count.
pub fn series_table_csv(report: &Report, filter: SeriesFilter) -> PolarsResult<Vec<u8>> {
    series_table_rows_csv(&report.series, filter, true)
}

/// The per-series table's rows for some series, with or without the header line (a campaign
/// writes it a chunk of series at a time).
pub fn series_table_rows_csv(
    series_reports: &[super::SeriesReport],
    filter: SeriesFilter,
    header: bool,
) -> PolarsResult<Vec<u8>> {
    let keep = |s: &&super::SeriesReport| match filter {
        SeriesFilter::All => true,
        SeriesFilter::NeedsAttention => super::needs_attention(s),
    };
    let rows: Vec<&super::SeriesReport> = series_reports.iter().filter(keep).collect();
    let theta = |f: &dyn Fn(&super::ThetaReport) -> Option<f64>| -> Vec<Option<f64>> {
        rows.iter().map(|s| s.theta.as_ref().and_then(f)).collect()
    };
    let text = |f: &dyn Fn(&super::SeriesReport) -> String| -> Vec<String> { rows.iter().map(|s| f(s)).collect() };
    let columns = vec![
        Column::new("series".into(), text(&|s| s.name.clone())),
        Column::new("status".into(), rows.iter().map(|s| s.status.name()).collect::<Vec<_>>()),
        Column::new("theta (K)".into(), theta(&|t| t.theta_k)),
        Column::new("theta (C)".into(), theta(&|t| t.theta_c)),
        Column::new("theta se (K)".into(), theta(&|t| t.se_k)),
        Column::new("ci low (K)".into(), theta(&|t| t.ci_low_k)),
        Column::new("ci high (K)".into(), theta(&|t| t.ci_high_k)),
        Column::new(
            "ci kind".into(),
            text(&|s| s.theta.as_ref().map_or("none".into(), |t| format!("{:?}", t.ci_kind).to_lowercase())),
        ),
        Column::new(
            "crossing".into(),
            text(&|s| s.theta.as_ref().map_or("none".into(), |t| format!("{:?}", t.crossing).to_lowercase())),
        ),
        Column::new("Mn (g/mol)".into(), theta(&|t| t.mn_consistency.as_ref().map(|m| m.mean_mn_g_per_mol))),
        Column::new(
            "warnings".into(),
            rows.iter().map(|s| (s.warnings.len() + s.fit_warnings) as u32).collect::<Vec<u32>>(),
        ),
        Column::new(
            "reason".into(),
            text(&|s| s.reason.clone().or_else(|| s.theta.as_ref().and_then(|t| t.reason.clone())).unwrap_or_default()),
        ),
    ];
    let mut frame = DataFrame::new(rows.len(), columns)?;
    let mut bytes = Vec::new();
    CsvWriter::new(&mut bytes).include_header(header).n_threads(1).finish(&mut frame)?;
    Ok(bytes)
}
