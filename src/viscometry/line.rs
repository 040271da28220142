//! A weighted straight line y = α + β (x − x̄) for the viscometry route's lines across
//! fractions (Mark–Houwink in ln M, Stockmayer–Fixman in M^{1/2}) and across temperatures,
//! with the θ line's rule for how far its covariance rests on the points' SEs
//! ([`LineScatter`]).

use crate::numerics::linear::{self, FitError, Weights};
use crate::theta::{LineScatter, LineVariance, SeBasis};
use crate::uncertainty::critical_value;

/// A fitted line in the centred variable.
#[derive(Debug, Clone, PartialEq)]
pub struct Line {
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

impl Line {
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
        Ok(Line {
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

/// The basis of SEs estimated on `dofs` (the fewest), or known when none is estimated.
pub fn basis_of(dofs: impl Iterator<Item = Option<usize>>) -> SeBasis {
    match dofs.flatten().min() {
        Some(dof) => SeBasis::Estimated { dof },
        None => SeBasis::Known,
    }
}
