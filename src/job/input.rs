//! The `[input]` table: which file, which cells of it, and how to read them.

use std::path::PathBuf;

use serde::Deserialize;

use crate::period::{month_of_name, DateOrder, LabelRules};

/// The limits of the pre-scan; each can be raised in the job's `[input]`
/// table (`max_cells`, `max_shared_strings`, `max_uncompressed_mb`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Limits {
    /// Cells a sheet's declared dimension may span (rows × columns).
    pub cells: u64,
    /// Shared strings the workbook may declare.
    pub shared_strings: u64,
    /// Total uncompressed size of the zip's parts, in MiB.
    pub uncompressed_mb: u64,
}

impl Default for Limits {
    /// 100 million cells (a full-height sheet of 95 columns), 20 million
    /// shared strings, 4 GiB uncompressed: far beyond real business
    /// workbooks, well below what would exhaust a 24 GiB machine.
    fn default() -> Self {
        Limits {
            cells: 100_000_000,
            shared_strings: 20_000_000,
            uncompressed_mb: 4096,
        }
    }
}

/// The `[input]` table.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct InputFile {
    /// The workbook or CSV file, relative to the job file.
    pub workbook: PathBuf,
    /// Sheet name; the first sheet when absent.
    pub sheet: Option<String>,
    /// Row holding the column names, counted from 1; default 1.
    #[serde(default, deserialize_with = "row_number")]
    pub header_row: Option<u32>,
    /// Raise the pre-scan's limit on the cells a sheet may declare.
    pub max_cells: Option<u64>,
    /// Raise the pre-scan's limit on declared shared strings.
    pub max_shared_strings: Option<u64>,
    /// Raise the pre-scan's limit on the unpacked size, in MiB.
    pub max_uncompressed_mb: Option<u64>,
    /// Most levels a categorical column may have; default
    /// [`DEFAULT_MAX_LEVELS`].
    pub max_levels: Option<usize>,
    /// `true`: levels that differ only in case or inner spaces ("North",
    /// "north") are different levels; by default they stop the job.
    pub case_sensitive_levels: Option<bool>,
    /// A worksheet table by name: its header and data rows, never its
    /// totals row.
    pub table: Option<String>,
    /// A rectangle such as "B5:H200" whose first row is the header.
    pub range: Option<String>,
    /// What to do with total or average rows inside the data: "stop"
    /// (default), "leave_out" or "keep".
    pub summary_rows: Option<String>,
    /// "read": numbers stored as text are read as numbers.
    pub text_numbers: Option<String>,
    /// CSV: the field separator, `,` `;` `|` or a tab; told from the
    /// header line when absent.
    pub separator: Option<String>,
    /// CSV: the decimal mark, "." (default) or ",".
    pub decimal: Option<String>,
    /// CSV: "utf-8" or "windows-1252"; UTF-8 unless the file is not valid
    /// UTF-8.
    pub encoding: Option<String>,
    /// "dmy" or "mdy": how dates written with slashes (03/04/2024) read.
    pub date_order: Option<String>,
    /// The month the fiscal year starts in ("Apr"): fiscal labels
    /// ("FY2025 P03") and fiscal seasons.
    pub fiscal_year_start: Option<String>,
}

/// `header_row = 1`: a whole number; text or a fraction is refused with a
/// message saying what to write.
pub(super) fn row_number<'de, D: serde::Deserializer<'de>>(d: D) -> Result<Option<u32>, D::Error> {
    #[derive(Deserialize)]
    #[serde(
        untagged,
        expecting = "the number of the row holding the column names, counted from 1, written as a whole number such as 1 (without quotes)"
    )]
    enum Row {
        Number(u32),
    }
    let Row::Number(row) = Row::deserialize(d)?;
    Ok(Some(row))
}

/// Where in the sheet the data is.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Area {
    /// Everything from the header row down (`header_row`, default 1).
    Sheet {
        /// The row holding the column names, counted from 1.
        header_row: u32,
    },
    /// A rectangle whose first row holds the column names (`range`).
    Range(CellRange),
    /// A worksheet table by name, from whichever sheet holds it (`table`).
    Table(String),
}

/// A rectangle of cells, such as B5:H200.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct CellRange {
    /// First row, counted from 1.
    pub first_row: u32,
    /// Last row, counted from 1.
    pub last_row: u32,
    /// First column, counted from 0 (A = 0).
    pub first_col: u32,
    /// Last column, counted from 0.
    pub last_col: u32,
}

impl CellRange {
    /// The range written in A1 form ("B5:H200"); `None` for anything else.
    pub fn parse(text: &str) -> Option<CellRange> {
        let (a, b) = text.trim().split_once(':')?;
        let (first_row, first_col) = cell(a)?;
        let (last_row, last_col) = cell(b)?;
        (first_row <= last_row && first_col <= last_col).then_some(CellRange {
            first_row,
            last_row,
            first_col,
            last_col,
        })
    }
}

/// Row (from 1) and column (from 0) of an A1 cell reference such as "$B$5".
fn cell(text: &str) -> Option<(u32, u32)> {
    let text = text.trim().replace('$', "");
    let letters: String = text.chars().take_while(char::is_ascii_alphabetic).collect();
    if letters.is_empty() || letters.len() > 3 {
        return None;
    }
    let row: u32 = text[letters.len()..].parse().ok()?;
    let col = letters
        .to_ascii_uppercase()
        .bytes()
        .fold(0u32, |acc, b| acc * 26 + u32::from(b - b'A' + 1));
    ((1..=1_048_576).contains(&row) && col <= 16_384).then_some((row, col - 1))
}

/// What to do with a summary row (a total, subtotal or average) inside the
/// data.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SummaryRows {
    /// Stop the job, naming the row (the default).
    Stop,
    /// Leave the row out and list it in the report.
    LeaveOut,
    /// Fit the row as data: for a level that is truly called "Total".
    Keep,
}

/// The character set of a CSV file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Encoding {
    /// UTF-8, with or without a byte-order mark, unless the bytes are not
    /// valid UTF-8; then Windows-1252.
    Detect,
    /// UTF-8, with or without a byte-order mark.
    Utf8,
    /// Windows-1252 (the usual "ANSI" code page of Western Europe).
    Windows1252,
}

/// How a CSV file is written; by default told from the file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct CsvFormat {
    /// The field separator; told from the header line when `None`.
    pub separator: Option<u8>,
    /// Whether the decimal mark is a comma (and a dot separates thousands).
    pub decimal_comma: bool,
    /// The character set.
    pub encoding: Encoding,
}

impl Default for CsvFormat {
    fn default() -> Self {
        CsvFormat {
            separator: None,
            decimal_comma: false,
            encoding: Encoding::Detect,
        }
    }
}

/// How the input is read: the area, summary rows, text numbers and the
/// CSV format.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Reading {
    /// Where the data is.
    pub area: Area,
    /// What to do with summary rows.
    pub summary_rows: SummaryRows,
    /// Whether numbers stored as text are read as numbers.
    pub text_numbers: bool,
    /// How a CSV input is written.
    pub csv: CsvFormat,
    /// How period labels read: the order of slash dates and the fiscal
    /// year.
    pub labels: LabelRules,
}

impl Reading {
    /// The reading of a checked `[input]` table: (key, message) for a
    /// value the job file must change.
    pub fn of(input: &InputFile, is_csv: bool) -> Result<Reading, (&'static str, String)> {
        let area = match (&input.table, &input.range, input.header_row) {
            (Some(_), Some(_), _) => {
                return Err((
                    "input.range",
                    "`table` and `range` both say where the data is; keep one".into(),
                ))
            }
            (Some(_), None, Some(_)) | (None, Some(_), Some(_)) => {
                return Err((
                    "input.header_row",
                    "a `table` or `range` starts with its header row; remove `header_row`".into(),
                ))
            }
            (Some(name), None, None) => {
                if is_csv {
                    return Err((
                        "input.table",
                        "the input is a CSV file, which has no worksheet tables; give its cells with `range = \"A1:F200\"` instead".into(),
                    ));
                }
                if input.sheet.is_some() {
                    return Err((
                        "input.sheet",
                        "a worksheet table is found on whichever sheet holds it; remove `sheet`"
                            .into(),
                    ));
                }
                let name = name.trim();
                if name.is_empty() {
                    return Err(("input.table", "is empty; name the worksheet table".into()));
                }
                Area::Table(name.to_string())
            }
            (None, Some(text), None) => Area::Range(CellRange::parse(text).ok_or_else(|| {
                (
                    "input.range",
                    format!("'{text}' is not a range of cells; write its top-left and bottom-right cells, such as \"B5:H200\" (the first row holds the column names)"),
                )
            })?),
            (None, None, header_row) => {
                let header_row = header_row.unwrap_or(1);
                if header_row == 0 {
                    return Err((
                        "input.header_row",
                        "rows are counted from 1; use 1 for the first row".into(),
                    ));
                }
                Area::Sheet { header_row }
            }
        };
        if let Area::Range(r) = area {
            if r.first_row == r.last_row {
                return Err((
                    "input.range",
                    "holds only the header row; extend it down over the data rows".into(),
                ));
            }
        }
        let summary_rows = match input.summary_rows.as_deref().map(str::trim) {
            None | Some("stop") => SummaryRows::Stop,
            Some("leave_out") => SummaryRows::LeaveOut,
            Some("keep") => SummaryRows::Keep,
            Some(other) => {
                return Err((
                    "input.summary_rows",
                    format!("'{other}' is not a choice; use \"stop\" (the default), \"leave_out\" or \"keep\""),
                ))
            }
        };
        let text_numbers = match input.text_numbers.as_deref().map(str::trim) {
            None => false,
            Some("read") => true,
            Some(other) => {
                return Err((
                    "input.text_numbers",
                    format!("'{other}' is not a choice; write text_numbers = \"read\" to read numbers stored as text, or leave the key out"),
                ))
            }
        };
        Ok(Reading {
            area,
            summary_rows,
            text_numbers,
            csv: csv_format(input, is_csv)?,
            labels: LabelRules {
                date_order: match input.date_order.as_deref() {
                    None => None,
                    Some(text) => Some(DateOrder::parse(text).ok_or_else(|| {
                        (
                            "input.date_order",
                            format!("'{text}' is not an order; write \"dmy\" (03/04/2024 is 3 April) or \"mdy\" (03/04/2024 is March 4)"),
                        )
                    })?),
                },
                fiscal_start: match input.fiscal_year_start.as_deref() {
                    None => 0,
                    Some(text) => month_of_name(text.trim())
                        .and_then(|m| u8::try_from(m).ok())
                        .ok_or_else(|| {
                            (
                                "input.fiscal_year_start",
                                format!("'{text}' is not a month; write the month the fiscal year starts in, such as \"Apr\""),
                            )
                        })?,
                },
            },
        })
    }

    /// The header row of the data: `header_row`, or the first row of the
    /// range; 1 for a table, which is found when the file is read.
    pub fn header_row(&self) -> u32 {
        match &self.area {
            Area::Sheet { header_row } => *header_row,
            Area::Range(r) => r.first_row,
            Area::Table(_) => 1,
        }
    }
}

/// The CSV keys of `input`, refused for a workbook.
fn csv_format(input: &InputFile, is_csv: bool) -> Result<CsvFormat, (&'static str, String)> {
    if !is_csv {
        for (key, value) in [
            ("input.separator", &input.separator),
            ("input.decimal", &input.decimal),
            ("input.encoding", &input.encoding),
        ] {
            if value.is_some() {
                return Err((
                    key,
                    "applies to CSV files only; a workbook stores numbers as numbers (for numbers typed as text use `text_numbers = \"read\"`)".into(),
                ));
            }
        }
    }
    let separator = match input.separator.as_deref() {
        None => None,
        Some(",") => Some(b','),
        Some(";") => Some(b';'),
        Some("|") => Some(b'|'),
        Some("\t" | "tab") => Some(b'\t'),
        Some(other) => {
            return Err((
                "input.separator",
                format!("'{other}' is not a separator the tool reads; use \",\", \";\", \"|\" or \"\\t\" (a tab)"),
            ))
        }
    };
    let decimal_comma = match input.decimal.as_deref() {
        None | Some(".") => false,
        Some(",") => true,
        Some(other) => {
            return Err((
                "input.decimal",
                format!("'{other}' is not a decimal mark; use \".\" (the default) or \",\""),
            ))
        }
    };
    if decimal_comma && separator == Some(b',') {
        return Err((
            "input.decimal",
            "a decimal comma needs another separator; files with decimal commas separate fields with \";\" (set `separator = \";\"` or leave it out to have it told from the header line)".into(),
        ));
    }
    let encoding = match input
        .encoding
        .as_deref()
        .map(str::to_ascii_lowercase)
        .as_deref()
    {
        None => Encoding::Detect,
        Some("utf-8" | "utf8") => Encoding::Utf8,
        Some("windows-1252" | "cp1252" | "latin-1" | "latin1" | "iso-8859-1") => {
            Encoding::Windows1252
        }
        Some(other) => {
            return Err((
                "input.encoding",
                format!(
                "'{other}' is not an encoding the tool reads; use \"utf-8\" or \"windows-1252\""
            ),
            ))
        }
    };
    Ok(CsvFormat {
        separator,
        decimal_comma,
        encoding,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ranges_read_in_a1_form() {
        assert_eq!(
            CellRange::parse("B5:H200"),
            Some(CellRange {
                first_row: 5,
                last_row: 200,
                first_col: 1,
                last_col: 7
            })
        );
        assert_eq!(CellRange::parse("$a$1:$AA$3").map(|r| r.last_col), Some(26));
        for bad in ["B5", "H200:B5", "5B:H200", "B0:H2", "", "B5:"] {
            assert_eq!(CellRange::parse(bad), None, "{bad}");
        }
    }
}
