//! Parsing: tokens to a [`ParsedFile`] plus every syntax error found.
//!
//! One grammar ([`crate::grammar`]) runs two ways. A file first goes
//! through the pre-passes (nesting cut, delimiters balanced); if they find
//! nothing, the grammar runs with chumsky's [`EmptyErr`] and no recovery:
//! no error bookkeeping at all, the common case on every keystroke. Only if
//! that fails does the same grammar run again with [`Rich`] errors and
//! recovery, to find and explain every error.
//!
//! Parsing never fails: bad members are skipped up to the next thing that
//! parses, bad blocks and parentheses become error nodes, and nesting
//! beyond the limit is cut out before parsing so that the recursive grammar
//! cannot exhaust the stack.

use crate::Span;
use crate::ast::*;
use crate::grammar::{Grammar, token_text};
use crate::lexer::{Comment, Token};
use crate::limits::{HARD_MAX_NESTING, MAX_ERRORS, MAX_NESTING};
use crate::prepass::{balance_delimiters, limit_nesting};
use chumsky::prelude::*;

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
    pub file: ParsedFile,
    pub errors: Vec<SyntaxError>,
}

fn range(span: SimpleSpan) -> Span {
    span.into_range()
}

/// Parses a whole file. Never panics; every error carries a span inside `source`.
pub fn parse(source: &str) -> Parse {
    parse_with(source, MAX_NESTING)
}

/// Like [`parse`], cutting nesting deeper than `max_nesting` (at most
/// [`HARD_MAX_NESTING`]); for configurable limits.
pub fn parse_with(source: &str, max_nesting: usize) -> Parse {
    let max_nesting = max_nesting.clamp(1, HARD_MAX_NESTING);
    let (tokens, comments) = crate::lexer::lex_into::<SimpleSpan>(source);
    // A file whose delimiters balance within the nesting limit needs no
    // pre-pass; nearly every file is one.
    if balanced_within(&tokens, max_nesting)
        && let Some(items) = quick(source, &tokens)
    {
        return Parse {
            file: ParsedFile { items, comments },
            errors: Vec::new(),
        };
    }
    let tokens: Vec<(Token<'_>, Span)> = tokens.into_iter().map(|(t, s)| (t, range(s))).collect();
    let (tokens, mut errors) = limit_nesting(tokens, max_nesting);
    let (tokens, unbalanced) = balance_delimiters(source, tokens);
    errors.extend(unbalanced);
    recovering(source, &spanned(tokens), comments, errors)
}

/// Whether every `(` and `{` is closed, in order, and none nests deeper than `max`.
fn balanced_within(tokens: &[(Token<'_>, SimpleSpan)], max: usize) -> bool {
    let mut open: Vec<bool> = Vec::with_capacity(max + 1);
    for (t, _) in tokens {
        match t {
            Token::LBrace | Token::LParen => {
                open.push(*t == Token::LBrace);
                if open.len() > max {
                    return false;
                }
            }
            Token::RBrace if open.pop() != Some(true) => return false,
            Token::RParen if open.pop() != Some(false) => return false,
            _ => {}
        }
    }
    open.is_empty()
}

/// Chumsky's input over a token list, with the end-of-input span.
fn input<'t, 's>(
    tokens: &'t [(Token<'s>, SimpleSpan)],
    end: usize,
) -> impl chumsky::input::ValueInput<'t, Token = Token<'s>, Span = SimpleSpan> {
    tokens.map((end..end).into(), |(t, s)| (t, s))
}

fn spanned(tokens: Vec<(Token<'_>, Span)>) -> Vec<(Token<'_>, SimpleSpan)> {
    tokens.into_iter().map(|(t, s)| (t, s.into())).collect()
}

/// The quick run of the grammar: no error type to speak of and no
/// recovery; `None` at the first thing it cannot take.
fn quick(source: &str, tokens: &[(Token<'_>, SimpleSpan)]) -> Option<Vec<Item>> {
    let grammar = Grammar {
        source,
        recover: false,
    };
    let (items, errors) = grammar
        .file::<_, EmptyErr>()
        .parse(input(tokens, source.len()))
        .into_output_errors();
    if errors.is_empty() { items } else { None }
}

/// The recovering run of the grammar, with rich errors.
fn recovering(
    source: &str,
    tokens: &[(Token<'_>, SimpleSpan)],
    comments: Vec<Comment>,
    mut errors: Vec<SyntaxError>,
) -> Parse {
    let grammar = Grammar {
        source,
        recover: true,
    };
    let (items, rich) = grammar
        .file::<_, Rich<'_, Token<'_>, SimpleSpan>>()
        .parse(input(tokens, source.len()))
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
        file: ParsedFile {
            items: items.unwrap_or_default(),
            comments,
        },
        errors,
    }
}

/// The quick parse alone, for tests that hold the two runs together.
#[cfg(test)]
pub(crate) fn parse_quick(source: &str) -> Option<Vec<Item>> {
    let (tokens, _) = crate::lexer::lex_into::<SimpleSpan>(source);
    quick(source, &tokens)
}

/// The recovering parse alone, for tests that hold the two runs together.
#[cfg(test)]
pub(crate) fn parse_recovering(source: &str) -> Parse {
    let (tokens, comments) = crate::lex(source);
    let (tokens, mut errors) = limit_nesting(tokens, MAX_NESTING);
    let (tokens, unbalanced) = balance_delimiters(source, tokens);
    errors.extend(unbalanced);
    recovering(source, &spanned(tokens), comments, errors)
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

#[cfg(test)]
mod tests {
    use super::*;

    fn fields(src: &str) -> Vec<Statement> {
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
