//! What the What-if sheet needs of a model: its inputs (predictor columns
//! and the period), how each design column is formed from them, the
//! coefficients with their classical covariance, and the prediction of the
//! prefilled inputs. The report turns the recipe into live formulas; the
//! prediction here becomes their cached results.

use serde::Serialize;

use super::model::ColumnSpread;
use crate::design::{Design, TermKind};
use crate::fit::{t_quantile, Fit};
use crate::forecast::ForecastRow;
use crate::job::ModelSpec;
use crate::period::{Frequency, SeasonBy};

/// One input cell of the What-if sheet.
#[derive(Debug, Clone, Serialize)]
pub struct WhatIfInput {
    /// The predictor column, or `period`.
    pub column: String,
    /// What the cell holds.
    pub kind: InputKind,
    /// The prefilled value: a number, a level or an ISO date.
    pub value: String,
}

/// The kind of an input cell.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum InputKind {
    /// A number.
    Number,
    /// A level of a categorical predictor, from a drop-down list.
    Level {
        /// The levels seen in the data.
        levels: Vec<String>,
    },
    /// The first day of a period.
    Period {
        /// The periods' frequency.
        frequency: Frequency,
        /// The first day of the data's first period (trend index 1).
        first: String,
    },
}

/// A factor of a design column's value, in terms of the inputs (indices
/// into [`WhatIf::inputs`]).
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "snake_case", tag = "part")]
pub enum Part {
    /// The input's number.
    Value {
        /// The input.
        input: usize,
    },
    /// 1 when the input holds `level`, else 0.
    Indicator {
        /// The input.
        input: usize,
        /// The level.
        level: String,
    },
    /// ln of the input.
    Ln {
        /// The input.
        input: usize,
    },
    /// The input to a power.
    Power {
        /// The input.
        input: usize,
        /// The power.
        power: u32,
    },
    /// The trend index of the period input.
    Trend {
        /// The period input.
        input: usize,
    },
    /// 1 when the period input falls in `season`, else 0.
    Season {
        /// The period input.
        input: usize,
        /// The seasons.
        by: SeasonBy,
        /// The season's number (1 = Jan, Q1, Mon).
        season: u32,
    },
}

/// The recipe of a model's What-if block.
#[derive(Debug, Clone, Serialize)]
pub struct WhatIf {
    /// The input cells.
    pub inputs: Vec<WhatIfInput>,
    /// Per estimated coefficient: its name, its estimate and the factors
    /// whose product is its design column's value (none: the constant 1).
    pub columns: Vec<(String, f64, Vec<Part>)>,
    /// The classical covariance s²(X'X)⁻¹ of the estimated coefficients.
    pub covariance: Vec<Vec<f64>>,
    /// s², the residual variance.
    pub sigma2: f64,
    /// The weight of a new row (1 without weights).
    pub weight: f64,
    /// Residual degrees of freedom, for the t quantile.
    pub df_resid: usize,
    /// Whether the response is fitted on the log scale.
    pub log_response: bool,
    /// The prefilled inputs' design row.
    pub x: Vec<f64>,
    /// Its fitted value x₀ᵀb, on the fitted scale.
    pub fitted: f64,
    /// The variance of the fitted value, x₀ᵀVx₀.
    pub variance: f64,
    /// The t quantile of the intervals.
    pub t: f64,
    /// The prefilled inputs' estimate and intervals, on the response's own
    /// scale.
    pub estimate: f64,
    /// Lower limit of the mean's interval.
    pub mean_lower: f64,
    /// Upper limit of the mean's interval.
    pub mean_upper: f64,
    /// Lower limit of the prediction interval.
    pub pred_lower: f64,
    /// Upper limit of the prediction interval.
    pub pred_upper: f64,
}

/// The What-if recipe of a model, or why it has none: terms the sheet
/// cannot form from its inputs (lags, events, Fourier seasons, fiscal
/// seasons, aliased columns).
pub fn what_if(
    spec: &ModelSpec,
    design: &Design,
    fit: &Fit,
    forecast: &[ForecastRow],
    spread: &[ColumnSpread],
) -> Result<WhatIf, String> {
    if !fit.aliased.is_empty() {
        return Err(
            "a coefficient was left out as aliased, so a row needing it has no estimate".into(),
        );
    }
    if design
        .timing
        .as_ref()
        .is_some_and(|t| t.frequency == Frequency::Year && t.first.to_string().starts_with("FY"))
    {
        return Err("its fiscal years are not formed on this sheet".into());
    }
    let prefill = forecast.first();
    // Without aliased columns every design column is estimated, so
    // `spread` (one per estimated column) is indexed by design column.
    let mean = |j: usize| spread.get(j).map_or(f64::NAN, |s| s.mean);
    let mut inputs: Vec<WhatIfInput> = Vec::new();
    let mut input_of = |column: &str, kind: InputKind, value: String| -> usize {
        if let Some(k) = inputs.iter().position(|i| i.column == column) {
            return k;
        }
        inputs.push(WhatIfInput {
            column: column.to_string(),
            kind,
            value,
        });
        inputs.len() - 1
    };
    let number = |column: &str, j: usize| -> String {
        prefill
            .and_then(|r| r.inputs.get(column).cloned())
            .unwrap_or_else(|| mean(j).to_string())
    };
    let period_input = |input_of: &mut dyn FnMut(&str, InputKind, String) -> usize| {
        let t = design.timing.as_ref()?;
        let value = prefill
            .and_then(|r| r.date.clone())
            .unwrap_or_else(|| t.last().start().to_string());
        Some(input_of(
            "period",
            InputKind::Period {
                frequency: t.frequency,
                first: t.first.start().to_string(),
            },
            value,
        ))
    };
    let mut columns: Vec<Vec<Part>> = vec![Vec::new(); design.x.ncols()];
    for term in &design.terms {
        let range = term.columns.clone();
        match &term.kind {
            TermKind::Intercept => {}
            TermKind::Numeric => {
                let k = input_of(
                    &term.column,
                    InputKind::Number,
                    number(&term.column, range.start),
                );
                columns[range.start].push(Part::Value { input: k });
            }
            TermKind::Log => {
                let value = prefill
                    .and_then(|r| r.inputs.get(&term.column).cloned())
                    .unwrap_or_else(|| mean(range.start).exp().to_string());
                let k = input_of(&term.column, InputKind::Number, value);
                columns[range.start].push(Part::Ln { input: k });
            }
            TermKind::Polynomial { .. } => {
                let k = input_of(
                    &term.column,
                    InputKind::Number,
                    number(&term.column, range.start),
                );
                for (d, j) in range.enumerate() {
                    columns[j].push(Part::Power {
                        input: k,
                        power: d as u32 + 1,
                    });
                }
            }
            TermKind::Categorical {
                baseline, levels, ..
            } => {
                let value = prefill
                    .and_then(|r| r.inputs.get(&term.column).cloned())
                    .unwrap_or_else(|| baseline.clone());
                let k = input_of(
                    &term.column,
                    InputKind::Level {
                        levels: levels.clone(),
                    },
                    value,
                );
                for j in range {
                    let level = design.names[j]
                        .strip_prefix(&format!("{}[", term.column))
                        .and_then(|l| l.strip_suffix(']'))
                        .unwrap_or_default()
                        .to_string();
                    columns[j].push(Part::Indicator { input: k, level });
                }
            }
            TermKind::Trend => {
                let k = period_input(&mut input_of).ok_or("it has no periods")?;
                columns[range.start].push(Part::Trend { input: k });
            }
            TermKind::Season { by, .. } => {
                if matches!(by, SeasonBy::FiscalMonth | SeasonBy::FiscalQuarter) {
                    return Err("its fiscal seasons are not formed on this sheet".into());
                }
                let k = period_input(&mut input_of).ok_or("it has no periods")?;
                for j in range {
                    let label = design.names[j]
                        .strip_prefix("season[")
                        .and_then(|l| l.strip_suffix(']'))
                        .unwrap_or_default();
                    let season = by
                        .season_of(label)
                        .ok_or("a season label is not recognised")?;
                    columns[j].push(Part::Season {
                        input: k,
                        by: *by,
                        season,
                    });
                }
            }
            TermKind::Interaction { left, right } => {
                // The product of the two main effects' columns, as the
                // design forms it, one column per pair of their columns.
                let (l, r) = (&design.terms[*left], &design.terms[*right]);
                let pairs: Vec<(usize, usize)> = l
                    .contrast_columns()
                    .into_iter()
                    .flat_map(|a| r.contrast_columns().into_iter().map(move |b| (a, b)))
                    .collect();
                if pairs.len() != range.len() {
                    return Err("an interaction is not formed on this sheet".into());
                }
                for (j, (a, b)) in range.zip(pairs) {
                    let parts: Vec<Part> = columns[a].iter().chain(&columns[b]).cloned().collect();
                    columns[j] = parts;
                }
            }
            TermKind::Lag { .. } => {
                return Err("its lagged predictors take earlier periods' values".into())
            }
            TermKind::Event { .. } => {
                return Err("its events (step, spike, ramp) are set by period in the job".into())
            }
            TermKind::Fourier { .. } => {
                return Err("its Fourier seasons are not formed on this sheet".into())
            }
        }
    }
    // The prefilled design row, from the same recipe the formulas follow.
    let x: Vec<f64> = columns
        .iter()
        .map(|parts| parts.iter().map(|p| value(p, &inputs, design)).product())
        .collect();
    if x.iter().any(|v| !v.is_finite()) {
        return Err("the prefilled inputs give no finite design row".into());
    }
    let ls = &fit.solution;
    let s2 = fit.quality.sigma.powi(2);
    let p = ls.kept.len();
    let covariance: Vec<Vec<f64>> = (0..p)
        .map(|a| (0..p).map(|b| s2 * ls.xtx_inv[(a, b)]).collect())
        .collect();
    let xk: Vec<f64> = ls.kept.iter().map(|&j| x[j]).collect();
    let fitted: f64 = xk.iter().zip(ls.beta.iter()).map(|(a, b)| a * b).sum();
    let mut v = 0.0;
    for a in 0..p {
        for b in 0..p {
            v += xk[a] * covariance[a][b] * xk[b];
        }
    }
    let t = t_quantile((1.0 + fit.confidence) / 2.0, fit.df_resid as f64);
    let (se_mean, se_new) = (
        v.max(0.0).sqrt(),
        (v.max(0.0) + s2 / spec.new_row_weight).sqrt(),
    );
    let back = |v: f64| if design.log_response { v.exp() } else { v };
    Ok(WhatIf {
        columns: ls
            .kept
            .iter()
            .zip(ls.beta.iter())
            .map(|(&j, &b)| (design.names[j].clone(), b, columns[j].clone()))
            .collect(),
        inputs,
        covariance,
        sigma2: s2,
        weight: spec.new_row_weight,
        df_resid: fit.df_resid,
        log_response: design.log_response,
        x: xk,
        fitted,
        variance: v,
        t,
        estimate: back(fitted),
        mean_lower: back(fitted - t * se_mean),
        mean_upper: back(fitted + t * se_mean),
        pred_lower: back(fitted - t * se_new),
        pred_upper: back(fitted + t * se_new),
    })
}

/// The value of one factor at the prefilled inputs.
fn value(part: &Part, inputs: &[WhatIfInput], design: &Design) -> f64 {
    let number = |k: usize| inputs[k].value.trim().parse::<f64>().unwrap_or(f64::NAN);
    let period = |k: usize| chrono::NaiveDate::parse_from_str(&inputs[k].value, "%Y-%m-%d").ok();
    match part {
        Part::Value { input } => number(*input),
        Part::Ln { input } => number(*input).ln(),
        Part::Power { input, power } => number(*input).powi(*power as i32),
        Part::Indicator { input, level } => f64::from(u8::from(inputs[*input].value == *level)),
        Part::Trend { input } => match (period(*input), &design.timing) {
            (Some(d), Some(t)) => t.index(t.first.holding(d)) as f64,
            _ => f64::NAN,
        },
        Part::Season { input, by, season } => match (period(*input), &design.timing) {
            (Some(d), Some(t)) => t
                .first
                .holding(d)
                .season(*by)
                .map_or(f64::NAN, |s| f64::from(u8::from(s == *season))),
            _ => f64::NAN,
        },
    }
}
