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

    /// Print nothing on the terminal but errors.
    #[arg(long, short)]
    pub quiet: bool,
}
