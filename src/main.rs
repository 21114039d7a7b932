//! The `sheetfit` command line: parses arguments and calls the library.
//!
//! Exit status: 0 when every job succeeded, 1 when a job failed on its data
//! or output, 2 for a usage or job-file error; with several jobs the
//! highest wins.

use std::io::{IsTerminal, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::time::Duration;

use clap::{Parser, Subcommand};
use rayon::prelude::*;
use serde::{Deserialize, Serialize};

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
    /// Run one job and print its outcome as JSON (used by `run`, which
    /// runs each job in a process of its own).
    #[command(hide = true)]
    RunJob {
        /// The job file.
        job: PathBuf,
        /// Replace an existing report.
        #[arg(long)]
        overwrite: bool,
        /// The run time, RFC 3339.
        #[arg(long)]
        run_time: Option<String>,
        /// Last run's results JSON.
        #[arg(long)]
        previous: Option<PathBuf>,
    },
    /// Write a commented starter job file.
    Init {
        /// Where to write it; an existing file is never replaced.
        #[arg(default_value = "sheetfit-job.toml")]
        path: PathBuf,
        /// Write the job from a look at this workbook or CSV file: where
        /// the data is, its columns and the roles they could play.
        #[arg(long, value_name = "DATA")]
        from: Option<PathBuf>,
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
        Command::Init { path, from } => init(&path, from.as_deref()),
        Command::RunJob {
            job,
            overwrite,
            run_time,
            previous,
        } => run_job_here(&job, overwrite, run_time, previous),
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

/// One job's outcome, as the `--json` summary lists it (and as a job's own
/// process reports it to `run`).
#[derive(Serialize, Deserialize)]
struct Outcome {
    job: String,
    status: String,
    workbook: Option<String>,
    json: Option<String>,
    error: Option<String>,
    /// What the run repaired of an earlier, interrupted run of its report.
    note: Option<String>,
    #[serde(skip_serializing, default)]
    code: u8,
    #[serde(skip_serializing, default)]
    timings: Vec<(String, f64)>,
}

fn run(args: &RunArgs) -> u8 {
    let jobs = match job_files(&args.jobs) {
        Ok(jobs) => jobs,
        Err(message) => {
            eprintln!("sheetfit: error: {message}");
            return 2;
        }
    };
    if let Err(e) = sheetfit::check_batch_outputs(&jobs) {
        eprintln!("sheetfit: error: {e}");
        return exit_code(&e);
    }
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
            let outcome = run_isolated(job, &options);
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
            for (stage, seconds) in &o.timings {
                eprintln!("sheetfit: {}: {stage}: {seconds:.3} s", o.job);
            }
        }
    }
    if !args.quiet {
        eprint!("{}", summary_table(&outcomes));
    }
    let mut status = outcomes.iter().map(|o| o.code).max().unwrap_or(0);
    if args.json {
        let summary = serde_json::json!({ "jobs": outcomes });
        let mut stdout = std::io::stdout().lock();
        if let Err(e) = writeln!(stdout, "{summary:#}").and_then(|()| stdout.flush()) {
            eprintln!(
                "sheetfit: error: cannot print the --json summary on standard output: {e}; the reports listed above were written"
            );
            status = status.max(1);
        }
    }
    status
}

fn run_one(job: &Path, options: &sheetfit::RunOptions) -> Outcome {
    let name = job.display().to_string();
    match sheetfit::run_job(job, options) {
        Ok(report) => Outcome {
            job: name,
            status: "ok".into(),
            workbook: Some(report.written.workbook.display().to_string()),
            json: Some(report.written.json.display().to_string()),
            error: None,
            note: report.written.repaired.clone(),
            code: 0,
            timings: report
                .timings
                .iter()
                .map(|(stage, time)| (stage.to_string(), time.as_secs_f64()))
                .collect(),
        },
        Err(e) => Outcome {
            job: name,
            status: "failed".into(),
            workbook: None,
            json: None,
            error: Some(e.to_string()),
            note: None,
            code: exit_code(&e),
            timings: Vec::new(),
        },
    }
}

/// Runs `job` in a process of its own (this program's `run-job`), so a
/// job that panics, runs out of memory or is killed takes nothing else down:
/// its outcome becomes a failure saying so, and the other jobs, the summary
/// and the exit status stand. Runs it here when no process can be started.
fn run_isolated(job: &Path, options: &sheetfit::RunOptions) -> Outcome {
    let Ok(program) = std::env::current_exe() else {
        return run_one(job, options);
    };
    let mut command = std::process::Command::new(program);
    command.arg("run-job").arg(job);
    if options.overwrite {
        command.arg("--overwrite");
    }
    if let Some(time) = options.run_time {
        command.arg("--run-time").arg(time.to_rfc3339());
    }
    if let Some(previous) = &options.previous {
        command.arg("--previous").arg(previous);
    }
    let output = match command
        .stdin(std::process::Stdio::null())
        .stderr(std::process::Stdio::piped())
        .output()
    {
        Ok(output) => output,
        Err(_) => return run_one(job, options),
    };
    let name = job.display().to_string();
    match serde_json::from_slice::<JobProcessReport>(&output.stdout) {
        Ok(report) if output.status.code().is_some() => {
            let mut outcome = report.outcome;
            outcome.code = output.status.code().unwrap_or(1).clamp(0, 2) as u8;
            outcome.timings = report.timings;
            outcome
        }
        _ => {
            let said = String::from_utf8_lossy(&output.stderr);
            let last = said.lines().rev().find(|l| !l.trim().is_empty());
            Outcome {
                job: name.clone(),
                status: "failed".into(),
                workbook: None,
                json: None,
                error: Some(format!(
                    "job {name} stopped unexpectedly ({}{}); the other jobs are not affected, and its report, if any, was left as it was (the next run tidies what it staged)",
                    stopped_by(&output.status),
                    last.map(|l| format!(": {}", l.trim())).unwrap_or_default()
                )),
                note: None,
                code: 1,
                timings: Vec::new(),
            }
        }
    }
}

/// How a job's process ended, in words.
fn stopped_by(status: &std::process::ExitStatus) -> String {
    #[cfg(unix)]
    {
        use std::os::unix::process::ExitStatusExt;
        match status.signal() {
            Some(6) => return "it aborted, as on running out of memory".into(),
            Some(9) => {
                return "killed by signal 9, as when the system runs out of memory or another process stops it".into()
            }
            Some(signal) => return format!("killed by signal {signal}"),
            None => {}
        }
    }
    format!("it ended with {status} and no outcome")
}

/// `run-job`: runs one job in this process and prints its outcome as JSON
/// on standard output for the `run` that started it.
fn run_job_here(
    job: &Path,
    overwrite: bool,
    run_time: Option<String>,
    previous: Option<PathBuf>,
) -> u8 {
    // A job's process ends with the `run` that started it, so stopping a
    // run (a scheduler's time-out, a kill) stops its jobs too.
    #[cfg(target_os = "linux")]
    {
        // SAFETY: prctl with PR_SET_PDEATHSIG takes a signal number and
        // changes only this process's own setting.
        unsafe {
            libc::prctl(libc::PR_SET_PDEATHSIG, libc::SIGKILL);
        }
        // The run may have ended before the setting took hold.
        if std::os::unix::process::parent_id() == 1 {
            return 1;
        }
    }
    // Test hook: the job named here aborts, as a process out of memory does.
    if std::env::var_os("SHEETFIT_TEST_ABORT_JOB")
        .is_some_and(|name| job.file_name() == Some(&name))
    {
        std::process::abort();
    }
    let run_time = run_time.and_then(|t| {
        chrono::DateTime::parse_from_rfc3339(&t)
            .ok()
            .map(|t| t.with_timezone(&chrono::Utc))
    });
    let options = sheetfit::RunOptions {
        overwrite,
        run_time,
        previous,
    };
    let outcome = run_one(job, &options);
    let report = JobProcessReport {
        timings: outcome.timings.clone(),
        outcome,
    };
    match serde_json::to_string(&report) {
        Ok(text) => println!("{text}"),
        Err(e) => eprintln!("sheetfit: error: {e}"),
    }
    report.outcome.code
}

/// What a job's own process prints for `run`: its outcome and the time
/// each stage took.
#[derive(Serialize, Deserialize)]
struct JobProcessReport {
    outcome: Outcome,
    timings: Vec<(String, f64)>,
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

fn init(path: &Path, from: Option<&Path>) -> u8 {
    let text = match from {
        None => STARTER_JOB.to_string(),
        Some(data) => match sheetfit::starter::starter_job(data, &relative_to_job(data, path)) {
            Ok(text) => text,
            Err(e) => {
                eprintln!("sheetfit: error: {e}");
                return 1;
            }
        },
    };
    let file = std::fs::OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(path);
    match file.and_then(|mut f| std::io::Write::write_all(&mut f, text.as_bytes())) {
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

/// The path of `data` as the job file at `job` names it: relative to the
/// job's folder when the data lies under it, else absolute.
fn relative_to_job(data: &Path, job: &Path) -> String {
    let absolute = |p: &Path| std::path::absolute(p).unwrap_or_else(|_| p.to_path_buf());
    let data = absolute(data);
    let folder = absolute(job)
        .parent()
        .map(Path::to_path_buf)
        .unwrap_or_default();
    data.strip_prefix(&folder)
        .map(|p| p.to_path_buf())
        .unwrap_or(data)
        .to_string_lossy()
        .replace('\\', "/")
}
