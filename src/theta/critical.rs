//! θ and ψ1 from the critical (phase-separation) temperatures of fractions of different molar
//! mass: the Shultz–Flory relation 1/Tc = 1/θ + (1/(θ ψ1)) (1/√x + 1/(2x)), x = M v̄/V1
//! (Shultz & Flory 1952, J. Am. Chem. Soc. 74, 4760), fitted as a straight line in
//! φ = 1/√x + 1/(2x): intercept a = 1/θ (the infinite-molar-mass limit), slope b = 1/(θ ψ1).

use super::Volumes;
use crate::numerics::linear::{self, Weights};
use crate::uncertainty::critical_value;
use serde::Serialize;

/// Fewest fractions for a line with a residual degree of freedom.
pub const MIN_FRACTIONS: usize = 3;

/// The critical-temperature route's result.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct CriticalRoute {
    /// θ, K.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub theta_k: f64,
    /// SE of θ (delta method), K.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub se_k: f64,
    /// Interval for θ from the intercept's t interval, K (null where unbounded).
    pub ci_low_k: Option<f64>,
    /// Upper end, K (null where unbounded).
    pub ci_high_k: Option<f64>,
    /// ψ1 from this route.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub psi1: f64,
    /// SE of ψ1.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub psi1_se: f64,
    /// Fractions used.
    pub fractions: usize,
    /// Residual degrees of freedom.
    pub dof: usize,
    /// What this route measures.
    pub note: String,
}

/// Fits the Shultz–Flory line to (M kg/mol, Tc K) pairs.
pub fn critical_route(fractions: &[(f64, f64)], volumes: Volumes, confidence: f64) -> Result<CriticalRoute, String> {
    if fractions.len() < MIN_FRACTIONS {
        return Err(format!("{} fraction(s): at least {MIN_FRACTIONS} are needed", fractions.len()));
    }
    let phi: Vec<f64> = fractions
        .iter()
        .map(|&(m, _)| {
            let x = crate::thermo::segment_ratio(m, volumes.specific_volume, volumes.molar_volume);
            1.0 / x.sqrt() + 1.0 / (2.0 * x)
        })
        .collect();
    let y: Vec<f64> = fractions.iter().map(|&(_, tc)| 1.0 / tc).collect();
    let fit =
        linear::fit(&linear::polynomial_design(&phi, 1), 2, &y, None, Weights::Relative).map_err(|e| e.to_string())?;
    let (a, b) = (fit.coefficients[0], fit.coefficients[1]);
    if a.is_nan() || a <= 0.0 {
        return Err("the intercept 1/θ is not positive: the fractions do not extrapolate to a θ".into());
    }
    let (va, vb, cab) = (fit.cov(0, 0), fit.cov(1, 1), fit.cov(0, 1));
    let t = critical_value(confidence, Some(fit.dof));
    // θ = 1/a is monotonic in a: the t interval of a maps onto θ (reversed).
    let (a_lo, a_hi) = (a - t * va.sqrt(), a + t * va.sqrt());
    let psi1 = a / b;
    let var_psi1 = va / (b * b) + a * a * vb / b.powi(4) - 2.0 * a * cab / b.powi(3);
    Ok(CriticalRoute {
        theta_k: 1.0 / a,
        se_k: va.sqrt() / (a * a),
        ci_low_k: (a_hi > 0.0).then(|| 1.0 / a_hi),
        ci_high_k: (a_lo > 0.0).then(|| 1.0 / a_lo),
        psi1,
        psi1_se: var_psi1.max(0.0).sqrt(),
        fractions: fractions.len(),
        dof: fit.dof,
        note: "θ here is the infinite-molar-mass limit of phase separation; ψ1 from this route often differs from the dilute-solution one".to_string(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exact_fractions_give_back_theta_and_psi1() {
        let v = Volumes { specific_volume: 0.93e-3, molar_volume: 108e-6 };
        let fractions: Vec<(f64, f64)> = [50.0, 120.0, 400.0, 1500.0]
            .iter()
            .map(|&m| {
                (
                    m,
                    crate::thermo::shultz_flory_tc(307.0, 0.8, crate::thermo::segment_ratio(m, 0.93e-3, 108e-6))
                        .unwrap(),
                )
            })
            .collect();
        let r = critical_route(&fractions, v, 0.95).unwrap();
        assert!((r.theta_k - 307.0).abs() < 1e-8 && (r.psi1 - 0.8).abs() < 1e-9, "{r:?}");
    }
}
