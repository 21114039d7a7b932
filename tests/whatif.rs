//! The What-if sheet's live formulas: their cached results, and the values
//! Gnumeric (`ssconvert --recalc`) and LibreOffice Calc (recalculation on
//! load forced in its profile) compute, equal the tool's own predictions
//! in the results JSON, for the prefilled inputs and for a copy of the
//! workbook with changed inputs (a number, a level and the period).
//!
//! The reference is the tool's forecast, itself checked against
//! statsmodels in tests/forecast.rs; what is tested here is that the
//! workbook's formulas compute the same thing.

mod common;

use std::collections::HashMap;
use std::io::{Read, Write};
use std::path::{Path, PathBuf};
use std::process::Command;

use calamine::{open_workbook_auto, Data, Reader};
use common::grid::{Grid, Seen};
use common::{
    model_named as model, program, read_json, sheetfit, soffice_convert, stderr, Scratch,
};
use serde_json::Value;

/// Agreement asked of a recalculated value.
const TOL: f64 = 1e-9;

/// The outputs of a block, with the JSON forecast keys they equal.
const OUTPUTS: [&str; 5] = [
    "estimate",
    "mean_lower",
    "mean_upper",
    "pred_lower",
    "pred_upper",
];

fn demo_files(folder: &Path) {
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("demo-data");
    std::fs::create_dir_all(folder).expect("folder");
    for name in ["garden-centres.xlsx", "garden-centres.toml"] {
        std::fs::copy(root.join(name), folder.join(name)).expect("copy the demo");
    }
}

fn run(folder: &Path, job: &str) -> Value {
    let out = sheetfit(folder, &["run", job]);
    assert!(out.status.success(), "{}", stderr(&out));
    read_json(&folder.join("reports/garden-centres-report.json"))
}

/// The defined names of `workbook` as zero-based (row, col) on What-if.
fn names(workbook: &Path) -> HashMap<String, (usize, usize)> {
    let wb = open_workbook_auto(workbook).expect("open");
    wb.defined_names()
        .iter()
        .filter_map(|(name, target)| {
            let cell = target.split('!').nth(1)?.replace('$', "");
            let letters: String = cell
                .chars()
                .take_while(|c| c.is_ascii_alphabetic())
                .collect();
            let row: usize = cell[letters.len()..].parse().ok()?;
            let col = letters
                .bytes()
                .fold(0usize, |n, b| n * 26 + usize::from(b - b'A' + 1));
            Some((name.clone(), (row - 1, col - 1)))
        })
        .collect()
}

fn number(grid: &Grid, at: (usize, usize), what: &str) -> f64 {
    match grid.at(at.0, at.1) {
        Seen::Number(x, _) => *x,
        other => panic!("{}: {what} is not a number: {other:?}", grid.source),
    }
}

fn close(what: &str, got: f64, want: f64) {
    assert!(
        (got - want).abs() <= TOL * want.abs().max(1.0),
        "{what}: got {got}, expected {want}"
    );
}

/// Asserts that block `k`'s outputs in `grid` equal `row` (a JSON forecast
/// row).
fn assert_outputs(grid: &Grid, names: &HashMap<String, (usize, usize)>, k: usize, row: &Value) {
    for key in OUTPUTS {
        let name = format!("WhatIf_{k}_{key}");
        let at = names[&name];
        close(
            &format!("{} {name}", grid.source),
            number(grid, at, &name),
            row[key].as_f64().expect("JSON number"),
        );
    }
}

#[test]
fn cached_results_are_the_tools_predictions_and_every_cell_has_its_name() {
    let scratch = Scratch::new();
    let folder = scratch.path("demo");
    demo_files(&folder);
    let json = run(&folder, "garden-centres.toml");
    let workbook = folder.join("reports/garden-centres-report.xlsx");
    let names = names(&workbook);
    // The demo's fourth model, `monthly forecast`: its predictors, the
    // period and the outputs.
    for column in [
        "floor_area",
        "staff_hours",
        "promo",
        "region",
        "format",
        "period",
        "estimate",
        "mean_lower",
        "mean_upper",
        "pred_lower",
        "pred_upper",
    ] {
        assert!(
            names.contains_key(&format!("WhatIf_4_{column}")),
            "WhatIf_4_{column} in {names:?}"
        );
    }
    let mut wb = open_workbook_auto(&workbook).expect("open");
    let range = wb.worksheet_range("What-if").expect("What-if sheet");
    let grid = Grid::of_range("What-if (cached)", &range);
    assert_outputs(
        &grid,
        &names,
        4,
        &model(&json, "monthly forecast")["forecast"][0],
    );
    // The input cells hold the first forecast row's values.
    let inputs = &model(&json, "monthly forecast")["forecast"][0]["inputs"];
    let region = names["WhatIf_4_region"];
    assert_eq!(
        range.get_value((region.0 as u32, region.1 as u32)),
        Some(&Data::String(
            inputs["region"].as_str().expect("region").to_string()
        ))
    );
}

/// `workbook` with the inputs `changes` (defined name, new cell XML
/// contents) written into the What-if sheet's XML, its cached results
/// left stale for a program to recalculate.
fn with_inputs(
    workbook: &Path,
    names: &HashMap<String, (usize, usize)>,
    changes: &[(&str, &str)],
    out: &Path,
) {
    let mut zip = zip::ZipArchive::new(std::fs::File::open(workbook).expect("open")).expect("zip");
    let mut writer = zip::ZipWriter::new(std::fs::File::create(out).expect("create"));
    for i in 0..zip.len() {
        let mut entry = zip.by_index(i).expect("entry");
        let name = entry.name().expect("entry name").to_string();
        let mut bytes = Vec::new();
        entry.read_to_end(&mut bytes).expect("read");
        // The What-if sheet is the workbook's second.
        if name == "xl/worksheets/sheet2.xml" {
            let mut xml = String::from_utf8(bytes).expect("utf-8");
            for (target, contents) in changes {
                let (row, col) = names[*target];
                let reference = format!("{}{}", char::from(b'A' + col as u8), row + 1);
                let start = xml
                    .find(&format!("<c r=\"{reference}\""))
                    .unwrap_or_else(|| panic!("cell {reference}"));
                let end = start + xml[start..].find("</c>").expect("cell end") + 4;
                let style = xml[start..end]
                    .split(" s=\"")
                    .nth(1)
                    .and_then(|s| s.split('"').next())
                    .map(|s| format!(" s=\"{s}\""))
                    .unwrap_or_default();
                xml.replace_range(
                    start..end,
                    &format!("<c r=\"{reference}\"{style}{contents}</c>"),
                );
            }
            bytes = xml.into_bytes();
        }
        writer
            .start_file(name, zip::write::SimpleFileOptions::default())
            .expect("start");
        writer.write_all(&bytes).expect("write");
    }
    writer.finish().expect("finish");
}

/// The inputs changed in the demo's fourth block, and the job's `hold` and
/// forecast row that predict the same row.
const CHANGED: [(&str, &str); 3] = [
    ("WhatIf_4_floor_area", "><v>1500</v>"),
    ("WhatIf_4_region", " t=\"inlineStr\"><is><t>East</t></is>"),
    // 2026-03-01, the third forecast month.
    ("WhatIf_4_period", "><v>46082</v>"),
];

/// The reports a program recalculates: the demo as written, the demo with
/// changed inputs, and a log-response model; each with the JSON rows its
/// blocks must show.
fn cases(scratch: &Scratch) -> Vec<(PathBuf, Vec<(usize, Value)>)> {
    let folder = scratch.path("demo");
    demo_files(&folder);
    let json = run(&folder, "garden-centres.toml");
    let workbook = folder.join("reports/garden-centres-report.xlsx");
    let names = names(&workbook);
    let first = model(&json, "monthly forecast")["forecast"][0].clone();
    let changed = scratch.path("changed.xlsx");
    with_inputs(&workbook, &names, &CHANGED, &changed);
    // The tool's own prediction for the changed inputs: the same job with
    // them held, its forecast for 2026-03.
    let job = std::fs::read_to_string(folder.join("garden-centres.toml")).expect("job");
    let held = job.replace(
        "hold = { floor_area = 1200, staff_hours = 480, promo = 0, region = \"North\", format = \"Retail park\" }",
        "hold = { floor_area = 1500, staff_hours = 480, promo = 0, region = \"East\", format = \"Retail park\" }",
    );
    assert_ne!(held, job, "the demo job holds the values this test changes");
    let other = scratch.path("held");
    demo_files(&other);
    std::fs::write(other.join("garden-centres.toml"), held).expect("write job");
    let held_json = run(&other, "garden-centres.toml");
    let march = model(&held_json, "monthly forecast")["forecast"]
        .as_array()
        .expect("forecast")
        .iter()
        .find(|r| r["period"] == "2026-03")
        .expect("2026-03")
        .clone();
    // A log response: nottem's temperatures by month, on the log scale.
    let log = scratch.path("log");
    std::fs::create_dir_all(&log).expect("folder");
    std::fs::copy(
        PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/ar1/nottem.csv"),
        log.join("data.csv"),
    )
    .expect("copy");
    std::fs::write(
        log.join("job.toml"),
        "suggest = false\n[input]\nworkbook = \"data.csv\"\n[output]\nworkbook = \"report.xlsx\"\n[[model]]\nname = \"log\"\nresponse = \"temperature\"\ntransform = \"log\"\ntrend = \"month\"\nseason = { column = \"month\", by = \"month\" }\n[model.forecast]\nhorizon = 3\n",
    )
    .expect("job");
    let out = sheetfit(&log, &["run", "job.toml"]);
    assert!(out.status.success(), "{}", stderr(&out));
    let log_json = read_json(&log.join("report.json"));
    vec![
        (workbook, vec![(4, first)]),
        (changed, vec![(4, march)]),
        (
            log.join("report.xlsx"),
            vec![(1, log_json["models"][0]["forecast"][0].clone())],
        ),
    ]
}

fn assert_recalculated(csv: &Path, workbook: &Path, rows: &[(usize, Value)]) {
    let grid = Grid::of_csv(csv);
    let names = names(workbook);
    for (k, row) in rows {
        assert_outputs(&grid, &names, *k, row);
    }
}

#[test]
fn gnumeric_recalculates_the_what_if_sheet_to_the_tools_predictions() {
    let Some(ssconvert) = program("ssconvert", "gnumeric") else {
        return;
    };
    let scratch = Scratch::new();
    for (k, (workbook, rows)) in cases(&scratch).into_iter().enumerate() {
        let folder = scratch.path(&format!("gnumeric-{k}"));
        std::fs::create_dir_all(&folder).expect("folder");
        let out = Command::new(&ssconvert)
            .args(["--recalc", "-S"])
            .arg(&workbook)
            .arg(folder.join("out-%s.csv"))
            .output()
            .expect("start ssconvert");
        assert!(out.status.success(), "ssconvert: {}", stderr(&out));
        assert_recalculated(&folder.join("out-What-if.csv"), &workbook, &rows);
    }
}

#[test]
fn libreoffice_recalculates_the_what_if_sheet_to_the_tools_predictions() {
    let Some(soffice) = program("soffice", "libreoffice-calc") else {
        return;
    };
    let scratch = Scratch::new();
    // A profile that recalculates every formula of an xlsx file on load.
    let profile = scratch.path("profile");
    std::fs::create_dir_all(profile.join("user")).expect("profile");
    std::fs::write(
        profile.join("user/registrymodifications.xcu"),
        "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<oor:items xmlns:oor=\"http://openoffice.org/2001/registry\" xmlns:xs=\"http://www.w3.org/2001/XMLSchema\" xmlns:xsi=\"http://www.w3.org/2001/XMLSchema-instance\">\n<item oor:path=\"/org.openoffice.Office.Calc/Formula/Load\"><prop oor:name=\"OOXMLRecalcMode\" oor:op=\"fuse\"><value>0</value></prop></item>\n</oor:items>\n",
    )
    .expect("profile settings");
    for (k, (workbook, rows)) in cases(&scratch).into_iter().enumerate() {
        let folder = scratch.path(&format!("libreoffice-{k}"));
        let out = soffice_convert(
            &soffice,
            &profile,
            "csv:Text - txt - csv (StarCalc):44,34,UTF8,1,,0,false,true,false,false,false,-1",
            &workbook,
            &folder,
        );
        assert!(out.status.success(), "soffice: {}", stderr(&out));
        let stem = workbook.file_stem().and_then(|s| s.to_str()).expect("stem");
        assert_recalculated(
            &folder.join(format!("{stem}-What-if.csv")),
            &workbook,
            &rows,
        );
    }
}
