//! The By series sheet: one row per level of each model fitted by level,
//! with its size, fit and every coefficient with its interval, then the
//! levels that could not be fitted.

use rust_xlsxwriter::{Worksheet, XlsxError};

use super::{num, opt, text, write_table, Cell, Formats, Style};
use crate::results::Results;

/// Writes the By series sheet.
pub(super) fn by_series_sheet(
    sheet: &mut Worksheet,
    f: &Formats,
    results: &Results,
) -> Result<(), XlsxError> {
    let fitted: Vec<_> = results
        .models
        .iter()
        .filter_map(|m| m.by.as_ref().map(|b| (b, m)))
        .collect();
    // Every coefficient of any level, in order of first appearance.
    let mut terms: Vec<&str> = Vec::new();
    for (_, m) in &fitted {
        for c in &m.coefficients {
            if !terms.contains(&c.term.as_str()) {
                terms.push(&c.term);
            }
        }
    }
    let mut headers: Vec<String> = [
        "Model",
        "By column",
        "Level",
        "Rows used",
        "R²",
        "Adjusted R²",
        "Residual standard error",
    ]
    .map(String::from)
    .to_vec();
    for term in &terms {
        headers.push(term.to_string());
        headers.push(format!("{term} lower"));
        headers.push(format!("{term} upper"));
    }
    headers.push("Checks flagged".into());
    headers.push("Not fitted because".into());
    let mut rows: Vec<Vec<Cell>> = Vec::new();
    for (b, m) in &fitted {
        let mut row = vec![
            text(b.model.as_str()),
            text(b.column.as_str()),
            text(b.level.as_str()),
            num(m.n as f64, Style::Count),
            opt(m.fit.r_squared, Style::Ratio),
            opt(m.fit.adj_r_squared, Style::Ratio),
            num(m.fit.sigma, Style::Value),
        ];
        for term in &terms {
            match m.coefficients.iter().find(|c| c.term == *term) {
                Some(c) => row.extend([
                    num(c.estimate, Style::Value),
                    num(c.ci_lower, Style::Value),
                    num(c.ci_upper, Style::Value),
                ]),
                None => row.extend([Cell::Empty, Cell::Empty, Cell::Empty]),
            }
        }
        let flagged: Vec<&str> = m
            .checks
            .iter()
            .filter(|c| c.flagged)
            .map(|c| c.name.as_str())
            .collect();
        row.push(text(flagged.join(", ")));
        row.push(Cell::Empty);
        rows.push(row);
    }
    for s in &results.by_skipped {
        let mut row = vec![
            text(s.model.as_str()),
            text(s.column.as_str()),
            text(s.level.as_str()),
            num(s.rows as f64, Style::Count),
        ];
        row.extend((0..3 + 3 * terms.len() + 1).map(|_| Cell::Empty));
        row.push(text(s.reason.as_str()));
        rows.push(row);
    }
    let headers: Vec<&str> = headers.iter().map(String::as_str).collect();
    write_table(sheet, f, "By_series_table", 0, &headers, &rows)
}
