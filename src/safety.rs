//! The one safety window every command that names a temperature applies: inside the
//! thermostat's range, a margin below the solvent's boiling point and above its melting point,
//! and a margin on the one-phase side of the sample's Shultz–Flory critical temperature (above
//! it for UCST-type solutions, below it for LCST-type). What could not be checked is said, and
//! the cautions go with every recommendation. Pure computation.

use crate::input::SolventProperties;
use crate::units::kelvin_to_celsius;
use serde::Serialize;

/// Keep a working temperature at least this far below the boiling point (common practice).
pub const BOILING_MARGIN_K: f64 = 15.0;
/// And at least this far above the melting point (common practice).
pub const MELTING_MARGIN_K: f64 = 5.0;
/// And at least this far on the one-phase side of the critical temperature (common practice:
/// near-critical fluctuations and aggregation within a few kelvin).
pub const CRITICAL_MARGIN_K: f64 = 5.0;

/// The cautions every recommendation of a solvent or a temperature carries.
pub fn cautions() -> Vec<String> {
    vec![
        "Many solvents used near θ are flammable and some are toxic: prepare and heat solutions in a fume hood.".into(),
        format!(
            "Stay well below the boiling point (recommendations keep at least {BOILING_MARGIN_K:.0} K); never heat a closed cell near it."
        ),
        "Read the safety data sheet of every solvent and use the protective equipment it names.".into(),
        "Follow your laboratory's and local rules; this tool does not replace a safety review by your lab's safety officer.".into(),
    ]
}

/// A range of temperatures left out, and why. Bounds in K; `None` is unbounded.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Exclusion {
    /// From, °C (null: everything below `to_c`).
    pub from_c: Option<f64>,
    /// To, °C (null: everything above `from_c`).
    pub to_c: Option<f64>,
    /// Why, in words.
    pub reason: String,
}

/// Which side of its critical temperature a solution separates on.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SeparatesOn {
    /// Cooling (UCST-type, ψ1 > 0): stay above Tc.
    Cooling,
    /// Heating (LCST-type, ψ1 < 0): stay below Tc.
    Heating,
}

/// The temperatures a solution may be held at: [low, high] K (empty when low > high).
#[derive(Debug, Clone, PartialEq)]
pub struct SafeWindow {
    /// Lowest allowed temperature, K.
    pub low_k: f64,
    /// Highest allowed temperature, K.
    pub high_k: f64,
    /// Every range left out, with its reason.
    pub exclusions: Vec<Exclusion>,
    /// What could not be checked.
    pub unchecked: Vec<String>,
}

impl SafeWindow {
    /// The thermostat's range, K; the checks below narrow it.
    pub fn new(thermostat_k: (f64, f64)) -> Self {
        SafeWindow { low_k: thermostat_k.0, high_k: thermostat_k.1, exclusions: Vec::new(), unchecked: Vec::new() }
    }

    fn above(&mut self, limit_k: f64, reason: String) {
        self.exclusions.push(Exclusion { from_c: Some(kelvin_to_celsius(limit_k)), to_c: None, reason });
        self.high_k = self.high_k.min(limit_k);
    }

    fn below(&mut self, limit_k: f64, reason: String) {
        self.exclusions.push(Exclusion { from_c: None, to_c: Some(kelvin_to_celsius(limit_k)), reason });
        self.low_k = self.low_k.max(limit_k);
    }

    /// Leaves out T > T_b − [`BOILING_MARGIN_K`] and T < T_m + [`MELTING_MARGIN_K`]; says so
    /// where the solvent's table gives neither.
    pub fn liquid_range(&mut self, solvent: &SolventProperties) {
        match solvent.boiling_point_k {
            Some(bp) => self.above(
                bp - BOILING_MARGIN_K,
                format!(
                    "within {BOILING_MARGIN_K:.0} K of {}'s boiling point ({:.1} °C) or above it",
                    solvent.name,
                    kelvin_to_celsius(bp)
                ),
            ),
            None => self
                .unchecked
                .push(format!("{}: no boiling point given, so the margin to boiling was not checked", solvent.name)),
        }
        match solvent.melting_point_k {
            Some(mp) => self.below(
                mp + MELTING_MARGIN_K,
                format!(
                    "within {MELTING_MARGIN_K:.0} K of {}'s melting point ({:.1} °C) or below it",
                    solvent.name,
                    kelvin_to_celsius(mp)
                ),
            ),
            None => {
                self.unchecked.push(format!("{}: no melting point given, so freezing was not checked", solvent.name))
            }
        }
    }

    /// Leaves out the two-phase side of the sample's critical temperature Tc (K), and
    /// [`CRITICAL_MARGIN_K`] beyond it.
    pub fn phase_separation(&mut self, critical_k: f64, side: SeparatesOn, sample: &str) {
        let tc = kelvin_to_celsius(critical_k);
        match side {
            SeparatesOn::Cooling => self.below(
                critical_k + CRITICAL_MARGIN_K,
                format!("{sample} phase-separates below its Shultz–Flory critical temperature {tc:.1} °C (kept {CRITICAL_MARGIN_K:.0} K above it)"),
            ),
            SeparatesOn::Heating => self.above(
                critical_k - CRITICAL_MARGIN_K,
                format!("{sample} phase-separates above its Shultz–Flory critical temperature {tc:.1} °C (kept {CRITICAL_MARGIN_K:.0} K below it)"),
            ),
        }
    }

    /// Whether T (K) may be recommended.
    pub fn contains(&self, temperature_k: f64) -> bool {
        self.low_k <= temperature_k && temperature_k <= self.high_k
    }

    /// Whether any temperature is left.
    pub fn is_empty(&self) -> bool {
        self.low_k > self.high_k
    }
}

/// The sample's Shultz–Flory critical temperature (K) and the side it separates on, from the
/// Flory–Krigbaum line A2 = a + b/T (SI: a in mol m³/kg², b in mol m³ K/kg²), the sample's
/// molar mass M (kg/mol), v̄ (m³/kg) and V1 (m³/mol): θ = −b/a, ψ1 = a V1/v̄², x = M v̄/V1.
pub fn critical_of(
    a: f64,
    b: f64,
    molar_mass: f64,
    specific_volume: f64,
    molar_volume: f64,
) -> Option<(f64, SeparatesOn)> {
    let theta = -b / a;
    let psi1 = a * molar_volume / (specific_volume * specific_volume);
    if !(theta.is_finite() && theta > 0.0 && psi1.is_finite() && psi1 != 0.0) {
        return None;
    }
    let x = crate::thermo::segment_ratio(molar_mass, specific_volume, molar_volume);
    let tc = crate::thermo::shultz_flory_tc(theta, psi1, x)?;
    Some((tc, if psi1 > 0.0 { SeparatesOn::Cooling } else { SeparatesOn::Heating }))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn solvent(bp_c: Option<f64>, mp_c: Option<f64>) -> SolventProperties {
        SolventProperties {
            name: "s".into(),
            boiling_point_k: bp_c.map(|c| c + 273.15),
            melting_point_k: mp_c.map(|c| c + 273.15),
            ..SolventProperties::default()
        }
    }

    #[test]
    fn the_window_is_the_thermostat_less_every_exclusion() {
        let mut w = SafeWindow::new((253.15, 353.15));
        w.liquid_range(&solvent(Some(61.0), Some(-40.0)));
        // 61 °C − 15 K = 46 °C.
        assert!((w.high_k - (319.15)).abs() < 1e-9);
        assert!((w.low_k - 253.15).abs() < 1e-9, "the thermostat is the tighter bound below");
        w.phase_separation(274.75, SeparatesOn::Cooling, "PX-40");
        assert!((w.low_k - 279.75).abs() < 1e-9);
        assert!(w.contains(290.0) && !w.contains(279.0) && !w.contains(320.0));
        assert_eq!(w.exclusions.len(), 3);
        let mut lcst = SafeWindow::new((253.15, 353.15));
        lcst.phase_separation(300.0, SeparatesOn::Heating, "x");
        assert!((lcst.high_k - 295.0).abs() < 1e-9);
    }

    #[test]
    fn what_the_table_does_not_give_is_said_to_be_unchecked() {
        let mut w = SafeWindow::new((253.15, 353.15));
        w.liquid_range(&solvent(None, None));
        assert_eq!(w.unchecked.len(), 2);
        assert!(w.contains(353.15));
    }
}
