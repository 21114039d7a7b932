//! Polynomial terms: a column and its powers.

use super::{DesignColumn, NamedColumn};
use crate::ddouble::DoubleDouble;

/// The columns x, x^2, …, x^degree, each power formed from the one before
/// in double-double arithmetic and kept as a rounded value plus its
/// remainder (an ill-conditioned polynomial fit such as NIST StRD Filip
/// needs those digits).
pub(super) fn powers(column: &str, x: &[f64], degree: u32) -> Vec<NamedColumn> {
    let mut current: Vec<DoubleDouble> = x.iter().map(|&v| DoubleDouble::from_f64(v)).collect();
    let mut out = vec![NamedColumn::new(column, DesignColumn::values(x.to_vec()))];
    for k in 2..=degree {
        for (c, &v) in current.iter_mut().zip(x) {
            *c = *c * v;
        }
        out.push(NamedColumn::new(
            &format!("{column}^{k}"),
            DesignColumn::Values {
                hi: current.iter().map(|d| d.hi()).collect(),
                lo: Some(current.iter().map(|d| d.lo()).collect()),
            },
        ));
    }
    out
}
