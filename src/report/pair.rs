//! Replacing a report pair (workbook and results JSON) so that the folder
//! always holds one run's pair, never one run's workbook beside another's
//! JSON.
//!
//! Everything happens under a lock per report ([`PairLock`], an advisory
//! lock on a hidden file beside the report), so two runs never write the same
//! pair at once. The files beside report `R` (and its JSON `J`) are:
//!
//! | file | what it holds |
//! |---|---|
//! | `.R.sheetfit-lock` | the lock; the holder's process id |
//! | `.R.sheetfit-new`, `.J.sheetfit-new` | the new pair while it is written |
//! | `.R.sheetfit-old`, `.J.sheetfit-old` | the old pair, kept until the new one is in place |
//! | `.R.sheetfit-swap` | the journal: present exactly while the new pair is being renamed into place |
//!
//! A replacement stages both new files completely and flushes them to disk,
//! keeps the old pair (a hard link, so no copy), writes the journal, renames
//! the two new files into place, then removes the journal and the kept old
//! pair. If the process is stopped before the journal exists, the old pair
//! was never touched, and the next run removes the staged files. If it is
//! stopped while the journal exists, both new files were complete, and the
//! next run finishes the renames. If a rename fails while the run is alive,
//! the kept old pair is put back at once. Either way the next run says what
//! it repaired.

use std::fs::{File, OpenOptions};
use std::io::{Read, Write};
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use super::target::{is_one_of, FileIdentity};
use super::{json_path, ReportError};

/// How long a run waits for another run writing the same report.
const LOCK_WAIT: Duration = Duration::from_secs(10);

/// The environment variable that makes a run stop or fail at a chosen
/// point of the replacement, for the tests: `point:fail` returns an error
/// there as a refused write would, `point:abort` ends the process at once
/// as a kill would. Points: [`FAULT_POINTS`].
pub const FAULT_VARIABLE: &str = "SHEETFIT_TEST_FAULT";

/// The points of a replacement at which [`FAULT_VARIABLE`] can act, in the
/// order they are reached.
pub const FAULT_POINTS: [&str; 5] = [
    "staged",
    "journal",
    "first-rename",
    "second-rename",
    "committed",
];

/// A hidden file beside `report`: `.name.suffix`.
fn beside(report: &Path, name_of: &Path, suffix: &str) -> PathBuf {
    let name = name_of
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    report.with_file_name(format!(".{name}.{suffix}"))
}

/// The files of one report pair and the hidden files beside it.
#[derive(Debug, Clone)]
pub struct PairPaths {
    /// The report workbook.
    pub workbook: PathBuf,
    /// The results JSON.
    pub json: PathBuf,
    lock: PathBuf,
    journal: PathBuf,
}

impl PairPaths {
    /// The pair whose workbook is `workbook`.
    pub fn new(workbook: &Path) -> PairPaths {
        PairPaths {
            workbook: workbook.to_path_buf(),
            json: json_path(workbook),
            lock: beside(workbook, workbook, "sheetfit-lock"),
            journal: beside(workbook, workbook, "sheetfit-swap"),
        }
    }

    /// The staged new file for `target` (the workbook or the JSON).
    pub fn staged(&self, target: &Path) -> PathBuf {
        beside(&self.workbook, target, "sheetfit-new")
    }

    /// The kept old file for `target`.
    fn kept(&self, target: &Path) -> PathBuf {
        beside(&self.workbook, target, "sheetfit-old")
    }

    fn targets(&self) -> [&Path; 2] {
        [&self.workbook, &self.json]
    }

    /// Whether a replacement of this pair was stopped half way: its
    /// journal is still there.
    pub fn half_replaced(&self) -> bool {
        self.journal.exists()
    }
}

/// An exclusive advisory lock on one report pair, released when dropped.
#[derive(Debug)]
pub struct PairLock {
    file: File,
    path: PathBuf,
}

impl PairLock {
    /// Takes the lock of `pair`, waiting up to [`LOCK_WAIT`] for another run
    /// that holds it.
    ///
    /// # Errors
    /// [`ReportError::Locked`] naming the other process when the wait runs
    /// out; [`ReportError::Io`] when the lock file cannot be made.
    pub fn take(pair: &PairPaths) -> Result<PairLock, ReportError> {
        let start = Instant::now();
        loop {
            let mut file = OpenOptions::new()
                .read(true)
                .write(true)
                .create(true)
                .truncate(false)
                .open(&pair.lock)
                .map_err(|source| ReportError::Io {
                    // The lock is the first file made in the folder: a
                    // refusal here is the folder's.
                    path: pair
                        .workbook
                        .parent()
                        .filter(|p| !p.as_os_str().is_empty())
                        .unwrap_or(Path::new("."))
                        .to_path_buf(),
                    source,
                })?;
            match file.try_lock() {
                Ok(()) => {
                    // The holder before us may have removed the file after we
                    // opened it: only the lock on the file the path names
                    // now counts.
                    if FileIdentity::of_open(&file) != FileIdentity::of(&pair.lock) {
                        continue;
                    }
                    let io = |source| ReportError::Io {
                        path: pair.lock.clone(),
                        source,
                    };
                    file.set_len(0).map_err(io)?;
                    write!(file, "{}", std::process::id()).map_err(io)?;
                    return Ok(PairLock {
                        file,
                        path: pair.lock.clone(),
                    });
                }
                Err(std::fs::TryLockError::WouldBlock) => {
                    if start.elapsed() >= LOCK_WAIT {
                        let mut holder = String::new();
                        let _ = file.read_to_string(&mut holder);
                        return Err(ReportError::Locked {
                            path: pair.workbook.clone(),
                            holder: holder.trim().to_string(),
                            waited: LOCK_WAIT.as_secs(),
                        });
                    }
                    std::thread::sleep(Duration::from_millis(100));
                }
                Err(std::fs::TryLockError::Error(source)) => {
                    return Err(ReportError::Io {
                        path: pair.lock.clone(),
                        source,
                    })
                }
            }
        }
    }
}

impl Drop for PairLock {
    fn drop(&mut self) {
        // Removed while still held, so no other run can lock the old file
        // after it is gone (a run that opened it first retries, above).
        let _ = std::fs::remove_file(&self.path);
        let _ = self.file.unlock();
    }
}

/// What a run found left over from an earlier, interrupted run of the same
/// report, and what it did about it.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct Repair {
    /// The earlier run had started renaming its new pair into place; this
    /// run finished it.
    pub completed_swap: bool,
    /// Staged or kept files of an earlier run that were removed.
    pub removed_files: usize,
}

impl Repair {
    /// A sentence for the user, or `None` when there was nothing to repair.
    pub fn message(&self, pair: &PairPaths) -> Option<String> {
        let removed = match self.removed_files {
            0 => None,
            1 => Some("removed 1 staging file".to_string()),
            n => Some(format!("removed {n} staging files")),
        };
        match (self.completed_swap, removed) {
            (false, None) => None,
            (true, removed) => Some(format!(
                "an earlier run was stopped while it replaced {}; this run first finished that replacement, so the pair was one run's again before it was replaced{}",
                pair.workbook.display(),
                removed.map(|r| format!(", and {r}")).unwrap_or_default()
            )),
            (false, Some(removed)) => Some(format!(
                "an earlier run of {} was stopped before it replaced the report; the report was left as it was, and this run {removed} that run had left",
                pair.workbook.display()
            )),
        }
    }
}

/// Brings the pair back to one run's files after an interrupted run: finish
/// a replacement whose journal is there, then remove staged and kept files.
/// Call with the lock held.
///
/// # Errors
/// [`ReportError::Io`] when a rename or removal fails.
pub fn repair(pair: &PairPaths, _lock: &PairLock) -> Result<Repair, ReportError> {
    let mut repair = Repair::default();
    if pair.journal.exists() {
        for target in pair.targets() {
            let staged = pair.staged(target);
            if staged.exists() {
                rename(&staged, target)?;
            }
        }
        sync_folder(&pair.workbook);
        remove(&pair.journal)?;
        repair.completed_swap = true;
    }
    for target in pair.targets() {
        for leftover in [pair.staged(target), pair.kept(target)] {
            if std::fs::symlink_metadata(&leftover).is_ok() {
                remove(&leftover)?;
                repair.removed_files += 1;
            }
        }
    }
    Ok(repair)
}

/// Renames the staged new pair into place (see the module notes), keeping
/// the old pair until both new files are there. Call with the lock held,
/// after [`repair`], with both staged files complete and on disk.
/// `protected` are files the pair must never replace.
///
/// # Errors
/// [`ReportError`] when a step fails; the old pair is then back in place.
/// Once both new files are in place the run has succeeded: removing the
/// journal and the kept old files is then left to the next run if it fails.
pub fn replace(
    pair: &PairPaths,
    _lock: &PairLock,
    protected: &[FileIdentity],
) -> Result<(), ReportError> {
    fault("staged")?;
    for target in pair.targets() {
        if is_one_of(target, protected) {
            return Err(ReportError::OutputIsInput {
                path: target.to_path_buf(),
            });
        }
    }
    let mut progress = Progress::default();
    if let Err(e) = swap(pair, &mut progress) {
        put_back(pair, &progress);
        return Err(e);
    }
    sync_folder(&pair.workbook);
    let _ = std::fs::remove_file(&pair.journal);
    if fault("committed").is_ok() {
        for target in pair.targets() {
            let _ = std::fs::remove_file(pair.kept(target));
        }
    }
    Ok(())
}

/// How far a replacement got, for [`put_back`]: per target (workbook,
/// JSON), whether the old file was kept and whether the new one reached
/// its place.
#[derive(Debug, Default)]
struct Progress {
    kept: [bool; 2],
    renamed: [bool; 2],
}

/// The steps of [`replace`] between the staged pair and the pair in place.
fn swap(pair: &PairPaths, progress: &mut Progress) -> Result<(), ReportError> {
    for (i, target) in pair.targets().into_iter().enumerate() {
        if target.exists() {
            keep(target, &pair.kept(target))?;
            progress.kept[i] = true;
        }
    }
    write_journal(pair)?;
    fault("journal")?;
    let points = ["first-rename", "second-rename"];
    for (i, target) in pair.targets().into_iter().enumerate() {
        rename(&pair.staged(target), target)?;
        progress.renamed[i] = true;
        fault(points[i])?;
    }
    Ok(())
}

/// After a failed step while the run is alive: each new file that reached
/// its place goes (its kept old file back in its stead), kept and staged
/// files and the journal are removed, so the folder holds the old pair (or
/// none, when there was none).
fn put_back(pair: &PairPaths, progress: &Progress) {
    for (i, target) in pair.targets().into_iter().enumerate() {
        let kept = pair.kept(target);
        match (progress.renamed[i], progress.kept[i]) {
            (true, true) => {
                let _ = std::fs::rename(&kept, target);
            }
            (true, false) => {
                let _ = std::fs::remove_file(target);
            }
            (false, true) => {
                let _ = std::fs::remove_file(&kept);
            }
            (false, false) => {}
        }
        let _ = std::fs::remove_file(pair.staged(target));
    }
    sync_folder(&pair.workbook);
    let _ = std::fs::remove_file(&pair.journal);
}

/// Keeps `target` as `kept`: a hard link (no copy), or a copy where the disk
/// has no hard links.
fn keep(target: &Path, kept: &Path) -> Result<(), ReportError> {
    let io = |source| ReportError::Io {
        path: kept.to_path_buf(),
        source,
    };
    if std::fs::symlink_metadata(kept).is_ok() {
        std::fs::remove_file(kept).map_err(io)?;
    }
    if std::fs::hard_link(target, kept).is_err() {
        std::fs::copy(target, kept).map_err(io)?;
    }
    Ok(())
}

/// Writes the journal and flushes it and its folder to disk, so that once
/// it exists a later run knows both staged files are complete.
fn write_journal(pair: &PairPaths) -> Result<(), ReportError> {
    let io = |source| ReportError::Io {
        path: pair.journal.clone(),
        source,
    };
    let mut file = File::create(&pair.journal).map_err(io)?;
    writeln!(
        file,
        "sheetfit is renaming {} and {} into place",
        pair.workbook.display(),
        pair.json.display()
    )
    .map_err(io)?;
    file.sync_all().map_err(io)?;
    sync_folder(&pair.workbook);
    Ok(())
}

fn rename(from: &Path, to: &Path) -> Result<(), ReportError> {
    std::fs::rename(from, to).map_err(|source| ReportError::Io {
        path: to.to_path_buf(),
        source,
    })
}

fn remove(path: &Path) -> Result<(), ReportError> {
    std::fs::remove_file(path).map_err(|source| ReportError::Io {
        path: path.to_path_buf(),
        source,
    })
}

/// Flushes the folder holding `file`, so renames in it reach the disk in
/// order. Best effort: not every system can open a folder for this.
fn sync_folder(file: &Path) {
    #[cfg(unix)]
    if let Some(folder) = file.parent() {
        let folder = if folder.as_os_str().is_empty() {
            Path::new(".")
        } else {
            folder
        };
        if let Ok(dir) = File::open(folder) {
            let _ = dir.sync_all();
        }
    }
    #[cfg(not(unix))]
    let _ = file;
}

/// The test hook of [`FAULT_VARIABLE`] at `point`.
fn fault(point: &str) -> Result<(), ReportError> {
    let Ok(setting) = std::env::var(FAULT_VARIABLE) else {
        return Ok(());
    };
    match setting.split_once(':') {
        Some((p, "abort")) if p == point => std::process::abort(),
        Some((p, "fail")) if p == point => Err(ReportError::Io {
            path: PathBuf::from(point),
            source: std::io::Error::other(format!("{FAULT_VARIABLE} stopped the run at {point}")),
        }),
        _ => Ok(()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn pair_in(dir: &Path) -> PairPaths {
        PairPaths::new(&dir.join("report.xlsx"))
    }

    fn write(path: &Path, text: &str) {
        std::fs::write(path, text).unwrap();
    }

    fn read(path: &Path) -> String {
        std::fs::read_to_string(path).unwrap()
    }

    #[test]
    fn hidden_files_sit_beside_the_report() {
        let pair = PairPaths::new(Path::new("out/r.xlsx"));
        assert_eq!(pair.json, Path::new("out/r.json"));
        assert_eq!(
            pair.staged(&pair.json),
            Path::new("out/.r.json.sheetfit-new")
        );
        assert_eq!(pair.lock, Path::new("out/.r.xlsx.sheetfit-lock"));
        assert_eq!(pair.journal, Path::new("out/.r.xlsx.sheetfit-swap"));
    }

    #[test]
    fn a_replacement_leaves_the_new_pair_and_nothing_else() {
        let dir = tempfile::tempdir().unwrap();
        let pair = pair_in(dir.path());
        write(&pair.workbook, "old w");
        write(&pair.json, "old j");
        let lock = PairLock::take(&pair).unwrap();
        write(&pair.staged(&pair.workbook), "new w");
        write(&pair.staged(&pair.json), "new j");
        replace(&pair, &lock, &[]).unwrap();
        drop(lock);
        assert_eq!(read(&pair.workbook), "new w");
        assert_eq!(read(&pair.json), "new j");
        let names: Vec<_> = std::fs::read_dir(dir.path()).unwrap().collect();
        assert_eq!(names.len(), 2, "{names:?}");
    }

    #[test]
    fn a_half_swapped_pair_is_finished_by_the_next_run() {
        let dir = tempfile::tempdir().unwrap();
        let pair = pair_in(dir.path());
        // Stopped after the first rename: new workbook, old JSON, the new
        // JSON staged, the old workbook kept, the journal written.
        write(&pair.workbook, "new w");
        write(&pair.json, "old j");
        write(&pair.staged(&pair.json), "new j");
        write(&pair.kept(&pair.workbook), "old w");
        write(&pair.journal, "swap");
        assert!(pair.half_replaced());
        let lock = PairLock::take(&pair).unwrap();
        let repair = repair(&pair, &lock).unwrap();
        assert_eq!(
            repair,
            Repair {
                completed_swap: true,
                removed_files: 1
            }
        );
        assert_eq!(read(&pair.workbook), "new w");
        assert_eq!(read(&pair.json), "new j");
        assert!(!pair.half_replaced());
        assert!(repair
            .message(&pair)
            .unwrap()
            .contains("finished that replacement"));
    }

    #[test]
    fn staging_files_without_a_journal_are_removed_and_the_pair_kept() {
        let dir = tempfile::tempdir().unwrap();
        let pair = pair_in(dir.path());
        write(&pair.workbook, "old w");
        write(&pair.json, "old j");
        write(&pair.staged(&pair.workbook), "half");
        let lock = PairLock::take(&pair).unwrap();
        let repair = repair(&pair, &lock).unwrap();
        assert_eq!(repair.removed_files, 1);
        assert!(!repair.completed_swap);
        assert_eq!(read(&pair.workbook), "old w");
        assert_eq!(
            repair.message(&pair).unwrap(),
            format!(
                "an earlier run of {} was stopped before it replaced the report; the report was left as it was, and this run removed 1 staging file that run had left",
                pair.workbook.display()
            )
        );
    }

    #[test]
    fn a_second_lock_of_one_report_waits_for_the_first() {
        let dir = tempfile::tempdir().unwrap();
        let pair = pair_in(dir.path());
        let first = PairLock::take(&pair).unwrap();
        let second = {
            let pair = pair.clone();
            std::thread::spawn(move || PairLock::take(&pair).map(|_| Instant::now()))
        };
        std::thread::sleep(Duration::from_millis(300));
        let released = Instant::now();
        drop(first);
        let taken = second.join().unwrap().unwrap();
        assert!(taken >= released);
        assert!(!pair.lock.exists(), "the lock file goes with the lock");
    }
}
