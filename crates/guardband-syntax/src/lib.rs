//! The syntax of `.guard` files: a pure function from text to a tree plus errors.
//!
//! Lexing is done by logos, parsing by one chumsky grammar run two ways: a
//! quick pass with no error bookkeeping, and a recovering pass with rich errors. All
//! positions are byte spans; [`LineIndex`] converts them to lines and columns
//! at the edges (terminal, JSON, LSP).

pub mod ast;
pub mod format;
mod grammar;
mod lexer;
pub mod limits;
mod line_index;
mod parser;
mod prepass;

pub use ast::*;
pub use lexer::{Comment, NumberToken, Span, Token, lex};
pub use limits::{HARD_MAX_NESTING, MAX_CHAIN, MAX_ERRORS, MAX_NESTING};
pub use line_index::{LineCol, LineIndex};
pub use parser::{Parse, SyntaxError, parse, parse_with};
