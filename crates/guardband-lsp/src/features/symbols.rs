//! The outline of a file (regulators, their sections, faults and analyses)
//! and the workspace-wide symbol search.

use crate::encoding::Encoding;
use crate::engine::Analysis;
use guardband_model::{BlockKind, FileId, Model, Node};
use tower_lsp_server::ls_types::{DocumentSymbol, Location, OneOf, SymbolKind, WorkspaceSymbol};

fn kind_of(kind: BlockKind) -> SymbolKind {
    match kind {
        BlockKind::Regulator => SymbolKind::CLASS,
        BlockKind::Process => SymbolKind::NAMESPACE,
        BlockKind::Supply => SymbolKind::PACKAGE,
        BlockKind::Fault => SymbolKind::EVENT,
        BlockKind::Analysis => SymbolKind::FUNCTION,
        BlockKind::Pin => SymbolKind::INTERFACE,
        BlockKind::Conductor | BlockKind::Metal => SymbolKind::STRUCT,
        BlockKind::Corner => SymbolKind::ENUM_MEMBER,
        _ => SymbolKind::OBJECT,
    }
}

#[allow(deprecated)]
fn symbol(analysis: &Analysis, model: &Model, node: &Node, encoding: Encoding) -> DocumentSymbol {
    let index = analysis.checked.ws.file(node.file).line_index();
    DocumentSymbol {
        name: node.key().to_string(),
        detail: Some(node.keyword.to_string()),
        kind: kind_of(node.kind),
        tags: None,
        deprecated: None,
        range: encoding.range(index, &node.span),
        selection_range: encoding.range(index, &node.name_span),
        children: Some(
            node.children
                .iter()
                .map(|c| symbol(analysis, model, model.node(*c), encoding))
                .collect(),
        ),
    }
}

/// The outline of `file`.
pub fn document(analysis: &Analysis, file: FileId, encoding: Encoding) -> Vec<DocumentSymbol> {
    let model = &analysis.checked.model;
    model
        .items
        .iter()
        .map(|i| model.node(*i))
        .filter(|n| n.file == file)
        .map(|n| symbol(analysis, model, n, encoding))
        .collect()
}

/// Blocks of every loaded file whose path contains `query` (case-insensitive).
pub fn workspace(analysis: &Analysis, query: &str, encoding: Encoding) -> Vec<WorkspaceSymbol> {
    let model = &analysis.checked.model;
    let query = query.to_lowercase();
    model
        .written()
        .filter(|n| n.path.to_lowercase().contains(&query))
        .filter_map(|n| {
            let index = analysis.checked.ws.file(n.file).line_index();
            Some(WorkspaceSymbol {
                name: n.key().to_string(),
                kind: kind_of(n.kind),
                tags: None,
                container_name: n.parent.map(|p| model.node(p).path.to_string()),
                location: OneOf::Left(Location::new(
                    analysis.uri(n.file)?,
                    encoding.range(index, &n.name_span),
                )),
                data: None,
            })
        })
        .collect()
}
