//! Flory–Krigbaum near θ: A2(T) = (v̄²/V1) ψ1 (1 − θ/T) = a + b/T, a straight line in
//! x = 1/T, fitted by weighted least squares (w = 1/SE(A2)²) in the centred variable
//! u = x − x̄: A2 = α + β u. Then θ = 1/(x̄ − α/β) = −b/a, with a = α − β x̄ and b = β.

use super::TemperaturePoint;
use crate::regression::{self, FitError, Weights};
use crate::uncertainty::{critical_value, fieller_zero, FiellerSet};

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
    /// Residual degrees of freedom used for t (None: normal quantile, absolute weights).
    pub dof: Option<usize>,
    /// Σw e² / (n − 2) (null for n = 2).
    pub reduced_chi2: Option<f64>,
    /// Number of temperatures.
    pub n: usize,
}

impl InverseTemperatureLine {
    /// Fits the line. With three or more temperatures the covariance is scaled by the reduced
    /// χ² (the per-temperature SEs are themselves estimates, and the F(X) ≈ 1 form is an
    /// approximation) and t has n − 2 degrees of freedom; with two, the SEs are taken as
    /// known and the normal quantile applies.
    pub fn fit(points: &[TemperaturePoint]) -> Result<Self, FitError> {
        let n = points.len();
        let weights = weights_of(points);
        let w_sum: f64 = weights.as_ref().map_or(n as f64, |w| w.iter().sum());
        let x: Vec<f64> = points.iter().map(|p| 1.0 / p.temperature_k).collect();
        let x_centre = match &weights {
            Some(w) => x.iter().zip(w).map(|(x, w)| x * w).sum::<f64>() / w_sum,
            None => x.iter().sum::<f64>() / n as f64,
        };
        let u: Vec<f64> = x.iter().map(|x| x - x_centre).collect();
        let (kind, dof) = match (n, &weights) {
            (2, Some(_)) => (Weights::Absolute, None),
            _ => (Weights::Relative, Some(n.saturating_sub(2))),
        };
        if n < 2 || (n == 2 && weights.is_none()) {
            return Err(FitError::TooFewPoints { points: n, parameters: 3 });
        }
        // Estimates and covariance only: no per-point output (every bootstrap replicate
        // fits this line too).
        let weight = |i: usize| weights.as_ref().map_or(1.0, |w| w[i]);
        let fit =
            regression::fit_core(n, 2, |i| regression::polynomial_row(u[i], 2), |i| points[i].value, weight, kind)?;
        Ok(InverseTemperatureLine {
            x_centre,
            alpha: fit.coefficients[0],
            beta: fit.coefficients[1],
            var_alpha: fit.covariance[0][0],
            cov: fit.covariance[0][1],
            var_beta: fit.covariance[1][1],
            dof,
            reduced_chi2: (fit.dof > 0).then(|| fit.rss_weighted / fit.dof as f64),
            n,
        })
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
