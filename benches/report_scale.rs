//! Whole-report speed and memory at 10k, 100k and 1M rows, beside the I/O
//! floor measured in the same run.
//!
//! Run with `cargo bench --bench report_scale` (all three sizes) or name
//! the sizes: `cargo bench --bench report_scale -- 10000 100000`. The
//! `--smoke` flag runs the smallest size once and only checks that the run
//! succeeded and wrote its files; CI runs it so the bench keeps working.
//!
//! For each size the bench
//!
//! 1. generates an invented workbook (`target/scale/rows-N.xlsx`, kept
//!    between runs): a fictional parcel carrier's delivery rounds, one row
//!    per round and month, with a date, five numeric columns, two text
//!    categories and a 0/1 flag, from splitmix64 with a fixed seed;
//! 2. runs the release `sheetfit` binary on a three-model job (numeric;
//!    numeric and categorical; trend, monthly season and a 12-month
//!    forecast), every sheet and chart included;
//! 3. runs the floor in a separate process: stream the input with
//!    calamine's cell reader into typed columns, then write as many number
//!    cells as the report holds, sheet by sheet, with rust_xlsxwriter in
//!    constant-memory mode;
//!
//! and prints wall time and peak RSS (`ru_maxrss` from `wait4`) of both,
//! with their ratios. The machines are shared and noisy: compare ratios
//! within one run, not seconds between runs.
//!
//! `cargo bench --bench report_scale -- by` runs the per-series case
//! instead: an invented CSV of 2,000 series (parcel lockers) of 60 months
//! each, and a job that fits one model per series (`by`) with a trend, a
//! monthly season and a 6-month forecast each; it prints the wall time and
//! peak RSS against the README's targets (10 s, 500 MB). `--smoke` runs
//! it on 200 series as well.

use std::error::Error;
use std::f64::consts::PI;
use std::fs;
use std::path::{Path, PathBuf};
use std::process::Command;

use calamine::{open_workbook_auto, DataType, Reader};
use rust_xlsxwriter::{ExcelDateTime, Format, Workbook};

#[path = "../examples/support/measure.rs"]
mod measure;
#[path = "../examples/support/splitmix.rs"]
mod splitmix;
use measure::measure;
use splitmix::SplitMix64;

/// Row counts of the three generated workbooks.
const SIZES: [usize; 3] = [10_000, 100_000, 1_000_000];
/// Fixed seed, so every run reads the same invented data.
const SEED: u64 = 20261202;
/// Months covered by the data; rounds are spread evenly over them.
const MONTHS: usize = 60;
const DEPOTS: [&str; 6] = [
    "Ashford",
    "Brookmere",
    "Calder",
    "Dunmore",
    "Elmstead",
    "Fenwick",
];
const VEHICLES: [&str; 3] = ["bike", "van", "truck"];
const HEADERS: [&str; 9] = [
    "month",
    "depot",
    "vehicle",
    "distance_km",
    "stops",
    "parcels",
    "driver_hours",
    "express",
    "cost",
];

/// The three-model job, with `{input}` and `{output}` filled in per size.
const JOB: &str = r#"title = "Delivery rounds (invented scale data)"

[input]
workbook = "{input}"
sheet = "rounds"

[output]
workbook = "{output}"
overwrite = true

[[model]]
name = "drivers"
response = "cost"
numeric = ["distance_km", "stops", "parcels", "driver_hours", "express"]

[[model]]
name = "by depot and vehicle"
response = "cost"
numeric = ["distance_km", "stops", "parcels", "driver_hours", "express"]
categorical = { depot = "Ashford", vehicle = "van" }

[[model]]
name = "trend and season"
response = "cost"
numeric = ["distance_km", "stops"]
categorical = ["depot"]
trend = "month"
season = { column = "month", by = "month" }

[model.forecast]
horizon = 12
hold = { distance_km = 40, stops = 60, depot = "Calder" }
"#;

/// A draw among `n` choices.
fn pick(rng: &mut SplitMix64, n: usize) -> usize {
    (rng.next_u64() % n as u64) as usize
}

/// Writes `rows` invented delivery rounds to `path` (constant memory).
fn generate(path: &Path, rows: usize) -> Result<(), Box<dyn Error>> {
    let mut rng = SplitMix64::new(SEED);
    let mut workbook = Workbook::new();
    let date = Format::new().set_num_format("yyyy-mm-dd");
    let sheet = workbook.add_worksheet_with_constant_memory()?;
    sheet.set_name("rounds")?;
    for (col, header) in HEADERS.iter().enumerate() {
        sheet.write_string(0, col as u16, *header)?;
    }
    for i in 0..rows {
        let row = i as u32 + 1;
        let month = i * MONTHS / rows;
        let (year, month_of_year) = (2021 + month / 12, month % 12 + 1);
        let depot = pick(&mut rng, DEPOTS.len());
        let vehicle = pick(&mut rng, VEHICLES.len());
        let distance = (10.0 + 60.0 * rng.uniform()).round();
        let stops = (20.0 + 80.0 * rng.uniform()).round();
        let parcels = (stops * (1.2 + rng.uniform())).round();
        let hours =
            ((2.0 + distance / 25.0 + stops / 30.0 + 0.5 * rng.normal()) * 10.0).round() / 10.0;
        let express = f64::from(rng.uniform() < 0.2);
        let season = 8.0 * (2.0 * PI * month_of_year as f64 / 12.0).sin();
        let cost = 40.0
            + 1.8 * distance
            + 0.9 * stops
            + 0.15 * parcels
            + 6.0 * hours
            + 25.0 * express
            + 4.0 * depot as f64
            + [-15.0, 0.0, 30.0][vehicle]
            + 0.2 * month as f64
            + season
            + 12.0 * rng.normal();
        let stamp = ExcelDateTime::from_ymd(year as u16, month_of_year as u8, 1)?;
        sheet.write_datetime_with_format(row, 0, &stamp, &date)?;
        sheet.write_string(row, 1, DEPOTS[depot])?;
        sheet.write_string(row, 2, VEHICLES[vehicle])?;
        sheet.write_number(row, 3, distance)?;
        sheet.write_number(row, 4, stops)?;
        sheet.write_number(row, 5, parcels)?;
        sheet.write_number(row, 6, hours)?;
        sheet.write_number(row, 7, express)?;
        sheet.write_number(row, 8, (cost * 100.0).round() / 100.0)?;
    }
    workbook.save(path)?;
    Ok(())
}

/// The floor: stream every input cell into typed columns, then write
/// `shape` (rows, columns per sheet) as number cells in constant memory,
/// each value with a full double's digits as the report's are.
fn floor(input: &Path, output: &Path, shape: &[(u32, u16)]) -> Result<(), Box<dyn Error>> {
    let mut workbook = open_workbook_auto(input)?;
    let calamine::Sheets::Xlsx(ref mut xlsx) = workbook else {
        return Err("the floor reads xlsx only".into());
    };
    let mut numbers: Vec<Vec<f64>> = vec![Vec::new(); HEADERS.len()];
    let mut texts: Vec<Vec<String>> = vec![Vec::new(); HEADERS.len()];
    let mut cells = xlsx.worksheet_cells_reader("rounds")?;
    while let Some(cell) = cells.next_cell()? {
        let col = cell.get_position().1 as usize;
        if cell.get_position().0 == 0 || col >= HEADERS.len() {
            continue;
        }
        match cell.get_value() {
            calamine::DataRef::SharedString(s) => texts[col].push(s.to_string()),
            calamine::DataRef::String(s) => texts[col].push(s.clone()),
            other => numbers[col].push(other.get_float().or(other.as_f64()).unwrap_or(f64::NAN)),
        }
    }
    std::hint::black_box((&numbers, &texts));
    let mut report = Workbook::new();
    for &(rows, cols) in shape {
        let sheet = report.add_worksheet_with_constant_memory()?;
        for row in 0..rows {
            for col in 0..cols {
                // Values with as many digits as the report's statistics.
                let value = (f64::from(row) * 0.618_033_988_749_895 + f64::from(col)).sin();
                sheet.write_number(row, col, 1234.5 * value)?;
            }
        }
    }
    report.save(output)?;
    Ok(())
}

/// For each sheet of a written workbook, its rows holding cells and the
/// cells per such row (rounded up), so the floor writes as many cells as
/// the report holds. Counted with the streaming reader, so this process
/// stays small: a child's peak RSS (`ru_maxrss`) includes what it inherits
/// from its parent before it runs.
fn sheet_shapes(path: &Path) -> Result<Vec<(u32, u16)>, Box<dyn Error>> {
    let mut workbook = open_workbook_auto(path)?;
    let calamine::Sheets::Xlsx(ref mut xlsx) = workbook else {
        return Err("the report is not an xlsx workbook".into());
    };
    let mut shapes = Vec::new();
    for name in xlsx.sheet_names() {
        let mut cells = xlsx.worksheet_cells_reader(&name)?;
        let (mut count, mut rows, mut last_row) = (0u64, 0u64, None);
        while let Some(cell) = cells.next_cell()? {
            count += 1;
            if last_row != Some(cell.get_position().0) {
                rows += 1;
                last_row = Some(cell.get_position().0);
            }
        }
        let cols = count.div_ceil(rows.max(1));
        shapes.push((u32::try_from(rows)?, u16::try_from(cols)?));
    }
    Ok(shapes)
}

/// Writes `template` with `{input}` and `{output}` filled in as the job
/// file `job`, runs the release binary on it and measures the run; an
/// error when it fails or writes no results JSON beside `report`.
fn run_job(
    template: &str,
    input: &Path,
    report: &Path,
    job: &Path,
) -> Result<measure::Measured, Box<dyn Error>> {
    let text = template
        .replace("{input}", &input.display().to_string())
        .replace("{output}", &report.display().to_string());
    fs::write(job, text)?;
    let tool = measure(
        Command::new(env!("CARGO_BIN_EXE_sheetfit"))
            .args(["run", "-q"])
            .arg(job),
    )?;
    if !tool.status.success() {
        return Err(format!("sheetfit failed on {} ({})", job.display(), tool.status).into());
    }
    let json = report.with_extension("json");
    if !json.exists() {
        return Err(format!("sheetfit wrote no {}", json.display()).into());
    }
    Ok(tool)
}

fn run_size(rows: usize, dir: &Path, smoke: bool) -> Result<(), Box<dyn Error>> {
    let input = dir.join(format!("rows-{rows}.xlsx"));
    if !input.exists() {
        eprintln!("generating {} ...", input.display());
        generate(&input, rows)?;
    }
    let report = dir.join(format!("rows-{rows}-report.xlsx"));
    let tool = run_job(JOB, &input, &report, &dir.join(format!("rows-{rows}.toml")))?;
    let shape = sheet_shapes(&report)?;
    let cells: u64 = shape
        .iter()
        .map(|&(r, c)| u64::from(r) * u64::from(c))
        .sum();
    if smoke {
        println!(
            "smoke run: {rows} rows, report of {cells} cells in {} sheets, ok",
            shape.len()
        );
        return Ok(());
    }
    let shape_arg: Vec<String> = shape.iter().map(|(r, c)| format!("{r}x{c}")).collect();
    let floor_out = dir.join(format!("rows-{rows}-floor.xlsx"));
    let floor_run = measure(
        Command::new(std::env::current_exe()?)
            .arg("--floor")
            .arg(&input)
            .arg(&floor_out)
            .arg(shape_arg.join(",")),
    )?;
    if !floor_run.status.success() {
        return Err(format!("the floor run failed ({})", floor_run.status).into());
    }
    println!(
        "{:>9} {:>11} {:>8.1} {:>8.1} {:>6.2} {:>9.0} {:>9.0} {:>6.2}",
        rows,
        cells,
        floor_run.wall.as_secs_f64(),
        tool.wall.as_secs_f64(),
        tool.wall.as_secs_f64() / floor_run.wall.as_secs_f64(),
        floor_run.peak_mb,
        tool.peak_mb,
        tool.peak_mb / floor_run.peak_mb,
    );
    Ok(())
}

/// Series in the per-series case, and months of each.
const BY_SERIES: usize = 2_000;
const BY_MONTHS: usize = 60;

/// The per-series job: one model per locker.
const BY_JOB: &str = r#"title = "Parcel lockers (invented scale data)"
suggest = false

[input]
workbook = "{input}"

[output]
workbook = "{output}"
overwrite = true

[[model]]
name = "per locker"
response = "parcels"
numeric = ["footfall", "rain_mm"]
trend = "month"
season = { column = "month", by = "month" }
by = "locker"

[model.forecast]
horizon = 6
hold = { footfall = 900, rain_mm = 60 }
"#;

/// Writes `series` invented lockers of [`BY_MONTHS`] months each as CSV.
fn generate_by(path: &Path, series: usize) -> Result<(), Box<dyn Error>> {
    let mut rng = SplitMix64::new(SEED);
    let mut text = String::from("month,locker,footfall,rain_mm,parcels\n");
    for locker in 0..series {
        let level = 50.0 + 100.0 * rng.uniform();
        for m in 0..BY_MONTHS {
            let (year, month) = (2021 + m / 12, m % 12 + 1);
            let footfall = 500.0 + 800.0 * rng.uniform();
            let rain = 120.0 * rng.uniform();
            let season = 10.0 * (2.0 * PI * month as f64 / 12.0).sin();
            let parcels =
                level + 0.05 * footfall - 0.1 * rain + 0.3 * m as f64 + season + 5.0 * rng.normal();
            text.push_str(&format!(
                "{year}-{month:02}-01,L{locker:04},{footfall:.0},{rain:.1},{parcels:.1}\n"
            ));
        }
    }
    fs::write(path, text)?;
    Ok(())
}

/// The per-series case: `series` lockers, one model each.
fn run_by(series: usize, dir: &Path, smoke: bool) -> Result<(), Box<dyn Error>> {
    let input = dir.join(format!("by-{series}.csv"));
    if !input.exists() {
        generate_by(&input, series)?;
    }
    let report = dir.join(format!("by-{series}-report.xlsx"));
    let tool = run_job(
        BY_JOB,
        &input,
        &report,
        &dir.join(format!("by-{series}.toml")),
    )?;
    if smoke {
        println!("smoke run: {series} series by level, ok");
    } else {
        println!(
            "by: {series} series of {BY_MONTHS} rows, {:.1} s (target 10 s), {:.0} MB (target 500 MB)",
            tool.wall.as_secs_f64(),
            tool.peak_mb
        );
    }
    Ok(())
}

fn parse_shape(text: &str) -> Result<Vec<(u32, u16)>, Box<dyn Error>> {
    text.split(',')
        .map(|part| {
            let (rows, cols) = part.split_once('x').ok_or("shape must be ROWSxCOLS,...")?;
            Ok((rows.parse()?, cols.parse()?))
        })
        .collect()
}

fn main() -> Result<(), Box<dyn Error>> {
    let args: Vec<String> = std::env::args()
        .skip(1)
        .filter(|a| a != "--bench")
        .collect();
    if args.first().map(String::as_str) == Some("--floor") {
        let [_, input, output, shape] = args.as_slice() else {
            return Err("usage: --floor INPUT OUTPUT SHAPE".into());
        };
        return floor(Path::new(input), Path::new(output), &parse_shape(shape)?);
    }
    let smoke = args.iter().any(|a| a == "--smoke");
    let mut sizes: Vec<usize> = args.iter().filter_map(|a| a.parse().ok()).collect();
    if smoke {
        sizes = vec![SIZES[0]];
    } else if sizes.is_empty() {
        sizes = SIZES.to_vec();
    }
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("target")
        .join("scale");
    fs::create_dir_all(&dir)?;
    if args.iter().any(|a| a == "by") {
        return run_by(BY_SERIES, &dir, false);
    }
    if !smoke {
        println!(
            "{:>9} {:>11} {:>8} {:>8} {:>6} {:>9} {:>9} {:>6}",
            "rows", "cells", "floor s", "tool s", "ratio", "floor MB", "tool MB", "ratio"
        );
    }
    for rows in sizes {
        run_size(rows, &dir, smoke)?;
    }
    if smoke {
        run_by(BY_SERIES / 10, &dir, true)?;
    }
    Ok(())
}
