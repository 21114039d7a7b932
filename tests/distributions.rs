//! The distribution functions behind every p-value and confidence limit:
//! `fit::t_quantile`, `fit::t_two_sided_p` and `fit::f_sf`.
//!
//! Source of the expected values: scipy (scipy.stats.t.ppf, t.sf, f.sf; the
//! exact scipy, numpy and Python versions are recorded in the fixture's
//! `source` field), produced once by
//! tests/reference/make_distribution_reference.py and committed as
//! tests/fixtures/distributions.json. The run here needs no Python. Each
//! test checks every case of its list and reports all failing cases at once,
//! with the relative error of each.

use std::path::PathBuf;

use serde_json::Value;
use sheetfit::fit::{f_sf, t_quantile, t_two_sided_p};

/// The committed reference fixture.
fn fixture() -> Value {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/distributions.json");
    let text = std::fs::read_to_string(&path)
        .unwrap_or_else(|e| panic!("cannot read {}: {e}", path.display()));
    serde_json::from_str(&text).expect("distributions.json is JSON")
}

/// The entries of one list of the fixture, which must not be empty.
fn cases<'a>(fixture: &'a Value, list: &str) -> &'a [Value] {
    let cases = fixture[list]
        .as_array()
        .unwrap_or_else(|| panic!("{list} is not a list in the fixture"));
    assert!(!cases.is_empty(), "{list} is empty");
    cases
}

fn num(case: &Value, key: &str) -> f64 {
    case[key]
        .as_f64()
        .unwrap_or_else(|| panic!("{key} is not a number in {case}"))
}

/// |got − expected| / |expected|; infinite when `got` is not a number.
fn relative_error(got: f64, expected: f64) -> f64 {
    if got.is_finite() {
        ((got - expected) / expected).abs()
    } else {
        f64::INFINITY
    }
}

/// Panics listing every `(case, got, expected)` whose relative error
/// exceeds `tol`, with that error.
fn assert_all_within(what: &str, results: &[(String, f64, f64)], tol: f64) {
    assert!(!results.is_empty(), "{what}: nothing was compared");
    let failures: Vec<String> = results
        .iter()
        .filter_map(|(case, got, expected)| {
            let err = relative_error(*got, *expected);
            (err.is_nan() || err > tol).then(|| {
                format!("  {case}: got {got:e}, reference {expected:e}, relative error {err:.2e}")
            })
        })
        .collect();
    assert!(
        failures.is_empty(),
        "{what}: {} of {} cases beyond relative {tol:e}:\n{}",
        failures.len(),
        results.len(),
        failures.join("\n")
    );
}

/// Every t quantile of the fixture to relative 1e-9.
///
/// Source: scipy.stats.t.ppf (fixture list `t_quantiles`). statrs's own
/// inverse CDF alone is known to drift at very large df (at df = 1e7 it is
/// off in the second digit, and its survival function loses digits there
/// too), so the tool polishes it with Newton steps and, from
/// `fit::T_EXPANSION_FROM` degrees of freedom, replaces it with an
/// asymptotic expansion about the normal quantile; the df = 1e3 .. 1e7
/// cases pin both sides of that switch.
#[test]
fn t_quantiles_match_the_reference_library() {
    let fixture = fixture();
    let results: Vec<(String, f64, f64)> = cases(&fixture, "t_quantiles")
        .iter()
        .map(|c| {
            let (prob, df) = (num(c, "prob"), num(c, "df"));
            (
                format!("t_quantile({prob}, df = {df})"),
                t_quantile(prob, df),
                num(c, "value"),
            )
        })
        .collect();
    assert_eq!(results.len(), 60, "5 probabilities × 12 df");
    assert_all_within("t quantiles", &results, 1e-9);
}

/// Every two-sided t p-value of the fixture to relative 1e-8, tiny tails
/// included (t = 40, df = 10 gives about 2.28e-12; t = 40, df = 1000 about
/// 1e-209).
///
/// Source: 2·scipy.stats.t.sf(|t|, df) (fixture list `t_two_sided_p`).
#[test]
fn t_two_sided_p_values_match_the_reference_library() {
    let fixture = fixture();
    let results: Vec<(String, f64, f64)> = cases(&fixture, "t_two_sided_p")
        .iter()
        .flat_map(|c| {
            let (t, df, expected) = (num(c, "t"), num(c, "df"), num(c, "value"));
            // The p-value is two-sided, so −t must give the same value.
            [t, -t].map(|s| {
                (
                    format!("t_two_sided_p({s}, df = {df})"),
                    t_two_sided_p(s, df).unwrap_or(f64::NAN),
                    expected,
                )
            })
        })
        .collect();
    assert_all_within("two-sided t p-values", &results, 1e-8);
}

/// Every F upper tail of the fixture to relative 1e-8, tiny tails included
/// (f = 1e4 with d1 = 3, d2 = 100 gives about 9.47e-124).
///
/// Source: scipy.stats.f.sf (fixture list `f_sf`).
#[test]
fn f_upper_tails_match_the_reference_library() {
    let fixture = fixture();
    let results: Vec<(String, f64, f64)> = cases(&fixture, "f_sf")
        .iter()
        .map(|c| {
            let (f, d1, d2) = (num(c, "f"), num(c, "d1"), num(c, "d2"));
            (
                format!("f_sf({f}, d1 = {d1}, d2 = {d2})"),
                f_sf(f, d1, d2).unwrap_or(f64::NAN),
                num(c, "value"),
            )
        })
        .collect();
    assert_all_within("F upper tails", &results, 1e-8);
}

/// The fixture really reaches the tails it is meant to test.
#[test]
fn fixture_covers_tiny_tails() {
    let fixture = fixture();
    let smallest = |list: &str| {
        cases(&fixture, list)
            .iter()
            .map(|c| num(c, "value"))
            .fold(f64::INFINITY, f64::min)
    };
    assert!(smallest("t_two_sided_p") < 1e-200);
    assert!(smallest("f_sf") < 1e-100);
    let source = fixture["source"].as_str().expect("a source string");
    assert!(
        source.contains("scipy") && source.contains("Python"),
        "{source}"
    );
}

/// Two values of the standard printed t tables.
///
/// Source: from memory of the standard printed Student t tables, which give
/// three decimals; hence the tolerance of 5e-4 (half a unit in the last
/// printed place).
#[test]
fn t_quantiles_match_printed_t_tables() {
    let q = t_quantile(0.975, 10.0);
    assert!((q - 2.228).abs() < 5e-4, "t(0.975; 10) = {q}");
    let q = t_quantile(0.95, 5.0);
    assert!((q - 2.015).abs() < 5e-4, "t(0.95; 5) = {q}");
}
