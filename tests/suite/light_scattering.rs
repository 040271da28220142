//! Static light scattering: simulated Zimm data with known Mw, Rg and A2 are recovered, the
//! factor 2 of K c/R = 1/Mw + 2 A2 c is applied, and the route joins the θ comparison.

use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};
use serde_json::Value;
use std::fmt::Write;
use thetaseek::thermo::flory_krigbaum_a2;
use thetaseek::units::{optical_constant, scattering_vector};

use crate::common::{json_stdout, parse_html, thetaseek};

const N0: f64 = 1.33;
const LAMBDA: f64 = 633e-9;

/// K c/R at T for Mw = 500 kg/mol, A2 from Flory–Krigbaum (θ = 305 K) and Rg(T) growing with A2.
fn zimm_csv(noise: f64, rayleigh: bool) -> String {
    let mut rng = ChaCha8Rng::seed_from_u64(21);
    let eps = Normal::new(0.0, noise).unwrap();
    let k = optical_constant(N0, 0.19e-3, LAMBDA);
    let mut text = if rayleigh {
        String::from("series,temperature (K),concentration (g/L),angle (deg),rayleigh ratio (1/cm)\n")
    } else {
        String::from("series,temperature (K),concentration (g/L),angle (deg),kc/r (mol/g)\n")
    };
    for t in [295.0, 300.0, 305.0, 310.0, 315.0] {
        let a2 = flory_krigbaum_a2(t, 305.0, 0.4, 0.9e-3, 100e-6);
        let rg = 25e-9 * (1.0 + 200.0 * a2);
        for c in [0.5, 1.0, 1.5, 2.0, 2.5] {
            for angle in [30.0, 60.0, 90.0, 120.0, 150.0f64] {
                let q = scattering_vector(N0, angle.to_radians(), LAMBDA);
                let y = (1.0 / 500.0) * (1.0 + q * q * rg * rg / 3.0) + 2.0 * a2 * c;
                let y = y * (1.0 + eps.sample(&mut rng));
                if rayleigh {
                    // R = K c/(Kc/R), in 1/m → 1/cm.
                    let _ = writeln!(text, "ls,{t},{c},{angle},{:e}", k * c / y * 1e-2);
                } else {
                    let _ = writeln!(text, "ls,{t},{c},{angle},{:e}", y * 1e-3);
                }
            }
        }
    }
    text
}

fn run(csv: &str, extra: &[&str]) -> Value {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("ls.csv");
    std::fs::write(&path, csv).unwrap();
    json_stdout(
        thetaseek()
            .arg("analyze")
            .arg(&path)
            .args(["--bootstrap", "0", "--report", "-", "--refractive-index", "1.33", "--wavelength", "633"])
            .args(extra),
    )
}

#[test]
fn noise_free_zimm_data_give_back_mw_rg_and_a2_with_the_factor_two() {
    let report = run(&zimm_csv(0.0, false), &[]);
    let s = &report["series"][0];
    assert_eq!(s["route"], "light_scattering");
    for f in s["light_scattering"].as_array().unwrap() {
        let t = f["temperature_k"].as_f64().unwrap();
        let a2 = flory_krigbaum_a2(t, 305.0, 0.4, 0.9e-3, 100e-6);
        assert!((f["mw_g_per_mol"].as_f64().unwrap() - 500_000.0).abs() < 1e-6 * 500_000.0);
        // The slope of K c/R in c is 2 A2: the reported A2 is the truth, not twice it.
        assert!((f["a2_mol_ml_per_g2"].as_f64().unwrap() - a2).abs() < 1e-9, "{t}");
        let rg = 25.0 * (1.0 + 200.0 * a2);
        assert!((f["rg_nm"].as_f64().unwrap() - rg).abs() < 1e-6 * rg, "{t}");
    }
    let theta = s["theta"]["theta_k"].as_f64().unwrap();
    assert!((theta - 305.0).abs() < 1e-6, "{theta}");
    // α_s = 1 at θ, above 1 in good solvent.
    let alphas: Vec<f64> =
        s["light_scattering"].as_array().unwrap().iter().map(|f| f["expansion_factor"].as_f64().unwrap()).collect();
    assert!((alphas[2] - 1.0).abs() < 1e-6 && alphas[4] > 1.0 && alphas[0] < 1.0, "{alphas:?}");
    // ⟨r²⟩0/M = 6 Rg²(θ)/Mw: 6 (25 nm)² / 500 000 g/mol = 0.0075 nm² mol/g.
    let d = &s["unperturbed_dimensions"];
    assert_eq!(d["route"], "light_scattering");
    let r2m = d["unperturbed_r2_over_m_nm2_mol_per_g"].as_f64().unwrap();
    assert!((r2m - 0.0075).abs() < 1e-6 * 0.0075, "{r2m}");
}

/// With noise, 6 Rg²(θ)/Mw carries an SE that holds the truth (0.0075 nm² mol/g) within 3 SE.
#[test]
fn noisy_zimm_data_give_unperturbed_dimensions_with_an_se() {
    let report = run(&zimm_csv(0.01, false), &[]);
    let d = &report["series"][0]["unperturbed_dimensions"];
    let (value, se) = (
        d["unperturbed_r2_over_m_nm2_mol_per_g"].as_f64().unwrap(),
        d["unperturbed_r2_over_m_se_nm2_mol_per_g"].as_f64().unwrap(),
    );
    assert!(se > 0.0 && (value - 0.0075).abs() < 3.0 * se, "{value} ± {se}");
    assert!(d["method"].as_str().unwrap().contains("6 Rg²/Mw"));
}

#[test]
fn rayleigh_ratios_with_a_computed_optical_constant_give_the_same_results() {
    let formed = run(&zimm_csv(0.002, false), &[]);
    let rayleigh = run(&zimm_csv(0.002, true), &["--dn-dc", "0.19"]);
    let (a, b) = (&formed["series"][0]["light_scattering"], &rayleigh["series"][0]["light_scattering"]);
    for (x, y) in a.as_array().unwrap().iter().zip(b.as_array().unwrap()) {
        for key in ["mw_g_per_mol", "a2_mol_ml_per_g2", "rg_nm"] {
            let (p, q) = (x[key].as_f64().unwrap(), y[key].as_f64().unwrap());
            assert!((p - q).abs() <= 1e-6 * p.abs().max(1e-12), "{key}: {p} vs {q}");
        }
    }
    let theta = formed["series"][0]["theta"]["theta_k"].as_f64().unwrap();
    assert!((theta - 305.0).abs() < 2.0, "{theta}");
}

#[test]
fn a_rayleigh_ratio_without_an_optical_constant_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("ls.csv");
    std::fs::write(&path, zimm_csv(0.0, true)).unwrap();
    let a = thetaseek()
        .arg("analyze")
        .arg(&path)
        .args(["--refractive-index", "1.33", "--wavelength", "633"])
        .assert()
        .code(65);
    assert!(String::from_utf8_lossy(&a.get_output().stderr).contains("optical constant"));
}

#[test]
fn the_zimm_plot_draws_every_reading_and_both_extrapolations() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("ls.csv");
    std::fs::write(&path, zimm_csv(0.002, false)).unwrap();
    let figures = dir.path().join("figures");
    thetaseek()
        .arg("analyze")
        .arg(&path)
        .args(["--bootstrap", "0", "-q", "--refractive-index", "1.33", "--wavelength", "633", "--figures"])
        .arg(&figures)
        .assert()
        .success();
    let html = dir.path().join("r.html");
    thetaseek()
        .arg("analyze")
        .arg(&path)
        .args(["--bootstrap", "0", "-q", "--refractive-index", "1.33", "--wavelength", "633", "--html"])
        .arg(&html)
        .assert()
        .success();
    let page = std::fs::read_to_string(&html).unwrap();
    parse_html(&page);
    assert!(page.contains("id=\"light-scattering\"") && page.contains("Rg (nm)") && page.contains("ls-zimm.svg"));
    let svg = std::fs::read_to_string(figures.join("ls-zimm.svg")).unwrap();
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let text: String = doc.descendants().filter_map(|n| n.text()).collect::<Vec<_>>().join("\n");
    assert!(text.contains("Zimm plot") && text.contains("q² + k c") && text.contains("Rg = "), "{text}");
    // 5 temperatures × 5 concentrations × 5 angles, one circle each.
    let circles = doc.descendants().filter(|n| n.has_tag_name("circle")).count();
    assert_eq!(circles, 125);
    let report = run(&zimm_csv(0.002, false), &[]);
    let zimm = &report["series"][0]["light_scattering"][0]["zimm"];
    assert_eq!(zimm["readings"].as_array().unwrap().len(), 25);
    assert_eq!(zimm["zero_angle"].as_array().unwrap().len(), 5);
    assert_eq!(zimm["zero_concentration"].as_array().unwrap().len(), 5);
    // Both extrapolations meet at 1/Mw = 1/500 kg/mol = 2e-6 mol/g.
    let intercept = zimm["zero_concentration_intercept_mol_per_g"].as_f64().unwrap();
    assert!((intercept - 2e-6).abs() < 2e-8, "{intercept}");
}

#[test]
fn a_quadratic_zero_angle_fit_recovers_a3_with_the_factor_three() {
    use thetaseek::dataset::ScatteringRow;
    // Invented truth (SI): Mw 500 kg/mol, A2 3e-4 mol m³/kg², A3 5e-6 mol m⁶/kg³ (a tenth of
    // the concentration term at the top concentration), Rg 30 nm;
    // K c/R = 1/Mw (1 + q² Rg²/3) + 2 A2 c + 3 A3 c² (Zimm 1948), noise-free.
    let (inv_mw, a2, a3, rg) = (1.0 / 500.0, 3e-4, 5e-6, 30e-9);
    let mut rows = Vec::new();
    for c in [0.5, 1.0, 2.0, 3.0, 4.0, 5.0] {
        for angle in [30.0, 60.0, 90.0, 120.0f64] {
            let q = scattering_vector(N0, angle.to_radians(), LAMBDA);
            let y = inv_mw * (1.0 + q * q * rg * rg / 3.0) + 2.0 * a2 * c + 3.0 * a3 * c * c;
            rows.push(ScatteringRow {
                series: "s".into(),
                temperature_k: 310.0,
                concentration: c,
                kc_over_r: y,
                q: Some(q),
                line: 2,
            });
        }
    }
    let refs: Vec<&ScatteringRow> = rows.iter().collect();
    let quadratic = &thetaseek::scattering::fit_series(&refs, true)[0];
    assert!((quadratic.mw_g_per_mol - 5e5).abs() < 1e-6 * 5e5, "{quadratic:?}");
    assert!((quadratic.a2_mol_ml_per_g2 - a2).abs() < 1e-9, "{quadratic:?}");
    // mol m⁶/kg³ → mol mL²/g³: × 10³ (SI brochure prefixes: 1 mL = 1e-6 m³, 1 g = 1e-3 kg).
    let a3_report = quadratic.a3_mol_ml2_per_g3.unwrap();
    assert!((a3_report - a3 * 1e3).abs() < 1e-6 * a3 * 1e3, "{a3_report}");
    // The straight line on the same data has no A3 and a biased A2.
    let line = &thetaseek::scattering::fit_series(&refs, false)[0];
    assert!(line.a3_mol_ml2_per_g3.is_none() && line.a2_mol_ml_per_g2 > 1.05 * a2, "{line:?}");
}

#[test]
fn virial_quadratic_adds_the_a3_term_to_light_scattering_too() {
    let straight = run(&zimm_csv(0.0, false), &[]);
    assert!(straight["series"][0]["light_scattering"][0]["a3_mol_ml2_per_g3"].is_null());
    let curved = run(&zimm_csv(0.0, false), &["--virial", "quadratic"]);
    let fit = &curved["series"][0]["light_scattering"][0];
    // The simulated data have no curvature: A3 comes back as zero within its SE.
    let (a3, se) = (fit["a3_mol_ml2_per_g3"].as_f64().unwrap(), fit["a3_se_mol_ml2_per_g3"].as_f64().unwrap());
    assert!(a3.abs() <= 3.0 * se + 1e-12, "{a3} ± {se}");
}
