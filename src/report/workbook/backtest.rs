//! The Back-test and Back-test rows sheets: each model's back-test, and its
//! AR(1)-error version's on the same held-out periods.

use super::ar1::ar1_name;
use super::forecast::note;
use super::*;

/// The back-test tables: a summary row per model, version and method,
/// and the held-out rows.
type BacktestTables<'a> = (Vec<Vec<Cell<'a>>>, Vec<Vec<Cell<'a>>>);

fn backtest_tables(results: &Results) -> BacktestTables<'_> {
    let mut summary = Vec::new();
    let mut points = Vec::new();
    // Each model's back-test, then its AR(1)-error version's on the same
    // held-out periods.
    let tested = results.models.iter().flat_map(|m| {
        let ar1 = m
            .ar1_errors
            .as_ref()
            .and_then(|a| a.backtest.as_ref())
            .map(|b| (ar1_name(&m.name), b));
        m.backtest
            .as_ref()
            .map(|b| (m.name.clone(), b))
            .into_iter()
            .chain(ar1)
            .map(move |(name, b)| (m, name, b))
    });
    for (m, name, b) in tested {
        let methods = std::iter::once((
            format!("last {} periods held out, one refit", b.holdout),
            &b.accuracy,
        ))
        .chain(b.rolling.as_ref().map(|r| {
            (
                "rolling origin: refit before each held-out period".to_string(),
                r,
            )
        }));
        for (method, a) in methods {
            summary.push(vec![
                text(name.clone()),
                text(method.clone()),
                num(a.points.len() as f64, Style::Count),
                num(a.skipped as f64, Style::Count),
                num(a.mae, Style::Value),
                num(a.rmse, Style::Value),
                opt(a.mape, Style::Value),
                num(a.coverage, Style::Share),
                num(m.confidence, Style::Share),
            ]);
            for p in &a.points {
                points.push(vec![
                    text(name.clone()),
                    text(method.clone()),
                    text(p.period.as_str()),
                    num(f64::from(p.row), Style::Count),
                    num(p.actual, Style::Value),
                    num(p.estimate, Style::Value),
                    num(p.pred_lower, Style::Value),
                    num(p.pred_upper, Style::Value),
                    text(if p.inside { "yes" } else { "no" }),
                ]);
            }
        }
    }
    (summary, points)
}

/// The back-test summary: one row per model, version and method.
pub(super) fn backtest_sheet(
    sheet: &mut Worksheet,
    f: &Formats,
    results: &Results,
) -> Result<(), XlsxError> {
    let (summary, _) = backtest_tables(results);
    if summary.is_empty() {
        note(
            sheet,
            f,
            "No model in this job asks for a back-test (backtest = K in a model).",
        )
    } else {
        let headers = [
            "Model",
            "Method",
            "Rows forecast",
            "Rows skipped",
            "MAE",
            "RMSE",
            "MAPE (%)",
            "Share inside prediction interval",
            "Interval level",
        ];
        write_table(sheet, f, "Backtest_table", 0, &headers, &summary)
    }
}

/// The held-out rows of every back-test.
pub(super) fn backtest_rows_sheet(
    sheet: &mut Worksheet,
    f: &Formats,
    results: &Results,
) -> Result<(), XlsxError> {
    let (_, points) = backtest_tables(results);
    if points.is_empty() {
        return note(sheet, f, "No back-test rows.");
    }
    let headers = [
        "Model",
        "Method",
        "Period",
        "Sheet row",
        "Actual",
        "Estimate",
        "Prediction lower",
        "Prediction upper",
        "Inside interval",
    ];
    write_table(sheet, f, "Backtest_row_table", 0, &headers, &points)
}
