//! The viscometry route: dilute-solution capillary viscometry of several fractions at several
//! temperatures, from flow times to the chain's unperturbed dimensions.
//!
//! Per fraction and temperature, [η] from the Huggins and Kraemer lines ([`dilution`]); per
//! temperature, across fractions, the Mark–Houwink–Sakurada line ln [η] = ln K + a ln M and the
//! Stockmayer–Fixman line [η]/M^{1/2} = Kθ + B' M^{1/2} (weighted lines on the θ line's rule); across temperatures, the
//! viscometric θ where a(T) = ½ (fitted as a − ½ = a' + b'/T, like A2, with Fieller's interval:
//! an approximate criterion, since a passes ½ only near θ and not exactly at it); then Kθ at θ,
//! ⟨r²⟩0/M by Flory–Fox ([`crate::chain_dimensions`]), the viscosity expansion factor
//! α_η³ = [η]/(Kθ M^{1/2}) and d ln⟨r²⟩0/dT. SI inside; [`ViscometryResult`] is in report units.

pub mod dilution;
mod result;

pub use dilution::{fit_dilution, pool_noise, solomon_ciuta, Dilution, DilutionMethod, DilutionWarning};
pub use result::*;

use crate::chain_dimensions::{r2_over_m_from_k_theta, RepeatUnit, UnperturbedDimensions, NM2_MOL_PER_G_PER_SI};
use crate::dataset::{Route, ViscometrySeries, ViscosityValue, TEMPERATURE_GROUPING_K};
use crate::theta::{Crossing, InverseTemperatureLine, SeBasis, ThetaSet, WeightedLine as Line};
use crate::units::{kelvin_to_celsius, ML_PER_G_PER_M3_PER_KG};

/// Settings of the viscometry route.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ViscometrySettings {
    /// Confidence level of the intervals.
    pub confidence: f64,
    /// Flory–Fox constant Φ0, mol⁻¹.
    pub flory_fox_per_mol: f64,
    /// The repeat unit, for C∞.
    pub repeat_unit: Option<RepeatUnit>,
}

impl Default for ViscometrySettings {
    fn default() -> Self {
        ViscometrySettings {
            confidence: 0.95,
            flory_fox_per_mol: crate::chain_dimensions::DEFAULT_FLORY_FOX_PER_MOL,
            repeat_unit: None,
        }
    }
}

/// What another route of the run measured for a series of this name: its molar mass (the
/// osmotic Mn, the light-scattering Mw), for fractions given without one, and its θ, where Kθ
/// is read (the thermodynamic θ is the right place; the viscometric one stands in without it).
#[derive(Debug, Clone, PartialEq)]
pub struct RouteFinding {
    /// The series name (matched against a fraction's name, and the viscometry series' name).
    pub name: String,
    /// Molar mass, kg/mol.
    pub molar_mass: Option<f64>,
    /// θ and its SE, K.
    pub theta_k: Option<(f64, f64)>,
    /// The route that measured it.
    pub route: Route,
}

/// Kθ report unit (mL mol^{1/2} g^{-3/2}) per SI unit (m³ mol^{1/2} kg^{-3/2}): 10³ / 10^{3/2}.
const K_THETA_REPORT_PER_SI: f64 = 31.622_776_601_683_793;

/// One fraction as the analysis sees it.
struct Fraction {
    name: String,
    molar_mass: Option<f64>,
    source: String,
}

/// Everything the route computes for one series, and the dimensions it measured.
pub fn analyze_viscometry(
    series: &ViscometrySeries,
    known: &[RouteFinding],
    settings: &ViscometrySettings,
) -> Result<(ViscometryResult, Option<UnperturbedDimensions>), String> {
    let mut warnings = Vec::new();
    let fractions = fractions_of(series, known, &mut warnings);
    let temperatures = temperatures_of(series);
    // Each row's fraction and temperature, once.
    let cells: Vec<(Option<usize>, Option<usize>)> = series
        .rows
        .iter()
        .map(|r| {
            let key = r.fraction_key();
            (
                fractions.iter().position(|f| f.name == key),
                temperatures.iter().position(|t| (r.temperature_k - t).abs() <= TEMPERATURE_GROUPING_K),
            )
        })
        .collect();
    // [η] of each fraction at each temperature.
    let mut dilutions: Vec<(usize, usize, Dilution)> = Vec::new();
    for fi in 0..fractions.len() {
        for ti in 0..temperatures.len() {
            let rows: Vec<&crate::dataset::ViscometryRow> =
                series.rows.iter().zip(&cells).filter(|(_, c)| **c == (Some(fi), Some(ti))).map(|(r, _)| r).collect();
            let relative: Vec<(f64, f64)> = rows
                .iter()
                .filter_map(|r| match r.value {
                    ViscosityValue::Relative { concentration, relative_viscosity } => {
                        Some((concentration, relative_viscosity))
                    }
                    ViscosityValue::Intrinsic { .. } => None,
                })
                .collect();
            let given: Vec<(f64, Option<f64>)> = rows
                .iter()
                .filter_map(|r| match r.value {
                    ViscosityValue::Intrinsic { value, sd } => Some((value, sd)),
                    ViscosityValue::Relative { .. } => None,
                })
                .collect();
            let fitted = if !relative.is_empty() {
                fit_dilution(&relative)
            } else if !given.is_empty() {
                Some(given_dilution(&given))
            } else {
                None
            };
            if let Some(d) = fitted {
                dilutions.push((fi, ti, d));
            }
        }
    }
    // One viscometer: its ηrel error pooled over every dilution series.
    pool_noise(dilutions.iter_mut().map(|(_, _, d)| d));
    // Per temperature, across fractions with a molar mass.
    let mut per_temperature = Vec::new();
    for (ti, &t) in temperatures.iter().enumerate() {
        let points: Vec<(f64, &Dilution)> = dilutions
            .iter()
            .filter(|(_, i, _)| *i == ti)
            .filter_map(|(f, _, d)| fractions[*f].molar_mass.map(|m| (m, d)))
            .collect();
        per_temperature.push(TemperatureLines::fit(t, &points));
    }
    let with_mark_houwink: Vec<&TemperatureLines> =
        per_temperature.iter().filter(|p| p.mark_houwink.is_some()).collect();
    if with_mark_houwink.is_empty() {
        warnings.push("no temperature has three fractions with a molar mass: no Mark–Houwink exponent".into());
    }
    let theta = viscometric_theta(&with_mark_houwink, settings.confidence, &mut warnings);
    // Kθ, best first: [η]/M^½ read directly at another route's (thermodynamic) θ; the
    // Stockmayer–Fixman intercepts carried to the viscometric θ; the Stockmayer–Fixman intercept
    // of the temperature nearest θ (or the middle one).
    let target = theta.as_ref().map(|t| t.theta_k);
    // Kθ belongs at the thermodynamic θ: another route's θ of this pair when the run has one
    // (inverse-variance mean), else the viscometric θ.
    let thermodynamic: Vec<&RouteFinding> =
        known.iter().filter(|k| k.name == series.name && k.route != Route::Viscometry && k.theta_k.is_some()).collect();
    let at_theta = if thermodynamic.is_empty() {
        theta.as_ref().map(|t| (t.theta_k, t.se_k.unwrap_or(0.0), "the viscometric θ".to_string(), false))
    } else {
        let w: Vec<(f64, f64)> =
            thermodynamic.iter().filter_map(|k| k.theta_k).map(|(t, s)| (t, 1.0 / (s * s))).collect();
        let sum: f64 = w.iter().map(|x| x.1).sum();
        let names: Vec<&str> = thermodynamic.iter().map(|k| k.route.name()).collect();
        Some((
            w.iter().map(|x| x.0 * x.1).sum::<f64>() / sum,
            sum.sqrt().recip(),
            format!("the {} θ", names.join(" and ")),
            true,
        ))
    };
    let direct = at_theta.and_then(|target| k_theta_at(target, &temperatures, &dilutions, &fractions));
    let target = direct.as_ref().map(|d| d.temperature_k).or(target);
    // Without another route's θ, the Stockmayer–Fixman intercepts (which need no θ) carried to
    // the viscometric θ: far less sensitive to that θ's own bias than [η] read there directly.
    let from_lines = if direct.as_ref().is_some_and(|d| d.from_other_route) {
        None
    } else {
        theta.as_ref().and_then(|t| stockmayer_fixman_at(&per_temperature, t.theta_k, t.se_k.unwrap_or(0.0)))
    };
    let nearest_sf = nearest_stockmayer_fixman(&per_temperature, target).and_then(|p| p.k_theta().map(|k| (p, k)));
    let (k_theta, k_theta_se, method, at_k) = match (&direct, from_lines, nearest_sf) {
        (Some(d), _, _) if d.from_other_route => (
            d.k_theta,
            d.se,
            format!(
                "Kθ = [η]/M^½ at {} ({:.2} °C), interpolated between the measured temperatures (Flory–Fox)",
                d.source,
                kelvin_to_celsius(d.temperature_k)
            ),
            d.temperature_k,
        ),
        (_, Some((k, se, t)), _) => (
            k,
            Some(se),
            format!(
                "Stockmayer–Fixman intercepts carried to the viscometric θ ({:.2} °C) (Flory–Fox)",
                kelvin_to_celsius(t)
            ),
            t,
        ),
        (_, None, Some((p, (k, se)))) => (
            k,
            (p.stockmayer_fixman_se_known).then_some(se),
            format!("Stockmayer–Fixman intercept at {:.2} °C (Flory–Fox)", kelvin_to_celsius(p.temperature_k)),
            p.temperature_k,
        ),
        (_, None, None) => (f64::NAN, None, String::new(), f64::NAN),
    };
    let dimensions = (k_theta.is_finite() && k_theta > 0.0).then(|| {
        UnperturbedDimensions::new(
            r2_over_m_from_k_theta(k_theta, k_theta_se, settings.flory_fox_per_mol),
            Route::Viscometry,
            method,
            at_k,
            Some(settings.flory_fox_per_mol),
            settings.repeat_unit.as_ref(),
        )
    });
    if dimensions.is_none() {
        warnings.push(
            "no Kθ: the unperturbed dimensions need two or more fractions with a molar mass at one temperature".into(),
        );
    }
    let coefficient = temperature_coefficient(&per_temperature);
    let result = ViscometryResult::assemble(Assembly {
        fractions: &fractions,
        temperatures: &temperatures,
        dilutions: &dilutions,
        per_temperature: &per_temperature,
        theta,
        direct,
        k_theta: (k_theta.is_finite() && k_theta > 0.0).then_some(k_theta),
        coefficient,
        settings,
        warnings,
    });
    if result.dilutions.is_empty() {
        return Err("no fraction had a usable dilution series".into());
    }
    Ok((result, dimensions))
}

/// A fraction whose [η] was given: the mean of its rows, SE √(Σ sd²)/n when every row has one.
fn given_dilution(given: &[(f64, Option<f64>)]) -> Dilution {
    let n = given.len() as f64;
    let sds: Option<Vec<f64>> = given.iter().map(|g| g.1).collect();
    Dilution {
        intrinsic: given.iter().map(|g| g.0).sum::<f64>() / n,
        se: sds.map(|s| s.iter().map(|x| x * x).sum::<f64>().sqrt() / n),
        se_dof: None,
        truncation: 0.0,
        method: DilutionMethod::Given,
        huggins: None,
        kraemer: None,
        huggins_minus_kraemer: None,
        readings: Vec::new(),
        warnings: Vec::new(),
        lines: None,
    }
}

fn fractions_of(series: &ViscometrySeries, known: &[RouteFinding], warnings: &mut Vec<String>) -> Vec<Fraction> {
    let mut out: Vec<Fraction> = Vec::new();
    for row in &series.rows {
        let name = row.fraction_key();
        match out.iter_mut().find(|f| f.name == name) {
            Some(f) => match (f.molar_mass, row.molar_mass) {
                (None, Some(m)) => {
                    f.molar_mass = Some(m);
                    f.source = "molar mass column".into();
                }
                (Some(a), Some(b)) if (a - b).abs() > 1e-9 * a => warnings.push(format!(
                    "fraction '{name}': line {} gives another molar mass ({:.0} g/mol); the first one is used",
                    row.line,
                    b * 1e3
                )),
                _ => {}
            },
            None => out.push(Fraction {
                name: name.clone(),
                molar_mass: row.molar_mass,
                source: if row.molar_mass.is_some() { "molar mass column".into() } else { String::new() },
            }),
        }
    }
    for f in &mut out {
        if f.molar_mass.is_some() {
            continue;
        }
        // Mn from osmometry before Mw from light scattering: [η] follows the viscosity average,
        // which lies between them, nearer Mw; say which one was used.
        let found = known.iter().filter(|k| k.name == f.name && k.molar_mass.is_some()).min_by_key(|k| {
            if k.route == Route::LightScattering {
                0
            } else {
                1
            }
        });
        match found {
            Some(k) => {
                f.molar_mass = k.molar_mass;
                f.source = match k.route {
                    Route::LightScattering => format!("light-scattering Mw of series '{}'", k.name),
                    _ => format!("osmotic Mn of series '{}'", k.name),
                };
            }
            None => warnings.push(format!(
                "fraction '{}' has no molar mass (no column, and no series of that name in another route): left out of the lines across fractions",
                f.name
            )),
        }
    }
    out
}

fn temperatures_of(series: &ViscometrySeries) -> Vec<f64> {
    let mut t: Vec<f64> = series.rows.iter().map(|r| r.temperature_k).collect();
    t.sort_by(f64::total_cmp);
    let mut groups: Vec<Vec<f64>> = Vec::new();
    for x in t {
        match groups.last_mut() {
            Some(g) if (x - g[0]).abs() <= TEMPERATURE_GROUPING_K => g.push(x),
            _ => groups.push(vec![x]),
        }
    }
    groups.iter().map(|g| crate::units::round_to_nanokelvin(g.iter().sum::<f64>() / g.len() as f64)).collect()
}

/// The lines across fractions at one temperature.
struct TemperatureLines {
    temperature_k: f64,
    n_fractions: usize,
    /// ln [η] against ln M (SI): slope a, intercept ln K.
    mark_houwink: Option<Line>,
    /// [η]/M^{1/2} against M^{1/2} (SI): intercept Kθ.
    stockmayer_fixman: Option<Line>,
    /// Whether the Stockmayer–Fixman SEs are meaningful (the [η] had SEs or the line had dof).
    stockmayer_fixman_se_known: bool,
    /// Mean relative truncation of the fractions' [η] (a shared, systematic part of their SEs).
    truncation: f64,
}

impl TemperatureLines {
    fn fit(temperature_k: f64, points: &[(f64, &Dilution)]) -> Self {
        let basis = SeBasis::fewest(points.iter().map(|(_, d)| d.se_dof));
        let x: Vec<f64> = points.iter().map(|(m, _)| m.ln()).collect();
        let y: Vec<f64> = points.iter().map(|(_, d)| d.intrinsic.ln()).collect();
        let se: Vec<Option<f64>> = points.iter().map(|(_, d)| d.noise_se().map(|s| s / d.intrinsic)).collect();
        let mark_houwink = (points.len() >= 3).then(|| Line::fit(&x, &y, &se, basis).ok()).flatten();
        let x: Vec<f64> = points.iter().map(|(m, _)| m.sqrt()).collect();
        let y: Vec<f64> = points.iter().map(|(m, d)| d.intrinsic / m.sqrt()).collect();
        let se: Vec<Option<f64>> = points.iter().map(|(m, d)| d.noise_se().map(|s| s / m.sqrt())).collect();
        let stockmayer_fixman = Line::fit(&x, &y, &se, basis).ok();
        let truncation =
            points.iter().map(|(_, d)| d.truncation / d.intrinsic).sum::<f64>() / points.len().max(1) as f64;
        let se_known = stockmayer_fixman
            .as_ref()
            .is_some_and(|l| l.variance() != crate::theta::LineVariance::Unweighted || l.n > 2);
        TemperatureLines {
            temperature_k,
            n_fractions: points.len(),
            mark_houwink,
            stockmayer_fixman,
            stockmayer_fixman_se_known: se_known,
            truncation,
        }
    }

    /// The Stockmayer–Fixman intercept Kθ (SI) and its SE, the fractions' shared truncation
    /// added (it moves every [η], so the intercept, alike).
    fn k_theta(&self) -> Option<(f64, f64)> {
        let (k, se) = self.stockmayer_fixman.as_ref()?.at(0.0);
        Some((k, se.hypot(k * self.truncation)))
    }

    /// ln K of the Mark–Houwink line (SI) and its SE, the shared truncation added.
    fn ln_k(&self) -> Option<(f64, f64)> {
        let (ln_k, se) = self.mark_houwink.as_ref()?.at(0.0);
        Some((ln_k, se.hypot(self.truncation)))
    }
}

/// a(T) − ½ = a' + b'/T across the temperatures with a Mark–Houwink exponent.
fn exponent_line(lines: &[&TemperatureLines]) -> Option<InverseTemperatureLine> {
    let points: Vec<crate::dataset::TemperaturePoint> = lines
        .iter()
        .filter_map(|p| {
            let l = p.mark_houwink.as_ref()?;
            Some(crate::dataset::TemperaturePoint {
                temperature_k: p.temperature_k,
                value: l.beta - 0.5,
                se: Some(l.slope_se()),
            })
        })
        .collect();
    let basis = SeBasis::fewest(lines.iter().filter_map(|p| p.mark_houwink.as_ref()).map(|l| l.dof()));
    InverseTemperatureLine::fit(&points, basis).ok()
}

fn viscometric_theta(lines: &[&TemperatureLines], confidence: f64, warnings: &mut Vec<String>) -> Option<ThetaFit> {
    if lines.len() < 2 {
        if !lines.is_empty() {
            warnings
                .push("one temperature with a Mark–Houwink exponent: no viscometric θ (measure at two or more)".into());
        }
        return None;
    }
    let line = exponent_line(lines)?;
    let theta_k = line.theta_k()?;
    let (t_min, t_max) = (lines[0].temperature_k, lines[lines.len() - 1].temperature_k);
    Some(ThetaFit {
        theta_k,
        se_k: line.theta_se_k(),
        set: line.fieller_theta(confidence),
        crossing: if (t_min..=t_max).contains(&theta_k) { Crossing::Bracketed } else { Crossing::Extrapolated },
        n_temperatures: line.n,
        line,
    })
}

/// The viscometric θ as computed, SI.
pub(crate) struct ThetaFit {
    theta_k: f64,
    se_k: Option<f64>,
    set: ThetaSet,
    crossing: Crossing,
    n_temperatures: usize,
    line: InverseTemperatureLine,
}

/// Kθ = [η]/M^{1/2} directly at θ: each fraction's ln [η] interpolated linearly in T between
/// the measured temperatures that bracket θ (or read at one within 0.01 K), then the weighted
/// mean over fractions (weights 1/SE², scaled up when the fractions scatter more than their
/// SEs; equal weights and the spread without SEs). Its SE adds, to the mean's, the lines'
/// truncation (shared by the fractions, so not averaged down) and θ's own SE times dKθ/dT.
pub(crate) struct DirectKTheta {
    temperature_k: f64,
    k_theta: f64,
    se: Option<f64>,
    n_fractions: usize,
    source: String,
    /// θ came from a thermodynamic route of the run (not the viscometric θ).
    from_other_route: bool,
}

/// One fraction at θ: Kθ, its noise SE, its relative truncation, dKθ/dT (1/K).
struct FractionAtTheta {
    k: f64,
    se: Option<f64>,
    truncation: f64,
    slope: f64,
}

fn k_theta_at(
    (theta, theta_se, source, from_other_route): (f64, f64, String, bool),
    temperatures: &[f64],
    dilutions: &[(usize, usize, Dilution)],
    fractions: &[Fraction],
) -> Option<DirectKTheta> {
    let near = |t: f64| (t - theta).abs() <= TEMPERATURE_GROUPING_K;
    let below = temperatures.iter().rposition(|&t| t <= theta || near(t))?;
    let above = temperatures.iter().position(|&t| t >= theta || near(t))?;
    let (t0, t1) = (temperatures[below], temperatures[above]);
    let f = if below == above { 0.0 } else { (theta - t0) / (t1 - t0) };
    let at = |fi: usize, ti: usize| dilutions.iter().find(|(f, t, _)| *f == fi && *t == ti).map(|(_, _, d)| d);
    let values: Vec<FractionAtTheta> = fractions
        .iter()
        .enumerate()
        .filter_map(|(fi, fraction)| {
            let m = fraction.molar_mass?;
            let (d0, d1) = (at(fi, below)?, at(fi, above)?);
            let (l0, l1) = (d0.intrinsic.ln(), d1.intrinsic.ln());
            let k = ((1.0 - f) * l0 + f * l1).exp() / m.sqrt();
            let noise =
                |d: &Dilution| d.se.map(|s| (s * s - d.truncation * d.truncation).max(0.0).sqrt() / d.intrinsic);
            let se_ln = noise(d0).zip(noise(d1)).map(|(s0, s1)| ((1.0 - f) * s0).hypot(f * s1));
            let truncation = (1.0 - f) * d0.truncation / d0.intrinsic + f * d1.truncation / d1.intrinsic;
            let slope = if below == above { 0.0 } else { k * (l1 - l0) / (t1 - t0) };
            Some(FractionAtTheta { k, se: se_ln.map(|s| s * k), truncation, slope })
        })
        .collect();
    if values.len() < 2 {
        return None;
    }
    let n = values.len() as f64;
    let weights: Vec<f64> = match values.iter().map(|v| v.se.filter(|s| *s > 0.0).map(|s| 1.0 / (s * s))).collect() {
        Some(w) => w,
        None => vec![1.0; values.len()],
    };
    let sum: f64 = weights.iter().sum();
    let mean_of =
        |x: fn(&FractionAtTheta) -> f64| values.iter().zip(&weights).map(|(v, w)| w * x(v)).sum::<f64>() / sum;
    let mean = mean_of(|v| v.k);
    let spread = values.iter().zip(&weights).map(|(v, w)| w * (v.k - mean).powi(2)).sum::<f64>() / (n - 1.0);
    let noise_var = if values.iter().all(|v| v.se.is_some_and(|s| s > 0.0)) {
        // Scaled up when the fractions scatter more than their SEs, as the lines are.
        spread.max(1.0) / sum
    } else {
        spread / n
    };
    let systematic = mean * mean_of(|v| v.truncation);
    let through_theta = mean_of(|v| v.slope) * theta_se;
    let se = (noise_var + systematic * systematic + through_theta * through_theta).sqrt();
    Some(DirectKTheta {
        temperature_k: theta,
        k_theta: mean,
        se: Some(se),
        n_fractions: values.len(),
        source,
        from_other_route,
    })
}

/// The Stockmayer–Fixman Kθ(T) (SI) carried to θ: a weighted line in T through the
/// temperatures' intercepts (two or more), its value at θ with the SE of the line there and of
/// θ itself; returns (Kθ, SE, θ).
fn stockmayer_fixman_at(lines: &[TemperatureLines], theta: f64, theta_se: f64) -> Option<(f64, f64, f64)> {
    let points: Vec<(f64, f64, f64, Option<usize>, f64)> = lines
        .iter()
        .filter(|p| p.stockmayer_fixman_se_known)
        .filter_map(|p| {
            let line = p.stockmayer_fixman.as_ref()?;
            let (k, se) = line.at(0.0);
            Some((p.temperature_k, k, se, line.dof(), p.truncation))
        })
        .collect();
    if points.len() < 2 {
        return None;
    }
    // The truncation is shared by the temperatures too: added once, not averaged down.
    let truncation = points.iter().map(|p| p.4).sum::<f64>() / points.len() as f64;
    let x: Vec<f64> = points.iter().map(|p| p.0).collect();
    let y: Vec<f64> = points.iter().map(|p| p.1).collect();
    let se: Vec<Option<f64>> = points.iter().map(|p| Some(p.2)).collect();
    let line = Line::fit(&x, &y, &se, SeBasis::fewest(points.iter().map(|p| p.3))).ok()?;
    let (k, se) = line.at(theta);
    Some((k, se.hypot(line.beta * theta_se).hypot(k * truncation), theta))
}

fn nearest_stockmayer_fixman(lines: &[TemperatureLines], target: Option<f64>) -> Option<&TemperatureLines> {
    let with: Vec<&TemperatureLines> =
        lines.iter().filter(|p| p.stockmayer_fixman.as_ref().is_some_and(|l| l.at(0.0).0 > 0.0)).collect();
    let centre = target.unwrap_or_else(|| {
        let t: Vec<f64> = with.iter().map(|p| p.temperature_k).collect();
        t.get(t.len() / 2).copied().unwrap_or(f64::NAN)
    });
    with.into_iter().min_by(|a, b| (a.temperature_k - centre).abs().total_cmp(&(b.temperature_k - centre).abs()))
}

/// d ln⟨r²⟩0/dT = (2/3) d ln Kθ/dT over the temperatures with a Stockmayer–Fixman intercept
/// (three or more), 1/K, with its SE and dof.
fn temperature_coefficient(lines: &[TemperatureLines]) -> Option<(f64, f64, Option<usize>)> {
    let points: Vec<(f64, f64, f64, Option<usize>)> = lines
        .iter()
        .filter_map(|p| {
            let l = p.stockmayer_fixman.as_ref()?;
            let (k, se) = p.k_theta()?;
            (k > 0.0 && p.stockmayer_fixman_se_known).then_some((p.temperature_k, k.ln(), se / k, l.dof()))
        })
        .collect();
    if points.len() < 3 {
        return None;
    }
    let x: Vec<f64> = points.iter().map(|p| p.0).collect();
    let y: Vec<f64> = points.iter().map(|p| p.1).collect();
    let se: Vec<Option<f64>> = points.iter().map(|p| Some(p.2)).collect();
    let line = Line::fit(&x, &y, &se, SeBasis::fewest(points.iter().map(|p| p.3))).ok()?;
    Some((2.0 / 3.0 * line.beta, 2.0 / 3.0 * line.slope_se(), line.dof()))
}

/// What [`ViscometryResult::assemble`] turns into report units.
pub(crate) struct Assembly<'a> {
    fractions: &'a [Fraction],
    temperatures: &'a [f64],
    dilutions: &'a [(usize, usize, Dilution)],
    per_temperature: &'a [TemperatureLines],
    theta: Option<ThetaFit>,
    direct: Option<DirectKTheta>,
    k_theta: Option<f64>,
    coefficient: Option<(f64, f64, Option<usize>)>,
    settings: &'a ViscometrySettings,
    warnings: Vec<String>,
}

/// [η] mL/g ↔ m³/kg and friends, at the edge.
fn ml_per_g(x: f64) -> f64 {
    x * ML_PER_G_PER_M3_PER_KG
}

fn r2_report(k_theta_si: f64, settings: &ViscometrySettings) -> f64 {
    r2_over_m_from_k_theta(k_theta_si, None, settings.flory_fox_per_mol).0 * NM2_MOL_PER_G_PER_SI
}
