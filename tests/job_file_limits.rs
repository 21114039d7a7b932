//! Job-file errors found when the job is read, not after the whole fit:
//! texts longer than a report cell holds, `{period}` in the output path of a
//! job without dates. Both `run` and `check` stop with exit status 2,
//! naming the key, and write nothing.

mod common;

use common::{assert_run_and_check_fail, small_xy_workbook as data, Cell, Scratch};
use Cell::{N, T};

#[test]
fn a_title_longer_than_a_cell_is_a_job_file_error() {
    let s = Scratch::new();
    data(&s);
    let title = "t".repeat(40_000);
    s.write(
        "job.toml",
        &format!(
            "title = \"{title}\"\n[input]\nworkbook = \"data.xlsx\"\n\n\
             [[model]]\nname = \"m\"\nresponse = \"y\"\nnumeric = [\"x\"]\n"
        ),
    );
    assert_run_and_check_fail(
        &s,
        2,
        &["key `title`: is 40000 characters long, more than the 32767 a report cell holds"],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn a_model_name_longer_than_a_cell_is_a_job_file_error() {
    let s = Scratch::new();
    data(&s);
    let name = "m".repeat(33_000);
    s.write(
        "job.toml",
        &format!(
            "[input]\nworkbook = \"data.xlsx\"\n\n\
             [[model]]\nname = \"{name}\"\nresponse = \"y\"\nnumeric = [\"x\"]\n"
        ),
    );
    assert_run_and_check_fail(
        &s,
        2,
        &["key `model[1].name`: is 33000 characters long"],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn period_placeholder_without_dates_is_a_job_file_error() {
    let s = Scratch::new();
    data(&s);
    s.write(
        "job.toml",
        "[input]\nworkbook = \"data.xlsx\"\n[output]\nworkbook = \"report-{period}.xlsx\"\n\n\
         [[model]]\nname = \"m\"\nresponse = \"y\"\nnumeric = [\"x\"]\n",
    );
    assert_run_and_check_fail(
        &s,
        2,
        &["key `output.workbook`: uses {period}, but no model has a date column"],
        &["data.xlsx", "job.toml"],
    );
}

// ---------------------------------------------------------------------------
// Bounded work: models per job, levels per categorical, suggested models,
// comparisons
// ---------------------------------------------------------------------------

fn grouped(s: &Scratch, groups: usize, rows: usize) {
    let mut table = vec![vec![T("x"), T("z"), T("group"), T("y")]];
    for i in 0..rows {
        let x = f64::from(i as u32);
        let z = ((x * 12.9898).sin() * 43_758.545_3).fract();
        let noise = ((x * 78.233).sin() * 12_345.678_9).fract() - 0.5;
        table.push(vec![
            N(x),
            N(z),
            Cell::S(format!("g{}", i % groups)),
            N(1.0 + 2.0 * x + (i % groups) as f64 + noise),
        ]);
    }
    s.workbook("data.xlsx", &[("records", table)]);
}

#[test]
fn more_models_than_max_models_is_a_job_file_error() {
    let s = Scratch::new();
    data(&s);
    let model = "\n[[model]]\nname = \"m{k}\"\nresponse = \"y\"\nnumeric = [\"x\"]\n";
    let models: String = (0..3)
        .map(|k| model.replace("{k}", &k.to_string()))
        .collect();
    s.write(
        "job.toml",
        &format!("max_models = 2\n[input]\nworkbook = \"data.xlsx\"\n{models}"),
    );
    assert_run_and_check_fail(
        &s,
        2,
        &["key `model`: 3 models are listed, more than the limit of 2; split the job, or raise `max_models`"],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn a_categorical_with_more_levels_than_max_levels_stops_the_job() {
    let s = Scratch::new();
    grouped(&s, 5, 30);
    s.write(
        "job.toml",
        "[input]\nworkbook = \"data.xlsx\"\nmax_levels = 3\n\n\
         [[model]]\nname = \"m\"\nresponse = \"y\"\nnumeric = [\"x\"]\ncategorical = [\"group\"]\n",
    );
    assert_run_and_check_fail(
        &s,
        1,
        &["model 'm': categorical column 'group' in sheet 'records' of data.xlsx has 5 levels in the 30 rows used, more than the limit of 3;",
          "raise `max_levels` under [input]"],
        &["data.xlsx", "job.toml"],
    );
}

#[test]
fn a_categorical_with_nearly_a_level_per_row_stops_the_job() {
    let s = Scratch::new();
    grouped(&s, 40, 60);
    s.write(
        "job.toml",
        "[input]\nworkbook = \"data.xlsx\"\n\n\
         [[model]]\nname = \"m\"\nresponse = \"y\"\ncategorical = [\"group\"]\n",
    );
    assert_run_and_check_fail(
        &s,
        1,
        &["has 40 levels in the 60 rows used, more than half as many levels as rows"],
        &["data.xlsx", "job.toml"],
    );
}

fn model_names(s: &Scratch) -> Vec<String> {
    let json = common::read_json(&s.path("job-report.json"));
    json["models"]
        .as_array()
        .unwrap()
        .iter()
        .map(|m| m["name"].as_str().unwrap().to_string())
        .collect()
}

#[test]
fn suggest_false_turns_the_suggested_models_off_at_the_top_or_per_model() {
    let s = Scratch::new();
    grouped(&s, 3, 30);
    let models = "\n[[model]]\nname = \"a\"\nresponse = \"y\"\nnumeric = [\"x\", \"z\"]\n\
                  \n[[model]]\nname = \"b\"\nresponse = \"y\"\nnumeric = [\"x\", \"z\"]\nsuggest = true\n";
    s.write(
        "job.toml",
        &format!("[input]\nworkbook = \"data.xlsx\"\n{models}"),
    );
    let out = common::sheetfit(&s.path(""), &["run", "job.toml"]);
    assert_eq!(out.status.code(), Some(0), "{}", common::stderr(&out));
    assert_eq!(
        model_names(&s),
        ["a", "b", "a (suggested)", "b (suggested)"]
    );
    s.write(
        "job.toml",
        &format!("suggest = false\n[input]\nworkbook = \"data.xlsx\"\n{models}"),
    );
    let out = common::sheetfit(&s.path(""), &["run", "--overwrite", "job.toml"]);
    assert_eq!(out.status.code(), Some(0), "{}", common::stderr(&out));
    assert_eq!(model_names(&s), ["a", "b", "b (suggested)"]);
}

#[test]
fn pairs_that_are_not_nested_are_compared_among_the_first_twenty_models() {
    let s = Scratch::new();
    grouped(&s, 3, 30);
    let models: String = (0..22)
        .map(|k| {
            let column = if k % 2 == 0 { "x" } else { "z" };
            format!("\n[[model]]\nname = \"m{k}\"\nresponse = \"y\"\nnumeric = [\"{column}\"]\n")
        })
        .collect();
    s.write(
        "job.toml",
        &format!("suggest = false\n[input]\nworkbook = \"data.xlsx\"\n{models}"),
    );
    let out = common::sheetfit(&s.path(""), &["run", "job.toml"]);
    assert_eq!(out.status.code(), Some(0), "{}", common::stderr(&out));
    let json = common::read_json(&s.path("job-report.json"));
    // Of the 231 pairs, those of models 21 and 22 (m20, m21) with a model
    // on the other column are left out: 10 + 11.
    assert_eq!(json["comparisons_left_out"], 21);
    assert_eq!(json["comparisons"].as_array().unwrap().len(), 210);
    // The Comparison sheet says so below its table.
    let mut book = calamine::open_workbook_auto(s.path("job-report.xlsx")).unwrap();
    let sheet = calamine::Reader::worksheet_range(&mut book, "Comparison").unwrap();
    let note = sheet
        .get_value((212, 0))
        .map(|v| v.to_string())
        .unwrap_or_default();
    assert!(
        note.starts_with("21 pairs of models that are not nested are not compared"),
        "{note}"
    );
}
