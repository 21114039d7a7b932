//! Lags of predictors, taken by period: the value of a column a number of
//! periods before the row's own, from the data or from earlier forecast
//! rows.

use std::collections::{BTreeMap, HashMap};

use super::{Context, DesignError, FutureRow, Timing};
use crate::job::LagSpec;
use crate::period::{Period, Stamp};
use crate::source::{Column, Value};

/// Values of the lagged columns by series and period: the data's, then
/// those of the forecast rows, so that a forecast row's lags read both.
/// Without a series column every row is of one series, labelled "".
#[derive(Debug, Clone, Default)]
pub struct LagHistory {
    /// The column naming each series, when the data has several.
    series: Option<String>,
    /// (column, series label) to the values by period.
    values: HashMap<(String, String), BTreeMap<Period, f64>>,
}

impl LagHistory {
    /// The data's values of the lagged `columns` by series and period:
    /// every row with a period and a number, whether or not the fit uses
    /// the row itself (a row without a response still says what the driver
    /// was).
    pub(super) fn of_data(
        columns: &[&Column],
        series: Option<&Column>,
        stamps: &[Option<Stamp>],
        timing: &Timing,
    ) -> Self {
        let mut values: HashMap<(String, String), BTreeMap<Period, f64>> = HashMap::new();
        for column in columns {
            for (i, stamp) in stamps.iter().enumerate() {
                let (Some(stamp), Value::Number(x)) = (stamp, column.values.get(i)) else {
                    continue;
                };
                let Some(period) = stamp.period_like(timing.first) else {
                    continue;
                };
                let label = series
                    .map(|s| s.values.get(i).to_string())
                    .unwrap_or_default();
                values
                    .entry((column.name.clone(), label))
                    .or_default()
                    .insert(period, x);
            }
        }
        LagHistory {
            series: series.map(|s| s.name.clone()),
            values,
        }
    }

    /// The series label of a row with `values` by column.
    fn label(&self, values: &HashMap<String, Value>) -> String {
        self.series
            .as_ref()
            .and_then(|s| values.get(s))
            .map(Value::to_string)
            .unwrap_or_default()
    }

    /// `column`'s value `lag` periods before `period` in the series
    /// `label`, if any row has it.
    pub fn value(&self, column: &str, label: &str, period: Period, lag: u32) -> Option<f64> {
        self.values
            .get(&(column.to_string(), label.to_string()))?
            .get(&period.plus(-i64::from(lag)))
            .copied()
    }

    /// [`LagHistory::value`] for a forecast row: its series from its
    /// values.
    pub fn value_for(
        &self,
        column: &str,
        row: &FutureRow,
        period: Period,
        lag: u32,
    ) -> Option<f64> {
        self.value(column, &self.label(&row.values), period, lag)
    }

    /// Adds a forecast row's numbers of the lagged columns, at its period
    /// in its series.
    pub fn record(&mut self, row: &FutureRow) {
        let Some(period) = row.period else {
            return;
        };
        let label = self.label(&row.values);
        for ((column, series), by_period) in &mut self.values {
            if *series != label {
                continue;
            }
            if let Some(Value::Number(x)) = row.values.get(column) {
                by_period.insert(period, *x);
            }
        }
    }
}

/// Refuses lags of a sheet with several rows in a period and no series
/// column: which row's value a lag would take is not defined.
pub(super) fn refuse_panel(
    ctx: &Context<'_>,
    column: &Column,
    keep: &[usize],
    timing: &Timing,
) -> Result<(), DesignError> {
    if !timing.panel || ctx.model.series.is_some() {
        return Ok(());
    }
    let mut first_row: BTreeMap<Period, usize> = BTreeMap::new();
    for (&i, &period) in keep.iter().zip(&timing.periods) {
        if let Some(&first) = first_row.get(&period) {
            return Err(DesignError::LagsOfPanel {
                model: ctx.model.name.clone(),
                period: period.to_string(),
                first: ctx.table.cell(column, first),
                second: ctx.table.cell(column, i),
            });
        }
        first_row.insert(period, i);
    }
    Ok(())
}

/// The rows of `keep` (with their periods in `timing` and their series
/// labels by `label_of`) whose every lag has a value; the trend index then
/// counts from the first of them.
pub(super) fn keep_rows_with_lags(
    lags: &[LagSpec],
    history: &LagHistory,
    label_of: impl Fn(usize) -> String,
    keep: Vec<usize>,
    timing: Timing,
) -> (Vec<usize>, Timing) {
    let complete = |i: usize, period: Period| {
        let label = label_of(i);
        lags.iter().all(|spec| {
            spec.lags
                .iter()
                .all(|&lag| history.value(&spec.column, &label, period, lag).is_some())
        })
    };
    let (keep, periods): (Vec<usize>, Vec<Period>) = keep
        .into_iter()
        .zip(timing.periods)
        .filter(|&(i, p)| complete(i, p))
        .unzip();
    let first = periods.iter().min().copied().unwrap_or(timing.first);
    (
        keep,
        Timing {
            periods,
            first,
            ..timing
        },
    )
}
