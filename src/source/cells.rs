//! Cell values and their places: what one cell of the input holds, a
//! column of them at 8 bytes a cell, and the A1 address of a cell.

use std::fmt;
use std::sync::Arc;

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

    /// The distinct values other than numbers, each once, in order of
    /// first use.
    pub fn distinct_others(&self) -> impl Iterator<Item = &Value> {
        self.others.iter()
    }

    /// The keys ([`Cells::key`]) of the distinct values other than numbers
    /// that `pick` picks, with the values: a test per distinct value
    /// rather than per cell.
    pub fn keys_where(&self, pick: impl Fn(&Value) -> bool) -> Vec<(u64, Value)> {
        self.others
            .iter()
            .enumerate()
            .filter(|(_, v)| pick(v))
            .map(|(k, v)| (OTHER_TAG | k as u64, v.clone()))
            .collect()
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
}
