//! The report workbook: sheets laid out from [`Results`], nothing computed.
//!
//! Each table sheet holds one worksheet table (filter buttons, banded rows,
//! a defined name) with a row per model and item, so a reader can filter to
//! one model. Charts are built from the cell ranges recorded while the
//! residual table is written, never from hand-typed coordinates.

use std::borrow::Cow;
use std::io::{Seek, Write};

use chrono::Datelike;
use rust_xlsxwriter::{
    Chart, ChartAxisLabelPosition, ChartFormat, ChartLegendPosition, ChartLine, ChartMarker,
    ChartMarkerType, ChartType, DocProperties, ExcelDateTime, Format, FormatAlign, Table,
    TableColumn, TableStyle, Workbook, Worksheet, XlsxError,
};

use crate::results::{ModelResults, Results, RUN_ID_PROPERTY};
use crate::text::row_ranges;

mod by_series;
mod forecast;

/// Sheet names.
const OVERVIEW: &str = "Overview";
const COEFFICIENTS: &str = "Coefficients";
const ANOVA: &str = "ANOVA";
const FIT_QUALITY: &str = "Fit quality";
const COMPARISON: &str = "Comparison";
const CHECKS: &str = "Checks";
const RESIDUALS: &str = "Residuals";
const FORECAST: &str = "Forecast";
const BACKTEST: &str = "Back-test";
const BACKTEST_ROWS: &str = "Back-test rows";
const CHART_DATA: &str = "Chart data";
const NORMAL_PLOT: &str = "Normal plot";
const CHART_POINTS: &str = "Chart points";
const CHARTS: &str = "Charts";
/// Sheet added after the overview when a model is fitted by level.
const BY_SERIES: &str = "By series";

/// Sheet added after the forecast when a model has scenarios.
const SCENARIOS: &str = "Scenarios";

/// Sheets added when the job compares with last run.
const CHANGES: &str = "Changes";
const TRACKING: &str = "Forecast tracking";

/// Sheet names, in the order they appear.
pub const SHEETS: [&str; 14] = [
    OVERVIEW,
    COEFFICIENTS,
    ANOVA,
    FIT_QUALITY,
    COMPARISON,
    CHECKS,
    RESIDUALS,
    FORECAST,
    BACKTEST,
    BACKTEST_ROWS,
    CHART_DATA,
    NORMAL_PLOT,
    CHART_POINTS,
    CHARTS,
];

/// One cell of a table row; text is borrowed from the results where it can
/// be, so a long table does not copy a model name into every row.
enum Cell<'a> {
    Text(Cow<'a, str>),
    Number(f64, Style),
    /// A calendar date, written as a date cell.
    Date(chrono::NaiveDate),
    Empty,
}

/// How a number is shown; the cell always holds the full value.
#[derive(Clone, Copy)]
enum Style {
    /// Estimates and sums: four decimals, scientific when very small or large.
    Value,
    /// p-values: four decimals, scientific below 0.0001 (a plain format
    /// per cell rather than a conditional one, which not every spreadsheet
    /// program renders cleanly).
    PValue,
    /// Shares such as R²: four decimals.
    Ratio,
    /// Levels and shares read as percentages (a 95% interval, 93.8% of
    /// the rows inside it): one decimal and a percent sign.
    Share,
    /// Counts and row numbers.
    Count,
}

fn opt(x: Option<f64>, style: Style) -> Cell<'static> {
    match x {
        Some(v) if v.is_finite() => Cell::Number(v, style),
        _ => Cell::Empty,
    }
}

fn num(x: f64, style: Style) -> Cell<'static> {
    opt(Some(x), style)
}

fn text<'a>(s: impl Into<Cow<'a, str>>) -> Cell<'a> {
    Cell::Text(s.into())
}

struct Formats {
    fixed: Format,
    scientific: Format,
    p_value: Format,
    tiny_p_value: Format,
    ratio: Format,
    share: Format,
    count: Format,
    date: Format,
    title: Format,
    heading: Format,
    bold: Format,
    header: Format,
    wrap: Format,
}

impl Formats {
    fn new() -> Self {
        Formats {
            fixed: Format::new().set_num_format("#,##0.0000"),
            scientific: Format::new().set_num_format("0.0000E+00"),
            p_value: Format::new().set_num_format("0.0000"),
            tiny_p_value: Format::new().set_num_format("0.00E+00"),
            ratio: Format::new().set_num_format("0.0000"),
            share: Format::new().set_num_format("0.0%"),
            count: Format::new().set_num_format("0"),
            date: Format::new().set_num_format("yyyy-mm-dd"),
            title: Format::new().set_bold().set_font_size(16),
            heading: Format::new().set_bold().set_font_size(12),
            bold: Format::new().set_bold(),
            header: Format::new()
                .set_bold()
                .set_border_bottom(rust_xlsxwriter::FormatBorder::Thin),
            wrap: Format::new().set_text_wrap().set_align(FormatAlign::Top),
        }
    }

    /// The format most values of `style` are shown with.
    fn usual(&self, style: Style) -> &Format {
        match style {
            Style::Value => &self.fixed,
            Style::PValue => &self.p_value,
            Style::Ratio => &self.ratio,
            Style::Share => &self.share,
            Style::Count => &self.count,
        }
    }

    fn for_number(&self, x: f64, style: Style) -> &Format {
        match style {
            Style::Value if x != 0.0 && !(1e-4..1e10).contains(&x.abs()) => &self.scientific,
            Style::PValue if x < 1e-4 => &self.tiny_p_value,
            style => self.usual(style),
        }
    }
}

/// The sheet rows (zero-based, inclusive) holding one model's block of a
/// table, recorded while the table is written so charts can point at them.
#[derive(Clone, Copy)]
struct Span {
    first: u32,
    last: u32,
}

/// Rows in a worksheet, the file format's limit.
const SHEET_ROWS: u32 = 1_048_576;

/// The last sheet row a table starting at row 0 can fill.
fn last_table_row(rows: usize) -> u32 {
    (rows as u32).min(SHEET_ROWS - 1)
}

/// Writes `rows` as a worksheet table named `name` with its header row at
/// `top` (zero-based), sets column widths to fit and freezes the header.
/// Rows past the sheet's limit are left out, with a note beside the header
/// (the JSON keeps them).
fn write_table(
    sheet: &mut Worksheet,
    formats: &Formats,
    name: &str,
    top: u32,
    headers: &[&str],
    rows: &[Vec<Cell>],
) -> Result<(), XlsxError> {
    let layout = Layout::Table(name);
    write_table_rows(sheet, formats, layout, top, headers, rows.len(), rows)?;
    Ok(())
}

/// How [`write_table_rows`] marks out its rows.
#[derive(Clone, Copy)]
enum Layout<'a> {
    /// A worksheet table with this name: banded rows and filter buttons.
    Table(&'a str),
    /// A bold header row with filter buttons, for a table too long for a
    /// worksheet table (the writer indexes every cell of a table; at a
    /// million rows that alone would take gigabytes). The caller gives the
    /// range a defined name.
    Filtered,
}

/// [`write_table`] for `count` rows produced one at a time, so a long
/// table is never held whole; returns the last sheet row written.
/// Everything is written top to bottom (the table and the note on the
/// header row first), as a constant-memory worksheet requires; column
/// widths, set last, follow the widest cell. Each numeric column takes the
/// usual format of its first row's style as its column format, so only
/// cells shown otherwise (scientific, for extreme values) carry a format
/// of their own; since a column format covers the whole sheet column, a
/// sheet holds one such table.
fn write_table_rows<'a, R: AsRef<[Cell<'a>]>>(
    sheet: &mut Worksheet,
    formats: &Formats,
    layout: Layout<'_>,
    top: u32,
    headers: &[&str],
    count: usize,
    rows: impl IntoIterator<Item = R>,
) -> Result<u32, XlsxError> {
    let mut widths: Vec<usize> = headers.iter().map(|h| h.chars().count() + 4).collect();
    let room = (SHEET_ROWS - top - 1) as usize;
    let (count, cut) = (count.min(room), count.saturating_sub(room));
    let last_row = top + count.max(1) as u32;
    let last_col = headers.len() as u16 - 1;
    match layout {
        Layout::Table(name) => {
            let columns: Vec<TableColumn> = headers
                .iter()
                .map(|h| TableColumn::new().set_header(*h))
                .collect();
            let table = Table::new()
                .set_name(name)
                .set_style(TableStyle::Medium2)
                .set_columns(&columns);
            sheet.add_table(top, 0, last_row, last_col, &table)?;
        }
        Layout::Filtered => {
            for (j, h) in headers.iter().enumerate() {
                sheet.write_string_with_format(top, j as u16, *h, &formats.header)?;
            }
            sheet.autofilter(top, 0, last_row, last_col)?;
        }
    }
    sheet.set_freeze_panes(top + 1, 0)?;
    // Printed (or turned into a PDF) a page wide, the header on every page.
    sheet
        .set_landscape()
        .set_print_fit_to_pages(1, 0)
        .set_repeat_rows(top, top)?;
    let mut rows = rows.into_iter().take(count).peekable();
    let mut column_formats: Vec<Option<&Format>> = vec![None; headers.len()];
    if let Some(first) = rows.peek() {
        for (j, cell) in first.as_ref().iter().enumerate() {
            if let Cell::Number(_, style) = cell {
                let format = formats.usual(*style);
                sheet.set_column_format(j as u16, format)?;
                column_formats[j] = Some(format);
            }
        }
    }
    if cut > 0 {
        sheet.write_string(
            top,
            headers.len() as u16 + 1,
            format!("{cut} more rows do not fit in a sheet (its limit is {SHEET_ROWS} rows); the results JSON has them all"),
        )?;
    }
    for (i, row) in rows.enumerate() {
        let r = top + 1 + i as u32;
        for (j, cell) in row.as_ref().iter().enumerate() {
            let c = j as u16;
            let width = match cell {
                Cell::Text(s) => {
                    sheet.write_string(r, c, s.as_ref())?;
                    s.chars().count()
                }
                Cell::Number(x, style) => {
                    let format = formats.for_number(*x, *style);
                    match column_formats[j] {
                        Some(usual) if std::ptr::eq(usual, format) => {
                            sheet.write_number(r, c, *x)?
                        }
                        _ => sheet.write_number_with_format(r, c, *x, format)?,
                    };
                    12
                }
                // A workbook date cannot hold a day before 1900 (nor after
                // 9999): such a date is written as ISO text.
                Cell::Date(d) if !(1900..=9999).contains(&d.year()) => {
                    sheet.write_string(r, c, d.to_string())?;
                    10
                }
                Cell::Date(d) => {
                    let date = ExcelDateTime::from_ymd(
                        u16::try_from(d.year()).unwrap_or(1900),
                        d.month() as u8,
                        d.day() as u8,
                    )?;
                    sheet.write_datetime_with_format(r, c, &date, &formats.date)?;
                    10
                }
                Cell::Empty => 0,
            };
            widths[j] = widths[j].max(width + 2);
        }
    }
    for (j, w) in widths.iter().enumerate() {
        sheet.set_column_width(j as u16, (*w).min(60) as f64)?;
    }
    Ok(last_row)
}

/// Lays `results` out as a workbook and writes it to `out`.
///
/// # Errors
/// Any [`XlsxError`] from the writer (a limit of the file format, or the
/// write itself).
pub fn write_workbook<W: Write + Seek + Send>(results: &Results, out: W) -> Result<(), XlsxError> {
    let formats = Formats::new();
    let mut workbook = Workbook::new();
    // The run time, not the clock, so reruns with a fixed time are identical.
    let created = chrono::DateTime::parse_from_rfc3339(&results.run.run_time)
        .map(|t| t.timestamp())
        .unwrap_or(0);
    workbook.set_properties(
        &DocProperties::new()
            .set_creation_datetime(&ExcelDateTime::from_timestamp(created)?)
            .set_title(&results.title)
            .set_subject("Linear regression report")
            .set_author(&results.run.tool)
            .set_comment(format!("Run {}", results.run.run_time))
            .set_custom_property(RUN_ID_PROPERTY, results.run.run_id.as_str()),
    );
    overview(
        workbook.add_worksheet().set_name(OVERVIEW)?,
        &formats,
        results,
    )?;
    if results.models.iter().any(|m| m.by.is_some()) || !results.by_skipped.is_empty() {
        by_series::by_series_sheet(
            workbook.add_worksheet().set_name(BY_SERIES)?,
            &formats,
            results,
        )?;
    }
    coefficients(
        workbook.add_worksheet().set_name(COEFFICIENTS)?,
        &formats,
        results,
    )?;
    anova(workbook.add_worksheet().set_name(ANOVA)?, &formats, results)?;
    fit_quality(
        workbook.add_worksheet().set_name(FIT_QUALITY)?,
        &formats,
        results,
    )?;
    comparison(
        workbook.add_worksheet().set_name(COMPARISON)?,
        &formats,
        results,
    )?;
    checks(
        workbook.add_worksheet().set_name(CHECKS)?,
        &formats,
        results,
    )?;
    // The one sheet that grows with the data is written row by row to disk.
    residuals(&mut workbook, &formats, results)?;
    forecast::forecast_sheet(
        workbook.add_worksheet().set_name(FORECAST)?,
        &formats,
        results,
    )?;
    if results.models.iter().any(|m| !m.scenarios.is_empty()) {
        forecast::scenarios_sheet(
            workbook.add_worksheet().set_name(SCENARIOS)?,
            &formats,
            results,
        )?;
    }
    forecast::backtest_sheets(&mut workbook, &formats, results)?;
    let history = forecast::chart_data(
        workbook.add_worksheet().set_name(CHART_DATA)?,
        &formats,
        results,
    )?;
    let normal = normal_plot_data(
        workbook.add_worksheet().set_name(NORMAL_PLOT)?,
        &formats,
        results,
    )?;
    let points = chart_points(
        workbook.add_worksheet().set_name(CHART_POINTS)?,
        &formats,
        results,
    )?;
    charts(
        workbook.add_worksheet().set_name(CHARTS)?,
        results,
        &points,
        &history,
        &normal,
    )?;
    if let Some(changes) = &results.changes {
        changes_sheets(&mut workbook, &formats, changes)?;
    }
    workbook.save_to_writer(out)
}

/// Coefficient moves since last run, and how last run's forecasts did.
fn changes_sheets(
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

/// The models shown side by side and charted: the job's models and the
/// suggested ones. A model fitted by level (`by`) is summarised on the By
/// series sheet instead, its tables kept in the other sheets.
fn charted(results: &Results) -> impl Iterator<Item = &ModelResults> + Clone {
    results.models.iter().filter(|m| m.by.is_none())
}

fn overview(sheet: &mut Worksheet, f: &Formats, results: &Results) -> Result<(), XlsxError> {
    // Printed in landscape, so the cautions' lines fit a page's width (the
    // fitted equations run on to the pages beside).
    sheet.set_landscape();
    sheet.set_column_width(0, 36)?;
    for c in 1..=charted(results).count() as u16 {
        sheet.set_column_width(c, 22)?;
    }
    sheet.write_string_with_format(0, 0, &results.title, &f.title)?;
    let mut r = 2;
    sheet.write_string_with_format(r, 0, "Models side by side", &f.heading)?;
    r += 1;
    sheet.write_string_with_format(r, 0, "Statistic", &f.bold)?;
    for (j, m) in charted(results).enumerate() {
        sheet.write_string_with_format(r, 1 + j as u16, &m.name, &f.bold)?;
    }
    type Row = (&'static str, fn(&ModelResults) -> Cell);
    let rows: [Row; 18] = [
        ("Response", |m| text(&m.response)),
        ("Rows used (n)", |m| num(m.n as f64, Style::Count)),
        ("Rows left out (blank cells)", |m| {
            num(m.dropped_rows.len() as f64, Style::Count)
        }),
        ("Coefficients estimated", |m| {
            num(m.coefficients.len() as f64, Style::Count)
        }),
        ("Residual degrees of freedom", |m| {
            num(m.df_resid as f64, Style::Count)
        }),
        ("R²", |m| opt(m.fit.r_squared, Style::Ratio)),
        ("Adjusted R²", |m| opt(m.fit.adj_r_squared, Style::Ratio)),
        ("Residual standard error", |m| {
            num(m.fit.sigma, Style::Value)
        }),
        ("F statistic", |m| opt(m.fit.f_stat, Style::Value)),
        ("F p-value", |m| opt(m.fit.f_p_value, Style::PValue)),
        ("Log-likelihood", |m| {
            num(m.fit.log_likelihood, Style::Value)
        }),
        ("AIC (lower is better)", |m| num(m.fit.aic, Style::Value)),
        ("BIC (lower is better)", |m| num(m.fit.bic, Style::Value)),
        ("Confidence level", |m| num(m.confidence, Style::Share)),
        ("Condition number", |m| {
            num(m.fit.condition_number, Style::Value)
        }),
        ("Back-test RMSE (last periods held out)", |m| {
            opt(m.backtest.as_ref().map(|b| b.accuracy.rmse), Style::Value)
        }),
        ("Suggested from (terms dropped)", |m| {
            match &m.suggested_from {
                Some(from) => text(format!(
                    "{from} (dropped {})",
                    m.dropped_terms
                        .iter()
                        .map(|d| d.term.as_str())
                        .collect::<Vec<_>>()
                        .join(", ")
                )),
                None => text("the job"),
            }
        }),
        ("Checks flagged (see Checks)", |m| {
            num(
                m.checks.iter().filter(|c| c.flagged).count() as f64,
                Style::Count,
            )
        }),
    ];
    for (label, value) in rows {
        r += 1;
        sheet.write_string(r, 0, label)?;
        for (j, m) in charted(results).enumerate() {
            match value(m) {
                Cell::Text(s) => sheet.write_string(r, 1 + j as u16, s)?,
                Cell::Number(x, style) => {
                    sheet.write_number_with_format(r, 1 + j as u16, x, f.for_number(x, style))?
                }
                Cell::Empty | Cell::Date(_) => sheet.write_string(r, 1 + j as u16, "n/a")?,
            };
        }
    }

    r += 2;
    sheet.write_string_with_format(r, 0, "Fitted equations", &f.heading)?;
    for m in charted(results) {
        r = beside(sheet, f, r, &m.name, &m.equation)?;
    }

    r += 2;
    sheet.write_string_with_format(r, 0, "How each model was set up", &f.heading)?;
    for m in charted(results) {
        for note in model_notes(m) {
            r = beside(sheet, f, r, &m.name, &note)?;
        }
    }
    for (model, levels, skipped) in by_models(results) {
        let note = format!(
            "Fitted separately for each of {levels} levels (sheet By series, one row per level; each level's tables are in the other sheets under the name \"{model} [level]\"){}.",
            if skipped == 0 {
                String::new()
            } else {
                format!("; {skipped} levels could not be fitted and are listed there with the reason")
            }
        );
        r = beside(sheet, f, r, &model, &note)?;
    }

    r += 2;
    sheet.write_string_with_format(r, 0, "Run", &f.heading)?;
    let run = &results.run;
    let stamp = [
        ("Run id", run.run_id.clone()),
        ("Tool", run.tool.clone()),
        ("Run time (UTC)", run.run_time.clone()),
        ("Job file", run.job_file.clone()),
        ("Job file SHA-256", run.job_sha256.clone()),
        ("Input file", run.input_file.clone()),
        ("Input SHA-256", run.input_sha256.clone()),
        ("Sheet", run.sheet.clone()),
    ];
    for (label, value) in stamp {
        r += 1;
        sheet.write_string(r, 0, label)?;
        sheet.write_string(r, 1, value)?;
    }
    r += 1;
    sheet.write_string(r, 0, "Data rows read")?;
    sheet.write_number_with_format(r, 1, run.rows_read as f64, &f.count)?;
    for left_out in &run.screened.summary_rows_left_out {
        r += 1;
        sheet.write_string(r, 0, "Summary row left out")?;
        sheet.write_string(r, 1, &left_out.reason)?;
    }
    for read in &run.screened.text_numbers_read {
        r += 1;
        sheet.write_string(r, 0, "Numbers read from text")?;
        sheet.write_string(
            r,
            1,
            format!("column '{}': {} cells", read.column, read.cells),
        )?;
    }

    r += 2;
    sheet.write_string_with_format(r, 0, "Before you rely on these numbers", &f.heading)?;
    // One line a row, running across the empty cells to the right: merged
    // cells with wrapped text are not drawn alike by every program.
    for caution in &results.cautions {
        for line in lines(caution, CAUTION_LINE) {
            r += 1;
            sheet.write_string(r, 0, line)?;
        }
    }
    Ok(())
}

/// Characters a caution line holds: about the width of the overview's
/// first seven columns.
const CAUTION_LINE: usize = 110;

/// Writes `words` beside `name` in the rows after `r`, over as many rows as
/// they need so that a printed page holds them whole; returns the last row.
fn beside(
    sheet: &mut Worksheet,
    f: &Formats,
    mut r: u32,
    name: &str,
    words: &str,
) -> Result<u32, XlsxError> {
    for (k, line) in lines(words, BESIDE_LINE).into_iter().enumerate() {
        r += 1;
        if k == 0 {
            sheet.write_string_with_format(r, 0, name, &f.bold)?;
        }
        sheet.write_string(r, 1, line)?;
    }
    Ok(r)
}

/// Characters a line beside a model's name holds (an equation, a note):
/// about the width of the overview's second to fifth columns, what a
/// landscape page shows beside the first.
const BESIDE_LINE: usize = 85;

/// `text` broken at spaces into lines of at most `width` characters (a
/// longer word gets a line of its own).
fn lines(text: &str, width: usize) -> Vec<&str> {
    let mut out = Vec::new();
    let mut start = 0;
    let mut end = 0;
    for (at, _) in text.match_indices(' ').chain([(text.len(), "")]) {
        if text[start..at].chars().count() > width && end > start {
            out.push(&text[start..end]);
            start = end + 1;
        }
        end = at;
    }
    if start < text.len() {
        out.push(&text[start..]);
    }
    out
}

/// Each model fitted by level: its name, the levels fitted and the levels
/// that could not be.
fn by_models(results: &Results) -> Vec<(String, usize, usize)> {
    let mut out: Vec<(String, usize, usize)> = Vec::new();
    for b in results.models.iter().filter_map(|m| m.by.as_ref()) {
        match out.iter_mut().find(|(name, _, _)| *name == b.model) {
            Some(entry) => entry.1 += 1,
            None => out.push((b.model.clone(), 1, 0)),
        }
    }
    for s in &results.by_skipped {
        match out.iter_mut().find(|(name, _, _)| *name == s.model) {
            Some(entry) => entry.2 += 1,
            None => out.push((s.model.clone(), 0, 1)),
        }
    }
    out
}

/// Plain sentences on how a model was set up: baselines, aliased terms,
/// rows left out.
pub fn model_notes(m: &ModelResults) -> Vec<String> {
    let mut notes = Vec::new();
    if !m.intercept {
        notes.push(match m.baselines.iter().find(|b| b.every_level) {
            Some(b) => format!("Fitted without an intercept, but the {} indicators together act as one (one of them is 1 in every row): R² and F are measured about the mean, as with an intercept.", b.column),
            None => "Fitted without an intercept: R² and F are measured about zero, not about the mean.".to_string(),
        });
    }
    for b in &m.baselines {
        if b.every_level {
            notes.push(format!(
                "{0}: without an intercept every level has its own coefficient, {0}[level], the level of the response for that level with the other predictors at zero; the fit does not depend on a baseline{1}. Levels: {2}.",
                b.column,
                if b.in_interactions {
                    format!(", but its interactions compare each level with '{}' ({})", b.level, b.reason)
                } else {
                    String::new()
                },
                b.levels.join(", ")
            ));
            continue;
        }
        notes.push(format!(
            "{}: baseline level '{}' ({}); each {}[level] coefficient is the difference from it. Levels: {}.",
            b.column,
            b.level,
            b.reason,
            b.column,
            b.levels.join(", ")
        ));
    }
    if let Some(w) = &m.weights {
        notes.push(format!(
            "Fitted by weighted least squares, each row weighted by '{w}': rows of larger weight count more, standard errors, R², F and the log-likelihood are the weighted ones, and residuals are shown on the response's own scale. The prediction intervals of forecast and scenario rows take a weight of {} (`weight` under [model.forecast] or [model.scenarios]): a new value's variance is σ² divided by its weight.",
            m.new_row_weight.map_or("1".to_string(), |w| w.to_string())
        ));
    }
    notes.extend(m.term_notes.iter().cloned());
    for a in &m.aliased {
        notes.push(format!(
            "{a} is an exact combination of earlier columns (aliased) and was left out of the fit."
        ));
    }
    if let Some(t) = &m.timing {
        notes.push(format!(
            "Periods: by {} ({}), from {} to {}, {} periods; the trend index counts periods from {} = 1, so gaps keep their spacing{}. Rows are in period order.",
            t.frequency.name(),
            if t.detected { "told from the dates" } else { "set in the job" },
            t.first,
            t.last,
            t.periods,
            t.first,
            if t.panel { "; several rows per period (panel data) share one index" } else { "" },
        ));
    }
    if m.transform.is_some() {
        notes.push(format!(
            "Fitted to ln({0}): coefficients are changes in ln({0}), roughly 100 × coefficient percent; residuals and charts of residuals are on the log scale. Forecasts are transformed back: the estimate is a median, and the smeared mean (Duan 1983) estimates the mean.",
            m.response
        ));
    }
    if !m.forecast.is_empty() {
        notes.push(format!(
            "{} forecast rows (sheet Forecast): they assume the pattern of the data continues and the predictors take the values shown.",
            m.forecast.len()
        ));
    }
    if m.dropped_rows.is_empty() {
        notes.push("No rows were left out.".to_string());
    } else {
        notes.push(format!(
            "{} rows left out for a blank cell in a column this model uses; sheet rows {}.",
            m.dropped_rows.len(),
            row_ranges(&m.dropped_rows)
        ));
    }
    notes
}

fn coefficients(sheet: &mut Worksheet, f: &Formats, results: &Results) -> Result<(), XlsxError> {
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
    for m in &results.models {
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
                text(match &m.standard_errors {
                    Some(kind) => format!("{kind} (heteroscedasticity-consistent)"),
                    None => "classical".to_string(),
                }),
                Cell::Empty,
            ]);
        }
        for a in &m.aliased {
            let mut row = vec![text(&m.name), text(a)];
            row.extend((0..8).map(|_| Cell::Empty));
            row.push(text("aliased: left out of the fit"));
            rows.push(row);
        }
    }
    write_table(sheet, f, "Coefficient_table", 0, &headers, &rows)
}

fn anova(sheet: &mut Worksheet, f: &Formats, results: &Results) -> Result<(), XlsxError> {
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
    for m in &results.models {
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
    write_table(sheet, f, "ANOVA_table", 0, &headers, &rows)
}

fn fit_quality(sheet: &mut Worksheet, f: &Formats, results: &Results) -> Result<(), XlsxError> {
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
            ]
        })
        .collect();
    write_table(sheet, f, "Fit_quality_table", 0, &headers, &rows)
}

fn comparison(sheet: &mut Worksheet, f: &Formats, results: &Results) -> Result<(), XlsxError> {
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

fn checks(sheet: &mut Worksheet, f: &Formats, results: &Results) -> Result<(), XlsxError> {
    let headers = [
        "Model",
        "Check",
        "Statistic",
        "p-value",
        "Flagged",
        "Verdict",
        "Rule",
    ];
    let rows: Vec<Vec<Cell>> = results
        .models
        .iter()
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
    write_table(sheet, f, "Check_table", 0, &headers, &rows)
}

/// The per-row table of every model, on as many sheets as it needs:
/// `Residuals`, then `Residuals 2`, `Residuals 3`, ... once a sheet's
/// 1,048,576 rows are full. The sheets are written row by row to disk
/// (constant memory) and each range gets a defined name,
/// `Residual_table`, `Residual_table_2`, ..., in place of a table's.
fn residuals(workbook: &mut Workbook, f: &Formats, results: &Results) -> Result<(), XlsxError> {
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
struct ResidualSheet {
    name: String,
    range_name: String,
    /// Data rows on it.
    count: usize,
}

/// The sheets `total` residual rows fill at `per_sheet` rows a sheet: at
/// least one, the first named `Residuals`, the next `Residuals 2`, ...
fn residual_sheets(total: usize, per_sheet: usize) -> Vec<ResidualSheet> {
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

/// Points a scatter chart shows at most; the statistics use every row.
const SCATTER_POINTS: usize = 2_000;

/// Of those, the rows with the largest absolute residuals, always shown.
const SCATTER_EXTREMES: usize = 100;

/// The rows (indices, ascending) of a model's `residuals` its scatter
/// charts show: all of them up to [`SCATTER_POINTS`]; past that, rows
/// evenly spaced in sheet order and the [`SCATTER_EXTREMES`] largest
/// absolute residuals.
fn scatter_rows(residuals: &[f64]) -> Vec<usize> {
    let n = residuals.len();
    if n <= SCATTER_POINTS {
        return (0..n).collect();
    }
    let spaced = SCATTER_POINTS - SCATTER_EXTREMES;
    let mut by_size: Vec<usize> = (0..n).collect();
    by_size.select_nth_unstable_by(SCATTER_EXTREMES, |&a, &b| {
        residuals[b].abs().total_cmp(&residuals[a].abs())
    });
    let mut rows: Vec<usize> = (0..spaced)
        .map(|k| k * n / spaced)
        .chain(by_size[..SCATTER_EXTREMES].iter().copied())
        .collect();
    rows.sort_unstable();
    rows.dedup();
    rows
}

/// Column of the fitted, residual and actual values in the chart points.
const FITTED_COL: u16 = 3;
const ACTUAL_COL: u16 = 2;
const RESIDUAL_COL: u16 = 4;

/// The points of the scatter charts: each model's [`scatter_rows`] with
/// their fitted, actual and residual values; returns each model's rows and
/// how many of its rows they show.
fn chart_points(
    sheet: &mut Worksheet,
    f: &Formats,
    results: &Results,
) -> Result<Vec<(Span, usize)>, XlsxError> {
    let headers = ["Model", "Sheet row", "Actual", "Fitted", "Residual"];
    let mut rows = Vec::new();
    let mut spans = Vec::new();
    for m in charted(results) {
        let first = 1 + rows.len() as u32;
        let shown = scatter_rows(m.residuals.residuals());
        for &i in &shown {
            let d = m.residuals.get(i);
            rows.push(vec![
                text(&m.name),
                num(f64::from(d.row), Style::Count),
                num(d.actual, Style::Value),
                num(d.fitted, Style::Value),
                num(d.residual, Style::Value),
            ]);
        }
        spans.push((
            Span {
                first,
                last: rows.len() as u32,
            },
            shown.len(),
        ));
    }
    write_table(sheet, f, "Chart_point_table", 0, &headers, &rows)?;
    Ok(spans)
}

/// The sorted standardized residuals of every model beside their normal
/// quantiles; returns each model's rows.
fn normal_plot_data(
    sheet: &mut Worksheet,
    f: &Formats,
    results: &Results,
) -> Result<Vec<Span>, XlsxError> {
    let headers = ["Model", "Normal quantile", "Standardized residual (sorted)"];
    let mut rows = Vec::new();
    let mut spans = Vec::new();
    for m in charted(results) {
        let first = 1 + rows.len() as u32;
        for p in &m.normal_plot {
            rows.push(vec![
                text(m.name.as_str()),
                num(p.normal_quantile, Style::Value),
                num(p.standardized_residual, Style::Value),
            ]);
        }
        spans.push(Span {
            first: first.min(SHEET_ROWS - 1),
            last: last_table_row(rows.len()),
        });
    }
    write_table(sheet, f, "Normal_plot_table", 0, &headers, &rows)?;
    Ok(spans)
}

/// Normal quantile plot: sorted standardized residuals against their
/// normal scores, with the line y = x they follow when the residuals are
/// normal.
fn normal_chart(m: &ModelResults, span: Span) -> Chart {
    let range = |col: u16| (NORMAL_PLOT, span.first, col, span.last, col);
    let mut chart = Chart::new(ChartType::ScatterStraight);
    chart
        .add_series()
        .set_name("Standardized residuals")
        .set_categories(range(1))
        .set_values(range(2))
        .set_marker(
            ChartMarker::new()
                .set_type(ChartMarkerType::Circle)
                .set_size(5),
        )
        .set_format(ChartFormat::new().set_no_line());
    chart
        .add_series()
        .set_name("Normal line (y = x)")
        .set_categories(range(1))
        .set_values(range(1))
        .set_marker(ChartMarker::new().set_none())
        .set_format(ChartFormat::new().set_line(ChartLine::new().set_color("#ED7D31")));
    let residuals = m
        .residuals
        .iter()
        .filter(|d| d.standardized_residual.is_some())
        .count();
    let sample = if m.normal_plot.len() < residuals {
        format!(" ({} of {residuals} residuals)", m.normal_plot.len())
    } else {
        String::new()
    };
    chart
        .title()
        .set_name(format!("{}: normal quantile plot of the residuals{sample}", m.name).as_str());
    chart
        .x_axis()
        .set_name("Normal quantile")
        .set_label_position(ChartAxisLabelPosition::Low);
    chart.y_axis().set_name("Standardized residual");
    // Two series, the points and the line: a legend says which is which.
    chart.legend().set_position(ChartLegendPosition::Bottom);
    chart.set_width(560).set_height(400);
    chart
}

fn charts(
    sheet: &mut Worksheet,
    results: &Results,
    points: &[(Span, usize)],
    history: &[forecast::ChartBlock],
    normal: &[Span],
) -> Result<(), XlsxError> {
    // Printed (or converted to PDF) one page wide, in landscape, three
    // models' charts a page so that no chart is cut by a page break.
    sheet.set_landscape().set_print_fit_to_pages(1, 0);
    let breaks: Vec<u32> = (CHART_ROWS_A_PAGE..charted(results).count())
        .step_by(CHART_ROWS_A_PAGE)
        .map(|k| k as u32 * CHART_ROW_HEIGHT)
        .collect();
    sheet.set_page_breaks(&breaks)?;
    for (k, (m, &(span, shown))) in charted(results).zip(points).enumerate() {
        let top = k as u32 * CHART_ROW_HEIGHT;
        let fitted = (CHART_POINTS, span.first, FITTED_COL, span.last, FITTED_COL);
        let sample = if shown < m.residuals.len() {
            format!(" ({shown} of {} rows)", m.residuals.len())
        } else {
            String::new()
        };
        let scatter = |title: String, x_name: String, y_name: String, values: u16| {
            let mut chart = Chart::new(ChartType::Scatter);
            chart
                .add_series()
                .set_categories(fitted)
                .set_values((CHART_POINTS, span.first, values, span.last, values))
                .set_marker(
                    ChartMarker::new()
                        .set_type(ChartMarkerType::Circle)
                        .set_size(5),
                )
                // Points only: some programs join a scatter's points unless told not to.
                .set_format(ChartFormat::new().set_no_line());
            chart.title().set_name(format!("{title}{sample}").as_str());
            // Labels at the foot of the plot, not on a zero line mid-chart.
            chart
                .x_axis()
                .set_name(x_name.as_str())
                .set_label_position(ChartAxisLabelPosition::Low);
            chart.y_axis().set_name(y_name.as_str());
            chart.legend().set_hidden();
            chart.set_width(560).set_height(400);
            chart
        };
        let scale = match &m.transform {
            Some(t) => format!("{t}({})", m.response),
            None => m.response.clone(),
        };
        let mut actual = scatter(
            format!("{}: actual against fitted {scale}", m.name),
            format!("Fitted {scale}"),
            format!("Actual {scale}"),
            ACTUAL_COL,
        );
        // One range on both axes, so that a good fit lies along the diagonal.
        let (low, high) = axis_range(m.residuals.iter().flat_map(|r| [r.actual, r.fitted]));
        actual.x_axis().set_min(low).set_max(high);
        actual.y_axis().set_min(low).set_max(high);
        let resid = scatter(
            format!("{}: residuals against fitted values", m.name),
            format!("Fitted {scale}"),
            format!("Residual ({scale} units)"),
            RESIDUAL_COL,
        );
        sheet.insert_chart(top, 0, &actual)?;
        sheet.insert_chart(top, 9, &resid)?;
        if let Some(span) = normal.get(k).filter(|s| s.last >= s.first) {
            sheet.insert_chart(top, 18, &normal_chart(m, *span))?;
        }
        if let Some(block) = history.iter().find(|b| b.model == k) {
            sheet.insert_chart(top, 27, &forecast::forecast_chart(m, block))?;
        }
    }
    Ok(())
}

/// Sheet rows from one model's charts to the next's on the Charts sheet.
const CHART_ROW_HEIGHT: u32 = 22;

/// Models whose charts share a printed page.
const CHART_ROWS_A_PAGE: usize = 3;

/// An axis range that holds every finite value of `values`, widened by a
/// twentieth of their spread on each side and rounded out to a step of 1,
/// 2 or 5 times a power of ten (a tenth of the spread or less): a chart of
/// values from 103 to 128 runs from 100 to 130, not from 0.
fn axis_range(values: impl Iterator<Item = f64>) -> (f64, f64) {
    let (low, high) = values
        .filter(|v| v.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
            (lo.min(v), hi.max(v))
        });
    if low > high {
        return (0.0, 1.0);
    }
    let spread = if high > low {
        high - low
    } else {
        low.abs().max(1.0)
    };
    let (low, high) = (low - spread / 20.0, high + spread / 20.0);
    let magnitude = 10f64.powf((spread / 10.0).log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0]
        .into_iter()
        .map(|m| m * magnitude)
        .find(|s| (high - low) / s <= 10.0)
        .unwrap_or(10.0 * magnitude);
    ((low / step).floor() * step, (high / step).ceil() * step)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn axis_ranges_hug_the_values_at_round_numbers() {
        assert_eq!(axis_range([103.0, 128.0].into_iter()), (100.0, 130.0));
        assert_eq!(axis_range([-12.5, 17.3].into_iter()), (-15.0, 20.0));
        let (low, high) = axis_range([0.52, 0.58].into_iter());
        assert!(
            (low - 0.51).abs() < 1e-12 && (high - 0.59).abs() < 1e-12,
            "{low} {high}"
        );
        // One value: a range around it; none: a unit range.
        let (low, high) = axis_range([5.0].into_iter());
        assert!(low < 5.0 && high > 5.0);
        assert_eq!(axis_range([f64::NAN].into_iter()), (0.0, 1.0));
    }

    #[test]
    fn cautions_break_at_spaces_within_the_line_width() {
        assert_eq!(
            lines("one two three four", 9),
            vec!["one two", "three", "four"]
        );
        assert_eq!(lines("short", 9), vec!["short"]);
        assert_eq!(
            lines("a longerthanwidth b", 5),
            vec!["a", "longerthanwidth", "b"]
        );
        let caution = "A regression shows association between the response and the predictors in this data, not that one causes the other.";
        let broken = lines(caution, CAUTION_LINE);
        assert!(broken.iter().all(|l| l.chars().count() <= CAUTION_LINE));
        assert_eq!(broken.join(" "), caution);
    }

    #[test]
    fn residual_rows_continue_on_numbered_sheets() {
        assert_eq!(
            residual_sheets(0, 10),
            vec![ResidualSheet {
                name: "Residuals".into(),
                range_name: "Residual_table".into(),
                count: 0
            }]
        );
        let sheets = residual_sheets(25, 10);
        let names: Vec<&str> = sheets.iter().map(|s| s.name.as_str()).collect();
        assert_eq!(names, ["Residuals", "Residuals 2", "Residuals 3"]);
        assert_eq!(sheets[2].range_name, "Residual_table_3");
        let counts: Vec<usize> = sheets.iter().map(|s| s.count).collect();
        assert_eq!(counts, [10, 10, 5]);
    }

    #[test]
    fn small_models_chart_every_row() {
        let small: Vec<f64> = (0..SCATTER_POINTS).map(|i| i as f64).collect();
        assert_eq!(
            scatter_rows(&small),
            (0..SCATTER_POINTS).collect::<Vec<_>>()
        );
    }

    #[test]
    fn large_models_chart_a_spread_sample_with_the_largest_residuals() {
        // 50,000 rows, all small residuals but for three far out.
        let mut residuals: Vec<f64> = (0..50_000).map(|i| ((i % 7) as f64 - 3.0) * 0.1).collect();
        for (i, v) in [(17, 90.0), (20_011, -95.0), (49_999, 99.0)] {
            residuals[i] = v;
        }
        let shown = scatter_rows(&residuals);
        assert!(shown.len() <= SCATTER_POINTS, "{}", shown.len());
        assert!(shown.len() > SCATTER_POINTS - SCATTER_EXTREMES);
        assert!(
            shown.windows(2).all(|w| w[0] < w[1]),
            "ascending, no repeats"
        );
        for far_out in [17, 20_011, 49_999] {
            assert!(shown.contains(&far_out), "row {far_out} missing");
        }
        // Evenly spaced: the first and the middle of the sheet are there.
        assert!(shown.contains(&0) && shown.contains(&25_000));
    }
}
