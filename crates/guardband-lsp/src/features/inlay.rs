//! Inlay hints: the evaluated window after every value computed from other
//! values (`threshold = ratio * reference  ⇒ 190 uA .. 210 uA`), and the
//! derived limit window after each limit's name.

use crate::encoding::Encoding;
use crate::engine::Analysis;
use guardband_model::{BlockKind, FileId};
use guardband_rules::format::bounds;
use guardband_syntax::{Expr, ExprKind};
use tower_lsp_server::ls_types::{InlayHint, InlayHintKind, InlayHintLabel, Range};

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

/// The hints of `file` within `range`.
pub fn hints(
    analysis: &Analysis,
    file: FileId,
    range: Range,
    encoding: Encoding,
) -> Vec<InlayHint> {
    let index = &analysis.checked.ws.file(file).line_index;
    let a = encoding.offset(index, range.start);
    let b = encoding.offset(index, range.end);
    let (lo, hi) = (a.min(b), a.max(b));
    let model = &analysis.checked.model;
    let mut out = Vec::new();
    for node in model
        .nodes
        .iter()
        .filter(|n| n.file == file && n.span.end >= lo && n.span.start <= hi)
    {
        if node.kind == BlockKind::Limit
            && let Some(d) = analysis.checked.derived_for(model.item_of(node.id).id)
            && let Some(Ok(window)) = d.limit(node.id).map(|l| l.window.as_ref())
            && (lo..=hi).contains(&node.name_span.end)
        {
            out.push(hint(
                encoding.position(index, node.name_span.end),
                format!("window {}", bounds(window)),
            ));
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
