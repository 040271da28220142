//! The catalogue of refused inputs in tests/data/bad/: each is refused with exit code 65, a
//! message that names the file, the line, the column and the value, and no output written.

use std::path::Path;

use crate::common::thetaseek;

/// (file, line, column, value) as the message names them; `None` where the file has no such
/// thing to name (an empty file has no line; a ragged row has no single value).
type Case = (&'static str, Option<usize>, Option<&'static str>, Option<&'static str>);

const CATALOGUE: &[Case] = &[
    ("nan_pressure.csv", Some(4), Some("pressure (Pa)"), Some("NaN")),
    ("infinite_temperature.csv", Some(4), Some("temperature (C)"), Some("inf")),
    ("text_in_concentration.csv", Some(4), Some("concentration (g/mL)"), Some("two")),
    ("zero_concentration.csv", Some(4), Some("concentration (g/mL)"), Some("0")),
    ("negative_concentration.csv", Some(2), Some("concentration (g/mL)"), Some("-0.002")),
    ("below_absolute_zero.csv", Some(3), Some("temperature (K)"), Some("-4")),
    ("short_row.csv", Some(4), Some("pressure (Pa) (missing)"), None),
    ("long_row.csv", Some(4), Some("field 5 (beyond the header)"), None),
    ("decimal_comma.csv", Some(3), Some("field 5 (beyond the header)"), None),
    ("duplicated_column.csv", Some(1), Some("Temperature (K)"), None),
    ("unknown_temperature_unit.csv", Some(1), Some("temperature (F)"), Some("F")),
    ("missing_concentration_unit.csv", Some(1), Some("concentration"), None),
    ("unknown_pressure_unit.csv", Some(1), Some("pressure (inH2O)"), Some("inH2O")),
    ("missing_pressure_column.csv", Some(1), Some("pressure"), None),
    ("pressure_and_head.csv", Some(1), Some("head (cm)"), None),
    ("head_without_density.csv", Some(1), Some("head (cm)"), None),
    ("zero_density.csv", Some(3), Some("solvent density (g/mL)"), Some("0")),
    ("missing_value.csv", Some(4), Some("temperature (C)"), None),
    ("zero_sd.csv", Some(3), Some("pressure sd (Pa)"), Some("0")),
    ("empty_series_name.csv", Some(4), Some("series"), None),
    ("unknown_density_unit.csv", Some(1), Some("solvent density (lb/gal)"), Some("lb/gal")),
    ("thousands_separator.csv", Some(2), Some("pressure (Pa)"), Some("1,026.1")),
    ("comments_crlf_bad_value.csv", Some(7), Some("pressure (Pa)"), Some("7x5.3")),
    ("latin1_text.csv", Some(3), Some("field 1"), None),
    ("bom_overflowing_number.csv", Some(3), Some("pressure (Pa)"), Some("1e400")),
    ("header_only.csv", Some(1), None, None),
    ("empty.csv", None, None, None),
    ("comments_only.csv", None, None, None),
    // No silent reinterpretation: values that contradict their declared unit are refused.
    ("kelvin_values_under_celsius.csv", Some(2), Some("temperature (C)"), Some("298.15")),
    ("g_per_l_values_under_g_per_ml.csv", Some(2), Some("concentration (g/mL)"), Some("2")),
    ("subnormal_concentration.csv", Some(4), Some("concentration (g/mL)"), Some("1e-320")),
    ("quoted_decimal_comma.csv", Some(4), Some("concentration (g/mL)"), Some("0,006")),
    ("nan_word.csv", Some(4), Some("pressure (Pa)"), Some("nan")),
    ("negative_infinity.csv", Some(4), Some("temperature (C)"), Some("-inf")),
    ("duplicate_column_other_case.csv", Some(1), Some("pressure (kPa)"), None),
    ("empty_header_field.csv", Some(1), Some("field 2"), None),
    ("partial_a2_sd.csv", Some(3), Some("a2 sd (mol mL/g2)"), None),
    ("chi_not_a_number.csv", Some(3), Some("chi"), Some("half")),
    ("volumes_change_within_series.csv", Some(3), Some("polymer specific volume (mL/g)"), Some("0.95")),
    ("only_specific_volume.csv", Some(1), Some("polymer specific volume (mL/g)"), None),
    ("solvent_changes_within_series.csv", Some(3), Some("solvent"), Some("ostrol")),
    ("negative_sd.csv", Some(3), Some("pressure sd (Pa)"), Some("-0.3")),
    ("whitespace_only_value.csv", Some(4), Some("concentration (g/mL)"), None),
    ("utf16_file.csv", Some(1), None, None),
    // A workbook whose header cells C5:D5 are merged: the merged-away cell is an empty name.
    ("merged_header_cells.xlsx", Some(5), Some("field 4"), None),
    ("concentration_above_two_g_per_ml.csv", Some(3), Some("concentration (g/L)"), Some("5000")),
    // Viscometry: a solution cannot flow faster than its solvent, a solvent time is needed at
    // each temperature, times are positive, and Mark–Houwink needs more than one fraction.
    ("viscometry_flow_faster_than_solvent.csv", Some(3), Some("flow time (s)"), Some("119.2")),
    ("viscometry_missing_solvent_time.csv", Some(3), Some("flow time (s)"), Some("130.2")),
    ("viscometry_negative_time.csv", Some(3), Some("flow time (s)"), Some("-131.0")),
    ("viscometry_one_fraction.csv", Some(2), Some("fraction"), Some("F1")),
    ("viscometry_relative_below_one.csv", Some(3), Some("relative viscosity"), Some("0.98")),
    ("viscometry_unknown_intrinsic_unit.csv", Some(1), Some("intrinsic viscosity (mL/mg)"), Some("mL/mg")),
];

#[test]
fn every_file_in_the_catalogue_is_refused_with_its_line_and_column_and_writes_nothing() {
    let data = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/bad");
    let listed = std::fs::read_dir(&data).unwrap().count();
    assert_eq!(listed, CATALOGUE.len(), "every file in tests/data/bad is in the catalogue");
    for (file, line, column, value) in CATALOGUE {
        let out = tempfile::tempdir().unwrap();
        let report = out.path().join("report.json");
        let table = out.path().join("table.csv");
        let assert = thetaseek()
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
        if let Some(value) = value {
            assert!(stderr.contains(&format!("value '{value}'")), "{file}: names value {value}: {stderr}");
        }
        assert!(!stderr.contains("panicked"), "{file}: {stderr}");
        assert_eq!(std::fs::read_dir(out.path()).unwrap().count(), 0, "{file}: nothing written");
    }
}
