//! Byte offsets to lines and columns (UTF-8, UTF-16 and characters) and back.

/// A position: 0-based line, and the column counted three ways.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LineCol {
    /// 0-based line number.
    pub line: u32,
    /// Column in bytes from the start of the line.
    pub utf8: u32,
    /// Column in UTF-16 code units (what LSP counts by default).
    pub utf16: u32,
    /// Column in Unicode scalar values (what the JSON output counts).
    pub chars: u32,
}

/// Bytes between the checkpoints of cumulative character counts.
const CHUNK: usize = 64;

/// Line starts of one text, for converting positions at the edges of the tool.
///
/// Lines end at `\n`, `\r\n` or a lone `\r`, as LSP counts them; a line end
/// is never a column a user can point at. Offsets past the end are clamped,
/// and an offset inside a multi-byte character snaps back to its start.
///
/// Every query costs at most a binary search and a scan of [`CHUNK`] bytes,
/// however long the line: cumulative UTF-16 and character counts are kept
/// every [`CHUNK`] bytes (none for ASCII text, where all three counts agree).
#[derive(Debug, Clone)]
pub struct LineIndex {
    text: String,
    /// Where each line starts.
    line_starts: Vec<usize>,
    /// For non-ASCII text: UTF-16 units and characters that start before
    /// byte `i * CHUNK`.
    counts: Option<Vec<(u32, u32)>>,
}

impl LineIndex {
    /// Indexes `text`. Linear in its length.
    pub fn new(text: &str) -> LineIndex {
        let bytes = text.as_bytes();
        let mut line_starts = Vec::with_capacity(text.len() / 24 + 1);
        line_starts.push(0);
        // A byte scan: `\r` and `\n` never occur inside a multi-byte character.
        for (i, b) in bytes.iter().enumerate() {
            match b {
                b'\n' => line_starts.push(i + 1),
                b'\r' if bytes.get(i + 1) != Some(&b'\n') => line_starts.push(i + 1),
                _ => {}
            }
        }
        let counts = (!text.is_ascii()).then(|| {
            let mut counts = Vec::with_capacity(text.len() / CHUNK + 2);
            let (mut units, mut chars) = (0u32, 0u32);
            let mut next = 0;
            for (i, c) in text.char_indices() {
                while next * CHUNK <= i {
                    counts.push((units, chars));
                    next += 1;
                }
                units += c.len_utf16() as u32;
                chars += 1;
            }
            while next * CHUNK <= text.len() {
                counts.push((units, chars));
                next += 1;
            }
            counts
        });
        LineIndex {
            text: text.to_string(),
            line_starts,
            counts,
        }
    }

    /// Number of lines (a text without a line end has one).
    pub fn line_count(&self) -> usize {
        self.line_starts.len()
    }

    /// UTF-16 units and characters before byte `offset` (a character boundary).
    fn counted(&self, offset: usize) -> (u32, u32) {
        let Some(counts) = &self.counts else {
            return (offset as u32, offset as u32);
        };
        let chunk = offset / CHUNK;
        let (mut units, mut chars) = counts[chunk];
        // Characters that start inside this chunk and before `offset`.
        let mut from = chunk * CHUNK;
        while !self.text.is_char_boundary(from) {
            from += 1;
        }
        if from < offset {
            for c in self.text[from..offset].chars() {
                units += c.len_utf16() as u32;
                chars += 1;
            }
        }
        (units, chars)
    }

    /// The position of a byte offset; never panics.
    pub fn line_col(&self, offset: usize) -> LineCol {
        let mut offset = offset.min(self.text.len());
        while !self.text.is_char_boundary(offset) {
            offset -= 1;
        }
        let line = self.line_starts.partition_point(|&s| s <= offset) - 1;
        let start = self.line_starts[line];
        // Between a `\r` and its `\n`: the line end, at the line's last column.
        if offset > start
            && self.text.as_bytes()[offset - 1] == b'\r'
            && self.text.as_bytes().get(offset) == Some(&b'\n')
        {
            offset -= 1;
        }
        let (u0, c0) = self.counted(start);
        let (u1, c1) = self.counted(offset);
        LineCol {
            line: line as u32,
            utf8: (offset - start) as u32,
            utf16: u1 - u0,
            chars: c1 - c0,
        }
    }

    /// The byte offset of a 0-based line and UTF-8 (byte) column, clamped like
    /// [`LineIndex::offset_utf16`]; a column inside a character snaps back to its start.
    pub fn offset_utf8(&self, line: u32, col: u32) -> usize {
        let Some((start, line_text)) = self.line(line) else {
            return self.text.len();
        };
        let mut offset = start + (col as usize).min(line_text.len());
        while !self.text.is_char_boundary(offset) {
            offset -= 1;
        }
        offset
    }

    /// Where a 0-based line starts and its text without the line end.
    fn line(&self, line: u32) -> Option<(usize, &str)> {
        let start = *self.line_starts.get(line as usize)?;
        let end = self
            .line_starts
            .get(line as usize + 1)
            .copied()
            .unwrap_or(self.text.len());
        let text = &self.text[start..end];
        let text = text
            .strip_suffix("\r\n")
            .or_else(|| text.strip_suffix('\n'))
            .or_else(|| text.strip_suffix('\r'))
            .unwrap_or(text);
        Some((start, text))
    }

    /// The text this index was built from.
    pub fn text(&self) -> &str {
        &self.text
    }

    /// The byte offset of a 0-based line and UTF-16 column; clamps past-the-end
    /// lines to the end of the text and past-the-end columns to the line end.
    pub fn offset_utf16(&self, line: u32, col: u32) -> usize {
        let Some((start, line_text)) = self.line(line) else {
            return self.text.len();
        };
        let end = start + line_text.len();
        let (base, _) = self.counted(start);
        let target = base.saturating_add(col);
        // The last checkpoint at or before the column, then a short scan.
        let mut from = start;
        if let Some(counts) = &self.counts {
            let first = start / CHUNK + 1;
            let last = end / CHUNK;
            if first <= last {
                let k = counts[first..=last].partition_point(|(u, _)| *u <= target);
                if k > 0 {
                    from = (first + k - 1) * CHUNK;
                    while !self.text.is_char_boundary(from) {
                        from += 1;
                    }
                    from = from.clamp(start, end);
                }
            }
        } else {
            return (start + col as usize).min(end);
        }
        let (mut units, _) = self.counted(from);
        for (i, c) in self.text[from..end].char_indices() {
            if units >= target {
                return from + i;
            }
            units += c.len_utf16() as u32;
        }
        end
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counts_columns_three_ways() {
        let idx = LineIndex::new("a = 2 µF\nb = 1 Ω 𝄞x");
        let p = idx.line_col(9 + 10); // after "b = 1 Ω " on line 1
        assert_eq!(p.line, 1);
        assert_eq!(p.utf8, 9);
        assert_eq!(p.chars, 8);
        assert_eq!(p.utf16, 8);
        let q = idx.line_col(idx.text.len()); // end, after 𝄞 and x
        assert_eq!(q.chars, 10);
        assert_eq!(q.utf16, 11);
    }

    #[test]
    fn crlf_and_clamping() {
        let idx = LineIndex::new("ab\r\ncd");
        assert_eq!(
            idx.line_col(2),
            LineCol {
                line: 0,
                utf8: 2,
                utf16: 2,
                chars: 2
            }
        );
        assert_eq!(idx.line_col(4).line, 1);
        assert_eq!(idx.line_col(999).line, 1);
        assert_eq!(idx.offset_utf16(0, 50), 2);
        assert_eq!(idx.offset_utf16(9, 0), 6);
        assert_eq!(idx.offset_utf16(1, 1), 5);
        assert_eq!(idx.offset_utf8(0, 50), 2);
        assert_eq!(idx.offset_utf8(9, 0), 6);
        let multi = LineIndex::new("µx");
        assert_eq!(multi.offset_utf8(0, 1), 0, "inside µ snaps back");
        assert_eq!(multi.offset_utf8(0, 2), 2);
    }

    #[test]
    fn a_lone_carriage_return_ends_a_line() {
        let idx = LineIndex::new("a\rb\r\nc\nd");
        assert_eq!(idx.line_count(), 4);
        assert_eq!(idx.line_col(2).line, 1);
        assert_eq!(idx.line_col(5).line, 2);
        assert_eq!(idx.offset_utf8(1, 9), 3);
        assert_eq!(idx.offset_utf16(3, 0), 7);
    }

    #[test]
    fn long_non_ascii_lines_count_exactly() {
        let line: String = "µ𝄞a".repeat(5000);
        let idx = LineIndex::new(&line);
        let p = idx.line_col(line.len());
        assert_eq!(p.chars, 15_000);
        assert_eq!(p.utf16, 20_000);
        assert_eq!(idx.offset_utf16(0, 20_000), line.len());
        // µ is 2 bytes and 1 unit, 𝄞 4 bytes and 2 units, a 1 and 1: 4 units end at byte 7.
        assert_eq!(idx.offset_utf16(0, 4), 7);
    }

    #[test]
    fn snaps_inside_multibyte() {
        let idx = LineIndex::new("µx");
        assert_eq!(idx.line_col(1).utf8, 0);
    }

    mod properties {
        use super::super::LineIndex;
        use proptest::prelude::*;

        /// Text of arbitrary characters with `\n`, `\r\n` and lone `\r` line ends.
        fn text() -> impl Strategy<Value = String> {
            proptest::collection::vec(
                prop_oneof![
                    4 => any::<char>().prop_filter("no line-end characters", |c| *c != '\r' && *c != '\n'),
                    1 => Just('\n'),
                    1 => Just('\r'),
                    1 => Just('µ'),
                    1 => Just('𝄞'),
                ],
                0..400,
            )
            .prop_flat_map(|chars| {
                let n = chars.len();
                (Just(chars), proptest::collection::vec(any::<bool>(), n))
            })
            .prop_map(|(chars, crlf)| {
                chars
                    .into_iter()
                    .zip(crlf)
                    .map(|(c, cr)| if c == '\n' && cr { "\r\n".to_string() } else { c.to_string() })
                    .collect()
            })
        }

        proptest! {
            #![proptest_config(ProptestConfig::with_cases(256))]

            #[test]
            fn offsets_round_trip_through_utf8_and_utf16_positions(text in text()) {
                let index = LineIndex::new(&text);
                for (offset, _) in text.char_indices().chain(std::iter::once((text.len(), ' '))) {
                    if text[..offset].ends_with('\r') && text[offset..].starts_with('\n') {
                        continue; // between `\r` and `\n`: not a position a user can point at
                    }
                    let p = index.line_col(offset);
                    prop_assert_eq!(index.offset_utf16(p.line, p.utf16), offset);
                    prop_assert_eq!(index.offset_utf8(p.line, p.utf8), offset);
                    let line_start = text[..offset].rfind(['\n', '\r']).map(|i| i + 1).unwrap_or(0);
                    prop_assert_eq!(p.chars as usize, text[line_start..offset].chars().count());
                    let units: usize = text[line_start..offset].chars().map(char::len_utf16).sum();
                    prop_assert_eq!(p.utf16 as usize, units);
                }
            }
        }
    }
}
