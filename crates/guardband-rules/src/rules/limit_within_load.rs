//! ## What it flags
//! A current limit whose window reaches down to the rated load plus the
//! required margin: the worst-case low edge (every stated tolerance at its
//! extreme) and, when `statistical = true`, the share of parts whose
//! threshold falls there: each stated ± is taken as `sigma` standard
//! deviations, the contributions are combined by root-sum-square, and the
//! normal tail below rated load plus margin must not exceed `escape_ppm`.
//! For the undervoltage-triggered scheme the characterised trip current is
//! checked, since the fixed current may sit below the load.
//!
//! ## Why it matters
//! A limit that trips inside normal operation drops the output under rated
//! load on some parts. The spread of a sensed limit stacks the reference
//! error, the ratio mismatch and the drain-voltage error, so the nominal
//! threshold has to sit well above the rated load.
//!
//! ## Failing example
//! ```text
//! load = 0 mA .. 150 mA
//! limit sensed { scheme = replica  ratio = 4000  reference = 40 uA ± 20 %
//!                mismatch = ± 10 %  threshold = ratio * reference }
//! ```
//! The window is 115 .. 211 mA; its low edge is below 150 mA + 20 % = 180 mA.
//!
//! ## Passing example
//! ```text
//! limit sensed { scheme = replica  ratio = 4000  reference = 70 uA ± 12 %
//!                mismatch = ± 6 %  threshold = ratio * reference }
//! ```
//!
//! ## How to fix
//! Raise the nominal threshold (ratio or reference), or tighten the largest
//! contributor the message names (often the reference resistor: trim it).
//! The margin is set by `margin` in guardband.toml or in the regulator.

use crate::context::Context;
use crate::format::{in_unit, percent};
use guardband_model::{Diagnostic, Severity};
use guardband_units::QuantityKind;

const RULE: &str = "limit-within-load";

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for d in ctx.derived {
        let reg = ctx.node(d.regulator);
        let (Some(rated), Some(required)) = (d.rated_load, d.required()) else {
            continue;
        };
        for lw in &d.limits {
            let limit = ctx.node(lw.node);
            let (window, key) = match lw.scheme {
                crate::derive::Scheme::Replica => (&lw.window, "threshold"),
                crate::derive::Scheme::UndervoltageFixed => match &lw.trip {
                    Some(t) => (t, "trip_current"),
                    None => continue,
                },
            };
            let unit = window.unit.as_deref().or(d.load_unit.as_deref());
            let show = |x: f64| in_unit(x, QuantityKind::CURRENT, unit);
            // Only worded when there is a finding to word.
            let need = || {
                format!(
                    "rated {} + {} margin = {}",
                    show(rated),
                    percent(d.margin),
                    show(required)
                )
            };
            if window.lo <= required {
                let mut diag = ctx
                    .at(
                        RULE,
                        Severity::Error,
                        limit,
                        key,
                        format!(
                            "`{}` limit low edge {} is at or below {}",
                            limit.key(),
                            show(window.lo),
                            need()
                        ),
                    )
                    .primary(format!(
                        "window {} .. {} (worst case)",
                        show(window.lo),
                        show(window.hi)
                    ));
                diag = ctx.label(diag, reg, "load", format!("rated load {}", show(rated)));
                diag = add_contributors(ctx, diag, window);
                out.push(diag.help("raise the nominal threshold or tighten the largest contributor; the tool compares worst-case corners"));
                continue;
            }
            if ctx.config.statistical && lw.scheme == crate::derive::Scheme::Replica {
                let stat = &lw.stat;
                let ppm = crate::derive::escape_ppm(stat, required);
                if ppm > ctx.config.escape_ppm {
                    let mut diag = ctx
                        .at(
                            RULE,
                            Severity::Error,
                            limit,
                            key,
                            format!(
                                "about {} ppm of parts trip `{}` at or below {} (allowed {} ppm)",
                                crate::format::number(ppm),
                                limit.key(),
                                need(),
                                crate::format::number(ctx.config.escape_ppm)
                            ),
                        )
                        .primary(format!(
                            "statistically {} ± {} (1σ); worst case {} .. {}",
                            show(stat.mean),
                            show(stat.sigma),
                            show(window.lo),
                            show(window.hi)
                        ));
                    diag = add_contributors(ctx, diag, window);
                    out.push(
                        diag.help("raise the nominal threshold or tighten the largest contributor"),
                    );
                }
            }
        }
    }
}

fn add_contributors(
    ctx: &Context,
    mut diag: Diagnostic,
    window: &guardband_model::Value,
) -> Diagnostic {
    let stat = crate::derive::statistical(window, ctx.config.sigma);
    for c in stat.contributors.iter().take(3) {
        let s = ctx.model.source(c.source);
        let swing = if window.nom != 0.0 {
            c.sigma * ctx.config.sigma / window.nom.abs()
        } else {
            0.0
        };
        diag = diag.label(
            s.file,
            s.span.clone(),
            format!(
                "`{}` moves the window ± {}: {} of the variance",
                s.label(ctx.model),
                percent(swing),
                percent(c.share)
            ),
        );
    }
    diag
}
