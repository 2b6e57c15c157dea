//! Loading `.guard` files from disk: decoding, parsing, following `use`
//! imports inside the workspace root, and reporting import cycles.

use crate::limits::{Limits, show_bytes};
use crate::{Diagnostic, FileId};
use guardband_syntax::{Item, LineIndex, Parse, parse_with};
use std::path::{Component, Path, PathBuf};

/// One loaded file.
#[derive(Debug, Clone)]
pub struct SourceFile {
    pub id: FileId,
    /// Absolute, canonical path.
    pub path: PathBuf,
    /// Path relative to the workspace root with `/` separators, for output.
    pub display: String,
    /// The text without a leading byte-order mark.
    pub text: String,
    /// Shared with other checks of the same run when the file is an import
    /// they have in common (see [`SharedParses`]).
    pub parse: std::sync::Arc<Parse>,
    /// Built on first use ([`SourceFile::line_index`]): only files that a
    /// finding, hover or edit points into need one.
    pub lines: std::sync::OnceLock<LineIndex>,
    /// Files this one imports with `use`, in order, with the span of each `use`.
    pub imports: Vec<(FileId, guardband_syntax::Span)>,
}

impl SourceFile {
    /// The file's line index, built the first time it is asked for.
    pub fn line_index(&self) -> &LineIndex {
        self.lines.get_or_init(|| LineIndex::new(&self.text))
    }

    /// The text of the line holding byte `offset` (clamped to the text),
    /// without its line break: what identifies a finding across edits
    /// that move it to another line.
    pub fn line_text(&self, offset: usize) -> &str {
        let text = &self.text;
        let mut start = offset.min(text.len());
        while !text.is_char_boundary(start) {
            start -= 1;
        }
        let line_start = text[..start].rfind('\n').map(|i| i + 1).unwrap_or(0);
        let line_end = text[start..]
            .find('\n')
            .map(|i| start + i)
            .unwrap_or(text.len());
        text[line_start..line_end].trim_end_matches('\r')
    }
}

/// All files of one check, rooted at the workspace root.
#[derive(Debug, Clone, Default)]
pub struct Workspace {
    pub root: PathBuf,
    pub files: Vec<SourceFile>,
}

impl Workspace {
    /// The file with this id.
    pub fn file(&self, id: FileId) -> &SourceFile {
        &self.files[id.0 as usize]
    }

    /// Adds a file that is not a spec (such as `guardband.toml`) so that
    /// diagnostics can point into it. It is not parsed.
    pub fn add_text_file(&mut self, path: PathBuf, text: String) -> FileId {
        self.push_file(path, text, Parse::default())
    }

    /// Appends a file with its display path and line index; returns its id.
    pub(crate) fn push_file(&mut self, path: PathBuf, text: String, parse: Parse) -> FileId {
        self.push_shared(path, text, std::sync::Arc::new(parse))
    }

    /// [`Workspace::push_file`] with a parse that may be shared.
    fn push_shared(&mut self, path: PathBuf, text: String, parse: std::sync::Arc<Parse>) -> FileId {
        let id = FileId(self.files.len() as u32);
        let display = path
            .strip_prefix(&self.root)
            .map(|p| p.to_string_lossy().replace('\\', "/"))
            .unwrap_or_else(|_| path.to_string_lossy().into_owned());
        self.files.push(SourceFile {
            id,
            path,
            display,
            text,
            parse,
            lines: std::sync::OnceLock::new(),
            imports: Vec::new(),
        });
        id
    }

    /// Makes every span of `diagnostics` a valid, ordered range on character
    /// boundaries of its file, so that no front end can be handed a bad span.
    pub fn normalize_spans(&self, diagnostics: &mut [crate::Diagnostic]) {
        let fix = |file: FileId, span: &mut guardband_syntax::Span| {
            let text = &self.file(file).text;
            let snap = |mut o: usize| {
                o = o.min(text.len());
                while !text.is_char_boundary(o) {
                    o -= 1;
                }
                o
            };
            let (a, b) = (snap(span.start), snap(span.end));
            *span = a.min(b)..a.max(b);
        };
        for d in diagnostics {
            fix(d.file, &mut d.span);
            for l in &mut d.labels {
                fix(l.file, &mut l.span);
            }
        }
    }

    /// Looks a file up by canonical path.
    pub fn find(&self, path: &Path) -> Option<FileId> {
        self.files.iter().find(|f| f.path == path).map(|f| f.id)
    }
}

/// Removes `.` and resolves `..` lexically, without touching the file system.
pub fn normalize(path: &Path) -> PathBuf {
    let mut out = PathBuf::new();
    for c in path.components() {
        match c {
            Component::CurDir => {}
            Component::ParentDir => {
                out.pop();
            }
            other => out.push(other.as_os_str()),
        }
    }
    out
}

/// Decodes file bytes: strips a BOM; invalid UTF-8 and NUL bytes are
/// reported (with the offset of the first bad byte) instead of parsed.
pub fn decode(bytes: &[u8]) -> Result<String, (String, usize, String)> {
    let bytes = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(bytes);
    match std::str::from_utf8(bytes) {
        Ok(text) => {
            if let Some(pos) = text.find('\0') {
                return Err((
                    text.to_string(),
                    pos,
                    "this file contains a NUL byte; is it a binary file?".to_string(),
                ));
            }
            Ok(text.to_string())
        }
        Err(e) => {
            let lossy = String::from_utf8_lossy(bytes).into_owned();
            Err((
                lossy,
                e.valid_up_to(),
                format!(
                    "this file is not valid UTF-8 (bad byte at offset {})",
                    e.valid_up_to()
                ),
            ))
        }
    }
}

/// How a check reads a file: its bytes, at most `limit + 1` of them (the
/// caller tells a file over the limit by its length). [`crate::read_source`]
/// reads from disk; an editor reads its open buffers first.
pub type Read<'a> = dyn Fn(&Path, usize) -> std::io::Result<Vec<u8>> + Sync + 'a;

/// Loads the given files and everything they import. Diagnostics for bad
/// encodings, missing imports, imports leaving `root` and import cycles are
/// pushed to `diagnostics`. Unreadable entry files are returned as errors.
pub fn load(
    root: &Path,
    entries: &[PathBuf],
    diagnostics: &mut Vec<Diagnostic>,
) -> Result<Workspace, (PathBuf, std::io::Error)> {
    load_with(
        root,
        entries,
        &crate::read_source,
        &Limits::default(),
        diagnostics,
    )
}

/// Like [`load`], but file contents come from `read`, so that an editor can
/// check the text in its buffers instead of what is saved on disk. A path
/// that `read` knows but the disk does not (an unsaved buffer) is kept as it
/// is, made absolute and normalised.
pub fn load_with(
    root: &Path,
    entries: &[PathBuf],
    read: &Read,
    limits: &Limits,
    diagnostics: &mut Vec<Diagnostic>,
) -> Result<Workspace, (PathBuf, std::io::Error)> {
    load_shared(root, entries, read, limits, None, diagnostics)
}

/// Imported files parsed once for all the checks of one run: the many
/// entry files of a folder check usually import the same process file, and
/// each check would otherwise read it into a tree of its own. Keyed by path
/// and held to the exact text, so a file that changed is parsed again.
/// Entry files are not kept (each is checked once).
#[derive(Debug, Default)]
pub struct SharedParses {
    by_path: std::sync::Mutex<std::collections::HashMap<PathBuf, (String, std::sync::Arc<Parse>)>>,
}

impl SharedParses {
    /// The parse of `text` at `path`, from an earlier check if it read the
    /// same text there, else parsed now and kept.
    fn parse(&self, path: &Path, text: &str, max_nesting: usize) -> std::sync::Arc<Parse> {
        if let Ok(map) = self.by_path.lock()
            && let Some((seen, parse)) = map.get(path)
            && seen == text
        {
            return std::sync::Arc::clone(parse);
        }
        let parse = std::sync::Arc::new(parse_with(text, max_nesting));
        if let Ok(mut map) = self.by_path.lock() {
            map.insert(
                path.to_path_buf(),
                (text.to_string(), std::sync::Arc::clone(&parse)),
            );
        }
        parse
    }
}

/// [`load_with`], with imported files' parses shared through `shared`
/// across the checks of one run (`None`: one check, nothing to share).
pub fn load_shared(
    root: &Path,
    entries: &[PathBuf],
    read: &Read,
    limits: &Limits,
    shared: Option<&SharedParses>,
    diagnostics: &mut Vec<Diagnostic>,
) -> Result<Workspace, (PathBuf, std::io::Error)> {
    let root = root.canonicalize().map_err(|e| (root.to_path_buf(), e))?;
    let canonical_or_known = |path: &Path| -> std::io::Result<PathBuf> {
        match path.canonicalize() {
            Ok(c) => Ok(c),
            Err(e) => {
                let plain = normalize(path);
                if read(&plain, 0).is_ok() {
                    Ok(plain)
                } else {
                    Err(e)
                }
            }
        }
    };
    let mut ws = Workspace {
        root: root.clone(),
        files: Vec::new(),
    };
    // Files to follow, with how many imports deep they are.
    let mut queue: std::collections::VecDeque<(FileId, usize)> = Default::default();
    for entry in entries {
        let path = canonical_or_known(entry).map_err(|e| (entry.clone(), e))?;
        if ws.find(&path).is_some() {
            continue;
        }
        let bytes = read(&path, limits.max_file_bytes).map_err(|e| (entry.clone(), e))?;
        let id = add_file(&mut ws, path, &bytes, limits, None, diagnostics);
        queue.push_back((id, 0));
    }
    while let Some((id, depth)) = queue.pop_front() {
        let file = ws.file(id);
        let dir = file
            .path
            .parent()
            .map(Path::to_path_buf)
            .unwrap_or_default();
        // Only the `use` items are needed; the rest of the file is not copied.
        let uses: Vec<guardband_syntax::UseItem> = file
            .parse
            .file
            .items
            .iter()
            .filter_map(|item| match item {
                Item::Use(u) => Some(u.clone()),
                _ => None,
            })
            .collect();
        let mut imports = Vec::new();
        for u in &uses {
            let problem = |rule, message: String, primary: &str, help: Option<&str>| {
                let d = Diagnostic::error(rule, id, u.path_span.clone(), message).primary(primary);
                match help {
                    Some(h) => d.help(h),
                    None => d,
                }
            };
            let target = normalize(&dir.join(&u.path));
            if !target.starts_with(&root) {
                diagnostics.push(problem(
                    "import-outside-workspace",
                    format!(
                        "`{}` is outside the workspace root `{}`",
                        u.path,
                        root_name(&root)
                    ),
                    "this path leaves the workspace",
                    Some("imports must stay inside the workspace (the folder holding guardband.toml); move the shared file into it"),
                ));
                continue;
            }
            let canonical = match canonical_or_known(&target) {
                Ok(c) => c,
                Err(e) if crate::is_link_loop(&e) => {
                    diagnostics.push(problem(
                        "import-not-found",
                        format!("`{}` is a loop of links", u.path),
                        "the links lead back to themselves",
                        Some("point the link at the file itself"),
                    ));
                    continue;
                }
                Err(_) => {
                    diagnostics.push(problem(
                        "import-not-found",
                        format!("cannot find `{}`", u.path),
                        "no such file",
                        Some("paths in `use` are relative to the importing file"),
                    ));
                    continue;
                }
            };
            if !canonical.starts_with(&root) {
                diagnostics.push(problem(
                    "import-outside-workspace",
                    format!(
                        "`{}` resolves (through a link) outside the workspace root `{}`",
                        u.path,
                        root_name(&root)
                    ),
                    "this path leaves the workspace",
                    None,
                ));
                continue;
            }
            let target_id = match ws.find(&canonical) {
                Some(t) => t,
                None if depth + 1 > limits.max_import_depth => {
                    diagnostics.push(problem(
                        "limit",
                        format!(
                            "imports nested deeper than {} files; `{}` is not loaded",
                            limits.max_import_depth, u.path
                        ),
                        "too deep",
                        Some("raise `max_import_depth` under `[limits]` in guardband.toml"),
                    ));
                    continue;
                }
                None if ws.files.len() >= limits.max_files => {
                    diagnostics.push(problem(
                        "limit",
                        format!(
                            "more than {} files in one check; `{}` is not loaded",
                            limits.max_files, u.path
                        ),
                        "one file too many",
                        Some("raise `max_files` under `[limits]` in guardband.toml"),
                    ));
                    continue;
                }
                None => match read(&canonical, limits.max_file_bytes) {
                    Ok(bytes) => {
                        let t = add_file(&mut ws, canonical, &bytes, limits, shared, diagnostics);
                        queue.push_back((t, depth + 1));
                        t
                    }
                    Err(e) => {
                        diagnostics.push(problem(
                            "import-not-found",
                            format!("cannot read `{}`: {e}", u.path),
                            "unreadable",
                            None,
                        ));
                        continue;
                    }
                },
            };
            imports.push((target_id, u.span.clone()));
        }
        ws.files[id.0 as usize].imports = imports;
    }
    report_cycles(&ws, diagnostics);
    Ok(ws)
}

/// The root as messages name it: its folder name, with a slash.
fn root_name(root: &Path) -> String {
    match root.file_name() {
        Some(n) => format!("{}/", n.to_string_lossy()),
        None => root.display().to_string(),
    }
}

fn add_file(
    ws: &mut Workspace,
    path: PathBuf,
    bytes: &[u8],
    limits: &Limits,
    shared: Option<&SharedParses>,
    diagnostics: &mut Vec<Diagnostic>,
) -> FileId {
    let id = FileId(ws.files.len() as u32);
    if bytes.len() > limits.max_file_bytes {
        diagnostics.push(
            Diagnostic::error(
                "limit",
                id,
                0..0,
                format!(
                    "this file is {}larger than the {} limit; it was not checked",
                    // Only the limit and one byte are read; the size on disk says the rest.
                    std::fs::metadata(&path)
                        .ok()
                        .map(|m| m.len() as usize)
                        .filter(|n| *n > limits.max_file_bytes)
                        .map(|n| format!("{}, ", show_bytes(n)))
                        .unwrap_or_default(),
                    show_bytes(limits.max_file_bytes)
                ),
            )
            .primary("not read")
            .help("split the file, or raise `max_file_size` under `[limits]` in guardband.toml"),
        );
        return ws.push_file(path, String::new(), Parse::default());
    }
    let (text, parsed) = match decode(bytes) {
        Ok(text) => {
            let parsed = match shared {
                Some(shared) => shared.parse(&path, &text, limits.max_nesting),
                None => std::sync::Arc::new(parse_with(&text, limits.max_nesting)),
            };
            (text, parsed)
        }
        Err((text, offset, message)) => {
            let end = text[offset.min(text.len())..]
                .chars()
                .next()
                .map(|c| offset + c.len_utf8())
                .unwrap_or(offset);
            diagnostics.push(
                Diagnostic::error("encoding", id, offset..end, message)
                    .primary("here")
                    .help("guardband reads UTF-8 text; the file was not checked"),
            );
            (text, std::sync::Arc::new(Parse::default()))
        }
    };
    ws.push_shared(path, text, parsed)
}

/// Reports each import cycle once, at the `use` that closes it.
fn report_cycles(ws: &Workspace, diagnostics: &mut Vec<Diagnostic>) {
    #[derive(Clone, Copy, PartialEq)]
    enum Mark {
        New,
        Active,
        Done,
    }
    let mut marks = vec![Mark::New; ws.files.len()];
    let mut stack: Vec<FileId> = Vec::new();
    fn visit(
        ws: &Workspace,
        id: FileId,
        marks: &mut [Mark],
        stack: &mut Vec<FileId>,
        diagnostics: &mut Vec<Diagnostic>,
    ) {
        marks[id.0 as usize] = Mark::Active;
        stack.push(id);
        for (next, span) in &ws.file(id).imports {
            let next = *next;
            match marks[next.0 as usize] {
                Mark::New => visit(ws, next, marks, stack, diagnostics),
                Mark::Active => {
                    let start = stack.iter().position(|f| *f == next).unwrap_or(0);
                    // The cycle is told from its first file by display path and
                    // reported at the `use` that returns to it, so that it reads
                    // the same whichever file the check started from.
                    let cycle = &stack[start..];
                    let first = (0..cycle.len())
                        .min_by_key(|i| ws.file(cycle[*i]).display.as_str())
                        .unwrap_or(0);
                    let closer = cycle[(first + cycle.len() - 1) % cycle.len()];
                    let at = ws
                        .file(closer)
                        .imports
                        .iter()
                        .find(|(target, _)| *target == cycle[first])
                        .map(|(_, s)| s.clone())
                        .unwrap_or_else(|| span.clone());
                    let mut chain: Vec<&str> = cycle[first..]
                        .iter()
                        .chain(&cycle[..first])
                        .map(|f| ws.file(*f).display.as_str())
                        .collect();
                    chain.push(ws.file(cycle[first]).display.as_str());
                    diagnostics.push(
                        Diagnostic::error(
                            "cycle",
                            closer,
                            at,
                            format!("import cycle: {}", chain.join(" → ")),
                        )
                        .primary("this import closes the cycle")
                        .help("move the shared items into a file that both can import"),
                    );
                }
                Mark::Done => {}
            }
        }
        stack.pop();
        marks[id.0 as usize] = Mark::Done;
    }
    for f in &ws.files {
        if marks[f.id.0 as usize] == Mark::New {
            visit(ws, f.id, &mut marks, &mut stack, diagnostics);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::{SharedParses, load_shared};
    use crate::Limits;
    use std::path::Path;
    use std::sync::Arc;

    /// The parse of `p.guard` as loaded by a check of `entry` under `root`.
    fn import_parse(
        root: &Path,
        entry: &str,
        shared: &SharedParses,
    ) -> Arc<guardband_syntax::Parse> {
        let mut diagnostics = Vec::new();
        let ws = load_shared(
            root,
            &[root.join(entry)],
            &crate::read_source,
            &Limits::default(),
            Some(shared),
            &mut diagnostics,
        )
        .expect("load");
        let import = ws
            .files
            .iter()
            .find(|f| f.path.ends_with("p.guard"))
            .expect("the import is loaded");
        Arc::clone(&import.parse)
    }

    #[test]
    fn an_import_is_parsed_once_per_run_and_again_when_its_text_changes() {
        let root = std::env::temp_dir().join(format!("guardband-shared-{}", std::process::id()));
        std::fs::create_dir_all(&root).expect("dir");
        let write = |name: &str, text: &str| std::fs::write(root.join(name), text).expect("write");
        write("a.guard", "use \"p.guard\"\nregulator a { }\n");
        write("b.guard", "use \"p.guard\"\nregulator b { }\n");
        write("p.guard", "process p { }\n");
        let shared = SharedParses::default();
        let from_a = import_parse(&root, "a.guard", &shared);
        let from_b = import_parse(&root, "b.guard", &shared);
        assert!(Arc::ptr_eq(&from_a, &from_b), "one parse for both entries");
        write("p.guard", "process p { spread s = ± 5 % }\n");
        let changed = import_parse(&root, "b.guard", &shared);
        assert!(
            !Arc::ptr_eq(&from_a, &changed),
            "a changed text is parsed again"
        );
        // Entry files are not kept: only the import is.
        assert_eq!(shared.by_path.lock().map(|m| m.len()).unwrap_or(0), 1);
        let _ = std::fs::remove_dir_all(&root);
    }
}
