//! Hovers: a value with its unit, min / nominal / max and the stated
//! tolerances behind it; for derived quantities the breakdown (limit window
//! both ways, conductor rating formula and margin, short and startup
//! figures); on a finding, the rule's summary and how to fix it.

use super::locate::{self, Hit};
use crate::encoding::Encoding;
use crate::engine::Analysis;
use guardband_model::{BlockKind, FieldValue, FileId, Model, Node, Symbol, Value, Workspace};
use guardband_rules::derive::{ConductorRating, Derived, LimitWindow, statistical};
use guardband_rules::format::{bounds, in_unit, number, percent};
use guardband_units::{Dimension, QuantityKind};
use std::fmt::Write;
use tower_lsp_server::ls_types::{Hover, HoverContents, MarkupContent, MarkupKind, Position};

/// The hover at `position` of `file`, if anything is there.
pub fn hover(
    analysis: &Analysis,
    file: FileId,
    position: Position,
    encoding: Encoding,
) -> Option<Hover> {
    let index = &analysis.checked.ws.file(file).line_index;
    let offset = encoding.offset(index, position);
    let text = markdown(analysis, file, offset)?;
    Some(Hover {
        contents: HoverContents::Markup(MarkupContent {
            kind: MarkupKind::Markdown,
            value: text,
        }),
        range: None,
    })
}

/// The hover text at byte `offset`, as Markdown.
pub fn markdown(analysis: &Analysis, file: FileId, offset: usize) -> Option<String> {
    let mut out = String::new();
    findings(analysis, file, offset, &mut out);
    let hit = locate::at(analysis, file, offset);
    let symbol = match &hit {
        Some(Hit::FieldValue(n, i)) => Some(Symbol::Field(*n, *i)),
        Some(h) => h.symbol(),
        None => None,
    };
    if let Some(symbol) = symbol {
        if !out.is_empty() {
            out.push_str("\n---\n\n");
        }
        describe(analysis, symbol, &mut out);
    }
    (!out.is_empty()).then_some(out)
}

/// The findings whose span holds `offset`: message, rule summary, how to fix.
fn findings(analysis: &Analysis, file: FileId, offset: usize, out: &mut String) {
    let rules = guardband_rules::registry();
    for d in analysis
        .checked
        .diagnostics
        .iter()
        .filter(|d| d.file == file && d.span.start <= offset && offset <= d.span.end)
    {
        let _ = writeln!(
            out,
            "**{}** `{}`: {}\n",
            d.severity.as_str(),
            d.rule,
            d.message
        );
        if let Some(rule) = rules.iter().find(|r| r.name == d.rule) {
            let _ = writeln!(out, "{}\n", rule.summary);
            if let Some(fix) = rule.section("How to fix") {
                let _ = writeln!(out, "*How to fix:* {}\n", fix.replace('\n', " "));
            }
        } else if let Some(help) = &d.help {
            let _ = writeln!(out, "*Help:* {help}\n");
        }
    }
}

/// Describes a block or a field.
pub fn describe(analysis: &Analysis, symbol: Symbol, out: &mut String) {
    let model = &analysis.checked.model;
    match symbol {
        Symbol::Field(n, i) => {
            let node = model.node(n);
            let field = &node.fields[i];
            let _ = writeln!(
                out,
                "**`{}.{}`**: {}\n",
                node.path, field.key, field.spec.doc
            );
            match &field.value {
                Some(FieldValue::Quantity(v)) => value(
                    model,
                    &analysis.checked.ws,
                    v,
                    analysis.checked.config.sigma,
                    out,
                ),
                Some(FieldValue::Ref(target)) => {
                    let _ = writeln!(out, "names `{}`", model.node(*target).path);
                }
                Some(FieldValue::Node { node, terminal }) => {
                    let _ = writeln!(
                        out,
                        "circuit node `{}{}`",
                        model.node(*node).path,
                        terminal
                            .as_ref()
                            .map(|t| format!(".{t}"))
                            .unwrap_or_default()
                    );
                }
                Some(FieldValue::Bool(b)) => {
                    let _ = writeln!(out, "`{b}`");
                }
                Some(FieldValue::Choice(c)) => {
                    let _ = writeln!(out, "`{c}`");
                }
                Some(FieldValue::Text(t)) => {
                    let _ = writeln!(out, "\"{t}\"");
                }
                None => {
                    let _ = writeln!(out, "*(no value: see the error on it)*");
                }
            }
            derived_block(analysis, node, Some(&field.key), out);
        }
        Symbol::Node(n) => {
            let node = model.node(n);
            let _ = writeln!(out, "**{} `{}`**\n", node.keyword, node.path);
            derived_block(analysis, node, None, out);
        }
    }
}

/// A quantity: nominal, bounds, and each stated tolerance with its share.
fn value(model: &Model, ws: &Workspace, v: &Value, sigma: f64, out: &mut String) {
    let unit = v.unit.as_deref();
    let show = |x: f64| in_unit(x, v.kind, unit);
    let _ = writeln!(
        out,
        "| min | nominal | max |\n|---|---|---|\n| {} | {} | {} |\n",
        show(v.lo),
        show(v.nom),
        show(v.hi)
    );
    if v.terms.is_empty() {
        return;
    }
    let stat = statistical(v, sigma);
    let _ = writeln!(
        out,
        "Statistical ({} σ per stated ±): {} .. {}\n",
        number(sigma),
        show(stat.lo),
        show(stat.hi)
    );
    let _ = writeln!(
        out,
        "| tolerance | stated in | as written | share |\n|---|---|---|---|"
    );
    for c in &stat.contributors {
        let src = model.source(c.source);
        let _ = writeln!(
            out,
            "| ±{} | `{}` | `{}` | {} |",
            show_delta(c.sigma * sigma, v),
            src.label(model),
            src.text(ws),
            percent(c.share)
        );
    }
    out.push('\n');
}

/// A deviation in the value's own unit (differences never get an offset).
fn show_delta(delta: f64, v: &Value) -> String {
    let kind = if v.kind.is_temperature() {
        QuantityKind::TEMPERATURE_DIFFERENCE
    } else {
        v.kind
    };
    let unit = if v.kind.is_temperature() {
        Some("K")
    } else {
        v.unit.as_deref()
    };
    in_unit(delta, kind, unit)
}

/// What the derivation says about `node` (or its field `key`).
fn derived_block(analysis: &Analysis, node: &Node, key: Option<&str>, out: &mut String) {
    let model = &analysis.checked.model;
    let regulator = model.item_of(node.id);
    let Some(derived) = analysis.checked.derived_for(regulator.id) else {
        return;
    };
    match node.kind {
        BlockKind::Regulator => regulator_summary(model, &analysis.checked.ws, derived, out),
        BlockKind::Limit => {
            if let Some(lw) = derived.limits.iter().find(|l| l.node == node.id) {
                limit_window(model, &analysis.checked.ws, derived, lw, out);
            }
        }
        BlockKind::Conductor => {
            if let Some(c) = derived.conductors.iter().find(|c| c.node == node.id) {
                conductor(model, derived, c, out);
            }
        }
        BlockKind::Startup => startup(derived, out),
        BlockKind::ThermalShutdown => short(derived, out),
        BlockKind::Pin if key.is_none() || key == Some("capacitance") => startup(derived, out),
        _ => {}
    }
}

fn current(x: f64, unit: Option<&str>) -> String {
    in_unit(x, QuantityKind::CURRENT, unit)
}

/// The window of one limit, worst case and statistical, against the load.
pub fn limit_window(
    model: &Model,
    ws: &Workspace,
    derived: &Derived,
    lw: &LimitWindow,
    out: &mut String,
) {
    let unit = lw.window.unit.as_deref().or(derived.load_unit.as_deref());
    let _ = writeln!(out, "**Limit window**\n");
    let _ = writeln!(out, "- worst case: {}", bounds(&lw.window));
    let _ = writeln!(
        out,
        "- statistical: {} .. {} (mean {})",
        current(lw.stat.lo, unit),
        current(lw.stat.hi, unit),
        current(lw.stat.mean, unit)
    );
    if let Some(t) = &lw.trip {
        let _ = writeln!(out, "- characterised trip: {}", bounds(t));
    }
    if let (Some(load), Some(req)) = (derived.rated_load, derived.required()) {
        let _ = writeln!(
            out,
            "- rated load {} + {} margin = {} required; low edge clears it by {}",
            current(load, unit),
            percent(derived.margin),
            current(req, unit),
            current(lw.window.lo - req, unit)
        );
        let _ = writeln!(
            out,
            "- parts tripping below that: {} ppm",
            number(guardband_rules::derive::escape_ppm(&lw.stat, req))
        );
    }
    if !lw.stat.contributors.is_empty() {
        let _ = writeln!(
            out,
            "\n| contributor | as written | share of variance |\n|---|---|---|"
        );
        for c in &lw.stat.contributors {
            let src = model.source(c.source);
            let _ = writeln!(
                out,
                "| `{}` | `{}` | {} |",
                src.label(model),
                src.text(ws),
                percent(c.share)
            );
        }
    }
    out.push('\n');
}

/// A conductor: the formula with its inputs, the rating, the worst current, the margin.
pub fn conductor(model: &Model, derived: &Derived, c: &ConductorRating, out: &mut String) {
    let node = model.node(c.node);
    let unit = derived.worst.as_ref().and_then(|w| w.unit.as_deref());
    let _ = writeln!(out, "**Conductor rating**\n");
    if let Some(layer) = node.reference("layer").map(|l| model.node(l)) {
        let w = node.quantity("width");
        let t = layer.quantity("thickness");
        let j = layer.quantity("current_density");
        if let (Some(w), Some(t), Some(j)) = (w, t, j) {
            let _ = writeln!(
                out,
                "- width {} × thickness {} × current density {} (low ends) = {}",
                in_unit(w.lo, w.kind, w.unit.as_deref()),
                in_unit(t.lo, t.kind, t.unit.as_deref()),
                in_unit(j.lo, j.kind, j.unit.as_deref()),
                current(w.lo * t.lo * j.lo, unit)
            );
        } else if let (Some(w), Some(jw)) = (w, layer.quantity("current_per_width")) {
            let _ = writeln!(
                out,
                "- width {} × current per width {} (low ends) = {}",
                in_unit(w.lo, w.kind, w.unit.as_deref()),
                in_unit(jw.lo, jw.kind, jw.unit.as_deref()),
                current(w.lo * jw.lo, unit)
            );
        }
    }
    if !c.basis.is_empty() {
        let _ = writeln!(out, "- basis: {}", c.basis);
    }
    match &c.rating {
        Ok(r) => {
            let _ = writeln!(out, "- rating: {}", current(*r, unit));
            if let Some(worst) = &derived.worst {
                let _ = writeln!(
                    out,
                    "- worst current: {} ({})",
                    current(worst.value, unit),
                    worst.reason
                );
                if worst.value > 0.0 {
                    let _ = writeln!(out, "- margin: {}", percent(r / worst.value - 1.0));
                }
            }
        }
        Err(why) => {
            let _ = writeln!(out, "- not rated: {why}");
        }
    }
    if let Some(r) = c.resistance {
        let _ = writeln!(
            out,
            "- resistance at temperature: {}",
            in_unit(r, QuantityKind::of(Dimension::RESISTANCE), None)
        );
    }
    out.push('\n');
}

fn startup(derived: &Derived, out: &mut String) {
    let Some(s) = &derived.startup else { return };
    let _ = writeln!(out, "**Startup**\n");
    let _ = writeln!(
        out,
        "- charge {} to {} with {} load",
        in_unit(
            s.capacitance,
            QuantityKind::of(Dimension::CAPACITANCE),
            Some("uF")
        ),
        in_unit(s.voltage, QuantityKind::VOLTAGE, Some("V")),
        current(s.load, None)
    );
    let _ = writeln!(
        out,
        "- surge: {} ({})",
        current(s.surge, None),
        s.surge_reason
    );
    match (s.time, s.charge_min) {
        (Some(t), _) => {
            let _ = writeln!(
                out,
                "- worst-case time (t = C·V / I): {}",
                in_unit(t, QuantityKind::of(Dimension::TIME), Some("us"))
            );
        }
        (None, Some(i)) => {
            let _ = writeln!(
                out,
                "- never starts: {} of charging current does not exceed the load",
                current(i, None)
            );
        }
        (None, None) => {}
    }
    out.push('\n');
}

fn short(derived: &Derived, out: &mut String) {
    let Some(s) = &derived.short else { return };
    let _ = writeln!(out, "**Sustained short**\n");
    let _ = writeln!(
        out,
        "- current: {} ({})",
        current(s.current, None),
        s.reason
    );
    let _ = writeln!(
        out,
        "- dissipation: {}",
        in_unit(s.power, QuantityKind::of(Dimension::POWER), None)
    );
    let _ = writeln!(
        out,
        "- junction (T_A + P·θJA): {}\n",
        in_unit(s.junction, QuantityKind::ABSOLUTE_TEMPERATURE, Some("°C"))
    );
}

fn regulator_summary(model: &Model, ws: &Workspace, derived: &Derived, out: &mut String) {
    let unit = derived.load_unit.as_deref();
    if let Some(load) = derived.rated_load {
        let _ = writeln!(out, "- rated load: {}", current(load, unit));
    }
    if let Some(req) = derived.required() {
        let _ = writeln!(out, "- rated load + margin: {}", current(req, unit));
    }
    if let Some(w) = &derived.worst {
        let _ = writeln!(
            out,
            "- worst current: {} ({})",
            current(w.value, unit),
            w.reason
        );
    }
    out.push('\n');
    for lw in &derived.limits {
        limit_window(model, ws, derived, lw, out);
    }
    startup(derived, out);
    short(derived, out);
}
