//! Findings of a regulator checked at each of its named corners, merged:
//! one finding per rule and place, naming the corner where it fails.
//!
//! A finding that every corner makes in the same words (a missing fault
//! case, an unread value) is reported once as it is. Otherwise the first
//! failing corner in the order written is reported, its name in front of
//! the message, with a label at each corner where the rule fails.

use guardband_model::{Diagnostic, Model, NodeId};

/// Merges the findings of each variant run (`(variant root, findings)`,
/// in the order of `Model::variants`).
pub(crate) fn merge(model: &Model, runs: Vec<(NodeId, Vec<Diagnostic>)>) -> Vec<Diagnostic> {
    // Each place a rule fails at, in the order first met, with the corner
    // of each finding made there.
    let mut places: Vec<Place> = Vec::new();
    let mut index: std::collections::HashMap<PlaceKey, usize> = Default::default();
    for (root, found) in runs {
        let Some(corner) = model.corner_of(root) else {
            continue;
        };
        let regulator = model.written_of(root);
        // A rule may make several findings at one place (two missing
        // spreads of one limit): the k-th at one corner goes with the k-th
        // at the others.
        let mut seen: std::collections::HashMap<PlaceKey, usize> = Default::default();
        for d in found {
            let mut key = (regulator, d.rule, d.file, d.span.start, d.span.end, 0);
            let nth = seen.entry(key).or_insert(0);
            key.5 = *nth;
            *nth += 1;
            let at = *index.entry(key).or_insert_with(|| {
                places.push(Place {
                    regulator,
                    findings: Vec::new(),
                });
                places.len() - 1
            });
            places[at].findings.push((corner.id, d));
        }
    }
    places
        .into_iter()
        .filter_map(|p| reword(model, p))
        .collect()
}

/// Regulator, rule, file, span and the finding's ordinal at that place.
type PlaceKey = (
    NodeId,
    &'static str,
    guardband_model::FileId,
    usize,
    usize,
    usize,
);

/// The findings one rule made at one place of one regulator, one per
/// corner where it fails.
struct Place {
    regulator: NodeId,
    findings: Vec<(NodeId, Diagnostic)>,
}

fn reword(model: &Model, place: Place) -> Option<Diagnostic> {
    let corners = model.variants_of(place.regulator).count();
    let same_words = place
        .findings
        .windows(2)
        .all(|w| w[0].1.message == w[1].1.message);
    let mut failing: Vec<NodeId> = place.findings.iter().map(|(c, _)| *c).collect();
    failing.dedup();
    let (first_corner, mut d) = place.findings.into_iter().next()?;
    if same_words && failing.len() == corners {
        return Some(d);
    }
    let name = |c: NodeId| format!("`{}`", model.node(c).key());
    let named = if same_words {
        failing.iter().map(|c| name(*c)).collect::<Vec<_>>()
    } else {
        vec![name(first_corner)]
    };
    let which = if named.len() == 1 {
        format!("at corner {}", named[0])
    } else {
        format!("at corners {}", named.join(", "))
    };
    d.message = format!("{which}: {}", d.message);
    for c in failing {
        let corner = model.node(c);
        let text = if c == first_corner || same_words {
            "fails at this corner".to_string()
        } else {
            format!("fails at this corner too (corner `{}`)", corner.key())
        };
        d = d.label(corner.file, corner.header_span.clone(), text);
    }
    Some(d)
}
