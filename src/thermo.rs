//! Flory–Krigbaum and Flory–Huggins relations, the Shultz–Flory critical temperature, Flory's
//! expansion factor and the overlap concentration. SI units throughout: v̄ in m³/kg, V1 in
//! m³/mol, M in kg/mol, A2 in mol m³/kg², T and θ in K, ⟨r²⟩0/M in m² mol/kg.

use crate::numerics::brent_root;
use crate::units::AVOGADRO_PER_MOL;
use std::f64::consts::PI;

/// Flory–Krigbaum near θ (F(X) ≈ 1): A2(T) = (v̄²/V1) ψ1 (1 − θ/T).
pub fn flory_krigbaum_a2(temperature_k: f64, theta_k: f64, psi1: f64, specific_volume: f64, molar_volume: f64) -> f64 {
    specific_volume * specific_volume / molar_volume * psi1 * (1.0 - theta_k / temperature_k)
}

/// Ratio of molar volumes of polymer and solvent, x = M v̄ / V1 (dimensionless).
pub fn segment_ratio(molar_mass: f64, specific_volume: f64, molar_volume: f64) -> f64 {
    molar_mass * specific_volume / molar_volume
}

/// Shultz–Flory critical temperature of a chain of x segments:
/// 1/Tc = (1/θ) [1 + (1/ψ1)(1/√x + 1/(2x))]. Below θ for ψ1 > 0 (UCST), above it for ψ1 < 0
/// (LCST). `None` where the bracket is not positive (no critical point in this approximation).
pub fn shultz_flory_tc(theta_k: f64, psi1: f64, x: f64) -> Option<f64> {
    let bracket = 1.0 + (1.0 / x.sqrt() + 1.0 / (2.0 * x)) / psi1;
    (bracket > 0.0 && bracket.is_finite() && x > 0.0).then(|| theta_k / bracket)
}

/// Flory's constant C_M = (27 / (2^{5/2} π^{3/2})) (v̄² / (N_A V1)) (⟨r²⟩0/M)^{−3/2}, in
/// (mol/kg)^{1/2}, so that 2 C_M ψ1 (1 − θ/T) M^{1/2} is dimensionless (Flory 1953, Principles
/// of Polymer Chemistry, ch. XIV).
pub fn flory_cm(specific_volume: f64, molar_volume: f64, unperturbed_r2_over_m: f64) -> f64 {
    27.0 / (2f64.powf(2.5) * PI.powf(1.5)) * specific_volume * specific_volume / (AVOGADRO_PER_MOL * molar_volume)
        * unperturbed_r2_over_m.powf(-1.5)
}

/// Flory's expansion factor α from α⁵ − α³ = z, z = 2 C_M ψ1 (1 − θ/T) M^{1/2}, by argmin's
/// Brent root finder: α > 1 in good solvent (z > 0), α < 1 below θ (z < 0). `None` when the
/// chain would collapse past what the equation describes (z below the minimum of α⁵ − α³).
pub fn expansion_factor(z: f64) -> Option<f64> {
    if z == 0.0 {
        return Some(1.0);
    }
    let f = |a: f64| a.powi(5) - a.powi(3) - z;
    if z > 0.0 {
        // α⁵ − α³ ≥ α³(α² − 1) grows without bound; bracket [1, 1 + z^{1/5} + 1].
        brent_root(f, 1.0, 2.0 + z.powf(0.2))
    } else {
        // Between α_min = √(3/5) (the minimum of α⁵ − α³) and 1, the branch that joins α = 1.
        let a_min = (0.6f64).sqrt();
        (f(a_min) < 0.0).then(|| brent_root(f, a_min, 1.0)).flatten()
    }
}

/// The z of [`expansion_factor`] at T for a chain of molar mass M.
pub fn expansion_argument(c_m: f64, psi1: f64, theta_k: f64, temperature_k: f64, molar_mass: f64) -> f64 {
    2.0 * c_m * psi1 * (1.0 - theta_k / temperature_k) * molar_mass.sqrt()
}

/// Overlap concentration c* = 3M / (4π N_A Rg³), kg/m³, with Rg² = α² ⟨r²⟩0 / 6 (Gaussian coil).
pub fn overlap_concentration(molar_mass: f64, unperturbed_r2_over_m: f64, alpha: f64) -> f64 {
    let rg = (alpha * alpha * unperturbed_r2_over_m * molar_mass / 6.0).sqrt();
    3.0 * molar_mass / (4.0 * PI * AVOGADRO_PER_MOL * rg.powi(3))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_expansion_factor_solves_its_equation_on_both_sides_of_theta() {
        for z in [0.5, 3.0, -0.1] {
            let a = expansion_factor(z).unwrap();
            assert!((a.powi(5) - a.powi(3) - z).abs() < 1e-12, "z {z}: α {a}");
            assert_eq!(a > 1.0, z > 0.0);
        }
        assert_eq!(expansion_factor(0.0), Some(1.0));
        assert_eq!(expansion_factor(-1.0), None);
    }

    #[test]
    fn the_critical_temperature_lies_below_theta_for_ucst_and_above_for_lcst() {
        let x = 2000.0;
        assert!(shultz_flory_tc(300.0, 0.5, x).unwrap() < 300.0);
        assert!(shultz_flory_tc(300.0, -0.5, x).unwrap() > 300.0);
        // Infinite chains: Tc → θ.
        assert!((shultz_flory_tc(300.0, 0.5, 1e14).unwrap() - 300.0).abs() < 1e-4);
    }
}
