//! The planning figure: every solvent's A2(T) with its θ interval, the thermostat range, and
//! each solvent's usable liquid range (melting point + margin to boiling point − margin), so the
//! choice can be seen.

use super::format::{axis, power_of_ten, superscript};
use super::{
    draw_legend, ink_text, marker_element, series_colour, series_marker, temperature_chart, FigureError, GREY, INK,
};
use crate::dataset::Quantity;
use crate::input::SolventProperties;
use crate::plan::{Plan, PlanSeries, PlanSettings, BOILING_MARGIN_K, MELTING_MARGIN_K};
use crate::units::kelvin_to_celsius;
use plotters::coord::Shift;
use plotters::prelude::*;

/// Draws the plan: one line per solvent, the thermostat band, liquid-range bars.
pub fn draw_plan(
    root: &DrawingArea<SVGBackend, Shift>,
    series: &[PlanSeries],
    solvents: &[SolventProperties],
    plan: &Plan,
    settings: &PlanSettings,
) -> Result<(), FigureError> {
    let note = match &plan.recommendation {
        Some(r) => format!(
            "Recommended: {} at {:.1} °C (hold {:.1}–{:.1} °C)",
            r.solvent, r.temperature_c, r.temperature_window_c[0], r.temperature_window_c[1]
        ),
        None => "No solvent passes every check: nothing is recommended".to_string(),
    };
    let root = &super::with_cautions(root, &[note])?;
    let k = |s: &PlanSeries| -> Option<f64> {
        let line = s.line.as_ref()?;
        match line.quantity {
            Quantity::SecondVirial => Some(1.0),
            Quantity::HalfMinusChi => {
                let v = settings.specific_volume?;
                let m = solvents.iter().find(|p| p.name == s.solvent)?.molar_volume?;
                Some(v * v / m)
            }
        }
    };
    let thetas: Vec<f64> = series.iter().filter_map(|s| s.theta_k).collect();
    let mut lo = thetas.iter().copied().fold(f64::INFINITY, f64::min) - 30.0;
    let mut hi = thetas.iter().copied().fold(f64::NEG_INFINITY, f64::max) + 30.0;
    if let Some((a, b)) = settings.thermostat {
        lo = lo.min(a - 5.0);
        hi = hi.max(b + 5.0);
    }
    if !(lo.is_finite() && hi.is_finite()) {
        (lo, hi) = settings.thermostat.map_or((273.15, 373.15), |(a, b)| (a - 10.0, b + 10.0));
    }
    let grid: Vec<f64> = (0..=100).map(|i| lo + (hi - lo) * i as f64 / 100.0).collect();
    let values: Vec<f64> = series
        .iter()
        .filter_map(|s| Some((s.line.as_ref()?, k(s)?)))
        .flat_map(|(l, k)| grid.iter().map(move |t| k * (l.a + l.b_k / t)))
        .filter(|v| v.is_finite())
        .collect();
    let e = power_of_ten(values.iter().fold(0.0, |m: f64, v| m.max(v.abs())));
    let scale = 10f64.powi(-e);
    let (y_min, y_max) = values.iter().fold((0.0f64, 0.0f64), |(a, b), v| (a.min(v * scale), b.max(v * scale)));
    let span = (y_max - y_min).max(1e-12);
    // Room below the curves for one liquid-range bar per solvent.
    let bars = series.len() as f64;
    let (y_lo, y_hi) = (y_min - span * (0.1 + 0.08 * bars), y_max + span * 0.1);
    let (lo, hi) = axis(lo, hi);
    let (y_lo, y_hi) = axis(y_lo, y_hi);
    let y_desc = if e == 0 { "A2 (mol mL/g²)".to_string() } else { format!("A2 ({} mol mL/g²)", superscript(e)) };
    let mut chart =
        temperature_chart(root, "Choosing the solvent and the temperature", (lo, hi), (y_lo, y_hi), &y_desc)?;
    if let Some((a, b)) = settings.thermostat {
        chart
            .draw_series(std::iter::once(Rectangle::new([(a, y_lo), (b, y_hi)], GREY.mix(0.10).filled())))?
            .label("thermostat range")
            .legend(|(x, y)| Rectangle::new([(x, y - 5), (x + 18, y + 5)], GREY.mix(0.25).filled()));
    }
    chart.draw_series(std::iter::once(PathElement::new(vec![(lo, 0.0), (hi, 0.0)], INK.mix(0.6))))?;
    for (i, s) in series.iter().enumerate() {
        let colour = series_colour(i);
        let rank = plan.candidates.iter().find(|c| c.series == s.series);
        let status = rank.map_or(String::new(), |c| {
            format!(" — rank {}, {}", c.rank, if c.suitable { "suitable" } else { "ruled out" })
        });
        if let (Some(lo_k), Some(hi_k)) = (s.ci_low_k, s.ci_high_k) {
            chart.draw_series(std::iter::once(Rectangle::new(
                [(lo_k, y_lo), (hi_k, y_hi)],
                colour.mix(0.15).filled(),
            )))?;
        }
        if let (Some(line), Some(k)) = (s.line.as_ref(), k(s)) {
            let pts = grid.iter().map(|t| (*t, k * (line.a + line.b_k / t) * scale));
            let label = match s.theta_k {
                Some(th) => format!("{}: θ = {:.1} °C{status}", s.solvent, kelvin_to_celsius(th)),
                None => format!("{}: no θ{status}", s.solvent),
            };
            chart
                .draw_series(LineSeries::new(pts, colour.stroke_width(2)))?
                .label(label)
                .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 18, y)], colour.stroke_width(2)));
        }
        if let Some(th) = s.theta_k {
            let marker = series_marker(i);
            chart.draw_series(std::iter::once(marker_element(marker, (th, 0.0), 6, colour)))?;
        }
        // The liquid range kept after the margins, as a bar under the curves.
        if let Some(p) = solvents.iter().find(|p| p.name == s.solvent) {
            let y = y_min - span * (0.08 + 0.08 * i as f64);
            let from = p.melting_point_k.map_or(lo, |m| (m + MELTING_MARGIN_K).max(lo));
            let to = p.boiling_point_k.map_or(hi, |b| (b - BOILING_MARGIN_K).min(hi));
            if from < to {
                chart
                    .draw_series(std::iter::once(PathElement::new(vec![(from, y), (to, y)], colour.stroke_width(6))))?;
            }
            let note = match p.boiling_point_k {
                Some(b) => format!(
                    "{} usable to {:.0} °C (boils at {:.0} °C)",
                    p.name,
                    kelvin_to_celsius(b - BOILING_MARGIN_K),
                    kelvin_to_celsius(b)
                ),
                None => format!("{} (boiling point not given)", p.name),
            };
            chart.draw_series(std::iter::once(Text::new(
                note,
                (lo + (hi - lo) * 0.01, y + span * 0.035),
                ink_text(12),
            )))?;
        }
    }
    draw_legend(&mut chart, SeriesLabelPosition::UpperLeft)?;
    Ok(())
}
