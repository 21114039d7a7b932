//! Bad input, one case per test: each pins the exit status, the key parts of
//! the message, and that nothing was written (no report, no JSON, no
//! temporary `.sheetfit-*` file). A few success-path tests pin how blank
//! cells, `init` and several jobs on one command line behave.

mod common;

use common::{
    assert_command_fails, assert_files, assert_run_and_check_fail, assert_status,
    assert_stderr_has, read_json, sheetfit, stderr, Cell, Scratch,
};
use Cell::{Blank, N, T};

/// Ten data rows of a small, well-conditioned data set: response `y`, numeric
/// `price` and `area`, categorical `region`. Header in row 1.
fn sales_rows() -> Vec<Vec<Cell>> {
    let mut rows = vec![vec![T("y"), T("price"), T("area"), T("region")]];
    let data: [(f64, f64, f64, &'static str); 10] = [
        (12.1, 3.0, 40.0, "North"),
        (14.9, 2.5, 55.0, "South"),
        (10.2, 4.0, 35.0, "West"),
        (17.8, 2.0, 70.0, "North"),
        (13.3, 3.5, 50.0, "South"),
        (11.0, 4.5, 45.0, "West"),
        (16.4, 2.2, 65.0, "North"),
        (15.2, 3.1, 60.0, "South"),
        (9.7, 5.0, 30.0, "West"),
        (18.5, 1.8, 75.0, "North"),
    ];
    for (y, price, area, region) in data {
        rows.push(vec![N(y), N(price), N(area), T(region)]);
    }
    rows
}

/// A job reading sheet `records` of data.xlsx with one model whose body is
/// `model`.
fn job_with(model: &str) -> String {
    format!(
        "[input]\nworkbook = \"data.xlsx\"\nsheet = \"records\"\n\n[[model]]\nname = \"sales\"\n{model}\n"
    )
}

#[test]
fn text_in_numeric_column_names_sheet_cell_and_value() {
    let s = Scratch::new();
    let mut rows = sales_rows();
    // Column C (area), sheet row 4 = the third data row.
    rows[3][2] = T("n/a");
    s.workbook("data.xlsx", &[("records", rows)]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\nnumeric = [\"price\", \"area\"]"),
    );
    assert_run_and_check_fail(
        &s,
        1,
        &[
            "model 'sales': sheet 'records' of data.xlsx, cell C4 in numeric column 'area' \
             holds text 'n/a', not a number",
            "list the column under `categorical`",
        ],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn text_in_numeric_response_names_the_response_cell() {
    let s = Scratch::new();
    let mut rows = sales_rows();
    rows[9][0] = T("about 16");
    s.workbook("data.xlsx", &[("records", rows)]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\nnumeric = [\"price\"]"),
    );
    assert_run_and_check_fail(
        &s,
        1,
        &["cell A10 in numeric column 'y' holds text 'about 16', not a number"],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn text_in_numeric_csv_column_names_the_file_and_cell() {
    let s = Scratch::new();
    s.write("data.csv", "y,x\n1,2\n2,3.5\n3,seven\n4,8\n5,9\n");
    s.write(
        "job.toml",
        "[input]\nworkbook = \"data.csv\"\n\n[[model]]\nname = \"line\"\nresponse = \"y\"\nnumeric = [\"x\"]\n",
    );
    assert_run_and_check_fail(
        &s,
        1,
        &["sheet 'data.csv' of data.csv, cell B4 in numeric column 'x' holds text 'seven'"],
        &["data.csv", "job.toml"],
    );
}

#[test]
fn unknown_column_lists_the_columns_and_suggests_the_closest() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", sales_rows())]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\nnumeric = [\"prcie\"]"),
    );
    assert_run_and_check_fail(
        &s,
        1,
        &[
            "model 'sales': sheet 'records' of data.xlsx has no column 'prcie' \
             (did you mean 'price'?); its columns are: 'y', 'price', 'area', 'region'",
        ],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn unknown_column_unlike_any_name_has_no_suggestion() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", sales_rows())]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\ncategorical = [\"quarter\"]"),
    );
    assert_run_and_check_fail(
        &s,
        1,
        &["has no column 'quarter'; its columns are: 'y', 'price', 'area', 'region'"],
        &["data.xlsx", "job.toml"],
    );
    let out = sheetfit(&s.path(""), &["run", "job.toml"]);
    assert!(!stderr(&out).contains("did you mean"), "{}", stderr(&out));
}

#[test]
fn categorical_baseline_that_is_not_a_level_lists_the_levels() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", sales_rows())]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\nnumeric = [\"price\"]\ncategorical = { region = \"East\" }"),
    );
    assert_run_and_check_fail(
        &s,
        1,
        &[
            "model 'sales': baseline 'East' is not a level of column 'region' in the rows used; \
             its levels are: 'North', 'South', 'West'",
        ],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn baseline_found_only_in_dropped_rows_is_not_a_level() {
    let s = Scratch::new();
    let mut rows = sales_rows();
    // The only "West" rows lose their response, so "West" is not in the rows used.
    for r in [3, 6, 9] {
        assert!(matches!(rows[r][3], T("West")), "row {r} is not a West row");
        rows[r][0] = Blank;
    }
    s.workbook("data.xlsx", &[("records", rows)]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\ncategorical = { region = \"West\" }"),
    );
    assert_run_and_check_fail(
        &s,
        1,
        &["baseline 'West' is not a level of column 'region' in the rows used; its levels are: 'North', 'South'"],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn categorical_with_one_level_is_refused() {
    let s = Scratch::new();
    let mut rows = sales_rows();
    for row in rows.iter_mut().skip(1) {
        row[3] = T("North");
    }
    s.workbook("data.xlsx", &[("records", rows)]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\nnumeric = [\"price\"]\ncategorical = [\"region\"]"),
    );
    assert_run_and_check_fail(
        &s,
        1,
        &["categorical column 'region' has only one level ('North') in the rows used"],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn missing_sheet_lists_the_sheets() {
    let s = Scratch::new();
    s.workbook(
        "data.xlsx",
        &[("2023", sales_rows()), ("2024 actuals", sales_rows())],
    );
    s.write(
        "job.toml",
        "[input]\nworkbook = \"data.xlsx\"\nsheet = \"2025\"\n\n[[model]]\nname = \"m\"\nresponse = \"y\"\nnumeric = [\"price\"]\n",
    );
    assert_run_and_check_fail(
        &s,
        1,
        &["data.xlsx has no sheet named '2025'; its sheets are: '2023', '2024 actuals'"],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn fewer_usable_rows_than_coefficients_gives_both_counts() {
    let s = Scratch::new();
    // Five data rows, two of them with a blank, leave three rows for three
    // coefficients (intercept, price, area).
    let rows = vec![
        vec![T("y"), T("price"), T("area")],
        vec![N(3.0), N(1.0), N(7.0)],
        vec![N(5.0), Blank, N(2.0)],
        vec![N(4.0), N(2.0), N(1.0)],
        vec![Blank, N(3.0), N(5.0)],
        vec![N(8.0), N(4.0), N(4.0)],
    ];
    s.workbook("data.xlsx", &[("records", rows)]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\nnumeric = [\"price\", \"area\"]"),
    );
    assert_run_and_check_fail(
        &s,
        1,
        &[
            "model 'sales' has 3 usable rows for 3 coefficients; \
             it needs at least one row more than coefficients",
            "rows with a blank in a used column are left out",
        ],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn missing_input_file_names_the_file() {
    let s = Scratch::new();
    s.write(
        "job.toml",
        "[input]\nworkbook = \"figures/q3.xlsx\"\n\n[[model]]\nname = \"m\"\nresponse = \"y\"\nnumeric = [\"x\"]\n",
    );
    assert_run_and_check_fail(
        &s,
        1,
        &["cannot open input figures/q3.xlsx: no such file; check `input.workbook` in the job file"],
        &["job.toml"],
    );
}

#[test]
fn input_that_is_not_a_workbook_is_refused() {
    let s = Scratch::new();
    s.write("data.xlsx", "y,price\n1,2\n");
    s.write(
        "job.toml",
        &job_with("response = \"y\"\nnumeric = [\"price\"]"),
    );
    assert_run_and_check_fail(
        &s,
        1,
        &["cannot open input data.xlsx: it is not a readable workbook"],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn input_path_resolves_against_the_job_folder() {
    // The job lives in jobs/ and names data.xlsx beside it; run from the
    // parent folder, the message names jobs/data.xlsx.
    let s = Scratch::new();
    s.write(
        "jobs/job.toml",
        "[input]\nworkbook = \"data.xlsx\"\n\n[[model]]\nname = \"m\"\nresponse = \"y\"\nnumeric = [\"x\"]\n",
    );
    let out = sheetfit(&s.path(""), &["run", "jobs/job.toml"]);
    assert_status(&out, 1);
    assert_stderr_has(&out, &["cannot open input jobs/data.xlsx: no such file"]);
    assert_files(&s, &["jobs/job.toml"]);
}

#[test]
fn missing_job_file_is_a_job_file_error() {
    let s = Scratch::new();
    let out = sheetfit(&s.path(""), &["run", "nowhere.toml"]);
    assert_status(&out, 2);
    assert_stderr_has(
        &out,
        &["sheetfit: error: cannot read job file nowhere.toml"],
    );
    assert_files(&s, &[]);
}

#[test]
fn malformed_toml_is_a_job_file_error_starting_with_the_path() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", sales_rows())]);
    // The string on line 7 is never closed.
    s.write(
        "job.toml",
        "[input]\nworkbook = \"data.xlsx\"\nsheet = \"records\"\n\n[[model]]\nname = \"sales\"\nresponse = \"y\nnumeric = [\"price\"]\n",
    );
    for command in ["run", "check"] {
        let out = sheetfit(&s.path(""), &[command, "job.toml"]);
        assert_status(&out, 2);
        let err = stderr(&out);
        assert!(
            err.starts_with("sheetfit: error: job file job.toml is not valid: "),
            "{err}"
        );
        assert_stderr_has(&out, &["line 7"]);
        assert_files(&s, &["data.xlsx", "job.toml"]);
    }
}

#[test]
fn unknown_key_in_the_job_names_the_key() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", sales_rows())]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\nnumerics = [\"price\"]"),
    );
    assert_run_and_check_fail(
        &s,
        2,
        &[
            "job file job.toml is not valid",
            "unknown field `numerics`",
            "`numeric`",
        ],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn unknown_key_in_the_input_table_names_the_key() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", sales_rows())]);
    s.write(
        "job.toml",
        "[input]\nworkbook = \"data.xlsx\"\nheader = 1\n\n[[model]]\nname = \"m\"\nresponse = \"y\"\nnumeric = [\"price\"]\n",
    );
    assert_run_and_check_fail(
        &s,
        2,
        &["line 3", "unknown field `header`", "`header_row`"],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn response_also_listed_as_predictor_is_a_job_file_error() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", sales_rows())]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\nnumeric = [\"price\", \"y\"]"),
    );
    assert_run_and_check_fail(
        &s,
        2,
        &["job file job.toml, key `model[1].numeric`: 'y' is the response; a column cannot also be a predictor"],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn response_also_listed_as_categorical_is_a_job_file_error() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", sales_rows())]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\ncategorical = { y = \"12.1\" }"),
    );
    assert_run_and_check_fail(
        &s,
        2,
        &["key `model[1].categorical`: 'y' is the response"],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn predictor_listed_under_two_roles_is_a_job_file_error() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", sales_rows())]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\nnumeric = [\"price\"]\ncategorical = [\"price\"]"),
    );
    assert_run_and_check_fail(
        &s,
        2,
        &["key `model[1].categorical`: 'price' is listed twice; list each predictor once, under one role"],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn duplicate_model_names_are_a_job_file_error() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", sales_rows())]);
    // Names are compared after trimming, so "sales " repeats "sales".
    s.write(
        "job.toml",
        &format!(
            "{}\n[[model]]\nname = \"price only\"\nresponse = \"y\"\nnumeric = [\"price\"]\n\n\
             [[model]]\nname = \"sales \"\nresponse = \"y\"\nnumeric = [\"area\"]\n",
            job_with("response = \"y\"\nnumeric = [\"price\", \"area\"]")
        ),
    );
    assert_run_and_check_fail(
        &s,
        2,
        &["job file job.toml, key `model[3].name`: the name 'sales' is used by an earlier model; model names must be unique"],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn job_without_models_is_a_job_file_error() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", sales_rows())]);
    s.write("job.toml", "[input]\nworkbook = \"data.xlsx\"\n");
    assert_run_and_check_fail(
        &s,
        2,
        &["key `model`: no models are listed; add at least one [[model]] table"],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn confidence_outside_zero_and_one_is_a_job_file_error() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", sales_rows())]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\nnumeric = [\"price\"]\nconfidence = 95.0"),
    );
    assert_run_and_check_fail(
        &s,
        2,
        &["key `model[1].confidence`: 95 is not between 0 and 1; write e.g. 0.95 for 95%"],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn header_row_zero_is_a_job_file_error() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", sales_rows())]);
    s.write(
        "job.toml",
        "[input]\nworkbook = \"data.xlsx\"\nheader_row = 0\n\n[[model]]\nname = \"m\"\nresponse = \"y\"\nnumeric = [\"price\"]\n",
    );
    assert_run_and_check_fail(
        &s,
        2,
        &["key `input.header_row`: rows are counted from 1"],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn output_not_ending_in_xlsx_is_a_job_file_error() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", sales_rows())]);
    s.write(
        "job.toml",
        &format!(
            "[output]\nworkbook = \"report.csv\"\n{}",
            job_with("response = \"y\"\nnumeric = [\"price\"]")
        ),
    );
    assert_run_and_check_fail(
        &s,
        2,
        &["key `output.workbook`: 'report.csv' must end in .xlsx"],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn error_value_in_a_used_numeric_cell_names_cell_and_value() {
    let s = Scratch::new();
    let mut rows = sales_rows();
    rows[4][1] = T("#N/A");
    s.workbook("data.xlsx", &[("records", rows)]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\nnumeric = [\"price\", \"area\"]"),
    );
    assert_run_and_check_fail(
        &s,
        1,
        &[
            "model 'sales': sheet 'records' of data.xlsx, cell B5 in column 'price' holds the \
             error value #N/A; fix the formula or clear the cell to leave the row out",
        ],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn error_value_in_a_used_categorical_cell_names_cell_and_value() {
    let s = Scratch::new();
    let mut rows = sales_rows();
    rows[8][3] = T("#REF!");
    s.workbook("data.xlsx", &[("records", rows)]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\ncategorical = [\"region\"]"),
    );
    assert_run_and_check_fail(
        &s,
        1,
        &["cell D9 in column 'region' holds the error value #REF!"],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn error_value_in_an_unused_column_does_not_stop_the_run() {
    let s = Scratch::new();
    let mut rows = sales_rows();
    rows[4][2] = T("#DIV/0!");
    s.workbook("data.xlsx", &[("records", rows)]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\nnumeric = [\"price\"]"),
    );
    let out = sheetfit(&s.path(""), &["run", "job.toml"]);
    assert_status(&out, 0);
    let json = read_json(&s.path("job-report.json"));
    assert_eq!(json["models"][0]["n"], 10);
    assert_eq!(json["models"][0]["dropped_rows"], serde_json::json!([]));
}

#[test]
fn duplicate_header_names_both_cells() {
    let s = Scratch::new();
    let mut rows = sales_rows();
    rows[0][3] = T("price");
    s.workbook("data.xlsx", &[("records", rows)]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\nnumeric = [\"area\"]"),
    );
    assert_run_and_check_fail(
        &s,
        1,
        &["sheet 'records' of data.xlsx: cells B1 and D1 both name a column 'price'; give each column its own name"],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn header_row_below_the_data_is_reported() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", sales_rows())]);
    s.write(
        "job.toml",
        "[input]\nworkbook = \"data.xlsx\"\nheader_row = 40\n\n[[model]]\nname = \"m\"\nresponse = \"y\"\nnumeric = [\"price\"]\n",
    );
    assert_run_and_check_fail(
        &s,
        1,
        &["sheet 'records' of data.xlsx has no column names in row 40; set the row that holds them: `header_row`"],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn output_path_equal_to_the_input_is_refused_and_the_input_is_unchanged() {
    let s = Scratch::new();
    let input = s.workbook("data.xlsx", &[("records", sales_rows())]);
    let before = std::fs::read(&input).unwrap();
    // Spelled differently from `input.workbook`, so only a comparison of
    // the files themselves catches it.
    s.write(
        "job.toml",
        &format!(
            "[output]\nworkbook = \"./data.xlsx\"\n{}",
            job_with("response = \"y\"\nnumeric = [\"price\"]")
        ),
    );
    assert_run_and_check_fail(
        &s,
        1,
        &["the output path ./data.xlsx is the input workbook or the job file itself; choose another `output.workbook` in the job file"],
        &["data.xlsx", "job.toml"],
    );
    assert_eq!(std::fs::read(&input).unwrap(), before, "input changed");
}

#[test]
fn output_path_that_is_a_folder_is_refused() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", sales_rows())]);
    s.write("out.xlsx/keep.txt", "not a report");
    s.write(
        "job.toml",
        &format!(
            "[output]\nworkbook = \"out.xlsx\"\n{}",
            job_with("response = \"y\"\nnumeric = [\"price\"]")
        ),
    );
    assert_run_and_check_fail(
        &s,
        1,
        &["the output path out.xlsx is a folder"],
        &["data.xlsx", "job.toml", "out.xlsx/keep.txt"],
    );
}

/// `/sys` refuses new files even to the superuser, so this holds however
/// the tests are run (a folder with its write permission removed does not
/// stop root).
#[cfg(target_os = "linux")]
#[test]
fn output_folder_without_write_permission_is_refused_and_nothing_is_left() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", sales_rows())]);
    s.write(
        "job.toml",
        &format!(
            "[output]\nworkbook = \"/sys/sheetfit-report.xlsx\"\n{}",
            job_with("response = \"y\"\nnumeric = [\"price\"]")
        ),
    );
    // `check` writes nothing, so it cannot know; `run` must refuse.
    assert_command_fails(
        &s,
        "run",
        1,
        &["cannot write /sys: permission denied; set `output.workbook` to a folder this user may write to"],
        &["data.xlsx", "job.toml"],
    );
    assert!(!std::path::Path::new("/sys/sheetfit-report.xlsx").exists());
}

#[test]
fn results_json_path_that_is_a_folder_is_refused_before_anything_is_written() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", sales_rows())]);
    s.write("report.json/keep.txt", "not a results file");
    s.write(
        "job.toml",
        &format!(
            "[output]\nworkbook = \"report.xlsx\"\n{}",
            job_with("response = \"y\"\nnumeric = [\"price\"]")
        ),
    );
    assert_run_and_check_fail(
        &s,
        1,
        &["the output path report.json is a folder"],
        &["data.xlsx", "job.toml", "report.json/keep.txt"],
    );
}

#[test]
fn blank_cells_drop_the_row_and_the_json_lists_the_sheet_rows() {
    let s = Scratch::new();
    let mut rows = sales_rows();
    rows[3][0] = Blank; // sheet row 4: response blank
    rows[6][2] = Blank; // sheet row 7: predictor blank
    rows[7][3] = T("   "); // sheet row 8: only spaces, counts as blank
    rows[9][1] = Blank; // sheet row 10: unused column, row kept
    s.workbook("data.xlsx", &[("records", rows)]);
    s.write(
        "job.toml",
        &job_with("response = \"y\"\nnumeric = [\"area\"]\ncategorical = [\"region\"]"),
    );

    let check = sheetfit(&s.path(""), &["check", "job.toml"]);
    assert_status(&check, 0);
    let summary = String::from_utf8_lossy(&check.stdout);
    assert!(
        summary.contains("model 'sales': response y, 7 usable rows"),
        "{summary}"
    );
    assert!(
        summary.contains("3 rows left out for blank cells: sheet rows 4, 7–8"),
        "{summary}"
    );
    assert_files(&s, &["data.xlsx", "job.toml"]);

    let out = sheetfit(&s.path(""), &["run", "job.toml"]);
    assert_status(&out, 0);
    assert_stderr_has(
        &out,
        &["job.toml  ok      job-report.xlsx and job-report.json"],
    );
    assert_files(
        &s,
        &[
            "data.xlsx",
            "job-report.json",
            "job-report.xlsx",
            "job.toml",
        ],
    );
    let json = read_json(&s.path("job-report.json"));
    let model = &json["models"][0];
    assert_eq!(model["dropped_rows"], serde_json::json!([4, 7, 8]));
    assert_eq!(model["n"], 7);
    assert_eq!(json["run"]["rows_read"], 10);
    let used: Vec<u64> = model["residuals"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["row"].as_u64().unwrap())
        .collect();
    assert_eq!(used, vec![2, 3, 5, 6, 9, 10, 11]);
}

#[test]
fn init_writes_a_starter_job_that_check_parses() {
    let s = Scratch::new();
    let out = sheetfit(&s.path(""), &["init"]);
    assert_status(&out, 0);
    assert_stderr_has(&out, &["wrote starter job sheetfit-job.toml"]);
    assert_files(&s, &["sheetfit-job.toml"]);

    // The template parses: check gets as far as opening its data file.
    let check = sheetfit(&s.path(""), &["check", "sheetfit-job.toml"]);
    assert_status(&check, 1);
    assert_stderr_has(&check, &["cannot open input data.xlsx: no such file"]);
    assert_files(&s, &["sheetfit-job.toml"]);
}

#[test]
fn starter_job_runs_once_its_data_exists() {
    let s = Scratch::new();
    assert_status(&sheetfit(&s.path(""), &["init", "job.toml"]), 0);
    // Invent the data the template describes.
    let mut rows = vec![vec![
        T("revenue"),
        T("floor_area"),
        T("staff_hours"),
        T("region"),
    ]];
    let regions = ["North", "South", "East"];
    for i in 0..12 {
        let area = 100.0 + 17.0 * i as f64;
        let hours = 40.0 + ((i * 7) % 11) as f64;
        let revenue = 5.0 + 0.3 * area + 1.1 * hours + (i % 3) as f64 * 2.0 + (i % 4) as f64;
        rows.push(vec![N(revenue), N(area), N(hours), T(regions[i % 3])]);
    }
    s.workbook("data.xlsx", &[("records", rows)]);
    let out = sheetfit(&s.path(""), &["run", "job.toml"]);
    assert_status(&out, 0);
    assert_files(
        &s,
        &[
            "data.xlsx",
            "job.toml",
            "reports/revenue-report.json",
            "reports/revenue-report.xlsx",
        ],
    );
    let json = read_json(&s.path("reports/revenue-report.json"));
    assert_eq!(json["title"], "Monthly revenue review");
    let names: Vec<&str> = json["models"]
        .as_array()
        .unwrap()
        .iter()
        .map(|m| m["name"].as_str().unwrap())
        .collect();
    assert_eq!(names, ["drivers", "size only"]);
    assert_eq!(json["models"][0]["baselines"][0]["level"], "North");
}

#[test]
fn init_refuses_to_overwrite_an_existing_file() {
    let s = Scratch::new();
    s.write("job.toml", "# my own job\n");
    let out = sheetfit(&s.path(""), &["init", "job.toml"]);
    assert_status(&out, 2);
    assert_stderr_has(
        &out,
        &["job.toml already exists; choose another path or remove it first"],
    );
    assert_eq!(
        std::fs::read_to_string(s.path("job.toml")).unwrap(),
        "# my own job\n"
    );
    assert_files(&s, &["job.toml"]);
}

#[test]
fn several_jobs_one_bad_one_good_writes_the_good_report_and_exits_1() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", sales_rows())]);
    s.write(
        "bad.toml",
        &job_with("response = \"y\"\nnumeric = [\"size\"]"),
    );
    s.write(
        "good.toml",
        &job_with("response = \"y\"\nnumeric = [\"price\"]"),
    );
    // The failing job comes first: it must not stop the one after it.
    let out = sheetfit(&s.path(""), &["run", "bad.toml", "good.toml"]);
    assert_status(&out, 1);
    assert_stderr_has(
        &out,
        &[
            "has no column 'size'",
            "good.toml  ok      good-report.xlsx and good-report.json",
        ],
    );
    assert_files(
        &s,
        &[
            "bad.toml",
            "data.xlsx",
            "good-report.json",
            "good-report.xlsx",
            "good.toml",
        ],
    );
    let json = read_json(&s.path("good-report.json"));
    assert_eq!(json["models"][0]["n"], 10);
}

#[test]
fn several_jobs_exit_with_the_worst_status() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("records", sales_rows())]);
    s.write("data_error.toml", &job_with("response = \"region\""));
    s.write(
        "job_error.toml",
        &job_with("response = \"y\"\nnumerc = [\"price\"]"),
    );
    s.write(
        "good.toml",
        &job_with("response = \"y\"\nnumeric = [\"area\"]"),
    );
    let out = sheetfit(
        &s.path(""),
        &["run", "job_error.toml", "good.toml", "data_error.toml"],
    );
    assert_status(&out, 2);
    assert_stderr_has(
        &out,
        &[
            "job file job_error.toml is not valid",
            "cell D2 in numeric column 'region' holds text 'North', not a number",
        ],
    );
    assert_files(
        &s,
        &[
            "data.xlsx",
            "data_error.toml",
            "good-report.json",
            "good-report.xlsx",
            "good.toml",
            "job_error.toml",
        ],
    );
}
