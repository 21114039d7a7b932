//! Workbooks laid out the way finance teams keep them: a title block over
//! the header, a worksheet table with its own totals row, a units row, a
//! totals row typed under the data. Each layout holds carData's Duncan
//! occupational prestige data (45 rows, committed in
//! tests/fixtures/model_checks/), so where the tool reads the data right
//! its coefficients must equal R's for the same model (duncan.json, written
//! by tests/reference/make_model_checks_reference.R with R 4.2.2 and
//! carData 3.0.5); where a summary row would reach the fit, the job must
//! stop naming the row.

mod common;

use std::path::Path;

use common::{assert_close, assert_status, read_json, sheetfit, stderr, Scratch};
use rust_xlsxwriter::{Table, TableColumn, TableFunction, Workbook, Worksheet};
use serde_json::Value;

/// One row of the Duncan data.
struct Occupation {
    name: String,
    prestige: f64,
    income: f64,
    education: f64,
    kind: String,
}

fn fixture(name: &str) -> std::path::PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/model_checks")
        .join(name)
}

fn duncan() -> Vec<Occupation> {
    let text = std::fs::read_to_string(fixture("duncan.csv")).unwrap();
    text.lines()
        .skip(1)
        .map(|line| {
            let f: Vec<&str> = line.split(',').collect();
            Occupation {
                name: f[0].to_string(),
                prestige: f[1].parse().unwrap(),
                income: f[2].parse().unwrap(),
                education: f[3].parse().unwrap(),
                kind: f[4].to_string(),
            }
        })
        .collect()
}

/// R's coefficients of the model called `name` in duncan.json.
fn reference(name: &str) -> Value {
    let expected = read_json(&fixture("duncan.json"));
    expected["models"]
        .as_array()
        .unwrap()
        .iter()
        .find(|m| m["name"] == name)
        .unwrap()["coefficients"]
        .clone()
}

/// Asserts the first model's coefficients equal R's for `name`.
fn assert_matches_r(json: &Value, name: &str) {
    let want = reference(name);
    let got = &json["models"][0]["coefficients"];
    let want = want.as_array().unwrap();
    assert_eq!(got.as_array().unwrap().len(), want.len());
    for (g, w) in got.as_array().unwrap().iter().zip(want) {
        assert_eq!(g["term"], w["term"]);
        for key in ["estimate", "std_error"] {
            assert_close(
                &format!("{} {key}", w["term"]),
                g[key].as_f64().unwrap(),
                w[key].as_f64().unwrap(),
                1e-9,
            );
        }
    }
}

/// Writes the header and the data rows from (`row`, `col`) down.
fn write_data(ws: &mut Worksheet, row: u32, col: u16, data: &[Occupation]) {
    for (c, h) in ["occupation", "prestige", "income", "education", "type"]
        .iter()
        .enumerate()
    {
        ws.write_string(row, col + c as u16, *h).unwrap();
    }
    for (i, o) in data.iter().enumerate() {
        let r = row + 1 + i as u32;
        ws.write_string(r, col, &o.name).unwrap();
        ws.write_number(r, col + 1, o.prestige).unwrap();
        ws.write_number(r, col + 2, o.income).unwrap();
        ws.write_number(r, col + 3, o.education).unwrap();
        ws.write_string(r, col + 4, &o.kind).unwrap();
    }
}

/// Sums of prestige, income and education.
fn sums(data: &[Occupation]) -> [f64; 3] {
    data.iter().fold([0.0; 3], |s, o| {
        [s[0] + o.prestige, s[1] + o.income, s[2] + o.education]
    })
}

const ADDITIVE: &str = "\n[[model]]\nname = \"additive\"\nresponse = \"prestige\"\nnumeric = [\"income\", \"education\"]\ncategorical = { type = \"bc\" }\n";
const WITHOUT_TYPE: &str = "\n[[model]]\nname = \"without type\"\nresponse = \"prestige\"\nnumeric = [\"income\", \"education\"]\n";

fn job(s: &Scratch, input: &str, model: &str) {
    s.write(
        "job.toml",
        &format!("suggest = false\n[input]\nworkbook = \"data.xlsx\"\n{input}\n{model}"),
    );
}

fn run(s: &Scratch) -> std::process::Output {
    sheetfit(&s.path(""), &["run", "--overwrite", "job.toml"])
}

/// A title block (rows 1-2), the header in row 4, 45 rows, then "Total"
/// with the sums in row 50.
fn title_block_and_total_row(s: &Scratch) {
    let data = duncan();
    let mut wb = Workbook::new();
    let ws = wb.add_worksheet();
    ws.write_string(0, 0, "Occupational prestige, 1950 (carData Duncan)")
        .unwrap();
    ws.write_string(1, 0, "Invented layout around open data")
        .unwrap();
    write_data(ws, 3, 0, &data);
    let total = sums(&data);
    ws.write_string(49, 0, "Total").unwrap();
    for (k, v) in total.iter().enumerate() {
        ws.write_number(49, 1 + k as u16, *v).unwrap();
    }
    wb.save(s.path("data.xlsx")).unwrap();
}

#[test]
fn a_total_row_under_the_data_stops_the_job_naming_the_row() {
    let s = Scratch::new();
    title_block_and_total_row(&s);
    job(&s, "header_row = 4", WITHOUT_TYPE);
    let out = run(&s);
    assert_status(&out, 1);
    let err = stderr(&out);
    assert!(
        err.contains("row 50: 'Total' in A50 reads as a summary label")
            && err.contains("summary_rows = \"leave_out\"")
            && err.contains("`range`"),
        "{err}"
    );
    assert!(!s.path("job-report.xlsx").exists());
}

#[test]
fn a_total_row_left_out_gives_the_fit_of_the_data_alone() {
    let s = Scratch::new();
    title_block_and_total_row(&s);
    job(
        &s,
        "header_row = 4\nsummary_rows = \"leave_out\"",
        WITHOUT_TYPE,
    );
    let out = run(&s);
    assert_status(&out, 0);
    let json = read_json(&s.path("job-report.json"));
    assert_matches_r(&json, "without type");
    assert_eq!(json["run"]["summary_rows_left_out"][0]["row"], 50);
    assert_eq!(json["run"]["rows_read"], 46);
    assert_eq!(json["models"][0]["n"], 45);
}

#[test]
fn a_range_reads_below_a_title_block_and_stops_above_the_total() {
    let s = Scratch::new();
    title_block_and_total_row(&s);
    job(&s, "range = \"A4:E49\"", ADDITIVE);
    let out = run(&s);
    assert_status(&out, 0);
    assert_matches_r(&read_json(&s.path("job-report.json")), "additive");
}

#[test]
fn a_total_row_without_a_label_is_found_by_its_sums() {
    let s = Scratch::new();
    let data = duncan();
    let mut wb = Workbook::new();
    let ws = wb.add_worksheet();
    write_data(ws, 0, 0, &data);
    for (k, v) in sums(&data).iter().enumerate() {
        ws.write_number(46, 1 + k as u16, *v).unwrap();
    }
    wb.save(s.path("data.xlsx")).unwrap();
    job(&s, "", WITHOUT_TYPE);
    let out = run(&s);
    assert_status(&out, 1);
    let err = stderr(&out);
    assert!(
        err.contains("row 47: B47, C47, D47 hold the sums of the rows above"),
        "{err}"
    );
}

/// Notes on the first sheet; on the second a title in B1 and a worksheet
/// table "Prestige" at B3 whose totals row (row 49) averages every column.
fn table_with_totals_row(s: &Scratch) {
    let data = duncan();
    let mut wb = Workbook::new();
    wb.add_worksheet()
        .set_name("Notes")
        .unwrap()
        .write_string(0, 0, "The data are on the next sheet.")
        .unwrap();
    let ws = wb.add_worksheet().set_name("Data").unwrap();
    ws.write_string(0, 1, "Occupational prestige, 1950 (carData Duncan)")
        .unwrap();
    write_data(ws, 2, 1, &data);
    let columns = vec![
        TableColumn::new()
            .set_header("occupation")
            .set_total_label("Average"),
        TableColumn::new()
            .set_header("prestige")
            .set_total_function(TableFunction::Average),
        TableColumn::new()
            .set_header("income")
            .set_total_function(TableFunction::Average),
        TableColumn::new()
            .set_header("education")
            .set_total_function(TableFunction::Average),
        TableColumn::new().set_header("type"),
    ];
    let table = Table::new()
        .set_name("Prestige")
        .set_total_row(true)
        .set_columns(&columns);
    ws.add_table(2, 1, 48, 5, &table).unwrap();
    wb.save(s.path("data.xlsx")).unwrap();
}

#[test]
fn a_worksheet_table_is_read_by_name_without_its_totals_row() {
    let s = Scratch::new();
    table_with_totals_row(&s);
    job(&s, "table = \"prestige\"", ADDITIVE);
    let out = run(&s);
    assert_status(&out, 0);
    let json = read_json(&s.path("job-report.json"));
    assert_matches_r(&json, "additive");
    assert_eq!(json["run"]["sheet"], "Data");
    let out = sheetfit(&s.path(""), &["check", "job.toml"]);
    assert_status(&out, 0);
    let listing = String::from_utf8_lossy(&out.stdout);
    assert!(
        listing.contains(
            "worksheet table 'Prestige' on sheet 'Data', B3:F49 (totals row 49 not read)"
        ),
        "{listing}"
    );
}

#[test]
fn a_worksheet_tables_totals_row_read_as_a_sheet_stops_the_job() {
    let s = Scratch::new();
    table_with_totals_row(&s);
    job(&s, "sheet = \"Data\"\nheader_row = 3", WITHOUT_TYPE);
    let out = run(&s);
    assert_status(&out, 1);
    assert!(
        stderr(&out).contains("row 49: 'Average' in B49 reads as a summary label"),
        "{}",
        stderr(&out)
    );
}

#[test]
fn a_missing_table_lists_the_tables_there_are() {
    let s = Scratch::new();
    table_with_totals_row(&s);
    job(&s, "table = \"Prestig\"", ADDITIVE);
    let out = run(&s);
    assert_status(&out, 1);
    assert!(
        stderr(&out).contains("has no worksheet table named 'Prestig' (did you mean 'Prestige'?); its tables are: 'Prestige' on sheet 'Data'"),
        "{}",
        stderr(&out)
    );
}

#[test]
fn a_units_row_under_the_header_stops_the_job_or_is_left_out() {
    let s = Scratch::new();
    let data = duncan();
    let mut wb = Workbook::new();
    let ws = wb.add_worksheet();
    write_data(ws, 0, 0, &[]);
    for (c, unit) in ["points", "% over $3,500", "% high school"]
        .iter()
        .enumerate()
    {
        ws.write_string(1, 1 + c as u16, *unit).unwrap();
    }
    for (i, o) in data.iter().enumerate() {
        let r = 2 + i as u32;
        ws.write_string(r, 0, &o.name).unwrap();
        ws.write_number(r, 1, o.prestige).unwrap();
        ws.write_number(r, 2, o.income).unwrap();
        ws.write_number(r, 3, o.education).unwrap();
        ws.write_string(r, 4, &o.kind).unwrap();
    }
    wb.save(s.path("data.xlsx")).unwrap();
    job(&s, "", ADDITIVE);
    let out = run(&s);
    assert_status(&out, 1);
    let err = stderr(&out);
    assert!(
        err.contains("a units row under the header: row 2 holds 'points' in B2")
            && err.contains("A units row is not data"),
        "{err}"
    );
    job(&s, "summary_rows = \"leave_out\"", ADDITIVE);
    let out = run(&s);
    assert_status(&out, 0);
    assert_matches_r(&read_json(&s.path("job-report.json")), "additive");
}

#[test]
fn a_csv_input_has_no_tables() {
    let s = Scratch::new();
    s.write("data.csv", "y,x\n1,2\n2,3\n3,5\n");
    s.write(
        "job.toml",
        "[input]\nworkbook = \"data.csv\"\ntable = \"Sales\"\n[[model]]\nname = \"m\"\nresponse = \"y\"\nnumeric = [\"x\"]\n",
    );
    let out = sheetfit(&s.path(""), &["check", "job.toml"]);
    assert_status(&out, 2);
    assert!(
        stderr(&out)
            .contains("key `input.table`: the input is a CSV file, which has no worksheet tables"),
        "{}",
        stderr(&out)
    );
}

/// The categorical fixture (an invented garden-centre sample, 30 rows)
/// written as much of Europe exports it: semicolons, decimal commas,
/// Windows-1252 with a euro sign in the response's name; its reference is
/// statsmodels' fit in tests/fixtures/categorical/expected.json.
fn european_csv(s: &Scratch) {
    let text = std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/categorical/data.csv"),
    )
    .unwrap();
    let mut out = String::new();
    for (i, line) in text.lines().enumerate() {
        let line = if i == 0 {
            line.replacen("revenue", "Umsatz €", 1).replace(',', ";")
        } else {
            line.replace(',', ";").replace('.', ",")
        };
        out.push_str(&line);
        out.push_str("\r\n");
    }
    let (bytes, _, unmappable) = encoding_rs::WINDOWS_1252.encode(&out);
    assert!(!unmappable);
    std::fs::write(s.path("data.csv"), bytes).unwrap();
}

fn european_job(s: &Scratch, input: &str) {
    s.write(
        "job.toml",
        &format!(
            "suggest = false\n[input]\nworkbook = \"data.csv\"\n{input}\n\n[[model]]\nname = \"m\"\nresponse = \"Umsatz €\"\nnumeric = [\"floor_area\", \"staff_hours\"]\ncategorical = {{ region = \"North\", format = \"Garden shop\" }}\n"
        ),
    );
}

#[test]
fn a_european_csv_reads_with_a_decimal_comma_and_its_own_encoding() {
    let s = Scratch::new();
    european_csv(&s);
    european_job(&s, "decimal = \",\"");
    let out = run(&s);
    assert_status(&out, 0);
    let json = read_json(&s.path("job-report.json"));
    let want = read_json(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/categorical/expected.json"),
    );
    let got = json["models"][0]["coefficients"].as_array().unwrap();
    let want = want["coefficients"].as_array().unwrap();
    assert_eq!(got.len(), want.len());
    for (g, w) in got.iter().zip(want) {
        assert_eq!(g["term"], w["term"]);
        for key in ["estimate", "std_error", "p_value"] {
            assert_close(
                &format!("{} {key}", w["term"]),
                g[key].as_f64().unwrap(),
                w[key].as_f64().unwrap(),
                1e-9,
            );
        }
    }
}

#[test]
fn a_european_csv_without_its_keys_says_which_to_set() {
    let s = Scratch::new();
    european_csv(&s);
    european_job(&s, "");
    let out = run(&s);
    assert_status(&out, 1);
    assert!(
        stderr(&out).contains(
            "they read as numbers with a decimal comma: write `decimal = \",\"` under [input]"
        ),
        "{}",
        stderr(&out)
    );
    european_job(&s, "separator = \",\"");
    let out = run(&s);
    assert_status(&out, 1);
    assert!(
        stderr(&out).contains("which holds semicolons; write `separator = \";\"` under [input]"),
        "{}",
        stderr(&out)
    );
    european_job(&s, "decimal = \",\"\nencoding = \"utf-8\"");
    let out = run(&s);
    assert_status(&out, 1);
    assert!(
        stderr(&out).contains("it is not valid UTF-8; if it was saved as Windows-1252"),
        "{}",
        stderr(&out)
    );
}

// ---- sheetfit init --from ----------------------------------------------

/// Runs `init --from data.xlsx job.toml` and then `check job.toml`,
/// returning the job written.
fn init_and_check(s: &Scratch) -> String {
    let out = sheetfit(&s.path(""), &["init", "--from", "data.xlsx", "job.toml"]);
    assert_status(&out, 0);
    let job = std::fs::read_to_string(s.path("job.toml")).unwrap();
    let out = sheetfit(&s.path(""), &["check", "job.toml"]);
    assert_status(&out, 0);
    job
}

#[test]
fn init_from_a_table_with_a_totals_row_writes_a_job_check_accepts() {
    let s = Scratch::new();
    table_with_totals_row(&s);
    let job = init_and_check(&s);
    assert!(
        job.contains("table = \"Prestige\"") && job.contains("(totals row 49 not read)"),
        "{job}"
    );
    assert!(job.contains("response = \"prestige\""), "{job}");
    assert!(
        job.contains("numeric = [\"income\", \"education\"]"),
        "{job}"
    );
    assert!(job.contains("categorical = [\"type\"]"), "{job}");
    assert!(
        job.contains("left out, identifiers rather than categories: occupation (45 levels)"),
        "{job}"
    );
    // Choosing another response is the one edit: its name and the swap.
    s.write(
        "job.toml",
        &job.replace("response = \"prestige\"", "response = \"income\"")
            .replace(
                "numeric = [\"income\", \"education\"]",
                "numeric = [\"prestige\", \"education\"]",
            ),
    );
    assert_status(&sheetfit(&s.path(""), &["check", "job.toml"]), 0);
}

#[test]
fn init_from_a_sheet_finds_the_header_below_the_title_and_the_total_row() {
    let s = Scratch::new();
    title_block_and_total_row(&s);
    let job = init_and_check(&s);
    assert!(
        job.contains(
            "header_row = 4    # the column names; rows 1-3 above look like a title block"
        ),
        "{job}"
    );
    assert!(
        job.contains("summary_rows = \"leave_out\"   # rows 50 look like summary rows"),
        "{job}"
    );
    // Run as written, the fit is the data's alone: R's for that model.
    let job = job.replace(
        "categorical = [\"type\"]",
        "categorical = { type = \"bc\" }",
    );
    s.write("job.toml", &job);
    let out = sheetfit(&s.path(""), &["run", "job.toml"]);
    assert_status(&out, 0);
    assert_matches_r(&read_json(&s.path("job-report.json")), "additive");
}

#[test]
fn init_from_the_demo_workbook_writes_a_job_check_accepts() {
    let s = Scratch::new();
    std::fs::copy(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data/garden-centres.xlsx"),
        s.path("data.xlsx"),
    )
    .unwrap();
    let job = init_and_check(&s);
    assert!(
        job.contains("#   A 'month': dates, one month apart"),
        "{job}"
    );
    assert!(job.contains("# trend = \"month\""), "{job}");
}

#[test]
fn a_table_asked_of_an_ods_file_suggests_a_range() {
    let s = Scratch::new();
    table_with_totals_row(&s);
    if !common::libreoffice(&s.path(""), &["--convert-to", "ods", "data.xlsx"]) {
        return;
    }
    s.write(
        "job.toml",
        &format!("[input]\nworkbook = \"data.ods\"\ntable = \"Prestige\"\n{ADDITIVE}"),
    );
    let out = sheetfit(&s.path(""), &["check", "job.toml"]);
    assert_status(&out, 1);
    assert!(
        stderr(&out).contains("data.ods has no worksheet tables (only .xlsx and .xlsm files have them); give the data's cells with `range = \"B5:H200\"` under [input] instead of `table`"),
        "{}",
        stderr(&out)
    );
    // The range of the same cells reads the data, the totals row left out.
    s.write(
        "job.toml",
        &format!("suggest = false\n[input]\nworkbook = \"data.ods\"\nsheet = \"Data\"\nrange = \"B3:F48\"\n{ADDITIVE}"),
    );
    let out = sheetfit(&s.path(""), &["run", "job.toml"]);
    assert_status(&out, 0);
    assert_matches_r(&read_json(&s.path("job-report.json")), "additive");
}
