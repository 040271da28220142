//! Unit conversions against their exact definitions.
//! Sources: The International System of Units (SI brochure, 9th ed., 2019), tables 8–9;
//! NIST SP 811 (2008), appendix B.8/B.9; CODATA 2018 for R and N_A.

use approx::assert_relative_eq;
use thetaseek::units::*;

fn pa(unit: &str, value: f64) -> f64 {
    unit.parse::<PressureUnit>().unwrap().to_si(value)
}

#[test]
fn pressure_units_follow_their_exact_definitions() {
    // NIST SP 811: 1 atm = 101 325 Pa exactly.
    assert_eq!(pa("atm", 1.0), 101_325.0);
    // NIST SP 811: 1 torr = (101 325/760) Pa exactly.
    assert_relative_eq!(pa("torr", 760.0), 101_325.0, max_relative = 1e-15);
    // NIST SP 811: conventional mmHg = 133.322 387 415 Pa (ρ_Hg = 13.5951 g/cm³ × g_n × 1 mm).
    assert_relative_eq!(pa("mmHg", 1.0), 13_595.1 * 9.806_65 * 1e-3, max_relative = 1e-12);
    // NIST SP 811: 1 psi = 6894.757 293 168 Pa (lbf = 0.453 592 37 kg × g_n, in = 0.0254 m).
    assert_relative_eq!(pa("psi", 1.0), 0.453_592_37 * 9.806_65 / (0.0254 * 0.0254), max_relative = 1e-12);
    // SI brochure table 8: 1 bar = 10⁵ Pa; CGS: 1 dyn/cm² = 0.1 Pa.
    assert_eq!(pa("bar", 1.0), 1.0e5);
    assert_relative_eq!(pa("dyn/cm2", 10.0), 1.0, max_relative = 1e-15);
    assert_eq!(pa("kPa", 1.0), 1.0e3);
    // SI brochure table 8: 1 mbar = 1 hPa = 100 Pa.
    assert_eq!(pa("mbar", 1.0), 100.0);
    assert_eq!(pa("hPa", 1.0), 100.0);
    // NIST SP 811: conventional mm of water = 9.806 65 Pa (1 g/cm³ × g_n × 1 mm); cm of water ×10.
    assert_relative_eq!(pa("mmH2O", 1.0), 1_000.0 * 9.806_65 * 1e-3, max_relative = 1e-15);
    assert_relative_eq!(pa("cmH2O", 1.0), 1_000.0 * 9.806_65 * 1e-2, max_relative = 1e-15);
}

#[test]
fn constants_are_the_exact_si_values() {
    // 3rd CGPM (1901): standard acceleration of gravity g_n = 9.806 65 m/s².
    assert_eq!(STANDARD_GRAVITY_M_PER_S2, 9.806_65);
    // SI 2019: N_A = 6.022 140 76 × 10²³ /mol, k = 1.380 649 × 10⁻²³ J/K, so R = N_A k (CODATA 2018).
    assert_relative_eq!(GAS_CONSTANT_J_PER_MOL_K, AVOGADRO_PER_MOL * 1.380_649e-23, max_relative = 1e-15);
    assert_relative_eq!(GAS_CONSTANT_J_PER_MOL_K, 8.314_462_618, max_relative = 1e-10);
}

#[test]
fn a_centimetre_of_water_is_98_0665_pascal() {
    // Conventional cmH2O = 98.0665 Pa (ρ = 1000 kg/m³ × g_n × 0.01 m; NIST SP 811).
    let head = LengthUnit::Centimetre.to_si(1.0);
    let rho = DensityUnit::GramPerMillilitre.to_si(1.0);
    assert_relative_eq!(head_to_pressure_pa(rho, head), 98.0665, max_relative = 1e-14);
}

#[test]
fn temperatures_and_concentrations_convert_to_kelvin_and_kilograms_per_cubic_metre() {
    // SI brochure 2.3.1: t/°C = T/K − 273.15.
    assert_eq!(TemperatureUnit::Celsius.to_kelvin(25.0), 298.15);
    assert_eq!(TemperatureUnit::Kelvin.to_kelvin(298.15), 298.15);
    let c = |u: &str, v: f64| u.parse::<ConcentrationUnit>().unwrap().to_si(v);
    // 1 g/mL = 1000 kg/m³; 1 g/L = 1 mg/mL = 1 kg/m³; 1 g/dL = 10 kg/m³ (definitions of the litre, SI brochure table 8).
    assert_eq!(c("g/mL", 0.002), 2.0);
    assert_eq!(c("g/L", 2.0), 2.0);
    assert_eq!(c("mg/mL", 2.0), 2.0);
    assert_eq!(c("g/dL", 0.2), 2.0);
    assert_eq!(c("kg/m3", 2.0), 2.0);
}

#[test]
fn report_units_are_consistent_with_si() {
    // A2: mol m³/kg² → mol mL/g²: (10⁶ mL/m³)/(10⁶ g²/kg²) = 1; A3: (10¹² mL²/m⁶)/(10⁹ g³/kg³) = 10³.
    assert_eq!(A2_MOL_ML_PER_G2_PER_SI, 1.0);
    assert_eq!(A3_MOL_ML2_PER_G3_PER_SI, 1.0e3);
}
