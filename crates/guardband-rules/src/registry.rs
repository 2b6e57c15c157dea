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
    pub(crate) source: &'static str,
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

/// Declares each rule's module and its registry entry in one place
/// (`rules/mod.rs`): a rule is its file plus one line there.
macro_rules! declare_rules {
    ($($module:ident: $name:literal, $sev:expr, $summary:literal;)*) => {
        $(pub mod $module;)*

        /// Every rule, in documentation order.
        pub static RULES: &[$crate::registry::RuleInfo] = &[
            $($crate::registry::RuleInfo {
                name: $name,
                default_severity: $sev,
                summary: $summary,
                source: include_str!(concat!(stringify!($module), ".rs")),
                check: $module::check,
            },)*
        ];
    };
}
pub(crate) use declare_rules;

/// Every lint rule, in documentation order.
pub fn registry() -> &'static [RuleInfo] {
    rules::RULES
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_rule_is_documented_with_all_sections() {
        let mut names: Vec<&str> = registry().iter().map(|r| r.name).collect();
        names.sort();
        names.dedup();
        assert_eq!(names.len(), registry().len(), "two rules share a name");
        for r in registry() {
            assert!(
                r.name.bytes().all(|b| b.is_ascii_lowercase() || b == b'-'),
                "{} is not kebab-case",
                r.name
            );
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
