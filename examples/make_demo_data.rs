//! Generates the demo workbooks used by the sheetfit demo jobs:
//!
//! * `demo-data/garden-centres.xlsx` for `demo-data/garden-centres.toml`:
//!   2022-01 through 2025-12 (48 months, 384 rows);
//! * `demo-data/garden-centres-2026-03.xlsx` for
//!   `demo-data/garden-centres-2026-03.toml`: the same 384 rows, value for
//!   value, plus three more months, 2026-01 through 2026-03 (51 months,
//!   408 rows), the data of the following run in the two-month demo.
//!
//! The data is invented: a fictional chain of eight garden centres, two in
//! each of four regions, observed monthly. It describes no real business.
//! Revenue is built from a known linear formula plus a mild seasonal swing,
//! a slow upward trend and noise, so the fitted coefficients can be
//! compared with the values used here. Each store's noise carries
//! [`NOISE_CARRY_OVER`] of its previous month's (AR(1) noise, standard
//! deviation 4 thousand), as a local run of good or bad months would.
//!
//! The three extra months are drawn from the same generator stream after
//! the first 48 months, so the first workbook's values do not depend on
//! them. Each workbook's properties carry one fixed creation time
//! ([`CREATED`]), so every run writes byte-identical files.
//!
//! Each workbook has two sheets:
//!
//! * `records`: one row per store-month with the columns `month` (a date
//!   cell, first day of the month), `store`, `region`, `format`,
//!   `floor_area` (square metres), `staff_hours` (hours in the month),
//!   `promo` (1 if a promotion ran that month, else 0) and `revenue`
//!   (thousands, one decimal). Three revenue cells (four in the 2026-03
//!   workbook) are deliberately left blank to show how sheetfit drops and
//!   lists incomplete rows.
//! * `about`: a few lines describing the data.
//!
//! Only `rust_xlsxwriter` and the standard library are used. Random numbers
//! come from a small splitmix64 generator with the fixed seed 20261202 and
//! Box-Muller normals, so every run writes the same values.
//!
//! Rerun with:
//!
//! ```text
//! cargo run --example make_demo_data
//! ```

use std::error::Error;
use std::f64::consts::PI;
use std::path::{Path, PathBuf};

use rust_xlsxwriter::{DocProperties, ExcelDateTime, Format, Workbook};

#[path = "support/splitmix.rs"]
mod splitmix;
use splitmix::SplitMix64;

/// Fixed seed, so the demo workbooks are reproducible.
const SEED: u64 = 20261202;

/// The share of a store's previous month's noise that carries into the
/// next month (the AR(1) coefficient of the noise).
const NOISE_CARRY_OVER: f64 = 0.6;

const FIRST_YEAR: u16 = 2022;
/// Months in `garden-centres.xlsx`: 2022-01 to 2025-12.
const MONTHS: usize = 48;
/// Months added in `garden-centres-2026-03.xlsx`: 2026-01 to 2026-03.
const EXTRA_MONTHS: usize = 3;

/// The creation time written into both workbooks' properties (year, month,
/// day, hour, minute, second, UTC). Without it the writer stamps the
/// current time and no two runs give the same bytes. It is the stamp of the
/// first committed `garden-centres.xlsx`, so that file stays byte for byte
/// what it was.
const CREATED: (u16, u8, u8, u16, u8, u8) = (2026, 12, 2, 1, 1, 44);

/// One invented store: name, region, format and floor area (square metres).
struct Store {
    name: &'static str,
    region: &'static str,
    format: &'static str,
    floor_area: f64,
}

/// Eight invented stores, two per region; each region has one store of
/// each format so that region and format effects are not confounded.
const STORES: [Store; 8] = [
    Store {
        name: "Willow Lane",
        region: "North",
        format: "Garden shop",
        floor_area: 720.0,
    },
    Store {
        name: "Lantern Hill",
        region: "North",
        format: "Retail park",
        floor_area: 1540.0,
    },
    Store {
        name: "Mossgate",
        region: "South",
        format: "Garden shop",
        floor_area: 980.0,
    },
    Store {
        name: "Reed Meadow",
        region: "South",
        format: "Retail park",
        floor_area: 1760.0,
    },
    Store {
        name: "Copper Yard",
        region: "East",
        format: "Garden shop",
        floor_area: 610.0,
    },
    Store {
        name: "Thistle Row",
        region: "East",
        format: "Retail park",
        floor_area: 1230.0,
    },
    Store {
        name: "Kettle Bridge",
        region: "West",
        format: "Garden shop",
        floor_area: 1140.0,
    },
    Store {
        name: "Sparrow Park",
        region: "West",
        format: "Retail park",
        floor_area: 1380.0,
    },
];

/// Store-months whose revenue cell is left blank: (store name, year, month).
/// The last lies in the extra months, so only the 2026-03 workbook has it.
const BLANK_REVENUE: [(&str, u16, u8); 4] = [
    ("Lantern Hill", 2022, 7),
    ("Copper Yard", 2023, 11),
    ("Sparrow Park", 2025, 3),
    ("Mossgate", 2026, 2),
];

/// Column headers of the `records` sheet, with their widths.
const COLUMNS: [(&str, f64); 8] = [
    ("month", 12.0),
    ("store", 16.0),
    ("region", 9.0),
    ("format", 13.0),
    ("floor_area", 11.0),
    ("staff_hours", 12.0),
    ("promo", 7.0),
    ("revenue", 10.0),
];

fn region_effect(region: &str) -> f64 {
    match region {
        "South" => 6.0,
        "East" => -4.0,
        "West" => 3.0,
        _ => 0.0, // North is the baseline.
    }
}

fn format_effect(format: &str) -> f64 {
    if format == "Retail park" {
        10.0
    } else {
        0.0
    }
}

fn round_to(value: f64, decimals: i32) -> f64 {
    let scale = 10f64.powi(decimals);
    (value * scale).round() / scale
}

/// One store-month of the `records` sheet.
struct Record {
    year: u16,
    month: u8,
    store: &'static Store,
    staff_hours: f64,
    promo: f64,
    /// `None` for a cell left blank on purpose.
    revenue: Option<f64>,
}

/// Draws `months` months of records for the eight stores, month by month,
/// from one generator seeded with [`SEED`]. A month's draws come after all
/// earlier months' draws, so asking for more months leaves the earlier
/// ones unchanged.
fn records(months: usize) -> Vec<Record> {
    let mut rng = SplitMix64::new(SEED);
    let mut out = Vec::with_capacity(months * STORES.len());
    // Each store's noise, started from its stationary distribution: new
    // draws of standard deviation 4·√(1 − φ²) keep the noise's own at 4.
    let innovation_sd = 4.0 * (1.0 - NOISE_CARRY_OVER * NOISE_CARRY_OVER).sqrt();
    let mut noise = [0.0; STORES.len()];
    for month_index in 0..months {
        // month_index < 51, so these conversions cannot truncate.
        let year = FIRST_YEAR + (month_index / 12) as u16;
        let month = (month_index % 12) as u8 + 1;

        // Spring peak: the cosine is largest in April (month 4).
        let seasonal = 5.0 * (2.0 * PI * (f64::from(month) - 4.0) / 12.0).cos();
        // Slow upward trend: about 0.1 thousand per month.
        let trend = 0.1 * month_index as f64;

        for (k, store) in STORES.iter().enumerate() {
            let staff_hours = (0.4 * store.floor_area + 30.0 * rng.normal()).round();
            let promo = if rng.uniform() < 0.25 { 1.0 } else { 0.0 };
            let draw = rng.normal();
            noise[k] = if month_index == 0 {
                4.0 * draw
            } else {
                NOISE_CARRY_OVER * noise[k] + innovation_sd * draw
            };
            let noise = noise[k];
            let revenue = 20.0
                + 0.045 * store.floor_area
                + 0.06 * staff_hours
                + 8.0 * promo
                + region_effect(store.region)
                + format_effect(store.format)
                + seasonal
                + trend
                + noise;
            let is_blank = BLANK_REVENUE
                .iter()
                .any(|&(name, y, m)| name == store.name && y == year && m == month);
            out.push(Record {
                year,
                month,
                store,
                staff_hours,
                promo,
                revenue: (!is_blank).then(|| round_to(revenue, 1)),
            });
        }
    }
    out
}

/// Writes `records` and the `about` lines as a workbook at `path`; returns
/// the blank revenue cells, described.
fn write_workbook(
    path: &Path,
    records: &[Record],
    about_lines: &[&str],
) -> Result<Vec<String>, Box<dyn Error>> {
    let mut workbook = Workbook::new();
    let (y, mo, d, h, mi, s) = CREATED;
    let created = ExcelDateTime::from_ymd(y, mo, d)?.and_hms(h, mi, s)?;
    workbook.set_properties(&DocProperties::new().set_creation_datetime(&created));

    let bold = Format::new().set_bold();
    let date_format = Format::new().set_num_format("yyyy-mm-dd");
    let one_decimal = Format::new().set_num_format("0.0");

    let sheet = workbook.add_worksheet();
    sheet.set_name("records")?;
    for (col, (header, width)) in (0u16..).zip(COLUMNS) {
        sheet.write_string_with_format(0, col, header, &bold)?;
        sheet.set_column_width(col, width)?;
    }
    sheet.set_freeze_panes(1, 0)?;

    let mut blanks = Vec::new();
    for (row, r) in (1u32..).zip(records) {
        let date = ExcelDateTime::from_ymd(r.year, r.month, 1)?;
        sheet.write_datetime_with_format(row, 0, &date, &date_format)?;
        sheet.write_string(row, 1, r.store.name)?;
        sheet.write_string(row, 2, r.store.region)?;
        sheet.write_string(row, 3, r.store.format)?;
        sheet.write_number(row, 4, r.store.floor_area)?;
        sheet.write_number(row, 5, r.staff_hours)?;
        sheet.write_number(row, 6, r.promo)?;
        match r.revenue {
            Some(revenue) => {
                sheet.write_number_with_format(row, 7, revenue, &one_decimal)?;
            }
            None => blanks.push(format!(
                "row {} ({}, {}-{:02}-01)",
                row + 1,
                r.store.name,
                r.year,
                r.month
            )),
        }
    }

    let about = workbook.add_worksheet();
    about.set_name("about")?;
    about.set_column_width(0, 100)?;
    for (r, line) in (0u32..).zip(about_lines) {
        if r == 0 {
            about.write_string_with_format(r, 0, *line, &bold)?;
        } else if !line.is_empty() {
            about.write_string(r, 0, *line)?;
        }
    }

    workbook.save(path)?;
    Ok(blanks)
}

/// The lines of the `about` sheet that describe the columns.
const COLUMN_NOTES: [&str; 8] = [
    "month: first day of the month (date)",
    "store: invented store name",
    "region: North, South, East or West (two stores each)",
    "format: Garden shop or Retail park (fixed per store)",
    "floor_area: sales floor area, square metres (fixed per store)",
    "staff_hours: staff hours worked in the month, hours",
    "promo: 1 if a promotion ran that month, else 0",
    "revenue: monthly revenue, thousands (one decimal)",
];

fn main() -> Result<(), Box<dyn Error>> {
    let out_dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("demo-data");
    std::fs::create_dir_all(&out_dir)?;

    let all = records(MONTHS + EXTRA_MONTHS);
    let first_run = &all[..MONTHS * STORES.len()];

    let mut about = vec![
        "Invented data for the sheetfit demo. It describes no real business.",
        "Generated by examples/make_demo_data.rs with the fixed seed 20261202.",
        "Rerun: cargo run --example make_demo_data",
        "",
        "Sheet 'records': one row per store-month, 8 stores x 48 months (2022-01 to 2025-12).",
    ];
    about.extend(COLUMN_NOTES);
    about.extend([
        "",
        "Three revenue cells are left blank on purpose, to show how incomplete rows are dropped.",
    ]);
    let out_path = out_dir.join("garden-centres.xlsx");
    let blanks = write_workbook(&out_path, first_run, &about)?;
    report(&out_path, first_run.len(), &blanks);

    let mut about = vec![
        "Invented data for the sheetfit demo. It describes no real business.",
        "Generated by examples/make_demo_data.rs with the fixed seed 20261202.",
        "Rerun: cargo run --example make_demo_data",
        "",
        "Sheet 'records': one row per store-month, 8 stores x 51 months (2022-01 to 2026-03).",
        "The rows to 2025-12 are those of garden-centres.xlsx, value for value;",
        "the rows of 2026-01 to 2026-03 are the three months that followed (the demo's second run).",
    ];
    about.extend(COLUMN_NOTES);
    about.extend([
        "",
        "Four revenue cells are left blank on purpose (three up to 2025-12, one in 2026-02),",
        "to show how incomplete rows are dropped.",
    ]);
    let out_path = out_dir.join("garden-centres-2026-03.xlsx");
    let blanks = write_workbook(&out_path, &all, &about)?;
    report(&out_path, all.len(), &blanks);
    Ok(())
}

fn report(path: &Path, rows: usize, blanks: &[String]) {
    println!("wrote {} ({rows} data rows)", path.display());
    for blank in blanks {
        println!("blank revenue: {blank}");
    }
}
