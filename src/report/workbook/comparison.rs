//! The Comparison sheet: every pair of models compared.

use super::*;

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
