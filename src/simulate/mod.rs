//! Simulated osmometry readings with known truth, for the demo data, recovery tests and
//! coverage studies. Every random draw comes from the generator the caller passes in.

use crate::units::GAS_CONSTANT_J_PER_MOL_K;
use rand::Rng;
use rand_distr::{Distribution, Normal};

/// Truth at one temperature, SI units.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct VirialTruth {
    /// T in K.
    pub temperature_k: f64,
    /// Mn in kg/mol.
    pub mn_kg_per_mol: f64,
    /// A2 in mol m³/kg².
    pub a2: f64,
    /// A3 in mol m⁶/kg³.
    pub a3: f64,
}

impl VirialTruth {
    /// A3 = g Γ2²/Mn with g = 1/4 (Stockmayer–Casassa) for A2 ≥ 0, zero otherwise: the
    /// good-solvent curvature of real data.
    pub fn with_good_solvent_curvature(temperature_k: f64, mn_kg_per_mol: f64, a2: f64) -> Self {
        let gamma2 = a2 * mn_kg_per_mol;
        let a3 = if a2 > 0.0 { 0.25 * gamma2 * gamma2 / mn_kg_per_mol } else { 0.0 };
        VirialTruth { temperature_k, mn_kg_per_mol, a2, a3 }
    }

    /// Noise-free Π = c R T (1/Mn + A2 c + A3 c²), Pa, at c in kg/m³.
    pub fn pressure_pa(&self, c: f64) -> f64 {
        c * GAS_CONSTANT_J_PER_MOL_K * self.temperature_k * (1.0 / self.mn_kg_per_mol + self.a2 * c + self.a3 * c * c)
    }
}

/// Reading noise: σ_Π = absolute + relative·Π (a membrane osmometer's floor plus a gain error).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Noise {
    /// Floor, Pa.
    pub absolute_pa: f64,
    /// Fraction of the reading.
    pub relative: f64,
}

impl Noise {
    /// σ_Π at a noise-free pressure Π (Pa).
    pub fn sd_pa(&self, pressure_pa: f64) -> f64 {
        self.absolute_pa + self.relative * pressure_pa
    }
}

/// One simulated reading: (c kg/m³, Π Pa, σ_Π Pa).
pub type Reading = (f64, f64, f64);

/// Draws one reading per concentration; Π is clipped at zero as an instrument would read it.
pub fn simulate(truth: &VirialTruth, concentrations: &[f64], noise: Noise, rng: &mut impl Rng) -> Vec<Reading> {
    concentrations
        .iter()
        .map(|&c| {
            let p = truth.pressure_pa(c);
            let sd = noise.sd_pa(p);
            let draw =
                if sd > 0.0 { Normal::new(0.0, sd).expect("sd is positive and finite").sample(rng) } else { 0.0 };
            (c, (p + draw).max(0.0), sd)
        })
        .collect()
}

pub mod study;
pub mod viscometry;
pub mod viscometry_study;
