//! ## What it flags
//! Evidence made from another version of the spec or of the netlist than
//! the one checked now: a results file from `guardband testbench --run`
//! records a hash of the spec file and of the circuit's netlist with each
//! measurement, and a hash that differs from the file as it is now means
//! the measurement may no longer hold. A netlist that cannot be read is
//! named too. Records without hashes (a bench's CSV) are not checked.
//!
//! ## Why it matters
//! A passing measurement of last week's circuit says nothing about
//! today's. Edits after the run are exactly what a review must not miss.
//!
//! ## Failing example
//! A results file written before the replica ratio in the netlist was
//! changed.
//!
//! ## Passing example
//! The same results file written again after the change.
//!
//! ## How to fix
//! Run the benches again (`guardband testbench --run`) and check with the
//! new results.

use crate::context::Context;
use crate::evidence::{content_hash, place, site_regulators};
use guardband_model::{BlockKind, Diagnostic};
use std::collections::{BTreeSet, HashMap};

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    if ctx.evidence.measurements.is_empty() {
        return;
    }
    // Each spec file is hashed once, and only when evidence names it.
    let mut hashes: HashMap<guardband_model::FileId, String> = HashMap::new();
    for reg in site_regulators(ctx) {
        if ctx.evidence.of(reg.key()).next().is_none() {
            continue;
        }
        let spec_now = hashes
            .entry(reg.file)
            .or_insert_with(|| content_hash(ctx.ws.file(reg.file).text.as_bytes()))
            .clone();
        let circuit = ctx.model.child(reg, BlockKind::Circuit);
        let netlist_now = circuit.and_then(|c| ctx.evidence.netlists.get(&c.id));
        let mut told = BTreeSet::new();
        for m in ctx.evidence.of(reg.key()) {
            if let Some(h) = &m.spec_hash
                && *h != spec_now
                && told.insert((m.file, "spec"))
            {
                let count = count_of(ctx, reg.key(), m.file, |m| {
                    m.spec_hash.as_ref().is_some_and(|h| *h != spec_now)
                });
                out.push(
                    ctx.at_block(
                        reg,
                        format!(
                            "{count} of `{}` (from {}) were made from another version of {}: hash {h} recorded, {spec_now} now",
                            reg.key(),
                            place(ctx.ws, m),
                            ctx.ws.file(reg.file).display,
                        ),
                    )
                    .primary("changed since it was measured")
                    .label(m.file, m.span.clone(), "the first such measurement")
                    .help("run the benches again and check with the new results"),
                );
            }
            let (Some(h), Some(c)) = (&m.netlist_hash, circuit) else {
                continue;
            };
            match netlist_now {
                Some(Ok(now)) if now == h => {}
                // Told once per results file.
                _ if !told.insert((m.file, "netlist")) => {}
                Some(Ok(now)) => {
                    let count = count_of(ctx, reg.key(), m.file, |m| {
                        m.netlist_hash.as_ref().is_some_and(|h| h != now)
                    });
                    out.push(
                        ctx.at(
                            c,
                            "netlist",
                            format!(
                                "{count} of `{}` (from {}) were made from another version of its netlist: hash {h} recorded, {now} now",
                                reg.key(),
                                place(ctx.ws, m),
                            ),
                        )
                        .primary("changed since it was measured")
                        .label(m.file, m.span.clone(), "the first such measurement")
                        .help("run the benches again and check with the new results"),
                    );
                }
                Some(Err(why)) => {
                    out.push(
                        ctx.at(
                            c,
                            "netlist",
                            format!(
                                "the evidence of `{}` cannot be held against its netlist: {why}",
                                reg.key()
                            ),
                        )
                        .primary("netlist not read")
                        .help("correct the `netlist` path"),
                    );
                }
                None => {}
            }
        }
    }
}

fn count_of(
    ctx: &Context,
    regulator: &str,
    file: guardband_model::FileId,
    stale: impl Fn(&crate::evidence::Measurement) -> bool,
) -> String {
    let n = ctx
        .evidence
        .of(regulator)
        .filter(|m| m.file == file && stale(m))
        .count();
    if n == 1 {
        "1 measurement".to_string()
    } else {
        format!("{n} measurements")
    }
}
