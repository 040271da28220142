//! Static light scattering per temperature (Debye/Zimm): K c/R = 1/Mw (1 + q² Rg²/3) + 2 A2 c
//! (+ 3 A3 c² when asked) (Zimm 1948, J. Chem. Phys. 16, 1093) — note the factors 2 and 3
//! against the osmotic form Π/(cRT) = 1/Mn + A2 c + A3 c². With several angles the data are extrapolated twice: per
//! concentration to q → 0 (the zero-angle values, fitted in c for Mw and A2) and per angle to
//! c → 0 (fitted in q² for Rg, the z-average radius of gyration). SI units: c in kg/m³, K c/R in
//! mol/kg, q in 1/m, Mw in kg/mol, A2 in mol m³/kg², Rg in m.

use crate::dataset::ScatteringRow;
use crate::dataset::TemperaturePoint;
use crate::numerics::linear::{self, Weights};
use serde::Serialize;

/// One temperature's light-scattering result.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct ScatteringFit {
    /// T, K.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub temperature_k: f64,
    /// Readings.
    pub n_points: usize,
    /// Weight-average molar mass Mw, g/mol.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub mw_g_per_mol: f64,
    /// SE of Mw, g/mol.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub mw_se_g_per_mol: f64,
    /// A2 (light-scattering average), mol mL/g².
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub a2_mol_ml_per_g2: f64,
    /// SE of A2.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub a2_se_mol_ml_per_g2: f64,
    /// A3 (light-scattering average), mol mL²/g³, when the zero-angle fit was quadratic in c.
    pub a3_mol_ml2_per_g3: Option<f64>,
    /// SE of A3, mol mL²/g³.
    pub a3_se_mol_ml2_per_g3: Option<f64>,
    /// z-average radius of gyration, nm (with angles).
    pub rg_nm: Option<f64>,
    /// SE of Rg, nm.
    pub rg_se_nm: Option<f64>,
    /// α_s = Rg(T)/Rg(θ), with Rg(θ) interpolated at the estimated θ.
    pub expansion_factor: Option<f64>,
    /// The readings and both extrapolations, for the Zimm plot.
    pub zimm: ZimmGrid,
}

/// What a Zimm plot of one temperature draws: every reading, the zero-angle values per
/// concentration and, with angles, the zero-concentration values per angle with their line
/// 1/Mw (1 + q² Rg²/3). Report units: c in g/mL, q² in 1/µm², K c/R in mol/g.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct ZimmGrid {
    /// Every reading.
    pub readings: Vec<ZimmReading>,
    /// K c/R extrapolated to q = 0 at each concentration (the readings themselves without angles).
    pub zero_angle: Vec<ZimmReading>,
    /// K c/R extrapolated to c = 0 at each angle (empty without angles).
    pub zero_concentration: Vec<ZimmReading>,
    /// Intercept of the zero-concentration line in q², 1/Mw, mol/g (null without angles).
    pub zero_concentration_intercept_mol_per_g: Option<f64>,
    /// Slope of the zero-concentration line in q², mol µm²/g (null without angles).
    pub zero_concentration_slope_mol_um2_per_g: Option<f64>,
}

/// One point of a Zimm plot.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, serde::Deserialize)]
pub struct ZimmReading {
    /// c, g/mL.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub concentration_g_per_ml: f64,
    /// q², 1/µm².
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub q2_per_um2: f64,
    /// K c/R, mol/g.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub kc_over_r_mol_per_g: f64,
}

/// SI (c kg/m³, q² 1/m², K c/R mol/kg) to a Zimm point in report units.
fn zimm_point(c: f64, q2: f64, y: f64) -> ZimmReading {
    ZimmReading { concentration_g_per_ml: c * 1e-3, q2_per_um2: q2 * 1e-12, kc_over_r_mol_per_g: y * 1e-3 }
}

fn distinct(values: impl Iterator<Item = f64>) -> Vec<f64> {
    let mut v: Vec<f64> = values.collect();
    v.sort_by(f64::total_cmp);
    v.dedup_by(|a, b| (*a - *b).abs() <= 1e-9 * b.abs().max(1e-30));
    v
}

/// Straight-line intercept, slope and their covariance of y against x.
fn line(x: &[f64], y: &[f64]) -> Option<(f64, f64, f64, f64, f64)> {
    let f = linear::fit(&linear::polynomial_design(x, 1), 2, y, None, Weights::Relative).ok()?;
    Some((f.coefficients[0], f.coefficients[1], f.cov(0, 0), f.cov(1, 1), f.cov(0, 1)))
}

/// The zero-angle values against c: K c/R0 = 1/Mw + 2 A2 c, or with `quadratic` (at least four
/// concentrations) + 3 A3 c². Returns (1/Mw, 2 A2, Var 1/Mw, Var 2 A2, (3 A3, Var 3 A3)).
type ZeroAngleLine = (f64, f64, f64, f64, Option<(f64, f64)>);

fn zero_angle_fit(c: &[f64], y: &[f64], quadratic: bool) -> Option<ZeroAngleLine> {
    if !quadratic {
        return line(c, y).map(|(a, b, va, vb, _)| (a, b, va, vb, None));
    }
    let f = linear::fit(&linear::polynomial_design(c, 2), 3, y, None, Weights::Relative).ok()?;
    Some((f.coefficients[0], f.coefficients[1], f.cov(0, 0), f.cov(1, 1), Some((f.coefficients[2], f.cov(2, 2)))))
}

/// Fits one temperature's readings; `None` with fewer than 3 concentrations (4 for `quadratic`).
pub fn fit_temperature(rows: &[&ScatteringRow], quadratic: bool) -> Option<ScatteringFit> {
    let temperature_k = rows.iter().map(|r| r.temperature_k).sum::<f64>() / rows.len() as f64;
    let q2 = |r: &ScatteringRow| r.q.map_or(0.0, |q| q * q);
    let angles = distinct(rows.iter().map(|r| q2(r)));
    let concentrations = distinct(rows.iter().map(|r| r.concentration));
    let same = |a: f64, b: f64| (a - b).abs() <= 1e-9 * b.abs().max(1e-30);
    // Zero-angle values per concentration.
    let (c0, y0): (Vec<f64>, Vec<f64>) = if angles.len() >= 2 {
        concentrations
            .iter()
            .filter_map(|&c| {
                let at: Vec<&&ScatteringRow> = rows.iter().filter(|r| same(r.concentration, c)).collect();
                let x: Vec<f64> = at.iter().map(|r| q2(r)).collect();
                let y: Vec<f64> = at.iter().map(|r| r.kc_over_r).collect();
                (distinct(x.iter().copied()).len() >= 2).then(|| line(&x, &y)).flatten().map(|l| (c, l.0))
            })
            .unzip()
    } else {
        rows.iter().map(|r| (r.concentration, r.kc_over_r)).unzip()
    };
    if distinct(c0.iter().copied()).len() < if quadratic { 4 } else { 3 } {
        return None;
    }
    let (a, b, va, vb, curvature) = zero_angle_fit(&c0, &y0, quadratic)?;
    if a.is_nan() || a <= 0.0 {
        return None;
    }
    let readings = rows.iter().map(|r| zimm_point(r.concentration, q2(r), r.kc_over_r)).collect();
    let zero_angle = c0.iter().zip(&y0).map(|(c, y)| zimm_point(*c, 0.0, *y)).collect();
    let mut zero_concentration = Vec::new();
    let mut zero_concentration_line = None;
    // Zero-concentration values per angle, then Rg² = 3 (slope/intercept) in q².
    let (rg, rg_se) = if angles.len() >= 2 {
        let (qq, yc): (Vec<f64>, Vec<f64>) = angles
            .iter()
            .filter_map(|&q| {
                let at: Vec<&&ScatteringRow> = rows.iter().filter(|r| same(q2(r), q)).collect();
                let x: Vec<f64> = at.iter().map(|r| r.concentration).collect();
                let y: Vec<f64> = at.iter().map(|r| r.kc_over_r).collect();
                (distinct(x.iter().copied()).len() >= 2).then(|| line(&x, &y)).flatten().map(|l| (q, l.0))
            })
            .unzip();
        zero_concentration = qq.iter().zip(&yc).map(|(q, y)| zimm_point(0.0, *q, *y)).collect();
        let fitted = (qq.len() >= 3).then(|| line(&qq, &yc)).flatten();
        // mol/kg per 1/m² → mol/g per 1/µm²: 10⁻³ × 10¹².
        zero_concentration_line = fitted.map(|l| (l.0 * 1e-3, l.1 * 1e9));
        match fitted {
            Some((i, s, vi, vs, cis)) if i > 0.0 && s > 0.0 => {
                let rg2 = 3.0 * s / i;
                // Var(s/i) by the delta method.
                let var_ratio = vs / (i * i) + s * s * vi / i.powi(4) - 2.0 * s * cis / i.powi(3);
                let rg = rg2.sqrt();
                (Some(rg), Some(3.0 * var_ratio.max(0.0).sqrt() / (2.0 * rg)))
            }
            _ => (None, None),
        }
    } else {
        (None, None)
    };
    Some(ScatteringFit {
        temperature_k,
        n_points: rows.len(),
        mw_g_per_mol: 1e3 / a,
        mw_se_g_per_mol: 1e3 * va.sqrt() / (a * a),
        // Kc/R = 1/Mw + 2 A2 c: the slope is twice A2.
        a2_mol_ml_per_g2: b / 2.0,
        a2_se_mol_ml_per_g2: vb.sqrt() / 2.0,
        // … + 3 A3 c²: a third of the c² coefficient.
        a3_mol_ml2_per_g3: curvature.map(|(k, _)| k / 3.0 * crate::units::A3_MOL_ML2_PER_G3_PER_SI),
        a3_se_mol_ml2_per_g3: curvature.map(|(_, v)| v.sqrt() / 3.0 * crate::units::A3_MOL_ML2_PER_G3_PER_SI),
        rg_nm: rg.map(|r| r * 1e9),
        rg_se_nm: rg_se.map(|r| r * 1e9),
        expansion_factor: None,
        zimm: ZimmGrid {
            readings,
            zero_angle,
            zero_concentration,
            zero_concentration_intercept_mol_per_g: zero_concentration_line.map(|l| l.0),
            zero_concentration_slope_mol_um2_per_g: zero_concentration_line.map(|l| l.1),
        },
    })
}

/// Fits every temperature of one series (temperatures grouped to 0.01 K, ascending).
pub fn fit_series(rows: &[&ScatteringRow], quadratic: bool) -> Vec<ScatteringFit> {
    let mut keys: Vec<i64> = rows.iter().map(|r| (r.temperature_k / 0.01).round() as i64).collect();
    keys.sort_unstable();
    keys.dedup();
    keys.iter()
        .filter_map(|&k| {
            let at: Vec<&ScatteringRow> =
                rows.iter().copied().filter(|r| (r.temperature_k / 0.01).round() as i64 == k).collect();
            fit_temperature(&at, quadratic)
        })
        .collect()
}

/// A2 points for the θ machinery.
pub fn points(fits: &[ScatteringFit]) -> Vec<TemperaturePoint> {
    fits.iter()
        .map(|f| TemperaturePoint {
            temperature_k: f.temperature_k,
            value: f.a2_mol_ml_per_g2,
            se: Some(f.a2_se_mol_ml_per_g2),
        })
        .collect()
}

/// Sets α_s(T) = Rg(T)/Rg(θ), Rg(θ) linearly interpolated between the temperatures around θ.
pub fn set_expansion(fits: &mut [ScatteringFit], theta_k: f64) {
    let with_rg: Vec<(f64, f64)> = fits.iter().filter_map(|f| f.rg_nm.map(|r| (f.temperature_k, r))).collect();
    let rg_theta = with_rg.windows(2).find(|w| w[0].0 <= theta_k && theta_k <= w[1].0).map(|w| {
        let f = (theta_k - w[0].0) / (w[1].0 - w[0].0);
        w[0].1 + f * (w[1].1 - w[0].1)
    });
    if let Some(r0) = rg_theta {
        for f in fits.iter_mut() {
            f.expansion_factor = f.rg_nm.map(|r| r / r0);
        }
    }
}

/// ⟨r²⟩0/M = 6 Rg²(θ)/Mw (SI, m² mol/kg) from the temperatures with angles that bracket θ:
/// Rg² interpolated linearly in T, Mw the inverse-variance mean over every temperature. The SE
/// propagates both Rg SEs (the interpolation weights) and the Mw SE. Rg is a z-average and Mw a
/// weight average: for a polydisperse sample the ratio overstates ⟨r²⟩0/M (the words say so).
pub fn unperturbed_dimensions(
    fits: &[ScatteringFit],
    theta_k: f64,
    repeat_unit: Option<&crate::chain_dimensions::RepeatUnit>,
) -> Option<crate::chain_dimensions::UnperturbedDimensions> {
    let with_rg: Vec<(f64, f64, f64)> =
        fits.iter().filter_map(|f| Some((f.temperature_k, f.rg_nm? * 1e-9, f.rg_se_nm? * 1e-9))).collect();
    let w = with_rg.windows(2).find(|w| w[0].0 <= theta_k && theta_k <= w[1].0)?;
    let f = (theta_k - w[0].0) / (w[1].0 - w[0].0);
    let (r0, r1) = (w[0].1, w[1].1);
    let rg2 = (1.0 - f) * r0 * r0 + f * r1 * r1;
    // SE of Rg² from each Rg: d(Rg²) = 2 Rg dRg, weighted by the interpolation.
    let rg2_se = ((1.0 - f) * 2.0 * r0 * w[0].2).hypot(f * 2.0 * r1 * w[1].2);
    let mws: Vec<(f64, f64)> = fits
        .iter()
        .filter(|f| f.mw_g_per_mol.is_finite() && f.mw_se_g_per_mol > 0.0)
        .map(|f| (f.mw_g_per_mol * 1e-3, f.mw_se_g_per_mol * 1e-3))
        .collect();
    if mws.is_empty() {
        return None;
    }
    let w_sum: f64 = mws.iter().map(|(_, s)| 1.0 / (s * s)).sum();
    let mw = mws.iter().map(|(m, s)| m / (s * s)).sum::<f64>() / w_sum;
    let mw_se = w_sum.sqrt().recip();
    let rg = rg2.sqrt();
    let (value, se) = crate::chain_dimensions::r2_over_m_from_radius(rg, rg2_se / (2.0 * rg), mw, mw_se);
    Some(crate::chain_dimensions::UnperturbedDimensions::new(
        (value, Some(se)),
        crate::dataset::Route::LightScattering,
        format!(
            "6 Rg²/Mw at θ ({:.2} °C), Rg² interpolated between {:.2} and {:.2} °C (z-average Rg over weight-average Mw: high for a broad sample)",
            crate::units::kelvin_to_celsius(theta_k),
            crate::units::kelvin_to_celsius(w[0].0),
            crate::units::kelvin_to_celsius(w[1].0)
        ),
        theta_k,
        None,
        repeat_unit,
    ))
}
