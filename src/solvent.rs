//! Solvent properties follow the solvent: a solvents table's molar volume matched to each series
//! by the solvent it names (else by the series' own name, as in `plan`), so that series in
//! different solvents do not share one V1. Pure computation.

use crate::dataset::Series;
use crate::dataset::Volumes;
use crate::input::SolventProperties;

/// The table's row for a series: the one named after its solvent, else after the series.
pub fn row_for<'a>(
    table: &'a [SolventProperties],
    series: &str,
    solvent: Option<&str>,
) -> Option<&'a SolventProperties> {
    let name = solvent.unwrap_or(series);
    table.iter().find(|s| s.name == name)
}

/// Gives a series that has no v̄ and V1 of its own (columns win) the table's V1 with the
/// polymer's v̄ (m³/kg). Returns a warning where the table's V1 differs from a single molar
/// volume given for every series (`flag`, m³/mol), which it replaces for that series.
pub fn attach_molar_volume(
    series: &mut Series,
    solvent: Option<&str>,
    table: &[SolventProperties],
    specific_volume: Option<f64>,
    flag: Option<f64>,
) -> Option<String> {
    if series.volumes.is_some() {
        return None;
    }
    let (Some(v), Some(v1)) = (specific_volume, row_for(table, &series.name, solvent).and_then(|r| r.molar_volume))
    else {
        return None;
    };
    series.volumes = Some(Volumes { specific_volume: v, molar_volume: v1 });
    flag.filter(|f| ((f - v1) / v1).abs() > 1e-9).map(|f| {
        format!(
            "series '{}': the solvents table's molar volume {:.4} mL/mol is used, not --solvent-molar-volume {:.4}",
            series.name,
            v1 * 1e6,
            f * 1e6
        )
    })
}

/// A warning when one molar volume (`--solvent-molar-volume`) is applied to series that name
/// different solvents: ψ1 and χ of all but one of them would be wrong.
pub fn one_volume_for_several_solvents(flag: Option<f64>, solvents: &[&str]) -> Option<String> {
    let flag = flag?;
    let mut distinct: Vec<&str> = solvents.to_vec();
    distinct.sort_unstable();
    distinct.dedup();
    (distinct.len() > 1).then(|| {
        format!(
            "--solvent-molar-volume {:.4} mL/mol was applied to series in {} different solvents ({}): ψ1 and χ are right for one of them at most; give each solvent its molar volume with --solvents or a 'solvent molar volume (mL/mol)' column",
            flag * 1e6,
            distinct.len(),
            distinct.join(", ")
        )
    })
}
