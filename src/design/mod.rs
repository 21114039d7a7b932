//! From a table and a model to the numbers least squares needs.
//!
//! For one [`ModelSpec`] this stage checks that every column exists and holds
//! what its role needs, drops rows with a blank in any column the model uses
//! (recording their sheet rows), and builds the response vector and the design
//! matrix: an intercept column, one column per numeric predictor, and for each
//! categorical predictor one 0/1 indicator column per level other than the
//! baseline (treatment coding). Each column remembers the [`Term`] it belongs
//! to, so that a factor can be tested as one term.

// Design errors carry the model, place, cell, value and a hint so the
// message can say everything at once; they happen at most once per model,
// so their size does not matter.
#![allow(clippy::result_large_err)]

mod by;
mod categorical;
mod context;
mod error;
mod events;
mod fourier;
mod future;
mod lags;
mod logs;
mod matrix;
mod polynomial;
mod term;
mod time;
mod weights;

use nalgebra::DVector;

use crate::job::{Errors, ModelSpec};
use crate::source::{Column, Table, Value};

pub use by::by_levels;
pub use error::DesignError;
pub use future::{EncodeError, FutureRow};
pub use lags::LagHistory;

use self::categorical::indicators;
use self::context::Context;
use self::polynomial::powers;
pub use matrix::{DesignColumn, DesignMatrix, IndicatorGroup};
pub use term::{Term, TermKind};
pub use time::Timing;

/// The response and design matrix of one model, over its usable rows.
#[derive(Debug, Clone)]
pub struct Design {
    /// The response column's name.
    pub response: String,
    /// Response values, one per used row (times √w with weights).
    pub y: DVector<f64>,
    /// Design matrix: one row per used row, one column per coefficient
    /// (its rows times √w with weights).
    pub x: DesignMatrix,
    /// The rows' weights, for weighted least squares: `x` and `y` then hold
    /// the rows scaled by √w, the problem whose least squares fit is the
    /// weighted one.
    pub weights: Option<Vec<f64>>,
    /// Coefficient names, one per column of `x`: `Intercept`, the numeric
    /// column's name, or `column[level]` for an indicator.
    pub names: Vec<String>,
    /// Terms in model order; their column ranges cover `x` in order.
    pub terms: Vec<Term>,
    /// Whether the first term is the intercept.
    pub intercept: bool,
    /// Sheet row (from 1) of each used row.
    pub rows: Vec<u32>,
    /// Sheet rows left out because a used column was blank there.
    pub dropped: Vec<u32>,
    /// Periods of the rows, when the model has a date column; rows are then
    /// in period order.
    pub timing: Option<Timing>,
    /// Whether `y` holds the natural log of the response.
    pub log_response: bool,
    /// The lagged columns' values by period, for forecast rows' lags.
    pub lag_history: LagHistory,
    /// The series of panel data named by the job's `series` column.
    pub series: Option<SeriesIds>,
}

/// The series of panel data: the column naming them, their labels and the
/// series of each used row.
#[derive(Debug, Clone)]
pub struct SeriesIds {
    /// The `series` column.
    pub column: String,
    /// The labels in the rows used, sorted.
    pub labels: Vec<String>,
    /// Each used row's series, as an index into `labels`.
    pub of_row: Vec<u32>,
}

/// Builds the design for `model` from `table`.
///
/// # Errors
/// [`DesignError`] for a missing column, a cell that does not suit its
/// column's role, a baseline that is not a level, or a one-level factor.
pub fn build(table: &Table, model: &ModelSpec) -> Result<Design, DesignError> {
    let ctx = Context { table, model };
    // Every used column is checked in full, in model order, and marks its
    // blank rows; values are read again only for the rows kept.
    let mut usable = vec![true; table.rows.len()];
    let response = ctx.column(&model.response)?;
    ctx.check_numbers(response, &mut usable)?;
    let numeric = model
        .numeric
        .iter()
        .map(|name| ctx.column(name))
        .collect::<Result<Vec<_>, _>>()?;
    let poly = model
        .poly
        .iter()
        .map(|p| ctx.column(&p.column))
        .collect::<Result<Vec<_>, _>>()?;
    let logged = model
        .log
        .iter()
        .map(|name| ctx.column(name))
        .collect::<Result<Vec<_>, _>>()?;
    for column in numeric.iter().chain(&poly).chain(&logged) {
        ctx.check_numbers(column, &mut usable)?;
    }
    // A lagged column's own blanks leave no row out: only the rows whose
    // lags are blank go.
    let lagged = model
        .lags
        .iter()
        .map(|l| ctx.column(&l.column))
        .collect::<Result<Vec<_>, _>>()?;
    let mut scratch = vec![true; table.rows.len()];
    for column in &lagged {
        ctx.check_numbers(column, &mut scratch)?;
    }
    drop(scratch);
    let labels = model
        .categorical
        .iter()
        .map(|c| ctx.column(&c.column))
        .collect::<Result<Vec<_>, _>>()?;
    for column in &labels {
        ctx.check_labels(column, &mut usable)?;
    }
    let weights = model
        .weights
        .as_ref()
        .map(|name| ctx.column(name))
        .transpose()?;
    if let Some(column) = weights {
        ctx.check_numbers(column, &mut usable)?;
    }
    let series = model
        .series
        .as_ref()
        .map(|name| ctx.column(name))
        .transpose()?;
    if let Some(column) = series {
        ctx.check_labels(column, &mut usable)?;
    }
    let dates = model
        .date_column()
        .map(|name| {
            let column = ctx.column(name)?;
            Ok::<_, DesignError>((column, ctx.stamps(column)?))
        })
        .transpose()?;

    let keep: Vec<usize> = (0..table.rows.len())
        .filter(|&i| usable[i] && dates.as_ref().is_none_or(|(_, d)| d[i].is_some()))
        .collect();
    drop(usable);
    if keep.is_empty() {
        return Err(DesignError::NoUsableRows {
            model: model.name.clone(),
            place: table.place(),
            columns: quoted(&model.columns().map(str::to_string).collect::<Vec<_>>()),
        });
    }
    let mut keep = keep;
    let mut history = LagHistory::default();
    let timing = match &dates {
        Some((column, stamps)) => {
            let mut t = time::timing(&ctx, column, stamps, &keep, model.frequency, series)?;
            if matches!(model.standard_errors, Some(crate::job::Robust::Hac(_))) && t.panel {
                return Err(DesignError::HacOfPanel {
                    model: model.name.clone(),
                });
            }
            if model.errors == Errors::Ar1 && t.panel {
                return Err(DesignError::Ar1OfPanel {
                    model: model.name.clone(),
                });
            }
            if !model.lags.is_empty() {
                lags::refuse_panel(&ctx, column, &keep, &t)?;
                history = LagHistory::of_data(&lagged, series, stamps, &t);
                let label_of = |i: usize| {
                    series
                        .map(|s| s.values.get(i).to_string())
                        .unwrap_or_default()
                };
                (keep, t) = lags::keep_rows_with_lags(&model.lags, &history, label_of, keep, t);
                if keep.is_empty() {
                    return Err(DesignError::NoUsableRows {
                        model: model.name.clone(),
                        place: table.place(),
                        columns: quoted(&model.columns().map(str::to_string).collect::<Vec<_>>()),
                    });
                }
            }
            let mut order: Vec<usize> = (0..keep.len()).collect();
            order.sort_by_key(|&k| t.periods[k]);
            keep = order.iter().map(|&k| keep[k]).collect();
            Some(Timing {
                periods: order.iter().map(|&k| t.periods[k]).collect(),
                ..t
            })
        }
        None => None,
    };
    let dropped = {
        let mut used = vec![false; table.rows.len()];
        for &i in &keep {
            used[i] = true;
        }
        (0..table.rows.len())
            .filter(|&i| !used[i])
            .map(|i| table.rows[i])
            .collect()
    };
    let used = |column: &Column| -> Vec<f64> { keep.iter().map(|&i| number(column, i)).collect() };
    let y = used(response);
    if model.log_response {
        if let Some((&i, &value)) = keep.iter().zip(&y).find(|(_, &v)| v <= 0.0) {
            return Err(DesignError::NotPositive {
                model: model.name.clone(),
                place: table.place(),
                column: response.name.clone(),
                cell: table.cell(response, i),
                value,
            });
        }
    }

    let mut parts = Assembly::default();
    if model.intercept {
        parts.push(
            "",
            "Intercept",
            TermKind::Intercept,
            vec![NamedColumn::new("Intercept", DesignColumn::Ones)],
        );
    }
    for (name, column) in model.numeric.iter().zip(&numeric) {
        parts.push(
            name,
            name,
            TermKind::Numeric,
            vec![NamedColumn::new(name, DesignColumn::values(used(column)))],
        );
    }
    for (spec, column) in model.poly.iter().zip(&poly) {
        parts.push(
            &spec.column,
            &format!("{} (degree {})", spec.column, spec.degree),
            TermKind::Polynomial {
                degree: spec.degree,
            },
            powers(&spec.column, &used(column), spec.degree),
        );
    }
    for column in &logged {
        let name = format!("ln({})", column.name);
        let values = used(column);
        parts.push(
            &column.name,
            &name,
            TermKind::Log,
            logs::log_column(&ctx, column, &keep, &values)?,
        );
    }
    if let Some(t) = &timing {
        for spec in &model.lags {
            for &lag in &spec.lags {
                let name = format!("{} (lag {lag})", spec.column);
                let values = keep
                    .iter()
                    .zip(&t.periods)
                    .map(|(&i, &p)| {
                        let label = series
                            .map(|s| s.values.get(i).to_string())
                            .unwrap_or_default();
                        history
                            .value(&spec.column, &label, p, lag)
                            .unwrap_or(f64::NAN)
                    })
                    .collect();
                parts.push(
                    &spec.column,
                    &name,
                    TermKind::Lag { lag },
                    vec![NamedColumn::new(&name, DesignColumn::values(values))],
                );
            }
        }
    }
    drop(dates);
    // Without an intercept the first factor (seasons come before the
    // categorical predictors) gets an indicator for every level, so that
    // each level has its own level and the fit does not depend on the
    // baseline; later factors keep their baselines.
    let mut every_level = !model.intercept;
    if let Some(t) = &timing {
        if model.trend.is_some() {
            let index = t.periods.iter().map(|&p| t.index(p) as f64).collect();
            parts.push(
                &t.column,
                "trend",
                TermKind::Trend,
                vec![NamedColumn::new("trend", DesignColumn::values(index))],
            );
        }
        if let Some(season) = &model.season {
            let seasons = time::seasons(&ctx, season, t)?;
            let baseline = (!every_level).then_some(season.baseline);
            parts.push(
                &t.column,
                "season",
                TermKind::Season {
                    by: season.by,
                    baseline: season.baseline,
                    given: season.baseline_given,
                    every_level: std::mem::take(&mut every_level),
                },
                time::season_columns(season.by, baseline, seasons),
            );
        }
        if let Some(spec) = &model.fourier {
            let per_cycle = fourier::periods_per_cycle(&ctx, spec, t)?;
            let index: Vec<i64> = t.periods.iter().map(|&p| t.index(p)).collect();
            parts.push(
                &t.column,
                "fourier",
                TermKind::Fourier {
                    per_cycle,
                    pairs: spec.pairs,
                },
                fourier::fourier_columns(per_cycle, spec.pairs, &index),
            );
        }
        for event in &model.events {
            let at = events::event_periods(&ctx, event, t)?;
            let column = events::event_column(&event.name, event.kind, &at, &t.periods);
            parts.push(
                &t.column,
                &event.name,
                TermKind::Event {
                    kind: event.kind,
                    at,
                },
                column,
            );
        }
    }
    for (spec, column) in model.categorical.iter().zip(&labels) {
        let (kind, indicators) =
            indicators(&ctx, spec, column, &keep, std::mem::take(&mut every_level))?;
        parts.push(&spec.column, &spec.column, kind, indicators);
    }
    for (a, b) in &model.interactions {
        let find = |name: &str| {
            parts.terms.iter().position(|t| {
                t.column == name
                    && matches!(t.kind, TermKind::Numeric | TermKind::Categorical { .. })
            })
        };
        let (Some(left), Some(right)) = (find(a), find(b)) else {
            continue;
        };
        let mut products = Vec::new();
        let right_columns = parts.terms[right].contrast_columns();
        for i in parts.terms[left].contrast_columns() {
            for &j in &right_columns {
                let (ci, cj) = (&parts.columns[i], &parts.columns[j]);
                products.push(NamedColumn::new(
                    &format!("{}:{}", ci.name, cj.name),
                    DesignColumn::Product(Box::new(ci.column.clone()), Box::new(cj.column.clone())),
                ));
            }
        }
        parts.push(
            "",
            &format!("{a}:{b}"),
            TermKind::Interaction { left, right },
            products,
        );
    }

    let rows = keep.len();
    let y = if model.log_response {
        y.iter().map(|v| v.ln()).collect()
    } else {
        y
    };
    let (names, columns) = parts
        .columns
        .into_iter()
        .map(|c| (c.name, c.column))
        .unzip();
    let (x, y) = (DesignMatrix::new(rows, columns), DVector::from_vec(y));
    let row_weights = weights
        .map(|column| weights::row_weights(&ctx, column, &keep))
        .transpose()?;
    let (x, y) = match &row_weights {
        Some(w) => weights::scaled(&x, &y, w),
        None => (x, y),
    };
    Ok(Design {
        response: model.response.clone(),
        y,
        x,
        weights: row_weights,
        names,
        terms: parts.terms,
        intercept: model.intercept,
        rows: keep.iter().map(|&i| table.rows[i]).collect(),
        dropped,
        timing,
        log_response: model.log_response,
        lag_history: history,
        series: series.map(|column| {
            let of_row: Vec<String> = keep
                .iter()
                .map(|&i| column.values.get(i).to_string())
                .collect();
            let labels: Vec<String> = of_row
                .iter()
                .cloned()
                .collect::<std::collections::BTreeSet<String>>()
                .into_iter()
                .collect();
            SeriesIds {
                column: column.name.clone(),
                of_row: of_row
                    .iter()
                    .map(|l| labels.binary_search(l).unwrap_or(0) as u32)
                    .collect(),
                labels,
            }
        }),
    })
}

/// Cell `i` of a checked numeric column: its number (NaN if blank).
fn number(column: &Column, i: usize) -> f64 {
    match column.values.get(i) {
        Value::Number(x) => x,
        _ => f64::NAN,
    }
}

impl Design {
    /// Row `i` of the design matrix, low parts included.
    pub fn row(&self, i: usize) -> Vec<f64> {
        self.x.row(i)
    }

    /// Row `i`'s value of a quantity held scaled by √wᵢ (the response, a
    /// residual, a fitted value) on the response's own scale: divided by
    /// √wᵢ with weights, as it is without.
    pub fn unscaled(&self, i: usize, value: f64) -> f64 {
        self.weights.as_ref().map_or(value, |w| value / w[i].sqrt())
    }

    /// The factor that has an indicator for every level (the first factor
    /// of a model without an intercept): its indicators sum to one in every
    /// row, so the model's columns hold a constant though it has no
    /// intercept column.
    pub fn every_level_term(&self) -> Option<&Term> {
        self.terms.iter().find(|t| {
            matches!(
                t.kind,
                TermKind::Categorical {
                    every_level: true,
                    ..
                } | TermKind::Season {
                    every_level: true,
                    ..
                }
            )
        })
    }

    /// The design restricted to the rows `keep` (indices into this design),
    /// with the same terms and coding: a back-test refits on it.
    pub fn subset(&self, keep: &[usize]) -> Design {
        Design {
            response: self.response.clone(),
            y: self.y.select_rows(keep),
            x: self.x.select_rows(keep),
            weights: self
                .weights
                .as_ref()
                .map(|w| keep.iter().map(|&i| w[i]).collect()),
            names: self.names.clone(),
            terms: self.terms.clone(),
            intercept: self.intercept,
            rows: keep.iter().map(|&i| self.rows[i]).collect(),
            dropped: Vec::new(),
            timing: self.timing.as_ref().map(|t| Timing {
                periods: keep.iter().map(|&i| t.periods[i]).collect(),
                ..t.clone()
            }),
            log_response: self.log_response,
            lag_history: self.lag_history.clone(),
            series: self.series.as_ref().map(|s| SeriesIds {
                of_row: keep.iter().map(|&i| s.of_row[i]).collect(),
                ..s.clone()
            }),
        }
    }

    /// The design columns of the interactions that contain term `k`: what a
    /// Type II test of term `k` leaves out along with it.
    pub fn interaction_columns_of(&self, k: usize) -> Vec<usize> {
        self.terms
            .iter()
            .filter(|t| matches!(t.kind, TermKind::Interaction { left, right } if left == k || right == k))
            .flat_map(|t| t.columns.clone())
            .collect()
    }

    /// The design without term `k`: its columns removed, the other terms'
    /// column ranges and interaction references renumbered.
    pub fn without_term(&self, k: usize) -> Design {
        let removed = self.terms[k].columns.clone();
        let keep: Vec<usize> = (0..self.x.ncols())
            .filter(|j| !removed.contains(j))
            .collect();
        let shift = |j: usize| {
            if j >= removed.end {
                j - removed.len()
            } else {
                j
            }
        };
        let renumber = |t: usize| if t > k { t - 1 } else { t };
        let terms = self
            .terms
            .iter()
            .enumerate()
            .filter(|(i, _)| *i != k)
            .map(|(_, t)| Term {
                columns: shift(t.columns.start)..shift(t.columns.end),
                kind: match t.kind {
                    TermKind::Interaction { left, right } => TermKind::Interaction {
                        left: renumber(left),
                        right: renumber(right),
                    },
                    ref other => other.clone(),
                },
                ..t.clone()
            })
            .collect();
        Design {
            x: self.x.select_columns(&keep),
            names: keep.iter().map(|&j| self.names[j].clone()).collect(),
            terms,
            intercept: self.intercept && self.terms[k].kind != TermKind::Intercept,
            ..self.clone()
        }
    }
}

/// One design-matrix column and its coefficient's name, while the design
/// is assembled.
struct NamedColumn {
    name: String,
    column: DesignColumn,
}

impl NamedColumn {
    fn new(name: &str, column: DesignColumn) -> Self {
        NamedColumn {
            name: name.to_string(),
            column,
        }
    }
}

/// Terms and their columns, in model order.
#[derive(Default)]
struct Assembly {
    terms: Vec<Term>,
    columns: Vec<NamedColumn>,
}

impl Assembly {
    fn push(&mut self, column: &str, name: &str, kind: TermKind, columns: Vec<NamedColumn>) {
        let start = self.columns.len();
        self.columns.extend(columns);
        self.terms.push(Term {
            name: name.to_string(),
            column: column.to_string(),
            kind,
            columns: start..self.columns.len(),
        });
    }
}

fn quoted(items: &[String]) -> String {
    items
        .iter()
        .map(|s| format!("'{s}'"))
        .collect::<Vec<_>>()
        .join(", ")
}

#[cfg(test)]
mod tests;
