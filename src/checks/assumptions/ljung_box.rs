//! Ljung-Box portmanteau test of a series' autocorrelations.

use statrs::distribution::{ChiSquared, ContinuousCDF};

use super::TestResult;

/// Ljung-Box Q = n(n + 2)·Σₖ₌₁..ₘ r̂ₖ²/(n − k), r̂ₖ the lag-k
/// autocorrelation of `x` about its mean, referred to χ² with m − `fitted`
/// degrees of freedom, `fitted` the autoregressive parameters the series is
/// the residual of (Ljung & Box 1978, Biometrika 65(2)).
///
/// `None` when `lags` is 0 or not below n, `lags` does not exceed `fitted`,
/// or the series has no spread.
pub fn ljung_box(x: &[f64], lags: usize, fitted: usize) -> Option<TestResult> {
    let n = x.len();
    if lags == 0 || lags >= n || lags <= fitted {
        return None;
    }
    let mean = x.iter().sum::<f64>() / n as f64;
    let d: Vec<f64> = x.iter().map(|v| v - mean).collect();
    let c0: f64 = d.iter().map(|v| v * v).sum();
    if !(c0 > 0.0 && c0.is_finite()) {
        return None;
    }
    let nf = n as f64;
    let q = nf
        * (nf + 2.0)
        * (1..=lags)
            .map(|k| {
                let r = d[k..].iter().zip(&d).map(|(a, b)| a * b).sum::<f64>() / c0;
                r * r / (nf - k as f64)
            })
            .sum::<f64>();
    let df = (lags - fitted) as f64;
    Some(TestResult {
        statistic: q,
        df: Some(df),
        df2: None,
        p_value: ChiSquared::new(df).ok().map(|c| c.sf(q)),
    })
}

/// The lags the report's Ljung-Box test takes: min(10, n/5), a common
/// practice for non-seasonal series (Hyndman & Athanasopoulos,
/// *Forecasting: Principles and Practice*, §5.4).
pub fn ljung_box_lags(n: usize) -> usize {
    (n / 5).min(10)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_worked_series_follows_the_definition() {
        // x = 1, 3, 2, 5, 4: mean 3, deviations −2, 0, −1, 2, 1, c0 = 10;
        // r1 = (0 + 0 − 2 + 2)/10 = 0, r2 = (2 + 0 − 1)/10 = 0.1;
        // Q = 5·7·(0/4 + 0.01/3) = 0.11666…, on 2 degrees of freedom.
        let t = ljung_box(&[1.0, 3.0, 2.0, 5.0, 4.0], 2, 0).expect("defined");
        assert!((t.statistic - 35.0 * 0.01 / 3.0).abs() < 1e-15);
        assert_eq!(t.df, Some(2.0));
        let p = t.p_value.expect("p");
        assert!((p - (-t.statistic / 2.0).exp()).abs() < 1e-15);
    }

    #[test]
    fn undefined_inputs_give_none() {
        assert!(ljung_box(&[1.0; 20], 4, 1).is_none());
        assert!(ljung_box(&[1.0, 2.0, 3.0], 3, 0).is_none());
        assert!(ljung_box(&[1.0, 2.0, 3.0, 5.0], 1, 1).is_none());
    }
}
