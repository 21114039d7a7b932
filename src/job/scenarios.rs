//! Scenarios: rows to predict that the job writes out or a sheet lists,
//! for any model, with or without dates.

use indexmap::IndexMap;

use super::model::hold_value;
use super::model_file::ScenariosFile;
use super::{HoldValue, ModelSpec};

/// Where a model's scenarios come from.
#[derive(Debug, Clone, PartialEq)]
pub enum ScenarioSpec {
    /// A sheet of the input: a `name` column and every predictor (and the
    /// date column of a model with one), one row per scenario.
    Sheet {
        /// The sheet.
        sheet: String,
        /// Its row of column names, counted from 1.
        header_row: u32,
    },
    /// Scenarios written in the job, in order.
    Rows(Vec<Scenario>),
}

/// One scenario written in the job.
#[derive(Debug, Clone, PartialEq)]
pub struct Scenario {
    /// Its name.
    pub name: String,
    /// The value of each predictor (and of the date column), by column.
    pub values: IndexMap<String, HoldValue>,
}

/// The scenarios table: a sheet or rows, each row named.
pub(super) fn scenario_spec(f: ScenariosFile) -> Result<ScenarioSpec, (String, String)> {
    if f.header_row.is_some() && f.sheet.is_none() {
        return Err((
            "scenarios.header_row".into(),
            "goes with `sheet`; remove it, or name the scenarios sheet".into(),
        ));
    }
    match (f.sheet, f.rows.is_empty()) {
        (Some(_), false) => Err((
            "scenarios.rows".into(),
            "give either `sheet` or `rows`, not both".into(),
        )),
        (None, true) => Err((
            "scenarios".into(),
            "lists no scenarios; give `sheet = \"Scenarios\"` or `rows = [{ name = \"...\", ... }]`"
                .into(),
        )),
        (Some(sheet), true) => Ok(ScenarioSpec::Sheet {
            sheet,
            header_row: f.header_row.unwrap_or(1).max(1),
        }),
        (None, false) => {
            let mut scenarios: Vec<Scenario> = Vec::with_capacity(f.rows.len());
            for (k, row) in f.rows.into_iter().enumerate() {
                let key = format!("scenarios.rows[{}]", k + 1);
                let mut values = IndexMap::new();
                let mut name = None;
                for (column, value) in row {
                    if column == "name" {
                        match value {
                            toml::Value::String(n) if !n.trim().is_empty() => name = Some(n),
                            _ => return Err((key, "`name` must be the scenario's name in quotes".into())),
                        }
                        continue;
                    }
                    values.insert(column.clone(), hold_value(&column, value).map_err(|m| (key.clone(), m))?);
                }
                let Some(name) = name else {
                    return Err((key, "has no `name`; name each scenario, e.g. name = \"East 1500\"".into()));
                };
                if scenarios.iter().any(|s| s.name == name) {
                    return Err((key, format!("the name '{name}' is used by an earlier scenario")));
                }
                scenarios.push(Scenario { name, values });
            }
            Ok(ScenarioSpec::Rows(scenarios))
        }
    }
}

/// Each scenario written in the job gives every predictor (and the date
/// column of a model with one) and nothing else.
pub(super) fn check_scenarios(spec: &ModelSpec) -> Result<(), (String, String)> {
    let Some(ScenarioSpec::Rows(rows)) = &spec.scenarios else {
        return Ok(());
    };
    let needed: Vec<&str> = spec
        .row_columns()
        .into_iter()
        .chain(spec.date_column())
        .collect();
    for (k, row) in rows.iter().enumerate() {
        let key = format!("scenarios.rows[{}]", k + 1);
        if let Some(missing) = needed.iter().find(|c| !row.values.contains_key(**c)) {
            return Err((
                key,
                format!(
                    "scenario '{}' has no value for '{missing}'; give every predictor{} a value",
                    row.name,
                    if spec.date_column().is_some() {
                        " and the date column"
                    } else {
                        ""
                    }
                ),
            ));
        }
        if let Some(extra) = row.values.keys().find(|c| !needed.contains(&c.as_str())) {
            return Err((
                key,
                format!(
                    "'{extra}' is not a predictor of this model; the scenario needs: {}",
                    needed.join(", ")
                ),
            ));
        }
    }
    Ok(())
}
