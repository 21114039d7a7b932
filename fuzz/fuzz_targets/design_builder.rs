//! Arbitrary CSV text as the data of a fixed set of models (numeric,
//! categorical, polynomial, trend and season, log response, interaction):
//! building, fitting and analysing must return results or errors, never
//! panic.
#![no_main]

use libfuzzer_sys::fuzz_target;

const JOB: &str = r#"
[input]
workbook = "data.csv"
[[model]]
name = "mixed"
response = "y"
numeric = ["x"]
categorical = ["g"]
interactions = [["g", "x"]]
[[model]]
name = "curve"
response = "y"
poly = { x = 3 }
transform = "log"
[[model]]
name = "time"
response = "y"
trend = "d"
season = { column = "d", by = "month" }
backtest = 2
[model.forecast]
horizon = 2
"#;

fuzz_target!(|data: &[u8]| {
    let Ok(dir) = tempfile::tempdir() else {
        return;
    };
    let csv = dir.path().join("data.csv");
    let job = dir.path().join("job.toml");
    if std::fs::write(&csv, data).is_err() || std::fs::write(&job, JOB).is_err() {
        return;
    }
    if let Ok(job) = sheetfit::job::load(&job) {
        let _ = sheetfit::analyse_job(&job, &sheetfit::RunOptions::default());
    }
});
