//! Data flows one way through the library's modules: each module under
//! `src/` names (`crate::…`) only modules earlier in [`ORDER`], so no two
//! modules import each other, directly or through others. The order is the
//! one DEVELOPERS.md shows; this test keeps the two in step.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

/// The library's top-level modules, foundations first, then the pipeline's
/// stages in the order data flows through them.
const ORDER: [&str; 14] = [
    "text", "suggest", "ddouble", "period", "job", "source", "design", "fit", "checks", "compare",
    "forecast", "results", "report", "starter",
];

/// The line of DEVELOPERS.md that states [`ORDER`].
fn order_line() -> String {
    let names: Vec<String> = ORDER.iter().map(|m| format!("`{m}`")).collect();
    format!("Module order: {}.", names.join(" → "))
}

fn src() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("src")
}

/// Every `.rs` file under `dir`.
fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    for entry in std::fs::read_dir(dir).expect("src/ is readable") {
        let path = entry.expect("a directory entry").path();
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

/// The top-level module a file belongs to: `src/fit/qr.rs` → `fit`.
fn module_of(file: &Path) -> String {
    let rel = file.strip_prefix(src()).expect("a file under src/");
    let first = rel.components().next().expect("a path component");
    let name = first.as_os_str().to_string_lossy();
    name.trim_end_matches(".rs").to_string()
}

/// The modules a file names as `crate::name`, comments left out, with the
/// line of each first mention.
fn named_modules(text: &str) -> Vec<(String, usize)> {
    let mut found = Vec::new();
    for (number, line) in text.lines().enumerate() {
        let code = line.split("//").next().unwrap_or("");
        let mut rest = code;
        while let Some(at) = rest.find("crate::") {
            let after = &rest[at + "crate::".len()..];
            let name: String = after
                .chars()
                .take_while(|c| c.is_alphanumeric() || *c == '_')
                .collect();
            assert!(
                !after.starts_with('{'),
                "line {}: write one `use crate::module::…` per module, so this test can read it",
                number + 1
            );
            found.push((name, number + 1));
            rest = after;
        }
    }
    found
}

#[test]
fn every_module_names_only_modules_before_it() {
    let mut files = Vec::new();
    rust_files(&src(), &mut files);
    files.sort();
    let mut modules = BTreeSet::new();
    let mut wrong = Vec::new();
    for file in &files {
        let module = module_of(file);
        if module == "lib" || module == "main" {
            continue;
        }
        modules.insert(module.clone());
        let place = ORDER.iter().position(|m| *m == module);
        let text = std::fs::read_to_string(file).expect("a source file is readable");
        for (named, line) in named_modules(&text) {
            if named == module {
                continue;
            }
            let before = ORDER.iter().position(|m| *m == named);
            if !matches!((before, place), (Some(b), Some(p)) if b < p) {
                wrong.push(format!(
                    "{}:{line}: `{module}` names `{named}`, which does not come before it",
                    file.display()
                ));
            }
        }
    }
    assert!(wrong.is_empty(), "{}", wrong.join("\n"));
    let listed: BTreeSet<String> = ORDER.iter().map(|m| m.to_string()).collect();
    assert_eq!(
        modules, listed,
        "the modules under src/ and the order in this test differ"
    );
}

#[test]
fn developers_guide_states_the_module_order() {
    let guide =
        std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("DEVELOPERS.md"))
            .expect("DEVELOPERS.md is readable");
    let line = order_line();
    assert!(
        guide.contains(&line),
        "DEVELOPERS.md should state the module order as:\n{line}"
    );
}

#[test]
fn a_reference_to_a_later_module_is_seen() {
    // The reader itself: a use line, a path inside code, and a comment that
    // must not count.
    let text = "use crate::fit::Fit;\nlet s = crate::text::significant(x, 3); // crate::report\n";
    let names: Vec<String> = named_modules(text).into_iter().map(|(n, _)| n).collect();
    assert_eq!(names, ["fit", "text"]);
}
