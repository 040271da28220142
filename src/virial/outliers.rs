//! Readings off their temperature's line by more than the series' noise allows.
//!
//! A residual judged by its own temperature's scatter cannot stand out at n = 4–6 (on a line
//! through five concentrations the internally studentised residual is at most √3). Here each
//! reading is judged by the scatter of the *other* temperatures of the series, pooled:
//! r_i = e_i √w_i / (s₍₋ⱼ₎ √(1 − h_ii)) on the reduced-pressure scale, which is Student-t with
//! the pool's degrees of freedom when the noise model holds (normal when every reading carries
//! its SD). A reading is flagged when its two-sided p-value is below [`OUTLIER_P`] divided by
//! the series' number of readings (Bonferroni), so that a clean series is rarely flagged; only the largest at a temperature is named (a gross error drags its
//! neighbours' residuals out with it). `examples/outlier-rate.rs` measures the rate and power.

use super::{FitWarning, TemperatureFit};
use crate::dataset::TemperatureSet;
use crate::numerics::linear::Weights;
use crate::units::{GAS_CONSTANT_J_PER_MOL_K, G_PER_ML_PER_KG_PER_M3};
use statrs::distribution::{ContinuousCDF, Normal, StudentsT};

/// The series-level level of the test, Bonferroni-divided among the readings. Set below 1 %
/// by measurement: with the noise shape estimated from the data (no SDs given) the tails are
/// heavier than Student's; at 0.004 the study flags 0.5 % of clean series overall and 1.7 %
/// in its worst design (constant noise without SDs), and still names 96–100 % of readings
/// raised by 10 % (`examples/outlier-rate.rs`).
pub const OUTLIER_P: f64 = 0.004;

/// Fewest pooled degrees of freedom from the other temperatures for the test to run.
pub const MIN_POOLED_DOF: usize = 3;

/// Adds an [`FitWarning::Outlier`] to each fit for each of its readings that stands out;
/// `sets[k]` holds the readings of `fits[k]`, and `noise_sds[k]` their σ_Π as the fit used them
/// (absolute with [`Weights::Absolute`], a relative shape otherwise; `None`: unweighted).
pub fn flag_outliers(fits: &mut [TemperatureFit], sets: &[&TemperatureSet], noise_sds: &[(Option<Vec<f64>>, Weights)]) {
    let n_total: usize = fits.iter().map(|f| f.n_points).sum();
    if n_total == 0 {
        return;
    }
    let level = OUTLIER_P / n_total as f64;
    // The pool: temperatures whose noise scale is estimated (not given by SDs).
    let pooled = |f: &TemperatureFit| !f.weighted && f.fit.score.core.dof > 0;
    let (rss_all, dof_all) = fits
        .iter()
        .filter(|f| pooled(f))
        .fold((0.0, 0usize), |(r, d), f| (r + f.fit.score.rss_reduced, d + f.fit.score.core.dof));
    for (k, fit) in fits.iter_mut().enumerate() {
        let set = sets[k];
        let sds = &noise_sds[k].0;
        let rt = GAS_CONSTANT_J_PER_MOL_K * set.temperature_k;
        // The scale the residuals are judged by, and the distribution of r under no outlier.
        let (scale, dof) = if fit.weighted {
            (1.0, None)
        } else {
            let own = if pooled(fit) { (fit.fit.score.rss_reduced, fit.fit.score.core.dof) } else { (0.0, 0) };
            let dof = dof_all - own.1;
            if dof < MIN_POOLED_DOF {
                continue;
            }
            (((rss_all - own.0) / dof as f64).sqrt(), Some(dof))
        };
        if !(scale.is_finite() && scale > 0.0) {
            continue;
        }
        let p_value = |r: f64| -> f64 {
            let tail = match dof {
                Some(d) => StudentsT::new(0.0, 1.0, d as f64).ok().map(|t| t.sf(r.abs())),
                None => Normal::new(0.0, 1.0).ok().map(|n| n.sf(r.abs())),
            };
            tail.map_or(1.0, |t| 2.0 * t)
        };
        // One reading per temperature: a gross error pulls the line towards itself and so
        // pushes its neighbours' residuals out too; the largest is the one to check.
        let mut worst: Option<FitWarning> = None;
        let mut worst_r = 0.0_f64;
        for i in 0..fit.n_points {
            let c = set.concentration_kg_per_m3[i];
            let y = set.pressure_pa[i] / (c * rt);
            let w = sds.as_ref().map_or(1.0, |sd| (c * rt / sd[i]).powi(2));
            let h = fit.fit.lsq.leverage.get(i).copied().unwrap_or(0.0);
            if h >= 1.0 {
                continue;
            }
            let r = (y - fit.fit.fitted_reduced[i]) * w.sqrt() / (scale * (1.0 - h).sqrt());
            // Below |r| = 2.9 no reading can pass: the level is at most 0.01/3 (two-sided
            // normal quantile 2.94, and Student's t lies further out); the tail is costly.
            if r.is_finite() && r.abs() > 2.9 && r.abs() > worst_r && p_value(r) < level {
                worst_r = r.abs();
                worst = Some(FitWarning::Outlier {
                    concentration_g_per_ml: c * G_PER_ML_PER_KG_PER_M3,
                    studentized: r,
                    line: set.origins[i].line,
                });
            }
        }
        fit.warnings.extend(worst);
    }
}
