//! Generalized variance inflation factors and heteroscedasticity-consistent
//! (HC1, HC3) covariances, checked against an outside reference.
//!
//! Source of the expected values: R with car (`car::vif`) and sandwich
//! (`sandwich::vcovHC`, types "HC1" and "HC3"), exact versions recorded in
//! each fixture's `source` field, produced once by
//! tests/reference/make_collinearity_reference.R and committed under
//! tests/fixtures/collinearity/. The datasets ship with R (mtcars,
//! LifeCycleSavings, warpbreaks, iris) or with car's data package (Duncan,
//! Prestige). Each case's data is written to a CSV in a scratch folder and
//! goes through the library as a run would: `source::read_table`,
//! `job::parse`, `design::build`, `fit::least_squares`. The run here needs
//! no R.

use std::path::{Path, PathBuf};

use serde_json::Value;
use sheetfit::checks::collinearity::collinearity;
use sheetfit::design::Design;
use sheetfit::fit::robust::{moved_by_unit_leverage_rows, robust_covariance, unit_leverage_rows};
use sheetfit::fit::{least_squares, LeastSquares};
use sheetfit::job::Robust;

/// Relative tolerance for the (generalized) variance inflation factors:
/// both sides compute determinants of the same well-conditioned
/// correlation matrices.
const GVIF_TOL: f64 = 1e-9;

/// Relative tolerance for robust standard errors and covariances.
const HC_TOL: f64 = 1e-10;

fn fixture(case: &str) -> Value {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/collinearity")
        .join(format!("{case}.json"));
    let text = std::fs::read_to_string(&path)
        .unwrap_or_else(|e| panic!("cannot read {}: {e}", path.display()));
    serde_json::from_str(&text).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

fn numbers(v: &Value) -> Vec<f64> {
    v.as_array()
        .unwrap_or_else(|| panic!("not an array: {v}"))
        .iter()
        .map(|x| x.as_f64().unwrap_or(f64::NAN))
        .collect()
}

fn strings(v: &Value) -> Vec<String> {
    v.as_array()
        .unwrap_or_else(|| panic!("not an array: {v}"))
        .iter()
        .map(|x| {
            x.as_str()
                .unwrap_or_else(|| panic!("not text: {x}"))
                .to_string()
        })
        .collect()
}

fn quoted(names: &[String]) -> String {
    let items: Vec<String> = names
        .iter()
        .map(|n| Value::from(n.as_str()).to_string())
        .collect();
    format!("[{}]", items.join(", "))
}

/// Writes the case's data as data.csv in `folder`: numbers in their
/// shortest round-trip form, text as it is, a missing value as a blank cell.
fn write_csv(case: &Value, folder: &Path) {
    let columns = case["data"].as_array().expect("data columns");
    let mut out = csv::Writer::from_path(folder.join("data.csv")).expect("create data.csv");
    let names: Vec<&str> = columns
        .iter()
        .map(|c| c["name"].as_str().expect("name"))
        .collect();
    out.write_record(&names).expect("write header");
    let values: Vec<&Vec<Value>> = columns
        .iter()
        .map(|c| c["values"].as_array().expect("values"))
        .collect();
    for i in 0..values[0].len() {
        let row: Vec<String> = values
            .iter()
            .map(|column| match &column[i] {
                Value::Null => String::new(),
                Value::String(s) => s.clone(),
                Value::Number(x) => format!("{}", x.as_f64().expect("a number")),
                other => panic!("unexpected cell {other}"),
            })
            .collect();
        out.write_record(&row).expect("write row");
    }
    out.flush().expect("flush data.csv");
}

/// A job of one model, as the case's job describes it.
fn job_text(case: &Value) -> String {
    let job = &case["job"];
    let mut text =
        String::from("[input]\nworkbook = \"data.csv\"\n[[model]]\nname = \"reference\"\n");
    text += &format!("response = {}\n", job["response"]);
    text += &format!("numeric = {}\n", quoted(&strings(&job["numeric"])));
    let poly: Vec<String> = job["poly"]
        .as_object()
        .expect("poly")
        .iter()
        .map(|(column, degree)| format!("{} = {degree}", Value::from(column.as_str())))
        .collect();
    text += &format!("poly = {{ {} }}\n", poly.join(", "));
    text += &format!("categorical = {}\n", quoted(&strings(&job["categorical"])));
    text
}

/// The case's design and fit, built through the library from its data.
fn build(case: &Value) -> (Design, LeastSquares) {
    let scratch = tempfile::tempdir().expect("scratch folder");
    write_csv(case, scratch.path());
    let path = scratch.path().join("job.toml");
    let job = sheetfit::job::parse(&path, &job_text(case)).expect("job parses");
    let table = sheetfit::source::read_table(&job.input, job.sheet.as_deref(), job.header_row)
        .expect("data.csv reads");
    let design = sheetfit::design::build(&table, &job.models[0]).expect("design builds");
    let ls = least_squares(&design.x, &design.y);
    (design, ls)
}

/// Asserts `got` is within `tol` of `expected`, relative; returns the
/// relative error.
fn assert_rel(what: &str, got: f64, expected: f64, tol: f64) -> f64 {
    let err = (got - expected).abs() / expected.abs().max(f64::MIN_POSITIVE);
    assert!(
        err <= tol,
        "{what}: got {got:e}, reference {expected:e}, relative error {err:.2e} > {tol:e}"
    );
    err
}

/// The design sheetfit built is the one R fitted: same columns, names,
/// rows and values, all columns estimable, same coefficients.
fn check_design(name: &str, case: &Value, design: &Design, ls: &LeastSquares) {
    let names = strings(&case["design"]["names"]);
    assert_eq!(design.names, names, "{name}: design column names");
    let n = case["n"].as_u64().expect("n") as usize;
    assert_eq!(design.x.nrows(), n, "{name}: rows used");
    for (j, column) in case["design"]["columns"]
        .as_array()
        .expect("design columns")
        .iter()
        .enumerate()
    {
        for (i, v) in numbers(column).iter().enumerate() {
            let got = design.row(i)[j];
            assert!(
                (got - v).abs() <= 1e-15 * v.abs(),
                "{name}: x[{i}, {j}] ({}) is {got}, R has {v}",
                names[j]
            );
        }
    }
    assert_eq!(
        ls.kept,
        (0..names.len()).collect::<Vec<_>>(),
        "{name}: kept"
    );
    for (k, b) in numbers(&case["coefficients"]).iter().enumerate() {
        assert_rel(
            &format!("{name}: coefficient {}", names[k]),
            ls.beta[k],
            *b,
            1e-9,
        );
    }
}

/// Checks the GVIFs; returns the largest relative error.
fn check_vif(name: &str, case: &Value, design: &Design, ls: &LeastSquares) -> f64 {
    let ours = collinearity(design, &ls.kept);
    let expected = case["vif"].as_array().expect("vif rows");
    assert_eq!(ours.len(), expected.len(), "{name}: number of terms");
    let mut worst = 0.0_f64;
    for (g, e) in ours.iter().zip(expected) {
        let term = e["term"].as_str().expect("term");
        assert_eq!(g.term, term, "{name}: term order");
        assert_eq!(Some(g.df as u64), e["df"].as_u64(), "{name}: {term} df");
        let gvif = e["gvif"].as_f64().expect("gvif");
        let adjusted = e["gvif_adjusted"].as_f64().expect("gvif_adjusted");
        worst = worst.max(assert_rel(
            &format!("{name}: {term} GVIF"),
            g.gvif,
            gvif,
            GVIF_TOL,
        ));
        worst = worst.max(assert_rel(
            &format!("{name}: {term} GVIF^(1/(2 df))"),
            g.gvif_adjusted,
            adjusted,
            GVIF_TOL,
        ));
    }
    worst
}

fn robust(design: &Design, ls: &LeastSquares, kind: Robust) -> nalgebra::DMatrix<f64> {
    robust_covariance(
        &design.x,
        &ls.kept,
        &ls.xtx_inv,
        ls.residuals.as_slice(),
        &ls.leverage,
        kind,
    )
}

/// Standard errors to [`HC_TOL`] relative; every entry of the covariance to
/// [`HC_TOL`] relative to √(VⱼⱼVₖₖ), the scale of a covariance. Returns the
/// largest relative error of a standard error.
fn check_hc(name: &str, expected: &Value, design: &Design, ls: &LeastSquares, kind: Robust) -> f64 {
    let v = robust(design, ls, kind);
    let label = kind.label();
    let se = numbers(&expected["std_errors"]);
    assert_eq!(v.nrows(), se.len(), "{name}: {label} size");
    let mut worst = 0.0_f64;
    for (j, s) in se.iter().enumerate() {
        let what = format!("{name}: {label} std error of {}", design.names[j]);
        worst = worst.max(assert_rel(&what, v[(j, j)].sqrt(), *s, HC_TOL));
    }
    for (j, row) in expected["matrix"]
        .as_array()
        .expect("matrix rows")
        .iter()
        .enumerate()
    {
        for (k, e) in numbers(row).iter().enumerate() {
            let scale = se[j] * se[k];
            let err = (v[(j, k)] - e).abs() / scale;
            assert!(
                err <= HC_TOL,
                "{name}: {label} covariance ({j}, {k}) is {:e}, R has {e:e}: {err:.2e} of its scale",
                v[(j, k)]
            );
        }
    }
    worst
}

/// Every check of one case: design, GVIFs, HC1 and HC3. Prints the largest
/// relative errors (`cargo test --test collinearity -- --nocapture`).
fn check_case(name: &str) {
    let case = fixture(name);
    let (design, ls) = build(&case);
    check_design(name, &case, &design, &ls);
    let gvif = check_vif(name, &case, &design, &ls);
    let hc1 = check_hc(name, &case["hc1"], &design, &ls, Robust::Hc1);
    let hc3 = check_hc(name, &case["hc3"], &design, &ls, Robust::Hc3);
    eprintln!(
        "{name:<20} largest relative error: GVIF {gvif:.1e}, HC1 se {hc1:.1e}, HC3 se {hc3:.1e}"
    );
}

#[test]
fn numeric_predictors_get_the_classical_vifs_of_car() {
    check_case("mtcars");
}

#[test]
fn a_polynomial_is_one_term_with_a_generalized_vif() {
    check_case("mtcars_poly");
}

#[test]
fn a_three_level_factor_gets_the_generalized_vif_of_car() {
    check_case("duncan");
}

#[test]
fn rows_with_a_missing_level_are_left_out_as_r_leaves_them_out() {
    check_case("prestige");
}

#[test]
fn hc1_and_hc3_standard_errors_match_sandwich() {
    check_case("life_cycle_savings");
}

#[test]
fn factor_baselines_are_the_first_sorted_level_in_both() {
    check_case("warpbreaks");
}

#[test]
fn collinear_predictors_beside_a_factor_match_car() {
    check_case("iris");
}

#[test]
fn a_row_with_leverage_one_leaves_only_its_coefficient_undefined_in_hc3() {
    let name = "duncan_singleton";
    let case = fixture(name);
    let (design, ls) = build(&case);
    check_design(name, &case, &design, &ls);
    let gvif = check_vif(name, &case, &design, &ls);
    let hc1 = check_hc(name, &case["hc1"], &design, &ls, Robust::Hc1);
    // R's HC3 here is NaN throughout (0/0 at the row with leverage 1).
    assert!(numbers(&case["hc3"]["std_errors"])
        .iter()
        .all(|v| v.is_nan()));
    let singleton = unit_leverage_rows(&ls.leverage);
    assert_eq!(singleton.len(), 1, "{name}: rows with leverage 1");
    let v = robust(&design, &ls, Robust::Hc3);
    // The coefficient the row moves (its level's indicator) is undefined,
    // as in R; the others are not.
    let moved = moved_by_unit_leverage_rows(&design.x, &ls.kept, &ls.xtx_inv, &ls.leverage);
    assert_eq!(moved.len(), 1, "{name}: coefficients the row moves");
    for j in 0..v.nrows() {
        for k in 0..v.ncols() {
            let undefined = moved.contains(&j) || moved.contains(&k);
            assert_eq!(v[(j, k)].is_nan(), undefined, "{name}: HC3 ({j}, {k}) {v}");
        }
    }
    // The coefficients the row does not move get what R gives them in the
    // fit without that row and its indicator.
    let reduced = &case["hc3_without_singleton"];
    let mut hc3 = 0.0_f64;
    for (name_j, se) in strings(&reduced["names"])
        .iter()
        .zip(numbers(&reduced["std_errors"]))
    {
        let j = design
            .names
            .iter()
            .position(|n| n == name_j)
            .unwrap_or_else(|| panic!("{name}: no column {name_j}"));
        hc3 = hc3.max(assert_rel(
            &format!("{name}: HC3 std error of {name_j}"),
            v[(j, j)].sqrt(),
            se,
            HC_TOL,
        ));
    }
    eprintln!(
        "{name:<20} largest relative error: GVIF {gvif:.1e}, HC1 se {hc1:.1e}, HC3 se {hc3:.1e} (without the row)"
    );
}
