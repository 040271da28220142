//! Reading lab CSV files: the only place polars and raw bytes are seen.
//!
//! The bytes are scanned once for structure (header, line numbers, ragged rows, duplicated
//! columns), then parsed by polars with every column as text, and each value is validated
//! here so that a refusal can name the file, the line, the column and the value.
//!
//! The kind of file is recognised from its columns: `pressure` or `head` → osmometry
//! readings; `a2` → A2 already fitted at each temperature; `chi` → χ at each temperature;
//! `critical temperature` → fractions; `kc/r` or `rayleigh ratio` → light scattering;
//! `flow time`, `relative viscosity` or `intrinsic viscosity` → viscometry.
//!
//! Files: `checks` (bytes before parsing) → `scan` (records and line numbers) →
//! `table` (polars' text columns, each value parsed and checked) → one reader per kind of
//! file (`osmometry`, `tabulated`, `critical`, `light_scattering`, `viscometry`; `solvents` for the
//! solvents table); `blocks` reads a large osmometry file a block at a time, `workbook`
//! and `separators` turn spreadsheets and `;`/tab files into the same CSV text, `columns`
//! recognises header cells and their units.

mod blocks;
mod checks;
mod columns;
mod critical;
mod light_scattering;
mod osmometry;
mod scan;
mod separators;
mod solvents;
mod table;
mod tabulated;
mod viscometry;
mod workbook;

pub use blocks::{read_source, BlockReader, Opened, BLOCK_BYTES};
pub use columns::{parse_header_cell, HeaderCell, Role};
pub use scan::{scan, Layout, RecordLine};
pub use workbook::{column_letters, is_workbook};

pub use checks::first_hidden_character;
use checks::*;
use critical::*;
use light_scattering::*;
use osmometry::*;
pub use solvents::{read_solvents, SolventProperties};
pub use table::map_columns;
use table::*;
use tabulated::*;
use viscometry::*;

use crate::dataset::{CriticalRow, Quantity, ScatteringRow, TemperaturePoint, Volumes};
use crate::dataset::{ExcludedReading, GroupedReadings, Measurement, Origin, TabulatedRow};
use crate::error::InputError;
use crate::units::{
    head_to_pressure_pa, A2Unit, AngleUnit, ConcentrationUnit, DensityUnit, KcOverRUnit, LengthUnit, MolarMassUnit,
    MolarVolumeUnit, PressureUnit, RayleighUnit, SpecificVolumeUnit, TemperatureUnit, UnknownUnit,
};
use polars::prelude::*;
use std::collections::HashMap;
use std::io::Cursor;
use std::io::Read;
use std::str::FromStr;

/// Above this every temperature of a `(C)` column looks like kelvin: polymer solutions are not
/// studied above 200 °C, and room temperature in kelvin (≈ 293) would read as such.
pub const PLAUSIBLE_CELSIUS_MAX: f64 = 200.0;
/// Above this every concentration of a `(g/mL)` column looks like g/L: dilute solutions are
/// a few thousandths of a g/mL.
pub const PLAUSIBLE_G_PER_ML_MAX: f64 = 0.5;

/// No polymer solution holds more than about its own density of polymer (≈ 1–1.5 g/mL);
/// above 2 g/mL (2000 kg/m³) a concentration is a slip, and it would overflow the arithmetic.
pub const MAX_CONCENTRATION_KG_PER_M3: f64 = 2000.0;
/// Below 1 µg/L (10⁻⁶ kg/m³) a solution's osmotic pressure is far below any osmometer's
/// resolution; a smaller concentration is a slip (1e-300 made every AICc infinite).
pub const MIN_CONCENTRATION_KG_PER_M3: f64 = 1e-6;
/// No measured quantity of these files (pressure, head, density, SD) comes near 10¹² in SI units;
/// below it, the squares a fit forms stay finite (a pressure of 1e308 Pa made NaN ± NaN).
pub const MAX_MAGNITUDE_SI: f64 = 1e12;

/// Above 1000 K every polymer has decomposed and every solvent boiled off: a temperature there
/// is a slip (1e308 °C summed to an infinite temperature).
pub const MAX_TEMPERATURE_K: f64 = 1000.0;

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
    /// Densities by solvent name (kg/m³) from a solvents table, for `head` columns: a row takes
    /// its solvent's (its `solvent` column, else its series name); they win over the flag.
    pub solvent_densities: Vec<(String, f64)>,
    /// Light-scattering optical constant K, mol m²/kg² (for `rayleigh ratio` columns).
    pub optical_constant: Option<f64>,
    /// Solvent refractive index n0 (for angles, and K when not given).
    pub refractive_index: Option<f64>,
    /// Refractive-index increment dn/dc, m³/kg (for K when not given).
    pub dn_dc: Option<f64>,
    /// Vacuum wavelength λ0, m.
    pub wavelength_m: Option<f64>,
    /// Refuse the whole file at the first value that cannot be used, instead of only that
    /// value's series (`--strict`).
    pub strict: bool,
    /// The sheet of a workbook to read (the first when `None`).
    pub sheet: Option<String>,
    /// Header cells to read as a role whatever their name (`--column temperature="Temp (°C)"`).
    pub columns: Vec<(Role, String)>,
}

/// A series refused for a value that cannot be used (osmometry files of several series): its
/// readings are left out, the other series are read.
#[derive(Debug, Clone, PartialEq)]
pub struct RefusedSeries {
    /// The series' name (or `line N` where the name itself is missing).
    pub series: String,
    /// The first refusal among its readings, with file, line, column and value.
    pub error: InputError,
}

/// What one file held, in SI units.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct FileContents {
    /// Osmometry readings, grouped into series and temperatures as they were read.
    pub readings: GroupedReadings,
    /// A2 or χ per temperature, for tables of those.
    pub tabulated: Vec<TabulatedRow>,
    /// What `tabulated` holds.
    pub quantity: Option<Quantity>,
    /// v̄ and V1 per series, where the file gives them.
    pub volumes: Vec<(String, Volumes)>,
    /// The solvent of each series, where a `solvent` column names it.
    pub solvents: Vec<(String, String)>,
    /// Critical temperatures of fractions, for the Shultz–Flory route.
    pub critical: Vec<CriticalRow>,
    /// Static light-scattering readings.
    pub scattering: Vec<ScatteringRow>,
    /// Viscometry rows (flow times already turned into relative viscosities).
    pub viscometry: Vec<crate::dataset::ViscometryRow>,
    /// Header cells that were not recognised and so were not used.
    pub ignored_columns: Vec<String>,
    /// Series refused for a value, in the order they were met.
    pub refused: Vec<RefusedSeries>,
    /// Rows of tables, critical temperatures or light scattering set aside by the `exclude`
    /// column: (series, line, reason). Osmometry readings travel with their series instead.
    pub excluded_rows: Vec<(String, usize, String)>,
}

/// Reads one CSV from memory. `name` is how the file is named in messages and is the series
/// name when there is no `series` column; `file_index` goes into each [`Origin`].
pub fn read_file(
    name: &str,
    file_index: usize,
    bytes: &[u8],
    options: &ReadOptions,
) -> Result<FileContents, InputError> {
    let text = with_commas(bytes);
    read_table(Table::parse(name, file_index, &text, &options.columns)?, options)
}

/// `bytes` as comma-separated text: borrowed when they are, rewritten when the header is
/// separated by semicolons or tabs ([`separators`]).
fn with_commas(bytes: &[u8]) -> std::borrow::Cow<'_, [u8]> {
    let header = bytes
        .split(|&b| b == b'\n')
        .map(|l| l.strip_prefix(scan::BOM).unwrap_or(l))
        .find(|l| !l.trim_ascii().is_empty() && l.first() != Some(&b'#'));
    if header.is_none_or(|h| separators::separator_of(h) == b',') {
        return std::borrow::Cow::Borrowed(bytes);
    }
    let mut source = bytes;
    let mut rewritten = separators::Separators::new(&mut source);
    let mut out = Vec::new();
    // Reading from memory cannot fail.
    let _ = rewritten.read_to_end(&mut out);
    std::borrow::Cow::Owned(out)
}

/// Reads one sheet of a workbook (`options.sheet`, else the first) as [`read_file`] reads its
/// CSV export; every refusal names the sheet and the cell.
pub fn read_workbook(
    name: &str,
    file_index: usize,
    bytes: Vec<u8>,
    options: &ReadOptions,
) -> Result<FileContents, InputError> {
    let sheet = workbook::sheet_as_csv(name, bytes, options.sheet.as_deref())?;
    let header: Vec<String> = scan(&sheet.csv).map(|l| l.header).unwrap_or_default();
    let locate = |e: InputError| workbook::in_sheet(e, name, &sheet, &header);
    let mut contents = read_file(name, file_index, &sheet.csv, options).map_err(locate)?;
    for refused in &mut contents.refused {
        refused.error = locate(refused.error.clone());
    }
    Ok(contents)
}

/// [`read_file`] that frees the file's bytes as soon as the CSV reader has its text (a
/// campaign's bytes and text would otherwise sit in memory together with its values).
fn read_file_owned(
    name: &str,
    file_index: usize,
    bytes: Vec<u8>,
    options: &ReadOptions,
) -> Result<FileContents, InputError> {
    let table = Table::parse(name, file_index, &with_commas(&bytes), &options.columns)?;
    drop(bytes);
    read_table(table, options)
}

fn read_table(mut table: Table, options: &ReadOptions) -> Result<FileContents, InputError> {
    let name = table.name;
    if table.has(Role::Pressure) || table.has(Role::Head) {
        let mut refused = Vec::new();
        let columns = read_osmometry_sparing(&mut table, options, &mut refused)?;
        // In file order, as a read in blocks meets them.
        refused.sort_by_key(|r| r.error.line);
        let contents = FileContents {
            refused,
            volumes: without_rows(table.volumes()?),
            solvents: without_rows(table.solvents()?),
            ignored_columns: table.ignored_columns(),
            ..FileContents::default()
        };
        // The text (the larger part) is freed before the readings are grouped.
        drop(table);
        return Ok(FileContents { readings: columns.group(), ..contents });
    }
    // Other routes' rows marked in the `exclude` column are set aside, and named in the
    // run's warnings.
    let excluded_rows = set_aside_rows(&mut table);
    let mut contents = if table.has(Role::A2) || table.has(Role::Chi) {
        read_tabulated(&table, options)?
    } else if table.has(Role::CriticalTemperature) {
        read_critical(&table)?
    } else if table.has(Role::KcOverR) || table.has(Role::RayleighRatio) {
        read_scattering(&table, options)?
    } else if table.has(Role::FlowTime) || table.has(Role::RelativeViscosity) || table.has(Role::IntrinsicViscosity) {
        read_viscometry(&table, options)?
    } else {
        return Err(InputError::at(
            name,
            table.layout.header_line,
            Some("pressure"),
            None,
            "there is no such column; the header needs temperature, concentration and pressure (or head), each with its unit, e.g. 'temperature (C),concentration (g/mL),pressure (Pa)' — or temperature and 'a2 (mol mL/g2)' or 'chi'",
        ));
    };
    contents.volumes = without_rows(table.volumes()?);
    contents.solvents = without_rows(table.solvents()?);
    contents.ignored_columns = table.ignored_columns();
    contents.excluded_rows = excluded_rows;
    Ok(contents)
}

/// Sets aside the rows whose `exclude` cell holds text: (series, line, reason) of each.
fn set_aside_rows(table: &mut Table) -> Vec<(String, usize, String)> {
    let Some(col) = table.column(Role::Exclude) else { return Vec::new() };
    let rows: Vec<usize> = table.rows().filter(|&r| !table.text(col, r).is_empty()).collect();
    let found: Vec<(String, usize, String)> = rows
        .iter()
        .map(|&r| {
            let series = table.series(r).map_or_else(|_| String::new(), |s| s.into_owned());
            (series, table.line(r), table.text(col, r).to_string())
        })
        .collect();
    for r in rows {
        table.layout.records[r].blank = true;
    }
    found
}

/// The series name used when a file has no `series` column: the file name without folders
/// and extension.
pub fn file_stem(name: &str) -> String {
    std::path::Path::new(name).file_stem().map(|s| s.to_string_lossy().into_owned()).unwrap_or_else(|| name.to_string())
}
