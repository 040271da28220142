//! Command-line grammar (clap derive only; no logic).

use clap::{Args, Parser, Subcommand, ValueEnum};
use std::path::PathBuf;

/// Mn, A2 and the theta temperature of polymer solutions from dilute-solution series.
#[derive(Debug, Parser)]
#[command(name = "thetaseek", version, about, long_about = None)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Fit Mn and A2 at every temperature of every series in the CSV file(s).
    Analyze(AnalyzeArgs),
}

/// Virial form used at each temperature.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum VirialArg {
    /// Choose per temperature by AICc.
    Auto,
    /// Π/(cRT) = 1/Mn + A2 c.
    Linear,
    /// Π/(cRT) = 1/Mn + A2 c + A3 c².
    Quadratic,
    /// (Π/c)^½ = (RT/Mn)^½ (1 + Γ2 c/2), good solvents.
    Sqrt,
}

#[derive(Debug, Args)]
pub struct AnalyzeArgs {
    /// Input CSV files, read as one dataset.
    #[arg(required = true, value_name = "FILE")]
    pub files: Vec<PathBuf>,

    /// Write the JSON report here ('-' for standard output).
    #[arg(long, value_name = "PATH")]
    pub report: Option<String>,

    /// Write the per-temperature results as CSV here ('-' for standard output).
    #[arg(long, value_name = "PATH")]
    pub table: Option<String>,

    /// Write SVG figures into this folder (created if missing).
    #[arg(long, value_name = "DIR")]
    pub figures: Option<std::path::PathBuf>,

    /// Virial form at each temperature.
    #[arg(long, value_enum, default_value_t = VirialArg::Auto)]
    pub virial: VirialArg,

    /// Temperature unit for a header that has none (C or K).
    #[arg(long, value_name = "UNIT")]
    pub temperature_unit: Option<String>,

    /// Concentration unit for a header that has none (g/mL, g/L, mg/mL, g/dL, kg/m3).
    #[arg(long, value_name = "UNIT")]
    pub concentration_unit: Option<String>,

    /// Pressure unit for a header that has none (Pa, kPa, bar, atm, mmHg, torr, psi, dyn/cm2).
    #[arg(long, value_name = "UNIT")]
    pub pressure_unit: Option<String>,

    /// Solvent density in g/mL, for 'head' columns when the file has no density column.
    #[arg(long, value_name = "G_PER_ML")]
    pub solvent_density: Option<f64>,

    /// Confidence level of the θ intervals.
    #[arg(long, default_value_t = 0.95, value_parser = parse_confidence)]
    pub confidence: f64,

    /// Bootstrap replicates for the θ interval cross-check (0 turns it off).
    #[arg(long, default_value_t = 2000, value_name = "N")]
    pub bootstrap: usize,

    /// Seed of the bootstrap (same seed, same numbers).
    #[arg(long, default_value_t = 1)]
    pub seed: u64,

    /// Partial specific volume of the polymer v̄ in mL/g (for ψ1, κ1, χ).
    #[arg(long, value_name = "ML_PER_G", value_parser = parse_positive)]
    pub polymer_specific_volume: Option<f64>,

    /// Molar volume of the solvent V1 in mL/mol (for ψ1, κ1, χ).
    #[arg(long, value_name = "ML_PER_MOL", value_parser = parse_positive)]
    pub solvent_molar_volume: Option<f64>,

    /// |A2| tolerance in mol mL/g² for the temperature-stability advice.
    #[arg(long, default_value_t = 1.0e-5, value_name = "MOL_ML_PER_G2", value_parser = parse_positive)]
    pub a2_tolerance: f64,

    /// Print nothing on the terminal but errors.
    #[arg(long, short)]
    pub quiet: bool,
}

fn parse_confidence(text: &str) -> Result<f64, String> {
    let v: f64 = text.parse().map_err(|_| format!("'{text}' is not a number"))?;
    if v > 0.0 && v < 1.0 {
        Ok(v)
    } else {
        Err(format!("{v} is not between 0 and 1 (e.g. 0.95)"))
    }
}

fn parse_positive(text: &str) -> Result<f64, String> {
    let v: f64 = text.parse().map_err(|_| format!("'{text}' is not a number"))?;
    if v.is_finite() && v > 0.0 {
        Ok(v)
    } else {
        Err(format!("{v} is not a positive number"))
    }
}
