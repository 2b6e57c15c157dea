//! What sits at a position: a resolved name, a field's key or value, or a
//! block's name. Hover, navigation and completion start here.

use crate::engine::Analysis;
use guardband_model::{FileId, Node, NodeId, Reference, Symbol};

/// The thing under the cursor.
#[derive(Debug, Clone, PartialEq)]
pub enum Hit<'a> {
    /// A name inside a value, resolved.
    Reference(&'a Reference),
    /// The key of a field (`ratio` in `ratio = 2000`).
    FieldKey(NodeId, usize),
    /// Somewhere in a field's value that names nothing.
    FieldValue(NodeId, usize),
    /// The name (or keyword) of a block.
    NodeName(NodeId),
    /// Inside a block, between fields.
    Inside(NodeId),
}

impl Hit<'_> {
    /// The symbol this hit names, if any.
    pub fn symbol(&self) -> Option<Symbol> {
        match *self {
            Hit::Reference(r) => Some(r.target),
            Hit::FieldKey(n, i) => Some(Symbol::Field(n, i)),
            Hit::NodeName(n) => Some(Symbol::Node(n)),
            Hit::FieldValue(..) | Hit::Inside(_) => None,
        }
    }
}

fn contains(span: &std::ops::Range<usize>, offset: usize) -> bool {
    span.start <= offset && offset <= span.end
}

/// The innermost block of `file` whose span holds `offset`.
pub fn innermost(analysis: &Analysis, file: FileId, offset: usize) -> Option<&Node> {
    analysis
        .checked
        .model
        .nodes
        .iter()
        .filter(|n| n.file == file && contains(&n.span, offset))
        .min_by_key(|n| n.span.len())
}

/// What is at byte `offset` of `file`.
pub fn at(analysis: &Analysis, file: FileId, offset: usize) -> Option<Hit<'_>> {
    let refs = &analysis.checked.model.references;
    let first = refs.partition_point(|r| r.file < file || (r.file == file && r.span.end < offset));
    if let Some(r) = refs[first..]
        .iter()
        .take_while(|r| r.file == file && r.span.start <= offset)
        .find(|r| contains(&r.span, offset))
    {
        return Some(Hit::Reference(r));
    }
    let node = innermost(analysis, file, offset)?;
    for (i, f) in node.fields.iter().enumerate() {
        if contains(&f.key_span, offset) {
            return Some(Hit::FieldKey(node.id, i));
        }
        if contains(&f.span, offset) {
            return Some(Hit::FieldValue(node.id, i));
        }
    }
    if contains(&node.header_span, offset) {
        return Some(Hit::NodeName(node.id));
    }
    Some(Hit::Inside(node.id))
}
