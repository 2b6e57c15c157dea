//! The bounds every parse keeps within, in one place: how deep text may
//! nest, how long an operator chain may be, how many errors are listed.
//! Each keeps the recursive grammar and the evaluator inside their stack
//! whatever the input.

/// Deepest nesting of `(` and `{` the parser accepts by default; deeper
/// input is one error.
pub const MAX_NESTING: usize = 48;

/// The most nesting any caller may allow: the recursive parser and the
/// evaluator stay well inside a 256 MiB stack at this depth.
pub const HARD_MAX_NESTING: usize = 128;

/// Most syntax errors reported for one file; the rest are counted in a final error.
pub const MAX_ERRORS: usize = 50;

/// Most operands one chain of `+ -` or `* /` may have (and signs in a row);
/// longer chains are one error, so that no expression tree is deep enough
/// to exhaust the stack.
pub const MAX_CHAIN: usize = 64;
