//! The self-contained HTML report: its sections, inline figures, no outside requests, escaped
//! text, and (where Chromium is installed) a real headless browser that renders it without a
//! console message.

use std::path::{Path, PathBuf};

use crate::common::{parse_html, thetaseek};

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// Asserts the page asks for nothing outside itself: no scripts, links, images or frames, and
/// no http(s) address in any attribute but the SVG namespace declarations.
fn assert_self_contained(doc: &roxmltree::Document) {
    for node in doc.descendants().filter(|n| n.is_element()) {
        let tag = node.tag_name().name();
        assert!(!["script", "link", "img", "iframe", "object", "embed"].contains(&tag), "<{tag}> in the report");
        for a in node.attributes() {
            let value = a.value().to_lowercase();
            let namespace = a.name() == "xmlns" || a.name().starts_with("xmlns:");
            assert!(
                namespace || !(value.contains("http://") || value.contains("https://")),
                "{}=\"{}\"",
                a.name(),
                a.value()
            );
        }
    }
}

fn analyze_html(dir: &Path, input: &Path) -> String {
    let html = dir.join("report.html");
    thetaseek()
        .arg("analyze")
        .arg(input)
        .args([
            "--bootstrap",
            "100",
            "-q",
            "--polymer-specific-volume",
            "0.92",
            "--solvent-molar-volume",
            "105",
            "--html",
        ])
        .arg(&html)
        .assert()
        .success();
    std::fs::read_to_string(html).unwrap()
}

#[test]
fn the_analyze_report_has_its_sections_and_every_figure_inline() {
    let dir = tempfile::tempdir().unwrap();
    let html = analyze_html(dir.path(), &root().join("data/px40-osmometry.csv"));
    let doc = parse_html(&html);
    for id in ["answer", "figures", "fits", "models", "flory", "provenance"] {
        assert!(doc.descendants().any(|n| n.attribute("id") == Some(id)), "section {id}");
    }
    // The same figures `--figures` writes: 4 per series and the overlay.
    let svgs = doc.descendants().filter(|n| n.tag_name().name() == "svg").count();
    assert_eq!(svgs, 2 * 4 + 1);
    assert_self_contained(&doc);
    let text: String = doc.descendants().filter_map(|n| n.text()).collect();
    assert!(text.contains("θ = 34.48 °C (307.63 K)"), "the answer comes first");
    assert!(text.contains("sha256") || html.contains("SHA-256"));
    assert!(html.contains("@media print") && html.contains("name=\"viewport\""));
}

#[test]
fn hostile_series_and_file_names_stay_text() {
    let dir = tempfile::tempdir().unwrap();
    let name = "<script>alert(1)</script> & \"x\"";
    let text = format!(
        "series,temperature (C),concentration (g/L),pressure (Pa)\n\"{}\",25,2,26.9\n\"{0}\",25,4,53.0\n\"{0}\",25,6,78.6\n\"{0}\",35,2,27.8\n\"{0}\",35,4,55.2\n\"{0}\",35,6,82.5\n",
        name.replace('"', "\"\"")
    );
    let input = dir.path().join("<b>&odd.csv");
    std::fs::write(&input, text).unwrap();
    let html = analyze_html(dir.path(), &input);
    let doc = parse_html(&html);
    assert_self_contained(&doc);
    assert!(!doc.descendants().any(|n| n.tag_name().name() == "b"));
    let text: String = doc.descendants().filter_map(|n| n.text()).collect();
    assert!(text.contains(name), "the name is shown as text");
    assert!(text.contains("<b>&odd.csv"), "the file name is shown as text");
}

#[test]
fn the_plan_report_carries_the_ranking_and_the_safety_cautions() {
    let dir = tempfile::tempdir().unwrap();
    let html = dir.path().join("plan.html");
    thetaseek()
        .arg("plan")
        .arg(root().join("data/px40-osmometry.csv"))
        .arg("--solvents")
        .arg(root().join("data/px40-solvents.csv"))
        .args(["--molar-mass", "250000", "--polymer-specific-volume", "0.92", "--thermostat", "20:80", "-q", "--html"])
        .arg(&html)
        .assert()
        .success();
    let html = std::fs::read_to_string(html).unwrap();
    let doc = parse_html(&html);
    for id in ["answer", "cautions", "figures", "ranking", "provenance"] {
        assert!(doc.descendants().any(|n| n.attribute("id") == Some(id)), "section {id}");
    }
    assert_self_contained(&doc);
    assert!(html.contains("fume hood") && html.contains("safety officer"));
}

/// Headless Chromium: loads the report from a file URL with the network off, takes a
/// screenshot, and must log no console message. Skipped (with a message) without Chromium.
#[test]
fn a_real_browser_renders_the_report_without_console_messages() {
    let chromium = ["chromium", "chromium-browser", "google-chrome"]
        .into_iter()
        .find(|c| std::process::Command::new(c).arg("--version").output().is_ok_and(|o| o.status.success()));
    let Some(chromium) = chromium else {
        eprintln!("skipped: no Chromium on this machine (apt-get install chromium to run this check)");
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    analyze_html(dir.path(), &root().join("data/px40-osmometry.csv"));
    let page = dir.path().join("report.html");
    let shot = dir.path().join("report.png");
    let output = std::process::Command::new(chromium)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--enable-logging=stderr",
            "--v=0",
            "--window-size=1200,2400",
        ])
        .arg(format!("--user-data-dir={}", dir.path().join("profile").display()))
        .arg(format!("--screenshot={}", shot.display()))
        .arg(format!("file://{}", page.display()))
        .output()
        .unwrap();
    let log = String::from_utf8_lossy(&output.stderr);
    let console: Vec<&str> = log.lines().filter(|l| l.contains(":CONSOLE")).collect();
    assert!(console.is_empty(), "console messages: {console:#?}");
    assert!(std::fs::metadata(&shot).map(|m| m.len() > 10_000).unwrap_or(false), "no screenshot: {log}");
}
