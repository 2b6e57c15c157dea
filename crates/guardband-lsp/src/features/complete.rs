//! Completion: the fields and blocks valid in the enclosing section (with
//! their dimension and a snippet), units after a number, names and dotted
//! paths after `=`, and the words of choice fields.

use super::locate;
use crate::engine::Analysis;
use guardband_model::schema::{self, BlockKind, FieldSpec, FieldType};
use guardband_model::{FileId, Model, Node};
use guardband_units::{Dimension, parse_unit};
use tower_lsp_server::ls_types::{
    CompletionItem, CompletionItemKind, Documentation, InsertTextFormat,
};

/// Unit spellings offered after a number; only those of the field's dimension are shown.
const UNIT_SPELLINGS: &[&str] = &[
    "A", "mA", "uA", "nA", "V", "mV", "uV", "W", "mW", "uF", "nF", "pF", "ohm", "mohm", "kohm",
    "s", "ms", "us", "ns", "h", "yr", "um", "mm", "nm", "mil", "°C", "K", "K/W", "mA/um^2",
    "A/cm^2", "mA/um", "eV", "uohm*cm", "deg", "%", "ppm", "V/us", "Hz", "kHz", "MHz", "uH", "nH",
];

/// Completion items at byte `offset` of `file`.
pub fn complete(analysis: &Analysis, file: FileId, offset: usize) -> Vec<CompletionItem> {
    let source = analysis.checked.ws.file(file);
    let text = &source.text;
    let line_start = text[..offset].rfind('\n').map(|i| i + 1).unwrap_or(0);
    let before = &text[line_start..offset];
    let enclosing = locate::innermost(analysis, file, offset);
    let model = &analysis.checked.model;
    // Inside a corner's `pass { }` or `limit NAME { }`: that block's fields.
    let enclosing = match enclosing {
        Some(c) if c.kind == BlockKind::Corner => corner_block(analysis, c, offset).or(enclosing),
        other => other,
    };
    let kind = enclosing.map(|n| n.kind);

    // The field this line sets, if the cursor is after its operator.
    let after_operator = before
        .rfind(['=', '<', '>'])
        .map(|i| (&before[..i], before[i + 1..].trim_start()));
    if let Some((lhs, typed)) = after_operator {
        let mut words = lhs.split_whitespace();
        let keyword = words.next().unwrap_or("");
        let name = words.next().filter(|w| !w.starts_with(['<', '>', '=']));
        let spec = kind.and_then(|k| schema::field_spec(k, keyword, name));
        if let Some(unit_part) = unit_context(typed) {
            return units(spec, unit_part);
        }
        return values(analysis, model, enclosing, spec, typed);
    }
    match enclosing {
        Some(node) => section(node),
        None => top_level(),
    }
}

/// The block of a corner's copy of its regulator that the corner's block
/// around `offset` restates: the corner's blocks are built only there.
fn corner_block<'a>(analysis: &'a Analysis, corner: &Node, offset: usize) -> Option<&'a Node> {
    let model = &analysis.checked.model;
    let variant = model.variants.iter().find(|v| v.corner == corner.id)?;
    let parse = &analysis.checked.ws.file(corner.file).parse;
    let regulator = model.node(variant.regulator);
    let written = parse.file.items.iter().find_map(|i| match i {
        guardband_syntax::Item::Block(b) if b.span == regulator.span => Some(b),
        _ => None,
    })?;
    let corner_block = written.members.iter().find_map(|m| match m {
        guardband_syntax::Member::Block(b) if b.span == corner.span => Some(b),
        _ => None,
    })?;
    let inner = corner_block.members.iter().find_map(|m| match m {
        guardband_syntax::Member::Block(b) if b.span.start <= offset && offset <= b.span.end => {
            Some(b)
        }
        _ => None,
    })?;
    model
        .node(variant.root)
        .children
        .iter()
        .map(|c| model.node(*c))
        .find(|n| n.keyword == inner.keyword.text.as_str() && n.key() == inner.key().text.as_str())
}

/// Whether a field belongs with the block's chosen variant: a field whose
/// documentation opens with variants (`replica: …`, `short_to_supply,
/// reverse_current: …`) is offered only in a block that chose one of them
/// (a limit's `scheme`, a fault's `event`), or before it chooses.
fn applies(node: &Node, doc: &str) -> bool {
    let (key, options) = match node.kind {
        BlockKind::Limit => ("scheme", schema::SCHEMES),
        BlockKind::Fault => ("event", schema::EVENTS),
        _ => return true,
    };
    let Some(chosen) = node.choice(key) else {
        return true;
    };
    let Some((head, _)) = doc.split_once(':') else {
        return true;
    };
    let variants: Vec<&str> = head.split(',').map(str::trim).collect();
    if !variants.iter().all(|v| options.contains(v)) {
        return true;
    }
    variants.contains(&chosen)
}

/// After a number (`2.2 u`, `2.2u`, `2.2 `), the unit typed so far.
fn unit_context(typed: &str) -> Option<&str> {
    if typed.ends_with(|c: char| c.is_ascii_digit()) {
        return None;
    }
    let number = typed.trim_end_matches(|c: char| c.is_alphabetic() || "°µΩ_".contains(c));
    let digits = number.trim_end();
    let word_start = digits
        .rfind(|c: char| !(c.is_ascii_alphanumeric() || c == '.' || c == '_'))
        .map(|i| i + 1)
        .unwrap_or(0);
    let token = &digits[word_start..];
    let is_number = token.starts_with(|c: char| c.is_ascii_digit())
        && token
            .chars()
            .all(|c| c.is_ascii_digit() || c == '.' || c == 'e' || c == 'E');
    is_number.then(|| typed[number.len()..].trim_start())
}

fn units(spec: Option<&FieldSpec>, typed: &str) -> Vec<CompletionItem> {
    let dims: Vec<Dimension> = match spec.map(|s| s.ty) {
        Some(FieldType::Quantity(k)) => vec![k.dim],
        Some(FieldType::AnyOf(ks)) => ks.iter().map(|k| k.dim).collect(),
        _ => Vec::new(),
    };
    UNIT_SPELLINGS
        .iter()
        .filter(|u| u.starts_with(typed) || typed.is_empty())
        .filter_map(|u| {
            let parsed = parse_unit(u).ok()?;
            (dims.is_empty() || dims.contains(&parsed.kind.dim)).then(|| CompletionItem {
                label: u.to_string(),
                kind: Some(CompletionItemKind::UNIT),
                detail: Some(parsed.kind.describe()),
                ..Default::default()
            })
        })
        .collect()
}

/// After `=`: choice words, or names and dotted paths in scope.
fn values(
    analysis: &Analysis,
    model: &Model,
    enclosing: Option<&Node>,
    spec: Option<&FieldSpec>,
    typed: &str,
) -> Vec<CompletionItem> {
    if let Some(FieldType::Choice(options)) = spec.map(|s| s.ty) {
        return options
            .iter()
            .map(|o| CompletionItem {
                label: o.to_string(),
                kind: Some(CompletionItemKind::ENUM_MEMBER),
                ..Default::default()
            })
            .collect();
    }
    if let Some(FieldType::Bool) = spec.map(|s| s.ty) {
        return ["true", "false"]
            .iter()
            .map(|o| CompletionItem {
                label: o.to_string(),
                kind: Some(CompletionItemKind::KEYWORD),
                ..Default::default()
            })
            .collect();
    }
    let Some(from) = enclosing else {
        return Vec::new();
    };
    let word = typed
        .rsplit(|c: char| !(c.is_alphanumeric() || c == '_' || c == '.'))
        .next()
        .unwrap_or("");
    // A reference: only blocks of the kinds it may name.
    match spec.map(|s| s.ty) {
        Some(FieldType::Ref(kinds)) => return references(analysis, model, from, kinds, word),
        Some(FieldType::Source) => {
            return references(analysis, model, from, &[BlockKind::Supply], word);
        }
        _ => {}
    }
    let mut out = Vec::new();
    if let Some((head, _)) = word.rsplit_once('.') {
        // A dotted path: list what the block before the last dot holds.
        if let Some(target) = resolve_block(analysis, model, from, head) {
            members(model, target, &mut out);
            if head.split('.').count() >= 1 {
                let terminals: &[&str] = match target.kind {
                    BlockKind::Pass => schema::PASS_TERMINALS,
                    BlockKind::Limit => schema::LIMIT_TERMINALS,
                    _ => &[],
                };
                out.extend(terminals.iter().map(|t| CompletionItem {
                    label: t.to_string(),
                    kind: Some(CompletionItemKind::INTERFACE),
                    detail: Some("terminal".into()),
                    ..Default::default()
                }));
            }
        } else if let Some(field_owner) = resolve_block(
            analysis,
            model,
            from,
            head.rsplit_once('.').map(|h| h.0).unwrap_or(""),
        ) && field_owner
            .fields
            .iter()
            .any(|f| Some(f.key.as_str()) == head.rsplit('.').next())
        {
            out.extend(["min", "nom", "max"].iter().map(|c| CompletionItem {
                label: c.to_string(),
                kind: Some(CompletionItemKind::PROPERTY),
                detail: Some("corner of the value".into()),
                ..Default::default()
            }));
        }
        return out;
    }
    // Names in scope: each enclosing block's fields and children, then the visible items.
    let mut scope = Some(from);
    while let Some(node) = scope {
        members(model, node, &mut out);
        scope = node.parent.map(|p| model.node(p));
    }
    for item in guardband_model::visible_items(&analysis.checked.ws, model, from.file) {
        let n = model.node(item);
        out.push(CompletionItem {
            label: n.key().to_string(),
            kind: Some(CompletionItemKind::MODULE),
            detail: Some(n.keyword.to_string()),
            ..Default::default()
        });
    }
    out.sort_by(|a, b| a.label.cmp(&b.label));
    out.dedup_by(|a, b| a.label == b.label);
    out
}

/// The blocks of `kinds` a reference field can name from `from`: children
/// of the enclosing blocks, visible items, and (as `item.child`) the
/// children of visible items, such as a process's metal layers; after a
/// dot, the children of the block before it.
fn references(
    analysis: &Analysis,
    model: &Model,
    from: &Node,
    kinds: &[BlockKind],
    word: &str,
) -> Vec<CompletionItem> {
    let item = |label: String, n: &Node| CompletionItem {
        label,
        kind: Some(CompletionItemKind::REFERENCE),
        detail: Some(n.keyword.to_string()),
        ..Default::default()
    };
    let children = |n: &Node| -> Vec<&Node> {
        n.children
            .iter()
            .map(|c| model.node(*c))
            .filter(|c| kinds.contains(&c.kind))
            .collect::<Vec<_>>()
    };
    let mut out = Vec::new();
    if let Some((head, _)) = word.rsplit_once('.') {
        if let Some(target) = resolve_block(analysis, model, from, head) {
            out.extend(
                children(target)
                    .into_iter()
                    .map(|c| item(c.key().to_string(), c)),
            );
        }
        return out;
    }
    let mut scope = Some(from);
    while let Some(node) = scope {
        out.extend(
            children(node)
                .into_iter()
                .map(|c| item(c.key().to_string(), c)),
        );
        scope = node.parent.map(|p| model.node(p));
    }
    for i in guardband_model::visible_items(&analysis.checked.ws, model, from.file) {
        let n = model.node(i);
        if kinds.contains(&n.kind) {
            out.push(item(n.key().to_string(), n));
        }
        if n.kind != BlockKind::Regulator {
            out.extend(
                children(n)
                    .into_iter()
                    .map(|c| item(format!("{}.{}", n.key(), c.key()), c)),
            );
        }
    }
    out.sort_by(|a, b| a.label.cmp(&b.label));
    out.dedup_by(|a, b| a.label == b.label);
    out
}

/// The block a dotted path names from `from` (enclosing scopes, then items).
fn resolve_block<'a>(
    analysis: &Analysis,
    model: &'a Model,
    from: &'a Node,
    path: &str,
) -> Option<&'a Node> {
    let mut parts = path.split('.').filter(|p| !p.is_empty());
    let first = parts.next()?;
    let child = |n: &'a Node, key: &str| {
        n.children
            .iter()
            .map(|c| model.node(*c))
            .find(|c| c.key() == key)
    };
    let mut scope = Some(from);
    let mut found = None;
    while let Some(n) = scope {
        if let Some(c) = child(n, first) {
            found = Some(c);
            break;
        }
        scope = n.parent.map(|p| model.node(p));
    }
    let mut node = match found {
        Some(n) => n,
        None => guardband_model::visible_items(&analysis.checked.ws, model, from.file)
            .into_iter()
            .map(|i| model.node(i))
            .find(|n| n.key() == first)?,
    };
    for part in parts {
        node = child(node, part)?;
    }
    Some(node)
}

fn members(model: &Model, node: &Node, out: &mut Vec<CompletionItem>) {
    for f in &node.fields {
        out.push(CompletionItem {
            label: f.key.to_string(),
            kind: Some(CompletionItemKind::FIELD),
            detail: Some(format!("{}: {}", node.path, f.spec.ty.describe())),
            ..Default::default()
        });
    }
    for c in node.children.iter().map(|c| model.node(*c)) {
        out.push(CompletionItem {
            label: c.key().to_string(),
            kind: Some(CompletionItemKind::STRUCT),
            detail: Some(c.keyword.to_string()),
            ..Default::default()
        });
    }
}

/// A snippet placeholder for a field's value.
fn placeholder(ty: FieldType) -> String {
    match ty {
        FieldType::Choice(options) => format!("${{1|{}|}}", options.join(",")),
        FieldType::Bool => "${1|true,false|}".into(),
        FieldType::Text => "\"$1\"".into(),
        _ => "$1".into(),
    }
}

/// The fields and blocks a section of this kind may hold.
fn section(node: &Node) -> Vec<CompletionItem> {
    let spec = schema::block_spec(node.kind);
    let mut out: Vec<CompletionItem> = spec
        .fields
        .iter()
        .filter(|f| applies(node, f.doc))
        .map(|f| {
            let label = match f.name {
                Some("*") => format!("{} NAME", f.keyword),
                Some(n) => format!("{} {n}", f.keyword),
                None => f.keyword.to_string(),
            };
            let op = if f.requirement { "<=" } else { "=" };
            let head = match f.name {
                Some("*") => format!("{} ${{2:name}}", f.keyword),
                _ => label.clone(),
            };
            CompletionItem {
                label,
                kind: Some(CompletionItemKind::FIELD),
                detail: Some(f.ty.describe()),
                documentation: Some(Documentation::String(f.doc.to_string())),
                insert_text: Some(format!("{head} {op} {}", placeholder(f.ty))),
                insert_text_format: Some(InsertTextFormat::SNIPPET),
                ..Default::default()
            }
        })
        .collect();
    out.extend(spec.children.iter().map(|k| block_item(*k)));
    out
}

fn block_item(kind: BlockKind) -> CompletionItem {
    let spec = schema::block_spec(kind);
    let insert = if spec.named {
        format!("{} ${{1:name}} {{\n\t$0\n}}", spec.keyword)
    } else {
        format!("{} {{\n\t$0\n}}", spec.keyword)
    };
    CompletionItem {
        label: spec.keyword.to_string(),
        kind: Some(CompletionItemKind::STRUCT),
        detail: Some("block".into()),
        documentation: Some(Documentation::String(spec.doc.to_string())),
        insert_text: Some(insert),
        insert_text_format: Some(InsertTextFormat::SNIPPET),
        ..Default::default()
    }
}

fn top_level() -> Vec<CompletionItem> {
    let mut out = vec![CompletionItem {
        label: "use".into(),
        kind: Some(CompletionItemKind::KEYWORD),
        insert_text: Some("use \"$1.guard\"".into()),
        insert_text_format: Some(InsertTextFormat::SNIPPET),
        ..Default::default()
    }];
    out.push(block_item(BlockKind::Regulator));
    out.push(block_item(BlockKind::Process));
    out.push(block_item(BlockKind::Supply));
    out
}

#[cfg(test)]
mod tests {
    use super::unit_context;

    #[test]
    fn finds_the_unit_being_typed() {
        assert_eq!(unit_context("2.2 u"), Some("u"));
        assert_eq!(unit_context("2.2u"), Some("u"));
        assert_eq!(unit_context("2.2 "), Some(""));
        assert_eq!(unit_context("2.2"), None);
        assert_eq!(unit_context("ratio * ref"), None);
        assert_eq!(unit_context("-20 °"), Some("°"));
    }
}
