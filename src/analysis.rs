//! The per-series pipeline of every route: per-temperature fits (osmometry: virial forms;
//! light scattering: Zimm), then the across-temperature θ analysis; tables of A2 or χ go
//! straight to θ, critical temperatures to the Shultz–Flory line. Series run in parallel.
//! Pure computation: no files, no printing.

use crate::dataset::{
    CriticalSeries, Dataset, Quantity, Route, ScatteringRow, ScatteringSeries, Series, TabulatedSeries, Volumes,
};
use crate::progress::Progress;
use crate::scattering::{self, ScatteringFit};
use crate::theta::{
    compare_routes, critical_route, theta_for_series, theta_from_points, CriticalRoute, RouteComparison, RouteTheta,
    SeBasis, ThetaResult, ThetaSettings,
};
use crate::virial::{
    choose_noise, choose_series_forms, fit_temperature, flag_outliers, pool_standard_errors, FormChoice, PressureNoise,
    SkippedTemperature, TemperatureFit, VirialForm,
};
use rayon::prelude::*;
use serde::Serialize;

/// Units of work [`analyze_with_progress`] will report for a dataset: one per series of the
/// other routes, and for each osmometry series one plus its bootstrap replicates.
pub fn work_units(dataset: &Dataset, settings: &Settings) -> u64 {
    osmometry_work_units(dataset.series.len(), settings)
        + (dataset.tabulated.len() + dataset.critical.len() + dataset.scattering.len()) as u64
}

/// Units of work of `series` osmometry series.
pub fn osmometry_work_units(series: usize, settings: &Settings) -> u64 {
    (series as u64) * (1 + settings.theta.bootstrap_replicates as u64)
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
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, serde::Deserialize)]
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
    /// The measurement the series comes from.
    pub route: Route,
    /// Why nothing could be computed, for routes that refuse a series as a whole (critical
    /// temperatures, light scattering); osmometry reasons are told by its skipped temperatures.
    pub reason: Option<String>,
    /// The Shultz–Flory result of a critical-temperature series.
    pub critical: Option<CriticalRoute>,
    /// Per-temperature Zimm fits of a light-scattering series.
    pub scattering: Vec<ScatteringFit>,
}

impl SeriesResult {
    /// This series' θ for the routes' comparison: the headline θ with its SE, or the
    /// Shultz–Flory θ.
    pub fn route_theta(&self) -> Option<RouteTheta> {
        match (&self.theta, &self.critical) {
            (Some(t), _) => Some(RouteTheta {
                route: self.route,
                theta_k: t.theta_k?,
                se_k: t.se_k?,
                ci_low_k: t.interval.low_k,
                ci_high_k: t.interval.high_k,
            }),
            (None, Some(c)) => Some(RouteTheta {
                route: self.route,
                theta_k: c.theta_k,
                se_k: c.se_k,
                ci_low_k: c.ci_low_k,
                ci_high_k: c.ci_high_k,
            }),
            _ => None,
        }
    }

    fn empty(name: &str, route: Route, quantity: Quantity) -> Self {
        SeriesResult {
            name: name.to_string(),
            status: Status::Ok,
            fits: Vec::new(),
            skipped: Vec::new(),
            quantity,
            theta: None,
            noise: None,
            route,
            reason: None,
            critical: None,
            scattering: Vec::new(),
        }
    }
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
        route: Route::Osmometry,
        reason: None,
        critical: None,
        scattering: Vec::new(),
    }
}

/// θ of a series given as A2 (or χ) per temperature.
pub fn analyze_tabulated(series: &TabulatedSeries, settings: &Settings) -> SeriesResult {
    let volumes = series.volumes.or(settings.volumes);
    let theta = theta_from_points(&series.points, SeBasis::Known, series.quantity, volumes, &settings.theta);
    let route = match series.quantity {
        Quantity::SecondVirial => Route::A2Table,
        Quantity::HalfMinusChi => Route::ChiTable,
    };
    SeriesResult { theta: Some(theta), ..SeriesResult::empty(&series.name, route, series.quantity) }
}

/// θ from the critical temperatures of fractions (Shultz–Flory); needs v̄ and V1.
pub fn analyze_critical(series: &CriticalSeries, settings: &Settings) -> SeriesResult {
    let result = match series.volumes.or(settings.volumes) {
        Some(v) => critical_route(&series.fractions, v, settings.theta.confidence),
        None => Err("critical temperatures need v̄ and V1: give --polymer-specific-volume and --solvent-molar-volume, or the columns".into()),
    };
    let empty = SeriesResult::empty(&series.name, Route::CriticalTemperatures, Quantity::SecondVirial);
    match result {
        Ok(c) => SeriesResult { critical: Some(c), ..empty },
        Err(reason) => SeriesResult { status: Status::Refused, reason: Some(reason), ..empty },
    }
}

/// A light-scattering series: Zimm fits per temperature, then the same θ machinery on the
/// light-scattering A2 (a weight-average quantity). `--virial quadratic` adds the 3 A3 c²
/// term to the zero-angle fit; every other choice keeps the straight line.
pub fn analyze_scattering(series: &ScatteringSeries, settings: &Settings) -> SeriesResult {
    let rows: Vec<&ScatteringRow> = series.rows.iter().collect();
    let quadratic = settings.virial == FormChoice::Fixed(VirialForm::Quadratic);
    let mut fits = scattering::fit_series(&rows, quadratic);
    let volumes = series.volumes.or(settings.volumes);
    // Each temperature's SE from its own Zimm fit: taken as known (normal quantile), widened by
    // the line's lack-of-fit test where the points scatter more.
    let theta =
        theta_from_points(&scattering::points(&fits), SeBasis::Known, Quantity::SecondVirial, volumes, &settings.theta);
    if let Some(t) = theta.theta_k {
        scattering::set_expansion(&mut fits, t);
    }
    let empty = SeriesResult::empty(&series.name, Route::LightScattering, Quantity::SecondVirial);
    if fits.is_empty() {
        return SeriesResult {
            status: Status::Refused,
            reason: Some("no temperature had three concentrations".into()),
            ..empty
        };
    }
    SeriesResult { theta: Some(theta), scattering: fits, ..empty }
}

/// Every series of the routes other than osmometry, in parallel, in the dataset's order:
/// tables, then critical temperatures, then light scattering.
pub fn analyze_other_routes(dataset: &Dataset, settings: &Settings, progress: &dyn Progress) -> Vec<SeriesResult> {
    let done = |r: SeriesResult| {
        progress.advance(1);
        r
    };
    let mut results: Vec<SeriesResult> =
        dataset.tabulated.par_iter().map(|s| done(analyze_tabulated(s, settings))).collect();
    results.extend(dataset.critical.par_iter().map(|s| done(analyze_critical(s, settings))).collect::<Vec<_>>());
    results.extend(dataset.scattering.par_iter().map(|s| done(analyze_scattering(s, settings))).collect::<Vec<_>>());
    results
}

/// Analyses every series of every route in parallel; results keep the dataset's order
/// (osmometry series first, then [`analyze_other_routes`]).
pub fn analyze(dataset: &Dataset, settings: &Settings) -> Vec<SeriesResult> {
    analyze_with_progress(dataset, settings, &())
}

/// [`analyze`], reporting [`work_units`] to `progress` as they complete.
pub fn analyze_with_progress(dataset: &Dataset, settings: &Settings, progress: &dyn Progress) -> Vec<SeriesResult> {
    let mut results: Vec<SeriesResult> = dataset
        .series
        .par_iter()
        .enumerate()
        .map(|(i, s)| analyze_series_with_progress(s, settings, i as u64, progress))
        .collect();
    results.extend(analyze_other_routes(dataset, settings, progress));
    results
}

/// Everything computed for a run: every series of every route, and the routes compared.
#[derive(Debug, Clone, PartialEq)]
pub struct RunResults {
    /// One result per series, in the dataset's order ([`analyze`]).
    pub series: Vec<SeriesResult>,
    /// θ of one pair by several routes, compared ([`compare_routes`]).
    pub routes: Vec<RouteComparison>,
}

/// The whole run in one call: [`analyze_with_progress`] and the routes' comparison. (`analyze`
/// on the command line feeds the same per-series calls a chunk at a time.)
pub fn analyze_run(dataset: &Dataset, settings: &Settings, progress: &dyn Progress) -> RunResults {
    let series = analyze_with_progress(dataset, settings, progress);
    let routes = compare_result_routes(&series);
    RunResults { series, routes }
}

/// The routes' comparison of a run's results ([`compare_routes`]).
pub fn compare_result_routes(results: &[SeriesResult]) -> Vec<RouteComparison> {
    let entries: Vec<(&str, Option<RouteTheta>)> = results.iter().map(|r| (r.name.as_str(), r.route_theta())).collect();
    compare_routes(&entries)
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
