//! The chart sheets: the rows the scatter charts show, the normal plot's
//! points, and every model's charts.

use super::*;

/// Points a scatter chart shows at most; the statistics use every row.
pub(super) const SCATTER_POINTS: usize = 2_000;

/// Of those, the rows with the largest absolute residuals, always shown.
pub(super) const SCATTER_EXTREMES: usize = 100;

/// The rows (indices, ascending) of a model's `residuals` its scatter
/// charts show: all of them up to [`SCATTER_POINTS`]; past that, rows
/// evenly spaced in sheet order and the [`SCATTER_EXTREMES`] largest
/// absolute residuals.
pub(super) fn scatter_rows(residuals: &[f64]) -> Vec<usize> {
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
pub(super) const FITTED_COL: u16 = 3;
pub(super) const ACTUAL_COL: u16 = 2;
pub(super) const RESIDUAL_COL: u16 = 4;

/// The points of the scatter charts: each model's [`scatter_rows`] with
/// their fitted, actual and residual values; returns each model's rows and
/// how many of its rows they show.
pub(super) fn chart_points(
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
pub(super) fn normal_plot_data(
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
pub(super) fn normal_chart(m: &ModelResults, span: Span) -> Chart {
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

pub(super) fn charts(
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
pub(super) const CHART_ROW_HEIGHT: u32 = 22;

/// Models whose charts share a printed page.
pub(super) const CHART_ROWS_A_PAGE: usize = 3;

/// An axis range that holds every finite value of `values`, widened by a
/// twentieth of their spread on each side and rounded out to a step of 1,
/// 2 or 5 times a power of ten (a tenth of the spread or less): a chart of
/// values from 103 to 128 runs from 100 to 130, not from 0.
pub(super) fn axis_range(values: impl Iterator<Item = f64>) -> (f64, f64) {
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
