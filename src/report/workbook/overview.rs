//! The Overview sheet: the models side by side, their fitted equations,
//! how each was set up, the run stamp and the cautions.

use super::*;

/// The models shown side by side and charted: the job's models and the
/// suggested ones. A model fitted by level (`by`) is summarised on the By
/// series sheet instead, its tables kept in the other sheets.
pub(super) fn charted(results: &Results) -> impl Iterator<Item = &ModelResults> + Clone {
    results.models.iter().filter(|m| m.by.is_none())
}

pub(super) fn overview(
    sheet: &mut Worksheet,
    f: &Formats,
    results: &Results,
) -> Result<(), XlsxError> {
    // Printed in landscape, so the cautions' lines fit a page's width (the
    // fitted equations run on to the pages beside).
    sheet.set_landscape();
    sheet.set_column_width(0, 36)?;
    for c in 1..=charted(results).count() as u16 {
        sheet.set_column_width(c, 22)?;
    }
    sheet.write_string_with_format(0, 0, &results.title, &f.title)?;
    let mut r = 2;
    sheet.write_string_with_format(r, 0, "Models side by side", &f.heading)?;
    r += 1;
    sheet.write_string_with_format(r, 0, "Statistic", &f.bold)?;
    for (j, m) in charted(results).enumerate() {
        sheet.write_string_with_format(r, 1 + j as u16, &m.name, &f.bold)?;
    }
    type Row = (&'static str, fn(&ModelResults) -> Cell);
    let rows: [Row; 19] = [
        ("Response", |m| text(&m.response)),
        ("Rows used (n)", |m| num(m.n as f64, Style::Count)),
        ("Rows left out (blank cells, missing lags)", |m| {
            num(m.dropped_rows.len() as f64, Style::Count)
        }),
        ("Coefficients estimated", |m| {
            num(m.coefficients.len() as f64, Style::Count)
        }),
        ("Residual degrees of freedom", |m| {
            num(m.df_resid as f64, Style::Count)
        }),
        ("R²", |m| opt(m.fit.r_squared, Style::Ratio)),
        ("Adjusted R²", |m| opt(m.fit.adj_r_squared, Style::Ratio)),
        (
            "Residual standard error (log scale for a log response)",
            |m| num(m.fit.sigma, Style::Value),
        ),
        ("F statistic", |m| opt(m.fit.f_stat, Style::Value)),
        ("F p-value", |m| opt(m.fit.f_p_value, Style::PValue)),
        ("Log-likelihood", |m| {
            num(m.fit.log_likelihood, Style::Value)
        }),
        ("AIC (lower is better)", |m| num(m.fit.aic, Style::Value)),
        ("BIC (lower is better)", |m| num(m.fit.bic, Style::Value)),
        ("Confidence level", |m| num(m.confidence, Style::Share)),
        ("Condition number", |m| {
            num(m.fit.condition_number, Style::Value)
        }),
        ("Back-test RMSE (last periods held out)", |m| {
            opt(m.backtest.as_ref().map(|b| b.accuracy.rmse), Style::Value)
        }),
        ("Back-test share inside the prediction interval", |m| {
            opt(
                m.backtest.as_ref().map(|b| b.accuracy.coverage),
                Style::Share,
            )
        }),
        ("Suggested from (terms dropped)", |m| {
            match &m.suggested_from {
                Some(from) => text(format!(
                    "{from} (dropped {})",
                    m.dropped_terms
                        .iter()
                        .map(|d| d.term.as_str())
                        .collect::<Vec<_>>()
                        .join(", ")
                )),
                None => text("the job"),
            }
        }),
        ("Checks flagged (see Checks)", |m| {
            num(
                m.checks.iter().filter(|c| c.flagged).count() as f64,
                Style::Count,
            )
        }),
    ];
    for (label, value) in rows {
        r += 1;
        sheet.write_string(r, 0, label)?;
        for (j, m) in charted(results).enumerate() {
            match value(m) {
                Cell::Text(s) => sheet.write_string(r, 1 + j as u16, s)?,
                Cell::Number(x, style) => {
                    sheet.write_number_with_format(r, 1 + j as u16, x, f.for_number(x, style))?
                }
                Cell::Empty | Cell::Date(_) => sheet.write_string(r, 1 + j as u16, "n/a")?,
            };
        }
    }

    r += 2;
    sheet.write_string_with_format(r, 0, "Fitted equations", &f.heading)?;
    for m in charted(results) {
        r = beside(sheet, f, r, &m.name, &m.equation)?;
    }

    r += 2;
    sheet.write_string_with_format(r, 0, "How each model was set up", &f.heading)?;
    for m in charted(results) {
        for note in model_notes(m) {
            r = beside(sheet, f, r, &m.name, &note)?;
        }
    }
    for (model, levels, skipped) in by_models(results) {
        let note = format!(
            "Fitted separately for each of {levels} levels (sheet By series, one row per level; each level's tables are in the other sheets under the name \"{model} [level]\"){}.",
            if skipped == 0 {
                String::new()
            } else {
                format!("; {skipped} levels could not be fitted and are listed there with the reason")
            }
        );
        r = beside(sheet, f, r, &model, &note)?;
    }

    r += 2;
    sheet.write_string_with_format(r, 0, "Run", &f.heading)?;
    let run = &results.run;
    let stamp = [
        ("Run id", run.run_id.clone()),
        ("Tool", run.tool.clone()),
        ("Run time (UTC)", run.run_time.clone()),
        ("Job file", run.job_file.clone()),
        ("Job file SHA-256", run.job_sha256.clone()),
        ("Input file", run.input_file.clone()),
        ("Input SHA-256", run.input_sha256.clone()),
        ("Sheet", run.sheet.clone()),
    ];
    for (label, value) in stamp {
        r += 1;
        sheet.write_string(r, 0, label)?;
        sheet.write_string(r, 1, value)?;
    }
    r += 1;
    sheet.write_string(r, 0, "Data rows read")?;
    sheet.write_number_with_format(r, 1, run.rows_read as f64, &f.count)?;
    for left_out in &run.screened.summary_rows_left_out {
        r += 1;
        sheet.write_string(r, 0, "Summary row left out")?;
        sheet.write_string(r, 1, &left_out.reason)?;
    }
    for read in &run.screened.text_numbers_read {
        r += 1;
        sheet.write_string(r, 0, "Numbers read from text")?;
        sheet.write_string(
            r,
            1,
            format!("column '{}': {} cells", read.column, read.cells),
        )?;
    }

    r += 2;
    sheet.write_string_with_format(r, 0, "Before you rely on these numbers", &f.heading)?;
    // One line a row, running across the empty cells to the right: merged
    // cells with wrapped text are not drawn alike by every program.
    for caution in &results.cautions {
        for line in lines(caution, CAUTION_LINE) {
            r += 1;
            sheet.write_string(r, 0, line)?;
        }
    }
    Ok(())
}

/// Characters a caution line holds: about the width of the overview's
/// first seven columns.
pub(super) const CAUTION_LINE: usize = 110;

/// Writes `words` beside `name` in the rows after `r`, over as many rows as
/// they need so that a printed page holds them whole; returns the last row.
pub(super) fn beside(
    sheet: &mut Worksheet,
    f: &Formats,
    mut r: u32,
    name: &str,
    words: &str,
) -> Result<u32, XlsxError> {
    for (k, line) in lines(words, BESIDE_LINE).into_iter().enumerate() {
        r += 1;
        if k == 0 {
            sheet.write_string_with_format(r, 0, name, &f.bold)?;
        }
        sheet.write_string(r, 1, line)?;
    }
    Ok(r)
}

/// Characters a line beside a model's name holds (an equation, a note):
/// about the width of the overview's second to fifth columns, what a
/// landscape page shows beside the first.
pub(super) const BESIDE_LINE: usize = 85;

/// `text` broken at spaces into lines of at most `width` characters (a
/// longer word gets a line of its own).
pub(super) fn lines(text: &str, width: usize) -> Vec<&str> {
    let mut out = Vec::new();
    let mut start = 0;
    let mut end = 0;
    for (at, _) in text.match_indices(' ').chain([(text.len(), "")]) {
        if text[start..at].chars().count() > width && end > start {
            out.push(&text[start..end]);
            start = end + 1;
        }
        end = at;
    }
    if start < text.len() {
        out.push(&text[start..]);
    }
    out
}

/// Each model fitted by level: its name, the levels fitted and the levels
/// that could not be.
pub(super) fn by_models(results: &Results) -> Vec<(String, usize, usize)> {
    let mut out: Vec<(String, usize, usize)> = Vec::new();
    for b in results.models.iter().filter_map(|m| m.by.as_ref()) {
        match out.iter_mut().find(|(name, _, _)| *name == b.model) {
            Some(entry) => entry.1 += 1,
            None => out.push((b.model.clone(), 1, 0)),
        }
    }
    for s in &results.by_skipped {
        match out.iter_mut().find(|(name, _, _)| *name == s.model) {
            Some(entry) => entry.2 += 1,
            None => out.push((s.model.clone(), 0, 1)),
        }
    }
    out
}

/// Plain sentences on how a model was set up: baselines, aliased terms,
/// rows left out.
pub fn model_notes(m: &ModelResults) -> Vec<String> {
    let mut notes = Vec::new();
    if !m.intercept {
        notes.push(match m.baselines.iter().find(|b| b.every_level) {
            Some(b) => format!("Fitted without an intercept, but the {} indicators together act as one (one of them is 1 in every row): R² and F are measured about the mean, as with an intercept.", b.column),
            None => "Fitted without an intercept: R² and F are measured about zero, not about the mean.".to_string(),
        });
    }
    for b in &m.baselines {
        if b.every_level {
            notes.push(format!(
                "{0}: without an intercept every level has its own coefficient, {0}[level], the level of the response for that level with the other predictors at zero; the fit does not depend on a baseline{1}. Levels: {2}.",
                b.column,
                if b.in_interactions {
                    format!(", but its interactions compare each level with '{}' ({})", b.level, b.reason)
                } else {
                    String::new()
                },
                b.levels.join(", ")
            ));
            continue;
        }
        notes.push(format!(
            "{}: baseline level '{}' ({}); each {}[level] coefficient is the difference from it. Levels: {}.",
            b.column,
            b.level,
            b.reason,
            b.column,
            b.levels.join(", ")
        ));
    }
    if let Some(w) = &m.weights {
        notes.push(format!(
            "Fitted by weighted least squares, each row weighted by '{w}': rows of larger weight count more, standard errors, R², F and the log-likelihood are the weighted ones, and residuals are shown on the response's own scale. The prediction intervals of forecast and scenario rows take a weight of {} (`weight` under [model.forecast] or [model.scenarios]): a new value's variance is σ² divided by its weight.",
            m.new_row_weight.map_or("1".to_string(), |w| w.to_string())
        ));
    }
    notes.extend(m.term_notes.iter().cloned());
    for a in &m.aliased {
        notes.push(format!(
            "{a} is an exact combination of earlier columns (aliased) and was left out of the fit."
        ));
    }
    if let Some(t) = &m.timing {
        notes.push(format!(
            "Periods: by {} ({}), from {} to {}, {} periods; the trend index counts periods from {} = 1, so gaps keep their spacing{}. Rows are in period order.",
            t.frequency.name(),
            if t.detected { "told from the dates" } else { "set in the job" },
            t.first,
            t.last,
            t.periods,
            t.first,
            if t.panel { "; several rows per period (panel data) share one index" } else { "" },
        ));
    }
    if m.transform.is_some() {
        notes.push(format!(
            "Fitted to ln({0}): coefficients, the residual standard error, residuals and the charts of residuals are on the log scale. A coefficient b means about 100·(eᵇ − 1) % more {0} per unit of its predictor (for a small b, about 100·b %); for a logged predictor ln(x), b is an elasticity: 1 % more x goes with about b % more {0}. Forecasts are transformed back: the estimate is a median, and the smeared mean (Duan 1983) estimates the mean; their limits stay above zero.",
            m.response
        ));
    }
    if !m.forecast.is_empty() {
        notes.push(format!(
            "{} forecast rows (sheet Forecast): they assume the pattern of the data continues and the predictors take the values shown.",
            m.forecast.len()
        ));
        let below_zero = m
            .forecast
            .iter()
            .filter(|r| r.prediction.pred_lower < 0.0)
            .count();
        let positive = m.residuals.iter().all(|d| d.actual > 0.0);
        if positive && below_zero > 0 {
            notes.push(format!(
                "{below_zero} forecast rows have a prediction limit (or estimate) below zero, though every {0} in the data is above zero: a straight-line model does not know {0} cannot fall below zero. Read those limits as zero, or fit ln({0}) (transform = \"log\"), whose forecasts stay above zero.",
                m.response
            ));
        }
    }
    if let Some(a) = &m.ar1_errors {
        notes.push(ar1_note(m, a));
    }
    if m.dropped_rows.is_empty() {
        notes.push("No rows were left out.".to_string());
    } else {
        notes.push(format!(
            "{} rows left out for a blank cell in a column this model uses{}; sheet rows {}.",
            m.dropped_rows.len(),
            if m.has_lags {
                ", or for a lag reaching a period without a value"
            } else {
                ""
            },
            row_ranges(&m.dropped_rows)
        ));
    }
    notes
}

/// The overview's words on a model's AR(1)-error version: why it is there,
/// φ, and how the two did on the same held-out periods.
fn ar1_note(m: &ModelResults, a: &crate::results::ar1::Ar1Results) -> String {
    let g = |x: f64| crate::text::significant(x, 4);
    let why = if a.suggested() {
        "The residuals are autocorrelated, so standard errors, p-values and intervals above are too optimistic; the model was also fitted with AR(1) errors"
    } else {
        "Also fitted with AR(1) errors, as the job asks"
    };
    let evidence = match (&m.backtest, &a.backtest) {
        (Some(ols), Some(ar1)) => format!(
            " On the same {} held-out periods its forecasts had RMSE {} against {} for least squares, and {} against {} of the actuals inside the prediction intervals.",
            ols.holdout,
            g(ar1.accuracy.rmse),
            g(ols.accuracy.rmse),
            percent(ar1.accuracy.coverage),
            percent(ols.accuracy.coverage)
        ),
        _ => String::new(),
    };
    format!(
        "{why} (exact maximum likelihood, sheet AR(1) errors): φ = {} ({} to {}); each period's error carries that share of the last one's, so near-term forecasts start from the last actual and fade back to the regression line. AIC {} against {} for least squares (lower is better).{evidence} Both versions are reported; the choice is the reader's.",
        g(a.phi.estimate),
        g(a.phi.ci_lower),
        g(a.phi.ci_upper),
        g(a.aic),
        g(m.fit.aic),
    )
}

/// A share as a whole percentage.
fn percent(share: f64) -> String {
    format!("{:.0} %", share * 100.0)
}
