//! Weighted least squares (`weights = "population"`): every statistic as
//! R's `lm(..., weights = w)` defines it, and predictions for new rows of a
//! given weight.
//!
//! Source of the expected values: R 4.2.2 (stats::lm with weights,
//! summary.lm, confint, logLik, AIC, BIC, hatvalues, rstandard, rstudent,
//! cooks.distance, predict.lm with `weights`), produced once by
//! tests/reference/make_weights_reference.R on R's open `state.x77` data and
//! committed in tests/fixtures/weights/; the run needs no R.

mod common;

use std::path::PathBuf;

use common::{
    assert_close, assert_numbers, read_json, sheetfit, stderr, Scratch, COEFFICIENT_KEYS,
    INTERVAL_KEYS,
};
use serde_json::Value;

fn fixture(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/weights")
        .join(name)
}

/// Agreement of two solvers of the same problem.
const TOL: f64 = 1e-9;

const JOB: &str = r#"
[input]
workbook = "states.csv"
[output]
workbook = "report.xlsx"
[[model]]
name = "weighted"
response = "murder"
numeric = ["illiteracy", "income"]
categorical = ["region"]
weights = "population"
[model.scenarios]
weight = 1000
rows = [
  { name = "Southern state", illiteracy = 1.5, income = 4000, region = "South" },
  { name = "Western state", illiteracy = 0.6, income = 5000, region = "West" },
]
"#;

fn run(job: &str, data: &str) -> Result<Value, String> {
    let scratch = Scratch::new();
    scratch.write("states.csv", data);
    scratch.write("job.toml", job);
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    if !out.status.success() {
        return Err(stderr(&out));
    }
    Ok(read_json(&scratch.path("report.json"))["models"][0].clone())
}

fn data() -> String {
    std::fs::read_to_string(fixture("states.csv")).expect("fixture")
}

fn f(v: &Value, key: &str) -> f64 {
    v[key]
        .as_f64()
        .unwrap_or_else(|| panic!("{key} is not a number in {v}"))
}

#[test]
fn coefficients_and_fit_statistics_match_weighted_lm() {
    let expected = read_json(&fixture("expected.json"));
    let ours = run(JOB, &data()).expect("the job runs");
    for key in ["n", "df_model", "df_resid"] {
        assert_eq!(ours[key], expected[key], "{key}");
    }
    let got = ours["coefficients"].as_array().expect("coefficients");
    let exp = expected["coefficients"].as_array().expect("coefficients");
    assert_eq!(got.len(), exp.len());
    for (g, e) in got.iter().zip(exp) {
        let term = e["term"].as_str().expect("term");
        assert_eq!(g["term"], e["term"]);
        assert_numbers(term, g, e, &COEFFICIENT_KEYS, TOL);
    }
    for key in [
        "r_squared",
        "adj_r_squared",
        "sigma",
        "f_stat",
        "f_p_value",
        "log_likelihood",
        "aic",
        "bic",
    ] {
        assert_close(key, f(&ours["fit"], key), f(&expected["fit"], key), TOL);
    }
}

#[test]
fn residuals_leverage_and_influence_follow_the_weighted_definitions() {
    let expected = read_json(&fixture("expected.json"));
    let ours = run(JOB, &data()).expect("the job runs");
    let rows = ours["residuals"].as_array().expect("residuals");
    for (key, ours_key) in [
        ("residuals", "residual"),
        ("fitted", "fitted"),
        ("leverage", "leverage"),
        ("standardized_residual", "standardized_residual"),
        ("studentized_residual", "studentized_residual"),
        ("cooks_distance", "cooks_distance"),
    ] {
        let want = expected[key].as_array().expect("a list");
        assert_eq!(rows.len(), want.len());
        for (i, (row, w)) in rows.iter().zip(want).enumerate() {
            assert_close(
                &format!("row {i} {key}"),
                f(row, ours_key),
                w.as_f64().expect("a number"),
                1e-8,
            );
        }
    }
}

#[test]
fn predictions_take_the_new_rows_weight() {
    let expected = read_json(&fixture("expected.json"));
    let ours = run(JOB, &data()).expect("the job runs");
    let got = ours["scenarios"].as_array().expect("scenarios");
    let exp = expected["scenarios"].as_array().expect("scenarios");
    assert_eq!(got.len(), exp.len());
    for (g, e) in got.iter().zip(exp) {
        assert_numbers(&format!("{}", e["name"]), g, e, &INTERVAL_KEYS, TOL);
    }
}

#[test]
fn a_weight_at_or_below_zero_stops_the_job_and_a_blank_one_leaves_the_row_out() {
    let text = data();
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    let zero = lines[3].rsplit_once(',').expect("a row").0.to_string() + ",0";
    let blank = lines[3].rsplit_once(',').expect("a row").0.to_string() + ",";
    lines[3] = zero;
    let message = run(JOB, &(lines.join("\n") + "\n")).expect_err("a zero weight stops the job");
    assert!(
        message.contains("F4") && message.contains("above zero"),
        "{message}"
    );
    lines[3] = blank;
    let ours = run(JOB, &(lines.join("\n") + "\n")).expect("a blank weight leaves the row out");
    assert_eq!(ours["n"], 49);
    assert_eq!(ours["dropped_rows"], serde_json::json!([4]));
}
