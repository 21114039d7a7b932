//! A catalogue of bad and awkward inputs, one case per test: job keys of the
//! wrong type or missing, unreadable or empty workbooks, cells that are not
//! numbers, non-finite and huge values, and degenerate fits. A refusal pins
//! the exit status, the key parts of the message (file, sheet, cell, value,
//! job key, what to do) and that nothing was written and the inputs are
//! byte-for-byte unchanged; a degenerate fit that should succeed pins what
//! the results JSON says about it.

mod common;

use std::collections::BTreeMap;

use common::{assert_status, assert_stderr_has, read_json, sheetfit, stderr, Cell, Scratch};
use serde_json::Value;
use Cell::{Blank, N, T};

/// Every file of the scratch folder with its bytes.
fn snapshot(scratch: &Scratch) -> BTreeMap<String, Vec<u8>> {
    scratch
        .files()
        .into_iter()
        .map(|name| {
            let bytes = std::fs::read(scratch.path(&name)).expect("read input");
            (name, bytes)
        })
        .collect()
}

/// Runs `sheetfit run job.toml` and `sheetfit check job.toml`; both must
/// fail with `code`, start with the error prefix and name every one of
/// `parts`; afterwards the folder must hold exactly the files it held
/// before, each unchanged (so no report, no JSON, no `.sheetfit-*`
/// temporary file).
fn assert_refused(scratch: &Scratch, code: i32, parts: &[&str]) {
    let before = snapshot(scratch);
    for command in ["run", "check"] {
        let out = sheetfit(&scratch.path(""), &[command, "job.toml"]);
        assert_status(&out, code);
        assert!(
            stderr(&out).starts_with("sheetfit: error: "),
            "`{command}`: {}",
            stderr(&out)
        );
        assert_stderr_has(&out, parts);
        assert!(
            out.stdout.is_empty(),
            "`{command}` printed a summary although it failed: {}",
            String::from_utf8_lossy(&out.stdout)
        );
        let after = snapshot(scratch);
        assert_eq!(
            after.keys().collect::<Vec<_>>(),
            before.keys().collect::<Vec<_>>(),
            "`{command}` added or removed files"
        );
        for (name, bytes) in &before {
            assert!(after[name] == *bytes, "`{command}` changed {name}");
        }
    }
}

/// Runs `sheetfit run job.toml`, which must succeed and leave exactly
/// `expected` in the folder (sorted here); returns the results JSON at
/// `json`.
fn run_ok(scratch: &Scratch, expected: &[&str], json: &str) -> Value {
    let inputs: Vec<(String, Vec<u8>)> = snapshot(scratch).into_iter().collect();
    let out = sheetfit(&scratch.path(""), &["run", "job.toml"]);
    assert_status(&out, 0);
    let mut expected: Vec<String> = expected.iter().map(|s| s.to_string()).collect();
    expected.sort();
    assert_eq!(scratch.files(), expected, "files in the scratch folder");
    for (name, bytes) in inputs {
        assert!(
            std::fs::read(scratch.path(&name)).unwrap() == bytes,
            "the run changed its input {name}"
        );
    }
    read_json(&scratch.path(json))
}

/// Ten data rows: response `y`, numeric `price` and `area`, categorical
/// `region`. Header in row 1.
fn shop_rows() -> Vec<Vec<Cell>> {
    let mut rows = vec![vec![T("y"), T("price"), T("area"), T("region")]];
    let data: [(f64, f64, f64, &'static str); 10] = [
        (21.4, 3.2, 41.0, "Hill"),
        (25.0, 2.6, 57.0, "Coast"),
        (18.9, 4.1, 33.0, "Valley"),
        (29.3, 2.1, 72.0, "Hill"),
        (23.1, 3.4, 49.0, "Coast"),
        (19.8, 4.4, 44.0, "Valley"),
        (27.5, 2.3, 66.0, "Hill"),
        (26.0, 3.0, 61.0, "Coast"),
        (17.2, 4.9, 29.0, "Valley"),
        (30.6, 1.9, 77.0, "Hill"),
    ];
    for (y, price, area, region) in data {
        rows.push(vec![N(y), N(price), N(area), T(region)]);
    }
    rows
}

/// A job reading sheet `records` of data.xlsx with one model `shops` whose
/// body is `model`.
fn xlsx_job(model: &str) -> String {
    format!(
        "[input]\nworkbook = \"data.xlsx\"\nsheet = \"records\"\n\n[[model]]\nname = \"shops\"\n{model}\n"
    )
}

/// A job reading data.csv with one model `line` of `y` on numeric `x`.
const CSV_JOB: &str =
    "[input]\nworkbook = \"data.csv\"\n\n[[model]]\nname = \"line\"\nresponse = \"y\"\nnumeric = [\"x\"]\n";

/// Writes data.csv with columns `y,x` of six rows, where the fourth row's
/// `x` (cell B5) is `field` exactly as written in the file, and the job.
fn csv_with_x_field(scratch: &Scratch, field: &str) {
    scratch.write(
        "data.csv",
        &format!("y,x\n1.5,2\n2.4,3\n3.9,5\n4.1,{field}\n5.2,7\n6.8,8\n"),
    );
    scratch.write("job.toml", CSV_JOB);
}

/// The message part for text in numeric cell B5 of data.csv.
fn b5_text(value: &str) -> String {
    format!(
        "model 'line': sheet 'data.csv' of data.csv, cell B5 in numeric column 'x' holds text '{value}', not a number"
    )
}

/// The hint given for text that reads as a number once decorated.
const STORED_AS_TEXT: &str = "it looks like a number stored as text";

/// What every refusal of a cell's text says to do.
const CELL_REMEDY: &str =
    "correct the cell, clear it to leave the row out, or list the column under `categorical`";

/// A number of `v`, failing with `what` when it is not one.
fn num(v: &Value, what: &str) -> f64 {
    v.as_f64()
        .unwrap_or_else(|| panic!("{what} should be a number, got {v}"))
}

/// Walks `v`, asserting that every value is a number, null, text, boolean,
/// list or object, and that no text spells a non-finite number.
fn assert_numbers_or_null(v: &Value, at: &str) {
    match v {
        Value::Number(n) => assert!(
            n.as_f64().is_some_and(f64::is_finite),
            "{at}: {n} is not finite"
        ),
        Value::String(s) => {
            let lower = s.to_ascii_lowercase();
            assert!(
                !matches!(
                    lower.as_str(),
                    "nan" | "inf" | "-inf" | "infinity" | "-infinity"
                ),
                "{at}: a non-finite number written as text {s:?}"
            );
        }
        Value::Array(items) => {
            for (i, item) in items.iter().enumerate() {
                assert_numbers_or_null(item, &format!("{at}[{i}]"));
            }
        }
        Value::Object(map) => {
            for (key, item) in map {
                assert_numbers_or_null(item, &format!("{at}.{key}"));
            }
        }
        Value::Null | Value::Bool(_) => {}
    }
}

// ---- job keys -----------------------------------------------------------

#[test]
fn numeric_given_as_a_string_says_to_write_a_list_of_column_names() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", shop_rows())]);
    s.write(
        "job.toml",
        &xlsx_job("response = \"y\"\nnumeric = \"price\""),
    );
    assert_refused(
        &s,
        2,
        &[
            "job file job.toml is not valid",
            "line 8",
            "numeric = \"price\"",
            "a list of column names, such as [\"price\"]",
        ],
    );
}

#[test]
fn header_row_given_as_a_word_says_to_write_a_row_number() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", shop_rows())]);
    s.write(
        "job.toml",
        "[input]\nworkbook = \"data.xlsx\"\nheader_row = \"one\"\n\n[[model]]\nname = \"m\"\nresponse = \"y\"\nnumeric = [\"price\"]\n",
    );
    assert_refused(
        &s,
        2,
        &[
            "job file job.toml is not valid",
            "line 3",
            "header_row = \"one\"",
            "counted from 1",
            "a whole number",
        ],
    );
}

#[test]
fn model_without_a_response_is_a_job_file_error_at_its_table() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", shop_rows())]);
    s.write("job.toml", &xlsx_job("numeric = [\"price\", \"area\"]"));
    // Line 5 is the `[[model]]` header of the model missing the key.
    assert_refused(
        &s,
        2,
        &[
            "job file job.toml is not valid",
            "line 5",
            "[[model]]",
            "missing field `response`",
        ],
    );
}

#[test]
fn misspelt_role_key_categorial_suggests_categorical() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", shop_rows())]);
    s.write(
        "job.toml",
        &xlsx_job("response = \"y\"\nnumeric = [\"price\"]\ncategorial = [\"region\"]"),
    );
    assert_refused(
        &s,
        2,
        &[
            "job file job.toml is not valid",
            "line 9",
            "unknown field `categorial`",
            "did you mean `categorical`?",
        ],
    );
}

// ---- unreadable or empty inputs ----------------------------------------

#[test]
fn workbook_truncated_to_half_its_bytes_is_refused() {
    let s = Scratch::new();
    let path = s.workbook("data.xlsx", &[("records", shop_rows())]);
    let bytes = std::fs::read(&path).unwrap();
    std::fs::write(&path, &bytes[..bytes.len() / 2]).unwrap();
    s.write(
        "job.toml",
        &xlsx_job("response = \"y\"\nnumeric = [\"price\"]"),
    );
    assert_refused(
        &s,
        1,
        &[
            "cannot open input data.xlsx: it is not a readable workbook",
            "check `input.workbook` in the job file",
        ],
    );
}

#[test]
fn plain_text_note_named_xlsx_is_refused_naming_the_file() {
    let s = Scratch::new();
    s.write(
        "data.xlsx",
        "Shop figures for the spring review.\nPrices and areas to follow.\n",
    );
    s.write(
        "job.toml",
        &xlsx_job("response = \"y\"\nnumeric = [\"price\"]"),
    );
    assert_refused(
        &s,
        1,
        &[
            "cannot open input data.xlsx: it is not a readable workbook",
            "check `input.workbook` in the job file",
        ],
    );
}

#[test]
fn sheet_with_only_a_header_has_no_usable_rows() {
    let s = Scratch::new();
    s.workbook(
        "data.xlsx",
        &[("records", vec![vec![T("y"), T("price"), T("area")]])],
    );
    s.write(
        "job.toml",
        &xlsx_job("response = \"y\"\nnumeric = [\"price\"]"),
    );
    assert_refused(
        &s,
        1,
        &[
            "model 'shops': no usable rows in sheet 'records' of data.xlsx",
            "'y', 'price'",
        ],
    );
}

#[test]
fn sheet_with_nothing_at_all_has_no_column_names() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", vec![]), ("notes", shop_rows())]);
    s.write(
        "job.toml",
        &xlsx_job("response = \"y\"\nnumeric = [\"price\"]"),
    );
    assert_refused(
        &s,
        1,
        &["sheet 'records' of data.xlsx has no column names in row 1; set the row that holds them: `header_row`"],
    );
}

#[test]
fn header_with_stray_spaces_is_found_by_its_trimmed_name() {
    let s = Scratch::new();
    let mut rows = shop_rows();
    rows[0][1] = T(" price ");
    s.workbook("data.xlsx", &[("records", rows)]);
    s.write(
        "job.toml",
        &xlsx_job("response = \"y\"\nnumeric = [\"price\"]"),
    );
    let json = run_ok(
        &s,
        &[
            "data.xlsx",
            "job-report.json",
            "job-report.xlsx",
            "job.toml",
        ],
        "job-report.json",
    );
    let model = &json["models"][0];
    assert_eq!(model["n"], 10);
    let terms: Vec<&str> = model["coefficients"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c["term"].as_str().unwrap())
        .collect();
    assert_eq!(terms, ["Intercept", "price"]);
}

// ---- cells that are not numbers ----------------------------------------

#[test]
fn csv_text_true_in_a_numeric_column_names_the_cell() {
    let s = Scratch::new();
    csv_with_x_field(&s, "TRUE");
    assert_refused(&s, 1, &[&b5_text("TRUE"), CELL_REMEDY]);
    let out = sheetfit(&s.path(""), &["run", "job.toml"]);
    assert!(!stderr(&out).contains(STORED_AS_TEXT), "{}", stderr(&out));
}

#[test]
fn thousands_separator_text_is_counted_and_read_with_text_numbers() {
    assert_text_number("\"1,234\"", 1234.0);
}

#[test]
fn accounting_negative_in_brackets_is_counted_and_read_with_text_numbers() {
    assert_text_number("\"(1,234)\"", -1234.0);
}

#[test]
fn percent_text_is_counted_and_read_with_text_numbers() {
    assert_text_number("12%", 0.12);
}

#[test]
fn currency_text_is_counted_and_read_with_text_numbers() {
    assert_text_number("\"$1,200\"", 1200.0);
}

/// Text in cell B5 of column x that reads as `value`: refused with a count,
/// the cell and the key (never the advice to make the column categorical),
/// then read with `text_numbers = "read"` and listed in the JSON.
fn assert_text_number(field: &str, value: f64) {
    let s = Scratch::new();
    csv_with_x_field(&s, field);
    assert_refused(
        &s,
        1,
        &[
            "sheet 'data.csv' of data.csv: column 'x' holds 1 text cell where numbers belong (B5); all read as numbers; write `text_numbers = \"read\"` under [input] to read them as numbers",
        ],
    );
    let out = sheetfit(&s.path(""), &["run", "job.toml"]);
    assert!(!stderr(&out).contains("categorical"), "{}", stderr(&out));
    s.write(
        "job.toml",
        &CSV_JOB.replace("[input]\n", "[input]\ntext_numbers = \"read\"\n"),
    );
    let out = sheetfit(&s.path(""), &["run", "job.toml"]);
    assert_status(&out, 0);
    let json = read_json(&s.path("job-report.json"));
    assert_eq!(json["run"]["text_numbers_read"][0]["column"], "x");
    assert_eq!(json["run"]["text_numbers_read"][0]["cells"], 1);
    let x5 = json["models"][0]["residuals"]
        .as_array()
        .unwrap()
        .iter()
        .find(|r| r["row"] == 5)
        .unwrap();
    // Fitted = b0 + b1 x: the row's x is the number the text reads as.
    let b = &json["models"][0]["coefficients"];
    let fitted = b[0]["estimate"].as_f64().unwrap() + b[1]["estimate"].as_f64().unwrap() * value;
    let got = x5["fitted"].as_f64().unwrap();
    assert!(
        (got - fitted).abs() <= 1e-9 * fitted.abs().max(1.0),
        "{got} vs {fitted}"
    );
}

#[test]
fn iso_date_text_in_a_numeric_csv_column_names_the_cell() {
    let s = Scratch::new();
    csv_with_x_field(&s, "2024-01-31");
    assert_refused(&s, 1, &[&b5_text("2024-01-31"), CELL_REMEDY]);
}

#[test]
fn nan_in_a_numeric_csv_column_is_refused_as_not_finite() {
    let s = Scratch::new();
    csv_with_x_field(&s, "NaN");
    assert_refused(
        &s,
        1,
        &[
            "model 'line': sheet 'data.csv' of data.csv, cell B5 in column 'x' holds NaN, \
           which is not a finite number",
        ],
    );
}

#[test]
fn inf_in_a_numeric_csv_column_is_refused_as_not_finite() {
    let s = Scratch::new();
    csv_with_x_field(&s, "inf");
    assert_refused(
        &s,
        1,
        &[
            "model 'line': sheet 'data.csv' of data.csv, cell B5 in column 'x' holds inf, \
           which is not a finite number",
        ],
    );
}

#[test]
fn not_finite_refusal_says_what_to_do() {
    let s = Scratch::new();
    csv_with_x_field(&s, "NaN");
    assert_refused(&s, 1, &["cell B5", "NaN", "clear it to leave the row out"]);
}

#[test]
fn all_blank_predictor_column_leaves_no_usable_rows_naming_the_columns() {
    let s = Scratch::new();
    let mut rows = shop_rows();
    rows[0].push(T("footfall"));
    for row in rows.iter_mut().skip(1) {
        row.push(Blank);
    }
    s.workbook("data.xlsx", &[("records", rows)]);
    s.write(
        "job.toml",
        &xlsx_job("response = \"y\"\nnumeric = [\"price\", \"footfall\"]"),
    );
    assert_refused(
        &s,
        1,
        &[
            "model 'shops': no usable rows in sheet 'records' of data.xlsx",
            "every row has a blank cell in at least one of the columns 'y', 'price', 'footfall'",
        ],
    );
}

// ---- numbers at the edge and degenerate fits -----------------------------

/// Six rows of y and x around 1e300, written into data.csv, and the job.
fn huge_csv(s: &Scratch) {
    s.write(
        "data.csv",
        "y,x\n1.1e300,1.0e300\n2.3e300,2.1e300\n2.9e300,3.0e300\n\
         4.2e300,4.1e300\n5.0e300,4.9e300\n6.1e300,6.2e300\n",
    );
    s.write("job.toml", CSV_JOB);
}

#[test]
fn magnitudes_near_1e300_do_not_crash_and_every_statistic_is_a_number_or_null() {
    let s = Scratch::new();
    huge_csv(&s);
    let json = run_ok(
        &s,
        &["data.csv", "job-report.json", "job-report.xlsx", "job.toml"],
        "job-report.json",
    );
    assert_numbers_or_null(&json, "results");
    let model = &json["models"][0];
    assert_eq!(model["n"], 6);
    // The sums of squares overflow; they are reported as unknown, not as
    // infinities.
    assert!(model["fit"]["sse"].is_null(), "{}", model["fit"]);
    let x = &model["coefficients"][1];
    assert_eq!(x["term"], "x");
    assert!(num(&x["estimate"], "estimate of x").is_finite());
}

#[test]
fn magnitudes_near_1e300_report_no_statistic_derived_from_an_overflow() {
    let s = Scratch::new();
    huge_csv(&s);
    let json = run_ok(
        &s,
        &["data.csv", "job-report.json", "job-report.xlsx", "job.toml"],
        "job-report.json",
    );
    let model = &json["models"][0];
    for c in model["coefficients"].as_array().unwrap() {
        if c["std_error"].is_null() {
            assert!(c["t_stat"].is_null(), "t without a standard error: {c}");
            assert!(c["p_value"].is_null(), "p without a standard error: {c}");
        }
    }
    if model["fit"]["sigma"].is_null() {
        for r in model["residuals"].as_array().unwrap() {
            assert!(
                r["standardized_residual"].is_null() && r["cooks_distance"].is_null(),
                "scaled residuals without sigma: {r}"
            );
        }
    }
}

#[test]
fn constant_predictor_column_is_fitted_and_listed_as_aliased() {
    let s = Scratch::new();
    let mut rows = shop_rows();
    rows[0].push(T("floors"));
    for row in rows.iter_mut().skip(1) {
        row.push(N(2.0));
    }
    s.workbook("data.xlsx", &[("records", rows)]);
    s.write(
        "job.toml",
        &xlsx_job("response = \"y\"\nnumeric = [\"price\", \"floors\"]"),
    );
    let json = run_ok(
        &s,
        &[
            "data.xlsx",
            "job-report.json",
            "job-report.xlsx",
            "job.toml",
        ],
        "job-report.json",
    );
    let model = &json["models"][0];
    assert_eq!(model["aliased"], serde_json::json!(["floors"]));
    let terms: Vec<&str> = model["coefficients"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c["term"].as_str().unwrap())
        .collect();
    assert_eq!(terms, ["Intercept", "price"]);
    assert_eq!(model["n"], 10);
}

#[test]
fn level_with_a_single_row_fits_that_row_exactly_with_leverage_one() {
    let s = Scratch::new();
    let mut rows = shop_rows();
    // Sheet row 8 becomes the only "Lake" row.
    rows[7][3] = T("Lake");
    s.workbook("data.xlsx", &[("records", rows)]);
    s.write(
        "job.toml",
        &xlsx_job("response = \"y\"\nnumeric = [\"price\"]\ncategorical = { region = \"Hill\" }"),
    );
    let json = run_ok(
        &s,
        &[
            "data.xlsx",
            "job-report.json",
            "job-report.xlsx",
            "job.toml",
        ],
        "job-report.json",
    );
    let residuals = json["models"][0]["residuals"].as_array().unwrap();
    let lake = residuals
        .iter()
        .find(|r| r["row"] == 8)
        .expect("sheet row 8 among the residuals");
    assert!(
        (num(&lake["leverage"], "leverage") - 1.0).abs() < 1e-9,
        "{lake}"
    );
    assert!(num(&lake["residual"], "residual").abs() < 1e-9, "{lake}");
    // A row with leverage 1 has no standardized residual or Cook's distance.
    assert!(lake["standardized_residual"].is_null(), "{lake}");
    assert!(lake["cooks_distance"].is_null(), "{lake}");
    for r in residuals.iter().filter(|r| r["row"] != 8) {
        assert!(num(&r["leverage"], "leverage") < 1.0 - 1e-9, "{r}");
    }
}

#[test]
fn perfect_fit_succeeds_with_the_exact_coefficients() {
    let s = Scratch::new();
    s.write("data.csv", "y,x\n3,1\n5,2\n7,3\n9,4\n11,5\n13,6\n");
    s.write("job.toml", CSV_JOB);
    let json = run_ok(
        &s,
        &["data.csv", "job-report.json", "job-report.xlsx", "job.toml"],
        "job-report.json",
    );
    assert_numbers_or_null(&json, "results");
    let model = &json["models"][0];
    let coefficients = model["coefficients"].as_array().unwrap();
    assert!((num(&coefficients[0]["estimate"], "intercept") - 1.0).abs() < 1e-12);
    assert!((num(&coefficients[1]["estimate"], "slope") - 2.0).abs() < 1e-12);
    assert_eq!(num(&model["fit"]["r_squared"], "R²"), 1.0);
}

#[test]
fn perfect_fit_has_sigma_zero_and_no_t_or_p() {
    let s = Scratch::new();
    s.write("data.csv", "y,x\n3,1\n5,2\n7,3\n9,4\n11,5\n13,6\n");
    s.write("job.toml", CSV_JOB);
    let json = run_ok(
        &s,
        &["data.csv", "job-report.json", "job-report.xlsx", "job.toml"],
        "job-report.json",
    );
    let model = &json["models"][0];
    assert_eq!(num(&model["fit"]["sigma"], "sigma"), 0.0);
    for c in model["coefficients"].as_array().unwrap() {
        assert!(c["t_stat"].is_null(), "t of a perfect fit: {c}");
        assert!(c["p_value"].is_null(), "p of a perfect fit: {c}");
    }
}

// ---- output --------------------------------------------------------------

#[test]
fn output_folder_that_does_not_exist_is_created() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", shop_rows())]);
    s.write(
        "job.toml",
        &format!(
            "[output]\nworkbook = \"reports/spring/shops.xlsx\"\n{}",
            xlsx_job("response = \"y\"\nnumeric = [\"price\", \"area\"]")
        ),
    );
    let json = run_ok(
        &s,
        &[
            "data.xlsx",
            "job.toml",
            "reports/spring/shops.json",
            "reports/spring/shops.xlsx",
        ],
        "reports/spring/shops.json",
    );
    assert_eq!(json["models"][0]["name"], "shops");
    assert_eq!(json["models"][0]["n"], 10);
}
