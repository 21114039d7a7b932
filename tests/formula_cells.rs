//! Formula cells in the data. The reader never calculates: it takes the
//! value a program stored with each formula, so a workbook written without
//! calculating (by a script or an export library) must stop the job rather
//! than be fitted on placeholders, and the remedy the message gives (open
//! and save in a spreadsheet program, or LibreOffice headless) must work.

mod common;

use std::io::{Read, Write};

use common::{assert_status, read_json, sheetfit, stderr, Scratch};
use rust_xlsxwriter::{Formula, Workbook};

const ROWS: u32 = 12;

/// y against x and x_squared (`=B{r}*B{r}` as a formula when `formulas`,
/// else the value), and a notes column of formulas nobody uses.
fn workbook(s: &Scratch, name: &str, formulas: bool) {
    let mut wb = Workbook::new();
    let ws = wb.add_worksheet();
    for (c, h) in ["y", "x", "x_squared", "check"].iter().enumerate() {
        ws.write_string(0, c as u16, *h).unwrap();
    }
    for i in 1..=ROWS {
        let x = f64::from(i) * 0.5;
        let y = 3.0 + 2.0 * x - 0.1 * x * x + [0.2, -0.1, 0.05, -0.15][i as usize % 4];
        ws.write_number(i, 0, y).unwrap();
        ws.write_number(i, 1, x).unwrap();
        if formulas {
            ws.write_formula(i, 2, Formula::new(format!("=B{0}*B{0}", i + 1)))
                .unwrap();
        } else {
            ws.write_number(i, 2, x * x).unwrap();
        }
        ws.write_formula(i, 3, Formula::new(format!("=A{}-1", i + 1)))
            .unwrap();
    }
    wb.save(s.path(name)).unwrap();
}

fn job(s: &Scratch, input: &str, numeric: &str) {
    s.write(
        "job.toml",
        &format!("suggest = false\n[input]\nworkbook = \"{input}\"\n[[model]]\nname = \"m\"\nresponse = \"y\"\nnumeric = [{numeric}]\n"),
    );
}

#[test]
fn formulas_written_without_calculation_stop_the_job() {
    let s = Scratch::new();
    workbook(&s, "data.xlsx", true);
    job(&s, "data.xlsx", "\"x\", \"x_squared\"");
    let out = sheetfit(&s.path(""), &["run", "job.toml"]);
    assert_status(&out, 1);
    let err = stderr(&out);
    assert!(
        err.contains("cells C2, C3, C4 (and 9 more) hold formulas, and the workbook was saved by a program that did not calculate them")
            && err.contains("recalculate every formula and save it"),
        "{err}"
    );
    // Formulas in a column no model reads do not matter.
    job(&s, "data.xlsx", "\"x\"");
    assert_status(&sheetfit(&s.path(""), &["run", "job.toml"]), 0);
}

/// `from` as a script that stores no values writes it: no value with any
/// formula, and no request to recalculate.
fn without_values(s: &Scratch, from: &str, to: &str) {
    let bytes = std::fs::read(s.path(from)).unwrap();
    let mut archive = zip::ZipArchive::new(std::io::Cursor::new(bytes)).unwrap();
    let mut out = zip::ZipWriter::new(std::fs::File::create(s.path(to)).unwrap());
    for i in 0..archive.len() {
        let mut entry = archive.by_index(i).unwrap();
        let name = entry.name().unwrap().to_string();
        let mut text = String::new();
        entry.read_to_string(&mut text).unwrap();
        let text = text
            .replace("</f><v>0</v>", "</f>")
            .replace(" fullCalcOnLoad=\"1\"", "");
        out.start_file(name, zip::write::SimpleFileOptions::default())
            .unwrap();
        out.write_all(text.as_bytes()).unwrap();
    }
    out.finish().unwrap();
}

#[test]
fn formulas_stored_without_values_are_not_read_as_blanks() {
    let s = Scratch::new();
    workbook(&s, "written.xlsx", true);
    without_values(&s, "written.xlsx", "data.xlsx");
    job(&s, "data.xlsx", "\"x\", \"x_squared\"");
    let out = sheetfit(&s.path(""), &["run", "job.toml"]);
    assert_status(&out, 1);
    let err = stderr(&out);
    assert!(
        err.contains("cells C2, C3, C4 (and 9 more) hold formulas that were never calculated: the file stores no value with them")
            && err.contains("`soffice --headless --convert-to xlsx --outdir calculated data.xlsx`"),
        "{err}"
    );
}

#[test]
fn the_headless_calculation_the_message_gives_makes_the_values() {
    let s = Scratch::new();
    workbook(&s, "written.xlsx", true);
    without_values(&s, "written.xlsx", "data.xlsx");
    workbook(&s, "values.xlsx", false);
    let calculate = [
        "--convert-to",
        "xlsx",
        "--outdir",
        "calculated",
        "data.xlsx",
    ];
    if !common::libreoffice(&s.path(""), &calculate) {
        return;
    }
    let coefficients = |input: &str| {
        job(&s, input, "\"x\", \"x_squared\"");
        let out = sheetfit(&s.path(""), &["run", "--overwrite", "job.toml"]);
        assert_status(&out, 0);
        read_json(&s.path("job-report.json"))["models"][0]["coefficients"].clone()
    };
    let calculated = coefficients("calculated/data.xlsx");
    let values = coefficients("values.xlsx");
    assert_eq!(calculated.as_array().unwrap().len(), 3);
    for (a, b) in calculated
        .as_array()
        .unwrap()
        .iter()
        .zip(values.as_array().unwrap())
    {
        let (a, b) = (
            a["estimate"].as_f64().unwrap(),
            b["estimate"].as_f64().unwrap(),
        );
        assert!((a - b).abs() <= 1e-12 * b.abs().max(1.0), "{a} vs {b}");
    }
}
