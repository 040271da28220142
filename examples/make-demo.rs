//! Writes the invented demo datasets `data/px40-osmometry.csv` and `data/px40-viscometry.csv`.
//!
//! Scenario (invented, no real material): a fictional resin "PX-40" measured by membrane
//! osmometry in two fictional solvents, "mirane" and "ostrol", at temperatures around each
//! θ. Truth: Flory–Krigbaum A2(T) = (v̄²/V1) ψ1 (1 − θ/T), Stockmayer–Casassa curvature
//! (g = 1/4) in good solvent, noise σ_Π = 0.3 Pa + 0.3 % of Π, fixed seed.
//!
//! Viscometry (invented): four fractions of the same resin and the whole resin (whose molar
//! mass the run takes from the osmotic Mn) in mirane at five temperatures, flow times in a
//! capillary viscometer; truth [η] = Kθ M^½ α_η³, α_η³ = 1 + 3.0 (1 − θ_η/T) (M/150 kg/mol)^½
//! (first order in the excluded volume, so the Stockmayer–Fixman lines are straight) with θ =
//! 34.5 °C as in osmometry, Kθ = 0.075 mL mol^½ g^-3/2, Huggins-exact dilution series,
//! flow-time noise 0.05 s.
//!
//! Run: `cargo run --example make-demo` (rewrites both files).

use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use std::fmt::Write;
use thetaseek::simulate::{simulate, Noise, VirialTruth};
use thetaseek::thermo::flory_krigbaum_a2;
use thetaseek::units::CELSIUS_OFFSET_K;

struct Solvent {
    name: &'static str,
    solvent: &'static str,
    theta_c: f64,
    psi1: f64,
    molar_volume_ml_per_mol: f64,
    temperatures_c: &'static [f64],
    concentrations_g_per_l: &'static [f64],
}

fn main() {
    const MN_G_PER_MOL: f64 = 185_000.0;
    const SPECIFIC_VOLUME_ML_PER_G: f64 = 0.92;
    let solvents = [
        Solvent {
            name: "PX-40 in mirane",
            solvent: "mirane",
            theta_c: 34.5,
            psi1: 0.35,
            molar_volume_ml_per_mol: 105.0,
            temperatures_c: &[20.0, 25.0, 30.0, 35.0, 40.0, 45.0, 50.0],
            concentrations_g_per_l: &[2.0, 4.0, 6.0, 8.0, 10.0],
        },
        Solvent {
            name: "PX-40 in ostrol",
            solvent: "ostrol",
            theta_c: 12.0,
            psi1: 0.6,
            molar_volume_ml_per_mol: 92.0,
            temperatures_c: &[5.0, 10.0, 15.0, 20.0, 30.0, 40.0],
            concentrations_g_per_l: &[1.5, 3.0, 4.5, 6.0, 7.5],
        },
    ];
    let noise = Noise { absolute_pa: 0.3, relative: 0.003 };
    let mut rng = ChaCha8Rng::seed_from_u64(40);
    let mut csv = String::from(
        "# INVENTED DEMO DATA: fictional resin PX-40 in fictional solvents mirane and ostrol.\n\
         # Made by `cargo run --example make-demo` from the Flory-Krigbaum model with seeded noise.\n\
         # Truth: Mn = 185000 g/mol, v = 0.92 mL/g; mirane theta = 34.5 C, psi1 = 0.35, V1 = 105 mL/mol;\n\
         # ostrol theta = 12.0 C, psi1 = 0.60, V1 = 92 mL/mol. Noise sd = 0.3 Pa + 0.3 % of the reading.\n\
         series,solvent,temperature (C),concentration (g/L),pressure (Pa),pressure sd (Pa)\n",
    );
    for s in &solvents {
        for &t_c in s.temperatures_c {
            let t_k = t_c + CELSIUS_OFFSET_K;
            // SI: v̄ in m³/kg = mL/g × 10⁻³, V1 in m³/mol = mL/mol × 10⁻⁶; c in kg/m³ = g/L.
            let a2 = flory_krigbaum_a2(
                t_k,
                s.theta_c + CELSIUS_OFFSET_K,
                s.psi1,
                SPECIFIC_VOLUME_ML_PER_G * 1e-3,
                s.molar_volume_ml_per_mol * 1e-6,
            );
            let truth = VirialTruth::with_good_solvent_curvature(t_k, MN_G_PER_MOL / 1000.0, a2);
            for (c, p, sd) in simulate(&truth, s.concentrations_g_per_l, noise, &mut rng) {
                let _ = writeln!(csv, "{},{},{t_c:.1},{c:.2},{p:.2},{sd:.2}", s.name, s.solvent);
            }
        }
    }
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("data/px40-osmometry.csv");
    std::fs::write(&path, csv).expect("data/ is writable");
    eprintln!("wrote {}", path.display());
    write_viscometry(MN_G_PER_MOL, &mut rng);
}

/// The viscometry demo: flow times of four fractions and the whole resin in mirane.
fn write_viscometry(whole_resin_g_per_mol: f64, rng: &mut ChaCha8Rng) {
    use rand_distr::{Distribution, Normal};
    use thetaseek::simulate::viscometry::{Expansion, ViscometryTruth};
    let temperatures_c = [25.0, 30.0, 35.0, 40.0, 45.0];
    let fractions: [(&str, Option<f64>, f64); 5] = [
        ("PX-40 F1", Some(52_000.0), 52_000.0),
        ("PX-40 F2", Some(98_000.0), 98_000.0),
        ("PX-40 in mirane", None, whole_resin_g_per_mol),
        ("PX-40 F3", Some(320_000.0), 320_000.0),
        ("PX-40 F4", Some(610_000.0), 610_000.0),
    ];
    let truth = ViscometryTruth {
        theta_k: 34.5 + CELSIUS_OFFSET_K,
        // 0.075 mL mol^½ g^-3/2 → SI (÷ 10^1.5).
        k_theta: 0.075 / 10f64.powf(1.5),
        expansion: Expansion::FirstOrder { z: 3.0 },
        reference_molar_mass: 150.0,
        huggins_at_theta: 0.5,
        molar_masses: Vec::new(),
        temperatures_k: Vec::new(),
        reduced_concentrations: Vec::new(),
    };
    let noise = Normal::new(0.0, 0.05).expect("a finite SD");
    let mut csv = String::from(
        "# INVENTED DEMO DATA: fractions of the fictional resin PX-40 in the fictional solvent mirane.\n\
         # Made by `cargo run --example make-demo`: [eta] = K_theta M^0.5 (1 + 3.0 (1 - theta/T) (M/150000)^0.5),\n\
         # theta = 34.5 C, K_theta = 0.075 mL mol^0.5 g^-1.5, Huggins dilution series, flow-time noise 0.05 s.\n\
         # The whole resin's row has no molar mass: the run takes the osmotic Mn of series 'PX-40 in mirane'.\n\
         series,solvent,fraction,molar mass (g/mol),temperature (C),concentration (g/dL),flow time (s)\n",
    );
    for &t_c in &temperatures_c {
        let t_k = t_c + CELSIUS_OFFSET_K;
        // The solvent's flow time falls as it warms (an invented Arrhenius-like trend).
        let t0 = 120.0 * (1200.0 * (1.0 / t_k - 1.0 / 298.15)).exp();
        for _ in 0..3 {
            let _ = writeln!(csv, "PX-40 in mirane,mirane,,,{t_c:.1},0,{:.2}", t0 + noise.sample(rng));
        }
        for (name, molar_mass, m_g) in fractions {
            let eta = truth.intrinsic(m_g * 1e-3, t_k);
            let kh = truth.huggins(t_k);
            for u in [0.2, 0.3, 0.4, 0.5, 0.6] {
                // c in kg/m³ → g/dL (÷ 10), rounded as a balance would give it.
                let c_g_dl = ((u / eta) / 10.0 * 1e4).round() / 1e4;
                let x = eta * c_g_dl * 10.0;
                let t = t0 * (1.0 + x + kh * x * x) + noise.sample(rng);
                let mass = molar_mass.map_or(String::new(), |m| format!("{m:.0}"));
                let _ = writeln!(csv, "PX-40 in mirane,mirane,{name},{mass},{t_c:.1},{c_g_dl:.4},{t:.2}");
            }
        }
    }
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("data/px40-viscometry.csv");
    std::fs::write(&path, csv).expect("data/ is writable");
    eprintln!("wrote {}", path.display());
}
