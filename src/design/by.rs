//! Models fitted by level: the rows of each level of a `by` column.

use std::collections::{BTreeMap, HashMap};

use super::{Context, DesignError};
use crate::job::ModelSpec;
use crate::source::Table;

/// The levels of `model`'s `by` column with the indices of their rows,
/// levels in sorted order; rows with a blank there belong to none.
///
/// # Errors
/// [`DesignError`] when the column is missing or holds an error cell.
pub fn by_levels(
    table: &Table,
    model: &ModelSpec,
) -> Result<Vec<(String, Vec<usize>)>, DesignError> {
    let Some(name) = &model.by else {
        return Ok(Vec::new());
    };
    let ctx = Context { table, model };
    let column = ctx.column(name)?;
    let mut usable = vec![true; table.rows.len()];
    ctx.check_labels(column, &mut usable)?;
    // Rows grouped by the cell's key, each distinct cell read as text once.
    let mut by_key: HashMap<u64, Vec<usize>> = HashMap::new();
    for (i, _) in usable.iter().enumerate().filter(|(_, &u)| u) {
        by_key.entry(column.values.key(i)).or_default().push(i);
    }
    let mut levels: BTreeMap<String, Vec<usize>> = BTreeMap::new();
    for rows in by_key.into_values() {
        let label = column.values.get(rows[0]).to_string();
        levels.entry(label).or_default().extend(rows);
    }
    Ok(levels
        .into_iter()
        .map(|(label, mut rows)| {
            rows.sort_unstable();
            (label, rows)
        })
        .collect())
}
