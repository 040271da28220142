//! A2 quadratic in 1/T, for series that reach far above θ where A2(T) bends:
//! A2 = c0 + c1 u + c2 u², u = 1/T − x̄. Its zero inside the measured range is found with
//! Brent's root finder ([`crate::numerics::brent_root`]); the SE of θ follows by the delta method through the implicit
//! function theorem.

use super::line::{scatter_p_value, SeBasis, LACK_OF_FIT_P};
use super::TemperaturePoint;
use crate::numerics::brent_root;
use crate::numerics::linear::{self, Weights};
use crate::uncertainty::critical_value;

/// The fitted curve.
#[derive(Debug, Clone, PartialEq)]
pub struct CurvedFit {
    /// Centre of 1/T, 1/K.
    pub x_centre: f64,
    /// c0, c1, c2.
    pub coefficients: [f64; 3],
    /// Covariance, row-major 3×3.
    pub covariance: [f64; 9],
    /// Degrees of freedom of the quantile (None: normal), chosen as for the line.
    pub dof: Option<usize>,
    /// t statistic of c2.
    pub curvature_t: f64,
    /// AICc of this fit and of the straight line on the same weights.
    pub aicc: Option<f64>,
    /// AICc of the straight line.
    pub line_aicc: Option<f64>,
}

/// Smallest number of temperatures for the curved model (3 parameters, 2 residual dof).
pub const MIN_TEMPERATURES: usize = 5;

impl CurvedFit {
    /// Fits the curve; `None` with fewer than `MIN_TEMPERATURES` (5) temperatures. The
    /// covariance follows the line's rule ([`super::InverseTemperatureLine::fit`]): from the
    /// per-temperature SEs unless the points scatter about the curve more than they allow.
    pub fn fit(points: &[TemperaturePoint], basis: SeBasis) -> Option<Self> {
        let n = points.len();
        if n < MIN_TEMPERATURES {
            return None;
        }
        let weights = super::line::weights_of(points);
        let x: Vec<f64> = points.iter().map(|p| 1.0 / p.temperature_k).collect();
        let x_centre = x.iter().sum::<f64>() / n as f64;
        let u: Vec<f64> = x.iter().map(|x| x - x_centre).collect();
        let y = |i: usize| points[i].value;
        let weight = |i: usize| weights.as_ref().map_or(1.0, |w| w[i]);
        let kind = if weights.is_some() { Weights::Absolute } else { Weights::Relative };
        let quad = linear::fit_core(n, 3, |i| linear::polynomial_row(u[i], 3), y, weight, kind).ok()?;
        let line = linear::fit_core(n, 2, |i| linear::polynomial_row(u[i], 2), y, weight, kind).ok()?;
        let reduced_chi2 = quad.rss_weighted / quad.dof as f64;
        let (scale, dof) = match weights {
            None => (1.0, Some(quad.dof)),
            Some(_) => match scatter_p_value(reduced_chi2, quad.dof, basis.dof()) {
                Some(p) if p < LACK_OF_FIT_P => (reduced_chi2, Some(quad.dof)),
                _ => (1.0, basis.dof()),
            },
        };
        let covariance = std::array::from_fn(|k| scale * quad.covariance[k / 3][k % 3]);
        Some(CurvedFit {
            x_centre,
            coefficients: [quad.coefficients[0], quad.coefficients[1], quad.coefficients[2]],
            covariance,
            dof,
            curvature_t: quad.coefficients[2] / (scale * quad.covariance[2][2]).sqrt(),
            aicc: crate::numerics::aicc(quad.rss_weighted, n, 3),
            line_aicc: crate::numerics::aicc(line.rss_weighted, n, 2),
        })
    }

    /// Whether the data support the curve over the line: the c2 term is significant at
    /// `confidence` (t test on the curve's quantile dof) and, where both are defined, AICc
    /// prefers it.
    pub fn supported(&self, confidence: f64) -> bool {
        let significant = self.curvature_t.abs() > critical_value(confidence, self.dof);
        let aicc_prefers = match (self.aicc, self.line_aicc) {
            (Some(q), Some(l)) => q < l,
            _ => true,
        };
        significant && aicc_prefers
    }

    fn value(&self, u: f64) -> f64 {
        let [c0, c1, c2] = self.coefficients;
        c0 + c1 * u + c2 * u * u
    }

    /// θ (K) where the curve crosses zero between `t_min` and `t_max`, with its delta-method
    /// SE; `None` when it does not change sign there.
    pub fn theta_in(&self, t_min: f64, t_max: f64) -> Option<(f64, f64)> {
        let (u_lo, u_hi) = (1.0 / t_max - self.x_centre, 1.0 / t_min - self.x_centre);
        if self.value(u_lo).signum() == self.value(u_hi).signum() {
            return None;
        }
        let u = brent_root(|u| self.value(u), u_lo, u_hi)?;
        let [_, c1, c2] = self.coefficients;
        let slope = c1 + 2.0 * c2 * u;
        // du*/dc = −(1, u, u²)/f'(u*); θ = 1/(x̄ + u*), dθ/du = −θ².
        let g = [1.0, u, u * u];
        let var_u: f64 =
            (0..3).map(|i| (0..3).map(|j| g[i] * self.covariance[i * 3 + j] * g[j]).sum::<f64>()).sum::<f64>()
                / (slope * slope);
        let theta = 1.0 / (self.x_centre + u);
        Some((theta, theta * theta * var_u.max(0.0).sqrt()))
    }
}
