//! A model's regression with AR(1) errors: the maximum-likelihood fit of
//! [`likelihood`] over the least-squares fit's estimable columns, with
//! Wald inference for φ and the coefficients (normal quantiles, as for any
//! maximum-likelihood estimate) and the likelihood's information criteria.

mod likelihood;

use serde::Serialize;
use statrs::distribution::{ContinuousCDF, Normal};

use crate::design::Design;
use crate::fit::{Fit, Precision};

pub use likelihood::{fit_ar1, Ar1Error, Ar1Fit, EDGE};

/// Rows above which an AR(1) version is not offered unasked: each step of
/// the search refits the transformed rows, and a series this long is rare.
pub const OFFER_UP_TO_ROWS: usize = 10_000;

/// A maximum-likelihood estimate with its Wald inference.
#[derive(Debug, Clone, Serialize)]
pub struct MlEstimate {
    /// `phi (AR(1))`, `Intercept`, a predictor or `column[level]`.
    pub term: String,
    /// The estimate.
    pub estimate: f64,
    /// Its standard error, from the inverse observed information.
    pub std_error: f64,
    /// z = estimate / standard error.
    pub z_stat: Option<f64>,
    /// Two-sided p-value 2·P(Z > |z|), Z standard normal.
    pub p_value: Option<f64>,
    /// Lower limit estimate − z₍₁₊c₎/₂·se.
    pub ci_lower: f64,
    /// Upper limit estimate + z₍₁₊c₎/₂·se.
    pub ci_upper: f64,
}

/// Why the AR(1) version of a model was fitted.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Ar1Origin {
    /// The job asked for it (`errors = "ar1"`).
    Job,
    /// The least-squares residuals were flagged for autocorrelation, so
    /// the report offers it beside the model.
    Suggested,
}

/// The regression with AR(1) errors of one model.
#[derive(Debug, Clone)]
pub struct Ar1Errors {
    /// Why it was fitted.
    pub origin: Ar1Origin,
    /// The maximum-likelihood fit.
    pub fit: Ar1Fit,
    /// The design columns it uses (the least-squares fit's estimable ones).
    pub kept: Vec<usize>,
    /// φ with its inference.
    pub phi: MlEstimate,
    /// The regression coefficients with their inference, in design order.
    pub coefficients: Vec<MlEstimate>,
    /// Estimated parameters: coefficients, φ and σ².
    pub parameters: usize,
    /// Akaike's criterion −2·logL + 2k, k = [`Ar1Errors::parameters`].
    pub aic: f64,
    /// Schwarz's criterion −2·logL + k·ln n.
    pub bic: f64,
    /// The innovation variance the prediction intervals take: S/(n − p − 1),
    /// p coefficients and φ, the maximum-likelihood S/n with the degrees of
    /// freedom the estimates use given back, as least squares' s² does.
    /// (The maximum-likelihood σ² would make intervals too narrow when
    /// there are few rows per parameter.)
    pub forecast_sigma2: f64,
    /// Confidence level of the intervals.
    pub confidence: f64,
}

impl Ar1Errors {
    /// The normal quantile of the intervals.
    pub fn z(&self) -> f64 {
        normal_quantile((1.0 + self.confidence) / 2.0)
    }

    /// The arithmetic of the final solve.
    pub fn precision(&self) -> Precision {
        self.fit.precision
    }
}

/// Whether a model whose residuals are `flagged` for autocorrelation is
/// offered its AR(1)-error version: a single series (one row per period,
/// at most [`OFFER_UP_TO_ROWS`]), unweighted.
pub fn offered(design: &Design, flagged: bool) -> bool {
    flagged
        && design.weights.is_none()
        && design.y.len() <= OFFER_UP_TO_ROWS
        && design.timing.as_ref().is_some_and(|t| !t.panel)
}

/// The standard normal quantile at `prob`.
pub fn normal_quantile(prob: f64) -> f64 {
    Normal::new(0.0, 1.0).map_or(f64::NAN, |n| n.inverse_cdf(prob))
}

fn estimate(term: &str, value: f64, variance: f64, z_crit: f64) -> MlEstimate {
    let se = variance.max(0.0).sqrt();
    let z = (se > 0.0 && se.is_finite()).then(|| value / se);
    MlEstimate {
        term: term.to_string(),
        estimate: value,
        std_error: se,
        z_stat: z,
        p_value: z.and_then(|z| {
            Normal::new(0.0, 1.0)
                .ok()
                .map(|n| (2.0 * n.sf(z.abs())).min(1.0))
        }),
        ci_lower: value - z_crit * se,
        ci_upper: value + z_crit * se,
    }
}

/// The periods from each row of `design` to the next (1 for consecutive
/// periods); all 1 without a date column.
pub fn period_gaps(design: &Design) -> Vec<u32> {
    let Some(timing) = &design.timing else {
        return vec![1; design.y.len()];
    };
    let p = &timing.periods;
    (0..p.len())
        .map(|t| {
            if t == 0 {
                1
            } else {
                u32::try_from(p[t].ordinal - p[t - 1].ordinal)
                    .unwrap_or(u32::MAX)
                    .max(1)
            }
        })
        .collect()
}

/// Fits `design` (one series, its rows in period order, gaps allowed) with
/// AR(1) errors over the estimable columns of its least-squares fit `ols`.
///
/// # Errors
/// [`Ar1Error`] from the likelihood's maximisation.
pub fn ar1_errors(design: &Design, ols: &Fit, origin: Ar1Origin) -> Result<Ar1Errors, Ar1Error> {
    let kept = ols.solution.kept.clone();
    let x = design.x.select_columns(&kept);
    let gaps = period_gaps(design);
    let fit = fit_ar1(&x, design.y.as_slice(), &gaps)?;
    let z_crit = normal_quantile((1.0 + ols.confidence) / 2.0);
    let phi = estimate("phi (AR(1))", fit.phi, fit.covariance[(0, 0)], z_crit);
    let coefficients = kept
        .iter()
        .enumerate()
        .map(|(k, &j)| {
            estimate(
                &design.names[j],
                fit.beta[k],
                fit.covariance[(k + 1, k + 1)],
                z_crit,
            )
        })
        .collect();
    let parameters = kept.len() + 2;
    let n = design.y.len() as f64;
    // At least p + 3 rows were fitted, so the divisor is at least 2.
    let forecast_sigma2 = fit.sigma2 * n / (n - kept.len() as f64 - 1.0);
    let aic = -2.0 * fit.log_likelihood + 2.0 * parameters as f64;
    let bic = -2.0 * fit.log_likelihood + n.ln() * parameters as f64;
    Ok(Ar1Errors {
        origin,
        fit,
        kept,
        phi,
        coefficients,
        parameters,
        aic,
        bic,
        forecast_sigma2,
        confidence: ols.confidence,
    })
}
