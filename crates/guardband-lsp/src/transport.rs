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
use tokio::io::{AsyncBufReadExt, AsyncRead, AsyncReadExt, AsyncWrite, AsyncWriteExt, BufReader};
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

/// Reads the next frame; `None` at the end of input.
pub async fn read_frame<R: AsyncRead + Unpin>(
    reader: &mut BufReader<R>,
) -> std::io::Result<Option<Frame>> {
    let mut length: Option<Result<usize, String>> = None;
    let mut seen_header = false;
    loop {
        let mut line = Vec::new();
        let n = (&mut *reader)
            .take(MAX_HEADER_LINE as u64)
            .read_until(b'\n', &mut line)
            .await?;
        if n == 0 {
            return Ok(None);
        }
        let text = String::from_utf8_lossy(&line);
        let text = text.trim();
        if text.is_empty() {
            if !seen_header {
                continue;
            }
            break;
        }
        seen_header = true;
        if let Some((name, value)) = text.split_once(':')
            && name.trim().eq_ignore_ascii_case("content-length")
        {
            length = Some(
                value
                    .trim()
                    .parse::<usize>()
                    .map_err(|_| format!("bad Content-Length `{}`", value.trim())),
            );
        }
    }
    let length = match length {
        Some(Ok(n)) if n <= MAX_MESSAGE => n,
        Some(Ok(n)) => {
            // Skip the oversized body so that the next frame is read intact.
            tokio::io::copy(&mut (&mut *reader).take(n as u64), &mut tokio::io::sink()).await?;
            return Ok(Some(Frame::Bad {
                code: -32600,
                message: format!(
                    "message of {n} bytes is larger than the {MAX_MESSAGE}-byte limit"
                ),
                id: Value::Null,
            }));
        }
        Some(Err(why)) => {
            return Ok(Some(Frame::Bad {
                code: -32700,
                message: why,
                id: Value::Null,
            }));
        }
        None => {
            return Ok(Some(Frame::Bad {
                code: -32700,
                message: "header without Content-Length".into(),
                id: Value::Null,
            }));
        }
    };
    let mut body = vec![0; length];
    reader.read_exact(&mut body).await?;
    Ok(Some(classify(body)))
}

/// Reads frames from a trusted writer (the server's own output).
async fn read_server_frame<R: AsyncRead + Unpin>(reader: &mut BufReader<R>) -> Option<Vec<u8>> {
    match read_frame(reader).await {
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
        let mut reader = BufReader::new(from_server);
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
    let mut reader = BufReader::new(input);
    loop {
        match read_frame(&mut reader).await {
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
        let mut reader = BufReader::new(input);
        let mut out = Vec::new();
        while let Ok(Some(f)) = read_frame(&mut reader).await {
            out.push(f);
        }
        out
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
