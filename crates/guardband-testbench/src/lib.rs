//! Generated ngspice test benches: for each regulator that names its
//! circuit (`circuit { netlist subcircuit port ... }`), one self-contained
//! deck per fault case or analysis and per corner, which measures what the
//! case's expectations name; on explicit request ([`run`]) the decks are
//! run and their measurements written as a results file that
//! `guardband check --evidence` holds against the spec.
//!
//! Corners: a regulator with named corners gets a bench at each of them; one
//! without gets `low` (every range at its low end) and `high` (every range
//! at its high end), the names the evidence rules expect. At a named corner
//! a value the corner restates is used as it states it and a range it
//! leaves alone at its nominal. The device temperature is the corner's
//! ambient (`.temp`): the bench does not model the die heating itself.
//!
//! This crate starts a program in one place only, [`run`], and only when
//! the user asks for it (`guardband testbench --run`).

pub mod deck;
pub mod measure;
pub mod netlist;
pub mod results;
pub mod run;

use guardband_check::Checked;
use guardband_model::{BlockKind, Model, Node, Value};
use std::path::PathBuf;

/// Which end of a range a bench takes its values at.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Pick {
    Low,
    High,
    /// A named corner: the value as the corner's copy of the regulator has
    /// it (its nominal).
    Nominal,
}

impl Pick {
    /// The value of `v` at this end.
    pub fn of(self, v: &Value) -> f64 {
        match self {
            Pick::Low => v.lo,
            Pick::High => v.hi,
            Pick::Nominal => v.nom,
        }
    }
}

/// What a bench does, by the case's event or as an analysis.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum BenchKind {
    ShortToGround,
    Overload,
    Startup,
    ShortToSupply,
    ReverseCurrent,
    LoopGain,
}

impl BenchKind {
    fn of(case: &Node) -> Option<BenchKind> {
        if case.kind == BlockKind::Analysis {
            return Some(BenchKind::LoopGain);
        }
        Some(match case.choice("event")? {
            "short_to_ground" => BenchKind::ShortToGround,
            "overload" => BenchKind::Overload,
            "startup" => BenchKind::Startup,
            "short_to_supply" => BenchKind::ShortToSupply,
            "reverse_current" => BenchKind::ReverseCurrent,
            _ => return None,
        })
    }

    /// The quantities the bench measures, as the results file names them.
    pub fn quantities(self) -> &'static [&'static str] {
        match self {
            BenchKind::ShortToGround => &["current", "output"],
            BenchKind::Overload | BenchKind::ShortToSupply | BenchKind::ReverseCurrent => {
                &["current"]
            }
            BenchKind::Startup => &["current", "time"],
            BenchKind::LoopGain => &["unity_gain", "phase_margin", "gain_margin"],
        }
    }
}

/// One generated deck.
#[derive(Debug, Clone)]
pub struct Bench {
    pub regulator: String,
    pub case: String,
    pub corner: String,
    pub kind: BenchKind,
    /// The deck's file name in the output folder.
    pub file: String,
    pub text: String,
    /// The workspace-relative spec file and its content hash, and the
    /// netlist's path and hash, for the results file.
    pub spec: String,
    pub spec_hash: String,
    pub netlist: String,
    pub netlist_hash: String,
}

/// Why a bench (or all of a regulator's) could not be written.
#[derive(Debug, Clone, PartialEq)]
pub struct Problem {
    pub regulator: String,
    pub case: Option<String>,
    pub message: String,
}

/// The benches of a checked workspace and the problems met writing them.
#[derive(Debug, Default)]
pub struct Plan {
    pub benches: Vec<Bench>,
    pub problems: Vec<Problem>,
    /// Regulators with no `circuit` block: they have no benches.
    pub without_circuit: Vec<String>,
}

/// The default resistance on a shorted pin, when the circuit states none.
pub const DEFAULT_SHORT_RESISTANCE: f64 = 10e-3;
/// The default supply ramp of a startup bench.
pub const DEFAULT_RISE_TIME: f64 = 1e-6;

/// Plans every bench of `checked`: reads each circuit's netlist through
/// `read` (so the limits on file size apply) and writes each deck's text.
pub fn plan(checked: &Checked, read: &guardband_model::Read) -> Plan {
    let mut out = Plan::default();
    let model = &checked.model;
    for reg in model.regulators() {
        let name = reg.key().to_string();
        let Some(circuit) = model.child(reg, BlockKind::Circuit) else {
            out.without_circuit.push(name);
            continue;
        };
        let problem = |message: String| Problem {
            regulator: name.clone(),
            case: None,
            message,
        };
        let circuit_text = match circuit_of(checked, circuit, read) {
            Ok(c) => c,
            Err(message) => {
                out.problems.push(problem(message));
                continue;
            }
        };
        let spec_file = checked.ws.file(reg.file);
        let sites = sites(model, reg);
        for case in model
            .children(reg, BlockKind::Fault)
            .chain(model.children(reg, BlockKind::Analysis))
        {
            let Some(kind) = BenchKind::of(case) else {
                out.problems.push(Problem {
                    regulator: name.clone(),
                    case: Some(case.key().to_string()),
                    message: format!(
                        "{} `{}` has no event a bench is written for",
                        case.keyword,
                        case.key()
                    ),
                });
                continue;
            };
            for (corner, at, pick) in &sites {
                let Some(case_here) = guardband_rules::evidence::case_of(model, at, case.key())
                else {
                    continue;
                };
                let site = deck::Site {
                    model,
                    regulator: at,
                    case: case_here,
                    corner,
                    pick: *pick,
                    circuit: &circuit_text,
                };
                let file = format!("{}.{}.{}.cir", name, case.key(), corner);
                match deck::write(&site, kind, &file) {
                    Ok(text) => out.benches.push(Bench {
                        regulator: name.clone(),
                        case: case.key().to_string(),
                        corner: corner.clone(),
                        kind,
                        file,
                        text,
                        spec: spec_file.display.clone(),
                        spec_hash: guardband_rules::evidence::content_hash(
                            spec_file.text.as_bytes(),
                        ),
                        netlist: circuit_text.display.clone(),
                        netlist_hash: circuit_text.hash.clone(),
                    }),
                    Err(message) => out.problems.push(Problem {
                        regulator: name.clone(),
                        case: Some(case.key().to_string()),
                        message: format!("at corner `{corner}`: {message}"),
                    }),
                }
            }
        }
    }
    out
}

/// A regulator's circuit as the decks need it.
#[derive(Debug, Clone)]
pub struct Circuit {
    pub subcircuit: String,
    /// The subcircuit's ports in order.
    pub ports: Vec<String>,
    /// For each port, the spec node it connects to (`input`, `ground`, a
    /// pin, `gate_drive`, `gate_device`).
    pub map: Vec<(String, String)>,
    pub netlist: String,
    pub display: String,
    pub hash: String,
    pub short_resistance: f64,
    pub rise_time: f64,
}

fn circuit_of(
    checked: &Checked,
    circuit: &Node,
    read: &guardband_model::Read,
) -> Result<Circuit, String> {
    let path: PathBuf = guardband_check::netlist_path(&checked.ws, circuit)
        .ok_or("its `circuit` names no `netlist` file")?;
    let subcircuit = circuit
        .text("subcircuit")
        .ok_or("its `circuit` names no `subcircuit`")?
        .to_string();
    let bytes = read(&path, checked.config.limits.max_file_bytes)
        .map_err(|e| format!("the netlist {} cannot be read: {e}", path.display()))?;
    let hash = guardband_rules::evidence::content_hash(&bytes);
    let netlist = String::from_utf8(bytes)
        .map_err(|_| format!("the netlist {} is not UTF-8 text", path.display()))?;
    let ports = netlist::subcircuit_ports(&netlist, &subcircuit)?;
    let mut map = Vec::new();
    for field in circuit.fields_named("port") {
        let (Some(node), Some(guardband_model::FieldValue::Text(port))) =
            (field.name.as_deref(), field.value.as_ref())
        else {
            continue;
        };
        if !ports.iter().any(|p| p.eq_ignore_ascii_case(port)) {
            return Err(format!(
                "`port {node}` names `{port}`, which is not a port of `.subckt {subcircuit}` (its ports: {})",
                ports.join(" ")
            ));
        }
        map.push((port.clone(), node.to_string()));
    }
    let display = path
        .strip_prefix(&checked.ws.root)
        .unwrap_or(&path)
        .to_string_lossy()
        .replace('\\', "/");
    Ok(Circuit {
        subcircuit,
        ports,
        map,
        netlist,
        display,
        hash,
        short_resistance: circuit
            .quantity("short_resistance")
            .map(|v| v.nom)
            .unwrap_or(DEFAULT_SHORT_RESISTANCE),
        rise_time: circuit
            .quantity("rise_time")
            .map(|v| v.nom)
            .unwrap_or(DEFAULT_RISE_TIME),
    })
}

/// The corners a regulator's benches are written at: each named corner
/// (with the regulator's copy there), else `low` and `high`.
fn sites<'m>(model: &'m Model, reg: &'m Node) -> Vec<(String, &'m Node, Pick)> {
    let named: Vec<_> = model
        .variants_of(reg.id)
        .map(|v| {
            (
                model.node(v.corner).key().to_string(),
                model.node(v.root),
                Pick::Nominal,
            )
        })
        .collect();
    if !named.is_empty() {
        return named;
    }
    vec![
        ("low".to_string(), reg, Pick::Low),
        ("high".to_string(), reg, Pick::High),
    ]
}
