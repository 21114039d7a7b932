//! sheetfit: linear regression from a workbook sheet to a report workbook.
//!
//! The pipeline runs one way, one module per stage:
//! [`job`] (the checked job file) → [`source`] (the sheet as a typed table) →
//! [`design`] (response and design matrix per model) → [`fit`] (least squares
//! and inference) → [`checks`] (ANOVA, influence) → [`compare`] and
//! [`forecast`] → [`results`] (every reported number, once) → [`report`]
//! (workbook and JSON, written atomically). Under them sit four foundations
//! that import nothing from the crate: [`text`], [`suggest`], [`ddouble`] and
//! [`period`]. A module imports only from modules before it
//! (tests/module_order.rs). [`run_job`] and [`check_job`] drive it for the
//! binary.
#![warn(missing_docs)]

pub mod checks;
pub mod compare;
pub mod ddouble;
pub mod design;
pub mod fit;
pub mod forecast;
pub mod job;
pub mod period;
pub mod report;
pub mod results;
pub mod source;
pub mod starter;
pub mod suggest;
pub mod text;

use std::fmt::Write as _;
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::time::Instant;

use sha2::{Digest, Sha256};

use crate::job::Job;
use crate::results::{analyse, collect, Results, RunStamp};
use crate::source::{column_letters, Table, Value};
use crate::text::row_ranges;

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
    /// Last run's results could not be read.
    #[error(transparent)]
    Changes(#[from] results::changes::ChangesError),
    /// Two jobs of one batch write the same report.
    #[error("jobs {first} and {second} both write {output}; a batch runs neither. Give one of them another `output.workbook` (or use {{job}} in it)")]
    SharedOutput {
        /// The first job file.
        first: PathBuf,
        /// The second job file.
        second: PathBuf,
        /// The report both name.
        output: PathBuf,
    },
    /// `{period}` in the output path without any periods.
    #[error("`output.workbook` ({path}) uses {{period}}, but no model has a date column (`trend` or `season`)")]
    NoPeriod {
        /// The output path as written.
        path: PathBuf,
    },
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
        matches!(self, Error::Job(_) | Error::SharedOutput { .. })
    }
}

/// The job's area of its input, screened for summary rows and text numbers
/// over the columns its models read ([`source::screen::screen`]).
fn read_data(job: &Job, input: &source::Input) -> Result<(Table, source::screen::Screened), Error> {
    let mut table = input.read_csv_or_area(
        job.sheet.as_deref(),
        &job.reading.area,
        &job.limits,
        &job.reading.csv,
    )?;
    let used: Vec<&str> = job
        .models
        .iter()
        .flat_map(|m| m.columns().chain(m.date_column()))
        .collect();
    let numeric: Vec<&str> = job
        .models
        .iter()
        .flat_map(job::ModelSpec::numeric_columns)
        .collect();
    let screened = source::screen::screen(&mut table, &used, &numeric, &job.reading)?;
    input.check_formulas(&table, &used)?;
    Ok((table, screened))
}

/// Every reported number of the job's models: each model's fit, checks,
/// forecast, back-test and suggested smaller model, then the comparisons.
///
/// Models are taken one at a time and each design (the n × p matrix) is let
/// go once its results are in, so memory holds one design at a time;
/// `inspect` sees each model's design and fit before that (`check` uses it
/// to describe them).
fn model_results(
    job: &Job,
    input: &source::Input,
    mut table: Table,
    scope: Scope,
    inspect: &mut dyn FnMut(&job::ModelSpec, &design::Design, &fit::Fit),
) -> Result<Analysed, Error> {
    let mut out = Analysed::default();
    let mut candidates = Vec::with_capacity(job.models.len());
    let mut suggestions = Vec::new();
    let mut suggested_candidates = Vec::new();
    for (k, spec) in job.models.iter().enumerate() {
        if spec.by.is_some() {
            by_level_results(job, input, &table, spec, inspect, &mut out)?;
            let later = &job.models[k + 1..];
            table.clear_columns(|name| later.iter().any(|m| m.reads(name)));
            continue;
        }
        let design = design::build(&table, spec)?;
        let response_format = input.number_format(&table, &spec.response);
        // The columns no later model reads are let go before this model is
        // fitted and checked.
        let later = &job.models[k + 1..];
        table.clear_columns(|name| later.iter().any(|m| m.reads(name)));
        let offer_ar1 = scope == Scope::Everything && spec.suggest;
        let (mut results, fit) = fit_and_analyse(job, input, spec, &design, offer_ar1, inspect)?;
        results.response_number_format = response_format.clone();
        out.models.push(results);
        candidates.push(compare::Candidate::new(&spec.name, &design, &fit));
        let name = format!("{} (suggested)", spec.name);
        let suggested = match scope {
            Scope::Everything if spec.suggest => {
                compare::suggest(&name, &design, &fit, job.suggest_threshold)?
            }
            _ => None,
        };
        if let Some((design, fit, dropped)) = suggested {
            let suggested = job::ModelSpec {
                name,
                ..spec.clone()
            };
            let mut m = analyse(&suggested, &design, &fit, Vec::new(), None);
            m.suggested_from = Some(spec.name.clone());
            m.response_number_format = response_format;
            m.dropped_terms = dropped;
            suggested_candidates.push(compare::Candidate::new(&m.name, &design, &fit));
            suggestions.push(m);
        }
    }
    candidates.extend(suggested_candidates);
    out.comparisons = match scope {
        Scope::Everything => compare::compare(&candidates),
        Scope::Models => compare::Comparisons::default(),
    };
    out.models.extend(suggestions);
    Ok(out)
}

/// What [`model_results`] hands back: every model's results, their
/// comparisons, and the levels of models fitted by level that could not be
/// fitted.
#[derive(Default)]
struct Analysed {
    models: Vec<results::ModelResults>,
    comparisons: compare::Comparisons,
    by_skipped: Vec<results::SkippedLevel>,
}

/// Fits one design and computes its results: the fit (with robust
/// standard errors when asked for), forecast, scenarios and back-test, and
/// the regression with AR(1) errors when the job asks for it or, with
/// `offer_ar1`, when the residuals are flagged for autocorrelation.
fn fit_and_analyse(
    job: &Job,
    input: &source::Input,
    spec: &job::ModelSpec,
    design: &design::Design,
    offer_ar1: bool,
    inspect: &mut dyn FnMut(&job::ModelSpec, &design::Design, &fit::Fit),
) -> Result<(results::ModelResults, fit::Fit), Error> {
    let fit = fit::fit(&spec.name, design, spec.confidence)?;
    let fit = match spec.standard_errors {
        Some(kind) => fit::with_robust_errors(fit, design, kind),
        None => fit,
    };
    inspect(spec, design, &fit);
    let plan = match &spec.forecast {
        Some(job::ForecastSpec::Plan { sheet, header_row }) => {
            Some(input.read_table(Some(sheet), *header_row, &job.limits)?)
        }
        _ => None,
    };
    let (rows, totals) = forecast::forecast(spec, design, &fit, plan.as_ref())?;
    let scenario_sheet = match &spec.scenarios {
        Some(job::ScenarioSpec::Sheet { sheet, header_row }) => {
            Some(input.read_table(Some(sheet), *header_row, &job.limits)?)
        }
        _ => None,
    };
    let scenarios = forecast::scenarios(spec, design, &fit, scenario_sheet.as_ref())?;
    let backtest = forecast::backtest(spec, design, &fit)?;
    let mut results = analyse(spec, design, &fit, rows, backtest);
    results.scenarios = scenarios;
    results.forecast_totals = totals;
    let ar1 = match spec.errors {
        job::Errors::Ar1 => Some(
            fit::ar1::ar1_errors(design, &fit, fit::ar1::Ar1Origin::Job).map_err(|source| {
                fit::FitError::Ar1 {
                    model: spec.name.clone(),
                    source,
                }
            })?,
        ),
        // An offer that cannot be fitted is simply not made.
        job::Errors::Independent
            if offer_ar1
                && fit::ar1::offered(
                    design,
                    results.checks.iter().any(|c| {
                        c.flagged && matches!(c.name.as_str(), "durbin-watson" | "breusch-godfrey")
                    }),
                ) =>
        {
            fit::ar1::ar1_errors(design, &fit, fit::ar1::Ar1Origin::Suggested).ok()
        }
        job::Errors::Independent => None,
    };
    if let Some(ar1) = ar1 {
        let rows = forecast::forecast_ar1(spec, design, &fit, plan.as_ref(), &ar1)?;
        let backtest = match forecast::backtest_ar1(spec, design, fit.confidence) {
            Ok(backtest) => backtest,
            // An offer whose back-test cannot be made is not made either.
            Err(_) if ar1.origin == fit::ar1::Ar1Origin::Suggested => return Ok((results, fit)),
            Err(e) => return Err(e.into()),
        };
        results.ar1_errors = Some(results::ar1::ar1_results(&ar1, rows, backtest));
    }
    Ok((results, fit))
}

/// The model `spec` fitted to each level of its `by` column in turn, as a
/// model named "name [level]"; a level that cannot be fitted (too few rows,
/// a predictor without variation in it, ...) is listed with the reason and
/// the others go on. No suggested models or comparisons are made for them.
fn by_level_results(
    job: &Job,
    input: &source::Input,
    table: &Table,
    spec: &job::ModelSpec,
    inspect: &mut dyn FnMut(&job::ModelSpec, &design::Design, &fit::Fit),
    out: &mut Analysed,
) -> Result<(), Error> {
    let column = spec.by.clone().unwrap_or_default();
    let response_format = input.number_format(table, &spec.response);
    for (level, rows) in design::by_levels(table, spec)? {
        let level_spec = job::ModelSpec {
            name: format!("{} [{level}]", spec.name),
            by: None,
            ..spec.clone()
        };
        let fitted = design::build(&table.select_rows(&rows), &level_spec)
            .map_err(Error::from)
            .and_then(|design| fit_and_analyse(job, input, &level_spec, &design, false, inspect));
        match fitted {
            Ok((mut results, _)) => {
                results.response_number_format = response_format.clone();
                results.by = Some(results::ByLevel {
                    model: spec.name.clone(),
                    column: column.clone(),
                    level,
                });
                out.models.push(results);
            }
            Err(e) => out.by_skipped.push(results::SkippedLevel {
                model: spec.name.clone(),
                column: column.clone(),
                level,
                rows: rows.len(),
                reason: e.to_string(),
            }),
        }
    }
    Ok(())
}

/// How much of a job [`model_results`] computes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Scope {
    /// Everything a run reports.
    Everything,
    /// Each model's design, fit, checks, forecast rows and back-test, the
    /// parts that can meet the data's errors; no suggested models or
    /// comparisons (`check`).
    Models,
}

/// How a run behaves beyond what the job file says.
#[derive(Debug, Clone, Default)]
pub struct RunOptions {
    /// Replace existing reports even when the job does not say so.
    pub overwrite: bool,
    /// The run time to record instead of the clock's, for byte-identical
    /// reruns.
    pub run_time: Option<chrono::DateTime<chrono::Utc>>,
    /// Last run's results JSON, overriding the job's `compare_with`.
    pub previous: Option<PathBuf>,
}

/// Time spent in each stage of a run, for `-v`.
pub type Timings = Vec<(&'static str, std::time::Duration)>;

/// Reads the job's input and fits every model, returning all results and
/// the time each stage took.
///
/// The input is opened once and every read of it goes through that one
/// open file: the sheet, the plan sheets and the SHA-256, so the recorded
/// fingerprint is that of the bytes the results come from. Once every read
/// is done, and before any result is built, the file must be as it was
/// when opened ([`source::Input::check_unchanged`]).
///
/// # Errors
/// The first [`Error`] met; no model's results are returned when any fails.
pub fn analyse_job(job: &Job, options: &RunOptions) -> Result<(Results, Timings), Error> {
    let mut timings = Timings::new();
    let clock = Instant::now();
    let input = source::Input::open(&job.input)?;
    let (table, screened) = read_data(job, &input)?;
    let input_sha256 = input
        .sha256()
        .map(|digest| hex(&digest))
        .map_err(|source| Error::Fingerprint {
            path: job.input.clone(),
            source,
        })?;
    after_read_hook();
    timings.push(("read input", clock.elapsed()));
    let clock = Instant::now();
    let (sheet, rows_read) = (
        table.sheet.clone(),
        table.rows.len() + screened.summary_rows_left_out.len(),
    );
    let Analysed {
        models,
        comparisons,
        by_skipped,
    } = model_results(job, &input, table, Scope::Everything, &mut |_, _, _| {})?;
    // The plan sheets were the last reads of the input.
    input.check_unchanged()?;
    let changes = options
        .previous
        .as_ref()
        .or(job.compare_with.as_ref())
        .map(|path| results::changes::against(path, &models))
        .transpose()?;
    timings.push(("fit and check", clock.elapsed()));
    let run_time = options.run_time.unwrap_or_else(chrono::Utc::now);
    let tool = format!("sheetfit {}", env!("CARGO_PKG_VERSION"));
    let run_time = run_time.to_rfc3339_opts(chrono::SecondsFormat::Secs, true);
    let job_sha256 = sha256_hex(job.text.as_bytes());
    let compared = changes.as_ref().map(|c| c.previous.as_str()).unwrap_or("");
    let run = RunStamp {
        run_id: results::run_id(&[&tool, &run_time, &job_sha256, &input_sha256, compared]),
        tool,
        run_time,
        job_file: job.path.display().to_string(),
        job_sha256,
        input_file: job.input.display().to_string(),
        input_sha256,
        sheet,
        rows_read,
        screened,
    };
    Ok((
        collect(job, run, models, comparisons, by_skipped, changes),
        timings,
    ))
}

/// The report path with its placeholders filled: `{period}` the last
/// period in the data over the models with a date column, `{date}` the run
/// date, `{job}` the job file's stem.
///
/// # Errors
/// [`Error::NoPeriod`] when `{period}` is used and no model has periods.
pub fn output_path(job: &Job, results: &Results) -> Result<PathBuf, Error> {
    let text = job.output.to_string_lossy().into_owned();
    if !text.contains('{') {
        return Ok(job.output.clone());
    }
    let mut out = text.clone();
    if text.contains("{period}") {
        let last = results
            .models
            .iter()
            .filter_map(|m| m.timing.as_ref().map(|t| t.last.clone()))
            .max()
            .ok_or_else(|| Error::NoPeriod {
                path: job.output.clone(),
            })?;
        out = out.replace("{period}", &last);
    }
    let date = results.run.run_time.get(..10).unwrap_or_default();
    let stem = job
        .path
        .file_stem()
        .and_then(|s| s.to_str())
        .unwrap_or("job");
    Ok(PathBuf::from(
        out.replace("{date}", date).replace("{job}", stem),
    ))
}

/// Refuses a batch in which two jobs name the same report, before any of
/// them runs: each job's `output.workbook` with `{job}` filled in (the
/// other placeholders are the same for every job of a batch on the same
/// data), resolved as the system will resolve it. Jobs that cannot be read
/// are left to fail on their own.
///
/// # Errors
/// [`Error::SharedOutput`] naming the two job files and the report.
pub fn check_batch_outputs(jobs: &[PathBuf]) -> Result<(), Error> {
    let mut seen: Vec<(PathBuf, PathBuf)> = Vec::new();
    for path in jobs {
        let Ok(job) = job::load(path) else { continue };
        let stem = path.file_stem().and_then(|s| s.to_str()).unwrap_or("job");
        let output = PathBuf::from(job.output.to_string_lossy().replace("{job}", stem));
        let resolved = report::target::resolved(&output);
        if let Some((first, _)) = seen.iter().find(|(_, r)| *r == resolved) {
            return Err(Error::SharedOutput {
                first: first.clone(),
                second: path.clone(),
                output,
            });
        }
        seen.push((path.clone(), resolved));
    }
    Ok(())
}

/// What a run wrote and how long it took.
#[derive(Debug, Clone)]
pub struct RunReport {
    /// The files written.
    pub written: report::Written,
    /// Time per stage.
    pub timings: Timings,
}

/// Runs the job file at `path`: fits every model and writes the report
/// workbook and the results JSON.
///
/// # Errors
/// Any [`Error`]; nothing is written when one occurs, and an existing
/// report is left alone unless the job or `options` allow replacing it.
pub fn run_job(path: &Path, options: &RunOptions) -> Result<RunReport, Error> {
    let job = job::load(path)?;
    let (results, mut timings) = analyse_job(&job, options)?;
    let clock = Instant::now();
    let output = output_path(&job, &results)?;
    let written = report::write(
        &results,
        &output,
        &[&job.input, &job.path],
        options.overwrite || job.overwrite,
    )?;
    timings.push(("write report", clock.elapsed()));
    Ok(RunReport { written, timings })
}

/// Checks the job file at `path` against its input without writing
/// anything, and describes the columns and what each model would fit.
///
/// # Errors
/// The first [`Error`] a run would meet before writing.
pub fn check_job(path: &Path) -> Result<String, Error> {
    let job = job::load(path)?;
    report::check_targets(&job.output, &[&job.input, &job.path])?;
    let input = source::Input::open(&job.input)?;
    let tables = input.worksheet_tables()?;
    let (table, screened) = read_data(&job, &input)?;
    let mut out = String::new();
    let _ = writeln!(out, "job {}: {} model(s)", path.display(), job.models.len());
    let _ = writeln!(
        out,
        "input {}, sheet '{}': {} data rows below header row {}",
        job.input.display(),
        table.sheet,
        table.rows.len(),
        table.header_row
    );
    for t in &tables {
        let _ = writeln!(out, "worksheet table {t}");
    }
    for row in &screened.summary_rows_left_out {
        let _ = writeln!(out, "left out before any model: {}", row.reason);
    }
    for t in &screened.text_numbers_read {
        let _ = writeln!(
            out,
            "read as numbers: {} text cells of column '{}'",
            t.cells, t.column
        );
    }
    out.push_str(&describe_columns(&table));
    // Each model as a run computes it, so check meets the errors the data
    // can raise; suggested models and comparisons are left to run.
    let analysed = model_results(
        &job,
        &input,
        table,
        Scope::Models,
        &mut |spec, design, fit| {
            describe_model(&mut out, spec, design, fit);
        },
    )?;
    for skipped in &analysed.by_skipped {
        let _ = writeln!(
            out,
            "model '{} [{}]' ({} rows) would not be fitted: {}",
            skipped.model, skipped.level, skipped.rows, skipped.reason
        );
    }
    input.check_unchanged()?;
    if let Some(previous) = &job.compare_with {
        results::changes::against(previous, &analysed.models)?;
    }
    Ok(out)
}

/// What `check` prints for one model: rows, periods, dropped rows, terms,
/// aliased columns and the size of the fit.
fn describe_model(
    out: &mut String,
    spec: &job::ModelSpec,
    design: &design::Design,
    fit: &fit::Fit,
) {
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
            "  {} rows left out for blank cells{}: sheet rows {}",
            design.dropped.len(),
            if spec.lags.is_empty() {
                ""
            } else {
                " or lags with no value"
            },
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
        text::significant(fit.quality.condition_number, 4),
        fit.quality.precision.label()
    );
}

/// One line per column: letter, name, the kinds of value it holds and, for
/// text, its levels.
fn describe_columns(table: &Table) -> String {
    let mut out = String::from("columns:\n");
    for column in &table.columns {
        let mut kinds: Vec<(&str, usize)> = Vec::new();
        for v in column.values.iter() {
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
        let texts: Vec<Arc<String>> = column
            .values
            .iter()
            .filter_map(|v| match v {
                Value::Text(s) => Some(s),
                _ => None,
            })
            .collect();
        let mut levels: Vec<&str> = texts.iter().map(|s| s.as_str()).collect();
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
    hex(&Sha256::digest(bytes))
}

/// A test hook: when `SHEETFIT_TEST_AFTER_READ` is set, it is run as a
/// shell command once the input's sheet has been read and hashed, before
/// the plan sheets are read and the input is checked for changes, so that
/// a test can change the input at that moment. Its outcome is ignored.
fn after_read_hook() {
    if let Some(command) = std::env::var_os("SHEETFIT_TEST_AFTER_READ") {
        let _ = std::process::Command::new("sh")
            .arg("-c")
            .arg(command)
            .status();
    }
}

fn hex(digest: &[u8]) -> String {
    digest.iter().fold(String::with_capacity(64), |mut s, b| {
        let _ = write!(s, "{b:02x}");
        s
    })
}
