//! The grammar of `.guard` files, written once with chumsky and run two
//! ways (see [`crate::parser`]): with [`EmptyErr`] and no recovery, the
//! quick path for files without errors, and with [`Rich`] errors and
//! recovery when that fails.
//!
//! Each rule is a function with its syntax on its doc line and a small
//! example test at the end of the file.

use crate::Span;
use crate::ast::*;
use crate::lexer::{NumberToken, Token};
use crate::limits::MAX_CHAIN;
use chumsky::error::LabelError;
use chumsky::input::ValueInput;
use chumsky::prelude::*;
use std::sync::Arc;

/// What the grammar needs of an error type: chumsky's own traits, and a
/// way to carry this grammar's own messages (dropped by the quick path).
pub trait Failure<'t, I: chumsky::input::Input<'t>>:
    chumsky::error::Error<'t, I> + LabelError<'t, I, &'static str> + Clone + 't
{
    /// An error with a message of the grammar's own.
    fn custom(span: I::Span, message: String) -> Self;
}

impl<'t, 's: 't, I> Failure<'t, I> for Rich<'t, Token<'s>, SimpleSpan>
where
    I: chumsky::input::Input<'t, Token = Token<'s>, Span = SimpleSpan>,
{
    fn custom(span: SimpleSpan, message: String) -> Self {
        Rich::custom(span, message)
    }
}

impl<'t, I: chumsky::input::Input<'t>> Failure<'t, I> for EmptyErr {
    fn custom(_: I::Span, _: String) -> Self {
        EmptyErr::default()
    }
}

type Ex<E> = extra::Err<E>;

fn range(span: SimpleSpan) -> Span {
    span.into_range()
}

/// A number literal and its unit, with their spans.
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

/// The source text of a span in backticks, shortened, for messages.
pub(crate) fn token_text(source: &str, span: SimpleSpan) -> String {
    let text = source.get(span.start..span.end).unwrap_or("");
    let text: String = text.chars().take(24).collect();
    if text.trim().is_empty() {
        "end of file".to_string()
    } else if text.chars().any(|c| c.is_control()) {
        format!("`{}`", text.escape_debug())
    } else {
        format!("`{text}`")
    }
}

/// Folds `first (op next)*` into a left-nested tree; a chain of more than
/// [`MAX_CHAIN`] operands is one error instead.
fn chain(first: Expr, rest: Vec<(BinaryOp, Expr)>) -> Result<Expr, (Span, String)> {
    if rest.is_empty() {
        return Ok(first);
    }
    if rest.len() >= MAX_CHAIN {
        let span = first.span.start
            ..rest
                .last()
                .map(|(_, x)| x.span.end)
                .unwrap_or(first.span.end);
        return Err((
            span,
            format!("more than {MAX_CHAIN} operands in one expression; split it into named fields"),
        ));
    }
    Ok(rest.into_iter().fold(first, |a, (op, b)| {
        let span = a.span.start..b.span.end;
        Expr {
            kind: ExprKind::Binary(op, Box::new(a), Box::new(b)),
            span,
        }
    }))
}

/// One punctuation token, matched by its kind alone.
macro_rules! tok {
    ($kind:ident) => {
        select! { Token::$kind => () }
    };
}

/// A boxed parser of this grammar.
type P<'t, I, O, E> = Boxed<'t, 't, I, O, Ex<E>>;

/// With `recover`, `parser` is labelled `label` (for "expected ..." in
/// messages); the quick path, which never words an error, skips the label.
macro_rules! labelled {
    ($recover:expr, $parser:expr, $label:expr) => {
        if $recover {
            $parser.labelled($label).boxed()
        } else {
            $parser.boxed()
        }
    };
}

/// A `validate` closure around `check` (which gives an expression or an
/// error with its span): the error is reported and an error node stands in.
macro_rules! check {
    ($check:expr) => {
        move |x,
              e: &mut chumsky::input::MapExtra<'t, '_, I, Ex<E>>,
              emitter: &mut chumsky::input::Emitter<E>| {
            match $check(x, range(e.span())) {
                Ok(v) => v,
                Err((span, message)) => {
                    emitter.emit(E::custom(SimpleSpan::from(span.clone()), message));
                    Expr {
                        kind: ExprKind::Error,
                        span,
                    }
                }
            }
        }
    };
}

/// `-* primary`: the minus signs folded into the value (at most [`MAX_CHAIN`]).
fn signed_value((minuses, inner): (Vec<Span>, Expr), span: Span) -> Result<Expr, (Span, String)> {
    if minuses.is_empty() {
        return Ok(inner);
    }
    if minuses.len() > MAX_CHAIN {
        return Err((span, format!("more than {MAX_CHAIN} signs in a row")));
    }
    Ok(minuses.into_iter().rev().fold(inner, |inner, minus_span| {
        let span = minus_span.start..inner.span.end;
        negate(inner, span)
    }))
}

/// A value, its tolerance and its `at N sigma`, put together.
type Toleranced = ((Expr, Option<(Expr, Expr, bool)>), Option<Expr>);

fn toleranced_value(((base, tol), sigma): Toleranced, span: Span) -> Result<Expr, (Span, String)> {
    if tol.is_none() && sigma.is_none() {
        return Ok(base);
    }
    match tol {
        None => match (base.kind, sigma) {
            (kind, None) => Ok(Expr {
                kind,
                span: base.span,
            }),
            (
                ExprKind::Tolerance {
                    base: None,
                    plus,
                    minus,
                    symmetric,
                    sigma: None,
                },
                Some(k),
            ) => Ok(Expr {
                kind: ExprKind::Tolerance {
                    base: None,
                    plus,
                    minus,
                    symmetric,
                    sigma: Some(Box::new(k)),
                },
                span,
            }),
            (_, Some(_)) => Err((
                span,
                "`at N sigma` belongs after a tolerance, e.g. `40 uA ± 18 % at 3 sigma`".into(),
            )),
        },
        Some((plus, minus, symmetric)) => Ok(Expr {
            kind: ExprKind::Tolerance {
                base: Some(Box::new(base)),
                plus: Box::new(plus),
                minus: Box::new(minus),
                symmetric,
                sigma: sigma.map(Box::new),
            },
            span,
        }),
    }
}

/// A chain `first (op next)*` folded (see [`chain`]).
fn chained((first, rest): (Expr, Vec<(BinaryOp, Expr)>), _: Span) -> Result<Expr, (Span, String)> {
    chain(first, rest)
}

/// With `recover`, `parser` recovers by `strategy`; without, it fails.
macro_rules! recovering {
    ($recover:expr, $parser:expr, $strategy:expr) => {
        if $recover {
            $parser.recover_with($strategy).boxed()
        } else {
            $parser.boxed()
        }
    };
}

/// The whole grammar over tokens of `source`.
pub(crate) struct Grammar<'s> {
    pub source: &'s str,
    /// Recover from errors (the rich parse), or stop at the first (the quick one).
    pub recover: bool,
}

impl<'s> Grammar<'s> {
    /// `name = letter { letter | digit | "_" }`
    fn ident<'t, I, E>(&self) -> P<'t, I, Ident, E>
    where
        's: 't,
        I: ValueInput<'t, Token = Token<'s>, Span = SimpleSpan>,
        E: Failure<'t, I>,
    {
        labelled!(
            self.recover,
            select! { Token::Ident(s) = e => Ident { text: s.into(), span: range(e.span()) } },
            "a name"
        )
    }

    /// `expr = sum [ ".." sum ]`, where
    /// `sum = product { ("+"|"-") product }`,
    /// `product = toleranced { ("*"|"/") toleranced }`,
    /// `toleranced = unary [ ("±" unary | "+"number "-"number) ] [ "at" number ]`,
    /// `unary = { "-" } primary`, `primary = "±" atom | atom`,
    /// `atom = number | "true" | "false" | string | path [ "(" [ expr { "," expr } ] ")" ] | "(" expr ")"`.
    fn expr<'t, I, E>(&self) -> P<'t, I, Expr, E>
    where
        's: 't,
        I: ValueInput<'t, Token = Token<'s>, Span = SimpleSpan>,
        E: Failure<'t, I>,
    {
        let source = self.source;
        let recover = self.recover;
        // The leaves inline (unboxed): this is the hottest part of a parse.
        // `number = digits [ "." digits ] [ exponent ] [ unit ]` is one token.
        let number = select! { Token::Number(n) = e => number_expr(source, n, range(e.span())) };
        let ident =
            select! { Token::Ident(s) = e => Ident { text: s.into(), span: range(e.span()) } };
        recursive(move |expr| {
            let literal = select! {
                Token::Number(n) = e => number_expr(source, n, range(e.span())),
                Token::True = e => Expr { kind: ExprKind::Bool(true), span: range(e.span()) },
                Token::False = e => Expr { kind: ExprKind::Bool(false), span: range(e.span()) },
                Token::Str(s) = e => Expr {
                    kind: ExprKind::Str(s.trim_matches('"').to_string()),
                    span: range(e.span()),
                },
            };

            let args = expr
                .clone()
                .separated_by(tok!(Comma))
                .allow_trailing()
                .collect::<Vec<Expr>>()
                .delimited_by(tok!(LParen), tok!(RParen));

            let path_or_call = ident
                .separated_by(tok!(Dot))
                .at_least(1)
                .collect::<Vec<Ident>>()
                .then(args.or_not())
                .try_map_with(|(path, args), e| {
                    let span = range(e.span());
                    match args {
                        None => Ok(Expr {
                            kind: ExprKind::Path(path),
                            span,
                        }),
                        Some(args) if path.len() == 1 => {
                            let name = path.into_iter().next().expect("at least one segment");
                            Ok(Expr {
                                kind: ExprKind::Call(name, args),
                                span,
                            })
                        }
                        Some(_) => Err(E::custom(
                            e.span(),
                            "only plain function names can be called".into(),
                        )),
                    }
                });

            let paren = expr
                .clone()
                .delimited_by(tok!(LParen), tok!(RParen))
                .map_with(|inner, e| Expr {
                    kind: ExprKind::Paren(Box::new(inner)),
                    span: range(e.span()),
                });
            let paren = recovering!(
                recover,
                paren,
                via_parser(nested_delimiters(
                    Token::LParen,
                    Token::RParen,
                    [(Token::LBrace, Token::RBrace)],
                    |span| Expr {
                        kind: ExprKind::Error,
                        span: range(span),
                    },
                ))
            );

            // Text cut out for nesting too deep: its error is already reported.
            let cut =
                select! { Token::Cut = e => Expr { kind: ExprKind::Error, span: range(e.span()) } };

            let atom = labelled!(recover, literal.or(path_or_call).or(paren).or(cut), "a value");

            let bare_tolerance = tok!(PlusMinus)
                .ignore_then(atom.clone())
                .map_with(|tol, e| Expr {
                    kind: ExprKind::Tolerance {
                        base: None,
                        plus: Box::new(tol.clone()),
                        minus: Box::new(tol),
                        symmetric: true,
                        sigma: None,
                    },
                    span: range(e.span()),
                });

            let primary = atom.or(bare_tolerance);

            let minus = tok!(Minus).map_with(|_, e| range(e.span()));
            let unary = if recover {
                minus
                    .repeated()
                    .collect::<Vec<Span>>()
                    .then(primary)
                    .validate(check!(signed_value))
                    .boxed()
            } else {
                minus
                    .repeated()
                    .at_most(MAX_CHAIN)
                    .foldr(primary, |minus: Span, inner: Expr| {
                        let span = minus.start..inner.span.end;
                        negate(inner, span)
                    })
                    .boxed()
            };

            // `+10 % -20 %`: both signs written against their numbers.
            let signed = move |sign: Token<'s>| {
                select! { Token::Plus = e if sign == Token::Plus => range(e.span()), Token::Minus = e if sign == Token::Minus => range(e.span()) }
                    .then(number)
                    .try_map(|(sign_span, n): (Span, Expr), span| {
                        if sign_span.end == n.span.start {
                            Ok(n)
                        } else {
                            Err(E::custom(
                                span,
                                "asymmetric tolerance sign must touch its number".into(),
                            ))
                        }
                    })
            };
            let tolerance_suffix = tok!(PlusMinus)
                .ignore_then(unary.clone())
                .map(|t| (t.clone(), t, true))
                .or(signed(Token::Plus)
                    .then(signed(Token::Minus))
                    .map(|(p, m)| (p, m, false)));

            // `at 3 sigma`: how many standard deviations the stated extremes are.
            let at_sigma = select! { Token::Ident(s) if s == "at" => () }.ignore_then(number);

            let toleranced = unary
                .then(tolerance_suffix.or_not())
                .then(at_sigma.or_not())
                .validate(check!(toleranced_value));

            let product_op = select! { Token::Star => BinaryOp::Mul, Token::Slash => BinaryOp::Div };
            // Quick: fold as it goes (a chain too long stops the quick
            // parse); recovering: collect and report a chain too long.
            let fold = |a: Expr, (op, b): (BinaryOp, Expr)| {
                let span = a.span.start..b.span.end;
                Expr {
                    kind: ExprKind::Binary(op, Box::new(a), Box::new(b)),
                    span,
                }
            };
            let product = if recover {
                toleranced
                    .clone()
                    .then(product_op.then(toleranced.clone()).repeated().collect::<Vec<_>>())
                    .validate(check!(chained))
                    .boxed()
            } else {
                toleranced
                    .clone()
                    .foldl(product_op.then(toleranced).repeated().at_most(MAX_CHAIN - 1), fold)
                    .boxed()
            };

            let sum_op = select! { Token::Plus => BinaryOp::Add, Token::Minus => BinaryOp::Sub };
            let sum = if recover {
                product
                    .clone()
                    .then(sum_op.then(product.clone()).repeated().collect::<Vec<_>>())
                    .validate(check!(chained))
                    .boxed()
            } else {
                product
                    .clone()
                    .foldl(sum_op.then(product).repeated().at_most(MAX_CHAIN - 1), fold)
                    .boxed()
            };

            let value = sum
                .clone()
                .then(tok!(DotDot).ignore_then(sum).or_not())
                .map_with(|(lo, hi), e| match hi {
                    None => lo,
                    Some(hi) => Expr {
                        kind: ExprKind::Range(Box::new(lo), Box::new(hi)),
                        span: range(e.span()),
                    },
                });
            labelled!(recover, value, "a value")
        })
        .boxed()
    }

    /// `member = keyword [ name ] relation expr | keyword [ name ] "{" { member } "}"`
    fn member<'t, I, E>(&self) -> P<'t, I, Member, E>
    where
        's: 't,
        I: ValueInput<'t, Token = Token<'s>, Span = SimpleSpan>,
        E: Failure<'t, I>,
    {
        let source = self.source;
        let recover = self.recover;
        // `name = letter { letter | digit | "_" }` and
        // `relation = "=" | "<=" | ">=" | "<" | ">"`, inline: they run for every field.
        let ident =
            select! { Token::Ident(s) = e => Ident { text: s.into(), span: range(e.span()) } };
        let relation = select! {
            Token::Assign => Relation::Assign,
            Token::Le => Relation::AtMost,
            Token::Ge => Relation::AtLeast,
            Token::Lt => Relation::Below,
            Token::Gt => Relation::Above,
        };
        let expr = self.expr::<I, E>();

        // What starts a member: a name, an optional second name, then `=`, a relation or `{`.
        let member_start = ident
            .then(ident.or_not())
            .then(relation.ignored().or(tok!(LBrace).ignored()))
            .ignored()
            .boxed();

        // A value that failed to parse: swallow up to the next member or `}`.
        let bad_value = any()
            .and_is(member_start.clone().not())
            .and_is(tok!(RBrace).not())
            .repeated()
            .map_with(|_, e| Expr {
                kind: ExprKind::Error,
                span: range(e.span()),
            });

        // Tokens that start no member: one error for the whole run, then parsing goes on.
        let junk_member = any()
            .and_is(tok!(RBrace).not())
            .map_with(move |_, e| token_text(source, e.span()))
            .then_ignore(
                any()
                    .and_is(member_start.clone().not())
                    .and_is(tok!(RBrace).not())
                    .repeated(),
            )
            .validate(|first, e, emitter| {
                emitter.emit(E::custom(
                    e.span(),
                    format!("unexpected {first}; a field looks like `name = value` and a block like `name {{ ... }}`"),
                ));
                Member::Error(range(e.span()))
            });

        recursive(move |member| {
            let body = member
                .repeated()
                .collect::<Vec<Member>>()
                .delimited_by(tok!(LBrace), tok!(RBrace));
            let body = recovering!(
                recover,
                body,
                via_parser(nested_delimiters(
                    Token::LBrace,
                    Token::RBrace,
                    [(Token::LParen, Token::RParen)],
                    |_| Vec::new(),
                ))
            );
            let value = recovering!(recover, expr.clone(), via_parser(bad_value.clone()));

            enum Tail {
                Value(Relation, Expr),
                Body(Vec<Member>),
            }

            let member = ident
                .then(ident.or_not())
                .then(
                    relation
                        .then(value)
                        .map(|(r, v)| Tail::Value(r, v))
                        .or(body.map(Tail::Body)),
                )
                .map_with(|((keyword, name), tail), e| match tail {
                    Tail::Value(relation, value) => Member::Field(Statement {
                        keyword,
                        name,
                        relation,
                        value: Arc::new(value),
                        span: range(e.span()),
                    }),
                    Tail::Body(members) => Member::Block(Block {
                        keyword,
                        name,
                        members,
                        span: range(e.span()),
                    }),
                })
                .or(select! { Token::Cut = e => Member::Error(range(e.span())) });
            let member = labelled!(recover, member, "a field");
            if recover {
                member.or(junk_member.clone()).boxed()
            } else {
                member.boxed()
            }
        })
        .boxed()
    }

    /// `file = { item }`, `item = "use" string | keyword [ name ] "{" { member } "}"`
    pub(crate) fn file<'t, I, E>(&self) -> P<'t, I, Vec<Item>, E>
    where
        's: 't,
        I: ValueInput<'t, Token = Token<'s>, Span = SimpleSpan>,
        E: Failure<'t, I>,
    {
        let source = self.source;
        let ident = self.ident::<I, E>();
        let member = self.member::<I, E>();

        let body = member
            .repeated()
            .collect::<Vec<Member>>()
            .delimited_by(tok!(LBrace), tok!(RBrace));
        let body = recovering!(
            self.recover,
            body,
            via_parser(nested_delimiters(
                Token::LBrace,
                Token::RBrace,
                [(Token::LParen, Token::RParen)],
                |_| Vec::new(),
            ))
        );

        let use_item = tok!(Use)
            .ignore_then(labelled!(
                self.recover,
                select! { Token::Str(s) = e => (s, e.span()) },
                "a quoted path"
            ))
            .map_with(|(path, path_span), e| {
                Item::Use(UseItem {
                    path: path.trim_matches('"').to_string(),
                    path_span: range(path_span),
                    span: range(e.span()),
                })
            });

        let block_item = ident
            .clone()
            .then(ident.clone().or_not())
            .then(body)
            .map_with(|((keyword, name), members), e| {
                Item::Block(Block {
                    keyword,
                    name,
                    members,
                    span: range(e.span()),
                })
            });

        let item_start = tok!(Use).ignored().or(ident
            .clone()
            .then(ident.clone().or_not())
            .then(tok!(LBrace))
            .ignored());
        let junk_item = any()
            .map_with(move |_, e| token_text(source, e.span()))
            .then_ignore(any().and_is(item_start.not()).repeated())
            .validate(|first, e, emitter| {
                emitter.emit(E::custom(
                    e.span(),
                    format!("unexpected {first}; expected `regulator NAME {{ ... }}`, `process NAME {{ ... }}` or `use \"file.guard\"`"),
                ));
                Item::Error(range(e.span()))
            });

        let item = use_item
            .or(block_item)
            .or(select! { Token::Cut = e => Item::Error(range(e.span())) });
        let item = if self.recover {
            item.or(junk_item).boxed()
        } else {
            item.boxed()
        };
        item.repeated()
            .collect::<Vec<Item>>()
            .then_ignore(end())
            .boxed()
    }
}

#[cfg(test)]
mod tests {
    //! One small example per grammar rule, parsed the quick way (no error
    //! allowed) and the recovering way, which must agree.
    use crate::ast::*;
    use crate::parser::{parse_quick, parse_recovering};

    /// The first item's members, after checking both parses agree.
    fn members(src: &str) -> Vec<Member> {
        let quick = parse_quick(src).expect("parses without error");
        let full = parse_recovering(src);
        assert!(full.errors.is_empty(), "{:?}", full.errors);
        assert_eq!(quick, full.file.items);
        match &quick[0] {
            Item::Block(b) => b.members.clone(),
            Item::Use(_) | Item::Error(_) => Vec::new(),
        }
    }

    fn value(src: &str) -> Expr {
        let ms = members(&format!("r x {{ v = {src} }}"));
        match &ms[0] {
            Member::Field(f) => (*f.value).clone(),
            _ => panic!("not a field"),
        }
    }

    #[test]
    fn item_use_and_block() {
        let items = parse_quick("use \"a.guard\"\nregulator r { }").expect("parses");
        assert!(matches!(&items[0], Item::Use(u) if u.path == "a.guard"));
        assert!(matches!(&items[1], Item::Block(b) if b.keyword.text == "regulator"));
    }

    #[test]
    fn member_field_and_block() {
        let ms = members("r x { expect current <= 3 mA  pin vout { off_chip = true } }");
        assert!(
            matches!(&ms[0], Member::Field(f) if f.relation == Relation::AtMost && f.key().text == "current")
        );
        assert!(matches!(&ms[1], Member::Block(b) if b.key().text == "vout"));
    }

    #[test]
    fn relations() {
        for (op, rel) in [
            ("=", Relation::Assign),
            ("<=", Relation::AtMost),
            (">=", Relation::AtLeast),
            ("<", Relation::Below),
            (">", Relation::Above),
        ] {
            let ms = members(&format!("r x {{ a {op} 1 }}"));
            assert!(matches!(&ms[0], Member::Field(f) if f.relation == rel));
        }
    }

    #[test]
    fn expr_range_sum_product() {
        assert!(matches!(value("1 V .. 2 V").kind, ExprKind::Range(..)));
        assert!(matches!(
            value("a + b * c").kind,
            ExprKind::Binary(BinaryOp::Add, _, _)
        ));
        assert!(matches!(
            value("a * b - c").kind,
            ExprKind::Binary(BinaryOp::Sub, _, _)
        ));
    }

    #[test]
    fn toleranced_forms() {
        assert!(matches!(
            value("2 V ± 1 %").kind,
            ExprKind::Tolerance {
                symmetric: true,
                ..
            }
        ));
        assert!(matches!(
            value("1 A +10 % -20 %").kind,
            ExprKind::Tolerance {
                symmetric: false,
                ..
            }
        ));
        assert!(matches!(
            value("± 8 %").kind,
            ExprKind::Tolerance { base: None, .. }
        ));
        assert!(matches!(
            value("40 uA ± 5 % at 6 sigma").kind,
            ExprKind::Tolerance { sigma: Some(_), .. }
        ));
    }

    #[test]
    fn unary_folds_into_literals() {
        assert!(matches!(value("-20 °C").kind, ExprKind::Number { value, .. } if value == -20.0));
        assert!(matches!(value("-a").kind, ExprKind::Neg(_)));
    }

    #[test]
    fn atoms() {
        assert!(matches!(value("true").kind, ExprKind::Bool(true)));
        assert!(matches!(value("\"text\"").kind, ExprKind::Str(_)));
        assert!(matches!(value("a.b.max").kind, ExprKind::Path(ref p) if p.len() == 3));
        assert!(
            matches!(value("min(a, 2 A,)").kind, ExprKind::Call(ref n, ref args) if n.text == "min" && args.len() == 2)
        );
        assert!(matches!(value("(1 V)").kind, ExprKind::Paren(_)));
    }

    /// The quick path folds chains as it goes where the recovering path
    /// collects them: on every example, fixture and prefix of one, the two
    /// must agree on whether the text parses and build the same tree.
    #[test]
    fn both_runs_agree_on_every_example_and_its_prefixes() {
        let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("../..");
        let mut files = Vec::new();
        for dir in ["examples", "examples/flawed", "examples/process"] {
            for e in std::fs::read_dir(root.join(dir)).expect("dir").flatten() {
                if e.path().extension().is_some_and(|x| x == "guard") {
                    files.push(e.path());
                }
            }
        }
        assert!(files.len() >= 6);
        for path in files {
            let text = std::fs::read_to_string(&path).expect("read");
            let cuts = (0..text.len()).step_by(37).chain([text.len()]);
            for cut in cuts.filter(|c| text.is_char_boundary(*c)) {
                let part = &text[..cut];
                let quick = parse_quick(part);
                let full = parse_recovering(part);
                assert_eq!(
                    quick.is_some(),
                    full.errors.is_empty(),
                    "{}: {cut}",
                    path.display()
                );
                if let Some(items) = quick {
                    assert_eq!(items, full.file.items, "{}: {cut}", path.display());
                }
            }
        }
    }

    #[test]
    fn long_chains_agree_at_the_limit() {
        use crate::limits::MAX_CHAIN;
        for n in [MAX_CHAIN - 1, MAX_CHAIN, MAX_CHAIN + 1] {
            for (op, sign) in [(" + ", ""), (" * ", "")] {
                let expr = vec!["1"; n].join(op);
                let src = format!("r x {{ v = {sign}{expr} }}");
                let quick = parse_quick(&src);
                let full = parse_recovering(&src);
                assert_eq!(quick.is_some(), full.errors.is_empty(), "{n}{op}");
                if let Some(items) = quick {
                    assert_eq!(items, full.file.items);
                }
            }
            let src = format!("r x {{ v = {}1 }}", "-".repeat(n));
            assert_eq!(
                parse_quick(&src).is_some(),
                parse_recovering(&src).errors.is_empty(),
                "{n} signs"
            );
        }
    }

    #[test]
    fn number_with_unit() {
        let ExprKind::Number { value, unit } = value("2.2e-6 uF").kind else {
            panic!("a number")
        };
        assert_eq!(value, 2.2e-6);
        assert_eq!(unit.expect("unit").text, "uF");
    }
}
