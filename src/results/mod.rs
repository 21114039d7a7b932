//! The results of one job: every number the report shows, computed once.
//!
//! [`Results`] is what the report stage lays out in the workbook and what is
//! serialized, field for field, as the results JSON (see DESIGN.md for the
//! contract). Each model's numbers are computed by [`analyse`] ([`model`]),
//! the comparison with last run's results by [`changes::against`], and the
//! whole is put together by [`collect`]; it is not changed afterwards.

use serde::Serialize;

use crate::source::screen::Screened;

use crate::compare::{Comparison, Comparisons};
use crate::job::Job;

pub mod ar1;
pub mod changes;
pub mod model;
pub mod summary;
pub mod terms;
pub mod whatif;

pub use changes::RunChanges;
pub use model::{analyse, equation, ByLevel, ModelResults, SkippedLevel};

/// The cautions printed on the overview sheet and carried in the JSON.
pub const CAUTIONS: [&str; 3] = [
    "A regression shows association between the response and the predictors in this data, not that one causes the other.",
    "Estimates and any projection from them assume the pattern in the data used here holds; a change in conditions can break it.",
    "This report supports, but does not replace, the judgement of qualified finance professionals and the organisation's own review and controls; decisions rest with the reader.",
];

/// Where the numbers came from, so a reader can trace and repeat the run.
#[derive(Debug, Clone, Serialize)]
pub struct RunStamp {
    /// An identifier of this run, carried by both the workbook and the JSON
    /// so a pair from two runs can be told ([`run_id`]).
    pub run_id: String,
    /// `sheetfit` and its version.
    pub tool: String,
    /// Time of the run, UTC, RFC 3339.
    pub run_time: String,
    /// The job file as given.
    pub job_file: String,
    /// SHA-256 of the job file's text, hex.
    pub job_sha256: String,
    /// The input file as resolved from the job.
    pub input_file: String,
    /// SHA-256 of the input file's bytes, hex.
    pub input_sha256: String,
    /// The sheet read.
    pub sheet: String,
    /// Data rows read below the header.
    pub rows_read: usize,
    /// Summary rows left out and text numbers read before any model.
    #[serde(flatten)]
    pub screened: Screened,
}

/// All results of one job.
#[derive(Debug, Clone, Serialize)]
pub struct Results {
    /// The job's title.
    pub title: String,
    /// Run stamp and input fingerprint.
    pub run: RunStamp,
    /// The cautions shown with the report.
    pub cautions: Vec<String>,
    /// The job's model names in job order (the What-if sheet numbers its
    /// blocks by them).
    #[serde(skip)]
    pub job_models: Vec<String>,
    /// The Summary sheet's sentences, led by the job's main model.
    pub summary: Option<summary::Summary>,
    /// One entry per model, in job order, then the suggested models.
    pub models: Vec<ModelResults>,
    /// Every pair of models, nested pairs with their partial F test.
    pub comparisons: Vec<Comparison>,
    /// Pairs of models not compared: pairs that are not nested, past the
    /// first [`crate::compare::UNNESTED_PAIRS_AMONG`] models.
    pub comparisons_left_out: usize,
    /// Levels of models fitted by level (`by`) that could not be fitted.
    pub by_skipped: Vec<SkippedLevel>,
    /// What changed since last run, when the job compares with one.
    #[serde(flatten)]
    pub changes: Option<RunChanges>,
}

/// Builds the job's results from its analysed models and their comparisons.
pub fn collect(
    job: &Job,
    run: RunStamp,
    models: Vec<ModelResults>,
    comparisons: Comparisons,
    by_skipped: Vec<SkippedLevel>,
    changes: Option<RunChanges>,
) -> Results {
    Results {
        title: job.title.clone(),
        run,
        cautions: CAUTIONS.iter().map(|c| c.to_string()).collect(),
        summary: summary::summary(&models, &job.summary_model),
        job_models: job.models.iter().map(|m| m.name.clone()).collect(),
        models,
        comparisons: comparisons.pairs,
        comparisons_left_out: comparisons.left_out,
        by_skipped,
        changes,
    }
}

/// The report workbook's custom document property that holds the run id,
/// the same as the results JSON's `run.run_id`.
pub const RUN_ID_PROPERTY: &str = "sheetfit_run_id";

/// A run's identifier: the first 16 hex digits of the SHA-256 of what
/// decides the report's content (tool, run time, the job file's and the
/// input's SHA-256, and the results compared with), so two runs on the same
/// inputs with a fixed run time share it, as their files are identical, and
/// any other two runs differ.
pub fn run_id(parts: &[&str]) -> String {
    use sha2::{Digest, Sha256};
    let mut hash = Sha256::new();
    for part in parts {
        hash.update(part.as_bytes());
        hash.update([0]);
    }
    hash.finalize()
        .iter()
        .take(8)
        .map(|b| format!("{b:02x}"))
        .collect()
}
