//! The guardband language server: live diagnostics, worst-case hovers,
//! navigation, completion, quick fixes and formatting for `.guard` specs in
//! any LSP editor.
//!
//! The server is a thin layer: every analysis is the same
//! [`guardband_check::check_workspace`] that `guardband check` runs, on the
//! text of the editor's buffers, so the editor and the command line cannot
//! disagree. See `DEVELOPERS.md` for the threading model.

mod catch_panic;
pub mod documents;
pub mod encoding;
pub mod engine;
pub mod features;
mod server;
pub mod transport;

pub use server::{Backend, Settings};

use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use tower_lsp_server::{LspService, Server};

/// Serves LSP over standard input and output until `exit`. Returns the
/// process exit code on failure: 1 when `exit` came without `shutdown`
/// (as the protocol asks), 2 when the runtime could not start.
pub fn run_stdio() -> Result<(), u8> {
    let runtime = tokio::runtime::Builder::new_multi_thread()
        .worker_threads(2)
        .enable_all()
        .build()
        .map_err(|e| {
            eprintln!("guardband lsp: cannot start: {e}");
            2u8
        })?;
    let shutdown = Arc::new(AtomicBool::new(false));
    let flag = Arc::clone(&shutdown);
    runtime.block_on(async move {
        let mut builder = LspService::build(move |client| Backend::new(client, flag));
        if std::env::var_os("GUARDBAND_LSP_TEST_HOOKS").is_some() {
            // Only for the end-to-end tests: a request whose handler panics.
            builder = builder.custom_method("guardband/test/panic", Backend::test_panic);
        }
        let (service, socket) = builder.finish();
        let service = catch_panic::CatchPanic(service);
        // The client's bytes pass through the guard (see `transport`) on their way in.
        let (to_server, server_in) = tokio::io::duplex(1 << 16);
        let (server_out, from_server) = tokio::io::duplex(1 << 16);
        let (answers, output_done) = transport::spawn_output(from_server, tokio::io::stdout());
        let input = tokio::spawn(transport::forward_input(
            tokio::io::stdin(),
            to_server,
            answers,
        ));
        Server::new(server_in, server_out, socket)
            .serve(service)
            .await;
        // `exit` (or the end of input) ended the server: write what it said
        // last, and do not wait for a client that keeps its end open.
        let _ = output_done.await;
        input.abort();
    });
    // Reading stdin blocks a thread that would keep the runtime alive; do not wait for it.
    runtime.shutdown_background();
    if shutdown.load(Ordering::SeqCst) {
        Ok(())
    } else {
        Err(1)
    }
}
