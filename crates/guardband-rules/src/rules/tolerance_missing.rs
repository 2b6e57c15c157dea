//! ## What it flags
//! An exact value (no tolerance, no range) in a field that feeds a worst-case
//! derivation: supply, output, ambient, thermal resistance, capacitance,
//! full-gate current, amplifier and clamp drive, the limit's reference,
//! threshold, fixed and trip currents, foldback current and shutdown
//! threshold. Also a sensed (`replica`) limit that states no `mismatch` or
//! no `drain_error`: left out, each counts as an exact zero and the window
//! comes out narrower than the circuit's.
//!
//! ## Why it matters
//! Every physical value spreads. An exact number silently claims it does not,
//! and the worst case derived from it is optimistic.
//!
//! ## Failing example
//! ```text
//! reference = 45 uA
//! ```
//!
//! ## Passing example
//! ```text
//! reference = 45 uA ± 18 %
//! ```
//!
//! ## How to fix
//! State the tolerance (`± 18 %`), the asymmetric tolerance (`+10 % -20 %`)
//! or the range (`low .. high`) from the data sheet, process data or simulation.

use crate::context::Context;
use guardband_model::{BlockKind, Diagnostic};

const WATCHED: &[(BlockKind, &[&str])] = &[
    (
        BlockKind::Regulator,
        &["supply", "output", "ambient", "theta_ja"],
    ),
    (BlockKind::Pin, &["capacitance"]),
    (BlockKind::Pass, &["full_gate_current", "amplifier_drive"]),
    (
        BlockKind::Limit,
        &[
            "reference",
            "threshold",
            "clamp_drive",
            "fixed_current",
            "trip_current",
        ],
    ),
    (BlockKind::Foldback, &["at_zero", "at_regulation", "knee"]),
    (BlockKind::ThermalShutdown, &["threshold"]),
];

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for reg in ctx.regulators() {
        let mut nodes = vec![reg];
        nodes.extend(reg.children.iter().map(|c| ctx.node(*c)));
        for node in nodes {
            let Some((_, keys)) = WATCHED.iter().find(|(k, _)| *k == node.kind) else {
                continue;
            };
            if node.kind == BlockKind::Limit && node.choice("scheme") == Some("replica") {
                for key in ["mismatch", "drain_error"] {
                    if node.field(key).is_none() {
                        out.push(
                            ctx.at_block(node, format!(
                                    "`{}` states no `{key}`, so the window takes it as exactly zero",
                                    node.path
                                ),
                            )
                            .primary(format!("no `{key}`"))
                            .help(format!("state it as a spread, e.g. `{key} = ± 5 %`")),
                        );
                    }
                }
            }
            for key in *keys {
                let Some(v) = node.quantity(key) else {
                    continue;
                };
                // A corner's ambient, supply or load is one point on purpose.
                let corner_condition =
                    node.kind == BlockKind::Regulator && ctx.model.set_by_corner(node, key);
                if v.is_exact() && !corner_condition {
                    out.push(
                        ctx.at(node,
                            key,
                            format!(
                                "`{}.{key}` = {} is exact but feeds a worst-case derivation",
                                node.path,
                                crate::show::nominal(v)
                            ),
                        )
                        .primary("no tolerance stated")
                        .help("state its tolerance (`± 10 %`) or range (`low .. high`)"),
                    );
                }
            }
        }
    }
}
