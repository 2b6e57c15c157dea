//! End to end: the real `guardband lsp` binary over stdio, one test per
//! feature, plus rapid edits, both position encodings and malformed input.

mod common;
mod lsp_client;

use common::{check_json, copy_dir, guardband, root, temp_dir};
use lsp_client::{Client, frame, uri};
use serde_json::{Value, json};
use std::path::{Path, PathBuf};
use std::time::Duration;

/// Copies `examples/` into a fresh folder the test may change.
fn examples_copy(name: &str) -> PathBuf {
    let dir = temp_dir(name);
    copy_dir(&root().join("examples"), &dir);
    dir.canonicalize().expect("canonical")
}

/// Line and UTF-16 column of the `nth` occurrence of `needle`, plus `shift` columns.
fn pos16(text: &str, needle: &str, nth: usize, shift: u32) -> Value {
    let offset = text
        .match_indices(needle)
        .nth(nth)
        .unwrap_or_else(|| panic!("`{needle}` not found"))
        .0;
    let line_start = text[..offset].rfind('\n').map(|i| i + 1).unwrap_or(0);
    let line = text[..offset].matches('\n').count();
    let col: usize = text[line_start..offset].chars().map(char::len_utf16).sum();
    json!({ "line": line, "character": col as u32 + shift })
}

/// Line and UTF-8 column of the `nth` occurrence of `needle`.
fn pos8(text: &str, needle: &str, nth: usize) -> Value {
    let offset = text.match_indices(needle).nth(nth).expect("found").0;
    let line_start = text[..offset].rfind('\n').map(|i| i + 1).unwrap_or(0);
    let line = text[..offset].matches('\n').count();
    json!({ "line": line, "character": offset - line_start })
}

fn doc(uri: &str) -> Value {
    json!({ "uri": uri })
}

/// Copies the examples, starts a server with `caps` and opens `file` at version 1.
fn open_example(name: &str, file: &str, caps: Value) -> (PathBuf, PathBuf, String, String, Client) {
    let dir = examples_copy(name);
    let path = dir.join(file);
    let text = std::fs::read_to_string(&path).expect("read");
    let u = uri(&path);
    let mut client = start(&dir, caps);
    client.open(&u, &text, 1);
    (dir, path, text, u, client)
}

fn start(dir: &Path, caps: Value) -> Client {
    let mut client = Client::start(dir);
    client.initialize(dir, caps, json!({ "debounceMs": 20 }));
    client
}

/// What `guardband check --format json` reports for one file, as
/// (rule, severity, start line, start column, end line, end column, message), 0-based.
fn check_tuples(dir: &Path, file: &Path) -> Vec<(String, String, u64, u64, u64, u64, String)> {
    let (_, report) = check_json(dir, &[file.to_str().expect("utf-8 path")]);
    let display = file
        .strip_prefix(dir)
        .expect("inside")
        .to_string_lossy()
        .replace('\\', "/");
    let mut out: Vec<_> = report["diagnostics"]
        .as_array()
        .expect("array")
        .iter()
        .filter(|d| d["file"] == display.as_str())
        .map(|d| {
            let r = &d["range"];
            (
                d["rule"].as_str().unwrap_or("").to_string(),
                d["severity"].as_str().unwrap_or("").to_string(),
                r["start"]["line"].as_u64().unwrap_or(0) - 1,
                r["start"]["column"].as_u64().unwrap_or(0) - 1,
                r["end"]["line"].as_u64().unwrap_or(0) - 1,
                r["end"]["column"].as_u64().unwrap_or(0) - 1,
                d["message"].as_str().unwrap_or("").to_string(),
            )
        })
        .collect();
    out.sort();
    out
}

/// The same tuples from LSP diagnostics (columns are UTF-16; the texts compared have no astral characters).
fn lsp_tuples(diags: &[Value]) -> Vec<(String, String, u64, u64, u64, u64, String)> {
    let mut out: Vec<_> = diags
        .iter()
        .map(|d| {
            let r = &d["range"];
            let severity = match d["severity"].as_u64() {
                Some(1) => "error",
                Some(2) => "warning",
                Some(3) => "info",
                _ => "hint",
            };
            let message = d["message"].as_str().unwrap_or("");
            let message = message.split("\nhelp: ").next().unwrap_or("").to_string();
            (
                d["code"].as_str().unwrap_or("").to_string(),
                severity.to_string(),
                r["start"]["line"].as_u64().unwrap_or(0),
                r["start"]["character"].as_u64().unwrap_or(0),
                r["end"]["line"].as_u64().unwrap_or(0),
                r["end"]["character"].as_u64().unwrap_or(0),
                message,
            )
        })
        .collect();
    out.sort();
    out
}

#[test]
fn diagnostics_on_open_equal_the_command_line_and_clear_on_close() {
    let (dir, path, _text, u, mut client) =
        open_example("lsp-diagnostics", "flawed/aux_rail.guard", json!({}));
    let diags = client.diagnostics(&u, 1);
    assert!(!diags.is_empty());
    assert_eq!(lsp_tuples(&diags), check_tuples(&dir, &path));
    assert!(diags.iter().all(|d| d["source"] == "guardband"));
    // Labels other than the primary one come as related information.
    assert!(diags.iter().any(|d| d["relatedInformation"].is_array()));
    client.notify("textDocument/didClose", json!({ "textDocument": doc(&u) }));
    let cleared = client.wait_for(|m| {
        m["method"] == "textDocument/publishDiagnostics"
            && m["params"]["uri"] == u.as_str()
            && m["params"]["diagnostics"] == json!([])
    });
    assert!(cleared["params"]["version"].is_null());
    assert_eq!(client.stop(), Some(0));
}

#[test]
fn rapid_incremental_edits_end_equal_to_a_fresh_check() {
    let dir = examples_copy("lsp-rapid");
    let path = dir.join("flawed/wake_rail.guard");
    let original = std::fs::read_to_string(&path).expect("read");
    let u = uri(&path);
    let mut client = start(&dir, json!({}));
    client.open(&u, "", 1);
    // Type the file in 500 incremental edits, each appending the next chunk at the end.
    let chars: Vec<char> = original.chars().collect();
    let chunk = (chars.len() / 500).max(1);
    let mut typed = String::new();
    let mut version = 1;
    for piece in chars.chunks(chunk) {
        let end = pos_end(&typed);
        let piece: String = piece.iter().collect();
        version += 1;
        client.notify(
            "textDocument/didChange",
            json!({
                "textDocument": { "uri": u, "version": version },
                "contentChanges": [{ "range": { "start": end, "end": end }, "text": piece }],
            }),
        );
        typed.push_str(&piece);
    }
    assert_eq!(typed, original);
    assert!(version >= 400, "{version} edits");
    let diags = client.diagnostics(&u, version);
    assert_eq!(lsp_tuples(&diags), check_tuples(&dir, &path));
    assert!(!diags.is_empty(), "wake_rail has findings");
    // No diagnostics for an older version arrive after the final ones
    // (older ones that arrived before the final are fine).
    assert!(
        client
            .arrives_from_now_within(Duration::from_millis(300), |m| {
                m["method"] == "textDocument/publishDiagnostics"
                    && m["params"]["version"]
                        .as_i64()
                        .is_some_and(|v| v < i64::from(version))
            })
            .is_none()
    );
    assert_eq!(client.stop(), Some(0));
}

/// The position just past the end of `text`, in UTF-16.
fn pos_end(text: &str) -> Value {
    let line = text.matches('\n').count();
    let last = text.rsplit('\n').next().unwrap_or("");
    json!({ "line": line, "character": last.chars().map(char::len_utf16).sum::<usize>() })
}

#[test]
fn hover_shows_values_windows_and_conductor_breakdowns() {
    let (_dir, _path, text, u, mut client) =
        open_example("lsp-hover", "sensor_rail.guard", json!({}));
    client.diagnostics(&u, 1);
    let hover = |client: &mut Client, at: Value| -> String {
        let r = client.request(
            "textDocument/hover",
            json!({ "textDocument": doc(&u), "position": at }),
        );
        r["contents"]["value"].as_str().unwrap_or("").to_string()
    };
    let threshold = hover(&mut client, pos16(&text, "threshold        = ratio", 0, 2));
    for want in [
        "min",
        "nominal",
        "max",
        "limit window",
        "worst case",
        "statistical",
        "share",
        "rated load",
    ] {
        assert!(
            threshold.contains(want),
            "threshold hover lacks `{want}`:\n{threshold}"
        );
    }
    // A reference in a value shows the value it names: `reference` is 100 uA ± the trimmed tolerance.
    let reference = hover(&mut client, pos16(&text, "ratio * reference", 0, 9));
    assert!(reference.contains("100 uA"), "{reference}");
    assert!(
        reference.contains("wren180"),
        "tolerance source named: {reference}"
    );
    let conductor = hover(&mut client, pos16(&text, "conductor pass_source", 0, 12));
    for want in [
        "conductor `pass_source` rating",
        "width 260 um",
        "thickness",
        "current density",
        "rating:",
        "worst current",
        "margin",
    ] {
        assert!(
            conductor.contains(want),
            "conductor hover lacks `{want}`:\n{conductor}"
        );
    }
    // The conductor names the inputs of its Black's-equation factor.
    assert!(
        conductor.contains("activation energy") && conductor.contains("reference temperature"),
        "{conductor}"
    );
    // A metal layer shows its data and every conductor that uses it.
    let metal = hover(&mut client, pos16(&text, "wren180.top_metal", 0, 10));
    for want in [
        "current_density",
        "**Used by**",
        "`sensor_rail.pass_source`: rated",
    ] {
        assert!(metal.contains(want), "metal hover lacks `{want}`:\n{metal}");
    }
    // A fault case shows each expectation beside the bound it is held against.
    let short = hover(&mut client, pos16(&text, "fault vout_short", 0, 8));
    assert!(
        short.contains(
            "`expect current <= 300 mA`: derived up to 192 mA (the `sensed` limit folded back"
        ) && short.contains("holds at every corner"),
        "{short}"
    );
    // A short to supply shows its currents; this pass device blocks the reverse path.
    let to_cell = hover(&mut client, pos16(&text, "fault vout_to_cell", 0, 8));
    for want in [
        "`vout_to_cell`: reverse current from the 2.7 V .. 4.4 V supply: none",
        "reverse_blocking = true",
    ] {
        assert!(
            to_cell.contains(want),
            "short-to-supply hover lacks `{want}`:\n{to_cell}"
        );
    }
    // With named corners the limit shows its window at each corner: the
    // 150 ppm/K reference is lowest where the die is coldest, at `strong`
    // (-20 °C); both corners' dies reach 125 °C, so the top is alike.
    let limit = hover(&mut client, pos16(&text, "limit sensed", 0, 8));
    for want in [
        "**At each corner**",
        "`weak` ",
        "`strong` ",
        "lowest at `strong`, highest at `weak`, `strong`",
    ] {
        assert!(limit.contains(want), "limit hover lacks `{want}`:\n{limit}");
    }
    // A value written in a corner's block shows itself at that corner, with
    // the pass device's figures there.
    let weak = hover(&mut client, pos16(&text, "0.35 A .. 0.7 A", 0, 2));
    assert!(
        weak.contains("`sensor_rail.pass.full_gate_current`** at corner `weak`")
            && weak.contains("0.35 A")
            && weak.contains("0.7 A"),
        "{weak}"
    );
    // The thermal shutdown shows the junction at rated load beside the fault heat.
    let shutdown = hover(&mut client, pos16(&text, "thermal_shutdown {", 0, 3));
    for want in [
        "rated load in regulation: junction",
        "sustained short",
        "cycling in a sustained short",
        "period at least",
    ] {
        assert!(
            shutdown.contains(want),
            "thermal shutdown hover lacks `{want}`:\n{shutdown}"
        );
    }
    assert_eq!(client.stop(), Some(0));
}

#[test]
fn hover_on_a_finding_gives_the_rule_and_the_fix() {
    let (_dir, _path, _text, u, mut client) =
        open_example("lsp-hover-finding", "flawed/aux_rail.guard", json!({}));
    let diags = client.diagnostics(&u, 1);
    let under = diags
        .iter()
        .find(|d| d["code"] == "conductor-under-rated")
        .expect("finding");
    let r = client.request(
        "textDocument/hover",
        json!({ "textDocument": doc(&u), "position": under["range"]["start"] }),
    );
    let text = r["contents"]["value"].as_str().unwrap_or("");
    assert!(text.contains("conductor-under-rated"), "{text}");
    assert!(text.contains("How to fix"), "{text}");
    assert!(text.contains("Widen the metal"), "{text}");
    assert_eq!(client.stop(), Some(0));
}

#[test]
fn inlay_hints_follow_derived_values_and_can_be_turned_off() {
    let (_dir, _path, text, u, mut client) =
        open_example("lsp-inlay", "sensor_rail.guard", json!({}));
    client.diagnostics(&u, 1);
    let whole = json!({ "start": { "line": 0, "character": 0 }, "end": pos_end(&text) });
    let hints = client.request(
        "textDocument/inlayHint",
        json!({ "textDocument": doc(&u), "range": whole }),
    );
    let hints = hints.as_array().expect("hints");
    let threshold_line = pos16(&text, "threshold        = ratio", 0, 0)["line"].clone();
    let on_line: Vec<&Value> = hints
        .iter()
        .filter(|h| h["position"]["line"] == threshold_line)
        .collect();
    assert_eq!(on_line.len(), 1, "{hints:?}");
    let label = on_line[0]["label"].as_str().expect("label");
    // ratio × reference = 2000 × 100 uA ± 8 %: about 184 mA .. 216 mA.
    assert!(
        label.starts_with("⇒ ") && label.contains("mA .."),
        "{label}"
    );
    assert!(hints.iter().any(|h| {
        h["label"]
            .as_str()
            .is_some_and(|l| l.starts_with("window "))
    }));
    client.notify(
        "workspace/didChangeConfiguration",
        json!({ "settings": { "guardband": { "inlayHints": false } } }),
    );
    let off = client.request(
        "textDocument/inlayHint",
        json!({ "textDocument": doc(&u), "range": whole }),
    );
    assert_eq!(off, json!([]));
    assert_eq!(client.stop(), Some(0));
}

#[test]
fn definition_references_and_rename_across_imports() {
    let dir = examples_copy("lsp-navigate");
    let path = dir.join("sensor_rail.guard");
    let process = dir.join("process/wren180.guard");
    let text = std::fs::read_to_string(&path).expect("read");
    let u = uri(&path);
    let mut client = start(&dir, json!({}));
    client.open(&u, &text, 1);
    client.diagnostics(&u, 1);
    // `wren180.top_metal` in a conductor leads into the imported process file.
    let def = client.request(
        "textDocument/definition",
        json!({ "textDocument": doc(&u), "position": pos16(&text, "wren180.top_metal", 0, 9) }),
    );
    assert_eq!(def["uri"], uri(&process).as_str());
    let process_text = std::fs::read_to_string(&process).expect("read");
    assert_eq!(
        def["range"]["start"],
        pos16(&process_text, "top_metal", 0, 0)
    );
    // The `use` path leads to the file.
    let used = client.request(
        "textDocument/definition",
        json!({ "textDocument": doc(&u), "position": pos16(&text, "process/wren180", 0, 2) }),
    );
    assert_eq!(used["uri"], uri(&process).as_str());
    // References of the limit `sensed`: its name and the analysis' `loop = sensed`
    // (the copies of the regulator at its two corners add none).
    let refs = client.request(
        "textDocument/references",
        json!({ "textDocument": doc(&u), "position": pos16(&text, "limit sensed", 0, 7), "context": { "includeDeclaration": true } }),
    );
    let refs = refs.as_array().expect("refs");
    assert_eq!(refs.len(), 2, "{refs:?}");
    // Rename the pin `vout`: its name, `pin = vout` four times, `carries = vout` twice, `force vout`
    // and the circuit's `port vout`,
    // each once though the corners copy them.
    let prepare = client.request(
        "textDocument/prepareRename",
        json!({ "textDocument": doc(&u), "position": pos16(&text, "pin vout", 0, 5) }),
    );
    assert_eq!(prepare["start"], pos16(&text, "pin vout", 0, 4));
    let edit = client.request(
        "textDocument/rename",
        json!({ "textDocument": doc(&u), "position": pos16(&text, "pin vout", 0, 5), "newName": "out_pin" }),
    );
    let edits = edit["changes"][u.as_str()].as_array().expect("edits");
    assert_eq!(edits.len(), 9, "{edits:?}");
    // A name already taken in the regulator is refused.
    let clash = client.request_full(
        "textDocument/rename",
        json!({ "textDocument": doc(&u), "position": pos16(&text, "pin vout", 0, 5), "newName": "sensed" }),
    );
    assert!(
        clash["error"]["message"]
            .as_str()
            .unwrap_or("")
            .contains("already has a block named `sensed`"),
        "{clash}"
    );
    // Keyword blocks and fields cannot be renamed.
    let field = client.request_full(
        "textDocument/rename",
        json!({ "textDocument": doc(&u), "position": pos16(&text, "ratio      ", 0, 1), "newName": "gain" }),
    );
    assert!(field["error"].is_object(), "{field}");
    // A spread's name is the user's: renaming `trimmed` at its use edits the
    // use here and the definition in the process file.
    let spread = client.request(
        "textDocument/rename",
        json!({ "textDocument": doc(&u), "position": pos16(&text, "wren180.trimmed", 0, 9), "newName": "after_trim" }),
    );
    let changes = spread["changes"].as_object().expect("changes");
    assert_eq!(changes.len(), 2, "{spread}");
    let process_edits = changes
        .iter()
        .find(|(k, _)| k.ends_with("wren180.guard"))
        .map(|(_, v)| v.as_array().unwrap().len());
    assert_eq!(process_edits, Some(1), "{spread}");
    // It clashes with the process's other spread.
    let taken = client.request_full(
        "textDocument/rename",
        json!({ "textDocument": doc(&u), "position": pos16(&text, "wren180.trimmed", 0, 9), "newName": "resistor" }),
    );
    assert!(
        taken["error"]["message"]
            .as_str()
            .unwrap_or("")
            .contains("already has a field `resistor`"),
        "{taken}"
    );
    assert_eq!(client.stop(), Some(0));
}

#[test]
fn completion_offers_fields_units_names_and_choices() {
    let (_dir, _path, text, u, mut client) =
        open_example("lsp-complete", "sensor_rail.guard", json!({}));
    client.diagnostics(&u, 1);
    let labels = |client: &mut Client, at: Value| -> Vec<String> {
        let r = client.request(
            "textDocument/completion",
            json!({ "textDocument": doc(&u), "position": at }),
        );
        r.as_array()
            .expect("items")
            .iter()
            .map(|i| i["label"].as_str().unwrap_or("").to_string())
            .collect()
    };
    // At the start of a line inside `limit sensed`: its fields, with snippets.
    let fields = labels(&mut client, pos16(&text, "        ratio            ", 0, 0));
    for want in ["ratio", "reference", "mismatch", "scheme"] {
        assert!(fields.contains(&want.to_string()), "{fields:?}");
    }
    // A replica limit is offered the replica fields, not the other scheme's.
    for unwanted in ["fixed_current", "threshold_voltage", "trip_current"] {
        assert!(!fields.contains(&unwanted.to_string()), "{fields:?}");
    }
    // In a corner: its conditions and the blocks it may restate; in its
    // `pass { }`, the pass device's fields.
    let corner = labels(&mut client, pos16(&text, "        process = slow", 0, 0));
    for want in ["ambient", "supply", "process", "pass", "limit"] {
        assert!(corner.contains(&want.to_string()), "{corner:?}");
    }
    let pass = labels(
        &mut client,
        pos16(&text, "full_gate_current = 0.35 A .. 0.7 A", 0, 0),
    );
    assert!(pass.contains(&"amplifier_drive".to_string()), "{pass:?}");
    assert!(!pass.contains(&"process".to_string()), "{pass:?}");
    // After `scheme = `: the schemes.
    let choices = labels(
        &mut client,
        pos16(&text, "scheme           = replica", 0, 19),
    );
    assert!(
        choices.contains(&"replica".to_string())
            && choices.contains(&"undervoltage_fixed".to_string()),
        "{choices:?}"
    );
    // After a number in a capacitance: capacitance units only.
    let edited = text.replace("capacitance  = 1 uF ± 20 %", "capacitance  = 1 u");
    client.notify(
        "textDocument/didChange",
        json!({ "textDocument": { "uri": u, "version": 2 }, "contentChanges": [{ "text": edited }] }),
    );
    let units = labels(&mut client, pos16(&edited, "capacitance  = 1 u", 0, 18));
    assert!(units.contains(&"uF".to_string()), "{units:?}");
    assert!(!units.contains(&"uA".to_string()), "{units:?}");
    // After `=` in a value: names in scope, and after a dot, the members.
    let names = labels(&mut client, pos16(&edited, "ratio * reference", 0, 0));
    assert!(
        names.contains(&"ratio".to_string()) && names.contains(&"wren180".to_string()),
        "{names:?}"
    );
    let dotted = labels(&mut client, pos16(&edited, "wren180.top_metal", 0, 8));
    assert!(dotted.contains(&"top_metal".to_string()), "{dotted:?}");
    // A reference offers only what it may name: after `carries = ` the pass
    // device, pins and limits; after `layer = ` the process's metals; after
    // `supply = ` the supply items.
    let carries = labels(&mut client, pos16(&edited, "carries = pass", 0, 10));
    for want in ["pass", "vout", "sensed"] {
        assert!(carries.contains(&want.to_string()), "{carries:?}");
    }
    for unwanted in ["ratio", "wren180", "top_metal", "vout_bond"] {
        assert!(!carries.contains(&unwanted.to_string()), "{carries:?}");
    }
    let layer = labels(&mut client, pos16(&edited, "layer   = wren180", 0, 10));
    assert!(
        layer.contains(&"wren180.top_metal".to_string()),
        "{layer:?}"
    );
    assert!(!layer.contains(&"pass".to_string()), "{layer:?}");
    let supply = labels(
        &mut client,
        pos16(&edited, "supply       = tern_cell", 0, 15),
    );
    assert_eq!(supply, vec!["tern_cell".to_string()], "{supply:?}");
    assert_eq!(client.stop(), Some(0));
}

#[test]
fn document_and_workspace_symbols() {
    let (_dir, _path, _text, u, mut client) =
        open_example("lsp-symbols", "sensor_rail.guard", json!({}));
    let outline = client.request(
        "textDocument/documentSymbol",
        json!({ "textDocument": doc(&u) }),
    );
    let outline = outline.as_array().expect("symbols");
    assert_eq!(outline.len(), 1);
    assert_eq!(outline[0]["name"], "sensor_rail");
    let children: Vec<&str> = outline[0]["children"]
        .as_array()
        .expect("children")
        .iter()
        .map(|c| c["name"].as_str().unwrap_or(""))
        .collect();
    for want in [
        "vout",
        "pass",
        "sensed",
        "vout_short",
        "limit_loop",
        "pass_source",
    ] {
        assert!(children.contains(&want), "{children:?}");
    }
    let found = client.request("workspace/symbol", json!({ "query": "top_metal" }));
    let found = found.as_array().expect("symbols");
    assert!(
        found.iter().any(|s| s["name"] == "top_metal"
            && s["location"]["uri"]
                .as_str()
                .is_some_and(|u| u.ends_with("wren180.guard"))),
        "{found:?}"
    );
    assert_eq!(client.stop(), Some(0));
}

#[test]
fn semantic_tokens_full_and_range() {
    let dir = temp_dir("lsp-tokens");
    let path = dir.join("t.guard");
    let text =
        "// note µ\nregulator r {\n    load = 0 mA .. 2 mA  // Ω\n    output = 1 V ± 2 %\n}\n";
    std::fs::write(&path, text).expect("write");
    let u = uri(&path.canonicalize().expect("canonical"));
    let mut client = start(&dir, json!({}));
    client.open(&u, text, 1);
    let full = client.request(
        "textDocument/semanticTokens/full",
        json!({ "textDocument": doc(&u) }),
    );
    let data: Vec<u64> = full["data"]
        .as_array()
        .expect("data")
        .iter()
        .map(|v| v.as_u64().unwrap_or(0))
        .collect();
    assert_eq!(data.len() % 5, 0);
    // Decode to (line, column, length, type).
    let mut tokens = Vec::new();
    let (mut line, mut col) = (0, 0);
    for t in data.chunks(5) {
        if t[0] > 0 {
            line += t[0];
            col = t[1];
        } else {
            col += t[1];
        }
        tokens.push((line, col, t[2], t[3]));
    }
    // Legend order: keyword 0, class 1, property 2, variable 3, enumMember 4, number 5, type 6, operator 7, string 8, comment 9.
    assert_eq!(
        tokens[0],
        (0, 0, 9, 9),
        "the comment, 9 UTF-16 units with µ"
    );
    assert!(
        tokens.contains(&(1, 0, 9, 0)),
        "`regulator` keyword: {tokens:?}"
    );
    assert!(tokens.contains(&(1, 10, 1, 1)), "`r` block name");
    assert!(tokens.contains(&(2, 4, 4, 2)), "`load` field");
    assert!(tokens.contains(&(2, 11, 1, 5)), "`0` number: {tokens:?}");
    assert!(tokens.contains(&(2, 13, 2, 6)), "`mA` unit: {tokens:?}");
    assert!(tokens.contains(&(3, 17, 1, 7)), "`±` tolerance");
    let range = client.request(
        "textDocument/semanticTokens/range",
        json!({ "textDocument": doc(&u), "range": { "start": { "line": 3, "character": 0 }, "end": { "line": 3, "character": 99 } } }),
    );
    let n = range["data"].as_array().expect("data").len() / 5;
    assert_eq!(
        n, 6,
        "output = 1 V ± 2 %: field, number, unit, ±, number, unit"
    );
    assert_eq!(client.stop(), Some(0));
}

/// Applies LSP text edits (UTF-16 ranges) to a text.
fn apply(text: &str, edits: &[Value]) -> String {
    let offset = |p: &Value| -> usize {
        let line = p["line"].as_u64().unwrap_or(0) as usize;
        let character = p["character"].as_u64().unwrap_or(0) as usize;
        let start: usize = text.split_inclusive('\n').take(line).map(str::len).sum();
        let rest = &text[start.min(text.len())..];
        let mut units = 0;
        for (i, c) in rest.char_indices() {
            if units >= character || c == '\n' {
                return start + i;
            }
            units += c.len_utf16();
        }
        text.len()
    };
    let mut sorted: Vec<&Value> = edits.iter().collect();
    sorted.sort_by_key(|e| std::cmp::Reverse(offset(&e["range"]["start"])));
    let mut out = text.to_string();
    for e in sorted {
        let (a, b) = (offset(&e["range"]["start"]), offset(&e["range"]["end"]));
        out.replace_range(a..b, e["newText"].as_str().unwrap_or(""));
    }
    out
}

#[test]
fn quick_fixes_size_metal_insert_fault_cases_and_waive() {
    let (dir, path, text, u, mut client) =
        open_example("lsp-actions", "flawed/aux_rail.guard", json!({}));
    let diags = client.diagnostics(&u, 1);
    let actions_at = |client: &mut Client, code: &str| -> Vec<Value> {
        let d = diags
            .iter()
            .find(|d| d["code"] == code)
            .unwrap_or_else(|| panic!("{code}"))
            .clone();
        let r = client.request(
            "textDocument/codeAction",
            json!({ "textDocument": doc(&u), "range": d["range"], "context": { "diagnostics": [d] } }),
        );
        r.as_array().expect("actions").clone()
    };
    let metal = actions_at(&mut client, "conductor-under-rated");
    let widen = metal
        .iter()
        .find(|a| {
            a["title"]
                .as_str()
                .is_some_and(|t| t.starts_with("Set `width`"))
        })
        .expect("a width fix");
    assert_eq!(widen["kind"], "quickfix");
    assert!(metal.iter().any(|a| {
        a["title"]
            .as_str()
            .is_some_and(|t| t.starts_with("Waive `conductor-under-rated`"))
    }));
    let fixed = apply(
        &text,
        widen["edit"]["changes"][u.as_str()]
            .as_array()
            .expect("edits"),
    );
    std::fs::write(&path, &fixed).expect("write");
    let after = check_tuples(&dir, &path);
    assert!(
        !after.iter().any(|t| t.0 == "conductor-under-rated"),
        "{after:?}"
    );
    std::fs::write(&path, &text).expect("restore");

    let missing = actions_at(&mut client, "missing-fault-case");
    let add = missing
        .iter()
        .find(|a| {
            a["title"]
                .as_str()
                .is_some_and(|t| t.starts_with("Add `fault"))
        })
        .expect("a skeleton");
    let added = apply(
        &text,
        add["edit"]["changes"][u.as_str()]
            .as_array()
            .expect("edits"),
    );
    assert!(
        added.contains(
            "    fault vout_startup {\n        pin   = vout\n        event = startup\n    }\n"
        ),
        "{added}"
    );
    std::fs::write(&path, &added).expect("write");
    let after = check_tuples(&dir, &path);
    assert!(
        !after
            .iter()
            .any(|t| t.0 == "missing-fault-case" || t.0 == "syntax"),
        "{after:?}"
    );

    // Fix-all applies every safe fix at once and the file still checks cleanly of those rules.
    let all = client.request(
        "textDocument/codeAction",
        json!({ "textDocument": doc(&u), "range": { "start": { "line": 0, "character": 0 }, "end": { "line": 0, "character": 0 } },
                "context": { "diagnostics": [], "only": ["source.fixAll"] } }),
    );
    let all = all.as_array().expect("actions");
    assert_eq!(all.len(), 1, "{all:?}");
    let everything = apply(
        &text,
        all[0]["edit"]["changes"][u.as_str()]
            .as_array()
            .expect("edits"),
    );
    std::fs::write(&path, &everything).expect("write");
    let after = check_tuples(&dir, &path);
    assert!(
        !after.iter().any(
            |t| ["conductor-under-rated", "missing-fault-case", "syntax"].contains(&t.0.as_str())
        ),
        "{after:?}"
    );
    assert_eq!(client.stop(), Some(0));
}

#[test]
fn quick_fixes_set_up_the_limit_loop_and_raise_the_limit() {
    let (dir, path, text, u, mut client) =
        open_example("lsp-actions-loop", "flawed/aux_rail.guard", json!({}));
    let diags = client.diagnostics(&u, 1);
    let titles_and_edits = |client: &mut Client, code: &str| -> Vec<(String, Vec<Value>)> {
        let mut out = Vec::new();
        for d in diags.iter().filter(|d| d["code"] == code) {
            let r = client.request(
                "textDocument/codeAction",
                json!({ "textDocument": doc(&u), "range": d["range"], "context": { "diagnostics": [d] } }),
            );
            for a in r.as_array().expect("actions") {
                let edits = a["edit"]["changes"][u.as_str()]
                    .as_array()
                    .cloned()
                    .unwrap_or_default();
                out.push((a["title"].as_str().unwrap_or("").to_string(), edits));
            }
        }
        out
    };
    // The analysis forces the output with a current and breaks at the pin.
    let setup = titles_and_edits(&mut client, "limit-loop-analysis");
    let force = setup
        .iter()
        .find(|(t, _)| t == "Force `vout` with 1.65 V, below regulation")
        .expect("a forcing fix");
    let brk = setup
        .iter()
        .find(|(t, _)| t == "Break the loop at `pass.gate`")
        .expect("a break fix");
    let edits: Vec<Value> = force.1.iter().chain(&brk.1).cloned().collect();
    let fixed = apply(&text, &edits);
    assert!(fixed.contains("force vout = 1.65 V"), "{fixed}");
    assert!(fixed.contains("break_at   = pass.gate"), "{fixed}");
    std::fs::write(&path, &fixed).expect("write");
    let after = check_tuples(&dir, &path);
    assert!(
        !after.iter().any(|t| t.0 == "limit-loop-analysis"),
        "{after:?}"
    );
    std::fs::write(&path, &text).expect("restore");
    // The limit window's low edge sits below rated load plus margin: the
    // computed reference clears it.
    let window = titles_and_edits(&mut client, "limit-within-load");
    let (title, edits) = window
        .iter()
        .find(|(t, _)| t.starts_with("Raise `reference` of `sensed` to "))
        .expect("a raise fix");
    let fixed = apply(&text, edits);
    std::fs::write(&path, &fixed).expect("write");
    let after = check_tuples(&dir, &path);
    assert!(
        !after
            .iter()
            .any(|t| t.0 == "limit-within-load" || t.0 == "syntax"),
        "{title}: {after:?}"
    );
    assert_eq!(client.stop(), Some(0));
}

#[test]
fn formatting_matches_guardband_fmt_and_keeps_meaning() {
    let dir = temp_dir("lsp-format");
    std::fs::write(dir.join("guardband.toml"), "").expect("config");
    let path = dir.join("f.guard");
    let messy = "regulator r {\n  load=0 mA .. 2 mA\n      junction_max = 125 °C   // hot\n  pin p { off_chip = true }\n}\n";
    std::fs::write(&path, messy).expect("write");
    let u = uri(&path.canonicalize().expect("canonical"));
    let mut client = start(&dir, json!({}));
    client.open(&u, messy, 1);
    let before = lsp_tuples(&client.diagnostics(&u, 1));
    let edits = client.request(
        "textDocument/formatting",
        json!({ "textDocument": doc(&u), "options": { "tabSize": 4, "insertSpaces": true } }),
    );
    let formatted = apply(messy, edits.as_array().expect("edits"));
    let run = guardband(&dir, &["fmt", "f.guard"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert_eq!(std::fs::read_to_string(&path).expect("read"), formatted);
    assert_eq!(guardband(&dir, &["fmt", "--check", "f.guard"]).code, 0);
    client.notify(
        "textDocument/didChange",
        json!({ "textDocument": { "uri": u, "version": 2 }, "contentChanges": [{ "text": formatted }] }),
    );
    let after = lsp_tuples(&client.diagnostics(&u, 2));
    // Same findings (rules and messages); only positions may move.
    let strip = |v: &[(String, String, u64, u64, u64, u64, String)]| -> Vec<(String, String)> {
        v.iter().map(|t| (t.0.clone(), t.6.clone())).collect()
    };
    assert_eq!(strip(&before), strip(&after));
    assert_eq!(client.stop(), Some(0));
}

#[test]
fn utf8_and_utf16_sessions_agree_on_non_ascii_text() {
    let dir = temp_dir("lsp-encoding");
    let path = dir.join("e.guard");
    let text = "// µ Ω ± ° 𝄞 and more 𝄞\nregulator r { /* */ }\nregulator q {\n    junction_max = 125 °C  // 𝄞 °\n    ambient = -20 °C .. 70 °C  // 𝄞\n    bogus = 1 µF\n}\n";
    std::fs::write(&path, text).expect("write");
    let u = uri(&path.canonicalize().expect("canonical"));
    for (caps, expected_kind) in [
        (
            json!({ "general": { "positionEncodings": ["utf-8", "utf-16"] } }),
            "utf-8",
        ),
        (json!({}), "utf-16"),
    ] {
        let mut client = Client::start(&dir);
        let init = client.initialize(&dir, caps, json!({ "debounceMs": 20 }));
        assert_eq!(init["capabilities"]["positionEncoding"], expected_kind);
        client.open(&u, text, 1);
        let diags = client.diagnostics(&u, 1);
        let unknown = diags
            .iter()
            .find(|d| d["code"] == "unknown-field")
            .expect("unknown field");
        let want = if expected_kind == "utf-8" {
            pos8(text, "bogus", 0)
        } else {
            pos16(text, "bogus", 0, 0)
        };
        assert_eq!(unknown["range"]["start"], want);
        // The syntax error after the astral characters of line 2 is placed in this session's units.
        let syntax = diags
            .iter()
            .find(|d| d["code"] == "syntax")
            .expect("syntax error");
        let want = if expected_kind == "utf-8" {
            pos8(text, "/*", 0)
        } else {
            pos16(text, "/*", 0, 0)
        };
        assert_eq!(syntax["range"]["start"], want);
        // Hover on `°C` of the ambient line, a column that differs between the encodings.
        let at = if expected_kind == "utf-8" {
            pos8(text, "70 °C", 0)
        } else {
            pos16(text, "70 °C", 0, 0)
        };
        let hover = client.request(
            "textDocument/hover",
            json!({ "textDocument": doc(&u), "position": at }),
        );
        let value = hover["contents"]["value"].as_str().unwrap_or("");
        assert!(
            value.contains("ambient") && value.contains("70 °C"),
            "{value}"
        );
        // An edit after an astral character lands where the client meant it.
        let after_clef = if expected_kind == "utf-8" {
            let mut p = pos8(text, "𝄞 °", 0);
            p["character"] = json!(p["character"].as_u64().unwrap_or(0) + 4);
            p
        } else {
            pos16(text, "𝄞 °", 0, 2)
        };
        client.notify(
            "textDocument/didChange",
            json!({ "textDocument": { "uri": u, "version": 2 }, "contentChanges": [{ "range": { "start": after_clef, "end": after_clef }, "text": "!" }] }),
        );
        client.diagnostics(&u, 2);
        let outline = client.request(
            "textDocument/hover",
            json!({ "textDocument": doc(&u), "position": at }),
        );
        assert!(
            outline["contents"]["value"]
                .as_str()
                .unwrap_or("")
                .contains("70 °C")
        );
        assert_eq!(client.stop(), Some(0));
    }
}

#[test]
fn malformed_messages_never_crash_the_server_or_lose_text() {
    let dir = temp_dir("lsp-malformed");
    let path = dir.join("m.guard");
    let text = "regulator r {\n    load = 0 mA .. 2 mA\n}\n";
    std::fs::write(&path, text).expect("write");
    let u = uri(&path.canonicalize().expect("canonical"));
    let mut client = start(&dir, json!({}));
    client.open(&u, text, 1);
    client.diagnostics(&u, 1);
    // Broken JSON, a body that is not JSON-RPC, an unknown method, an unknown notification.
    let garbage = b"{ this is not json";
    client.send_raw(format!("Content-Length: {}\r\n\r\n", garbage.len()).as_bytes());
    client.send_raw(garbage);
    client.send_raw(&frame(&json!({ "hello": "world" })));
    let unknown = client.request_full("guardband/noSuchMethod", json!({}));
    assert_eq!(unknown["error"]["code"], -32601);
    client.notify("guardband/noSuchNotification", json!({ "x": 1 }));
    // Wrong parameter types answer an error.
    let bad = client.request_full("textDocument/hover", json!({ "textDocument": 5 }));
    assert!(bad["error"].is_object(), "{bad}");
    // Positions past the end, a reversed range, a change to an unopened file.
    let far = client.request(
        "textDocument/hover",
        json!({ "textDocument": doc(&u), "position": { "line": 9999, "character": 9999 } }),
    );
    assert!(far.is_null() || far.is_object());
    client.notify(
        "textDocument/didChange",
        json!({ "textDocument": { "uri": u, "version": 2 }, "contentChanges": [
            { "range": { "start": { "line": 1, "character": 23 }, "end": { "line": 1, "character": 19 } }, "text": "4 mA" },
            { "range": { "start": { "line": 500, "character": 0 }, "end": { "line": 900, "character": 3 } }, "text": "// end\n" }
        ] }),
    );
    client.notify(
        "textDocument/didChange",
        json!({ "textDocument": { "uri": "file:///never/opened.guard", "version": 2 }, "contentChanges": [{ "text": "x" }] }),
    );
    client.diagnostics(&u, 2);
    let hover = client.request(
        "textDocument/hover",
        json!({ "textDocument": doc(&u), "position": { "line": 1, "character": 5 } }),
    );
    let value = hover["contents"]["value"].as_str().unwrap_or("");
    assert!(
        value.contains("4 mA"),
        "the reversed-range edit applied: {value}"
    );
    // A 20 MB document is taken and kept; it is above the 16 MiB file limit,
    // so it gets a `limit` diagnostic instead of a check.
    let megabytes = 20 * 1024 * 1024;
    let huge = format!(
        "regulator big {{\n    description = \"{}\"\n}}\n",
        "x".repeat(megabytes)
    );
    client.notify(
        "textDocument/didChange",
        json!({ "textDocument": { "uri": u, "version": 3 }, "contentChanges": [{ "text": huge }] }),
    );
    let limited = client.diagnostics(&u, 3);
    assert!(limited.iter().any(|d| d["code"] == "limit"), "{limited:?}");
    // An incremental edit deleting the 20 MB string applies to the text the server kept.
    let start = json!({ "line": 1, "character": 19 });
    let end = json!({ "line": 1, "character": 19 + megabytes });
    client.notify(
        "textDocument/didChange",
        json!({ "textDocument": { "uri": u, "version": 4 }, "contentChanges": [{ "range": { "start": start, "end": end }, "text": "" }] }),
    );
    assert!(
        client
            .diagnostics(&u, 4)
            .iter()
            .all(|d| d["code"] != "limit")
    );
    let symbols = client.request(
        "textDocument/documentSymbol",
        json!({ "textDocument": doc(&u) }),
    );
    assert_eq!(symbols[0]["name"], "big");
    assert_eq!(client.stop(), Some(0));
}

#[test]
fn exit_without_shutdown_ends_with_code_one_and_stdin_closing_ends_it_too() {
    let dir = temp_dir("lsp-exit");
    let mut client = start(&dir, json!({}));
    client.notify("exit", Value::Null);
    assert_eq!(client.wait_exit(), Some(1));
    let mut client = start(&dir, json!({}));
    client.close_stdin();
    assert!(
        client.wait_exit().is_some(),
        "ends when the client goes away"
    );
}

#[test]
fn pull_diagnostics_when_the_client_supports_them() {
    let dir = examples_copy("lsp-pull");
    let path = dir.join("flawed/lamp_rail.guard");
    let text = std::fs::read_to_string(&path).expect("read");
    let u = uri(&path);
    let mut client = start(
        &dir,
        json!({ "textDocument": { "diagnostic": { "dynamicRegistration": false } } }),
    );
    client.open(&u, &text, 1);
    let report = client.request(
        "textDocument/diagnostic",
        json!({ "textDocument": doc(&u) }),
    );
    assert_eq!(report["kind"], "full");
    let items = report["items"].as_array().expect("items").clone();
    assert_eq!(lsp_tuples(&items), check_tuples(&dir, &path));
    assert!(!items.is_empty());
    // In pull mode nothing is pushed.
    assert!(
        client
            .arrives_within(Duration::from_millis(300), |m| m["method"]
                == "textDocument/publishDiagnostics")
            .is_none()
    );
    assert_eq!(client.stop(), Some(0));
}

#[test]
fn a_change_in_a_used_file_or_the_config_rechecks_dependents() {
    let dir = examples_copy("lsp-dependents");
    let main = dir.join("sensor_rail.guard");
    let process = dir.join("process/wren180.guard");
    let main_text = std::fs::read_to_string(&main).expect("read");
    let process_text = std::fs::read_to_string(&process).expect("read");
    let (mu, pu) = (uri(&main), uri(&process));
    let caps = json!({ "workspace": { "didChangeWatchedFiles": { "dynamicRegistration": true }, "configuration": true } });
    let mut client = start(&dir, caps);
    client.open(&mu, &main_text, 1);
    assert!(
        client.diagnostics(&mu, 1).is_empty(),
        "sensor_rail is clean"
    );
    // Thin the metal in the open process file: the main file's conductor is now under-rated.
    client.open(&pu, &process_text, 1);
    let thinner = process_text.replacen("= 1 mA/um^2", "= 0.1 mA/um^2", 1);
    assert_ne!(thinner, process_text);
    client.notify(
        "textDocument/didChange",
        json!({ "textDocument": { "uri": pu, "version": 2 }, "contentChanges": [{ "text": thinner }] }),
    );
    let main_diags = client.diagnostics_where(&mu, |d| !d.is_empty());
    assert!(
        main_diags
            .iter()
            .any(|d| d["code"] == "conductor-under-rated"),
        "{main_diags:?}"
    );
    client.notify("textDocument/didChange", json!({ "textDocument": { "uri": pu, "version": 3 }, "contentChanges": [{ "text": process_text }] }));
    assert!(client.diagnostics_where(&mu, |d| d.is_empty()).is_empty());
    // The server registered file watching because the client allows it dynamically.
    assert!(
        client
            .server_requests
            .iter()
            .any(|m| m == "client/registerCapability"),
        "{:?}",
        client.server_requests
    );
    // A stricter margin in guardband.toml, changed on disk, re-checks the open files.
    let config = dir.join("guardband.toml");
    let old = std::fs::read_to_string(&config).expect("config");
    let stricter = old.replace("margin = \"20 %\"", "margin = \"900 %\"");
    assert_ne!(stricter, old);
    std::fs::write(&config, stricter).expect("write");
    client.notify(
        "workspace/didChangeWatchedFiles",
        json!({ "changes": [{ "uri": uri(&config), "type": 2 }] }),
    );
    let strict = client.diagnostics_where(&mu, |d| !d.is_empty());
    assert!(
        strict.iter().any(|d| d["code"] == "limit-within-load"),
        "{strict:?}"
    );
    assert_eq!(client.stop(), Some(0));
}

#[test]
fn no_dynamic_registration_unless_the_client_allows_it() {
    let dir = temp_dir("lsp-no-watch");
    let mut client = start(&dir, json!({}));
    let r = client.request("workspace/symbol", json!({ "query": "" }));
    assert_eq!(r, json!([]));
    assert!(
        client.server_requests.is_empty(),
        "{:?}",
        client.server_requests
    );
    assert_eq!(client.stop(), Some(0));
}

#[test]
fn a_panicking_handler_answers_an_internal_error_and_the_session_goes_on() {
    let dir = temp_dir("lsp-panic");
    let path = dir.join("p.guard");
    let text = "regulator r {\n    load = 0 mA .. 2 mA\n}\n";
    std::fs::write(&path, text).expect("write");
    let u = uri(&path.canonicalize().expect("canonical"));
    let mut client = Client::start_with_env(&dir, &[("GUARDBAND_LSP_TEST_HOOKS", "1")]);
    client.initialize(&dir, json!({}), json!({ "debounceMs": 20 }));
    client.open(&u, text, 1);
    let panicked = client.request_full("guardband/test/panic", Value::Null);
    assert_eq!(panicked["error"]["code"], -32603, "{panicked}");
    let symbols = client.request(
        "textDocument/documentSymbol",
        json!({ "textDocument": doc(&u) }),
    );
    assert_eq!(symbols[0]["name"], "r");
    assert_eq!(client.stop(), Some(0));
}

#[test]
fn configuration_problems_are_published_on_guardband_toml() {
    let dir = temp_dir("lsp-config");
    std::fs::write(dir.join("guardband.toml"), "margin = \"lots\"\n").expect("config");
    let path = dir.join("a.guard");
    let text = "regulator r {\n    load = 0 mA .. 1 mA\n}\n";
    std::fs::write(&path, text).expect("write");
    let dir = dir.canonicalize().expect("canonical");
    let u = uri(&dir.join("a.guard"));
    let config = uri(&dir.join("guardband.toml"));
    let mut client = start(&dir, json!({}));
    client.open(&u, text, 1);
    let published = client.diagnostics_where(&config, |d| !d.is_empty());
    assert_eq!(published[0]["code"], "config", "{published:?}");
    assert_eq!(published[0]["range"]["start"]["line"], 0);
    assert_eq!(client.stop(), Some(0));
}

/// After each kind of broken frame the server still answers the next request.
#[test]
fn bad_frames_never_end_the_session() {
    let dir = temp_dir("lsp-frames");
    let mut client = start(&dir, json!({}));
    let body = br#"{"jsonrpc":"2.0","id":99001,"method":"guardband/noSuchMethod"}"#;
    let broken: Vec<Vec<u8>> = vec![
        // Too short, too long, negative, far too large, 2^64, no header at all.
        [
            format!("Content-Length: {}\r\n\r\n", body.len() - 7).as_bytes(),
            body,
        ]
        .concat(),
        [
            format!("Content-Length: {}\r\n\r\n", body.len() + 300).as_bytes(),
            body,
        ]
        .concat(),
        [b"Content-Length: -3\r\n\r\n".as_slice(), body].concat(),
        [b"Content-Length: 1000000000000\r\n\r\n".as_slice(), body].concat(),
        [
            b"Content-Length: 18446744073709551616\r\n\r\n".as_slice(),
            body,
        ]
        .concat(),
        body.to_vec(),
    ];
    for bytes in broken {
        client.send_raw(&bytes);
        let answer = client.request_full("guardband/noSuchMethod", json!({}));
        assert_eq!(
            answer["error"]["code"],
            -32601,
            "no answer after {}",
            String::from_utf8_lossy(&bytes)
        );
    }
    assert_eq!(client.stop(), Some(0));
}

/// An `untitled:` buffer, or a file in a folder that does not exist, is
/// checked on its own: diagnostics arrive and hover answers.
#[test]
fn documents_without_a_folder_are_checked_on_their_own() {
    let dir = temp_dir("lsp-untitled");
    let mut client = start(&dir, json!({}));
    let text = "regulator r {\n    load = 0 mA .. 2 V\n}\n";
    for u in ["untitled:Untitled-1", "file:///no/such/folder/draft.guard"] {
        client.open(u, text, 1);
        let diags = client.diagnostics(u, 1);
        assert!(
            diags.iter().any(|d| d["code"] == "unit-mismatch"),
            "{u}: {diags:?}"
        );
        let hover = client.request_full(
            "textDocument/hover",
            json!({ "textDocument": { "uri": u }, "position": { "line": 1, "character": 5 } }),
        );
        assert!(hover.get("error").is_none(), "{u}: {hover}");
    }
    assert_eq!(client.stop(), Some(0));
}

/// A quick fix that rewrites a value keeps the comments written inside it.
#[test]
fn quick_fixes_keep_the_comments_inside_what_they_rewrite() {
    let dir = temp_dir("lsp-fix-comments");
    std::fs::copy(
        root().join("tests/fixtures/rules/conductor-under-rated/fail.guard"),
        dir.join("c.guard"),
    )
    .expect("copy");
    let path = dir.join("c.guard");
    let original = std::fs::read_to_string(&path).expect("read");
    let text = original.replace(
        "width = 50 um",
        "width = (50 um  // sized for the rated load\n            )",
    );
    assert_ne!(text, original, "the fixture still has its 50 um width");
    std::fs::write(&path, &text).expect("write");
    let u = uri(&path.canonicalize().expect("canonical"));
    let mut client = start(&dir, json!({}));
    client.open(&u, &text, 1);
    let diags = client.diagnostics(&u, 1);
    let d = diags
        .iter()
        .find(|d| d["code"] == "conductor-under-rated")
        .expect("finding")
        .clone();
    let actions = client.request(
        "textDocument/codeAction",
        json!({ "textDocument": doc(&u), "range": d["range"], "context": { "diagnostics": [d] } }),
    );
    let fix = actions
        .as_array()
        .expect("actions")
        .iter()
        .find(|a| {
            a["title"]
                .as_str()
                .is_some_and(|t| t.starts_with("Set `width`"))
        })
        .expect("a width fix")
        .clone();
    let fixed = apply(
        &text,
        fix["edit"]["changes"][u.as_str()]
            .as_array()
            .expect("edits"),
    );
    assert!(fixed.contains("// sized for the rated load"), "{fixed}");
    std::fs::write(&path, &fixed).expect("write");
    let (_, report) = check_json(&dir, &["c.guard"]);
    assert!(
        !report.to_string().contains("conductor-under-rated"),
        "the fix still fixes: {report}"
    );
    assert_eq!(client.stop(), Some(0));
}

// A shared supply's droop in the editor adds up every regulator drawing
// from it, also those in files that are not open: with only sensor_rail
// open, the hover on its `supply = tern_cell` counts radio_rail too and
// shows the droop `guardband check` derives for the whole workspace
// (0.104 V; 239 mA + 160 mA = 399 mA, arithmetic), not sensor_rail's alone.
#[test]
fn a_shared_supply_hover_counts_drawers_in_files_not_open() {
    let (_dir, _path, text, u, mut client) =
        open_example("lsp-shared-supply", "sensor_rail.guard", json!({}));
    client.diagnostics(&u, 1);
    let r = client.request(
        "textDocument/hover",
        json!({ "textDocument": doc(&u), "position": pos16(&text, "= tern_cell", 0, 4) }),
    );
    let value = r["contents"]["value"].as_str().unwrap_or("");
    assert!(value.contains("`radio_rail` draws up to 160 mA"), "{value}");
    assert!(value.contains("399 mA × 250 mΩ"), "{value}");
    assert!(value.contains("0.104 V below its lowest 2.7 V"), "{value}");
}

/// Renaming a block that a corner restates renames the restatement too,
/// so the corner does not end up restating a block that is gone; the
/// references list it.
#[test]
fn renaming_a_block_renames_its_restatement_in_a_corner() {
    let dir = temp_dir("lsp-corner-rename");
    let path = dir.join("r.guard");
    let text = "regulator r {\n    supply = 3 V .. 3.6 V\n    limit sensed { scheme = replica  ratio = 1000  reference = 100 uA ± 5 %  threshold = ratio * reference }\n    corner hot { ambient = 85 °C  limit sensed { reference = 100 uA ± 3 % } }\n}\n";
    std::fs::write(&path, text).expect("write");
    let u = uri(&path);
    let mut client = start(&dir, json!({}));
    client.open(&u, text, 1);
    client.diagnostics(&u, 1);
    let refs = client.request(
        "textDocument/references",
        json!({ "textDocument": doc(&u), "position": pos16(text, "limit sensed", 0, 7), "context": { "includeDeclaration": true } }),
    );
    let refs = refs.as_array().expect("refs");
    assert_eq!(refs.len(), 2, "{refs:?}");
    let edit = client.request(
        "textDocument/rename",
        json!({ "textDocument": doc(&u), "position": pos16(text, "limit sensed", 0, 7), "newName": "main_limit" }),
    );
    let edits = edit["changes"][u.as_str()].as_array().expect("edits");
    let renamed = apply(text, edits);
    assert_eq!(renamed.matches("limit main_limit").count(), 2, "{renamed}");
    assert!(!renamed.contains("sensed"), "{renamed}");
    assert_eq!(client.stop(), Some(0));
}

/// Hover on a fault case or analysis shows its measurements from the
/// results files `guardband.toml` names, per corner, with where each is;
/// a measurement that breaks a requirement is published as a diagnostic.
#[test]
fn a_fault_hover_shows_its_evidence_beside_the_derived_bound() {
    let dir = examples_copy("lsp-evidence");
    std::fs::write(
        dir.join("bench.csv"),
        "case,corner,quantity,value,unit\n\
         sensor_rail.vout_short,weak,current,158,mA\n\
         sensor_rail.limit_loop,weak,phase_margin,41,deg\n",
    )
    .expect("write");
    let toml = std::fs::read_to_string(dir.join("guardband.toml")).expect("read");
    let toml = toml.replacen("[rules]", "evidence = [\"bench.csv\"]\n\n[rules]", 1);
    std::fs::write(dir.join("guardband.toml"), toml).expect("write");
    let path = dir.join("sensor_rail.guard");
    let text = std::fs::read_to_string(&path).expect("read");
    let u = uri(&path);
    let mut client = start(&dir, json!({}));
    client.open(&u, &text, 1);
    let diags = client.diagnostics(&u, 1);
    let rules: Vec<&str> = diags.iter().filter_map(|d| d["code"].as_str()).collect();
    assert!(rules.contains(&"measured-breaks-expectation"), "{diags:?}");
    assert!(rules.contains(&"evidence-missing"), "{diags:?}");
    let r = client.request(
        "textDocument/hover",
        json!({ "textDocument": doc(&u), "position": pos16(&text, "fault vout_short", 0, 8) }),
    );
    let value = r["contents"]["value"].as_str().unwrap_or("");
    assert!(value.contains("**Evidence (measured)**"), "{value}");
    assert!(
        value.contains("`weak` current 158 mA (bench.csv line 2)"),
        "{value}"
    );
    assert!(value.contains("**Expectations**"), "{value}");
}
