//! Drives `guardband lsp` over stdio through edits of one generated
//! document, for profiling the server by hand:
//! `perf record -g target/release/examples/drive_server target/release/guardband 5000 200`
//! (binary, lines in the document, edits). Prints the median time from
//! each `didChange` to its diagnostics.

use guardband_bench::{generate, lsp_client, params, regulator};
use std::time::Instant;
use tower_lsp_server::ls_types::Uri;

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let bin = std::path::absolute(
        args.first()
            .expect("usage: drive_server GUARDBAND LINES EDITS"),
    )
    .expect("binary path");
    let lines: usize = args.get(1).and_then(|v| v.parse().ok()).unwrap_or(5_000);
    let edits: i64 = args.get(2).and_then(|v| v.parse().ok()).unwrap_or(100);
    let per_two: usize = (0..2).map(|i| regulator(&params(i)).lines().count()).sum();
    let dir = std::env::temp_dir().join(format!("guardband-drive-{}", std::process::id()));
    let g = generate(&dir, (2 * lines).div_ceil(per_two), 1).expect("generate");
    let path = &g.entries[0];
    let text = std::fs::read_to_string(path).expect("read");
    let uri = Uri::from_file_path(path).expect("uri").as_str().to_string();
    let root_uri = Uri::from_file_path(&g.root)
        .expect("uri")
        .as_str()
        .to_string();
    let mut command = std::process::Command::new(bin);
    command.arg("lsp").current_dir(&g.root);
    let mut server = lsp_client::Server::start(command, &root_uri).expect("start");
    server
        .notify(
            "textDocument/didOpen",
            serde_json::json!({ "textDocument": { "uri": uri, "languageId": "guard", "version": 1, "text": text } }),
        )
        .expect("open");
    server
        .wait(|m| lsp_client::published(m, &uri, 1))
        .expect("first diagnostics");
    let at = text.len() / 2;
    let load_at = at + text[at..].find("load         = 0 mA .. ").expect("a load") + 23;
    let line = text[..load_at].matches('\n').count();
    let column = load_at - text[..load_at].rfind('\n').map_or(0, |i| i + 1);
    let mut samples = Vec::new();
    for version in 2..2 + edits {
        let change = serde_json::json!({
            "textDocument": { "uri": uri, "version": version },
            "contentChanges": [{
                "range": { "start": { "line": line, "character": column }, "end": { "line": line, "character": column + 1 } },
                "text": if version % 2 == 0 { "9" } else { "8" },
            }],
        });
        let start = Instant::now();
        server
            .notify("textDocument/didChange", change)
            .expect("change");
        server
            .wait(|m| lsp_client::published(m, &uri, version))
            .expect("diagnostics");
        samples.push(start.elapsed());
    }
    server.stop();
    samples.sort();
    println!(
        "{} lines, {edits} edits: median {:.2} ms",
        text.lines().count(),
        samples[samples.len() / 2].as_secs_f64() * 1e3
    );
    let _ = std::fs::remove_dir_all(&dir);
}
