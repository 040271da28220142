//! What is worth a second look in one temperature's fit: the warnings, their stable codes and
//! the words a person reads.

use super::*;

/// Something worth a second look in one temperature's fit.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
#[serde(tag = "code", rename_all = "snake_case")]
pub enum FitWarning {
    /// Fewer than four distinct concentrations.
    FewConcentrations {
        /// Distinct concentrations.
        n: usize,
    },
    /// A reading off its temperature's line by more than the series' pooled noise allows
    /// (see [`flag_outliers`]).
    Outlier {
        /// The point's concentration, g/mL.
        concentration_g_per_ml: f64,
        /// Its residual studentised by the other temperatures' pooled scatter.
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
    /// Readings below zero, small beside the others: baseline noise around a small pressure,
    /// kept in the fit (the square-root form cannot take them).
    BelowZero {
        /// How many readings are below zero.
        n: usize,
        /// The lowest, Pa.
        lowest_pa: f64,
        /// Its line in the input file.
        line: usize,
    },
    /// The fitted Π falls with c at the highest concentration (∂Π/∂c < 0, one-sided p below
    /// [`FALLING_PRESSURE_P`]): the solution is past its stability limit there.
    FallingPressure {
        /// Where the fitted ∂Π/∂c crosses zero, g/mL.
        from_concentration_g_per_ml: f64,
        /// Lines of the readings at or above it.
        lines: Vec<usize>,
    },
    /// Standard deviations were given for some readings only, so none were used.
    PartialWeights,
}

/// Which [`FitWarning`], without its values: the stable code reports carry.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum FitWarningCode {
    /// [`FitWarning::FewConcentrations`].
    FewConcentrations,
    /// [`FitWarning::Outlier`].
    Outlier,
    /// [`FitWarning::SeriesTruncation`].
    SeriesTruncation,
    /// [`FitWarning::LowMn`].
    LowMn,
    /// [`FitWarning::Curvature`].
    Curvature,
    /// [`FitWarning::FormFallback`].
    FormFallback,
    /// [`FitWarning::BelowZero`].
    BelowZero,
    /// [`FitWarning::FallingPressure`].
    FallingPressure,
    /// [`FitWarning::PartialWeights`].
    PartialWeights,
}

impl FitWarningCode {
    /// The code as reports and tables write it.
    pub fn name(self) -> &'static str {
        match self {
            FitWarningCode::FewConcentrations => "few_concentrations",
            FitWarningCode::Outlier => "outlier",
            FitWarningCode::SeriesTruncation => "series_truncation",
            FitWarningCode::LowMn => "low_mn",
            FitWarningCode::Curvature => "curvature",
            FitWarningCode::FormFallback => "form_fallback",
            FitWarningCode::BelowZero => "below_zero",
            FitWarningCode::FallingPressure => "falling_pressure",
            FitWarningCode::PartialWeights => "partial_weights",
        }
    }
}

impl FitWarning {
    /// Its code.
    pub fn code(&self) -> FitWarningCode {
        match self {
            FitWarning::FewConcentrations { .. } => FitWarningCode::FewConcentrations,
            FitWarning::Outlier { .. } => FitWarningCode::Outlier,
            FitWarning::SeriesTruncation { .. } => FitWarningCode::SeriesTruncation,
            FitWarning::LowMn { .. } => FitWarningCode::LowMn,
            FitWarning::Curvature { .. } => FitWarningCode::Curvature,
            FitWarning::FormFallback { .. } => FitWarningCode::FormFallback,
            FitWarning::BelowZero { .. } => FitWarningCode::BelowZero,
            FitWarning::FallingPressure { .. } => FitWarningCode::FallingPressure,
            FitWarning::PartialWeights => FitWarningCode::PartialWeights,
        }
    }
}

impl fmt::Display for FitWarning {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            FitWarning::FewConcentrations { n } => {
                write!(f, "only {n} concentrations: A2 rests on few points; measure at least 4")
            }
            FitWarning::Outlier { concentration_g_per_ml, studentized, line } => {
                write!(f, "the reading at line {line} (c = {concentration_g_per_ml:.4} g/mL) is {studentized:.1} times the series' noise off the line, more than chance allows among this many readings (about 1 clean series in 200 is flagged): check it (a leak, a bubble, a slip); if it is bad, write why in an 'exclude' column")
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
            FitWarning::FallingPressure { from_concentration_g_per_ml, lines } => {
                let shown: Vec<String> = lines.iter().take(5).map(usize::to_string).collect();
                let more = if lines.len() > 5 { format!(" and {} more", lines.len() - 5) } else { String::new() };
                write!(
                    f,
                    "Π stops rising with concentration above about {from_concentration_g_per_ml:.4} g/mL (lines {}{more}): the solution is past its stability limit there and may phase-separate or turn turbid; check those solutions for cloudiness, and dilute or exclude them",
                    shown.join(", ")
                )
            }
            FitWarning::BelowZero { n, lowest_pa, line } => write!(
                f,
                "{n} reading(s) below zero (lowest {lowest_pa:.3} Pa, line {line}): baseline noise around a small pressure, kept in the fit; the square-root form cannot take them"
            ),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn each_warning_code_is_the_tag_its_warning_is_written_with() {
        let every = [
            FitWarning::FewConcentrations { n: 3 },
            FitWarning::Outlier { concentration_g_per_ml: 0.01, studentized: 4.0, line: 9 },
            FitWarning::SeriesTruncation { gamma2_c_max: 1.2 },
            FitWarning::LowMn { mn_g_per_mol: 1.0e4 },
            FitWarning::Curvature { a3_t: 3.0 },
            FitWarning::FormFallback { requested: VirialForm::Sqrt, reason: "r".into() },
            FitWarning::BelowZero { n: 1, lowest_pa: -0.1, line: 4 },
            FitWarning::FallingPressure { from_concentration_g_per_ml: 0.01, lines: vec![5] },
            FitWarning::PartialWeights,
        ];
        for w in &every {
            let tag = serde_json::to_value(w).unwrap()["code"].clone();
            assert_eq!(tag, w.code().name());
            assert_eq!(serde_json::to_value(w.code()).unwrap(), tag);
        }
    }
}
