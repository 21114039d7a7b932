//! Tests of the assumptions behind a linear model: independent errors
//! (Durbin-Watson, Breusch-Godfrey), constant error variance (Breusch-Pagan),
//! normal errors (Jarque-Bera, Shapiro-Wilk) and a linear form (RESET).
//!
//! Each test is a pure function of the residuals, the design matrix and, for
//! RESET, the response and fitted values, and returns a [`TestResult`], or
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
use crate::fit::{
    auxiliary_least_squares, auxiliary_least_squares_with, f_sf, Auxiliary, ALIAS_TOLERANCE,
};

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

/// Row count from which [`durbin_watson`] uses the normal approximation
/// rather than the exact distribution.
pub const DW_EXACT_BELOW: usize = 100;

/// Absolute accuracy aimed at for the exact Durbin-Watson p-value.
pub const DW_EXACT_TOLERANCE: f64 = 1e-12;

/// Durbin-Watson statistic of residuals in time order, with the p-value for
/// positive first-order autocorrelation.
///
/// d = Σₜ₌₂ⁿ (eₜ − eₜ₋₁)² / Σₜ₌₁ⁿ eₜ² (Durbin & Watson 1950, 1951,
/// "Testing for serial correlation in least squares regression I, II",
/// Biometrika 37, 38). Values well below 2 point to positive
/// autocorrelation.
///
/// The p-value is P(D ≤ d) under independent normal errors. With e = M u,
/// M = I − X(X'X)⁻¹X' and A the first-difference matrix (tridiagonal, 1, 2,
/// …, 2, 1 on the diagonal and −1 beside it), D = e'Ae / e'e, so
/// P(D ≤ d) = P(u'M(A − dI)Mu ≤ 0) = P(Σⱼ (λⱼ − d) zⱼ² ≤ 0), where λⱼ are
/// the n − p eigenvalues of MAM on the range of M (p estimable columns) and
/// zⱼ are independent standard normal.
///
/// * Below [`DW_EXACT_BELOW`] rows this probability is exact: the
///   eigenvalues come from a symmetric eigendecomposition and the
///   probability from Imhof's (1961) inversion formula, P(Q < 0) = ½ −
///   (1/π) ∫₀^∞ sin θ(u) / (u ρ(u)) du with θ(u) = ½ Σ atan(λⱼ′u) and
///   ρ(u) = Π (1 + λⱼ′²u²)^¼, λⱼ′ = λⱼ − d (Imhof, J. P. 1961, "Computing
///   the distribution of quadratic forms in normal variables", Biometrika
///   48(3/4)), integrated by adaptive Gauss-Kronrod quadrature after the
///   change of variable u = c·(t/(1 − t))² that maps it to 0 < t < 1 with a
///   bounded integrand, to about [`DW_EXACT_TOLERANCE`]. Since the
///   probability is ½ less an integral near ½, its absolute accuracy cannot
///   beat about 10⁻¹⁵: a p-value below that (very strong autocorrelation)
///   comes out as 0 or as rounding noise of that size.
/// * From [`DW_EXACT_BELOW`] rows on, the normal approximation with the
///   exact mean and variance of D under independence (Durbin & Watson 1950,
///   section 3): E D = P/(n − p), Var D = 2(Q − P·E D)/((n − p)(n − p + 2)),
///   P = tr(MA) = tr A − tr(X'AX(X'X)⁻¹) and Q = tr((MA)²) = tr A² −
///   2 tr(X'A²X(X'X)⁻¹) + tr((X'AX(X'X)⁻¹)²), computed as tr A − tr(Q'AQ)
///   and tr A² − 2‖AQ‖² + ‖Q'AQ‖² (Frobenius norms) from an orthonormal
///   basis Q of the estimable columns, in O(np²).
///
/// `x` is the model's design matrix (with its intercept column); aliased
/// columns are set aside as in the fit. The statistic is `None` when the
/// residuals are all zero or there are fewer than two; the p-value is `None`
/// with fewer than three rows, no residual degrees of freedom, or when the
/// computation cannot be completed.
pub fn durbin_watson(residuals: &[f64], x: &DesignMatrix) -> Option<TestResult> {
    let n = residuals.len();
    if n < 2 || x.nrows() != n || !all_finite(residuals) || !x.all_finite() {
        return None;
    }
    let sse: f64 = residuals.iter().map(|e| e * e).sum();
    if !is_positive(sse) {
        return None;
    }
    let num: f64 = residuals.windows(2).map(|w| (w[1] - w[0]).powi(2)).sum();
    let d = num / sse;
    let p_value = if n < 3 {
        None
    } else if n < DW_EXACT_BELOW {
        column_basis(x)
            .filter(|basis| basis.ncols() < n)
            .and_then(|basis| dw_exact_lower_tail(d, &basis))
    } else {
        dw_traces(x).and_then(|traces| dw_normal_lower_tail(d, n, traces))
    };
    result(d, None, None, p_value)
}

/// The eigenvalues of MAM on the range of M (n − p of them), where Q is an
/// orthonormal basis of the estimable columns and M = I − QQ'.
///
/// The eigendecomposition is of MAM − QQ': its eigenvalues are those of MAM
/// on the range of M (between 0 and 4, as A's are) and −1 on the column
/// space, so the n − p largest are the ones wanted.
fn dw_eigenvalues(basis: &DMatrix<f64>) -> Option<Vec<f64>> {
    let n = basis.nrows();
    let p = basis.ncols();
    let hat = basis * basis.transpose();
    let m = DMatrix::<f64>::identity(n, n) - &hat;
    let am = first_difference_times(&m);
    let mut b = &m * am - hat;
    // Symmetrize away the rounding of the products.
    let bt = b.transpose();
    b += bt;
    b *= 0.5;
    let eigen = SymmetricEigen::try_new(b, f64::EPSILON, 1000 * n)?;
    let mut values: Vec<f64> = eigen.eigenvalues.iter().copied().collect();
    if !all_finite(&values) {
        return None;
    }
    values.sort_by(|a, b| b.total_cmp(a));
    values.truncate(n - p);
    Some(values)
}

/// P(D ≤ d) from the exact distribution (see [`durbin_watson`]).
fn dw_exact_lower_tail(d: f64, basis: &DMatrix<f64>) -> Option<f64> {
    let shifted: Vec<f64> = dw_eigenvalues(basis)?.iter().map(|l| l - d).collect();
    imhof_lower_tail(&shifted)
}

/// P(D ≤ d) from the normal approximation with the exact moments (see
/// [`durbin_watson`]).
fn dw_normal_lower_tail(d: f64, n: usize, traces: DwTraces) -> Option<f64> {
    let r = (n - traces.rank) as f64;
    let mean = traces.ma / r;
    let variance = 2.0 * (traces.ma_squared - traces.ma * mean) / (r * (r + 2.0));
    if !is_positive(variance) || !mean.is_finite() {
        return None;
    }
    let normal = Normal::new(mean, variance.sqrt()).ok()?;
    Some(normal.cdf(d))
}

/// The traces behind the moments of the Durbin-Watson statistic, with M
/// the residual maker of the estimable columns and A the first-difference
/// matrix.
#[derive(Debug, Clone, Copy)]
struct DwTraces {
    /// Estimable columns p.
    rank: usize,
    /// tr(MA) = tr A − tr(QᵀAQ), tr A = 2(n − 1).
    ma: f64,
    /// tr((MA)²) = tr A² − 2‖AQ‖² + ‖QᵀAQ‖², tr A² = 2(3n − 4).
    ma_squared: f64,
}

/// [`DwTraces`] of the estimable columns of `x`, in O(np²) and without an
/// n-row copy: with W the kept columns scaled to unit length and W = QR,
/// QᵀAQ = R⁻ᵀ(W'AW)R⁻¹ and ‖AQ‖² = tr(R⁻ᵀ(AW)'(AW)R⁻¹), where
/// W'AW = Σ (wₜ₊₁ − wₜ)(wₜ₊₁ − wₜ)' (A = D'D, D the first differences)
/// and (AW)'(AW) are p × p sums over the rows, taken in blocks. `None`
/// with no residual degrees of freedom or columns that cannot be scaled.
fn dw_traces(x: &DesignMatrix) -> Option<DwTraces> {
    let n = x.nrows();
    let ls = auxiliary_least_squares(x, &vec![0.0; n]);
    let p = ls.kept.len();
    if p >= n {
        return None;
    }
    let nf = n as f64;
    if p == 0 {
        return Some(DwTraces {
            rank: 0,
            ma: 2.0 * (nf - 1.0),
            ma_squared: 2.0 * (3.0 * nf - 4.0),
        });
    }
    let scale: Vec<f64> = ls
        .kept
        .iter()
        .map(|&j| {
            x.blocks()
                .map(|rows| x.block(j, rows).iter().map(|v| v * v).sum::<f64>())
                .sum::<f64>()
                .sqrt()
        })
        .collect();
    if scale.iter().any(|s| !(*s > 0.0 && s.is_finite())) {
        return None;
    }
    let inverse: Vec<f64> = scale.iter().map(|s| 1.0 / s).collect();
    let mut differences = DMatrix::<f64>::zeros(p, p);
    let mut stencils = DMatrix::<f64>::zeros(p, p);
    for rows in x.blocks() {
        let (start, end) = (rows.start, rows.end);
        // The block with one row either side, where there is one.
        let (from, to) = (start.saturating_sub(1), (end + 1).min(n));
        let block = x.dense_block(from..to, &ls.kept);
        let row = |t: usize, k: usize| block[(t - from, k)] * inverse[k];
        let d = DMatrix::from_fn(end - start, p, |i, k| {
            let t = start + i;
            if t + 1 < n {
                row(t + 1, k) - row(t, k)
            } else {
                0.0
            }
        });
        let a = DMatrix::from_fn(end - start, p, |i, k| {
            let t = start + i;
            let mut v = 0.0;
            let mut diagonal = 0.0;
            if t > 0 {
                v -= row(t - 1, k);
                diagonal += 1.0;
            }
            if t + 1 < n {
                v -= row(t + 1, k);
                diagonal += 1.0;
            }
            v + diagonal * row(t, k)
        });
        differences += d.transpose() * &d;
        stencils += a.transpose() * &a;
    }
    let r_inverse = ls.r.solve_upper_triangular(&DMatrix::identity(p, p))?;
    let qaq = r_inverse.tr_mul(&differences) * &r_inverse;
    let aq_squared = (r_inverse.tr_mul(&stencils) * &r_inverse).trace();
    let (ma, ma_squared) = (
        2.0 * (nf - 1.0) - qaq.trace(),
        2.0 * (3.0 * nf - 4.0) - 2.0 * aq_squared + qaq.norm_squared(),
    );
    (ma.is_finite() && ma_squared.is_finite()).then_some(DwTraces {
        rank: p,
        ma,
        ma_squared,
    })
}

/// A·B for the n × n first-difference matrix A (diagonal 1, 2, …, 2, 1,
/// −1 on the two diagonals beside it), without forming A.
fn first_difference_times(b: &DMatrix<f64>) -> DMatrix<f64> {
    let n = b.nrows();
    let mut out = DMatrix::zeros(n, b.ncols());
    for j in 0..b.ncols() {
        let col = b.column(j);
        for i in 0..n {
            let mut v = 0.0;
            let mut diagonal = 0.0;
            if i > 0 {
                v -= col[i - 1];
                diagonal += 1.0;
            }
            if i + 1 < n {
                v -= col[i + 1];
                diagonal += 1.0;
            }
            out[(i, j)] = v + diagonal * col[i];
        }
    }
    out
}

/// An orthonormal basis (n × p) of the estimable columns of `x`: the columns
/// [`auxiliary_least_squares`] keeps, scaled to unit length, through nalgebra's
/// Householder QR. `None` when the columns cannot be scaled.
fn column_basis(x: &DesignMatrix) -> Option<DMatrix<f64>> {
    let n = x.nrows();
    let kept = auxiliary_least_squares(x, &vec![0.0; n]).kept;
    if kept.is_empty() {
        return Some(DMatrix::zeros(n, 0));
    }
    let mut scaled = x.dense_block(0..n, &kept);
    for mut col in scaled.column_iter_mut() {
        let norm = col.norm();
        if !(norm > 0.0 && norm.is_finite()) {
            return None;
        }
        col /= norm;
    }
    let q = scaled.qr().q();
    all_finite(q.as_slice()).then_some(q)
}

/// P(Σⱼ λⱼ zⱼ² ≤ 0) for independent standard normal zⱼ, by Imhof's (1961)
/// formula P(Q < 0) = ½ − (1/π) ∫₀^∞ sin θ(u) / (u ρ(u)) du,
/// θ(u) = ½ Σ atan(λⱼu), ρ(u) = Π (1 + λⱼ²u²)^¼.
///
/// The substitution u = c·s², s = t/(1 − t), turns the integrand into
/// 2 sin θ(u) / (t(1 − t) ρ(u)) on 0 < t < 1, which vanishes at both ends
/// when at least two λⱼ are non-zero (it behaves as (1 − t)^(m − 1) for m
/// non-zero λⱼ). c is the reciprocal root mean square of the λⱼ, so the
/// integrand's features sit near the middle of the interval. Zero λⱼ
/// contribute nothing; when all non-zero λⱼ share a sign the probability is
/// 0 (all positive) or 1 (all negative, or none non-zero).
fn imhof_lower_tail(lambda: &[f64]) -> Option<f64> {
    let l: Vec<f64> = lambda.iter().copied().filter(|v| *v != 0.0).collect();
    if !all_finite(&l) {
        return None;
    }
    if l.iter().all(|v| *v < 0.0) {
        return Some(1.0);
    }
    if l.iter().all(|v| *v > 0.0) {
        return Some(0.0);
    }
    let rms = (l.iter().map(|v| v * v).sum::<f64>() / l.len() as f64).sqrt();
    let c = 1.0 / rms;
    let integrand = |t: f64| {
        let s = t / (1.0 - t);
        let u = c * s * s;
        let mut theta = 0.0;
        let mut log_rho = 0.0;
        for &lj in &l {
            let lu = lj * u;
            theta += lu.atan();
            log_rho += (lu * lu).ln_1p();
        }
        let value = 2.0 * (0.5 * theta).sin() * (-0.25 * log_rho).exp() / (t * (1.0 - t));
        if value.is_finite() {
            value
        } else {
            0.0
        }
    };
    let integral = adaptive_gauss_kronrod(integrand, DW_EXACT_TOLERANCE * std::f64::consts::PI)?;
    Some((0.5 - integral / std::f64::consts::PI).clamp(0.0, 1.0))
}

/// Abscissae of the 15-point Kronrod rule on [−1, 1], the non-negative half
/// in decreasing order; those at positions 1, 3, 5 and 7 (counted from 0;
/// 7 is the centre) are the 7-point Gauss rule's (Kronrod 1965; values as
/// tabulated in Piessens et al. 1983, *QUADPACK*, Springer). The pair
/// integrates polynomials exactly up to degree 23 (Kronrod) and 13 (Gauss).
const KRONROD_NODES: [f64; 8] = [
    0.991_455_371_120_812_6,
    0.949_107_912_342_758_5,
    0.864_864_423_359_769_1,
    0.741_531_185_599_394_4,
    0.586_087_235_467_691_1,
    0.405_845_151_377_397_2,
    0.207_784_955_007_898_5,
    0.0,
];

/// Weights of the 15-point Kronrod rule, matching [`KRONROD_NODES`].
const KRONROD_WEIGHTS: [f64; 8] = [
    0.022_935_322_010_529_225,
    0.063_092_092_629_978_55,
    0.104_790_010_322_250_18,
    0.140_653_259_715_525_92,
    0.169_004_726_639_267_9,
    0.190_350_578_064_785_4,
    0.204_432_940_075_298_9,
    0.209_482_141_084_727_83,
];

/// Weights of the 7-point Gauss rule at [`KRONROD_NODES`] 1, 3, 5 and 7.
const GAUSS_WEIGHTS: [f64; 4] = [
    0.129_484_966_168_869_7,
    0.279_705_391_489_276_7,
    0.381_830_050_505_118_9,
    0.417_959_183_673_469_4,
];

/// Most intervals [`adaptive_gauss_kronrod`] examines before it gives up.
const QUADRATURE_BUDGET: usize = 100_000;

/// The 15-point Kronrod estimate of ∫ₐᵇ f, its difference from the
/// embedded 7-point Gauss estimate, and ∫ₐᵇ |f| by the Kronrod rule.
fn kronrod_15(f: &impl Fn(f64) -> f64, a: f64, b: f64) -> (f64, f64, f64) {
    let centre = 0.5 * (a + b);
    let half = 0.5 * (b - a);
    let mut kronrod = 0.0;
    let mut gauss = 0.0;
    let mut absolute = 0.0;
    for (i, (&x, &w)) in KRONROD_NODES.iter().zip(&KRONROD_WEIGHTS).enumerate() {
        let values = if x == 0.0 {
            let v = f(centre);
            (v, 0.0)
        } else {
            (f(centre - half * x), f(centre + half * x))
        };
        let pair = values.0 + values.1;
        kronrod += w * pair;
        absolute += w * (values.0.abs() + values.1.abs());
        if i % 2 == 1 {
            gauss += GAUSS_WEIGHTS[i / 2] * pair;
        }
    }
    (kronrod * half, (kronrod - gauss) * half, absolute * half)
}

/// ∫₀¹ f by adaptive bisection with the Gauss-Kronrod (7, 15) pair: an
/// interval is accepted when the two rules differ by less than its share
/// `tolerance · (b − a)` of the absolute tolerance, or by less than what
/// rounding alone can explain. `None` when the budget of
/// [`QUADRATURE_BUDGET`] intervals runs out first.
fn adaptive_gauss_kronrod(f: impl Fn(f64) -> f64, tolerance: f64) -> Option<f64> {
    const START: usize = 16;
    let mut stack: Vec<(f64, f64)> = (0..START)
        .rev()
        .map(|i| (i as f64 / START as f64, (i + 1) as f64 / START as f64))
        .collect();
    let mut total = 0.0;
    let mut examined = 0;
    while let Some((a, b)) = stack.pop() {
        examined += 1;
        if examined > QUADRATURE_BUDGET {
            return None;
        }
        let (estimate, difference, absolute) = kronrod_15(&f, a, b);
        let rounding = 50.0 * f64::EPSILON * absolute;
        let width = b - a;
        if difference.abs() <= (tolerance * width).max(rounding) || width < 1e-15 {
            total += estimate;
        } else {
            let mid = 0.5 * (a + b);
            stack.push((mid, b));
            stack.push((a, mid));
        }
    }
    total.is_finite().then_some(total)
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

/// Fewest values [`shapiro_wilk`] accepts.
pub const SHAPIRO_WILK_MIN: usize = 3;
/// Most values [`shapiro_wilk`] accepts: the range over which Royston's
/// approximation was fitted.
pub const SHAPIRO_WILK_MAX: usize = 5000;

/// Shapiro-Wilk test of normality, W and its p-value by Royston's
/// approximation, for 3 ≤ n ≤ 5000.
///
/// W = (Σᵢ aᵢ x₍ᵢ₎)² / Σᵢ (xᵢ − x̄)², x₍ᵢ₎ the ordered values (Shapiro, S. S.
/// & Wilk, M. B. 1965, "An analysis of variance test for normality",
/// Biometrika 52). The coefficients follow Royston (1992, "Approximating the
/// Shapiro-Wilk W-test for non-normality", Statistics and Computing 2) and
/// his Algorithm AS R94 (1995, Applied Statistics 44(4)):
///
/// * normal scores mᵢ = Φ⁻¹((i − 3/8)/(n + 1/4)) and cᵢ = mᵢ/√(m'm);
/// * with u = 1/√n, the largest coefficient aₙ = cₙ + 0.221157u −
///   0.147981u² − 2.071190u³ + 4.434685u⁴ − 2.706056u⁵, and for n > 5 the
///   next, aₙ₋₁ = cₙ₋₁ + 0.042981u − 0.293762u² − 1.752461u³ +
///   5.682633u⁴ − 3.582633u⁵ (a₁ = −aₙ, a₂ = −aₙ₋₁);
/// * the others aᵢ = mᵢ/√φ, φ = (m'm − 2mₙ²)/(1 − 2aₙ²) for n ≤ 5 and
///   φ = (m'm − 2mₙ² − 2mₙ₋₁²)/(1 − 2aₙ² − 2aₙ₋₁²) for n > 5, so Σaᵢ² = 1;
/// * n = 3: a = (−√½, 0, √½), and the exact p-value
///   P = (6/π)(asin √W − asin √(3/4)).
///
/// The p-value for n ≥ 4 comes from a normal approximation to a transform
/// of 1 − W, P = 1 − Φ((y − μ)/σ):
///
/// * 4 ≤ n ≤ 11: y = −ln(γ − ln(1 − W)), γ = −2.273 + 0.459n,
///   μ = 0.5440 − 0.39978n + 0.025054n² − 0.0006714n³,
///   σ = exp(1.3822 − 0.77857n + 0.062767n² − 0.0020322n³);
/// * 12 ≤ n ≤ 5000: y = ln(1 − W), with v = ln n,
///   μ = −1.5861 − 0.31082v − 0.083751v² + 0.0038915v³,
///   σ = exp(−0.4803 − 0.082676v + 0.0030302v²).
///
/// 1 − W is computed as 1 − r² from the correlation r between the ordered
/// values and the coefficients, as (‖a‖‖x‖ − a·x)(‖a‖‖x‖ + a·x)/(‖a‖²‖x‖²)
/// on centred values, so it keeps its digits when W is near 1.
///
/// `None` outside 3 ≤ n ≤ 5000, for values that are not finite, or when
/// all values are equal. The p-value is `None` for n ≤ 11 if ln(1 − W) ≥ γ,
/// where the transform is undefined (W below the values it was fitted on).
pub fn shapiro_wilk(x: &[f64]) -> Option<TestResult> {
    let n = x.len();
    if !(SHAPIRO_WILK_MIN..=SHAPIRO_WILK_MAX).contains(&n) || !all_finite(x) {
        return None;
    }
    let mut sorted = x.to_vec();
    sorted.sort_by(f64::total_cmp);
    let range = sorted[n - 1] - sorted[0];
    if !is_positive(range) || !range.is_finite() {
        return None;
    }
    // Scaled by the range so that sums of squares cannot overflow.
    for v in &mut sorted {
        *v /= range;
    }
    let half = shapiro_wilk_coefficients(n)?;
    let mean = sorted.iter().sum::<f64>() / n as f64;
    let ss: f64 = sorted.iter().map(|v| (v - mean).powi(2)).sum();
    // a·x over the antisymmetric coefficient vector: aᵢ pairs x₍ₙ₊₁₋ᵢ₎ − x₍ᵢ₎.
    let ax: f64 = half
        .iter()
        .enumerate()
        .map(|(i, a)| a * (sorted[n - 1 - i] - sorted[i]))
        .sum();
    let aa: f64 = 2.0 * half.iter().map(|a| a * a).sum::<f64>();
    if !is_positive(ss) {
        return None;
    }
    let norms = (aa * ss).sqrt();
    let one_minus_w = ((norms - ax) * (norms + ax) / (aa * ss)).max(0.0);
    let w = 1.0 - one_minus_w;
    result(w, None, None, shapiro_wilk_p(n, w, one_minus_w))
}

/// Royston's coefficients aₙ, aₙ₋₁, … for the upper half of the ordered
/// sample (n/2 of them, largest first); see [`shapiro_wilk`].
fn shapiro_wilk_coefficients(n: usize) -> Option<Vec<f64>> {
    let half = n / 2;
    if n == 3 {
        return Some(vec![std::f64::consts::FRAC_1_SQRT_2]);
    }
    let normal = Normal::new(0.0, 1.0).ok()?;
    let nf = n as f64;
    // mₙ₊₁₋ᵢ = −mᵢ = −Φ⁻¹((i − 3/8)/(n + 1/4)) for i = 1..n/2, largest first.
    let m: Vec<f64> = (1..=half)
        .map(|i| -normal.inverse_cdf((i as f64 - 0.375) / (nf + 0.25)))
        .collect();
    let mm = 2.0 * m.iter().map(|v| v * v).sum::<f64>();
    let root = mm.sqrt();
    let u = 1.0 / nf.sqrt();
    let a_n = m[0] / root
        + polynomial(
            &[0.0, 0.221157, -0.147981, -2.071190, 4.434685, -2.706056],
            u,
        );
    let mut a = Vec::with_capacity(half);
    let (phi, first_plain) = if n > 5 {
        let a_n1 = m[1] / root
            + polynomial(
                &[0.0, 0.042981, -0.293762, -1.752461, 5.682633, -3.582633],
                u,
            );
        a.push(a_n);
        a.push(a_n1);
        (
            (mm - 2.0 * m[0] * m[0] - 2.0 * m[1] * m[1])
                / (1.0 - 2.0 * a_n * a_n - 2.0 * a_n1 * a_n1),
            2,
        )
    } else {
        a.push(a_n);
        ((mm - 2.0 * m[0] * m[0]) / (1.0 - 2.0 * a_n * a_n), 1)
    };
    if !is_positive(phi) {
        return None;
    }
    let scale = phi.sqrt();
    a.extend(m[first_plain..].iter().map(|v| v / scale));
    all_finite(&a).then_some(a)
}

/// Royston's p-value for W (see [`shapiro_wilk`]).
fn shapiro_wilk_p(n: usize, w: f64, one_minus_w: f64) -> Option<f64> {
    if n == 3 {
        let p = 6.0 / std::f64::consts::PI * (w.sqrt().asin() - (0.75f64).sqrt().asin());
        return Some(p.clamp(0.0, 1.0));
    }
    if !is_positive(one_minus_w) {
        return Some(1.0);
    }
    let nf = n as f64;
    let log = one_minus_w.ln();
    let (y, mu, sigma) = if n <= 11 {
        let gamma = polynomial(&[-2.273, 0.459], nf);
        if log >= gamma {
            return None;
        }
        (
            -(gamma - log).ln(),
            polynomial(&[0.5440, -0.39978, 0.025054, -6.714e-4], nf),
            polynomial(&[1.3822, -0.77857, 0.062767, -0.0020322], nf).exp(),
        )
    } else {
        let v = nf.ln();
        (
            log,
            polynomial(&[-1.5861, -0.31082, -0.083751, 0.0038915], v),
            polynomial(&[-0.4803, -0.082676, 0.0030302], v).exp(),
        )
    };
    let normal = Normal::new(0.0, 1.0).ok()?;
    let p = normal.sf((y - mu) / sigma);
    p.is_finite().then_some(p)
}

/// Ramsey's RESET test of the linear form: do powers of the fitted values
/// explain what the model leaves over?
///
/// The columns ŷ² and ŷ³ are added to X and tested by the F test of the
/// added columns, F = ((SSE₀ − SSE₁)/q) / (SSE₁/(n − p₁)), q the added
/// columns kept (2 unless aliased), p₁ the kept columns of the augmented
/// design, SSE₀ and SSE₁ the residual sums of squares without and with them
/// (Ramsey, J. B. 1969, "Tests for specification errors in classical linear
/// least-squares regression analysis", Journal of the Royal Statistical
/// Society B 31(2)). SSE₀ − SSE₁ is the sum of the squared QR effects of
/// the added columns, so the model is not refitted and the difference keeps
/// its digits.
///
/// `y` is the response, `x` the design (with its intercept) and `fitted`
/// the model's fitted values. `None` when the lengths differ, neither power
/// is estimable, no residual degrees of freedom remain, or the augmented
/// model fits exactly: its residuals are below [`ALIAS_TOLERANCE`] of the
/// length of y, the rule by which the fit sets aside a column.
pub fn reset(y: &[f64], x: &DesignMatrix, fitted: &[f64]) -> Option<TestResult> {
    let n = y.len();
    if x.nrows() != n
        || fitted.len() != n
        || !all_finite(y)
        || !all_finite(fitted)
        || !x.all_finite()
    {
        return None;
    }
    let p = x.ncols();
    let powers = DesignMatrix::new(
        n,
        vec![
            DesignColumn::values(fitted.iter().map(|f| f * f).collect()),
            DesignColumn::values(fitted.iter().map(|f| f * f * f).collect()),
        ],
    );
    let ls = auxiliary_least_squares_with(x, &powers, y);
    let added: f64 = ls
        .kept
        .iter()
        .zip(&ls.effects)
        .filter(|(&j, _)| j >= p)
        .map(|(_, e)| e * e)
        .sum();
    let df1 = ls.kept.iter().filter(|&&j| j >= p).count();
    if df1 == 0 || ls.kept.len() >= n {
        return None;
    }
    let df2 = n - ls.kept.len();
    let sse = ls.sse;
    let total: f64 = y.iter().map(|v| v * v).sum();
    if !is_positive(sse - (ALIAS_TOLERANCE * ALIAS_TOLERANCE) * total) {
        return None;
    }
    let (d1, d2) = (df1 as f64, df2 as f64);
    let statistic = (added / d1) / (sse / d2);
    result(statistic, Some(d1), Some(d2), f_sf(statistic, d1, d2))
}

/// A [`TestResult`], or `None` when the statistic is not finite (sums of
/// squares that overflowed).
fn result(
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
fn is_positive(v: f64) -> bool {
    v > 0.0
}

fn all_finite(values: &[f64]) -> bool {
    values.iter().all(|v| v.is_finite())
}

#[cfg(test)]
mod tests {
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
        let fitted: Vec<f64> = y.iter().zip(&e).map(|(y, e)| y - e).collect();
        let pairs = [
            (durbin_watson(&e, &dm(&x)), durbin_watson(&e, &dm(&x2))),
            (
                breusch_godfrey(&e, &dm(&x), 2),
                breusch_godfrey(&e, &dm(&x2), 2),
            ),
            (breusch_pagan(&e, &dm(&x)), breusch_pagan(&e, &dm(&x2))),
            (reset(&y, &dm(&x), &fitted), reset(&y, &dm(&x2), &fitted)),
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

    #[test]
    fn reset_finds_a_missing_square() {
        let t: Vec<f64> = (0..25).map(|i| i as f64 / 4.0).collect();
        let y: Vec<f64> = t
            .iter()
            .enumerate()
            .map(|(i, v)| 1.0 + v + 0.3 * v * v + 0.05 * ((i * 7 % 5) as f64 - 2.0))
            .collect();
        let x = with_intercept(&[&t]);
        let e = residuals_of(&x, &y);
        let fitted: Vec<f64> = y.iter().zip(&e).map(|(y, e)| y - e).collect();
        let r = reset(&y, &dm(&x), &fitted).unwrap();
        assert_eq!((r.df, r.df2), (Some(2.0), Some(21.0)));
        assert!(r.p_value.unwrap() < 1e-10, "{r:?}");
    }

    #[test]
    fn reset_declines_an_exact_fit_and_constant_fitted_values() {
        let t = [0.0, 1.0, 2.0, 3.0, 4.0, 5.0];
        let x = with_intercept(&[&t]);
        // y = t² exactly: with t² and t³ added the fit is exact.
        let y: Vec<f64> = t.iter().map(|v| v * v).collect();
        let e = residuals_of(&x, &y);
        let fitted: Vec<f64> = y.iter().zip(&e).map(|(y, e)| y - e).collect();
        assert!(reset(&y, &dm(&x), &fitted).is_none());
        // Intercept-only model: its fitted powers are aliased with it.
        let one = DMatrix::from_element(6, 1, 1.0);
        assert!(reset(&[1.0, 3.0, 2.0, 5.0, 4.0, 6.0], &dm(&one), &[3.5; 6]).is_none());
    }
}
