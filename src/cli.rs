//! Command-line grammar (clap derive only; no logic).

use clap::{Args, Parser, Subcommand, ValueEnum};
use std::path::PathBuf;
use thetaseek::units::TemperatureUnit;

/// Mn, A2 and the theta temperature of polymer solutions from dilute-solution series.
#[derive(Debug, Parser)]
#[command(name = "thetaseek", version, about, long_about = None)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Fit Mn and A2 at every temperature of every series in the CSV file(s), then θ.
    Analyze(AnalyzeArgs),
    /// Choose the solvent and temperature for a chain-dimension study.
    Plan(PlanArgs),
    /// Suggest the next temperatures to measure to narrow the θ interval most.
    Next(NextArgs),
}

#[derive(Debug, Args)]
pub struct NextArgs {
    /// Data files (as for analyze) or JSON reports written by analyze.
    #[arg(required = true, value_name = "FILE")]
    pub files: Vec<PathBuf>,

    /// Temperatures the instrument can hold, °C, as LOW:HIGH (default: the measured range ± 15 K
    /// with --solvents, ± 5 K without).
    #[arg(long = "thermostat", value_name = "LOW:HIGH", value_parser = parse_thermostat, allow_hyphen_values = true)]
    pub thermostat_k: Option<(f64, f64)>,

    /// Solvent properties (CSV, as for plan): boiling and melting points keep runs inside the
    /// liquid range, the molar volume gives ψ1 and the sample's critical temperature.
    #[arg(long, value_name = "CSV")]
    pub solvents: Option<PathBuf>,

    /// Molar mass of the sample for its critical temperature, g/mol (default: the measured Mn).
    #[arg(long, value_name = "G_PER_MOL", value_parser = parse_positive)]
    pub molar_mass: Option<f64>,

    /// Partial specific volume of the polymer v̄, mL/g (for ψ1 and the critical temperature).
    #[arg(long, value_name = "ML_PER_G", value_parser = parse_positive)]
    pub polymer_specific_volume: Option<f64>,

    /// Concentrations of a new run, g/L, comma separated (default: the set used most so far).
    #[arg(long, value_name = "G_PER_L,...", value_delimiter = ',', value_parser = parse_positive)]
    pub concentrations: Option<Vec<f64>>,

    /// Replicates of each concentration in a new run.
    #[arg(long, default_value_t = 1, value_parser = clap::value_parser!(u32).range(1..=100))]
    pub replicates: u32,

    /// Number of new temperature runs to plan.
    #[arg(long, default_value_t = 2, value_parser = clap::value_parser!(u32).range(1..=50))]
    pub budget: u32,

    /// Grid step of the candidate temperatures, K.
    #[arg(long, default_value_t = 1.0, value_parser = parse_positive)]
    pub step: f64,

    /// Confidence level of the θ intervals (today's and the predicted ones).
    #[arg(long, default_value_t = 0.95, value_parser = parse_confidence)]
    pub confidence: f64,

    /// Simulated datasets to check the predicted SE of the recommended design (0: none).
    #[arg(long, default_value_t = 500)]
    pub simulations: usize,

    /// Seed of that simulation.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,

    /// Write the JSON advice here ('-' for standard output).
    #[arg(long, value_name = "PATH")]
    pub report: Option<String>,

    /// Write the figure (predicted interval width against candidate temperature) here: SVG,
    /// or PNG (300 dpi) or PDF when the path ends in .png or .pdf.
    #[arg(long, value_name = "PATH")]
    pub figure: Option<PathBuf>,

    #[command(flatten)]
    pub read: ReadArgs,

    /// Print nothing on the terminal but errors.
    #[arg(long, short)]
    pub quiet: bool,
}

/// What the study needs.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum GoalArg {
    /// Unperturbed chains: measure at θ.
    Unperturbed,
    /// A chosen solvent quality: give --target-a2 or --target-expansion.
    Expanded,
}

#[derive(Debug, Args)]
pub struct PlanArgs {
    /// Data files (as for analyze; one series per solvent) or JSON reports written by analyze.
    #[arg(required = true, value_name = "DATA_OR_REPORT")]
    pub inputs: Vec<PathBuf>,

    /// CSV of solvent properties: solvent, boiling point (C), melting point (C), and optionally
    /// molar volume (mL/mol), density (g/mL), refractive index, notes.
    #[arg(long, value_name = "FILE")]
    pub solvents: PathBuf,

    /// Molar mass of the sample to be studied, g/mol.
    #[arg(long, value_name = "G_PER_MOL", value_parser = parse_positive)]
    pub molar_mass: f64,

    /// Partial specific volume of the polymer v̄, mL/g.
    #[arg(long, value_name = "ML_PER_G", value_parser = parse_positive)]
    pub polymer_specific_volume: Option<f64>,

    /// Unperturbed chains (T = θ) or a chosen solvent quality.
    #[arg(long, value_enum, default_value_t = GoalArg::Unperturbed)]
    pub goal: GoalArg,

    /// With --goal expanded: the A2 to reach, mol mL/g².
    #[arg(long, value_name = "MOL_ML_PER_G2")]
    pub target_a2: Option<f64>,

    /// With --goal expanded: the expansion factor α to reach (needs --unperturbed-dimension).
    #[arg(long, value_name = "ALPHA", value_parser = parse_positive)]
    pub target_expansion: Option<f64>,

    /// Unperturbed dimension ⟨r²⟩0/M of the polymer, Å² mol/g.
    #[arg(long, value_name = "A2_MOL_PER_G", value_parser = parse_positive)]
    pub unperturbed_dimension: Option<f64>,

    /// Temperatures the instrument can hold, °C, as LOW:HIGH.
    #[arg(long = "thermostat", value_name = "LOW:HIGH", value_parser = parse_thermostat, allow_hyphen_values = true)]
    pub thermostat_k: Option<(f64, f64)>,

    /// |A2| tolerance in mol mL/g² for the temperature stability.
    #[arg(long, default_value_t = 1.0e-5, value_name = "MOL_ML_PER_G2", value_parser = parse_positive)]
    pub a2_tolerance: f64,

    /// Confidence level of the θ intervals (data inputs).
    #[arg(long, default_value_t = 0.95, value_parser = parse_confidence)]
    pub confidence: f64,

    /// Write the JSON plan here ('-' for standard output).
    #[arg(long, value_name = "PATH")]
    pub report: Option<String>,

    /// Write the planning figure here: SVG, or PNG (300 dpi) or PDF when the path ends in .png
    /// or .pdf.
    #[arg(long, value_name = "PATH")]
    pub figure: Option<PathBuf>,

    /// Write one self-contained HTML plan here (figure inline, cautions included).
    #[arg(long, value_name = "PATH")]
    pub html: Option<PathBuf>,

    #[command(flatten)]
    pub read: ReadArgs,

    /// Print nothing on the terminal but errors (the safety cautions still go to stderr).
    #[arg(long, short)]
    pub quiet: bool,
}

/// How data files are read (shared by analyze and plan).
#[derive(Debug, Args)]
pub struct ReadArgs {
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

    /// Virial form at each temperature.
    #[arg(long, value_enum, default_value_t = VirialArg::Auto)]
    pub virial: VirialArg,

    /// Light scattering: optical constant K in mol cm²/g² (for 'rayleigh ratio' columns).
    #[arg(long, value_name = "MOL_CM2_PER_G2", value_parser = parse_positive)]
    pub optical_constant: Option<f64>,

    /// Light scattering: refractive index n0 of the solvent.
    #[arg(long, value_parser = parse_positive)]
    pub refractive_index: Option<f64>,

    /// Light scattering: refractive-index increment dn/dc in mL/g.
    #[arg(long, value_name = "ML_PER_G", value_parser = parse_positive)]
    pub dn_dc: Option<f64>,

    /// Light scattering: vacuum wavelength in nm.
    #[arg(long, value_name = "NM", value_parser = parse_positive)]
    pub wavelength: Option<f64>,

    /// Refuse an input file larger than this, in MB (memory use is a few times the file size).
    #[arg(long, default_value_t = 2048, value_name = "MB")]
    pub max_input_mb: u64,

    /// Refuse the whole run at the first value that cannot be used (by default only that
    /// value's series is refused, the others are analysed, and the exit status is 3).
    #[arg(long)]
    pub strict: bool,

    /// The sheet to read from workbooks (.xlsx, .xls, .ods); the first sheet by default.
    #[arg(long, value_name = "NAME")]
    pub sheet: Option<String>,

    /// Read a column under another name as one of ours, for files that cannot be edited:
    /// `--column temperature="Temp (°C)"` (repeatable; the unit in brackets is still read).
    #[arg(long = "column", value_name = "NAME=HEADER")]
    pub columns: Vec<String>,

    /// Viscometry: the Flory–Fox constant Φ0 in mol⁻¹, for ⟨r²⟩0/M = (Kθ/Φ0)^(2/3).
    #[arg(long, value_name = "PER_MOL", default_value_t = thetaseek::chain_dimensions::DEFAULT_FLORY_FOX_PER_MOL, value_parser = parse_positive)]
    pub flory_fox_constant: f64,

    /// Molar mass of the polymer's repeat unit in g/mol: adds the characteristic ratio C∞.
    #[arg(long, value_name = "G_PER_MOL", value_parser = parse_positive)]
    pub repeat_unit_molar_mass: Option<f64>,

    /// Backbone bonds per repeat unit, for C∞ (2 for a vinyl polymer).
    #[arg(long, value_name = "COUNT", default_value_t = 2.0, value_parser = parse_positive)]
    pub backbone_bonds: f64,

    /// Backbone bond length in nm, for C∞ (0.154 nm, a carbon–carbon single bond).
    #[arg(long, value_name = "NM", default_value_t = 0.154, value_parser = parse_positive)]
    pub bond_length: f64,
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

/// `--figure-format` values.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum FigureFormatArg {
    /// The drawing itself (scalable, editable).
    Svg,
    /// A raster image at 300 dpi (slides, word processors).
    Png,
    /// A vector page (LaTeX manuscripts).
    Pdf,
}

/// `--report-detail` values.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum DetailArg {
    /// Every reading with its fitted value and residual, every candidate form, the JSON
    /// pretty-printed and every series in the terminal.
    Full,
    /// Per-temperature results without the readings, the JSON on one line, a digest in the
    /// terminal (for screening thousands of series).
    Fits,
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

    /// Write one row per series (θ, interval, crossing, Mn, warnings) as CSV here ('-' for stdout).
    #[arg(long, value_name = "PATH")]
    pub series_table: Option<String>,

    /// List only the series that need a look in --series-table (refused, partial, no bracketed θ,
    /// or with warnings).
    #[arg(long)]
    pub needs_attention: bool,

    /// The shape of the outputs, the same for one series or a hundred thousand: 'full' (the
    /// JSON pretty, with every reading and candidate form; the terminal lists every series) or
    /// 'fits' (the JSON on one line, per-temperature results only; the terminal shows the
    /// series that need a look and the summary). Figures and HTML are the same either way.
    #[arg(long, value_enum, default_value_t = DetailArg::Full)]
    pub report_detail: DetailArg,

    /// Write one self-contained HTML report here (figures inline, no network needed).
    #[arg(long, value_name = "PATH")]
    pub html: Option<std::path::PathBuf>,

    /// Write figures into this folder (created if missing).
    #[arg(long, value_name = "DIR")]
    pub figures: Option<std::path::PathBuf>,

    /// Formats of the figures, any of svg, png (300 dpi) and pdf, comma separated; each from the
    /// same drawing, with the fonts shipped in the tool.
    #[arg(long, value_enum, value_delimiter = ',', default_values_t = [FigureFormatArg::Svg], value_name = "FORMATS")]
    pub figure_format: Vec<FigureFormatArg>,

    #[command(flatten)]
    pub read: ReadArgs,

    /// Confidence level of the θ intervals.
    #[arg(long, default_value_t = 0.95, value_parser = parse_confidence)]
    pub confidence: f64,

    /// Bootstrap replicates for a θ cross-check (off by default: in the coverage study its
    /// percentile interval held θ in 84–90 % of series; the headline Fieller interval is the
    /// calibrated one).
    #[arg(long, default_value_t = 0, value_name = "N")]
    pub bootstrap: usize,

    /// Largest --bootstrap accepted (each replicate of each series costs 8 bytes and a refit).
    #[arg(long, default_value_t = 100_000, value_name = "N")]
    pub max_bootstrap: usize,

    /// Seed of the bootstrap (same seed, same numbers).
    #[arg(long, default_value_t = 1)]
    pub seed: u64,

    /// Partial specific volume of the polymer v̄ in mL/g (for ψ1, κ1, χ).
    #[arg(long, value_name = "ML_PER_G", value_parser = parse_positive)]
    pub polymer_specific_volume: Option<f64>,

    /// Molar volume of the solvent V1 in mL/mol (for ψ1, κ1, χ).
    #[arg(long, value_name = "ML_PER_MOL", value_parser = parse_positive)]
    pub solvent_molar_volume: Option<f64>,

    /// Solvent properties (CSV, as for plan): each series takes the molar volume of its own
    /// solvent (matched by the `solvent` column, else by the series name); per-series columns win.
    #[arg(long, value_name = "CSV")]
    pub solvents: Option<PathBuf>,

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

/// A thermostat range given in °C as LOW:HIGH, returned in kelvin: the one place it is converted.
fn parse_thermostat(text: &str) -> Result<(f64, f64), String> {
    let (lo, hi) = text.split_once(':').ok_or_else(|| format!("'{text}' is not LOW:HIGH (e.g. 10:80)"))?;
    let lo: f64 = lo.trim().parse().map_err(|_| format!("'{lo}' is not a number"))?;
    let hi: f64 = hi.trim().parse().map_err(|_| format!("'{hi}' is not a number"))?;
    if !(lo.is_finite() && hi.is_finite()) || lo >= hi {
        return Err(format!("LOW must be below HIGH, got {lo}:{hi}"));
    }
    let (lo_k, hi_k) = (TemperatureUnit::Celsius.to_kelvin(lo), TemperatureUnit::Celsius.to_kelvin(hi));
    if lo_k <= 0.0 {
        return Err(format!("{lo} °C is below absolute zero"));
    }
    Ok((lo_k, hi_k))
}
