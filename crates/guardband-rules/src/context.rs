//! What a rule sees: the workspace, the model, the options and the
//! derivations, with helpers to point at fields. A rule's name and severity
//! are the registry's: the helpers make findings of the rule being run.

use crate::derive::Derived;
use crate::options::Options;
use crate::registry::RuleInfo;
use guardband_model::{Diagnostic, FileId, Model, Node, NodeId, Workspace};

/// Inputs shared by every rule.
pub struct Context<'a> {
    pub ws: &'a Workspace,
    pub model: &'a Model,
    pub options: &'a Options,
    pub derived: &'a [Derived],
    /// Every shared supply rail with its drawers and droop.
    pub rails: &'a [crate::derive::rail::Rail],
    /// Every regulator's named corners, for the rules about corners
    /// themselves (empty in the runs at one corner).
    pub variants: &'a [guardband_model::Variant],
    /// Each regulator derived at each of its named corners (empty in the
    /// runs at one corner), for the evidence rules, which compare a
    /// measurement at a corner with the figures derived there.
    pub corner_derived: &'a [Derived],
    /// The measured evidence the results files hold.
    pub evidence: &'a crate::evidence::Evidence,
    /// The rule being run.
    pub rule: &'static RuleInfo,
}

impl<'a> Context<'a> {
    /// The node with this id.
    pub fn node(&self, id: NodeId) -> &'a Node {
        self.model.node(id)
    }

    /// The regulators this run checks: those of [`Context::derived`]. A
    /// regulator with named corners is checked once per corner, as its
    /// copy at that corner, so rules iterate these and never
    /// `Model::regulators`.
    pub fn regulators(&self) -> impl Iterator<Item = &'a Node> + 'a {
        let model = self.model;
        self.derived.iter().map(move |d| model.node(d.regulator))
    }

    /// The span of a field's value, or of the block header when it is missing.
    pub fn value_span(&self, node: &Node, key: &str) -> std::ops::Range<usize> {
        node.field(key)
            .map(|f| f.expr.span.clone())
            .unwrap_or(node.header_span.clone())
    }

    /// A finding of the rule being run at `span` of `file`.
    pub fn finding(
        &self,
        file: FileId,
        span: std::ops::Range<usize>,
        message: impl Into<String>,
    ) -> Diagnostic {
        let d = Diagnostic::error(self.rule.name, file, span, message);
        match self.rule.default_severity {
            Some(s) => d.with_severity(s),
            None => d,
        }
    }

    /// A finding at a field's value (or the block header).
    pub fn at(&self, node: &Node, key: &str, message: impl Into<String>) -> Diagnostic {
        self.finding(node.file, self.value_span(node, key), message)
    }

    /// A finding at a block's header.
    pub fn at_block(&self, node: &Node, message: impl Into<String>) -> Diagnostic {
        self.finding(node.file, node.header_span.clone(), message)
    }

    /// Adds a label at a field's value when the field exists.
    pub fn label(
        &self,
        d: Diagnostic,
        node: &Node,
        key: &str,
        message: impl Into<String>,
    ) -> Diagnostic {
        match node.field(key) {
            Some(f) => d.label(node.file, f.expr.span.clone(), message),
            None => d,
        }
    }
}
