//! Whether Mn is the same at every temperature, as it must be: a χ² test on the pooled SEs.

use super::*;

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
