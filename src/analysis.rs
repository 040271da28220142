//! The per-series pipeline: per-temperature virial fits, then the across-temperature θ
//! analysis, for every series in parallel. Pure computation: no files, no printing.

use crate::dataset::{Quantity, Volumes};
use crate::dataset::{Series, TabulatedSeries};
use crate::progress::Progress;
use crate::theta::{theta_for_series, theta_from_points, SeBasis, ThetaResult, ThetaSettings};
use crate::virial::{
    choose_noise, choose_series_forms, fit_temperature, flag_outliers, pool_standard_errors, FormChoice, PressureNoise,
    SkippedTemperature, TemperatureFit,
};
use rayon::prelude::*;
use serde::Serialize;

/// Units of work [`analyze_with_progress`] will report for these series and settings.
pub fn work_units(series: &[Series], tabulated: &[TabulatedSeries], settings: &Settings) -> u64 {
    (series.len() as u64) * (1 + settings.theta.bootstrap_replicates as u64) + tabulated.len() as u64
}

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

impl Status {
    /// The name reports and tables use.
    pub fn name(self) -> &'static str {
        match self {
            Status::Ok => "ok",
            Status::Partial => "partial",
            Status::Refused => "refused",
        }
    }
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
    /// How the osmometry readings' noise was modelled (absent for tables).
    pub noise: Option<PressureNoise>,
}

/// Fits every temperature of one osmometry series, then its θ.
pub fn analyze_series(series: &Series, settings: &Settings, index: u64) -> SeriesResult {
    analyze_series_with_progress(series, settings, index, &())
}

/// [`analyze_series`], reporting each bootstrap replicate and the series to `progress`.
pub fn analyze_series_with_progress(
    series: &Series,
    settings: &Settings,
    index: u64,
    progress: &dyn Progress,
) -> SeriesResult {
    let mut fits = Vec::new();
    let mut fitted_sets = Vec::new();
    let mut skipped = Vec::new();
    let noise = choose_noise(&series.temperatures);
    let series_choice = (settings.virial == FormChoice::Auto && series.temperatures.len() > 1)
        .then(|| choose_series_forms(&series.temperatures, noise));
    for (i, set) in series.temperatures.iter().enumerate() {
        let form = series_choice.as_ref().and_then(|c| c.forms[i]);
        let choice = form.map_or(settings.virial, FormChoice::Fixed);
        match fit_temperature(set, choice, noise) {
            Ok(mut fit) => {
                fit.set_index = i;
                if let Some(c) = &series_choice {
                    fit.choice_reason = c.reason.clone();
                    fit.candidates = c.candidates.clone();
                    fit.choice_variance = c.choice_variance[i];
                }
                fits.push(fit);
                fitted_sets.push(set);
            }
            Err(mut skip) => {
                // A temperature of one or two readings beside others is often a typing slip
                // (300 for 30.0): its lines are named.
                if series.temperatures.len() > 1 && set.len() <= 2 && set.origins.iter().all(|o| o.line > 0) {
                    let lines: Vec<String> = set.origins.iter().map(|o| o.line.to_string()).collect();
                    skip.reason = format!("{} (line {})", skip.reason, lines.join(", "));
                }
                skipped.push(skip)
            }
        }
    }
    let noise_sds: Vec<_> = fitted_sets.iter().map(|set| noise.sds_for(set)).collect();
    flag_outliers(&mut fits, &fitted_sets, &noise_sds);
    pool_standard_errors(&mut fits);
    let status = match (fits.is_empty(), skipped.is_empty()) {
        (true, _) => Status::Refused,
        (false, true) => Status::Ok,
        (false, false) => Status::Partial,
    };
    let theta_settings = ThetaSettings { virial: settings.virial, ..settings.theta };
    let volumes = series.volumes.or(settings.volumes);
    let theta = (status != Status::Refused)
        .then(|| theta_for_series(series, &fits, noise, volumes, &theta_settings, index, progress));
    // A series whose bootstrap did not run still counts its share of the work.
    let replicates_run = theta.as_ref().and_then(|t| t.bootstrap.as_ref()).map_or(0, |b| b.replicates as u64);
    progress.advance(1 + settings.theta.bootstrap_replicates as u64 - replicates_run);
    SeriesResult {
        name: series.name.clone(),
        status,
        fits,
        skipped,
        quantity: Quantity::SecondVirial,
        theta,
        noise: Some(noise),
    }
}

/// θ of a series given as A2 (or χ) per temperature.
pub fn analyze_tabulated(series: &TabulatedSeries, settings: &Settings) -> SeriesResult {
    let volumes = series.volumes.or(settings.volumes);
    let theta = theta_from_points(&series.points, SeBasis::Known, series.quantity, volumes, &settings.theta);
    SeriesResult {
        name: series.name.clone(),
        status: Status::Ok,
        fits: Vec::new(),
        skipped: Vec::new(),
        quantity: series.quantity,
        theta: Some(theta),
        noise: None,
    }
}

/// Analyses every series in parallel; results keep the input order (osmometry series first,
/// then tabulated ones).
pub fn analyze(series: &[Series], tabulated: &[TabulatedSeries], settings: &Settings) -> Vec<SeriesResult> {
    analyze_with_progress(series, tabulated, settings, &())
}

/// [`analyze`], reporting [`work_units`] to `progress` as they complete.
pub fn analyze_with_progress(
    series: &[Series],
    tabulated: &[TabulatedSeries],
    settings: &Settings,
    progress: &dyn Progress,
) -> Vec<SeriesResult> {
    let mut results: Vec<SeriesResult> = series
        .par_iter()
        .enumerate()
        .map(|(i, s)| analyze_series_with_progress(s, settings, i as u64, progress))
        .collect();
    results.extend(
        tabulated
            .par_iter()
            .map(|s| {
                let r = analyze_tabulated(s, settings);
                progress.advance(1);
                r
            })
            .collect::<Vec<_>>(),
    );
    results
}

#[cfg(test)]
mod tests {
    use super::Status;

    #[test]
    fn the_status_names_the_tables_use_are_the_ones_the_report_uses() {
        for status in [Status::Ok, Status::Partial, Status::Refused] {
            assert_eq!(serde_json::to_value(status).unwrap(), status.name());
        }
    }
}
