//! Helpers shared by the integration tests.

use assert_cmd::Command;
use std::path::{Path, PathBuf};

/// The binary under test.
pub fn thetaseek() -> Command {
    Command::cargo_bin("thetaseek").unwrap()
}

/// The invented demo data set.
pub fn demo() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("data/px40-osmometry.csv")
}

/// Writes `text` to `dir/name` and returns the path.
pub fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    path
}

/// Runs `command`, requires success, and parses its standard output as JSON.
pub fn json_stdout(command: &mut Command) -> serde_json::Value {
    let out = command.assert().success().get_output().stdout.clone();
    serde_json::from_slice(&out).expect("standard output is JSON")
}

/// An HTML page parsed as strict XML (its doctype allowed); panics when it is not well-formed.
pub fn parse_html(html: &str) -> roxmltree::Document<'_> {
    let options = roxmltree::ParsingOptions { allow_dtd: true, ..roxmltree::ParsingOptions::default() };
    roxmltree::Document::parse_with_options(html, options).expect("the HTML is well-formed")
}

/// Proptest settings: `PROPTEST_CASES` cases (else `default_cases`) and a fixed seed, so that CI
/// is reproducible; `PROPTEST_RNG_SEED=N` (or `random`) explores further.
pub fn proptest_config(default_cases: u32) -> proptest::test_runner::Config {
    use proptest::test_runner::{Config, RngSeed};
    let cases = std::env::var("PROPTEST_CASES").ok().and_then(|v| v.parse().ok()).unwrap_or(default_cases);
    let rng_seed = match std::env::var("PROPTEST_RNG_SEED").as_deref() {
        Ok("random") => RngSeed::Random,
        Ok(v) => v.parse().unwrap_or(RngSeed::Fixed(2026)),
        Err(_) => RngSeed::Fixed(2026),
    };
    Config { cases, failure_persistence: None, rng_seed, ..Config::default() }
}
