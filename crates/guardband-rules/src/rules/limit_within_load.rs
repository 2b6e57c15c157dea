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

use crate::compare;
use crate::context::Context;
use crate::derive::{Scheme, escape_ppm, sigmas_below, stat_settings, statistical};
use crate::show::{difference, in_unit, percent, versus};
use guardband_model::{Diagnostic, Value};
use guardband_units::QuantityKind;

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for d in ctx.derived {
        let reg = ctx.node(d.regulator);
        let (Some(rated), Some(required)) = (d.rated_load, d.required()) else {
            continue;
        };
        for lw in &d.limits {
            let limit = ctx.node(lw.node);
            let (window, key) = match lw.scheme {
                Scheme::Replica => match &lw.window {
                    Ok(w) => (w, "threshold"),
                    Err(_) => continue,
                },
                Scheme::UndervoltageFixed => match &lw.trip {
                    Ok(Some(t)) => (t, "trip_current"),
                    _ => continue,
                },
            };
            let unit = window.unit.as_deref().or(d.load_unit.as_deref());
            let show = |x: f64| in_unit(x, QuantityKind::CURRENT, unit);
            if compare::at_most(window.lo, required) {
                let (low, need) = versus(window.lo, required, QuantityKind::CURRENT, unit);
                let gap = difference(window.lo, required, QuantityKind::CURRENT, unit);
                let relation = if compare::below(window.lo, required) {
                    format!("{gap} below")
                } else {
                    "equal to".to_string()
                };
                let mut diag = ctx.at(limit,
                        key,
                        format!(
                            "`{}` limit low edge {low} is {relation} rated {} + {} margin = {need}",
                            limit.key(),
                            show(rated),
                            percent(d.margin),
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
            if ctx.options.statistical && lw.scheme == Scheme::Replica {
                let Some(stat) = &lw.stat else { continue };
                let ppm = escape_ppm(stat, required);
                if ppm > ctx.options.escape_ppm {
                    let mut diag = ctx.at(limit,
                            key,
                            format!(
                                "about {} of parts trip `{}` at or below rated {} + {} margin = {} (allowed {})",
                                crate::show::ppm(ppm, sigmas_below(stat, required)),
                                limit.key(),
                                show(rated),
                                percent(d.margin),
                                show(required),
                                crate::show::ppm(ctx.options.escape_ppm, None)
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

fn add_contributors(ctx: &Context, mut diag: Diagnostic, window: &Value) -> Diagnostic {
    let stat = statistical(ctx.model, window, &stat_settings(ctx.options));
    for c in stat.contributors.iter().take(3) {
        let s = ctx.model.source(c.source);
        let term = window.terms.iter().find(|t| t.source == c.source);
        let swing = match term {
            Some(t) if window.nom != 0.0 => (t.high - t.low).abs() / 2.0 / window.nom.abs(),
            _ => 0.0,
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
