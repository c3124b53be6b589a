//! The audit trail of `steamcell serve --audit FILE`: one JSON line appended per call of the
//! server's call path ([`super::run_call`]): every JSON-RPC method call, and every GET /cell,
//! GET /site and POST /columns request that reaches it.
//!
//! Each line is an object with `time` (RFC 3339, UTC, milliseconds), `request_id`, `method`
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
//! fail the call. No token, header or address is recorded.

use super::CallParams;
use serde_json::{json, Value};
use std::fs::{File, OpenOptions};
use std::io::Write;
use std::path::Path;
use std::sync::{Arc, Mutex};
use std::time::{SystemTime, UNIX_EPOCH};

/// Opens (creating, appending) the audit file, for [`crate::api::ServerCtx::with_audit`].
pub fn open(path: &Path) -> std::io::Result<File> {
    OpenOptions::new().create(true).append(true).open(path)
}

/// A call's answer as its audit digest sees it: FNV-1a 64 of its bytes on the wire.
pub trait Digest {
    /// The digest of the answer.
    fn digest(&self) -> u64;
}

impl Digest for Value {
    fn digest(&self) -> u64 {
        fnv1a64(self.to_string().as_bytes())
    }
}

impl Digest for Arc<Value> {
    fn digest(&self) -> u64 {
        self.as_ref().digest()
    }
}

impl Digest for Vec<u8> {
    fn digest(&self) -> u64 {
        fnv1a64(self)
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

/// Civil date (year, month, day) of a day count since 1970-01-01 (proleptic Gregorian).
fn civil_from_days(z: i64) -> (i64, u32, u32) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let y = yoe + era * 400;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    (if m <= 2 { y + 1 } else { y }, m, d)
}

/// RFC 3339 UTC text with milliseconds of a time given as milliseconds since the Unix epoch.
pub fn rfc3339_utc(ms_since_epoch: i64) -> String {
    let secs = ms_since_epoch.div_euclid(1000);
    let ms = ms_since_epoch.rem_euclid(1000);
    let days = secs.div_euclid(86_400);
    let sod = secs.rem_euclid(86_400);
    let (y, m, d) = civil_from_days(days);
    format!(
        "{y:04}-{m:02}-{d:02}T{:02}:{:02}:{:02}.{ms:03}Z",
        sod / 3600,
        (sod / 60) % 60,
        sod % 60
    )
}

/// Now, as RFC 3339 UTC text.
pub fn now_rfc3339() -> String {
    let ms = SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .map(|d| d.as_millis() as i64)
        .unwrap_or(0);
    rfc3339_utc(ms)
}

/// The audit line of one call (without the newline).
pub fn line<T: Digest>(
    request_id: &str,
    method: &str,
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
    params: CallParams<'_>,
    result: Result<&T, i64>,
) {
    let mut text = line(request_id, method, params, result);
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
    fn rfc3339_known_instants() {
        // Unix epoch and 2000-02-29 (leap day): calendar arithmetic, common practice, no source.
        assert_eq!(rfc3339_utc(0), "1970-01-01T00:00:00.000Z");
        assert_eq!(rfc3339_utc(951_782_400_123), "2000-02-29T00:00:00.123Z");
        assert_eq!(rfc3339_utc(1_735_689_599_000), "2024-12-31T23:59:59.000Z");
    }

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
            CallParams::Text(r#"{"p":1}"#),
            Err(1001),
        );
        let v: Value = serde_json::from_str(&l).unwrap();
        assert_eq!(v["method"], "water.state");
        assert_eq!(v["params"]["p"], 1);
        assert_eq!(v["error_code"], 1001);
        assert!(v["result_digest"].is_null());
        assert_eq!(v["formulation"], "IAPWS-IF97");
        let l = line(
            "8.2",
            "server.info",
            CallParams::Absent,
            Ok(&json!({"a": 1})),
        );
        let v: Value = serde_json::from_str(&l).unwrap();
        assert_eq!(v["result_digest"].as_str().unwrap().len(), 16);
        assert!(v["error_code"].is_null());
    }
}
