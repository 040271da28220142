//! The viscometry section of the analyze page: per series, the lines across fractions at each
//! temperature, the viscometric θ with its caveat, Kθ and the unperturbed dimensions.

use super::{escape, k_and_c};
use crate::report::{dimensions_line, plus_minus, Report};
use std::fmt::Write;

fn cell(value: Option<f64>, se: Option<f64>) -> String {
    match (value, se) {
        (Some(v), Some(s)) => escape(&plus_minus(v, s)),
        (Some(v), None) => format!("{v:.4}"),
        _ => "—".into(),
    }
}

/// The section, or nothing when no series is viscometry.
pub fn viscometry_section(report: &Report) -> String {
    let mut b = String::new();
    let series: Vec<_> = report.series.iter().filter_map(|s| Some((s, s.viscometry.as_ref()?))).collect();
    if series.is_empty() {
        return b;
    }
    let _ = writeln!(b, "<section id=\"viscometry\">\n<h2>Viscometry and unperturbed dimensions</h2>");
    for (s, v) in series {
        let _ = writeln!(b, "<h3>{}</h3>", escape(&s.name));
        let _ = writeln!(
            b,
            "<div class=\"scroll\"><table>\n<tr><th>T</th><th>fractions</th><th>Mark–Houwink a</th><th>K (mL/g)</th><th>Stockmayer–Fixman Kθ (mL mol<sup>½</sup> g<sup>−3/2</sup>)</th><th>⟨r²⟩0/M (Å² mol/g)</th></tr>"
        );
        for t in &v.temperatures {
            let _ = writeln!(
                b,
                "<tr><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td></tr>",
                k_and_c(Some(t.temperature_k)),
                t.n_fractions,
                cell(t.mark_houwink_exponent, t.mark_houwink_exponent_se),
                cell(t.mark_houwink_k_ml_per_g, t.mark_houwink_k_se_ml_per_g),
                cell(t.k_theta_ml_mol_half_per_g_three_halves, t.k_theta_se_ml_mol_half_per_g_three_halves),
                t.unperturbed_r2_over_m_nm2_mol_per_g.map_or("—".into(), |d| format!("{:.4}", d * 100.0))
            );
        }
        let _ = writeln!(b, "</table></div>");
        let _ = writeln!(b, "<ul>");
        for f in v.fractions.iter().filter(|f| f.molar_mass_source != "molar mass column") {
            let source = if f.molar_mass_source.is_empty() { "none known" } else { f.molar_mass_source.as_str() };
            let _ = writeln!(b, "<li>molar mass of {}: {}</li>", escape(&f.name), escape(source));
        }
        if let Some(t) = &v.viscometric_theta {
            let interval = match (t.interval.low_k, t.interval.high_k) {
                (Some(lo), Some(hi)) => format!("{lo:.2}–{hi:.2} K"),
                _ => t.interval.kind.name().to_string(),
            };
            let _ = writeln!(
                b,
                "<li>viscometric θ (a = ½) = {} ± {} K, interval {interval} — {}</li>",
                k_and_c(Some(t.theta_k)),
                t.se_k.map_or("—".into(), |s| format!("{s:.2}")),
                escape(&t.note)
            );
        }
        if let Some(k) = &v.k_theta_at_theta {
            let _ = writeln!(
                b,
                "<li>Kθ at {} ({}) = {} mL mol<sup>½</sup> g<sup>−3/2</sup></li>",
                escape(&k.theta_from),
                k_and_c(Some(k.temperature_k)),
                cell(Some(k.k_theta_ml_mol_half_per_g_three_halves), k.k_theta_se_ml_mol_half_per_g_three_halves)
            );
        }
        if let Some(d) = &s.unperturbed_dimensions {
            let _ = writeln!(b, "<li>{}</li>", escape(&dimensions_line(d)));
        }
        if let (Some(c), Some(se)) = (v.r2_temperature_coefficient_per_k, v.r2_temperature_coefficient_se_per_k) {
            let _ = writeln!(b, "<li>d ln⟨r²⟩0/dT = {} 1/K</li>", escape(&plus_minus(c, se)));
        }
        let _ = writeln!(b, "</ul>");
    }
    let _ = writeln!(b, "</section>");
    b
}
