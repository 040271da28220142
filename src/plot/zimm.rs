//! Zimm plots of a light-scattering series, one panel per temperature: K c/R against
//! q² + k c (Zimm 1948, J. Chem. Phys. 16, 1093), the readings joined at each concentration,
//! the zero-angle values (■) with their line 1/Mw + 2 A2 c (+ 3 A3 c²), and the zero-concentration values
//! (▲) with their line 1/Mw (1 + q² Rg²/3). The two lines meet at 1/Mw on the y axis. Without
//! angles the panel is a Debye plot, K c/R against c.

use super::format::{axis, power_of_ten, superscript};
use super::panels::{layout, panel_chart, panel_height};
use super::{ink_text, marker_element, FigureError, Marker, GREY, INK, PALETTE};
use crate::report::{plus_minus, SeriesReport};
use crate::scattering::ScatteringFit;
use plotters::coord::Shift;
use plotters::prelude::*;

/// Height of a Zimm figure with `n` temperatures, px.
pub fn zimm_height(n: usize) -> u32 {
    panel_height(n)
}

/// The spread constant k (1/µm² per g/L) that gives the concentrations the same width on the
/// x axis as the angles, rounded to one significant figure so that it reads in the label.
fn spread(fits: &[ScatteringFit]) -> f64 {
    let q2_max = fits.iter().flat_map(|f| f.zimm.readings.iter().map(|r| r.q2_per_um2)).fold(0.0, f64::max);
    let c_max =
        fits.iter().flat_map(|f| f.zimm.readings.iter().map(|r| r.concentration_g_per_ml * 1e3)).fold(0.0, f64::max);
    if !(q2_max > 0.0 && c_max > 0.0) {
        return 0.0;
    }
    let k = q2_max / c_max;
    let e = 10f64.powi(k.log10().floor() as i32);
    (k / e).round().max(1.0) * e
}

/// Zimm (or Debye) panels of one light-scattering series.
pub fn draw_zimm(root: &DrawingArea<SVGBackend, Shift>, s: &SeriesReport) -> Result<(), FigureError> {
    let fits = &s.light_scattering;
    let k = spread(fits);
    let with_angles = k > 0.0;
    // x: q² + k c in 1/µm² (c in g/L) with angles; c in g/L without.
    let x_of = |c: f64, q2: f64| if with_angles { q2 + k * c * 1e3 } else { c * 1e3 };
    let all: Vec<f64> = fits.iter().flat_map(|f| f.zimm.readings.iter().map(|r| r.kc_over_r_mol_per_g)).collect();
    let e = power_of_ten(all.iter().fold(0.0, |m: f64, v| m.max(v.abs())));
    let scale = 10f64.powi(-e);
    let unit = if e == 0 { "mol/g".to_string() } else { format!("{} mol/g", superscript(e)) };
    let x_max = fits
        .iter()
        .flat_map(|f| f.zimm.readings.iter().map(|r| x_of(r.concentration_g_per_ml, r.q2_per_um2)))
        .fold(0.0, f64::max);
    let (x_lo, x_hi) = axis(0.0, x_max * 1.08);
    let x_desc = if with_angles {
        format!("q² + k c (1/µm², c in g/L), k = {k} µm⁻² L/g")
    } else {
        "c (g/L)".to_string()
    };
    let kind = if with_angles { "Zimm plot" } else { "Debye plot" };
    let panels = layout(root, fits.len(), &format!("{kind} (K c/R): {}", s.name))?;
    let last = fits.len().saturating_sub(1);
    for (n, (f, area)) in fits.iter().zip(panels.iter()).enumerate() {
        let z = &f.zimm;
        let inv_mw = 1.0 / f.mw_g_per_mol;
        // mol mL²/g³ × (g/mL)² = mol/g.
        let a3 = f.a3_mol_ml2_per_g3.unwrap_or(0.0);
        let zero_angle_line = |c: f64| inv_mw + 2.0 * f.a2_mol_ml_per_g2 * c + 3.0 * a3 * c * c;
        let c_max = z.readings.iter().map(|r| r.concentration_g_per_ml).fold(0.0, f64::max);
        let mut ys: Vec<f64> = z.readings.iter().map(|r| r.kc_over_r_mol_per_g * scale).collect();
        ys.extend(z.zero_angle.iter().chain(&z.zero_concentration).map(|r| r.kc_over_r_mol_per_g * scale));
        ys.push(inv_mw * scale);
        let (lo, hi) = ys.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| (a.min(*v), b.max(*v)));
        let pad = ((hi - lo) * 0.15).max(hi.abs() * 0.01).max(1e-12);
        let (y_lo, y_hi) = axis(lo - pad, hi + pad * 2.5);
        let mut chart =
            panel_chart(area, n == last, &x_desc, (x_lo, x_hi), (y_lo, y_hi), &format!("K c/R ({unit})"), 4)?;
        // Readings at one concentration, joined across angles.
        let mut concentrations: Vec<f64> = z.readings.iter().map(|r| r.concentration_g_per_ml).collect();
        concentrations.sort_by(f64::total_cmp);
        concentrations.dedup();
        for c in &concentrations {
            let mut at: Vec<(f64, f64)> = z
                .readings
                .iter()
                // The same value as read: grouping, not a tolerance.
                .filter(|r| r.concentration_g_per_ml.to_bits() == c.to_bits())
                .map(|r| (x_of(r.concentration_g_per_ml, r.q2_per_um2), r.kc_over_r_mol_per_g * scale))
                .collect();
            at.sort_by(|a, b| a.0.total_cmp(&b.0));
            if with_angles {
                chart.draw_series(LineSeries::new(at.clone(), GREY.mix(0.5).stroke_width(1)))?;
            }
            chart.draw_series(at.iter().map(|p| marker_element(Marker::Circle, *p, 3, INK)))?;
        }
        // Zero angle: ■ and 1/Mw + 2 A2 c (+ 3 A3 c²).
        let line: Vec<(f64, f64)> =
            (0..=20).map(|i| c_max * i as f64 / 20.0).map(|c| (x_of(c, 0.0), zero_angle_line(c) * scale)).collect();
        chart.draw_series(LineSeries::new(line, PALETTE[0].stroke_width(2)))?;
        chart.draw_series(z.zero_angle.iter().map(|r| {
            marker_element(
                Marker::Square,
                (x_of(r.concentration_g_per_ml, 0.0), r.kc_over_r_mol_per_g * scale),
                4,
                PALETTE[0],
            )
        }))?;
        // Zero concentration: ▲ and its line in q².
        if let (Some(i), Some(slope)) =
            (z.zero_concentration_intercept_mol_per_g, z.zero_concentration_slope_mol_um2_per_g)
        {
            let q2_max = z.readings.iter().map(|r| r.q2_per_um2).fold(0.0, f64::max);
            let line = vec![(0.0, i * scale), (q2_max, (i + slope * q2_max) * scale)];
            chart.draw_series(LineSeries::new(line, PALETTE[1].stroke_width(2)))?;
            chart.draw_series(z.zero_concentration.iter().map(|r| {
                marker_element(Marker::Triangle, (r.q2_per_um2, r.kc_over_r_mol_per_g * scale), 4, PALETTE[1])
            }))?;
        }
        let rg =
            f.rg_nm.map_or(String::new(), |r| format!(" · Rg = {} nm", plus_minus(r, f.rg_se_nm.unwrap_or(f64::NAN))));
        let legend = if with_angles { " · ■ q → 0, ▲ c → 0" } else { "" };
        let text = format!(
            "{:.2} K · Mw = {} g/mol · A2 = {} mol mL/g²{rg}{}",
            f.temperature_k,
            plus_minus(f.mw_g_per_mol, f.mw_se_g_per_mol),
            plus_minus(f.a2_mol_ml_per_g2, f.a2_se_mol_ml_per_g2),
            legend
        );
        chart.draw_series(std::iter::once(Text::new(
            text,
            (x_lo + (x_hi - x_lo) * 0.02, y_hi - (y_hi - y_lo) * 0.06),
            ink_text(13),
        )))?;
    }
    Ok(())
}
