//! The indicators of a categorical term reduced by their codes.
//!
//! The indicator columns of one term mark disjoint sets of rows, so the
//! Householder reflection that reduces a level's indicator touches only that
//! level's rows. It leaves √nₖ on the diagonal, √nₖ times the level's means
//! of every other column beside it, and those columns' rows of the level
//! centred on the level's means below: the within-level deviations that the
//! Frisch-Waugh-Lovell theorem regresses on (Frisch & Waugh 1933, Lovell
//! 1963). So a term with a thousand levels costs two passes over its rows
//! and a factorization of the other columns' deviations, not a dense QR a
//! thousand columns wide; the result has the cross products of [X y], so
//! the solve that follows finds what it would on the full matrix.
//!
//! Rows whose code has no column (the baseline level) keep their values.

use nalgebra::DVector;

use super::qr::{reduce_rows, Columns, Real, Triangle, BLOCK};
use crate::design::IndicatorGroup;

/// One categorical term's indicators, counted and averaged over their rows.
pub(super) struct Absorbed<T> {
    /// The term's code per row.
    group: IndicatorGroup,
    /// Which of the term's columns each code marks; `None` for a code
    /// without a column.
    level_of_code: Vec<Option<usize>>,
    /// The other columns of X, in order; `y` follows them.
    others: Vec<usize>,
    /// Rows of each level.
    counts: Vec<usize>,
    /// `means[k][q]`: the mean over level k's rows of other column q (q =
    /// `others.len()` for y).
    means: Vec<Vec<T>>,
}

impl<T: Real> Absorbed<T> {
    /// Counts and means of the levels of `group`, in one pass over the rows.
    pub(super) fn of(columns: Columns<'_>, y: &DVector<f64>, group: IndicatorGroup) -> Self {
        let zero = T::of(0.0);
        let (n, p) = (columns.rows(), columns.count());
        let top = group.columns.iter().map(|&(_, c)| c).max().unwrap_or(0);
        let mut level_of_code = vec![None; top as usize + 1];
        let mut in_group = vec![false; p];
        for (k, &(j, code)) in group.columns.iter().enumerate() {
            level_of_code[code as usize] = Some(k);
            in_group[j] = true;
        }
        let others: Vec<usize> = (0..p).filter(|&j| !in_group[j]).collect();
        let width = others.len() + 1;
        let levels = group.columns.len();
        let mut absorbed = Absorbed {
            group,
            level_of_code,
            others,
            counts: vec![0; levels],
            means: vec![vec![zero; width]; levels],
        };
        for i in 0..n {
            if let Some(k) = absorbed.level(i) {
                absorbed.counts[k] += 1;
            }
        }
        let mut values = Vec::with_capacity(BLOCK);
        for start in (0..n).step_by(BLOCK) {
            let end = (start + BLOCK).min(n);
            for q in 0..width {
                values.clear();
                absorbed.fill_other(columns, y, q, start..end, &mut values);
                for (i, &v) in (start..end).zip(&values) {
                    if let Some(k) = absorbed.level(i) {
                        absorbed.means[k][q] = absorbed.means[k][q] + v;
                    }
                }
            }
        }
        for (sums, &count) in absorbed.means.iter_mut().zip(&absorbed.counts) {
            if count > 0 {
                let inverse = T::of(1.0) / T::of(count as f64);
                for s in sums.iter_mut() {
                    *s = *s * inverse;
                }
            }
        }
        absorbed
    }

    /// The level of row `i`, when its code has a column.
    fn level(&self, i: usize) -> Option<usize> {
        let code = self.group.codes[i] as usize;
        self.level_of_code.get(code).copied().flatten()
    }

    /// Appends entries `rows` of other column `q` (y for the last) to `out`.
    fn fill_other(
        &self,
        columns: Columns<'_>,
        y: &DVector<f64>,
        q: usize,
        rows: std::ops::Range<usize>,
        out: &mut Vec<T>,
    ) {
        let j = self.others.get(q).copied().unwrap_or(columns.count());
        columns.fill_or_y(y, j, rows, out);
    }

    /// [`Self::fill_other`], each row of a level less the level's mean.
    fn fill_centred(
        &self,
        columns: Columns<'_>,
        y: &DVector<f64>,
        q: usize,
        rows: std::ops::Range<usize>,
        out: &mut Vec<T>,
    ) {
        let start = out.len();
        self.fill_other(columns, y, q, rows.clone(), out);
        for (i, v) in rows.zip(&mut out[start..]) {
            if let Some(k) = self.level(i) {
                *v = *v - self.means[k][q];
            }
        }
    }

    /// [X y] reduced to `levels + w` rows with its cross products, columns
    /// in their own order: a level's column is √nₖ in the level's row; an
    /// other column is √nₖ times its level means, above the triangular
    /// factor (w rows) of its centred values.
    pub(super) fn reduced(&self, columns: Columns<'_>, y: &DVector<f64>) -> Vec<Vec<T>> {
        let zero = T::of(0.0);
        let width = self.others.len() + 1;
        let within = reduce_rows::<T>(columns.rows(), width, |q, rows, out| {
            self.fill_centred(columns, y, q, rows, out)
        });
        let levels = self.counts.len();
        let rows = levels + within[0].len();
        let root: Vec<T> = self
            .counts
            .iter()
            .map(|&c| T::of(c as f64).sqrt())
            .collect();
        let mut reduced = vec![Vec::new(); columns.count() + 1];
        for (k, &(j, _)) in self.group.columns.iter().enumerate() {
            let mut column = vec![zero; rows];
            column[k] = root[k];
            reduced[j] = column;
        }
        let targets = self.others.iter().copied().chain([columns.count()]);
        for ((q, j), below) in targets.enumerate().zip(within) {
            let mut column: Vec<T> = (0..levels).map(|k| root[k] * self.means[k][q]).collect();
            column.extend(below);
            reduced[j] = column;
        }
        reduced
    }

    /// Each row's leverage: 1/nₖ for a row of level k (the level's own
    /// column), plus the leverage of its centred other columns among all
    /// the rows' (Frisch-Waugh-Lovell: the hat matrix is the sum of the two
    /// projections).
    pub(super) fn leverage(&self, columns: Columns<'_>, y: &DVector<f64>) -> Vec<f64> {
        let n = columns.rows();
        let xs = self.others.len();
        let mut leverage = if xs == 0 {
            vec![0.0; n]
        } else {
            let fill = |q, rows, out: &mut Vec<T>| self.fill_centred(columns, y, q, rows, out);
            let within = reduce_rows::<T>(n, xs, fill);
            let factor = Triangle::of(&within, within[0].len());
            factor.rows_pass(n, fill, true, None).0
        };
        for (i, h) in leverage.iter_mut().enumerate() {
            if let Some(k) = self.level(i) {
                *h += 1.0 / self.counts[k] as f64;
            }
        }
        leverage
    }
}

#[cfg(test)]
mod tests {
    use std::sync::Arc;

    use nalgebra::DVector;

    use super::super::qr::{solve_absorbing, Columns, Leverage, Real, Solved};
    use crate::ddouble::DoubleDouble;
    use crate::design::{DesignColumn, DesignMatrix};

    /// A design with an intercept, a numeric column, a categorical term
    /// (code 0 the baseline, code 4 without rows, so aliased) and the
    /// numeric column's interaction with one level; once with the term's
    /// indicators as codes and once as stored 0/1 values. With
    /// `every_level`, the design of a model without an intercept: no column
    /// of ones, and code 0 has its own indicator.
    fn designs(every_level: bool) -> (DesignMatrix, DesignMatrix, DVector<f64>) {
        let n = 40;
        let mut state = 7u64;
        let mut next = || {
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (state >> 11) as f64 / (1u64 << 53) as f64
        };
        let codes: Vec<u32> = (0..n).map(|i| (i * 7 % 4) as u32).collect();
        let x: Vec<f64> = (0..n).map(|_| 1000.0 + next() * 10.0).collect();
        let y: Vec<f64> = (0..n)
            .map(|i| 3.0 + 0.5 * x[i] + f64::from(codes[i]) * 2.0 + next())
            .collect();
        let shared: Arc<[u32]> = codes.clone().into();
        let indicator = |code: u32| DesignColumn::Indicator {
            codes: Arc::clone(&shared),
            code,
        };
        let stored = |code: u32| {
            DesignColumn::values(
                codes
                    .iter()
                    .map(|&c| f64::from(u8::from(c == code)))
                    .collect(),
            )
        };
        let numeric = DesignColumn::values(x);
        let build = |level: &dyn Fn(u32) -> DesignColumn| {
            DesignMatrix::new(
                n,
                vec![
                    if every_level {
                        level(0)
                    } else {
                        DesignColumn::Ones
                    },
                    numeric.clone(),
                    level(1),
                    level(2),
                    level(3),
                    level(4),
                    DesignColumn::Product(Box::new(numeric.clone()), Box::new(level(2))),
                ],
            )
        };
        (build(&indicator), build(&stored), DVector::from_vec(y))
    }

    fn assert_close(a: &[f64], b: &[f64], what: &str) {
        assert_eq!(a.len(), b.len(), "{what}");
        for (x, y) in a.iter().zip(b) {
            assert!(
                (x - y).abs() <= 1e-9 * y.abs().max(1.0),
                "{what}: {x} vs {y}"
            );
        }
    }

    fn agree<T: Real>(every_level: bool) {
        let (absorbed, plain) = {
            let (codes, stored, y) = designs(every_level);
            assert!(codes.widest_indicator_group().is_some());
            assert!(stored.widest_indicator_group().is_none());
            let solve_on = |x: &DesignMatrix| -> Solved {
                solve_absorbing::<T>(Columns::of(x), &y, Leverage::Wanted, 1)
            };
            (solve_on(&codes), solve_on(&stored))
        };
        assert_eq!(absorbed.kept, plain.kept);
        assert_eq!(absorbed.aliased, vec![5]);
        assert_eq!(absorbed.aliased, plain.aliased);
        assert_close(absorbed.beta.as_slice(), plain.beta.as_slice(), "beta");
        assert_close(
            absorbed.xtx_inv.as_slice(),
            plain.xtx_inv.as_slice(),
            "(X'X)^-1",
        );
        assert_close(&absorbed.leverage, &plain.leverage, "leverage");
        assert_close(
            absorbed.residuals.as_slice(),
            plain.residuals.as_slice(),
            "residuals",
        );
        // R and the effects are unique up to the signs of R's rows.
        let magnitude = |v: &[f64]| v.iter().map(|e| e.abs()).collect::<Vec<_>>();
        assert_close(
            &magnitude(&absorbed.effects),
            &magnitude(&plain.effects),
            "effects",
        );
        assert_close(
            &magnitude(absorbed.r.as_slice()),
            &magnitude(plain.r.as_slice()),
            "R",
        );
        let total: f64 = absorbed.leverage.iter().sum();
        assert!((total - absorbed.kept.len() as f64).abs() < 1e-9, "{total}");
    }

    #[test]
    fn absorbed_indicators_give_the_dense_solution_in_double() {
        agree::<f64>(false);
    }

    #[test]
    fn absorbed_indicators_give_the_dense_solution_in_double_double() {
        agree::<DoubleDouble>(false);
    }

    #[test]
    fn absorbed_indicators_for_every_level_give_the_dense_solution() {
        agree::<f64>(true);
        agree::<DoubleDouble>(true);
    }

    #[test]
    fn a_term_without_other_columns_has_leverage_one_over_its_rows() {
        let codes: Arc<[u32]> = vec![0, 0, 1, 1, 1].into();
        let x = DesignMatrix::new(
            5,
            (0..2)
                .map(|code| DesignColumn::Indicator {
                    codes: Arc::clone(&codes),
                    code,
                })
                .collect(),
        );
        let y = DVector::from_vec(vec![1.0, 3.0, 2.0, 4.0, 6.0]);
        let s = solve_absorbing::<f64>(Columns::of(&x), &y, Leverage::Wanted, 1);
        assert_close(s.beta.as_slice(), &[2.0, 4.0], "group means");
        assert_close(
            &s.leverage,
            &[0.5, 0.5, 1.0 / 3.0, 1.0 / 3.0, 1.0 / 3.0],
            "1/n",
        );
        assert_close(
            s.residuals.as_slice(),
            &[-1.0, 1.0, -2.0, 0.0, 2.0],
            "residuals",
        );
    }
}
