//! The model: every block of the workspace as a node with checked fields,
//! plus the stated tolerances. Built by [`crate::check`].

use crate::FileId;
use crate::schema::{BlockKind, FieldSpec};
use crate::value::{ToleranceSource, Value};
use compact_str::CompactString;
use guardband_syntax::{Expr, Relation, Span};

/// Index of a node in [`Model::nodes`].
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct NodeId(pub u32);

/// A checked field value.
#[derive(Debug, Clone, PartialEq)]
pub enum FieldValue {
    Quantity(Value),
    Bool(bool),
    Choice(CompactString),
    /// A reference to another block.
    Ref(NodeId),
    /// A quantity taken from another block: `supply = battery` is the
    /// `voltage` of the `supply` item `battery`.
    Sourced {
        value: Value,
        source: NodeId,
    },
    /// A circuit node: a block, and a terminal of it (`pass.gate`) when named.
    Node {
        node: NodeId,
        terminal: Option<CompactString>,
    },
    Text(String),
}

/// One field as written, with its checked value (`None` when it had an error).
#[derive(Debug, Clone)]
pub struct Field {
    pub keyword: CompactString,
    pub name: Option<CompactString>,
    /// The lookup key: the name for named fields, else the keyword.
    pub key: CompactString,
    pub key_span: Span,
    pub relation: Relation,
    /// The value as written, shared with the syntax tree.
    pub expr: std::sync::Arc<Expr>,
    /// The whole field.
    pub span: Span,
    pub spec: &'static FieldSpec,
    pub value: Option<FieldValue>,
}

impl Field {
    /// The quantity, if this field holds one.
    pub fn quantity(&self) -> Option<&Value> {
        match &self.value {
            Some(FieldValue::Quantity(v) | FieldValue::Sourced { value: v, .. }) => Some(v),
            _ => None,
        }
    }
}

/// A block: a regulator, a process, or something inside one.
#[derive(Debug, Clone)]
pub struct Node {
    pub id: NodeId,
    pub kind: BlockKind,
    pub keyword: CompactString,
    pub name: Option<CompactString>,
    pub file: FileId,
    pub span: Span,
    /// The keyword and name, for pointing at the block itself.
    pub header_span: Span,
    /// The name if there is one, else the keyword: what a reference renames.
    pub name_span: Span,
    pub parent: Option<NodeId>,
    pub fields: Vec<Field>,
    pub children: Vec<NodeId>,
    /// Dotted path from the item, e.g. `probe_rail.sensed`.
    pub path: CompactString,
    /// For a node of a regulator as it is at a named corner: the node as
    /// written that it stands for, and the `corner` block. `None` for
    /// every node as written.
    pub at_corner: Option<CornerOf>,
}

/// Where a node of a corner variant comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct CornerOf {
    /// The node as written with the same path.
    pub written: NodeId,
    /// The `corner` block of the regulator.
    pub corner: NodeId,
}

/// A corner's restatement of one of its regulator's named blocks.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Restated {
    pub file: crate::FileId,
    /// The name as the corner writes it.
    pub corner_name: Span,
    /// The name of the block as the regulator writes it.
    pub written_name: Span,
}

/// A regulator at one of its named corners: a copy of its tree with the
/// corner's fields and blocks in place of its own, derived and checked
/// like a regulator of its own.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Variant {
    /// The regulator as written.
    pub regulator: NodeId,
    /// Its `corner` block.
    pub corner: NodeId,
    /// The root of the copy.
    pub root: NodeId,
}

impl Node {
    /// The key other blocks use to name this one: its name, or its keyword.
    pub fn key(&self) -> &str {
        self.name.as_deref().unwrap_or(&self.keyword)
    }

    /// The field with this key.
    pub fn field(&self, key: &str) -> Option<&Field> {
        self.fields.iter().find(|f| f.key == key)
    }

    /// The field with this keyword and name (`expect`, `current`).
    pub fn named_field(&self, keyword: &str, name: &str) -> Option<&Field> {
        self.fields
            .iter()
            .find(|f| f.keyword == keyword && f.name.as_deref() == Some(name))
    }

    /// All fields with this keyword (`force ...`, `expect ...`).
    pub fn fields_named<'a>(&'a self, keyword: &'a str) -> impl Iterator<Item = &'a Field> + 'a {
        self.fields.iter().filter(move |f| f.keyword == keyword)
    }

    /// The checked quantity of a field.
    pub fn quantity(&self, key: &str) -> Option<&Value> {
        self.field(key).and_then(Field::quantity)
    }

    /// The word of a choice field.
    pub fn choice(&self, key: &str) -> Option<&str> {
        match self.field(key).and_then(|f| f.value.as_ref()) {
            Some(FieldValue::Choice(c)) => Some(c),
            _ => None,
        }
    }

    /// The value of a boolean field.
    pub fn flag(&self, key: &str) -> Option<bool> {
        match self.field(key).and_then(|f| f.value.as_ref()) {
            Some(FieldValue::Bool(b)) => Some(*b),
            _ => None,
        }
    }

    /// The string of a text field (`netlist = "ldo.cir"`).
    pub fn text(&self, key: &str) -> Option<&str> {
        match self.field(key).and_then(|f| f.value.as_ref()) {
            Some(FieldValue::Text(t)) => Some(t),
            _ => None,
        }
    }

    /// The block a reference field names.
    pub fn reference(&self, key: &str) -> Option<NodeId> {
        match self.field(key).and_then(|f| f.value.as_ref()) {
            Some(FieldValue::Ref(n) | FieldValue::Sourced { source: n, .. }) => Some(*n),
            _ => None,
        }
    }
}

/// Something a name in the source can point at: a block or one of its fields.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Symbol {
    Node(NodeId),
    /// A node and the index of the field in [`Node::fields`].
    Field(NodeId, usize),
}

/// One use of a name, resolved: editors navigate and rename with these.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Reference {
    pub file: FileId,
    /// The span of the one path segment that names `target`.
    pub span: Span,
    pub target: Symbol,
}

/// Every checked block of a workspace.
#[derive(Debug, Clone, Default)]
pub struct Model {
    pub nodes: Vec<Node>,
    /// Every resolved name in a value, sorted by file and position.
    pub references: Vec<Reference>,
    /// Top-level items (regulators and processes), in file order.
    pub items: Vec<NodeId>,
    /// Every tolerance or range stated anywhere, indexed by [`crate::SourceId`].
    pub sources: Vec<ToleranceSource>,
    /// Each regulator at each of its named corners, in the order written.
    pub variants: Vec<Variant>,
    /// Each named block a corner restates (`corner c { limit sensed { … } }`),
    /// so renaming the block renames its restatements too.
    pub restated: Vec<Restated>,
}

impl Model {
    /// The node with this id.
    pub fn node(&self, id: NodeId) -> &Node {
        &self.nodes[id.0 as usize]
    }

    /// The nodes as written, without the copies made for named corners:
    /// what editors list, colour and point at.
    pub fn written(&self) -> impl Iterator<Item = &Node> {
        self.nodes.iter().filter(|n| n.at_corner.is_none())
    }

    /// The node as written that `id` stands for (itself when it is written).
    pub fn written_of(&self, id: NodeId) -> NodeId {
        self.node(id).at_corner.map_or(id, |c| c.written)
    }

    /// The variants of a regulator, one per named corner, in the order written.
    pub fn variants_of(&self, regulator: NodeId) -> impl Iterator<Item = &Variant> {
        self.variants
            .iter()
            .filter(move |v| v.regulator == regulator)
    }

    /// The corner a node of a variant is at.
    pub fn corner_of(&self, id: NodeId) -> Option<&Node> {
        self.node(id).at_corner.map(|c| self.node(c.corner))
    }

    /// Whether the field `key` of a variant's node is written in its
    /// `corner` block (not inherited from the regulator): the corner's own
    /// conditions, exact on purpose, and what it restates.
    pub fn set_by_corner(&self, node: &Node, key: &str) -> bool {
        let (Some(corner), Some(field)) = (self.corner_of(node.id), node.field(key)) else {
            return false;
        };
        corner.span.start <= field.span.start && field.span.end <= corner.span.end
    }

    /// Top-level items of one kind.
    pub fn items_of(&self, kind: BlockKind) -> impl Iterator<Item = &Node> {
        self.items
            .iter()
            .map(|id| self.node(*id))
            .filter(move |n| n.kind == kind)
    }

    /// All regulators.
    pub fn regulators(&self) -> impl Iterator<Item = &Node> {
        self.items_of(BlockKind::Regulator)
    }

    /// Children of a node of one kind.
    pub fn children<'a>(
        &'a self,
        node: &'a Node,
        kind: BlockKind,
    ) -> impl Iterator<Item = &'a Node> + 'a {
        node.children
            .iter()
            .map(|id| self.node(*id))
            .filter(move |n| n.kind == kind)
    }

    /// The first child of a node of one kind.
    pub fn child<'a>(&'a self, node: &'a Node, kind: BlockKind) -> Option<&'a Node> {
        self.children(node, kind).next()
    }

    /// The regulator (or process) a node belongs to.
    pub fn item_of(&self, mut id: NodeId) -> &Node {
        while let Some(p) = self.node(id).parent {
            id = p;
        }
        self.node(id)
    }

    /// Where a symbol is defined: its file and the span of its name.
    pub fn definition(&self, symbol: Symbol) -> (FileId, Span) {
        match symbol {
            Symbol::Node(n) => {
                let node = self.node(n);
                (node.file, node.name_span.clone())
            }
            Symbol::Field(n, i) => {
                let node = self.node(n);
                (node.file, node.fields[i].key_span.clone())
            }
        }
    }

    /// The name a symbol is known by.
    pub fn symbol_name(&self, symbol: Symbol) -> &str {
        match symbol {
            Symbol::Node(n) => self.node(n).key(),
            Symbol::Field(n, i) => &self.node(n).fields[i].key,
        }
    }

    /// The tolerance source behind an id.
    pub fn source(&self, id: crate::SourceId) -> &ToleranceSource {
        &self.sources[id.0 as usize]
    }
}
