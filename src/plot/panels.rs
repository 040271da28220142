//! Stacked panels, one per temperature (ascending, top to bottom), sharing the concentration
//! axis: the reduced osmotic pressure Π/(cRT) with its fitted virial curve and the intercept
//! 1/Mn, and the studentised residuals of the same fits.

use super::format::{axis, power_of_ten, superscript, tick};
use super::{ink_text, marker_element, FigureError, Marker, GREY, INK, PALETTE};
use crate::report::{plus_minus, FitReport, SeriesReport};
use crate::units::kelvin_to_celsius;
use crate::virial::VirialForm;
use plotters::coord::Shift;
use plotters::prelude::*;

const TITLE: u32 = 44;
const BOTTOM: u32 = 56;
const PANEL: u32 = 150;

/// Height of a figure with `n` panels, px.
pub fn panel_height(n: usize) -> u32 {
    TITLE + BOTTOM + PANEL * n.max(1) as u32
}

/// Solvent quality at one temperature, from the sign of A2 against twice its SE.
fn quality(f: &FitReport) -> (&'static str, RGBColor) {
    if f.a2_mol_ml_per_g2 > 2.0 * f.a2_se_mol_ml_per_g2 {
        ("good solvent", PALETTE[0])
    } else if f.a2_mol_ml_per_g2 < -2.0 * f.a2_se_mol_ml_per_g2 {
        ("poor solvent", PALETTE[1])
    } else {
        ("near θ", GREY)
    }
}

/// The fitted reduced pressure (mol/g) at c (g/mL), from the report's coefficients.
fn fitted(f: &FitReport, c: f64) -> f64 {
    let inv = f.inverse_mn_mol_per_g;
    match f.virial_form {
        VirialForm::Sqrt => {
            // (1/Mn)(1 + Γ2 c/2)², Γ2 = A2 Mn (mL/g).
            let gamma2 = f.a2_mol_ml_per_g2 / inv;
            inv * (1.0 + gamma2 * c / 2.0).powi(2)
        }
        _ => inv + f.a2_mol_ml_per_g2 * c + f.a3_mol_ml2_per_g3.unwrap_or(0.0) * c * c,
    }
}

/// Splits the area into a title strip and `n` panels (the last one also holds the x axis).
pub(super) fn layout<'a>(
    root: &DrawingArea<SVGBackend<'a>, Shift>,
    n: usize,
    title: &str,
) -> Result<Vec<DrawingArea<SVGBackend<'a>, Shift>>, FigureError> {
    let (top, rest) = root.split_vertically(TITLE);
    top.titled(title, ink_text(20))?;
    Ok(rest.split_evenly((n.max(1), 1)))
}

/// One panel: concentration (g/L) shared along x, its own y; only the bottom panel (`last`)
/// labels the x axis.
pub(super) fn panel_chart<'a, 'b>(
    area: &'a DrawingArea<SVGBackend<'b>, Shift>,
    last: bool,
    x_desc: &str,
    x: (f64, f64),
    y: (f64, f64),
    y_desc: &str,
    y_labels: usize,
) -> Result<super::Chart<'a, 'b>, FigureError> {
    let mut chart = ChartBuilder::on(area)
        .margin_left(16)
        .margin_right(24)
        .margin_top(4)
        .x_label_area_size(if last { 40 } else { 6 })
        .y_label_area_size(86)
        .build_cartesian_2d(x.0..x.1, y.0..y.1)?;
    let y_fmt = |v: &f64| tick(*v, y.1 - y.0);
    let x_fmt = |v: &f64| tick(*v, x.1 - x.0);
    let mut mesh = chart.configure_mesh();
    mesh.light_line_style(WHITE.mix(0.0))
        .bold_line_style(INK.mix(0.06))
        .y_desc(y_desc)
        .y_labels(y_labels)
        .y_label_formatter(&y_fmt)
        .x_label_formatter(&x_fmt)
        .axis_desc_style(ink_text(13))
        .label_style(ink_text(12));
    if last {
        mesh.x_desc(x_desc);
    } else {
        mesh.x_labels(0);
    }
    mesh.draw()?;
    Ok(chart)
}

fn concentration_range(s: &SeriesReport) -> (f64, f64) {
    let c_max =
        s.fits.iter().flat_map(|f| f.points.iter().flatten().map(|p| p.concentration_g_per_ml)).fold(0.0, f64::max);
    axis(0.0, c_max * 1.08)
}

/// Reduced-pressure panels of one series.
pub fn draw_reduced_pressure(root: &DrawingArea<SVGBackend, Shift>, s: &SeriesReport) -> Result<(), FigureError> {
    let (c_lo, c_hi) = concentration_range(s);
    let c_scale = 1.0e3; // shown in g/L (= mg/mL), which reads better than 0.00x g/mL
    let all: Vec<f64> =
        s.fits.iter().flat_map(|f| f.points.iter().flatten().map(|p| p.reduced_pressure_mol_per_g)).collect();
    let e = power_of_ten(all.iter().fold(0.0, |m: f64, v| m.max(v.abs())));
    let scale = 10f64.powi(-e);
    let unit = if e == 0 { "mol/g".to_string() } else { format!("{} mol/g", superscript(e)) };
    let panels = layout(root, s.fits.len(), &format!("Reduced osmotic pressure Π/(cRT) against c: {}", s.name))?;
    let last = s.fits.len().saturating_sub(1);
    for (k, (f, area)) in s.fits.iter().zip(panels.iter()).enumerate() {
        let (label, colour) = quality(f);
        // Readings excluded at this temperature, drawn hollow where they were measured.
        let excluded: Vec<(f64, f64)> = s
            .excluded_readings
            .iter()
            .filter(|e| e.temperature_k.is_some_and(|t| (t - f.temperature_k).abs() < 0.05))
            .filter_map(|e| {
                let c = e.concentration_g_per_ml? * 1.0e3; // kg/m³
                let y = e.pressure_pa? / (c * crate::units::GAS_CONSTANT_J_PER_MOL_K * f.temperature_k) * 1.0e-3;
                (c > 0.0 && y.is_finite()).then_some((c * 1.0e-3, y))
            })
            .collect();
        let mut ys: Vec<f64> = f.points.iter().flatten().map(|p| p.reduced_pressure_mol_per_g * scale).collect();
        ys.extend(excluded.iter().map(|(_, y)| y * scale));
        ys.push(f.inverse_mn_mol_per_g * scale);
        ys.extend((0..=20).map(|i| fitted(f, c_hi * i as f64 / 20.0) * scale));
        let (lo, hi) = ys.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| (a.min(*v), b.max(*v)));
        let pad = ((hi - lo) * 0.15).max(hi.abs() * 0.01).max(1e-12);
        let (y_lo, y_hi) = axis(lo - pad, hi + pad * 1.8);
        let mut chart = panel_chart(
            area,
            k == last,
            "c (g/L)",
            (c_lo * c_scale, c_hi * c_scale),
            (y_lo, y_hi),
            &format!("Π/(cRT) ({unit})"),
            4,
        )?;
        let curve = (0..=60).map(|i| {
            let c = c_hi * i as f64 / 60.0;
            (c * c_scale, fitted(f, c) * scale)
        });
        chart.draw_series(LineSeries::new(curve, colour.stroke_width(2)))?;
        chart.draw_series(f.points.iter().flatten().map(|p| {
            marker_element(
                Marker::Circle,
                (p.concentration_g_per_ml * c_scale, p.reduced_pressure_mol_per_g * scale),
                4,
                colour,
            )
        }))?;
        chart.draw_series(
            excluded
                .iter()
                .map(|(c, y)| Circle::new((c * c_scale, y * scale), 5, ShapeStyle::from(&colour).stroke_width(2))),
        )?;
        // The intercept 1/Mn as an open diamond on the axis.
        let at = (0.0, f.inverse_mn_mol_per_g * scale);
        let diamond = vec![(0, -7), (7, 0), (0, 7), (-7, 0), (0, -7)];
        chart.draw_series(std::iter::once(EmptyElement::at(at) + PathElement::new(diamond, INK.stroke_width(2))))?;
        let text = format!(
            "{:.1} °C ({:.2} K) · {} · A2 = {} mol mL/g² · {label} · ◇ 1/Mn{}",
            f.temperature_c,
            f.temperature_k,
            f.virial_form.name(),
            plus_minus(f.a2_mol_ml_per_g2, f.a2_se_mol_ml_per_g2),
            if excluded.is_empty() { "" } else { " · ○ excluded, not fitted" }
        );
        chart.draw_series(std::iter::once(Text::new(
            text,
            (c_hi * c_scale * 0.02, y_hi - (y_hi - y_lo) * 0.06),
            ink_text(13),
        )))?;
    }
    Ok(())
}

/// Studentised-residual panels of one series, ±3 marked.
pub fn draw_residuals(root: &DrawingArea<SVGBackend, Shift>, s: &SeriesReport) -> Result<(), FigureError> {
    let (c_lo, c_hi) = concentration_range(s);
    let c_scale = 1.0e3;
    let panels = layout(root, s.fits.len(), &format!("Studentised residuals of the per-temperature fits: {}", s.name))?;
    let last = s.fits.len().saturating_sub(1);
    for (k, (f, area)) in s.fits.iter().zip(panels.iter()).enumerate() {
        let r: Vec<(f64, f64)> = f
            .points
            .iter()
            .flatten()
            .filter_map(|p| {
                p.studentized_residual.filter(|v| v.is_finite()).map(|v| (p.concentration_g_per_ml * c_scale, v))
            })
            .collect();
        let m = axis(-3.5, r.iter().fold(3.5f64, |m, (_, v)| m.max(v.abs() * 1.1))).1;
        let mut chart =
            panel_chart(area, k == last, "c (g/L)", (c_lo * c_scale, c_hi * c_scale), (-m, m), "residual / SD", 5)?;
        let x_end = c_hi * c_scale;
        chart.draw_series(std::iter::once(PathElement::new(vec![(0.0, 0.0), (x_end, 0.0)], INK.mix(0.5))))?;
        for level in [-3.0, 3.0] {
            chart.draw_series(DashedLineSeries::new(
                vec![(0.0, level), (x_end, level)],
                6,
                5,
                PALETTE[1].stroke_width(1),
            ))?;
        }
        chart.draw_series(r.iter().map(|(c, v)| {
            let colour = if v.abs() > 3.0 { PALETTE[1] } else { PALETTE[0] };
            marker_element(Marker::Circle, (*c, *v), 4, colour)
        }))?;
        chart.draw_series(std::iter::once(Text::new(
            format!(
                "{:.1} °C ({:.2} K) · {} · dof {}",
                kelvin_to_celsius(f.temperature_k),
                f.temperature_k,
                f.virial_form.name(),
                f.dof
            ),
            (x_end * 0.02, m * 0.8),
            ink_text(13),
        )))?;
    }
    Ok(())
}
