//! Hostile conditions end to end: determinism across runs and thread counts, an interrupt
//! mid-run, resource limits, and large or odd files that must finish or be refused cleanly.

use crate::common::{demo, thetaseek};

#[test]
fn the_same_input_and_seed_give_byte_identical_reports_on_one_thread_or_two() {
    let run = |threads: &str| {
        thetaseek()
            .env("RAYON_NUM_THREADS", threads)
            .arg("analyze")
            .arg(demo())
            .args(["--bootstrap", "300", "--seed", "9", "--report", "-", "-q"])
            .assert()
            .success()
            .get_output()
            .stdout
            .clone()
    };
    let one = run("1");
    assert_eq!(one, run("2"));
    assert_eq!(one, run("1"));
}

#[cfg(unix)]
#[test]
fn an_interrupt_leaves_no_partial_or_temporary_file() {
    let dir = tempfile::tempdir().unwrap();
    let report = dir.path().join("r.json");
    let mut child = std::process::Command::new(assert_cmd::cargo::cargo_bin("thetaseek"))
        .arg("analyze")
        .arg(demo())
        .args(["--bootstrap", "100000", "-q", "--report"])
        .arg(&report)
        .arg("--figures")
        .arg(dir.path().join("figs"))
        .spawn()
        .unwrap();
    std::thread::sleep(std::time::Duration::from_millis(700));
    let _ = std::process::Command::new("kill").args(["-INT", &child.id().to_string()]).status();
    let status = child.wait().unwrap();
    assert_eq!(status.code(), Some(130), "{status:?}");
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 0);
}

#[test]
fn a_bootstrap_above_the_limit_is_refused_until_the_limit_is_raised() {
    let a = thetaseek().arg("analyze").arg(demo()).args(["--bootstrap", "1000000"]).assert().code(2);
    assert!(String::from_utf8_lossy(&a.get_output().stderr).contains("--max-bootstrap"));
}

#[test]
fn a_file_above_the_size_limit_is_refused_before_it_is_read() {
    let a = thetaseek().arg("analyze").arg(demo()).args(["--max-input-mb", "0"]).assert().code(65);
    assert!(String::from_utf8_lossy(&a.get_output().stderr).contains("--max-input-mb"));
}

#[test]
fn a_ten_megabyte_line_is_refused_with_its_line_number() {
    let dir = tempfile::tempdir().unwrap();
    let mut text = String::from("series,temperature (C),concentration (g/L),pressure (Pa)\na,25,2,26.9\n");
    text.push_str(&format!("a,25,4,{}\n", "9".repeat(10 << 20)));
    let path = dir.path().join("long.csv");
    std::fs::write(&path, text).unwrap();
    let a = thetaseek().arg("analyze").arg(&path).assert().code(65);
    let stderr = String::from_utf8_lossy(&a.get_output().stderr).to_string();
    // 10⁷ nines overflow to infinity: refused as not finite, on line 3.
    assert!(stderr.contains("line 3") && stderr.contains("pressure (Pa)"), "{}", &stderr[..stderr.len().min(300)]);
}

#[test]
fn a_hundred_thousand_one_point_series_are_each_refused_and_summarised() {
    let dir = tempfile::tempdir().unwrap();
    let mut text = String::from("series,temperature (C),concentration (g/L),pressure (Pa)\n");
    for i in 0..100_000 {
        text.push_str(&format!("s{i},25,2,26.9\n"));
    }
    let path = dir.path().join("many.csv");
    std::fs::write(&path, text).unwrap();
    let a = thetaseek().arg("analyze").arg(&path).args(["-q", "--bootstrap", "0"]).assert().code(65);
    let stderr = String::from_utf8_lossy(&a.get_output().stderr).to_string();
    let last = stderr.lines().last().unwrap_or("");
    assert!(last.contains("100000 series") && last.len() < 400, "{last}");
}

#[test]
fn a_million_rows_are_read_and_analysed() {
    // 2000 series × 5 temperatures × 100 readings at 5 concentrations: 10⁶ rows (~30 MB).
    let dir = tempfile::tempdir().unwrap();
    let mut text = String::with_capacity(32 << 20);
    text.push_str("series,temperature (K),concentration (g/L),pressure (Pa)\n");
    for s in 0..2000 {
        for t in [290.0, 300.0, 310.0, 320.0, 330.0f64] {
            let a2 = 2.8e-3 * (1.0 - 305.0 / t);
            for r in 0..100 {
                let c = 2.0 + 2.0 * (r % 5) as f64;
                let p = c
                    * thetaseek::units::GAS_CONSTANT_J_PER_MOL_K
                    * t
                    * (1.0 / 150.0 + a2 * c)
                    * (1.0 + 1e-3 * (((r * 7919 + s) % 13) as f64 - 6.0) / 6.0);
                text.push_str(&format!("s{s},{t},{c},{p:.4}\n"));
            }
        }
    }
    let path = dir.path().join("million.csv");
    std::fs::write(&path, text).unwrap();
    let table = dir.path().join("t.csv");
    thetaseek().arg("analyze").arg(&path).args(["-q", "--bootstrap", "0", "--table"]).arg(&table).assert().success();
    assert_eq!(std::fs::read_to_string(&table).unwrap().lines().count(), 1 + 2000 * 5);
}
