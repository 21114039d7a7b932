//! Forecasts of panel data summed over its series, period by period.
//!
//! For the rows x₁ … x_k of one period (one per series), the total's
//! estimate is (Σxᵢ)ᵀb; the variance of that estimate is
//! σ²(Σxᵢ)ᵀ(X'X)⁻¹(Σxᵢ), and a new total adds the k independent errors of
//! its rows, σ²·Σ 1/wᵢ (each 1 without weights).

use serde::Serialize;

use super::{predict, ForecastError, Predictor};
use crate::design::{FutureRow, LagHistory};

/// One period's forecast summed over the series.
#[derive(Debug, Clone, Serialize)]
pub struct ForecastTotal {
    /// Period label.
    pub period: String,
    /// First day of the period, ISO 8601.
    pub date: String,
    /// Series summed.
    pub series: usize,
    /// The total's point forecast.
    pub estimate: f64,
    /// Lower limit of the confidence interval of the total's mean.
    pub mean_lower: f64,
    /// Upper limit of the confidence interval of the total's mean.
    pub mean_upper: f64,
    /// Lower limit of the prediction interval of a new total.
    pub pred_lower: f64,
    /// Upper limit of the prediction interval of a new total.
    pub pred_upper: f64,
}

/// The totals over the series of the forecast `rows` (with their places),
/// one per period in order; empty without series or with a log response,
/// whose back-transformed forecasts do not add up to a total's.
pub(super) fn totals(
    predictor: &Predictor<'_>,
    rows: &[(String, FutureRow)],
    history: &LagHistory,
) -> Result<Vec<ForecastTotal>, ForecastError> {
    let (design, spec) = (predictor.design, predictor.spec);
    if design.series.is_none() || design.log_response {
        return Ok(Vec::new());
    }
    let mut periods: Vec<_> = rows.iter().filter_map(|(_, r)| r.period).collect();
    periods.sort();
    periods.dedup();
    periods
        .into_iter()
        .map(|period| {
            let of_period: Vec<&(String, FutureRow)> = rows
                .iter()
                .filter(|(_, r)| r.period == Some(period))
                .collect();
            let mut total = vec![0.0; design.x.ncols()];
            for (place, row) in &of_period {
                let x0 = predictor.encode(place, row, history)?;
                for (t, v) in total.iter_mut().zip(x0) {
                    *t += v;
                }
            }
            let k = of_period.len();
            let place = format!("forecast total of period {period}");
            let p = predict(predictor.fit, &total, spec.new_row_weight / k as f64)
                .map_err(|j| predictor.aliased(&place, j))?;
            let t = predictor.t;
            Ok(ForecastTotal {
                period: period.to_string(),
                date: period.start().to_string(),
                series: k,
                estimate: p.estimate,
                mean_lower: p.estimate - t * p.se_mean,
                mean_upper: p.estimate + t * p.se_mean,
                pred_lower: p.estimate - t * p.se_new,
                pred_upper: p.estimate + t * p.se_new,
            })
        })
        .collect()
}
