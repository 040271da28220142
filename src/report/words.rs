//! The answer in words: one line per series that a chemist can paste into a lab notebook, and
//! the one thing to do next when the answer is weak.

use super::{SeriesReport, ThetaReport};
use crate::theta::{Crossing, IntervalKind};
use crate::units::kelvin_to_celsius;

/// A2 within this many SEs of zero reads as "near θ" in words (about a 95 % band, common
/// practice).
const NEAR_THETA_SES: f64 = 2.0;

/// The series' answer in words: θ in °C with its SE and interval, Mn, ψ1 and χ where the
/// volumes are known, the solvent's quality at each measured temperature, and what to do next
/// when θ is missing, extrapolated, unbounded or at the design's limit. `None` for a series
/// without a θ analysis (refused, or critical temperatures alone).
pub fn summary_line(s: &SeriesReport) -> Option<String> {
    let t = s.theta.as_ref()?;
    let mut parts = Vec::new();
    parts.push(theta_in_words(t));
    if let Some(m) = &t.mn_consistency {
        parts.push(format!("Mn = {} g/mol", to_two_figures_of_se(m.mean_mn_g_per_mol, m.mean_mn_se_g_per_mol)));
    }
    if let Some(f) = &t.flory {
        let chi = |i: usize| f.temperatures.get(i).map(|c| (c.chi_model, kelvin_to_celsius(c.temperature_k)));
        let range = match (chi(0), chi(f.temperatures.len().saturating_sub(1))) {
            (Some((a, ta)), Some((b, tb))) if f.temperatures.len() > 1 => {
                format!("; χ = 0.5 at θ, {a:.3} at {ta:.0} °C, {b:.3} at {tb:.0} °C")
            }
            _ => "; χ = 0.5 at θ".into(),
        };
        parts.push(format!("ψ1 = {:.3} ± {:.3}{range}", f.psi1, f.psi1_se));
    }
    if let Some(quality) = quality_in_words(s) {
        parts.push(quality);
    }
    let mut line = parts.join("; ");
    if let Some(next) = next_step(t) {
        line.push_str(". Next: ");
        line.push_str(&next);
    }
    Some(line)
}

fn theta_in_words(t: &ThetaReport) -> String {
    let Some(k) = t.theta_k else {
        return format!("no θ ({})", t.reason.as_deref().unwrap_or("A2 does not cross zero"));
    };
    let se = t.se_k.map_or(String::new(), |s| format!(" ± {s:.2}"));
    let level = t.confidence * 100.0;
    let interval = match (t.ci_kind, t.ci_low_k, t.ci_high_k) {
        (IntervalKind::Bounded, Some(lo), Some(hi)) => {
            format!("{level:.0} % interval {:.2} to {:.2} °C", kelvin_to_celsius(lo), kelvin_to_celsius(hi))
        }
        (_, Some(lo), None) => format!("{level:.0} % interval above {:.2} °C, no upper bound", kelvin_to_celsius(lo)),
        _ => format!("no finite {level:.0} % interval"),
    };
    let place = match t.crossing {
        Crossing::Bracketed => "between the measured temperatures",
        Crossing::Extrapolated => "outside the measured temperatures",
        Crossing::None => "",
    };
    let sense = t.sense.map_or(String::new(), |s| format!(", {}-type", s.label()));
    format!("θ = {:.2}{se} °C ({interval}, {place}{sense})", kelvin_to_celsius(k))
}

/// Poor, near θ or good at each measured temperature, from the sign of A2 against its SE.
fn quality_in_words(s: &SeriesReport) -> Option<String> {
    if s.fits.is_empty() {
        return None;
    }
    let mut groups: Vec<(&str, Vec<String>)> = vec![("poor", Vec::new()), ("near θ", Vec::new()), ("good", Vec::new())];
    for f in &s.fits {
        let z = f.a2_mol_ml_per_g2 / f.a2_se_mol_ml_per_g2;
        let class = if !z.is_finite() || z.abs() <= NEAR_THETA_SES {
            1
        } else if z < 0.0 {
            0
        } else {
            2
        };
        groups[class].1.push(format!("{:.0}", f.temperature_c));
    }
    let said: Vec<String> = groups
        .into_iter()
        .filter(|(_, temps)| !temps.is_empty())
        .map(|(quality, temps)| format!("{quality} at {} °C", temps.join(", ")))
        .collect();
    Some(format!("the solvent is {}", said.join(", ")))
}

/// A large value and its SE rounded to the SE's second significant figure (184 777 ± 687 →
/// "184780 ± 690"), as a notebook would write them.
fn to_two_figures_of_se(value: f64, se: f64) -> String {
    if !(se.is_finite() && se > 0.0 && value.is_finite()) {
        return format!("{value:.0}");
    }
    let step = 10f64.powi(se.log10().floor() as i32 - 1).max(1.0);
    format!("{:.0} ± {:.0}", (value / step).round() * step, (se / step).round() * step)
}

/// What to measure next when the answer is weak. It names a side of θ, never a temperature:
/// which temperatures are safe for the solvent is `thetaseek next`'s job (it checks the liquid
/// range and shows the cautions).
fn next_step(t: &ThetaReport) -> Option<String> {
    const ASK_NEXT: &str = "`thetaseek next` suggests temperatures inside the solvent's safe liquid range";
    match (t.theta_k, t.crossing, t.ci_kind) {
        (None, _, _) => Some(format!(
            "A2 keeps one sign over the measured range: measure further towards where it would cross ({ASK_NEXT})"
        )),
        (Some(k), Crossing::Extrapolated, _) => {
            let word = if t.points.iter().all(|p| p.temperature_k > k) { "below" } else { "above" };
            Some(format!("θ lies outside the data: measure {word} θ as well ({ASK_NEXT})"))
        }
        (Some(_), _, IntervalKind::Bounded) if t.design_limited => {
            Some("the interval rests on three concentrations a temperature: measure at four or more".into())
        }
        (Some(_), _, kind) if kind != IntervalKind::Bounded => {
            Some(format!("the interval is not bounded: measure more temperatures near θ ({ASK_NEXT})"))
        }
        _ => None,
    }
}

#[cfg(test)]
mod tests {
    use super::to_two_figures_of_se;

    #[test]
    fn values_are_rounded_to_two_figures_of_their_se() {
        assert_eq!(to_two_figures_of_se(184_777.0, 687.0), "184780 ± 690");
        assert_eq!(to_two_figures_of_se(185_631.0, 94.0), "185631 ± 94");
        assert_eq!(to_two_figures_of_se(185_631.0, f64::NAN), "185631");
    }
}
