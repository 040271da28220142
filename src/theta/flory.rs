//! Flory–Krigbaum parameters from the line A2 = a + b/T (ψ1, κ1, χ(T) and the measured χ),
//! and how tightly the temperature must be held to keep A2 within a tolerance.

use super::*;

pub(super) fn flory_parameters(
    line: &InverseTemperatureLine,
    points: &[TemperaturePoint],
    quantity: Quantity,
    volumes: Option<Volumes>,
) -> Option<FloryParameters> {
    // k converts the fitted quantity into 1/2 − χ.
    let k = match (quantity, volumes) {
        (Quantity::HalfMinusChi, _) => 1.0,
        (Quantity::SecondVirial, Some(v)) => v.a2_per_half_minus_chi(),
        (Quantity::SecondVirial, None) => return None,
    };
    let (var_a, _, var_b) = line.ab_covariance();
    let psi1 = line.a() / k;
    let temperatures = points
        .iter()
        .map(|p| {
            let t = p.temperature_k;
            let (value, value_se) = line.predict(t);
            FloryAtTemperature {
                temperature_k: t,
                // κ1(T) = ψ1 θ/T = −b/(k T).
                kappa1: -line.b() / (k * t),
                kappa1_se: var_b.sqrt() / (k * t),
                chi_model: 0.5 - value / k,
                chi_model_se: value_se / k,
                chi_measured: 0.5 - p.value / k,
                chi_measured_se: p.se.map(|s| s / k),
            }
        })
        .collect();
    Some(FloryParameters { psi1, psi1_se: var_a.sqrt() / k, kappa1_at_theta: psi1, temperatures })
}

pub(super) fn stability(
    line: &InverseTemperatureLine,
    quantity: Quantity,
    volumes: Option<Volumes>,
    tolerance: f64,
) -> Option<Stability> {
    // A2 = k·value, with k = 1 for A2 and v̄²/V1 for 1/2 − χ.
    let k = match (quantity, volumes) {
        (Quantity::SecondVirial, _) => 1.0,
        (Quantity::HalfMinusChi, Some(v)) => v.a2_per_half_minus_chi(),
        (Quantity::HalfMinusChi, None) => return None,
    };
    let (a, b) = (line.a(), line.b());
    let (var_a, cov_ab, var_b) = line.ab_covariance();
    // dA2/dT at θ = −b/θ² = −a²/b (θ = −b/a); gradient (−2a/b, a²/b²).
    let slope = -k * a * a / b;
    let (ga, gb) = (-2.0 * a / b, a * a / (b * b));
    let se = k * (ga * ga * var_a + 2.0 * ga * gb * cov_ab + gb * gb * var_b).max(0.0).sqrt();
    Some(Stability {
        da2_dt_at_theta: slope,
        da2_dt_se: se,
        a2_tolerance: tolerance,
        plus_minus_k: tolerance / slope.abs(),
    })
}
