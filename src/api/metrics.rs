//! The counters of one server and their Prometheus text exposition (`GET /metrics`).
//!
//! Kept in the server's [`ServerCtx`](super::ServerCtx), never in globals: calls and errors by
//! method and error code, call latency histograms by method (fixed buckets), rows of the bulk
//! paths, refusals by limit, access refusals by reason, TLS handshake failures, connections,
//! token-file reloads. Gauges read at exposition time: calls in flight, open connections,
//! tokens in force, uptime, and the build as the labels of `steamcell_build_info`.
//!
//! Units: seconds (latency, uptime), counts.
//!
//! Format: the Prometheus text exposition format 0.0.4 (`text/plain; version=0.0.4`): one
//! `# HELP` and one `# TYPE` line per family before its samples, counters named `_total`,
//! histograms as cumulative `_bucket{le="..."}` samples ending with `le="+Inf"`, then `_sum`
//! and `_count`; label values escape `\`, `"` and line feeds ([`escape_label`]).
//!
//! Invariant: recording a call is a handful of relaxed atomic additions on fixed arrays (no
//! lock, no allocation); the method index is a hash lookup in a map built once.

use super::limits::what;
use super::{ServerCtx, ERROR_CODES};
use std::collections::HashMap;
use std::fmt::Write as _;
use std::sync::atomic::{AtomicU64, Ordering};
use std::time::{Duration, SystemTime, UNIX_EPOCH};

/// Upper bounds of the latency buckets, seconds (the `le` labels; `+Inf` follows).
pub const BUCKETS_S: [f64; 16] = [
    0.0001, 0.00025, 0.0005, 0.001, 0.0025, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1.0, 2.5,
    5.0, 10.0,
];

/// The call names metrics are kept under besides the registry's methods (`GET /site/NAME`
/// counts as `GET /site`).
pub const ROUTE_NAMES: [&str; 3] = ["GET /site", "GET /validation", "POST /columns"];

/// The name under which a call of the call path is counted: its method, `GET /site` for every
/// site, `other` for a name no family knows.
fn family_name(call_name: &str) -> &str {
    if call_name.starts_with("GET /site") {
        "GET /site"
    } else {
        call_name
    }
}

/// The limits whose refusals are counted, by `data.what`.
const LIMITS: [&str; 6] = [
    what::REQUEST_BODY_BYTES,
    what::BATCH_CALLS,
    what::JSON_DEPTH,
    what::CALLS_IN_FLIGHT,
    what::BODY_TIME,
    what::ANSWER_TIME,
];

/// Why the door refused a request (or a call), for `steamcell_access_denied_total{reason}`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Denied {
    /// No token, or an unknown one (401).
    Token,
    /// A known token past its expiry (401).
    Expired,
    /// A `Host` that does not name the server (403).
    Host,
    /// A cross-origin request from an origin not allowed (403).
    Origin,
    /// A call the token may not make: method not allowed, or revoked or expired since (403 /
    /// error 1010).
    Forbidden,
}

impl Denied {
    const ALL: [Denied; 5] = [
        Denied::Token,
        Denied::Expired,
        Denied::Host,
        Denied::Origin,
        Denied::Forbidden,
    ];

    fn label(self) -> &'static str {
        match self {
            Denied::Token => "token",
            Denied::Expired => "token_expired",
            Denied::Host => "host",
            Denied::Origin => "origin",
            Denied::Forbidden => "forbidden",
        }
    }
}

/// Why a TLS connection never reached HTTP.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TlsFailure {
    /// The handshake failed (wrong CA, protocol mismatch, timeout).
    Handshake,
    /// The client spoke plain HTTP to the TLS port.
    PlainHttp,
}

#[derive(Debug)]
struct MethodStats {
    calls: AtomicU64,
    /// Per entry of [`ERROR_CODES`], then one for any other code.
    errors: Vec<AtomicU64>,
    /// Per bucket of [`BUCKETS_S`] (not cumulative), then the overflow (+Inf).
    buckets: [AtomicU64; BUCKETS_S.len() + 1],
    sum_ns: AtomicU64,
    rows: AtomicU64,
    rows_failed: AtomicU64,
}

impl MethodStats {
    fn new() -> MethodStats {
        MethodStats {
            calls: AtomicU64::new(0),
            errors: (0..=ERROR_CODES.len()).map(|_| AtomicU64::new(0)).collect(),
            buckets: std::array::from_fn(|_| AtomicU64::new(0)),
            sum_ns: AtomicU64::new(0),
            rows: AtomicU64::new(0),
            rows_failed: AtomicU64::new(0),
        }
    }
}

fn add(a: &AtomicU64, n: u64) {
    a.fetch_add(n, Ordering::Relaxed);
}

fn get(a: &AtomicU64) -> u64 {
    a.load(Ordering::Relaxed)
}

/// The counters of one server.
#[derive(Debug)]
pub struct Metrics {
    names: Vec<&'static str>,
    index: HashMap<&'static str, usize>,
    stats: Vec<MethodStats>,
    refusals: [AtomicU64; LIMITS.len() + 1],
    denied: [AtomicU64; Denied::ALL.len()],
    tls: [AtomicU64; 2],
    connections_total: AtomicU64,
    reloads_ok: AtomicU64,
    reloads_failed: AtomicU64,
}

impl Default for Metrics {
    fn default() -> Metrics {
        Metrics::new()
    }
}

impl Metrics {
    /// Zeroed counters for every registered method and route.
    pub fn new() -> Metrics {
        let mut names: Vec<&'static str> = super::registry().iter().map(|m| m.name).collect();
        names.extend(ROUTE_NAMES);
        names.push("other");
        let index = names.iter().enumerate().map(|(i, n)| (*n, i)).collect();
        let stats = names.iter().map(|_| MethodStats::new()).collect();
        Metrics {
            names,
            index,
            stats,
            refusals: std::array::from_fn(|_| AtomicU64::new(0)),
            denied: std::array::from_fn(|_| AtomicU64::new(0)),
            tls: std::array::from_fn(|_| AtomicU64::new(0)),
            connections_total: AtomicU64::new(0),
            reloads_ok: AtomicU64::new(0),
            reloads_failed: AtomicU64::new(0),
        }
    }

    fn stats(&self, call_name: &str) -> &MethodStats {
        let i = self
            .index
            .get(family_name(call_name))
            .copied()
            .unwrap_or(self.names.len() - 1);
        &self.stats[i]
    }

    /// Records one call of the call path: its name, its error code (`None` on success) and
    /// how long it took.
    pub fn call(&self, call_name: &str, error: Option<i64>, elapsed: Duration) {
        let s = self.stats(call_name);
        add(&s.calls, 1);
        if let Some(code) = error {
            let i = ERROR_CODES
                .iter()
                .position(|(c, _, _)| *c == code)
                .unwrap_or(ERROR_CODES.len());
            add(&s.errors[i], 1);
        }
        let secs = elapsed.as_secs_f64();
        let b = BUCKETS_S
            .iter()
            .position(|le| secs <= *le)
            .unwrap_or(BUCKETS_S.len());
        add(&s.buckets[b], 1);
        add(
            &s.sum_ns,
            u64::try_from(elapsed.as_nanos()).unwrap_or(u64::MAX),
        );
    }

    /// Records the rows of a bulk call (`water.batch`, `POST /columns`).
    pub fn rows(&self, call_name: &str, rows: u64, failed: u64) {
        let s = self.stats(call_name);
        add(&s.rows, rows);
        add(&s.rows_failed, failed);
    }

    /// Records a refusal by a limit (`data.what` of error 1008).
    pub fn refusal(&self, limit_what: &str) {
        let i = LIMITS
            .iter()
            .position(|w| *w == limit_what)
            .unwrap_or(LIMITS.len());
        add(&self.refusals[i], 1);
    }

    /// Records an access refusal.
    pub fn denied(&self, why: Denied) {
        let i = Denied::ALL.iter().position(|d| *d == why).unwrap_or(0);
        add(&self.denied[i], 1);
    }

    /// Records a TLS connection that never reached HTTP.
    pub fn tls_failure(&self, why: TlsFailure) {
        add(&self.tls[usize::from(why == TlsFailure::PlainHttp)], 1);
    }

    /// Records an accepted connection.
    pub fn connection_opened(&self) {
        add(&self.connections_total, 1);
    }

    /// Records a reload of the tokens file.
    pub fn reload(&self, ok: bool) {
        add(
            if ok {
                &self.reloads_ok
            } else {
                &self.reloads_failed
            },
            1,
        );
    }

    /// Calls recorded under `call_name` so far.
    pub fn calls(&self, call_name: &str) -> u64 {
        get(&self.stats(call_name).calls)
    }
}

/// A label value with `\`, `"` and line feeds escaped.
pub fn escape_label(value: &str) -> String {
    let mut out = String::with_capacity(value.len());
    for c in value.chars() {
        match c {
            '\\' => out.push_str("\\\\"),
            '"' => out.push_str("\\\""),
            '\n' => out.push_str("\\n"),
            c => out.push(c),
        }
    }
    out
}

/// A sample value as the format writes it (`+Inf`, `-Inf`, `NaN`, else Rust's shortest
/// round-trip decimal).
fn number(v: f64) -> String {
    if v.is_nan() {
        "NaN".to_string()
    } else if v == f64::INFINITY {
        "+Inf".to_string()
    } else if v == f64::NEG_INFINITY {
        "-Inf".to_string()
    } else {
        format!("{v}")
    }
}

fn family(out: &mut String, name: &str, kind: &str, help: &str) {
    let help = help.replace('\\', "\\\\").replace('\n', "\\n");
    let _ = writeln!(out, "# HELP {name} {help}");
    let _ = writeln!(out, "# TYPE {name} {kind}");
}

fn sample(out: &mut String, name: &str, labels: &[(&str, &str)], value: f64) {
    out.push_str(name);
    if !labels.is_empty() {
        out.push('{');
        for (i, (k, v)) in labels.iter().enumerate() {
            if i > 0 {
                out.push(',');
            }
            let _ = write!(out, "{k}=\"{}\"", escape_label(v));
        }
        out.push('}');
    }
    let _ = writeln!(out, " {}", number(value));
}

/// The content type of the exposition.
pub const CONTENT_TYPE: &str = "text/plain; version=0.0.4; charset=utf-8";

/// The exposition of `ctx`'s counters (see the module doc).
pub fn exposition(ctx: &ServerCtx) -> String {
    let m = ctx.metrics();
    let mut out = String::with_capacity(16 * 1024);
    let build = super::record::build_info();
    let formulations = super::server_methods::FORMULATIONS
        .iter()
        .map(|(n, _)| *n)
        .collect::<Vec<_>>()
        .join(",");
    let digest = super::validation_digest();
    family(
        &mut out,
        "steamcell_build_info",
        "gauge",
        "The running build: version, formulations, validation digest (as server.info), git commit, target and profile; always 1.",
    );
    sample(
        &mut out,
        "steamcell_build_info",
        &[
            ("version", env!("CARGO_PKG_VERSION")),
            ("formulation", &formulations),
            ("digest", &digest),
            ("commit", build.commit),
            ("target", build.target),
            ("profile", build.profile),
        ],
        1.0,
    );
    family(
        &mut out,
        "steamcell_start_time_seconds",
        "gauge",
        "Start time of the server, seconds since the Unix epoch.",
    );
    let now = SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .map(|d| d.as_secs_f64())
        .unwrap_or(0.0);
    let uptime = ctx.uptime_s();
    sample(
        &mut out,
        "steamcell_start_time_seconds",
        &[],
        (now - uptime).floor(),
    );
    family(
        &mut out,
        "steamcell_uptime_seconds",
        "gauge",
        "Seconds since the server started.",
    );
    sample(&mut out, "steamcell_uptime_seconds", &[], uptime);

    family(
        &mut out,
        "steamcell_calls_total",
        "counter",
        "Method calls run through the call path, by method (GET /cell counts as water.state; GET /site and POST /columns under their route).",
    );
    for (name, s) in m.names.iter().zip(&m.stats) {
        sample(
            &mut out,
            "steamcell_calls_total",
            &[("method", name)],
            get(&s.calls) as f64,
        );
    }
    family(
        &mut out,
        "steamcell_call_errors_total",
        "counter",
        "Calls that answered an error, by method and error code (only pairs seen so far).",
    );
    for (name, s) in m.names.iter().zip(&m.stats) {
        for (i, c) in s.errors.iter().enumerate() {
            let n = get(c);
            if n == 0 {
                continue;
            }
            let code = ERROR_CODES
                .get(i)
                .map_or("other".to_string(), |(c, _, _)| c.to_string());
            sample(
                &mut out,
                "steamcell_call_errors_total",
                &[("method", name), ("code", &code)],
                n as f64,
            );
        }
    }
    family(
        &mut out,
        "steamcell_call_duration_seconds",
        "histogram",
        "Time a call took in the call path (the computation, without transport), by method (only methods called so far).",
    );
    let les: Vec<String> = BUCKETS_S.iter().map(|b| number(*b)).collect();
    for (name, s) in m.names.iter().zip(&m.stats) {
        let counts: Vec<u64> = s.buckets.iter().map(get).collect();
        let total: u64 = counts.iter().sum();
        if total == 0 {
            continue;
        }
        let mut cumulative = 0u64;
        for (le, c) in les.iter().zip(&counts) {
            cumulative += c;
            sample(
                &mut out,
                "steamcell_call_duration_seconds_bucket",
                &[("method", name), ("le", le)],
                cumulative as f64,
            );
        }
        sample(
            &mut out,
            "steamcell_call_duration_seconds_bucket",
            &[("method", name), ("le", "+Inf")],
            total as f64,
        );
        sample(
            &mut out,
            "steamcell_call_duration_seconds_sum",
            &[("method", name)],
            get(&s.sum_ns) as f64 * 1e-9,
        );
        sample(
            &mut out,
            "steamcell_call_duration_seconds_count",
            &[("method", name)],
            total as f64,
        );
    }
    family(
        &mut out,
        "steamcell_rows_total",
        "counter",
        "Rows computed by the bulk paths (water.batch, POST /columns), failed rows included.",
    );
    for route in ["water.batch", "POST /columns"] {
        sample(
            &mut out,
            "steamcell_rows_total",
            &[("method", route)],
            get(&m.stats(route).rows) as f64,
        );
    }
    family(
        &mut out,
        "steamcell_rows_failed_total",
        "counter",
        "Rows of the bulk paths that answered an error instead of a state.",
    );
    for route in ["water.batch", "POST /columns"] {
        sample(
            &mut out,
            "steamcell_rows_failed_total",
            &[("method", route)],
            get(&m.stats(route).rows_failed) as f64,
        );
    }
    family(
        &mut out,
        "steamcell_calls_in_flight",
        "gauge",
        "Method calls computing now (limit: --max-in-flight).",
    );
    sample(
        &mut out,
        "steamcell_calls_in_flight",
        &[],
        ctx.in_flight() as f64,
    );
    family(
        &mut out,
        "steamcell_connections_open",
        "gauge",
        "HTTP and WebSocket connections open now.",
    );
    sample(
        &mut out,
        "steamcell_connections_open",
        &[],
        ctx.connections() as f64,
    );
    family(
        &mut out,
        "steamcell_connections_total",
        "counter",
        "Connections accepted since start (TLS connections once their handshake succeeded).",
    );
    sample(
        &mut out,
        "steamcell_connections_total",
        &[],
        get(&m.connections_total) as f64,
    );
    family(
        &mut out,
        "steamcell_limit_refusals_total",
        "counter",
        "Requests or calls refused by a limit (error 1008), by the limit's data.what.",
    );
    for (i, what) in LIMITS.iter().chain(std::iter::once(&"other")).enumerate() {
        sample(
            &mut out,
            "steamcell_limit_refusals_total",
            &[("limit", what)],
            get(&m.refusals[i]) as f64,
        );
    }
    family(
        &mut out,
        "steamcell_access_denied_total",
        "counter",
        "Requests refused at the door or calls refused for their token, by reason.",
    );
    for (i, d) in Denied::ALL.iter().enumerate() {
        sample(
            &mut out,
            "steamcell_access_denied_total",
            &[("reason", d.label())],
            get(&m.denied[i]) as f64,
        );
    }
    family(
        &mut out,
        "steamcell_tls_failures_total",
        "counter",
        "TLS connections that never reached HTTP: a failed handshake, or plain HTTP sent to the TLS port.",
    );
    for (i, reason) in ["handshake", "plain_http"].iter().enumerate() {
        sample(
            &mut out,
            "steamcell_tls_failures_total",
            &[("reason", reason)],
            get(&m.tls[i]) as f64,
        );
    }
    family(
        &mut out,
        "steamcell_tokens",
        "gauge",
        "Tokens in force (0: no token required).",
    );
    sample(
        &mut out,
        "steamcell_tokens",
        &[],
        ctx.tokens().current().len() as f64,
    );
    family(
        &mut out,
        "steamcell_token_reloads_total",
        "counter",
        "Reloads of the tokens file (SIGHUP), by result; a failed reload keeps the tokens in force.",
    );
    sample(
        &mut out,
        "steamcell_token_reloads_total",
        &[("result", "ok")],
        get(&m.reloads_ok) as f64,
    );
    sample(
        &mut out,
        "steamcell_token_reloads_total",
        &[("result", "error")],
        get(&m.reloads_failed) as f64,
    );
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn label_escaping() {
        // Prometheus text format: backslash, double quote and line feed are escaped.
        assert_eq!(escape_label(r#"a\b"c"#), r#"a\\b\"c"#);
        assert_eq!(escape_label("x\ny"), "x\\ny");
        assert_eq!(escape_label("plain"), "plain");
    }

    #[test]
    fn calls_fill_the_histogram() {
        let m = Metrics::new();
        m.call("water.state", None, Duration::from_micros(50));
        m.call("water.state", Some(1001), Duration::from_millis(3));
        m.call("GET /site/mill", None, Duration::from_secs(20));
        m.call("no.such", None, Duration::from_secs(0));
        assert_eq!(m.calls("water.state"), 2);
        assert_eq!(m.calls("GET /site/other"), 1);
        assert_eq!(m.calls("other"), 1);
        let s = m.stats("water.state");
        assert_eq!(get(&s.buckets[0]), 1, "50 us <= 100 us");
        assert_eq!(get(&s.buckets[5]), 1, "3 ms <= 5 ms");
        assert_eq!(get(&m.stats("GET /site").buckets[BUCKETS_S.len()]), 1);
        let i = ERROR_CODES.iter().position(|(c, _, _)| *c == 1001).unwrap();
        assert_eq!(get(&s.errors[i]), 1);
    }
}
