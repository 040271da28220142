//! Header cells: a name matched case-insensitively, and a unit in `( )` or `[ ]` after it.

/// What a column holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Role {
    /// Name of the series (polymer–solvent pair or sample); `series` or `sample`.
    Series,
    /// Temperature of the measurement.
    Temperature,
    /// Polymer mass concentration.
    Concentration,
    /// Osmotic pressure.
    Pressure,
    /// Standard deviation of one osmotic-pressure reading.
    PressureSd,
    /// Height of the solvent column (hydrostatic head).
    Head,
    /// Density of the solvent, for converting a head to a pressure.
    SolventDensity,
    /// A2 already fitted at a temperature.
    A2,
    /// Standard deviation of A2.
    A2Sd,
    /// Flory–Huggins χ at a temperature.
    Chi,
    /// Standard deviation of χ.
    ChiSd,
    /// Partial specific volume of the polymer v̄.
    SpecificVolume,
    /// Molar volume of the solvent V1.
    MolarVolume,
    /// Solvent name.
    Solvent,
    /// Normal boiling point of a solvent.
    BoilingPoint,
    /// Melting point of a solvent.
    MeltingPoint,
    /// Refractive index of a solvent.
    RefractiveIndex,
    /// Free-text notes.
    Notes,
    /// Molar mass of a fraction (critical-temperature series).
    MolarMass,
    /// Critical (phase-separation) temperature of a fraction.
    CriticalTemperature,
    /// K c / R, already formed (static light scattering).
    KcOverR,
    /// Excess Rayleigh ratio R (static light scattering).
    RayleighRatio,
    /// Scattering angle.
    Angle,
}

impl Role {
    /// The canonical header name, as shown in messages.
    pub fn name(self) -> &'static str {
        match self {
            Role::Series => "series",
            Role::Temperature => "temperature",
            Role::Concentration => "concentration",
            Role::Pressure => "pressure",
            Role::PressureSd => "pressure sd",
            Role::Head => "head",
            Role::SolventDensity => "solvent density",
            Role::A2 => "a2",
            Role::A2Sd => "a2 sd",
            Role::Chi => "chi",
            Role::ChiSd => "chi sd",
            Role::SpecificVolume => "polymer specific volume",
            Role::MolarVolume => "solvent molar volume",
            Role::Solvent => "solvent",
            Role::BoilingPoint => "boiling point",
            Role::MeltingPoint => "melting point",
            Role::RefractiveIndex => "refractive index",
            Role::Notes => "notes",
            Role::MolarMass => "molar mass",
            Role::CriticalTemperature => "critical temperature",
            Role::KcOverR => "kc/r",
            Role::RayleighRatio => "rayleigh ratio",
            Role::Angle => "angle",
        }
    }

    fn from_name(name: &str) -> Option<Role> {
        Some(match name {
            "series" | "sample" => Role::Series,
            "temperature" => Role::Temperature,
            "concentration" => Role::Concentration,
            "pressure" | "osmotic pressure" => Role::Pressure,
            "pressure sd" | "osmotic pressure sd" => Role::PressureSd,
            "head" => Role::Head,
            "solvent density" | "density" => Role::SolventDensity,
            "solvent" => Role::Solvent,
            "boiling point" | "bp" => Role::BoilingPoint,
            "melting point" | "mp" => Role::MeltingPoint,
            "refractive index" | "n" => Role::RefractiveIndex,
            "notes" | "note" => Role::Notes,
            "molar mass" | "mw" | "molecular weight" => Role::MolarMass,
            "critical temperature" | "tc" => Role::CriticalTemperature,
            "kc/r" | "k c / r" | "kc/r0" => Role::KcOverR,
            "rayleigh ratio" | "excess rayleigh ratio" => Role::RayleighRatio,
            "angle" | "scattering angle" => Role::Angle,
            "a2" | "second virial coefficient" => Role::A2,
            "a2 sd" | "second virial coefficient sd" => Role::A2Sd,
            "chi" | "χ" => Role::Chi,
            "chi sd" | "χ sd" => Role::ChiSd,
            "polymer specific volume" | "specific volume" => Role::SpecificVolume,
            "solvent molar volume" | "molar volume" => Role::MolarVolume,
            _ => return None,
        })
    }
}

/// One header cell, split into its name and unit.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct HeaderCell {
    /// The cell exactly as written (trimmed).
    pub raw: String,
    /// Lower-case name with runs of white space folded to one space.
    pub name: String,
    /// The text inside the trailing brackets, if any.
    pub unit: Option<String>,
    /// The role the name maps to; `None` for columns we do not use.
    pub role: Option<Role>,
}

/// Parses `temperature (C)`, `Concentration [g/L]`, `series`, ...
pub fn parse_header_cell(raw: &str) -> HeaderCell {
    let raw = raw.trim().to_string();
    let (name, unit) = split_unit(&raw);
    let name = name.split_whitespace().collect::<Vec<_>>().join(" ").to_lowercase();
    let role = Role::from_name(&name);
    HeaderCell { raw, name, unit, role }
}

fn split_unit(cell: &str) -> (&str, Option<String>) {
    for (open, close) in [('(', ')'), ('[', ']')] {
        if let Some(stripped) = cell.strip_suffix(close) {
            if let Some(at) = stripped.rfind(open) {
                return (&cell[..at], Some(stripped[at + 1..].trim().to_string()));
            }
        }
    }
    (cell, None)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_are_case_insensitive_and_units_sit_in_either_bracket() {
        let c = parse_header_cell(" Temperature  (C) ");
        assert_eq!((c.name.as_str(), c.unit.as_deref(), c.role), ("temperature", Some("C"), Some(Role::Temperature)));
        let c = parse_header_cell("Pressure   SD [kPa]");
        assert_eq!((c.name.as_str(), c.unit.as_deref(), c.role), ("pressure sd", Some("kPa"), Some(Role::PressureSd)));
        let c = parse_header_cell("Sample");
        assert_eq!((c.unit, c.role), (None, Some(Role::Series)));
        assert_eq!(parse_header_cell("operator").role, None);
    }
}
