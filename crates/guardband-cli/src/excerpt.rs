//! The source shown under a finding, cut to what the finding points at.
//!
//! A finding shows the lines its labels are on. Showing them whole costs the
//! length of the line for every finding, so a file of one long line with
//! many findings would cost the square of its size (and print it again for
//! each). Here each finding gets its own small excerpt instead: only the
//! lines its labels touch (and up to [`GAP`] lines between two of them),
//! each long line cut to a window around the labels on it, with `…` where
//! text was left out. Line numbers stay those of the file.

use guardband_model::{FileId, SourceFile};
use std::ops::Range;

/// A line longer than this many bytes is cut to windows around its labels.
const LONG_LINE: usize = 240;

/// Bytes kept on each side of a label's ends on a long line.
const CONTEXT: usize = 48;

/// Labels on lines further apart than this are shown in separate excerpts.
const GAP: u32 = 3;

const ELLIPSIS: &str = "…";

/// The text of some lines of a file, with the pieces of the original each
/// part comes from.
#[derive(Debug)]
pub struct Excerpt {
    pub file: FileId,
    /// 0-based number of the first line shown.
    pub first_line: u32,
    pub text: String,
    /// (start in the file, start in `text`, length) of each piece kept.
    pieces: Vec<(usize, usize, usize)>,
}

impl Excerpt {
    /// Where a byte offset of the file lands in the excerpt (after the
    /// `first_line` empty lines that stand for the lines above it): inside a
    /// kept piece exactly, in a cut-out stretch at the `…` that replaces it.
    pub fn map(&self, offset: usize) -> usize {
        self.first_line as usize + self.map_in_text(offset)
    }

    fn map_in_text(&self, offset: usize) -> usize {
        let mut last_end = 0;
        for &(from, at, len) in &self.pieces {
            if offset < from {
                return last_end;
            }
            if offset <= from + len {
                return at + (offset - from);
            }
            last_end = at + len;
        }
        last_end
    }

    /// Whether this excerpt shows `offset` of `file`.
    fn covers(&self, file: FileId, offset: usize) -> bool {
        self.file == file
            && self
                .pieces
                .first()
                .zip(self.pieces.last())
                .is_some_and(|(a, b)| a.0 <= offset && offset <= b.0 + b.2)
    }
}

/// Snaps `offset` back to a character boundary of `text`.
fn floor(text: &str, mut offset: usize) -> usize {
    offset = offset.min(text.len());
    while !text.is_char_boundary(offset) {
        offset -= 1;
    }
    offset
}

/// The excerpts that show `spans` (file, span), grouped by file and nearby lines.
pub fn excerpts<'w>(
    file: &dyn Fn(FileId) -> &'w SourceFile,
    spans: &[(FileId, Range<usize>)],
) -> Vec<Excerpt> {
    let mut by_file: Vec<FileId> = spans.iter().map(|(f, _)| *f).collect();
    by_file.sort();
    by_file.dedup();
    let mut out = Vec::new();
    for f in by_file {
        let source = file(f);
        let index = source.line_index();
        let text = &source.text;
        let mut lines: Vec<(u32, Range<usize>)> = Vec::new();
        for (_, s) in spans.iter().filter(|(g, _)| *g == f) {
            let (a, b) = (index.line_col(s.start).line, index.line_col(s.end).line);
            lines.push((a, s.clone()));
            if b != a {
                lines.push((b, s.clone()));
            }
        }
        lines.sort_by_key(|(l, s)| (*l, s.start));
        let mut groups: Vec<Vec<(u32, Range<usize>)>> = Vec::new();
        for item in lines {
            match groups.last_mut() {
                Some(g) if item.0 <= g.last().map(|x| x.0).unwrap_or(0) + GAP => g.push(item),
                _ => groups.push(vec![item]),
            }
        }
        for group in groups {
            let first = group[0].0;
            let last = group.last().map(|x| x.0).unwrap_or(first);
            let mut excerpt = Excerpt {
                file: f,
                first_line: first,
                text: String::new(),
                pieces: Vec::new(),
            };
            for line in first..=last {
                let start = index.offset_utf8(line, 0);
                let end = index.offset_utf8(line, u32::MAX);
                let spans_here: Vec<&Range<usize>> = group
                    .iter()
                    .filter(|(l, _)| *l == line)
                    .map(|(_, s)| s)
                    .collect();
                let mut keep: Vec<(usize, usize)> = if end - start <= LONG_LINE {
                    vec![(start, end)]
                } else {
                    let mut w = Vec::new();
                    for s in &spans_here {
                        let (a, b) = (s.start.clamp(start, end), s.end.clamp(start, end));
                        w.push((
                            a.saturating_sub(CONTEXT).max(start),
                            (a + CONTEXT * 2).min(end),
                        ));
                        w.push((b.saturating_sub(CONTEXT).max(start), (b + CONTEXT).min(end)));
                    }
                    if w.is_empty() {
                        w.push((start, start + LONG_LINE.min(end - start)));
                    }
                    w
                };
                keep.sort();
                let mut merged: Vec<(usize, usize)> = Vec::new();
                for (a, b) in keep {
                    let (a, b) = (floor(text, a), floor(text, b));
                    match merged.last_mut() {
                        Some(m) if a <= m.1 + ELLIPSIS.len() => m.1 = m.1.max(b),
                        _ => merged.push((a, b)),
                    }
                }
                let mut at_line = start;
                for (a, b) in merged {
                    if a > at_line {
                        excerpt.text.push_str(ELLIPSIS);
                    }
                    excerpt.pieces.push((a, excerpt.text.len(), b - a));
                    excerpt.text.push_str(&text[a..b]);
                    at_line = b;
                }
                if at_line < end {
                    excerpt.text.push_str(ELLIPSIS);
                }
                excerpt.text.push('\n');
            }
            out.push(excerpt);
        }
    }
    out
}

/// The excerpt (by index) that shows `offset` of `file`, and the offset in it.
pub fn locate(excerpts: &[Excerpt], file: FileId, offset: usize) -> Option<(usize, usize)> {
    excerpts
        .iter()
        .position(|e| e.covers(file, offset))
        .map(|i| (i, excerpts[i].map(offset)))
}

/// Makes characters that a terminal renderer takes for line ends but LSP
/// does not (vertical tab, form feed, U+0085, U+2028, U+2029) into spaces
/// of the same byte length, so that human and JSON line numbers agree.
pub fn plain_line_ends(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '\u{0B}' | '\u{0C}' | '\u{85}' | '\u{2028}' | '\u{2029}' => {
                out.extend(std::iter::repeat_n(' ', c.len_utf8()));
            }
            c => out.push(c),
        }
    }
    out
}
