//! The job file: what to read, which models to fit, where to write.
//!
//! Two stages, as the rest of the pipeline expects: [`JobFile`] mirrors the
//! TOML text exactly (unknown keys are refused), and [`Job`] is the checked
//! value every later stage works from, with paths resolved against the job
//! file's folder and defaults filled in. Checks that need the data (does a
//! column exist, is a baseline one of its levels) belong to `design`, which
//! sees the table.

use std::collections::HashSet;
use std::fmt;
use std::path::{Path, PathBuf};

use indexmap::IndexMap;
use serde::Deserialize;

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
    /// The models to fit, in the order they appear in the report.
    #[serde(default, rename = "model")]
    pub models: Vec<ModelFile>,
}

/// The `[input]` table.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct InputFile {
    /// The workbook or CSV file, relative to the job file.
    pub workbook: PathBuf,
    /// Sheet name; the first sheet when absent.
    pub sheet: Option<String>,
    /// Row holding the column names, counted from 1; default 1.
    pub header_row: Option<u32>,
}

/// The `[output]` table.
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct OutputFile {
    /// The report workbook, relative to the job file; the results JSON is
    /// written beside it with the extension `.json`.
    pub workbook: Option<PathBuf>,
}

/// One `[[model]]` table.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ModelFile {
    /// Name shown in the report; unique within the job.
    pub name: String,
    /// The response column.
    pub response: String,
    /// Numeric predictor columns, each entering as one term.
    #[serde(default)]
    pub numeric: Vec<String>,
    /// Polynomial predictors, as a table `column = degree`: the column and
    /// its powers up to the degree, each with a coefficient, tested as one
    /// term. Powers are formed in double-double precision.
    #[serde(default)]
    pub poly: IndexMap<String, u32>,
    /// Categorical predictor columns: a list of names (baseline = first
    /// level in sorted order) or a table `column = "baseline level"`.
    #[serde(default)]
    pub categorical: Option<CategoricalFile>,
    /// Fit an intercept; default true.
    pub intercept: Option<bool>,
    /// Confidence level for intervals, strictly between 0 and 1; default 0.95.
    pub confidence: Option<f64>,
}

/// The two spellings of `categorical`.
#[derive(Debug, Deserialize)]
#[serde(
    untagged,
    expecting = "a list of column names, such as [\"region\"], or a table of baselines, such as { region = \"North\" }"
)]
pub enum CategoricalFile {
    /// `categorical = ["region", "format"]`
    Names(Vec<String>),
    /// `categorical = { region = "North" }`
    Baselines(IndexMap<String, String>),
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
    /// Report workbook path, resolved.
    pub output: PathBuf,
    /// The models, in job order.
    pub models: Vec<ModelSpec>,
}

/// How a categorical predictor's baseline level was chosen.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Baseline {
    /// Named in the job file.
    Given(String),
    /// Not named: the first level in sorted order is used.
    FirstSorted,
}

/// A categorical predictor and its baseline.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct CategoricalSpec {
    /// Column name.
    pub column: String,
    /// How the baseline is chosen.
    pub baseline: Baseline,
}

/// The highest polynomial degree accepted: beyond it the powers of any
/// real data are collinear to working precision.
pub const MAX_DEGREE: u32 = 12;

/// A polynomial predictor: a column and its powers 1..=degree.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PolySpec {
    /// Column name.
    pub column: String,
    /// Highest power, 1 to [`MAX_DEGREE`].
    pub degree: u32,
}

/// One checked model.
#[derive(Debug, Clone)]
pub struct ModelSpec {
    /// Unique name.
    pub name: String,
    /// Response column.
    pub response: String,
    /// Numeric predictors in job order.
    pub numeric: Vec<String>,
    /// Polynomial predictors in job order.
    pub poly: Vec<PolySpec>,
    /// Categorical predictors in job order.
    pub categorical: Vec<CategoricalSpec>,
    /// Whether an intercept is fitted.
    pub intercept: bool,
    /// Confidence level for intervals.
    pub confidence: f64,
}

impl ModelSpec {
    /// Every column the model reads: the response first, then predictors in
    /// job order.
    pub fn columns(&self) -> impl Iterator<Item = &str> {
        std::iter::once(self.response.as_str())
            .chain(self.numeric.iter().map(String::as_str))
            .chain(self.poly.iter().map(|p| p.column.as_str()))
            .chain(self.categorical.iter().map(|c| c.column.as_str()))
    }
}

impl fmt::Display for Baseline {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Baseline::Given(level) => write!(f, "'{level}' (given in the job)"),
            Baseline::FirstSorted => f.write_str("the first level in sorted order"),
        }
    }
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
        message: e.to_string().trim_end().to_string(),
    })?;
    check(path, text, file)
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
    let header_row = file.input.header_row.unwrap_or(1);
    if header_row == 0 {
        return Err(invalid(
            "input.header_row",
            "rows are counted from 1; use 1 for the first row".into(),
        ));
    }
    let output = match file.output.workbook {
        Some(p) => {
            if p.extension().and_then(|e| e.to_str()) != Some("xlsx") {
                return Err(invalid(
                    "output.workbook",
                    format!("'{}' must end in .xlsx", p.display()),
                ));
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
        let spec = ModelSpec {
            name,
            response: m.response,
            numeric: m.numeric,
            poly,
            categorical,
            intercept: m.intercept.unwrap_or(true),
            confidence,
        };
        check_roles(&spec).map_err(|(k, msg)| invalid(&key(k), msg))?;
        models.push(spec);
    }
    let title = file.title.unwrap_or_else(|| {
        path.file_stem()
            .and_then(|s| s.to_str())
            .unwrap_or("sheetfit job")
            .to_string()
    });
    Ok(Job {
        path: path.to_path_buf(),
        text: text.to_string(),
        title,
        input,
        sheet: file.input.sheet,
        header_row,
        output,
        models,
    })
}

/// Each column plays one role in a model; a model needs a predictor or an
/// intercept.
fn check_roles(spec: &ModelSpec) -> Result<(), (&'static str, String)> {
    if spec.response.trim().is_empty() {
        return Err(("response", "is empty; name the response column".into()));
    }
    let mut seen: HashSet<&str> = HashSet::new();
    seen.insert(&spec.response);
    for (key, col) in spec
        .numeric
        .iter()
        .map(|c| ("numeric", c))
        .chain(spec.poly.iter().map(|p| ("poly", &p.column)))
        .chain(spec.categorical.iter().map(|c| ("categorical", &c.column)))
    {
        if *col == spec.response {
            return Err((
                key,
                format!("'{col}' is the response; a column cannot also be a predictor"),
            ));
        }
        if !seen.insert(col) {
            return Err((
                key,
                format!("'{col}' is listed twice; list each predictor once, under one role"),
            ));
        }
    }
    if spec.numeric.is_empty()
        && spec.poly.is_empty()
        && spec.categorical.is_empty()
        && !spec.intercept
    {
        return Err((
            "intercept",
            "the model has no predictors and no intercept; add a predictor".into(),
        ));
    }
    Ok(())
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
