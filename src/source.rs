//! Reading the input: one sheet of a workbook (or a CSV file) into a [`Table`].
//!
//! The table keeps every cell's value with its type as the file stored it
//! and its place in the sheet, so that later stages can say "sheet
//! 'records', cell C14 holds the text 'n/a'" instead of "bad value".
//! Nothing here decides what a column means; `design` does that per model.

use std::fmt;
use std::path::{Path, PathBuf};

use calamine::{open_workbook_auto, Data, Reader};

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
    /// Text, trimmed of surrounding spaces.
    Text(String),
    /// TRUE or FALSE.
    Bool(bool),
    /// A date or time, as ISO 8601 text.
    Date(String),
    /// An error value such as `#DIV/0!`.
    Error(String),
}

impl Value {
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

/// One named column of the table.
#[derive(Debug, Clone)]
pub struct Column {
    /// The header text, trimmed.
    pub name: String,
    /// Zero-based sheet column of this column.
    pub col: u32,
    /// One value per data row, in sheet order.
    pub values: Vec<Value>,
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

    /// Where the data came from, for messages: "sheet 'records' of data.xlsx".
    pub fn place(&self) -> String {
        format!("sheet '{}' of {}", self.sheet, self.path.display())
    }
}

/// Reads `sheet` (the first sheet when `None`) of the workbook or CSV file
/// at `path`, with column names in `header_row` (counted from 1).
///
/// Rows after the last non-blank row are not kept. Columns with a blank
/// header cell are skipped.
///
/// # Errors
/// [`SourceError`] when the file cannot be opened, the sheet is missing,
/// the header row is empty or two columns share a name.
pub fn read_table(path: &Path, sheet: Option<&str>, header_row: u32) -> Result<Table, SourceError> {
    let is_csv = path
        .extension()
        .and_then(|e| e.to_str())
        .is_some_and(|e| e.eq_ignore_ascii_case("csv"));
    let (sheet_name, grid) = if is_csv {
        read_csv(path)?
    } else {
        read_workbook(path, sheet)?
    };
    table_from_grid(path, sheet_name, grid, header_row)
}

/// A rectangular block of values: its top-left position (zero-based row and
/// column) and the rows.
struct Grid {
    start: (u32, u32),
    rows: Vec<Vec<Value>>,
}

fn read_workbook(path: &Path, sheet: Option<&str>) -> Result<(String, Grid), SourceError> {
    if !path.is_file() {
        return Err(SourceError::Open {
            path: path.to_path_buf(),
            reason: if path.exists() {
                "it is not a file".into()
            } else {
                "no such file".into()
            },
        });
    }
    let mut workbook = open_workbook_auto(path).map_err(|e| SourceError::Open {
        path: path.to_path_buf(),
        reason: format!("it is not a readable workbook ({e})"),
    })?;
    let names = workbook.sheet_names();
    let name = match sheet {
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
            })?,
        None => names.first().cloned().ok_or_else(|| SourceError::Open {
            path: path.to_path_buf(),
            reason: "the workbook has no sheets".into(),
        })?,
    };
    let range = workbook
        .worksheet_range(&name)
        .map_err(|e| SourceError::Sheet {
            path: path.to_path_buf(),
            sheet: name.clone(),
            reason: e.to_string(),
        })?;
    let start = range.start().unwrap_or((0, 0));
    let rows = range
        .rows()
        .map(|r| r.iter().map(value_from_cell).collect())
        .collect();
    Ok((name, Grid { start, rows }))
}

fn value_from_cell(cell: &Data) -> Value {
    match cell {
        Data::Empty => Value::Blank,
        Data::Int(i) => Value::Number(*i as f64),
        Data::Float(x) => Value::Number(*x),
        Data::String(s) => text_value(s),
        Data::Bool(b) => Value::Bool(*b),
        Data::DateTime(dt) => Value::Date(match dt.as_datetime() {
            Some(d) if d.time() == chrono::NaiveTime::MIN => d.date().to_string(),
            Some(d) => d.to_string(),
            None => dt.as_f64().to_string(),
        }),
        Data::DateTimeIso(s) | Data::DurationIso(s) => Value::Date(s.clone()),
        Data::Error(e) => Value::Error(e.to_string()),
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
        Value::Error(t.to_string())
    } else {
        Value::Text(t.to_string())
    }
}

fn read_csv(path: &Path) -> Result<(String, Grid), SourceError> {
    let open_err = |reason: String| SourceError::Open {
        path: path.to_path_buf(),
        reason,
    };
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .from_path(path)
        .map_err(|e| open_err(e.to_string()))?;
    let mut rows = Vec::new();
    for record in reader.records() {
        let record = record.map_err(|e| open_err(format!("it is not readable CSV ({e})")))?;
        rows.push(
            record
                .iter()
                .map(|field| match text_value(field) {
                    Value::Text(t) => t.parse::<f64>().map_or(Value::Text(t), Value::Number),
                    other => other,
                })
                .collect(),
        );
    }
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    Ok((
        name,
        Grid {
            start: (0, 0),
            rows,
        },
    ))
}

fn table_from_grid(
    path: &Path,
    sheet: String,
    grid: Grid,
    header_row: u32,
) -> Result<Table, SourceError> {
    let (row0, col0) = grid.start;
    let header_index = (header_row - 1).checked_sub(row0).map(|i| i as usize);
    let no_header = || SourceError::NoHeader {
        path: path.to_path_buf(),
        sheet: sheet.clone(),
        row: header_row,
    };
    let header = header_index
        .and_then(|i| grid.rows.get(i))
        .ok_or_else(no_header)?;
    let mut columns: Vec<Column> = Vec::new();
    for (j, cell) in header.iter().enumerate() {
        let name = match cell {
            Value::Blank => continue,
            other => other.to_string(),
        };
        let col = col0 + j as u32;
        if let Some(prev) = columns.iter().find(|c| c.name == name) {
            return Err(SourceError::DuplicateHeader {
                path: path.to_path_buf(),
                sheet,
                name,
                first: CellRef {
                    row: header_row,
                    col: prev.col,
                },
                second: CellRef {
                    row: header_row,
                    col,
                },
            });
        }
        columns.push(Column {
            name,
            col,
            values: Vec::new(),
        });
    }
    if columns.is_empty() {
        return Err(no_header());
    }
    let body = &grid.rows[header_index.map_or(0, |i| i + 1)..];
    let used = body
        .iter()
        .rposition(|r| r.iter().any(|v| *v != Value::Blank))
        .map_or(0, |last| last + 1);
    let mut rows = Vec::with_capacity(used);
    for (i, row) in body[..used].iter().enumerate() {
        rows.push(header_row + 1 + i as u32);
        for c in &mut columns {
            let j = (c.col - col0) as usize;
            c.values.push(row.get(j).cloned().unwrap_or(Value::Blank));
        }
    }
    Ok(Table {
        path: path.to_path_buf(),
        sheet,
        rows,
        columns,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn column_letters_follow_the_sheet_convention() {
        assert_eq!(column_letters(0), "A");
        assert_eq!(column_letters(25), "Z");
        assert_eq!(column_letters(26), "AA");
        assert_eq!(column_letters(701), "ZZ");
        assert_eq!(column_letters(702), "AAA");
        assert_eq!(CellRef { row: 14, col: 2 }.to_string(), "C14");
    }

    fn grid(rows: Vec<Vec<Value>>, start: (u32, u32)) -> Grid {
        Grid { start, rows }
    }

    #[test]
    fn grid_offset_is_kept_in_cell_addresses() {
        let g = grid(
            vec![
                vec![Value::Text("y".into()), Value::Text("x".into())],
                vec![Value::Number(1.0), Value::Number(2.0)],
                vec![Value::Blank, Value::Blank],
            ],
            (2, 1),
        );
        let t = table_from_grid(Path::new("d.xlsx"), "s".into(), g, 3).unwrap();
        assert_eq!(t.rows, vec![4]);
        let x = t.column("x").unwrap();
        assert_eq!(t.cell(x, 0).to_string(), "C4");
    }

    #[test]
    fn duplicate_header_names_both_cells() {
        let g = grid(
            vec![vec![Value::Text("y".into()), Value::Text("y".into())]],
            (0, 0),
        );
        let err = table_from_grid(Path::new("d.xlsx"), "s".into(), g, 1).unwrap_err();
        assert_eq!(
            err.to_string(),
            "sheet 's' of d.xlsx: cells A1 and B1 both name a column 'y'; give each column its own name"
        );
    }

    #[test]
    fn header_row_past_the_data_is_reported() {
        let g = grid(vec![vec![Value::Text("y".into())]], (0, 0));
        let err = table_from_grid(Path::new("d.xlsx"), "s".into(), g, 5).unwrap_err();
        assert!(
            err.to_string().contains("no column names in row 5"),
            "{err}"
        );
    }

    #[test]
    fn spreadsheet_error_text_is_an_error_value() {
        assert_eq!(text_value(" #N/A "), Value::Error("#N/A".into()));
        assert_eq!(text_value("   "), Value::Blank);
    }
}
