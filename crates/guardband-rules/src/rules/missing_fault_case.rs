//! ## What it flags
//! Gaps in the fault-test plan: an off-chip pin with no `short_to_ground`
//! case; a current limit with no case that exercises it (a case with
//! `exercises = LIMIT`, or a `short_to_ground` or `overload` case, which
//! exercise every current limit; a `startup` case also exercises an
//! undervoltage-triggered limit); an off-chip pin with capacitance and no
//! `startup` case.
//!
//! ## Why it matters
//! Off-chip pins can be shorted by a solder bridge, a probe or a failed
//! capacitor; a protection that no test case exercises is a protection
//! nobody has seen work.
//!
//! ## Failing example
//! ```text
//! pin vout { off_chip = true  capacitance = 2.2 uF ± 20 % }
//! // no fault blocks
//! ```
//!
//! ## Passing example
//! ```text
//! fault vout_short { pin = vout  event = short_to_ground }
//! fault power_up   { pin = vout  event = startup }
//! ```
//!
//! ## How to fix
//! Add the missing `fault` blocks to the regulator, each naming its pin and event.

use crate::context::Context;
use guardband_model::{BlockKind, Diagnostic, Node};

fn event(f: &Node) -> Option<&str> {
    f.choice("event")
}

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for reg in ctx.regulators() {
        let faults: Vec<&Node> = ctx.model.children(reg, BlockKind::Fault).collect();
        for pin in ctx.model.children(reg, BlockKind::Pin) {
            if pin.flag("off_chip") != Some(true) {
                continue;
            }
            let on_pin = |f: &&&Node| f.reference("pin") == Some(pin.id);
            if !faults
                .iter()
                .filter(on_pin)
                .any(|f| event(f) == Some("short_to_ground"))
            {
                out.push(
                    ctx.at_block(pin, format!(
                            "off-chip pin `{}` has no short-to-ground fault case",
                            pin.key()
                        ),
                    )
                    .primary("can be shorted from outside")
                    .help(format!(
                        "add `fault {}_short {{ pin = {}  event = short_to_ground }}`",
                        pin.key(),
                        pin.key()
                    )),
                );
            }
            if pin.quantity("capacitance").is_some()
                && !faults.iter().any(|f| {
                    event(f) == Some("startup")
                        && (f.reference("pin").is_none() || f.reference("pin") == Some(pin.id))
                })
            {
                out.push(
                    ctx.finding(pin.file,
                        ctx.value_span(pin, "capacitance"),
                        format!(
                            "off-chip capacitor on `{}` has no startup fault case",
                            pin.key()
                        ),
                    )
                    .primary("charged by the startup surge")
                    .help(format!(
                        "add `fault {}_startup {{ pin = {}  event = startup }}`",
                        pin.key(),
                        pin.key()
                    )),
                );
            }
        }
        for limit in ctx.model.children(reg, BlockKind::Limit) {
            let undervoltage = limit.choice("scheme") == Some("undervoltage_fixed");
            let exercised = faults.iter().any(|f| {
                f.reference("exercises") == Some(limit.id)
                    || matches!(event(f), Some("short_to_ground" | "overload"))
                    || (undervoltage && event(f) == Some("startup"))
            });
            if !exercised {
                out.push(
                    ctx.at_block(limit, format!(
                            "limit `{}` has no fault case that exercises it",
                            limit.key()
                        ),
                    )
                    .primary("never exercised by the test plan")
                    .help(format!(
                        "add a fault case with `event = overload` or `exercises = {}`",
                        limit.key()
                    )),
                );
            }
        }
    }
}
