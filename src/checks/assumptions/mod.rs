//! Tests of the assumptions behind a linear model: independent errors
//! (Durbin-Watson, Breusch-Godfrey), constant error variance (Breusch-Pagan),
//! normal errors (Jarque-Bera, Shapiro-Wilk) and a linear form (RESET).
//!
//! Each test is a pure function of the residuals, the design matrix and, for
//! RESET, the response and the fit, and returns a [`TestResult`], or
//! `None` when the test is undefined for its input: too few rows, residuals
//! with no spread, values that are not finite, or lengths that do not match.
//! Rows are taken in the order given, which for the serial-correlation tests
//! must be their time order.
//!
//! Every auxiliary regression goes through
//! [`crate::fit::auxiliary_least_squares`], so
//! aliased columns are set aside as in the model itself, and degrees of
//! freedom count the estimable (kept) columns only. Explained sums of squares
//! are read from the QR effects (the squared entries of Qᵀy), which keeps
//! their digits when they are small.

use std::sync::Arc;

use nalgebra::{DMatrix, DVector, SymmetricEigen};
use statrs::distribution::{ChiSquared, ContinuousCDF, Normal};

use crate::design::{DesignColumn, DesignMatrix};

mod durbin_watson;
mod ljung_box;
mod reset;
mod shapiro_wilk;

use crate::fit::{auxiliary_least_squares, auxiliary_least_squares_with, Auxiliary};
pub use durbin_watson::{durbin_watson, DW_EXACT_BELOW, DW_EXACT_TOLERANCE};
pub use ljung_box::{ljung_box, ljung_box_lags};
pub use reset::{reset, reset_or_why};
pub use shapiro_wilk::{shapiro_wilk, SHAPIRO_WILK_MAX, SHAPIRO_WILK_MIN};

/// Result of one test.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct TestResult {
    /// The test statistic.
    pub statistic: f64,
    /// Degrees of freedom of the reference distribution (χ²), or its
    /// numerator degrees of freedom (F); `None` when the distribution has
    /// none (Durbin-Watson, Shapiro-Wilk).
    pub df: Option<f64>,
    /// Denominator degrees of freedom of an F reference distribution.
    pub df2: Option<f64>,
    /// The p-value; `None` when it cannot be computed for this input.
    pub p_value: Option<f64>,
}

/// Breusch-Godfrey Lagrange-multiplier test for serial correlation of
/// orders 1 to `order` in residuals in time order.
///
/// The residuals e are regressed on [X, e₋₁, …, e₋ₒ], eₜ₋ⱼ set to 0 where
/// t ≤ j (the missing initial lags are filled with zeros); LM = n·R², R² =
/// Σ ê² / Σ e² the explained share of that auxiliary regression (its R²
/// about zero, which is the usual R² when X has an intercept, since the
/// residuals then average zero). Under no serial correlation LM is
/// asymptotically χ² with as many degrees of freedom as lag columns kept
/// (`order` unless some are aliased) (Breusch, T. S. 1978, "Testing for
/// autocorrelation in dynamic linear models", Australian Economic Papers
/// 17; Godfrey, L. G. 1978, "Testing against general autoregressive and
/// moving average error models when the regressors include lagged dependent
/// variables", Econometrica 46(6)).
///
/// `None` when `order` is 0 or not below n, the residuals are all zero, no
/// lag column is estimable, or the auxiliary regression leaves no residual
/// degrees of freedom.
pub fn breusch_godfrey(residuals: &[f64], x: &DesignMatrix, order: usize) -> Option<TestResult> {
    let n = residuals.len();
    if order == 0 || order >= n || x.nrows() != n || !all_finite(residuals) || !x.all_finite() {
        return None;
    }
    let sse: f64 = residuals.iter().map(|e| e * e).sum();
    if !is_positive(sse) {
        return None;
    }
    let p = x.ncols();
    let shared: Arc<[f64]> = residuals.into();
    let lags = DesignMatrix::new(
        n,
        (1..=order)
            .map(|lag| DesignColumn::Lagged {
                values: Arc::clone(&shared),
                lag,
            })
            .collect(),
    );
    let ls = auxiliary_least_squares_with(x, &lags, residuals);
    let df = ls.kept.iter().filter(|&&j| j >= p).count();
    if df == 0 || ls.kept.len() >= n {
        return None;
    }
    let statistic = n as f64 * explained(&ls) / sse;
    result(
        statistic,
        Some(df as f64),
        None,
        chi_squared_sf(statistic, df as f64),
    )
}

/// Koenker's studentized Breusch-Pagan test for error variance that changes
/// with the columns of Z.
///
/// The squared residuals, centred, w = e² − mean(e²), are regressed on Z;
/// LM = n·R² of that regression, R² = Σ ŵ² / Σ w², asymptotically χ² with
/// (kept columns of Z − 1) degrees of freedom under constant variance
/// (Breusch, T. S. & Pagan, A. R. 1979, "A simple test for
/// heteroscedasticity and random coefficient variation", Econometrica
/// 47(5); the studentized form, robust to non-normal errors, from Koenker,
/// R. 1981, "A note on studentizing a test for heteroscedasticity", Journal
/// of Econometrics 17(1)).
///
/// `z` must include the intercept column; it is usually the model's own
/// design. `None` when the squared residuals are all equal, Z has fewer than
/// two estimable columns, or the regression leaves no residual degrees of
/// freedom.
pub fn breusch_pagan(residuals: &[f64], z: &DesignMatrix) -> Option<TestResult> {
    let n = residuals.len();
    if n < 2 || z.nrows() != n || !all_finite(residuals) || !z.all_finite() {
        return None;
    }
    let squares: Vec<f64> = residuals.iter().map(|e| e * e).collect();
    let mean = squares.iter().sum::<f64>() / n as f64;
    let w = DVector::from_iterator(n, squares.iter().map(|s| s - mean));
    let total = w.norm_squared();
    if !is_positive(total) {
        return None;
    }
    let ls = auxiliary_least_squares(z, w.as_slice());
    let k = ls.kept.len();
    if k < 2 || k >= n {
        return None;
    }
    let df = (k - 1) as f64;
    let statistic = n as f64 * explained(&ls) / total;
    result(statistic, Some(df), None, chi_squared_sf(statistic, df))
}

/// Jarque-Bera test of normality from skewness and kurtosis.
///
/// JB = n/6 · (S² + (K − 3)²/4), S = m₃/m₂^{3/2} the sample skewness and
/// K = m₄/m₂² the sample kurtosis, mₖ = Σ(xᵢ − x̄)ᵏ/n the central moments
/// (divided by n); asymptotically χ²(2) under normality (Jarque, C. M. &
/// Bera, A. K. 1980, "Efficient tests for normality, homoscedasticity and
/// serial independence of regression residuals", Economics Letters 6(3)).
///
/// `None` with fewer than three values or when they are all equal.
pub fn jarque_bera(residuals: &[f64]) -> Option<TestResult> {
    let n = residuals.len();
    if n < 3 || !all_finite(residuals) {
        return None;
    }
    let nf = n as f64;
    let mean = residuals.iter().sum::<f64>() / nf;
    let (mut m2, mut m3, mut m4) = (0.0, 0.0, 0.0);
    for &v in residuals {
        let d = v - mean;
        let d2 = d * d;
        m2 += d2;
        m3 += d2 * d;
        m4 += d2 * d2;
    }
    m2 /= nf;
    m3 /= nf;
    m4 /= nf;
    if !is_positive(m2) {
        return None;
    }
    let skewness = m3 / m2.powf(1.5);
    let kurtosis = m4 / (m2 * m2);
    let statistic = nf / 6.0 * (skewness * skewness + (kurtosis - 3.0).powi(2) / 4.0);
    result(statistic, Some(2.0), None, chi_squared_sf(statistic, 2.0))
}

/// A [`TestResult`], or `None` when the statistic is not finite (sums of
/// squares that overflowed).
pub(super) fn result(
    statistic: f64,
    df: Option<f64>,
    df2: Option<f64>,
    p_value: Option<f64>,
) -> Option<TestResult> {
    statistic.is_finite().then_some(TestResult {
        statistic,
        df,
        df2,
        p_value,
    })
}

/// Explained sum of squares Σ ŷ² of a least-squares solution: the sum of
/// its squared effects.
fn explained(ls: &Auxiliary) -> f64 {
    ls.effects.iter().map(|e| e * e).sum()
}

/// Upper tail P(χ²(df) > stat); `None` when `stat` is not a number.
fn chi_squared_sf(stat: f64, df: f64) -> Option<f64> {
    if stat.is_nan() {
        return None;
    }
    let dist = ChiSquared::new(df).ok()?;
    Some(dist.sf(stat.max(0.0)))
}

/// c₀ + c₁x + c₂x² + … by Horner's rule.
fn polynomial(coefficients: &[f64], x: f64) -> f64 {
    coefficients.iter().rev().fold(0.0, |acc, c| acc * x + c)
}

/// Whether `v` is above zero (false for NaN).
pub(super) fn is_positive(v: f64) -> bool {
    v > 0.0
}

pub(super) fn all_finite(values: &[f64]) -> bool {
    values.iter().all(|v| v.is_finite())
}

#[cfg(test)]
mod tests {
    use super::durbin_watson::*;
    use super::shapiro_wilk::*;
    use super::*;
    use crate::fit::least_squares;
    use statrs::distribution::FisherSnedecor;
    use std::f64::consts::PI;

    fn with_intercept(columns: &[&[f64]]) -> DMatrix<f64> {
        let n = columns.first().map_or(0, |c| c.len());
        let mut x = DMatrix::from_element(n, columns.len() + 1, 1.0);
        for (j, c) in columns.iter().enumerate() {
            for (i, v) in c.iter().enumerate() {
                x[(i, j + 1)] = *v;
            }
        }
        x
    }

    fn dm(x: &DMatrix<f64>) -> DesignMatrix {
        DesignMatrix::from_dense(x, None)
    }

    fn residuals_of(x: &DMatrix<f64>, y: &[f64]) -> Vec<f64> {
        least_squares(&dm(x), &DVector::from_column_slice(y))
            .residuals
            .iter()
            .copied()
            .collect()
    }

    #[test]
    fn kronrod_rule_integrates_polynomials_to_degree_23_exactly() {
        for degree in [0, 1, 2, 7, 13, 20, 22, 23] {
            let (k, _, _) = kronrod_15(&|x: f64| x.powi(degree), -1.0, 1.0);
            let exact = if degree % 2 == 1 {
                0.0
            } else {
                2.0 / (degree as f64 + 1.0)
            };
            assert!((k - exact).abs() < 1e-15, "degree {degree}: {k}");
        }
        // The embedded Gauss rule is exact to degree 13.
        let (k, diff, _) = kronrod_15(&|x: f64| x.powi(12), -1.0, 1.0);
        assert!(diff.abs() < 1e-15, "{k} {diff}");
    }

    #[test]
    fn imhof_matches_the_ratio_of_two_chi_squares() {
        // P(z₁² − 3 z₂² < 0) = P(|z₁/z₂| < √3) = (2/π)·atan √3 = 2/3.
        let p = imhof_lower_tail(&[1.0, -3.0]).unwrap();
        assert!((p - 2.0 / 3.0).abs() < 1e-12, "{p}");
        // Σ₁³ zᵢ² − c Σ₄⁸ zᵢ² < 0 ⇔ F(3, 5) < 5c/3.
        let c = 0.7;
        let lambda = [1.0, 1.0, 1.0, -c, -c, -c, -c, -c];
        let p = imhof_lower_tail(&lambda).unwrap();
        let f = FisherSnedecor::new(3.0, 5.0).unwrap().cdf(5.0 * c / 3.0);
        assert!((p - f).abs() < 1e-12, "{p} vs {f}");
    }

    #[test]
    fn imhof_is_certain_when_all_weights_share_a_sign() {
        assert_eq!(imhof_lower_tail(&[1.0, 2.0, 0.0]), Some(0.0));
        assert_eq!(imhof_lower_tail(&[-1.0, -2.0]), Some(1.0));
        assert_eq!(imhof_lower_tail(&[0.0]), Some(1.0));
    }

    #[test]
    fn durbin_watson_exact_on_three_rows_matches_the_hand_computation() {
        // Intercept only, n = 3: MAM has eigenvalues 1 and 3 on the range of
        // M, so P(D ≤ d) = 1 − (2/π)·atan √((3 − d)/(d − 1)) for 1 < d < 3.
        // e = (2, −1, −1): d = (9 + 0)/6 = 1.5, P = 1 − (2/π)(π/3) = 1/3.
        let x = DMatrix::from_element(3, 1, 1.0);
        let r = durbin_watson(&[2.0, -1.0, -1.0], &dm(&x)).unwrap();
        assert!((r.statistic - 1.5).abs() < 1e-15);
        let p = r.p_value.unwrap();
        assert!((p - 1.0 / 3.0).abs() < 1e-12, "{p}");
    }

    #[test]
    fn durbin_watson_eigenvalues_have_the_exact_mean_of_the_moments() {
        // The exact route's eigenvalues sum to tr(MA), which the normal
        // route computes from the basis: the two routes agree on E D.
        let t: Vec<f64> = (0..40).map(|i| i as f64).collect();
        let s: Vec<f64> = t.iter().map(|v| (v * 0.7).sin()).collect();
        let x = with_intercept(&[&t, &s]);
        let basis = column_basis(&dm(&x)).unwrap();
        let lambda = dw_eigenvalues(&basis).unwrap();
        assert_eq!(lambda.len(), 37);
        let traces = dw_traces(&dm(&x)).unwrap();
        assert_eq!(traces.rank, 3);
        let sum: f64 = lambda.iter().sum();
        assert!((sum - traces.ma).abs() < 1e-10, "{sum} vs {}", traces.ma);
        // And their squares sum to tr((MA)²).
        let sum2: f64 = lambda.iter().map(|l| l * l).sum();
        assert!(
            (sum2 - traces.ma_squared).abs() < 1e-9,
            "{sum2} vs {}",
            traces.ma_squared
        );
    }

    #[test]
    fn durbin_watson_exact_and_normal_routes_are_close_near_the_switch() {
        let n = 120;
        let t: Vec<f64> = (0..n).map(|i| i as f64).collect();
        let y: Vec<f64> = t
            .iter()
            .map(|v| 1.0 + 0.1 * v + (v * 1.3).sin() + 0.5 * (v * 0.37).cos())
            .collect();
        let x = with_intercept(&[&t]);
        let e = residuals_of(&x, &y);
        let normal = durbin_watson(&e, &dm(&x)).unwrap();
        let basis = column_basis(&dm(&x)).unwrap();
        let exact = dw_exact_lower_tail(normal.statistic, &basis).unwrap();
        let approx = normal.p_value.unwrap();
        assert!((exact - approx).abs() < 0.02, "{exact} vs {approx}");
    }

    #[test]
    fn durbin_watson_declines_degenerate_input() {
        let x = DMatrix::from_element(4, 1, 1.0);
        assert!(durbin_watson(&[0.0; 4], &dm(&x)).is_none());
        assert!(durbin_watson(&[1.0], &dm(&DMatrix::from_element(1, 1, 1.0))).is_none());
        assert!(durbin_watson(&[1.0, f64::NAN, 0.0, 2.0], &dm(&x)).is_none());
        assert!(
            durbin_watson(&[1.0, 2.0], &dm(&x)).is_none(),
            "length mismatch"
        );
        // Two rows: a statistic but no p-value.
        let r = durbin_watson(&[1.0, -1.0], &dm(&DMatrix::from_element(2, 1, 1.0))).unwrap();
        assert!((r.statistic - 2.0).abs() < 1e-15);
        assert!(r.p_value.is_none());
        // As many estimable columns as rows: no residual degrees of freedom.
        let x = DMatrix::from_row_slice(3, 3, &[1.0, 0.0, 0.0, 1.0, 1.0, 0.0, 1.0, 2.0, 5.0]);
        let r = durbin_watson(&[1.0, -2.0, 1.0], &dm(&x)).unwrap();
        assert!(r.p_value.is_none());
    }

    #[test]
    fn durbin_watson_without_estimable_columns_uses_every_row() {
        // No columns at all, or only a zero column (set aside): M = I, and
        // D's distribution is that of e'Ae/e'e over all n rows. With n = 3,
        // A's eigenvalues are 0, 1 and 3, so P(D ≤ 3) = 1 and P(D ≤ 0) = 0.
        for x in [DMatrix::zeros(3, 0), DMatrix::zeros(3, 1)] {
            let r = durbin_watson(&[1.0, -2.0, 1.0], &dm(&x)).unwrap();
            assert!((r.statistic - 3.0).abs() < 1e-15);
            assert!((r.p_value.unwrap() - 1.0).abs() < 1e-12, "{r:?}");
            let r = durbin_watson(&[1.0, 1.0, 1.0], &dm(&x)).unwrap();
            assert_eq!(r.statistic, 0.0);
            assert!(r.p_value.unwrap().abs() < 1e-12, "{r:?}");
        }
        // The normal route with no columns, on 150 rows.
        let e: Vec<f64> = (0..150).map(|i| ((i * 37 % 11) as f64) - 5.0).collect();
        let r = durbin_watson(&e, &dm(&DMatrix::zeros(150, 0))).unwrap();
        assert!(r.p_value.is_some_and(|p| (0.0..=1.0).contains(&p)), "{r:?}");
    }

    #[test]
    fn sums_of_squares_that_overflow_give_no_result() {
        let huge = [1e200, -1e200, 1e200, -1e200];
        let x = DMatrix::from_element(4, 1, 1.0);
        assert!(durbin_watson(&huge, &dm(&x)).is_none());
        assert!(breusch_godfrey(&huge, &dm(&x), 1).is_none());
        assert!(jarque_bera(&huge).is_none());
    }

    #[test]
    fn aliased_columns_do_not_change_the_tests() {
        let t: Vec<f64> = (0..30).map(|i| i as f64).collect();
        let twice: Vec<f64> = t.iter().map(|v| 2.0 * v).collect();
        let y: Vec<f64> = t
            .iter()
            .map(|v| 3.0 + 0.5 * v + (v * 2.1).sin() * (1.0 + v / 10.0))
            .collect();
        let x = with_intercept(&[&t]);
        let x2 = with_intercept(&[&t, &twice]);
        let e = residuals_of(&x, &y);
        let fit = |x: &DMatrix<f64>| least_squares(&dm(x), &DVector::from_column_slice(&y));
        let pairs = [
            (durbin_watson(&e, &dm(&x)), durbin_watson(&e, &dm(&x2))),
            (
                breusch_godfrey(&e, &dm(&x), 2),
                breusch_godfrey(&e, &dm(&x2), 2),
            ),
            (breusch_pagan(&e, &dm(&x)), breusch_pagan(&e, &dm(&x2))),
            (reset(&y, &dm(&x), &fit(&x)), reset(&y, &dm(&x2), &fit(&x2))),
        ];
        for (a, b) in pairs {
            let (a, b) = (a.unwrap(), b.unwrap());
            assert!((a.statistic - b.statistic).abs() < 1e-9 * a.statistic.abs());
            assert_eq!(a.df, b.df);
            assert_eq!(a.df2, b.df2);
            let (pa, pb) = (a.p_value.unwrap(), b.p_value.unwrap());
            assert!((pa - pb).abs() < 1e-9, "{pa} vs {pb}");
        }
    }

    #[test]
    fn breusch_godfrey_is_n_times_the_auxiliary_r_squared() {
        // e alternates in sign, so its first lag explains it strongly.
        let e = [1.0, -0.9, 1.1, -1.0, 0.8, -1.2, 1.0, -0.7, 0.9, -1.1];
        let x = DMatrix::from_element(10, 1, 1.0);
        let r = breusch_godfrey(&e, &dm(&x), 1).unwrap();
        // By hand: regress e on [1, lag] and compare with Σ e² about zero.
        let mut aux = DMatrix::from_element(10, 2, 1.0);
        aux[(0, 1)] = 0.0;
        for t in 1..10 {
            aux[(t, 1)] = e[t - 1];
        }
        let fit = least_squares(
            &DesignMatrix::from_dense(&aux, None),
            &DVector::from_column_slice(&e),
        );
        let sse: f64 = e.iter().map(|v| v * v).sum();
        let r2 = 1.0 - fit.residuals.norm_squared() / sse;
        assert!((r.statistic - 10.0 * r2).abs() < 1e-12);
        assert_eq!(r.df, Some(1.0));
        assert!(r.p_value.unwrap() < 0.01);
    }

    #[test]
    fn breusch_godfrey_declines_degenerate_input() {
        let x = DMatrix::from_element(5, 1, 1.0);
        let e = [1.0, -1.0, 0.5, 0.2, -0.7];
        assert!(breusch_godfrey(&e, &dm(&x), 0).is_none());
        assert!(breusch_godfrey(&e, &dm(&x), 5).is_none());
        assert!(breusch_godfrey(&[0.0; 5], &dm(&x), 1).is_none());
        // Intercept and four lags on five rows: nothing left over.
        assert!(breusch_godfrey(&e, &dm(&x), 4).is_none());
    }

    #[test]
    fn breusch_pagan_finds_variance_growing_with_the_predictor() {
        let t: Vec<f64> = (1..=40).map(|i| i as f64).collect();
        let e: Vec<f64> = t
            .iter()
            .map(|v| v * if (*v as i64) % 2 == 0 { 1.0 } else { -1.0 })
            .collect();
        let x = with_intercept(&[&t]);
        let r = breusch_pagan(&e, &dm(&x)).unwrap();
        assert_eq!(r.df, Some(1.0));
        assert!(r.p_value.unwrap() < 1e-4, "{r:?}");
    }

    #[test]
    fn breusch_pagan_declines_constant_squared_residuals() {
        let t = [1.0, 2.0, 3.0, 4.0];
        let x = with_intercept(&[&t]);
        assert!(breusch_pagan(&[1.0, -1.0, 1.0, -1.0], &dm(&x)).is_none());
        assert!(breusch_pagan(&[0.0; 4], &dm(&x)).is_none());
        // Intercept only: no degrees of freedom.
        let one = DMatrix::from_element(4, 1, 1.0);
        assert!(breusch_pagan(&[1.0, -2.0, 0.5, 0.5], &dm(&one)).is_none());
    }

    #[test]
    fn jarque_bera_follows_its_formula() {
        // x = 0, 0, 0, 4: mean 1, deviations −1, −1, −1, 3;
        // m₂ = 3, m₃ = 6, m₄ = 21; S = 6/3^1.5, K = 21/9.
        let r = jarque_bera(&[0.0, 0.0, 0.0, 4.0]).unwrap();
        let s = 6.0 / 3f64.powf(1.5);
        let k = 21.0 / 9.0;
        let expected = 4.0 / 6.0 * (s * s + (k - 3.0) * (k - 3.0) / 4.0);
        assert!((r.statistic - expected).abs() < 1e-14);
        // χ²(2) upper tail is exp(−x/2).
        let p = r.p_value.unwrap();
        assert!((p - (-expected / 2.0).exp()).abs() < 1e-14);
        assert!(jarque_bera(&[2.0; 5]).is_none());
        assert!(jarque_bera(&[1.0, 2.0]).is_none());
    }

    #[test]
    fn shapiro_wilk_on_three_values_uses_the_exact_distribution() {
        // Evenly spaced: W = 1, p = 1.
        let r = shapiro_wilk(&[-1.0, 0.0, 1.0]).unwrap();
        assert!((r.statistic - 1.0).abs() < 1e-15);
        assert!((r.p_value.unwrap() - 1.0).abs() < 1e-12);
        // 1, 2, 4: a·x = (4 − 1)/√2, Σ(x − x̄)² = 14/3, W = (9/2)/(14/3) = 27/28.
        let r = shapiro_wilk(&[4.0, 1.0, 2.0]).unwrap();
        assert!((r.statistic - 27.0 / 28.0).abs() < 1e-15);
        let p = 6.0 / PI * ((27.0f64 / 28.0).sqrt().asin() - PI / 3.0);
        assert!((r.p_value.unwrap() - p).abs() < 1e-14);
    }

    #[test]
    fn shapiro_wilk_coefficients_have_unit_length_and_decrease() {
        for n in [4, 5, 6, 11, 12, 50, 999, 5000] {
            let a = shapiro_wilk_coefficients(n).unwrap();
            assert_eq!(a.len(), n / 2);
            let length = 2.0 * a.iter().map(|v| v * v).sum::<f64>();
            assert!((length - 1.0).abs() < 1e-13, "n = {n}: {length}");
            assert!(a.windows(2).all(|w| w[0] > w[1]), "n = {n}");
        }
    }

    #[test]
    fn shapiro_wilk_does_not_depend_on_location_scale_or_order() {
        let x = [
            3.1, -0.4, 2.2, 7.9, 0.3, 1.1, 4.4, -2.0, 0.9, 1.6, 2.8, 5.5, 0.1,
        ];
        let a = shapiro_wilk(&x).unwrap();
        let moved: Vec<f64> = x.iter().rev().map(|v| 1e6 + 1e-3 * v).collect();
        let b = shapiro_wilk(&moved).unwrap();
        assert!((a.statistic - b.statistic).abs() < 1e-9);
        let (pa, pb) = (a.p_value.unwrap(), b.p_value.unwrap());
        assert!((pa - pb).abs() < 1e-7 * pa, "{pa} vs {pb}");
    }

    #[test]
    fn shapiro_wilk_declines_what_it_cannot_test() {
        assert!(shapiro_wilk(&[1.0, 2.0]).is_none());
        assert!(shapiro_wilk(&[5.0; 10]).is_none());
        assert!(shapiro_wilk(&vec![0.0; 5001]).is_none());
        assert!(shapiro_wilk(&[1.0, f64::INFINITY, 2.0]).is_none());
    }
}
