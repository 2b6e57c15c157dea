//! The logos lexer: source text to tokens with byte spans, comments kept aside.

use logos::Logos;
use std::fmt;
use std::ops::Range;

/// A byte range into the source text.
pub type Span = Range<usize>;

/// A number literal and the unit written after it (if any), as offsets into its slice.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NumberToken {
    /// Length in bytes of the numeric part at the start of the token.
    pub number_len: usize,
    /// Byte offset within the token where the unit starts, if a unit follows.
    pub unit_start: Option<usize>,
}

/// The tokens of a `.guard` file.
#[derive(Logos, Debug, Clone, Copy, PartialEq)]
#[logos(skip r"[ \t\r\n\f\u{FEFF}]+")]
pub enum Token<'src> {
    /// Runs to the end of the line: `\n`, `\r\n` or a lone `\r`.
    #[regex(r"//[^\r\n]*")]
    Comment(&'src str),
    #[token("use")]
    Use,
    #[token("true")]
    True,
    #[token("false")]
    False,
    #[regex(r"[A-Za-z_][A-Za-z0-9_]*")]
    Ident(&'src str),
    #[regex(r"[0-9]+(\.[0-9]+)?([eE][+-]?[0-9]+)?", lex_number)]
    Number(NumberToken),
    #[regex(r#""[^"\r\n]*""#)]
    Str(&'src str),
    #[token("{")]
    LBrace,
    #[token("}")]
    RBrace,
    #[token("(")]
    LParen,
    #[token(")")]
    RParen,
    #[token(",")]
    Comma,
    #[token(".")]
    Dot,
    #[token("..")]
    DotDot,
    #[token("=")]
    Assign,
    #[token("==")]
    EqEq,
    #[token("<=")]
    Le,
    #[token(">=")]
    Ge,
    #[token("<")]
    Lt,
    #[token(">")]
    Gt,
    #[token("+")]
    Plus,
    #[token("-")]
    Minus,
    #[token("*")]
    Star,
    #[token("/")]
    Slash,
    #[token("±")]
    #[token("+/-")]
    PlusMinus,
    /// Characters that start no token; adjacent ones are merged into one.
    Error,
    /// Text cut out before parsing (nested too deep), already reported;
    /// never produced by the lexer.
    Cut,
}

impl fmt::Display for Token<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Token::Comment(_) => write!(f, "a comment"),
            Token::Use => write!(f, "`use`"),
            Token::True => write!(f, "`true`"),
            Token::False => write!(f, "`false`"),
            Token::Ident(s) => write!(f, "`{s}`"),
            Token::Number(_) => write!(f, "a number"),
            Token::Str(_) => write!(f, "a string"),
            Token::LBrace => write!(f, "`{{`"),
            Token::RBrace => write!(f, "`}}`"),
            Token::LParen => write!(f, "`(`"),
            Token::RParen => write!(f, "`)`"),
            Token::Comma => write!(f, "`,`"),
            Token::Dot => write!(f, "`.`"),
            Token::DotDot => write!(f, "`..`"),
            Token::Assign => write!(f, "`=`"),
            Token::EqEq => write!(f, "`==`"),
            Token::Le => write!(f, "`<=`"),
            Token::Ge => write!(f, "`>=`"),
            Token::Lt => write!(f, "`<`"),
            Token::Gt => write!(f, "`>`"),
            Token::Plus => write!(f, "`+`"),
            Token::Minus => write!(f, "`-`"),
            Token::Star => write!(f, "`*`"),
            Token::Slash => write!(f, "`/`"),
            Token::PlusMinus => write!(f, "`±`"),
            Token::Error => write!(f, "an unexpected character"),
            Token::Cut => write!(f, "text nested too deep"),
        }
    }
}

fn is_unit_start(c: char) -> bool {
    c.is_ascii_alphabetic() || matches!(c, 'µ' | 'μ' | 'Ω' | '°' | '%')
}

fn is_unit_continue(c: char) -> bool {
    c.is_ascii_alphanumeric() || matches!(c, '_' | 'µ' | 'μ' | 'Ω' | '°' | '%')
}

/// Length in bytes of a unit spelling at the start of `text` (0 if none).
fn unit_len(text: &str) -> usize {
    let mut chars = text.char_indices().peekable();
    match chars.peek() {
        Some((_, c)) if is_unit_start(*c) => {}
        _ => return 0,
    }
    let mut end = 0;
    while let Some((i, c)) = chars.next() {
        if is_unit_continue(c) {
            end = i + c.len_utf8();
        } else if matches!(c, '*' | '/' | '·') {
            match chars.peek() {
                Some((_, n)) if is_unit_start(*n) => end = i + c.len_utf8(),
                _ => break,
            }
        } else if c == '^' {
            let rest = &text[i + 1..];
            let digits = rest.strip_prefix('-').unwrap_or(rest);
            let n = digits.bytes().take_while(u8::is_ascii_digit).count();
            if n == 0 {
                break;
            }
            let sign = rest.len() - digits.len();
            end = i + 1 + sign + n;
            while chars.peek().is_some_and(|(j, _)| *j < end) {
                chars.next();
            }
        } else {
            break;
        }
    }
    end
}

/// Takes the unit after a number on the same line, unless that word is really
/// the start of the next field (`ratio = 5000 threshold = ...`).
fn lex_number<'src>(lex: &mut logos::Lexer<'src, Token<'src>>) -> NumberToken {
    let number_len = lex.slice().len();
    let rest = lex.remainder();
    let gap = rest.len() - rest.trim_start_matches([' ', '\t']).len();
    let after_gap = &rest[gap..];
    let len = unit_len(after_gap);
    if len == 0 {
        return NumberToken {
            number_len,
            unit_start: None,
        };
    }
    let word = &after_gap[..len];
    let follow = after_gap[len..].trim_start_matches([' ', '\t']);
    let starts_field = (follow.starts_with('=') && !follow.starts_with("=="))
        || follow.starts_with('{')
        || follow.starts_with('<')
        || follow.starts_with('>');
    if starts_field || matches!(word, "true" | "false" | "use") {
        return NumberToken {
            number_len,
            unit_start: None,
        };
    }
    lex.bump(gap + len);
    NumberToken {
        number_len,
        unit_start: Some(number_len + gap),
    }
}

/// A comment with its span, kept for suppressions and hovers.
#[derive(Debug, Clone, PartialEq)]
pub struct Comment {
    pub text: String,
    pub span: Span,
}

/// The ends of a span, whatever its type.
pub(crate) trait SpanEnds {
    fn end(&self) -> usize;
    fn set_end(&mut self, end: usize);
}

impl SpanEnds for Span {
    fn end(&self) -> usize {
        self.end
    }
    fn set_end(&mut self, end: usize) {
        self.end = end;
    }
}

impl SpanEnds for chumsky::span::SimpleSpan {
    fn end(&self) -> usize {
        self.end
    }
    fn set_end(&mut self, end: usize) {
        self.end = end;
    }
}

/// Splits source text into tokens (without comments) and comments.
///
/// Never fails: characters that start no token become one [`Token::Error`]
/// per run of adjacent bad characters.
pub fn lex(source: &str) -> (Vec<(Token<'_>, Span)>, Vec<Comment>) {
    lex_into(source)
}

/// [`lex`] into any span type that a byte range converts into (the
/// parser's own span type saves a copy of the token list).
pub(crate) fn lex_into<S: From<Span> + SpanEnds>(
    source: &str,
) -> (Vec<(Token<'_>, S)>, Vec<Comment>) {
    // Specs run at about one token per five bytes; sizing for that saves
    // the copies of a growing list.
    let mut tokens: Vec<(Token<'_>, S)> = Vec::with_capacity(source.len() / 5 + 16);
    let mut comments = Vec::new();
    for (result, span) in Token::lexer(source).spanned() {
        match result {
            Ok(Token::Comment(text)) => comments.push(Comment {
                text: text.to_string(),
                span,
            }),
            Ok(tok) => tokens.push((tok, S::from(span))),
            Err(()) => match tokens.last_mut() {
                Some((Token::Error, last)) if last.end() == span.start => last.set_end(span.end),
                _ => tokens.push((Token::Error, S::from(span))),
            },
        }
    }
    (tokens, comments)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn kinds(src: &str) -> Vec<String> {
        lex(src)
            .0
            .into_iter()
            .map(|(t, s)| format!("{t}:{}", &src[s]))
            .collect()
    }

    #[test]
    fn numbers_take_units_on_the_same_line() {
        assert_eq!(kinds("2.2 uF"), vec!["a number:2.2 uF"]);
        assert_eq!(kinds("30 mA/um^2"), vec!["a number:30 mA/um^2"]);
        assert_eq!(
            kinds("5000\nreference"),
            vec!["a number:5000", "`reference`:reference"]
        );
        assert_eq!(
            kinds("5000 threshold = x"),
            vec!["a number:5000", "`threshold`:threshold", "`=`:=", "`x`:x"]
        );
        assert_eq!(kinds("-20 °C"), vec!["`-`:-", "a number:20 °C"]);
        assert_eq!(kinds("1e-3 A"), vec!["a number:1e-3 A"]);
        assert_eq!(kinds("8 %/K"), vec!["a number:8 %/K"]);
        assert_eq!(kinds("2 m^-2"), vec!["a number:2 m^-2"]);
        assert_eq!(
            kinds("2 m^x"),
            vec!["a number:2 m", "an unexpected character:^", "`x`:x"]
        );
    }

    #[test]
    fn ranges_and_tolerances() {
        assert_eq!(
            kinds("0 mA .. 150 mA"),
            vec!["a number:0 mA", "`..`:..", "a number:150 mA"]
        );
        assert_eq!(kinds("1..2"), vec!["a number:1", "`..`:..", "a number:2"]);
        assert_eq!(kinds("± 8 %")[0], "`±`:±");
        assert_eq!(kinds("+/- 8 %")[0], "`±`:+/-");
    }

    #[test]
    fn comments_are_kept_aside_and_errors_merge() {
        // A lone carriage return ends a comment, as LSP and editors count lines.
        let (cr_tokens, cr_comments) = lex("a // note\rbogus = 1");
        assert_eq!(cr_comments[0].text, "// note");
        assert_eq!(cr_tokens.len(), 4, "{cr_tokens:?}");
        let (tokens, comments) = lex("a // note\n@@@ b");
        assert_eq!(comments.len(), 1);
        assert_eq!(comments[0].text, "// note");
        assert_eq!(tokens.len(), 3);
        assert_eq!(tokens[1], (Token::Error, 10..13));
    }
}
