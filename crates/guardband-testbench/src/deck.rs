//! The text of one ngspice deck: the circuit's netlist embedded, the
//! supply, the regulator's subcircuit with its ports on the bench's nodes,
//! the output capacitors, the forcing the case asks for, and a `.control`
//! block that runs the analysis and prints each measurement on a line of
//! its own, `guardband-measure NAME VALUE` (SI units), which
//! [`crate::measure`] reads back.
//!
//! Nodes: `nin` the supply, `0` ground, `p_NAME` the pin `NAME`, `ngd` and
//! `ng` the pass gate's driving and device sides, joined by `Vbreak`
//! (0 V; the loop-gain bench injects there).

use crate::{BenchKind, Circuit, Pick};
use guardband_model::{Model, Node, Value};
use guardband_units::{Dimension, QuantityKind};
use std::fmt::Write;

/// One regulator at one corner, with the case a bench is written for.
pub struct Site<'a> {
    pub model: &'a Model,
    /// The regulator as the corner has it (the written one for `low` and
    /// `high`).
    pub regulator: &'a Node,
    pub case: &'a Node,
    pub corner: &'a str,
    pub pick: Pick,
    pub circuit: &'a Circuit,
}

/// The name of the file the loop-gain bench writes its loop gain to,
/// beside the deck.
pub fn loop_file(deck: &str) -> String {
    format!("{}.loop.txt", deck.trim_end_matches(".cir"))
}

/// The file the overload bench writes its load line to (output voltage
/// and current, a line per point of the sweep), beside the deck.
pub fn load_line_file(deck: &str) -> String {
    format!("{}.loadline.txt", deck.trim_end_matches(".cir"))
}

/// A number as SPICE reads it, to 12 significant digits (so 343.15 K −
/// 273.15 reads `7e1`, not its last-bit error).
fn n(x: f64) -> String {
    let rounded: f64 = format!("{x:.11e}").parse().unwrap_or(x);
    format!("{rounded:e}")
}

fn zero_celsius() -> f64 {
    273.15
}

impl Site<'_> {
    fn need(&self, node: &Node, key: &str) -> Result<f64, String> {
        node.quantity(key)
            .map(|v| self.pick.of(v))
            .ok_or_else(|| format!("`{}` has no readable `{key}`", node.path))
    }

    fn pin(&self) -> Result<&Node, String> {
        let id = self
            .case
            .reference("pin")
            .ok_or_else(|| format!("{} `{}` names no pin", self.case.keyword, self.case.key()))?;
        Ok(self.model.node(id))
    }

    /// The bench node a spec node is on.
    fn node_of(&self, spec_node: &str) -> Result<String, String> {
        Ok(match spec_node {
            "input" => "nin".into(),
            "ground" => "0".into(),
            "gate_drive" => "ngd".into(),
            "gate_device" => "ng".into(),
            pin => {
                let known = self
                    .model
                    .children(self.regulator, guardband_model::BlockKind::Pin)
                    .any(|p| p.key() == pin);
                if !known {
                    return Err(format!(
                        "`port {pin}` names no pin of `{}` (nor `input`, `ground`, `gate_drive`, `gate_device`)",
                        self.regulator.key()
                    ));
                }
                format!("p_{pin}")
            }
        })
    }

    /// The subcircuit instance, with `sensed` (a pin) attached through a
    /// 0 V source `Vosense` so that the current into it is measured.
    fn instance(&self, sensed: Option<&str>) -> Result<String, String> {
        let c = self.circuit;
        let mut line = String::from("X1");
        for port in &c.ports {
            let Some((_, spec)) = c.map.iter().find(|(p, _)| p.eq_ignore_ascii_case(port)) else {
                return Err(format!(
                    "port `{port}` of `.subckt {}` is not mapped: add `port NODE = \"{port}\"` to the `circuit` block",
                    c.subcircuit
                ));
            };
            let node = if sensed == Some(spec.as_str()) {
                format!("x_{spec}")
            } else {
                self.node_of(spec)?
            };
            line.push(' ');
            line.push_str(&node);
        }
        line.push(' ');
        line.push_str(&c.subcircuit);
        line.push('\n');
        if let Some(pin) = sensed {
            writeln!(line, "Vosense x_{pin} p_{pin} DC 0").unwrap();
        }
        Ok(line)
    }

    fn maps(&self, spec: &str) -> bool {
        self.circuit.map.iter().any(|(_, s)| s == spec)
    }

    /// The off-chip capacitors on every mapped pin that states one.
    fn capacitors(&self) -> String {
        let mut out = String::new();
        for pin in self
            .model
            .children(self.regulator, guardband_model::BlockKind::Pin)
        {
            if let (true, Some(c)) = (self.maps(pin.key()), pin.quantity("capacitance")) {
                writeln!(out, "C_{0} p_{0} 0 {1}", pin.key(), n(self.pick.of(c))).unwrap();
            }
        }
        out
    }

    fn header(&self, file: &str) -> String {
        let mut out = format!(
            "* guardband bench {file}: regulator `{}`, {} `{}`, corner `{}`\n\
             * written by `guardband testbench`; write it again rather than edit it\n",
            self.regulator.key(),
            self.case.keyword,
            self.case.key(),
            self.corner,
        );
        out.push_str(&crate::netlist::embedded(
            &self.circuit.netlist,
            &self.circuit.display,
        ));
        out
    }
}

/// A load (current, resistance or constant power) on `node` as a SPICE element.
fn load_element(name: &str, node: &str, load: &Value, x: f64) -> Result<String, String> {
    let dim = load.kind.dim;
    Ok(if dim == Dimension::CURRENT {
        format!("I{name} {node} 0 DC {}\n", n(x))
    } else if dim == Dimension::RESISTANCE {
        format!("R{name} {node} 0 {}\n", n(x))
    } else if dim == Dimension::POWER {
        // A constant-power load: I = P / V, held finite near 0 V.
        format!("B{name} {node} 0 I = {} / max(v({node}), 0.05)\n", n(x))
    } else {
        return Err("the load is neither a current, a resistance nor a power".into());
    })
}

/// The deck for `kind` at `site`, named `file`, or why it cannot be written.
pub fn write(site: &Site, kind: BenchKind, file: &str) -> Result<String, String> {
    let reg = site.regulator;
    let c = site.circuit;
    let ambient = site.need(reg, "ambient")? - zero_celsius();
    let vin = site.need(reg, "supply")?;
    let mut deck = site.header(file);
    writeln!(deck, ".temp {}", n(ambient)).unwrap();
    let gate_split = site.maps("gate_drive") && site.maps("gate_device");
    let mut control = String::new();
    let mut elements = String::new();
    match kind {
        BenchKind::ShortToGround => {
            let pin = site.pin()?.key().to_string();
            writeln!(elements, "Vsup nin 0 DC {}", n(vin)).unwrap();
            elements.push_str(&site.instance(None)?);
            writeln!(elements, "Rshort p_{pin} nshort {}", n(c.short_resistance)).unwrap();
            elements.push_str("Vsense nshort 0 DC 0\n");
            control.push_str("op\nlet gb_current = i(vsense)\n");
            writeln!(control, "let gb_output = v(p_{pin})").unwrap();
        }
        BenchKind::Overload => {
            let pin = site.pin()?.key().to_string();
            let out_lo = reg
                .quantity("output")
                .map(|v| v.lo)
                .ok_or("the regulator has no readable `output`")?;
            let top = 0.95 * out_lo;
            writeln!(elements, "Vsup nin 0 DC {}", n(vin)).unwrap();
            elements.push_str(&site.instance(None)?);
            writeln!(elements, "Vforce p_{pin} 0 DC 0").unwrap();
            // The load line: the output forced from 0 V to just below
            // regulation; the largest current over the sweep.
            writeln!(control, "dc vforce 0 {} {}", n(top), n(top / 200.0)).unwrap();
            control.push_str("let gb_current = vecmax(i(vforce))\n");
            // The whole curve, for the reader: output voltage, current.
            writeln!(control, "wrdata {} i(vforce)", load_line_file(file)).unwrap();
        }
        BenchKind::Startup => {
            let pin = site.pin()?.key().to_string();
            let output = reg
                .quantity("output")
                .ok_or("the regulator has no readable `output`")?;
            let startup = site.model.child(reg, guardband_model::BlockKind::Startup);
            let time_max = startup.and_then(|s| s.quantity("time_max")).map(|v| v.hi);
            let stop = time_max.map_or(1e-3, |t| 5.0 * t).max(20.0 * c.rise_time);
            writeln!(
                elements,
                "Vsup nin 0 PWL(0 0 {} {})",
                n(c.rise_time),
                n(vin)
            )
            .unwrap();
            elements.push_str(&site.instance(Some(&pin))?);
            let (load, x) = match startup.and_then(|s| s.quantity("load")) {
                Some(l) => (l, site.pick.of(l)),
                None => {
                    let l = reg
                        .quantity("load")
                        .ok_or("the regulator has no readable `load`")?;
                    (l, l.hi)
                }
            };
            elements.push_str(&load_element("load", &format!("p_{pin}"), load, x)?);
            writeln!(control, "tran {} {} uic", n(stop / 5000.0), n(stop)).unwrap();
            control.push_str("meas tran gb_surge max i(vosense)\n");
            writeln!(
                control,
                "meas tran gb_t90 when v(p_{pin})={} rise=1",
                n(0.9 * output.nom)
            )
            .unwrap();
            control.push_str("let gb_current = gb_surge\nlet gb_time = gb_t90\n");
        }
        BenchKind::ShortToSupply | BenchKind::ReverseCurrent => {
            let pin = site.pin()?.key().to_string();
            let fault_v = site.need(site.case, "voltage")?;
            let r = site
                .case
                .quantity("resistance")
                .map(|v| site.pick.of(v))
                .unwrap_or(c.short_resistance);
            if kind == BenchKind::ShortToSupply {
                writeln!(elements, "Vsup nin 0 DC {}", n(vin)).unwrap();
                writeln!(elements, "Vfault nf 0 DC {}", n(fault_v)).unwrap();
            } else {
                // The input has fallen to the fault's voltage; the output
                // is held at its regulated level by another source.
                let held = site.need(reg, "output")?;
                writeln!(elements, "Vsup nin 0 DC {}", n(fault_v)).unwrap();
                writeln!(elements, "Vfault nf 0 DC {}", n(held)).unwrap();
            }
            elements.push_str(&site.instance(None)?);
            writeln!(elements, "Rfault p_{pin} nf {}", n(r)).unwrap();
            control.push_str("op\nlet gb_current = abs(i(vfault))\n");
        }
        BenchKind::LoopGain => {
            if !gate_split {
                return Err(
                    "the loop-gain bench breaks the loop at the pass gate: map `gate_drive` and `gate_device` in the `circuit` block"
                        .into(),
                );
            }
            writeln!(elements, "Vsup nin 0 DC {}", n(vin)).unwrap();
            elements.push_str(&site.instance(None)?);
            for force in site.case.fields_named("force") {
                let (Some(pin), Some(v)) = (force.name.as_deref(), force.quantity()) else {
                    continue;
                };
                let node = site.node_of(pin)?;
                let x = site.pick.of(v);
                let dim = v.kind.dim;
                if dim == Dimension::VOLTAGE {
                    writeln!(elements, "Vforce_{pin} {node} 0 DC {}", n(x)).unwrap();
                } else if dim == Dimension::RESISTANCE {
                    writeln!(elements, "Rforce_{pin} {node} 0 {}", n(x)).unwrap();
                } else if v.kind == QuantityKind::CURRENT {
                    writeln!(elements, "Iforce_{pin} {node} 0 DC {}", n(x)).unwrap();
                }
            }
            // Double injection at the gate (voltage, then current), from
            // which the loop gain is T = 1 / (V + 1 - I) - 1: see
            // `measure::loop_gain`.
            elements.push_str("Vbreak ng ngd DC 0 AC 1\nIinj 0 ng DC 0 AC 0\n");
            let data = loop_file(file);
            write!(
                control,
                "op\nac dec 50 1 10G\nalter @vbreak[acmag] = 0\nalter @iinj[acmag] = 1\nac dec 50 1 10G\n\
                 let gb_t = 1/(ac1.v(ng) + 1 - ac2.i(vbreak)) - 1\nwrdata {data} gb_t\n\
                 echo guardband-measure loop_written 1\n"
            )
            .unwrap();
        }
    }
    if gate_split && kind != BenchKind::LoopGain {
        elements.push_str("Vbreak ng ngd DC 0\n");
    }
    elements.push_str(&site.capacitors());
    deck.push_str(&elements);
    deck.push_str(".control\nset noaskquit\n");
    deck.push_str(&control);
    if kind != BenchKind::LoopGain {
        for q in kind.quantities() {
            writeln!(deck, "echo guardband-measure {q} $&gb_{q}").unwrap();
        }
    }
    deck.push_str(".endc\n.end\n");
    Ok(deck)
}
