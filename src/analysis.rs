//! The per-series pipeline: per-temperature virial fits, then the across-temperature θ
//! analysis, for every series in parallel. Pure computation: no files, no printing.

use crate::dataset::{Series, TabulatedSeries};
use crate::theta::{theta_for_series, theta_from_points, Quantity, ThetaResult, ThetaSettings, Volumes};
use crate::virial::{fit_temperature, FormChoice, SkippedTemperature, TemperatureFit};
use rayon::prelude::*;
use serde::Serialize;

/// Settings of the analysis itself (units and files are settled before this point).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Settings {
    /// Virial form choice at each temperature.
    pub virial: FormChoice,
    /// θ analysis.
    pub theta: ThetaSettings,
    /// v̄ and V1 for every series that does not give its own.
    pub volumes: Option<Volumes>,
}

impl Default for Settings {
    fn default() -> Self {
        Settings { virial: FormChoice::Auto, theta: ThetaSettings::default(), volumes: None }
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
    /// Fitted temperatures, ascending (osmometry series).
    pub fits: Vec<TemperatureFit>,
    /// Temperatures that could not be fitted, and why.
    pub skipped: Vec<SkippedTemperature>,
    /// What the across-temperature models were fitted to.
    pub quantity: Quantity,
    /// The θ analysis (absent for refused series).
    pub theta: Option<ThetaResult>,
}

/// Fits every temperature of one osmometry series, then its θ.
pub fn analyze_series(series: &Series, settings: &Settings, index: u64) -> SeriesResult {
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
    let theta_settings = ThetaSettings { virial: settings.virial, ..settings.theta };
    let volumes = series.volumes.or(settings.volumes);
    let theta = (status != Status::Refused).then(|| theta_for_series(series, &fits, volumes, &theta_settings, index));
    SeriesResult { name: series.name.clone(), status, fits, skipped, quantity: Quantity::SecondVirial, theta }
}

/// θ of a series given as A2 (or χ) per temperature.
pub fn analyze_tabulated(series: &TabulatedSeries, settings: &Settings) -> SeriesResult {
    let volumes = series.volumes.or(settings.volumes);
    let theta = theta_from_points(&series.points, series.quantity, volumes, &settings.theta);
    SeriesResult {
        name: series.name.clone(),
        status: Status::Ok,
        fits: Vec::new(),
        skipped: Vec::new(),
        quantity: series.quantity,
        theta: Some(theta),
    }
}

/// Analyses every series in parallel; results keep the input order (osmometry series first,
/// then tabulated ones).
pub fn analyze(series: &[Series], tabulated: &[TabulatedSeries], settings: &Settings) -> Vec<SeriesResult> {
    let mut results: Vec<SeriesResult> =
        series.par_iter().enumerate().map(|(i, s)| analyze_series(s, settings, i as u64)).collect();
    results.extend(tabulated.par_iter().map(|s| analyze_tabulated(s, settings)).collect::<Vec<_>>());
    results
}
