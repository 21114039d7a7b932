//! The table read from a sheet: named columns of equal length below a
//! header row, built cell by cell in the order a reader yields them.

use std::path::{Path, PathBuf};

use super::{CellRef, Cells, SourceError, Value};
use crate::job::CellRange;

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
    /// The row holding the column names, counted from 1.
    pub header_row: u32,
    /// Sheet row number (from 1) of each data row.
    pub rows: Vec<u32>,
    /// The columns in sheet order.
    pub columns: Vec<Column>,
    /// The formula cells of the named columns' data rows (.xlsx and .xlsm
    /// only), for [`super::Input::check_formulas`].
    pub formulas: Vec<FormulaCell>,
}

/// A cell that holds a formula.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct FormulaCell {
    /// Sheet row, counted from 1.
    pub row: u32,
    /// Sheet column, counted from 0.
    pub col: u32,
    /// Whether the file stores a value with the formula.
    pub has_value: bool,
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

    /// Removes the data rows whose sheet row number `drop` picks.
    pub fn remove_rows(&mut self, drop: impl Fn(u32) -> bool) {
        let keep: Vec<usize> = (0..self.rows.len())
            .filter(|&i| !drop(self.rows[i]))
            .collect();
        for column in &mut self.columns {
            if !column.values.is_empty() {
                column.values = keep.iter().map(|&i| column.values.get(i)).collect();
            }
        }
        self.rows = keep.iter().map(|&i| self.rows[i]).collect();
    }

    /// The table of the data rows `keep` (indices into this table), in that
    /// order: one level's rows for a model fitted by level.
    pub fn select_rows(&self, keep: &[usize]) -> Table {
        Table {
            path: self.path.clone(),
            sheet: self.sheet.clone(),
            header_row: self.header_row,
            rows: keep.iter().map(|&i| self.rows[i]).collect(),
            columns: self
                .columns
                .iter()
                .map(|c| Column {
                    name: c.name.clone(),
                    col: c.col,
                    values: if c.values.is_empty() {
                        Cells::default()
                    } else {
                        keep.iter().map(|&i| c.values.get(i)).collect()
                    },
                })
                .collect(),
            formulas: Vec::new(),
        }
    }

    /// Where the data came from, for messages: "sheet 'records' of data.xlsx".
    pub fn place(&self) -> String {
        format!("sheet '{}' of {}", self.sheet, self.path.display())
    }
}

/// The cells a table is built from: the header row and below, and for a
/// range or a worksheet table only its columns and rows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Bounds {
    /// The row holding the column names, counted from 1.
    pub header_row: u32,
    /// The last row read, counted from 1; the sheet's last when `None`.
    pub last_row: Option<u32>,
    /// The first and last columns read (from 0); all when `None`.
    pub columns: Option<(u32, u32)>,
}

impl Bounds {
    /// Everything from `header_row` down.
    pub fn from_row(header_row: u32) -> Self {
        Bounds {
            header_row,
            last_row: None,
            columns: None,
        }
    }

    /// The rectangle `range`, its first row the header.
    pub fn of_range(range: &CellRange) -> Self {
        Bounds {
            header_row: range.first_row,
            last_row: Some(range.last_row),
            columns: Some((range.first_col, range.last_col)),
        }
    }

    fn holds(&self, row: u32, col: u32) -> bool {
        self.last_row.is_none_or(|last| row <= last)
            && self.columns.is_none_or(|(a, b)| (a..=b).contains(&col))
    }
}

/// Builds a [`Table`] from cells given in row order (zero-based positions):
/// header-row cells name the columns, later cells in named columns fill
/// them; other cells are ignored.
pub(super) struct Builder {
    path: PathBuf,
    sheet: String,
    /// Header row, counted from 1.
    header_row: u32,
    /// The cells read.
    bounds: Bounds,
    columns: Vec<Column>,
    /// Column index by sheet column, once the header is complete.
    by_col: std::collections::HashMap<u32, usize>,
    header_done: bool,
    rows: Vec<u32>,
    formulas: Vec<FormulaCell>,
}

impl Builder {
    pub(super) fn new(path: &Path, sheet: &str, bounds: Bounds) -> Self {
        Builder {
            path: path.to_path_buf(),
            sheet: sheet.to_string(),
            header_row: bounds.header_row,
            bounds,
            columns: Vec::new(),
            by_col: std::collections::HashMap::new(),
            header_done: false,
            rows: Vec::new(),
            formulas: Vec::new(),
        }
    }

    pub(super) fn push(&mut self, row0: u32, col: u32, value: Value) -> Result<(), SourceError> {
        let row = row0.saturating_add(1);
        if row < self.header_row || value == Value::Blank || !self.bounds.holds(row, col) {
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

    /// Notes that the cell at (`row0` from 0, `col`) holds a formula, with
    /// or without a stored value, when it lies in a named column below the
    /// header.
    pub(super) fn formula(
        &mut self,
        row0: u32,
        col: u32,
        has_value: bool,
    ) -> Result<(), SourceError> {
        let row = row0.saturating_add(1);
        if row <= self.header_row || !self.bounds.holds(row, col) {
            return Ok(());
        }
        self.close_header()?;
        if self.by_col.contains_key(&col) {
            self.formulas.push(FormulaCell {
                row,
                col,
                has_value,
            });
        }
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

    pub(super) fn finish(mut self) -> Result<Table, SourceError> {
        self.close_header()?;
        Ok(Table {
            path: self.path,
            sheet: self.sheet,
            header_row: self.header_row,
            rows: self.rows,
            columns: self.columns,
            formulas: self.formulas,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A table from rows of cells whose top-left sits at `start`.
    fn build(
        rows: Vec<Vec<Value>>,
        start: (u32, u32),
        header_row: u32,
    ) -> Result<Table, SourceError> {
        let mut b = Builder::new(Path::new("d.xlsx"), "s", Bounds::from_row(header_row));
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
        let mut b = Builder::new(Path::new("d.xlsx"), "s", Bounds::from_row(1));
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
}
