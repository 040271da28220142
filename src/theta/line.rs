//! Flory–Krigbaum near θ: A2(T) = (v̄²/V1) ψ1 (1 − θ/T) = a + b/T, a straight line in
//! x = 1/T, fitted by weighted least squares (w = 1/SE(A2)²) in the centred variable
//! u = x − x̄: A2 = α + β u. Then θ = 1/(x̄ − α/β) = −b/a, with a = α − β x̄ and b = β.

use super::TemperaturePoint;
use crate::numerics::linear::{self, FitError, Weights};
use crate::uncertainty::{critical_value, fieller_zero, FiellerSet};
use serde::{Deserialize, Serialize};
use statrs::distribution::{ChiSquared, ContinuousCDF, FisherSnedecor};

/// Where the per-temperature SEs come from; it decides the quantile of the line's intervals.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SeBasis {
    /// SEs from SDs given with the readings (or with a table): known, normal quantile.
    Known,
    /// SEs estimated from residuals with `dof` degrees of freedom (pooled over the series'
    /// temperatures, or the fewest of separately estimated ones): Student's t with `dof`.
    Estimated {
        /// Degrees of freedom of the variance behind the SEs.
        dof: usize,
    },
}

impl SeBasis {
    /// The basis of SEs estimated on `dofs` (the fewest), or known when none is estimated.
    pub fn fewest(dofs: impl Iterator<Item = Option<usize>>) -> SeBasis {
        match dofs.flatten().min() {
            Some(dof) => SeBasis::Estimated { dof },
            None => SeBasis::Known,
        }
    }

    /// Degrees of freedom of the SEs (`None`: known).
    pub fn dof(self) -> Option<usize> {
        match self {
            SeBasis::Known => None,
            SeBasis::Estimated { dof } => Some(dof),
        }
    }
}

/// How the line's covariance was obtained.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum LineVariance {
    /// From the per-temperature SEs alone: the points scatter about the line no more than
    /// those SEs allow, and a line's own n − 2 degrees of freedom are too few to overrule them.
    StandardErrors,
    /// The per-temperature SEs scaled up by the line's reduced χ²: the points scatter more
    /// than their SEs allow (lack of fit at p < [`LACK_OF_FIT_P`]); t with n − 2 dof.
    ScaledByScatter,
    /// No per-temperature SEs: the line's own scatter, t with n − 2 dof.
    Unweighted,
}

/// Significance at which the line's scatter overrules the per-temperature SEs. 0.10, not the
/// usual 0.05 or 0.01: measured in the coverage study (DEVELOPERS.md), 0.01 left the top fifth
/// of χ² at 85–88 % (the per-temperature SEs miss a little model error there) and 0.2 pushed
/// it to 98–99 %; 0.10 holds every fifth within 92–95 %.
pub const LACK_OF_FIT_P: f64 = 0.10;

/// How far a weighted line's covariance rests on its points' SEs: the rule of
/// [`InverseTemperatureLine::fit`], shared by every line fitted to values with SEs (the
/// viscometry route's Mark–Houwink and Stockmayer–Fixman lines too).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LineScatter {
    /// Σw e²/dof with w = 1/SE² (null without SEs or dof).
    pub reduced_chi2: Option<f64>,
    /// P of a scatter at least this large if the SEs are right.
    pub lack_of_fit_p: Option<f64>,
    /// Which covariance was taken.
    pub variance: LineVariance,
    /// Factor on the SEs' covariance.
    pub scale: f64,
    /// Degrees of freedom of the quantile (None: normal).
    pub dof: Option<usize>,
}

impl LineScatter {
    /// The rule: without SEs the line's own scatter (t on its dof); with SEs, their covariance
    /// and quantile (`basis`), scaled up by the reduced χ² only when the scatter exceeds them
    /// at p < [`LACK_OF_FIT_P`] (then t on the line's dof). `rss_weighted` is Σw e².
    pub fn judge(weighted: bool, rss_weighted: f64, line_dof: usize, basis: SeBasis) -> Self {
        let reduced_chi2 = (weighted && line_dof > 0).then(|| rss_weighted / line_dof as f64);
        let lack_of_fit_p = reduced_chi2.and_then(|r| scatter_p_value(r, line_dof, basis.dof()));
        let (variance, scale, dof) = match (weighted, lack_of_fit_p) {
            (false, _) => (LineVariance::Unweighted, 1.0, Some(line_dof)),
            (true, Some(p)) if p < LACK_OF_FIT_P => {
                (LineVariance::ScaledByScatter, reduced_chi2.unwrap_or(1.0), Some(line_dof))
            }
            (true, _) => (LineVariance::StandardErrors, 1.0, basis.dof()),
        };
        LineScatter { reduced_chi2, lack_of_fit_p, variance, scale, dof }
    }
}

/// A weighted straight line y = α + β (x − x̄) in the centred variable, with the rule of
/// [`LineScatter`] for how far its covariance rests on the points' SEs: the θ line (x = 1/T)
/// and the viscometry route's lines (Mark–Houwink in ln M, Stockmayer–Fixman in M^{1/2}, Kθ(T)).
#[derive(Debug, Clone, PartialEq)]
pub struct WeightedLine {
    /// x̄ (weighted mean of x).
    pub x_centre: f64,
    /// Value at x̄.
    pub alpha: f64,
    /// Slope.
    pub beta: f64,
    /// Var α.
    pub var_alpha: f64,
    /// Cov(α, β).
    pub cov: f64,
    /// Var β.
    pub var_beta: f64,
    /// How the covariance was obtained, and the quantile's dof.
    pub scatter: LineScatter,
    /// Points.
    pub n: usize,
}

impl WeightedLine {
    /// Fits y against x, weights 1/SE² when every point has a finite positive SE (`basis` says
    /// where they came from), else the line's own scatter. Two points need SEs; fewer refuse.
    pub fn fit(x: &[f64], y: &[f64], se: &[Option<f64>], basis: SeBasis) -> Result<Self, FitError> {
        let n = x.len();
        let weights: Option<Vec<f64>> =
            se.iter().map(|s| s.filter(|s| s.is_finite() && *s > 0.0).map(|s| 1.0 / (s * s))).collect();
        if n < 2 || (n == 2 && weights.is_none()) {
            return Err(FitError::TooFewPoints { points: n, parameters: 2 });
        }
        let w = |i: usize| weights.as_ref().map_or(1.0, |w| w[i]);
        let w_sum: f64 = (0..n).map(w).sum();
        let x_centre = (0..n).map(|i| w(i) * x[i]).sum::<f64>() / w_sum;
        let kind = if weights.is_some() { Weights::Absolute } else { Weights::Relative };
        let fit = linear::fit_core(n, 2, |i| linear::polynomial_row(x[i] - x_centre, 2), |i| y[i], w, kind)?;
        let scatter = LineScatter::judge(weights.is_some(), fit.rss_weighted, fit.dof, basis);
        let s = scatter.scale;
        Ok(WeightedLine {
            x_centre,
            alpha: fit.coefficients[0],
            beta: fit.coefficients[1],
            var_alpha: s * fit.covariance[0][0],
            cov: s * fit.covariance[0][1],
            var_beta: s * fit.covariance[1][1],
            scatter,
            n,
        })
    }

    /// Value at x, and its SE.
    pub fn at(&self, x: f64) -> (f64, f64) {
        let u = x - self.x_centre;
        (self.alpha + self.beta * u, (self.var_alpha + 2.0 * u * self.cov + u * u * self.var_beta).max(0.0).sqrt())
    }

    /// SE of the slope.
    pub fn slope_se(&self) -> f64 {
        self.var_beta.max(0.0).sqrt()
    }

    /// Degrees of freedom of the quantile (None: normal).
    pub fn dof(&self) -> Option<usize> {
        self.scatter.dof
    }

    /// The quantile at `confidence`.
    pub fn critical(&self, confidence: f64) -> f64 {
        critical_value(confidence, self.dof())
    }

    /// The SE basis a line fitted to this line's estimates should use.
    pub fn basis(&self) -> SeBasis {
        match self.dof() {
            Some(dof) => SeBasis::Estimated { dof },
            None => SeBasis::Known,
        }
    }

    /// Whether the covariance came from the SEs, their scaling, or the scatter alone.
    pub fn variance(&self) -> LineVariance {
        self.scatter.variance
    }
}

/// A weighted straight line of A2 (or 1/2 − χ) against 1/T.
#[derive(Debug, Clone, PartialEq)]
pub struct InverseTemperatureLine {
    /// Centre x̄ of 1/T, 1/K (weighted mean).
    pub x_centre: f64,
    /// Value at x̄ (α).
    pub alpha: f64,
    /// Slope in 1/T (β = b), value × K.
    pub beta: f64,
    /// Var(α), Cov(α, β), Var(β).
    pub var_alpha: f64,
    /// Cov(α, β).
    pub cov: f64,
    /// Var(β).
    pub var_beta: f64,
    /// Degrees of freedom of the quantile (None: normal quantile).
    pub dof: Option<usize>,
    /// Σw e² / (n − 2) with w = 1/SE² as given (null for n = 2 or without SEs).
    pub reduced_chi2: Option<f64>,
    /// P of a scatter at least this large if the SEs are right (null where not testable).
    pub lack_of_fit_p: Option<f64>,
    /// How the covariance was obtained.
    pub variance: LineVariance,
    /// Number of temperatures.
    pub n: usize,
}

impl InverseTemperatureLine {
    /// Fits the line. With per-temperature SEs the covariance comes from them (weights 1/SE²,
    /// absolute) and the quantile has their degrees of freedom (`basis`); only when the points
    /// scatter about the line more than those SEs allow — χ²/(n − 2) tested against
    /// F(n − 2, ν_SE), or χ²(n − 2) for known SEs, at [`LACK_OF_FIT_P`] — is it scaled up by
    /// the reduced χ², with t on n − 2 dof. A small χ² never shrinks it: with n − 2 dof the
    /// line's own scatter is too noisy a variance estimate to overrule SEs resting on many
    /// readings (the coverage study in DEVELOPERS.md measured both). Without SEs the line's
    /// own scatter is all there is (relative weights, n − 2 dof; two points are then refused).
    pub fn fit(points: &[TemperaturePoint], basis: SeBasis) -> Result<Self, FitError> {
        let x: Vec<f64> = points.iter().map(|p| 1.0 / p.temperature_k).collect();
        let y: Vec<f64> = points.iter().map(|p| p.value).collect();
        let se: Vec<Option<f64>> = points.iter().map(|p| p.se).collect();
        let line = WeightedLine::fit(&x, &y, &se, basis)?;
        let LineScatter { reduced_chi2, lack_of_fit_p, variance, dof, .. } = line.scatter;
        Ok(InverseTemperatureLine {
            x_centre: line.x_centre,
            alpha: line.alpha,
            beta: line.beta,
            var_alpha: line.var_alpha,
            cov: line.cov,
            var_beta: line.var_beta,
            dof,
            reduced_chi2,
            lack_of_fit_p,
            variance,
            n: line.n,
        })
    }

    /// The factor the SEs' covariance was multiplied by (1 unless the scatter overruled them).
    pub fn scale(&self) -> f64 {
        match self.variance {
            LineVariance::ScaledByScatter => self.reduced_chi2.unwrap_or(1.0),
            _ => 1.0,
        }
    }

    /// a = α − β x̄ (the T → ∞ limit).
    pub fn a(&self) -> f64 {
        self.alpha - self.beta * self.x_centre
    }

    /// b = β.
    pub fn b(&self) -> f64 {
        self.beta
    }

    /// Var(a), Cov(a, b), Var(b).
    pub fn ab_covariance(&self) -> (f64, f64, f64) {
        let xc = self.x_centre;
        let var_a = self.var_alpha - 2.0 * xc * self.cov + xc * xc * self.var_beta;
        let cov_ab = self.cov - xc * self.var_beta;
        (var_a, cov_ab, self.var_beta)
    }

    /// Value of the line at T, and its standard error.
    pub fn predict(&self, temperature_k: f64) -> (f64, f64) {
        let u = 1.0 / temperature_k - self.x_centre;
        let value = self.alpha + self.beta * u;
        let var = self.var_alpha + 2.0 * u * self.cov + u * u * self.var_beta;
        (value, var.max(0.0).sqrt())
    }

    /// θ = −b/a in K, where the line crosses zero; `None` when it never does at T > 0.
    pub fn theta_k(&self) -> Option<f64> {
        let x = self.x_centre - self.alpha / self.beta;
        (x.is_finite() && x > 0.0).then(|| 1.0 / x)
    }

    /// Delta-method SE of θ: θ = 1/x*, x* = x̄ − α/β, so
    /// Var θ = θ⁴ Var x*, Var x* = (Vα − 2(α/β) C + (α/β)² Vβ)/β².
    pub fn theta_se_k(&self) -> Option<f64> {
        let theta = self.theta_k()?;
        let r = self.alpha / self.beta;
        let var_x = (self.var_alpha - 2.0 * r * self.cov + r * r * self.var_beta) / (self.beta * self.beta);
        Some(theta * theta * var_x.max(0.0).sqrt())
    }

    /// Critical value at `confidence` for this fit's degrees of freedom.
    pub fn critical(&self, confidence: f64) -> f64 {
        critical_value(confidence, self.dof)
    }

    /// t statistic of the slope in 1/T (the temperature trend).
    pub fn slope_t(&self) -> f64 {
        self.beta / self.var_beta.sqrt()
    }

    /// Fieller's set for θ, mapped from x = 1/T to T. A bounded set in x that reaches x ≤ 0
    /// is unbounded above in T: returned as `(low, None)`.
    pub fn fieller_theta(&self, confidence: f64) -> ThetaSet {
        let t = self.critical(confidence);
        match fieller_zero(self.alpha, self.beta, self.var_alpha, self.cov, self.var_beta, t) {
            FiellerSet::Bounded(u_lo, u_hi) => {
                let (x_lo, x_hi) = (self.x_centre + u_lo, self.x_centre + u_hi);
                if x_hi <= 0.0 {
                    ThetaSet::Empty
                } else if x_lo <= 0.0 {
                    ThetaSet::AtLeast(1.0 / x_hi)
                } else {
                    ThetaSet::Interval(1.0 / x_hi, 1.0 / x_lo)
                }
            }
            FiellerSet::Exclusive(..) => ThetaSet::Exclusive,
            FiellerSet::Unbounded => ThetaSet::Unbounded,
        }
    }
}

/// Weights 1/SE² when every point has a finite positive SE; otherwise none (an SE of zero,
/// as from noise-free data, would be an infinite weight).
pub fn weights_of(points: &[TemperaturePoint]) -> Option<Vec<f64>> {
    points.iter().map(|p| p.se.filter(|s| s.is_finite() && *s > 0.0).map(|s| 1.0 / (s * s))).collect()
}

/// A confidence set for θ in kelvin.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ThetaSet {
    /// [low, high] K.
    Interval(f64, f64),
    /// [low, ∞) K.
    AtLeast(f64),
    /// The complement of an interval: the trend is not significant.
    Exclusive,
    /// All temperatures.
    Unbounded,
    /// No positive temperature (the line's zero lies at 1/T < 0 with confidence).
    Empty,
}

/// P(scatter ≥ observed) for a reduced χ² on `dof` degrees of freedom when the SEs behind the
/// weights are right: F(dof, ν_SE) for SEs estimated on ν_SE dof, χ²(dof)/dof for known SEs.
pub fn scatter_p_value(reduced_chi2: f64, dof: usize, se_dof: Option<usize>) -> Option<f64> {
    if dof == 0 || !reduced_chi2.is_finite() {
        return None;
    }
    match se_dof {
        Some(d2) if d2 > 0 => FisherSnedecor::new(dof as f64, d2 as f64).ok().map(|f| f.sf(reduced_chi2)),
        Some(_) => None,
        None => ChiSquared::new(dof as f64).ok().map(|c| c.sf(reduced_chi2 * dof as f64)),
    }
}

/// A2 (or 1/2 − χ) = a + b/T with covariance, as reports carry it and plans read it (A2 in
/// mol mL/g², numerically the SI mol m³/kg²).
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct FittedLine {
    /// `second_virial` (mol mL/g²) or `half_minus_chi` (dimensionless).
    pub quantity: crate::dataset::Quantity,
    /// a (value at T → ∞).
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub a: f64,
    /// b, value × K.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub b_k: f64,
    /// Var(a).
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub var_a: f64,
    /// Cov(a, b), value² K.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub cov_ab_k: f64,
    /// Var(b), value² K².
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub var_b_k2: f64,
    /// Reduced χ² of the line on the per-temperature SEs as given.
    pub reduced_chi2: Option<f64>,
    /// P of a scatter at least that large if the SEs are right (null where not testable).
    #[serde(default)]
    pub lack_of_fit_p: Option<f64>,
    /// `standard_errors` (covariance from the per-temperature SEs), `scaled_by_scatter` (scaled
    /// up by the reduced χ², where p < 0.10) or `unweighted` (no SEs: the line's own scatter).
    #[serde(default = "default_variance")]
    pub variance: LineVariance,
}

fn default_variance() -> LineVariance {
    LineVariance::Unweighted
}
