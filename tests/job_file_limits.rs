//! Job-file errors found when the job is read, not after the whole fit:
//! texts longer than a report cell holds, `{period}` in the output path of a
//! job without dates. Both `run` and `check` stop with exit status 2,
//! naming the key, and write nothing.

mod common;

use common::{assert_run_and_check_fail, Cell, Scratch};
use Cell::{N, T};

fn data(s: &Scratch) {
    let mut rows = vec![vec![T("x"), T("y")]];
    for i in 0..12 {
        let x = f64::from(i);
        rows.push(vec![N(x), N(1.0 + 2.0 * x + f64::from(i % 3))]);
    }
    s.workbook("data.xlsx", &[("records", rows)]);
}

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
