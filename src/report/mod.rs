//! Writing the results: the report workbook and the results JSON beside it.
//!
//! Both files are written straight to temporary files in the target folder
//! (the workbook and the JSON at the same time, on two threads) and only
//! then renamed into place, so a failed run leaves the previous report
//! untouched and never a half-written one, and neither file is ever held
//! whole in memory.

mod layout;
pub mod workbook;

use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

use crate::results::Results;

/// An error while writing the report.
#[derive(Debug, thiserror::Error)]
pub enum ReportError {
    /// The report would replace the input it was computed from.
    #[error("the output path {path} is the input workbook or the job file itself; choose another `output.workbook` in the job file")]
    OutputIsInput {
        /// The path given for the report.
        path: PathBuf,
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
}

/// The results JSON path for a report workbook: the same name with `.json`.
pub fn json_path(workbook: &Path) -> PathBuf {
    workbook.with_extension("json")
}

/// Writes the workbook to `path` and the results JSON beside it, refusing
/// to overwrite any of `protected` (the input workbook and the job file).
///
/// # Errors
/// [`ReportError`] when the path is unusable or a write fails; in that case
/// neither file has been replaced.
pub fn write(results: &Results, path: &Path, protected: &[&Path]) -> Result<Written, ReportError> {
    check_targets(path, protected)?;
    let json = json_path(path);
    let folder = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    std::fs::create_dir_all(&folder).map_err(|source| ReportError::Io {
        path: folder.clone(),
        source,
    })?;
    let write_workbook = |file: &mut File| {
        workbook::write_workbook(results, file).map_err(|source| ReportError::Workbook {
            path: path.to_path_buf(),
            source,
        })
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
    let (staged_workbook, staged_json) = std::thread::scope(|scope| {
        let json_task = scope.spawn(|| stage(&folder, write_json));
        let staged_workbook = stage(&folder, write_workbook);
        let staged_json = json_task
            .join()
            .unwrap_or_else(|panic| std::panic::resume_unwind(panic));
        (staged_workbook, staged_json)
    });
    let (staged_workbook, staged_json) = (staged_workbook?, staged_json?);
    let persist = |staged: tempfile::NamedTempFile, target: &Path| {
        staged.persist(target).map_err(|e| ReportError::Io {
            path: target.to_path_buf(),
            source: e.error,
        })
    };
    persist(staged_workbook, path)?;
    persist(staged_json, &json)?;
    Ok(Written {
        workbook: path.to_path_buf(),
        json,
    })
}

/// Checks that the report and its JSON can be written without touching
/// any of `protected`: neither path may be a folder or a protected file.
///
/// # Errors
/// [`ReportError::OutputIsFolder`] or [`ReportError::OutputIsInput`].
pub fn check_targets(path: &Path, protected: &[&Path]) -> Result<(), ReportError> {
    for target in [path.to_path_buf(), json_path(path)] {
        if target.is_dir() {
            return Err(ReportError::OutputIsFolder { path: target });
        }
        if protected.iter().any(|p| same_file(&target, p)) {
            return Err(ReportError::OutputIsInput { path: target });
        }
    }
    Ok(())
}

/// A temporary file in `folder` filled by `fill`, flushed to disk and made
/// readable like a new file; it is deleted again if anything fails.
fn stage(
    folder: &Path,
    fill: impl FnOnce(&mut File) -> Result<(), ReportError>,
) -> Result<tempfile::NamedTempFile, ReportError> {
    let io = |source| ReportError::Io {
        path: folder.to_path_buf(),
        source,
    };
    let mut file = tempfile::Builder::new()
        .prefix(".sheetfit-")
        .tempfile_in(folder)
        .map_err(io)?;
    fill(file.as_file_mut())?;
    readable_by_others(file.as_file()).map_err(io)?;
    file.as_file().sync_all().map_err(io)?;
    Ok(file)
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

fn same_file(a: &Path, b: &Path) -> bool {
    match (a.canonicalize(), b.canonicalize()) {
        (Ok(a), Ok(b)) => a == b,
        _ => false,
    }
}
