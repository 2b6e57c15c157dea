//! A minimal LSP client for the end-to-end tests: starts the real
//! `guardband lsp` binary and speaks JSON-RPC with Content-Length framing.

#![allow(dead_code)]

use serde_json::{Value, json};
use std::io::{BufRead, BufReader, Write};
use std::path::Path;
use std::process::{Child, ChildStdin, Command, Stdio};
use std::sync::mpsc::{Receiver, RecvTimeoutError, channel};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

/// How long any single wait may take before the test fails.
pub const TIMEOUT: Duration = Duration::from_secs(30);

/// A running server and the messages it sent that nobody has taken yet.
pub struct Client {
    child: Child,
    stdin: Arc<Mutex<Option<ChildStdin>>>,
    incoming: Receiver<Value>,
    pending: Vec<Value>,
    next_id: i64,
    /// Answers to server-to-client requests, by method.
    pub answers: Vec<(String, Value)>,
    /// Every server-to-client request seen, by method.
    pub server_requests: Vec<String>,
}

/// Frames one message.
pub fn frame(message: &Value) -> Vec<u8> {
    let body = serde_json::to_vec(message).expect("serialise");
    let mut out = format!("Content-Length: {}\r\n\r\n", body.len()).into_bytes();
    out.extend(body);
    out
}

fn read_message(reader: &mut impl BufRead) -> Option<Value> {
    let mut length = None;
    loop {
        let mut line = String::new();
        if reader.read_line(&mut line).ok()? == 0 {
            return None;
        }
        let line = line.trim_end();
        if line.is_empty() {
            break;
        }
        if let Some(v) = line.strip_prefix("Content-Length: ") {
            length = v.parse::<usize>().ok();
        }
    }
    let mut body = vec![0; length?];
    reader.read_exact(&mut body).ok()?;
    serde_json::from_slice(&body).ok()
}

impl Client {
    /// Starts `guardband lsp` in `cwd`.
    pub fn start(cwd: &Path) -> Client {
        Client::start_with_env(cwd, &[])
    }

    /// Starts `guardband lsp` in `cwd` with extra environment variables.
    pub fn start_with_env(cwd: &Path, env: &[(&str, &str)]) -> Client {
        let mut child = Command::new(env!("CARGO_BIN_EXE_guardband"))
            .arg("lsp")
            .current_dir(cwd)
            .envs(env.iter().copied())
            .stdin(Stdio::piped())
            .stdout(Stdio::piped())
            .stderr(Stdio::null())
            .spawn()
            .expect("start guardband lsp");
        let stdout = child.stdout.take().expect("stdout");
        let stdin = Arc::new(Mutex::new(child.stdin.take()));
        let (tx, rx) = channel();
        std::thread::spawn(move || {
            let mut reader = BufReader::new(stdout);
            while let Some(message) = read_message(&mut reader) {
                if tx.send(message).is_err() {
                    break;
                }
            }
        });
        Client {
            child,
            stdin,
            incoming: rx,
            pending: Vec::new(),
            next_id: 1,
            answers: vec![(
                "workspace/configuration".into(),
                json!([{ "debounceMs": 20 }]),
            )],
            server_requests: Vec::new(),
        }
    }

    /// Writes raw bytes to the server.
    pub fn send_raw(&mut self, bytes: &[u8]) {
        let mut guard = self.stdin.lock().expect("stdin");
        let stdin = guard.as_mut().expect("stdin open");
        stdin.write_all(bytes).expect("write");
        stdin.flush().expect("flush");
    }

    /// Sends a notification.
    pub fn notify(&mut self, method: &str, params: Value) {
        let m = json!({ "jsonrpc": "2.0", "method": method, "params": params });
        self.send_raw(&frame(&m));
    }

    /// Sends a request; returns its id.
    pub fn send_request(&mut self, method: &str, params: Value) -> i64 {
        let id = self.next_id;
        self.next_id += 1;
        let m = json!({ "jsonrpc": "2.0", "id": id, "method": method, "params": params });
        self.send_raw(&frame(&m));
        id
    }

    /// Sends a request and waits for its response (the whole message).
    pub fn request_full(&mut self, method: &str, params: Value) -> Value {
        let id = self.send_request(method, params);
        self.wait_for(|m| m.get("id") == Some(&json!(id)) && m.get("method").is_none())
    }

    /// Sends a request and returns its `result`, failing on an error.
    pub fn request(&mut self, method: &str, params: Value) -> Value {
        let response = self.request_full(method, params);
        assert!(
            response.get("error").is_none(),
            "{method} failed: {response}"
        );
        response["result"].clone()
    }

    /// Answers a server-to-client request.
    fn answer(&mut self, message: &Value) {
        let method = message["method"].as_str().unwrap_or("").to_string();
        self.server_requests.push(method.clone());
        let result = self
            .answers
            .iter()
            .find(|(m, _)| *m == method)
            .map(|(_, v)| v.clone())
            .unwrap_or(Value::Null);
        let reply = json!({ "jsonrpc": "2.0", "id": message["id"], "result": result });
        self.send_raw(&frame(&reply));
    }

    /// The next message matching `want`, answering server requests and
    /// keeping other messages for later waits; fails after [`TIMEOUT`].
    pub fn wait_for(&mut self, want: impl Fn(&Value) -> bool) -> Value {
        match self.next_within(TIMEOUT, want) {
            Ok(m) => m,
            Err(why) => panic!("{why}; pending: {:?}", self.pending),
        }
    }

    /// Whether a message matching `want` arrives within `wait`, from now
    /// on: messages that arrived earlier and were set aside do not count.
    pub fn arrives_from_now_within(
        &mut self,
        wait: Duration,
        want: impl Fn(&Value) -> bool,
    ) -> Option<Value> {
        let earlier = std::mem::take(&mut self.pending);
        let found = self.next_within(wait, want).ok();
        let later = std::mem::replace(&mut self.pending, earlier);
        self.pending.extend(later);
        found
    }

    /// Whether a message matching `want` arrives within `wait` (or arrived
    /// earlier and was set aside).
    pub fn arrives_within(
        &mut self,
        wait: Duration,
        want: impl Fn(&Value) -> bool,
    ) -> Option<Value> {
        self.next_within(wait, want).ok()
    }

    fn next_within(
        &mut self,
        wait: Duration,
        want: impl Fn(&Value) -> bool,
    ) -> Result<Value, &'static str> {
        if let Some(i) = self.pending.iter().position(&want) {
            return Ok(self.pending.remove(i));
        }
        let deadline = Instant::now() + wait;
        loop {
            let left = deadline.saturating_duration_since(Instant::now());
            match self.incoming.recv_timeout(left) {
                Ok(m) => {
                    if m.get("method").is_some() && m.get("id").is_some() {
                        self.answer(&m);
                    }
                    if want(&m) {
                        return Ok(m);
                    }
                    self.pending.push(m);
                }
                Err(RecvTimeoutError::Timeout) => return Err("timed out"),
                Err(RecvTimeoutError::Disconnected) => return Err("server went away"),
            }
        }
    }

    /// `initialize` + `initialized` with the given capabilities and options.
    pub fn initialize(&mut self, root: &Path, capabilities: Value, options: Value) -> Value {
        let result = self.request(
            "initialize",
            json!({
                "processId": null,
                "rootUri": uri(root),
                "workspaceFolders": [{ "uri": uri(root), "name": "ws" }],
                "capabilities": capabilities,
                "initializationOptions": options,
            }),
        );
        self.notify("initialized", json!({}));
        result
    }

    /// Opens a document.
    pub fn open(&mut self, uri: &str, text: &str, version: i32) {
        self.notify(
            "textDocument/didOpen",
            json!({ "textDocument": { "uri": uri, "languageId": "guard", "version": version, "text": text } }),
        );
    }

    /// Waits for the diagnostics of `uri` at `version`.
    pub fn diagnostics(&mut self, uri: &str, version: i32) -> Vec<Value> {
        let m = self.wait_for(|m| {
            m["method"] == "textDocument/publishDiagnostics"
                && m["params"]["uri"] == uri
                && m["params"]["version"] == version
        });
        m["params"]["diagnostics"]
            .as_array()
            .cloned()
            .unwrap_or_default()
    }

    /// Waits for diagnostics of `uri` (any version) that satisfy `want`.
    pub fn diagnostics_where(&mut self, uri: &str, want: impl Fn(&[Value]) -> bool) -> Vec<Value> {
        let m = self.wait_for(|m| {
            m["method"] == "textDocument/publishDiagnostics"
                && m["params"]["uri"] == uri
                && m["params"]["diagnostics"]
                    .as_array()
                    .is_some_and(|d| want(d))
        });
        m["params"]["diagnostics"]
            .as_array()
            .cloned()
            .unwrap_or_default()
    }

    /// `shutdown` then `exit`; returns the exit code.
    pub fn stop(mut self) -> Option<i32> {
        self.request("shutdown", Value::Null);
        self.notify("exit", Value::Null);
        self.wait_exit()
    }

    /// Waits (bounded) for the process to end.
    pub fn wait_exit(&mut self) -> Option<i32> {
        let deadline = Instant::now() + TIMEOUT;
        while Instant::now() < deadline {
            if let Ok(Some(status)) = self.child.try_wait() {
                return status.code();
            }
            std::thread::sleep(Duration::from_millis(10));
        }
        let _ = self.child.kill();
        None
    }

    /// Closes the server's input.
    pub fn close_stdin(&mut self) {
        self.stdin.lock().expect("stdin").take();
    }
}

impl Drop for Client {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

/// The `file:` URI of a path.
pub fn uri(path: &Path) -> String {
    let p = path.to_string_lossy().replace('\\', "/");
    let encoded: String = p
        .chars()
        .map(|c| match c {
            ' ' => "%20".to_string(),
            c => c.to_string(),
        })
        .collect();
    if encoded.starts_with('/') {
        format!("file://{encoded}")
    } else {
        format!("file:///{encoded}")
    }
}
