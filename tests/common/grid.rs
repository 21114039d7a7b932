//! A report sheet as some reader saw it (calamine, or a spreadsheet
//! program's CSV export), and the checks that its numbers are the numbers
//! of the results JSON. The same checks run on every reader, each with the
//! tolerance its digits allow.

use std::path::Path;

use calamine::{Data, Range};
use serde_json::Value;

/// One cell as read back.
#[derive(Debug, Clone, PartialEq)]
pub enum Seen {
    /// Nothing in the cell.
    Empty,
    /// A number, and half the step of the last digit its text showed (0
    /// when the reader gave the stored value).
    Number(f64, f64),
    /// Anything else, as text.
    Text(String),
}

/// A sheet's cells from its top-left cell A1, row by row.
#[derive(Debug, Clone)]
pub struct Grid {
    /// Where the sheet came from, for messages.
    pub source: String,
    rows: Vec<Vec<Seen>>,
}

impl Grid {
    /// A sheet read by calamine.
    pub fn of_range(source: &str, range: &Range<Data>) -> Grid {
        let (top, left) = range.start().unwrap_or((0, 0));
        let mut rows = vec![Vec::new(); top as usize];
        for row in range.rows() {
            let mut cells = vec![Seen::Empty; left as usize];
            cells.extend(row.iter().map(|cell| match cell {
                Data::Empty => Seen::Empty,
                Data::Float(x) => Seen::Number(*x, 0.0),
                Data::Int(i) => Seen::Number(*i as f64, 0.0),
                other => Seen::Text(other.to_string()),
            }));
            rows.push(cells);
        }
        Grid {
            source: source.to_string(),
            rows,
        }
    }

    /// A sheet exported as CSV, its stored values or its cells as shown: a
    /// field that reads as a number is one, known to half a unit of its last
    /// digit ("1,234.5678" to 0.00005, "3.78E-28" to 0.005E-28).
    pub fn of_csv(path: &Path) -> Grid {
        let mut reader = csv::ReaderBuilder::new()
            .has_headers(false)
            .flexible(true)
            .from_path(path)
            .unwrap_or_else(|e| panic!("read {}: {e}", path.display()));
        let rows = reader
            .records()
            .map(|record| {
                record
                    .unwrap_or_else(|e| panic!("read {}: {e}", path.display()))
                    .iter()
                    .map(|field| match shown_number(field) {
                        _ if field.is_empty() => Seen::Empty,
                        Some((x, half_step)) => Seen::Number(x, half_step),
                        None => Seen::Text(field.to_string()),
                    })
                    .collect()
            })
            .collect();
        Grid {
            source: path.display().to_string(),
            rows,
        }
    }

    /// Rows down to the last one with a cell in it.
    pub fn height(&self) -> usize {
        self.rows
            .iter()
            .rposition(|r| r.iter().any(|c| *c != Seen::Empty))
            .map_or(0, |last| last + 1)
    }

    /// The cell at zero-based (row, col).
    pub fn at(&self, row: usize, col: usize) -> &Seen {
        self.rows
            .get(row)
            .and_then(|r| r.get(col))
            .unwrap_or(&Seen::Empty)
    }

    /// The text at (row, col); a number there fails the test.
    pub fn text(&self, row: usize, col: usize) -> String {
        match self.at(row, col) {
            Seen::Text(s) => s.clone(),
            Seen::Empty => String::new(),
            Seen::Number(x, _) => panic!(
                "{}: cell ({row}, {col}) should be text, found the number {x}",
                self.source
            ),
        }
    }

    /// The header row.
    pub fn header(&self) -> Vec<String> {
        let width = self.rows.first().map_or(0, Vec::len);
        (0..width).map(|c| self.text(0, c)).collect()
    }

    /// Asserts that (row, col) holds `expected` (a JSON number) to `tol`
    /// relative or to the precision its text showed, or is empty where the
    /// JSON has null.
    pub fn assert_number(&self, row: usize, col: usize, expected: &Value, tol: f64, what: &str) {
        let found = self.at(row, col);
        match expected.as_f64() {
            None => {
                assert!(
                    expected.is_null(),
                    "{what}: JSON value {expected} is not a number"
                );
                assert_eq!(
                    found,
                    &Seen::Empty,
                    "{}: {what}: JSON null should be an empty cell",
                    self.source
                );
            }
            Some(want) => match found {
                Seen::Number(got, half_step) => {
                    let err = (got - want).abs() / want.abs().max(f64::MIN_POSITIVE);
                    // A value on a rounding boundary (9076.30215 shown as
                    // 9,076.3022) is half a step off, give or take the
                    // rounding of the subtraction.
                    let shown = (got - want).abs() <= half_step + 1e-12 * want.abs();
                    assert!(
                        err <= tol || *got == want || shown,
                        "{}: {what}: cell ({row}, {col}) holds {got}, JSON has {want}",
                        self.source
                    );
                }
                other => panic!(
                    "{}: {what}: cell ({row}, {col}) should be a number, found {other:?}",
                    self.source
                ),
            },
        }
    }
}

/// A number as a cell shows it, with half the step of its last digit:
/// thousands separators dropped, a mantissa's decimals, an exponent and a
/// percent sign read. `None` for text that is not a number.
fn shown_number(field: &str) -> Option<(f64, f64)> {
    if let Some(percent) = field.strip_suffix('%') {
        let (value, half_step) = shown_number(percent)?;
        return Some((value / 100.0, half_step / 100.0));
    }
    let plain = field.replace(',', "");
    let value: f64 = plain.parse().ok()?;
    let (mantissa, exponent) = match plain.split_once(['E', 'e']) {
        Some((m, e)) => (m, e.parse::<i32>().ok()?),
        None => (plain.as_str(), 0),
    };
    let decimals = mantissa.split_once('.').map_or(0, |(_, d)| d.len()) as i32;
    // Parsed rather than computed, so that steps below the normal range
    // (p-values near 1e-308) stay exact.
    let half_step = format!("5e{}", exponent - decimals - 1).parse().ok()?;
    Some((value, half_step))
}

/// The models of a results JSON.
fn models(json: &Value) -> &[Value] {
    json["models"].as_array().expect("models array")
}

/// The models in the order the Coefficients, ANOVA, Checks and Forecast
/// sheets list them: those not fitted by level, then those fitted by level.
fn table_models(json: &Value) -> Vec<&Value> {
    let (own, by_level): (Vec<&Value>, Vec<&Value>) =
        models(json).iter().partition(|m| m["by"].is_null());
    own.into_iter().chain(by_level).collect()
}

/// Checks one row of `grid` per item of each model's `list`: the model's
/// name in the first column, `texts` (column, key) as text and `numbers`
/// (column, key) to `tol`; nothing below the last row. Returns the rows
/// checked.
fn assert_rows(
    grid: &Grid,
    models: &[&Value],
    list: &str,
    texts: &[(usize, &str)],
    numbers: &[(usize, &str)],
    tol: f64,
) -> usize {
    let blocks: Vec<(String, &Value)> = models
        .iter()
        .map(|m| {
            (
                m["name"].as_str().expect("model name").to_string(),
                &m[list],
            )
        })
        .collect();
    assert_blocks(grid, &blocks, list, texts, numbers, tol)
}

/// [`assert_rows`] over `blocks`: each a name for the first column and the
/// list of its rows, in sheet order.
fn assert_blocks(
    grid: &Grid,
    blocks: &[(String, &Value)],
    list: &str,
    texts: &[(usize, &str)],
    numbers: &[(usize, &str)],
    tol: f64,
) -> usize {
    let mut row = 1;
    for (name, items) in blocks {
        for item in items.as_array().into_iter().flatten() {
            assert_eq!(grid.text(row, 0), *name, "{}: row {row}", grid.source);
            for &(col, key) in texts {
                assert_eq!(
                    grid.text(row, col),
                    item[key].as_str().unwrap_or_default(),
                    "{}: {name} {list} {key}",
                    grid.source
                );
            }
            for &(col, key) in numbers {
                let what = format!("{name} {list} row {row} {key}");
                grid.assert_number(row, col, &item[key], tol, &what);
            }
            row += 1;
        }
    }
    assert_eq!(
        grid.height(),
        row,
        "{}: rows beyond the {list}",
        grid.source
    );
    row - 1
}

/// The Coefficients sheet against every model's coefficients, each model's
/// aliased terms after its estimated ones, with empty numbers and a note.
pub fn assert_coefficients(grid: &Grid, json: &Value, tol: f64) -> usize {
    assert_eq!(
        grid.header(),
        [
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
            "Note"
        ],
        "{}",
        grid.source
    );
    let mut row = 1;
    for model in table_models(json) {
        let name = model["name"].as_str().expect("model name");
        for c in model["coefficients"].as_array().into_iter().flatten() {
            assert_eq!(grid.text(row, 0), name, "{}: row {row}", grid.source);
            assert_eq!(grid.text(row, 1), c["term"].as_str().unwrap_or_default());
            for (col, key) in [
                (2, "estimate"),
                (3, "std_error"),
                (4, "t_stat"),
                (5, "p_value"),
                (6, "ci_lower"),
                (7, "ci_upper"),
            ] {
                grid.assert_number(row, col, &c[key], tol, &format!("{name} row {row} {key}"));
            }
            grid.assert_number(row, 8, &model["confidence"], tol, "confidence");
            row += 1;
        }
        for term in model["aliased"].as_array().into_iter().flatten() {
            assert_eq!(grid.text(row, 0), name, "{}: row {row}", grid.source);
            assert_eq!(grid.text(row, 1), term.as_str().unwrap_or_default());
            assert_eq!(
                grid.at(row, 2),
                &Seen::Empty,
                "{}: aliased estimate",
                grid.source
            );
            assert!(
                grid.text(row, 10).starts_with("aliased"),
                "{}: row {row}",
                grid.source
            );
            row += 1;
        }
    }
    assert_eq!(
        grid.height(),
        row,
        "{}: rows beyond the coefficients",
        grid.source
    );
    row - 1
}

/// The columns a residual row and a chart point share: their headers, and
/// the JSON keys of the numbers under them.
const ROW_HEADERS: [&str; 5] = ["Model", "Sheet row", "Actual", "Fitted", "Residual"];
const ROW_NUMBERS: [(usize, &str); 4] = [(1, "row"), (2, "actual"), (3, "fitted"), (4, "residual")];

/// The Residuals sheet against every model's residual rows (all of them
/// fit on the one sheet in the reports the tests write).
pub fn assert_residuals(grid: &Grid, json: &Value, tol: f64) -> usize {
    let header = grid.header();
    assert_eq!(header[..5], ROW_HEADERS, "{}", grid.source);
    assert_eq!(
        header[5..],
        [
            "Standardized residual",
            "Leverage",
            "Cook's distance",
            "Studentized residual",
            "DFFITS",
            "Flags",
            "Period"
        ],
        "{}",
        grid.source
    );
    let numbers: Vec<(usize, &str)> = ROW_NUMBERS
        .into_iter()
        .chain([
            (5, "standardized_residual"),
            (6, "leverage"),
            (7, "cooks_distance"),
            (8, "studentized_residual"),
            (9, "dffits"),
        ])
        .collect();
    let in_order: Vec<&Value> = models(json).iter().collect();
    assert_rows(grid, &in_order, "residuals", &[], &numbers, tol)
}

/// The Chart points sheet of reports small enough to plot every row; the
/// models fitted by level are not charted.
pub fn assert_chart_points(grid: &Grid, json: &Value, tol: f64) -> usize {
    assert_eq!(grid.header(), ROW_HEADERS, "{}", grid.source);
    let blocks: Vec<(String, &Value)> = models(json)
        .iter()
        .filter(|m| m["by"].is_null())
        .map(|m| {
            (
                m["name"].as_str().expect("model name").to_string(),
                &m["residuals"],
            )
        })
        .collect();
    assert_blocks(grid, &blocks, "residuals", &[], &ROW_NUMBERS, tol)
}

/// The Checks sheet against every model's checks.
pub fn assert_checks(grid: &Grid, json: &Value, tol: f64) -> usize {
    assert_eq!(
        grid.header()[..4],
        ["Model", "Check", "Statistic", "p-value"],
        "{}",
        grid.source
    );
    assert_rows(
        grid,
        &table_models(json),
        "checks",
        &[(1, "name")],
        &[(2, "statistic"), (3, "p_value")],
        tol,
    )
}

/// The Forecast sheet against every model's forecast rows, each followed
/// by its AR(1)-error version's; with none, the sheet holds a note.
pub fn assert_forecast(grid: &Grid, json: &Value, tol: f64) -> usize {
    let rows: usize = models(json)
        .iter()
        .map(|m| m["forecast"].as_array().map_or(0, Vec::len))
        .sum();
    if rows == 0 {
        assert_eq!(grid.height(), 1, "{}: a note only", grid.source);
        assert!(!grid.text(0, 0).is_empty(), "{}: the note", grid.source);
        return 0;
    }
    assert_eq!(
        grid.header()[..9],
        [
            "Model",
            "Period",
            "Period start",
            "Trend index",
            "Estimate",
            "Mean lower",
            "Mean upper",
            "Prediction lower",
            "Prediction upper"
        ],
        "{}",
        grid.source
    );
    let blocks: Vec<(String, &Value)> = table_models(json)
        .into_iter()
        .flat_map(|m| {
            let name = m["name"].as_str().expect("model name");
            [
                (name.to_string(), &m["forecast"]),
                (
                    format!("{name} (AR(1) errors)"),
                    &m["ar1_errors"]["forecast"],
                ),
            ]
        })
        .collect();
    assert_blocks(
        grid,
        &blocks,
        "forecast",
        &[],
        &[
            (4, "estimate"),
            (5, "mean_lower"),
            (6, "mean_upper"),
            (7, "pred_lower"),
            (8, "pred_upper"),
        ],
        tol,
    )
}

/// The Fit quality sheet: one row per model.
pub fn assert_fit_quality(grid: &Grid, json: &Value, tol: f64) {
    assert_eq!(
        grid.header()[..4],
        ["Model", "n", "Model df", "Residual df"],
        "{}",
        grid.source
    );
    for (i, model) in models(json).iter().enumerate() {
        let row = 1 + i;
        let q = &model["fit"];
        assert_eq!(
            grid.text(row, 0),
            model["name"].as_str().unwrap_or_default()
        );
        for (col, value, key) in [
            (1, &model["n"], "n"),
            (2, &model["df_model"], "df_model"),
            (3, &model["df_resid"], "df_resid"),
        ] {
            grid.assert_number(row, col, value, tol, key);
        }
        for (col, key) in [
            (4, "r_squared"),
            (5, "adj_r_squared"),
            (6, "sigma"),
            (7, "f_stat"),
            (8, "f_p_value"),
            (9, "log_likelihood"),
            (10, "aic"),
            (11, "bic"),
            (12, "sse"),
            (13, "ssr"),
            (14, "sst"),
        ] {
            grid.assert_number(row, col, &q[key], tol, key);
        }
    }
    assert_eq!(grid.height(), 1 + models(json).len(), "{}", grid.source);
}

/// The ANOVA sheet: each model's sequential table, then its each-term-last
/// tests.
pub fn assert_anova(grid: &Grid, json: &Value, tol: f64) -> usize {
    assert_eq!(
        grid.header()[..3],
        ["Model", "Test", "Term"],
        "{}",
        grid.source
    );
    let mut row = 1;
    for model in table_models(json) {
        for key in ["anova", "term_tests"] {
            for a in model[key].as_array().into_iter().flatten() {
                assert_eq!(
                    grid.text(row, 0),
                    model["name"].as_str().unwrap_or_default()
                );
                assert_eq!(grid.text(row, 2), a["term"].as_str().unwrap_or_default());
                for (col, field) in [(3, "df"), (4, "sum_sq"), (7, "p_value")] {
                    grid.assert_number(row, col, &a[field], tol, field);
                }
                row += 1;
            }
        }
    }
    assert_eq!(grid.height(), row, "{}: rows beyond the ANOVA", grid.source);
    row - 1
}
