//! Go to definition, find references and rename, across `use` imports.
//!
//! Field keys are the schema's keywords, and blocks without a name are
//! known by their keyword (`pass`, `startup`), so only the names a user
//! chose can be renamed: named blocks, and the name of a `spread NAME`; a
//! new name must be a plain identifier that no other block or field in
//! scope already uses.

use super::locate;
use crate::encoding::Encoding;
use crate::engine::Analysis;
use guardband_model::{FileId, Node, Symbol};
use guardband_syntax::Item;
use std::collections::HashMap;
use tower_lsp_server::ls_types::{
    Location, PrepareRenameResponse, Range, TextEdit, Uri, WorkspaceEdit,
};

fn location(
    analysis: &Analysis,
    file: FileId,
    span: &std::ops::Range<usize>,
    encoding: Encoding,
) -> Option<Location> {
    let index = analysis.checked.ws.file(file).line_index();
    Some(Location::new(
        analysis.uri(file)?,
        encoding.range(index, span),
    ))
}

/// The symbol at byte `offset`.
pub fn symbol_at(analysis: &Analysis, file: FileId, offset: usize) -> Option<Symbol> {
    locate::at(analysis, file, offset)?.symbol()
}

/// Where the name at byte `offset` is defined; on a `use` path, the file it imports.
pub fn definition(
    analysis: &Analysis,
    file: FileId,
    offset: usize,
    encoding: Encoding,
) -> Option<Location> {
    let at = offset;
    let source = analysis.checked.ws.file(file);
    for item in &source.parse.file.items {
        if let Item::Use(u) = item
            && u.path_span.start <= at
            && at <= u.path_span.end
        {
            let (target, _) = source.imports.iter().find(|(_, span)| *span == u.span)?;
            return location(analysis, *target, &(0..0), encoding);
        }
    }
    let symbol = symbol_at(analysis, file, offset)?;
    let (def_file, span) = analysis.checked.model.definition(symbol);
    location(analysis, def_file, &span, encoding)
}

/// Every use of the symbol at byte `offset` (and its definition, if asked).
pub fn references(
    analysis: &Analysis,
    file: FileId,
    offset: usize,
    include_declaration: bool,
    encoding: Encoding,
) -> Option<Vec<Location>> {
    let symbol = symbol_at(analysis, file, offset)?;
    let mut out = Vec::new();
    if include_declaration {
        let (f, span) = analysis.checked.model.definition(symbol);
        out.extend(location(analysis, f, &span, encoding));
    }
    out.extend(
        uses(analysis, symbol)
            .into_iter()
            .filter_map(|(f, span)| location(analysis, f, &span, encoding)),
    );
    Some(out)
}

/// Spans naming `symbol` outside its definition: resolved references, and
/// for a pin, the names of `force PIN = ...` fields in its regulator.
fn uses(analysis: &Analysis, symbol: Symbol) -> Vec<(FileId, std::ops::Range<usize>)> {
    let model = &analysis.checked.model;
    let mut out: Vec<_> = model
        .references
        .iter()
        .filter(|r| r.target == symbol)
        .map(|r| (r.file, r.span.clone()))
        .collect();
    if let Symbol::Node(n) = symbol {
        let node = model.node(n);
        // A corner that restates the block names it again.
        out.extend(
            model
                .restated
                .iter()
                .filter(|r| r.file == node.file && r.written_name == node.name_span)
                .map(|r| (r.file, r.corner_name.clone())),
        );
        if node.kind == guardband_model::BlockKind::Pin {
            let regulator = model.item_of(n);
            let mut stack = vec![regulator.id];
            while let Some(id) = stack.pop() {
                let m = model.node(id);
                stack.extend(m.children.iter().copied());
                // `force PIN` in an analysis and `port PIN` in a circuit
                // name the pin by its name.
                let by_name =
                    |f: &&guardband_model::Field| f.keyword == "force" || f.keyword == "port";
                for f in m.fields.iter().filter(by_name) {
                    if f.name.as_deref() == Some(node.key()) {
                        out.push((m.file, f.key_span.clone()));
                    }
                }
            }
        }
    }
    out
}

/// Whether the symbol can be renamed; its current range if so.
pub fn prepare_rename(
    analysis: &Analysis,
    file: FileId,
    offset: usize,
    encoding: Encoding,
) -> Option<PrepareRenameResponse> {
    let at = offset;
    let hit = locate::at(analysis, file, at)?;
    let symbol = hit.symbol()?;
    renamable(analysis, symbol).ok()?;
    let span = match hit {
        locate::Hit::Reference(r) => r.span.clone(),
        _ => analysis.checked.model.definition(symbol).1,
    };
    let index = analysis.checked.ws.file(file).line_index();
    Some(PrepareRenameResponse::Range(encoding.range(index, &span)))
}

/// The block a renamed name lives in (the block itself, or the block
/// holding a renamed field), or why the name cannot be renamed.
fn renamable(analysis: &Analysis, symbol: Symbol) -> Result<&Node, String> {
    let model = &analysis.checked.model;
    match symbol {
        // A spread's name is the user's; other field keys are the language's.
        Symbol::Field(n, i) if model.node(n).fields[i].keyword == "spread" => Ok(model.node(n)),
        Symbol::Field(n, i) => Err(format!(
            "`{}` is a field of the language, not a name of yours",
            model.node(n).fields[i].key
        )),
        Symbol::Node(n) => {
            let node = model.node(n);
            if node.name.is_none() {
                return Err(format!(
                    "`{}` is a block known by its keyword; it has no name to rename",
                    node.keyword
                ));
            }
            Ok(node)
        }
    }
}

fn is_identifier(name: &str) -> bool {
    let mut chars = name.chars();
    chars
        .next()
        .is_some_and(|c| c.is_ascii_alphabetic() || c == '_')
        && chars.all(|c| c.is_ascii_alphanumeric() || c == '_')
        && !["use", "true", "false", "min", "nom", "max"].contains(&name)
}

/// Renames the block at byte `offset` everywhere the analysis can see.
/// `Ok(None)` when there is nothing to rename there.
pub fn rename(
    analysis: &Analysis,
    file: FileId,
    offset: usize,
    new_name: &str,
    encoding: Encoding,
) -> Result<Option<WorkspaceEdit>, String> {
    let Some(symbol) = symbol_at(analysis, file, offset) else {
        return Ok(None);
    };
    let node = renamable(analysis, symbol)?;
    if !is_identifier(new_name) {
        return Err(format!(
            "`{new_name}` is not a valid name (letters, digits and `_`, not starting with a digit)"
        ));
    }
    let model = &analysis.checked.model;
    if new_name == model.symbol_name(symbol) {
        return Ok(Some(WorkspaceEdit::default()));
    }
    let clash = match symbol {
        Symbol::Field(..) => within(analysis, node, new_name),
        Symbol::Node(_) => clash(analysis, node, new_name),
    };
    if let Some(clash) = clash {
        return Err(clash);
    }
    let model = &analysis.checked.model;
    let mut spans = vec![model.definition(symbol)];
    spans.extend(uses(analysis, symbol));
    let mut changes: HashMap<Uri, Vec<TextEdit>> = HashMap::new();
    for (f, span) in spans {
        if let Some(loc) = location(analysis, f, &span, encoding) {
            changes.entry(loc.uri).or_default().push(TextEdit {
                range: Range::new(loc.range.start, loc.range.end),
                new_text: new_name.to_string(),
            });
        }
    }
    for edits in changes.values_mut() {
        edits.sort_by_key(|e| (e.range.start.line, e.range.start.character));
        edits.dedup();
    }
    Ok(Some(WorkspaceEdit {
        changes: Some(changes),
        ..Default::default()
    }))
}

/// Why `new_name` would clash with something a reference could mean instead.
fn clash(analysis: &Analysis, node: &Node, new_name: &str) -> Option<String> {
    let model = &analysis.checked.model;
    match node.parent {
        Some(p) => within(analysis, model.node(p), new_name),
        None => model
            .items
            .iter()
            .map(|i| model.node(*i))
            .find(|n| n.key() == new_name)
            .map(|n| {
                format!(
                    "a {} named `{new_name}` already exists in {}",
                    n.keyword,
                    analysis.checked.ws.file(n.file).display
                )
            }),
    }
}

/// Why `new_name` is taken inside `parent`: by a field or a block.
fn within(analysis: &Analysis, parent: &Node, new_name: &str) -> Option<String> {
    let model = &analysis.checked.model;
    if parent.fields.iter().any(|f| f.key == new_name) {
        return Some(format!(
            "`{}` already has a field `{new_name}`",
            parent.path
        ));
    }
    if parent
        .children
        .iter()
        .any(|c| model.node(*c).key() == new_name)
    {
        return Some(format!(
            "`{}` already has a block named `{new_name}`",
            parent.path
        ));
    }
    None
}
