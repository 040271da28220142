//! Weighted linear least squares, solved by a QR factorisation of the weighted design matrix
//! built with Givens rotations (never the normal equations, which square the condition number).
//!
//! Model: y = X β + ε, Var(ε_i) = σ² / w_i. With W^½ X = Q R,
//! β̂ = R⁻¹ Qᵀ W^½ y and Cov(β̂) = s² (RᵀR)⁻¹, where s² = RSS_w / (n − p) when the weights
//! are relative, or s² = 1 when they are absolute (w_i = 1/σ_i² with σ_i known).

use super::GivensQr;

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
    /// Leverages h_ii (diagonal of the weighted hat matrix), ‖R⁻ᵀ x_i‖².
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

/// Most parameters [`fit`] takes: the per-temperature forms and the curved θ model have 2 or 3
/// (kept small: a factorisation on the stack is copied as the forms are compared).
pub const MAX_PARAMETERS: usize = 4;

/// The solved core of a weighted least-squares problem: β̂, Cov(β̂) and the weighted RSS,
/// with nothing stored per point (what comparing candidate models needs, on the stack).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CoreFit {
    p: usize,
    n: usize,
    qr: GivensQr<MAX_PARAMETERS>,
    scale: [f64; MAX_PARAMETERS],
    /// Estimates β̂ (the first p entries).
    pub coefficients: [f64; MAX_PARAMETERS],
    /// Cov(β̂) (the leading p×p block).
    pub covariance: [[f64; MAX_PARAMETERS]; MAX_PARAMETERS],
    /// Weighted residual sum of squares Σ w_i (y_i − x_iᵀβ̂)².
    pub rss_weighted: f64,
    /// Residual degrees of freedom n − p.
    pub dof: usize,
    /// s = √(RSS_w / (n − p)) (NaN when n = p).
    pub residual_sd: f64,
}

impl CoreFit {
    /// Standard error √Cov(β̂)_jj.
    pub fn se(&self, j: usize) -> f64 {
        self.covariance[j][j].sqrt()
    }
}

/// Solves y = X β by weighted least squares, row i of X given by `row(i)` (p ≤
/// [`MAX_PARAMETERS`] columns), y_i by `y(i)` and w_i by `weight(i)`, with no allocation.
pub fn fit_core(
    n: usize,
    p: usize,
    row: impl Fn(usize) -> [f64; MAX_PARAMETERS],
    y: impl Fn(usize) -> f64,
    weight: impl Fn(usize) -> f64,
    kind: Weights,
) -> Result<CoreFit, FitError> {
    assert!(p <= MAX_PARAMETERS, "at most {MAX_PARAMETERS} parameters");
    if n < p {
        return Err(FitError::TooFewPoints { points: n, parameters: p });
    }
    // Scale each weighted column to unit norm first, so that the rank test is relative and
    // columns of very different size (1, c, c²) do not trip it.
    let mut scale = [0.0; MAX_PARAMETERS];
    for i in 0..n {
        let (x, w) = (row(i), weight(i));
        if !(w.is_finite() && w > 0.0) {
            return Err(FitError::BadWeight);
        }
        for j in 0..p {
            scale[j] += w * x[j] * x[j];
        }
    }
    for s in scale.iter_mut().take(p) {
        *s = s.sqrt();
        if !(s.is_finite() && *s > 0.0) {
            return Err(FitError::RankDeficient);
        }
    }
    let mut qr = GivensQr::<MAX_PARAMETERS>::new(p);
    for i in 0..n {
        let (x, sw) = (row(i), weight(i).sqrt());
        let mut scaled = [0.0; MAX_PARAMETERS];
        for j in 0..p {
            scaled[j] = x[j] * sw / scale[j];
        }
        qr.add_row(scaled, y(i) * sw);
    }
    let tolerance = (n.max(p) as f64) * f64::EPSILON * 16.0;
    if (0..p).any(|j| qr.diagonal(j).is_nan() || qr.diagonal(j).abs() <= tolerance) {
        return Err(FitError::RankDeficient);
    }
    let beta_scaled = qr.solve();
    let mut coefficients = [0.0; MAX_PARAMETERS];
    for j in 0..p {
        coefficients[j] = beta_scaled[j] / scale[j];
    }
    let rss_weighted: f64 = (0..n)
        .map(|i| {
            let x = row(i);
            let e = y(i) - (0..p).map(|j| x[j] * coefficients[j]).sum::<f64>();
            weight(i) * e * e
        })
        .sum();
    let dof = n - p;
    let residual_sd = if dof > 0 { (rss_weighted / dof as f64).sqrt() } else { f64::NAN };
    let s2 = match kind {
        Weights::Absolute => 1.0,
        Weights::Relative => residual_sd * residual_sd,
    };
    let gram = qr.inverse_gram();
    let mut covariance = [[0.0; MAX_PARAMETERS]; MAX_PARAMETERS];
    for i in 0..p {
        for j in 0..p {
            covariance[i][j] = s2 * gram[i][j] / (scale[i] * scale[j]);
        }
    }
    Ok(CoreFit { p, n, qr, scale, coefficients, covariance, rss_weighted, dof, residual_sd })
}

/// Fits y = X β by weighted least squares. `design` holds n rows of p columns (row-major);
/// `weights` are w_i (all one when `None`).
pub fn fit(design: &[f64], p: usize, y: &[f64], weights: Option<&[f64]>, kind: Weights) -> Result<LinearFit, FitError> {
    let n = y.len();
    assert_eq!(design.len(), n * p, "design must have n·p entries");
    if let Some(w) = weights {
        if w.len() != n {
            return Err(FitError::BadWeight);
        }
    }
    let core = fit_core(n, p, |i| design_row(design, p, i), |i| y[i], |i| weights.map_or(1.0, |w| w[i]), kind)?;
    Ok(complete(&core, design, y, weights))
}

fn design_row(design: &[f64], p: usize, i: usize) -> [f64; MAX_PARAMETERS] {
    let mut x = [0.0; MAX_PARAMETERS];
    x[..p].copy_from_slice(&design[i * p..(i + 1) * p]);
    x
}

/// The per-point outputs (fitted values, residuals, leverages, studentised residuals, R²) of a
/// solved core, for the design and data it was solved from.
pub fn complete(core: &CoreFit, design: &[f64], y: &[f64], weights: Option<&[f64]>) -> LinearFit {
    let (n, p) = (core.n, core.p);
    let w = |i: usize| weights.map_or(1.0, |w| w[i]);
    let coefficients = core.coefficients[..p].to_vec();
    let fitted: Vec<f64> = (0..n).map(|i| (0..p).map(|j| design[i * p + j] * coefficients[j]).sum()).collect();
    let residuals: Vec<f64> = y.iter().zip(&fitted).map(|(y, f)| y - f).collect();
    let covariance: Vec<f64> = (0..p * p).map(|k| core.covariance[k / p][k % p]).collect();
    let standard_errors = (0..p).map(|j| core.se(j)).collect();
    let leverage: Vec<f64> = (0..n)
        .map(|i| {
            let (x, sw) = (design_row(design, p, i), w(i).sqrt());
            let mut scaled = [0.0; MAX_PARAMETERS];
            for j in 0..p {
                scaled[j] = x[j] * sw / core.scale[j];
            }
            core.qr.leverage(&scaled)
        })
        .collect();
    let residual_sd = core.residual_sd;
    let studentized = (0..n)
        .map(|i| {
            let denom = residual_sd * (1.0 - leverage[i]).max(0.0).sqrt();
            if denom > 0.0 {
                w(i).sqrt() * residuals[i] / denom
            } else {
                f64::NAN
            }
        })
        .collect();
    let w_sum: f64 = (0..n).map(w).sum();
    let y_mean = y.iter().enumerate().map(|(i, y)| w(i) * y).sum::<f64>() / w_sum;
    let tss: f64 = y.iter().enumerate().map(|(i, y)| w(i) * (y - y_mean).powi(2)).sum();
    let rss_weighted = core.rss_weighted;
    let r_squared = if tss > 0.0 { 1.0 - rss_weighted / tss } else { f64::NAN };
    LinearFit {
        coefficients,
        covariance,
        standard_errors,
        residuals,
        fitted,
        leverage,
        studentized,
        rss_weighted,
        dof: core.dof,
        residual_sd,
        r_squared,
    }
}

/// One row [1, x, x², …] of a polynomial design with `p` columns (the rest zero), for
/// [`fit_core`]; the powers are formed as [`polynomial_design`] forms them.
#[inline]
pub fn polynomial_row(x: f64, p: usize) -> [f64; MAX_PARAMETERS] {
    let mut row = [0.0; MAX_PARAMETERS];
    let mut power = 1.0;
    for v in row.iter_mut().take(p) {
        *v = power;
        power *= x;
    }
    row
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
