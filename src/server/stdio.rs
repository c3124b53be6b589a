//! `steamcell stdio`: newline-delimited JSON-RPC 2.0 on stdin/stdout.
//!
//! One request object or batch array per input line; one response line per request or batch
//! (a batch answers one array line); notifications (no `id`) run but get no line. A line that
//! is not JSON answers a parse error (-32700) and the loop goes on; blank lines are skipped;
//! end of input ends the loop.
//!
//! Invariant: every call goes through the same [`RpcModule`] and call path as the HTTP/WebSocket
//! server, and a line refused as a whole (longer than `max_request_body_bytes`, nested deeper
//! than `max_json_depth`, a batch of more than `max_batch_requests` calls) answers the same
//! error as an HTTP body would (1008 with `data` {kind, what, limit, value}, from
//! [`super::check_request_text`]); lines are answered in input order.

use super::{check_request_text, refuse};
use crate::api::{codes, ApiError, ServerCtx};
use jsonrpsee::server::RpcModule;
use serde_json::{json, Value};
use std::sync::Arc;
use tokio::io::{AsyncBufReadExt, AsyncWrite, AsyncWriteExt, BufReader};

/// A JSON-RPC error response line; `data` only when the error has fields (the JSON-RPC layer's
/// own parse and invalid-request errors have none, as over HTTP).
fn error_line(id: Value, code: i64, message: &str, data: Option<&Value>) -> String {
    let mut error = json!({ "code": code, "message": message });
    if let Some(d) = data {
        error["data"] = d.clone();
    }
    json!({ "jsonrpc": "2.0", "error": error, "id": id }).to_string()
}

fn refusal_line(ctx: &ServerCtx, e: ApiError) -> String {
    let e = refuse(ctx, e);
    error_line(Value::Null, e.code, &e.message, Some(&e.data))
}

/// The id of a request-like value if it is a valid JSON-RPC id (string, number or null).
fn id_of(item: &Value) -> Value {
    match item.get("id") {
        Some(v @ (Value::String(_) | Value::Number(_) | Value::Null)) => v.clone(),
        _ => Value::Null,
    }
}

async fn handle_one(module: &RpcModule<ServerCtx>, item: Value) -> Option<String> {
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
    // A well-formed call of an unknown method answers the server's own error, as over HTTP.
    if item.get("jsonrpc").and_then(Value::as_str) == Some("2.0") {
        if let Some(e) = item
            .get("method")
            .and_then(Value::as_str)
            .and_then(super::unknown_method)
        {
            return Some(error_line(id_of(&item), e.code, &e.message, Some(&e.data)));
        }
    }
    let text = item.to_string();
    match module.raw_json_request(&text, 1).await {
        Ok((response, _rx)) => Some(response.get().to_string()),
        Err(_) => Some(error_line(
            id_of(&item),
            codes::INVALID_REQUEST,
            "Invalid request",
            None,
        )),
    }
}

/// Answers one input line; `None` when nothing is to be written (blank line, notifications).
pub async fn handle_line(
    ctx: &ServerCtx,
    module: &RpcModule<ServerCtx>,
    line: &str,
) -> Option<String> {
    let line = line.trim();
    if line.is_empty() {
        return None;
    }
    if let Err(e) = check_request_text(&ctx.limits, line.as_bytes()) {
        return Some(refusal_line(ctx, e));
    }
    let value: Value = match serde_json::from_str(line) {
        Ok(v) => v,
        Err(_) => {
            return Some(error_line(
                Value::Null,
                codes::PARSE_ERROR,
                "Parse error",
                None,
            ))
        }
    };
    match value {
        Value::Array(items) => {
            if items.is_empty() {
                return Some(error_line(
                    Value::Null,
                    codes::INVALID_REQUEST,
                    "Invalid request",
                    None,
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
pub async fn run<R, W>(
    ctx: &ServerCtx,
    module: &RpcModule<ServerCtx>,
    input: R,
    mut output: W,
) -> std::io::Result<()>
where
    R: tokio::io::AsyncRead + Unpin,
    W: AsyncWrite + Unpin,
{
    let mut lines = BufReader::new(input).lines();
    while let Some(line) = lines.next_line().await? {
        if let Some(answer) = handle_line(ctx, module, &line).await {
            output.write_all(answer.as_bytes()).await?;
            output.write_all(b"\n").await?;
            output.flush().await?;
        }
    }
    Ok(())
}

/// `steamcell stdio`: the loop on the process's stdin and stdout, with the default limits.
pub async fn serve_stdio() -> std::io::Result<()> {
    let ctx = Arc::new(ServerCtx::default());
    let module = super::rpc_module(Arc::clone(&ctx));
    run(&ctx, &module, tokio::io::stdin(), tokio::io::stdout()).await
}
