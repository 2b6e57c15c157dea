//! The parser on arbitrary text: never panics or hangs, every error span
//! lies inside the text, and the quick pass takes a file exactly when the
//! recovering parser finds no error in it, building the same tree.
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
        let _ = index.line_col(e.span.start);
    }
    let max = guardband_syntax::MAX_NESTING;
    let full = guardband_syntax::parse_with_recovery_only(text, max);
    assert_eq!(
        guardband_syntax::quick_pass_accepts(text, max),
        full.errors.is_empty(),
        "quick pass and full parser disagree on whether this parses"
    );
    assert_eq!(parsed, full, "the two parsers built different trees");
});
