//! A campaign of hundreds of series: the outputs have the shape the user asks for, the same as
//! for one series (`--report-detail full`, the default; `fits` drops the per-reading arrays,
//! writes the JSON on one line and shows a digest in the terminal); the file and standard
//! output carry the same bytes.

use serde_json::Value;
use std::fmt::Write;
use thetaseek::units::GAS_CONSTANT_J_PER_MOL_K;

use crate::common::thetaseek;

/// `n` simulated series (truth known): Mn 100 kg/mol, A2 = 2e-3 (1 − θ/T) mol m³/kg² with θ
/// spread over 300–309 K, and a small deterministic ripple standing in for noise.
fn campaign(n: usize) -> String {
    let mut text = String::from(HEADER);
    for i in 0..n {
        text.push_str(&series_rows(i, &[290.0, 300.0, 310.0, 320.0], 5));
    }
    text
}

const HEADER: &str = "series,temperature (K),concentration (g/L),pressure (Pa)\n";

/// Rows of series `i` at `temperatures`, concentrations 1, 2, … `concentrations` g/L.
fn series_rows(i: usize, temperatures: &[f64], concentrations: usize) -> String {
    let mut text = String::new();
    let theta = 300.0 + (i % 10) as f64;
    for (j, &t) in temperatures.iter().enumerate() {
        for n in 1..=concentrations {
            let c = n as f64 * 5.0 / concentrations as f64;
            let k = (i * 20 + j * concentrations + n) as f64;
            let a2 = 2e-3 * (1.0 - theta / t);
            let pressure = c * GAS_CONSTANT_J_PER_MOL_K * t * (1.0 / 100.0 + a2 * c) * (1.0 + 1e-3 * k.sin());
            let _ = writeln!(text, "s{i:04},{t},{c},{pressure:.6}");
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
fn a_campaign_report_holds_the_fits_without_the_readings_when_asked() {
    let dir = tempfile::tempdir().unwrap();
    let out = analyze(dir.path(), &["--report", "-", "-q", "--report-detail", "fits"]);
    assert!(out.status.success());
    let report: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(report["settings"]["report_detail"], "fits");
    assert_eq!(report["series"].as_array().unwrap().len(), 250);
    let fit = &report["series"][0]["fits"][0];
    assert!(fit.get("points").is_none() && fit.get("virial_candidates").is_none(), "{fit}");
    assert!(fit["a2_mol_ml_per_g2"].is_number() && fit["mn_se_g_per_mol"].is_number());
    // The same run written to a file (streamed through a buffer) carries the same bytes.
    assert!(analyze(dir.path(), &["--report", "r.json", "-q", "--report-detail", "fits"]).status.success());
    assert_eq!(std::fs::read(dir.path().join("r.json")).unwrap(), out.stdout);

    // The default is the same shape as for one series: every reading.
    let full = analyze(dir.path(), &["--report", "-", "-q"]);
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
fn a_campaign_prints_a_digest_when_asked_and_every_series_by_default() {
    let dir = tempfile::tempdir().unwrap();
    let every = analyze(dir.path(), &[]);
    let text = String::from_utf8_lossy(&every.stdout);
    assert_eq!(text.matches("\nseries s0").count() + usize::from(text.starts_with("series s0")), 250, "{text}");
    let out = analyze(dir.path(), &["--report-detail", "fits"]);
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
    let dataset = thetaseek::dataset::Dataset::new(contents.readings, &[], &[], Default::default(), &[], &[]);
    let settings = thetaseek::analysis::Settings {
        theta: thetaseek::theta::ThetaSettings { bootstrap_replicates: 0, ..Default::default() },
        ..Default::default()
    };
    let run = thetaseek::analysis::analyze_run(&dataset, &settings, &());
    let results = run.series;
    for detail in [Detail::Fits, Detail::Full] {
        let report_settings =
            ReportSettings { report_detail: detail, ..ReportSettings::new(thetaseek::virial::FormChoice::Auto) };
        let inputs = vec![thetaseek::report::InputFile::new("c.csv", &bytes)];
        let mut report = Report::new(inputs, report_settings, vec!["a warning".into()], &results, &dataset);
        report.routes = run.routes.clone();
        let mut streamed = Vec::new();
        let mut stream = ReportStream::begin(&mut streamed, &report.inputs, &report.settings).unwrap();
        for s in &report.series {
            stream.push(&mut streamed, &series_json(s, detail)).unwrap();
        }
        stream.finish(&mut streamed, &report.routes, &report.warnings).unwrap();
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

/// Runs `analyze` on `files` in `dir` with every output, and gives the report (without its
/// `inputs`), the two tables and the terminal text.
fn outputs_of(dir: &std::path::Path, files: &[&str], tag: &str) -> (Value, Value, Vec<u8>, Vec<u8>, Vec<u8>) {
    let (r, t, s) = (format!("r-{tag}.json"), format!("t-{tag}.csv"), format!("s-{tag}.csv"));
    let out = thetaseek()
        .current_dir(dir)
        .arg("analyze")
        .args(files)
        .args(["--bootstrap", "3", "--report", &r, "--table", &t, "--series-table", &s])
        .output()
        .unwrap();
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let read = |name: &str| std::fs::read(dir.join(name)).unwrap();
    let mut report: Value = serde_json::from_slice(&read(&r)).unwrap();
    let inputs = report.as_object_mut().unwrap().remove("inputs").unwrap();
    (report, inputs, read(&t), read(&s), out.stdout)
}

#[test]
fn a_streamed_campaign_keeps_each_series_solvent_and_volumes() {
    // The same campaign with a solvent and v̄, V1 per series (invented): they reach the report,
    // and with the volumes the Flory parameters, as in the usual path.
    let dir = tempfile::tempdir().unwrap();
    let header =
        "series,solvent,temperature (K),concentration (g/L),pressure (Pa),specific volume (mL/g),molar volume (mL/mol)";
    let mut text = format!("{header}\n");
    for i in 0..1500 {
        let solvent = ["mirane", "ostrol", "quellan"][i % 3];
        for row in series_rows(i, &[290.0, 300.0, 310.0, 320.0], 5).lines() {
            let (name, rest) = row.split_once(',').unwrap();
            let _ = writeln!(text, "{name},{solvent},{rest},0.9{},100", i % 7);
        }
    }
    std::fs::write(dir.path().join("big.csv"), &text).unwrap();
    let lines: Vec<&str> = text.lines().skip(1).collect();
    let split = 750 * 20;
    std::fs::write(dir.path().join("part1.csv"), format!("{header}\n{}\n", lines[..split].join("\n"))).unwrap();
    let padding = "#\n".repeat(split);
    std::fs::write(dir.path().join("part2.csv"), format!("{padding}{header}\n{}\n", lines[split..].join("\n")))
        .unwrap();
    let (streamed, _, table, series_table, terminal) = outputs_of(dir.path(), &["big.csv"], "a");
    let usual = outputs_of(dir.path(), &["part1.csv", "part2.csv"], "b");
    assert_eq!(streamed, usual.0);
    assert_eq!((table, series_table, terminal), (usual.2, usual.3, usual.4));
    let last = &streamed["series"][1499];
    assert_eq!(last["solvent"], "quellan");
    assert!(last["theta"]["flory"]["psi1"].is_number(), "{}", last["theta"]["flory"]);
}

/// Writes `text` whole as `big.csv`, and split after `rows` data rows as `part1.csv` and
/// `part2.csv` (each with the header): the split pair is read the usual way, after each other.
/// Comment lines before part2's header keep every reading on the line it has in `big.csv`.
fn big_and_split(dir: &std::path::Path, text: &str, rows: usize) {
    std::fs::write(dir.join("big.csv"), text).unwrap();
    let lines: Vec<&str> = text.lines().skip(1).collect();
    std::fs::write(dir.join("part1.csv"), format!("{HEADER}{}\n", lines[..rows].join("\n"))).unwrap();
    let padding = "#\n".repeat(rows);
    std::fs::write(dir.join("part2.csv"), format!("{padding}{HEADER}{}\n", lines[rows..].join("\n"))).unwrap();
}

#[test]
fn a_large_file_analysed_as_it_is_read_gives_what_the_usual_path_gives() {
    // 2 500 series, 1.1 MB: read in blocks, each block's series analysed while the next is read.
    let dir = tempfile::tempdir().unwrap();
    let text = campaign(2500);
    assert!(text.len() > thetaseek::input::BLOCK_BYTES * 2);
    big_and_split(dir.path(), &text, 1250 * 20);
    let (streamed, inputs, table, series_table, terminal) = outputs_of(dir.path(), &["big.csv"], "a");
    let usual = outputs_of(dir.path(), &["part1.csv", "part2.csv"], "b");
    assert_eq!(streamed, usual.0);
    assert_eq!((table, series_table, terminal), (usual.2, usual.3, usual.4));
    assert_eq!(streamed["series"].as_array().unwrap().len(), 2500);
    // The file's SHA-256, known only at its end, is written into the report's opening.
    let digest = thetaseek::report::InputFile::new("big.csv", text.as_bytes()).sha256;
    assert_eq!(inputs, serde_json::json!([{ "path": "big.csv", "sha256": digest }]));
    // To standard output, held until the end, the report has the same bytes.
    let out = thetaseek()
        .current_dir(dir.path())
        .args(["analyze", "big.csv", "--bootstrap", "3", "--report", "-", "-q"])
        .output()
        .unwrap();
    assert_eq!(out.stdout, std::fs::read(dir.path().join("r-a.json")).unwrap());
}

#[test]
fn a_series_that_comes_back_later_in_a_large_file_is_read_again_the_usual_way() {
    let dir = tempfile::tempdir().unwrap();
    let mut text = campaign(1500);
    // Series s0000 again at the very end, at a temperature of its own.
    text.push_str(&series_rows(0, &[330.0], 5));
    big_and_split(dir.path(), &text, 750 * 20);
    let (streamed, _, table, series_table, terminal) = outputs_of(dir.path(), &["big.csv"], "a");
    let usual = outputs_of(dir.path(), &["part1.csv", "part2.csv"], "b");
    assert_eq!(streamed, usual.0);
    assert_eq!((table, series_table, terminal), (usual.2, usual.3, usual.4));
    assert_eq!(streamed["series"][0]["fits"].as_array().unwrap().len(), 5);
    let leftovers: Vec<_> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.ends_with(".part"))
        .collect();
    assert!(leftovers.is_empty(), "{leftovers:?}");
}

#[test]
fn a_large_file_of_few_series_is_reported_in_full() {
    // 150 series of 160 readings: more than a block, too few series for a campaign.
    let dir = tempfile::tempdir().unwrap();
    let mut text = String::from(HEADER);
    for i in 0..150 {
        text.push_str(&series_rows(i, &[290.0, 300.0, 310.0, 320.0], 40));
    }
    assert!(text.len() > thetaseek::input::BLOCK_BYTES);
    big_and_split(dir.path(), &text, 75 * 160);
    let (streamed, _, table, series_table, terminal) = outputs_of(dir.path(), &["big.csv"], "a");
    let usual = outputs_of(dir.path(), &["part1.csv", "part2.csv"], "b");
    assert_eq!(streamed["settings"]["report_detail"], "full");
    assert_eq!(streamed, usual.0);
    assert_eq!((table, series_table, terminal), (usual.2, usual.3, usual.4));
}

#[test]
fn with_strict_a_bad_row_late_in_a_large_file_fails_the_run_and_writes_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let mut text = campaign(2500);
    text.push_str("s9999,300,1,twelve\n");
    let line = text.lines().count();
    std::fs::write(dir.path().join("big.csv"), &text).unwrap();
    // Without --strict the bad row costs its series only (tests/lab_data.rs): exit 3.
    let args = ["analyze", "big.csv", "--bootstrap", "0", "--report", "r.json", "--table", "t.csv", "-q"];
    let out = thetaseek().current_dir(dir.path()).args(args).output().unwrap();
    assert_eq!(out.status.code(), Some(3), "{}", String::from_utf8_lossy(&out.stderr));
    for name in ["r.json", "t.csv"] {
        std::fs::remove_file(dir.path().join(name)).unwrap();
    }
    let out = thetaseek().current_dir(dir.path()).args(args).arg("--strict").output().unwrap();
    assert_eq!(out.status.code(), Some(65), "{}", String::from_utf8_lossy(&out.stderr));
    let message = String::from_utf8_lossy(&out.stderr);
    assert!(message.contains(&format!("line {line}")) && message.contains("twelve"), "{message}");
    let names: Vec<_> = std::fs::read_dir(dir.path()).unwrap().map(|e| e.unwrap().file_name()).collect();
    assert_eq!(names, vec![std::ffi::OsString::from("big.csv")], "nothing but the input");
}

#[test]
fn a_streamed_campaign_warns_when_one_molar_volume_covers_several_solvents() {
    // Issue #23 on the streamed path: 1 500 series in two solvents, one --solvent-molar-volume.
    let dir = tempfile::tempdir().unwrap();
    let mut text = String::from("series,solvent,temperature (K),concentration (g/L),pressure (Pa)\n");
    for i in 0..1500 {
        for row in series_rows(i, &[290.0, 300.0, 310.0, 320.0], 5).lines() {
            let (name, rest) = row.split_once(',').unwrap();
            let _ = writeln!(text, "{name},{},{rest}", ["mirane", "ostrol"][i % 2]);
        }
    }
    assert!(text.len() > thetaseek::input::BLOCK_BYTES * 2);
    std::fs::write(dir.path().join("big.csv"), &text).unwrap();
    let out = thetaseek()
        .current_dir(dir.path())
        .args(["analyze", "big.csv", "--polymer-specific-volume", "0.9", "--solvent-molar-volume", "100"])
        .args(["--report", "-", "-q"])
        .output()
        .unwrap();
    assert!(out.status.success());
    let report: Value = serde_json::from_slice(&out.stdout).unwrap();
    let warnings = report["warnings"].as_array().unwrap();
    assert!(
        warnings.iter().any(|w| w.as_str().unwrap().contains("2 different solvents (mirane, ostrol)")),
        "{warnings:?}"
    );
}

/// A series whose rows come back after the file has moved past it (here the first row of a
/// large file moved to its end) is analysed with all its rows, from a file or from a pipe: the
/// file is never read twice, so standard input works too (it was refused as empty before).
#[test]
fn a_series_that_comes_back_late_is_whole_even_through_a_pipe() {
    let text = campaign(1200);
    assert!(text.len() > 256 << 10, "the file must span several blocks");
    let (header, rest) = text.split_once('\n').unwrap();
    let (first, others) = rest.split_once('\n').unwrap();
    let unsorted = format!("{header}\n{others}{first}\n");
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("sorted.csv"), &text).unwrap();
    std::fs::write(dir.path().join("unsorted.csv"), &unsorted).unwrap();
    let run = |file: &str, stdin: Option<&str>| -> Value {
        let mut command = thetaseek();
        command.current_dir(dir.path()).args(["analyze", file, "--bootstrap", "0", "--report", "-", "-q"]);
        command.args(["--report-detail", "fits"]);
        let out = match stdin {
            Some(bytes) => command.write_stdin(bytes.to_string()).output().unwrap(),
            None => command.output().unwrap(),
        };
        assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
        serde_json::from_slice(&out.stdout).unwrap()
    };
    let sorted = run("sorted.csv", None);
    let from_file = run("unsorted.csv", None);
    let from_pipe = run("/dev/stdin", Some(&unsorted));
    assert_eq!(from_file["series"], from_pipe["series"]);
    assert_eq!(from_file["inputs"][0]["sha256"], from_pipe["inputs"][0]["sha256"]);
    // The same series, every one with all its readings, as in the sorted file.
    let by_name = |r: &Value| -> Vec<(String, usize)> {
        let mut v: Vec<(String, usize)> = r["series"]
            .as_array()
            .unwrap()
            .iter()
            .map(|s| {
                let n = s["fits"].as_array().unwrap().iter().map(|f| f["n_points"].as_u64().unwrap() as usize).sum();
                (s["name"].as_str().unwrap().to_string(), n)
            })
            .collect();
        v.sort();
        v
    };
    assert_eq!(by_name(&from_file), by_name(&sorted));
    // Without a writable temporary folder the copy cannot be kept: the unsorted file is refused
    // with the way out, the sorted one is analysed as usual.
    for (file, code) in [("unsorted.csv", 65), ("sorted.csv", 0)] {
        let out = thetaseek()
            .current_dir(dir.path())
            .env("TMPDIR", dir.path().join("no-such-folder"))
            .args(["analyze", file, "--bootstrap", "0", "-q", "--report-detail", "fits"])
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(code), "{file}: {}", String::from_utf8_lossy(&out.stderr));
        if code != 0 {
            assert!(String::from_utf8_lossy(&out.stderr).contains("sort the file by series"));
        }
    }
}
