//! The AR(1) errors sheet: each model's regression with AR(1) errors
//! beside its least-squares fit.

use super::*;
use crate::results::ar1::Ar1Results;

/// The name the AR(1)-error version of model `name` goes by in the
/// forecast and back-test tables.
pub(super) fn ar1_name(name: &str) -> String {
    format!("{name} (AR(1) errors)")
}

/// Why the version was fitted, in words.
fn origin_words(a: &Ar1Results) -> &'static str {
    if a.suggested() {
        "offered: least-squares residuals flagged for autocorrelation"
    } else {
        "asked for in the job (errors = \"ar1\")"
    }
}

/// φ, the coefficients and the likelihood's statistics of every model
/// with AR(1) errors (the caller adds the sheet only when one has them).
pub(super) fn ar1_sheet(
    sheet: &mut Worksheet,
    f: &Formats,
    results: &Results,
) -> Result<(), XlsxError> {
    let headers = [
        "Model",
        "Why fitted",
        "Term",
        "Estimate",
        "Standard error",
        "z",
        "p-value",
        "Lower limit",
        "Upper limit",
        "Confidence",
        "Note",
    ];
    let mut rows = Vec::new();
    for m in &results.models {
        let Some(a) = &m.ar1_errors else { continue };
        let why = origin_words(a);
        let estimate_row = |e: &crate::fit::ar1::MlEstimate, note: &str| {
            vec![
                text(m.name.as_str()),
                text(why),
                text(e.term.clone()),
                num(e.estimate, Style::Value),
                num(e.std_error, Style::Value),
                opt(e.z_stat, Style::Value),
                opt(e.p_value, Style::PValue),
                num(e.ci_lower, Style::Value),
                num(e.ci_upper, Style::Value),
                num(m.confidence, Style::Share),
                text(note.to_string()),
            ]
        };
        rows.push(estimate_row(
            &a.phi,
            "each period's error carries this share of the last one's; forecasts fade back to the regression line at this rate",
        ));
        for c in &a.coefficients {
            rows.push(estimate_row(c, ""));
        }
        let stat = |term: String, value: f64, p: Option<f64>, note: String| {
            let mut row = vec![text(m.name.as_str()), text(why), text(term)];
            row.push(num(value, Style::Value));
            row.extend([Cell::Empty, Cell::Empty, opt(p, Style::PValue)]);
            row.extend((0..3).map(|_| Cell::Empty));
            row.push(text(note));
            row
        };
        rows.push(stat(
            "sigma (innovations)".into(),
            a.sigma,
            None,
            format!(
                "maximum-likelihood, √(S/n); the forecast intervals take √(S/(n − p − 1)) = {}, the degrees of freedom of the coefficients and φ given back; least squares' residual standard error is {}",
                crate::text::significant(a.sigma_forecast, 6),
                crate::text::significant(m.fit.sigma, 6)
            ),
        ));
        rows.push(stat(
            "log-likelihood".into(),
            a.log_likelihood,
            None,
            format!(
                "{} rows, exact (the first period's included); least squares: {}",
                a.n,
                crate::text::significant(m.fit.log_likelihood, 6)
            ),
        ));
        for (term, ours, theirs) in [("AIC", a.aic, m.fit.aic), ("BIC", a.bic, m.fit.bic)] {
            rows.push(stat(
                term.into(),
                ours,
                None,
                format!(
                    "k = {} (coefficients, φ and σ²); least squares: {} ({})",
                    a.parameters,
                    crate::text::significant(theirs, 6),
                    if ours < theirs {
                        "AR(1) errors fit better for their extra parameter"
                    } else {
                        "AR(1) errors do not earn their extra parameter"
                    }
                ),
            ));
        }
        if let Some(lb) = &a.ljung_box {
            let p = lb.test.p_value;
            rows.push(stat(
                format!("Ljung-Box Q ({} lags)", lb.lags),
                lb.test.statistic,
                p,
                format!(
                    "Ljung & Box (1978) on the innovations, {} degrees of freedom; {}",
                    lb.test.df.unwrap_or(0.0),
                    if p.is_some_and(|p| p < 0.05) {
                        "autocorrelation remains beyond AR(1): consider more lags, seasons or a missing driver"
                    } else {
                        "no sign of autocorrelation left in the innovations"
                    }
                ),
            ));
        }
    }
    write_table(sheet, f, "Ar1_table", 0, &headers, &rows)
}
