//! Named operating corners. A regulator's `corner NAME { ... }` block gets a
//! copy of the regulator's tree, a [`Variant`], in which the corner's fields
//! and blocks stand in place of the regulator's own. The copy is evaluated,
//! derived and checked like a regulator of its own, so a temperature
//! coefficient is read at the corner's ambient, a pass device at its
//! process corner and a limit at the corner's supply, and a finding can
//! name the corner where it fails.
//!
//! The copy keeps the spans of the text it comes from: a field the corner
//! restates points into the corner, every other field into the regulator.

use crate::build::add_block;
use crate::model::{CornerOf, FieldValue, Model, NodeId, Variant};
use crate::schema::{self, BlockKind};
use crate::{Diagnostic, FileId};
use guardband_syntax::{Block, Member};

/// Fields of a `corner` block that label it and are not the regulator's.
const CORNER_ONLY: &[&str] = &["process", "description"];

/// Builds the variant of `regulator` (written as `block`) for each of its
/// `corner` blocks that was built as a node.
pub(crate) fn add_variants(
    model: &mut Model,
    file: FileId,
    regulator: NodeId,
    block: &Block,
    diagnostics: &mut Vec<Diagnostic>,
) {
    let corners: Vec<NodeId> = model
        .children(model.node(regulator), BlockKind::Corner)
        .map(|n| n.id)
        .collect();
    if corners.is_empty() {
        return;
    }
    let spec = schema::block_spec(BlockKind::Regulator);
    for corner in corners {
        let span = model.node(corner).span.clone();
        let Some(written) = block.members.iter().find_map(|m| match m {
            Member::Block(b) if b.span == span => Some(b),
            _ => None,
        }) else {
            continue;
        };
        let names = Names {
            regulator: block.key().text.as_str(),
            corner: written.key().text.as_str(),
        };
        let mut restated = Vec::new();
        let merged = merge(
            block,
            written,
            true,
            file,
            &names,
            &mut restated,
            diagnostics,
        );
        model
            .restated
            .extend(restated.into_iter().map(|(corner_name, written_name)| {
                crate::model::Restated {
                    file,
                    corner_name,
                    written_name,
                }
            }));
        let root = add_block(model, file, spec, &merged, None, diagnostics);
        link(model, root, regulator, corner);
        model.variants.push(Variant {
            regulator,
            corner,
            root,
        });
    }
}

/// The names a message about a corner uses.
struct Names<'a> {
    regulator: &'a str,
    corner: &'a str,
}

/// `written` with the members of `over` in place of its own: a field of the
/// same key is replaced where it stands, a block of the same keyword and
/// name is merged the same way, and fields `written` lacks are added at the
/// end. At the top (`top`), the regulator's own `corner` blocks are left
/// out. A block that `written` lacks is reported: a corner restates the
/// regulator's blocks, it does not add any.
fn merge(
    written: &Block,
    over: &Block,
    top: bool,
    file: FileId,
    names: &Names,
    restated: &mut Vec<(guardband_syntax::Span, guardband_syntax::Span)>,
    diagnostics: &mut Vec<Diagnostic>,
) -> Block {
    let mut used = vec![false; over.members.len()];
    let mut members = Vec::with_capacity(written.members.len() + over.members.len());
    for member in &written.members {
        match member {
            Member::Field(f) => {
                let stated = over.members.iter().position(|o| {
                    matches!(o, Member::Field(g) if g.keyword.text == f.keyword.text
                        && g.key().text == f.key().text)
                });
                match stated {
                    Some(i) if !(top && CORNER_ONLY.contains(&f.keyword.text.as_str())) => {
                        used[i] = true;
                        members.push(over.members[i].clone());
                    }
                    _ => members.push(member.clone()),
                }
            }
            Member::Block(b) if top && b.keyword.text == "corner" => {}
            Member::Block(b) => {
                let stated = over.members.iter().position(|o| {
                    matches!(o, Member::Block(c) if c.keyword.text == b.keyword.text
                        && c.key().text == b.key().text)
                });
                match stated {
                    Some(i) => {
                        used[i] = true;
                        let Member::Block(c) = &over.members[i] else {
                            unreachable!("found as a block")
                        };
                        if let (Some(cn), Some(wn)) = (&c.name, &b.name) {
                            restated.push((cn.span.clone(), wn.span.clone()));
                        }
                        members.push(Member::Block(merge(
                            b,
                            c,
                            false,
                            file,
                            names,
                            restated,
                            diagnostics,
                        )));
                    }
                    None => members.push(member.clone()),
                }
            }
            Member::Error(_) => members.push(member.clone()),
        }
    }
    for (member, used) in over.members.iter().zip(used) {
        if used {
            continue;
        }
        match member {
            Member::Field(f) if top && CORNER_ONLY.contains(&f.keyword.text.as_str()) => {}
            // A field the corner may not hold was reported when the corner
            // itself was built; the copy would report it again.
            Member::Field(f)
                if top
                    && schema::field_spec(
                        BlockKind::Corner,
                        &f.keyword.text,
                        f.name.as_ref().map(|n| n.text.as_str()),
                    )
                    .is_none() => {}
            Member::Field(_) => members.push(member.clone()),
            Member::Block(b) => {
                // A block the corner may not hold was reported when the
                // corner itself was built.
                if !top || schema::child_spec(Some(BlockKind::Corner), &b.keyword.text).is_some() {
                    diagnostics.push(not_restated(file, b, written, names));
                }
            }
            Member::Error(_) => {}
        }
    }
    Block {
        keyword: written.keyword.clone(),
        name: written.name.clone(),
        members,
        span: written.span.clone(),
    }
}

/// A corner's block that names no block of the regulator.
fn not_restated(file: FileId, b: &Block, written: &Block, names: &Names) -> Diagnostic {
    let what = match &b.name {
        Some(n) => format!("{} {}", b.keyword.text, n.text),
        None => b.keyword.text.to_string(),
    };
    let candidates = written.members.iter().filter_map(|m| match m {
        Member::Block(c) if c.keyword.text == b.keyword.text && c.keyword.text != "corner" => {
            Some(c.key().text.as_str())
        }
        _ => None,
    });
    let mut d = Diagnostic::error(
        "unknown-name",
        file,
        b.key().span.clone(),
        format!(
            "corner `{}` restates `{what}`, which `{}` does not have here",
            names.corner, names.regulator
        ),
    )
    .primary("no such block in the regulator");
    d = match crate::suggest::did_you_mean(&b.key().text, candidates) {
        Some(s) => d.help(format!("did you mean `{s}`?")),
        None => d.help(
            "a corner restates the regulator's own blocks with the values that differ there; \
             add the block to the regulator first",
        ),
    };
    d
}

/// Marks the copy rooted at `copy` as standing for `written`, child by
/// child (same kind and key).
fn link(model: &mut Model, copy: NodeId, written: NodeId, corner: NodeId) {
    model.nodes[copy.0 as usize].at_corner = Some(CornerOf { written, corner });
    let pairs: Vec<(NodeId, NodeId)> = model
        .node(copy)
        .children
        .iter()
        .map(|&c| {
            let child = model.node(c);
            let twin = model
                .node(written)
                .children
                .iter()
                .copied()
                .find(|&w| {
                    let w = model.node(w);
                    w.kind == child.kind && w.key() == child.key()
                })
                .unwrap_or(written);
            (c, twin)
        })
        .collect();
    for (c, w) in pairs {
        link(model, c, w, corner);
    }
}

/// After evaluation: a corner that states its supply as a voltage still
/// draws from the regulator's `supply` item, so the copy keeps the link.
pub(crate) fn settle(model: &mut Model) {
    for i in 0..model.variants.len() {
        let v = model.variants[i];
        let source = match model
            .node(v.regulator)
            .field("supply")
            .and_then(|f| f.value.as_ref())
        {
            Some(FieldValue::Sourced { source, .. }) => *source,
            _ => continue,
        };
        let root = &mut model.nodes[v.root.0 as usize];
        if let Some(field) = root.fields.iter_mut().find(|f| f.key == "supply")
            && let Some(FieldValue::Quantity(value)) = &field.value
        {
            let value = value.clone();
            field.value = Some(FieldValue::Sourced { value, source });
        }
    }
}

/// Drops diagnostics a variant repeats from the text it copies (the same
/// rule, place and message), keeping the first of each.
pub(crate) fn drop_repeats(diagnostics: &mut Vec<Diagnostic>) {
    let mut seen = rustc_hash::FxHashSet::default();
    diagnostics
        .retain(|d| seen.insert((d.rule, d.file, d.span.start, d.span.end, d.message.clone())));
}
