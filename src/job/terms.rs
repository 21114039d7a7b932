//! The forecaster's terms of a model as checked: logs and lags of
//! predictors, events and Fourier seasons.

use indexmap::IndexMap;

use super::model_file::{FourierFile, OneOrMany};
use crate::period::{read_stamp, Frequency, LabelRules, Stamp};

/// Longest lag accepted, in periods.
pub const MAX_LAG: u32 = 1000;

/// A lagged predictor: the column's values `lags` periods earlier, each lag
/// a term `column (lag k)`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct LagSpec {
    /// The column.
    pub column: String,
    /// The lags, in periods, in job order.
    pub lags: Vec<u32>,
}

/// What an event term is over the periods.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum EventKind {
    /// 0 before its period, 1 from it on: a lasting shift of the level.
    Step,
    /// 1 in its periods only: a one-off event.
    Spike,
    /// 0 before its period, then 1, 2, 3, … counted in periods from it: a
    /// change of trend.
    Ramp,
}

impl EventKind {
    /// The job-file key: `step`, `spike` or `ramp`.
    pub fn key(self) -> &'static str {
        match self {
            EventKind::Step => "step",
            EventKind::Spike => "spike",
            EventKind::Ramp => "ramp",
        }
    }
}

/// An event term, named after its key in the job.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct EventSpec {
    /// The term's name.
    pub name: String,
    /// Step, spike or ramp.
    pub kind: EventKind,
    /// Its periods as written in the job (one for a step or ramp).
    pub written: Vec<String>,
    /// The same, read as dates or period labels.
    pub at: Vec<Stamp>,
}

/// The cycle of a Fourier term.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Cycle {
    /// A year.
    Year,
    /// A week (for daily data).
    Week,
}

impl Cycle {
    /// Periods of `frequency` in one cycle: 12 months, 4 quarters, 52.18
    /// weeks (365.25 / 7) or 365.25 days a year, 7 days a week; `None`
    /// when the period is not shorter than the cycle.
    pub fn periods(self, frequency: Frequency) -> Option<f64> {
        match (self, frequency) {
            (Cycle::Year, Frequency::Day) => Some(365.25),
            (Cycle::Year, Frequency::Week) => Some(365.25 / 7.0),
            (Cycle::Year, Frequency::Month) => Some(12.0),
            (Cycle::Year, Frequency::Quarter) => Some(4.0),
            (Cycle::Week, Frequency::Day) => Some(7.0),
            _ => None,
        }
    }

    /// The cycle's name, as the job writes it.
    pub fn name(self) -> &'static str {
        match self {
            Cycle::Year => "year",
            Cycle::Week => "week",
        }
    }
}

/// Fourier seasons: `pairs` sine and cosine pairs of the cycle.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FourierSpec {
    /// The date column.
    pub column: String,
    /// The cycle.
    pub cycle: Cycle,
    /// Sine and cosine pairs, from 1.
    pub pairs: u32,
}

/// A rule broken by a term's table: the key under the model and the
/// message.
type Refusal = (String, String);

/// The lags of `lag = { column = [1, 2] }`.
pub(super) fn lag_specs(table: IndexMap<String, OneOrMany<u32>>) -> Result<Vec<LagSpec>, Refusal> {
    table
        .into_iter()
        .map(|(column, lags)| {
            let lags = lags.into_vec();
            let key = format!("lag.{column}");
            if lags.is_empty() {
                return Err((key, "lists no lags; write e.g. [1] or [1, 2]".into()));
            }
            for (k, &lag) in lags.iter().enumerate() {
                if !(1..=MAX_LAG).contains(&lag) {
                    return Err((
                        key,
                        format!("lag {lag} is not between 1 and {MAX_LAG} periods"),
                    ));
                }
                if lags[..k].contains(&lag) {
                    return Err((key, format!("lag {lag} is listed twice")));
                }
            }
            Ok(LagSpec { column, lags })
        })
        .collect()
}

/// The events of `step`, `spike` and `ramp`, in that order, their periods
/// read by the job's label rules.
pub(super) fn event_specs(
    step: IndexMap<String, String>,
    spike: IndexMap<String, OneOrMany<String>>,
    ramp: IndexMap<String, String>,
    labels: &LabelRules,
) -> Result<Vec<EventSpec>, Refusal> {
    let tables = step
        .into_iter()
        .map(|(n, at)| (EventKind::Step, n, vec![at]))
        .chain(
            spike
                .into_iter()
                .map(|(n, at)| (EventKind::Spike, n, at.into_vec())),
        )
        .chain(
            ramp.into_iter()
                .map(|(n, at)| (EventKind::Ramp, n, vec![at])),
        );
    let mut events: Vec<EventSpec> = Vec::new();
    for (kind, name, written) in tables {
        let key = format!("{}.{name}", kind.key());
        if name.trim().is_empty() || ["Intercept", "trend", "season"].contains(&name.as_str()) {
            return Err((
                key,
                format!(
                    "'{name}' cannot name an event; choose a name of your own, such as new_law"
                ),
            ));
        }
        if let Some(earlier) = events.iter().find(|e| e.name == name) {
            return Err((
                key,
                format!(
                    "the name '{name}' is already a {} event; name each event once",
                    earlier.kind.key()
                ),
            ));
        }
        if written.is_empty() {
            return Err((key, "lists no periods; write e.g. [\"2024-03\"]".into()));
        }
        let at = written
            .iter()
            .map(|text| {
                read_stamp(text, labels).map_err(|_| {
                    (
                        key.clone(),
                        format!("'{text}' is not a date or period; write it as the date column does, e.g. \"2024-03\", \"2024-Q1\" or \"2024-03-01\""),
                    )
                })
            })
            .collect::<Result<Vec<_>, _>>()?;
        events.push(EventSpec {
            name,
            kind,
            written,
            at,
        });
    }
    Ok(events)
}

/// The Fourier table, its cycle and pair count checked.
pub(super) fn fourier_spec(f: FourierFile) -> Result<FourierSpec, Refusal> {
    let cycle = match f.period.to_ascii_lowercase().as_str() {
        "year" | "yearly" => Cycle::Year,
        "week" | "weekly" => Cycle::Week,
        _ => {
            return Err((
                "fourier.period".into(),
                format!(
                    "'{}' is not a cycle; use \"year\" (or \"week\" for daily data)",
                    f.period
                ),
            ))
        }
    };
    if f.pairs == 0 {
        return Err(("fourier.pairs".into(), "must be at least 1".into()));
    }
    Ok(FourierSpec {
        column: f.column,
        cycle,
        pairs: f.pairs,
    })
}
