//! The floor for `analyze` on a campaign: the time a minimal polars program takes only to read
//! and parse the same CSV, with no validation, fitting or output. polars infers the column
//! types and parses the numbers itself (the fastest it reads this file: every column as text,
//! then parsed, took 0.074 s instead of 0.051). `scripts/campaign-ratio.sh` divides the analyze
//! time by it.
//!
//! Run: `cargo run --release --example csv-floor -- campaign.csv`

use polars::prelude::*;
use std::time::Instant;

fn main() -> PolarsResult<()> {
    let path = std::env::args().nth(1).expect("give the CSV path");
    let start = Instant::now();
    let bytes = std::fs::read(&path)?;
    let frame = CsvReadOptions::default()
        .with_has_header(true)
        .with_parse_options(CsvParseOptions::default().with_comment_prefix(Some("#")))
        .into_reader_with_file_handle(std::io::Cursor::new(bytes))
        .finish()?;
    let mut sum = 0.0;
    for column in frame.columns().iter().skip(1) {
        sum += column.as_materialized_series().f64()?.iter().flatten().sum::<f64>();
    }
    println!("{:.3}", start.elapsed().as_secs_f64());
    eprintln!("{} rows, checksum {sum:.3e}", frame.height());
    Ok(())
}
