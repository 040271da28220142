//! `thetaseek analyze`: read → group → fit → report.

use super::{check_outputs, read_input, write_outputs, PendingOutput};
use crate::cli::{AnalyzeArgs, VirialArg};
use thetaseek::analysis::{self, Settings, Status};
use thetaseek::dataset::{self, Measurement};
use thetaseek::error::Error;
use thetaseek::input::{self, ReadOptions};
use thetaseek::output::Destination;
use thetaseek::report::{self, InputFile, Report, ReportSettings, SeriesReport};
use thetaseek::units::{ConcentrationUnit, PressureUnit, TemperatureUnit};
use thetaseek::virial::{FormChoice, VirialForm};

/// Runs the subcommand; returns the exit code on success paths (0).
pub fn run(args: &AnalyzeArgs) -> Result<(), Error> {
    let options = read_options(args)?;
    let settings = Settings {
        virial: match args.virial {
            VirialArg::Auto => FormChoice::Auto,
            VirialArg::Linear => FormChoice::Fixed(VirialForm::Linear),
            VirialArg::Quadratic => FormChoice::Fixed(VirialForm::Quadratic),
            VirialArg::Sqrt => FormChoice::Fixed(VirialForm::Sqrt),
        },
    };

    let mut inputs = Vec::new();
    let mut measurements: Vec<Measurement> = Vec::new();
    let mut run_warnings = Vec::new();
    for (index, path) in args.files.iter().enumerate() {
        let bytes = read_input(path)?;
        let name = path.display().to_string();
        let contents = input::read_osmometry(&name, index, &bytes, &options)?;
        for column in &contents.ignored_columns {
            run_warnings.push(format!("{name}: column '{column}' is not used"));
        }
        measurements.extend(contents.measurements);
        inputs.push(InputFile::new(&name, &bytes));
    }

    let series = dataset::group(&measurements);
    let results = analysis::analyze(&series, &settings);
    let report = Report {
        schema_version: report::SCHEMA_VERSION,
        tool_version: env!("CARGO_PKG_VERSION").to_string(),
        inputs,
        settings: ReportSettings {
            temperature_unit: options.temperature_unit.map(|u| u.to_string()),
            concentration_unit: options.concentration_unit.map(|u| u.to_string()),
            pressure_unit: options.pressure_unit.map(|u| u.to_string()),
            solvent_density_g_per_ml: args.solvent_density,
            ..ReportSettings::new(&format!("{:?}", args.virial).to_lowercase())
        },
        warnings: run_warnings,
        series: results.iter().zip(&series).map(|(r, s)| SeriesReport::new(r, s)).collect(),
    };

    let terminal = report::render_terminal(&report);
    if results.iter().all(|r| r.status == Status::Refused) {
        eprint!("{terminal}");
        let reasons: Vec<String> =
            report.series.iter().map(|s| format!("{}: {}", s.name, s.reason.clone().unwrap_or_default())).collect();
        return Err(Error::NothingAnalysed(reasons.join("; ")));
    }

    let mut outputs = Vec::new();
    if let Some(path) = &args.report {
        outputs.push(PendingOutput { destination: Destination::parse(path), bytes: report::to_json(&report) });
    }
    if let Some(path) = &args.table {
        let bytes = report::table_csv(&report).map_err(|e| Error::Setting(format!("cannot render the table: {e}")))?;
        outputs.push(PendingOutput { destination: Destination::parse(path), bytes });
    }
    if outputs.iter().filter(|o| o.destination == Destination::Stdout).count() > 1 {
        return Err(Error::Setting("only one of --report and --table can go to standard output ('-')".into()));
    }
    check_outputs(&outputs, &args.files)?;
    let stdout_taken = outputs.iter().any(|o| o.destination == Destination::Stdout);
    write_outputs(outputs)?;
    if !args.quiet {
        // The table goes to stderr when stdout carries the report or the CSV.
        if stdout_taken {
            eprint!("{terminal}");
        } else {
            print!("{terminal}");
        }
    }
    Ok(())
}

fn read_options(args: &AnalyzeArgs) -> Result<ReadOptions, Error> {
    fn unit<U: std::str::FromStr<Err = thetaseek::units::UnknownUnit>>(
        text: &Option<String>,
        flag: &str,
    ) -> Result<Option<U>, Error> {
        text.as_deref().map(|t| t.parse::<U>().map_err(|e| Error::Setting(format!("{flag}: {e}")))).transpose()
    }
    let density = match args.solvent_density {
        Some(d) if !(d.is_finite() && d > 0.0) => {
            return Err(Error::Setting(format!("--solvent-density: {d} is not a positive density in g/mL")));
        }
        Some(d) => Some(d * 1000.0),
        None => None,
    };
    Ok(ReadOptions {
        temperature_unit: unit::<TemperatureUnit>(&args.temperature_unit, "--temperature-unit")?,
        concentration_unit: unit::<ConcentrationUnit>(&args.concentration_unit, "--concentration-unit")?,
        pressure_unit: unit::<PressureUnit>(&args.pressure_unit, "--pressure-unit")?,
        solvent_density_kg_per_m3: density,
    })
}
