//! Mn at each temperature with the weighted mean and its ±1 SE band: the consistency check
//! (a drift hints at association near θ or at membrane leakage).

use super::format::axis;
use super::{draw_legend, marker_element, series_colour, series_marker, FigureError, GREY, INK};
use crate::report::SeriesReport;
use plotters::coord::Shift;
use plotters::prelude::*;

/// The Mn(T) figure of one series.
pub fn draw_mn(root: &DrawingArea<SVGBackend, Shift>, s: &SeriesReport, index: usize) -> Result<(), FigureError> {
    let pts: Vec<(f64, f64, f64)> =
        s.fits.iter().map(|f| (f.temperature_k, f.mn_g_per_mol / 1e3, f.mn_se_g_per_mol / 1e3)).collect();
    let consistency = s.theta.as_ref().and_then(|t| t.mn_consistency.as_ref());
    let (t_lo, t_hi) = pts.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| (a.min(p.0), b.max(p.0)));
    let x_pad = ((t_hi - t_lo) * 0.08).max(2.0);
    let (x_lo, x_hi) = (t_lo - x_pad, t_hi + x_pad);
    let (y_min, y_max) =
        pts.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| (a.min(p.1 - p.2), b.max(p.1 + p.2)));
    let y_pad = ((y_max - y_min) * 0.25).max(y_max.abs() * 0.005).max(1e-9);
    let (y_lo, y_hi) = (y_min - y_pad, y_max + y_pad * 1.6);
    let (x_lo, x_hi) = axis(x_lo, x_hi);
    let (y_lo, y_hi) = axis(y_lo, y_hi);
    let mut chart = super::plain_chart(
        root,
        &format!("Mn at each temperature: {}", s.name),
        (x_lo, x_hi),
        (y_lo, y_hi),
        "T (K)",
        "Mn (kg/mol)",
    )?;
    if let Some(m) = consistency {
        let (mean, se) = (m.mean_mn_g_per_mol / 1e3, m.mean_mn_se_g_per_mol / 1e3);
        chart
            .draw_series(std::iter::once(Rectangle::new(
                [(x_lo, mean - se), (x_hi, mean + se)],
                GREY.mix(0.18).filled(),
            )))?
            .label(format!(
                "weighted mean {mean:.1} ± {se:.1} kg/mol; χ² = {:.1} on {} dof, p = {:.2}{}",
                m.chi2,
                m.dof,
                m.p_value,
                if m.drift { " (drift)" } else { "" }
            ))
            .legend(|(x, y)| Rectangle::new([(x, y - 5), (x + 18, y + 5)], GREY.mix(0.3).filled()));
        chart.draw_series(std::iter::once(PathElement::new(vec![(x_lo, mean), (x_hi, mean)], INK.stroke_width(1))))?;
    }
    let colour = series_colour(index);
    let marker = series_marker(index);
    chart.draw_series(
        pts.iter().map(|(t, m, se)| ErrorBar::new_vertical(*t, m - se, *m, m + se, colour.stroke_width(1), 8)),
    )?;
    chart
        .draw_series(pts.iter().map(|(t, m, _)| marker_element(marker, (*t, *m), 5, colour)))?
        .label("Mn ± 1 SE at each temperature")
        .legend(move |(x, y)| marker_element(marker, (x + 9, y), 5, colour));
    draw_legend(&mut chart, SeriesLabelPosition::UpperLeft)?;
    Ok(())
}
