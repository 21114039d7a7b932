//! One model's results: coefficients, tests, checks, per-row diagnostics,
//! forecast and back-test, as the report shows them.

use serde::Serialize;

use crate::checks::{
    assumption_checks,
    collinearity::{collinearity, TermCollinearity},
    collinearity_checks, condition_check, each_term_last_anova, influence_check, robust_check,
    sequential_anova, AnovaRow, Check, RowTable,
};
use crate::compare::DroppedTerm;
use crate::design::{Design, TermKind};
use crate::fit::{Coefficient, Fit, FitQuality};
use crate::forecast::{Backtest, ForecastRow, ForecastTotal, ScenarioRow};
use crate::job::{Baseline, ModelSpec};
use crate::period::Frequency;
use crate::results::ar1::Ar1Results;
use crate::text::significant;

/// How a categorical predictor's baseline was chosen, for the report.
#[derive(Debug, Clone, Serialize)]
pub struct BaselineNote {
    /// The categorical column.
    pub column: String,
    /// The baseline level: each indicator compares its level with this one.
    pub level: String,
    /// Why this level: `given in the job` or `first level in sorted order`.
    pub reason: String,
    /// All levels in the rows used, sorted.
    pub levels: Vec<String>,
    /// Whether every level has its own coefficient, the baseline's
    /// included (the first factor of a model without an intercept): each
    /// coefficient is then that level's own level, and the baseline serves
    /// only the term's interactions.
    pub every_level: bool,
    /// Whether the term enters an interaction, where its levels are always
    /// compared with the baseline.
    pub in_interactions: bool,
}

/// The level a model fitted by level (`by`) was fitted to.
#[derive(Debug, Clone, Serialize)]
pub struct ByLevel {
    /// The job's model.
    pub model: String,
    /// The `by` column.
    pub column: String,
    /// The level.
    pub level: String,
}

/// A level of a model fitted by level that could not be fitted, and why.
#[derive(Debug, Clone, Serialize)]
pub struct SkippedLevel {
    /// The job's model.
    pub model: String,
    /// The `by` column.
    pub column: String,
    /// The level.
    pub level: String,
    /// Its rows in the sheet.
    pub rows: usize,
    /// Why it was not fitted, as the error says.
    pub reason: String,
}

/// The periods of a model with a date column.
#[derive(Debug, Clone, Serialize)]
pub struct TimingNote {
    /// The date column.
    pub column: String,
    /// The frequency.
    pub frequency: Frequency,
    /// Whether the frequency was told from the data (else the job set it).
    pub detected: bool,
    /// First period in the data (trend index 1).
    pub first: String,
    /// Last period in the data.
    pub last: String,
    /// Number of distinct periods.
    pub periods: usize,
    /// Whether several rows share a period (panel data).
    pub panel: bool,
}

/// One period of a model's history, on the response's own scale, as the
/// forecast chart draws it.
#[derive(Debug, Clone, Serialize)]
pub struct HistoryPoint {
    /// Period label.
    pub period: String,
    /// First day of the period, ISO 8601.
    pub date: String,
    /// Rows in the period.
    pub rows: usize,
    /// Mean of the actual values of the period's rows.
    pub actual: f64,
    /// Mean of their fitted values (with a log response: of exp(fitted),
    /// the fitted medians).
    pub fitted: f64,
}

/// One point of the normal quantile plot.
#[derive(Debug, Clone, Serialize)]
pub struct NormalPoint {
    /// Expected standard normal quantile Φ⁻¹((i − 3/8)/(n + 1/4)) of the
    /// i-th smallest of n values (Blom 1958).
    pub normal_quantile: f64,
    /// The i-th smallest standardized residual.
    pub standardized_residual: f64,
}

/// One model's results.
#[derive(Debug, Clone, Serialize)]
pub struct ModelResults {
    /// Model name from the job (with the level for a model fitted by
    /// level: "name [level]").
    pub name: String,
    /// For a model fitted by level: the job's model, the column and the
    /// level.
    pub by: Option<ByLevel>,
    /// Response column.
    pub response: String,
    /// The response's number format in the input (a currency, thousands
    /// separators), when the workbook gives it one.
    pub response_number_format: Option<String>,
    /// Whether an intercept was fitted.
    pub intercept: bool,
    /// `HC3` or `HC1` when the coefficients' standard errors are
    /// heteroscedasticity-consistent; absent for the classical ones.
    pub standard_errors: Option<String>,
    /// The same in words with its lag count, as the coefficient sheet
    /// names it: "HAC (Newey-West, 4 lags)".
    #[serde(skip)]
    pub standard_errors_described: Option<String>,
    /// With HAC standard errors: the Newey-West lags used.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub hac_lags: Option<u32>,
    /// `log` when the model was fitted to the natural log of the response.
    pub transform: Option<String>,
    /// The weights column, for a weighted least squares fit.
    pub weights: Option<String>,
    /// With weights: the weight a new row (forecast or scenario) takes in
    /// its prediction interval.
    pub new_row_weight: Option<f64>,
    /// The periods, when the model has a date column.
    pub timing: Option<TimingNote>,
    /// Confidence level of every interval.
    pub confidence: f64,
    /// Rows used.
    pub n: usize,
    /// Model degrees of freedom.
    pub df_model: usize,
    /// Residual degrees of freedom.
    pub df_resid: usize,
    /// Sheet rows left out for a blank in a used column (or, with lags,
    /// for a lag reaching a period without a value).
    pub dropped_rows: Vec<u32>,
    /// Whether the model has lagged terms, so rows may be left out for a
    /// lag without a value.
    #[serde(skip)]
    pub has_lags: bool,
    /// Baseline of each categorical predictor.
    pub baselines: Vec<BaselineNote>,
    /// How the derived terms (logs, lags, events, Fourier seasons) are
    /// formed and read, in words.
    pub term_notes: Vec<String>,
    /// Coefficients left out as perfect combinations of earlier ones.
    pub aliased: Vec<String>,
    /// The fitted equation written out with its numbers.
    pub equation: String,
    /// Estimated coefficients.
    pub coefficients: Vec<Coefficient>,
    /// The mean and standard deviation of each estimated coefficient's
    /// design column over the rows used (on the rows' own scale with
    /// weights), for the summary's ranking of effects.
    #[serde(skip)]
    pub column_spread: Vec<ColumnSpread>,
    /// Overall fit statistics.
    pub fit: FitQuality,
    /// Sequential ANOVA, terms in model order, then the residual row.
    pub anova: Vec<AnovaRow>,
    /// Each term tested given all the others (joint F test per factor).
    pub term_tests: Vec<AnovaRow>,
    /// Model checks, each with its rule and verdict.
    pub checks: Vec<Check>,
    /// (Generalized) variance inflation factor of each term.
    pub collinearity: Vec<TermCollinearity>,
    /// Per-row residuals and influence.
    pub residuals: RowTable,
    /// The standardized residuals, sorted, against their normal quantiles;
    /// past [`NORMAL_PLOT_POINTS`] residuals, the points of a fixed set of
    /// ranks (see [`plotted_ranks`]).
    pub normal_plot: Vec<NormalPoint>,
    /// Per-period means of actual and fitted values, for models with a
    /// date column.
    pub history: Vec<HistoryPoint>,
    /// For panel data of at most [`SERIES_LINES_UP_TO`] series: each
    /// series' own history, which the forecast chart draws as a line per
    /// series.
    pub series_history: Vec<SeriesHistory>,
    /// Forecast rows, empty when the job asks for none.
    pub forecast: Vec<ForecastRow>,
    /// Scenario predictions, empty when the job asks for none.
    pub scenarios: Vec<ScenarioRow>,
    /// For panel data named by `series`: each forecast period's total over
    /// the series, with its intervals (none with a log response).
    pub forecast_totals: Vec<ForecastTotal>,
    /// The back-test, when the job asks for one.
    pub backtest: Option<Backtest>,
    /// The What-if sheet's recipe, or why the model has none.
    #[serde(skip)]
    pub what_if: Result<super::whatif::WhatIf, String>,
    /// The model refitted with AR(1) errors, when the job asks for it or
    /// the residuals' autocorrelation calls for it.
    pub ar1_errors: Option<Ar1Results>,
    /// For a suggested model: the model it was reduced from.
    pub suggested_from: Option<String>,
    /// For a suggested model: the terms dropped, in order.
    pub dropped_terms: Vec<DroppedTerm>,
}

/// Computes every reported number for one fitted model, with its forecast
/// rows and back-test computed by the caller.
pub fn analyse(
    spec: &ModelSpec,
    design: &Design,
    fit: &Fit,
    forecast: Vec<ForecastRow>,
    backtest: Option<Backtest>,
) -> ModelResults {
    // The checks' auxiliary regressions come first, so that their working
    // columns are let go before the per-row table is copied out.
    let collinearity = if design.weights.is_some() {
        Vec::new()
    } else {
        collinearity(design, &fit.solution.kept)
    };
    let mut checks = assumption_checks(design, fit);
    let column_spread = column_spread(design, fit);
    let what_if = super::whatif::what_if(spec, design, fit, &forecast, &column_spread);
    let residuals = RowTable::of(design, fit);
    checks.extend([condition_check(fit), influence_check(&residuals)]);
    checks.extend(robust_check(design, fit));
    checks.extend(collinearity_checks(design, &collinearity));
    let normal_plot = normal_plot(residuals.iter().filter_map(|d| d.standardized_residual));
    let baselines = design
        .terms
        .iter()
        .enumerate()
        .filter_map(|(k, t)| match &t.kind {
            TermKind::Categorical {
                baseline,
                chosen,
                levels,
                every_level,
            } => Some(BaselineNote {
                column: t.name.clone(),
                level: baseline.clone(),
                reason: match chosen {
                    Baseline::Given(_) => "given in the job".into(),
                    Baseline::FirstSorted => "first level in sorted order".into(),
                },
                levels: levels.clone(),
                every_level: *every_level,
                in_interactions: !design.interaction_columns_of(k).is_empty(),
            }),
            TermKind::Season {
                by,
                baseline,
                given,
                every_level,
            } => Some(BaselineNote {
                column: "season".into(),
                level: by.labels()[*baseline as usize - 1].to_string(),
                reason: if *given {
                    "given in the job".into()
                } else {
                    "the first season".into()
                },
                levels: by.labels().iter().map(|l| l.to_string()).collect(),
                every_level: *every_level,
                in_interactions: false,
            }),
            _ => None,
        })
        .collect();
    ModelResults {
        name: spec.name.clone(),
        by: None,
        response: spec.response.clone(),
        response_number_format: None,
        intercept: spec.intercept,
        transform: design.log_response.then(|| "log".to_string()),
        weights: spec.weights.clone(),
        new_row_weight: spec.weights.as_ref().map(|_| spec.new_row_weight),
        standard_errors: fit.standard_errors.map(|k| k.label().to_string()),
        standard_errors_described: fit.standard_errors.map(|k| k.describe()),
        hac_lags: match fit.standard_errors {
            Some(crate::job::Robust::Hac(lags)) => lags,
            _ => None,
        },
        timing: design.timing.as_ref().map(|t| TimingNote {
            column: t.column.clone(),
            frequency: t.frequency,
            detected: t.detected,
            first: t.first.to_string(),
            last: t.last().to_string(),
            periods: t
                .periods
                .iter()
                .collect::<std::collections::BTreeSet<_>>()
                .len(),
            panel: t.panel,
        }),
        confidence: fit.confidence,
        n: fit.n,
        df_model: fit.df_model,
        df_resid: fit.df_resid,
        dropped_rows: design.dropped.clone(),
        has_lags: design
            .terms
            .iter()
            .any(|t| matches!(t.kind, TermKind::Lag { .. })),
        baselines,
        term_notes: super::terms::term_notes(design, fit),
        aliased: fit.aliased.clone(),
        equation: equation(
            &if design.log_response {
                format!("ln({})", spec.response)
            } else {
                spec.response.clone()
            },
            &fit.coefficients,
        ),
        coefficients: fit.coefficients.clone(),
        column_spread,
        fit: fit.quality.clone(),
        anova: sequential_anova(design, fit),
        term_tests: each_term_last_anova(design, fit),
        checks,
        collinearity,
        residuals,
        normal_plot,
        history: history(design, fit),
        series_history: series_history(design, fit),
        forecast,
        scenarios: Vec::new(),
        forecast_totals: Vec::new(),
        what_if,
        backtest,
        ar1_errors: None,
        suggested_from: None,
        dropped_terms: Vec::new(),
    }
}

/// The mean and standard deviation of a design column.
#[derive(Debug, Clone, Copy)]
pub struct ColumnSpread {
    /// Mean over the rows used.
    pub mean: f64,
    /// Standard deviation (n − 1 divisor).
    pub sd: f64,
}

/// [`ColumnSpread`] of each estimated coefficient's column.
fn column_spread(design: &Design, fit: &Fit) -> Vec<ColumnSpread> {
    fit.solution
        .kept
        .iter()
        .map(|&j| {
            let values: Vec<f64> = design
                .x
                .column(j)
                .iter()
                .enumerate()
                .map(|(i, &v)| design.unscaled(i, v))
                .collect();
            let n = values.len().max(2) as f64;
            let mean = values.iter().sum::<f64>() / values.len().max(1) as f64;
            let ss: f64 = values.iter().map(|v| (v - mean).powi(2)).sum();
            ColumnSpread {
                mean,
                sd: (ss / (n - 1.0)).sqrt(),
            }
        })
        .collect()
}

/// Points a normal quantile plot holds at most; each statistic still uses
/// every row.
pub const NORMAL_PLOT_POINTS: usize = 2_000;

/// Ranks kept at each end of a sampled normal plot, where departures from
/// normality show.
const NORMAL_PLOT_TAIL: usize = 100;

/// The ranks (0-based, ascending) a plot of `n` sorted values shows: all of
/// them up to `limit`; past it the `tail` lowest and highest, and ranks
/// evenly spaced between them, `limit` in all.
pub fn plotted_ranks(n: usize, limit: usize, tail: usize) -> Vec<usize> {
    if n <= limit {
        return (0..n).collect();
    }
    let middle = limit - 2 * tail;
    let inner = n - 2 * tail;
    (0..tail)
        .chain((0..middle).map(|k| tail + k * inner / middle))
        .chain(n - tail..n)
        .collect()
}

/// The standardized residuals sorted against Blom's normal scores
/// Φ⁻¹((i − 3/8)/(n + 1/4)) (Blom 1958), at the ranks of [`plotted_ranks`].
fn normal_plot(standardized: impl Iterator<Item = f64>) -> Vec<NormalPoint> {
    let mut r: Vec<f64> = standardized.collect();
    r.sort_by(f64::total_cmp);
    let n = r.len() as f64;
    let Ok(normal) = statrs::distribution::Normal::new(0.0, 1.0) else {
        return Vec::new();
    };
    plotted_ranks(r.len(), NORMAL_PLOT_POINTS, NORMAL_PLOT_TAIL)
        .into_iter()
        .map(|i| NormalPoint {
            normal_quantile: statrs::distribution::ContinuousCDF::inverse_cdf(
                &normal,
                (i as f64 + 1.0 - 0.375) / (n + 0.25),
            ),
            standardized_residual: r[i],
        })
        .collect()
}

/// Per-period means of the actual and fitted values, back on the
/// response's scale (exp for a log response).
/// Most series the forecast chart draws a line for; past it, it draws
/// their total with its interval.
pub const SERIES_LINES_UP_TO: usize = 8;

/// One series' history, for the forecast chart.
#[derive(Debug, Clone, Serialize)]
pub struct SeriesHistory {
    /// The series' label.
    pub series: String,
    /// Its periods, one row each.
    pub points: Vec<HistoryPoint>,
}

/// Each series' actual and fitted values by period, when the model has
/// from 2 to [`SERIES_LINES_UP_TO`] series.
fn series_history(design: &Design, fit: &Fit) -> Vec<SeriesHistory> {
    let (Some(timing), Some(series)) = (&design.timing, &design.series) else {
        return Vec::new();
    };
    if !(2..=SERIES_LINES_UP_TO).contains(&series.labels.len()) {
        return Vec::new();
    }
    let back = |v: f64| if design.log_response { v.exp() } else { v };
    series
        .labels
        .iter()
        .zip(0u32..)
        .map(|(label, code)| SeriesHistory {
            series: label.clone(),
            points: (0..timing.periods.len())
                .filter(|&i| series.of_row[i] == code)
                .map(|i| {
                    let period = timing.periods[i];
                    HistoryPoint {
                        period: period.to_string(),
                        date: period.start().to_string(),
                        rows: 1,
                        actual: back(design.unscaled(i, design.y[i])),
                        fitted: back(fit.fitted[i]),
                    }
                })
                .collect(),
        })
        .collect()
}

fn history(design: &Design, fit: &Fit) -> Vec<HistoryPoint> {
    let Some(timing) = &design.timing else {
        return Vec::new();
    };
    let back = |v: f64| if design.log_response { v.exp() } else { v };
    let mut out: Vec<HistoryPoint> = Vec::new();
    // Rows are in period order, so each period's rows are contiguous.
    let mut start = 0;
    while start < timing.periods.len() {
        let period = timing.periods[start];
        let end = (start..timing.periods.len())
            .find(|&i| timing.periods[i] != period)
            .unwrap_or(timing.periods.len());
        let n = (end - start) as f64;
        out.push(HistoryPoint {
            period: period.to_string(),
            date: period.start().to_string(),
            rows: end - start,
            actual: (start..end)
                .map(|i| back(design.unscaled(i, design.y[i])))
                .sum::<f64>()
                / n,
            fitted: (start..end).map(|i| back(fit.fitted[i])).sum::<f64>() / n,
        });
        start = end;
    }
    out
}

/// "revenue = 12.3 + 0.0451 × floor_area − 4.2 × region[East]", numbers to
/// four significant digits.
pub fn equation(response: &str, coefficients: &[Coefficient]) -> String {
    let mut out = format!("{response} =");
    for (i, c) in coefficients.iter().enumerate() {
        let value = significant(c.estimate.abs(), 4);
        let sign = if c.estimate < 0.0 { "−" } else { "+" };
        let body = if c.term == "Intercept" {
            value
        } else {
            format!("{value} × {}", c.term)
        };
        if i == 0 {
            let lead = if c.estimate < 0.0 { "−" } else { "" };
            out.push_str(&format!(" {lead}{body}"));
        } else {
            out.push_str(&format!(" {sign} {body}"));
        }
    }
    if coefficients.is_empty() {
        out.push_str(" 0");
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn coef(term: &str, estimate: f64) -> Coefficient {
        Coefficient {
            term: term.into(),
            estimate,
            std_error: 1.0,
            t_stat: None,
            p_value: None,
            ci_lower: 0.0,
            ci_upper: 0.0,
        }
    }

    #[test]
    fn equation_writes_signs_and_terms() {
        let eq = equation(
            "revenue",
            &[
                coef("Intercept", 12.345),
                coef("floor_area", 0.045123),
                coef("region[East]", -4.2),
            ],
        );
        assert_eq!(
            eq,
            "revenue = 12.35 + 0.04512 × floor_area − 4.200 × region[East]"
        );
        assert_eq!(equation("y", &[coef("x", -2.0)]), "y = −2.000 × x");
    }

    #[test]
    fn plotted_ranks_keep_both_tails_and_space_the_middle() {
        assert_eq!(plotted_ranks(5, 10, 2), vec![0, 1, 2, 3, 4]);
        // Two ranks at each end, then 6 spaced 996/6 = 166 apart from rank 2.
        let ranks = plotted_ranks(1_000, 10, 2);
        assert_eq!(ranks, vec![0, 1, 2, 168, 334, 500, 666, 832, 998, 999]);
    }

    #[test]
    fn normal_plot_uses_blom_scores() {
        // Φ⁻¹((i − 3/8)/(n + 1/4)) for n = 5 from scipy 1.17.1
        // (scipy.stats.norm.ppf): ±1.1797611176118612, ±0.49720057068155404, 0.
        let plot = normal_plot([0.3, -1.0, 2.0, 0.0, -0.2].into_iter());
        let expected = [
            -1.1797611176118612,
            -0.49720057068155404,
            0.0,
            0.49720057068155404,
            1.1797611176118612,
        ];
        for (p, q) in plot.iter().zip(expected) {
            assert!(
                (p.normal_quantile - q).abs() < 1e-14,
                "{} vs {q}",
                p.normal_quantile
            );
        }
        let sorted: Vec<f64> = plot.iter().map(|p| p.standardized_residual).collect();
        assert_eq!(sorted, vec![-1.0, -0.2, 0.0, 0.3, 2.0]);
    }
}
