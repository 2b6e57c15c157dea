//! Semantic tokens: keywords, block names, field keys, names in values,
//! choice words, numbers, units, tolerance operators, strings and comments.

use crate::encoding::Encoding;
use crate::engine::Analysis;
use guardband_model::FileId;
use guardband_model::schema::FieldType;
use guardband_syntax::{Block, Item, LineIndex, Member, Token, lex};
use std::collections::HashMap;
use tower_lsp_server::ls_types::{
    SemanticToken, SemanticTokenType, SemanticTokens, SemanticTokensLegend,
};

/// The token types, in legend order.
const TYPES: &[SemanticTokenType] = &[
    SemanticTokenType::KEYWORD,
    SemanticTokenType::CLASS,
    SemanticTokenType::PROPERTY,
    SemanticTokenType::VARIABLE,
    SemanticTokenType::ENUM_MEMBER,
    SemanticTokenType::NUMBER,
    // Units: the standard type editors colour most like a type name.
    SemanticTokenType::TYPE,
    // Tolerances: `±` and `+/-`.
    SemanticTokenType::OPERATOR,
    SemanticTokenType::STRING,
    SemanticTokenType::COMMENT,
];

#[derive(Clone, Copy)]
enum Kind {
    Keyword = 0,
    Block = 1,
    Field = 2,
    Name = 3,
    Choice = 4,
    Number = 5,
    Unit = 6,
    Tolerance = 7,
    Text = 8,
    Comment = 9,
}

/// The legend announced in the capabilities.
pub fn legend() -> SemanticTokensLegend {
    SemanticTokensLegend {
        token_types: TYPES.to_vec(),
        token_modifiers: Vec::new(),
    }
}

fn block_spans(b: &Block, out: &mut HashMap<usize, Kind>) {
    out.insert(b.keyword.span.start, Kind::Keyword);
    if let Some(n) = &b.name {
        out.insert(n.span.start, Kind::Block);
    }
    for m in &b.members {
        match m {
            Member::Field(f) => {
                out.insert(f.keyword.span.start, Kind::Field);
                if let Some(n) = &f.name {
                    out.insert(n.span.start, Kind::Field);
                }
            }
            Member::Block(inner) => block_spans(inner, out),
            Member::Error(_) => {}
        }
    }
}

/// The tokens of `file`, all of them or those in the byte span `within`.
pub fn tokens(
    analysis: &Analysis,
    file: FileId,
    within: Option<std::ops::Range<usize>>,
    encoding: Encoding,
) -> SemanticTokens {
    let source = analysis.checked.ws.file(file);
    let mut kinds = HashMap::new();
    for item in &source.parse.file.items {
        if let Item::Block(b) = item {
            block_spans(b, &mut kinds);
        }
    }
    for node in analysis.checked.model.written().filter(|n| n.file == file) {
        for f in &node.fields {
            if matches!(f.spec.ty, FieldType::Choice(_)) {
                kinds.insert(f.expr.span.start, Kind::Choice);
            }
        }
    }
    let index = source.line_index();
    let (lo, hi) = match within {
        Some(r) => (r.start, r.end),
        None => (0, usize::MAX),
    };
    let (toks, comments) = lex(&source.text);
    let mut spans: Vec<(usize, usize, Kind)> = Vec::with_capacity(toks.len() + comments.len());
    for (tok, span) in &toks {
        match tok {
            Token::Use | Token::True | Token::False => {
                spans.push((span.start, span.end, Kind::Keyword))
            }
            Token::Ident(_) => spans.push((
                span.start,
                span.end,
                kinds.get(&span.start).copied().unwrap_or(Kind::Name),
            )),
            Token::Number(n) => match n.unit_start {
                Some(u) => {
                    spans.push((span.start, span.start + n.number_len, Kind::Number));
                    spans.push((span.start + u, span.end, Kind::Unit));
                }
                None => spans.push((span.start, span.end, Kind::Number)),
            },
            Token::Str(_) => spans.push((span.start, span.end, Kind::Text)),
            Token::PlusMinus => spans.push((span.start, span.end, Kind::Tolerance)),
            _ => {}
        }
    }
    spans.extend(
        comments
            .iter()
            .map(|c| (c.span.start, c.span.end, Kind::Comment)),
    );
    spans.sort_by_key(|s| s.0);
    SemanticTokens {
        result_id: None,
        data: encode(index, &spans, lo, hi, encoding),
    }
}

/// Delta-encodes tokens as the protocol asks; a token never spans lines here.
fn encode(
    index: &LineIndex,
    spans: &[(usize, usize, Kind)],
    lo: usize,
    hi: usize,
    encoding: Encoding,
) -> Vec<SemanticToken> {
    let mut out = Vec::with_capacity(spans.len());
    let (mut line, mut col) = (0u32, 0u32);
    for &(start, end, kind) in spans.iter().filter(|s| s.1 >= lo && s.0 <= hi) {
        let a = encoding.position(index, start);
        let b = encoding.position(index, end);
        if b.line != a.line || b.character <= a.character {
            continue;
        }
        let delta_line = a.line - line;
        let delta_start = if delta_line == 0 {
            a.character - col
        } else {
            a.character
        };
        out.push(SemanticToken {
            delta_line,
            delta_start,
            length: b.character - a.character,
            token_type: kind as u32,
            token_modifiers_bitset: 0,
        });
        line = a.line;
        col = a.character;
    }
    out
}
