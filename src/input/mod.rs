//! Reading lab CSV files: the only place polars and raw bytes are seen.
//!
//! The bytes are scanned once for structure (header, line numbers, ragged rows, duplicated
//! columns), then parsed by polars with every column as text, and each value is validated
//! here so that a refusal can name the file, the line, the column and the value.

mod columns;
mod scan;

pub use columns::{parse_header_cell, HeaderCell, Role};
pub use scan::{scan, Layout, RecordLine};

use crate::dataset::{Measurement, Origin};
use crate::error::InputError;
use crate::units::{head_to_pressure_pa, ConcentrationUnit, DensityUnit, LengthUnit, PressureUnit, TemperatureUnit};
use polars::prelude::*;
use std::io::Cursor;
use std::str::FromStr;

/// Settings that supply what a file's header leaves out.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct ReadOptions {
    /// Unit for a `temperature` header without one.
    pub temperature_unit: Option<TemperatureUnit>,
    /// Unit for a `concentration` header without one.
    pub concentration_unit: Option<ConcentrationUnit>,
    /// Unit for a `pressure` (and `pressure sd`) header without one.
    pub pressure_unit: Option<PressureUnit>,
    /// Solvent density in kg/m³ for `head` columns, when the file has no density column.
    pub solvent_density_kg_per_m3: Option<f64>,
}

/// What one file held, in SI units.
#[derive(Debug, Clone, PartialEq)]
pub struct FileContents {
    /// Readings, in file order (blank lines dropped).
    pub measurements: Vec<Measurement>,
    /// Header cells that were not recognised and so were not used.
    pub ignored_columns: Vec<String>,
}

/// Reads one osmometry CSV from memory. `name` is how the file is named in messages and is
/// the series name when there is no `series` column; `file_index` goes into each [`Origin`].
pub fn read_osmometry(
    name: &str,
    file_index: usize,
    bytes: &[u8],
    options: &ReadOptions,
) -> Result<FileContents, InputError> {
    if let Err(e) = std::str::from_utf8(bytes) {
        let before = &bytes[..e.valid_up_to()];
        let line = 1 + before.iter().filter(|b| **b == b'\n').count();
        let line_start = before.iter().rposition(|b| *b == b'\n').map_or(0, |p| p + 1);
        let field = 1 + before[line_start..].iter().filter(|b| **b == b',').count();
        return Err(InputError::at(
            name,
            line,
            Some(&format!("field {field}")),
            None,
            "the text is not UTF-8 (perhaps Latin-1 or UTF-16 from a spreadsheet); save it as UTF-8 CSV",
        ));
    }
    let layout =
        scan(bytes).ok_or_else(|| InputError::file(name, "the file is empty: expected a header line and data rows"))?;
    let cells: Vec<HeaderCell> = layout.header.iter().map(|h| parse_header_cell(h)).collect();
    let columns = Columns::locate(name, layout.header_line, &cells)?;
    check_structure(name, &layout)?;

    let frame = parse_with_polars(name, bytes)?;
    if frame.height() != layout.records.len() {
        return Err(InputError::file(
            name,
            format!(
                "the CSV reader found {} rows where {} were expected; check the quoting",
                frame.height(),
                layout.records.len()
            ),
        ));
    }
    let text = |index: usize| -> Result<Vec<Option<String>>, InputError> {
        let column = &frame.columns()[index];
        let values = column
            .as_materialized_series()
            .str()
            .map_err(|e| {
                InputError::file(name, format!("column '{}' could not be read as text: {e}", cells[index].raw))
            })?
            .iter()
            .map(|v| v.map(str::to_string))
            .collect();
        Ok(values)
    };

    let units = Units::resolve(name, layout.header_line, &cells, &columns, options)?;
    let series_name = file_stem(name);
    let series_col = columns.series.map(text).transpose()?;
    let temperature = text(columns.temperature)?;
    let concentration = text(columns.concentration)?;
    let pressure = match columns.pressure {
        PressureSource::Pressure(i) => text(i)?,
        PressureSource::Head(i) => text(i)?,
    };
    let sd = columns.pressure_sd.map(text).transpose()?;
    let density = columns.solvent_density.map(text).transpose()?;

    let mut measurements = Vec::with_capacity(layout.records.len());
    for (row, record) in layout.records.iter().enumerate() {
        if record.blank {
            continue;
        }
        let line = record.line;
        let value = |values: &[Option<String>], index: usize| -> Result<f64, InputError> {
            number(name, line, &cells[index].raw, values[row].as_deref())
        };
        let t_k = units.temperature.to_kelvin(value(&temperature, columns.temperature)?);
        if t_k <= 0.0 {
            return Err(refuse(
                name,
                line,
                &cells[columns.temperature],
                &temperature[row],
                "a temperature must lie above absolute zero (0 K)",
            ));
        }
        let c = units.concentration.to_si(value(&concentration, columns.concentration)?);
        if c <= 0.0 {
            return Err(refuse(
                name,
                line,
                &cells[columns.concentration],
                &concentration[row],
                "a concentration must be greater than zero",
            ));
        }
        let pressure_pa = match units.pressure {
            PressureScale::Pressure(i, unit) => {
                let p = unit.to_si(value(&pressure, i)?);
                if p < 0.0 {
                    return Err(refuse(
                        name,
                        line,
                        &cells[i],
                        &pressure[row],
                        "an osmotic pressure cannot be negative",
                    ));
                }
                p
            }
            PressureScale::Head(i, unit) => {
                let h = unit.to_si(value(&pressure, i)?);
                if h < 0.0 {
                    return Err(refuse(name, line, &cells[i], &pressure[row], "a head cannot be negative"));
                }
                let rho = match (&density, columns.solvent_density, units.density) {
                    (Some(d), Some(j), Some(unit)) => {
                        let rho = unit.to_si(value(d, j)?);
                        if rho <= 0.0 {
                            return Err(refuse(name, line, &cells[j], &d[row], "a density must be greater than zero"));
                        }
                        rho
                    }
                    _ => options.solvent_density_kg_per_m3.ok_or_else(|| {
                        InputError::at(
                            name,
                            layout.header_line,
                            Some(&cells[i].raw),
                            None,
                            "a 'head' column needs the solvent density: add a 'solvent density (g/mL)' column or give --solvent-density",
                        )
                    })?,
                };
                head_to_pressure_pa(rho, h)
            }
        };
        let pressure_sd_pa = match (&sd, columns.pressure_sd, units.pressure_sd) {
            (Some(sd), Some(j), Some(unit)) => match sd[row].as_deref().map(str::trim).filter(|s| !s.is_empty()) {
                None => None,
                Some(_) => {
                    let s = unit.to_si(value(sd, j)?);
                    if s <= 0.0 {
                        return Err(refuse(
                            name,
                            line,
                            &cells[j],
                            &sd[row],
                            "a standard deviation must be greater than zero (leave it empty if unknown)",
                        ));
                    }
                    Some(s)
                }
            },
            _ => None,
        };
        let series = match &series_col {
            Some(values) => {
                let s = values[row].as_deref().map(str::trim).unwrap_or("");
                if s.is_empty() {
                    return Err(InputError::at(
                        name,
                        line,
                        Some(&cells[columns.series.unwrap_or(0)].raw),
                        None,
                        "the series name is empty",
                    ));
                }
                s.to_string()
            }
            None => series_name.clone(),
        };
        measurements.push(Measurement {
            series,
            temperature_k: t_k,
            concentration_kg_per_m3: c,
            pressure_pa,
            pressure_sd_pa,
            origin: Origin { file: file_index, line },
        });
    }
    if measurements.is_empty() {
        return Err(InputError::at(name, layout.header_line, None, None, "the header has no data rows under it"));
    }
    let ignored_columns = cells.iter().filter(|c| c.role.is_none()).map(|c| c.raw.clone()).collect();
    Ok(FileContents { measurements, ignored_columns })
}

/// The series name used when a file has no `series` column: the file name without folders
/// and extension.
pub fn file_stem(name: &str) -> String {
    std::path::Path::new(name).file_stem().map(|s| s.to_string_lossy().into_owned()).unwrap_or_else(|| name.to_string())
}

fn refuse(file: &str, line: usize, cell: &HeaderCell, value: &Option<String>, message: &str) -> InputError {
    InputError::at(file, line, Some(&cell.raw), value.as_deref().map(str::trim), message)
}

/// Parses one value as a finite number, or says why not.
fn number(file: &str, line: usize, column: &str, value: Option<&str>) -> Result<f64, InputError> {
    let text = value.map(str::trim).unwrap_or("");
    if text.is_empty() {
        return Err(InputError::at(file, line, Some(column), None, "the value is missing: expected a number"));
    }
    match f64::from_str(text) {
        Ok(v) if v.is_finite() => Ok(v),
        Ok(_) => Err(InputError::at(file, line, Some(column), Some(text), "expected a finite number")),
        Err(_) => Err(InputError::at(
            file,
            line,
            Some(column),
            Some(text),
            "expected a number with a decimal point (e.g. 1.5 or 2.5e-3), without thousands separators",
        )),
    }
}

fn check_structure(name: &str, layout: &Layout) -> Result<(), InputError> {
    let width = layout.header.len();
    for record in &layout.records {
        if record.blank || record.n_fields == width {
            continue;
        }
        let message = format!(
            "the row has {} fields but the header has {width}; a decimal comma or an unquoted comma inside a value splits a field",
            record.n_fields
        );
        let column = if record.n_fields < width {
            format!("{} (missing)", layout.header[record.n_fields])
        } else {
            format!("field {} (beyond the header)", width + 1)
        };
        return Err(InputError::at(name, record.line, Some(&column), None, message));
    }
    Ok(())
}

fn parse_with_polars(name: &str, bytes: &[u8]) -> Result<DataFrame, InputError> {
    CsvReadOptions::default()
        .with_has_header(true)
        .with_infer_schema_length(Some(0))
        .with_parse_options(CsvParseOptions::default().with_comment_prefix(Some("#")))
        .into_reader_with_file_handle(Cursor::new(bytes))
        .finish()
        .map_err(|e| InputError::file(name, format!("the CSV reader refused the file: {e}")))
}

/// Where the osmotic pressure comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum PressureSource {
    Pressure(usize),
    Head(usize),
}

/// Column indices of every role found in the header.
#[derive(Debug, Clone, Copy)]
struct Columns {
    series: Option<usize>,
    temperature: usize,
    concentration: usize,
    pressure: PressureSource,
    pressure_sd: Option<usize>,
    solvent_density: Option<usize>,
}

impl Columns {
    fn locate(file: &str, header_line: usize, cells: &[HeaderCell]) -> Result<Columns, InputError> {
        let mut found: Vec<(Role, usize)> = Vec::new();
        for (i, cell) in cells.iter().enumerate() {
            if cell.raw.is_empty() {
                return Err(InputError::at(
                    file,
                    header_line,
                    None,
                    None,
                    format!("header field {} is empty: every column needs a name", i + 1),
                ));
            }
            if let Some(role) = cell.role {
                if let Some((_, first)) = found.iter().find(|(r, _)| *r == role) {
                    return Err(InputError::at(
                        file,
                        header_line,
                        Some(&cell.raw),
                        None,
                        format!(
                            "the column '{}' appears twice (also as '{}'); keep one",
                            role.name(),
                            cells[*first].raw
                        ),
                    ));
                }
                found.push((role, i));
            }
        }
        let get = |role: Role| found.iter().find(|(r, _)| *r == role).map(|(_, i)| *i);
        let missing = |what: &str| {
            InputError::at(
                file,
                header_line,
                Some(what),
                None,
                "there is no such column; the header needs temperature, concentration and pressure (or head), each with its unit, e.g. 'temperature (C),concentration (g/mL),pressure (Pa)'",
            )
        };
        let pressure = match (get(Role::Pressure), get(Role::Head)) {
            (Some(i), None) => PressureSource::Pressure(i),
            (None, Some(i)) => PressureSource::Head(i),
            (Some(_), Some(i)) => {
                return Err(InputError::at(
                    file,
                    header_line,
                    Some(&cells[i].raw),
                    None,
                    "give either a 'pressure' or a 'head' column, not both",
                ))
            }
            (None, None) => return Err(missing("pressure")),
        };
        Ok(Columns {
            series: get(Role::Series),
            temperature: get(Role::Temperature).ok_or_else(|| missing("temperature"))?,
            concentration: get(Role::Concentration).ok_or_else(|| missing("concentration"))?,
            pressure,
            pressure_sd: get(Role::PressureSd),
            solvent_density: get(Role::SolventDensity),
        })
    }
}

#[derive(Debug, Clone, Copy)]
enum PressureScale {
    Pressure(usize, PressureUnit),
    Head(usize, LengthUnit),
}

/// The unit of every value column, from the header or, where it has none, from the options.
struct Units {
    temperature: TemperatureUnit,
    concentration: ConcentrationUnit,
    pressure: PressureScale,
    pressure_sd: Option<PressureUnit>,
    density: Option<DensityUnit>,
}

impl Units {
    fn resolve(
        file: &str,
        line: usize,
        cells: &[HeaderCell],
        columns: &Columns,
        options: &ReadOptions,
    ) -> Result<Units, InputError> {
        let pressure = match columns.pressure {
            PressureSource::Pressure(i) => {
                PressureScale::Pressure(i, unit_of(file, line, &cells[i], options.pressure_unit, "--pressure-unit")?)
            }
            PressureSource::Head(i) => PressureScale::Head(i, unit_of(file, line, &cells[i], None, "")?),
        };
        // A `pressure sd` header without a unit takes the pressure column's unit.
        let pressure_sd = match (columns.pressure_sd, pressure) {
            (Some(i), PressureScale::Pressure(_, p)) if cells[i].unit.is_none() && options.pressure_unit.is_none() => {
                Some(p)
            }
            (Some(i), _) => Some(unit_of(file, line, &cells[i], options.pressure_unit, "--pressure-unit")?),
            (None, _) => None,
        };
        let density = match columns.solvent_density {
            Some(i) => Some(unit_of(file, line, &cells[i], None, "")?),
            None => None,
        };
        Ok(Units {
            temperature: unit_of(
                file,
                line,
                &cells[columns.temperature],
                options.temperature_unit,
                "--temperature-unit",
            )?,
            concentration: unit_of(
                file,
                line,
                &cells[columns.concentration],
                options.concentration_unit,
                "--concentration-unit",
            )?,
            pressure,
            pressure_sd,
            density,
        })
    }
}

/// The unit written in the header, or the one given by `flag` when the header has none.
/// A header unit that disagrees with the flag is refused rather than silently preferred.
fn unit_of<U>(file: &str, line: usize, cell: &HeaderCell, fallback: Option<U>, flag: &str) -> Result<U, InputError>
where
    U: FromStr<Err = crate::units::UnknownUnit> + Copy + PartialEq + std::fmt::Display,
{
    match (&cell.unit, fallback) {
        (Some(text), fallback) => {
            let unit = text
                .parse::<U>()
                .map_err(|e| InputError::at(file, line, Some(&cell.raw), Some(text), e.to_string()))?;
            match fallback {
                Some(f) if f != unit => Err(InputError::at(
                    file,
                    line,
                    Some(&cell.raw),
                    Some(text),
                    format!("the header says '{unit}' but {flag} says '{f}'; keep one"),
                )),
                _ => Ok(unit),
            }
        }
        (None, Some(unit)) => Ok(unit),
        (None, None) => {
            let example = "".parse::<U>().err().map(|e| e.accepted).unwrap_or_default();
            let hint = if flag.is_empty() { String::new() } else { format!(" or give {flag}") };
            Err(InputError::at(
                file,
                line,
                Some(&cell.raw),
                None,
                format!(
                    "the column has no unit: write it after the name, e.g. '{} ({})'{hint}; accepted: {example}",
                    cell.name,
                    example.split(", ").next().unwrap_or("")
                ),
            ))
        }
    }
}
