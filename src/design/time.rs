//! The time side of a design: reading a date column into periods, telling
//! its frequency, ordering rows by period, and the trend and season columns.

use chrono::Datelike;

use crate::job::SeasonSpec;
use crate::period::{
    detect_frequency, has_two_digit_year, order_of, read_stamp, year_of_number, Frequency,
    LabelRules, Period, SeasonBy, Stamp, StampError,
};
use crate::source::{Column, Value};

use std::sync::Arc;

use super::{Context, DesignColumn, DesignError, NamedColumn};

/// The widest span of years that two-digit years may cover.
const TWO_DIGIT_SPAN: i64 = 60;

/// The periods of a model's used rows.
#[derive(Debug, Clone)]
pub struct Timing {
    /// The date column.
    pub column: String,
    /// The frequency, from the job or told from the data.
    pub frequency: Frequency,
    /// Whether the frequency was told from the data.
    pub detected: bool,
    /// The period of each used row, in row order (rows are sorted by it).
    pub periods: Vec<Period>,
    /// The first period: trend index 1.
    pub first: Period,
    /// Whether several rows share a period (panel data).
    pub panel: bool,
}

impl Timing {
    /// Trend index of a period: periods since the first, plus one.
    pub fn index(&self, period: Period) -> i64 {
        period.ordinal - self.first.ordinal + 1
    }

    /// The last period in the data.
    pub fn last(&self) -> Period {
        self.periods.iter().copied().max().unwrap_or(self.first)
    }
}

impl Context<'_> {
    /// The column as date stamps; `None` where the cell is blank.
    /// Dates written with slashes read in the job's `date_order`, or in
    /// the order the column's own dates leave no doubt about.
    pub(super) fn stamps(&self, column: &Column) -> Result<Vec<Option<Stamp>>, DesignError> {
        let stamps = self.read_stamps(column)?;
        self.check_two_digit_years(column, &stamps)?;
        Ok(stamps)
    }

    /// Refuses two-digit years that the 1970-2069 reading spreads over
    /// more than [`TWO_DIGIT_SPAN`] years: a series such as 1959-2009
    /// written "Q1-59" to "Q3-09" would otherwise be read as 1970-2069
    /// and put out of order.
    fn check_two_digit_years(
        &self,
        column: &Column,
        stamps: &[Option<Stamp>],
    ) -> Result<(), DesignError> {
        let mut years: Vec<(i64, usize)> = Vec::new();
        for (i, stamp) in stamps.iter().enumerate() {
            if let (Some(Stamp::Label(p)), Value::Text(t)) = (stamp, column.values.get(i)) {
                if has_two_digit_year(&t) {
                    years.push((i64::from(p.start().year()), i));
                }
            }
        }
        let (Some(low), Some(high)) = (years.iter().min(), years.iter().max()) else {
            return Ok(());
        };
        if high.0 - low.0 <= TWO_DIGIT_SPAN {
            return Ok(());
        }
        Err(DesignError::TwoDigitYears {
            model: self.model.name.clone(),
            place: self.table.place(),
            column: column.name.clone(),
            low: format!(
                "'{}' ({})",
                column.values.get(low.1),
                self.table.cell(column, low.1)
            ),
            low_year: low.0,
            high: format!(
                "'{}' ({})",
                column.values.get(high.1),
                self.table.cell(column, high.1)
            ),
            high_year: high.0,
        })
    }

    fn read_stamps(&self, column: &Column) -> Result<Vec<Option<Stamp>>, DesignError> {
        let rules = LabelRules {
            date_order: self.model.labels.date_order.or_else(|| {
                order_of(column.values.distinct_others().filter_map(|v| match v {
                    Value::Text(t) => Some(t.as_str()),
                    _ => None,
                }))
            }),
            ..self.model.labels
        };
        column
            .values
            .iter()
            .enumerate()
            .map(|(i, v)| match v {
                Value::Blank => Ok(None),
                Value::Date(ref text) | Value::Text(ref text) => match read_stamp(text, &rules) {
                    Ok(stamp) => Ok(Some(stamp)),
                    Err(StampError::Unknown) => Err(self.bad_date(column, i, &v)),
                    Err(StampError::NoFiscalYear) => Err(self.fiscal_label(
                        column,
                        i,
                        "is a fiscal period; say when the fiscal year starts with `fiscal_year_start = \"Apr\"` (its first month) under [input]",
                    )),
                    Err(StampError::FiscalQuarter) => Err(self.fiscal_label(
                        column,
                        i,
                        "is a fiscal quarter, but the fiscal year does not start with a calendar quarter (Jan, Apr, Jul or Oct); use fiscal months (P01 to P12) or check `fiscal_year_start`",
                    )),
                    Err(StampError::Ambiguous {
                        day_first,
                        month_first,
                    }) => Err(DesignError::AmbiguousDate {
                        model: self.model.name.clone(),
                        place: self.table.place(),
                        column: column.name.clone(),
                        cell: self.table.cell(column, i),
                        value: text.to_string(),
                        day_first: day_first.format("%-d %B %Y").to_string(),
                        month_first: month_first.format("%B %-d %Y").to_string(),
                    }),
                },
                Value::Number(x) => year_of_number(x)
                    .map(Some)
                    .ok_or_else(|| self.bad_date(column, i, &v)),
                Value::Error(e) => Err(self.error_cell(column, i, &e)),
                other => Err(self.bad_date(column, i, &other)),
            })
            .collect()
    }

    fn fiscal_label(&self, column: &Column, i: usize, why: &'static str) -> DesignError {
        DesignError::FiscalLabel {
            model: self.model.name.clone(),
            place: self.table.place(),
            column: column.name.clone(),
            cell: self.table.cell(column, i),
            value: column.values.get(i).to_string(),
            why,
        }
    }

    fn bad_date(&self, column: &Column, i: usize, value: &Value) -> DesignError {
        DesignError::NotADate {
            model: self.model.name.clone(),
            place: self.table.place(),
            column: column.name.clone(),
            cell: self.table.cell(column, i),
            kind: value.kind(),
            value: value.to_string(),
        }
    }
}

/// Periods of the used rows `keep` (indices into the table), with the
/// frequency from the job or the data. Refuses a single series with two
/// rows in one period (with a `series` column, a series with two rows in
/// one period), and a period label of another frequency.
pub(super) fn timing(
    ctx: &Context<'_>,
    column: &Column,
    stamps: &[Option<Stamp>],
    keep: &[usize],
    frequency: Option<Frequency>,
    series: Option<&Column>,
) -> Result<Timing, DesignError> {
    let used: Vec<Stamp> = keep.iter().filter_map(|&i| stamps[i]).collect();
    let (frequency, detected) = match frequency {
        Some(f) => (f, false),
        None => match detect_frequency(&used) {
            Ok(Some(f)) => (f, true),
            Ok(None) => (Frequency::Month, true),
            Err(gap) => {
                return Err(DesignError::UnknownFrequency {
                    model: ctx.model.name.clone(),
                    column: column.name.clone(),
                    gap,
                })
            }
        },
    };
    let fiscal = ctx.model.labels.fiscal_start;
    let calendar = Period {
        fiscal: if fiscal > 1 { fiscal } else { 0 },
        week_start: if frequency == Frequency::Week {
            week_start(&used)
        } else {
            0
        },
        ..Period::first_of(frequency)
    };
    let mut periods = Vec::with_capacity(keep.len());
    for &i in keep {
        let stamp = stamps[i].ok_or_else(|| ctx.bad_date(column, i, &Value::Blank))?;
        let period = stamp
            .period_like(calendar)
            .ok_or_else(|| DesignError::MixedFrequency {
                model: ctx.model.name.clone(),
                place: ctx.table.place(),
                column: column.name.clone(),
                cell: ctx.table.cell(column, i),
                value: column.values.get(i).to_string(),
                frequency: frequency.name(),
            })?;
        periods.push(period);
    }
    let mut counts = std::collections::BTreeMap::<Period, Vec<usize>>::new();
    for (k, p) in periods.iter().enumerate() {
        counts.entry(*p).or_default().push(keep[k]);
    }
    let mut sizes: Vec<usize> = counts.values().map(Vec::len).collect();
    sizes.sort_unstable();
    let median = sizes.get(sizes.len() / 2).copied().unwrap_or(1);
    if let Some(series) = series {
        // Panel data named by series: one row per series and period.
        let mut seen = std::collections::BTreeMap::<(String, Period), usize>::new();
        for (&i, &p) in keep.iter().zip(&periods) {
            let label = series.values.get(i).to_string();
            if let Some(&first) = seen.get(&(label.clone(), p)) {
                return Err(DesignError::DuplicatePeriod {
                    model: ctx.model.name.clone(),
                    place: ctx.table.place(),
                    period: format!("{p} of series '{label}' ('{}')", series.name),
                    first: ctx.table.cell(column, first),
                    second: ctx.table.cell(column, i),
                });
            }
            seen.insert((label, p), i);
        }
    } else if median == 1 {
        if let Some((period, rows)) = counts.iter().find(|(_, rows)| rows.len() > 1) {
            return Err(DesignError::DuplicatePeriod {
                model: ctx.model.name.clone(),
                place: ctx.table.place(),
                period: period.to_string(),
                first: ctx.table.cell(column, rows[0]),
                second: ctx.table.cell(column, rows[1]),
            });
        }
    }
    let first = counts.keys().next().copied().unwrap_or(calendar);
    Ok(Timing {
        column: column.name.clone(),
        frequency,
        detected,
        periods,
        first,
        panel: median > 1,
    })
}

/// The weekday weekly periods start on (1 for Monday to 7 for Sunday): the
/// one most of the dates fall on, so that each row's week starts on its own
/// date and takes that date's month; 0 (ISO weeks from Monday, labelled
/// "2024-W05") when the stamps are week labels, not dates.
fn week_start(stamps: &[Stamp]) -> u8 {
    let mut counts = [0usize; 8];
    for stamp in stamps {
        if let Stamp::Date(d) = stamp {
            counts[d.weekday().number_from_monday() as usize] += 1;
        }
    }
    // The first of the most common weekdays; 0 when no stamp is a date.
    (1..=7u8)
        .rev()
        .max_by_key(|&w| counts[usize::from(w)])
        .filter(|&w| counts[usize::from(w)] > 0)
        .unwrap_or(0)
}

/// The season (from 1) of each period, or an error when the frequency is
/// too coarse for the season (weekdays of monthly data).
pub(super) fn seasons(
    ctx: &Context<'_>,
    spec: &SeasonSpec,
    timing: &Timing,
) -> Result<Vec<u32>, DesignError> {
    timing
        .periods
        .iter()
        .map(|p| {
            p.season(spec.by).ok_or_else(|| DesignError::SeasonTooFine {
                model: ctx.model.name.clone(),
                by: spec.by.name(),
                frequency: timing.frequency.name(),
            })
        })
        .collect()
}

/// One 0/1 column per season other than the `baseline` (per season when
/// there is none), named `season[Feb]`, `season[Q2]`, `season[Tue]`, all
/// reading the rows' `seasons`. A season with no rows gives a column of
/// zeros, which the fit reports as aliased.
pub(super) fn season_columns(
    by: SeasonBy,
    baseline: Option<u32>,
    seasons: Vec<u32>,
) -> Vec<NamedColumn> {
    let codes: Arc<[u32]> = seasons.into();
    by.labels()
        .iter()
        .zip(1..)
        .filter(|(_, s)| Some(*s) != baseline)
        .map(|(label, s)| NamedColumn {
            name: format!("season[{label}]"),
            column: DesignColumn::Indicator {
                codes: Arc::clone(&codes),
                code: s,
            },
        })
        .collect()
}
