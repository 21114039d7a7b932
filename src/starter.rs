//! A starter job written from a first look at the data (`sheetfit init
//! --from`): where the data is (a worksheet table, or the sheet's header row
//! below any title block), summary rows and numbers stored as text, each
//! column's kind, and the role each could play. The response is left for
//! the user to choose, pre-filled and clearly marked, so that `sheetfit
//! check` accepts the job as written.

use std::collections::BTreeSet;
use std::fmt::Write as _;
use std::path::Path;

use crate::job::{Area, CsvFormat, Limits, Reading, SummaryRows};
use crate::period::{detect_frequency, parse_stamp};
use crate::source::screen::screen;
use crate::source::{column_letters, read_number, FirstRows, Input, SourceError, Table, Value};

/// Rows looked at to find the header row.
const LOOK_AT_ROWS: u32 = 30;

/// A text column with at most this many levels (and fewer than half as
/// many as rows) is suggested as categorical; one with more is an
/// identifier.
const MOST_LEVELS: usize = 20;

/// Share of a column's cells that must be of one kind for it to be called
/// that kind.
const KIND_SHARE: f64 = 0.9;

/// What a column holds.
#[derive(Debug, Clone, PartialEq)]
enum Kind {
    /// Numbers (`text` of them stored as text).
    Numbers { text: usize },
    /// Text, with its distinct values.
    Text { levels: BTreeSet<String> },
    /// Dates or period labels, with the frequency told from them.
    Dates { frequency: Option<&'static str> },
}

/// The job file text for the data at `data`, which the job names as
/// `data_in_job` (relative to the job file).
///
/// # Errors
/// [`SourceError`] when the file cannot be read.
pub fn starter_job(data: &Path, data_in_job: &str) -> Result<String, SourceError> {
    let input = Input::open(data)?;
    let limits = Limits::default();
    let tables = input.worksheet_tables()?;
    let mut text = String::new();
    let stem = data
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "data".into());
    let _ = writeln!(
        text,
        "# A sheetfit job written by `sheetfit init --from` from a first look at {}.\n\
         # Check it with `sheetfit check <this file>`, run it with `sheetfit run <this file>`.\n\
         # Paths are relative to this file. Every choice below is a suggestion: read it.\n\
         \ntitle = \"{}\"\n\n[input]\nworkbook = \"{}\"",
        data.display(),
        escape(&stem),
        escape(data_in_job)
    );
    let (mut table, area) = match tables.first() {
        Some(first) => {
            let _ = writeln!(
                text,
                "table = \"{}\"                # worksheet table {first}",
                escape(&first.name)
            );
            for other in &tables[1..] {
                let _ = writeln!(
                    text,
                    "# table = \"{}\"            # or {other}",
                    escape(&other.name)
                );
            }
            let area = Area::Table(first.name.clone());
            (input.read_area(None, &area, &limits)?, area)
        }
        None => {
            let FirstRows {
                sheets,
                sheet,
                rows,
            } = input.first_rows(None, LOOK_AT_ROWS)?;
            let header_row = header_row(&rows);
            if !sheets.is_empty() {
                let _ = writeln!(text, "sheet = \"{}\"", escape(&sheet));
                if sheets.len() > 1 {
                    let others: Vec<String> =
                        sheets[1..].iter().map(|s| format!("'{s}'")).collect();
                    let _ = writeln!(text, "# its other sheets: {}", others.join(", "));
                }
            }
            let note = if header_row > 1 {
                format!(
                    "    # the column names; rows 1-{} above look like a title block",
                    header_row - 1
                )
            } else {
                "    # the row with the column names".to_string()
            };
            let _ = writeln!(text, "header_row = {header_row}{note}");
            let area = Area::Sheet { header_row };
            let sheet = (!sheets.is_empty()).then_some(sheet);
            (input.read_area(sheet.as_deref(), &area, &limits)?, area)
        }
    };
    let kinds: Vec<(String, Kind)> = table
        .columns
        .iter()
        .filter_map(|c| kind(&table, &c.name).map(|k| (c.name.clone(), k)))
        .collect();
    let numeric: Vec<&str> = kinds
        .iter()
        .filter(|(_, k)| matches!(k, Kind::Numbers { .. }))
        .map(|(n, _)| n.as_str())
        .collect();
    let all: Vec<&str> = kinds.iter().map(|(n, _)| n.as_str()).collect();
    let text_numbers = kinds
        .iter()
        .any(|(_, k)| matches!(k, Kind::Numbers { text } if *text > 0));
    let reading = Reading {
        area,
        summary_rows: SummaryRows::LeaveOut,
        text_numbers,
        csv: CsvFormat::default(),
        labels: Default::default(),
    };
    if let Ok(screened) = screen(&mut table, &all, &numeric, &reading) {
        if let Some(first) = screened.summary_rows_left_out.first() {
            let rows: Vec<String> = screened
                .summary_rows_left_out
                .iter()
                .map(|r| r.row.to_string())
                .collect();
            let _ = writeln!(
                text,
                "summary_rows = \"leave_out\"   # rows {} look like summary rows, not data ({})",
                rows.join(", "),
                first.reason
            );
        }
    }
    if text_numbers {
        let columns: Vec<&str> = kinds
            .iter()
            .filter(|(_, k)| matches!(k, Kind::Numbers { text } if *text > 0))
            .map(|(n, _)| n.as_str())
            .collect();
        let _ = writeln!(
            text,
            "text_numbers = \"read\"        # numbers stored as text in {}",
            columns.join(", ")
        );
    }
    text.push_str("\n# The columns found:\n");
    for column in &table.columns {
        let Some((_, k)) = kinds.iter().find(|(n, _)| *n == column.name) else {
            let _ = writeln!(
                text,
                "#   {} '{}': blank",
                column_letters(column.col),
                column.name
            );
            continue;
        };
        let _ = writeln!(
            text,
            "#   {} '{}': {}",
            column_letters(column.col),
            column.name,
            describe(k)
        );
    }
    text.push_str(&model_text(&kinds, table.rows.len()));
    Ok(text)
}

/// The `[[model]]` table: the response pre-filled and marked, numeric and
/// categorical predictors, and the date roles as comments.
fn model_text(kinds: &[(String, Kind)], rows: usize) -> String {
    let numeric: Vec<&str> = kinds
        .iter()
        .filter(|(_, k)| matches!(k, Kind::Numbers { .. }))
        .map(|(n, _)| n.as_str())
        .collect();
    let mut text = String::from("\n[[model]]\nname = \"model 1\"\n");
    let response = numeric
        .first()
        .copied()
        .unwrap_or("CHOOSE A COLUMN OF NUMBERS");
    let _ = writeln!(
        text,
        "# CHOOSE the response, the number to explain. It is pre-filled with the first\n\
         # column of numbers; to explain another, write its name here and swap the two\n\
         # names in `numeric`.\nresponse = \"{}\"",
        escape(response)
    );
    let predictors: Vec<String> = numeric
        .iter()
        .skip(1)
        .map(|n| format!("\"{}\"", escape(n)))
        .collect();
    let _ = writeln!(text, "numeric = [{}]", predictors.join(", "));
    let mut categorical = Vec::new();
    let mut identifiers = Vec::new();
    for (name, k) in kinds {
        if let Kind::Text { levels } = k {
            if levels.len() >= 2 && levels.len() <= MOST_LEVELS && levels.len() * 2 <= rows {
                categorical.push(format!("\"{}\"", escape(name)));
            } else if levels.len() >= 2 {
                identifiers.push(format!("{name} ({} levels)", levels.len()));
            }
        }
    }
    if !categorical.is_empty() {
        let _ = writeln!(
            text,
            "categorical = [{}]   # baseline: each column's first level in sorted order",
            categorical.join(", ")
        );
    }
    if !identifiers.is_empty() {
        let _ = writeln!(
            text,
            "# left out, identifiers rather than categories: {}",
            identifiers.join(", ")
        );
    }
    for (name, k) in kinds {
        if let Kind::Dates { frequency } = k {
            let by = match *frequency {
                Some("quarter") => Some("quarter"),
                Some("day" | "week" | "month") => Some("month"),
                _ => None,
            };
            let _ = writeln!(
                text,
                "# trend = \"{}\"                 # a trend over the periods of this date column",
                escape(name)
            );
            if let Some(by) = by {
                let _ = writeln!(
                    text,
                    "# season = {{ column = \"{}\", by = \"{by}\" }}",
                    escape(name)
                );
            }
            let _ = writeln!(
                text,
                "# [model.forecast]\n# horizon = 12                # with trend: forecast the periods after the data\n# hold = {{ }}                  # a value for each predictor in the forecast"
            );
            break;
        }
    }
    text
}

/// The header row (from 1) among the first rows of a sheet: the first row
/// of two or more cells, all text, above a row of two or more cells; 1
/// when there is none.
fn header_row(rows: &[Vec<Value>]) -> u32 {
    let filled = |row: &Vec<Value>| row.iter().filter(|v| **v != Value::Blank).count();
    for (r, row) in rows.iter().enumerate() {
        let all_text = row
            .iter()
            .all(|v| matches!(v, Value::Blank | Value::Text(_)));
        if filled(row) >= 2 && all_text && rows.get(r + 1).is_some_and(|next| filled(next) >= 2) {
            return r as u32 + 1;
        }
    }
    1
}

/// The kind of the column called `name`; `None` when it is blank.
fn kind(table: &Table, name: &str) -> Option<Kind> {
    let column = table.column(name)?;
    let (mut numbers, mut text_numbers, mut dates, mut filled) = (0usize, 0usize, 0usize, 0usize);
    let mut stamps = Vec::new();
    let mut levels = BTreeSet::new();
    for v in column.values.iter() {
        match &v {
            Value::Blank => continue,
            Value::Number(_) => numbers += 1,
            Value::Date(t) => {
                dates += 1;
                stamps.extend(parse_stamp(t));
            }
            Value::Text(t) => {
                if let Some(stamp) = parse_stamp(t) {
                    dates += 1;
                    stamps.push(stamp);
                } else if read_number(t, false).is_some() {
                    text_numbers += 1;
                }
                levels.insert(t.to_string());
            }
            _ => {}
        }
        filled += 1;
    }
    if filled == 0 {
        return None;
    }
    let share = |n: usize| n as f64 >= KIND_SHARE * filled as f64;
    Some(if share(dates) {
        let frequency = match detect_frequency(&stamps) {
            Ok(Some(f)) => Some(f.name()),
            _ => None,
        };
        Kind::Dates { frequency }
    } else if share(numbers + text_numbers) && numbers > 0 {
        Kind::Numbers { text: text_numbers }
    } else {
        Kind::Text { levels }
    })
}

/// A column's kind in words.
fn describe(kind: &Kind) -> String {
    match kind {
        Kind::Numbers { text: 0 } => "numbers".into(),
        Kind::Numbers { text } => format!("numbers ({text} stored as text)"),
        Kind::Dates { frequency: Some(f) } => format!("dates, one {f} apart"),
        Kind::Dates { frequency: None } => "dates".into(),
        Kind::Text { levels } => {
            let shown: Vec<&str> = levels.iter().take(6).map(String::as_str).collect();
            let more = if levels.len() > shown.len() {
                ", ..."
            } else {
                ""
            };
            format!("text, {} levels ({}{more})", levels.len(), shown.join(", "))
        }
    }
}

/// `text` with backslashes and quotes escaped for a TOML basic string.
fn escape(text: &str) -> String {
    text.replace('\\', "\\\\").replace('"', "\\\"")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_header_row_is_found_below_a_title_block() {
        let t = |s: &str| Value::text(s);
        let rows = vec![
            vec![t("Sales report")],
            vec![t("Invented data")],
            vec![],
            vec![t("month"), t("region"), t("revenue")],
            vec![t("2024-01"), t("North"), Value::Number(3.0)],
        ];
        assert_eq!(header_row(&rows), 4);
        assert_eq!(header_row(&rows[3..]), 1);
        assert_eq!(header_row(&[]), 1);
    }
}
