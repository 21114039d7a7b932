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

mod matrix;
mod time;

use std::collections::HashMap;
use std::sync::Arc;

use nalgebra::DVector;

use crate::ddouble::DoubleDouble;
use crate::job::{Baseline, CategoricalSpec, ModelSpec};
use crate::period::{Period, SeasonBy};
use crate::source::{CellRef, Column, Table, Value};
use crate::suggest::closest;

pub use matrix::{DesignColumn, DesignMatrix, IndicatorGroup};
pub use time::Timing;

/// An error that stops one model: its columns do not fit its roles.
#[derive(Debug, thiserror::Error)]
pub enum DesignError {
    /// A column named in the job is not in the table.
    #[error("model '{model}': {place} has no column '{column}'{suggestion}; its columns are: {available}")]
    NoSuchColumn {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The missing column.
        column: String,
        /// ", did you mean 'x'?" or nothing.
        suggestion: String,
        /// The table's column names.
        available: String,
    },
    /// A cell in a numeric column holds something that is not a number.
    #[error("model '{model}': {place}, cell {cell} in numeric column '{column}' holds {kind} '{value}', not a number{hint}; correct the cell, clear it to leave the row out, or list the column under `categorical`")]
    NotANumber {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The column.
        column: String,
        /// The cell.
        cell: CellRef,
        /// The kind of value found.
        kind: &'static str,
        /// The value as text.
        value: String,
        /// A hint when the text looks like a number stored as text.
        hint: &'static str,
    },
    /// A cell holds an error value such as `#N/A`.
    #[error("model '{model}': {place}, cell {cell} in column '{column}' holds the error value {value}; fix the formula or clear the cell to leave the row out")]
    ErrorCell {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The column.
        column: String,
        /// The cell.
        cell: CellRef,
        /// The error text.
        value: String,
    },
    /// A number that is not finite.
    #[error("model '{model}': {place}, cell {cell} in column '{column}' holds {value}, which is not a finite number; correct the cell, or clear it to leave the row out")]
    NotFinite {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The column.
        column: String,
        /// The cell.
        cell: CellRef,
        /// The value.
        value: f64,
    },
    /// The baseline named in the job is not a level of the column.
    #[error("model '{model}': baseline '{baseline}' is not a level of column '{column}' in the rows used; its levels are: {levels}")]
    NoSuchBaseline {
        /// The model.
        model: String,
        /// The column.
        column: String,
        /// The baseline asked for.
        baseline: String,
        /// The levels found, quoted.
        levels: String,
    },
    /// A cell of the date column is not a date or period.
    #[error("model '{model}': {place}, cell {cell} in date column '{column}' holds {kind} '{value}', not a date; use a date cell, an ISO date such as 2024-07-01, a period such as 2024-07, Jan-2024, 2024M01, 2024-Q3 or Q3 2024, or a year such as 1935")]
    NotADate {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The column.
        column: String,
        /// The cell.
        cell: CellRef,
        /// The kind of value found.
        kind: &'static str,
        /// The value as text.
        value: String,
    },
    /// A fiscal label the job cannot read.
    #[error("model '{model}': {place}, cell {cell} in date column '{column}' holds '{value}', which {why}")]
    FiscalLabel {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The column.
        column: String,
        /// The cell.
        cell: CellRef,
        /// The text.
        value: String,
        /// Why and what to do.
        why: &'static str,
    },
    /// Two-digit years that cannot be one series.
    #[error("model '{model}': {place}, date column '{column}' writes years with two digits, read as 1970 to 2069: {low} is {low_year} and {high} is {high_year}, too far apart to be one series; write the years with four digits")]
    TwoDigitYears {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The column.
        column: String,
        /// The earliest label and its cell.
        low: String,
        /// Its year.
        low_year: i64,
        /// The latest label and its cell.
        high: String,
        /// Its year.
        high_year: i64,
    },
    /// A date written with slashes reads both ways round.
    #[error("model '{model}': {place}, cell {cell} in date column '{column}' holds '{value}', which reads as {day_first} (day first) or as {month_first} (month first), and no date of the column tells which; write `date_order = \"dmy\"` or `date_order = \"mdy\"` under [input]")]
    AmbiguousDate {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The column.
        column: String,
        /// The cell.
        cell: CellRef,
        /// The text.
        value: String,
        /// The reading with the day first, in words.
        day_first: String,
        /// The reading with the month first, in words.
        month_first: String,
    },
    /// The dates fit no frequency.
    #[error("model '{model}': cannot tell the period of date column '{column}': the smallest gap between dates is {gap} days; set `frequency` (day, week, month, quarter or year) in the model")]
    UnknownFrequency {
        /// The model.
        model: String,
        /// The column.
        column: String,
        /// Smallest gap in days.
        gap: i64,
    },
    /// A period label of another frequency than the series.
    #[error("model '{model}': {place}, cell {cell} in date column '{column}' holds '{value}', which is not a {frequency}; the series is by {frequency}, so write every period in the same way")]
    MixedFrequency {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The column.
        column: String,
        /// The cell.
        cell: CellRef,
        /// The value as text.
        value: String,
        /// The series' frequency.
        frequency: &'static str,
    },
    /// A single series with two rows in one period.
    #[error("model '{model}': {place}: cells {first} and {second} are both in period {period}; a single series has one row per period (remove the duplicate, or set `frequency` if the dates are finer than it)")]
    DuplicatePeriod {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The period label.
        period: String,
        /// The first cell.
        first: CellRef,
        /// The second cell.
        second: CellRef,
    },
    /// A season finer than the data.
    #[error("model '{model}': seasons by {by} need dates finer than a {frequency}; use a coarser season or daily dates")]
    SeasonTooFine {
        /// The model.
        model: String,
        /// The season.
        by: &'static str,
        /// The series' frequency.
        frequency: &'static str,
    },
    /// A response that cannot be logged.
    #[error("model '{model}': {place}, cell {cell} in response '{column}' holds {value}; `transform = \"log\"` needs every response value above zero")]
    NotPositive {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The column.
        column: String,
        /// The cell.
        cell: CellRef,
        /// The value.
        value: f64,
    },
    /// Every row has a blank in at least one used column.
    #[error("model '{model}': no usable rows in {place}: every row has a blank cell in at least one of the columns {columns}")]
    NoUsableRows {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The columns the model uses, quoted.
        columns: String,
    },
    /// A categorical column has more levels than a regression can use.
    #[error("model '{model}': categorical column '{column}' in {place} has {levels} levels in the {rows} rows used, {why}; a predictor with that many levels is an identifier rather than a category (list it nowhere, or group its levels into fewer), or raise `max_levels` under [input] if the levels are genuine")]
    TooManyLevels {
        /// The model.
        model: String,
        /// Where the column is, in words.
        place: String,
        /// The column.
        column: String,
        /// Its level count.
        levels: usize,
        /// Rows used.
        rows: usize,
        /// Which limit, in words.
        why: String,
    },
    /// A categorical column has a single level in the rows used.
    #[error("model '{model}': categorical column '{column}' has only one level ('{level}') in the rows used; a categorical predictor needs two or more levels")]
    OneLevel {
        /// The model.
        model: String,
        /// The column.
        column: String,
        /// Its only level.
        level: String,
    },
}

/// What a design-matrix column stands for.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum TermKind {
    /// The constant column of ones.
    Intercept,
    /// A numeric predictor entered as it is.
    Numeric,
    /// The period index 1, 2, … of the date column.
    Trend,
    /// Season indicators against a baseline season.
    Season {
        /// What seasons are counted by.
        by: SeasonBy,
        /// The baseline season, from 1.
        baseline: u32,
        /// Whether the job named the baseline.
        given: bool,
    },
    /// The product of two earlier terms (numeric or categorical).
    Interaction {
        /// Index of the first term in `Design::terms`.
        left: usize,
        /// Index of the second term.
        right: usize,
    },
    /// A numeric predictor and its powers up to `degree`.
    Polynomial {
        /// Highest power.
        degree: u32,
    },
    /// A categorical predictor: one indicator per non-baseline level.
    Categorical {
        /// The baseline level.
        baseline: String,
        /// How it was chosen.
        chosen: Baseline,
        /// Every level found in the rows used, sorted, baseline included.
        levels: Vec<String>,
    },
}

/// A model term: a group of design-matrix columns tested together.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Term {
    /// "Intercept", "trend", "season", the column name, or for a
    /// polynomial "x (degree 3)".
    pub name: String,
    /// The source column the term reads (empty for the intercept; the date
    /// column for trend and season).
    pub column: String,
    /// What kind of term.
    pub kind: TermKind,
    /// Indices of this term's columns in the design matrix.
    pub columns: std::ops::Range<usize>,
}

/// The response and design matrix of one model, over its usable rows.
#[derive(Debug, Clone)]
pub struct Design {
    /// The response column's name.
    pub response: String,
    /// Response values, one per used row.
    pub y: DVector<f64>,
    /// Design matrix: one row per used row, one column per coefficient.
    pub x: DesignMatrix,
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
    for column in numeric.iter().chain(&poly) {
        ctx.check_numbers(column, &mut usable)?;
    }
    let labels = model
        .categorical
        .iter()
        .map(|c| ctx.column(&c.column))
        .collect::<Result<Vec<_>, _>>()?;
    for column in &labels {
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
    let dropped = (0..table.rows.len())
        .filter(|i| keep.binary_search(i).is_err())
        .map(|i| table.rows[i])
        .collect();
    let mut keep = keep;
    let timing = match &dates {
        Some((column, stamps)) => {
            let t = time::timing(&ctx, column, stamps, &keep, model.frequency)?;
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
    drop(dates);
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
            parts.push(
                &t.column,
                "season",
                TermKind::Season {
                    by: season.by,
                    baseline: season.baseline,
                    given: season.baseline_given,
                },
                time::season_columns(season.by, season.baseline, seasons),
            );
        }
    }
    for (spec, column) in model.categorical.iter().zip(&labels) {
        let (kind, indicators) = indicators(&ctx, spec, column, &keep)?;
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
        for i in parts.terms[left].columns.clone() {
            for j in parts.terms[right].columns.clone() {
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
    Ok(Design {
        response: model.response.clone(),
        y: DVector::from_vec(y),
        x: DesignMatrix::new(rows, columns),
        names,
        terms: parts.terms,
        intercept: model.intercept,
        rows: keep.iter().map(|&i| table.rows[i]).collect(),
        dropped,
        timing,
        log_response: model.log_response,
    })
}

/// Cell `i` of a checked numeric column: its number (NaN if blank).
fn number(column: &Column, i: usize) -> f64 {
    match column.values.get(i) {
        Value::Number(x) => x,
        _ => f64::NAN,
    }
}

/// A row to predict: its period (for trend and season) and its predictor
/// values by column.
#[derive(Debug, Clone, Default)]
pub struct FutureRow {
    /// The period, when the model has a date column.
    pub period: Option<Period>,
    /// Predictor values by column name.
    pub values: HashMap<String, Value>,
}

/// Why a future row cannot be put in the design's terms.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum EncodeError {
    /// A predictor has no value.
    #[error("has no value for '{column}'")]
    Missing {
        /// The predictor.
        column: String,
    },
    /// A numeric predictor's value is not a number.
    #[error("gives '{column}' the {kind} '{value}', not a number")]
    NotANumber {
        /// The predictor.
        column: String,
        /// The kind of value.
        kind: &'static str,
        /// The value as text.
        value: String,
    },
    /// A categorical predictor's level is not in the data.
    #[error("gives '{column}' the level '{level}', which is not in the rows the model was fitted on; its levels are: {levels}")]
    UnseenLevel {
        /// The predictor.
        column: String,
        /// The level given.
        level: String,
        /// The known levels, quoted.
        levels: String,
    },
    /// The model needs a period and the row has none.
    #[error("has no period for the trend or season")]
    NoPeriod,
}

impl Design {
    /// Row `i` of the design matrix, low parts included.
    pub fn row(&self, i: usize) -> Vec<f64> {
        self.x.row(i)
    }

    /// The design restricted to the rows `keep` (indices into this design),
    /// with the same terms and coding: a back-test refits on it.
    pub fn subset(&self, keep: &[usize]) -> Design {
        Design {
            response: self.response.clone(),
            y: self.y.select_rows(keep),
            x: self.x.select_rows(keep),
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

    /// The design-matrix row of `row`, in the columns of `x`: the same
    /// coding as the data (powers, indicators against the baselines, the
    /// trend index counted from the first period, season indicators).
    ///
    /// # Errors
    /// [`EncodeError`] for a missing or unsuitable value, or an unseen level.
    pub fn encode(&self, row: &FutureRow) -> Result<Vec<f64>, EncodeError> {
        let mut out = Vec::with_capacity(self.x.ncols());
        let number = |column: &str| -> Result<f64, EncodeError> {
            match row.values.get(column) {
                None | Some(Value::Blank) => Err(EncodeError::Missing {
                    column: column.to_string(),
                }),
                Some(Value::Number(x)) if x.is_finite() => Ok(*x),
                Some(other) => Err(EncodeError::NotANumber {
                    column: column.to_string(),
                    kind: other.kind(),
                    value: other.to_string(),
                }),
            }
        };
        let period = || row.period.ok_or(EncodeError::NoPeriod);
        for term in &self.terms {
            match &term.kind {
                TermKind::Intercept => out.push(1.0),
                TermKind::Numeric => out.push(number(&term.column)?),
                TermKind::Polynomial { degree } => {
                    let x = number(&term.column)?;
                    out.extend(
                        powers(&term.column, &[x], *degree)
                            .iter()
                            .map(|c| c.column.get(0) + c.column.low(0)),
                    );
                }
                TermKind::Trend => {
                    let p = period()?;
                    let index = self.timing.as_ref().map_or(0, |t| t.index(p));
                    out.push(index as f64);
                }
                TermKind::Season { by, baseline, .. } => {
                    let season = period()?.season(*by).ok_or(EncodeError::NoPeriod)?;
                    out.extend(
                        (1..=by.labels().len() as u32)
                            .filter(|s| s != baseline)
                            .map(|s| f64::from(u8::from(s == season))),
                    );
                }
                TermKind::Interaction { left, right } => {
                    let (l, r) = (
                        self.terms[*left].columns.clone(),
                        self.terms[*right].columns.clone(),
                    );
                    for i in l {
                        for j in r.clone() {
                            out.push(out[i] * out[j]);
                        }
                    }
                }
                TermKind::Categorical {
                    baseline, levels, ..
                } => {
                    let level = match row.values.get(&term.column) {
                        None | Some(Value::Blank) => {
                            return Err(EncodeError::Missing {
                                column: term.column.clone(),
                            })
                        }
                        Some(v) => v.to_string(),
                    };
                    if !levels.contains(&level) {
                        return Err(EncodeError::UnseenLevel {
                            column: term.column.clone(),
                            level,
                            levels: quoted(levels),
                        });
                    }
                    out.extend(
                        levels
                            .iter()
                            .filter(|l| *l != baseline)
                            .map(|l| f64::from(u8::from(*l == level))),
                    );
                }
            }
        }
        Ok(out)
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

/// The columns x, x^2, …, x^degree, each power formed from the one before
/// in double-double arithmetic and kept as a rounded value plus its
/// remainder (an ill-conditioned polynomial fit such as NIST StRD Filip
/// needs those digits).
fn powers(column: &str, x: &[f64], degree: u32) -> Vec<NamedColumn> {
    let mut current: Vec<DoubleDouble> = x.iter().map(|&v| DoubleDouble::from_f64(v)).collect();
    let mut out = vec![NamedColumn::new(column, DesignColumn::values(x.to_vec()))];
    for k in 2..=degree {
        for (c, &v) in current.iter_mut().zip(x) {
            *c = *c * v;
        }
        out.push(NamedColumn::new(
            &format!("{column}^{k}"),
            DesignColumn::Values {
                hi: current.iter().map(|d| d.hi()).collect(),
                lo: Some(current.iter().map(|d| d.lo()).collect()),
            },
        ));
    }
    out
}

/// A categorical with more levels than this and more than half as many
/// levels as rows is refused: nearly a level per row is an identifier, and
/// its indicators would fit the rows almost exactly. Small textbook
/// layouts (a few groups of a few rows) stay under it.
const HALF_ROWS_ABOVE: usize = 20;

/// Treatment coding of one factor over the rows `keep`: levels sorted,
/// one 0/1 column per level other than the baseline, all reading one code
/// per row.
fn indicators(
    ctx: &Context<'_>,
    spec: &CategoricalSpec,
    column: &Column,
    keep: &[usize],
) -> Result<(TermKind, Vec<NamedColumn>), DesignError> {
    // Codes in order of first appearance, each cell's label formed once
    // per distinct cell.
    let mut by_cell: HashMap<u64, u32> = HashMap::new();
    let mut by_label: HashMap<String, u32> = HashMap::new();
    let mut found: Vec<String> = Vec::new();
    let first_codes: Vec<u32> = keep
        .iter()
        .map(|&i| {
            *by_cell.entry(column.values.key(i)).or_insert_with(|| {
                let label = column.values.get(i).to_string();
                *by_label.entry(label.clone()).or_insert_with(|| {
                    found.push(label);
                    (found.len() - 1) as u32
                })
            })
        })
        .collect();
    let limit = ctx.model.max_levels;
    if found.len() > limit || (found.len() > HALF_ROWS_ABOVE && found.len() * 2 > keep.len()) {
        return Err(DesignError::TooManyLevels {
            model: ctx.model.name.clone(),
            place: ctx.table.place(),
            column: spec.column.clone(),
            levels: found.len(),
            rows: keep.len(),
            why: if found.len() > limit {
                format!("more than the limit of {limit}")
            } else {
                "more than half as many levels as rows".into()
            },
        });
    }
    let mut order: Vec<u32> = (0..found.len() as u32).collect();
    order.sort_by(|&a, &b| found[a as usize].cmp(&found[b as usize]));
    let mut sorted_code = vec![0u32; found.len()];
    for (k, &code) in order.iter().enumerate() {
        sorted_code[code as usize] = k as u32;
    }
    let levels: Vec<String> = order.iter().map(|&c| found[c as usize].clone()).collect();
    let baseline = match &spec.baseline {
        Baseline::Given(level) if levels.contains(level) => level.clone(),
        Baseline::Given(level) => {
            return Err(DesignError::NoSuchBaseline {
                model: ctx.model.name.clone(),
                column: spec.column.clone(),
                baseline: level.clone(),
                levels: quoted(&levels),
            })
        }
        Baseline::FirstSorted => levels.first().cloned().unwrap_or_default(),
    };
    if levels.len() < 2 {
        return Err(DesignError::OneLevel {
            model: ctx.model.name.clone(),
            column: spec.column.clone(),
            level: baseline,
        });
    }
    let codes: Arc<[u32]> = first_codes
        .iter()
        .map(|&c| sorted_code[c as usize])
        .collect();
    let cols = levels
        .iter()
        .zip(0..)
        .filter(|(l, _)| **l != baseline)
        .map(|(level, code)| {
            NamedColumn::new(
                &format!("{}[{}]", spec.column, level),
                DesignColumn::Indicator {
                    codes: Arc::clone(&codes),
                    code,
                },
            )
        })
        .collect();
    Ok((
        TermKind::Categorical {
            baseline,
            chosen: spec.baseline.clone(),
            levels,
        },
        cols,
    ))
}

fn quoted(items: &[String]) -> String {
    items
        .iter()
        .map(|s| format!("'{s}'"))
        .collect::<Vec<_>>()
        .join(", ")
}

struct Context<'a> {
    table: &'a Table,
    model: &'a ModelSpec,
}

impl Context<'_> {
    fn column(&self, name: &str) -> Result<&Column, DesignError> {
        self.table.column(name).ok_or_else(|| {
            let names: Vec<String> = self.table.columns.iter().map(|c| c.name.clone()).collect();
            DesignError::NoSuchColumn {
                model: self.model.name.clone(),
                place: self.table.place(),
                column: name.to_string(),
                suggestion: closest(name, &names)
                    .map(|s| format!(" (did you mean '{s}'?)"))
                    .unwrap_or_default(),
                available: quoted(&names),
            }
        })
    }

    /// Checks that the column holds numbers or blanks, and marks its blank
    /// rows as not `usable`.
    fn check_numbers(&self, column: &Column, usable: &mut [bool]) -> Result<(), DesignError> {
        for (i, v) in column.values.iter().enumerate() {
            match v {
                Value::Blank => usable[i] = false,
                Value::Number(x) if x.is_finite() => {}
                Value::Number(x) => {
                    return Err(DesignError::NotFinite {
                        model: self.model.name.clone(),
                        place: self.table.place(),
                        column: column.name.clone(),
                        cell: self.table.cell(column, i),
                        value: x,
                    })
                }
                Value::Error(e) => return Err(self.error_cell(column, i, &e)),
                other => return Err(DesignError::NotANumber {
                    model: self.model.name.clone(),
                    place: self.table.place(),
                    column: column.name.clone(),
                    cell: self.table.cell(column, i),
                    kind: other.kind(),
                    value: other.to_string(),
                    hint: match other {
                        Value::Text(ref t) if looks_like_a_number(t) => " (it looks like a number stored as text, with separators, a sign in brackets, a percent or a currency sign: the tool does not guess what such text means; store the cell as a number)",
                        Value::Date(_) => " (a date; dates belong in a `trend` or `season` column)",
                        _ => "",
                    },
                }),
            }
        }
        Ok(())
    }

    /// Checks that the column holds no error cells, and marks its blank rows
    /// as not `usable`. Its other cells are level labels; numbers become
    /// their shortest decimal text ("3", "2.5").
    fn check_labels(&self, column: &Column, usable: &mut [bool]) -> Result<(), DesignError> {
        for (i, v) in column.values.iter().enumerate() {
            match v {
                Value::Blank => usable[i] = false,
                Value::Error(e) => return Err(self.error_cell(column, i, &e)),
                _ => {}
            }
        }
        Ok(())
    }

    fn error_cell(&self, column: &Column, i: usize, value: &str) -> DesignError {
        DesignError::ErrorCell {
            model: self.model.name.clone(),
            place: self.table.place(),
            column: column.name.clone(),
            cell: self.table.cell(column, i),
            value: value.to_string(),
        }
    }
}

/// Whether text reads as a number once thousands separators, a currency or
/// percent sign, or accounting brackets are taken off ("1,234", "(1,234)",
/// "12%", "$1,200"): the tool refuses such cells rather than guess, and
/// says why.
fn looks_like_a_number(text: &str) -> bool {
    let stripped: String = text
        .chars()
        .filter(|c| !matches!(c, ',' | ' ' | '$' | '€' | '£' | '%' | '(' | ')' | '\u{a0}'))
        .collect();
    !stripped.is_empty() && stripped != text && stripped.parse::<f64>().is_ok()
}

#[cfg(test)]
mod tests {
    use super::*;
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
}
