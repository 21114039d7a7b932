//! The Residuals sheets: every row of every model with its diagnostics,
//! written row by row, split over sheets past a sheet's rows.

use super::*;

/// The per-row table of every model, on as many sheets as it needs:
/// `Residuals`, then `Residuals 2`, `Residuals 3`, ... once a sheet's
/// 1,048,576 rows are full. The sheets are written row by row to disk
/// (constant memory) and each range gets a defined name,
/// `Residual_table`, `Residual_table_2`, ..., in place of a table's.
pub(super) fn residuals(
    workbook: &mut Workbook,
    f: &Formats,
    results: &Results,
) -> Result<(), XlsxError> {
    let headers = [
        "Model",
        "Sheet row",
        "Actual",
        "Fitted",
        "Residual",
        "Standardized residual",
        "Leverage",
        "Cook's distance",
        "Studentized residual",
        "DFFITS",
        "Flags",
        "Period",
    ];
    let total: usize = results.models.iter().map(|m| m.residuals.len()).sum();
    let mut rows = results.models.iter().flat_map(|m| {
        m.residuals.iter().map(move |d| {
            [
                text(&m.name),
                num(f64::from(d.row), Style::Count),
                num(d.actual, Style::Value),
                num(d.fitted, Style::Value),
                num(d.residual, Style::Value),
                opt(d.standardized_residual, Style::Value),
                num(d.leverage, Style::Ratio),
                opt(d.cooks_distance, Style::Value),
                opt(d.studentized_residual, Style::Value),
                opt(d.dffits, Style::Value),
                text(d.flags.join(", ")),
                d.period.map_or(Cell::Empty, |p| text(p.to_string())),
            ]
        })
    });
    for ResidualSheet {
        name,
        range_name,
        count,
    } in residual_sheets(total, (SHEET_ROWS - 1) as usize)
    {
        let sheet = workbook
            .add_worksheet_with_constant_memory()?
            .set_name(&name)?;
        let last_row = write_table_rows(
            sheet,
            f,
            Layout::Filtered,
            0,
            &headers,
            count,
            rows.by_ref(),
        )?;
        let range = rust_xlsxwriter::worksheet_range_absolute(
            &name,
            0,
            0,
            last_row,
            headers.len() as u16 - 1,
        );
        workbook.define_name(&range_name, &format!("={range}"))?;
    }
    Ok(())
}

/// One sheet of the residual table.
#[derive(Debug, PartialEq)]
pub(super) struct ResidualSheet {
    /// The sheet's name.
    pub(super) name: String,
    /// The defined name of its rows.
    pub(super) range_name: String,
    /// Data rows on it.
    pub(super) count: usize,
}

/// The sheets `total` residual rows fill at `per_sheet` rows a sheet: at
/// least one, the first named `Residuals`, the next `Residuals 2`, ...
pub(super) fn residual_sheets(total: usize, per_sheet: usize) -> Vec<ResidualSheet> {
    (1..=total.div_ceil(per_sheet).max(1))
        .map(|k| ResidualSheet {
            name: if k == 1 {
                RESIDUALS.to_string()
            } else {
                format!("{RESIDUALS} {k}")
            },
            range_name: if k == 1 {
                "Residual_table".to_string()
            } else {
                format!("Residual_table_{k}")
            },
            count: (total - (k - 1) * per_sheet).min(per_sheet),
        })
        .collect()
}
