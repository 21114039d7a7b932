//! The Durbin-Watson test: its statistic, the exact p-value below
//! [`DW_EXACT_BELOW`] rows by Imhof's formula, and the normal approximation
//! from the statistic's exact moments above.

use super::*;

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
pub(super) fn dw_eigenvalues(basis: &DMatrix<f64>) -> Option<Vec<f64>> {
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
pub(super) fn dw_exact_lower_tail(d: f64, basis: &DMatrix<f64>) -> Option<f64> {
    let shifted: Vec<f64> = dw_eigenvalues(basis)?.iter().map(|l| l - d).collect();
    imhof_lower_tail(&shifted)
}

/// P(D ≤ d) from the normal approximation with the exact moments (see
/// [`durbin_watson`]).
pub(super) fn dw_normal_lower_tail(d: f64, n: usize, traces: DwTraces) -> Option<f64> {
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
pub(super) struct DwTraces {
    /// Estimable columns p.
    pub(super) rank: usize,
    /// tr(MA) = tr A − tr(QᵀAQ), tr A = 2(n − 1).
    pub(super) ma: f64,
    /// tr((MA)²) = tr A² − 2‖AQ‖² + ‖QᵀAQ‖², tr A² = 2(3n − 4).
    pub(super) ma_squared: f64,
}

/// [`DwTraces`] of the estimable columns of `x`, in O(np²) and without an
/// n-row copy: with W the kept columns scaled to unit length and W = QR,
/// QᵀAQ = R⁻ᵀ(W'AW)R⁻¹ and ‖AQ‖² = tr(R⁻ᵀ(AW)'(AW)R⁻¹), where
/// W'AW = Σ (wₜ₊₁ − wₜ)(wₜ₊₁ − wₜ)' (A = D'D, D the first differences)
/// and (AW)'(AW) are p × p sums over the rows, taken in blocks. `None`
/// with no residual degrees of freedom or columns that cannot be scaled.
pub(super) fn dw_traces(x: &DesignMatrix) -> Option<DwTraces> {
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
pub(super) fn first_difference_times(b: &DMatrix<f64>) -> DMatrix<f64> {
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
pub(super) fn column_basis(x: &DesignMatrix) -> Option<DMatrix<f64>> {
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
pub(super) fn imhof_lower_tail(lambda: &[f64]) -> Option<f64> {
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
pub(super) const KRONROD_NODES: [f64; 8] = [
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
pub(super) const KRONROD_WEIGHTS: [f64; 8] = [
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
pub(super) const GAUSS_WEIGHTS: [f64; 4] = [
    0.129_484_966_168_869_7,
    0.279_705_391_489_276_7,
    0.381_830_050_505_118_9,
    0.417_959_183_673_469_4,
];

/// Most intervals [`adaptive_gauss_kronrod`] examines before it gives up.
pub(super) const QUADRATURE_BUDGET: usize = 100_000;

/// The 15-point Kronrod estimate of ∫ₐᵇ f, its difference from the
/// embedded 7-point Gauss estimate, and ∫ₐᵇ |f| by the Kronrod rule.
pub(super) fn kronrod_15(f: &impl Fn(f64) -> f64, a: f64, b: f64) -> (f64, f64, f64) {
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
pub(super) fn adaptive_gauss_kronrod(f: impl Fn(f64) -> f64, tolerance: f64) -> Option<f64> {
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
