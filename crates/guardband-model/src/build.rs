//! Turns syntax trees into model nodes, checking keywords, names, relations
//! and duplicates against the schema. Values are evaluated afterwards.

use crate::model::{Field, Model, Node, NodeId};
use crate::schema::{self, BlockSpec};
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
                }
                None => {
                    let mut d = Diagnostic::error(
                        "unknown-field",
                        file.id,
                        block.keyword.span.clone(),
                        format!("unknown item `{}`", block.keyword.text),
                    )
                    .primary("expected `regulator` or `process`");
                    if let Some(s) = did_you_mean(&block.keyword.text, ["regulator", "process"]) {
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

fn add_block<'b>(
    model: &mut Model,
    file: FileId,
    spec: &'static BlockSpec,
    block: &'b Block,
    parent: Option<NodeId>,
    diagnostics: &mut Vec<Diagnostic>,
) -> NodeId {
    let id = NodeId(model.nodes.len() as u32);
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
    });
    // Keys already taken in this block (keyword, and name of a named
    // field), with where, for duplicate checks; borrowed from the tree.
    let mut taken: rustc_hash::FxHashMap<(&str, Option<&str>), guardband_syntax::Span> =
        Default::default();
    taken.reserve(block.members.len());
    let mut check_duplicate = |key: (&'b str, Option<&'b str>),
                               span: &guardband_syntax::Span,
                               what: &str,
                               diagnostics: &mut Vec<Diagnostic>|
     -> bool {
        if let Some(first) = taken.get(&key) {
            let key = match key {
                (k, Some(n)) => format!("{k} {n}"),
                (k, None) => k.to_string(),
            };
            let rule = if what == "field" {
                "duplicate-field"
            } else {
                "duplicate-name"
            };
            diagnostics.push(
                Diagnostic::error(
                    rule,
                    file,
                    span.clone(),
                    format!("`{key}` is given twice in this block"),
                )
                .primary("second definition")
                .label(file, first.clone(), "first defined here")
                .help("remove one of them; a spec states each thing once"),
            );
            return true;
        }
        taken.insert(key, span.clone());
        false
    };
    for member in &block.members {
        match member {
            Member::Error(_) => {}
            Member::Field(f) => {
                let name = f.name.as_ref().map(|n| n.text.as_str());
                let Some(field_spec) = schema::field_spec(spec.kind, &f.keyword.text, name) else {
                    diagnostics.push(unknown_field(file, spec, f));
                    continue;
                };
                if field_spec.requirement == (f.relation == Relation::Assign) {
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
                    diagnostics.push(
                        Diagnostic::error(
                            "syntax",
                            file,
                            f.keyword.span.start..f.value.span.start,
                            msg,
                        )
                        .primary("wrong relation"),
                    );
                    continue;
                }
                if check_duplicate((&f.keyword.text, name), &f.key().span, "field", diagnostics) {
                    continue;
                }
                let node = &mut model.nodes[id.0 as usize];
                node.fields.push(Field {
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
                let what = if child.named { "name" } else { "field" };
                if check_duplicate((&b.key().text, None), &b.key().span, what, diagnostics) {
                    continue;
                }
                let child_id = add_block(model, file, child, b, Some(id), diagnostics);
                model.nodes[id.0 as usize].children.push(child_id);
            }
        }
    }
    id
}

fn field_words(spec: &BlockSpec) -> Vec<&'static str> {
    let mut words: Vec<&str> = spec.fields.iter().map(|f| f.keyword).collect();
    words.extend(spec.children.iter().map(|k| schema::block_spec(*k).keyword));
    words.dedup();
    words
}

fn unknown_field(file: FileId, spec: &BlockSpec, f: &guardband_syntax::Field) -> Diagnostic {
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
