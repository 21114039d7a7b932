//! Reading the input: one sheet of a workbook (or a CSV file) into a [`Table`].
//!
//! The table keeps every cell's value with its type as the file stored it
//! and its place in the sheet, so that later stages can say "sheet
//! 'records', cell C14 holds the text 'n/a'" instead of "bad value".
//! Nothing here decides what a column means; `design` does that per model.

use std::fmt;
use std::fs::File;
use std::io::{BufReader, Seek, SeekFrom};
use std::path::{Path, PathBuf};
use std::sync::Arc;

use calamine::{Data, DataRef, Ods, Reader, Sheets, Xls, Xlsb, Xlsx};

use crate::job::Limits;

mod guard;
mod input;

pub use input::Input;

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

/// A cell's place in a sheet, shown in A1 form (column letters, row counted
/// from 1).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct CellRef {
    /// Row counted from 1.
    pub row: u32,
    /// Column counted from 0 (A = 0).
    pub col: u32,
}

impl fmt::Display for CellRef {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}{}", column_letters(self.col), self.row)
    }
}

/// Column letters for a zero-based column index: 0 -> A, 25 -> Z, 26 -> AA.
pub fn column_letters(col: u32) -> String {
    let mut n = col + 1;
    let mut letters = Vec::new();
    while n > 0 {
        let rem = (n - 1) % 26;
        letters.push(b'A' + rem as u8);
        n = (n - 1) / 26;
    }
    letters.reverse();
    String::from_utf8(letters).unwrap_or_default()
}

/// A cell value as stored in the input.
#[derive(Debug, Clone, PartialEq)]
pub enum Value {
    /// Nothing, or only spaces.
    Blank,
    /// A number.
    Number(f64),
    /// Text, trimmed of surrounding spaces. Equal texts of a table share
    /// one allocation, behind a thin pointer so a value takes 16 bytes.
    Text(Arc<String>),
    /// TRUE or FALSE.
    Bool(bool),
    /// A date or time, as ISO 8601 text, shared like text.
    Date(Arc<String>),
    /// An error value such as `#DIV/0!`.
    Error(Arc<String>),
}

impl Value {
    /// A text value.
    pub fn text(s: &str) -> Value {
        Value::Text(Arc::new(s.to_string()))
    }

    /// The kind of value, in words, for messages and the `check` command.
    pub fn kind(&self) -> &'static str {
        match self {
            Value::Blank => "blank",
            Value::Number(_) => "number",
            Value::Text(_) => "text",
            Value::Bool(_) => "true/false",
            Value::Date(_) => "date",
            Value::Error(_) => "error",
        }
    }
}

impl fmt::Display for Value {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Value::Blank => f.write_str("(blank)"),
            Value::Number(x) => write!(f, "{x}"),
            Value::Text(s) | Value::Date(s) | Value::Error(s) => f.write_str(s),
            Value::Bool(b) => f.write_str(if *b { "TRUE" } else { "FALSE" }),
        }
    }
}

/// The values of one column at 8 bytes a cell, whatever their kinds: a
/// number is stored as itself, and any other value (blank, text, date,
/// error, true/false) as a NaN whose payload indexes the column's list of
/// distinct such values ("NaN-boxing"). A category or a month is thus
/// stored once however many rows hold it, and a million-row column of
/// numbers takes what its numbers take.
#[derive(Debug, Clone, Default)]
pub struct Cells {
    words: Vec<u64>,
    /// The distinct values other than numbers, in order of first use.
    others: Vec<Value>,
    /// The index in `others` of each, by kind and text.
    index: std::collections::HashMap<(u8, Arc<String>), u64>,
    /// The index of the last such value stored: runs of one value (a
    /// month's rows) are stored without a lookup.
    last: Option<u64>,
}

/// High 16 bits of a word that holds an index into [`Cells::others`]: a
/// signalling NaN, which a stored number never is (NaNs are stored as
/// the one quiet NaN).
const OTHER_TAG: u64 = 0x7ff4 << 48;
const TAG_MASK: u64 = 0xffff << 48;

impl Cells {
    /// The number of cells.
    pub fn len(&self) -> usize {
        self.words.len()
    }

    /// Whether there are no cells.
    pub fn is_empty(&self) -> bool {
        self.words.is_empty()
    }

    /// Cell `i`.
    ///
    /// # Panics
    /// When `i` is not below [`Cells::len`].
    pub fn get(&self, i: usize) -> Value {
        let word = self.words[i];
        if word & TAG_MASK == OTHER_TAG {
            self.others[(word & !TAG_MASK) as usize].clone()
        } else {
            Value::Number(f64::from_bits(word))
        }
    }

    /// A key for cell `i`: equal cells of one column have equal keys, so
    /// work per distinct value (a level's label, a date's period) can be
    /// done once.
    ///
    /// # Panics
    /// When `i` is not below [`Cells::len`].
    pub fn key(&self, i: usize) -> u64 {
        self.words[i]
    }

    /// Every cell, in order.
    pub fn iter(&self) -> impl Iterator<Item = Value> + '_ {
        (0..self.words.len()).map(|i| self.get(i))
    }

    /// Appends `value`.
    pub fn push(&mut self, value: Value) {
        let word = self.word(value);
        self.words.push(word);
    }

    /// Replaces cell `i` with `value`.
    ///
    /// # Panics
    /// When `i` is not below [`Cells::len`].
    pub fn set(&mut self, i: usize, value: Value) {
        self.words[i] = self.word(value);
    }

    fn word(&mut self, value: Value) -> u64 {
        let key = match &value {
            Value::Number(x) if x.is_nan() => return f64::NAN.to_bits(),
            Value::Number(x) => return x.to_bits(),
            Value::Blank => (0, Arc::default()),
            Value::Bool(b) => (1 + u8::from(*b), Arc::default()),
            Value::Text(t) => (3, Arc::clone(t)),
            Value::Date(t) => (4, Arc::clone(t)),
            Value::Error(t) => (5, Arc::clone(t)),
        };
        if let Some(last) = self
            .last
            .filter(|&last| self.others[last as usize] == value)
        {
            return OTHER_TAG | last;
        }
        let next = self.others.len() as u64;
        let index = *self.index.entry(key).or_insert(next);
        if index == next {
            self.others.push(value);
        }
        self.last = Some(index);
        OTHER_TAG | index
    }
}

impl FromIterator<Value> for Cells {
    fn from_iter<I: IntoIterator<Item = Value>>(values: I) -> Self {
        let mut cells = Cells::default();
        for value in values {
            cells.push(value);
        }
        cells
    }
}

/// One named column of the table.
#[derive(Debug, Clone)]
pub struct Column {
    /// The header text, trimmed.
    pub name: String,
    /// Zero-based sheet column of this column.
    pub col: u32,
    /// One value per data row, in sheet order.
    pub values: Cells,
}

/// The data of one sheet: named columns of equal length, below a header row.
#[derive(Debug, Clone)]
pub struct Table {
    /// The input file.
    pub path: PathBuf,
    /// The sheet read (for CSV, the file name).
    pub sheet: String,
    /// Sheet row number (from 1) of each data row.
    pub rows: Vec<u32>,
    /// The columns in sheet order.
    pub columns: Vec<Column>,
}

impl Table {
    /// The column called `name`, if there is one.
    pub fn column(&self, name: &str) -> Option<&Column> {
        self.columns.iter().find(|c| c.name == name)
    }

    /// The cell address of data row `index` in `column`.
    pub fn cell(&self, column: &Column, index: usize) -> CellRef {
        CellRef {
            row: self.rows[index],
            col: column.col,
        }
    }

    /// Empties the cells of every column for which `wanted` is false,
    /// keeping its name (for messages), so that its memory is given back
    /// once no later stage reads it.
    pub fn clear_columns(&mut self, wanted: impl Fn(&str) -> bool) {
        for column in &mut self.columns {
            if !wanted(&column.name) {
                column.values = Cells::default();
            }
        }
    }

    /// Where the data came from, for messages: "sheet 'records' of data.xlsx".
    pub fn place(&self) -> String {
        format!("sheet '{}' of {}", self.sheet, self.path.display())
    }
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

fn open_error(path: &Path, e: impl fmt::Display) -> SourceError {
    let text = e.to_string();
    let hint = if text.contains("ncrypt") || text.contains("CFB") || text.contains("cfb") {
        "; an encrypted or password-protected workbook cannot be read: save an unprotected copy"
    } else {
        ""
    };
    SourceError::Open {
        path: path.to_path_buf(),
        reason: format!("it is not a readable workbook ({text}){hint}"),
    }
}

/// The sheet to read: `wanted`, or the first.
fn pick_sheet(path: &Path, names: &[String], wanted: Option<&str>) -> Result<String, SourceError> {
    match wanted {
        Some(s) => names
            .iter()
            .find(|n| n.as_str() == s)
            .cloned()
            .ok_or_else(|| SourceError::NoSuchSheet {
                path: path.to_path_buf(),
                sheet: s.to_string(),
                available: names
                    .iter()
                    .map(|n| format!("'{n}'"))
                    .collect::<Vec<_>>()
                    .join(", "),
            }),
        None => names.first().cloned().ok_or_else(|| SourceError::Open {
            path: path.to_path_buf(),
            reason: "the workbook has no sheets".into(),
        }),
    }
}

/// The workbook in `file`, of the kind its extension names (told from its
/// bytes when the extension names none), as calamine's own opening by path
/// does, but from the one open file.
fn open_workbook<'f>(
    path: &Path,
    file: &'f File,
) -> Result<Sheets<BufReader<&'f File>>, calamine::Error> {
    let from_start = || -> Result<BufReader<&'f File>, calamine::Error> {
        let mut f = file;
        f.seek(SeekFrom::Start(0))?;
        Ok(BufReader::new(file))
    };
    Ok(match path.extension().and_then(|e| e.to_str()) {
        Some("xls" | "xla") => Sheets::Xls(Xls::new(from_start()?).map_err(calamine::Error::Xls)?),
        Some("xlsx" | "xlsm" | "xlam") => {
            Sheets::Xlsx(Xlsx::new(from_start()?).map_err(calamine::Error::Xlsx)?)
        }
        Some("xlsb") => Sheets::Xlsb(Xlsb::new(from_start()?).map_err(calamine::Error::Xlsb)?),
        Some("ods") => Sheets::Ods(Ods::new(from_start()?).map_err(calamine::Error::Ods)?),
        _ => {
            if let Ok(w) = Xls::new(from_start()?) {
                Sheets::Xls(w)
            } else if let Ok(w) = Xlsx::new(from_start()?) {
                Sheets::Xlsx(w)
            } else if let Ok(w) = Xlsb::new(from_start()?) {
                Sheets::Xlsb(w)
            } else if let Ok(w) = Ods::new(from_start()?) {
                Sheets::Ods(w)
            } else {
                return Err(calamine::Error::Msg("Cannot detect file format"));
            }
        }
    })
}

fn read_workbook(
    path: &Path,
    file: &File,
    sheet: Option<&str>,
    header_row: u32,
) -> Result<Table, SourceError> {
    let mut workbook = open_workbook(path, file).map_err(|e| open_error(path, e))?;
    let name = pick_sheet(path, &workbook.sheet_names(), sheet)?;
    let sheet_error = |e: &dyn fmt::Display| SourceError::Sheet {
        path: path.to_path_buf(),
        sheet: name.clone(),
        reason: e.to_string(),
    };
    let mut builder = Builder::new(path, &name, header_row);
    match &mut workbook {
        Sheets::Xlsx(xlsx) => {
            let mut cells = xlsx
                .worksheet_cells_reader(&name)
                .map_err(|e| sheet_error(&e))?;
            let mut last_dates = LastDates::default();
            while let Some(cell) = cells.next_cell().map_err(|e| sheet_error(&e))? {
                let (row, col) = cell.get_position();
                let value = match cell.get_value() {
                    DataRef::DateTime(dt) => last_dates.value(col, dt),
                    other => value_from_ref(other),
                };
                builder.push(row, col, value)?;
            }
        }
        other => {
            let range = other.worksheet_range(&name).map_err(|e| sheet_error(&e))?;
            let (row0, col0) = range.start().unwrap_or((0, 0));
            for (r, c, cell) in range.used_cells() {
                builder.push(row0 + r as u32, col0 + c as u32, value_from_cell(cell))?;
            }
        }
    }
    builder.finish()
}

fn value_from_ref(cell: &DataRef<'_>) -> Value {
    match cell {
        DataRef::Empty => Value::Blank,
        DataRef::Int(i) => Value::Number(*i as f64),
        DataRef::Float(x) => Value::Number(*x),
        DataRef::String(s) => text_value(s),
        DataRef::SharedString(s) => text_value(s),
        DataRef::Bool(b) => Value::Bool(*b),
        DataRef::DateTime(dt) => date_value(dt),
        DataRef::DateTimeIso(s) | DataRef::DurationIso(s) => Value::Date(s.clone().into()),
        DataRef::Error(e) => Value::Error(e.to_string().into()),
    }
}

/// The last date read in each sheet column with its value: a date column
/// often repeats a date row after row (a month's rows), and forming a
/// date's text is the slowest step of reading a cell.
#[derive(Default)]
struct LastDates(Vec<Option<(calamine::ExcelDateTime, Value)>>);

impl LastDates {
    fn value(&mut self, col: u32, dt: &calamine::ExcelDateTime) -> Value {
        let col = col as usize;
        if self.0.len() <= col {
            self.0.resize(col + 1, None);
        }
        match &self.0[col] {
            Some((last, value)) if last == dt => value.clone(),
            _ => {
                let value = date_value(dt);
                self.0[col] = Some((*dt, value.clone()));
                value
            }
        }
    }
}

fn date_value(dt: &calamine::ExcelDateTime) -> Value {
    Value::Date(
        match dt.as_datetime() {
            Some(d) if d.time() == chrono::NaiveTime::MIN => d.date().to_string(),
            Some(d) => d.to_string(),
            None => dt.as_f64().to_string(),
        }
        .into(),
    )
}

fn value_from_cell(cell: &Data) -> Value {
    match cell {
        Data::Empty => Value::Blank,
        Data::Int(i) => Value::Number(*i as f64),
        Data::Float(x) => Value::Number(*x),
        Data::String(s) => text_value(s),
        Data::Bool(b) => Value::Bool(*b),
        Data::DateTime(dt) => date_value(dt),
        Data::DateTimeIso(s) | Data::DurationIso(s) => Value::Date(s.clone().into()),
        Data::Error(e) => Value::Error(e.to_string().into()),
    }
}

/// Text cells: blank when only spaces; spreadsheet error texts (as some
/// formats store them) stay errors.
fn text_value(s: &str) -> Value {
    let t = s.trim();
    if t.is_empty() {
        Value::Blank
    } else if matches!(
        t,
        "#DIV/0!" | "#N/A" | "#NAME?" | "#NULL!" | "#NUM!" | "#REF!" | "#VALUE!"
    ) {
        Value::Error(Arc::new(t.to_string()))
    } else {
        Value::text(t)
    }
}

fn read_csv(path: &Path, file: &File, header_row: u32) -> Result<Table, SourceError> {
    let open_err = |reason: String| SourceError::Open {
        path: path.to_path_buf(),
        reason,
    };
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .from_reader(file);
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let mut builder = Builder::new(path, &name, header_row);
    for (r, record) in reader.records().enumerate() {
        let record = record.map_err(|e| open_err(format!("it is not readable CSV ({e})")))?;
        for (c, field) in record.iter().enumerate() {
            let value = match text_value(field) {
                Value::Text(t) => t.parse::<f64>().map_or(Value::Text(t), Value::Number),
                other => other,
            };
            builder.push(r as u32, c as u32, value)?;
        }
    }
    builder.finish()
}

/// Builds a [`Table`] from cells given in row order (zero-based positions):
/// header-row cells name the columns, later cells in named columns fill
/// them; other cells are ignored.
struct Builder {
    path: PathBuf,
    sheet: String,
    /// Header row, counted from 1.
    header_row: u32,
    columns: Vec<Column>,
    /// Column index by sheet column, once the header is complete.
    by_col: std::collections::HashMap<u32, usize>,
    header_done: bool,
    rows: Vec<u32>,
}

impl Builder {
    fn new(path: &Path, sheet: &str, header_row: u32) -> Self {
        Builder {
            path: path.to_path_buf(),
            sheet: sheet.to_string(),
            header_row,
            columns: Vec::new(),
            by_col: std::collections::HashMap::new(),
            header_done: false,
            rows: Vec::new(),
        }
    }

    fn push(&mut self, row0: u32, col: u32, value: Value) -> Result<(), SourceError> {
        let row = row0.saturating_add(1);
        if row < self.header_row || value == Value::Blank {
            return Ok(());
        }
        if row == self.header_row {
            self.columns.push(Column {
                name: value.to_string(),
                col,
                values: Cells::default(),
            });
            return Ok(());
        }
        self.close_header()?;
        let Some(&j) = self.by_col.get(&col) else {
            return Ok(());
        };
        let index = (row - self.header_row - 1) as usize;
        while self.rows.len() <= index {
            self.rows.push(self.header_row + 1 + self.rows.len() as u32);
            for c in &mut self.columns {
                c.values.push(Value::Blank);
            }
        }
        self.columns[j].values.set(index, value);
        Ok(())
    }

    /// Checks the header once its row is complete: at least one name, no
    /// name twice.
    fn close_header(&mut self) -> Result<(), SourceError> {
        if self.header_done {
            return Ok(());
        }
        self.header_done = true;
        if self.columns.is_empty() {
            return Err(SourceError::NoHeader {
                path: self.path.clone(),
                sheet: self.sheet.clone(),
                row: self.header_row,
            });
        }
        for (j, c) in self.columns.iter().enumerate() {
            if let Some(prev) = self.columns[..j].iter().find(|p| p.name == c.name) {
                return Err(SourceError::DuplicateHeader {
                    path: self.path.clone(),
                    sheet: self.sheet.clone(),
                    name: c.name.clone(),
                    first: CellRef {
                        row: self.header_row,
                        col: prev.col,
                    },
                    second: CellRef {
                        row: self.header_row,
                        col: c.col,
                    },
                });
            }
            self.by_col.insert(c.col, j);
        }
        Ok(())
    }

    fn finish(mut self) -> Result<Table, SourceError> {
        self.close_header()?;
        Ok(Table {
            path: self.path,
            sheet: self.sheet,
            rows: self.rows,
            columns: self.columns,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_cell_value_takes_sixteen_bytes() {
        // A million-row sheet holds one value per used cell.
        assert_eq!(std::mem::size_of::<Value>(), 16);
    }

    #[test]
    fn cells_give_back_every_kind_of_value_at_eight_bytes_a_cell() {
        let values = vec![
            Value::Number(-0.0),
            Value::Number(f64::INFINITY),
            Value::Number(f64::NAN),
            Value::Number(f64::from_bits(0x7ff4_0000_0000_0001)),
            Value::Number(1e300),
            Value::Blank,
            Value::text("north"),
            Value::Bool(true),
            Value::Bool(false),
            Value::Date(Arc::new("2026-01-01".into())),
            Value::Error(Arc::new("#N/A".into())),
            Value::text("north"),
        ];
        let cells: Cells = values.iter().cloned().collect();
        assert_eq!(cells.len(), values.len());
        for (i, want) in values.iter().enumerate() {
            match (cells.get(i), want) {
                (Value::Number(got), Value::Number(x)) if x.is_nan() => assert!(got.is_nan()),
                (Value::Number(got), Value::Number(x)) => assert_eq!(got.to_bits(), x.to_bits()),
                (got, want) => assert_eq!(&got, want, "cell {i}"),
            }
        }
        // Equal texts share one entry.
        assert_eq!(cells.others.len(), 6);
        assert_eq!(
            std::mem::size_of_val(cells.words.as_slice()),
            8 * values.len()
        );
    }

    #[test]
    fn column_letters_follow_the_sheet_convention() {
        assert_eq!(column_letters(0), "A");
        assert_eq!(column_letters(25), "Z");
        assert_eq!(column_letters(26), "AA");
        assert_eq!(column_letters(701), "ZZ");
        assert_eq!(column_letters(702), "AAA");
        assert_eq!(CellRef { row: 14, col: 2 }.to_string(), "C14");
    }

    /// A table from rows of cells whose top-left sits at `start`.
    fn build(
        rows: Vec<Vec<Value>>,
        start: (u32, u32),
        header_row: u32,
    ) -> Result<Table, SourceError> {
        let mut b = Builder::new(Path::new("d.xlsx"), "s", header_row);
        for (r, row) in rows.into_iter().enumerate() {
            for (c, v) in row.into_iter().enumerate() {
                b.push(start.0 + r as u32, start.1 + c as u32, v)?;
            }
        }
        b.finish()
    }

    #[test]
    fn offsets_are_kept_in_cell_addresses() {
        let t = build(
            vec![
                vec![Value::text("y"), Value::text("x")],
                vec![Value::Number(1.0), Value::Number(2.0)],
                vec![Value::Blank, Value::Blank],
            ],
            (2, 1),
            3,
        )
        .unwrap();
        assert_eq!(t.rows, vec![4]);
        let x = t.column("x").unwrap();
        assert_eq!(t.cell(x, 0).to_string(), "C4");
    }

    #[test]
    fn far_apart_cells_cost_rows_not_the_bounding_box() {
        // A value in A1 048 576 and one in XFD2: only the named column A is
        // kept, so the table holds one column of a million rows.
        let mut b = Builder::new(Path::new("d.xlsx"), "s", 1);
        b.push(0, 0, Value::text("y")).unwrap();
        b.push(1, 16_383, Value::Number(1.0)).unwrap();
        b.push(1_048_575, 0, Value::Number(2.0)).unwrap();
        let t = b.finish().unwrap();
        assert_eq!(t.columns.len(), 1);
        assert_eq!(t.rows.len(), 1_048_575);
        assert_eq!(t.columns[0].values.get(1_048_574), Value::Number(2.0));
    }

    #[test]
    fn cleared_columns_keep_their_names_and_give_up_their_cells() {
        let mut t = build(
            vec![
                vec![Value::text("y"), Value::text("x")],
                vec![Value::Number(1.0), Value::Number(2.0)],
            ],
            (0, 0),
            1,
        )
        .unwrap();
        t.clear_columns(|name| name == "y");
        assert_eq!(t.column("y").unwrap().values.get(0), Value::Number(1.0));
        assert!(t.column("x").unwrap().values.is_empty());
        assert_eq!(t.rows.len(), 1);
    }

    #[test]
    fn duplicate_header_names_both_cells() {
        let err = build(vec![vec![Value::text("y"), Value::text("y")]], (0, 0), 1).unwrap_err();
        assert_eq!(
            err.to_string(),
            "sheet 's' of d.xlsx: cells A1 and B1 both name a column 'y'; give each column its own name"
        );
    }

    #[test]
    fn header_row_past_the_data_is_reported() {
        let err = build(vec![vec![Value::text("y")]], (0, 0), 5).unwrap_err();
        assert!(
            err.to_string().contains("no column names in row 5"),
            "{err}"
        );
    }

    #[test]
    fn spreadsheet_error_text_is_an_error_value() {
        assert_eq!(
            text_value(" #N/A "),
            Value::Error(Arc::new("#N/A".to_string()))
        );
        assert_eq!(text_value("   "), Value::Blank);
    }
}
