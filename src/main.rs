//! The `sheetfit` command line: parses arguments and calls the library.
//!
//! Exit status: 0 when every job succeeded, 1 when a job failed on its data
//! or output, 2 for a usage or job-file error.

use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Parser, Subcommand};

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
    Run {
        /// Job files to run; a failing job does not stop the others.
        #[arg(required = true, value_name = "JOB.toml")]
        jobs: Vec<PathBuf>,
    },
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

const STARTER_JOB: &str = include_str!("../templates/job.toml");

fn main() -> ExitCode {
    let cli = Cli::parse();
    let status = match cli.command {
        Command::Run { jobs } => jobs.iter().map(|j| run(j)).max().unwrap_or(0),
        Command::Check { job } => match sheetfit::check_job(&job) {
            Ok(summary) => {
                print!("{summary}");
                0
            }
            Err(e) => report_error(&e),
        },
        Command::Init { path } => init(&path),
    };
    ExitCode::from(status)
}

fn run(job: &std::path::Path) -> u8 {
    match sheetfit::run_job(job) {
        Ok(written) => {
            eprintln!(
                "sheetfit: {}: wrote {} and {}",
                job.display(),
                written.workbook.display(),
                written.json.display()
            );
            0
        }
        Err(e) => report_error(&e),
    }
}

fn report_error(e: &sheetfit::Error) -> u8 {
    eprintln!("sheetfit: error: {e}");
    if e.is_job_file_error() {
        2
    } else {
        1
    }
}

fn init(path: &std::path::Path) -> u8 {
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
