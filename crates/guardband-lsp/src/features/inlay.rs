//! Inlay hints: the evaluated window after every value computed from other
//! values (`threshold = ratio * reference  ⇒ 190 uA .. 210 uA`), and, after
//! each limit's and conductor's name, its derived figure as the derived
//! view words it (the hover and the report show the same row).

use crate::encoding::Encoding;
use crate::engine::Analysis;
use guardband_model::{BlockKind, FileId};
use guardband_rules::derive::view::{self, Role};
use guardband_rules::show::bounds;
use guardband_syntax::{Expr, ExprKind};
use tower_lsp_server::ls_types::{InlayHint, InlayHintKind, InlayHintLabel};

/// Whether a value is computed (names or operations) rather than written out.
fn is_derived(e: &Expr) -> bool {
    match &e.kind {
        ExprKind::Path(_) | ExprKind::Call(..) | ExprKind::Binary(..) => true,
        ExprKind::Paren(x) | ExprKind::Neg(x) => is_derived(x),
        ExprKind::Range(a, b) => is_derived(a) || is_derived(b),
        ExprKind::Tolerance {
            base, plus, minus, ..
        } => base.as_deref().is_some_and(is_derived) || is_derived(plus) || is_derived(minus),
        _ => false,
    }
}

fn hint(position: tower_lsp_server::ls_types::Position, label: String) -> InlayHint {
    InlayHint {
        position,
        label: InlayHintLabel::String(label),
        kind: Some(InlayHintKind::TYPE),
        text_edits: None,
        tooltip: None,
        padding_left: Some(true),
        padding_right: None,
        data: None,
    }
}

/// The hints of `file` within the byte span `within`.
pub fn hints(
    analysis: &Analysis,
    file: FileId,
    within: std::ops::Range<usize>,
    encoding: Encoding,
) -> Vec<InlayHint> {
    let index = analysis.checked.ws.file(file).line_index();
    let (lo, hi) = (within.start, within.end);
    let model = &analysis.checked.model;
    let mut out = Vec::new();
    // The derived rows of each regulator with a block in range, worded once.
    let mut derived_rows = std::collections::HashMap::new();
    for node in model
        .written()
        .filter(|n| n.file == file && n.span.end >= lo && n.span.start <= hi)
    {
        let wanted = match node.kind {
            BlockKind::Limit => Some((Role::LimitWorstCase, "window")),
            BlockKind::Conductor => Some((Role::ConductorRating, "rated")),
            _ => None,
        };
        if let Some((role, word)) = wanted
            && (lo..=hi).contains(&node.name_span.end)
        {
            let regulator = model.item_of(node.id).id;
            let rows = derived_rows.entry(regulator).or_insert_with(|| {
                analysis
                    .checked
                    .derived_for(regulator)
                    .map(|d| view::rows(model, d, &analysis.checked.config.options))
                    .unwrap_or_default()
            });
            if let Some(row) = rows.iter().find(|r| r.node == node.id && r.role == role) {
                out.push(hint(
                    encoding.position(index, node.name_span.end),
                    format!("{word} {}", row.value),
                ));
            }
        }
        for f in &node.fields {
            let end = f.expr.span.end;
            if !(lo..=hi).contains(&end) || !is_derived(&f.expr) {
                continue;
            }
            if let Some(v) = f.quantity() {
                out.push(hint(
                    encoding.position(index, end),
                    format!("⇒ {}", bounds(v)),
                ));
            }
        }
    }
    out.sort_by_key(|h| (h.position.line, h.position.character));
    out
}
