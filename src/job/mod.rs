//! The job file: what to read, which models to fit, where to write.
//!
//! Two stages, as the rest of the pipeline expects: [`JobFile`] mirrors the
//! TOML text exactly (unknown keys are refused), and [`Job`] is the checked
//! value every later stage works from, with paths resolved against the job
//! file's folder and defaults filled in. Checks that need the data (does a
//! column exist, is a baseline one of its levels) belong to `design`, which
//! sees the table.

use std::collections::HashSet;
use std::path::{Path, PathBuf};

use serde::Deserialize;

use crate::period::Frequency;

mod cell_text;
mod estimation;
mod input;
mod model;
mod model_file;
mod scenarios;
mod terms;

pub use self::estimation::{Errors, Robust};
use self::model::{check_roles, forecast_spec, season_spec};
pub use self::model_file::{
    CategoricalFile, ForecastFile, FourierFile, ModelFile, OneOrMany, ScenariosFile, SeasonFile,
};
pub use self::scenarios::{Scenario, ScenarioSpec};
pub use self::terms::{Cycle, EventKind, EventSpec, FourierSpec, LagSpec, MAX_LAG};

pub use input::{Area, CellRange, CsvFormat, Encoding, InputFile, Limits, Reading, SummaryRows};
pub use model::{
    Baseline, CategoricalSpec, ForecastSpec, HoldValue, ModelSpec, PolySpec, SeasonSpec, MAX_DEGREE,
};

/// Most levels a categorical column may have unless `max_levels` under
/// [input] says otherwise.
pub const DEFAULT_MAX_LEVELS: usize = 500;

/// Most models a job may list unless `max_models` says otherwise.
pub const DEFAULT_MAX_MODELS: usize = 1000;

/// The confidence level used for intervals when a model does not set one.
pub const DEFAULT_CONFIDENCE: f64 = 0.95;

/// An error in the job file itself: it could not be read, parsed or checked.
#[derive(Debug, thiserror::Error)]
pub enum JobError {
    /// The job file could not be read from disk.
    #[error("cannot read job file {path}: {source}")]
    Read {
        /// The job file.
        path: PathBuf,
        /// The operating system's reason.
        source: std::io::Error,
    },
    /// The TOML text is malformed or does not match the job-file layout.
    #[error("job file {path} is not valid: {message}")]
    Parse {
        /// The job file.
        path: PathBuf,
        /// The toml crate's whole message, with line and column.
        message: String,
    },
    /// The TOML is well formed but a value breaks a rule of the job file.
    #[error("job file {path}, key `{key}`: {message}")]
    Invalid {
        /// The job file.
        path: PathBuf,
        /// The offending key, written as it appears in the file.
        key: String,
        /// What is wrong and what to do.
        message: String,
    },
}

/// The job file exactly as written, before any checks.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct JobFile {
    /// Title shown at the top of the overview sheet.
    pub title: Option<String>,
    /// Where the data comes from.
    pub input: InputFile,
    /// Where the report goes; optional.
    #[serde(default)]
    pub output: OutputFile,
    /// p-value above which the suggested model drops a term; default 0.05.
    pub suggest_threshold: Option<f64>,
    /// `false`: no suggested smaller models (a model's own `suggest`
    /// overrides it).
    pub suggest: Option<bool>,
    /// Most models a job may list; default [`DEFAULT_MAX_MODELS`].
    pub max_models: Option<usize>,
    /// The model the Summary sheet leads with; default the first.
    pub summary_model: Option<String>,
    /// Last run's results JSON, relative to the job file: the report then
    /// shows what changed and how last run's forecasts did.
    pub compare_with: Option<PathBuf>,
    /// The models to fit, in the order they appear in the report.
    #[serde(default, rename = "model")]
    pub models: Vec<ModelFile>,
}

/// The `[output]` table.
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct OutputFile {
    /// The report workbook, relative to the job file; the results JSON is
    /// written beside it with the extension `.json`. May contain `{period}`
    /// (the data's last period), `{date}` (the run date) and `{job}` (the
    /// job file's stem).
    pub workbook: Option<PathBuf>,
    /// Replace an existing report; default false.
    pub overwrite: Option<bool>,
}

/// A checked job, ready for the later stages.
#[derive(Debug, Clone)]
pub struct Job {
    /// The job file this came from, as given on the command line.
    pub path: PathBuf,
    /// The job file's text, kept for the run stamp.
    pub text: String,
    /// Title for the report; the job file's stem when the file has none.
    pub title: String,
    /// Input workbook, resolved against the job file's folder.
    pub input: PathBuf,
    /// Sheet to read; `None` means the first.
    pub sheet: Option<String>,
    /// Header row, counted from 1.
    pub header_row: u32,
    /// Where the data is and how its cells are read.
    pub reading: Reading,
    /// Limits of the workbook pre-scan.
    pub limits: Limits,
    /// Report workbook path, resolved; may still hold `{period}`, `{date}`
    /// and `{job}` placeholders.
    pub output: PathBuf,
    /// Whether an existing report may be replaced.
    pub overwrite: bool,
    /// Last run's results JSON, resolved.
    pub compare_with: Option<PathBuf>,
    /// The models, in job order.
    pub models: Vec<ModelSpec>,
    /// p-value above which the suggested model drops a term.
    pub suggest_threshold: f64,
    /// The model the Summary sheet leads with: `summary_model`, else the
    /// first.
    pub summary_model: String,
}

/// Reads and checks the job file at `path`.
///
/// # Errors
/// [`JobError::Read`] when the file cannot be read, [`JobError::Parse`] for
/// malformed TOML or unknown keys, [`JobError::Invalid`] when a value breaks
/// a rule (no models, duplicate names, a column listed twice, ...).
pub fn load(path: &Path) -> Result<Job, JobError> {
    let text = std::fs::read_to_string(path).map_err(|source| JobError::Read {
        path: path.to_path_buf(),
        source,
    })?;
    parse(path, &text)
}

/// Parses and checks job-file `text` that was read from `path`.
///
/// # Errors
/// As [`load`], without the read.
pub fn parse(path: &Path, text: &str) -> Result<Job, JobError> {
    let file: JobFile = toml::from_str(text).map_err(|e| JobError::Parse {
        path: path.to_path_buf(),
        message: with_suggestion(e.to_string().trim_end()),
    })?;
    check(path, text, file)
}

/// Adds "did you mean `numeric`?" to an unknown-field message, from the
/// field names the message lists.
fn with_suggestion(message: &str) -> String {
    let Some(rest) = message.split("unknown field `").nth(1) else {
        return message.to_string();
    };
    let Some((field, expected)) = rest.split_once('`') else {
        return message.to_string();
    };
    let known: Vec<String> = expected
        .split('`')
        .skip(1)
        .step_by(2)
        .map(str::to_string)
        .collect();
    match crate::suggest::closest(field, &known) {
        Some(best) => format!("{message}\ndid you mean `{best}`?"),
        None => message.to_string(),
    }
}

fn check(path: &Path, text: &str, file: JobFile) -> Result<Job, JobError> {
    let invalid = |key: &str, message: String| JobError::Invalid {
        path: path.to_path_buf(),
        key: key.to_string(),
        message,
    };
    let folder = path.parent().unwrap_or(Path::new(""));
    if file.input.workbook.as_os_str().is_empty() {
        return Err(invalid(
            "input.workbook",
            "is empty; name the workbook or CSV file to read".into(),
        ));
    }
    let input = folder.join(&file.input.workbook);
    let is_csv = input
        .extension()
        .and_then(|e| e.to_str())
        .is_some_and(|e| e.eq_ignore_ascii_case("csv"));
    let reading = Reading::of(&file.input, is_csv).map_err(|(k, msg)| invalid(k, msg))?;
    let header_row = reading.header_row();
    let output = match file.output.workbook {
        Some(p) => {
            if p.extension().and_then(|e| e.to_str()) != Some("xlsx") {
                return Err(invalid(
                    "output.workbook",
                    format!("'{}' must end in .xlsx", p.display()),
                ));
            }
            let text = p.to_string_lossy();
            let mut rest = text.as_ref();
            while let Some(open) = rest.find('{') {
                let close = rest[open..].find('}').map(|c| open + c);
                let name = close.map(|c| &rest[open + 1..c]);
                if !matches!(name, Some("period" | "date" | "job")) {
                    return Err(invalid(
                        "output.workbook",
                        format!("'{text}' has a placeholder the tool does not know; use {{period}}, {{date}} or {{job}}"),
                    ));
                }
                rest = &rest[close.map_or(rest.len(), |c| c + 1)..];
            }
            folder.join(p)
        }
        None => {
            let stem = path.file_stem().and_then(|s| s.to_str()).unwrap_or("job");
            folder.join(format!("{stem}-report.xlsx"))
        }
    };
    if file.models.is_empty() {
        return Err(invalid(
            "model",
            "no models are listed; add at least one [[model]] table with a name and a response"
                .into(),
        ));
    }
    let max_models = file.max_models.unwrap_or(DEFAULT_MAX_MODELS);
    if file.models.len() > max_models {
        return Err(invalid(
            "model",
            format!(
                "{} models are listed, more than the limit of {max_models}; split the job, or raise `max_models` at the top of the job file",
                file.models.len()
            ),
        ));
    }
    if file.input.max_levels == Some(0) {
        return Err(invalid("input.max_levels", "must be at least 1".into()));
    }
    let mut names = HashSet::new();
    let mut models = Vec::with_capacity(file.models.len());
    for (i, m) in file.models.into_iter().enumerate() {
        let key = |k: &str| format!("model[{}].{k}", i + 1);
        let name = m.name.trim().to_string();
        if name.is_empty() {
            return Err(invalid(
                &key("name"),
                "is empty; give the model a name".into(),
            ));
        }
        if !names.insert(name.clone()) {
            return Err(invalid(
                &key("name"),
                format!(
                    "the name '{name}' is used by an earlier model; model names must be unique"
                ),
            ));
        }
        let confidence = m.confidence.unwrap_or(DEFAULT_CONFIDENCE);
        if !(confidence > 0.0 && confidence < 1.0) {
            return Err(invalid(
                &key("confidence"),
                format!("{confidence} is not between 0 and 1; write e.g. 0.95 for 95%"),
            ));
        }
        let categorical = match m.categorical {
            None => Vec::new(),
            Some(CategoricalFile::Names(cols)) => cols
                .into_iter()
                .map(|column| CategoricalSpec {
                    column,
                    baseline: Baseline::FirstSorted,
                })
                .collect(),
            Some(CategoricalFile::Baselines(map)) => map
                .into_iter()
                .map(|(column, level)| CategoricalSpec {
                    column,
                    baseline: Baseline::Given(level),
                })
                .collect(),
        };
        let mut poly = Vec::with_capacity(m.poly.len());
        for (column, degree) in m.poly {
            if !(1..=MAX_DEGREE).contains(&degree) {
                return Err(invalid(
                    &key(&format!("poly.{column}")),
                    format!("degree {degree} is not between 1 and {MAX_DEGREE}"),
                ));
            }
            poly.push(PolySpec { column, degree });
        }
        let season = m
            .season
            .map(|s| {
                season_spec(s, reading.labels.fiscal_start)
                    .map_err(|(k, msg)| invalid(&key(&format!("season.{k}")), msg))
            })
            .transpose()?;
        let frequency = m
            .frequency
            .map(|f| {
                Frequency::parse(&f).ok_or_else(|| {
                    invalid(
                        &key("frequency"),
                        format!("'{f}' is not a frequency; use day, week, month, quarter or year"),
                    )
                })
            })
            .transpose()?;
        let log_response = match m.transform.as_deref() {
            None => false,
            Some("log") => true,
            Some(other) => {
                return Err(invalid(
                    &key("transform"),
                    format!("'{other}' is not a transform; the one available is \"log\""),
                ))
            }
        };
        if m.hac_lags.is_some()
            && m.standard_errors
                .as_deref()
                .map(str::to_ascii_uppercase)
                .as_deref()
                != Some("HAC")
        {
            return Err(invalid(
                &key("hac_lags"),
                "goes with standard_errors = \"HAC\"; set that too, or remove hac_lags".into(),
            ));
        }
        let standard_errors = match m.standard_errors.as_deref().map(str::to_ascii_uppercase).as_deref() {
            None | Some("CLASSICAL") => None,
            Some("HC1") => Some(Robust::Hc1),
            Some("HC3") => Some(Robust::Hc3),
            Some("HAC") => Some(Robust::Hac(m.hac_lags)),
            Some(_) => {
                return Err(invalid(
                    &key("standard_errors"),
                    format!(
                        "'{}' is not a choice; use \"HC3\", \"HC1\" or \"HAC\" (or leave it out for the classical ones)",
                        m.standard_errors.unwrap_or_default()
                    ),
                ))
            }
        };
        let errors = match m.errors.as_deref().map(str::to_ascii_lowercase).as_deref() {
            None | Some("independent") => Errors::Independent,
            Some("ar1") => Errors::Ar1,
            Some(_) => {
                return Err(invalid(
                    &key("errors"),
                    format!(
                    "'{}' is not a choice; use \"ar1\" (or leave it out for independent errors)",
                    m.errors.unwrap_or_default()
                ),
                ))
            }
        };
        let new_row_weight = match (
            m.forecast.as_ref().and_then(|f| f.weight),
            m.scenarios.as_ref().and_then(|s| s.weight),
        ) {
            (Some(a), Some(b)) if a != b => {
                return Err(invalid(
                    &key("scenarios.weight"),
                    format!("{b} differs from forecast.weight = {a}; a new row has one weight, so give it once"),
                ))
            }
            (a, b) => a.or(b).unwrap_or(1.0),
        };
        let forecast = m
            .forecast
            .map(|f| {
                forecast_spec(f).map_err(|(k, msg)| invalid(&key(&format!("forecast.{k}")), msg))
            })
            .transpose()?;
        let lags = terms::lag_specs(m.lag).map_err(|(k, msg)| invalid(&key(&k), msg))?;
        let events = terms::event_specs(m.step, m.spike, m.ramp, &reading.labels)
            .map_err(|(k, msg)| invalid(&key(&k), msg))?;
        let fourier = m
            .fourier
            .map(|f| terms::fourier_spec(f).map_err(|(k, msg)| invalid(&key(&k), msg)))
            .transpose()?;
        let scenarios = m
            .scenarios
            .map(|f| scenarios::scenario_spec(f).map_err(|(k, msg)| invalid(&key(&k), msg)))
            .transpose()?;
        let spec = ModelSpec {
            name,
            response: m.response,
            numeric: m.numeric,
            poly,
            categorical,
            intercept: m.intercept.unwrap_or(true),
            confidence,
            trend: m.trend,
            date: m.date,
            season,
            frequency,
            log_response,
            backtest: m.backtest,
            backtest_rolling: m.backtest_rolling.unwrap_or(false),
            forecast,
            interactions: m.interactions.into_iter().map(|[a, b]| (a, b)).collect(),
            standard_errors,
            errors,
            suggest: m.suggest.or(file.suggest).unwrap_or(true),
            max_levels: file.input.max_levels.unwrap_or(DEFAULT_MAX_LEVELS),
            case_sensitive_levels: file.input.case_sensitive_levels.unwrap_or(false),
            labels: reading.labels,
            log: m.log,
            lags,
            events,
            fourier,
            scenarios,
            series: m.series,
            weights: m.weights,
            by: m.by,
            new_row_weight,
        };
        check_roles(&spec).map_err(|(k, msg)| invalid(&key(k), msg))?;
        scenarios::check_scenarios(&spec).map_err(|(k, msg)| invalid(&key(&k), msg))?;
        models.push(spec);
    }
    if is_csv && file.input.sheet.is_some() {
        return Err(invalid(
            "input.sheet",
            "the input is a CSV file, which has no sheets; remove `sheet`".into(),
        ));
    }
    for (i, m) in models.iter().enumerate() {
        if let (true, Some(ForecastSpec::Plan { sheet, .. })) = (is_csv, &m.forecast) {
            return Err(invalid(
                &format!("model[{}].forecast.plan_sheet", i + 1),
                format!("the input is a CSV file, which has no sheet '{sheet}'; use `horizon` with `hold`, or a workbook input with a plan sheet"),
            ));
        }
    }
    let defaults = Limits::default();
    let suggest_threshold = file.suggest_threshold.unwrap_or(0.05);
    if !(suggest_threshold > 0.0 && suggest_threshold < 1.0) {
        return Err(invalid(
            "suggest_threshold",
            format!("{suggest_threshold} is not between 0 and 1; write e.g. 0.05"),
        ));
    }
    let title = file.title.unwrap_or_else(|| {
        path.file_stem()
            .and_then(|s| s.to_str())
            .unwrap_or("sheetfit job")
            .to_string()
    });
    if let Some((key, message)) = cell_text::too_long(&title, &models) {
        return Err(invalid(&key, message));
    }
    let summary_model = match file.summary_model {
        Some(name) if !models.iter().any(|m| m.name == name) => {
            let names: Vec<String> = models.iter().map(|m| m.name.clone()).collect();
            return Err(invalid(
                "summary_model",
                format!(
                    "'{name}' is not a model of this job; its models: {}{}",
                    names
                        .iter()
                        .map(|n| format!("'{n}'"))
                        .collect::<Vec<_>>()
                        .join(", "),
                    crate::suggest::closest(&name, &names)
                        .map(|c| format!(" (did you mean '{c}'?)"))
                        .unwrap_or_default()
                ),
            ));
        }
        Some(name) => name,
        None => models.first().map(|m| m.name.clone()).unwrap_or_default(),
    };
    if output.to_string_lossy().contains("{period}")
        && !models.iter().any(|m| m.date_column().is_some())
    {
        return Err(invalid(
            "output.workbook",
            "uses {period}, but no model has a date column (`trend` or `season`); use {date} or {job}, or give a model a date column".into(),
        ));
    }
    Ok(Job {
        path: path.to_path_buf(),
        text: text.to_string(),
        title,
        summary_model,
        input,
        sheet: file.input.sheet,
        header_row,
        reading,
        limits: Limits {
            cells: file.input.max_cells.unwrap_or(defaults.cells),
            shared_strings: file
                .input
                .max_shared_strings
                .unwrap_or(defaults.shared_strings),
            uncompressed_mb: file
                .input
                .max_uncompressed_mb
                .unwrap_or(defaults.uncompressed_mb),
        },
        output,
        overwrite: file.output.overwrite.unwrap_or(false),
        compare_with: file.compare_with.map(|p| folder.join(p)),
        models,
        suggest_threshold,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    const MINIMAL: &str = r#"
        [input]
        workbook = "data.xlsx"
        [[model]]
        name = "m"
        response = "y"
        numeric = ["x"]
    "#;

    fn parse_str(text: &str) -> Result<Job, JobError> {
        parse(Path::new("jobs/monthly.toml"), text)
    }

    #[test]
    fn defaults_are_filled_and_paths_resolved_against_the_job_folder() {
        let job = parse_str(MINIMAL).unwrap();
        assert_eq!(job.input, Path::new("jobs/data.xlsx"));
        assert_eq!(job.output, Path::new("jobs/monthly-report.xlsx"));
        assert_eq!(job.header_row, 1);
        assert_eq!(job.title, "monthly");
        assert!(job.models[0].intercept);
        assert_eq!(job.models[0].confidence, 0.95);
    }

    #[test]
    fn categorical_accepts_a_list_or_a_table_of_baselines() {
        let list = parse_str(&MINIMAL.replace("numeric", "categorical")).unwrap();
        assert_eq!(
            list.models[0].categorical[0].baseline,
            Baseline::FirstSorted
        );
        let table = parse_str(&MINIMAL.replace(
            r#"numeric = ["x"]"#,
            r#"categorical = { region = "North", format = "Shop" }"#,
        ))
        .unwrap();
        let cats = &table.models[0].categorical;
        assert_eq!(cats[0].column, "region");
        assert_eq!(cats[1].baseline, Baseline::Given("Shop".into()));
    }

    #[test]
    fn unknown_key_is_a_parse_error_naming_the_key() {
        let err = parse_str(&MINIMAL.replace("numeric", "numerci")).unwrap_err();
        let msg = err.to_string();
        assert!(
            msg.starts_with("job file jobs/monthly.toml is not valid"),
            "{msg}"
        );
        assert!(msg.contains("numerci"), "{msg}");
        assert!(msg.ends_with("did you mean `numeric`?"), "{msg}");
    }

    #[test]
    fn categorical_of_the_wrong_shape_says_what_is_expected() {
        let err = parse_str(&MINIMAL.replace(r#"numeric = ["x"]"#, r#"categorical = "region""#))
            .unwrap_err();
        assert!(
            err.to_string()
                .contains("a list of column names, such as [\"region\"]"),
            "{err}"
        );
    }

    #[test]
    fn poly_takes_a_degree_per_column() {
        let job = parse_str(&MINIMAL.replace(r#"numeric = ["x"]"#, "poly = { x = 10 }")).unwrap();
        assert_eq!(
            job.models[0].poly,
            vec![PolySpec {
                column: "x".into(),
                degree: 10
            }]
        );
        let err =
            parse_str(&MINIMAL.replace(r#"numeric = ["x"]"#, "poly = { x = 0 }")).unwrap_err();
        assert!(
            err.to_string().contains("model[1].poly.x`: degree 0"),
            "{err}"
        );
        let err = parse_str(&MINIMAL.replace(r#"["x"]"#, "[\"x\"]\npoly = { x = 2 }")).unwrap_err();
        assert!(err.to_string().contains("'x' is listed twice"), "{err}");
    }

    #[test]
    fn response_as_predictor_is_refused() {
        let err = parse_str(&MINIMAL.replace(r#"["x"]"#, r#"["y"]"#)).unwrap_err();
        assert_eq!(
            err.to_string(),
            "job file jobs/monthly.toml, key `model[1].numeric`: 'y' is the response; \
             a column cannot also be a predictor"
        );
    }

    #[test]
    fn duplicate_model_names_are_refused() {
        let text = format!("{MINIMAL}\n[[model]]\nname = \"m\"\nresponse = \"y\"\n");
        let err = parse_str(&text).unwrap_err();
        assert!(err.to_string().contains("model[2].name"), "{err}");
    }

    #[test]
    fn no_models_is_refused() {
        let err = parse_str("[input]\nworkbook = \"d.xlsx\"\n").unwrap_err();
        assert!(err.to_string().contains("no models are listed"), "{err}");
    }

    #[test]
    fn confidence_outside_zero_one_is_refused() {
        let err = parse_str(&format!("{MINIMAL}confidence = 95\n")).unwrap_err();
        assert!(err.to_string().contains("model[1].confidence"), "{err}");
    }
}
