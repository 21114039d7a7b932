//! Scenarios: predictions for rows the job writes out or a sheet lists,
//! for any model, with or without dates.

use indexmap::IndexMap;
use serde::Serialize;

use super::{held_values, inputs, sheet_rows, ForecastError, Predicted, Predictor, SheetKind};
use crate::design::{Design, FutureRow};
use crate::fit::Fit;
use crate::job::{HoldValue, ModelSpec, ScenarioSpec};
use crate::period::{read_stamp, year_of_number};
use crate::source::{Table, Value};

/// One scenario's prediction, on the response's own scale.
#[derive(Debug, Clone, Serialize)]
pub struct ScenarioRow {
    /// The scenario's name.
    pub name: String,
    /// Its period label, for a model with a date column.
    pub period: Option<String>,
    /// The predictor values, as given.
    pub inputs: IndexMap<String, String>,
    /// The estimate and its intervals.
    #[serde(flatten)]
    pub prediction: Predicted,
}

/// The scenarios of a model, from the job's rows or from `sheet` (the
/// scenarios sheet, read by the caller).
///
/// # Errors
/// [`ForecastError`] for a scenario that cannot be coded, needs an aliased
/// coefficient, or has a date that is not a period of the model; a sheet
/// without a needed column.
pub fn scenarios(
    spec: &ModelSpec,
    design: &Design,
    fit: &Fit,
    sheet: Option<&Table>,
) -> Result<Vec<ScenarioRow>, ForecastError> {
    let predictors: Vec<&str> = spec.row_columns();
    let rows: Vec<(String, String, FutureRow)> = match (&spec.scenarios, sheet) {
        (None, _) | (Some(ScenarioSpec::Sheet { .. }), None) => return Ok(Vec::new()),
        (Some(ScenarioSpec::Rows(rows)), _) => {
            rows.iter()
                .map(|s| {
                    let period = match (&design.timing, spec.date_column()) {
                        (Some(timing), Some(column)) => {
                            let written = s.values.get(column);
                            let stamp = match written {
                                Some(HoldValue::Level(t)) => read_stamp(t, &spec.labels).ok(),
                                Some(HoldValue::Number(x)) => year_of_number(*x),
                                None => None,
                            };
                            Some(stamp.and_then(|s| s.period_like(timing.first)).ok_or_else(
                                || ForecastError::ScenarioPeriod {
                                    model: spec.name.clone(),
                                    scenario: s.name.clone(),
                                    value: written.map(hold_text).unwrap_or_default(),
                                    frequency: timing.frequency.name(),
                                },
                            )?)
                        }
                        _ => None,
                    };
                    let values = held_values(&s.values);
                    Ok((
                        s.name.clone(),
                        format!("scenario '{}'", s.name),
                        FutureRow { period, values },
                    ))
                })
                .collect::<Result<_, ForecastError>>()?
        }
        (Some(ScenarioSpec::Sheet { sheet: name, .. }), Some(table)) => {
            let names = table
                .columns
                .iter()
                .find(|c| c.name.trim().eq_ignore_ascii_case("name"))
                .ok_or_else(|| ForecastError::PlanColumn {
                    model: spec.name.clone(),
                    kind: SheetKind::Scenarios,
                    sheet: name.clone(),
                    header_row: table.header_row,
                    available: table
                        .columns
                        .iter()
                        .map(|c| format!("'{}'", c.name))
                        .collect::<Vec<_>>()
                        .join(", "),
                    column: "name".into(),
                })?;
            sheet_rows(spec, design, SheetKind::Scenarios, name, table, &predictors)?
                .into_iter()
                .enumerate()
                .map(|(i, (place, row))| {
                    let name = match names.values.get(i) {
                        Value::Blank => format!("row {}", table.rows[i]),
                        v => v.to_string(),
                    };
                    (name, place, row)
                })
                .collect()
        }
    };
    let predictor = Predictor::new(spec, design, fit);
    let history = &design.lag_history;
    rows.into_iter()
        .map(|(name, place, row)| {
            let p = predictor.predict(&place, &row, history)?;
            Ok(ScenarioRow {
                name,
                period: row.period.map(|p| p.to_string()),
                inputs: inputs(&predictors, &row),
                prediction: p,
            })
        })
        .collect()
}

/// A value written in the job, as text.
fn hold_text(v: &HoldValue) -> String {
    match v {
        HoldValue::Number(x) => x.to_string(),
        HoldValue::Level(l) => l.clone(),
    }
}
