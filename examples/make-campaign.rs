//! Writes an invented screening campaign in the input format: N series (fictional polymer
//! grades in fictional solvents) × 5 temperatures × 6 concentrations, from the Flory–Krigbaum
//! model with seeded noise. For benchmarks and scale tests.
//!
//! Run: `cargo run --release --example make-campaign -- --series 20000 [--out campaign.csv] [--seed 7]`

use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::io::{BufWriter, Write};
use thetaseek::simulate::{simulate, Noise, VirialTruth};
use thetaseek::thermo::flory_krigbaum_a2;

fn main() -> std::io::Result<()> {
    let args: Vec<String> = std::env::args().collect();
    let value = |flag: &str, default: &str| -> String {
        args.iter()
            .position(|a| a == flag)
            .and_then(|i| args.get(i + 1))
            .cloned()
            .unwrap_or_else(|| default.to_string())
    };
    let series: usize = value("--series", "20000").parse().expect("--series takes a number");
    let seed: u64 = value("--seed", "7").parse().expect("--seed takes a number");
    let out = value("--out", "campaign.csv");
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut w = BufWriter::new(std::fs::File::create(&out)?);
    writeln!(w, "# INVENTED screening campaign made by `cargo run --example make-campaign` (seed {seed})")?;
    writeln!(w, "series,temperature (K),concentration (g/L),pressure (Pa)")?;
    let noise = Noise { absolute_pa: 0.3, relative: 0.003 };
    let concentrations = [1.5, 3.0, 4.5, 6.0, 7.5, 9.0];
    for s in 0..series {
        let theta = rng.random_range(285.0..325.0);
        let psi1 = rng.random_range(0.2..0.9);
        let mn = rng.random_range(60.0..400.0);
        let start = theta - rng.random_range(5.0..20.0);
        for k in 0..5 {
            let t: f64 = start + 7.0 * k as f64;
            let truth =
                VirialTruth::with_good_solvent_curvature(t, mn, flory_krigbaum_a2(t, theta, psi1, 0.9e-3, 100e-6));
            for (c, p, _) in simulate(&truth, &concentrations, noise, &mut rng) {
                writeln!(w, "grade-{s:05},{t:.2},{c},{p:.3}")?;
            }
        }
    }
    w.flush()?;
    eprintln!("wrote {out}: {} rows", series * 30);
    Ok(())
}
