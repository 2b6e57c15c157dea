//! The parser on arbitrary text: never panics or hangs, and every error
//! span lies inside the text on a character boundary.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let parsed = guardband_syntax::parse(text);
    let index = guardband_syntax::LineIndex::new(text);
    for e in &parsed.errors {
        assert!(
            e.span.start <= e.span.end && e.span.end <= text.len(),
            "{e:?}"
        );
        assert!(text.is_char_boundary(e.span.start) && text.is_char_boundary(e.span.end));
        let _ = index.line_col(e.span.start);
    }
});
