//! Texts of the job file that the report writes into cells: each must fit
//! in one cell, checked when the job is read so a job that cannot be
//! reported stops at once (exit status 2, the key named) rather than after
//! the whole fit.

use super::{Baseline, ForecastSpec, HoldValue, ModelSpec};

/// The most characters a workbook cell holds.
pub const CELL_LIMIT: usize = 32_767;

/// The first text of the job, by its job-file key, that is longer than a
/// cell holds: `(key, message)`.
pub fn too_long(title: &str, models: &[ModelSpec]) -> Option<(String, String)> {
    let mut texts: Vec<(String, &str)> = vec![("title".into(), title)];
    for (i, m) in models.iter().enumerate() {
        let key = |k: &str| format!("model[{}].{k}", i + 1);
        texts.push((key("name"), &m.name));
        texts.push((key("response"), &m.response));
        texts.extend(m.numeric.iter().map(|c| (key("numeric"), c.as_str())));
        texts.extend(m.poly.iter().map(|p| (key("poly"), p.column.as_str())));
        texts.extend(
            m.categorical
                .iter()
                .map(|c| (key("categorical"), c.column.as_str())),
        );
        if let Some(date) = m.date_column() {
            texts.push((key("trend"), date));
        }
        for c in &m.categorical {
            if let Baseline::Given(level) = &c.baseline {
                texts.push((key(&format!("categorical.{}", c.column)), level));
            }
        }
        match &m.forecast {
            Some(ForecastSpec::Horizon { hold, .. }) => {
                for (column, value) in hold {
                    if let HoldValue::Level(level) = value {
                        texts.push((key(&format!("forecast.hold.{column}")), level));
                    }
                }
            }
            Some(ForecastSpec::Plan { sheet, .. }) => {
                texts.push((key("forecast.plan_sheet"), sheet))
            }
            None => {}
        }
    }
    texts.into_iter().find_map(|(key, text)| {
        let length = text.chars().count();
        (length > CELL_LIMIT).then(|| {
            (
                key,
                format!(
                    "is {length} characters long, more than the {CELL_LIMIT} a report cell holds; shorten it"
                ),
            )
        })
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_name_longer_than_a_cell_is_named_by_its_key() {
        let job = crate::job::parse(
            std::path::Path::new("job.toml"),
            "[input]\nworkbook = \"d.xlsx\"\n[[model]]\nname = \"m\"\nresponse = \"y\"\nnumeric = [\"x\"]\n",
        )
        .unwrap();
        assert_eq!(too_long(&job.title, &job.models), None);
        let mut models = job.models.clone();
        models[0].numeric[0] = "x".repeat(CELL_LIMIT + 1);
        assert_eq!(
            too_long("t", &models),
            Some((
                "model[1].numeric".to_string(),
                "is 32768 characters long, more than the 32767 a report cell holds; shorten it"
                    .to_string()
            ))
        );
    }
}
