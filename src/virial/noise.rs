//! The shape of a series' reading noise when the file gives no SDs: estimated once from every
//! reading of the series, so that each temperature's fit is weighted as the instrument's noise
//! actually falls (Carroll & Ruppert 1988, "Transformation and Weighting in Regression", §2.7
//! and §3.3: weights from a variance function whose form is chosen by pooled likelihood).

use super::forms::{fit_form, Readings, VirialForm};
use crate::dataset::TemperatureSet;
use crate::numerics::linear::Weights;
use crate::units::GAS_CONSTANT_J_PER_MOL_K;
use serde::{Deserialize, Serialize};

/// How σ(Π) runs across a series' readings, up to one factor shared by all of them.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum PressureNoise {
    /// The file gave an SD for every reading: those weight the fits (absolute).
    GivenSds,
    /// σ of Π/(cRT) the same at every reading: σ_Π ∝ c T (unweighted reduced pressures).
    FlatReduced,
    /// σ_Π the same at every reading (an instrument's floor): σ of Π/(cRT) ∝ 1/(c T).
    ConstantPressure,
    /// σ_Π proportional to Π (a gain error).
    ProportionalPressure,
    /// A floor and a gain error together: σ_Π ∝ √(1 + (Π/Π×)²), the two equal at Π×.
    FloorAndGain {
        /// The crossover pressure Π×, Pa.
        crossover_pa: f64,
    },
}

impl PressureNoise {
    /// Words for reports.
    pub fn describe(self) -> &'static str {
        match self {
            PressureNoise::GivenSds => "the SDs given with the readings",
            PressureNoise::FlatReduced => "equal scatter of Π/(cRT) at every reading",
            PressureNoise::ConstantPressure => "equal scatter of Π at every reading",
            PressureNoise::ProportionalPressure => "scatter of Π proportional to Π",
            PressureNoise::FloorAndGain { .. } => "a floor of scatter in Π plus a part proportional to Π",
        }
    }

    /// The SDs that weight a temperature's fits: the readings' own where every reading has one
    /// (absolute), else this noise shape's (relative; `None`: unweighted).
    pub fn sds_for(self, set: &TemperatureSet) -> (Option<Vec<f64>>, Weights) {
        match set.pressure_sd_pa.iter().copied().collect::<Option<Vec<f64>>>() {
            Some(given) => (Some(given), Weights::Absolute),
            None => (self.shape(set), Weights::Relative),
        }
    }

    /// Relative σ_Π at each reading of `set` (`None`: unweighted), for [`Readings::pressure_sd`]
    /// with [`Weights::Relative`].
    pub fn shape(self, set: &TemperatureSet) -> Option<Vec<f64>> {
        match self {
            PressureNoise::GivenSds | PressureNoise::FlatReduced => None,
            PressureNoise::ConstantPressure => Some(vec![1.0; set.len()]),
            PressureNoise::ProportionalPressure => {
                // A reading near zero would take an unbounded weight: floor at 1 % of the largest.
                let floor = 0.01 * set.pressure_pa.iter().fold(0.0_f64, |m, p| m.max(p.abs()));
                Some(set.pressure_pa.iter().map(|p| p.abs().max(floor).max(f64::MIN_POSITIVE)).collect())
            }
            PressureNoise::FloorAndGain { crossover_pa } => {
                Some(set.pressure_pa.iter().map(|p| (1.0 + (p / crossover_pa).powi(2)).sqrt()).collect())
            }
        }
    }
}

/// Whether every reading of every set carries an SD.
pub fn all_sds_given(sets: &[TemperatureSet]) -> bool {
    sets.iter().all(|s| s.pressure_sd_pa.iter().all(Option::is_some))
}

/// The noise shape of a series: [`PressureNoise::GivenSds`] when every reading has an SD;
/// else σ²_Π = s₀² + s₁² Π² estimated from every reading of the series at once: each
/// temperature fitted unweighted (quadratic where it keeps two residual dof, else linear), the
/// squared residuals on the pressure scale, leverage-corrected e²/(1 − h), regressed on
/// (1, Π̂²) by least squares reweighted by 1/σ⁴ (Var e² = 2σ⁴ for normal errors), four rounds;
/// the crossover √(s₀²/s₁²) kept between the smallest and largest fitted pressure. With fewer
/// than six usable residuals the reduced pressures stay unweighted ([`PressureNoise::FlatReduced`]).
pub fn choose_noise(sets: &[TemperatureSet]) -> PressureNoise {
    if all_sds_given(sets) {
        return PressureNoise::GivenSds;
    }
    let mut pairs: Vec<(f64, f64)> = Vec::new();
    for set in sets.iter().filter(|s| s.distinct_concentrations() >= super::MIN_CONCENTRATIONS) {
        let readings = Readings {
            temperature_k: set.temperature_k,
            concentration: &set.concentration_kg_per_m3,
            pressure: &set.pressure_pa,
            pressure_sd: None,
            sd_kind: Weights::Relative,
        };
        let form = if set.len() >= VirialForm::Quadratic.parameters() + super::MIN_AUTO_DOF {
            VirialForm::Quadratic
        } else {
            VirialForm::Linear
        };
        let Ok(fit) = fit_form(form, &readings) else { continue };
        let rt = GAS_CONSTANT_J_PER_MOL_K * set.temperature_k;
        for i in 0..set.len() {
            let h = fit.lsq.leverage[i];
            if h < 0.99 {
                let scale = set.concentration_kg_per_m3[i] * rt;
                let e = fit.lsq.residuals[i] * scale;
                pairs.push((fit.fitted_reduced[i] * scale, e * e / (1.0 - h)));
            }
        }
    }
    if pairs.len() < 6 {
        return PressureNoise::FlatReduced;
    }
    let mut coefficients = [1.0, 0.0];
    let mut variance = vec![1.0; pairs.len()];
    for _ in 0..4 {
        let row = |i: usize| {
            let mut r = [0.0; crate::numerics::linear::MAX_PARAMETERS];
            (r[0], r[1]) = (1.0, pairs[i].0 * pairs[i].0);
            r
        };
        let Ok(fit) = crate::numerics::linear::fit_core(
            pairs.len(),
            2,
            row,
            |i| pairs[i].1,
            |i| 1.0 / (variance[i] * variance[i]),
            Weights::Relative,
        ) else {
            return PressureNoise::FlatReduced;
        };
        coefficients = [fit.coefficients[0], fit.coefficients[1]];
        let floor = coefficients[0].max(0.0);
        let gain = coefficients[1].max(0.0);
        if floor + gain <= 0.0 {
            return PressureNoise::FlatReduced;
        }
        for (v, (p, _)) in variance.iter_mut().zip(&pairs) {
            *v = (floor + gain * p * p).max(f64::MIN_POSITIVE);
        }
    }
    // The crossover is kept within the series' own pressures: thirty squared residuals pin
    // two variance parameters only loosely, and a floor (or gain) estimated at zero would
    // extrapolate the shape beyond the data (measured: Mn SEs covered 86 % where it did).
    let (low, high) = pairs.iter().fold((f64::INFINITY, 0.0_f64), |(l, h), (p, _)| (l.min(p.abs()), h.max(p.abs())));
    let crossover = match (coefficients[0] > 0.0, coefficients[1] > 0.0) {
        (true, true) => (coefficients[0] / coefficients[1]).sqrt(),
        (true, false) => high,
        (false, true) => low,
        (false, false) => return PressureNoise::FlatReduced,
    };
    PressureNoise::FloorAndGain { crossover_pa: crossover.clamp(low.max(f64::MIN_POSITIVE), high.max(low)) }
}
