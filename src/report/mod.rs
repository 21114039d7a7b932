//! Writing the results: the report workbook and the results JSON beside it.
//!
//! Both files are written straight to staging files in the target folder
//! (the workbook and the JSON at the same time, on two threads where a
//! second thread can be had), so neither is ever held whole in memory, and
//! only then renamed into place as one pair under a lock per report
//! ([`pair`]): the folder holds one run's pair, never a half-written file
//! or one run's workbook beside another run's JSON. Whether a report would
//! replace the input or the job file is decided by file identity
//! ([`target`]).

mod layout;
pub mod pair;
pub mod target;
pub mod workbook;

use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

use crate::results::Results;

use self::pair::{PairLock, PairPaths};
use self::target::FileIdentity;

/// An error while writing the report.
#[derive(Debug, thiserror::Error)]
pub enum ReportError {
    /// The report would replace the input it was computed from.
    #[error("the output path {path} is the input workbook or the job file itself; choose another `output.workbook` in the job file")]
    OutputIsInput {
        /// The path given for the report.
        path: PathBuf,
    },
    /// The report exists and the run may not replace it.
    #[error("{path} exists; run with --overwrite, or set `overwrite = true` under [output] in the job file, to replace it (or put {{period}} or {{date}} in `output.workbook` to keep every run)")]
    Exists {
        /// The existing file.
        path: PathBuf,
    },
    /// Another run holds the report's lock.
    #[error("another sheetfit run (process {holder}) is writing {path}; waited {waited} s for it to finish. Wait until it ends and run again, or give this job another `output.workbook`")]
    Locked {
        /// The report path.
        path: PathBuf,
        /// The other run's process id, as its lock file says.
        holder: String,
        /// Seconds waited.
        waited: u64,
    },
    /// The output path names a folder.
    #[error(
        "the output path {path} is a folder; give a file name ending in .xlsx in `output.workbook` (the results JSON takes the same name with .json)"
    )]
    OutputIsFolder {
        /// The path given for the report.
        path: PathBuf,
    },
    /// A file or folder could not be written.
    #[error("cannot write {path}: {}", write_failure(source))]
    Io {
        /// The file or folder.
        path: PathBuf,
        /// The operating system's reason.
        source: std::io::Error,
    },
    /// The workbook writer refused the content.
    #[error("cannot build the report workbook {path}: {source}")]
    Workbook {
        /// The report path.
        path: PathBuf,
        /// The writer's error.
        source: rust_xlsxwriter::XlsxError,
    },
    /// The results could not be turned into JSON.
    #[error("cannot build the results JSON {path}: {source}")]
    Json {
        /// The JSON path.
        path: PathBuf,
        /// The serializer's error.
        source: serde_json::Error,
    },
}

/// Why a write failed, and what to do for the failures a user can fix.
fn write_failure(error: &std::io::Error) -> String {
    use std::io::ErrorKind;
    match error.kind() {
        ErrorKind::PermissionDenied => "permission denied; set `output.workbook` to a folder this user may write to, or ask for write access to this one".into(),
        ErrorKind::ReadOnlyFilesystem => "the disk is read-only; set `output.workbook` to a folder on a writable disk".into(),
        ErrorKind::StorageFull | ErrorKind::QuotaExceeded => "the disk is full; free some space or set `output.workbook` to another disk".into(),
        _ => error.to_string(),
    }
}

/// The files a run wrote.
#[derive(Debug, Clone)]
pub struct Written {
    /// The report workbook.
    pub workbook: PathBuf,
    /// The results JSON.
    pub json: PathBuf,
    /// What the run repaired of an earlier, interrupted run of the same
    /// report before writing, in words.
    pub repaired: Option<String>,
}

/// The results JSON path for a report workbook: the same name with `.json`.
pub fn json_path(workbook: &Path) -> PathBuf {
    workbook.with_extension("json")
}

/// Writes the workbook to `path` and the results JSON beside it as one
/// pair (see [`pair`]), refusing to replace any of `protected` (the input
/// workbook and the job file) and, unless `overwrite`, an existing report.
///
/// # Errors
/// [`ReportError`] when the path is unusable, the report exists, another
/// run holds its lock, or a write fails; in each case the folder holds the
/// old pair (or none), and no staging file is left.
pub fn write(
    results: &Results,
    path: &Path,
    protected: &[&Path],
    overwrite: bool,
) -> Result<Written, ReportError> {
    let protected = identities(protected);
    check_identities(path, &protected)?;
    let paths = PairPaths::new(path);
    let folder = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    std::fs::create_dir_all(&folder).map_err(|source| ReportError::Io {
        path: folder.clone(),
        source,
    })?;
    // Resolved again now that the folder exists.
    check_identities(path, &protected)?;
    let lock = PairLock::take(&paths)?;
    let repaired = pair::repair(&paths, &lock)?.message(&paths);
    if !overwrite {
        if let Some(existing) = [&paths.workbook, &paths.json]
            .into_iter()
            .find(|p| p.is_file())
        {
            return Err(ReportError::Exists {
                path: existing.clone(),
            });
        }
    }
    let json = paths.json.clone();
    let write_workbook = |file: &mut File| {
        workbook::write_workbook(results, file).map_err(|source| workbook_error(path, source))
    };
    let write_json = |file: &mut File| {
        let json_error = |source| ReportError::Json {
            path: json.clone(),
            source,
        };
        let mut out = BufWriter::new(file);
        let mut serializer =
            serde_json::Serializer::with_formatter(&mut out, layout::RecordLayout::default());
        serde::Serialize::serialize(results, &mut serializer).map_err(json_error)?;
        out.write_all(b"\n")
            .and_then(|()| out.flush())
            .map_err(|source| ReportError::Io {
                path: json.clone(),
                source,
            })
    };
    let staged_workbook = paths.staged(&paths.workbook);
    let staged_json = paths.staged(&paths.json);
    // The two files are written at the same time where a second thread can
    // be had, one after the other where it cannot.
    let (workbook_done, json_done) = std::thread::scope(|scope| {
        let json_task = std::thread::Builder::new()
            .name("results-json".into())
            .spawn_scoped(scope, || stage(&staged_json, write_json));
        let workbook_done = stage(&staged_workbook, write_workbook);
        let json_done = match json_task {
            Ok(task) => task
                .join()
                .unwrap_or_else(|panic| std::panic::resume_unwind(panic)),
            Err(_) => stage(&staged_json, write_json),
        };
        (workbook_done, json_done)
    });
    let replaced = workbook_done
        .and(json_done)
        .and_then(|()| pair::replace(&paths, &lock, &protected));
    if let Err(e) = replaced {
        let _ = std::fs::remove_file(&staged_workbook);
        let _ = std::fs::remove_file(&staged_json);
        return Err(e);
    }
    drop(lock);
    Ok(Written {
        workbook: paths.workbook,
        json: paths.json,
        repaired,
    })
}

/// The workbook writer's error, with a failed write on disk reported as one
/// (so a full disk reads as a full disk, not as the writer's own text).
fn workbook_error(path: &Path, source: rust_xlsxwriter::XlsxError) -> ReportError {
    let on_disk = |io: &std::io::Error| ReportError::Io {
        path: path.to_path_buf(),
        source: std::io::Error::new(io.kind(), io.to_string()),
    };
    if let rust_xlsxwriter::XlsxError::IoError(io) = &source {
        return on_disk(io);
    }
    // A write that failed inside the zip writer.
    let mut cause = std::error::Error::source(&source);
    while let Some(e) = cause {
        if let Some(io) = e.downcast_ref::<std::io::Error>() {
            return on_disk(io);
        }
        cause = e.source();
    }
    ReportError::Workbook {
        path: path.to_path_buf(),
        source,
    }
}

/// Checks that the report and its JSON can be written without touching
/// any of `protected`: neither path may be a folder or, by file identity,
/// a protected file (see [`target`]).
///
/// # Errors
/// [`ReportError::OutputIsFolder`] or [`ReportError::OutputIsInput`].
pub fn check_targets(path: &Path, protected: &[&Path]) -> Result<(), ReportError> {
    check_identities(path, &identities(protected))
}

fn identities(paths: &[&Path]) -> Vec<FileIdentity> {
    paths.iter().filter_map(|p| FileIdentity::of(p)).collect()
}

fn check_identities(path: &Path, protected: &[FileIdentity]) -> Result<(), ReportError> {
    for target in [path.to_path_buf(), json_path(path)] {
        if target.is_dir() {
            return Err(ReportError::OutputIsFolder { path: target });
        }
        if target::is_one_of(&target, protected) {
            return Err(ReportError::OutputIsInput { path: target });
        }
    }
    Ok(())
}

/// Fills the staged file `staged` with `fill`, flushed to disk and made
/// readable like a new file.
fn stage(
    staged: &Path,
    fill: impl FnOnce(&mut File) -> Result<(), ReportError>,
) -> Result<(), ReportError> {
    let io = |source| ReportError::Io {
        path: staged.to_path_buf(),
        source,
    };
    let mut file = File::create(staged).map_err(io)?;
    fill(&mut file)?;
    readable_by_others(&file).map_err(io)?;
    file.sync_all().map_err(io)
}

/// Temporary files are private to their owner; a report is a normal file
/// (read and write for the owner, read for others, as a new file would be).
#[cfg(unix)]
fn readable_by_others(file: &std::fs::File) -> std::io::Result<()> {
    use std::os::unix::fs::PermissionsExt;
    file.set_permissions(std::fs::Permissions::from_mode(0o644))
}

#[cfg(not(unix))]
fn readable_by_others(_file: &std::fs::File) -> std::io::Result<()> {
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_full_disk_inside_the_workbook_writer_reads_as_a_full_disk() {
        let full = std::io::Error::from(std::io::ErrorKind::StorageFull);
        let error = workbook_error(
            Path::new("out/r.xlsx"),
            rust_xlsxwriter::XlsxError::IoError(full),
        );
        assert_eq!(
            error.to_string(),
            "cannot write out/r.xlsx: the disk is full; free some space or set `output.workbook` to another disk"
        );
    }

    #[test]
    fn messages_name_the_report_and_what_to_do() {
        let locked = ReportError::Locked {
            path: PathBuf::from("out/r.xlsx"),
            holder: "4242".into(),
            waited: 10,
        };
        assert_eq!(
            locked.to_string(),
            "another sheetfit run (process 4242) is writing out/r.xlsx; waited 10 s for it to finish. Wait until it ends and run again, or give this job another `output.workbook`"
        );
        let exists = ReportError::Exists {
            path: PathBuf::from("out/r.json"),
        };
        assert!(exists
            .to_string()
            .starts_with("out/r.json exists; run with --overwrite"));
    }
}
