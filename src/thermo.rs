//! Flory–Krigbaum and Flory–Huggins relations between A2, θ, ψ1, κ1 and χ, SI units
//! (v̄ in m³/kg, V1 in m³/mol, A2 in mol m³/kg², T and θ in K).

/// Flory–Krigbaum near θ (F(X) ≈ 1): A2(T) = (v̄²/V1) ψ1 (1 − θ/T).
pub fn flory_krigbaum_a2(temperature_k: f64, theta_k: f64, psi1: f64, specific_volume: f64, molar_volume: f64) -> f64 {
    specific_volume * specific_volume / molar_volume * psi1 * (1.0 - theta_k / temperature_k)
}
