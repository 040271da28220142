//! Writes the invented demo dataset `data/px40-osmometry.csv`.
//!
//! Scenario (invented, no real material): a fictional resin "PX-40" measured by membrane
//! osmometry in two fictional solvents, "mirane" and "ostrol", at temperatures around each
//! θ. Truth: Flory–Krigbaum A2(T) = (v̄²/V1) ψ1 (1 − θ/T), Stockmayer–Casassa curvature
//! (g = 1/4) in good solvent, noise σ_Π = 0.3 Pa + 0.3 % of Π, fixed seed.
//!
//! Run: `cargo run --example make-demo` (rewrites the file).

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
}
