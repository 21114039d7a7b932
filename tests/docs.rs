//! The job-file example in README.md is a working job: it parses and checks
//! against the demo workbook it names.

mod common;

use std::path::PathBuf;

use common::{sheetfit, stderr, Scratch};

#[test]
fn readme_example_job_checks_against_the_demo_workbook() {
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let readme = std::fs::read_to_string(root.join("README.md")).expect("README.md");
    let start = readme.find("```toml\n").expect("a toml block in README.md") + 8;
    let end = start
        + readme[start..]
            .find("```")
            .expect("the end of the toml block");
    let job = &readme[start..end];
    let scratch = Scratch::new();
    std::fs::copy(
        root.join("demo-data/garden-centres.xlsx"),
        scratch.path("garden-centres.xlsx"),
    )
    .expect("copy the demo workbook");
    scratch.write("job.toml", job);
    let out = sheetfit(&scratch.path(""), &["check", "job.toml"]);
    assert!(out.status.success(), "{}", stderr(&out));
    let summary = String::from_utf8_lossy(&out.stdout);
    assert!(summary.contains("model 'drivers'"), "{summary}");
    assert!(summary.contains("model 'monthly forecast'"), "{summary}");
}
