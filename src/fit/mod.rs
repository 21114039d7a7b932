//! Ordinary least squares and every statistic of the fit.
//!
//! The solve never forms X'X: it is a Householder QR of the design ([`qr`]),
//! first in double precision; when the design's condition number exceeds
//! [`EXTENDED_ABOVE`] it is repeated in double-double arithmetic, with
//! polynomial powers carried at the double-double precision they were
//! formed in, so that ill-conditioned problems such as the NIST StRD Filip
//! and Wampler datasets keep ten or more correct digits. Well-conditioned
//! designs, where the rounding of a power to double precision cannot move
//! the solution, stay on the fast path.

mod absorb;
pub mod ar1;
pub mod qr;
pub mod robust;

use nalgebra::{DMatrix, DVector};
use statrs::distribution::{Continuous, ContinuousCDF, FisherSnedecor, Normal, StudentsT};

use self::qr::{Columns, Leverage};
use self::robust::robust_covariance;
use crate::ddouble::DoubleDouble;
use crate::design::{Design, DesignMatrix};
use crate::job::Robust;

pub use qr::{Effects as Auxiliary, ALIAS_TOLERANCE};

/// Condition number above which the solve is repeated in double-double
/// arithmetic. A double-precision QR loses about log10(κ) digits, and up to
/// twice that for the coefficients of a poorly fitting model: measured on
/// the NIST StRD Wampler datasets (κ ≈ 2.2·10³), double precision kept only
/// 6 to 9 digits, so the switch comes early, at 10².
pub const EXTENDED_ABOVE: f64 = 100.0;

/// The arithmetic a solve ran in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Precision {
    /// IEEE double precision.
    Double,
    /// Double-double, about 32 significant digits.
    DoubleDouble,
}

impl Precision {
    /// The precision in words, for the report.
    pub fn label(self) -> &'static str {
        match self {
            Precision::Double => "double",
            Precision::DoubleDouble => "double-double",
        }
    }
}

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
    /// The regression with AR(1) errors the job asks for cannot be fitted.
    #[error("model '{model}': errors = \"ar1\": {source}; or leave `errors` out for least squares alone")]
    Ar1 {
        /// The model.
        model: String,
        /// Why.
        source: ar1::Ar1Error,
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
    /// What rounding the coefficients to `beta` left over: zeros from a
    /// double-precision solve.
    pub beta_low: Vec<f64>,
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
    /// 2-norm condition number of the kept columns scaled to unit length.
    pub condition_number: f64,
    /// The triangular factor R of the kept columns scaled to unit length,
    /// in the order of `kept`.
    pub r: DMatrix<f64>,
    /// The arithmetic of the solve.
    pub precision: Precision,
}

/// Solves `y ≈ X b` by Householder QR with aliased columns set aside, in
/// double precision or, when needed, in double-double (which adds the low
/// parts of columns formed in double-double).
pub fn least_squares(x: &DesignMatrix, y: &DVector<f64>) -> LeastSquares {
    let double = qr::solve::<f64>(Columns::of(x), y, Leverage::Wanted);
    let kappa = qr::condition_number(&double.r);
    if kappa > EXTENDED_ABOVE {
        let extended =
            qr::solve::<DoubleDouble>(Columns::of(x).with_low_parts(), y, Leverage::Wanted);
        LeastSquares::from_solved(extended, Precision::DoubleDouble)
    } else {
        LeastSquares::from_solved(double, Precision::Double)
    }
}

/// An auxiliary regression, one that only feeds a test statistic
/// (Breusch-Godfrey, Breusch-Pagan, RESET, ...): double precision at any
/// condition number, with aliased columns set aside by the same rule as the
/// model's own fit.
pub fn auxiliary_least_squares(x: &DesignMatrix, y: &[f64]) -> Auxiliary {
    auxiliary_least_squares_with(x, &DesignMatrix::new(x.nrows(), Vec::new()), y)
}

/// [`auxiliary_least_squares`] on the columns of `x` followed by those of
/// `extra` (as tall as `x`): an auxiliary regression's lags or powers, added
/// without copying the columns of `x`. The solve is the model's own
/// ([`qr::solve`]), so memory stays at a block of rows whatever n is.
pub fn auxiliary_least_squares_with(
    x: &DesignMatrix,
    extra: &DesignMatrix,
    y: &[f64],
) -> Auxiliary {
    let joined = x.joined(extra);
    qr::effects::<f64>(Columns::of(&joined), &DVector::from_column_slice(y))
}

/// [`auxiliary_least_squares_with`] at the precision the problem calls
/// for, by the main fit's rule: repeated in double-double arithmetic, with
/// the columns' low parts, when `extended` asks for it (the model itself
/// needed it) or when the condition number of the joined columns exceeds
/// [`EXTENDED_ABOVE`]. `extra(low)` forms the added columns, with their low
/// parts when `low`: they are formed only for the solve that reads them.
pub fn auxiliary_least_squares_precise(
    x: &DesignMatrix,
    extra: impl Fn(bool) -> DesignMatrix,
    y: &[f64],
    extended: bool,
) -> Auxiliary {
    let y = DVector::from_column_slice(y);
    if !extended {
        let joined = x.joined(&extra(false));
        let double = qr::effects::<f64>(Columns::of(&joined), &y);
        if qr::condition_number(&double.r) <= EXTENDED_ABOVE {
            return double;
        }
    }
    let joined = x.joined(&extra(true));
    qr::effects::<DoubleDouble>(Columns::of(&joined).with_low_parts(), &y)
}

/// The fitted values X b of `solution`, in double-double arithmetic from
/// the columns' low parts and the coefficients' (exact sums of the parts
/// when the solve was in double precision).
pub fn fitted_extended(x: &DesignMatrix, solution: &LeastSquares) -> Vec<DoubleDouble> {
    let columns = Columns::of(x).with_low_parts();
    let n = x.nrows();
    let mut fitted = vec![DoubleDouble::from_f64(0.0); n];
    let mut values = Vec::with_capacity(n.min(qr::BLOCK));
    for start in (0..n).step_by(qr::BLOCK) {
        let end = (start + qr::BLOCK).min(n);
        for (k, &j) in solution.kept.iter().enumerate() {
            let b = DoubleDouble::from_f64(solution.beta[k])
                + DoubleDouble::from_f64(solution.beta_low[k]);
            values.clear();
            columns.fill::<DoubleDouble>(j, start..end, &mut values);
            for (f, &v) in fitted[start..end].iter_mut().zip(&values) {
                *f = *f + v * b;
            }
        }
    }
    fitted
}

impl LeastSquares {
    fn from_solved(solved: qr::Solved, precision: Precision) -> Self {
        LeastSquares {
            condition_number: qr::condition_number(&solved.r),
            kept: solved.kept,
            aliased: solved.aliased,
            beta: solved.beta,
            beta_low: solved.beta_low,
            xtx_inv: solved.xtx_inv,
            effects: solved.effects,
            leverage: solved.leverage,
            residuals: solved.residuals,
            r: solved.r,
            precision,
        }
    }

    /// The rank of the model without the kept columns for which `drop` is
    /// true, and how much its residual sum of squares exceeds this model's,
    /// from this solution's R factor and effects alone: with X = QR,
    /// dropping columns leaves a model inside the span of Q, so the rise is
    /// min ‖Qᵀy − R_S b‖² over the remaining columns S, a problem of
    /// only as many rows as coefficients (Golub & Van Loan 2013, §6.5 on
    /// downdating). `None` when the answer needs a refit instead: when a
    /// column was set aside as aliased (dropping a term can make it
    /// estimable again) or the solve needed double-double precision.
    pub fn sse_rise_without(&self, drop: impl Fn(usize) -> bool) -> Option<(usize, f64)> {
        if !self.aliased.is_empty() || self.precision != Precision::Double {
            return None;
        }
        let keep: Vec<usize> = (0..self.kept.len())
            .filter(|&k| !drop(self.kept[k]))
            .collect();
        let effects = DVector::from_column_slice(&self.effects);
        let rise = if keep.is_empty() {
            effects.norm_squared()
        } else {
            let reduced_r = DesignMatrix::from_dense(&self.r.select_columns(&keep), None);
            let reduced = qr::solve::<f64>(Columns::of(&reduced_r), &effects, Leverage::Skipped);
            if reduced.kept.len() < keep.len() {
                return None;
            }
            reduced.residuals.norm_squared()
        };
        Some((keep.len(), rise))
    }
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
    /// R² = 1 − SSE/SST, SST about the mean when the columns hold a
    /// constant (an intercept, or a factor with an indicator for every
    /// level) and about zero otherwise (uncentred), as NIST StRD certifies
    /// it.
    pub r_squared: Option<f64>,
    /// Adjusted R² = 1 − (1 − R²)(n − i)/(n − p), i = 1 when the columns
    /// hold a constant, else 0.
    pub adj_r_squared: Option<f64>,
    /// Residual standard error s = √(SSE/(n − p)).
    pub sigma: f64,
    /// Overall F = (SSR/df_model)/(SSE/df_resid) against the constant-only
    /// model (or the zero model when the columns hold no constant).
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
    /// 2-norm condition number of the design with its columns scaled to
    /// unit length (Belsley, Kuh & Welsch 1980): how much rounding and small
    /// changes in the data can be magnified in the coefficients.
    pub condition_number: f64,
    /// The arithmetic the solve ran in.
    pub precision: Precision,
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
    /// Fitted values X b, one per used row, on the response's own scale
    /// (unweighted).
    pub fitted: Vec<f64>,
    /// The least-squares solution behind it all.
    pub solution: LeastSquares,
    /// The heteroscedasticity-consistent estimator behind the coefficients'
    /// standard errors, when one was asked for.
    pub standard_errors: Option<Robust>,
}

/// `fit` with its coefficients' standard errors, t statistics, p-values
/// and intervals from a heteroscedasticity-consistent covariance (White
/// 1980; HC1 and HC3 of MacKinnon & White 1985), t on the residual degrees
/// of freedom. The overall F test and the forecast intervals keep the
/// classical variance.
pub fn with_robust_errors(mut fit: Fit, design: &Design, kind: Robust) -> Fit {
    let kind = match kind {
        Robust::Hac(None) => Robust::Hac(Some(robust::newey_west_lags(fit.n))),
        other => other,
    };
    let ls = &fit.solution;
    let residuals: Vec<f64> = ls.residuals.iter().copied().collect();
    let cov = robust_covariance(
        &design.x,
        &ls.kept,
        &ls.xtx_inv,
        &residuals,
        &ls.leverage,
        kind,
    );
    let t_crit = t_quantile((1.0 + fit.confidence) / 2.0, fit.df_resid as f64);
    for (k, c) in fit.coefficients.iter_mut().enumerate() {
        let se = cov[(k, k)].sqrt();
        c.std_error = se;
        c.t_stat = (se > 0.0 && se.is_finite()).then(|| c.estimate / se);
        c.p_value = c.t_stat.and_then(|t| t_two_sided_p(t, fit.df_resid as f64));
        c.ci_lower = c.estimate - t_crit * se;
        c.ci_upper = c.estimate + t_crit * se;
    }
    fit.standard_errors = Some(kind);
    fit
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
    // A factor with an indicator for every level holds the constant as
    // well as an intercept column does: R² and F are then about the mean.
    let intercept = usize::from(if design.intercept {
        solution.kept.first() == Some(&0)
    } else {
        design.every_level_term().is_some()
    });
    let df_model = p - intercept;
    // A fit exact to rounding (residuals within a few rounding errors of
    // the response's size) is an exact fit: its residual variance is zero,
    // not noise to build t statistics on.
    let raw_sse = solution.residuals.norm_squared();
    let exact = (n as f64 * f64::EPSILON).powi(2) * design.y.norm_squared();
    let sse = if exact.is_finite() && raw_sse <= exact {
        0.0
    } else {
        raw_sse
    };
    let sst = match (&design.weights, intercept == 1) {
        // About the weighted mean: Σ wᵢ(yᵢ − ȳ_w)², the rows held as √wᵢ·yᵢ.
        (Some(w), true) => {
            let total: f64 = w.iter().sum();
            let mean = design
                .y
                .iter()
                .zip(w)
                .map(|(v, w)| v * w.sqrt())
                .sum::<f64>()
                / total;
            design
                .y
                .iter()
                .zip(w)
                .map(|(v, w)| (v - w.sqrt() * mean).powi(2))
                .sum()
        }
        (None, true) => {
            let mean = design.y.mean();
            design.y.iter().map(|v| (v - mean).powi(2)).sum()
        }
        (_, false) => design.y.norm_squared(),
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
            let t_stat = (std_error > 0.0 && std_error.is_finite()).then(|| estimate / std_error);
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
    // With weights the density of each yᵢ has variance σ²/wᵢ, which adds
    // ½Σ ln wᵢ (R's logLik of a weighted fit).
    let weights_term = design
        .weights
        .as_ref()
        .map_or(0.0, |w| 0.5 * w.iter().map(|w| w.ln()).sum::<f64>());
    let log_likelihood =
        weights_term - nf / 2.0 * ((2.0 * std::f64::consts::PI).ln() + (sse / nf).ln() + 1.0);
    let k = (p + 1) as f64;
    let fitted = design
        .y
        .iter()
        .zip(solution.residuals.iter())
        .enumerate()
        .map(|(i, (y, e))| design.unscaled(i, y - e))
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
            condition_number: solution.condition_number,
            precision: solution.precision,
        },
        fitted,
        solution,
        standard_errors: None,
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

/// Degrees of freedom from which the t quantile comes from its asymptotic
/// expansion about the normal quantile rather than from statrs.
pub const T_EXPANSION_FROM: f64 = 1e4;

/// Quantile of Student's t with `df` degrees of freedom at probability
/// `prob` (0.5 < prob < 1).
///
/// Up to [`T_EXPANSION_FROM`] degrees of freedom: statrs's inverse,
/// polished by Newton steps on the survival function. Beyond it, where
/// statrs loses digits (its t survival function itself degrades near 10⁷
/// degrees of freedom), the Cornish-Fisher expansion of t in powers of 1/ν
/// about the normal quantile z (Abramowitz & Stegun 1964, formula 26.7.5),
/// whose terms past 1/ν⁴ are below double precision there.
pub fn t_quantile(prob: f64, df: f64) -> f64 {
    if df >= T_EXPANSION_FROM {
        let Ok(normal) = Normal::new(0.0, 1.0) else {
            return f64::NAN;
        };
        let z = normal.inverse_cdf(prob);
        let z2 = z * z;
        let g1 = (z2 + 1.0) * z / 4.0;
        let g2 = ((5.0 * z2 + 16.0) * z2 + 3.0) * z / 96.0;
        let g3 = (((3.0 * z2 + 19.0) * z2 + 17.0) * z2 - 15.0) * z / 384.0;
        let g4 = ((((79.0 * z2 + 776.0) * z2 + 1482.0) * z2 - 1920.0) * z2 - 945.0) * z / 92160.0;
        return z + (g1 + (g2 + (g3 + g4 / df) / df) / df) / df;
    }
    let Ok(dist) = StudentsT::new(0.0, 1.0, df) else {
        return f64::NAN;
    };
    let mut t = dist.inverse_cdf(prob);
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
        let ls = least_squares(&DesignMatrix::from_dense(&x, None), &y);
        assert_eq!(ls.kept, vec![0, 1]);
        assert_eq!(ls.aliased, vec![2]);
    }

    #[test]
    fn blocked_auxiliary_solve_matches_the_full_solve() {
        // 5,000 rows: three blocks, the last one short; an extra column
        // that repeats a base column must be set aside as aliased.
        let n = 5_000;
        let x = DMatrix::from_fn(n, 3, |i, j| match j {
            0 => 1.0,
            1 => (i as f64 * 0.37).sin() * 10.0,
            _ => (i % 13) as f64,
        });
        let extra = [
            (0..n).map(|i| ((i * i) % 17) as f64).collect::<Vec<_>>(),
            x.column(1).iter().map(|v| 2.0 * v).collect(),
        ];
        let y = DVector::from_fn(n, |i, _| 3.0 + (i as f64 * 0.011).cos() + (i % 5) as f64);
        let blocked = auxiliary_least_squares_with(
            &DesignMatrix::from_dense(&x, None),
            &DesignMatrix::new(
                n,
                extra
                    .iter()
                    .map(|c| crate::design::DesignColumn::values(c.clone()))
                    .collect(),
            ),
            y.as_slice(),
        );
        let mut full_x = x.clone().resize_horizontally(5, 0.0);
        for (k, column) in extra.iter().enumerate() {
            full_x.set_column(3 + k, &DVector::from_column_slice(column));
        }
        let full = least_squares(&DesignMatrix::from_dense(&full_x, None), &y);
        assert_eq!(blocked.kept, full.kept);
        assert_eq!(blocked.kept, vec![0, 1, 2, 3]);
        let sse = full.residuals.norm_squared();
        assert!(
            (blocked.sse - sse).abs() < 1e-10 * sse,
            "{} vs {sse}",
            blocked.sse
        );
        let explained = |e: &[f64]| e.iter().map(|v| v * v).sum::<f64>();
        let expected = explained(&full.effects);
        let got = explained(&blocked.effects);
        assert!(
            (got - expected).abs() < 1e-10 * expected,
            "{got} vs {expected}"
        );
    }

    #[test]
    fn sse_rise_from_the_r_factor_matches_a_refit() {
        // Five columns with no exact relation; drop columns 1 and 3.
        let x = DMatrix::from_fn(12, 5, |i, j| {
            if j == 0 {
                1.0
            } else {
                ((i * 7 + j * 5) % 11) as f64 + (i * j) as f64 * 0.1
            }
        });
        let y = DVector::from_fn(12, |i, _| (i as f64 * 1.3).sin() * 4.0 + i as f64);
        let full = least_squares(&DesignMatrix::from_dense(&x, None), &y);
        let (rank, rise) = full.sse_rise_without(|j| j == 1 || j == 3).unwrap();
        let refit = least_squares(
            &DesignMatrix::from_dense(&x.select_columns(&[0, 2, 4]), None),
            &y,
        );
        let expected = refit.residuals.norm_squared() - full.residuals.norm_squared();
        assert_eq!(rank, 3);
        assert!(
            (rise - expected).abs() < 1e-10 * expected,
            "{rise} vs {expected}"
        );
        // A column set aside as aliased sends the caller to a refit.
        let mut aliased = x.clone().insert_column(5, 0.0);
        aliased.set_column(5, &(x.column(1) * 2.0));
        assert!(least_squares(&DesignMatrix::from_dense(&aliased, None), &y)
            .sse_rise_without(|j| j == 1)
            .is_none());
    }

    #[test]
    fn straight_line_through_known_points() {
        // y = 1 + 2x exactly.
        let x = DMatrix::from_row_slice(3, 2, &[1.0, 0.0, 1.0, 1.0, 1.0, 2.0]);
        let y = DVector::from_vec(vec![1.0, 3.0, 5.0]);
        let ls = least_squares(&DesignMatrix::from_dense(&x, None), &y);
        assert!((ls.beta[0] - 1.0).abs() < 1e-14);
        assert!((ls.beta[1] - 2.0).abs() < 1e-14);
        assert!(ls.residuals.norm() < 1e-14);
        // Leverages of a straight line on 0,1,2: 1/n + (x - x̄)²/Sxx.
        let expected = [5.0 / 6.0, 1.0 / 3.0, 5.0 / 6.0];
        for (h, e) in ls.leverage.iter().zip(expected) {
            assert!((h - e).abs() < 1e-14, "{h} vs {e}");
        }
    }

    // Reference values: scipy 1.17.1, as recorded in
    // tests/fixtures/distributions.json (tests/reference/make_distribution_reference.py).
    #[test]
    fn t_quantile_matches_reference_values() {
        let q = t_quantile(0.975, 10.0);
        assert!((q - 2.2281388519862739).abs() < 1e-13, "{q}");
        // At df = 1e7 statrs alone is off in the second digit; scipy 1.17.1
        // gives 1.959964221767205 (tests/fixtures/distributions.json).
        let q = t_quantile(0.975, 1e7);
        assert!((q / 1.959964221767205 - 1.0).abs() < 1e-12, "{q}");
    }

    #[test]
    fn tail_p_values_keep_their_digits() {
        let p = t_two_sided_p(40.0, 10.0).unwrap();
        assert!((p / 2.2808577430857547e-12 - 1.0).abs() < 1e-12, "{p}");
        let p = f_sf(1e4, 3.0, 100.0).unwrap();
        assert!((p / 9.4654770966955e-124 - 1.0).abs() < 1e-9, "{p}");
    }
}
