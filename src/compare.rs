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

/// Every pair of `models`, nested ones with their partial F test.
pub fn compare(models: &[Candidate]) -> Vec<Comparison> {
    let mut out = Vec::new();
    for (i, a) in models.iter().enumerate() {
        for b in &models[i + 1..] {
            let (small, large) = if b.terms.len() < a.terms.len() {
                (b, a)
            } else {
                (a, b)
            };
            out.push(pair(small, large));
        }
    }
    out
}

fn pair(small: &Candidate, large: &Candidate) -> Comparison {
    let same_data = small.response == large.response
        && small.log_response == large.log_response
        && small.rows == large.rows;
    let subset = small.terms.iter().all(|n| large.terms.contains(n));
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
    // no copy of its design.
    let mut current = Cow::Borrowed(design);
    let mut current_fit = Cow::Borrowed(full);
    let mut dropped = Vec::new();
    loop {
        let tests = each_term_last_anova(&current, &current_fit);
        let contained: Vec<usize> = current
            .terms
            .iter()
            .flat_map(|t| match t.kind {
                TermKind::Interaction { left, right } => vec![left, right],
                _ => vec![],
            })
            .collect();
        // Rows of `tests` follow the non-intercept terms in order.
        let candidates = current
            .terms
            .iter()
            .enumerate()
            .filter(|(_, t)| t.kind != TermKind::Intercept)
            .zip(&tests)
            .filter(|((k, _), _)| !contained.contains(k))
            .filter_map(|((k, t), row)| row.p_value.map(|p| (k, t.name.clone(), p)))
            .filter(|(_, _, p)| *p > threshold)
            .max_by(|a, b| a.2.total_cmp(&b.2));
        let Some((k, term, p_value)) = candidates else {
            break;
        };
        if current.terms.len() <= 1 + usize::from(current.intercept) {
            break;
        }
        current = Cow::Owned(current.without_term(k));
        current_fit = Cow::Owned(fit(name, &current, full.confidence)?);
        dropped.push(DroppedTerm { term, p_value });
    }
    Ok((!dropped.is_empty()).then(|| (current.into_owned(), current_fit.into_owned(), dropped)))
}
