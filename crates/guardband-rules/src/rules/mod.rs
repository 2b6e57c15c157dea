//! One module per lint rule; each file opens with the rule's documentation.
//! This list is the registry: module, name, default severity, summary.

use guardband_model::Severity;

crate::registry::declare_rules! {
    limit_within_load: "limit-within-load", Some(Severity::Error),
        "limit window's low edge at or below rated load plus margin";
    conductor_under_rated: "conductor-under-rated", Some(Severity::Error),
        "a conductor rated below the worst current that can flow through it";
    unlimited_surge: "unlimited-surge", Some(Severity::Error),
        "unlimited startup surge above a conductor rating or the supply surge limit";
    missing_fault_case: "missing-fault-case", Some(Severity::Warning),
        "an off-chip pin, limit or off-chip capacitor without its fault case";
    limit_loop_analysis: "limit-loop-analysis", Some(Severity::Error),
        "a sensed limit without a stability analysis, or one not set up to limit";
    limit_loop_incomplete: "limit-loop-incomplete", Some(Severity::Warning),
        "a limit-loop analysis that leaves its clamp side or pass criterion unstated";
    clamp_too_weak: "clamp-too-weak", Some(Severity::Error),
        "clamp drive not above the amplifier's output drive";
    short_overheat: "short-overheat", Some(Severity::Error),
        "junction above its limit in a sustained short without thermal shutdown";
    slow_start: "slow-start", Some(Severity::Error),
        "startup slower than required, or unable to start against the load";
    trip_uncharacterised: "trip-uncharacterised", Some(Severity::Warning),
        "undervoltage-triggered limit without a characterised trip current";
    tolerance_missing: "tolerance-missing", Some(Severity::Info),
        "an exact value feeding a worst-case derivation";
    expectation_violated: "expectation-violated", Some(Severity::Error),
        "a fault case's expectation contradicted by the derived worst case";
    expectation_unchecked: "expectation-unchecked", Some(Severity::Warning),
        "a fault case's expectation with no derived bound to hold it against";
    supply_surge_exceeded: "supply-surge-exceeded", Some(Severity::Error),
        "a startup surge above the supply's surge limit, however it is bounded";
    pass_device_weak: "pass-device-weak", Some(Severity::Error),
        "a pass device that cannot deliver the rated load at its weak corner";
    undervoltage_threshold_in_regulation: "undervoltage-threshold-in-regulation", Some(Severity::Error),
        "an undervoltage threshold that reaches the output's regulation range";
    wire_rated_at_fusing: "wire-rated-at-fusing", Some(Severity::Warning),
        "a bond wire rated at its Preece fusing current, with no derating stated";
    rated_load_overheat: "rated-load-overheat", Some(Severity::Error),
        "a junction at rated load above its limit or at the thermal shutdown's trip point";
    load_line_latch: "load-line-latch", Some(Severity::Error),
        "a least delivered current that does not clear the load line from 0 V to regulation";
    reverse_current_overstress: "reverse-current-overstress", Some(Severity::Error),
        "a reverse current in a short to supply above the pass device's or a conductor's rating";
    cycle_budget_exceeded: "cycle-budget-exceeded", Some(Severity::Error),
        "sustained shorts that cycle the junction more than the cycle budget allows";
    rail_droop: "rail-droop", Some(Severity::Error),
        "regulators starting together that droop a shared supply to its lockout, below a regulator's minimum supply, or past its current limit";
    corner_envelope: "corner-envelope", Some(Severity::Error),
        "a named corner outside the regulator's range, or an end of a range that no corner reaches";
    measured_breaks_expectation: "measured-breaks-expectation", Some(Severity::Error),
        "a measured figure that breaks its fault case's expectation or its analysis' requirement";
    measured_outside_window: "measured-outside-window", Some(Severity::Error),
        "a measured figure outside the window the spec derives for it at that corner";
    evidence_missing: "evidence-missing", Some(Severity::Warning),
        "a fault case or analysis without a measurement at a corner, once results files are given";
    evidence_stale: "evidence-stale", Some(Severity::Warning),
        "evidence made from another version of the spec or the netlist than the one checked";
    evidence_unmatched: "evidence-unmatched", Some(Severity::Error),
        "a measurement naming a case, corner or quantity its regulator does not have";
    figure_not_derived: "figure-not-derived", Some(Severity::Info),
        "a figure not derived because an input is missing or has an error";
}
