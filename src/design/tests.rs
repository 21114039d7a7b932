//! Unit tests of the design stage: building designs from small tables.

use super::*;
use crate::job::{Baseline, CategoricalSpec};
use std::path::PathBuf;

fn table() -> Table {
    let col = |name: &str, col: u32, values: Vec<Value>| Column {
        name: name.into(),
        col,
        values: values.into_iter().collect(),
    };
    let n = |x: f64| Value::Number(x);
    let t = Value::text;
    Table {
        path: PathBuf::from("d.xlsx"),
        sheet: "records".into(),
        header_row: 1,
        formulas: Vec::new(),
        rows: vec![2, 3, 4, 5, 6],
        columns: vec![
            col("y", 0, vec![n(1.0), n(2.0), Value::Blank, n(4.0), n(5.0)]),
            col("x", 1, vec![n(1.0), n(2.0), n(3.0), n(4.0), n(6.0)]),
            col("region", 2, vec![t("S"), t("N"), t("N"), t("W"), t("S")]),
        ],
    }
}

fn spec(numeric: &[&str], categorical: &[(&str, Baseline)]) -> ModelSpec {
    ModelSpec {
        numeric: numeric.iter().map(|s| s.to_string()).collect(),
        categorical: categorical
            .iter()
            .map(|(c, b)| CategoricalSpec {
                column: c.to_string(),
                baseline: b.clone(),
            })
            .collect(),
        ..ModelSpec::plain("y")
    }
}

#[test]
fn blank_rows_are_dropped_and_listed() {
    let d = build(&table(), &spec(&["x"], &[])).unwrap();
    assert_eq!(d.rows, vec![2, 3, 5, 6]);
    assert_eq!(d.dropped, vec![4]);
    assert_eq!(d.x.ncols(), 2);
    assert_eq!(d.y.as_slice(), &[1.0, 2.0, 4.0, 5.0]);
}

#[test]
fn indicators_use_treatment_coding_against_the_baseline() {
    let d = build(
        &table(),
        &spec(&[], &[("region", Baseline::Given("S".into()))]),
    )
    .unwrap();
    assert_eq!(d.names, vec!["Intercept", "region[N]", "region[W]"]);
    assert_eq!(d.x.column(1).as_slice(), &[0.0, 1.0, 0.0, 0.0]);
    assert_eq!(d.x.column(2).as_slice(), &[0.0, 0.0, 1.0, 0.0]);
    assert_eq!(d.terms[1].columns, 1..3);
}

#[test]
fn default_baseline_is_the_first_sorted_level() {
    let d = build(&table(), &spec(&[], &[("region", Baseline::FirstSorted)])).unwrap();
    assert_eq!(d.names, vec!["Intercept", "region[S]", "region[W]"]);
}

#[test]
fn unknown_baseline_lists_the_levels() {
    let err = build(
        &table(),
        &spec(&[], &[("region", Baseline::Given("E".into()))]),
    )
    .unwrap_err();
    assert_eq!(
        err.to_string(),
        "model 'm': baseline 'E' is not a level of column 'region' in the rows used; \
         its levels are: 'N', 'S', 'W'"
    );
}

#[test]
fn no_usable_rows_names_the_columns() {
    let mut t = table();
    t.columns[1].values = vec![Value::Blank; 5].into_iter().collect();
    let err = build(&t, &spec(&["x"], &[])).unwrap_err();
    assert_eq!(
        err.to_string(),
        "model 'm': no usable rows in sheet 'records' of d.xlsx: every row has a blank \
         cell in at least one of the columns 'y', 'x'"
    );
}

#[test]
fn unknown_column_suggests_the_closest() {
    let err = build(&table(), &spec(&["regoin"], &[])).unwrap_err();
    let msg = err.to_string();
    assert!(
        msg.contains("no column 'regoin' (did you mean 'region'?)"),
        "{msg}"
    );
    assert!(msg.contains("its columns are: 'y', 'x', 'region'"), "{msg}");
}

#[test]
fn text_in_a_numeric_column_names_the_cell() {
    let err = build(&table(), &spec(&["region"], &[])).unwrap_err();
    assert_eq!(
        err.to_string(),
        "model 'm': sheet 'records' of d.xlsx, cell C2 in numeric column 'region' holds \
         text 'S', not a number; correct the cell, clear it to leave the row out, or list \
         the column under `categorical`"
    );
}
