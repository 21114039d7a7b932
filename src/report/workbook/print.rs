//! The print layout: landscape, one page wide, header rows repeated, and
//! the first tables' height and print area.

use super::*;

/// Every sheet prints in landscape, one page wide (the Summary one page in
/// all, the first tables as [`print_table`] sets them); a table's header
/// row repeats on each printed page.
pub(super) fn print_setup(workbook: &mut Workbook) -> Result<(), XlsxError> {
    for sheet in workbook.worksheets_mut() {
        let name = sheet.name();
        if name == SUMMARY {
            continue;
        }
        if ![COEFFICIENTS, ANOVA, CHECKS, FORECAST].contains(&name.as_str()) {
            sheet.set_landscape().set_print_fit_to_pages(1, 0);
        }
        if ![OVERVIEW, CHARTS].contains(&name.as_str()) {
            sheet.set_repeat_rows(0, 0)?;
        }
    }
    Ok(())
}

/// The models in the order the tables list them: the job's own and the
/// suggested models, then the models fitted by level (`by`), which the By
/// series sheet summarises and the printed tables leave out
/// ([`print_first_rows`]).
pub(super) fn table_order(results: &Results) -> impl Iterator<Item = &ModelResults> + Clone {
    let (own, by_level): (Vec<_>, Vec<_>) = results.models.iter().partition(|m| m.by.is_none());
    own.into_iter().chain(by_level)
}

/// The print layout of a table a reader prints first (coefficients,
/// ANOVA, checks, forecast): landscape, one page wide and at most a page
/// per [`PRINTED_ROWS_A_PAGE`] rows, its print area the header and the
/// first `rows` rows (those of the models not fitted by level) when more
/// follow, so that with the summary, overview and charts these tables come
/// within the first pages, not after hundreds.
pub(super) fn print_table(
    sheet: &mut Worksheet,
    rows: usize,
    total: usize,
    columns: usize,
) -> Result<(), XlsxError> {
    let pages = rows.div_ceil(PRINTED_ROWS_A_PAGE).max(1);
    sheet
        .set_landscape()
        .set_print_fit_to_pages(1, u16::try_from(pages).unwrap_or(u16::MAX));
    if rows < total && rows > 0 {
        sheet.set_print_area(0, 0, rows as u32, columns as u16 - 1)?;
    }
    Ok(())
}

/// Table rows a printed page of the first tables holds at most.
const PRINTED_ROWS_A_PAGE: usize = 70;

/// Rows of a first table that print: those of the models not fitted by
/// level, `rows_of` each.
pub(super) fn printed_rows(results: &Results, rows_of: impl Fn(&ModelResults) -> usize) -> usize {
    table_order(results)
        .filter(|m| m.by.is_none())
        .map(rows_of)
        .sum()
}
