//! SARIF 2.1.0 output, for code-scanning uploads.
//!
//! One run; the driver lists every lint rule (with its documentation as
//! help) and every language diagnostic. Locations are relative to the
//! repository root (the git top level, else the folder guardband ran in)
//! through the `REPOROOT` base id, whose absolute place the log leaves to
//! the consumer (a code-scanning upload knows its checkout; an absolute
//! path of the machine that ran the check would mean nothing there).
//! Columns count Unicode
//! code points (as the JSON output does), and each result carries a
//! fingerprint built from what it points at, not where, so it survives
//! edits above it.

use guardband_model::{Diagnostic, LANGUAGE_DIAGNOSTICS, Severity, Workspace};
use serde_json::{Value, json};
use std::collections::HashMap;
use std::io::Write;
use std::path::Path;

/// Where users can read about the tool. The project has no published home
/// yet; `.invalid` is the reserved top-level domain for such placeholders.
pub const INFORMATION_URI: &str = "https://guardband.invalid/";

fn level(severity: Option<Severity>) -> &'static str {
    match severity {
        Some(Severity::Error) => "error",
        Some(Severity::Warning) => "warning",
        Some(Severity::Info) => "note",
        None => "none",
    }
}

/// The driver's rules: the lint rules, then the language's diagnostics.
fn rules() -> Vec<Value> {
    let mut out: Vec<Value> = guardband_rules::registry()
        .iter()
        .map(|r| {
            let docs = r.documentation();
            json!({
                "id": r.name,
                "name": r.name,
                "shortDescription": { "text": r.summary },
                "fullDescription": { "text": r.section("What it flags").unwrap_or_else(|| r.summary.to_string()) },
                "help": { "text": r.explain(), "markdown": docs },
                "defaultConfiguration": {
                    "level": level(r.default_severity),
                    "enabled": r.default_severity.is_some(),
                },
            })
        })
        .collect();
    out.extend(LANGUAGE_DIAGNOSTICS.iter().map(|(code, meaning)| {
        json!({
            "id": code,
            "name": code,
            "shortDescription": { "text": meaning },
            "fullDescription": { "text": format!("A diagnostic of the guardband language: {meaning}.") },
            "help": { "text": "See the language reference (crates/guardband-syntax/REFERENCE.md)." },
            "defaultConfiguration": { "level": "error" },
        })
    }));
    out
}

/// 64-bit FNV-1a: a small, stable, dependency-free hash for fingerprints.
fn fnv1a(bytes: &[u8]) -> u64 {
    let mut hash: u64 = 0xcbf2_9ce4_8422_2325;
    for b in bytes {
        hash ^= u64::from(*b);
        hash = hash.wrapping_mul(0x0100_0000_01b3);
    }
    hash
}

fn collapse(text: &str) -> String {
    text.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// What a finding points at, independent of its line number: the rule, the
/// file, the text of the line it starts on and the text it spans (both with
/// whitespace collapsed), and which occurrence of that combination it is.
fn fingerprint(ws: &Workspace, d: &Diagnostic, seen: &mut HashMap<u64, u32>) -> String {
    let file = ws.file(d.file);
    let spanned = file.text.get(d.span.clone()).unwrap_or("");
    let key = format!(
        "{}\0{}\0{}\0{}",
        d.rule,
        file.display,
        collapse(file.line_text(d.span.start)),
        collapse(spanned)
    );
    let base = fnv1a(key.as_bytes());
    let n = seen.entry(base).or_insert(0);
    *n += 1;
    format!("{base:016x}:{n}")
}

fn region(ws: &Workspace, file: guardband_model::FileId, span: &std::ops::Range<usize>) -> Value {
    let index = ws.file(file).line_index();
    let a = index.line_col(span.start);
    let b = index.line_col(span.end);
    json!({
        "startLine": a.line + 1,
        "startColumn": a.chars + 1,
        "endLine": b.line + 1,
        "endColumn": b.chars + 1,
    })
}

/// Percent-encodes the bytes of a path for a URI: unreserved characters and
/// `/` stay, everything else (spaces, `#`, `%`, non-ASCII and non-UTF-8
/// bytes) becomes `%XX` (RFC 3986).
pub fn percent_encode(bytes: &[u8]) -> String {
    let mut out = String::with_capacity(bytes.len());
    for &b in bytes {
        if b.is_ascii_alphanumeric() || matches!(b, b'-' | b'.' | b'_' | b'~' | b'/') {
            out.push(b as char);
        } else {
            out.push_str(&format!("%{b:02X}"));
        }
    }
    out
}

/// The raw bytes of a path (its OS bytes on Unix, so that a name that is
/// not UTF-8 keeps its bytes), with `/` separators.
fn path_bytes(path: &std::path::Path) -> Vec<u8> {
    #[cfg(unix)]
    {
        use std::os::unix::ffi::OsStrExt;
        path.as_os_str().as_bytes().to_vec()
    }
    #[cfg(not(unix))]
    {
        path.to_string_lossy().replace('\\', "/").into_bytes()
    }
}

/// The base id locations are relative to: the repository root.
const BASE_ID: &str = "REPOROOT";

/// A file's location: relative to the repository root when it lies inside
/// it, else its absolute `file:` URI.
fn artifact(base: &Path, path: &Path) -> Value {
    match crate::repo::relative(base, path) {
        Some(rel) => json!({ "uri": percent_encode(&path_bytes(&rel)), "uriBaseId": BASE_ID }),
        None => json!({ "uri": file_uri(path) }),
    }
}

/// An absolute `file:` URI for `path`.
fn file_uri(path: &Path) -> String {
    let encoded = percent_encode(&path_bytes(path));
    if encoded.starts_with('/') {
        format!("file://{encoded}")
    } else {
        format!("file:///{encoded}")
    }
}

fn location(
    ws: &Workspace,
    base: &Path,
    file: guardband_model::FileId,
    span: &std::ops::Range<usize>,
) -> Value {
    json!({
        "physicalLocation": {
            "artifactLocation": artifact(base, &ws.file(file).path),
            "region": region(ws, file, span),
        }
    })
}

/// One finding as a SARIF result; `index` maps rule ids to their place in
/// the driver's rule list, `seen` counts fingerprints met so far.
fn result(
    ws: &Workspace,
    d: &Diagnostic,
    base: &Path,
    index: &HashMap<String, usize>,
    seen: &mut HashMap<u64, u32>,
) -> Value {
    let mut message = d.message.clone();
    if let Some(help) = &d.help {
        message.push_str(". Help: ");
        message.push_str(help);
    }
    let related: Vec<Value> = d
        .labels
        .iter()
        .filter(|l| !(l.file == d.file && l.span == d.span))
        .enumerate()
        .map(|(i, l)| {
            let mut loc = location(ws, base, l.file, &l.span);
            loc["id"] = json!(i);
            loc["message"] = json!({ "text": l.message });
            loc
        })
        .collect();
    let mut result = json!({
        "ruleId": d.rule,
        "level": level(Some(d.severity)),
        "message": { "text": message },
        "locations": [location(ws, base, d.file, &d.span)],
        "partialFingerprints": { "guardbandFinding/v1": fingerprint(ws, d, seen) },
    });
    if let Some(i) = index.get(d.rule) {
        result["ruleIndex"] = json!(i);
    }
    if !related.is_empty() {
        result["relatedLocations"] = json!(related);
    }
    result
}

/// The log around its results, with `results` as given.
fn document(rules: Vec<Value>, results: Vec<Value>) -> Value {
    json!({
        "$schema": "https://json.schemastore.org/sarif-2.1.0.json",
        "version": "2.1.0",
        "runs": [{
            "tool": {
                "driver": {
                    "name": "guardband",
                    "version": env!("CARGO_PKG_VERSION"),
                    "semanticVersion": env!("CARGO_PKG_VERSION"),
                    "informationUri": INFORMATION_URI,
                    "rules": rules,
                }
            },
            "originalUriBaseIds": { BASE_ID: {
                "description": { "text": "The root of the repository the check ran in (its git top level, else the folder guardband ran in)." }
            } },
            "columnKind": "unicodeCodePoints",
            "results": results,
        }]
    })
}

/// Stands in for the results while the log's frame is printed; no result
/// can hold it (rule ids are kebab-case names).
const RESULTS_HERE: &str = "\u{0}results go here\u{0}";

/// Writes the SARIF log of one check (`base` is the repository root, see
/// [`crate::repo::base`]) and a newline, one result at a time: memory stays
/// constant per finding. The text is `serde_json`'s pretty form of the
/// whole log; a test holds the two together.
pub fn write(
    out: &mut dyn Write,
    ws: &Workspace,
    diagnostics: &[Diagnostic],
    base: &Path,
) -> std::io::Result<()> {
    let rules = rules();
    let index: HashMap<String, usize> = rules
        .iter()
        .enumerate()
        .filter_map(|(i, r)| Some((r["id"].as_str()?.to_string(), i)))
        .collect();
    let mut out = std::io::BufWriter::with_capacity(1 << 16, out);
    if diagnostics.is_empty() {
        serde_json::to_writer_pretty(&mut out, &document(rules, Vec::new()))?;
        out.write_all(b"\n")?;
        return out.flush();
    }
    // The frame, printed with one placeholder result, split around it.
    let frame = serde_json::to_string_pretty(&document(rules, vec![json!(RESULTS_HERE)]))?;
    let placeholder = serde_json::to_string(RESULTS_HERE)?;
    let at = frame
        .find(&placeholder)
        .ok_or(std::io::ErrorKind::InvalidData)?;
    let line_start = frame[..at].rfind('\n').map_or(0, |i| i + 1);
    let indent = &frame[line_start..at];
    out.write_all(&frame.as_bytes()[..line_start])?;
    let mut seen = HashMap::new();
    let mut text = Vec::with_capacity(4096);
    for (i, d) in diagnostics.iter().enumerate() {
        if i > 0 {
            out.write_all(b",\n")?;
        }
        let result = result(ws, d, base, &index, &mut seen);
        crate::render::write_nested(&mut out, &mut text, &result, indent.as_bytes())?;
    }
    out.write_all(&frame.as_bytes()[at + placeholder.len()..])?;
    out.write_all(b"\n")?;
    out.flush()
}

#[cfg(test)]
mod tests {
    use super::{fnv1a, percent_encode};

    // RFC 3986 §2.1-2.3: a space is %20, `#` %23, `%` %25; UTF-8 bytes of
    // `µ` (C2 B5) each become a %XX triplet; unreserved characters stay.
    #[test]
    fn uris_are_percent_encoded() {
        assert_eq!(percent_encode(b"a b/c#d%e.guard"), "a%20b/c%23d%25e.guard");
        assert_eq!(percent_encode("µ.guard".as_bytes()), "%C2%B5.guard");
        assert_eq!(percent_encode(b"\xff~_-"), "%FF~_-");
    }

    #[test]
    fn fnv1a_matches_the_published_test_vectors() {
        // 64-bit FNV-1a: the offset basis for "", and the value for "a" as listed
        // by the algorithm's authors (recalled from memory, not looked up here).
        assert_eq!(fnv1a(b""), 0xcbf2_9ce4_8422_2325);
        assert_eq!(fnv1a(b"a"), 0xaf63_dc4c_8601_ec8c);
    }
}
