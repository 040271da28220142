//! What the θ analysis returns: the headline θ with its interval and how it was found,
//! every model's θ, and the settings.

use super::*;

/// Settings of the θ analysis.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ThetaSettings {
    /// Confidence level of intervals, e.g. 0.95.
    pub confidence: f64,
    /// Bootstrap replicates (0 = off, the default: an opt-in cross-check, not calibrated).
    pub bootstrap_replicates: usize,
    /// Seed of the bootstrap.
    pub seed: u64,
    /// |A2| tolerance for the temperature-stability advice, mol m³/kg² (= mol mL/g²).
    pub a2_tolerance: f64,
    /// Per-temperature form choice (the bootstrap reruns it).
    pub virial: FormChoice,
}

/// Default |A2| tolerance: 1×10⁻⁵ mol mL/g², a few per cent of a good solvent's A2.
pub const DEFAULT_A2_TOLERANCE: f64 = 1.0e-5;

impl Default for ThetaSettings {
    fn default() -> Self {
        ThetaSettings {
            confidence: 0.95,
            bootstrap_replicates: 0,
            seed: 1,
            a2_tolerance: DEFAULT_A2_TOLERANCE,
            virial: FormChoice::Auto,
        }
    }
}

/// Where the crossing lies relative to the measurements.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Crossing {
    /// Inside the measured temperatures.
    Bracketed,
    /// Outside them.
    Extrapolated,
    /// No θ.
    None,
}

impl Crossing {
    /// The name reports use.
    pub fn name(self) -> &'static str {
        match self {
            Crossing::Bracketed => "bracketed",
            Crossing::Extrapolated => "extrapolated",
            Crossing::None => "none",
        }
    }
}

/// Which way solvent quality runs with temperature.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Sense {
    /// A2 rises with T (ψ1 > 0): poor below θ, phase separation on cooling.
    Ucst,
    /// A2 falls as T rises (ψ1 < 0): poor above θ, phase separation on heating.
    Lcst,
}

impl Sense {
    /// The name reports use.
    pub fn name(self) -> &'static str {
        match self {
            Sense::Ucst => "ucst",
            Sense::Lcst => "lcst",
        }
    }

    /// The usual abbreviation: UCST or LCST.
    pub fn label(self) -> &'static str {
        match self {
            Sense::Ucst => "UCST",
            Sense::Lcst => "LCST",
        }
    }
}

/// Shape of the headline interval.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum IntervalKind {
    /// Finite low and high.
    Bounded,
    /// At least one side infinite.
    Unbounded,
    /// Everything outside an interval.
    Exclusive,
    /// No interval (no θ).
    None,
}

impl IntervalKind {
    /// The name reports use.
    pub fn name(self) -> &'static str {
        match self {
            IntervalKind::Bounded => "bounded",
            IntervalKind::Unbounded => "unbounded",
            IntervalKind::Exclusive => "exclusive",
            IntervalKind::None => "none",
        }
    }
}

/// An interval for θ, K.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, serde::Deserialize)]
pub struct Interval {
    /// Shape.
    pub kind: IntervalKind,
    /// Lower bound, K (null where unbounded or not given).
    pub low_k: Option<f64>,
    /// Upper bound, K.
    pub high_k: Option<f64>,
}

impl From<ThetaSet> for Interval {
    fn from(set: ThetaSet) -> Self {
        match set {
            ThetaSet::Interval(lo, hi) => Interval { kind: IntervalKind::Bounded, low_k: Some(lo), high_k: Some(hi) },
            ThetaSet::AtLeast(lo) => Interval { kind: IntervalKind::Unbounded, low_k: Some(lo), high_k: None },
            ThetaSet::Exclusive => Interval { kind: IntervalKind::Exclusive, low_k: None, high_k: None },
            ThetaSet::Unbounded | ThetaSet::Empty => {
                Interval { kind: IntervalKind::Unbounded, low_k: None, high_k: None }
            }
        }
    }
}

/// An across-temperature model that gives a θ.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Model {
    /// The Flory–Krigbaum line A2 = a + b/T (the headline model).
    FloryKrigbaum,
    /// A2 quadratic in 1/T.
    Curved,
    /// The crossing between the two temperatures that bracket it.
    Local,
    /// Every reading at once (Mn shared, A2 on the Flory–Krigbaum line).
    Joint,
}

impl Model {
    /// The name reports use.
    pub fn name(self) -> &'static str {
        match self {
            Model::FloryKrigbaum => "flory_krigbaum",
            Model::Curved => "curved",
            Model::Local => "local",
            Model::Joint => "joint",
        }
    }
}

impl Model {
    /// The model's name for people (terminal, figures, HTML).
    pub fn label(self) -> &'static str {
        match self {
            Model::FloryKrigbaum => "Flory–Krigbaum line",
            Model::Curved => "curved in 1/T",
            Model::Local => "local (bracketing temperatures)",
            Model::Joint => "joint fit of every reading",
        }
    }
}

impl std::fmt::Display for Model {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.pad(self.label())
    }
}

/// How the headline interval of θ was computed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum IntervalMethod {
    /// Fieller's set for the zero of the line.
    Fieller,
    /// Delta method through the curved model's root.
    DeltaCurved,
    /// No interval.
    None,
}

impl IntervalMethod {
    /// The name reports use.
    pub fn name(self) -> &'static str {
        match self {
            IntervalMethod::Fieller => "fieller",
            IntervalMethod::DeltaCurved => "delta_curved",
            IntervalMethod::None => "none",
        }
    }
}

impl IntervalMethod {
    /// The method's name for people (terminal, figures, HTML).
    pub fn label(self) -> &'static str {
        match self {
            IntervalMethod::Fieller => "Fieller interval",
            IntervalMethod::DeltaCurved => "delta method, curved model",
            IntervalMethod::None => "none",
        }
    }
}

impl std::fmt::Display for IntervalMethod {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.pad(self.label())
    }
}

/// θ from one model.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct ModelTheta {
    /// The model.
    pub name: Model,
    /// θ, K (null where the model gives none).
    pub theta_k: Option<f64>,
    /// SE, K.
    pub se_k: Option<f64>,
    /// Why null, or what to know.
    pub note: Option<String>,
}

/// One place where A2 (or 1/2 − χ) changes sign between measured temperatures, for series
/// whose A2(T) is not monotonic and so has two θ.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, serde::Deserialize)]
pub struct SignChange {
    /// θ, K: the zero of the straight line in 1/T through the two bracketing temperatures.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub theta_k: f64,
    /// Its SE by the delta method, K (null without per-temperature SEs).
    pub se_k: Option<f64>,
    /// Fieller's interval of that two-point line.
    pub interval: Interval,
    /// UCST-type where A2 rises through zero with T, LCST-type where it falls.
    pub sense: Sense,
}

/// Bootstrap summary.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct BootstrapSummary {
    /// Replicates asked for.
    pub replicates: usize,
    /// Replicates that gave a θ.
    pub successful: usize,
    /// Seed.
    pub seed: u64,
    /// Percentile interval, K.
    pub ci_low_k: Option<f64>,
    /// Percentile interval, K.
    pub ci_high_k: Option<f64>,
    /// SD of the replicate θ values, K.
    pub se_k: Option<f64>,
}

/// The Flory–Krigbaum / Flory–Huggins parameters.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct FloryParameters {
    /// ψ1 (entropy of dilution parameter) and its SE.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub psi1: f64,
    /// SE of ψ1.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub psi1_se: f64,
    /// κ1 at θ (= ψ1).
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub kappa1_at_theta: f64,
    /// Per measured temperature.
    pub temperatures: Vec<FloryAtTemperature>,
}

/// Flory parameters at one temperature.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct FloryAtTemperature {
    /// T, K.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub temperature_k: f64,
    /// κ1(T) = ψ1 θ/T and its SE.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub kappa1: f64,
    /// SE.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub kappa1_se: f64,
    /// χ(T) = 1/2 − ψ1(1 − θ/T) from the model, and its SE.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub chi_model: f64,
    /// SE.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub chi_model_se: f64,
    /// χ = 1/2 − A2 V1/v̄² from this temperature's own A2 (or the χ given), and its SE.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub chi_measured: f64,
    /// SE (null when the input gave none).
    pub chi_measured_se: Option<f64>,
}

/// How A2 changes near θ.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct Stability {
    /// dA2/dT at θ, mol m³/kg² per K.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub da2_dt_at_theta: f64,
    /// SE.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub da2_dt_se: f64,
    /// |A2| tolerance used.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub a2_tolerance: f64,
    /// ± kelvin around θ that keeps |A2| under the tolerance.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub plus_minus_k: f64,
}

/// Everything the θ analysis of one series found.
#[derive(Debug, Clone, PartialEq)]
pub struct ThetaResult {
    /// Headline θ, K.
    pub theta_k: Option<f64>,
    /// Its SE (delta method of the headline model), K.
    pub se_k: Option<f64>,
    /// The headline interval.
    pub interval: Interval,
    /// How the headline interval was computed.
    pub ci_method: IntervalMethod,
    /// Why that method.
    pub ci_reason: String,
    /// Confidence level.
    pub confidence: f64,
    /// Where the crossing lies.
    pub crossing: Crossing,
    /// For an extrapolated θ: kelvin beyond the nearest measured temperature.
    pub extrapolated_by_k: Option<f64>,
    /// Why there is no θ, when there is none.
    pub reason: Option<String>,
    /// Headline model.
    pub model: Model,
    /// UCST or LCST type.
    pub sense: Option<Sense>,
    /// Every model's θ.
    pub models: Vec<ModelTheta>,
    /// Fieller interval of the Flory–Krigbaum line.
    pub fieller: Interval,
    /// Critical t of the Fieller interval.
    pub fieller_t: f64,
    /// Degrees of freedom of the line (None: normal quantile).
    pub line_dof: Option<usize>,
    /// Bootstrap, when run.
    pub bootstrap: Option<BootstrapSummary>,
    /// Joint fit, when it ran.
    pub joint: Option<JointFit>,
    /// Mn across temperatures.
    pub mn_consistency: Option<MnConsistency>,
    /// Flory parameters, when v̄ and V1 (or χ) are known.
    pub flory: Option<FloryParameters>,
    /// Temperature stability near θ.
    pub stability: Option<Stability>,
    /// The fitted line (for figures and planning).
    pub line: Option<InverseTemperatureLine>,
    /// The curved fit, when it was tried.
    pub curved: Option<CurvedFit>,
    /// The points the across-temperature models were fitted to (SEs as weighted).
    pub points: Vec<TemperaturePoint>,
    /// Warnings.
    pub warnings: Vec<String>,
    /// The interval is at the limit of what the design can support (a warning says why).
    pub design_limited: bool,
    /// Every sign change between measured temperatures when there are two or more (A2 rises,
    /// passes a maximum and falls again: an upper and a lower θ); empty otherwise.
    pub sign_changes: Vec<SignChange>,
}

impl ThetaResult {
    /// Whether the headline interval holds `theta_k`.
    pub fn interval_contains(&self, theta_k: f64) -> bool {
        match (self.interval.kind, self.interval.low_k, self.interval.high_k) {
            (IntervalKind::None, _, _) => false,
            (_, Some(lo), Some(hi)) => lo <= theta_k && theta_k <= hi,
            (_, Some(lo), None) => lo <= theta_k,
            (_, None, Some(hi)) => theta_k <= hi,
            (_, None, None) => true,
        }
    }

    pub(super) fn without(reason: String, confidence: f64) -> Self {
        let none = Interval { kind: IntervalKind::None, low_k: None, high_k: None };
        ThetaResult {
            theta_k: None,
            se_k: None,
            interval: none,
            ci_method: IntervalMethod::None,
            ci_reason: reason.clone(),
            confidence,
            crossing: Crossing::None,
            extrapolated_by_k: None,
            reason: Some(reason),
            model: Model::FloryKrigbaum,
            sense: None,
            models: Vec::new(),
            fieller: none,
            fieller_t: f64::NAN,
            line_dof: None,
            bootstrap: None,
            joint: None,
            mn_consistency: None,
            flory: None,
            stability: None,
            line: None,
            curved: None,
            points: Vec::new(),
            warnings: Vec::new(),
            design_limited: false,
            sign_changes: Vec::new(),
        }
    }
}
