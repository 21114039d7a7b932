//! The forecast, scenarios and chart-data sheets, and the forecast chart
//! (history, fitted values, forecast and its prediction interval as a band).

use chrono::NaiveDate;
use rust_xlsxwriter::{Chart, ChartFormat, ChartSolidFill, ChartType, Worksheet, XlsxError};

use super::ar1::ar1_name;
use super::{
    axis_range, charted, num, opt, print_table, printed_rows, table_order, text, write_table, Cell,
    Formats, Style, CHART_DATA,
};
use crate::forecast::Predicted;
use crate::results::model::SERIES_LINES_UP_TO;
use crate::results::{ModelResults, Results};

/// Where a model's forecast-chart data sit on the chart-data sheet.
pub struct ChartBlock {
    /// Index of the model among the charted ones (`charted`).
    pub model: usize,
    /// First and last data row (zero-based) of the block.
    pub first: u32,
    /// Last data row of the block.
    pub last: u32,
    /// For a model drawn as a line per series: each series' label and rows
    /// (first and last), else empty.
    pub series: Vec<(String, u32, u32)>,
}

fn date(iso: &str) -> Cell<'static> {
    NaiveDate::parse_from_str(iso, "%Y-%m-%d").map_or(Cell::Empty, Cell::Date)
}

/// Writes a one-line note where a sheet has nothing to show.
pub(super) fn note(sheet: &mut Worksheet, f: &Formats, words: &str) -> Result<(), XlsxError> {
    sheet.set_column_width(0, 90)?;
    sheet.write_string_with_format(0, 0, words, &f.wrap)?;
    Ok(())
}

/// The estimate, both intervals, the smeared mean and the confidence level
/// of a predicted row, as the Forecast and Scenarios sheets show them.
fn prediction_cells(p: &Predicted, confidence: f64) -> [Cell<'static>; 7] {
    [
        num(p.estimate, Style::Value),
        num(p.mean_lower, Style::Value),
        num(p.mean_upper, Style::Value),
        num(p.pred_lower, Style::Value),
        num(p.pred_upper, Style::Value),
        opt(p.smeared_mean, Style::Value),
        num(confidence, Style::Share),
    ]
}

/// A predicted row's predictor values: "x = 1; region = East".
fn inputs_cell(inputs: &indexmap::IndexMap<String, String>) -> Cell<'static> {
    text(
        inputs
            .iter()
            .map(|(k, v)| format!("{k} = {v}"))
            .collect::<Vec<_>>()
            .join("; "),
    )
}

/// The forecast rows of every model.
pub(super) fn forecast_sheet(
    sheet: &mut Worksheet,
    f: &Formats,
    results: &Results,
) -> Result<(), XlsxError> {
    let headers = [
        "Model",
        "Period",
        "Period start",
        "Trend index",
        "Estimate",
        "Mean lower",
        "Mean upper",
        "Prediction lower",
        "Prediction upper",
        "Smeared mean",
        "Confidence",
        "Inputs",
    ];
    // Each model's rows, then those of its AR(1)-error version.
    let printed = printed_rows(results, |m| {
        m.forecast.len() + m.ar1_errors.as_ref().map_or(0, |a| a.forecast.len())
    });
    let rows: Vec<Vec<Cell>> = table_order(results)
        .flat_map(|m| {
            let ar1 = m.ar1_errors.iter().flat_map(move |a| {
                a.forecast
                    .iter()
                    .map(move |r| (std::borrow::Cow::Owned(ar1_name(&m.name)), r))
            });
            m.forecast
                .iter()
                .map(move |r| (std::borrow::Cow::Borrowed(m.name.as_str()), r))
                .chain(ar1)
                .map(move |(name, r)| {
                    let mut row = vec![
                        text(name),
                        r.period.as_deref().map_or(Cell::Empty, text),
                        r.date.as_deref().map_or(Cell::Empty, date),
                        opt(r.index.map(|i| i as f64), Style::Count),
                    ];
                    row.extend(prediction_cells(&r.prediction, m.confidence));
                    row.push(inputs_cell(&r.inputs));
                    row
                })
        })
        .collect();
    if rows.is_empty() {
        return note(
            sheet,
            f,
            "No model in this job asks for a forecast ([model.forecast] in the job file).",
        );
    }
    write_table(sheet, f, "Forecast_table", 0, &headers, &rows)?;
    print_table(sheet, printed, rows.len(), headers.len())
}

/// The scenarios of every model: name, period, estimate and intervals.
pub(super) fn scenarios_sheet(
    sheet: &mut Worksheet,
    f: &Formats,
    results: &Results,
) -> Result<(), XlsxError> {
    let headers = [
        "Model",
        "Scenario",
        "Period",
        "Estimate",
        "Mean lower",
        "Mean upper",
        "Prediction lower",
        "Prediction upper",
        "Smeared mean",
        "Confidence",
        "Inputs",
    ];
    let rows: Vec<Vec<Cell>> = results
        .models
        .iter()
        .flat_map(|m| {
            m.scenarios.iter().map(move |r| {
                let mut row = vec![
                    text(m.name.as_str()),
                    text(r.name.as_str()),
                    r.period.as_deref().map_or(Cell::Empty, text),
                ];
                row.extend(prediction_cells(&r.prediction, m.confidence));
                row.push(inputs_cell(&r.inputs));
                row
            })
        })
        .collect();
    write_table(sheet, f, "Scenarios_table", 0, &headers, &rows)
}

/// The data behind the forecast charts: per forecasting model, its history
/// (per-period means) then its forecast rows, with the prediction interval
/// as a lower limit and a band height.
pub(super) fn chart_data(
    sheet: &mut Worksheet,
    f: &Formats,
    results: &Results,
) -> Result<Vec<ChartBlock>, XlsxError> {
    let mut rows = Vec::new();
    let mut blocks = Vec::new();
    for (k, m) in charted(results).enumerate() {
        if m.forecast.is_empty() || m.history.is_empty() {
            continue;
        }
        let first = 1 + rows.len() as u32;
        if !m.series_history.is_empty() {
            // A line per series: each series' history, then its forecast.
            let mut series = Vec::new();
            for sh in &m.series_history {
                let from = 1 + rows.len() as u32;
                for h in &sh.points {
                    rows.push(vec![
                        text(m.name.as_str()),
                        text(h.period.as_str()),
                        date(&h.date),
                        num(h.actual, Style::Value),
                        num(h.fitted, Style::Value),
                        Cell::Empty,
                        Cell::Empty,
                        Cell::Empty,
                        text(sh.series.as_str()),
                    ]);
                }
                for r in m
                    .forecast
                    .iter()
                    .filter(|r| r.series.as_deref() == Some(sh.series.as_str()))
                {
                    rows.push(forecast_chart_row(m, r, text(sh.series.as_str())));
                }
                series.push((sh.series.clone(), from, rows.len() as u32));
            }
            blocks.push(ChartBlock {
                model: k,
                first,
                last: rows.len() as u32,
                series,
            });
            continue;
        }
        let last_history = m.history.len() - 1;
        // Panel data named by series is drawn as its total over the series
        // (the sum of each period's rows), so the forecast does not zig-zag
        // from series to series.
        let total = !m.forecast_totals.is_empty();
        let scale =
            |h: &crate::results::model::HistoryPoint| if total { h.rows as f64 } else { 1.0 };
        for (i, h) in m.history.iter().enumerate() {
            // The last period of the history starts the forecast line and a
            // band of no width at its fitted mean, so both grow out of the
            // fitted line rather than up from the axis.
            let start = |value: f64| {
                if i == last_history {
                    num(value, Style::Value)
                } else {
                    Cell::Empty
                }
            };
            let k = scale(h);
            let mut row = vec![
                text(m.name.as_str()),
                text(h.period.as_str()),
                date(&h.date),
                num(k * h.actual, Style::Value),
                num(k * h.fitted, Style::Value),
                start(k * h.fitted),
                start(k * h.fitted),
                start(0.0),
                Cell::Empty,
            ];
            // The AR(1) forecast carries on from the last actual value.
            if m.ar1_errors
                .as_ref()
                .is_some_and(|a| !a.forecast.is_empty())
            {
                row.extend([start(h.actual), start(h.actual), start(h.actual)]);
            }
            rows.push(row);
        }
        for r in &m.forecast_totals {
            rows.push(vec![
                text(m.name.as_str()),
                text(r.period.as_str()),
                date(&r.date),
                Cell::Empty,
                Cell::Empty,
                num(r.estimate, Style::Value),
                num(r.pred_lower, Style::Value),
                num(r.pred_upper - r.pred_lower, Style::Value),
                text(format!("total of {} series", r.series)),
            ]);
        }
        let ar1_forecast = m.ar1_errors.as_ref().map(|a| a.forecast.as_slice());
        for r in m.forecast.iter().filter(|_| !total) {
            let mut row = forecast_chart_row(m, r, Cell::Empty);
            if let Some(a) = ar1_forecast
                .into_iter()
                .flatten()
                .find(|a| a.period == r.period)
            {
                row.extend([
                    num(a.prediction.estimate, Style::Value),
                    num(a.prediction.pred_lower, Style::Value),
                    num(a.prediction.pred_upper, Style::Value),
                ]);
            }
            rows.push(row);
        }
        blocks.push(ChartBlock {
            model: k,
            first,
            last: rows.len() as u32,
            series: Vec::new(),
        });
    }
    if rows.is_empty() {
        note(sheet, f, "No forecast charts in this report.")?;
        return Ok(blocks);
    }
    for row in &mut rows {
        row.resize_with(AR1_UPPER_COL as usize + 1, || Cell::Empty);
    }
    let headers = [
        "Model",
        "Period",
        "Period start",
        "Actual (period mean, or total over series)",
        "Fitted (period mean, or total over series)",
        "Forecast",
        "Prediction lower",
        "Prediction band (upper − lower)",
        "Series",
        "Forecast with AR(1) errors",
        "AR(1) prediction lower",
        "AR(1) prediction upper",
    ];
    write_table(sheet, f, "Chart_data_table", 0, &headers, &rows)?;
    Ok(blocks)
}

/// A forecast row of the chart data: the period, the forecast, its lower
/// limit and the band's height, and `series` in the last column.
fn forecast_chart_row<'a>(
    m: &'a ModelResults,
    r: &'a crate::forecast::ForecastRow,
    series: Cell<'a>,
) -> Vec<Cell<'a>> {
    let p = &r.prediction;
    vec![
        text(m.name.as_str()),
        r.period.as_deref().map_or(Cell::Empty, text),
        r.date.as_deref().map_or(Cell::Empty, date),
        Cell::Empty,
        Cell::Empty,
        num(p.estimate, Style::Value),
        num(p.pred_lower, Style::Value),
        num(p.pred_upper - p.pred_lower, Style::Value),
        series,
    ]
}

/// Line colours of the series, at most [`SERIES_LINES_UP_TO`].
const SERIES_COLORS: [&str; SERIES_LINES_UP_TO] = [
    "#1F4E79", "#C55A11", "#548235", "#7030A0", "#BF9000", "#2E75B6", "#A50021", "#404040",
];

/// The forecast chart of panel data of a few series: a line per series,
/// its actual values solid and its forecast dashed, on a date axis.
fn series_chart(m: &ModelResults, block: &ChartBlock) -> Chart {
    let mut chart = Chart::new(ChartType::Line);
    for ((label, first, last), color) in block.series.iter().zip(SERIES_COLORS) {
        let range = |col: u16| (CHART_DATA, *first, col, *last, col);
        for (name, col, dash) in [
            (label.clone(), ACTUAL_COL, false),
            (format!("{label} forecast"), FORECAST_COL, true),
        ] {
            let mut line = rust_xlsxwriter::ChartLine::new();
            line.set_color(color).set_width(1.5);
            if dash {
                line.set_dash_type(rust_xlsxwriter::ChartLineDashType::Dash);
            }
            chart
                .add_series()
                .set_categories(range(DATE_COL))
                .set_values(range(col))
                .set_name(name.as_str())
                .set_format(ChartFormat::new().set_line(&line));
        }
    }
    chart.title().set_name(
        format!(
            "{}: {} history and forecast, one line per series",
            m.name, m.response
        )
        .as_str(),
    );
    chart
        .x_axis()
        .set_name("Period")
        .set_date_axis(true)
        .set_num_format("mmm yyyy");
    let shown = m
        .series_history
        .iter()
        .flat_map(|s| s.points.iter().map(|h| h.actual))
        .chain(m.forecast.iter().map(|r| r.prediction.estimate));
    let (low, high) = axis_range(shown);
    chart
        .y_axis()
        .set_name(m.response.as_str())
        .set_min(low)
        .set_max(high);
    chart
}

/// Columns of the chart-data table.
const DATE_COL: u16 = 2;
const ACTUAL_COL: u16 = 3;
const FITTED_COL: u16 = 4;
const FORECAST_COL: u16 = 5;
const LOWER_COL: u16 = 6;
const BAND_COL: u16 = 7;
const AR1_COL: u16 = 9;
const AR1_LOWER_COL: u16 = 10;
const AR1_UPPER_COL: u16 = 11;

/// The forecast chart of one model: the prediction interval as a light
/// stacked-area band, with the actual, fitted and forecast lines over it,
/// on a date axis.
pub(super) fn forecast_chart(m: &ModelResults, block: &ChartBlock) -> Chart {
    if !block.series.is_empty() {
        return series_chart(m, block);
    }
    let data = CHART_DATA;
    let range = |col: u16| (data, block.first, col, block.last, col);
    let mut band = Chart::new(ChartType::AreaStacked);
    band.add_series()
        .set_categories(range(DATE_COL))
        .set_values(range(LOWER_COL))
        .set_name("Prediction lower")
        .set_format(ChartFormat::new().set_no_fill().set_no_border());
    band.add_series()
        .set_categories(range(DATE_COL))
        .set_values(range(BAND_COL))
        .set_name(format!("{:.0}% prediction interval", m.confidence * 100.0).as_str())
        .set_format(
            ChartFormat::new()
                .set_solid_fill(
                    ChartSolidFill::new()
                        .set_color("#9DC3E6")
                        .set_transparency(40),
                )
                .set_no_border(),
        );
    let mut lines = Chart::new(ChartType::Line);
    for (name, col, color) in [
        ("Actual", ACTUAL_COL, "#404040"),
        ("Fitted", FITTED_COL, "#ED7D31"),
        ("Forecast", FORECAST_COL, "#1F4E79"),
    ] {
        lines
            .add_series()
            .set_categories(range(DATE_COL))
            .set_values(range(col))
            .set_name(name)
            .set_format(
                ChartFormat::new().set_line(
                    rust_xlsxwriter::ChartLine::new()
                        .set_color(color)
                        .set_width(1.75),
                ),
            );
    }
    if m.ar1_errors
        .as_ref()
        .is_some_and(|a| !a.forecast.is_empty())
    {
        for (name, col, dash) in [
            ("Forecast with AR(1) errors", AR1_COL, false),
            ("AR(1) prediction limits", AR1_LOWER_COL, true),
            ("AR(1) upper limit", AR1_UPPER_COL, true),
        ] {
            let mut line = rust_xlsxwriter::ChartLine::new();
            line.set_color("#548235").set_width(1.75);
            if dash {
                line.set_dash_type(rust_xlsxwriter::ChartLineDashType::Dash);
            }
            lines
                .add_series()
                .set_categories(range(DATE_COL))
                .set_values(range(col))
                .set_name(name)
                .set_format(ChartFormat::new().set_line(&line));
        }
    }
    band.combine(&lines);
    let panel = m.history.iter().any(|h| h.rows > 1);
    let total = !m.forecast_totals.is_empty();
    band.title().set_name(
        format!(
            "{}: {} history{} and forecast",
            m.name,
            m.response,
            if total {
                " (total over the series)"
            } else if panel {
                " (mean per period)"
            } else {
                ""
            }
        )
        .as_str(),
    );
    band.x_axis()
        .set_name("Period")
        .set_date_axis(true)
        .set_num_format("mmm yyyy");
    let k = |h: &crate::results::model::HistoryPoint| if total { h.rows as f64 } else { 1.0 };
    let shown = m
        .history
        .iter()
        .flat_map(|h| [k(h) * h.actual, k(h) * h.fitted])
        .chain(
            m.forecast
                .iter()
                .filter(|_| !total)
                .flat_map(|r| [r.prediction.pred_lower, r.prediction.pred_upper]),
        )
        .chain(
            m.forecast_totals
                .iter()
                .flat_map(|r| [r.pred_lower, r.pred_upper]),
        )
        .chain(m.ar1_errors.iter().flat_map(|a| {
            a.forecast
                .iter()
                .flat_map(|r| [r.prediction.pred_lower, r.prediction.pred_upper])
        }));
    let (low, high) = axis_range(shown);
    band.y_axis()
        .set_name(m.response.as_str())
        .set_min(low)
        .set_max(high);
    // The band's lower edge and the AR(1) upper limit share an entry with
    // their partners.
    let mut hidden = vec![0];
    if m.ar1_errors
        .as_ref()
        .is_some_and(|a| !a.forecast.is_empty())
    {
        hidden.push(7);
    }
    band.legend().delete_entries(&hidden);
    band.set_width(760).set_height(400);
    band
}
