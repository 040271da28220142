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
    /// Why a reading is excluded (empty: it is used).
    Exclude,
    /// Flow (efflux) time of a solution in a capillary viscometer.
    FlowTime,
    /// Flow time of the pure solvent in the same viscometer.
    SolventFlowTime,
    /// Relative viscosity η/η0 of a solution.
    RelativeViscosity,
    /// Intrinsic viscosity [η] already extrapolated to zero concentration.
    IntrinsicViscosity,
    /// Standard deviation of [η].
    IntrinsicViscositySd,
    /// Name of a fraction within a series (viscometry).
    Fraction,
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
            Role::Exclude => "exclude",
            Role::FlowTime => "flow time",
            Role::SolventFlowTime => "solvent flow time",
            Role::RelativeViscosity => "relative viscosity",
            Role::IntrinsicViscosity => "intrinsic viscosity",
            Role::IntrinsicViscositySd => "intrinsic viscosity sd",
            Role::Fraction => "fraction",
        }
    }

    /// The role a header name (lower case, white space folded) stands for.
    pub fn from_name(name: &str) -> Option<Role> {
        NAMES.iter().find(|(n, _)| *n == name).map(|(_, r)| *r)
    }

    /// The header names accepted for this role, quoted and comma separated.
    pub fn accepted_names(self) -> String {
        NAMES.iter().filter(|(_, r)| *r == self).map(|(n, _)| format!("'{n}'")).collect::<Vec<_>>().join(", ")
    }
}

/// Every header name understood, and its role.
const NAMES: &[(&str, Role)] = &[
    ("series", Role::Series),
    ("sample", Role::Series),
    ("temperature", Role::Temperature),
    ("concentration", Role::Concentration),
    ("pressure", Role::Pressure),
    ("osmotic pressure", Role::Pressure),
    ("pressure sd", Role::PressureSd),
    ("osmotic pressure sd", Role::PressureSd),
    ("head", Role::Head),
    ("solvent density", Role::SolventDensity),
    ("density", Role::SolventDensity),
    ("solvent", Role::Solvent),
    ("boiling point", Role::BoilingPoint),
    ("bp", Role::BoilingPoint),
    ("melting point", Role::MeltingPoint),
    ("mp", Role::MeltingPoint),
    ("refractive index", Role::RefractiveIndex),
    ("n", Role::RefractiveIndex),
    ("notes", Role::Notes),
    ("note", Role::Notes),
    ("molar mass", Role::MolarMass),
    ("mw", Role::MolarMass),
    ("molecular weight", Role::MolarMass),
    ("critical temperature", Role::CriticalTemperature),
    ("tc", Role::CriticalTemperature),
    ("kc/r", Role::KcOverR),
    ("k c / r", Role::KcOverR),
    ("kc/r0", Role::KcOverR),
    ("rayleigh ratio", Role::RayleighRatio),
    ("excess rayleigh ratio", Role::RayleighRatio),
    ("angle", Role::Angle),
    ("scattering angle", Role::Angle),
    ("a2", Role::A2),
    ("second virial coefficient", Role::A2),
    ("a2 sd", Role::A2Sd),
    ("second virial coefficient sd", Role::A2Sd),
    ("chi", Role::Chi),
    ("χ", Role::Chi),
    ("chi sd", Role::ChiSd),
    ("χ sd", Role::ChiSd),
    ("polymer specific volume", Role::SpecificVolume),
    ("specific volume", Role::SpecificVolume),
    ("solvent molar volume", Role::MolarVolume),
    ("molar volume", Role::MolarVolume),
    ("exclude", Role::Exclude),
    ("excluded", Role::Exclude),
    ("exclusion", Role::Exclude),
    ("flow time", Role::FlowTime),
    ("efflux time", Role::FlowTime),
    ("solvent flow time", Role::SolventFlowTime),
    ("solvent efflux time", Role::SolventFlowTime),
    ("relative viscosity", Role::RelativeViscosity),
    ("viscosity ratio", Role::RelativeViscosity),
    ("intrinsic viscosity", Role::IntrinsicViscosity),
    ("limiting viscosity number", Role::IntrinsicViscosity),
    ("intrinsic viscosity sd", Role::IntrinsicViscositySd),
    ("fraction", Role::Fraction),
];

/// A header cell that looks like `role` under another name (`Temp (°C)`, `Conc (g/dL)`,
/// `Π (cmH2O)`): its name starts as one of the role's names does, or is a usual short form.
pub fn likely_match(role: Role, cells: &[HeaderCell]) -> Option<&HeaderCell> {
    let shorts: &[&str] = match role {
        Role::Temperature => &["temp", "t"],
        Role::Concentration => &["conc", "c"],
        Role::Pressure => &["pres", "osm", "π", "pi"],
        Role::Series => &["name", "polymer", "id"],
        _ => &[],
    };
    cells.iter().filter(|c| c.role.is_none()).find(|c| {
        let name = c.name.trim_end_matches('.');
        shorts.iter().any(|s| name == *s || (s.len() > 2 && name.starts_with(s)))
            || NAMES.iter().any(|(n, r)| *r == role && n.len() > 3 && name.starts_with(&n[..4]))
    })
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
    let mut role = Role::from_name(&name);
    // An osmotic pressure written as a height (`osmotic pressure (cm)`) is the solvent head.
    let as_length = unit.as_deref().is_some_and(|u| u.parse::<crate::units::LengthUnit>().is_ok());
    if role == Some(Role::Pressure) && as_length {
        role = Some(Role::Head);
    }
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
