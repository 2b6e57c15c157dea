//! The syntax of `.guard` files: a pure function from text to a tree plus errors.
//!
//! Lexing is done by logos, parsing by chumsky with error recovery. All
//! positions are byte spans; [`LineIndex`] converts them to lines and columns
//! at the edges (terminal, JSON, LSP).

pub mod ast;
mod fast;
pub mod format;
mod lexer;
mod line_index;
mod parser;

pub use ast::*;
pub use lexer::{Comment, NumberToken, Span, Token, lex};
pub use line_index::{LineCol, LineIndex};
pub use parser::{
    HARD_MAX_NESTING, MAX_ERRORS, MAX_NESTING, Parse, SyntaxError, parse, parse_with,
    parse_with_recovery_only, quick_pass_accepts,
};
