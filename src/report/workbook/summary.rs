//! The Summary sheet: the job on one printed landscape page, in words
//! (`results.summary`, built in the results stage), with the main model's
//! forecast chart beside them.

use super::forecast::{forecast_chart, ChartBlock};
use super::*;
use crate::results::summary::Summary;

/// Width of the text column, in characters.
const TEXT_WIDTH: f64 = 100.0;

/// Characters a wrapped line of the text column holds, for row heights.
const LINE_CHARS: usize = 125;

/// The column the chart is placed at, right of the text.
pub(super) const CHART_COLUMN: u16 = 2;

/// Writes the sentences; the chart follows once the chart data exist
/// ([`summary_chart`]).
pub(super) fn summary_sheet(
    sheet: &mut Worksheet,
    f: &Formats,
    results: &Results,
) -> Result<(), XlsxError> {
    sheet.set_landscape();
    sheet.set_print_fit_to_pages(1, 1);
    sheet.set_column_width(0, TEXT_WIDTH)?;
    sheet.set_column_width(1, 2)?;
    sheet.write_string_with_format(0, 0, &results.title, &f.title)?;
    let run = &results.run;
    sheet.write_string(
        1,
        0,
        format!(
            "Run {} on {}, sheet {}.",
            run.run_time, run.input_file, run.sheet
        ),
    )?;
    let Some(s) = &results.summary else {
        sheet.write_string(3, 0, "No model to summarise.")?;
        return Ok(());
    };
    let mut r = 3;
    line(sheet, &mut r, &s.headline, &f.heading_wrap)?;
    r += 1;
    let response = results
        .models
        .iter()
        .find(|m| m.name == s.model)
        .map_or("the response", |m| m.response.as_str());
    for (heading, lines) in sections(s, response, &results.cautions) {
        line(sheet, &mut r, &heading, &f.bold)?;
        for text in lines {
            line(sheet, &mut r, &format!("• {text}"), &f.wrap)?;
        }
        r += 1;
    }
    sheet.set_print_area(0, 0, r, CHART_COLUMN + 9)?;
    Ok(())
}

/// The sheet's sections, each a heading and its sentences.
fn sections<'a>(
    s: &'a Summary,
    response: &str,
    cautions: &'a [String],
) -> Vec<(String, Vec<&'a String>)> {
    let mut out = vec![(
        format!("What drives {response}"),
        s.drivers.iter().collect(),
    )];
    if !s.outlook.is_empty() {
        out.push(("What comes next".to_string(), s.outlook.iter().collect()));
    }
    out.push(("How far to trust it".to_string(), s.trust.iter().collect()));
    if !s.other_models.is_empty() {
        out.push(("Other models".to_string(), s.other_models.iter().collect()));
    }
    out.push(("Cautions".to_string(), cautions.iter().collect()));
    out
}

/// Writes `text` at row `r` with a height for its wrapped lines, and moves
/// `r` on.
fn line(sheet: &mut Worksheet, r: &mut u32, text: &str, format: &Format) -> Result<(), XlsxError> {
    sheet.write_string_with_format(*r, 0, text, format)?;
    let lines = text.chars().count().div_ceil(LINE_CHARS).max(1);
    if lines > 1 {
        sheet.set_row_height(*r, 15.0 * lines as f64)?;
    }
    *r += 1;
    Ok(())
}

/// Places the main model's forecast chart beside the sentences, when it
/// has one.
pub(super) fn summary_chart(
    sheet: &mut Worksheet,
    results: &Results,
    blocks: &[ChartBlock],
) -> Result<(), XlsxError> {
    let Some(s) = &results.summary else {
        return Ok(());
    };
    let Some((m, block)) = charted(results)
        .enumerate()
        .find(|(_, m)| m.name == s.model)
        .and_then(|(k, m)| blocks.iter().find(|b| b.model == k).map(|b| (m, b)))
    else {
        return Ok(());
    };
    let mut chart = forecast_chart(m, block);
    chart.set_width(640).set_height(360);
    sheet.insert_chart(3, CHART_COLUMN, &chart)?;
    Ok(())
}
