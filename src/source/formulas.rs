//! Formula cells whose stored values cannot be trusted.
//!
//! The workbook reader never calculates; it returns the value a program
//! stored with each formula. Programs that write workbooks without a
//! calculation engine (report scripts, export libraries) store no value,
//! which reads as a blank cell, or a placeholder (usually 0) and a flag
//! asking the next program to recalculate on opening (`fullCalcOnLoad`).
//! Either way the numbers are not the ones the formulas give, so formula
//! cells among the data the job uses (noted as the sheet is read) stop the
//! job when they carry no value or the workbook carries that flag.

use std::fs::File;
use std::io::BufReader;

use quick_xml::events::{BytesStart, Event};
use quick_xml::Reader;

/// Whether the workbook asks to be recalculated when it is opened.
pub(super) fn recalculate_on_load(file: &File) -> bool {
    let Ok(mut archive) = zip::ZipArchive::new(file) else {
        return false;
    };
    let Ok(entry) = archive.by_name("xl/workbook.xml") else {
        return false;
    };
    let mut reader = Reader::from_reader(BufReader::new(entry));
    let mut buf = Vec::new();
    loop {
        match reader.read_event_into(&mut buf) {
            Ok(Event::Start(e) | Event::Empty(e)) if e.local_name().as_ref() == "calcPr" => {
                return attribute(&e, "fullCalcOnLoad").is_some_and(|v| v == "1" || v == "true");
            }
            Ok(Event::Eof) | Err(_) => return false,
            _ => {}
        }
        buf.clear();
    }
}

/// The value of the attribute `key` (its qualified name), with XML's five
/// named entities unescaped.
pub(super) fn attribute(e: &BytesStart<'_>, key: &str) -> Option<String> {
    e.attributes()
        .flatten()
        .find(|a| a.key.as_ref() == key)
        .map(|a| {
            a.value
                .replace("&lt;", "<")
                .replace("&gt;", ">")
                .replace("&quot;", "\"")
                .replace("&apos;", "'")
                .replace("&amp;", "&")
        })
}
