//! The audit trail of `steamcell serve --audit FILE`: one JSON line appended per call of the
//! server's call path ([`super::run_call`]): every JSON-RPC method call, and every GET /cell,
//! GET /site and POST /columns request that reaches it.
//!
//! Each line is an object with `time` (RFC 3339, UTC, milliseconds), `request_id`, `token` (the
//! name of the caller's token: `default` for `--token-file`/`STEAMCELL_TOKEN`, a user's or
//! service's name from `--tokens-file`, `null` when the server needs no token), `method`
//! (the JSON-RPC method; `water.state` for GET /cell, whose params are the ones the route built;
//! `GET /site/NAME` with the query pairs; `POST /columns` with the frame's JSON header),
//! `params` (as received; `null` when absent, the raw text as a string when it is not JSON),
//! `result_digest` (FNV-1a 64-bit hex of the result JSON text, or of the response body of
//! POST /columns; `null` on error), `error_code`
//! (`null` on success), `version` (steamcell), `formulation` (the `formulation` param, else the
//! default "IAPWS-IF97") and `validation_digest` (the built-in validation run's digest).
//!
//! Invariant: a line is written whole under one lock and flushed before the call answers, so
//! the file never holds a partial line from this process; audit I/O failures are logged, never
//! fail the call. No token (only its name), header or address is recorded.

use super::CallParams;
use serde_json::{json, Value};
use std::fs::{File, OpenOptions};
use std::io::Write;
use std::path::Path;
use std::sync::{Arc, Mutex};

/// Opens (creating, appending) the audit file, for [`crate::api::ServerCtx::with_audit`].
pub fn open(path: &Path) -> std::io::Result<File> {
    OpenOptions::new().create(true).append(true).open(path)
}

/// A call's answer as its audit digest sees it: FNV-1a 64 of its bytes on the wire.
pub trait Digest {
    /// The digest of the answer.
    fn digest(&self) -> u64;

    /// The rows and failed rows of a bulk answer (`water.batch`'s result, a `/columns` frame),
    /// for the metrics; `None` for any other answer.
    fn rows(&self) -> Option<(u64, u64)> {
        None
    }
}

fn rows_of(v: &Value) -> Option<(u64, u64)> {
    Some((v.get("rows")?.as_u64()?, v.get("failed")?.as_u64()?))
}

impl Digest for Value {
    fn digest(&self) -> u64 {
        fnv1a64(self.to_string().as_bytes())
    }

    fn rows(&self) -> Option<(u64, u64)> {
        rows_of(self)
    }
}

impl Digest for Arc<Value> {
    fn digest(&self) -> u64 {
        self.as_ref().digest()
    }

    fn rows(&self) -> Option<(u64, u64)> {
        rows_of(self)
    }
}

impl Digest for Vec<u8> {
    fn digest(&self) -> u64 {
        fnv1a64(self)
    }

    fn rows(&self) -> Option<(u64, u64)> {
        let header = crate::api::columns::header_text(self)?;
        rows_of(&serde_json::from_str(header).ok()?)
    }
}

/// FNV-1a, 64 bits, of `bytes`.
pub fn fnv1a64(bytes: &[u8]) -> u64 {
    let mut h = 0xcbf2_9ce4_8422_2325u64;
    for b in bytes {
        h ^= u64::from(*b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    h
}

pub use crate::api::clock::{now_rfc3339, rfc3339_utc};

/// The audit line of one call (without the newline).
pub fn line<T: Digest>(
    request_id: &str,
    method: &str,
    token: Option<&str>,
    params: CallParams<'_>,
    result: Result<&T, i64>,
) -> String {
    let params: Value = match params {
        CallParams::Absent => Value::Null,
        CallParams::Text(t) => {
            serde_json::from_str(t).unwrap_or_else(|_| Value::String(t.to_string()))
        }
        CallParams::Json(v) => v.clone(),
    };
    let formulation = params
        .get("formulation")
        .and_then(Value::as_str)
        .unwrap_or("IAPWS-IF97")
        .to_string();
    let (digest, code) = match result {
        Ok(v) => (Value::String(format!("{:016x}", v.digest())), Value::Null),
        Err(c) => (Value::Null, json!(c)),
    };
    json!({
        "time": now_rfc3339(),
        "request_id": request_id,
        "token": token,
        "method": method,
        "params": params,
        "result_digest": digest,
        "error_code": code,
        "version": env!("CARGO_PKG_VERSION"),
        "formulation": formulation,
        "validation_digest": crate::api::validation_digest(),
    })
    .to_string()
}

/// Appends the line of one call to the audit `file`.
pub fn record<T: Digest>(
    file: &Mutex<File>,
    request_id: &str,
    method: &str,
    token: Option<&str>,
    params: CallParams<'_>,
    result: Result<&T, i64>,
) {
    let mut text = line(request_id, method, token, params, result);
    text.push('\n');
    let mut f = file.lock().unwrap_or_else(|e| e.into_inner());
    if let Err(e) = f.write_all(text.as_bytes()).and_then(|()| f.flush()) {
        tracing::error!("audit file write failed: {e}");
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fnv1a_known_values() {
        // FNV-1a 64 offset basis and the digest of "a" (FNV reference values, from memory).
        assert_eq!(fnv1a64(b""), 0xcbf2_9ce4_8422_2325);
        assert_eq!(fnv1a64(b"a"), 0xaf63_dc4c_8601_ec8c);
    }

    #[test]
    fn line_fields() {
        let l = line::<Value>(
            "7.1",
            "water.state",
            Some("alice"),
            CallParams::Text(r#"{"p":1}"#),
            Err(1001),
        );
        let v: Value = serde_json::from_str(&l).unwrap();
        assert_eq!(v["method"], "water.state");
        assert_eq!(v["token"], "alice");
        assert_eq!(v["params"]["p"], 1);
        assert_eq!(v["error_code"], 1001);
        assert!(v["result_digest"].is_null());
        assert_eq!(v["formulation"], "IAPWS-IF97");
        let l = line(
            "8.2",
            "server.info",
            None,
            CallParams::Absent,
            Ok(&json!({"a": 1})),
        );
        let v: Value = serde_json::from_str(&l).unwrap();
        assert_eq!(v["result_digest"].as_str().unwrap().len(), 16);
        assert!(v["error_code"].is_null());
        assert!(v["token"].is_null());
    }
}
