//! `thetaseek analyze`: read → group → fit → θ → report.

use super::campaign::Streamed;
use super::{check_outputs, load, write_outputs, Bar, Loaded, PendingOutput};
use crate::cli::{AnalyzeArgs, DetailArg, ReadArgs, VirialArg};
use thetaseek::analysis::{self, Settings, Status};
use thetaseek::dataset::Volumes;
use thetaseek::error::Error;
use thetaseek::input::ReadOptions;
use thetaseek::output::Destination;
use thetaseek::plot;
use thetaseek::report::{self, Detail, Report, ReportSettings};
use thetaseek::theta::ThetaSettings;
use thetaseek::units::{ConcentrationUnit, PressureUnit, TemperatureUnit};
use thetaseek::virial::{FormChoice, VirialForm};

/// Runs the subcommand.
pub fn run(args: &AnalyzeArgs) -> Result<(), Error> {
    let mut options = read_options(&args.read)?;
    let settings = settings(args)?;
    let table = read_solvent_table(args)?;
    if let Some(table) = &table {
        options.solvent_densities = table.rows.iter().filter_map(|r| r.density.map(|d| (r.name.clone(), d))).collect();
    }

    if args.bootstrap > args.max_bootstrap {
        return Err(Error::Setting(format!(
            "--bootstrap {} is above --max-bootstrap {} (memory grows by 8 bytes per replicate per series in flight, time by one refit each); raise --max-bootstrap to run it",
            args.bootstrap, args.max_bootstrap
        )));
    }
    let report_settings = |series_count: usize| ReportSettings {
        temperature_unit: options.temperature_unit.map(|u| u.to_string()),
        concentration_unit: options.concentration_unit.map(|u| u.to_string()),
        pressure_unit: options.pressure_unit.map(|u| u.to_string()),
        solvent_density_g_per_ml: args.read.solvent_density,
        confidence: args.confidence,
        bootstrap_replicates: args.bootstrap,
        seed: args.seed,
        polymer_specific_volume_ml_per_g: args.polymer_specific_volume,
        solvent_molar_volume_ml_per_mol: args.solvent_molar_volume,
        a2_tolerance_mol_ml_per_g2: args.a2_tolerance,
        report_detail: detail(args, series_count),
        ..ReportSettings::new(settings.virial)
    };
    let figures_wanted = args.figures.is_some() || args.html.is_some();
    // One large osmometry file is analysed as it is read (see `campaign::stream`).
    let streamable = !thetaseek::input::is_workbook(&args.files[0].display().to_string());
    let mut loaded = if args.files.len() == 1 && !figures_wanted && streamable {
        match super::campaign::stream(args, &options, &settings, report_settings, table.as_ref())? {
            Streamed::Done => return Ok(()),
            Streamed::Loaded(loaded) => *loaded,
            Streamed::Reread => load(&args.files, &options, args.read.max_input_mb)?,
        }
    } else {
        load(&args.files, &options, args.read.max_input_mb)?
    };
    attach_solvent_volumes(&mut loaded, table.as_ref(), args);
    let series_count = loaded.dataset.series.len()
        + loaded.dataset.tabulated.len()
        + names_in_order(loaded.critical.iter().map(|r| r.series.as_str())).len()
        + names_in_order(loaded.scattering.iter().map(|r| r.series.as_str())).len();
    let report_settings = report_settings(series_count);
    // A campaign without figures is analysed and written a chunk of series at a time.
    if series_count > report::CAMPAIGN_SERIES && !figures_wanted {
        return super::campaign::run(args, loaded, &settings, report_settings);
    }
    let Loaded { inputs, dataset, warnings: run_warnings, critical, volumes, scattering, refused } = loaded;
    let bar = Bar::new(analysis::work_units(&dataset.series, &dataset.tabulated, &settings), args.quiet);
    let results = analysis::analyze_with_progress(&dataset.series, &dataset.tabulated, &settings, &bar);
    bar.finish();
    let mut report = Report::new(inputs, report_settings, run_warnings, &results, &dataset);
    add_critical_series(&mut report, &critical, &volumes, &settings);
    add_scattering_series(&mut report, &scattering, &volumes, &settings);
    report.add_refused_series(&refused);
    report.compare_routes();

    if report.series.iter().all(|s| s.status == Status::Refused) {
        if !args.quiet {
            eprint!("{}", report::render_terminal(&report));
        }
        return Err(Error::NothingAnalysed(grouped_reasons(&report)));
    }

    let mut outputs = Vec::new();
    if let Some(path) = &args.report {
        outputs.push(PendingOutput::streamed(Destination::parse(path), |out| report::write_report_json(&report, out)));
    }
    if let Some(path) = &args.table {
        outputs.push(PendingOutput::bytes(Destination::parse(path), report::table_csv(&report)));
    }
    let figures = if args.figures.is_some() || args.html.is_some() {
        plot::figures_for_report(&report).map_err(|e| Error::Setting(e.to_string()))?
    } else {
        Vec::new()
    };
    if let Some(path) = &args.html {
        let html = thetaseek::html::analyze_html(&report, &figures, &thetaseek::html::report_date());
        outputs.push(PendingOutput::bytes(Destination::File(path.clone()), html.into_bytes()));
    }
    if let Some(dir) = &args.figures {
        for figure in figures {
            outputs.push(PendingOutput::bytes(Destination::File(dir.join(figure.file_name)), figure.svg.into_bytes()));
        }
    }
    if let Some(path) = &args.series_table {
        let filter =
            if args.needs_attention { report::SeriesFilter::NeedsAttention } else { report::SeriesFilter::All };
        outputs.push(PendingOutput::bytes(Destination::parse(path), report::series_table_csv(&report, filter)));
    }
    super::check_one_stdout(outputs.iter().map(|o| &o.destination))?;
    check_outputs(&outputs, &input_paths(args))?;
    // The figures folder is made only once every check has passed, and removed again if it
    // was new and the outputs could not be written.
    let new_folder = args.figures.as_ref().filter(|dir| !dir.exists());
    if let Some(dir) = &args.figures {
        std::fs::create_dir_all(dir).map_err(|source| Error::Io {
            action: "cannot create",
            path: dir.clone(),
            source,
        })?;
    }
    let stdout_taken = outputs.iter().any(|o| o.destination == Destination::Stdout);
    if let Err(error) = write_outputs(outputs) {
        if let Some(dir) = new_folder {
            let _ = std::fs::remove_dir(dir);
        }
        return Err(error);
    }
    if !args.quiet {
        super::print_terminal(&report, stdout_taken);
    }
    match refused.len() {
        0 => Ok(()),
        n => Err(Error::SomeSeriesRefused(n)),
    }
}

/// Every file the run reads (none may be an output).
pub(crate) fn input_paths(args: &AnalyzeArgs) -> Vec<std::path::PathBuf> {
    args.files.iter().chain(&args.solvents).cloned().collect()
}

/// A solvents table given to analyze, read once, with its hash for the report's inputs.
pub(crate) struct SolventTable {
    /// Its rows.
    pub rows: Vec<thetaseek::input::SolventProperties>,
    /// Its name and SHA-256.
    pub input: report::InputFile,
}

fn read_solvent_table(args: &AnalyzeArgs) -> Result<Option<SolventTable>, Error> {
    let Some(path) = &args.solvents else { return Ok(None) };
    let name = path.display().to_string();
    let bytes = super::read_input(path, args.read.max_input_mb)?;
    let rows = thetaseek::input::read_solvents(&name, &bytes)?;
    Ok(Some(SolventTable { rows, input: report::InputFile::new(&name, &bytes) }))
}

/// Gives each series its own solvent's molar volume from the table (columns win), and warns
/// where one `--solvent-molar-volume` still covers series that name different solvents.
fn attach_solvent_volumes(loaded: &mut Loaded, table: Option<&SolventTable>, args: &AnalyzeArgs) {
    let solvent_of = |name: &str| loaded.dataset.solvents.iter().find(|(s, _)| s == name).map(|(_, v)| v.clone());
    let solvents: Vec<Option<String>> = loaded.dataset.series.iter().map(|s| solvent_of(&s.name)).collect();
    let flag = args.solvent_molar_volume.map(|v| v * 1e-6);
    if let Some(table) = table {
        if !loaded.inputs.iter().any(|i| i.path == table.input.path) {
            loaded.inputs.push(table.input.clone());
        }
        let v = args.polymer_specific_volume.map(|v| v * 1e-3);
        for (series, solvent) in loaded.dataset.series.iter_mut().zip(&solvents) {
            let warning = thetaseek::solvent::attach_molar_volume(series, solvent.as_deref(), &table.rows, v, flag);
            loaded.warnings.extend(warning);
        }
    }
    // Series the flag still covers: no volumes of their own, none from the table.
    let covered: Vec<&str> = loaded
        .dataset
        .series
        .iter()
        .zip(&solvents)
        .filter(|(s, _)| s.volumes.is_none())
        .filter_map(|(_, solvent)| solvent.as_deref())
        .collect();
    loaded.warnings.extend(thetaseek::solvent::one_volume_for_several_solvents(flag, &covered));
}

/// The report's detail: figures and HTML need the readings; otherwise `auto` follows the
/// number of series.
fn detail(args: &AnalyzeArgs, series: usize) -> Detail {
    match args.report_detail {
        _ if args.figures.is_some() || args.html.is_some() => Detail::Full,
        DetailArg::Full => Detail::Full,
        DetailArg::Fits => Detail::Fits,
        DetailArg::Auto => Detail::for_series_count(series),
    }
}

/// The library's form choice for the command-line value.
pub(crate) fn virial_choice(arg: VirialArg) -> FormChoice {
    match arg {
        VirialArg::Auto => FormChoice::Auto,
        VirialArg::Linear => FormChoice::Fixed(VirialForm::Linear),
        VirialArg::Quadratic => FormChoice::Fixed(VirialForm::Quadratic),
        VirialArg::Sqrt => FormChoice::Fixed(VirialForm::Sqrt),
    }
}

fn settings(args: &AnalyzeArgs) -> Result<Settings, Error> {
    let virial = virial_choice(args.read.virial);
    let volumes = match (args.polymer_specific_volume, args.solvent_molar_volume) {
        // mL/g → m³/kg and mL/mol → m³/mol.
        (Some(v), Some(m)) => Some(Volumes { specific_volume: v * 1e-3, molar_volume: m * 1e-6 }),
        (None, None) => None,
        // The solvents table gives each series its V1; v̄ is the polymer's.
        (Some(_), None) if args.solvents.is_some() => None,
        _ => {
            return Err(Error::Setting(
                "give both --polymer-specific-volume and --solvent-molar-volume (or --solvents with the molar volumes), or neither".into(),
            ))
        }
    };
    Ok(Settings {
        virial,
        theta: ThetaSettings {
            confidence: args.confidence,
            bootstrap_replicates: args.bootstrap,
            seed: args.seed,
            // mol mL/g² is numerically mol m³/kg² (see units).
            a2_tolerance: args.a2_tolerance,
            virial,
        },
        volumes,
    })
}

pub(crate) fn read_options(args: &ReadArgs) -> Result<ReadOptions, Error> {
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
        solvent_densities: Vec::new(),
        temperature_unit: unit::<TemperatureUnit>(&args.temperature_unit, "--temperature-unit")?,
        concentration_unit: unit::<ConcentrationUnit>(&args.concentration_unit, "--concentration-unit")?,
        pressure_unit: unit::<PressureUnit>(&args.pressure_unit, "--pressure-unit")?,
        solvent_density_kg_per_m3: density,
        // mol cm²/g² → mol m²/kg²: 10⁻⁴ m² over 10⁻⁶ kg²; mL/g → m³/kg; nm → m.
        optical_constant: args.optical_constant.map(|k| k * 1e2),
        refractive_index: args.refractive_index,
        dn_dc: args.dn_dc.map(|d| d * 1e-3),
        wavelength_m: args.wavelength.map(|l| l * 1e-9),
        strict: args.strict,
        sheet: args.sheet.clone(),
        columns: args.columns.iter().map(|c| column_mapping(c)).collect::<Result<_, _>>()?,
    })
}

/// One `--column NAME=HEADER`: a column name we read, and the header cell to read as it.
fn column_mapping(text: &str) -> Result<(thetaseek::input::Role, String), Error> {
    let refuse = |why: &str| {
        Error::Setting(format!("--column {text}: {why}; write it as NAME=HEADER, e.g. temperature=\"Temp (°C)\""))
    };
    let (name, header) = text.split_once('=').ok_or_else(|| refuse("no '='"))?;
    let name = name.split_whitespace().collect::<Vec<_>>().join(" ").to_lowercase();
    let role = thetaseek::input::Role::from_name(&name)
        .ok_or_else(|| refuse(&format!("'{name}' is not a column name we read")))?;
    if header.trim().is_empty() {
        return Err(refuse("the header is empty"));
    }
    Ok((role, header.trim().to_string()))
}

/// Why series were refused, grouped by reason with counts (a campaign may refuse thousands).
fn grouped_reasons(report: &Report) -> String {
    let mut tally = report::Tally::default();
    report.series.iter().for_each(|s| tally.add(s));
    tally.refusals_in_brief()
}

/// The Shultz–Flory route for every series of critical temperatures, in order of appearance.
pub(super) fn add_critical_series(
    report: &mut Report,
    rows: &[thetaseek::input::CriticalRow],
    volumes: &[(String, Volumes)],
    settings: &Settings,
) {
    for name in names_in_order(rows.iter().map(|r| r.series.as_str())) {
        let fractions: Vec<(f64, f64)> =
            rows.iter().filter(|r| r.series == name).map(|r| (r.molar_mass, r.critical_temperature_k)).collect();
        let v = volumes.iter().find(|(s, _)| s == name).map(|(_, v)| *v).or(settings.volumes);
        let result = match v {
            Some(v) => thetaseek::theta::critical_route(&fractions, v, settings.theta.confidence),
            None => Err("critical temperatures need v̄ and V1: give --polymer-specific-volume and --solvent-molar-volume, or the columns".into()),
        };
        report.add_critical_series(name, result);
    }
}

/// Light-scattering series: Zimm fits per temperature, then the same θ machinery (on the
/// light-scattering A2, a weight-average quantity).
pub(super) fn add_scattering_series(
    report: &mut Report,
    rows: &[thetaseek::input::ScatteringRow],
    volumes: &[(String, Volumes)],
    settings: &Settings,
) {
    for name in names_in_order(rows.iter().map(|r| r.series.as_str())) {
        let of: Vec<&thetaseek::input::ScatteringRow> = rows.iter().filter(|r| r.series == name).collect();
        // `--virial quadratic` adds the 3 A3 c² term to the zero-angle fit; every other choice
        // keeps the straight line.
        let quadratic = settings.virial == FormChoice::Fixed(VirialForm::Quadratic);
        let mut fits = thetaseek::scattering::fit_series(&of, quadratic);
        let v = volumes.iter().find(|(s, _)| s == name).map(|(_, v)| *v).or(settings.volumes);
        let theta = thetaseek::theta::theta_from_points(
            &thetaseek::scattering::points(&fits),
            // Each temperature's SE from its own Zimm fit: taken as known (normal quantile),
            // widened by the line's lack-of-fit test where the points scatter more.
            thetaseek::theta::SeBasis::Known,
            thetaseek::dataset::Quantity::SecondVirial,
            v,
            &settings.theta,
        );
        if let Some(t) = theta.theta_k {
            thetaseek::scattering::set_expansion(&mut fits, t);
        }
        report.add_scattering_series(name, fits, &theta);
    }
}

/// Distinct names in order of first appearance.
pub(super) fn names_in_order<'a>(names: impl Iterator<Item = &'a str>) -> Vec<&'a str> {
    let mut seen = std::collections::HashSet::new();
    names.filter(|n| seen.insert(*n)).collect()
}
