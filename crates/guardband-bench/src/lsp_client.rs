//! Just enough of an LSP client to time the server over its standard
//! input and output, as an editor talks to it: Content-Length framing,
//! requests, notifications, and waiting for one kind of message.

use serde_json::{Value, json};
use std::io::{BufRead, BufReader, Read, Write};
use std::process::{Child, ChildStdin, ChildStdout, Command, Stdio};

/// A running `guardband lsp`.
pub struct Server {
    child: Child,
    stdin: ChildStdin,
    stdout: BufReader<ChildStdout>,
    next_id: i64,
}

impl Server {
    /// Starts `command` (which must speak LSP on its stdio) and initialises
    /// it for `root_uri`, with the re-check debounce off so that what is
    /// timed is the server's work, not its waiting.
    pub fn start(mut command: Command, root_uri: &str) -> std::io::Result<Server> {
        let mut child = command
            .stdin(Stdio::piped())
            .stdout(Stdio::piped())
            .stderr(Stdio::null())
            .spawn()?;
        let stdin = child.stdin.take().ok_or(std::io::ErrorKind::BrokenPipe)?;
        let stdout = BufReader::with_capacity(
            1 << 16,
            child.stdout.take().ok_or(std::io::ErrorKind::BrokenPipe)?,
        );
        let mut server = Server {
            child,
            stdin,
            stdout,
            next_id: 1,
        };
        let id = server.request(
            "initialize",
            json!({
                "processId": std::process::id(),
                "rootUri": root_uri,
                "workspaceFolders": [{ "uri": root_uri, "name": "bench" }],
                "capabilities": {},
                "initializationOptions": { "debounceMs": 0 },
            }),
        )?;
        server.wait(|m| m["id"] == json!(id))?;
        server.notify("initialized", json!({}))?;
        Ok(server)
    }

    /// Sends one message.
    pub fn send(&mut self, message: &Value) -> std::io::Result<()> {
        let body = serde_json::to_vec(message)?;
        write!(self.stdin, "Content-Length: {}\r\n\r\n", body.len())?;
        self.stdin.write_all(&body)?;
        self.stdin.flush()
    }

    /// Sends a notification.
    pub fn notify(&mut self, method: &str, params: Value) -> std::io::Result<()> {
        self.send(&json!({ "jsonrpc": "2.0", "method": method, "params": params }))
    }

    /// Sends a request and returns its id.
    pub fn request(&mut self, method: &str, params: Value) -> std::io::Result<i64> {
        let id = self.next_id;
        self.next_id += 1;
        self.send(&json!({ "jsonrpc": "2.0", "id": id, "method": method, "params": params }))?;
        Ok(id)
    }

    /// Reads messages until one satisfies `wanted`, answering any request
    /// the server makes with an empty result on the way.
    pub fn wait(&mut self, wanted: impl Fn(&Value) -> bool) -> std::io::Result<Value> {
        loop {
            let message = self.receive()?;
            if wanted(&message) {
                return Ok(message);
            }
            if message.get("method").is_some() && message.get("id").is_some() {
                let answer = json!({ "jsonrpc": "2.0", "id": message["id"], "result": null });
                self.send(&answer)?;
            }
        }
    }

    fn receive(&mut self) -> std::io::Result<Value> {
        let mut length = None;
        loop {
            let mut line = String::new();
            if self.stdout.read_line(&mut line)? == 0 {
                return Err(std::io::ErrorKind::UnexpectedEof.into());
            }
            let line = line.trim_end();
            if line.is_empty() {
                break;
            }
            if let Some(v) = line.strip_prefix("Content-Length: ") {
                length = v.parse::<usize>().ok();
            }
        }
        let mut body = vec![0; length.ok_or(std::io::ErrorKind::InvalidData)?];
        self.stdout.read_exact(&mut body)?;
        Ok(serde_json::from_slice(&body)?)
    }

    /// Shuts the server down as an editor does.
    pub fn stop(mut self) {
        if let Ok(id) = self.request("shutdown", Value::Null) {
            let _ = self.wait(|m| m["id"] == json!(id));
        }
        let _ = self.notify("exit", Value::Null);
        let _ = self.child.wait();
    }
}

/// Whether `message` publishes the diagnostics of `uri` at `version`.
pub fn published(message: &Value, uri: &str, version: i64) -> bool {
    message["method"] == "textDocument/publishDiagnostics"
        && message["params"]["uri"] == uri
        && message["params"]["version"] == json!(version)
}
