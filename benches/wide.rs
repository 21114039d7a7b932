//! Wide jobs: many predictors, many models, a categorical with many levels.
//! Each case has a target; the bench prints the measured time and peak
//! memory beside it, so a run shows at a glance whether the work stays
//! bounded.
//!
//! Run with `cargo bench --bench wide`; `--smoke` runs a tenth-size version
//! of each case once and only checks that it succeeded (CI runs it so the
//! bench keeps working). The data are invented (splitmix64, fixed seed):
//! a fictional garden-centre chain's weekly sales against many numeric
//! drivers, written as CSV files under `target/wide/`.
//!
//! | case | target |
//! |---|---|
//! | 100 predictors × 1,000 rows, one model | 2 s |
//! | 300 predictors × 5,000 rows, one model | 30 s |
//! | 1,000 models on 60 rows | 30 s and 1 GB |
//! | a 1,000-level categorical on 20,000 rows, `max_levels = 2000` | 30 s |
//!
//! The machines are shared and noisy: the targets have room; compare
//! within one run.

use std::error::Error;
use std::fmt::Write as _;
use std::fs;
use std::path::{Path, PathBuf};
use std::process::Command;

#[path = "../examples/support/measure.rs"]
mod measure;
#[path = "../examples/support/splitmix.rs"]
mod splitmix;
use measure::measure;
use splitmix::SplitMix64;

/// Fixed seed, so every run reads the same invented data.
const SEED: u64 = 20261205;

/// One case of the bench.
struct Case {
    name: &'static str,
    rows: usize,
    predictors: usize,
    models: usize,
    levels: usize,
    target_s: f64,
    target_mb: Option<f64>,
}

const CASES: [Case; 4] = [
    Case {
        name: "100 predictors x 1,000 rows",
        rows: 1_000,
        predictors: 100,
        models: 1,
        levels: 0,
        target_s: 2.0,
        target_mb: None,
    },
    Case {
        name: "300 predictors x 5,000 rows",
        rows: 5_000,
        predictors: 300,
        models: 1,
        levels: 0,
        target_s: 30.0,
        target_mb: None,
    },
    Case {
        name: "1,000 models on 60 rows",
        rows: 60,
        predictors: 50,
        models: 1_000,
        levels: 0,
        target_s: 30.0,
        target_mb: Some(1024.0),
    },
    Case {
        name: "1,000-level categorical, 20,000 rows",
        rows: 20_000,
        predictors: 2,
        models: 1,
        levels: 1_000,
        target_s: 30.0,
        target_mb: None,
    },
];

/// Writes the CSV of a case: `sales`, `x1` … `xP` and, with levels, a
/// `store` column; sales depend on a few drivers and the store, plus noise.
fn generate(path: &Path, case: &Case) -> Result<(), Box<dyn Error>> {
    let mut rng = SplitMix64::new(SEED ^ case.rows as u64 ^ (case.predictors as u64) << 20);
    let mut out = String::new();
    out.push_str("sales");
    for j in 1..=case.predictors {
        let _ = write!(out, ",x{j}");
    }
    if case.levels > 0 {
        out.push_str(",store");
    }
    out.push('\n');
    let store_effects: Vec<f64> = (0..case.levels).map(|_| rng.normal() * 5.0).collect();
    for i in 0..case.rows {
        let x: Vec<f64> = (0..case.predictors).map(|_| rng.normal()).collect();
        let mut sales = 100.0 + rng.normal() * 3.0;
        for (j, v) in x.iter().enumerate().take(5) {
            sales += (j as f64 + 1.0) * v;
        }
        let store = (case.levels > 0).then(|| i % case.levels);
        if let Some(s) = store {
            sales += store_effects[s];
        }
        let _ = write!(out, "{sales:.4}");
        for v in &x {
            let _ = write!(out, ",{v:.5}");
        }
        if let Some(s) = store {
            let _ = write!(out, ",store {s:04}");
        }
        out.push('\n');
    }
    fs::write(path, out)?;
    Ok(())
}

/// The job of a case.
fn job(case: &Case, input: &Path, output: &Path) -> String {
    let mut text = format!("title = \"{} (invented bench data)\"\n", case.name);
    if case.models > 1 {
        let _ = writeln!(text, "max_models = {}", case.models);
    }
    let _ = write!(text, "\n[input]\nworkbook = \"{}\"\n", input.display());
    if case.levels > 0 {
        let _ = writeln!(text, "max_levels = {}", case.levels * 2);
    }
    let _ = write!(
        text,
        "\n[output]\nworkbook = \"{}\"\noverwrite = true\n",
        output.display()
    );
    let names: Vec<String> = (1..=case.predictors).map(|j| format!("\"x{j}\"")).collect();
    let pairs: Vec<(usize, usize)> = (0..case.predictors)
        .flat_map(|a| (a + 1..case.predictors).map(move |b| (a, b)))
        .collect();
    for m in 0..case.models {
        // Many models: each its own pair of drivers.
        let numeric = if case.models > 1 {
            let (a, b) = pairs
                .get(m)
                .copied()
                .unwrap_or((m % case.predictors, (m + 1) % case.predictors));
            format!("[{}, {}]", names[a], names[b])
        } else {
            format!("[{}]", names.join(", "))
        };
        let _ = write!(
            text,
            "\n[[model]]\nname = \"model {m}\"\nresponse = \"sales\"\nnumeric = {numeric}\n"
        );
        if case.levels > 0 {
            text.push_str("categorical = [\"store\"]\n");
        }
    }
    text
}

fn run_case(case: &Case, dir: &Path, smoke: bool) -> Result<(), Box<dyn Error>> {
    let scaled = Case {
        rows: if smoke {
            (case.rows / 10).max(60)
        } else {
            case.rows
        },
        predictors: if smoke {
            (case.predictors / 10).max(2)
        } else {
            case.predictors
        },
        models: if smoke {
            (case.models / 10).max(1)
        } else {
            case.models
        },
        levels: if smoke { case.levels / 10 } else { case.levels },
        ..*case
    };
    let stem = format!(
        "wide-{}r-{}p-{}m-{}l",
        scaled.rows, scaled.predictors, scaled.models, scaled.levels
    );
    let input = dir.join(format!("{stem}.csv"));
    if !input.exists() {
        generate(&input, &scaled)?;
    }
    let job_path = dir.join(format!("{stem}.toml"));
    fs::write(
        &job_path,
        job(&scaled, &input, &dir.join(format!("{stem}-report.xlsx"))),
    )?;
    let measured = measure(
        Command::new(env!("CARGO_BIN_EXE_sheetfit"))
            .args(["run", "-q"])
            .arg(&job_path),
    )?;
    if !measured.status.success() {
        return Err(format!("{}: sheetfit failed ({})", case.name, measured.status).into());
    }
    if smoke {
        return Ok(());
    }
    let seconds = measured.wall.as_secs_f64();
    let time_met = seconds <= case.target_s;
    let memory_met = case.target_mb.is_none_or(|mb| measured.peak_mb <= mb);
    let target = match case.target_mb {
        Some(mb) => format!("{} s, {mb:.0} MB", case.target_s),
        None => format!("{} s", case.target_s),
    };
    println!(
        "| {} | {target} | {seconds:.2} | {:.0} | {} |",
        case.name,
        measured.peak_mb,
        if time_met && memory_met {
            "met"
        } else {
            "MISSED"
        }
    );
    Ok(())
}

fn main() -> Result<(), Box<dyn Error>> {
    let smoke = std::env::args().any(|a| a == "--smoke");
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("target")
        .join("wide");
    fs::create_dir_all(&dir)?;
    if !smoke {
        println!("| case | target | sheetfit s | peak MB | |");
        println!("|---|---|---|---|---|");
    }
    for case in &CASES {
        run_case(case, &dir, smoke)?;
    }
    Ok(())
}
