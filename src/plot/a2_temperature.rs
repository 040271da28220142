//! A2 against temperature: measured points with ±SE bars, the Flory–Krigbaum curve with its
//! confidence band (dashed where it extrapolates), the A2 = 0 line, θ with its interval
//! shaded, and a second axis in °C.

use super::format::{axis, power_of_ten, superscript};
use super::{
    draw_legend, ink_text, marker_element, series_colour, series_marker, temperature_chart, FigureError, GREY, INK,
};
use crate::dataset::Quantity;
use crate::report::{SeriesReport, ThetaReport};
use crate::theta::FittedLine;
use crate::units::kelvin_to_celsius;
use plotters::coord::Shift;
use plotters::prelude::*;

/// Value of the line and its SE at T.
fn line_at(line: &FittedLine, t: f64) -> (f64, f64) {
    let value = line.a + line.b_k / t;
    let var = line.var_a + 2.0 * line.cov_ab_k / t + line.var_b_k2 / (t * t);
    (value, var.max(0.0).sqrt())
}

fn y_label(quantity: Quantity, e: i32) -> String {
    match (quantity, e) {
        (Quantity::SecondVirial, 0) => "A2 (mol mL/g²)".into(),
        (Quantity::SecondVirial, e) => format!("A2 ({} mol mL/g²)", superscript(e)),
        (Quantity::HalfMinusChi, 0) => "1/2 − χ".into(),
        (Quantity::HalfMinusChi, e) => format!("1/2 − χ ({})", superscript(e)),
    }
}

/// Temperature range to draw: the data, widened to show θ and its interval (at most 40 K
/// beyond the data), with a margin.
fn x_range(theta: &ThetaReport) -> (f64, f64) {
    let ts: Vec<f64> = theta.points.iter().map(|p| p.temperature_k).collect();
    let (mut lo, mut hi) =
        (ts.iter().copied().fold(f64::INFINITY, f64::min), ts.iter().copied().fold(f64::NEG_INFINITY, f64::max));
    let (data_lo, data_hi) = (lo, hi);
    for v in [theta.theta_k, theta.ci_low_k, theta.ci_high_k].into_iter().flatten() {
        lo = lo.min(v.max(data_lo - 40.0));
        hi = hi.max(v.min(data_hi + 40.0));
    }
    let pad = ((hi - lo) * 0.06).max(1.0);
    (lo - pad, hi + pad)
}

/// The legend's words for θ's interval.
fn interval_label(theta: &ThetaReport) -> String {
    match theta.ci_method {
        crate::theta::IntervalMethod::Fieller => format!("{:.0} % Fieller interval of θ", theta.confidence * 100.0),
        method => format!("{:.0} % interval of θ ({method})", theta.confidence * 100.0),
    }
}

struct Curve {
    t: Vec<f64>,
    value: Vec<f64>,
    se: Vec<f64>,
}

fn curve(line: &FittedLine, lo: f64, hi: f64) -> Curve {
    let t: Vec<f64> = (0..=120).map(|i| lo + (hi - lo) * i as f64 / 120.0).collect();
    let (value, se) = t.iter().map(|&t| line_at(line, t)).unzip();
    Curve { t, value, se }
}

/// The A2(T) figure of one series; `index` picks its colour and marker.
pub fn draw_a2_temperature(
    root: &DrawingArea<SVGBackend, Shift>,
    s: &SeriesReport,
    index: usize,
) -> Result<(), FigureError> {
    let theta = s.theta.as_ref().ok_or_else(|| FigureError("no θ analysis".into()))?;
    let (x_lo, x_hi) = x_range(theta);
    let critical = if theta.fieller.critical_value.is_finite() { theta.fieller.critical_value } else { 1.96 };
    let curve = theta.line.as_ref().map(|l| curve(l, x_lo, x_hi));
    let mut ys: Vec<f64> =
        theta.points.iter().flat_map(|p| [p.value - p.se.unwrap_or(0.0), p.value + p.se.unwrap_or(0.0)]).collect();
    if let Some(c) = &curve {
        ys.extend(c.value.iter().zip(&c.se).flat_map(|(v, s)| [v - critical * s, v + critical * s]));
    }
    ys.retain(|v| v.is_finite());
    let quantity = theta.line.as_ref().map_or(Quantity::SecondVirial, |l| l.quantity);
    let e = power_of_ten(ys.iter().fold(0.0, |m: f64, v| m.max(v.abs())));
    let scale = 10f64.powi(-e);
    let (y_min, y_max) = ys.iter().fold((0.0f64, 0.0f64), |(a, b), v| (a.min(*v * scale), b.max(*v * scale)));
    let y_pad = ((y_max - y_min) * 0.08).max(1e-12);
    let (y_lo, y_hi) = (y_min - y_pad, y_max + y_pad);

    let (x_lo, x_hi) = axis(x_lo, x_hi);
    let (y_lo, y_hi) = axis(y_lo, y_hi);
    let mut chart = temperature_chart(
        root,
        &format!("A2 against temperature: {}", s.name),
        (x_lo, x_hi),
        (y_lo, y_hi),
        &y_label(quantity, e),
    )?;

    let colour = series_colour(index);
    let t_min = theta.points.iter().map(|p| p.temperature_k).fold(f64::INFINITY, f64::min);
    let t_max = theta.points.iter().map(|p| p.temperature_k).fold(f64::NEG_INFINITY, f64::max);

    // θ interval shaded, then θ itself.
    if let Some(th) = theta.theta_k {
        let lo = theta.ci_low_k.unwrap_or(x_lo).max(x_lo);
        let hi = theta.ci_high_k.unwrap_or(x_hi).min(x_hi);
        if theta.ci_low_k.is_some() || theta.ci_high_k.is_some() {
            chart
                .draw_series(std::iter::once(Rectangle::new([(lo, y_lo), (hi, y_hi)], GREY.mix(0.15).filled())))?
                .label(interval_label(theta))
                .legend(|(x, y)| Rectangle::new([(x, y - 5), (x + 18, y + 5)], GREY.mix(0.3).filled()));
        }
        chart
            .draw_series(std::iter::once(PathElement::new(vec![(th, y_lo), (th, y_hi)], INK.stroke_width(2))))?
            .label(format!("θ = {th:.2} K ({:.2} °C), {}", kelvin_to_celsius(th), theta.crossing.name()))
            .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 18, y)], INK.stroke_width(2)));
        chart.draw_series(std::iter::once(Text::new("θ", (th, y_hi - (y_hi - y_lo) * 0.02), ink_text(18))))?;
    }

    chart
        .draw_series(std::iter::once(PathElement::new(vec![(x_lo, 0.0), (x_hi, 0.0)], INK.mix(0.6).stroke_width(1))))?;

    if let Some(c) = &curve {
        let band: Vec<(f64, f64)> = c
            .t
            .iter()
            .zip(c.value.iter().zip(&c.se))
            .map(|(t, (v, s))| (*t, (v + critical * s) * scale))
            .chain(c.t.iter().zip(c.value.iter().zip(&c.se)).rev().map(|(t, (v, s))| (*t, (v - critical * s) * scale)))
            .collect();
        chart
            .draw_series(std::iter::once(Polygon::new(band, colour.mix(0.15).filled())))?
            .label(format!("{:.0} % band of the fit", theta.confidence * 100.0))
            .legend(move |(x, y)| Rectangle::new([(x, y - 5), (x + 18, y + 5)], colour.mix(0.25).filled()));
        let inside: Vec<(f64, f64)> =
            c.t.iter()
                .zip(&c.value)
                .filter(|(t, _)| **t >= t_min && **t <= t_max)
                .map(|(t, v)| (*t, v * scale))
                .collect();
        chart
            .draw_series(LineSeries::new(inside, colour.stroke_width(2)))?
            .label("Flory–Krigbaum fit, A2 = a + b/T")
            .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 18, y)], colour.stroke_width(2)));
        for side in [
            c.t.iter().zip(&c.value).filter(|(t, _)| **t <= t_min).collect::<Vec<_>>(),
            c.t.iter().zip(&c.value).filter(|(t, _)| **t >= t_max).collect(),
        ] {
            let pts: Vec<(f64, f64)> = side.into_iter().map(|(t, v)| (*t, v * scale)).collect();
            if pts.len() > 1 {
                chart.draw_series(DashedLineSeries::new(pts, 8, 6, colour.stroke_width(2)))?;
            }
        }
    }

    let marker = series_marker(index);
    chart.draw_series(theta.points.iter().filter_map(|p| {
        p.se.map(|se| {
            ErrorBar::new_vertical(
                p.temperature_k,
                (p.value - se) * scale,
                p.value * scale,
                (p.value + se) * scale,
                colour.stroke_width(1),
                8,
            )
        })
    }))?;
    chart
        .draw_series(
            theta.points.iter().map(|p| marker_element(marker, (p.temperature_k, p.value * scale), 5, colour)),
        )?
        .label("measured, ± 1 SE")
        .legend(move |(x, y)| marker_element(marker, (x + 9, y), 5, colour));

    // The legend goes where it covers no reading, no fitted line and neither θ nor its interval.
    let px = |x: f64, y: f64| chart.backend_coord(&(x, y));
    let mut occupied: Vec<(i32, i32)> = theta
        .points
        .iter()
        .flat_map(|p| {
            let se = p.se.unwrap_or(0.0);
            [-1.0, 0.0, 1.0].map(|k| px(p.temperature_k, (p.value + k * se) * scale))
        })
        .collect();
    if let Some(c) = &curve {
        occupied.extend(c.t.iter().zip(&c.value).map(|(t, v)| px(*t, v * scale)));
    }
    let mut bands = Vec::new();
    if let Some(th) = theta.theta_k {
        let at = px(th, y_lo).0;
        // The line and its "θ" label.
        bands.push((at - 4, at + 14));
        if theta.ci_low_k.is_some() || theta.ci_high_k.is_some() {
            let lo = px(theta.ci_low_k.unwrap_or(x_lo).max(x_lo), y_lo).0;
            let hi = px(theta.ci_high_k.unwrap_or(x_hi).min(x_hi), y_lo).0;
            bands.push((lo, hi));
        }
    }
    // Its longest labels: the interval's, θ's (as drawn above), the fit's.
    let labels = [
        interval_label(theta),
        theta.theta_k.map_or(String::new(), |th| {
            format!("θ = {th:.2} K ({:.2} °C), {}", kelvin_to_celsius(th), theta.crossing.name())
        }),
        "Flory–Krigbaum fit, A2 = a + b/T".to_string(),
    ];
    let chars = labels.iter().map(|l| l.chars().count()).max().unwrap_or(30);
    let preferred = if theta.sense == Some(crate::theta::Sense::Lcst) {
        SeriesLabelPosition::UpperRight
    } else {
        SeriesLabelPosition::UpperLeft
    };
    let area = chart.plotting_area().get_pixel_range();
    draw_legend(&mut chart, super::legend_corner(area, 5, chars, &occupied, &bands, preferred).0)?;
    Ok(())
}

/// Every series' A2(T) on one chart, each with its θ.
pub fn draw_a2_overlay(
    root: &DrawingArea<SVGBackend, Shift>,
    series: &[(usize, &SeriesReport)],
) -> Result<(), FigureError> {
    let thetas: Vec<(usize, &SeriesReport, &ThetaReport)> =
        series.iter().filter_map(|(i, s)| s.theta.as_ref().map(|t| (*i, *s, t))).collect();
    let mut x = (f64::INFINITY, f64::NEG_INFINITY);
    let mut ys = Vec::new();
    // Each series' curve is drawn over its own range only, so the y range must hold it.
    let mut curves = Vec::new();
    for (_, _, t) in &thetas {
        let (lo, hi) = x_range(t);
        x = (x.0.min(lo), x.1.max(hi));
        ys.extend(t.points.iter().map(|p| p.value));
        let c = t.line.as_ref().map(|l| curve(l, lo, hi));
        if let Some(c) = &c {
            ys.extend(c.value.iter().copied());
        }
        curves.push(c);
    }
    ys.retain(|v| v.is_finite());
    let e = power_of_ten(ys.iter().fold(0.0, |m: f64, v| m.max(v.abs())));
    let scale = 10f64.powi(-e);
    let (y_min, y_max) = ys.iter().fold((0.0f64, 0.0f64), |(a, b), v| (a.min(*v * scale), b.max(*v * scale)));
    let pad = ((y_max - y_min) * 0.1).max(1e-12);
    let (y_lo, y_hi) = (y_min - pad, y_max + pad);
    let x = axis(x.0, x.1);
    let (y_lo, y_hi) = axis(y_lo, y_hi);
    let quantity = thetas.first().and_then(|(_, _, t)| t.line.as_ref()).map_or(Quantity::SecondVirial, |l| l.quantity);
    let mut chart =
        temperature_chart(root, "A2 against temperature, all series", x, (y_lo, y_hi), &y_label(quantity, e))?;
    chart.draw_series(std::iter::once(PathElement::new(vec![(x.0, 0.0), (x.1, 0.0)], INK.mix(0.6).stroke_width(1))))?;
    for ((i, s, t), c) in thetas.iter().zip(&curves) {
        let colour = series_colour(*i);
        let marker = series_marker(*i);
        if let Some(c) = c {
            chart.draw_series(LineSeries::new(
                c.t.iter().zip(&c.value).map(|(t, v)| (*t, v * scale)),
                colour.stroke_width(2),
            ))?;
        }
        let label = match t.theta_k {
            Some(th) => format!("{}: θ = {th:.1} K ({:.1} °C)", s.name, kelvin_to_celsius(th)),
            None => format!("{}: no θ", s.name),
        };
        chart
            .draw_series(
                t.points.iter().map(|p| marker_element(marker, (p.temperature_k, p.value * scale), 5, colour)),
            )?
            .label(label)
            .legend(move |(x, y)| marker_element(marker, (x + 9, y), 5, colour));
        if let Some(th) = t.theta_k {
            chart
                .draw_series(std::iter::once(PathElement::new(vec![(th, y_lo), (th, y_hi)], colour.stroke_width(1))))?;
            chart.draw_series(std::iter::once(Text::new(
                "θ",
                (th, y_hi - (y_hi - y_lo) * 0.02),
                ("sans-serif", 16).into_font().color(&colour),
            )))?;
        }
    }
    draw_legend(&mut chart, SeriesLabelPosition::LowerRight)?;
    Ok(())
}
