//! The ANOVA sheet: sequential and each-term tests of every model.

use super::*;

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
    let printed = printed_rows(results, |m| m.anova.len() + m.term_tests.len());
    for m in table_order(results) {
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
