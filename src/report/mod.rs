//! The report: one struct tree that *is* the JSON schema (every field carries its unit in
//! its name), built from the analysis results, plus the CSV table and the terminal table.

mod json;
mod numbers;
pub mod plan;
mod table;
mod terminal;
mod theta;
mod viscometry;
mod words;

use crate::dataset::Route;
use crate::theta::RouteComparison;
pub use json::{report_json, series_json, to_json, write_report_json, ReportStream};
pub use numbers::{minus, plus_minus, superscript};
pub use table::{series_table_csv, series_table_rows_csv, table_csv, table_rows_csv, SeriesFilter};
pub use terminal::{render_ending, render_series, render_summary, render_terminal, Tally};
pub use theta::{ThetaPointReport, ThetaReport};
pub use viscometry::{dimensions_line, render_viscometry, viscometry_in_words};
pub use words::summary_line;

use crate::analysis::{SeriesResult, Status};
use crate::units::{
    kelvin_to_celsius, A2_MOL_ML_PER_G2_PER_SI, A3_MOL_ML2_PER_G3_PER_SI, GAS_CONSTANT_J_PER_MOL_K,
    G_PER_ML_PER_KG_PER_M3, G_PER_MOL_PER_KG_PER_MOL,
};
use crate::virial::{Candidate, FitWarning, SkippedTemperature, TemperatureFit, VirialForm};
use serde::Serialize;
use sha2::{Digest, Sha256};

/// Version of the report layout; raised when a stable key changes meaning or goes away.
pub const SCHEMA_VERSION: u32 = 3;

/// The whole report.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct Report {
    /// Report layout version.
    pub schema_version: u32,
    /// thetaseek version that wrote it.
    pub tool_version: String,
    /// Input files with their SHA-256.
    pub inputs: Vec<InputFile>,
    /// Settings used.
    pub settings: ReportSettings,
    /// One entry per series, in input order.
    pub series: Vec<SeriesReport>,
    /// θ of one polymer–solvent pair by several routes, where the inputs hold more than one.
    pub routes: Vec<RouteComparison>,
    /// Warnings about the run as a whole (ignored columns, ...); last, because a run read in
    /// one pass knows them all only at its end.
    pub warnings: Vec<String>,
}

/// One input file.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct InputFile {
    /// Path as given on the command line.
    pub path: String,
    /// SHA-256 of the file's bytes, lower-case hex.
    pub sha256: String,
}

impl InputFile {
    /// Records a file and hashes its bytes.
    pub fn new(path: &str, bytes: &[u8]) -> Self {
        Self::from_digest(path, &Sha256::digest(bytes))
    }

    /// Records a file whose SHA-256 was computed while it was read.
    pub fn from_digest(path: &str, digest: &[u8]) -> Self {
        InputFile { path: path.to_string(), sha256: digest.iter().map(|b| format!("{b:02x}")).collect() }
    }
}

/// Settings that shaped the results.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct ReportSettings {
    /// `auto`, `linear`, `quadratic` or `sqrt`.
    pub virial: crate::virial::FormChoice,
    /// Unit assumed for headers without one, if given.
    pub temperature_unit: Option<crate::units::TemperatureUnit>,
    /// Unit assumed for headers without one, if given.
    pub concentration_unit: Option<crate::units::ConcentrationUnit>,
    /// Unit assumed for headers without one, if given.
    pub pressure_unit: Option<crate::units::PressureUnit>,
    /// Solvent density for head columns, g/mL.
    pub solvent_density_g_per_ml: Option<f64>,
    /// Gas constant used, J/(mol K).
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub gas_constant_j_per_mol_k: f64,
    /// Confidence level of the θ intervals.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub confidence: f64,
    /// Bootstrap replicates (0 = off).
    pub bootstrap_replicates: usize,
    /// Bootstrap seed.
    pub seed: u64,
    /// v̄ for every series without its own, mL/g.
    pub polymer_specific_volume_ml_per_g: Option<f64>,
    /// V1 for every series without its own, mL/mol.
    pub solvent_molar_volume_ml_per_mol: Option<f64>,
    /// |A2| tolerance of the stability advice, mol mL/g².
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub a2_tolerance_mol_ml_per_g2: f64,
    /// `full` (every reading and every candidate form) or `fits` (per-temperature results only).
    pub report_detail: Detail,
}

/// How much of each fit the report holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Detail {
    /// Every reading with its fitted value and residual, and every candidate form; the JSON
    /// pretty-printed and the terminal listing every series (the default, for any size).
    Full,
    /// Per-temperature results without the readings, the JSON on one line and the terminal a
    /// digest: a screening campaign's report stays a few times the size of its input instead
    /// of fifteen.
    Fits,
}

impl ReportSettings {
    /// Settings with the constants filled in.
    pub fn new(virial: crate::virial::FormChoice) -> Self {
        ReportSettings {
            virial,
            temperature_unit: None,
            concentration_unit: None,
            pressure_unit: None,
            solvent_density_g_per_ml: None,
            gas_constant_j_per_mol_k: GAS_CONSTANT_J_PER_MOL_K,
            confidence: 0.95,
            bootstrap_replicates: 0,
            seed: 1,
            polymer_specific_volume_ml_per_g: None,
            solvent_molar_volume_ml_per_mol: None,
            a2_tolerance_mol_ml_per_g2: crate::theta::DEFAULT_A2_TOLERANCE,
            report_detail: Detail::Full,
        }
    }
}

/// One series.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct SeriesReport {
    /// Series name.
    pub name: String,
    /// The solvent, where the data name it.
    pub solvent: Option<String>,
    /// `ok`, `partial` or `refused`.
    pub status: Status,
    /// Why the series is partial or refused.
    pub reason: Option<String>,
    /// Series-level warnings.
    pub warnings: Vec<String>,
    /// How the readings' noise was modelled for the weights: `given_sds`, `flat_reduced`,
    /// `constant_pressure`, `proportional_pressure` or `floor_and_gain` (with its crossover
    /// pressure in Pa); chosen by pooled likelihood when no SDs are given (null for tables).
    pub reading_noise: Option<crate::virial::PressureNoise>,
    /// Per-temperature fits, ascending temperature.
    pub fits: Vec<FitReport>,
    /// Temperatures that were not fitted.
    pub skipped_temperatures: Vec<SkippedReport>,
    /// The θ analysis (null for refused series).
    pub theta: Option<ThetaReport>,
    /// `osmometry`, `a2_table`, `chi_table`, `critical_temperatures`, `light_scattering` or
    /// `viscometry`.
    pub route: Route,
    /// The Shultz–Flory result of a critical-temperature series.
    pub critical: Option<crate::theta::CriticalRoute>,
    /// Per-temperature light-scattering fits (Mw, A2, Rg, α_s) of a light-scattering series.
    pub light_scattering: Vec<crate::scattering::ScatteringFit>,
    /// Warnings of the per-temperature fits, counted (kept when a campaign's record drops the
    /// fits themselves).
    #[serde(skip)]
    pub fit_warnings: usize,
    /// Readings excluded in the `exclude` column, with their reasons (absent when none).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub excluded_readings: Vec<ExcludedReport>,
    /// The answer in words, one line (θ, Mn, ψ1 and χ, the solvent's quality, what to do next; or
    /// the viscometric θ and the chain's dimensions).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub summary: Option<String>,
    /// The viscometry route's results: [η] per fraction and temperature, the Mark–Houwink
    /// and Stockmayer–Fixman lines, the viscometric θ (absent for other routes).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub viscometry: Option<crate::viscometry::ViscometryResult>,
    /// ⟨r²⟩0/M where this series measured it (viscometry, or light scattering with angles at θ).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub unperturbed_dimensions: Option<crate::chain_dimensions::UnperturbedDimensions>,
}

/// A reading the scientist excluded, in report units (null where the cell held no number).
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct ExcludedReport {
    /// Line (or sheet row) in its file.
    pub line: usize,
    /// Temperature, K.
    pub temperature_k: Option<f64>,
    /// Temperature, °C.
    pub temperature_c: Option<f64>,
    /// Concentration, g/mL.
    pub concentration_g_per_ml: Option<f64>,
    /// Osmotic pressure, Pa.
    pub pressure_pa: Option<f64>,
    /// Why, as written in the `exclude` column.
    pub reason: String,
}

impl From<&crate::dataset::ExcludedReading> for ExcludedReport {
    fn from(e: &crate::dataset::ExcludedReading) -> Self {
        ExcludedReport {
            line: e.origin.line,
            temperature_k: e.temperature_k,
            temperature_c: e.temperature_k.map(crate::units::kelvin_to_celsius),
            concentration_g_per_ml: e.concentration_kg_per_m3.map(|c| c * crate::units::G_PER_ML_PER_KG_PER_M3),
            pressure_pa: e.pressure_pa,
            reason: e.reason.clone(),
        }
    }
}

/// A skipped temperature.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct SkippedReport {
    /// Temperature, K.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub temperature_k: f64,
    /// Readings at it.
    pub n_points: usize,
    /// Why.
    pub reason: String,
}

/// One warning: a stable code and a sentence for people.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct WarningReport {
    /// Stable machine-readable code.
    pub code: crate::virial::FitWarningCode,
    /// What it means and what to do.
    pub message: String,
}

impl From<&FitWarning> for WarningReport {
    fn from(w: &FitWarning) -> Self {
        WarningReport { code: w.code(), message: w.to_string() }
    }
}

/// One temperature's fit, in report units.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct FitReport {
    /// Temperature, K.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub temperature_k: f64,
    /// Temperature, °C.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub temperature_c: f64,
    /// Readings used.
    pub n_points: usize,
    /// Form used.
    pub virial_form: VirialForm,
    /// Why that form.
    pub virial_form_reason: String,
    /// Under `--virial auto`, each virial family with its AICc over all of the series' readings (absent at detail `fits`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub virial_candidates: Option<Vec<Candidate>>,
    /// Whether per-point SDs weighted the fit.
    pub weighted: bool,
    /// Number-average molar mass Mn, g/mol.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub mn_g_per_mol: f64,
    /// SE of Mn, g/mol: on the residual variance pooled over the series' temperatures (where no
    /// SDs were given), with the share of the series' form choice.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub mn_se_g_per_mol: f64,
    /// Second virial coefficient A2, mol mL/g².
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub a2_mol_ml_per_g2: f64,
    /// SE of A2, mol mL/g².
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub a2_se_mol_ml_per_g2: f64,
    /// Third virial coefficient A3, mol mL²/g³ (null unless the quadratic form was used).
    pub a3_mol_ml2_per_g3: Option<f64>,
    /// SE of A3, mol mL²/g³.
    pub a3_se_mol_ml2_per_g3: Option<f64>,
    /// Intercept 1/Mn of the reduced pressure, mol/g.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub inverse_mn_mol_per_g: f64,
    /// Covariance of (1/Mn, A2), mol² mL/g³.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub cov_inverse_mn_a2_mol2_ml_per_g3: f64,
    /// Residual degrees of freedom of this temperature's fit.
    pub dof: usize,
    /// Degrees of freedom behind the SEs (the pooled residual variance; null where given SDs
    /// make them known, normal quantile).
    pub se_dof: Option<usize>,
    /// Σ w e² / dof for weighted fits (≈ 1 when the SDs are right); null when unweighted.
    pub reduced_chi2: Option<f64>,
    /// Residual SD of the unweighted reduced pressure, mol/g (null when weighted or for sqrt).
    pub residual_sd_mol_per_g: Option<f64>,
    /// Coefficient of determination on the form's own response.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub r_squared: f64,
    /// Diagnostics.
    pub warnings: Vec<WarningReport>,
    /// Every reading with its fitted value and residual (absent at detail `fits`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub points: Option<Vec<PointReport>>,
}

/// One reading in a fit.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct PointReport {
    /// Line in its input file.
    pub line: usize,
    /// c, g/mL.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub concentration_g_per_ml: f64,
    /// Π, Pa.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub pressure_pa: f64,
    /// Π/(cRT), mol/g.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub reduced_pressure_mol_per_g: f64,
    /// Fitted Π/(cRT), mol/g.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub fitted_mol_per_g: f64,
    /// Internally studentised residual (on the fitted form's own scale).
    pub studentized_residual: Option<f64>,
}

/// Reduced pressure: report unit (mol/g) per SI unit (mol/kg).
const MOL_PER_G_PER_MOL_PER_KG: f64 = 1.0e-3;

fn finite(x: f64) -> Option<f64> {
    x.is_finite().then_some(x)
}

impl FitReport {
    /// Converts one fit (SI) into report units; the readings only at [`Detail::Full`].
    pub fn new(t: &TemperatureFit, series_set: &crate::dataset::TemperatureSet, detail: Detail) -> Self {
        let f = &t.fit;
        let full = detail == Detail::Full;
        let points = full.then(|| Self::points(t, series_set));
        let unweighted_reduced = !t.weighted && f.score.form != VirialForm::Sqrt;
        FitReport {
            temperature_k: t.temperature_k,
            temperature_c: kelvin_to_celsius(t.temperature_k),
            n_points: t.n_points,
            virial_form: f.score.form,
            virial_form_reason: t.choice_reason.clone(),
            virial_candidates: full.then(|| t.candidates.clone()),
            weighted: t.weighted,
            mn_g_per_mol: f.mn() * G_PER_MOL_PER_KG_PER_MOL,
            mn_se_g_per_mol: t.mn_se() * G_PER_MOL_PER_KG_PER_MOL,
            a2_mol_ml_per_g2: f.score.a2 * A2_MOL_ML_PER_G2_PER_SI,
            a2_se_mol_ml_per_g2: t.a2_se() * A2_MOL_ML_PER_G2_PER_SI,
            a3_mol_ml2_per_g3: f.score.a3.map(|(a, _)| a * A3_MOL_ML2_PER_G3_PER_SI),
            a3_se_mol_ml2_per_g3: t.a3_se().map(|s| s * A3_MOL_ML2_PER_G3_PER_SI),
            inverse_mn_mol_per_g: f.score.inverse_mn * MOL_PER_G_PER_MOL_PER_KG,
            // mol² m³/kg³ → mol² mL/g³: 10⁶ mL/m³ over 10⁹ g³/kg³.
            cov_inverse_mn_a2_mol2_ml_per_g3: t.cov_inverse_mn_a2() * 1.0e-3,
            dof: f.lsq.dof,
            se_dof: t.se_dof,
            reduced_chi2: t.weighted.then(|| f.lsq.rss_weighted / f.lsq.dof as f64).and_then(finite),
            residual_sd_mol_per_g: unweighted_reduced
                .then_some(f.lsq.residual_sd * MOL_PER_G_PER_MOL_PER_KG)
                .and_then(finite),
            r_squared: f.lsq.r_squared,
            warnings: t.warnings.iter().map(WarningReport::from).collect(),
            points,
        }
    }

    /// Every reading of one fit in report units.
    fn points(t: &TemperatureFit, series_set: &crate::dataset::TemperatureSet) -> Vec<PointReport> {
        let f = &t.fit;
        let y: Vec<f64> = crate::virial::Readings {
            temperature_k: t.temperature_k,
            concentration: &series_set.concentration_kg_per_m3,
            pressure: &series_set.pressure_pa,
            pressure_sd: None,
            sd_kind: crate::numerics::linear::Weights::Absolute,
        }
        .reduced();
        (0..series_set.len())
            .map(|i| PointReport {
                line: series_set.origins[i].line,
                concentration_g_per_ml: series_set.concentration_kg_per_m3[i] * G_PER_ML_PER_KG_PER_M3,
                pressure_pa: series_set.pressure_pa[i],
                reduced_pressure_mol_per_g: y[i] * MOL_PER_G_PER_MOL_PER_KG,
                fitted_mol_per_g: f.fitted_reduced[i] * MOL_PER_G_PER_MOL_PER_KG,
                studentized_residual: finite(f.lsq.studentized[i]),
            })
            .collect()
    }
}

impl SeriesReport {
    /// A series refused for a value that cannot be used (see [`Report::add_refused_series`]).
    pub fn refused_input(refused: &crate::input::RefusedSeries) -> Self {
        SeriesReport {
            reading_noise: None,
            name: refused.series.clone(),
            solvent: None,
            status: Status::Refused,
            reason: Some(format!("refused input: {}", refused.error)),
            warnings: Vec::new(),
            fits: Vec::new(),
            skipped_temperatures: Vec::new(),
            theta: None,
            route: Route::Osmometry,
            critical: None,
            light_scattering: Vec::new(),
            fit_warnings: 0,
            excluded_readings: Vec::new(),
            summary: None,
            viscometry: None,
            unperturbed_dimensions: None,
        }
    }

    /// Converts one series' results; `series` supplies the readings behind each fit.
    pub fn new(result: &SeriesResult, series: Option<&crate::dataset::Series>, detail: Detail) -> Self {
        let sets = series.map_or(&[][..], |s| &s.temperatures[..]);
        let fits = result
            .fits
            .iter()
            .filter_map(|fit| sets.get(fit.set_index).map(|set| FitReport::new(fit, set, detail)))
            .collect();
        let skipped_temperatures: Vec<SkippedReport> = result.skipped.iter().map(SkippedReport::from).collect();
        let reason = match (result.status, &result.reason) {
            (_, Some(reason)) => Some(reason.clone()),
            (Status::Ok, None) => None,
            (Status::Partial, None) => {
                Some(format!("{} of {} temperatures could not be fitted", result.skipped.len(), sets.len()))
            }
            (Status::Refused, None) => Some(match result.skipped.first() {
                Some(s) if result.skipped.len() == 1 => {
                    format!("its only temperature could not be fitted: {}", s.reason)
                }
                None if series.is_some_and(|s| s.temperatures.is_empty() && !s.excluded.is_empty()) => {
                    "every reading is excluded (see excluded_readings)".to_string()
                }
                _ => "no temperature could be fitted (see skipped_temperatures)".to_string(),
            }),
        };
        let excluded_readings: Vec<ExcludedReport> =
            series.map_or(Vec::new(), |s| s.excluded.iter().map(ExcludedReport::from).collect());
        let mut warnings: Vec<String> =
            skipped_temperatures.iter().map(|s| format!("{:.2} K skipped: {}", s.temperature_k, s.reason)).collect();
        if let Some(t) = &result.theta {
            warnings.extend(t.warnings.iter().cloned());
        }
        if let Some(v) = &result.viscometry {
            warnings.extend(v.warnings.iter().cloned());
        }
        // A light-scattering series without a fitted temperature shows no θ (its warnings say why).
        let theta = result
            .theta
            .as_ref()
            .filter(|_| result.route != Route::LightScattering || !result.scattering.is_empty())
            .map(|t| ThetaReport::new(t, result.quantity));
        let fit_warnings: usize = result.fits.iter().map(|f| f.warnings.len()).sum();
        let mut report = SeriesReport {
            name: result.name.clone(),
            reading_noise: result.noise,
            solvent: None,
            status: result.status,
            reason,
            warnings,
            fits,
            skipped_temperatures,
            theta,
            route: result.route,
            critical: result.critical.clone(),
            light_scattering: result.scattering.clone(),
            fit_warnings: fit_warnings
                + result.viscometry.as_ref().map_or(0, |v| v.dilutions.iter().map(|d| d.warnings.len()).sum()),
            excluded_readings,
            summary: None,
            viscometry: result.viscometry.clone(),
            unperturbed_dimensions: result.dimensions.clone(),
        };
        report.summary = match &report.viscometry {
            Some(v) => viscometry_in_words(v, report.unperturbed_dimensions.as_ref()),
            None => summary_line(&report),
        };
        report
    }

    /// What a campaign keeps of a series once it is written: everything the summary, the
    /// digest, the per-series table and the route comparison read, without the per-temperature
    /// fits and the bulky parts of the θ analysis.
    pub fn into_record(mut self) -> Self {
        self.fits = Vec::new();
        self.skipped_temperatures = Vec::new();
        if let Some(t) = &mut self.theta {
            t.models = Vec::new();
            t.points = Vec::new();
            t.warnings = Vec::new();
            t.ci_reason = String::new();
            t.bootstrap = None;
            t.joint = None;
            t.line = None;
        }
        self
    }
}

/// A series that needs a look: refused, partial, without a bracketed θ, or with warnings.
pub fn needs_attention(s: &SeriesReport) -> bool {
    let viscometric = s.viscometry.as_ref().map(|v| v.viscometric_theta.as_ref().map(|t| t.crossing));
    let bracketed = match (&s.theta, &s.critical) {
        _ if viscometric.is_some() => viscometric.flatten() == Some(crate::theta::Crossing::Bracketed),
        (Some(t), _) => t.crossing == crate::theta::Crossing::Bracketed,
        // The Shultz–Flory route has no crossing: its θ is a limit.
        (None, Some(_)) => true,
        (None, None) => false,
    };
    s.status != Status::Ok || !bracketed || !s.warnings.is_empty() || s.fit_warnings > 0
}

impl From<&SkippedTemperature> for SkippedReport {
    fn from(s: &SkippedTemperature) -> Self {
        SkippedReport { temperature_k: s.temperature_k, n_points: s.n_points, reason: s.reason.clone() }
    }
}

impl Report {
    /// Assembles the report of a run: `results` in order, each matched by name to its series in
    /// `dataset` (for the readings behind each fit).
    pub fn new(
        inputs: Vec<InputFile>,
        settings: ReportSettings,
        warnings: Vec<String>,
        results: &[SeriesResult],
        dataset: &crate::dataset::Dataset,
    ) -> Self {
        let solvents: std::collections::HashMap<&str, &str> =
            dataset.solvents.iter().map(|(s, v)| (s.as_str(), v.as_str())).collect();
        let detail = settings.report_detail;
        Report {
            schema_version: SCHEMA_VERSION,
            tool_version: env!("CARGO_PKG_VERSION").to_string(),
            inputs,
            settings,
            warnings,
            series: results
                .iter()
                .enumerate()
                .map(|(i, r)| {
                    // Results list the osmometry series first, in dataset order, then the tables.
                    let series = dataset.series.get(i).filter(|s| s.name == r.name);
                    let mut report = SeriesReport::new(r, series, detail);
                    report.solvent = solvents.get(r.name.as_str()).map(|v| v.to_string());
                    report
                })
                .collect(),
            routes: Vec::new(),
        }
    }

    /// Adds the series refused for a value that cannot be used: their readings were left out
    /// at reading, and the reason names the file, line, column and value.
    pub fn add_refused_series(&mut self, refused: &[crate::input::RefusedSeries]) {
        self.series.extend(refused.iter().map(SeriesReport::refused_input));
    }
}
