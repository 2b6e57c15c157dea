//! The syntax tree of a `.guard` file. Every node carries its byte span.
//!
//! The tree is deliberately generic (items and members are keyword, optional
//! name, then a value or a block) so that the parser can recover anywhere; the
//! model gives the keywords their meaning.

use crate::Span;

/// A parsed file: its items and its comments.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct ParsedFile {
    pub items: Vec<Item>,
    pub comments: Vec<crate::Comment>,
}

/// A top-level item.
#[derive(Debug, Clone, PartialEq)]
pub enum Item {
    /// `use "path.guard"`
    Use(UseItem),
    /// `regulator NAME { ... }`, `process NAME { ... }` (or an unknown keyword).
    Block(Block),
    /// Tokens that form no item; already reported.
    Error(Span),
}

/// An import of another file's items.
#[derive(Debug, Clone, PartialEq)]
pub struct UseItem {
    /// The path as written, without quotes.
    pub path: String,
    pub path_span: Span,
    pub span: Span,
}

/// A word with its span.
#[derive(Debug, Clone, PartialEq)]
pub struct Ident {
    /// Inline for names up to 24 bytes: no allocation per identifier.
    pub text: compact_str::CompactString,
    pub span: Span,
}

/// `keyword [name] { members }`
#[derive(Debug, Clone, PartialEq)]
pub struct Block {
    pub keyword: Ident,
    pub name: Option<Ident>,
    pub members: Vec<Member>,
    pub span: Span,
}

/// A member of a block.
#[derive(Debug, Clone, PartialEq)]
pub enum Member {
    Field(Statement),
    Block(Block),
    /// Tokens that form no member; already reported.
    Error(Span),
}

/// The relation between a field's key and its value.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Relation {
    /// `=`: the field is set to the value.
    Assign,
    /// `<=`
    AtMost,
    /// `>=`
    AtLeast,
    /// `<`
    Below,
    /// `>`
    Above,
}

impl Relation {
    /// The operator as written.
    pub fn symbol(self) -> &'static str {
        match self {
            Relation::Assign => "=",
            Relation::AtMost => "<=",
            Relation::AtLeast => ">=",
            Relation::Below => "<",
            Relation::Above => ">",
        }
    }
}

/// A field as written, `keyword [name] (= | <= | >= | < | >) value`, e.g.
/// `load = 0 mA .. 150 mA`, `force vout = 1.5 V`, `expect current <= 400 mA`.
/// (The model's checked field is `guardband_model::Field`.)
#[derive(Debug, Clone, PartialEq)]
pub struct Statement {
    pub keyword: Ident,
    pub name: Option<Ident>,
    pub relation: Relation,
    /// Shared with the model, which evaluates it without copying it.
    pub value: std::sync::Arc<Expr>,
    pub span: Span,
}

impl Statement {
    /// The key under which this field is looked up: its name if it has one, else its keyword.
    pub fn key(&self) -> &Ident {
        self.name.as_ref().unwrap_or(&self.keyword)
    }
}

impl Block {
    /// The key under which this block is looked up: its name if it has one, else its keyword.
    pub fn key(&self) -> &Ident {
        self.name.as_ref().unwrap_or(&self.keyword)
    }
}

/// An expression with its span.
#[derive(Debug, Clone, PartialEq)]
pub struct Expr {
    pub kind: ExprKind,
    pub span: Span,
}

/// Binary arithmetic operators.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum BinaryOp {
    Add,
    Sub,
    Mul,
    Div,
}

/// The shapes an expression can take.
#[derive(Debug, Clone, PartialEq)]
pub enum ExprKind {
    /// `2.2 uF`, `5000`, `-20 °C` (a minus directly before a literal is folded in).
    Number {
        value: f64,
        unit: Option<Ident>,
    },
    Bool(bool),
    /// `sensed.threshold`, `vout.capacitance.max`, `replica`
    Path(Vec<Ident>),
    Neg(Box<Expr>),
    Binary(BinaryOp, Box<Expr>, Box<Expr>),
    /// `lo .. hi`
    Range(Box<Expr>, Box<Expr>),
    /// `base ± tol`, `base +up -down`, or a bare `± tol` (no base), with an
    /// optional `at K sigma` saying how many standard deviations the stated
    /// extremes are.
    Tolerance {
        base: Option<Box<Expr>>,
        plus: Box<Expr>,
        minus: Box<Expr>,
        symmetric: bool,
        sigma: Option<Box<Expr>>,
    },
    /// `min(a, b)`
    Call(Ident, Vec<Expr>),
    Paren(Box<Expr>),
    /// A quoted string (only meaningful in a few fields).
    Str(String),
    /// Something that failed to parse; already reported.
    Error,
}
