//! The formatter: idempotent, and the formatted text parses cleanly to the
//! same items and comments.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let Some(once) = guardband_syntax::format::format(text) else {
        return;
    };
    let again = guardband_syntax::parse(&once);
    assert!(
        again.errors.is_empty(),
        "formatted text does not parse:\n{once}"
    );
    let twice = guardband_syntax::format::format(&once).expect("formats again");
    assert_eq!(once, twice, "not idempotent");
    let before = guardband_syntax::parse(text);
    assert_eq!(before.file.items.len(), again.file.items.len());
    let comments = |p: &guardband_syntax::Parse| -> Vec<String> {
        p.file
            .comments
            .iter()
            .map(|c| c.text.trim_end().to_string())
            .collect()
    };
    assert_eq!(comments(&before), comments(&again));
});
