//! The least-squares engine against NIST StRD "Norris" (linear, lower difficulty).
//! Source: NIST Statistical Reference Datasets, Norris.dat (certified values in its header),
//! copied verbatim into tests/data/nist/.

use thetaseek::numerics::linear::{fit, polynomial_design, Weights};

fn norris() -> (Vec<f64>, Vec<f64>) {
    let text = include_str!("../data/nist/Norris.dat");
    // The header says: data on lines 61 to 96, columns y then x.
    let (mut x, mut y) = (Vec::new(), Vec::new());
    for line in text.lines().skip(60).take(36) {
        let v: Vec<f64> = line.split_whitespace().map(|t| t.parse().expect("a number")).collect();
        y.push(v[0]);
        x.push(v[1]);
    }
    (x, y)
}

fn significant_digits(got: f64, certified: f64) -> f64 {
    -((got - certified).abs() / certified.abs()).log10()
}

#[test]
fn norris_certified_values_are_reproduced_to_at_least_nine_significant_digits() {
    let (x, y) = norris();
    assert_eq!(x.len(), 36);
    let f = fit(&polynomial_design(&x, 1), 2, &y, None, Weights::Relative).unwrap();
    // Certified values, Norris.dat lines 31–46.
    let checks = [
        ("B0", f.coefficients[0], -0.262323073774029),
        ("B1", f.coefficients[1], 1.00211681802045),
        ("SD(B0)", f.standard_errors[0], 0.232818234301152),
        ("SD(B1)", f.standard_errors[1], 0.429796848199937E-03),
        ("residual SD", f.residual_sd, 0.884796396144373),
        ("R²", f.r_squared, 0.999993745883712),
        ("residual SS", f.rss_weighted, 26.6173985294224),
    ];
    for (name, got, certified) in checks {
        let digits = significant_digits(got, certified);
        println!("{name}: {got:.15e} vs certified {certified:.15e}: {digits:.1} digits");
        assert!(digits >= 9.0, "{name}: {got} vs certified {certified} ({digits:.1} digits)");
    }
    assert_eq!(f.dof, 34);
}
