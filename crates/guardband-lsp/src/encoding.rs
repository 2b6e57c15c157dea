//! LSP positions: the negotiated column encoding, and conversions between
//! byte offsets and positions in both directions.

use guardband_syntax::{LineIndex, Span};
use tower_lsp_server::ls_types::{Position, PositionEncodingKind, Range};

/// How columns are counted in this session.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Encoding {
    /// Bytes of UTF-8, when the client offers it.
    Utf8,
    /// UTF-16 code units: the protocol's default.
    #[default]
    Utf16,
}

impl Encoding {
    /// Picks UTF-8 when the client lists it, else UTF-16.
    pub fn negotiate(offered: Option<&[PositionEncodingKind]>) -> Encoding {
        match offered {
            Some(kinds) if kinds.contains(&PositionEncodingKind::UTF8) => Encoding::Utf8,
            _ => Encoding::Utf16,
        }
    }

    /// The kind to announce in the server's capabilities.
    pub fn kind(self) -> PositionEncodingKind {
        match self {
            Encoding::Utf8 => PositionEncodingKind::UTF8,
            Encoding::Utf16 => PositionEncodingKind::UTF16,
        }
    }

    /// The position of a byte offset.
    pub fn position(self, index: &LineIndex, offset: usize) -> Position {
        let lc = index.line_col(offset);
        let col = match self {
            Encoding::Utf8 => lc.utf8,
            Encoding::Utf16 => lc.utf16,
        };
        Position::new(lc.line, col)
    }

    /// The range of a byte span.
    pub fn range(self, index: &LineIndex, span: &Span) -> Range {
        Range::new(
            self.position(index, span.start),
            self.position(index, span.end),
        )
    }

    /// The byte offset of a position, clamped into the text.
    pub fn offset(self, index: &LineIndex, position: Position) -> usize {
        match self {
            Encoding::Utf8 => index.offset_utf8(position.line, position.character),
            Encoding::Utf16 => index.offset_utf16(position.line, position.character),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn round_trips_non_ascii_columns() {
        let text = "a = 4.7 µF ± 10 % // Ω ° 𝄞 end\nb";
        let index = LineIndex::new(text);
        let end = text.find("end").expect("end");
        let p16 = Encoding::Utf16.position(&index, end);
        let p8 = Encoding::Utf8.position(&index, end);
        // µ ± Ω ° are one UTF-16 unit and two bytes each; 𝄞 is two units and four bytes.
        assert_eq!(p16.character, end as u32 - 4 - 2);
        assert_eq!(p8.character, end as u32);
        assert_eq!(Encoding::Utf16.offset(&index, p16), end);
        assert_eq!(Encoding::Utf8.offset(&index, p8), end);
    }

    #[test]
    fn negotiation_prefers_utf8_only_when_offered() {
        let both = [PositionEncodingKind::UTF16, PositionEncodingKind::UTF8];
        assert_eq!(Encoding::negotiate(Some(&both)), Encoding::Utf8);
        assert_eq!(
            Encoding::negotiate(Some(&[PositionEncodingKind::UTF32])),
            Encoding::Utf16
        );
        assert_eq!(Encoding::negotiate(None), Encoding::Utf16);
    }
}
