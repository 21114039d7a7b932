//! The Changes and Forecast tracking sheets: coefficient moves since last
//! run, and how last run's forecasts did.

use super::*;

/// Coefficient moves since last run, and how last run's forecasts did.
pub(super) fn changes_sheets(
    workbook: &mut Workbook,
    f: &Formats,
    changes: &crate::results::RunChanges,
) -> Result<(), XlsxError> {
    let sheet = workbook.add_worksheet().set_name(CHANGES)?;
    let headers = [
        "Model",
        "Term",
        "Last run",
        "This run",
        "Change",
        "Combined standard error",
        "Change in standard errors",
        "Notable (beyond ±1.96)",
    ];
    let rows: Vec<Vec<Cell>> = changes
        .changes
        .iter()
        .map(|c| {
            vec![
                text(c.model.as_str()),
                text(c.term.as_str()),
                num(c.previous_estimate, Style::Value),
                num(c.estimate, Style::Value),
                num(c.change, Style::Value),
                num(c.combined_std_error, Style::Value),
                opt(c.z, Style::Value),
                text(if c.notable { "yes" } else { "no" }),
            ]
        })
        .collect();
    if rows.is_empty() {
        sheet.write_string(
            0,
            0,
            format!(
                "No model of {} has the same name as a model of this run.",
                changes.previous
            ),
        )?;
    } else {
        write_table(sheet, f, "Change_table", 0, &headers, &rows)?;
    }
    let sheet = workbook.add_worksheet().set_name(TRACKING)?;
    let headers = [
        "Model",
        "Period",
        "Last run's estimate",
        "Last run's prediction lower",
        "Last run's prediction upper",
        "Actual (period mean)",
        "Error (actual − estimate)",
        "Inside last run's interval",
    ];
    let rows: Vec<Vec<Cell>> = changes
        .forecast_tracking
        .iter()
        .map(|t| {
            vec![
                text(t.model.as_str()),
                text(t.period.as_str()),
                num(t.previous_estimate, Style::Value),
                num(t.previous_pred_lower, Style::Value),
                num(t.previous_pred_upper, Style::Value),
                num(t.actual, Style::Value),
                num(t.error, Style::Value),
                text(if t.inside { "yes" } else { "no" }),
            ]
        })
        .collect();
    if rows.is_empty() {
        sheet.write_string(0, 0, "None of last run's forecast periods has data yet.")?;
        return Ok(());
    }
    write_table(sheet, f, "Tracking_table", 0, &headers, &rows)
}
