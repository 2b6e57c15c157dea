//! The canonical layout of a `.guard` file, shared by `guardband fmt` and the
//! language server.
//!
//! One field per line, four spaces per nesting level, the relation operators
//! of a run of fields aligned, trailing comments of a run aligned, at most one
//! blank line kept between members and one between top-level items. Values
//! are kept as written (unit spellings included); only the whitespace inside
//! them is collapsed. A file with syntax errors is not formatted: guessing at
//! broken text could change what it means.

use crate::ast::{Block, Item, Member, Statement};
use crate::{Comment, Span, parse};

const INDENT: &str = "    ";

/// Formats `text`, or returns `None` when it does not parse cleanly.
/// Line ends come out as `\n`, whatever the input used (`\r\n`, `\r`).
pub fn format(text: &str) -> Option<String> {
    if text.contains('\r') {
        let unified = text.replace("\r\n", "\n").replace('\r', "\n");
        return format(&unified);
    }
    let parsed = parse(text);
    if !parsed.errors.is_empty() {
        return None;
    }
    let mut f = Formatter {
        text,
        comments: &parsed.file.comments,
        next_comment: 0,
        last_end: 0,
        out: String::new(),
    };
    f.items(&parsed.file.items);
    f.rest_comments(0);
    let mut out = f.out.trim_end().to_string();
    if !out.is_empty() {
        out.push('\n');
    }
    Some(out)
}

/// One line of a run of fields, before alignment. Comment lines inside a
/// run do not break its alignment; empty lines and blocks do.
enum RunLine {
    Field {
        key: String,
        rest: String,
        trailing: Option<String>,
    },
    Comment(String),
}

struct Formatter<'a> {
    text: &'a str,
    comments: &'a [Comment],
    /// Comments before this index have been written.
    next_comment: usize,
    /// Source offset of the end of what was written last.
    last_end: usize,
    out: String,
}

impl<'a> Formatter<'a> {
    fn items(&mut self, items: &[Item]) {
        for (i, item) in items.iter().enumerate() {
            let span = match item {
                Item::Use(u) => u.span.clone(),
                Item::Block(b) => b.span.clone(),
                Item::Error(s) => s.clone(),
            };
            if i > 0 && matches!(item, Item::Block(_)) {
                self.blank_line();
            }
            self.leading_comments(span.start, 0);
            if self.gap_blank(span.start) {
                self.blank_line();
            }
            match item {
                Item::Use(u) => {
                    let inside = self.comments[self.next_comment..]
                        .iter()
                        .take_while(|c| c.span.start < u.span.end)
                        .filter(|c| c.span.start >= u.span.start)
                        .count();
                    if inside > 0 {
                        self.out.push_str(&self.text[u.span.clone()]);
                        self.next_comment += inside;
                    } else {
                        self.out.push_str(&format!("use \"{}\"", u.path));
                    }
                    self.last_end = span.end;
                    self.trailing_comment();
                    self.out.push('\n');
                }
                Item::Block(b) => self.block(b, 0),
                Item::Error(s) => {
                    self.out.push_str(self.text[s.clone()].trim());
                    self.last_end = s.end;
                    self.out.push('\n');
                }
            }
        }
    }

    /// Whether the source has an empty line between what was written last and `start`.
    fn gap_blank(&self, start: usize) -> bool {
        self.has_empty_line(self.last_end, start)
    }

    /// Whether `text[a..b]` holds a line with nothing but whitespace.
    fn has_empty_line(&self, a: usize, b: usize) -> bool {
        let Some(gap) = self.text.get(a..b) else {
            return false;
        };
        let parts: Vec<&str> = gap.split('\n').collect();
        parts.len() > 2
            && parts[1..parts.len() - 1]
                .iter()
                .any(|p| p.trim().is_empty())
    }

    /// Ends the output with one empty line (not at the start or after a brace).
    fn blank_line(&mut self) {
        if !self.out.is_empty() && !self.out.ends_with("\n\n") && !self.out.ends_with("{\n") {
            self.out.push('\n');
        }
    }

    fn indent(&mut self, depth: usize) {
        for _ in 0..depth {
            self.out.push_str(INDENT);
        }
    }

    /// Writes the comments that start before `start` on lines of their own.
    fn leading_comments(&mut self, start: usize, depth: usize) {
        while let Some(c) = self.comments.get(self.next_comment) {
            if c.span.start >= start {
                break;
            }
            if self.gap_blank(c.span.start) {
                self.blank_line();
            }
            self.indent(depth);
            self.out.push_str(c.text.trim_end());
            self.out.push('\n');
            self.next_comment += 1;
            self.last_end = c.span.end;
        }
    }

    /// How many unwritten comments start before `start`.
    fn comments_before(&self, start: usize) -> usize {
        self.comments[self.next_comment..]
            .iter()
            .take_while(|c| c.span.start < start)
            .count()
    }

    /// The comment on the same source line right after `last_end`, if any; taken.
    fn take_trailing(&mut self) -> Option<String> {
        let c = self.comments.get(self.next_comment)?;
        let gap = self.text.get(self.last_end..c.span.start)?;
        if gap.contains('\n') || !gap.trim().is_empty() {
            return None;
        }
        self.next_comment += 1;
        self.last_end = c.span.end;
        Some(c.text.trim_end().to_string())
    }

    fn trailing_comment(&mut self) {
        if let Some(c) = self.take_trailing() {
            self.out.push_str("  ");
            self.out.push_str(&c);
        }
    }

    /// Writes the comments left at the end of the file.
    fn rest_comments(&mut self, depth: usize) {
        self.leading_comments(usize::MAX, depth);
    }

    fn block(&mut self, b: &Block, depth: usize) {
        self.indent(depth);
        let open = b.name.as_ref().unwrap_or(&b.keyword).span.end;
        let brace = self.text[open..]
            .find('{')
            .map(|i| open + i)
            .unwrap_or(open);
        // Comments between the keyword and `{` keep the header as written.
        let in_header = self.comments[self.next_comment..]
            .iter()
            .take_while(|c| c.span.start < brace)
            .filter(|c| c.span.start >= b.keyword.span.start)
            .count();
        let mut header_ends_in_comment = false;
        if in_header > 0 {
            let header = self.text[b.keyword.span.start..brace].trim_end();
            let last = &self.comments[self.next_comment + in_header - 1];
            header_ends_in_comment = last.span.end >= b.keyword.span.start + header.len();
            self.out.push_str(header);
            self.next_comment += in_header;
        } else {
            self.out.push_str(&b.keyword.text);
            if let Some(n) = &b.name {
                self.out.push(' ');
                self.out.push_str(&n.text);
            }
        }
        let body_end = b.span.end.saturating_sub(1);
        if header_ends_in_comment {
            self.out.push('\n');
            self.indent(depth);
        } else {
            self.out.push(' ');
        }
        if b.members.is_empty() && self.comments_before(body_end) == 0 {
            self.out.push_str("{}");
            self.last_end = b.span.end;
            self.trailing_comment();
            self.out.push('\n');
            return;
        }
        self.out.push('{');
        self.last_end = brace + 1;
        // A comment after a one-line block's `}` stays after its `}`.
        self.trailing_comment();
        self.out.push('\n');
        self.members(&b.members, depth + 1);
        self.leading_comments(body_end, depth + 1);
        self.indent(depth);
        self.out.push('}');
        self.last_end = b.span.end;
        self.trailing_comment();
        self.out.push('\n');
    }

    fn members(&mut self, members: &[Member], depth: usize) {
        let mut run: Vec<RunLine> = Vec::new();
        for (i, member) in members.iter().enumerate() {
            let span = match member {
                Member::Field(f) => f.span.clone(),
                Member::Block(b) => b.span.clone(),
                Member::Error(s) => s.clone(),
            };
            let is_field = matches!(member, Member::Field(_));
            let joins_run =
                is_field && !run.is_empty() && !self.has_empty_line(self.last_end, span.start);
            if joins_run {
                while let Some(c) = self.comments.get(self.next_comment) {
                    if c.span.start >= span.start {
                        break;
                    }
                    run.push(RunLine::Comment(c.text.trim_end().to_string()));
                    self.next_comment += 1;
                    self.last_end = c.span.end;
                }
            } else {
                self.flush(&mut run, depth);
            }
            if i > 0 && !is_field {
                self.blank_line();
            }
            self.leading_comments(span.start, depth);
            if self.gap_blank(span.start) {
                self.blank_line();
            }
            match member {
                Member::Field(f) => {
                    let line = self.field_line(f);
                    run.push(line);
                }
                Member::Block(b) => self.block(b, depth),
                Member::Error(s) => {
                    self.indent(depth);
                    self.out.push_str(self.text[s.clone()].trim());
                    self.last_end = s.end;
                    self.out.push('\n');
                }
            }
        }
        self.flush(&mut run, depth);
    }

    fn field_line(&mut self, f: &Statement) -> RunLine {
        let mut key = f.keyword.text.to_string();
        if let Some(n) = &f.name {
            key.push(' ');
            key.push_str(&n.text);
        }
        // A comment anywhere in the field (after the keyword, between the key
        // and `=`, inside the value) keeps the rest of the field as written,
        // so that every comment stays where it was, in order.
        let inner = self.comments[self.next_comment..]
            .iter()
            .take_while(|c| c.span.start < f.span.end)
            .filter(|c| c.span.start >= f.span.start)
            .count();
        let rest = if inner > 0 {
            key = f.keyword.text.to_string();
            self.text[f.keyword.span.end..f.span.end]
                .trim_start()
                .to_string()
        } else {
            format!("{} {}", f.relation.symbol(), self.value_text(&f.value.span))
        };
        self.next_comment += inner;
        self.last_end = f.span.end;
        let trailing = self.take_trailing();
        RunLine::Field {
            key,
            rest,
            trailing,
        }
    }

    /// The value as written with whitespace runs collapsed (not inside strings).
    fn value_text(&self, span: &Span) -> String {
        let raw = &self.text[span.clone()];
        let mut out = String::with_capacity(raw.len());
        let mut in_string = false;
        let mut space = false;
        for ch in raw.chars() {
            if ch == '"' {
                in_string = !in_string;
            }
            if !in_string && ch.is_whitespace() {
                space = true;
                continue;
            }
            if space {
                out.push(' ');
                space = false;
            }
            out.push(ch);
        }
        out
    }

    /// Writes a run of fields with their operators and trailing comments aligned.
    fn flush(&mut self, run: &mut Vec<RunLine>, depth: usize) {
        let fields = || {
            run.iter().filter_map(|l| match l {
                RunLine::Field {
                    key,
                    rest,
                    trailing,
                } => Some((key, rest, trailing)),
                RunLine::Comment(_) => None,
            })
        };
        let key_width = fields()
            .map(|(k, _, _)| k.chars().count())
            .max()
            .unwrap_or(0);
        let line_width = fields()
            .filter(|(_, _, t)| t.is_some())
            .map(|(_, r, _)| key_width + 1 + r.chars().count())
            .max()
            .unwrap_or(0);
        for line in run.drain(..) {
            self.indent(depth);
            match line {
                RunLine::Comment(c) => self.out.push_str(&c),
                RunLine::Field {
                    key,
                    rest,
                    trailing,
                } => {
                    let mut text = key.clone();
                    text.extend(std::iter::repeat_n(' ', key_width - key.chars().count()));
                    text.push(' ');
                    text.push_str(&rest);
                    if let Some(c) = &trailing {
                        let width = text.chars().count();
                        text.extend(std::iter::repeat_n(' ', line_width - width + 2));
                        text.push_str(c);
                    }
                    self.out.push_str(&text);
                }
            }
            self.out.push('\n');
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ast::{Expr, ExprKind, ParsedFile};

    /// The tree without spans, and the comment texts: what formatting must keep.
    fn shape(file: &ParsedFile) -> String {
        fn expr(e: &Expr) -> String {
            match &e.kind {
                ExprKind::Number { value, unit } => {
                    format!(
                        "{value}{}",
                        unit.as_ref().map(|u| u.text.as_str()).unwrap_or("")
                    )
                }
                ExprKind::Bool(b) => b.to_string(),
                ExprKind::Path(p) => p
                    .iter()
                    .map(|i| i.text.as_str())
                    .collect::<Vec<_>>()
                    .join("."),
                ExprKind::Neg(x) => format!("-({})", expr(x)),
                ExprKind::Binary(op, a, b) => format!("({} {op:?} {})", expr(a), expr(b)),
                ExprKind::Range(a, b) => format!("({} .. {})", expr(a), expr(b)),
                ExprKind::Tolerance {
                    base,
                    plus,
                    minus,
                    symmetric,
                    sigma,
                } => format!(
                    "({} tol {} {} {symmetric} at {})",
                    base.as_ref().map(|b| expr(b)).unwrap_or_default(),
                    expr(plus),
                    expr(minus),
                    sigma.as_ref().map(|k| expr(k)).unwrap_or_default()
                ),
                ExprKind::Call(n, args) => format!(
                    "{}({})",
                    n.text,
                    args.iter().map(expr).collect::<Vec<_>>().join(", ")
                ),
                ExprKind::Paren(x) => format!("[{}]", expr(x)),
                ExprKind::Str(s) => format!("{s:?}"),
                ExprKind::Error => "error".into(),
            }
        }
        fn members(ms: &[Member], out: &mut String) {
            for m in ms {
                match m {
                    Member::Field(f) => out.push_str(&format!(
                        "{} {:?} {} {};",
                        f.keyword.text,
                        f.name.as_ref().map(|n| &n.text),
                        f.relation.symbol(),
                        expr(&f.value)
                    )),
                    Member::Block(b) => block(b, out),
                    Member::Error(_) => out.push_str("error;"),
                }
            }
        }
        fn block(b: &Block, out: &mut String) {
            out.push_str(&format!(
                "{} {:?} {{",
                b.keyword.text,
                b.name.as_ref().map(|n| &n.text)
            ));
            members(&b.members, out);
            out.push('}');
        }
        let mut out = String::new();
        for item in &file.items {
            match item {
                Item::Use(u) => out.push_str(&format!("use {};", u.path)),
                Item::Block(b) => block(b, &mut out),
                Item::Error(_) => out.push_str("error;"),
            }
        }
        for c in &file.comments {
            out.push_str(&c.text);
        }
        out
    }

    fn check_keeps_meaning(src: &str) -> String {
        let once = format(src).expect("formats");
        let twice = format(&once).expect("formats again");
        assert_eq!(once, twice, "formatting is idempotent");
        assert_eq!(shape(&parse(src).file), shape(&parse(&once).file));
        once
    }

    #[test]
    fn aligns_a_run_and_splits_one_line_blocks() {
        let src = "regulator r {\n  supply = 1 V\n    output=2 V ± 2 %   // out\n  conductor c { carries = r  width = 2 um }\n}\n";
        let out = check_keeps_meaning(src);
        assert_eq!(
            out,
            "regulator r {\n    supply = 1 V\n    output = 2 V ± 2 %  // out\n\n    conductor c {\n        carries = r\n        width   = 2 um\n    }\n}\n"
        );
    }

    #[test]
    fn keeps_comments_blank_lines_and_named_fields() {
        let src = "// head\n\nuse \"a.guard\"\nregulator r { // opens\n\n  // lead\n  expect current <= 3 mA\n\n\n  force vout = 1 V\n  // tail\n}\n// end\n";
        let out = check_keeps_meaning(src);
        assert_eq!(
            out,
            "// head\n\nuse \"a.guard\"\n\nregulator r {  // opens\n\n    // lead\n    expect current <= 3 mA\n\n    force vout = 1 V\n    // tail\n}\n// end\n"
        );
    }

    #[test]
    fn a_one_line_block_keeps_its_note_on_the_opening_line() {
        let out = check_keeps_meaning(
            "regulator r {\n  startup { load = 2 mA }  // note\n  pin p {}\n}\n",
        );
        assert_eq!(
            out,
            "regulator r {\n    startup {\n        load = 2 mA\n    }  // note\n\n    pin p {}\n}\n"
        );
    }

    #[test]
    fn comment_lines_keep_a_run_aligned_and_empty_lines_break_it() {
        let src = "regulator r {\n  a = 1\n  // about bb\n  bbbb = 2\n\n  cc = 3\n}\n";
        let out = check_keeps_meaning(src);
        assert_eq!(
            out,
            "regulator r {\n    a    = 1\n    // about bb\n    bbbb = 2\n\n    cc = 3\n}\n"
        );
    }

    #[test]
    fn a_comment_inside_a_value_keeps_the_value_verbatim() {
        let src = "regulator r {\n  supply = 1 V +  // first\n     2 V\n}\n";
        let out = check_keeps_meaning(src);
        assert!(out.contains("1 V +  // first\n     2 V"), "{out}");
    }

    #[test]
    fn strings_keep_their_spaces_and_errors_refuse() {
        let out = check_keeps_meaning("regulator r { description = \"a   b\" }");
        assert!(out.contains("\"a   b\""));
        assert_eq!(format("regulator r { supply = }"), None);
        assert_eq!(format("").as_deref(), Some(""));
    }

    mod properties {
        use super::{check_keeps_meaning, format};
        use proptest::prelude::*;

        fn name() -> impl Strategy<Value = String> {
            "[a-z][a-z0-9_]{0,6}".prop_filter("not a keyword", |s| {
                !["use", "true", "false"].contains(&s.as_str())
            })
        }

        fn value() -> impl Strategy<Value = String> {
            prop_oneof![
                (
                    0u32..500,
                    prop::sample::select(vec!["mA", "uA", "V", "%", "°C", "um", ""])
                )
                    .prop_map(|(n, u)| format!("{n} {u}")),
                (0u32..50, 50u32..100).prop_map(|(a, b)| format!("{a} mA  ..   {b} mA")),
                (1u32..9, 1u32..20).prop_map(|(a, b)| format!("{a}.5 V ± {b} %")),
                name().prop_map(|n| format!("{n}.max * 2")),
                Just("\"a  b\"".to_string()),
                Just("true".to_string()),
            ]
        }

        fn gap() -> impl Strategy<Value = &'static str> {
            prop::sample::select(vec![
                " ",
                "\n",
                "\n\n",
                "  // note\n",
                "\n  // lead µ\n",
                "\n\n\n",
            ])
        }

        fn member(depth: u32) -> BoxedStrategy<String> {
            let field = (
                name(),
                proptest::option::of(name()),
                prop::sample::select(vec!["=", "<=", ">="]),
                value(),
            )
                .prop_map(|(k, n, op, v)| match n {
                    Some(n) => format!("{k} {n} {op} {v}"),
                    None => format!("{k} {op} {v}"),
                });
            if depth == 0 {
                return field.boxed();
            }
            prop_oneof![
                3 => field,
                1 => (name(), name(), proptest::collection::vec((member(depth - 1), gap()), 0..4))
                    .prop_map(|(kw, n, ms)| {
                        let body: String = ms.into_iter().map(|(m, g)| format!("{m}{g}")).collect();
                        format!("{kw} {n} {{ {body} }}")
                    }),
            ]
            .boxed()
        }

        fn spec() -> impl Strategy<Value = String> {
            proptest::collection::vec(
                (
                    name(),
                    proptest::collection::vec((member(2), gap()), 0..6),
                    gap(),
                ),
                0..4,
            )
            .prop_map(|items| {
                items
                    .into_iter()
                    .map(|(n, ms, g)| {
                        let body: String =
                            ms.into_iter().map(|(m, g)| format!("  {m}{g}")).collect();
                        format!("regulator {n} {{\n{body}}}{g}")
                    })
                    .collect()
            })
        }

        /// Tokens and comments in source order, as text: what formatting must
        /// keep, in this order, whatever it does with the space between them.
        fn sequence(src: &str) -> Vec<String> {
            let (tokens, comments) = crate::lex(src);
            let mut seq: Vec<(usize, String)> = tokens
                .iter()
                // A number and its unit are one token; the space between is collapsed.
                .map(|(_, s)| {
                    (
                        s.start,
                        src[s.clone()]
                            .split_whitespace()
                            .collect::<Vec<_>>()
                            .join(" "),
                    )
                })
                .collect();
            seq.extend(
                comments
                    .iter()
                    .map(|c| (c.span.start, c.text.trim_end().to_string())),
            );
            seq.sort_by_key(|(at, _)| *at);
            seq.into_iter().map(|(_, t)| t).collect()
        }

        /// `src` with a comment after each token whose index is in `after`.
        fn with_comments(src: &str, after: &[usize]) -> String {
            let (tokens, _) = crate::lex(src);
            let mut out = String::new();
            let mut last = 0;
            for (i, (_, span)) in tokens.iter().enumerate() {
                out.push_str(&src[last..span.end]);
                last = span.end;
                if after.contains(&i) {
                    out.push_str(&format!(" // c{i}\n"));
                }
            }
            out.push_str(&src[last..]);
            out
        }

        proptest! {
            #![proptest_config(ProptestConfig::with_cases(256))]

            #[test]
            fn every_comment_survives_in_order(
                src in spec(),
                after in proptest::collection::vec(0usize..200, 1..8),
            ) {
                let commented = with_comments(&src, &after);
                let Some(formatted) = format(&commented) else {
                    // A comment that splits what must touch (an asymmetric
                    // tolerance's sign and number) makes a file that does not
                    // parse; the formatter then leaves it alone.
                    return Ok(());
                };
                prop_assert_eq!(sequence(&commented), sequence(&formatted), "{}\n---\n{}", commented, formatted);
                let again = format(&formatted);
                prop_assert_eq!(again.as_deref(), Some(formatted.as_str()), "idempotent");
            }

            #[test]
            fn formatting_is_idempotent_and_keeps_the_tree(src in spec()) {
                // Specs that do not parse (a unitless number directly before a
                // block word reads as a unit) are rejected; proptest fails the
                // test if it has to reject too many, so most cases are checked.
                prop_assume!(format(&src).is_some());
                check_keeps_meaning(&src);
            }
        }
    }
}
