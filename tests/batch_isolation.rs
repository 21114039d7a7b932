//! A batch survives one job's crash: each job runs in a process of its own,
//! so a job that aborts (as on running out of memory) becomes a failed
//! outcome while the other jobs' reports, the summary, the `--json` summary
//! and the documented exit status stand. Two jobs naming one report are
//! refused before either runs; a `--json` summary that cannot be printed
//! is an error message, not a panic.

mod common;

use std::process::{Command, Stdio};

use common::{sheetfit, small_xy_workbook as data, stderr, Scratch};

fn job(output: &str) -> String {
    format!(
        "[input]\nworkbook = \"data.xlsx\"\n[output]\nworkbook = \"{output}\"\n\n\
         [[model]]\nname = \"m\"\nresponse = \"y\"\nnumeric = [\"x\"]\n"
    )
}

#[test]
fn a_job_that_aborts_does_not_take_the_batch_down() {
    let s = Scratch::new();
    data(&s);
    for name in ["a", "b", "c"] {
        s.write(
            &format!("{name}.toml"),
            &job(&format!("{name}-report.xlsx")),
        );
    }
    let out = Command::new(env!("CARGO_BIN_EXE_sheetfit"))
        .args(["run", "--json", "a.toml", "b.toml", "c.toml"])
        .current_dir(s.path(""))
        .env("SHEETFIT_TEST_ABORT_JOB", "b.toml")
        .output()
        .expect("run sheetfit");
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(1), "{err}");
    assert!(s.path("a-report.xlsx").exists() && s.path("a-report.json").exists());
    assert!(s.path("c-report.xlsx").exists() && s.path("c-report.json").exists());
    assert!(!s.path("b-report.xlsx").exists() && !s.path("b-report.json").exists());
    assert!(
        err.contains("job b.toml stopped unexpectedly (it aborted, as on running out of memory"),
        "{err}"
    );
    assert!(err.contains("b.toml  failed"), "the summary table:\n{err}");
    let summary: serde_json::Value =
        serde_json::from_slice(&out.stdout).expect("the --json summary");
    let statuses: Vec<(&str, &str)> = summary["jobs"]
        .as_array()
        .unwrap()
        .iter()
        .map(|j| (j["job"].as_str().unwrap(), j["status"].as_str().unwrap()))
        .collect();
    assert_eq!(
        statuses,
        [("a.toml", "ok"), ("b.toml", "failed"), ("c.toml", "ok")]
    );
}

#[test]
fn two_jobs_naming_one_report_are_refused_before_either_runs() {
    let s = Scratch::new();
    data(&s);
    s.write("one.toml", &job("reports/same.xlsx"));
    s.write("two.toml", &job("reports/../reports/same.xlsx"));
    let out = sheetfit(&s.path(""), &["run", "one.toml", "two.toml"]);
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(
        err.contains("jobs one.toml and two.toml both write"),
        "{err}"
    );
    assert!(!s.path("reports").exists(), "nothing ran");
}

#[cfg(target_os = "linux")]
#[test]
fn a_json_summary_to_a_full_output_is_an_error_not_a_panic() {
    let s = Scratch::new();
    data(&s);
    s.write("job.toml", &job("report.xlsx"));
    let full = std::fs::OpenOptions::new()
        .write(true)
        .open("/dev/full")
        .expect("open /dev/full");
    let out = Command::new(env!("CARGO_BIN_EXE_sheetfit"))
        .args(["run", "--json", "job.toml"])
        .current_dir(s.path(""))
        .stdout(Stdio::from(full))
        .stderr(Stdio::piped())
        .output()
        .expect("run sheetfit");
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(1), "{err}");
    assert!(
        err.contains("cannot print the --json summary on standard output"),
        "{err}"
    );
    assert!(!err.contains("panicked"), "{err}");
    assert!(s.path("report.xlsx").exists() && s.path("report.json").exists());
}
