//! `thetaseek plan`: θ of each solvent (from data or from analyze reports) → solvent checks →
//! ranking and recommendation, with the safety cautions always shown.

use super::{check_outputs, load, read_input, write_outputs, Loaded, PendingOutput};
use crate::cli::{GoalArg, PlanArgs};
use thetaseek::analysis::{self, Settings};
use thetaseek::dataset::Route;
use thetaseek::error::{Error, InputError};
use thetaseek::input;
use thetaseek::input::ReadOptions;
use thetaseek::output::Destination;
use thetaseek::plan::{self, Goal, PlanSeries, PlanSettings};
use thetaseek::plot;
use thetaseek::report::{self, plan::PlanReport, InputFile, Report, ReportSettings};
use thetaseek::theta::ThetaSettings;

/// Runs the subcommand.
pub fn run(args: &PlanArgs) -> Result<(), Error> {
    let settings = plan_settings(args)?;
    // Advice rests on every series given: a value that cannot be used refuses the run here.
    let options = ReadOptions { strict: true, ..super::analyze::read_options(&args.read)? };

    // JSON reports are read as they are; data files are analysed here (no bootstrap: the plan
    // uses θ, its Fieller interval and the fitted line).
    let (reports, data): (Vec<_>, Vec<_>) =
        args.inputs.iter().cloned().partition(|p| p.extension().is_some_and(|e| e.eq_ignore_ascii_case("json")));
    let mut inputs: Vec<InputFile> = Vec::new();
    let mut series: Vec<PlanSeries> = Vec::new();
    // ⟨r²⟩0/M measured by the inputs (viscometry, light scattering at θ): used when the flag
    // is not given.
    let mut measured: Vec<(f64, String)> = Vec::new();
    for path in &reports {
        let (report, input) = super::read_report(path, args.read.max_input_mb)?;
        series.extend(report.series.iter().filter(|s| s.route != Route::Viscometry).map(report::plan::plan_series));
        measured.extend(report::plan::measured_dimensions(&report.series));
        inputs.push(input);
    }
    if !data.is_empty() {
        let Loaded { inputs: data_inputs, mut dataset, .. } = load(&data, &options, args.read.max_input_mb)?;
        // The plan reads θ of osmometry and tables; viscometry and light scattering give it the
        // chain's dimensions.
        dataset.critical.clear();
        let analysis_settings = Settings {
            virial: super::analyze::virial_choice(args.read.virial),
            theta: ThetaSettings { confidence: args.confidence, bootstrap_replicates: 0, ..ThetaSettings::default() },
            volumes: None,
            viscometry: super::analyze::viscometry_settings(&args.read, args.confidence),
        };
        let results = analysis::analyze(&dataset, &analysis_settings);
        let report = Report::new(
            data_inputs.clone(),
            ReportSettings::new(thetaseek::virial::FormChoice::Auto),
            Vec::new(),
            &results,
            &dataset,
        );
        series.extend(
            report
                .series
                .iter()
                .filter(|s| !matches!(s.route, Route::Viscometry | Route::LightScattering))
                .map(report::plan::plan_series),
        );
        measured.extend(report::plan::measured_dimensions(&report.series));
        inputs.extend(data_inputs);
    }

    let solvents_name = args.solvents.display().to_string();
    let solvents = input::read_solvents(&solvents_name, &read_input(&args.solvents, args.read.max_input_mb)?)?;
    for s in &series {
        if !solvents.iter().any(|p| p.name == s.solvent) {
            let known: Vec<&str> = solvents.iter().map(|p| p.name.as_str()).collect();
            return Err(InputError::file(
                &solvents_name,
                format!(
                    "solvent '{}' (series '{}') has no row here; add one, or name the solvent with a 'solvent' column in the data. Listed: {}",
                    s.solvent,
                    s.series,
                    known.join(", ")
                ),
            )
            .into());
        }
    }

    let mut settings = settings;
    let dimensions_from = match (settings.unperturbed_r2_over_m, measured.first()) {
        (Some(_), _) => Some("--unperturbed-dimension".to_string()),
        (None, Some((value, from))) => {
            settings.unperturbed_r2_over_m = Some(*value);
            Some(from.clone())
        }
        (None, None) => None,
    };
    let plan = plan::plan(&series, &solvents, &settings);
    let plan_report = PlanReport::new(inputs, &settings, plan, dimensions_from.clone());
    let mut outputs = Vec::new();
    if let Some(path) = &args.report {
        outputs.push(PendingOutput::bytes(Destination::parse(path), report::to_json(&plan_report)));
    }
    let svg = if args.figure.is_some() || args.html.is_some() {
        Some(
            plot::render_svg(1000, 700, |root| plot::draw_plan(root, &series, &solvents, &plan_report.plan, &settings))
                .map_err(|e| Error::Setting(e.to_string()))?,
        )
    } else {
        None
    };
    if let Some(path) = &args.html {
        let html = thetaseek::html::plan_html(&plan_report, svg.as_deref(), &thetaseek::html::report_date());
        outputs.push(PendingOutput::bytes(Destination::File(path.clone()), html.into_bytes()));
    }
    if let (Some(path), Some(svg)) = (&args.figure, svg) {
        outputs.push(PendingOutput::bytes(Destination::File(path.clone()), super::figure_bytes(path, svg)?));
    }
    let mut all_inputs = args.inputs.clone();
    all_inputs.push(args.solvents.clone());
    check_outputs(&outputs, &all_inputs)?;
    let stdout_taken = outputs.iter().any(|o| o.destination == Destination::Stdout);
    write_outputs(outputs)?;
    let mut text = String::new();
    if let (Some(d), Some(from)) = (plan_report.settings.unperturbed_r2_over_m_angstrom2_mol_per_g, &dimensions_from) {
        text.push_str(&format!("Unperturbed dimensions: ⟨r²⟩0/M = {d:.4} Å² mol/g, from {from}\n\n"));
    }
    text.push_str(&report::plan::render_terminal(&plan_report.plan));
    if stdout_taken || args.quiet {
        // The cautions are shown even then, on stderr.
        eprint!("{}", if args.quiet { report::plan::render_cautions(&plan_report.plan.cautions) } else { text });
    } else {
        print!("{text}");
    }
    Ok(())
}

fn plan_settings(args: &PlanArgs) -> Result<PlanSettings, Error> {
    let goal = match (args.goal, args.target_a2, args.target_expansion) {
        (GoalArg::Unperturbed, None, None) => Goal::Unperturbed,
        (GoalArg::Unperturbed, _, _) => {
            return Err(Error::Setting("--target-a2 and --target-expansion go with --goal expanded".into()))
        }
        (GoalArg::Expanded, Some(a2), None) => Goal::TargetA2(a2),
        (GoalArg::Expanded, None, Some(alpha)) => Goal::TargetExpansion(alpha),
        (GoalArg::Expanded, _, _) => {
            return Err(Error::Setting(
                "--goal expanded needs exactly one of --target-a2 and --target-expansion".into(),
            ))
        }
    };
    Ok(PlanSettings {
        // g/mol → kg/mol; mL/g → m³/kg; Å² mol/g → m² mol/kg (10⁻²⁰ m² × 10³ g/kg).
        molar_mass: args.molar_mass * 1e-3,
        specific_volume: args.polymer_specific_volume.map(|v| v * 1e-3),
        goal,
        thermostat: args.thermostat_k,
        a2_tolerance: args.a2_tolerance,
        unperturbed_r2_over_m: args.unperturbed_dimension.map(|d| d * 1e-17),
    })
}
