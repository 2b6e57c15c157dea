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

/// Line starts of one text, for converting positions at the edges of the tool.
///
/// Lines end at `\n`; a `\r` before it belongs to the line end and is never
/// counted as a column a user can point at. Offsets past the end are clamped,
/// and an offset inside a multi-byte character snaps back to its start.
#[derive(Debug, Clone)]
pub struct LineIndex {
    text: String,
    line_starts: Vec<usize>,
}

impl LineIndex {
    /// Indexes `text`. Linear in its length.
    pub fn new(text: &str) -> LineIndex {
        let mut line_starts = Vec::with_capacity(text.len() / 24 + 1);
        line_starts.push(0);
        // A byte scan: `\n` never occurs inside a multi-byte character.
        line_starts.extend(
            text.bytes()
                .enumerate()
                .filter(|(_, b)| *b == b'\n')
                .map(|(i, _)| i + 1),
        );
        LineIndex {
            text: text.to_string(),
            line_starts,
        }
    }

    /// Number of lines (a text without a newline has one).
    pub fn line_count(&self) -> usize {
        self.line_starts.len()
    }

    /// The position of a byte offset; never panics.
    pub fn line_col(&self, offset: usize) -> LineCol {
        let mut offset = offset.min(self.text.len());
        while !self.text.is_char_boundary(offset) {
            offset -= 1;
        }
        let line = self.line_starts.partition_point(|&s| s <= offset) - 1;
        let start = self.line_starts[line];
        let mut upto = &self.text[start..offset];
        if upto.ends_with('\r') && self.text[offset..].starts_with('\n') {
            upto = &upto[..upto.len() - 1];
        }
        LineCol {
            line: line as u32,
            utf8: upto.len() as u32,
            utf16: upto.chars().map(char::len_utf16).sum::<usize>() as u32,
            chars: upto.chars().count() as u32,
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
            .map(|e| e - 1)
            .unwrap_or(self.text.len());
        Some((start, self.text[start..end].trim_end_matches('\r')))
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
        let mut units = 0u32;
        for (i, c) in line_text.char_indices() {
            if units >= col {
                return start + i;
            }
            units += c.len_utf16() as u32;
        }
        start + line_text.len()
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
    fn snaps_inside_multibyte() {
        let idx = LineIndex::new("µx");
        assert_eq!(idx.line_col(1).utf8, 0);
    }

    mod properties {
        use super::super::LineIndex;
        use proptest::prelude::*;

        /// Text of arbitrary characters with `\n` and `\r\n` line ends (a lone
        /// `\r` is not a line end and is left out).
        fn text() -> impl Strategy<Value = String> {
            proptest::collection::vec(
                prop_oneof![
                    4 => any::<char>().prop_filter("no line-end characters", |c| *c != '\r' && *c != '\n'),
                    1 => Just('\n'),
                    1 => Just('µ'),
                    1 => Just('𝄞'),
                ],
                0..200,
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
                    if text[..offset].ends_with('\r') {
                        continue; // between `\r` and `\n`: not a position a user can point at
                    }
                    let p = index.line_col(offset);
                    prop_assert_eq!(index.offset_utf16(p.line, p.utf16), offset);
                    prop_assert_eq!(index.offset_utf8(p.line, p.utf8), offset);
                    let line_start = text[..offset].rfind('\n').map(|i| i + 1).unwrap_or(0);
                    prop_assert_eq!(p.chars as usize, text[line_start..offset].chars().count());
                }
            }
        }
    }
}
