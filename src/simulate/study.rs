//! The coverage study: simulated osmometry series with known θ, Mn and A2, analysed as a user's
//! file would be, to measure how often each interval holds the truth — overall and within each
//! fifth of the Flory–Krigbaum line's reduced χ², which is where a user looking at one series
//! stands. `examples/theta-coverage.rs` runs the full factorial design; `tests/suite/theta.rs` runs a
//! small version and asserts the stratified bounds.

use super::{simulate, Noise, VirialTruth};
use crate::analysis::{analyze_series, Settings};
use crate::dataset::{group, Measurement};
use crate::thermo::flory_krigbaum_a2;
use crate::theta::{Sense, ThetaSettings, MN_DRIFT_P};
use crate::uncertainty::{critical_value, replicate_rng};
use rand::RngExt;
use rayon::prelude::*;

/// θ of every simulated series, K.
pub const THETA_K: f64 = 300.0;
/// Mn of every simulated series, kg/mol.
pub const MN_KG_PER_MOL: f64 = 150.0;
/// |ψ1| of every simulated series (its sign follows [`Sense`]).
pub const PSI1: f64 = 0.4;
/// Polymer specific volume, m³/kg.
pub const SPECIFIC_VOLUME: f64 = 0.9e-3;
/// Solvent molar volume, m³/mol.
pub const MOLAR_VOLUME: f64 = 100e-6;
/// Width of the measured temperature range, K.
pub const RANGE_K: f64 = 40.0;

/// How the reading noise behaves.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum NoiseModel {
    /// σ_Π = 0.5 Pa at every reading (an instrument's floor).
    Constant,
    /// σ_Π = 1 % of Π (a gain error).
    Proportional,
    /// σ_Π = 0.3 Pa + 0.5 % of Π.
    Mixed,
}

impl NoiseModel {
    /// Every noise model of the study.
    pub const ALL: [NoiseModel; 3] = [NoiseModel::Constant, NoiseModel::Proportional, NoiseModel::Mixed];

    /// The simulator's noise.
    pub fn noise(self) -> Noise {
        match self {
            NoiseModel::Constant => Noise { absolute_pa: 0.5, relative: 0.0 },
            NoiseModel::Proportional => Noise { absolute_pa: 0.0, relative: 0.01 },
            NoiseModel::Mixed => Noise { absolute_pa: 0.3, relative: 0.005 },
        }
    }

    /// Short name for tables.
    pub fn name(self) -> &'static str {
        match self {
            NoiseModel::Constant => "0.5 Pa",
            NoiseModel::Proportional => "1 %",
            NoiseModel::Mixed => "0.3 Pa+0.5 %",
        }
    }
}

/// Where θ lies relative to the measured temperatures.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Position {
    /// At least 8 K inside the range.
    Inside,
    /// 5–10 K beyond the range, on the poor-solvent side (the usual extrapolation from
    /// good-solvent data).
    Outside,
}

/// One cell of the factorial design.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Design {
    /// Temperatures measured, evenly spaced over [`RANGE_K`].
    pub temperatures: usize,
    /// Concentrations at each, evenly spaced from 2 to 10 kg/m³ (g/L).
    pub concentrations: usize,
    /// The noise.
    pub noise: NoiseModel,
    /// Whether each reading carries its SD (`pressure sd` column).
    pub sd_given: bool,
    /// Good-solvent curvature A3 = Γ2²/(4 Mn) where A2 > 0 (else A3 = 0).
    pub curvature: bool,
    /// Where θ lies.
    pub position: Position,
    /// UCST- (ψ1 > 0) or LCST-type (ψ1 < 0).
    pub sense: Sense,
}

impl Design {
    /// The full factorial design of the study: 4 × 3 × 3 × 2 × 2 × 2 × 2 = 576 cells.
    pub fn factorial() -> Vec<Design> {
        let mut out = Vec::new();
        for temperatures in [3, 4, 6, 8] {
            for concentrations in [3, 5, 8] {
                for noise in NoiseModel::ALL {
                    for sd_given in [false, true] {
                        for curvature in [false, true] {
                            for position in [Position::Inside, Position::Outside] {
                                for sense in [Sense::Ucst, Sense::Lcst] {
                                    out.push(Design {
                                        temperatures,
                                        concentrations,
                                        noise,
                                        sd_given,
                                        curvature,
                                        position,
                                        sense,
                                    });
                                }
                            }
                        }
                    }
                }
            }
        }
        out
    }

    /// The simulated readings of series `index` and the lowest measured temperature, K.
    pub fn simulate(&self, seed: u64, design_index: u64, index: u64) -> Vec<Measurement> {
        let mut rng = replicate_rng(seed, design_index, index);
        let offset = match self.position {
            Position::Inside => rng.random_range(8.0..RANGE_K - 8.0),
            Position::Outside => -rng.random_range(5.0..10.0),
        };
        // The lowest temperature lies `offset` below θ (UCST); mirrored for LCST so that the
        // extrapolated case is always measured on the good-solvent side.
        let t_low = match self.sense {
            Sense::Ucst => THETA_K - offset,
            Sense::Lcst => THETA_K + offset - RANGE_K,
        };
        let psi1 = match self.sense {
            Sense::Ucst => PSI1,
            Sense::Lcst => -PSI1,
        };
        let step_t = RANGE_K / (self.temperatures - 1) as f64;
        let step_c = 8.0 / (self.concentrations - 1) as f64;
        let concentrations: Vec<f64> = (0..self.concentrations).map(|j| 2.0 + step_c * j as f64).collect();
        let mut rows = Vec::with_capacity(self.temperatures * self.concentrations);
        for i in 0..self.temperatures {
            let t = t_low + step_t * i as f64;
            let truth = self.truth_at(t, psi1);
            for (c, p, sd) in simulate(&truth, &concentrations, self.noise.noise(), &mut rng) {
                rows.push(Measurement {
                    pressure_sd_pa: self.sd_given.then_some(sd),
                    ..Measurement::simulated("s", t, c, p)
                });
            }
        }
        rows
    }

    fn truth_at(&self, temperature_k: f64, psi1: f64) -> VirialTruth {
        let a2 = flory_krigbaum_a2(temperature_k, THETA_K, psi1, SPECIFIC_VOLUME, MOLAR_VOLUME);
        if self.curvature {
            VirialTruth::with_good_solvent_curvature(temperature_k, MN_KG_PER_MOL, a2)
        } else {
            VirialTruth { temperature_k, mn_kg_per_mol: MN_KG_PER_MOL, a2, a3: 0.0 }
        }
    }

    /// True A2 at T, mol m³/kg².
    pub fn a2_at(&self, temperature_k: f64) -> f64 {
        let psi1 = if self.sense == Sense::Ucst { PSI1 } else { -PSI1 };
        flory_krigbaum_a2(temperature_k, THETA_K, psi1, SPECIFIC_VOLUME, MOLAR_VOLUME)
    }

    /// A label for tables.
    pub fn label(&self) -> String {
        format!(
            "{}T×{}c {} {} {} {} {}",
            self.temperatures,
            self.concentrations,
            self.noise.name(),
            if self.sd_given { "sd" } else { "no-sd" },
            if self.curvature { "curved" } else { "straight" },
            if self.position == Position::Inside { "inside" } else { "outside" },
            if self.sense == Sense::Ucst { "UCST" } else { "LCST" },
        )
    }
}

/// What one simulated series showed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Outcome {
    /// A θ was reported.
    pub theta_reported: bool,
    /// The headline interval holds the true θ (false where no θ was reported).
    pub covered: bool,
    /// The headline interval is bounded on both sides.
    pub bounded: bool,
    /// Its width, K (bounded intervals only).
    pub width_k: Option<f64>,
    /// The line's reduced χ² on the per-temperature SEs as given (n_T ≥ 3).
    pub line_reduced_chi2: Option<f64>,
    /// The series carries a warning that its interval is at the design's limit.
    pub design_warning: bool,
    /// Temperatures fitted, and of them how many Mn / A2 intervals (95 %) held the truth.
    pub temperatures_fitted: usize,
    /// Mn intervals holding the truth.
    pub mn_covered: usize,
    /// A2 intervals holding the truth.
    pub a2_covered: usize,
    /// The Mn-drift warning fired (Mn is constant by construction).
    pub mn_alarm: bool,
    /// The Mn test ran.
    pub mn_tested: bool,
    /// Temperatures whose simulated solution is stable at the highest concentration.
    pub stable_fits: usize,
    /// Of them, those whose fit warned that Π falls with c (false alarms).
    pub stability_alarms: usize,
}

/// Runs `n` series of one design (in parallel, each from its own seeded generator).
pub fn run(design: &Design, design_index: u64, n: usize, seed: u64) -> Vec<Outcome> {
    let settings = Settings {
        theta: ThetaSettings { bootstrap_replicates: 0, ..ThetaSettings::default() },
        ..Settings::default()
    };
    (0..n as u64)
        .into_par_iter()
        .map(|i| {
            let rows = design.simulate(seed, design_index, i);
            let series = &group(&rows)[0];
            let result = analyze_series(series, &settings, i);
            let mut out = Outcome {
                theta_reported: false,
                covered: false,
                bounded: false,
                width_k: None,
                line_reduced_chi2: None,
                design_warning: false,
                temperatures_fitted: result.fits.len(),
                mn_covered: 0,
                a2_covered: 0,
                mn_alarm: false,
                mn_tested: false,
                stable_fits: 0,
                stability_alarms: 0,
            };
            for f in &result.fits {
                // Only where the simulated solution is stable at the highest concentration
                // (10 kg/m³) is an alarm false.
                let stable = 1.0 / MN_KG_PER_MOL + 2.0 * design.a2_at(f.temperature_k) * 10.0 > 0.0;
                out.stable_fits += stable as usize;
                out.stability_alarms += (stable
                    && f.warnings.iter().any(|w| matches!(w, crate::virial::FitWarning::FallingPressure { .. })))
                    as usize;
                let t = critical_value(0.95, f.se_dof);
                let s = &f.fit.score;
                out.mn_covered += ((s.mn() - MN_KG_PER_MOL).abs() <= t * f.mn_se()) as usize;
                out.a2_covered += ((s.a2 - design.a2_at(f.temperature_k)).abs() <= t * f.a2_se()) as usize;
            }
            if let Some(th) = &result.theta {
                out.line_reduced_chi2 = th.line.as_ref().and_then(|l| l.reduced_chi2);
                out.design_warning = th.design_limited;
                if let Some(m) = &th.mn_consistency {
                    out.mn_tested = true;
                    out.mn_alarm = m.p_value < MN_DRIFT_P;
                }
                if th.theta_k.is_some() {
                    out.theta_reported = true;
                    out.covered = th.interval_contains(THETA_K);
                    if let (Some(lo), Some(hi)) = (th.interval.low_k, th.interval.high_k) {
                        out.bounded = true;
                        out.width_k = Some(hi - lo);
                    }
                }
            }
            out
        })
        .collect()
}

/// Coverage and the rest, overall and by fifth of the line's reduced χ².
#[derive(Debug, Clone, PartialEq)]
pub struct Summary {
    /// Series simulated.
    pub series: usize,
    /// Series with a θ reported.
    pub reported: usize,
    /// Coverage of the headline interval among them.
    pub coverage: f64,
    /// Coverage within each fifth of the line's reduced χ² (lowest first), and the series in it.
    pub by_fifth: [(f64, usize); 5],
    /// Median width of the bounded intervals, K.
    pub median_width_k: Option<f64>,
    /// Share of reported θ whose interval is not bounded on both sides.
    pub unbounded: f64,
    /// Share of reported θ carrying the design-limit warning.
    pub design_warned: f64,
    /// Coverage of the per-temperature Mn and A2 intervals.
    pub mn_coverage: f64,
    /// A2.
    pub a2_coverage: f64,
    /// Rate of the Mn-drift warning (nominal [`MN_DRIFT_P`]).
    pub mn_alarm_rate: f64,
    /// Rate of the falling-pressure warning among fitted temperatures whose simulated solution
    /// is stable (false alarms; the test claims one-sided p < 0.01 at the edge of stability).
    pub stability_alarm_rate: f64,
}

/// Summarises outcomes (of one design, or pooled).
pub fn summarise(outcomes: &[Outcome]) -> Summary {
    let share = |k: usize, n: usize| if n == 0 { f64::NAN } else { k as f64 / n as f64 };
    let reported: Vec<&Outcome> = outcomes.iter().filter(|o| o.theta_reported).collect();
    let covered = reported.iter().filter(|o| o.covered).count();
    let mut by_chi2: Vec<(f64, bool)> =
        reported.iter().filter_map(|o| o.line_reduced_chi2.map(|c| (c, o.covered))).collect();
    by_chi2.sort_by(|a, b| a.0.total_cmp(&b.0));
    let by_fifth = fifths(&by_chi2);
    let mut widths: Vec<f64> = reported.iter().filter_map(|o| o.width_k).collect();
    widths.sort_by(f64::total_cmp);
    let fitted: usize = outcomes.iter().map(|o| o.temperatures_fitted).sum();
    let tested = outcomes.iter().filter(|o| o.mn_tested).count();
    Summary {
        series: outcomes.len(),
        reported: reported.len(),
        coverage: share(covered, reported.len()),
        by_fifth,
        median_width_k: (!widths.is_empty()).then(|| widths[widths.len() / 2]),
        unbounded: share(reported.iter().filter(|o| !o.bounded).count(), reported.len()),
        design_warned: share(reported.iter().filter(|o| o.design_warning).count(), reported.len()),
        mn_coverage: share(outcomes.iter().map(|o| o.mn_covered).sum(), fitted),
        a2_coverage: share(outcomes.iter().map(|o| o.a2_covered).sum(), fitted),
        mn_alarm_rate: share(outcomes.iter().filter(|o| o.mn_alarm).count(), tested),
        stability_alarm_rate: share(
            outcomes.iter().map(|o| o.stability_alarms).sum(),
            outcomes.iter().map(|o| o.stable_fits).sum(),
        ),
    }
}

/// Coverage and count within each fifth of outcomes sorted by reduced χ².
fn fifths(sorted: &[(f64, bool)]) -> [(f64, usize); 5] {
    std::array::from_fn(|k| {
        let part = &sorted[k * sorted.len() / 5..(k + 1) * sorted.len() / 5];
        let hits = part.iter().filter(|p| p.1).count();
        (if part.is_empty() { f64::NAN } else { hits as f64 / part.len() as f64 }, part.len())
    })
}
