//! Times each stage of `analyze` on one file (reading, grouping, fitting, report, JSON), to see
//! where a large campaign spends its time. Run: `cargo run --release --example phase-times -- FILE`

use std::time::Instant;
use thetaseek::analysis::{analyze, Settings};
use thetaseek::dataset::Dataset;
use thetaseek::input::{read_file, ReadOptions};
use thetaseek::report::{render_terminal, table_csv, Report, ReportSettings};
use thetaseek::theta::ThetaSettings;

fn main() {
    let path = std::env::args().nth(1).expect("give a CSV path");
    let mut t = Instant::now();
    let mut lap = |what: &str| {
        eprintln!("{what:>10}: {:.3} s", t.elapsed().as_secs_f64());
        t = Instant::now();
    };
    let bytes = std::fs::read(&path).unwrap();
    lap("read file");
    let contents = read_file(&path, 0, &bytes, &ReadOptions::default()).unwrap();
    lap("parse");
    let dataset = Dataset::new(contents.readings, &[], &[], Default::default(), &contents.volumes, &contents.solvents);
    lap("group");
    let settings = Settings {
        theta: ThetaSettings { bootstrap_replicates: 0, ..ThetaSettings::default() },
        ..Settings::default()
    };
    let results = analyze(&dataset, &settings);
    lap("analyze");
    let detail = thetaseek::report::Detail::Fits;
    let report_settings =
        ReportSettings { report_detail: detail, ..ReportSettings::new(thetaseek::virial::FormChoice::Auto) };
    let report = Report::new(Vec::new(), report_settings, Vec::new(), &results, &dataset);
    lap("report");
    let json = thetaseek::report::report_json(&report);
    lap("json");
    let table = table_csv(&report);
    lap("table");
    let text = render_terminal(&report);
    lap("terminal");
    eprintln!("json {} MB, table {} MB, text {} MB", json.len() >> 20, table.len() >> 20, text.len() >> 20);
}
