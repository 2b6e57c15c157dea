//! ## What it flags
//! A current limit whose window reaches down to the rated load plus the
//! required margin: the worst-case low edge (every stated tolerance at its
//! extreme) and, when `statistical = true`, the share of parts whose
//! threshold falls there: each stated ± is taken as `sigma` standard
//! deviations, the contributions are combined by root-sum-square, and the
//! normal tail below rated load plus margin must not exceed `escape_ppm`.
//! For the undervoltage-triggered scheme the characterised trip current is
//! checked, since the fixed current may sit below the load. A foldback is
//! checked where it still acts in regulation: its own `at_regulation` at
//! the output's low edge, or its line there when a stated `knee` lies above
//! that edge (the low ends of its currents, the knee at whichever end
//! gives less).
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
use guardband_model::{BlockKind, Diagnostic, Value};
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
        foldback(ctx, d, rated, required, out);
    }
}

/// The least a foldback delivers at output voltage `v`: its line from
/// `zero` at 0 V to `top` at the knee, flat above, the knee at either end
/// of its range (the line is monotonic in the knee).
fn folded_least(zero: f64, top: f64, knee: (f64, f64), v: f64) -> f64 {
    let at = |k: f64| {
        if v >= k || k <= 0.0 {
            top
        } else {
            zero + (top - zero) * v / k
        }
    };
    at(knee.0).min(at(knee.1))
}

fn foldback(
    ctx: &Context,
    d: &crate::derive::Derived,
    rated: f64,
    required: f64,
    out: &mut Vec<Diagnostic>,
) {
    let reg = ctx.node(d.regulator);
    let Some(f) = ctx.model.child(reg, BlockKind::Foldback) else {
        return;
    };
    let (Some(output), Some(zero)) = (reg.quantity("output"), f.quantity("at_zero")) else {
        return;
    };
    let knee = f.quantity("knee").map(|k| (k.lo, k.hi));
    // The level the line folds up to, low end: its own, or the sensed limits' least.
    let (top, top_what) = match f.quantity("at_regulation") {
        Some(r) => (r.lo, "its `at_regulation`"),
        None => {
            // Without its own level it bends the sensed limits; with the
            // knee tied to the output it reaches them in regulation.
            let Some(knee) = knee else { return };
            let least = d
                .limits
                .iter()
                .filter(|l| l.scheme == Scheme::Replica)
                .filter_map(|l| l.window.as_ref().ok().map(|w| w.lo))
                .reduce(f64::min);
            match least {
                Some(lo) if knee.1 > output.lo => (lo, "the sensed limit's low edge"),
                _ => return,
            }
        }
    };
    let (level, key) = match knee {
        Some(k) if k.1 > output.lo => (folded_least(zero.lo, top, k, output.lo), "knee"),
        _ => (top, "at_regulation"),
    };
    if !compare::at_most(level, required) {
        return;
    }
    let unit = zero.unit.as_deref().or(d.load_unit.as_deref());
    let (low, need) = versus(level, required, QuantityKind::CURRENT, unit);
    let gap = difference(level, required, QuantityKind::CURRENT, unit);
    let relation = if compare::below(level, required) {
        format!("{gap} below")
    } else {
        "equal to".to_string()
    };
    let where_ = if key == "knee" {
        format!(
            "at the output's low edge {}, below the knee, the foldback line folds toward {top_what} and delivers as little as",
            crate::show::in_unit_digits(output.lo, QuantityKind::VOLTAGE, output.unit.as_deref(), 6)
        )
    } else {
        "in regulation the foldback holds its `at_regulation`, as little as".to_string()
    };
    let diag = ctx
        .at(
            f,
            key,
            format!(
                "{where_} {low}, {relation} rated {} + {} margin = {need}",
                in_unit(rated, QuantityKind::CURRENT, unit),
                percent(d.margin),
            ),
        )
        .primary("the foldback cuts into rated load");
    out.push(
        ctx.label(diag, reg, "load", "rated load")
            .help("raise the foldback's current at regulation, or move its knee below the output's low edge"),
    );
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
