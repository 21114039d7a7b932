//! Heteroscedasticity-consistent ("robust", "sandwich") covariance of the
//! least-squares coefficients.
//!
//! When the errors' variance differs from row to row, s²(X'X)⁻¹ misstates
//! the coefficients' variance. White's (1980) estimator
//!
//! V = (X'X)⁻¹ X'ΩX (X'X)⁻¹ = (X'X)⁻¹ (Σᵢ ωᵢ xᵢxᵢ') (X'X)⁻¹
//!
//! replaces the unknown error variances by weights ωᵢ built from the
//! residuals eᵢ; xᵢ is row i of the design over the estimable columns.
//!
//! References:
//! * White, H. (1980). A heteroskedasticity-consistent covariance matrix
//!   estimator and a direct test for heteroskedasticity. *Econometrica*
//!   48(4), 817–838.
//! * MacKinnon, J. G. & White, H. (1985). Some heteroskedasticity-consistent
//!   covariance matrix estimators with improved finite sample properties.
//!   *Journal of Econometrics* 29(3), 305–325.
//! * Long, J. S. & Ervin, L. H. (2000). Using heteroscedasticity consistent
//!   standard errors in the linear regression model. *The American
//!   Statistician* 54(3), 217–224.

use nalgebra::DMatrix;

use crate::design::DesignMatrix;
use crate::job::Robust;

/// Rows whose leverage is within this of 1 are taken to have leverage 1:
/// leverages are computed to about 10⁻¹⁵, so 1 − hᵢ below 10⁻¹⁰ is rounding,
/// not a measurement.
pub const UNIT_LEVERAGE_TOLERANCE: f64 = 1e-10;

/// Indices of the rows whose leverage is 1 to within
/// [`UNIT_LEVERAGE_TOLERANCE`]: rows the fit passes through whatever their
/// response, such as the only row of a factor level. HC3 leaves them out of
/// its sum (see [`robust_covariance`]); a caller may want to say so.
pub fn unit_leverage_rows(leverage: &[f64]) -> Vec<usize> {
    leverage
        .iter()
        .enumerate()
        .filter(|(_, &h)| 1.0 - h <= UNIT_LEVERAGE_TOLERANCE)
        .map(|(i, _)| i)
        .collect()
}

/// The coefficients (positions in `kept`) that rows of leverage 1 move:
/// those with a non-zero entry in cᵢ = (X'X)⁻¹xᵢ for such a row i, as the
/// indicator of a level with one row. The other coefficients do not depend
/// on those rows' responses at all.
pub fn moved_by_unit_leverage_rows(
    x: &DesignMatrix,
    kept: &[usize],
    xtx_inv: &DMatrix<f64>,
    leverage: &[f64],
) -> Vec<usize> {
    let p = kept.len();
    let mut moved = vec![false; p];
    for i in unit_leverage_rows(leverage) {
        if i >= x.nrows() || xtx_inv.shape() != (p, p) {
            continue;
        }
        let row = x.dense_block(i..i + 1, kept);
        let c = xtx_inv * row.transpose();
        let largest = c.amax();
        for (k, v) in c.iter().enumerate() {
            if v.abs() > 1e-9 * largest {
                moved[k] = true;
            }
        }
    }
    (0..p).filter(|&k| moved[k]).collect()
}

/// The heteroscedasticity-consistent covariance matrix of the coefficients
/// over the estimable columns `kept` of `x`, in the order of `kept`.
///
/// `xtx_inv` is (X'X)⁻¹ over those columns, `residuals` and `leverage` one
/// value per row of `x` (all as in [`crate::fit::LeastSquares`]; pass
/// `residuals.as_slice()`). With cᵢ = (X'X)⁻¹xᵢ, the estimate is
///
/// V = Σᵢ ωᵢ cᵢcᵢ'  (White 1980),
///
/// * HC1: ωᵢ = n/(n − p)·eᵢ² (MacKinnon & White 1985);
/// * HC3: ωᵢ = eᵢ²/(1 − hᵢ)² (MacKinnon & White 1985; Long & Ervin 2000).
///
/// The standard errors are the square roots of the diagonal. V is formed as
/// W'W, W the rows √ωᵢ·cᵢ', so it is symmetric and never has a negative
/// diagonal.
///
/// A row with leverage 1 (see [`UNIT_LEVERAGE_TOLERANCE`]) has a zero
/// residual whatever its error, so its HC3 weight is 0/0. The coefficients
/// such a row does not move (those the other rows determine alone) get
/// exactly the variance they would get without it; the variance and
/// covariances of a coefficient it moves ([`moved_by_unit_leverage_rows`],
/// the indicator of a level with one row) would need that row's own error
/// variance, which no residual can estimate, and are NaN: undefined, as the
/// reference libraries report them. HC1's weight for the row is its zero
/// residual, so HC1 gives those coefficients a variance that leaves that
/// error variance out: too small, which the Checks sheet says.
///
/// When the shapes disagree (`xtx_inv` not p × p, `residuals` or, for HC3,
/// `leverage` not one per row, an index of `kept` past the columns of `x`)
/// or there are no more rows than coefficients, the variance is undefined
/// and every entry is NaN.
pub fn robust_covariance(
    x: &DesignMatrix,
    kept: &[usize],
    xtx_inv: &DMatrix<f64>,
    residuals: &[f64],
    leverage: &[f64],
    kind: Robust,
) -> DMatrix<f64> {
    let p = kept.len();
    let n = x.nrows();
    let shapes_agree = xtx_inv.shape() == (p, p)
        && residuals.len() == n
        && (kind == Robust::Hc1 || leverage.len() == n)
        && kept.iter().all(|&j| j < x.ncols());
    if !shapes_agree || n <= p {
        return DMatrix::from_element(p, p, f64::NAN);
    }
    if let Robust::Hac(lags) = kind {
        return newey_west(x, kept, xtx_inv, residuals, lags.unwrap_or(0) as usize);
    }
    // Row i of W is √ωᵢ cᵢ', cᵢ' = xᵢ'(X'X)⁻¹ ((X'X)⁻¹ is symmetric); V =
    // W'W, summed over blocks of rows.
    let hc1_scale = (n as f64 / (n - p) as f64).sqrt();
    let mut v = DMatrix::zeros(p, p);
    for rows in x.blocks() {
        let start = rows.start;
        let mut w = x.dense_block(rows, kept) * xtx_inv;
        for (k, mut row) in w.row_iter_mut().enumerate() {
            let i = start + k;
            let e = residuals[i].abs();
            let root_weight = match kind {
                // HAC was computed above; HC1 here.
                Robust::Hc1 | Robust::Hac(_) => hc1_scale * e,
                Robust::Hc3 => {
                    let room = 1.0 - leverage[i];
                    if room <= UNIT_LEVERAGE_TOLERANCE {
                        0.0
                    } else {
                        e / room
                    }
                }
            };
            row *= root_weight;
        }
        v += w.transpose() * &w;
    }
    if kind == Robust::Hc3 {
        for k in moved_by_unit_leverage_rows(x, kept, xtx_inv, leverage) {
            v.row_mut(k).fill(f64::NAN);
            v.column_mut(k).fill(f64::NAN);
        }
    }
    v
}

/// The usual number of Newey-West lags for `n` rows in period order,
/// floor(4 (n/100)^(2/9)) (Newey & West 1994; common practice).
pub fn newey_west_lags(n: usize) -> u32 {
    (4.0 * (n as f64 / 100.0).powf(2.0 / 9.0)).floor() as u32
}

/// Newey-West covariance (Newey & West 1987): with sᵢ = (X'X)⁻¹xᵢeᵢ the
/// rows' scores in period order, V = Σᵢ sᵢsᵢ' + Σₗ₌₁ᴸ (1 − l/(L + 1))
/// Σᵢ₌ₗ₊₁ⁿ (sᵢsᵢ₋ₗ' + sᵢ₋ₗsᵢ'), without a small-sample factor (as R's
/// `sandwich::NeweyWest(fit, lag = L, prewhite = FALSE, adjust = FALSE)`).
fn newey_west(
    x: &DesignMatrix,
    kept: &[usize],
    xtx_inv: &DMatrix<f64>,
    residuals: &[f64],
    lags: usize,
) -> DMatrix<f64> {
    let (n, p) = (x.nrows(), kept.len());
    let mut scores = DMatrix::zeros(n, p);
    for rows in x.blocks() {
        let start = rows.start;
        let mut block = x.dense_block(rows, kept) * xtx_inv;
        for (k, mut row) in block.row_iter_mut().enumerate() {
            row *= residuals[start + k];
        }
        scores.rows_mut(start, block.nrows()).copy_from(&block);
    }
    let mut v = scores.transpose() * &scores;
    for l in 1..=lags.min(n.saturating_sub(1)) {
        let weight = 1.0 - l as f64 / (lags as f64 + 1.0);
        let cross = scores.rows(l, n - l).transpose() * scores.rows(0, n - l);
        v += (&cross + cross.transpose()) * weight;
    }
    v
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::design::DesignMatrix;
    use crate::fit::least_squares;
    use nalgebra::DVector;

    /// A straight line through six points with unequal scatter.
    fn line() -> (DMatrix<f64>, DVector<f64>) {
        let xs = [1.0, 2.0, 3.0, 4.0, 5.0, 6.0];
        let ys = [1.2, 1.9, 3.4, 3.7, 5.9, 5.1];
        let x = DMatrix::from_fn(6, 2, |i, j| if j == 0 { 1.0 } else { xs[i] });
        (x, DVector::from_row_slice(&ys))
    }

    #[test]
    fn newey_west_without_lags_is_white_and_its_lags_add_the_bartlett_terms() {
        let (x, y) = line();
        let design = DesignMatrix::from_dense(&x, None);
        let ls = least_squares(&design, &y);
        let e = ls.residuals.as_slice();
        let hac = |lags| {
            robust_covariance(
                &design,
                &ls.kept,
                &ls.xtx_inv,
                e,
                &ls.leverage,
                Robust::Hac(Some(lags)),
            )
        };
        let hc1 = robust_covariance(&design, &ls.kept, &ls.xtx_inv, e, &ls.leverage, Robust::Hc1);
        // Lag 0 is White's HC0, HC1 without its n/(n − p).
        let white = hac(0);
        assert!((white[(1, 1)] * 6.0 / 4.0 - hc1[(1, 1)]).abs() < 1e-15);
        // Lag 1 adds (1 − 1/2)·Σ (sᵢsᵢ₋₁' + sᵢ₋₁sᵢ') for the slope's scores
        // sᵢ = (xᵢ − x̄)eᵢ/Sxx.
        let xs: Vec<f64> = x.column(1).iter().copied().collect();
        let mean = xs.iter().sum::<f64>() / 6.0;
        let sxx: f64 = xs.iter().map(|v| (v - mean).powi(2)).sum();
        let score: Vec<f64> = (0..6).map(|i| (xs[i] - mean) * e[i] / sxx).collect();
        let cross: f64 = (1..6).map(|i| score[i] * score[i - 1]).sum();
        assert!((hac(1)[(1, 1)] - (white[(1, 1)] + cross)).abs() < 1e-14);
        assert_eq!(newey_west_lags(100), 4);
        assert_eq!(newey_west_lags(60), 3);
    }

    #[test]
    fn slope_of_a_line_matches_the_closed_form() {
        // For y = a + b·x, HC0 of the slope is Σ (xᵢ − x̄)² eᵢ² / Sxx²
        // (White 1980); HC1 scales it by n/(n − 2), HC3 divides each term
        // by (1 − hᵢ)².
        let (x, y) = line();
        let ls = least_squares(&DesignMatrix::from_dense(&x, None), &y);
        let xs: Vec<f64> = x.column(1).iter().copied().collect();
        let mean = xs.iter().sum::<f64>() / 6.0;
        let sxx: f64 = xs.iter().map(|v| (v - mean).powi(2)).sum();
        let term = |i: usize| (xs[i] - mean).powi(2) * ls.residuals[i].powi(2) / (sxx * sxx);
        let hc1: f64 = (0..6).map(term).sum::<f64>() * 6.0 / 4.0;
        let hc3: f64 = (0..6)
            .map(|i| term(i) / (1.0 - ls.leverage[i]).powi(2))
            .sum();
        let e = ls.residuals.as_slice();
        let v1 = robust_covariance(
            &DesignMatrix::from_dense(&x, None),
            &ls.kept,
            &ls.xtx_inv,
            e,
            &ls.leverage,
            Robust::Hc1,
        );
        let v3 = robust_covariance(
            &DesignMatrix::from_dense(&x, None),
            &ls.kept,
            &ls.xtx_inv,
            e,
            &ls.leverage,
            Robust::Hc3,
        );
        assert!(
            (v1[(1, 1)] / hc1 - 1.0).abs() < 1e-13,
            "{} vs {hc1}",
            v1[(1, 1)]
        );
        assert!(
            (v3[(1, 1)] / hc3 - 1.0).abs() < 1e-13,
            "{} vs {hc3}",
            v3[(1, 1)]
        );
        assert_eq!(v1, v1.transpose());
    }

    #[test]
    fn a_row_with_leverage_one_leaves_only_the_coefficient_it_moves_undefined() {
        // The last column is the indicator of the last row alone: its
        // leverage is 1 and its residual 0.
        let (x, y) = line();
        let x = x.insert_column(2, 0.0);
        let mut x = x;
        x[(5, 2)] = 1.0;
        let ls = least_squares(&DesignMatrix::from_dense(&x, None), &y);
        assert_eq!(unit_leverage_rows(&ls.leverage), vec![5]);
        let e = ls.residuals.as_slice();
        let v = robust_covariance(
            &DesignMatrix::from_dense(&x, None),
            &ls.kept,
            &ls.xtx_inv,
            e,
            &ls.leverage,
            Robust::Hc3,
        );
        // The indicator's variance would need that row's own error variance:
        // undefined, with its covariances.
        assert_eq!(
            moved_by_unit_leverage_rows(
                &DesignMatrix::from_dense(&x, None),
                &ls.kept,
                &ls.xtx_inv,
                &ls.leverage
            ),
            vec![2]
        );
        for k in 0..3 {
            assert!(v[(2, k)].is_nan() && v[(k, 2)].is_nan(), "{v}");
        }
        // Intercept and slope: as from the first five rows alone.
        let (x5, y5) = (
            x.rows(0, 5).columns(0, 2).into_owned(),
            y.rows(0, 5).into_owned(),
        );
        let ls5 = least_squares(&DesignMatrix::from_dense(&x5, None), &y5);
        let e5 = ls5.residuals.as_slice();
        let v5 = robust_covariance(
            &DesignMatrix::from_dense(&x5, None),
            &ls5.kept,
            &ls5.xtx_inv,
            e5,
            &ls5.leverage,
            Robust::Hc3,
        );
        for (j, k) in [(0, 0), (0, 1), (1, 1)] {
            assert!((v[(j, k)] / v5[(j, k)] - 1.0).abs() < 1e-10, "{j},{k}");
        }
    }

    #[test]
    fn mismatched_or_too_short_inputs_give_nan_not_a_panic() {
        let (x, y) = line();
        let ls = least_squares(&DesignMatrix::from_dense(&x, None), &y);
        let e = ls.residuals.as_slice();
        let h = &ls.leverage;
        let nan = |v: DMatrix<f64>| v.shape() == (2, 2) && v.iter().all(|v| v.is_nan());
        for kind in [Robust::Hc1, Robust::Hc3] {
            assert!(nan(robust_covariance(
                &DesignMatrix::from_dense(&x, None),
                &[0, 1],
                &ls.xtx_inv,
                &e[..5],
                h,
                kind
            )));
            assert!(nan(robust_covariance(
                &DesignMatrix::from_dense(&x, None),
                &[0, 7],
                &ls.xtx_inv,
                e,
                h,
                kind
            )));
            let wrong = DMatrix::zeros(3, 3);
            assert!(nan(robust_covariance(
                &DesignMatrix::from_dense(&x, None),
                &[0, 1],
                &wrong,
                e,
                h,
                kind
            )));
            let two = x.rows(0, 2).into_owned();
            assert!(nan(robust_covariance(
                &DesignMatrix::from_dense(&two, None),
                &[0, 1],
                &ls.xtx_inv,
                &e[..2],
                &h[..2],
                kind
            )));
        }
        assert!(nan(robust_covariance(
            &DesignMatrix::from_dense(&x, None),
            &[0, 1],
            &ls.xtx_inv,
            e,
            &h[..3],
            Robust::Hc3
        )));
        // HC1 does not read the leverages.
        let v = robust_covariance(
            &DesignMatrix::from_dense(&x, None),
            &[0, 1],
            &ls.xtx_inv,
            e,
            &[],
            Robust::Hc1,
        );
        assert!(v.iter().all(|v| v.is_finite()));
        // No coefficients: an empty matrix.
        let v = robust_covariance(
            &DesignMatrix::from_dense(&x, None),
            &[],
            &DMatrix::zeros(0, 0),
            e,
            h,
            Robust::Hc3,
        );
        assert_eq!(v.shape(), (0, 0));
    }
}
