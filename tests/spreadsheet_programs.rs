//! The reports in two spreadsheet programs that no one here wrote:
//! LibreOffice Calc (`soffice --headless --convert-to`) and Gnumeric
//! (`ssconvert`). Each opens every demo report and a set of fixture
//! reports, turns each into a PDF and each sheet into CSV without an error
//! or a repair message, and the numbers it reads back are the numbers of
//! the results JSON: the stored values to the digits the CSV carries, and
//! (LibreOffice) the values as the cells show them, to the precision shown.
//!
//! Both programs come from Debian's packages (`libreoffice-calc`,
//! `gnumeric`), which `.ci/run` installs. On a machine without one, its
//! test says it was skipped and why, and passes; with
//! `SHEETFIT_REQUIRE_SPREADSHEETS=1` (as `.ci/run` sets) a missing program
//! fails it instead.

mod common;

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use serde_json::Value;

use common::grid::{
    assert_anova, assert_chart_points, assert_checks, assert_coefficients, assert_fit_quality,
    assert_forecast, assert_residuals, Grid,
};
use common::{program, read_json, sheetfit, soffice_convert, stderr, Scratch, SHEETS};

/// Relative tolerance for stored values read back through CSV: LibreOffice
/// writes 15 significant digits, Gnumeric 17. (LibreOffice writes some
/// small numbers with 20 decimals and fewer significant digits; each value
/// is also accepted to the precision its text shows.)
const CSV_TOL: f64 = 1e-14;

/// A report written by a run of the tool.
struct Report {
    workbook: PathBuf,
    json: Value,
    /// The sheets it holds, in order.
    sheets: Vec<&'static str>,
}

/// Runs `sheetfit run JOB` in `folder`, which must succeed.
fn run(folder: &Path, job: &str) {
    let out = sheetfit(folder, &["run", job]);
    assert!(out.status.success(), "{job}: {}", stderr(&out));
}

fn report(workbook: PathBuf, sheets: Vec<&'static str>) -> Report {
    let json = read_json(&workbook.with_extension("json"));
    Report {
        workbook,
        json,
        sheets,
    }
}

/// The demo's two reports (the second compares with the first, so it has
/// the change sheets) and reports of the fixture data: forecasts monthly,
/// quarterly with a log response, and by series; factors with their
/// baselines; robust standard errors, an interaction and a suggestion.
fn reports(scratch: &Scratch) -> Vec<Report> {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let demo = scratch.path("demo");
    std::fs::create_dir_all(&demo).expect("demo folder");
    for name in [
        "garden-centres.toml",
        "garden-centres.xlsx",
        "garden-centres-2026-03.toml",
        "garden-centres-2026-03.xlsx",
    ] {
        std::fs::copy(root.join("demo-data").join(name), demo.join(name)).expect("copy demo");
    }
    run(&demo, "garden-centres.toml");
    run(&demo, "garden-centres-2026-03.toml");
    let mut with_changes = SHEETS.to_vec();
    with_changes.extend(["Changes", "Forecast tracking"]);
    let mut out = vec![
        report(
            demo.join("reports/garden-centres-report.xlsx"),
            SHEETS.to_vec(),
        ),
        report(
            demo.join("reports/garden-centres-2026-03-report.xlsx"),
            with_changes,
        ),
    ];

    let fixtures = root.join("tests/fixtures");
    let mut case = |name: &str, data: &Path, job: &str| {
        let folder = scratch.path(name);
        std::fs::create_dir_all(&folder).expect("case folder");
        let file = data.file_name().expect("data file name");
        std::fs::copy(data, folder.join(file)).expect("copy fixture data");
        std::fs::write(folder.join("job.toml"), job).expect("write job");
        run(&folder, "job.toml");
        out.push(report(folder.join("report.xlsx"), SHEETS.to_vec()));
    };
    for name in ["monthly", "quarterly", "panel"] {
        let expected = read_json(&fixtures.join(format!("forecast/{name}.json")));
        let job = expected["job"].as_str().expect("job text in the fixture");
        case(name, &fixtures.join(format!("forecast/{name}.csv")), job);
    }
    case(
        "categorical",
        &fixtures.join("categorical/data.csv"),
        "title = \"Factors\"\n[input]\nworkbook = \"data.csv\"\n[output]\nworkbook = \"report.xlsx\"\n\
         [[model]]\nname = \"stores\"\nresponse = \"revenue\"\nnumeric = [\"floor_area\", \"staff_hours\"]\n\
         categorical = { region = \"North\", format = \"Garden shop\" }\n",
    );
    case(
        "duncan",
        &fixtures.join("model_checks/duncan.csv"),
        "title = \"Prestige\"\nsuggest_threshold = 0.05\n[input]\nworkbook = \"duncan.csv\"\n\
         [output]\nworkbook = \"report.xlsx\"\n\
         [[model]]\nname = \"interaction\"\nresponse = \"prestige\"\nnumeric = [\"income\", \"education\"]\n\
         categorical = { type = \"bc\" }\ninteractions = [[\"type\", \"income\"]]\n\
         [[model]]\nname = \"robust\"\nresponse = \"prestige\"\nnumeric = [\"income\", \"education\"]\n\
         categorical = { type = \"bc\" }\nstandard_errors = \"HC3\"\n",
    );
    out
}

/// Asserts that a conversion succeeded and printed nothing but `harmless`
/// lines (blank lines aside) on either stream.
fn assert_clean(what: &str, out: &Output, harmless: &[&str]) {
    assert!(
        out.status.success(),
        "{what} failed ({}): {}",
        out.status,
        stderr(out)
    );
    let printed = format!(
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    for line in printed.lines().map(str::trim).filter(|l| !l.is_empty()) {
        assert!(
            harmless.iter().any(|h| line.starts_with(h)),
            "{what} printed: {line}\n(all it printed:\n{printed})"
        );
    }
}

/// Asserts that `path` is a PDF of some pages.
fn assert_pdf(path: &Path) {
    let bytes = std::fs::read(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    assert!(
        bytes.starts_with(b"%PDF-"),
        "{} is not a PDF",
        path.display()
    );
    assert!(bytes.len() > 10_000, "{} is nearly empty", path.display());
}

/// The CSV files of every sheet of `report`, named `{stem}-{sheet}.csv` in
/// `folder`, compared with the JSON.
fn assert_sheets_match_json(report: &Report, folder: &Path, stem: &str) {
    let grid = |sheet: &str| {
        let path = folder.join(format!("{stem}-{sheet}.csv"));
        assert!(
            path.is_file(),
            "no CSV for sheet {sheet}: {}",
            path.display()
        );
        Grid::of_csv(&path)
    };
    for sheet in &report.sheets {
        grid(sheet);
    }
    let json = &report.json;
    assert!(assert_coefficients(&grid("Coefficients"), json, CSV_TOL) > 0);
    assert!(assert_residuals(&grid("Residuals"), json, CSV_TOL) > 0);
    assert!(assert_chart_points(&grid("Chart points"), json, CSV_TOL) > 0);
    assert!(assert_checks(&grid("Checks"), json, CSV_TOL) > 0);
    assert!(assert_anova(&grid("ANOVA"), json, CSV_TOL) > 0);
    assert_forecast(&grid("Forecast"), json, CSV_TOL);
    assert_fit_quality(&grid("Fit quality"), json, CSV_TOL);
}

/// What LibreOffice prints on a good conversion: the files it converts
/// and, on a machine without Java (which nothing here needs), that it
/// could not start it.
const LIBREOFFICE_NOTICES: [&str; 3] = [
    "convert ",
    "Writing sheet ",
    "Warning: failed to launch javaldx - java may not function correctly",
];

#[test]
fn libreoffice_opens_every_report_and_reads_back_the_json_numbers() {
    let Some(soffice) = program("soffice", "libreoffice-calc") else {
        return;
    };
    let scratch = Scratch::new();
    let profile = scratch.path("libreoffice-profile");
    let convert = |target: &str, input: &Path, folder: &Path| {
        let out = soffice_convert(&soffice, &profile, target, input, folder);
        let what = format!("soffice --convert-to {target} {}", input.display());
        assert_clean(&what, &out, &LIBREOFFICE_NOTICES);
    };
    // Field separator, text delimiter, character set, first line; then
    // "save cell contents as shown" and, last, -1: every sheet to its own
    // file.
    let csv = |shown: bool| {
        format!("csv:Text - txt - csv (StarCalc):44,34,UTF8,1,,0,false,true,{shown},false,false,-1")
    };
    for (k, report) in reports(&scratch).iter().enumerate() {
        let stem = report
            .workbook
            .file_stem()
            .and_then(|s| s.to_str())
            .expect("report name");
        let folder = scratch.path(&format!("libreoffice-{k}"));
        let shown = scratch.path(&format!("libreoffice-{k}-shown"));
        convert("pdf", &report.workbook, &folder);
        assert_pdf(&folder.join(format!("{stem}.pdf")));
        convert(&csv(false), &report.workbook, &folder);
        assert_sheets_match_json(report, &folder, stem);
        convert(&csv(true), &report.workbook, &shown);
        assert_sheets_match_json(report, &shown, stem);
    }
}

/// What Gnumeric 1.12 prints for a worksheet table, which its xlsx reader
/// does not know: the sheet is read without the table's filter buttons.
const GNUMERIC_TABLE_NOTICE: [&str; 2] = ["Unexpected element 'tableParts' in state", "worksheet"];

#[test]
fn gnumeric_opens_every_report_and_reads_back_the_json_numbers() {
    let Some(ssconvert) = program("ssconvert", "gnumeric") else {
        return;
    };
    let scratch = Scratch::new();
    for (k, report) in reports(&scratch).iter().enumerate() {
        let folder = scratch.path(&format!("gnumeric-{k}"));
        std::fs::create_dir_all(&folder).expect("output folder");
        let convert = |args: &[&str], target: PathBuf| {
            let out = Command::new(&ssconvert)
                .args(args)
                .arg(&report.workbook)
                .arg(&target)
                .output()
                .expect("start ssconvert");
            let what = format!("ssconvert {} {}", args.join(" "), report.workbook.display());
            assert_clean(&what, &out, &GNUMERIC_TABLE_NOTICE);
        };
        convert(&[], folder.join("report.pdf"));
        assert_pdf(&folder.join("report.pdf"));
        convert(&["-S"], folder.join("report-%s.csv"));
        assert_sheets_match_json(report, &folder, "report");
    }
}
