//! One fraction at one temperature: the intrinsic viscosity from the dilution series.
//!
//! Huggins ηsp/c = [η] + kH [η]² c and Kraemer ln ηrel/c = [η] + kK [η]² c, fitted together with
//! one intercept [η] (weights c² and (ηrel c)²: a constant error in ηrel, as from flow times read
//! to a fixed precision). Both lines come from the same readings, so their errors are one error
//! seen twice: the covariance is propagated from each reading's ηrel (first order), with the
//! error variance from the Huggins line's residuals (n − 2 degrees of freedom, t quantile;
//! [`pool_noise`] pools it over the series' fractions and temperatures).
//! The two lines cannot both be straight (ln(1 + x) is not x): the shared intercept's distance to
//! the farther of the two lines' own intercepts (its truncation, were either line exact) is added
//! to its variance, so that the SE also covers the model (measured in `tests/suite/viscometry.rs`).
//! One concentration gives the Solomon–Ciută estimate [η] = √(2 (ηsp − ln ηrel))/c, no SE.
//! SI inside: c in kg/m³, [η] in m³/kg.

use crate::numerics::linear::{self, Weights};
use serde::{Deserialize, Serialize};

/// kH − kK departs from ½ by more than this (and by more than 2.58 SE) → a warning. The
/// identity holds to first order in [η]c; over the usual working range the truncation alone
/// moves it by up to ~0.1 (measured in `tests/suite/viscometry.rs`), so 0.2 (common practice
/// reads larger departures as association, adsorption on the capillary, or a wrong solvent time).
pub const HUGGINS_KRAEMER_TOLERANCE: f64 = 0.2;

/// The usual working range of ηrel at the highest concentration (common practice: below ~1.2
/// the flow-time differences are too small for a precise [η]; above ~2 the lines curve).
pub const RELATIVE_VISCOSITY_RANGE: (f64, f64) = (1.2, 2.0);

/// What limits one dilution series' [η]; the code goes into tables, the sentence to people.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DilutionWarning {
    /// Stable code: `relative_viscosity_range`, `huggins_kraemer_departure`, `single_point`,
    /// `no_scatter`.
    pub code: String,
    /// What it means and what to do.
    pub message: String,
}

fn warning(code: &str, message: String) -> DilutionWarning {
    DilutionWarning { code: code.into(), message }
}

/// How [η] was obtained.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum DilutionMethod {
    /// Huggins and Kraemer lines with one intercept.
    HugginsKraemer,
    /// One concentration: the Solomon–Ciută single-point estimate (no SE).
    SolomonCiuta,
    /// Given in the file.
    Given,
}

impl DilutionMethod {
    /// People's name.
    pub fn label(self) -> &'static str {
        match self {
            DilutionMethod::HugginsKraemer => "Huggins and Kraemer lines",
            DilutionMethod::SolomonCiuta => "Solomon–Ciută single point",
            DilutionMethod::Given => "given",
        }
    }
}

/// The result of one dilution series, SI.
#[derive(Debug, Clone, PartialEq)]
pub struct Dilution {
    /// [η], m³/kg.
    pub intrinsic: f64,
    /// SE of [η], m³/kg (None: not estimable).
    pub se: Option<f64>,
    /// Degrees of freedom behind the SE (None: known).
    pub se_dof: Option<usize>,
    /// The part of the SE that is the lines' truncation, m³/kg (shared by fractions measured
    /// over the same ηrel range, so it does not average out across them).
    pub truncation: f64,
    /// Method.
    pub method: DilutionMethod,
    /// kH and its SE.
    pub huggins: Option<(f64, Option<f64>)>,
    /// kK and its SE.
    pub kraemer: Option<(f64, Option<f64>)>,
    /// kH − kK and its SE.
    pub huggins_minus_kraemer: Option<(f64, Option<f64>)>,
    /// Readings (c kg/m³, ηrel).
    pub readings: Vec<(f64, f64)>,
    /// Why the result is weak.
    pub warnings: Vec<DilutionWarning>,
    /// The Huggins–Kraemer fit behind the SEs (absent for one concentration or given [η]).
    pub lines: Option<LinesFit>,
}

/// What the SEs of a Huggins–Kraemer fit are computed from.
#[derive(Debug, Clone, PartialEq)]
pub struct LinesFit {
    /// ([η], kH [η]², kK [η]²), SI.
    pub coefficients: [f64; 3],
    /// Their covariance for a unit ηrel error variance.
    pub unit_covariance: [[f64; 3]; 3],
    /// Σ (c × Huggins residual)², the ηrel residual sum of squares of the Huggins line.
    pub rss: f64,
    /// Its degrees of freedom (n − 2).
    pub dof: usize,
    /// Warnings that do not depend on the SEs.
    pub base_warnings: Vec<DilutionWarning>,
}

impl Dilution {
    /// The SE without the truncation: the readings' noise alone, m³/kg. The lines across
    /// fractions weigh by it, since the truncation moves every fraction's [η] alike (it then
    /// enters their intercepts, not their slopes).
    pub fn noise_se(&self) -> Option<f64> {
        self.se.map(|s| (s * s - self.truncation * self.truncation).max(0.0).sqrt())
    }
}

/// Solomon–Ciută: [η] = √(2 (ηsp − ln ηrel))/c, m³/kg from c in kg/m³.
pub fn solomon_ciuta(concentration: f64, relative_viscosity: f64) -> f64 {
    (2.0 * (relative_viscosity - 1.0 - relative_viscosity.ln())).sqrt() / concentration
}

/// Fits one dilution series: readings (c kg/m³, ηrel > 1); `None` without readings.
pub fn fit_dilution(readings: &[(f64, f64)]) -> Option<Dilution> {
    let mut distinct: Vec<f64> = readings.iter().map(|r| r.0).collect();
    distinct.sort_by(f64::total_cmp);
    distinct.dedup_by(|a, b| (*a - *b).abs() <= 1e-9 * b.abs());
    let mut warnings = Vec::new();
    let highest = readings.iter().max_by(|a, b| a.0.total_cmp(&b.0))?.1;
    let (low, high) = RELATIVE_VISCOSITY_RANGE;
    if highest > high {
        warnings.push(warning("relative_viscosity_range", format!(
            "ηrel reaches {highest:.2} at the highest concentration, above the usual {high}: the lines may curve there; dilute further"
        )));
    } else if highest < low {
        warnings.push(warning("relative_viscosity_range", format!(
            "ηrel is only {highest:.3} at the highest concentration, below the usual {low}: flow times differ too little for a precise [η]; measure more concentrated solutions"
        )));
    }
    if distinct.len() == 1 {
        let (c, r) = readings.iter().fold((0.0, 0.0), |(c, r), x| (c + x.0, r + x.1));
        let n = readings.len() as f64;
        warnings.push(warning(
            "single_point",
            "one concentration: the Solomon–Ciută single-point estimate, without an SE".into(),
        ));
        return Some(Dilution {
            intrinsic: solomon_ciuta(c / n, r / n),
            se: None,
            se_dof: None,
            truncation: 0.0,
            method: DilutionMethod::SolomonCiuta,
            huggins: None,
            kraemer: None,
            huggins_minus_kraemer: None,
            readings: readings.to_vec(),
            warnings,
            lines: None,
        });
    }
    let n = readings.len();
    // Rows: Huggins (1, c, 0) then Kraemer (1, 0, c).
    let mut design = Vec::with_capacity(6 * n);
    let mut y = Vec::with_capacity(2 * n);
    let mut w = Vec::with_capacity(2 * n);
    for &(c, r) in readings {
        design.extend([1.0, c, 0.0]);
        y.push((r - 1.0) / c);
        w.push(c * c);
    }
    for &(c, r) in readings {
        design.extend([1.0, 0.0, c]);
        y.push(r.ln() / c);
        w.push((r * c).powi(2));
    }
    let joint = linear::fit(&design, 3, &y, Some(&w), Weights::Absolute).ok()?;
    let (eta, b_h, b_k) = (joint.coefficients[0], joint.coefficients[1], joint.coefficients[2]);
    // σ² of ηrel from the Huggins line alone (its residuals in ηrel: c × residual).
    let huggins_design: Vec<f64> = readings.iter().flat_map(|&(c, _)| [1.0, c]).collect();
    let huggins_line = linear::fit(&huggins_design, 2, &y[..n], Some(&w[..n]), Weights::Relative).ok()?;
    let sigma2 = (huggins_line.dof > 0).then(|| huggins_line.rss_weighted / huggins_line.dof as f64);
    let kraemer_design: Vec<f64> = readings.iter().flat_map(|&(c, _)| [1.0, c]).collect();
    let kraemer_line = linear::fit(&kraemer_design, 2, &y[n..], Some(&w[n..]), Weights::Relative).ok()?;
    let truncation = (eta - huggins_line.coefficients[0]).abs().max((eta - kraemer_line.coefficients[0]).abs());
    // d β / d ηrel_i = G (c_i (1 + ηrel_i), c_i², ηrel_i c_i²), G = (Xᵀ W X)⁻¹.
    let g = |i: usize, j: usize| joint.cov(i, j);
    let mut cov = [[0.0; 3]; 3];
    for &(c, r) in readings {
        let v = [c * (1.0 + r), c * c, r * c * c];
        let d: Vec<f64> = (0..3).map(|i| (0..3).map(|j| g(i, j) * v[j]).sum()).collect();
        for i in 0..3 {
            for j in 0..3 {
                cov[i][j] += d[i] * d[j];
            }
        }
    }
    let mut fit = Dilution {
        intrinsic: eta,
        se: None,
        se_dof: None,
        truncation,
        method: DilutionMethod::HugginsKraemer,
        huggins: None,
        kraemer: None,
        huggins_minus_kraemer: None,
        readings: readings.to_vec(),
        warnings: Vec::new(),
        lines: Some(LinesFit {
            coefficients: [eta, b_h, b_k],
            unit_covariance: cov,
            rss: huggins_line.rss_weighted,
            dof: huggins_line.dof,
            base_warnings: warnings,
        }),
    };
    fit.set_noise(sigma2, huggins_line.dof);
    Some(fit)
}

/// Pools the ηrel error variance over every Huggins–Kraemer series of one viscometer
/// (σ² = Σ RSS / Σ dof): one fraction's three or so residual degrees of freedom make a poor
/// weight, the pooled estimate a good one (as osmometry pools over temperatures). Two-
/// concentration series then get an SE too.
pub fn pool_noise<'a>(dilutions: impl Iterator<Item = &'a mut Dilution>) {
    let mut fits: Vec<&mut Dilution> = dilutions.filter(|d| d.lines.is_some()).collect();
    let (rss, dof) =
        fits.iter().filter_map(|d| d.lines.as_ref()).fold((0.0, 0usize), |(r, n), l| (r + l.rss, n + l.dof));
    if dof == 0 {
        return;
    }
    for d in &mut fits {
        d.set_noise(Some(rss / dof as f64), dof);
    }
}

impl Dilution {
    /// The SEs of [η], kH, kK and kH − kK for an ηrel error variance `sigma2` on `dof` degrees
    /// of freedom, and the warnings that depend on them.
    fn set_noise(&mut self, sigma2: Option<f64>, dof: usize) {
        let Some(lines) = &self.lines else { return };
        let [eta, b_h, b_k] = lines.coefficients;
        let cov = sigma2.map(|s2| lines.unit_covariance.map(|row| row.map(|x| x * s2)));
        let gradient_se = |grad: [f64; 3]| {
            cov.map(|v| {
                let mut var = 0.0;
                for i in 0..3 {
                    for j in 0..3 {
                        var += grad[i] * grad[j] * v[i][j];
                    }
                }
                var.max(0.0).sqrt()
            })
        };
        // k = b/[η]²: gradient (−2b/[η]³, 1/[η]²) in ([η], b).
        let e2 = eta * eta;
        let huggins = (b_h / e2, gradient_se([-2.0 * b_h / (e2 * eta), 1.0 / e2, 0.0]));
        let kraemer = (b_k / e2, gradient_se([-2.0 * b_k / (e2 * eta), 0.0, 1.0 / e2]));
        let difference = ((b_h - b_k) / e2, gradient_se([-2.0 * (b_h - b_k) / (e2 * eta), 1.0 / e2, -1.0 / e2]));
        let mut warnings = lines.base_warnings.clone();
        let departure = (difference.0 - 0.5).abs();
        if departure > HUGGINS_KRAEMER_TOLERANCE && difference.1.is_none_or(|se| departure > 2.58 * se) {
            warnings.push(warning("huggins_kraemer_departure", format!(
                "kH − kK = {:.2}, not the ½ the two lines share in dilute solution: look for association, adsorption on the capillary wall, or a wrong solvent flow time",
                difference.0
            )));
        }
        if sigma2.is_none() {
            warnings.push(warning(
                "no_scatter",
                "two concentrations: no scatter is left to estimate an SE from; measure a third".into(),
            ));
        }
        self.se = cov.map(|v| (v[0][0].max(0.0) + self.truncation * self.truncation).sqrt());
        self.se_dof = sigma2.map(|_| dof);
        self.huggins = Some(huggins);
        self.kraemer = Some(kraemer);
        self.huggins_minus_kraemer = Some(difference);
        self.warnings = warnings;
    }
}
