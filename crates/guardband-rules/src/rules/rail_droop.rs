//! ## What it flags
//! A shared `supply` item whose regulators, starting together, draw so much
//! that the rail droops to or below its `lockout` (the undervoltage lockout
//! of the loads on it) or below a drawing regulator's `supply_min` (it
//! drops out of regulation), or draw more than its `current_limit`. The droop is
//! the sum of the regulators' startup surges times the source's largest
//! resistance, plus the wiring's largest inductance times that current
//! over the shortest `rise_time`, from the source's lowest voltage.
//!
//! ## Why it matters
//! Each regulator's surge may be fine on its own; together they pull the
//! battery or the upstream rail down. Below the lockout the loads reset,
//! the surge stops, the rail recovers, and they start again: a restart
//! loop that no single regulator's spec shows.
//!
//! ## Failing example
//! ```text
//! supply cell { voltage = 3.0 V .. 4.2 V  resistance = 0.5 ohm  inductance = 0 H
//!               lockout = 2.7 V ± 2 % }
//! ```
//! with two regulators on `supply = cell` whose surges add up to 800 mA:
//! 3.0 V − 0.8 A × 0.5 Ω = 2.6 V, below 2.754 V.
//!
//! ## Passing example
//! ```text
//! supply cell { voltage = 3.0 V .. 4.2 V  resistance = 0.15 ohm  inductance = 0 H
//!               lockout = 2.7 V ± 2 % }
//! ```
//!
//! ## How to fix
//! Sequence the regulators (a soft start or an enable delay on each, so the
//! surges do not add), slow their soft starts, or lower the source's
//! resistance (a bigger cell, shorter wiring, a bulk capacitor).

use crate::compare;
use crate::context::Context;
use crate::derive::rail::{Droop, Rail};
use crate::show::{difference, in_unit, in_unit_digits, versus};
use guardband_model::{Diagnostic, Node};
use guardband_units::{Dimension, QuantityKind};

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for rail in ctx.rails {
        let Ok(droop) = &rail.droop else { continue };
        if rail.drawers.is_empty() {
            continue;
        }
        lockout(ctx, rail, droop, out);
        current_limit(ctx, rail, droop, out);
        dropout(ctx, rail, droop, out);
    }
}

fn volts(v: f64) -> String {
    in_unit_digits(v, QuantityKind::VOLTAGE, Some("V"), 6)
}

/// "`a` and `b`", for the message.
fn names(ctx: &Context, rail: &Rail) -> String {
    let names: Vec<String> = rail
        .drawers
        .iter()
        .map(|(r, _)| format!("`{}`", ctx.node(*r).key()))
        .collect();
    match names.split_last() {
        Some((last, rest)) if !rest.is_empty() => format!("{} and {last}", rest.join(", ")),
        _ => names.join(""),
    }
}

/// How the droop is made, with its digits, in the units the supply is written in.
fn formula(supply: &Node, d: &Droop) -> String {
    let unit = |key: &str| supply.quantity(key).and_then(|v| v.unit.as_deref());
    let amps = in_unit_digits(d.current, QuantityKind::CURRENT, None, 6);
    let ohms = in_unit_digits(
        d.resistance,
        QuantityKind::of(Dimension::RESISTANCE),
        unit("resistance"),
        6,
    );
    match d.rise_time {
        Some(t) => format!(
            "{amps} × {ohms} + {} × {amps} / {} = {} + {}",
            in_unit_digits(
                d.inductance,
                QuantityKind::of(Dimension::INDUCTANCE),
                unit("inductance"),
                6
            ),
            in_unit_digits(t, QuantityKind::of(Dimension::TIME), unit("rise_time"), 6),
            volts(d.resistive),
            volts(d.inductive)
        ),
        None => format!("{amps} × {ohms} = {}", volts(d.resistive)),
    }
}

fn lockout(ctx: &Context, rail: &Rail, d: &Droop, out: &mut Vec<Diagnostic>) {
    let supply = ctx.node(rail.supply);
    let Some(lock) = supply.quantity("lockout") else {
        return;
    };
    if !compare::at_most(d.lowest, lock.hi) {
        return;
    }
    let (low, top) = (volts(d.lowest), volts(lock.hi));
    let relation = if compare::below(d.lowest, lock.hi) {
        format!(
            "{} below",
            difference(d.lowest, lock.hi, QuantityKind::VOLTAGE, Some("V"))
        )
    } else {
        "equal to".to_string()
    };
    let diag = ctx
        .at(
            supply,
            "lockout",
            format!(
                "starting together, {} draw up to {} from `{}`: it droops by {}, from {} to {low}, {relation} the lockout's top edge {top}: the loads reset and restart in a loop",
                names(ctx, rail),
                in_unit(d.current, QuantityKind::CURRENT, None),
                supply.key(),
                formula(supply, d),
                volts(d.source_lo),
            ),
        )
        .primary(format!("lockout up to {top}"));
    let diag = ctx.label(diag, supply, "resistance", "source resistance");
    out.push(diag.help(
        "sequence the regulators so the surges do not add, slow their soft starts, or lower the source resistance",
    ));
}

/// A regulator on the rail that falls out of regulation in the droop.
fn dropout(ctx: &Context, rail: &Rail, d: &Droop, out: &mut Vec<Diagnostic>) {
    let supply = ctx.node(rail.supply);
    for (id, _) in &rail.drawers {
        let reg = ctx.node(*id);
        let Some(min) = reg.quantity("supply_min") else {
            continue;
        };
        if !compare::below(d.lowest, min.hi) {
            continue;
        }
        let diag = ctx
            .at(
                reg,
                "supply_min",
                format!(
                    "starting together, {} droop `{}` by {} to {}, below the {} `{}` needs to regulate, {} short",
                    names(ctx, rail),
                    supply.key(),
                    formula(supply, d),
                    volts(d.lowest),
                    volts(min.hi),
                    reg.key(),
                    difference(min.hi, d.lowest, QuantityKind::VOLTAGE, Some("V")),
                ),
            )
            .primary("drops out of regulation during the startup surge");
        out.push(
            ctx.label(diag, supply, "resistance", "source resistance").help(
                "sequence the regulators so the surges do not add, slow their soft starts, or lower the source resistance",
            ),
        );
    }
}

fn current_limit(ctx: &Context, rail: &Rail, d: &Droop, out: &mut Vec<Diagnostic>) {
    let supply = ctx.node(rail.supply);
    let Some(limit) = supply.quantity("current_limit") else {
        return;
    };
    if !compare::exceeds(d.current, limit.lo) {
        return;
    }
    let (drawn, lim) = versus(d.current, limit.lo, QuantityKind::CURRENT, None);
    out.push(
        ctx.at(
            supply,
            "current_limit",
            format!(
                "starting together, {} draw up to {drawn} from `{}`, {} above the {lim} it can deliver: the rail collapses until the surges end",
                names(ctx, rail),
                supply.key(),
                difference(d.current, limit.lo, QuantityKind::CURRENT, None),
            ),
        )
        .primary(format!("delivers at least {lim}"))
        .help("sequence the regulators so the surges do not add, or slow their soft starts"),
    );
}
