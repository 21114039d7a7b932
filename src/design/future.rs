//! Rows to predict put in a design's terms: their trend index, season and
//! the indicators of their levels, as the fitted rows were coded.

use std::collections::HashMap;

use super::events::event_value;
use super::fourier::fourier_values;
use super::polynomial::powers;
use super::{quoted, Design, LagHistory, TermKind};
use crate::period::Period;
use crate::source::Value;

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
    /// A predictor under `log` at or below zero.
    #[error("gives '{column}' the value {value}, which has no log; `log` needs values above zero")]
    NotPositive {
        /// The predictor.
        column: String,
        /// The value.
        value: f64,
    },
    /// A lag reaches a period with no value in the data or an earlier row.
    #[error("needs '{column}' of {period} for its lag {lag}, and neither the data nor an earlier forecast row has it")]
    NoLag {
        /// The predictor.
        column: String,
        /// The lag.
        lag: u32,
        /// The period the lag reaches.
        period: String,
    },
    /// The model needs a period and the row has none.
    #[error("has no period for the trend or season")]
    NoPeriod,
}

impl Design {
    /// The design-matrix row of `row`, in the columns of `x`: the same
    /// coding as the data (powers, logs, indicators against the baselines,
    /// the trend index counted from the first period, season indicators,
    /// Fourier pairs, events), its lags read from `history` (the data's and
    /// earlier forecast rows' values).
    ///
    /// # Errors
    /// [`EncodeError`] for a missing or unsuitable value, an unseen level or
    /// a lag with no value.
    pub fn encode(&self, row: &FutureRow, history: &LagHistory) -> Result<Vec<f64>, EncodeError> {
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
                TermKind::Trend => out.push(self.index_of(period()?) as f64),
                TermKind::Log => {
                    let x = number(&term.column)?;
                    if x <= 0.0 {
                        return Err(EncodeError::NotPositive {
                            column: term.column.clone(),
                            value: x,
                        });
                    }
                    out.push(x.ln());
                }
                TermKind::Lag { lag } => {
                    let p = period()?;
                    let value = history
                        .value_for(&term.column, row, p, *lag)
                        .ok_or_else(|| EncodeError::NoLag {
                            column: term.column.clone(),
                            lag: *lag,
                            period: p.plus(-i64::from(*lag)).to_string(),
                        })?;
                    out.push(value);
                }
                TermKind::Event { kind, at } => out.push(event_value(*kind, at, period()?)),
                TermKind::Fourier { per_cycle, pairs } => {
                    out.extend(fourier_values(*per_cycle, *pairs, self.index_of(period()?)));
                }
                TermKind::Season {
                    by,
                    baseline,
                    every_level,
                    ..
                } => {
                    let season = period()?.season(*by).ok_or(EncodeError::NoPeriod)?;
                    out.extend(
                        (1..=by.labels().len() as u32)
                            .filter(|s| *every_level || s != baseline)
                            .map(|s| f64::from(u8::from(s == season))),
                    );
                }
                TermKind::Interaction { left, right } => {
                    let (l, r) = (
                        self.terms[*left].contrast_columns(),
                        self.terms[*right].contrast_columns(),
                    );
                    for i in l {
                        for &j in &r {
                            out.push(out[i] * out[j]);
                        }
                    }
                }
                TermKind::Categorical {
                    baseline,
                    levels,
                    every_level,
                    ..
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
                            .filter(|l| *every_level || *l != baseline)
                            .map(|l| f64::from(u8::from(*l == level))),
                    );
                }
            }
        }
        Ok(out)
    }

    /// The trend index of `period` (0 without a date column).
    fn index_of(&self, period: Period) -> i64 {
        self.timing.as_ref().map_or(0, |t| t.index(period))
    }
}
