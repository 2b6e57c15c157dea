//! The server's message handling: the framing guard on arbitrary bytes, and
//! incremental edits applied to the document store.
#![no_main]

use guardband_lsp::documents::Documents;
use guardband_lsp::encoding::Encoding;
use guardband_lsp::transport::{Frame, FrameReader};
use libfuzzer_sys::fuzz_target;
use tower_lsp_server::ls_types::{Position, Range, TextDocumentContentChangeEvent, Uri};

fuzz_target!(|data: &[u8]| {
    // Framing and JSON-RPC decoding never panic and always make progress.
    let runtime = tokio::runtime::Builder::new_current_thread()
        .build()
        .expect("runtime");
    runtime.block_on(async {
        let mut reader = FrameReader::new(data);
        let mut frames = 0;
        while let Ok(Some(frame)) = reader.next().await {
            frames += 1;
            assert!(frames <= data.len() + 1, "no progress");
            if let Frame::Bad { code, .. } = frame {
                assert!(code == -32700 || code == -32600);
            }
        }
    });
    // The same bytes as a script of edits: (line, column, line, column, text).
    let uri: Uri = "file:///fuzz/doc.guard".parse().expect("uri");
    let mut docs = Documents::default();
    docs.open(
        uri.clone(),
        "regulator r {\n    load = 0 mA .. 1 mA // µ 𝄞\n}\n".into(),
        0,
        &[],
    );
    for (version, chunk) in data.chunks(6).enumerate() {
        if chunk.len() < 6 {
            break;
        }
        let range = Range::new(
            Position::new(u32::from(chunk[0] % 6), u32::from(chunk[1] % 40)),
            Position::new(u32::from(chunk[2] % 6), u32::from(chunk[3] % 40)),
        );
        let text = String::from_utf8_lossy(&chunk[4..]).into_owned();
        let encoding = if chunk[5] & 1 == 0 {
            Encoding::Utf16
        } else {
            Encoding::Utf8
        };
        let change = TextDocumentContentChangeEvent {
            range: Some(range),
            range_length: None,
            text,
        };
        docs.change(&uri, version as i32 + 1, vec![change], encoding)
            .expect("an open document takes every edit");
    }
});
