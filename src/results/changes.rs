//! What changed since the last run: coefficient moves and how last run's
//! forecasts did now that their periods have actual values.
//!
//! The previous run is read from its results JSON (the contract in
//! DESIGN.md), tolerating fields it does not know, so a report from an
//! older version still compares.

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use super::model::ModelResults;
use super::RUN_ID_PROPERTY;

/// A move in a coefficient is *notable* when it exceeds this many combined
/// standard errors (the two-sided 5% point of the normal; a rough guide,
/// since the two runs share most of their rows and so are not independent).
pub const NOTABLE_Z: f64 = 1.96;

/// An error reading last run's results.
#[derive(Debug, thiserror::Error)]
pub enum ChangesError {
    /// The file cannot be read.
    #[error("cannot read last run's results {path}: {source}; check `compare_with` in the job file or --previous")]
    Read {
        /// The file.
        path: PathBuf,
        /// The operating system's reason.
        source: std::io::Error,
    },
    /// The results JSON and the workbook beside it come from two runs.
    #[error("last run's results {json} and the report workbook beside it, {workbook}, come from two different runs (run ids {json_run} and {workbook_run}): a run was stopped while it replaced them. Run that job again, which repairs the pair, or point `compare_with` (or --previous) at another run's results")]
    MixedPair {
        /// The results JSON.
        json: PathBuf,
        /// The workbook beside it.
        workbook: PathBuf,
        /// The JSON's run id.
        json_run: String,
        /// The workbook's run id.
        workbook_run: String,
    },
    /// The file is not a results JSON.
    #[error("{path} is not a sheetfit results file: {reason}")]
    Parse {
        /// The file.
        path: PathBuf,
        /// The parser's message.
        reason: String,
    },
}

#[derive(Deserialize)]
struct Previous {
    #[serde(default)]
    run: Option<PreviousRun>,
    models: Vec<PreviousModel>,
}

#[derive(Deserialize)]
struct PreviousRun {
    #[serde(default)]
    run_id: Option<String>,
}

#[derive(Deserialize)]
struct PreviousModel {
    name: String,
    #[serde(default)]
    coefficients: Vec<PreviousCoefficient>,
    #[serde(default)]
    forecast: Vec<PreviousForecast>,
}

#[derive(Deserialize)]
struct PreviousCoefficient {
    term: String,
    estimate: f64,
    std_error: f64,
}

#[derive(Deserialize)]
struct PreviousForecast {
    period: Option<String>,
    estimate: f64,
    pred_lower: f64,
    pred_upper: f64,
}

/// A coefficient in both runs.
#[derive(Debug, Clone, Serialize)]
pub struct Change {
    /// Model name (the same in both runs).
    pub model: String,
    /// Coefficient name.
    pub term: String,
    /// Last run's estimate.
    pub previous_estimate: f64,
    /// This run's estimate.
    pub estimate: f64,
    /// estimate − previous_estimate.
    pub change: f64,
    /// √(se_previous² + se²).
    pub combined_std_error: f64,
    /// change / combined_std_error.
    pub z: Option<f64>,
    /// |z| above [`NOTABLE_Z`].
    pub notable: bool,
}

/// Last run's forecast of a period that now has data.
#[derive(Debug, Clone, Serialize)]
pub struct Tracking {
    /// Model name.
    pub model: String,
    /// Period label.
    pub period: String,
    /// Last run's estimate.
    pub previous_estimate: f64,
    /// Last run's lower prediction limit.
    pub previous_pred_lower: f64,
    /// Last run's upper prediction limit.
    pub previous_pred_upper: f64,
    /// This run's actual: the mean of the period's rows.
    pub actual: f64,
    /// actual − previous_estimate.
    pub error: f64,
    /// Whether the actual fell inside last run's prediction interval.
    pub inside: bool,
}

/// Changes against last run's results.
#[derive(Debug, Clone, Serialize)]
pub struct RunChanges {
    /// Last run's results file.
    pub previous: String,
    /// Coefficient moves, per model and term present in both runs.
    pub changes: Vec<Change>,
    /// Last run's forecasts of periods that now have data.
    pub forecast_tracking: Vec<Tracking>,
}

/// Compares `models` with the results JSON at `path`.
///
/// # Errors
/// [`ChangesError`] when the file cannot be read or is not a results JSON.
pub fn against(path: &Path, models: &[ModelResults]) -> Result<RunChanges, ChangesError> {
    let text = std::fs::read_to_string(path).map_err(|source| ChangesError::Read {
        path: path.to_path_buf(),
        source,
    })?;
    let previous: Previous = serde_json::from_str(&text).map_err(|e| ChangesError::Parse {
        path: path.to_path_buf(),
        reason: e.to_string(),
    })?;
    if let Some(json_run) = previous.run.and_then(|r| r.run_id) {
        let workbook = path.with_extension("xlsx");
        if let Some(workbook_run) = workbook_run_id(&workbook) {
            if workbook_run != json_run {
                return Err(ChangesError::MixedPair {
                    json: path.to_path_buf(),
                    workbook,
                    json_run,
                    workbook_run,
                });
            }
        }
    }
    let mut changes = Vec::new();
    let mut forecast_tracking = Vec::new();
    for m in models {
        let Some(old) = previous.models.iter().find(|p| p.name == m.name) else {
            continue;
        };
        for c in &m.coefficients {
            let Some(o) = old.coefficients.iter().find(|o| o.term == c.term) else {
                continue;
            };
            let change = c.estimate - o.estimate;
            let combined = (c.std_error.powi(2) + o.std_error.powi(2)).sqrt();
            let z = (combined > 0.0).then(|| change / combined);
            changes.push(Change {
                model: m.name.clone(),
                term: c.term.clone(),
                previous_estimate: o.estimate,
                estimate: c.estimate,
                change,
                combined_std_error: combined,
                z,
                notable: z.is_some_and(|z| z.abs() > NOTABLE_Z),
            });
        }
        for f in &old.forecast {
            let Some(period) = &f.period else { continue };
            let Some(h) = m.history.iter().find(|h| &h.period == period) else {
                continue;
            };
            forecast_tracking.push(Tracking {
                model: m.name.clone(),
                period: period.clone(),
                previous_estimate: f.estimate,
                previous_pred_lower: f.pred_lower,
                previous_pred_upper: f.pred_upper,
                actual: h.actual,
                error: h.actual - f.estimate,
                inside: (f.pred_lower..=f.pred_upper).contains(&h.actual),
            });
        }
    }
    Ok(RunChanges {
        previous: path.display().to_string(),
        changes,
        forecast_tracking,
    })
}

/// The run id a report workbook carries in its custom document properties,
/// or `None` when the file is missing, unreadable or carries none (a report
/// from before run ids).
fn workbook_run_id(workbook: &Path) -> Option<String> {
    let file = std::fs::File::open(workbook).ok()?;
    let mut archive = zip::ZipArchive::new(file).ok()?;
    let mut xml = String::new();
    std::io::Read::read_to_string(&mut archive.by_name("docProps/custom.xml").ok()?, &mut xml)
        .ok()?;
    let after = &xml[xml.find(&format!("name=\"{RUN_ID_PROPERTY}\""))?..];
    let value = &after[after.find("<vt:lpwstr>")? + "<vt:lpwstr>".len()..];
    Some(value[..value.find('<')?].to_string())
}
