//! Turns syntax trees into model nodes, checking keywords, names, relations
//! and duplicates against the schema. Values are evaluated afterwards.

use crate::model::{Field, Model, Node, NodeId};
use crate::schema::{self, BlockKind, BlockSpec};
use crate::suggest::did_you_mean;
use crate::{Diagnostic, FileId, Workspace};
use guardband_syntax::{Block, Item, Member, Relation};

/// Builds the node tree for every file of the workspace.
pub fn build(ws: &Workspace, diagnostics: &mut Vec<Diagnostic>) -> Model {
    let mut model = Model::default();
    for file in &ws.files {
        for item in &file.parse.file.items {
            let Item::Block(block) = item else { continue };
            match schema::child_spec(None, &block.keyword.text) {
                Some(spec) => {
                    let id = add_block(&mut model, file.id, spec, block, None, diagnostics);
                    model.items.push(id);
                    if spec.kind == BlockKind::Regulator {
                        crate::corners::add_variants(&mut model, file.id, id, block, diagnostics);
                    }
                }
                None => {
                    let mut d = Diagnostic::error(
                        "unknown-field",
                        file.id,
                        block.keyword.span.clone(),
                        format!("unknown item `{}`", block.keyword.text),
                    )
                    .primary("expected `regulator`, `process` or `supply`");
                    if let Some(s) =
                        did_you_mean(&block.keyword.text, ["regulator", "process", "supply"])
                    {
                        d = d.help(format!("did you mean `{s}`?"));
                    }
                    diagnostics.push(d);
                }
            }
        }
    }
    report_duplicate_items(ws, &model, diagnostics);
    model
}

fn header_span(block: &Block) -> guardband_syntax::Span {
    let end = block
        .name
        .as_ref()
        .map(|n| n.span.end)
        .unwrap_or(block.keyword.span.end);
    block.keyword.span.start..end
}

/// Adds `block` (and, recursively, its children) as a node of `spec`'s
/// kind under `parent`: checks its name, then each member against the
/// schema and against the members before it.
pub(crate) fn add_block(
    model: &mut Model,
    file: FileId,
    spec: &'static BlockSpec,
    block: &Block,
    parent: Option<NodeId>,
    diagnostics: &mut Vec<Diagnostic>,
) -> NodeId {
    check_name(file, spec, block, diagnostics);
    let id = push_node(model, file, spec, block, parent);
    let mut taken = Taken::with_capacity(block.members.len());
    for member in &block.members {
        match member {
            Member::Error(_) => {}
            Member::Field(f) => {
                let name = f.name.as_ref().map(|n| n.text.as_str());
                let Some(field_spec) = schema::field_spec(spec.kind, &f.keyword.text, name) else {
                    diagnostics.push(unknown_field(file, spec, f));
                    continue;
                };
                if let Some(d) = wrong_relation(file, field_spec, f) {
                    diagnostics.push(d);
                    continue;
                }
                if let Some(d) = taken.second(file, (&f.keyword.text, name), &f.key().span, true) {
                    diagnostics.push(d);
                    continue;
                }
                model.nodes[id.0 as usize].fields.push(Field {
                    keyword: f.keyword.text.clone(),
                    name: name.map(Into::into),
                    key: f.key().text.clone(),
                    key_span: f.key().span.clone(),
                    relation: f.relation,
                    expr: f.value.clone(),
                    span: f.span.clone(),
                    spec: field_spec,
                    value: None,
                });
            }
            Member::Block(b) => {
                let Some(child) = schema::child_spec(Some(spec.kind), &b.keyword.text) else {
                    diagnostics.push(unknown_block(file, spec, b));
                    continue;
                };
                if let Some(d) =
                    taken.second(file, (&b.key().text, None), &b.key().span, !child.named)
                {
                    diagnostics.push(d);
                    continue;
                }
                // A corner's blocks restate the regulator's: they are built
                // into the corner's copy of the regulator (`corners.rs`).
                if spec.kind == BlockKind::Corner {
                    continue;
                }
                let child_id = add_block(model, file, child, b, Some(id), diagnostics);
                model.nodes[id.0 as usize].children.push(child_id);
            }
        }
    }
    id
}

/// A named kind without a name, or an unnamed kind with one.
fn check_name(file: FileId, spec: &BlockSpec, block: &Block, diagnostics: &mut Vec<Diagnostic>) {
    if spec.named && block.name.is_none() {
        diagnostics.push(
            Diagnostic::error(
                "missing-name",
                file,
                block.keyword.span.clone(),
                format!("`{}` needs a name", spec.keyword),
            )
            .primary("name missing")
            .help(format!("write `{} NAME {{ ... }}`", spec.keyword)),
        );
    }
    if !spec.named
        && let Some(name) = &block.name
    {
        diagnostics.push(
            Diagnostic::error(
                "unknown-field",
                file,
                name.span.clone(),
                format!("`{}` takes no name", spec.keyword),
            )
            .primary("remove this name")
            .help(format!(
                "there is one `{}` per block; write `{} {{ ... }}`",
                spec.keyword, spec.keyword
            )),
        );
    }
}

/// Pushes the node for `block`, with its dotted path, and no fields or
/// children yet.
fn push_node(
    model: &mut Model,
    file: FileId,
    spec: &BlockSpec,
    block: &Block,
    parent: Option<NodeId>,
) -> NodeId {
    let id = NodeId(model.nodes.len() as u32);
    let key = block
        .name
        .as_ref()
        .map(|n| n.text.clone())
        .unwrap_or_else(|| block.keyword.text.clone());
    let path = match parent {
        Some(p) => {
            let parent = &model.node(p).path;
            let mut path = compact_str::CompactString::with_capacity(parent.len() + 1 + key.len());
            path.push_str(parent);
            path.push('.');
            path.push_str(&key);
            path
        }
        None => key,
    };
    model.nodes.push(Node {
        id,
        kind: spec.kind,
        keyword: block.keyword.text.clone(),
        name: block.name.as_ref().map(|n| n.text.clone()),
        file,
        span: block.span.clone(),
        header_span: header_span(block),
        name_span: block.key().span.clone(),
        parent,
        // Sized up front: a block of many fields would otherwise waste up to
        // half of its field list to growth.
        fields: Vec::with_capacity(
            block
                .members
                .iter()
                .filter(|m| matches!(m, Member::Field(_)))
                .count(),
        ),
        children: Vec::new(),
        path,
        at_corner: None,
    });
    id
}

/// A field set with `=` that states a bound, or a bound written with `=`.
fn wrong_relation(
    file: FileId,
    field_spec: &schema::FieldSpec,
    f: &guardband_syntax::Statement,
) -> Option<Diagnostic> {
    if field_spec.requirement != (f.relation == Relation::Assign) {
        return None;
    }
    let name = f.name.as_ref().map(|n| n.text.as_str());
    let msg = if field_spec.requirement {
        format!(
            "`{} {}` states a bound; use `<=`, `>=`, `<` or `>`",
            f.keyword.text,
            name.unwrap_or("")
        )
    } else {
        format!(
            "`{}` is set with `=`, not `{}`",
            f.keyword.text,
            f.relation.symbol()
        )
    };
    Some(
        Diagnostic::error(
            "syntax",
            file,
            f.keyword.span.start..f.value.span.start,
            msg,
        )
        .primary("wrong relation"),
    )
}

/// The keys already taken in one block (keyword, and name of a named
/// field), with where, borrowed from the tree.
struct Taken<'b> {
    seen: rustc_hash::FxHashMap<(&'b str, Option<&'b str>), guardband_syntax::Span>,
}

impl<'b> Taken<'b> {
    fn with_capacity(n: usize) -> Self {
        let mut seen = rustc_hash::FxHashMap::default();
        seen.reserve(n);
        Taken { seen }
    }

    /// Takes `key`; when it was taken before, the error saying so (a
    /// field given twice when `field`, else a name used twice).
    fn second(
        &mut self,
        file: FileId,
        key: (&'b str, Option<&'b str>),
        span: &guardband_syntax::Span,
        field: bool,
    ) -> Option<Diagnostic> {
        let Some(first) = self.seen.get(&key) else {
            self.seen.insert(key, span.clone());
            return None;
        };
        let shown = match key {
            (k, Some(n)) => format!("{k} {n}"),
            (k, None) => k.to_string(),
        };
        let rule = if field {
            "duplicate-field"
        } else {
            "duplicate-name"
        };
        Some(
            Diagnostic::error(
                rule,
                file,
                span.clone(),
                format!("`{shown}` is given twice in this block"),
            )
            .primary("second definition")
            .label(file, first.clone(), "first defined here")
            .help("remove one of them; a spec states each thing once"),
        )
    }
}

fn field_words(spec: &BlockSpec) -> Vec<&'static str> {
    let mut words: Vec<&str> = spec.fields.iter().map(|f| f.keyword).collect();
    words.extend(spec.children.iter().map(|k| schema::block_spec(*k).keyword));
    words.dedup();
    words
}

fn unknown_field(file: FileId, spec: &BlockSpec, f: &guardband_syntax::Statement) -> Diagnostic {
    let keyword = f.keyword.text.as_str();
    let names: Vec<&str> = spec
        .fields
        .iter()
        .filter(|s| s.keyword == keyword)
        .filter_map(|s| s.name)
        .collect();
    if !names.is_empty() {
        let given = f.name.as_ref().map(|n| n.text.as_str());
        let span = f
            .name
            .as_ref()
            .map(|n| n.span.clone())
            .unwrap_or(f.keyword.span.clone());
        let mut d = Diagnostic::error(
            "unknown-field",
            file,
            span,
            match given {
                Some(g) => format!("`{keyword} {g}` is not known in a {}", spec.keyword),
                None => format!("`{keyword}` needs a name in a {}", spec.keyword),
            },
        )
        .primary(format!("expected one of: {}", names.join(", ")));
        if let Some(s) = given.and_then(|g| did_you_mean(g, names.iter().copied())) {
            d = d.help(format!("did you mean `{keyword} {s}`?"));
        }
        return d;
    }
    if spec
        .children
        .iter()
        .any(|k| schema::block_spec(*k).keyword == keyword)
    {
        return Diagnostic::error(
            "unknown-field",
            file,
            f.keyword.span.clone(),
            format!("`{keyword}` is a block, not a field"),
        )
        .primary("written as a field")
        .help(format!("write `{keyword} NAME {{ ... }}`"));
    }
    let mut d = Diagnostic::error(
        "unknown-field",
        file,
        f.keyword.span.clone(),
        format!("unknown field `{keyword}` in a {}", spec.keyword),
    )
    .primary("not a field of this block");
    if let Some(s) = did_you_mean(keyword, field_words(spec)) {
        d = d.help(format!("did you mean `{s}`?"));
    }
    d
}

fn unknown_block(file: FileId, spec: &BlockSpec, b: &Block) -> Diagnostic {
    let keyword = b.keyword.text.as_str();
    let mut d = Diagnostic::error(
        "unknown-field",
        file,
        b.keyword.span.clone(),
        format!("a {} has no block `{keyword}`", spec.keyword),
    )
    .primary("unknown block");
    if let Some(s) = did_you_mean(keyword, field_words(spec)) {
        d = d.help(format!("did you mean `{s}`?"));
    } else if spec.fields.iter().any(|f| f.keyword == keyword) {
        d = d.help(format!("`{keyword}` is a field; write `{keyword} = value`"));
    }
    d
}

/// Two items of the same name that one file can see are ambiguous.
fn report_duplicate_items(ws: &Workspace, model: &Model, diagnostics: &mut Vec<Diagnostic>) {
    for file in &ws.files {
        let visible = crate::eval::visible_items(ws, model, file.id);
        // The first item of each name; a map, so that a file of many items
        // is not compared item against item.
        let mut first: rustc_hash::FxHashMap<&str, NodeId> = Default::default();
        for id in &visible {
            let a = model.node(*id);
            let earlier = *first.entry(a.key()).or_insert(*id);
            if a.name.is_none() || a.file != file.id || earlier == *id {
                continue;
            }
            let b = model.node(earlier);
            diagnostics.push(
                Diagnostic::error(
                    "duplicate-name",
                    a.file,
                    a.header_span.clone(),
                    format!("`{}` is defined twice", a.key()),
                )
                .primary("second definition")
                .label(b.file, b.header_span.clone(), "first defined here")
                .help("give each regulator and process its own name"),
            );
        }
    }
}
