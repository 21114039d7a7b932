//! Helpers shared by the integration tests: a scratch folder per test, the
//! binary, small fixture workbooks written on the fly, and JSON reading.
#![allow(dead_code)]

use std::io::Write as _;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use rust_xlsxwriter::Workbook;

pub mod grid;

/// The sheets of a report without a comparison, in order.
pub const SHEETS: [&str; 16] = [
    "Summary",
    "What-if",
    "Overview",
    "Coefficients",
    "ANOVA",
    "Checks",
    "Forecast",
    "Charts",
    "Fit quality",
    "Comparison",
    "Back-test",
    "Residuals",
    "Back-test rows",
    "Chart data",
    "Normal plot",
    "Chart points",
];

/// A cell to put in a fixture sheet.
#[derive(Clone, Debug)]
pub enum Cell {
    /// A number.
    N(f64),
    /// Text.
    T(&'static str),
    /// Owned text.
    S(String),
    /// Nothing.
    Blank,
}

/// A scratch folder removed when the test ends.
pub struct Scratch {
    dir: tempfile::TempDir,
}

impl Scratch {
    /// A new empty folder.
    pub fn new() -> Self {
        Scratch {
            dir: tempfile::tempdir().expect("create a scratch folder"),
        }
    }

    /// A path inside the folder.
    pub fn path(&self, name: &str) -> PathBuf {
        self.dir.path().join(name)
    }

    /// Writes a text file and returns its path.
    pub fn write(&self, name: &str, text: &str) -> PathBuf {
        let path = self.path(name);
        if let Some(parent) = path.parent() {
            std::fs::create_dir_all(parent).expect("create folder");
        }
        std::fs::write(&path, text).expect("write file");
        path
    }

    /// Writes a workbook with one sheet per `(name, rows)`; the first row
    /// of each is its header.
    pub fn workbook(&self, name: &str, sheets: &[(&str, Vec<Vec<Cell>>)]) -> PathBuf {
        let path = self.path(name);
        let mut wb = Workbook::new();
        for (sheet_name, rows) in sheets {
            let ws = wb.add_worksheet();
            ws.set_name(*sheet_name).expect("sheet name");
            for (r, row) in rows.iter().enumerate() {
                for (c, cell) in row.iter().enumerate() {
                    let (r, c) = (r as u32, c as u16);
                    match cell {
                        Cell::N(x) => {
                            ws.write_number(r, c, *x).expect("write number");
                        }
                        Cell::T(s) => {
                            ws.write_string(r, c, *s).expect("write text");
                        }
                        Cell::S(s) => {
                            ws.write_string(r, c, s).expect("write text");
                        }
                        Cell::Blank => {}
                    }
                }
            }
        }
        wb.save(&path).expect("save fixture workbook");
        path
    }

    /// Every file under the folder, relative, sorted.
    pub fn files(&self) -> Vec<String> {
        let mut out = Vec::new();
        walk(self.dir.path(), self.dir.path(), &mut out);
        out.sort();
        out
    }
}

fn walk(root: &Path, dir: &Path, out: &mut Vec<String>) {
    for entry in std::fs::read_dir(dir).expect("read folder").flatten() {
        let p = entry.path();
        if p.is_dir() {
            walk(root, &p, out);
        } else {
            out.push(p.strip_prefix(root).unwrap().display().to_string());
        }
    }
}

/// Runs the sheetfit binary with `args` in `cwd`.
pub fn sheetfit(cwd: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_sheetfit"))
        .args(args)
        .current_dir(cwd)
        .output()
        .expect("run sheetfit")
}

/// The process's standard error as text.
pub fn stderr(out: &Output) -> String {
    String::from_utf8_lossy(&out.stderr).into_owned()
}

/// Converts `input` with headless LibreOffice (`soffice`) to `target` (a
/// filter such as `pdf`) in `folder`, its user profile in `profile`.
pub fn soffice_convert(
    soffice: &Path,
    profile: &Path,
    target: &str,
    input: &Path,
    folder: &Path,
) -> Output {
    Command::new(soffice)
        .arg(format!(
            "-env:UserInstallation=file://{}",
            profile.display()
        ))
        .args([
            "--headless",
            "--norestore",
            "--convert-to",
            target,
            "--outdir",
        ])
        .arg(folder)
        .arg(input)
        .output()
        .expect("start soffice")
}

/// The model named `name` in a results JSON.
pub fn model_named<'a>(json: &'a serde_json::Value, name: &str) -> &'a serde_json::Value {
    json["models"]
        .as_array()
        .expect("a models list")
        .iter()
        .find(|m| m["name"] == name)
        .unwrap_or_else(|| panic!("no model {name}"))
}

/// Reads a JSON file.
pub fn read_json(path: &Path) -> serde_json::Value {
    let text = std::fs::read_to_string(path).expect("read JSON");
    serde_json::from_str(&text).expect("parse JSON")
}

/// Log relative error: −log10(|estimate − certified| / |certified|), capped
/// at 15; −log10(|estimate|) when the certified value is 0 (the convention
/// of McCullough 1998, "Assessing the reliability of statistical software").
pub fn lre(estimate: f64, certified: f64) -> f64 {
    let err = if certified == 0.0 {
        estimate.abs()
    } else {
        (estimate - certified).abs() / certified.abs()
    };
    if !err.is_finite() {
        0.0
    } else if err == 0.0 {
        15.0
    } else {
        (-err.log10()).min(15.0)
    }
}

/// Asserts `|a − b| ≤ tol·max(1, |b|)`, naming `what` on failure.
pub fn assert_close(what: &str, a: f64, b: f64, tol: f64) {
    assert!(
        (a - b).abs() <= tol * b.abs().max(1.0),
        "{what}: got {a}, expected {b} (tolerance {tol})"
    );
}

/// Checks each number `keys` of `got` against `expected`'s (JSON objects)
/// with [`assert_close`], naming `what` and the key on failure.
pub fn assert_numbers(
    what: &str,
    got: &serde_json::Value,
    expected: &serde_json::Value,
    keys: &[&str],
    tol: f64,
) {
    for key in keys {
        let number = |v: &serde_json::Value, side: &str| {
            v[*key]
                .as_f64()
                .unwrap_or_else(|| panic!("{what} {key}: {side} has no number in {v}"))
        };
        assert_close(
            &format!("{what} {key}"),
            number(got, "ours"),
            number(expected, "the reference"),
            tol,
        );
    }
}

/// The keys of a coefficient the reference libraries report.
pub const COEFFICIENT_KEYS: [&str; 6] = [
    "estimate",
    "std_error",
    "t_stat",
    "p_value",
    "ci_lower",
    "ci_upper",
];

/// The keys of a predicted row: the estimate and both intervals.
pub const INTERVAL_KEYS: [&str; 5] = [
    "estimate",
    "mean_lower",
    "mean_upper",
    "pred_lower",
    "pred_upper",
];

/// Exit status of a finished run.
pub fn status(out: &Output) -> i32 {
    out.status.code().expect("sheetfit ended by a signal")
}

/// Asserts the exit status, printing stderr when it differs.
pub fn assert_status(out: &Output, expected: i32) {
    assert_eq!(
        status(out),
        expected,
        "exit status; stderr was:\n{}",
        stderr(out)
    );
}

/// Asserts that stderr contains every one of `parts`.
pub fn assert_stderr_has(out: &Output, parts: &[&str]) {
    let err = stderr(out);
    for part in parts {
        assert!(
            err.contains(part),
            "stderr should contain {part:?}; it was:\n{err}"
        );
    }
}

/// Asserts that the scratch folder holds exactly `expected` (sorted here).
pub fn assert_files(scratch: &Scratch, expected: &[&str]) {
    let mut expected: Vec<String> = expected.iter().map(|s| s.to_string()).collect();
    expected.sort();
    assert_eq!(scratch.files(), expected, "files in the scratch folder");
}

/// Runs `sheetfit <command> job.toml`; it must fail with `code`, print no
/// summary, name every one of `parts` and leave no file beyond `inputs`.
pub fn assert_command_fails(
    scratch: &Scratch,
    command: &str,
    code: i32,
    parts: &[&str],
    inputs: &[&str],
) {
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
    assert_files(scratch, inputs);
}

/// Both `run` and `check` must fail as [`assert_command_fails`] says.
pub fn assert_run_and_check_fail(scratch: &Scratch, code: i32, parts: &[&str], inputs: &[&str]) {
    for command in ["run", "check"] {
        assert_command_fails(scratch, command, code, parts, inputs);
    }
}

/// `data.xlsx` with a sheet `records` of 12 rows: `x` and a `y` that is a
/// line in `x` plus a small repeating deviation.
pub fn small_xy_workbook(s: &Scratch) {
    let mut rows = vec![vec![Cell::T("x"), Cell::T("y")]];
    for i in 0..12 {
        let x = f64::from(i);
        rows.push(vec![Cell::N(x), Cell::N(1.0 + 2.0 * x + f64::from(i % 3))]);
    }
    s.workbook("data.xlsx", &[("records", rows)]);
}

/// The program `name` on the PATH; `None` (with the reason printed) when it
/// is not there and the environment does not require it.
pub fn program(name: &str, package: &str) -> Option<PathBuf> {
    let found = std::env::var_os("PATH").and_then(|paths| {
        std::env::split_paths(&paths)
            .map(|dir| dir.join(name))
            .find(|p| p.is_file())
    });
    if found.is_none() {
        let why = format!(
            "`{name}` is not on the PATH; install the Debian package {package} (.ci/run does)"
        );
        if std::env::var_os("SHEETFIT_REQUIRE_SPREADSHEETS").is_some() {
            panic!("{why}");
        }
        // Straight to the terminal: the test harness keeps what `eprintln!`
        // prints from a passing test to itself.
        let _ = writeln!(std::io::stderr(), "skipped: {why}");
    }
    found
}

/// Runs LibreOffice headless (`soffice --headless ARGS`) in `cwd`, with
/// `cwd` as its home; `false` (with the reason printed) when it is not
/// installed and the environment does not require it. A failed run fails
/// the test.
pub fn libreoffice(cwd: &Path, args: &[&str]) -> bool {
    let Some(soffice) = program("soffice", "libreoffice-calc") else {
        return false;
    };
    let out = Command::new(soffice)
        .arg("--headless")
        .args(args)
        .current_dir(cwd)
        .env("HOME", cwd)
        .output()
        .expect("start soffice");
    assert!(
        out.status.success(),
        "soffice {args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    true
}
