//! The Fit quality sheet: one row of overall statistics per model.

use super::*;

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
