//! The input is read through one open file, and a change to it while it is
//! read stops the job: a workbook saved in place (its size or modification
//! time moves) or saved by writing a new file and renaming it over the old
//! one. `SHEETFIT_TEST_AFTER_READ` runs a shell command once the sheet has
//! been read and hashed, before the plan sheet is read and the input is
//! checked.

mod common;

use std::path::Path;
use std::process::{Command, Output};

use sha2::{Digest, Sha256};

use common::{assert_files, assert_status, assert_stderr_has, read_json, stderr, Cell, Scratch};
use Cell::{N, T};

/// Ten rows of `y` against `x`, and a plan sheet of two future rows.
fn sheets(shift: f64) -> Vec<(&'static str, Vec<Vec<Cell>>)> {
    let mut records = vec![vec![T("y"), T("x")]];
    for i in 0..10 {
        let x = f64::from(i);
        records.push(vec![N(shift + 2.0 * x + (x * 1.7).sin()), N(x)]);
    }
    let plan = vec![vec![T("x")], vec![N(10.0)], vec![N(11.0)]];
    vec![("records", records), ("plan", plan)]
}

const JOB: &str = "[input]\nworkbook = \"data.xlsx\"\nsheet = \"records\"\n\n\
[[model]]\nname = \"line\"\nresponse = \"y\"\nnumeric = [\"x\"]\n\n\
[model.forecast]\nplan_sheet = \"plan\"\n";

/// `sheetfit run job.toml` in the scratch folder with `hook` run after the
/// input is read.
fn run_with_hook(scratch: &Scratch, hook: &str) -> Output {
    Command::new(env!("CARGO_BIN_EXE_sheetfit"))
        .args(["run", "job.toml"])
        .current_dir(scratch.path(""))
        .env("SHEETFIT_TEST_AFTER_READ", hook)
        .output()
        .expect("run sheetfit")
}

fn sha256_hex(path: &Path) -> String {
    let bytes = std::fs::read(path).expect("read file");
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

#[test]
fn an_unchanged_input_records_the_sha256_of_the_bytes_read() {
    let s = Scratch::new();
    let data = s.workbook("data.xlsx", &sheets(0.0));
    s.write("job.toml", JOB);
    let out = run_with_hook(&s, "true");
    assert_status(&out, 0);
    let json = read_json(&s.path("job-report.json"));
    assert_eq!(json["run"]["input_sha256"], sha256_hex(&data).as_str());
}

#[test]
fn a_workbook_saved_by_rename_during_the_run_stops_it_and_writes_nothing() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &sheets(0.0));
    s.workbook("saving.xlsx", &sheets(100.0));
    s.write("job.toml", JOB);
    let out = run_with_hook(&s, "mv saving.xlsx data.xlsx");
    assert_status(&out, 1);
    assert_stderr_has(
        &out,
        &[
            "input data.xlsx changed while it was being read (its name now leads to another \
           file, saved in its place); wait until it is saved and closed, then run again",
        ],
    );
    assert!(out.stdout.is_empty(), "{}", stderr(&out));
    assert_files(&s, &["data.xlsx", "job.toml"]);
}

#[test]
fn a_workbook_written_in_place_during_the_run_stops_it_and_writes_nothing() {
    let s = Scratch::new();
    let data = s.workbook("data.xlsx", &sheets(0.0));
    let size = std::fs::metadata(&data).expect("size").len();
    s.write("job.toml", JOB);
    let out = run_with_hook(&s, "printf x >> data.xlsx");
    assert_status(&out, 1);
    assert_stderr_has(
        &out,
        &[&format!(
            "input data.xlsx changed while it was being read (its size went from {size} to {} \
             bytes); wait until it is saved and closed, then run again",
            size + 1
        )],
    );
    assert_files(&s, &["data.xlsx", "job.toml"]);
}

#[test]
fn a_csv_touched_during_the_run_stops_it_and_writes_nothing() {
    let s = Scratch::new();
    let mut text = String::from("y,x\n");
    for i in 0..10 {
        text.push_str(&format!("{},{i}\n", 2 * i + i % 3));
    }
    s.write("data.csv", &text);
    s.write(
        "job.toml",
        "[input]\nworkbook = \"data.csv\"\n\n[[model]]\nname = \"line\"\nresponse = \"y\"\nnumeric = [\"x\"]\n",
    );
    // Same size, a new modification time, as a save of the same bytes.
    let out = run_with_hook(&s, "touch -d '2001-02-03 04:05:06' data.csv");
    assert_status(&out, 1);
    assert_stderr_has(
        &out,
        &[
            "input data.csv changed while it was being read (its modification time moved); \
           wait until it is saved and closed, then run again",
        ],
    );
    assert_files(&s, &["data.csv", "job.toml"]);
}
