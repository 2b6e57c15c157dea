//! Passes over the tokens before parsing: nesting beyond the limit is cut
//! out (so that no input can exhaust the parser's stack), and braces and
//! parentheses are balanced (so that recovery from unclosed blocks is
//! linear, and a missing `}` is reported at the block left open). Both run
//! before either parse; a file they report on goes straight to the
//! recovering parse.

use crate::Span;
use crate::lexer::Token;
use crate::parser::SyntaxError;

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
pub(crate) fn balance_delimiters<'s>(
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
        if missing > 0
            && let Some(i) = line_indent(source, previous_end, span.start)
        {
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
pub(crate) fn limit_nesting(
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
