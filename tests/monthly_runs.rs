//! Monthly runs: several jobs in one `run` (a failing job never stops the
//! others), the run summary, the rules that keep an existing report, the
//! input workbook and the job file from being written over (what a report
//! pair holds when a run is killed part-way is in report_pair.rs),
//! byte-identical reruns with a
//! fixed run time, output path placeholders, and the comparison of a run
//! with the previous one (the Changes sheet, `changes` and
//! `forecast_tracking`) on the two-month demo.

mod common;

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};
use std::process::{Command, Output};
use std::time::Duration;

use calamine::{open_workbook_auto, Data, Range, Reader};
use serde_json::Value;

use common::{model_named as model, read_json, sheetfit, stderr, Cell, Scratch, SHEETS};
use Cell::{N, S, T};

/// The fixed run time used by the reproducibility tests, and the same
/// instant as seconds since 1970 for `SOURCE_DATE_EPOCH`.
const FIXED_TIME: &str = "2026-01-05T08:00:00Z";
const FIXED_EPOCH: &str = "1767600000";

// ---------------------------------------------------------------------------
// Fixtures and helpers
// ---------------------------------------------------------------------------

/// A small monthly series from 2024-01: `month` (period text), `visits` and
/// `sales`, with a trend, a seasonal swing and fixed noise. Each month's
/// values depend only on its place in the series, so a longer series is a
/// shorter one plus the months that followed.
fn monthly_rows(months: usize) -> Vec<Vec<Cell>> {
    let mut rows = vec![vec![T("month"), T("visits"), T("sales")]];
    for i in 0..months {
        let year = 2024 + i / 12;
        let month = i % 12 + 1;
        let t = i as f64;
        let visits = 40.0 + 6.0 * (0.9 * t).sin() + (i % 5) as f64;
        let noise = ((t * 12.9898).sin() * 43_758.545_3).fract() - 0.5;
        let season = 3.0 * (std::f64::consts::PI * month as f64 / 6.0).cos();
        let sales = 20.0 + 0.8 * visits + 0.3 * t + season + 2.0 * noise;
        rows.push(vec![
            S(format!("{year}-{month:02}")),
            N(visits),
            N((sales * 100.0).round() / 100.0),
        ]);
    }
    rows
}

/// Two models of the small series: one without and one with a trend and a
/// three-month forecast.
const MODELS: &str = "\n[[model]]\nname = \"visits\"\nresponse = \"sales\"\nnumeric = [\"visits\"]\n\n\
     [[model]]\nname = \"trend\"\nresponse = \"sales\"\nnumeric = [\"visits\"]\ntrend = \"month\"\n\n\
     [model.forecast]\nhorizon = 3\nhold = { visits = 42 }\n";

/// A model naming a column the sheet does not have (`vistis`): the job
/// fails on its data.
const BAD_COLUMN_MODEL: &str =
    "\n[[model]]\nname = \"typo\"\nresponse = \"sales\"\nnumeric = [\"vistis\"]\n";

/// A job file's text: title, input workbook (sheet `months`), output
/// workbook, extra lines for `[output]`, then the models.
fn job_text(title: &str, input: &str, output: &str, output_extra: &str, models: &str) -> String {
    format!(
        "title = \"{title}\"\n\n[input]\nworkbook = \"{input}\"\nsheet = \"months\"\n\n\
         [output]\nworkbook = \"{output}\"\n{output_extra}{models}"
    )
}

/// Runs the binary with `args` in `cwd` with extra environment variables.
fn sheetfit_env(cwd: &Path, args: &[&str], env: &[(&str, &str)]) -> Output {
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_sheetfit"));
    cmd.args(args).current_dir(cwd);
    for (k, v) in env {
        cmd.env(k, v);
    }
    cmd.output().expect("run sheetfit")
}

fn bytes(path: &Path) -> Vec<u8> {
    std::fs::read(path).unwrap_or_else(|e| panic!("read {}: {e}", path.display()))
}

/// `p` as the process run in `cwd` meant it, made absolute and canonical.
fn resolve(cwd: &Path, p: &str) -> PathBuf {
    let joined = cwd.join(p);
    joined
        .canonicalize()
        .unwrap_or_else(|e| panic!("{} does not exist: {e}", joined.display()))
}

fn sheet(workbook: &Path, name: &str) -> Range<Data> {
    let mut wb =
        open_workbook_auto(workbook).unwrap_or_else(|e| panic!("open {}: {e}", workbook.display()));
    wb.worksheet_range(name)
        .unwrap_or_else(|e| panic!("{}, sheet {name}: {e}", workbook.display()))
}

fn text_cells(range: &Range<Data>) -> Vec<String> {
    range
        .used_cells()
        .filter_map(|(_, _, c)| match c {
            Data::String(s) => Some(s.clone()),
            _ => None,
        })
        .collect()
}

/// The text beside `label` (column B of the row whose column A is it) on
/// the Overview sheet, where the run stamp sits.
fn overview_value(workbook: &Path, label: &str) -> Option<String> {
    let range = sheet(workbook, "Overview");
    range.rows().find_map(|row| match row {
        [Data::String(l), Data::String(v), ..] if l == label => Some(v.clone()),
        _ => None,
    })
}

fn model_names(json: &Value) -> Vec<String> {
    json["models"]
        .as_array()
        .expect("models array")
        .iter()
        .map(|m| m["name"].as_str().expect("model name").to_string())
        .collect()
}

/// Checks that a report is complete: the workbook opens, has exactly the
/// sheets `sheets` in order, every sheet reads, and the Overview carries
/// the title; the JSON parses, has the title and lists the job's models
/// first, each with coefficients.
fn assert_complete_report(
    workbook: &Path,
    json: &Path,
    title: &str,
    models: &[&str],
    sheets: &[&str],
) {
    let mut wb =
        open_workbook_auto(workbook).unwrap_or_else(|e| panic!("open {}: {e}", workbook.display()));
    // A model whose residuals are autocorrelated brings its AR(1)-error
    // version, on a sheet of its own after the comparison.
    let mut sheets = sheets.to_vec();
    let results = read_json(json);
    let with_ar1 = results["models"]
        .as_array()
        .is_some_and(|m| m.iter().any(|m| !m["ar1_errors"].is_null()));
    if with_ar1 {
        let at = sheets
            .iter()
            .position(|s| *s == "Comparison")
            .map_or(0, |k| k + 1);
        sheets.insert(at, "AR(1) errors");
    }
    assert_eq!(wb.sheet_names(), sheets, "sheets of {}", workbook.display());
    for name in &sheets {
        let range = wb
            .worksheet_range(name)
            .unwrap_or_else(|e| panic!("{}, sheet {name}: {e}", workbook.display()));
        // The Charts sheet holds charts only, no cells.
        assert!(
            *name == "Charts" || !range.is_empty(),
            "{}, sheet {name} is empty",
            workbook.display()
        );
    }
    let overview = wb.worksheet_range("Overview").expect("Overview");
    assert!(
        text_cells(&overview).iter().any(|t| t == title),
        "{}: the Overview does not show the title {title:?}",
        workbook.display()
    );

    let j = read_json(json);
    assert_eq!(j["title"], title, "title in {}", json.display());
    let names = model_names(&j);
    assert!(
        names.len() >= models.len() && names[..models.len()] == *models,
        "{}: models {names:?}, expected to start with {models:?}",
        json.display()
    );
    for m in j["models"].as_array().unwrap() {
        let coefs = m["coefficients"].as_array().expect("coefficients");
        assert!(
            !coefs.is_empty(),
            "{}: a model without coefficients",
            m["name"]
        );
    }
}

/// The `--json` run summary printed on standard output.
fn summary(out: &Output) -> Vec<Value> {
    let text = String::from_utf8_lossy(&out.stdout);
    let v: Value = serde_json::from_str(&text)
        .unwrap_or_else(|e| panic!("--json summary is not JSON ({e}):\n{text}"));
    v["jobs"]
        .as_array()
        .unwrap_or_else(|| panic!("--json summary has no `jobs` list:\n{text}"))
        .clone()
}

/// What one job's summary entry should say.
enum Expect<'a> {
    /// Written: the workbook and JSON paths, relative to the run's folder.
    Ok(&'a str, &'a str),
    /// Failed, with an error message containing this text.
    Failed(&'a str),
}

/// Checks one summary entry against the job (relative to `cwd`) and what
/// it should say.
fn assert_entry(cwd: &Path, entry: &Value, job: &str, expect: &Expect<'_>) {
    let job_path = entry["job"]
        .as_str()
        .unwrap_or_else(|| panic!("summary entry without a job path: {entry}"));
    assert_eq!(
        resolve(cwd, job_path),
        resolve(cwd, job),
        "summary entry {entry} should be job {job}"
    );
    match expect {
        Expect::Ok(workbook, json) => {
            assert_eq!(entry["status"], "ok", "{job}: {entry}");
            assert!(entry["error"].is_null(), "{job}: {entry}");
            let w = entry["workbook"].as_str().expect("workbook path");
            let j = entry["json"].as_str().expect("json path");
            assert_eq!(resolve(cwd, w), resolve(cwd, workbook), "{job}: {entry}");
            assert_eq!(resolve(cwd, j), resolve(cwd, json), "{job}: {entry}");
        }
        Expect::Failed(text) => {
            assert_eq!(entry["status"], "failed", "{job}: {entry}");
            assert!(entry["workbook"].is_null(), "{job}: {entry}");
            assert!(entry["json"].is_null(), "{job}: {entry}");
            let error = entry["error"].as_str().expect("error message");
            assert!(
                error.contains(text),
                "{job}: error {error:?} should mention {text:?}"
            );
        }
    }
}

// ---------------------------------------------------------------------------
// a. Several jobs, one broken
// ---------------------------------------------------------------------------

#[test]
fn a_broken_job_among_three_does_not_stop_the_others() {
    let s = Scratch::new();
    let cwd = s.path("");
    s.workbook("data.xlsx", &[("months", monthly_rows(24))]);
    s.write(
        "north.toml",
        &job_text("North", "data.xlsx", "out/north.xlsx", "", MODELS),
    );
    s.write(
        "broken.toml",
        &job_text(
            "Broken",
            "data.xlsx",
            "out/broken.xlsx",
            "",
            BAD_COLUMN_MODEL,
        ),
    );
    s.write(
        "south.toml",
        &job_text("South", "data.xlsx", "out/south.xlsx", "", MODELS),
    );

    let out = sheetfit(
        &cwd,
        &["run", "--json", "north.toml", "broken.toml", "south.toml"],
    );
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(1), "exit status; stderr:\n{err}");

    let jobs = summary(&out);
    assert_eq!(jobs.len(), 3, "summary: {jobs:?}");
    let expected = [
        ("north.toml", Expect::Ok("out/north.xlsx", "out/north.json")),
        ("broken.toml", Expect::Failed("vistis")),
        ("south.toml", Expect::Ok("out/south.xlsx", "out/south.json")),
    ];
    for (job, expect) in &expected {
        let entry = jobs
            .iter()
            .find(|e| {
                e["job"]
                    .as_str()
                    .is_some_and(|p| Path::new(p).file_name() == Path::new(job).file_name())
            })
            .unwrap_or_else(|| panic!("{job} missing from the summary {jobs:?}"));
        assert_entry(&cwd, entry, job, expect);
    }

    for (name, title) in [("north", "North"), ("south", "South")] {
        assert_complete_report(
            &s.path(&format!("out/{name}.xlsx")),
            &s.path(&format!("out/{name}.json")),
            title,
            &["visits", "trend"],
            &SHEETS,
        );
    }
    assert_eq!(
        s.files(),
        [
            "broken.toml",
            "data.xlsx",
            "north.toml",
            "out/north.json",
            "out/north.xlsx",
            "out/south.json",
            "out/south.xlsx",
            "south.toml"
        ],
        "nothing is written for the broken job, and no temporary file is left"
    );

    // The summary table on stderr names every job; the broken job's error
    // names the column.
    for job in ["north.toml", "broken.toml", "south.toml", "vistis"] {
        assert!(err.contains(job), "stderr should mention {job}:\n{err}");
    }
}

#[test]
fn a_folder_runs_every_toml_in_it_sorted() {
    let s = Scratch::new();
    let cwd = s.path("");
    std::fs::create_dir_all(s.path("jobs")).unwrap();
    s.workbook("jobs/data.xlsx", &[("months", monthly_rows(24))]);
    s.write(
        "jobs/c-south.toml",
        &job_text("South", "data.xlsx", "out/south.xlsx", "", MODELS),
    );
    s.write(
        "jobs/a-north.toml",
        &job_text("North", "data.xlsx", "out/north.xlsx", "", MODELS),
    );
    s.write(
        "jobs/b-broken.toml",
        &job_text(
            "Broken",
            "data.xlsx",
            "out/broken.xlsx",
            "",
            BAD_COLUMN_MODEL,
        ),
    );
    // Not job files: ignored.
    s.write("jobs/notes.txt", "not a job\n");
    s.write("jobs/old.toml.bak", "not a job either\n");

    let out = sheetfit(&cwd, &["run", "--json", "--quiet", "jobs"]);
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(1), "exit status; stderr:\n{err}");

    let jobs = summary(&out);
    assert_eq!(
        jobs.len(),
        3,
        "the folder's three *.toml files and nothing else: {jobs:?}"
    );
    // Listed in sorted order of the folder's job files.
    let expected = [
        (
            "jobs/a-north.toml",
            Expect::Ok("jobs/out/north.xlsx", "jobs/out/north.json"),
        ),
        ("jobs/b-broken.toml", Expect::Failed("vistis")),
        (
            "jobs/c-south.toml",
            Expect::Ok("jobs/out/south.xlsx", "jobs/out/south.json"),
        ),
    ];
    for (entry, (job, expect)) in jobs.iter().zip(&expected) {
        assert_entry(&cwd, entry, job, expect);
    }
    for (name, title) in [("north", "North"), ("south", "South")] {
        assert_complete_report(
            &s.path(&format!("jobs/out/{name}.xlsx")),
            &s.path(&format!("jobs/out/{name}.json")),
            title,
            &["visits", "trend"],
            &SHEETS,
        );
    }
    assert!(!s.path("jobs/out/broken.xlsx").exists());
    assert!(!s.path("jobs/out/broken.json").exists());

    // --quiet: the error is printed, the jobs that went well are not.
    assert!(err.contains("vistis"), "the error is printed:\n{err}");
    for quiet in ["a-north", "c-south"] {
        assert!(
            !err.contains(quiet),
            "--quiet prints only errors, yet mentions {quiet}:\n{err}"
        );
    }
}

#[test]
fn a_job_file_error_makes_the_exit_status_2() {
    let s = Scratch::new();
    let cwd = s.path("");
    s.workbook("data.xlsx", &[("months", monthly_rows(24))]);
    s.write(
        "good.toml",
        &job_text("Good", "data.xlsx", "out/good.xlsx", "", MODELS),
    );
    s.write(
        "data-error.toml",
        &job_text(
            "Bad data",
            "data.xlsx",
            "out/bad.xlsx",
            "",
            BAD_COLUMN_MODEL,
        ),
    );
    // `respons` is not a key of a model table: a job-file error.
    s.write(
        "job-error.toml",
        &job_text(
            "Bad job",
            "data.xlsx",
            "out/job.xlsx",
            "",
            "\n[[model]]\nname = \"m\"\nrespons = \"sales\"\n",
        ),
    );
    let out = sheetfit(
        &cwd,
        &[
            "run",
            "--json",
            "data-error.toml",
            "job-error.toml",
            "good.toml",
        ],
    );
    assert_eq!(
        out.status.code(),
        Some(2),
        "a job-file error outranks a data error; stderr:\n{}",
        stderr(&out)
    );
    let jobs = summary(&out);
    assert_eq!(jobs.len(), 3, "summary: {jobs:?}");
    assert_entry(&cwd, &jobs[0], "data-error.toml", &Expect::Failed("vistis"));
    assert_entry(&cwd, &jobs[1], "job-error.toml", &Expect::Failed("respons"));
    assert_entry(
        &cwd,
        &jobs[2],
        "good.toml",
        &Expect::Ok("out/good.xlsx", "out/good.json"),
    );
    assert_complete_report(
        &s.path("out/good.xlsx"),
        &s.path("out/good.json"),
        "Good",
        &["visits", "trend"],
        &SHEETS,
    );
}

// ---------------------------------------------------------------------------
// b. An existing report is kept unless overwriting is allowed
// ---------------------------------------------------------------------------

#[test]
fn an_existing_report_is_replaced_only_when_allowed() {
    let s = Scratch::new();
    let cwd = s.path("");
    s.workbook("data.xlsx", &[("months", monthly_rows(24))]);
    let job = |title: &str, extra: &str| {
        s.write(
            "job.toml",
            &job_text(title, "data.xlsx", "out/report.xlsx", extra, MODELS),
        );
    };
    let report = s.path("out/report.xlsx");
    let report_json = s.path("out/report.json");

    job("First", "");
    let out = sheetfit(&cwd, &["run", "job.toml"]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let old = (bytes(&report), bytes(&report_json));
    let files = s.files();

    // A changed title: a run that wrote anything would change both files.
    job("Second", "");
    let out = sheetfit(&cwd, &["run", "job.toml"]);
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(1), "refused; stderr:\n{err}");
    assert!(
        err.contains("report.xlsx"),
        "the message names the existing report:\n{err}"
    );
    assert!(
        err.contains("--overwrite"),
        "the message names --overwrite:\n{err}"
    );
    assert!(
        err.contains("overwrite = true"),
        "the message names `overwrite = true`:\n{err}"
    );
    assert_eq!(bytes(&report), old.0, "the old workbook is untouched");
    assert_eq!(bytes(&report_json), old.1, "the old JSON is untouched");
    assert_eq!(s.files(), files, "no file added or removed");

    // `overwrite = false` written out is the same as leaving it out.
    job("Second", "overwrite = false\n");
    let out = sheetfit(&cwd, &["run", "job.toml"]);
    assert_eq!(out.status.code(), Some(1), "{}", stderr(&out));
    assert_eq!(bytes(&report), old.0, "the old workbook is untouched");
    assert_eq!(bytes(&report_json), old.1, "the old JSON is untouched");

    // --overwrite on the command line.
    let out = sheetfit(&cwd, &["run", "--overwrite", "job.toml"]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    assert_complete_report(
        &report,
        &report_json,
        "Second",
        &["visits", "trend"],
        &SHEETS,
    );
    assert_ne!(bytes(&report), old.0, "the workbook was replaced");

    // `overwrite = true` in the job's [output] table.
    job("Third", "overwrite = true\n");
    let out = sheetfit(&cwd, &["run", "job.toml"]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    assert_complete_report(
        &report,
        &report_json,
        "Third",
        &["visits", "trend"],
        &SHEETS,
    );
    assert_eq!(s.files(), files, "the same files, replaced in place");
}

// ---------------------------------------------------------------------------
// c. Never over the input workbook or the job file
// ---------------------------------------------------------------------------

#[test]
fn the_input_workbook_is_never_written_over() {
    let s = Scratch::new();
    let cwd = s.path("");
    let input = s.workbook("data.xlsx", &[("months", monthly_rows(24))]);
    let original = bytes(&input);
    for (extra, flags) in [
        ("", &[][..]),
        ("", &["--overwrite"][..]),
        ("overwrite = true\n", &[][..]),
    ] {
        // `./data.xlsx` is the input spelled another way.
        s.write(
            "job.toml",
            &job_text("Onto input", "data.xlsx", "./data.xlsx", extra, MODELS),
        );
        let files = s.files();
        let mut args = vec!["run"];
        args.extend(flags);
        args.push("job.toml");
        let out = sheetfit(&cwd, &args);
        let err = stderr(&out);
        assert!(
            matches!(out.status.code(), Some(1 | 2)),
            "{args:?} {extra:?}: must fail; status {:?}, stderr:\n{err}",
            out.status.code()
        );
        assert!(
            err.contains("data.xlsx"),
            "{args:?} {extra:?}: the message names the input:\n{err}"
        );
        assert_eq!(
            bytes(&input),
            original,
            "{args:?} {extra:?}: the input is unchanged byte for byte"
        );
        assert_eq!(
            s.files(),
            files,
            "{args:?} {extra:?}: nothing written (no data.json, no temporary file)"
        );
    }
}

#[test]
fn the_job_file_is_never_written_over() {
    let s = Scratch::new();
    let cwd = s.path("");
    s.workbook("data.xlsx", &[("months", monthly_rows(24))]);

    // A job file named `weekly.json`: the results JSON of the report
    // `weekly.xlsx` would land on it.
    let text = job_text("Onto job", "data.xlsx", "weekly.xlsx", "", MODELS);
    let job = s.write("weekly.json", &text);
    for flags in [&[][..], &["--overwrite"][..]] {
        let mut args = vec!["run"];
        args.extend(flags);
        args.push("weekly.json");
        let out = sheetfit(&cwd, &args);
        assert!(
            matches!(out.status.code(), Some(1 | 2)),
            "{args:?}: must fail; status {:?}, stderr:\n{}",
            out.status.code(),
            stderr(&out)
        );
        assert_eq!(
            std::fs::read_to_string(&job).unwrap(),
            text,
            "{args:?}: the job file is unchanged"
        );
        assert_eq!(
            s.files(),
            ["data.xlsx", "weekly.json"],
            "{args:?}: nothing written, not even the workbook"
        );
    }

    // The report named as the job file itself: not a .xlsx name, refused
    // as a job-file error, and the job file is untouched.
    let text = job_text("Onto job", "data.xlsx", "self.toml", "", MODELS);
    let job = s.write("self.toml", &text);
    let out = sheetfit(&cwd, &["run", "--overwrite", "self.toml"]);
    assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
    assert_eq!(std::fs::read_to_string(&job).unwrap(), text);
}

// ---------------------------------------------------------------------------
// e. Byte-identical reruns with a fixed run time
// ---------------------------------------------------------------------------

fn assert_identical_reruns(args: &[&str], env: &[(&str, &str)]) {
    let s = Scratch::new();
    let cwd = s.path("");
    s.workbook("data.xlsx", &[("months", monthly_rows(24))]);
    s.write(
        "job.toml",
        &job_text("Rerun", "data.xlsx", "out/report.xlsx", "", MODELS),
    );
    let report = s.path("out/report.xlsx");
    let report_json = s.path("out/report.json");

    let out = sheetfit_env(&cwd, args, env);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let first = (bytes(&report), bytes(&report_json));
    // Past the next second of the clock, so an unfixed time would differ.
    std::thread::sleep(Duration::from_millis(1100));
    let out = sheetfit_env(&cwd, args, env);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));

    assert_eq!(
        read_json(&report_json)["run"]["run_time"],
        FIXED_TIME,
        "{args:?} {env:?}: the recorded run time"
    );
    assert_eq!(
        overview_value(&report, "Run time (UTC)").as_deref(),
        Some(FIXED_TIME),
        "{args:?} {env:?}: the run time on the Overview"
    );
    assert!(
        bytes(&report) == first.0,
        "{args:?} {env:?}: the two workbooks differ"
    );
    assert!(
        bytes(&report_json) == first.1,
        "{args:?} {env:?}: the two JSON files differ"
    );
}

#[test]
fn reruns_with_fixed_time_are_byte_identical() {
    assert_identical_reruns(
        &["run", "--fixed-time", FIXED_TIME, "--overwrite", "job.toml"],
        &[],
    );
}

#[test]
fn reruns_with_source_date_epoch_are_byte_identical() {
    assert_identical_reruns(
        &["run", "--overwrite", "job.toml"],
        &[("SOURCE_DATE_EPOCH", FIXED_EPOCH)],
    );
}

// ---------------------------------------------------------------------------
// Output path placeholders
// ---------------------------------------------------------------------------

#[test]
fn placeholders_name_the_report_by_period_date_and_job() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("months", monthly_rows(24))]);
    s.write(
        "sales.toml",
        &job_text(
            "Placeholders",
            "data.xlsx",
            "reports/{job}-{period}-{date}.xlsx",
            "",
            MODELS,
        ),
    );
    let out = sheetfit(
        &s.path(""),
        &["run", "--fixed-time", FIXED_TIME, "sales.toml"],
    );
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    // 24 months from 2024-01: the last period is 2025-12.
    assert_eq!(
        s.files(),
        [
            "data.xlsx",
            "reports/sales-2025-12-2026-01-05.json",
            "reports/sales-2025-12-2026-01-05.xlsx",
            "sales.toml"
        ]
    );
}

// ---------------------------------------------------------------------------
// f. Comparing with the previous run
// ---------------------------------------------------------------------------

fn f64_at(v: &Value, key: &str) -> f64 {
    v[key]
        .as_f64()
        .unwrap_or_else(|| panic!("`{key}` is not a number in {v}"))
}

/// Asserts `|a − b| ≤ 1e-9·max(1, |b|)`.
fn close(what: &str, a: f64, b: f64) {
    assert!(
        (a - b).abs() <= 1e-9 * b.abs().max(1.0),
        "{what}: got {a}, expected {b}"
    );
}

/// Checks `changes` against the two runs' coefficients: one entry per term
/// of every model present (by name) in both, with the change, combined
/// standard error, z and notable flag recomputed here.
fn assert_changes(previous: &Value, current: &Value) {
    let coefficients = |json: &Value| -> BTreeMap<(String, String), (f64, f64)> {
        let mut out = BTreeMap::new();
        for m in json["models"].as_array().unwrap() {
            for c in m["coefficients"].as_array().unwrap() {
                out.insert(
                    (
                        m["name"].as_str().unwrap().to_string(),
                        c["term"].as_str().unwrap().to_string(),
                    ),
                    (f64_at(c, "estimate"), f64_at(c, "std_error")),
                );
            }
        }
        out
    };
    let before = coefficients(previous);
    let now = coefficients(current);
    let expected: BTreeSet<_> = before
        .keys()
        .filter(|k| now.contains_key(*k))
        .cloned()
        .collect();
    assert!(!expected.is_empty());

    let changes = current["changes"]
        .as_array()
        .expect("top-level `changes` list");
    let mut seen = BTreeSet::new();
    for c in changes {
        let key = (
            c["model"].as_str().expect("model").to_string(),
            c["term"].as_str().expect("term").to_string(),
        );
        assert!(
            expected.contains(&key),
            "change {c} is not a term of a model in both runs"
        );
        assert!(seen.insert(key.clone()), "{key:?} listed twice");
        let (b0, se0) = before[&key];
        let (b1, se1) = now[&key];
        let what = format!("{} / {}", key.0, key.1);
        close(
            &format!("{what}: previous_estimate"),
            f64_at(c, "previous_estimate"),
            b0,
        );
        close(&format!("{what}: estimate"), f64_at(c, "estimate"), b1);
        close(&format!("{what}: change"), f64_at(c, "change"), b1 - b0);
        let combined = (se0 * se0 + se1 * se1).sqrt();
        close(
            &format!("{what}: combined_std_error"),
            f64_at(c, "combined_std_error"),
            combined,
        );
        let z = (b1 - b0) / combined;
        close(&format!("{what}: z"), f64_at(c, "z"), z);
        assert_eq!(
            c["notable"].as_bool(),
            Some(z.abs() > 1.96),
            "{what}: notable with z = {z}"
        );
    }
    let missing: Vec<_> = expected.difference(&seen).collect();
    assert!(
        missing.is_empty(),
        "terms without a change entry: {missing:?}"
    );
}

/// A forecast row of `model` in `json` by period.
fn forecast_row<'a>(json: &'a Value, model_name: &str, period: &str) -> &'a Value {
    model(json, model_name)["forecast"]
        .as_array()
        .unwrap()
        .iter()
        .find(|r| r["period"] == period)
        .unwrap_or_else(|| panic!("{model_name}: no forecast for {period}"))
}

/// Checks one `forecast_tracking` entry against last run's forecast row and
/// the actual value expected.
fn assert_tracking(entry: &Value, previous_row: &Value, actual: f64) {
    let what = format!("{} {}", entry["model"], entry["period"]);
    let estimate = f64_at(previous_row, "estimate");
    let lower = f64_at(previous_row, "pred_lower");
    let upper = f64_at(previous_row, "pred_upper");
    close(
        &format!("{what}: previous_estimate"),
        f64_at(entry, "previous_estimate"),
        estimate,
    );
    close(
        &format!("{what}: previous_pred_lower"),
        f64_at(entry, "previous_pred_lower"),
        lower,
    );
    close(
        &format!("{what}: previous_pred_upper"),
        f64_at(entry, "previous_pred_upper"),
        upper,
    );
    close(&format!("{what}: actual"), f64_at(entry, "actual"), actual);
    close(
        &format!("{what}: error"),
        f64_at(entry, "error"),
        actual - estimate,
    );
    assert_eq!(
        entry["inside"].as_bool(),
        Some(lower <= actual && actual <= upper),
        "{what}: inside [{lower}, {upper}] with actual {actual}"
    );
}

/// Mean revenue per month (`YYYY-MM`) of the demo workbook's `records`
/// sheet, blank revenues left out.
fn monthly_mean_revenue(workbook: &Path) -> BTreeMap<String, f64> {
    let range = sheet(workbook, "records");
    let mut rows = range.rows();
    let header: Vec<String> = rows.next().unwrap().iter().map(|c| c.to_string()).collect();
    let col = |name: &str| header.iter().position(|h| h == name).unwrap();
    let (month, revenue) = (col("month"), col("revenue"));
    let mut sums: BTreeMap<String, (f64, usize)> = BTreeMap::new();
    for row in rows {
        let Data::DateTime(d) = &row[month] else {
            panic!("month cell {:?} is not a date", row[month]);
        };
        let (y, m, ..) = d.to_ymd_hms_milli();
        let value = match &row[revenue] {
            Data::Float(x) => *x,
            Data::Int(i) => *i as f64,
            Data::Empty => continue,
            other => panic!("revenue cell {other:?}"),
        };
        let e = sums.entry(format!("{y}-{m:02}")).or_default();
        e.0 += value;
        e.1 += 1;
    }
    sums.into_iter()
        .map(|(k, (sum, n))| (k, sum / n as f64))
        .collect()
}

#[test]
fn two_month_demo_tracks_forecasts_and_changes() {
    let s = Scratch::new();
    let cwd = s.path("");
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data");
    std::fs::create_dir_all(s.path("demo-data")).unwrap();
    for name in [
        "garden-centres.xlsx",
        "garden-centres.toml",
        "garden-centres-2026-03.xlsx",
        "garden-centres-2026-03.toml",
    ] {
        std::fs::copy(demo.join(name), s.path(&format!("demo-data/{name}")))
            .unwrap_or_else(|e| panic!("copy demo-data/{name}: {e}"));
    }

    let out = sheetfit(&cwd, &["run", "demo-data/garden-centres.toml"]);
    assert_eq!(out.status.code(), Some(0), "month one: {}", stderr(&out));
    let out = sheetfit(&cwd, &["run", "demo-data/garden-centres-2026-03.toml"]);
    assert_eq!(out.status.code(), Some(0), "month two: {}", stderr(&out));

    let first = read_json(&s.path("demo-data/reports/garden-centres-report.json"));
    let second = read_json(&s.path("demo-data/reports/garden-centres-2026-03-report.json"));
    let second_workbook = s.path("demo-data/reports/garden-centres-2026-03-report.xlsx");

    // Forecast tracking: month one forecast 2026-01 to 2026-12 for
    // "monthly forecast" and 2026-01 to 2026-06 for each store's "store
    // forecast [store]"; month two's data reaches 2026-03. The panel model
    // is checked here against the month means.
    let means = monthly_mean_revenue(&s.path("demo-data/garden-centres-2026-03.xlsx"));
    let all = second["forecast_tracking"]
        .as_array()
        .expect("top-level `forecast_tracking` list");
    let (tracking, per_store): (Vec<&Value>, Vec<&Value>) =
        all.iter().partition(|t| t["model"] == "monthly forecast");
    for t in &per_store {
        let name = t["model"].as_str().expect("model");
        assert!(name.starts_with("store forecast ["), "{t}");
    }
    assert_eq!(
        per_store.len(),
        8 * 3 - 1,
        "eight stores, three months, one blank revenue"
    );
    let periods: Vec<&str> = tracking
        .iter()
        .map(|t| t["period"].as_str().expect("period"))
        .collect::<BTreeSet<_>>()
        .into_iter()
        .collect();
    assert_eq!(periods, ["2026-01", "2026-02", "2026-03"]);
    assert_eq!(tracking.len(), 3, "one entry per period: {tracking:?}");
    let history = model(&second, "monthly forecast")["history"]
        .as_array()
        .unwrap();
    for entry in tracking {
        let period = entry["period"].as_str().unwrap();
        let actual = means[period];
        assert_tracking(
            entry,
            forecast_row(&first, "monthly forecast", period),
            actual,
        );
        // The same as this run's history for the period.
        let h = history
            .iter()
            .find(|h| h["period"] == period)
            .unwrap_or_else(|| panic!("no history for {period}"));
        close(&format!("history {period}"), f64_at(h, "actual"), actual);
    }
    // 2026-02 has a blank revenue: seven stores, not eight.
    let feb = history.iter().find(|h| h["period"] == "2026-02").unwrap();
    assert_eq!(feb["rows"], 7, "{feb}");

    // Changes: every term of every model in both runs.
    assert_changes(&first, &second);
    assert_eq!(
        model_names(&first),
        model_names(&second),
        "the same models in both runs"
    );

    // The Changes sheet: in month two's report only, one row per change
    // with the model, the term and the change.
    let first_sheets = open_workbook_auto(s.path("demo-data/reports/garden-centres-report.xlsx"))
        .unwrap()
        .sheet_names();
    assert!(
        !first_sheets.iter().any(|n| n == "Changes"),
        "{first_sheets:?}"
    );
    let wb = open_workbook_auto(&second_workbook).unwrap();
    assert!(
        wb.sheet_names().iter().any(|n| n == "Changes"),
        "{:?}",
        wb.sheet_names()
    );
    let changes_sheet = sheet(&second_workbook, "Changes");
    for c in second["changes"].as_array().unwrap() {
        let (m, t, change) = (
            c["model"].as_str().unwrap(),
            c["term"].as_str().unwrap(),
            f64_at(c, "change"),
        );
        let found = changes_sheet.rows().any(|row| {
            let has = |s: &str| row.iter().any(|d| matches!(d, Data::String(x) if x == s));
            has(m)
                && has(t)
                && row.iter().any(|d| {
                    matches!(d, Data::Float(x) if (x - change).abs() <= 1e-9 * change.abs().max(1.0))
                })
        });
        assert!(
            found,
            "Changes sheet: no row for {m} / {t} with change {change}"
        );
    }
}

#[test]
fn previous_flag_compares_with_a_given_json() {
    let s = Scratch::new();
    let cwd = s.path("");
    s.workbook("jan.xlsx", &[("months", monthly_rows(24))]);
    s.workbook("apr.xlsx", &[("months", monthly_rows(27))]);
    s.write(
        "jan.toml",
        &job_text("January", "jan.xlsx", "out/jan.xlsx", "", MODELS),
    );
    s.write(
        "apr.toml",
        &job_text("April", "apr.xlsx", "out/apr.xlsx", "", MODELS),
    );
    let out = sheetfit(&cwd, &["run", "jan.toml"]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let out = sheetfit(&cwd, &["run", "--previous", "out/jan.json", "apr.toml"]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));

    let first = read_json(&s.path("out/jan.json"));
    let second = read_json(&s.path("out/apr.json"));
    assert_changes(&first, &second);

    // A single series: the actual is the row's own value, 2026-01..03.
    let rows = monthly_rows(27);
    let tracking = second["forecast_tracking"]
        .as_array()
        .expect("top-level `forecast_tracking` list");
    assert_eq!(tracking.len(), 3, "{tracking:?}");
    for row in &rows[25..] {
        let (S(period), N(actual)) = (&row[0], &row[2]) else {
            unreachable!("monthly_rows writes period text and numbers")
        };
        let entry = tracking
            .iter()
            .find(|t| t["period"] == period.as_str())
            .unwrap_or_else(|| panic!("no forecast tracking for {period}: {tracking:?}"));
        assert_eq!(entry["model"], "trend");
        assert_tracking(entry, forecast_row(&first, "trend", period), *actual);
    }
    let wb = open_workbook_auto(s.path("out/apr.xlsx")).unwrap();
    assert!(wb.sheet_names().iter().any(|n| n == "Changes"));
}
