//! Period labels as people type them, on open series (statsmodels'
//! datasets, committed in tests/fixtures/periods/ with the fits of
//! statsmodels 0.15.0 written by tests/reference/make_period_reference.py):
//! a year as a number cell from 1871 (before any workbook date), quarters
//! as "Q3 1959", "1959 Q3" and "Q3-59", months as "Jan-1950", "January
//! 1950", "1950M01" and slash dates. Read right, the trend and season
//! coefficients equal the reference's.

mod common;

use std::path::{Path, PathBuf};

use common::{assert_close, assert_status, read_json, sheetfit, stderr, Cell, Scratch};
use serde_json::Value;

fn fixture(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/periods")
        .join(name)
}

/// The rows of a fixture CSV, header left out, as numbers.
fn rows(name: &str) -> Vec<Vec<f64>> {
    std::fs::read_to_string(fixture(name))
        .unwrap()
        .lines()
        .skip(1)
        .map(|l| l.split(',').map(|v| v.parse().unwrap()).collect())
        .collect()
}

/// Runs `job` in `s` and checks the first model's coefficients against the
/// reference `name`, by position.
fn assert_matches(s: &Scratch, job: &str, name: &str) -> Value {
    s.write("job.toml", job);
    let out = sheetfit(&s.path(""), &["run", "--overwrite", "job.toml"]);
    assert_status(&out, 0);
    let json = read_json(&s.path("job-report.json"));
    let want = read_json(&fixture("expected.json"))[name]["coefficients"].clone();
    let got = json["models"][0]["coefficients"]
        .as_array()
        .unwrap()
        .clone();
    let want = want.as_array().unwrap();
    assert_eq!(got.len(), want.len(), "{name}");
    for (g, w) in got.iter().zip(want) {
        for key in ["estimate", "std_error"] {
            assert_close(
                &format!("{name} {} ({}) {key}", g["term"], w["term"]),
                g[key].as_f64().unwrap(),
                w[key].as_f64().unwrap(),
                1e-9,
            );
        }
    }
    json
}

const MONTHS: [&str; 12] = [
    "Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec",
];
const MONTH_NAMES: [&str; 12] = [
    "January",
    "February",
    "March",
    "April",
    "May",
    "June",
    "July",
    "August",
    "September",
    "October",
    "November",
    "December",
];

#[test]
fn a_yearly_series_from_1871_reads_year_numbers_and_reports_its_dates() {
    let s = Scratch::new();
    let mut sheet = vec![vec![Cell::T("year"), Cell::T("volume")]];
    for r in rows("nile.csv") {
        sheet.push(vec![Cell::N(r[0]), Cell::N(r[1])]);
    }
    s.workbook("data.xlsx", &[("flow", sheet)]);
    let job = "suggest = false\n[input]\nworkbook = \"data.xlsx\"\n[[model]]\nname = \"nile\"\nresponse = \"volume\"\ntrend = \"year\"\n[model.forecast]\nhorizon = 3\n";
    let json = assert_matches(&s, job, "nile");
    let model = &json["models"][0];
    assert_eq!(model["timing"]["frequency"], "year");
    assert_eq!(model["timing"]["first"], "1871");
    assert_eq!(model["forecast"][0]["period"], "1971");
    // The same series from CSV text.
    let csv: String = std::iter::once("year,volume\n".to_string())
        .chain(
            rows("nile.csv")
                .iter()
                .map(|r| format!("{},{}\n", r[0], r[1])),
        )
        .collect();
    s.write("data.csv", &csv);
    assert_matches(&s, &job.replace("data.xlsx", "data.csv"), "nile");
}

#[test]
fn quarters_read_in_every_way_they_are_typed() {
    let forms: [fn(i64, i64) -> String; 3] = [
        |y, q| format!("Q{q} {y}"),
        |y, q| format!("{y} Q{q}"),
        |y, q| format!("Q{q}/{y}"),
    ];
    for form in forms {
        let s = Scratch::new();
        let mut sheet = vec![vec![
            Cell::T("quarter"),
            Cell::T("realgdp"),
            Cell::T("realcons"),
        ]];
        for r in rows("macro.csv") {
            sheet.push(vec![
                Cell::S(form(r[0] as i64, r[1] as i64)),
                Cell::N(r[2]),
                Cell::N(r[3]),
            ]);
        }
        s.workbook("data.xlsx", &[("macro", sheet)]);
        let job = "suggest = false\n[input]\nworkbook = \"data.xlsx\"\n[[model]]\nname = \"macro\"\nresponse = \"realcons\"\nnumeric = [\"realgdp\"]\ntrend = \"quarter\"\nseason = { column = \"quarter\", by = \"quarter\" }\n";
        let json = assert_matches(&s, job, "macro");
        assert_eq!(json["models"][0]["timing"]["first"], "1959-Q1");
    }
}

#[test]
fn two_digit_years_that_cannot_be_one_series_are_refused() {
    // 1959 to 2009 written "Q1-59" to "Q3-09": read as 1970-2069, the
    // series would be put out of order.
    let s = Scratch::new();
    let csv: String = std::iter::once("quarter,realgdp,realcons\n".to_string())
        .chain(
            rows("macro.csv")
                .iter()
                .map(|r| format!("Q{}-{:02},{},{}\n", r[1], r[0] as i64 % 100, r[2], r[3])),
        )
        .collect();
    s.write("data.csv", &csv);
    s.write(
        "job.toml",
        "[input]\nworkbook = \"data.csv\"\n[[model]]\nname = \"m\"\nresponse = \"realcons\"\nnumeric = [\"realgdp\"]\ntrend = \"quarter\"\n",
    );
    let out = sheetfit(&s.path(""), &["run", "job.toml"]);
    assert_status(&out, 1);
    assert!(
        stderr(&out).contains("date column 'quarter' writes years with two digits, read as 1970 to 2069: 'Q1-70' (A46) is 1970 and 'Q4-69' (A45) is 2069")
            && stderr(&out).contains("write the years with four digits"),
        "{}",
        stderr(&out)
    );
}

#[test]
fn months_read_as_names_codes_and_slash_dates() {
    let forms: [fn(i64, usize) -> String; 5] = [
        |y, m| format!("{}-{y}", MONTHS[m - 1]),
        |y, m| format!("{} {y}", MONTH_NAMES[m - 1]),
        |y, m| format!("{y}M{m:02}"),
        |y, m| format!("15/{m:02}/{y}"),
        |y, m| format!("{m:02}/15/{y}"),
    ];
    for form in forms {
        let s = Scratch::new();
        let csv: String = std::iter::once("month,temperature\n".to_string())
            .chain(
                rows("elnino.csv")
                    .iter()
                    .map(|r| format!("{},{}\n", form(r[0] as i64, r[1] as usize), r[2])),
            )
            .collect();
        s.write("data.csv", &csv);
        let job = "suggest = false\n[input]\nworkbook = \"data.csv\"\n[[model]]\nname = \"elnino\"\nresponse = \"temperature\"\ntrend = \"month\"\nseason = { column = \"month\", by = \"month\" }\nfrequency = \"month\"\n";
        let json = assert_matches(&s, job, "elnino");
        assert_eq!(json["models"][0]["timing"]["first"], "1950-01");
    }
}

#[test]
fn slash_dates_that_read_both_ways_need_date_order() {
    let s = Scratch::new();
    let mut csv = String::from("day,y\n");
    for (d, y) in [(1, 3.0), (2, 4.5), (3, 4.0), (4, 6.5), (5, 7.0), (6, 8.5)] {
        csv.push_str(&format!("0{d}/02/2024,{y}\n"));
    }
    s.write("data.csv", &csv);
    let job = "[input]\nworkbook = \"data.csv\"\n[[model]]\nname = \"m\"\nresponse = \"y\"\ntrend = \"day\"\n";
    s.write("job.toml", job);
    let out = sheetfit(&s.path(""), &["run", "job.toml"]);
    assert_status(&out, 1);
    assert!(
        stderr(&out).contains("cell A2 in date column 'day' holds '01/02/2024', which reads as 1 February 2024 (day first) or as January 2 2024 (month first)")
            && stderr(&out).contains("write `date_order = \"dmy\"` or `date_order = \"mdy\"` under [input]"),
        "{}",
        stderr(&out)
    );
    s.write(
        "job.toml",
        &job.replace("[input]\n", "[input]\ndate_order = \"dmy\"\n"),
    );
    let out = sheetfit(&s.path(""), &["run", "job.toml"]);
    assert_status(&out, 0);
    let json = read_json(&s.path("job-report.json"));
    assert_eq!(json["models"][0]["timing"]["first"], "2024-02-01");
    assert_eq!(json["models"][0]["timing"]["frequency"], "day");
}

#[test]
fn fiscal_periods_read_label_forecast_and_count_seasons_in_the_fiscal_year() {
    // El Nino months labelled in a fiscal year starting in April, named by
    // the year it ends in: April 1950 is FY1951 P01.
    let s = Scratch::new();
    let csv: String = std::iter::once("period,temperature\n".to_string())
        .chain(rows("elnino.csv").iter().map(|r| {
            let (y, m) = (r[0] as i64, r[1] as i64);
            let fiscal_year = if m >= 4 { y + 1 } else { y };
            let p = (m + 12 - 4) % 12 + 1;
            format!("FY{fiscal_year} P{p:02},{}\n", r[2])
        }))
        .collect();
    s.write("data.csv", &csv);
    let job = "suggest = false\n[input]\nworkbook = \"data.csv\"\nfiscal_year_start = \"Apr\"\n[[model]]\nname = \"elnino\"\nresponse = \"temperature\"\ntrend = \"period\"\nseason = { column = \"period\", by = \"month\" }\n[model.forecast]\nhorizon = 4\n";
    let json = assert_matches(&s, job, "elnino_fiscal_april");
    let model = &json["models"][0];
    assert_eq!(model["timing"]["first"], "FY1950 P10");
    assert_eq!(model["coefficients"][2]["term"], "season[P02]");
    assert_eq!(model["coefficients"][12]["term"], "season[P12]");
    for (k, period) in ["FY2011 P10", "FY2011 P11", "FY2011 P12", "FY2012 P01"]
        .iter()
        .enumerate()
    {
        assert_eq!(model["forecast"][k]["period"], *period);
    }
    // Without the fiscal year the labels are refused, saying which key.
    s.write(
        "job.toml",
        &job.replace("fiscal_year_start = \"Apr\"\n", ""),
    );
    let out = sheetfit(&s.path(""), &["run", "--overwrite", "job.toml"]);
    assert_status(&out, 1);
    assert!(
        stderr(&out).contains("holds 'FY1950 P10', which is a fiscal period; say when the fiscal year starts with `fiscal_year_start = \"Apr\"`"),
        "{}",
        stderr(&out)
    );
}

#[test]
fn weekly_dates_take_their_month_and_label_from_their_own_day() {
    // Saturdays: the weeks start on Saturday, so 1994-01-01 is a January
    // week (its ISO week starts on 1993-12-27) and is labelled by its date.
    let s = Scratch::new();
    std::fs::copy(fixture("co2_weekly.csv"), s.path("data.csv")).unwrap();
    let job = "suggest = false\n[input]\nworkbook = \"data.csv\"\n[[model]]\nname = \"co2\"\nresponse = \"co2\"\ntrend = \"date\"\nseason = { column = \"date\", by = \"month\" }\n[model.forecast]\nhorizon = 6\n";
    let json = assert_matches(&s, job, "co2_weekly");
    let model = &json["models"][0];
    assert_eq!(model["timing"]["frequency"], "week");
    assert_eq!(model["timing"]["first"], "1990-01-06");
    let residuals = model["residuals"].as_array().unwrap();
    assert!(residuals.iter().any(|r| r["period"] == "1994-01-01"));
    // Source: statsmodels get_prediction on the reference fit.
    let want = read_json(&fixture("expected.json"))["co2_weekly"]["forecast"].clone();
    let got = model["forecast"].as_array().unwrap();
    assert_eq!(got.len(), want.as_array().unwrap().len());
    for (g, w) in got.iter().zip(want.as_array().unwrap()) {
        assert_eq!(g["period"], w["period"]);
        assert_eq!(g["date"], w["period"]);
        assert_eq!(g["index"], w["index"]);
        for key in ["estimate", "pred_lower", "pred_upper"] {
            assert_close(
                &format!("forecast {} {key}", w["period"]),
                g[key].as_f64().unwrap(),
                w[key].as_f64().unwrap(),
                1e-9,
            );
        }
    }
}
