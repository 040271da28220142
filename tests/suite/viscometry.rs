//! The viscometry route against known truth (noise-free simulations), published values of a
//! classic pair, and its calibration on noisy simulations.

use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use thetaseek::analysis::{analyze_viscometry_series, Settings};
use thetaseek::dataset::{ViscometryRow, ViscometrySeries, ViscosityValue};
use thetaseek::simulate::viscometry::{Expansion, ViscometryTruth};
use thetaseek::viscometry::{fit_dilution, solomon_ciuta};

fn truth() -> ViscometryTruth {
    ViscometryTruth {
        theta_k: 307.65,
        k_theta: 0.08 * 10f64.powf(-1.5), // 0.080 mL mol^½ g^-3/2 in SI
        expansion: Expansion::PowerLaw { slope: 2.2 },
        reference_molar_mass: 100.0,
        huggins_at_theta: 0.5,
        molar_masses: vec![50.0, 120.0, 300.0, 700.0, 1500.0],
        temperatures_k: vec![303.15, 307.65, 313.15, 318.15, 323.15],
        reduced_concentrations: vec![0.15, 0.25, 0.35, 0.45, 0.55],
    }
}

fn series_of(rows: Vec<ViscometryRow>) -> ViscometrySeries {
    ViscometrySeries { name: rows[0].series.clone(), rows }
}

/// The same truth given as [η] per fraction and temperature (no dilution step).
fn tabulated(truth: &ViscometryTruth) -> ViscometrySeries {
    let mut rows = Vec::new();
    for (j, &m) in truth.molar_masses.iter().enumerate() {
        for &t in &truth.temperatures_k {
            rows.push(ViscometryRow {
                series: "sim".into(),
                fraction: Some(format!("F{}", j + 1)),
                molar_mass: Some(m),
                temperature_k: t,
                value: ViscosityValue::Intrinsic { value: truth.intrinsic(m, t), sd: None },
                line: 0,
            });
        }
    }
    series_of(rows)
}

fn close(a: f64, b: f64, rel: f64) -> bool {
    (a - b).abs() <= rel * b.abs()
}

/// Noise-free [η] per fraction and temperature: every later step is exact.
#[test]
fn noise_free_intrinsic_viscosities_recover_every_parameter() {
    let truth = truth();
    let r = analyze_viscometry_series(&tabulated(&truth), &[], &Settings::default());
    let v = r.viscometry.as_ref().expect("a viscometry result");
    for (t, row) in truth.temperatures_k.iter().zip(&v.temperatures) {
        let a = row.mark_houwink_exponent.unwrap();
        assert!(close(a, truth.exponent(*t), 1e-8), "a at {t}: {a}");
        // K for mL/g and g/mol: 10^{3(1 − a)} K_SI.
        let k = truth.mark_houwink_k(*t) * 10f64.powf(3.0 * (1.0 - truth.exponent(*t)));
        assert!(close(row.mark_houwink_k_ml_per_g.unwrap(), k, 1e-8));
    }
    let theta = v.viscometric_theta.as_ref().unwrap();
    assert!(close(theta.theta_k, truth.theta_k, 1e-8), "θ {}", theta.theta_k);
    let direct = v.k_theta_at_theta.as_ref().unwrap();
    assert!(close(direct.k_theta_ml_mol_half_per_g_three_halves, 0.080, 1e-8));
    // At θ the Stockmayer–Fixman line is flat at Kθ.
    let at_theta = v.temperatures.iter().find(|t| (t.temperature_k - truth.theta_k).abs() < 1e-9).unwrap();
    assert!(close(at_theta.k_theta_ml_mol_half_per_g_three_halves.unwrap(), 0.080, 1e-8));
    // ⟨r²⟩0/M = (Kθ/Φ0)^{2/3} and α_η = 1 at θ.
    let d = r.dimensions.as_ref().unwrap();
    let expected = (truth.k_theta / 2.5e23f64).powf(2.0 / 3.0) * 1e15;
    assert!(close(d.unperturbed_r2_over_m_nm2_mol_per_g, expected, 1e-8));
    for fit in v.dilutions.iter().filter(|f| (f.temperature_k - truth.theta_k).abs() < 1e-9) {
        assert!(close(fit.viscosity_expansion_factor.unwrap(), 1.0, 1e-8));
    }
    // Kθ does not depend on T here: d ln⟨r²⟩0/dT of the Stockmayer–Fixman intercepts is not
    // exactly zero off θ (the power law is not straight in M^½), but it is at θ's temperature.
    assert!(v.r2_temperature_coefficient_per_k.is_some());
}

/// Huggins-exact dilution data: the shared intercept is not exact (the Kraemer line of such
/// data curves: ln ηrel/c = [η] + (kH − ½)[η]²c + (⅓ − kH)[η]³c² + …). Measured here over
/// ηrel 1.15–1.7: bias −0.33 %, −0.05 %, +0.25 %, +0.86 % of [η] for kH = 0.3, 0.35, 0.4, 0.5
/// (none at kH = ⅓), kH − kK = 0.486–0.548. The bias is common to fractions measured over the
/// same ηrel range, so the Mark–Houwink exponent and the viscometric θ do not feel it; Kθ at θ
/// carries it (+0.9 %, ⟨r²⟩0/M +0.6 %, far inside the spread of published Φ0).
#[test]
fn huggins_kraemer_on_exact_data_is_within_its_truncation() {
    for kh in [0.3, 0.35, 0.4, 0.5] {
        let eta = 0.05; // m³/kg = 50 mL/g
        let readings: Vec<(f64, f64)> =
            [0.15, 0.25, 0.35, 0.45, 0.55].iter().map(|u| (u / eta, 1.0 + u + kh * u * u)).collect();
        let d = fit_dilution(&readings).unwrap();
        let bias = d.intrinsic / eta - 1.0;
        let (h, k, diff) = (d.huggins.unwrap().0, d.kraemer.unwrap().0, d.huggins_minus_kraemer.unwrap().0);
        eprintln!("kH {kh}: bias {bias:.2e}, kH {h:.4}, kK {k:.4}, kH − kK {diff:.4}");
        assert!(bias.abs() < 1e-2, "kH {kh}: bias {bias}");
        assert!((diff - 0.5).abs() < 0.1, "kH {kh}: kH − kK = {diff}");
        assert!(d.warnings.iter().all(|w| w.code != "huggins_kraemer_departure"));
        // No noise: the SE is the lines' disagreement alone, and it covers the bias.
        let se = d.se.unwrap();
        assert!(se >= bias.abs() * eta * (1.0 - 1e-9), "kH {kh}: SE {se} < bias {}", bias * eta);
    }
}

/// Solomon–Ciută is exact when kH + (½ − kH)… i.e. when ηsp − ln ηrel = ([η]c)²/2 exactly:
/// checked against its defining identity, and within 1 % of [η] for kH = ⅓ at ηrel ≈ 1.4
/// (common practice: the single-point formula suits kH near ⅓).
#[test]
fn solomon_ciuta_single_point() {
    let eta = 0.05;
    let u: f64 = 0.35;
    let r = 1.0 + u + u * u / 3.0;
    let est = solomon_ciuta(u / eta, r);
    assert!((est / eta - 1.0).abs() < 0.01, "{est}");
    let d = fit_dilution(&[(u / eta, r)]).unwrap();
    assert_eq!(d.method, thetaseek::viscometry::DilutionMethod::SolomonCiuta);
    assert!(d.se.is_none());
}

/// Published values for polystyrene in cyclohexane at its θ temperature (34.5 °C), from memory
/// of the handbook tables: [η]θ = 0.082 M^½ mL/g (Kθ ≈ 0.080–0.085), a = 0.50; ⟨r²⟩0/M ≈
/// 0.43–0.47 Å² mol/g and C∞ ≈ 9.5–10.5 for polystyrene (M0 = 104.15 g/mol, two backbone C–C
/// bonds of 0.154 nm per repeat unit). With Φ0 = 2.5 × 10²³ mol⁻¹ (common practice) the route
/// must give dimensions in those ranges from [η] that follow the published relation.
#[test]
fn polystyrene_in_cyclohexane_at_theta_gives_the_published_dimensions() {
    let k_theta_report = 0.082; // mL mol^½ g^-3/2
    let theta_k = 307.65;
    let masses = [37.0e3, 110.0e3, 233.0e3, 498.0e3, 1.26e6]; // g/mol: standards of the usual kind
    let mut rows = Vec::new();
    for t in [theta_k] {
        for m in masses {
            rows.push(ViscometryRow {
                series: "PS in cyclohexane".into(),
                fraction: None,
                molar_mass: Some(m * 1e-3),
                temperature_k: t,
                value: ViscosityValue::Intrinsic { value: k_theta_report * m.sqrt() * 1e-3, sd: None },
                line: 0,
            });
        }
    }
    let settings = Settings {
        viscometry: thetaseek::viscometry::ViscometrySettings {
            repeat_unit: Some(thetaseek::chain_dimensions::RepeatUnit {
                molar_mass: 0.10415,
                bonds: 2.0,
                bond_length_m: 0.154e-9,
            }),
            ..Default::default()
        },
        ..Settings::default()
    };
    let r = analyze_viscometry_series(&series_of(rows), &[], &settings);
    let v = r.viscometry.unwrap();
    let a = v.temperatures[0].mark_houwink_exponent.unwrap();
    assert!((a - 0.5).abs() < 1e-9, "a = {a}");
    let d = r.dimensions.unwrap();
    let r2m_angstrom = d.unperturbed_r2_over_m_nm2_mol_per_g * 100.0;
    assert!((0.43..=0.48).contains(&r2m_angstrom), "⟨r²⟩0/M = {r2m_angstrom} Å² mol/g");
    let c_inf = d.characteristic_ratio.unwrap();
    assert!((9.5..=10.6).contains(&c_inf), "C∞ = {c_inf}");
}

/// A published good-solvent relation (from memory of the handbook tables: polystyrene in toluene
/// at 25 °C, [η] = 7.5 × 10⁻³ M^0.75 mL/g) is recovered exactly by the Mark–Houwink line, and its
/// Stockmayer–Fixman intercept over the usual standards (37 k–1.26 M g/mol) comes within 5 % of
/// the θ-solvent Kθ = 0.082 (the extrapolation's purpose: Kθ from good-solvent data; measured
/// here: 0.0833, +1.6 %).
#[test]
fn a_published_good_solvent_relation_is_recovered_and_its_stockmayer_fixman_intercept_is_near_k_theta() {
    let masses = [37.0e3, 110.0e3, 233.0e3, 498.0e3, 1.26e6];
    let rows = masses
        .iter()
        .map(|&m| ViscometryRow {
            series: "PS in toluene".into(),
            fraction: None,
            molar_mass: Some(m * 1e-3),
            temperature_k: 298.15,
            value: ViscosityValue::Intrinsic { value: 7.5e-3 * m.powf(0.75) * 1e-3, sd: None },
            line: 0,
        })
        .collect();
    let r = analyze_viscometry_series(&series_of(rows), &[], &Settings::default());
    let t = &r.viscometry.unwrap().temperatures[0];
    assert!((t.mark_houwink_exponent.unwrap() - 0.75).abs() < 1e-9);
    assert!(close(t.mark_houwink_k_ml_per_g.unwrap(), 7.5e-3, 1e-8));
    let k = t.k_theta_ml_mol_half_per_g_three_halves.unwrap();
    assert!((k / 0.082 - 1.0).abs() < 0.05, "Kθ from toluene = {k}");
}

/// Huggins constants of the trade (from memory): about 0.3–0.4 for a flexible coil in a good
/// solvent and about 0.5 near θ. The simulation's truth spans that range, and the route returns
/// it within its truncation on noise-free data.
#[test]
fn huggins_constants_are_recovered_on_noise_free_series() {
    let truth = truth();
    let mut rng = ChaCha8Rng::seed_from_u64(1);
    let r = analyze_viscometry_series(&series_of(truth.rows("sim", 0.0, &mut rng)), &[], &Settings::default());
    let v = r.viscometry.unwrap();
    for d in &v.dilutions {
        let kh = truth.huggins(d.temperature_k);
        assert!((0.3..=0.55).contains(&kh));
        assert!((d.huggins_constant.unwrap() - kh).abs() < 0.035, "{} vs {kh}", d.huggins_constant.unwrap());
    }
    let theta = v.viscometric_theta.unwrap();
    assert!((theta.theta_k - truth.theta_k).abs() < 0.5, "θ {}", theta.theta_k);
}

fn demo_viscometry() -> std::path::PathBuf {
    std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("data/px40-viscometry.csv")
}

/// The README's run: the demo's osmometry and viscometry together. The whole resin takes the
/// osmotic Mn, Kθ is read at the osmotic θ, the viscometric θ joins the routes' comparison
/// without entering the combined θ, and every output carries the route.
#[test]
fn the_demo_runs_from_flow_times_to_dimensions_and_into_the_plan() {
    let dir = tempfile::tempdir().unwrap();
    let (report, table, figures) = (dir.path().join("r.json"), dir.path().join("t.csv"), dir.path().join("fig"));
    let out = crate::common::thetaseek()
        .args(["analyze"])
        .arg(crate::common::demo())
        .arg(demo_viscometry())
        .arg("--report")
        .arg(&report)
        .arg("--table")
        .arg(&table)
        .arg("--figures")
        .arg(&figures)
        .output()
        .unwrap();
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("viscometric θ (a = ½)") && text.contains("⟨r²⟩0/M ="), "{text}");
    let r: serde_json::Value = serde_json::from_slice(&std::fs::read(&report).unwrap()).unwrap();
    let v = r["series"].as_array().unwrap().iter().find(|s| s["route"] == "viscometry").unwrap();
    let whole =
        v["viscometry"]["fractions"].as_array().unwrap().iter().find(|f| f["name"] == "PX-40 in mirane").unwrap();
    assert_eq!(whole["molar_mass_source"], "osmotic Mn of series 'PX-40 in mirane'");
    assert!(v["viscometry"]["k_theta_at_theta"]["theta_from"].as_str().unwrap().contains("osmometry"));
    // Truth of the invented demo (examples/make-demo.rs): Kθ = 0.075, ⟨r²⟩0/M from it by Flory–Fox.
    let k = &v["viscometry"]["k_theta_at_theta"];
    let (value, se) = (
        k["k_theta_ml_mol_half_per_g_three_halves"].as_f64().unwrap(),
        k["k_theta_se_ml_mol_half_per_g_three_halves"].as_f64().unwrap(),
    );
    assert!((value - 0.075).abs() < 3.0 * se, "Kθ {value} ± {se}");
    let d = &v["unperturbed_dimensions"];
    assert_eq!(d["route"], "viscometry");
    assert!(d["unperturbed_r2_over_m_nm2_mol_per_g"].as_f64().unwrap() > 0.0);
    let theta = &v["viscometry"]["viscometric_theta"];
    assert_eq!(theta["crossing"], "bracketed");
    let comparison = r["routes"].as_array().unwrap().iter().find(|c| c["series"] == "PX-40 in mirane").unwrap();
    assert_eq!(comparison["combined_routes"], serde_json::json!(["osmometry"]));
    assert!(comparison["notes"][0].as_str().unwrap().contains("approximate criterion"));
    let table = std::fs::read_to_string(&table).unwrap();
    assert!(table.lines().next().unwrap().contains("intrinsic viscosity (mL/g)"));
    assert_eq!(table.lines().filter(|l| l.starts_with("PX-40 in mirane,ok,") && l.contains(",PX-40 F1,")).count(), 5);
    for kind in ["huggins-kraemer", "mark-houwink", "stockmayer-fixman"] {
        let svg = std::fs::read_to_string(figures.join(format!("px-40-in-mirane-{kind}.svg"))).unwrap();
        roxmltree::Document::parse(&svg).unwrap();
    }
    // The plan takes ⟨r²⟩0/M from the viscometry and says so; the flag still wins.
    let plan = |extra: &[&str]| {
        let mut c = crate::common::thetaseek();
        c.args(["plan", "--solvents"])
            .arg(std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("data/px40-solvents.csv"))
            .args(["--molar-mass", "185000", "--polymer-specific-volume", "0.92", "--report", "-"])
            .args(extra)
            .arg(&report);
        crate::common::json_stdout(&mut c)
    };
    let measured = plan(&[]);
    assert!(measured["settings"]["unperturbed_r2_over_m_from"].as_str().unwrap().starts_with("viscometry of series"));
    let from_data = measured["settings"]["unperturbed_r2_over_m_angstrom2_mol_per_g"].as_f64().unwrap();
    assert!((from_data - d["unperturbed_r2_over_m_nm2_mol_per_g"].as_f64().unwrap() * 100.0).abs() < 1e-9);
    assert!(measured["candidates"].as_array().unwrap().iter().all(|c| c["overlap_concentration_g_per_ml"].is_number()));
    let flagged = plan(&["--unperturbed-dimension", "0.6"]);
    assert_eq!(flagged["settings"]["unperturbed_r2_over_m_from"], "--unperturbed-dimension");
    assert!((flagged["settings"]["unperturbed_r2_over_m_angstrom2_mol_per_g"].as_f64().unwrap() - 0.6).abs() < 1e-12);
}

/// The coverage study, small: two designs of the full study (examples/viscometry-coverage.rs)
/// at 600 series each. With 600 series a perfectly calibrated 95 % interval covers 95 ± 0.9 %
/// (one SE); the bands are ±3.3 SE, so they fail when the calibration is lost, not by chance.
#[test]
fn viscometry_intervals_hold_their_level_on_simulated_series() {
    use thetaseek::simulate::viscometry::ViscosityNoise;
    use thetaseek::simulate::viscometry_study::{by_fifths, run, Design};
    let power_law = Design {
        fractions: 5,
        temperatures: 5,
        noise: ViscosityNoise { absolute: 0.002, relative: 0.0 },
        expansion: Expansion::PowerLaw { slope: 2.0 },
        inside: true,
    };
    let outcomes = run(&power_law, 0, 600, 7);
    let share = |hits: usize, n: usize| hits as f64 / n as f64;
    let (hit, total) = outcomes.iter().fold((0, 0), |(h, t), o| (h + o.intrinsic.0, t + o.intrinsic.1));
    assert!((0.92..=0.98).contains(&share(hit, total)), "[η]: {}", share(hit, total));
    let exponents: Vec<(Option<f64>, bool)> = outcomes.iter().flat_map(|o| o.exponents.iter().copied()).collect();
    let (overall, fifths) = by_fifths(&exponents);
    assert!((0.93..=0.98).contains(&overall), "a: {overall}");
    // 600 points a fifth (five temperatures each): 95 ± 0.9 %; each fifth within 90–99 %.
    assert!(fifths.iter().all(|f| (0.90..=0.99).contains(f)), "a by fifth: {fifths:?}");
    let thetas: Vec<bool> = outcomes.iter().filter_map(|o| o.theta_covered).collect();
    let theta = share(thetas.iter().filter(|c| **c).count(), thetas.len());
    assert!(thetas.len() > 590 && (0.92..=0.99).contains(&theta), "viscometric θ: {theta} of {}", thetas.len());
    let first_order = Design {
        noise: ViscosityNoise { absolute: 0.0, relative: 0.002 },
        expansion: Expansion::FirstOrder { z: 3.0 },
        ..power_law
    };
    let outcomes = run(&first_order, 1, 600, 7);
    let dims: Vec<bool> = outcomes.iter().filter_map(|o| o.dimensions_covered).collect();
    let covered = share(dims.iter().filter(|c| **c).count(), dims.len());
    assert!(dims.len() > 590 && (0.92..=1.0).contains(&covered), "⟨r²⟩0/M: {covered}");
}
