//! Weighted linear least squares, solved by Householder QR of the weighted design matrix
//! (never the normal equations, which square the condition number).
//!
//! Model: y = X β + ε, Var(ε_i) = σ² / w_i. With W^½ X = Q R,
//! β̂ = R⁻¹ Qᵀ W^½ y and Cov(β̂) = s² (RᵀR)⁻¹, where s² = RSS_w / (n − p) when the weights
//! are relative, or s² = 1 when they are absolute (w_i = 1/σ_i² with σ_i known).

use nalgebra::{DMatrix, DVector};

/// How to read the weights.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Weights {
    /// w_i = 1/σ_i² with σ_i known: covariance is not rescaled by the residuals.
    Absolute,
    /// Weights known up to a factor (or all one): covariance is scaled by s² = RSS_w/(n − p).
    Relative,
}

/// Why a least-squares problem could not be solved.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum FitError {
    /// Fewer points than parameters.
    #[error("{points} points cannot determine {parameters} parameters")]
    TooFewPoints {
        /// Observations.
        points: usize,
        /// Parameters.
        parameters: usize,
    },
    /// Columns of the design are (numerically) dependent, e.g. one concentration repeated.
    #[error("the design is rank deficient (the x values do not vary enough)")]
    RankDeficient,
    /// A weight is not finite and positive.
    #[error("a weight is not a finite positive number")]
    BadWeight,
}

/// Result of a weighted linear least-squares fit.
#[derive(Debug, Clone, PartialEq)]
pub struct LinearFit {
    /// Estimates β̂ (one per column of X).
    pub coefficients: Vec<f64>,
    /// Covariance of β̂, p×p, row-major.
    pub covariance: Vec<f64>,
    /// Standard errors √diag(Cov β̂).
    pub standard_errors: Vec<f64>,
    /// Raw residuals y_i − x_iᵀβ̂, in the units of y.
    pub residuals: Vec<f64>,
    /// Fitted values x_iᵀβ̂.
    pub fitted: Vec<f64>,
    /// Leverages h_ii (diagonal of the weighted hat matrix), from ‖row i of Q‖².
    pub leverage: Vec<f64>,
    /// Internally studentised residuals √w_i e_i / (s √(1 − h_ii)); NaN where h_ii = 1.
    pub studentized: Vec<f64>,
    /// Weighted residual sum of squares Σ w_i e_i².
    pub rss_weighted: f64,
    /// Residual degrees of freedom n − p.
    pub dof: usize,
    /// Residual standard deviation s = √(RSS_w / (n − p)) (NaN when n = p).
    pub residual_sd: f64,
    /// Coefficient of determination 1 − RSS_w/TSS_w around the weighted mean (models with an
    /// intercept column).
    pub r_squared: f64,
}

impl LinearFit {
    /// Element (i, j) of the covariance matrix.
    pub fn cov(&self, i: usize, j: usize) -> f64 {
        self.covariance[i * self.coefficients.len() + j]
    }
}

/// Fits y = X β by weighted least squares. `design` holds n rows of p columns (row-major);
/// `weights` are w_i (all one when `None`).
pub fn fit(design: &[f64], p: usize, y: &[f64], weights: Option<&[f64]>, kind: Weights) -> Result<LinearFit, FitError> {
    let n = y.len();
    assert_eq!(design.len(), n * p, "design must have n·p entries");
    if n < p {
        return Err(FitError::TooFewPoints { points: n, parameters: p });
    }
    let w: Vec<f64> = match weights {
        Some(w) => {
            if w.iter().any(|v| !(v.is_finite() && *v > 0.0)) {
                return Err(FitError::BadWeight);
            }
            w.to_vec()
        }
        None => vec![1.0; n],
    };
    let sqrt_w: Vec<f64> = w.iter().map(|v| v.sqrt()).collect();
    let xw = DMatrix::from_fn(n, p, |i, j| design[i * p + j] * sqrt_w[i]);
    let yw = DVector::from_fn(n, |i, _| y[i] * sqrt_w[i]);

    // Scale each column to unit norm first, so that the rank test is relative and
    // columns of very different size (1, c, c²) do not trip it.
    let scale: Vec<f64> = (0..p).map(|j| xw.column(j).norm()).collect();
    if scale.iter().any(|s| !(s.is_finite() && *s > 0.0)) {
        return Err(FitError::RankDeficient);
    }
    let xs = DMatrix::from_fn(n, p, |i, j| xw[(i, j)] / scale[j]);
    let qr = xs.qr();
    let q = qr.q();
    let r = qr.r();
    let tolerance = (n.max(p) as f64) * f64::EPSILON * 16.0;
    if (0..p).any(|j| r[(j, j)].abs() <= tolerance) {
        return Err(FitError::RankDeficient);
    }
    let qty = q.transpose() * &yw;
    let beta_scaled = r.solve_upper_triangular(&qty).ok_or(FitError::RankDeficient)?;
    let r_inv = r.solve_upper_triangular(&DMatrix::identity(p, p)).ok_or(FitError::RankDeficient)?;
    let unscaled_cov = &r_inv * r_inv.transpose();

    let coefficients: Vec<f64> = (0..p).map(|j| beta_scaled[j] / scale[j]).collect();
    let fitted: Vec<f64> = (0..n).map(|i| (0..p).map(|j| design[i * p + j] * coefficients[j]).sum()).collect();
    let residuals: Vec<f64> = y.iter().zip(&fitted).map(|(y, f)| y - f).collect();
    let rss_weighted: f64 = residuals.iter().zip(&w).map(|(e, w)| w * e * e).sum();
    let dof = n - p;
    let residual_sd = if dof > 0 { (rss_weighted / dof as f64).sqrt() } else { f64::NAN };
    let s2 = match kind {
        Weights::Absolute => 1.0,
        Weights::Relative => residual_sd * residual_sd,
    };
    let covariance: Vec<f64> =
        (0..p * p).map(|k| s2 * unscaled_cov[(k / p, k % p)] / (scale[k / p] * scale[k % p])).collect();
    let standard_errors = (0..p).map(|j| covariance[j * p + j].sqrt()).collect();
    let leverage: Vec<f64> = (0..n).map(|i| q.row(i).norm_squared()).collect();
    let studentized = (0..n)
        .map(|i| {
            let denom = residual_sd * (1.0 - leverage[i]).sqrt();
            if denom > 0.0 {
                sqrt_w[i] * residuals[i] / denom
            } else {
                f64::NAN
            }
        })
        .collect();
    let w_sum: f64 = w.iter().sum();
    let y_mean = y.iter().zip(&w).map(|(y, w)| w * y).sum::<f64>() / w_sum;
    let tss: f64 = y.iter().zip(&w).map(|(y, w)| w * (y - y_mean).powi(2)).sum();
    let r_squared = if tss > 0.0 { 1.0 - rss_weighted / tss } else { f64::NAN };
    Ok(LinearFit {
        coefficients,
        covariance,
        standard_errors,
        residuals,
        fitted,
        leverage,
        studentized,
        rss_weighted,
        dof,
        residual_sd,
        r_squared,
    })
}

/// Polynomial design matrix [1, x, x², …, x^degree], row-major.
pub fn polynomial_design(x: &[f64], degree: usize) -> Vec<f64> {
    let p = degree + 1;
    let mut design = Vec::with_capacity(x.len() * p);
    for &xi in x {
        let mut power = 1.0;
        for _ in 0..p {
            design.push(power);
            power *= xi;
        }
    }
    design
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    #[test]
    fn an_exact_line_is_recovered_with_zero_residuals() {
        let x = [1.0, 2.0, 3.0, 4.0];
        let y: Vec<f64> = x.iter().map(|x| 2.0 + 0.5 * x).collect();
        let f = fit(&polynomial_design(&x, 1), 2, &y, None, Weights::Relative).unwrap();
        assert_relative_eq!(f.coefficients[0], 2.0, epsilon = 1e-12);
        assert_relative_eq!(f.coefficients[1], 0.5, epsilon = 1e-12);
        assert!(f.rss_weighted < 1e-24);
        assert_eq!(f.dof, 2);
    }

    #[test]
    fn repeated_x_is_rank_deficient_and_too_few_points_are_refused() {
        let x = [2.0, 2.0, 2.0];
        assert_eq!(
            fit(&polynomial_design(&x, 1), 2, &[1.0, 2.0, 3.0], None, Weights::Relative),
            Err(FitError::RankDeficient)
        );
        assert!(matches!(
            fit(&polynomial_design(&x[..1], 1), 2, &[1.0], None, Weights::Relative),
            Err(FitError::TooFewPoints { .. })
        ));
    }

    #[test]
    fn weights_multiply_the_equations() {
        // Duplicating a point is the same as giving it weight 2.
        let x = [0.0, 1.0, 2.0, 3.0];
        let y = [0.1, 0.9, 2.2, 2.8];
        let w = [1.0, 2.0, 1.0, 1.0];
        let weighted = fit(&polynomial_design(&x, 1), 2, &y, Some(&w), Weights::Relative).unwrap();
        let xd = [0.0, 1.0, 1.0, 2.0, 3.0];
        let yd = [0.1, 0.9, 0.9, 2.2, 2.8];
        let dup = fit(&polynomial_design(&xd, 1), 2, &yd, None, Weights::Relative).unwrap();
        assert_relative_eq!(weighted.coefficients[0], dup.coefficients[0], epsilon = 1e-12);
        assert_relative_eq!(weighted.coefficients[1], dup.coefficients[1], epsilon = 1e-12);
    }
}
