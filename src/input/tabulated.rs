//! Tables of A2 or χ already fitted at each temperature.

use super::*;

pub(super) fn read_tabulated(table: &Table, options: &ReadOptions) -> Result<FileContents, InputError> {
    let temperatures = table.temperatures(options)?;
    let (quantity, value_col, sd_col) = match table.column(Role::A2) {
        Some(a) => (Quantity::SecondVirial, a, table.column(Role::A2Sd)),
        None => (Quantity::HalfMinusChi, table.require(Role::Chi)?, table.column(Role::ChiSd)),
    };
    // A2 and its SD carry a unit; χ is a pure number.
    let a2_units: Option<(A2Unit, A2Unit)> = match quantity {
        Quantity::SecondVirial => {
            let unit = table.unit(value_col, None, "")?;
            let sd_unit = match sd_col {
                Some(s) if table.cells[s].unit.is_some() => table.unit(s, None, "")?,
                _ => unit,
            };
            Some((unit, sd_unit))
        }
        Quantity::HalfMinusChi => None,
    };
    let mut rows = Vec::new();
    for row in table.rows() {
        let raw = table.number(value_col, row)?;
        let value = match a2_units {
            Some((unit, _)) => unit.to_si(raw),
            None => 0.5 - raw,
        };
        let se = match sd_col {
            Some(col) if !table.text(col, row).is_empty() => {
                let to_si = |x: f64| a2_units.map_or(x, |(_, u)| u.to_si(x));
                Some(table.checked(
                    col,
                    row,
                    to_si,
                    false,
                    "a standard deviation must be greater than zero (leave it empty if unknown)",
                )?)
            }
            _ => None,
        };
        rows.push(TabulatedRow {
            series: table.series(row)?.into_owned(),
            point: TemperaturePoint { temperature_k: temperatures[row], value, se },
            origin: Origin { file: table.file_index, line: table.line(row) },
        });
    }
    // Weights must be all or nothing within a file, or the fit would silently mix them.
    if rows.iter().any(|r| r.point.se.is_some()) {
        if let (Some(missing), Some(col)) = (rows.iter().find(|r| r.point.se.is_none()), sd_col) {
            return Err(InputError::at(
                table.name,
                missing.origin.line,
                Some(&table.cells[col].raw),
                None,
                "the sd is missing here but given on other rows: give it on every row or on none",
            ));
        }
    }
    Ok(FileContents { tabulated: rows, quantity: Some(quantity), ..FileContents::default() })
}
