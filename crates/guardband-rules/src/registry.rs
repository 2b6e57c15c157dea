//! The list of lint rules, their default severities and their documentation.
//!
//! Each rule's documentation is the `//!` comment at the top of its file,
//! read here with `include_str!`, so `guardband explain` cannot drift from it.

use crate::context::Context;
use crate::rules;
use guardband_model::{Diagnostic, Severity};

/// One lint rule.
pub struct RuleInfo {
    /// Stable kebab-case name, used in configuration and suppressions.
    pub name: &'static str,
    /// `None` when the rule is off unless enabled.
    pub default_severity: Option<Severity>,
    /// One line: what it flags.
    pub summary: &'static str,
    source: &'static str,
    /// Runs the rule, pushing diagnostics at the default severity.
    pub check: fn(&Context, &mut Vec<Diagnostic>),
}

/// The caution printed with every explanation.
pub const CAUTION: &str = "Caution: guardband supports a design review. It does not replace sign-off \
simulation across corners, silicon characterisation, reliability qualification, or the safety \
standards and codes that apply to the end product; defer to those and to licensed engineering practice.";

impl RuleInfo {
    /// The rule's documentation: the `//!` lines of its source file.
    pub fn documentation(&self) -> String {
        self.source
            .lines()
            .take_while(|l| l.starts_with("//!") || l.trim().is_empty())
            .filter(|l| l.starts_with("//!"))
            .map(|l| {
                l.trim_start_matches("//!")
                    .strip_prefix(' ')
                    .unwrap_or(l.trim_start_matches("//!"))
            })
            .collect::<Vec<_>>()
            .join("\n")
    }

    /// One `## Heading` section of the documentation, without its heading.
    pub fn section(&self, heading: &str) -> Option<String> {
        let docs = self.documentation();
        let start = docs.find(&format!("## {heading}\n"))? + heading.len() + 4;
        let body = &docs[start..];
        let end = body.find("\n## ").unwrap_or(body.len());
        Some(body[..end].trim().to_string())
    }

    /// The full `guardband explain` text.
    pub fn explain(&self) -> String {
        let sev = self.default_severity.map(|s| s.as_str()).unwrap_or("off");
        format!(
            "{} (default: {sev})\n\n{}\n\n{CAUTION}",
            self.name,
            self.documentation().trim()
        )
    }
}

macro_rules! rule {
    ($module:ident, $name:literal, $sev:expr, $summary:literal) => {
        RuleInfo {
            name: $name,
            default_severity: $sev,
            summary: $summary,
            source: include_str!(concat!("rules/", stringify!($module), ".rs")),
            check: rules::$module::check,
        }
    };
}

static RULES: &[RuleInfo] = &[
    rule!(
        limit_within_load,
        "limit-within-load",
        Some(Severity::Error),
        "limit window's low edge at or below rated load plus margin"
    ),
    rule!(
        conductor_under_rated,
        "conductor-under-rated",
        Some(Severity::Error),
        "a conductor rated below the worst current that can flow through it"
    ),
    rule!(
        unlimited_surge,
        "unlimited-surge",
        Some(Severity::Error),
        "unlimited startup surge above a conductor rating or the supply surge limit"
    ),
    rule!(
        missing_fault_case,
        "missing-fault-case",
        Some(Severity::Warning),
        "an off-chip pin, limit or off-chip capacitor without its fault case"
    ),
    rule!(
        limit_loop_analysis,
        "limit-loop-analysis",
        Some(Severity::Error),
        "a sensed limit without a stability analysis set up to limit"
    ),
    rule!(
        clamp_too_weak,
        "clamp-too-weak",
        Some(Severity::Error),
        "clamp drive not above the amplifier's output drive"
    ),
    rule!(
        short_overheat,
        "short-overheat",
        Some(Severity::Error),
        "junction above its limit in a sustained short without thermal shutdown"
    ),
    rule!(
        slow_start,
        "slow-start",
        Some(Severity::Error),
        "startup slower than required, or unable to start against the load"
    ),
    rule!(
        trip_uncharacterised,
        "trip-uncharacterised",
        Some(Severity::Warning),
        "undervoltage-triggered limit without a characterised trip current"
    ),
    rule!(
        tolerance_missing,
        "tolerance-missing",
        Some(Severity::Info),
        "an exact value feeding a worst-case derivation"
    ),
    rule!(
        expectation_violated,
        "expectation-violated",
        Some(Severity::Error),
        "a fault case's expectation contradicted by the derived worst case"
    ),
    rule!(
        supply_surge_exceeded,
        "supply-surge-exceeded",
        Some(Severity::Error),
        "a startup surge above the supply's surge limit, however it is bounded"
    ),
    rule!(
        pass_device_weak,
        "pass-device-weak",
        Some(Severity::Error),
        "a pass device that cannot deliver the rated load at its weak corner"
    ),
    rule!(
        undervoltage_threshold_in_regulation,
        "undervoltage-threshold-in-regulation",
        Some(Severity::Error),
        "an undervoltage threshold that reaches the output's regulation range"
    ),
    rule!(
        wire_rated_at_fusing,
        "wire-rated-at-fusing",
        Some(Severity::Warning),
        "a bond wire rated at its Preece fusing current, with no derating stated"
    ),
    rule!(
        figure_not_derived,
        "figure-not-derived",
        Some(Severity::Info),
        "a figure not derived because an input is missing or has an error"
    ),
];

/// Every lint rule, in documentation order.
pub fn registry() -> &'static [RuleInfo] {
    RULES
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_rule_is_documented_with_all_sections() {
        assert_eq!(registry().len(), 16);
        for r in registry() {
            let doc = r.documentation();
            for section in [
                "## What it flags",
                "## Why it matters",
                "## Failing example",
                "## Passing example",
                "## How to fix",
            ] {
                assert!(doc.contains(section), "{} lacks {section}", r.name);
            }
            assert!(r.explain().contains("does not replace sign-off"));
        }
    }
}
