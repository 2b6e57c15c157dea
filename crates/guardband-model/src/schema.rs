//! What may be written where: every block kind, its fields, and the kind of
//! value each field expects. The evaluator checks files against this table and
//! the language reference lists the same fields (a test keeps them in step).

use guardband_units::{Dimension, QuantityKind};

/// The kinds of blocks the language knows.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum BlockKind {
    Regulator,
    Supply,
    Process,
    Metal,
    BondWire,
    Pin,
    Pass,
    Limit,
    ThermalShutdown,
    Hiccup,
    CycleBudget,
    Foldback,
    Startup,
    Conductor,
    Fault,
    Analysis,
    /// A named operating corner of a regulator: its ambient, supply and
    /// process, and the values that differ there.
    Corner,
    /// The circuit under test: a SPICE netlist and how its subcircuit's
    /// ports map to the spec's pins, for generated test benches.
    Circuit,
}

/// What a field's value must be.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum FieldType {
    /// A quantity of this kind.
    Quantity(QuantityKind),
    /// A quantity of any of these kinds.
    AnyOf(&'static [QuantityKind]),
    /// A plain-number spread around zero, such as `± 8 %` (mismatch, drain
    /// error, process spreads): a fixed `10 %` here is a slip for `± 10 %`.
    Spread,
    /// `true` or `false`.
    Bool,
    /// One word out of a fixed list.
    Choice(&'static [&'static str]),
    /// A reference to a block of one of these kinds.
    Ref(&'static [BlockKind]),
    /// A circuit node: a pin, or a terminal of the pass device or of a limit (`pass.gate`).
    Node,
    /// A voltage, or the name of a `supply` item (whose `voltage` it then is).
    Source,
    /// A quoted string.
    Text,
}

/// One field a block may hold.
#[derive(Debug, Clone, Copy)]
pub struct FieldSpec {
    /// The word before `=` (or before the name, for named fields).
    pub keyword: &'static str,
    /// For named fields (`expect current <= ...`): the allowed name, or `*` for any.
    pub name: Option<&'static str>,
    pub ty: FieldType,
    /// True when the relation is a comparison (`<=`, `>=`, `<`, `>`) rather than `=`.
    pub requirement: bool,
    pub doc: &'static str,
}

/// One block kind: its keyword, whether it takes a name, fields and children.
#[derive(Debug, Clone, Copy)]
pub struct BlockSpec {
    pub kind: BlockKind,
    pub keyword: &'static str,
    pub named: bool,
    pub fields: &'static [FieldSpec],
    pub children: &'static [BlockKind],
    pub doc: &'static str,
}

const fn q(dim: Dimension) -> FieldType {
    FieldType::Quantity(QuantityKind::of(dim))
}
const CURRENT: FieldType = FieldType::Quantity(QuantityKind::CURRENT);
const VOLTAGE: FieldType = FieldType::Quantity(QuantityKind::VOLTAGE);
/// A load: a current, a resistance or a constant power.
const LOAD: FieldType = FieldType::AnyOf(&[
    QuantityKind::CURRENT,
    QuantityKind::of(Dimension::RESISTANCE),
    QuantityKind::of(Dimension::POWER),
]);
const RATIO: FieldType = FieldType::Quantity(QuantityKind::NONE);
const ABS_TEMP: FieldType = FieldType::Quantity(QuantityKind::ABSOLUTE_TEMPERATURE);
const DELTA_TEMP: FieldType = FieldType::Quantity(QuantityKind::TEMPERATURE_DIFFERENCE);
const LENGTH: FieldType = q(Dimension::LENGTH);
/// A temperature coefficient, `%/K` or `ppm/K`.
const TEMPCO: FieldType = q(Dimension::PER_TEMPERATURE);
const TIME: FieldType = q(Dimension::TIME);

const fn f(keyword: &'static str, ty: FieldType, doc: &'static str) -> FieldSpec {
    FieldSpec {
        keyword,
        name: None,
        ty,
        requirement: false,
        doc,
    }
}
const fn named(
    keyword: &'static str,
    name: &'static str,
    ty: FieldType,
    requirement: bool,
    doc: &'static str,
) -> FieldSpec {
    FieldSpec {
        keyword,
        name: Some(name),
        ty,
        requirement,
        doc,
    }
}
const DESCRIPTION: FieldSpec = f("description", FieldType::Text, "free text shown in hovers");

/// The choices of `limit.scheme`.
pub const SCHEMES: &[&str] = &["replica", "undervoltage_fixed"];
/// The choices of a bond wire's `material`.
pub const WIRE_MATERIALS: &[&str] = &["copper", "aluminium", "gold"];
/// The choices of `pin.role`.
pub const PIN_ROLES: &[&str] = &["output", "supply", "ground", "other"];
/// The choices of `fault.event`.
/// The choices of `corner.process`: a label of the process corner; the
/// values that differ there are written in the corner's blocks.
pub const PROCESS_CORNERS: &[&str] = &["slow", "typical", "fast"];
/// The blocks a `corner` may restate: the regulator's own, except pins,
/// conductors, fault cases and analyses, whose data does not move with the
/// operating point.
pub const CORNER_OVERRIDES: &[BlockKind] = &[
    BlockKind::Pass,
    BlockKind::Limit,
    BlockKind::ThermalShutdown,
    BlockKind::Hiccup,
    BlockKind::Foldback,
    BlockKind::Startup,
];
/// The choices of `fault.event`.
pub const EVENTS: &[&str] = &[
    "short_to_ground",
    "short_to_supply",
    "reverse_current",
    "overload",
    "startup",
];

/// Every block kind the language knows.
pub const BLOCKS: &[BlockSpec] = &[
    BlockSpec {
        kind: BlockKind::Supply,
        keyword: "supply",
        named: true,
        doc: "an input rail several regulators draw from (`supply = NAME` in each): its source and what loads on it tolerate",
        children: &[],
        fields: &[
            f("voltage", VOLTAGE, "the source's voltage range, unloaded"),
            f(
                "resistance",
                q(Dimension::RESISTANCE),
                "the source's resistance, with its wiring",
            ),
            f(
                "inductance",
                q(Dimension::INDUCTANCE),
                "the wiring's inductance (write `0 H` to neglect it)",
            ),
            f(
                "rise_time",
                TIME,
                "the fastest the rail's load current can rise, for L·di/dt",
            ),
            f("current_limit", CURRENT, "the most the source delivers"),
            f(
                "lockout",
                VOLTAGE,
                "undervoltage lockout of the loads on this rail: a droop below it resets them",
            ),
            DESCRIPTION,
        ],
    },
    BlockSpec {
        kind: BlockKind::Regulator,
        keyword: "regulator",
        named: true,
        doc: "a regulator block and its protection requirements",
        children: &[
            BlockKind::Pin,
            BlockKind::Pass,
            BlockKind::Limit,
            BlockKind::ThermalShutdown,
            BlockKind::Hiccup,
            BlockKind::CycleBudget,
            BlockKind::Foldback,
            BlockKind::Startup,
            BlockKind::Conductor,
            BlockKind::Fault,
            BlockKind::Analysis,
            BlockKind::Corner,
            BlockKind::Circuit,
        ],
        fields: &[
            f(
                "supply",
                FieldType::Source,
                "input supply range, or the name of a `supply` item it draws from",
            ),
            f(
                "output",
                VOLTAGE,
                "regulated output voltage and its tolerance",
            ),
            f(
                "load",
                LOAD,
                "the load: a current range, a resistance (I = V/R) or a constant power (I = P/V); the rated load is the most it draws in regulation",
            ),
            f(
                "load_cutoff",
                VOLTAGE,
                "output voltage below which a constant-power load draws nothing (its own undervoltage lockout)",
            ),
            f(
                "quiescent",
                CURRENT,
                "current the regulator itself draws from the supply in regulation (ground current)",
            ),
            f(
                "supply_min",
                VOLTAGE,
                "the lowest input at which it still regulates (its output plus dropout); a shared supply's droop below it is a finding",
            ),
            f("ambient", ABS_TEMP, "ambient temperature range"),
            f(
                "junction_max",
                ABS_TEMP,
                "highest allowed junction temperature",
            ),
            f(
                "theta_ja",
                q(Dimension::THERMAL_RESISTANCE),
                "junction-to-ambient thermal resistance",
            ),
            f(
                "margin",
                RATIO,
                "required margin of the limit's low edge above rated load (overrides guardband.toml)",
            ),
            f(
                "lifetime",
                TIME,
                "target lifetime for conductor ratings (overrides guardband.toml)",
            ),
            DESCRIPTION,
        ],
    },
    BlockSpec {
        kind: BlockKind::Process,
        keyword: "process",
        named: true,
        doc: "process data shared by many blocks",
        children: &[BlockKind::Metal, BlockKind::BondWire],
        fields: &[
            named(
                "spread",
                "*",
                FieldType::Spread,
                false,
                "a typical spread, e.g. `spread resistor = ± 18 %`",
            ),
            DESCRIPTION,
        ],
    },
    BlockSpec {
        kind: BlockKind::Metal,
        keyword: "metal",
        named: true,
        doc: "an on-die metal layer",
        children: &[],
        fields: &[
            f("thickness", LENGTH, "layer thickness"),
            f(
                "current_density",
                q(Dimension::CURRENT_DENSITY),
                "electromigration current-density limit at the reference temperature",
            ),
            f(
                "current_per_width",
                q(Dimension::CURRENT_PER_LENGTH),
                "electromigration limit per unit width (instead of current_density)",
            ),
            f(
                "reference_temperature",
                ABS_TEMP,
                "temperature at which the limit is stated",
            ),
            f(
                "reference_lifetime",
                TIME,
                "lifetime for which the limit is stated",
            ),
            f(
                "activation_energy",
                q(Dimension::ENERGY),
                "Black's-equation activation energy",
            ),
            f(
                "current_exponent",
                RATIO,
                "Black's-equation current-density exponent",
            ),
            f(
                "resistivity",
                q(Dimension::RESISTIVITY),
                "resistivity at the reference temperature",
            ),
            f(
                "temperature_coefficient",
                q(Dimension::PER_TEMPERATURE),
                "resistivity temperature coefficient",
            ),
            f(
                "resistivity_temperature",
                ABS_TEMP,
                "temperature at which `resistivity` is stated (default 20 °C)",
            ),
            DESCRIPTION,
        ],
    },
    BlockSpec {
        kind: BlockKind::BondWire,
        keyword: "bond_wire",
        named: true,
        doc: "a bond wire type: material, diameter and the derating of its fusing current",
        children: &[],
        fields: &[
            f(
                "material",
                FieldType::Choice(WIRE_MATERIALS),
                "wire material",
            ),
            f("diameter", LENGTH, "wire diameter"),
            f(
                "derating",
                RATIO,
                "fraction of the Preece fusing current the wire is rated for",
            ),
            DESCRIPTION,
        ],
    },
    BlockSpec {
        kind: BlockKind::Pin,
        keyword: "pin",
        named: true,
        doc: "a pin of the block",
        children: &[],
        fields: &[
            f(
                "off_chip",
                FieldType::Bool,
                "whether the pin leaves the die (and can be touched)",
            ),
            f(
                "capacitance",
                q(Dimension::CAPACITANCE),
                "capacitance attached to the pin",
            ),
            f(
                "role",
                FieldType::Choice(PIN_ROLES),
                "what the pin is: `output` (its capacitance is charged at startup), `supply`, `ground` or `other`",
            ),
            f(
                "bias_current",
                CURRENT,
                "the most current the pin draws by itself when held up from outside (its feedback divider, bias circuits): it adds to the current of a short to a supply at the pin",
            ),
            DESCRIPTION,
        ],
    },
    BlockSpec {
        kind: BlockKind::Pass,
        keyword: "pass",
        named: false,
        doc: "the pass device; its terminals are `gate`, `source` and `drain`",
        children: &[],
        fields: &[
            f(
                "full_gate_current",
                CURRENT,
                "current with the gate fully on, weak .. strong corner",
            ),
            f(
                "amplifier_drive",
                CURRENT,
                "output drive of the error amplifier at the gate",
            ),
            f(
                "full_gate_current_tempco",
                TEMPCO,
                "temperature coefficient of `full_gate_current` (from 25 °C, over the die's temperatures)",
            ),
            f(
                "body_diode",
                VOLTAGE,
                "forward drop of the body diode from the output to the input (not stated: 0 V, the most reverse current)",
            ),
            f(
                "reverse_blocking",
                FieldType::Bool,
                "`true` when no diode conducts from the output to the input (a switched body or a blocking device)",
            ),
            f(
                "reverse_rating",
                CURRENT,
                "the most current the pass device may carry from the output back to the input",
            ),
            DESCRIPTION,
        ],
    },
    BlockSpec {
        kind: BlockKind::Limit,
        keyword: "limit",
        named: true,
        doc: "a current limit; `scheme` says which kind",
        children: &[],
        fields: &[
            f(
                "scheme",
                FieldType::Choice(SCHEMES),
                "`replica` (sensed) or `undervoltage_fixed`",
            ),
            f("ratio", RATIO, "replica: pass-to-replica size ratio"),
            f(
                "reference",
                CURRENT,
                "replica: reference current of the comparator",
            ),
            f(
                "mismatch",
                FieldType::Spread,
                "replica: ratio mismatch, a bare tolerance such as `± 8 %`",
            ),
            f(
                "drain_error",
                FieldType::Spread,
                "replica: error from the drain-voltage difference, a bare tolerance",
            ),
            f(
                "threshold",
                CURRENT,
                "replica: trip current (usually `ratio * reference`)",
            ),
            f(
                "clamp_drive",
                CURRENT,
                "replica: drive of the clamp on the pass gate",
            ),
            f(
                "reference_tempco",
                TEMPCO,
                "replica: temperature coefficient of `reference` (from 25 °C, over the die's temperatures)",
            ),
            f(
                "threshold_tempco",
                TEMPCO,
                "replica: temperature coefficient of a stated `threshold`",
            ),
            f(
                "threshold_voltage",
                VOLTAGE,
                "undervoltage_fixed: output voltage below which the fixed current is used",
            ),
            f(
                "fixed_current",
                CURRENT,
                "undervoltage_fixed: the fixed current",
            ),
            f(
                "fixed_current_tempco",
                TEMPCO,
                "undervoltage_fixed: temperature coefficient of `fixed_current`",
            ),
            f(
                "trip_current",
                CURRENT,
                "undervoltage_fixed: characterised overload current at which it trips",
            ),
            DESCRIPTION,
        ],
    },
    BlockSpec {
        kind: BlockKind::ThermalShutdown,
        keyword: "thermal_shutdown",
        named: false,
        doc: "thermal shutdown",
        children: &[],
        fields: &[
            f(
                "threshold",
                ABS_TEMP,
                "junction temperature at which the block shuts down",
            ),
            f(
                "hysteresis",
                DELTA_TEMP,
                "temperature drop before it restarts",
            ),
            f(
                "time_constant",
                TIME,
                "thermal time constant of the die and package (one-pole model), for the cycle period",
            ),
            DESCRIPTION,
        ],
    },
    BlockSpec {
        kind: BlockKind::Hiccup,
        keyword: "hiccup",
        named: false,
        doc: "auto-retry in a sustained overload: the pass device conducts for `on_time`, then is off for `off_time`, and again",
        children: &[],
        fields: &[
            f(
                "on_time",
                TIME,
                "how long it conducts in limit before it turns off",
            ),
            f("off_time", TIME, "how long it stays off before it retries"),
            f(
                "time_constant",
                TIME,
                "thermal time constant of the die and package (one-pole model), for the junction's peak (default: the thermal shutdown's)",
            ),
            DESCRIPTION,
        ],
    },
    BlockSpec {
        kind: BlockKind::CycleBudget,
        keyword: "cycle_budget",
        named: false,
        doc: "how many thermal cycles the die and package may take (Coffin–Manson form): `cycles` at the qualified `swing`, scaled by (swing / ΔT)^`exponent`",
        children: &[],
        fields: &[
            f(
                "cycles",
                RATIO,
                "cycles to failure (or the qualified count) at the reference swing",
            ),
            f(
                "swing",
                DELTA_TEMP,
                "the junction swing those cycles were counted at",
            ),
            f(
                "exponent",
                RATIO,
                "Coffin–Manson exponent of the failure mechanism",
            ),
            f(
                "short_time",
                TIME,
                "total time the part spends in a sustained short or overload over its lifetime",
            ),
            DESCRIPTION,
        ],
    },
    BlockSpec {
        kind: BlockKind::Foldback,
        keyword: "foldback",
        named: false,
        doc: "current foldback as the output collapses",
        children: &[],
        fields: &[
            f("at_zero", CURRENT, "current with the output at 0 V"),
            f(
                "at_regulation",
                CURRENT,
                "its own current at the knee and above; without it the foldback bends the sensed limits (or the full-gate current) down to `at_zero`",
            ),
            f(
                "knee",
                VOLTAGE,
                "output voltage at which the line reaches `at_regulation` or the limit (default: the regulated output)",
            ),
            DESCRIPTION,
        ],
    },
    BlockSpec {
        kind: BlockKind::Startup,
        keyword: "startup",
        named: false,
        doc: "startup requirements",
        children: &[],
        fields: &[
            f("time_max", TIME, "required startup time"),
            f(
                "slew",
                q(Dimension::SLEW_RATE),
                "output ramp rate set by a soft start",
            ),
            f(
                "supply_surge_max",
                CURRENT,
                "largest surge the supply may see",
            ),
            f(
                "load",
                LOAD,
                "load during startup: a current, a resistance or a constant power (default: the regulator's load)",
            ),
            f(
                "load_cutoff",
                VOLTAGE,
                "output voltage below which a constant-power startup load draws nothing",
            ),
            DESCRIPTION,
        ],
    },
    BlockSpec {
        kind: BlockKind::Conductor,
        keyword: "conductor",
        named: true,
        doc: "on-die metal (`layer`), a bond wire (`diameter`) or a board trace (`placement`)",
        children: &[],
        fields: &[
            f(
                "carries",
                FieldType::Ref(&[BlockKind::Pass, BlockKind::Pin, BlockKind::Limit]),
                "what current flows through it: the pass device or a pin (the output path), or a replica limit (its branch)",
            ),
            f(
                "layer",
                FieldType::Ref(&[BlockKind::Metal]),
                "metal: the process layer",
            ),
            f("width", LENGTH, "metal or trace width"),
            f(
                "length",
                LENGTH,
                "metal: line length, for its resistance and voltage drop at the worst current",
            ),
            f(
                "wire",
                FieldType::Ref(&[BlockKind::BondWire]),
                "bond wire: a `bond_wire` type of the process",
            ),
            f("diameter", LENGTH, "bond wire diameter"),
            f(
                "material",
                FieldType::Choice(WIRE_MATERIALS),
                "bond wire material",
            ),
            f(
                "placement",
                FieldType::Choice(&["external", "internal"]),
                "board trace: outer or inner layer",
            ),
            f("thickness", LENGTH, "board trace copper thickness"),
            f(
                "temperature_rise",
                DELTA_TEMP,
                "board trace: allowed temperature rise",
            ),
            f(
                "temperature",
                ABS_TEMP,
                "temperature the conductor sees (default: junction_max, or ambient max for traces)",
            ),
            f(
                "rating",
                CURRENT,
                "explicit current rating; overrides geometry",
            ),
            f("lifetime", TIME, "lifetime the rating is meant for"),
            f(
                "derating",
                RATIO,
                "bond wire: fraction of the Preece fusing current it is rated for",
            ),
            DESCRIPTION,
        ],
    },
    BlockSpec {
        kind: BlockKind::Fault,
        keyword: "fault",
        named: true,
        doc: "a fault-test case of the verification plan",
        children: &[],
        fields: &[
            f(
                "pin",
                FieldType::Ref(&[BlockKind::Pin]),
                "where the fault is applied",
            ),
            f("event", FieldType::Choice(EVENTS), "what happens"),
            f(
                "voltage",
                VOLTAGE,
                "short_to_supply: the voltage the pin is shorted to; reverse_current: the voltage the input falls to",
            ),
            f(
                "resistance",
                q(Dimension::RESISTANCE),
                "short_to_supply, reverse_current: the resistance in series with the reverse path",
            ),
            f(
                "exercises",
                FieldType::Ref(&[
                    BlockKind::Limit,
                    BlockKind::ThermalShutdown,
                    BlockKind::Hiccup,
                    BlockKind::Foldback,
                ]),
                "the protection this case exercises",
            ),
            named("expect", "current", CURRENT, true, "expected current bound"),
            named(
                "expect",
                "junction",
                ABS_TEMP,
                true,
                "expected junction temperature bound",
            ),
            named("expect", "time", TIME, true, "expected time bound"),
            named(
                "expect",
                "output",
                VOLTAGE,
                true,
                "expected output voltage bound",
            ),
            DESCRIPTION,
        ],
    },
    BlockSpec {
        kind: BlockKind::Analysis,
        keyword: "analysis",
        named: true,
        doc: "a stability analysis of a limit loop",
        children: &[],
        fields: &[
            f(
                "loop",
                FieldType::Ref(&[BlockKind::Limit]),
                "the limit whose loop is analysed",
            ),
            named(
                "force",
                "*",
                FieldType::AnyOf(&[
                    QuantityKind::VOLTAGE,
                    QuantityKind::of(Dimension::RESISTANCE),
                    QuantityKind::CURRENT,
                ]),
                false,
                "how a pin is forced: a voltage, a resistance, or (wrongly) a current",
            ),
            f(
                "break_at",
                FieldType::Node,
                "where the loop is broken, e.g. `pass.gate`",
            ),
            f(
                "clamp_side",
                FieldType::Choice(&["driving", "device"]),
                "which side of the break the clamp connects to: `driving` (right) or `device`",
            ),
            named(
                "require",
                "phase_margin",
                q(Dimension::ANGLE),
                true,
                "required phase margin",
            ),
            named(
                "require",
                "gain_margin",
                FieldType::Quantity(QuantityKind::of(Dimension::LEVEL)),
                true,
                "required gain margin",
            ),
            DESCRIPTION,
        ],
    },
    BlockSpec {
        kind: BlockKind::Corner,
        keyword: "corner",
        named: true,
        doc: "a named operating corner: the regulator is derived and checked at each of its corners, with the fields and blocks written here in place of its own",
        children: CORNER_OVERRIDES,
        fields: &[
            f(
                "ambient",
                ABS_TEMP,
                "ambient temperature at this corner (a value or a range inside the regulator's)",
            ),
            f(
                "supply",
                VOLTAGE,
                "input supply at this corner (a value or a range inside the regulator's)",
            ),
            f(
                "process",
                FieldType::Choice(PROCESS_CORNERS),
                "the process corner, a label: write the values that differ there in this corner's blocks",
            ),
            f(
                "load",
                LOAD,
                "the load at this corner, inside the regulator's",
            ),
            f(
                "quiescent",
                CURRENT,
                "the regulator's own supply current at this corner",
            ),
            f(
                "theta_ja",
                q(Dimension::THERMAL_RESISTANCE),
                "junction-to-ambient thermal resistance at this corner",
            ),
            DESCRIPTION,
        ],
    },
    BlockSpec {
        kind: BlockKind::Circuit,
        keyword: "circuit",
        named: false,
        doc: "the circuit under test: a SPICE netlist in the workspace, its subcircuit and how the subcircuit's ports map to the spec's pins, for `guardband testbench`",
        children: &[],
        fields: &[
            f(
                "netlist",
                FieldType::Text,
                "the netlist file, relative to this spec file",
            ),
            f(
                "subcircuit",
                FieldType::Text,
                "the name of the subcircuit (`.subckt NAME ...`) that is the regulator",
            ),
            named(
                "port",
                "*",
                FieldType::Text,
                false,
                "the subcircuit port a spec node connects to: `input`, `ground`, a pin, `gate_drive` and `gate_device` (the pass gate's driving and device sides)",
            ),
            f(
                "short_resistance",
                q(Dimension::RESISTANCE),
                "the resistance a generated bench puts on a shorted pin (default 10 mΩ)",
            ),
            f(
                "rise_time",
                TIME,
                "the supply ramp of a generated startup bench (default 1 us)",
            ),
            DESCRIPTION,
        ],
    },
];

/// The spec of a block kind.
pub fn block_spec(kind: BlockKind) -> &'static BlockSpec {
    BLOCKS
        .iter()
        .find(|b| b.kind == kind)
        .expect("every kind has a spec")
}

/// The spec of a block keyword allowed inside `parent` (or at top level for `None`).
pub fn child_spec(parent: Option<BlockKind>, keyword: &str) -> Option<&'static BlockSpec> {
    let allowed: &[BlockKind] = match parent {
        None => &[BlockKind::Regulator, BlockKind::Process, BlockKind::Supply],
        Some(p) => block_spec(p).children,
    };
    allowed
        .iter()
        .map(|k| block_spec(*k))
        .find(|b| b.keyword == keyword)
}

/// The spec of a field `keyword [name]` in a block kind.
pub fn field_spec(
    kind: BlockKind,
    keyword: &str,
    name: Option<&str>,
) -> Option<&'static FieldSpec> {
    block_spec(kind).fields.iter().find(|f| {
        f.keyword == keyword
            && match (f.name, name) {
                (None, None) => true,
                (Some("*"), Some(_)) => true,
                (Some(a), Some(b)) => a == b,
                _ => false,
            }
    })
}

/// Terminals a [`FieldType::Node`] may name on the pass device and on a limit.
pub const PASS_TERMINALS: &[&str] = &["gate", "source", "drain"];
pub const LIMIT_TERMINALS: &[&str] = &["clamp", "comparator"];

impl FieldType {
    /// A short description of what is expected, for messages.
    pub fn describe(&self) -> String {
        match self {
            FieldType::Quantity(k) => k.describe(),
            FieldType::Spread => "a spread around zero (`± 8 %`, `-2 % .. 6 %`)".to_string(),
            FieldType::AnyOf(ks) => ks
                .iter()
                .map(|k| k.describe())
                .collect::<Vec<_>>()
                .join(" or "),
            FieldType::Bool => "`true` or `false`".to_string(),
            FieldType::Source => "a voltage (V), or the name of a supply".to_string(),
            FieldType::Choice(options) => format!(
                "one of {}",
                options
                    .iter()
                    .map(|o| format!("`{o}`"))
                    .collect::<Vec<_>>()
                    .join(", ")
            ),
            FieldType::Ref(kinds) => format!(
                "the name of a {}",
                kinds
                    .iter()
                    .map(|k| block_spec(*k).keyword)
                    .collect::<Vec<_>>()
                    .join(" or ")
            ),
            FieldType::Node => "a node such as `pass.gate` or a pin name".to_string(),
            FieldType::Text => "a quoted string".to_string(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const REFERENCE: &str = include_str!("../../guardband-syntax/REFERENCE.md");

    #[test]
    fn reference_lists_every_language_diagnostic_and_no_other() {
        let section = REFERENCE
            .split("## Diagnostics of the language")
            .nth(1)
            .expect("section");
        let section = section.split("\n## ").next().unwrap_or(section);
        for (code, _) in crate::LANGUAGE_DIAGNOSTICS {
            assert!(
                section.contains(&format!("`{code}`")),
                "{code} missing from REFERENCE.md"
            );
        }
        for line in section.lines().filter(|l| l.starts_with("| `")) {
            for code in line
                .split('|')
                .nth(1)
                .unwrap_or("")
                .split('`')
                .skip(1)
                .step_by(2)
            {
                assert!(
                    crate::LANGUAGE_DIAGNOSTICS.iter().any(|(c, _)| *c == code),
                    "{code} is in REFERENCE.md but not in LANGUAGE_DIAGNOSTICS"
                );
            }
        }
    }

    #[test]
    fn reference_lists_every_block_field_and_unit() {
        for block in BLOCKS {
            assert!(
                REFERENCE.contains(&format!("`{}", block.keyword)),
                "block {} missing",
                block.keyword
            );
            for field in block.fields {
                let shown = match field.name {
                    Some("*") => format!("`{} NAME`", field.keyword),
                    Some(n) => format!("`{} {n}`", field.keyword),
                    None => format!("`{}`", field.keyword),
                };
                assert!(
                    REFERENCE.contains(&shown),
                    "{} field {shown} missing from REFERENCE.md",
                    block.keyword
                );
            }
        }
        for unit in guardband_units::UNITS {
            assert!(
                REFERENCE.contains(&format!("`{}`", unit.symbol)),
                "unit {} missing",
                unit.symbol
            );
        }
    }

    #[test]
    fn every_child_kind_has_a_spec() {
        for block in BLOCKS {
            for child in block.children {
                assert_eq!(block_spec(*child).kind, *child);
            }
        }
    }
}
