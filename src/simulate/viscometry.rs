//! Simulated capillary viscometry with known truth: fractions of molar mass M at temperatures
//! T, with one of two shapes of [η](M, T) ([`Expansion`]) that equal Kθ M^{1/2} at θ; each
//! dilution series Huggins-exact,
//! ηrel = 1 + [η] c + kH [η]² c², with concentrations that give ηrel from about 1.2 to 1.8
//! (common practice), and a constant error in ηrel. SI units.

use crate::dataset::{ViscometryRow, ViscosityValue};
use rand::Rng;
use rand_distr::{Distribution, Normal};

/// How [η] departs from Kθ M^{1/2} away from θ.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Expansion {
    /// [η] = K(T) M^{a(T)}, a(T) = ½ + s (1 − θ/T), K(T) = Kθ M_ref^{½ − a(T)}: the
    /// Mark–Houwink lines are exact and a − ½ is exactly linear in 1/T, as the route fits it
    /// (the lines pivot about M_ref); the Stockmayer–Fixman intercept is Kθ only at θ.
    PowerLaw {
        /// s.
        slope: f64,
    },
    /// α_η³ = 1 + z (1 − θ/T) (M/M_ref)^{1/2}: the Stockmayer–Fixman line is exact at every T
    /// with intercept Kθ (first order in the excluded-volume parameter), so ⟨r²⟩0 does not
    /// change with T; a(T) is ½ exactly at θ.
    FirstOrder {
        /// z.
        z: f64,
    },
}

/// The error of one ηrel: σ = absolute + relative × ηrel (a flow time read to a fixed
/// precision, and a timing error proportional to the time).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ViscosityNoise {
    /// Floor.
    pub absolute: f64,
    /// Fraction of ηrel.
    pub relative: f64,
}

/// The truth behind a simulated viscometry series.
#[derive(Debug, Clone, PartialEq)]
pub struct ViscometryTruth {
    /// θ, K.
    pub theta_k: f64,
    /// Kθ, m³ mol^{1/2} kg^{-3/2}.
    pub k_theta: f64,
    /// The shape away from θ.
    pub expansion: Expansion,
    /// M_ref, kg/mol: the molar mass where [η] does not change with T.
    pub reference_molar_mass: f64,
    /// kH at θ (kH(T) = kH(θ) − 0.75 (a(T) − ½): lower in better solvents).
    pub huggins_at_theta: f64,
    /// Fractions' molar masses, kg/mol.
    pub molar_masses: Vec<f64>,
    /// Temperatures, K.
    pub temperatures_k: Vec<f64>,
    /// Relative concentrations: c = u/[η] for each u (ηrel ≈ 1 + u + kH u²).
    pub reduced_concentrations: Vec<f64>,
}

impl ViscometryTruth {
    /// a(T) of the power law (for the first-order shape, the local exponent at M_ref).
    pub fn exponent(&self, t: f64) -> f64 {
        let x = 1.0 - self.theta_k / t;
        match self.expansion {
            Expansion::PowerLaw { slope } => 0.5 + slope * x,
            // d ln[η]/d ln M = ½ + ½ zx/(1 + zx) at M = M_ref.
            Expansion::FirstOrder { z } => 0.5 + 0.5 * z * x / (1.0 + z * x),
        }
    }

    /// [η](M, T), m³/kg.
    pub fn intrinsic(&self, m: f64, t: f64) -> f64 {
        match self.expansion {
            Expansion::PowerLaw { .. } => {
                let a = self.exponent(t);
                self.k_theta * self.reference_molar_mass.powf(0.5 - a) * m.powf(a)
            }
            Expansion::FirstOrder { z } => {
                let x = 1.0 - self.theta_k / t;
                self.k_theta * m.sqrt() * (1.0 + z * x * (m / self.reference_molar_mass).sqrt())
            }
        }
    }

    /// K(T) of the power law for M in kg/mol, m³/kg.
    pub fn mark_houwink_k(&self, t: f64) -> f64 {
        self.k_theta * self.reference_molar_mass.powf(0.5 - self.exponent(t))
    }

    /// kH(T).
    pub fn huggins(&self, t: f64) -> f64 {
        self.huggins_at_theta - 0.75 * (self.exponent(t) - 0.5)
    }

    /// Rows of one series named `series`, fractions named `F1`, `F2`, … with their molar
    /// mass; ηrel with a normal error of SD `sd` (none when 0).
    pub fn rows(&self, series: &str, sd: f64, rng: &mut impl Rng) -> Vec<ViscometryRow> {
        self.rows_with(series, ViscosityNoise { absolute: sd, relative: 0.0 }, rng)
    }

    /// [`Self::rows`] with σ(ηrel) = absolute + relative × ηrel.
    pub fn rows_with(&self, series: &str, noise_model: ViscosityNoise, rng: &mut impl Rng) -> Vec<ViscometryRow> {
        let noise = Normal::new(0.0, 1.0).expect("a unit normal");
        let mut rows = Vec::new();
        for (j, &m) in self.molar_masses.iter().enumerate() {
            for &t in &self.temperatures_k {
                let eta = self.intrinsic(m, t);
                let kh = self.huggins(t);
                for &u in &self.reduced_concentrations {
                    let c = u / eta;
                    let exact = 1.0 + eta * c + kh * (eta * c).powi(2);
                    let sd = noise_model.absolute + noise_model.relative * exact;
                    let e = if sd > 0.0 { sd * noise.sample(rng) } else { 0.0 };
                    rows.push(ViscometryRow {
                        series: series.to_string(),
                        fraction: Some(format!("F{}", j + 1)),
                        molar_mass: Some(m),
                        temperature_k: t,
                        value: ViscosityValue::Relative { concentration: c, relative_viscosity: exact + e },
                        line: 0,
                    });
                }
            }
        }
        rows
    }
}
