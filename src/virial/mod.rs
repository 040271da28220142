//! Per-temperature virial fits: each form, the choice among them, and the warnings a
//! polymer chemist would want to see next to Mn and A2.

mod forms;
mod noise;
mod outliers;
mod warnings;

pub use forms::{fit_form, score_form, FormError, FormFit, FormScore, Readings, VirialForm};
pub use noise::{choose_noise, PressureNoise};
pub use outliers::{flag_outliers, OUTLIER_P};
pub use warnings::{FitWarning, FitWarningCode};

use crate::numerics::aicc;
use crate::numerics::linear::Weights;

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

impl FormChoice {
    /// The name reports and the command line use: `auto`, or the form's name.
    pub fn name(self) -> &'static str {
        match self {
            FormChoice::Auto => "auto",
            FormChoice::Fixed(form) => form.name(),
        }
    }
}

impl Serialize for FormChoice {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.serialize_str(self.name())
    }
}

impl<'de> serde::Deserialize<'de> for FormChoice {
    fn deserialize<D: serde::Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        let name = String::deserialize(deserializer)?;
        std::iter::once(FormChoice::Auto)
            .chain(VirialForm::ALL.map(FormChoice::Fixed))
            .find(|c| c.name() == name)
            .ok_or_else(|| serde::de::Error::custom(format!("unknown virial form '{name}'")))
    }
}

/// Fewest distinct concentrations at which a temperature is fitted (for a standard error).
pub const MIN_CONCENTRATIONS: usize = 3;
/// Fewer distinct concentrations than this earn a warning.
pub const FEW_CONCENTRATIONS: usize = 4;
/// Smallest residual degrees of freedom a form may keep under `--virial auto`.
pub const MIN_AUTO_DOF: usize = 2;
/// AICc lead the three-parameter form needs over the best two-parameter one.
pub const QUADRATIC_AICC_MARGIN: f64 = 2.0;
/// Mn below this (kg/mol; 2×10⁴ g/mol) is flagged: low-mass species may cross the membrane
/// (common practice).
pub const LOW_MN_KG_PER_MOL: f64 = 20.0;

/// One form's score in the automatic choice.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
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
    /// Position of the readings it was fitted to in the series' `temperatures` (the link from a
    /// fit back to its readings; set where the series is analysed, 0 for a set fitted on its own).
    pub set_index: usize,
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
    /// Factor on the fit's own SEs: s_pooled/s_own where the residual variance is pooled over
    /// the series' temperatures ([`pool_standard_errors`]), else 1.
    pub se_scale: f64,
    /// Degrees of freedom of the variance behind the SEs (`None`: given SDs weighted the fit,
    /// the SEs are known and the normal quantile applies).
    pub se_dof: Option<usize>,
    /// Variance the series' form choice adds to (1/Mn, A2), (mol/kg)² and (mol m³/kg²)²
    /// ([`SeriesChoice::choice_variance`]; zero for a form fixed by the user).
    pub choice_variance: (f64, f64),
}

/// Why a temperature was not fitted.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct SkippedTemperature {
    /// Temperature, K.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub temperature_k: f64,
    /// Readings at it.
    pub n_points: usize,
    /// The reason.
    pub reason: String,
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
    /// SDs of Π that weighted the fit (every reading has one), Pa, or the noise's shape.
    pressure_sd: Option<Vec<f64>>,
    /// Whether `pressure_sd` holds given SDs (absolute) or a shape (relative).
    sd_kind: Weights,
    choice_reason: String,
    candidates: Vec<Candidate>,
    quadratic: Option<FormScore>,
    distinct: usize,
    warnings: Vec<FitWarning>,
}

/// Chooses and solves the form at one temperature, weighted by the SDs given with every
/// reading or else by the series' noise shape, or says why it cannot be fitted.
pub fn score_temperature(
    set: &TemperatureSet,
    choice: FormChoice,
    noise: PressureNoise,
) -> Result<ScoredTemperature, SkippedTemperature> {
    let skip = |reason: String| SkippedTemperature { temperature_k: set.temperature_k, n_points: set.len(), reason };
    let distinct = set.distinct_concentrations();
    if distinct < MIN_CONCENTRATIONS {
        return Err(skip(format!(
            "{distinct} distinct concentration(s); at least {MIN_CONCENTRATIONS} are needed for a standard error"
        )));
    }
    let mut warnings = Vec::new();
    if let Some(warning) = below_zero(set).map_err(skip)? {
        warnings.push(warning);
    }
    let (all_sd, sd_kind) = noise.sds_for(set);
    if sd_kind == Weights::Relative && set.pressure_sd_pa.iter().any(Option::is_some) {
        warnings.push(FitWarning::PartialWeights);
    }
    let readings = readings_of(set, all_sd.as_deref(), sd_kind);
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
    let estimates = [score.inverse_mn, score.inverse_mn_se, score.a2, score.a2_se];
    if estimates.iter().any(|v| !v.is_finite()) {
        let largest = set.pressure_pa.iter().copied().fold(0.0_f64, |m, p| m.max(p.abs()));
        return Err(skip(format!(
            "the fit could not be computed (a value overflowed; the largest pressure is {largest:.3e} Pa): check the readings and their units"
        )));
    }
    if score.inverse_mn <= 0.0 {
        return Err(skip(format!(
            "the intercept 1/Mn = {:.3e} mol/g is not positive: check the zero of the osmometer and the units",
            score.inverse_mn / 1000.0
        )));
    }
    Ok(ScoredTemperature {
        temperature_k: set.temperature_k,
        pressure_sd: all_sd,
        sd_kind,
        score,
        choice_reason,
        candidates,
        quadratic,
        distinct,
        warnings,
    })
}

/// One-sided level of the falling-pressure test (a warning that claims p < 0.01).
pub const FALLING_PRESSURE_P: f64 = 0.01;

/// The stability test at the highest concentration: ∂Π/∂c ∝ 1/Mn + 2 A2 c (+ 3 A3 c²) must be
/// positive in a stable solution; a fitted value below zero by more than the one-sided normal
/// quantile at [`FALLING_PRESSURE_P`] times its SE names the readings past the point where it
/// crosses zero.
fn falling_pressure(score: &FormScore, set: &TemperatureSet, c_max: f64) -> Option<FitWarning> {
    let a3 = score.a3.map_or((0.0, 0.0), |a| a);
    let slope = score.inverse_mn + 2.0 * score.a2 * c_max + 3.0 * a3.0 * c_max * c_max;
    let variance = score.inverse_mn_se.powi(2)
        + 4.0 * c_max * c_max * score.a2_se.powi(2)
        + 4.0 * c_max * score.cov_inverse_mn_a2
        + 9.0 * c_max.powi(4) * a3.1.powi(2);
    let z = 2.326_347_874_040_841; // Φ⁻¹(0.99)
                                   // NaN (an unusable SE) fails the test and warns of nothing.
    let falling = slope < -z * variance.max(0.0).sqrt();
    if !falling {
        return None;
    }
    // Where the fitted slope crosses zero (the linear terms; the quadratic's A3 moves it little).
    let from = if score.a2 < 0.0 { (-score.inverse_mn / (2.0 * score.a2)).min(c_max) } else { c_max };
    let lines = set
        .concentration_kg_per_m3
        .iter()
        .zip(&set.origins)
        .filter(|(c, _)| **c >= from)
        .map(|(_, o)| o.line)
        .collect();
    Some(FitWarning::FallingPressure {
        from_concentration_g_per_ml: from * crate::units::G_PER_ML_PER_KG_PER_M3,
        lines,
    })
}

/// A reading below zero may be baseline noise around a small pressure; one whose magnitude is
/// more than [`BELOW_ZERO_LIMIT`] of the largest reading at its temperature is not noise but a
/// slip (a sign, a zero offset), and the temperature is skipped with the reading named.
pub fn below_zero(set: &TemperatureSet) -> Result<Option<FitWarning>, String> {
    let Some((i, lowest)) =
        set.pressure_pa.iter().copied().enumerate().filter(|(_, p)| *p < 0.0).min_by(|a, b| a.1.total_cmp(&b.1))
    else {
        return Ok(None);
    };
    let largest = set.pressure_pa.iter().copied().fold(0.0_f64, f64::max);
    let line = set.origins[i].line;
    if -lowest > BELOW_ZERO_LIMIT * largest {
        return Err(format!(
            "the reading at line {line} is {lowest:.4} Pa, far below zero beside readings up to {largest:.4} Pa: a sign slip or a zero offset? correct it"
        ));
    }
    let n = set.pressure_pa.iter().filter(|p| **p < 0.0).count();
    Ok(Some(FitWarning::BelowZero { n, lowest_pa: lowest, line }))
}

/// A reading below zero by more than this fraction of the largest at its temperature is not
/// taken for baseline noise.
pub const BELOW_ZERO_LIMIT: f64 = 0.5;

fn readings_of<'a>(set: &'a TemperatureSet, sd: Option<&'a [f64]>, sd_kind: Weights) -> Readings<'a> {
    Readings {
        temperature_k: set.temperature_k,
        concentration: &set.concentration_kg_per_m3,
        pressure: &set.pressure_pa,
        pressure_sd: sd,
        sd_kind,
    }
}

/// Fits one temperature: the chosen form plus diagnostics, or why it cannot be fitted.
pub fn fit_temperature(
    set: &TemperatureSet,
    choice: FormChoice,
    noise: PressureNoise,
) -> Result<TemperatureFit, SkippedTemperature> {
    Ok(score_temperature(set, choice, noise)?.complete(set))
}

impl ScoredTemperature {
    /// Whether SDs given with the readings weighted the fit.
    pub fn weighted(&self) -> bool {
        self.pressure_sd.is_some() && self.sd_kind == Weights::Absolute
    }

    /// The per-point output of the chosen form and the warnings about it, for the readings it
    /// was scored on.
    pub fn complete(self, set: &TemperatureSet) -> TemperatureFit {
        let weighted = self.weighted();
        let ScoredTemperature {
            pressure_sd,
            sd_kind,
            score,
            choice_reason,
            candidates,
            quadratic,
            distinct,
            mut warnings,
            ..
        } = self;
        let readings = readings_of(set, pressure_sd.as_deref(), sd_kind);
        // Only the chosen form gets its per-point output.
        let fit = score.complete(&readings);
        let fit_dof = fit.score.core.dof;
        if distinct < FEW_CONCENTRATIONS {
            warnings.push(FitWarning::FewConcentrations { n: distinct });
        }
        let c_max = set.concentration_kg_per_m3.iter().copied().fold(0.0, f64::max);
        warnings.extend(falling_pressure(&fit.score, set, c_max));
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
            set_index: 0,
            temperature_k: set.temperature_k,
            n_points: set.len(),
            weighted,
            fit,
            choice_reason,
            candidates,
            warnings,
            se_scale: 1.0,
            se_dof: (!weighted).then_some(fit_dof),
            choice_variance: (0.0, 0.0),
        }
    }
}

impl TemperatureFit {
    /// SE of Mn, kg/mol: the fit's (on the pooled variance where pooled) with the form choice's
    /// share, by the delta method from 1/Mn.
    pub fn mn_se(&self) -> f64 {
        let inverse = self.fit.score.inverse_mn;
        let se_inverse = ((self.se_scale * self.fit.score.inverse_mn_se).powi(2) + self.choice_variance.0).sqrt();
        se_inverse / (inverse * inverse)
    }

    /// SE of A2, mol m³/kg²: the fit's, with the form choice's share.
    pub fn a2_se(&self) -> f64 {
        ((self.se_scale * self.fit.score.a2_se).powi(2) + self.choice_variance.1).sqrt()
    }

    /// SE of A3, mol m⁶/kg³ (quadratic form only).
    pub fn a3_se(&self) -> Option<f64> {
        self.fit.score.a3.map(|(_, se)| self.se_scale * se)
    }

    /// Cov(1/Mn, A2), mol² m³/kg³.
    pub fn cov_inverse_mn_a2(&self) -> f64 {
        self.se_scale * self.se_scale * self.fit.score.cov_inverse_mn_a2
    }
}

/// One temperature's share of a pooled residual variance: whether known SDs weighted it, its
/// weighted RSS on the reduced-pressure scale, and its residual degrees of freedom.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PoolShare {
    /// Known SDs weighted the fit (it does not join the pool).
    pub weighted: bool,
    /// Σ (y − ŷ)² on the reduced-pressure scale, (mol/kg)².
    pub rss_reduced: f64,
    /// n − p.
    pub dof: usize,
}

/// The residual variance of Π/(cRT) pooled over a series' unweighted temperatures: one
/// instrument measured them all, so s²_pooled = Σ RSS_i / Σ ν_i rests on many more degrees of
/// freedom than any one temperature's n − p (often 3), whose SEs alone would make weights and
/// tests that chase each temperature's luck. Returns each pooled temperature's factor
/// s_pooled/s_i (`None` for weighted or unpoolable ones) and the pooled degrees of freedom.
pub fn pooled_scales(shares: &[PoolShare]) -> (Vec<Option<f64>>, usize) {
    let pool = |s: &PoolShare| !s.weighted && s.dof > 0 && s.rss_reduced > 0.0;
    let (rss, dof) = shares.iter().filter(|s| pool(s)).fold((0.0, 0usize), |(r, d), s| (r + s.rss_reduced, d + s.dof));
    let pooled_sd = (rss / dof.max(1) as f64).sqrt();
    let scales = shares.iter().map(|s| pool(s).then(|| pooled_sd / (s.rss_reduced / s.dof as f64).sqrt())).collect();
    (scales, dof)
}

/// Puts every unweighted temperature of one series on the pooled residual variance
/// ([`pooled_scales`]): SEs rescaled, degrees of freedom those of the pool.
pub fn pool_standard_errors(fits: &mut [TemperatureFit]) {
    let shares: Vec<PoolShare> = fits
        .iter()
        .map(|f| PoolShare { weighted: f.weighted, rss_reduced: f.fit.score.rss_reduced, dof: f.fit.score.core.dof })
        .collect();
    let (scales, dof) = pooled_scales(&shares);
    for (fit, scale) in fits.iter_mut().zip(scales) {
        if let Some(scale) = scale {
            fit.se_scale = scale;
            fit.se_dof = Some(dof);
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

/// The forms chosen once for a whole series under `--virial auto` ([`choose_series_forms`]).
#[derive(Debug, Clone, PartialEq)]
pub struct SeriesChoice {
    /// The form at each temperature, in the order of the sets given (`None`: not fittable).
    pub forms: Vec<Option<VirialForm>>,
    /// Why, in words.
    pub reason: String,
    /// Each family with its pooled AICc (`form` names the family).
    pub candidates: Vec<Candidate>,
    /// At each temperature, the variance the choice itself adds to (1/Mn, A2):
    /// Σ_k w_k (θ_k − θ_chosen)² over the families k with Akaike weights w_k, (mol/kg)² and
    /// (mol m³/kg²)² (Buckland, Burnham & Augustin 1997, Biometrics 53, 603; Burnham &
    /// Anderson 2002, "Model Selection and Multimodel Inference", §4.3.2).
    pub choice_variance: Vec<(f64, f64)>,
}

/// Chooses one virial family for a whole series by AICc on every reading pooled: linear at every
/// temperature; sqrt (Stockmayer–Casassa, g = 1/4) wherever it applies (A2 ≥ 0, every Π > 0)
/// and linear elsewhere — the good-solvent curvature vanishes at and below θ; or quadratic
/// wherever a temperature has the points for it. The quadratic family must win by
/// [`QUADRATIC_AICC_MARGIN`]. One instrument and one polymer make the curvature a property of
/// the series: chosen from all n_T × n_c readings it is seen √n_T times more clearly than at
/// one temperature, where a choice among 4–6 points is nearly a coin toss and leaves A2 biased
/// by about its own SE (the coverage study in DEVELOPERS.md measured both).
pub fn choose_series_forms(sets: &[TemperatureSet], noise: PressureNoise) -> SeriesChoice {
    struct Family {
        form: VirialForm,
        forms: Vec<Option<VirialForm>>,
        estimates: Vec<Option<(f64, f64)>>,
        rss: f64,
        points: usize,
        parameters: usize,
    }
    let families = [VirialForm::Linear, VirialForm::Sqrt, VirialForm::Quadratic].map(|family| {
        let mut f = Family {
            form: family,
            forms: Vec::with_capacity(sets.len()),
            estimates: Vec::with_capacity(sets.len()),
            rss: 0.0,
            points: 0,
            parameters: 0,
        };
        for set in sets {
            if set.distinct_concentrations() < MIN_CONCENTRATIONS {
                f.forms.push(None);
                f.estimates.push(None);
                continue;
            }
            let (sd, kind) = noise.sds_for(set);
            let readings = readings_of(set, sd.as_deref(), kind);
            let n = set.len();
            let own = match family {
                VirialForm::Quadratic if n < VirialForm::Quadratic.parameters() + MIN_AUTO_DOF => None,
                form => score_form(form, &readings).ok(),
            };
            let score = own.or_else(|| score_form(VirialForm::Linear, &readings).ok());
            match score {
                Some(score) => {
                    f.rss += score.rss_reduced;
                    f.points += n;
                    f.parameters += score.form.parameters();
                    f.forms.push(Some(score.form));
                    f.estimates.push(Some((score.inverse_mn, score.a2)));
                }
                None => {
                    f.forms.push(None);
                    f.estimates.push(None);
                }
            }
        }
        f
    });
    let raw: Vec<Option<f64>> = families.iter().map(|f| aicc(f.rss, f.points, f.parameters)).collect();
    // An AICc that overflowed (absurd but accepted values) does not compete.
    let scored: Vec<(Option<f64>, &Family)> =
        raw.iter().zip(&families).map(|(a, f)| (a.filter(|a| a.is_finite()), f)).collect();
    let candidates = scored
        .iter()
        .zip(&raw)
        .map(|((a, f), r)| Candidate {
            form: f.form,
            aicc: *a,
            excluded: a.is_none().then(|| match r {
                None => "too few readings in the series for AICc".to_string(),
                Some(_) => "its AICc could not be computed (a value overflowed)".to_string(),
            }),
        })
        .collect();
    let value = |form: VirialForm| scored.iter().find(|(_, f)| f.form == form).and_then(|(a, _)| *a);
    let (linear, sqrt, quadratic) = (value(VirialForm::Linear), value(VirialForm::Sqrt), value(VirialForm::Quadratic));
    let best_two = match (linear, sqrt) {
        (Some(l), Some(s)) if s < l => Some((s, VirialForm::Sqrt)),
        (Some(l), _) => Some((l, VirialForm::Linear)),
        (None, Some(s)) => Some((s, VirialForm::Sqrt)),
        (None, None) => None,
    };
    let (family, reason) = match (best_two, quadratic) {
        (Some((s2, f2)), Some(sq)) if sq < s2 - QUADRATIC_AICC_MARGIN => (
            VirialForm::Quadratic,
            format!(
                "series AICc {sq:.1} beats the {} family's {s2:.1} by more than {QUADRATIC_AICC_MARGIN}",
                f2.name()
            ),
        ),
        (Some((s2, f2)), _) => (f2, format!("lowest series AICc ({s2:.1}) over all readings")),
        (None, _) => (VirialForm::Linear, "too few readings to compare forms; linear used".to_string()),
    };
    let best = scored.iter().filter_map(|(a, _)| *a).fold(f64::INFINITY, f64::min);
    let akaike: Vec<(f64, &Family)> =
        scored.iter().filter_map(|(a, f)| a.map(|a| ((-(a - best) / 2.0).exp(), *f))).collect();
    let total: f64 = akaike.iter().map(|(w, _)| w).sum();
    let chosen = families.iter().find(|f| f.form == family).expect("the chosen family was scored");
    let choice_variance = (0..sets.len())
        .map(|i| {
            let Some((m0, a0)) = chosen.estimates[i] else { return (0.0, 0.0) };
            akaike
                .iter()
                .filter_map(|(w, f)| f.estimates[i].map(|e| (w / total, e)))
                .fold((0.0, 0.0), |(vm, va), (w, (m, a))| (vm + w * (m - m0).powi(2), va + w * (a - a0).powi(2)))
        })
        .collect();
    let forms = chosen.forms.clone();
    let reason = match family {
        VirialForm::Sqrt => format!("{reason}: sqrt where A2 ≥ 0, linear at and below θ"),
        _ => reason,
    };
    SeriesChoice { forms, reason, candidates, choice_variance }
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
