//! The per-series pipeline of every route: per-temperature fits (osmometry: virial forms;
//! light scattering: Zimm), then the across-temperature θ analysis; tables of A2 or χ go
//! straight to θ, critical temperatures to the Shultz–Flory line. Series run in parallel.
//! Pure computation: no files, no printing.

use crate::chain_dimensions::UnperturbedDimensions;
use crate::dataset::{
    CriticalSeries, Dataset, Quantity, Route, ScatteringRow, ScatteringSeries, Series, TabulatedSeries,
    ViscometrySeries, Volumes,
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
use crate::viscometry::{analyze_viscometry, RouteFinding, ViscometryResult, ViscometrySettings};
use rayon::prelude::*;
use serde::Serialize;

/// Units of work [`analyze_with_progress`] will report for a dataset: one per series of the
/// other routes, and for each osmometry series one plus its bootstrap replicates.
pub fn work_units(dataset: &Dataset, settings: &Settings) -> u64 {
    osmometry_work_units(dataset.series.len(), settings)
        + (dataset.tabulated.len() + dataset.critical.len() + dataset.scattering.len() + dataset.viscometry.len())
            as u64
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
    /// The viscometry route's constants (Φ0, the repeat unit).
    pub viscometry: ViscometrySettings,
}

impl Default for Settings {
    fn default() -> Self {
        Settings {
            virial: FormChoice::Auto,
            theta: ThetaSettings::default(),
            volumes: None,
            viscometry: ViscometrySettings::default(),
        }
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
    /// The viscometry route's results.
    pub viscometry: Option<ViscometryResult>,
    /// ⟨r²⟩0/M where this series measured it (viscometry, or light scattering at θ).
    pub dimensions: Option<UnperturbedDimensions>,
}

impl SeriesResult {
    /// This series' θ for the routes' comparison: the headline θ with its SE, the
    /// Shultz–Flory θ, or the viscometric θ.
    pub fn route_theta(&self) -> Option<RouteTheta> {
        if let Some(v) = &self.viscometry {
            return v.route_theta();
        }
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
            viscometry: None,
            dimensions: None,
        }
    }

    /// What this series measured that the viscometry route can use: the inverse-variance mean
    /// of the osmotic Mn, or of the light-scattering Mw, over temperatures; its thermodynamic θ.
    pub fn finding(&self) -> Option<RouteFinding> {
        let values: Vec<(f64, f64)> = match self.route {
            Route::Osmometry => self.fits.iter().map(|f| (f.fit.mn(), f.mn_se())).collect(),
            // Report units (g/mol) back to kg/mol.
            Route::LightScattering => {
                self.scattering.iter().map(|f| (f.mw_g_per_mol * 1e-3, f.mw_se_g_per_mol * 1e-3)).collect()
            }
            Route::Viscometry => return None,
            _ => Vec::new(),
        };
        let usable: Vec<(f64, f64)> =
            values.into_iter().filter(|(m, se)| m.is_finite() && *m > 0.0 && se.is_finite() && *se > 0.0).collect();
        let molar_mass = (!usable.is_empty()).then(|| {
            let w_sum: f64 = usable.iter().map(|(_, se)| 1.0 / (se * se)).sum();
            usable.iter().map(|(m, se)| m / (se * se)).sum::<f64>() / w_sum
        });
        let theta_k = self.route_theta().map(|t| (t.theta_k, t.se_k));
        (molar_mass.is_some() || theta_k.is_some()).then(|| RouteFinding {
            name: self.name.clone(),
            molar_mass,
            theta_k,
            route: self.route,
        })
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
        viscometry: None,
        dimensions: None,
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
    let dimensions = theta.theta_k.and_then(|t| {
        scattering::set_expansion(&mut fits, t);
        scattering::unperturbed_dimensions(&fits, t, settings.viscometry.repeat_unit.as_ref())
    });
    let empty = SeriesResult::empty(&series.name, Route::LightScattering, Quantity::SecondVirial);
    if fits.is_empty() {
        return SeriesResult {
            status: Status::Refused,
            reason: Some("no temperature had three concentrations".into()),
            ..empty
        };
    }
    SeriesResult { theta: Some(theta), scattering: fits, dimensions, ..empty }
}

/// A viscometry series: [η] per fraction and temperature, the lines across fractions, the
/// viscometric θ and the unperturbed dimensions; fractions without a molar mass take one from
/// `known` (other routes' series of the same name).
pub fn analyze_viscometry_series(
    series: &ViscometrySeries,
    known: &[RouteFinding],
    settings: &Settings,
) -> SeriesResult {
    let viscometry_settings = ViscometrySettings { confidence: settings.theta.confidence, ..settings.viscometry };
    let empty = SeriesResult::empty(&series.name, Route::Viscometry, Quantity::SecondVirial);
    match analyze_viscometry(series, known, &viscometry_settings) {
        Ok((result, dimensions)) => SeriesResult { viscometry: Some(result), dimensions, ..empty },
        Err(reason) => SeriesResult { status: Status::Refused, reason: Some(reason), ..empty },
    }
}

/// Every series of the routes other than osmometry, in parallel, in the dataset's order:
/// tables, critical temperatures, light scattering, then viscometry (whose fractions may take
/// their molar mass from `known`, the osmometry series' Mn, or from the light-scattering Mw).
pub fn analyze_other_routes(
    dataset: &Dataset,
    settings: &Settings,
    progress: &dyn Progress,
    known: &[RouteFinding],
) -> Vec<SeriesResult> {
    let done = |r: SeriesResult| {
        progress.advance(1);
        r
    };
    let mut results: Vec<SeriesResult> =
        dataset.tabulated.par_iter().map(|s| done(analyze_tabulated(s, settings))).collect();
    results.extend(dataset.critical.par_iter().map(|s| done(analyze_critical(s, settings))).collect::<Vec<_>>());
    results.extend(dataset.scattering.par_iter().map(|s| done(analyze_scattering(s, settings))).collect::<Vec<_>>());
    let mut known = known.to_vec();
    known.extend(results.iter().filter_map(SeriesResult::finding));
    results.extend(
        dataset.viscometry.par_iter().map(|s| done(analyze_viscometry_series(s, &known, settings))).collect::<Vec<_>>(),
    );
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
    let known: Vec<RouteFinding> = results.iter().filter_map(SeriesResult::finding).collect();
    results.extend(analyze_other_routes(dataset, settings, progress, &known));
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
