//! Reading the input: one sheet of a workbook (or a CSV file) into a [`Table`].
//!
//! The table keeps every cell's value with its type as the file stored it
//! and its place in the sheet, so that later stages can say "sheet
//! 'records', cell C14 holds the text 'n/a'" instead of "bad value".
//! Nothing here decides what a column means; `design` does that per model.

use std::path::{Path, PathBuf};

use crate::job::{Area, CsvFormat, Limits};

mod cells;
mod csv;
mod formulas;
mod guard;
mod input;
mod number_format;
pub mod screen;
mod table;
mod tables;
mod text_number;
mod workbook;

pub use cells::{column_letters, CellRef, Cells, Value};
pub use input::Input;
pub use table::{Column, FormulaCell, Table};
pub use tables::WorksheetTable;
pub use text_number::{plain_number, read_number};

use self::csv::read_csv;
use self::table::Bounds;
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
    #[error("sheet '{sheet}' of {path} has no column names in row {row}; set the row that holds them: `header_row` (or the first row of `range`) under [input] for the data, `plan_header_row` under [model.forecast] for a plan sheet")]
    NoHeader {
        /// The input file.
        path: PathBuf,
        /// The sheet.
        sheet: String,
        /// The header row, counted from 1.
        row: u32,
    },
    /// The job names a worksheet table, and the file kind has none.
    #[error("{path} has no worksheet tables (only .xlsx and .xlsm files have them); give the data's cells with `range = \"B5:H200\"` under [input] instead of `table`")]
    NoTables {
        /// The input file.
        path: PathBuf,
    },
    /// The worksheet table named in the job does not exist.
    #[error("{path} has no worksheet table named '{table}'{suggestion}; {available}")]
    NoSuchTable {
        /// The input file.
        path: PathBuf,
        /// The table asked for.
        table: String,
        /// ", did you mean ..." or nothing.
        suggestion: String,
        /// The tables the workbook has, or what to do without any.
        available: String,
    },
    /// The worksheet table has no data rows.
    #[error("{path}: worksheet table {table} has no data rows")]
    EmptyTable {
        /// The input file.
        path: PathBuf,
        /// The table, described.
        table: String,
    },
    /// Summary rows (totals, averages) or a units row inside the data.
    #[error("{place}: {first}{more}. {}", if *units { "A units row is not data; leave it out with `summary_rows = \"leave_out\"` under [input], or start the data below it with `range` (its first row the header)" } else { "A summary row must not be fitted as data: leave it out with `summary_rows = \"leave_out\"` under [input], or give only the data's cells with `range` (or `table`); if it is data after all (a level truly called so), write `summary_rows = \"keep\"`" })]
    SummaryRows {
        /// "sheet 'x' of file".
        place: String,
        /// The first row found and why.
        first: String,
        /// " (2 more: rows ...)" or nothing.
        more: String,
        /// Whether the first is a units row.
        units: bool,
    },
    /// Text in columns that must hold numbers.
    #[error("{place}: {columns}; {fix}")]
    TextNumbers {
        /// "sheet 'x' of file".
        place: String,
        /// Each column: count, first cells, whether they read as numbers.
        columns: String,
        /// What to write in the job or the sheet.
        fix: String,
    },
    /// Formula cells in the data whose stored values are not their
    /// results.
    #[error("{place}: {cells} {why}; {fix}, then run again on the saved file")]
    Formulas {
        /// "sheet 'x' of file".
        place: String,
        /// "cells C5, C6, C7 (and 12 more)".
        cells: String,
        /// Why their values cannot be used.
        why: String,
        /// How to get the values calculated.
        fix: String,
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

/// The first rows of a sheet, for a first look at a file's layout.
#[derive(Debug, Clone)]
pub struct FirstRows {
    /// The workbook's sheet names (none for CSV).
    pub sheets: Vec<String>,
    /// The sheet looked at (the file name for CSV).
    pub sheet: String,
    /// Its first rows, each row's cells by column from A.
    pub rows: Vec<Vec<Value>>,
}

impl Input {
    /// Reads `sheet` (the first sheet when `None`) of the open workbook or
    /// CSV file, with column names in `header_row` (counted from 1), as
    /// [`Input::read_area`] does.
    ///
    /// # Errors
    /// As [`Input::read_area`].
    pub fn read_table(
        &self,
        sheet: Option<&str>,
        header_row: u32,
        limits: &Limits,
    ) -> Result<Table, SourceError> {
        self.read_area(sheet, &Area::Sheet { header_row }, limits)
    }

    /// Reads `area` of the open workbook or CSV file (of `sheet`, or the
    /// first sheet, unless the area is a worksheet table), refusing an
    /// .xlsx/.xlsm file past `limits` before the reader sees it. Sheets of
    /// .xlsx/.xlsm files are read cell by cell into the named columns, so
    /// memory follows the data, not the sheet's bounding box; rows after
    /// the last value in a named column are not kept, and columns with a
    /// blank header cell are skipped. Each call reads from the start of
    /// the one open file.
    ///
    /// # Errors
    /// [`SourceError`] when the file cannot be read or is refused, the
    /// sheet or table is missing, the header row is empty or two columns
    /// share a name; [`SourceError::Changed`] instead of any of these when
    /// the file changed while it was read (a half-saved file reads as
    /// damaged).
    pub fn read_area(
        &self,
        sheet: Option<&str>,
        area: &Area,
        limits: &Limits,
    ) -> Result<Table, SourceError> {
        self.read_csv_or_area(sheet, area, limits, &CsvFormat::default())
    }

    /// [`Input::read_area`], a CSV file read as `format` says it is
    /// written.
    ///
    /// # Errors
    /// As [`Input::read_area`].
    pub fn read_csv_or_area(
        &self,
        sheet: Option<&str>,
        area: &Area,
        limits: &Limits,
        format: &CsvFormat,
    ) -> Result<Table, SourceError> {
        self.read_area_once(sheet, area, limits, format)
            .map_err(|e| self.check_unchanged().err().unwrap_or(e))
    }

    /// The worksheet tables of the open workbook, each with its sheet;
    /// none for files other than .xlsx and .xlsm.
    ///
    /// # Errors
    /// [`SourceError`] when the workbook cannot be read.
    pub fn worksheet_tables(&self) -> Result<Vec<WorksheetTable>, SourceError> {
        if !self.is_zip_workbook() {
            return Ok(Vec::new());
        }
        workbook::worksheet_tables(self.path(), self.rewound()?)
    }

    /// The number format of the first number in `column` of `table` (read
    /// from this input), when the workbook gives it one beyond General: a
    /// currency or thousands separators the report can show the column's
    /// values with. `None` for CSV and the other formats.
    pub fn number_format(&self, table: &Table, column: &str) -> Option<String> {
        if !self.is_zip_workbook() {
            return None;
        }
        let c = table.columns.iter().find(|c| c.name == column)?;
        let i = (0..table.rows.len()).find(|&i| matches!(c.values.get(i), Value::Number(_)))?;
        number_format::cell_number_format(self.rewound().ok()?, &table.sheet, table.rows[i], c.col)
    }

    /// Refuses formula cells among the `used` columns of `table` (read
    /// from this input) whose stored values are not their results: cells
    /// stored without a value, or any formula cell when the workbook asks
    /// to be recalculated when opened (the mark of a program that wrote the
    /// formulas without calculating them).
    ///
    /// # Errors
    /// [`SourceError::Formulas`] naming the first cells.
    pub fn check_formulas(&self, table: &Table, used: &[&str]) -> Result<(), SourceError> {
        if !self.is_zip_workbook() {
            return Ok(());
        }
        let cols: Vec<u32> = table
            .columns
            .iter()
            .filter(|c| used.contains(&c.name.as_str()))
            .map(|c| c.col)
            .collect();
        let rows: std::collections::HashSet<u32> = table.rows.iter().copied().collect();
        let in_data: Vec<&FormulaCell> = table
            .formulas
            .iter()
            .filter(|f| cols.contains(&f.col) && rows.contains(&f.row))
            .collect();
        if in_data.is_empty() {
            return Ok(());
        }
        let recalculate = formulas::recalculate_on_load(self.rewound()?);
        let found: Vec<&FormulaCell> = in_data
            .into_iter()
            .filter(|f| recalculate || !f.has_value)
            .collect();
        let Some(first) = found.first() else {
            return Ok(());
        };
        let named: Vec<String> = found
            .iter()
            .take(3)
            .map(|f| {
                CellRef {
                    row: f.row,
                    col: f.col,
                }
                .to_string()
            })
            .collect();
        let more = match found.len() {
            n if n > 3 => format!(" (and {} more)", n - 3),
            _ => String::new(),
        };
        Err(SourceError::Formulas {
            place: table.place(),
            cells: format!(
                "{} {}{more}",
                if found.len() == 1 { "cell" } else { "cells" },
                named.join(", ")
            ),
            why: if first.has_value {
                "hold formulas, and the workbook was saved by a program that did not calculate them (it asks to be recalculated when opened), so their stored values may not be their results".into()
            } else {
                "hold formulas that were never calculated: the file stores no value with them"
                    .into()
            },
            fix: if first.has_value {
                "open the file in a spreadsheet program, recalculate every formula and save it (a conversion without recalculation keeps the stored values)".into()
            } else {
                format!(
                    "open and save the file in a spreadsheet program, or calculate it without one (`soffice --headless --convert-to xlsx --outdir calculated {}`)",
                    self.path()
                        .file_name()
                        .map(|n| n.to_string_lossy().into_owned())
                        .unwrap_or_default()
                )
            },
        })
    }

    /// The sheet names (none for CSV), the sheet looked at (`sheet`, or the
    /// first; the file name for CSV) and its first `count` rows, each
    /// row's cells by column from A, for a first look at a file's layout.
    ///
    /// # Errors
    /// [`SourceError`] when the file or sheet cannot be read.
    pub fn first_rows(&self, sheet: Option<&str>, count: u32) -> Result<FirstRows, SourceError> {
        if self.extension() == "csv" {
            let table = read_csv(
                self.path(),
                self.rewound()?,
                Bounds::from_row(1),
                &CsvFormat::default(),
            );
            // A CSV file's first line names its columns; its rows are the
            // table's.
            let table = table?;
            let mut rows = vec![table.columns.iter().map(|c| Value::text(&c.name)).collect()];
            for i in 0..table.rows.len().min(count as usize) {
                rows.push(table.columns.iter().map(|c| c.values.get(i)).collect());
            }
            return Ok(FirstRows {
                sheets: Vec::new(),
                sheet: table.sheet.clone(),
                rows,
            });
        }
        workbook::first_rows(self.path(), self.rewound()?, sheet, count)
    }

    fn extension(&self) -> String {
        self.path()
            .extension()
            .and_then(|e| e.to_str())
            .map(str::to_ascii_lowercase)
            .unwrap_or_default()
    }

    fn is_zip_workbook(&self) -> bool {
        matches!(self.extension().as_str(), "xlsx" | "xlsm")
    }

    fn read_area_once(
        &self,
        sheet: Option<&str>,
        area: &Area,
        limits: &Limits,
        format: &CsvFormat,
    ) -> Result<Table, SourceError> {
        let path = self.path();
        if self.extension() == "csv" {
            let bounds = match area {
                Area::Sheet { header_row } => Bounds::from_row(*header_row),
                Area::Range(range) => Bounds::of_range(range),
                Area::Table(_) => {
                    return Err(SourceError::NoTables {
                        path: path.to_path_buf(),
                    })
                }
            };
            return read_csv(path, self.rewound()?, bounds, format);
        }
        if self.is_zip_workbook() {
            guard::prescan(self.rewound()?, limits).map_err(|reason| SourceError::Refused {
                path: path.to_path_buf(),
                reason,
            })?;
        }
        read_workbook(path, self.rewound()?, sheet, area)
    }
}
