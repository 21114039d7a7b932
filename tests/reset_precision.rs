//! RESET on designs where a double-precision solve of the augmented
//! regression loses digits: a near-collinear open dataset (Longley), a
//! driver near one million, and a response near one million.
//!
//! Source of the expected values: mpmath 1.3.0 at 60 significant digits
//! (exact versions in the fixture's `source` field), produced once by
//! tests/reference/make_reset_reference.py and committed as
//! tests/fixtures/reset/expected.json with the data; the run needs no
//! Python.

mod common;

use std::path::PathBuf;

use common::{read_json, sheetfit, Scratch};
use serde_json::Value;

/// Relative agreement required of the F statistic and its p-value: the
/// precision of every other statistic of the tool.
const TOL: f64 = 1e-10;

fn cases() -> Value {
    read_json(&PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/reset/expected.json"))
        ["cases"]
        .clone()
}

/// Writes the case's data as CSV, fits the response on every predictor
/// and returns the RESET check of the results JSON.
fn reset_check(case: &Value) -> Value {
    let predictors = case["predictors"].as_object().expect("predictors");
    let names: Vec<&String> = predictors.keys().collect();
    let response = case["response"].as_str().expect("response");
    let y = case["y"].as_array().expect("y");
    let mut csv = format!(
        "{response},{}\n",
        names
            .iter()
            .map(|n| n.as_str())
            .collect::<Vec<_>>()
            .join(",")
    );
    for (i, v) in y.iter().enumerate() {
        let row: Vec<String> = std::iter::once(v)
            .chain(names.iter().map(|n| &predictors[n.as_str()][i]))
            .map(|v| format!("{:?}", v.as_f64().expect("a number")))
            .collect();
        csv.push_str(&row.join(","));
        csv.push('\n');
    }
    let scratch = Scratch::new();
    scratch.write("data.csv", &csv);
    let numeric: Vec<String> = names.iter().map(|n| format!("\"{n}\"")).collect();
    scratch.write(
        "job.toml",
        &format!(
            "suggest = false\n[input]\nworkbook = \"data.csv\"\n[output]\nworkbook = \"report.xlsx\"\n[[model]]\nname = \"m\"\nresponse = \"{response}\"\nnumeric = [{}]\n",
            numeric.join(", ")
        ),
    );
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    assert!(out.status.success(), "{}", common::stderr(&out));
    let json = read_json(&scratch.path("report.json"));
    json["models"][0]["checks"]
        .as_array()
        .expect("checks")
        .iter()
        .find(|c| c["name"] == "reset")
        .expect("a RESET check")
        .clone()
}

fn assert_case(name: &str) {
    let case = &cases()[name];
    let expected = &case["reset"];
    let check = reset_check(case);
    for (ours, reference, what) in [
        (&check["statistic"], &expected["statistic"], "F"),
        (&check["p_value"], &expected["p_value"], "p-value"),
    ] {
        let (g, e) = (
            ours.as_f64().expect("computed"),
            reference.as_f64().expect("reference"),
        );
        let relative = (g - e).abs() / e.abs();
        println!("{name} {what}: ours {g:e}, mpmath {e:e}, relative {relative:.1e}");
        assert!(relative <= TOL, "{name} {what}: {g} vs {e} ({relative:e})");
    }
}

#[test]
fn reset_on_the_longley_design_matches_60_digits() {
    assert_case("longley");
}

#[test]
fn reset_with_a_driver_near_one_million_matches_60_digits() {
    assert_case("offset_driver");
}

#[test]
fn reset_with_a_response_near_one_million_matches_60_digits() {
    assert_case("large_level");
}
