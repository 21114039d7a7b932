//! The `sheetfit` command line: parses arguments and calls the library.
//!
//! Exit status: 0 when every job succeeded, 1 when a job failed on its data
//! or output, 2 for a usage or job-file error; with several jobs the
//! highest wins.

use std::io::IsTerminal;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::time::Duration;

use clap::{Parser, Subcommand};
use rayon::prelude::*;
use serde::Serialize;

/// Fits the linear regression models listed in a TOML job file to a
/// workbook sheet and writes a report workbook and a results JSON.
#[derive(Parser)]
#[command(name = "sheetfit", version, about, long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Fit every model of each job and write its report workbook and JSON.
    Run(RunArgs),
    /// Check a job against its input and show what would be fitted; writes nothing.
    Check {
        /// The job file to check.
        #[arg(value_name = "JOB.toml")]
        job: PathBuf,
    },
    /// Write a commented starter job file.
    Init {
        /// Where to write it; an existing file is never replaced.
        #[arg(default_value = "sheetfit-job.toml")]
        path: PathBuf,
    },
}

#[derive(clap::Args)]
struct RunArgs {
    /// Job files, or folders whose *.toml files are all run; jobs run in
    /// parallel and a failing job does not stop the others.
    #[arg(required = true, value_name = "JOB.toml|FOLDER")]
    jobs: Vec<PathBuf>,
    /// Replace existing reports (otherwise only jobs with `overwrite = true`
    /// under [output] replace theirs).
    #[arg(long)]
    overwrite: bool,
    /// Record this run time (RFC 3339, e.g. 2026-01-05T08:00:00Z) instead of
    /// the clock's, so reruns on the same inputs give identical files. The
    /// environment variable SOURCE_DATE_EPOCH (seconds) does the same.
    #[arg(long, value_name = "TIME")]
    fixed_time: Option<String>,
    /// Last run's results JSON to compare with (overrides `compare_with`).
    #[arg(long, value_name = "PATH")]
    previous: Option<PathBuf>,
    /// Print a machine-readable run summary on standard output.
    #[arg(long)]
    json: bool,
    /// Print nothing but errors.
    #[arg(short, long, conflicts_with = "verbose")]
    quiet: bool,
    /// Also print the time each stage of each job took.
    #[arg(short, long)]
    verbose: bool,
}

const STARTER_JOB: &str = include_str!("../templates/job.toml");

fn main() -> ExitCode {
    let cli = Cli::parse();
    let status = match cli.command {
        Command::Run(args) => run(&args),
        Command::Check { job } => match sheetfit::check_job(&job) {
            Ok(summary) => {
                print!("{summary}");
                0
            }
            Err(e) => {
                eprintln!("sheetfit: error: {e}");
                exit_code(&e)
            }
        },
        Command::Init { path } => init(&path),
    };
    ExitCode::from(status)
}

fn exit_code(e: &sheetfit::Error) -> u8 {
    if e.is_job_file_error() {
        2
    } else {
        1
    }
}

/// One job's outcome, as the `--json` summary lists it.
#[derive(Serialize)]
struct Outcome {
    job: String,
    status: &'static str,
    workbook: Option<String>,
    json: Option<String>,
    error: Option<String>,
    /// What the run repaired of an earlier, interrupted run of its report.
    note: Option<String>,
    #[serde(skip)]
    code: u8,
    #[serde(skip)]
    timings: sheetfit::Timings,
}

fn run(args: &RunArgs) -> u8 {
    let jobs = match job_files(&args.jobs) {
        Ok(jobs) => jobs,
        Err(message) => {
            eprintln!("sheetfit: error: {message}");
            return 2;
        }
    };
    let options = match run_options(args) {
        Ok(options) => options,
        Err(message) => {
            eprintln!("sheetfit: error: {message}");
            return 2;
        }
    };
    // On a terminal: a bar over the jobs of a batch, or a spinner while a
    // single job reads, fits and writes.
    let bar = (!args.quiet && std::io::stderr().is_terminal()).then(|| {
        let bar = if jobs.len() > 1 {
            indicatif::ProgressBar::new(jobs.len() as u64)
        } else {
            let spinner = indicatif::ProgressBar::new_spinner();
            if let Some(job) = jobs.first() {
                spinner.set_message(format!("running {}", job.display()));
            }
            spinner
        };
        bar.enable_steady_tick(Duration::from_millis(200));
        bar
    });
    let outcomes: Vec<Outcome> = jobs
        .par_iter()
        .map(|job| {
            let outcome = run_one(job, &options);
            if let Some(bar) = &bar {
                bar.inc(1);
            }
            outcome
        })
        .collect();
    if let Some(bar) = bar {
        bar.finish_and_clear();
    }
    for o in &outcomes {
        if let Some(note) = &o.note {
            eprintln!("sheetfit: note: {}: {note}", o.job);
        }
        if let Some(e) = &o.error {
            eprintln!("sheetfit: error: {e}");
        }
    }
    if args.verbose {
        for o in &outcomes {
            for (stage, time) in &o.timings {
                eprintln!("sheetfit: {}: {stage}: {:.3} s", o.job, time.as_secs_f64());
            }
        }
    }
    if !args.quiet {
        eprint!("{}", summary_table(&outcomes));
    }
    if args.json {
        let summary = serde_json::json!({ "jobs": outcomes });
        println!("{summary:#}");
    }
    outcomes.iter().map(|o| o.code).max().unwrap_or(0)
}

fn run_one(job: &Path, options: &sheetfit::RunOptions) -> Outcome {
    let name = job.display().to_string();
    match sheetfit::run_job(job, options) {
        Ok(report) => Outcome {
            job: name,
            status: "ok",
            workbook: Some(report.written.workbook.display().to_string()),
            json: Some(report.written.json.display().to_string()),
            error: None,
            note: report.written.repaired.clone(),
            code: 0,
            timings: report.timings,
        },
        Err(e) => Outcome {
            job: name,
            status: "failed",
            workbook: None,
            json: None,
            error: Some(e.to_string()),
            note: None,
            code: exit_code(&e),
            timings: Vec::new(),
        },
    }
}

/// The jobs named on the command line: files as given, folders as their
/// `*.toml` files in name order.
fn job_files(paths: &[PathBuf]) -> Result<Vec<PathBuf>, String> {
    let mut jobs = Vec::new();
    for path in paths {
        if path.is_dir() {
            let entries = std::fs::read_dir(path)
                .map_err(|e| format!("cannot read folder {}: {e}", path.display()))?;
            let mut found: Vec<PathBuf> = entries
                .filter_map(|e| e.ok().map(|e| e.path()))
                .filter(|p| p.extension().is_some_and(|x| x == "toml") && p.is_file())
                .collect();
            if found.is_empty() {
                return Err(format!(
                    "folder {} holds no .toml job files",
                    path.display()
                ));
            }
            found.sort();
            jobs.extend(found);
        } else {
            jobs.push(path.clone());
        }
    }
    Ok(jobs)
}

/// The run options from the flags and SOURCE_DATE_EPOCH.
fn run_options(args: &RunArgs) -> Result<sheetfit::RunOptions, String> {
    let run_time = match (&args.fixed_time, std::env::var("SOURCE_DATE_EPOCH").ok()) {
        (Some(text), _) => Some(
            chrono::DateTime::parse_from_rfc3339(text)
                .map_err(|e| format!("--fixed-time '{text}' is not an RFC 3339 time such as 2026-01-05T08:00:00Z ({e})"))?
                .with_timezone(&chrono::Utc),
        ),
        (None, Some(seconds)) => Some(
            seconds
                .trim()
                .parse::<i64>()
                .ok()
                .and_then(|s| chrono::DateTime::from_timestamp(s, 0))
                .ok_or_else(|| format!("SOURCE_DATE_EPOCH '{seconds}' is not a number of seconds"))?,
        ),
        (None, None) => None,
    };
    Ok(sheetfit::RunOptions {
        overwrite: args.overwrite,
        run_time,
        previous: args.previous.clone(),
    })
}

/// A plain table: job, status, and the files written (or a pointer to the
/// error printed above it).
fn summary_table(outcomes: &[Outcome]) -> String {
    let width = outcomes
        .iter()
        .map(|o| o.job.len())
        .max()
        .unwrap_or(3)
        .max(3);
    let mut out = format!("{:<width$}  {:<6}  written\n", "job", "status");
    for o in outcomes {
        let detail = match (&o.workbook, &o.json) {
            (Some(w), Some(j)) => format!("{w} and {j}"),
            _ => "nothing (see the error above)".to_string(),
        };
        out.push_str(&format!("{:<width$}  {:<6}  {detail}\n", o.job, o.status));
    }
    out
}

fn init(path: &Path) -> u8 {
    let file = std::fs::OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(path);
    match file.and_then(|mut f| std::io::Write::write_all(&mut f, STARTER_JOB.as_bytes())) {
        Ok(()) => {
            eprintln!(
                "sheetfit: wrote starter job {}; edit it, then run `sheetfit check {}`",
                path.display(),
                path.display()
            );
            0
        }
        Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {
            eprintln!(
                "sheetfit: error: {} already exists; choose another path or remove it first",
                path.display()
            );
            2
        }
        Err(e) => {
            eprintln!("sheetfit: error: cannot write {}: {e}", path.display());
            1
        }
    }
}
