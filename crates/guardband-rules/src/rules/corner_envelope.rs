//! ## What it flags
//! A regulator's named corners that do not match its ranges: a value a
//! corner writes that lies outside the regulator's own range for it, or an
//! end of a regulator's range that no corner reaches.
//!
//! ## Why it matters
//! A regulator with corners is checked at its corners instead of over its
//! whole box. An end of a range that no corner reaches is then checked
//! nowhere: a limit window too low at -40 °C passes when the coldest corner
//! is at -20 °C. A corner outside the regulator's range checks a part the
//! spec does not admit, and the figures taken over the box (a shared
//! supply's droop) miss it.
//!
//! ## Failing example
//! ```text
//! ambient = -40 °C .. 85 °C
//! corner cold { ambient = -20 °C  process = slow }
//! corner hot  { ambient = 85 °C  process = fast }
//! ```
//!
//! ## Passing example
//! ```text
//! ambient = -40 °C .. 85 °C
//! corner cold { ambient = -40 °C  process = slow }
//! corner hot  { ambient = 85 °C  process = fast }
//! ```
//!
//! ## How to fix
//! Move a corner to the end of the range, add a corner there, or narrow
//! the regulator's range to what its corners cover. Bring a corner that
//! lies outside the range inside it, or widen the range if the part must
//! work there.

use crate::compare;
use crate::context::Context;
use crate::show::{bounds, in_unit, versus};
use guardband_model::{Diagnostic, Model, Node, NodeId, Value, Variant};

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    let mut regulators: Vec<NodeId> = ctx.variants.iter().map(|v| v.regulator).collect();
    regulators.dedup();
    for regulator in regulators {
        let variants: Vec<&Variant> = ctx.model.variants_of(regulator).collect();
        let mut restated: Vec<Restated> = Vec::new();
        for v in &variants {
            collect(ctx.model, v.root, v.corner, &mut restated);
        }
        for r in &restated {
            outside(ctx, r, out);
        }
        covers(ctx, &variants, &restated, out);
    }
}

/// A quantity field a corner writes, with its node in the variant and the
/// node as written.
struct Restated<'a> {
    corner: NodeId,
    node: &'a Node,
    written: &'a Node,
    key: &'a str,
    value: &'a Value,
}

/// Every quantity field written in the corner, over the variant's tree.
fn collect<'a>(model: &'a Model, id: NodeId, corner: NodeId, out: &mut Vec<Restated<'a>>) {
    let node = model.node(id);
    let written = model.node(model.written_of(id));
    for field in &node.fields {
        if !model.set_by_corner(node, &field.key) {
            continue;
        }
        if let Some(value) = field.quantity() {
            out.push(Restated {
                corner,
                node,
                written,
                key: &field.key,
                value,
            });
        }
    }
    for &child in &node.children {
        collect(model, child, corner, out);
    }
}

/// A corner's value beyond the regulator's range for it.
fn outside(ctx: &Context, r: &Restated, out: &mut Vec<Diagnostic>) {
    let Some(range) = r.written.quantity(r.key) else {
        return;
    };
    let corner = ctx.node(r.corner).key();
    let path = format!("{}.{}", r.written.path, r.key);
    if range.kind.dim != r.value.kind.dim {
        out.push(
            ctx.at(
                r.node,
                r.key,
                format!(
                    "corner `{corner}` states `{path}` as {} where the regulator states {}, so whether the corner lies inside the regulator's range is not checked",
                    r.value.kind.describe(),
                    range.kind.describe()
                ),
            )
            .primary("not comparable with the regulator's")
            .help("state the corner's value in the same kind as the regulator's"),
        );
        return;
    }
    let unit = range.unit.as_deref().or(r.value.unit.as_deref());
    let (side, at, edge) = if compare::below(r.value.lo, range.lo) {
        ("below", r.value.lo, range.lo)
    } else if compare::exceeds(r.value.hi, range.hi) {
        ("above", r.value.hi, range.hi)
    } else {
        return;
    };
    let (at, edge) = versus(at, edge, range.kind, unit);
    let d = ctx
        .at(
            r.node,
            r.key,
            format!(
                "corner `{corner}` puts `{path}` at {at}, {side} the regulator's range {}: the corner checks a part the spec does not admit",
                bounds(range)
            ),
        )
        .primary(format!("{at}, {side} {edge}"));
    let d = ctx.label(d, r.written, r.key, format!("the regulator's range {}", bounds(range)));
    out.push(d.help("bring the corner inside the regulator's range, or widen the range"));
}

/// An end of a regulator's range that no corner reaches: every corner
/// writes the field, and none reaches that end.
fn covers(ctx: &Context, variants: &[&Variant], restated: &[Restated], out: &mut Vec<Diagnostic>) {
    let mut seen: Vec<(NodeId, &str)> = Vec::new();
    for r in restated {
        let place = (r.written.id, r.key);
        if seen.contains(&place) {
            continue;
        }
        seen.push(place);
        let Some(range) = r.written.quantity(r.key) else {
            continue;
        };
        let at_place: Vec<&Restated> = restated
            .iter()
            .filter(|o| o.written.id == r.written.id && o.key == r.key)
            .filter(|o| o.value.kind.dim == range.kind.dim)
            .collect();
        // A corner that does not write the field keeps the regulator's
        // whole range, and so reaches both ends.
        let every_corner = variants
            .iter()
            .all(|v| at_place.iter().any(|o| o.corner == v.corner));
        if !every_corner {
            continue;
        }
        let reach_lo = at_place.iter().map(|o| o.value.lo).fold(f64::INFINITY, f64::min);
        let reach_hi = at_place.iter().map(|o| o.value.hi).fold(f64::NEG_INFINITY, f64::max);
        let unit = range.unit.as_deref();
        let path = format!("{}.{}", r.written.path, r.key);
        for (end, edge, reach, short) in [
            ("low", range.lo, reach_lo, compare::exceeds(reach_lo, range.lo)),
            ("high", range.hi, reach_hi, compare::below(reach_hi, range.hi)),
        ] {
            if !short {
                continue;
            }
            let (edge, reach) = versus(edge, reach, range.kind, unit);
            let toward = if end == "low" { "down" } else { "up" };
            let mut d = ctx
                .at(
                    r.written,
                    r.key,
                    format!(
                        "no corner reaches the {end} end of `{path}`, {edge}: the corners go {toward} to {reach} only, so {edge} is checked nowhere"
                    ),
                )
                .primary(format!("{end} end {edge}, reached by no corner"));
            for o in &at_place {
                let name = ctx.node(o.corner).key();
                let shown = if o.value.lo == o.value.hi {
                    in_unit(o.value.lo, o.value.kind, unit)
                } else {
                    bounds(o.value)
                };
                d = ctx.label(d, o.node, o.key, format!("corner `{name}`: {shown}"));
            }
            out.push(d.help(
                "add a corner at that end or move one there, or narrow the regulator's range to what its corners cover",
            ));
        }
    }
}
