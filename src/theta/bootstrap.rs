//! The seeded bootstrap that reruns the whole per-series pipeline on resampled readings (an
//! opt-in cross-check, not calibrated; see DEVELOPERS.md).

use super::*;

/// [`a2_points`] for scored forms (a bootstrap replicate): the same pooling.
pub(super) fn pooled_a2_points<'a>(
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
