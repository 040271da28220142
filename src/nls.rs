//! Nonlinear least squares: a damped Gauss–Newton (Levenberg–Marquardt) solver that runs
//! inside argmin's executor, each step solved by QR, never by the normal equations.
//!
//! Minimises S(β) = Σ r_i(β)², r = f(β) − y (weighted residuals where weights apply).
//! Step: min ‖J p + r‖² + λ‖D p‖², solved as the stacked least-squares problem
//! [J; √λ D] p = [−r; 0] (Moré 1978, "The Levenberg–Marquardt algorithm: implementation and
//! theory", in Numerical Analysis, Dundee 1977, Springer LNM 630), with D the running maximum of
//! J's column norms and λ updated from the gain ratio (Nielsen 1999, IMM-REP-1999-05).
//! Covariance at the optimum: s² (JᵀJ)⁻¹ = s² R⁻¹R⁻ᵀ from the QR of J, s² = S/(n − p).

use argmin::core::{
    Error as ArgminError, Executor, IterState, Jacobian, Operator, Problem, Solver, State, TerminationReason,
    TerminationStatus, KV,
};
use nalgebra::{DMatrix, DVector};

/// A model to fit: residuals r(β) = f(β) − y and their Jacobian ∂r/∂β.
pub trait LeastSquaresProblem {
    /// Number of residuals n.
    fn residual_count(&self) -> usize;
    /// Residuals at β.
    fn residuals(&self, beta: &[f64]) -> Vec<f64>;
    /// Jacobian at β, n×p row-major.
    fn jacobian(&self, beta: &[f64]) -> Vec<f64>;
}

/// Result of a nonlinear least-squares fit.
#[derive(Debug, Clone, PartialEq)]
pub struct NonlinearFit {
    /// Estimates β̂.
    pub parameters: Vec<f64>,
    /// Covariance s²(JᵀJ)⁻¹, p×p row-major.
    pub covariance: Vec<f64>,
    /// Standard errors.
    pub standard_errors: Vec<f64>,
    /// Residual sum of squares S(β̂).
    pub rss: f64,
    /// n − p.
    pub dof: usize,
    /// √(S/(n − p)).
    pub residual_sd: f64,
    /// Iterations taken.
    pub iterations: u64,
    /// Whether a convergence test was met (not the iteration limit).
    pub converged: bool,
    /// Why it stopped, in words.
    pub termination: String,
}

/// Why a nonlinear fit failed outright (stopping at the iteration limit is not a failure:
/// it is reported in [`NonlinearFit::converged`]).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum NlsError {
    /// Fewer residuals than parameters.
    #[error("{points} points cannot determine {parameters} parameters")]
    TooFewPoints {
        /// Residuals.
        points: usize,
        /// Parameters.
        parameters: usize,
    },
    /// The Jacobian at the solution is rank deficient: parameters are not identifiable.
    #[error("the parameters are not identifiable from these data (singular Jacobian)")]
    Singular,
    /// Residuals or the Jacobian became non-finite.
    #[error("the model became non-finite during the fit")]
    NonFinite,
    /// argmin reported an error.
    #[error("solver: {0}")]
    Solver(String),
}

struct Adapter<'a, M: ?Sized> {
    model: &'a M,
    p: usize,
}

impl<M: LeastSquaresProblem + ?Sized> Operator for Adapter<'_, M> {
    type Param = DVector<f64>;
    type Output = DVector<f64>;
    fn apply(&self, beta: &Self::Param) -> Result<Self::Output, ArgminError> {
        Ok(DVector::from_vec(self.model.residuals(beta.as_slice())))
    }
}

impl<M: LeastSquaresProblem + ?Sized> Jacobian for Adapter<'_, M> {
    type Param = DVector<f64>;
    type Jacobian = DMatrix<f64>;
    fn jacobian(&self, beta: &Self::Param) -> Result<Self::Jacobian, ArgminError> {
        let n = self.model.residual_count();
        Ok(DMatrix::from_row_slice(n, self.p, &self.model.jacobian(beta.as_slice())))
    }
}

/// The damped Gauss–Newton solver (argmin [`Solver`]).
#[derive(Debug, Clone)]
pub struct LevenbergMarquardt {
    lambda: f64,
    nu: f64,
    scale: Option<DVector<f64>>,
    /// Relative reduction of S below which the fit has converged.
    pub ftol: f64,
    /// Relative step size below which the fit has converged.
    pub xtol: f64,
    done: Option<&'static str>,
}

impl Default for LevenbergMarquardt {
    fn default() -> Self {
        LevenbergMarquardt { lambda: 1e-3, nu: 2.0, scale: None, ftol: 1e-15, xtol: 1e-13, done: None }
    }
}

type LmState = IterState<DVector<f64>, (), DMatrix<f64>, (), DVector<f64>, f64>;

fn finite_all(v: &[f64]) -> bool {
    v.iter().all(|x| x.is_finite())
}

impl<O> Solver<O, LmState> for LevenbergMarquardt
where
    O: Operator<Param = DVector<f64>, Output = DVector<f64>> + Jacobian<Param = DVector<f64>, Jacobian = DMatrix<f64>>,
{
    fn name(&self) -> &str {
        "Levenberg-Marquardt (QR steps)"
    }

    fn init(&mut self, problem: &mut Problem<O>, mut state: LmState) -> Result<(LmState, Option<KV>), ArgminError> {
        let beta = state.take_param().ok_or_else(|| ArgminError::msg("no start values"))?;
        let r = problem.apply(&beta)?;
        let cost = r.norm_squared();
        Ok((state.param(beta).residuals(r).cost(cost), None))
    }

    fn next_iter(&mut self, problem: &mut Problem<O>, state: LmState) -> Result<(LmState, Option<KV>), ArgminError> {
        let beta = state.get_param().ok_or_else(|| ArgminError::msg("no parameters"))?.clone();
        let r = state.get_residuals().ok_or_else(|| ArgminError::msg("no residuals"))?.clone();
        let cost = state.get_cost();
        let j = problem.jacobian(&beta)?;
        if !finite_all(j.as_slice()) || !finite_all(r.as_slice()) {
            self.done = Some("non-finite residuals or Jacobian");
            return Ok((state, None));
        }
        let (n, p) = j.shape();
        let norms = DVector::from_fn(p, |k, _| j.column(k).norm());
        let scale = match self.scale.take() {
            Some(s) => s.zip_map(&norms, f64::max),
            None => norms.map(|v| if v > 0.0 { v } else { 1.0 }),
        };
        let gradient_inf = j.tr_mul(&r).iter().zip(scale.iter()).map(|(g, d)| (g / d).abs()).fold(0.0, f64::max);
        if gradient_inf <= 1e-15 * cost.sqrt().max(f64::MIN_POSITIVE) || cost == 0.0 {
            self.scale = Some(scale);
            self.done = Some("gradient vanished");
            return Ok((state, None));
        }
        // Stacked system [J; √λ D] step = [−r; 0], solved by QR.
        let root_lambda = self.lambda.sqrt();
        let mut a = DMatrix::zeros(n + p, p);
        a.rows_mut(0, n).copy_from(&j);
        for k in 0..p {
            a[(n + k, k)] = root_lambda * scale[k];
        }
        let mut rhs = DVector::zeros(n + p);
        rhs.rows_mut(0, n).copy_from(&r);
        rhs.rows_mut(0, n).neg_mut();
        let qr = a.qr();
        // Qᵀ applied in place: Q itself is never formed.
        qr.q_tr_mul(&mut rhs);
        let step = match qr.r().solve_upper_triangular(&rhs.rows(0, p)) {
            Some(s) if finite_all(s.as_slice()) => s,
            _ => {
                self.lambda *= self.nu;
                self.nu *= 2.0;
                self.scale = Some(scale);
                return Ok((state, None));
            }
        };
        let candidate = &beta + &step;
        let r_new = problem.apply(&candidate)?;
        let cost_new = r_new.norm_squared();
        let mut linear = &j * &step;
        linear += &r;
        let predicted = cost - linear.norm_squared();
        let rho = if predicted > 0.0 { (cost - cost_new) / predicted } else { -1.0 };
        let scaled_norm =
            |v: &DVector<f64>| v.iter().zip(scale.iter()).map(|(x, d)| (x * d).powi(2)).sum::<f64>().sqrt();
        let (step_size, x_size) = (scaled_norm(&step), scaled_norm(&beta));
        self.scale = Some(scale);
        if cost_new.is_finite() && rho > 0.0 {
            self.lambda *= (1.0 - (2.0 * rho - 1.0).powi(3)).max(1.0 / 3.0);
            self.nu = 2.0;
            if (cost - cost_new) <= self.ftol * cost {
                self.done = Some("relative reduction of the sum of squares below tolerance");
            } else if step_size <= self.xtol * (x_size + self.xtol) {
                self.done = Some("relative step below tolerance");
            }
            Ok((state.param(candidate).residuals(r_new).cost(cost_new), None))
        } else {
            self.lambda *= self.nu;
            self.nu *= 2.0;
            if step_size <= self.xtol * (x_size + self.xtol) {
                self.done = Some("no further reduction possible");
            }
            Ok((state, None))
        }
    }

    fn terminate(&mut self, _state: &LmState) -> TerminationStatus {
        match self.done {
            Some(_) => TerminationStatus::Terminated(TerminationReason::SolverConverged),
            None => TerminationStatus::NotTerminated,
        }
    }
}

/// Fits `model` from `start` with at most `max_iters` iterations.
pub fn fit_nonlinear<M: LeastSquaresProblem + ?Sized>(
    model: &M,
    start: &[f64],
    max_iters: u64,
) -> Result<NonlinearFit, NlsError> {
    fit_nonlinear_with(model, start, max_iters, LevenbergMarquardt::default())
}

/// [`fit_nonlinear`] with a solver of given tolerances.
pub fn fit_nonlinear_with<M: LeastSquaresProblem + ?Sized>(
    model: &M,
    start: &[f64],
    max_iters: u64,
    solver: LevenbergMarquardt,
) -> Result<NonlinearFit, NlsError> {
    let n = model.residual_count();
    let p = start.len();
    if n < p {
        return Err(NlsError::TooFewPoints { points: n, parameters: p });
    }
    let adapter = Adapter { model, p };
    let result = Executor::new(adapter, solver)
        .configure(|s| s.param(DVector::from_column_slice(start)).max_iters(max_iters))
        .run()
        .map_err(|e| NlsError::Solver(e.to_string()))?;
    let state = result.state();
    let beta: Vec<f64> = state.get_best_param().or(state.get_param()).ok_or(NlsError::NonFinite)?.as_slice().to_vec();
    let residuals = model.residuals(&beta);
    if !finite_all(&residuals) {
        return Err(NlsError::NonFinite);
    }
    let rss: f64 = residuals.iter().map(|r| r * r).sum();
    let converged =
        matches!(state.get_termination_status(), TerminationStatus::Terminated(TerminationReason::SolverConverged));
    let termination = format!("{:?}", state.get_termination_status());
    let (covariance, standard_errors, dof, residual_sd) = covariance_at(model, &beta, rss)?;
    Ok(NonlinearFit {
        parameters: beta,
        covariance,
        standard_errors,
        rss,
        dof,
        residual_sd,
        iterations: state.get_iter(),
        converged,
        termination,
    })
}

/// s²(JᵀJ)⁻¹ at β through the QR of the column-scaled Jacobian.
fn covariance_at<M: LeastSquaresProblem + ?Sized>(
    model: &M,
    beta: &[f64],
    rss: f64,
) -> Result<(Vec<f64>, Vec<f64>, usize, f64), NlsError> {
    let n = model.residual_count();
    let p = beta.len();
    let j = DMatrix::from_row_slice(n, p, &model.jacobian(beta));
    if !finite_all(j.as_slice()) {
        return Err(NlsError::NonFinite);
    }
    let scale: Vec<f64> = (0..p).map(|k| j.column(k).norm()).collect();
    if scale.iter().any(|s| *s <= 0.0) {
        return Err(NlsError::Singular);
    }
    let js = DMatrix::from_fn(n, p, |i, k| j[(i, k)] / scale[k]);
    let r = js.qr().r();
    if (0..p).any(|k| r[(k, k)].abs() <= 1e-13 * (n as f64)) {
        return Err(NlsError::Singular);
    }
    let r_inv = r.solve_upper_triangular(&DMatrix::identity(p, p)).ok_or(NlsError::Singular)?;
    let unscaled = &r_inv * r_inv.transpose();
    let dof = n - p;
    let s2 = if dof > 0 { rss / dof as f64 } else { f64::NAN };
    let covariance: Vec<f64> =
        (0..p * p).map(|k| s2 * unscaled[(k / p, k % p)] / (scale[k / p] * scale[k % p])).collect();
    let standard_errors = (0..p).map(|k| covariance[k * p + k].sqrt()).collect();
    Ok((covariance, standard_errors, dof, s2.sqrt()))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// y = b1 exp(b2 x), exact data.
    struct Exp {
        x: Vec<f64>,
        y: Vec<f64>,
    }

    impl LeastSquaresProblem for Exp {
        fn residual_count(&self) -> usize {
            self.x.len()
        }
        fn residuals(&self, b: &[f64]) -> Vec<f64> {
            self.x.iter().zip(&self.y).map(|(x, y)| b[0] * (b[1] * x).exp() - y).collect()
        }
        fn jacobian(&self, b: &[f64]) -> Vec<f64> {
            self.x.iter().flat_map(|x| [(b[1] * x).exp(), b[0] * x * (b[1] * x).exp()]).collect()
        }
    }

    #[test]
    fn an_exact_exponential_is_recovered_from_a_poor_start() {
        let x: Vec<f64> = (0..10).map(|i| i as f64 * 0.3).collect();
        let y = x.iter().map(|x| 2.5 * (-0.7 * x).exp()).collect();
        let fit = fit_nonlinear(&Exp { x, y }, &[1.0, 0.1], 200).unwrap();
        assert!((fit.parameters[0] - 2.5).abs() < 1e-9 && (fit.parameters[1] + 0.7).abs() < 1e-9, "{fit:?}");
        assert!(fit.converged);
    }
}
