//! θ of one polymer–solvent pair by several routes (osmometry, tables, light scattering,
//! critical temperatures): pairwise differences in combined SEs, the inverse-variance weighted
//! θ and the χ² test of one common θ.

use crate::dataset::Route;
use serde::Serialize;

/// Routes disagree below this p of the χ² test (common practice for a 1 % test).
pub const DISAGREE_P: f64 = 0.01;

/// One route's θ for a comparison.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct RouteTheta {
    /// `osmometry`, `a2_table`, `chi_table` or `critical_temperatures`.
    pub route: Route,
    /// θ, K.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub theta_k: f64,
    /// SE, K.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub se_k: f64,
    /// Interval, K.
    pub ci_low_k: Option<f64>,
    /// Interval, K.
    pub ci_high_k: Option<f64>,
}

/// Two routes' difference in units of their combined SE.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct RouteDifference {
    /// First route.
    pub a: Route,
    /// Second route.
    pub b: Route,
    /// θ_a − θ_b, K.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub difference_k: f64,
    /// (θ_a − θ_b)/√(SE_a² + SE_b²).
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub z: f64,
}

/// Every route of one series name, their differences and an inverse-variance combination.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct RouteComparison {
    /// Series name shared by the routes.
    pub series: String,
    /// Each route's θ.
    pub routes: Vec<RouteTheta>,
    /// Pairwise differences.
    pub differences: Vec<RouteDifference>,
    /// Inverse-variance weighted θ, K.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub combined_theta_k: f64,
    /// Its SE, K.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub combined_se_k: f64,
    /// χ² of one common θ, on routes − 1 degrees of freedom.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub chi2: f64,
    /// Its p-value.
    #[serde(deserialize_with = "crate::json_numbers::nan_if_null")]
    pub p_value: f64,
    /// p < 0.01: the routes disagree; the combined value should not be used as it is.
    pub disagree: bool,
    /// The routes the combined θ and the χ² test rest on (an approximate criterion, the
    /// viscometric θ, is compared but not combined while a thermodynamic route is there).
    #[serde(default)]
    pub combined_routes: Vec<Route>,
    /// What to keep in mind when reading the comparison, in words.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub notes: Vec<String>,
}

/// Why the viscometric θ stands apart, in words.
pub const VISCOMETRIC_NOTE: &str = "the viscometric θ (where the Mark–Houwink exponent is ½) is an approximate criterion: it is known to sit up to a few kelvin from the thermodynamic θ (A2 = 0), and to move with the molar-mass range of the fractions; it is compared here, not combined";

/// Whether a route's θ estimates the thermodynamic θ (A2 = 0) itself.
fn thermodynamic(route: Route) -> bool {
    route != Route::Viscometry
}

/// Compares the routes of every name that appears more than once among `entries` (one per
/// series, in input order, with its θ where it has one with a finite positive SE), in order of
/// first appearance. For routes i with θ_i and SE σ_i, w_i = 1/σ_i²:
/// θ̄ = Σ w_i θ_i / Σ w_i, SE(θ̄) = (Σ w_i)^−½, χ² = Σ w_i (θ_i − θ̄)² on n − 1 dof, over the
/// thermodynamic routes (the viscometric θ joins only when no other route is there).
pub fn compare_routes(entries: &[(&str, Option<RouteTheta>)]) -> Vec<RouteComparison> {
    let mut count: std::collections::HashMap<&str, usize> = std::collections::HashMap::new();
    for (name, _) in entries {
        *count.entry(name).or_default() += 1;
    }
    let mut seen = std::collections::HashSet::new();
    let names: Vec<&str> = entries.iter().map(|(n, _)| *n).filter(|n| count[n] > 1 && seen.insert(*n)).collect();
    let mut out = Vec::new();
    for name in names {
        let routes: Vec<RouteTheta> = entries
            .iter()
            .filter(|(n, _)| *n == name)
            .filter_map(|(_, r)| r.clone())
            .filter(|r| r.se_k.is_finite() && r.se_k > 0.0)
            .collect();
        if routes.len() < 2 {
            continue;
        }
        let mut differences = Vec::new();
        for i in 0..routes.len() {
            for j in i + 1..routes.len() {
                let d = routes[i].theta_k - routes[j].theta_k;
                differences.push(RouteDifference {
                    a: routes[i].route,
                    b: routes[j].route,
                    difference_k: d,
                    z: d / routes[i].se_k.hypot(routes[j].se_k),
                });
            }
        }
        let mut pooled: Vec<&RouteTheta> = routes.iter().filter(|r| thermodynamic(r.route)).collect();
        if pooled.is_empty() {
            pooled = routes.iter().collect();
        }
        let w: Vec<f64> = pooled.iter().map(|r| 1.0 / (r.se_k * r.se_k)).collect();
        let w_sum: f64 = w.iter().sum();
        let combined = pooled.iter().zip(&w).map(|(r, w)| w * r.theta_k).sum::<f64>() / w_sum;
        let chi2: f64 = pooled.iter().zip(&w).map(|(r, w)| w * (r.theta_k - combined).powi(2)).sum();
        let dof = pooled.len() - 1;
        // One route alone agrees with itself.
        let p_value = match dof {
            0 => 1.0,
            _ => statrs::distribution::ChiSquared::new(dof as f64)
                .map(|d| statrs::distribution::ContinuousCDF::sf(&d, chi2))
                .unwrap_or(f64::NAN),
        };
        let combined_routes: Vec<Route> = pooled.iter().map(|r| r.route).collect();
        let notes = if routes.iter().any(|r| !thermodynamic(r.route)) {
            vec![VISCOMETRIC_NOTE.to_string()]
        } else {
            Vec::new()
        };
        out.push(RouteComparison {
            series: name.to_string(),
            routes,
            differences,
            combined_theta_k: combined,
            combined_se_k: w_sum.sqrt().recip(),
            chi2,
            p_value,
            disagree: p_value < DISAGREE_P,
            combined_routes,
            notes,
        });
    }
    out
}
