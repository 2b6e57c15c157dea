//! Hovers: a value with its unit, min / nominal / max and the stated
//! tolerances behind it; for derived quantities the breakdown (limit window
//! both ways, conductor rating formula and margin, short and startup
//! figures); on a finding, the rule's summary and how to fix it.

use super::locate::{self, Hit};
use crate::engine::Analysis;
use guardband_model::{
    BlockKind, FieldValue, FileId, Model, Node, NodeId, Symbol, Value, Workspace,
};
use guardband_rules::derive::view::{self, Role, Row};
use guardband_rules::derive::{stat_settings, statistical};
use guardband_rules::show::{in_unit, number, percent};
use guardband_units::QuantityKind;
use std::fmt::Write;
use tower_lsp_server::ls_types::{Hover, HoverContents, MarkupContent, MarkupKind};

/// The hover at byte `offset` of `file`, if anything is there.
pub fn hover(analysis: &Analysis, file: FileId, offset: usize) -> Option<Hover> {
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
            let at = model
                .corner_of(n)
                .map(|c| format!(" at corner `{}`", c.key()))
                .unwrap_or_default();
            let _ = writeln!(
                out,
                "**`{}.{}`**{at}: {}\n",
                node.path, field.key, field.spec.doc
            );
            match &field.value {
                Some(FieldValue::Quantity(v)) => value(
                    model,
                    &analysis.checked.ws,
                    v,
                    &analysis.checked.config.options,
                    out,
                ),
                Some(FieldValue::Ref(target)) => {
                    let _ = writeln!(out, "names `{}`", model.node(*target).path);
                }
                Some(FieldValue::Sourced { value: v, source }) => {
                    let _ = writeln!(
                        out,
                        "drawn from supply `{}`: its `voltage`\n",
                        model.node(*source).path
                    );
                    self::value(
                        model,
                        &analysis.checked.ws,
                        v,
                        &analysis.checked.config.options,
                        out,
                    );
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
            if matches!(node.kind, BlockKind::Metal | BlockKind::BondWire) {
                process_data(analysis, node, out);
            }
            derived_block(analysis, node, None, out);
        }
    }
}

/// A metal layer or a bond-wire type: its data as written, and every
/// conductor that uses it with its rating against its current.
fn process_data(analysis: &Analysis, node: &Node, out: &mut String) {
    let model = &analysis.checked.model;
    let ws = &analysis.checked.ws;
    let file = ws.file(node.file);
    for f in &node.fields {
        let written = file.text.get(f.expr.span.clone()).unwrap_or("").trim();
        let _ = writeln!(out, "- `{}` = {written}: {}", f.key, f.spec.doc);
    }
    let key = match node.kind {
        BlockKind::Metal => "layer",
        _ => "wire",
    };
    let mut users = Vec::new();
    for d in &analysis.checked.derived {
        for c in &d.conductors {
            let conductor = model.node(c.node);
            if conductor.reference(key) != Some(node.id) {
                continue;
            }
            let rating = match (&c.rating, &c.current) {
                (Ok(r), Ok(i)) => format!(
                    "rated {} against {} ({})",
                    in_unit(*r, QuantityKind::CURRENT, None),
                    in_unit(*i, QuantityKind::CURRENT, None),
                    if guardband_rules::compare::below(*r, *i) {
                        "short"
                    } else {
                        "clears it"
                    }
                ),
                (Ok(r), Err(_)) => format!("rated {}", in_unit(*r, QuantityKind::CURRENT, None)),
                (Err(u), _) => format!("no rating: {}", u.why.describe(model)),
            };
            users.push(format!("- `{}`: {rating}", conductor.path));
        }
    }
    if users.is_empty() {
        let _ = writeln!(out, "\nNo conductor in this check uses it.\n");
    } else {
        let _ = writeln!(out, "\n**Used by**\n\n{}\n", users.join("\n"));
    }
}

/// A quantity: nominal, bounds, and each stated tolerance with its share.
fn value(
    model: &Model,
    ws: &Workspace,
    v: &Value,
    options: &guardband_rules::Options,
    out: &mut String,
) {
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
    let _ = writeln!(out, "Bounds: {}.\n", v.bounds.describe());
    let stat = statistical(model, v, &stat_settings(options));
    let _ = writeln!(
        out,
        "Statistical (window ± {} σ): {} .. {}\n",
        number(stat.k),
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
            show_delta(c.sigma * stat.k + c.bound, v),
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

/// The derived rows that belong with `node` (or its field `key`).
fn derived_block(analysis: &Analysis, node: &Node, key: Option<&str>, out: &mut String) {
    let model = &analysis.checked.model;
    if node.kind == BlockKind::Supply {
        let rows: Vec<Row> = analysis
            .checked
            .rails
            .iter()
            .filter(|r| r.supply == node.id)
            .flat_map(|r| view::rail_rows(model, r))
            .collect();
        return write_rows(&rows.iter().collect::<Vec<_>>(), out);
    }
    let regulator = model.item_of(node.id);
    // A node of a corner's copy shows the figures at that corner.
    let derived = if model.corner_of(node.id).is_some() {
        guardband_rules::derive::derived_of(&analysis.checked.corners, regulator.id)
    } else {
        analysis.checked.derived_for(regulator.id)
    };
    let Some(derived) = derived else {
        return;
    };
    let rows = view::rows(model, derived, &analysis.checked.config.options);
    let event = node.choice("event");
    if node.kind == BlockKind::Fault {
        fault_expectations(model, derived, node, out);
    }
    if matches!(node.kind, BlockKind::Fault | BlockKind::Analysis) {
        case_evidence(analysis, regulator, node, out);
    }
    let wanted = |r_node: NodeId, role: Role| match node.kind {
        BlockKind::Regulator => r_node == node.id || role == Role::NotDerived,
        BlockKind::Limit | BlockKind::Conductor | BlockKind::Pass | BlockKind::CycleBudget => {
            r_node == node.id
        }
        BlockKind::Startup => matches!(role, Role::StartupSurge | Role::StartupTime),
        BlockKind::Pin if key.is_none() || key == Some("capacitance") => {
            matches!(role, Role::StartupSurge | Role::StartupTime)
        }
        BlockKind::ThermalShutdown | BlockKind::Hiccup | BlockKind::Foldback => matches!(
            role,
            Role::ShortHeat
                | Role::OverloadHeat
                | Role::RatedLoadHeat
                | Role::Cycling
                | Role::CycleDamage
                | Role::FaultTemperature
                | Role::ShortCurrent
        ),
        BlockKind::Fault => match event {
            Some("short_to_ground") => matches!(role, Role::ShortCurrent | Role::ShortHeat),
            Some("overload") => matches!(
                role,
                Role::WorstCurrent | Role::OverloadHeat | Role::Recovery
            ),
            Some("startup") => matches!(role, Role::StartupSurge | Role::StartupTime),
            Some("short_to_supply" | "reverse_current") => {
                role == Role::ReverseCase && r_node == node.id
            }
            _ => false,
        },
        _ => false,
    };
    let chosen: Vec<&Row> = rows.iter().filter(|r| wanted(r.node, r.role)).collect();
    write_rows(&chosen, out);
    let corners = analysis.checked.corners_of(regulator.id);
    if !corners.is_empty() {
        let at = view::corner_rows(model, &analysis.checked.config.options, &corners);
        let chosen: Vec<&view::CornerRow> = at.iter().filter(|r| wanted(r.node, r.role)).collect();
        write_corner_rows(&chosen, out);
    }
}

/// The figures at each named corner as a hover's list: one line per
/// figure, each corner's value, and the worst corner.
fn write_corner_rows(chosen: &[&view::CornerRow], out: &mut String) {
    if chosen.is_empty() {
        return;
    }
    let _ = writeln!(out, "**At each corner**\n");
    for r in chosen {
        let each: Vec<String> =
            r.at.iter()
                .map(|(corner, value)| format!("`{corner}` {value}"))
                .collect();
        let _ = writeln!(out, "- {}: {}", r.label, each.join("; "));
        if let Some(w) = &r.worst {
            let _ = writeln!(out, "  - {w}");
        }
    }
    out.push('\n');
}

/// Each expectation of a fault case beside the derived bound it is held
/// against, and whether it holds, breaks, or is not checked.
fn fault_expectations(
    model: &Model,
    derived: &guardband_rules::Derived,
    fault: &Node,
    out: &mut String,
) {
    use guardband_rules::derive::expected::{Expected, expectations, expected};
    use guardband_syntax::Relation;
    let mut lines = Vec::new();
    for e in expectations(model, derived)
        .into_iter()
        .filter(|e| e.fault.id == fault.id)
    {
        let (exp, bound, name, event) = (e.field, e.bound, e.name, e.event);
        let upper = matches!(exp.relation, Relation::AtMost | Relation::Below);
        let limit = if upper { bound.lo } else { bound.hi };
        let show = |x: f64| in_unit(x, bound.kind, bound.unit.as_deref());
        let stated = format!("`expect {name} {} {}`", exp.relation.symbol(), show(limit));
        let verdict = match expected(derived, fault, event, name) {
            Expected::Bounds(b) => match if upper { b.hi } else { b.lo } {
                Some(x) => {
                    let holds = match exp.relation {
                        Relation::AtMost => !guardband_rules::compare::exceeds(x, limit),
                        Relation::Below => guardband_rules::compare::below(x, limit),
                        Relation::AtLeast => !guardband_rules::compare::below(x, limit),
                        _ => guardband_rules::compare::exceeds(x, limit),
                    };
                    format!(
                        "derived {} {} ({}): {}",
                        if upper { "up to" } else { "at least" },
                        show(x),
                        b.why,
                        if holds {
                            "holds at every corner"
                        } else {
                            "broken at some corner"
                        }
                    )
                }
                None => "not checked: the checker derives no bound on that side".to_string(),
            },
            Expected::Unknown(u) => format!("not checked: {}", u.describe(model)),
            Expected::NotDerived => format!("not checked: no {name} is derived for this event"),
        };
        lines.push(format!("- {stated}: {verdict}"));
    }
    if !lines.is_empty() {
        let _ = writeln!(out, "**Expectations**\n\n{}\n", lines.join("\n"));
    }
}

/// The measurements the results files hold for a fault case or analysis,
/// per corner, with where each is (the evidence rules judge them).
fn case_evidence(analysis: &Analysis, regulator: &Node, case: &Node, out: &mut String) {
    let evidence = &analysis.checked.config.evidence;
    let mut lines = Vec::new();
    for m in evidence
        .of(regulator.key())
        .filter(|m| m.case == case.key())
    {
        let Some(kind) = guardband_rules::evidence::quantity_kind(case.kind, &m.quantity) else {
            continue;
        };
        lines.push(format!(
            "- `{}` {} {} ({})",
            m.corner,
            m.quantity,
            in_unit(m.value, kind, Some(&m.unit)),
            guardband_rules::evidence::place(&analysis.checked.ws, m)
        ));
    }
    if !lines.is_empty() {
        let _ = writeln!(out, "**Evidence (measured)**\n\n{}\n", lines.join("\n"));
    } else if evidence.given {
        let _ = writeln!(out, "**Evidence (measured)**: none in the results files\n");
    }
}

/// Derived rows as a hover's list.
fn write_rows(chosen: &[&Row], out: &mut String) {
    if chosen.is_empty() {
        return;
    }
    let _ = writeln!(out, "**Derived (bounds over every corner)**\n");
    for r in chosen {
        let _ = writeln!(out, "- {}: {}", r.label, r.value);
        if !r.basis.is_empty() {
            let _ = writeln!(out, "  - {}", r.basis);
        }
        for d in &r.details {
            let _ = writeln!(out, "  - {d}");
        }
    }
    out.push('\n');
}
