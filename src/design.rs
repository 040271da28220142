//! Where to measure next: the predicted θ standard error and interval width after adding
//! temperatures to a series, from the information matrix of the across-temperature line and
//! the noise level of the per-temperature fits. Pure computation.
//!
//! Line: A2 = α + β u, u = 1/T − x̄, weights w_i = 1/SE_i². Information M = Σ w_i (1, u_i)ᵀ(1, u_i);
//! Cov(α, β) = φ M⁻¹ with φ the line's scale (1, or its reduced χ² where the points scatter
//! more than their SEs allow), as the analysis takes it. A new temperature T with
//! concentrations c_j (each measured r times) adds w = r Σ(c_j − c̄)² / s², where s is the noise
//! of Π/(cRT) inferred from the measured temperatures (SE_i = s / √Σ(c − c̄)² for a straight
//! virial line), interpolated to T. θ = 1/(x̄ − α/β), its SE by the delta method, its interval by Fieller with
//! n + k − 2 degrees of freedom.

use crate::dataset::TemperaturePoint;
use crate::safety::{cautions, Exclusion, SafeWindow};
use crate::theta::{InverseTemperatureLine, SeBasis};
use crate::uncertainty::{critical_value, fieller_zero, replicate_rng, FiellerSet};
use crate::units::kelvin_to_celsius;
use rand_distr::{Distribution, Normal};
use serde::Serialize;

/// One measured temperature of the series.
#[derive(Debug, Clone, PartialEq)]
pub struct MeasuredTemperature {
    /// T, A2 (mol m³/kg²) and the SE that weighted it.
    pub point: TemperaturePoint,
    /// Concentrations measured there, kg/m³.
    pub concentrations: Vec<f64>,
}

/// Settings of the search.
#[derive(Debug, Clone, PartialEq)]
pub struct DesignSettings {
    /// Where runs may be recommended: the thermostat's range narrowed by the solvent's liquid
    /// range and the sample's critical temperature ([`SafeWindow`]).
    pub window: SafeWindow,
    /// Grid step of candidate temperatures, K.
    pub step_k: f64,
    /// Concentrations of a new run, kg/m³ (`None`: the ones most used so far).
    pub concentrations: Option<Vec<f64>>,
    /// Replicates of each concentration in a new run.
    pub replicates: usize,
    /// New temperature runs to plan.
    pub budget: usize,
    /// Confidence level.
    pub confidence: f64,
    /// Simulated datasets for the check of the recommended design (0: none).
    pub simulations: usize,
    /// Seed of the simulation.
    pub seed: u64,
}

/// θ now.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Current {
    /// θ, K.
    pub theta_k: Option<f64>,
    /// SE, K.
    pub se_k: Option<f64>,
    /// Fieller interval width, K (null when unbounded).
    pub ci_width_k: Option<f64>,
}

/// One candidate temperature.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CandidateRun {
    /// T, °C.
    pub temperature_c: f64,
    /// Concentrations of the run, g/mL.
    pub concentrations_g_per_ml: Vec<f64>,
    /// Readings the run costs.
    pub measurements: usize,
    /// Predicted SE of θ after adding it (to the runs before it, for recommendations), K.
    pub predicted_se_k: Option<f64>,
    /// Predicted interval width, K.
    pub predicted_ci_width_k: Option<f64>,
    /// Today's width minus the predicted one, K.
    pub gain_k: Option<f64>,
}

/// The advice for one series.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SeriesDesign {
    /// Series name.
    pub name: String,
    /// Confidence level of every interval width here.
    pub confidence: f64,
    /// θ now.
    pub current: Current,
    /// The runs to make, in order.
    pub recommended: Vec<CandidateRun>,
    /// Every candidate, best first.
    pub candidates: Vec<CandidateRun>,
    /// Predicted SE of the recommended design against the SD of θ over simulated datasets of it.
    pub simulated_se_k: Option<f64>,
    /// What to do, in words.
    pub advice: Vec<String>,
    /// The window the runs were chosen in, °C (null when nothing is left in it).
    pub window_c: Option<[f64; 2]>,
    /// The ranges left out of the thermostat's, and why.
    pub excluded: Vec<Exclusion>,
    /// What could not be checked.
    pub unchecked: Vec<String>,
    /// Safety cautions, always given.
    pub cautions: Vec<String>,
}

/// A predicted (θ SE, Fieller width), K; `None` where not defined.
type Prediction = (Option<f64>, Option<f64>);

/// The line's pieces needed for prediction.
struct Model {
    x_centre: f64,
    alpha: f64,
    beta: f64,
    phi: f64,
    /// Information of the measured temperatures: M00, M01, M11.
    info: [f64; 3],
    /// Noise of Π/(cRT) at each measured temperature, (K, mol/kg), ascending in T.
    noise: Vec<(f64, f64)>,
    n: usize,
    confidence: f64,
}

/// Σ(c − c̄)², the spread that fixes a straight virial line's slope precision.
fn spread(c: &[f64]) -> f64 {
    let mean = c.iter().sum::<f64>() / c.len().max(1) as f64;
    c.iter().map(|c| (c - mean).powi(2)).sum()
}

impl Model {
    fn new(points: &[MeasuredTemperature], confidence: f64) -> Option<Self> {
        let tp: Vec<TemperaturePoint> = points.iter().map(|m| m.point).collect();
        let line = InverseTemperatureLine::fit(&tp, SeBasis::Known).ok()?;
        let mut info = [0.0; 3];
        let mut noise: Vec<(f64, f64)> = Vec::new();
        for m in points {
            let se = m.point.se?;
            let u = 1.0 / m.point.temperature_k - line.x_centre;
            let w = 1.0 / (se * se);
            info[0] += w;
            info[1] += w * u;
            info[2] += w * u * u;
            noise.push((m.point.temperature_k, se * spread(&m.concentrations).sqrt()));
        }
        noise.sort_by(|a, b| a.0.total_cmp(&b.0));
        if noise.is_empty() {
            return None;
        }
        Some(Model {
            x_centre: line.x_centre,
            alpha: line.alpha,
            beta: line.beta,
            // As the analysis scales the line's covariance: 1 unless the points scatter more
            // than their SEs allow.
            phi: line.scale(),
            info,
            noise,
            n: points.len(),
            confidence,
        })
    }

    /// Weight of a new run at T (K) at these concentrations. The noise is interpolated between
    /// the measured temperatures (the nearest one's beyond them): an SE carries the share of
    /// the series' form choice, which grows with |A2|, so it varies across temperatures.
    fn weight(&self, temperature_k: f64, concentrations: &[f64], replicates: usize) -> f64 {
        let noise = match self.noise.iter().position(|(t, _)| *t >= temperature_k) {
            Some(0) => self.noise[0].1,
            None => self.noise[self.noise.len() - 1].1,
            Some(k) => {
                let ((t0, n0), (t1, n1)) = (self.noise[k - 1], self.noise[k]);
                n0 + (n1 - n0) * (temperature_k - t0) / (t1 - t0)
            }
        };
        replicates as f64 * spread(concentrations) / (noise * noise)
    }

    /// (θ SE, Fieller width) after adding runs (T, weight), `info` scaled by `boost` (2 = every
    /// measured temperature measured once more).
    fn predict(&self, added: &[(f64, f64)], boost: f64) -> Prediction {
        let mut m = [self.info[0] * boost, self.info[1] * boost, self.info[2] * boost];
        for &(t, w) in added {
            let u = 1.0 / t - self.x_centre;
            m[0] += w;
            m[1] += w * u;
            m[2] += w * u * u;
        }
        let det = m[0] * m[2] - m[1] * m[1];
        if !(det.is_finite() && det > 0.0) {
            return (None, None);
        }
        let (va, cab, vb) = (self.phi * m[2] / det, -self.phi * m[1] / det, self.phi * m[0] / det);
        let (a, b) = (self.alpha, self.beta);
        let x = self.x_centre - a / b;
        if !(x.is_finite() && x > 0.0) {
            return (None, None);
        }
        let theta = 1.0 / x;
        let r = a / b;
        let var_x = (va - 2.0 * r * cab + r * r * vb) / (b * b);
        let se = theta * theta * var_x.max(0.0).sqrt();
        let dof = (self.n + added.len()).saturating_sub(2);
        let t = critical_value(self.confidence, (dof > 0).then_some(dof));
        let width = match fieller_zero(a, b, va, cab, vb, t) {
            FiellerSet::Bounded(lo, hi) if self.x_centre + lo > 0.0 => {
                Some(1.0 / (self.x_centre + lo) - 1.0 / (self.x_centre + hi))
            }
            _ => None,
        };
        (Some(se), width)
    }
}

/// Plans the next runs for one series.
pub fn next_runs(name: &str, points: &[MeasuredTemperature], settings: &DesignSettings) -> SeriesDesign {
    let mut design = SeriesDesign {
        name: name.to_string(),
        confidence: settings.confidence,
        current: Current { theta_k: None, se_k: None, ci_width_k: None },
        recommended: Vec::new(),
        candidates: Vec::new(),
        simulated_se_k: None,
        advice: Vec::new(),
        window_c: (!settings.window.is_empty())
            .then(|| [kelvin_to_celsius(settings.window.low_k), kelvin_to_celsius(settings.window.high_k)]),
        excluded: settings.window.exclusions.clone(),
        unchecked: settings.window.unchecked.clone(),
        cautions: cautions(),
    };
    let Some(model) = Model::new(points, settings.confidence) else {
        design.advice.push("fewer than two temperatures with a standard error: measure at two temperatures on either side of the expected θ first".into());
        return design;
    };
    let concentrations = settings.concentrations.clone().unwrap_or_else(|| most_used(points));
    let weight = |t: f64| model.weight(t, &concentrations, settings.replicates);
    let measurements = concentrations.len() * settings.replicates;
    let (se_now, width_now) = model.predict(&[], 1.0);
    let theta_now = {
        let x = model.x_centre - model.alpha / model.beta;
        (x > 0.0).then(|| 1.0 / x)
    };
    design.current = Current { theta_k: theta_now, se_k: se_now, ci_width_k: width_now };
    let run = |t: f64, (se, width): Prediction| CandidateRun {
        temperature_c: kelvin_to_celsius(t),
        concentrations_g_per_ml: concentrations.iter().map(|c| c * 1e-3).collect(),
        measurements,
        predicted_se_k: se,
        predicted_ci_width_k: width,
        gain_k: match (width_now, width) {
            (Some(now), Some(w)) => Some(now - w),
            _ => None,
        },
    };
    let grid: Vec<f64> = {
        let (lo, hi) = (settings.window.low_k, settings.window.high_k);
        if settings.window.is_empty() {
            Vec::new()
        } else {
            let steps = ((hi - lo) / settings.step_k.max(0.01)).floor() as usize;
            (0..=steps.min(10_000)).map(|i| lo + settings.step_k * i as f64).collect()
        }
    };
    if grid.is_empty() {
        design
            .advice
            .push("no temperature is left inside the safe window (see the exclusions): nothing is recommended".into());
    }
    let score = |p: &Prediction| p.1.or(p.0.map(|se| 1e6 + se)).unwrap_or(f64::INFINITY);
    let mut candidates: Vec<(f64, Prediction)> =
        grid.iter().map(|&t| (t, model.predict(&[(t, weight(t))], 1.0))).collect();
    candidates.sort_by(|a, b| score(&a.1).total_cmp(&score(&b.1)));
    design.candidates = candidates.iter().map(|(t, p)| run(*t, *p)).collect();

    // Recommended runs: bracket an extrapolated θ first, then greedily the best next run.
    let (t_min, t_max) = points.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), m| {
        (a.min(m.point.temperature_k), b.max(m.point.temperature_k))
    });
    let mut added: Vec<(f64, f64)> = Vec::new();
    if let Some(theta) = theta_now.filter(|t| *t < t_min || *t > t_max) {
        let near = if theta < t_min { t_min } else { t_max };
        let mirror =
            (theta + (theta - near)).clamp(settings.window.low_k, settings.window.high_k.max(settings.window.low_k));
        let bracket = grid.iter().copied().min_by(|a, b| (a - mirror).abs().total_cmp(&(b - mirror).abs()));
        if let Some(t) = bracket.filter(|t| (*t - theta).signum() != (near - theta).signum()) {
            added.push((t, weight(t)));
            design.advice.push(format!(
                "θ ({:.1} °C) lies outside the measured temperatures: first measure at {:.1} °C, on its other side, so that the crossing is bracketed",
                kelvin_to_celsius(theta),
                kelvin_to_celsius(t)
            ));
            design.recommended.push(run(t, model.predict(&added, 1.0)));
        } else {
            design.advice.push("θ lies outside the measured temperatures and beyond the safe window: it cannot be bracketed safely with this solvent and instrument".into());
        }
    }
    while design.recommended.len() < settings.budget {
        let best = grid
            .iter()
            .map(|&t| {
                let mut trial = added.clone();
                trial.push((t, weight(t)));
                (t, model.predict(&trial, 1.0))
            })
            .min_by(|a, b| score(&a.1).total_cmp(&score(&b.1)));
        let Some((t, p)) = best else { break };
        added.push((t, weight(t)));
        design.recommended.push(run(t, p));
    }

    // Would replicating the measured temperatures help more than a new one, per reading?
    let replicate_cost: usize = points.iter().map(|m| m.concentrations.len()).sum();
    if let (Some(now), (_, Some(replicated)), Some(best)) =
        (width_now, model.predict(&[], 2.0), design.candidates.first().and_then(|c| c.predicted_ci_width_k))
    {
        let per_reading_replicate = (now - replicated) / replicate_cost.max(1) as f64;
        let per_reading_new = (now - best) / measurements.max(1) as f64;
        if per_reading_replicate > per_reading_new {
            design.advice.push(format!(
                "the per-temperature A2 errors dominate: repeating the measured temperatures narrows the interval by {:.3} K per reading against {:.3} K for a new temperature; measure more replicates or higher concentrations (staying dilute, below the overlap concentration)",
                per_reading_replicate, per_reading_new
            ));
        } else {
            design.advice.push(format!(
                "a new temperature helps most: {:.3} K narrower per reading, against {:.3} K for repeating the measured ones",
                per_reading_new, per_reading_replicate
            ));
        }
    }
    if model.phi > 2.0 {
        design.advice.push(format!(
            "the A2 values scatter {:.1}× more than their SEs allow: new temperatures (not replicates) and a check of the A2(T) model are needed",
            model.phi.sqrt()
        ));
    }
    if settings.simulations > 0 {
        design.simulated_se_k = simulate_design(&model, points, &added, settings);
    }
    design
}

/// The concentration set used most often so far.
fn most_used(points: &[MeasuredTemperature]) -> Vec<f64> {
    let mut best: (usize, Vec<f64>) = (0, Vec::new());
    for m in points {
        let n = points.iter().filter(|o| o.concentrations == m.concentrations).count();
        if n > best.0 {
            best = (n, m.concentrations.clone());
        }
    }
    best.1
}

/// SD of θ over simulated A2 datasets of the recommended design: each temperature's A2 drawn
/// from the fitted line with its SE (√φ-scaled), the line refitted. A check of the delta method.
fn simulate_design(
    model: &Model,
    points: &[MeasuredTemperature],
    added: &[(f64, f64)],
    settings: &DesignSettings,
) -> Option<f64> {
    let mut design: Vec<(f64, f64)> =
        points.iter().filter_map(|m| m.point.se.map(|se| (m.point.temperature_k, se))).collect();
    design.extend(added.iter().map(|&(t, w)| (t, 1.0 / w.sqrt())));
    let mut thetas = Vec::with_capacity(settings.simulations);
    for k in 0..settings.simulations as u64 {
        let mut rng = replicate_rng(settings.seed, u64::MAX, k);
        let sim: Vec<TemperaturePoint> = design
            .iter()
            .map(|&(t, se)| {
                let truth = model.alpha + model.beta * (1.0 / t - model.x_centre);
                let draw = Normal::new(0.0, se * model.phi.sqrt()).map_or(0.0, |n| n.sample(&mut rng));
                TemperaturePoint { temperature_k: t, value: truth + draw, se: Some(se) }
            })
            .collect();
        if let Some(theta) = InverseTemperatureLine::fit(&sim, SeBasis::Known).ok().and_then(|l| l.theta_k()) {
            thetas.push(theta);
        }
    }
    if thetas.len() < 10 {
        return None;
    }
    let mean = thetas.iter().sum::<f64>() / thetas.len() as f64;
    Some((thetas.iter().map(|t| (t - mean).powi(2)).sum::<f64>() / (thetas.len() - 1) as f64).sqrt())
}
