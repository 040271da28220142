//! The terminal table: one block per series, one row per temperature.

use super::numbers::plus_minus;
use super::Report;
use crate::units::kelvin_to_celsius;
use std::fmt::Write;

/// One line: θ in °C and K, ± SE, the interval, the crossing.
pub fn theta_line(t: &super::ThetaReport) -> String {
    use crate::theta::IntervalKind;
    let level = format!("{:.0} %", t.confidence * 100.0);
    match (t.theta_k, t.se_k) {
        (Some(k), se) => {
            let se = se.map_or(String::new(), |s| format!(" ± {s:.2}"));
            let interval = match (t.ci_kind, t.ci_low_k, t.ci_high_k) {
                (IntervalKind::Bounded, Some(lo), Some(hi)) => {
                    format!("{level} CI {lo:.2}–{hi:.2} K ({})", t.ci_method)
                }
                (_, Some(lo), None) => format!("{level} CI above {lo:.2} K, no upper bound ({})", t.ci_method),
                (kind, _, _) => format!("{level} CI {} ({})", kind.name(), t.ci_method),
            };
            let sense = t.sense.map_or(String::new(), |s| format!(", {}-type", s.label()));
            let crossing = match t.extrapolated_by_k {
                Some(b) => format!("extrapolated {b:.1} K beyond the data"),
                None => t.crossing.name().to_string(),
            };
            format!(
                "θ = {:.2} °C = {k:.2}{se} K, {interval}, {crossing}{sense}, model {}",
                kelvin_to_celsius(k),
                t.model
            )
        }
        (None, _) => format!("θ: none — {}", t.reason.as_deref().unwrap_or("no crossing")),
    }
}

/// Series listed by name in a campaign's digest.
const DIGEST_SERIES: usize = 20;

/// Renders the report as text for a terminal, by the report's detail: at
/// [`super::Detail::Full`] every series, the route comparisons, the run's warnings and the
/// summary; at [`super::Detail::Fits`] a digest (the series that need a look, one line each).
pub fn render_terminal(report: &Report) -> String {
    if report.settings.report_detail == super::Detail::Fits {
        return render_digest(report);
    }
    let mut out = String::new();
    for s in &report.series {
        out.push_str(&render_series(s));
    }
    out.push_str(&render_ending(&report.routes, &report.warnings));
    out.push_str(&render_summary(report));
    out
}

/// One series' block of the full listing: the per-temperature table, its warnings and θ.
pub fn render_series(s: &super::SeriesReport) -> String {
    let mut out = String::new();
    {
        let _ = writeln!(out, "series {}  [{}]", s.name, s.status.name());
        if let Some(reason) = &s.reason {
            let _ = writeln!(out, "  {reason}");
        }
        if !s.fits.is_empty() {
            let _ = writeln!(
                out,
                "  {:>7} {:>7} {:>3} {:>9} {:>24} {:>28}  notes",
                "T (°C)", "T (K)", "n", "form", "Mn (g/mol)", "A2 (mol mL/g²)"
            );
        }
        for f in &s.fits {
            let codes: Vec<&str> = f.warnings.iter().map(|w| w.code.name()).collect();
            let _ = writeln!(
                out,
                "  {:>7.2} {:>7.2} {:>3} {:>9} {:>24} {:>28}  {}",
                f.temperature_c,
                f.temperature_k,
                f.n_points,
                f.virial_form.name(),
                plus_minus(f.mn_g_per_mol, f.mn_se_g_per_mol),
                plus_minus(f.a2_mol_ml_per_g2, f.a2_se_mol_ml_per_g2),
                codes.join(", ")
            );
        }
        for f in &s.fits {
            for w in &f.warnings {
                let _ = writeln!(out, "  ! {:.2} °C: {}", f.temperature_c, w.message);
            }
        }
        if let Some(t) = &s.theta {
            let _ = writeln!(out, "  {}", theta_line(t));
        }
        if let (Some(words), None) = (&s.summary, &s.viscometry) {
            let _ = writeln!(out, "  in words: {words}");
        }
        if !s.light_scattering.is_empty() {
            let _ = writeln!(
                out,
                "  light scattering (weight averages): {:>7} {:>24} {:>28} {:>12} {:>6}",
                "T (K)", "Mw (g/mol)", "A2 (mol mL/g²)", "Rg (nm)", "α_s"
            );
            for f in &s.light_scattering {
                let _ = writeln!(
                    out,
                    "  {:>43.2} {:>24} {:>28} {:>12} {:>6}",
                    f.temperature_k,
                    plus_minus(f.mw_g_per_mol, f.mw_se_g_per_mol),
                    plus_minus(f.a2_mol_ml_per_g2, f.a2_se_mol_ml_per_g2),
                    match (f.rg_nm, f.rg_se_nm) {
                        (Some(r), Some(se)) => format!("{r:.1} ± {se:.1}"),
                        (Some(r), None) => format!("{r:.1}"),
                        _ => "—".into(),
                    },
                    f.expansion_factor.map_or("—".into(), |a| format!("{a:.3}"))
                );
            }
        }
        if let Some(v) = &s.viscometry {
            out.push_str(&super::render_viscometry(v, s.unperturbed_dimensions.as_ref()));
            if let Some(words) = &s.summary {
                let _ = writeln!(out, "  in words: {words}");
            }
        } else if let Some(d) = &s.unperturbed_dimensions {
            let _ = writeln!(out, "  {}", super::dimensions_line(d));
        }
        if let Some(c) = &s.critical {
            let _ = writeln!(
                out,
                "  critical temperatures of {} fractions (Shultz–Flory): θ = {:.2} °C = {:.2} ± {:.2} K, ψ1 = {}",
                c.fractions,
                kelvin_to_celsius(c.theta_k),
                c.theta_k,
                c.se_k,
                plus_minus(c.psi1, c.psi1_se)
            );
            let _ = writeln!(out, "  note: {}", c.note);
        }
        for w in &s.warnings {
            let _ = writeln!(out, "  ! {w}");
        }
        if !s.excluded_readings.is_empty() {
            let shown: Vec<String> =
                s.excluded_readings.iter().take(5).map(|e| format!("line {} ({})", e.line, e.reason)).collect();
            let more = s.excluded_readings.len().saturating_sub(5);
            let more = if more > 0 { format!(" and {more} more") } else { String::new() };
            let _ = writeln!(
                out,
                "  excluded, not fitted: {} reading(s): {}{more}",
                s.excluded_readings.len(),
                shown.join(", ")
            );
        }
        out.push('\n');
    }
    out
}

/// The end of the full listing before the summary: the route comparisons and the run's
/// warnings.
pub fn render_ending(routes: &[super::RouteComparison], warnings: &[String]) -> String {
    let mut out = String::new();
    for r in routes {
        let _ = writeln!(out, "routes for {}:", r.series);
        let _ = writeln!(out, "  {:<24} {:>10} {:>8}  interval (K)", "route", "θ (K)", "SE (K)");
        for t in &r.routes {
            let interval = match (t.ci_low_k, t.ci_high_k) {
                (Some(lo), Some(hi)) => format!("{lo:.2}–{hi:.2}"),
                _ => "unbounded".into(),
            };
            let _ = writeln!(out, "  {:<24} {:>10.2} {:>8.2}  {interval}", t.route, t.theta_k, t.se_k);
        }
        for d in &r.differences {
            let _ = writeln!(out, "  {} − {}: {:+.2} K ({:+.1} combined SE)", d.a, d.b, d.difference_k, d.z);
        }
        let over = if r.combined_routes.len() < r.routes.len() {
            let names: Vec<&str> = r.combined_routes.iter().map(|r| r.name()).collect();
            format!(" over {}", names.join(" and "))
        } else {
            String::new()
        };
        let _ = writeln!(
            out,
            "  combined (inverse variance){over}: {:.2} ± {:.2} K, χ² = {:.2}, p = {:.3}{}",
            r.combined_theta_k,
            r.combined_se_k,
            r.chi2,
            r.p_value,
            if r.disagree { " — the routes DISAGREE: do not use the combined value as it is" } else { "" }
        );
        for note in &r.notes {
            let _ = writeln!(out, "  note: {note}");
        }
        out.push('\n');
    }
    for w in warnings {
        let _ = writeln!(out, "! {w}");
    }
    out
}

/// A campaign on one screen: the first series that need a look (one line each), the route
/// comparisons that disagree, the run's warnings and the summary.
fn render_digest(report: &Report) -> String {
    let mut tally = Tally::default();
    report.series.iter().for_each(|s| tally.add(s));
    tally.render(&report.routes, &report.warnings)
}

/// Counts for the end of a run: series analysed and refused (reasons grouped), and how many
/// have a bracketed, an extrapolated, a critical-temperature (Shultz–Flory) or no θ.
pub fn render_summary(report: &Report) -> String {
    let mut tally = Tally::default();
    report.series.iter().for_each(|s| tally.add(s));
    tally.summary()
}

/// Refusal reasons told apart in the summary; the rest are counted together.
const MAX_REASON_GROUPS: usize = 1000;

/// What the summary and a campaign's digest say, gathered one series at a time, so that a
/// campaign need not keep its series to print them.
#[derive(Debug, Clone, Default)]
pub struct Tally {
    series: usize,
    refused: usize,
    /// θ bracketed, extrapolated, from critical temperatures (a limit, no crossing), none.
    crossings: [usize; 4],
    /// Viscometric θ (an approximate criterion, counted apart).
    viscometric: usize,
    /// Refusal reasons with their count and the first series refused for each.
    reasons: Vec<(String, usize, String)>,
    attention: usize,
    shown: Vec<String>,
}

impl Tally {
    /// Counts one series.
    pub fn add(&mut self, s: &super::SeriesReport) {
        use crate::analysis::Status;
        use crate::theta::Crossing;
        self.series += 1;
        if s.viscometry.as_ref().is_some_and(|v| v.viscometric_theta.is_some()) {
            self.viscometric += 1;
        }
        let k = match (&s.theta, &s.critical) {
            (Some(t), _) => match t.crossing {
                Crossing::Bracketed => Some(0),
                Crossing::Extrapolated => Some(1),
                Crossing::None => Some(3),
            },
            (None, Some(_)) => Some(2),
            (None, None) => None,
        };
        if let Some(k) = k {
            self.crossings[k] += 1;
        }
        if s.status == Status::Refused {
            self.refused += 1;
            let reason = s.reason.clone().unwrap_or_default();
            // Bounded: refusals of input name their line, so each may be a reason of its own.
            let reason =
                if self.reasons.len() >= MAX_REASON_GROUPS && !self.reasons.iter().any(|(r, _, _)| *r == reason) {
                    "further reasons (not listed: see the report)".to_string()
                } else {
                    reason
                };
            match self.reasons.iter_mut().find(|(r, _, _)| *r == reason) {
                Some(g) => g.1 += 1,
                None => self.reasons.push((reason, 1, s.name.clone())),
            }
        }
        if super::needs_attention(s) {
            self.attention += 1;
            if self.shown.len() < DIGEST_SERIES {
                let status = s.status.name();
                let what = match (&s.theta, &s.reason) {
                    (_, Some(reason)) => reason.clone(),
                    (Some(t), None) => theta_line(t),
                    (None, None) => String::new(),
                };
                let warnings = s.warnings.len() + s.fit_warnings;
                self.shown.push(format!("  {} [{status}, {warnings} warnings]: {what}", s.name));
            }
        }
    }

    /// True when every series counted was refused (or none was counted).
    pub fn all_refused(&self) -> bool {
        self.refused == self.series
    }

    /// The refusal reasons, most frequent first.
    fn groups(&self) -> Vec<&(String, usize, String)> {
        let mut groups: Vec<&(String, usize, String)> = self.reasons.iter().collect();
        groups.sort_by_key(|g| std::cmp::Reverse(g.1));
        groups
    }

    /// The summary lines.
    pub fn summary(&self) -> String {
        let [bracketed, extrapolated, critical, none] = self.crossings;
        let critical = if critical > 0 { format!(", from critical temperatures {critical}") } else { String::new() };
        let viscometric =
            if self.viscometric > 0 { format!("; viscometric θ {}", self.viscometric) } else { String::new() };
        let mut out = format!(
            "summary: {} series analysed, {} refused; θ bracketed {bracketed}, extrapolated {extrapolated}{critical}, none {none}{viscometric}\n",
            self.series - self.refused,
            self.refused,
        );
        for (reason, n, _) in self.groups().into_iter().take(10) {
            let _ = writeln!(out, "  refused {n}×: {reason}");
        }
        out
    }

    /// Why series were refused in one line, grouped by reason with counts.
    pub fn refusals_in_brief(&self) -> String {
        let groups = self.groups();
        let shown: Vec<String> = groups
            .iter()
            .take(5)
            .map(
                |(r, n, first)| {
                    if *n == 1 {
                        format!("{first}: {r}")
                    } else {
                        format!("{n} series (e.g. {first}): {r}")
                    }
                },
            )
            .collect();
        let more = groups.len().saturating_sub(5);
        if more > 0 {
            format!("{}; and {more} other reasons", shown.join("; "))
        } else {
            shown.join("; ")
        }
    }

    /// The digest of a campaign: its series that need a look, the route comparisons that
    /// disagree, the run's warnings and the summary.
    pub fn render(&self, routes: &[super::RouteComparison], warnings: &[String]) -> String {
        let mut out = format!(
            "{} series; {} need a look{}\n",
            self.series,
            self.attention,
            if self.attention == 0 {
                String::new()
            } else {
                format!(" (first {} below; --series-table FILE --needs-attention lists them all)", self.shown.len())
            }
        );
        for line in &self.shown {
            out.push_str(line);
            out.push('\n');
        }
        let disagreeing: Vec<&super::RouteComparison> = routes.iter().filter(|r| r.disagree).collect();
        if !routes.is_empty() {
            let _ = writeln!(out, "routes compared for {} series; {} disagree", routes.len(), disagreeing.len());
            for r in disagreeing.iter().take(DIGEST_SERIES) {
                let _ = writeln!(out, "  {}: χ² = {:.2}, p = {:.3}", r.series, r.chi2, r.p_value);
            }
        }
        for w in warnings {
            let _ = writeln!(out, "! {w}");
        }
        out.push_str(&self.summary());
        out
    }
}
