//! Every field key the rules, the server and the report ask a block for is
//! a key the schema declares. A key renamed in the schema but not at its
//! readers would otherwise read as "not written" and switch a rule off
//! without a word.

use guardband_model::schema::BLOCKS;
use std::path::{Path, PathBuf};

/// The accessors whose first string argument is a field key.
const ACCESSORS: &[&str] = &[
    "field(",
    "named_field(",
    "fields_named(",
    "quantity(",
    "choice(",
    "flag(",
    "reference(",
    "need(",
    "optional(",
    "value_span(",
    "at(",
    "label(",
];

fn sources(dir: &Path, out: &mut Vec<PathBuf>) {
    for entry in std::fs::read_dir(dir).expect("source folder").flatten() {
        let path = entry.path();
        if path.is_dir() {
            sources(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

/// The string literals among the arguments of the call opening at `open`
/// (just after its parenthesis), up to the matching close.
fn literals(text: &str, open: usize) -> Vec<&str> {
    let bytes = text.as_bytes();
    let mut depth = 1;
    let mut i = open;
    let mut out = Vec::new();
    while i < bytes.len() && depth > 0 {
        match bytes[i] {
            b'(' => depth += 1,
            b')' => depth -= 1,
            b'"' => {
                let end = text[i + 1..].find('"').map_or(bytes.len(), |e| i + 1 + e);
                // Only literals of the call itself, not of nested calls.
                if depth == 1 {
                    out.push(&text[i + 1..end.min(bytes.len())]);
                }
                i = end;
            }
            _ => {}
        }
        i += 1;
    }
    out
}

/// Whether `s` reads as a field key: lower-case words joined by `_`.
fn is_key(s: &str) -> bool {
    !s.is_empty() && s.bytes().all(|b| b.is_ascii_lowercase() || b == b'_')
}

#[test]
fn every_field_key_read_is_declared_in_the_schema() {
    let keywords: Vec<&str> = BLOCKS
        .iter()
        .flat_map(|b| b.fields.iter().map(|f| f.keyword))
        .collect();
    let names: Vec<&str> = BLOCKS
        .iter()
        .flat_map(|b| b.fields.iter().filter_map(|f| f.name))
        .collect();
    let top = Path::new(env!("CARGO_MANIFEST_DIR")).join("..");
    let mut files = Vec::new();
    for crate_dir in ["guardband-rules", "guardband-lsp", "guardband-report"] {
        sources(&top.join(crate_dir).join("src"), &mut files);
    }
    let mut checked = 0;
    let mut unknown = Vec::new();
    for path in &files {
        let text = std::fs::read_to_string(path).expect("source");
        for accessor in ACCESSORS {
            let mut from = 0;
            while let Some(at) = text[from..].find(accessor) {
                let start = from + at;
                from = start + accessor.len();
                // `.field(` and `need(`, not `some_field(` or `fn field(`.
                let before = text[..start].chars().next_back();
                if before.is_some_and(|c| c.is_alphanumeric() || c == '_')
                    || text[..start].ends_with("fn ")
                {
                    continue;
                }
                let found = literals(&text, from);
                let Some(key) = found.first() else { continue };
                if !is_key(key) {
                    continue;
                }
                checked += 1;
                let line = text[..start].lines().count();
                if !keywords.contains(key) {
                    unknown.push(format!("{}:{line}: `{key}`", path.display()));
                }
                if *accessor == "named_field("
                    && let Some(name) = found.get(1)
                    && !names.contains(name)
                {
                    unknown.push(format!("{}:{line}: name `{name}`", path.display()));
                }
            }
        }
    }
    assert!(
        unknown.is_empty(),
        "keys the schema does not declare:\n{}",
        unknown.join("\n")
    );
    // The scan finds the readers; finding few would mean it broke.
    assert!(checked > 100, "only {checked} field reads found");
}
