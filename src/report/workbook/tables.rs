//! The sheets of per-model tables: Coefficients, ANOVA, Fit quality,
//! Comparison and Checks.

use super::*;

pub(super) fn coefficients(
    sheet: &mut Worksheet,
    f: &Formats,
    results: &Results,
) -> Result<(), XlsxError> {
    let headers = [
        "Model",
        "Term",
        "Estimate",
        "Standard error",
        "t",
        "p-value",
        "Lower limit",
        "Upper limit",
        "Confidence",
        "Standard errors",
        "Note",
    ];
    let mut rows = Vec::new();
    let mut printed = 0;
    for m in table_order(results) {
        if m.by.is_none() {
            printed += m.coefficients.len() + m.aliased.len();
        }
        for c in &m.coefficients {
            rows.push(vec![
                text(&m.name),
                text(&c.term),
                num(c.estimate, Style::Value),
                num(c.std_error, Style::Value),
                opt(c.t_stat, Style::Value),
                opt(c.p_value, Style::PValue),
                num(c.ci_lower, Style::Value),
                num(c.ci_upper, Style::Value),
                num(m.confidence, Style::Share),
                text(
                    m.standard_errors_described
                        .as_deref()
                        .unwrap_or("classical"),
                ),
                log_scale_note(m, c).map_or(Cell::Empty, text),
            ]);
        }
        for a in &m.aliased {
            let mut row = vec![text(&m.name), text(a)];
            row.extend((0..8).map(|_| Cell::Empty));
            row.push(text("aliased: left out of the fit"));
            rows.push(row);
        }
    }
    write_table(sheet, f, "Coefficient_table", 0, &headers, &rows)?;
    print_table(sheet, printed, rows.len(), headers.len())
}

/// For a log response, how a coefficient on the log scale reads: a
/// percent change, or for a logged predictor an elasticity.
fn log_scale_note(m: &ModelResults, c: &crate::fit::Coefficient) -> Option<String> {
    m.transform.as_ref()?;
    if c.term == "Intercept" {
        return Some(format!("log scale: ln({})", m.response));
    }
    let b = c.estimate;
    Some(if c.term.starts_with("ln(") {
        format!(
            "log scale: an elasticity, 1 % more {} goes with about {} % {} {}",
            &c.term[3..c.term.len() - 1],
            crate::text::plain(b.abs()),
            if b >= 0.0 { "more" } else { "less" },
            m.response
        )
    } else {
        format!(
            "log scale: about {} % {} {}",
            crate::text::plain((100.0 * b.exp_m1()).abs()),
            if b >= 0.0 { "more" } else { "less" },
            m.response
        )
    })
}

pub(super) fn anova(
    sheet: &mut Worksheet,
    f: &Formats,
    results: &Results,
) -> Result<(), XlsxError> {
    let headers = [
        "Model",
        "Test",
        "Term",
        "df",
        "Sum of squares",
        "Mean square",
        "F",
        "p-value",
    ];
    let mut rows = Vec::new();
    let mut printed = 0;
    for m in table_order(results) {
        if m.by.is_none() {
            printed += m.anova.len() + m.term_tests.len();
        }
        for (label, table) in [
            ("sequential (terms added in order)", &m.anova),
            ("each term given all others", &m.term_tests),
        ] {
            for a in table {
                rows.push(vec![
                    text(&m.name),
                    text(label),
                    text(&a.term),
                    num(a.df as f64, Style::Count),
                    num(a.sum_sq, Style::Value),
                    num(a.mean_sq, Style::Value),
                    opt(a.f_stat, Style::Value),
                    opt(a.p_value, Style::PValue),
                ]);
            }
        }
    }
    write_table(sheet, f, "ANOVA_table", 0, &headers, &rows)?;
    print_table(sheet, printed, rows.len(), headers.len())
}

pub(super) fn fit_quality(
    sheet: &mut Worksheet,
    f: &Formats,
    results: &Results,
) -> Result<(), XlsxError> {
    let headers = [
        "Model",
        "n",
        "Model df",
        "Residual df",
        "R²",
        "Adjusted R²",
        "Residual standard error",
        "F",
        "F p-value",
        "Log-likelihood",
        "AIC",
        "BIC",
        "Residual sum of squares",
        "Regression sum of squares",
        "Total sum of squares",
        "Condition number",
        "Arithmetic",
        "Scale of the response, residuals and sums of squares",
    ];
    let rows: Vec<Vec<Cell>> = results
        .models
        .iter()
        .map(|m| {
            let q = &m.fit;
            vec![
                text(&m.name),
                num(m.n as f64, Style::Count),
                num(m.df_model as f64, Style::Count),
                num(m.df_resid as f64, Style::Count),
                opt(q.r_squared, Style::Ratio),
                opt(q.adj_r_squared, Style::Ratio),
                num(q.sigma, Style::Value),
                opt(q.f_stat, Style::Value),
                opt(q.f_p_value, Style::PValue),
                num(q.log_likelihood, Style::Value),
                num(q.aic, Style::Value),
                num(q.bic, Style::Value),
                num(q.sse, Style::Value),
                num(q.ssr, Style::Value),
                num(q.sst, Style::Value),
                num(q.condition_number, Style::Value),
                text(q.precision.label()),
                text(match &m.transform {
                    Some(_) => format!("log: ln({})", m.response),
                    None => m.response.clone(),
                }),
            ]
        })
        .collect();
    write_table(sheet, f, "Fit_quality_table", 0, &headers, &rows)
}

pub(super) fn comparison(
    sheet: &mut Worksheet,
    f: &Formats,
    results: &Results,
) -> Result<(), XlsxError> {
    let headers = [
        "Smaller model",
        "Larger model",
        "Nested",
        "F",
        "df extra",
        "df residual",
        "p-value",
        "AIC difference (larger − smaller)",
        "BIC difference (larger − smaller)",
        "Reading",
    ];
    let rows: Vec<Vec<Cell>> = results
        .comparisons
        .iter()
        .map(|c| {
            vec![
                text(c.smaller.as_str()),
                text(c.larger.as_str()),
                text(if c.nested { "yes" } else { "no" }),
                opt(c.f_stat, Style::Value),
                opt(c.df1.map(|d| d as f64), Style::Count),
                opt(c.df2.map(|d| d as f64), Style::Count),
                opt(c.p_value, Style::PValue),
                num(c.aic_difference, Style::Value),
                num(c.bic_difference, Style::Value),
                text(c.note.as_str()),
            ]
        })
        .collect();
    if rows.is_empty() {
        sheet.write_string(0, 0, "One model: nothing to compare.")?;
        return Ok(());
    }
    write_table(sheet, f, "Comparison_table", 0, &headers, &rows)?;
    let left_out = results.comparisons_left_out;
    if left_out > 0 {
        let note = format!(
            "{left_out} pair{} of models that are not nested {} not compared: every nested pair is, and the unnested pairs among the first {} models of the job.",
            if left_out == 1 { "" } else { "s" },
            if left_out == 1 { "is" } else { "are" },
            crate::compare::UNNESTED_PAIRS_AMONG
        );
        sheet.write_string(rows.len() as u32 + 2, 0, note)?;
    }
    Ok(())
}

pub(super) fn checks(
    sheet: &mut Worksheet,
    f: &Formats,
    results: &Results,
) -> Result<(), XlsxError> {
    let headers = [
        "Model",
        "Check",
        "Statistic",
        "p-value",
        "Flagged",
        "Verdict",
        "Rule",
    ];
    let printed = table_order(results)
        .filter(|m| m.by.is_none())
        .map(|m| m.checks.len())
        .sum();
    let rows: Vec<Vec<Cell>> = table_order(results)
        .flat_map(|m| {
            m.checks.iter().map(move |c| {
                vec![
                    text(&m.name),
                    text(&c.name),
                    opt(c.statistic, Style::Value),
                    opt(c.p_value, Style::PValue),
                    text(if c.flagged { "yes" } else { "no" }),
                    text(&c.verdict),
                    text(&c.rule),
                ]
            })
        })
        .collect();
    write_table(sheet, f, "Check_table", 0, &headers, &rows)?;
    print_table(sheet, printed, rows.len(), headers.len())
}
