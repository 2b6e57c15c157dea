//! Evaluation of field values: name resolution, unit conversion, interval
//! arithmetic with tracked tolerances, kind checks and cycle detection.

use crate::model::{FieldValue, Model, NodeId, Reference, Symbol};
use crate::schema::{self, BlockKind, FieldType};
use crate::suggest::did_you_mean;
use crate::value::{Corner, SourceId, Spread, ToleranceSource, Value, ValueError};

mod hints;
mod tolerance;
use crate::{Diagnostic, FileId, Workspace};
use guardband_syntax::{BinaryOp, Expr, ExprKind, Ident, Span};
use guardband_units::{ParsedUnit, QuantityKind, TempSense, UnitError, parse_unit};

/// Items a file can name: its own and those of the files it imports.
pub fn visible_items(ws: &Workspace, model: &Model, file: FileId) -> Vec<NodeId> {
    let mut files = vec![file];
    files.extend(ws.file(file).imports.iter().map(|(f, _)| *f));
    files
        .iter()
        .flat_map(|f| {
            model
                .items
                .iter()
                .copied()
                .filter(move |i| model.node(*i).file == *f)
        })
        .collect()
}

#[derive(Debug, Clone, Copy, PartialEq)]
enum State {
    Pending,
    InProgress,
    Done,
    Failed,
}

/// What a dotted path names.
enum Target {
    Field(NodeId, usize, Option<Corner>),
    Node(NodeId),
}

struct Evaluator<'a> {
    ws: &'a Workspace,
    model: &'a mut Model,
    states: Vec<Vec<State>>,
    stack: Vec<(NodeId, usize)>,
    diagnostics: &'a mut Vec<Diagnostic>,
    /// The items each file can name, by file id (items never change during evaluation).
    visible: Vec<Vec<NodeId>>,
    /// The same, by name (the first of a repeated name wins, as in `visible`'s order).
    visible_by_key: Vec<rustc_hash::FxHashMap<compact_str::CompactString, NodeId>>,
    /// Each unit spelling met so far, parsed: a file uses a handful of
    /// units thousands of times.
    units: rustc_hash::FxHashMap<compact_str::CompactString, Result<ParsedUnit, UnitError>>,
    /// Name indexes of the blocks with many members, so that a lookup in a
    /// block of a thousand conductors is not a scan of a thousand keys.
    wide: rustc_hash::FxHashMap<NodeId, MemberIndex>,
    /// Expression nodes evaluated so far, and the most allowed.
    steps: u64,
    max_steps: u64,
}

/// A block's members by name: the first field and the first child block of
/// each key (the first wins, as in a scan in source order).
#[derive(Default)]
struct MemberIndex {
    fields: rustc_hash::FxHashMap<compact_str::CompactString, usize>,
    children: rustc_hash::FxHashMap<compact_str::CompactString, NodeId>,
}

/// Blocks with more members than this get a [`MemberIndex`]; smaller ones
/// are scanned, which is faster than hashing for a handful of keys.
const INDEX_MEMBERS_ABOVE: usize = 16;

fn wide_blocks(model: &Model) -> rustc_hash::FxHashMap<NodeId, MemberIndex> {
    let mut wide = rustc_hash::FxHashMap::default();
    for (n, node) in model.nodes.iter().enumerate() {
        if node.fields.len() + node.children.len() <= INDEX_MEMBERS_ABOVE {
            continue;
        }
        let mut index = MemberIndex::default();
        for (i, f) in node.fields.iter().enumerate() {
            index.fields.entry(f.key.clone()).or_insert(i);
        }
        for &c in &node.children {
            index
                .children
                .entry(model.node(c).key().into())
                .or_insert(c);
        }
        wide.insert(NodeId(n as u32), index);
    }
    wide
}

/// Evaluates every field of every node in place, reporting problems.
pub fn evaluate(
    ws: &Workspace,
    model: &mut Model,
    diagnostics: &mut Vec<Diagnostic>,
    max_steps: u64,
) {
    let states = model
        .nodes
        .iter()
        .map(|n| vec![State::Pending; n.fields.len()])
        .collect();
    let visible: Vec<Vec<NodeId>> = ws
        .files
        .iter()
        .map(|f| visible_items(ws, model, f.id))
        .collect();
    let visible_by_key = visible
        .iter()
        .map(|items| {
            let mut map = rustc_hash::FxHashMap::default();
            for &i in items {
                map.entry(model.node(i).key().into()).or_insert(i);
            }
            map
        })
        .collect();
    let wide = wide_blocks(model);
    let mut ev = Evaluator {
        ws,
        model,
        states,
        stack: Vec::new(),
        diagnostics,
        visible,
        visible_by_key,
        units: Default::default(),
        wide,
        steps: 0,
        max_steps,
    };
    for n in 0..ev.model.nodes.len() {
        for i in 0..ev.model.nodes[n].fields.len() {
            ev.field(NodeId(n as u32), i);
        }
    }
    let refs = &mut ev.model.references;
    refs.sort_by_key(|r| (r.file, r.span.start, r.span.end, r.target));
    refs.dedup();
}

/// The symbol as written that `target` (maybe in a corner's copy) stands for:
/// the written node, and its field of the same key when it has one.
fn written_symbol(model: &Model, target: Symbol) -> Symbol {
    match target {
        Symbol::Node(n) => Symbol::Node(model.written_of(n)),
        Symbol::Field(n, i) => {
            let w = model.written_of(n);
            if w == n {
                return target;
            }
            let key = &model.node(n).fields[i].key;
            match model.node(w).fields.iter().position(|f| f.key == *key) {
                Some(j) => Symbol::Field(w, j),
                None => target,
            }
        }
    }
}

/// The help for a value in the wrong unit: the usual spellings of each
/// kind the field accepts.
fn unit_help(kinds: &[QuantityKind]) -> String {
    let spellings: Vec<String> = kinds
        .iter()
        .map(|kind| {
            let units = match kind.si_symbol().as_str() {
                "A" => "A, mA or uA",
                "V" => "V or mV",
                "F" => "uF, nF or pF",
                "s" => "s, ms, us, h or yr",
                "m" => "um, mm or mil",
                "°C" => "°C (or K)",
                "K" => "K",
                "K/W" => "K/W",
                "A/m^2" => "mA/um^2 or A/cm^2",
                "A/m" => "mA/um",
                "J" => "eV",
                "Ω" => "ohm or kohm",
                "W" => "W or mW",
                "Ω·m" => "uohm*cm or ohm*m",
                "rad" => "deg",
                "1" => "a plain number, % or ppm",
                _ => "",
            };
            if units.is_empty() {
                format!("as {}", kind.describe())
            } else {
                format!("in {units}")
            }
        })
        .collect();
    format!("write the value {}", spellings.join("; or "))
}

impl<'a> Evaluator<'a> {
    fn file_of(&self, node: NodeId) -> FileId {
        self.model.node(node).file
    }

    fn text(&self, file: FileId, span: &Span) -> String {
        self.ws
            .file(file)
            .text
            .get(span.clone())
            .unwrap_or("")
            .to_string()
    }

    fn push(&mut self, d: Diagnostic) {
        self.diagnostics.push(d);
    }

    /// Evaluates field `index` of `node` once; later calls return the stored result.
    fn field(&mut self, node: NodeId, index: usize) -> Option<FieldValue> {
        match self.states[node.0 as usize][index] {
            State::Done => return self.model.node(node).fields[index].value.clone(),
            State::Failed => return None,
            State::InProgress => {
                self.report_cycle(node, index);
                return None;
            }
            State::Pending => {}
        }
        self.states[node.0 as usize][index] = State::InProgress;
        self.stack.push((node, index));
        // The expression is shared with the syntax tree: a handle, not a copy.
        let (expr, ty, key) = {
            let f = &self.model.nodes[node.0 as usize].fields[index];
            (std::sync::Arc::clone(&f.expr), f.spec.ty, f.key.clone())
        };
        let result = self.typed(node, &expr, ty, &key);
        let result = match result {
            Some(FieldValue::Quantity(v)) => {
                self.with_tempco(node, &key, v).map(FieldValue::Quantity)
            }
            other => other,
        };
        self.stack.pop();
        if self.states[node.0 as usize][index] == State::Failed {
            return None;
        }
        match result {
            Some(v) => {
                self.model.nodes[node.0 as usize].fields[index].value = Some(v.clone());
                self.states[node.0 as usize][index] = State::Done;
                Some(v)
            }
            None => {
                self.states[node.0 as usize][index] = State::Failed;
                None
            }
        }
    }

    fn field_path(&self, node: NodeId, index: usize) -> String {
        let n = self.model.node(node);
        format!("{}.{}", n.path, n.fields[index].key)
    }

    fn report_cycle(&mut self, node: NodeId, index: usize) {
        let start = self
            .stack
            .iter()
            .position(|e| *e == (node, index))
            .unwrap_or(0);
        let chain: Vec<(NodeId, usize)> = self.stack[start..].to_vec();
        let mut names: Vec<String> = chain.iter().map(|(n, i)| self.field_path(*n, *i)).collect();
        names.push(self.field_path(node, index));
        let (n0, i0) = chain[0];
        let first = &self.model.node(n0).fields[i0];
        let mut d = Diagnostic::error(
            "cycle",
            self.file_of(n0),
            first.key_span.clone(),
            format!("`{}` depends on itself: {}", names[0], names.join(" → ")),
        )
        .primary("this field is part of the cycle");
        for (n, i) in chain.iter().skip(1) {
            let f = &self.model.node(*n).fields[*i];
            d = d.label(
                self.file_of(*n),
                f.key_span.clone(),
                "which depends on this",
            );
        }
        self.push(d.help("give one of these fields a value that does not refer back"));
        for (n, i) in chain {
            self.states[n.0 as usize][i] = State::Failed;
        }
    }

    /// Evaluates an expression as the field type expects.
    fn typed(&mut self, node: NodeId, expr: &Expr, ty: FieldType, key: &str) -> Option<FieldValue> {
        let file = self.file_of(node);
        match ty {
            FieldType::Quantity(kind) => {
                let mut v = self.quantity(node, expr, key)?;
                v.tighten();
                self.fit(file, expr, v, &[kind]).map(FieldValue::Quantity)
            }
            FieldType::Source => {
                // A bare name of a `supply` item: its voltage, and the link.
                if let ExprKind::Path(p) = &expr.kind
                    && let Some(Target::Node(n)) = self.resolve_quiet(node, p)
                    && self.model.node(n).kind == BlockKind::Supply
                {
                    let item = self.model.node(n);
                    let Some(i) = item.fields.iter().position(|f| f.key == "voltage") else {
                        let d = Diagnostic::error(
                            "invalid-value",
                            file,
                            expr.span.clone(),
                            format!("supply `{}` states no `voltage`", item.key()),
                        )
                        .primary("no voltage to take")
                        .help("give the supply item a `voltage` range");
                        self.push(d);
                        return None;
                    };
                    return match self.field(n, i)? {
                        FieldValue::Quantity(value) => {
                            Some(FieldValue::Sourced { value, source: n })
                        }
                        _ => None,
                    };
                }
                let mut v = self.quantity(node, expr, key)?;
                v.tighten();
                self.fit(file, expr, v, &[QuantityKind::VOLTAGE])
                    .map(FieldValue::Quantity)
            }
            FieldType::AnyOf(kinds) => {
                let mut v = self.quantity(node, expr, key)?;
                v.tighten();
                self.fit(file, expr, v, kinds).map(FieldValue::Quantity)
            }
            FieldType::Spread => {
                let mut v = self.quantity(node, expr, key)?;
                v.tighten();
                let v = self.fit(file, expr, v, &[QuantityKind::NONE])?;
                if v.is_exact() || v.lo > 0.0 || v.hi < 0.0 {
                    let written = self.text(file, &expr.span);
                    self.push(
                        Diagnostic::error(
                            "invalid-value",
                            file,
                            expr.span.clone(),
                            format!(
                                "`{key}` is a spread around zero, but `{written}` is a fixed value"
                            ),
                        )
                        .primary("not a spread")
                        .help(format!(
                            "write it as a tolerance: `{key} = ± {}`",
                            written.trim_start_matches(['+', '-', ' '])
                        )),
                    );
                    return None;
                }
                Some(FieldValue::Quantity(v))
            }
            FieldType::Bool => match expr.kind {
                ExprKind::Bool(b) => Some(FieldValue::Bool(b)),
                ExprKind::Error => None,
                _ => self.expected(file, expr, ty, "not a yes/no value"),
            },
            FieldType::Text => match &expr.kind {
                ExprKind::Str(s) => Some(FieldValue::Text(s.clone())),
                ExprKind::Error => None,
                _ => self.expected(file, expr, ty, "write text in double quotes"),
            },
            FieldType::Choice(options) => {
                let word = match &expr.kind {
                    ExprKind::Path(p) if p.len() == 1 => Some(p[0].text.clone()),
                    ExprKind::Error => return None,
                    _ => None,
                };
                match word {
                    Some(w) if options.contains(&w.as_str()) => Some(FieldValue::Choice(w)),
                    _ => {
                        let found = self.text(file, &expr.span);
                        let mut d = Diagnostic::error(
                            "invalid-value",
                            file,
                            expr.span.clone(),
                            format!(
                                "`{found}` is not one of {}",
                                ty.describe().trim_start_matches("one of ")
                            ),
                        )
                        .primary("unknown choice");
                        if let Some(s) = did_you_mean(&found, options.iter().copied()) {
                            d = d.help(format!("did you mean `{s}`?"));
                        }
                        self.push(d);
                        None
                    }
                }
            }
            FieldType::Ref(kinds) => {
                let path = self.path_of(file, expr)?;
                match self.resolve(node, &path, true)? {
                    Target::Node(target) if kinds.contains(&self.model.node(target).kind) => {
                        Some(FieldValue::Ref(target))
                    }
                    _ => self.expected(file, expr, ty, "this names something else"),
                }
            }
            FieldType::Node => {
                let path = self.path_of(file, expr)?;
                if path.len() >= 2 {
                    let (head, last) = path.split_at(path.len() - 1);
                    let terminal = &last[0].text;
                    if let Some(Target::Node(n)) = self.resolve_quiet(node, head) {
                        let kind = self.model.node(n).kind;
                        let terminals = match kind {
                            BlockKind::Pass => schema::PASS_TERMINALS,
                            BlockKind::Limit => schema::LIMIT_TERMINALS,
                            _ => &[],
                        };
                        if terminals.contains(&terminal.as_str()) {
                            return Some(FieldValue::Node {
                                node: n,
                                terminal: Some(terminal.clone()),
                            });
                        }
                        let mut d = Diagnostic::error(
                            "unknown-name",
                            file,
                            last[0].span.clone(),
                            format!(
                                "`{terminal}` is not a terminal of `{}`",
                                self.model.node(n).key()
                            ),
                        )
                        .primary("unknown terminal");
                        if !terminals.is_empty() {
                            d = d.help(format!("terminals: {}", terminals.join(", ")));
                        }
                        self.push(d);
                        return None;
                    }
                }
                match self.resolve(node, &path, true)? {
                    Target::Node(n) if self.model.node(n).kind == BlockKind::Pin => {
                        Some(FieldValue::Node {
                            node: n,
                            terminal: None,
                        })
                    }
                    _ => self.expected(file, expr, ty, "not a circuit node"),
                }
            }
        }
    }

    /// Reports that a value is not what the field type expects.
    fn expected(
        &mut self,
        file: FileId,
        expr: &Expr,
        ty: FieldType,
        label: &str,
    ) -> Option<FieldValue> {
        self.push(
            Diagnostic::error(
                "invalid-value",
                file,
                expr.span.clone(),
                format!("expected {}", ty.describe()),
            )
            .primary(label),
        );
        None
    }

    fn path_of(&mut self, file: FileId, expr: &Expr) -> Option<Vec<Ident>> {
        match &expr.kind {
            ExprKind::Path(p) => Some(p.clone()),
            ExprKind::Error => None,
            _ => {
                self.push(
                    Diagnostic::error("invalid-value", file, expr.span.clone(), "expected a name")
                        .primary("write the name of a block here"),
                );
                None
            }
        }
    }

    /// Checks a value against the kinds a field accepts; fixes up kelvin literals.
    fn fit(
        &mut self,
        file: FileId,
        expr: &Expr,
        mut v: Value,
        kinds: &[QuantityKind],
    ) -> Option<Value> {
        if let Some(k) = kinds.iter().find(|k| v.kind.fits(**k)) {
            if v.kind.is_temperature() && v.kind.temp == TempSense::Either {
                v.kind.temp = k.temp;
            }
            return Some(v);
        }
        let expected = kinds
            .iter()
            .map(|k| k.describe())
            .collect::<Vec<_>>()
            .join(" or ");
        let mut d = Diagnostic::error(
            "unit-mismatch",
            file,
            expr.span.clone(),
            format!("expected {expected}, found {}", v.kind.describe()),
        )
        .primary(format!("this is {}", v.kind.describe()));
        let coulomb = kinds[0].is_temperature() && v.kind.dim == guardband_units::Dimension::CHARGE;
        d = if kinds[0].is_temperature() && v.kind.is_temperature() {
            if kinds[0].temp == TempSense::Difference {
                d.help(
                    "a temperature rise or difference is written in K (a rise of 10 °C is `10 K`)",
                )
            } else {
                d.help("an absolute temperature is written in °C or K, not as a difference")
            }
        } else {
            d.help(unit_help(kinds))
        };
        self.push(d);
        if coulomb {
            self.coulomb_hint(expr);
        }
        None
    }

    /// A value with its temperature coefficient applied, when its block
    /// states `KEY_tempco`: `v · (1 + tc·(T − 25 °C))` over every die
    /// temperature the regulator admits, from its lowest ambient to its
    /// junction limit (or highest ambient), as a range of its own (a bound,
    /// not a spread). Unknown when the tempco or the temperatures cannot
    /// be read.
    fn with_tempco(&mut self, node: NodeId, key: &str, v: Value) -> Option<Value> {
        // Only a block whose schema has `KEY_tempco` fields looks (so a
        // block of a million spreads pays nothing per field).
        let kind = self.model.node(node).kind;
        if !schema::block_spec(kind)
            .fields
            .iter()
            .any(|f| f.keyword.strip_suffix("_tempco") == Some(key))
        {
            return Some(v);
        }
        let tc_key = format!("{key}_tempco");
        let Some(j) = self
            .model
            .node(node)
            .fields
            .iter()
            .position(|f| f.key == tc_key)
        else {
            return Some(v);
        };
        let Some(FieldValue::Quantity(tc)) = self.field(node, j) else {
            return None;
        };
        let file = self.file_of(node);
        let tc_span = self.model.node(node).fields[j].expr.span.clone();
        let reg = self.model.item_of(node).id;
        let temperature = |ev: &mut Self, k: &str| {
            let i = ev.model.node(reg).fields.iter().position(|f| f.key == k)?;
            match ev.field(reg, i)? {
                FieldValue::Quantity(t) => Some(t),
                _ => None,
            }
        };
        let Some(ambient) = temperature(self, "ambient") else {
            self.push(
                Diagnostic::error(
                    "invalid-value",
                    file,
                    tc_span,
                    format!("`{tc_key}` needs the regulator's `ambient` to know the temperatures it acts over"),
                )
                .primary("no temperatures to apply it over")
                .help("state `ambient` (and `junction_max`) in the regulator"),
            );
            return None;
        };
        let hottest =
            temperature(self, "junction_max").map_or(ambient.hi, |t| t.hi.max(ambient.hi));
        const REFERENCE_K: f64 = 298.15;
        let (d_lo, d_hi) = (ambient.lo - REFERENCE_K, hottest - REFERENCE_K);
        let products = [tc.lo * d_lo, tc.lo * d_hi, tc.hi * d_lo, tc.hi * d_hi];
        let lo = products.iter().copied().fold(f64::INFINITY, f64::min);
        let hi = products.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        let source = self.new_source(node, &tc_key, file, tc_span.clone(), Spread::Range);
        let range = Value::range(QuantityKind::NONE, lo, hi, source);
        match v.scaled_by(&range) {
            Ok(out) => Some(out),
            Err(e) => {
                self.push(
                    Diagnostic::error(
                        "unit-mismatch",
                        file,
                        tc_span,
                        format!("`{tc_key}` cannot apply to `{key}`: {e}"),
                    )
                    .primary("not applicable"),
                );
                None
            }
        }
    }

    fn new_source(
        &mut self,
        node: NodeId,
        key: &str,
        file: FileId,
        span: Span,
        spread: Spread,
    ) -> SourceId {
        let id = SourceId(self.model.sources.len() as u32);
        self.model.sources.push(ToleranceSource {
            node,
            key: key.into(),
            file,
            span,
            spread,
            local: false,
            copy_of: None,
        });
        id
    }

    /// A referenced value with each `local(...)` part replaced by a fresh
    /// copy owned by the referencing field, so that every use of a spread
    /// gets its own independent local part.
    fn with_own_local_parts(
        &mut self,
        node: NodeId,
        key: &str,
        file: FileId,
        span: &Span,
        v: Value,
    ) -> Value {
        let mut locals: Vec<SourceId> = v
            .terms
            .iter()
            .map(|t| t.source)
            .chain(
                v.form
                    .as_ref()
                    .and_then(|f| f.sources())
                    .into_iter()
                    .flat_map(|(s, _)| s),
            )
            .filter(|s| self.model.source(*s).local)
            .collect();
        if locals.is_empty() {
            return v;
        }
        locals.sort();
        locals.dedup();
        let copies: Vec<(SourceId, SourceId)> = locals
            .into_iter()
            .map(|original| {
                let spread = self.model.source(original).spread;
                let copy = self.new_source(node, key, file, span.clone(), spread);
                self.model.sources[copy.0 as usize].copy_of = Some(original);
                (original, copy)
            })
            .collect();
        v.renamed(&|s| copies.iter().find(|(o, _)| *o == s).map(|(_, c)| *c))
    }

    fn value_error(
        &mut self,
        file: FileId,
        span: Span,
        err: ValueError,
        parts: &[(&Expr, &Value)],
    ) {
        let rule = match err {
            ValueError::DivisorIncludesZero | ValueError::BadSqrt(_) | ValueError::NotFinite => {
                "invalid-value"
            }
            _ => "unit-mismatch",
        };
        let mut d = Diagnostic::error(rule, file, span, err.to_string());
        match err {
            ValueError::DivisorIncludesZero => {
                if let Some((e, v)) = parts.get(1) {
                    d = d.label(
                        file,
                        e.span.clone(),
                        format!("this ranges over {} .. {} and includes zero", v.lo, v.hi),
                    );
                }
                d = d.help("state the divisor so that its whole range is on one side of zero");
            }
            _ => {
                for (e, v) in parts {
                    d = d.label(
                        file,
                        e.span.clone(),
                        format!("this is {}", v.kind.describe()),
                    );
                }
            }
        }
        self.push(d);
    }

    /// Evaluates an expression to a quantity; `key` labels stated tolerances.
    fn quantity(&mut self, node: NodeId, expr: &Expr, key: &str) -> Option<Value> {
        let file = self.file_of(node);
        if !self.take_step(file, expr) {
            return None;
        }
        match &expr.kind {
            ExprKind::Error => None,
            ExprKind::Number { value, unit } => self.number(file, expr, *value, unit.as_ref()),
            ExprKind::Bool(_) | ExprKind::Str(_) => {
                self.push(
                    Diagnostic::error(
                        "unit-mismatch",
                        file,
                        expr.span.clone(),
                        "expected a quantity such as `150 mA`",
                    )
                    .primary("not a number"),
                );
                None
            }
            ExprKind::Paren(inner) => self.quantity(node, inner, key),
            ExprKind::Neg(inner) => {
                let v = self.quantity(node, inner, key)?;
                v.neg()
                    .map_err(|e| self.value_error(file, expr.span.clone(), e, &[(inner, &v)]))
                    .ok()
            }
            ExprKind::Binary(op, a, b) => self.binary(node, expr, *op, (a, b), key),
            ExprKind::Range(a, b) => self.range(node, expr, (a, b), key),
            ExprKind::Tolerance {
                base,
                plus,
                minus,
                symmetric,
                sigma,
            } => self.tolerance(
                node,
                expr,
                base.as_deref(),
                (plus, minus, *symmetric),
                sigma.as_deref(),
                key,
            ),
            ExprKind::Call(name, args) => self.call(node, expr, name, args, key),
            ExprKind::Path(path) => self.path_quantity(node, expr, path, key),
        }
    }

    /// Counts one evaluation step; false (after one error saying so) once
    /// the budget of `max_eval_steps` is spent.
    fn take_step(&mut self, file: FileId, expr: &Expr) -> bool {
        self.steps += 1;
        if self.steps <= self.max_steps {
            return true;
        }
        if self.steps == self.max_steps + 1 {
            self.push(
                Diagnostic::error(
                    "limit",
                    file,
                    expr.span.clone(),
                    format!(
                        "evaluation stopped after {} steps; the rest of the workspace is not evaluated",
                        self.max_steps
                    ),
                )
                .primary("the limit was reached here")
                .help("raise `max_eval_steps` under `[limits]` in guardband.toml, or split the workspace"),
            );
        }
        false
    }

    /// `a + b`, `a - b`, `a * b`, `a / b`, with the `+-` hint on a mismatch.
    fn binary(
        &mut self,
        node: NodeId,
        expr: &Expr,
        op: BinaryOp,
        (a, b): (&Expr, &Expr),
        key: &str,
    ) -> Option<Value> {
        let file = self.file_of(node);
        let va = self.quantity(node, a, key)?;
        let vb = self.quantity(node, b, key)?;
        let r = match op {
            BinaryOp::Add => va.add(&vb),
            BinaryOp::Sub => va.sub(&vb),
            BinaryOp::Mul => va.mul(&vb),
            BinaryOp::Div => va.div(&vb),
        };
        match r {
            Ok(v) => Some(v),
            Err(e) => {
                let mismatch = matches!(e, ValueError::Mismatch { .. });
                self.value_error(file, expr.span.clone(), e, &[(a, &va), (b, &vb)]);
                if mismatch && op == BinaryOp::Add {
                    self.plus_minus_hint(file, a, b);
                }
                None
            }
        }
    }

    /// `lo .. hi`: one source of spread, ends of one kind, low end first.
    fn range(
        &mut self,
        node: NodeId,
        expr: &Expr,
        (a, b): (&Expr, &Expr),
        key: &str,
    ) -> Option<Value> {
        let file = self.file_of(node);
        let lo = self.quantity(node, a, key)?;
        let hi = self.quantity(node, b, key)?;
        if !lo.kind.fits(hi.kind) {
            let err = ValueError::Mismatch {
                left: lo.kind,
                right: hi.kind,
            };
            self.value_error(file, expr.span.clone(), err, &[(a, &lo), (b, &hi)]);
            self.unit_on_one_end(file, a, b);
            let charge = guardband_units::Dimension::CHARGE;
            if lo.kind.dim == charge && hi.kind.is_temperature() {
                self.coulomb_hint(a);
            } else if hi.kind.dim == charge && lo.kind.is_temperature() {
                self.coulomb_hint(b);
            }
            return None;
        }
        if lo.nom > hi.nom {
            self.push(
                Diagnostic::error(
                    "invalid-value",
                    file,
                    expr.span.clone(),
                    "this range runs backwards",
                )
                .primary("the low end is above the high end")
                .help("write the smaller value first: `low .. high`"),
            );
            return None;
        }
        let kind = if lo.kind.temp == TempSense::Either {
            hi.kind
        } else {
            lo.kind
        };
        let id = self.new_source(node, key, file, expr.span.clone(), Spread::Range);
        let mut v = Value::range(kind, lo.lo, hi.hi, id);
        v.unit = lo.unit.clone().or(hi.unit.clone());
        Some(v)
    }

    /// A name used as a quantity: a field's value (or one of its corners);
    /// a block or a non-quantity field is an error saying what it names.
    fn path_quantity(
        &mut self,
        node: NodeId,
        expr: &Expr,
        path: &[Ident],
        key: &str,
    ) -> Option<Value> {
        let file = self.file_of(node);
        match self.resolve(node, path, false)? {
            Target::Field(n, i, corner) => match self.field(n, i)? {
                FieldValue::Quantity(v) => Some(match corner {
                    Some(c) => v.corner(c),
                    None => self.with_own_local_parts(node, key, file, &expr.span, v),
                }),
                _ => {
                    self.push(
                        Diagnostic::error(
                            "unit-mismatch",
                            file,
                            expr.span.clone(),
                            format!("`{}` is not a quantity", self.text(file, &expr.span)),
                        )
                        .primary("this names a word, flag or reference"),
                    );
                    None
                }
            },
            Target::Node(n) => {
                let target = self.model.node(n);
                let fields: Vec<String> = target
                    .fields
                    .iter()
                    .take(3)
                    .map(|f| format!("`{}.{}`", target.key(), f.key))
                    .collect();
                let mut d = Diagnostic::error(
                    "invalid-value",
                    file,
                    expr.span.clone(),
                    format!(
                        "`{}` is a {} block, not a value",
                        target.key(),
                        target.keyword
                    ),
                )
                .primary("names a block");
                if !fields.is_empty() {
                    d = d.help(format!(
                        "name one of its fields, e.g. {}",
                        fields.join(", ")
                    ));
                }
                self.push(d);
                None
            }
        }
    }

    fn number(
        &mut self,
        file: FileId,
        expr: &Expr,
        value: f64,
        unit: Option<&Ident>,
    ) -> Option<Value> {
        if !value.is_finite() {
            self.push(
                Diagnostic::error(
                    "invalid-value",
                    file,
                    expr.span.clone(),
                    "this number is too large",
                )
                .primary("not a finite number"),
            );
            return None;
        }
        if value == 0.0 && self.written_nonzero(file, expr, unit) {
            self.push(
                Diagnostic::error(
                    "invalid-value",
                    file,
                    expr.span.clone(),
                    "this number is too small to represent; it would read as 0",
                )
                .primary("below about 1e-308")
                .help("write it with a larger unit prefix, or as 0 if zero is meant"),
            );
            return None;
        }
        let Some(unit) = unit else {
            return Some(Value::exact(QuantityKind::NONE, value));
        };
        let parsed = match self.units.get(&unit.text) {
            Some(known) => known.clone(),
            None => {
                let parsed = parse_unit(&unit.text);
                self.units.insert(unit.text.clone(), parsed.clone());
                parsed
            }
        };
        match parsed {
            Ok(u) => {
                let si = u.to_si(value);
                if si == 0.0 && value != 0.0 && u.offset == 0.0 {
                    self.push(
                        Diagnostic::error(
                            "invalid-value",
                            file,
                            expr.span.clone(),
                            "this value is too small to represent in SI units; it would read as 0",
                        )
                        .primary("below about 1e-308 in SI units"),
                    );
                    return None;
                }
                if !si.is_finite() {
                    self.push(
                        Diagnostic::error(
                            "invalid-value",
                            file,
                            expr.span.clone(),
                            "this value is too large",
                        )
                        .primary("not a finite number"),
                    );
                    return None;
                }
                if u.kind.temp == TempSense::Absolute && si < 0.0 {
                    self.push(
                        Diagnostic::error(
                            "invalid-value",
                            file,
                            expr.span.clone(),
                            "this temperature is below absolute zero",
                        )
                        .primary("below -273.15 °C"),
                    );
                    return None;
                }
                let mut v = Value::exact(u.kind, si);
                v.unit = Some(unit.text.clone());
                Some(v)
            }
            Err(err) => {
                let mut d =
                    Diagnostic::error("unknown-unit", file, unit.span.clone(), err.to_string())
                        .primary("not a unit");
                if let UnitError::Unknown { suggestions, .. } = &err {
                    d = d.help(match suggestions.as_slice() {
                        [] => "no known unit is close; the language reference lists every unit"
                            .to_string(),
                        [one] => format!("did you mean `{one}`?"),
                        [first @ .., last] => format!(
                            "did you mean {} or `{last}`?",
                            first
                                .iter()
                                .map(|s| format!("`{s}`"))
                                .collect::<Vec<_>>()
                                .join(", ")
                        ),
                    });
                }
                self.push(d);
                None
            }
        }
    }

    /// Whether a literal that parsed as 0 was written with a non-zero
    /// mantissa (`1e-400`): the number underflowed.
    fn written_nonzero(&self, file: FileId, expr: &Expr, unit: Option<&Ident>) -> bool {
        let end = unit.map(|u| u.span.start).unwrap_or(expr.span.end);
        let text = self
            .ws
            .file(file)
            .text
            .get(expr.span.start..end)
            .unwrap_or("");
        let mantissa = text.split(['e', 'E']).next().unwrap_or("");
        mantissa.bytes().any(|b| (b'1'..=b'9').contains(&b))
    }

    fn call(
        &mut self,
        node: NodeId,
        expr: &Expr,
        name: &Ident,
        args: &[Expr],
        key: &str,
    ) -> Option<Value> {
        let file = self.file_of(node);
        let arity = match name.text.as_str() {
            "min" | "max" => 2..=16,
            "abs" | "sqrt" | "local" => 1..=1,
            _ => {
                let mut d = Diagnostic::error(
                    "unknown-name",
                    file,
                    name.span.clone(),
                    format!("unknown function `{}`", name.text),
                )
                .primary("not a function")
                .help("functions: min, max, abs, sqrt, local");
                if let Some(s) = did_you_mean(&name.text, ["min", "max", "abs", "sqrt", "local"]) {
                    d = d.help(format!("did you mean `{s}`?"));
                }
                self.push(d);
                return None;
            }
        };
        if !arity.contains(&args.len()) {
            self.push(
                Diagnostic::error(
                    "invalid-value",
                    file,
                    expr.span.clone(),
                    format!(
                        "`{}` takes {} argument(s), found {}",
                        name.text,
                        if arity.start() == arity.end() {
                            "1".to_string()
                        } else {
                            "2 or more".to_string()
                        },
                        args.len()
                    ),
                )
                .primary("wrong number of arguments"),
            );
            return None;
        }
        let mut values = Vec::new();
        for a in args {
            values.push(self.quantity(node, a, key)?);
        }
        let mut acc = values[0].clone();
        let result = match name.text.as_str() {
            "local" => {
                // Each use of the field holding this part gets its own copy
                // (mismatch between matched devices): see `with_own_local_parts`.
                for t in &acc.terms {
                    self.model.sources[t.source.0 as usize].local = true;
                }
                if let Some((sources, _)) = acc.form.as_ref().and_then(|f| f.sources()) {
                    for s in sources {
                        self.model.sources[s.0 as usize].local = true;
                    }
                }
                Ok(acc)
            }
            "abs" => acc.abs(),
            "sqrt" => acc.sqrt(),
            f => {
                for v in &values[1..] {
                    let next = if f == "min" { acc.min(v) } else { acc.max(v) };
                    match next {
                        Ok(n) => acc = n,
                        Err(e) => {
                            let parts: Vec<(&Expr, &Value)> =
                                args.iter().zip(values.iter()).collect();
                            self.value_error(file, expr.span.clone(), e, &parts);
                            return None;
                        }
                    }
                }
                Ok(acc)
            }
        };
        result
            .map_err(|e| self.value_error(file, expr.span.clone(), e, &[(&args[0], &values[0])]))
            .ok()
    }

    /// Resolves without reporting.
    fn resolve_quiet(&mut self, from: NodeId, path: &[Ident]) -> Option<Target> {
        let mut trail = Vec::new();
        let found = self.lookup_scopes(from, path, true, &mut trail).ok()?;
        self.record(from, trail);
        Some(found)
    }

    /// Keeps the resolved segments of a path for navigation.
    fn record(&mut self, from: NodeId, trail: Vec<(Span, Symbol)>) {
        let file = self.file_of(from);
        let model = &mut *self.model;
        for (span, target) in trail {
            // A name read in a corner's copy points at what is written.
            let target = written_symbol(model, target);
            model.references.push(Reference { file, span, target });
        }
    }

    /// Resolves a dotted path from `from`, reporting an unknown name.
    fn resolve(&mut self, from: NodeId, path: &[Ident], want_block: bool) -> Option<Target> {
        let mut trail = Vec::new();
        match self.lookup_scopes(from, path, want_block, &mut trail) {
            Ok(t) => {
                self.record(from, trail);
                Some(t)
            }
            Err((bad, candidates)) => {
                let file = self.file_of(from);
                let seg = &path[bad];
                let what = if want_block { "block" } else { "name" };
                let mut d = Diagnostic::error(
                    "unknown-name",
                    file,
                    seg.span.clone(),
                    format!("unknown {what} `{}`", seg.text),
                )
                .primary("not found");
                if let Some(s) = did_you_mean(&seg.text, candidates.iter().map(|c| c.as_str())) {
                    d = d.help(format!("did you mean `{s}`?"));
                } else if bad == 0
                    && let Some(other) = self
                        .model
                        .items
                        .iter()
                        .map(|i| self.model.node(*i))
                        .find(|n| n.key() == seg.text)
                {
                    let other_file = &self.ws.file(other.file).display;
                    d = d.help(format!(
                        "`{}` is defined in {other_file}; import it with `use \"...\"`",
                        seg.text
                    ));
                }
                self.push(d);
                None
            }
        }
    }

    /// The first field of `node` named `name`, by index.
    fn field_named(&self, node: NodeId, name: &str) -> Option<usize> {
        match self.wide.get(&node) {
            Some(index) => index.fields.get(name).copied(),
            None => self
                .model
                .node(node)
                .fields
                .iter()
                .position(|f| f.key == name),
        }
    }

    /// The first child block of `node` named `name`.
    fn child_named(&self, node: NodeId, name: &str) -> Option<NodeId> {
        match self.wide.get(&node) {
            Some(index) => index.children.get(name).copied(),
            None => self
                .model
                .node(node)
                .children
                .iter()
                .copied()
                .find(|c| self.model.node(*c).key() == name),
        }
    }

    /// Looks a path up in each enclosing block, then among visible items.
    /// On failure returns the index of the segment that failed and the names
    /// that would have been valid there.
    fn lookup_scopes(
        &self,
        from: NodeId,
        path: &[Ident],
        want_block: bool,
        trail: &mut Vec<(Span, Symbol)>,
    ) -> Result<Target, (usize, Vec<compact_str::CompactString>)> {
        let (path, corner) = match path.split_last() {
            Some((last, rest)) if !rest.is_empty() => match last.text.as_str() {
                "min" => (rest, Some(Corner::Min)),
                "nom" => (rest, Some(Corner::Nom)),
                "max" => (rest, Some(Corner::Max)),
                _ => (path, None),
            },
            _ => (path, None),
        };
        let mut scope = Some(from);
        while let Some(s) = scope {
            let name = path[0].text.as_str();
            let field_hit = !want_block && self.field_named(s, name).is_some();
            if field_hit || self.child_named(s, name).is_some() {
                return self.descend(s, path, corner, 0, trail);
            }
            scope = self.model.node(s).parent;
        }
        let file = self.model.node(from).file;
        if let Some(&item) = self.visible_by_key[file.0 as usize].get(path[0].text.as_str()) {
            trail.push((path[0].span.clone(), Symbol::Node(item)));
            if path.len() == 1 {
                return Ok(Target::Node(item));
            }
            return self.descend(item, &path[1..], corner, 1, trail);
        }
        // Only a name that is not found pays for the list of suggestions.
        Err((0, self.scope_candidates(from, want_block)))
    }

    /// Every name visible from `from`, innermost scope first: the "did
    /// you mean" candidates of a name not found.
    fn scope_candidates(&self, from: NodeId, want_block: bool) -> Vec<compact_str::CompactString> {
        let mut candidates = Vec::new();
        let mut scope = Some(from);
        while let Some(s) = scope {
            let node = self.model.node(s);
            if !want_block {
                candidates.extend(node.fields.iter().map(|f| f.key.clone()));
            }
            candidates.extend(
                node.children
                    .iter()
                    .map(|c| self.model.node(*c).key().into()),
            );
            scope = node.parent;
        }
        let file = self.model.node(from).file;
        candidates.extend(
            self.visible[file.0 as usize]
                .iter()
                .map(|&item| self.model.node(item).key().into()),
        );
        candidates
    }

    /// Follows `path` downward from `node`; `offset` is the index of path[0] in the full path.
    fn descend(
        &self,
        node: NodeId,
        path: &[Ident],
        corner: Option<Corner>,
        offset: usize,
        trail: &mut Vec<(Span, Symbol)>,
    ) -> Result<Target, (usize, Vec<compact_str::CompactString>)> {
        let seg = &path[0];
        let field = self.field_named(node, seg.text.as_str());
        let child_first = path.len() > 1 || field.is_none();
        if let Some(i) = field.filter(|_| !child_first) {
            if path.len() > 1 {
                return Err((offset + 1, vec!["min".into(), "nom".into(), "max".into()]));
            }
            trail.push((seg.span.clone(), Symbol::Field(node, i)));
            return Ok(Target::Field(node, i, corner));
        }
        if let Some(c) = self.child_named(node, seg.text.as_str()) {
            trail.push((seg.span.clone(), Symbol::Node(c)));
            if path.len() == 1 {
                return if corner.is_some() {
                    Err((offset + 1, Vec::new()))
                } else {
                    Ok(Target::Node(c))
                };
            }
            return self.descend(c, &path[1..], corner, offset + 1, trail);
        }
        let n = self.model.node(node);
        let mut names: Vec<compact_str::CompactString> =
            n.fields.iter().map(|f| f.key.clone()).collect();
        names.extend(n.children.iter().map(|c| self.model.node(*c).key().into()));
        Err((offset, names))
    }
}

#[cfg(test)]
mod tests {
    //! The evaluator on its own: one file, built and evaluated, the value
    //! of one field read back. The figures are worked by hand beside each.

    use crate::{Diagnostic, Model, Value, Workspace};

    fn evaluate(text: &str) -> (Model, Vec<Diagnostic>) {
        let mut ws = Workspace::default();
        ws.push_file(
            "t.guard".into(),
            text.to_string(),
            guardband_syntax::parse(text),
        );
        crate::check(&ws)
    }

    fn value<'m>(model: &'m Model, block: &str, key: &str) -> &'m Value {
        model
            .nodes
            .iter()
            .find(|n| n.path == block)
            .and_then(|n| n.quantity(key))
            .unwrap_or_else(|| panic!("{block}.{key} has no value"))
    }

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * b.abs().max(1e-30)
    }

    #[test]
    fn a_product_of_toleranced_values_is_bounded_at_its_corners() {
        // 2000 × (100 uA ± 8 %): 184 mA .. 216 mA, nominal 200 mA.
        let (model, diags) = evaluate(
            "regulator r { limit l { ratio = 2000  reference = 100 uA ± 8 %  threshold = ratio * reference } }",
        );
        assert!(diags.is_empty(), "{diags:?}");
        let v = value(&model, "r.l", "threshold");
        assert!(
            close(v.lo, 0.184) && close(v.nom, 0.2) && close(v.hi, 0.216),
            "{v:?}"
        );
    }

    #[test]
    fn names_in_a_block_of_many_members_resolve_as_in_a_small_one() {
        // Thirty pins put the regulator above the size whose members are
        // indexed by name; a limit still finds the regulator's `load` in the
        // enclosing scope, and the limit's own `ratio` (2 × 5 mA = 10 mA).
        let pins: String = (0..30).map(|i| format!("pin p{i} {{ }}  ")).collect();
        let text = format!(
            "regulator r {{ load = 0 mA .. 5 mA  {pins} limit l {{ ratio = 2  threshold = ratio * load.max }} }}"
        );
        let (model, diags) = evaluate(&text);
        assert!(!diags.iter().any(|d| d.rule == "unknown-name"), "{diags:?}");
        let v = value(&model, "r.l", "threshold");
        assert!(close(v.lo, 0.010) && close(v.hi, 0.010), "{v:?}");
    }

    #[test]
    fn one_tolerance_used_twice_is_one_source_not_two() {
        // r - r is exactly zero whatever r's tolerance; adding the ends of
        // two independent ranges would give ± 20 mA instead.
        let (model, diags) = evaluate(
            "regulator r { limit l { reference = 100 mA ± 10 %  threshold = reference - reference } }",
        );
        assert!(diags.is_empty(), "{diags:?}");
        let v = value(&model, "r.l", "threshold");
        assert!(v.lo.abs() < 1e-15 && v.hi.abs() < 1e-15, "{v:?}");
    }

    #[test]
    fn a_quotient_takes_the_opposite_corners() {
        // (1 mA .. 2 mA) / (1 .. 4): lowest 1/4 = 0.25 mA, highest 2/1 = 2 mA.
        let (model, diags) = evaluate(
            "regulator r { limit l { reference = 1 mA .. 2 mA  ratio = 1 .. 4  threshold = reference / ratio } }",
        );
        assert!(diags.is_empty(), "{diags:?}");
        let v = value(&model, "r.l", "threshold");
        assert!(close(v.lo, 0.25e-3) && close(v.hi, 2e-3), "{v:?}");
    }

    #[test]
    fn a_name_that_is_not_defined_gives_an_error_and_no_value() {
        let (model, diags) = evaluate("regulator r { limit l { threshold = 2 * refernce }");
        assert!(diags.iter().any(|d| d.rule == "unknown-name"), "{diags:?}");
        let node = model.nodes.iter().find(|n| n.path == "r.l").expect("r.l");
        assert!(node.quantity("threshold").is_none(), "unknown, not a guess");
    }

    #[test]
    fn a_backwards_range_is_an_error_and_no_value() {
        let (model, diags) = evaluate("regulator r { limit l { clamp_drive = 150 uA .. 80 uA }");
        assert!(
            diags.iter().any(|d| d.message.contains("runs backwards")),
            "{diags:?}"
        );
        let node = model.nodes.iter().find(|n| n.path == "r.l").expect("r.l");
        assert!(node.quantity("clamp_drive").is_none());
    }

    #[test]
    fn the_step_budget_stops_evaluation_with_one_error() {
        let mut ws = Workspace::default();
        let text = "regulator r { limit l { ratio = 2  reference = 1 A  threshold = ratio * reference * ratio * reference } }";
        ws.push_file("t.guard".into(), text.into(), guardband_syntax::parse(text));
        let limits = crate::Limits {
            max_eval_steps: 3,
            ..Default::default()
        };
        let (_, diags) = crate::check_with(&ws, &limits);
        let stopped: Vec<_> = diags.iter().filter(|d| d.rule == "limit").collect();
        assert_eq!(stopped.len(), 1, "{diags:?}");
        assert!(stopped[0].message.contains("after 3 steps"));
    }
}
