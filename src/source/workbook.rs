//! Sheets of workbooks (.xlsx, .xlsm, .xlsb, .xls, .ods) through calamine:
//! .xlsx and .xlsm sheets streamed cell by cell, the others as ranges.

use std::fmt;
use std::fs::File;
use std::io::{BufReader, Seek, SeekFrom};
use std::path::Path;
use std::sync::Arc;

use calamine::{Data, DataRef, Ods, Reader, Sheets, Xls, Xlsb, Xlsx};

use super::table::{Bounds, Builder, Table};
use super::tables::{table_parts, WorksheetTable};
use super::{FirstRows, SourceError, Value};
use crate::job::Area;
use crate::suggest::closest;

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

/// Reads the `area` of the workbook open in `file`: a sheet (`sheet`, or
/// the first) from its header row down, a range of it, or a worksheet
/// table from whichever sheet holds it.
pub(super) fn read_workbook(
    path: &Path,
    file: &File,
    sheet: Option<&str>,
    area: &Area,
) -> Result<Table, SourceError> {
    // The table parts are read through the file before the workbook reader
    // takes it over.
    let parts = match area {
        Area::Table(_) => table_parts(file),
        _ => Vec::new(),
    };
    let mut workbook = open_workbook(path, file).map_err(|e| open_error(path, e))?;
    let (name, bounds) = match area {
        Area::Sheet { header_row } => (
            pick_sheet(path, &workbook.sheet_names(), sheet)?,
            Bounds::from_row(*header_row),
        ),
        Area::Range(range) => (
            pick_sheet(path, &workbook.sheet_names(), sheet)?,
            Bounds::of_range(range),
        ),
        Area::Table(wanted) => {
            let table = find_table(path, &mut workbook, parts, wanted)?;
            let Some((_, last)) = table.data_rows() else {
                return Err(SourceError::EmptyTable {
                    path: path.to_path_buf(),
                    table: table.to_string(),
                });
            };
            let r = table.range;
            (
                table.sheet.clone(),
                Bounds {
                    header_row: r.first_row,
                    last_row: Some(last),
                    columns: Some((r.first_col, r.last_col)),
                },
            )
        }
    };
    let sheet_error = |e: &dyn fmt::Display| SourceError::Sheet {
        path: path.to_path_buf(),
        sheet: name.clone(),
        reason: e.to_string(),
    };
    let mut builder = Builder::new(path, &name, bounds);
    match &mut workbook {
        Sheets::Xlsx(xlsx) => {
            let mut cells = xlsx
                .worksheet_cells_reader(&name)
                .map_err(|e| sheet_error(&e))?;
            let mut last_dates = LastDates::default();
            while let Some(cell) = cells
                .next_cell_with_formula_metadata()
                .map_err(|e| sheet_error(&e))?
            {
                let (row, col) = cell.pos;
                let value = match &cell.value {
                    DataRef::DateTime(dt) => last_dates.value(col, dt),
                    other => value_from_ref(other),
                };
                if cell.formula.is_some() {
                    builder.formula(row, col, value != Value::Blank)?;
                }
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

/// The sheet names of the workbook open in `file`, and the first `count`
/// rows of `sheet` (the first sheet when `None`), each row's cells by
/// column from A up to its last value (at most [`PEEK_COLUMNS`]).
pub(super) fn first_rows(
    path: &Path,
    file: &File,
    sheet: Option<&str>,
    count: u32,
) -> Result<FirstRows, SourceError> {
    let mut workbook = open_workbook(path, file).map_err(|e| open_error(path, e))?;
    let names = workbook.sheet_names();
    let name = pick_sheet(path, &names, sheet)?;
    let sheet_error = |e: &dyn fmt::Display| SourceError::Sheet {
        path: path.to_path_buf(),
        sheet: name.clone(),
        reason: e.to_string(),
    };
    let mut rows: Vec<Vec<Value>> = vec![Vec::new(); count as usize];
    let mut put = |row: u32, col: u32, value: Value| {
        if row < count && col < PEEK_COLUMNS && value != Value::Blank {
            let cells = &mut rows[row as usize];
            if cells.len() <= col as usize {
                cells.resize(col as usize + 1, Value::Blank);
            }
            cells[col as usize] = value;
        }
    };
    match &mut workbook {
        Sheets::Xlsx(xlsx) => {
            let mut cells = xlsx
                .worksheet_cells_reader(&name)
                .map_err(|e| sheet_error(&e))?;
            while let Some(cell) = cells.next_cell().map_err(|e| sheet_error(&e))? {
                let (row, col) = cell.get_position();
                if row >= count {
                    break;
                }
                put(row, col, value_from_ref(cell.get_value()));
            }
        }
        other => {
            let range = other.worksheet_range(&name).map_err(|e| sheet_error(&e))?;
            let (row0, col0) = range.start().unwrap_or((0, 0));
            for (r, c, cell) in range.used_cells() {
                put(row0 + r as u32, col0 + c as u32, value_from_cell(cell));
            }
        }
    }
    Ok(FirstRows {
        sheets: names,
        sheet: name,
        rows,
    })
}

/// The most columns [`first_rows`] looks at.
const PEEK_COLUMNS: u32 = 256;

/// The worksheet tables of the workbook open in `file`, each with its
/// sheet; none for files other than .xlsx and .xlsm.
pub(super) fn worksheet_tables(
    path: &Path,
    file: &File,
) -> Result<Vec<WorksheetTable>, SourceError> {
    let parts = table_parts(file);
    if parts.is_empty() {
        return Ok(parts);
    }
    let mut workbook = open_workbook(path, file).map_err(|e| open_error(path, e))?;
    with_sheets(path, &mut workbook, parts)
}

/// `parts` with the sheet holding each filled in by the workbook reader.
fn with_sheets<R: std::io::Read + Seek>(
    path: &Path,
    workbook: &mut Sheets<R>,
    parts: Vec<WorksheetTable>,
) -> Result<Vec<WorksheetTable>, SourceError> {
    let Sheets::Xlsx(xlsx) = workbook else {
        return Ok(Vec::new());
    };
    xlsx.load_tables().map_err(|e| open_error(path, e))?;
    let sheets = xlsx.sheet_names();
    let mut found = Vec::new();
    for sheet in sheets {
        let names: Vec<String> = xlsx
            .table_names_in_sheet(&sheet)
            .into_iter()
            .cloned()
            .collect();
        for name in names {
            if let Some(part) = parts.iter().find(|p| p.name == name) {
                found.push(WorksheetTable {
                    sheet: sheet.clone(),
                    ..part.clone()
                });
            }
        }
    }
    Ok(found)
}

/// The worksheet table called `wanted` (in any case), with its sheet.
fn find_table<R: std::io::Read + Seek>(
    path: &Path,
    workbook: &mut Sheets<R>,
    parts: Vec<WorksheetTable>,
    wanted: &str,
) -> Result<WorksheetTable, SourceError> {
    if !matches!(workbook, Sheets::Xlsx(_)) {
        return Err(SourceError::NoTables {
            path: path.to_path_buf(),
        });
    }
    let tables = with_sheets(path, workbook, parts)?;
    if let Some(table) = tables.iter().find(|t| t.name.eq_ignore_ascii_case(wanted)) {
        return Ok(table.clone());
    }
    let names: Vec<String> = tables.iter().map(|t| t.name.clone()).collect();
    Err(SourceError::NoSuchTable {
        path: path.to_path_buf(),
        table: wanted.to_string(),
        suggestion: closest(wanted, &names)
            .map(|n| format!(" (did you mean '{n}'?)"))
            .unwrap_or_default(),
        available: if tables.is_empty() {
            "it has none; give the data's cells with `range` instead".to_string()
        } else {
            format!(
                "its tables are: {}",
                tables
                    .iter()
                    .map(ToString::to_string)
                    .collect::<Vec<_>>()
                    .join("; ")
            )
        },
    })
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
pub(super) fn text_value(s: &str) -> Value {
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spreadsheet_error_text_is_an_error_value() {
        assert_eq!(
            text_value(" #N/A "),
            Value::Error(Arc::new("#N/A".to_string()))
        );
        assert_eq!(text_value("   "), Value::Blank);
    }
}
