//! What a rule sees: the workspace, the model, the configuration and the
//! derivations, with helpers to point at fields.

use crate::config::Config;
use crate::derive::Derived;
use guardband_model::{Diagnostic, Model, Node, NodeId, Severity, Workspace};

/// Inputs shared by every rule.
pub struct Context<'a> {
    pub ws: &'a Workspace,
    pub model: &'a Model,
    pub config: &'a Config,
    pub derived: &'a [Derived],
}

impl<'a> Context<'a> {
    /// The node with this id.
    pub fn node(&self, id: NodeId) -> &'a Node {
        self.model.node(id)
    }

    /// The span of a field's value, or of the block header when it is missing.
    pub fn value_span(&self, node: &Node, key: &str) -> std::ops::Range<usize> {
        node.field(key)
            .map(|f| f.expr.span.clone())
            .unwrap_or(node.header_span.clone())
    }

    /// Starts a diagnostic at a field's value (or the block header).
    pub fn at(
        &self,
        rule: &'static str,
        severity: Severity,
        node: &Node,
        key: &str,
        message: String,
    ) -> Diagnostic {
        Diagnostic::error(rule, node.file, self.value_span(node, key), message)
            .with_severity(severity)
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
