//! A model's regression with AR(1) errors, as the report and the JSON
//! (`ar1_errors`) carry it.

use serde::Serialize;

use crate::checks::assumptions::{ljung_box, ljung_box_lags, TestResult};
use crate::fit::ar1::{Ar1Errors, Ar1Origin, MlEstimate};
use crate::fit::Precision;
use crate::forecast::{Backtest, ForecastRow};

/// The regression with AR(1) errors beside a least-squares model.
#[derive(Debug, Clone, Serialize)]
pub struct Ar1Results {
    /// `job` when the job asked for it (`errors = "ar1"`), `suggested` when
    /// it is offered because the least-squares residuals were flagged for
    /// autocorrelation.
    pub origin: Ar1Origin,
    /// Rows (consecutive periods) fitted.
    pub n: usize,
    /// The AR(1) coefficient φ of the errors uₜ = φuₜ₋₁ + eₜ.
    pub phi: MlEstimate,
    /// Regression coefficients by maximum likelihood, in design order.
    pub coefficients: Vec<MlEstimate>,
    /// Innovation standard deviation σ = √(S/n), the maximum-likelihood
    /// one.
    pub sigma: f64,
    /// The innovation standard deviation the prediction intervals take,
    /// √(S/(n − p − 1)): σ with the degrees of freedom of the p
    /// coefficients and φ given back.
    pub sigma_forecast: f64,
    /// The log-likelihood at the maximum, the first period's included.
    pub log_likelihood: f64,
    /// −2·logL + 2k, k = coefficients + 2 (φ and σ²).
    pub aic: f64,
    /// −2·logL + k·ln n.
    pub bic: f64,
    /// Estimated parameters k.
    pub parameters: usize,
    /// Ljung-Box test of the innovations, on lags − 1 degrees of freedom.
    pub ljung_box: Option<LjungBox>,
    /// The forecast rows by this model.
    pub forecast: Vec<ForecastRow>,
    /// Its back-test on the least-squares model's held-out periods.
    pub backtest: Option<Backtest>,
    /// Profile likelihood evaluations the search for φ took.
    pub evaluations: usize,
    /// The arithmetic of the final solve.
    pub precision: Precision,
}

/// A Ljung-Box test with the lags it covers.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct LjungBox {
    /// Autocorrelations tested.
    pub lags: usize,
    /// The statistic, its degrees of freedom and p-value.
    #[serde(flatten)]
    pub test: TestResult,
}

/// The results of `ar1` with its forecast rows and back-test.
pub fn ar1_results(
    ar1: &Ar1Errors,
    forecast: Vec<ForecastRow>,
    backtest: Option<Backtest>,
) -> Ar1Results {
    let innovations = &ar1.fit.innovations;
    let lags = ljung_box_lags(innovations.len());
    Ar1Results {
        origin: ar1.origin,
        n: innovations.len(),
        phi: ar1.phi.clone(),
        coefficients: ar1.coefficients.clone(),
        sigma: ar1.fit.sigma2.sqrt(),
        sigma_forecast: ar1.forecast_sigma2.sqrt(),
        log_likelihood: ar1.fit.log_likelihood,
        aic: ar1.aic,
        bic: ar1.bic,
        parameters: ar1.parameters,
        ljung_box: ljung_box(innovations, lags, 1).map(|test| LjungBox { lags, test }),
        forecast,
        backtest,
        evaluations: ar1.fit.evaluations,
        precision: ar1.precision(),
    }
}

impl Ar1Results {
    /// Whether it was offered rather than asked for.
    pub fn suggested(&self) -> bool {
        self.origin == Ar1Origin::Suggested
    }
}
