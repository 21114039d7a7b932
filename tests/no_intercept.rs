//! Models without an intercept: the first factor gets an indicator for
//! every level, later factors and interactions keep their baselines, and the
//! fit does not depend on the baseline chosen.
//!
//! Source of the expected values: statsmodels 0.15.0 formula OLS and
//! get_prediction, where the formula engine (patsy) decides the coding of
//! `y ~ 0 + x + C(f)` (exact versions in the fixture's `source` field),
//! produced once by tests/reference/make_no_intercept_reference.py and
//! committed as tests/fixtures/no_intercept/expected.json. The data are the
//! invented categorical fixture and statsmodels' El Niño series as
//! tests/fixtures/forecast/monthly.csv holds it; the run needs no Python.

mod common;

use std::collections::HashMap;
use std::path::PathBuf;

use common::{
    assert_close, assert_numbers, read_json, sheetfit, Scratch, COEFFICIENT_KEYS, INTERVAL_KEYS,
};
use serde_json::Value;

fn fixtures() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures")
}

/// Agreement expected of two solvers of the same small problem.
const TOL: f64 = 1e-9;

fn expected(case: &str) -> Value {
    read_json(&fixtures().join("no_intercept/expected.json"))["cases"][case].clone()
}

/// Runs `job` on `data` (a path under tests/fixtures) and returns the
/// results JSON of its one model.
fn run(job: &str, data: &str) -> Value {
    let scratch = Scratch::new();
    std::fs::copy(fixtures().join(data), scratch.path("data.csv")).expect("copy fixture");
    scratch.write("job.toml", job);
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    assert!(out.status.success(), "{}", common::stderr(&out));
    read_json(&scratch.path("report.json"))["models"][0].clone()
}

fn f(v: &Value, key: &str) -> f64 {
    v[key]
        .as_f64()
        .unwrap_or_else(|| panic!("{key} is not a number in {v}"))
}

fn by_term(model: &Value) -> HashMap<String, Value> {
    model["coefficients"]
        .as_array()
        .expect("coefficients")
        .iter()
        .map(|c| (c["term"].as_str().expect("term").to_string(), c.clone()))
        .collect()
}

/// Every coefficient (the formula engine's coding: the same set of terms),
/// the degrees of freedom and the fit statistics, which the reference
/// measures about the mean because the full set of indicators holds the
/// constant.
fn assert_matches(case: &str, ours: &Value) {
    let expected = expected(case);
    for key in ["n", "df_model", "df_resid"] {
        assert_eq!(ours[key], expected[key], "{case} {key}");
    }
    let got = by_term(ours);
    let exp = expected["coefficients"].as_array().expect("coefficients");
    assert_eq!(got.len(), exp.len(), "{case}: {:?}", got.keys());
    for e in exp {
        let term = e["term"].as_str().expect("term");
        let g = got
            .get(term)
            .unwrap_or_else(|| panic!("{case}: no coefficient {term} in {:?}", got.keys()));
        assert_numbers(&format!("{case} {term}"), g, e, &COEFFICIENT_KEYS, TOL);
    }
    for key in ["r_squared", "adj_r_squared", "sigma", "f_stat"] {
        assert_close(
            &format!("{case} {key}"),
            f(&ours["fit"], key),
            f(&expected["fit"], key),
            TOL,
        );
    }
    let (pg, pe) = (
        f(&ours["fit"], "f_p_value"),
        f(&expected["fit"], "f_p_value"),
    );
    assert!(
        (pg / pe - 1.0).abs() < 1e-7,
        "{case} f_p_value {pg} vs {pe}"
    );
}

#[test]
fn the_first_factor_gets_every_level_and_later_ones_keep_their_baseline() {
    let job = expected("factors")["job"]
        .as_str()
        .expect("job")
        .to_string();
    let ours = run(&job, "categorical/data.csv");
    assert_matches("factors", &ours);
    let baselines = ours["baselines"].as_array().expect("baselines");
    assert_eq!(baselines[0]["column"], "region");
    assert_eq!(baselines[0]["every_level"], true);
    assert_eq!(baselines[1]["column"], "format");
    assert_eq!(baselines[1]["every_level"], false);
    // Without an intercept the predictors cannot be centred: the Checks
    // sheet says why there are no variance inflation factors.
    let checks = ours["checks"].as_array().expect("checks");
    let vif: Vec<&Value> = checks
        .iter()
        .filter(|c| {
            c["name"]
                .as_str()
                .unwrap_or("")
                .starts_with("variance inflation")
        })
        .collect();
    assert_eq!(vif.len(), 1, "{vif:?}");
    assert!(vif[0]["statistic"].is_null());
    assert!(vif[0]["verdict"]
        .as_str()
        .expect("verdict")
        .starts_with("not computed: without an intercept"));
}

#[test]
fn the_fit_does_not_depend_on_the_first_factors_baseline() {
    let job = expected("factors")["job"]
        .as_str()
        .expect("job")
        .to_string();
    let west = job.replace("region = \"North\"", "region = \"West\"");
    assert_ne!(job, west);
    let ours = run(&west, "categorical/data.csv");
    // Same coefficients as the reference, which used North.
    assert_matches("factors", &ours);
    assert_eq!(ours["baselines"][0]["level"], "West");
}

#[test]
fn interactions_keep_treatment_coding_beside_a_factor_with_every_level() {
    let job = expected("interaction")["job"]
        .as_str()
        .expect("job")
        .to_string();
    let ours = run(&job, "categorical/data.csv");
    assert_matches("interaction", &ours);
    assert!(by_term(&ours).contains_key("region[North]"));
    assert!(!by_term(&ours).contains_key("region[North]:floor_area"));
}

#[test]
fn seasons_without_an_intercept_get_every_month_and_forecast_the_same() {
    let expected = expected("seasons");
    let job = expected["job"].as_str().expect("job").to_string();
    let ours = run(&job, "forecast/monthly.csv");
    assert_matches("seasons", &ours);
    let exp = expected["forecast"].as_array().expect("forecast");
    let got = ours["forecast"].as_array().expect("forecast");
    assert_eq!(got.len(), exp.len());
    for (g, e) in got.iter().zip(exp) {
        assert_eq!(g["period"], e["period"]);
        assert_eq!(g["index"], e["index"]);
        assert_numbers(
            &format!("forecast {}", e["period"]),
            g,
            e,
            &INTERVAL_KEYS,
            TOL,
        );
    }
}
