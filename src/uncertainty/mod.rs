//! Uncertainty machinery shared by the across-temperature models: Fieller sets, the seeded
//! bootstrap resampler, and quantiles.

mod bootstrap;
mod fieller;

pub use bootstrap::{percentile, replicate_rng, resample_indices};
pub use fieller::{fieller_zero, FiellerSet};

use statrs::distribution::{ContinuousCDF, Normal, StudentsT};

/// Two-sided critical value for `confidence` (e.g. 0.95): Student's t with `dof` degrees of
/// freedom, or the normal quantile when `dof` is `None`.
pub fn critical_value(confidence: f64, dof: Option<usize>) -> f64 {
    // The 95 % values for small dof are asked for at every temperature of every series: keep
    // them (the inverse CDF costs microseconds).
    const CACHED: usize = 256;
    static T95: std::sync::OnceLock<Vec<f64>> = std::sync::OnceLock::new();
    // Exactly 0.95 (the cache holds its quantiles, not those of a nearby level).
    if confidence.to_bits() == 0.95f64.to_bits() {
        if let Some(d) = dof.filter(|d| (1..CACHED).contains(d)) {
            return T95.get_or_init(|| (0..CACHED).map(|d| quantile(0.975, Some(d))).collect())[d];
        }
    }
    quantile(0.5 + confidence / 2.0, dof)
}

fn quantile(p: f64, dof: Option<usize>) -> f64 {
    match dof {
        Some(d) if d > 0 => StudentsT::new(0.0, 1.0, d as f64).map(|t| t.inverse_cdf(p)).unwrap_or(f64::NAN),
        Some(_) => f64::NAN,
        None => Normal::new(0.0, 1.0).map(|n| n.inverse_cdf(p)).unwrap_or(f64::NAN),
    }
}
