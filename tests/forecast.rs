//! Time trends, seasons, forecasts and back-tests, checked against an
//! outside reference library and against a forecast worked by hand.
//!
//! Source of the expected values: statsmodels 0.15.0 OLS and its
//! `get_prediction` (exact versions of it and numpy, pandas, scipy, patsy
//! recorded in each fixture's `source` field), fitted on a design matrix
//! built in this tool's term order and naming, produced once by
//! tests/reference/make_forecast_reference.py and committed as
//! tests/fixtures/forecast/<case>.csv and <case>.json. The data are the
//! `elnino` and `macrodata` datasets that ship with statsmodels (named in
//! each fixture's `dataset` field). The run here needs no Python.
//!
//! Cases:
//! - `monthly`: y ~ trend + season(month, baseline Jan), ISO text dates,
//!   two months missing; 12-month forecast; 6-month back-test, fixed and
//!   rolling origin.
//! - `quarterly`: ln(realgdp) ~ trend + season(quarter), period text, one
//!   quarter missing, log transform; 8-quarter forecast on the original
//!   scale with the smearing estimate; 4-quarter back-test.
//! - `panel`: two series per quarter sharing one trend index, a categorical
//!   `series`; 4-quarter forecast holding series = "investment".

mod common;

use std::path::PathBuf;

use common::{assert_close, read_json, sheetfit, Scratch};
use serde_json::Value;

fn fixture(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/forecast")
        .join(name)
}

/// Relative tolerance for the fit itself (coefficients, standard errors,
/// R², s): both sides solve the same small, well-conditioned least-squares
/// problem and should agree to near double precision.
const FIT_TOL: f64 = 1e-9;

/// Tolerance for forecast and back-test values: the bar is 8 significant
/// digits (relative 1e-8). They pass through a t quantile, a square root
/// and, for the log case, exp().
const FORECAST_TOL: f64 = 1e-8;

/// Asserts `|got − expected| ≤ tol·|expected|`: purely relative, so that
/// small numbers (log-scale coefficients near 1e-3, a residual standard
/// error of 0.02) are held to the same number of significant digits as
/// large ones.
fn assert_rel(what: &str, got: f64, expected: f64, tol: f64) {
    assert!(
        (got - expected).abs() <= tol * expected.abs(),
        "{what}: got {got}, expected {expected} (relative tolerance {tol}, relative error {:e})",
        ((got - expected) / expected).abs()
    );
}

/// Runs the fixture job of `case` (the job text is the fixture's own `job`
/// field) and returns (expected, our model JSON).
fn run_case(case: &str) -> (Value, Value) {
    let expected = read_json(&fixture(&format!("{case}.json")));
    let scratch = Scratch::new();
    let csv = format!("{case}.csv");
    std::fs::copy(fixture(&csv), scratch.path(&csv)).expect("copy fixture");
    let job = expected["job"].as_str().expect("job text in the fixture");
    scratch.write("job.toml", job);
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    assert!(
        out.status.success(),
        "{case}: sheetfit run failed ({}):\n{}",
        out.status,
        common::stderr(&out)
    );
    let ours = read_json(&scratch.path("report.json"))["models"][0].clone();
    (expected, ours)
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

// ---------------------------------------------------------------------------
// Checks shared by the three reference cases

/// Coefficient names, order, estimates and standard errors, n, residual df,
/// R² and s against the reference library (statsmodels OLS, see the
/// fixture's `source`).
fn check_fit(case: &str) {
    let (expected, ours) = run_case(case);
    assert_eq!(ours["n"], expected["n"], "{case} n");
    assert_eq!(ours["df_resid"], expected["df_resid"], "{case} df_resid");
    let exp = list(&expected["coefficients"], "expected coefficients");
    let got = list(&ours["coefficients"], "coefficients");
    let names = |rows: &[Value]| -> Vec<String> {
        rows.iter().map(|r| text(r, "term").to_string()).collect()
    };
    // Term names and order as the contract lays them out: Intercept,
    // numeric, trend, season, categorical.
    assert_eq!(names(got), names(exp), "{case} coefficient names");
    for (g, e) in got.iter().zip(exp) {
        let term = text(e, "term");
        for key in ["estimate", "std_error"] {
            // Source: statsmodels OLS params / bse.
            assert_rel(
                &format!("{case} {term} {key}"),
                f(g, key),
                f(e, key),
                FIT_TOL,
            );
        }
    }
    for key in ["r_squared", "sigma"] {
        // Source: statsmodels OLS rsquared and sqrt(scale).
        assert_rel(
            &format!("{case} fit {key}"),
            f(&ours["fit"], key),
            f(&expected["fit"], key),
            FIT_TOL,
        );
    }
}

/// Every residual row carries the period index and label of its data row
/// (source: the index worked out by the reference script from the calendar,
/// cross-checked there with pandas period arithmetic), and the rows come in
/// period order, data order within a period.
fn check_residual_periods(case: &str) {
    let (expected, ours) = run_case(case);
    let got = list(&ours["residuals"], "residuals");
    let index = list(&expected["residual_index"], "residual_index");
    let period = list(&expected["residual_period"], "residual_period");
    assert_eq!(got.len(), index.len(), "{case} residual rows");
    // Each row against its own data row, found by its sheet row (the header
    // takes sheet row 1, so data row i, counted from 0, is sheet row i + 2).
    for g in got {
        let row = int(g, "row");
        let i = usize::try_from(row - 2).expect("a data row");
        assert_eq!(
            int(g, "index"),
            index[i].as_i64().unwrap(),
            "{case} sheet row {row} index"
        );
        assert_eq!(
            text(g, "period"),
            period[i].as_str().unwrap(),
            "{case} sheet row {row} period"
        );
    }
    // And in period order: the tool sorts the rows of a model with a date
    // column by period, keeping data order within a period (DESIGN.md,
    // design stage: "sort by date when a trend or season is used").
    let rows: Vec<i64> = got.iter().map(|g| int(g, "row")).collect();
    let mut expected_order: Vec<i64> = (2..2 + got.len() as i64).collect();
    expected_order.sort_by_key(|&r| index[usize::try_from(r - 2).expect("a data row")].as_i64());
    assert_eq!(rows, expected_order, "{case} residual rows in period order");
}

/// Forecast rows: label, index, estimate, both intervals, and the smearing
/// estimate for the log case (source: statsmodels get_prediction
/// summary_frame at alpha = 0.05; exp() of it for the log case).
fn check_forecast(case: &str) {
    let (expected, ours) = run_case(case);
    let exp = list(&expected["forecast"], "expected forecast");
    let got = list(&ours["forecast"], "forecast");
    assert_eq!(got.len(), exp.len(), "{case} forecast rows");
    let log = exp[0].get("smeared_mean").is_some();
    for (g, e) in got.iter().zip(exp) {
        let period = text(e, "period");
        assert_eq!(text(g, "period"), period, "{case} forecast period");
        assert_eq!(int(g, "index"), int(e, "index"), "{case} {period} index");
        for key in [
            "estimate",
            "mean_lower",
            "mean_upper",
            "pred_lower",
            "pred_upper",
        ] {
            // Source: statsmodels mean, mean_ci_lower/upper, obs_ci_lower/upper.
            assert_rel(
                &format!("{case} forecast {period} {key}"),
                f(g, key),
                f(e, key),
                FORECAST_TOL,
            );
        }
        if log {
            // Source: exp(statsmodels mean) × mean(exp(statsmodels resid)).
            assert_rel(
                &format!("{case} forecast {period} smeared_mean"),
                f(g, "smeared_mean"),
                f(e, "smeared_mean"),
                FORECAST_TOL,
            );
        } else {
            assert!(
                g["smeared_mean"].is_null(),
                "{case} {period}: smeared_mean without a log transform: {g}"
            );
        }
    }
}

/// Metrics and points of one back-test block (fixed or rolling origin).
fn check_backtest_block(what: &str, got: &Value, exp: &Value) {
    for key in ["mae", "rmse", "mape"] {
        // Source: metrics over the statsmodels refit predictions.
        assert_rel(
            &format!("{what} {key}"),
            f(got, key),
            f(exp, key),
            FORECAST_TOL,
        );
    }
    // A share of counts: exact but for rounding.
    assert_rel(
        &format!("{what} coverage"),
        f(got, "coverage"),
        f(exp, "coverage"),
        1e-12,
    );
    let gp = list(&got["points"], "points");
    let ep = list(&exp["points"], "expected points");
    assert_eq!(gp.len(), ep.len(), "{what} points");
    for (g, e) in gp.iter().zip(ep) {
        let period = text(e, "period");
        assert_eq!(text(g, "period"), period, "{what} point period");
        // The actual value is the data value itself.
        assert_rel(
            &format!("{what} {period} actual"),
            f(g, "actual"),
            f(e, "actual"),
            1e-12,
        );
        for key in ["estimate", "pred_lower", "pred_upper"] {
            // Source: statsmodels get_prediction of the refit (mean,
            // obs_ci_lower/upper), exp() of it for the log case.
            assert_rel(
                &format!("{what} {period} {key}"),
                f(g, key),
                f(e, key),
                FORECAST_TOL,
            );
        }
    }
}

/// The back-test against the reference script's refits (statsmodels OLS on
/// the rows before the hold-out, get_prediction on the hold-out rows).
fn check_backtest(case: &str) {
    let (expected, ours) = run_case(case);
    // The contract writes `backtest` always: null when none is asked.
    assert!(
        ours.get("backtest").is_some(),
        "{case}: no `backtest` key in the results"
    );
    let (exp, got) = (&expected["backtest"], &ours["backtest"]);
    if exp.is_null() {
        assert!(got.is_null(), "{case}: backtest without one asked: {got}");
        return;
    }
    assert!(got.is_object(), "{case}: no backtest in the results: {got}");
    assert_eq!(int(got, "holdout"), int(exp, "holdout"), "{case} holdout");
    check_backtest_block(&format!("{case} backtest"), got, exp);
    assert!(
        got.get("rolling").is_some(),
        "{case}: no `rolling` key in the backtest"
    );
    if exp["rolling"].is_null() {
        assert!(
            got["rolling"].is_null(),
            "{case}: rolling back-test without one asked: {}",
            got["rolling"]
        );
    } else {
        assert!(
            got["rolling"].is_object(),
            "{case}: no rolling back-test in the results: {}",
            got["rolling"]
        );
        check_backtest_block(
            &format!("{case} rolling backtest"),
            &got["rolling"],
            &exp["rolling"],
        );
    }
}

// ---------------------------------------------------------------------------
// monthly: elnino, 1990-04 to 1999-09, two months missing

#[test]
fn monthly_fit_matches_the_reference_library() {
    check_fit("monthly");
}

#[test]
fn monthly_residual_rows_carry_the_period_index_across_the_gap() {
    check_residual_periods("monthly");
}

#[test]
fn monthly_forecast_matches_the_reference_library() {
    check_forecast("monthly");
}

#[test]
fn monthly_backtest_fixed_and_rolling_matches_the_reference_library() {
    check_backtest("monthly");
}

// ---------------------------------------------------------------------------
// quarterly: macrodata realgdp, log transform, one quarter missing

#[test]
fn quarterly_log_fit_matches_the_reference_library() {
    check_fit("quarterly");
}

#[test]
fn quarterly_residual_rows_carry_the_period_index_across_the_gap() {
    check_residual_periods("quarterly");
}

#[test]
fn quarterly_log_forecast_is_back_transformed_with_the_smearing_estimate() {
    check_forecast("quarterly");
}

#[test]
fn quarterly_log_backtest_is_on_the_original_scale() {
    check_backtest("quarterly");
}

// ---------------------------------------------------------------------------
// panel: macrodata realcons and realinv, two rows per quarter

#[test]
fn panel_fit_matches_the_reference_library() {
    check_fit("panel");
}

#[test]
fn panel_rows_of_one_quarter_share_one_trend_index() {
    check_residual_periods("panel");
}

#[test]
fn panel_forecast_holds_the_categorical_level() {
    check_forecast("panel");
}

#[test]
fn panel_has_no_backtest_when_none_is_asked() {
    check_backtest("panel");
}

// ---------------------------------------------------------------------------
// Calendar

/// The first field of the last line of a fixture CSV: the last data period.
fn last_period_in(csv: &str) -> String {
    let text = std::fs::read_to_string(fixture(csv)).expect("read fixture CSV");
    let last = text.lines().last().expect("a data row");
    last.split(',').next().unwrap().to_string()
}

#[test]
fn forecast_periods_continue_the_calendar_past_a_year_end() {
    // Monthly: the data end at 1999-09 (an ISO date "1999-09-01"); the 12
    // forecast months are 1999-10 .. 2000-09, worked out here from the
    // calendar, not read from the reference.
    let (_, ours) = run_case("monthly");
    let last = last_period_in("monthly.csv");
    let (mut year, mut month): (i32, u32) =
        (last[..4].parse().unwrap(), last[5..7].parse().unwrap());
    let mut want = Vec::new();
    for _ in 0..12 {
        month += 1;
        if month == 13 {
            month = 1;
            year += 1;
        }
        want.push(format!("{year:04}-{month:02}"));
    }
    assert_eq!(want.first().unwrap(), "1999-10");
    assert_eq!(want.last().unwrap(), "2000-09");
    let got = list(&ours["forecast"], "forecast");
    let labels: Vec<&str> = got.iter().map(|r| text(r, "period")).collect();
    assert_eq!(labels, want, "monthly forecast labels");
    // The index goes on from the last data row's index, one per period.
    let residuals = list(&ours["residuals"], "residuals");
    let last_index = int(residuals.last().unwrap(), "index");
    for (h, row) in got.iter().enumerate() {
        assert_eq!(int(row, "index"), last_index + 1 + h as i64, "monthly {h}");
    }

    // Quarterly: the data end at 2008-Q4; 8 quarters run over two year ends.
    let (_, ours) = run_case("quarterly");
    let last = last_period_in("quarterly.csv");
    assert_eq!(last, "2008-Q4");
    let (mut year, mut quarter) = (2008, 4);
    let mut want = Vec::new();
    for _ in 0..8 {
        quarter += 1;
        if quarter == 5 {
            quarter = 1;
            year += 1;
        }
        want.push(format!("{year:04}-Q{quarter}"));
    }
    let got = list(&ours["forecast"], "forecast");
    let labels: Vec<&str> = got.iter().map(|r| text(r, "period")).collect();
    assert_eq!(labels, want, "quarterly forecast labels");
    let residuals = list(&ours["residuals"], "residuals");
    let last_index = int(residuals.last().unwrap(), "index");
    for (h, row) in got.iter().enumerate() {
        assert_eq!(
            int(row, "index"),
            last_index + 1 + h as i64,
            "quarterly {h}"
        );
    }
}

// ---------------------------------------------------------------------------
// Worked by hand from the textbook formulas

#[test]
fn trend_forecast_matches_the_textbook_formulas_worked_by_hand() {
    // y = 2, 4, 5, 8 at 2020-01 .. 2020-04, trend only: x = 1, 2, 3, 4.
    //   n = 4, x̄ = 2.5, ȳ = 4.75, Sxx = Σ(x − x̄)² = 5,
    //   Sxy = Σ(x − x̄)(y − ȳ) = 4.125 + 0.375 + 0.125 + 4.875 = 9.5
    //   slope b = Sxy / Sxx = 1.9, intercept a = ȳ − b·x̄ = 0
    //   fitted 1.9, 3.8, 5.7, 7.6; residuals 0.1, 0.2, −0.7, 0.4
    //   SSE = 0.01 + 0.04 + 0.49 + 0.16 = 0.70, df = n − 2 = 2
    //   s = √(0.70 / 2) = √0.35 = 0.5916079783099616
    // Forecast one period ahead: 2020-05, x0 = 5, estimate a + b·x0 = 9.5.
    //   (x0 − x̄)²/Sxx = 6.25 / 5 = 1.25, 1/n = 0.25
    //   se(mean) = s·√(1/n + (x0 − x̄)²/Sxx) = s·√1.5 = 0.7245688373094719
    //   se(new)  = s·√(1 + 1/n + (x0 − x̄)²/Sxx) = s·√2.5 = 0.9354143466934853
    //   t(0.975; 2) = 4.302652729749464 (scipy 1.17.1, scipy.stats.t.isf(0.025, 2);
    //   the closed form for 2 df, 0.95 / √(2·0.975·0.025), rounds to the same
    //   double; scipy.stats.t.ppf(0.975, 2) gives 4.302652729749462, 2 units
    //   in the last place lower)
    //   mean interval 9.5 ∓ 4.302652729749464 × 0.7245688373094719
    //     = 9.5 ∓ 3.117568085740994 = [6.382431914259006, 12.617568085740995]
    //   prediction interval 9.5 ∓ 4.302652729749464 × 0.9354143466934853
    //     = 9.5 ∓ 4.024763092247536 = [5.475236907752464, 13.524763092247536]
    let scratch = Scratch::new();
    scratch.write(
        "tiny.csv",
        "month,y\n2020-01,2\n2020-02,4\n2020-03,5\n2020-04,8\n",
    );
    scratch.write(
        "job.toml",
        r#"
[input]
workbook = "tiny.csv"
[output]
workbook = "report.xlsx"
[[model]]
name = "tiny"
response = "y"
trend = "month"
[model.forecast]
horizon = 1
"#,
    );
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    assert!(
        out.status.success(),
        "sheetfit run failed ({}):\n{}",
        out.status,
        common::stderr(&out)
    );
    let ours = read_json(&scratch.path("report.json"))["models"][0].clone();

    let (n, xbar, sxx, x0) = (4.0_f64, 2.5_f64, 5.0_f64, 5.0_f64);
    let s = (0.70_f64 / 2.0).sqrt();
    let se_mean = s * (1.0 / n + (x0 - xbar).powi(2) / sxx).sqrt();
    let se_new = s * (1.0 + 1.0 / n + (x0 - xbar).powi(2) / sxx).sqrt();
    let t = 4.302652729749464;
    let estimate = 9.5;
    // The hand values above, to the digits written in the comments.
    assert_rel("hand s", s, 0.5916079783099616, 1e-15);
    assert_rel("hand se(mean)", se_mean, 0.7245688373094719, 1e-15);
    assert_rel("hand se(new)", se_new, 0.9354143466934853, 1e-15);

    let coefficients = list(&ours["coefficients"], "coefficients");
    let terms: Vec<&str> = coefficients.iter().map(|c| text(c, "term")).collect();
    assert_eq!(terms, ["Intercept", "trend"]);
    // By hand: a = 0, b = 1.9, s = √0.35.
    // The intercept is exactly 0 by hand, so it is held to 1e-9 absolute.
    assert_close("intercept", f(&coefficients[0], "estimate"), 0.0, 1e-9);
    assert_rel("slope", f(&coefficients[1], "estimate"), 1.9, 1e-9);
    assert_rel("s", f(&ours["fit"], "sigma"), s, 1e-9);
    let indexes: Vec<i64> = list(&ours["residuals"], "residuals")
        .iter()
        .map(|r| int(r, "index"))
        .collect();
    assert_eq!(indexes, [1, 2, 3, 4]);

    let forecast = list(&ours["forecast"], "forecast");
    assert_eq!(forecast.len(), 1, "one forecast row");
    let row = &forecast[0];
    assert_eq!(text(row, "period"), "2020-05");
    assert_eq!(int(row, "index"), 5);
    // By hand: estimate a + b·x0, limits estimate ∓ t·se.
    assert_rel("estimate", f(row, "estimate"), estimate, 1e-9);
    assert_rel(
        "mean_lower",
        f(row, "mean_lower"),
        estimate - t * se_mean,
        1e-9,
    );
    assert_rel(
        "mean_upper",
        f(row, "mean_upper"),
        estimate + t * se_mean,
        1e-9,
    );
    assert_rel(
        "pred_lower",
        f(row, "pred_lower"),
        estimate - t * se_new,
        1e-9,
    );
    assert_rel(
        "pred_upper",
        f(row, "pred_upper"),
        estimate + t * se_new,
        1e-9,
    );
    // The same limits as the numbers written out in the comments above.
    assert_rel("mean_lower", f(row, "mean_lower"), 6.382431914259006, 1e-9);
    assert_rel("mean_upper", f(row, "mean_upper"), 12.617568085740995, 1e-9);
    assert_rel("pred_lower", f(row, "pred_lower"), 5.475236907752464, 1e-9);
    assert_rel("pred_upper", f(row, "pred_upper"), 13.524763092247536, 1e-9);
}
