//! Units of the input columns and the one internal system the science runs in.
//!
//! Everything inside the crate is SI: temperature in K, concentration in kg/m³ (= g/L),
//! pressure in Pa, length in m, density in kg/m³, molar mass in kg/mol, A2 in mol m³/kg².
//! Conversion happens here, at the edges, and nowhere else.

use std::fmt;
use std::str::FromStr;

/// Molar gas constant R in J/(mol K). CODATA 2018 exact value (R = N_A k).
pub const GAS_CONSTANT_J_PER_MOL_K: f64 = 8.314_462_618_153_24;

/// Standard acceleration of gravity g_n in m/s² (exact, 3rd CGPM 1901; SI brochure).
pub const STANDARD_GRAVITY_M_PER_S2: f64 = 9.806_65;

/// Avogadro constant N_A in 1/mol (exact since the 2019 SI redefinition).
pub const AVOGADRO_PER_MOL: f64 = 6.022_140_76e23;

/// Offset between the Celsius and the kelvin scale: T/K = t/°C + 273.15 (exact).
pub const CELSIUS_OFFSET_K: f64 = 273.15;

/// Molar mass: 1 kg/mol = 1000 g/mol.
pub const G_PER_MOL_PER_KG_PER_MOL: f64 = 1000.0;

/// A2: 1 mol m³/kg² = 1 mol mL/g² (10⁶ mL/m³ over 10⁶ g²/kg²).
pub const A2_MOL_ML_PER_G2_PER_SI: f64 = 1.0;

/// A3: 1 mol m⁶/kg³ = 10³ mol mL²/g³ (10¹² mL²/m⁶ over 10⁹ g³/kg³).
pub const A3_MOL_ML2_PER_G3_PER_SI: f64 = 1.0e3;

/// Concentration: 1 kg/m³ = 10⁻³ g/mL.
pub const G_PER_ML_PER_KG_PER_M3: f64 = 1.0e-3;

/// A unit the user wrote that is not one we accept for that column.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("unknown {quantity} unit '{given}'; accepted: {accepted}")]
pub struct UnknownUnit {
    /// The quantity the column holds, e.g. "temperature".
    pub quantity: &'static str,
    /// What the user wrote.
    pub given: String,
    /// The accepted spellings, comma separated.
    pub accepted: String,
}

/// Spelling of a unit: lower-case, without spaces, "²"/"³" as "2"/"3", "·"/"*" dropped.
fn normalise(unit: &str) -> String {
    unit.trim()
        .to_lowercase()
        .replace('²', "2")
        .replace('³', "3")
        .replace('°', "")
        .chars()
        .filter(|c| !c.is_whitespace() && *c != '·' && *c != '*')
        .collect()
}

/// A unit enum with a canonical name, accepted spellings and a factor or map to SI.
macro_rules! unit_enum {
    (
        $(#[$doc:meta])* $name:ident, $quantity:literal, $si:literal,
        { $( $(#[$vdoc:meta])* $variant:ident => $canon:literal, [$($alias:literal),*], $factor:expr ;)* }
    ) => {
        $(#[$doc])*
        #[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
        pub enum $name { $( $(#[$vdoc])* $variant, )* }

        impl $name {
            /// Every unit of this quantity, in the order they are listed to users.
            pub const ALL: &'static [$name] = &[$($name::$variant),*];
            /// What the column holds, for messages.
            pub const QUANTITY: &'static str = $quantity;
            /// The SI unit values are converted to.
            pub const SI_UNIT: &'static str = $si;

            /// Canonical spelling, as shown in messages and headers.
            pub fn symbol(self) -> &'static str {
                match self { $($name::$variant => $canon,)* }
            }

            fn aliases(self) -> &'static [&'static str] {
                match self { $($name::$variant => &[$canon, $($alias),*],)* }
            }

            fn factor(self) -> f64 {
                match self { $($name::$variant => $factor,)* }
            }

            /// The accepted canonical spellings, comma separated.
            pub fn accepted() -> String {
                Self::ALL.iter().map(|u| u.symbol()).collect::<Vec<_>>().join(", ")
            }
        }

        impl FromStr for $name {
            type Err = UnknownUnit;
            fn from_str(s: &str) -> Result<Self, Self::Err> {
                let n = normalise(s);
                Self::ALL
                    .iter()
                    .copied()
                    .find(|u| u.aliases().iter().any(|a| normalise(a) == n))
                    .ok_or_else(|| UnknownUnit {
                        quantity: $quantity,
                        given: s.trim().to_string(),
                        accepted: Self::accepted(),
                    })
            }
        }

        impl fmt::Display for $name {
            fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                f.write_str(self.symbol())
            }
        }

        /// Written as its canonical symbol.
        impl serde::Serialize for $name {
            fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
                serializer.serialize_str(self.symbol())
            }
        }

        /// Read from any accepted spelling.
        impl<'de> serde::Deserialize<'de> for $name {
            fn deserialize<D: serde::Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
                let text = String::deserialize(deserializer)?;
                text.parse().map_err(|e: UnknownUnit| serde::de::Error::custom(e.to_string()))
            }
        }
    };
}

unit_enum!(
    /// Temperature scale of a column.
    TemperatureUnit, "temperature", "K", {
        /// Degree Celsius: T/K = t/°C + 273.15.
        Celsius => "C", ["degc", "celsius", "°C", "ºC", "deg C"], CELSIUS_OFFSET_K;
        /// Kelvin.
        Kelvin => "K", ["kelvin"], 0.0;
    }
);

impl TemperatureUnit {
    /// Value in this unit → kelvin (the "factor" of a temperature scale is its offset),
    /// T/K = t/°C + 273.15, rounded to 1 nK when an offset is added (see `round_to_nanokelvin`).
    pub fn to_kelvin(self, value: f64) -> f64 {
        let offset = self.factor();
        if offset == 0.0 {
            value
        } else {
            round_to_nanokelvin(value + offset)
        }
    }
}

/// Celsius value of a kelvin temperature, t/°C = T/K − 273.15, rounded to 1 nK.
pub fn kelvin_to_celsius(t_k: f64) -> f64 {
    round_to_nanokelvin(t_k - CELSIUS_OFFSET_K)
}

/// A temperature rounded to 10⁻⁹ K.
///
/// 273.15 has no exact binary form, so a bare shift turns 275.41 K into 2.2600000000000477 °C
/// and 2.26 °C into 275.40999999999997 K; a reader of the report should see 2.26 and 275.41.
/// One nanokelvin is far below any thermostat's resolution, so no result moves measurably.
pub fn round_to_nanokelvin(t: f64) -> f64 {
    (t * 1.0e9).round() / 1.0e9
}

unit_enum!(
    /// Mass concentration of polymer in solution.
    ConcentrationUnit, "concentration", "kg/m3", {
        /// g/mL = 10³ kg/m³.
        GramPerMillilitre => "g/mL", ["g/cm3", "g/cc"], 1.0e3;
        /// g/L = 1 kg/m³.
        GramPerLitre => "g/L", ["g/dm3"], 1.0;
        /// mg/mL = 1 kg/m³.
        MilligramPerMillilitre => "mg/mL", ["mg/cm3"], 1.0;
        /// g/dL = 10 kg/m³.
        GramPerDecilitre => "g/dL", ["g/100mL"], 10.0;
        /// kg/m³.
        KilogramPerCubicMetre => "kg/m3", [], 1.0;
    }
);

impl ConcentrationUnit {
    /// Value in this unit → kg/m³.
    pub fn to_si(self, value: f64) -> f64 {
        value * self.factor()
    }
}

unit_enum!(
    /// Osmotic pressure.
    PressureUnit, "pressure", "Pa", {
        /// Pascal.
        Pascal => "Pa", ["n/m2"], 1.0;
        /// Kilopascal.
        Kilopascal => "kPa", [], 1.0e3;
        /// Millibar = hectopascal = 100 Pa (exact, SI brochure table 8).
        Millibar => "mbar", ["hPa"], 1.0e2;
        /// Conventional millimetre of water = 9.806 65 Pa (NIST SP 811).
        MillimetreOfWater => "mmH2O", ["mm H2O", "mmwg"], 9.806_65;
        /// Conventional centimetre of water = 98.0665 Pa (NIST SP 811).
        CentimetreOfWater => "cmH2O", ["cm H2O"], 98.066_5;
        /// Bar = 10⁵ Pa (exact, SI brochure table 8).
        Bar => "bar", [], 1.0e5;
        /// Standard atmosphere = 101 325 Pa (exact, NIST SP 811).
        Atmosphere => "atm", [], 101_325.0;
        /// Conventional millimetre of mercury = 133.322 387 415 Pa (NIST SP 811).
        MillimetreOfMercury => "mmHg", ["mm hg"], 133.322_387_415;
        /// Torr = 101 325/760 Pa (exact, NIST SP 811).
        Torr => "torr", [], 101_325.0 / 760.0;
        /// Pound-force per square inch = 6894.757 293 168 Pa (NIST SP 811).
        PoundPerSquareInch => "psi", ["lbf/in2"], 6_894.757_293_168;
        /// dyn/cm² = 0.1 Pa (exact).
        DynePerSquareCentimetre => "dyn/cm2", ["dyne/cm2", "barye"], 0.1;
    }
);

impl PressureUnit {
    /// Value in this unit → Pa.
    pub fn to_si(self, value: f64) -> f64 {
        value * self.factor()
    }
}

unit_enum!(
    /// Height of the solvent column in a membrane osmometer (hydrostatic head).
    LengthUnit, "head", "m", {
        /// Centimetre (of the solvent column).
        Centimetre => "cm", ["cm of solvent"], 1.0e-2;
        /// Millimetre (of the solvent column).
        Millimetre => "mm", ["mm of solvent"], 1.0e-3;
        /// Metre.
        Metre => "m", [], 1.0;
    }
);

impl LengthUnit {
    /// Value in this unit → m.
    pub fn to_si(self, value: f64) -> f64 {
        value * self.factor()
    }
}

unit_enum!(
    /// Mass density of the solvent.
    DensityUnit, "density", "kg/m3", {
        /// g/mL = 10³ kg/m³.
        GramPerMillilitre => "g/mL", ["g/cm3", "g/cc"], 1.0e3;
        /// kg/m³.
        KilogramPerCubicMetre => "kg/m3", ["g/L"], 1.0;
    }
);

impl DensityUnit {
    /// Value in this unit → kg/m³.
    pub fn to_si(self, value: f64) -> f64 {
        value * self.factor()
    }
}

unit_enum!(
    /// Second virial coefficient A2 (tables of A2 per temperature).
    A2Unit, "a2", "mol m3/kg2", {
        /// mol mL/g² = 1 mol m³/kg².
        MolMillilitrePerGramSquared => "mol mL/g2", ["mol cm3/g2", "mol ml g-2", "mol cm3 g-2"], 1.0;
        /// mol m³/kg².
        MolCubicMetrePerKilogramSquared => "mol m3/kg2", ["mol m3 kg-2"], 1.0;
    }
);

impl A2Unit {
    /// Value in this unit → mol m³/kg².
    pub fn to_si(self, value: f64) -> f64 {
        value * self.factor()
    }
}

unit_enum!(
    /// Partial specific volume of the polymer v̄.
    SpecificVolumeUnit, "specific volume", "m3/kg", {
        /// mL/g = 10⁻³ m³/kg.
        MillilitrePerGram => "mL/g", ["cm3/g"], 1.0e-3;
        /// m³/kg.
        CubicMetrePerKilogram => "m3/kg", [], 1.0;
    }
);

impl SpecificVolumeUnit {
    /// Value in this unit → m³/kg.
    pub fn to_si(self, value: f64) -> f64 {
        value * self.factor()
    }
}

unit_enum!(
    /// Molar volume of the solvent V1.
    MolarVolumeUnit, "molar volume", "m3/mol", {
        /// mL/mol = 10⁻⁶ m³/mol.
        MillilitrePerMole => "mL/mol", ["cm3/mol"], 1.0e-6;
        /// L/mol = 10⁻³ m³/mol.
        LitrePerMole => "L/mol", ["dm3/mol"], 1.0e-3;
        /// m³/mol.
        CubicMetrePerMole => "m3/mol", [], 1.0;
    }
);

impl MolarVolumeUnit {
    /// Value in this unit → m³/mol.
    pub fn to_si(self, value: f64) -> f64 {
        value * self.factor()
    }
}

unit_enum!(
    /// Molar mass of a fraction.
    MolarMassUnit, "molar mass", "kg/mol", {
        /// g/mol = 10⁻³ kg/mol.
        GramPerMole => "g/mol", ["da", "dalton"], 1.0e-3;
        /// kg/mol.
        KilogramPerMole => "kg/mol", ["kda"], 1.0;
    }
);

impl MolarMassUnit {
    /// Value in this unit → kg/mol.
    pub fn to_si(self, value: f64) -> f64 {
        value * self.factor()
    }
}

unit_enum!(
    /// K c/R, the reduced scattering of static light scattering.
    KcOverRUnit, "kc/r", "mol/kg", {
        /// mol/g = 10³ mol/kg.
        MolPerGram => "mol/g", [], 1.0e3;
        /// mol/kg.
        MolPerKilogram => "mol/kg", [], 1.0;
    }
);

impl KcOverRUnit {
    /// Value in this unit → mol/kg.
    pub fn to_si(self, value: f64) -> f64 {
        value * self.factor()
    }
}

unit_enum!(
    /// Excess Rayleigh ratio.
    RayleighUnit, "rayleigh ratio", "1/m", {
        /// 1/cm = 10² 1/m.
        PerCentimetre => "1/cm", ["cm-1"], 1.0e2;
        /// 1/m.
        PerMetre => "1/m", ["m-1"], 1.0;
    }
);

impl RayleighUnit {
    /// Value in this unit → 1/m.
    pub fn to_si(self, value: f64) -> f64 {
        value * self.factor()
    }
}

unit_enum!(
    /// Scattering angle.
    AngleUnit, "angle", "rad", {
        /// Degree = π/180 rad.
        Degree => "deg", ["degree", "degrees", "°"], std::f64::consts::PI / 180.0;
        /// Radian.
        Radian => "rad", [], 1.0;
    }
);

impl AngleUnit {
    /// Value in this unit → rad.
    pub fn to_si(self, value: f64) -> f64 {
        value * self.factor()
    }
}

unit_enum!(
    /// Flow (efflux) time of a capillary viscometer.
    TimeUnit, "flow time", "s", {
        /// Second.
        Second => "s", ["sec", "seconds"], 1.0;
        /// Minute = 60 s (SI brochure table 8).
        Minute => "min", [], 60.0;
    }
);

impl TimeUnit {
    /// Value in this unit → s.
    pub fn to_si(self, value: f64) -> f64 {
        value * self.factor()
    }
}

unit_enum!(
    /// Intrinsic viscosity [η] (a reciprocal concentration).
    IntrinsicViscosityUnit, "intrinsic viscosity", "m3/kg", {
        /// mL/g = cm³/g = 10⁻³ m³/kg.
        MillilitrePerGram => "mL/g", ["cm3/g", "cc/g"], 1.0e-3;
        /// dL/g = 100 mL/g = 10⁻¹ m³/kg.
        DecilitrePerGram => "dL/g", [], 1.0e-1;
        /// L/g = 1 m³/kg.
        LitrePerGram => "L/g", [], 1.0;
        /// m³/kg.
        CubicMetrePerKilogram => "m3/kg", [], 1.0;
    }
);

impl IntrinsicViscosityUnit {
    /// Value in this unit → m³/kg.
    pub fn to_si(self, value: f64) -> f64 {
        value * self.factor()
    }
}

/// Intrinsic viscosity: report unit (mL/g) per SI unit (m³/kg).
pub const ML_PER_G_PER_M3_PER_KG: f64 = 1.0e3;

/// Optical constant of light scattering, K = 4π² n0² (dn/dc)² / (N_A λ0⁴), mol m²/kg², from n0,
/// dn/dc in m³/kg and λ0 (vacuum wavelength) in m.
pub fn optical_constant(refractive_index: f64, dn_dc: f64, wavelength_m: f64) -> f64 {
    4.0 * std::f64::consts::PI.powi(2) * refractive_index.powi(2) * dn_dc.powi(2)
        / (AVOGADRO_PER_MOL * wavelength_m.powi(4))
}

/// Magnitude of the scattering vector, q = 4π n0 sin(θ/2)/λ0, 1/m.
pub fn scattering_vector(refractive_index: f64, angle_rad: f64, wavelength_m: f64) -> f64 {
    4.0 * std::f64::consts::PI * refractive_index * (angle_rad / 2.0).sin() / wavelength_m
}

/// Hydrostatic osmotic pressure Π = ρ g_n h, in Pa, from ρ in kg/m³ and h in m.
pub fn head_to_pressure_pa(density_kg_per_m3: f64, head_m: f64) -> f64 {
    density_kg_per_m3 * STANDARD_GRAVITY_M_PER_S2 * head_m
}

#[cfg(test)]
// Exact conversions (273.15 K is 0 °C by definition, SI brochure) compare exactly.
#[allow(clippy::float_cmp)]
mod tests {
    use super::*;

    #[test]
    fn spellings_are_matched_loosely_and_unknown_units_list_the_accepted_ones() {
        assert_eq!("g/ml".parse::<ConcentrationUnit>(), Ok(ConcentrationUnit::GramPerMillilitre));
        assert_eq!("kg/m³".parse::<ConcentrationUnit>(), Ok(ConcentrationUnit::KilogramPerCubicMetre));
        assert_eq!("°C".parse::<TemperatureUnit>(), Ok(TemperatureUnit::Celsius));
        assert_eq!("dyn/cm²".parse::<PressureUnit>(), Ok(PressureUnit::DynePerSquareCentimetre));
        let err = "furlong".parse::<LengthUnit>().unwrap_err();
        assert_eq!(err.accepted, "cm, mm, m");
        assert!(err.to_string().contains("unknown head unit 'furlong'"));
    }

    #[test]
    fn celsius_and_kelvin_convert_without_binary_artefacts() {
        // SI brochure (9th ed., 2.3.1): t/°C = T/K − 273.15 exactly.
        assert_eq!(TemperatureUnit::Celsius.to_kelvin(0.0), 273.15);
        assert_eq!(kelvin_to_celsius(273.15), 0.0);
        // A bare shift would give 2.2600000000000477 and 275.40999999999997.
        assert_eq!(kelvin_to_celsius(275.41), 2.26);
        assert_eq!(TemperatureUnit::Celsius.to_kelvin(2.26), 275.41);
        assert_eq!(TemperatureUnit::Kelvin.to_kelvin(275.41), 275.41);
        // Any computed θ (this one is arbitrary) keeps nine decimals, not seventeen digits.
        assert_eq!(kelvin_to_celsius(290.21867194735376).to_string(), "17.068671947");
    }
}
