//! A recursive-descent parser for files without syntax errors: the common
//! case on every keystroke and in every CI run.
//!
//! It accepts exactly the grammar of the chumsky parser in
//! [`crate::parser`] and builds the same tree, but records nothing about
//! the alternatives it tried. At the first token it cannot take it gives up
//! (returns `None`) and the chumsky parser, with its error recovery and
//! messages, parses the file instead. So a clean file costs one quick pass,
//! and a broken one costs that pass (cut short at the error) plus the full
//! parse. Tests hold the two parsers together on every example, on
//! generated specs and on every prefix and mangling of them.

use crate::Span;
use crate::ast::*;
use crate::lexer::{NumberToken, Token};
use crate::parser::MAX_CHAIN;
use std::sync::Arc;

/// The items of a file that parses without error, or `None` when the file
/// needs the full parser (an error somewhere, or nesting beyond `max_nesting`).
pub(crate) fn parse_clean(
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
        Some(Member::Field(Field {
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
pub(crate) fn number_expr(source: &str, token: NumberToken, span: Span) -> Expr {
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
pub(crate) fn negate(inner: Expr, span: Span) -> Expr {
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

#[cfg(test)]
mod tests {
    use crate::parser::{MAX_NESTING, parse_with_recovery_only, quick_pass_accepts};
    use crate::{Parse, parse_with};
    use proptest::prelude::*;

    /// The quick pass takes a file exactly when the full parser finds no
    /// error in it, and then builds the same tree.
    fn agree(source: &str, max_nesting: usize) {
        let full: Parse = parse_with_recovery_only(source, max_nesting);
        let quick = quick_pass_accepts(source, max_nesting);
        assert_eq!(
            quick,
            full.errors.is_empty(),
            "quick pass {} but the full parser found {:?} in {source:?}",
            if quick { "took it" } else { "refused it" },
            full.errors
        );
        assert_eq!(
            parse_with(source, max_nesting),
            full,
            "trees differ for {source:?}"
        );
    }

    fn examples() -> Vec<String> {
        let top = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("../..");
        let mut out = Vec::new();
        for dir in [
            "examples",
            "examples/flawed",
            "examples/process",
            "tests/fixtures/diagnostics",
        ] {
            for e in std::fs::read_dir(top.join(dir)).expect("folder").flatten() {
                if e.path().extension().is_some_and(|x| x == "guard")
                    && let Ok(text) = std::fs::read_to_string(e.path())
                {
                    out.push(text);
                }
            }
        }
        assert!(out.len() >= 15, "examples missing");
        out
    }

    #[test]
    fn both_parsers_agree_on_every_example_and_fixture() {
        let mut clean = 0;
        for text in examples() {
            agree(&text, MAX_NESTING);
            clean += usize::from(quick_pass_accepts(&text, MAX_NESTING));
        }
        // The examples are mostly clean: the quick pass must be taking them.
        assert!(clean >= 6, "quick pass took only {clean} examples");
    }

    #[test]
    fn both_parsers_agree_on_prefixes_and_manglings_of_the_examples() {
        for text in examples() {
            let cuts: Vec<usize> = (0..text.len())
                .step_by(13)
                .filter(|i| text.is_char_boundary(*i))
                .collect();
            for i in cuts {
                agree(&text[..i], MAX_NESTING);
                // The same file with one token's worth of text removed.
                let rest = text[i..].char_indices().nth(3).map(|(j, _)| i + j);
                if let Some(j) = rest {
                    agree(&format!("{}{}", &text[..i], &text[j..]), MAX_NESTING);
                }
            }
        }
    }

    #[test]
    fn nesting_at_and_past_the_limit() {
        for depth in [1, 2, 3, 4] {
            let src = format!("r x {{ a = {}1{} }}", "(".repeat(depth), ")".repeat(depth));
            agree(&src, 3);
            let src = format!("r x {}{}", "p q { ".repeat(depth), "}".repeat(depth));
            agree(&src, 3);
        }
    }

    #[test]
    fn the_quirks_of_the_grammar() {
        for src in [
            "r x { a = 1 A +10 % -20 % }",
            "r x { a = c + 10 % - 20 % }",
            "r x { a = 1 A +10 % }",
            "r x { a = 1 A +10 % - 20 % }",
            "r x { a = - - -2 mA }",
            "r x { a = -(b) }",
            "r x { a = ± 5 % }",
            "r x { a = 1 ± ± 2 }",
            "r x { a = f() b = g(1,) c = h(1, 2) }",
            "r x { a = f(,) }",
            "r x { a = p.q(1) }",
            "r x { a = p. }",
            "r x { a = 1 .. }",
            "r x { a = 1 .. 2 .. 3 }",
            "r x { a == 1 }",
            "r x { expect current <= 400 mA force vout = 1.5 V }",
            "r x { a b c = 1 }",
            "use \"a.guard\" use b",
            "use \"a.guard\"\nr x { }",
            "r { } x",
            "r x { a = \"s\" b = true c = false }",
            "r x { a = 1 @ 2 }",
            "",
            "}",
        ] {
            agree(src, MAX_NESTING);
        }
        let long = |n: usize, op: &str| format!("r x {{ a = {} }}", vec!["1"; n].join(op));
        for n in [63, 64, 65, 66] {
            agree(&long(n, " + "), MAX_NESTING);
            agree(&long(n, " * "), MAX_NESTING);
            agree(&format!("r x {{ a = {}1 }}", "-".repeat(n)), MAX_NESTING);
        }
    }

    /// Snippets that are each a token or two of the language, some of them
    /// touching, so that random strings of them reach every rule.
    fn soup() -> impl Strategy<Value = String> {
        let words = vec![
            "regulator ",
            "r ",
            "x ",
            "pin ",
            "{ ",
            "} ",
            "( ",
            ") ",
            "= ",
            "<= ",
            ">= ",
            "< ",
            "> ",
            "1 ",
            "2 mA ",
            "3.5 V ",
            "- ",
            "-",
            "+",
            "+ ",
            "* ",
            "/ ",
            "± ",
            ".. ",
            ", ",
            ".",
            "\"s\" ",
            "true ",
            "false ",
            "use ",
            "+10 % ",
            "-20 % ",
            "min",
            "\n",
            "@ ",
            "// c\n",
            "== ",
        ];
        proptest::collection::vec(prop::sample::select(words), 0..40)
            .prop_map(|parts| parts.concat())
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(2000))]

        #[test]
        fn both_parsers_agree_on_token_soup(body in soup()) {
            agree(&body, MAX_NESTING);
            agree(&format!("regulator r {{ a = {body} }}"), 4);
            agree(&format!("regulator r {{ {body} }}"), MAX_NESTING);
        }
    }
}
