//! ## What it flags
//! A measurement in a results file that names a regulator of the checked
//! files but no fault case or analysis of it, or a corner it does not have
//! (its named corners, else `low` and `high`), or a quantity its kind of
//! case does not measure (fault cases: `current`, `time`, `output`,
//! `junction`; analyses: `phase_margin`, `gain_margin`, `unity_gain`).
//! Measurements of regulators outside the checked files are left alone: a
//! results file may cover more of the workspace than one check reads.
//!
//! ## Why it matters
//! A misspelt case or corner would otherwise leave the measurement unused
//! and its case without evidence, with nothing saying why.
//!
//! ## Failing example
//! A CSV line `vout_shrot, low, current, 158, mA` for a regulator whose
//! case is `vout_short`.
//!
//! ## Passing example
//! `vout_short, low, current, 158, mA`.
//!
//! ## How to fix
//! Correct the name in the results file (or the spec, if it was renamed).

use crate::context::Context;
use crate::evidence::{case_of, corner_names, quantity_kind, site_regulators};
use guardband_model::{BlockKind, Diagnostic, did_you_mean};

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for reg in site_regulators(ctx) {
        let corners = corner_names(ctx.model, reg);
        let cases: Vec<&str> = ctx
            .model
            .children(reg, BlockKind::Fault)
            .chain(ctx.model.children(reg, BlockKind::Analysis))
            .map(|c| c.key())
            .collect();
        for m in ctx.evidence.of(reg.key()) {
            let problem = match case_of(ctx.model, reg, &m.case) {
                None => Some(format!(
                    "`{}` has no fault case or analysis `{}`{}",
                    reg.key(),
                    m.case,
                    did_you_mean(&m.case, cases.iter().copied())
                        .map(|s| format!(" (did you mean `{s}`?)"))
                        .unwrap_or_default()
                )),
                Some(case) if quantity_kind(case.kind, &m.quantity).is_none() => Some(format!(
                    "{} `{}` of `{}` does not measure `{}`",
                    case.keyword,
                    case.key(),
                    reg.key(),
                    m.quantity
                )),
                Some(_) if !corners.contains(&m.corner) => Some(format!(
                    "`{}` has no corner `{}`: its evidence is kept at {}",
                    reg.key(),
                    m.corner,
                    corners
                        .iter()
                        .map(|c| format!("`{c}`"))
                        .collect::<Vec<_>>()
                        .join(", ")
                )),
                Some(_) => None,
            };
            if let Some(message) = problem {
                out.push(
                    ctx.finding(m.file, m.span.clone(), format!("measurement not used: {message}"))
                        .primary("matches nothing in the spec")
                        .help("correct the name in the results file, or the spec if it was renamed"),
                );
            }
        }
    }
}
