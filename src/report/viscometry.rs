//! The viscometry route in the terminal and in words: [η] of each fraction at each temperature,
//! the lines across fractions, the viscometric θ and the unperturbed dimensions.

use super::numbers::plus_minus;
use crate::chain_dimensions::UnperturbedDimensions;
use crate::units::kelvin_to_celsius;
use crate::viscometry::ViscometryResult;
use std::fmt::Write;

fn value_se(value: Option<f64>, se: Option<f64>) -> String {
    match (value, se) {
        (Some(v), Some(s)) => plus_minus(v, s),
        (Some(v), None) => format!("{v:.4}"),
        _ => "—".into(),
    }
}

/// The block of one viscometry series.
pub fn render_viscometry(v: &ViscometryResult, dimensions: Option<&UnperturbedDimensions>) -> String {
    let mut out = String::new();
    let temperatures: Vec<f64> = v.temperatures.iter().map(|t| t.temperature_k).collect();
    let _ = write!(out, "  [η] (mL/g) by fraction and temperature:\n  {:<18} {:>10}", "fraction", "M (g/mol)");
    for t in &temperatures {
        let _ = write!(out, " {:>16}", format!("{:.2} °C", kelvin_to_celsius(*t)));
    }
    out.push('\n');
    for f in &v.fractions {
        let _ =
            write!(out, "  {:<18} {:>10}", f.name, f.molar_mass_g_per_mol.map_or("—".into(), |m| format!("{m:.0}")));
        for t in &temperatures {
            let d = v.dilutions.iter().find(|d| d.fraction == f.name && (d.temperature_k - t).abs() < 1e-9);
            let cell = d.map_or("—".into(), |d| {
                let mark = if d.method == crate::viscometry::DilutionMethod::SolomonCiuta { "*" } else { "" };
                format!("{}{mark}", value_se(Some(d.intrinsic_viscosity_ml_per_g), d.intrinsic_viscosity_se_ml_per_g))
            });
            let _ = write!(out, " {cell:>16}");
        }
        out.push('\n');
        if !f.molar_mass_source.is_empty() && f.molar_mass_source != "molar mass column" {
            let _ = writeln!(out, "  {:<18} molar mass: {}", "", f.molar_mass_source);
        }
    }
    if v.dilutions.iter().any(|d| d.method == crate::viscometry::DilutionMethod::SolomonCiuta) {
        let _ = writeln!(out, "  * one concentration: Solomon–Ciută single-point estimate, no SE");
    }
    let _ = writeln!(
        out,
        "  {:>7} {:>3} {:>20} {:>18} {:>22} {:>12}",
        "T (°C)", "n", "Mark–Houwink a", "K (mL/g)", "S–F Kθ (mL mol^½ g^-3/2)", "kH (mean)"
    );
    for t in &v.temperatures {
        let khs: Vec<f64> = v
            .dilutions
            .iter()
            .filter(|d| (d.temperature_k - t.temperature_k).abs() < 1e-9)
            .filter_map(|d| d.huggins_constant)
            .collect();
        let kh =
            if khs.is_empty() { "—".into() } else { format!("{:.3}", khs.iter().sum::<f64>() / khs.len() as f64) };
        let _ = writeln!(
            out,
            "  {:>7.2} {:>3} {:>20} {:>18} {:>22} {:>12}",
            t.temperature_c,
            t.n_fractions,
            value_se(t.mark_houwink_exponent, t.mark_houwink_exponent_se),
            value_se(t.mark_houwink_k_ml_per_g, t.mark_houwink_k_se_ml_per_g),
            value_se(t.k_theta_ml_mol_half_per_g_three_halves, t.k_theta_se_ml_mol_half_per_g_three_halves),
            kh
        );
    }
    for d in &v.dilutions {
        for w in &d.warnings {
            let _ = writeln!(out, "  ! {} at {:.2} °C: {}", d.fraction, d.temperature_c, w.message);
        }
    }
    if let Some(t) = &v.viscometric_theta {
        let interval = match (t.interval.low_k, t.interval.high_k) {
            (Some(lo), Some(hi)) => format!(
                "{:.0} % interval {:.2} to {:.2} °C",
                t.confidence * 100.0,
                kelvin_to_celsius(lo),
                kelvin_to_celsius(hi)
            ),
            _ => format!("no finite {:.0} % interval", t.confidence * 100.0),
        };
        let _ = writeln!(
            out,
            "  viscometric θ (a = ½) = {:.2}{} °C, {interval}, {}",
            t.theta_c,
            t.se_k.map_or(String::new(), |s| format!(" ± {s:.2}")),
            t.crossing.name()
        );
        let _ = writeln!(out, "  note: {}", t.note);
    }
    if let Some(k) = &v.k_theta_at_theta {
        let _ = writeln!(
            out,
            "  Kθ at {} ({:.2} °C) = {} mL mol^½ g^-3/2 ({} fractions)",
            k.theta_from,
            kelvin_to_celsius(k.temperature_k),
            value_se(Some(k.k_theta_ml_mol_half_per_g_three_halves), k.k_theta_se_ml_mol_half_per_g_three_halves),
            k.n_fractions
        );
    }
    if let Some(d) = dimensions {
        let _ = writeln!(out, "  {}", dimensions_line(d));
    }
    if let (Some(c), Some(se)) = (v.r2_temperature_coefficient_per_k, v.r2_temperature_coefficient_se_per_k) {
        let _ = writeln!(out, "  d ln⟨r²⟩0/dT = {} 1/K (Stockmayer–Fixman Kθ across temperatures)", plus_minus(c, se));
    }
    out
}

/// ⟨r²⟩0/M with its SE, in nm² and Å² mol/g, how it was measured, and C∞.
pub fn dimensions_line(d: &UnperturbedDimensions) -> String {
    let nm2 = d.unperturbed_r2_over_m_nm2_mol_per_g;
    let se = d.unperturbed_r2_over_m_se_nm2_mol_per_g;
    let value = value_se(Some(nm2 * 100.0), se.map(|s| s * 100.0));
    let phi = d.flory_fox_constant_per_mol.map_or(String::new(), |p| format!(", Φ0 = {p:.3e} mol⁻¹"));
    let c_inf = d
        .characteristic_ratio
        .map_or(String::new(), |c| format!("; C∞ = {}", value_se(Some(c), d.characteristic_ratio_se)));
    format!("⟨r²⟩0/M = {value} Å² mol/g ({:.5} nm² mol/g) from {}{phi}{c_inf}", nm2, d.method)
}

/// The viscometry series' answer in words.
pub fn viscometry_in_words(v: &ViscometryResult, dimensions: Option<&UnperturbedDimensions>) -> Option<String> {
    let mut parts = Vec::new();
    if let Some(t) = &v.viscometric_theta {
        let se = t.se_k.map_or(String::new(), |s| format!(" ± {s:.2}"));
        let interval = match (t.interval.low_k, t.interval.high_k) {
            (Some(lo), Some(hi)) => {
                format!(
                    ", {:.0} % interval {:.2} to {:.2} °C",
                    t.confidence * 100.0,
                    kelvin_to_celsius(lo),
                    kelvin_to_celsius(hi)
                )
            }
            _ => String::new(),
        };
        parts.push(format!("viscometric θ ≈ {:.2}{se} °C{interval} (approximate: where a = ½)", t.theta_c));
    }
    let with_a: Vec<_> =
        v.temperatures.iter().filter_map(|t| Some((t.temperature_c, t.mark_houwink_exponent?))).collect();
    if let (Some(first), Some(last)) = (with_a.first(), with_a.last()) {
        if with_a.len() > 1 {
            parts.push(format!("a goes from {:.3} at {:.1} °C to {:.3} at {:.1} °C", first.1, first.0, last.1, last.0));
        } else {
            parts.push(format!("a = {:.3} at {:.1} °C", first.1, first.0));
        }
    }
    if let Some(d) = dimensions {
        let se = d.unperturbed_r2_over_m_se_nm2_mol_per_g.map_or(String::new(), |s| format!(" ± {:.3}", s * 100.0));
        parts.push(format!("⟨r²⟩0/M = {:.3}{se} Å² mol/g", d.unperturbed_r2_over_m_nm2_mol_per_g * 100.0));
    }
    (!parts.is_empty()).then(|| parts.join("; "))
}
