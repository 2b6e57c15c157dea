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
        .written()
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
    if node.kind == guardband_model::BlockKind::Corner
        && let Some(hit) = in_corner_copy(analysis, node, offset)
    {
        return Some(hit);
    }
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

/// A field written in one of a corner's blocks (`corner c { pass { ... } }`)
/// lives only in the corner's copy of the regulator: the hit is the copy's
/// field, so a hover shows the value at that corner.
fn in_corner_copy<'a>(analysis: &'a Analysis, corner: &Node, offset: usize) -> Option<Hit<'a>> {
    let model = &analysis.checked.model;
    let variant = model.variants.iter().find(|v| v.corner == corner.id)?;
    let mut stack = vec![variant.root];
    while let Some(id) = stack.pop() {
        let node = model.node(id);
        stack.extend(node.children.iter().copied());
        if node.id == variant.root {
            continue; // the corner's own fields are the corner node's
        }
        for (i, f) in node.fields.iter().enumerate() {
            if !model.set_by_corner(node, &f.key) {
                continue;
            }
            if contains(&f.key_span, offset) {
                return Some(Hit::FieldKey(node.id, i));
            }
            if contains(&f.span, offset) {
                return Some(Hit::FieldValue(node.id, i));
            }
        }
    }
    None
}
