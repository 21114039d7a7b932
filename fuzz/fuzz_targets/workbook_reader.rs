//! Arbitrary bytes as an input file: the first byte picks the extension
//! (.xlsx, .ods, .csv, .xls, .xlsb), the rest is the file. Reading must
//! return a table or an error, never panic.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Some((&kind, body)) = data.split_first() else {
        return;
    };
    let extension = ["xlsx", "ods", "csv", "xls", "xlsb"][usize::from(kind) % 5];
    let Ok(dir) = tempfile::tempdir() else {
        return;
    };
    let path = dir.path().join(format!("input.{extension}"));
    if std::fs::write(&path, body).is_ok() {
        let _ = sheetfit::source::read_table(&path, None, 1);
    }
});
