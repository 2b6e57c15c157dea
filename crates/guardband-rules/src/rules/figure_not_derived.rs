//! ## What it flags
//! A figure the checker could not derive because an input it needs is
//! missing or has an error: a limit's window, the worst current, the heat
//! of a short or overload, heat at rated load, startup. One finding per block, naming each
//! figure and what it lacks. Rules that need such a figure stay silent
//! rather than guess, so this finding says which checks did not run.
//! Heat is reported when the spec asks for it (a junction limit, a thermal
//! shutdown, θJA or a junction expectation; heat at rated load, which
//! needs `quiescent`, with a junction limit or a thermal shutdown), startup when it has a
//! `startup` block or a startup fault case; a shared supply's droop when
//! regulators draw from it; for a `short_to_supply` or
//! `reverse_current` fault
//! case, its reverse current (and its heat when it expects a junction).
//!
//! ## Why it matters
//! A value the checker cannot read is unknown, not zero: a typo in one
//! field must not turn into a page of claims about a regulator without a
//! limit. But a check that did not run is not a check that passed; the
//! reviewer needs to know which ones were skipped.
//!
//! ## Failing example
//! ```text
//! limit sensed { scheme = replica  ratio = 2000  refrence = 100 uA ± 8 %
//!                threshold = ratio * reference }
//! ```
//! (the misspelt field leaves `reference` missing: no window, no worst current)
//!
//! ## Passing example
//! ```text
//! limit sensed { scheme = replica  ratio = 2000  reference = 100 uA ± 8 %
//!                threshold = ratio * reference }
//! ```
//!
//! ## How to fix
//! Write the inputs the finding names, or correct the ones with errors.

use crate::context::Context;
use crate::derive::Unknown;
use guardband_model::{BlockKind, Diagnostic, Node};

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for rail in ctx.rails {
        if let (Err(u), false) = (&rail.droop, rail.drawers.is_empty()) {
            push(ctx, out, ctx.node(rail.supply), &[("rail droop", u)]);
        }
    }
    for d in ctx.derived {
        let reg = ctx.node(d.regulator);
        for lw in &d.limits {
            if let Err(u) = &lw.window {
                push(ctx, out, ctx.node(lw.node), &[("window", u)]);
            }
        }
        for u in &d.unread_limits {
            push(ctx, out, ctx.node(u.node), &[("window", &u.why)]);
        }
        let mut figures: Vec<(&str, &Unknown)> = Vec::new();
        let protected = ctx.model.child(reg, BlockKind::Pass).is_some()
            || ctx.model.child(reg, BlockKind::Limit).is_some()
            || ctx.model.child(reg, BlockKind::Conductor).is_some();
        if let (Err(u), true) = (&d.worst, protected) {
            figures.push(("worst current", u));
        }
        let faults = || ctx.model.children(reg, BlockKind::Fault);
        let wants_heat = reg.field("junction_max").is_some()
            || reg.field("theta_ja").is_some()
            || ctx.model.child(reg, BlockKind::ThermalShutdown).is_some()
            || faults().any(|f| f.named_field("expect", "junction").is_some());
        if let (Err(u), true) = (&d.overload, wants_heat) {
            figures.push(("heat in a short or overload", u));
        }
        let wants_normal_heat = crate::derive::heat::wants_rated_load_heat(ctx.model, reg);
        if let (Err(u), true) = (&d.normal, wants_normal_heat) {
            figures.push(("heat at rated load", u));
        }
        let wants_startup = ctx.model.child(reg, BlockKind::Startup).is_some()
            || faults().any(|f| f.choice("event") == Some("startup"));
        if let (Err(u), true) = (&d.startup, wants_startup) {
            figures.push(("startup", u));
        }
        push(ctx, out, reg, &figures);
        if let (Err(u), Some(b)) = (
            &d.cycle_damage,
            ctx.model.child(reg, BlockKind::CycleBudget),
        ) {
            push(ctx, out, b, &[("cycle damage", u)]);
        }
        for (id, short) in &d.reverse_cases {
            let fault = ctx.node(*id);
            let figures: Vec<(&str, &Unknown)> = match short {
                Err(u) => vec![("the short to supply", u)],
                Ok(s) => {
                    let mut v = Vec::new();
                    if let Err(u) = &s.reverse {
                        v.push(("reverse current", u));
                    }
                    let wants = fault.named_field("expect", "junction").is_some();
                    if let (Err(u), true, Ok(_)) = (&s.heat, wants, &s.reverse) {
                        v.push(("heat", u));
                    }
                    v
                }
            };
            push(ctx, out, fault, &figures);
        }
    }
}

fn push(ctx: &Context, out: &mut Vec<Diagnostic>, node: &Node, figures: &[(&str, &Unknown)]) {
    if figures.is_empty() {
        return;
    }
    // Figures that lack the same inputs are named together.
    let mut groups: Vec<(Vec<&str>, String)> = Vec::new();
    for (what, u) in figures {
        let why = u.describe(ctx.model);
        match groups.iter_mut().find(|(_, w)| *w == why) {
            Some((names, _)) => names.push(what),
            None => groups.push((vec![what], why)),
        }
    }
    let parts: Vec<String> = groups
        .into_iter()
        .map(|(names, why)| {
            let names = match names.split_last() {
                Some((last, rest)) if !rest.is_empty() => {
                    format!("{} and {last}", rest.join(", "))
                }
                _ => names.join(""),
            };
            format!("{names} ({why})")
        })
        .collect();
    out.push(
        ctx.at_block(node, format!("not derived for `{}`: {}", node.key(), parts.join("; ")),
        )
        .primary("the checks that need these did not run")
        .help("write the missing inputs, or correct the ones with errors"),
    );
}
