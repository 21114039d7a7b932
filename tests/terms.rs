//! The forecaster's terms: logs and lags of predictors, step, spike and
//! ramp events, and Fourier seasons, fitted and forecast.
//!
//! Source of the expected values: statsmodels 0.15.0 OLS and
//! get_prediction on columns built independently in pandas (exact versions
//! in the fixture's `source` field), produced once by
//! tests/reference/make_terms_reference.py and committed with its data in
//! tests/fixtures/terms/: statsmodels' quarterly US macro data (with a
//! missing quarter and a blank response) and its weekly CO2 series. The run
//! needs no Python.

mod common;

use std::path::PathBuf;

use common::{
    assert_close, assert_numbers, read_json, sheetfit, stderr, Scratch, COEFFICIENT_KEYS,
    INTERVAL_KEYS,
};
use serde_json::Value;

fn fixture(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/terms")
        .join(name)
}

/// Agreement of two solvers of the same problem.
const TOL: f64 = 1e-9;

fn expected(case: &str) -> Value {
    read_json(&fixture("expected.json"))["cases"][case].clone()
}

/// Runs the case's job on its data and returns (expected, our model).
fn run(case: &str) -> (Value, Value) {
    let expected = expected(case);
    let scratch = Scratch::new();
    let data = expected["data"].as_str().expect("data");
    std::fs::copy(fixture(data), scratch.path("data.csv")).expect("copy fixture");
    scratch.write("job.toml", expected["job"].as_str().expect("job"));
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    assert!(out.status.success(), "{}", stderr(&out));
    let ours = read_json(&scratch.path("report.json"))["models"][0].clone();
    (expected, ours)
}

fn f(v: &Value, key: &str) -> f64 {
    v[key]
        .as_f64()
        .unwrap_or_else(|| panic!("{key} is not a number in {v}"))
}

/// Coefficients by position and name, the degrees of freedom and the fit
/// statistics (source: statsmodels OLS).
fn assert_fit(case: &str, expected: &Value, ours: &Value) {
    for key in ["n", "df_model", "df_resid"] {
        assert_eq!(ours[key], expected[key], "{case} {key}");
    }
    let exp = expected["coefficients"].as_array().expect("coefficients");
    let got = ours["coefficients"].as_array().expect("coefficients");
    assert_eq!(got.len(), exp.len(), "{case}");
    for (g, e) in got.iter().zip(exp) {
        let term = e["term"].as_str().expect("term");
        assert_eq!(g["term"], e["term"], "{case}");
        assert_numbers(&format!("{case} {term}"), g, e, &COEFFICIENT_KEYS, TOL);
    }
    for key in [
        "r_squared",
        "adj_r_squared",
        "sigma",
        "f_stat",
        "aic",
        "bic",
    ] {
        assert_close(
            &format!("{case} {key}"),
            f(&ours["fit"], key),
            f(&expected["fit"], key),
            TOL,
        );
    }
}

/// Forecast rows: period, index, estimate and both intervals (source:
/// statsmodels get_prediction, exp() of it for a log response).
fn assert_forecast(case: &str, expected: &Value, ours: &Value) {
    let exp = expected["forecast"].as_array().expect("forecast");
    let got = ours["forecast"].as_array().expect("forecast");
    assert_eq!(got.len(), exp.len(), "{case}");
    for (g, e) in got.iter().zip(exp) {
        assert_eq!(g["period"], e["period"], "{case}");
        assert_eq!(g["index"], e["index"], "{case}");
        assert_numbers(
            &format!("{case} forecast {}", e["period"]),
            g,
            e,
            &INTERVAL_KEYS,
            TOL,
        );
    }
}

#[test]
fn logs_lags_and_events_match_the_reference_and_forecast_from_the_last_quarters() {
    let (expected, ours) = run("macro");
    assert_fit("macro", &expected, &ours);
    // The first two quarters have no lags, 1985Q2 no response, and the two
    // quarters after the missing 1990Q3 no lag 1 or lag 2.
    assert_eq!(ours["dropped_rows"], expected["dropped_rows"]);
    assert_forecast("macro", &expected, &ours);
    // With a log response the log of a driver is an elasticity, said in
    // words on the overview with the reference's estimate.
    let elasticity = f(&expected["coefficients"][1], "estimate");
    let note = ours["term_notes"][0].as_str().expect("a note");
    assert!(
        note.contains(&format!(
            "1 % more realgdp goes with about {elasticity:.3} % more realcons"
        )),
        "{note}"
    );
}

#[test]
fn fourier_pairs_of_the_year_on_weekly_data_match_the_reference() {
    let (expected, ours) = run("fourier");
    assert_fit("fourier", &expected, &ours);
    assert_forecast("fourier", &expected, &ours);
}

/// Runs `job` on the macro data and returns the failure message.
fn refusal(job: &str) -> String {
    let scratch = Scratch::new();
    std::fs::copy(fixture("macro.csv"), scratch.path("data.csv")).expect("copy fixture");
    scratch.write("job.toml", job);
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    assert!(!out.status.success(), "the job should stop");
    stderr(&out)
}

const HEAD: &str =
    "[input]\nworkbook = \"data.csv\"\n[[model]]\nname = \"m\"\nresponse = \"realcons\"\n";

#[test]
fn terms_that_cannot_be_formed_stop_the_job_naming_the_key_or_cell() {
    let message = refusal(&format!("{HEAD}lag = {{ realinv = [1] }}\n"));
    assert!(
        message.contains("model[1].lag") && message.contains("trend"),
        "{message}"
    );
    let message = refusal(&format!(
        "{HEAD}trend = \"quarter\"\nstep = {{ change = \"2024-13\" }}\n"
    ));
    assert!(message.contains("model[1].step.change"), "{message}");
    let message = refusal(&format!(
        "{HEAD}trend = \"quarter\"\nstep = {{ change = \"1980-03\" }}\n"
    ));
    assert!(
        message.contains("step.change") && message.contains("quarter"),
        "{message}"
    );
    let message = refusal(&format!(
        "{HEAD}trend = \"quarter\"\nfourier = {{ column = \"quarter\", period = \"year\", pairs = 3 }}\n"
    ));
    assert!(message.contains("at most 2"), "{message}");
    let message = refusal(&format!(
        "{HEAD}trend = \"quarter\"\nlag = {{ realcons = [1] }}\n"
    ));
    assert!(message.contains("response"), "{message}");
}

#[test]
fn a_log_of_a_value_at_or_below_zero_names_the_cell_and_the_count() {
    let scratch = Scratch::new();
    let text = std::fs::read_to_string(fixture("macro.csv")).expect("fixture");
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    for row in [5, 9] {
        let mut cells: Vec<&str> = lines[row - 1].split(',').collect();
        cells[2] = "0";
        lines[row - 1] = cells.join(",");
    }
    scratch.write("data.csv", &(lines.join("\n") + "\n"));
    scratch.write("job.toml", &format!("{HEAD}log = [\"realgdp\"]\n"));
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    let message = stderr(&out);
    assert!(!out.status.success());
    assert!(
        message.contains("C5") && message.contains("2 cells"),
        "{message}"
    );
}

/// Scenario rows against the reference (source: statsmodels formula OLS of
/// ln(revenue) and get_prediction, exp() of its limits; the smeared mean
/// exp(estimate) × mean(exp(residuals)), Duan 1983).
fn assert_scenarios(expected: &Value, ours: &Value) {
    let exp = expected["scenarios"].as_array().expect("scenarios");
    let got = ours["scenarios"].as_array().expect("scenarios");
    assert_eq!(got.len(), exp.len());
    for (g, e) in got.iter().zip(exp) {
        assert_eq!(g["name"], e["name"]);
        for key in [
            "estimate",
            "mean_lower",
            "mean_upper",
            "pred_lower",
            "pred_upper",
            "smeared_mean",
        ] {
            let what = format!("scenario {} {key}", e["name"]);
            assert_close(&what, f(g, key), f(e, key), TOL);
        }
    }
}

#[test]
fn scenarios_written_in_the_job_predict_a_model_without_dates() {
    let (expected, ours) = run("scenarios");
    assert_scenarios(&expected, &ours);
}

#[test]
fn scenarios_from_a_sheet_match_those_written_in_the_job() {
    use common::Cell::{N, S, T};
    let expected = expected("scenarios");
    let scratch = Scratch::new();
    let text = std::fs::read_to_string(fixture("../categorical/data.csv")).expect("fixture");
    let mut data: Vec<Vec<common::Cell>> = Vec::new();
    for (k, line) in text.lines().enumerate() {
        data.push(
            line.split(',')
                .enumerate()
                .map(|(j, v)| match (k, j) {
                    (0, _) | (_, 3 | 4) => S(v.to_string()),
                    _ => N(v.parse().expect("a number")),
                })
                .collect(),
        );
    }
    let mut sheet = vec![vec![
        T("name"),
        T("floor_area"),
        T("staff_hours"),
        T("region"),
        T("format"),
    ]];
    for s in expected["inputs"].as_array().expect("inputs") {
        sheet.push(vec![
            S(s["name"].as_str().expect("name").into()),
            N(f(s, "floor_area")),
            N(f(s, "staff_hours")),
            S(s["region"].as_str().expect("region").into()),
            S(s["format"].as_str().expect("format").into()),
        ]);
    }
    scratch.workbook("data.xlsx", &[("records", data), ("Scenarios", sheet)]);
    let job = expected["job"].as_str().expect("job");
    let rows = job.find("rows = ").expect("inline rows");
    let job = format!(
        "{}sheet = \"Scenarios\"\n",
        &job[..rows].replace("data.csv", "data.xlsx")
    );
    scratch.write(
        "job.toml",
        &job.replace("[input]\n", "[input]\nsheet = \"records\"\n"),
    );
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    assert!(out.status.success(), "{}", stderr(&out));
    let ours = read_json(&scratch.path("report.json"))["models"][0].clone();
    assert_scenarios(&expected, &ours);
    let workbook = scratch.path("report.xlsx");
    let book: calamine::Xlsx<_> = calamine::open_workbook(&workbook).expect("report");
    use calamine::Reader;
    assert!(book.sheet_names().contains(&"Scenarios".to_string()));
}

#[test]
fn a_scenario_without_every_predictor_stops_the_job_naming_it() {
    let message = refusal(&format!(
        "{HEAD}numeric = [\"realgdp\"]\n[model.scenarios]\nrows = [{{ name = \"boom\" }}]\n"
    ));
    assert!(
        message.contains("model[1].scenarios.rows[1]") && message.contains("realgdp"),
        "{message}"
    );
}

#[test]
fn lags_of_panel_data_are_taken_within_each_series_and_forecast_for_each() {
    let (expected, ours) = run("panel");
    assert_fit("panel", &expected, &ours);
    assert_forecast("panel", &expected, &ours);
    // A forecast row for each series in each period, in series order.
    for (g, e) in ours["forecast"]
        .as_array()
        .expect("forecast")
        .iter()
        .zip(expected["forecast"].as_array().expect("forecast"))
    {
        assert_eq!(g["inputs"]["firm"], e["firm"]);
    }
    // Each year's total over the firms, with its intervals (source:
    // statsmodels get_prediction of the summed design row, a new total
    // carrying one error per firm).
    let got = ours["forecast_totals"].as_array().expect("totals");
    let exp = expected["forecast_totals"].as_array().expect("totals");
    assert_eq!(got.len(), exp.len());
    for (g, e) in got.iter().zip(exp) {
        assert_eq!(g["period"], e["period"]);
        assert_eq!(g["series"], e["series"]);
        assert_numbers(&format!("total {}", e["period"]), g, e, &INTERVAL_KEYS, TOL);
    }
}

#[test]
fn two_rows_of_one_series_in_one_period_stop_the_job() {
    let scratch = Scratch::new();
    let text = std::fs::read_to_string(fixture("grunfeld.csv")).expect("fixture");
    let mut lines: Vec<&str> = text.lines().collect();
    let copy = lines[3];
    lines.push(copy);
    scratch.write("data.csv", &(lines.join("\n") + "\n"));
    let job = expected("panel")["job"].as_str().expect("job").to_string();
    scratch.write("job.toml", &job);
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    let message = stderr(&out);
    assert!(!out.status.success());
    assert!(
        message.contains("1937 of series 'firm 01'") && message.contains("A4"),
        "{message}"
    );
}

#[test]
fn a_model_by_level_fits_each_level_as_its_own_model_and_lists_those_it_cannot() {
    let expected = expected("by_firm");
    let scratch = Scratch::new();
    // A twelfth firm of three rows: too few for four coefficients.
    let mut data = std::fs::read_to_string(fixture("grunfeld.csv")).expect("fixture");
    for (year, value, capital) in [
        (1950, 300.0, 40.0),
        (1951, 320.0, 41.0),
        (1952, 310.0, 45.0),
    ] {
        data.push_str(&format!("{year},firm 12,10.5,{value},{capital}\n"));
    }
    scratch.write("data.csv", &data);
    scratch.write("job.toml", expected["job"].as_str().expect("job"));
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    assert!(out.status.success(), "{}", stderr(&out));
    let json = read_json(&scratch.path("report.json"));
    let models = json["models"].as_array().expect("models");
    let levels = expected["levels"].as_array().expect("levels");
    assert_eq!(models.len(), levels.len());
    for (ours, level) in models.iter().zip(levels) {
        let name = level["level"].as_str().expect("level");
        assert_eq!(ours["name"], format!("per firm [{name}]"));
        assert_eq!(ours["by"]["level"], name);
        // Source: statsmodels OLS of that firm's rows alone.
        assert_fit(name, level, ours);
        assert_forecast(name, level, ours);
    }
    let skipped = json["by_skipped"].as_array().expect("skipped levels");
    assert_eq!(skipped.len(), 1);
    assert_eq!(skipped[0]["level"], "firm 12");
    assert_eq!(skipped[0]["rows"], 3);
    assert!(
        skipped[0]["reason"]
            .as_str()
            .expect("a reason")
            .contains("has 3 usable rows for"),
        "{}",
        skipped[0]
    );
    let book: calamine::Xlsx<_> =
        calamine::open_workbook(scratch.path("report.xlsx")).expect("report");
    use calamine::Reader;
    assert!(book.sheet_names().contains(&"By series".to_string()));
}
