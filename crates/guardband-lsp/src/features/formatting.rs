//! Document formatting through the shared formatter of `guardband fmt`.

use crate::encoding::Encoding;
use guardband_syntax::LineIndex;
use tower_lsp_server::ls_types::{Range, TextEdit};

/// One edit replacing the whole text with its canonical layout; none when it
/// is already canonical, `None` when it has syntax errors (nothing is touched).
pub fn edits(text: &str, encoding: Encoding) -> Option<Vec<TextEdit>> {
    let formatted = guardband_syntax::format::format(text)?;
    if formatted == text {
        return Some(Vec::new());
    }
    let index = LineIndex::new(text);
    Some(vec![TextEdit {
        range: Range::new(
            encoding.position(&index, 0),
            encoding.position(&index, text.len()),
        ),
        new_text: formatted,
    }])
}
