//! Newey-West (HAC) standard errors: `standard_errors = "HAC"`, with the
//! default lag rule and with `hac_lags`.
//!
//! Source of the expected values: R 4.2.2 with sandwich 3.0.2,
//! `NeweyWest(fit, lag = L, prewhite = FALSE, adjust = FALSE)` on R's open
//! `Nile` series, produced once by tests/reference/make_hac_reference.R and
//! committed as tests/fixtures/hac/expected.json; the data are
//! tests/fixtures/periods/nile.csv. The run needs no R.

mod common;

use std::path::PathBuf;

use common::{assert_close, read_json, sheetfit, stderr, Scratch};
use serde_json::Value;

fn fixtures() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures")
}

/// Two computations of the same sums of products.
const TOL: f64 = 1e-10;

/// Runs the Nile model with `extra` job lines and returns its JSON.
fn run(extra: &str) -> Result<Value, String> {
    let scratch = Scratch::new();
    std::fs::copy(
        fixtures().join("periods/nile.csv"),
        scratch.path("nile.csv"),
    )
    .expect("copy");
    scratch.write(
        "job.toml",
        &format!(
            "suggest = false\n[input]\nworkbook = \"nile.csv\"\n[output]\nworkbook = \"report.xlsx\"\n[[model]]\nname = \"nile\"\nresponse = \"volume\"\ntrend = \"year\"\nstep = {{ dam = \"1899\" }}\n{extra}"
        ),
    );
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    if !out.status.success() {
        return Err(stderr(&out));
    }
    Ok(read_json(&scratch.path("report.json"))["models"][0].clone())
}

fn assert_matches(ours: &Value, lags: &str) {
    let expected = read_json(&fixtures().join("hac/expected.json"))["lags"][lags].clone();
    assert_eq!(ours["standard_errors"], "HAC");
    assert_eq!(ours["hac_lags"].to_string(), lags);
    let got = ours["coefficients"].as_array().expect("coefficients");
    let exp = expected.as_array().expect("coefficients");
    assert_eq!(got.len(), exp.len());
    for (g, e) in got.iter().zip(exp) {
        assert_eq!(g["term"], e["term"]);
        for key in [
            "estimate",
            "std_error",
            "t_stat",
            "p_value",
            "ci_lower",
            "ci_upper",
        ] {
            let what = format!("lag {lags} {} {key}", e["term"]);
            let (a, b) = (g[key].as_f64().expect("ours"), e[key].as_f64().expect("R"));
            // p-values near 1e-61 keep their digits relative to themselves.
            assert_close(&what, a, b, if key == "p_value" { 1e-8 } else { TOL });
        }
    }
}

#[test]
fn newey_west_with_the_default_lags_matches_sandwich() {
    let ours = run("standard_errors = \"HAC\"\n").expect("the job runs");
    assert_matches(&ours, "4");
}

#[test]
fn newey_west_with_hac_lags_matches_sandwich() {
    let ours = run("standard_errors = \"HAC\"\nhac_lags = 2\n").expect("the job runs");
    assert_matches(&ours, "2");
}

/// Runs a model of `response` with `terms` and Newey-West standard errors
/// on the fixture `data` (a path under tests/fixtures) and returns the
/// message the refused job prints.
fn refused(data: &str, response: &str, terms: &str) -> String {
    let scratch = Scratch::new();
    std::fs::copy(fixtures().join(data), scratch.path("data.csv")).expect("copy");
    scratch.write(
        "job.toml",
        &format!("[input]\nworkbook = \"data.csv\"\n[[model]]\nname = \"m\"\nresponse = \"{response}\"\n{terms}standard_errors = \"HAC\"\n"),
    );
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    assert!(!out.status.success(), "the job should stop");
    stderr(&out)
}

#[test]
fn newey_west_needs_periods_and_hac_lags_needs_hac() {
    let message = refused("periods/nile.csv", "volume", "numeric = [\"year\"]\n");
    assert!(
        message.contains("model[1].standard_errors") && message.contains("period order"),
        "{message}"
    );
    let message = run("hac_lags = 2\n").expect_err("hac_lags alone is refused");
    assert!(message.contains("model[1].hac_lags"), "{message}");
}

#[test]
fn newey_west_of_panel_data_is_refused_with_the_reason() {
    let message = refused(
        "terms/grunfeld.csv",
        "invest",
        "numeric = [\"value\"]\ntrend = \"year\"\n",
    );
    assert!(
        message.contains("one series in period order") && message.contains("`by`"),
        "{message}"
    );
}
