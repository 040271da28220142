//! The viscometry route's figures: Huggins and Kraemer lines per temperature (stacked panels),
//! Mark–Houwink lines (log–log) beside a(T) with the viscometric θ, and the Stockmayer–Fixman
//! plot. Legends sit in a row below the charts, never over the data.

use super::format::{axis, tick};
use super::panels::{layout, panel_chart};
use super::{ink_text, marker_element, series_colour, series_marker, FigureError, Marker, GREY, INK};
use crate::report::SeriesReport;
use crate::units::kelvin_to_celsius;
use crate::viscometry::ViscometryResult;
use plotters::coord::Shift;
use plotters::prelude::*;

/// Height of the legend row, px.
const LEGEND_ROW: u32 = 34;
const PANEL: u32 = 150;

/// Height of the Huggins and Kraemer figure for `n` temperatures, px.
pub fn dilution_height(n: usize) -> u32 {
    44 + 56 + PANEL * n.max(1) as u32 + LEGEND_ROW
}

/// One legend entry: a marker (or a line when `None`) in a colour, and its label.
struct Entry {
    label: String,
    colour: RGBColor,
    marker: Option<Marker>,
    hollow: bool,
}

/// A legend as a row of entries in its own strip (below the charts, so it covers nothing).
fn legend_row(area: &DrawingArea<SVGBackend, Shift>, entries: &[Entry]) -> Result<(), FigureError> {
    let mut x = 24;
    for e in entries {
        let y = (LEGEND_ROW / 2) as i32;
        match (e.marker, e.hollow) {
            (Some(_), true) => {
                area.draw(&Circle::new((x + 6, y), 5, ShapeStyle::from(&e.colour).stroke_width(2)))?;
            }
            (Some(m), false) => area.draw(&marker_element(m, (x + 6, y), 4, e.colour))?,
            (None, _) => area.draw(&PathElement::new(vec![(x, y), (x + 14, y)], e.colour.stroke_width(2)))?,
        }
        area.draw(&Text::new(e.label.clone(), (x + 18, y - 7), ink_text(13)))?;
        x += 30 + 7 * e.label.chars().count() as i32;
    }
    Ok(())
}

/// One legend entry per temperature, in its colour and marker.
fn temperature_entries(v: &ViscometryResult) -> Vec<Entry> {
    v.temperatures
        .iter()
        .enumerate()
        .map(|(i, t)| Entry {
            label: format!("{:.1} °C", t.temperature_c),
            colour: series_colour(i),
            marker: Some(series_marker(i)),
            hollow: false,
        })
        .collect()
}

/// Huggins (ηsp/c, filled) and Kraemer (ln ηrel/c, hollow) points and lines of every fraction,
/// one panel per temperature, sharing the concentration axis (g/dL).
pub fn draw_dilution(root: &DrawingArea<SVGBackend, Shift>, s: &SeriesReport) -> Result<(), FigureError> {
    let Some(v) = &s.viscometry else { return Ok(()) };
    let (charts, legend) = root.split_vertically(root.dim_in_pixel().1 - LEGEND_ROW);
    let temps = &v.temperatures;
    let panels = layout(&charts, temps.len(), &format!("Huggins and Kraemer lines: {}", s.name))?;
    let to_dl = 100.0; // g/mL → g/dL
    let c_max = v.dilutions.iter().flat_map(|d| d.points.iter().map(|p| p.concentration_g_per_ml)).fold(0.0, f64::max);
    let (c_lo, c_hi) = axis(0.0, c_max * to_dl * 1.06);
    let fraction_index = |name: &str| v.fractions.iter().position(|f| f.name == name).unwrap_or(0);
    for (k, (t, area)) in temps.iter().zip(panels.iter()).enumerate() {
        let here: Vec<_> = v.dilutions.iter().filter(|d| (d.temperature_k - t.temperature_k).abs() < 1e-9).collect();
        let mut ys: Vec<f64> = here.iter().map(|d| d.intrinsic_viscosity_ml_per_g).collect();
        for d in &here {
            ys.extend(d.points.iter().flat_map(|p| [p.reduced_viscosity_ml_per_g, p.inherent_viscosity_ml_per_g]));
        }
        let (lo, hi) = ys.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), y| (a.min(*y), b.max(*y)));
        let pad = ((hi - lo) * 0.08).max(1e-9);
        let (y_lo, y_hi) = axis((lo - pad).max(0.0), hi + pad * 3.0);
        let mut chart = panel_chart(area, k + 1 == temps.len(), "c (g/dL)", (c_lo, c_hi), (y_lo, y_hi), "mL/g", 4)?;
        for d in &here {
            let colour = series_colour(fraction_index(&d.fraction));
            let eta = d.intrinsic_viscosity_ml_per_g;
            for (constant, dashed) in [(d.huggins_constant, false), (d.kraemer_constant, true)] {
                let Some(kk) = constant else { continue };
                let c_end = d.points.iter().map(|p| p.concentration_g_per_ml).fold(0.0, f64::max) * 1.05;
                let line = [(0.0, eta), (c_end * to_dl, eta + kk * eta * eta * c_end)];
                if dashed {
                    chart.draw_series(DashedLineSeries::new(line, 6, 4, colour.stroke_width(1)))?;
                } else {
                    chart.draw_series(LineSeries::new(line, colour.stroke_width(1)))?;
                }
            }
            chart.draw_series(d.points.iter().map(|p| {
                marker_element(
                    Marker::Circle,
                    (p.concentration_g_per_ml * to_dl, p.reduced_viscosity_ml_per_g),
                    3,
                    colour,
                )
            }))?;
            chart.draw_series(d.points.iter().map(|p| {
                Circle::new(
                    (p.concentration_g_per_ml * to_dl, p.inherent_viscosity_ml_per_g),
                    4,
                    ShapeStyle::from(&colour).stroke_width(1),
                )
            }))?;
            chart.draw_series(std::iter::once(
                EmptyElement::at((0.0, eta)) + Cross::new((0, 0), 5, INK.stroke_width(2)),
            ))?;
        }
        let label = format!(
            "{:.1} °C · Mark–Houwink a = {}",
            t.temperature_c,
            t.mark_houwink_exponent.map_or("—".into(), |a| format!("{a:.3}"))
        );
        chart.draw_series(std::iter::once(Text::new(
            label,
            (c_lo + (c_hi - c_lo) * 0.01, y_hi - (y_hi - y_lo) * 0.04),
            ink_text(13),
        )))?;
    }
    let mut entries: Vec<Entry> = v
        .fractions
        .iter()
        .enumerate()
        .map(|(i, f)| Entry {
            label: f.name.clone(),
            colour: series_colour(i),
            marker: Some(Marker::Circle),
            hollow: false,
        })
        .collect();
    entries.push(Entry { label: "● Huggins ηsp/c, solid".into(), colour: INK, marker: None, hollow: false });
    entries.push(Entry {
        label: "○ Kraemer ln ηrel/c, dashed; × [η]".into(),
        colour: INK,
        marker: None,
        hollow: false,
    });
    legend_row(&legend, &entries)
}

/// Mark–Houwink lines on log–log axes (left) and a(T) with a = ½ and the viscometric θ (right).
pub fn draw_mark_houwink(root: &DrawingArea<SVGBackend, Shift>, s: &SeriesReport) -> Result<(), FigureError> {
    let Some(v) = &s.viscometry else { return Ok(()) };
    let (charts, legend) = root.split_vertically(root.dim_in_pixel().1 - LEGEND_ROW);
    let (title, charts) = charts.split_vertically(40);
    title.titled(&format!("Mark–Houwink–Sakurada [η] = K M^a and the viscometric θ: {}", s.name), ink_text(20))?;
    let (left, right) = charts.split_horizontally(charts.dim_in_pixel().0 / 2);
    mark_houwink_lines(&left, v)?;
    exponent_against_temperature(&right, v)?;
    legend_row(&legend, &temperature_entries(v))
}

/// Every [η] of a fraction with a molar mass: (temperature index, M g/mol, [η] mL/g).
fn intrinsic_by_mass(v: &ViscometryResult) -> Vec<(usize, f64, f64)> {
    let mass = |name: &str| v.fractions.iter().find(|f| f.name == name).and_then(|f| f.molar_mass_g_per_mol);
    v.dilutions
        .iter()
        .filter_map(|d| {
            let i = v.temperatures.iter().position(|t| (t.temperature_k - d.temperature_k).abs() < 1e-9)?;
            Some((i, mass(&d.fraction)?, d.intrinsic_viscosity_ml_per_g))
        })
        .collect()
}

fn mark_houwink_lines(area: &DrawingArea<SVGBackend, Shift>, v: &ViscometryResult) -> Result<(), FigureError> {
    let points = intrinsic_by_mass(v);
    if points.is_empty() {
        return Ok(());
    }
    // log10 of M and [η] on linear axes, labelled with the values themselves (two significant
    // figures): a log axis of plotters labels only powers of ten, and these span less than two.
    let (m_lo, m_hi) = points.iter().fold((f64::INFINITY, 0.0f64), |(a, b), p| (a.min(p.1), b.max(p.1)));
    let (e_lo, e_hi) = points.iter().fold((f64::INFINITY, 0.0f64), |(a, b), p| (a.min(p.2), b.max(p.2)));
    let (x_lo, x_hi) = ((m_lo / 1.3).log10(), (m_hi * 1.3).log10());
    let (y_lo, y_hi) = ((e_lo / 1.2).log10(), (e_hi * 1.2).log10());
    let mut chart = ChartBuilder::on(area)
        .margin(16)
        .x_label_area_size(48)
        .y_label_area_size(70)
        .build_cartesian_2d(x_lo..x_hi, y_lo..y_hi)?;
    let two_figures = |v: f64| {
        let x = 10f64.powf(v);
        let e = x.log10().floor() as i32 - 1;
        let rounded = (x / 10f64.powi(e)).round() * 10f64.powi(e);
        if rounded >= 1e4 {
            format!("{:.0}k", rounded / 1e3)
        } else {
            format!("{rounded}")
        }
    };
    chart
        .configure_mesh()
        .light_line_style(WHITE.mix(0.0))
        .bold_line_style(INK.mix(0.08))
        .x_desc("M (g/mol, log scale)")
        .y_desc("[η] (mL/g, log scale)")
        .x_labels(6)
        .y_labels(6)
        .x_label_formatter(&|v| two_figures(*v))
        .y_label_formatter(&|v| two_figures(*v))
        .axis_desc_style(ink_text(15))
        .label_style(ink_text(12))
        .draw()?;
    for (i, t) in v.temperatures.iter().enumerate() {
        if let (Some(a), Some(k)) = (t.mark_houwink_exponent, t.mark_houwink_k_ml_per_g) {
            let ends = [m_lo / 1.2, m_hi * 1.2];
            let line = ends.map(|m| (m.log10(), (k * m.powf(a)).log10()));
            chart.draw_series(LineSeries::new(line, series_colour(i).stroke_width(1)))?;
        }
        chart.draw_series(
            points
                .iter()
                .filter(|p| p.0 == i)
                .map(|p| marker_element(series_marker(i), (p.1.log10(), p.2.log10()), 4, series_colour(i))),
        )?;
    }
    Ok(())
}

fn exponent_against_temperature(
    area: &DrawingArea<SVGBackend, Shift>,
    v: &ViscometryResult,
) -> Result<(), FigureError> {
    let rows: Vec<(usize, f64, f64, f64)> = v
        .temperatures
        .iter()
        .enumerate()
        .filter_map(|(i, t)| Some((i, t.temperature_k, t.mark_houwink_exponent?, t.mark_houwink_exponent_se?)))
        .collect();
    if rows.is_empty() {
        return Ok(());
    }
    let theta = v.viscometric_theta.as_ref();
    let mut xs: Vec<f64> = rows.iter().map(|r| r.1).collect();
    xs.extend(theta.iter().flat_map(|t| [Some(t.theta_k), t.interval.low_k, t.interval.high_k]).flatten());
    let (x_lo, x_hi) = xs.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| (a.min(*x), b.max(*x)));
    let pad = ((x_hi - x_lo) * 0.08).max(1.0);
    let (x_lo, x_hi) = axis(x_lo - pad, x_hi + pad);
    let (y_lo, y_hi) = rows.iter().fold((0.5f64, 0.5f64), |(a, b), r| (a.min(r.2 - 2.0 * r.3), b.max(r.2 + 2.0 * r.3)));
    let (y_lo, y_hi) = axis(y_lo - 0.02, y_hi + 0.04);
    let mut chart = ChartBuilder::on(area)
        .margin(16)
        .x_label_area_size(48)
        .y_label_area_size(70)
        .build_cartesian_2d(x_lo..x_hi, y_lo..y_hi)?;
    chart
        .configure_mesh()
        .light_line_style(WHITE.mix(0.0))
        .bold_line_style(INK.mix(0.08))
        .x_desc("T (K)")
        .y_desc("Mark–Houwink exponent a")
        .x_label_formatter(&|x| tick(*x, x_hi - x_lo))
        .y_label_formatter(&|y| tick(*y, y_hi - y_lo))
        .axis_desc_style(ink_text(15))
        .label_style(ink_text(12))
        .draw()?;
    if let Some(t) = theta {
        if let (Some(lo), Some(hi)) = (t.interval.low_k, t.interval.high_k) {
            chart.draw_series(std::iter::once(Rectangle::new([(lo, y_lo), (hi, y_hi)], GREY.mix(0.15).filled())))?;
        }
        chart.draw_series(DashedLineSeries::new([(t.theta_k, y_lo), (t.theta_k, y_hi)], 6, 4, GREY.stroke_width(1)))?;
        // a(T) = ½ + a' + b'/T.
        let curve = (0..=40).map(|j| {
            let x = x_lo + (x_hi - x_lo) * j as f64 / 40.0;
            (x, 0.5 + t.exponent_line_a + t.exponent_line_b_k / x)
        });
        chart.draw_series(LineSeries::new(curve, INK.stroke_width(1)))?;
        let label = format!("viscometric θ ≈ {:.1} °C (a = ½; approximate)", kelvin_to_celsius(t.theta_k));
        chart.draw_series(std::iter::once(Text::new(
            label,
            (x_lo + (x_hi - x_lo) * 0.02, y_hi - (y_hi - y_lo) * 0.05),
            ink_text(13),
        )))?;
    }
    chart.draw_series(std::iter::once(PathElement::new(vec![(x_lo, 0.5), (x_hi, 0.5)], INK.mix(0.4))))?;
    for r in &rows {
        let colour = series_colour(r.0);
        chart.draw_series(std::iter::once(PathElement::new(
            vec![(r.1, r.2 - r.3), (r.1, r.2 + r.3)],
            colour.stroke_width(1),
        )))?;
        chart.draw_series(std::iter::once(marker_element(series_marker(r.0), (r.1, r.2), 4, colour)))?;
    }
    Ok(())
}

/// The Stockmayer–Fixman plot: [η]/M^½ against M^½ per temperature, lines to the intercept Kθ.
pub fn draw_stockmayer_fixman(root: &DrawingArea<SVGBackend, Shift>, s: &SeriesReport) -> Result<(), FigureError> {
    let Some(v) = &s.viscometry else { return Ok(()) };
    let (charts, legend) = root.split_vertically(root.dim_in_pixel().1 - LEGEND_ROW);
    let points: Vec<(usize, f64, f64)> =
        intrinsic_by_mass(v).into_iter().map(|(i, m, eta)| (i, m.sqrt(), eta / m.sqrt())).collect();
    if points.is_empty() {
        return Ok(());
    }
    let x_hi = points.iter().fold(0.0f64, |a, p| a.max(p.1)) * 1.05;
    let mut ys: Vec<f64> = points.iter().map(|p| p.2).collect();
    ys.extend(v.temperatures.iter().filter_map(|t| t.k_theta_ml_mol_half_per_g_three_halves));
    let (lo, hi) = ys.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), y| (a.min(*y), b.max(*y)));
    let pad = (hi - lo) * 0.08;
    let mut chart = super::plain_chart(
        &charts,
        &format!("Stockmayer–Fixman: [η]/M^½ against M^½ (intercept Kθ): {}", s.name),
        (0.0, x_hi),
        (lo - pad, hi + pad),
        "M^½ ((g/mol)^½)",
        "[η]/M^½ (mL mol^½ g^-3/2)",
    )?;
    for (i, t) in v.temperatures.iter().enumerate() {
        if let (Some(k), Some(b)) = (t.k_theta_ml_mol_half_per_g_three_halves, t.stockmayer_fixman_slope_ml_mol_per_g2)
        {
            // y = Kθ + B x: with y and x both scaled by 10^{3/2} from SI, B is the SI slope
            // (m³ mol/kg² = mL mol/g²).
            let line = [(0.0, k), (x_hi, k + b * x_hi)];
            chart.draw_series(LineSeries::new(line, series_colour(i).stroke_width(1)))?;
        }
        chart.draw_series(
            points
                .iter()
                .filter(|p| p.0 == i)
                .map(|p| marker_element(series_marker(i), (p.1, p.2), 4, series_colour(i))),
        )?;
    }
    if let Some(k) = &v.k_theta_at_theta {
        let y = k.k_theta_ml_mol_half_per_g_three_halves;
        chart.draw_series(std::iter::once(EmptyElement::at((0.0, y)) + Cross::new((0, 0), 6, INK.stroke_width(2))))?;
    }
    let mut entries = temperature_entries(v);
    if v.k_theta_at_theta.is_some() {
        entries.push(Entry { label: "× Kθ at θ".into(), colour: INK, marker: None, hollow: false });
    }
    legend_row(&legend, &entries)
}
