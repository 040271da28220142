//! Fuzzing the reader and the whole analyze path with proptest (cargo fuzz needs a nightly
//! toolchain, which this project does not use): arbitrary bytes, and structure-aware mutations
//! of a valid file. Whatever the input, the pipeline returns a result or a refusal, never a
//! panic. `PROPTEST_CASES` sets the number of cases (a short run by default; the closing note
//! of the hardening work gives the long runs).

use proptest::prelude::*;

use thetaseek::analysis::{analyze, Settings};
use thetaseek::dataset::Dataset;
use thetaseek::dataset::Quantity;
use thetaseek::input::{read_file, read_solvents, ReadOptions};
use thetaseek::report::{render_terminal, series_table_csv, table_csv, to_json, Report, ReportSettings, SeriesFilter};
use thetaseek::theta::ThetaSettings;

/// Everything `thetaseek analyze` does after reading the file, in memory. The file is also
/// read a block of 48 bytes at a time (the path of files above 4 MB): that too must end in a
/// result or a refusal, and where both reads succeed they must agree.
fn pipeline(bytes: &[u8]) {
    let options = ReadOptions { solvent_density_kg_per_m3: Some(870.0), ..ReadOptions::default() };
    let in_blocks = thetaseek::input::read_source("fuzz.csv", 0, &mut &bytes[..], &options, 48);
    let whole = read_file("fuzz.csv", 0, bytes, &options);
    match (&in_blocks, &whole) {
        (Ok(a), Ok(b)) => assert_eq!(a, b, "a read in blocks differs from the whole read"),
        (Err(_), Err(_)) => {}
        (a, b) => panic!("read in blocks: {:?}\nread whole: {:?}", a.as_ref().err(), b.as_ref().err()),
    }
    let Ok(contents) = whole else { return };
    let (a2, chi): (Vec<_>, Vec<_>) = match contents.quantity {
        Some(Quantity::SecondVirial) => (contents.tabulated.clone(), Vec::new()),
        Some(Quantity::HalfMinusChi) => (Vec::new(), contents.tabulated.clone()),
        None => (Vec::new(), Vec::new()),
    };
    let routes = thetaseek::dataset::OtherRoutes {
        critical: contents.critical.clone(),
        scattering: contents.scattering.clone(),
        viscometry: contents.viscometry.clone(),
    };
    let dataset = Dataset::new(contents.readings, &a2, &chi, routes, &contents.volumes, &contents.solvents);
    let settings = Settings {
        theta: ThetaSettings { bootstrap_replicates: 10, ..ThetaSettings::default() },
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
    // Every output, as the command writes them: no NaN or infinity in the JSON, nothing in
    // the terminal text that acts instead of being shown, every SVG and the HTML well-formed.
    let bytes = to_json(&report);
    // The report reads back through its own types, to the same bytes (what `plan` and `next` do).
    let again: Report = serde_json::from_slice(&bytes).unwrap_or_else(|e| {
        let text = String::from_utf8_lossy(&bytes);
        let lines: Vec<&str> = text.lines().collect();
        panic!("{e}: {}", lines[e.line().saturating_sub(4)..e.line().min(lines.len())].join("\n"))
    });
    assert!(to_json(&again) == bytes, "the report read back is written differently");
    let mut json = String::from_utf8(bytes).unwrap();
    for s in &report.series {
        json = json.replace(&s.name, "(name)"); // a series (or a fraction) may be called "NaN"
        for f in s.viscometry.iter().flat_map(|v| &v.fractions) {
            json = json.replace(&f.name, "(name)");
        }
    }
    assert!(!json.contains("NaN") && !json.contains("inf"), "a non-finite number reached the report: {json}");
    let _ = table_csv(&report);
    let _ = series_table_csv(&report, SeriesFilter::All);
    let terminal = render_terminal(&report);
    assert!(thetaseek::input::first_hidden_character(&terminal).is_none(), "{terminal:?}");
    let figures = thetaseek::plot::figures_for_report(&report).unwrap_or_default();
    for figure in &figures {
        assert!(roxmltree::Document::parse(&figure.svg).is_ok(), "{} is not well-formed", figure.file_name);
    }
    let html = thetaseek::html::analyze_html(&report, &figures, "2026-01-01");
    crate::common::parse_html(&html);
}

/// A small viscometry file (flow times, three fractions, two temperatures).
const VALID_VISCOMETRY: &str =
    "series,fraction,molar mass (g/mol),temperature (C),concentration (g/dL),flow time (s)\n\
v,,,25.0,0,120.02\n\
v,F1,52000,25.0,1.2392,146.57\n\
v,F1,52000,25.0,1.8587,161.75\n\
v,F1,52000,25.0,2.4783,178.36\n\
v,F2,98000,25.0,0.9232,146.59\n\
v,F2,98000,25.0,1.3847,161.83\n\
v,F2,98000,25.0,1.8463,178.41\n\
v,F3,320000,25.0,0.5479,146.64\n\
v,F3,320000,25.0,0.8219,161.83\n\
v,F3,320000,25.0,1.0958,178.44\n\
v,,,40.0,0,98.92\n\
v,F1,52000,40.0,1.1342,120.68\n\
v,F1,52000,40.0,1.7013,132.89\n\
v,F1,52000,40.0,2.2684,146.13\n\
v,F2,98000,40.0,0.8170,120.74\n\
v,F2,98000,40.0,1.2256,132.95\n\
v,F2,98000,40.0,1.6341,146.06\n\
v,F3,320000,40.0,0.4377,120.74\n\
v,F3,320000,40.0,0.6566,132.95\n\
v,F3,320000,40.0,0.8754,146.12\n";

const VALID: &str = "# a comment\n\
series,temperature (C),concentration (g/L),pressure (Pa),pressure sd (Pa)\n\
a,20,2,24.8,0.4\na,20,4,46.9,0.4\na,20,6,66.9,0.5\na,20,8,84.2,0.6\n\
a,35,2,26.2,0.4\na,35,4,52.4,0.4\na,35,6,78.4,0.5\na,35,8,104.5,0.6\n\
a,50,2,27.7,0.4\na,50,4,56.5,0.4\na,50,6,86.4,0.5\na,50,8,117.6,0.6\n\
b,20,2,25.1,0.4\nb,20,4,49.0,0.4\nb,20,6,73.1,0.5\nb,20,8,96.9,0.6\n\
b,35,2,26.9,0.4\nb,35,4,55.1,0.4\nb,35,6,84.6,0.5\nb,35,8,115.0,0.6\n";

const TOKENS: &[&str] = &[
    "1e-320",
    "1,5",
    "NaN",
    "inf",
    "-0",
    "",
    "   ",
    "1e308",
    "\"2\"",
    "0x1A",
    "1_000",
    "٣",
    "-1",
    "0",
    "1e-300",
    "\"",
    "#",
    "\u{feff}",
    "2.5e",
    "+3",
    ".5",
    "5.",
    "K",
    "(C)",
    "[g/L]",
    "=1+1",
    "@x",
    "\u{1b}[2J",
    "\u{b}",
    "\0",
    "\u{fffe}",
    "\u{202e}",
    "All series",
    "A",
    "a ",
];

#[derive(Debug, Clone)]
enum Mutation {
    SwapColumns(usize, usize),
    StrayQuote(usize),
    ReplaceField(usize, usize, usize),
    Bom,
    LongField(usize, usize),
    DeleteLine(usize),
    DuplicateLine(usize),
    Crlf,
    HeaderUnit(usize, usize),
    FlipByte(usize, u8),
    /// Every comma becomes this separator (a semicolon or tab export).
    Separator(bool),
}

fn mutation() -> impl Strategy<Value = Mutation> {
    prop_oneof![
        (0usize..5, 0usize..5).prop_map(|(a, b)| Mutation::SwapColumns(a, b)),
        (0usize..2000).prop_map(Mutation::StrayQuote),
        (0usize..30, 0usize..5, 0usize..TOKENS.len()).prop_map(|(l, f, t)| Mutation::ReplaceField(l, f, t)),
        Just(Mutation::Bom),
        (0usize..30, 1usize..200_000).prop_map(|(l, n)| Mutation::LongField(l, n)),
        (0usize..30).prop_map(Mutation::DeleteLine),
        (0usize..30).prop_map(Mutation::DuplicateLine),
        Just(Mutation::Crlf),
        (0usize..5, 0usize..TOKENS.len()).prop_map(|(f, t)| Mutation::HeaderUnit(f, t)),
        (0usize..2000, any::<u8>()).prop_map(|(i, b)| Mutation::FlipByte(i, b)),
        any::<bool>().prop_map(Mutation::Separator),
    ]
}

fn apply(text: &mut Vec<u8>, m: &Mutation) {
    let as_lines = |t: &[u8]| -> Vec<String> { String::from_utf8_lossy(t).split('\n').map(str::to_string).collect() };
    match *m {
        Mutation::SwapColumns(a, b) => {
            let lines: Vec<String> = as_lines(text)
                .into_iter()
                .map(|l| {
                    let mut f: Vec<&str> = l.split(',').collect();
                    if a < f.len() && b < f.len() {
                        f.swap(a, b);
                    }
                    f.join(",")
                })
                .collect();
            *text = lines.join("\n").into_bytes();
        }
        Mutation::StrayQuote(i) => {
            let i = i % (text.len() + 1);
            text.insert(i, b'"');
        }
        Mutation::ReplaceField(l, f, t) => {
            let mut lines = as_lines(text);
            let k = l % lines.len().max(1);
            if let Some(line) = lines.get_mut(k) {
                let mut fields: Vec<String> = line.split(',').map(str::to_string).collect();
                let n = fields.len();
                fields[f % n] = TOKENS[t].to_string();
                *line = fields.join(",");
            }
            *text = lines.join("\n").into_bytes();
        }
        Mutation::Bom => text.splice(0..0, [0xef, 0xbb, 0xbf]).for_each(drop),
        Mutation::LongField(l, n) => {
            let mut lines = as_lines(text);
            let k = l % lines.len().max(1);
            lines[k].push_str(&"7".repeat(n));
            *text = lines.join("\n").into_bytes();
        }
        Mutation::DeleteLine(l) => {
            let mut lines = as_lines(text);
            if !lines.is_empty() {
                lines.remove(l % lines.len());
            }
            *text = lines.join("\n").into_bytes();
        }
        Mutation::DuplicateLine(l) => {
            let mut lines = as_lines(text);
            if !lines.is_empty() {
                let k = l % lines.len();
                lines.insert(k, lines[k].clone());
            }
            *text = lines.join("\n").into_bytes();
        }
        Mutation::Crlf => *text = String::from_utf8_lossy(text).replace('\n', "\r\n").into_bytes(),
        Mutation::HeaderUnit(f, t) => {
            let mut lines = as_lines(text);
            if lines.len() > 1 {
                let mut fields: Vec<String> = lines[1].split(',').map(str::to_string).collect();
                let n = fields.len();
                let name = fields[f % n].split(['(', '[']).next().unwrap_or("").trim().to_string();
                fields[f % n] = format!("{name} ({})", TOKENS[t]);
                lines[1] = fields.join(",");
            }
            *text = lines.join("\n").into_bytes();
        }
        Mutation::Separator(tab) => {
            let to = if tab { b'\t' } else { b';' };
            text.iter_mut().filter(|b| **b == b',').for_each(|b| *b = to);
        }
        Mutation::FlipByte(i, b) => {
            if !text.is_empty() {
                let k = i % text.len();
                text[k] = b;
            }
        }
    }
}

proptest! {
    #![proptest_config(crate::common::proptest_config(200))]

    #[test]
    fn arbitrary_bytes_never_panic(bytes in proptest::collection::vec(any::<u8>(), 0..4096)) {
        pipeline(&bytes);
        let _ = read_solvents("fuzz.csv", &bytes);
    }

    /// Workbooks (issue #24): arbitrary bytes, and the committed demo workbook with bytes
    /// changed, read as a workbook end in a result or a refusal.
    #[test]
    fn damaged_workbooks_never_panic(flips in proptest::collection::vec((0usize..8000, any::<u8>()), 0..6), raw in proptest::collection::vec(any::<u8>(), 0..512)) {
        let options = ReadOptions::default();
        let _ = thetaseek::input::read_workbook("fuzz.xlsx", 0, raw, &options);
        let mut book = std::fs::read(std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/workbooks/px40.xlsx")).unwrap();
        for (i, b) in flips {
            let k = i % book.len();
            book[k] = b;
        }
        if let Ok(contents) = thetaseek::input::read_workbook("fuzz.xlsx", 0, book, &options) {
            let _ = Dataset::new(contents.readings, &[], &[], Default::default(), &contents.volumes, &contents.solvents);
        }
    }

    #[test]
    fn mutated_viscometry_files_never_panic(mutations in proptest::collection::vec(mutation(), 1..5)) {
        let mut text = VALID_VISCOMETRY.as_bytes().to_vec();
        for m in &mutations {
            apply(&mut text, m);
        }
        pipeline(&text);
    }

    #[test]
    fn mutated_valid_files_never_panic(mutations in proptest::collection::vec(mutation(), 1..5)) {
        let mut text = VALID.as_bytes().to_vec();
        for m in &mutations {
            apply(&mut text, m);
        }
        pipeline(&text);
    }
}
