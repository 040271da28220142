//! Several routes to θ for one polymer–solvent pair: critical temperatures of fractions
//! (Shultz–Flory) beside osmometry, compared, combined, and flagged when they disagree.

use assert_cmd::Command;
use serde_json::Value;
use std::path::Path;
use thetaseek::thermo::{segment_ratio, shultz_flory_tc};

/// Critical temperatures of invented PX-40 fractions in mirane from the demo's truth
/// (θ = 307.65 K, ψ1 = 0.35, v̄ = 0.92 mL/g, V1 = 105 mL/mol), shifted by `shift` K.
fn fractions(shift: f64) -> String {
    let mut text = String::from("series,molar mass (g/mol),critical temperature (K),polymer specific volume (mL/g),solvent molar volume (mL/mol)\n");
    for (m, wobble) in [(5.0e4, 0.05), (1.0e5, -0.04), (2.5e5, 0.03), (6.0e5, -0.05), (1.5e6, 0.02)] {
        let tc = shultz_flory_tc(307.65, 0.35, segment_ratio(m * 1e-3, 0.92e-3, 105e-6)).unwrap() + shift + wobble;
        text.push_str(&format!("PX-40 in mirane,{m},{tc:.3},0.92,105\n"));
    }
    text
}

fn run(shift: f64) -> Value {
    let dir = tempfile::tempdir().unwrap();
    let tc = dir.path().join("tc.csv");
    std::fs::write(&tc, fractions(shift)).unwrap();
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("data/px40-osmometry.csv");
    let out = Command::cargo_bin("thetaseek")
        .unwrap()
        .arg("analyze")
        .arg(&demo)
        .arg(&tc)
        .args(["--bootstrap", "0", "--report", "-"])
        .assert()
        .success()
        .get_output()
        .clone();
    assert!(String::from_utf8_lossy(&out.stderr).contains("routes for PX-40 in mirane"));
    serde_json::from_slice(&out.stdout).unwrap()
}

#[test]
fn critical_temperatures_recover_theta_and_psi1_and_agree_with_osmometry() {
    let report = run(0.0);
    let critical = report["series"].as_array().unwrap().iter().find(|s| s["route"] == "critical_temperatures").unwrap();
    let c = &critical["critical"];
    let (theta, se) = (c["theta_k"].as_f64().unwrap(), c["se_k"].as_f64().unwrap());
    assert!((theta - 307.65).abs() < 4.0 * se + 0.05, "θ {theta} ± {se}");
    assert!((c["psi1"].as_f64().unwrap() - 0.35).abs() < 4.0 * c["psi1_se"].as_f64().unwrap() + 0.01);
    let routes = &report["routes"][0];
    assert_eq!(routes["series"], "PX-40 in mirane");
    assert_eq!(routes["routes"].as_array().unwrap().len(), 2);
    assert_eq!(routes["disagree"], false, "{routes}");
}

#[test]
fn a_route_shifted_by_five_kelvin_is_flagged_as_disagreeing() {
    let report = run(5.0);
    let routes = &report["routes"][0];
    assert_eq!(routes["disagree"], true, "{routes}");
    let z = routes["differences"][0]["z"].as_f64().unwrap();
    assert!(z.abs() > 3.0, "{z}");
}

#[test]
fn the_html_report_shows_the_routes_compared() {
    let dir = tempfile::tempdir().unwrap();
    let tc = dir.path().join("tc.csv");
    std::fs::write(&tc, fractions(0.0)).unwrap();
    let html = dir.path().join("r.html");
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("data/px40-osmometry.csv");
    Command::cargo_bin("thetaseek")
        .unwrap()
        .arg("analyze")
        .arg(&demo)
        .arg(&tc)
        .args(["--bootstrap", "0", "-q", "--html"])
        .arg(&html)
        .assert()
        .success();
    let text = std::fs::read_to_string(html).unwrap();
    assert!(
        text.contains("id=\"routes\"") && text.contains("critical_temperatures") && text.contains("inverse variance")
    );
}
