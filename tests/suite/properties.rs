//! Properties that must hold for any data (proptest): row order, appending a series, and unit
//! rescaling change nothing; a noise-free Flory–Krigbaum series gives its θ to 1e-8 K.
//! `PROPTEST_CASES` sets how many cases run (a few dozen by default, so CI stays quick).

use proptest::prelude::*;

use rand::seq::SliceRandom;
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use std::fmt::Write;
use thetaseek::analysis::{analyze, Settings};
use thetaseek::dataset::Dataset;
use thetaseek::input::{read_file, ReadOptions};
use thetaseek::report::{Report, ReportSettings};
use thetaseek::simulate::{simulate, Noise, VirialTruth};
use thetaseek::thermo::flory_krigbaum_a2;
use thetaseek::theta::ThetaSettings;
use thetaseek::virial::{FormChoice, VirialForm};

/// Rows "series,T,c,Π" of simulated series (θ, ψ1 per series), seeded.
fn rows(seed: u64, series: &[(f64, f64)]) -> Vec<String> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut out = Vec::new();
    for (k, &(theta, psi1)) in series.iter().enumerate() {
        for t in [theta - 12.0, theta - 6.0, theta, theta + 6.0, theta + 12.0] {
            let truth =
                VirialTruth::with_good_solvent_curvature(t, 150.0, flory_krigbaum_a2(t, theta, psi1, 0.9e-3, 100e-6));
            for (c, p, _) in
                simulate(&truth, &[2.0, 4.0, 6.0, 8.0, 10.0], Noise { absolute_pa: 0.3, relative: 0.003 }, &mut rng)
            {
                out.push(format!("s{k},{t:?},{c:?},{p:?}"));
            }
        }
    }
    out
}

fn report(header: &str, rows: &[String], settings: &Settings) -> Report {
    let mut text = String::from(header);
    for r in rows {
        let _ = writeln!(text, "{r}");
    }
    let contents = read_file("p.csv", 0, text.as_bytes(), &ReadOptions::default()).unwrap();
    let dataset = Dataset::new(contents.readings, &[], &[], Default::default(), &[], &[]);
    let results = analyze(&dataset, settings);
    Report::new(Vec::new(), ReportSettings::new(thetaseek::virial::FormChoice::Auto), Vec::new(), &results, &dataset)
}

const HEADER: &str = "series,temperature (K),concentration (g/L),pressure (Pa)\n";

fn no_bootstrap() -> Settings {
    Settings { theta: ThetaSettings { bootstrap_replicates: 0, ..ThetaSettings::default() }, ..Settings::default() }
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-9 * a.abs().max(b.abs()) || (a.is_nan() && b.is_nan())
}

/// The numbers of a report that must not depend on how the input was laid out.
fn numbers(r: &Report) -> Vec<f64> {
    let mut out = Vec::new();
    let mut series: Vec<_> = r.series.iter().collect();
    series.sort_by(|a, b| a.name.cmp(&b.name));
    for s in series {
        for f in &s.fits {
            out.extend([f.temperature_k, f.mn_g_per_mol, f.mn_se_g_per_mol, f.a2_mol_ml_per_g2, f.a2_se_mol_ml_per_g2]);
        }
        if let Some(t) = &s.theta {
            out.extend([t.theta_k.unwrap_or(f64::NAN), t.se_k.unwrap_or(f64::NAN), t.ci_low_k.unwrap_or(f64::NAN)]);
        }
    }
    out
}

proptest! {
    #![proptest_config(crate::common::proptest_config(24))]

    #[test]
    fn row_order_does_not_change_any_result(seed in 0u64..1000, shuffle in 0u64..1000, theta in 285.0f64..330.0) {
        let original = rows(seed, &[(theta, 0.4), (theta + 10.0, 0.6)]);
        let mut shuffled = original.clone();
        shuffled.shuffle(&mut ChaCha8Rng::seed_from_u64(shuffle));
        let (a, b) = (numbers(&report(HEADER, &original, &no_bootstrap())), numbers(&report(HEADER, &shuffled, &no_bootstrap())));
        prop_assert_eq!(a.len(), b.len());
        for (x, y) in a.iter().zip(&b) {
            prop_assert!(close(*x, *y), "{} vs {}", x, y);
        }
    }

    #[test]
    fn appending_a_series_does_not_change_the_existing_ones(seed in 0u64..1000, theta in 285.0f64..330.0) {
        let settings = Settings { theta: ThetaSettings { bootstrap_replicates: 50, ..ThetaSettings::default() }, ..Settings::default() };
        let one = rows(seed, &[(theta, 0.4)]);
        let mut two = one.clone();
        two.extend(rows(seed + 1, &[(theta - 5.0, 0.5)]).into_iter().map(|r| r.replacen("s0,", "extra,", 1)));
        let (a, b) = (report(HEADER, &one, &settings), report(HEADER, &two, &settings));
        // Bitwise: the first series' whole report, bootstrap included, is unchanged.
        prop_assert_eq!(serde_json::to_value(&a.series[0]).unwrap(), serde_json::to_value(&b.series[0]).unwrap());
    }

    #[test]
    fn rescaling_pressures_into_another_declared_unit_changes_nothing(seed in 0u64..1000, theta in 285.0f64..330.0) {
        let pa = rows(seed, &[(theta, 0.4)]);
        // Pa → kPa and torr: the values change, the declared unit says so.
        for (unit, per_pa) in [("kPa", 1e-3), ("torr", 760.0 / 101_325.0)] {
            let scaled: Vec<String> = pa
                .iter()
                .map(|r| {
                    let mut f: Vec<String> = r.split(',').map(str::to_string).collect();
                    let p: f64 = f[3].parse().unwrap();
                    f[3] = format!("{:?}", p * per_pa);
                    f.join(",")
                })
                .collect();
            let header = HEADER.replace("pressure (Pa)", &format!("pressure ({unit})"));
            let (a, b) = (numbers(&report(HEADER, &pa, &no_bootstrap())), numbers(&report(&header, &scaled, &no_bootstrap())));
            for (x, y) in a.iter().zip(&b) {
                prop_assert!(close(*x, *y), "{}: {} vs {}", unit, x, y);
            }
        }
    }

    #[test]
    fn a_noise_free_series_gives_its_theta_to_1e_8_kelvin(theta in 270.0f64..350.0, psi1 in prop_oneof![0.1f64..1.0, -1.5f64..-0.1]) {
        let mut text = String::from(HEADER);
        for t in [theta - 15.0, theta - 5.0, theta + 5.0, theta + 15.0] {
            let truth = VirialTruth { temperature_k: t, mn_kg_per_mol: 120.0, a2: flory_krigbaum_a2(t, theta, psi1, 0.9e-3, 100e-6), a3: 0.0 };
            for c in [2.0, 4.0, 6.0, 8.0] {
                let _ = writeln!(text, "s,{t:?},{c:?},{:?}", truth.pressure_pa(c));
            }
        }
        let contents = read_file("p.csv", 0, text.as_bytes(), &ReadOptions::default()).unwrap();
        let dataset = Dataset::new(contents.readings, &[], &[], Default::default(), &[], &[]);
        let settings = Settings { virial: FormChoice::Fixed(VirialForm::Linear), ..no_bootstrap() };
        let results = analyze(&dataset, &settings);
        let got = results[0].theta.as_ref().unwrap().theta_k.unwrap();
        prop_assert!((got - theta).abs() < 1e-8, "θ {} vs truth {}", got, theta);
    }

    /// A large file is read a block of rows at a time; for any layout (shuffled rows, comments,
    /// blank lines, CRLF, quoted names) and any block size it must give what one whole read gives.
    #[test]
    fn reading_in_blocks_of_any_size_gives_the_whole_file_read(
        seed in 0u64..1000,
        shuffle in 0u64..1000,
        block in 16usize..3000,
        crlf in proptest::bool::ANY,
        every in 3usize..40,
    ) {
        let mut body = rows(seed, &[(300.0, 0.4), (310.0, 0.6), (295.0, 0.5)]);
        body.shuffle(&mut ChaCha8Rng::seed_from_u64(shuffle));
        let newline = if crlf { "\r\n" } else { "\n" };
        let mut text = format!("# invented{newline}{}", HEADER.trim_end());
        text.push_str(newline);
        for (i, r) in body.iter().enumerate() {
            let r = if i % 7 == 0 { r.replacen("s1,", "\"s1\",", 1) } else { r.clone() };
            text.push_str(&r);
            text.push_str(newline);
            if i % every == 0 {
                text.push_str(&format!("# note {i}{newline}{newline}"));
            }
        }
        let whole = read_file("p.csv", 0, text.as_bytes(), &ReadOptions::default()).unwrap();
        let blocks = thetaseek::input::read_source("p.csv", 0, &mut text.as_bytes(), &ReadOptions::default(), block).unwrap();
        prop_assert_eq!(blocks, whole);
    }
}
