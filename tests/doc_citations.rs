//! Every citation of the project's science notes in the code ("docs/science.md 4.3",
//! "docs/science-flexure.md 6") names a file of docs/ and a section heading in it, so a
//! reader who follows one always lands somewhere, and renumbering a section without
//! the code breaks this test.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

const ROOT: &str = env!("CARGO_MANIFEST_DIR");

/// Every `.rs` file under `dir`, recursively.
fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    for entry in std::fs::read_dir(dir).unwrap_or_else(|e| panic!("{}: {e}", dir.display())) {
        let path = entry.expect("a directory entry").path();
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

/// The citations in `text`: (file name, section number or "" when none is given).
fn citations(text: &str) -> Vec<(String, String)> {
    let mut found = Vec::new();
    let mut rest = text;
    while let Some(at) = rest.find("docs/science") {
        let after = &rest[at + "docs/".len()..];
        let name_len = after
            .find(|c: char| !(c.is_ascii_alphanumeric() || c == '-' || c == '.'))
            .unwrap_or(after.len());
        let name = after[..name_len].trim_end_matches('.').to_string();
        let tail = after[name_len..].strip_prefix(' ').unwrap_or("");
        let tail = tail.strip_prefix("section ").unwrap_or(tail);
        let number_len = tail
            .find(|c: char| !(c.is_ascii_digit() || c == '.'))
            .unwrap_or(tail.len());
        let number = tail[..number_len].trim_end_matches('.').to_string();
        if name.ends_with(".md") {
            found.push((name, number));
        }
        rest = &after[name_len..];
    }
    found
}

/// The section numbers of a notes file: "4", "4.3" from "## 4. ..." and "### 4.3 ...".
fn section_numbers(notes: &str) -> BTreeSet<String> {
    notes
        .lines()
        .filter_map(|l| l.strip_prefix('#'))
        .map(|l| l.trim_start_matches('#').trim_start())
        .filter_map(|l| {
            let n: String = l
                .chars()
                .take_while(|c| c.is_ascii_digit() || *c == '.')
                .collect();
            let n = n.trim_end_matches('.').to_string();
            (!n.is_empty()).then_some(n)
        })
        .collect()
}

#[test]
fn the_reader_finds_citations_and_section_numbers() {
    // The parsers themselves, on text written here.
    assert_eq!(
        citations(
            "see docs/science.md 4.3, and docs/science-flexure.md section 6; docs/science.md."
        ),
        [
            ("science.md".to_string(), "4.3".to_string()),
            ("science-flexure.md".to_string(), "6".to_string()),
            ("science.md".to_string(), String::new()),
        ]
    );
    let numbers = section_numbers("# Title\n## 4. Stretching\n### 4.3 Thermal\ntext 5.1\n");
    assert_eq!(
        numbers.into_iter().collect::<Vec<_>>(),
        ["4".to_string(), "4.3".to_string()]
    );
}

#[test]
fn every_citation_of_the_science_notes_resolves_inside_the_repository() {
    let mut files = Vec::new();
    for dir in ["server", "tests", "benches"] {
        rust_files(&Path::new(ROOT).join(dir), &mut files);
    }
    let mut checked = 0;
    let mut broken = Vec::new();
    for file in &files {
        let text = std::fs::read_to_string(file).expect("a readable source file");
        for (name, number) in citations(&text) {
            let notes_path = Path::new(ROOT).join("docs").join(&name);
            let Ok(notes) = std::fs::read_to_string(&notes_path) else {
                broken.push(format!("{}: docs/{name} does not exist", file.display()));
                continue;
            };
            checked += 1;
            if !number.is_empty() && !section_numbers(&notes).contains(&number) {
                broken.push(format!(
                    "{}: docs/{name} has no section {number}",
                    file.display()
                ));
            }
        }
    }
    // The code cites the notes a few hundred times; finding almost none means the
    // reader broke, not that the code is clean.
    assert!(checked > 100, "only {checked} citations found");
    assert!(
        broken.is_empty(),
        "broken citations:\n{}",
        broken.join("\n")
    );
}
