//! The catalogue of refused inputs in tests/data/bad/: each is refused with exit code 65, a
//! message that names the file, the line and the column, and no output file written.

use assert_cmd::Command;
use std::path::Path;

/// (file, line, column as the message names it); `None` where the file has no line or column to name.
const CATALOGUE: &[(&str, Option<usize>, Option<&str>)] = &[
    ("nan_pressure.csv", Some(4), Some("pressure (Pa)")),
    ("infinite_temperature.csv", Some(4), Some("temperature (C)")),
    ("text_in_concentration.csv", Some(4), Some("concentration (g/mL)")),
    ("zero_concentration.csv", Some(4), Some("concentration (g/mL)")),
    ("negative_concentration.csv", Some(2), Some("concentration (g/mL)")),
    ("below_absolute_zero.csv", Some(3), Some("temperature (K)")),
    ("negative_pressure.csv", Some(4), Some("pressure (Pa)")),
    ("negative_head.csv", Some(3), Some("head (cm)")),
    ("short_row.csv", Some(4), Some("pressure (Pa) (missing)")),
    ("long_row.csv", Some(4), Some("field 5 (beyond the header)")),
    ("decimal_comma.csv", Some(3), Some("field 5 (beyond the header)")),
    ("duplicated_column.csv", Some(1), Some("Temperature (K)")),
    ("unknown_temperature_unit.csv", Some(1), Some("temperature (F)")),
    ("missing_concentration_unit.csv", Some(1), Some("concentration")),
    ("unknown_pressure_unit.csv", Some(1), Some("pressure (inH2O)")),
    ("missing_pressure_column.csv", Some(1), Some("pressure")),
    ("pressure_and_head.csv", Some(1), Some("head (cm)")),
    ("head_without_density.csv", Some(1), Some("head (cm)")),
    ("zero_density.csv", Some(3), Some("solvent density (g/mL)")),
    ("missing_value.csv", Some(4), Some("temperature (C)")),
    ("zero_sd.csv", Some(3), Some("pressure sd (Pa)")),
    ("empty_series_name.csv", Some(4), Some("series")),
    ("unknown_density_unit.csv", Some(1), Some("solvent density (lb/gal)")),
    ("thousands_separator.csv", Some(2), Some("pressure (Pa)")),
    ("comments_crlf_bad_value.csv", Some(7), Some("pressure (Pa)")),
    ("latin1_text.csv", Some(3), Some("field 1")),
    ("bom_overflowing_number.csv", Some(3), Some("pressure (Pa)")),
    ("header_only.csv", Some(1), None),
    ("empty.csv", None, None),
    ("comments_only.csv", None, None),
];

#[test]
fn every_file_in_the_catalogue_is_refused_with_its_line_and_column_and_writes_nothing() {
    let data = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/bad");
    let listed = std::fs::read_dir(&data).unwrap().count();
    assert_eq!(listed, CATALOGUE.len(), "every file in tests/data/bad is in the catalogue");
    for (file, line, column) in CATALOGUE {
        let out = tempfile::tempdir().unwrap();
        let report = out.path().join("report.json");
        let table = out.path().join("table.csv");
        let assert = Command::cargo_bin("thetaseek")
            .unwrap()
            .arg("analyze")
            .arg(data.join(file))
            .arg("--report")
            .arg(&report)
            .arg("--table")
            .arg(&table)
            .arg("--figures")
            .arg(out.path().join("figures"))
            .assert()
            .code(65);
        let stderr = String::from_utf8_lossy(&assert.get_output().stderr).to_string();
        assert!(stderr.contains(file), "{file}: message names the file: {stderr}");
        if let Some(line) = line {
            assert!(
                stderr.contains(&format!("line {line},")) || stderr.contains(&format!("line {line}:")),
                "{file}: names line {line}: {stderr}"
            );
        }
        if let Some(column) = column {
            assert!(stderr.contains(&format!("column '{column}'")), "{file}: names column {column}: {stderr}");
        }
        assert!(!stderr.contains("panicked"), "{file}: {stderr}");
        assert_eq!(std::fs::read_dir(out.path()).unwrap().count(), 0, "{file}: nothing written");
    }
}
