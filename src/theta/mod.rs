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

pub use critical::{critical_route, CriticalRoute};
pub use curved::{brent_root, CurvedFit};
pub use joint::{joint_fit, JointFit};
pub use line::{InverseTemperatureLine, ThetaSet};

use crate::dataset::{Series, TemperatureSet};
use crate::uncertainty::{percentile, replicate_rng, resample_indices};
use crate::virial::{score_temperature, FormChoice, FormScore, TemperatureFit};
use rayon::prelude::*;
use serde::Serialize;
use statrs::distribution::{ChiSquared, ContinuousCDF};

/// One temperature's value for the across-temperature models.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TemperaturePoint {
    /// T, K.
    pub temperature_k: f64,
    /// A2 in mol m³/kg², or 1/2 − χ (dimensionless) for χ tables; see [`Quantity`].
    pub value: f64,
    /// Its standard error (weights 1/SE²), if known.
    pub se: Option<f64>,
}

/// What [`TemperaturePoint::value`] holds. Both cross zero at θ.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Quantity {
    /// A2, mol m³/kg².
    SecondVirial,
    /// 1/2 − χ = A2 V1/v̄², dimensionless.
    HalfMinusChi,
}

/// Settings of the θ analysis.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ThetaSettings {
    /// Confidence level of intervals, e.g. 0.95.
    pub confidence: f64,
    /// Bootstrap replicates (0 = off).
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
            bootstrap_replicates: 2000,
            seed: 1,
            a2_tolerance: DEFAULT_A2_TOLERANCE,
            virial: FormChoice::Auto,
        }
    }
}

/// Polymer and solvent volumes for the Flory parameters, SI.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Volumes {
    /// Polymer partial specific volume v̄, m³/kg.
    pub specific_volume: f64,
    /// Solvent molar volume V1, m³/mol.
    pub molar_volume: f64,
}

impl Volumes {
    /// v̄²/V1, mol m³/kg²: A2 = (v̄²/V1)(1/2 − χ).
    pub fn a2_per_half_minus_chi(&self) -> f64 {
        self.specific_volume * self.specific_volume / self.molar_volume
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
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
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

/// θ from one model.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ModelTheta {
    /// `flory_krigbaum`, `curved`, `local` or `joint`.
    pub name: &'static str,
    /// θ, K (null where the model gives none).
    pub theta_k: Option<f64>,
    /// SE, K.
    pub se_k: Option<f64>,
    /// Why null, or what to know.
    pub note: Option<String>,
}

/// Bootstrap summary.
#[derive(Debug, Clone, PartialEq, Serialize)]
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
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MnConsistency {
    /// Weighted mean Mn (w = 1/SE²), kg/mol.
    pub mean_kg_per_mol: f64,
    /// Its SE, kg/mol.
    pub mean_se_kg_per_mol: f64,
    /// χ² = Σ w (Mn_i − mean)².
    pub chi2: f64,
    /// n − 1.
    pub dof: usize,
    /// P(χ²_dof ≥ observed).
    pub p_value: f64,
}

/// Significance below which the Mn drift is a warning.
pub const MN_DRIFT_P: f64 = 0.01;

/// The Flory–Krigbaum / Flory–Huggins parameters.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FloryParameters {
    /// ψ1 (entropy of dilution parameter) and its SE.
    pub psi1: f64,
    /// SE of ψ1.
    pub psi1_se: f64,
    /// κ1 at θ (= ψ1).
    pub kappa1_at_theta: f64,
    /// Per measured temperature.
    pub temperatures: Vec<FloryAtTemperature>,
}

/// Flory parameters at one temperature.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FloryAtTemperature {
    /// T, K.
    pub temperature_k: f64,
    /// κ1(T) = ψ1 θ/T and its SE.
    pub kappa1: f64,
    /// SE.
    pub kappa1_se: f64,
    /// χ(T) = 1/2 − ψ1(1 − θ/T) from the model, and its SE.
    pub chi_model: f64,
    /// SE.
    pub chi_model_se: f64,
    /// χ = 1/2 − A2 V1/v̄² from this temperature's own A2 (or the χ given), and its SE.
    pub chi_measured: f64,
    /// SE (null when the input gave none).
    pub chi_measured_se: Option<f64>,
}

/// How A2 changes near θ.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Stability {
    /// dA2/dT at θ, mol m³/kg² per K.
    pub da2_dt_at_theta: f64,
    /// SE.
    pub da2_dt_se: f64,
    /// |A2| tolerance used.
    pub a2_tolerance: f64,
    /// ± kelvin around θ that keeps |A2| under the tolerance.
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
    pub ci_method: &'static str,
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
    pub model: &'static str,
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
}

impl ThetaResult {
    fn without(reason: String, confidence: f64) -> Self {
        let none = Interval { kind: IntervalKind::None, low_k: None, high_k: None };
        ThetaResult {
            theta_k: None,
            se_k: None,
            interval: none,
            ci_method: "none",
            ci_reason: reason.clone(),
            confidence,
            crossing: Crossing::None,
            extrapolated_by_k: None,
            reason: Some(reason),
            model: "flory_krigbaum",
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
        }
    }
}

/// The θ of the Flory–Krigbaum line alone, or `None` where it has no significant trend or no
/// positive zero: the quantity each bootstrap replicate needs.
pub fn line_theta(points: &[TemperaturePoint], confidence: f64) -> Option<f64> {
    let line = InverseTemperatureLine::fit(points).ok()?;
    if line.slope_t().abs() <= line.critical(confidence) {
        return None;
    }
    line.theta_k()
}

/// θ from a set of temperature points (A2 from any route, or 1/2 − χ). `volumes` turn A2 into
/// ψ1 and χ; for [`Quantity::HalfMinusChi`] ψ1 follows without them.
pub fn theta_from_points(
    points: &[TemperaturePoint],
    quantity: Quantity,
    volumes: Option<Volumes>,
    settings: &ThetaSettings,
) -> ThetaResult {
    let confidence = settings.confidence;
    if points.len() < 2 {
        let mut result = ThetaResult::without(
            format!("{} usable temperature(s): at least two are needed for a temperature trend", points.len()),
            confidence,
        );
        result.points = points.to_vec();
        return result;
    }
    let line = match InverseTemperatureLine::fit(points) {
        Ok(line) => line,
        Err(e) => return ThetaResult::without(format!("the across-temperature fit failed: {e}"), confidence),
    };
    let mut result = ThetaResult::without(String::new(), confidence);
    result.reason = None;
    result.points = points.to_vec();
    result.line_dof = line.dof;
    result.fieller_t = line.critical(confidence);
    result.fieller = line.fieller_theta(confidence).into();
    if line.dof.is_none() {
        result.warnings.push("two temperatures only: the interval rests on the per-temperature SEs alone".into());
    }
    let t_min = points.iter().map(|p| p.temperature_k).fold(f64::INFINITY, f64::min);
    let t_max = points.iter().map(|p| p.temperature_k).fold(f64::NEG_INFINITY, f64::max);
    result.sense = Some(if line.beta < 0.0 { Sense::Ucst } else { Sense::Lcst });

    let slope_t = line.slope_t();
    let significant = slope_t.abs() > result.fieller_t;
    let line_theta = line.theta_k();
    result.models.push(ModelTheta {
        name: "flory_krigbaum",
        theta_k: line_theta,
        se_k: line.theta_se_k(),
        note: (!significant).then(|| format!("slope in 1/T not significant (t = {slope_t:.2})")),
    });
    let local = local_crossing(points);
    result.models.push(local.clone());

    // The curve replaces the line as headline only when the data support it.
    let curved = CurvedFit::fit(points);
    let mut headline: (Option<f64>, Option<f64>) = (line_theta, line.theta_se_k());
    if let Some(c) = &curved {
        let root = c.theta_in(t_min, t_max);
        let supported = c.supported(confidence);
        result.models.push(ModelTheta {
            name: "curved",
            theta_k: root.map(|r| r.0),
            se_k: root.map(|r| r.1),
            note: Some(match (supported, root) {
                (true, Some(_)) => format!("curvature supported (t = {:.2}); used as headline", c.curvature_t),
                (true, None) => "curvature supported but no crossing inside the measured range".into(),
                (false, _) => format!("curvature not supported (t = {:.2}); line kept", c.curvature_t),
            }),
        });
        if let (true, Some((theta, se))) = (supported, root) {
            result.model = "curved";
            headline = (Some(theta), Some(se));
        }
    }
    result.curved = curved;

    if !significant {
        result.reason = Some(format!(
            "A2 shows no significant trend with temperature (slope t = {slope_t:.2}, needs |t| > {:.2}): no θ",
            result.fieller_t
        ));
        result.interval = Interval { kind: result.fieller.kind, low_k: None, high_k: None };
        result.ci_method = "fieller";
        result.ci_reason = "no significant trend, so no finite interval exists".into();
        result.line = Some(line);
        return result;
    }
    let Some(theta) = headline.0 else {
        result.reason = Some("the fitted A2(T) does not reach zero at any positive temperature".into());
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
    if result.model == "curved" {
        result.interval = delta_interval(theta, headline.1.unwrap_or(f64::NAN), c_dof_critical(&result, confidence));
        result.ci_method = "delta_curved";
        result.ci_reason = "the curved model is the headline; its interval is θ ± t·SE (delta method)".into();
    } else {
        result.interval = result.fieller;
        result.ci_method = "fieller";
        result.ci_reason = "Fieller's interval inverts the t test of A2(θ) = 0 exactly for the line; it is asymmetric where it should be and never invents a bound".into();
    }
    result.flory = flory_parameters(&line, points, quantity, volumes);
    result.stability = stability(&line, quantity, volumes, settings.a2_tolerance);
    result.line = Some(line);
    result
}

fn c_dof_critical(result: &ThetaResult, confidence: f64) -> f64 {
    let dof = result.curved.as_ref().map(|c| c.dof);
    crate::uncertainty::critical_value(confidence, dof)
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
            return ModelTheta { name: "local", theta_k: Some(p.temperature_k), se_k: None, note: None };
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
            return ModelTheta { name: "local", theta_k: Some(theta), se_k: se, note: None };
        }
    }
    ModelTheta {
        name: "local",
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

/// Weighted mean of Mn across temperatures and the χ² test of one common value.
pub fn mn_consistency(fits: &[&TemperatureFit]) -> Option<MnConsistency> {
    if fits.len() < 2 {
        return None;
    }
    let pairs: Vec<(f64, f64)> = fits.iter().map(|f| (f.fit.mn(), 1.0 / f.fit.mn_se().powi(2))).collect();
    if pairs.iter().any(|(m, w)| !(m.is_finite() && w.is_finite() && *w > 0.0)) {
        return None;
    }
    let w_sum: f64 = pairs.iter().map(|p| p.1).sum();
    let mean = pairs.iter().map(|(m, w)| m * w).sum::<f64>() / w_sum;
    let chi2: f64 = pairs.iter().map(|(m, w)| w * (m - mean).powi(2)).sum();
    let dof = fits.len() - 1;
    let p_value = ChiSquared::new(dof as f64).map(|d| d.sf(chi2)).unwrap_or(f64::NAN);
    Some(MnConsistency { mean_kg_per_mol: mean, mean_se_kg_per_mol: w_sum.sqrt().recip(), chi2, dof, p_value })
}

/// A2 at each temperature with the SE that weights the across-temperature fit.
///
/// Where the per-temperature fits were weighted by known pressure SDs, their SEs are used as
/// they are. Where they were unweighted, each SE rests on a residual SD with only n − p
/// degrees of freedom (often 3), and weights 1/SE² that noisy pull the line towards whichever
/// temperature happened to scatter least. The same instrument measured every temperature, so
/// the residual variance of Π/(cRT) is pooled over temperatures and each SE is rescaled by
/// s_pooled/s_i: the weights then carry the design (number and spread of concentrations), not
/// the luck of each temperature's residuals.
pub fn a2_points(fits: &[TemperatureFit]) -> Vec<TemperaturePoint> {
    pooled_a2_points(fits.iter().map(|f| (f.temperature_k, f.weighted, &f.fit.score)))
}

/// [`a2_points`] from each temperature's T, whether it was weighted, and its chosen form.
fn pooled_a2_points<'a>(fits: impl Iterator<Item = (f64, bool, &'a FormScore)> + Clone) -> Vec<TemperaturePoint> {
    let pool = |weighted: bool, s: &FormScore| !weighted && s.core.dof > 0;
    let (rss, dof) = fits
        .clone()
        .filter(|(_, w, s)| pool(*w, s))
        .fold((0.0, 0usize), |(r, d), (_, _, s)| (r + s.rss_reduced, d + s.core.dof));
    let pooled_sd = (dof > 0).then(|| (rss / dof as f64).sqrt());
    fits.map(|(temperature_k, weighted, s)| {
        let se = match pooled_sd {
            Some(sp) if pool(weighted, s) && s.rss_reduced > 0.0 => {
                let own = (s.rss_reduced / s.core.dof as f64).sqrt();
                s.a2_se * sp / own
            }
            _ => s.a2_se,
        };
        TemperaturePoint { temperature_k, value: s.a2, se: Some(se) }
    })
    .collect()
}

/// The full θ analysis of an osmometry series: the two-stage models, the joint fit, the
/// Mn check and the bootstrap. `series_index` keys the bootstrap's generators.
pub fn theta_for_series(
    series: &Series,
    fits: &[TemperatureFit],
    volumes: Option<Volumes>,
    settings: &ThetaSettings,
    series_index: u64,
    progress: &dyn crate::analysis::Progress,
) -> ThetaResult {
    let points = a2_points(fits);
    let mut result = theta_from_points(&points, Quantity::SecondVirial, volumes, settings);
    let fit_refs: Vec<&TemperatureFit> = fits.iter().collect();
    result.mn_consistency = mn_consistency(&fit_refs);
    if let Some(m) = &result.mn_consistency {
        if m.p_value < MN_DRIFT_P {
            result.warnings.push(format!(
                "Mn drifts across temperatures (χ² = {:.1} on {} dof, p = {:.1e}): association near θ, or membrane leakage",
                m.chi2, m.dof, m.p_value
            ));
        }
    }
    let sets: Vec<&TemperatureSet> =
        fits.iter().filter_map(|f| series.temperatures.iter().find(|s| s.temperature_k == f.temperature_k)).collect();
    if let (Some(theta), Some(line)) = (result.theta_k, &result.line) {
        let start_a = line.a();
        match joint_fit(&sets, &fit_refs, theta, start_a) {
            Ok(j) => {
                let two_stage_se = result.se_k.unwrap_or(f64::NAN);
                let note = format!(
                    "differs from the two-stage θ by {:+.2} K ({:.2} two-stage SE){}",
                    j.theta_k - theta,
                    (j.theta_k - theta) / two_stage_se,
                    if j.converged { "" } else { "; solver stopped at its iteration limit" }
                );
                result.models.push(ModelTheta {
                    name: "joint",
                    theta_k: Some(j.theta_k),
                    se_k: Some(j.theta_se_k),
                    note: Some(note),
                });
                result.joint = Some(j);
            }
            Err(e) => {
                result.models.push(ModelTheta { name: "joint", theta_k: None, se_k: None, note: Some(e.to_string()) })
            }
        }
    }
    if settings.bootstrap_replicates > 0 && result.theta_k.is_some() {
        result.bootstrap = Some(bootstrap(&sets, &fit_refs, settings, series_index, progress));
    }
    result
}

/// Percentile bootstrap of the line's θ by resampling residuals within each temperature:
/// Π*/(cRT) = ŷ + σ m*, with m* drawn from that temperature's centred, leverage-corrected
/// standardised residuals m = (y − ŷ)/(σ √(1 − h)) (Davison & Hinkley 1997, "Bootstrap Methods
/// and their Application", §6.2.3), σ the reading's SD where given and 1 otherwise. The
/// concentrations stay as designed, so no replicate loses a concentration, and every replicate
/// reruns the whole pipeline: form choice, per-temperature fits, pooled weights, the line.
pub fn bootstrap(
    sets: &[&TemperatureSet],
    fits: &[&TemperatureFit],
    settings: &ThetaSettings,
    series_index: u64,
    progress: &dyn crate::analysis::Progress,
) -> BootstrapSummary {
    struct Prepared {
        fitted: Vec<f64>,
        sigma: Vec<f64>,
        residuals: Vec<f64>,
        rt: f64,
    }
    let prepared: Vec<Prepared> = sets
        .iter()
        .zip(fits)
        .map(|(set, fit)| {
            let rt = crate::units::GAS_CONSTANT_J_PER_MOL_K * set.temperature_k;
            let sigma: Vec<f64> = set
                .pressure_sd_pa
                .iter()
                .zip(&set.concentration_kg_per_m3)
                .map(|(sd, c)| if fit.weighted { sd.unwrap_or(1.0) / (c * rt) } else { 1.0 })
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
            Prepared { fitted: fit.fit.fitted_reduced.clone(), sigma, residuals, rt }
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
                    match score_temperature(scratch, settings.virial) {
                        Ok(fit) => points.push(fit),
                        Err(_) => {
                            progress.advance(1);
                            return None;
                        }
                    }
                }
                progress.advance(1);
                let scored = points.iter().map(|p| (p.temperature_k, p.weighted(), &p.score));
                line_theta(&pooled_a2_points(scored), settings.confidence)
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
