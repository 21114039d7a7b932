//! CSV files, read with the csv crate into the same table as a sheet.
//!
//! Files are read as Europe and America write them: UTF-8 with or without
//! a byte-order mark, or Windows-1252 when the bytes are not valid UTF-8 (or
//! the job says so); fields separated by a comma, semicolon, tab or bar,
//! told from the header line unless the job names one; and a decimal comma
//! when the job says `decimal = ","`.

use std::borrow::Cow;
use std::fs::File;
use std::io::Read;
use std::path::Path;

use super::table::{Bounds, Builder, Table};
use super::text_number::plain_number;
use super::workbook::text_value;
use super::{SourceError, Value};
use crate::job::{CsvFormat, Encoding};

/// Separators told from the header line, in order of preference on a tie.
const SEPARATORS: [u8; 4] = [b',', b';', b'\t', b'|'];

/// Reads the CSV file open in `file`, its cells within `bounds`, as
/// `format` says it is written.
pub(super) fn read_csv(
    path: &Path,
    mut file: &File,
    bounds: Bounds,
    format: &CsvFormat,
) -> Result<Table, SourceError> {
    let open_err = |reason: String| SourceError::Open {
        path: path.to_path_buf(),
        reason,
    };
    let mut bytes = Vec::new();
    file.read_to_end(&mut bytes)
        .map_err(|e| open_err(format!("it cannot be read ({e})")))?;
    let text = decode(&bytes, format.encoding).ok_or_else(|| {
        open_err(
            "it is not valid UTF-8; if it was saved as Windows-1252 (\"ANSI\"), write `encoding = \"windows-1252\"` under [input]"
                .into(),
        )
    })?;
    let separator = format
        .separator
        .unwrap_or_else(|| detect_separator(header_line(&text, bounds.header_row)));
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .delimiter(separator)
        .from_reader(text.as_bytes());
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let mut builder = Builder::new(path, &name, bounds);
    for (r, record) in reader.records().enumerate() {
        let record = record.map_err(|e| open_err(format!("it is not readable CSV ({e})")))?;
        for (c, field) in record.iter().enumerate() {
            let value = match text_value(field) {
                Value::Text(t) => {
                    plain_number(&t, format.decimal_comma).map_or(Value::Text(t), Value::Number)
                }
                other => other,
            };
            builder.push(r as u32, c as u32, value)?;
        }
    }
    let table = builder.finish()?;
    if let [only] = table.columns.as_slice() {
        if let Some(&other) = SEPARATORS
            .iter()
            .find(|&&s| s != separator && only.name.as_bytes().contains(&s))
        {
            return Err(SourceError::Open {
                path: path.to_path_buf(),
                reason: format!(
                    "its header reads as one column named '{}', which holds {}; write `separator = \"{}\"` under [input]",
                    only.name,
                    describe(other),
                    if other == b'\t' { "\\t".to_string() } else { (other as char).to_string() }
                ),
            });
        }
    }
    Ok(table)
}

/// The text of `bytes`: UTF-8 without its byte-order mark, or Windows-1252
/// when the encoding says so or (when detecting) the bytes are not UTF-8;
/// `None` for invalid UTF-8 when UTF-8 was asked for.
fn decode(bytes: &[u8], encoding: Encoding) -> Option<Cow<'_, str>> {
    let utf8 = bytes.strip_prefix(b"\xef\xbb\xbf").unwrap_or(bytes);
    match encoding {
        Encoding::Windows1252 => Some(
            encoding_rs::WINDOWS_1252
                .decode_without_bom_handling(bytes)
                .0,
        ),
        Encoding::Utf8 => std::str::from_utf8(utf8).ok().map(Cow::Borrowed),
        Encoding::Detect => Some(match std::str::from_utf8(utf8) {
            Ok(text) => Cow::Borrowed(text),
            Err(_) => {
                encoding_rs::WINDOWS_1252
                    .decode_without_bom_handling(bytes)
                    .0
            }
        }),
    }
}

/// Line `row` (from 1) of `text`, or the first line when there are fewer.
fn header_line(text: &str, row: u32) -> &str {
    let mut lines = text.lines();
    let first = lines.clone().next().unwrap_or("");
    lines.nth(row.saturating_sub(1) as usize).unwrap_or(first)
}

/// The separator that occurs most often outside quotes in `line`; a comma
/// when none occurs.
fn detect_separator(line: &str) -> u8 {
    let mut counts = [0usize; SEPARATORS.len()];
    let mut quoted = false;
    for b in line.bytes() {
        if b == b'"' {
            quoted = !quoted;
        } else if !quoted {
            if let Some(k) = SEPARATORS.iter().position(|&s| s == b) {
                counts[k] += 1;
            }
        }
    }
    let best = (0..SEPARATORS.len())
        .max_by_key(|&k| (counts[k], std::cmp::Reverse(k)))
        .unwrap_or(0);
    if counts[best] == 0 {
        b','
    } else {
        SEPARATORS[best]
    }
}

fn describe(separator: u8) -> &'static str {
    match separator {
        b';' => "semicolons",
        b'\t' => "tabs",
        b'|' => "bars",
        _ => "commas",
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_separator_is_told_from_the_header_line() {
        assert_eq!(detect_separator("Region;Revenue;Cost"), b';');
        assert_eq!(detect_separator("a\tb\tc"), b'\t');
        assert_eq!(detect_separator("\"x;y\",b,c"), b',');
        assert_eq!(detect_separator("single"), b',');
        assert_eq!(detect_separator("a,b;c"), b',');
    }

    #[test]
    fn windows_1252_is_read_when_the_bytes_are_not_utf8() {
        let bytes = b"Filiale;Umsatz\nK\xf6ln;12,5\n";
        assert_eq!(
            decode(bytes, Encoding::Detect).unwrap(),
            "Filiale;Umsatz\nKöln;12,5\n"
        );
        assert!(decode(bytes, Encoding::Utf8).is_none());
        assert_eq!(decode(b"\xef\xbb\xbfa,b", Encoding::Detect).unwrap(), "a,b");
    }
}
