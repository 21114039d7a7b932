//! The What-if sheet: per model of the job, input cells for its predictors
//! (and period), and live formulas that compute the estimate, the interval
//! of the mean and the prediction interval inside the workbook from the
//! coefficients and their covariance written beside them. Each input and
//! output cell has a defined name, `WhatIf_<k>_<column>`, `WhatIf_<k>_period`
//! and `WhatIf_<k>_estimate`, `_mean_lower`, `_mean_upper`, `_pred_lower`,
//! `_pred_upper`; every formula carries the tool's own value as its cached
//! result, so the sheet is right before any recalculation.

use chrono::Datelike;
use rust_xlsxwriter::{DataValidation, ExcelDateTime, Formula, Workbook};

use super::*;
use crate::period::{Frequency, SeasonBy};
use crate::results::whatif::{InputKind, Part, WhatIf};

/// The sheet's name, as formulas quote it.
const QUOTED: &str = "'What-if'";

/// First column of a block's design table (term, x, coefficient).
const TERM_COL: u16 = 3;
/// First column of a block's covariance matrix.
const COV_COL: u16 = 7;

/// `WhatIf_<k>_<column>` with characters other than letters, digits and `_`
/// as `_`.
pub fn defined_name(k: usize, column: &str) -> String {
    let clean: String = column
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || c == '_' {
                c
            } else {
                '_'
            }
        })
        .collect();
    format!("WhatIf_{k}_{clean}")
}

/// A1 reference, absolute: `$B$5`.
fn cell(row: u32, col: u16) -> String {
    format!(
        "${}${}",
        crate::source::column_letters(u32::from(col)),
        row + 1
    )
}

pub(super) fn whatif_sheet(
    workbook: &mut Workbook,
    f: &Formats,
    results: &Results,
) -> Result<(), XlsxError> {
    let mut names: Vec<(String, String)> = Vec::new();
    let sheet = workbook.add_worksheet().set_name(WHAT_IF)?;
    sheet.set_column_width(0, 34)?;
    sheet.set_column_width(1, 20)?;
    sheet.set_column_width(TERM_COL, 26)?;
    sheet.write_string_with_format(
        0,
        0,
        "What if: change the inputs, read the estimate",
        &f.title,
    )?;
    sheet.write_string(
        1,
        0,
        "Inputs are the cells beside each predictor; the estimate and intervals recalculate from the coefficients and their covariance written to the right. Values far outside the data's range are extrapolation.",
    )?;
    let mut r = 3;
    for (i, name) in results.job_models.iter().enumerate() {
        let k = i + 1;
        let model = results
            .models
            .iter()
            .find(|m| &m.name == name && m.suggested_from.is_none());
        let Some(m) = model else {
            sheet.write_string_with_format(r, 0, format!("{k}. {name}"), &f.heading)?;
            sheet.write_string(r + 1, 0, "fitted one model per level: use the By series sheet and [model.scenarios] for predictions")?;
            r += 3;
            continue;
        };
        sheet.write_string_with_format(r, 0, format!("{k}. {name}: {}", m.response), &f.heading)?;
        match &m.what_if {
            Ok(w) => {
                r = block(sheet, f, &mut names, k, m, w, r + 1)?;
            }
            Err(why) => {
                sheet.write_string(
                    r + 1,
                    0,
                    format!("no what-if for this model: {why}; use [model.scenarios] in the job for its predictions"),
                )?;
                r += 2;
            }
        }
        r += 2;
    }
    for (name, target) in names {
        workbook.define_name(name, &target)?;
    }
    Ok(())
}

/// One model's block from row `top`; returns the row after it.
fn block(
    sheet: &mut Worksheet,
    f: &Formats,
    names: &mut Vec<(String, String)>,
    k: usize,
    m: &ModelResults,
    w: &WhatIf,
    top: u32,
) -> Result<u32, XlsxError> {
    let mut r = top;
    sheet.write_string_with_format(r, 0, "Input", &f.header)?;
    sheet.write_string_with_format(r, 1, "Value", &f.header)?;
    let mut input_cells = Vec::with_capacity(w.inputs.len());
    for input in &w.inputs {
        r += 1;
        let label = match &input.kind {
            InputKind::Period { .. } => "period (its first day)".to_string(),
            _ => input.column.clone(),
        };
        sheet.write_string(r, 0, label)?;
        match &input.kind {
            InputKind::Number => {
                let v: f64 = input.value.trim().parse().unwrap_or(0.0);
                sheet.write_number_with_format(r, 1, v, &f.input)?;
            }
            InputKind::Level { levels } => {
                sheet.write_string_with_format(r, 1, &input.value, &f.input)?;
                // The levels as a list beside the covariance, for the
                // drop-down (a written-out list is limited to 255 characters).
                let col = COV_COL + w.columns.len() as u16 + 1 + input_cells.len() as u16;
                sheet.write_string_with_format(
                    top,
                    col,
                    format!("{} levels", input.column),
                    &f.header,
                )?;
                for (j, level) in levels.iter().enumerate() {
                    sheet.write_string(top + 1 + j as u32, col, level)?;
                }
                let range = format!(
                    "={}:{}",
                    cell(top + 1, col),
                    cell(top + levels.len() as u32, col)
                );
                let dv = DataValidation::new().allow_list_formula(Formula::new(range));
                sheet.add_data_validation(r, 1, r, 1, &dv)?;
            }
            InputKind::Period { .. } => {
                let date = ExcelDateTime::parse_from_str(&input.value)?;
                sheet.write_datetime_with_format(r, 1, &date, &f.input_date)?;
            }
        }
        names.push((
            defined_name(k, &input.column),
            format!("={QUOTED}!{}", cell(r, 1)),
        ));
        input_cells.push(cell(r, 1));
    }
    // The design row: a column's value from the inputs, its coefficient.
    let first = top + 1;
    sheet.write_string_with_format(top, TERM_COL, "Term", &f.header)?;
    sheet.write_string_with_format(top, TERM_COL + 1, "x", &f.header)?;
    sheet.write_string_with_format(top, TERM_COL + 2, "Coefficient", &f.header)?;
    sheet.write_string_with_format(
        top,
        COV_COL,
        "Covariance of the coefficients (classical)",
        &f.header,
    )?;
    for (j, (term, b, parts)) in w.columns.iter().enumerate() {
        let row = first + j as u32;
        sheet.write_string(row, TERM_COL, term)?;
        let formula = x_formula(parts, &input_cells, w);
        sheet.write_formula(
            row,
            TERM_COL + 1,
            Formula::new(format!("={formula}")).set_result(w.x[j].to_string()),
        )?;
        sheet.write_number(row, TERM_COL + 2, *b)?;
        for (c, v) in w.covariance[j].iter().enumerate() {
            sheet.write_number(row, COV_COL + c as u16, *v)?;
        }
    }
    let last = first + w.columns.len() as u32 - 1;
    let xs = format!("{}:{}", cell(first, TERM_COL + 1), cell(last, TERM_COL + 1));
    let bs = format!("{}:{}", cell(first, TERM_COL + 2), cell(last, TERM_COL + 2));
    let cov = format!(
        "{}:{}",
        cell(first, COV_COL),
        cell(last, COV_COL + w.columns.len() as u16 - 1)
    );
    // The results, under the inputs.
    r += 2;
    let at = |name: &str, rows: &[(&str, u32)]| {
        rows.iter()
            .find(|(n, _)| *n == name)
            .map(|(_, row)| cell(*row, 1))
            .unwrap_or_default()
    };
    let rows: Vec<(&str, u32)> = [
        "fitted",
        "variance",
        "t",
        "estimate",
        "mean_lower",
        "mean_upper",
        "pred_lower",
        "pred_upper",
    ]
    .iter()
    .enumerate()
    .map(|(i, n)| (*n, r + i as u32))
    .collect();
    let (fit, var, t) = (at("fitted", &rows), at("variance", &rows), at("t", &rows));
    let back = |inner: String| {
        if w.log_response {
            format!("EXP({inner})")
        } else {
            inner
        }
    };
    let new_var = format!("({var}+{}/{})", w.sigma2, w.weight);
    let cells: [(&str, &str, String, f64); 8] = [
        (
            "fitted",
            if w.log_response {
                "Fitted ln(value)"
            } else {
                "Fitted value"
            },
            format!("SUMPRODUCT({xs},{bs})"),
            w.fitted,
        ),
        (
            "variance",
            "Variance of the fitted value (x'Vx)",
            format!("SUMPRODUCT(MMULT({cov},{xs}),{xs})"),
            w.variance,
        ),
        (
            "t",
            "t quantile",
            format!("TINV({},{})", 1.0 - m.confidence, w.df_resid),
            w.t,
        ),
        ("estimate", "Estimate", back(fit.clone()), w.estimate),
        (
            "mean_lower",
            "Mean: lower limit",
            back(format!("{fit}-{t}*SQRT({var})")),
            w.mean_lower,
        ),
        (
            "mean_upper",
            "Mean: upper limit",
            back(format!("{fit}+{t}*SQRT({var})")),
            w.mean_upper,
        ),
        (
            "pred_lower",
            "Prediction: lower limit",
            back(format!("{fit}-{t}*SQRT({new_var})")),
            w.pred_lower,
        ),
        (
            "pred_upper",
            "Prediction: upper limit",
            back(format!("{fit}+{t}*SQRT({new_var})")),
            w.pred_upper,
        ),
    ];
    // The outputs in the response's own number format, when the input
    // gives it one.
    let styled = m
        .response_number_format
        .as_deref()
        .map(|code| Format::new().set_num_format(code).set_bold());
    for ((key, label, formula, value), (_, row)) in cells.into_iter().zip(&rows) {
        let format = if ["fitted", "variance", "t"].contains(&key) {
            &f.fixed
        } else {
            styled.as_ref().unwrap_or(&f.output)
        };
        sheet.write_string(*row, 0, label)?;
        sheet.write_formula_with_format(
            *row,
            1,
            Formula::new(format!("={formula}")).set_result(value.to_string()),
            format,
        )?;
        if !["fitted", "variance", "t"].contains(&key) {
            names.push((defined_name(k, key), format!("={QUOTED}!{}", cell(*row, 1))));
        }
    }
    let end = rows.last().map_or(r, |(_, row)| *row);
    Ok(end.max(last) + 1)
}

/// The formula of a design column's value: the product of its parts.
fn x_formula(parts: &[Part], inputs: &[String], w: &WhatIf) -> String {
    if parts.is_empty() {
        return "1".into();
    }
    parts
        .iter()
        .map(|p| part_formula(p, inputs, w))
        .collect::<Vec<_>>()
        .join("*")
}

fn part_formula(part: &Part, inputs: &[String], w: &WhatIf) -> String {
    match part {
        Part::Value { input } => inputs[*input].clone(),
        Part::Ln { input } => format!("LN({})", inputs[*input]),
        Part::Power { input, power } => format!("{}^{power}", inputs[*input]),
        Part::Indicator { input, level } => {
            format!(
                "IF({}=\"{}\",1,0)",
                inputs[*input],
                level.replace('"', "\"\"")
            )
        }
        Part::Trend { input } => trend_formula(&inputs[*input], &w.inputs[*input].kind),
        Part::Season { input, by, season } => {
            let p = &inputs[*input];
            let of = match by {
                SeasonBy::Quarter => format!("INT((MONTH({p})-1)/3)+1"),
                SeasonBy::Weekday => format!("WEEKDAY({p},2)"),
                _ => format!("MONTH({p})"),
            };
            format!("IF({of}={season},1,0)")
        }
    }
}

/// The trend index of the period holding the date in `p`: periods since
/// the data's first, plus one.
fn trend_formula(p: &str, kind: &InputKind) -> String {
    let InputKind::Period { frequency, first } = kind else {
        return "1".into();
    };
    let Ok(d) = chrono::NaiveDate::parse_from_str(first, "%Y-%m-%d") else {
        return "1".into();
    };
    let (y, m, day) = (d.year(), d.month(), d.day());
    match frequency {
        Frequency::Month => format!("(YEAR({p})-{y})*12+MONTH({p})-{m}+1"),
        Frequency::Quarter => format!("(YEAR({p})-{y})*4+INT((MONTH({p})-1)/3)-{}+1", (m - 1) / 3),
        Frequency::Year => format!("YEAR({p})-{y}+1"),
        Frequency::Week => format!("INT(({p}-DATE({y},{m},{day}))/7)+1"),
        Frequency::Day => format!("INT({p}-DATE({y},{m},{day}))+1"),
    }
}
