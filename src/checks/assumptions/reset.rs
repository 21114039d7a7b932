//! Ramsey's RESET test of the linear form, at the precision of the fit.

use crate::ddouble::DoubleDouble;
use crate::design::{DesignColumn, DesignMatrix};
use crate::fit::{
    auxiliary_least_squares_precise, f_sf, fitted_extended, LeastSquares, Precision,
    ALIAS_TOLERANCE,
};

use super::{all_finite, is_positive, result, TestResult};

/// Ramsey's RESET test of the linear form: do powers of the fitted values
/// explain what the model leaves over?
///
/// Powers of the fitted values are added to X and tested by the F test of
/// the added columns, F = ((SSE₀ − SSE₁)/q) / (SSE₁/(n − p₁)), q the added
/// columns kept (2 unless aliased), p₁ the kept columns of the augmented
/// design, SSE₀ and SSE₁ the residual sums of squares without and with them
/// (Ramsey, J. B. 1969, "Tests for specification errors in classical linear
/// least-squares regression analysis", Journal of the Royal Statistical
/// Society B 31(2)). SSE₀ − SSE₁ is the sum of the squared QR effects of
/// the added columns, so the model is not refitted and the difference keeps
/// its digits.
///
/// The powers are those of z = (ŷ − m)/s, m the mean of the fitted values
/// when the columns hold a constant (else 0) and s the largest |ŷ − m|:
/// with a constant in the model, z² and z³ span with X what ŷ² and ŷ³ do,
/// so F is the same, but they are not nearly parallel to the constant when
/// the fitted values are large and vary little. ŷ and its powers are formed
/// in double-double arithmetic from the fit's coefficients, and the
/// augmented regression runs in double-double when the fit did or when its
/// own condition number calls for it (the fit's rule).
///
/// `y` is the response, `x` the design and `solution` the model's fit.
/// `None` when the lengths differ, neither power is estimable, no residual
/// degrees of freedom remain, or the augmented model fits exactly: its
/// residuals are below [`ALIAS_TOLERANCE`] of the length of y, the rule by
/// which the fit sets aside a column.
pub fn reset(y: &[f64], x: &DesignMatrix, solution: &LeastSquares) -> Option<TestResult> {
    reset_or_why(y, x, solution).ok()
}

/// [`reset`], or why it is not computed, in words.
///
/// # Errors
/// The reason: values that are not finite, powers of the fitted values
/// that already lie in the model's columns (a saturated model, such as one
/// categorical predictor alone), no residual degrees of freedom, or an
/// augmented model that fits exactly.
pub fn reset_or_why(
    y: &[f64],
    x: &DesignMatrix,
    solution: &LeastSquares,
) -> Result<TestResult, &'static str> {
    let n = y.len();
    if x.nrows() != n || !all_finite(y) || !x.all_finite() || !all_finite(solution.beta.as_slice())
    {
        return Err("values that are not finite numbers");
    }
    let p = x.ncols();
    let centre = x.holds_constant();
    let powers =
        |low: bool| DesignMatrix::new(n, scaled_powers(fitted_extended(x, solution), centre, low));
    // With a constant in the model, y less its mean leaves every sum of
    // squares as it is and keeps the digits of a response that is large
    // beside its spread.
    let y = if centre { centred(y) } else { y.to_vec() };
    let ls = auxiliary_least_squares_precise(
        x,
        powers,
        &y,
        solution.precision == Precision::DoubleDouble,
    );
    let added: f64 = ls
        .kept
        .iter()
        .zip(&ls.effects)
        .filter(|(&j, _)| j >= p)
        .map(|(_, e)| e * e)
        .sum();
    let df1 = ls.kept.iter().filter(|&&j| j >= p).count();
    if df1 == 0 {
        return Err("the squared and cubed fitted values already lie in the model's columns (a saturated model, such as one categorical predictor alone), so there is no curvature for RESET to find");
    }
    if ls.kept.len() >= n {
        return Err(
            "too few rows: no residual degrees of freedom are left once the powers are added",
        );
    }
    let df2 = n - ls.kept.len();
    let sse = ls.sse;
    let total: f64 = y.iter().map(|v| v * v).sum();
    if !is_positive(sse - (ALIAS_TOLERANCE * ALIAS_TOLERANCE) * total) {
        return Err("the model with the powers added fits every row exactly");
    }
    let (d1, d2) = (df1 as f64, df2 as f64);
    let statistic = (added / d1) / (sse / d2);
    result(statistic, Some(d1), Some(d2), f_sf(statistic, d1, d2))
        .ok_or("sums of squares too large to compute")
}

/// The mean of `values`, summed in double-double.
fn mean(values: impl ExactSizeIterator<Item = DoubleDouble>) -> DoubleDouble {
    let n = values.len();
    let sum = values.fold(DoubleDouble::from_f64(0.0), |s, v| s + v);
    if n == 0 {
        sum
    } else {
        sum / DoubleDouble::from_f64(n as f64)
    }
}

/// `values` less their mean, each difference formed in double-double and
/// then rounded.
fn centred(values: &[f64]) -> Vec<f64> {
    let m = mean(values.iter().map(|&v| DoubleDouble::from_f64(v)));
    values
        .iter()
        .map(|&v| (DoubleDouble::from_f64(v) - m).hi())
        .collect()
}

/// The columns z² and z³ of z = (ŷ − m)/s, m the mean of `fitted` when
/// `centre` and else 0, s the largest |ŷ − m| (1 when every fitted value
/// is m), formed in double-double and kept as rounded values, with their
/// remainders when `low`.
fn scaled_powers(mut fitted: Vec<DoubleDouble>, centre: bool, low: bool) -> Vec<DesignColumn> {
    let mean = if centre {
        mean(fitted.iter().copied())
    } else {
        DoubleDouble::from_f64(0.0)
    };
    let largest = fitted
        .iter()
        .map(|&f| (f - mean).hi().abs())
        .fold(0.0, f64::max);
    let scale = DoubleDouble::from_f64(if largest > 0.0 { largest } else { 1.0 });
    // z in place of ŷ, and each power's parts formed straight from it, so
    // a million rows hold no more than ŷ and the two columns.
    for f in &mut fitted {
        *f = (*f - mean) / scale;
    }
    [2, 3]
        .into_iter()
        .map(|power| {
            let of = |v: DoubleDouble| if power == 2 { v * v } else { v * v * v };
            DesignColumn::Values {
                hi: fitted.iter().map(|&v| of(v).hi()).collect(),
                lo: low.then(|| fitted.iter().map(|&v| of(v).lo()).collect()),
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use nalgebra::{DMatrix, DVector};

    use super::*;
    use crate::fit::least_squares;

    fn with_intercept(columns: &[&[f64]]) -> DesignMatrix {
        let n = columns.first().map_or(0, |c| c.len());
        let mut x = DMatrix::from_element(n, columns.len() + 1, 1.0);
        for (j, c) in columns.iter().enumerate() {
            for (i, v) in c.iter().enumerate() {
                x[(i, j + 1)] = *v;
            }
        }
        DesignMatrix::from_dense(&x, None)
    }

    fn reset_of(y: &[f64], x: &DesignMatrix) -> Result<TestResult, &'static str> {
        reset_or_why(y, x, &least_squares(x, &DVector::from_column_slice(y)))
    }

    #[test]
    fn reset_finds_a_missing_square() {
        let t: Vec<f64> = (0..25).map(|i| i as f64 / 4.0).collect();
        let y: Vec<f64> = t
            .iter()
            .enumerate()
            .map(|(i, v)| 1.0 + v + 0.3 * v * v + 0.05 * ((i * 7 % 5) as f64 - 2.0))
            .collect();
        let r = reset_of(&y, &with_intercept(&[&t])).unwrap();
        assert_eq!((r.df, r.df2), (Some(2.0), Some(21.0)));
        assert!(r.p_value.unwrap() < 1e-10, "{r:?}");
    }

    #[test]
    fn reset_does_not_depend_on_the_level_or_units_of_the_response() {
        // F is invariant to y → a + b·y when the model has a constant; the
        // centred, scaled powers keep it so even at a level of 10⁹.
        let t: Vec<f64> = (0..30).map(f64::from).collect();
        let y: Vec<f64> = t
            .iter()
            .map(|v| 2.0 + v + 0.02 * v * v + (v * 1.7).sin())
            .collect();
        let x = with_intercept(&[&t]);
        let base = reset_of(&y, &x).unwrap();
        let moved: Vec<f64> = y.iter().map(|v| 1e9 + 1000.0 * v).collect();
        let r = reset_of(&moved, &x).unwrap();
        assert!(
            (r.statistic / base.statistic - 1.0).abs() < 1e-9,
            "{r:?} vs {base:?}"
        );
    }

    #[test]
    fn reset_declines_an_exact_fit_and_constant_fitted_values() {
        let t = [0.0, 1.0, 2.0, 3.0, 4.0, 5.0];
        // y = t² exactly: with t² and t³ added the fit is exact.
        let y: Vec<f64> = t.iter().map(|v| v * v).collect();
        assert_eq!(
            reset_of(&y, &with_intercept(&[&t])),
            Err("the model with the powers added fits every row exactly")
        );
        // Intercept-only model: its fitted powers are aliased with it.
        let one = DesignMatrix::new(6, vec![DesignColumn::Ones]);
        assert!(reset_of(&[1.0, 3.0, 2.0, 5.0, 4.0, 6.0], &one)
            .unwrap_err()
            .starts_with("the squared and cubed fitted values already lie"));
    }

    #[test]
    fn columns_hold_a_constant_through_ones_or_a_full_set_of_indicators() {
        use std::sync::Arc;
        let codes: Arc<[u32]> = vec![0, 1, 2, 1, 0].into();
        let indicator = |code| DesignColumn::Indicator {
            codes: Arc::clone(&codes),
            code,
        };
        let t = DesignColumn::values(vec![1.0, 2.0, 3.0, 4.0, 5.0]);
        let all = DesignMatrix::new(5, vec![t.clone(), indicator(0), indicator(1), indicator(2)]);
        assert!(all.holds_constant());
        let some = DesignMatrix::new(5, vec![t.clone(), indicator(1), indicator(2)]);
        assert!(!some.holds_constant());
        assert!(DesignMatrix::new(5, vec![t.clone(), DesignColumn::Ones]).holds_constant());
        assert!(DesignMatrix::new(5, vec![DesignColumn::values(vec![2.0; 5]), t]).holds_constant());
    }
}
