//! The model-assumption tests of `sheetfit::checks::assumptions` against an
//! outside reference library.
//!
//! Source of the expected values: R 4.2.2 with lmtest 0.9.40 (exact versions
//! in each fixture's `source` field), produced once by
//! tests/reference/make_assumption_reference.R and committed under
//! tests/fixtures/assumptions/:
//!
//! * Durbin-Watson: `lmtest::dwtest` with its defaults (exact p-value below
//!   100 rows, normal approximation from 100 on), and, for the exact cases,
//!   Imhof's formula evaluated by R's `integrate()` as a second reference;
//! * Breusch-Godfrey: `lmtest::bgtest(type = "Chisq", fill = 0)`, orders 1, 2;
//! * Breusch-Pagan: `lmtest::bptest(studentize = TRUE)`;
//! * Jarque-Bera: R's arithmetic on the published formula with `pchisq`
//!   (the package tseries is not installed where the fixtures were made);
//! * Shapiro-Wilk: `stats::shapiro.test`, on the residuals and on raw samples;
//! * RESET: `lmtest::resettest(power = 2:3, type = "fitted")`.
//!
//! The data are datasets that ship with R and seeded draws written into the
//! fixtures; the run here needs no R. Run with `-- --nocapture` to see the
//! largest relative difference of each quantity.

use std::path::PathBuf;

use nalgebra::{DMatrix, DVector};
use serde_json::Value;
use sheetfit::checks::assumptions::{
    breusch_godfrey, breusch_pagan, durbin_watson, jarque_bera, reset, shapiro_wilk, TestResult,
};
use sheetfit::design::DesignMatrix;
use sheetfit::fit::{least_squares, LeastSquares};

/// Relative tolerance for the statistics: the same small problems solved by
/// two careful implementations.
const STATISTIC: f64 = 1e-9;
/// The Durbin-Watson statistic, a ratio of two sums of squares.
const DW_STATISTIC: f64 = 1e-10;
/// p-values from a χ², F or normal tail of a matching statistic.
const P_VALUE: f64 = 1e-8;
/// Durbin-Watson p-values against lmtest: four significant digits. lmtest's
/// exact p-value comes from Farebrother's implementation of Pan's method,
/// ours from Imhof's formula.
const DW_P_VALUE: f64 = 5e-5;
/// Exact Durbin-Watson p-values against Imhof's formula evaluated by R's
/// `integrate()` (asked for 1e-12 relative) on R's eigenvalues.
const DW_P_IMHOF: f64 = 1e-8;
/// Shapiro-Wilk p-values: Royston's approximation evaluated on the same W.
const SW_P_VALUE: f64 = 1e-6;
/// Shapiro-Wilk W.
const SW_STATISTIC: f64 = 1e-9;

const CASES: [&str; 7] = [
    "cars",
    "life_cycle_savings",
    "longley",
    "women",
    "mtcars",
    "faithful",
    "airquality",
];

fn fixture(name: &str) -> Value {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/assumptions")
        .join(name);
    let text = std::fs::read_to_string(&path)
        .unwrap_or_else(|e| panic!("cannot read {}: {e}", path.display()));
    serde_json::from_str(&text).unwrap_or_else(|e| panic!("{} is not JSON: {e}", path.display()))
}

fn num(v: &Value) -> f64 {
    v.as_f64()
        .unwrap_or_else(|| panic!("expected a number, found {v}"))
}

fn numbers(v: &Value) -> Vec<f64> {
    v.as_array()
        .unwrap_or_else(|| panic!("expected an array, found {v}"))
        .iter()
        .map(num)
        .collect()
}

fn relative(a: f64, b: f64) -> f64 {
    if b == 0.0 {
        a.abs()
    } else {
        (a - b).abs() / b.abs()
    }
}

/// Collects every comparison, so one run reports them all, and the largest
/// relative difference of each quantity.
#[derive(Default)]
struct Ledger {
    failures: Vec<String>,
    worst: Vec<(String, f64, String)>,
}

impl Ledger {
    fn check(&mut self, case: &str, what: &str, ours: Option<f64>, reference: f64, tol: f64) {
        let Some(ours) = ours else {
            self.failures.push(format!(
                "{case} {what}: none computed, expected {reference}"
            ));
            return;
        };
        let err = relative(ours, reference);
        if err.is_nan() || err > tol {
            self.failures.push(format!(
                "{case} {what}: got {ours:e}, expected {reference:e} (relative {err:.2e} > {tol:e})"
            ));
        }
        match self.worst.iter_mut().find(|(w, _, _)| w == what) {
            Some(entry) if entry.1 < err => {
                entry.1 = err;
                entry.2 = case.to_string();
            }
            Some(_) => {}
            None => self.worst.push((what.to_string(), err, case.to_string())),
        }
    }

    fn test(
        &mut self,
        case: &str,
        what: &str,
        ours: Option<TestResult>,
        reference: &Value,
        stat_tol: f64,
        p_tol: f64,
    ) {
        let Some(ours) = ours else {
            self.failures.push(format!("{case} {what}: no result"));
            return;
        };
        self.check(
            case,
            &format!("{what} statistic"),
            Some(ours.statistic),
            num(&reference["statistic"]),
            stat_tol,
        );
        self.check(
            case,
            &format!("{what} p-value"),
            ours.p_value,
            num(&reference["p_value"]),
            p_tol,
        );
        for (key, value) in [("df", ours.df), ("df1", ours.df), ("df2", ours.df2)] {
            if let Some(expected) = reference.get(key) {
                if value != Some(num(expected)) {
                    self.failures.push(format!(
                        "{case} {what}: {key} {value:?}, expected {expected}"
                    ));
                }
            }
        }
    }

    fn finish(self, title: &str) {
        println!("{title}: largest relative difference from the reference");
        for (what, err, case) in &self.worst {
            println!("  {what:<32} {err:9.2e}  ({case})");
        }
        assert!(
            self.failures.is_empty(),
            "{} mismatches:\n{}",
            self.failures.len(),
            self.failures.join("\n")
        );
    }
}

/// The design with its intercept, the response, the residuals and the
/// fit of one regression fixture.
struct Case {
    x: DesignMatrix,
    y: Vec<f64>,
    residuals: Vec<f64>,
    solution: LeastSquares,
}

fn case(data: &Value) -> Case {
    let y = numbers(&data["y"]);
    let columns: Vec<Vec<f64>> = data["x"]
        .as_array()
        .expect("x is an array of columns")
        .iter()
        .map(numbers)
        .collect();
    let names = data["x_names"].as_array().expect("x_names");
    assert_eq!(names.len(), columns.len());
    assert_eq!(data["intercept"], Value::Bool(true));
    let n = y.len();
    assert_eq!(num(&data["n"]) as usize, n);
    let mut x = DMatrix::from_element(n, columns.len() + 1, 1.0);
    for (j, column) in columns.iter().enumerate() {
        assert_eq!(column.len(), n);
        for (i, v) in column.iter().enumerate() {
            x[(i, j + 1)] = *v;
        }
    }
    let x = DesignMatrix::from_dense(&x, None);
    let ls = least_squares(&x, &DVector::from_column_slice(&y));
    assert!(ls.aliased.is_empty());
    let residuals: Vec<f64> = ls.residuals.iter().copied().collect();
    Case {
        x,
        y,
        residuals,
        solution: ls,
    }
}

#[test]
fn regression_assumption_tests_match_the_reference_library() {
    let mut ledger = Ledger::default();
    for name in CASES {
        let data = fixture(&format!("{name}.json"));
        let reference = &data["reference"];
        let c = case(&data);

        let dw = &reference["durbin_watson"];
        let ours = durbin_watson(&c.residuals, &c.x);
        let exact = dw["exact"].as_bool().expect("exact flag");
        assert_eq!(
            exact,
            c.y.len() < sheetfit::checks::assumptions::DW_EXACT_BELOW
        );
        let label = if exact {
            "DW (exact)"
        } else {
            "DW (normal approx.)"
        };
        println!(
            "{name:<20} {label:<20} d = {:.10}  p: ours {:.12e}, lmtest {:.12e}",
            ours.map_or(f64::NAN, |r| r.statistic),
            ours.and_then(|r| r.p_value).unwrap_or(f64::NAN),
            num(&dw["p_value"])
        );
        ledger.test(name, label, ours, dw, DW_STATISTIC, DW_P_VALUE);
        if let Some(imhof) = dw.get("p_value_imhof_integrate") {
            ledger.check(
                name,
                "DW (exact) p-value vs R integrate",
                ours.and_then(|r| r.p_value),
                num(imhof),
                DW_P_IMHOF,
            );
        }

        for bg in reference["breusch_godfrey"].as_array().expect("BG list") {
            let order = num(&bg["order"]) as usize;
            let ours = breusch_godfrey(&c.residuals, &c.x, order);
            ledger.test(name, &format!("BG({order})"), ours, bg, STATISTIC, P_VALUE);
        }
        ledger.test(
            name,
            "BP",
            breusch_pagan(&c.residuals, &c.x),
            &reference["breusch_pagan"],
            STATISTIC,
            P_VALUE,
        );
        ledger.test(
            name,
            "JB",
            jarque_bera(&c.residuals),
            &reference["jarque_bera"],
            STATISTIC,
            P_VALUE,
        );
        ledger.test(
            name,
            "SW on residuals",
            shapiro_wilk(&c.residuals),
            &reference["shapiro_wilk"],
            SW_STATISTIC,
            SW_P_VALUE,
        );
        ledger.test(
            name,
            "RESET",
            reset(&c.y, &c.x, &c.solution),
            &reference["reset"],
            STATISTIC,
            P_VALUE,
        );
    }
    ledger.finish("regression fixtures");
}

#[test]
fn shapiro_wilk_matches_the_reference_on_raw_samples() {
    let data = fixture("shapiro_wilk.json");
    let samples = data["samples"].as_array().expect("samples");
    let mut sizes: Vec<usize> = Vec::new();
    let mut ledger = Ledger::default();
    for s in samples {
        let name = s["name"].as_str().expect("sample name");
        let x = numbers(&s["x"]);
        assert_eq!(x.len(), num(&s["n"]) as usize, "{name}");
        sizes.push(x.len());
        ledger.test(name, "SW", shapiro_wilk(&x), s, SW_STATISTIC, SW_P_VALUE);
    }
    for n in [3, 5, 11, 12, 20, 50, 200, 2000] {
        assert!(sizes.contains(&n), "no sample of {n} values");
    }
    ledger.finish("Shapiro-Wilk samples");
}
