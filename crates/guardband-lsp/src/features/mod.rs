//! One module per LSP feature; each is a pure function of an [`crate::engine::Analysis`].

pub mod actions;
pub mod complete;
pub mod diagnostics;
pub mod formatting;
pub mod hover;
pub mod inlay;
pub mod locate;
pub mod navigate;
pub mod symbols;
pub mod tokens;
