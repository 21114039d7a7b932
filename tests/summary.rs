//! The Summary sheet of the demo job: its sentences, pinned with numbers
//! read from the results JSON, stand first in the workbook in the JSON's
//! order.

mod common;

use std::path::PathBuf;

use calamine::{open_workbook_auto, Data, Reader};
use common::{model_named as model, read_json, sheetfit, stderr, Scratch};
use serde_json::Value;

/// Runs the demo job and returns the report's path and its results.
fn demo() -> (Scratch, Value) {
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("demo-data");
    let scratch = Scratch::new();
    for name in ["garden-centres.xlsx", "garden-centres.toml"] {
        std::fs::copy(root.join(name), scratch.path(name)).expect("copy the demo");
    }
    let out = sheetfit(&scratch.path(""), &["run", "garden-centres.toml"]);
    assert!(out.status.success(), "{}", stderr(&out));
    let json = read_json(&scratch.path("reports/garden-centres-report.json"));
    (scratch, json)
}

/// Three significant digits without trailing zeros, thousands grouped from
/// 1,000: how the summary writes a number in a sentence.
fn plain(x: f64) -> String {
    if x.abs() >= 1000.0 {
        let whole = format!("{:.0}", x.abs());
        let grouped: Vec<String> = whole
            .as_bytes()
            .rchunks(3)
            .rev()
            .map(|c| String::from_utf8_lossy(c).into_owned())
            .collect();
        return format!("{}{}", if x < 0.0 { "-" } else { "" }, grouped.join(","));
    }
    let exponent = x.abs().log10().floor() as i32;
    let decimals = (2 - exponent).max(0) as usize;
    let text = format!("{x:.decimals$}");
    if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        text
    }
}

fn f(v: &Value) -> f64 {
    v.as_f64().unwrap_or_else(|| panic!("not a number: {v}"))
}

fn coefficient<'a>(m: &'a Value, term: &str) -> &'a Value {
    m["coefficients"]
        .as_array()
        .expect("coefficients")
        .iter()
        .find(|c| c["term"] == term)
        .unwrap_or_else(|| panic!("no term {term}"))
}

#[test]
fn the_demo_summary_says_what_the_numbers_say() {
    let (_scratch, json) = demo();
    let s = &json["summary"];
    // The demo job names its main model.
    assert_eq!(s["model"], "monthly forecast");
    let m = model(&json, "monthly forecast");
    let t = &m["timing"];
    assert_eq!(
        s["headline"],
        format!(
            "monthly forecast: explains {:.0} % of the variation in revenue across {} rows over {} months ({} to {}).",
            f(&m["fit"]["r_squared"]) * 100.0,
            m["n"],
            t["periods"],
            t["first"].as_str().unwrap_or_default(),
            t["last"].as_str().unwrap_or_default()
        )
    );
    let area = coefficient(m, "floor_area");
    let retail = coefficient(m, "format[Retail park]");
    let drivers = s["drivers"].as_array().expect("drivers");
    // Ranked by effect size: floor area varies by hundreds of m², so its
    // small coefficient moves revenue most; then the store format.
    assert_eq!(
        drivers[0],
        format!(
            "Each extra unit of floor_area: +{} revenue ({} to {}).",
            plain(f(&area["estimate"])),
            plain(f(&area["ci_lower"])),
            plain(f(&area["ci_upper"]))
        )
    );
    assert_eq!(
        drivers[1],
        format!(
            "format Retail park: {} more revenue than Garden shop ({} to {} more).",
            plain(f(&retail["estimate"])),
            plain(f(&retail["ci_lower"])),
            plain(f(&retail["ci_upper"]))
        )
    );
    assert_eq!(drivers.len(), 7, "six drivers and a pointer to the rest");
    assert!(drivers[6]
        .as_str()
        .unwrap_or_default()
        .ends_with("more terms on the Coefficients sheet."));

    let outlook = s["outlook"].as_array().expect("outlook");
    let forecast = m["forecast"].as_array().expect("forecast");
    let (first, last) = (&forecast[0], &forecast[forecast.len() - 1]);
    assert_eq!(
        outlook[0],
        format!(
            "Forecast of revenue for the inputs on the Forecast sheet: {} for 2026-01 ({} to {}) to {} for 2026-12 ({} to {}), at the 95 % prediction level.",
            plain(f(&first["estimate"])),
            plain(f(&first["pred_lower"])),
            plain(f(&first["pred_upper"])),
            plain(f(&last["estimate"])),
            plain(f(&last["pred_lower"])),
            plain(f(&last["pred_upper"]))
        )
    );
    let backtest = &m["backtest"];
    let points = backtest["points"].as_array().expect("points");
    let inside = points.iter().filter(|p| p["inside"] == true).count();
    assert_eq!(
        outlook[2],
        format!(
            "In the last 6 held-out periods, {inside} of the {} actuals ({:.0} %) fell inside the 95 % prediction interval (typical miss, RMSE: {}).",
            points.len(),
            f(&backtest["coverage"]) * 100.0,
            plain(f(&backtest["rmse"]))
        )
    );
    // The flags that matter, in words: this model's checks flag
    // autocorrelation (Breusch-Godfrey) among others.
    let flagged = |name: &str| {
        m["checks"]
            .as_array()
            .expect("checks")
            .iter()
            .any(|c| c["name"] == name && c["flagged"] == true)
    };
    assert!(flagged("breusch-godfrey"));
    assert!(s["trust"][0]
        .as_str()
        .unwrap_or_default()
        .starts_with("Misses run in streaks from one period to the next (autocorrelation)"));
    let others = s["other_models"].as_array().expect("other models");
    let drivers_model = model(&json, "drivers");
    assert_eq!(
        others[0],
        format!(
            "drivers: explains {:.0} % of the variation in revenue ({} rows).",
            f(&drivers_model["fit"]["r_squared"]) * 100.0,
            drivers_model["n"]
        )
    );
}

#[test]
fn the_summary_sheet_comes_first_with_the_json_sentences() {
    let (scratch, json) = demo();
    let mut wb = open_workbook_auto(scratch.path("reports/garden-centres-report.xlsx"))
        .expect("open the report");
    assert_eq!(wb.sheet_names()[0], "Summary");
    let sheet = wb.worksheet_range("Summary").expect("Summary sheet");
    let texts: Vec<String> = (0..sheet.height() as u32)
        .filter_map(|r| match sheet.get_value((r, 0)) {
            Some(Data::String(s)) => Some(s.clone()),
            _ => None,
        })
        .collect();
    assert_eq!(texts[0], json["title"].as_str().unwrap_or_default());
    let s = &json["summary"];
    assert!(texts.contains(&s["headline"].as_str().unwrap_or_default().to_string()));
    // Every sentence, in the JSON's order, as a bullet.
    let bullets: Vec<&String> = texts.iter().filter(|t| t.starts_with("• ")).collect();
    let expected: Vec<String> = ["drivers", "outlook", "trust", "other_models"]
        .iter()
        .flat_map(|k| s[*k].as_array().expect("sentences").iter())
        .chain(json["cautions"].as_array().expect("cautions").iter())
        .map(|v| format!("• {}", v.as_str().unwrap_or_default()))
        .collect();
    assert_eq!(bullets.len(), expected.len());
    for (got, want) in bullets.iter().zip(&expected) {
        assert_eq!(*got, want);
    }
}

#[test]
fn a_currency_response_is_summarised_in_its_currency() {
    use rust_xlsxwriter::{Format, Workbook};
    let scratch = Scratch::new();
    let mut workbook = Workbook::new();
    let sheet = workbook.add_worksheet().set_name("sales").expect("name");
    let money = Format::new().set_num_format("\"$\"#,##0.00");
    sheet.write_string(0, 0, "spend").expect("write");
    sheet.write_string(0, 1, "revenue").expect("write");
    for i in 0..20u32 {
        let spend = f64::from(i);
        let noise = if i % 2 == 0 { 150.0 } else { -150.0 };
        sheet.write_number(i + 1, 0, spend).expect("write");
        sheet
            .write_number_with_format(i + 1, 1, 1000.0 + 250.0 * spend + noise, &money)
            .expect("write");
    }
    workbook.save(scratch.path("sales.xlsx")).expect("save");
    scratch.write(
        "job.toml",
        "[input]\nworkbook = \"sales.xlsx\"\n[output]\nworkbook = \"report.xlsx\"\n[[model]]\nname = \"m\"\nresponse = \"revenue\"\nnumeric = [\"spend\"]\n",
    );
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    assert!(out.status.success(), "{}", stderr(&out));
    let json = read_json(&scratch.path("report.json"));
    assert_eq!(json["models"][0]["response_number_format"], "\"$\"#,##0.00");
    let b = coefficient(&json["models"][0], "spend");
    assert_eq!(
        json["summary"]["drivers"][0],
        format!(
            "Each extra unit of spend: +${} revenue (${} to ${}).",
            plain(f(&b["estimate"])),
            plain(f(&b["ci_lower"])),
            plain(f(&b["ci_upper"]))
        )
    );
}
