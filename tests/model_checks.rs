//! Model checks, robust standard errors, collinearity, interactions, model
//! comparisons and suggested models, checked against an outside reference
//! library on datasets that ship with it.
//!
//! Source of the expected values: R 4.2.2 with car 3.1.1, lmtest 0.9.40 and
//! sandwich 3.0.2 (exact versions in each fixture's `source` field),
//! produced once by tests/reference/make_model_checks_reference.R and
//! committed in tests/fixtures/model_checks/: `duncan.csv` and
//! `duncan.json` (carData's Duncan occupational prestige data, 45 rows),
//! `mtcars.csv` and `mtcars.json` (the mtcars data, 32 rows). The CSV files
//! hold every number at 17 significant digits, so the tool reads the same
//! doubles the reference used. The run here needs no R.
//!
//! Tolerances are relative, |got − expected| ≤ tol·|expected|: 1e-8 for
//! estimates, standard errors, test statistics, p-values and per-row
//! diagnostics; 1e-6 for the Shapiro-Wilk p-value (the reference computes
//! it by Royston's normalizing approximation); 1e-4 (four significant
//! digits) for the exact Durbin-Watson p-value, which the reference
//! computes by numerical integration.

mod common;

use std::path::PathBuf;
use std::sync::OnceLock;

use common::{read_json, sheetfit, Scratch};
use serde_json::Value;

/// Estimates, standard errors, statistics, p-values, row diagnostics.
const TOL: f64 = 1e-8;
/// The exact Durbin-Watson p-value: four significant digits.
const DW_P_TOL: f64 = 1e-4;
/// The Shapiro-Wilk p-value.
const SW_P_TOL: f64 = 1e-6;

fn fixture(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/model_checks")
        .join(name)
}

/// The Duncan job: the models of duncan.json, in its order. Baseline "bc"
/// matches the reference's relevel(type, ref = "bc").
const DUNCAN_JOB: &str = r#"
title = "Duncan prestige: reference check"
suggest_threshold = 0.05

[input]
workbook = "duncan.csv"

[output]
workbook = "report.xlsx"

[[model]]
name = "additive"
response = "prestige"
numeric = ["income", "education"]
categorical = { type = "bc" }

[[model]]
name = "without type"
response = "prestige"
numeric = ["income", "education"]

[[model]]
name = "interaction"
response = "prestige"
numeric = ["income", "education"]
categorical = { type = "bc" }
interactions = [["type", "income"]]

[[model]]
name = "additive HC3"
response = "prestige"
numeric = ["income", "education"]
categorical = { type = "bc" }
standard_errors = "HC3"

[[model]]
name = "additive HC1"
response = "prestige"
numeric = ["income", "education"]
categorical = { type = "bc" }
standard_errors = "HC1"
"#;

/// The mtcars job: five numeric predictors, three of them weak.
const MTCARS_JOB: &str = r#"
title = "mtcars fuel economy: reference check"
suggest_threshold = 0.05

[input]
workbook = "mtcars.csv"

[output]
workbook = "report.xlsx"

[[model]]
name = "full"
response = "mpg"
numeric = ["wt", "hp", "qsec", "drat", "am"]
"#;

/// Runs `job` on the fixture data file `data` in a scratch folder and
/// returns the results JSON.
fn run(job: &str, data: &str) -> Value {
    let scratch = Scratch::new();
    std::fs::copy(fixture(data), scratch.path(data)).expect("copy fixture data");
    scratch.write("job.toml", job);
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    assert!(
        out.status.success(),
        "sheetfit run failed: {}",
        common::stderr(&out)
    );
    read_json(&scratch.path("report.json"))
}

/// (expected, results) for the Duncan job, run once for all tests.
fn duncan() -> &'static (Value, Value) {
    static CELL: OnceLock<(Value, Value)> = OnceLock::new();
    CELL.get_or_init(|| {
        (
            read_json(&fixture("duncan.json")),
            run(DUNCAN_JOB, "duncan.csv"),
        )
    })
}

/// (expected, results) for the mtcars job, run once for all tests.
fn mtcars() -> &'static (Value, Value) {
    static CELL: OnceLock<(Value, Value)> = OnceLock::new();
    CELL.get_or_init(|| {
        (
            read_json(&fixture("mtcars.json")),
            run(MTCARS_JOB, "mtcars.csv"),
        )
    })
}

/// The number at `key`, naming what is missing when it is absent (a field
/// the tool does not write yet) or not a number.
fn num(v: &Value, key: &str, what: &str) -> f64 {
    v.get(key)
        .unwrap_or_else(|| panic!("{what}: field `{key}` is missing from {v}"))
        .as_f64()
        .unwrap_or_else(|| panic!("{what}: `{key}` is not a number: {}", v[key]))
}

/// The array at `key`, naming it when it is absent.
fn arr<'a>(v: &'a Value, key: &str, what: &str) -> &'a Vec<Value> {
    v.get(key)
        .and_then(Value::as_array)
        .unwrap_or_else(|| panic!("{what}: field `{key}` is missing or not an array"))
}

fn text<'a>(v: &'a Value, key: &str) -> &'a str {
    v[key]
        .as_str()
        .unwrap_or_else(|| panic!("`{key}` is not text in {v}"))
}

/// Asserts |got − expected| ≤ tol·|expected|.
fn close(what: &str, got: f64, expected: f64, tol: f64) {
    let err = (got - expected).abs();
    let ok = if expected == 0.0 {
        err <= tol
    } else {
        err <= tol * expected.abs()
    };
    assert!(
        ok,
        "{what}: got {got:.17e}, expected {expected:.17e} (relative error {:.3e}, tolerance {tol:e})",
        err / expected.abs()
    );
}

/// Compares `key` of `got` with `key` of `expected`.
fn close_key(what: &str, got: &Value, expected: &Value, key: &str, tol: f64) {
    close(
        &format!("{what} {key}"),
        num(got, key, what),
        num(expected, key, "fixture"),
        tol,
    );
}

/// The results model named `name`.
fn model<'a>(results: &'a Value, name: &str) -> &'a Value {
    let models = arr(results, "models", "results");
    models
        .iter()
        .find(|m| m["name"] == name)
        .unwrap_or_else(|| {
            let names: Vec<&str> = models.iter().filter_map(|m| m["name"].as_str()).collect();
            panic!("no model named '{name}' in the results; models: {names:?}")
        })
}

/// The fixture model named `name`.
fn expected_model<'a>(expected: &'a Value, name: &str) -> &'a Value {
    arr(expected, "models", "fixture")
        .iter()
        .find(|m| m["name"] == name)
        .unwrap_or_else(|| panic!("fixture has no model '{name}'"))
}

/// The check named `name` of a results model.
fn check<'a>(m: &'a Value, name: &str) -> &'a Value {
    let checks = arr(m, "checks", "model");
    checks
        .iter()
        .find(|c| c["name"] == name)
        .unwrap_or_else(|| {
            let names: Vec<&str> = checks.iter().filter_map(|c| c["name"].as_str()).collect();
            panic!(
                "model '{}' has no check named '{name}'; checks: {names:?}",
                text(m, "name")
            )
        })
}

fn expected_check<'a>(m: &'a Value, name: &str) -> &'a Value {
    arr(m, "checks", "fixture")
        .iter()
        .find(|c| c["name"] == name)
        .unwrap_or_else(|| panic!("fixture has no check '{name}'"))
}

/// Coefficients: the same terms in the same order, and every value.
fn assert_coefficients(what: &str, got: &Value, expected: &[Value], keys: &[&str]) {
    let got = arr(got, "coefficients", what);
    let got_terms: Vec<&str> = got.iter().map(|c| text(c, "term")).collect();
    let exp_terms: Vec<&str> = expected.iter().map(|c| text(c, "term")).collect();
    assert_eq!(got_terms, exp_terms, "{what}: coefficient terms");
    for (g, e) in got.iter().zip(expected) {
        let label = format!("{what} {}", text(e, "term"));
        for key in keys {
            close_key(&label, g, e, key, TOL);
        }
    }
}

const COEFFICIENT_KEYS: [&str; 6] = [
    "estimate",
    "std_error",
    "t_stat",
    "p_value",
    "ci_lower",
    "ci_upper",
];

/// Type II tests: the same terms in the same order, df, sums of squares,
/// F and p, and the residual row.
fn assert_term_tests(what: &str, got: &Value, expected: &[Value]) {
    let got = arr(got, "term_tests", what);
    let got_terms: Vec<&str> = got.iter().map(|r| text(r, "term")).collect();
    let exp_terms: Vec<&str> = expected.iter().map(|r| text(r, "term")).collect();
    assert_eq!(got_terms, exp_terms, "{what}: term test rows");
    for (g, e) in got.iter().zip(expected) {
        let label = format!("{what} term test {}", text(e, "term"));
        assert_eq!(num(g, "df", &label), num(e, "df", "fixture"), "{label} df");
        close_key(&label, g, e, "sum_sq", TOL);
        if e["term"] != "Residual" {
            close_key(&label, g, e, "f_stat", TOL);
            close_key(&label, g, e, "p_value", TOL);
        }
    }
}

/// GVIF rows: the same terms in order, df, GVIF and GVIF^(1/(2 df)).
fn assert_collinearity(what: &str, got: &Value, expected: &[Value]) {
    let got = arr(got, "collinearity", what);
    let got_terms: Vec<&str> = got.iter().map(|r| text(r, "term")).collect();
    let exp_terms: Vec<&str> = expected.iter().map(|r| text(r, "term")).collect();
    assert_eq!(got_terms, exp_terms, "{what}: collinearity rows");
    for (g, e) in got.iter().zip(expected) {
        let label = format!("{what} collinearity {}", text(e, "term"));
        assert_eq!(num(g, "df", &label), num(e, "df", "fixture"), "{label} df");
        close_key(&label, g, e, "gvif", TOL);
        close_key(&label, g, e, "gvif_adjusted", TOL);
    }
}

/// Every pair of result models appears once; each nested pair of the
/// fixture carries anova(smaller, larger)'s partial F test.
fn assert_comparisons(expected: &Value, results: &Value) {
    let names: Vec<&str> = arr(results, "models", "results")
        .iter()
        .map(|m| text(m, "name"))
        .collect();
    let got = arr(results, "comparisons", "results");
    let k = names.len();
    assert_eq!(
        got.len(),
        k * (k - 1) / 2,
        "one comparison per pair of models"
    );
    for (i, a) in names.iter().enumerate() {
        for b in &names[i + 1..] {
            let n = got
                .iter()
                .filter(|c| {
                    let (s, l) = (text(c, "smaller"), text(c, "larger"));
                    (s == *a && l == *b) || (s == *b && l == *a)
                })
                .count();
            assert_eq!(n, 1, "comparisons of '{a}' with '{b}'");
        }
    }
    // anova(smaller, larger) for each nested pair.
    for e in arr(expected, "comparisons", "fixture") {
        let (small, large) = (text(e, "smaller"), text(e, "larger"));
        let what = format!("comparison '{small}' in '{large}'");
        let g = got
            .iter()
            .find(|c| {
                (c["smaller"] == small && c["larger"] == large)
                    || (c["smaller"] == large && c["larger"] == small)
            })
            .unwrap_or_else(|| panic!("{what}: missing"));
        assert_eq!(text(g, "smaller"), small, "{what}: the smaller model");
        assert_eq!(g["nested"], Value::Bool(true), "{what}: nested");
        assert_eq!(num(g, "df1", &what), num(e, "df1", "fixture"), "{what} df1");
        assert_eq!(num(g, "df2", &what), num(e, "df2", "fixture"), "{what} df2");
        close_key(&what, g, e, "f_stat", TOL);
        close_key(&what, g, e, "p_value", TOL);
    }
}

/// The suggested models: the model each came from, the terms dropped in
/// order with their p-values (drop1(., test = "F") repeated), and the
/// coefficients and Type II tests of the model elimination ends at.
fn assert_suggestions(expected: &Value, results: &Value) {
    for s in arr(expected, "suggested", "fixture") {
        let name = text(s, "name");
        let from = text(s, "suggested_from");
        let reference = &expected_model(expected, from)["elimination"];
        let got = model(results, name);
        assert_eq!(got["suggested_from"], from, "{name}: suggested_from");
        let dropped = arr(got, "dropped_terms", name);
        let exp_dropped = arr(reference, "dropped", "fixture");
        let got_terms: Vec<&str> = dropped.iter().map(|d| text(d, "term")).collect();
        let exp_terms: Vec<&str> = exp_dropped.iter().map(|d| text(d, "term")).collect();
        assert_eq!(got_terms, exp_terms, "{name}: terms dropped, in order");
        for (g, e) in dropped.iter().zip(exp_dropped) {
            close_key(
                &format!("{name} dropped {}", text(e, "term")),
                g,
                e,
                "p_value",
                TOL,
            );
        }
        // lm and confint of the model elimination ends at.
        assert_coefficients(
            name,
            got,
            arr(reference, "coefficients", "fixture"),
            &COEFFICIENT_KEYS,
        );
        // car::Anova(type = 2) of that model.
        assert_term_tests(name, got, arr(reference, "term_tests", "fixture"));
    }
    // A model whose elimination drops nothing has no suggestion, or one
    // that drops nothing.
    for e in arr(expected, "models", "fixture") {
        if arr(&e["elimination"], "dropped", "fixture").is_empty() {
            let name = format!("{} (suggested)", text(e, "name"));
            if let Some(m) = arr(results, "models", "results")
                .iter()
                .find(|m| m["name"] == name.as_str())
            {
                assert!(
                    arr(m, "dropped_terms", &name).is_empty(),
                    "{name}: the reference drops nothing, got {}",
                    m["dropped_terms"]
                );
            }
        }
    }
}

/// The model names of the results, in order: the job's, then the
/// suggested ones.
fn assert_model_names(expected: &Value, results: &Value) {
    let got: Vec<&str> = arr(results, "models", "results")
        .iter()
        .map(|m| text(m, "name"))
        .collect();
    let exp: Vec<&str> = arr(expected, "result_models", "fixture")
        .iter()
        .map(|v| v.as_str().unwrap())
        .collect();
    assert_eq!(got, exp, "models in the results");
}

// ---------------------------------------------------------------------------
// Duncan: prestige ~ income + education + type, and its relatives.

#[test]
fn duncan_results_list_the_job_models_then_the_suggested_one() {
    let (expected, results) = duncan();
    // The elimination (drop1 repeated) drops something from "interaction"
    // only, so exactly one suggested model follows the job's five.
    assert_model_names(expected, results);
}

#[test]
fn duncan_coefficients_match_lm() {
    let (expected, results) = duncan();
    for name in ["additive", "without type", "interaction"] {
        let e = expected_model(expected, name);
        let g = model(results, name);
        assert_eq!(num(g, "n", name), num(e, "n", "fixture"), "{name} n");
        assert_eq!(
            num(g, "df_resid", name),
            num(e, "df_resid", "fixture"),
            "{name} df_resid"
        );
        // summary(lm(...))$coefficients and confint(lm(...)); the
        // interaction model's products are named type[prof]:income.
        assert_coefficients(
            name,
            g,
            arr(e, "coefficients", "fixture"),
            &COEFFICIENT_KEYS,
        );
    }
}

#[test]
fn duncan_type_ii_term_tests_match_car_anova() {
    let (expected, results) = duncan();
    for name in ["additive", "without type", "interaction"] {
        // car::Anova(lm(...), type = 2): in the interaction model, type and
        // income are tested without type:income, which contains them.
        assert_term_tests(
            name,
            model(results, name),
            arr(expected_model(expected, name), "term_tests", "fixture"),
        );
    }
}

#[test]
fn duncan_row_influence_matches_hatvalues_rstudent_dffits_cooks_distance() {
    let (expected, results) = duncan();
    let got = arr(model(results, "additive"), "residuals", "additive");
    let exp = arr(expected_model(expected, "additive"), "residuals", "fixture");
    assert_eq!(got.len(), exp.len(), "rows used");
    for (g, e) in got.iter().zip(exp) {
        let row = num(e, "sheet_row", "fixture");
        let what = format!("sheet row {row}");
        // The reference's data row + 1: the header takes sheet row 1.
        assert_eq!(num(g, "row", &what), row, "{what}: row");
        // hatvalues, rstandard, rstudent, dffits, cooks.distance.
        for key in [
            "leverage",
            "standardized_residual",
            "studentized_residual",
            "dffits",
            "cooks_distance",
        ] {
            close_key(&what, g, e, key, TOL);
        }
    }
}

#[test]
fn duncan_gvif_matches_car_vif() {
    let (expected, results) = duncan();
    // car::vif(lm(prestige ~ income + education + type)): GVIF, Df,
    // GVIF^(1/(2*Df)).
    assert_collinearity(
        "additive",
        model(results, "additive"),
        arr(
            expected_model(expected, "additive"),
            "collinearity",
            "fixture",
        ),
    );
}

#[test]
fn duncan_durbin_watson_matches_dwtest() {
    let (expected, results) = duncan();
    // lmtest::dwtest defaults: exact p-value P(DW ≤ d) for n < 100.
    let e = expected_check(expected_model(expected, "additive"), "durbin-watson");
    let g = check(model(results, "additive"), "durbin-watson");
    close_key("durbin-watson", g, e, "statistic", TOL);
    close_key("durbin-watson", g, e, "p_value", DW_P_TOL);
    // p = 0.019 by lmtest::dwtest, but the occupations have no time order:
    // the statistic describes the sheet's order and is not flagged.
    assert!(num(e, "p_value", "reference") < 0.05);
    assert_eq!(g["flagged"], false);
    assert!(
        text(g, "verdict").starts_with("not a test of time dependence"),
        "{}",
        text(g, "verdict")
    );
}

/// A model of one categorical predictor is saturated for RESET: its fitted
/// values are the level means, whose squares and cubes are again functions
/// of the level and lie in the indicators' span. The check says so instead
/// of blaming the rows or the residuals.
#[test]
fn reset_of_a_saturated_model_says_why_it_is_not_computed() {
    let job = DUNCAN_JOB
        .split("[[model]]")
        .next()
        .unwrap()
        .to_string()
        + "[[model]]\nname = \"type only\"\nresponse = \"prestige\"\ncategorical = { type = \"bc\" }\n";
    let results = run(&job, "duncan.csv");
    let g = check(model(&results, "type only"), "reset");
    assert!(g["statistic"].is_null());
    assert!(
        text(g, "verdict").starts_with(
            "not computed: the squared and cubed fitted values already lie in the model's columns"
        ),
        "{}",
        text(g, "verdict")
    );
}

#[test]
fn duncan_breusch_pagan_matches_bptest() {
    let (expected, results) = duncan();
    // lmtest::bptest, studentized (Koenker), regressors of the model.
    let e = expected_check(expected_model(expected, "additive"), "breusch-pagan");
    let g = check(model(results, "additive"), "breusch-pagan");
    close_key("breusch-pagan", g, e, "statistic", TOL);
    close_key("breusch-pagan", g, e, "p_value", TOL);
}

#[test]
fn duncan_shapiro_wilk_matches_shapiro_test() {
    let (expected, results) = duncan();
    // stats::shapiro.test(residuals(fit)).
    let e = expected_check(expected_model(expected, "additive"), "shapiro-wilk");
    let g = check(model(results, "additive"), "shapiro-wilk");
    close_key("shapiro-wilk", g, e, "statistic", TOL);
    close_key("shapiro-wilk", g, e, "p_value", SW_P_TOL);
}

#[test]
fn duncan_reset_matches_resettest() {
    let (expected, results) = duncan();
    // lmtest::resettest(fit, power = 2:3, type = "fitted"): F on (2, 38).
    let e = expected_check(expected_model(expected, "additive"), "reset");
    let g = check(model(results, "additive"), "reset");
    close_key("reset", g, e, "statistic", TOL);
    close_key("reset", g, e, "p_value", TOL);
}

#[test]
fn duncan_jarque_bera_matches_the_formula() {
    let (expected, results) = duncan();
    // n/6 (S² + (K − 3)²/4), moments about the mean over n, and
    // pchisq(JB, 2, lower.tail = FALSE), computed in R.
    let e = expected_check(expected_model(expected, "additive"), "jarque-bera");
    let g = check(model(results, "additive"), "jarque-bera");
    close_key("jarque-bera", g, e, "statistic", TOL);
    close_key("jarque-bera", g, e, "p_value", TOL);
}

#[test]
fn duncan_nested_pairs_carry_the_partial_f_of_anova() {
    let (expected, results) = duncan();
    // anova(smaller, larger) for every nested pair, suggested model
    // included; every pair of models is listed once.
    assert_comparisons(expected, results);
}

/// The robust model `name` of the fixture against the results: the
/// estimator's name, the least-squares estimates and `keys` of each
/// coefficient.
fn assert_robust(name: &str, keys: &[&str]) {
    let (expected, results) = duncan();
    let e = arr(expected, "robust", "fixture")
        .iter()
        .find(|r| r["name"] == name)
        .unwrap_or_else(|| panic!("fixture has no robust model '{name}'"));
    let g = model(results, name);
    assert_eq!(
        g.get("standard_errors").and_then(Value::as_str),
        Some(text(e, "standard_errors")),
        "{name}: field standard_errors"
    );
    assert_coefficients(name, g, arr(e, "coefficients", "fixture"), keys);
}

#[test]
fn duncan_hc3_standard_errors_match_vcovhc() {
    // sqrt(diag(sandwich::vcovHC(fit, type = "HC3"))); the estimates are
    // the least-squares ones.
    assert_robust("additive HC3", &["estimate", "std_error"]);
}

#[test]
fn duncan_hc1_standard_errors_match_vcovhc() {
    // sqrt(diag(sandwich::vcovHC(fit, type = "HC1"))).
    assert_robust("additive HC1", &["estimate", "std_error"]);
}

#[test]
fn duncan_robust_t_tests_and_intervals_match_coeftest_and_coefci() {
    // lmtest::coeftest(fit, vcov. = V) and lmtest::coefci(fit, vcov. = V):
    // t = b/se, p and intervals from t on the residual degrees of freedom.
    for name in ["additive HC3", "additive HC1"] {
        assert_robust(name, &COEFFICIENT_KEYS);
    }
}

#[test]
fn duncan_backward_elimination_matches_repeated_drop1() {
    let (expected, results) = duncan();
    // drop1(fit, test = "F") repeated at threshold 0.05: type:income goes
    // (p ≈ 0.099), then every remaining term stays; the additive and
    // two-predictor models lose nothing.
    assert_suggestions(expected, results);
}

// ---------------------------------------------------------------------------
// mtcars: mpg ~ wt + hp + qsec + drat + am.

#[test]
fn mtcars_full_model_matches_lm_and_car_anova() {
    let (expected, results) = mtcars();
    let e = expected_model(expected, "full");
    let g = model(results, "full");
    // summary(lm(...))$coefficients and confint.
    assert_coefficients(
        "full",
        g,
        arr(e, "coefficients", "fixture"),
        &COEFFICIENT_KEYS,
    );
    // car::Anova(type = 2); with numeric terms only, each term last.
    assert_term_tests("full", g, arr(e, "term_tests", "fixture"));
}

#[test]
fn mtcars_vifs_match_car_vif() {
    let (expected, results) = mtcars();
    // car::vif: one column per term, so GVIF = VIF and the adjusted value
    // is its square root.
    assert_collinearity(
        "full",
        model(results, "full"),
        arr(expected_model(expected, "full"), "collinearity", "fixture"),
    );
}

#[test]
fn mtcars_backward_elimination_drops_several_terms() {
    let (expected, results) = mtcars();
    assert_model_names(expected, results);
    // drop1(fit, test = "F") repeated at threshold 0.05: drat, then hp,
    // leaving mpg ~ wt + qsec + am.
    let dropped = arr(
        &expected_model(expected, "full")["elimination"],
        "dropped",
        "fixture",
    );
    assert!(dropped.len() >= 2, "the reference drops several terms");
    assert_suggestions(expected, results);
}

#[test]
fn mtcars_suggestion_is_compared_with_the_full_model() {
    let (expected, results) = mtcars();
    // anova(lm(mpg ~ wt + qsec + am), lm(mpg ~ wt + hp + qsec + drat + am)).
    assert_comparisons(expected, results);
}

/// HC3 with a row of leverage 1: pilot given a type of its own ("solo").
/// The standard error of type[solo] needs that row's own error variance and
/// is undefined (null, with its t, p and interval); every other
/// coefficient's equals statsmodels' HC3 on the other 44 rows
/// (duncan_solo.json, tests/reference/make_unit_leverage_reference.py);
/// the Checks sheet names the row.
#[test]
fn hc3_with_a_row_of_leverage_one_leaves_that_level_undefined() {
    let expected = read_json(&fixture("duncan_solo.json"));
    let data = std::fs::read_to_string(fixture("duncan.csv")).expect("read duncan.csv");
    let data: String = data
        .lines()
        .map(|line| {
            if line.starts_with("pilot,") {
                let mut fields: Vec<&str> = line.split(',').collect();
                fields[4] = "solo";
                fields.join(",") + "\n"
            } else {
                format!("{line}\n")
            }
        })
        .collect();
    let scratch = Scratch::new();
    scratch.write("duncan.csv", &data);
    scratch.write(
        "job.toml",
        "suggest = false\n[input]\nworkbook = \"duncan.csv\"\n[output]\nworkbook = \"report.xlsx\"\n\
         [[model]]\nname = \"solo\"\nresponse = \"prestige\"\nnumeric = [\"income\", \"education\"]\n\
         categorical = { type = \"bc\" }\nstandard_errors = \"HC3\"\n",
    );
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    assert!(out.status.success(), "{}", common::stderr(&out));
    let results = read_json(&scratch.path("report.json"));
    let m = model(&results, "solo");
    for c in arr(m, "coefficients", "solo") {
        let term = text(c, "term");
        if term == "type[solo]" {
            for key in ["std_error", "t_stat", "p_value", "ci_lower", "ci_upper"] {
                assert!(c[key].is_null(), "{term} {key}: {}", c[key]);
            }
        } else {
            let want = expected["hc3_std_errors"][term]
                .as_f64()
                .unwrap_or_else(|| panic!("no reference for {term}"));
            close(&format!("{term} HC3"), num(c, "std_error", term), want, TOL);
        }
    }
    let g = check(m, "robust standard errors");
    assert_eq!(g["flagged"], true);
    let pilot = data
        .lines()
        .position(|l| l.starts_with("pilot,"))
        .expect("pilot")
        + 1;
    assert!(
        text(g, "verdict").starts_with(&format!("sheet row {pilot} has leverage 1"))
            && text(g, "verdict").contains("the HC3 standard errors of type[solo] are undefined"),
        "{}",
        text(g, "verdict")
    );
}
