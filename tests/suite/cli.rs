//! The command line end to end: terminal table, JSON report keys, CSV table, exit codes.

use serde_json::Value;

use crate::common::{demo, json_stdout, thetaseek, write};

const SMALL: &str = "temperature (C),concentration (g/L),pressure (Pa)\n\
    25,2,26.9\n25,4,53.0\n25,6,78.6\n25,8,103.9\n\
    35,2,27.8\n35,4,55.2\n35,6,82.5\n35,8,109.6\n";

#[test]
fn analyze_prints_a_table_of_every_series_and_temperature() {
    let out = thetaseek().arg("analyze").arg(demo()).assert().success().get_output().stdout.clone();
    let text = String::from_utf8(out).unwrap();
    assert!(text.contains("series PX-40 in mirane"), "{text}");
    assert!(text.contains("series PX-40 in ostrol"), "{text}");
    assert!(text.contains("Mn (g/mol)") && text.contains("A2 (mol mL/g²)"));
    // 7 + 6 temperatures, each a row with T in °C and K.
    assert_eq!(text.lines().filter(|l| l.contains(" 298.15 ") || l.contains(" 303.15 ")).count(), 3);
}

#[test]
fn the_json_report_on_stdout_carries_the_stable_keys() {
    let out = thetaseek().args(["analyze", "--report", "-"]).arg(demo()).assert().success().get_output().clone();
    let report: Value = serde_json::from_slice(&out.stdout).unwrap();
    for key in ["schema_version", "tool_version", "inputs", "settings", "warnings", "series"] {
        assert!(report.get(key).is_some(), "missing {key}");
    }
    assert_eq!(report["inputs"][0]["sha256"].as_str().unwrap().len(), 64);
    let series = report["series"].as_array().unwrap();
    assert_eq!(series.len(), 2);
    for s in series {
        for key in ["name", "status", "warnings", "fits"] {
            assert!(s.get(key).is_some(), "series missing {key}");
        }
        for fit in s["fits"].as_array().unwrap() {
            for key in [
                "temperature_k",
                "n_points",
                "virial_form",
                "mn_g_per_mol",
                "mn_se_g_per_mol",
                "a2_mol_ml_per_g2",
                "a2_se_mol_ml_per_g2",
                "a3_mol_ml2_per_g3",
                "dof",
                "reduced_chi2",
                "warnings",
            ] {
                assert!(fit.get(key).is_some(), "fit missing {key}");
            }
            let mn = fit["mn_g_per_mol"].as_f64().unwrap();
            // The demo's invented truth is Mn = 185 000 g/mol (see data/px40-osmometry.csv).
            assert!((mn - 185_000.0).abs() < 5.0 * fit["mn_se_g_per_mol"].as_f64().unwrap(), "Mn {mn}");
        }
    }
    // The terminal table moved to stderr so that stdout is pure JSON.
    assert!(String::from_utf8_lossy(&out.stderr).contains("series PX-40 in mirane"));
}

#[test]
fn the_csv_table_has_units_in_its_headers_and_one_row_per_temperature() {
    let dir = tempfile::tempdir().unwrap();
    let table = dir.path().join("fits.csv");
    thetaseek().arg("analyze").arg(demo()).arg("--table").arg(&table).arg("--quiet").assert().success().stdout("");
    let text = std::fs::read_to_string(&table).unwrap();
    let header = text.lines().next().unwrap();
    for column in
        ["temperature (K)", "Mn (g/mol)", "Mn se (g/mol)", "A2 (mol mL/g2)", "A2 se (mol mL/g2)", "A3 (mol mL2/g3)"]
    {
        assert!(header.contains(column), "{header}");
    }
    assert_eq!(text.lines().count(), 1 + 7 + 6);
}

#[test]
fn an_output_path_equal_to_an_input_is_refused_with_74_and_the_input_is_untouched() {
    let dir = tempfile::tempdir().unwrap();
    let input = write(dir.path(), "run.csv", SMALL);
    thetaseek().arg("analyze").arg(&input).arg("--report").arg(&input).assert().code(74);
    assert_eq!(std::fs::read_to_string(&input).unwrap(), SMALL);
    // Through another spelling of the same path, too.
    let other = dir.path().join(".").join("run.csv");
    thetaseek().arg("analyze").arg(&input).arg("--table").arg(&other).assert().code(74);
    assert_eq!(std::fs::read_to_string(&input).unwrap(), SMALL);
}

#[test]
fn an_unwritable_destination_exits_74_and_writes_nothing_else() {
    let dir = tempfile::tempdir().unwrap();
    let input = write(dir.path(), "run.csv", SMALL);
    let missing = dir.path().join("no-such-folder").join("r.json");
    thetaseek().arg("analyze").arg(&input).arg("--report").arg(&missing).assert().code(74);
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 1);
}

#[test]
fn a_series_without_a_series_column_is_named_after_its_file_and_files_combine() {
    let dir = tempfile::tempdir().unwrap();
    let a = write(dir.path(), "batch-7.csv", SMALL);
    let b = write(dir.path(), "more.csv", &SMALL.replace("25,", "45,").replace("35,", "55,"));
    let out =
        thetaseek().arg("analyze").arg(&a).arg(&b).args(["--report", "-"]).assert().success().get_output().clone();
    let report: Value = serde_json::from_slice(&out.stdout).unwrap();
    let names: Vec<&str> = report["series"].as_array().unwrap().iter().map(|s| s["name"].as_str().unwrap()).collect();
    assert_eq!(names, ["batch-7", "more"]);
    assert_eq!(report["inputs"].as_array().unwrap().len(), 2);
}

#[test]
fn a_temperature_with_too_few_concentrations_does_not_stop_the_other_series() {
    let dir = tempfile::tempdir().unwrap();
    let text = "series,temperature (C),concentration (g/L),pressure (Pa)\n\
        good,25,2,26.9\ngood,25,4,53.0\ngood,25,6,78.6\ngood,25,8,103.9\n\
        thin,25,2,26.9\nthin,25,4,53.0\n";
    let input = write(dir.path(), "mixed.csv", text);
    let out = thetaseek().arg("analyze").arg(&input).args(["--report", "-"]).assert().success().get_output().clone();
    let report: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(report["series"][0]["status"], "ok");
    assert_eq!(report["series"][1]["status"], "refused");
    assert!(report["series"][1]["reason"].as_str().unwrap().contains("2 distinct concentration"));
}

#[test]
fn when_no_series_can_be_analysed_the_exit_code_is_65_and_nothing_is_written() {
    let dir = tempfile::tempdir().unwrap();
    let input =
        write(dir.path(), "thin.csv", "temperature (C),concentration (g/L),pressure (Pa)\n25,2,26.9\n25,4,53.0\n");
    let report = dir.path().join("r.json");
    let assert = thetaseek().arg("analyze").arg(&input).arg("--report").arg(&report).assert().code(65);
    assert!(String::from_utf8_lossy(&assert.get_output().stderr).contains("no series could be analysed"));
    assert!(!report.exists());
}

#[test]
fn a_unit_missing_from_the_header_can_be_given_by_a_flag_but_not_contradicted() {
    let dir = tempfile::tempdir().unwrap();
    let input = write(dir.path(), "bare.csv", &SMALL.replace("temperature (C)", "temperature"));
    thetaseek().arg("analyze").arg(&input).assert().code(65);
    thetaseek().arg("analyze").arg(&input).args(["--temperature-unit", "C"]).assert().success();
    let with_unit = write(dir.path(), "unit.csv", SMALL);
    thetaseek().arg("analyze").arg(&with_unit).args(["--temperature-unit", "K"]).assert().code(65);
}

#[test]
fn usage_errors_exit_with_2() {
    thetaseek().args(["analyze"]).assert().code(2);
    thetaseek().arg("analyze").arg(demo()).args(["--virial", "cubic"]).assert().code(2);
    thetaseek().arg("analyze").arg(demo()).args(["--pressure-unit", "furlong"]).assert().code(2);
}

#[test]
fn every_series_carries_a_theta_object_with_the_stable_keys() {
    let report = json_stdout(thetaseek().arg("analyze").arg(demo()).args([
        "--report",
        "-",
        "--bootstrap",
        "100",
        "--polymer-specific-volume",
        "0.92",
        "--solvent-molar-volume",
        "105",
    ]));
    for s in report["series"].as_array().unwrap() {
        let t = &s["theta"];
        for key in [
            "theta_k",
            "theta_c",
            "se_k",
            "ci_low_k",
            "ci_high_k",
            "ci_kind",
            "ci_method",
            "confidence",
            "crossing",
            "model",
            "models",
            "fieller",
            "bootstrap",
            "mn_consistency",
            "flory",
        ] {
            assert!(t.get(key).is_some(), "theta missing {key}");
        }
        assert_eq!(t["crossing"], "bracketed");
        assert_eq!(t["bootstrap"]["replicates"], 100);
        for key in ["psi1", "kappa1_at_theta"] {
            assert!(t["flory"].get(key).is_some(), "flory missing {key}");
        }
    }
    // The demo's invented truth: θ(mirane) = 34.5 °C (data/px40-osmometry.csv header).
    let t = &report["series"][0]["theta"];
    let (lo, hi) = (t["ci_low_k"].as_f64().unwrap(), t["ci_high_k"].as_f64().unwrap());
    assert!(lo < 307.65 && 307.65 < hi, "{lo}–{hi}");
}

#[test]
fn a_table_of_a2_per_temperature_goes_straight_into_the_theta_machinery() {
    let dir = tempfile::tempdir().unwrap();
    // A2 = 2.8e-3 (1 − 305/T) mol mL/g², rounded; invented values.
    let text = "series,temperature (K),a2 (mol mL/g2),a2 sd (mol mL/g2)\n\
        lit,290,-1.45e-4,1e-5\nlit,298,-6.5e-5,1e-5\nlit,306,9e-6,1e-5\nlit,314,8.1e-5,1e-5\nlit,322,1.46e-4,1e-5\n";
    let input = write(dir.path(), "a2.csv", text);
    let out =
        thetaseek().arg("analyze").arg(&input).args(["--report", "-"]).assert().success().get_output().stdout.clone();
    let report: Value = serde_json::from_slice(&out).unwrap();
    let theta = report["series"][0]["theta"]["theta_k"].as_f64().unwrap();
    assert!((theta - 305.0).abs() < 1.0, "{theta}");
    assert_eq!(report["series"][0]["fits"].as_array().unwrap().len(), 0);
}

#[test]
fn a_table_of_chi_with_volumes_in_columns_gives_psi1_directly() {
    let dir = tempfile::tempdir().unwrap();
    // χ = 1/2 − 0.3 (1 − 300/T): ψ1 = 0.3, θ = 300 K exactly (invented).
    let mut text =
        String::from("series,temperature (C),chi,polymer specific volume (mL/g),solvent molar volume (mL/mol)\n");
    for t_c in [10.0, 20.0, 30.0, 40.0, 50.0] {
        let t = t_c + 273.15;
        text.push_str(&format!("q,{t_c},{},0.9,100\n", 0.5 - 0.3 * (1.0 - 300.0 / t)));
    }
    let input = write(dir.path(), "chi.csv", &text);
    let out =
        thetaseek().arg("analyze").arg(&input).args(["--report", "-"]).assert().success().get_output().stdout.clone();
    let report: Value = serde_json::from_slice(&out).unwrap();
    let t = &report["series"][0]["theta"];
    assert!((t["theta_k"].as_f64().unwrap() - 300.0).abs() < 1e-6);
    assert!((t["flory"]["psi1"].as_f64().unwrap() - 0.3).abs() < 1e-9);
    // v̄ and V1 from the columns turn the slope into dA2/dT: (0.81/100) × 0.3 / 300 mol mL/(g² K).
    let slope = t["stability"]["da2_dt_at_theta_mol_ml_per_g2_k"].as_f64().unwrap();
    assert!((slope - 0.81e-2 * 0.3 / 300.0).abs() < 1e-12, "{slope}");
}

#[test]
fn figures_go_into_the_folder_named_one_svg_per_series_and_kind() {
    let dir = tempfile::tempdir().unwrap();
    let figures = dir.path().join("figs");
    thetaseek()
        .arg("analyze")
        .arg(demo())
        .args(["--bootstrap", "0", "-q", "--figures"])
        .arg(&figures)
        .assert()
        .success();
    let mut names: Vec<String> =
        std::fs::read_dir(&figures).unwrap().map(|e| e.unwrap().file_name().to_string_lossy().into_owned()).collect();
    names.sort();
    assert_eq!(names.len(), 2 * 4 + 1, "{names:?}");
    assert!(names.iter().all(|n| n.ends_with(".svg") && !n.starts_with('.')));
    assert!(names.contains(&"px-40-in-mirane-reduced-pressure.svg".to_string()));
}

#[test]
fn a_solvent_column_names_the_series_and_reaches_the_report() {
    let dir = tempfile::tempdir().unwrap();
    let input = write(
        dir.path(),
        "solv.csv",
        &SMALL
            .replace("temperature (C)", "solvent,temperature (C)")
            .replace("\n2", "\nmirane,2")
            .replace("\n3", "\nmirane,3"),
    );
    let report = json_stdout(thetaseek().arg("analyze").arg(&input).args(["--report", "-", "--bootstrap", "0"]));
    assert_eq!(report["series"][0]["name"], "mirane");
    assert_eq!(report["series"][0]["solvent"], "mirane");
}

#[test]
fn the_series_table_has_one_row_per_series_and_can_list_only_those_needing_attention() {
    let dir = tempfile::tempdir().unwrap();
    let text = "series,temperature (C),concentration (g/L),pressure (Pa)\n\
        good,25,2,26.9\ngood,25,4,53.0\ngood,25,6,78.6\ngood,25,8,103.9\n\
        good,35,2,27.8\ngood,35,4,55.2\ngood,35,6,82.5\ngood,35,8,109.6\n\
        thin,25,2,26.9\nthin,25,4,53.0\n";
    let input = write(dir.path(), "two.csv", text);
    let all = dir.path().join("all.csv");
    let some = dir.path().join("some.csv");
    let out = thetaseek()
        .arg("analyze")
        .arg(&input)
        .args(["--bootstrap", "0", "--series-table"])
        .arg(&all)
        .assert()
        .success();
    let stdout = String::from_utf8_lossy(&out.get_output().stdout).to_string();
    assert!(stdout.contains("summary: 1 series analysed, 1 refused"), "{stdout}");
    thetaseek()
        .arg("analyze")
        .arg(&input)
        .args(["--bootstrap", "0", "-q", "--needs-attention", "--series-table"])
        .arg(&some)
        .assert()
        .success();
    let all = std::fs::read_to_string(all).unwrap();
    assert!(all.lines().next().unwrap().contains("theta (K)") && all.contains("crossing"));
    assert_eq!(all.lines().count(), 3);
    let some = std::fs::read_to_string(some).unwrap();
    assert!(some.contains("thin"));
    // The filter drops a series that needs no look: the demo's mirane series is bracketed, has
    // no warnings and every temperature fitted.
    let both = dir.path().join("both.csv");
    thetaseek()
        .arg("analyze")
        .arg(demo())
        .arg(&input)
        .args(["--bootstrap", "0", "-q", "--needs-attention", "--series-table"])
        .arg(&both)
        .assert()
        .success();
    let both = std::fs::read_to_string(both).unwrap();
    assert!(both.contains("thin") && !both.contains("PX-40 in mirane"), "{both}");
}

/// Issue #28, item 10: an input that is a folder exited 65 (the README promises 74 for files
/// that cannot be read); CR-only line ends read as "the file is empty"; `--max-input-mb 0`
/// said "0 MB, above the limit of 0 MB".
#[test]
fn small_input_failures_say_what_they_are() {
    let dir = tempfile::tempdir().unwrap();
    let folder = dir.path().join("data");
    std::fs::create_dir(&folder).unwrap();
    let out = thetaseek().arg("analyze").arg(&folder).assert().code(74).get_output().clone();
    assert!(String::from_utf8_lossy(&out.stderr).contains("it is a folder, not a file"));

    let cr = dir.path().join("cr.csv");
    std::fs::write(&cr, "series,temperature (C),concentration (g/L),pressure (Pa)\ra,20,1,10\ra,20,2,20\ra,20,3,30\r")
        .unwrap();
    let out = thetaseek().arg("analyze").arg(&cr).assert().code(65).get_output().clone();
    assert!(String::from_utf8_lossy(&out.stderr).contains("carriage return alone"));

    let small = dir.path().join("small.csv");
    std::fs::write(&small, "series,temperature (C),concentration (g/L),pressure (Pa)\na,20,1,10\n").unwrap();
    let out =
        thetaseek().arg("analyze").arg(&small).args(["--max-input-mb", "0"]).assert().code(65).get_output().clone();
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("the file is 67 bytes, above the limit of 0 MB"), "{err}");

    // UTF-16 without a byte-order mark got the decimal-comma hint.
    let utf16 = dir.path().join("utf16.csv");
    let text = std::fs::read_to_string(demo()).unwrap();
    std::fs::write(&utf16, text.encode_utf16().flat_map(u16::to_le_bytes).collect::<Vec<u8>>()).unwrap();
    let out = thetaseek().arg("analyze").arg(&utf16).assert().code(65).get_output().clone();
    assert!(String::from_utf8_lossy(&out.stderr).contains("looks like UTF-16"));
}

/// Every series ends with its answer in words, and a weak answer says what to measure next.
#[test]
fn the_terminal_says_the_answer_in_words() {
    let out = thetaseek()
        .arg("analyze")
        .arg(demo())
        .args(["--polymer-specific-volume", "0.92", "--solvent-molar-volume", "105", "--bootstrap", "0"])
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    // The demo's mirane series (truth θ = 34.5 °C, ψ1 = 0.35): poor below θ, good above it.
    let words = text.lines().find(|l| l.contains("in words: θ = 34.")).unwrap_or_else(|| panic!("{text}"));
    assert!(words.contains("between the measured temperatures") && words.contains("ψ1 = 0.3"), "{words}");
    assert!(words.contains("poor at 20, 25, 30 °C") && words.contains("good at 40, 45, 50 °C"), "{words}");
    assert!(!words.contains("Next:"), "a bracketed θ with a bounded interval needs no next step: {words}");
    // Only the mirane readings above θ: θ extrapolated, and the line says where to measure.
    let demo_text = std::fs::read_to_string(demo()).unwrap();
    let above: String = demo_text
        .lines()
        .filter(|l| {
            l.starts_with("series")
                || (l.starts_with("PX-40 in mirane") && l.split(',').nth(2).is_some_and(|t| t >= "40"))
        })
        .map(|l| format!("{l}\n"))
        .collect();
    let dir = tempfile::tempdir().unwrap();
    let file = write(dir.path(), "above.csv", &above);
    let out = thetaseek().arg("analyze").arg(&file).args(["--bootstrap", "0"]).output().unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    let words = text.lines().find(|l| l.contains("in words:")).unwrap_or_else(|| panic!("{text}"));
    assert!(words.contains("Next: θ lies outside the data"), "{words}");
}
