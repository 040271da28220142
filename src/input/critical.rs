//! Critical temperatures of fractions: molar mass and critical temperature per row.

use super::*;

/// A table of fractions: `molar mass (g/mol)` and `critical temperature (C|K)` per row.
pub(super) fn read_critical(table: &Table) -> Result<FileContents, InputError> {
    let m_col = table.require(Role::MolarMass)?;
    let t_col = table.require(Role::CriticalTemperature)?;
    let m_unit: MolarMassUnit = table.unit(m_col, None, "")?;
    let t_unit: TemperatureUnit = table.unit(t_col, None, "")?;
    let mut critical = Vec::new();
    for row in table.rows() {
        critical.push(CriticalRow {
            series: table.series(row)?.into_owned(),
            molar_mass: table.checked(
                m_col,
                row,
                |x| m_unit.to_si(x),
                false,
                "a molar mass must be greater than zero",
            )?,
            critical_temperature_k: table.checked(
                t_col,
                row,
                |x| t_unit.to_kelvin(x),
                false,
                "a temperature must lie above absolute zero (0 K)",
            )?,
            line: table.line(row),
        });
    }
    Ok(FileContents { critical, ..FileContents::default() })
}
