//! Logs of predictors: ln(column) as a numeric term.

use super::{Context, DesignColumn, DesignError, NamedColumn};
use crate::source::Column;

/// The column `ln(name)` of the used rows' `values` (`keep` the rows'
/// indices in the table, for messages); an error naming the first value at
/// or below zero and how many there are.
pub(super) fn log_column(
    ctx: &Context<'_>,
    column: &Column,
    keep: &[usize],
    values: &[f64],
) -> Result<Vec<NamedColumn>, DesignError> {
    let bad = values.iter().filter(|&&v| v <= 0.0).count();
    if let Some((&i, &value)) = keep.iter().zip(values).find(|(_, &v)| v <= 0.0) {
        return Err(DesignError::LogNotPositive {
            model: ctx.model.name.clone(),
            place: ctx.table.place(),
            column: column.name.clone(),
            cell: ctx.table.cell(column, i),
            value,
            count: bad,
        });
    }
    Ok(vec![NamedColumn::new(
        &format!("ln({})", column.name),
        DesignColumn::values(values.iter().map(|v| v.ln()).collect()),
    )])
}
