//! A campaign (more than 200 series): the report drops the per-reading arrays unless asked,
//! the file and standard output carry the same bytes, and the terminal shows a digest.

use serde_json::Value;
use std::fmt::Write;

mod common;
use common::thetaseek;

/// `n` simulated series (truth known): Mn 100 kg/mol, A2 = 2e-3 (1 − θ/T) mol m³/kg² with θ
/// spread over 300–309 K, and a small deterministic ripple standing in for noise.
fn campaign(n: usize) -> String {
    let mut text = String::from("series,temperature (K),concentration (g/L),pressure (Pa)\n");
    let mut k = 0.0f64;
    for i in 0..n {
        let theta = 300.0 + (i % 10) as f64;
        for t in [290.0, 300.0, 310.0, 320.0] {
            for c in [1.0, 2.0, 3.0, 4.0, 5.0] {
                k += 1.0;
                let a2 = 2e-3 * (1.0 - theta / t);
                let pressure = c * 8.314_462_618 * t * (1.0 / 100.0 + a2 * c) * (1.0 + 1e-3 * k.sin());
                let _ = writeln!(text, "s{i:04},{t},{c},{pressure:.6}");
            }
        }
    }
    text
}

fn analyze(dir: &std::path::Path, extra: &[&str]) -> std::process::Output {
    let path = dir.join("campaign.csv");
    if !path.exists() {
        std::fs::write(&path, campaign(250)).unwrap();
    }
    thetaseek().current_dir(dir).args(["analyze", "campaign.csv", "--bootstrap", "0"]).args(extra).output().unwrap()
}

#[test]
fn a_campaign_report_holds_the_fits_without_the_readings_unless_asked() {
    let dir = tempfile::tempdir().unwrap();
    let out = analyze(dir.path(), &["--report", "-", "-q"]);
    assert!(out.status.success());
    let report: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(report["settings"]["report_detail"], "fits");
    assert_eq!(report["series"].as_array().unwrap().len(), 250);
    let fit = &report["series"][0]["fits"][0];
    assert!(fit.get("points").is_none() && fit.get("virial_candidates").is_none(), "{fit}");
    assert!(fit["a2_mol_ml_per_g2"].is_number() && fit["mn_se_g_per_mol"].is_number());
    // The same run written to a file (streamed through a buffer) carries the same bytes.
    assert!(analyze(dir.path(), &["--report", "r.json", "-q"]).status.success());
    assert_eq!(std::fs::read(dir.path().join("r.json")).unwrap(), out.stdout);

    let full = analyze(dir.path(), &["--report", "-", "-q", "--report-detail", "full"]);
    let full: Value = serde_json::from_slice(&full.stdout).unwrap();
    assert_eq!(full["settings"]["report_detail"], "full");
    assert_eq!(full["series"][0]["fits"][0]["points"].as_array().unwrap().len(), 5);

    // `next` needs the concentrations behind each fit: a fits-only report is refused, with the way out.
    let next = thetaseek().current_dir(dir.path()).args(["next", "r.json"]).output().unwrap();
    assert_eq!(next.status.code(), Some(65));
    let message = String::from_utf8_lossy(&next.stderr);
    assert!(message.contains("--report-detail full"), "{message}");
}

#[test]
fn a_campaign_prints_a_digest_not_every_series() {
    let dir = tempfile::tempdir().unwrap();
    let out = analyze(dir.path(), &[]);
    assert!(out.status.success());
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.starts_with("250 series; "), "{text}");
    assert!(text.contains("summary: 250 series analysed, 0 refused"), "{text}");
    assert!(text.lines().count() < 40, "{text}");
}

#[test]
fn the_report_written_series_by_series_is_the_report_written_whole() {
    use thetaseek::report::{report_json, series_json, Detail, Report, ReportSettings, ReportStream};
    let bytes = campaign(250).into_bytes();
    let contents = thetaseek::input::read_file("c.csv", 0, &bytes, &Default::default()).unwrap();
    let dataset = thetaseek::dataset::Dataset::new(contents.readings, &[], &[], &[], &[]);
    let settings = thetaseek::analysis::Settings {
        theta: thetaseek::theta::ThetaSettings { bootstrap_replicates: 0, ..Default::default() },
        ..Default::default()
    };
    let results = thetaseek::analysis::analyze(&dataset.series, &[], &settings);
    for detail in [Detail::Fits, Detail::Full] {
        let report_settings = ReportSettings { report_detail: detail, ..ReportSettings::new("auto") };
        let inputs = vec![thetaseek::report::InputFile::new("c.csv", &bytes)];
        let mut report = Report::new(inputs, report_settings, vec!["a warning".into()], &results, &dataset);
        report.compare_routes();
        let mut streamed = Vec::new();
        let mut stream =
            ReportStream::begin(&mut streamed, &report.inputs, &report.settings, &report.warnings).unwrap();
        for s in &report.series {
            stream.push(&mut streamed, &series_json(s)).unwrap();
        }
        stream.finish(&mut streamed, &report.routes).unwrap();
        assert_eq!(String::from_utf8(streamed).unwrap(), String::from_utf8(report_json(&report)).unwrap());
    }
}

#[test]
fn a_campaign_streams_its_series_table_and_still_compares_routes() {
    let dir = tempfile::tempdir().unwrap();
    // Invented critical temperatures of fractions for one series of the campaign.
    std::fs::write(
        dir.path().join("fractions.csv"),
        "series,molar mass (g/mol),critical temperature (K)\ns0003,50000,290.1\ns0003,120000,295.6\ns0003,400000,299.4\ns0003,1500000,301.3\n",
    )
    .unwrap();
    std::fs::write(dir.path().join("campaign.csv"), campaign(250)).unwrap();
    let out = thetaseek()
        .current_dir(dir.path())
        .args(["analyze", "campaign.csv", "fractions.csv", "--bootstrap", "0", "-q"])
        .args(["--polymer-specific-volume", "0.9", "--solvent-molar-volume", "100"])
        .args(["--report", "r.json", "--series-table", "-"])
        .output()
        .unwrap();
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let table = String::from_utf8(out.stdout).unwrap();
    // Header, 250 osmometry series and the critical-temperature one.
    assert_eq!(table.lines().count(), 252, "{table}");
    assert!(table.starts_with("series,status,theta (K)"));
    let report: Value = serde_json::from_slice(&std::fs::read(dir.path().join("r.json")).unwrap()).unwrap();
    let routes = report["routes"].as_array().unwrap();
    assert_eq!(routes.len(), 1, "{routes:?}");
    assert_eq!(routes[0]["series"], "s0003");
    assert_eq!(routes[0]["routes"].as_array().unwrap().len(), 2);
}

#[test]
fn a_campaign_refuses_to_write_over_its_input_before_analysing() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("campaign.csv"), campaign(250)).unwrap();
    let before = std::fs::read(dir.path().join("campaign.csv")).unwrap();
    let out = analyze(dir.path(), &["--table", "campaign.csv", "-q"]);
    assert_eq!(out.status.code(), Some(74), "{}", String::from_utf8_lossy(&out.stderr));
    assert_eq!(std::fs::read(dir.path().join("campaign.csv")).unwrap(), before);
    // Two outputs to standard output are refused as in a small run.
    let out = analyze(dir.path(), &["--report", "-", "--table", "-"]);
    assert_eq!(out.status.code(), Some(2), "{}", String::from_utf8_lossy(&out.stderr));
    let names: Vec<_> = std::fs::read_dir(dir.path()).unwrap().map(|e| e.unwrap().file_name()).collect();
    assert_eq!(names.len(), 1, "nothing but the input: {names:?}");
}
