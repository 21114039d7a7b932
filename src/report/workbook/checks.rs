//! The Checks sheet: every model's checks with their rules and verdicts.

use super::*;

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
    let printed = printed_rows(results, |m| m.checks.len());
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
