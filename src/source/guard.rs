//! A look inside an .xlsx / .xlsm file before the reader opens it.
//!
//! The workbook reader allocates from numbers the file declares (the count
//! of shared strings, the sheet's dimension) and from the distance between
//! far-apart cells, and a failed allocation ends the process rather than
//! returning an error. A crafted file of a few kilobytes can so take down an
//! unattended run. This pre-scan reads the zip directory and the first bytes
//! of the shared-string and sheet parts, and refuses a file past the
//! [`Limits`] with a message that says which limit and how to raise it.

use std::fs::File;
use std::io::Read;

use crate::job::Limits;

/// Why a workbook was refused, in words; the caller adds the file.
pub type Refusal = String;

/// Checks the zip directory and declared sizes of the workbook open in
/// `file` (the input's one open handle).
/// Files that are not zip archives pass untouched (the reader then says
/// what they are).
///
/// # Errors
/// A [`Refusal`] naming the limit the file goes past.
pub fn prescan(file: &File, limits: &Limits) -> Result<(), Refusal> {
    let Ok(mut archive) = zip::ZipArchive::new(file) else {
        return Ok(());
    };
    let mut total: u64 = 0;
    let mut parts = Vec::new();
    for i in 0..archive.len() {
        let Ok(entry) = archive.by_index_raw(i) else {
            continue;
        };
        total = total.saturating_add(entry.size());
        if let Ok(name) = entry.name() {
            parts.push(name.to_string());
        }
    }
    if total > limits.uncompressed_mb.saturating_mul(1 << 20) {
        return Err(format!(
            "its parts unpack to {} MiB, above the limit of {} MiB; if the file is genuine, raise `max_uncompressed_mb` under [input]",
            total >> 20,
            limits.uncompressed_mb
        ));
    }
    for name in parts {
        let is_strings = name.ends_with("sharedStrings.xml");
        let is_sheet = name.starts_with("xl/worksheets/") && name.ends_with(".xml");
        if !(is_strings || is_sheet) {
            continue;
        }
        let Ok(entry) = archive.by_name(&name) else {
            continue;
        };
        let mut head = Vec::with_capacity(4096);
        if entry.take(4096).read_to_end(&mut head).is_err() {
            continue;
        }
        let head = String::from_utf8_lossy(&head);
        if is_strings {
            if let Some(n) = attribute(&head, "<sst", "uniqueCount")
                .or_else(|| attribute(&head, "<sst", "count"))
                .and_then(|v| v.parse::<u64>().ok())
            {
                if n > limits.shared_strings {
                    return Err(format!(
                        "it declares {n} shared strings, above the limit of {}; if the file is genuine, raise `max_shared_strings` under [input]",
                        limits.shared_strings
                    ));
                }
            }
        } else if let Some(cells) = attribute(&head, "<dimension", "ref").and_then(|r| span(&r)) {
            if cells > limits.cells {
                return Err(format!(
                    "its sheet part {name} declares a range of {cells} cells, above the limit of {}; if the file is genuine, raise `max_cells` under [input]",
                    limits.cells
                ));
            }
        }
    }
    Ok(())
}

/// The value of `name="..."` in the first `tag` element of `xml`.
pub(super) fn attribute(xml: &str, tag: &str, name: &str) -> Option<String> {
    let start = xml.find(tag)?;
    let element = &xml[start..start + xml[start..].find('>')?];
    let key = format!(" {name}=\"");
    let at = element.find(&key)? + key.len();
    let end = element[at..].find('"')?;
    Some(element[at..at + end].to_string())
}

/// Cells spanned by an A1 range such as "A1:XFD1048576".
fn span(range: &str) -> Option<u64> {
    let (a, b) = range.split_once(':').unwrap_or((range, range));
    let (r1, c1) = a1(a)?;
    let (r2, c2) = a1(b)?;
    Some((r2.abs_diff(r1) + 1) * (c2.abs_diff(c1) + 1))
}

/// Row and column (both from 1) of an A1 reference.
fn a1(cell: &str) -> Option<(u64, u64)> {
    let letters: String = cell.chars().take_while(char::is_ascii_alphabetic).collect();
    let row: u64 = cell[letters.len()..].parse().ok()?;
    let col = letters
        .to_ascii_uppercase()
        .bytes()
        .try_fold(0u64, |acc, b| Some(acc * 26 + u64::from(b - b'A' + 1)))?;
    (col > 0).then_some((row, col))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spans_follow_the_a1_convention() {
        assert_eq!(span("A1:B2"), Some(4));
        assert_eq!(span("A1"), Some(1));
        assert_eq!(span("A1:XFD1048576"), Some(16_384 * 1_048_576));
        assert_eq!(span("nonsense"), None);
    }

    #[test]
    fn attributes_are_read_from_the_first_element() {
        let xml = r#"<?xml?><sst xmlns="x" count="12" uniqueCount="4000000000"><si>"#;
        assert_eq!(
            attribute(xml, "<sst", "uniqueCount").as_deref(),
            Some("4000000000")
        );
        assert_eq!(attribute(xml, "<sst", "count").as_deref(), Some("12"));
        assert_eq!(attribute(xml, "<dimension", "ref"), None);
    }
}
