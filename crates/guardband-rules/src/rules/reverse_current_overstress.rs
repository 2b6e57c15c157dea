//! ## What it flags
//! A `short_to_supply` fault case (the output pulled above the input) or a
//! `reverse_current` one (the input falling below the output) in which
//! current can flow from the output back to the input through the pass
//! device's body diode, and
//! - the pass device's `reverse_rating` is below that reverse current, or
//!   is not stated (nothing then bounds what the device may carry);
//! - a conductor on the output path (it `carries` the pass device or a pin,
//!   or states nothing) is rated below the reverse current, though it
//!   carries the forward worst current (that case is `conductor-under-rated`).
//!
//! The reverse current is at most `(V_o,max − V_i,min − V_f,min) / R,min`:
//! the output side's top (the forcing voltage, or the regulated output),
//! the input side's bottom (the supply, or the collapsed input), the body
//! diode's lowest drop (0 V when not stated) and the path's lowest
//! resistance.
//!
//! ## Why it matters
//! An output pulled above the input (a pin shorted to a battery or a
//! higher rail, a backup supply), or an input that collapses under a
//! charged output capacitor, turns the regulator's loop off, but not the
//! body diode: the current then flows the other way, set only by the
//! path's resistance. No current limit sees it; metal sized for the
//! forward limit and a pass device never rated for it take it all.
//!
//! ## Failing example
//! ```text
//! regulator ldo { supply = 3.0 V .. 3.6 V  output = 1.8 V ± 3 %
//!   pass { full_gate_current = 0.6 A .. 1.4 A  body_diode = 0.55 V .. 0.75 V
//!          reverse_rating = 200 mA }
//!   fault vout_to_battery { pin = vout  event = short_to_supply
//!                           voltage = 4.2 V ± 5 %  resistance = 1 ohm .. 2 ohm } }
//! ```
//! (up to (4.41 − 3.0 − 0.55) V / 1 Ω = 860 mA flows back)
//!
//! ## Passing example
//! ```text
//!   pass { full_gate_current = 0.6 A .. 1.4 A  reverse_blocking = true }
//! ```
//!
//! ## How to fix
//! Block the reverse path (switch the pass device's body to the higher of
//! input and output, or add a blocking device and state
//! `reverse_blocking = true`), or rate the pass device and the output-path
//! metal for the reverse current, or state the short's real resistance.

use crate::compare;
use crate::context::Context;
use crate::derive::{Carries, Derived, Reverse};
use crate::show::{difference, versus};
use guardband_model::{BlockKind, Diagnostic, Node};
use guardband_units::QuantityKind;

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for d in ctx.derived {
        let reg = ctx.node(d.regulator);
        let Some(pass) = ctx.model.child(reg, BlockKind::Pass) else {
            continue;
        };
        for (id, short) in &d.reverse_cases {
            let Ok(Ok(reverse)) = short.as_ref().map(|s| s.reverse.as_ref()) else {
                continue;
            };
            if reverse.hi <= 0.0 {
                continue;
            }
            let fault = ctx.node(*id);
            pass_rating(ctx, out, pass, fault, reverse);
            conductors(ctx, out, d, fault, reverse);
        }
    }
}

fn unit(d: &Derived) -> Option<&str> {
    d.load_unit.as_deref()
}

fn pass_rating(ctx: &Context, out: &mut Vec<Diagnostic>, pass: &Node, fault: &Node, r: &Reverse) {
    let Some(field) = pass.field("reverse_rating") else {
        out.push(
            ctx.at_block(
                pass,
                format!(
                    "the pass device states no `reverse_rating`, but up to {} can flow back through it in fault `{}`: {}",
                    crate::show::in_unit(r.hi, QuantityKind::CURRENT, None),
                    fault.key(),
                    r.why
                ),
            )
            .primary("no reverse rating")
            .help("state `reverse_rating`, or block the reverse path and state `reverse_blocking = true`"),
        );
        return;
    };
    // A rating written with an error is reported where it is written.
    let Some(rating) = field.quantity() else {
        return;
    };
    if !compare::below(rating.lo, r.hi) {
        return;
    }
    let unit = rating.unit.as_deref();
    let (rated, flows) = versus(rating.lo, r.hi, QuantityKind::CURRENT, unit);
    let by = difference(r.hi, rating.lo, QuantityKind::CURRENT, unit);
    let diag = ctx
        .finding(
            pass.file,
            field.span.clone(),
            format!(
                "the pass device is rated {rated} in reverse, {by} below the {flows} that can flow back in fault `{}`: {}",
                fault.key(),
                r.why
            ),
        )
        .primary(format!("rated {rated}"));
    out.push(
        ctx.label(diag, fault, "resistance", "sets the reverse current")
            .help("block the reverse path, raise the rating, or limit the short's current"),
    );
}

fn conductors(ctx: &Context, out: &mut Vec<Diagnostic>, d: &Derived, fault: &Node, r: &Reverse) {
    for cr in &d.conductors {
        if matches!(cr.carries, Carries::Branch { .. }) {
            continue;
        }
        let Ok(rating) = cr.rating else { continue };
        if !compare::below(rating, r.hi) {
            continue;
        }
        // Already below the forward worst current: `conductor-under-rated` says so.
        if cr.current.as_ref().is_ok_and(|i| compare::below(rating, *i)) {
            continue;
        }
        let c = ctx.node(cr.node);
        let (rated, flows) = versus(rating, r.hi, QuantityKind::CURRENT, unit(d));
        let by = difference(r.hi, rating, QuantityKind::CURRENT, unit(d));
        let diag = ctx
            .at_block(
                c,
                format!(
                    "conductor `{}` is rated {rated}, {by} below the {flows} that can flow back through the output path in fault `{}`: {}",
                    c.key(),
                    fault.key(),
                    r.why
                ),
            )
            .primary(format!("rated {rated} ({})", cr.basis));
        out.push(
            ctx.label(diag, fault, "resistance", "sets the reverse current")
                .help("block the reverse path, or size the conductor for the reverse current"),
        );
    }
}
