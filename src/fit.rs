//! Ordinary least squares by Householder QR, and every statistic of the fit.
//!
//! The solve never forms X'X. Columns are first scaled to unit length, so
//! that the rank test does not depend on units, then reduced by Householder
//! reflections in the order the model lists them (Golub & Van Loan, *Matrix
//! Computations*, 4th ed., §5.2 and §5.4). A column whose part not explained
//! by the columns before it is below [`ALIAS_TOLERANCE`] of its length is
//! *aliased*: a perfect linear combination of earlier columns. It is moved
//! aside and reported by name rather than crashing the solve, so the later of
//! two collinear columns is the one left out. (nalgebra's own pivoted QR
//! pivots on the largest entry rather than the largest column norm and could
//! leave out the intercept, hence this small hand-written routine.)

use nalgebra::{DMatrix, DVector};
use statrs::distribution::{ContinuousCDF, FisherSnedecor, StudentsT};

use crate::design::Design;

/// A column is aliased when the norm of its part orthogonal to the earlier
/// columns is below this fraction of its own norm.
pub const ALIAS_TOLERANCE: f64 = 1e-10;

/// An error that stops a fit.
#[derive(Debug, thiserror::Error)]
pub enum FitError {
    /// Not enough rows to estimate the coefficients and the error variance.
    #[error("model '{model}' has {rows} usable rows for {coefficients} coefficients; it needs at least one row more than coefficients (rows with a blank in a used column are left out)")]
    TooFewRows {
        /// The model.
        model: String,
        /// Usable rows.
        rows: usize,
        /// Coefficients that could be estimated.
        coefficients: usize,
    },
}

/// The least-squares solution of `y ≈ X b` and the pieces of its QR factor
/// that the statistics need.
#[derive(Debug, Clone)]
pub struct LeastSquares {
    /// Indices (into the columns of X) of the estimable columns, in order.
    pub kept: Vec<usize>,
    /// Indices of aliased columns, in order.
    pub aliased: Vec<usize>,
    /// Coefficients of the kept columns, in the order of `kept`.
    pub beta: DVector<f64>,
    /// (X'X)⁻¹ over the kept columns, from R⁻¹R⁻ᵀ (never by inverting X'X).
    pub xtx_inv: DMatrix<f64>,
    /// Effects: the first `kept.len()` entries of Qᵀy. The square of each is
    /// the sum of squares its column adds given the columns before it.
    pub effects: Vec<f64>,
    /// Leverage (diagonal of the hat matrix) of each row: the squared row
    /// norm of the thin Q factor.
    pub leverage: Vec<f64>,
    /// y − X b.
    pub residuals: DVector<f64>,
}

/// Solves `y ≈ X b` by Householder QR with aliased columns set aside.
pub fn least_squares(x: &DMatrix<f64>, y: &DVector<f64>) -> LeastSquares {
    let (n, p) = x.shape();
    let scale: Vec<f64> = x.column_iter().map(|c| c.norm()).collect();
    let mut a = x.clone();
    for (j, s) in scale.iter().enumerate() {
        if *s > 0.0 {
            a.column_mut(j).unscale_mut(*s);
        }
    }
    let mut kept = Vec::with_capacity(p);
    let mut aliased = Vec::new();
    // Householder vectors v (with v[0] = 1 implied by storage below) and betas.
    let mut reflectors: Vec<(DVector<f64>, f64)> = Vec::with_capacity(p.min(n));
    let mut r = DMatrix::<f64>::zeros(p, p);
    for (j, &length) in scale.iter().enumerate() {
        let k = kept.len();
        let mut col: DVector<f64> = a.column(j).into_owned();
        for (i, (v, tau)) in reflectors.iter().enumerate() {
            apply_reflector(v, *tau, &mut col.rows_mut(i, n - i));
        }
        let tail_norm = if k < n {
            col.rows(k, n - k).norm()
        } else {
            0.0
        };
        if length == 0.0 || tail_norm < ALIAS_TOLERANCE {
            aliased.push(j);
            continue;
        }
        let (v, tau, alpha) = householder(&col.rows(k, n - k).into_owned());
        for i in 0..k {
            r[(i, k)] = col[i];
        }
        r[(k, k)] = alpha;
        reflectors.push((v, tau));
        kept.push(j);
    }
    let rank = kept.len();
    let r = r.view((0, 0), (rank, rank)).into_owned();

    let mut qty = y.clone();
    for (i, (v, tau)) in reflectors.iter().enumerate() {
        apply_reflector(v, *tau, &mut qty.rows_mut(i, n - i));
    }
    let effects: Vec<f64> = qty.rows(0, rank).iter().copied().collect();
    let r_inv = r
        .solve_upper_triangular(&DMatrix::identity(rank, rank))
        .unwrap_or_else(|| DMatrix::from_element(rank, rank, f64::NAN));
    let scaled_beta = &r_inv * DVector::from_column_slice(&effects);
    let beta = DVector::from_iterator(
        rank,
        kept.iter()
            .zip(scaled_beta.iter())
            .map(|(&j, b)| b / scale[j]),
    );
    let scaled_cov = &r_inv * r_inv.transpose();
    let xtx_inv = DMatrix::from_fn(rank, rank, |i, j| {
        scaled_cov[(i, j)] / (scale[kept[i]] * scale[kept[j]])
    });

    let mut leverage = vec![0.0; n];
    for k in 0..rank {
        let mut e = DVector::<f64>::zeros(n);
        e[k] = 1.0;
        for (i, (v, tau)) in reflectors.iter().enumerate().rev() {
            apply_reflector(v, *tau, &mut e.rows_mut(i, n - i));
        }
        for (h, q) in leverage.iter_mut().zip(e.iter()) {
            *h += q * q;
        }
    }

    let fitted = kept
        .iter()
        .zip(beta.iter())
        .fold(DVector::zeros(n), |acc, (&j, b)| acc + x.column(j) * *b);
    LeastSquares {
        kept,
        aliased,
        beta,
        xtx_inv,
        effects,
        leverage,
        residuals: y - fitted,
    }
}

/// The Householder reflector H = I − τ v vᵀ with v[0] = 1 that maps `x` to
/// (α, 0, …, 0), with α = −sign(x₀)‖x‖ (Golub & Van Loan, Algorithm 5.1.1).
fn householder(x: &DVector<f64>) -> (DVector<f64>, f64, f64) {
    let norm = x.norm();
    let alpha = if x[0] >= 0.0 { -norm } else { norm };
    let mut v = x.clone();
    v[0] -= alpha;
    let v0 = v[0];
    if v0 == 0.0 {
        return (v, 0.0, alpha);
    }
    v.unscale_mut(v0);
    let tau = (alpha - x[0]).abs() / norm;
    (v, tau, alpha)
}

fn apply_reflector(v: &DVector<f64>, tau: f64, x: &mut nalgebra::DVectorViewMut<'_, f64>) {
    if tau == 0.0 {
        return;
    }
    let s = tau * v.dot(x);
    x.axpy(-s, v, 1.0);
}

/// One estimated coefficient with its inference.
#[derive(Debug, Clone, serde::Serialize)]
pub struct Coefficient {
    /// `Intercept`, a numeric column's name, or `column[level]`.
    pub term: String,
    /// Least-squares estimate b.
    pub estimate: f64,
    /// Standard error s·√((X'X)⁻¹)ⱼⱼ.
    pub std_error: f64,
    /// t = b / se; absent when the standard error is zero.
    pub t_stat: Option<f64>,
    /// Two-sided p-value 2·P(T > |t|), T ~ t(n − p), from the survival
    /// function so tiny values keep their digits.
    pub p_value: Option<f64>,
    /// Lower confidence limit b − t₍₁₊c₎/₂·se.
    pub ci_lower: f64,
    /// Upper confidence limit b + t₍₁₊c₎/₂·se.
    pub ci_upper: f64,
}

/// Overall fit statistics.
#[derive(Debug, Clone, serde::Serialize)]
pub struct FitQuality {
    /// R² = 1 − SSE/SST, SST about the mean with an intercept and about zero
    /// without one (uncentred), as NIST StRD certifies it.
    pub r_squared: Option<f64>,
    /// Adjusted R² = 1 − (1 − R²)(n − i)/(n − p), i = 1 with an intercept, else 0.
    pub adj_r_squared: Option<f64>,
    /// Residual standard error s = √(SSE/(n − p)).
    pub sigma: f64,
    /// Overall F = (SSR/df_model)/(SSE/df_resid) against the intercept-only
    /// model (or the zero model without an intercept).
    pub f_stat: Option<f64>,
    /// P(F > f) from the survival function.
    pub f_p_value: Option<f64>,
    /// Gaussian log-likelihood at the maximum: −n/2·(ln 2π + ln(SSE/n) + 1).
    pub log_likelihood: f64,
    /// Akaike's criterion −2·logL + 2k, k = coefficients + 1 (the variance).
    pub aic: f64,
    /// Schwarz's criterion −2·logL + k·ln n, same k.
    pub bic: f64,
    /// Residual sum of squares.
    pub sse: f64,
    /// Regression sum of squares SST − SSE.
    pub ssr: f64,
    /// Total sum of squares (centred with an intercept, else uncentred).
    pub sst: f64,
}

/// A fitted model: every number the later stages and the report use.
#[derive(Debug, Clone)]
pub struct Fit {
    /// Rows used.
    pub n: usize,
    /// Degrees of freedom of the model: estimable coefficients, less one
    /// with an intercept.
    pub df_model: usize,
    /// Residual degrees of freedom n − p, p = estimable coefficients.
    pub df_resid: usize,
    /// Confidence level of the intervals.
    pub confidence: f64,
    /// Estimable coefficients, in design order.
    pub coefficients: Vec<Coefficient>,
    /// Names of aliased coefficients, left out of the fit.
    pub aliased: Vec<String>,
    /// Overall statistics.
    pub quality: FitQuality,
    /// Fitted values X b, one per used row.
    pub fitted: Vec<f64>,
    /// The least-squares solution behind it all.
    pub solution: LeastSquares,
}

/// Fits `design` by least squares and computes its inference at `confidence`.
///
/// # Errors
/// [`FitError::TooFewRows`] when there are not more usable rows than
/// estimable coefficients.
pub fn fit(model: &str, design: &Design, confidence: f64) -> Result<Fit, FitError> {
    let solution = least_squares(&design.x, &design.y);
    let n = design.y.len();
    let p = solution.kept.len();
    if n <= p {
        return Err(FitError::TooFewRows {
            model: model.to_string(),
            rows: n,
            coefficients: p,
        });
    }
    let df_resid = n - p;
    let intercept = usize::from(design.intercept && solution.kept.first() == Some(&0));
    let df_model = p - intercept;
    let sse = solution.residuals.norm_squared();
    let sst = if intercept == 1 {
        let mean = design.y.mean();
        design.y.iter().map(|v| (v - mean).powi(2)).sum()
    } else {
        design.y.norm_squared()
    };
    let ssr = sst - sse;
    let s2 = sse / df_resid as f64;
    let sigma = s2.sqrt();
    let t_crit = t_quantile((1.0 + confidence) / 2.0, df_resid as f64);
    let coefficients = solution
        .kept
        .iter()
        .enumerate()
        .map(|(k, &j)| {
            let estimate = solution.beta[k];
            let std_error = (s2 * solution.xtx_inv[(k, k)]).sqrt();
            let t_stat = (std_error > 0.0).then(|| estimate / std_error);
            Coefficient {
                term: design.names[j].clone(),
                estimate,
                std_error,
                t_stat,
                p_value: t_stat.and_then(|t| t_two_sided_p(t, df_resid as f64)),
                ci_lower: estimate - t_crit * std_error,
                ci_upper: estimate + t_crit * std_error,
            }
        })
        .collect();
    let r_squared = (sst > 0.0).then(|| 1.0 - sse / sst);
    let adj_r_squared =
        r_squared.map(|r2| 1.0 - (1.0 - r2) * (n - intercept) as f64 / df_resid as f64);
    let f_stat = (df_model > 0 && sse > 0.0).then(|| (ssr / df_model as f64) / s2);
    let f_p_value = f_stat.and_then(|f| f_sf(f, df_model as f64, df_resid as f64));
    let nf = n as f64;
    let log_likelihood = -nf / 2.0 * ((2.0 * std::f64::consts::PI).ln() + (sse / nf).ln() + 1.0);
    let k = (p + 1) as f64;
    let fitted = design
        .y
        .iter()
        .zip(solution.residuals.iter())
        .map(|(y, e)| y - e)
        .collect();
    Ok(Fit {
        n,
        df_model,
        df_resid,
        confidence,
        coefficients,
        aliased: solution
            .aliased
            .iter()
            .map(|&j| design.names[j].clone())
            .collect(),
        quality: FitQuality {
            r_squared,
            adj_r_squared,
            sigma,
            f_stat,
            f_p_value,
            log_likelihood,
            aic: -2.0 * log_likelihood + 2.0 * k,
            bic: -2.0 * log_likelihood + k * nf.ln(),
            sse,
            ssr,
            sst,
        },
        fitted,
        solution,
    })
}

/// Two-sided p-value of a t statistic, 2·P(T > |t|), from the survival
/// function; `None` when `t` is not a number.
pub fn t_two_sided_p(t: f64, df: f64) -> Option<f64> {
    if t.is_nan() {
        return None;
    }
    let dist = StudentsT::new(0.0, 1.0, df).ok()?;
    Some((2.0 * dist.sf(t.abs())).min(1.0))
}

/// Upper tail P(F > f) of the F(d1, d2) distribution; `None` when `f` is
/// not a number.
pub fn f_sf(f: f64, d1: f64, d2: f64) -> Option<f64> {
    if f.is_nan() {
        return None;
    }
    let dist = FisherSnedecor::new(d1, d2).ok()?;
    Some(dist.sf(f.max(0.0)))
}

/// Quantile of Student's t with `df` degrees of freedom at probability
/// `prob` (0.5 < prob < 1). statrs's inverse loses digits for very large
/// df, so the result is polished by Newton steps on the survival function.
pub fn t_quantile(prob: f64, df: f64) -> f64 {
    let Ok(dist) = StudentsT::new(0.0, 1.0, df) else {
        return f64::NAN;
    };
    let mut t = dist.inverse_cdf(prob);
    use statrs::distribution::Continuous;
    for _ in 0..3 {
        let step = (dist.sf(t) - (1.0 - prob)) / dist.pdf(t);
        if !step.is_finite() {
            break;
        }
        t += step;
    }
    t
}

#[cfg(test)]
// Reference values are written with every digit their source printed.
#[allow(clippy::excessive_precision)]
mod tests {
    use super::*;

    #[test]
    fn aliased_column_is_the_later_one_and_is_left_out() {
        // x2 = 2·x1, so x2 adds nothing once x1 is in.
        let x = DMatrix::from_row_slice(
            4,
            3,
            &[1.0, 1.0, 2.0, 1.0, 2.0, 4.0, 1.0, 3.0, 6.0, 1.0, 5.0, 10.0],
        );
        let y = DVector::from_vec(vec![1.0, 3.0, 2.0, 5.0]);
        let ls = least_squares(&x, &y);
        assert_eq!(ls.kept, vec![0, 1]);
        assert_eq!(ls.aliased, vec![2]);
    }

    #[test]
    fn straight_line_through_known_points() {
        // y = 1 + 2x exactly.
        let x = DMatrix::from_row_slice(3, 2, &[1.0, 0.0, 1.0, 1.0, 1.0, 2.0]);
        let y = DVector::from_vec(vec![1.0, 3.0, 5.0]);
        let ls = least_squares(&x, &y);
        assert!((ls.beta[0] - 1.0).abs() < 1e-14);
        assert!((ls.beta[1] - 2.0).abs() < 1e-14);
        assert!(ls.residuals.norm() < 1e-14);
        // Leverages of a straight line on 0,1,2: 1/n + (x - x̄)²/Sxx.
        let expected = [5.0 / 6.0, 1.0 / 3.0, 5.0 / 6.0];
        for (h, e) in ls.leverage.iter().zip(expected) {
            assert!((h - e).abs() < 1e-14, "{h} vs {e}");
        }
    }

    // Reference values: scipy 1.17.1 and mpmath at 50 digits, as recorded in
    // the project's crate notes (../shared/CRATES.md, section 4).
    #[test]
    fn t_quantile_matches_reference_values() {
        let q = t_quantile(0.975, 10.0);
        assert!((q - 2.2281388519862739).abs() < 1e-13, "{q}");
        // Standard normal 0.975 quantile 1.959963984540054 is the limit;
        // at df = 1e7 statrs alone is off in the second digit.
        let q = t_quantile(0.975, 1e7);
        assert!((q - 1.959963984540054).abs() < 1e-6, "{q}");
    }

    #[test]
    fn tail_p_values_keep_their_digits() {
        let p = t_two_sided_p(40.0, 10.0).unwrap();
        assert!((p / 2.2808577430857547e-12 - 1.0).abs() < 1e-12, "{p}");
        let p = f_sf(1e4, 3.0, 100.0).unwrap();
        assert!((p / 9.4654770966955e-124 - 1.0).abs() < 1e-9, "{p}");
    }
}
