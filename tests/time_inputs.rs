//! Date columns, trends, seasons, forecasts and back-tests, driven through
//! the binary on small workbooks made up in each test.
//!
//! The failure tests pin the exit status, the key parts of the message (the
//! file, sheet, cell and value where there is one) and that nothing was
//! written: no report, no JSON, no temporary `.sheetfit-*` file. The success
//! tests pin period labels, trend indexes, coefficient names and forecast
//! values worked out here from the calendar and from the JSON's own
//! coefficients.

mod common;

use std::path::PathBuf;

use calamine::{open_workbook_auto, Data, Range, Reader};
use chrono::{Datelike, Duration, NaiveDate};
use serde_json::Value;

use common::{
    assert_command_fails, assert_files, assert_run_and_check_fail, assert_status,
    assert_stderr_has, read_json, sheetfit, status, Cell, Scratch,
};
use Cell::{N, S, T};

// ---------------------------------------------------------------------------
// Helpers

/// `run` must fail as [`assert_command_fails`] says (for cases where only
/// `run` is exercised).
fn assert_run_fails(scratch: &Scratch, code: i32, parts: &[&str], inputs: &[&str]) {
    assert_command_fails(scratch, "run", code, parts, inputs);
}

/// The two input files of every failure test.
const INPUTS: [&str; 2] = ["data.xlsx", "job.toml"];

/// A job reading sheet `records` of data.xlsx, writing report.xlsx and
/// report.json, with one model named `sales` whose body is `model`.
fn job_with(model: &str) -> String {
    format!(
        "[input]\nworkbook = \"data.xlsx\"\nsheet = \"records\"\n\n\
         [output]\nworkbook = \"report.xlsx\"\n\n\
         [[model]]\nname = \"sales\"\n{model}\n"
    )
}

/// Runs `sheetfit run job.toml`, which must succeed and write report.xlsx
/// and report.json and nothing else; returns the first model's JSON.
fn run_ok(scratch: &Scratch, inputs: &[&str]) -> Value {
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    assert_status(&out, 0);
    let mut expected: Vec<&str> = inputs.to_vec();
    expected.extend(["report.json", "report.xlsx"]);
    assert_files(scratch, &expected);
    read_json(&scratch.path("report.json"))["models"][0].clone()
}

/// Runs `sheetfit check job.toml`, which must succeed; returns its summary.
fn check_ok(scratch: &Scratch) -> String {
    let out = sheetfit(&scratch.path(""), &["check", "job.toml"]);
    assert_status(&out, 0);
    String::from_utf8(out.stdout).expect("summary is UTF-8")
}

/// A small, fixed wiggle so that no fit is exact: values in −0.5..=0.5.
fn noise(i: usize) -> f64 {
    ((i * 37 + 5) % 11) as f64 / 10.0 - 0.5
}

/// The month label ("2024-03") `k` months after `year`-`month`.
fn month_label(year: i32, month: u32, k: usize) -> String {
    let m0 = year * 12 + month as i32 - 1 + k as i32;
    format!("{:04}-{:02}", m0.div_euclid(12), m0.rem_euclid(12) + 1)
}

/// The quarter label ("2024-Q3") `k` quarters after `year`-Q`quarter`.
fn quarter_label(year: i32, quarter: u32, k: usize) -> String {
    let q0 = year * 4 + quarter as i32 - 1 + k as i32;
    format!("{:04}-Q{}", q0.div_euclid(4), q0.rem_euclid(4) + 1)
}

/// The ISO week label ("2024-W05") of `date`, from the calendar.
fn week_label(date: NaiveDate) -> String {
    let w = date.iso_week();
    format!("{:04}-W{:02}", w.year(), w.week())
}

fn date(y: i32, m: u32, d: u32) -> NaiveDate {
    NaiveDate::from_ymd_opt(y, m, d).expect("a calendar date")
}

/// A sheet with a date column `month` (column A) holding `stamps` and a
/// response `y` (column B) rising by 1.5 a row.
fn series_rows(stamps: &[Cell]) -> Vec<Vec<Cell>> {
    dated_rows("month", stamps)
}

/// As [`series_rows`], with the date column headed `header`.
fn dated_rows(header: &'static str, stamps: &[Cell]) -> Vec<Vec<Cell>> {
    let mut rows = vec![vec![T(header), T("y")]];
    for (i, stamp) in stamps.iter().enumerate() {
        rows.push(vec![stamp.clone(), N(50.0 + 1.5 * i as f64 + noise(i))]);
    }
    rows
}

/// `n` month labels from 2024-01, as text cells.
fn months_2024(n: usize) -> Vec<Cell> {
    (0..n).map(|k| S(month_label(2024, 1, k))).collect()
}

fn f(v: &Value, key: &str) -> f64 {
    v[key]
        .as_f64()
        .unwrap_or_else(|| panic!("{key} is not a number in {v}"))
}

fn text<'a>(v: &'a Value, key: &str) -> &'a str {
    v[key]
        .as_str()
        .unwrap_or_else(|| panic!("{key} is not text in {v}"))
}

fn int(v: &Value, key: &str) -> i64 {
    v[key]
        .as_i64()
        .unwrap_or_else(|| panic!("{key} is not an integer in {v}"))
}

fn list<'a>(v: &'a Value, what: &str) -> &'a Vec<Value> {
    v.as_array()
        .unwrap_or_else(|| panic!("{what} is not a list: {v}"))
}

/// The estimate of the coefficient named `term`.
fn coef(model: &Value, term: &str) -> f64 {
    list(&model["coefficients"], "coefficients")
        .iter()
        .find(|c| text(c, "term") == term)
        .map(|c| f(c, "estimate"))
        .unwrap_or_else(|| panic!("no coefficient {term} in {}", model["coefficients"]))
}

fn coefficient_names(model: &Value) -> Vec<String> {
    list(&model["coefficients"], "coefficients")
        .iter()
        .map(|c| text(c, "term").to_string())
        .collect()
}

/// Asserts `|got − expected| ≤ tol·|expected|`.
fn assert_rel(what: &str, got: f64, expected: f64, tol: f64) {
    assert!(
        (got - expected).abs() <= tol * expected.abs(),
        "{what}: got {got}, expected {expected} (relative tolerance {tol})"
    );
}

// ---------------------------------------------------------------------------
// Reading the date column

#[test]
fn duplicate_period_label_in_a_single_series_names_both_cells_and_the_period() {
    let s = Scratch::new();
    // 2024-01 .. 2024-12, with a second 2024-03 after 2024-04: sheet rows
    // 4 and 6.
    let mut stamps = months_2024(12);
    stamps.insert(4, T("2024-03"));
    s.workbook("data.xlsx", &[("records", series_rows(&stamps))]);
    s.write("job.toml", &job_with("response = \"y\"\ntrend = \"month\""));
    assert_run_and_check_fail(
        &s,
        1,
        &[
            "model 'sales': sheet 'records' of data.xlsx: cells A4 and A6 are both in period \
             2024-03; a single series has one row per period",
        ],
        &INPUTS,
    );
}

#[test]
fn two_iso_dates_in_one_month_with_frequency_month_are_a_duplicate_period() {
    let s = Scratch::new();
    // The 15th of each month of 2024, and 2024-03-28 in the last row
    // (sheet row 14): two rows in March.
    let mut stamps: Vec<Cell> = (1..=12).map(|m| S(date(2024, m, 15).to_string())).collect();
    stamps.push(T("2024-03-28"));
    s.workbook("data.xlsx", &[("records", series_rows(&stamps))]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\ntrend = \"month\"\nfrequency = \"month\""),
    );
    assert_run_and_check_fail(
        &s,
        1,
        &["sheet 'records' of data.xlsx: cells A4 and A14 are both in period 2024-03"],
        &INPUTS,
    );
}

#[test]
fn quarter_label_in_a_monthly_series_names_the_cell_and_value() {
    let s = Scratch::new();
    let mut stamps = months_2024(12);
    // 2024-03 (sheet row 4) written as a quarter.
    stamps[2] = T("2024-Q1");
    s.workbook("data.xlsx", &[("records", series_rows(&stamps))]);
    s.write("job.toml", &job_with("response = \"y\"\ntrend = \"month\""));
    assert_run_and_check_fail(
        &s,
        1,
        &[
            "model 'sales': sheet 'records' of data.xlsx, cell A4 in date column 'month' holds \
             '2024-Q1', which is not a month; the series is by month",
        ],
        &INPUTS,
    );
}

#[test]
fn quarter_label_in_the_first_row_of_a_monthly_series_is_the_cell_named() {
    let s = Scratch::new();
    let mut stamps = months_2024(12);
    // 2024-01 (sheet row 2) written as a quarter; the eleven others are months.
    stamps[0] = T("2024-Q1");
    s.workbook("data.xlsx", &[("records", series_rows(&stamps))]);
    s.write("job.toml", &job_with("response = \"y\"\ntrend = \"month\""));
    assert_run_and_check_fail(
        &s,
        1,
        &["cell A2 in date column 'month' holds '2024-Q1', which is not a month"],
        &INPUTS,
    );
}

#[test]
fn unreadable_date_text_names_the_cell_the_value_and_the_accepted_forms() {
    let s = Scratch::new();
    let mut stamps = months_2024(12);
    stamps[4] = T("next month");
    s.workbook("data.xlsx", &[("records", series_rows(&stamps))]);
    s.write("job.toml", &job_with("response = \"y\"\ntrend = \"month\""));
    assert_run_and_check_fail(
        &s,
        1,
        &[
            "model 'sales': sheet 'records' of data.xlsx, cell A6 in date column 'month' holds \
             text 'next month', not a date",
            "use a date cell, an ISO date such as 2024-07-01, a period such as 2024-07, \
             Jan-2024, 2024M01, 2024-Q3 or Q3 2024, or a year such as 1935",
        ],
        &INPUTS,
    );
}

#[test]
fn plain_number_in_the_date_column_is_refused_naming_the_cell() {
    let s = Scratch::new();
    let mut stamps = months_2024(12);
    // A date's serial number, without a date format: a plain number.
    stamps[3] = N(45000.0);
    s.workbook("data.xlsx", &[("records", series_rows(&stamps))]);
    s.write("job.toml", &job_with("response = \"y\"\ntrend = \"month\""));
    assert_run_and_check_fail(
        &s,
        1,
        &[
            "cell A5 in date column 'month' holds number '45000', not a date",
            "use a date cell, an ISO date such as 2024-07-01",
        ],
        &INPUTS,
    );
}

#[test]
fn date_formatted_cells_are_read_as_dates() {
    // The counterpart of the plain number: the same kind of serial numbers
    // with a date format are date cells, and the series is monthly.
    let s = Scratch::new();
    let path = s.path("data.xlsx");
    let mut wb = rust_xlsxwriter::Workbook::new();
    let ws = wb.add_worksheet();
    ws.set_name("records").unwrap();
    ws.write_string(0, 0, "month").unwrap();
    ws.write_string(0, 1, "y").unwrap();
    let format = rust_xlsxwriter::Format::new().set_num_format("yyyy-mm-dd");
    let origin = date(1899, 12, 30);
    for k in 0..12u32 {
        let serial = (date(2023, k + 1, 1) - origin).num_days() as f64;
        ws.write_number_with_format(k + 1, 0, serial, &format)
            .unwrap();
        ws.write_number(k + 1, 1, 50.0 + 1.5 * f64::from(k) + noise(k as usize))
            .unwrap();
    }
    wb.save(&path).unwrap();
    s.write("job.toml", &job_with("response = \"y\"\ntrend = \"month\""));
    let model = run_ok(&s, &INPUTS);
    let timing = &model["timing"];
    assert_eq!(text(timing, "frequency"), "month", "{timing}");
    assert_eq!(timing["detected"], true, "{timing}");
    assert_eq!(text(timing, "first"), "2023-01");
    assert_eq!(text(timing, "last"), "2023-12");
}

#[test]
fn fortnightly_dates_without_frequency_say_the_smallest_gap_and_to_set_frequency() {
    let s = Scratch::new();
    let stamps: Vec<Cell> = (0..20)
        .map(|k| S((date(2024, 1, 1) + Duration::days(14 * k)).to_string()))
        .collect();
    s.workbook("data.xlsx", &[("records", dated_rows("date", &stamps))]);
    s.write("job.toml", &job_with("response = \"y\"\ntrend = \"date\""));
    assert_run_and_check_fail(
        &s,
        1,
        &[
            "model 'sales': cannot tell the period of date column 'date': the smallest gap \
             between dates is 14 days",
            "set `frequency` (day, week, month, quarter or year) in the model",
        ],
        &INPUTS,
    );
}

#[test]
fn fortnightly_dates_with_frequency_month_fit_as_several_rows_per_month() {
    // Pins what the tool does today: most months hold two rows, so by the
    // median rule the series counts as panel data, not as a duplicate
    // period. No error is raised; the rows of one month share its trend
    // index, and `check` says there are several rows per period.
    let s = Scratch::new();
    let dates: Vec<NaiveDate> = (0..20)
        .map(|k| date(2024, 1, 1) + Duration::days(14 * k))
        .collect();
    let stamps: Vec<Cell> = dates.iter().map(|d| S(d.to_string())).collect();
    s.workbook("data.xlsx", &[("records", dated_rows("date", &stamps))]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\ntrend = \"date\"\nfrequency = \"month\""),
    );
    let summary = check_ok(&s);
    assert!(
        summary.contains(
            "periods: by month (set in the job), 2024-01 to 2024-09, several rows per period"
        ),
        "{summary}"
    );
    let model = run_ok(&s, &INPUTS);
    let timing = &model["timing"];
    assert_eq!(timing["panel"], true, "{timing}");
    assert_eq!(timing["detected"], false, "{timing}");
    assert_eq!(int(timing, "periods"), 9, "{timing}");
    for r in list(&model["residuals"], "residuals") {
        let d = dates[usize::try_from(int(r, "row") - 2).unwrap()];
        assert_eq!(
            text(r, "period"),
            format!("{:04}-{:02}", d.year(), d.month())
        );
        assert_eq!(int(r, "index"), i64::from(d.month()), "{r}");
    }
}

// ---------------------------------------------------------------------------
// Log response and seasons

#[test]
fn log_transform_with_a_zero_response_names_the_cell_and_value() {
    let s = Scratch::new();
    let mut rows = series_rows(&months_2024(12));
    rows[4][1] = N(0.0);
    s.workbook("data.xlsx", &[("records", rows)]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\ntrend = \"month\"\ntransform = \"log\""),
    );
    assert_run_and_check_fail(
        &s,
        1,
        &[
            "model 'sales': sheet 'records' of data.xlsx, cell B5 in response 'y' holds 0; \
             `transform = \"log\"` needs every response value above zero",
        ],
        &INPUTS,
    );
}

#[test]
fn log_transform_with_a_negative_response_names_the_cell_and_value() {
    let s = Scratch::new();
    let mut rows = series_rows(&months_2024(12));
    rows[9][1] = N(-3.5);
    s.workbook("data.xlsx", &[("records", rows)]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\ntrend = \"month\"\ntransform = \"log\""),
    );
    assert_run_and_check_fail(
        &s,
        1,
        &["cell B10 in response 'y' holds -3.5; `transform = \"log\"` needs every response value above zero"],
        &INPUTS,
    );
}

#[test]
fn weekday_seasons_on_monthly_data_are_refused() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", series_rows(&months_2024(12)))]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\nseason = { column = \"month\", by = \"weekday\" }"),
    );
    assert_run_and_check_fail(
        &s,
        1,
        &["model 'sales': seasons by weekday need dates finer than a month; use a coarser season or daily dates"],
        &INPUTS,
    );
}

// ---------------------------------------------------------------------------
// Forecast rows

/// 2023-01 .. 2024-12: `month` (A), `y` (B), a driver `x` (C) and a
/// two-level `region` (D); y has a trend, a driver effect and a region
/// effect.
fn driver_rows() -> Vec<Vec<Cell>> {
    let mut rows = vec![vec![T("month"), T("y"), T("x"), T("region")]];
    for k in 0..24 {
        let x = 10.0 + ((k * 7) % 5) as f64 + 0.25 * k as f64;
        let south = k % 3 == 1;
        let y = 40.0 + 0.9 * (k + 1) as f64 + 2.5 * x + if south { 6.0 } else { 0.0 } + noise(k);
        rows.push(vec![
            S(month_label(2023, 1, k)),
            N(y),
            N(x),
            T(if south { "South" } else { "North" }),
        ]);
    }
    rows
}

/// The model body with the driver and the region.
const DRIVER_MODEL: &str =
    "response = \"y\"\nnumeric = [\"x\"]\ncategorical = [\"region\"]\ntrend = \"month\"";

#[test]
fn hold_with_an_unseen_level_names_the_level_and_lists_the_known_ones() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", driver_rows())]);
    s.write(
        "job.toml",
        &job_with(&format!(
            "{DRIVER_MODEL}\n[model.forecast]\nhorizon = 3\nhold = {{ x = 12, region = \"East\" }}"
        )),
    );
    assert_run_fails(
        &s,
        1,
        &[
            "model 'sales': forecast period 2025-01 gives 'region' the level 'East', which is \
             not in the rows the model was fitted on; its levels are: 'North', 'South'",
        ],
        &INPUTS,
    );
}

/// The driver data on sheet `records` and `plan` on sheet `plan`, with the
/// driver model forecasting from the plan sheet (`extra` added under
/// [model.forecast]).
fn with_plan(s: &Scratch, plan: Vec<Vec<Cell>>, extra: &str) {
    s.workbook("data.xlsx", &[("records", driver_rows()), ("plan", plan)]);
    s.write(
        "job.toml",
        &job_with(&format!(
            "{DRIVER_MODEL}\n[model.forecast]\nplan_sheet = \"plan\"{extra}"
        )),
    );
}

#[test]
fn plan_sheet_with_an_unseen_level_names_the_sheet_and_its_row() {
    let s = Scratch::new();
    let plan = vec![
        vec![T("month"), T("x"), T("region")],
        vec![T("2025-01"), N(12.0), T("North")],
        vec![T("2025-02"), N(13.0), T("East")],
        vec![T("2025-03"), N(11.5), T("South")],
    ];
    with_plan(&s, plan, "");
    assert_run_fails(
        &s,
        1,
        &[
            "model 'sales': forecast row 3 of plan sheet 'plan' (header row 1) gives 'region' the level 'East', \
             which is not in the rows the model was fitted on; its levels are: 'North', 'South'",
        ],
        &INPUTS,
    );
}

#[test]
fn a_plan_sheet_reads_its_own_header_row_and_names_it() {
    let s = Scratch::new();
    let plan = vec![
        vec![T("Plan for the first quarter (invented)")],
        vec![T("month"), T("x"), T("region")],
        vec![T("2025-01"), N(12.0), T("North")],
        vec![T("2025-02"), N(13.0), T("South")],
    ];
    with_plan(&s, plan.clone(), "");
    assert_run_fails(
        &s,
        1,
        &[
            "model 'sales': plan sheet 'plan' has no column 'month' in its header row 1 \
             (its columns there: 'Plan for the first quarter (invented)')",
            "set `plan_header_row` under [model.forecast]",
        ],
        &INPUTS,
    );
    with_plan(&s, plan, "\nplan_header_row = 2");
    let model = run_ok(&s, &INPUTS);
    let rows = list(&model["forecast"], "forecast");
    assert_eq!(rows.len(), 2, "one forecast row per plan row below row 2");
    assert_eq!(text(&rows[1], "period"), "2025-02");
}

#[test]
fn plan_sheet_rows_are_coded_as_the_data_were() {
    let s = Scratch::new();
    let plan_values = [
        ("2025-01", 14.5, "South"),
        ("2025-02", 9.25, "North"),
        ("2025-03", 16.0, "South"),
    ];
    let mut plan = vec![vec![T("month"), T("x"), T("region")]];
    for (month, x, region) in plan_values {
        plan.push(vec![T(month), N(x), T(region)]);
    }
    with_plan(&s, plan, "");
    let model = run_ok(&s, &INPUTS);
    assert_eq!(
        coefficient_names(&model),
        ["Intercept", "x", "trend", "region[South]"]
    );
    let (b0, bx, bt, bs) = (
        coef(&model, "Intercept"),
        coef(&model, "x"),
        coef(&model, "trend"),
        coef(&model, "region[South]"),
    );
    let rows = list(&model["forecast"], "forecast");
    assert_eq!(rows.len(), 3, "one forecast row per plan row");
    for ((row, (month, x, region)), index) in rows.iter().zip(plan_values).zip(25..) {
        assert_eq!(text(row, "period"), month);
        assert_eq!(text(row, "date"), format!("{month}-01"));
        assert_eq!(int(row, "index"), index, "{month}: 2023-01 is index 1");
        assert_eq!(text(&row["inputs"], "x"), x.to_string(), "{month}");
        assert_eq!(text(&row["inputs"], "region"), region, "{month}");
        // By hand: intercept + b_x·x + b_trend·index + the South indicator.
        let south = if region == "South" { 1.0 } else { 0.0 };
        let by_hand = b0 + bx * x + bt * index as f64 + bs * south;
        assert_rel(
            &format!("{month} estimate"),
            f(row, "estimate"),
            by_hand,
            1e-9,
        );
        assert!(
            f(row, "pred_lower") < f(row, "mean_lower")
                && f(row, "mean_lower") < f(row, "estimate")
                && f(row, "estimate") < f(row, "mean_upper")
                && f(row, "mean_upper") < f(row, "pred_upper"),
            "{month}: the prediction interval holds the mean interval around the estimate: {row}"
        );
    }
}

#[test]
fn hold_missing_a_predictor_is_a_job_file_error() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", driver_rows())]);
    s.write(
        "job.toml",
        &job_with(&format!(
            "{DRIVER_MODEL}\n[model.forecast]\nhorizon = 3\nhold = {{ x = 12 }}"
        )),
    );
    assert_run_and_check_fail(
        &s,
        2,
        &[
            "job file job.toml, key `model[1].forecast.hold`: has no value for the predictor \
             'region'",
        ],
        &INPUTS,
    );
}

#[test]
fn hold_naming_a_column_that_is_not_a_predictor_is_a_job_file_error() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", driver_rows())]);
    s.write(
        "job.toml",
        &job_with(&format!(
            "{DRIVER_MODEL}\n[model.forecast]\nhorizon = 3\n\
             hold = {{ x = 12, region = \"North\", promo = 1 }}"
        )),
    );
    assert_run_and_check_fail(
        &s,
        2,
        &[
            "job file job.toml, key `model[1].forecast.hold`: 'promo' is not a predictor of \
             this model; the predictors are: x, region",
        ],
        &INPUTS,
    );
}

// ---------------------------------------------------------------------------
// Back-tests

#[test]
fn backtest_of_every_period_or_more_names_the_backtest() {
    for holdout in [12, 30] {
        let s = Scratch::new();
        s.workbook("data.xlsx", &[("records", series_rows(&months_2024(12)))]);
        s.write(
            "job.toml",
            &job_with(&format!(
                "response = \"y\"\ntrend = \"month\"\nbacktest = {holdout}"
            )),
        );
        assert_run_fails(
            &s,
            1,
            &[&format!(
                "model 'sales': `backtest = {holdout}` holds out {holdout} of only 12 periods; \
                 keep enough periods to fit on"
            )],
            &INPUTS,
        );
    }
}

#[test]
fn check_refuses_the_forecast_and_backtest_problems_that_run_refuses() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", driver_rows())]);
    s.write(
        "job.toml",
        &job_with(&format!("{DRIVER_MODEL}\nbacktest = 24")),
    );
    assert_command_fails(
        &s,
        "check",
        1,
        &["`backtest = 24` holds out 24 of only 24 periods"],
        &INPUTS,
    );
    s.write(
        "job.toml",
        &job_with(&format!(
            "{DRIVER_MODEL}\n[model.forecast]\nhorizon = 3\nhold = {{ x = 12, region = \"East\" }}"
        )),
    );
    assert_command_fails(
        &s,
        "check",
        1,
        &["forecast period 2025-01 gives 'region' the level 'East'"],
        &INPUTS,
    );
}

#[test]
fn plan_sheet_with_a_csv_input_is_refused() {
    let s = Scratch::new();
    let mut text = String::from("month,y,x\n");
    for k in 0..12 {
        text.push_str(&format!(
            "{},{},{}\n",
            month_label(2024, 1, k),
            50.0 + 1.5 * k as f64 + noise(k),
            (k % 4) as f64
        ));
    }
    s.write("data.csv", &text);
    s.write(
        "job.toml",
        "[input]\nworkbook = \"data.csv\"\n\n[[model]]\nname = \"sales\"\nresponse = \"y\"\n\
         numeric = [\"x\"]\ntrend = \"month\"\n[model.forecast]\nplan_sheet = \"plan\"\n",
    );
    let out = sheetfit(&s.path(""), &["run", "job.toml"]);
    assert_ne!(status(&out), 0, "a CSV file has no sheet 'plan' to read");
    assert_stderr_has(&out, &["sheetfit: error: ", "'plan'"]);
    assert_files(&s, &["data.csv", "job.toml"]);
}

// ---------------------------------------------------------------------------
// Calendars: quarters, ISO weeks, gaps, panels

#[test]
fn quarterly_labels_forecast_across_year_ends_with_quarter_seasons() {
    let s = Scratch::new();
    // 2021-Q1 .. 2024-Q4 (2023-Q4 then 2024-Q1 among them), with a trend and
    // a quarter pattern.
    let pattern = [0.0, 3.0, 5.0, -2.0];
    let mut rows = vec![vec![T("quarter"), T("y")]];
    for k in 0..16 {
        rows.push(vec![
            S(quarter_label(2021, 1, k)),
            N(200.0 + 2.0 * k as f64 + pattern[k % 4] + noise(k)),
        ]);
    }
    s.workbook("data.xlsx", &[("records", rows)]);
    s.write(
        "job.toml",
        &job_with(
            "response = \"y\"\ntrend = \"quarter\"\n\
             season = { column = \"quarter\", by = \"quarter\" }\n\
             [model.forecast]\nhorizon = 6",
        ),
    );
    let model = run_ok(&s, &INPUTS);
    assert_eq!(text(&model["timing"], "frequency"), "quarter");
    assert_eq!(text(&model["timing"], "last"), "2024-Q4");
    assert_eq!(
        coefficient_names(&model),
        [
            "Intercept",
            "trend",
            "season[Q2]",
            "season[Q3]",
            "season[Q4]"
        ]
    );
    let rows = list(&model["forecast"], "forecast");
    let labels: Vec<&str> = rows.iter().map(|r| text(r, "period")).collect();
    assert_eq!(
        labels,
        ["2025-Q1", "2025-Q2", "2025-Q3", "2025-Q4", "2026-Q1", "2026-Q2"]
    );
    let starts: Vec<&str> = rows.iter().map(|r| text(r, "date")).collect();
    assert_eq!(
        starts,
        [
            "2025-01-01",
            "2025-04-01",
            "2025-07-01",
            "2025-10-01",
            "2026-01-01",
            "2026-04-01"
        ]
    );
    let seasons = [
        None,
        Some("season[Q2]"),
        Some("season[Q3]"),
        Some("season[Q4]"),
    ];
    for (h, row) in rows.iter().enumerate() {
        let index = 17 + h as i64;
        assert_eq!(int(row, "index"), index, "{row}");
        // By hand: intercept + b_trend·index + the quarter's indicator.
        let season = seasons[h % 4].map_or(0.0, |term| coef(&model, term));
        let by_hand = coef(&model, "Intercept") + coef(&model, "trend") * index as f64 + season;
        assert_rel(
            &format!("{} estimate", labels[h]),
            f(row, "estimate"),
            by_hand,
            1e-9,
        );
    }
}

/// Sixteen Mondays from 2023-12-04: across the year end, through
/// 2024-01-29 (ISO week 2024-W05) to 2024-03-18.
fn sixteen_mondays() -> Vec<NaiveDate> {
    (0..16)
        .map(|k| date(2023, 12, 4) + Duration::weeks(k))
        .collect()
}

/// Runs a weekly trend model with a 3-week forecast on `stamps` and checks
/// the labels of its rows and forecast: `label` of each Monday.
fn assert_weekly_labels(stamps: Vec<Cell>, label: fn(NaiveDate) -> String) {
    let s = Scratch::new();
    let mondays = sixteen_mondays();
    s.workbook("data.xlsx", &[("records", dated_rows("week", &stamps))]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\ntrend = \"week\"\n[model.forecast]\nhorizon = 3"),
    );
    let model = run_ok(&s, &INPUTS);
    let timing = &model["timing"];
    assert_eq!(text(timing, "frequency"), "week", "{timing}");
    assert_eq!(
        timing["detected"], true,
        "told from the 7-day gaps: {timing}"
    );
    let residuals = list(&model["residuals"], "residuals");
    let labels: Vec<&str> = residuals.iter().map(|r| text(r, "period")).collect();
    let want: Vec<String> = mondays.iter().map(|&d| label(d)).collect();
    assert_eq!(labels, want);
    let indexes: Vec<i64> = residuals.iter().map(|r| int(r, "index")).collect();
    assert_eq!(indexes, (1..=16).collect::<Vec<i64>>());
    let rows = list(&model["forecast"], "forecast");
    assert_eq!(rows.len(), 3);
    for (h, row) in rows.iter().enumerate() {
        let monday = date(2024, 3, 18) + Duration::weeks(h as i64 + 1);
        assert_eq!(text(row, "period"), label(monday), "{row}");
        assert_eq!(text(row, "date"), monday.to_string(), "{row}");
        assert_eq!(int(row, "index"), 17 + h as i64, "{row}");
    }
}

#[test]
fn weekly_dates_are_labelled_by_their_own_day_and_forecast_a_week_at_a_time() {
    let stamps = sixteen_mondays().iter().map(|d| S(d.to_string())).collect();
    assert_weekly_labels(stamps, |d| d.to_string());
}

#[test]
fn iso_week_labels_stay_iso_week_labels() {
    let stamps: Vec<Cell> = sixteen_mondays()
        .iter()
        .map(|&d| S(week_label(d)))
        .collect();
    assert_weekly_labels(stamps, week_label);
    for (k, label) in [(0, "2023-W49"), (4, "2024-W01"), (8, "2024-W05")] {
        assert_eq!(week_label(sixteen_mondays()[k]), label);
    }
}

#[test]
fn a_missing_month_makes_the_next_index_jump_by_two() {
    let s = Scratch::new();
    // ISO dates for the first of each month of 2023 but June.
    let months: Vec<u32> = (1..=12).filter(|&m| m != 6).collect();
    let stamps: Vec<Cell> = months
        .iter()
        .map(|&m| S(date(2023, m, 1).to_string()))
        .collect();
    s.workbook("data.xlsx", &[("records", series_rows(&stamps))]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\ntrend = \"month\"\n[model.forecast]\nhorizon = 1"),
    );
    let model = run_ok(&s, &INPUTS);
    let timing = &model["timing"];
    assert_eq!(text(timing, "frequency"), "month", "{timing}");
    assert_eq!(int(timing, "periods"), 11, "{timing}");
    let residuals = list(&model["residuals"], "residuals");
    let indexes: Vec<i64> = residuals.iter().map(|r| int(r, "index")).collect();
    assert_eq!(indexes, [1, 2, 3, 4, 5, 7, 8, 9, 10, 11, 12]);
    // The row after the gap: 2023-07, sheet row 7, index 5 + 2.
    let july = &residuals[5];
    assert_eq!(text(july, "period"), "2023-07");
    assert_eq!(int(july, "row"), 7);
    assert_eq!(int(july, "index") - int(&residuals[4], "index"), 2);
    let next = &list(&model["forecast"], "forecast")[0];
    assert_eq!(text(next, "period"), "2024-01");
    assert_eq!(int(next, "index"), 13);
}

#[test]
fn panel_rows_of_one_month_share_one_index() {
    let s = Scratch::new();
    // Three stores a month through 2023, store B's 2023-05 row absent.
    let effect = [("A", 0.0), ("B", 4.0), ("C", -3.0)];
    let mut rows = vec![vec![T("month"), T("store"), T("y")]];
    let mut i = 0;
    for k in 0..12 {
        for (store, shift) in effect {
            if store == "B" && k == 4 {
                continue;
            }
            rows.push(vec![
                S(month_label(2023, 1, k)),
                T(store),
                N(20.0 + 0.8 * (k + 1) as f64 + shift + noise(i)),
            ]);
            i += 1;
        }
    }
    s.workbook("data.xlsx", &[("records", rows)]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\ncategorical = [\"store\"]\ntrend = \"month\""),
    );
    let summary = check_ok(&s);
    assert!(
        summary.contains(
            "periods: by month (told from the dates), 2023-01 to 2023-12, several rows per period"
        ),
        "{summary}"
    );
    let model = run_ok(&s, &INPUTS);
    assert_eq!(model["timing"]["panel"], true, "{}", model["timing"]);
    assert_eq!(int(&model, "n"), 35);
    assert_eq!(
        coefficient_names(&model),
        ["Intercept", "trend", "store[B]", "store[C]"]
    );
    let residuals = list(&model["residuals"], "residuals");
    for k in 0..12 {
        let label = month_label(2023, 1, k);
        let in_month: Vec<&Value> = residuals
            .iter()
            .filter(|r| text(r, "period") == label)
            .collect();
        assert_eq!(
            in_month.len(),
            if k == 4 { 2 } else { 3 },
            "rows in {label}"
        );
        for r in in_month {
            assert_eq!(int(r, "index"), k as i64 + 1, "{label}: {r}");
        }
    }
}

// ---------------------------------------------------------------------------
// The report workbook

/// The cell at zero-based sheet position (row, col).
fn cell(range: &Range<Data>, row: u32, col: u32) -> &Data {
    range.get_value((row, col)).unwrap_or(&Data::Empty)
}

/// The zero-based column whose header (row 0) is `name`.
fn column_of(range: &Range<Data>, name: &str) -> u32 {
    let width = range.end().expect("sheet not empty").1 + 1;
    (0..width)
        .find(|&c| matches!(cell(range, 0, c), Data::String(s) if s == name))
        .unwrap_or_else(|| panic!("no column headed {name:?}"))
}

fn number_at(range: &Range<Data>, row: u32, col: u32) -> f64 {
    match cell(range, row, col) {
        Data::Float(x) => *x,
        other => panic!("cell ({row}, {col}) should be a number, found {other:?}"),
    }
}

/// Asserts that a report cell holds the number of the JSON. Both files
/// carry the same shortest round-trip digits, but serde_json's default
/// parser (without its `float_roundtrip` feature) may round the last bit
/// differently from the workbook reader, so one unit in the last place is
/// allowed.
fn assert_same_number(what: &str, cell: f64, json: f64) {
    let ulp = json.abs() * f64::EPSILON;
    assert!(
        (cell - json).abs() <= ulp,
        "{what}: the sheet holds {cell}, the JSON {json}"
    );
}

fn text_at(range: &Range<Data>, row: u32, col: u32) -> String {
    match cell(range, row, col) {
        Data::String(s) => s.clone(),
        other => panic!("cell ({row}, {col}) should be text, found {other:?}"),
    }
}

#[test]
fn forecast_sheet_estimates_are_the_json_estimates() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", driver_rows())]);
    s.write(
        "job.toml",
        &job_with(&format!(
            "{DRIVER_MODEL}\nbacktest = 4\nbacktest_rolling = true\n\
             [model.forecast]\nhorizon = 3\nhold = {{ x = 12, region = \"South\" }}"
        )),
    );
    let model = run_ok(&s, &INPUTS);
    let path: PathBuf = s.path("report.xlsx");
    let mut wb = open_workbook_auto(&path).expect("open the report workbook");
    let names = wb.sheet_names();
    for sheet in [
        "Forecast",
        "Back-test",
        "Back-test rows",
        "Chart data",
        "Charts",
    ] {
        assert!(names.iter().any(|n| n == sheet), "{sheet} in {names:?}");
    }

    let sheet = wb.worksheet_range("Forecast").expect("Forecast sheet");
    let forecast = list(&model["forecast"], "forecast");
    assert_eq!(forecast.len(), 3);
    // The residuals of this model are autocorrelated: its AR(1)-error
    // version follows with rows of its own.
    let ar1 = &model["ar1_errors"];
    let ar1_rows = ar1["forecast"].as_array().map_or(0, Vec::len);
    assert_eq!(
        sheet.height(),
        1 + forecast.len() + ar1_rows,
        "a header and one row per forecast row of each version"
    );
    let (period, estimate) = (column_of(&sheet, "Period"), column_of(&sheet, "Estimate"));
    let index = column_of(&sheet, "Trend index");
    for (r, row) in (1..).zip(forecast) {
        assert_eq!(text_at(&sheet, r, 0), "sales");
        assert_eq!(text_at(&sheet, r, period), text(row, "period"));
        assert_eq!(number_at(&sheet, r, index), f(row, "index"));
        assert_same_number(
            &format!("Forecast sheet row {r} Estimate"),
            number_at(&sheet, r, estimate),
            f(row, "estimate"),
        );
    }
    assert_eq!(text_at(&sheet, 1, period), "2025-01");

    let sheet = wb.worksheet_range("Back-test").expect("Back-test sheet");
    let backtest = &model["backtest"];
    let versions = if ar1["backtest"].is_null() { 1 } else { 2 };
    assert_eq!(
        sheet.height(),
        1 + 2 * versions,
        "a header, the single refit and the rolling origin of each version"
    );
    let mae = column_of(&sheet, "MAE");
    assert_same_number(
        "Back-test MAE",
        number_at(&sheet, 1, mae),
        f(backtest, "mae"),
    );
    assert_same_number(
        "rolling Back-test MAE",
        number_at(&sheet, 2, mae),
        f(&backtest["rolling"], "mae"),
    );

    let sheet = wb
        .worksheet_range("Back-test rows")
        .expect("Back-test rows sheet");
    assert_eq!(
        sheet.height(),
        1 + (4 + 4) * versions,
        "four held-out rows per method and version"
    );
    let held: Vec<String> = (1..=4)
        .map(|r| text_at(&sheet, r, column_of(&sheet, "Period")))
        .collect();
    assert_eq!(held, ["2024-09", "2024-10", "2024-11", "2024-12"]);

    let sheet = wb.worksheet_range("Chart data").expect("Chart data sheet");
    assert_eq!(
        sheet.height(),
        1 + 24 + 3,
        "a header, 24 months of history and 3 forecast rows"
    );
    let column = column_of(&sheet, "Forecast");
    for (r, row) in (25..).zip(forecast) {
        assert_same_number(
            &format!("Chart data row {r} Forecast"),
            number_at(&sheet, r, column),
            f(row, "estimate"),
        );
    }
}
