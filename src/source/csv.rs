//! CSV files, read with the csv crate into the same table as a sheet.

use std::fs::File;
use std::path::Path;

use super::table::{Bounds, Builder, Table};
use super::workbook::text_value;
use super::{SourceError, Value};

pub(super) fn read_csv(path: &Path, file: &File, bounds: Bounds) -> Result<Table, SourceError> {
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
    let mut builder = Builder::new(path, &name, bounds);
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
