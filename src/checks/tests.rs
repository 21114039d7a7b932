//! Unit tests of the checks stage: ANOVA, influence and the model checks.

use super::*;
use crate::design::build;
use crate::job::{Baseline, CategoricalSpec, ModelSpec};
use crate::source::{Column, Table, Value};
use std::path::PathBuf;

/// One-way layout, three groups of two: y = 1,3 | 4,6 | 10,12.
/// By hand: group means 2, 5, 11, grand mean 6; between-group SS =
/// 2·(16 + 1 + 25) = 84 on 2 df; within SS = 6·1 = 6 on 3 df; F = 21.
fn one_way() -> (Design, Fit) {
    let table = Table {
        path: PathBuf::from("d.csv"),
        sheet: "d.csv".into(),
        header_row: 1,
        formulas: Vec::new(),
        rows: (2..8).collect(),
        columns: vec![
            Column {
                name: "y".into(),
                col: 0,
                values: [1.0, 3.0, 4.0, 6.0, 10.0, 12.0]
                    .map(Value::Number)
                    .into_iter()
                    .collect(),
            },
            Column {
                name: "g".into(),
                col: 1,
                values: ["a", "a", "b", "b", "c", "c"]
                    .map(Value::text)
                    .into_iter()
                    .collect(),
            },
        ],
    };
    let spec = ModelSpec {
        categorical: vec![CategoricalSpec {
            column: "g".into(),
            baseline: Baseline::FirstSorted,
        }],
        ..ModelSpec::plain("y")
    };
    let design = build(&table, &spec).unwrap();
    let fit = crate::fit::fit("m", &design, 0.95).unwrap();
    (design, fit)
}

#[test]
fn one_way_anova_matches_the_hand_computation() {
    let (design, fit) = one_way();
    for table in [
        sequential_anova(&design, &fit),
        each_term_last_anova(&design, &fit),
    ] {
        assert_eq!(table[0].df, 2);
        assert!((table[0].sum_sq - 84.0).abs() < 1e-12);
        assert!((table[0].f_stat.unwrap() - 21.0).abs() < 1e-12);
        assert_eq!(table[1].df, 3);
        assert!((table[1].sum_sq - 6.0).abs() < 1e-12);
    }
}

#[test]
fn condition_check_applies_the_thresholds() {
    let (_, mut fit) = one_way();
    for (kappa, flagged, words) in [
        (5.0, false, "no sign"),
        (50.0, true, "moderate"),
        (5e3, true, "strong"),
    ] {
        fit.quality.condition_number = kappa;
        let check = condition_check(&fit);
        assert_eq!(check.flagged, flagged, "{kappa}");
        assert!(check.verdict.starts_with(words), "{}", check.verdict);
    }
}

#[test]
fn cooks_distance_follows_its_definition() {
    let (design, fit) = one_way();
    let rows = RowTable::of(&design, &fit);
    // Each group has two rows, so h = 1/2 everywhere; residuals are ±1,
    // s² = 6/3 = 2; r = 1/(√2·√½) = 1; D = 1·½/(3·½) = 1/3.
    assert_eq!(rows.len(), 6);
    for r in rows.iter() {
        assert!((r.leverage - 0.5).abs() < 1e-12);
        assert!((r.standardized_residual.unwrap().abs() - 1.0).abs() < 1e-12);
        assert!((r.cooks_distance.unwrap() - 1.0 / 3.0).abs() < 1e-12);
    }
}
