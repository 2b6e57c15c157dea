//! The names a `circuit` block's `port NAME = "..."` fields may use: the
//! bench nodes `input`, `ground`, `gate_drive` and `gate_device`, and the
//! regulator's pins. Anything else is `unknown-name` at the name, so a
//! misspelt or renamed pin is found by `check`, not first by the bench.

use crate::model::Model;
use crate::schema::BlockKind;
use crate::{Diagnostic, suggest};

/// The bench nodes a port may name besides the regulator's pins.
pub const BENCH_NODES: [&str; 4] = ["input", "ground", "gate_drive", "gate_device"];

/// Diagnostics for every `port` that names nothing.
pub fn check_ports(model: &Model, out: &mut Vec<Diagnostic>) {
    for circuit in model
        .written()
        .filter(|n| n.kind == BlockKind::Circuit && n.at_corner.is_none())
    {
        let Some(regulator) = circuit.parent.map(|p| model.node(p)) else {
            continue;
        };
        let pins: Vec<&str> = model
            .children(regulator, BlockKind::Pin)
            .map(|p| p.key())
            .collect();
        for field in circuit.fields_named("port") {
            let Some(name) = field.name.as_deref() else {
                continue;
            };
            if BENCH_NODES.contains(&name) || pins.contains(&name) {
                continue;
            }
            let candidates = BENCH_NODES.iter().copied().chain(pins.iter().copied());
            let d = Diagnostic::error(
                "unknown-name",
                circuit.file,
                field.key_span.clone(),
                format!(
                    "`port {name}` names no pin of `{}` and no bench node ({})",
                    regulator.key(),
                    BENCH_NODES.map(|n| format!("`{n}`")).join(", ")
                ),
            )
            .primary("names nothing");
            out.push(match suggest::did_you_mean(name, candidates) {
                Some(s) => d.help(format!("did you mean `{s}`?")),
                None => d.help("name a pin of the regulator, or a bench node"),
            });
        }
    }
}

#[cfg(test)]
mod tests {
    use crate::Workspace;

    fn diagnostics(text: &str) -> Vec<crate::Diagnostic> {
        let mut ws = Workspace::default();
        ws.push_file(
            "r.guard".into(),
            text.to_string(),
            guardband_syntax::parse(text),
        );
        crate::check(&ws).1
    }

    #[test]
    fn a_port_naming_no_pin_is_an_unknown_name_with_a_suggestion() {
        let d = diagnostics(
            "regulator r {\n  pin vout { off_chip = true }\n  circuit {\n    port vouts = \"out\"\n    port input = \"in\"\n  }\n}\n",
        );
        let unknown: Vec<_> = d.iter().filter(|d| d.rule == "unknown-name").collect();
        assert_eq!(unknown.len(), 1, "{d:?}");
        assert!(unknown[0].message.contains("`port vouts`"), "{d:?}");
        assert_eq!(unknown[0].help.as_deref(), Some("did you mean `vout`?"));
    }
}
