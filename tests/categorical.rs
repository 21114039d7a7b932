//! A model with numeric and categorical predictors, checked against an
//! outside reference library.
//!
//! Source of the expected values: statsmodels 0.15.0 OLS with treatment
//! coding (exact versions of it and numpy, pandas, scipy, patsy recorded in
//! the fixture's `source` field), produced once by
//! tests/reference/make_categorical_reference.py and committed as
//! tests/fixtures/categorical/expected.json. The data in data.csv is
//! invented and small (30 rows); the run here needs no Python.

mod common;

use std::path::PathBuf;

use common::{assert_close, read_json, sheetfit, Scratch};
use serde_json::Value;

fn fixture(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/categorical")
        .join(name)
}

const JOB: &str = r#"
title = "Reference check"
[input]
workbook = "data.csv"
[output]
workbook = "report.xlsx"
[[model]]
name = "reference"
response = "revenue"
numeric = ["floor_area", "staff_hours"]
categorical = { region = "North", format = "Garden shop" }
"#;

/// Runs the fixture job and returns (expected, our model JSON).
fn run_reference() -> (Value, Value) {
    let scratch = Scratch::new();
    std::fs::copy(fixture("data.csv"), scratch.path("data.csv")).expect("copy fixture");
    scratch.write("job.toml", JOB);
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    assert!(out.status.success(), "{}", common::stderr(&out));
    let ours = read_json(&scratch.path("report.json"))["models"][0].clone();
    (read_json(&fixture("expected.json")), ours)
}

fn f(v: &Value, key: &str) -> f64 {
    v[key]
        .as_f64()
        .unwrap_or_else(|| panic!("{key} is not a number in {v}"))
}

/// Relative tolerance for every statistic: the reference library and this
/// tool solve the same small, well-conditioned problem, so they should
/// agree to near double precision.
const TOL: f64 = 1e-9;

#[test]
fn coefficients_match_the_reference_library() {
    let (expected, ours) = run_reference();
    assert_eq!(ours["n"], expected["n"]);
    assert_eq!(ours["df_model"], expected["df_model"]);
    assert_eq!(ours["df_resid"], expected["df_resid"]);
    let exp = expected["coefficients"].as_array().unwrap();
    let got = ours["coefficients"].as_array().unwrap();
    assert_eq!(got.len(), exp.len());
    for (g, e) in got.iter().zip(exp) {
        let term = e["term"].as_str().unwrap();
        assert_eq!(g["term"].as_str().unwrap(), term);
        for key in [
            "estimate",
            "std_error",
            "t_stat",
            "p_value",
            "ci_lower",
            "ci_upper",
        ] {
            assert_close(&format!("{term} {key}"), f(g, key), f(e, key), TOL);
        }
    }
}

#[test]
fn fit_statistics_match_the_reference_library() {
    let (expected, ours) = run_reference();
    let (e, g) = (&expected["fit"], &ours["fit"]);
    for key in [
        "r_squared",
        "adj_r_squared",
        "sigma",
        "f_stat",
        "log_likelihood",
        "aic",
        "bic",
    ] {
        assert_close(key, f(g, key), f(e, key), TOL);
    }
    // A p-value near 5e-21: compare relative to its own size.
    let (pg, pe) = (f(g, "f_p_value"), f(e, "f_p_value"));
    assert!((pg / pe - 1.0).abs() < 1e-7, "f_p_value {pg} vs {pe}");
}

fn assert_anova(name: &str, got: &Value, expected: &Value) {
    let got = got.as_array().unwrap();
    let expected = expected.as_array().unwrap();
    assert_eq!(got.len(), expected.len(), "{name} rows");
    for (g, e) in got.iter().zip(expected) {
        let term = e["term"].as_str().unwrap();
        assert_eq!(g["term"].as_str().unwrap(), term, "{name}");
        assert_eq!(g["df"].as_u64(), e["df"].as_u64(), "{name} {term} df");
        for key in ["sum_sq", "mean_sq"] {
            assert_close(&format!("{name} {term} {key}"), f(g, key), f(e, key), TOL);
        }
        if term != "Residual" {
            assert_close(
                &format!("{name} {term} F"),
                f(g, "f_stat"),
                f(e, "f_stat"),
                TOL,
            );
            let (pg, pe) = (f(g, "p_value"), f(e, "p_value"));
            assert!((pg / pe - 1.0).abs() < 1e-7, "{name} {term} p {pg} vs {pe}");
        }
    }
}

#[test]
fn sequential_anova_matches_the_reference_library() {
    let (expected, ours) = run_reference();
    assert_anova("sequential", &ours["anova"], &expected["anova_sequential"]);
}

#[test]
fn joint_factor_tests_match_the_reference_library() {
    let (expected, ours) = run_reference();
    assert_anova(
        "each term last",
        &ours["term_tests"],
        &expected["anova_each_term_last"],
    );
}

#[test]
fn residuals_and_influence_match_the_reference_library() {
    let (expected, ours) = run_reference();
    let got = ours["residuals"].as_array().unwrap();
    let exp = expected["residuals"].as_array().unwrap();
    assert_eq!(got.len(), exp.len());
    for (g, e) in got.iter().zip(exp) {
        // The reference counts data rows from 1; the tool reports sheet
        // rows, and the header takes row 1.
        assert_eq!(g["row"].as_u64().unwrap(), e["row"].as_u64().unwrap() + 1);
        for key in [
            "actual",
            "fitted",
            "residual",
            "standardized_residual",
            "leverage",
            "cooks_distance",
        ] {
            assert_close(
                &format!("row {} {key}", e["row"]),
                f(g, key),
                f(e, key),
                TOL,
            );
        }
    }
}

/// Labels that differ only in case ("North" and "north") stop the job,
/// naming both and their first cells, unless the job says they are
/// different levels; then each is a level of its own.
#[test]
fn levels_that_differ_only_in_case_stop_unless_told() {
    let scratch = Scratch::new();
    let data = std::fs::read_to_string(fixture("data.csv")).expect("read fixture");
    let mut seen = 0;
    let changed: String = data
        .lines()
        .map(|line| {
            let mut line = line.to_string();
            if line.contains(",North,") {
                seen += 1;
                if seen == 2 {
                    line = line.replace(",North,", ",north,");
                }
            }
            line + "\n"
        })
        .collect();
    scratch.write("data.csv", &changed);
    let row = changed
        .lines()
        .position(|l| l.contains(",north,"))
        .expect("a changed row")
        + 1;
    let first = changed
        .lines()
        .position(|l| l.contains(",North,"))
        .expect("a North row")
        + 1;
    scratch.write("job.toml", JOB);
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    assert_eq!(out.status.code(), Some(1));
    let err = common::stderr(&out);
    assert!(
        err.contains(&format!(
            "categorical column 'region' has the levels 'North' (D{first}) and 'north' (D{row}), which differ only in case or spaces"
        )) && err.contains("`case_sensitive_levels = true` under [input]"),
        "{err}"
    );
    scratch.write(
        "job.toml",
        &JOB.replace("[input]\n", "[input]\ncase_sensitive_levels = true\n"),
    );
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    assert!(out.status.success(), "{}", common::stderr(&out));
    let terms: Vec<String> = read_json(&scratch.path("report.json"))["models"][0]["coefficients"]
        .as_array()
        .expect("coefficients")
        .iter()
        .map(|c| c["term"].as_str().unwrap_or_default().to_string())
        .collect();
    assert!(terms.contains(&"region[north]".to_string()), "{terms:?}");
}
