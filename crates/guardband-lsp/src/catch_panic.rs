//! A service wrapper that turns a panic inside any handler into an
//! internal-error response (or, for a notification, a logged no-op), so one
//! bad request cannot end the session.

use futures::FutureExt;
use futures::future::BoxFuture;
use std::panic::AssertUnwindSafe;
use std::task::{Context, Poll};
use tower::Service;
use tower_lsp_server::jsonrpc::{Error, Request, Response};

/// Wraps a JSON-RPC service; see the module documentation.
pub struct CatchPanic<S>(pub S);

impl<S> Service<Request> for CatchPanic<S>
where
    S: Service<Request, Response = Option<Response>>,
    S::Future: Send + 'static,
    S::Error: Send + 'static,
{
    type Response = Option<Response>;
    type Error = S::Error;
    type Future = BoxFuture<'static, Result<Option<Response>, S::Error>>;

    fn poll_ready(&mut self, cx: &mut Context<'_>) -> Poll<Result<(), S::Error>> {
        self.0.poll_ready(cx)
    }

    fn call(&mut self, request: Request) -> Self::Future {
        let id = request.id().cloned();
        let method = request.method().to_string();
        let call = std::panic::catch_unwind(AssertUnwindSafe(|| self.0.call(request)));
        Box::pin(async move {
            let outcome = match call {
                Ok(future) => AssertUnwindSafe(future).catch_unwind().await,
                Err(panic) => Err(panic),
            };
            match outcome {
                Ok(result) => result,
                Err(_) => {
                    eprintln!(
                        "guardband lsp: internal error while handling `{method}`; the session goes on"
                    );
                    Ok(id.map(|id| Response::from_error(id, Error::internal_error())))
                }
            }
        })
    }
}
