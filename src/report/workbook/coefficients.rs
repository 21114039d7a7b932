//! The Coefficients sheet: each model's estimates with their inference,
//! and how a log-scale coefficient reads.

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
    let printed = printed_rows(results, |m| m.coefficients.len() + m.aliased.len());
    for m in table_order(results) {
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
