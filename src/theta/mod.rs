//! Across-temperature models and the θ temperature: where A2(T) crosses zero, how sure we
//! are, and what the Flory–Krigbaum / Flory–Huggins parameters say.
//!
//! Models: the Flory–Krigbaum line A2 = a + b/T (headline), A2 quadratic in 1/T (used when
//! the data support it), the local two-point crossing, and the joint fit of every reading.
//! Intervals: delta method, Fieller, and a seeded bootstrap that reruns the whole pipeline.

mod critical;
mod curved;
mod joint;
mod line;
mod routes;

pub use critical::{critical_route, CriticalRoute};
pub use curved::CurvedFit;
pub use joint::{joint_fit, JointFit};
pub use line::{scatter_p_value, FittedLine, InverseTemperatureLine, LineVariance, SeBasis, ThetaSet, LACK_OF_FIT_P};
pub use routes::{compare_routes, RouteComparison, RouteDifference, RouteTheta, DISAGREE_P};

use crate::dataset::{Quantity, Series, TemperaturePoint, TemperatureSet, Volumes};
use crate::uncertainty::{percentile, replicate_rng, resample_indices};
use crate::virial::{
    pooled_scales, score_temperature, FormChoice, FormScore, PoolShare, PressureNoise, TemperatureFit,
};
use rayon::prelude::*;
use serde::Serialize;

/// Settings of the θ analysis.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ThetaSettings {
    /// Confidence level of intervals, e.g. 0.95.
    pub confidence: f64,
    /// Bootstrap replicates (0 = off, the default: an opt-in cross-check, not calibrated).
    pub bootstrap_replicates: usize,
    /// Seed of the bootstrap.
    pub seed: u64,
    /// |A2| tolerance for the temperature-stability advice, mol m³/kg² (= mol mL/g²).
    pub a2_tolerance: f64,
    /// Per-temperature form choice (the bootstrap reruns it).
    pub virial: FormChoice,
}

/// Default |A2| tolerance: 1×10⁻⁵ mol mL/g², a few per cent of a good solvent's A2.
pub const DEFAULT_A2_TOLERANCE: f64 = 1.0e-5;

impl Default for ThetaSettings {
    fn default() -> Self {
        ThetaSettings {
            confidence: 0.95,
            bootstrap_replicates: 0,
            seed: 1,
            a2_tolerance: DEFAULT_A2_TOLERANCE,
            virial: FormChoice::Auto,
        }
    }
}

/// Where the crossing lies relative to the measurements.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Crossing {
    /// Inside the measured temperatures.
    Bracketed,
    /// Outside them.
    Extrapolated,
    /// No θ.
    None,
}

/// Which way solvent quality runs with temperature.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Sense {
    /// A2 rises with T (ψ1 > 0): poor below θ, phase separation on cooling.
    Ucst,
    /// A2 falls as T rises (ψ1 < 0): poor above θ, phase separation on heating.
    Lcst,
}

/// Shape of the headline interval.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum IntervalKind {
    /// Finite low and high.
    Bounded,
    /// At least one side infinite.
    Unbounded,
    /// Everything outside an interval.
    Exclusive,
    /// No interval (no θ).
    None,
}

/// An interval for θ, K.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, serde::Deserialize)]
pub struct Interval {
    /// Shape.
    pub kind: IntervalKind,
    /// Lower bound, K (null where unbounded or not given).
    pub low_k: Option<f64>,
    /// Upper bound, K.
    pub high_k: Option<f64>,
}

impl From<ThetaSet> for Interval {
    fn from(set: ThetaSet) -> Self {
        match set {
            ThetaSet::Interval(lo, hi) => Interval { kind: IntervalKind::Bounded, low_k: Some(lo), high_k: Some(hi) },
            ThetaSet::AtLeast(lo) => Interval { kind: IntervalKind::Unbounded, low_k: Some(lo), high_k: None },
            ThetaSet::Exclusive => Interval { kind: IntervalKind::Exclusive, low_k: None, high_k: None },
            ThetaSet::Unbounded | ThetaSet::Empty => {
                Interval { kind: IntervalKind::Unbounded, low_k: None, high_k: None }
            }
        }
    }
}

/// An across-temperature model that gives a θ.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Model {
    /// The Flory–Krigbaum line A2 = a + b/T (the headline model).
    FloryKrigbaum,
    /// A2 quadratic in 1/T.
    Curved,
    /// The crossing between the two temperatures that bracket it.
    Local,
    /// Every reading at once (Mn shared, A2 on the Flory–Krigbaum line).
    Joint,
}

impl Model {
    /// The name reports use.
    pub fn name(self) -> &'static str {
        match self {
            Model::FloryKrigbaum => "flory_krigbaum",
            Model::Curved => "curved",
            Model::Local => "local",
            Model::Joint => "joint",
        }
    }
}

impl std::fmt::Display for Model {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.pad(self.name())
    }
}

/// How the headline interval of θ was computed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum IntervalMethod {
    /// Fieller's set for the zero of the line.
    Fieller,
    /// Delta method through the curved model's root.
    DeltaCurved,
    /// No interval.
    None,
}

impl IntervalMethod {
    /// The name reports use.
    pub fn name(self) -> &'static str {
        match self {
            IntervalMethod::Fieller => "fieller",
            IntervalMethod::DeltaCurved => "delta_curved",
            IntervalMethod::None => "none",
        }
    }
}

impl std::fmt::Display for IntervalMethod {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.pad(self.name())
    }
}

/// θ from one model.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct ModelTheta {
    /// The model.
    pub name: Model,
    /// θ, K (null where the model gives none).
    pub theta_k: Option<f64>,
    /// SE, K.
    pub se_k: Option<f64>,
    /// Why null, or what to know.
    pub note: Option<String>,
}

/// One place where A2 (or 1/2 − χ) changes sign between measured temperatures, for series
/// whose A2(T) is not monotonic and so has two θ.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, serde::Deserialize)]
pub struct SignChange {
    /// θ, K: the zero of the straight line in 1/T through the two bracketing temperatures.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub theta_k: f64,
    /// Its SE by the delta method, K (null without per-temperature SEs).
    pub se_k: Option<f64>,
    /// Fieller's interval of that two-point line.
    pub interval: Interval,
    /// UCST-type where A2 rises through zero with T, LCST-type where it falls.
    pub sense: Sense,
}

/// Bootstrap summary.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct BootstrapSummary {
    /// Replicates asked for.
    pub replicates: usize,
    /// Replicates that gave a θ.
    pub successful: usize,
    /// Seed.
    pub seed: u64,
    /// Percentile interval, K.
    pub ci_low_k: Option<f64>,
    /// Percentile interval, K.
    pub ci_high_k: Option<f64>,
    /// SD of the replicate θ values, K.
    pub se_k: Option<f64>,
}

/// Are the Mn values at different temperatures one Mn?
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct MnConsistency {
    /// Weighted mean Mn (w = 1/SE²), kg/mol.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub mean_kg_per_mol: f64,
    /// Its SE, kg/mol.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub mean_se_kg_per_mol: f64,
    /// χ² = Σ w (Mn_i − mean)².
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub chi2: f64,
    /// n − 1.
    pub dof: usize,
    /// P(χ²_dof ≥ observed).
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub p_value: f64,
}

/// Significance below which the Mn drift is a warning.
pub const MN_DRIFT_P: f64 = 0.01;

/// The Flory–Krigbaum / Flory–Huggins parameters.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct FloryParameters {
    /// ψ1 (entropy of dilution parameter) and its SE.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub psi1: f64,
    /// SE of ψ1.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub psi1_se: f64,
    /// κ1 at θ (= ψ1).
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub kappa1_at_theta: f64,
    /// Per measured temperature.
    pub temperatures: Vec<FloryAtTemperature>,
}

/// Flory parameters at one temperature.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct FloryAtTemperature {
    /// T, K.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub temperature_k: f64,
    /// κ1(T) = ψ1 θ/T and its SE.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub kappa1: f64,
    /// SE.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub kappa1_se: f64,
    /// χ(T) = 1/2 − ψ1(1 − θ/T) from the model, and its SE.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub chi_model: f64,
    /// SE.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub chi_model_se: f64,
    /// χ = 1/2 − A2 V1/v̄² from this temperature's own A2 (or the χ given), and its SE.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub chi_measured: f64,
    /// SE (null when the input gave none).
    pub chi_measured_se: Option<f64>,
}

/// How A2 changes near θ.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct Stability {
    /// dA2/dT at θ, mol m³/kg² per K.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub da2_dt_at_theta: f64,
    /// SE.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub da2_dt_se: f64,
    /// |A2| tolerance used.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub a2_tolerance: f64,
    /// ± kelvin around θ that keeps |A2| under the tolerance.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub plus_minus_k: f64,
}

/// Everything the θ analysis of one series found.
#[derive(Debug, Clone, PartialEq)]
pub struct ThetaResult {
    /// Headline θ, K.
    pub theta_k: Option<f64>,
    /// Its SE (delta method of the headline model), K.
    pub se_k: Option<f64>,
    /// The headline interval.
    pub interval: Interval,
    /// How the headline interval was computed.
    pub ci_method: IntervalMethod,
    /// Why that method.
    pub ci_reason: String,
    /// Confidence level.
    pub confidence: f64,
    /// Where the crossing lies.
    pub crossing: Crossing,
    /// For an extrapolated θ: kelvin beyond the nearest measured temperature.
    pub extrapolated_by_k: Option<f64>,
    /// Why there is no θ, when there is none.
    pub reason: Option<String>,
    /// Headline model.
    pub model: Model,
    /// UCST or LCST type.
    pub sense: Option<Sense>,
    /// Every model's θ.
    pub models: Vec<ModelTheta>,
    /// Fieller interval of the Flory–Krigbaum line.
    pub fieller: Interval,
    /// Critical t of the Fieller interval.
    pub fieller_t: f64,
    /// Degrees of freedom of the line (None: normal quantile).
    pub line_dof: Option<usize>,
    /// Bootstrap, when run.
    pub bootstrap: Option<BootstrapSummary>,
    /// Joint fit, when it ran.
    pub joint: Option<JointFit>,
    /// Mn across temperatures.
    pub mn_consistency: Option<MnConsistency>,
    /// Flory parameters, when v̄ and V1 (or χ) are known.
    pub flory: Option<FloryParameters>,
    /// Temperature stability near θ.
    pub stability: Option<Stability>,
    /// The fitted line (for figures and planning).
    pub line: Option<InverseTemperatureLine>,
    /// The curved fit, when it was tried.
    pub curved: Option<CurvedFit>,
    /// The points the across-temperature models were fitted to (SEs as weighted).
    pub points: Vec<TemperaturePoint>,
    /// Warnings.
    pub warnings: Vec<String>,
    /// The interval is at the limit of what the design can support (a warning says why).
    pub design_limited: bool,
    /// Every sign change between measured temperatures when there are two or more (A2 rises,
    /// passes a maximum and falls again: an upper and a lower θ); empty otherwise.
    pub sign_changes: Vec<SignChange>,
}

impl ThetaResult {
    /// Whether the headline interval holds `theta_k`.
    pub fn interval_contains(&self, theta_k: f64) -> bool {
        match (self.interval.kind, self.interval.low_k, self.interval.high_k) {
            (IntervalKind::None, _, _) => false,
            (_, Some(lo), Some(hi)) => lo <= theta_k && theta_k <= hi,
            (_, Some(lo), None) => lo <= theta_k,
            (_, None, Some(hi)) => theta_k <= hi,
            (_, None, None) => true,
        }
    }

    fn without(reason: String, confidence: f64) -> Self {
        let none = Interval { kind: IntervalKind::None, low_k: None, high_k: None };
        ThetaResult {
            theta_k: None,
            se_k: None,
            interval: none,
            ci_method: IntervalMethod::None,
            ci_reason: reason.clone(),
            confidence,
            crossing: Crossing::None,
            extrapolated_by_k: None,
            reason: Some(reason),
            model: Model::FloryKrigbaum,
            sense: None,
            models: Vec::new(),
            fieller: none,
            fieller_t: f64::NAN,
            line_dof: None,
            bootstrap: None,
            joint: None,
            mn_consistency: None,
            flory: None,
            stability: None,
            line: None,
            curved: None,
            points: Vec::new(),
            warnings: Vec::new(),
            design_limited: false,
            sign_changes: Vec::new(),
        }
    }
}

/// The θ of the Flory–Krigbaum line alone, or `None` where it has no significant trend or no
/// positive zero: the quantity each bootstrap replicate needs.
pub fn line_theta(points: &[TemperaturePoint], basis: SeBasis, confidence: f64) -> Option<f64> {
    let line = InverseTemperatureLine::fit(points, basis).ok()?;
    if line.slope_t().abs() <= line.critical(confidence) {
        return None;
    }
    line.theta_k()
}

/// θ from a set of temperature points (A2 from any route, or 1/2 − χ) whose SEs rest on
/// `basis`. `volumes` turn A2 into ψ1 and χ; for [`Quantity::HalfMinusChi`] ψ1 follows without
/// them.
pub fn theta_from_points(
    points: &[TemperaturePoint],
    basis: SeBasis,
    quantity: Quantity,
    volumes: Option<Volumes>,
    settings: &ThetaSettings,
) -> ThetaResult {
    let confidence = settings.confidence;
    let name = quantity.symbol();
    if points.len() < 2 {
        let mut result = ThetaResult::without(
            format!("{} usable temperature(s): at least two are needed for a temperature trend", points.len()),
            confidence,
        );
        result.points = points.to_vec();
        return result;
    }
    let mut sorted = points.to_vec();
    sorted.sort_by(|a, b| a.temperature_k.total_cmp(&b.temperature_k));
    let t_min = sorted[0].temperature_k;
    let t_max = sorted[sorted.len() - 1].temperature_k;
    let sign_changes = sign_changes(&sorted, basis, confidence);
    let line = match InverseTemperatureLine::fit(points, basis) {
        Ok(line) => line,
        Err(_) if points.len() == 2 => return two_points_without_ses(&sorted, quantity, confidence),
        Err(e) => return ThetaResult::without(format!("the across-temperature fit failed: {e}"), confidence),
    };
    let mut result = ThetaResult::without(String::new(), confidence);
    result.reason = None;
    result.points = points.to_vec();
    result.line_dof = line.dof;
    result.fieller_t = line.critical(confidence);
    result.fieller = line.fieller_theta(confidence).into();
    if points.len() == 2 {
        result.warnings.push(
            "two temperatures only: θ is the crossing of the line through them, its interval rests on their SEs alone"
                .into(),
        );
    }
    if line.variance == LineVariance::ScaledByScatter {
        result.warnings.push(format!(
            "the {name} values scatter about the line more than their SEs allow (χ²/ν = {:.2}, p = {:.3}): the interval is widened by {:.2}×",
            line.reduced_chi2.unwrap_or(f64::NAN),
            line.lack_of_fit_p.unwrap_or(f64::NAN),
            line.scale().sqrt()
        ));
    }
    result.sense = Some(if line.beta < 0.0 { Sense::Ucst } else { Sense::Lcst });

    let slope_t = line.slope_t();
    let significant = slope_t.abs() > result.fieller_t;
    let line_theta = line.theta_k();
    result.models.push(ModelTheta {
        name: Model::FloryKrigbaum,
        theta_k: line_theta,
        se_k: line.theta_se_k(),
        note: (!significant).then(|| format!("slope against 1/T not significant (t = {slope_t:.2})")),
    });
    let local = local_crossing(points);
    result.models.push(local.clone());

    // The curve replaces the line as headline only when the data support it.
    let curved = CurvedFit::fit(points, basis);
    let mut headline: (Option<f64>, Option<f64>) = (line_theta, line.theta_se_k());
    if let Some(c) = &curved {
        let root = c.theta_in(t_min, t_max);
        let supported = c.supported(confidence);
        result.models.push(ModelTheta {
            name: Model::Curved,
            theta_k: root.map(|r| r.0),
            se_k: root.map(|r| r.1),
            note: Some(match (supported, root) {
                (true, Some(_)) => format!("curvature supported (t = {:.2}); used as headline", c.curvature_t),
                (true, None) => "curvature supported but no crossing inside the measured range".into(),
                (false, _) => format!("curvature not supported (t = {:.2}); line kept", c.curvature_t),
            }),
        });
        if let (true, Some((theta, se))) = (supported, root) {
            result.model = Model::Curved;
            headline = (Some(theta), Some(se));
        }
    }
    result.curved = curved;

    if sign_changes.len() >= 2 {
        return two_thetas(result, line, sign_changes, name);
    }
    let bracketed_in_data = sign_changes.len() == 1;
    if !significant && !bracketed_in_data {
        result.reason = Some(format!(
            "{name} shows no significant trend with temperature (the slope against 1/T has t = {slope_t:.2}, needs |t| > {:.2}): no θ",
            result.fieller_t
        ));
        result.interval = Interval { kind: result.fieller.kind, low_k: None, high_k: None };
        result.ci_method = IntervalMethod::Fieller;
        result.ci_reason = "no significant trend, so no finite interval exists".into();
        result.line = Some(line);
        return result;
    }
    let Some(theta) = headline.0 else {
        result.reason = Some(format!("the fitted {name}(T) does not reach zero at any positive temperature"));
        result.line = Some(line);
        return result;
    };
    result.theta_k = Some(theta);
    result.se_k = headline.1;
    if theta < t_min || theta > t_max {
        result.crossing = Crossing::Extrapolated;
        let beyond = if theta < t_min { t_min - theta } else { theta - t_max };
        result.extrapolated_by_k = Some(beyond);
        result.warnings.push(format!(
            "θ lies {beyond:.1} K outside the measured temperatures: extrapolated; measure on the other side of it"
        ));
    } else {
        result.crossing = Crossing::Bracketed;
    }
    if result.model == Model::Curved {
        result.interval = delta_interval(theta, headline.1.unwrap_or(f64::NAN), c_dof_critical(&result, confidence));
        result.ci_method = IntervalMethod::DeltaCurved;
        result.ci_reason = "the curved model is the headline; its interval is θ ± t·SE (delta method)".into();
    } else {
        result.interval = result.fieller;
        result.ci_method = IntervalMethod::Fieller;
        result.ci_reason = "Fieller's interval inverts the t test of A2(θ) = 0 exactly for the line; it is asymmetric where it should be and never invents a bound".into();
    }
    if !significant {
        // A sign change inside the data is a crossing even when the slope is not significant:
        // the estimate stands, its interval is unbounded (Fieller's set is not an interval).
        result.warnings.push(format!(
            "{name} changes sign between the measured temperatures, but the slope against 1/T is not significantly different from zero (t = {slope_t:.2}, needs |t| > {:.2}): θ is an estimate and its {:.0} % interval is unbounded; measure more temperatures or concentrations around it",
            result.fieller_t,
            confidence * 100.0
        ));
        result.ci_reason = "the slope against 1/T is not significant, so Fieller's set is unbounded".into();
    }
    result.flory = flory_parameters(&line, points, quantity, volumes);
    result.stability = stability(&line, quantity, volumes, settings.a2_tolerance);
    result.line = Some(line);
    result
}

/// Each sign change between neighbouring temperatures (sorted) with the zero, SE and Fieller
/// interval of the two-point line in 1/T through them.
fn sign_changes(sorted: &[TemperaturePoint], basis: SeBasis, confidence: f64) -> Vec<SignChange> {
    sorted
        .windows(2)
        .filter(|w| w[0].value.signum() != w[1].value.signum() && w[0].value != 0.0 && w[1].value != 0.0)
        .filter_map(|w| {
            let sense = if w[1].value > w[0].value { Sense::Ucst } else { Sense::Lcst };
            match InverseTemperatureLine::fit(w, basis) {
                Ok(line) => Some(SignChange {
                    theta_k: line.theta_k()?,
                    se_k: line.theta_se_k(),
                    interval: line.fieller_theta(confidence).into(),
                    sense,
                }),
                Err(_) => {
                    let none = Interval { kind: IntervalKind::None, low_k: None, high_k: None };
                    Some(SignChange { theta_k: two_point_zero(w[0], w[1]), se_k: None, interval: none, sense })
                }
            }
        })
        .collect()
}

/// A series with two or more sign changes: an upper and a lower θ. The headline is the lowest
/// crossing; every one is listed with its own interval, and a warning says so.
fn two_thetas(
    mut result: ThetaResult,
    line: InverseTemperatureLine,
    changes: Vec<SignChange>,
    name: &str,
) -> ThetaResult {
    let first = changes[0];
    result.theta_k = Some(first.theta_k);
    result.se_k = first.se_k;
    result.interval = first.interval;
    result.crossing = Crossing::Bracketed;
    result.sense = Some(first.sense);
    result.model = Model::Local;
    result.ci_method = IntervalMethod::Fieller;
    result.ci_reason = "Fieller's interval of the line through the two temperatures that bracket this crossing".into();
    let listed: Vec<String> = changes
        .iter()
        .map(|c| {
            let kind = if c.sense == Sense::Ucst { "UCST-type" } else { "LCST-type" };
            format!("{kind} at {:.1} K", c.theta_k)
        })
        .collect();
    result.warnings.push(format!(
        "{name} is not monotonic in temperature: it changes sign {} times ({}); each θ is from its two neighbouring temperatures, and a single Flory–Krigbaum line does not describe this series",
        changes.len(),
        listed.join(", ")
    ));
    result.sign_changes = changes;
    result.line = Some(line);
    result
}

/// T (K) where the straight line in x = 1/T through two points crosses zero:
/// x₀ = (x_p v_q − x_q v_p)/(v_q − v_p).
fn two_point_zero(p: TemperaturePoint, q: TemperaturePoint) -> f64 {
    let (xp, xq) = (1.0 / p.temperature_k, 1.0 / q.temperature_k);
    (q.value - p.value) / (xp * q.value - xq * p.value)
}

/// Two temperatures without SEs: the crossing of the line through them, with no interval
/// (no residual degrees of freedom).
fn two_points_without_ses(sorted: &[TemperaturePoint], quantity: Quantity, confidence: f64) -> ThetaResult {
    let name = quantity.symbol();
    let (p, q) = (sorted[0], sorted[1]);
    let mut result = ThetaResult::without(String::new(), confidence);
    result.reason = None;
    result.points = sorted.to_vec();
    result.ci_method = IntervalMethod::None;
    result.ci_reason = "two temperatures without SEs leave no residual degrees of freedom: no interval".into();
    result.interval = Interval { kind: IntervalKind::Unbounded, low_k: None, high_k: None };
    result.sense = Some(if q.value > p.value { Sense::Ucst } else { Sense::Lcst });
    if p.value.signum() == q.value.signum() || (q.value - p.value) == 0.0 {
        result.reason = Some(format!("{name} has the same sign at both temperatures: no crossing between them, and two points cannot say where one lies outside them"));
        result.crossing = Crossing::None;
        return result;
    }
    result.theta_k = Some(two_point_zero(p, q));
    result.crossing = Crossing::Bracketed;
    result.model = Model::Local;
    result.warnings.push(
        "two temperatures only and no SEs: θ is the crossing of the straight line through them, an estimate with no interval"
            .into(),
    );
    result
}

fn c_dof_critical(result: &ThetaResult, confidence: f64) -> f64 {
    crate::uncertainty::critical_value(confidence, result.curved.as_ref().and_then(|c| c.dof))
}

fn delta_interval(theta: f64, se: f64, t: f64) -> Interval {
    if se.is_finite() && t.is_finite() {
        Interval { kind: IntervalKind::Bounded, low_k: Some(theta - t * se), high_k: Some(theta + t * se) }
    } else {
        Interval { kind: IntervalKind::Unbounded, low_k: None, high_k: None }
    }
}

/// The zero of the straight line (in T) through the two temperatures that bracket the first
/// sign change; SE by the delta method from the two values' SEs.
pub fn local_crossing(points: &[TemperaturePoint]) -> ModelTheta {
    let mut sorted = points.to_vec();
    sorted.sort_by(|a, b| a.temperature_k.total_cmp(&b.temperature_k));
    for pair in sorted.windows(2) {
        let (p, q) = (pair[0], pair[1]);
        if p.value == 0.0 {
            return ModelTheta { name: Model::Local, theta_k: Some(p.temperature_k), se_k: None, note: None };
        }
        if p.value.signum() != q.value.signum() {
            let dt = q.temperature_k - p.temperature_k;
            let d = p.value - q.value;
            let theta = p.temperature_k + dt * p.value / d;
            let se = match (p.se, q.se) {
                (Some(sp), Some(sq)) => {
                    let gp = dt * (-q.value) / (d * d);
                    let gq = dt * p.value / (d * d);
                    Some(((gp * sp).powi(2) + (gq * sq).powi(2)).sqrt())
                }
                _ => None,
            };
            return ModelTheta { name: Model::Local, theta_k: Some(theta), se_k: se, note: None };
        }
    }
    ModelTheta {
        name: Model::Local,
        theta_k: None,
        se_k: None,
        note: Some("A2 does not change sign between measured temperatures".into()),
    }
}

fn flory_parameters(
    line: &InverseTemperatureLine,
    points: &[TemperaturePoint],
    quantity: Quantity,
    volumes: Option<Volumes>,
) -> Option<FloryParameters> {
    // k converts the fitted quantity into 1/2 − χ.
    let k = match (quantity, volumes) {
        (Quantity::HalfMinusChi, _) => 1.0,
        (Quantity::SecondVirial, Some(v)) => v.a2_per_half_minus_chi(),
        (Quantity::SecondVirial, None) => return None,
    };
    let (var_a, _, var_b) = line.ab_covariance();
    let psi1 = line.a() / k;
    let temperatures = points
        .iter()
        .map(|p| {
            let t = p.temperature_k;
            let (value, value_se) = line.predict(t);
            FloryAtTemperature {
                temperature_k: t,
                // κ1(T) = ψ1 θ/T = −b/(k T).
                kappa1: -line.b() / (k * t),
                kappa1_se: var_b.sqrt() / (k * t),
                chi_model: 0.5 - value / k,
                chi_model_se: value_se / k,
                chi_measured: 0.5 - p.value / k,
                chi_measured_se: p.se.map(|s| s / k),
            }
        })
        .collect();
    Some(FloryParameters { psi1, psi1_se: var_a.sqrt() / k, kappa1_at_theta: psi1, temperatures })
}

fn stability(
    line: &InverseTemperatureLine,
    quantity: Quantity,
    volumes: Option<Volumes>,
    tolerance: f64,
) -> Option<Stability> {
    // A2 = k·value, with k = 1 for A2 and v̄²/V1 for 1/2 − χ.
    let k = match (quantity, volumes) {
        (Quantity::SecondVirial, _) => 1.0,
        (Quantity::HalfMinusChi, Some(v)) => v.a2_per_half_minus_chi(),
        (Quantity::HalfMinusChi, None) => return None,
    };
    let (a, b) = (line.a(), line.b());
    let (var_a, cov_ab, var_b) = line.ab_covariance();
    // dA2/dT at θ = −b/θ² = −a²/b (θ = −b/a); gradient (−2a/b, a²/b²).
    let slope = -k * a * a / b;
    let (ga, gb) = (-2.0 * a / b, a * a / (b * b));
    let se = k * (ga * ga * var_a + 2.0 * ga * gb * cov_ab + gb * gb * var_b).max(0.0).sqrt();
    Some(Stability {
        da2_dt_at_theta: slope,
        da2_dt_se: se,
        a2_tolerance: tolerance,
        plus_minus_k: tolerance / slope.abs(),
    })
}

/// Weighted mean of Mn across temperatures and the test of one common value:
/// χ² = Σ w (Mn_i − mean)², w = 1/SE², on n − 1 dof. Where the SEs rest on a pooled residual
/// variance with ν dof, χ²/(n − 1) is referred to F(n − 1, ν) (the SEs are estimates; a χ²
/// on them alone would fire far above its level, as the coverage study measured).
pub fn mn_consistency(fits: &[&TemperatureFit]) -> Option<MnConsistency> {
    if fits.len() < 2 {
        return None;
    }
    let pairs: Vec<(f64, f64)> = fits.iter().map(|f| (f.fit.mn(), 1.0 / f.mn_se().powi(2))).collect();
    if pairs.iter().any(|(m, w)| !(m.is_finite() && w.is_finite() && *w > 0.0)) {
        return None;
    }
    let w_sum: f64 = pairs.iter().map(|p| p.1).sum();
    let mean = pairs.iter().map(|(m, w)| m * w).sum::<f64>() / w_sum;
    let chi2: f64 = pairs.iter().map(|(m, w)| w * (m - mean).powi(2)).sum();
    let dof = fits.len() - 1;
    let se_dof = fits.iter().filter_map(|f| f.se_dof).min();
    let p_value = scatter_p_value(chi2 / dof as f64, dof, se_dof).unwrap_or(f64::NAN);
    Some(MnConsistency { mean_kg_per_mol: mean, mean_se_kg_per_mol: w_sum.sqrt().recip(), chi2, dof, p_value })
}

/// A2 at each temperature with the SE that weights the across-temperature fit (pooled where
/// the fits were unweighted: [`crate::virial::pool_standard_errors`]), and what those SEs rest
/// on: known where every temperature was weighted by given SDs, else the fewest degrees of
/// freedom behind any of them.
pub fn a2_points(fits: &[TemperatureFit]) -> (Vec<TemperaturePoint>, SeBasis) {
    let points = fits.iter().map(|f| TemperaturePoint {
        temperature_k: f.temperature_k,
        value: f.fit.score.a2,
        se: Some(f.a2_se()),
    });
    (points.collect(), basis_of(fits.iter().map(|f| f.se_dof)))
}

/// Known when no SE was estimated, else the fewest degrees of freedom behind any of them.
fn basis_of(dofs: impl Iterator<Item = Option<usize>>) -> SeBasis {
    dofs.flatten().min().map_or(SeBasis::Known, |dof| SeBasis::Estimated { dof })
}

/// [`a2_points`] for scored forms (a bootstrap replicate): the same pooling.
fn pooled_a2_points<'a>(
    fits: impl Iterator<Item = (f64, bool, &'a FormScore)> + Clone,
) -> (Vec<TemperaturePoint>, SeBasis) {
    let shares: Vec<PoolShare> = fits
        .clone()
        .map(|(_, weighted, s)| PoolShare { weighted, rss_reduced: s.rss_reduced, dof: s.core.dof })
        .collect();
    let (scales, dof) = pooled_scales(&shares);
    let points = fits
        .zip(&scales)
        .map(|((temperature_k, _, s), scale)| TemperaturePoint {
            temperature_k,
            value: s.a2,
            se: Some(s.a2_se * scale.unwrap_or(1.0)),
        })
        .collect();
    let basis = basis_of(shares.iter().zip(&scales).map(|(s, scale)| match scale {
        Some(_) => Some(dof),
        None => (!s.weighted).then_some(s.dof),
    }));
    (points, basis)
}

/// The full θ analysis of an osmometry series: the two-stage models, the joint fit, the
/// Mn check and the bootstrap. `series_index` keys the bootstrap's generators.
pub fn theta_for_series(
    series: &Series,
    fits: &[TemperatureFit],
    noise: PressureNoise,
    volumes: Option<Volumes>,
    settings: &ThetaSettings,
    series_index: u64,
    progress: &dyn crate::progress::Progress,
) -> ThetaResult {
    let (points, basis) = a2_points(fits);
    let mut result = theta_from_points(&points, basis, Quantity::SecondVirial, volumes, settings);
    let fit_refs: Vec<&TemperatureFit> = fits.iter().collect();
    let few = fits.iter().filter(|f| f.fit.lsq.dof < 2).count();
    if few > 0 && result.theta_k.is_some() {
        result.design_limited = true;
        result.warnings.push(format!(
            "{few} of {} temperatures have only 3 concentrations: the curvature of Π/c cannot be judged there, so A2 rests on the form chosen for the series; in the coverage study such designs held θ in 92–94 % of series, not 95 %: measure 5 or more concentrations",
            fits.len()
        ));
    }
    result.mn_consistency = mn_consistency(&fit_refs);
    if let Some(m) = &result.mn_consistency {
        if m.p_value < MN_DRIFT_P {
            result.warnings.push(format!(
                "Mn drifts across temperatures (χ² = {:.1} on {} dof, p = {:.1e}): association near θ, or membrane leakage",
                m.chi2, m.dof, m.p_value
            ));
        }
    }
    let sets: Vec<&TemperatureSet> = fits.iter().filter_map(|f| series.temperatures.get(f.set_index)).collect();
    if let (Some(theta), Some(line)) = (result.theta_k, &result.line) {
        let start_a = line.a();
        match joint_fit(&sets, &fit_refs, noise, theta, start_a) {
            Ok(j) => {
                let two_stage_se = result.se_k.unwrap_or(f64::NAN);
                let note = format!(
                    "differs from the two-stage θ by {:+.2} K ({:.2} two-stage SE){}",
                    j.theta_k - theta,
                    (j.theta_k - theta) / two_stage_se,
                    if j.converged { "" } else { "; solver stopped at its iteration limit" }
                );
                result.models.push(ModelTheta {
                    name: Model::Joint,
                    theta_k: Some(j.theta_k),
                    se_k: Some(j.theta_se_k),
                    note: Some(note),
                });
                result.joint = Some(j);
            }
            Err(e) => result.models.push(ModelTheta {
                name: Model::Joint,
                theta_k: None,
                se_k: None,
                note: Some(e.to_string()),
            }),
        }
    }
    if settings.bootstrap_replicates > 0 && result.theta_k.is_some() {
        result.bootstrap = Some(bootstrap(&sets, &fit_refs, noise, settings, series_index, progress));
    }
    result
}

/// Percentile bootstrap of the line's θ by resampling residuals within each temperature:
/// Π*/(cRT) = ŷ + σ m*, with m* drawn from that temperature's centred, leverage-corrected
/// standardised residuals m = (y − ŷ)/(σ √(1 − h)) (Davison & Hinkley 1997, "Bootstrap Methods
/// and their Application", §6.2.3), σ the reading's SD where given and 1 otherwise. The
/// concentrations stay as designed, so no replicate loses a concentration, and every replicate
/// refits each temperature's chosen form with the series' noise shape, pools the weights and
/// fits the line.
pub fn bootstrap(
    sets: &[&TemperatureSet],
    fits: &[&TemperatureFit],
    noise: PressureNoise,
    settings: &ThetaSettings,
    series_index: u64,
    progress: &dyn crate::progress::Progress,
) -> BootstrapSummary {
    struct Prepared {
        fitted: Vec<f64>,
        sigma: Vec<f64>,
        residuals: Vec<f64>,
        rt: f64,
        form: crate::virial::VirialForm,
    }
    let prepared: Vec<Prepared> = sets
        .iter()
        .zip(fits)
        .map(|(set, fit)| {
            let rt = crate::units::GAS_CONSTANT_J_PER_MOL_K * set.temperature_k;
            let shape = noise.shape(set);
            let sigma: Vec<f64> = (0..set.len())
                .map(|i| {
                    let c = set.concentration_kg_per_m3[i];
                    match (&shape, fit.weighted) {
                        (_, true) => set.pressure_sd_pa[i].unwrap_or(1.0) / (c * rt),
                        (Some(s), false) => s[i] / (c * rt),
                        (None, false) => 1.0,
                    }
                })
                .collect();
            let mut residuals: Vec<f64> = (0..set.len())
                .map(|i| {
                    let y = set.pressure_pa[i] / (set.concentration_kg_per_m3[i] * rt);
                    let h = fit.fit.lsq.leverage[i].min(0.999_999);
                    (y - fit.fit.fitted_reduced[i]) / (sigma[i] * (1.0 - h).sqrt())
                })
                .collect();
            let mean = residuals.iter().sum::<f64>() / residuals.len() as f64;
            residuals.iter_mut().for_each(|m| *m -= mean);
            Prepared { fitted: fit.fit.fitted_reduced.clone(), sigma, residuals, rt, form: fit.fit.score.form }
        })
        .collect();
    let mut thetas: Vec<f64> = (0..settings.bootstrap_replicates as u64)
        .into_par_iter()
        .map_init(
            || (Vec::new(), TemperatureSet::default()),
            |(indices, scratch), r| {
                let mut rng = replicate_rng(settings.seed, series_index, r);
                let mut points = Vec::with_capacity(sets.len());
                for (set, prep) in sets.iter().zip(&prepared) {
                    resample_indices(set.len(), &mut rng, indices);
                    scratch.clone_from(set);
                    for (i, &k) in indices.iter().enumerate() {
                        let y = prep.fitted[i] + prep.sigma[i] * prep.residuals[k];
                        scratch.pressure_pa[i] = (y * set.concentration_kg_per_m3[i] * prep.rt).max(0.0);
                    }
                    // A replicate needs the chosen forms' estimates only, not their residuals.
                    match score_temperature(scratch, FormChoice::Fixed(prep.form), noise) {
                        Ok(fit) => points.push(fit),
                        Err(_) => {
                            progress.advance(1);
                            return None;
                        }
                    }
                }
                progress.advance(1);
                let scored = points.iter().map(|p| (p.temperature_k, p.weighted(), &p.score));
                let (points, basis) = pooled_a2_points(scored);
                line_theta(&points, basis, settings.confidence)
            },
        )
        .flatten()
        .collect();
    thetas.sort_by(f64::total_cmp);
    let alpha = 1.0 - settings.confidence;
    let successful = thetas.len();
    // A percentile interval needs enough replicates in each tail to mean anything.
    let enough = successful as f64 * alpha / 2.0 >= 5.0;
    let mean = thetas.iter().sum::<f64>() / successful.max(1) as f64;
    let sd = (thetas.iter().map(|t| (t - mean).powi(2)).sum::<f64>() / (successful.max(2) - 1) as f64).sqrt();
    BootstrapSummary {
        replicates: settings.bootstrap_replicates,
        successful,
        seed: settings.seed,
        ci_low_k: enough.then(|| percentile(&thetas, alpha / 2.0)),
        ci_high_k: enough.then(|| percentile(&thetas, 1.0 - alpha / 2.0)),
        se_k: (successful >= 2).then_some(sd),
    }
}
