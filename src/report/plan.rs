//! The plan's report: JSON (the struct is the schema) and the terminal text, whose last block
//! is always the safety cautions.

use super::InputFile;
use super::SeriesReport;
use crate::plan::{Goal, Plan, PlanSeries, PlanSettings};
use crate::theta::{Crossing, IntervalKind};
use crate::units::kelvin_to_celsius;
use serde::Serialize;
use std::fmt::Write;

/// The plan with its provenance.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PlanReport {
    /// Report layout version.
    pub schema_version: u32,
    /// thetaseek version.
    pub tool_version: String,
    /// Input files with their SHA-256.
    pub inputs: Vec<InputFile>,
    /// Settings, in report units.
    pub settings: PlanReportSettings,
    /// Recommendation, candidates and cautions.
    #[serde(flatten)]
    pub plan: Plan,
}

/// The plan's settings in report units.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PlanReportSettings {
    /// Sample molar mass, g/mol.
    pub molar_mass_g_per_mol: f64,
    /// v̄, mL/g.
    pub polymer_specific_volume_ml_per_g: Option<f64>,
    /// `unperturbed`, `target_a2` or `target_expansion`.
    pub goal: GoalName,
    /// Target A2, mol mL/g².
    pub target_a2_mol_ml_per_g2: Option<f64>,
    /// Target α.
    pub target_expansion: Option<f64>,
    /// Thermostat range, °C.
    pub thermostat_c: Option<[f64; 2]>,
    /// |A2| tolerance, mol mL/g².
    pub a2_tolerance_mol_ml_per_g2: f64,
    /// ⟨r²⟩0/M, Å² mol/g (the key spells out ångström², not the virial coefficient A2).
    pub unperturbed_r2_over_m_angstrom2_mol_per_g: Option<f64>,
    /// Where ⟨r²⟩0/M came from: `--unperturbed-dimension`, or the series and route that
    /// measured it (viscometry, light scattering at θ).
    pub unperturbed_r2_over_m_from: Option<String>,
    /// Margin kept below the boiling point, K.
    pub boiling_margin_k: f64,
    /// Margin to Tc below which a warning is given, K.
    pub critical_margin_k: f64,
}

/// The plan's goal as the report names it (its target value in its own key).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum GoalName {
    /// T = θ.
    Unperturbed,
    /// A given A2.
    TargetA2,
    /// A given expansion factor.
    TargetExpansion,
}

impl PlanReport {
    /// Wraps a plan with its inputs and settings; `dimensions_from` says where ⟨r²⟩0/M came from.
    pub fn new(inputs: Vec<InputFile>, settings: &PlanSettings, plan: Plan, dimensions_from: Option<String>) -> Self {
        let (goal, target_a2, target_expansion) = match settings.goal {
            Goal::Unperturbed => (GoalName::Unperturbed, None, None),
            Goal::TargetA2(a) => (GoalName::TargetA2, Some(a), None),
            Goal::TargetExpansion(x) => (GoalName::TargetExpansion, None, Some(x)),
        };
        PlanReport {
            schema_version: super::SCHEMA_VERSION,
            tool_version: env!("CARGO_PKG_VERSION").to_string(),
            inputs,
            settings: PlanReportSettings {
                molar_mass_g_per_mol: settings.molar_mass * 1e3,
                polymer_specific_volume_ml_per_g: settings.specific_volume.map(|v| v * 1e3),
                goal,
                target_a2_mol_ml_per_g2: target_a2,
                target_expansion,
                thermostat_c: settings.thermostat.map(|(lo, hi)| [kelvin_to_celsius(lo), kelvin_to_celsius(hi)]),
                a2_tolerance_mol_ml_per_g2: settings.a2_tolerance,
                unperturbed_r2_over_m_angstrom2_mol_per_g: settings.unperturbed_r2_over_m.map(|d| d * 1e17),
                unperturbed_r2_over_m_from: dimensions_from,
                boiling_margin_k: crate::plan::BOILING_MARGIN_K,
                critical_margin_k: crate::plan::CRITICAL_MARGIN_K,
            },
            plan,
        }
    }
}

/// The measured unperturbed dimensions the plan can use, best first: viscometry (Flory–Fox
/// at θ), then light scattering at θ; each with the text saying where it came from.
pub fn measured_dimensions(series: &[SeriesReport]) -> Vec<(f64, String)> {
    let mut found: Vec<(usize, f64, String)> = series
        .iter()
        .filter_map(|s| {
            let d = s.unperturbed_dimensions.as_ref()?;
            let rank = if d.route == crate::dataset::Route::Viscometry { 0 } else { 1 };
            Some((rank, d.r2_over_m_si(), format!("{} of series '{}': {}", d.route.name(), s.name, d.method)))
        })
        .collect();
    found.sort_by_key(|f| f.0);
    found.into_iter().map(|(_, v, t)| (v, t)).collect()
}

/// The safety block, as printed at the end of every plan.
pub fn render_cautions(cautions: &[String]) -> String {
    let mut out = String::from("Safety cautions\n");
    for c in cautions {
        let _ = writeln!(out, "  - {c}");
    }
    out
}

/// The plan for a terminal: the recommendation, the ranking with reasons, then the cautions.
pub fn render_terminal(plan: &Plan) -> String {
    let mut out = String::new();
    match &plan.recommendation {
        Some(r) => {
            let _ = writeln!(
                out,
                "Recommendation: {} at {:.1} °C (hold {:.1}–{:.1} °C)",
                r.solvent, r.temperature_c, r.temperature_window_c[0], r.temperature_window_c[1]
            );
        }
        None => {
            let _ = writeln!(out, "No recommendation: {}", plan.no_recommendation_reason.as_deref().unwrap_or(""));
        }
    }
    out.push('\n');
    for c in &plan.candidates {
        let theta = c.theta_k.map_or("no θ".to_string(), |t| format!("θ = {:.1} °C", kelvin_to_celsius(t)));
        let _ = writeln!(
            out,
            "{}. {} ({theta}) — {}",
            c.rank,
            c.solvent,
            if c.suitable { "suitable" } else { "ruled out" }
        );
        for r in &c.reasons {
            let _ = writeln!(out, "     {r}");
        }
        if let (Some(tc), Some(m)) = (c.critical_temperature_k, c.margin_k) {
            let _ = writeln!(
                out,
                "     critical temperature of the sample {:.1} °C, margin {m:.1} K",
                kelvin_to_celsius(tc)
            );
        }
        if let Some(cmax) = c.suggested_max_concentration_g_per_ml {
            let _ = writeln!(out, "     keep c below {:.2} g/L for dilute work", cmax * 1e3);
        }
        for w in &c.warnings {
            let _ = writeln!(out, "   ! {w}");
        }
        for u in &c.unchecked {
            let _ = writeln!(out, "   ? not checked: {u}");
        }
    }
    out.push('\n');
    out.push_str(&render_cautions(&plan.cautions));
    out
}

/// From a series of a report this run produced; the solvent is the series' own or its name.
pub fn plan_series(s: &SeriesReport) -> PlanSeries {
    let t = s.theta.as_ref();
    PlanSeries {
        series: s.name.clone(),
        solvent: s.solvent.clone().unwrap_or_else(|| s.name.clone()),
        theta_k: t.and_then(|t| t.theta_k),
        ci_low_k: t.and_then(|t| t.ci_low_k),
        ci_high_k: t.and_then(|t| t.ci_high_k),
        ci_kind: t.map_or(IntervalKind::None, |t| t.ci_kind),
        crossing: t.map_or(Crossing::None, |t| t.crossing),
        sense: t.and_then(|t| t.sense),
        reason: t.and_then(|t| t.reason.clone()).or_else(|| s.reason.clone()),
        line: t.and_then(|t| t.line.clone()),
    }
}
