//! The Summary sheet's sentences, built from the numbers alone: what the
//! main model explains, its drivers ranked by the size of their effect,
//! what comes next, how far to trust it, and the other models in a line
//! each. A pure function of the models' results, so the wording is tested
//! without a workbook.

use serde::Serialize;

use super::model::{BaselineNote, ModelResults};
use crate::fit::Coefficient;
use crate::text::{number_style, plain, styled, NumberStyle};

/// Drivers the summary names before it refers to the Coefficients sheet.
pub const DRIVERS_SHOWN: usize = 6;

/// The summary of a job, led by its main model.
#[derive(Debug, Clone, Default, Serialize)]
pub struct Summary {
    /// The model the summary leads with.
    pub model: String,
    /// What the model explains, over which rows.
    pub headline: String,
    /// The drivers, largest effect first, each with its estimate and
    /// interval in the response's units.
    pub drivers: Vec<String>,
    /// The forecast, the back-test's coverage and any limit below zero.
    pub outlook: Vec<String>,
    /// The flags that matter, each with what it means for the reader.
    pub trust: Vec<String>,
    /// The job's other models, a line each.
    pub other_models: Vec<String>,
}

/// The summary of `models` led by the model named `main` (for a model
/// fitted by level, its first level); `None` when there is no such model.
pub fn summary(models: &[ModelResults], main: &str) -> Option<Summary> {
    let m = models
        .iter()
        .find(|m| m.name == main && m.suggested_from.is_none())
        .or_else(|| {
            models
                .iter()
                .find(|m| m.by.as_ref().is_some_and(|b| b.model == main))
        })?;
    Some(Summary {
        model: m.name.clone(),
        headline: headline(m),
        drivers: drivers(m),
        outlook: outlook(m),
        trust: trust(m),
        other_models: other_models(models, m),
    })
}

/// The response as the numbers read it: `ln(revenue)` for a log response.
fn scale_name(m: &ModelResults) -> String {
    if m.transform.is_some() {
        format!("ln({})", m.response)
    } else {
        m.response.clone()
    }
}

/// A share as a whole percentage: "97 %".
fn percent(share: f64) -> String {
    format!("{:.0} %", share * 100.0)
}

/// The rows a model used, in words.
fn rows_words(m: &ModelResults) -> String {
    match &m.timing {
        Some(t) if t.panel => format!(
            "{} rows over {} {}s ({} to {})",
            plain(m.n as f64),
            t.periods,
            t.frequency.name(),
            t.first,
            t.last
        ),
        Some(t) => format!(
            "{} {}s ({} to {})",
            plain(m.n as f64),
            t.frequency.name(),
            t.first,
            t.last
        ),
        None => format!("{} rows", plain(m.n as f64)),
    }
}

fn headline(m: &ModelResults) -> String {
    let weighted = if m.weights.is_some() {
        ", each row weighted"
    } else {
        ""
    };
    let log = if m.transform.is_some() {
        format!(" (on the log scale, ln({}))", m.response)
    } else {
        String::new()
    };
    match m.fit.r_squared {
        Some(r2) => format!(
            "{}: explains {} of the variation in {}{log} across {}{weighted}.",
            m.name,
            percent(r2),
            m.response,
            rows_words(m)
        ),
        None => format!(
            "{}: fitted to {} of {}{log}{weighted}.",
            m.name,
            rows_words(m),
            m.response
        ),
    }
}

/// A signed number: "+0.045", "-2.1".
fn signed(x: f64) -> String {
    if x > 0.0 {
        format!("+{}", plain(x))
    } else {
        plain(x)
    }
}

/// 100·(eᵇ − 1): the percent change a log-scale difference b stands for.
fn log_percent(b: f64) -> f64 {
    100.0 * b.exp_m1()
}

/// How a coefficient reads, and the size of its effect for the ranking.
struct Driver {
    sentence: String,
    size: f64,
}

/// The categorical term and level of an indicator's name `column[level]`.
fn indicator<'a>(m: &'a ModelResults, term: &str) -> Option<(&'a BaselineNote, String)> {
    let (column, rest) = term.split_once('[')?;
    let level = rest.strip_suffix(']')?;
    if level.contains('[') || term.contains(':') {
        return None;
    }
    let b = m
        .baselines
        .iter()
        .find(|b| b.column == column && !b.every_level)?;
    Some((b, level.to_string()))
}

/// An estimate with its confidence interval, as a sentence quotes it.
#[derive(Debug, Clone, Copy)]
struct Quoted<'a> {
    estimate: f64,
    lower: f64,
    upper: f64,
    /// Whether the numbers are on the log scale of the response.
    log: bool,
    /// The response's number format (a currency, thousands separators).
    style: Option<&'a NumberStyle>,
}

impl<'a> Quoted<'a> {
    fn of(c: &Coefficient, log: bool, style: Option<&'a NumberStyle>) -> Self {
        Quoted {
            estimate: c.estimate,
            lower: c.ci_lower,
            upper: c.ci_upper,
            log,
            style,
        }
    }

    /// An amount in the response's units, in its number format.
    fn amount(self, x: f64) -> String {
        styled(x, self.style)
    }

    /// A signed amount: "+$0.045".
    fn signed(self, x: f64) -> String {
        if x > 0.0 {
            format!("+{}", self.amount(x))
        } else {
            self.amount(x)
        }
    }

    /// The estimate as a change: "+0.045", or "+4.6 %" on the log scale.
    fn change(self) -> String {
        if self.log {
            format!("{} %", signed(log_percent(self.estimate)))
        } else {
            self.signed(self.estimate)
        }
    }

    /// The interval: "0.036 to 0.054", or "3.1 % to 6.2 %".
    fn interval(self) -> String {
        if self.log {
            format!(
                "{} % to {} %",
                plain(log_percent(self.lower)),
                plain(log_percent(self.upper))
            )
        } else {
            format!("{} to {}", self.amount(self.lower), self.amount(self.upper))
        }
    }

    /// A closing remark when the interval includes zero.
    fn caveat(self, what: &str) -> String {
        if self.lower <= 0.0 && self.upper >= 0.0 {
            format!("; the interval includes zero, so {what} is not clearly different from none")
        } else {
            String::new()
        }
    }
}

/// A level of a categorical predictor against its baseline: "region East:
/// 4.5 less revenue than North (2.7 to 6.3 less)."
fn level_sentence(column: &str, level: &str, baseline: &str, response: &str, q: Quoted) -> String {
    let clear = q.lower > 0.0 || q.upper < 0.0;
    if q.log || !clear {
        return format!(
            "{column} {level} against {baseline}: {} {response} ({}){}.",
            q.change(),
            q.interval(),
            q.caveat("the difference")
        );
    }
    let (more, lo, hi) = if q.estimate > 0.0 {
        ("more", q.lower, q.upper)
    } else {
        ("less", -q.upper, -q.lower)
    };
    format!(
        "{column} {level}: {} {more} {response} than {baseline} ({} to {} {more}).",
        q.amount(q.estimate.abs()),
        q.amount(lo),
        q.amount(hi)
    )
}

/// The trend: "Trend: +0.14 revenue a month (0.11 to 0.18)."
fn trend_sentence(period: &str, response: &str, q: Quoted) -> String {
    format!(
        "Trend: {} {response} a {period} ({}){}.",
        q.change(),
        q.interval(),
        q.caveat("the trend")
    )
}

/// A logged predictor: with a log response an elasticity, "price: an
/// elasticity of -1.2: 1 % more price goes with about 1.2 % less sales
/// (-1.5 to -0.9)."; otherwise the change for 1 % more of it, b/100.
fn log_term_sentence(x: &str, response: &str, q: Quoted) -> String {
    if q.log {
        format!(
            "{x}: an elasticity of {}: 1 % more {x} goes with about {} % {} {response} ({} to {}){}.",
            plain(q.estimate),
            plain(q.estimate.abs()),
            if q.estimate >= 0.0 { "more" } else { "less" },
            plain(q.lower),
            plain(q.upper),
            q.caveat("the effect")
        )
    } else {
        format!(
            "{x}: 1 % more {x} goes with about {} {response} ({} to {}){}.",
            q.signed(q.estimate / 100.0),
            q.amount(q.lower / 100.0),
            q.amount(q.upper / 100.0),
            q.caveat("the effect")
        )
    }
}

/// A numeric term: "Each extra unit of floor_area: +0.045 revenue (0.036
/// to 0.054)."
fn numeric_sentence(term: &str, response: &str, q: Quoted) -> String {
    format!(
        "Each extra unit of {term}: {} {response} ({}){}.",
        q.change(),
        q.interval(),
        q.caveat("the effect")
    )
}

/// The sentence of one coefficient and its effect's size: for an indicator
/// the difference from the baseline; for a numeric column the change over
/// one standard deviation of the column.
fn driver(m: &ModelResults, c: &Coefficient, sd: f64) -> Driver {
    let style = m.response_number_format.as_deref().and_then(number_style);
    let q = Quoted::of(c, m.transform.is_some(), style.as_ref());
    let response = m.response.as_str();
    if let Some((b, level)) = indicator(m, &c.term) {
        return Driver {
            sentence: level_sentence(&b.column, &level, &b.level, response, q),
            size: c.estimate.abs(),
        };
    }
    let size = c.estimate.abs() * sd;
    let sentence = if c.term == "trend" {
        let period = m.timing.as_ref().map_or("period", |t| t.frequency.name());
        trend_sentence(period, response, q)
    } else if let Some(x) = c.term.strip_prefix("ln(").and_then(|t| t.strip_suffix(')')) {
        log_term_sentence(x, response, q)
    } else {
        numeric_sentence(&c.term, response, q)
    };
    Driver { sentence, size }
}

fn drivers(m: &ModelResults) -> Vec<String> {
    let mut ranked: Vec<Driver> = m
        .coefficients
        .iter()
        .zip(
            m.column_spread
                .iter()
                .map(|s| s.sd)
                .chain(std::iter::repeat(0.0)),
        )
        .filter(|(c, _)| c.term != "Intercept")
        .map(|(c, sd)| driver(m, c, sd))
        .collect();
    ranked.sort_by(|a, b| b.size.total_cmp(&a.size));
    let more = ranked.len().saturating_sub(DRIVERS_SHOWN);
    let mut out: Vec<String> = ranked
        .into_iter()
        .take(DRIVERS_SHOWN)
        .map(|d| d.sentence)
        .collect();
    if more > 0 {
        out.push(format!(
            "{more} more term{} on the Coefficients sheet.",
            if more == 1 { "" } else { "s" }
        ));
    }
    out
}

fn outlook(m: &ModelResults) -> Vec<String> {
    let mut out = Vec::new();
    let level = percent(m.confidence);
    let style = m.response_number_format.as_deref().and_then(number_style);
    let amount = |x: f64| styled(x, style.as_ref());
    if let (Some(first), Some(last)) = (m.forecast_totals.first(), m.forecast_totals.last()) {
        out.push(format!(
            "Forecast total over the {} series: {} for {} ({} to {}), {} for {} ({} to {}), at the {level} prediction level.",
            first.series,
            amount(first.estimate),
            first.period,
            amount(first.pred_lower),
            amount(first.pred_upper),
            amount(last.estimate),
            last.period,
            amount(last.pred_lower),
            amount(last.pred_upper)
        ));
        let total: f64 = m.forecast_totals.iter().map(|t| t.estimate).sum();
        out.push(format!(
            "Over the {} periods forecast that adds up to {} (each period's own interval applies).",
            m.forecast_totals.len(),
            amount(total)
        ));
    } else if let (Some(first), Some(last)) = (m.forecast.first(), m.forecast.last()) {
        let label = |r: &crate::forecast::ForecastRow| {
            r.period.clone().unwrap_or_else(|| "the first row".into())
        };
        let what = if m.transform.is_some() {
            "Forecast (medians, transformed back from the log scale)"
        } else {
            "Forecast"
        };
        out.push(format!(
            "{what} of {} for the inputs on the Forecast sheet: {} for {} ({} to {}){}, at the {level} prediction level.",
            m.response,
            amount(first.prediction.estimate),
            label(first),
            amount(first.prediction.pred_lower),
            amount(first.prediction.pred_upper),
            if m.forecast.len() > 1 {
                format!(
                    " to {} for {} ({} to {})",
                    amount(last.prediction.estimate),
                    label(last),
                    amount(last.prediction.pred_lower),
                    amount(last.prediction.pred_upper)
                )
            } else {
                String::new()
            }
        ));
        if m.forecast.len() > 1 {
            let mean = m
                .forecast
                .iter()
                .map(|r| r.prediction.estimate)
                .sum::<f64>()
                / m.forecast.len() as f64;
            let unit = m
                .timing
                .as_ref()
                .map_or("row".to_string(), |t| t.frequency.name().to_string());
            out.push(format!(
                "On average {} a {unit} over the {} forecast {unit}s.",
                amount(mean),
                m.forecast.len()
            ));
        }
    }
    if let Some(a) = &m.ar1_errors {
        if let Some(first) = a.forecast.first() {
            out.push(format!(
                "With AR(1) errors (φ = {}), the first forecast is {} ({} to {}): it starts from the last actual and fades to the regression line.",
                plain(a.phi.estimate),
                amount(first.prediction.estimate),
                amount(first.prediction.pred_lower),
                amount(first.prediction.pred_upper)
            ));
        }
    }
    if let Some(b) = &m.backtest {
        let a = &b.accuracy;
        let mut line = format!(
            "In the last {} held-out periods, {} of the {} actuals ({}) fell inside the {level} prediction interval (typical miss, RMSE: {}).",
            b.holdout,
            a.points.iter().filter(|p| p.inside).count(),
            a.points.len(),
            percent(a.coverage),
            amount(a.rmse)
        );
        if a.coverage + 0.1 < m.confidence {
            line.push_str(" That is well below the level: treat the intervals as too narrow.");
        }
        out.push(line);
    }
    let data_positive =
        m.residuals.iter().next().is_some() && m.residuals.iter().all(|d| d.actual > 0.0);
    let below_zero = m
        .forecast
        .iter()
        .filter(|r| r.prediction.pred_lower < 0.0)
        .count();
    if data_positive && below_zero > 0 {
        out.push(format!(
            "{below_zero} forecast row{} a prediction limit below zero, though every {} in the data is above zero: a straight-line model does not know {} cannot fall below zero; a log response (transform = \"log\") keeps forecasts positive.",
            if below_zero == 1 { " has" } else { "s have" },
            m.response,
            m.response
        ));
    }
    out
}

fn trust(m: &ModelResults) -> Vec<String> {
    let flagged = |name: &str| m.checks.iter().any(|c| c.flagged && c.name == name);
    let mut out = Vec::new();
    if flagged("durbin-watson") || flagged("breusch-godfrey") {
        out.push(format!(
            "Misses run in streaks from one period to the next (autocorrelation): the intervals and p-values above are too optimistic{}.",
            if m.ar1_errors.is_some() {
                "; the version with AR(1) errors (AR(1) errors sheet) allows for it"
            } else {
                ""
            }
        ));
    }
    if flagged("breusch-pagan") {
        out.push("The size of the misses changes across the data (uneven spread): intervals are too narrow in places and too wide in others.".into());
    }
    if flagged("jarque-bera") || flagged("shapiro-wilk") {
        out.push("The misses are not bell-shaped: p-values and intervals are approximate, the more so with few rows.".into());
    }
    if flagged("reset") {
        out.push("The straight-line form misses some curvature: an effect may grow or shrink with the level of its driver.".into());
    }
    if flagged("influential rows") {
        out.push("A few rows pull the fit strongly (influence): check them in the source data (Checks and Residuals sheets).".into());
    }
    if flagged("variance inflation") || flagged("condition number") {
        out.push("Some drivers move together (collinearity): their separate effects are uncertain even where their joint effect is clear.".into());
    }
    if out.is_empty() {
        out.push("No check is flagged: the misses look independent, even and bell-shaped, and no row dominates the fit.".into());
    }
    out
}

fn other_models(models: &[ModelResults], main: &ModelResults) -> Vec<String> {
    let mut out: Vec<String> = models
        .iter()
        .filter(|m| m.name != main.name && m.by.is_none() && m.suggested_from.is_none())
        .map(|m| match m.fit.r_squared {
            Some(r2) => format!(
                "{}: explains {} of the variation in {} ({} rows).",
                m.name,
                percent(r2),
                scale_name(m),
                plain(m.n as f64)
            ),
            None => format!("{}: {} rows.", m.name, plain(m.n as f64)),
        })
        .collect();
    let levels = models.iter().filter(|m| m.by.is_some()).count();
    if levels > 0 {
        out.push(format!(
            "{levels} models fitted one per level (By series sheet)."
        ));
    }
    let suggested = models.iter().filter(|m| m.suggested_from.is_some()).count();
    if suggested > 0 {
        out.push(format!(
            "{suggested} suggested smaller model{} (Overview and Comparison sheets).",
            if suggested == 1 { "" } else { "s" }
        ));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn q(estimate: f64, lower: f64, upper: f64, log: bool) -> Quoted<'static> {
        Quoted {
            estimate,
            lower,
            upper,
            log,
            style: None,
        }
    }

    #[test]
    fn a_level_reads_as_more_or_less_than_its_baseline() {
        assert_eq!(
            level_sentence(
                "region",
                "East",
                "North",
                "revenue",
                q(-4.5, -6.3, -2.7, false)
            ),
            "region East: 4.5 less revenue than North (2.7 to 6.3 less)."
        );
        assert_eq!(
            level_sentence(
                "format",
                "Retail park",
                "Garden shop",
                "revenue",
                q(11.9, 9.7, 14.0, false)
            ),
            "format Retail park: 11.9 more revenue than Garden shop (9.7 to 14 more)."
        );
        assert_eq!(
            level_sentence("region", "West", "North", "revenue", q(0.4, -1.2, 2.0, false)),
            "region West against North: +0.4 revenue (-1.2 to 2); the interval includes zero, so the difference is not clearly different from none."
        );
    }

    #[test]
    fn log_scale_numbers_read_as_percentages() {
        // 100·(e^0.1 − 1) = 10.517 %.
        assert_eq!(
            numeric_sentence("promo", "sales", q(0.1, 0.05, 0.15, true)),
            "Each extra unit of promo: +10.5 % sales (5.13 % to 16.2 %)."
        );
        assert_eq!(
            trend_sentence("month", "sales", q(0.01, 0.008, 0.012, true)),
            "Trend: +1.01 % sales a month (0.803 % to 1.21 %)."
        );
    }

    #[test]
    fn a_log_log_slope_is_named_an_elasticity() {
        assert_eq!(
            log_term_sentence("price", "sales", q(-1.2, -1.5, -0.9, true)),
            "price: an elasticity of -1.2: 1 % more price goes with about 1.2 % less sales (-1.5 to -0.9)."
        );
        assert_eq!(
            log_term_sentence("spend", "sales", q(250.0, 100.0, 400.0, false)),
            "spend: 1 % more spend goes with about +2.5 sales (1 to 4)."
        );
    }

    #[test]
    fn amounts_take_the_responses_number_format() {
        let dollars = number_style("\"$\"#,##0.00").expect("a style");
        let east = Quoted {
            style: Some(&dollars),
            ..q(-4500.0, -6300.0, -2700.0, false)
        };
        assert_eq!(
            level_sentence("region", "East", "North", "revenue", east),
            "region East: $4,500 less revenue than North ($2,700 to $6,300 less)."
        );
        let area = Quoted {
            style: Some(&dollars),
            ..q(0.045, 0.036, 0.054, false)
        };
        assert_eq!(
            numeric_sentence("floor_area", "revenue", area),
            "Each extra unit of floor_area: +$0.045 revenue ($0.036 to $0.054)."
        );
    }

    #[test]
    fn numbers_keep_three_digits_and_their_sign() {
        assert_eq!(
            numeric_sentence("floor_area", "revenue", q(0.04601, 0.03979, 0.05223, false)),
            "Each extra unit of floor_area: +0.046 revenue (0.0398 to 0.0522)."
        );
        assert_eq!(percent(0.9862), "99 %");
    }
}
