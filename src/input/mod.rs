//! Reading lab CSV files: the only place polars and raw bytes are seen.
//!
//! The bytes are scanned once for structure (header, line numbers, ragged rows, duplicated
//! columns), then parsed by polars with every column as text, and each value is validated
//! here so that a refusal can name the file, the line, the column and the value.
//!
//! The kind of file is recognised from its columns: `pressure` or `head` → osmometry
//! readings; `a2` → A2 already fitted at each temperature; `chi` → χ at each temperature.

mod blocks;
mod columns;
mod scan;
mod separators;
mod workbook;

pub use blocks::{read_source, BlockReader, Opened, BLOCK_BYTES};
pub use columns::{parse_header_cell, HeaderCell, Role};
pub use scan::{scan, Layout, RecordLine};
pub use workbook::{column_letters, is_workbook};

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

/// The series name used when a file has no `series` column: the file name without folders
/// and extension.
pub fn file_stem(name: &str) -> String {
    std::path::Path::new(name).file_stem().map(|s| s.to_string_lossy().into_owned()).unwrap_or_else(|| name.to_string())
}

/// Refuses text whose lines end with a carriage return alone (old Mac exports), which would
/// otherwise read as one long header line with nothing under it.
fn check_line_ends(name: &str, bytes: &[u8]) -> Result<(), InputError> {
    if memchr::memchr(b'\n', bytes).is_none() && memchr::memchr(b'\r', bytes).is_some() {
        return Err(InputError::at(
            name,
            1,
            None,
            None,
            "the lines end with a carriage return alone (an old Mac export): save the file with LF or CRLF line ends",
        ));
    }
    Ok(())
}

fn check_utf8(name: &str, bytes: &[u8]) -> Result<(), InputError> {
    check_utf8_from(name, bytes, 1)
}

/// [`check_utf8`] for bytes that start on line `first_line` of the file; the text must also
/// hold no character that acts instead of being shown ([`first_hidden_character`]).
fn check_utf8_from(name: &str, bytes: &[u8], first_line: usize) -> Result<(), InputError> {
    // UTF-16 without a byte-order mark is valid UTF-8 when its text is ASCII: every other byte
    // is zero. Said as such, not as a control character or a decimal comma.
    let start = &bytes[..bytes.len().min(256)];
    if start.len() >= 4 && start.iter().filter(|b| **b == 0).count() * 3 >= start.len() {
        return Err(InputError::at(
            name,
            first_line,
            None,
            None,
            "the text looks like UTF-16 (every other byte is zero), as some spreadsheets save it; save it as UTF-8 CSV",
        ));
    }
    let e = match std::str::from_utf8(bytes) {
        Ok(text) => return check_hidden_from(name, text, first_line),
        Err(e) => e,
    };
    let (line, field) = line_and_field(&bytes[..e.valid_up_to()], first_line);
    Err(InputError::at(
        name,
        line,
        Some(&format!("field {field}")),
        None,
        "the text is not UTF-8 (perhaps Latin-1 or UTF-16 from a spreadsheet); save it as UTF-8 CSV",
    ))
}

/// The line and 1-based comma-separated field at the end of `before` (text from the start of
/// line `first_line`).
fn line_and_field(before: &[u8], first_line: usize) -> (usize, usize) {
    let line = first_line + before.iter().filter(|b| **b == b'\n').count();
    let line_start = before.iter().rposition(|b| *b == b'\n').map_or(0, |p| p + 1);
    (line, 1 + before[line_start..].iter().filter(|b| **b == b',').count())
}

/// The first character of `text` that would act on a terminal, a spreadsheet or an XML reader
/// instead of being shown (a series name that clears the screen or breaks every SVG): C0 and
/// C1 controls other than tab and line ends, DEL, the bidirectional overrides and isolates,
/// and the noncharacters U+FFFE and U+FFFF. Returns its byte offset.
pub fn first_hidden_character(text: &str) -> Option<(usize, char)> {
    let bytes = text.as_bytes();
    let mut i = 0;
    while i < bytes.len() {
        let b = bytes[i];
        if (0x20..0x7f).contains(&b) || matches!(b, b'\t' | b'\n' | b'\r') {
            i += 1;
            continue;
        }
        let ch = text[i..].chars().next()?;
        if ch.is_control() || matches!(ch, '\u{202A}'..='\u{202E}' | '\u{2066}'..='\u{2069}' | '\u{FFFE}' | '\u{FFFF}')
        {
            return Some((i, ch));
        }
        i += ch.len_utf8();
    }
    None
}

/// Refuses text holding a [`first_hidden_character`], naming its line, field and code point.
fn check_hidden_from(name: &str, text: &str, first_line: usize) -> Result<(), InputError> {
    let Some((at, ch)) = first_hidden_character(text) else { return Ok(()) };
    let (line, field) = line_and_field(&text.as_bytes()[..at], first_line);
    Err(InputError::at(
        name,
        line,
        Some(&format!("field {field}")),
        None,
        format!(
            "the text holds an invisible control character (U+{:04X}), which could act on a terminal or a spreadsheet; remove it",
            ch as u32
        ),
    ))
}

/// The refusal of a line longer than [`scan::MAX_RECORD_BYTES`], at `field` (its header name
/// when known).
fn too_long(name: &str, line: usize, column: Option<&str>, field: usize) -> InputError {
    let column = column.map_or_else(|| format!("field {field}"), str::to_string);
    InputError::at(
        name,
        line,
        Some(&column),
        None,
        format!(
            "the line is longer than {} MB, far more than any reading needs: a damaged file, or not a data file",
            scan::MAX_RECORD_BYTES >> 20
        ),
    )
}

fn check_structure(name: &str, layout: &Layout) -> Result<(), InputError> {
    let width = layout.header.len();
    for record in &layout.records {
        if let Some(field) = record.too_long {
            return Err(too_long(name, record.line, layout.header.get(field - 1).map(String::as_str), field));
        }
        // A quoting problem in one field, named by its header (or position).
        let in_field = |field: usize, message: &str| {
            let column = layout.header.get(field - 1).cloned().unwrap_or_else(|| format!("field {field}"));
            InputError::at(name, record.line, Some(&column), None, message)
        };
        if let Some(field) = record.unclosed_quote {
            return Err(in_field(
                field,
                "a double quote opens here and is never closed: remove it, or close it after the value",
            ));
        }
        if let Some(field) = record.stray_quote {
            return Err(in_field(
                field,
                "text follows a closing quote (as in \"4.00\"x): quote the whole value, or remove the quotes",
            ));
        }
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

/// Parses CSV text with polars, every column as text (one reading mode: our own parse of each
/// value then quotes it in any refusal); `threads` limits polars' own threads (a block of a
/// large file is parsed on one, while the series before it are analysed).
fn parse_with_polars(name: &str, bytes: &[u8], threads: Option<usize>) -> Result<DataFrame, InputError> {
    // A `#` line is a comment whatever it holds (polars would open a quoted field at a quote in it).
    let bytes = scan::comment_quotes_neutralised(bytes);
    CsvReadOptions::default()
        .with_n_threads(threads)
        .with_has_header(true)
        .with_infer_schema_length(Some(0))
        .with_parse_options(CsvParseOptions::default().with_comment_prefix(Some("#")))
        .into_reader_with_file_handle(Cursor::new(bytes.as_ref()))
        .finish()
        .map_err(|e| InputError::file(name, format!("the CSV reader refused the file: {e}")))
}

/// Header cells that were not recognised and so are not used.
fn ignored_columns(cells: &[HeaderCell]) -> Vec<String> {
    cells.iter().filter(|c| c.role.is_none() && !c.raw.is_empty()).map(|c| c.raw.clone()).collect()
}

/// The index after the last header cell with a name: the unnamed columns from there on are
/// trailing.
fn unnamed_from(cells: &[HeaderCell]) -> usize {
    cells.iter().rposition(|c| !c.raw.is_empty()).map_or(0, |i| i + 1)
}

/// Gives the header cells named in `--column ROLE=HEADER` their role (matched on the cell as
/// written, case and surrounding spaces aside); a column that had the role by its own name
/// loses it.
pub fn map_columns(cells: &mut [HeaderCell], columns: &[(Role, String)]) {
    for (role, header) in columns {
        let wanted = header.trim().to_lowercase();
        if !cells.iter().any(|c| c.raw.to_lowercase() == wanted) {
            continue;
        }
        for cell in cells.iter_mut() {
            if cell.raw.to_lowercase() == wanted {
                cell.role = Some(*role);
            } else if cell.role == Some(*role) {
                cell.role = None;
            }
        }
    }
}

fn locate_roles(file: &str, header_line: usize, cells: &[HeaderCell]) -> Result<HashMap<Role, usize>, InputError> {
    let mut found: HashMap<Role, usize> = HashMap::new();
    // Unnamed columns after the last named one are a spreadsheet export's habit: ignored (they
    // must hold no values, which `Table::from_frame` checks).
    let named = unnamed_from(cells);
    for (i, cell) in cells.iter().enumerate().take(named) {
        if cell.raw.is_empty() {
            return Err(InputError::at(
                file,
                header_line,
                Some(&format!("field {}", i + 1)),
                None,
                "the header field is empty: every column needs a name",
            ));
        }
        if let Some(role) = cell.role {
            if let Some(first) = found.get(&role) {
                return Err(InputError::at(
                    file,
                    header_line,
                    Some(&cell.raw),
                    None,
                    format!("the column '{}' appears twice (also as '{}'); keep one", role.name(), cells[*first].raw),
                ));
            }
            found.insert(role, i);
        }
    }
    let conflict = |a: Role, b: Role, what: &str| -> Result<(), InputError> {
        match (found.get(&a), found.get(&b)) {
            (Some(_), Some(&j)) => Err(InputError::at(file, header_line, Some(&cells[j].raw), None, what.to_string())),
            _ => Ok(()),
        }
    };
    conflict(Role::Pressure, Role::Head, "give either a 'pressure' or a 'head' column, not both")?;
    conflict(Role::A2, Role::Chi, "give either an 'a2' or a 'chi' column, not both")?;
    Ok(found)
}

/// The text columns of a frame polars read.
fn cells_of(name: &str, frame: &DataFrame) -> Result<Vec<StringChunked>, InputError> {
    frame
        .columns()
        .iter()
        .map(|c| c.as_materialized_series().str().cloned())
        .collect::<Result<Vec<_>, _>>()
        .map_err(|e| InputError::file(name, format!("a column could not be read as text: {e}")))
}

/// A value computed with: finite, and zero or normal (subnormal numbers, below 2.2e-308, are
/// typing slips, and they lose precision).
fn usable(v: f64) -> bool {
    v.is_finite() && (v == 0.0 || v.is_normal())
}

/// Whether a number's digits before any exponent hold a non-zero digit (`0.0e5` does not,
/// `1e-5000` does).
fn mantissa_is_nonzero(text: &str) -> bool {
    text.split(['e', 'E']).next().is_some_and(|m| m.bytes().any(|b| (b'1'..=b'9').contains(&b)))
}

/// One parsed file: its header cells, record lines and columns.
struct Table<'a> {
    name: &'a str,
    file_index: usize,
    cells: Vec<HeaderCell>,
    layout: Layout,
    columns: Vec<StringChunked>,
    roles: HashMap<Role, usize>,
    /// For one block of a file read in blocks: the column-wide checks are recorded here (does
    /// every value of this block exceed the limit, and the refusal at its first row) and
    /// decided once every block is read. `None` for a file read whole.
    deferred: Option<std::sync::Mutex<Vec<DeferredCheck>>>,
    /// Rows the `exclude` column set aside: (row, series, the reading as measured).
    excluded: Vec<(usize, std::sync::Arc<str>, ExcludedReading)>,
    /// Every refused value met by [`Table::parse_column`]: (row, column priority, refusal).
    bad_rows: std::sync::Mutex<Vec<(usize, usize, InputError)>>,
}

/// One column-wide check of one block (see [`Table::refuse_if_all_exceed`]).
struct DeferredCheck {
    column: usize,
    all_exceed: bool,
    refusal: Option<InputError>,
}

impl<'a> Table<'a> {
    /// Scans, checks and parses a CSV: header roles, ragged rows, UTF-8, at least one data row.
    fn parse(name: &'a str, file_index: usize, bytes: &[u8], columns: &[(Role, String)]) -> Result<Self, InputError> {
        check_utf8(name, bytes)?;
        check_line_ends(name, bytes)?;
        let layout = scan(bytes)
            .ok_or_else(|| InputError::file(name, "the file is empty: expected a header line and data rows"))?;
        let mut cells: Vec<HeaderCell> = layout.header.iter().map(|h| parse_header_cell(h)).collect();
        map_columns(&mut cells, columns);
        let roles = locate_roles(name, layout.header_line, &cells)?;
        check_structure(name, &layout)?;
        if layout.records.iter().all(|r| r.blank) {
            return Err(InputError::at(name, layout.header_line, None, None, "the header has no data rows under it"));
        }
        let frame = parse_with_polars(name, bytes, None)?;
        Table::from_frame(name, file_index, cells, layout, roles, frame, false)
    }

    /// A table over the text columns polars read for `layout`'s records; `deferred` for one
    /// block of a file read in blocks.
    fn from_frame(
        name: &'a str,
        file_index: usize,
        cells: Vec<HeaderCell>,
        layout: Layout,
        roles: HashMap<Role, usize>,
        frame: DataFrame,
        deferred: bool,
    ) -> Result<Self, InputError> {
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
        let columns = cells_of(name, &frame)?;
        for (i, text) in columns.iter().enumerate().skip(unnamed_from(&cells)) {
            let held =
                text.iter().zip(&layout.records).position(|(t, r)| !r.blank && t.is_some_and(|t| !t.trim().is_empty()));
            if let Some(row) = held {
                return Err(InputError::at(
                    name,
                    layout.records[row].line,
                    Some(&format!("field {} (no name in the header)", i + 1)),
                    text.get(row).map(str::trim),
                    "a column without a name holds a value: name the column in the header, or delete the value",
                ));
            }
        }
        let deferred = deferred.then(|| std::sync::Mutex::new(Vec::new()));
        Ok(Table {
            name,
            file_index,
            cells,
            layout,
            columns,
            roles,
            deferred,
            excluded: Vec::new(),
            bad_rows: std::sync::Mutex::new(Vec::new()),
        })
    }

    /// The column-wide checks recorded for a block (see [`Table::deferred`]).
    fn take_deferred(&self) -> Vec<DeferredCheck> {
        self.deferred.as_ref().map_or(Vec::new(), |d| std::mem::take(&mut *d.lock().unwrap_or_else(|p| p.into_inner())))
    }

    fn ignored_columns(&self) -> Vec<String> {
        ignored_columns(&self.cells)
    }

    fn has(&self, role: Role) -> bool {
        self.roles.contains_key(&role)
    }

    fn column(&self, role: Role) -> Option<usize> {
        self.roles.get(&role).copied()
    }

    fn require(&self, role: Role) -> Result<usize, InputError> {
        self.column(role).ok_or_else(|| {
            let found = self.cells.iter().map(|c| format!("'{}'", c.raw)).collect::<Vec<_>>().join(", ");
            let hint = match columns::likely_match(role, &self.cells) {
                Some(cell) => format!(
                    "; '{}' looks like it: rename it '{}' with its unit, or give --column {}=\"{}\"",
                    cell.raw,
                    role.name(),
                    role.name(),
                    cell.raw
                ),
                None => String::new(),
            };
            InputError::at(
                self.name,
                self.layout.header_line,
                Some(role.name()),
                None,
                format!(
                    "there is no such column; this kind of file needs a '{}' column with its unit (names accepted: {}; the header has {found}){hint}",
                    role.name(),
                    role.accepted_names()
                ),
            )
        })
    }

    fn text(&self, col: usize, row: usize) -> &str {
        self.columns[col].get(row).map(str::trim).unwrap_or("")
    }

    fn line(&self, row: usize) -> usize {
        self.layout.records[row].line
    }

    fn rows(&self) -> impl Iterator<Item = usize> + '_ {
        self.layout.records.iter().enumerate().filter(|(_, r)| !r.blank).map(|(i, _)| i)
    }

    /// Sets aside every row of the `series` named (and `rows` themselves, whose names may be
    /// missing) as if blank, so that reading again leaves them out; one pass over the rows.
    fn set_aside(&mut self, series: &std::collections::HashSet<String>, rows: &[usize]) {
        let of_series: Vec<usize> =
            self.rows().filter(|&r| self.series(r).is_ok_and(|name| series.contains(name.as_ref()))).collect();
        for &r in of_series.iter().chain(rows) {
            self.layout.records[r].blank = true;
        }
    }

    fn refuse(&self, col: usize, row: usize, message: &str) -> InputError {
        let value = self.text(col, row);
        InputError {
            of_reading: true,
            ..InputError::at(
                self.name,
                self.line(row),
                Some(&self.cells[col].raw),
                (!value.is_empty()).then_some(value),
                message,
            )
        }
    }

    /// A finite number, or a message that says what is wrong with the value.
    fn number(&self, col: usize, row: usize) -> Result<f64, InputError> {
        let text = self.text(col, row);
        if text.is_empty() {
            return Err(self.refuse(col, row, "the value is missing: expected a number"));
        }
        match f64::from_str(text) {
            // A non-zero literal read as zero (1e-5000) underflowed, like a subnormal one.
            Ok(v) if v == 0.0 && mantissa_is_nonzero(text) => {
                Err(self.refuse(col, row, "the number is too small to compute with (below 1e-307)"))
            }
            Ok(v) if usable(v) => Ok(v),
            Ok(v) if v.is_finite() => {
                Err(self.refuse(col, row, "the number is too small to compute with (below 1e-307)"))
            }
            Ok(_) => Err(self.refuse(col, row, "expected a finite number")),
            Err(_) if text.contains(',') => Err(self.refuse(
                col,
                row,
                "a comma inside a number: write decimals with a point (1.5, not 1,5) and no thousands separators",
            )),
            Err(_) => Err(self.refuse(
                col,
                row,
                "expected a number with a decimal point (e.g. 1.5 or 2.5e-3), without thousands separators",
            )),
        }
    }

    /// Refuses a column whose every value is implausible in its declared unit, which usually
    /// means the header names the wrong unit: `limit` is exceeded by all (`above`) rows.
    fn refuse_if_all_exceed(&self, col: usize, raw: &[f64], limit: f64, message: &str) -> Result<(), InputError> {
        let rows: Vec<usize> = self.rows().collect();
        let all_exceed = rows.iter().all(|&r| raw[r] > limit);
        if let Some(deferred) = &self.deferred {
            let refusal = rows.first().map(|&r| self.refuse_column(col, r, message));
            deferred.lock().unwrap_or_else(|p| p.into_inner()).push(DeferredCheck { column: col, all_exceed, refusal });
            return Ok(());
        }
        if !rows.is_empty() && all_exceed {
            return Err(self.refuse_column(col, rows[0], message));
        }
        Ok(())
    }

    /// A refusal of a column as a whole, quoting its value at `row`: it refuses the file.
    fn refuse_column(&self, col: usize, row: usize, message: &str) -> InputError {
        InputError { of_reading: false, ..self.refuse(col, row, message) }
    }

    /// A number that must be > 0 (or ≥ 0 when `zero_ok`), after conversion by `to_si`.
    fn checked(
        &self,
        col: usize,
        row: usize,
        to_si: impl Fn(f64) -> f64,
        zero_ok: bool,
        what: &str,
    ) -> Result<f64, InputError> {
        let v = to_si(self.number(col, row)?);
        if v < 0.0 || (!zero_ok && v == 0.0) {
            return Err(self.refuse(col, row, what));
        }
        Ok(v)
    }

    /// Every row of a column at once, in one pass down the column (a campaign has hundreds of
    /// thousands of rows): `convert` turns each number into its value or refuses it. Blank
    /// records, and empty cells where `allow_empty`, give NaN. Any value that does not parse
    /// cleanly goes through [`Table::number`], so the messages are the row-by-row ones; the
    /// error carries its row, for [`first_in_row_order`].
    fn parse_column(
        &self,
        col: usize,
        allow_empty: bool,
        convert: impl Fn(usize, f64) -> Result<f64, InputError>,
    ) -> Result<Vec<f64>, (usize, InputError)> {
        let mut out = Vec::with_capacity(self.layout.records.len());
        let text = &self.columns[col];
        // Every bad row is noted (for `read_osmometry_sparing`, which then sets all their series
        // aside in one pass); the first is returned.
        let mut first: Option<(usize, InputError)> = None;
        let mut noted = Vec::new();
        for (row, (text, record)) in text.iter().zip(&self.layout.records).enumerate() {
            let text = text.map_or("", str::trim);
            if record.blank || (allow_empty && text.is_empty()) {
                out.push(f64::NAN);
                continue;
            }
            let converted = match f64::from_str(text) {
                Ok(v) if usable(v) && !(v == 0.0 && mantissa_is_nonzero(text)) => convert(row, v),
                _ => Err(self.number(col, row).err().unwrap_or_else(|| self.refuse(col, row, ""))),
            };
            match converted {
                Ok(v) => out.push(v),
                Err(e) => {
                    out.push(f64::NAN);
                    if first.is_none() {
                        first = Some((row, e.clone()));
                    }
                    noted.push((row, self.priority(col), e));
                }
            }
        }
        if !noted.is_empty() {
            self.bad_rows.lock().unwrap_or_else(|p| p.into_inner()).extend(noted);
        }
        match first {
            Some(error) => Err(error),
            None => Ok(out),
        }
    }

    /// The order in which a row's columns are judged (as in `read_osmometry`): within a row
    /// the first refusal in this order is the one reported.
    fn priority(&self, col: usize) -> usize {
        const ORDER: [Role; 7] = [
            Role::Temperature,
            Role::Pressure,
            Role::Head,
            Role::SolventDensity,
            Role::PressureSd,
            Role::Series,
            Role::Concentration,
        ];
        ORDER.iter().position(|r| self.roles.get(r) == Some(&col)).unwrap_or(ORDER.len())
    }

    /// [`Table::parse_column`] with the checks of [`Table::checked`].
    fn checked_column(
        &self,
        col: usize,
        allow_empty: bool,
        to_si: impl Fn(f64) -> f64,
        zero_ok: bool,
        what: &str,
    ) -> Result<Vec<f64>, (usize, InputError)> {
        self.parse_column(col, allow_empty, |row, x| {
            let v = to_si(x);
            if v < 0.0 || (!zero_ok && v == 0.0) {
                return Err(self.refuse(col, row, what));
            }
            if v > MAX_MAGNITUDE_SI {
                return Err(self.refuse(
                    col,
                    row,
                    "the value is beyond any physical one for this column (above 10¹² in SI units): check the value and its unit",
                ));
            }
            Ok(v)
        })
    }

    /// A measured column whose readings may fall below zero by baseline noise (an osmotic
    /// pressure or head near zero): only magnitudes beyond [`MAX_MAGNITUDE_SI`] are refused here;
    /// the fit judges negative readings against the others at their temperature.
    fn signed_column(&self, col: usize, to_si: impl Fn(f64) -> f64) -> Result<Vec<f64>, (usize, InputError)> {
        self.parse_column(col, false, |row, x| {
            let v = to_si(x);
            if v.abs() > MAX_MAGNITUDE_SI {
                return Err(self.refuse(
                    col,
                    row,
                    "the value is beyond any physical one for this column (above 10¹² in SI units): check the value and its unit",
                ));
            }
            Ok(v)
        })
    }

    /// The unit written in the header, or the one given by `flag` when the header has none.
    /// A header unit that disagrees with the flag is refused rather than silently preferred.
    fn unit<U>(&self, col: usize, fallback: Option<U>, flag: &str) -> Result<U, InputError>
    where
        U: FromStr<Err = UnknownUnit> + Copy + PartialEq + std::fmt::Display,
    {
        let cell = &self.cells[col];
        let line = self.layout.header_line;
        match (&cell.unit, fallback) {
            (Some(text), fallback) => {
                let unit = text
                    .parse::<U>()
                    .map_err(|e| InputError::at(self.name, line, Some(&cell.raw), Some(text), e.to_string()))?;
                match fallback {
                    Some(f) if f != unit => Err(InputError::at(
                        self.name,
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
                let accepted = "".parse::<U>().err().map(|e| e.accepted).unwrap_or_default();
                let first = accepted.split(", ").next().unwrap_or("");
                let hint = if flag.is_empty() { String::new() } else { format!(" or give {flag}") };
                Err(InputError::at(
                    self.name,
                    line,
                    Some(&cell.raw),
                    None,
                    format!(
                        "the column has no unit: write it after the name, e.g. '{} ({first})'{hint}; accepted: {accepted}",
                        cell.name
                    ),
                ))
            }
        }
    }

    fn series(&self, row: usize) -> Result<std::borrow::Cow<'_, str>, InputError> {
        match self.column(Role::Series) {
            Some(col) => {
                let s = self.text(col, row);
                if s.is_empty() {
                    return Err(InputError::at(
                        self.name,
                        self.line(row),
                        Some(&self.cells[col].raw),
                        None,
                        "the series name is empty",
                    ));
                }
                Ok(s.into())
            }
            // A file of one polymer in several solvents may name only the solvent.
            None => match self.column(Role::Solvent) {
                Some(col) if !self.text(col, row).is_empty() => Ok(self.text(col, row).into()),
                _ => Ok(file_stem(self.name).into()),
            },
        }
    }

    /// The series name of every row, one shared string per run of rows of one series (blank
    /// records get an empty name).
    fn series_column(&self) -> Result<Vec<std::sync::Arc<str>>, (usize, InputError)> {
        let mut out: Vec<std::sync::Arc<str>> = Vec::with_capacity(self.layout.records.len());
        let mut last: std::sync::Arc<str> = std::sync::Arc::from("");
        let Some(col) = self.column(Role::Series) else {
            for (row, record) in self.layout.records.iter().enumerate() {
                if !record.blank {
                    let name = self.series(row).map_err(|e| (row, e))?;
                    if *last != *name {
                        last = std::sync::Arc::from(name.as_ref());
                    }
                }
                out.push(last.clone());
            }
            return Ok(out);
        };
        let names = &self.columns[col];
        for (row, (text, record)) in names.iter().zip(&self.layout.records).enumerate() {
            let name = text.map_or("", str::trim);
            if !record.blank {
                if name.is_empty() {
                    return Err((row, self.series(row).err().unwrap_or_else(|| self.refuse(col, row, ""))));
                }
                if *last != *name {
                    last = std::sync::Arc::from(name);
                }
            }
            out.push(last.clone());
        }
        Ok(out)
    }

    fn temperatures(&self, options: &ReadOptions) -> Result<Vec<f64>, InputError> {
        self.temperatures_by_row(options)?.map_err(|(_, e)| e)
    }

    /// The temperature column in kelvin. The header and its unit, and a column that is wholly
    /// implausible, refuse the file (the outer error); a bad row is given with its row (the
    /// inner one), as the other columns give theirs, so that the first in row order is named.
    fn temperatures_by_row(&self, options: &ReadOptions) -> Result<Result<Vec<f64>, (usize, InputError)>, InputError> {
        let col = self.require(Role::Temperature)?;
        let unit: TemperatureUnit = self.unit(col, options.temperature_unit, "--temperature-unit")?;
        if unit == TemperatureUnit::Celsius {
            let raw: Vec<f64> = (0..self.layout.records.len())
                .map(|r| if self.layout.records[r].blank { f64::NAN } else { self.number(col, r).unwrap_or(f64::NAN) })
                .collect();
            self.refuse_if_all_exceed(
                col,
                &raw,
                PLAUSIBLE_CELSIUS_MAX,
                "every temperature is above 200 °C: these look like kelvin; write 'temperature (K)'",
            )?;
        }
        Ok(self.parse_column(col, false, |row, x| {
            let t = unit.to_kelvin(x);
            if t <= 0.0 {
                return Err(self.refuse(col, row, "a temperature must lie above absolute zero (0 K)"));
            }
            if t > MAX_TEMPERATURE_K {
                return Err(self.refuse(
                    col,
                    row,
                    "a temperature above 1000 K (727 °C), where no polymer solution exists: check the value and its unit",
                ));
            }
            Ok(t)
        }))
    }

    /// The solvent of each series from a `solvent` column (one solvent per series).
    /// The solvent of each series (first row of each series with its record index).
    fn solvents(&self) -> Result<Vec<(String, String, usize)>, InputError> {
        let Some(col) = self.column(Role::Solvent) else { return Ok(Vec::new()) };
        let mut out: Vec<(String, String, usize)> = Vec::new();
        let mut seen: HashMap<String, usize> = HashMap::new();
        for row in self.rows() {
            let series = self.series(row)?.into_owned();
            let solvent = self.text(col, row).to_string();
            if solvent.is_empty() {
                return Err(InputError::at(
                    self.name,
                    self.line(row),
                    Some(&self.cells[col].raw),
                    None,
                    "the solvent name is empty",
                ));
            }
            match seen.get(&series).map(|&i| &out[i].1) {
                Some(first) if *first != solvent => {
                    return Err(self.refuse(col, row, "a series must keep one solvent on every row"));
                }
                Some(_) => {}
                None => {
                    seen.insert(series.clone(), out.len());
                    out.push((series, solvent, row));
                }
            }
        }
        Ok(out)
    }

    /// v̄ and V1 per series from `polymer specific volume` and `solvent molar volume` columns;
    /// both are needed, and each series must give one value of each.
    fn volumes(&self) -> Result<Vec<(String, Volumes, usize)>, InputError> {
        let (Some(vc), Some(mc)) = (self.column(Role::SpecificVolume), self.column(Role::MolarVolume)) else {
            return match (self.column(Role::SpecificVolume), self.column(Role::MolarVolume)) {
                (Some(c), None) | (None, Some(c)) => Err(InputError::at(
                    self.name,
                    self.layout.header_line,
                    Some(&self.cells[c].raw),
                    None,
                    "give both 'polymer specific volume (mL/g)' and 'solvent molar volume (mL/mol)', or neither",
                )),
                _ => Ok(Vec::new()),
            };
        };
        let v_unit: SpecificVolumeUnit = self.unit(vc, None, "")?;
        let m_unit: MolarVolumeUnit = self.unit(mc, None, "")?;
        let mut out: Vec<(String, Volumes, usize)> = Vec::new();
        let mut seen: HashMap<String, usize> = HashMap::new();
        for row in self.rows() {
            let series = self.series(row)?.into_owned();
            let v = Volumes {
                specific_volume: self.checked(
                    vc,
                    row,
                    |x| v_unit.to_si(x),
                    false,
                    "a specific volume must be greater than zero",
                )?,
                molar_volume: self.checked(
                    mc,
                    row,
                    |x| m_unit.to_si(x),
                    false,
                    "a molar volume must be greater than zero",
                )?,
            };
            match seen.get(&series).map(|&i| &out[i].1) {
                Some(first) if first != &v => {
                    return Err(self.refuse(
                        vc,
                        row,
                        "a series must keep one specific volume and one molar volume on every row",
                    ));
                }
                Some(_) => {}
                None => {
                    seen.insert(series.clone(), out.len());
                    out.push((series, v, row));
                }
            }
        }
        Ok(out)
    }
}

fn without_rows<T>(v: Vec<(String, T, usize)>) -> Vec<(String, T)> {
    v.into_iter().map(|(s, t, _)| (s, t)).collect()
}

/// The error of the earliest row among those of several columns (ties go to the earlier
/// column), as a row-by-row pass would have met it.
fn first_in_row_order<const N: usize>(errors: [Option<(usize, InputError)>; N]) -> (usize, InputError) {
    // `min_by_key` keeps the first of equal keys: the earlier column.
    errors.into_iter().flatten().min_by_key(|(row, _)| *row).expect("called with at least one error")
}

fn read_osmometry(table: &Table, options: &ReadOptions) -> Result<OsmometryColumns, InputError> {
    let temperatures = table.temperatures_by_row(options)?;
    let c_col = table.require(Role::Concentration)?;
    let c_unit: ConcentrationUnit = table.unit(c_col, options.concentration_unit, "--concentration-unit")?;
    if c_unit == ConcentrationUnit::GramPerMillilitre {
        let raw: Vec<f64> = (0..table.layout.records.len())
            .map(|r| if table.layout.records[r].blank { f64::NAN } else { table.number(c_col, r).unwrap_or(f64::NAN) })
            .collect();
        table.refuse_if_all_exceed(
            c_col,
            &raw,
            PLAUSIBLE_G_PER_ML_MAX,
            "every concentration is above 0.5 g/mL, far from dilute: these look like g/L; write 'concentration (g/L)'",
        )?;
    }
    enum Source {
        Pressure(usize, PressureUnit),
        Head(usize, LengthUnit, Option<(usize, DensityUnit)>),
    }
    let source = match table.column(Role::Pressure) {
        Some(p) => Source::Pressure(p, table.unit(p, options.pressure_unit, "--pressure-unit")?),
        None => {
            let h = table.require(Role::Head)?;
            let density = match table.column(Role::SolventDensity) {
                Some(d) => Some((d, table.unit(d, None, "")?)),
                None if options.solvent_density_kg_per_m3.is_some() || !options.solvent_densities.is_empty() => None,
                None => {
                    return Err(InputError::at(
                        table.name,
                        table.layout.header_line,
                        Some(&table.cells[h].raw),
                        None,
                        "a 'head' column needs the solvent density: add a 'solvent density (g/mL)' column or give --solvent-density",
                    ))
                }
            };
            Source::Head(h, table.unit(h, None, "")?, density)
        }
    };
    // A `pressure sd` header without a unit takes the pressure column's unit.
    let sd = match (table.column(Role::PressureSd), &source) {
        (Some(i), Source::Pressure(_, p)) if table.cells[i].unit.is_none() && options.pressure_unit.is_none() => {
            Some((i, *p))
        }
        (Some(i), _) => Some((i, table.unit(i, options.pressure_unit, "--pressure-unit")?)),
        (None, _) => None,
    };
    // Column by column (in parallel), then row by row; where several values are wrong the
    // first in row order is reported, and within a row the first column in the order
    // temperature, pressure (or head, density), sd, series, concentration.
    let pressure = || -> Result<Vec<f64>, (usize, InputError)> {
        match &source {
            Source::Pressure(col, unit) => table.signed_column(*col, |x| unit.to_si(x)),
            Source::Head(col, unit, density) => {
                let h = table.signed_column(*col, |x| unit.to_si(x));
                if density.is_none() && !options.solvent_densities.is_empty() {
                    // Each row's solvent density is looked up once the names are read (below).
                    return h;
                }
                let rho = match density {
                    Some((d, du)) => {
                        table.checked_column(*d, false, |x| du.to_si(x), false, "a density must be greater than zero")
                    }
                    None => Ok(vec![options.solvent_density_kg_per_m3.unwrap_or(f64::NAN); table.layout.records.len()]),
                };
                match (h, rho) {
                    (Ok(h), Ok(rho)) => Ok(h.iter().zip(&rho).map(|(h, r)| head_to_pressure_pa(*r, *h)).collect()),
                    (h, rho) => Err(first_in_row_order([h.err(), rho.err()])),
                }
            }
        }
    };
    let sd_values = || match sd {
        Some((col, unit)) => table
            .checked_column(
                col,
                true,
                |x| unit.to_si(x),
                false,
                "a standard deviation must be greater than zero (leave it empty if unknown)",
            )
            .map(Some),
        None => Ok(None),
    };
    let concentration = || {
        let c_max = MAX_CONCENTRATION_KG_PER_M3;
        table.parse_column(c_col, false, |row, x| {
            let c = c_unit.to_si(x);
            if c <= 0.0 {
                return Err(table.refuse(c_col, row, "a concentration must be greater than zero"));
            }
            if c < MIN_CONCENTRATION_KG_PER_M3 {
                return Err(table.refuse(
                    c_col,
                    row,
                    "below 1 µg/L no osmotic pressure can be measured: check the value and its unit",
                ));
            }
            if c > c_max {
                return Err(table.refuse(
                    c_col,
                    row,
                    "above 2 g/mL this is not a solution: check the value and its unit",
                ));
            }
            Ok(c)
        })
    };
    let (pressure, (sd_values, (names, concentration))) =
        rayon::join(pressure, || rayon::join(sd_values, || rayon::join(|| table.series_column(), concentration)));
    let (temperatures, mut pressure, sd_values, names, concentration) =
        match (temperatures, pressure, sd_values, names, concentration) {
            (Ok(t), Ok(p), Ok(s), Ok(n), Ok(c)) => (t, p, s, n, c),
            (t, p, s, n, c) => return Err(first_in_row_order([t.err(), p.err(), s.err(), n.err(), c.err()]).1),
        };
    if let Source::Head(h, _, None) = source {
        if !options.solvent_densities.is_empty() {
            let solvent_col = table.column(Role::Solvent);
            for row in table.rows() {
                let solvent = solvent_col.map_or(&*names[row], |col| table.text(col, row));
                let rho = options
                    .solvent_densities
                    .iter()
                    .find(|(name, _)| name == solvent)
                    .map(|(_, rho)| *rho)
                    .or(options.solvent_density_kg_per_m3)
                    .ok_or_else(|| {
                        table.refuse(
                            h,
                            row,
                            &format!(
                                "the solvents table gives no density for '{solvent}': add it there, add a 'solvent density (g/mL)' column, or give --solvent-density"
                            ),
                        )
                    })?;
                pressure[row] = crate::units::head_to_pressure_pa(rho, pressure[row]);
            }
        }
    }
    let rows: Vec<(usize, usize)> = table.rows().map(|row| (row, table.line(row))).collect();
    Ok(OsmometryColumns {
        file_index: table.file_index,
        rows,
        names,
        temperatures,
        concentration,
        pressure,
        sd: sd_values,
        excluded: Vec::new(),
    })
}

/// [`read_osmometry`] where a value that cannot be used refuses only its series (unless
/// `options.strict`): the series is added to `refused`, its rows are set aside as blank, and
/// the table is read again. A refusal of the header, a unit or a column as a whole still
/// refuses the file; so does any refusal while polars' numbers are read (the caller then reads
/// the text, whose refusals quote the value).
fn read_osmometry_sparing(
    table: &mut Table,
    options: &ReadOptions,
    refused: &mut Vec<RefusedSeries>,
) -> Result<OsmometryColumns, InputError> {
    set_aside_excluded(table, options);
    loop {
        match read_osmometry(table, options) {
            Ok(mut columns) => {
                // A refused series' excluded readings go with it.
                let mut excluded = std::mem::take(&mut table.excluded);
                excluded.retain(|(_, series, _)| !refused.iter().any(|r| *r.series == **series));
                columns.excluded = excluded;
                return Ok(columns);
            }
            Err(error) if error.of_reading && !options.strict => {
                let row = error.line.and_then(|line| table.layout.records.iter().position(|r| r.line == line));
                let Some(row) = row.filter(|r| !table.layout.records[*r].blank) else { return Err(error) };
                // Every bad row the pass noted, first by row then by column, and the one returned:
                // each series is set aside at its first, all in one go.
                let mut bad = std::mem::take(&mut *table.bad_rows.lock().unwrap_or_else(|p| p.into_inner()));
                bad.push((row, 0, error));
                bad.sort_by_key(|(row, priority, _)| (*row, *priority));
                let mut names = std::collections::HashSet::new();
                let mut rows = Vec::new();
                for (row, _, error) in bad {
                    if !error.of_reading {
                        continue;
                    }
                    let series = match table.series(row) {
                        Ok(name) => name.into_owned(),
                        Err(_) => format!("line {}", table.line(row)),
                    };
                    rows.push(row);
                    if names.insert(series.clone()) {
                        refused.push(RefusedSeries { series, error });
                    }
                }
                table.set_aside(&names, &rows);
            }
            Err(error) => return Err(error),
        }
    }
}

/// Sets aside the rows whose `exclude` cell holds text (the reason), keeping each as an
/// [`ExcludedReading`] with the values that parse (none is refused: a reading judged bad may
/// hold anything). Rows already set aside are not seen again.
fn set_aside_excluded(table: &mut Table, options: &ReadOptions) {
    let Some(col) = table.column(Role::Exclude) else { return };
    let rows: Vec<usize> = table.rows().filter(|&r| !table.text(col, r).is_empty()).collect();
    if rows.is_empty() {
        return;
    }
    let t_unit = table
        .column(Role::Temperature)
        .and_then(|c| table.unit::<TemperatureUnit>(c, options.temperature_unit, "").ok().map(|u| (c, u)));
    let c_unit = table
        .column(Role::Concentration)
        .and_then(|c| table.unit::<ConcentrationUnit>(c, options.concentration_unit, "").ok().map(|u| (c, u)));
    let p_unit = table
        .column(Role::Pressure)
        .and_then(|c| table.unit::<PressureUnit>(c, options.pressure_unit, "").ok().map(|u| (c, u)));
    let number = |c: usize, row: usize| table.number(c, row).ok().filter(|v| v.is_finite());
    let mut found = Vec::with_capacity(rows.len());
    for row in rows {
        let series: std::sync::Arc<str> = match table.series(row) {
            Ok(name) => name.as_ref().into(),
            Err(_) => format!("line {}", table.line(row)).into(),
        };
        found.push((
            row,
            series,
            ExcludedReading {
                temperature_k: t_unit.and_then(|(c, u)| number(c, row).map(|x| u.to_kelvin(x))),
                concentration_kg_per_m3: c_unit.and_then(|(c, u)| number(c, row).map(|x| u.to_si(x))),
                pressure_pa: p_unit.and_then(|(c, u)| number(c, row).map(|x| u.to_si(x))),
                origin: Origin { file: table.file_index, line: table.line(row) },
                reason: table.text(col, row).to_string(),
            },
        ));
    }
    for (row, _, _) in &found {
        table.layout.records[*row].blank = true;
    }
    table.excluded.extend(found);
}

/// An osmometry file's values, one vector per column (SI), kept apart from the text they came
/// from so that the text can be freed before the readings are grouped.
struct OsmometryColumns {
    file_index: usize,
    /// (record index, line) of every non-blank record.
    rows: Vec<(usize, usize)>,
    names: Vec<std::sync::Arc<str>>,
    temperatures: Vec<f64>,
    concentration: Vec<f64>,
    pressure: Vec<f64>,
    sd: Option<Vec<f64>>,
    /// Readings the `exclude` column set aside, in row order.
    excluded: Vec<(usize, std::sync::Arc<str>, ExcludedReading)>,
}

impl OsmometryColumns {
    fn group(self) -> GroupedReadings {
        let mut readings = GroupedReadings::default();
        self.group_into(&mut readings);
        readings
    }

    fn group_into(self, readings: &mut GroupedReadings) {
        // Excluded readings join their series in file order, so that series keep their order.
        let mut excluded = self.excluded.into_iter().peekable();
        for &(row, line) in &self.rows {
            while let Some((_, series, reading)) = excluded.next_if(|(r, _, _)| *r < row) {
                readings.push_excluded(&series, reading);
            }
            readings.push(&Measurement {
                series: self.names[row].clone(),
                temperature_k: self.temperatures[row],
                concentration_kg_per_m3: self.concentration[row],
                pressure_pa: self.pressure[row],
                pressure_sd_pa: self.sd.as_ref().map(|s| s[row]).filter(|v| !v.is_nan()),
                origin: Origin { file: self.file_index, line },
            });
        }
        for (_, series, reading) in excluded {
            readings.push_excluded(&series, reading);
        }
    }
}

/// Static light scattering: `kc/r (mol/g)`, or `rayleigh ratio (1/cm)` with the optical
/// constant (given or computed from n0, dn/dc and λ0); optional `angle (deg)` (needs n0, λ0).
fn read_scattering(table: &Table, options: &ReadOptions) -> Result<FileContents, InputError> {
    let temperatures = table.temperatures(options)?;
    let c_col = table.require(Role::Concentration)?;
    let c_unit: ConcentrationUnit = table.unit(c_col, options.concentration_unit, "--concentration-unit")?;
    let header_error = |col: usize, what: &str| {
        InputError::at(table.name, table.layout.header_line, Some(&table.cells[col].raw), None, what.to_string())
    };
    enum Response {
        Formed(usize, KcOverRUnit),
        Rayleigh(usize, RayleighUnit, f64),
    }
    let response = match (table.column(Role::KcOverR), table.column(Role::RayleighRatio)) {
        (Some(c), None) => Response::Formed(c, table.unit(c, None, "")?),
        (None, Some(c)) => {
            let k = options
                .optical_constant
                .or_else(|| match (options.refractive_index, options.dn_dc, options.wavelength_m) {
                    (Some(n), Some(d), Some(l)) => Some(crate::units::optical_constant(n, d, l)),
                    _ => None,
                })
                .ok_or_else(|| {
                    header_error(
                        c,
                        "a Rayleigh ratio needs the optical constant: give --optical-constant, or --refractive-index, --dn-dc and --wavelength",
                    )
                })?;
            Response::Rayleigh(c, table.unit(c, None, "")?, k)
        }
        (Some(_), Some(c)) => return Err(header_error(c, "give either 'kc/r' or 'rayleigh ratio', not both")),
        (None, None) => return Err(header_error(0, "no 'kc/r' or 'rayleigh ratio' column")),
    };
    let angle = match table.column(Role::Angle) {
        Some(a) => {
            let unit: AngleUnit = table.unit(a, None, "")?;
            let (n, l) = match (options.refractive_index, options.wavelength_m) {
                (Some(n), Some(l)) => (n, l),
                _ => return Err(header_error(a, "angles need --refractive-index and --wavelength to form q")),
            };
            Some((a, unit, n, l))
        }
        None => None,
    };
    let mut scattering = Vec::new();
    for row in table.rows() {
        let c = table.checked(c_col, row, |x| c_unit.to_si(x), false, "a concentration must be greater than zero")?;
        let kc_over_r = match response {
            Response::Formed(col, unit) => {
                table.checked(col, row, |x| unit.to_si(x), false, "K c/R must be greater than zero")?
            }
            Response::Rayleigh(col, unit, k) => {
                k * c
                    / table.checked(col, row, |x| unit.to_si(x), false, "a Rayleigh ratio must be greater than zero")?
            }
        };
        let q = match angle {
            Some((col, unit, n, l)) => {
                let theta = table.checked(col, row, |x| unit.to_si(x), true, "an angle cannot be negative")?;
                Some(crate::units::scattering_vector(n, theta, l))
            }
            None => None,
        };
        scattering.push(ScatteringRow {
            series: table.series(row)?.into_owned(),
            temperature_k: temperatures[row],
            concentration: c,
            kc_over_r,
            q,
            line: table.line(row),
        });
    }
    Ok(FileContents { scattering, ..FileContents::default() })
}

/// A table of fractions: `molar mass (g/mol)` and `critical temperature (C|K)` per row.
fn read_critical(table: &Table) -> Result<FileContents, InputError> {
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

fn read_tabulated(table: &Table, options: &ReadOptions) -> Result<FileContents, InputError> {
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
