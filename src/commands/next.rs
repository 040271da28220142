//! `thetaseek next`: analyse the data, then plan the temperature runs that narrow θ most.

use super::{check_outputs, load, write_outputs, Loaded, PendingOutput};
use crate::cli::NextArgs;
use std::fmt::Write;
use thetaseek::analysis::{self, Settings};
use thetaseek::design::{next_runs, DesignSettings, MeasuredTemperature, SeriesDesign};
use thetaseek::error::{Error, InputError};
use thetaseek::output::Destination;
use thetaseek::report::{self, InputFile};
use thetaseek::theta::{a2_points, TemperaturePoint, ThetaSettings};
use thetaseek::units::kelvin_to_celsius;

/// The advice of one run, as JSON.
#[derive(Debug, serde::Serialize)]
struct NextReport {
    schema_version: u32,
    tool_version: String,
    inputs: Vec<InputFile>,
    series: Vec<SeriesDesign>,
}

/// Runs the subcommand.
pub fn run(args: &NextArgs) -> Result<(), Error> {
    let options = super::analyze::read_options(&args.read)?;
    // JSON reports written by analyze carry what is needed (A2 with its SEs, concentrations);
    // data files are analysed here.
    let (reports, data): (Vec<_>, Vec<_>) =
        args.files.iter().cloned().partition(|p| p.extension().is_some_and(|e| e.eq_ignore_ascii_case("json")));
    let mut inputs = Vec::new();
    let mut measured_series: Vec<(String, Vec<MeasuredTemperature>)> = Vec::new();
    for path in &reports {
        let bytes = super::read_input(path, args.read.max_input_mb)?;
        let name = path.display().to_string();
        let value: serde_json::Value = serde_json::from_slice(&bytes)
            .map_err(|e| InputError::at(&name, e.line(), None, None, format!("not a JSON report: {e}")))?;
        measured_series.extend(from_report_json(&value).map_err(|e| InputError::file(&name, e))?);
        inputs.push(InputFile::new(&name, &bytes));
    }
    if !data.is_empty() {
        let Loaded { inputs: data_inputs, dataset, .. } = load(&data, &options, args.read.max_input_mb)?;
        inputs.extend(data_inputs);
        let settings = Settings {
            virial: super::analyze::virial_choice(args.read.virial),
            theta: ThetaSettings { confidence: args.confidence, bootstrap_replicates: 0, ..ThetaSettings::default() },
            volumes: None,
        };
        let results = analysis::analyze(&dataset.series, &[], &settings);
        for (series, result) in dataset.series.iter().zip(&results) {
            let measured: Vec<MeasuredTemperature> = result
                .fits
                .iter()
                .zip(a2_points(&result.fits).0)
                .filter_map(|(fit, point)| {
                    let set = series.temperatures.iter().find(|t| t.temperature_k == fit.temperature_k)?;
                    Some(MeasuredTemperature { point, concentrations: set.concentration_kg_per_m3.clone() })
                })
                .collect();
            measured_series.push((series.name.clone(), measured));
        }
    }
    let mut designs = Vec::new();
    for (name, measured) in &measured_series {
        let (t_lo, t_hi) = measured.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), m| {
            (a.min(m.point.temperature_k), b.max(m.point.temperature_k))
        });
        let thermostat = args.thermostat_k.unwrap_or((t_lo - 15.0, t_hi + 15.0));
        let design_settings = DesignSettings {
            thermostat,
            step_k: args.step,
            // g/L = kg/m³.
            concentrations: args.concentrations.clone(),
            replicates: args.replicates as usize,
            budget: args.budget as usize,
            confidence: args.confidence,
            simulations: args.simulations,
            seed: args.seed,
        };
        designs.push(next_runs(name, measured, &design_settings));
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
        let svg = thetaseek::plot::render_svg(900, 560, |root| thetaseek::plot::draw_next(root, &next.series))
            .map_err(|e| Error::Setting(e.to_string()))?;
        outputs.push(PendingOutput::bytes(Destination::File(path.clone()), svg.into_bytes()));
    }
    check_outputs(&outputs, &args.files)?;
    let stdout_taken = outputs.iter().any(|o| o.destination == Destination::Stdout);
    write_outputs(outputs)?;
    if !args.quiet {
        let text = render(&next.series);
        if stdout_taken {
            eprint!("{text}");
        } else {
            print!("{text}");
        }
    }
    Ok(())
}

/// The measured temperatures of every series in a report that analyze wrote: the A2 values and
/// SEs the θ fit used (`theta.points`) with the concentrations of each fit.
fn from_report_json(report: &serde_json::Value) -> Result<Vec<(String, Vec<MeasuredTemperature>)>, String> {
    let series = report
        .get("series")
        .and_then(|s| s.as_array())
        .ok_or("no 'series' list: is this a report written by thetaseek analyze?")?;
    let num = |v: &serde_json::Value, k: &str| v.get(k).and_then(|x| x.as_f64());
    let mut out = Vec::new();
    for s in series {
        let name = s.get("name").and_then(|n| n.as_str()).ok_or("a series has no 'name'")?.to_string();
        let fits = s.get("fits").and_then(|f| f.as_array()).cloned().unwrap_or_default();
        let points = s.pointer("/theta/points").and_then(|p| p.as_array()).cloned().unwrap_or_default();
        let mut measured = Vec::new();
        for p in &points {
            let (Some(t), Some(value)) = (num(p, "temperature_k"), num(p, "value")) else { continue };
            let Some(fit) = fits.iter().find(|f| num(f, "temperature_k") == Some(t)) else { continue };
            // g/mL → kg/m³.
            let concentrations: Vec<f64> = fit
                .get("points")
                .and_then(|r| r.as_array())
                .ok_or_else(|| {
                    format!(
                        "series '{name}': the report holds no readings (written with --report-detail fits); \
                         rerun analyze with --report-detail full, or give the data file"
                    )
                })?
                .iter()
                .filter_map(|r| num(r, "concentration_g_per_ml"))
                .map(|c| c * 1e3)
                .collect();
            measured.push(MeasuredTemperature {
                point: TemperaturePoint { temperature_k: t, value, se: num(p, "se") },
                concentrations,
            });
        }
        out.push((name, measured));
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
    out
}
