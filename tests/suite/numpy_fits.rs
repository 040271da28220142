//! Weighted polynomial fits against numpy (numpy.linalg.lstsq + pinv covariance, cross-checked
//! with numpy.polyfit). Fixtures: tests/data/numpy_fits.json, written by the committed
//! generator tests/fixtures/make_numpy_fixtures.py (the numpy version is recorded in the file).

use approx::assert_relative_eq;
use serde_json::Value;
use thetaseek::numerics::linear::{fit, polynomial_design, Weights};
use thetaseek::virial::{fit_form, Readings, VirialForm};

fn cases() -> Vec<Value> {
    let doc: Value = serde_json::from_str(include_str!("../data/numpy_fits.json")).unwrap();
    assert!(doc["numpy_version"].as_str().is_some());
    doc["cases"].as_array().unwrap().clone()
}

fn floats(v: &Value) -> Vec<f64> {
    v.as_array().unwrap().iter().map(|x| x.as_f64().unwrap()).collect()
}

#[test]
fn polynomial_fits_match_numpy_to_1e_9_relative() {
    for case in cases() {
        let name = case["name"].as_str().unwrap();
        let x = floats(&case["x"]);
        let y = floats(&case["y"]);
        let degree = case["degree"].as_u64().unwrap() as usize;
        let w = case["weights"].as_array().map(|_| floats(&case["weights"]));
        let kind = if case["absolute_weights"].as_bool().unwrap() { Weights::Absolute } else { Weights::Relative };
        let f = fit(&polynomial_design(&x, degree), degree + 1, &y, w.as_deref(), kind).unwrap();
        for (got, want) in f.coefficients.iter().zip(floats(&case["coefficients"])) {
            assert_relative_eq!(*got, want, max_relative = 1e-9);
        }
        for (got, want) in f.standard_errors.iter().zip(floats(&case["standard_errors"])) {
            assert_relative_eq!(*got, want, max_relative = 1e-9);
        }
        for (got, want) in f.covariance.iter().zip(floats(&case["covariance"])) {
            assert_relative_eq!(*got, want, max_relative = 1e-8, epsilon = 1e-30);
        }
        assert_relative_eq!(f.rss_weighted, case["rss"].as_f64().unwrap(), max_relative = 1e-8);
        assert_eq!(f.dof as u64, case["dof"].as_u64().unwrap(), "{name}");
    }
}

#[test]
fn virial_forms_on_osmometry_readings_match_numpy() {
    for case in cases().iter().filter(|c| c.get("pressure_pa").is_some()) {
        let c = floats(&case["x"]);
        let pressure = floats(&case["pressure_pa"]);
        let sd = case.get("pressure_sd_pa").map(floats);
        let readings = Readings {
            temperature_k: case["temperature_k"].as_f64().unwrap(),
            concentration: &c,
            pressure: &pressure,
            pressure_sd: sd.as_deref(),
            sd_kind: thetaseek::numerics::linear::Weights::Absolute,
        };
        let form = if case["degree"].as_u64() == Some(2) { VirialForm::Quadratic } else { VirialForm::Linear };
        let f = fit_form(form, &readings).unwrap();
        let beta = floats(&case["coefficients"]);
        let se = floats(&case["standard_errors"]);
        assert_relative_eq!(f.score.inverse_mn, beta[0], max_relative = 1e-9);
        assert_relative_eq!(f.score.a2, beta[1], max_relative = 1e-9);
        assert_relative_eq!(f.score.inverse_mn_se, se[0], max_relative = 1e-9);
        assert_relative_eq!(f.score.a2_se, se[1], max_relative = 1e-9);
        if form == VirialForm::Quadratic {
            let (a3, a3_se) = f.score.a3.unwrap();
            assert_relative_eq!(a3, beta[2], max_relative = 1e-9);
            assert_relative_eq!(a3_se, se[2], max_relative = 1e-9);
        }
    }
}
