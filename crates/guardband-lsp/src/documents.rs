//! The open documents: their latest text and version, edited in place.
//!
//! Every `didOpen`/`didChange`/`didClose` is applied here synchronously, in
//! the order the client sent it, before the handler awaits anything; the
//! analyses read copies of this state, so they can never lose an edit.

use crate::encoding::Encoding;
use guardband_check::workspace_root as root_for;
use guardband_syntax::LineIndex;
use std::collections::HashMap;
use std::path::{Path, PathBuf};
use tower_lsp_server::ls_types::{Range, TextDocumentContentChangeEvent, Uri};

/// One open document.
#[derive(Debug, Clone)]
pub struct Document {
    pub uri: Uri,
    /// The path the checker knows it by (canonical when it exists on disk).
    pub path: PathBuf,
    /// Its workspace root, found once when it is opened (and again when
    /// files change on disk), not on every keystroke.
    pub root: PathBuf,
    pub text: String,
    pub version: i32,
}

/// Why a change could not be applied.
#[derive(Debug, PartialEq, Eq)]
pub enum ChangeError {
    /// The client changed a document it never opened.
    NotOpen,
    /// The version went backwards; the change is ignored.
    StaleVersion { have: i32, got: i32 },
}

/// All open documents by URI.
#[derive(Debug, Default)]
pub struct Documents {
    by_uri: HashMap<Uri, Document>,
}

/// The path of a `file:` URI as the checker names files.
///
/// A document with no folder on disk (an `untitled:` buffer, a file in a
/// folder that does not exist yet) is checked on its own, as a one-file
/// workspace in an empty folder of the server's (see [`detached_root`]).
pub fn uri_path(uri: &Uri) -> PathBuf {
    let raw = uri.to_file_path().map(|p| p.into_owned());
    let on_disk = raw
        .as_ref()
        .filter(|p| p.is_absolute() && p.parent().is_some_and(Path::is_dir));
    match on_disk {
        Some(raw) => raw
            .canonicalize()
            .unwrap_or_else(|_| guardband_model::normalize(raw)),
        None => detached_root().join(detached_name(uri)),
    }
}

/// The empty folder that documents without a folder on disk are checked
/// in: nothing else is in it, so their `use` imports find nothing and
/// nothing outside is read.
pub fn detached_root() -> PathBuf {
    static ROOT: std::sync::OnceLock<PathBuf> = std::sync::OnceLock::new();
    ROOT.get_or_init(|| {
        let dir =
            std::env::temp_dir().join(format!("guardband-lsp-detached-{}", std::process::id()));
        let _ = std::fs::create_dir_all(&dir);
        dir.canonicalize().unwrap_or(dir)
    })
    .clone()
}

/// A file name for a document without a folder, from the end of its URI.
fn detached_name(uri: &Uri) -> String {
    let last = uri
        .as_str()
        .rsplit(['/', ':'])
        .find(|s| !s.is_empty())
        .unwrap_or("untitled");
    let mut name: String = last
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || matches!(c, '.' | '-' | '_') {
                c
            } else {
                '_'
            }
        })
        .take(64)
        .collect();
    if !name.ends_with(".guard") {
        name.push_str(".guard");
    }
    name
}

impl Documents {
    /// Opens (or reopens) a document; `folders` are the client's workspace folders.
    pub fn open(&mut self, uri: Uri, text: String, version: i32, folders: &[PathBuf]) -> &Document {
        let path = uri_path(&uri);
        let root = root_for(&path, folders);
        self.by_uri.insert(
            uri.clone(),
            Document {
                uri: uri.clone(),
                path,
                root,
                text,
                version,
            },
        );
        &self.by_uri[&uri]
    }

    /// Finds every document's root again (a `guardband.toml` may have come or gone).
    pub fn reroot(&mut self, folders: &[PathBuf]) {
        for doc in self.by_uri.values_mut() {
            doc.root = root_for(&doc.path, folders);
        }
    }

    /// Applies a batch of changes in order. A range is taken in `encoding`;
    /// reversed ranges are put right and positions past the end clamped.
    pub fn change(
        &mut self,
        uri: &Uri,
        version: i32,
        changes: Vec<TextDocumentContentChangeEvent>,
        encoding: Encoding,
    ) -> Result<(), ChangeError> {
        let doc = self.by_uri.get_mut(uri).ok_or(ChangeError::NotOpen)?;
        if version < doc.version {
            return Err(ChangeError::StaleVersion {
                have: doc.version,
                got: version,
            });
        }
        for change in changes {
            match change.range {
                None => doc.text = change.text,
                Some(range) => {
                    let (start, end) = byte_range(&doc.text, range, encoding);
                    doc.text.replace_range(start..end, &change.text);
                }
            }
        }
        doc.version = version;
        Ok(())
    }

    /// Closes a document; returns it if it was open.
    pub fn close(&mut self, uri: &Uri) -> Option<Document> {
        self.by_uri.remove(uri)
    }

    /// The document at `uri`.
    pub fn get(&self, uri: &Uri) -> Option<&Document> {
        self.by_uri.get(uri)
    }

    /// Every open document.
    pub fn all(&self) -> impl Iterator<Item = &Document> {
        self.by_uri.values()
    }
}

/// A range of LSP positions as byte offsets into `text`, ordered and clamped.
fn byte_range(text: &str, range: Range, encoding: Encoding) -> (usize, usize) {
    let a = offset_of(text, range.start, encoding);
    let b = offset_of(text, range.end, encoding);
    (a.min(b), a.max(b))
}

/// The byte offset of an LSP position, as [`Encoding::offset`] gives it on
/// the whole text's line index, but without building one: an edit to a
/// large document costs a scan to its line, not an index of every line.
fn offset_of(
    text: &str,
    position: tower_lsp_server::ls_types::Position,
    encoding: Encoding,
) -> usize {
    // Line ends as the line index counts them: `\n`, `\r\n` and a lone `\r`.
    let bytes = text.as_bytes();
    let mut start = 0;
    for _ in 0..position.line {
        let Some(i) = text[start..].find(['\n', '\r']).map(|i| start + i) else {
            return text.len();
        };
        start = if bytes[i] == b'\r' && bytes.get(i + 1) == Some(&b'\n') {
            i + 2
        } else {
            i + 1
        };
    }
    let end = text[start..]
        .find(['\n', '\r'])
        .map_or(text.len(), |i| start + i);
    let line = LineIndex::new(&text[start..end]);
    let within = tower_lsp_server::ls_types::Position::new(0, position.character);
    start + encoding.offset(&line, within)
}

#[cfg(test)]
mod tests {
    use super::*;
    use tower_lsp_server::ls_types::Position;

    fn edit(l0: u32, c0: u32, l1: u32, c1: u32, text: &str) -> TextDocumentContentChangeEvent {
        TextDocumentContentChangeEvent {
            range: Some(Range::new(Position::new(l0, c0), Position::new(l1, c1))),
            range_length: None,
            text: text.into(),
        }
    }

    fn uri() -> Uri {
        "file:///nowhere/a.guard".parse().expect("uri")
    }

    #[test]
    fn offsets_without_an_index_equal_those_of_the_whole_index() {
        // Every line end kind, non-ASCII text, positions past a line's end
        // and past the last line.
        let text = "a = 1 µF\r\nb 𝄞 c\rd\n\ne = ± 2 %\n";
        let index = LineIndex::new(text);
        for encoding in [Encoding::Utf8, Encoding::Utf16] {
            for line in 0..7 {
                for character in 0..16 {
                    let p = Position::new(line, character);
                    assert_eq!(
                        super::offset_of(text, p, encoding),
                        encoding.offset(&index, p),
                        "{encoding:?} {line}:{character}"
                    );
                }
            }
        }
    }

    #[test]
    fn applies_edits_in_utf16_and_utf8() {
        let mut docs = Documents::default();
        docs.open(uri(), "x = 1 µF // 𝄞\ny".into(), 1, &[]);
        // After "x = 1 µF // 𝄞" the UTF-16 column is 13 (𝄞 is two units); in UTF-8 it is 17,
        // so after the inserted "!" it is 18.
        docs.change(&uri(), 2, vec![edit(0, 13, 0, 13, "!")], Encoding::Utf16)
            .expect("applies");
        assert_eq!(docs.get(&uri()).expect("open").text, "x = 1 µF // 𝄞!\ny");
        docs.change(&uri(), 3, vec![edit(0, 18, 0, 18, "?")], Encoding::Utf8)
            .expect("applies");
        assert_eq!(docs.get(&uri()).expect("open").text, "x = 1 µF // 𝄞!?\ny");
    }

    #[test]
    fn reversed_and_past_the_end_ranges_are_safe() {
        let mut docs = Documents::default();
        docs.open(uri(), "abc\ndef".into(), 1, &[]);
        docs.change(&uri(), 2, vec![edit(0, 2, 0, 1, "X")], Encoding::Utf16)
            .expect("applies");
        assert_eq!(docs.get(&uri()).expect("open").text, "aXc\ndef");
        docs.change(&uri(), 3, vec![edit(9, 9, 12, 0, "!")], Encoding::Utf16)
            .expect("applies");
        assert_eq!(docs.get(&uri()).expect("open").text, "aXc\ndef!");
    }

    #[test]
    fn edits_on_carriage_return_only_text_land_where_the_editor_put_them() {
        let mut docs = Documents::default();
        docs.open(uri(), "ab\rcd\ref".into(), 1, &[]);
        // Line 2, column 1 is between `e` and `f`, as LSP counts lines.
        docs.change(&uri(), 2, vec![edit(2, 1, 2, 1, "X")], Encoding::Utf16)
            .expect("applies");
        assert_eq!(docs.get(&uri()).expect("open").text, "ab\rcd\reXf");
        docs.change(&uri(), 3, vec![edit(1, 0, 1, 2, "Y")], Encoding::Utf8)
            .expect("applies");
        assert_eq!(docs.get(&uri()).expect("open").text, "ab\rY\reXf");
    }

    #[test]
    fn a_document_without_a_folder_is_checked_on_its_own() {
        let untitled: Uri = "untitled:Untitled-1".parse().expect("uri");
        let path = uri_path(&untitled);
        assert!(path.starts_with(detached_root()), "{}", path.display());
        assert!(path.extension().is_some_and(|e| e == "guard"));
        let missing: Uri = "file:///no/such/folder/x.guard".parse().expect("uri");
        assert!(uri_path(&missing).starts_with(detached_root()));
    }

    #[test]
    fn unopened_and_stale_changes_are_refused() {
        let mut docs = Documents::default();
        assert_eq!(
            docs.change(&uri(), 1, vec![], Encoding::Utf16),
            Err(ChangeError::NotOpen)
        );
        docs.open(uri(), "a".into(), 5, &[]);
        assert_eq!(
            docs.change(&uri(), 4, vec![edit(0, 0, 0, 0, "b")], Encoding::Utf16),
            Err(ChangeError::StaleVersion { have: 5, got: 4 })
        );
        assert_eq!(docs.get(&uri()).expect("open").text, "a");
    }
}
