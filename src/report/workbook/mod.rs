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

mod anova;
mod ar1;
mod backtest;
mod by_series;
mod changes;
mod charts;
mod checks;
mod coefficients;
mod comparison;
mod fit_quality;
mod forecast;
mod overview;
mod print;
mod residuals;
mod summary;
mod whatif;

use self::anova::*;
use self::changes::*;
use self::charts::*;
use self::checks::*;
use self::coefficients::*;
use self::comparison::*;
use self::fit_quality::*;
use self::overview::*;
use self::print::*;
use self::residuals::*;

/// Sheet names.
const SUMMARY: &str = "Summary";
const WHAT_IF: &str = "What-if";
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
/// Sheet added after the comparison when a model is fitted by level.
const BY_SERIES: &str = "By series";

/// Sheet added before the back-test when a model has scenarios.
const SCENARIOS: &str = "Scenarios";

/// Sheet added after the comparison when a model has AR(1) errors.
const AR1: &str = "AR(1) errors";

/// Sheets added after the back-test when the job compares with last run.
const CHANGES: &str = "Changes";
const TRACKING: &str = "Forecast tracking";

/// Sheet names, in the order they appear: the summary sheets, then the long
/// data sheets the charts read.
pub const SHEETS: [&str; 16] = [
    SUMMARY,
    WHAT_IF,
    OVERVIEW,
    COEFFICIENTS,
    ANOVA,
    CHECKS,
    FORECAST,
    CHARTS,
    FIT_QUALITY,
    COMPARISON,
    BACKTEST,
    RESIDUALS,
    BACKTEST_ROWS,
    CHART_DATA,
    NORMAL_PLOT,
    CHART_POINTS,
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
    heading_wrap: Format,
    bold: Format,
    header: Format,
    /// An input cell of the What-if sheet.
    input: Format,
    /// A date input cell of the What-if sheet.
    input_date: Format,
    /// An output cell of the What-if sheet.
    output: Format,
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
            heading_wrap: Format::new()
                .set_bold()
                .set_font_size(12)
                .set_text_wrap()
                .set_align(FormatAlign::Top),
            bold: Format::new().set_bold(),
            input: Format::new()
                .set_num_format("#,##0.####")
                .set_background_color("#FFF2CC")
                .set_border(rust_xlsxwriter::FormatBorder::Thin),
            input_date: Format::new()
                .set_num_format("yyyy-mm-dd")
                .set_background_color("#FFF2CC")
                .set_border(rust_xlsxwriter::FormatBorder::Thin),
            output: Format::new().set_num_format("#,##0.0000").set_bold(),
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
    summary::summary_sheet(
        workbook.add_worksheet().set_name(SUMMARY)?,
        &formats,
        results,
    )?;
    whatif::whatif_sheet(&mut workbook, &formats, results)?;
    overview(
        workbook.add_worksheet().set_name(OVERVIEW)?,
        &formats,
        results,
    )?;
    // First what a reader prints: the summary, the overview, the
    // coefficients, ANOVA, checks, forecast and charts; the charts go in
    // once the data sheets they read are written.
    coefficients(
        workbook.add_worksheet().set_name(COEFFICIENTS)?,
        &formats,
        results,
    )?;
    anova(workbook.add_worksheet().set_name(ANOVA)?, &formats, results)?;
    checks(
        workbook.add_worksheet().set_name(CHECKS)?,
        &formats,
        results,
    )?;
    forecast::forecast_sheet(
        workbook.add_worksheet().set_name(FORECAST)?,
        &formats,
        results,
    )?;
    workbook.add_worksheet().set_name(CHARTS)?;
    // Then the sheets for a closer look.
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
    if results.models.iter().any(|m| m.by.is_some()) || !results.by_skipped.is_empty() {
        by_series::by_series_sheet(
            workbook.add_worksheet().set_name(BY_SERIES)?,
            &formats,
            results,
        )?;
    }
    if results.models.iter().any(|m| m.ar1_errors.is_some()) {
        ar1::ar1_sheet(workbook.add_worksheet().set_name(AR1)?, &formats, results)?;
    }
    if results.models.iter().any(|m| !m.scenarios.is_empty()) {
        forecast::scenarios_sheet(
            workbook.add_worksheet().set_name(SCENARIOS)?,
            &formats,
            results,
        )?;
    }
    backtest::backtest_sheet(
        workbook.add_worksheet().set_name(BACKTEST)?,
        &formats,
        results,
    )?;
    if let Some(changes) = &results.changes {
        changes_sheets(&mut workbook, &formats, changes)?;
    }
    // The long data sheets come last, so that printing the workbook gives
    // the summary sheets and charts first. The one that grows with the data
    // is written row by row to disk.
    residuals(&mut workbook, &formats, results)?;
    backtest::backtest_rows_sheet(
        workbook.add_worksheet().set_name(BACKTEST_ROWS)?,
        &formats,
        results,
    )?;
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
        workbook.worksheet_from_name(CHARTS)?,
        results,
        &points,
        &history,
        &normal,
    )?;
    summary::summary_chart(workbook.worksheet_from_name(SUMMARY)?, results, &history)?;
    print_setup(&mut workbook)?;
    workbook.save_to_writer(out)
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
