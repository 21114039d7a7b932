//! Arbitrary text as a job file: parsing and checking must return a job or
//! an error, never panic.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    if let Ok(text) = std::str::from_utf8(data) {
        let _ = sheetfit::job::parse(std::path::Path::new("fuzz/job.toml"), text);
    }
});
