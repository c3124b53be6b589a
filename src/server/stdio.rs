//! `steamcell stdio`: newline-delimited JSON-RPC 2.0 on stdin/stdout.
//!
//! One request object or batch array per input line; one response line per request or batch
//! (a batch answers one array line); notifications (no `id`) run but get no line. A line that
//! is not JSON answers a parse error (-32700) and the loop goes on; blank lines are skipped;
//! end of input ends the loop.
//!
//! Invariant: every call goes through the same [`RpcModule`] as the HTTP/WebSocket server, so
//! validation and error codes are identical; lines are answered in input order.

use crate::api::{codes, limits};
use jsonrpsee::server::RpcModule;
use serde_json::{json, Value};
use tokio::io::{AsyncBufReadExt, AsyncWrite, AsyncWriteExt, BufReader};

fn error_line(id: Value, code: i64, message: &str) -> String {
    json!({
        "jsonrpc": "2.0",
        "error": { "code": code, "message": message },
        "id": id,
    })
    .to_string()
}

/// The id of a request-like value if it is a valid JSON-RPC id (string, number or null).
fn id_of(item: &Value) -> Value {
    match item.get("id") {
        Some(v @ (Value::String(_) | Value::Number(_) | Value::Null)) => v.clone(),
        _ => Value::Null,
    }
}

async fn handle_one(module: &RpcModule<()>, item: Value) -> Option<String> {
    let is_notification = item.as_object().is_some_and(|o| !o.contains_key("id"));
    if is_notification {
        // Run it (for its effects, e.g. counters) with a stand-in id; answer nothing.
        if let Value::Object(mut o) = item {
            o.insert("id".to_string(), json!(0));
            let _ = module
                .raw_json_request(&Value::Object(o).to_string(), 1)
                .await;
        }
        return None;
    }
    let text = item.to_string();
    match module.raw_json_request(&text, 1).await {
        Ok((response, _rx)) => Some(response.get().to_string()),
        Err(_) => Some(error_line(
            id_of(&item),
            codes::INVALID_REQUEST,
            "Invalid request",
        )),
    }
}

/// Answers one input line; `None` when nothing is to be written (blank line, notifications).
pub async fn handle_line(module: &RpcModule<()>, line: &str) -> Option<String> {
    let line = line.trim();
    if line.is_empty() {
        return None;
    }
    if line.len() > limits::current().max_request_body_bytes as usize {
        return Some(error_line(
            Value::Null,
            codes::INVALID_REQUEST,
            "Request is too big",
        ));
    }
    let value: Value = match serde_json::from_str(line) {
        Ok(v) => v,
        Err(_) => return Some(error_line(Value::Null, codes::PARSE_ERROR, "Parse error")),
    };
    match value {
        Value::Array(items) => {
            if items.is_empty() {
                return Some(error_line(
                    Value::Null,
                    codes::INVALID_REQUEST,
                    "Invalid request",
                ));
            }
            if items.len() > limits::current().max_batch_requests as usize {
                return Some(error_line(
                    Value::Null,
                    codes::INVALID_REQUEST,
                    &format!(
                        "The batch request was too large: {} calls, limit {}",
                        items.len(),
                        limits::current().max_batch_requests
                    ),
                ));
            }
            let mut out = Vec::new();
            for item in items {
                if let Some(r) = handle_one(module, item).await {
                    out.push(r);
                }
            }
            if out.is_empty() {
                None
            } else {
                Some(format!("[{}]", out.join(",")))
            }
        }
        other => handle_one(module, other).await,
    }
}

/// Runs the stdio loop on `input` and `output` until end of input.
pub async fn run<R, W>(module: &RpcModule<()>, input: R, mut output: W) -> std::io::Result<()>
where
    R: tokio::io::AsyncRead + Unpin,
    W: AsyncWrite + Unpin,
{
    let mut lines = BufReader::new(input).lines();
    while let Some(line) = lines.next_line().await? {
        if let Some(answer) = handle_line(module, &line).await {
            output.write_all(answer.as_bytes()).await?;
            output.write_all(b"\n").await?;
            output.flush().await?;
        }
    }
    Ok(())
}

/// `steamcell stdio`: the loop on the process's stdin and stdout.
pub async fn serve_stdio() -> std::io::Result<()> {
    crate::api::mark_started();
    let module = super::rpc_module();
    run(&module, tokio::io::stdin(), tokio::io::stdout()).await
}
