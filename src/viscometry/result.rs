//! The viscometry route's report block, in report units: [η] in mL/g, M in g/mol, Kθ in
//! mL mol^{1/2} g^{-3/2}, ⟨r²⟩0/M in nm² mol/g, temperatures in K and °C.

use super::*;
use crate::theta::{Interval, LineVariance};
use serde::{Deserialize, Serialize};

/// Everything the viscometry route computed for one series.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ViscometryResult {
    /// Each fraction with its molar mass and where it came from.
    pub fractions: Vec<FractionReport>,
    /// [η] of each fraction at each temperature.
    pub dilutions: Vec<DilutionReport>,
    /// The lines across fractions at each temperature.
    pub temperatures: Vec<ViscometryTemperature>,
    /// Where the Mark–Houwink exponent is ½ (null with fewer than two temperatures).
    pub viscometric_theta: Option<ViscometricTheta>,
    /// Kθ = [η]/M^{1/2} directly at θ, interpolated between the temperatures that bracket it
    /// (null when none do).
    pub k_theta_at_theta: Option<KThetaAtTheta>,
    /// d ln⟨r²⟩0/dT from the Stockmayer–Fixman Kθ(T), 1/K (three or more temperatures).
    pub r2_temperature_coefficient_per_k: Option<f64>,
    /// Its SE, 1/K.
    pub r2_temperature_coefficient_se_per_k: Option<f64>,
    /// Flory–Fox constant Φ0 used, mol⁻¹.
    pub flory_fox_constant_per_mol: f64,
    /// What limits the results.
    pub warnings: Vec<String>,
}

/// One fraction.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FractionReport {
    /// Its name (or its molar mass, when the file names none).
    pub name: String,
    /// Molar mass, g/mol (null when none is known).
    pub molar_mass_g_per_mol: Option<f64>,
    /// `molar mass column`, `osmotic Mn of series '…'` or `light-scattering Mw of series '…'`.
    pub molar_mass_source: String,
}

/// [η] of one fraction at one temperature.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DilutionReport {
    /// Fraction.
    pub fraction: String,
    /// T, K.
    pub temperature_k: f64,
    /// T, °C.
    pub temperature_c: f64,
    /// `huggins_kraemer`, `solomon_ciuta` or `given`.
    pub method: DilutionMethod,
    /// Readings used.
    pub n_readings: usize,
    /// [η], mL/g.
    pub intrinsic_viscosity_ml_per_g: f64,
    /// SE of [η], mL/g.
    pub intrinsic_viscosity_se_ml_per_g: Option<f64>,
    /// Degrees of freedom behind the SE (null: given SDs, taken as known).
    pub se_dof: Option<usize>,
    /// Huggins constant kH.
    pub huggins_constant: Option<f64>,
    /// SE of kH.
    pub huggins_constant_se: Option<f64>,
    /// Kraemer constant kK (ln ηrel/c = [η] + kK [η]² c; about kH − ½).
    pub kraemer_constant: Option<f64>,
    /// SE of kK.
    pub kraemer_constant_se: Option<f64>,
    /// kH − kK (½ in dilute solution).
    pub huggins_minus_kraemer: Option<f64>,
    /// Its SE.
    pub huggins_minus_kraemer_se: Option<f64>,
    /// ηrel at the highest concentration.
    pub highest_relative_viscosity: Option<f64>,
    /// Viscosity expansion factor α_η = ([η]/(Kθ M^{1/2}))^{1/3}.
    pub viscosity_expansion_factor: Option<f64>,
    /// Diagnostics.
    pub warnings: Vec<DilutionWarning>,
    /// Each reading, for the Huggins and Kraemer figure.
    pub points: Vec<DilutionPoint>,
}

/// One reading of a dilution series.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct DilutionPoint {
    /// c, g/mL.
    pub concentration_g_per_ml: f64,
    /// ηrel.
    pub relative_viscosity: f64,
    /// ηsp/c (Huggins ordinate), mL/g.
    pub reduced_viscosity_ml_per_g: f64,
    /// ln ηrel/c (Kraemer ordinate), mL/g.
    pub inherent_viscosity_ml_per_g: f64,
}

/// The lines across fractions at one temperature.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ViscometryTemperature {
    /// T, K.
    pub temperature_k: f64,
    /// T, °C.
    pub temperature_c: f64,
    /// Fractions with [η] and a molar mass.
    pub n_fractions: usize,
    /// Mark–Houwink–Sakurada exponent a ([η] = K M^a).
    pub mark_houwink_exponent: Option<f64>,
    /// SE of a.
    pub mark_houwink_exponent_se: Option<f64>,
    /// K for [η] in mL/g and M in g/mol.
    pub mark_houwink_k_ml_per_g: Option<f64>,
    /// SE of K (from the SE of ln K), mL/g.
    pub mark_houwink_k_se_ml_per_g: Option<f64>,
    /// Degrees of freedom of the Mark–Houwink quantile (null: normal).
    pub mark_houwink_dof: Option<usize>,
    /// How the Mark–Houwink covariance was obtained.
    pub mark_houwink_variance: Option<LineVariance>,
    /// Σ w e²/(n − 2) of the Mark–Houwink line on the [η] SEs (≈ 1 when they are right).
    pub mark_houwink_reduced_chi2: Option<f64>,
    /// Stockmayer–Fixman intercept Kθ, mL mol^{1/2} g^{-3/2}.
    pub k_theta_ml_mol_half_per_g_three_halves: Option<f64>,
    /// Its SE.
    pub k_theta_se_ml_mol_half_per_g_three_halves: Option<f64>,
    /// Stockmayer–Fixman slope (0.51 Φ0 B), mL mol/g².
    pub stockmayer_fixman_slope_ml_mol_per_g2: Option<f64>,
    /// ⟨r²⟩0/M from this temperature's Kθ, nm² mol/g.
    pub unperturbed_r2_over_m_nm2_mol_per_g: Option<f64>,
}

/// The viscometric θ: where a(T) = ½. An approximate criterion: a reaches ½ near θ, not
/// exactly at it, and it is known to sit a few kelvin from the osmotic θ.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ViscometricTheta {
    /// θ, K.
    pub theta_k: f64,
    /// θ, °C.
    pub theta_c: f64,
    /// Delta-method SE, K.
    pub se_k: Option<f64>,
    /// Fieller's interval of the line a − ½ = a' + b'/T.
    pub interval: Interval,
    /// Its confidence level.
    pub confidence: f64,
    /// Inside or outside the measured temperatures.
    pub crossing: Crossing,
    /// Temperatures behind it.
    pub n_temperatures: usize,
    /// a' of a − ½ = a' + b'/T.
    pub exponent_line_a: f64,
    /// b', K.
    pub exponent_line_b_k: f64,
    /// Σ w e²/(n − 2) of that line on the SEs of a (≈ 1 when they are right).
    pub exponent_line_reduced_chi2: Option<f64>,
    /// In words: what this θ is and is not.
    pub note: String,
}

/// Kθ at θ, read directly.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct KThetaAtTheta {
    /// The θ it was read at, K.
    pub temperature_k: f64,
    /// Which θ: another route's (the thermodynamic θ of the pair) or the viscometric one.
    pub theta_from: String,
    /// Kθ = mean [η]/M^{1/2}, mL mol^{1/2} g^{-3/2}.
    pub k_theta_ml_mol_half_per_g_three_halves: f64,
    /// Its SE.
    pub k_theta_se_ml_mol_half_per_g_three_halves: Option<f64>,
    /// Fractions averaged.
    pub n_fractions: usize,
}

/// The note every viscometric θ carries.
pub const VISCOMETRIC_THETA_NOTE: &str = "approximate: the Mark–Houwink exponent passes ½ near θ, not exactly at it (its value also depends on the molar-mass range and on draining); read it beside the osmotic or light-scattering θ, not instead of it";

impl ViscometryResult {
    /// Report units from the route's SI results.
    pub(crate) fn assemble(a: Assembly<'_>) -> Self {
        let Assembly {
            fractions,
            temperatures,
            dilutions,
            per_temperature,
            theta,
            direct,
            k_theta,
            coefficient,
            settings,
            mut warnings,
        } = a;
        let fraction_reports = fractions
            .iter()
            .map(|f| FractionReport {
                name: f.name.clone(),
                molar_mass_g_per_mol: f.molar_mass.map(|m| m * 1e3),
                molar_mass_source: f.source.clone(),
            })
            .collect();
        let dilution_reports = dilutions
            .iter()
            .map(|(fi, ti, d)| {
                let m = fractions[*fi].molar_mass;
                let alpha = k_theta.zip(m).map(|(k, m)| (d.intrinsic / (k * m.sqrt())).cbrt());
                DilutionReport {
                    fraction: fractions[*fi].name.clone(),
                    temperature_k: temperatures[*ti],
                    temperature_c: kelvin_to_celsius(temperatures[*ti]),
                    method: d.method,
                    n_readings: d.readings.len().max(1),
                    intrinsic_viscosity_ml_per_g: ml_per_g(d.intrinsic),
                    intrinsic_viscosity_se_ml_per_g: d.se.map(ml_per_g),
                    se_dof: d.se_dof,
                    huggins_constant: d.huggins.map(|h| h.0),
                    huggins_constant_se: d.huggins.and_then(|h| h.1),
                    kraemer_constant: d.kraemer.map(|k| k.0),
                    kraemer_constant_se: d.kraemer.and_then(|k| k.1),
                    huggins_minus_kraemer: d.huggins_minus_kraemer.map(|k| k.0),
                    huggins_minus_kraemer_se: d.huggins_minus_kraemer.and_then(|k| k.1),
                    highest_relative_viscosity: d.readings.iter().max_by(|a, b| a.0.total_cmp(&b.0)).map(|r| r.1),
                    viscosity_expansion_factor: alpha,
                    warnings: d.warnings.clone(),
                    points: d
                        .readings
                        .iter()
                        .map(|&(c, r)| DilutionPoint {
                            concentration_g_per_ml: c * 1e-3,
                            relative_viscosity: r,
                            reduced_viscosity_ml_per_g: ml_per_g((r - 1.0) / c),
                            inherent_viscosity_ml_per_g: ml_per_g(r.ln() / c),
                        })
                        .collect(),
                }
            })
            .collect();
        let temperature_reports = per_temperature
            .iter()
            .map(|p| {
                let mh = p.mark_houwink.as_ref();
                // ln K at x = 0 (SI); K for mL/g and g/mol: 10^{3(1 − a)} K_SI.
                let ln_k = p.ln_k();
                let k_report = mh.zip(ln_k).map(|(l, (lnk, se))| {
                    let k = lnk.exp() * 10f64.powf(3.0 * (1.0 - l.beta));
                    (k, k * se)
                });
                let sf = p.k_theta();
                let sf_ok = sf.filter(|(k, _)| *k > 0.0);
                ViscometryTemperature {
                    temperature_k: p.temperature_k,
                    temperature_c: kelvin_to_celsius(p.temperature_k),
                    n_fractions: p.n_fractions,
                    mark_houwink_exponent: mh.map(|l| l.beta),
                    mark_houwink_exponent_se: mh.map(|l| l.slope_se()),
                    mark_houwink_k_ml_per_g: k_report.map(|k| k.0),
                    mark_houwink_k_se_ml_per_g: k_report.map(|k| k.1),
                    mark_houwink_dof: mh.and_then(|l| l.dof()),
                    mark_houwink_variance: mh.map(|l| l.variance()),
                    mark_houwink_reduced_chi2: mh.and_then(|l| l.scatter.reduced_chi2),
                    k_theta_ml_mol_half_per_g_three_halves: sf.map(|s| s.0 * K_THETA_REPORT_PER_SI),
                    k_theta_se_ml_mol_half_per_g_three_halves: sf
                        .filter(|_| p.stockmayer_fixman_se_known)
                        .map(|s| s.1 * K_THETA_REPORT_PER_SI),
                    // m³ mol/kg² (SI) = 10⁶ mL mol / 10⁶ g²: the same number in mL mol/g².
                    stockmayer_fixman_slope_ml_mol_per_g2: p.stockmayer_fixman.as_ref().map(|l| l.beta),
                    unperturbed_r2_over_m_nm2_mol_per_g: sf_ok.map(|s| r2_report(s.0, settings)),
                }
            })
            .collect();
        let viscometric_theta = theta.map(|t| ViscometricTheta {
            theta_k: t.theta_k,
            theta_c: kelvin_to_celsius(t.theta_k),
            se_k: t.se_k,
            interval: Interval::from(t.set),
            confidence: settings.confidence,
            crossing: t.crossing,
            n_temperatures: t.n_temperatures,
            exponent_line_a: t.line.a(),
            exponent_line_b_k: t.line.b(),
            exponent_line_reduced_chi2: t.line.reduced_chi2,
            note: VISCOMETRIC_THETA_NOTE.into(),
        });
        if let Some(t) = &viscometric_theta {
            if t.crossing == Crossing::Extrapolated {
                let limit = if t.n_temperatures <= 3 {
                    format!(" from only {} temperatures, its interval is at the design's limit (the coverage study holds it in 83–97 % of such series, less when a(T) scatters most); measure on both sides of θ", t.n_temperatures)
                } else {
                    String::new()
                };
                warnings.push(format!(
                    "the viscometric θ ({:.1} °C) lies outside the measured temperatures: extrapolated{limit}",
                    t.theta_c
                ));
            }
        }
        ViscometryResult {
            fractions: fraction_reports,
            dilutions: dilution_reports,
            temperatures: temperature_reports,
            viscometric_theta,
            k_theta_at_theta: direct.map(|d| KThetaAtTheta {
                temperature_k: d.temperature_k,
                theta_from: d.source.clone(),
                k_theta_ml_mol_half_per_g_three_halves: d.k_theta * K_THETA_REPORT_PER_SI,
                k_theta_se_ml_mol_half_per_g_three_halves: d.se.map(|s| s * K_THETA_REPORT_PER_SI),
                n_fractions: d.n_fractions,
            }),
            r2_temperature_coefficient_per_k: coefficient.map(|c| c.0),
            r2_temperature_coefficient_se_per_k: coefficient.map(|c| c.1),
            flory_fox_constant_per_mol: settings.flory_fox_per_mol,
            warnings,
        }
    }

    /// This series' viscometric θ for the routes' comparison.
    pub fn route_theta(&self) -> Option<crate::theta::RouteTheta> {
        let t = self.viscometric_theta.as_ref()?;
        Some(crate::theta::RouteTheta {
            route: Route::Viscometry,
            theta_k: t.theta_k,
            se_k: t.se_k?,
            ci_low_k: t.interval.low_k,
            ci_high_k: t.interval.high_k,
        })
    }
}
