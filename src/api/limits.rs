//! The limits a server enforces: their compile-time defaults, the [`Settings`] in force (held by
//! the [`ServerCtx`](super::server_ctx::ServerCtx) of a running server, reported by
//! `server.info`), and the one constructor of each refusal, so that every transport refuses a
//! request beyond a limit with the same error: code 1008 (`limit_exceeded`), a one-line message,
//! and `data` {kind, what, limit, value}.
//!
//! Units: bytes, counts, seconds, as each `what` says.
//!
//! Invariant: a refusal's `what` is one of the [`what`] constants, and
//! [`ApiError::http_status`](super::ApiError::http_status) chooses its HTTP status from it.

use super::{codes, ApiError};
use serde_json::json;
use std::time::Duration;

/// Default largest accepted request body (HTTP body, stdio line), bytes.
pub const MAX_REQUEST_BODY_BYTES: u32 = 16 * 1024 * 1024;
/// Default largest response body, bytes.
pub const MAX_RESPONSE_BODY_BYTES: u32 = 64 * 1024 * 1024;
/// Default most calls in one JSON-RPC batch array.
pub const MAX_BATCH_REQUESTS: u32 = 1000;
/// Default most rows in one table-style (batch) method call.
pub const MAX_BATCH_ROWS: u32 = 1_000_000;
/// Default most simultaneous connections.
pub const MAX_CONNECTIONS: u32 = 100;
/// Default deepest `[`/`{` nesting accepted in a request body.
pub const MAX_JSON_DEPTH: u32 = 64;
/// Default largest WebSocket message, bytes.
pub const MAX_WS_MESSAGE_BYTES: u32 = 16 * 1024 * 1024;
/// Default most method calls running at once (all connections).
pub const MAX_IN_FLIGHT: u32 = 256;
/// Default per-request time limit, milliseconds.
pub const REQUEST_TIMEOUT_MS: u64 = 30_000;

/// The limits in force for one server.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Settings {
    /// Largest HTTP request body or stdio line, bytes.
    pub max_request_body_bytes: u32,
    /// Largest response body, bytes.
    pub max_response_body_bytes: u32,
    /// Most calls in one JSON-RPC batch array.
    pub max_batch_requests: u32,
    /// Most rows in one `water.batch` or `/columns` call.
    pub max_batch_rows: u32,
    /// Deepest `[`/`{` nesting in a request body.
    pub max_json_depth: u32,
    /// Largest WebSocket message, bytes.
    pub max_ws_message_bytes: u32,
    /// Most simultaneous connections.
    pub max_connections: u32,
    /// Most method calls running at once.
    pub max_in_flight: u32,
    /// Per-request time limit on HTTP, milliseconds.
    pub request_timeout_ms: u64,
}

impl Settings {
    /// The compile-time defaults.
    pub const DEFAULT: Settings = Settings {
        max_request_body_bytes: MAX_REQUEST_BODY_BYTES,
        max_response_body_bytes: MAX_RESPONSE_BODY_BYTES,
        max_batch_requests: MAX_BATCH_REQUESTS,
        max_batch_rows: MAX_BATCH_ROWS,
        max_json_depth: MAX_JSON_DEPTH,
        max_ws_message_bytes: MAX_WS_MESSAGE_BYTES,
        max_connections: MAX_CONNECTIONS,
        max_in_flight: MAX_IN_FLIGHT,
        request_timeout_ms: REQUEST_TIMEOUT_MS,
    };

    /// Most rows in one `water.batch` or `/columns` call.
    pub fn max_batch_rows(&self) -> usize {
        self.max_batch_rows as usize
    }

    /// The per-request time limit.
    pub fn request_timeout(&self) -> Duration {
        Duration::from_millis(self.request_timeout_ms.max(1))
    }
}

impl Default for Settings {
    fn default() -> Settings {
        Settings::DEFAULT
    }
}

/// The `what` of each transport-level refusal (`data.what` of error 1008).
pub mod what {
    /// A request body (HTTP) or line (stdio) larger than `--max-body-bytes`.
    pub const REQUEST_BODY_BYTES: &str = "request body bytes";
    /// More calls in one batch array than `--max-batch-requests`.
    pub const BATCH_CALLS: &str = "calls in one batch";
    /// `[`/`{` nested deeper than `--max-json-depth`.
    pub const JSON_DEPTH: &str = "JSON nesting depth";
    /// More calls running at once than `--max-in-flight`.
    pub const CALLS_IN_FLIGHT: &str = "method calls in flight";
    /// A request body not received within `--request-timeout`.
    pub const BODY_TIME: &str = "request body time s";
    /// An answer not ready within `--request-timeout`.
    pub const ANSWER_TIME: &str = "request timeout s";
}

/// A limit refusal: code 1008 with `data` {kind, what, limit, value}.
pub fn refusal(what: &str, limit: f64, value: f64, message: String) -> ApiError {
    ApiError {
        code: codes::LIMIT_EXCEEDED,
        message,
        data: json!({ "kind": "limit_exceeded", "what": what, "limit": limit, "value": value }),
    }
}

/// A request body or stdio line of `value` bytes (at least `limit + 1` when reading stopped at
/// the limit) against a limit of `limit` bytes.
pub fn body_too_large(limit: usize, value: usize) -> ApiError {
    refusal(
        what::REQUEST_BODY_BYTES,
        limit as f64,
        value as f64,
        format!("request body too large: limit {limit} bytes"),
    )
}

/// A batch array of `calls` calls against a limit of `limit`.
pub fn batch_too_large(limit: usize, calls: usize) -> ApiError {
    refusal(
        what::BATCH_CALLS,
        limit as f64,
        calls as f64,
        format!("batch of {calls} calls exceeds the limit of {limit} calls"),
    )
}

/// A request nested `depth` levels of `[`/`{` deep against a limit of `limit`.
pub fn too_deep(limit: u32, depth: u32) -> ApiError {
    refusal(
        what::JSON_DEPTH,
        f64::from(limit),
        f64::from(depth),
        format!("JSON nested deeper than {limit} levels of [ and {{"),
    )
}

/// A call refused because `limit` calls are already running.
pub fn busy(limit: u64) -> ApiError {
    refusal(
        what::CALLS_IN_FLIGHT,
        limit as f64,
        (limit + 1) as f64,
        format!(
            "server busy: {limit} method calls are in flight (the --max-in-flight limit); retry shortly"
        ),
    )
}

/// A request body not received within `limit`.
pub fn body_time(limit: Duration) -> ApiError {
    let s = limit.as_secs_f64();
    refusal(
        what::BODY_TIME,
        s,
        s,
        format!("request body not received within the {s} s time limit"),
    )
}

/// An answer not ready within `limit` (the computation runs on to its end).
pub fn answer_time(limit: Duration) -> ApiError {
    let s = limit.as_secs_f64();
    refusal(
        what::ANSWER_TIME,
        s,
        s,
        format!("request not answered within the {s} s time limit"),
    )
}
