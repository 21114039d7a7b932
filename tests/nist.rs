//! Certified accuracy: NIST StRD linear-regression datasets run through the
//! whole path (data in a workbook, a job file, the binary, the results JSON).
//!
//! Source of every expected value: the certified values inside the NIST
//! StRD files in ../shared/reference/nist-strd/ (NIST Statistical Reference
//! Datasets, Linear Least Squares Regression), parsed from the files here,
//! never retyped. The measure is the log relative error (LRE), the number of
//! correct significant digits; the bar is at least 9 on every coefficient,
//! standard error, residual standard deviation and R².

mod common;

use std::path::PathBuf;

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

/// The StRD files: `SHEETFIT_NIST_DIR` when set, else the project's shared
/// reference folder beside the checkout.
fn nist_dir() -> PathBuf {
    std::env::var_os("SHEETFIT_NIST_DIR").map_or_else(
        || PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../shared/reference/nist-strd"),
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

/// A column computed from a data row (y first), with its name.
type Derived = (&'static str, fn(&[f64]) -> f64);

/// Writes the data (plus `extra` derived columns) to a workbook, a job for
/// `predictors`, runs it and returns the model's JSON.
fn run(
    name: &str,
    data: &Dataset,
    extra: &[Derived],
    predictors: &[&str],
    intercept: bool,
) -> serde_json::Value {
    let scratch = Scratch::new();
    let names: Vec<&'static str> = data
        .names
        .iter()
        .map(|n| &*Box::leak(n.clone().into_boxed_str()))
        .chain(extra.iter().map(|(n, _)| *n))
        .collect();
    let mut rows = vec![names.iter().map(|n| Cell::T(n)).collect::<Vec<_>>()];
    for r in &data.rows {
        let mut row: Vec<Cell> = r.iter().map(|v| Cell::N(*v)).collect();
        row.extend(extra.iter().map(|(_, f)| Cell::N(f(r))));
        rows.push(row);
    }
    scratch.workbook("data.xlsx", &[("data", rows)]);
    let numeric = predictors
        .iter()
        .map(|p| format!("\"{p}\""))
        .collect::<Vec<_>>()
        .join(", ");
    scratch.write(
        "job.toml",
        &format!(
            "title = \"NIST StRD {name}\"\n[input]\nworkbook = \"data.xlsx\"\n\
             [output]\nworkbook = \"out/report.xlsx\"\n\
             [[model]]\nname = \"{name}\"\nresponse = \"y\"\nnumeric = [{numeric}]\n\
             intercept = {intercept}\n"
        ),
    );
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    assert!(out.status.success(), "{}", common::stderr(&out));
    assert!(scratch.path("out/report.xlsx").is_file());
    read_json(&scratch.path("out/report.json"))["models"][0].clone()
}

/// Checks every certified value at LRE ≥ 9 and prints the LRE table.
fn assert_certified(name: &str, data: &Dataset, model: &serde_json::Value) {
    let coefs = model["coefficients"].as_array().expect("coefficients");
    assert_eq!(coefs.len(), data.params.len(), "{name}: coefficient count");
    let mut worst = f64::INFINITY;
    let mut check = |what: String, got: f64, certified: f64| {
        let l = lre(got, certified);
        println!(
            "{name:<10} {what:<22} got {got:>24.15e} certified {certified:>24.15e} LRE {l:5.1}"
        );
        assert!(
            l >= 9.0,
            "{name} {what}: LRE {l:.1} < 9 (got {got}, certified {certified})"
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
    println!("{name:<10} minimum LRE {worst:.1}");
}

#[test]
fn norris_meets_certified_values() {
    let data = load("Norris");
    let model = run("Norris", &data, &[], &["x"], true);
    assert_certified("Norris", &data, &model);
}

#[test]
fn pontius_meets_certified_values() {
    let data = load("Pontius");
    // x² of these integers (up to 3e6) is exact in double precision.
    let model = run(
        "Pontius",
        &data,
        &[("x2", |r| r[1] * r[1])],
        &["x", "x2"],
        true,
    );
    assert_certified("Pontius", &data, &model);
}

#[test]
fn noint1_meets_certified_values() {
    let data = load("NoInt1");
    let model = run("NoInt1", &data, &[], &["x"], false);
    assert_certified("NoInt1", &data, &model);
}

#[test]
fn noint2_meets_certified_values() {
    let data = load("NoInt2");
    let model = run("NoInt2", &data, &[], &["x"], false);
    assert_certified("NoInt2", &data, &model);
}

#[test]
fn longley_meets_certified_values() {
    let data = load("Longley");
    let model = run(
        "Longley",
        &data,
        &[],
        &["x1", "x2", "x3", "x4", "x5", "x6"],
        true,
    );
    assert_certified("Longley", &data, &model);
}

#[test]
fn certified_files_are_parsed_completely() {
    // The parser itself, against the counts the files' headers state
    // (../shared/reference/nist-strd/README.md table: n and p).
    for (name, n, p) in [
        ("Norris", 36, 2),
        ("Pontius", 40, 3),
        ("NoInt1", 11, 1),
        ("NoInt2", 3, 1),
        ("Longley", 16, 7),
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
