//! Back-tests: refit a model without its last periods and forecast them,
//! for the accuracy of forecasts made as the model makes them.

use std::collections::BTreeSet;

use serde::Serialize;

use super::ar1::predict_ar1;
use super::{predict, ForecastError};
use crate::design::Design;
use crate::fit::ar1::{ar1_errors, Ar1Origin};
use crate::fit::{fit, t_quantile, Fit};
use crate::job::ModelSpec;
use crate::period::Period;

/// One held-out row of a back-test.
#[derive(Debug, Clone, Serialize)]
pub struct BacktestPoint {
    /// Period label.
    pub period: String,
    /// Sheet row of the observation.
    pub row: u32,
    /// Observed response.
    pub actual: f64,
    /// Forecast from the refit.
    pub estimate: f64,
    /// Lower prediction limit.
    pub pred_lower: f64,
    /// Upper prediction limit.
    pub pred_upper: f64,
    /// Whether the actual lies inside the prediction interval.
    pub inside: bool,
}

/// Forecast accuracy over a set of held-out rows.
#[derive(Debug, Clone, Serialize)]
pub struct Accuracy {
    /// Mean absolute error.
    pub mae: f64,
    /// Root mean squared error.
    pub rmse: f64,
    /// Mean absolute percentage error, in percent; absent when every
    /// actual is zero.
    pub mape: Option<f64>,
    /// Share of actuals inside their prediction interval (0 to 1).
    pub coverage: f64,
    /// Rows that could not be forecast (they need a coefficient the refit
    /// could not estimate, e.g. a season seen only in the held-out periods).
    pub skipped: usize,
    /// The held-out rows.
    pub points: Vec<BacktestPoint>,
}

/// A back-test: refit without the last periods, forecast them.
#[derive(Debug, Clone, Serialize)]
pub struct Backtest {
    /// Number of final periods held out.
    pub holdout: u32,
    /// Accuracy of the single refit on all earlier periods.
    #[serde(flatten)]
    pub accuracy: Accuracy,
    /// Accuracy from a rolling origin: for each held-out period in turn,
    /// refit on all earlier periods and forecast that period.
    pub rolling: Option<Accuracy>,
}

/// A held-out row's forecast on the design's scale (times √w with
/// weights, the log scale with a log response): the estimate and its
/// prediction limits; `None` when the refit cannot forecast the row.
type Held = Option<(f64, f64, f64)>;

/// The model's back-test, when the job asks for one: least squares refitted
/// on the periods before the held-out ones.
///
/// # Errors
/// [`ForecastError::BacktestTooLong`] when the holdout leaves no period to
/// fit on, [`ForecastError::BacktestFit`] when a refit has too few rows.
pub fn backtest(
    spec: &ModelSpec,
    design: &Design,
    fit_full: &Fit,
) -> Result<Option<Backtest>, ForecastError> {
    held_out(spec, design, |train, targets| {
        let refit = least_squares_refit(spec, design, train, fit_full.confidence)?;
        let t = t_quantile((1.0 + refit.confidence) / 2.0, refit.df_resid as f64);
        Ok(targets
            .iter()
            .map(|&i| {
                predict(&refit, &design.row(i), 1.0).ok().map(|p| {
                    (
                        p.estimate,
                        p.estimate - t * p.se_new,
                        p.estimate + t * p.se_new,
                    )
                })
            })
            .collect())
    })
}

/// The back-test of the model's regression with AR(1) errors, on the same
/// held-out periods: each refit is a maximum-likelihood fit on the periods
/// before them, and each held-out period is forecast h periods ahead of the
/// last period fitted, with φʰ of its last residual.
///
/// # Errors
/// As [`backtest`], and [`ForecastError::BacktestAr1`] when a refit's
/// likelihood has no interior maximum.
pub fn backtest_ar1(
    spec: &ModelSpec,
    design: &Design,
    confidence: f64,
) -> Result<Option<Backtest>, ForecastError> {
    held_out(spec, design, |train, targets| {
        let refit = least_squares_refit(spec, design, train, confidence)?;
        let sub = design.subset(train);
        let ar1 = ar1_errors(&sub, &refit, Ar1Origin::Job).map_err(|source| {
            ForecastError::BacktestAr1 {
                model: spec.name.clone(),
                source,
            }
        })?;
        let z = ar1.z();
        let last = train[train.len() - 1];
        let x_last = design.row(last);
        // Periods ahead of the last one fitted, gaps counted.
        let ahead = |i: usize| {
            design.timing.as_ref().map_or((i - last) as i64, |t| {
                t.periods[i].ordinal - t.periods[last].ordinal
            })
        };
        Ok(targets
            .iter()
            .map(|&i| {
                predict_ar1(&ar1, &x_last, &design.row(i), ahead(i))
                    .ok()
                    .map(|p| {
                        (
                            p.estimate,
                            p.estimate - z * p.se_new,
                            p.estimate + z * p.se_new,
                        )
                    })
            })
            .collect())
    })
}

/// Least squares on the rows `train` of `design`.
fn least_squares_refit(
    spec: &ModelSpec,
    design: &Design,
    train: &[usize],
    confidence: f64,
) -> Result<Fit, ForecastError> {
    fit(&spec.name, &design.subset(train), confidence).map_err(|source| {
        ForecastError::BacktestFit {
            model: spec.name.clone(),
            source,
        }
    })
}

/// The held-out periods' accuracy, by `forecasts(train, targets)`: a refit
/// on the rows `train` (indices into the design, in period order) and its
/// forecast of each row of `targets`.
fn held_out(
    spec: &ModelSpec,
    design: &Design,
    forecasts: impl Fn(&[usize], &[usize]) -> Result<Vec<Held>, ForecastError>,
) -> Result<Option<Backtest>, ForecastError> {
    let (Some(k), Some(timing)) = (spec.backtest, &design.timing) else {
        return Ok(None);
    };
    let periods: Vec<Period> = timing
        .periods
        .iter()
        .copied()
        .collect::<BTreeSet<_>>()
        .into_iter()
        .collect();
    if k as usize >= periods.len() {
        return Err(ForecastError::BacktestTooLong {
            model: spec.name.clone(),
            holdout: k,
            periods: periods.len(),
        });
    }
    let held = &periods[periods.len() - k as usize..];
    let run = |origins: &[(Period, Vec<Period>)]| -> Result<Accuracy, ForecastError> {
        let mut points = Vec::new();
        let mut skipped = 0;
        for (cutoff, targets) in origins {
            let train: Vec<usize> = (0..design.rows.len())
                .filter(|&i| timing.periods[i] < *cutoff)
                .collect();
            let targets: Vec<usize> = (0..design.rows.len())
                .filter(|&i| targets.contains(&timing.periods[i]))
                .collect();
            for (&i, held) in targets.iter().zip(forecasts(&train, &targets)?) {
                let Some((estimate, lower, upper)) = held else {
                    skipped += 1;
                    continue;
                };
                // A weighted design holds the row as √wᵢ·xᵢ: its prediction
                // and limits scale back by √wᵢ, which gives the new value
                // the row's own weight.
                let back = |v: f64| {
                    let v = design.unscaled(i, v);
                    if design.log_response {
                        v.exp()
                    } else {
                        v
                    }
                };
                let actual = back(design.y[i]);
                let (lower, upper) = (back(lower), back(upper));
                points.push(BacktestPoint {
                    period: timing.periods[i].to_string(),
                    row: design.rows[i],
                    actual,
                    estimate: back(estimate),
                    pred_lower: lower,
                    pred_upper: upper,
                    inside: (lower..=upper).contains(&actual),
                });
            }
        }
        Ok(accuracy(points, skipped))
    };
    let holdout = run(&[(held[0], held.to_vec())])?;
    let rolling = spec
        .backtest_rolling
        .then(|| {
            let origins: Vec<(Period, Vec<Period>)> = held.iter().map(|&p| (p, vec![p])).collect();
            run(&origins)
        })
        .transpose()?;
    Ok(Some(Backtest {
        holdout: k,
        accuracy: holdout,
        rolling,
    }))
}

/// MAE, RMSE, MAPE and coverage of `points`.
fn accuracy(points: Vec<BacktestPoint>, skipped: usize) -> Accuracy {
    let n = points.len().max(1) as f64;
    let errors: Vec<f64> = points.iter().map(|p| p.actual - p.estimate).collect();
    let mae = errors.iter().map(|e| e.abs()).sum::<f64>() / n;
    let rmse = (errors.iter().map(|e| e * e).sum::<f64>() / n).sqrt();
    let relative: Vec<f64> = points
        .iter()
        .filter(|p| p.actual != 0.0)
        .map(|p| ((p.actual - p.estimate) / p.actual).abs())
        .collect();
    let mape = (!relative.is_empty())
        .then(|| relative.iter().sum::<f64>() / relative.len() as f64 * 100.0);
    let coverage = points.iter().filter(|p| p.inside).count() as f64 / n;
    Accuracy {
        mae,
        rmse,
        mape,
        coverage,
        skipped,
        points,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn point(actual: f64, estimate: f64, inside: bool) -> BacktestPoint {
        BacktestPoint {
            period: "2024-01".into(),
            row: 2,
            actual,
            estimate,
            pred_lower: 0.0,
            pred_upper: 0.0,
            inside,
        }
    }

    #[test]
    fn accuracy_follows_the_definitions() {
        // Errors 1 and −3 on actuals 10 and 20: MAE 2, RMSE √5,
        // MAPE (10% + 15%)/2 = 12.5%, one of two inside.
        let a = accuracy(vec![point(10.0, 9.0, true), point(20.0, 23.0, false)], 0);
        assert_eq!(a.mae, 2.0);
        assert!((a.rmse - 5f64.sqrt()).abs() < 1e-15);
        assert!((a.mape.unwrap() - 12.5).abs() < 1e-12);
        assert_eq!(a.coverage, 0.5);
    }
}
