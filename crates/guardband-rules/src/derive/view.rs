//! The derived figures as labelled rows: the one place they are worded.
//! Hovers, inlay hints and the report render these rows, so a new figure
//! touches its derivation and this view only, and a reviewer reads the
//! same numbers in the editor and in the report.

use super::{Carries, Derived, Scheme, escape_ppm, sigmas_below};
use crate::options::Options;
use crate::show::{bounds, in_unit, number, percent, ppm};
use guardband_model::{FileId, Model, NodeId};
use guardband_units::{Dimension, QuantityKind};

/// What a row shows, for charts and for picking rows per block.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Role {
    RatedLoad,
    Margin,
    LimitWorstCase,
    LimitStatistical,
    Escape,
    Trip,
    FullGate,
    WorstCurrent,
    ShortCurrent,
    ShortHeat,
    OverloadHeat,
    RatedLoadHeat,
    Recovery,
    Cycling,
    CycleDamage,
    FaultTemperature,
    StartupSurge,
    StartupTime,
    ReverseCase,
    ConductorRating,
    /// A shared supply's droop (rows of a `supply` item, from [`rail_rows`]).
    Rail,
    NotDerived,
}

/// One derived figure, worded.
#[derive(Debug, Clone, PartialEq)]
pub struct Row {
    /// The block the figure belongs to.
    pub node: NodeId,
    pub role: Role,
    pub label: String,
    pub value: String,
    /// For current figures: the range in A, for charts.
    pub current: Option<(f64, f64)>,
    /// How it was found, in words (may be empty).
    pub basis: String,
    /// Further lines: contributors, inputs used.
    pub details: Vec<String>,
    /// Where its inputs are written, for editors.
    pub sources: Vec<(FileId, std::ops::Range<usize>)>,
}

/// "T_J at P dissipated", for heat rows.
fn dissipated(h: &super::Heat) -> String {
    format!(
        "{} at {} dissipated",
        celsius(h.junction),
        in_unit(h.power, QuantityKind::of(Dimension::POWER), None)
    )
}

/// The θJA a heat row used.
fn theta(h: &super::Heat) -> String {
    in_unit(
        h.theta,
        QuantityKind::of(Dimension::THERMAL_RESISTANCE),
        None,
    )
}

fn row(node: NodeId, role: Role, label: impl Into<String>, value: impl Into<String>) -> Row {
    Row {
        node,
        role,
        label: label.into(),
        value: value.into(),
        current: None,
        basis: String::new(),
        details: Vec::new(),
        sources: Vec::new(),
    }
}

fn amps(x: f64, unit: Option<&str>) -> String {
    in_unit(x, QuantityKind::CURRENT, unit)
}

fn celsius(k: f64) -> String {
    in_unit(k, QuantityKind::ABSOLUTE_TEMPERATURE, Some("°C"))
}

fn volts(v: f64) -> String {
    in_unit(v, QuantityKind::VOLTAGE, Some("V"))
}

/// Every derived figure of one regulator, in reading order.
pub fn rows(model: &Model, d: &Derived, options: &Options) -> Vec<Row> {
    let reg = d.regulator;
    let unit = d.load_unit.as_deref();
    let mut out = Vec::new();
    let not_derived = |node: NodeId, label: &str, why: &super::Unknown| {
        let mut r = row(
            node,
            Role::NotDerived,
            label,
            format!("not derived: {}", why.describe(model)),
        );
        r.basis = "an input is missing or has an error".into();
        r
    };
    if let Some(load) = d.rated_load {
        let mut r = row(reg, Role::RatedLoad, "rated load", amps(load, unit));
        r.current = Some((0.0, load));
        out.push(r);
        if let Some(req) = d.required() {
            let mut r = row(
                reg,
                Role::Margin,
                format!("rated load + {} margin", percent(d.margin)),
                amps(req, unit),
            );
            r.current = Some((load, req));
            out.push(r);
        }
    }
    for lw in &d.limits {
        let name = model.node(lw.node).key();
        match &lw.window {
            Ok(w) => {
                let what = match lw.scheme {
                    Scheme::Replica => "limit window",
                    Scheme::UndervoltageFixed => "fixed current",
                };
                let mut r = row(
                    lw.node,
                    Role::LimitWorstCase,
                    format!("`{name}` {what}, worst case"),
                    bounds(w),
                );
                r.current = Some((w.lo, w.hi));
                r.basis = format!("bounds by {}", w.bounds.describe());
                out.push(r);
                if let Some(stat) = &lw.stat {
                    let u = w.unit.as_deref().or(unit);
                    let mut r = row(
                        lw.node,
                        Role::LimitStatistical,
                        format!("`{name}` {what}, statistical ({} σ)", number(stat.k)),
                        format!(
                            "{} .. {} (mean {})",
                            amps(stat.lo, u),
                            amps(stat.hi, u),
                            amps(stat.mean, u)
                        ),
                    );
                    r.current = Some((stat.lo, stat.hi));
                    r.basis = match options.ranges {
                        super::RangeMode::Uniform => "root-sum-square; each ± at its own σ (default the configured sigma), each range as uniform".into(),
                        super::RangeMode::Bound => "root-sum-square of the tolerances; ranges added as bounds".into(),
                    };
                    for c in &stat.contributors {
                        let src = model.source(c.source);
                        r.details.push(format!(
                            "`{}` {}: {} of the variance",
                            src.label(model),
                            match src.spread {
                                guardband_model::Spread::Range => "(a range)".to_string(),
                                guardband_model::Spread::Normal(Some(k)) =>
                                    format!("(± at {} σ)", number(k)),
                                guardband_model::Spread::Normal(None) =>
                                    format!("(± at {} σ)", number(options.sigma)),
                            },
                            percent(c.share)
                        ));
                        r.sources.push((src.file, src.span.clone()));
                    }
                    out.push(r);
                    if lw.scheme == Scheme::Replica
                        && let (Some(load), Some(req)) = (d.rated_load, d.required())
                    {
                        let clears = w.lo - req;
                        let verdict = if crate::compare::below(w.lo, req) {
                            format!("misses it by {}", amps(-clears, u))
                        } else {
                            format!("clears it by {}", amps(clears, u))
                        };
                        let mut r = row(
                            lw.node,
                            Role::Escape,
                            format!("`{name}` against rated load + margin"),
                            format!(
                                "low edge {verdict}; {} of parts trip below it",
                                ppm(escape_ppm(stat, req), sigmas_below(stat, req))
                            ),
                        );
                        r.basis = format!(
                            "rated {} + {} margin = {}",
                            amps(load, u),
                            percent(d.margin),
                            amps(req, u)
                        );
                        out.push(r);
                    }
                }
            }
            Err(u) => out.push(not_derived(lw.node, &format!("`{name}` window"), u)),
        }
        match &lw.trip {
            Ok(Some(t)) => {
                let mut r = row(lw.node, Role::Trip, format!("`{name}` characterised trip"), bounds(t));
                r.current = Some((t.lo, t.hi));
                out.push(r);
            }
            Ok(None) if lw.scheme == Scheme::UndervoltageFixed => out.push(row(
                lw.node,
                Role::Trip,
                format!("`{name}` characterised trip"),
                "not stated: nothing but the full-gate current bounds the current above the threshold",
            )),
            _ => {}
        }
    }
    for u in &d.unread_limits {
        out.push(not_derived(
            u.node,
            &format!("`{}` window", model.node(u.node).key()),
            &u.why,
        ));
    }
    if let Some(pass) = model.child(model.node(reg), guardband_model::BlockKind::Pass)
        && let Some(fg) = pass.quantity("full_gate_current")
    {
        let mut r = row(
            pass.id,
            Role::FullGate,
            "full-gate current (weak .. strong corner)",
            bounds(fg),
        );
        r.current = Some((fg.lo, fg.hi));
        out.push(r);
    }
    match &d.worst {
        Ok(w) => {
            let mut r = row(
                reg,
                Role::WorstCurrent,
                "worst current through the output path",
                amps(w.value, unit),
            );
            r.current = Some((0.0, w.value));
            r.basis = format!("{}, at an output of {}", w.cause.what, volts(w.at_voltage));
            out.push(r);
        }
        Err(u) => out.push(not_derived(reg, "worst current", u)),
    }
    if let Ok(c) = &d.currents
        && let Some((hi, cause)) = c.upper_at(0.0)
    {
        let lo = c.lower_at(0.0);
        let mut r = row(
            reg,
            Role::ShortCurrent,
            "current with the output shorted (0 V)",
            match lo {
                Some(lo) => format!("{} .. {}", amps(lo, unit), amps(hi, unit)),
                None => format!("up to {}", amps(hi, unit)),
            },
        );
        r.current = Some((lo.unwrap_or(0.0), hi));
        r.basis = cause.what.clone();
        out.push(r);
    }
    for (heat, role, label) in [
        (&d.short, Role::ShortHeat, "sustained short (0 V)"),
        (
            &d.overload,
            Role::OverloadHeat,
            "worst partial short or overload",
        ),
    ] {
        match heat {
            Ok(h) => {
                let mut r = row(reg, role, format!("{label}: junction"), dissipated(h));
                // Under a hiccup the rise is the steady one times its peak factor g.
                let g = h.pulsed.as_ref().map(|p| {
                    let steady = p.steady_junction - h.ambient;
                    if steady > 0.0 {
                        (h.junction - h.ambient) / steady
                    } else {
                        1.0
                    }
                });
                r.basis = format!(
                    "T_A + (Vin − V)·I·θJA{} = {} + ({} − {}) × {} × {}{}",
                    if g.is_some() { "·g" } else { "" },
                    celsius(h.ambient),
                    volts(h.supply),
                    volts(h.at_voltage),
                    amps(h.current, unit),
                    theta(h),
                    g.map(|g| format!(
                        " × {}, g = (1 − e^(−t_on/τ)) / (1 − e^(−(t_on + t_off)/τ)) at the longest on, shortest off and shortest τ",
                        crate::show::digits(g, 4)
                    ))
                    .unwrap_or_default()
                );
                r.details.push(format!("the current there is {}", h.reason));
                if let Some(p) = &h.pulsed {
                    r.value = format!(
                        "{} peak under the hiccup, at {} dissipated while on",
                        celsius(h.junction),
                        in_unit(h.power, QuantityKind::of(Dimension::POWER), None)
                    );
                    r.details.push(hiccup_detail(p));
                }
                out.push(r);
            }
            Err(u) => out.push(not_derived(reg, &format!("{label}: junction"), u)),
        }
    }
    let wants_normal_heat = super::heat::wants_rated_load_heat(model, model.node(d.regulator));
    match &d.normal {
        Ok(h) => {
            let mut r = row(
                reg,
                Role::RatedLoadHeat,
                "rated load in regulation: junction",
                dissipated(h),
            );
            r.basis = format!(
                "T_A + ((Vin − V)·I_load + I_q·Vin)·θJA, with Vin {}, V {}, I_load {}, θJA {} from {}",
                volts(h.supply),
                volts(h.at_voltage),
                amps(h.current, unit),
                theta(h),
                celsius(h.ambient),
            );
            r.details.push(h.reason.clone());
            out.push(r);
        }
        Err(u) if wants_normal_heat => {
            out.push(not_derived(reg, "rated load in regulation: junction", u))
        }
        Err(_) => {}
    }
    if let (Some(load), Ok(recovery)) = (&d.load, &d.recovery)
        && load.kind != super::LoadKind::Current
    {
        let value = match recovery {
            Some(sh) if sh.drawn.is_finite() => format!(
                "latches at {}: the load draws {} there, the least delivered is {}",
                volts(sh.at_voltage),
                amps(sh.drawn, unit),
                amps(sh.delivered, unit)
            ),
            Some(sh) => format!(
                "latches at {}: the load draws without bound there",
                volts(sh.at_voltage)
            ),
            None => "the least current delivered clears the load line from 0 V to regulation"
                .to_string(),
        };
        let mut r = row(reg, Role::Recovery, "recovery after an overload", value);
        r.basis = format!("the load is {}", load.describe());
        out.push(r);
    }
    if let Ok(Some(c)) = &d.cycling {
        let kelvin = |k: f64| in_unit(k, QuantityKind::TEMPERATURE_DIFFERENCE, Some("K"));
        let swing = if c.swing.0 < c.swing.1 {
            format!("{} .. {}", kelvin(c.swing.0), kelvin(c.swing.1))
        } else {
            kelvin(c.swing.1)
        };
        let value = match c.period_min {
            Some(p) => format!(
                "junction swing {swing}, period at least {} (at most {} cycles per hour)",
                in_unit(p, QuantityKind::of(Dimension::TIME), None),
                crate::show::number((3600.0 / p).ceil())
            ),
            None => format!(
                "junction swing {swing}; state `thermal_shutdown.time_constant` for the period"
            ),
        };
        let mut r = row(reg, Role::Cycling, "cycling in a sustained short", value);
        r.basis = "between the trip point and trip − hysteresis; one-pole thermal model, each term at its least corner".to_string();
        out.push(r);
    }
    match &d.cycle_damage {
        Ok(Some(dmg)) => {
            let mut r = row(
                dmg.budget,
                Role::CycleDamage,
                "thermal-cycle damage in sustained shorts",
                format!(
                    "{} over {} (fails at 1)",
                    crate::show::digits(dmg.damage, 3),
                    in_unit(dmg.short_time, QuantityKind::of(Dimension::TIME), Some("h"))
                ),
            );
            r.basis = "Σ cycles used / N(ΔT), N(ΔT) = cycles · (swing / ΔT)^exponent (Coffin–Manson form, Miner's rule), each at its unfavourable end".into();
            for m in &dmg.mechanisms {
                r.details.push(format!(
                    "{}: {} swing, period at least {}: up to {} cycles, {} allowed",
                    m.what,
                    in_unit(m.swing, QuantityKind::TEMPERATURE_DIFFERENCE, Some("K")),
                    in_unit(m.period, QuantityKind::of(Dimension::TIME), None),
                    crate::show::number(m.used.ceil()),
                    crate::show::number(m.allowed.floor())
                ));
            }
            out.push(r);
        }
        Ok(None) => {}
        Err(u) => {
            if let Some(b) = model.child(model.node(reg), guardband_model::BlockKind::CycleBudget) {
                out.push(not_derived(
                    b.id,
                    "thermal-cycle damage in sustained shorts",
                    u,
                ));
            }
        }
    }
    match &d.fault_temperature {
        Ok(t) => {
            let mut r = row(
                reg,
                Role::FaultTemperature,
                "die temperature in a fault",
                celsius(t.kelvin),
            );
            r.basis = t.why.to_string();
            out.push(r);
        }
        Err(u) => out.push(not_derived(reg, "die temperature in a fault", u)),
    }
    match &d.startup {
        Ok(s) => {
            let mut r = row(
                reg,
                Role::StartupSurge,
                "startup surge",
                amps(s.surge, unit),
            );
            r.current = Some((0.0, s.surge));
            r.basis = s.surge_reason.clone();
            out.push(r);
            let time = match (s.time, s.time_lo) {
                (Ok(t), Some(lo)) => format!(
                    "{} .. {}",
                    in_unit(lo, QuantityKind::of(Dimension::TIME), Some("us")),
                    in_unit(t, QuantityKind::of(Dimension::TIME), Some("us"))
                ),
                (Ok(t), None) => format!(
                    "up to {}",
                    in_unit(t, QuantityKind::of(Dimension::TIME), Some("us"))
                ),
                (Err(v), _) => format!(
                    "never starts: the charging current does not exceed the load at {}",
                    volts(v)
                ),
            };
            let mut r = row(reg, Role::StartupTime, "startup time", time);
            let load = match s.load_line.kind {
                super::LoadKind::Current => format!("{} load", amps(s.load, unit)),
                _ => format!("the load, {}", s.load_line.describe()),
            };
            r.basis = format!(
                "charge {} to {} with at least {} less {load}",
                in_unit(
                    s.capacitance,
                    QuantityKind::of(Dimension::CAPACITANCE),
                    Some("uF")
                ),
                volts(s.voltage),
                amps(s.charge_min, unit),
            );
            out.push(r);
        }
        Err(u) => out.push(not_derived(reg, "startup", u)),
    }
    for (id, short) in &d.reverse_cases {
        reverse_case_rows(model, *id, short, unit, &mut out);
    }
    for c in &d.conductors {
        let name = model.node(c.node).key();
        let mut r = match &c.rating {
            Ok(rating) => {
                let mut r = row(
                    c.node,
                    Role::ConductorRating,
                    format!("conductor `{name}` rating"),
                    amps(*rating, unit),
                );
                r.current = Some((0.0, *rating));
                r.basis = c.basis.clone();
                if let Ok(i) = c.current {
                    let margin = rating / i - 1.0;
                    r.value = format!(
                        "{} against the worst current {} ({} {})",
                        amps(*rating, unit),
                        amps(i, unit),
                        if margin < 0.0 { "short by" } else { "margin" },
                        percent(margin.abs())
                    );
                }
                r
            }
            Err(un) => not_derived(c.node, &format!("conductor `{name}` rating"), &un.why),
        };
        if let Some(f) = &c.formula {
            r.details.insert(0, f.clone());
        }
        match c.carries {
            Carries::OutputPath(n) => r.details.push(format!(
                "carries `{}`: the output-path current",
                model.node(n).key()
            )),
            Carries::Branch { limit, ratio_lo } => r.details.push(format!(
                "carries the `{}` replica branch: 1/{} of the output-path current",
                model.node(limit).key(),
                number(ratio_lo)
            )),
            Carries::Unstated => r.details.push(
                "`carries` not stated: the output-path current (the most that flows) is assumed"
                    .into(),
            ),
        }
        if let Some((t, why)) = &c.temperature {
            r.details.push(format!("rated at {} ({why})", celsius(*t)));
        }
        if let Some(f) = c.derating_factor {
            r.details
                .push(format!("Black's-equation factor ×{}", number(f)));
            // The inputs of that factor, as the layer states them.
            if let Some(layer) = model.node(c.node).reference("layer").map(|l| model.node(l)) {
                let stated = |key: &str| match layer.quantity(key) {
                    Some(v) if v.lo == v.hi => in_unit(v.lo, v.kind, v.unit.as_deref()),
                    Some(v) => bounds(v),
                    None => "not stated".into(),
                };
                r.details.push(format!(
                    "from layer `{}`: activation energy {}, current exponent {}, reference temperature {}, reference lifetime {} (each at its worst corner)",
                    layer.key(),
                    stated("activation_energy"),
                    stated("current_exponent"),
                    stated("reference_temperature"),
                    stated("reference_lifetime"),
                ));
            }
        }
        if let Some(res) = c.resistance {
            r.details.push(format!(
                "resistance at temperature {}",
                in_unit(res, QuantityKind::of(Dimension::RESISTANCE), None)
            ));
        }
        out.push(r);
    }
    out
}

/// The rows of one `short_to_supply` fault case.
fn reverse_case_rows(
    model: &Model,
    fault: NodeId,
    short: &super::Figure<super::ReverseCase>,
    unit: Option<&str>,
    out: &mut Vec<Row>,
) {
    let name = model.node(fault).key();
    let s = match short {
        Ok(s) => s,
        Err(u) => {
            let mut r = row(
                fault,
                Role::ReverseCase,
                format!("`{name}`: short to supply"),
                "",
            );
            r.value = format!("not derived: {}", u.describe(model));
            out.push(r);
            return;
        }
    };
    let forced = if s.forced.0 < s.forced.1 {
        format!("{} .. {}", volts(s.forced.0), volts(s.forced.1))
    } else {
        volts(s.forced.1)
    };
    if let Some((i, cause)) = &s.forward {
        let mut r = row(
            fault,
            Role::ReverseCase,
            format!("`{name}`: sourced into the {forced} supply"),
            format!("up to {}", amps(*i, unit)),
        );
        r.current = Some((0.0, *i));
        r.basis = cause.clone();
        out.push(r);
    }
    let label = match s.event {
        super::reverse::ReverseEvent::SupplyShort => {
            format!("`{name}`: reverse current from the {forced} supply")
        }
        super::reverse::ReverseEvent::InputCollapse => {
            format!("`{name}`: reverse current with the input at {forced}")
        }
    };
    match &s.reverse {
        Ok(rev) => {
            let value = match rev.lo {
                Some(lo) if lo > 0.0 => format!("{} .. {}", amps(lo, unit), amps(rev.hi, unit)),
                _ if rev.hi == 0.0 => "none".to_string(),
                _ => format!("up to {}", amps(rev.hi, unit)),
            };
            let mut r = row(fault, Role::ReverseCase, label, value);
            r.current = Some((rev.lo.unwrap_or(0.0), rev.hi));
            r.basis = rev.why.clone();
            out.push(r);
        }
        Err(u) => {
            let mut r = row(fault, Role::ReverseCase, label, "");
            r.value = format!("not derived: {}", u.describe(model));
            out.push(r);
        }
    }
    match &s.heat {
        Ok(Some(h)) => {
            let mut r = row(
                fault,
                Role::ReverseCase,
                format!("`{name}`: junction"),
                dissipated(h),
            );
            r.basis = format!(
                "T_A + P·θJA with {}, θJA {} from {}",
                h.reason,
                theta(h),
                celsius(h.ambient)
            );
            out.push(r);
        }
        Ok(None) => {}
        Err(u) => {
            let mut r = row(fault, Role::ReverseCase, format!("`{name}`: junction"), "");
            r.value = format!("not derived: {}", u.describe(model));
            out.push(r);
        }
    }
}

/// The hiccup's effect on a heat row, in words.
fn hiccup_detail(p: &super::hiccup::Pulsed) -> String {
    let tau = match p.time_constant {
        Some(t) => format!(
            "one-pole model with τ ≥ {}",
            in_unit(t, QuantityKind::of(Dimension::TIME), None)
        ),
        None => "no time constant stated: the peak is taken as the steady junction".to_string(),
    };
    format!(
        "hiccup: duty cycle at most {}, average {} and junction {}; swing up to {} per cycle; {} without it; {tau}",
        percent(p.duty),
        in_unit(p.average_power, QuantityKind::of(Dimension::POWER), None),
        celsius(p.average_junction),
        in_unit(p.swing, QuantityKind::TEMPERATURE_DIFFERENCE, Some("K")),
        celsius(p.steady_junction),
    )
}

/// The rows of a shared `supply` item: what each regulator draws at startup
/// and how far the rail droops when they start together.
pub fn rail_rows(model: &Model, rail: &super::rail::Rail) -> Vec<Row> {
    let name = model.node(rail.supply).key();
    let mut r = row(
        rail.supply,
        Role::Rail,
        format!("`{name}` with every regulator starting together"),
        String::new(),
    );
    match &rail.droop {
        Ok(d) => {
            r.value = format!(
                "droops to {} ({} below its lowest {})",
                volts(d.lowest),
                volts(d.resistive + d.inductive),
                volts(d.source_lo)
            );
            r.current = Some((0.0, d.current));
            r.basis = match d.rise_time {
                Some(t) => format!(
                    "I·R + L·I/t_rise = {} × {} + {} × {} / {}",
                    amps(d.current, None),
                    in_unit(d.resistance, QuantityKind::of(Dimension::RESISTANCE), None),
                    in_unit(d.inductance, QuantityKind::of(Dimension::INDUCTANCE), None),
                    amps(d.current, None),
                    in_unit(t, QuantityKind::of(Dimension::TIME), None)
                ),
                None => format!(
                    "I·R = {} × {}",
                    amps(d.current, None),
                    in_unit(d.resistance, QuantityKind::of(Dimension::RESISTANCE), None)
                ),
            };
        }
        Err(u) => {
            r.role = Role::NotDerived;
            r.value = format!("not derived: {}", u.describe(model));
        }
    }
    for (reg, surge) in &rail.drawers {
        r.details.push(match surge {
            Ok(i) => format!(
                "`{}` draws up to {} at startup",
                model.node(*reg).key(),
                amps(*i, None)
            ),
            Err(_) => format!("`{}`: startup surge not derived", model.node(*reg).key()),
        });
    }
    if rail.drawers.is_empty() {
        r.details.push("no regulator draws from it".into());
    }
    vec![r]
}

/// One figure of a regulator with named corners, at each corner: what
/// hovers and the report show beside the box's bound.
#[derive(Debug, Clone, PartialEq)]
pub struct CornerRow {
    /// The block as written that the figure belongs to.
    pub node: NodeId,
    pub role: Role,
    pub label: String,
    /// Each corner's name and the figure there, in the order written.
    pub at: Vec<(String, String)>,
    /// Which corner is worst for this figure, in words, when the figure
    /// has a direction (a current or a junction: the highest; a limit
    /// window: its lowest low edge and its highest high edge).
    pub worst: Option<String>,
}

/// The figures of a regulator at each of its corners (`(corner, derived)`
/// in the order written), grouped by figure.
pub fn corner_rows(
    model: &Model,
    options: &Options,
    corners: &[(&guardband_model::Node, &Derived)],
) -> Vec<CornerRow> {
    let mut out: Vec<CornerRow> = Vec::new();
    // Per figure, each corner's number to rank by: (low, high).
    let mut ranks: Vec<Vec<Ranked>> = Vec::new();
    for (corner, d) in corners {
        let name = corner.key().to_string();
        for r in rows(model, d, options) {
            let node = model.written_of(r.node);
            let rank = rank(d, &r);
            let at = match out
                .iter()
                .position(|o| o.node == node && o.role == r.role && o.label == r.label)
            {
                Some(i) => i,
                None => {
                    out.push(CornerRow {
                        node,
                        role: r.role,
                        label: r.label.clone(),
                        at: Vec::new(),
                        worst: None,
                    });
                    ranks.push(Vec::new());
                    out.len() - 1
                }
            };
            out[at].at.push((name.clone(), r.value));
            ranks[at].push((name.clone(), rank));
        }
    }
    for (row, ranked) in out.iter_mut().zip(ranks) {
        row.worst = worst(row.role, &ranked);
    }
    out
}

/// A corner's name and the `(low, high)` its figure is ranked by.
type Ranked = (String, Option<(f64, f64)>);

/// The number a row is ranked by at one corner, `(low, high)`.
fn rank(d: &Derived, r: &Row) -> Option<(f64, f64)> {
    let junction =
        |h: &super::Figure<super::Heat>| h.as_ref().ok().map(|h| (h.junction, h.junction));
    match r.role {
        Role::ShortHeat => junction(&d.short),
        Role::OverloadHeat => junction(&d.overload),
        Role::RatedLoadHeat => junction(&d.normal),
        Role::LimitWorstCase
        | Role::Trip
        | Role::WorstCurrent
        | Role::ShortCurrent
        | Role::StartupSurge
        | Role::FullGate => r.current,
        _ => None,
    }
}

/// The worst corner of one figure, in words.
fn worst(role: Role, ranked: &[Ranked]) -> Option<String> {
    if ranked.len() < 2 || ranked.iter().any(|(_, r)| r.is_none()) {
        return None;
    }
    // Every corner at the extreme (ties named together), e.g. "`a`, `b`".
    let pick = |lowest: bool, of: fn((f64, f64)) -> f64| {
        let values: Vec<f64> = ranked
            .iter()
            .map(|(_, r)| of(r.expect("checked above")))
            .collect();
        let best = if lowest {
            values.iter().copied().fold(f64::INFINITY, f64::min)
        } else {
            values.iter().copied().fold(f64::NEG_INFINITY, f64::max)
        };
        let names: Vec<String> = ranked
            .iter()
            .zip(&values)
            .filter(|(_, x)| {
                !crate::compare::exceeds(**x, best) && !crate::compare::below(**x, best)
            })
            .map(|((n, _), _)| format!("`{n}`"))
            .collect();
        (!names.is_empty()).then(|| names.join(", "))
    };
    let highest = pick(false, |r| r.1)?;
    Some(match role {
        Role::LimitWorstCase | Role::Trip | Role::FullGate => {
            let lowest = pick(true, |r| r.0)?;
            format!("lowest at {lowest}, highest at {highest}")
        }
        _ => format!("worst at {highest}"),
    })
}
