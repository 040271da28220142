//! One parsed CSV table (polars reads every column as text): header roles, the columns, and
//! each value parsed and checked here so that a refusal names file, line, column and value.

use super::*;

/// Parses CSV text with polars, every column as text (one reading mode: our own parse of each
/// value then quotes it in any refusal); `threads` limits polars' own threads (a block of a
/// large file is parsed on one, while the series before it are analysed).
pub(super) fn parse_with_polars(name: &str, bytes: &[u8], threads: Option<usize>) -> Result<DataFrame, InputError> {
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
pub(super) fn ignored_columns(cells: &[HeaderCell]) -> Vec<String> {
    cells.iter().filter(|c| c.role.is_none() && !c.raw.is_empty()).map(|c| c.raw.clone()).collect()
}

/// The index after the last header cell with a name: the unnamed columns from there on are
/// trailing.
pub(super) fn unnamed_from(cells: &[HeaderCell]) -> usize {
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

pub(super) fn locate_roles(
    file: &str,
    header_line: usize,
    cells: &[HeaderCell],
) -> Result<HashMap<Role, usize>, InputError> {
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
pub(super) fn cells_of(name: &str, frame: &DataFrame) -> Result<Vec<StringChunked>, InputError> {
    frame
        .columns()
        .iter()
        .map(|c| c.as_materialized_series().str().cloned())
        .collect::<Result<Vec<_>, _>>()
        .map_err(|e| InputError::file(name, format!("a column could not be read as text: {e}")))
}

/// A value computed with: finite, and zero or normal (subnormal numbers, below 2.2e-308, are
/// typing slips, and they lose precision).
pub(super) fn usable(v: f64) -> bool {
    v.is_finite() && (v == 0.0 || v.is_normal())
}

/// Whether a number's digits before any exponent hold a non-zero digit (`0.0e5` does not,
/// `1e-5000` does).
pub(super) fn mantissa_is_nonzero(text: &str) -> bool {
    text.split(['e', 'E']).next().is_some_and(|m| m.bytes().any(|b| (b'1'..=b'9').contains(&b)))
}

/// One parsed file: its header cells, record lines and columns.
pub(super) struct Table<'a> {
    pub(super) name: &'a str,
    pub(super) file_index: usize,
    pub(super) cells: Vec<HeaderCell>,
    pub(super) layout: Layout,
    pub(super) columns: Vec<StringChunked>,
    pub(super) roles: HashMap<Role, usize>,
    /// For one block of a file read in blocks: the column-wide checks are recorded here (does
    /// every value of this block exceed the limit, and the refusal at its first row) and
    /// decided once every block is read. `None` for a file read whole.
    pub(super) deferred: Option<std::sync::Mutex<Vec<DeferredCheck>>>,
    /// Rows the `exclude` column set aside: (row, series, the reading as measured).
    pub(super) excluded: Vec<(usize, std::sync::Arc<str>, ExcludedReading)>,
    /// Every refused value met by [`Table::parse_column`]: (row, column priority, refusal).
    pub(super) bad_rows: std::sync::Mutex<Vec<(usize, usize, InputError)>>,
}

/// One column-wide check of one block (see [`Table::refuse_if_all_exceed`]).
pub(super) struct DeferredCheck {
    pub(super) column: usize,
    pub(super) all_exceed: bool,
    pub(super) refusal: Option<InputError>,
}

impl<'a> Table<'a> {
    /// Scans, checks and parses a CSV: header roles, ragged rows, UTF-8, at least one data row.
    pub(super) fn parse(
        name: &'a str,
        file_index: usize,
        bytes: &[u8],
        columns: &[(Role, String)],
    ) -> Result<Self, InputError> {
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
    pub(super) fn from_frame(
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
    pub(super) fn take_deferred(&self) -> Vec<DeferredCheck> {
        self.deferred.as_ref().map_or(Vec::new(), |d| std::mem::take(&mut *d.lock().unwrap_or_else(|p| p.into_inner())))
    }

    pub(super) fn ignored_columns(&self) -> Vec<String> {
        ignored_columns(&self.cells)
    }

    pub(super) fn has(&self, role: Role) -> bool {
        self.roles.contains_key(&role)
    }

    pub(super) fn column(&self, role: Role) -> Option<usize> {
        self.roles.get(&role).copied()
    }

    pub(super) fn require(&self, role: Role) -> Result<usize, InputError> {
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

    pub(super) fn text(&self, col: usize, row: usize) -> &str {
        self.columns[col].get(row).map(str::trim).unwrap_or("")
    }

    pub(super) fn line(&self, row: usize) -> usize {
        self.layout.records[row].line
    }

    pub(super) fn rows(&self) -> impl Iterator<Item = usize> + '_ {
        self.layout.records.iter().enumerate().filter(|(_, r)| !r.blank).map(|(i, _)| i)
    }

    /// Sets aside every row of the `series` named (and `rows` themselves, whose names may be
    /// missing) as if blank, so that reading again leaves them out; one pass over the rows.
    pub(super) fn set_aside(&mut self, series: &std::collections::HashSet<String>, rows: &[usize]) {
        let of_series: Vec<usize> =
            self.rows().filter(|&r| self.series(r).is_ok_and(|name| series.contains(name.as_ref()))).collect();
        for &r in of_series.iter().chain(rows) {
            self.layout.records[r].blank = true;
        }
    }

    pub(super) fn refuse(&self, col: usize, row: usize, message: &str) -> InputError {
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
    pub(super) fn number(&self, col: usize, row: usize) -> Result<f64, InputError> {
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
    pub(super) fn refuse_if_all_exceed(
        &self,
        col: usize,
        raw: &[f64],
        limit: f64,
        message: &str,
    ) -> Result<(), InputError> {
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
    pub(super) fn refuse_column(&self, col: usize, row: usize, message: &str) -> InputError {
        InputError { of_reading: false, ..self.refuse(col, row, message) }
    }

    /// A number that must be > 0 (or ≥ 0 when `zero_ok`), after conversion by `to_si`.
    pub(super) fn checked(
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
    pub(super) fn parse_column(
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
    pub(super) fn priority(&self, col: usize) -> usize {
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
    pub(super) fn checked_column(
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
    pub(super) fn signed_column(
        &self,
        col: usize,
        to_si: impl Fn(f64) -> f64,
    ) -> Result<Vec<f64>, (usize, InputError)> {
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
    pub(super) fn unit<U>(&self, col: usize, fallback: Option<U>, flag: &str) -> Result<U, InputError>
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

    pub(super) fn series(&self, row: usize) -> Result<std::borrow::Cow<'_, str>, InputError> {
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
    pub(super) fn series_column(&self) -> Result<Vec<std::sync::Arc<str>>, (usize, InputError)> {
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

    pub(super) fn temperatures(&self, options: &ReadOptions) -> Result<Vec<f64>, InputError> {
        self.temperatures_by_row(options)?.map_err(|(_, e)| e)
    }

    /// The temperature column in kelvin. The header and its unit, and a column that is wholly
    /// implausible, refuse the file (the outer error); a bad row is given with its row (the
    /// inner one), as the other columns give theirs, so that the first in row order is named.
    pub(super) fn temperatures_by_row(
        &self,
        options: &ReadOptions,
    ) -> Result<Result<Vec<f64>, (usize, InputError)>, InputError> {
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
    pub(super) fn solvents(&self) -> Result<Vec<(String, String, usize)>, InputError> {
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
    pub(super) fn volumes(&self) -> Result<Vec<(String, Volumes, usize)>, InputError> {
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

pub(super) fn without_rows<T>(v: Vec<(String, T, usize)>) -> Vec<(String, T)> {
    v.into_iter().map(|(s, t, _)| (s, t)).collect()
}

/// The error of the earliest row among those of several columns (ties go to the earlier
/// column), as a row-by-row pass would have met it.
pub(super) fn first_in_row_order<const N: usize>(errors: [Option<(usize, InputError)>; N]) -> (usize, InputError) {
    // `min_by_key` keeps the first of equal keys: the earlier column.
    errors.into_iter().flatten().min_by_key(|(row, _)| *row).expect("called with at least one error")
}
