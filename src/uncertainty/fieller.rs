//! Fieller's confidence set for the zero of a straight line (a ratio of estimates).
//!
//! For y(u) = α + β u with estimates α̂, β̂ and covariance (V_α, C, V_β), the zero is
//! u* = −α/β. Fieller (1954, J. R. Stat. Soc. B 16, 175–185) inverts the t test of
//! H0: α + β u = 0 at every u: the set {u : (α̂ + β̂ u)² ≤ t² (V_α + 2uC + u²V_β)}, i.e.
//! A u² + 2B u + Cc ≤ 0 with A = β̂² − t²V_β, B = α̂β̂ − t²C, Cc = α̂² − t²V_α.
//! It is a finite interval only when β̂ is significant (A > 0); otherwise the set is the
//! complement of an interval or the whole line, and no finite bounds exist.

use serde::Serialize;

/// The shape of a Fieller set.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum FiellerSet {
    /// [low, high].
    Bounded(f64, f64),
    /// Everything outside (low, high): the slope is not significant.
    Exclusive(f64, f64),
    /// The whole line: no information about the zero at this level.
    Unbounded,
}

/// Fieller's set for the zero of α + β u, at critical value `t`.
pub fn fieller_zero(alpha: f64, beta: f64, var_alpha: f64, cov: f64, var_beta: f64, t: f64) -> FiellerSet {
    let t2 = t * t;
    let a = beta * beta - t2 * var_beta;
    let b = alpha * beta - t2 * cov;
    let c = alpha * alpha - t2 * var_alpha;
    let discriminant = b * b - a * c;
    if a > 0.0 {
        // discriminant ≥ 0 always holds here (the point estimate lies in the set).
        let root = discriminant.max(0.0).sqrt();
        FiellerSet::Bounded((-b - root) / a, (-b + root) / a)
    } else if discriminant > 0.0 && a < 0.0 {
        let root = discriminant.sqrt();
        let (r1, r2) = ((-b - root) / a, (-b + root) / a);
        FiellerSet::Exclusive(r1.min(r2), r1.max(r2))
    } else {
        FiellerSet::Unbounded
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_precise_slope_gives_an_interval_around_the_ratio() {
        match fieller_zero(2.0, -1.0, 0.01, 0.0, 0.0001, 2.0) {
            FiellerSet::Bounded(lo, hi) => assert!(lo < 2.0 && hi > 2.0 && hi - lo < 1.0),
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn an_insignificant_slope_never_gives_finite_bounds() {
        assert!(matches!(fieller_zero(2.0, -0.1, 0.01, 0.0, 0.01, 2.0), FiellerSet::Exclusive(..)));
        assert_eq!(fieller_zero(0.1, 0.01, 0.01, 0.0, 0.01, 2.0), FiellerSet::Unbounded);
    }
}
