//! The number format of one cell of an .xlsx or .xlsm sheet, read from the
//! workbook's parts: the workbook reader returns values, not formats, and
//! its style reader loads a whole sheet's styles, which a large sheet
//! cannot afford. Here the sheet's XML is read only up to the cell.

use std::fs::File;
use std::io::{BufReader, Read};

use quick_xml::events::{BytesStart, Event};
use quick_xml::Reader;

use super::column_letters;
use super::formulas::attribute;

/// The format code of the cell at sheet row `row` (from 1) and column
/// `col` (from 0) of the sheet named `sheet`; `None` for the General
/// format or when a part cannot be read.
pub(super) fn cell_number_format(file: &File, sheet: &str, row: u32, col: u32) -> Option<String> {
    let mut archive = zip::ZipArchive::new(file).ok()?;
    let rid = first_attribute(&mut archive, "xl/workbook.xml", "sheet", |e| {
        (attribute(e, "name")? == sheet)
            .then(|| attribute(e, "r:id"))
            .flatten()
    })?;
    let target = first_attribute(
        &mut archive,
        "xl/_rels/workbook.xml.rels",
        "Relationship",
        |e| {
            (attribute(e, "Id")? == rid)
                .then(|| attribute(e, "Target"))
                .flatten()
        },
    )?;
    let part = match target.strip_prefix('/') {
        Some(absolute) => absolute.to_string(),
        None => format!("xl/{target}"),
    };
    let reference = format!("{}{row}", column_letters(col));
    let style: usize = first_attribute(&mut archive, &part, "c", |e| {
        (attribute(e, "r")? == reference).then(|| attribute(e, "s").unwrap_or_else(|| "0".into()))
    })?
    .parse()
    .ok()?;
    let (codes, cell_formats) = styles(&mut archive)?;
    let id = *cell_formats.get(style)?;
    codes
        .into_iter()
        .find(|(k, _)| *k == id)
        .map(|(_, code)| code)
        .or_else(|| builtin(id).map(str::to_string))
}

/// The built-in number formats that carry a currency or thousands
/// separators (ECMA-376 part 1, §18.8.30, with the en-US currency).
fn builtin(id: u32) -> Option<&'static str> {
    Some(match id {
        3 => "#,##0",
        4 => "#,##0.00",
        5 => "$#,##0_);($#,##0)",
        6 => "$#,##0_);[Red]($#,##0)",
        7 => "$#,##0.00_);($#,##0.00)",
        8 => "$#,##0.00_);[Red]($#,##0.00)",
        37 => "#,##0 ;(#,##0)",
        38 => "#,##0 ;[Red](#,##0)",
        39 => "#,##0.00;(#,##0.00)",
        40 => "#,##0.00;[Red](#,##0.00)",
        _ => return None,
    })
}

/// The custom format codes and each cell format's number format id, in
/// order.
type Styles = (Vec<(u32, String)>, Vec<u32>);

fn styles(archive: &mut zip::ZipArchive<&File>) -> Option<Styles> {
    let entry = archive.by_name("xl/styles.xml").ok()?;
    let mut reader = Reader::from_reader(BufReader::new(entry));
    let mut buf = Vec::new();
    let (mut codes, mut cell_formats) = (Vec::new(), Vec::new());
    let mut in_cell_formats = false;
    loop {
        match reader.read_event_into(&mut buf).ok()? {
            Event::Start(e) | Event::Empty(e) => match e.local_name().into_inner() {
                "numFmt" => {
                    let id = attribute(&e, "numFmtId")?.parse().ok()?;
                    codes.push((id, attribute(&e, "formatCode")?));
                }
                "cellXfs" => in_cell_formats = true,
                "xf" if in_cell_formats => {
                    cell_formats.push(
                        attribute(&e, "numFmtId")
                            .and_then(|v| v.parse().ok())
                            .unwrap_or(0),
                    );
                }
                _ => {}
            },
            Event::End(e) if e.local_name().into_inner() == "cellXfs" => in_cell_formats = false,
            Event::Eof => return Some((codes, cell_formats)),
            _ => {}
        }
        buf.clear();
    }
}

/// The first `element` of the part `name` for which `pick` gives a value.
fn first_attribute<R: Read + std::io::Seek>(
    archive: &mut zip::ZipArchive<R>,
    name: &str,
    element: &str,
    pick: impl Fn(&BytesStart<'_>) -> Option<String>,
) -> Option<String> {
    let entry = archive.by_name(name).ok()?;
    let mut reader = Reader::from_reader(BufReader::new(entry));
    let mut buf = Vec::new();
    loop {
        match reader.read_event_into(&mut buf).ok()? {
            Event::Start(e) | Event::Empty(e) if e.local_name().into_inner() == element => {
                if let Some(v) = pick(&e) {
                    return Some(v);
                }
            }
            Event::Eof => return None,
            _ => {}
        }
        buf.clear();
    }
}
