//! Across-temperature models and the θ temperature: where A2(T) crosses zero, how sure we
//! are, and what the Flory–Krigbaum / Flory–Huggins parameters say.
//!
//! Models: the Flory–Krigbaum line A2 = a + b/T (headline), A2 quadratic in 1/T (used when
//! the data support it), the local two-point crossing, and the joint fit of every reading.
//! Intervals: delta method, Fieller, and a seeded bootstrap that reruns the whole pipeline.

mod bootstrap;
mod critical;
mod curved;
mod flory;
mod joint;
mod line;
mod mn_check;
mod result;
mod routes;

pub use bootstrap::bootstrap;
pub use critical::{critical_route, CriticalRoute};
pub use curved::CurvedFit;
use flory::*;
pub use joint::{joint_fit, JointFit};
pub use line::{
    scatter_p_value, FittedLine, InverseTemperatureLine, LineScatter, LineVariance, SeBasis, ThetaSet, WeightedLine,
    LACK_OF_FIT_P,
};
pub use mn_check::{mn_consistency, MnConsistency, MN_DRIFT_P};
pub use result::*;
pub use routes::{compare_routes, RouteComparison, RouteDifference, RouteTheta, DISAGREE_P};

use crate::dataset::{Quantity, Series, TemperaturePoint, TemperatureSet, Volumes};
use crate::uncertainty::{percentile, replicate_rng, resample_indices};
use crate::virial::{
    pooled_scales, score_temperature, FormChoice, FormScore, PoolShare, PressureNoise, TemperatureFit,
};
use rayon::prelude::*;
use serde::Serialize;

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
