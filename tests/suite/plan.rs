//! `thetaseek plan`: the physics against an independent scipy calculation, the choice among
//! invented solvents, and refusals.

use approx::assert_relative_eq;
use serde_json::Value;
use std::path::{Path, PathBuf};
use thetaseek::thermo::{expansion_argument, expansion_factor, flory_cm, segment_ratio, shultz_flory_tc};

use crate::common::{json_stdout, thetaseek, write};

#[test]
fn shultz_flory_and_the_expansion_factor_match_scipy() {
    // Fixture: tests/data/plan_fixtures.json from tests/fixtures/make_plan_fixtures.py
    // (the same equations, solved with scipy.optimize.brentq).
    let doc: Value = serde_json::from_str(include_str!("../data/plan_fixtures.json")).unwrap();
    for case in doc["cases"].as_array().unwrap() {
        let f = |k: &str| case[k].as_f64().unwrap();
        let x = segment_ratio(f("molar_mass_kg_per_mol"), f("specific_volume_m3_per_kg"), f("molar_volume_m3_per_mol"));
        assert_relative_eq!(x, f("x"), max_relative = 1e-12);
        let tc = shultz_flory_tc(f("theta_k"), f("psi1"), x).unwrap();
        assert_relative_eq!(tc, f("critical_temperature_k"), max_relative = 1e-12);
        let cm = flory_cm(f("specific_volume_m3_per_kg"), f("molar_volume_m3_per_mol"), f("unperturbed_r2_over_m"));
        assert_relative_eq!(cm, f("c_m"), max_relative = 1e-12);
        for e in case["expansion"].as_array().unwrap() {
            let z = expansion_argument(
                cm,
                f("psi1"),
                f("theta_k"),
                e["temperature_k"].as_f64().unwrap(),
                f("molar_mass_kg_per_mol"),
            );
            assert_relative_eq!(z, e["z"].as_f64().unwrap(), max_relative = 1e-12);
            assert_relative_eq!(expansion_factor(z).unwrap(), e["alpha"].as_f64().unwrap(), max_relative = 1e-12);
        }
    }
}

/// Invented A2 tables for one fictional polymer in three fictional solvents:
/// A2 = 3e-3 (1 − θ/T) mol mL/g² with θ = 25 °C (solvent "alpha"), 70 °C ("beta") and
/// 105 °C ("gamma").
fn three_solvents(dir: &Path) -> (PathBuf, PathBuf) {
    let mut data = String::from("solvent,temperature (C),a2 (mol mL/g2),a2 sd (mol mL/g2)\n");
    for (solvent, theta_c, temps) in [
        ("alpha", 25.0, [10.0, 17.0, 24.0, 31.0, 38.0]),
        ("beta", 70.0, [55.0, 62.0, 69.0, 76.0, 83.0]),
        ("gamma", 105.0, [90.0, 97.0, 104.0, 111.0, 118.0]),
    ] {
        for t in temps {
            let a2 = 3e-3 * (1.0 - (theta_c + 273.15) / (t + 273.15));
            data.push_str(&format!("{solvent},{t},{a2:e},5e-6\n"));
        }
    }
    let data = write(dir, "a2.csv", &data);
    let solvents = write(
        dir,
        "solvents.csv",
        "solvent,boiling point (C),melting point (C),molar volume (mL/mol)\n\
         alpha,110,-50,100\nbeta,150,-30,110\ngamma,100,0,90\n",
    );
    (data, solvents)
}

#[test]
fn only_the_solvent_whose_theta_lies_in_the_thermostat_range_is_recommended() {
    let dir = tempfile::tempdir().unwrap();
    let (data, solvents) = three_solvents(dir.path());
    let out = thetaseek()
        .arg("plan")
        .arg(&data)
        .arg("--solvents")
        .arg(&solvents)
        .args(["--molar-mass", "200000", "--polymer-specific-volume", "0.9", "--thermostat", "40:90", "--report", "-"])
        .assert()
        .success()
        .get_output()
        .clone();
    let plan: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(plan["recommendation"]["solvent"], "beta");
    let t = plan["recommendation"]["temperature_c"].as_f64().unwrap();
    assert!((t - 70.0).abs() < 0.05, "{t}");
    let window = plan["recommendation"]["temperature_window_c"].as_array().unwrap();
    assert!(window[0].as_f64().unwrap() < t && t < window[1].as_f64().unwrap());
    let reasons = |name: &str| -> String {
        let c = plan["candidates"].as_array().unwrap().iter().find(|c| c["solvent"] == name).unwrap();
        assert_eq!(c["suitable"], false, "{name}");
        c["reasons"].as_array().unwrap().iter().map(|r| r.as_str().unwrap()).collect::<Vec<_>>().join(" | ")
    };
    assert!(reasons("alpha").contains("outside the thermostat range"), "{}", reasons("alpha"));
    // γ's θ (105 °C) lies above its boiling point (100 °C): never recommended.
    let gamma = reasons("gamma");
    assert!(gamma.contains("above the boiling point") && gamma.contains("ruled out"), "{gamma}");
    for key in [
        "theta_k",
        "ci_low_k",
        "ci_high_k",
        "suitable",
        "reasons",
        "critical_temperature_k",
        "margin_k",
        "required_stability_k",
    ] {
        assert!(plan["candidates"][0].get(key).is_some(), "candidate missing {key}");
    }
    assert!(plan["cautions"].as_array().unwrap().len() >= 3);
    // The cautions also reach the terminal (stderr here, since stdout carries the JSON).
    assert!(String::from_utf8_lossy(&out.stderr).contains("Safety cautions"));
}

#[test]
fn a_tiny_margin_to_the_critical_temperature_is_a_warning() {
    let dir = tempfile::tempdir().unwrap();
    let (data, solvents) = three_solvents(dir.path());
    // A huge sample: Tc approaches θ. ψ1 = a V1/v̄² = 3e-3 × 110/0.81 ≈ 0.41; with M = 10⁸ g/mol,
    // θ − Tc ≈ θ (1/√x)/ψ1 ≈ 0.9 K.
    let out = thetaseek()
        .arg("plan")
        .arg(&data)
        .arg("--solvents")
        .arg(&solvents)
        .args(["--molar-mass", "1e8", "--polymer-specific-volume", "0.9", "--thermostat", "40:90"])
        .assert()
        .success()
        .get_output()
        .stdout
        .clone();
    let text = String::from_utf8(out).unwrap();
    assert!(text.contains("from the critical temperature") && text.contains("near-critical"), "{text}");
    assert!(text.contains("Safety cautions") && text.contains("fume hood"));
}

#[test]
fn an_expanded_goal_finds_the_temperature_of_the_target_a2() {
    let dir = tempfile::tempdir().unwrap();
    let (data, solvents) = three_solvents(dir.path());
    let plan = json_stdout(thetaseek().arg("plan").arg(&data).arg("--solvents").arg(&solvents).args([
        "--molar-mass",
        "200000",
        "--goal",
        "expanded",
        "--target-a2",
        "1e-4",
        "--thermostat",
        "40:90",
        "--report",
        "-",
    ]));
    // β: 3e-3 (1 − 343.15/T) = 1e-4 → T = 343.15/(1 − 1/30) K.
    let expected = 343.15 / (1.0 - 1.0 / 30.0) - 273.15;
    let t = plan["recommendation"]["temperature_c"].as_f64().unwrap();
    assert!((t - expected).abs() < 0.05, "{t} vs {expected}");
}

#[test]
fn a_report_from_analyze_plans_like_the_data_it_came_from() {
    let dir = tempfile::tempdir().unwrap();
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("data/px40-osmometry.csv");
    let solvents = Path::new(env!("CARGO_MANIFEST_DIR")).join("data/px40-solvents.csv");
    let report = dir.path().join("r.json");
    thetaseek().arg("analyze").arg(&demo).args(["--bootstrap", "0", "-q", "--report"]).arg(&report).assert().success();
    let plan = |input: &Path| -> Value {
        let out = thetaseek()
            .arg("plan")
            .arg(input)
            .arg("--solvents")
            .arg(&solvents)
            .args([
                "--molar-mass",
                "250000",
                "--polymer-specific-volume",
                "0.92",
                "--thermostat",
                "20:80",
                "--report",
                "-",
            ])
            .assert()
            .success()
            .get_output()
            .stdout
            .clone();
        serde_json::from_slice(&out).unwrap()
    };
    let (from_report, from_data) = (plan(&report), plan(&demo));
    assert_eq!(from_report["recommendation"], from_data["recommendation"]);
    assert_eq!(from_report["recommendation"]["solvent"], "mirane");
}

#[test]
fn bad_plan_inputs_are_refused_and_nothing_is_written() {
    let dir = tempfile::tempdir().unwrap();
    let (data, _) = three_solvents(dir.path());
    let partial = write(dir.path(), "partial.csv", "solvent,boiling point (C),melting point (C)\nalpha,110,-50\n");
    let out = dir.path().join("plan.json");
    let run = |extra: &[&str], solvents: &Path| {
        thetaseek()
            .arg("plan")
            .arg(&data)
            .arg("--solvents")
            .arg(solvents)
            .args(extra)
            .arg("--report")
            .arg(&out)
            .assert()
    };
    let a = run(&["--molar-mass", "1e5"], &partial).code(65);
    assert!(String::from_utf8_lossy(&a.get_output().stderr).contains("solvent 'beta'"));
    let full = dir.path().join("solvents.csv");
    run(&["--molar-mass", "1e5", "--thermostat", "80:40"], &full).code(2);
    // 0 K = −273.15 °C exactly (SI Brochure, 9th ed., §2.3.1): the range is converted to kelvin
    // when it is parsed, and a low end at or below absolute zero is refused there.
    let a = run(&["--molar-mass", "1e5", "--thermostat=-273.15:40"], &full).code(2);
    assert!(String::from_utf8_lossy(&a.get_output().stderr).contains("below absolute zero"));
    run(&["--molar-mass", "0"], &full).code(2);
    // `--molar-mass=-5` so that clap hands the value to its parser (a bare `-5` reads as a flag).
    let a = run(&["--molar-mass=-5"], &full).code(2);
    assert!(String::from_utf8_lossy(&a.get_output().stderr).contains("not a positive number"));
    run(&["--molar-mass", "1e5", "--goal", "expanded"], &full).code(2);
    assert!(!out.exists());
}

// ---- Solvent properties follow the solvent (issue #23) ----

fn analyze_report(extra: &[&str]) -> Value {
    analyze_file(Path::new("data/px40-osmometry.csv"), extra)
}

/// `analyze FILE EXTRA… --report -` run from the repository root, its report parsed.
fn analyze_file(file: &Path, extra: &[&str]) -> Value {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let out = thetaseek()
        .current_dir(root)
        .arg("analyze")
        .arg(file)
        .args(["--report", "-", "-q"])
        .args(extra)
        .assert()
        .success()
        .get_output()
        .stdout
        .clone();
    serde_json::from_slice(&out).unwrap()
}

#[test]
fn the_readmes_demo_command_gives_each_series_the_psi1_of_its_own_solvent() {
    // The README's first command. Truth from the invented demo's header: ψ1 = 0.35 in mirane
    // (V1 = 105 mL/mol) and 0.60 in ostrol (V1 = 92 mL/mol). Within 2 SE (a 95 % statement: a
    // 1-SE bound would fail one honest run in three).
    let report = analyze_report(&["--polymer-specific-volume", "0.92", "--solvents", "data/px40-solvents.csv"]);
    for (name, truth) in [("PX-40 in mirane", 0.35), ("PX-40 in ostrol", 0.60)] {
        let s = report["series"].as_array().unwrap().iter().find(|s| s["name"] == name).unwrap();
        let flory = &s["theta"]["flory"];
        let (psi1, se) = (flory["psi1"].as_f64().unwrap(), flory["psi1_se"].as_f64().unwrap());
        assert!((psi1 - truth).abs() < 2.0 * se, "{name}: ψ1 {psi1} ± {se}, truth {truth}");
    }
    assert!(report["warnings"].as_array().unwrap().is_empty(), "{:?}", report["warnings"]);
    assert!(report["inputs"].as_array().unwrap().iter().any(|i| i["path"] == "data/px40-solvents.csv"));
}

#[test]
fn one_molar_volume_for_series_in_different_solvents_is_a_warning() {
    // The README's command before issue #23: one V1 for mirane and ostrol gave ostrol
    // ψ1 ≈ 0.72 (truth 0.60), silently.
    let report = analyze_report(&["--polymer-specific-volume", "0.92", "--solvent-molar-volume", "105"]);
    let warnings = report["warnings"].as_array().unwrap();
    assert!(
        warnings.iter().any(|w| w.as_str().unwrap().contains("2 different solvents (mirane, ostrol)")),
        "{warnings:?}"
    );
    // With the table as well, the table's V1 wins for each series and the difference is said.
    let both = analyze_report(&[
        "--polymer-specific-volume",
        "0.92",
        "--solvent-molar-volume",
        "105",
        "--solvents",
        "data/px40-solvents.csv",
    ]);
    let w: Vec<&str> = both["warnings"].as_array().unwrap().iter().map(|w| w.as_str().unwrap()).collect();
    assert!(w.iter().any(|w| w.contains("PX-40 in ostrol") && w.contains("92.0000 mL/mol")), "{w:?}");
    assert!(!w.iter().any(|w| w.contains("different solvents")), "{w:?}");
}

#[test]
fn analyze_and_plan_report_the_same_psi1_for_the_same_series() {
    let report = analyze_report(&["--polymer-specific-volume", "0.92", "--solvents", "data/px40-solvents.csv"]);
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let out = thetaseek()
        .current_dir(root)
        .args(["plan", "data/px40-osmometry.csv", "--solvents", "data/px40-solvents.csv"])
        .args(["--molar-mass", "2e5", "--polymer-specific-volume", "0.92", "--report", "-", "-q"])
        .assert()
        .success()
        .get_output()
        .stdout
        .clone();
    let plan: Value = serde_json::from_slice(&out).unwrap();
    for c in plan["candidates"].as_array().unwrap() {
        let s = report["series"].as_array().unwrap().iter().find(|s| s["name"] == c["series"]).unwrap();
        let (a, b) = (c["psi1"].as_f64().unwrap(), s["theta"]["flory"]["psi1"].as_f64().unwrap());
        assert!((a - b).abs() <= 1e-12 * a.abs(), "{}: plan {a}, analyze {b}", c["series"]);
    }
}

#[test]
fn head_readings_take_each_solvents_density_from_the_table() {
    // The demo's readings as heads of solvent, h = Π/(ρ g), with ρ from the invented solvents
    // table (0.86 and 0.91 g/mL) and g = 9.80665 m/s² (standard gravity, SI brochure): analyzed
    // with --solvents they must give the pressures' θ back.
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let demo = std::fs::read_to_string(root.join("data/px40-osmometry.csv")).unwrap();
    let mut heads = String::from("series,solvent,temperature (C),concentration (g/L),head (cm),pressure sd (Pa)\n");
    for line in demo.lines().filter(|l| !l.starts_with('#')).skip(1) {
        let f: Vec<&str> = line.split(',').collect();
        let rho = if f[1] == "mirane" { 860.0 } else { 910.0 };
        let head_cm = f[4].parse::<f64>().unwrap() / (rho * 9.80665) * 100.0;
        heads.push_str(&format!("{},{},{},{},{head_cm:.15e},{}\n", f[0], f[1], f[2], f[3], f[5]));
    }
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("heads.csv");
    std::fs::write(&path, &heads).unwrap();
    let solvents = root.join("data/px40-solvents.csv");
    let theta_of = |file: &Path, extra: &[&str]| -> Vec<f64> {
        let extra: Vec<&str> = ["--virial", "linear"].iter().chain(extra).copied().collect();
        let v = analyze_file(file, &extra);
        v["series"].as_array().unwrap().iter().map(|s| s["theta"]["theta_k"].as_f64().unwrap()).collect()
    };
    let from_heads = theta_of(&path, &["--solvents", solvents.to_str().unwrap()]);
    let from_pressures = theta_of(&root.join("data/px40-osmometry.csv"), &[]);
    for (a, b) in from_heads.iter().zip(&from_pressures) {
        assert!((a - b).abs() < 1e-9 * b, "θ from heads {a} K, from pressures {b} K");
    }
    // A solvent missing from the table refuses its series with the line and column (exit 3);
    // the other series is analysed.
    std::fs::write(&path, heads.replace("ostrol", "xenol")).unwrap();
    let out =
        thetaseek().arg("analyze").arg(&path).arg("--solvents").arg(&solvents).assert().code(3).get_output().clone();
    let err = String::from_utf8_lossy(&out.stdout);
    assert!(err.contains("no density for 'xenol'") && err.contains("head (cm)") && err.contains("line"), "{err}");
}

#[test]
fn the_plan_figure_carries_the_recommendation_and_the_cautions() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let dir = tempfile::tempdir().unwrap();
    let figure = dir.path().join("plan.svg");
    thetaseek()
        .current_dir(root)
        .args(["plan", "data/px40-osmometry.csv", "--solvents", "data/px40-solvents.csv"])
        .args(["--molar-mass", "2e5", "--polymer-specific-volume", "0.92", "--thermostat", "20:80", "-q", "--figure"])
        .arg(&figure)
        .assert()
        .success();
    let svg = std::fs::read_to_string(&figure).unwrap();
    assert!(svg.contains("Recommended: mirane") && svg.contains("fume hood") && svg.contains("safety data sheet"));
}
