//! Criterion benchmarks of the kernels and of a campaign end to end (in memory).
//! Run: `cargo bench --bench kernels`. Figures go in DEVELOPERS.md, never in assertions.

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion, Throughput};
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use std::fmt::Write;
use std::hint::black_box;
use thetaseek::analysis::{analyze, analyze_series, Settings};
use thetaseek::dataset::{group, Dataset, Measurement};
use thetaseek::dataset::{Quantity, TemperaturePoint};
use thetaseek::input::{read_file, ReadOptions};
use thetaseek::numerics::linear::Weights;
use thetaseek::simulate::{simulate, Noise, VirialTruth};
use thetaseek::thermo::flory_krigbaum_a2;
use thetaseek::theta::{bootstrap, joint_fit, theta_from_points, SeBasis, ThetaSettings};
use thetaseek::virial::{fit_form, fit_temperature, FormChoice, PressureNoise, Readings, VirialForm};

const C: [f64; 6] = [1.5, 3.0, 4.5, 6.0, 7.5, 9.0];

fn readings(t: f64, a2: f64, rng: &mut ChaCha8Rng) -> (Vec<f64>, Vec<f64>) {
    let truth = VirialTruth::with_good_solvent_curvature(t, 150.0, a2);
    simulate(&truth, &C, Noise { absolute_pa: 0.3, relative: 0.003 }, rng).iter().map(|r| (r.0, r.1)).unzip()
}

fn series(rng: &mut ChaCha8Rng) -> thetaseek::dataset::Series {
    let mut rows = Vec::new();
    for t in [290.0, 297.0, 304.0, 311.0, 318.0] {
        let (c, p) = readings(t, flory_krigbaum_a2(t, 302.0, 0.4, 0.9e-3, 100e-6), rng);
        for (c, p) in c.into_iter().zip(p) {
            rows.push(Measurement::simulated("s", t, c, p));
        }
    }
    group(&rows).remove(0)
}

fn per_temperature(c: &mut Criterion) {
    let mut rng = ChaCha8Rng::seed_from_u64(1);
    let (conc, p) = readings(310.0, 1.5e-4, &mut rng);
    let r = Readings {
        temperature_k: 310.0,
        concentration: &conc,
        pressure: &p,
        pressure_sd: None,
        sd_kind: Weights::Relative,
    };
    let mut g = c.benchmark_group("per-temperature fit (6 concentrations)");
    g.throughput(Throughput::Elements(1));
    for form in [VirialForm::Linear, VirialForm::Quadratic, VirialForm::Sqrt] {
        g.bench_with_input(BenchmarkId::new("form", form.name()), &form, |b, &form| {
            b.iter(|| fit_form(form, black_box(&r)))
        });
    }
    let s = series(&mut rng);
    g.bench_function("auto choice with diagnostics", |b| {
        b.iter(|| fit_temperature(black_box(&s.temperatures[3]), FormChoice::Auto, PressureNoise::FlatReduced))
    });
    g.finish();
}

fn across_temperatures(c: &mut Criterion) {
    let points: Vec<TemperaturePoint> = [290.0, 297.0, 304.0, 311.0, 318.0, 325.0]
        .iter()
        .map(|&t| TemperaturePoint {
            temperature_k: t,
            value: flory_krigbaum_a2(t, 302.0, 0.4, 0.9e-3, 100e-6) + 1e-6 * (t - 300.0).sin(),
            se: Some(5e-6),
        })
        .collect();
    let settings = ThetaSettings { bootstrap_replicates: 0, ..ThetaSettings::default() };
    c.bench_function("theta from six A2 values (line, curved, local, Fieller)", |b| {
        b.iter(|| {
            theta_from_points(
                black_box(&points),
                SeBasis::Estimated { dof: 18 },
                Quantity::SecondVirial,
                None,
                &settings,
            )
        })
    });
    let mut rng = ChaCha8Rng::seed_from_u64(2);
    let s = series(&mut rng);
    let no_boot = Settings { theta: settings, ..Settings::default() };
    c.bench_function("one series: five temperatures, theta and joint fit", |b| {
        b.iter(|| analyze_series(black_box(&s), &no_boot, 0))
    });
    let fits: Vec<_> = s
        .temperatures
        .iter()
        .map(|t| fit_temperature(t, FormChoice::Auto, PressureNoise::FlatReduced).unwrap())
        .collect();
    let sets: Vec<_> = s.temperatures.iter().collect();
    let fit_refs: Vec<_> = fits.iter().collect();
    // The joint fit starts where the two-stage analysis of this series ends, as in a run.
    let two_stage = analyze_series(&s, &no_boot, 0).theta.expect("this series has a θ");
    let (start_theta, start_a) = (two_stage.theta_k.unwrap(), two_stage.line.as_ref().unwrap().a());
    c.bench_function("joint fit of 30 readings (Levenberg-Marquardt, from the two-stage start)", |b| {
        b.iter(|| joint_fit(black_box(&sets), &fit_refs, PressureNoise::FlatReduced, start_theta, start_a))
    });
    let one = ThetaSettings { bootstrap_replicates: 1, ..ThetaSettings::default() };
    c.bench_function("one bootstrap replicate (refit five temperatures and the line)", |b| {
        b.iter(|| bootstrap(black_box(&sets), &fit_refs, PressureNoise::FlatReduced, &one, 0, &()))
    });
}

fn campaign(c: &mut Criterion) {
    // 1000 invented series × 5 temperatures × 6 concentrations, read from memory and analysed.
    let mut rng = ChaCha8Rng::seed_from_u64(3);
    let mut text = String::from("series,temperature (K),concentration (g/L),pressure (Pa)\n");
    for s in 0..1000 {
        for t in [290.0, 297.0, 304.0, 311.0, 318.0] {
            let (conc, p) = readings(t, flory_krigbaum_a2(t, 302.0, 0.4, 0.9e-3, 100e-6), &mut rng);
            for (c, p) in conc.iter().zip(&p) {
                let _ = writeln!(text, "g{s},{t},{c},{p:.3}");
            }
        }
    }
    let settings = Settings {
        theta: ThetaSettings { bootstrap_replicates: 0, ..ThetaSettings::default() },
        ..Settings::default()
    };
    let mut g = c.benchmark_group("campaign of 1000 series");
    g.sample_size(10);
    g.throughput(Throughput::Elements(1000));
    g.bench_function("read and analyse", |b| {
        b.iter(|| {
            let contents = read_file("c.csv", 0, text.as_bytes(), &ReadOptions::default()).unwrap();
            let dataset = Dataset::new(contents.readings, &[], &[], Default::default(), &[], &[]);
            analyze(&dataset, &settings)
        })
    });
    g.finish();
}

criterion_group!(benches, per_temperature, across_temperatures, campaign);
criterion_main!(benches);
