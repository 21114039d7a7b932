//! The demo report printed to PDF by LibreOffice: the Summary on page 1,
//! whole (every sentence and the forecast chart's title), and the summary
//! sheets with the charts within the first 15 pages, before the long data
//! sheets. Pages are read back as text with poppler's `pdftotext`.

mod common;

use std::path::{Path, PathBuf};
use std::process::Command;

use common::{program, read_json, sheetfit, soffice_convert, stderr, Scratch};

/// The text of each page of `pdf`.
fn pages(pdftotext: &Path, pdf: &Path) -> Vec<String> {
    let out = Command::new(pdftotext)
        .arg(pdf)
        .arg("-")
        .output()
        .expect("start pdftotext");
    assert!(out.status.success(), "pdftotext: {}", stderr(&out));
    String::from_utf8_lossy(&out.stdout)
        .split('\u{c}')
        .map(|p| p.split_whitespace().collect::<Vec<_>>().join(" "))
        .collect()
}

#[test]
fn the_demo_prints_its_summary_on_page_one_and_its_charts_within_fifteen_pages() {
    let (Some(soffice), Some(pdftotext)) = (
        program("soffice", "libreoffice-calc"),
        program("pdftotext", "poppler-utils"),
    ) else {
        return;
    };
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("demo-data");
    let scratch = Scratch::new();
    for name in ["garden-centres.xlsx", "garden-centres.toml"] {
        std::fs::copy(root.join(name), scratch.path(name)).expect("copy the demo");
    }
    let out = sheetfit(&scratch.path(""), &["run", "garden-centres.toml"]);
    assert!(out.status.success(), "{}", stderr(&out));
    let reports = scratch.path("reports");
    let profile = scratch.path("profile");
    let out = soffice_convert(
        &soffice,
        &profile,
        "pdf",
        &reports.join("garden-centres-report.xlsx"),
        &reports,
    );
    assert!(out.status.success(), "soffice: {}", stderr(&out));
    let pages = pages(&pdftotext, &reports.join("garden-centres-report.pdf"));
    let json = read_json(&reports.join("garden-centres-report.json"));
    let words = |text: &str| text.split_whitespace().collect::<Vec<_>>().join(" ");
    // Page 1: the title, every sentence of the summary (wrapped lines
    // joined) and the main model's forecast chart.
    let first = &pages[0];
    assert!(first.contains(&words(json["title"].as_str().unwrap_or_default())));
    let summary = &json["summary"];
    for key in ["drivers", "outlook", "trust", "other_models"] {
        for sentence in summary[key].as_array().expect("sentences") {
            let sentence = words(sentence.as_str().unwrap_or_default());
            assert!(first.contains(&sentence), "page 1 lacks: {sentence}");
        }
    }
    assert!(first.contains("history"), "page 1 lacks the forecast chart");
    assert!(
        !pages[1].contains(&words(summary["headline"].as_str().unwrap_or_default())),
        "the Summary runs on to page 2"
    );
    // The charts' last page comes within the first 15.
    let last_chart = pages
        .iter()
        .rposition(|p| p.contains("actual against fitted"))
        .expect("the Charts sheet's pages");
    assert!(last_chart < 15, "the charts end on page {}", last_chart + 1);
    // The long data sheets come after them.
    let residuals = pages
        .iter()
        .position(|p| p.contains("Studentized residual") && p.contains("DFFITS"))
        .expect("the Residuals sheet");
    assert!(residuals > last_chart);
}
