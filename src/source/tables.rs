//! Worksheet tables of .xlsx and .xlsm files: where each one's header, data
//! and totals rows are.
//!
//! The table parts (`xl/tables/*.xml`) are read here, their `ref`,
//! `headerRowCount` and `totalsRowCount` taken as the file states them, so
//! a table's totals row is never read as data; the workbook reader says
//! which sheet holds each table.

use std::fs::File;
use std::io::Read;

use super::guard::attribute;
use crate::job::CellRange;

/// One worksheet table.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct WorksheetTable {
    /// The table's name.
    pub name: String,
    /// The sheet that holds it.
    pub sheet: String,
    /// Its whole rectangle: header rows, data rows and totals rows.
    pub range: CellRange,
    /// Header rows at the top of the rectangle (1, or 0 for a table
    /// without one).
    pub header_rows: u32,
    /// Totals rows at the bottom of the rectangle.
    pub totals_rows: u32,
}

impl WorksheetTable {
    /// The data rows, first and last (from 1); `None` when there are none.
    pub fn data_rows(&self) -> Option<(u32, u32)> {
        let first = self.range.first_row + self.header_rows;
        let last = self.range.last_row.checked_sub(self.totals_rows)?;
        (first <= last).then_some((first, last))
    }
}

impl std::fmt::Display for WorksheetTable {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let r = &self.range;
        write!(
            f,
            "'{}' on sheet '{}', {}{}:{}{}",
            self.name,
            self.sheet,
            super::column_letters(r.first_col),
            r.first_row,
            super::column_letters(r.last_col),
            r.last_row
        )?;
        match self.totals_rows {
            0 => Ok(()),
            1 => write!(f, " (totals row {} not read)", r.last_row),
            n => write!(
                f,
                " (totals rows {}-{} not read)",
                r.last_row + 1 - n,
                r.last_row
            ),
        }
    }
}

/// The name, rectangle and header and totals row counts of each table part
/// in the zip archive open in `file`; the sheet is left empty for the
/// workbook reader to fill. Parts that cannot be read are skipped.
pub(super) fn table_parts(file: &File) -> Vec<WorksheetTable> {
    let Ok(mut archive) = zip::ZipArchive::new(file) else {
        return Vec::new();
    };
    let names: Vec<String> = archive
        .file_names()
        .filter_map(|n| n.ok().map(|n| n.into_owned()))
        .filter(|n| n.starts_with("xl/tables/") && n.ends_with(".xml"))
        .collect();
    let mut tables = Vec::new();
    for name in names {
        let Ok(entry) = archive.by_name(&name) else {
            continue;
        };
        // A table part is a few hundred bytes a column; the element that
        // matters comes first.
        let mut head = Vec::with_capacity(4096);
        if entry.take(64 * 1024).read_to_end(&mut head).is_err() {
            continue;
        }
        if let Some(table) = table_element(&String::from_utf8_lossy(&head)) {
            tables.push(table);
        }
    }
    tables
}

/// The table described by the `<table>` element of a table part.
fn table_element(xml: &str) -> Option<WorksheetTable> {
    let name =
        attribute(xml, "<table ", "displayName").or_else(|| attribute(xml, "<table ", "name"))?;
    let range = attribute(xml, "<table ", "ref").and_then(|r| CellRange::parse(&r))?;
    let count = |key: &str, default: u32| {
        attribute(xml, "<table ", key)
            .and_then(|v| v.parse().ok())
            .unwrap_or(default)
    };
    Some(WorksheetTable {
        name,
        sheet: String::new(),
        range,
        header_rows: count("headerRowCount", 1),
        totals_rows: count("totalsRowCount", 0),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_table_part_gives_its_rows() {
        let xml = r#"<?xml version="1.0"?><table xmlns="x" id="1" name="Sales" displayName="Sales" ref="B5:H201" totalsRowCount="1"><autoFilter ref="B5:H200"/></table>"#;
        let t = table_element(xml).unwrap();
        assert_eq!(t.name, "Sales");
        assert_eq!((t.header_rows, t.totals_rows), (1, 1));
        assert_eq!(t.data_rows(), Some((6, 200)));
        let xml = r#"<table id="2" name="T2" displayName="Plan" ref="A1:C3" headerRowCount="0"/>"#;
        let t = table_element(xml).unwrap();
        assert_eq!(t.name, "Plan");
        assert_eq!(t.data_rows(), Some((1, 3)));
    }
}
