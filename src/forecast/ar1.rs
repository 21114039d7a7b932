//! Forecasts of a regression with AR(1) errors.
//!
//! h periods after the last period fitted (n), the forecast of a row x₀ is
//! x₀ᵀb + φʰuₙ, uₙ = yₙ − xₙᵀb the last regression residual: the error's
//! own forecast decays towards zero at the rate φ. Its error variance is
//! σ²(1 − φ²ʰ)/(1 − φ²), that of the next h innovations (e.g. Brockwell &
//! Davis, *Introduction to Time Series and Forecasting*, 2nd ed., §5.4),
//! with σ² = S/(n − p − 1) rather than the maximum-likelihood S/n (see
//! [`Ar1Errors::forecast_sigma2`]),
//! and the estimates' own uncertainty adds gᵀVg by the delta method, g the
//! forecast's gradient in (φ, b), (hφʰ⁻¹uₙ, x₀ − φʰxₙ), V their inverse
//! observed information. Limits take normal quantiles, as the fit's
//! inference does; with a log response they are transformed back by exp.

use super::{
    forecast_row, ForecastError, ForecastRow, FutureRow, LagHistory, Predicted, Prediction,
    Predictor,
};
use crate::fit::ar1::Ar1Errors;

/// The prediction of the design row `x0` (all columns of the design) `h`
/// periods after the last fitted period, whose design row is `x_last`;
/// `Err` holds the index of a column left out of the fit that the row
/// needs.
pub(super) fn predict_ar1(
    ar1: &Ar1Errors,
    x_last: &[f64],
    x0: &[f64],
    h: i64,
) -> Result<Prediction, usize> {
    if let Some(j) = (0..x0.len()).find(|j| !ar1.kept.contains(j) && x0[*j] != 0.0) {
        return Err(j);
    }
    let fit = &ar1.fit;
    let phi = fit.phi;
    let h = i32::try_from(h.max(1)).unwrap_or(i32::MAX);
    let decay = phi.powi(h);
    let last_residual = fit.residuals.last().copied().unwrap_or(0.0);
    let mut gradient = Vec::with_capacity(ar1.kept.len() + 1);
    gradient.push(f64::from(h) * phi.powi(h - 1) * last_residual);
    let mut estimate = decay * last_residual;
    for (k, &j) in ar1.kept.iter().enumerate() {
        estimate += x0[j] * fit.beta[k];
        gradient.push(x0[j] - decay * x_last[j]);
    }
    let mut v = 0.0;
    for (a, ga) in gradient.iter().enumerate() {
        for (b, gb) in gradient.iter().enumerate() {
            v += ga * fit.covariance[(a, b)] * gb;
        }
    }
    let error_variance = ar1.forecast_sigma2 * (1.0 - phi.powi(2 * h)) / (1.0 - phi * phi);
    Ok(Prediction {
        estimate,
        se_mean: v.max(0.0).sqrt(),
        se_new: (error_variance + v.max(0.0)).sqrt(),
    })
}

/// The AR(1) forecasts of `rows` (those after the last period fitted; a
/// plan row inside the data's periods is no forecast and is left out).
pub(super) fn forecast_rows(
    predictor: &Predictor<'_>,
    ar1: &Ar1Errors,
    rows: &[(String, FutureRow)],
    history: &LagHistory,
    predictors: &[&str],
) -> Result<Vec<ForecastRow>, ForecastError> {
    let design = predictor.design;
    let Some(timing) = &design.timing else {
        return Ok(Vec::new());
    };
    let last = timing.index(timing.last());
    let x_last = design.row(design.rows.len() - 1);
    let z = ar1.z();
    let back = |v: f64| if design.log_response { v.exp() } else { v };
    let mut out = Vec::with_capacity(rows.len());
    for (place, row) in rows {
        let Some(period) = row.period else { continue };
        let h = timing.index(period) - last;
        if h < 1 {
            continue;
        }
        let x0 = predictor.encode(place, row, history)?;
        let p = predict_ar1(ar1, &x_last, &x0, h).map_err(|j| predictor.aliased(place, j))?;
        let prediction = Predicted {
            estimate: back(p.estimate),
            mean_lower: back(p.estimate - z * p.se_mean),
            mean_upper: back(p.estimate + z * p.se_mean),
            pred_lower: back(p.estimate - z * p.se_new),
            pred_upper: back(p.estimate + z * p.se_new),
            smeared_mean: None,
        };
        out.push(forecast_row(design, predictors, row, prediction));
    }
    Ok(out)
}
