//! The table and model a design is built from, and the checks of a
//! column's cells against its role.

use super::{quoted, DesignError};
use crate::job::ModelSpec;
use crate::source::{Column, Table, Value};
use crate::suggest::closest;

/// What a model's design is built from: the table and the model.
pub(super) struct Context<'a> {
    /// The data.
    pub(super) table: &'a Table,
    /// The model.
    pub(super) model: &'a ModelSpec,
}

impl Context<'_> {
    /// The column `name`, or an error naming the columns there are.
    pub(super) fn column(&self, name: &str) -> Result<&Column, DesignError> {
        self.table.column(name).ok_or_else(|| {
            let names: Vec<String> = self.table.columns.iter().map(|c| c.name.clone()).collect();
            DesignError::NoSuchColumn {
                model: self.model.name.clone(),
                place: self.table.place(),
                column: name.to_string(),
                suggestion: closest(name, &names)
                    .map(|s| format!(" (did you mean '{s}'?)"))
                    .unwrap_or_default(),
                available: quoted(&names),
            }
        })
    }

    /// Checks that the column holds numbers or blanks, and marks its blank
    /// rows as not `usable`.
    pub(super) fn check_numbers(
        &self,
        column: &Column,
        usable: &mut [bool],
    ) -> Result<(), DesignError> {
        for (i, v) in column.values.iter().enumerate() {
            match v {
                Value::Blank => usable[i] = false,
                Value::Number(x) if x.is_finite() => {}
                Value::Number(x) => {
                    return Err(DesignError::NotFinite {
                        model: self.model.name.clone(),
                        place: self.table.place(),
                        column: column.name.clone(),
                        cell: self.table.cell(column, i),
                        value: x,
                    })
                }
                Value::Error(e) => return Err(self.error_cell(column, i, &e)),
                other => return Err(DesignError::NotANumber {
                    model: self.model.name.clone(),
                    place: self.table.place(),
                    column: column.name.clone(),
                    cell: self.table.cell(column, i),
                    kind: other.kind(),
                    value: other.to_string(),
                    hint: match other {
                        Value::Text(ref t) if looks_like_a_number(t) => " (it looks like a number stored as text, with separators, a sign in brackets, a percent or a currency sign: the tool does not guess what such text means; store the cell as a number)",
                        Value::Date(_) => " (a date; dates belong in a `trend` or `season` column)",
                        _ => "",
                    },
                }),
            }
        }
        Ok(())
    }

    /// Checks that the column holds no error cells, and marks its blank rows
    /// as not `usable`. Its other cells are level labels; numbers become
    /// their shortest decimal text ("3", "2.5").
    pub(super) fn check_labels(
        &self,
        column: &Column,
        usable: &mut [bool],
    ) -> Result<(), DesignError> {
        for (i, v) in column.values.iter().enumerate() {
            match v {
                Value::Blank => usable[i] = false,
                Value::Error(e) => return Err(self.error_cell(column, i, &e)),
                _ => {}
            }
        }
        Ok(())
    }

    pub(super) fn error_cell(&self, column: &Column, i: usize, value: &str) -> DesignError {
        DesignError::ErrorCell {
            model: self.model.name.clone(),
            place: self.table.place(),
            column: column.name.clone(),
            cell: self.table.cell(column, i),
            value: value.to_string(),
        }
    }
}

/// Whether text reads as a number once thousands separators, a currency or
/// percent sign, or accounting brackets are taken off ("1,234", "(1,234)",
/// "12%", "$1,200"): the tool refuses such cells rather than guess, and
/// says why.
fn looks_like_a_number(text: &str) -> bool {
    let stripped: String = text
        .chars()
        .filter(|c| !matches!(c, ',' | ' ' | '$' | '€' | '£' | '%' | '(' | ')' | '\u{a0}'))
        .collect();
    !stripped.is_empty() && stripped != text && stripped.parse::<f64>().is_ok()
}
