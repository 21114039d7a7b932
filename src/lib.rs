//! sheetfit: linear regression from a workbook sheet to a report workbook.
//!
//! The pipeline runs one way, one module per stage:
//! [`job`] (the checked job file) → [`source`] (the sheet as a typed table) →
//! [`design`] (response and design matrix per model) → [`fit`] (least squares
//! and inference) → [`checks`] (ANOVA, influence) → [`results`] (every
//! reported number, once) → [`report`] (workbook and JSON, written
//! atomically). [`run_job`] and [`check_job`] drive it for the binary.
#![warn(missing_docs)]

pub mod checks;
pub mod compare;
pub mod design;
pub mod fit;
pub mod forecast;
pub mod job;
pub mod period;
pub mod report;
pub mod results;
pub mod source;

use std::fmt::Write as _;
use std::path::Path;

use sha2::{Digest, Sha256};

use crate::job::Job;
use crate::results::{analyse, collect, row_ranges, Results, RunStamp};
use crate::source::{column_letters, Table, Value};

/// Any error that stops a job, by stage.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// The job file is unreadable or invalid.
    #[error(transparent)]
    Job(#[from] job::JobError),
    /// The input could not be read.
    #[error(transparent)]
    Source(#[from] source::SourceError),
    /// A model's columns do not suit their roles.
    #[error(transparent)]
    Design(Box<design::DesignError>),
    /// A model could not be fitted.
    #[error(transparent)]
    Fit(#[from] fit::FitError),
    /// A forecast or back-test failed.
    #[error(transparent)]
    Forecast(#[from] forecast::ForecastError),
    /// The report could not be written.
    #[error(transparent)]
    Report(#[from] report::ReportError),
    /// The input could not be read for its fingerprint.
    #[error("cannot read input {path} for its SHA-256: {source}")]
    Fingerprint {
        /// The input file.
        path: std::path::PathBuf,
        /// The operating system's reason.
        source: std::io::Error,
    },
}

impl From<design::DesignError> for Error {
    fn from(e: design::DesignError) -> Self {
        Error::Design(Box::new(e))
    }
}

impl Error {
    /// Whether the error lies in the job file (exit status 2) rather than in
    /// the data or the output (exit status 1).
    pub fn is_job_file_error(&self) -> bool {
        matches!(self, Error::Job(_))
    }
}

/// A model of the job with its design and fit.
struct Fitted<'j> {
    spec: &'j job::ModelSpec,
    design: design::Design,
    fit: fit::Fit,
}

/// Builds and fits every model of `job` on `table`.
fn fit_models<'j>(job: &'j Job, table: &Table) -> Result<Vec<Fitted<'j>>, Error> {
    job.models
        .iter()
        .map(|spec| {
            let design = design::build(table, spec)?;
            let fit = fit::fit(&spec.name, &design, spec.confidence)?;
            let fit = match spec.standard_errors {
                Some(kind) => fit::with_robust_errors(fit, &design, kind),
                None => fit,
            };
            Ok(Fitted { spec, design, fit })
        })
        .collect()
}

/// Every reported number of the fitted models: forecasts, back-tests, the
/// suggested smaller models and the comparisons.
fn model_results(
    job: &Job,
    fitted: &[Fitted<'_>],
) -> Result<(Vec<results::ModelResults>, Vec<compare::Comparison>), Error> {
    let mut models = Vec::with_capacity(fitted.len());
    for f in fitted {
        let plan = match &f.spec.forecast {
            Some(job::ForecastSpec::Plan { sheet }) => {
                Some(source::read_table(&job.input, Some(sheet), job.header_row)?)
            }
            _ => None,
        };
        let rows = forecast::forecast(f.spec, &f.design, &f.fit, plan.as_ref())?;
        let backtest = forecast::backtest(f.spec, &f.design, &f.fit)?;
        models.push(analyse(f.spec, &f.design, &f.fit, rows, backtest));
    }
    let mut suggestions = Vec::new();
    for f in fitted {
        let name = format!("{} (suggested)", f.spec.name);
        if let Some((design, fit, dropped)) =
            compare::suggest(&name, &f.design, &f.fit, job.suggest_threshold)?
        {
            let spec = job::ModelSpec {
                name,
                ..f.spec.clone()
            };
            let mut m = analyse(&spec, &design, &fit, Vec::new(), None);
            m.suggested_from = Some(f.spec.name.clone());
            m.dropped_terms = dropped;
            suggestions.push((m, design, fit));
        }
    }
    let mut candidates: Vec<compare::Candidate<'_>> = fitted
        .iter()
        .map(|f| compare::Candidate {
            name: &f.spec.name,
            design: &f.design,
            fit: &f.fit,
        })
        .collect();
    candidates.extend(
        suggestions
            .iter()
            .map(|(m, design, fit)| compare::Candidate {
                name: &m.name,
                design,
                fit,
            }),
    );
    let comparisons = compare::compare(&candidates);
    models.extend(suggestions.into_iter().map(|(m, _, _)| m));
    Ok((models, comparisons))
}

/// Reads the job's input and fits every model, returning all results.
///
/// # Errors
/// The first [`Error`] met; no model's results are returned when any fails.
pub fn analyse_job(job: &Job) -> Result<Results, Error> {
    let table = source::read_table(&job.input, job.sheet.as_deref(), job.header_row)?;
    let bytes = std::fs::read(&job.input).map_err(|source| Error::Fingerprint {
        path: job.input.clone(),
        source,
    })?;
    let fitted = fit_models(job, &table)?;
    let (models, comparisons) = model_results(job, &fitted)?;
    let run = RunStamp {
        tool: format!("sheetfit {}", env!("CARGO_PKG_VERSION")),
        run_time: chrono::Utc::now().to_rfc3339_opts(chrono::SecondsFormat::Secs, true),
        job_file: job.path.display().to_string(),
        job_sha256: sha256_hex(job.text.as_bytes()),
        input_file: job.input.display().to_string(),
        input_sha256: sha256_hex(&bytes),
        sheet: table.sheet.clone(),
        rows_read: table.rows.len(),
    };
    Ok(collect(job, run, models, comparisons))
}

/// Runs the job file at `path`: fits every model and writes the report
/// workbook and the results JSON.
///
/// # Errors
/// Any [`Error`]; nothing is written when one occurs.
pub fn run_job(path: &Path) -> Result<report::Written, Error> {
    let job = job::load(path)?;
    let results = analyse_job(&job)?;
    Ok(report::write(&results, &job.output, &job.input)?)
}

/// Checks the job file at `path` against its input without writing
/// anything, and describes the columns and what each model would fit.
///
/// # Errors
/// The first [`Error`] a run would meet before writing.
pub fn check_job(path: &Path) -> Result<String, Error> {
    let job = job::load(path)?;
    report::check_targets(&job.output, &job.input)?;
    let table = source::read_table(&job.input, job.sheet.as_deref(), job.header_row)?;
    let mut out = String::new();
    let _ = writeln!(out, "job {}: {} model(s)", path.display(), job.models.len());
    let _ = writeln!(
        out,
        "input {}, sheet '{}': {} data rows below header row {}",
        job.input.display(),
        table.sheet,
        table.rows.len(),
        job.header_row
    );
    out.push_str(&describe_columns(&table));
    let fitted = fit_models(&job, &table)?;
    // Everything a run computes, so check meets the errors run would.
    model_results(&job, &fitted)?;
    for Fitted { spec, design, fit } in &fitted {
        let _ = writeln!(
            out,
            "model '{}': response {}, {} usable rows",
            spec.name,
            spec.response,
            design.rows.len()
        );
        if let Some(t) = &design.timing {
            let _ = writeln!(
                out,
                "  periods: by {} ({}), {} to {}{}",
                t.frequency.name(),
                if t.detected {
                    "told from the dates"
                } else {
                    "set in the job"
                },
                t.first,
                t.last(),
                if t.panel {
                    ", several rows per period"
                } else {
                    ""
                }
            );
        }
        if !design.dropped.is_empty() {
            let _ = writeln!(
                out,
                "  {} rows left out for blank cells: sheet rows {}",
                design.dropped.len(),
                row_ranges(&design.dropped)
            );
        }
        for term in &design.terms {
            let names = &design.names[term.columns.clone()];
            let _ = writeln!(out, "  term {}: {}", term.name, names.join(", "));
        }
        if !fit.aliased.is_empty() {
            let _ = writeln!(
                out,
                "  aliased, would be left out: {}",
                fit.aliased.join(", ")
            );
        }
        let _ = writeln!(
            out,
            "  would estimate {} coefficients with {} residual degrees of freedom; \
             condition number {}, {} arithmetic",
            fit.coefficients.len(),
            fit.df_resid,
            results::significant(fit.quality.condition_number, 4),
            fit.quality.precision.label()
        );
    }
    Ok(out)
}

/// One line per column: letter, name, the kinds of value it holds and, for
/// text, its levels.
fn describe_columns(table: &Table) -> String {
    let mut out = String::from("columns:\n");
    for column in &table.columns {
        let mut kinds: Vec<(&str, usize)> = Vec::new();
        for v in &column.values {
            match kinds.iter_mut().find(|(k, _)| *k == v.kind()) {
                Some((_, n)) => *n += 1,
                None => kinds.push((v.kind(), 1)),
            }
        }
        let kinds = kinds
            .iter()
            .map(|(k, n)| format!("{n} {k}"))
            .collect::<Vec<_>>()
            .join(", ");
        let mut levels: Vec<&str> = column
            .values
            .iter()
            .filter_map(|v| match v {
                Value::Text(s) => Some(s.as_str()),
                _ => None,
            })
            .collect();
        levels.sort_unstable();
        levels.dedup();
        let levels = match levels.len() {
            0 => String::new(),
            n if n <= 12 => format!("; levels: {}", levels.join(", ")),
            n => format!("; {n} levels: {}, ...", levels[..12].join(", ")),
        };
        let _ = writeln!(
            out,
            "  {:<4}{:<24}{kinds}{levels}",
            column_letters(column.col),
            column.name
        );
    }
    out
}

fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .fold(String::with_capacity(64), |mut s, b| {
            let _ = write!(s, "{b:02x}");
            s
        })
}
