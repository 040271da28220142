//! Osmometry files: readings of Π (or head) at each concentration and temperature, with
//! optional SDs, solvents, volumes and excluded readings; a bad value costs its series only.

use super::*;

pub(super) fn read_osmometry(table: &Table, options: &ReadOptions) -> Result<OsmometryColumns, InputError> {
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
pub(super) fn read_osmometry_sparing(
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
pub(super) fn set_aside_excluded(table: &mut Table, options: &ReadOptions) {
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
pub(super) struct OsmometryColumns {
    pub(super) file_index: usize,
    /// (record index, line) of every non-blank record.
    pub(super) rows: Vec<(usize, usize)>,
    pub(super) names: Vec<std::sync::Arc<str>>,
    pub(super) temperatures: Vec<f64>,
    pub(super) concentration: Vec<f64>,
    pub(super) pressure: Vec<f64>,
    pub(super) sd: Option<Vec<f64>>,
    /// Readings the `exclude` column set aside, in row order.
    pub(super) excluded: Vec<(usize, std::sync::Arc<str>, ExcludedReading)>,
}

impl OsmometryColumns {
    pub(super) fn group(self) -> GroupedReadings {
        let mut readings = GroupedReadings::default();
        self.group_into(&mut readings);
        readings
    }

    pub(super) fn group_into(self, readings: &mut GroupedReadings) {
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
