//! The per-series pipeline: per-temperature virial fits for every series, in parallel.
//! Pure computation: no files, no printing.

use crate::dataset::Series;
use crate::virial::{fit_temperature, FormChoice, SkippedTemperature, TemperatureFit};
use rayon::prelude::*;
use serde::Serialize;

/// Settings of the analysis itself (units and files are settled before this point).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Settings {
    /// Virial form choice at each temperature.
    pub virial: FormChoice,
}

impl Default for Settings {
    fn default() -> Self {
        Settings { virial: FormChoice::Auto }
    }
}

/// Outcome of one series.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Status {
    /// Every temperature was fitted.
    Ok,
    /// Some temperatures were skipped; the others were fitted.
    Partial,
    /// Nothing could be fitted.
    Refused,
}

/// Everything computed for one series.
#[derive(Debug, Clone, PartialEq)]
pub struct SeriesResult {
    /// Series name.
    pub name: String,
    /// Outcome.
    pub status: Status,
    /// Fitted temperatures, ascending.
    pub fits: Vec<TemperatureFit>,
    /// Temperatures that could not be fitted, and why.
    pub skipped: Vec<SkippedTemperature>,
}

/// Fits every temperature of one series.
pub fn analyze_series(series: &Series, settings: &Settings) -> SeriesResult {
    let mut fits = Vec::new();
    let mut skipped = Vec::new();
    for set in &series.temperatures {
        match fit_temperature(set, settings.virial) {
            Ok(fit) => fits.push(fit),
            Err(skip) => skipped.push(skip),
        }
    }
    let status = match (fits.is_empty(), skipped.is_empty()) {
        (true, _) => Status::Refused,
        (false, true) => Status::Ok,
        (false, false) => Status::Partial,
    };
    SeriesResult { name: series.name.clone(), status, fits, skipped }
}

/// Analyses every series in parallel; results keep the input order.
pub fn analyze(series: &[Series], settings: &Settings) -> Vec<SeriesResult> {
    series.par_iter().map(|s| analyze_series(s, settings)).collect()
}
