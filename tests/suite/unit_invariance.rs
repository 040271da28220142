//! One dataset written in two unit systems gives the same Mn and A2: °C, g/mL, Pa against
//! K, g/L and a head of solvent in cm (Π = ρ g_n h).

use approx::assert_relative_eq;
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use std::fmt::Write;
use thetaseek::analysis::{analyze, Settings};
use thetaseek::input::{read_file, ReadOptions};
use thetaseek::simulate::{simulate, Noise, VirialTruth};
use thetaseek::theta::ThetaSettings;
use thetaseek::units::STANDARD_GRAVITY_M_PER_S2;

const DENSITY_G_PER_ML: f64 = 0.8672;

fn two_files() -> (String, String) {
    let mut rng = ChaCha8Rng::seed_from_u64(3);
    let mut a = String::from("series,temperature (C),concentration (g/mL),pressure (Pa)\n");
    let mut b = String::from("Sample,Temperature [K],Concentration [g/L],Head (cm),Solvent density (g/mL)\n");
    for (i, t_c) in [15.0, 25.0, 35.0, 45.0].into_iter().enumerate() {
        let truth = VirialTruth::with_good_solvent_curvature(t_c + 273.15, 95.0, -1.0e-4 + 1.0e-4 * i as f64);
        let c = [1.5, 3.0, 4.5, 6.0, 7.5, 9.0];
        for (c, p, _) in simulate(&truth, &c, Noise { absolute_pa: 0.4, relative: 0.002 }, &mut rng) {
            let head_cm = p / (DENSITY_G_PER_ML * 1000.0 * STANDARD_GRAVITY_M_PER_S2) * 100.0;
            let _ = writeln!(a, "s,{t_c:?},{:e},{p:e}", c / 1000.0);
            let _ = writeln!(b, "s,{:?},{c:e},{head_cm:e},{DENSITY_G_PER_ML}", t_c + 273.15);
        }
    }
    (a, b)
}

#[test]
fn celsius_g_per_ml_pascal_and_kelvin_g_per_l_head_give_the_same_results() {
    let (a, b) = two_files();
    let run = |text: &str| {
        let contents = read_file("x.csv", 0, text.as_bytes(), &ReadOptions::default()).unwrap();
        let settings = Settings {
            theta: ThetaSettings { bootstrap_replicates: 0, ..ThetaSettings::default() },
            ..Settings::default()
        };
        let dataset = thetaseek::dataset::Dataset {
            series: contents.readings.into_series(),
            ..thetaseek::dataset::Dataset::default()
        };
        analyze(&dataset, &settings)
    };
    let (ra, rb) = (run(&a), run(&b));
    assert_eq!(ra[0].fits.len(), 4);
    for (fa, fb) in ra[0].fits.iter().zip(&rb[0].fits) {
        assert_eq!(fa.fit.score.form, fb.fit.score.form);
        assert_relative_eq!(fa.temperature_k, fb.temperature_k, max_relative = 1e-12);
        assert_relative_eq!(fa.fit.mn(), fb.fit.mn(), max_relative = 1e-9);
        assert_relative_eq!(fa.fit.score.a2, fb.fit.score.a2, max_relative = 1e-9);
        assert_relative_eq!(fa.fit.score.a2_se, fb.fit.score.a2_se, max_relative = 1e-9);
    }
    let (ta, tb) = (ra[0].theta.as_ref().unwrap(), rb[0].theta.as_ref().unwrap());
    assert_relative_eq!(ta.theta_k.unwrap(), tb.theta_k.unwrap(), max_relative = 1e-9);
}
