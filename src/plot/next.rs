//! Predicted θ interval width against the temperature of one more run, with today's width
//! and the recommended runs marked.

use super::{draw_legend, marker_element, series_colour, series_marker, FigureError, Marker};
use crate::design::SeriesDesign;
use plotters::coord::Shift;
use plotters::element::DashedPathElement;
use plotters::prelude::*;

/// One curve per series, drawn only over each series' safe window; under the chart, the windows
/// and the safety cautions.
pub fn draw_next(root: &DrawingArea<SVGBackend, Shift>, designs: &[SeriesDesign]) -> Result<(), FigureError> {
    let notes: Vec<String> = designs
        .iter()
        .map(|d| {
            let window = match d.window_c {
                Some([lo, hi]) => format!("{}: runs considered between {lo:.1} and {hi:.1} °C", d.name),
                None => format!("{}: no temperature left inside the safe window; nothing recommended", d.name),
            };
            let unchecked = if d.unchecked.is_empty() { "" } else { " (some checks not made: see the report)" };
            format!("{window}{unchecked}")
        })
        .collect();
    let root = &super::with_cautions(root, &notes)?;
    let widths: Vec<f64> = designs
        .iter()
        .flat_map(|d| d.candidates.iter().filter_map(|c| c.predicted_ci_width_k).chain(d.current.ci_width_k))
        .filter(|w| w.is_finite())
        .collect();
    let temps: Vec<f64> = designs.iter().flat_map(|d| d.candidates.iter().map(|c| c.temperature_c)).collect();
    let (x_lo, x_hi) = super::axis(
        temps.iter().copied().fold(f64::INFINITY, f64::min),
        temps.iter().copied().fold(f64::NEG_INFINITY, f64::max),
    );
    let top = widths.iter().copied().fold(0.0, f64::max);
    // Headroom grows until the legend has a corner where it covers no curve, no "today" line and
    // no recommended run (the lines of today's widths cross the whole chart).
    const HEADROOM: [f64; 4] = [1.15, 1.5, 2.0, 2.6];
    for (i, headroom) in HEADROOM.iter().enumerate() {
        root.fill(&WHITE)?;
        if draw_chart(root, designs, (x_lo, x_hi), top * headroom, i + 1 == HEADROOM.len())? {
            break;
        }
    }
    Ok(())
}

/// Draws the chart with its y axis up to `y_max`; returns false without a legend when the legend
/// would cover something (unless `last`, when it goes to the corner covering least).
fn draw_chart(
    root: &DrawingArea<SVGBackend, Shift>,
    designs: &[SeriesDesign],
    (x_lo, x_hi): (f64, f64),
    y_max: f64,
    last: bool,
) -> Result<bool, FigureError> {
    let (y_lo, y_hi) = super::axis(0.0, y_max);
    let mut chart = super::plain_chart(
        root,
        "Where to measure next",
        (x_lo, x_hi),
        (y_lo, y_hi),
        "temperature of the next run (°C)",
        &format!("predicted {:.0} % interval width of θ (K)", designs.first().map_or(95.0, |d| d.confidence * 100.0)),
    )?;
    for (i, d) in designs.iter().enumerate() {
        let colour = series_colour(i);
        let mut pts: Vec<(f64, f64)> =
            d.candidates.iter().filter_map(|c| c.predicted_ci_width_k.map(|w| (c.temperature_c, w))).collect();
        pts.sort_by(|a, b| a.0.total_cmp(&b.0));
        chart
            .draw_series(LineSeries::new(pts, colour.stroke_width(2)))?
            .label(format!("{}: after one more run", d.name))
            .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 18, y)], colour.stroke_width(2)));
        if let Some(now) = d.current.ci_width_k {
            chart
                .draw_series(DashedLineSeries::new(vec![(x_lo, now), (x_hi, now)], 8, 6, colour.stroke_width(1)))?
                .label(format!("{}: today ({now:.2} K)", d.name))
                .legend(move |(x, y)| DashedPathElement::new(vec![(x, y), (x + 18, y)], 4, 3, colour.stroke_width(1)));
        }
        let marker = if series_marker(i) == Marker::Cross { Marker::Square } else { series_marker(i) };
        chart.draw_series(
            d.recommended.iter().take(1).filter_map(|r| {
                r.predicted_ci_width_k.map(|w| marker_element(marker, (r.temperature_c, w), 6, colour))
            }),
        )?;
    }
    let mut occupied = Vec::new();
    let mut labels = Vec::new();
    for d in designs {
        occupied.extend(
            d.candidates
                .iter()
                .filter_map(|c| c.predicted_ci_width_k.map(|w| chart.backend_coord(&(c.temperature_c, w)))),
        );
        labels.push(format!("{}: after one more run", d.name));
        if let Some(now) = d.current.ci_width_k {
            occupied.extend((0..=100).map(|k| chart.backend_coord(&(x_lo + (x_hi - x_lo) * k as f64 / 100.0, now))));
            labels.push(format!("{}: today ({now:.2} K)", d.name));
        }
    }
    let chars = labels.iter().map(|l| l.chars().count()).max().unwrap_or(20);
    let area = chart.plotting_area().get_pixel_range();
    let (corner, covered) =
        super::legend_corner(area, labels.len(), chars, &occupied, &[], SeriesLabelPosition::UpperRight);
    if covered > 0 && !last {
        return Ok(false);
    }
    draw_legend(&mut chart, corner)?;
    Ok(true)
}
