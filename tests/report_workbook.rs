//! The report workbook read back cell by cell: its sheets, and that the
//! numbers it holds are the numbers of the results JSON written beside it.

mod common;

use std::path::PathBuf;

use calamine::{open_workbook_auto, Data, Range, Reader};
use serde_json::Value;

use common::grid::{
    assert_anova, assert_chart_points, assert_coefficients, assert_fit_quality, assert_residuals,
    Grid,
};
use common::{read_json, sheetfit, stderr, Cell, Scratch, SHEETS};
use Cell::{Blank, N, T};

/// Relative tolerance for numbers that should be stored exactly.
const TOL: f64 = 1e-12;

/// A finished run: the scratch folder (kept alive), the report and its JSON.
struct Report {
    _scratch: Scratch,
    workbook: PathBuf,
    json: Value,
}

impl Report {
    fn sheet(&self, name: &str) -> Range<Data> {
        let mut wb = open_workbook_auto(&self.workbook).expect("open the report workbook");
        wb.worksheet_range(name)
            .unwrap_or_else(|e| panic!("sheet {name}: {e}"))
    }

    fn grid(&self, name: &str) -> Grid {
        Grid::of_range(name, &self.sheet(name))
    }

    fn models(&self) -> &Vec<Value> {
        self.json["models"].as_array().expect("models array")
    }
}

/// Twelve data rows: `sales` from `visits` and a two-level `channel`, with
/// a blank `visits` cell in sheet row 6 so that one row is left out.
fn fixture_rows() -> Vec<Vec<Cell>> {
    let noise = [
        0.3, -0.2, 0.5, -0.4, 0.1, 0.0, -0.3, 0.2, -0.1, 0.4, -0.5, 0.2,
    ];
    let channel = [
        "online", "shop", "shop", "online", "shop", "online", "online", "shop", "online", "shop",
        "shop", "online",
    ];
    let mut rows = vec![vec![T("sales"), T("visits"), T("channel")]];
    for i in 0..12 {
        let visits = 10.0 + 3.0 * i as f64 + (i % 4) as f64;
        let shop = if channel[i] == "shop" { 4.5 } else { 0.0 };
        let sales = 3.0 + 0.8 * visits + shop + noise[i];
        let visits_cell = if i == 4 { Blank } else { N(visits) };
        rows.push(vec![N(sales), visits_cell, T(channel[i])]);
    }
    rows
}

fn run_report() -> Report {
    let s = Scratch::new();
    s.workbook("sales.xlsx", &[("weeks", fixture_rows())]);
    s.write(
        "job.toml",
        "title = \"Weekly sales\"\n\
         [input]\nworkbook = \"sales.xlsx\"\nsheet = \"weeks\"\n\
         [output]\nworkbook = \"out/report.xlsx\"\n\n\
         [[model]]\nname = \"visits and channel\"\nresponse = \"sales\"\n\
         numeric = [\"visits\"]\ncategorical = { channel = \"online\" }\n\n\
         [[model]]\nname = \"channel only\"\nresponse = \"sales\"\n\
         categorical = [\"channel\"]\nconfidence = 0.9\n",
    );
    let out = sheetfit(&s.path(""), &["run", "job.toml"]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    assert_eq!(
        s.files(),
        [
            "job.toml",
            "out/report.json",
            "out/report.xlsx",
            "sales.xlsx"
        ],
        "files after the run"
    );
    let json = read_json(&s.path("out/report.json"));
    Report {
        workbook: s.path("out/report.xlsx"),
        json,
        _scratch: s,
    }
}

/// The cell at zero-based sheet position (row, col).
fn cell(range: &Range<Data>, row: u32, col: u32) -> &Data {
    range.get_value((row, col)).unwrap_or(&Data::Empty)
}

fn text_at(range: &Range<Data>, row: u32, col: u32) -> String {
    match cell(range, row, col) {
        Data::String(s) => s.clone(),
        other => panic!("cell ({row}, {col}) should be text, found {other:?}"),
    }
}

#[test]
fn report_sheets_are_named_in_order() {
    let report = run_report();
    let wb = open_workbook_auto(&report.workbook).expect("open the report workbook");
    assert_eq!(wb.sheet_names(), SHEETS);
}

#[test]
fn coefficients_sheet_holds_the_json_numbers() {
    let report = run_report();
    let sheet = report.grid("Coefficients");
    assert_eq!(assert_coefficients(&sheet, &report.json, TOL), 5);
    let terms: Vec<String> = (1..=5)
        .map(|row| format!("{}: {}", sheet.text(row, 0), sheet.text(row, 1)))
        .collect();
    assert_eq!(
        terms,
        [
            "visits and channel: Intercept",
            "visits and channel: visits",
            "visits and channel: channel[shop]",
            "channel only: Intercept",
            "channel only: channel[shop]",
        ]
    );
    for row in 1..=5 {
        assert_eq!(sheet.text(row, 9), "classical");
    }
    sheet.assert_number(1, 8, &report.models()[0]["confidence"], TOL, "confidence");
    // The invented data has a slope of 0.8 and a shop effect of 4.5.
    let first = &report.models()[0]["coefficients"];
    assert!((first[1]["estimate"].as_f64().unwrap() - 0.8).abs() < 0.1);
    assert!((first[2]["estimate"].as_f64().unwrap() - 4.5).abs() < 1.0);
    assert_eq!(report.models()[1]["confidence"], 0.9);
}

#[test]
fn residuals_sheet_has_one_row_per_used_row() {
    let report = run_report();
    let rows = assert_residuals(&report.grid("Residuals"), &report.json, TOL);
    for model in report.models() {
        let residuals = model["residuals"].as_array().unwrap();
        assert_eq!(residuals.len() as u64, model["n"].as_u64().unwrap());
    }
    assert_eq!(rows, 11 + 12);

    // Sheet row 6 has a blank `visits`: left out of the first model only.
    let rows = |m: &Value| -> Vec<u64> {
        m["residuals"]
            .as_array()
            .unwrap()
            .iter()
            .map(|r| r["row"].as_u64().unwrap())
            .collect()
    };
    let all: Vec<u64> = (2..=13).collect();
    let without_6: Vec<u64> = all.iter().copied().filter(|&r| r != 6).collect();
    assert_eq!(rows(&report.models()[0]), without_6);
    assert_eq!(report.models()[0]["dropped_rows"], serde_json::json!([6]));
    assert_eq!(rows(&report.models()[1]), all);
}

#[test]
fn overview_shows_cautions_and_fitted_equations() {
    let report = run_report();
    let sheet = report.sheet("Overview");
    let texts: Vec<&str> = sheet
        .used_cells()
        .filter_map(|(_, _, v)| match v {
            Data::String(s) => Some(s.as_str()),
            _ => None,
        })
        .collect();
    assert_eq!(texts.first(), Some(&"Weekly sales"));

    let cautions = report.json["cautions"].as_array().unwrap();
    assert!(cautions.len() >= 3, "{cautions:?}");
    let cautions: Vec<&str> = cautions.iter().map(|c| c.as_str().unwrap()).collect();
    for c in &cautions {
        assert!(
            c.contains("association") || c.contains("assume") || c.contains("judgement"),
            "unexpected caution {c}"
        );
    }
    // The cautions follow their heading, one line a row.
    let heading = texts
        .iter()
        .position(|t| *t == "Before you rely on these numbers")
        .expect("cautions heading");
    assert_eq!(texts[heading + 1..].join(" "), cautions.join(" "));

    for model in report.models() {
        let equation = model["equation"].as_str().unwrap();
        assert!(equation.starts_with("sales = "), "{equation}");
        assert!(equation.contains("channel[shop]"), "{equation}");
        let at = sheet
            .used_cells()
            .find(|(_, _, v)| matches!(v, Data::String(s) if s == equation))
            .unwrap_or_else(|| panic!("equation missing from the overview: {equation}"));
        // The model's name is beside its equation.
        let (r, c) = (at.0 as u32, at.1 as u32);
        let (r0, c0) = sheet.start().unwrap();
        assert_eq!(
            text_at(&sheet, r0 + r, c0 + c - 1),
            model["name"].as_str().unwrap()
        );
    }
    assert!(report.models()[0]["equation"]
        .as_str()
        .unwrap()
        .contains("× visits"));
}

#[test]
fn fit_quality_sheet_matches_the_json() {
    let report = run_report();
    assert_fit_quality(&report.grid("Fit quality"), &report.json, TOL);
    assert_eq!(report.models()[0]["n"], 11);
    assert_eq!(report.models()[1]["n"], 12);
}

#[test]
fn anova_sheet_lists_both_tables_of_every_model() {
    let report = run_report();
    for model in report.models() {
        for key in ["anova", "term_tests"] {
            assert!(!model[key].as_array().unwrap().is_empty(), "{key} is empty");
        }
    }
    assert_anova(&report.grid("ANOVA"), &report.json, TOL);
}

/// Entry names from the zip central directory of `bytes`, which stores
/// them uncompressed.
fn zip_entry_names(bytes: &[u8]) -> Vec<String> {
    let u16_at = |i: usize| u16::from_le_bytes([bytes[i], bytes[i + 1]]) as usize;
    let u32_at = |i: usize| u32::from_le_bytes(bytes[i..i + 4].try_into().unwrap()) as usize;
    let end = bytes
        .windows(4)
        .rposition(|w| w == b"PK\x05\x06")
        .expect("end of central directory record");
    let count = u16_at(end + 10);
    let mut at = u32_at(end + 16);
    let mut names = Vec::with_capacity(count);
    for _ in 0..count {
        assert_eq!(&bytes[at..at + 4], b"PK\x01\x02", "central directory entry");
        let name_len = u16_at(at + 28);
        let extra_len = u16_at(at + 30);
        let comment_len = u16_at(at + 32);
        names.push(String::from_utf8_lossy(&bytes[at + 46..at + 46 + name_len]).into_owned());
        at += 46 + name_len + extra_len + comment_len;
    }
    names
}

#[test]
fn workbook_holds_two_chart_parts_per_model() {
    let report = run_report();
    let bytes = std::fs::read(&report.workbook).unwrap();
    let names = zip_entry_names(&bytes);
    assert!(
        names.iter().any(|n| n == "xl/workbook.xml"),
        "not a workbook zip: {names:?}"
    );
    let charts = names
        .iter()
        .filter(|n| n.starts_with("xl/charts/chart") && n.ends_with(".xml"))
        .count();
    assert!(
        charts >= 2 * report.models().len(),
        "{charts} chart parts for {} models: {names:?}",
        report.models().len()
    );
    // The raw byte count agrees: each part is named once in its local header
    // and once in the central directory.
    let raw = bytes
        .windows(b"xl/charts/chart".len())
        .filter(|w| *w == b"xl/charts/chart")
        .count();
    assert_eq!(raw, 2 * charts);
}

#[test]
fn chart_points_of_a_small_model_are_all_its_rows() {
    let report = run_report();
    assert_eq!(
        assert_chart_points(&report.grid("Chart points"), &report.json, TOL),
        11 + 12
    );
}

#[test]
fn residual_range_has_a_defined_name() {
    let report = run_report();
    let rows: usize = report
        .models()
        .iter()
        .map(|m| m["residuals"].as_array().unwrap().len())
        .sum();
    let xml = zip_text(&report, "xl/workbook.xml");
    let expected = format!(
        "<definedName name=\"Residual_table\">Residuals!$A$1:$L${}</definedName>",
        rows + 1
    );
    assert!(xml.contains(&expected), "{expected} not in {xml}");
}

/// The text of the zip entry `name` of the report.
fn zip_text(report: &Report, name: &str) -> String {
    let file = std::fs::File::open(&report.workbook).unwrap();
    let mut zip = zip::ZipArchive::new(file).expect("the report is a zip");
    let mut xml = String::new();
    std::io::Read::read_to_string(&mut zip.by_name(name).unwrap(), &mut xml).unwrap();
    xml
}

#[test]
fn document_properties_name_the_job_the_tool_and_the_run_time() {
    let report = run_report();
    let core = zip_text(&report, "docProps/core.xml");
    let run = &report.json["run"];
    for part in [
        "<dc:title>Weekly sales</dc:title>".to_string(),
        "<dc:subject>Linear regression report</dc:subject>".to_string(),
        format!("<dc:creator>{}</dc:creator>", run["tool"].as_str().unwrap()),
        format!(
            "<dcterms:created xsi:type=\"dcterms:W3CDTF\">{}</dcterms:created>",
            run["run_time"].as_str().unwrap()
        ),
    ] {
        assert!(core.contains(&part), "{part} not in {core}");
    }
    assert!(run["tool"].as_str().unwrap().starts_with("sheetfit "));
}

#[test]
fn table_sheets_keep_their_header_row_in_view() {
    let report = run_report();
    let workbook = zip_text(&report, "xl/workbook.xml");
    for (k, sheet) in SHEETS.iter().enumerate() {
        if matches!(
            *sheet,
            "Summary"
                | "What-if"
                | "Overview"
                | "Charts"
                | "Forecast"
                | "Back-test"
                | "Back-test rows"
                | "Chart data"
        ) {
            continue;
        }
        assert!(workbook.contains(&format!("name=\"{sheet}\" sheetId=\"{}\"", k + 1)));
        let xml = zip_text(&report, &format!("xl/worksheets/sheet{}.xml", k + 1));
        assert!(
            xml.contains("<pane ySplit=\"1\" topLeftCell=\"A2\" activePane=\"bottomLeft\" state=\"frozen\"/>"),
            "{sheet}: header row not frozen"
        );
    }
}
