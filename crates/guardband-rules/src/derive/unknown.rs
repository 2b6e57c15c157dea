//! Figures that could not be derived, and why. A value the checker cannot
//! read is unknown, not zero or one: nothing is derived from it, the rules
//! that need it stay silent, and `figure-not-derived` says what is missing.

use guardband_model::{Model, Node, NodeId, Value};

/// One input a figure needs and does not have.
#[derive(Debug, Clone, PartialEq)]
pub enum Need {
    /// A field that is not written in the block.
    Missing { node: NodeId, key: String },
    /// A field written with an error (reported where it is written).
    Erroneous { node: NodeId, key: String },
    /// Anything else, in words.
    Other(String),
}

/// Why a figure is unknown: every input it lacks.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Unknown {
    pub needs: Vec<Need>,
}

/// A derived figure, or why it could not be derived.
pub type Figure<T> = Result<T, Unknown>;

impl Unknown {
    /// Unknown for one reason given in words.
    pub fn because(why: impl Into<String>) -> Unknown {
        Unknown {
            needs: vec![Need::Other(why.into())],
        }
    }

    /// Adds the needs of another unknown figure, without repeats.
    pub fn join(mut self, other: &Unknown) -> Unknown {
        for n in &other.needs {
            if !self.needs.contains(n) {
                self.needs.push(n.clone());
            }
        }
        self
    }

    /// Whether some input is written but in error (its error is already reported).
    pub fn has_error(&self) -> bool {
        self.needs
            .iter()
            .any(|n| matches!(n, Need::Erroneous { .. }))
    }

    /// The reasons in words, e.g. "`sensed.reference` is missing".
    pub fn describe(&self, model: &Model) -> String {
        let mut parts: Vec<String> = self
            .needs
            .iter()
            .map(|n| match n {
                Need::Missing { node, key } => {
                    format!("`{}.{key}` is missing", short_path(model, *node))
                }
                Need::Erroneous { node, key } => {
                    format!("`{}.{key}` has an error", short_path(model, *node))
                }
                Need::Other(why) => why.clone(),
            })
            .collect();
        parts.dedup();
        if parts.is_empty() {
            "an input is missing".to_string()
        } else {
            parts.join("; ")
        }
    }
}

/// A node's path without its regulator or process, e.g. `sensed` or `pass`
/// (the item itself keeps its name).
pub fn short_path(model: &Model, node: NodeId) -> String {
    let n = model.node(node);
    match n.parent {
        None => n.key().to_string(),
        Some(_) => match n.path.split_once('.') {
            Some((_, rest)) => rest.to_string(),
            None => n.path.to_string(),
        },
    }
}

/// The quantity of field `key` of `node`: unknown when it is not written,
/// or written with an error.
pub fn need<'m>(node: &'m Node, key: &str) -> Result<&'m Value, Unknown> {
    match node.field(key) {
        Some(f) => f.quantity().ok_or_else(|| Unknown {
            needs: vec![Need::Erroneous {
                node: node.id,
                key: key.to_string(),
            }],
        }),
        None => Err(Unknown {
            needs: vec![Need::Missing {
                node: node.id,
                key: key.to_string(),
            }],
        }),
    }
}

/// Like [`need`] for a field that may be left out: `Ok(None)` when it is
/// not written, unknown when it is written with an error.
pub fn optional<'m>(node: &'m Node, key: &str) -> Result<Option<&'m Value>, Unknown> {
    match node.field(key) {
        Some(_) => need(node, key).map(Some),
        None => Ok(None),
    }
}

/// The union of two unknowns when either figure is unknown.
pub fn both<A, B>(a: Figure<A>, b: Figure<B>) -> Figure<(A, B)> {
    match (a, b) {
        (Ok(a), Ok(b)) => Ok((a, b)),
        (Err(x), Err(y)) => Err(x.join(&y)),
        (Err(x), _) | (_, Err(x)) => Err(x),
    }
}
