//! Comparing the models of one job, and suggesting smaller ones.
//!
//! Two models are *nested* when they explain the same response on the same
//! rows and one's coefficients are a subset of the other's; the partial F
//! test then asks whether the extra coefficients together matter (e.g.
//! Draper & Smith, *Applied Regression Analysis*, 3rd ed., §6.1). Other
//! pairs can only be weighed by AIC and BIC. The suggestion drops, one at a
//! time, the term with the weakest each-term-last (Type II) test while its
//! p-value is above the job's threshold, never a term contained in a
//! remaining interaction (backward elimination; a convenience for the
//! reader, not a replacement for judgement about which drivers belong).

use std::borrow::Cow;

use serde::Serialize;
use sha2::{Digest, Sha256};

use crate::checks::each_term_last_anova;
use crate::design::{Design, TermKind};
use crate::fit::{f_sf, fit, Fit, FitError, FitQuality};

/// The significance threshold of the suggestion when the job sets none.
pub const DEFAULT_THRESHOLD: f64 = 0.05;

/// A fitted model as the comparison sees it: what it explains, on which
/// rows, with which coefficients, and how well. Small enough to keep for
/// every model while the designs themselves are let go.
pub struct Candidate {
    name: String,
    response: String,
    log_response: bool,
    /// SHA-256 of the sheet rows used, sorted: equal exactly when two
    /// models use the same rows (to the digest's collision odds).
    rows: [u8; 32],
    terms: Vec<String>,
    df_resid: usize,
    quality: FitQuality,
}

impl Candidate {
    /// The comparison's view of the model `name` with `design` and `fit`.
    pub fn new(name: &str, design: &Design, fit: &Fit) -> Self {
        let mut rows = design.rows.clone();
        rows.sort_unstable();
        let mut digest = Sha256::new();
        for row in rows {
            digest.update(row.to_le_bytes());
        }
        Candidate {
            name: name.to_string(),
            response: design.response.clone(),
            log_response: design.log_response,
            rows: digest.finalize().into(),
            terms: fit.coefficients.iter().map(|k| k.term.clone()).collect(),
            df_resid: fit.df_resid,
            quality: fit.quality.clone(),
        }
    }
}

/// One pair of models.
#[derive(Debug, Clone, Serialize)]
pub struct Comparison {
    /// The model with fewer coefficients (the first listed when equal).
    pub smaller: String,
    /// The other model.
    pub larger: String,
    /// Whether the smaller is nested in the larger.
    pub nested: bool,
    /// Partial F statistic of the larger model's extra coefficients.
    pub f_stat: Option<f64>,
    /// Its numerator degrees of freedom (the extra coefficients).
    pub df1: Option<usize>,
    /// Its denominator degrees of freedom (the larger model's residual df).
    pub df2: Option<usize>,
    /// P(F > f).
    pub p_value: Option<f64>,
    /// AIC of the larger minus that of the smaller (negative favours the larger).
    pub aic_difference: f64,
    /// BIC of the larger minus that of the smaller.
    pub bic_difference: f64,
    /// The comparison in words.
    pub note: String,
}

/// Pairs of models that are not nested are compared only among the first
/// this many models of a job: past that, AIC and BIC of every model are on
/// the overview and a quadratic list of pairs would say nothing more.
pub const UNNESTED_PAIRS_AMONG: usize = 20;

/// The pairs of a job's models that were compared, and how many were not.
#[derive(Debug, Clone, Default)]
pub struct Comparisons {
    /// The pairs compared.
    pub pairs: Vec<Comparison>,
    /// Pairs left out: not nested, past the first [`UNNESTED_PAIRS_AMONG`]
    /// models.
    pub left_out: usize,
}

/// The pairs of `models` worth comparing: every nested (or identical) pair
/// with its partial F test, and the other pairs among the first
/// [`UNNESTED_PAIRS_AMONG`] models.
pub fn compare(models: &[Candidate]) -> Comparisons {
    let mut out = Vec::new();
    let mut left_out = 0;
    for (i, a) in models.iter().enumerate() {
        for (j, b) in models.iter().enumerate().skip(i + 1) {
            let (small, large) = if b.terms.len() < a.terms.len() {
                (b, a)
            } else {
                (a, b)
            };
            if j < UNNESTED_PAIRS_AMONG || contained(small, large) {
                out.push(pair(small, large));
            } else {
                left_out += 1;
            }
        }
    }
    Comparisons {
        pairs: out,
        left_out,
    }
}

/// Whether `small` explains the same response on the same rows as `large`
/// with a subset of its coefficients (nested, or the same model).
fn contained(small: &Candidate, large: &Candidate) -> bool {
    small.response == large.response
        && small.log_response == large.log_response
        && small.rows == large.rows
        && small.terms.iter().all(|n| large.terms.contains(n))
}

fn pair(small: &Candidate, large: &Candidate) -> Comparison {
    let same_data = small.response == large.response
        && small.log_response == large.log_response
        && small.rows == large.rows;
    let subset = contained(small, large);
    let df1 = small.df_resid.saturating_sub(large.df_resid);
    let nested = same_data && subset && df1 > 0;
    let aic_difference = large.quality.aic - small.quality.aic;
    let bic_difference = large.quality.bic - small.quality.bic;
    let (f_stat, p_value, note) = if nested {
        let q = &large.quality;
        let f = ((small.quality.sse - q.sse) / df1 as f64) / (q.sse / large.df_resid as f64);
        let f = f.is_finite().then_some(f);
        let p = f.and_then(|f| f_sf(f, df1 as f64, large.df_resid as f64));
        let words = match p {
            Some(p) if p < DEFAULT_THRESHOLD => format!(
                "'{}' is nested in '{}': the {df1} extra coefficients together matter (p = {})",
                small.name,
                large.name,
                crate::text::significant(p, 2)
            ),
            Some(p) => format!(
                "'{}' is nested in '{}': the {df1} extra coefficients add little (p = {}); the smaller model may do",
                small.name,
                large.name,
                crate::text::significant(p, 2)
            ),
            None => format!("'{}' is nested in '{}'", small.name, large.name),
        };
        (f, p, words)
    } else if same_data && subset && df1 == 0 {
        (
            None,
            None,
            format!(
                "'{}' and '{}' have the same coefficients: they are the same model",
                small.name, large.name
            ),
        )
    } else {
        let why = if !same_data {
            "different rows or response"
        } else {
            "neither model's coefficients contain the other's"
        };
        (
            None,
            None,
            format!(
                "not nested ({why}): compare by AIC and BIC only (lower is better; AIC differs by {}, BIC by {})",
                crate::text::significant(aic_difference, 3),
                crate::text::significant(bic_difference, 3)
            ),
        )
    };
    Comparison {
        smaller: small.name.to_string(),
        larger: large.name.to_string(),
        nested,
        f_stat,
        df1: nested.then_some(df1),
        df2: nested.then_some(large.df_resid),
        p_value,
        aic_difference,
        bic_difference,
        note,
    }
}

/// A term dropped by the suggestion, with the p-value that let it go.
#[derive(Debug, Clone, Serialize)]
pub struct DroppedTerm {
    /// The term.
    pub term: String,
    /// Its each-term-last p-value when it was dropped.
    pub p_value: f64,
}

/// The smaller model backward elimination arrives at from `design`, when it
/// drops anything: its design, fit and the terms dropped in order.
///
/// # Errors
/// [`FitError`] when a refit fails.
pub fn suggest(
    name: &str,
    design: &Design,
    full: &Fit,
    threshold: f64,
) -> Result<Option<(Design, Fit, Vec<DroppedTerm>)>, FitError> {
    // Borrowed until a term goes, so a model that keeps every term costs
    // no copy of its design. Each step ranks the terms by their Type II
    // tests in double precision, from one factorisation of the current
    // design; only the model the search ends with gets the full fit.
    let mut current = Cow::Borrowed(design);
    let mut dropped = Vec::new();
    loop {
        let tests = match type_two_p_values(&current) {
            Some(tests) => tests,
            None => {
                let current_fit = if dropped.is_empty() {
                    Cow::Borrowed(full)
                } else {
                    Cow::Owned(fit(name, &current, full.confidence)?)
                };
                each_term_last_anova(&current, &current_fit)
                    .iter()
                    .map(|row| row.p_value)
                    .collect()
            }
        };
        let contained: Vec<usize> = current
            .terms
            .iter()
            .flat_map(|t| match t.kind {
                TermKind::Interaction { left, right } => vec![left, right],
                _ => vec![],
            })
            .collect();
        // Entries of `tests` follow the non-intercept terms in order.
        let candidates = current
            .terms
            .iter()
            .enumerate()
            .filter(|(_, t)| t.kind != TermKind::Intercept)
            .zip(&tests)
            .filter(|((k, _), _)| !contained.contains(k))
            .filter_map(|((k, t), p)| p.map(|p| (k, t.name.clone(), p)))
            .filter(|(_, _, p)| *p > threshold)
            .max_by(|a, b| a.2.total_cmp(&b.2));
        let Some((k, term, p_value)) = candidates else {
            break;
        };
        if current.terms.len() <= 1 + usize::from(current.intercept) {
            break;
        }
        current = Cow::Owned(current.without_term(k));
        dropped.push(DroppedTerm { term, p_value });
    }
    if dropped.is_empty() {
        return Ok(None);
    }
    let current = current.into_owned();
    let current_fit = fit(name, &current, full.confidence)?;
    Ok(Some((current, current_fit, dropped)))
}

/// The p-values of the each-term-last (Type II) tests of `design`'s
/// non-intercept terms, in term order, from one double-precision
/// factorisation: dropping the columns S from a full-rank model raises the
/// residual sum of squares by b_Sᵀ V_SS⁻¹ b_S, with V = (XᵀX)⁻¹ (the Wald
/// form of the extra sum of squares; e.g. Seber & Lee, *Linear Regression
/// Analysis*, 2nd ed., §4.5), unchanged by the scaling of the columns.
/// `None` when a column is aliased (dropping a term can make it estimable
/// again, which this form cannot see), so the caller refits instead.
fn type_two_p_values(design: &Design) -> Option<Vec<Option<f64>>> {
    use nalgebra::{DMatrix, DVector};
    let aux = crate::fit::auxiliary_least_squares(&design.x, design.y.as_slice());
    let p = aux.kept.len();
    if p != design.x.ncols() || aux.r.nrows() != p || aux.r.ncols() != p {
        return None;
    }
    let n = design.y.len();
    let df_resid = n.checked_sub(p).filter(|&d| d > 0)?;
    let r_inv = aux.r.clone().try_inverse()?;
    let b = &r_inv * DVector::from_column_slice(&aux.effects[..p]);
    let v = &r_inv * r_inv.transpose();
    let residual_ms = aux.sse / df_resid as f64;
    // The rise in the residual sum of squares when `columns` go.
    let rise = |columns: &[usize]| -> Option<f64> {
        if columns.is_empty() {
            return Some(0.0);
        }
        let m = columns.len();
        let vs = DMatrix::from_fn(m, m, |a, c| v[(columns[a], columns[c])]);
        let bs = DVector::from_fn(m, |a, _| b[columns[a]]);
        let solved = vs.cholesky()?.solve(&bs);
        Some(bs.dot(&solved))
    };
    let tests = design
        .terms
        .iter()
        .enumerate()
        .filter(|(_, t)| t.kind != TermKind::Intercept)
        .map(|(k, term)| {
            let higher = design.interaction_columns_of(k);
            let mut both: Vec<usize> = term.columns.clone().chain(higher.iter().copied()).collect();
            both.sort_unstable();
            both.dedup();
            let df = both.len() - higher.len();
            let sum_sq = (rise(&both)? - rise(&higher)?).max(0.0);
            if df == 0 || residual_ms <= 0.0 {
                return Some(None);
            }
            Some(f_sf(
                sum_sq / df as f64 / residual_ms,
                df as f64,
                df_resid as f64,
            ))
        })
        .collect::<Option<Vec<Option<f64>>>>()?;
    Some(tests)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::design::build;
    use crate::job::{Baseline, CategoricalSpec, ModelSpec};
    use crate::source::{Column, Table, Value};
    use std::path::PathBuf;

    /// A model with a numeric predictor, a three-level factor and their
    /// interaction, on 30 rows of fixed pseudo-random data.
    fn design() -> (Design, Fit) {
        let n = 30;
        let noise = |i: usize| ((i as f64 * 12.9898).sin() * 43_758.545_3).fract() - 0.5;
        let x: Vec<f64> = (0..n)
            .map(|i| (i as f64 * 0.7).sin() * 4.0 + i as f64 / 5.0)
            .collect();
        let z: Vec<f64> = (0..n).map(|i| noise(i + 100) * 3.0).collect();
        let g: Vec<&str> = (0..n).map(|i| ["a", "b", "c"][i % 3]).collect();
        let y: Vec<f64> = (0..n)
            .map(|i| {
                2.0 + 0.8 * x[i] + [0.0, 1.5, -1.0][i % 3] + 0.3 * x[i] * (i % 3) as f64 + noise(i)
            })
            .collect();
        let column = |name: &str, col: u32, values: Vec<Value>| Column {
            name: name.into(),
            col,
            values: values.into_iter().collect(),
        };
        let table = Table {
            path: PathBuf::from("d.csv"),
            sheet: "d.csv".into(),
            header_row: 1,
            formulas: Vec::new(),
            rows: (2..2 + n as u32).collect(),
            columns: vec![
                column("y", 0, y.into_iter().map(Value::Number).collect()),
                column("x", 1, x.into_iter().map(Value::Number).collect()),
                column("z", 2, z.into_iter().map(Value::Number).collect()),
                column("g", 3, g.into_iter().map(Value::text).collect()),
            ],
        };
        let spec = ModelSpec {
            numeric: vec!["x".into(), "z".into()],
            categorical: vec![CategoricalSpec {
                column: "g".into(),
                baseline: Baseline::FirstSorted,
            }],
            interactions: vec![("g".into(), "x".into())],
            ..ModelSpec::plain("y")
        };
        let design = build(&table, &spec).unwrap();
        let fit = crate::fit::fit("m", &design, 0.95).unwrap();
        (design, fit)
    }

    #[test]
    fn type_two_tests_from_one_factorisation_equal_the_refitted_ones() {
        let (design, fit) = design();
        let fast = type_two_p_values(&design).expect("full rank");
        let refitted: Vec<Option<f64>> = each_term_last_anova(&design, &fit)
            .iter()
            .map(|row| row.p_value)
            .collect();
        assert_eq!(fast.len() + 1, refitted.len(), "the residual row");
        for (a, b) in fast.iter().zip(&refitted) {
            let (a, b) = (a.unwrap(), b.unwrap());
            assert!((a - b).abs() <= 1e-10 * b.max(1e-300), "{a} vs {b}");
        }
    }

    #[test]
    fn the_search_drops_the_weak_term_and_keeps_the_interaction() {
        let (design, fit) = design();
        let (smaller, _, dropped) = suggest("m (suggested)", &design, &fit, 0.05)
            .unwrap()
            .expect("z is noise and goes");
        assert_eq!(dropped[0].term, "z");
        assert!(smaller.terms.iter().any(|t| t.name.contains(':')));
    }
}
