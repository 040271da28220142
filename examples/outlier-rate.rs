//! The outlier flag (`thetaseek::virial::flag_outliers`) measured on simulated series with
//! known truth (the θ study's designs): how often a clean series is flagged at all (it claims
//! at most 1 %), and how often one reading raised by 10, 25 or 50 % (at the middle temperature
//! and concentration) is the reading named.
//!
//! Run: `cargo run --release --example outlier-rate -- [series per design] [seed]`

use rayon::prelude::*;
use thetaseek::analysis::{analyze_series, Settings};
use thetaseek::dataset::group;
use thetaseek::simulate::study::{Design, NoiseModel, Position};
use thetaseek::theta::{Sense, ThetaSettings};
use thetaseek::virial::FitWarning;

/// What one simulated series showed: any reading flagged, and the raised one flagged.
fn flags(design: &Design, index: u64, i: u64, seed: u64, raise: f64, settings: &Settings) -> (bool, bool) {
    let mut rows = design.simulate(seed, index, i);
    let raised = (design.temperatures / 2) * design.concentrations + design.concentrations / 2;
    rows[raised].pressure_pa *= raise;
    rows[raised].origin.line = 1;
    let series = &group(&rows)[0];
    let result = analyze_series(series, settings, i);
    let lines: Vec<usize> = result
        .fits
        .iter()
        .flat_map(|f| &f.warnings)
        .filter_map(|w| match w {
            FitWarning::Outlier { line, .. } => Some(*line),
            _ => None,
        })
        .collect();
    (!lines.is_empty(), lines.contains(&1))
}

fn main() {
    let numbers: Vec<u64> = std::env::args().skip(1).filter_map(|a| a.parse().ok()).collect();
    let n = numbers.first().copied().unwrap_or(2000);
    let seed = numbers.get(1).copied().unwrap_or(2026);
    let settings = Settings {
        theta: ThetaSettings { bootstrap_replicates: 0, ..ThetaSettings::default() },
        ..Settings::default()
    };
    println!("{n} series per design (seed {seed}); one reading raised at the middle temperature and concentration\n");
    println!("| temperatures × concentrations | noise | SDs given | clean series flagged | raised 10 % named | 25 % | 50 % |");
    println!("| --- | --- | --- | --- | --- | --- | --- |");
    let mut index = 0;
    let (mut all_flagged, mut all_n) = (0usize, 0usize);
    for (temperatures, concentrations) in [(4, 5), (6, 5), (6, 8)] {
        for noise in NoiseModel::ALL {
            for sd_given in [false, true] {
                let design = Design {
                    temperatures,
                    concentrations,
                    noise,
                    sd_given,
                    curvature: false,
                    position: Position::Inside,
                    sense: Sense::Ucst,
                };
                index += 1;
                let rate = |raise: f64, pick: fn((bool, bool)) -> bool| {
                    let hits = (0..n)
                        .into_par_iter()
                        .filter(|&i| pick(flags(&design, index, i, seed, raise, &settings)))
                        .count();
                    hits as f64 / n as f64
                };
                let clean = rate(1.0, |(any, _)| any);
                all_flagged += (clean * n as f64).round() as usize;
                all_n += n as usize;
                let named: Vec<String> =
                    [1.10, 1.25, 1.50].iter().map(|r| format!("{:.1} %", 100.0 * rate(*r, |(_, it)| it))).collect();
                println!(
                    "| {temperatures} × {concentrations} | {} | {} | {:.2} % | {} |",
                    noise.name(),
                    if sd_given { "yes" } else { "no" },
                    100.0 * clean,
                    named.join(" | ")
                );
            }
        }
    }
    println!("\nclean series flagged, all designs: {:.2} % of {all_n}", 100.0 * all_flagged as f64 / all_n as f64);
}
