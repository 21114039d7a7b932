//! Householder least squares in double or double-double precision.
//!
//! One routine, generic over the arithmetic ([`Real`]): plain `f64` for the
//! fast path, and [`DoubleDouble`] (double-double, about 32 significant digits)
//! for ill-conditioned designs, where double precision would lose the
//! digits a report needs. Columns are scaled to unit length first, so the
//! rank test and the condition number do not depend on units, and reduced
//! in the order the model lists them (Golub & Van Loan, *Matrix
//! Computations*, 4th ed., §5.1–5.2). A column whose part not explained by
//! the earlier columns is below [`ALIAS_TOLERANCE`] of its length is
//! *aliased* and set aside, so the later of two collinear columns is the one
//! left out.

use std::ops::{Add, Div, Mul, Neg, Sub};

use nalgebra::{DMatrix, DVector};

use super::absorb::Absorbed;
use crate::ddouble::DoubleDouble;
use crate::design::DesignMatrix;

/// A column is aliased when its part orthogonal to the earlier columns is
/// below this fraction of its own length: within a few hundred rounding
/// errors of the double-precision data, so it carries no information of its
/// own.
pub const ALIAS_TOLERANCE: f64 = 1e-13;

/// Arithmetic the least-squares routine can run in.
pub trait Real:
    Copy
    + PartialOrd
    + Add<Output = Self>
    + Sub<Output = Self>
    + Mul<Output = Self>
    + Div<Output = Self>
    + Neg<Output = Self>
{
    /// The value of an `f64`.
    fn of(x: f64) -> Self;
    /// The nearest `f64`.
    fn value(self) -> f64;
    /// What rounding to [`Real::value`] left over (0 for an `f64`).
    fn remainder(self) -> f64;
    /// Square root.
    fn sqrt(self) -> Self;
    /// Absolute value.
    fn abs(self) -> Self;
}

impl Real for f64 {
    fn of(x: f64) -> Self {
        x
    }
    fn value(self) -> f64 {
        self
    }
    fn remainder(self) -> f64 {
        0.0
    }
    fn sqrt(self) -> Self {
        f64::sqrt(self)
    }
    fn abs(self) -> Self {
        f64::abs(self)
    }
}

impl Real for DoubleDouble {
    fn of(x: f64) -> Self {
        DoubleDouble::from_f64(x)
    }
    fn value(self) -> f64 {
        f64::from(self)
    }
    fn remainder(self) -> f64 {
        (self - DoubleDouble::from_f64(f64::from(self))).hi()
    }
    fn sqrt(self) -> Self {
        DoubleDouble::sqrt(self)
    }
    fn abs(self) -> Self {
        DoubleDouble::abs(self)
    }
}

/// What the solve hands back, already rounded to `f64`.
#[derive(Debug, Clone)]
pub struct Solved {
    /// Indices of the estimable columns, in order.
    pub kept: Vec<usize>,
    /// Indices of aliased columns, in order.
    pub aliased: Vec<usize>,
    /// Coefficients of the kept columns.
    pub beta: DVector<f64>,
    /// What rounding the coefficients to `beta` left over: zeros from a
    /// double-precision solve.
    pub beta_low: Vec<f64>,
    /// (X'X)⁻¹ over the kept columns, as R⁻¹R⁻ᵀ unscaled.
    pub xtx_inv: DMatrix<f64>,
    /// The first `kept.len()` entries of Qᵀy.
    pub effects: Vec<f64>,
    /// Diagonal of the hat matrix: squared row norms of the thin Q = X R⁻¹;
    /// empty when the solve was asked to skip it.
    pub leverage: Vec<f64>,
    /// y − Xb, computed in the working precision.
    pub residuals: DVector<f64>,
    /// The triangular factor R of the unit-length columns.
    pub r: DMatrix<f64>,
}

/// Whether a solve also computes each row's leverage, which costs about as
/// much as the factorization itself.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Leverage {
    /// Compute the diagonal of the hat matrix.
    Wanted,
    /// Leave [`Solved::leverage`] empty.
    Skipped,
}

/// The columns of a [`DesignMatrix`] as a solve reads them.
#[derive(Clone, Copy)]
pub struct Columns<'a> {
    base: &'a DesignMatrix,
    /// Whether the low parts of the columns are added.
    low: bool,
}

impl<'a> Columns<'a> {
    /// The columns of `base`, their double-precision parts.
    pub fn of(base: &'a DesignMatrix) -> Self {
        Columns { base, low: false }
    }

    /// The same columns with the base's low parts added, for a solve in
    /// double-double.
    pub fn with_low_parts(self) -> Self {
        Columns { low: true, ..self }
    }

    pub(super) fn rows(&self) -> usize {
        self.base.nrows()
    }

    pub(super) fn count(&self) -> usize {
        self.base.ncols()
    }

    /// Appends entries `rows` of column `j` to `out`, or of `y` when `j` is
    /// one past the last column.
    pub(super) fn fill_or_y<T: Real>(
        &self,
        y: &DVector<f64>,
        j: usize,
        rows: std::ops::Range<usize>,
        out: &mut Vec<T>,
    ) {
        if j < self.count() {
            self.fill(j, rows, out);
        } else {
            out.extend(y.as_slice()[rows].iter().map(|&v| T::of(v)));
        }
    }

    /// Appends entries `rows` of column `j` to `out`, in the arithmetic `T`.
    pub(super) fn fill<T: Real>(&self, j: usize, rows: std::ops::Range<usize>, out: &mut Vec<T>) {
        let mut hi = Vec::with_capacity(rows.len());
        self.base.fill(j, rows.clone(), &mut hi);
        if self.low && self.base.has_low(j) {
            let mut lo = Vec::with_capacity(rows.len());
            self.base.fill_low(j, rows, &mut lo);
            out.extend(hi.iter().zip(&lo).map(|(&h, &l)| T::of(h) + T::of(l)));
        } else {
            out.extend(hi.iter().map(|&h| T::of(h)));
        }
    }
}

/// A categorical term with at least this many indicator columns is reduced
/// by its codes ([`Absorbed`]); a narrower one costs less as dense columns
/// (the reduction reads the other columns three times more).
pub const ABSORB_FROM: usize = 32;

/// Solves least squares for `columns` (their low parts included when
/// [`Columns::with_low_parts`] asked for them) and response `y`, in the
/// arithmetic `T`. The columns are read in blocks of rows, never formed
/// whole.
pub fn solve<T: Real>(columns: Columns<'_>, y: &DVector<f64>, leverage: Leverage) -> Solved {
    solve_absorbing::<T>(columns, y, leverage, ABSORB_FROM)
}

/// [`solve`], reducing the widest categorical term by its codes when it
/// has at least `absorb_from` indicator columns.
pub(super) fn solve_absorbing<T: Real>(
    columns: Columns<'_>,
    y: &DVector<f64>,
    leverage: Leverage,
    absorb_from: usize,
) -> Solved {
    let n = columns.rows();
    let zero = T::of(0.0);
    let Factored {
        absorbed,
        factor,
        qty,
    } = factored::<T>(columns, y, absorb_from);
    let rank = factor.kept.len();
    let effects = &qty[..rank];
    let r_inv = factor.r_inverse();
    let scale = &factor.scale;
    let kept = &factor.kept;
    let scaled_beta: Vec<T> = (0..rank)
        .map(|i| (i..rank).fold(zero, |s, c| s + r_inv[c][i] * effects[c]))
        .collect();
    let beta: Vec<T> = kept
        .iter()
        .zip(&scaled_beta)
        .map(|(&j, &b)| b / scale[j])
        .collect();
    // R⁻¹R⁻ᵀ as a sum of outer products of the columns of R⁻¹, its lower
    // triangle accumulated by columns and mirrored.
    let mut lower: Vec<Vec<T>> = (0..rank).map(|b| vec![zero; rank - b]).collect();
    for column in &r_inv {
        for (b, &cb) in column.iter().enumerate() {
            for (s, &ca) in lower[b].iter_mut().zip(&column[b..]) {
                *s = *s + ca * cb;
            }
        }
    }
    let xtx_inv = DMatrix::from_fn(rank, rank, |a, b| {
        let (a, b) = (a.max(b), a.min(b));
        (lower[b][a - b] / (scale[kept[a]] * scale[kept[b]])).value()
    });

    // One pass over the rows gives the residuals and, unless the widest
    // categorical term was reduced by its codes (its leverage comes from
    // the reduction), each row's leverage.
    let plain_leverage = leverage == Leverage::Wanted && absorbed.is_none();
    let fill =
        |j: usize, rows: std::ops::Range<usize>, out: &mut Vec<T>| columns.fill(j, rows, out);
    let (mut leverage_of_rows, residuals) =
        factor.rows_pass(n, fill, plain_leverage, Some((y, &beta)));
    if let (Leverage::Wanted, Some(absorbed)) = (leverage, &absorbed) {
        leverage_of_rows = absorbed.leverage(columns, y);
    }
    let leverage = leverage_of_rows;
    Solved {
        beta: DVector::from_iterator(rank, beta.iter().map(|b| b.value())),
        beta_low: beta.iter().map(|b| b.remainder()).collect(),
        xtx_inv,
        effects: effects.iter().map(|e| e.value()).collect(),
        leverage,
        residuals: DVector::from_iterator(n, residuals.iter().map(|r| r.value())),
        r: DMatrix::from_fn(rank, rank, |i, j| factor.r(i, j).value()),
        aliased: factor.aliased,
        kept: factor.kept,
    }
}

/// [X y] reduced and factored: what [`solve`] and [`effects`] share.
struct Factored<T> {
    /// The reduction of the widest categorical term, when it had one.
    absorbed: Option<Absorbed<T>>,
    /// The factorization of the columns of X.
    factor: Triangle<T>,
    /// Qᵀy over the reduced rows.
    qty: Vec<T>,
}

/// [X y] reduced to at most p + 1 rows with the same column lengths and
/// inner products, then factored column by column: on this small problem
/// the factorization finds what it would on the n rows, and no n-row factor
/// is ever stored. The indicators of the widest categorical term, when it
/// has `absorb_from` or more, are reduced by their codes ([`Absorbed`]),
/// the other columns block by block.
fn factored<T: Real>(columns: Columns<'_>, y: &DVector<f64>, absorb_from: usize) -> Factored<T> {
    let (n, p) = (columns.rows(), columns.count());
    let absorbed = columns
        .base
        .widest_indicator_group()
        .filter(|group| group.columns.len() >= absorb_from)
        .map(|group| Absorbed::<T>::of(columns, y, group));
    let small = match &absorbed {
        Some(absorbed) => absorbed.reduced(columns, y),
        None => reduce_rows::<T>(n, p + 1, |j, rows, out| columns.fill_or_y(y, j, rows, out)),
    };
    let factor = Triangle::of(&small[..p], small[p].len());
    let mut qty: Vec<T> = small[p].clone();
    factor.reflect(&mut qty);
    Factored {
        absorbed,
        factor,
        qty,
    }
}

/// What an auxiliary regression (one that only feeds a test statistic)
/// needs: the estimable columns, Qᵀy's first entries (the effects, whose
/// squares sum to the explained sum of squares), the residual sum of
/// squares from Qᵀy's other entries, and R; in double precision, without a
/// pass for residuals.
#[derive(Debug, Clone)]
pub struct Effects {
    /// Indices of the estimable columns, in order.
    pub kept: Vec<usize>,
    /// The first `kept.len()` entries of Qᵀy.
    pub effects: Vec<f64>,
    /// Residual sum of squares, the sum of the squares of Qᵀy's other
    /// entries.
    pub sse: f64,
    /// The triangular factor of the kept columns scaled to unit length.
    pub r: DMatrix<f64>,
}

/// [`Effects`] of the regression of `y` on `columns`, in the arithmetic `T`.
pub fn effects<T: Real>(columns: Columns<'_>, y: &DVector<f64>) -> Effects {
    let Factored { factor, qty, .. } = factored::<T>(columns, y, ABSORB_FROM);
    let rank = factor.kept.len();
    Effects {
        sse: qty[rank..]
            .iter()
            .fold(T::of(0.0), |s, &e| s + e * e)
            .value(),
        effects: qty[..rank].iter().map(|e| e.value()).collect(),
        r: DMatrix::from_fn(rank, rank, |i, j| factor.r(i, j).value()),
        kept: factor.kept,
    }
}

/// The Householder factorization of a few columns, scaled to unit length
/// and taken in order, with aliased columns set aside.
pub(super) struct Triangle<T> {
    /// Each column's length before scaling.
    scale: Vec<T>,
    /// Indices of the estimable columns, in order.
    kept: Vec<usize>,
    /// Indices of the aliased columns, in order.
    aliased: Vec<usize>,
    /// One reflector per kept column.
    reflectors: Vec<(Vec<T>, T)>,
    /// Column k of R over the kept columns: its first k + 1 entries.
    r_cols: Vec<Vec<T>>,
}

impl<T: Real> Triangle<T> {
    /// The factorization of `columns`, each `rows` long.
    pub(super) fn of(columns: &[Vec<T>], rows: usize) -> Self {
        let zero = T::of(0.0);
        let p = columns.len();
        let scale: Vec<T> = columns.iter().map(|c| norm(c)).collect();
        let mut kept = Vec::with_capacity(p);
        let mut aliased = Vec::new();
        let mut reflectors: Vec<(Vec<T>, T)> = Vec::with_capacity(p.min(rows));
        let mut r_cols: Vec<Vec<T>> = Vec::with_capacity(p);
        for (j, &length) in scale.iter().enumerate() {
            let k = kept.len();
            if length == zero || k >= rows {
                aliased.push(j);
                continue;
            }
            let inverse = T::of(1.0) / length;
            let mut col: Vec<T> = columns[j].iter().map(|&v| v * inverse).collect();
            for (i, (v, tau)) in reflectors.iter().enumerate() {
                reflect(v, *tau, &mut col[i..]);
            }
            if norm(&col[k..]).value() < ALIAS_TOLERANCE {
                aliased.push(j);
                continue;
            }
            let (v, tau, alpha) = householder(&col[k..]);
            let mut r_col = col[..k].to_vec();
            r_col.push(alpha);
            reflectors.push((v, tau));
            r_cols.push(r_col);
            kept.push(j);
        }
        Triangle {
            scale,
            kept,
            aliased,
            reflectors,
            r_cols,
        }
    }

    /// Entry (i, j) of R.
    fn r(&self, i: usize, j: usize) -> T {
        if i <= j {
            self.r_cols[j][i]
        } else {
            T::of(0.0)
        }
    }

    /// `v` ← Qᵀv.
    fn reflect(&self, v: &mut [T]) {
        for (i, (u, tau)) in self.reflectors.iter().enumerate() {
            reflect(u, *tau, &mut v[i..]);
        }
    }

    /// R⁻¹ by back substitution, one column of the identity at a time,
    /// stored by column: `r_inverse()[c][i]` is entry (i, c), for i ≤ c.
    /// Each step subtracts a multiple of a column of R, so memory is read
    /// in order.
    fn r_inverse(&self) -> Vec<Vec<T>> {
        let zero = T::of(0.0);
        let rank = self.kept.len();
        (0..rank)
            .map(|c| {
                let mut x = vec![zero; c + 1];
                x[c] = T::of(1.0);
                for k in (0..=c).rev() {
                    let r_col = &self.r_cols[k];
                    let xk = x[k] / r_col[k];
                    x[k] = xk;
                    for (xi, &r) in x[..k].iter_mut().zip(r_col) {
                        *xi = *xi - xk * r;
                    }
                }
                x
            })
            .collect()
    }

    /// One pass over the `n` rows that were factored, the kept columns read
    /// a block of rows at a time (`fill(j, rows, out)` appends entries
    /// `rows` of column `j`): with `leverage`, each row's leverage h = ‖row
    /// of Q‖², Q = X_s R⁻¹ (X_s the kept columns scaled to unit length), by
    /// one forward substitution zR = xᵢ per row; with `residual_of` = (y,
    /// b), each row's residual y − Xb, the columns' terms taken in order.
    pub(super) fn rows_pass(
        &self,
        n: usize,
        fill: impl Fn(usize, std::ops::Range<usize>, &mut Vec<T>),
        leverage: bool,
        residual_of: Option<(&DVector<f64>, &[T])>,
    ) -> (Vec<f64>, Vec<T>) {
        let zero = T::of(0.0);
        let rank = self.kept.len();
        let inverse_scale: Vec<T> = self
            .kept
            .iter()
            .map(|&j| T::of(1.0) / self.scale[j])
            .collect();
        let inverse_diagonal: Vec<T> = self
            .r_cols
            .iter()
            .map(|c| T::of(1.0) / c[c.len() - 1])
            .collect();
        let mut leverages = Vec::with_capacity(if leverage { n } else { 0 });
        let mut residuals = Vec::with_capacity(if residual_of.is_some() { n } else { 0 });
        let mut z = vec![zero; rank];
        let mut block: Vec<Vec<T>> = vec![Vec::with_capacity(BLOCK); rank];
        for start in (0..n).step_by(BLOCK) {
            let end = (start + BLOCK).min(n);
            for (values, &j) in block.iter_mut().zip(&self.kept) {
                values.clear();
                fill(j, start..end, values);
            }
            if leverage {
                leverages.extend((0..end - start).map(|i| {
                    let mut sum = zero;
                    for c in 0..rank {
                        let mut v = block[c][i] * inverse_scale[c];
                        for (&zm, &rm) in z[..c].iter().zip(&self.r_cols[c]) {
                            v = v - zm * rm;
                        }
                        z[c] = v * inverse_diagonal[c];
                        sum = sum + z[c] * z[c];
                    }
                    sum.value()
                }));
            }
            if let Some((y, beta)) = residual_of {
                residuals.extend((0..end - start).map(|i| {
                    let mut residual = T::of(y[start + i]);
                    for (values, &b) in block.iter().zip(beta) {
                        residual = residual - values[i] * b;
                    }
                    residual
                }));
            }
        }
        (leverages, residuals)
    }
}

/// Rows of [X y] taken at a time by [`reduce_rows`].
pub(super) const BLOCK: usize = 4096;

/// The triangular factor of the `width` columns that `fill(j, rows, out)`
/// supplies over rows `rows` of `n`, as columns of at most
/// `width` rows: each block of rows is stacked under the factor so far and
/// reduced by Householder reflections (a tall-skinny QR; Demmel, Grigori,
/// Hoemmen & Langou 2012, "Communication-optimal parallel and sequential
/// QR and LU factorizations", SIAM J. Sci. Comput. 34(1)). Memory is one
/// block of rows.
pub(super) fn reduce_rows<T: Real>(
    n: usize,
    width: usize,
    fill: impl Fn(usize, std::ops::Range<usize>, &mut Vec<T>),
) -> Vec<Vec<T>> {
    let zero = T::of(0.0);
    let mut factor: Vec<Vec<T>> = vec![Vec::new(); width];
    for start in (0..n).step_by(BLOCK) {
        let end = (start + BLOCK).min(n);
        let mut stacked = factor;
        for (j, column) in stacked.iter_mut().enumerate() {
            fill(j, start..end, column);
        }
        let rows = stacked[0].len();
        for k in 0..width.min(rows) {
            let (left, right) = stacked.split_at_mut(k + 1);
            let column = &mut left[k];
            let (v, tau, alpha) = householder(&column[k..]);
            column[k] = alpha;
            for value in &mut column[k + 1..] {
                *value = zero;
            }
            for later in right.iter_mut() {
                reflect(&v, tau, &mut later[k..]);
            }
        }
        let kept_rows = width.min(rows);
        for column in &mut stacked {
            column.truncate(kept_rows);
        }
        factor = stacked;
    }
    factor
}

/// Euclidean norm, scaled by the largest entry so that neither tiny nor
/// huge values overflow or underflow.
fn norm<T: Real>(x: &[T]) -> T {
    norm_of(x.iter().copied())
}

/// [`norm`] of values read twice from an iterator.
fn norm_of<T: Real>(x: impl Iterator<Item = T> + Clone) -> T {
    let zero = T::of(0.0);
    let big = x
        .clone()
        .fold(zero, |m, v| if v.abs() > m { v.abs() } else { m });
    if big == zero {
        return zero;
    }
    // Multiplying by 1/big is much cheaper than dividing, above all in
    // double-double; near underflow, where 1/big overflows, divide.
    let inverse = T::of(1.0) / big;
    let sum = if inverse.value().is_finite() {
        x.fold(zero, |s, v| {
            let u = v * inverse;
            s + u * u
        })
    } else {
        x.fold(zero, |s, v| {
            let u = v / big;
            s + u * u
        })
    };
    big * sum.sqrt()
}

/// The reflector H = I − τ v vᵀ, v[0] = 1, with H x = (α, 0, …, 0) and
/// α = −sign(x₀)‖x‖ (Golub & Van Loan, Algorithm 5.1.1).
fn householder<T: Real>(x: &[T]) -> (Vec<T>, T, T) {
    let zero = T::of(0.0);
    let length = norm(x);
    let alpha = if x[0] >= zero { -length } else { length };
    let v0 = x[0] - alpha;
    if v0 == zero {
        let mut v = vec![zero; x.len()];
        v[0] = T::of(1.0);
        return (v, zero, alpha);
    }
    let v: Vec<T> = std::iter::once(T::of(1.0))
        .chain(x[1..].iter().map(|&xi| xi / v0))
        .collect();
    let tau = (alpha - x[0]).abs() / length;
    (v, tau, alpha)
}

/// x ← (I − τ v vᵀ) x.
fn reflect<T: Real>(v: &[T], tau: T, x: &mut [T]) {
    if tau == T::of(0.0) {
        return;
    }
    let s = tau * dot(v, x);
    for (xi, &vi) in x.iter_mut().zip(v) {
        *xi = *xi - s * vi;
    }
}

/// v·x with four running sums, so the compiler can keep several additions
/// in flight.
fn dot<T: Real>(v: &[T], x: &[T]) -> T {
    let zero = T::of(0.0);
    let mut acc = [zero; 4];
    let mut vs = v.chunks_exact(4);
    let mut xs = x.chunks_exact(4);
    for (a, b) in (&mut vs).zip(&mut xs) {
        for k in 0..4 {
            acc[k] = acc[k] + a[k] * b[k];
        }
    }
    let tail = vs
        .remainder()
        .iter()
        .zip(xs.remainder())
        .fold(zero, |s, (&a, &b)| s + a * b);
    (acc[0] + acc[1]) + (acc[2] + acc[3]) + tail
}

/// Condition number of the unit-length-scaled design: the ratio of the
/// largest to the smallest singular value of R (the 2-norm condition
/// number; Belsley, Kuh & Welsch 1980 use it on unit-length columns).
pub fn condition_number(r: &DMatrix<f64>) -> f64 {
    if r.nrows() == 0 {
        return 1.0;
    }
    let s = r.clone().singular_values();
    let max = s.max();
    let min = s.min();
    if min > 0.0 {
        max / min
    } else {
        f64::INFINITY
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn both_precisions_agree_on_a_small_exact_problem() {
        // y = 2 + 3x exactly.
        let x = DMatrix::from_row_slice(4, 2, &[1.0, 0.0, 1.0, 1.0, 1.0, 2.0, 1.0, 4.0]);
        let y = DVector::from_vec(vec![2.0, 5.0, 8.0, 14.0]);
        let x = DesignMatrix::from_dense(&x, None);
        for s in [
            solve::<f64>(Columns::of(&x), &y, Leverage::Wanted),
            solve::<DoubleDouble>(Columns::of(&x), &y, Leverage::Wanted),
        ] {
            assert!((s.beta[0] - 2.0).abs() < 1e-14);
            assert!((s.beta[1] - 3.0).abs() < 1e-14);
            assert!(s.residuals.amax() < 1e-13);
        }
    }

    #[test]
    fn low_parts_reach_the_double_double_solve() {
        // y = x exactly for x = 0, 1, 2; adding 2⁻⁵⁰ below the last x in
        // double-double must move the slope, and only the double-double
        // solve can see it.
        let hi = DMatrix::from_row_slice(3, 2, &[1.0, 0.0, 1.0, 1.0, 1.0, 2.0]);
        let lo = DMatrix::from_row_slice(3, 2, &[0.0, 0.0, 0.0, 0.0, 0.0, 2f64.powi(-50)]);
        let y = DVector::from_vec(vec![0.0, 1.0, 2.0]);
        let exact = DesignMatrix::from_dense(&hi, None);
        let exact =
            solve::<DoubleDouble>(Columns::of(&exact).with_low_parts(), &y, Leverage::Wanted);
        assert_eq!(exact.beta[1], 1.0);
        let x = DesignMatrix::from_dense(&hi, Some(&lo));
        let ignored = solve::<DoubleDouble>(Columns::of(&x), &y, Leverage::Wanted);
        assert_eq!(ignored.beta[1], 1.0);
        let shifted = solve::<DoubleDouble>(Columns::of(&x).with_low_parts(), &y, Leverage::Wanted);
        assert!(shifted.beta[1] < 1.0, "{}", shifted.beta[1]);
        assert!(shifted.residuals.amax() > 0.0);
    }

    #[test]
    fn norm_survives_huge_and_tiny_entries() {
        assert_eq!(norm(&[3e300, 4e300]), 5e300);
        assert!((norm(&[3e-300, 4e-300]) / 5e-300 - 1.0).abs() < 1e-15);
    }

    #[test]
    fn condition_number_of_an_orthogonal_design_is_one() {
        let r = DMatrix::<f64>::identity(3, 3);
        assert_eq!(condition_number(&r), 1.0);
        let r = DMatrix::from_row_slice(2, 2, &[1.0, 0.0, 0.0, 1e-8]);
        assert!((condition_number(&r) - 1e8).abs() < 1.0);
    }
}
