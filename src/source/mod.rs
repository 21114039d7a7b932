//! Reading the input: one sheet of a workbook (or a CSV file) into a [`Table`].
//!
//! The table keeps every cell's value with its type as the file stored it
//! and its place in the sheet, so that later stages can say "sheet
//! 'records', cell C14 holds the text 'n/a'" instead of "bad value".
//! Nothing here decides what a column means; `design` does that per model.

use std::path::{Path, PathBuf};

use crate::job::Limits;

mod cells;
mod csv;
mod guard;
mod input;
mod table;
mod workbook;

pub use cells::{column_letters, CellRef, Cells, Value};
pub use input::Input;
pub use table::{Column, Table};

use self::csv::read_csv;
use self::workbook::read_workbook;

/// An error while opening or reading the input.
#[derive(Debug, thiserror::Error)]
pub enum SourceError {
    /// The input file is not there or cannot be opened.
    #[error("cannot open input {path}: {reason}; check `input.workbook` in the job file")]
    Open {
        /// The input file.
        path: PathBuf,
        /// What went wrong.
        reason: String,
    },
    /// The sheet named in the job does not exist.
    #[error("{path} has no sheet named '{sheet}'; its sheets are: {available}")]
    NoSuchSheet {
        /// The input file.
        path: PathBuf,
        /// The sheet asked for.
        sheet: String,
        /// The sheet names, quoted and comma separated.
        available: String,
    },
    /// The pre-scan refused the workbook.
    #[error("refusing to open {path}: {reason}")]
    Refused {
        /// The input file.
        path: PathBuf,
        /// Which limit, and how to raise it.
        reason: String,
    },
    /// The input changed on disk while it was being read.
    #[error("input {path} changed while it was being read ({what}); wait until it is saved and closed, then run again")]
    Changed {
        /// The input file.
        path: PathBuf,
        /// What moved: its size, its modification time or the file its
        /// name leads to.
        what: String,
    },
    /// The sheet could not be parsed.
    #[error("cannot read sheet '{sheet}' of {path}: {reason}")]
    Sheet {
        /// The input file.
        path: PathBuf,
        /// The sheet.
        sheet: String,
        /// The reader's message.
        reason: String,
    },
    /// The header row holds no column names.
    #[error("sheet '{sheet}' of {path} has no column names in row {row}; set `input.header_row` to the row that holds them")]
    NoHeader {
        /// The input file.
        path: PathBuf,
        /// The sheet.
        sheet: String,
        /// The header row, counted from 1.
        row: u32,
    },
    /// Two columns share one name.
    #[error("sheet '{sheet}' of {path}: cells {first} and {second} both name a column '{name}'; give each column its own name")]
    DuplicateHeader {
        /// The input file.
        path: PathBuf,
        /// The sheet.
        sheet: String,
        /// The repeated name.
        name: String,
        /// The first header cell.
        first: CellRef,
        /// The second header cell.
        second: CellRef,
    },
}

/// Reads `sheet` (the first sheet when `None`) of the workbook or CSV file
/// at `path`, with column names in `header_row` (counted from 1), under the
/// default [`Limits`].
///
/// # Errors
/// As [`read_table_with`].
pub fn read_table(path: &Path, sheet: Option<&str>, header_row: u32) -> Result<Table, SourceError> {
    read_table_with(path, sheet, header_row, &Limits::default())
}

/// Opens the file at `path` and reads a sheet of it as
/// [`Input::read_table`] does. A run opens its [`Input`] once instead, so
/// that every read and the fingerprint see one file.
///
/// # Errors
/// As [`Input::open`] and [`Input::read_table`].
pub fn read_table_with(
    path: &Path,
    sheet: Option<&str>,
    header_row: u32,
    limits: &Limits,
) -> Result<Table, SourceError> {
    Input::open(path)?.read_table(sheet, header_row, limits)
}

impl Input {
    /// Reads `sheet` (the first sheet when `None`) of the open workbook or
    /// CSV file, with column names in `header_row` (counted from 1),
    /// refusing an .xlsx/.xlsm file past `limits` before the reader sees
    /// it. Sheets of .xlsx/.xlsm files are read cell by cell into the named
    /// columns, so memory follows the data, not the sheet's bounding box;
    /// rows after the last value in a named column are not kept, and
    /// columns with a blank header cell are skipped. Each call reads from
    /// the start of the one open file.
    ///
    /// # Errors
    /// [`SourceError`] when the file cannot be read or is refused, the
    /// sheet is missing, the header row is empty or two columns share a
    /// name; [`SourceError::Changed`] instead of any of these when the file
    /// changed while it was read (a half-saved file reads as damaged).
    pub fn read_table(
        &self,
        sheet: Option<&str>,
        header_row: u32,
        limits: &Limits,
    ) -> Result<Table, SourceError> {
        self.read_table_once(sheet, header_row, limits)
            .map_err(|e| self.check_unchanged().err().unwrap_or(e))
    }

    fn read_table_once(
        &self,
        sheet: Option<&str>,
        header_row: u32,
        limits: &Limits,
    ) -> Result<Table, SourceError> {
        let path = self.path();
        let extension = path
            .extension()
            .and_then(|e| e.to_str())
            .map(str::to_ascii_lowercase)
            .unwrap_or_default();
        if extension == "csv" {
            return read_csv(path, self.rewound()?, header_row);
        }
        if matches!(extension.as_str(), "xlsx" | "xlsm") {
            guard::prescan(self.rewound()?, limits).map_err(|reason| SourceError::Refused {
                path: path.to_path_buf(),
                reason,
            })?;
        }
        read_workbook(path, self.rewound()?, sheet, header_row)
    }
}
