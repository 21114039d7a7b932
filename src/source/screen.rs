//! Screening the table before any model sees it.
//!
//! A summary row (a total, subtotal or average typed under or among the
//! data) fitted as data is a wrong answer that nothing downstream can see,
//! so it is looked for here, in one pass over the rows, and stops the job
//! unless the job says what to do with it. A row is a summary row when:
//!
//! 1. a text cell in a column the job uses, or in the first column, reads
//!    as a total or aggregate label ("Total", "Grand total", "Average
//!    2024", "Subtotal North", ...) and that text is rare in its column (at
//!    most 3 rows or 5 % of them; a level such as a price tier called
//!    "Average" is common);
//! 2. it holds such a label, however common, and every number the job
//!    uses in it equals the sum or the mean of the rows since the previous
//!    summary row; or
//! 3. it is among the last three rows and every number the job uses in it
//!    equals the sum or the mean of all the rows above (relative 1e-9),
//!    label or not.
//!
//! A units row directly under the header ("EUR", "count" in columns of
//! numbers) is found the same way. Numbers stored as text are read here
//! when the job says so (`text_numbers = "read"`), and otherwise stop the
//! job with a count per column, since a driver typed as text is not a
//! category.

use super::text_number::read_number;
use super::{CellRef, Cells, SourceError, Table, Value};
use crate::job::{Reading, SummaryRows};

/// Words that mark a summary label, matched as whole words in any case.
const SUMMARY_WORDS: [&str; 16] = [
    "total",
    "totals",
    "subtotal",
    "subtotals",
    "sum",
    "average",
    "avg",
    "mean",
    "median",
    "min",
    "minimum",
    "max",
    "maximum",
    "count",
    "grandtotal",
    "overall",
];

/// Rows at the bottom that may be summary rows without a label.
const BOTTOM_ROWS: usize = 3;

/// Relative tolerance of "equals the sum or the mean".
const SUMMARY_TOLERANCE: f64 = 1e-9;

/// A row left out of every model before any was built.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct LeftOutRow {
    /// Sheet row, counted from 1.
    pub row: u32,
    /// Why, in words: the cells and the rule.
    pub reason: String,
}

/// A column whose numbers stored as text were read.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct TextNumbers {
    /// The column.
    pub column: String,
    /// Cells read.
    pub cells: usize,
}

/// What screening did to the table.
#[derive(Debug, Clone, Default, PartialEq, serde::Serialize)]
pub struct Screened {
    /// Summary and units rows left out (`summary_rows = "leave_out"`).
    pub summary_rows_left_out: Vec<LeftOutRow>,
    /// Columns whose text numbers were read (`text_numbers = "read"`).
    pub text_numbers_read: Vec<TextNumbers>,
}

/// Screens `table` for the columns a job uses (`used`, of which `numeric`
/// must hold numbers) under the job's `reading`, reading text numbers and
/// leaving out summary rows where it says so.
///
/// # Errors
/// [`SourceError::SummaryRows`] for a summary or units row the job does
/// not say what to do with; [`SourceError::TextNumbers`] for text in
/// columns of numbers without `text_numbers = "read"`.
pub fn screen(
    table: &mut Table,
    used: &[&str],
    numeric: &[&str],
    reading: &Reading,
) -> Result<Screened, SourceError> {
    let numeric: Vec<usize> = column_indices(table, numeric);
    let mut labelled: Vec<usize> = column_indices(table, used);
    if !table.columns.is_empty() && !labelled.contains(&0) {
        labelled.push(0);
    }
    let mut screened = Screened::default();
    if reading.summary_rows != SummaryRows::Keep {
        let found = summary_rows(table, &labelled, &numeric, reading);
        if !found.is_empty() {
            if reading.summary_rows == SummaryRows::Stop {
                return Err(SourceError::SummaryRows {
                    place: table.place(),
                    first: found[0].reason.clone(),
                    more: match found.len() {
                        1 => String::new(),
                        n => format!(
                            " ({} more: rows {})",
                            n - 1,
                            crate::text::row_ranges(
                                &found[1..].iter().map(|f| f.row).collect::<Vec<_>>()
                            )
                        ),
                    },
                    units: found[0].reason.starts_with("a units row"),
                });
            }
            let rows: std::collections::HashSet<u32> = found.iter().map(|f| f.row).collect();
            table.remove_rows(|row| rows.contains(&row));
            screened.summary_rows_left_out = found;
        }
    }
    let decimal_comma = reading.csv.decimal_comma;
    let texts = text_in_numbers(table, &numeric, decimal_comma);
    if texts.is_empty() {
        return Ok(screened);
    }
    let is_csv = table
        .path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("csv"));
    let fix = if is_csv
        && !decimal_comma
        && texts
            .iter()
            .all(|t| t.unreadable == t.count && t.other_mark_reads == t.count)
    {
        Some("they read as numbers with a decimal comma: write `decimal = \",\"` under [input]")
    } else if !reading.text_numbers && texts.iter().all(|t| t.unreadable == 0) {
        Some("write `text_numbers = \"read\"` under [input] to read them as numbers")
    } else if !reading.text_numbers {
        Some("correct the cells that are not numbers (or clear them to leave their rows out); `text_numbers = \"read\"` under [input] reads the rest")
    } else if texts.iter().any(|t| t.unreadable > 0) {
        Some("correct those cells, or clear them to leave their rows out")
    } else {
        None
    };
    if let Some(fix) = fix {
        return Err(SourceError::TextNumbers {
            place: table.place(),
            columns: texts
                .iter()
                .map(|t| t.describe())
                .collect::<Vec<_>>()
                .join("; "),
            fix: fix.to_string(),
        });
    }
    for t in &texts {
        let column = &mut table.columns[t.column];
        column.values = column
            .values
            .iter()
            .map(|v| match &v {
                Value::Text(s) => read_number(s, decimal_comma).map_or(v, Value::Number),
                _ => v,
            })
            .collect();
        screened.text_numbers_read.push(TextNumbers {
            column: column.name.clone(),
            cells: t.count,
        });
    }
    Ok(screened)
}

fn column_indices(table: &Table, names: &[&str]) -> Vec<usize> {
    let mut out: Vec<usize> = table
        .columns
        .iter()
        .enumerate()
        .filter(|(_, c)| names.contains(&c.name.as_str()))
        .map(|(j, _)| j)
        .collect();
    out.dedup();
    out
}

/// Whether `text` reads as a total or aggregate label.
pub fn is_summary_label(text: &str) -> bool {
    text.split(|c: char| !c.is_alphanumeric())
        .filter(|w| !w.is_empty())
        .any(|w| {
            let w = w.to_lowercase();
            SUMMARY_WORDS.contains(&w.as_str())
        })
}

/// The number in cell `i` of `cells`: a number, or text that reads as one
/// when the job reads text numbers.
fn number(cells: &Cells, i: usize, reading: &Reading) -> Option<f64> {
    match cells.get(i) {
        Value::Number(x) if x.is_finite() => Some(x),
        Value::Text(t) if reading.text_numbers => read_number(&t, reading.csv.decimal_comma),
        _ => None,
    }
}

/// The summary rows of `table`, in row order.
fn summary_rows(
    table: &Table,
    labelled: &[usize],
    numeric: &[usize],
    reading: &Reading,
) -> Vec<LeftOutRow> {
    let n = table.rows.len();
    let mut found: Vec<(usize, String)> = Vec::new();
    if let Some(reason) = units_row(table, numeric, reading) {
        found.push((0, reason));
    }
    // Rule 1 and 2: labels, with running sums since the last summary row.
    // Each distinct text is tested once; the rows are then matched by key.
    let label_keys: Vec<Vec<(u64, Value, usize)>> = labelled
        .iter()
        .map(|&j| {
            let values = &table.columns[j].values;
            let mut keys: Vec<(u64, Value, usize)> = values
                .keys_where(|v| matches!(v, Value::Text(t) if is_summary_label(t)))
                .into_iter()
                .map(|(key, value)| (key, value, 0))
                .collect();
            if !keys.is_empty() {
                for i in 0..n {
                    let key = values.key(i);
                    if let Some(entry) = keys.iter_mut().find(|(k, _, _)| *k == key) {
                        entry.2 += 1;
                    }
                }
            }
            keys
        })
        .collect();
    let any_labels = label_keys.iter().any(|keys| !keys.is_empty());
    let rare = (n / 20).max(3);
    let mut group = Sums::new(numeric.len());
    // Only the units row (row 0) is found before the loop; the loop's own
    // finds are behind it.
    let units_found = !found.is_empty();
    for i in 0..n {
        if i == 0 && units_found {
            continue;
        }
        let label = any_labels
            .then(|| {
                labelled.iter().zip(&label_keys).find_map(|(&j, keys)| {
                    let column = &table.columns[j];
                    let key = column.values.key(i);
                    keys.iter()
                        .find(|(k, _, _)| *k == key)
                        .map(|(_, text, count)| (table.cell(column, i), text.clone(), *count))
                })
            })
            .flatten();
        if let Some((cell, text, count)) = label {
            if count <= rare {
                found.push((i, format!("'{text}' in {cell} reads as a summary label")));
                group = Sums::new(numeric.len());
                continue;
            }
            if let Some(what) = group.matched(&row_numbers(table, numeric, i, reading)) {
                found.push((
                    i,
                    format!(
                        "'{text}' in {cell}, and its numbers are the {what} of the rows above it"
                    ),
                ));
                group = Sums::new(numeric.len());
                continue;
            }
        }
        if any_labels {
            group.add_row(table, numeric, i, reading);
        }
    }
    // Rule 3: the last rows, against all the rows above them; the rows
    // above the last few are summed once.
    let mut is_found = vec![false; n];
    for (k, _) in &found {
        is_found[*k] = true;
    }
    let data: Vec<usize> = (0..n).filter(|&i| !is_found[i]).collect();
    let most = BOTTOM_ROWS.min(data.len().saturating_sub(2));
    let mut base = Sums::new(numeric.len());
    for &i in &data[..data.len() - most] {
        base.add_row(table, numeric, i, reading);
    }
    for bottom in 1..=most {
        let (above, tail) = data.split_at(data.len() - bottom);
        let mut sums = base.clone();
        for &i in &above[data.len() - most..] {
            sums.add_row(table, numeric, i, reading);
        }
        let matches: Vec<Option<&'static str>> = tail
            .iter()
            .map(|&i| sums.matched(&row_numbers(table, numeric, i, reading)))
            .collect();
        if matches.iter().all(Option::is_some) {
            for (&i, what) in tail.iter().zip(matches) {
                let cells = numeric
                    .iter()
                    .map(|&j| table.cell(&table.columns[j], i).to_string())
                    .collect::<Vec<_>>()
                    .join(", ");
                found.push((
                    i,
                    format!(
                        "row {}: {cells} hold the {} of the rows above",
                        table.rows[i],
                        what.unwrap_or("sums")
                    ),
                ));
            }
            break;
        }
    }
    found.sort_by_key(|(i, _)| *i);
    found
        .into_iter()
        .map(|(i, reason)| LeftOutRow {
            row: table.rows[i],
            reason: if reason.starts_with("row ") || reason.starts_with("a units row") {
                reason
            } else {
                format!("row {}: {reason}", table.rows[i])
            },
        })
        .collect()
}

/// The numbers of row `i` in the `numeric` columns, `None` where a cell
/// holds none.
fn row_numbers(table: &Table, numeric: &[usize], i: usize, reading: &Reading) -> Vec<Option<f64>> {
    numeric
        .iter()
        .map(|&j| number(&table.columns[j].values, i, reading))
        .collect()
}

/// Running sums, counts and the first value of each numeric column over a
/// group of rows.
#[derive(Clone)]
struct Sums {
    sum: Vec<f64>,
    count: Vec<usize>,
    first: Vec<Option<f64>>,
    varies: Vec<bool>,
}

impl Sums {
    fn new(columns: usize) -> Self {
        Sums {
            sum: vec![0.0; columns],
            count: vec![0; columns],
            first: vec![None; columns],
            varies: vec![false; columns],
        }
    }

    /// Adds row `i` of the `numeric` columns of `table`.
    fn add_row(&mut self, table: &Table, numeric: &[usize], i: usize, reading: &Reading) {
        for (k, &j) in numeric.iter().enumerate() {
            if let Some(x) = number(&table.columns[j].values, i, reading) {
                self.sum[k] += x;
                self.count[k] += 1;
                match self.first[k] {
                    None => self.first[k] = Some(x),
                    Some(f) if f != x => self.varies[k] = true,
                    _ => {}
                }
            }
        }
    }

    /// "sums", "means" or "sums and means" when every number of `values`
    /// equals the sum or the mean of its column over at least two rows, and
    /// at least one of them over rows that differ; `None` otherwise.
    fn matched(&self, values: &[Option<f64>]) -> Option<&'static str> {
        let close = |x: f64, target: f64| {
            (x - target).abs() <= SUMMARY_TOLERANCE * x.abs().max(target.abs())
        };
        let (mut sums, mut means, mut telling) = (false, false, false);
        let mut any = false;
        for (k, v) in values.iter().enumerate() {
            let Some(x) = *v else { continue };
            any = true;
            if self.count[k] < 2 {
                return None;
            }
            let mean = self.sum[k] / self.count[k] as f64;
            if close(x, self.sum[k]) {
                sums = true;
            } else if close(x, mean) {
                means = true;
            } else {
                return None;
            }
            telling |= self.varies[k] && x != 0.0;
        }
        (any && telling).then_some(match (sums, means) {
            (true, true) => "sums and means",
            (false, true) => "means",
            _ => "sums",
        })
    }
}

/// "a units row ..." when the first data row holds, in columns of numbers,
/// only text that does not read as a number while most of those columns'
/// other cells are numbers.
fn units_row(table: &Table, numeric: &[usize], reading: &Reading) -> Option<String> {
    let n = table.rows.len();
    if n < 3 {
        return None;
    }
    let mut units = Vec::new();
    for &j in numeric {
        let column = &table.columns[j];
        match column.values.get(0) {
            Value::Text(t) if read_number(&t, reading.csv.decimal_comma).is_none() => {
                let numbers = (1..n)
                    .filter(|&i| number(&column.values, i, reading).is_some())
                    .count();
                if numbers * 2 > n - 1 {
                    units.push(format!("'{t}' in {}", table.cell(column, 0)));
                }
            }
            Value::Blank | Value::Text(_) => {}
            _ => return None,
        }
    }
    (!units.is_empty()).then(|| {
        format!(
            "a units row under the header: row {} holds {} where numbers belong",
            table.rows[0],
            units.join(", ")
        )
    })
}

/// Text cells of one column of numbers.
struct TextCells {
    column: usize,
    name: String,
    count: usize,
    unreadable: usize,
    /// Cells that would read with the other decimal mark.
    other_mark_reads: usize,
    first: Vec<CellRef>,
}

impl TextCells {
    fn describe(&self) -> String {
        let cells: Vec<String> = self.first.iter().map(ToString::to_string).collect();
        let more = if self.count > self.first.len() {
            ", ..."
        } else {
            ""
        };
        let readable = match self.unreadable {
            0 => "all read as numbers".to_string(),
            u if u == self.count => "none reads as a number".to_string(),
            u => format!("{u} do not read as numbers"),
        };
        format!(
            "column '{}' holds {} text cell{} where numbers belong ({}{more}); {readable}",
            self.name,
            self.count,
            if self.count == 1 { "" } else { "s" },
            cells.join(", ")
        )
    }
}

/// The text cells of each column of numbers that has any that read as
/// numbers (with `decimal_comma` or, for a hint, with the other mark).
fn text_in_numbers(table: &Table, numeric: &[usize], decimal_comma: bool) -> Vec<TextCells> {
    numeric
        .iter()
        .filter_map(|&j| {
            let column = &table.columns[j];
            let mut cells = TextCells {
                column: j,
                name: column.name.clone(),
                count: 0,
                unreadable: 0,
                other_mark_reads: 0,
                first: Vec::new(),
            };
            for (i, v) in column.values.iter().enumerate() {
                if let Value::Text(t) = v {
                    cells.count += 1;
                    if read_number(&t, decimal_comma).is_none() {
                        cells.unreadable += 1;
                    }
                    if read_number(&t, !decimal_comma).is_some() {
                        cells.other_mark_reads += 1;
                    }
                    if cells.first.len() < 3 {
                        cells.first.push(table.cell(column, i));
                    }
                }
            }
            // Text that reads as no number at all is left to the model's
            // own message, which names the cell.
            (cells.count > cells.unreadable || cells.other_mark_reads > 0).then_some(cells)
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::job::Area;
    use crate::source::Column;

    fn table(columns: &[(&str, Vec<Value>)]) -> Table {
        let n = columns[0].1.len();
        Table {
            path: "d.xlsx".into(),
            sheet: "s".into(),
            header_row: 1,
            formulas: Vec::new(),
            rows: (2..2 + n as u32).collect(),
            columns: columns
                .iter()
                .enumerate()
                .map(|(j, (name, values))| Column {
                    name: name.to_string(),
                    col: j as u32,
                    values: values.iter().cloned().collect(),
                })
                .collect(),
        }
    }

    fn reading(summary_rows: SummaryRows) -> Reading {
        Reading {
            area: Area::Sheet { header_row: 1 },
            summary_rows,
            text_numbers: false,
            csv: crate::job::CsvFormat {
                separator: None,
                decimal_comma: false,
                encoding: crate::job::Encoding::Detect,
            },
            labels: crate::period::LabelRules::default(),
        }
    }

    /// Screens `t` with every column used and a column of numbers.
    fn screen_all(t: &mut Table, summary_rows: SummaryRows) -> Result<Screened, SourceError> {
        let names: Vec<String> = t.columns.iter().map(|c| c.name.clone()).collect();
        let names: Vec<&str> = names.iter().map(String::as_str).collect();
        screen(t, &names, &names, &reading(summary_rows))
    }

    fn numbers(values: &[f64]) -> Vec<Value> {
        values.iter().map(|&x| Value::Number(x)).collect()
    }

    fn texts(values: &[&str]) -> Vec<Value> {
        values.iter().map(|t| Value::text(t)).collect()
    }

    #[test]
    fn labels_are_whole_words_in_any_case() {
        for label in [
            "Total",
            "GRAND TOTAL",
            "Total 2024",
            "Subtotal North",
            "avg.",
            "Sum:",
        ] {
            assert!(is_summary_label(label), "{label}");
        }
        for text in ["Summit", "Totalis", "Maxwell Road", "North", "Counter"] {
            assert!(!is_summary_label(text), "{text}");
        }
    }

    #[test]
    fn a_common_level_that_reads_as_a_label_is_data() {
        // A price tier called "Average" in a third of the rows.
        let tiers: Vec<&str> = (0..30).map(|i| ["Low", "Average", "High"][i % 3]).collect();
        let y: Vec<f64> = (0..30).map(|i| f64::from(i * 7 % 11) + 0.5).collect();
        let mut t = table(&[("tier", texts(&tiers)), ("y", numbers(&y))]);
        let screened = screen(&mut t, &["tier", "y"], &["y"], &reading(SummaryRows::Stop)).unwrap();
        assert!(screened.summary_rows_left_out.is_empty());
        assert_eq!(t.rows.len(), 30);
    }

    #[test]
    fn subtotals_with_a_common_label_are_found_by_their_sums() {
        // Twelve groups of three rows, each followed by "Subtotal" and the
        // group's sums: the label is in a quarter of the rows, so only the
        // sums tell.
        let (mut label, mut y) = (Vec::new(), Vec::new());
        for g in 0..12 {
            let group = [
                1.5 + f64::from(g),
                2.25 * f64::from(g),
                7.0 - f64::from(g) / 3.0,
            ];
            for v in group {
                label.push("store");
                y.push(v);
            }
            label.push("Subtotal");
            y.push(group.iter().sum());
        }
        let mut t = table(&[("name", texts(&label)), ("y", numbers(&y))]);
        let screened = screen(&mut t, &["y"], &["y"], &reading(SummaryRows::LeaveOut)).unwrap();
        let rows: Vec<u32> = screened
            .summary_rows_left_out
            .iter()
            .map(|r| r.row)
            .collect();
        assert_eq!(rows, (0..12).map(|g| 2 + 4 * g + 3).collect::<Vec<u32>>());
        assert_eq!(t.rows.len(), 36);
    }

    #[test]
    fn zeros_and_constant_columns_do_not_make_a_total() {
        let mut t = table(&[
            ("promo", numbers(&[0.0; 8])),
            ("y", numbers(&[3.0, 1.0, 4.0, 1.0, 5.0, 9.0, 2.0, 6.0])),
        ]);
        let screened = screen_all(&mut t, SummaryRows::Stop).unwrap();
        assert!(screened.summary_rows_left_out.is_empty());
    }

    #[test]
    fn a_last_row_equal_to_the_mean_of_the_rows_above_is_a_summary_row() {
        let y = [2.0, 4.5, 3.25, 8.0, 5.0];
        let mean = y.iter().sum::<f64>() / 5.0;
        let x = [1.0, 7.0, 2.0, 5.0, 3.5];
        let xm = x.iter().sum::<f64>() / 5.0;
        let mut t = table(&[
            ("y", numbers(&[&y[..], &[mean]].concat())),
            ("x", numbers(&[&x[..], &[xm]].concat())),
        ]);
        let err = screen_all(&mut t, SummaryRows::Stop).unwrap_err();
        assert!(
            err.to_string()
                .contains("row 7: A7, B7 hold the means of the rows above"),
            "{err}"
        );
        let screened = screen_all(&mut t, SummaryRows::Keep).unwrap();
        assert!(screened.summary_rows_left_out.is_empty());
        assert_eq!(t.rows.len(), 6);
    }
}
