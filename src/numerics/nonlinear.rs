//! Nonlinear least squares: a damped Gauss–Newton (Levenberg–Marquardt) solver that runs
//! inside argmin's executor, each step solved by QR, never by the normal equations.
//!
//! Minimises S(β) = Σ r_i(β)², r = f(β) − y (weighted residuals where weights apply).
//! Step: min ‖J p + r‖² + λ‖D p‖², solved as the stacked least-squares problem
//! [J; √λ D] p = [−r; 0] (Moré 1978, "The Levenberg–Marquardt algorithm: implementation and
//! theory", in Numerical Analysis, Dundee 1977, Springer LNM 630), with D the running maximum of
//! J's column norms and λ updated from the gain ratio (Nielsen 1999, IMM-REP-1999-05).
//! Covariance at the optimum: s² (JᵀJ)⁻¹ = s² R⁻¹R⁻ᵀ from the QR of J, s² = S/(n − p).
//! The QR is the project's one ([`GivensQr`]): J's rows and then the damping rows are rotated
//! in, so the stacked matrix is never formed.

use super::GivensQr;
use argmin::core::{
    Error as ArgminError, Executor, IterState, Jacobian, Operator, Problem, Solver, State, TerminationReason,
    TerminationStatus, KV,
};

/// A model to fit: residuals r(β) = f(β) − y and their Jacobian ∂r/∂β.
pub trait LeastSquaresProblem {
    /// Number of residuals n.
    fn residual_count(&self) -> usize;
    /// Residuals at β.
    fn residuals(&self, beta: &[f64]) -> Vec<f64>;
    /// Jacobian at β written a column at a time into `out`, which arrives zeroed: ∂r_i/∂β_k at
    /// `out[k * rows + i]`, `rows` ≥ n (the solver keeps rows past n for its damping), so that
    /// each step factorises it where it lies.
    fn jacobian_columns(&self, beta: &[f64], out: &mut [f64], rows: usize);
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
    /// More parameters than [`MAX_NONLINEAR_PARAMETERS`].
    #[error("{parameters} parameters: at most {MAX_NONLINEAR_PARAMETERS} are fitted")]
    TooManyParameters {
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
}

impl<M: LeastSquaresProblem + ?Sized> Operator for Adapter<'_, M> {
    type Param = Vec<f64>;
    type Output = Vec<f64>;
    fn apply(&self, beta: &Self::Param) -> Result<Self::Output, ArgminError> {
        Ok(self.model.residuals(beta))
    }
}

/// The solver's Jacobian, column-major.
impl<M: LeastSquaresProblem + ?Sized> Jacobian for Adapter<'_, M> {
    type Param = Vec<f64>;
    type Jacobian = Vec<f64>;
    fn jacobian(&self, beta: &Self::Param) -> Result<Self::Jacobian, ArgminError> {
        let n = self.model.residual_count();
        let mut a = vec![0.0; n * beta.len()];
        self.model.jacobian_columns(beta, &mut a, n);
        Ok(a)
    }
}

/// Most parameters a nonlinear fit takes (NIST's Thurber has 7; the joint θ fit 3).
pub const MAX_NONLINEAR_PARAMETERS: usize = 8;

/// The QR of `rows` rows (row `i` of a column-major n×p matrix `a`, times `scale` per column),
/// then of the damping rows `damping[k]` e_k; `rhs` gives each row's right-hand side.
fn factorise(
    a: &[f64],
    n: usize,
    p: usize,
    column_scale: &[f64],
    rhs: impl Fn(usize) -> f64,
    damping: &[f64],
) -> GivensQr<MAX_NONLINEAR_PARAMETERS> {
    let mut qr = GivensQr::<MAX_NONLINEAR_PARAMETERS>::new(p);
    for i in 0..n {
        let mut row = [0.0; MAX_NONLINEAR_PARAMETERS];
        for (k, x) in row.iter_mut().enumerate().take(p) {
            *x = a[k * n + i] / column_scale[k];
        }
        qr.add_row(row, rhs(i));
    }
    for (k, d) in damping.iter().enumerate() {
        let mut row = [0.0; MAX_NONLINEAR_PARAMETERS];
        row[k] = *d;
        qr.add_row(row, 0.0);
    }
    qr
}

/// The damped Gauss–Newton solver (argmin [`Solver`]).
#[derive(Debug, Clone)]
pub struct LevenbergMarquardt {
    lambda: f64,
    nu: f64,
    scale: Option<Vec<f64>>,
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

type LmState = IterState<Vec<f64>, (), Vec<f64>, (), Vec<f64>, f64>;

fn finite_all(v: &[f64]) -> bool {
    v.iter().all(|x| x.is_finite())
}

fn norm_squared(v: &[f64]) -> f64 {
    v.iter().map(|x| x * x).sum()
}

impl<O> Solver<O, LmState> for LevenbergMarquardt
where
    O: Operator<Param = Vec<f64>, Output = Vec<f64>> + Jacobian<Param = Vec<f64>, Jacobian = Vec<f64>>,
{
    fn name(&self) -> &str {
        "Levenberg-Marquardt (QR steps)"
    }

    fn init(&mut self, problem: &mut Problem<O>, mut state: LmState) -> Result<(LmState, Option<KV>), ArgminError> {
        let beta = state.take_param().ok_or_else(|| ArgminError::msg("no start values"))?;
        let r = problem.apply(&beta)?;
        let cost = norm_squared(&r);
        Ok((state.param(beta).residuals(r).cost(cost), None))
    }

    fn next_iter(&mut self, problem: &mut Problem<O>, state: LmState) -> Result<(LmState, Option<KV>), ArgminError> {
        let beta = state.get_param().ok_or_else(|| ArgminError::msg("no parameters"))?;
        let r = state.get_residuals().ok_or_else(|| ArgminError::msg("no residuals"))?;
        let cost = state.get_cost();
        // J column-major, n rows.
        let j = problem.jacobian(beta)?;
        if !finite_all(&j) || !finite_all(r) {
            self.done = Some("non-finite residuals or Jacobian");
            return Ok((state, None));
        }
        let (p, n) = (beta.len(), r.len());
        let column = |k: usize| &j[k * n..k * n + n];
        // Column norms of J and the gradient Jᵀr.
        let norms: Vec<f64> = (0..p).map(|k| norm_squared(column(k)).sqrt()).collect();
        let gradient: Vec<f64> = (0..p).map(|k| column(k).iter().zip(r).fold(0.0, |g, (v, ri)| g + v * ri)).collect();
        let scale: Vec<f64> = match self.scale.take() {
            Some(s) => s.iter().zip(&norms).map(|(a, b)| a.max(*b)).collect(),
            None => norms.iter().map(|&v| if v > 0.0 { v } else { 1.0 }).collect(),
        };
        let gradient_inf = gradient.iter().zip(&scale).map(|(g, d)| (g / d).abs()).fold(0.0, f64::max);
        if gradient_inf <= 1e-15 * cost.sqrt().max(f64::MIN_POSITIVE) || cost == 0.0 {
            self.scale = Some(scale);
            self.done = Some("gradient vanished");
            return Ok((state, None));
        }
        // The stacked system [J; √λ D] step = [−r; 0], rotated into R a row at a time.
        let root_lambda = self.lambda.sqrt();
        let damping: Vec<f64> = scale.iter().map(|d| root_lambda * d).collect();
        let ones = vec![1.0; p];
        let step = factorise(&j, n, p, &ones, |i| -r[i], &damping).solve()[..p].to_vec();
        if !finite_all(&step) {
            self.lambda *= self.nu;
            self.nu *= 2.0;
            self.scale = Some(scale);
            return Ok((state, None));
        }
        let candidate: Vec<f64> = beta.iter().zip(&step).map(|(b, s)| b + s).collect();
        let r_new = problem.apply(&candidate)?;
        let cost_new = norm_squared(&r_new);
        let linear: f64 = (0..n).map(|i| ((0..p).map(|k| j[k * n + i] * step[k]).sum::<f64>() + r[i]).powi(2)).sum();
        let predicted = cost - linear;
        let rho = if predicted > 0.0 { (cost - cost_new) / predicted } else { -1.0 };
        let scaled_norm = |v: &[f64]| v.iter().zip(&scale).map(|(x, d)| (x * d).powi(2)).sum::<f64>().sqrt();
        let (step_size, x_size) = (scaled_norm(&step), scaled_norm(beta));
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
    if p > MAX_NONLINEAR_PARAMETERS {
        return Err(NlsError::TooManyParameters { parameters: p });
    }
    let result = Executor::new(Adapter { model }, solver)
        .configure(|s| s.param(start.to_vec()).max_iters(max_iters))
        .run()
        .map_err(|e| NlsError::Solver(e.to_string()))?;
    let state = result.state();
    let beta: Vec<f64> = state.get_best_param().or(state.get_param()).ok_or(NlsError::NonFinite)?.clone();
    let residuals = model.residuals(&beta);
    if !finite_all(&residuals) {
        return Err(NlsError::NonFinite);
    }
    let rss = norm_squared(&residuals);
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
    let mut j = vec![0.0; n * p];
    model.jacobian_columns(beta, &mut j, n);
    if !finite_all(&j) {
        return Err(NlsError::NonFinite);
    }
    let scale: Vec<f64> = j.chunks_exact(n).map(|column| norm_squared(column).sqrt()).collect();
    if scale.iter().any(|s| *s <= 0.0) {
        return Err(NlsError::Singular);
    }
    let qr = factorise(&j, n, p, &scale, |_| 0.0, &[]);
    if (0..p).any(|k| qr.diagonal(k).abs() <= 1e-13 * (n as f64)) {
        return Err(NlsError::Singular);
    }
    let unscaled = qr.inverse_gram();
    if !unscaled.iter().take(p).all(|row| finite_all(&row[..p])) {
        return Err(NlsError::Singular);
    }
    let dof = n - p;
    let s2 = if dof > 0 { rss / dof as f64 } else { f64::NAN };
    let covariance: Vec<f64> =
        (0..p * p).map(|k| s2 * unscaled[k / p][k % p] / (scale[k / p] * scale[k % p])).collect();
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
        fn jacobian_columns(&self, b: &[f64], out: &mut [f64], rows: usize) {
            for (i, x) in self.x.iter().enumerate() {
                out[i] = (b[1] * x).exp();
                out[rows + i] = b[0] * x * (b[1] * x).exp();
            }
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
