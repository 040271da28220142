//! Per-temperature virial fits: each form, the choice among them, and the warnings a
//! polymer chemist would want to see next to Mn and A2.

mod forms;

pub use forms::{fit_form, score_form, FormError, FormFit, FormScore, Readings, VirialForm};

use crate::dataset::TemperatureSet;
use serde::Serialize;
use std::fmt;

/// How the form is chosen at each temperature.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FormChoice {
    /// By AICc (see [`choose_form`]).
    Auto,
    /// Always this form (falls back to linear, with a warning, where it does not apply).
    Fixed(VirialForm),
}

/// Fewest distinct concentrations at which a temperature is fitted (for a standard error).
pub const MIN_CONCENTRATIONS: usize = 3;
/// Fewer distinct concentrations than this earn a warning.
pub const FEW_CONCENTRATIONS: usize = 4;
/// Smallest residual degrees of freedom a form may keep under `--virial auto`.
pub const MIN_AUTO_DOF: usize = 2;
/// AICc lead the three-parameter form needs over the best two-parameter one.
pub const QUADRATIC_AICC_MARGIN: f64 = 2.0;
/// |studentised residual| above this is flagged.
pub const STUDENTIZED_LIMIT: f64 = 3.0;
/// Mn below this (kg/mol; 2×10⁴ g/mol) is flagged: low-mass species may cross the membrane
/// (common practice).
pub const LOW_MN_KG_PER_MOL: f64 = 20.0;

/// Something worth a second look in one temperature's fit.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "code", rename_all = "snake_case")]
pub enum FitWarning {
    /// Fewer than four distinct concentrations.
    FewConcentrations {
        /// Distinct concentrations.
        n: usize,
    },
    /// A point with |studentised residual| above 3.
    Outlier {
        /// The point's concentration, g/mL.
        concentration_g_per_ml: f64,
        /// Its studentised residual.
        studentized: f64,
        /// Its line in the input file.
        line: usize,
    },
    /// Γ2 c_max above 1: the virial series is truncated too early.
    SeriesTruncation {
        /// Γ2 c_max (dimensionless).
        gamma2_c_max: f64,
    },
    /// Mn below 2×10⁴ g/mol.
    LowMn {
        /// The fitted Mn, g/mol.
        mn_g_per_mol: f64,
    },
    /// The quadratic term is significant but a straight line was used.
    Curvature {
        /// t statistic of A3 in the quadratic fit.
        a3_t: f64,
    },
    /// The requested form could not be used here.
    FormFallback {
        /// Requested form.
        requested: VirialForm,
        /// Why it did not apply.
        reason: String,
    },
    /// Standard deviations were given for some readings only, so none were used.
    PartialWeights,
}

impl fmt::Display for FitWarning {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            FitWarning::FewConcentrations { n } => {
                write!(f, "only {n} concentrations: A2 rests on few points; measure at least 4")
            }
            FitWarning::Outlier { concentration_g_per_ml, studentized, line } => {
                write!(f, "point at c = {concentration_g_per_ml:.4} g/mL (line {line}) has studentised residual {studentized:.1}: check it")
            }
            FitWarning::SeriesTruncation { gamma2_c_max } => {
                write!(f, "Γ2·c_max = {gamma2_c_max:.2} > 1: too concentrated for a truncated virial series; dilute or use --virial sqrt")
            }
            FitWarning::LowMn { mn_g_per_mol } => {
                write!(f, "Mn = {mn_g_per_mol:.0} g/mol < 20000: low-mass species may permeate the membrane")
            }
            FitWarning::Curvature { a3_t } => {
                write!(f, "reduced pressure is curved in c (A3 t = {a3_t:.1}): consider --virial sqrt or quadratic")
            }
            FitWarning::FormFallback { requested, reason } => {
                write!(f, "{} form not used: {reason}; linear used instead", requested.name())
            }
            FitWarning::PartialWeights => write!(f, "pressure sd given for some readings only: fitted unweighted"),
        }
    }
}

/// One form's score in the automatic choice.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Candidate {
    /// The form.
    pub form: VirialForm,
    /// AICc on the reduced-pressure scale (null where it does not qualify).
    pub aicc: Option<f64>,
    /// Why it was not a candidate, if not.
    pub excluded: Option<String>,
}

/// The chosen fit at one temperature, with its diagnostics.
#[derive(Debug, Clone, PartialEq)]
pub struct TemperatureFit {
    /// Temperature, K.
    pub temperature_k: f64,
    /// Readings used.
    pub n_points: usize,
    /// Whether per-point SDs weighted the fit.
    pub weighted: bool,
    /// The chosen form's fit.
    pub fit: FormFit,
    /// Why this form.
    pub choice_reason: String,
    /// The forms considered (auto only).
    pub candidates: Vec<Candidate>,
    /// Diagnostics.
    pub warnings: Vec<FitWarning>,
}

/// Why a temperature was not fitted.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SkippedTemperature {
    /// Temperature, K.
    pub temperature_k: f64,
    /// Readings at it.
    pub n_points: usize,
    /// The reason.
    pub reason: String,
}

/// AICc = n ln(RSS/n) + 2k + 2k(k+1)/(n−k−1), k = p + 1 (σ counted). `None` when n − k − 1 ≤ 0.
pub fn aicc(rss: f64, n: usize, p: usize) -> Option<f64> {
    let k = (p + 1) as f64;
    let n_f = n as f64;
    (n_f - k - 1.0 > 0.0)
        .then(|| n_f * (rss.max(f64::MIN_POSITIVE) / n_f).ln() + 2.0 * k + 2.0 * k * (k + 1.0) / (n_f - k - 1.0))
}

/// One temperature's chosen form, scored but not completed: what the bootstrap needs of each
/// replicate (see [`score_temperature`]); [`ScoredTemperature::complete`] adds the per-point
/// output and the warnings that need it.
#[derive(Debug, Clone)]
pub struct ScoredTemperature {
    /// Temperature, K.
    pub temperature_k: f64,
    /// The chosen form, solved.
    pub score: FormScore,
    /// SDs of Π that weighted the fit (every reading has one), Pa.
    pressure_sd: Option<Vec<f64>>,
    choice_reason: String,
    candidates: Vec<Candidate>,
    quadratic: Option<FormScore>,
    distinct: usize,
    warnings: Vec<FitWarning>,
}

/// Chooses and solves the form at one temperature, or says why it cannot be fitted.
pub fn score_temperature(set: &TemperatureSet, choice: FormChoice) -> Result<ScoredTemperature, SkippedTemperature> {
    let skip = |reason: String| SkippedTemperature { temperature_k: set.temperature_k, n_points: set.len(), reason };
    let distinct = set.distinct_concentrations();
    if distinct < MIN_CONCENTRATIONS {
        return Err(skip(format!(
            "{distinct} distinct concentration(s); at least {MIN_CONCENTRATIONS} are needed for a standard error"
        )));
    }
    let mut warnings = Vec::new();
    let all_sd: Option<Vec<f64>> = set.pressure_sd_pa.iter().copied().collect();
    if all_sd.is_none() && set.pressure_sd_pa.iter().any(Option::is_some) {
        warnings.push(FitWarning::PartialWeights);
    }
    let readings = readings_of(set, all_sd.as_deref());
    let (score, choice_reason, candidates, quadratic) = match choice {
        FormChoice::Fixed(form) => match score_form(form, &readings) {
            Ok(score) => (score, format!("{} form requested", form.name()), Vec::new(), None),
            Err(e) => {
                let score = score_form(VirialForm::Linear, &readings).map_err(|e| skip(e.to_string()))?;
                warnings.push(FitWarning::FormFallback { requested: form, reason: e.to_string() });
                (score, format!("{} form requested but not applicable", form.name()), Vec::new(), None)
            }
        },
        FormChoice::Auto => {
            let chosen = choose_form(&readings).map_err(|e| skip(e.to_string()))?;
            (chosen.score, chosen.reason, chosen.candidates, chosen.quadratic)
        }
    };
    if score.inverse_mn <= 0.0 {
        return Err(skip(format!(
            "the intercept 1/Mn = {:.3e} mol/g is not positive: check the zero of the osmometer and the units",
            score.inverse_mn / 1000.0
        )));
    }
    Ok(ScoredTemperature {
        temperature_k: set.temperature_k,
        pressure_sd: all_sd,
        score,
        choice_reason,
        candidates,
        quadratic,
        distinct,
        warnings,
    })
}

fn readings_of<'a>(set: &'a TemperatureSet, sd: Option<&'a [f64]>) -> Readings<'a> {
    Readings {
        temperature_k: set.temperature_k,
        concentration: &set.concentration_kg_per_m3,
        pressure: &set.pressure_pa,
        pressure_sd: sd,
    }
}

/// Fits one temperature: the chosen form plus diagnostics, or why it cannot be fitted.
pub fn fit_temperature(set: &TemperatureSet, choice: FormChoice) -> Result<TemperatureFit, SkippedTemperature> {
    Ok(score_temperature(set, choice)?.complete(set))
}

impl ScoredTemperature {
    /// Whether per-point SDs weighted the fit.
    pub fn weighted(&self) -> bool {
        self.pressure_sd.is_some()
    }

    /// The per-point output of the chosen form and the warnings about it, for the readings it
    /// was scored on.
    pub fn complete(self, set: &TemperatureSet) -> TemperatureFit {
        let weighted = self.weighted();
        let ScoredTemperature {
            pressure_sd, score, choice_reason, candidates, quadratic, distinct, mut warnings, ..
        } = self;
        let readings = readings_of(set, pressure_sd.as_deref());
        // Only the chosen form gets its per-point output.
        let fit = score.complete(&readings);
        if distinct < FEW_CONCENTRATIONS {
            warnings.push(FitWarning::FewConcentrations { n: distinct });
        }
        for (i, &t) in fit.lsq.studentized.iter().enumerate() {
            if t.abs() > STUDENTIZED_LIMIT {
                warnings.push(FitWarning::Outlier {
                    concentration_g_per_ml: set.concentration_kg_per_m3[i] * crate::units::G_PER_ML_PER_KG_PER_M3,
                    studentized: t,
                    line: set.origins[i].line,
                });
            }
        }
        let c_max = set.concentration_kg_per_m3.iter().copied().fold(0.0, f64::max);
        let gamma2_c_max = fit.score.a2 * fit.mn() * c_max;
        if gamma2_c_max > 1.0 {
            warnings.push(FitWarning::SeriesTruncation { gamma2_c_max });
        }
        let mn_g = fit.mn() * crate::units::G_PER_MOL_PER_KG_PER_MOL;
        if fit.mn() < LOW_MN_KG_PER_MOL {
            warnings.push(FitWarning::LowMn { mn_g_per_mol: mn_g });
        }
        if fit.score.form == VirialForm::Linear {
            let quadratic = quadratic.or_else(|| score_form(VirialForm::Quadratic, &readings).ok());
            if let Some(a3_t) = quadratic.and_then(|q| significant_curvature(&q)) {
                warnings.push(FitWarning::Curvature { a3_t });
            }
        }
        TemperatureFit {
            temperature_k: set.temperature_k,
            n_points: set.len(),
            weighted,
            fit,
            choice_reason,
            candidates,
            warnings,
        }
    }
}

/// What the automatic choice settled on: the chosen form's score, why, the forms considered,
/// and the quadratic form's score where it was computed (for the curvature check).
#[derive(Debug, Clone)]
pub struct Choice {
    /// The chosen form, solved.
    pub score: FormScore,
    /// Why this form.
    pub reason: String,
    /// Every form with its AICc or why it was excluded.
    pub candidates: Vec<Candidate>,
    /// The quadratic form's score, if it was solved.
    pub quadratic: Option<FormScore>,
}

/// The automatic choice: AICc on the reduced-pressure scale among the forms that apply and
/// keep at least [`MIN_AUTO_DOF`] residual degrees of freedom; between the two-parameter forms
/// the lower AICc wins, and the quadratic form must beat the better of them by
/// [`QUADRATIC_AICC_MARGIN`]. When no form qualifies, linear is used.
pub fn choose_form(readings: &Readings) -> Result<Choice, FormError> {
    let n = readings.concentration.len();
    let mut candidates = Vec::with_capacity(VirialForm::ALL.len());
    let mut scores: Vec<(f64, FormScore)> = Vec::with_capacity(VirialForm::ALL.len());
    let mut quadratic_score = None;
    for form in VirialForm::ALL {
        let p = form.parameters();
        if n < p + MIN_AUTO_DOF {
            candidates.push(Candidate {
                form,
                aicc: None,
                excluded: Some(format!(
                    "needs {} points for {MIN_AUTO_DOF} residual degrees of freedom",
                    p + MIN_AUTO_DOF
                )),
            });
            continue;
        }
        match score_form(form, readings) {
            Ok(score) => {
                if form == VirialForm::Quadratic {
                    quadratic_score = Some(score);
                }
                match aicc(score.rss_reduced, n, p) {
                    Some(value) => {
                        candidates.push(Candidate { form, aicc: Some(value), excluded: None });
                        scores.push((value, score));
                    }
                    None => candidates.push(Candidate {
                        form,
                        aicc: None,
                        excluded: Some("too few points for AICc".into()),
                    }),
                }
            }
            Err(e) => candidates.push(Candidate { form, aicc: None, excluded: Some(e.to_string()) }),
        }
    }
    let best_two = scores
        .iter()
        .filter(|(_, f)| f.form.parameters() == 2)
        .min_by(|a, b| a.0.total_cmp(&b.0))
        .map(|(s, f)| (*s, f.form));
    let quadratic = scores.iter().find(|(_, f)| f.form == VirialForm::Quadratic).map(|(s, _)| *s);
    let (form, reason) = match (best_two, quadratic) {
        (Some((s2, form2)), Some(sq)) if sq < s2 - QUADRATIC_AICC_MARGIN => (
            VirialForm::Quadratic,
            format!("AICc {sq:.1} beats the {} form's {s2:.1} by more than {QUADRATIC_AICC_MARGIN}", form2.name()),
        ),
        (Some((s2, form2)), _) => {
            (form2, format!("lowest AICc ({s2:.1}) among the forms with ≥ {MIN_AUTO_DOF} residual degrees of freedom"))
        }
        (None, Some(sq)) => (VirialForm::Quadratic, format!("only form that qualified (AICc {sq:.1})")),
        (None, None) => (VirialForm::Linear, format!("too few points to compare forms ({n}); linear used")),
    };
    let score = match scores.into_iter().find(|(_, f)| f.form == form) {
        Some((_, score)) => score,
        None => score_form(form, readings)?,
    };
    Ok(Choice { score, reason, candidates, quadratic: quadratic_score })
}

/// t of A3 in a quadratic fit when it exceeds the two-sided 95 % point of Student's t;
/// `None` when not significant or not estimable (fewer than 2 residual degrees of freedom).
fn significant_curvature(quadratic: &FormScore) -> Option<f64> {
    let dof = quadratic.core.dof;
    if dof < MIN_AUTO_DOF {
        return None;
    }
    let (a3, se) = quadratic.a3?;
    let t = a3 / se;
    let critical = crate::uncertainty::critical_value(0.95, Some(dof));
    (t.abs() > critical).then_some(t)
}
