//! The design matrix, held column by column in the form each kind of column
//! needs: the intercept as nothing at all, a level or season indicator as
//! the rows' codes (shared by all the indicators of a term), a product of
//! two columns as the pair, and only numeric columns as stored numbers. A
//! million-row design of twenty columns thus takes tens of megabytes, not
//! 160, and every reader takes it in blocks of rows ([`DesignMatrix::fill`]).

use std::sync::Arc;

use nalgebra::DMatrix;

/// One column of a [`DesignMatrix`].
#[derive(Debug, Clone)]
pub enum DesignColumn {
    /// Every entry 1 (the intercept).
    Ones,
    /// Stored values, with the low parts left over when a column was
    /// formed in double-double (polynomial powers): the column is `hi + lo`.
    Values {
        /// The values rounded to double precision.
        hi: Arc<[f64]>,
        /// What rounding left over, when anything did.
        lo: Option<Arc<[f64]>>,
    },
    /// 1 where the row's code is `code`, else 0: one level's or season's
    /// indicator.
    Indicator {
        /// One code per row.
        codes: Arc<[u32]>,
        /// The code this column marks.
        code: u32,
    },
    /// The entrywise product of two columns (an interaction).
    Product(Box<DesignColumn>, Box<DesignColumn>),
    /// `values` moved down by `lag` rows, zeros above: a lagged residual
    /// in an auxiliary regression, all lags sharing one copy.
    Lagged {
        /// The values before the shift.
        values: Arc<[f64]>,
        /// Rows to shift by.
        lag: usize,
    },
}

impl DesignColumn {
    /// A column of stored values, exact in double precision.
    pub fn values(hi: Vec<f64>) -> Self {
        DesignColumn::Values {
            hi: hi.into(),
            lo: None,
        }
    }

    /// Entry `i` (its double-precision part).
    pub fn get(&self, i: usize) -> f64 {
        match self {
            DesignColumn::Ones => 1.0,
            DesignColumn::Values { hi, .. } => hi[i],
            DesignColumn::Indicator { codes, code } => f64::from(u8::from(codes[i] == *code)),
            DesignColumn::Product(a, b) => a.get(i) * b.get(i),
            DesignColumn::Lagged { values, lag } => i.checked_sub(*lag).map_or(0.0, |k| values[k]),
        }
    }

    /// The low part of entry `i`: 0 for a column exact in double precision.
    pub fn low(&self, i: usize) -> f64 {
        match self {
            DesignColumn::Values { lo: Some(lo), .. } => lo[i],
            _ => 0.0,
        }
    }

    fn has_low(&self) -> bool {
        matches!(self, DesignColumn::Values { lo: Some(_), .. })
    }

    /// Appends entries `rows` to `out`.
    fn fill(&self, rows: std::ops::Range<usize>, out: &mut Vec<f64>) {
        match self {
            DesignColumn::Ones => out.extend(rows.map(|_| 1.0)),
            DesignColumn::Values { hi, .. } => out.extend_from_slice(&hi[rows]),
            DesignColumn::Indicator { codes, code } => {
                out.extend(codes[rows].iter().map(|c| f64::from(u8::from(c == code))))
            }
            DesignColumn::Product(a, b) => {
                let start = out.len();
                a.fill(rows.clone(), out);
                let mut right = Vec::with_capacity(rows.len());
                b.fill(rows, &mut right);
                for (x, y) in out[start..].iter_mut().zip(&right) {
                    *x *= y;
                }
            }
            DesignColumn::Lagged { .. } => out.extend(rows.map(|i| self.get(i))),
        }
    }

    /// The column at rows `keep`, in that order; `codes` maps each shared
    /// code list already gathered to its copy, so that the indicators of
    /// one term still share one.
    fn gather(&self, keep: &[usize], codes: &mut Vec<GatheredCodes>) -> Self {
        let pick =
            |values: &Arc<[f64]>| -> Arc<[f64]> { keep.iter().map(|&i| values[i]).collect() };
        match self {
            DesignColumn::Ones => DesignColumn::Ones,
            DesignColumn::Values { hi, lo } => DesignColumn::Values {
                hi: pick(hi),
                lo: lo.as_ref().map(pick),
            },
            DesignColumn::Indicator { codes: own, code } => {
                let shared = match codes.iter().find(|(from, _)| Arc::ptr_eq(from, own)) {
                    Some((_, to)) => Arc::clone(to),
                    None => {
                        let to: Arc<[u32]> = keep.iter().map(|&i| own[i]).collect();
                        codes.push((Arc::clone(own), Arc::clone(&to)));
                        to
                    }
                };
                DesignColumn::Indicator {
                    codes: shared,
                    code: *code,
                }
            }
            DesignColumn::Product(a, b) => DesignColumn::Product(
                Box::new(a.gather(keep, codes)),
                Box::new(b.gather(keep, codes)),
            ),
            DesignColumn::Lagged { .. } => {
                DesignColumn::values(keep.iter().map(|&i| self.get(i)).collect())
            }
        }
    }
}

/// The indicator columns of one categorical term or season: the code list
/// they share and, for each column, its index and the code it marks.
#[derive(Debug, Clone)]
pub struct IndicatorGroup {
    /// One code per row.
    pub codes: Arc<[u32]>,
    /// (column index, code), one column per code, in column order.
    pub columns: Vec<(usize, u32)>,
}

/// A shared code list and its copy at the gathered rows.
type GatheredCodes = (Arc<[u32]>, Arc<[u32]>);

/// A design matrix X: `rows` rows, one [`DesignColumn`] per coefficient.
#[derive(Debug, Clone)]
pub struct DesignMatrix {
    rows: usize,
    columns: Vec<DesignColumn>,
}

impl DesignMatrix {
    /// The matrix of `columns`, each `rows` long.
    pub fn new(rows: usize, columns: Vec<DesignColumn>) -> Self {
        DesignMatrix { rows, columns }
    }

    /// The matrix of a dense `hi` and, when given, its low parts `lo` (of
    /// the same shape).
    pub fn from_dense(hi: &DMatrix<f64>, lo: Option<&DMatrix<f64>>) -> Self {
        let columns = (0..hi.ncols())
            .map(|j| DesignColumn::Values {
                hi: hi.column(j).iter().copied().collect(),
                lo: lo.map(|l| l.column(j).iter().copied().collect()),
            })
            .collect();
        DesignMatrix::new(hi.nrows(), columns)
    }

    /// Rows.
    pub fn nrows(&self) -> usize {
        self.rows
    }

    /// Columns.
    pub fn ncols(&self) -> usize {
        self.columns.len()
    }

    /// Entry (i, j), its double-precision part.
    pub fn get(&self, i: usize, j: usize) -> f64 {
        self.columns[j].get(i)
    }

    /// Whether column `j` carries low parts.
    pub fn has_low(&self, j: usize) -> bool {
        self.columns[j].has_low()
    }

    /// Appends the entries `rows` of column `j` (double-precision parts) to
    /// `out`.
    pub fn fill(&self, j: usize, rows: std::ops::Range<usize>, out: &mut Vec<f64>) {
        self.columns[j].fill(rows, out);
    }

    /// Appends the low parts of entries `rows` of column `j` to `out`.
    pub fn fill_low(&self, j: usize, rows: std::ops::Range<usize>, out: &mut Vec<f64>) {
        match &self.columns[j] {
            DesignColumn::Values { lo: Some(lo), .. } => out.extend_from_slice(&lo[rows]),
            _ => out.extend(rows.map(|_| 0.0)),
        }
    }

    /// Column `j` in full, double-precision parts.
    pub fn column(&self, j: usize) -> Vec<f64> {
        let mut out = Vec::with_capacity(self.rows);
        self.fill(j, 0..self.rows, &mut out);
        out
    }

    /// Row `i`, low parts added.
    pub fn row(&self, i: usize) -> Vec<f64> {
        self.columns.iter().map(|c| c.get(i) + c.low(i)).collect()
    }

    /// Whether every entry is finite.
    pub fn all_finite(&self) -> bool {
        (0..self.ncols()).all(|j| {
            self.blocks()
                .all(|rows| self.block(j, rows).iter().all(|v| v.is_finite()))
        })
    }

    /// The columns `keep`, in that order; no values are copied.
    pub fn select_columns(&self, keep: &[usize]) -> DesignMatrix {
        DesignMatrix::new(
            self.rows,
            keep.iter().map(|&j| self.columns[j].clone()).collect(),
        )
    }

    /// The columns of this matrix followed by those of `other` (as tall);
    /// no values are copied.
    pub fn joined(&self, other: &DesignMatrix) -> DesignMatrix {
        DesignMatrix::new(
            self.rows,
            self.columns.iter().chain(&other.columns).cloned().collect(),
        )
    }

    /// The rows `keep` (indices into this matrix), in that order.
    pub fn select_rows(&self, keep: &[usize]) -> DesignMatrix {
        let mut codes = Vec::new();
        DesignMatrix::new(
            keep.len(),
            self.columns
                .iter()
                .map(|c| c.gather(keep, &mut codes))
                .collect(),
        )
    }

    /// The double-precision parts as a dense matrix, for small designs.
    pub fn to_dense(&self) -> DMatrix<f64> {
        let mut values = Vec::with_capacity(self.rows * self.ncols());
        for j in 0..self.ncols() {
            self.fill(j, 0..self.rows, &mut values);
        }
        DMatrix::from_vec(self.rows, self.ncols(), values)
    }

    /// Whether the columns hold a constant: a column of ones (or of one
    /// value other than zero), or indicators that share one code list and
    /// mark every code it holds, so that one of them is 1 in every row.
    pub fn holds_constant(&self) -> bool {
        let mut groups: Vec<(&Arc<[u32]>, Vec<u32>)> = Vec::new();
        for column in &self.columns {
            match column {
                DesignColumn::Ones => return true,
                DesignColumn::Values { hi, lo: None }
                    if hi
                        .first()
                        .is_some_and(|&v| v != 0.0 && hi.iter().all(|&h| h == v)) =>
                {
                    return true
                }
                DesignColumn::Indicator { codes, code } => {
                    match groups.iter_mut().find(|(c, _)| Arc::ptr_eq(c, codes)) {
                        Some((_, marked)) => marked.push(*code),
                        None => groups.push((codes, vec![*code])),
                    }
                }
                _ => {}
            }
        }
        groups.iter().any(|(codes, marked)| {
            let top = marked.iter().max().map_or(0, |&c| c as usize);
            let mut has_column = vec![false; top + 1];
            for &c in marked {
                has_column[c as usize] = true;
            }
            codes
                .iter()
                .all(|&c| has_column.get(c as usize).copied().unwrap_or(false))
        })
    }

    /// The largest set of indicator columns that share one code list, each
    /// code counted once (a repeated column stays out of the group); `None`
    /// without indicator columns.
    pub fn widest_indicator_group(&self) -> Option<IndicatorGroup> {
        let mut groups: Vec<IndicatorGroup> = Vec::new();
        for (j, column) in self.columns.iter().enumerate() {
            let DesignColumn::Indicator { codes, code } = column else {
                continue;
            };
            match groups.iter_mut().find(|g| Arc::ptr_eq(&g.codes, codes)) {
                Some(group) => {
                    if group.columns.iter().all(|&(_, c)| c != *code) {
                        group.columns.push((j, *code));
                    }
                }
                None => groups.push(IndicatorGroup {
                    codes: Arc::clone(codes),
                    columns: vec![(j, *code)],
                }),
            }
        }
        groups.into_iter().max_by_key(|g| g.columns.len())
    }

    /// The row ranges of [`BLOCK_ROWS`] rows that cover the matrix.
    pub fn blocks(&self) -> impl Iterator<Item = std::ops::Range<usize>> {
        let n = self.rows;
        (0..n)
            .step_by(BLOCK_ROWS)
            .map(move |start| start..(start + BLOCK_ROWS).min(n))
    }

    /// Entries `rows` of column `j`, as a new vector.
    pub fn block(&self, j: usize, rows: std::ops::Range<usize>) -> Vec<f64> {
        let mut out = Vec::with_capacity(rows.len());
        self.fill(j, rows, &mut out);
        out
    }

    /// Rows `rows` of the columns `columns`, as a dense matrix.
    pub fn dense_block(&self, rows: std::ops::Range<usize>, columns: &[usize]) -> DMatrix<f64> {
        let mut values = Vec::with_capacity(rows.len() * columns.len());
        for &j in columns {
            self.fill(j, rows.clone(), &mut values);
        }
        DMatrix::from_vec(rows.len(), columns.len(), values)
    }
}

/// Rows a reader takes at a time through [`DesignMatrix::blocks`].
const BLOCK_ROWS: usize = 4096;

#[cfg(test)]
mod tests {
    use super::*;

    fn sample() -> DesignMatrix {
        let codes: Arc<[u32]> = vec![0, 1, 2, 1, 0].into();
        let x = DesignColumn::values(vec![1.0, 2.0, 3.0, 4.0, 5.0]);
        let b = DesignColumn::Indicator {
            codes: Arc::clone(&codes),
            code: 1,
        };
        DesignMatrix::new(
            5,
            vec![
                DesignColumn::Ones,
                x.clone(),
                b.clone(),
                DesignColumn::Indicator { codes, code: 2 },
                DesignColumn::Product(Box::new(x), Box::new(b)),
                DesignColumn::Lagged {
                    values: vec![7.0, 8.0, 9.0, 10.0, 11.0].into(),
                    lag: 2,
                },
            ],
        )
    }

    #[test]
    fn every_kind_of_column_reads_the_same_by_entry_block_and_dense() {
        let m = sample();
        let dense = m.to_dense();
        let want = DMatrix::from_row_slice(
            5,
            6,
            &[
                1.0, 1.0, 0.0, 0.0, 0.0, 0.0, //
                1.0, 2.0, 1.0, 0.0, 2.0, 0.0, //
                1.0, 3.0, 0.0, 1.0, 0.0, 7.0, //
                1.0, 4.0, 1.0, 0.0, 4.0, 8.0, //
                1.0, 5.0, 0.0, 0.0, 0.0, 9.0,
            ],
        );
        assert_eq!(dense, want);
        for i in 0..5 {
            for j in 0..6 {
                assert_eq!(m.get(i, j), want[(i, j)]);
            }
        }
        assert_eq!(m.block(4, 1..4), vec![2.0, 0.0, 4.0]);
        assert_eq!(
            m.dense_block(3..5, &[1, 4]),
            DMatrix::from_row_slice(2, 2, &[4.0, 4.0, 5.0, 0.0])
        );
    }

    #[test]
    fn selected_rows_keep_the_coding_and_share_codes() {
        let m = sample().select_rows(&[3, 0]);
        assert_eq!(m.to_dense(), sample().to_dense().select_rows(&[3, 0]));
        let (DesignColumn::Indicator { codes: a, .. }, DesignColumn::Indicator { codes: b, .. }) =
            (&m.columns[2], &m.columns[3])
        else {
            panic!("indicators stay indicators");
        };
        assert!(Arc::ptr_eq(a, b));
    }

    #[test]
    fn low_parts_are_kept_apart_and_added_in_rows() {
        let hi = DMatrix::from_row_slice(2, 2, &[1.0, 2.0, 1.0, 3.0]);
        let lo = DMatrix::from_row_slice(2, 2, &[0.0, 1e-20, 0.0, -1e-20]);
        let m = DesignMatrix::from_dense(&hi, Some(&lo));
        assert!(m.has_low(1));
        assert_eq!(m.row(0), vec![1.0, 2.0 + 1e-20]);
        let mut low = Vec::new();
        m.fill_low(1, 0..2, &mut low);
        assert_eq!(low, vec![1e-20, -1e-20]);
        assert!(DesignMatrix::from_dense(&hi, None).all_finite());
    }
}
