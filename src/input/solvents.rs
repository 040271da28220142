//! The solvents table: boiling and melting points, densities, molar volumes, critical
//! temperatures where known.

use super::*;

/// Properties of one solvent, from a solvents table (SI: K, m³/mol, kg/m³).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct SolventProperties {
    /// Name, as used in the data's `solvent` (or `series`) column.
    pub name: String,
    /// Normal boiling point, K.
    pub boiling_point_k: Option<f64>,
    /// Melting point, K.
    pub melting_point_k: Option<f64>,
    /// Molar volume V1, m³/mol.
    pub molar_volume: Option<f64>,
    /// Density, kg/m³.
    pub density: Option<f64>,
    /// Refractive index n_D.
    pub refractive_index: Option<f64>,
    /// Free text (hazards, supplier, ...).
    pub notes: Option<String>,
    /// Line in the solvents table.
    pub line: usize,
}

/// Reads a solvents table: `solvent` (required), `boiling point`, `melting point` (C or K),
/// `molar volume` (mL/mol), `density` (g/mL), `refractive index`, `notes`; empty cells are
/// missing properties.
pub fn read_solvents(name: &str, bytes: &[u8]) -> Result<Vec<SolventProperties>, InputError> {
    let table = Table::parse(name, 0, bytes, &[])?;
    let solvent = table.require(Role::Solvent)?;
    let temperature = |role: Role| -> Result<Option<(usize, TemperatureUnit)>, InputError> {
        table.column(role).map(|c| table.unit(c, None, "").map(|u| (c, u))).transpose()
    };
    let (bp, mp) = (temperature(Role::BoilingPoint)?, temperature(Role::MeltingPoint)?);
    let v1 = table
        .column(Role::MolarVolume)
        .map(|c| table.unit::<MolarVolumeUnit>(c, None, "").map(|u| (c, u)))
        .transpose()?;
    let rho = table
        .column(Role::SolventDensity)
        .map(|c| table.unit::<DensityUnit>(c, None, "").map(|u| (c, u)))
        .transpose()?;
    let mut out: Vec<SolventProperties> = Vec::new();
    for row in table.rows() {
        let present = |col: Option<usize>| -> Option<usize> { col.filter(|c| !table.text(*c, row).is_empty()) };
        let solvent_name = table.text(solvent, row).to_string();
        if solvent_name.is_empty() {
            return Err(InputError::at(
                name,
                table.line(row),
                Some(&table.cells[solvent].raw),
                None,
                "the solvent name is empty",
            ));
        }
        if out.iter().any(|s| s.name == solvent_name) {
            return Err(table.refuse(solvent, row, "this solvent is listed twice; keep one row per solvent"));
        }
        let temp_k = |spec: Option<(usize, TemperatureUnit)>| -> Result<Option<f64>, InputError> {
            match spec {
                Some((c, u)) if present(Some(c)).is_some() => Ok(Some(table.checked(
                    c,
                    row,
                    |x| u.to_kelvin(x),
                    false,
                    "a temperature must lie above absolute zero (0 K)",
                )?)),
                _ => Ok(None),
            }
        };
        let positive = |spec: Option<(usize, f64)>, what: &str| -> Result<Option<f64>, InputError> {
            match spec {
                Some((c, factor)) if present(Some(c)).is_some() => {
                    Ok(Some(table.checked(c, row, |x| x * factor, false, what)?))
                }
                _ => Ok(None),
            }
        };
        let properties = SolventProperties {
            name: solvent_name,
            boiling_point_k: temp_k(bp)?,
            melting_point_k: temp_k(mp)?,
            molar_volume: positive(v1.map(|(c, u)| (c, u.to_si(1.0))), "a molar volume must be greater than zero")?,
            density: positive(rho.map(|(c, u)| (c, u.to_si(1.0))), "a density must be greater than zero")?,
            refractive_index: positive(
                table.column(Role::RefractiveIndex).map(|c| (c, 1.0)),
                "a refractive index must be greater than zero",
            )?,
            notes: present(table.column(Role::Notes)).map(|c| table.text(c, row).to_string()),
            line: table.line(row),
        };
        if let (Some(b), Some(m)) = (properties.boiling_point_k, properties.melting_point_k) {
            if m >= b {
                return Err(table.refuse(
                    bp.map_or(solvent, |x| x.0),
                    row,
                    "the melting point must lie below the boiling point",
                ));
            }
        }
        out.push(properties);
    }
    Ok(out)
}
