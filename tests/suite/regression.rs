//! One test per bug found, named after it.

use std::sync::mpsc;
use std::time::Duration;
use thetaseek::analysis::{analyze, Settings};
use thetaseek::dataset::Dataset;
use thetaseek::dataset::Quantity;
use thetaseek::input::{read_file, ReadOptions};
use thetaseek::report::{Report, ReportSettings};
use thetaseek::theta::ThetaSettings;

/// Runs `f` on a thread and fails if it has not finished in `seconds`.
fn within<T: Send + 'static>(seconds: u64, f: impl FnOnce() -> T + Send + 'static) -> T {
    let (tx, rx) = mpsc::channel();
    std::thread::spawn(move || {
        let _ = tx.send(f());
    });
    rx.recv_timeout(Duration::from_secs(seconds)).expect("finished in time (it used to hang)")
}

fn figures_of(text: &'static str) -> usize {
    within(60, move || {
        let Ok(contents) = read_file("r.csv", 0, text.as_bytes(), &ReadOptions::default()) else { return 0 };
        let (a2, chi) = match contents.quantity {
            Some(Quantity::SecondVirial) => (contents.tabulated.clone(), Vec::new()),
            Some(Quantity::HalfMinusChi) => (Vec::new(), contents.tabulated.clone()),
            None => (Vec::new(), Vec::new()),
        };
        let dataset = Dataset::new(contents.readings, &a2, &chi, Default::default(), &[], &[]);
        let settings = Settings {
            theta: ThetaSettings { bootstrap_replicates: 0, ..ThetaSettings::default() },
            ..Settings::default()
        };
        let results = analyze(&dataset, &settings);
        let report = Report::new(
            Vec::new(),
            ReportSettings::new(thetaseek::virial::FormChoice::Auto),
            Vec::new(),
            &results,
            &dataset,
        );
        thetaseek::plot::figures_for_report(&report).map_or(0, |f| f.len())
    })
}

#[test]
fn fuzz_found_figures_hung_on_an_infinite_concentration_axis() {
    // Found by tests/fuzz.rs: a concentration of 1e308 g/L made the axis end infinite, and
    // plotters looped forever placing ticks. Such a value is now refused, and every axis range
    // is made finite and non-empty before drawing.
    let text = "series,temperature (C),concentration (g/L),pressure (Pa)\n\
        a,20,2,24.8\na,20,4,46.9\na,20,1e308,66.9\na,35,2,26.2\na,35,4,52.4\na,35,6,78.4\n";
    assert_eq!(figures_of(text), 0);
}

#[test]
fn figures_of_extreme_but_accepted_values_finish() {
    // A2 values spanning 300 orders of magnitude, and a flat series: axes must still be drawable.
    let text = "series,temperature (K),a2 (mol mL/g2)\n\
        wild,290,-1e-300\nwild,300,1e290\nwild,310,1e-4\nflat,290,0\nflat,300,0\nflat,310,0\n";
    assert!(figures_of(text) >= 1);
}

/// Issue #28, item 1: a comment holding an unmatched double quote (`# operator: "new membrane`)
/// made every data row after it vanish up to the next quote in a file read in blocks (a
/// 600-series file reported 3 series, exit 0); in a small file it was refused with the CSV
/// reader's byte offset, above the header it read as "the file is empty". A `#` line is a
/// comment whatever it holds.
fn with_quoted_comment(series: usize, comment_after_rows: Option<usize>) -> String {
    let header = "series,temperature (K),concentration (g/L),pressure (Pa)";
    let mut rows = Vec::new();
    for i in 0..series {
        for t in [290.0, 300.0, 310.0] {
            for c in [1.0, 2.0, 3.0, 4.0, 5.0] {
                let a2 = 2e-3 * (1.0 - 300.0 / t);
                let p = c
                    * thetaseek::units::GAS_CONSTANT_J_PER_MOL_K
                    * t
                    * (1.0 / 100.0 + a2 * c)
                    * (1.0 + 1e-4 * (i as f64 + c).sin());
                rows.push(format!("s{i:04},{t},{c},{p:.6}"));
            }
        }
    }
    let comment = "# operator: \"new membrane".to_string();
    match comment_after_rows {
        Some(k) => {
            rows.insert(k, comment);
            format!("{header}\n{}\n", rows.join("\n"))
        }
        None => format!("{comment}\n{header}\n{}\n", rows.join("\n")),
    }
}

fn series_read(text: &str, block: usize) -> usize {
    let mut source = std::io::Cursor::new(text.as_bytes().to_vec());
    let contents = thetaseek::input::read_source("q.csv", 0, &mut source, &ReadOptions::default(), block)
        .expect("a comment with a quote is read, not refused");
    contents.readings.into_series().len()
}

#[test]
fn a_comment_with_an_unmatched_quote_loses_no_rows_in_a_file_read_in_blocks() {
    let text = with_quoted_comment(1500, Some(30));
    assert!(text.len() > thetaseek::input::BLOCK_BYTES, "{} bytes", text.len());
    assert_eq!(series_read(&text, thetaseek::input::BLOCK_BYTES), 1500);
    // And in small blocks, the comment falling anywhere in one.
    assert_eq!(series_read(&text, 4096), 1500);
}

#[test]
fn a_comment_with_an_unmatched_quote_in_a_small_file_or_above_the_header_is_a_comment() {
    assert_eq!(series_read(&with_quoted_comment(4, Some(20)), thetaseek::input::BLOCK_BYTES), 4);
    assert_eq!(series_read(&with_quoted_comment(4, None), thetaseek::input::BLOCK_BYTES), 4);
}

/// Issue #28, item 9: a pressure of 1e308 made Mn and A2 NaN ± NaN and θ "none … t = NaN" with
/// status ok and exit 0; 1e-5000 was read as 0 while 1e-320 was refused.
#[test]
fn absurd_magnitudes_are_refused_with_the_reading_named_and_never_become_nan() {
    let header = "series,temperature (K),concentration (g/L),pressure (Pa)\n";
    let rows = "a,290,1,10\na,290,2,VALUE\na,290,3,30\na,300,1,11\na,300,2,21\na,300,3,31\n";
    for (value, says) in [("1e308", "beyond any physical"), ("1e-5000", "too small"), ("1e-320", "too small")] {
        let text = format!("{header}{}", rows.replace("VALUE", value));
        let strict = ReadOptions { strict: true, ..ReadOptions::default() };
        let err = read_file("r.csv", 0, text.as_bytes(), &strict).expect_err(value).to_string();
        assert!(err.contains("line 3") && err.contains(value) && err.contains(says), "{value}: {err}");
    }
    // A true zero (a reading at the baseline) is still a reading.
    let text = format!("{header}{}", rows.replace("VALUE", "0.0e5"));
    assert!(read_file("r.csv", 0, text.as_bytes(), &ReadOptions::default()).is_ok());
}

#[test]
fn a_fit_that_overflows_skips_its_temperature_instead_of_reporting_nan() {
    use thetaseek::dataset::{group, Measurement};
    let mut rows = Vec::new();
    for (t, scale) in [(290.0, 1e300), (300.0, 1.0), (310.0, 1.0)] {
        for c in [1.0, 2.0, 3.0, 4.0] {
            rows.push(Measurement::simulated("s", t, c, scale * (10.0 * c + c * c)));
        }
    }
    let series = group(&rows);
    let settings = Settings {
        theta: ThetaSettings { bootstrap_replicates: 0, ..ThetaSettings::default() },
        ..Settings::default()
    };
    let result = thetaseek::analysis::analyze_series(&series[0], &settings, 0);
    assert_eq!(result.skipped.len(), 1, "{:?}", result.skipped);
    assert!(result.skipped[0].reason.contains("overflowed"), "{}", result.skipped[0].reason);
    let report = Report::new(
        Vec::new(),
        ReportSettings::new(thetaseek::virial::FormChoice::Auto),
        Vec::new(),
        &[result],
        &Dataset::default(),
    );
    let json = String::from_utf8(thetaseek::report::to_json(&report)).unwrap();
    assert!(!json.contains("NaN") && !json.contains("inf"), "{json}");
}

/// Issue #28, item 2: malformed quoting (`a,20,"4.00"x,46.9`) was refused with the CSV
/// library's own text, a byte offset and advice no user can act on.
#[test]
fn malformed_quoting_is_refused_with_its_line_and_column() {
    let text = "series,temperature (C),concentration (g/L),pressure (Pa)\na,20,1,10\na,20,\"4.00\"x,46.9\na,20,3,30\n";
    let err = read_file("q.csv", 0, text.as_bytes(), &ReadOptions::default()).unwrap_err().to_string();
    assert!(err.contains("line 3") && err.contains("concentration (g/L)") && err.contains("closing quote"), "{err}");
    assert!(!err.contains("infer_schema_length") && !err.contains("offset"), "{err}");
    // The same row deep in a file read in blocks.
    let mut big = String::from("series,temperature (C),concentration (g/L),pressure (Pa)\n");
    for i in 0..20_000 {
        big.push_str(&format!("s{},{},{},{}\n", i / 20, 20 + i % 4, 1 + i % 5, 10 + i % 7));
    }
    big.push_str("z,20,\"4.00\"x,46.9\n");
    let mut source = std::io::Cursor::new(big.into_bytes());
    let err = thetaseek::input::read_source("q.csv", 0, &mut source, &ReadOptions::default(), 64 * 1024)
        .unwrap_err()
        .to_string();
    assert!(err.contains("line 20002") && err.contains("closing quote"), "{err}");
}

/// Found by the long fuzz run of issue #28: a quote that opens in the last row and never
/// closes was accepted by the read in blocks and refused by the whole read with the CSV
/// reader's byte offset. Both now refuse it with its line and column.
#[test]
fn a_quote_that_never_closes_is_refused_with_its_line_whole_and_in_blocks() {
    let text = "series,temperature (C),concentration (g/L),pressure (Pa),pressure sd (Pa)\n\
        a,20,2,24.8,0.4\na,20,4,46.9,0.4\na,20,6,66.9,\"0.6\n";
    let whole = read_file("q.csv", 0, text.as_bytes(), &ReadOptions::default()).unwrap_err().to_string();
    let mut source = text.as_bytes();
    let blocks =
        thetaseek::input::read_source("q.csv", 0, &mut source, &ReadOptions::default(), 48).unwrap_err().to_string();
    for err in [whole, blocks] {
        assert!(err.contains("line 4") && err.contains("pressure sd (Pa)") && err.contains("never closed"), "{err}");
    }
}

/// Found by the long fuzz run of issue #28: a concentration of 1e-300 g/mL was accepted and made
/// every form's AICc infinite, which reached the report as "AICc (inf)". Below 1 µg/L it is
/// refused; an AICc that still overflows does not compete.
#[test]
fn a_concentration_too_small_to_measure_is_refused_with_its_line() {
    let text = "series,temperature (C),concentration (g/mL),pressure (Pa)\na,20,0.002,24.8\na,20,1e-300,46.9\n";
    let err = read_file("c.csv", 0, text.as_bytes(), &ReadOptions { strict: true, ..ReadOptions::default() })
        .unwrap_err()
        .to_string();
    assert!(err.contains("line 3") && err.contains("1 µg/L"), "{err}");
}
