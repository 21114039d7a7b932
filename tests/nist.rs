//! Certified accuracy: NIST StRD linear-regression datasets run through the
//! whole path (data in a workbook, a job file, the binary, the results JSON).
//!
//! Source of every expected value: the certified values inside the NIST
//! StRD files in tests/data/nist-strd/ (NIST Statistical Reference
//! Datasets, Linear Least Squares Regression), parsed from the files here,
//! never retyped. The measure is the log relative error (LRE), the number of
//! correct significant digits (−log10 of the absolute value where the
//! certified value is 0, as for the exact fits Wampler1 and Wampler2); the
//! bar is at least 10 on every coefficient, standard error, residual
//! standard deviation and R², for all eleven datasets. Polynomial models
//! are stated with the job file's `poly` key, so their powers are formed by
//! the tool itself.
//!
//! The condition number of each design is checked too, against
//! tests/fixtures/nist-condition.json: singular values computed with mpmath
//! at 50 digits from the decimal text of the data by
//! tests/reference/make_condition_reference.py (mpmath version recorded in
//! the fixture's `source` field).

mod common;

use std::path::PathBuf;
use std::sync::OnceLock;

use common::{lre, read_json, sheetfit, Cell, Scratch};

/// Certified values and data of one StRD file.
struct Dataset {
    /// Parameter estimates B0, B1, ... and their standard deviations.
    params: Vec<(f64, f64)>,
    residual_sd: f64,
    r_squared: f64,
    /// Column names from the `Data:` line, y first.
    names: Vec<String>,
    /// Data rows, y first.
    rows: Vec<Vec<f64>>,
}

/// The StRD files: `SHEETFIT_NIST_DIR` when set, else the copy committed in
/// tests/data/nist-strd/.
fn nist_dir() -> PathBuf {
    std::env::var_os("SHEETFIT_NIST_DIR").map_or_else(
        || PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/data/nist-strd"),
        PathBuf::from,
    )
}

/// The line range `a to b` (1-based) in a header line such as
/// "Certified Values  (lines 31 to 47)".
fn line_range(line: &str) -> (usize, usize) {
    let inner = line.split("lines").nth(1).expect("a line range");
    let nums: Vec<usize> = inner
        .split(|c: char| !c.is_ascii_digit())
        .filter(|s| !s.is_empty())
        .map(|s| s.parse().expect("a line number"))
        .collect();
    (nums[0], nums[1])
}

fn number(s: &str) -> f64 {
    s.parse().unwrap_or_else(|_| panic!("not a number: {s}"))
}

fn load(name: &str) -> Dataset {
    let text =
        std::fs::read_to_string(nist_dir().join(format!("{name}.dat"))).unwrap_or_else(|e| {
            panic!(
                "cannot read {name}.dat in {} ({e}); set SHEETFIT_NIST_DIR to the folder \
                 holding the NIST StRD linear-regression files",
                nist_dir().display()
            )
        });
    let lines: Vec<&str> = text.lines().map(|l| l.trim_end_matches('\r')).collect();
    let certified = line_range(lines[4]);
    let data = line_range(lines[5]);
    let mut params = Vec::new();
    let mut residual_sd = f64::NAN;
    let mut r_squared = f64::NAN;
    for line in &lines[certified.0 - 1..certified.1] {
        let words: Vec<&str> = line.split_whitespace().collect();
        match words.as_slice() {
            [b, est, sd] if b.starts_with('B') && b[1..].parse::<u32>().is_ok() => {
                params.push((number(est), number(sd)));
            }
            ["Standard", "Deviation", v] => residual_sd = number(v),
            ["R-Squared", v] => r_squared = number(v),
            _ => {}
        }
    }
    let header = lines[..data.0 - 1]
        .iter()
        .rev()
        .find(|l| l.trim_start().starts_with("Data:"))
        .expect("a Data: line before the data");
    let names = header
        .split_whitespace()
        .skip(1)
        .map(String::from)
        .collect();
    let rows = lines[data.0 - 1..data.1]
        .iter()
        .map(|l| l.split_whitespace().map(number).collect())
        .collect();
    Dataset {
        params,
        residual_sd,
        r_squared,
        names,
        rows,
    }
}

/// The reference condition number of dataset `name`, from the fixture
/// tests/fixtures/nist-condition.json (read once per test run).
fn reference_condition_number(name: &str) -> f64 {
    static FIXTURE: OnceLock<serde_json::Value> = OnceLock::new();
    let fixture = FIXTURE.get_or_init(|| {
        read_json(
            &PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/nist-condition.json"),
        )
    });
    fixture["condition_numbers"][name]
        .as_f64()
        .unwrap_or_else(|| panic!("no condition number for {name} in nist-condition.json"))
}

/// Relative tolerance on the condition number. The tool computes it from
/// its R factor in double precision, which determines the smallest singular
/// value only to about eps·κ relative; Filip's κ ≈ 5e9 leaves about 6
/// correct digits.
const CONDITION_TOL: f64 = 1e-6;

/// Writes the data to a workbook and a job whose model is `terms` (TOML
/// lines), runs it and returns the model's JSON.
fn run(name: &str, data: &Dataset, terms: &str) -> serde_json::Value {
    let scratch = Scratch::new();
    let mut rows = vec![data
        .names
        .iter()
        .map(|n| Cell::S(n.clone()))
        .collect::<Vec<_>>()];
    rows.extend(
        data.rows
            .iter()
            .map(|r| r.iter().map(|v| Cell::N(*v)).collect()),
    );
    scratch.workbook("data.xlsx", &[("data", rows)]);
    scratch.write(
        "job.toml",
        &format!(
            "title = \"NIST StRD {name}\"\n[input]\nworkbook = \"data.xlsx\"\n\
             [output]\nworkbook = \"out/report.xlsx\"\n\
             [[model]]\nname = \"{name}\"\nresponse = \"y\"\n{terms}\n"
        ),
    );
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    assert!(out.status.success(), "{}", common::stderr(&out));
    assert!(scratch.path("out/report.xlsx").is_file());
    read_json(&scratch.path("out/report.json"))["models"][0].clone()
}

/// The bar: correct significant digits on every certified value.
const MIN_LRE: f64 = 10.0;

/// Checks every certified value at LRE ≥ [`MIN_LRE`] and prints the LRE
/// table; returns the minimum.
fn assert_certified(name: &str, data: &Dataset, model: &serde_json::Value) -> f64 {
    let coefs = model["coefficients"].as_array().expect("coefficients");
    assert_eq!(
        coefs.len(),
        data.params.len(),
        "{name}: coefficient count (aliased: {})",
        model["aliased"]
    );
    let mut worst = f64::INFINITY;
    let mut check = |what: String, got: f64, certified: f64| {
        let l = lre(got, certified);
        println!(
            "{name:<10} {what:<22} got {got:>24.15e} certified {certified:>24.15e} LRE {l:5.1}"
        );
        assert!(
            l >= MIN_LRE,
            "{name} {what}: LRE {l:.1} < {MIN_LRE} (got {got}, certified {certified})"
        );
        worst = worst.min(l);
    };
    for (k, (c, (est, sd))) in coefs.iter().zip(&data.params).enumerate() {
        check(
            format!("B{k} estimate"),
            c["estimate"].as_f64().unwrap(),
            *est,
        );
        check(
            format!("B{k} standard error"),
            c["std_error"].as_f64().unwrap(),
            *sd,
        );
    }
    check(
        "residual SD".into(),
        model["fit"]["sigma"].as_f64().unwrap(),
        data.residual_sd,
    );
    check(
        "R-squared".into(),
        model["fit"]["r_squared"].as_f64().unwrap(),
        data.r_squared,
    );
    // Source: mpmath at 50 digits (tests/fixtures/nist-condition.json, made
    // by tests/reference/make_condition_reference.py).
    let kappa = model["fit"]["condition_number"]
        .as_f64()
        .unwrap_or_else(|| panic!("{name}: no condition number in {}", model["fit"]));
    let reference = reference_condition_number(name);
    let error = ((kappa - reference) / reference).abs();
    println!(
        "{name:<10} condition number       got {kappa:>24.15e} reference {reference:>24.15e} \
         relative error {error:.1e}"
    );
    assert!(
        error <= CONDITION_TOL,
        "{name} condition number: got {kappa}, reference {reference}, relative error \
         {error:.2e} > {CONDITION_TOL:e}"
    );
    println!(
        "{name:<10} minimum LRE {worst:.1} (condition number {:.2e}, {} precision)",
        model["fit"]["condition_number"]
            .as_f64()
            .unwrap_or(f64::NAN),
        model["fit"]["precision"].as_str().unwrap_or("?")
    );
    worst
}

/// Loads, runs and checks one dataset.
fn certify(name: &str, terms: &str) {
    let data = load(name);
    let model = run(name, &data, terms);
    assert_certified(name, &data, &model);
}

#[test]
fn norris_meets_certified_values() {
    certify("Norris", r#"numeric = ["x"]"#);
}

#[test]
fn pontius_meets_certified_values() {
    certify("Pontius", "poly = { x = 2 }");
}

#[test]
fn noint1_meets_certified_values() {
    certify("NoInt1", "numeric = [\"x\"]\nintercept = false");
}

#[test]
fn noint2_meets_certified_values() {
    certify("NoInt2", "numeric = [\"x\"]\nintercept = false");
}

#[test]
fn filip_meets_certified_values() {
    certify("Filip", "poly = { x = 10 }");
}

#[test]
fn longley_meets_certified_values() {
    certify(
        "Longley",
        r#"numeric = ["x1", "x2", "x3", "x4", "x5", "x6"]"#,
    );
}

#[test]
fn wampler1_meets_certified_values() {
    certify("Wampler1", "poly = { x = 5 }");
}

#[test]
fn wampler2_meets_certified_values() {
    certify("Wampler2", "poly = { x = 5 }");
}

#[test]
fn wampler3_meets_certified_values() {
    certify("Wampler3", "poly = { x = 5 }");
}

#[test]
fn wampler4_meets_certified_values() {
    certify("Wampler4", "poly = { x = 5 }");
}

#[test]
fn wampler5_meets_certified_values() {
    certify("Wampler5", "poly = { x = 5 }");
}

#[test]
fn certified_files_are_parsed_completely() {
    // The parser itself, against the counts in the table of
    // tests/data/nist-strd/README.md (n and p per file).
    for (name, n, p) in [
        ("Norris", 36, 2),
        ("Pontius", 40, 3),
        ("NoInt1", 11, 1),
        ("NoInt2", 3, 1),
        ("Filip", 82, 11),
        ("Longley", 16, 7),
        ("Wampler1", 21, 6),
        ("Wampler2", 21, 6),
        ("Wampler3", 21, 6),
        ("Wampler4", 21, 6),
        ("Wampler5", 21, 6),
    ] {
        let d = load(name);
        assert_eq!(d.rows.len(), n, "{name} rows");
        assert_eq!(d.params.len(), p, "{name} parameters");
        assert!(
            d.residual_sd.is_finite() && d.r_squared.is_finite(),
            "{name}"
        );
    }
}
