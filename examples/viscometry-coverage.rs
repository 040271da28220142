//! The viscometry route's coverage study (see `src/simulate/viscometry_study.rs`): for each
//! design, how often the 95 % intervals of [η], the Mark–Houwink exponent a, the viscometric θ
//! and ⟨r²⟩0/M hold the truth, overall and by fifth of their line's reduced χ².
//!
//! Run: `cargo run --release --example viscometry-coverage -- [series per design] [seed]`.

use thetaseek::simulate::viscometry_study::{by_fifths, run, Design, Outcome};

fn pct(x: f64) -> String {
    format!("{:.1}", 100.0 * x)
}

fn fifths(f: &[f64]) -> String {
    f.iter().map(|x| format!("{:.0}", 100.0 * x)).collect::<Vec<_>>().join("/")
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let n: usize = args.get(1).and_then(|a| a.parse().ok()).unwrap_or(400);
    let seed: u64 = args.get(2).and_then(|a| a.parse().ok()).unwrap_or(2026);
    println!("| design | [η] | a (by fifth of its line's χ²) | viscometric θ (by fifth) | ⟨r²⟩0/M |");
    println!("| --- | --- | --- | --- | --- |");
    let mut all: Vec<Outcome> = Vec::new();
    for (i, design) in Design::all().iter().enumerate() {
        let outcomes = run(design, i as u64, n, seed);
        row(&design.label(), &outcomes);
        all.extend(outcomes);
    }
    row("all", &all);
}

fn row(label: &str, outcomes: &[Outcome]) {
    let (hit, total) = outcomes.iter().fold((0, 0), |(h, t), o| (h + o.intrinsic.0, t + o.intrinsic.1));
    let exponents: Vec<(Option<f64>, bool)> = outcomes.iter().flat_map(|o| o.exponents.iter().copied()).collect();
    let thetas: Vec<(Option<f64>, bool)> =
        outcomes.iter().filter_map(|o| o.theta_covered.map(|c| (o.theta_line_chi2, c))).collect();
    let k: Vec<bool> = outcomes.iter().filter_map(|o| o.dimensions_covered).collect();
    let cell = |pairs: &[(Option<f64>, bool)]| {
        if pairs.is_empty() {
            return "—".to_string();
        }
        let (overall, f) = by_fifths(pairs);
        format!("{} % ({})", pct(overall), fifths(&f))
    };
    let k_cell = if k.is_empty() {
        "—".to_string()
    } else {
        format!("{} %", pct(k.iter().filter(|c| **c).count() as f64 / k.len() as f64))
    };
    println!(
        "| {label} | {} % | {} | {} | {k_cell} |",
        pct(hit as f64 / total.max(1) as f64),
        cell(&exponents),
        cell(&thetas)
    );
}
