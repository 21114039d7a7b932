//! Weights: weighted least squares as ordinary least squares on the rows
//! scaled by the square roots of their weights.
//!
//! With W = diag(w), the weighted fit minimizes Σ wᵢ(yᵢ − xᵢb)², which is
//! the least squares fit of √w·y on √w·X; its coefficients, their
//! covariance σ²(X'WX)⁻¹, the leverages (the hat matrix of √w·X), and the
//! standardized residuals √wᵢ·eᵢ / (s·√(1 − hᵢ)) are those of the scaled
//! problem, as R's `lm(..., weights = w)` defines them (Chambers & Hastie
//! 1992, *Statistical Models in S*, §4.2).

use nalgebra::DVector;

use super::{Context, DesignColumn, DesignError, DesignMatrix};
use crate::source::{Column, Value};

/// The weight of each row `keep` (indices into the table); an error naming
/// the first cell that is zero or below.
pub(super) fn row_weights(
    ctx: &Context<'_>,
    column: &Column,
    keep: &[usize],
) -> Result<Vec<f64>, DesignError> {
    keep.iter()
        .map(|&i| match column.values.get(i) {
            Value::Number(w) if w > 0.0 => Ok(w),
            other => Err(DesignError::NotAWeight {
                model: ctx.model.name.clone(),
                place: ctx.table.place(),
                column: column.name.clone(),
                cell: ctx.table.cell(column, i),
                value: other.to_string(),
            }),
        })
        .collect()
}

/// √w·X and √w·y: every column scaled row by row (its low part too).
pub(super) fn scaled(
    x: &DesignMatrix,
    y: &DVector<f64>,
    weights: &[f64],
) -> (DesignMatrix, DVector<f64>) {
    let n = x.nrows();
    let roots: Vec<f64> = weights.iter().map(|w| w.sqrt()).collect();
    let scale =
        |values: Vec<f64>| -> Vec<f64> { values.iter().zip(&roots).map(|(v, r)| v * r).collect() };
    let columns = (0..x.ncols())
        .map(|j| {
            let mut hi = Vec::with_capacity(n);
            x.fill(j, 0..n, &mut hi);
            let lo = x.has_low(j).then(|| {
                let mut lo = Vec::with_capacity(n);
                x.fill_low(j, 0..n, &mut lo);
                scale(lo).into()
            });
            DesignColumn::Values {
                hi: scale(hi).into(),
                lo,
            }
        })
        .collect();
    let y = DVector::from_iterator(n, y.iter().zip(&roots).map(|(v, r)| v * r));
    (DesignMatrix::new(n, columns), y)
}
