//! ## What it flags
//! A fault case or analysis with no evidence at a corner: once results
//! files are given (on the command line or in `guardband.toml`), every
//! regulator with a `circuit`, and every regulator any results file
//! measures, must have a measurement of each case at each corner (its
//! named corners, else `low` and `high`) and of every quantity the case's
//! expectations or requirements name.
//!
//! ## Why it matters
//! A plan with a case that was never run reads as covered in a review. A
//! missing measurement is an unverified pass criterion, not a pass.
//!
//! ## Failing example
//! ```text
//! fault vout_startup { pin = vout  event = startup  expect time <= 50 us }
//! ```
//! with a results file holding only the short-circuit cases.
//!
//! ## Passing example
//! The results file also holds `vout_startup` at every corner, with its
//! measured `time`.
//!
//! ## How to fix
//! Generate and run the missing benches (`guardband testbench --run`), or
//! add the bench measurements to the results file.

use crate::context::Context;
use crate::evidence::{required_quantities, sites};
use guardband_model::{BlockKind, Diagnostic};
use std::collections::BTreeMap;

/// A case's corners with no evidence, and per quantity the corners missing it.
type Gaps = (Vec<String>, BTreeMap<String, Vec<String>>);

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    // Per case (in the order written): the corners with no evidence, and
    // per quantity the corners missing it.
    let mut gaps: BTreeMap<(u32, u32), Gaps> = BTreeMap::new();
    for site in sites(ctx) {
        let reg = site.regulator;
        let measured: Vec<_> = site.measurements(ctx.evidence).collect();
        let has_any = ctx.evidence.of(reg.key()).next().is_some();
        let has_circuit = ctx.model.child(reg, BlockKind::Circuit).is_some();
        if !(has_any || ctx.evidence.given && has_circuit) {
            continue;
        }
        let cases = ctx
            .model
            .children(reg, BlockKind::Fault)
            .chain(ctx.model.children(reg, BlockKind::Analysis));
        for case in cases {
            let entry = gaps.entry((reg.id.0, case.id.0)).or_default();
            let of_case: Vec<_> = measured.iter().filter(|m| m.case == case.key()).collect();
            if of_case.is_empty() {
                entry.0.push(site.corner.clone());
                continue;
            }
            for q in required_quantities(case) {
                if !of_case.iter().any(|m| m.quantity == q) {
                    entry.1.entry(q.to_string()).or_default().push(site.corner.clone());
                }
            }
        }
    }
    for ((_, case), (corners, quantities)) in gaps {
        let case = ctx.model.node(guardband_model::NodeId(case));
        if !corners.is_empty() {
            out.push(
                ctx.at_block(
                    case,
                    format!(
                        "{} `{}` has no evidence at {}",
                        case.keyword,
                        case.key(),
                        corner_list(&corners)
                    ),
                )
                .primary("no measurement")
                .help("run its benches (`guardband testbench --run`) or add the bench's measurements to a results file"),
            );
        }
        for (q, at) in quantities {
            out.push(
                ctx.at_block(
                    case,
                    format!(
                        "{} `{}` has no measured `{q}` at {}, which it states a bound for",
                        case.keyword,
                        case.key(),
                        corner_list(&at)
                    ),
                )
                .primary("bound without a measurement")
                .help("measure the quantity its bound names"),
            );
        }
    }
}

fn corner_list(corners: &[String]) -> String {
    let names: Vec<String> = corners.iter().map(|c| format!("`{c}`")).collect();
    if names.len() == 1 {
        format!("corner {}", names[0])
    } else {
        format!("corners {}", names.join(", "))
    }
}
