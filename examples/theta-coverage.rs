//! Coverage study of the θ intervals on simulated series with known θ (not part of the test
//! suite; the test `tests/theta_coverage.rs` asserts the headline). Prints, for each noise
//! configuration, how often each interval holds the true θ.
//!
//! Run: `cargo run --release --example theta-coverage -- [datasets] [bootstrap replicates]`

use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use thetaseek::analysis::{analyze_series, Settings};
use thetaseek::dataset::{group, Measurement};
use thetaseek::simulate::{simulate, Noise, VirialTruth};
use thetaseek::thermo::flory_krigbaum_a2;
use thetaseek::theta::{theta_for_series, IntervalKind, ThetaSettings};
use thetaseek::uncertainty::critical_value;

fn main() {
    let args: Vec<usize> = std::env::args().skip(1).filter_map(|a| a.parse().ok()).collect();
    let datasets = args.first().copied().unwrap_or(1000);
    let replicates = args.get(1).copied().unwrap_or(0);
    let theta = 305.0;
    for (label, noise, with_sd) in [
        ("sd given, 0.3 Pa + 0.3 %", Noise { absolute_pa: 0.3, relative: 0.003 }, true),
        ("no sd, 0.3 Pa + 0.3 %", Noise { absolute_pa: 0.3, relative: 0.003 }, false),
        ("no sd, 1 % of reading", Noise { absolute_pa: 0.0, relative: 0.01 }, false),
    ] {
        let mut rng = ChaCha8Rng::seed_from_u64(11);
        let (mut fieller, mut delta, mut joint, mut boot, mut boot_n, mut found) = (0, 0, 0, 0, 0, 0);
        let mut bias = 0.0;
        for d in 0..datasets {
            let mut rows = Vec::new();
            for t in [289.0, 297.0, 305.0, 313.0, 321.0, 329.0] {
                let a2 = flory_krigbaum_a2(t, theta, 0.4, 0.9e-3, 100e-6);
                let truth = VirialTruth::with_good_solvent_curvature(t, 150.0, a2);
                for (c, p, sd) in simulate(&truth, &[2.0, 4.0, 6.0, 8.0, 10.0], noise, &mut rng) {
                    rows.push(Measurement {
                        pressure_sd_pa: with_sd.then_some(sd),
                        ..Measurement::simulated("s", t, c, p)
                    });
                }
            }
            let series = &group(&rows)[0];
            let r = analyze_series(
                series,
                &Settings {
                    theta: ThetaSettings { bootstrap_replicates: 0, ..ThetaSettings::default() },
                    ..Settings::default()
                },
                0,
            );
            let settings =
                ThetaSettings { bootstrap_replicates: replicates, seed: d as u64, ..ThetaSettings::default() };
            let th = theta_for_series(series, &r.fits, None, &settings, 0, &());
            let Some(est) = th.theta_k else { continue };
            found += 1;
            bias += est - theta;
            if let (IntervalKind::Bounded, Some(lo), Some(hi)) = (th.fieller.kind, th.fieller.low_k, th.fieller.high_k)
            {
                fieller += (lo <= theta && theta <= hi) as usize;
            }
            let t = critical_value(0.95, th.line_dof);
            if let Some(se) = th.line.as_ref().and_then(|l| l.theta_se_k()) {
                delta += ((est - theta).abs() <= t * se) as usize;
            }
            if let Some(j) = &th.joint {
                joint += ((j.theta_k - theta).abs() <= critical_value(0.95, Some(j.dof)) * j.theta_se_k) as usize;
            }
            if let Some(b) = &th.bootstrap {
                if let (Some(lo), Some(hi)) = (b.ci_low_k, b.ci_high_k) {
                    boot_n += 1;
                    boot += (lo <= theta && theta <= hi) as usize;
                }
            }
        }
        let f = |k: usize, n: usize| k as f64 / n.max(1) as f64;
        println!(
            "{label}: θ found {found}/{datasets}; coverage fieller {:.3}, delta {:.3}, joint {:.3}, bootstrap {:.3} ({boot_n}); mean error {:+.3} K",
            f(fieller, found),
            f(delta, found),
            f(joint, found),
            f(boot, boot_n),
            bias / found.max(1) as f64
        );
    }
}
