//! One root finder for every stage: Brent's method (argmin's), bracketed.

use argmin::core::{CostFunction, Error as ArgminError, Executor};
use argmin::solver::brent::BrentRoot;

struct Scalar<F: Fn(f64) -> f64>(F);

impl<F: Fn(f64) -> f64> CostFunction for Scalar<F> {
    type Param = f64;
    type Output = f64;
    fn cost(&self, x: &f64) -> Result<f64, ArgminError> {
        Ok((self.0)(*x))
    }
}

/// The root of `f` in [lo, hi] (f(lo) and f(hi) of opposite sign) by argmin's Brent method.
pub fn brent_root(f: impl Fn(f64) -> f64, lo: f64, hi: f64) -> Option<f64> {
    let tolerance = 1e-15 * lo.abs().max(hi.abs()).max(f64::MIN_POSITIVE);
    let solver = BrentRoot::new(lo, hi, tolerance);
    let result = Executor::new(Scalar(f), solver).configure(|s| s.param((lo + hi) / 2.0).max_iters(200)).run().ok()?;
    let state = result.state();
    argmin::core::State::get_best_param(state).copied().or(argmin::core::State::get_param(state).copied())
}

#[cfg(test)]
mod tests {
    use super::brent_root;

    #[test]
    fn brent_finds_known_roots() {
        // √2 (x² − 2), cos x = x (Dottie number 0.739085133215160…, from memory), e^x = 3 (ln 3).
        assert!((brent_root(|x| x * x - 2.0, 0.0, 2.0).unwrap() - 2f64.sqrt()).abs() < 1e-14);
        assert!((brent_root(|x| x.cos() - x, 0.0, 1.0).unwrap() - 0.739_085_133_215_160_6).abs() < 1e-14);
        assert!((brent_root(|x| x.exp() - 3.0, 0.0, 2.0).unwrap() - 3f64.ln()).abs() < 1e-14);
        // A root on a scale of 1/T (about 3e-3) keeps full relative precision.
        assert!((brent_root(|x| x - 3.2e-3, 3.0e-3, 3.5e-3).unwrap() - 3.2e-3).abs() < 1e-17);
    }
}
