//! Lags of predictors, taken by period: the value of a column a number of
//! periods before the row's own, from the data or from earlier forecast
//! rows.

use std::collections::{BTreeMap, HashMap};

use super::{Context, DesignError, FutureRow, Timing};
use crate::job::LagSpec;
use crate::period::{Period, Stamp};
use crate::source::{Column, Value};

/// Refuses lags of a sheet with several rows in a period (panel data):
/// which row's value a lag would take is not defined.
pub(super) fn refuse_panel(
    ctx: &Context<'_>,
    column: &Column,
    keep: &[usize],
    timing: &Timing,
) -> Result<(), DesignError> {
    if !timing.panel {
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

/// The rows of `keep` (with their periods in `timing`) whose every lag has
/// a value; the trend index then counts from the first of them.
pub(super) fn keep_rows_with_lags(
    lags: &[LagSpec],
    history: &LagHistory,
    keep: Vec<usize>,
    timing: Timing,
) -> (Vec<usize>, Timing) {
    let complete = |period: Period| {
        lags.iter().all(|spec| {
            spec.lags
                .iter()
                .all(|&lag| history.value(&spec.column, period, lag).is_some())
        })
    };
    let (keep, periods): (Vec<usize>, Vec<Period>) = keep
        .into_iter()
        .zip(timing.periods)
        .filter(|&(_, p)| complete(p))
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

/// Values of the lagged columns by period: the data's, then those of the
/// forecast rows, so that a forecast row's lags read both.
#[derive(Debug, Clone, Default)]
pub struct LagHistory {
    values: HashMap<String, BTreeMap<Period, f64>>,
}

impl LagHistory {
    /// The data's values of the lagged `columns` by period: every row with
    /// a period and a number, whether or not the fit uses the row itself
    /// (a row without a response still says what the driver was).
    pub(super) fn of_data(columns: &[&Column], stamps: &[Option<Stamp>], timing: &Timing) -> Self {
        let mut values = HashMap::new();
        for column in columns {
            let by_period: &mut BTreeMap<Period, f64> =
                values.entry(column.name.clone()).or_default();
            for (i, stamp) in stamps.iter().enumerate() {
                let (Some(stamp), Value::Number(x)) = (stamp, column.values.get(i)) else {
                    continue;
                };
                if let Some(period) = stamp.period_like(timing.first) {
                    by_period.insert(period, x);
                }
            }
        }
        LagHistory { values }
    }

    /// `column`'s value `lag` periods before `period`, if any row has it.
    pub fn value(&self, column: &str, period: Period, lag: u32) -> Option<f64> {
        self.values
            .get(column)?
            .get(&period.plus(-i64::from(lag)))
            .copied()
    }

    /// Adds a forecast row's numbers of the lagged columns, at its period.
    pub fn record(&mut self, row: &FutureRow) {
        let Some(period) = row.period else {
            return;
        };
        for (column, by_period) in &mut self.values {
            if let Some(Value::Number(x)) = row.values.get(column) {
                by_period.insert(period, *x);
            }
        }
    }
}
