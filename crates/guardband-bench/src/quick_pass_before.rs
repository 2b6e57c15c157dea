//! The hand-written recursive-descent quick pass that the syntax crate used
//! before its one chumsky grammar took over, kept here only so that the
//! benchmark can print the parse speed before and after in one run. It is
//! not used by guardband.
//!
//! (Its original notes follow.) A recursive-descent parser for files
//! without syntax errors: the common case on every keystroke and in every
//! CI run.
//!
//! It accepts exactly the grammar of the chumsky parser in
//! [`crate::parser`] and builds the same tree, but records nothing about
//! the alternatives it tried. At the first token it cannot take it gives up
//! (returns `None`) and the chumsky parser, with its error recovery and
//! messages, parses the file instead. So a clean file costs one quick pass,
//! and a broken one costs that pass (cut short at the error) plus the full
//! parse. Tests hold the two parsers together on every example, on
//! generated specs and on every prefix and mangling of them.

#![allow(missing_docs)]

use guardband_syntax::*;
use std::sync::Arc;

/// The items of a file that parses without error, or `None` when the file
/// needs the full parser (an error somewhere, or nesting beyond `max_nesting`).
pub fn parse_clean(
    source: &str,
    tokens: &[(Token<'_>, Span)],
    max_nesting: usize,
) -> Option<Vec<Item>> {
    let mut p = Fast {
        source,
        tokens,
        at: 0,
        depth: 0,
        max_nesting,
    };
    let mut items = Vec::new();
    while p.at < tokens.len() {
        items.push(p.item()?);
    }
    Some(items)
}

/// The one signal of this parser: "not here; let the full parser say why".
type Fallback<T> = Option<T>;

struct Fast<'t, 's> {
    source: &'s str,
    tokens: &'t [(Token<'s>, Span)],
    at: usize,
    /// Open `(` and `{` around the current token.
    depth: usize,
    max_nesting: usize,
}

impl<'s> Fast<'_, 's> {
    fn peek(&self) -> Option<Token<'s>> {
        self.tokens.get(self.at).map(|(t, _)| *t)
    }

    fn peek_at(&self, ahead: usize) -> Option<&(Token<'s>, Span)> {
        self.tokens.get(self.at + ahead)
    }

    /// The span of the next token, if there is one.
    fn span(&self) -> Fallback<Span> {
        self.tokens.get(self.at).map(|(_, s)| s.clone())
    }

    /// The end of the last token taken.
    fn end(&self) -> usize {
        self.tokens[self.at - 1].1.end
    }

    fn eat(&mut self, token: Token<'_>) -> bool {
        if self.peek() == Some(token) {
            self.at += 1;
            true
        } else {
            false
        }
    }

    fn expect(&mut self, token: Token<'_>) -> Fallback<()> {
        self.eat(token).then_some(())
    }

    fn open(&mut self, token: Token<'_>) -> Fallback<()> {
        self.expect(token)?;
        self.depth += 1;
        (self.depth <= self.max_nesting).then_some(())
    }

    fn close(&mut self, token: Token<'_>) -> Fallback<()> {
        self.expect(token)?;
        self.depth -= 1;
        Some(())
    }

    fn ident(&mut self) -> Fallback<Ident> {
        match self.tokens.get(self.at) {
            Some((Token::Ident(text), span)) => {
                let ident = Ident {
                    text: (*text).into(),
                    span: span.clone(),
                };
                self.at += 1;
                Some(ident)
            }
            _ => None,
        }
    }

    fn optional_ident(&mut self) -> Option<Ident> {
        match self.peek() {
            Some(Token::Ident(_)) => self.ident(),
            _ => None,
        }
    }

    fn item(&mut self) -> Fallback<Item> {
        if self.eat(Token::Use) {
            let start = self.tokens[self.at - 1].1.start;
            let Some((Token::Str(s), path_span)) = self.tokens.get(self.at).cloned() else {
                return None;
            };
            self.at += 1;
            return Some(Item::Use(UseItem {
                path: s.trim_matches('"').to_string(),
                path_span,
                span: start..self.end(),
            }));
        }
        let keyword = self.ident()?;
        let name = self.optional_ident();
        let members = self.body()?;
        let span = keyword.span.start..self.end();
        Some(Item::Block(Block {
            keyword,
            name,
            members,
            span,
        }))
    }

    /// `{ member* }`
    fn body(&mut self) -> Fallback<Vec<Member>> {
        self.open(Token::LBrace)?;
        let mut members = Vec::new();
        while !self.eat(Token::RBrace) {
            members.push(self.member()?);
        }
        self.depth -= 1;
        Some(members)
    }

    fn member(&mut self) -> Fallback<Member> {
        let keyword = self.ident()?;
        let name = self.optional_ident();
        let relation = match self.peek()? {
            Token::Assign => Relation::Assign,
            Token::Le => Relation::AtMost,
            Token::Ge => Relation::AtLeast,
            Token::Lt => Relation::Below,
            Token::Gt => Relation::Above,
            Token::LBrace => {
                let members = self.body()?;
                let span = keyword.span.start..self.end();
                return Some(Member::Block(Block {
                    keyword,
                    name,
                    members,
                    span,
                }));
            }
            _ => return None,
        };
        self.at += 1;
        let value = self.expr()?;
        let span = keyword.span.start..value.span.end;
        Some(Member::Field(Statement {
            keyword,
            name,
            relation,
            value: Arc::new(value),
            span,
        }))
    }

    /// `sum [.. sum]`
    fn expr(&mut self) -> Fallback<Expr> {
        let lo = self.sum()?;
        if !self.eat(Token::DotDot) {
            return Some(lo);
        }
        let hi = self.sum()?;
        let span = lo.span.start..hi.span.end;
        Some(Expr {
            kind: ExprKind::Range(Box::new(lo), Box::new(hi)),
            span,
        })
    }

    fn sum(&mut self) -> Fallback<Expr> {
        self.chain(Self::product, |t| match t {
            Token::Plus => Some(BinaryOp::Add),
            Token::Minus => Some(BinaryOp::Sub),
            _ => None,
        })
    }

    fn product(&mut self) -> Fallback<Expr> {
        self.chain(Self::toleranced, |t| match t {
            Token::Star => Some(BinaryOp::Mul),
            Token::Slash => Some(BinaryOp::Div),
            _ => None,
        })
    }

    /// `operand (op operand)*`, left-nested, at most [`MAX_CHAIN`] operands.
    fn chain(
        &mut self,
        operand: fn(&mut Self) -> Fallback<Expr>,
        op: fn(Token<'_>) -> Option<BinaryOp>,
    ) -> Fallback<Expr> {
        let mut tree = operand(self)?;
        let mut operands = 1;
        while let Some(op) = self.peek().and_then(op) {
            self.at += 1;
            let next = operand(self)?;
            operands += 1;
            if operands > MAX_CHAIN {
                return None;
            }
            let span = tree.span.start..next.span.end;
            tree = Expr {
                kind: ExprKind::Binary(op, Box::new(tree), Box::new(next)),
                span,
            };
        }
        Some(tree)
    }

    /// `unary [± unary | +N -N] [at N sigma]`: a value with its tolerance.
    fn toleranced(&mut self) -> Fallback<Expr> {
        let base = self.unary()?;
        let (plus, minus, symmetric) = if self.eat(Token::PlusMinus) {
            let t = self.unary()?;
            (t.clone(), t, true)
        } else if let Some((plus, minus)) = self.asymmetric() {
            (plus, minus, false)
        } else {
            // A bare tolerance (`± 5 %`) may carry its own `at N sigma`.
            return match base.kind {
                ExprKind::Tolerance {
                    base: None,
                    plus,
                    minus,
                    symmetric,
                    sigma: None,
                } if self.at_sigma_ahead() => {
                    let sigma = self.at_sigma()?;
                    let span = base.span.start..self.end();
                    Some(Expr {
                        kind: ExprKind::Tolerance {
                            base: None,
                            plus,
                            minus,
                            symmetric,
                            sigma: Some(Box::new(sigma)),
                        },
                        span,
                    })
                }
                kind => {
                    if self.at_sigma_ahead() {
                        return None;
                    }
                    Some(Expr {
                        kind,
                        span: base.span,
                    })
                }
            };
        };
        let sigma = if self.at_sigma_ahead() {
            Some(Box::new(self.at_sigma()?))
        } else {
            None
        };
        let span = base.span.start..self.end();
        Some(Expr {
            kind: ExprKind::Tolerance {
                base: Some(Box::new(base)),
                plus: Box::new(plus),
                minus: Box::new(minus),
                symmetric,
                sigma,
            },
            span,
        })
    }

    /// Whether `at NUMBER` comes next.
    fn at_sigma_ahead(&self) -> bool {
        matches!(self.peek(), Some(Token::Ident("at")))
            && matches!(self.peek_at(1), Some((Token::Number(_), _)))
    }

    /// `at N sigma`: the number (its unit is checked by the model).
    fn at_sigma(&mut self) -> Fallback<Expr> {
        self.at += 1;
        let (Token::Number(n), span) = self.tokens.get(self.at)?.clone() else {
            return None;
        };
        self.at += 1;
        Some(number_expr(self.source, n, span))
    }

    /// `+10 % -20 %`, each sign touching its number; else nothing is taken.
    fn asymmetric(&mut self) -> Option<(Expr, Expr)> {
        let signed = |p: &Self, ahead: usize, sign: Token<'_>| -> Option<(NumberToken, Span)> {
            let (s, sign_span) = p.peek_at(ahead)?;
            let (Token::Number(n), n_span) = p.peek_at(ahead + 1)? else {
                return None;
            };
            (*s == sign && sign_span.end == n_span.start).then(|| (*n, n_span.clone()))
        };
        let (plus, plus_span) = signed(self, 0, Token::Plus)?;
        let (minus, minus_span) = signed(self, 2, Token::Minus)?;
        self.at += 4;
        Some((
            number_expr(self.source, plus, plus_span),
            number_expr(self.source, minus, minus_span),
        ))
    }

    /// `-* primary`, a minus before a literal folded into it.
    fn unary(&mut self) -> Fallback<Expr> {
        let first = self.at;
        while self.eat(Token::Minus) {}
        let minuses = self.at - first;
        if minuses > MAX_CHAIN {
            return None;
        }
        let mut inner = self.primary()?;
        for i in (first..first + minuses).rev() {
            let span = self.tokens[i].1.start..inner.span.end;
            inner = negate(inner, span);
        }
        Some(inner)
    }

    /// `± atom` (a bare tolerance) or an atom.
    fn primary(&mut self) -> Fallback<Expr> {
        if !self.eat(Token::PlusMinus) {
            return self.atom();
        }
        let start = self.tokens[self.at - 1].1.start;
        let tol = self.atom()?;
        let span = start..tol.span.end;
        Some(Expr {
            kind: ExprKind::Tolerance {
                base: None,
                plus: Box::new(tol.clone()),
                minus: Box::new(tol),
                symmetric: true,
                sigma: None,
            },
            span,
        })
    }

    fn atom(&mut self) -> Fallback<Expr> {
        let span = self.span()?;
        let kind = match self.peek()? {
            Token::Number(n) => {
                self.at += 1;
                return Some(number_expr(self.source, n, span));
            }
            Token::True => ExprKind::Bool(true),
            Token::False => ExprKind::Bool(false),
            Token::Str(s) => ExprKind::Str(s.trim_matches('"').to_string()),
            Token::LParen => {
                self.open(Token::LParen)?;
                let inner = self.expr()?;
                self.close(Token::RParen)?;
                return Some(Expr {
                    kind: ExprKind::Paren(Box::new(inner)),
                    span: span.start..self.end(),
                });
            }
            Token::Ident(_) => return self.path_or_call(),
            _ => return None,
        };
        self.at += 1;
        Some(Expr { kind, span })
    }

    /// `a.b.c` or `f(x, y)`.
    fn path_or_call(&mut self) -> Fallback<Expr> {
        let start = self.span()?.start;
        let mut path = vec![self.ident()?];
        while self.peek() == Some(Token::Dot) {
            self.at += 1;
            path.push(self.ident()?);
        }
        if self.peek() != Some(Token::LParen) {
            return Some(Expr {
                kind: ExprKind::Path(path),
                span: start..self.end(),
            });
        }
        if path.len() > 1 {
            return None;
        }
        self.open(Token::LParen)?;
        let mut args = Vec::new();
        while !self.eat(Token::RParen) {
            args.push(self.expr()?);
            if !self.eat(Token::Comma) {
                self.expect(Token::RParen)?;
                break;
            }
        }
        self.depth -= 1;
        let name = path.pop()?;
        Some(Expr {
            kind: ExprKind::Call(name, args),
            span: start..self.end(),
        })
    }
}

/// A number literal and its unit, as the full parser builds it.
fn number_expr(source: &str, token: NumberToken, span: Span) -> Expr {
    let text = &source[span.clone()];
    let value = text[..token.number_len].parse::<f64>().unwrap_or(f64::NAN);
    let unit = token.unit_start.map(|start| Ident {
        text: text[start..].into(),
        span: span.start + start..span.end,
    });
    Expr {
        kind: ExprKind::Number { value, unit },
        span,
    }
}

/// `-inner`: folded into a number literal, else a negation node.
fn negate(inner: Expr, span: Span) -> Expr {
    match inner.kind {
        ExprKind::Number { value, unit } => Expr {
            kind: ExprKind::Number {
                value: -value,
                unit,
            },
            span,
        },
        kind => Expr {
            kind: ExprKind::Neg(Box::new(Expr {
                kind,
                span: inner.span,
            })),
            span,
        },
    }
}
