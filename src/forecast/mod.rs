//! Forecasts and back-tests: predictions for new rows with the confidence
//! interval of the mean and the prediction interval of a new value.
//!
//! For a row x₀ of the design (coded as the data were), the estimate is
//! x₀ᵀb, the standard error of the mean s·√(x₀ᵀ(X'X)⁻¹x₀) and that of a new
//! value s·√(1 + x₀ᵀ(X'X)⁻¹x₀), with t on the residual degrees of freedom
//! (e.g. Draper & Smith, *Applied Regression Analysis*, 3rd ed., §2.4 and
//! §5.2). With a log response the limits are transformed back by exp: the
//! point forecast is then a median, and the smearing estimate
//! exp(x₀ᵀb)·mean(exp(eᵢ)) (Duan 1983, JASA 78) estimates the mean.

mod ar1;
mod backtest;
mod scenarios;
mod totals;

use serde::Serialize;

use crate::design::{Design, EncodeError, FutureRow, LagHistory};
use crate::fit::ar1::{Ar1Error, Ar1Errors};
use crate::fit::{t_quantile, Fit, FitError};
use crate::job::{ForecastSpec, HoldValue, ModelSpec};
use crate::period::{read_stamp, year_of_number, Period};
use crate::source::{CellRef, Table, Value};

pub use backtest::{backtest, backtest_ar1, Accuracy, Backtest, BacktestPoint};
pub use scenarios::{scenarios, ScenarioRow};
pub use totals::ForecastTotal;

/// An error that stops a model's forecast or back-test.
#[derive(Debug, thiserror::Error)]
pub enum ForecastError {
    /// A forecast row cannot be coded.
    #[error("model '{model}': {place} {source}")]
    Row {
        /// The model.
        model: String,
        /// Which row, in words.
        place: String,
        /// What is wrong with it.
        source: EncodeError,
    },
    /// A forecast row needs a coefficient that could not be estimated.
    #[error("model '{model}': {place} needs the coefficient {term}, which was left out of the fit ({why}); its effect cannot be estimated from this data, so give the row another value, or drop or merge the predictor")]
    Aliased {
        /// The model.
        model: String,
        /// Which row, in words.
        place: String,
        /// The coefficient.
        term: String,
        /// Why it was left out, in words.
        why: String,
    },
    /// The plan or scenarios sheet lacks a column it needs.
    #[error("model '{model}': {kind} sheet '{sheet}' has no column '{column}' in its header row {header_row} (its columns there: {available}); it needs {}; if its names are in another row, set {}", .kind.needs(), .kind.key())]
    PlanColumn {
        /// The model.
        model: String,
        /// A plan or a scenarios sheet.
        kind: SheetKind,
        /// The plan sheet.
        sheet: String,
        /// The plan sheet's header row.
        header_row: u32,
        /// The columns the header row names.
        available: String,
        /// The missing column.
        column: String,
    },
    /// A plan- or scenarios-sheet date that cannot be read.
    #[error("model '{model}': {kind} sheet '{sheet}' (header row {header_row}), cell {cell} holds '{value}', which is not a {frequency} date or period")]
    PlanDate {
        /// The model.
        model: String,
        /// A plan or a scenarios sheet.
        kind: SheetKind,
        /// The plan sheet.
        sheet: String,
        /// The plan sheet's header row.
        header_row: u32,
        /// The cell.
        cell: CellRef,
        /// The value as text.
        value: String,
        /// The series' frequency.
        frequency: &'static str,
    },
    /// A scenario written in the job whose date is not a period of the
    /// model's frequency.
    #[error("model '{model}': scenario '{scenario}' gives the date column '{value}', which is not a {frequency} date or period")]
    ScenarioPeriod {
        /// The model.
        model: String,
        /// The scenario.
        scenario: String,
        /// The value as written.
        value: String,
        /// The series' frequency.
        frequency: &'static str,
    },
    /// The back-test holds out every period.
    #[error("model '{model}': `backtest = {holdout}` holds out {holdout} of only {periods} periods; keep enough periods to fit on")]
    BacktestTooLong {
        /// The model.
        model: String,
        /// Periods held out.
        holdout: u32,
        /// Periods in the data.
        periods: usize,
    },
    /// A back-test refit failed.
    #[error("model '{model}': back-test refit without the last periods failed: {source}")]
    BacktestFit {
        /// The model.
        model: String,
        /// The fit's error.
        source: FitError,
    },
    /// A back-test refit with AR(1) errors failed.
    #[error("model '{model}': back-test refit with AR(1) errors without the last periods failed: {source}; hold out fewer periods, or leave `errors` out")]
    BacktestAr1 {
        /// The model.
        model: String,
        /// The likelihood's error.
        source: Ar1Error,
    },
}

/// A prediction on the fitted scale.
#[derive(Debug, Clone, Copy)]
struct Prediction {
    estimate: f64,
    se_mean: f64,
    se_new: f64,
}

/// Predicts the design row `x0` (all columns of the design) from `fit`, a
/// new value of the row having weight `weight` (1 without weights: its
/// variance is σ²/w); `Err` holds the index of an aliased column the row
/// needs.
fn predict(fit: &Fit, x0: &[f64], weight: f64) -> Result<Prediction, usize> {
    let ls = &fit.solution;
    if let Some(&j) = ls.aliased.iter().find(|&&j| x0[j] != 0.0) {
        return Err(j);
    }
    let xk: Vec<f64> = ls.kept.iter().map(|&j| x0[j]).collect();
    let estimate = xk.iter().zip(ls.beta.iter()).map(|(a, b)| a * b).sum();
    let mut v = 0.0;
    for (a, xa) in xk.iter().enumerate() {
        for (b, xb) in xk.iter().enumerate() {
            v += xa * ls.xtx_inv[(a, b)] * xb;
        }
    }
    let s = fit.quality.sigma;
    Ok(Prediction {
        estimate,
        se_mean: s * v.max(0.0).sqrt(),
        se_new: s * (1.0 / weight + v.max(0.0)).sqrt(),
    })
}

/// One forecast row, on the response's own scale.
#[derive(Debug, Clone, Serialize)]
pub struct ForecastRow {
    /// Period label ("2026-01", "2026-Q1"), when the model has periods.
    pub period: Option<String>,
    /// Trend index of the period.
    pub index: Option<i64>,
    /// First day of the period, ISO 8601.
    pub date: Option<String>,
    /// The row's series, for panel data named by `series`.
    pub series: Option<String>,
    /// The predictor values used, as text, in model order.
    pub inputs: indexmap::IndexMap<String, String>,
    /// The estimate and its intervals.
    #[serde(flatten)]
    pub prediction: Predicted,
}

/// The forecast rows of a model: the next periods (`horizon`, other
/// predictors held) or the rows of a plan sheet (`plan`, read by the
/// caller), with each period's total over the series for panel data.
///
/// # Errors
/// [`ForecastError`] for a row that cannot be coded or needs an aliased
/// coefficient, or a plan sheet without a needed column or with a bad date.
pub fn forecast(
    spec: &ModelSpec,
    design: &Design,
    fit: &Fit,
    plan: Option<&Table>,
) -> Result<(Vec<ForecastRow>, Vec<ForecastTotal>), ForecastError> {
    let Some(Future {
        predictors,
        rows,
        history,
        predictor,
    }) = future(spec, design, fit, plan)?
    else {
        return Ok((Vec::new(), Vec::new()));
    };
    let totals = totals::totals(&predictor, &rows, &history)?;
    let rows = rows
        .into_iter()
        .map(|(place, row)| {
            let p = predictor.predict(&place, &row, &history)?;
            Ok(forecast_row(design, &predictors, &row, p))
        })
        .collect::<Result<_, ForecastError>>()?;
    Ok((rows, totals))
}

/// The forecast rows of the model's regression with AR(1) errors `ar1`:
/// the rows [`forecast`] predicts, those after the last period fitted.
///
/// # Errors
/// As [`forecast`].
pub fn forecast_ar1(
    spec: &ModelSpec,
    design: &Design,
    fit: &Fit,
    plan: Option<&Table>,
    ar1: &Ar1Errors,
) -> Result<Vec<ForecastRow>, ForecastError> {
    let Some(f) = future(spec, design, fit, plan)? else {
        return Ok(Vec::new());
    };
    ar1::forecast_rows(&f.predictor, ar1, &f.rows, &f.history, &f.predictors)
}

/// The rows a model's forecast predicts, ready to predict.
struct Future<'a> {
    /// The columns a row gives, in model order.
    predictors: Vec<&'a str>,
    /// The rows, each with the words that place it in messages.
    rows: Vec<(String, FutureRow)>,
    /// The lagged columns' values: the data's, then the rows'.
    history: LagHistory,
    /// The least-squares fit's predictor.
    predictor: Predictor<'a>,
}

/// The forecast rows of `spec` (`None` when it asks for none), each row's
/// lags reading the data and the rows before it.
fn future<'a>(
    spec: &'a ModelSpec,
    design: &'a Design,
    fit: &'a Fit,
    plan: Option<&Table>,
) -> Result<Option<Future<'a>>, ForecastError> {
    let Some(forecast) = &spec.forecast else {
        return Ok(None);
    };
    let predictors: Vec<&str> = spec.row_columns();
    let rows = future_rows(spec, design, forecast, plan, &predictors)?;
    let mut history = design.lag_history.clone();
    for (_, row) in &rows {
        history.record(row);
    }
    Ok(Some(Future {
        predictors,
        rows,
        history,
        predictor: Predictor::new(spec, design, fit),
    }))
}

/// The forecast rows as rows to predict, each with the words that place it
/// in messages.
fn future_rows(
    spec: &ModelSpec,
    design: &Design,
    forecast: &ForecastSpec,
    plan: Option<&Table>,
    predictors: &[&str],
) -> Result<Vec<(String, FutureRow)>, ForecastError> {
    Ok(match (forecast, plan) {
        (ForecastSpec::Horizon { horizon, hold }, _) => {
            let last = design.timing.as_ref().map(|t| t.last());
            let values = held_values(hold);
            // Panel data named by series: a row for each series in each
            // period.
            let series: Vec<Option<(&String, &String)>> = match &design.series {
                Some(s) => s.labels.iter().map(|l| Some((&s.column, l))).collect(),
                None => vec![None],
            };
            (1..=i64::from(*horizon))
                .flat_map(|h| series.iter().map(move |s| (h, *s)))
                .map(|(h, series)| {
                    let period = last.map(|p| p.plus(h));
                    let mut place = period.map_or(format!("forecast row {h}"), |p| {
                        format!("forecast period {p}")
                    });
                    let mut values = values.clone();
                    if let Some((column, label)) = series {
                        place.push_str(&format!(" of series '{label}'"));
                        values.insert(column.clone(), Value::text(label));
                    }
                    (place, FutureRow { period, values })
                })
                .collect()
        }
        (ForecastSpec::Plan { sheet, .. }, Some(table)) => {
            sheet_rows(spec, design, SheetKind::Plan, sheet, table, predictors)?
        }
        (ForecastSpec::Plan { .. }, None) => Vec::new(),
    })
}

/// The forecast row of `row` with its prediction.
fn forecast_row(
    design: &Design,
    predictors: &[&str],
    row: &FutureRow,
    prediction: Predicted,
) -> ForecastRow {
    ForecastRow {
        period: row.period.map(|p| p.to_string()),
        index: row
            .period
            .zip(design.timing.as_ref())
            .map(|(p, t)| t.index(p)),
        date: row.period.map(|p| p.start().to_string()),
        series: design
            .series
            .as_ref()
            .and_then(|s| row.values.get(&s.column))
            .map(Value::to_string),
        inputs: inputs(predictors, row),
        prediction,
    }
}

/// Values written in the job (`hold`, a scenario's) as cells of a row to
/// predict.
fn held_values(
    written: &indexmap::IndexMap<String, HoldValue>,
) -> std::collections::HashMap<String, Value> {
    written
        .iter()
        .map(|(column, v)| {
            let value = match v {
                HoldValue::Number(x) => Value::Number(*x),
                HoldValue::Level(l) => Value::text(l),
            };
            (column.clone(), value)
        })
        .collect()
}

/// The value of each of `columns` in `row`, as text, for the report.
fn inputs(columns: &[&str], row: &FutureRow) -> indexmap::IndexMap<String, String> {
    columns
        .iter()
        .map(|c| {
            let v = row.values.get(*c).map(Value::to_string).unwrap_or_default();
            (c.to_string(), v)
        })
        .collect()
}

/// A row's estimate and intervals on the response's own scale.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct Predicted {
    /// Point prediction x₀ᵀb (with a log response: exp(x₀ᵀb), a median).
    pub estimate: f64,
    /// Lower limit of the confidence interval of the mean.
    pub mean_lower: f64,
    /// Upper limit of the confidence interval of the mean.
    pub mean_upper: f64,
    /// Lower limit of the prediction interval of a new value.
    pub pred_lower: f64,
    /// Upper limit of the prediction interval of a new value.
    pub pred_upper: f64,
    /// With a log response: the smearing estimate of the mean (Duan 1983).
    pub smeared_mean: Option<f64>,
}

/// Predicts rows of one fitted model.
struct Predictor<'a> {
    spec: &'a ModelSpec,
    design: &'a Design,
    fit: &'a Fit,
    /// t quantile of the model's confidence level.
    t: f64,
    /// mean(exp(eᵢ)) for a log response (Duan 1983).
    smearing: Option<f64>,
}

impl<'a> Predictor<'a> {
    fn new(spec: &'a ModelSpec, design: &'a Design, fit: &'a Fit) -> Self {
        let smearing = design.log_response.then(|| {
            let e = &fit.solution.residuals;
            e.iter()
                .enumerate()
                .map(|(i, &r)| design.unscaled(i, r).exp())
                .sum::<f64>()
                / e.len() as f64
        });
        Predictor {
            spec,
            design,
            fit,
            t: t_quantile((1.0 + fit.confidence) / 2.0, fit.df_resid as f64),
            smearing,
        }
    }

    /// The design row of `row` (`place` names it in errors), its lags read
    /// from `history`.
    fn encode(
        &self,
        place: &str,
        row: &FutureRow,
        history: &LagHistory,
    ) -> Result<Vec<f64>, ForecastError> {
        self.design
            .encode(row, history)
            .map_err(|source| ForecastError::Row {
                model: self.spec.name.clone(),
                place: place.to_string(),
                source,
            })
    }

    /// The error for a row at `place` that needs the aliased column `j`.
    fn aliased(&self, place: &str, j: usize) -> ForecastError {
        let design = self.design;
        ForecastError::Aliased {
            model: self.spec.name.clone(),
            place: place.to_string(),
            term: design.names[j].clone(),
            why: if design.x.column(j).iter().all(|&v| v == 0.0) {
                "no row of the data has it".into()
            } else {
                "it is an exact combination of other columns in the rows used (aliased)".into()
            },
        }
    }

    /// The estimate and intervals of `row` (`place` names it in errors),
    /// its lags read from `history`; transformed back for a log response.
    fn predict(
        &self,
        place: &str,
        row: &FutureRow,
        history: &LagHistory,
    ) -> Result<Predicted, ForecastError> {
        let design = self.design;
        let x0 = self.encode(place, row, history)?;
        let p =
            predict(self.fit, &x0, self.spec.new_row_weight).map_err(|j| self.aliased(place, j))?;
        let back = |v: f64| if design.log_response { v.exp() } else { v };
        let t = self.t;
        Ok(Predicted {
            estimate: back(p.estimate),
            mean_lower: back(p.estimate - t * p.se_mean),
            mean_upper: back(p.estimate + t * p.se_mean),
            pred_lower: back(p.estimate - t * p.se_new),
            pred_upper: back(p.estimate + t * p.se_new),
            smeared_mean: self.smearing.map(|m| p.estimate.exp() * m),
        })
    }
}

/// What a sheet of rows to predict is for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SheetKind {
    /// The forecast's plan sheet.
    Plan,
    /// A scenarios sheet.
    Scenarios,
}

impl SheetKind {
    /// The columns the sheet needs, in words.
    fn needs(self) -> &'static str {
        match self {
            SheetKind::Plan => "the date column and every predictor",
            SheetKind::Scenarios => {
                "a `name` column, every predictor and, with dates, the date column"
            }
        }
    }

    /// What a row of the sheet is called in messages.
    fn row_word(self) -> &'static str {
        match self {
            SheetKind::Plan => "forecast row",
            SheetKind::Scenarios => "scenario row",
        }
    }

    /// The job key that sets the sheet's header row.
    fn key(self) -> &'static str {
        match self {
            SheetKind::Plan => "`plan_header_row` under [model.forecast]",
            SheetKind::Scenarios => "`header_row` under [model.scenarios]",
        }
    }
}

impl std::fmt::Display for SheetKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            SheetKind::Plan => "plan",
            SheetKind::Scenarios => "scenarios",
        })
    }
}

/// Rows to predict from a plan or scenarios sheet: one per data row, with
/// its period read from the date column and predictor values from their
/// columns.
fn sheet_rows(
    spec: &ModelSpec,
    design: &Design,
    kind: SheetKind,
    sheet: &str,
    table: &Table,
    predictors: &[&str],
) -> Result<Vec<(String, FutureRow)>, ForecastError> {
    let missing = |column: &str| ForecastError::PlanColumn {
        model: spec.name.clone(),
        kind,
        sheet: sheet.to_string(),
        header_row: table.header_row,
        available: table
            .columns
            .iter()
            .map(|c| format!("'{}'", c.name))
            .collect::<Vec<_>>()
            .join(", "),
        column: column.to_string(),
    };
    let date_column = match (&design.timing, spec.date_column()) {
        (Some(t), Some(name)) => Some((t, table.column(name).ok_or_else(|| missing(name))?)),
        _ => None,
    };
    let columns = predictors
        .iter()
        .map(|c| table.column(c).ok_or_else(|| missing(c)))
        .collect::<Result<Vec<_>, _>>()?;
    (0..table.rows.len())
        .map(|i| {
            let period = match date_column {
                Some((timing, column)) => {
                    let value = column.values.get(i);
                    let stamp = match &value {
                        Value::Date(t) | Value::Text(t) => read_stamp(t, &spec.labels).ok(),
                        Value::Number(x) => year_of_number(*x),
                        _ => None,
                    };
                    let period: Option<Period> = stamp.and_then(|s| s.period_like(timing.first));
                    Some(period.ok_or_else(|| ForecastError::PlanDate {
                        model: spec.name.clone(),
                        kind,
                        sheet: sheet.to_string(),
                        header_row: table.header_row,
                        cell: table.cell(column, i),
                        value: value.to_string(),
                        frequency: timing.frequency.name(),
                    })?)
                }
                None => None,
            };
            let values = columns
                .iter()
                .map(|c| (c.name.clone(), c.values.get(i)))
                .collect();
            let place = format!(
                "{} {} of {kind} sheet '{sheet}' (header row {})",
                kind.row_word(),
                table.rows[i],
                table.header_row
            );
            Ok((place, FutureRow { period, values }))
        })
        .collect()
}
