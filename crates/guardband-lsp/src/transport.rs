//! A guard in front of the protocol library's stdio transport.
//!
//! The library stops reading after the first message it cannot decode, which
//! would end the session on one bad byte. Here every frame is read and
//! checked first: a body that is not JSON is answered with a parse error, one
//! that is not a JSON-RPC message with an invalid-request error, a missing or
//! oversized length is skipped with an error, and only well-formed messages
//! reach the server. One task writes standard output, so the guard's answers
//! never interleave with the server's.

use serde_json::{Value, json};
use tokio::io::{AsyncRead, AsyncReadExt, AsyncWrite, AsyncWriteExt};
use tokio::sync::mpsc;
use tower_lsp_server::jsonrpc::{Request, Response};

/// Largest message accepted (a 20 MB document fits with room to spare).
pub const MAX_MESSAGE: usize = 256 * 1024 * 1024;
/// Longest header line accepted.
const MAX_HEADER_LINE: usize = 8 * 1024;

/// One frame read from the client.
#[derive(Debug, PartialEq)]
pub enum Frame {
    /// A well-formed JSON-RPC message, as received.
    Message(Vec<u8>),
    /// Something to answer with an error instead of passing on.
    Bad {
        code: i64,
        message: String,
        id: Value,
    },
}

/// Frames a message body with its Content-Length header.
pub fn frame(body: &[u8]) -> Vec<u8> {
    let mut out = format!("Content-Length: {}\r\n\r\n", body.len()).into_bytes();
    out.extend_from_slice(body);
    out
}

/// Checks a body as the library will decode it.
pub fn classify(body: Vec<u8>) -> Frame {
    let value: Value = match serde_json::from_slice(&body) {
        Ok(v) => v,
        Err(e) => {
            return Frame::Bad {
                code: -32700,
                message: format!("Parse error: {e}"),
                id: Value::Null,
            };
        }
    };
    let id = value.get("id").cloned().unwrap_or(Value::Null);
    let id = if id.is_string() || id.is_number() {
        id
    } else {
        Value::Null
    };
    let decodes = serde_json::from_value::<Response>(value.clone()).is_ok()
        || serde_json::from_value::<Request>(value).is_ok();
    if decodes {
        Frame::Message(body)
    } else {
        Frame::Bad {
            code: -32600,
            message: "Invalid request: not a JSON-RPC 2.0 message".into(),
            id,
        }
    }
}

/// The header that starts every frame, matched without regard to case.
const HEADER: &[u8] = b"content-length:";

/// Where `needle` (lower case) first occurs in `hay`, ignoring ASCII case.
fn find_ignoring_case(hay: &[u8], needle: &[u8]) -> Option<usize> {
    if hay.len() < needle.len() {
        return None;
    }
    (0..=hay.len() - needle.len()).find(|&i| {
        hay[i..i + needle.len()]
            .iter()
            .zip(needle)
            .all(|(a, b)| a.to_ascii_lowercase() == *b)
    })
}

/// Where the header block that starts at 0 ends (after its blank line).
fn header_end(buf: &[u8]) -> Option<usize> {
    let crlf = buf.windows(4).position(|w| w == b"\r\n\r\n").map(|i| i + 4);
    let lf = buf.windows(2).position(|w| w == b"\n\n").map(|i| i + 2);
    match (crlf, lf) {
        (Some(a), Some(b)) => Some(a.min(b)),
        (a, b) => a.or(b),
    }
}

fn bad(code: i64, message: impl Into<String>, id: Value) -> Frame {
    Frame::Bad {
        code,
        message: message.into(),
        id,
    }
}

/// The id of a body that parses as JSON, for answering it.
fn id_of(body: &[u8]) -> Value {
    serde_json::from_slice::<Value>(body)
        .ok()
        .and_then(|v| v.get("id").cloned())
        .filter(|id| id.is_string() || id.is_number())
        .unwrap_or(Value::Null)
}

/// A reader of frames that keeps serving after a bad one.
///
/// It resynchronises on the next `Content-Length` header: bytes before a
/// header (a body sent without one, the rest of a body whose length was
/// stated too short) are skipped with one error; a length that does not
/// parse, is negative or is above [`MAX_MESSAGE`] is answered with an error
/// and its body is scanned for the next header rather than trusted; a
/// length stated too long is found out when the next header arrives
/// inside what would be the body, after a complete JSON value.
pub struct FrameReader<R> {
    input: R,
    buf: Vec<u8>,
    /// Bytes of `buf` already searched for a header while waiting for a body.
    searched: usize,
    done: bool,
}

impl<R: AsyncRead + Unpin> FrameReader<R> {
    pub fn new(input: R) -> FrameReader<R> {
        FrameReader {
            input,
            buf: Vec::new(),
            searched: 0,
            done: false,
        }
    }

    /// Reads more input into the buffer; false at the end of input.
    async fn fill(&mut self) -> std::io::Result<bool> {
        if self.done {
            return Ok(false);
        }
        let mut chunk = vec![0u8; 64 * 1024];
        let n = self.input.read(&mut chunk).await?;
        if n == 0 {
            self.done = true;
            return Ok(false);
        }
        self.buf.extend_from_slice(&chunk[..n]);
        Ok(true)
    }

    fn consume(&mut self, n: usize) {
        self.buf.drain(..n.min(self.buf.len()));
        self.searched = 0;
    }

    /// Reads the next frame; `None` at the end of input.
    pub async fn next(&mut self) -> std::io::Result<Option<Frame>> {
        // Skip to the next header; what lies before it is reported once.
        let start = loop {
            if let Some(p) = find_ignoring_case(&self.buf, HEADER) {
                break p;
            }
            if !self.fill().await? {
                let junk = self.buf.iter().any(|b| !b.is_ascii_whitespace());
                self.buf.clear();
                return Ok(junk.then(|| {
                    bad(
                        -32700,
                        "bytes without a Content-Length header were skipped",
                        Value::Null,
                    )
                }));
            }
            // Keep the tail in case a header is split across reads.
            if self.buf.len() > MAX_HEADER_LINE && find_ignoring_case(&self.buf, HEADER).is_none() {
                let keep = HEADER.len();
                let cut = self.buf.len() - keep;
                self.buf.drain(..cut);
            }
        };
        // Other header fields before the length (Content-Type) are fine;
        // anything else before it is skipped, and said so once.
        let before = String::from_utf8_lossy(&self.buf[..start]).into_owned();
        let only_headers = before.split('\n').map(str::trim).all(|l| {
            l.is_empty()
                || l.split_once(':').is_some_and(|(k, _)| {
                    !k.is_empty() && k.bytes().all(|b| b.is_ascii_alphanumeric() || b == b'-')
                })
        });
        let lead = before.trim_start();
        let block_without_length = lead.contains("\n\r\n") || lead.contains("\n\n");
        if !only_headers || block_without_length {
            self.consume(start);
            return Ok(Some(bad(
                -32700,
                "bytes without a Content-Length header were skipped",
                Value::Null,
            )));
        }
        self.consume(start);
        let end = loop {
            if let Some(e) = header_end(&self.buf) {
                break e;
            }
            if self.buf.len() > MAX_HEADER_LINE {
                // No blank line after the header: skip it and look again.
                self.consume(HEADER.len());
                return Ok(Some(bad(
                    -32700,
                    "a header without its blank line",
                    Value::Null,
                )));
            }
            if !self.fill().await? {
                self.buf.clear();
                return Ok(Some(bad(
                    -32700,
                    "input ended inside a header",
                    Value::Null,
                )));
            }
        };
        let header = String::from_utf8_lossy(&self.buf[..end]).into_owned();
        let value = header
            .lines()
            .next()
            .and_then(|l| l.split_once(':'))
            .map(|(_, v)| v.trim().to_string())
            .unwrap_or_default();
        let length = match value.parse::<usize>() {
            Ok(n) if n <= MAX_MESSAGE => n,
            Ok(n) => {
                // Not trusted: what follows is scanned for the next header.
                self.consume(end);
                return Ok(Some(bad(
                    -32600,
                    format!("a message of {n} bytes is larger than the {MAX_MESSAGE}-byte limit"),
                    Value::Null,
                )));
            }
            Err(_) => {
                self.consume(end);
                return Ok(Some(bad(
                    -32700,
                    format!("bad Content-Length `{value}`"),
                    Value::Null,
                )));
            }
        };
        // The body: wait for all of it, unless the next header shows up
        // first after a complete JSON value (the length was too long).
        self.searched = end;
        while self.buf.len() < end + length {
            let from = self.searched.saturating_sub(HEADER.len()).max(end);
            if let Some(p) = find_ignoring_case(&self.buf[from..], HEADER).map(|p| from + p) {
                let body = &self.buf[end..p];
                if serde_json::from_slice::<Value>(body).is_ok() {
                    let id = id_of(body);
                    let got = body.len();
                    self.consume(p);
                    return Ok(Some(bad(
                        -32700,
                        format!(
                            "Content-Length {length} is longer than the {got}-byte message that came with it"
                        ),
                        id,
                    )));
                }
            }
            self.searched = self.buf.len();
            if !self.fill().await? {
                let got = self.buf.len() - end;
                self.buf.clear();
                return Ok(Some(bad(
                    -32700,
                    format!("input ended {got} bytes into a {length}-byte message"),
                    Value::Null,
                )));
            }
        }
        let body = self.buf[end..end + length].to_vec();
        let frame = classify(body);
        if let Frame::Bad { code: -32700, .. } = &frame {
            // A body that does not parse but holds the next header: the
            // length was too long and both came at once.
            if let Some(p) = find_ignoring_case(&self.buf[end..end + length], HEADER)
                && serde_json::from_slice::<Value>(&self.buf[end..end + p]).is_ok()
            {
                let id = id_of(&self.buf[end..end + p]);
                self.consume(end + p);
                return Ok(Some(bad(
                    -32700,
                    format!(
                        "Content-Length {length} is longer than the {p}-byte message that came with it"
                    ),
                    id,
                )));
            }
        }
        self.consume(end + length);
        Ok(Some(frame))
    }
}

/// Reads frames from a trusted writer (the server's own output).
async fn read_server_frame<R: AsyncRead + Unpin>(reader: &mut FrameReader<R>) -> Option<Vec<u8>> {
    match reader.next().await {
        Ok(Some(Frame::Message(body))) => Some(body),
        Ok(Some(Frame::Bad { .. })) => Some(Vec::new()),
        _ => None,
    }
}

/// Starts the one task that writes `output`: the server's frames, copied
/// from `from_server`, and the guard's answers sent on the returned channel.
/// The task ends once the server's output has ended and been written.
pub fn spawn_output<F, O>(
    from_server: F,
    output: O,
) -> (mpsc::UnboundedSender<Vec<u8>>, tokio::task::JoinHandle<()>)
where
    F: AsyncRead + Unpin + Send + 'static,
    O: AsyncWrite + Unpin + Send + 'static,
{
    let (out_tx, mut out_rx) = mpsc::unbounded_channel::<Option<Vec<u8>>>();
    let server_tx = out_tx.clone();
    tokio::spawn(async move {
        let mut reader = FrameReader::new(from_server);
        while let Some(body) = read_server_frame(&mut reader).await {
            if !body.is_empty() && server_tx.send(Some(frame(&body))).is_err() {
                break;
            }
        }
        let _ = server_tx.send(None);
    });
    let (guard_tx, mut guard_rx) = mpsc::unbounded_channel::<Vec<u8>>();
    let forward = out_tx;
    tokio::spawn(async move {
        while let Some(bytes) = guard_rx.recv().await {
            if forward.send(Some(bytes)).is_err() {
                break;
            }
        }
    });
    let writer = tokio::spawn(async move {
        let mut output = output;
        while let Some(Some(bytes)) = out_rx.recv().await {
            if output.write_all(&bytes).await.is_err() || output.flush().await.is_err() {
                break;
            }
        }
    });
    (guard_tx, writer)
}

/// Reads the client's frames, passes well-formed ones to the server and
/// answers the rest through `answers`, until the input ends.
pub async fn forward_input<I, S>(
    input: I,
    mut to_server: S,
    answers: mpsc::UnboundedSender<Vec<u8>>,
) where
    I: AsyncRead + Unpin,
    S: AsyncWrite + Unpin,
{
    let mut reader = FrameReader::new(input);
    loop {
        match reader.next().await {
            Ok(Some(Frame::Message(body))) => {
                if to_server.write_all(&frame(&body)).await.is_err()
                    || to_server.flush().await.is_err()
                {
                    break;
                }
            }
            Ok(Some(Frame::Bad { code, message, id })) => {
                eprintln!("guardband lsp: rejected a message: {message}");
                let reply = json!({ "jsonrpc": "2.0", "id": id, "error": { "code": code, "message": message } });
                let _ = answers.send(frame(&serde_json::to_vec(&reply).unwrap_or_default()));
            }
            Ok(None) | Err(_) => break,
        }
    }
    let _ = to_server.shutdown().await;
}

#[cfg(test)]
mod tests {
    use super::*;

    async fn frames(input: &[u8]) -> Vec<Frame> {
        let mut reader = FrameReader::new(input);
        let mut out = Vec::new();
        while let Ok(Some(f)) = reader.next().await {
            out.push(f);
        }
        out
    }

    /// After each kind of broken frame the next good message still arrives.
    #[tokio::test]
    async fn broken_frames_are_answered_and_the_next_message_arrives() {
        let good = br#"{"jsonrpc":"2.0","id":9,"method":"shutdown"}"#;
        let body = br#"{"jsonrpc":"2.0","id":3,"method":"shutdown"}"#;
        let cases: Vec<Vec<u8>> = vec![
            // Too short: the rest of the body is left before the next header.
            [
                format!("Content-Length: {}\r\n\r\n", body.len() - 10).as_bytes(),
                body,
            ]
            .concat(),
            // Too long: the next header arrives inside what would be the body.
            [
                format!("Content-Length: {}\r\n\r\n", body.len() + 500).as_bytes(),
                body,
            ]
            .concat(),
            // Negative, far too large, and 2^64.
            [b"Content-Length: -5\r\n\r\n".as_slice(), body].concat(),
            [b"Content-Length: 1000000000000\r\n\r\n".as_slice(), body].concat(),
            [
                b"Content-Length: 18446744073709551616\r\n\r\n".as_slice(),
                body,
            ]
            .concat(),
            // A body without a header.
            body.to_vec(),
        ];
        for case in cases {
            let mut input = case.clone();
            input.extend(frame(good));
            let got = frames(&input).await;
            assert!(got.len() >= 2, "{got:?}");
            assert!(matches!(got[0], Frame::Bad { .. }), "{got:?}");
            assert_eq!(
                got.last(),
                Some(&Frame::Message(good.to_vec())),
                "{}",
                String::from_utf8_lossy(&case)
            );
        }
    }

    #[tokio::test]
    async fn bad_frames_are_answered_and_good_ones_pass() {
        let good = br#"{"jsonrpc":"2.0","id":1,"method":"shutdown"}"#;
        let mut input = Vec::new();
        input.extend(frame(b"{ not json"));
        input.extend(frame(br#"{"hello":"world","id":7}"#));
        input.extend(frame(br#"{"jsonrpc":"2.0","method":5}"#));
        input.extend(b"X-Other: 1\r\n\r\n");
        input.extend(b"Content-Length: abc\r\n\r\n");
        input.extend(frame(good));
        let got = frames(&input).await;
        assert_eq!(got.len(), 6, "{got:?}");
        assert!(matches!(&got[0], Frame::Bad { code: -32700, .. }));
        assert!(matches!(&got[1], Frame::Bad { code: -32600, id, .. } if *id == json!(7)));
        assert!(matches!(&got[2], Frame::Bad { code: -32600, .. }));
        assert!(matches!(&got[3], Frame::Bad { code: -32700, .. }));
        assert!(matches!(&got[4], Frame::Bad { code: -32700, .. }));
        assert_eq!(got[5], Frame::Message(good.to_vec()));
    }
}
