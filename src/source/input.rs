//! The input file, opened once for the whole run.
//!
//! Every read of the input goes through one open handle: the pre-scan, the
//! main sheet, each plan sheet and the SHA-256. The handle keeps the file
//! the path named when it was opened, so a program that saves by writing a
//! new file and renaming it over the old one cannot swap the bytes halfway
//! through a run: the fingerprint recorded is that of the bytes parsed.
//! [`Input::check_unchanged`], called once every read is done, tells
//! whether the file was written to in place (its size or modification
//! time moved) or the path was pointed at another file while it was read.

use std::fs::{File, Metadata};
use std::io::{self, Read, Seek, SeekFrom};
use std::path::{Path, PathBuf};
use std::time::SystemTime;

use sha2::{Digest, Sha256};

use super::SourceError;

/// The input file, open for reading, with what it looked like when opened.
#[derive(Debug)]
pub struct Input {
    path: PathBuf,
    file: File,
    opened: Identity,
}

/// What tells one state of a file from another without reading it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct Identity {
    /// Size in bytes.
    len: u64,
    /// Last modification, where the system keeps it.
    modified: Option<SystemTime>,
    /// Device and inode (Unix only): which file a path names.
    node: Option<(u64, u64)>,
}

impl Identity {
    fn of(meta: &Metadata) -> Self {
        Identity {
            len: meta.len(),
            modified: meta.modified().ok(),
            node: node(meta),
        }
    }
}

#[cfg(unix)]
fn node(meta: &Metadata) -> Option<(u64, u64)> {
    use std::os::unix::fs::MetadataExt;
    Some((meta.dev(), meta.ino()))
}

#[cfg(not(unix))]
fn node(_meta: &Metadata) -> Option<(u64, u64)> {
    None
}

impl Input {
    /// Opens the file at `path` for reading.
    ///
    /// # Errors
    /// [`SourceError::Open`] when there is no file at `path`, it is a
    /// folder or it cannot be opened.
    pub fn open(path: &Path) -> Result<Input, SourceError> {
        let refuse = |reason: String| SourceError::Open {
            path: path.to_path_buf(),
            reason,
        };
        // Asked of the path first, so that a folder or a pipe is never
        // opened (opening a pipe waits for a writer).
        match std::fs::metadata(path) {
            Ok(meta) if meta.is_file() => {}
            Ok(_) => return Err(refuse("it is not a file".into())),
            Err(_) => return Err(refuse("no such file".into())),
        }
        let file = File::open(path).map_err(|e| {
            refuse(match e.kind() {
                io::ErrorKind::NotFound => "no such file".into(),
                io::ErrorKind::PermissionDenied => "this user may not read it".into(),
                _ => format!("it cannot be opened ({e})"),
            })
        })?;
        let meta = file
            .metadata()
            .map_err(|e| refuse(format!("it cannot be opened ({e})")))?;
        if !meta.is_file() {
            return Err(refuse("it is not a file".into()));
        }
        Ok(Input {
            path: path.to_path_buf(),
            file,
            opened: Identity::of(&meta),
        })
    }

    /// The path the file was opened by.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// The open file, positioned at its start, for one reader to read.
    pub(super) fn rewound(&self) -> Result<&File, SourceError> {
        let mut file = &self.file;
        file.seek(SeekFrom::Start(0))
            .map_err(|e| SourceError::Open {
                path: self.path.clone(),
                reason: format!("it cannot be read ({e})"),
            })?;
        Ok(file)
    }

    /// SHA-256 of the file's bytes, read through the open handle in
    /// blocks of 64 KiB, so memory stays flat whatever the file's size.
    ///
    /// # Errors
    /// The operating system's error when the file cannot be read.
    pub fn sha256(&self) -> io::Result<Vec<u8>> {
        let mut file = &self.file;
        file.seek(SeekFrom::Start(0))?;
        let mut hasher = Sha256::new();
        let mut buffer = vec![0; 1 << 16];
        loop {
            match file.read(&mut buffer) {
                Ok(0) => return Ok(hasher.finalize().to_vec()),
                Ok(n) => hasher.update(&buffer[..n]),
                Err(e) if e.kind() == io::ErrorKind::Interrupted => {}
                Err(e) => return Err(e),
            }
        }
    }

    /// Checks that the file is as it was when opened: the same size and
    /// modification time through the open handle, and the path still
    /// names the open file (same device and inode, on Unix). Call it once
    /// every read of the input is done.
    ///
    /// # Errors
    /// [`SourceError::Changed`] saying what moved.
    pub fn check_unchanged(&self) -> Result<(), SourceError> {
        let changed = |what: String| {
            Err(SourceError::Changed {
                path: self.path.clone(),
                what,
            })
        };
        let now = match self.file.metadata() {
            Ok(meta) => Identity::of(&meta),
            Err(e) => return changed(format!("its details cannot be read again ({e})")),
        };
        if now.len != self.opened.len {
            return changed(format!(
                "its size went from {} to {} bytes",
                self.opened.len, now.len
            ));
        }
        if now.modified != self.opened.modified {
            return changed("its modification time moved".into());
        }
        match std::fs::metadata(&self.path) {
            Err(_) => changed("its name no longer leads to a file".into()),
            Ok(meta) if node(&meta) != self.opened.node => {
                changed("its name now leads to another file, saved in its place".into())
            }
            Ok(_) => Ok(()),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::job::Limits;
    use crate::source::Value;

    fn hex(digest: &[u8]) -> String {
        digest.iter().map(|b| format!("{b:02x}")).collect()
    }

    fn first_y(input: &Input) -> Value {
        let table = input
            .read_table(None, 1, &Limits::default())
            .expect("read table");
        table.column("y").expect("column y").values.get(0)
    }

    #[test]
    fn a_file_renamed_over_the_input_changes_neither_the_table_nor_the_hash() {
        let dir = tempfile::tempdir().expect("scratch folder");
        let path = dir.path().join("data.csv");
        let old = b"y,x\n1,2\n3,4\n";
        std::fs::write(&path, old).expect("write input");
        let input = Input::open(&path).expect("open input");
        // A save by rename: a new file written beside it and renamed over it.
        let new = dir.path().join("data.csv.saving");
        std::fs::write(&new, b"y,x\n100,200\n300,400\n5,6\n").expect("write new");
        std::fs::rename(&new, &path).expect("rename over the input");

        assert_eq!(first_y(&input), Value::Number(1.0));
        let hash = input.sha256().expect("hash");
        assert_eq!(hex(&hash), hex(&Sha256::digest(old)));
        // Reading twice through the one handle gives the same bytes.
        assert_eq!(first_y(&input), Value::Number(1.0));
        assert_eq!(input.sha256().expect("hash again"), hash);
        assert_ne!(
            hex(&hash),
            hex(&Sha256::digest(std::fs::read(&path).expect("read new")))
        );

        let err = input.check_unchanged().unwrap_err();
        assert_eq!(
            err.to_string(),
            format!(
                "input {} changed while it was being read (its name now leads to another file, saved in its place); wait until it is saved and closed, then run again",
                path.display()
            )
        );
    }

    /// A workbook with `y` over `value` on sheets `records` and `plan`.
    fn workbook(path: &Path, value: f64) {
        let mut wb = rust_xlsxwriter::Workbook::new();
        for name in ["records", "plan"] {
            let ws = wb.add_worksheet();
            ws.set_name(name).expect("sheet name");
            ws.write_string(0, 0, "y").expect("header");
            ws.write_number(1, 0, value).expect("value");
        }
        wb.save(path).expect("save workbook");
    }

    #[test]
    fn a_workbook_renamed_over_the_input_between_reads_is_not_seen() {
        let dir = tempfile::tempdir().expect("scratch folder");
        let path = dir.path().join("data.xlsx");
        workbook(&path, 1.0);
        let old = std::fs::read(&path).expect("read input");
        let input = Input::open(&path).expect("open input");
        let limits = Limits::default();
        let records = input
            .read_table(Some("records"), 1, &limits)
            .expect("read records");
        let new = dir.path().join("saving.xlsx");
        workbook(&new, 2.0);
        std::fs::rename(&new, &path).expect("rename over the input");
        let plan = input
            .read_table(Some("plan"), 1, &limits)
            .expect("read plan");
        let hash = input.sha256().expect("hash");
        for table in [&records, &plan] {
            assert_eq!(table.columns[0].values.get(0), Value::Number(1.0));
        }
        assert_eq!(hex(&hash), hex(&Sha256::digest(&old)));
        assert!(input.check_unchanged().is_err());
    }

    #[test]
    fn a_half_saved_workbook_is_reported_as_changed_not_damaged() {
        let dir = tempfile::tempdir().expect("scratch folder");
        let path = dir.path().join("data.xlsx");
        workbook(&path, 1.0);
        let input = Input::open(&path).expect("open input");
        std::fs::write(&path, b"PK\x03\x04 half written").expect("write in place");
        let err = input
            .read_table(Some("records"), 1, &Limits::default())
            .unwrap_err();
        assert!(
            matches!(err, SourceError::Changed { .. }),
            "expected a change, got: {err}"
        );
    }

    #[test]
    fn a_file_written_in_place_is_found_changed() {
        let dir = tempfile::tempdir().expect("scratch folder");
        let path = dir.path().join("data.csv");
        std::fs::write(&path, b"y\n1\n").expect("write input");
        let input = Input::open(&path).expect("open input");
        input.check_unchanged().expect("unchanged so far");
        std::fs::write(&path, b"y\n1\n2\n").expect("write in place");
        let err = input.check_unchanged().unwrap_err();
        assert_eq!(
            err.to_string(),
            format!(
                "input {} changed while it was being read (its size went from 4 to 6 bytes); wait until it is saved and closed, then run again",
                path.display()
            )
        );
    }

    #[test]
    fn a_new_modification_time_of_the_same_size_is_found_changed() {
        let dir = tempfile::tempdir().expect("scratch folder");
        let path = dir.path().join("data.csv");
        std::fs::write(&path, b"y\n1\n").expect("write input");
        let input = Input::open(&path).expect("open input");
        File::options()
            .write(true)
            .open(&path)
            .and_then(|f| f.set_modified(SystemTime::UNIX_EPOCH))
            .expect("set the modification time");
        let err = input.check_unchanged().unwrap_err();
        assert_eq!(
            err.to_string(),
            format!(
                "input {} changed while it was being read (its modification time moved); wait until it is saved and closed, then run again",
                path.display()
            )
        );
    }

    #[test]
    fn a_deleted_input_is_found_changed() {
        let dir = tempfile::tempdir().expect("scratch folder");
        let path = dir.path().join("data.csv");
        std::fs::write(&path, b"y\n1\n").expect("write input");
        let input = Input::open(&path).expect("open input");
        std::fs::remove_file(&path).expect("delete input");
        let err = input.check_unchanged().unwrap_err();
        assert_eq!(
            err.to_string(),
            format!(
                "input {} changed while it was being read (its name no longer leads to a file); wait until it is saved and closed, then run again",
                path.display()
            )
        );
    }

    #[test]
    fn a_folder_is_not_an_input() {
        let dir = tempfile::tempdir().expect("scratch folder");
        let err = Input::open(dir.path()).unwrap_err();
        assert_eq!(
            err.to_string(),
            format!(
                "cannot open input {}: it is not a file; check `input.workbook` in the job file",
                dir.path().display()
            )
        );
    }
}
