//! Dilute-solution capillary viscometry as read: each row a relative viscosity at one
//! concentration, or an intrinsic viscosity already extrapolated, of one fraction at one
//! temperature. SI units.

/// What one viscometry row holds.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ViscosityValue {
    /// ηrel = η/η0 (from flow times, t/t0, or given) at a polymer concentration c, kg/m³.
    Relative {
        /// c, kg/m³.
        concentration: f64,
        /// ηrel, dimensionless (> 1).
        relative_viscosity: f64,
    },
    /// [η] already extrapolated to c → 0, m³/kg, with its SD when given.
    Intrinsic {
        /// [η], m³/kg (1 mL/g = 10⁻³ m³/kg).
        value: f64,
        /// SD of [η], m³/kg.
        sd: Option<f64>,
    },
}

/// One viscometry row, SI.
#[derive(Debug, Clone, PartialEq)]
pub struct ViscometryRow {
    /// Series (polymer–solvent pair).
    pub series: String,
    /// The fraction's name (`fraction` column), when given; fractions are otherwise told
    /// apart by their molar mass.
    pub fraction: Option<String>,
    /// The fraction's molar mass, kg/mol, when the file gives it.
    pub molar_mass: Option<f64>,
    /// T, K.
    pub temperature_k: f64,
    /// The value.
    pub value: ViscosityValue,
    /// Line in the file.
    pub line: usize,
}

impl ViscometryRow {
    /// The name a fraction goes by: its `fraction` cell, else its molar mass in g/mol.
    pub fn fraction_key(&self) -> String {
        match (&self.fraction, self.molar_mass) {
            (Some(name), _) => name.clone(),
            (None, Some(m)) => format!("{:.0} g/mol", m * 1e3),
            (None, None) => String::new(),
        }
    }
}

/// A viscometry series: its rows at every fraction and temperature, in file order.
#[derive(Debug, Clone, PartialEq)]
pub struct ViscometrySeries {
    /// Series name.
    pub name: String,
    /// Rows in file order.
    pub rows: Vec<ViscometryRow>,
}
