//! `thetaseek next`: analyse the data, then plan the temperature runs that narrow θ most.

use super::{check_outputs, load, write_outputs, Loaded, PendingOutput};
use crate::cli::NextArgs;
use std::fmt::Write;
use thetaseek::analysis::{self, Settings};
use thetaseek::dataset::TemperaturePoint;
use thetaseek::design::{next_runs, DesignSettings, MeasuredTemperature, SeriesDesign};
use thetaseek::error::{Error, InputError};
use thetaseek::input;
use thetaseek::input::ReadOptions;
use thetaseek::output::Destination;
use thetaseek::report::{self, InputFile};
use thetaseek::safety::{critical_of, SafeWindow};
use thetaseek::theta::{a2_points, ThetaSettings};
use thetaseek::units::kelvin_to_celsius;

/// The advice of one run, as JSON.
#[derive(Debug, serde::Serialize)]
struct NextReport {
    schema_version: u32,
    tool_version: String,
    inputs: Vec<InputFile>,
    series: Vec<SeriesDesign>,
}

/// Without a solvents table, runs stay within this far of the measured temperatures: boiling
/// and phase separation could not be checked.
const UNCHECKED_MARGIN_K: f64 = 5.0;
/// With one, the default thermostat range reaches this far beyond the measured temperatures.
const CHECKED_MARGIN_K: f64 = 15.0;

/// One series to plan runs for, with what the safety window needs (SI).
struct Planned {
    name: String,
    solvent: String,
    measured: Vec<MeasuredTemperature>,
    /// The Flory–Krigbaum line's a and b (A2 = a + b/T), for θ and ψ1.
    line: Option<(f64, f64)>,
    /// Mean Mn, kg/mol.
    mn: Option<f64>,
    /// v̄ given with the series, m³/kg.
    specific_volume: Option<f64>,
}

/// Runs the subcommand.
pub fn run(args: &NextArgs) -> Result<(), Error> {
    // Advice rests on every series given: a value that cannot be used refuses the run here.
    let options = ReadOptions { strict: true, ..super::analyze::read_options(&args.read)? };
    // JSON reports written by analyze carry what is needed (A2 with its SEs, concentrations);
    // data files are analysed here.
    let (reports, data): (Vec<_>, Vec<_>) =
        args.files.iter().cloned().partition(|p| p.extension().is_some_and(|e| e.eq_ignore_ascii_case("json")));
    let mut inputs = Vec::new();
    let mut planned: Vec<Planned> = Vec::new();
    for path in &reports {
        let (report, input) = super::read_report(path, args.read.max_input_mb)?;
        let name = input.path.clone();
        planned.extend(from_report(&report).map_err(|e| InputError::file(&name, e))?);
        inputs.push(input);
    }
    if !data.is_empty() {
        let Loaded { inputs: data_inputs, mut dataset, .. } = load(&data, &options, args.read.max_input_mb)?;
        // `next` designs osmometry runs.
        dataset.tabulated.clear();
        dataset.critical.clear();
        dataset.scattering.clear();
        inputs.extend(data_inputs);
        let settings = Settings {
            virial: super::analyze::virial_choice(args.read.virial),
            theta: ThetaSettings { confidence: args.confidence, bootstrap_replicates: 0, ..ThetaSettings::default() },
            volumes: None,
            viscometry: super::analyze::viscometry_settings(&args.read, args.confidence),
        };
        let results = analysis::analyze(&dataset, &settings);
        for (series, result) in dataset.series.iter().zip(&results) {
            let measured: Vec<MeasuredTemperature> = result
                .fits
                .iter()
                .zip(a2_points(&result.fits).0)
                .filter_map(|(fit, point)| {
                    let set = series.temperatures.get(fit.set_index)?;
                    Some(MeasuredTemperature { point, concentrations: set.concentration_kg_per_m3.clone() })
                })
                .collect();
            let theta = result.theta.as_ref();
            planned.push(Planned {
                name: series.name.clone(),
                solvent: dataset
                    .solvents
                    .iter()
                    .find(|(s, _)| *s == series.name)
                    .map_or_else(|| series.name.clone(), |(_, v)| v.clone()),
                measured,
                line: theta.and_then(|t| t.line.as_ref()).map(|l| (l.a(), l.b())),
                mn: theta.and_then(|t| t.mn_consistency.as_ref()).map(|m| m.mean_kg_per_mol),
                specific_volume: series.volumes.map(|v| v.specific_volume),
            });
        }
    }
    let solvents = match &args.solvents {
        Some(path) => {
            let name = path.display().to_string();
            let bytes = super::read_input(path, args.read.max_input_mb)?;
            let table = input::read_solvents(&name, &bytes)?;
            inputs.push(InputFile::new(&name, &bytes));
            Some(table)
        }
        None => None,
    };
    let mut designs = Vec::new();
    for p in &planned {
        let window = safe_window(p, args, solvents.as_deref());
        let design_settings = DesignSettings {
            window,
            step_k: args.step,
            // g/L = kg/m³.
            concentrations: args.concentrations.clone(),
            replicates: args.replicates as usize,
            budget: args.budget as usize,
            confidence: args.confidence,
            simulations: args.simulations,
            seed: args.seed,
        };
        designs.push(next_runs(&p.name, &p.measured, &design_settings));
    }
    if designs.is_empty() {
        return Err(Error::NothingAnalysed("no osmometry series to plan from".into()));
    }

    let mut outputs = Vec::new();
    let next = NextReport {
        schema_version: report::SCHEMA_VERSION,
        tool_version: env!("CARGO_PKG_VERSION").into(),
        inputs,
        series: designs,
    };
    if let Some(path) = &args.report {
        outputs.push(PendingOutput::bytes(Destination::parse(path), report::to_json(&next)));
    }
    if let Some(path) = &args.figure {
        let svg = thetaseek::plot::render_svg(900, 600, |root| thetaseek::plot::draw_next(root, &next.series))
            .map_err(|e| Error::Setting(e.to_string()))?;
        outputs.push(PendingOutput::bytes(Destination::File(path.clone()), super::figure_bytes(path, svg)?));
    }
    let mut all_inputs = args.files.clone();
    all_inputs.extend(args.solvents.clone());
    check_outputs(&outputs, &all_inputs)?;
    let stdout_taken = outputs.iter().any(|o| o.destination == Destination::Stdout);
    write_outputs(outputs)?;
    if args.quiet {
        // The cautions are shown even then, on stderr.
        eprint!("{}", report::plan::render_cautions(&thetaseek::safety::cautions()));
    } else {
        let text = render(&next.series);
        if stdout_taken {
            eprint!("{text}");
        } else {
            print!("{text}");
        }
    }
    Ok(())
}

/// The window runs may be recommended in: the thermostat's range (given, or the measured one
/// widened by 15 K with a solvents table and 5 K without), the solvent's liquid range, and the
/// sample's critical temperature where ψ1 can be had.
fn safe_window(p: &Planned, args: &NextArgs, solvents: Option<&[input::SolventProperties]>) -> SafeWindow {
    let (t_lo, t_hi) = p.measured.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), m| {
        (a.min(m.point.temperature_k), b.max(m.point.temperature_k))
    });
    let margin = if solvents.is_some() { CHECKED_MARGIN_K } else { UNCHECKED_MARGIN_K };
    let mut window = SafeWindow::new(args.thermostat_k.unwrap_or((t_lo - margin, t_hi + margin)));
    let props = solvents.and_then(|table| table.iter().find(|s| s.name == p.solvent));
    match (solvents, props) {
        (None, _) => window.unchecked.push(format!(
            "no solvents table (--solvents): the boiling point, the melting point and phase separation of the sample were not checked; runs are kept within {UNCHECKED_MARGIN_K:.0} K of the measured temperatures unless --thermostat says otherwise"
        )),
        (Some(_), None) => window.unchecked.push(format!(
            "solvent '{}' has no row in the solvents table: its liquid range and the sample's phase separation were not checked",
            p.solvent
        )),
        (Some(_), Some(props)) => window.liquid_range(props),
    }
    let molar_mass = args.molar_mass.map(|m| m * 1e-3).or(p.mn);
    let specific_volume = p.specific_volume.or(args.polymer_specific_volume.map(|v| v * 1e-3));
    match (p.line, molar_mass, specific_volume, props.and_then(|s| s.molar_volume)) {
        (Some((a, b)), Some(m), Some(v), Some(v1)) => match critical_of(a, b, m, v, v1) {
            Some((tc, side)) => window.phase_separation(tc, side, &p.name),
            None => window
                .unchecked
                .push("the sample's critical temperature could not be computed from its θ and ψ1".into()),
        },
        (_, _, None, _) if props.is_some() => window.unchecked.push(
            "phase separation: give --polymer-specific-volume (v̄) for ψ1 and the sample's critical temperature".into(),
        ),
        (_, _, _, None) if props.is_some() => window
            .unchecked
            .push(format!("phase separation: the solvents table gives no molar volume for '{}'", p.solvent)),
        _ => {}
    }
    window
}

/// The measured temperatures of every series in a report that analyze wrote: the A2 values and
/// SEs the θ fit used (`theta.points`, one per fit and in the same order) with the
/// concentrations of each fit.
fn from_report(report: &thetaseek::report::Report) -> Result<Vec<Planned>, String> {
    let mut out = Vec::new();
    for s in &report.series {
        let theta = s.theta.as_ref();
        let points = theta.map_or(&[][..], |t| &t.points[..]);
        let mut measured = Vec::new();
        // Osmometry: one point per fit. Other routes have points without fits: nothing to design from.
        if points.len() == s.fits.len() {
            for (p, fit) in points.iter().zip(&s.fits) {
                let readings = fit.points.as_ref().ok_or_else(|| {
                    format!(
                        "series '{}': the report holds no readings (written with --report-detail fits); \
                         rerun analyze with --report-detail full, or give the data file",
                        s.name
                    )
                })?;
                measured.push(MeasuredTemperature {
                    point: TemperaturePoint { temperature_k: p.temperature_k, value: p.value, se: p.se },
                    // g/mL → kg/m³.
                    concentrations: readings.iter().map(|r| r.concentration_g_per_ml * 1e3).collect(),
                });
            }
        }
        // A2 in mol mL/g² is numerically SI (mol m³/kg²); Mn g/mol → kg/mol.
        let line = theta
            .and_then(|t| t.line.as_ref())
            .filter(|l| l.quantity == thetaseek::dataset::Quantity::SecondVirial)
            .map(|l| (l.a, l.b_k));
        out.push(Planned {
            solvent: s.solvent.clone().unwrap_or_else(|| s.name.clone()),
            name: s.name.clone(),
            measured,
            line,
            mn: theta.and_then(|t| t.mn_consistency.as_ref()).map(|m| m.mean_mn_g_per_mol * 1e-3),
            specific_volume: None,
        });
    }
    Ok(out)
}

fn render(designs: &[SeriesDesign]) -> String {
    let mut out = String::new();
    for d in designs {
        let _ = writeln!(out, "series {}", d.name);
        match (d.current.theta_k, d.current.ci_width_k) {
            (Some(t), Some(w)) => {
                let _ = writeln!(out, "  now: θ = {:.2} °C, interval width {w:.2} K", kelvin_to_celsius(t));
            }
            (Some(t), None) => {
                let _ = writeln!(out, "  now: θ = {:.2} °C, no bounded interval", kelvin_to_celsius(t));
            }
            _ => {
                let _ = writeln!(out, "  now: no θ");
            }
        }
        for (i, r) in d.recommended.iter().enumerate() {
            let _ = writeln!(
                out,
                "  run {}: {:.1} °C ({} readings) → predicted SE {} K, interval width {} K",
                i + 1,
                r.temperature_c,
                r.measurements,
                r.predicted_se_k.map_or("—".into(), |v| format!("{v:.2}")),
                r.predicted_ci_width_k.map_or("unbounded".into(), |v| format!("{v:.2}"))
            );
        }
        match d.window_c {
            Some([lo, hi]) => {
                let _ = writeln!(out, "  runs chosen between {lo:.1} and {hi:.1} °C");
            }
            None => {
                let _ = writeln!(out, "  no temperature is left inside the safe window");
            }
        }
        for e in &d.excluded {
            let range = match (e.from_c, e.to_c) {
                (Some(f), None) => format!("above {f:.1} °C"),
                (None, Some(t)) => format!("below {t:.1} °C"),
                (Some(f), Some(t)) => format!("{f:.1}–{t:.1} °C"),
                (None, None) => "everything".into(),
            };
            let _ = writeln!(out, "  excluded {range}: {}", e.reason);
        }
        for u in &d.unchecked {
            let _ = writeln!(out, "  not checked: {u}");
        }
        if let (Some(sim), Some(last)) = (d.simulated_se_k, d.recommended.last().and_then(|r| r.predicted_se_k)) {
            let _ = writeln!(out, "  check: predicted SE {last:.2} K, simulated {sim:.2} K");
        }
        for a in &d.advice {
            let _ = writeln!(out, "  · {a}");
        }
        let _ = writeln!(out, "  best single candidates:");
        for c in d.candidates.iter().take(5) {
            let _ = writeln!(
                out,
                "    {:>6.1} °C  width {}  gain {}",
                c.temperature_c,
                c.predicted_ci_width_k.map_or("unbounded".into(), |v| format!("{v:.2} K")),
                c.gain_k.map_or("—".into(), |v| format!("{v:+.2} K"))
            );
        }
        out.push('\n');
    }
    out.push_str(&report::plan::render_cautions(&thetaseek::safety::cautions()));
    out
}
