//! The chain's unperturbed dimensions ⟨r²⟩0/M, from whichever route measured them: the
//! Flory–Fox relation at θ ([η]θ = Φ0 (⟨r²⟩0/M)^{3/2} M^{1/2} = Kθ M^{1/2}) for viscometry,
//! 6 Rg²(θ)/Mw for light scattering with angles at θ; and the characteristic ratio
//! C∞ = ⟨r²⟩0/(n l²). SI inside (m² mol/kg); the report block is in nm² mol/g.

use serde::Serialize;

/// The Flory–Fox constant Φ0 used unless the user gives another, mol⁻¹ (the same number for
/// [η] in mL/g with r in cm, or in m³/kg with r in m): 2.5 × 10²³ mol⁻¹, the value in common
/// practice for flexible coils at θ (values between 2.1 and 2.9 × 10²³ are quoted; from memory).
pub const DEFAULT_FLORY_FOX_PER_MOL: f64 = 2.5e23;

/// Carbon–carbon single-bond length, m (0.154 nm; common practice for vinyl backbones).
pub const DEFAULT_BOND_LENGTH_M: f64 = 0.154e-9;

/// ⟨r²⟩0/M report unit (nm² mol/g) per SI unit (m² mol/kg): 10¹⁸ nm²/m² × 10⁻³ kg/g.
pub const NM2_MOL_PER_G_PER_SI: f64 = 1.0e15;

/// The repeat unit, for the characteristic ratio.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RepeatUnit {
    /// Molar mass of the repeat unit M0, kg/mol.
    pub molar_mass: f64,
    /// Backbone bonds per repeat unit (2 for a vinyl polymer).
    pub bonds: f64,
    /// Mean backbone bond length l, m.
    pub bond_length_m: f64,
}

/// ⟨r²⟩0/M = (Kθ/Φ0)^{2/3}, m² mol/kg, from Kθ in m³ mol^{1/2}/kg^{3/2} and Φ0 in mol⁻¹;
/// with SE((⟨r²⟩0/M)) = (2/3) (SE Kθ / Kθ) ⟨r²⟩0/M.
pub fn r2_over_m_from_k_theta(k_theta: f64, k_theta_se: Option<f64>, flory_fox_per_mol: f64) -> (f64, Option<f64>) {
    let value = (k_theta / flory_fox_per_mol).powf(2.0 / 3.0);
    (value, k_theta_se.map(|se| 2.0 / 3.0 * se / k_theta * value))
}

/// ⟨r²⟩0/M = 6 Rg²/Mw, m² mol/kg, from Rg (m) at θ and Mw (kg/mol), with the SE propagated
/// from both (independent): rel SE² = (2 SE_Rg/Rg)² + (SE_Mw/Mw)².
pub fn r2_over_m_from_radius(rg_m: f64, rg_se_m: f64, mw: f64, mw_se: f64) -> (f64, f64) {
    let value = 6.0 * rg_m * rg_m / mw;
    let relative = (2.0 * rg_se_m / rg_m).hypot(mw_se / mw);
    (value, relative * value)
}

/// C∞ = (⟨r²⟩0/M) M0 / (n_b l²), with n_b bonds per repeat unit of length l.
pub fn characteristic_ratio(r2_over_m: f64, unit: &RepeatUnit) -> f64 {
    r2_over_m * unit.molar_mass / (unit.bonds * unit.bond_length_m * unit.bond_length_m)
}

/// The unperturbed dimensions a series measured, in report units.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct UnperturbedDimensions {
    /// ⟨r²⟩0/M, nm² mol/g.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub unperturbed_r2_over_m_nm2_mol_per_g: f64,
    /// Its SE, nm² mol/g (null where the route gives none).
    pub unperturbed_r2_over_m_se_nm2_mol_per_g: Option<f64>,
    /// `viscometry` or `light_scattering`.
    pub route: crate::dataset::Route,
    /// How it was obtained, in words.
    pub method: String,
    /// Temperature it refers to, K.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub temperature_k: f64,
    /// Flory–Fox constant used, mol⁻¹ (viscometry only).
    pub flory_fox_constant_per_mol: Option<f64>,
    /// Characteristic ratio C∞, when the repeat unit was given.
    pub characteristic_ratio: Option<f64>,
    /// Its SE.
    pub characteristic_ratio_se: Option<f64>,
}

impl UnperturbedDimensions {
    /// ⟨r²⟩0/M in SI (m² mol/kg), for the plan.
    pub fn r2_over_m_si(&self) -> f64 {
        self.unperturbed_r2_over_m_nm2_mol_per_g / NM2_MOL_PER_G_PER_SI
    }

    /// A record from SI values; C∞ added when `repeat_unit` is given.
    pub fn new(
        r2_over_m: (f64, Option<f64>),
        route: crate::dataset::Route,
        method: String,
        temperature_k: f64,
        flory_fox_constant_per_mol: Option<f64>,
        repeat_unit: Option<&RepeatUnit>,
    ) -> Self {
        let c_inf = repeat_unit.map(|u| characteristic_ratio(r2_over_m.0, u));
        UnperturbedDimensions {
            unperturbed_r2_over_m_nm2_mol_per_g: r2_over_m.0 * NM2_MOL_PER_G_PER_SI,
            unperturbed_r2_over_m_se_nm2_mol_per_g: r2_over_m.1.map(|s| s * NM2_MOL_PER_G_PER_SI),
            route,
            method,
            temperature_k,
            flory_fox_constant_per_mol,
            characteristic_ratio: c_inf,
            characteristic_ratio_se: c_inf.zip(r2_over_m.1).map(|(c, se)| c * se / r2_over_m.0),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn flory_fox_and_the_characteristic_ratio_invert_exactly() {
        let unit = RepeatUnit { molar_mass: 0.104, bonds: 2.0, bond_length_m: DEFAULT_BOND_LENGTH_M };
        let r2m: f64 = 4.4e-20 * 1e3; // 0.44 Å² mol/g in m² mol/kg
        let k = DEFAULT_FLORY_FOX_PER_MOL * r2m.powf(1.5);
        let (back, se) = r2_over_m_from_k_theta(k, Some(0.03 * k), DEFAULT_FLORY_FOX_PER_MOL);
        assert!((back / r2m - 1.0).abs() < 1e-12);
        assert!((se.unwrap() / back - 0.02).abs() < 1e-12);
        let c = characteristic_ratio(r2m, &unit);
        assert!((c - r2m * 0.104 / (2.0 * 0.154e-9f64.powi(2))).abs() < 1e-9);
    }
}
