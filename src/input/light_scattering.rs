//! Static light-scattering files: K c/R (or the Rayleigh ratio with the optical constant) at
//! each concentration, angle and temperature.

use super::*;

/// Static light scattering: `kc/r (mol/g)`, or `rayleigh ratio (1/cm)` with the optical
/// constant (given or computed from n0, dn/dc and λ0); optional `angle (deg)` (needs n0, λ0).
pub(super) fn read_scattering(table: &Table, options: &ReadOptions) -> Result<FileContents, InputError> {
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
