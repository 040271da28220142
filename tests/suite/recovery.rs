//! Simulations whose truth is known: fits recover Mn, A2, A3, and their standard errors are
//! honest (interval coverage near nominal).

use approx::assert_relative_eq;
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal as NormalSampler};
use statrs::distribution::{ContinuousCDF, Normal, StudentsT};
use thetaseek::numerics::linear::Weights;
use thetaseek::simulate::{simulate, Noise, VirialTruth};
use thetaseek::units::GAS_CONSTANT_J_PER_MOL_K;
use thetaseek::virial::{fit_form, Readings, VirialForm};

const T: f64 = 303.15;
const C: [f64; 6] = [1.0, 2.0, 4.0, 6.0, 8.0, 10.0]; // kg/m³

fn readings_of<'a>(c: &'a [f64], p: &'a [f64], sd: Option<&'a [f64]>) -> Readings<'a> {
    Readings { temperature_k: T, concentration: c, pressure: p, pressure_sd: sd, sd_kind: Weights::Absolute }
}

#[test]
fn the_sqrt_form_recovers_mn_exactly_on_noise_free_g_quarter_data() {
    // Stockmayer–Casassa with g = 1/4: (Π/c)^½ is exactly linear in c.
    let truth = VirialTruth::with_good_solvent_curvature(T, 150.0, 3.0e-4);
    let p: Vec<f64> = C.iter().map(|&c| truth.pressure_pa(c)).collect();
    let f = fit_form(VirialForm::Sqrt, &readings_of(&C, &p, None)).unwrap();
    assert_relative_eq!(f.mn(), 150.0, max_relative = 1e-10);
    assert_relative_eq!(f.score.a2, 3.0e-4, max_relative = 1e-10);
}

#[test]
fn the_quadratic_form_recovers_mn_a2_and_a3_on_noise_free_data() {
    let truth = VirialTruth { temperature_k: T, mn_kg_per_mol: 80.0, a2: -6.0e-5, a3: 2.0e-6 };
    let p: Vec<f64> = C.iter().map(|&c| truth.pressure_pa(c)).collect();
    let f = fit_form(VirialForm::Quadratic, &readings_of(&C, &p, None)).unwrap();
    assert_relative_eq!(f.mn(), 80.0, max_relative = 1e-10);
    assert_relative_eq!(f.score.a2, -6.0e-5, max_relative = 1e-8);
    assert_relative_eq!(f.score.a3.unwrap().0, 2.0e-6, max_relative = 1e-6);
}

/// Fraction of `runs` simulated datasets whose 95 % interval holds the true Mn and A2.
/// Weighted: σ_Π = 0.3 Pa + 0.3 %, passed to the fit. Unweighted: the model the unweighted fit
/// assumes, equal noise in Π/(cRT) (σ_y = 0.4 % of 1/Mn).
fn coverage(truth: VirialTruth, weighted: bool, runs: usize, seed: u64) -> (f64, f64) {
    let noise = Noise { absolute_pa: 0.3, relative: 0.003 };
    let rt = GAS_CONSTANT_J_PER_MOL_K * T;
    let sd_y = NormalSampler::new(0.0, 0.004 / truth.mn_kg_per_mol).unwrap();
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let (mut hit_mn, mut hit_a2) = (0, 0);
    for _ in 0..runs {
        let (p, sd): (Vec<f64>, Vec<f64>) = if weighted {
            simulate(&truth, &C, noise, &mut rng).iter().map(|r| (r.1, r.2)).unzip()
        } else {
            C.iter().map(|&c| (truth.pressure_pa(c) + c * rt * sd_y.sample(&mut rng), 0.0)).unzip()
        };
        let f = fit_form(VirialForm::Linear, &readings_of(&C, &p, weighted.then_some(&sd[..]))).unwrap();
        // Absolute weights: normal quantile; residual-scaled: Student t with the fit's dof.
        let q = if weighted {
            Normal::new(0.0, 1.0).unwrap().inverse_cdf(0.975)
        } else {
            StudentsT::new(0.0, 1.0, f.lsq.dof as f64).unwrap().inverse_cdf(0.975)
        };
        hit_mn += ((f.mn() - truth.mn_kg_per_mol).abs() <= q * f.mn_se()) as usize;
        hit_a2 += ((f.score.a2 - truth.a2).abs() <= q * f.score.a2_se) as usize;
    }
    (hit_mn as f64 / runs as f64, hit_a2 as f64 / runs as f64)
}

#[test]
fn linear_fits_recover_the_truth_with_honest_standard_errors() {
    // A3 = 0: the linear form is the true model. 2000 runs: binomial SD of a 95 % rate ≈ 0.5 %.
    let truth = VirialTruth { temperature_k: T, mn_kg_per_mol: 120.0, a2: 1.5e-4, a3: 0.0 };
    for weighted in [false, true] {
        let (mn, a2) = coverage(truth, weighted, 2000, 7);
        println!("weighted = {weighted}: coverage Mn {mn:.3}, A2 {a2:.3}");
        assert!((0.93..=0.97).contains(&a2), "A2 coverage {a2} (weighted = {weighted})");
        assert!((0.93..=0.97).contains(&mn), "Mn coverage {mn} (weighted = {weighted})");
    }
}
