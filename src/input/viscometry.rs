//! Capillary viscometry files: flow times (the solvent's as rows of concentration 0 or as a
//! column), relative viscosities, or intrinsic viscosities already extrapolated; per fraction
//! (`fraction` name or `molar mass`) and temperature.

use super::*;
use crate::dataset::{ViscometryRow, ViscosityValue, TEMPERATURE_GROUPING_K};
use crate::units::{IntrinsicViscosityUnit, TimeUnit};

/// What the response column of a viscometry file holds.
enum Response {
    /// Flow times in s, the solvent's from a column or from rows of concentration 0.
    FlowTimes { time: (usize, TimeUnit), solvent: Option<(usize, TimeUnit)> },
    /// ηrel given.
    Relative(usize),
    /// [η] given, with its SD column.
    Intrinsic { value: (usize, IntrinsicViscosityUnit), sd: Option<(usize, IntrinsicViscosityUnit)> },
}

/// Viscometry: `flow time (s)` with `solvent flow time (s)` or rows of concentration 0,
/// `relative viscosity`, or `intrinsic viscosity (mL/g)` with an optional sd; optional
/// `fraction` and `molar mass (g/mol)`.
pub(super) fn read_viscometry(table: &Table, options: &ReadOptions) -> Result<FileContents, InputError> {
    let temperatures = table.temperatures(options)?;
    let header_error = |col: usize, what: &str| {
        InputError::at(table.name, table.layout.header_line, Some(&table.cells[col].raw), None, what.to_string())
    };
    let response = match (
        table.column(Role::FlowTime),
        table.column(Role::RelativeViscosity),
        table.column(Role::IntrinsicViscosity),
    ) {
        (Some(t), None, None) => Response::FlowTimes {
            time: (t, table.unit(t, None, "")?),
            solvent: match table.column(Role::SolventFlowTime) {
                Some(s) => Some((s, table.unit(s, None, "")?)),
                None => None,
            },
        },
        (None, Some(r), None) => Response::Relative(r),
        (None, None, Some(i)) => Response::Intrinsic {
            value: (i, table.unit(i, None, "")?),
            sd: match table.column(Role::IntrinsicViscositySd) {
                Some(s) if table.cells[s].unit.is_some() => Some((s, table.unit(s, None, "")?)),
                Some(s) => Some((s, table.unit(i, None, "")?)),
                None => None,
            },
        },
        (_, _, Some(c)) | (_, Some(c), _) => {
            return Err(header_error(
                c,
                "give one of 'flow time', 'relative viscosity' and 'intrinsic viscosity', not several",
            ))
        }
        (None, None, None) => {
            return Err(header_error(0, "no 'flow time', 'relative viscosity' or 'intrinsic viscosity' column"))
        }
    };
    let concentration = match response {
        Response::Intrinsic { .. } => None,
        _ => {
            let c = table.require(Role::Concentration)?;
            let unit: ConcentrationUnit = table.unit(c, options.concentration_unit, "--concentration-unit")?;
            Some((c, unit))
        }
    };
    let molar_mass = match table.column(Role::MolarMass) {
        Some(m) => Some((m, table.unit::<MolarMassUnit>(m, None, "")?)),
        None => None,
    };
    let fraction = table.column(Role::Fraction);
    if fraction.is_none() && molar_mass.is_none() {
        return Err(header_error(
            0,
            "viscometry needs a 'fraction' or a 'molar mass (g/mol)' column to tell the fractions apart",
        ));
    }

    // Solvent flow times of each series and temperature (rows of concentration 0).
    let mut solvent_times: Vec<(String, f64, Vec<f64>)> = Vec::new();
    let mut rows = Vec::new();
    let mut solutions = Vec::new();
    for row in table.rows() {
        let series = table.series(row)?.into_owned();
        let temperature_k = temperatures[row];
        let c = match concentration {
            Some((col, unit)) => Some(table.checked(
                col,
                row,
                |x| unit.to_si(x),
                matches!(response, Response::FlowTimes { .. }),
                "a concentration must be greater than zero",
            )?),
            None => None,
        };
        if let (Response::FlowTimes { time: (col, unit), .. }, Some(0.0)) = (&response, c) {
            let t = table.checked(*col, row, |x| unit.to_si(x), false, "a flow time must be greater than zero")?;
            match solvent_times
                .iter_mut()
                .find(|(s, tk, _)| *s == series && (tk - temperature_k).abs() <= TEMPERATURE_GROUPING_K)
            {
                Some((_, _, times)) => times.push(t),
                None => solvent_times.push((series, temperature_k, vec![t])),
            }
            continue;
        }
        let fraction_name = match fraction {
            Some(col) if !table.text(col, row).is_empty() => Some(table.text(col, row).to_string()),
            Some(col) if molar_mass.is_none() => {
                return Err(table.refuse(col, row, "the fraction's name is missing: name every fraction"))
            }
            _ => None,
        };
        let molar_mass = match molar_mass {
            Some((col, unit)) if !table.text(col, row).is_empty() || fraction_name.is_none() => {
                Some(table.checked(col, row, |x| unit.to_si(x), false, "a molar mass must be greater than zero")?)
            }
            _ => None,
        };
        let value = match &response {
            Response::Relative(col) => {
                let r = table.number(*col, row)?;
                if r <= 1.0 {
                    return Err(table.refuse(
                        *col,
                        row,
                        "a relative viscosity must be greater than 1 (a solution is more viscous than its solvent)",
                    ));
                }
                ViscosityValue::Relative { concentration: c.unwrap_or(f64::NAN), relative_viscosity: r }
            }
            Response::Intrinsic { value: (col, unit), sd } => ViscosityValue::Intrinsic {
                value: table.checked(
                    *col,
                    row,
                    |x| unit.to_si(x),
                    false,
                    "an intrinsic viscosity must be greater than zero",
                )?,
                sd: match sd {
                    Some((s, u)) if !table.text(*s, row).is_empty() => Some(table.checked(
                        *s,
                        row,
                        |x| u.to_si(x),
                        false,
                        "a standard deviation must be greater than zero (leave it empty if unknown)",
                    )?),
                    _ => None,
                },
            },
            Response::FlowTimes { time: (col, unit), solvent } => {
                let t = table.checked(*col, row, |x| unit.to_si(x), false, "a flow time must be greater than zero")?;
                let given = match solvent {
                    Some((s, u)) if !table.text(*s, row).is_empty() => Some(table.checked(
                        *s,
                        row,
                        |x| u.to_si(x),
                        false,
                        "a solvent flow time must be greater than zero",
                    )?),
                    _ => None,
                };
                solutions.push((rows.len(), row, t, given));
                ViscosityValue::Relative { concentration: c.unwrap_or(f64::NAN), relative_viscosity: f64::NAN }
            }
        };
        rows.push(ViscometryRow {
            series,
            fraction: fraction_name,
            molar_mass,
            temperature_k,
            value,
            line: table.line(row),
        });
    }
    // Flow times become relative viscosities, t/t0 (the kinetic-energy correction and the
    // solution's density differing from the solvent's are neglected, common practice in dilute
    // solution), once every solvent row is known.
    if let Response::FlowTimes { time: (col, _), .. } = response {
        for (index, row, t, given) in solutions {
            let r = &mut rows[index];
            let t0 = given.or_else(|| {
                solvent_times
                    .iter()
                    .find(|(s, tk, _)| *s == r.series && (tk - r.temperature_k).abs() <= TEMPERATURE_GROUPING_K)
                    .map(|(_, _, times)| times.iter().sum::<f64>() / times.len() as f64)
            });
            let Some(t0) = t0 else {
                return Err(table.refuse(
                    col,
                    row,
                    "no solvent flow time at this temperature: add a row of concentration 0 for the solvent, or a 'solvent flow time (s)' column",
                ));
            };
            if t <= t0 {
                return Err(table.refuse(
                    col,
                    row,
                    &format!("this solution flows faster than its solvent (t0 = {t0} s): a solution's flow time must be longer than the solvent's"),
                ));
            }
            if let ViscosityValue::Relative { relative_viscosity, .. } = &mut r.value {
                *relative_viscosity = t / t0;
            }
        }
    }
    refuse_single_fraction(table, &rows, fraction.or(molar_mass.map(|(c, _)| c)).unwrap_or(0))?;
    Ok(FileContents { viscometry: rows, ..FileContents::default() })
}

/// Mark–Houwink and Stockmayer–Fixman compare fractions: a series of one fraction is refused.
fn refuse_single_fraction(table: &Table, rows: &[ViscometryRow], col: usize) -> Result<(), InputError> {
    let mut seen: Vec<(&str, String, usize)> = Vec::new();
    let mut several: Vec<&str> = Vec::new();
    for r in rows {
        match seen.iter().find(|(s, _, _)| *s == r.series) {
            Some((_, key, _)) if *key != r.fraction_key() => several.push(&r.series),
            Some(_) => {}
            None => seen.push((&r.series, r.fraction_key(), r.line)),
        }
    }
    match seen.iter().find(|(s, _, _)| !several.contains(s)) {
        Some((series, key, line)) => Err(InputError::at(
            table.name,
            *line,
            Some(&table.cells[col].raw),
            Some(key),
            format!(
                "series '{series}' holds one fraction only: the Mark–Houwink exponent and the Stockmayer–Fixman line need three or more fractions (told apart by 'fraction' or 'molar mass')"
            ),
        )),
        None => Ok(()),
    }
}
