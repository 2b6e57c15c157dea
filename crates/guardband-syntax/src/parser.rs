//! The chumsky parser: tokens to a [`SourceFile`] plus every syntax error found.
//!
//! Parsing never fails. Bad members are skipped up to the next thing that
//! parses, bad blocks and parentheses are replaced by error nodes, and nesting
//! beyond [`MAX_NESTING`] is cut out before parsing so that the recursive
//! descent cannot exhaust the stack.

use crate::Span;
use crate::ast::*;
use crate::fast::negate;
use crate::lexer::{Comment, NumberToken, Token, lex};
use chumsky::input::ValueInput;
use chumsky::prelude::*;

/// Deepest nesting of `(` and `{` the parser accepts; deeper input is one error.
pub const MAX_NESTING: usize = 48;

/// Most syntax errors reported for one file; the rest are counted in a final error.
pub const MAX_ERRORS: usize = 50;

/// Most operands one chain of `+ -` or `* /` may have; longer chains are one
/// error, so that no expression tree is deep enough to exhaust the stack.
pub const MAX_CHAIN: usize = 64;

/// Builds a left-nested chain `a op b op c`; an error (span, message) if it is too long.
fn chain((first, rest): (Expr, Vec<(BinaryOp, Expr)>)) -> Result<Expr, (Span, String)> {
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

/// A syntax error with the span it points at.
#[derive(Debug, Clone, PartialEq)]
pub struct SyntaxError {
    pub span: Span,
    /// One sentence for the headline, e.g. "unexpected `}`, expected a value".
    pub message: String,
    /// A short text for the label under the span.
    pub label: String,
}

/// The result of parsing: always a tree (possibly partial) and the errors.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Parse {
    pub file: SourceFile,
    pub errors: Vec<SyntaxError>,
}

type Extra<'t, 's> = extra::Err<Rich<'t, Token<'s>, SimpleSpan>>;

fn range(span: SimpleSpan) -> Span {
    span.into_range()
}

/// Parses a whole file. Never panics; every error carries a span inside `source`.
pub fn parse(source: &str) -> Parse {
    parse_with(source, MAX_NESTING)
}

/// The most nesting any caller may allow: the recursive parser and the
/// evaluator stay well inside a 256 MiB stack at this depth.
pub const HARD_MAX_NESTING: usize = 128;

/// Like [`parse`], cutting nesting deeper than `max_nesting` (at most
/// [`HARD_MAX_NESTING`]); for configurable limits.
pub fn parse_with(source: &str, max_nesting: usize) -> Parse {
    let max_nesting = max_nesting.clamp(1, HARD_MAX_NESTING);
    let (tokens, comments) = lex(source);
    let comments = comments.into_iter().collect::<Vec<Comment>>();
    // Most files have no error: one quick pass. Otherwise the full parse
    // below finds every error and recovers from each.
    if let Some(items) = crate::fast::parse_clean(source, &tokens, max_nesting) {
        return Parse {
            file: SourceFile { items, comments },
            errors: Vec::new(),
        };
    }
    full_parse(source, tokens, comments, max_nesting)
}

/// [`parse_with`] without the quick pass: always the chumsky parser. For the
/// tests and fuzzers that hold the two parsers together; not for use.
#[doc(hidden)]
pub fn parse_with_recovery_only(source: &str, max_nesting: usize) -> Parse {
    let max_nesting = max_nesting.clamp(1, HARD_MAX_NESTING);
    let (tokens, comments) = lex(source);
    full_parse(source, tokens, comments, max_nesting)
}

/// Whether the quick pass alone parses `source` (no error, nothing refused).
#[doc(hidden)]
pub fn quick_pass_accepts(source: &str, max_nesting: usize) -> bool {
    let max_nesting = max_nesting.clamp(1, HARD_MAX_NESTING);
    let (tokens, _) = lex(source);
    crate::fast::parse_clean(source, &tokens, max_nesting).is_some()
}

/// The chumsky parse with error recovery, for files the quick pass refused.
fn full_parse(
    source: &str,
    tokens: Vec<(Token<'_>, Span)>,
    comments: Vec<Comment>,
    max_nesting: usize,
) -> Parse {
    let (tokens, mut errors) = limit_nesting(tokens, max_nesting);
    let (tokens, unbalanced) = balance_delimiters(source, tokens);
    errors.extend(unbalanced);
    let eoi: SimpleSpan = (source.len()..source.len()).into();
    let tokens: Vec<(Token<'_>, SimpleSpan)> =
        tokens.into_iter().map(|(t, s)| (t, s.into())).collect();
    let (items, rich) = file_parser(source)
        .parse(tokens.as_slice().map(eoi, |(t, s)| (t, s)))
        .into_output_errors();
    errors.extend(rich.into_iter().map(|e| to_syntax_error(source, e)));
    errors.sort_by_key(|e| (e.span.start, e.span.end));
    errors.dedup_by(|a, b| a.span == b.span);
    if errors.len() > MAX_ERRORS {
        let hidden = errors.len() - MAX_ERRORS;
        let span = errors[MAX_ERRORS].span.clone();
        errors.truncate(MAX_ERRORS);
        errors.push(SyntaxError {
            span,
            message: format!("{hidden} more syntax errors in this file are not shown"),
            label: "first error not shown".to_string(),
        });
    }
    Parse {
        file: SourceFile {
            items: items.unwrap_or_default(),
            comments,
        },
        errors,
    }
}

/// The indentation (in columns, a tab counting four) of the line that a
/// token at `offset` starts, if it is the first token on its line.
fn line_indent(source: &str, previous_end: usize, offset: usize) -> Option<usize> {
    let between = source.get(previous_end..offset).unwrap_or("");
    if previous_end != 0 && !between.contains(['\n', '\r']) {
        return None;
    }
    let line = &source[..offset];
    let start = line.rfind(['\n', '\r']).map(|i| i + 1).unwrap_or(0);
    Some(
        line[start..]
            .chars()
            .map(|c| if c == '\t' { 4 } else { 1 })
            .sum(),
    )
}

/// Makes braces and parentheses balance before parsing: an unclosed `(` is
/// closed at the `}` or end of file that ends its block, a `)` that closes
/// nothing is dropped, each with an error at the unmatched delimiter.
///
/// An unclosed `{` is closed where the indentation says its block ends:
/// before the first line indented no deeper than the line that opened it
/// (a `}` at that depth closes the block it lines up with). So a missing
/// `}` is reported at the block left open, and the blocks after it are
/// parsed where they were written, not inside it. Only as many braces as
/// are missing are closed this way; the rest of an unbalanced file closes
/// at the end. Without this, recovery from a file that ends inside many
/// open blocks backtracks exponentially in their number.
fn balance_delimiters<'s>(
    source: &str,
    tokens: Vec<(Token<'s>, Span)>,
) -> (Vec<(Token<'s>, Span)>, Vec<SyntaxError>) {
    let end = source.len();
    let opens = tokens.iter().filter(|(t, _)| *t == Token::LBrace).count();
    let closes = tokens.iter().filter(|(t, _)| *t == Token::RBrace).count();
    let mut missing = opens.saturating_sub(closes);
    let mut out = Vec::with_capacity(tokens.len() + 4);
    let mut errors = Vec::new();
    // (is a brace, where it opened, the indentation of its line)
    let mut open: Vec<(bool, Span, usize)> = Vec::new();
    let unclosed = |brace: bool, span: Span| SyntaxError {
        span,
        message: if brace {
            "this `{` is never closed".to_string()
        } else {
            "this `(` is never closed".to_string()
        },
        label: if brace {
            "add the `}` that ends this block".to_string()
        } else {
            "add the `)` that ends this group".to_string()
        },
    };
    let mut previous_end = 0;
    let mut indent = 0;
    for (tok, span) in tokens {
        if let Some(i) = line_indent(source, previous_end, span.start) {
            indent = i;
            // A line no deeper than an open block's own line ends that block,
            // unless it is the `}` that lines up with it.
            while missing > 0
                && let Some((true, at, depth)) = open.last().cloned()
                && (indent < depth || (indent == depth && tok != Token::RBrace))
            {
                errors.push(unclosed(true, at));
                out.push((Token::RBrace, span.start..span.start));
                open.pop();
                missing -= 1;
            }
        }
        previous_end = span.end;
        match tok {
            Token::LBrace => open.push((true, span.clone(), indent)),
            Token::LParen => open.push((false, span.clone(), indent)),
            Token::RParen => match open.last() {
                Some((false, _, _)) => {
                    open.pop();
                }
                _ => {
                    errors.push(SyntaxError {
                        span: span.clone(),
                        message: "this `)` closes nothing".to_string(),
                        label: "no `(` is open here".to_string(),
                    });
                    continue;
                }
            },
            Token::RBrace => {
                while let Some((false, at, _)) = open.last().cloned() {
                    errors.push(unclosed(false, at));
                    out.push((Token::RParen, span.start..span.start));
                    open.pop();
                }
                open.pop();
            }
            _ => {}
        }
        out.push((tok, span));
    }
    while let Some((brace, at, _)) = open.pop() {
        errors.push(unclosed(brace, at));
        let closer = if brace { Token::RBrace } else { Token::RParen };
        out.push((closer, end..end));
    }
    (out, errors)
}

/// Replaces every run of tokens nested deeper than `max` by one error token.
fn limit_nesting(
    tokens: Vec<(Token<'_>, Span)>,
    max: usize,
) -> (Vec<(Token<'_>, Span)>, Vec<SyntaxError>) {
    let mut out = Vec::with_capacity(tokens.len());
    let mut errors = Vec::new();
    let mut depth = 0usize;
    let mut cut: Option<(usize, Span)> = None; // depth at which the cut began, and its span
    for (tok, span) in tokens {
        let opens = matches!(tok, Token::LParen | Token::LBrace);
        let closes = matches!(tok, Token::RParen | Token::RBrace);
        if opens {
            depth += 1;
        }
        if let Some((start_depth, cut_span)) = &mut cut {
            cut_span.end = span.end;
            if closes {
                depth = depth.saturating_sub(1);
                if depth < *start_depth {
                    let (_, s) = cut.take().unwrap_or((0, span.clone()));
                    errors.push(SyntaxError {
                        span: s.clone(),
                        message: format!("nesting deeper than {max} levels"),
                        label: "too deeply nested; simplify this expression".to_string(),
                    });
                    out.push((Token::Cut, s));
                }
            }
            continue;
        }
        if opens && depth > max {
            // A call cut off at its `(` takes its name with it, so that the
            // name is not reported again as an unknown value.
            let mut start = span.start;
            if tok == Token::LParen {
                while let Some((Token::Ident(_) | Token::Dot, s)) = out.last() {
                    start = s.start;
                    out.pop();
                }
            }
            cut = Some((depth, start..span.end));
            continue;
        }
        if closes {
            depth = depth.saturating_sub(1);
        }
        out.push((tok, span));
    }
    if let Some((_, s)) = cut {
        errors.push(SyntaxError {
            span: s.clone(),
            message: format!("nesting deeper than {max} levels, never closed"),
            label: "too deeply nested".to_string(),
        });
        out.push((Token::Cut, s));
    }
    (out, errors)
}

fn to_syntax_error(source: &str, err: Rich<'_, Token<'_>, SimpleSpan>) -> SyntaxError {
    let span = range(*err.span());
    match err.reason() {
        chumsky::error::RichReason::Custom(msg) => SyntaxError {
            span,
            message: msg.clone(),
            label: msg.split(';').next().unwrap_or(msg).to_string(),
        },
        chumsky::error::RichReason::ExpectedFound { .. } => {
            let found = match err.found() {
                Some(_) => token_text(source, *err.span()),
                None => "end of file".to_string(),
            };
            let mut expected: Vec<String> = err
                .expected()
                .map(|p| p.to_string().trim_matches('\'').to_string())
                .collect();
            expected.sort();
            expected.dedup();
            expected.retain(|e| e != "end of input" || err.found().is_some());
            let list = match expected.len() {
                0 => String::new(),
                1 => format!(", expected {}", expected[0]),
                n if n <= 6 => format!(
                    ", expected {} or {}",
                    expected[..n - 1].join(", "),
                    expected[n - 1]
                ),
                _ => format!(", expected {} or another token", expected[..5].join(", ")),
            };
            SyntaxError {
                span,
                message: format!("unexpected {found}{list}"),
                label: format!("unexpected {found}"),
            }
        }
    }
}

/// The source text of a span in backticks, shortened, for messages.
fn token_text(source: &str, span: SimpleSpan) -> String {
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

fn number_expr(source: &str, token: NumberToken, span: SimpleSpan) -> Expr {
    crate::fast::number_expr(source, token, range(span))
}

fn file_parser<'t, 's: 't, I>(
    source: &'s str,
) -> impl Parser<'t, I, Vec<Item>, Extra<'t, 's>> + Clone
where
    I: ValueInput<'t, Token = Token<'s>, Span = SimpleSpan>,
{
    let ident = select! { Token::Ident(s) = e => Ident { text: s.into(), span: range(e.span()) } }
        .labelled("a name");

    let number = select! { Token::Number(n) = e => (n, e.span()) }
        .map(move |(n, span)| number_expr(source, n, span))
        .labelled("a number");

    // Folds `first (op next)*` into a tree, or reports a too-long chain.
    macro_rules! chained {
        () => {
            |parts, _, emitter| {
                chain(parts).unwrap_or_else(|(span, msg)| {
                    emitter.emit(Rich::custom(SimpleSpan::from(span.clone()), msg));
                    Expr {
                        kind: ExprKind::Error,
                        span,
                    }
                })
            }
        };
    }

    let expr = recursive(|expr| {
        let literal = number
            .or(
                select! { Token::True => true, Token::False => false }.map_with(|b, e| Expr {
                    kind: ExprKind::Bool(b),
                    span: range(e.span()),
                }),
            )
            .or(select! { Token::Str(s) = e => Expr {
                kind: ExprKind::Str(s.trim_matches('"').to_string()),
                span: range(e.span()),
            } });

        let args = expr
            .clone()
            .separated_by(just(Token::Comma))
            .allow_trailing()
            .collect::<Vec<Expr>>()
            .delimited_by(just(Token::LParen), just(Token::RParen));

        let path_or_call = ident
            .separated_by(just(Token::Dot))
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
                    Some(_) => Err(Rich::custom(
                        e.span(),
                        "only plain function names can be called",
                    )),
                }
            });

        let paren = expr
            .clone()
            .delimited_by(just(Token::LParen), just(Token::RParen))
            .map_with(|inner, e| Expr {
                kind: ExprKind::Paren(Box::new(inner)),
                span: range(e.span()),
            })
            .recover_with(via_parser(nested_delimiters(
                Token::LParen,
                Token::RParen,
                [(Token::LBrace, Token::RBrace)],
                |span| Expr {
                    kind: ExprKind::Error,
                    span: range(span),
                },
            )));

        // Text cut out for nesting too deep: its error is already reported.
        let cut =
            select! { Token::Cut = e => Expr { kind: ExprKind::Error, span: range(e.span()) } };

        // Boxing erases the combinator types: it keeps compile and lint times reasonable.
        let atom = literal
            .or(paren)
            .or(path_or_call)
            .or(cut)
            .labelled("a value")
            .boxed();

        let bare_tolerance = just(Token::PlusMinus)
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

        let primary = bare_tolerance.or(atom.clone()).boxed();

        let unary = just(Token::Minus)
            .map_with(|_, e| range(e.span()))
            .repeated()
            .collect::<Vec<Span>>()
            .then(primary)
            .validate(|(minuses, inner), e, emitter| {
                if minuses.len() > MAX_CHAIN {
                    emitter.emit(Rich::custom(
                        e.span(),
                        format!("more than {MAX_CHAIN} signs in a row"),
                    ));
                    return Expr {
                        kind: ExprKind::Error,
                        span: range(e.span()),
                    };
                }
                minuses.into_iter().rev().fold(inner, |inner, minus_span| {
                    let span = minus_span.start..inner.span.end;
                    negate(inner, span)
                })
            });

        // `+10 % -20 %`: both signs written against their numbers.
        let signed = |sign: Token<'s>| {
            just(sign)
                .map_with(|_, e| range(e.span()))
                .then(number)
                .try_map(|(sign_span, n), span| {
                    if sign_span.end == n.span.start {
                        Ok(n)
                    } else {
                        Err(Rich::custom(
                            span,
                            "asymmetric tolerance sign must touch its number",
                        ))
                    }
                })
        };
        let tolerance_suffix = just(Token::PlusMinus)
            .ignore_then(unary.clone())
            .map(|t| (t.clone(), t, true))
            .or(signed(Token::Plus)
                .then(signed(Token::Minus))
                .map(|(p, m)| (p, m, false)));

        // `at 3 sigma`: how many standard deviations the stated extremes are.
        let at_sigma = select! { Token::Ident(s) if s == "at" => () }
            .ignore_then(number)
            .labelled("`at N sigma`");

        let toleranced = unary
            .then(tolerance_suffix.or_not())
            .then(at_sigma.or_not())
            .validate(|((base, tol), sigma), e, emitter| match tol {
                None => match (base.kind, sigma) {
                    (kind, None) => Expr {
                        kind,
                        span: base.span,
                    },
                    (
                        ExprKind::Tolerance {
                            base: None,
                            plus,
                            minus,
                            symmetric,
                            sigma: None,
                        },
                        Some(k),
                    ) => Expr {
                        kind: ExprKind::Tolerance {
                            base: None,
                            plus,
                            minus,
                            symmetric,
                            sigma: Some(Box::new(k)),
                        },
                        span: range(e.span()),
                    },
                    (_, Some(_)) => {
                        emitter.emit(Rich::custom(
                            e.span(),
                            "`at N sigma` belongs after a tolerance, e.g. `40 uA ± 18 % at 3 sigma`",
                        ));
                        Expr {
                            kind: ExprKind::Error,
                            span: range(e.span()),
                        }
                    }
                },
                Some((plus, minus, symmetric)) => Expr {
                    kind: ExprKind::Tolerance {
                        base: Some(Box::new(base)),
                        plus: Box::new(plus),
                        minus: Box::new(minus),
                        symmetric,
                        sigma: sigma.map(Box::new),
                    },
                    span: range(e.span()),
                },
            })
            .boxed();

        let product_op = just(Token::Star)
            .to(BinaryOp::Mul)
            .or(just(Token::Slash).to(BinaryOp::Div));
        let product = toleranced
            .clone()
            .then(product_op.then(toleranced).repeated().collect::<Vec<_>>())
            .validate(chained!())
            .boxed();

        let sum_op = just(Token::Plus)
            .to(BinaryOp::Add)
            .or(just(Token::Minus).to(BinaryOp::Sub));
        let sum = product
            .clone()
            .then(sum_op.then(product).repeated().collect::<Vec<_>>())
            .validate(chained!())
            .boxed();

        sum.clone()
            .then(just(Token::DotDot).ignore_then(sum).or_not())
            .map_with(|(lo, hi), e| match hi {
                None => lo,
                Some(hi) => Expr {
                    kind: ExprKind::Range(Box::new(lo), Box::new(hi)),
                    span: range(e.span()),
                },
            })
            .labelled("a value")
    });

    let relation = select! {
        Token::Assign => Relation::Assign,
        Token::Le => Relation::AtMost,
        Token::Ge => Relation::AtLeast,
        Token::Lt => Relation::Below,
        Token::Gt => Relation::Above,
    }
    .labelled("`=`");

    // What starts a member: a name, an optional second name, then `=`, a relation or `{`.
    let member_start = ident
        .then(ident.or_not())
        .then(relation.ignored().or(just(Token::LBrace).ignored()))
        .ignored();

    // A value that failed to parse: swallow up to the next member or `}`.
    let bad_value = any()
        .and_is(member_start.not())
        .and_is(just(Token::RBrace).not())
        .repeated()
        .map_with(|_, e| Expr {
            kind: ExprKind::Error,
            span: range(e.span()),
        });

    // Tokens that start no member: one error for the whole run, then parsing goes on.
    let junk_member = any()
        .and_is(just(Token::RBrace).not())
        .map_with(move |_, e| token_text(source, e.span()))
        .then_ignore(
            any()
                .and_is(member_start.not())
                .and_is(just(Token::RBrace).not())
                .repeated(),
        )
        .validate(|first, e, emitter| {
            emitter.emit(Rich::custom(
                e.span(),
                format!("unexpected {first}; a field looks like `name = value` and a block like `name {{ ... }}`"),
            ));
            Member::Error(range(e.span()))
        });

    let member = recursive(|member| {
        let body = member
            .repeated()
            .collect::<Vec<Member>>()
            .delimited_by(just(Token::LBrace), just(Token::RBrace))
            .recover_with(via_parser(nested_delimiters(
                Token::LBrace,
                Token::RBrace,
                [(Token::LParen, Token::RParen)],
                |_| Vec::new(),
            )));

        enum Tail {
            Value(Relation, Expr),
            Body(Vec<Member>),
        }

        ident
            .then(ident.or_not())
            .then(
                relation
                    .then(expr.clone().recover_with(via_parser(bad_value)))
                    .map(|(r, v)| Tail::Value(r, v))
                    .or(body.map(Tail::Body)),
            )
            .map_with(|((keyword, name), tail), e| match tail {
                Tail::Value(relation, value) => Member::Field(Field {
                    keyword,
                    name,
                    relation,
                    value: std::sync::Arc::new(value),
                    span: range(e.span()),
                }),
                Tail::Body(members) => Member::Block(Block {
                    keyword,
                    name,
                    members,
                    span: range(e.span()),
                }),
            })
            .labelled("a field")
            .or(select! { Token::Cut = e => Member::Error(range(e.span())) })
            .or(junk_member)
            .boxed()
    });

    let block_body = member
        .repeated()
        .collect::<Vec<Member>>()
        .delimited_by(just(Token::LBrace), just(Token::RBrace))
        .recover_with(via_parser(nested_delimiters(
            Token::LBrace,
            Token::RBrace,
            [(Token::LParen, Token::RParen)],
            |_| Vec::new(),
        )));

    let use_item = just(Token::Use)
        .ignore_then(select! { Token::Str(s) = e => (s, e.span()) }.labelled("a quoted path"))
        .map_with(|(path, path_span), e| {
            Item::Use(UseItem {
                path: path.trim_matches('"').to_string(),
                path_span: range(path_span),
                span: range(e.span()),
            })
        });

    let block_item =
        ident
            .then(ident.or_not())
            .then(block_body)
            .map_with(|((keyword, name), members), e| {
                Item::Block(Block {
                    keyword,
                    name,
                    members,
                    span: range(e.span()),
                })
            });

    let item_start = just(Token::Use).ignored().or(ident
        .then(ident.or_not())
        .then(just(Token::LBrace))
        .ignored());
    let junk_item = any()
        .map_with(move |_, e| token_text(source, e.span()))
        .then_ignore(any().and_is(item_start.not()).repeated())
        .validate(|first, e, emitter| {
            emitter.emit(Rich::custom(
                e.span(),
                format!("unexpected {first}; expected `regulator NAME {{ ... }}`, `process NAME {{ ... }}` or `use \"file.guard\"`"),
            ));
            Item::Error(range(e.span()))
        });

    use_item
        .or(block_item)
        .or(select! { Token::Cut = e => Item::Error(range(e.span())) })
        .or(junk_item)
        .repeated()
        .collect::<Vec<Item>>()
        .then_ignore(end())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn fields(src: &str) -> Vec<Field> {
        let p = parse(src);
        assert!(p.errors.is_empty(), "{:?}", p.errors);
        match &p.file.items[0] {
            Item::Block(b) => b
                .members
                .iter()
                .filter_map(|m| match m {
                    Member::Field(f) => Some(f.clone()),
                    _ => None,
                })
                .collect(),
            _ => panic!("not a block"),
        }
    }

    #[test]
    fn parses_a_small_regulator() {
        let src = "regulator r {\n supply = 3.0 V .. 4.2 V\n output = 2.8 V ± 1.5 %\n pin vout { off_chip = true capacitance = 2.2 uF ± 20 % }\n}";
        let p = parse(src);
        assert!(p.errors.is_empty(), "{:?}", p.errors);
        let Item::Block(b) = &p.file.items[0] else {
            panic!()
        };
        assert_eq!(b.keyword.text, "regulator");
        assert_eq!(b.name.as_ref().unwrap().text, "r");
        assert_eq!(b.members.len(), 3);
    }

    #[test]
    fn minus_folds_into_literals() {
        let f = fields("r x { ambient = -20 °C .. 70 °C }");
        let ExprKind::Range(lo, _) = &f[0].value.kind else {
            panic!()
        };
        assert!(matches!(lo.kind, ExprKind::Number { value, .. } if value == -20.0));
    }

    #[test]
    fn asymmetric_tolerance_needs_touching_signs() {
        let f = fields("r x { a = 1 A +10 % -20 %\n b = c + 10 % - 20 % }");
        assert!(matches!(
            f[0].value.kind,
            ExprKind::Tolerance {
                symmetric: false,
                ..
            }
        ));
        assert!(matches!(
            f[1].value.kind,
            ExprKind::Binary(BinaryOp::Sub, _, _)
        ));
    }

    #[test]
    fn precedence_and_paths() {
        let f = fields("r x { t = ratio * reference + 1 mA\n u = min(a.b.max, 2 A)\n m = ± 8 % }");
        assert!(matches!(
            f[0].value.kind,
            ExprKind::Binary(BinaryOp::Add, _, _)
        ));
        assert!(
            matches!(&f[1].value.kind, ExprKind::Call(n, args) if n.text == "min" && args.len() == 2)
        );
        assert!(matches!(
            f[2].value.kind,
            ExprKind::Tolerance { base: None, .. }
        ));
    }

    #[test]
    fn statements_with_names_and_relations() {
        let f = fields("r x { expect current <= 400 mA\n force vout = 1.5 V }");
        assert_eq!(f[0].relation, Relation::AtMost);
        assert_eq!(f[0].key().text, "current");
        assert_eq!(f[1].keyword.text, "force");
    }

    #[test]
    fn recovers_and_reports_every_error() {
        let src =
            "regulator a {\n supply = \n output = 2 V\n load = * 3\n}\nregulator b { x = 1 V }";
        let p = parse(src);
        assert!(p.errors.len() >= 2, "{:?}", p.errors);
        assert_eq!(p.file.items.len(), 2);
        for e in &p.errors {
            assert!(e.span.end <= src.len());
        }
    }

    #[test]
    fn a_missing_brace_is_reported_at_the_block_left_open() {
        let src = "regulator r {\n    limit sensed {\n        ratio = 2\n    pin vout {\n        off_chip = true\n    }\n}\n";
        let p = parse(src);
        assert_eq!(p.errors.len(), 1, "{:?}", p.errors);
        let at = &src[p.errors[0].span.clone()];
        assert_eq!(at, "{");
        assert_eq!(p.errors[0].span.start, src.find("sensed {").unwrap() + 7);
        // The pin is parsed as the regulator's, not inside the limit.
        let Item::Block(r) = &p.file.items[0] else {
            panic!()
        };
        assert!(
            r.members
                .iter()
                .any(|m| matches!(m, Member::Block(b) if b.keyword.text == "pin"))
        );
    }

    #[test]
    fn deep_nesting_is_cut_not_overflowed() {
        let depth = 10_000;
        let src = format!(
            "regulator r {{ x = {}1{} }}",
            "(".repeat(depth),
            ")".repeat(depth)
        );
        let p = parse(&src);
        assert!(
            p.errors
                .iter()
                .any(|e| e.message.contains("nesting deeper"))
        );
    }
}
