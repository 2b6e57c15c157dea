//! ## What it flags
//! A stability analysis of a sensed limit's loop that does not say which
//! side of the break the clamp connects to (`clamp_side`), or that states
//! no phase-margin requirement (`require phase_margin >= ...`).
//!
//! ## Why it matters
//! Where the clamp sits decides what the broken loop's gain contains: on
//! the device side of the break the clamp is outside the measured loop and
//! the margin read off the plot is not the limit loop's. Without a stated
//! phase-margin requirement the analysis has no pass/fail criterion, so a
//! reviewer cannot tell a marginal loop from a good one. Neither is wrong
//! on its face, so this is a warning; `limit-loop-analysis` flags set-ups
//! that are wrong.
//!
//! ## Failing example
//! ```text
//! analysis limit_loop { loop = sensed  force vout = 1.2 V  break_at = pass.gate }
//! ```
//!
//! ## Passing example
//! ```text
//! analysis limit_loop { loop = sensed  force vout = 1.2 V  break_at = pass.gate
//!                       clamp_side = driving  require phase_margin >= 45 deg }
//! ```
//!
//! ## How to fix
//! State `clamp_side = driving` once the set-up puts the clamp on the
//! driving side of the break, and add the margin the loop must meet, e.g.
//! `require phase_margin >= 45 deg` (your design's figure).

use crate::context::Context;
use guardband_model::{BlockKind, Diagnostic};

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for reg in ctx.regulators() {
        for a in ctx.model.children(reg, BlockKind::Analysis) {
            let sensed = a
                .reference("loop")
                .is_some_and(|l| ctx.node(l).choice("scheme") == Some("replica"));
            if !sensed {
                continue;
            }
            if a.field("clamp_side").is_none() {
                out.push(
                    ctx.at_block(
                        a,
                        format!(
                            "analysis `{}` does not say which side of the break the clamp connects to",
                            a.key()
                        ),
                    )
                    .primary("no `clamp_side`")
                    .help("add `clamp_side = driving` once the set-up puts the clamp on the driving side of the break"),
                );
            }
            if a.named_field("require", "phase_margin").is_none() {
                out.push(
                    ctx.at_block(
                        a,
                        format!("analysis `{}` states no phase-margin requirement", a.key()),
                    )
                    .primary("no pass/fail criterion")
                    .help("add `require phase_margin >= 45 deg` (or your design's figure)"),
                );
            }
        }
    }
}
