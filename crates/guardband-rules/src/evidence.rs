//! Measured evidence: figures a simulation or a bench measured for a fault
//! case or an analysis of a regulator at one corner, as the driver read
//! them from results files. The evidence rules hold them against the
//! spec's expectations and derived windows, and name what has none.

use guardband_model::{BlockKind, FileId, Model, Node};
use guardband_units::{Dimension, QuantityKind};
use std::collections::HashMap;

/// One measured figure.
#[derive(Debug, Clone, PartialEq)]
pub struct Measurement {
    /// The regulator's name.
    pub regulator: String,
    /// The fault case's or analysis' name.
    pub case: String,
    /// The corner: a named corner, or `low` / `high` (every range at its
    /// low or high end) for a regulator without corners.
    pub corner: String,
    /// What was measured: see [`quantity_kind`].
    pub quantity: String,
    /// In SI units (A, s, V, K for a junction, degrees, dB, Hz).
    pub value: f64,
    /// The unit as the results file writes it, for messages.
    pub unit: String,
    /// Where the record is: the results file (a text file of the workspace)
    /// and the record's span in it.
    pub file: FileId,
    pub span: std::ops::Range<usize>,
    /// The simulator deck it came from, if any.
    pub deck: Option<String>,
    /// [`content_hash`] of the spec file and of the netlist it was made
    /// from, when the results file records them.
    pub spec_hash: Option<String>,
    pub netlist_hash: Option<String>,
}

/// Everything the results files of one check hold.
#[derive(Debug, Clone, Default)]
pub struct Evidence {
    /// Whether any results file was given: then every regulator with a
    /// `circuit` is expected to have evidence.
    pub given: bool,
    pub measurements: Vec<Measurement>,
    /// The current [`content_hash`] of each `circuit` block's netlist (by
    /// the circuit's node), or why it could not be read.
    pub netlists: HashMap<guardband_model::NodeId, Result<String, String>>,
}

impl Evidence {
    /// The measurements of one regulator.
    pub fn of<'e>(&'e self, regulator: &'e str) -> impl Iterator<Item = &'e Measurement> + 'e {
        self.measurements
            .iter()
            .filter(move |m| m.regulator == regulator)
    }
}

/// The corners evidence is kept at for a regulator as written: its named
/// corners in the order written, else `low` and `high`.
pub fn corner_names(model: &Model, regulator: &Node) -> Vec<String> {
    let named: Vec<String> = model
        .variants_of(regulator.id)
        .map(|v| model.node(v.corner).key().to_string())
        .collect();
    if named.is_empty() {
        vec!["low".into(), "high".into()]
    } else {
        named
    }
}

/// What a measured quantity is: its kind, or `None` for a name the
/// evidence does not know. Fault cases measure `current`, `time`, `output`
/// and `junction`; analyses `phase_margin`, `gain_margin` and `unity_gain`.
pub fn quantity_kind(case_kind: BlockKind, quantity: &str) -> Option<QuantityKind> {
    Some(match (case_kind, quantity) {
        (BlockKind::Fault, "current") => QuantityKind::CURRENT,
        (BlockKind::Fault, "time") => QuantityKind::of(Dimension::TIME),
        (BlockKind::Fault, "output") => QuantityKind::VOLTAGE,
        (BlockKind::Fault, "junction") => QuantityKind::ABSOLUTE_TEMPERATURE,
        (BlockKind::Analysis, "phase_margin") => QuantityKind::of(Dimension::ANGLE),
        (BlockKind::Analysis, "gain_margin") => QuantityKind::of(Dimension::LEVEL),
        (BlockKind::Analysis, "unity_gain") => QuantityKind::of(Dimension::FREQUENCY),
        _ => return None,
    })
}

/// The quantities a case's evidence must hold: what its expectations (a
/// fault) or requirements (an analysis) name.
pub fn required_quantities(case: &Node) -> Vec<&str> {
    let keyword = match case.kind {
        BlockKind::Fault => "expect",
        BlockKind::Analysis => "require",
        _ => return Vec::new(),
    };
    let mut out: Vec<&str> = case
        .fields_named(keyword)
        .filter_map(|f| f.name.as_deref())
        .collect();
    out.dedup();
    out
}

/// The fault case or analysis of `regulator` named `case`.
pub fn case_of<'m>(model: &'m Model, regulator: &'m Node, case: &str) -> Option<&'m Node> {
    model
        .children(regulator, BlockKind::Fault)
        .chain(model.children(regulator, BlockKind::Analysis))
        .find(|n| n.key() == case)
}

/// One regulator at one corner, as the evidence rules see it.
pub struct Site<'a> {
    /// The regulator as written (its cases are pointed at).
    pub regulator: &'a Node,
    /// The regulator the derivation is of: the written one, or its copy at
    /// the corner.
    pub at: &'a Node,
    pub corner: String,
    pub derived: &'a crate::Derived,
}

impl<'a> Site<'a> {
    /// The measurements kept at this site.
    pub fn measurements(
        &self,
        evidence: &'a Evidence,
    ) -> impl Iterator<Item = &'a Measurement> + '_ {
        evidence
            .of(self.regulator.key())
            .filter(move |m| m.corner == self.corner)
    }
}

/// Every regulator and corner of a rule run: a regulator without corners
/// at `low` and at `high` (both held against its whole box, which covers
/// them), and one with corners at each of them. Empty in the runs at one
/// corner, so that each site is checked once.
pub(crate) fn sites<'a>(ctx: &crate::context::Context<'a>) -> Vec<Site<'a>> {
    let model = ctx.model;
    let mut out = Vec::new();
    for d in ctx.derived {
        let reg = model.node(d.regulator);
        if reg.at_corner.is_some() {
            continue;
        }
        for corner in ["low", "high"] {
            out.push(Site {
                regulator: reg,
                at: reg,
                corner: corner.to_string(),
                derived: d,
            });
        }
    }
    for v in ctx.variants {
        if let Some(d) = crate::derive::derived_of(ctx.corner_derived, v.root) {
            out.push(Site {
                regulator: model.node(v.regulator),
                at: model.node(v.root),
                corner: model.node(v.corner).key().to_string(),
                derived: d,
            });
        }
    }
    out
}

/// The regulators of a rule run's sites, each once, in order.
pub(crate) fn site_regulators<'a>(ctx: &crate::context::Context<'a>) -> Vec<&'a Node> {
    let mut seen = std::collections::BTreeSet::new();
    sites(ctx)
        .into_iter()
        .map(|s| s.regulator)
        .filter(|r| seen.insert(r.id))
        .collect()
}

/// Where a measurement sits, for messages: `results/sim.json line 4`.
pub fn place(ws: &guardband_model::Workspace, m: &Measurement) -> String {
    let file = ws.file(m.file);
    let line = file.text[..m.span.start.min(file.text.len())]
        .matches('\n')
        .count()
        + 1;
    format!("{} line {line}", file.display)
}

/// A stable hash of a file's contents (64-bit FNV-1a, as 16 hex digits):
/// results files record it for the spec and netlist they were made from,
/// so evidence older than either is found. Not a security hash.
pub fn content_hash(bytes: &[u8]) -> String {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in bytes {
        h ^= u64::from(*b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    format!("{h:016x}")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn content_hash_is_fnv1a_64() {
        // Check values from memory of the published FNV-1a 64-bit test
        // vectors, and the same bytes through the `fnv` crate (a reference
        // implementation) below.
        assert_eq!(content_hash(b""), "cbf29ce484222325");
        assert_eq!(content_hash(b"a"), "af63dc4c8601ec8c");
        assert_eq!(content_hash(b"foobar"), "85944171f73967e8");
        use std::hash::Hasher;
        for text in [
            &b""[..],
            b"a",
            b"foobar",
            b".subckt ldo in out gnd\n.ends\n",
        ] {
            let mut reference = fnv::FnvHasher::default();
            reference.write(text);
            assert_eq!(content_hash(text), format!("{:016x}", reference.finish()));
        }
    }
}
