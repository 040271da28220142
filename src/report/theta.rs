//! The `theta` object of each series in the report, in report units.

use crate::theta::{Crossing, FittedLine, IntervalKind, IntervalMethod, Model, ModelTheta, Sense, ThetaResult};
use crate::units::{kelvin_to_celsius, G_PER_MOL_PER_KG_PER_MOL};
use serde::Serialize;

/// θ and everything around it.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct ThetaReport {
    /// Headline θ, K (null when there is none).
    pub theta_k: Option<f64>,
    /// Headline θ, °C.
    pub theta_c: Option<f64>,
    /// SE of θ (delta method of the headline model), K.
    pub se_k: Option<f64>,
    /// Headline interval, K (null where unbounded).
    pub ci_low_k: Option<f64>,
    /// Headline interval, K (null where unbounded).
    pub ci_high_k: Option<f64>,
    /// `bounded`, `unbounded`, `exclusive` or `none`.
    pub ci_kind: IntervalKind,
    /// `fieller` or `delta_curved`.
    pub ci_method: IntervalMethod,
    /// Why that interval is the headline.
    pub ci_reason: String,
    /// Confidence level.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub confidence: f64,
    /// `bracketed`, `extrapolated` or `none`.
    pub crossing: Crossing,
    /// Kelvin beyond the nearest measured temperature, when extrapolated.
    pub extrapolated_by_k: Option<f64>,
    /// Why there is no θ.
    pub reason: Option<String>,
    /// Headline model: `flory_krigbaum` or `curved`.
    pub model: Model,
    /// `ucst` (A2 rises with T) or `lcst` (A2 falls as T rises).
    pub sense: Option<Sense>,
    /// θ from every model, side by side.
    pub models: Vec<ModelTheta>,
    /// Fieller interval of the Flory–Krigbaum line.
    pub fieller: FiellerReport,
    /// Bootstrap (null when off or when there is no θ).
    pub bootstrap: Option<BootstrapReport>,
    /// Joint fit of every reading (null when it did not run).
    pub joint: Option<JointReport>,
    /// Is Mn the same at every temperature?
    pub mn_consistency: Option<MnConsistencyReport>,
    /// Flory–Krigbaum / Flory–Huggins parameters (null unless v̄ and V1 are known, or χ given).
    pub flory: Option<crate::theta::FloryParameters>,
    /// Temperature stability around θ.
    pub stability: Option<StabilityReport>,
    /// The fitted line A2 = a + b/T, to redraw it.
    pub line: Option<FittedLine>,
    /// The values the across-temperature models were fitted to, in the line's units.
    pub points: Vec<ThetaPointReport>,
    /// Every sign change between measured temperatures when there are two or more (an upper
    /// and a lower θ); empty otherwise.
    pub sign_changes: Vec<SignChangeReport>,
    /// The interval is at the limit of what the design supports (a warning says why).
    pub design_limited: bool,
    /// Warnings.
    pub warnings: Vec<String>,
}

/// One sign change of A2 (or 1/2 − χ) between neighbouring measured temperatures.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct SignChangeReport {
    /// θ, K: zero of the line in 1/T through the two bracketing temperatures.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub theta_k: f64,
    /// θ, °C.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub theta_c: f64,
    /// SE, K.
    pub se_k: Option<f64>,
    /// Fieller interval of that two-point line, K (null where unbounded).
    pub ci_low_k: Option<f64>,
    /// K.
    pub ci_high_k: Option<f64>,
    /// `ucst` where A2 rises through zero with T, `lcst` where it falls.
    pub sense: Sense,
}

/// One temperature's value in the across-temperature fit.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct ThetaPointReport {
    /// T, K.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub temperature_k: f64,
    /// A2 (mol mL/g²) or 1/2 − χ, as `line.quantity` says.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub value: f64,
    /// The SE that weighted it (pooled across temperatures for unweighted fits).
    pub se: Option<f64>,
}

/// Fieller's interval.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct FiellerReport {
    /// Shape.
    pub kind: IntervalKind,
    /// K (null where unbounded).
    pub low_k: Option<f64>,
    /// K (null where unbounded).
    pub high_k: Option<f64>,
    /// Critical value used.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub critical_value: f64,
    /// Degrees of freedom of t (null: normal quantile).
    pub dof: Option<usize>,
}

/// Bootstrap percentile interval.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct BootstrapReport {
    /// Replicates asked for.
    pub replicates: usize,
    /// Replicates that gave a θ.
    pub successful: usize,
    /// Seed (rerun with it to get the same numbers).
    pub seed: u64,
    /// K.
    pub ci_low_k: Option<f64>,
    /// K.
    pub ci_high_k: Option<f64>,
    /// SD of the replicate θ, K.
    pub se_k: Option<f64>,
}

/// The joint fit.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct JointReport {
    /// θ, K.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub theta_k: f64,
    /// SE, K.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub se_k: f64,
    /// Shared Mn, g/mol.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub mn_g_per_mol: f64,
    /// SE, g/mol.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub mn_se_g_per_mol: f64,
    /// Joint θ minus two-stage θ, K.
    pub difference_from_two_stage_k: Option<f64>,
    /// Readings − parameters.
    pub dof: usize,
    /// Weighted residual SD.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub residual_sd: f64,
    /// Whether a convergence test was met.
    pub converged: bool,
    /// Iterations.
    pub iterations: u64,
}

/// The Mn consistency check.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct MnConsistencyReport {
    /// Weighted mean Mn, g/mol.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub mean_mn_g_per_mol: f64,
    /// Its SE, g/mol.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub mean_mn_se_g_per_mol: f64,
    /// χ² of one common Mn.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub chi2: f64,
    /// Degrees of freedom.
    pub dof: usize,
    /// p-value.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub p_value: f64,
    /// p < 0.01.
    pub drift: bool,
}

/// How tightly the temperature must be held at θ.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct StabilityReport {
    /// dA2/dT at θ, mol mL/(g² K).
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub da2_dt_at_theta_mol_ml_per_g2_k: f64,
    /// SE.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub da2_dt_se_mol_ml_per_g2_k: f64,
    /// The |A2| tolerance, mol mL/g².
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub a2_tolerance_mol_ml_per_g2: f64,
    /// ± K around θ that keeps |A2| under the tolerance.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub plus_minus_k: f64,
}

impl ThetaReport {
    /// Converts a θ result; `quantity` says what the line's values are.
    pub fn new(t: &ThetaResult, quantity: crate::dataset::Quantity) -> Self {
        ThetaReport {
            theta_k: t.theta_k,
            theta_c: t.theta_k.map(kelvin_to_celsius),
            se_k: t.se_k,
            ci_low_k: t.interval.low_k,
            ci_high_k: t.interval.high_k,
            ci_kind: t.interval.kind,
            ci_method: t.ci_method,
            ci_reason: t.ci_reason.clone(),
            confidence: t.confidence,
            crossing: t.crossing,
            extrapolated_by_k: t.extrapolated_by_k,
            reason: t.reason.clone(),
            model: t.model,
            sense: t.sense,
            models: t.models.clone(),
            fieller: FiellerReport {
                kind: t.fieller.kind,
                low_k: t.fieller.low_k,
                high_k: t.fieller.high_k,
                critical_value: t.fieller_t,
                dof: t.line_dof,
            },
            bootstrap: t.bootstrap.as_ref().map(|b| BootstrapReport {
                replicates: b.replicates,
                successful: b.successful,
                seed: b.seed,
                ci_low_k: b.ci_low_k,
                ci_high_k: b.ci_high_k,
                se_k: b.se_k,
            }),
            joint: t.joint.as_ref().map(|j| JointReport {
                theta_k: j.theta_k,
                se_k: j.theta_se_k,
                mn_g_per_mol: j.mn_kg_per_mol * G_PER_MOL_PER_KG_PER_MOL,
                mn_se_g_per_mol: j.mn_se_kg_per_mol * G_PER_MOL_PER_KG_PER_MOL,
                difference_from_two_stage_k: t.theta_k.map(|th| j.theta_k - th),
                dof: j.dof,
                residual_sd: j.residual_sd,
                converged: j.converged,
                iterations: j.iterations,
            }),
            mn_consistency: t.mn_consistency.as_ref().map(|m| MnConsistencyReport {
                mean_mn_g_per_mol: m.mean_kg_per_mol * G_PER_MOL_PER_KG_PER_MOL,
                mean_mn_se_g_per_mol: m.mean_se_kg_per_mol * G_PER_MOL_PER_KG_PER_MOL,
                chi2: m.chi2,
                dof: m.dof,
                p_value: m.p_value,
                drift: m.p_value < crate::theta::MN_DRIFT_P,
            }),
            flory: t.flory.clone(),
            // A2 in SI (mol m³/kg²) is numerically mol mL/g² (see units).
            stability: t.stability.as_ref().map(|s| StabilityReport {
                da2_dt_at_theta_mol_ml_per_g2_k: s.da2_dt_at_theta,
                da2_dt_se_mol_ml_per_g2_k: s.da2_dt_se,
                a2_tolerance_mol_ml_per_g2: s.a2_tolerance,
                plus_minus_k: s.plus_minus_k,
            }),
            line: t.line.as_ref().map(|l| {
                let (var_a, cov_ab, var_b) = l.ab_covariance();
                FittedLine {
                    quantity,
                    a: l.a(),
                    b_k: l.b(),
                    var_a,
                    cov_ab_k: cov_ab,
                    var_b_k2: var_b,
                    reduced_chi2: l.reduced_chi2,
                    lack_of_fit_p: l.lack_of_fit_p,
                    variance: l.variance,
                }
            }),
            points: t
                .points
                .iter()
                .map(|p| ThetaPointReport { temperature_k: p.temperature_k, value: p.value, se: p.se })
                .collect(),
            sign_changes: t
                .sign_changes
                .iter()
                .map(|c| SignChangeReport {
                    theta_k: c.theta_k,
                    theta_c: kelvin_to_celsius(c.theta_k),
                    se_k: c.se_k,
                    ci_low_k: c.interval.low_k,
                    ci_high_k: c.interval.high_k,
                    sense: c.sense,
                })
                .collect(),
            design_limited: t.design_limited,
            warnings: t.warnings.clone(),
        }
    }
}
