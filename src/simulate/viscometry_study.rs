//! The viscometry route's coverage study: simulated series of fractions with known [η](M, T),
//! analysed as a user's file, to measure how often the intervals of [η], the Mark–Houwink
//! exponent a, the viscometric θ and ⟨r²⟩0/M hold the truth — overall and within each fifth of their
//! line's reduced χ². `examples/viscometry-coverage.rs` runs the design; `tests/suite/viscometry.rs`
//! a small version with asserted bounds.

use super::viscometry::{Expansion, ViscometryTruth, ViscosityNoise};
use crate::analysis::{analyze_viscometry_series, Settings};
use crate::dataset::ViscometrySeries;
use crate::uncertainty::{critical_value, replicate_rng};
use rayon::prelude::*;

/// θ of every simulated series, K.
pub const THETA_K: f64 = 305.0;
/// Kθ, mL mol^{1/2} g^{-3/2}.
pub const K_THETA_REPORT: f64 = 0.08;

/// One cell of the design.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Design {
    /// Fractions (molar masses log-spaced over 40–1000 kg/mol).
    pub fractions: usize,
    /// Temperatures (over 20 K).
    pub temperatures: usize,
    /// The ηrel error.
    pub noise: ViscosityNoise,
    /// The shape of [η](M, T) away from θ.
    pub expansion: Expansion,
    /// θ inside the measured range (else 6 K below it).
    pub inside: bool,
}

impl Design {
    /// The factorial design: 3/5/8 fractions × 3/5 temperatures × two noise models × two shapes
    /// × θ inside or outside.
    pub fn all() -> Vec<Design> {
        let mut out = Vec::new();
        for fractions in [3, 5, 8] {
            for temperatures in [3, 5] {
                for noise in [
                    ViscosityNoise { absolute: 0.002, relative: 0.0 },
                    ViscosityNoise { absolute: 0.0, relative: 0.002 },
                ] {
                    for expansion in [Expansion::PowerLaw { slope: 2.0 }, Expansion::FirstOrder { z: 3.0 }] {
                        for inside in [true, false] {
                            out.push(Design { fractions, temperatures, noise, expansion, inside });
                        }
                    }
                }
            }
        }
        out
    }

    /// A row label.
    pub fn label(&self) -> String {
        format!(
            "{} fr × {} T, σ {}, {}, θ {}",
            self.fractions,
            self.temperatures,
            if self.noise.relative > 0.0 { "0.2 % ηrel" } else { "0.002" },
            match self.expansion {
                Expansion::PowerLaw { .. } => "power law",
                Expansion::FirstOrder { .. } => "first order",
            },
            if self.inside { "inside" } else { "outside" }
        )
    }

    fn truth(&self) -> ViscometryTruth {
        let masses = (0..self.fractions)
            .map(|j| 40.0 * (1000.0f64 / 40.0).powf(j as f64 / (self.fractions - 1) as f64))
            .collect();
        // θ inside: 20 K around it, not on a measured temperature; outside: 6 K below.
        let low = if self.inside { THETA_K - 8.3 } else { THETA_K + 6.0 };
        let temperatures_k =
            (0..self.temperatures).map(|i| low + 20.0 * i as f64 / (self.temperatures - 1) as f64).collect();
        ViscometryTruth {
            theta_k: THETA_K,
            k_theta: K_THETA_REPORT / 10f64.powf(1.5),
            expansion: self.expansion,
            reference_molar_mass: 150.0,
            huggins_at_theta: 0.45,
            molar_masses: masses,
            temperatures_k,
            reduced_concentrations: vec![0.2, 0.3, 0.4, 0.5, 0.6],
        }
    }
}

/// What one simulated series showed. Coverage flags are `None` where the quantity is not
/// defined exactly by the truth (a and θ need the power law).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Outcome {
    /// The viscometric θ's interval holds θ.
    pub theta_covered: Option<bool>,
    /// The a(T) line's reduced χ².
    pub theta_line_chi2: Option<f64>,
    /// Per temperature: (the Mark–Houwink line's reduced χ², a's interval holds the truth).
    pub exponents: Vec<(Option<f64>, bool)>,
    /// [η] intervals holding the truth, of those with an SE.
    pub intrinsic: (usize, usize),
    /// The reported ⟨r²⟩0/M within 1.96 SE of the truth (Kθ by Flory–Fox).
    pub dimensions_covered: Option<bool>,
}

/// Runs `n` series of one design, in parallel, each from its own seeded generator.
pub fn run(design: &Design, design_index: u64, n: usize, seed: u64) -> Vec<Outcome> {
    let truth = design.truth();
    let settings = Settings::default();
    (0..n as u64)
        .into_par_iter()
        .map(|i| {
            let mut rng = replicate_rng(seed, design_index, i);
            let rows = truth.rows_with("sim", design.noise, &mut rng);
            let series = ViscometrySeries { name: "sim".into(), rows };
            let r = analyze_viscometry_series(&series, &[], &settings);
            let mut out = Outcome::default();
            if let Some(d) = &r.dimensions {
                let truth_nm2 = crate::chain_dimensions::r2_over_m_from_k_theta(
                    truth.k_theta,
                    None,
                    crate::chain_dimensions::DEFAULT_FLORY_FOX_PER_MOL,
                )
                .0 * crate::chain_dimensions::NM2_MOL_PER_G_PER_SI;
                let se = d.unperturbed_r2_over_m_se_nm2_mol_per_g.unwrap_or(0.0);
                out.dimensions_covered = Some((d.unperturbed_r2_over_m_nm2_mol_per_g - truth_nm2).abs() <= 1.96 * se);
            }
            let Some(v) = r.viscometry else { return out };
            let power_law = matches!(design.expansion, Expansion::PowerLaw { .. });
            if let Some(t) = v.viscometric_theta.as_ref().filter(|_| power_law) {
                let (lo, hi) =
                    (t.interval.low_k.unwrap_or(f64::NEG_INFINITY), t.interval.high_k.unwrap_or(f64::INFINITY));
                out.theta_covered = Some(match t.interval.kind {
                    crate::theta::IntervalKind::Exclusive => !(lo..=hi).contains(&THETA_K),
                    _ => (lo..=hi).contains(&THETA_K),
                });
                out.theta_line_chi2 = t.exponent_line_reduced_chi2;
            }
            if power_law {
                for t in &v.temperatures {
                    if let (Some(a), Some(se)) = (t.mark_houwink_exponent, t.mark_houwink_exponent_se) {
                        let q = critical_value(0.95, t.mark_houwink_dof);
                        let covered = (a - truth.exponent(t.temperature_k)).abs() <= q * se;
                        out.exponents.push((t.mark_houwink_reduced_chi2, covered));
                    }
                }
            }
            for d in &v.dilutions {
                let (Some(se), Some(m)) = (
                    d.intrinsic_viscosity_se_ml_per_g,
                    v.fractions.iter().find(|f| f.name == d.fraction).and_then(|f| f.molar_mass_g_per_mol),
                ) else {
                    continue;
                };
                let want = truth.intrinsic(m * 1e-3, d.temperature_k) * 1e3;
                let q = critical_value(0.95, d.se_dof);
                out.intrinsic.1 += 1;
                out.intrinsic.0 += usize::from((d.intrinsic_viscosity_ml_per_g - want).abs() <= q * se);
            }
            out
        })
        .collect()
}

/// Coverage of a set of (stratifying value, covered) pairs: overall, and by fifth of the value
/// (lowest first; pairs without a value are left out of the fifths).
pub fn by_fifths(pairs: &[(Option<f64>, bool)]) -> (f64, Vec<f64>) {
    let share = |p: &[&(Option<f64>, bool)]| p.iter().filter(|x| x.1).count() as f64 / p.len().max(1) as f64;
    let all: Vec<&(Option<f64>, bool)> = pairs.iter().collect();
    let mut valued: Vec<&(Option<f64>, bool)> = pairs.iter().filter(|p| p.0.is_some()).collect();
    valued.sort_by(|a, b| a.0.unwrap_or(0.0).total_cmp(&b.0.unwrap_or(0.0)));
    let n = valued.len();
    let fifths = (0..5).map(|k| share(&valued[k * n / 5..(k + 1) * n / 5])).collect();
    (share(&all), fifths)
}
