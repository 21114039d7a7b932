//! Crafted workbooks that would make the reader allocate without bound are
//! refused before it opens them, with a message, an exit status of 1 and no
//! output; a far-away cell without a declared range is read cell by cell.

mod common;

use std::io::Write;

use common::{sheetfit, stderr, Scratch};

const CONTENT_TYPES: &str = r#"<?xml version="1.0"?><Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types"><Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/><Default Extension="xml" ContentType="application/xml"/><Override PartName="/xl/workbook.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/><Override PartName="/xl/worksheets/sheet1.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/><Override PartName="/xl/sharedStrings.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sharedStrings+xml"/></Types>"#;
const RELS: &str = r#"<?xml version="1.0"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/officeDocument" Target="xl/workbook.xml"/></Relationships>"#;
const WORKBOOK: &str = r#"<?xml version="1.0"?><workbook xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"><sheets><sheet name="records" sheetId="1" r:id="rId1"/></sheets></workbook>"#;
const WORKBOOK_RELS: &str = r#"<?xml version="1.0"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet" Target="worksheets/sheet1.xml"/><Relationship Id="rId2" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/sharedStrings" Target="sharedStrings.xml"/></Relationships>"#;

fn strings(declared: u64) -> String {
    format!(
        r#"<?xml version="1.0"?><sst xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" count="{declared}" uniqueCount="{declared}"><si><t>y</t></si></sst>"#
    )
}

/// A sheet with `y` in A1 and a number in `far`, declaring `dimension`.
fn sheet(dimension: Option<&str>, far: &str, far_row: u32) -> String {
    let dim = dimension.map_or(String::new(), |d| format!(r#"<dimension ref="{d}"/>"#));
    format!(
        r#"<?xml version="1.0"?><worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">{dim}<sheetData><row r="1"><c r="A1" t="s"><v>0</v></c></row><row r="{far_row}"><c r="{far}"><v>1</v></c></row></sheetData></worksheet>"#
    )
}

/// Writes a minimal .xlsx from its shared strings and sheet parts.
fn crafted(scratch: &Scratch, name: &str, strings: &str, sheet: &str) {
    let file = std::fs::File::create(scratch.path(name)).expect("create workbook");
    let mut zip = zip::ZipWriter::new(file);
    let options = zip::write::SimpleFileOptions::default();
    for (part, text) in [
        ("[Content_Types].xml", CONTENT_TYPES),
        ("_rels/.rels", RELS),
        ("xl/workbook.xml", WORKBOOK),
        ("xl/_rels/workbook.xml.rels", WORKBOOK_RELS),
        ("xl/sharedStrings.xml", strings),
        ("xl/worksheets/sheet1.xml", sheet),
    ] {
        zip.start_file(part, options).expect("start part");
        zip.write_all(text.as_bytes()).expect("write part");
    }
    zip.finish().expect("finish zip");
}

fn job(scratch: &Scratch, workbook: &str, extra: &str) {
    scratch.write(
        "job.toml",
        &format!("[input]\nworkbook = \"{workbook}\"\n{extra}\n[[model]]\nname = \"m\"\nresponse = \"y\"\n"),
    );
}

fn assert_refused(scratch: &Scratch, workbook: &str, words: &[&str]) {
    for command in ["run", "check"] {
        let out = sheetfit(&scratch.path(""), &[command, "job.toml"]);
        assert_eq!(out.status.code(), Some(1), "{command}: {}", stderr(&out));
        let err = stderr(&out);
        assert!(
            err.starts_with(&format!("sheetfit: error: refusing to open {workbook}")),
            "{err}"
        );
        for w in words {
            assert!(err.contains(w), "{command}: {err} should say {w}");
        }
    }
    let mut files = scratch.files();
    files.sort();
    assert_eq!(files, vec!["job.toml".to_string(), workbook.to_string()]);
}

#[test]
fn four_billion_declared_shared_strings_are_refused() {
    let s = Scratch::new();
    crafted(
        &s,
        "strings.xlsx",
        &strings(4_000_000_000),
        &sheet(Some("A1:A2"), "A2", 2),
    );
    job(&s, "strings.xlsx", "");
    assert_refused(
        &s,
        "strings.xlsx",
        &["4000000000 shared strings", "max_shared_strings"],
    );
}

#[test]
fn a_declared_range_of_the_whole_sheet_is_refused() {
    let s = Scratch::new();
    crafted(
        &s,
        "range.xlsx",
        &strings(1),
        &sheet(Some("A1:XFD1048576"), "XFD1048576", 1_048_576),
    );
    job(&s, "range.xlsx", "");
    assert_refused(&s, "range.xlsx", &["17179869184 cells", "max_cells"]);
}

#[test]
fn a_raised_limit_lets_a_genuine_file_through() {
    // The same declared range, allowed by the job: the sheet is then read
    // cell by cell, and the far cell (in an unnamed column) costs nothing.
    let s = Scratch::new();
    crafted(
        &s,
        "range.xlsx",
        &strings(1),
        &sheet(Some("A1:XFD1048576"), "XFD1048576", 1_048_576),
    );
    job(&s, "range.xlsx", "max_cells = 20000000000");
    let out = sheetfit(&s.path(""), &["check", "job.toml"]);
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(1), "{err}");
    assert!(err.contains("no usable rows"), "{err}");
}

#[test]
fn a_far_cell_without_a_declared_range_is_read_without_the_bounding_box() {
    // No <dimension>: the reader would size a range from A1 to XFD1048576;
    // read cell by cell, only column A (named y) is kept.
    let s = Scratch::new();
    crafted(
        &s,
        "far.xlsx",
        &strings(1),
        &sheet(None, "XFD1048576", 1_048_576),
    );
    job(&s, "far.xlsx", "");
    let out = sheetfit(&s.path(""), &["check", "job.toml"]);
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(1), "{err}");
    assert!(
        err.contains("no usable rows in sheet 'records' of far.xlsx"),
        "{err}"
    );
}
