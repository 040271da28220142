//! Measurements in the internal SI system, grouped into series and temperatures.
//! Nothing here knows about files or polars: the input module produces these.

mod viscometry;

pub use viscometry::{ViscometryRow, ViscometrySeries, ViscosityValue};

use serde::Serialize;
use std::collections::HashMap;

/// One temperature's value for the across-temperature models.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TemperaturePoint {
    /// T, K.
    pub temperature_k: f64,
    /// A2 in mol m³/kg², or 1/2 − χ (dimensionless) for χ tables; see [`Quantity`].
    pub value: f64,
    /// Its standard error (weights 1/SE²), if known.
    pub se: Option<f64>,
}

/// What [`TemperaturePoint::value`] holds. Both cross zero at θ.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Quantity {
    /// A2, mol m³/kg².
    SecondVirial,
    /// 1/2 − χ = A2 V1/v̄², dimensionless.
    HalfMinusChi,
}

impl Quantity {
    /// The symbol messages use: "A2", or "1/2 − χ" for χ tables.
    pub fn symbol(self) -> &'static str {
        match self {
            Quantity::SecondVirial => "A2",
            Quantity::HalfMinusChi => "1/2 − χ",
        }
    }
}

/// Polymer and solvent volumes for the Flory parameters, SI.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Volumes {
    /// Polymer partial specific volume v̄, m³/kg.
    pub specific_volume: f64,
    /// Solvent molar volume V1, m³/mol.
    pub molar_volume: f64,
}

impl Volumes {
    /// v̄²/V1, mol m³/kg²: A2 = (v̄²/V1)(1/2 − χ).
    pub fn a2_per_half_minus_chi(&self) -> f64 {
        self.specific_volume * self.specific_volume / self.molar_volume
    }
}

/// The measurement a series' θ comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Route {
    /// Membrane osmometry readings (Mn and A2 per temperature).
    Osmometry,
    /// A2 already tabulated per temperature.
    A2Table,
    /// χ already tabulated per temperature.
    ChiTable,
    /// Critical temperatures of fractions (Shultz–Flory).
    CriticalTemperatures,
    /// Static light scattering (Zimm fits per temperature).
    LightScattering,
    /// Dilute-solution capillary viscometry of fractions (Mark–Houwink exponent per
    /// temperature; the viscometric θ where it is ½).
    Viscometry,
}

impl Route {
    /// The name reports use.
    pub fn name(self) -> &'static str {
        match self {
            Route::Osmometry => "osmometry",
            Route::A2Table => "a2_table",
            Route::ChiTable => "chi_table",
            Route::CriticalTemperatures => "critical_temperatures",
            Route::LightScattering => "light_scattering",
            Route::Viscometry => "viscometry",
        }
    }
}

impl std::fmt::Display for Route {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.pad(self.name())
    }
}

/// Where a measurement came from, for messages.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Origin {
    /// Index into the list of input files.
    pub file: usize,
    /// 1-based line in that file.
    pub line: usize,
}

/// One osmotic-pressure reading.
#[derive(Debug, Clone, PartialEq)]
pub struct Measurement {
    /// Series (polymer–solvent pair or sample) the reading belongs to; shared between the rows
    /// of a series so that reading a campaign does not allocate a name per row.
    pub series: std::sync::Arc<str>,
    /// Temperature T in K.
    pub temperature_k: f64,
    /// Polymer mass concentration c in kg/m³.
    pub concentration_kg_per_m3: f64,
    /// Osmotic pressure Π in Pa.
    pub pressure_pa: f64,
    /// Standard deviation of Π in Pa, when the lab gave one.
    pub pressure_sd_pa: Option<f64>,
    /// File and line.
    pub origin: Origin,
}

impl Measurement {
    /// A reading with no SD and no file behind it (simulations, tests, benchmarks): origin file
    /// 0, line 0. T in K, c in kg/m³, Π in Pa.
    pub fn simulated(series: &str, temperature_k: f64, concentration_kg_per_m3: f64, pressure_pa: f64) -> Self {
        Measurement {
            series: series.into(),
            temperature_k,
            concentration_kg_per_m3,
            pressure_pa,
            pressure_sd_pa: None,
            origin: Origin { file: 0, line: 0 },
        }
    }
}

/// Readings of one series at one temperature.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct TemperatureSet {
    /// Mean temperature of the grouped readings, K.
    pub temperature_k: f64,
    /// Concentrations c, kg/m³.
    pub concentration_kg_per_m3: Vec<f64>,
    /// Osmotic pressures Π, Pa.
    pub pressure_pa: Vec<f64>,
    /// Standard deviations of Π, Pa (`None` where not given).
    pub pressure_sd_pa: Vec<Option<f64>>,
    /// Origin of each reading.
    pub origins: Vec<Origin>,
}

impl TemperatureSet {
    /// Number of readings.
    pub fn len(&self) -> usize {
        self.concentration_kg_per_m3.len()
    }

    /// True when there are no readings.
    pub fn is_empty(&self) -> bool {
        self.concentration_kg_per_m3.is_empty()
    }

    /// Number of distinct concentrations (readings within 1e-9 relative are one).
    pub fn distinct_concentrations(&self) -> usize {
        let mut c = self.concentration_kg_per_m3.clone();
        c.sort_by(f64::total_cmp);
        c.dedup_by(|a, b| (*a - *b).abs() <= 1e-9 * b.abs());
        c.len()
    }
}

/// All readings of one series, temperatures ascending.
#[derive(Debug, Clone, PartialEq)]
pub struct Series {
    /// Series name.
    pub name: String,
    /// One entry per temperature, ascending.
    pub temperatures: Vec<TemperatureSet>,
    /// v̄ and V1 given in the file for this series.
    pub volumes: Option<Volumes>,
    /// Readings marked in the `exclude` column: not fitted, kept with their reasons.
    pub excluded: Vec<ExcludedReading>,
}

/// A reading the scientist marked as bad (a leak, a bubble) in the `exclude` column: kept as
/// it was measured, with the reason, and never fitted. SI units; `None` where the cell does not
/// hold a usable number.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct ExcludedReading {
    /// T, K.
    pub temperature_k: Option<f64>,
    /// c, kg/m³.
    pub concentration_kg_per_m3: Option<f64>,
    /// Π, Pa.
    pub pressure_pa: Option<f64>,
    /// Where it was read.
    pub origin: Origin,
    /// Why it was excluded, as written.
    pub reason: String,
}

/// One row of a table that already holds A2 (or χ) at a temperature.
#[derive(Debug, Clone, PartialEq)]
pub struct TabulatedRow {
    /// Series name.
    pub series: String,
    /// The value: A2 in mol m³/kg², or 1/2 − χ.
    pub point: TemperaturePoint,
    /// File and line.
    pub origin: Origin,
}

/// A series given as A2 (or χ) per temperature, temperatures ascending.
#[derive(Debug, Clone, PartialEq)]
pub struct TabulatedSeries {
    /// Series name.
    pub name: String,
    /// What the values are.
    pub quantity: Quantity,
    /// One point per row.
    pub points: Vec<TemperaturePoint>,
    /// v̄ and V1 given in the file for this series.
    pub volumes: Option<Volumes>,
}

/// One static light-scattering reading, SI.
#[derive(Debug, Clone, PartialEq)]
pub struct ScatteringRow {
    /// Series.
    pub series: String,
    /// T, K.
    pub temperature_k: f64,
    /// c, kg/m³.
    pub concentration: f64,
    /// K c / R, mol/kg.
    pub kc_over_r: f64,
    /// Scattering vector q, 1/m (`None`: zero angle, or no angle column).
    pub q: Option<f64>,
    /// Line in the file.
    pub line: usize,
}

/// One fraction's critical (phase-separation) temperature.
#[derive(Debug, Clone, PartialEq)]
pub struct CriticalRow {
    /// Series (polymer–solvent pair).
    pub series: String,
    /// Molar mass of the fraction, kg/mol.
    pub molar_mass: f64,
    /// Critical temperature, K.
    pub critical_temperature_k: f64,
    /// Line in the file.
    pub line: usize,
}

/// A series of critical temperatures of fractions (the Shultz–Flory route).
#[derive(Debug, Clone, PartialEq)]
pub struct CriticalSeries {
    /// Series name.
    pub name: String,
    /// (molar mass kg/mol, critical temperature K) per fraction, in file order.
    pub fractions: Vec<(f64, f64)>,
    /// v̄ and V1 given in the file for this series.
    pub volumes: Option<Volumes>,
}

/// A light-scattering series: its readings at every temperature.
#[derive(Debug, Clone, PartialEq)]
pub struct ScatteringSeries {
    /// Series name.
    pub name: String,
    /// Readings in file order.
    pub rows: Vec<ScatteringRow>,
    /// v̄ and V1 given in the file for this series.
    pub volumes: Option<Volumes>,
}

/// Every series of a run, by route, with v̄/V1 attached: osmometry, tabulated A2 and χ,
/// critical temperatures, light scattering and viscometry.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Dataset {
    /// Osmometry series, first-seen order.
    pub series: Vec<Series>,
    /// Tabulated A2 and χ series, first-seen order (A2 tables first).
    pub tabulated: Vec<TabulatedSeries>,
    /// Critical-temperature series, first-seen order.
    pub critical: Vec<CriticalSeries>,
    /// Light-scattering series, first-seen order.
    pub scattering: Vec<ScatteringSeries>,
    /// Viscometry series, first-seen order.
    pub viscometry: Vec<ViscometrySeries>,
    /// The solvent of each series that names one: (series, solvent).
    pub solvents: Vec<(String, String)>,
}

impl Dataset {
    /// Groups readings and rows into series and attaches each series' v̄ and V1 (the first
    /// value given for a series name is used). [`group`] readings of your own first, or give
    /// [`GroupedReadings::from`] a slice of them.
    pub fn new(
        readings: GroupedReadings,
        a2_rows: &[TabulatedRow],
        chi_rows: &[TabulatedRow],
        routes: OtherRoutes,
        volumes: &[(String, Volumes)],
        solvents: &[(String, String)],
    ) -> Self {
        let mut by_name: HashMap<&str, Volumes> = HashMap::new();
        for (name, v) in volumes {
            by_name.entry(name.as_str()).or_insert(*v);
        }
        let find = |name: &str| by_name.get(name).copied();
        let mut series = readings.into_series();
        for s in &mut series {
            s.volumes = find(&s.name);
        }
        let mut tabulated = group_tabulated(a2_rows, Quantity::SecondVirial);
        tabulated.extend(group_tabulated(chi_rows, Quantity::HalfMinusChi));
        for s in &mut tabulated {
            s.volumes = find(&s.name);
        }
        let mut critical: Vec<CriticalSeries> = Vec::new();
        for row in routes.critical {
            match critical.iter_mut().find(|s| s.name == row.series) {
                Some(s) => s.fractions.push((row.molar_mass, row.critical_temperature_k)),
                None => critical.push(CriticalSeries {
                    volumes: find(&row.series),
                    fractions: vec![(row.molar_mass, row.critical_temperature_k)],
                    name: row.series,
                }),
            }
        }
        let mut scattering: Vec<ScatteringSeries> = Vec::new();
        for row in routes.scattering {
            match scattering.iter_mut().find(|s| s.name == row.series) {
                Some(s) => s.rows.push(row),
                None => scattering.push(ScatteringSeries {
                    name: row.series.clone(),
                    volumes: find(&row.series),
                    rows: vec![row],
                }),
            }
        }
        let mut viscometry: Vec<ViscometrySeries> = Vec::new();
        for row in routes.viscometry {
            match viscometry.iter_mut().find(|s| s.name == row.series) {
                Some(s) => s.rows.push(row),
                None => viscometry.push(ViscometrySeries { name: row.series.clone(), rows: vec![row] }),
            }
        }
        Dataset { series, tabulated, critical, scattering, viscometry, solvents: solvents.to_vec() }
    }

    /// Series of every route.
    pub fn len(&self) -> usize {
        self.series.len() + self.tabulated.len() + self.critical.len() + self.scattering.len() + self.viscometry.len()
    }

    /// True when no route holds a series.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
}

/// Rows of the routes read as rows (critical temperatures, light scattering, viscometry), for
/// [`Dataset::new`] to group.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct OtherRoutes {
    /// Critical temperatures of fractions.
    pub critical: Vec<CriticalRow>,
    /// Light-scattering readings.
    pub scattering: Vec<ScatteringRow>,
    /// Viscometry rows.
    pub viscometry: Vec<ViscometryRow>,
}

/// Groups tabulated rows into series (first-seen order), temperatures ascending.
pub fn group_tabulated(rows: &[TabulatedRow], quantity: Quantity) -> Vec<TabulatedSeries> {
    let mut out: Vec<TabulatedSeries> = Vec::new();
    let mut index: HashMap<&str, usize> = HashMap::new();
    for row in rows {
        let i = *index.entry(row.series.as_str()).or_insert_with(|| {
            out.push(TabulatedSeries { name: row.series.clone(), quantity, points: Vec::new(), volumes: None });
            out.len() - 1
        });
        out[i].points.push(row.point);
    }
    for s in &mut out {
        s.points.sort_by(|a, b| a.temperature_k.total_cmp(&b.temperature_k));
    }
    out
}

/// Readings closer than this in temperature are one temperature (thermostats report 0.1 K at best).
pub const TEMPERATURE_GROUPING_K: f64 = 0.01;

/// Groups readings into series (in order of first appearance) and temperatures (ascending).
/// Readings within each temperature keep their input order.
pub fn group(measurements: &[Measurement]) -> Vec<Series> {
    GroupedReadings::from(measurements).into_series()
}

impl From<&[Measurement]> for GroupedReadings {
    fn from(measurements: &[Measurement]) -> Self {
        let mut readings = GroupedReadings::default();
        for m in measurements {
            readings.push(m);
        }
        readings
    }
}

/// One series' temperatures while grouping: a short list searched in place (a series has a
/// handful of temperatures), indexed by a map only once it grows long.
#[derive(Debug, Clone, PartialEq, Default)]
struct Sets {
    /// Key and readings (`temperature_k` holds the running sum until the end).
    sets: Vec<(i64, TemperatureSet)>,
    /// Readings excluded by the scientist, in file order.
    excluded: Vec<ExcludedReading>,
    index: Option<HashMap<i64, usize>>,
    last: usize,
}

impl Sets {
    /// The set of temperature `key`; a new one reserves room for `capacity` readings.
    fn get(&mut self, key: i64, capacity: usize) -> &mut TemperatureSet {
        // Readings of one temperature usually follow each other.
        let at = match self.sets.get(self.last) {
            Some((k, _)) if *k == key => Some(self.last),
            _ => match &self.index {
                Some(index) => index.get(&key).copied(),
                None => self.sets.iter().position(|(k, _)| *k == key),
            },
        };
        let at = at.unwrap_or_else(|| {
            let set = TemperatureSet {
                temperature_k: 0.0,
                concentration_kg_per_m3: Vec::with_capacity(capacity),
                pressure_pa: Vec::with_capacity(capacity),
                pressure_sd_pa: Vec::with_capacity(capacity),
                origins: Vec::with_capacity(capacity),
            };
            self.sets.push((key, set));
            let at = self.sets.len() - 1;
            match &mut self.index {
                Some(index) => {
                    index.insert(key, at);
                }
                None if self.sets.len() > 16 => {
                    self.index = Some(self.sets.iter().enumerate().map(|(i, (k, _))| (*k, i)).collect());
                }
                None => {}
            }
            at
        });
        self.last = at;
        &mut self.sets[at].1
    }

    /// Gives back the spare capacity of every vector (a series is usually complete once the
    /// rows move on to the next one; a campaign holds a hundred thousand such vectors).
    fn shrink(&mut self) {
        self.sets.shrink_to_fit();
        for (_, set) in &mut self.sets {
            set.concentration_kg_per_m3.shrink_to_fit();
            set.pressure_pa.shrink_to_fit();
            set.pressure_sd_pa.shrink_to_fit();
            set.origins.shrink_to_fit();
        }
    }
}

/// Largest number of readings a new temperature reserves room for in advance.
const MAX_CAPACITY_HINT: usize = 64;

/// Readings being grouped, one at a time, into series and temperatures, without holding them
/// as rows first; several files are merged by [`Self::absorb`].
#[derive(Debug, Clone, Default)]
pub struct GroupedReadings {
    order: Vec<(std::sync::Arc<str>, Sets)>,
    by_name: HashMap<std::sync::Arc<str>, usize>,
    current: Option<usize>,
    readings: usize,
    /// Names of series given away by [`Self::take_finished`].
    taken: std::collections::HashSet<std::sync::Arc<str>>,
    reopened: Option<std::sync::Arc<str>>,
    /// Readings per temperature of the last series the rows moved past: a new temperature
    /// reserves that much, so that a campaign's vectors neither grow nor shrink.
    capacity_hint: usize,
}

/// Equal when they hold the same readings in the same series and order: which series was read
/// last and the capacity hint are bookkeeping of the reading, not content (a series refused in
/// a later block leaves them as its removal found them).
impl PartialEq for GroupedReadings {
    fn eq(&self, other: &Self) -> bool {
        self.order == other.order
            && self.readings == other.readings
            && self.taken == other.taken
            && self.reopened == other.reopened
    }
}

impl GroupedReadings {
    /// Adds one reading.
    pub fn push(&mut self, m: &Measurement) {
        // Rows of one series usually follow each other: no lookup while the name repeats.
        let i = match self.current {
            Some(i) if *self.order[i].0 == *m.series => i,
            _ => self.index_of(&m.series),
        };
        self.current = Some(i);
        self.readings += 1;
        let key = (m.temperature_k / TEMPERATURE_GROUPING_K).round() as i64;
        let set = self.order[i].1.get(key, self.capacity_hint);
        set.temperature_k += m.temperature_k;
        set.concentration_kg_per_m3.push(m.concentration_kg_per_m3);
        set.pressure_pa.push(m.pressure_pa);
        set.pressure_sd_pa.push(m.pressure_sd_pa);
        set.origins.push(m.origin);
    }

    /// The index of series `name`, added at the end if new; a new series means the rows have
    /// moved on, so the current one gives back its spare capacity.
    fn index_of(&mut self, name: &std::sync::Arc<str>) -> usize {
        if let Some(&i) = self.by_name.get(name) {
            return i;
        }
        if self.reopened.is_none() && self.taken.contains(name) {
            self.reopened = Some(name.clone());
        }
        if let Some(previous) = self.current {
            let sets = &mut self.order[previous].1;
            // Bounded: one long series should not make every later set reserve its length.
            self.capacity_hint = sets.sets.iter().map(|(_, s)| s.len()).max().unwrap_or(0).min(MAX_CAPACITY_HINT);
            sets.shrink();
        }
        self.order.push((name.clone(), Sets::default()));
        self.by_name.insert(name.clone(), self.order.len() - 1);
        self.order.len() - 1
    }

    /// Adds a reading excluded by the scientist to series `series` (which it creates if new,
    /// so that a series whose every reading is excluded is still reported).
    pub fn push_excluded(&mut self, series: &std::sync::Arc<str>, reading: ExcludedReading) {
        let i = match self.current {
            Some(i) if *self.order[i].0 == **series => i,
            _ => self.index_of(series),
        };
        self.current = Some(i);
        self.order[i].1.excluded.push(reading);
    }

    /// Appends the readings of `other` (a later file) as if they had been pushed here (the
    /// mean temperature of a temperature given in both may differ in the last bit, since its
    /// sum is formed in two parts).
    pub fn absorb(&mut self, other: GroupedReadings) {
        if self.order.is_empty() {
            *self = other;
            self.current = None;
            return;
        }
        self.readings += other.readings;
        self.current = None;
        for (name, sets) in other.order {
            let i = self.index_of(&name);
            self.order[i].1.excluded.extend(sets.excluded);
            for (key, set) in sets.sets {
                let into = self.order[i].1.get(key, 0);
                into.temperature_k += set.temperature_k;
                into.concentration_kg_per_m3.extend(set.concentration_kg_per_m3);
                into.pressure_pa.extend(set.pressure_pa);
                into.pressure_sd_pa.extend(set.pressure_sd_pa);
                into.origins.extend(set.origins);
            }
        }
    }

    /// Removes series `name` and its readings (refused for a value in a later block); a series
    /// already taken is not here to remove, and is named by [`Self::reopened`] if it comes back.
    pub fn remove(&mut self, name: &str) {
        let Some(i) = self.order.iter().position(|(n, _)| **n == *name) else { return };
        let (_, sets) = self.order.remove(i);
        self.readings -= sets.sets.iter().map(|(_, s)| s.len()).sum::<usize>();
        self.by_name = self.order.iter().enumerate().map(|(i, (name, _))| (name.clone(), i)).collect();
        self.current = None;
    }

    /// Number of readings added.
    pub fn len(&self) -> usize {
        self.readings
    }

    /// True when no reading was added.
    pub fn is_empty(&self) -> bool {
        self.readings == 0
    }

    /// The series, in order of first appearance, temperatures ascending, each temperature the
    /// mean of its readings.
    pub fn into_series(self) -> Vec<Series> {
        self.order.into_iter().map(|(name, sets)| finished_series(&name, sets)).collect()
    }

    /// Takes out the series that come before the one being read (the rows have moved past
    /// them), in order of first appearance, as [`Self::into_series`] would give them. A later
    /// reading of a taken series is kept apart and named by [`Self::reopened`]: the series
    /// given away was incomplete.
    pub fn take_finished(&mut self) -> Vec<Series> {
        let Some(current) = self.current else { return Vec::new() };
        let kept = self.order.split_off(current);
        let finished = std::mem::replace(&mut self.order, kept);
        self.by_name = self.order.iter().enumerate().map(|(i, (name, _))| (name.clone(), i)).collect();
        self.current = Some(0);
        finished
            .into_iter()
            .map(|(name, sets)| {
                let series = finished_series(&name, sets);
                self.taken.insert(name);
                series
            })
            .collect()
    }

    /// A series that had readings again after it was taken by [`Self::take_finished`].
    pub fn reopened(&self) -> Option<&str> {
        self.reopened.as_deref()
    }
}

fn finished_series(name: &str, sets: Sets) -> Series {
    let mut temperatures = sets.sets;
    temperatures.sort_by_key(|(key, _)| *key);
    let temperatures = temperatures
        .into_iter()
        .map(|(_, mut set)| {
            set.temperature_k /= set.len() as f64;
            set
        })
        .collect();
    Series { name: name.to_string(), temperatures, volumes: None, excluded: sets.excluded }
}

#[cfg(test)]
// These tests check values that are exact by construction.
#[allow(clippy::float_cmp)]
mod tests {
    use super::*;

    fn m(series: &str, t: f64, c: f64) -> Measurement {
        Measurement::simulated(series, t, c, 1.0)
    }

    #[test]
    fn series_keep_first_seen_order_and_temperatures_sort_ascending() {
        let data = [m("b", 310.0, 1.0), m("a", 300.0, 1.0), m("b", 300.0, 2.0), m("b", 310.001, 3.0)];
        let series = group(&data);
        assert_eq!(series.iter().map(|s| s.name.as_str()).collect::<Vec<_>>(), ["b", "a"]);
        let b = &series[0];
        assert_eq!(b.temperatures.len(), 2);
        assert_eq!(b.temperatures[0].temperature_k, 300.0);
        assert_eq!(b.temperatures[1].concentration_kg_per_m3, vec![1.0, 3.0]);
        assert!((b.temperatures[1].temperature_k - 310.0005).abs() < 1e-9);
    }

    #[test]
    fn a_series_with_many_temperatures_is_grouped_like_one_with_few() {
        // Past 16 temperatures the grouping switches to an index: same result, any order.
        let data: Vec<Measurement> =
            (0..40).rev().flat_map(|t| [m("a", 300.0 + t as f64, 1.0), m("a", 300.0 + t as f64, 2.0)]).collect();
        let series = group(&data);
        assert_eq!(series[0].temperatures.len(), 40);
        assert!(series[0]
            .temperatures
            .iter()
            .enumerate()
            .all(|(i, s)| s.temperature_k == 300.0 + i as f64 && s.len() == 2));
    }

    #[test]
    fn readings_grouped_in_pieces_and_absorbed_match_readings_grouped_at_once() {
        let data: Vec<Measurement> =
            (0..60).map(|i| m(["a", "b", "c"][i % 3], 300.0 + (i % 7) as f64 + 0.001 * i as f64, i as f64)).collect();
        let mut pieces = GroupedReadings::from(&data[..25]);
        pieces.absorb(GroupedReadings::from(&data[25..]));
        assert_eq!(pieces.len(), 60);
        let (a, b) = (pieces.into_series(), group(&data));
        assert_eq!(a.len(), b.len());
        for (x, y) in a.iter().zip(&b) {
            assert_eq!((&x.name, x.temperatures.len()), (&y.name, y.temperatures.len()));
            for (s, t) in x.temperatures.iter().zip(&y.temperatures) {
                assert!((s.temperature_k - t.temperature_k).abs() <= 1e-12 * t.temperature_k);
                assert_eq!((&s.concentration_kg_per_m3, &s.origins), (&t.concentration_kg_per_m3, &t.origins));
            }
        }
    }

    #[test]
    fn series_taken_as_the_rows_move_on_are_the_series_grouped_at_once() {
        let data: Vec<Measurement> =
            (0..60).map(|i| m(["a", "b", "c", "d"][i / 15], 300.0 + (i % 3) as f64, i as f64)).collect();
        let mut readings = GroupedReadings::default();
        let mut taken = Vec::new();
        for chunk in data.chunks(7) {
            for reading in chunk {
                readings.push(reading);
            }
            taken.extend(readings.take_finished());
        }
        assert_eq!(readings.reopened(), None);
        taken.extend(readings.into_series());
        assert_eq!(taken, group(&data));
        // A taken series that comes back is named.
        let mut readings = GroupedReadings::from(&data[..20]);
        assert_eq!(readings.take_finished().len(), 1);
        readings.push(&m("a", 310.0, 1.0));
        assert_eq!(readings.reopened(), Some("a"));
    }
}
