//! Planning a chain-dimension study: for each solvent, the temperature that gives the wanted
//! solvent quality, whether it can be held (thermostat, liquid range, critical temperature of
//! the user's sample), how tightly, and which solvent to choose. Pure computation.

use crate::dataset::Quantity;
use crate::input::SolventProperties;
use crate::numerics::brent_root;
use crate::thermo::{
    expansion_argument, expansion_factor, flory_cm, overlap_concentration, segment_ratio, shultz_flory_tc,
};
use crate::theta::{Crossing, FittedLine, IntervalKind, Sense};
use crate::units::kelvin_to_celsius;
use serde::Serialize;

pub use crate::safety::{cautions, BOILING_MARGIN_K, CRITICAL_MARGIN_K, MELTING_MARGIN_K};
use crate::safety::{SafeWindow, SeparatesOn};
/// Dilute work: stay below c*/this (a rule of thumb, common practice).
pub const OVERLAP_FRACTION: f64 = 5.0;

/// The solvent quality the study needs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Goal {
    /// Unperturbed chains: T = θ.
    Unperturbed,
    /// A given A2, mol m³/kg² (= mol mL/g²).
    TargetA2(f64),
    /// A given expansion factor α.
    TargetExpansion(f64),
}

/// Settings of a plan, SI.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PlanSettings {
    /// Molar mass of the sample to be studied, kg/mol.
    pub molar_mass: f64,
    /// Polymer partial specific volume v̄, m³/kg.
    pub specific_volume: Option<f64>,
    /// What the study needs.
    pub goal: Goal,
    /// Temperatures the instrument can hold, K.
    pub thermostat: Option<(f64, f64)>,
    /// |A2| tolerance, mol m³/kg².
    pub a2_tolerance: f64,
    /// ⟨r²⟩0/M, m² mol/kg.
    pub unperturbed_r2_over_m: Option<f64>,
}

/// What the plan needs from an analysed series.
#[derive(Debug, Clone, PartialEq)]
pub struct PlanSeries {
    /// Series name.
    pub series: String,
    /// Solvent name (matched against the solvents table).
    pub solvent: String,
    /// θ, K.
    pub theta_k: Option<f64>,
    /// Interval, K.
    pub ci_low_k: Option<f64>,
    /// Interval, K.
    pub ci_high_k: Option<f64>,
    /// Shape of the interval.
    pub ci_kind: IntervalKind,
    /// Where θ lies against the data.
    pub crossing: Crossing,
    /// UCST or LCST.
    pub sense: Option<Sense>,
    /// Why there is no θ.
    pub reason: Option<String>,
    /// The fitted A2 (or 1/2 − χ) = a + b/T.
    pub line: Option<FittedLine>,
}

/// One solvent's assessment.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Candidate {
    /// Solvent.
    pub solvent: String,
    /// Series it came from.
    pub series: String,
    /// Place in the ranking (1 = best).
    pub rank: usize,
    /// θ, K.
    pub theta_k: Option<f64>,
    /// θ interval, K.
    pub ci_low_k: Option<f64>,
    /// θ interval, K.
    pub ci_high_k: Option<f64>,
    /// The working temperature for the goal, K.
    pub target_temperature_k: Option<f64>,
    /// Whether it passes every check.
    pub suitable: bool,
    /// Why it is suitable or ruled out, and what was noticed.
    pub reasons: Vec<String>,
    /// What could not be checked for lack of a property.
    pub unchecked: Vec<String>,
    /// Warnings that do not rule it out.
    pub warnings: Vec<String>,
    /// ψ1, where known.
    pub psi1: Option<f64>,
    /// Shultz–Flory critical temperature of the sample, K.
    pub critical_temperature_k: Option<f64>,
    /// Distance of the working temperature from Tc on the safe side, K.
    pub margin_k: Option<f64>,
    /// ± K around the working temperature that keeps A2 within tolerance of its target.
    pub required_stability_k: Option<f64>,
    /// Kelvin below the boiling point.
    pub boiling_margin_k: Option<f64>,
    /// Expansion factor at the working temperature.
    pub expansion_factor: Option<f64>,
    /// Overlap concentration c*, g/mL.
    pub overlap_concentration_g_per_ml: Option<f64>,
    /// Suggested upper concentration for dilute work, g/mL.
    pub suggested_max_concentration_g_per_ml: Option<f64>,
    /// How the upper concentration was set.
    pub concentration_note: String,
}

/// The chosen solvent and temperature.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Recommendation {
    /// Solvent.
    pub solvent: String,
    /// Working temperature, °C.
    pub temperature_c: f64,
    /// Window that keeps A2 within tolerance (and inside the thermostat), °C.
    pub temperature_window_c: [f64; 2],
    /// Why this one.
    pub reasons: Vec<String>,
}

/// The whole plan.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Plan {
    /// The recommendation (null when nothing qualifies).
    pub recommendation: Option<Recommendation>,
    /// Why there is none, when there is none.
    pub no_recommendation_reason: Option<String>,
    /// Every solvent, best first.
    pub candidates: Vec<Candidate>,
    /// Safety cautions, always given.
    pub cautions: Vec<String>,
}

impl PlanSeries {
    /// A2 (SI) as a function of T from the line; `k` converts 1/2 − χ to A2.
    fn a2(&self, t: f64, k: f64) -> Option<f64> {
        self.line.as_ref().map(|l| k * (l.a + l.b_k / t))
    }
}

/// Assesses every series' solvent and ranks them. `solvents` must hold every series' solvent.
pub fn plan(series: &[PlanSeries], solvents: &[SolventProperties], settings: &PlanSettings) -> Plan {
    let mut candidates: Vec<Candidate> = series
        .iter()
        .map(|s| {
            let props = solvents.iter().find(|p| p.name == s.solvent).cloned().unwrap_or_default();
            assess(s, &props, settings)
        })
        .collect();
    // Suitable first; then fewer warnings; then the easier temperature control; then more room
    // below the boiling point.
    candidates.sort_by(|a, b| {
        b.suitable
            .cmp(&a.suitable)
            .then(a.warnings.len().cmp(&b.warnings.len()))
            .then(b.required_stability_k.unwrap_or(0.0).total_cmp(&a.required_stability_k.unwrap_or(0.0)))
            .then(b.boiling_margin_k.unwrap_or(0.0).total_cmp(&a.boiling_margin_k.unwrap_or(0.0)))
    });
    for (i, c) in candidates.iter_mut().enumerate() {
        c.rank = i + 1;
    }
    let recommendation = candidates.first().filter(|c| c.suitable).map(|c| {
        let t = c.target_temperature_k.unwrap_or(f64::NAN);
        let half = c.required_stability_k.unwrap_or(0.0);
        // The window to hold stays inside the same safety window `next` applies.
        let mut safe = SafeWindow::new(settings.thermostat.unwrap_or((t - half, t + half)));
        if let Some(props) = solvents.iter().find(|p| p.name == c.solvent) {
            safe.liquid_range(props);
        }
        if let (Some(tc), Some(psi1)) = (c.critical_temperature_k, c.psi1) {
            let side = if psi1 > 0.0 { SeparatesOn::Cooling } else { SeparatesOn::Heating };
            safe.phase_separation(tc, side, &c.series);
        }
        let (lo, hi) = ((t - half).max(safe.low_k).min(t), (t + half).min(safe.high_k).max(t));
        let mut reasons = vec![format!("ranked first of {} solvent(s)", candidates.len())];
        reasons.extend(c.reasons.iter().cloned());
        Recommendation {
            solvent: c.solvent.clone(),
            temperature_c: kelvin_to_celsius(t),
            temperature_window_c: [kelvin_to_celsius(lo), kelvin_to_celsius(hi)],
            reasons,
        }
    });
    let no_recommendation_reason = recommendation.is_none().then(|| {
        if candidates.is_empty() {
            "no series to plan from".to_string()
        } else {
            "no solvent passes every check; see each candidate's reasons".to_string()
        }
    });
    Plan { recommendation, no_recommendation_reason, candidates, cautions: cautions() }
}

/// The root of `f` in [lo, hi] when f changes sign there.
fn root_in(f: impl Fn(f64) -> f64, lo: f64, hi: f64) -> Option<f64> {
    let (a, b) = (f(lo), f(hi));
    (a.is_finite() && b.is_finite() && a.signum() != b.signum()).then(|| brent_root(f, lo, hi)).flatten()
}

fn assess(s: &PlanSeries, props: &SolventProperties, settings: &PlanSettings) -> Candidate {
    let mut c = Candidate {
        solvent: s.solvent.clone(),
        series: s.series.clone(),
        rank: 0,
        theta_k: s.theta_k,
        ci_low_k: s.ci_low_k,
        ci_high_k: s.ci_high_k,
        target_temperature_k: None,
        suitable: false,
        reasons: Vec::new(),
        unchecked: Vec::new(),
        warnings: Vec::new(),
        psi1: None,
        critical_temperature_k: None,
        margin_k: None,
        required_stability_k: None,
        boiling_margin_k: None,
        expansion_factor: None,
        overlap_concentration_g_per_ml: None,
        suggested_max_concentration_g_per_ml: None,
        concentration_note: String::new(),
    };
    let (Some(theta), Some(line)) = (s.theta_k, s.line.as_ref()) else {
        c.reasons.push(format!("ruled out: no θ ({})", s.reason.as_deref().unwrap_or("no crossing")));
        return c;
    };
    if s.crossing == Crossing::Extrapolated {
        c.warnings.push("θ is extrapolated beyond the measured temperatures: measure on its other side first".into());
    }
    let volumes = match (settings.specific_volume, props.molar_volume) {
        (Some(v), Some(m)) => Some((v, m)),
        _ => None,
    };
    // k turns the line's quantity into A2; ψ1 = a/k·(v̄²/V1)⁻¹ for A2 lines, a for χ lines.
    let k = match (line.quantity, volumes) {
        (Quantity::SecondVirial, _) => Some(1.0),
        (Quantity::HalfMinusChi, Some((v, m))) => Some(v * v / m),
        (Quantity::HalfMinusChi, None) => None,
    };
    c.psi1 = match (line.quantity, volumes) {
        (Quantity::HalfMinusChi, _) => Some(line.a),
        (Quantity::SecondVirial, Some((v, m))) => Some(line.a * m / (v * v)),
        (Quantity::SecondVirial, None) => None,
    };
    if c.psi1.is_none() {
        c.unchecked.push(
            "critical temperature and expansion: need the solvent's molar volume and --polymer-specific-volume".into(),
        );
    }

    // The working temperature for the goal, searched over the liquid range (or ±150 K of θ).
    let search = (
        props.melting_point_k.map_or(theta - 150.0, |m| m).max(1.0),
        props.boiling_point_k.map_or(theta + 150.0, |b| b),
    );
    let target = match settings.goal {
        Goal::Unperturbed => Some(theta),
        Goal::TargetA2(target) => match k {
            Some(k) => root_in(|t| s.a2(t, k).unwrap_or(f64::NAN) - target, search.0, search.1),
            None => {
                c.unchecked.push("target A2: a χ series needs the molar volume and --polymer-specific-volume".into());
                None
            }
        },
        Goal::TargetExpansion(alpha) => {
            match (c.psi1, volumes, settings.unperturbed_r2_over_m) {
                (Some(psi1), Some((v, m)), Some(r2)) => {
                    let cm = flory_cm(v, m, r2);
                    let alpha_at =
                        |t: f64| expansion_factor(expansion_argument(cm, psi1, theta, t, settings.molar_mass));
                    let f = |t: f64| alpha_at(t).map_or(f64::NAN, |a| a - alpha);
                    // α grows away from θ on the good side: search between θ and the liquid-range end.
                    let good_end = if psi1 > 0.0 { search.1 } else { search.0 };
                    let (lo, hi) = if theta < good_end { (theta, good_end) } else { (good_end, theta) };
                    root_in(f, lo, hi)
                }
                _ => {
                    c.unchecked.push("target expansion: needs --unperturbed-dimension, the molar volume and --polymer-specific-volume".into());
                    None
                }
            }
        }
    };
    let Some(t) = target else {
        c.reasons.push("ruled out: the goal's solvent quality is not reached inside the liquid range".into());
        return c;
    };
    c.target_temperature_k = Some(t);
    let mut ruled_out = Vec::new();
    let t_c = kelvin_to_celsius(t);

    if let Some((lo, hi)) = settings.thermostat {
        if t < lo || t > hi {
            ruled_out.push(format!(
                "{t_c:.1} °C lies outside the thermostat range {:.1}–{:.1} °C",
                kelvin_to_celsius(lo),
                kelvin_to_celsius(hi)
            ));
        } else {
            c.reasons.push(format!("{t_c:.1} °C is inside the thermostat range"));
        }
    } else {
        c.unchecked.push("thermostat range: give --thermostat LOW:HIGH".into());
    }
    match props.boiling_point_k {
        Some(bp) => {
            c.boiling_margin_k = Some(bp - t);
            if t >= bp {
                ruled_out.push(format!("{t_c:.1} °C lies above the boiling point ({:.1} °C)", kelvin_to_celsius(bp)));
            } else if bp - t < BOILING_MARGIN_K {
                ruled_out.push(format!(
                    "{t_c:.1} °C is only {:.1} K below the boiling point ({:.1} °C); keep at least {BOILING_MARGIN_K:.0} K (common practice)",
                    bp - t,
                    kelvin_to_celsius(bp)
                ));
            } else {
                c.reasons.push(format!("{:.0} K below the boiling point", bp - t));
            }
        }
        None => c.unchecked.push("boiling point not given: the margin to boiling was not checked".into()),
    }
    match props.melting_point_k {
        Some(mp) if t - mp < MELTING_MARGIN_K => ruled_out.push(format!(
            "{t_c:.1} °C is within {MELTING_MARGIN_K:.0} K of the melting point ({:.1} °C)",
            kelvin_to_celsius(mp)
        )),
        Some(_) => {}
        None => c.unchecked.push("melting point not given: freezing was not checked".into()),
    }

    if let (Some(psi1), Some((v, m))) = (c.psi1, volumes) {
        let x = segment_ratio(settings.molar_mass, v, m);
        if let Some(tc) = shultz_flory_tc(theta, psi1, x) {
            c.critical_temperature_k = Some(tc);
            // UCST: the sample separates below Tc; LCST: above it.
            let margin = if psi1 > 0.0 { t - tc } else { tc - t };
            c.margin_k = Some(margin);
            if margin <= 0.0 {
                ruled_out.push(format!(
                    "the sample phase-separates at {t_c:.1} °C (Shultz–Flory Tc = {:.1} °C)",
                    kelvin_to_celsius(tc)
                ));
            } else if margin < CRITICAL_MARGIN_K {
                // θ is the goal's own temperature: for a very long chain Tc lies within a few
                // kelvin of it and the study can only be done there, so this is a warning here,
                // while `next` (free to choose) keeps out of this band.
                c.warnings.push(format!(
                    "only {margin:.1} K from the critical temperature ({:.1} °C): near-critical fluctuations, aggregation, and a sample that may come out of solution",
                    kelvin_to_celsius(tc)
                ));
            } else {
                c.reasons.push(format!("{margin:.1} K from the sample's critical temperature"));
            }
        }
    }

    if let Some(k) = k {
        // dA2/dT = −k b/T².
        let slope = (k * line.b_k / (t * t)).abs();
        if slope > 0.0 {
            let pm = settings.a2_tolerance / slope;
            c.required_stability_k = Some(pm);
            c.reasons.push(format!(
                "hold the temperature to ±{pm:.2} K to keep A2 within ±{:.1e} mol mL/g²",
                settings.a2_tolerance
            ));
            if let (Some(lo), Some(hi)) = (s.ci_low_k, s.ci_high_k) {
                if (hi - lo) / 2.0 > pm && settings.goal == Goal::Unperturbed {
                    c.warnings.push(format!(
                        "θ is known to ±{:.2} K only, wider than the ±{pm:.2} K the tolerance needs: measure more temperatures near θ",
                        (hi - lo) / 2.0
                    ));
                }
            }
        }
    }
    if s.ci_kind != IntervalKind::Bounded && settings.goal == Goal::Unperturbed {
        c.warnings.push("θ has no bounded interval".into());
    }

    let alpha = match (c.psi1, volumes, settings.unperturbed_r2_over_m) {
        (Some(psi1), Some((v, m)), Some(r2)) => {
            expansion_factor(expansion_argument(flory_cm(v, m, r2), psi1, theta, t, settings.molar_mass))
        }
        _ => None,
    };
    c.expansion_factor = alpha.or((settings.goal == Goal::Unperturbed).then_some(1.0));
    match (settings.unperturbed_r2_over_m, c.expansion_factor) {
        (Some(r2), Some(a)) => {
            let c_star = overlap_concentration(settings.molar_mass, r2, a) * 1e-3;
            c.overlap_concentration_g_per_ml = Some(c_star);
            c.suggested_max_concentration_g_per_ml = Some(c_star / OVERLAP_FRACTION);
            c.concentration_note = format!(
                "c* = 3M/(4π N_A Rg³) with Rg² = α²⟨r²⟩0/6; stay below c*/{OVERLAP_FRACTION:.0} for dilute work (rule of thumb, common practice)"
            );
        }
        _ => {
            c.concentration_note =
                "give --unperturbed-dimension (⟨r²⟩0/M) for an overlap estimate; until then, stay well below the overlap concentration".into();
        }
    }

    c.suitable = ruled_out.is_empty();
    if !c.suitable {
        c.reasons = ruled_out.into_iter().map(|r| format!("ruled out: {r}")).chain(c.reasons.drain(..)).collect();
    }
    c
}
