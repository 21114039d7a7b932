//! Renders a report workbook to PNG pages, so that anyone can look at what
//! a manager will see: LibreOffice (headless) prints it to PDF, and
//! pdftoppm (poppler-utils) turns each page into a picture.
//!
//! ```sh
//! cargo run --example render_report -- demo-data/reports/garden-centres-report.xlsx
//! ```
//!
//! The pages go to `target/render/<report name>/page-N.png` (or to the
//! folder given as a second argument). Needs the Debian packages
//! `libreoffice-calc` and `poppler-utils`.

use std::error::Error;
use std::path::{Path, PathBuf};
use std::process::Command;

/// Runs `program` with `args`, failing with what it printed.
fn run(program: &str, package: &str, args: &[&std::ffi::OsStr]) -> Result<(), Box<dyn Error>> {
    let out = Command::new(program).args(args).output().map_err(|e| {
        format!("cannot start {program} ({e}); install the Debian package {package}")
    })?;
    if !out.status.success() {
        return Err(format!(
            "{program} failed ({}): {}",
            out.status,
            String::from_utf8_lossy(&out.stderr)
        )
        .into());
    }
    Ok(())
}

fn main() -> Result<(), Box<dyn Error>> {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let Some(report) = args.first().map(PathBuf::from) else {
        return Err("usage: render_report REPORT.xlsx [OUT_FOLDER]".into());
    };
    if !report.is_file() {
        return Err(format!("{} is not a file", report.display()).into());
    }
    let stem = report
        .file_stem()
        .and_then(|s| s.to_str())
        .ok_or("the report has no file name")?
        .to_string();
    let out = args.get(1).map(PathBuf::from).unwrap_or_else(|| {
        Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("target/render")
            .join(&stem)
    });
    std::fs::create_dir_all(&out)?;
    for old in std::fs::read_dir(&out)? {
        let path = old?.path();
        if path.extension().is_some_and(|e| e == "png" || e == "pdf") {
            std::fs::remove_file(path)?;
        }
    }
    // A profile of its own, so a LibreOffice the user has open is not
    // disturbed.
    let profile = out.join("libreoffice-profile");
    let profile_arg = format!(
        "-env:UserInstallation=file://{}",
        std::path::absolute(&profile)?.display()
    );
    run(
        "soffice",
        "libreoffice-calc",
        &[
            profile_arg.as_ref(),
            "--headless".as_ref(),
            "--convert-to".as_ref(),
            "pdf".as_ref(),
            "--outdir".as_ref(),
            out.as_os_str(),
            report.as_os_str(),
        ],
    )?;
    let pdf = out.join(format!("{stem}.pdf"));
    let prefix = out.join("page");
    run(
        "pdftoppm",
        "poppler-utils",
        &[
            "-png".as_ref(),
            "-r".as_ref(),
            "70".as_ref(),
            pdf.as_os_str(),
            prefix.as_os_str(),
        ],
    )?;
    let pages = std::fs::read_dir(&out)?
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|e| e == "png"))
        .count();
    if pages == 0 {
        return Err(format!("pdftoppm wrote no page from {}", pdf.display()).into());
    }
    println!(
        "{} rendered: {pages} pages as {}/page-N.png (the charts are on the last pages)",
        report.display(),
        out.display()
    );
    Ok(())
}
