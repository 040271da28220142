//! The three virial forms fitted at one temperature, in SI units.
//!
//! Reduced osmotic pressure y = Π/(c R T) in mol/kg (Π in Pa, c in kg/m³, T in K):
//! - linear:    y = 1/Mn + A2 c
//! - quadratic: y = 1/Mn + A2 c + A3 c²
//! - sqrt:      (Π/c)^½ = (RT/Mn)^½ (1 + Γ2 c/2), Γ2 = A2 Mn  (Stockmayer–Casassa, g = 1/4,
//!   so that A3 = Γ2² /(4 Mn)); fitted as a straight line α + β c in z = (Π/c)^½, giving
//!   Mn = RT/α², A2 = 2αβ/(RT).

use crate::numerics::linear::{self, CoreFit, FitError, LinearFit, Weights};
use crate::units::GAS_CONSTANT_J_PER_MOL_K;
use serde::Serialize;

/// A per-temperature virial form.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, serde::Deserialize, PartialOrd, Ord)]
#[serde(rename_all = "snake_case")]
pub enum VirialForm {
    /// y = 1/Mn + A2 c.
    Linear,
    /// y = 1/Mn + A2 c + A3 c².
    Quadratic,
    /// (Π/c)^½ = (RT/Mn)^½ (1 + Γ2 c/2).
    Sqrt,
}

impl VirialForm {
    /// Every form, in the order they are tried.
    pub const ALL: [VirialForm; 3] = [VirialForm::Linear, VirialForm::Sqrt, VirialForm::Quadratic];

    /// Number of fitted coefficients p.
    pub fn parameters(self) -> usize {
        match self {
            VirialForm::Linear | VirialForm::Sqrt => 2,
            VirialForm::Quadratic => 3,
        }
    }

    /// Name as used on the command line and in reports.
    pub fn name(self) -> &'static str {
        match self {
            VirialForm::Linear => "linear",
            VirialForm::Quadratic => "quadratic",
            VirialForm::Sqrt => "sqrt",
        }
    }
}

/// One form fitted at one temperature: its estimates (SI units) and the per-point output.
#[derive(Debug, Clone, PartialEq)]
pub struct FormFit {
    /// The estimates and the RSS the forms are compared on.
    pub score: FormScore,
    /// Fitted reduced pressure ŷ_i, mol/kg, at each point.
    pub fitted_reduced: Vec<f64>,
    /// The underlying linear fit (on the form's own response scale).
    pub lsq: LinearFit,
}

impl FormFit {
    /// Mn in kg/mol (see [`FormScore::mn`]).
    pub fn mn(&self) -> f64 {
        self.score.mn()
    }

    /// SE of Mn, kg/mol (see [`FormScore::mn_se`]).
    pub fn mn_se(&self) -> f64 {
        self.score.mn_se()
    }
}

/// Inputs of one temperature's fit, SI.
#[derive(Debug, Clone, Copy)]
pub struct Readings<'a> {
    /// T in K.
    pub temperature_k: f64,
    /// c in kg/m³.
    pub concentration: &'a [f64],
    /// Π in Pa.
    pub pressure: &'a [f64],
    /// SD of Π in Pa, every point or none.
    pub pressure_sd: Option<&'a [f64]>,
    /// How to read `pressure_sd`: the readings' SDs (absolute), or the noise's shape across
    /// readings up to one unknown factor (relative).
    pub sd_kind: Weights,
}

impl Readings<'_> {
    /// y = Π/(c R T), mol/kg.
    pub fn reduced(&self) -> Vec<f64> {
        let rt = GAS_CONSTANT_J_PER_MOL_K * self.temperature_k;
        self.pressure.iter().zip(self.concentration).map(|(p, c)| p / (c * rt)).collect()
    }

    /// Weights 1/σ_y² on the reduced scale, σ_y = σ_Π/(c R T).
    pub fn reduced_weights(&self) -> Option<Vec<f64>> {
        let rt = GAS_CONSTANT_J_PER_MOL_K * self.temperature_k;
        self.pressure_sd.map(|sd| sd.iter().zip(self.concentration).map(|(s, c)| (c * rt / s).powi(2)).collect())
    }
}

/// Why a form does not apply to the data.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum FormError {
    /// The least-squares problem failed.
    #[error(transparent)]
    Fit(#[from] FitError),
    /// The sqrt form describes good solvents only.
    #[error("the sqrt form needs A2 ≥ 0, the fit gave A2 < 0")]
    SqrtNeedsPositiveA2,
    /// The sqrt form needs Π > 0 at every point.
    #[error("the sqrt form needs a positive pressure at every point")]
    SqrtNeedsPositivePressure,
}

/// One form solved at one temperature: the estimates and the RSS the forms are compared on,
/// with nothing stored per point. The automatic choice scores every form and completes only
/// the chosen one ([`FormScore::complete`]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FormScore {
    /// Which form.
    pub form: VirialForm,
    /// 1/Mn in mol/kg.
    pub inverse_mn: f64,
    /// SE of 1/Mn, mol/kg.
    pub inverse_mn_se: f64,
    /// A2 in mol m³/kg².
    pub a2: f64,
    /// SE of A2.
    pub a2_se: f64,
    /// Cov(1/Mn, A2), mol² m³/kg³.
    pub cov_inverse_mn_a2: f64,
    /// A3 in mol m⁶/kg³ with its SE (quadratic form only).
    pub a3: Option<(f64, f64)>,
    /// Weighted RSS on the reduced-pressure scale.
    pub rss_reduced: f64,
    /// The solved linear problem on the form's own response scale.
    pub core: CoreFit,
}

/// Solves `form` at one temperature without per-point output (no allocation).
pub fn score_form(form: VirialForm, r: &Readings) -> Result<FormScore, FormError> {
    let kind = if r.pressure_sd.is_some() { r.sd_kind } else { Weights::Relative };
    let rt = GAS_CONSTANT_J_PER_MOL_K * r.temperature_k;
    let (c, pressure) = (r.concentration, r.pressure);
    let n = c.len();
    let p = form.parameters();
    let row = |i: usize| linear::polynomial_row(c[i], p);
    // y = Π/(c R T) and its weight 1/σ_y², σ_y = σ_Π/(c R T), as in [`Readings::reduced`].
    let reduced = |i: usize| pressure[i] / (c[i] * rt);
    let reduced_weight = |i: usize| r.pressure_sd.map_or(1.0, |sd| (c[i] * rt / sd[i]).powi(2));
    match form {
        VirialForm::Linear | VirialForm::Quadratic => {
            let core = linear::fit_core(n, p, row, reduced, reduced_weight, kind)?;
            let a3 = (form == VirialForm::Quadratic).then(|| (core.coefficients[2], core.se(2)));
            Ok(FormScore {
                form,
                inverse_mn: core.coefficients[0],
                inverse_mn_se: core.se(0),
                a2: core.coefficients[1],
                a2_se: core.se(1),
                cov_inverse_mn_a2: core.covariance[0][1],
                a3,
                rss_reduced: core.rss_weighted,
                core,
            })
        }
        VirialForm::Sqrt => {
            if pressure.iter().any(|p| *p <= 0.0) {
                return Err(FormError::SqrtNeedsPositivePressure);
            }
            let z = |i: usize| (pressure[i] / c[i]).sqrt();
            // σ_z = σ_Π / (2 c z) by first-order propagation of z = (Π/c)^½.
            let wz = |i: usize| r.pressure_sd.map_or(1.0, |sd| (2.0 * c[i] * z(i) / sd[i]).powi(2));
            let core = linear::fit_core(n, 2, row, z, wz, kind)?;
            let (alpha, beta) = (core.coefficients[0], core.coefficients[1]);
            if beta < 0.0 {
                return Err(FormError::SqrtNeedsPositiveA2);
            }
            // 1/Mn = α²/RT, A2 = 2αβ/RT; Jacobian rows with respect to (α, β).
            let g_inv = [2.0 * alpha / rt, 0.0];
            let g_a2 = [2.0 * beta / rt, 2.0 * alpha / rt];
            let quad = |g: &[f64; 2], h: &[f64; 2]| -> f64 {
                (0..2).map(|i| (0..2).map(|j| g[i] * core.covariance[i][j] * h[j]).sum::<f64>()).sum()
            };
            let rss_reduced = (0..n)
                .map(|i| {
                    let zf = (0..2).map(|j| row(i)[j] * core.coefficients[j]).sum::<f64>();
                    reduced_weight(i) * (reduced(i) - zf * zf / rt).powi(2)
                })
                .sum();
            Ok(FormScore {
                form,
                inverse_mn: alpha * alpha / rt,
                inverse_mn_se: quad(&g_inv, &g_inv).sqrt(),
                a2: 2.0 * alpha * beta / rt,
                a2_se: quad(&g_a2, &g_a2).sqrt(),
                cov_inverse_mn_a2: quad(&g_inv, &g_a2),
                a3: None,
                rss_reduced,
                core,
            })
        }
    }
}

impl FormScore {
    /// Mn in kg/mol.
    pub fn mn(&self) -> f64 {
        1.0 / self.inverse_mn
    }

    /// SE of Mn by the delta method: SE(1/Mn)/(1/Mn)², kg/mol.
    pub fn mn_se(&self) -> f64 {
        self.inverse_mn_se / (self.inverse_mn * self.inverse_mn)
    }

    /// The full fit, with fitted values, residuals and leverages, for the readings it was
    /// scored on.
    pub fn complete(self, r: &Readings) -> FormFit {
        let rt = GAS_CONSTANT_J_PER_MOL_K * r.temperature_k;
        let design = linear::polynomial_design(r.concentration, self.form.parameters() - 1);
        let (lsq, fitted_reduced) = match self.form {
            VirialForm::Linear | VirialForm::Quadratic => {
                let lsq = linear::complete(&self.core, &design, &r.reduced(), r.reduced_weights().as_deref());
                let fitted = lsq.fitted.clone();
                (lsq, fitted)
            }
            VirialForm::Sqrt => {
                let z: Vec<f64> = r.pressure.iter().zip(r.concentration).map(|(p, c)| (p / c).sqrt()).collect();
                let wz: Option<Vec<f64>> = r.pressure_sd.map(|sd| {
                    sd.iter().zip(r.concentration).zip(&z).map(|((s, c), z)| (2.0 * c * z / s).powi(2)).collect()
                });
                let lsq = linear::complete(&self.core, &design, &z, wz.as_deref());
                let fitted = lsq.fitted.iter().map(|zf| zf * zf / rt).collect();
                (lsq, fitted)
            }
        };
        FormFit { score: self, fitted_reduced, lsq }
    }
}

/// Fits `form` to one temperature's readings.
pub fn fit_form(form: VirialForm, r: &Readings) -> Result<FormFit, FormError> {
    Ok(score_form(form, r)?.complete(r))
}
