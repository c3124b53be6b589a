//! The HTTP front of `steamcell serve`, as two tower layers in front of the jsonrpsee service.
//!
//! [`GuardLayer`] (outermost) decides whether a request may reach anything at all:
//!
//! - `Host` (or the HTTP/2 authority) must name this server: `localhost`, a loopback address,
//!   the listen address (any IP literal when listening on 0.0.0.0 or ::), or a name given with
//!   `--allow-host`; otherwise 403 (DNS-rebinding defence).
//! - An `Origin` header must be one given with `--allow-origin`; otherwise 403. CORS headers
//!   are sent only for such an origin, and only then is a preflight `OPTIONS` answered (204).
//! - With a token, every request except `GET /health` and an allowed preflight needs
//!   `Authorization: Bearer <token>` (compared in constant time); otherwise 401.
//! - A POST must declare `Content-Type: application/json`; otherwise 415.
//! - A POST body is read under the size limit (413) and the time limit (408), and its `[`/`{`
//!   nesting is scanned before any parsing (deeper than the limit: JSON-RPC error 1008).
//! - The whole request must be answered within the time limit; otherwise 503 with JSON-RPC
//!   error 1008. WebSocket upgrades pass the Host/Origin/token checks, then live on unlimited
//!   in time (each message is bounded in size by jsonrpsee).
//!
//! Every request gets a request id ([`RequestId`], in the request extensions, logged and
//! written to the audit file); refusals are logged at `info` with the reason, never with the
//! token.
//!
//! [`GetRoutesLayer`] then serves plain HTTP GET routes beside JSON-RPC on the same port:
//!
//! - `GET /health` -> `ok` (text/plain)
//! - `GET /schema` -> the OpenRPC document (application/json)
//! - `GET /cell/{quantity}?{name=value...}` -> the bare number (text/plain), see
//!   [`crate::api::cell`]; failures answer 400/404/422/500 with a one-line reason (text/plain).
//! - `GET /site/{name}/{quantity}?{path=value...}` -> a number of a registered site's balance
//!   (text/plain), see [`crate::api::site`]; failures as for `/cell`.
//! - `GET /addin/...` -> the Excel add-in's files, public like `/health` (see
//!   [`super::addin`], which also adds the private-network answer to an allowed preflight).
//!
//! Invariant: anything else (POST, WebSocket upgrades, other paths) passes to jsonrpsee
//! untouched.

use crate::api::{self, cell, codes, counters};
use http_body_util::BodyExt;
use jsonrpsee::core::BoxError;
use jsonrpsee::server::{HttpBody, HttpRequest, HttpResponse};
use serde_json::json;
use std::future::Future;
use std::net::{IpAddr, SocketAddr};
use std::pin::Pin;
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::Arc;
use std::task::{Context, Poll};
use std::time::{Duration, Instant};
use tower::{Layer, Service};

/// The id of one HTTP request (also carried by the WebSocket calls of an upgraded connection).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct RequestId(pub u64);

static NEXT_REQUEST: AtomicU64 = AtomicU64::new(1);

/// Compares two byte strings in time that depends only on the length of `expected`.
pub fn constant_time_eq(given: &[u8], expected: &[u8]) -> bool {
    let mut diff = u8::from(given.len() != expected.len());
    for (i, e) in expected.iter().enumerate() {
        let g = given.get(i).copied().unwrap_or(0);
        diff |= std::hint::black_box(g ^ e);
    }
    std::hint::black_box(diff) == 0
}

/// True when the `[`/`{` nesting of `body`, outside JSON strings, goes deeper than `max`.
pub fn nesting_exceeds(body: &[u8], max: u32) -> bool {
    let mut depth = 0u32;
    let mut in_str = false;
    let mut esc = false;
    for &b in body {
        if in_str {
            if esc {
                esc = false;
            } else if b == b'\\' {
                esc = true;
            } else if b == b'"' {
                in_str = false;
            }
        } else {
            match b {
                b'"' => in_str = true,
                b'[' | b'{' => {
                    depth += 1;
                    if depth > max {
                        return true;
                    }
                }
                b']' | b'}' => depth = depth.saturating_sub(1),
                _ => {}
            }
        }
    }
    false
}

/// The number of elements of a top-level JSON array (a batch), by a byte scan counting commas
/// at depth 1 outside strings; `None` when the body is not an array.
pub fn batch_len(body: &[u8]) -> Option<usize> {
    let start = body.iter().position(|b| !b.is_ascii_whitespace())?;
    if body[start] != b'[' {
        return None;
    }
    let mut depth = 0u32;
    let mut in_str = false;
    let mut esc = false;
    let mut commas = 0usize;
    let mut any = false;
    for &b in &body[start..] {
        if in_str {
            if esc {
                esc = false;
            } else if b == b'\\' {
                esc = true;
            } else if b == b'"' {
                in_str = false;
            }
            continue;
        }
        match b {
            b'"' => {
                in_str = true;
                any = true;
            }
            b'[' | b'{' => {
                if depth >= 1 {
                    any = true;
                }
                depth += 1;
            }
            b']' | b'}' => depth = depth.saturating_sub(1),
            b',' if depth == 1 => commas += 1,
            b if depth >= 1 && !b.is_ascii_whitespace() => any = true,
            _ => {}
        }
    }
    Some(if any { commas + 1 } else { 0 })
}

/// The host part of a `Host` header value, lower-cased, without port and trailing dot;
/// IPv6 literals keep their brackets.
pub fn host_name(value: &str) -> String {
    let v = value.trim();
    let host = if v.starts_with('[') {
        match v.find(']') {
            Some(i) => &v[..=i],
            None => v,
        }
    } else {
        match v.rsplit_once(':') {
            Some((h, port)) if port.bytes().all(|b| b.is_ascii_digit()) => h,
            _ => v,
        }
    };
    host.trim_end_matches('.').to_ascii_lowercase()
}

fn ip_of_host(host: &str) -> Option<IpAddr> {
    host.trim_start_matches('[')
        .trim_end_matches(']')
        .parse::<IpAddr>()
        .ok()
}

/// What the guard enforces. Its `Debug` output never shows the token.
#[derive(Clone)]
pub struct GuardConfig {
    /// The bearer token, when one is required.
    pub token: Option<String>,
    /// Host names accepted besides localhost names and the listen address (lower case).
    pub allow_hosts: Vec<String>,
    /// Origins allowed for cross-origin requests (exact match, e.g. `https://a.example`).
    pub allow_origins: Vec<String>,
    /// The bound address.
    pub listen: SocketAddr,
    /// Largest request body, bytes.
    pub max_body_bytes: usize,
    /// Deepest `[`/`{` nesting of a request body.
    pub max_json_depth: u32,
    /// Most calls in one batch array.
    pub max_batch_requests: usize,
    /// Time limit of one request.
    pub request_timeout: Duration,
}

impl std::fmt::Debug for GuardConfig {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("GuardConfig")
            .field("token", &self.token.as_ref().map(|_| "<redacted>"))
            .field("allow_hosts", &self.allow_hosts)
            .field("allow_origins", &self.allow_origins)
            .field("listen", &self.listen)
            .field("max_body_bytes", &self.max_body_bytes)
            .field("max_json_depth", &self.max_json_depth)
            .field("max_batch_requests", &self.max_batch_requests)
            .field("request_timeout", &self.request_timeout)
            .finish()
    }
}

impl GuardConfig {
    /// True when a `Host` value names this server.
    pub fn host_allowed(&self, value: &str) -> bool {
        let host = host_name(value);
        if host == "localhost" || host.ends_with(".localhost") {
            return true;
        }
        if self.allow_hosts.iter().any(|h| host_name(h) == host) {
            return true;
        }
        match ip_of_host(&host) {
            Some(ip) => {
                ip.is_loopback() || ip == self.listen.ip() || self.listen.ip().is_unspecified()
            }
            None => false,
        }
    }

    fn origin_allowed(&self, origin: &str) -> bool {
        self.allow_origins.iter().any(|o| {
            o.trim_end_matches('/')
                .eq_ignore_ascii_case(origin.trim_end_matches('/'))
        })
    }

    fn token_ok(&self, req: &HttpRequest) -> bool {
        let Some(expected) = &self.token else {
            return true;
        };
        let given = req
            .headers()
            .get(http::header::AUTHORIZATION)
            .and_then(|v| v.to_str().ok())
            .and_then(|v| {
                let (scheme, rest) = v.trim().split_once(' ')?;
                scheme.eq_ignore_ascii_case("bearer").then(|| rest.trim())
            })
            .unwrap_or("");
        constant_time_eq(given.as_bytes(), expected.as_bytes())
    }
}

/// The layer that guards every request, see the module doc.
#[derive(Debug, Clone)]
pub struct GuardLayer {
    config: Arc<GuardConfig>,
}

impl GuardLayer {
    /// A guard enforcing `config`.
    pub fn new(config: GuardConfig) -> GuardLayer {
        GuardLayer {
            config: Arc::new(config),
        }
    }
}

impl<S> Layer<S> for GuardLayer {
    type Service = Guard<S>;

    /// Called once per accepted connection: the service counts the connection while it lives.
    fn layer(&self, inner: S) -> Guard<S> {
        Guard {
            inner,
            config: self.config.clone(),
            _conn: Arc::new(counters::ConnectionGuard::open()),
        }
    }
}

/// The service made by [`GuardLayer`] (one per connection).
#[derive(Debug, Clone)]
pub struct Guard<S> {
    inner: S,
    config: Arc<GuardConfig>,
    _conn: Arc<counters::ConnectionGuard>,
}

fn refuse(status: u16, reason: String) -> HttpResponse {
    tracing::info!(status, "refused: {reason}");
    let mut r = text(status, reason);
    if status == 401 {
        r.headers_mut().insert(
            http::header::WWW_AUTHENTICATE,
            http::HeaderValue::from_static("Bearer"),
        );
    }
    r
}

fn refuse_b(status: u16, reason: String) -> Box<HttpResponse> {
    Box::new(refuse(status, reason))
}

fn rpc_refusal(status: u16, code: i64, message: String, what: &str, limit: f64) -> HttpResponse {
    tracing::info!(status, code, "refused: {message}");
    counters::count_refused();
    let body = json!({
        "jsonrpc": "2.0",
        "error": {
            "code": code,
            "message": message,
            "data": { "kind": api::error_kind(code).unwrap_or("limit_exceeded"), "what": what, "limit": limit },
        },
        "id": null,
    })
    .to_string();
    http::Response::builder()
        .status(status)
        .header(
            http::header::CONTENT_TYPE,
            "application/json; charset=utf-8",
        )
        .body(HttpBody::from(body))
        .unwrap_or_else(|_| http::Response::new(HttpBody::from("internal error")))
}

/// jsonrpsee answers a bare `null` to a request object it cannot read (e.g. an object as id);
/// JSON-RPC 2.0 wants an Invalid Request error there.
async fn fix_null_answer(resp: HttpResponse) -> HttpResponse {
    use hyper::body::Body as _;
    if resp.body().size_hint().exact() != Some(4) {
        return resp;
    }
    let (parts, body) = resp.into_parts();
    let bytes = match body.collect().await {
        Ok(c) => c.to_bytes(),
        Err(_) => return http::Response::from_parts(parts, HttpBody::from("")),
    };
    if &bytes[..] == b"null" {
        return rpc_refusal(
            200,
            codes::INVALID_REQUEST,
            "Invalid request: not a JSON-RPC 2.0 request object (jsonrpc \"2.0\", method, \
             id a string, number or null)"
                .to_string(),
            "request object",
            0.0,
        );
    }
    http::Response::from_parts(parts, HttpBody::from(bytes.to_vec()))
}

fn is_json_content_type(req: &HttpRequest) -> bool {
    has_content_type(req, "application/json")
}

fn has_content_type(req: &HttpRequest, want: &str) -> bool {
    req.headers()
        .get(http::header::CONTENT_TYPE)
        .and_then(|v| v.to_str().ok())
        .and_then(|v| v.split(';').next())
        .is_some_and(|m| m.trim().eq_ignore_ascii_case(want))
}

fn add_cors(resp: &mut HttpResponse, origin: &str) {
    if let Ok(v) = http::HeaderValue::from_str(origin) {
        let h = resp.headers_mut();
        h.insert(http::header::ACCESS_CONTROL_ALLOW_ORIGIN, v);
        h.insert(http::header::VARY, http::HeaderValue::from_static("Origin"));
    }
}

fn preflight(origin: &str) -> HttpResponse {
    let mut r = http::Response::builder()
        .status(204)
        .header(
            http::header::ACCESS_CONTROL_ALLOW_METHODS,
            "POST, GET, OPTIONS",
        )
        .header(
            http::header::ACCESS_CONTROL_ALLOW_HEADERS,
            "content-type, authorization",
        )
        .header(http::header::ACCESS_CONTROL_MAX_AGE, "600")
        .body(HttpBody::from(""))
        .unwrap_or_else(|_| http::Response::new(HttpBody::from("")));
    add_cors(&mut r, origin);
    r
}

/// The checks that need no body: `Err` is the refusal to send.
fn admit(config: &GuardConfig, req: &HttpRequest) -> Result<Option<String>, Box<HttpResponse>> {
    let host = req
        .headers()
        .get(http::header::HOST)
        .and_then(|v| v.to_str().ok())
        .map(str::to_string)
        .or_else(|| req.uri().authority().map(|a| a.to_string()));
    match host {
        None => return Err(refuse_b(400, "missing Host header".to_string())),
        Some(h) if !config.host_allowed(&h) => {
            return Err(refuse_b(
                403,
                format!(
                    "Host '{}' is not this server (add it with --allow-host)",
                    host_name(&h)
                ),
            ))
        }
        Some(_) => {}
    }
    let origin = match req.headers().get(http::header::ORIGIN) {
        None => None,
        // A page this server served itself (the add-in's files) calls it from its own origin.
        Some(v) if super::addin::is_same_origin(req, v.to_str().unwrap_or("")) => None,
        Some(v) => {
            let o = v.to_str().unwrap_or("").to_string();
            if !config.origin_allowed(&o) {
                return Err(refuse_b(
                    403,
                    format!(
                        "cross-origin request from '{o}' refused (allow it with --allow-origin)"
                    ),
                ));
            }
            Some(o)
        }
    };
    if req.method() == http::Method::OPTIONS {
        return match origin {
            Some(o) => {
                let mut answer = preflight(&o);
                super::addin::allow_private_network(req, &mut answer);
                Err(Box::new(answer))
            }
            None => Err(refuse_b(
                405,
                "OPTIONS is answered only for a CORS preflight".into(),
            )),
        };
    }
    let health = (req.method() == http::Method::GET || req.method() == http::Method::HEAD)
        && req.uri().path() == "/health";
    // The add-in's files hold no secret and a browser loads them without a token.
    let public = health || super::addin::is_addin_request(req);
    if !public && !config.token_ok(req) {
        let mut r = refuse(
            401,
            "missing or wrong token: send Authorization: Bearer <token>".to_string(),
        );
        // An allowed page may read the refusal (and tell its user to fix the token).
        if let Some(o) = &origin {
            add_cors(&mut r, o);
        }
        return Err(Box::new(r));
    }
    if req.method() == http::Method::POST {
        if req.uri().path() == "/columns" {
            if !has_content_type(req, api::columns::CONTENT_TYPE) {
                return Err(refuse_b(
                    415,
                    format!(
                        "unsupported Content-Type: POST /columns takes {}",
                        api::columns::CONTENT_TYPE
                    ),
                ));
            }
        } else if !is_json_content_type(req) {
            return Err(refuse_b(
                415,
                "unsupported Content-Type: send application/json".to_string(),
            ));
        }
    }
    Ok(origin)
}

impl<S> Service<HttpRequest> for Guard<S>
where
    S: Service<HttpRequest, Response = HttpResponse, Error = BoxError> + Clone + Send + 'static,
    S::Future: Send + 'static,
{
    type Response = HttpResponse;
    type Error = BoxError;
    type Future = BoxFuture<Result<HttpResponse, BoxError>>;

    fn poll_ready(&mut self, cx: &mut Context<'_>) -> Poll<Result<(), BoxError>> {
        self.inner.poll_ready(cx)
    }

    fn call(&mut self, mut req: HttpRequest) -> Self::Future {
        let id = NEXT_REQUEST.fetch_add(1, Ordering::Relaxed);
        let span =
            tracing::info_span!("request", id, method = %req.method(), path = %req.uri().path());
        let _enter = span.enter();
        let config = self.config.clone();
        let origin = match admit(&config, &req) {
            Ok(o) => o,
            Err(resp) => return Box::pin(async move { Ok(*resp) }),
        };
        req.extensions_mut().insert(RequestId(id));
        // The clone that was made ready goes into the future; a fresh clone stays.
        let clone = self.inner.clone();
        let mut inner = std::mem::replace(&mut self.inner, clone);
        if jsonrpsee::server::ws::is_upgrade_request(&req) || req.method() != http::Method::POST {
            return Box::pin(async move {
                let mut resp = inner.call(req).await?;
                if let Some(o) = origin {
                    add_cors(&mut resp, &o);
                }
                Ok(resp)
            });
        }
        let span = span.clone();
        let fut = async move {
            let started = Instant::now();
            let limit = config.request_timeout;
            // The bulk route carries raw columns: its body may hold two columns of the most
            // rows a batch may have.
            let columns_route = req.uri().path() == "/columns";
            let max = if columns_route {
                config
                    .max_body_bytes
                    .max(api::limits::max_batch_rows() * 16 + api::columns::MAX_HEADER + 4)
            } else {
                config.max_body_bytes
            };
            let declared = req
                .headers()
                .get(http::header::CONTENT_LENGTH)
                .and_then(|v| v.to_str().ok())
                .and_then(|v| v.parse::<u64>().ok());
            let too_big = || {
                rpc_refusal(
                    413,
                    codes::LIMIT_EXCEEDED,
                    format!("request body too large: limit {max} bytes"),
                    "request body bytes",
                    max as f64,
                )
            };
            if declared.is_some_and(|n| n > max as u64) {
                return Ok(too_big());
            }
            let (parts, body) = req.into_parts();
            let read = http_body_util::Limited::new(body, max).collect();
            let bytes = match tokio::time::timeout(limit, read).await {
                Err(_) => {
                    return Ok(rpc_refusal(
                        408,
                        codes::LIMIT_EXCEEDED,
                        format!(
                            "request body not received within the {} s time limit",
                            limit.as_secs_f64()
                        ),
                        "request timeout s",
                        limit.as_secs_f64(),
                    ))
                }
                Ok(Err(e)) => {
                    if e.downcast_ref::<http_body_util::LengthLimitError>()
                        .is_some()
                    {
                        return Ok(too_big());
                    }
                    return Ok(refuse(400, format!("request body could not be read: {e}")));
                }
                Ok(Ok(c)) => c.to_bytes(),
            };
            if columns_route {
                // A bulk request counts as a method call in flight, like every JSON-RPC call.
                let most = u64::from(api::limits::current().max_in_flight);
                let Some(running) = counters::InFlight::try_begin(most) else {
                    return Ok(rpc_refusal(
                        503,
                        codes::LIMIT_EXCEEDED,
                        format!(
                            "server busy: {most} method calls are in flight (the --max-in-flight limit); retry shortly"
                        ),
                        "method calls in flight",
                        most as f64,
                    ));
                };
                let left = limit.saturating_sub(started.elapsed());
                let job = tokio::task::spawn_blocking(move || {
                    let _running = running;
                    api::columns::columns(&bytes)
                });
                let mut resp = match tokio::time::timeout(left, job).await {
                    Ok(Ok(Ok(body))) => http::Response::builder()
                        .status(200)
                        .header(http::header::CONTENT_TYPE, api::columns::CONTENT_TYPE)
                        .body(HttpBody::from(body))
                        .unwrap_or_else(|_| http::Response::new(HttpBody::from("internal error"))),
                    Ok(Ok(Err(e))) => {
                        let status = if e.code == codes::LIMIT_EXCEEDED {
                            413
                        } else {
                            400
                        };
                        let body = serde_json::json!({"code": e.code, "message": e.message, "data": e.data});
                        http::Response::builder()
                            .status(status)
                            .header(
                                http::header::CONTENT_TYPE,
                                "application/json; charset=utf-8",
                            )
                            .body(HttpBody::from(body.to_string()))
                            .unwrap_or_else(|_| {
                                http::Response::new(HttpBody::from("internal error"))
                            })
                    }
                    Ok(Err(e)) => refuse(500, format!("internal error: {e}")),
                    Err(_) => rpc_refusal(
                        503,
                        codes::LIMIT_EXCEEDED,
                        format!(
                            "request not answered within the {} s time limit",
                            limit.as_secs_f64()
                        ),
                        "request timeout s",
                        limit.as_secs_f64(),
                    ),
                };
                if let Some(o) = origin {
                    add_cors(&mut resp, &o);
                }
                return Ok(resp);
            }
            if nesting_exceeds(&bytes, config.max_json_depth) {
                return Ok(rpc_refusal(
                    200,
                    codes::LIMIT_EXCEEDED,
                    format!(
                        "JSON nested deeper than {} levels of [ and {{",
                        config.max_json_depth
                    ),
                    "JSON nesting depth",
                    f64::from(config.max_json_depth),
                ));
            }
            if std::str::from_utf8(&bytes).is_err() {
                return Ok(rpc_refusal(
                    400,
                    codes::PARSE_ERROR,
                    "Parse error: the request body is not valid UTF-8".to_string(),
                    "UTF-8",
                    0.0,
                ));
            }
            if let Some(n) = batch_len(&bytes).filter(|n| *n > config.max_batch_requests) {
                return Ok(rpc_refusal(
                    200,
                    codes::LIMIT_EXCEEDED,
                    format!(
                        "batch of {n} calls exceeds the limit of {} calls",
                        config.max_batch_requests
                    ),
                    "calls in one batch",
                    config.max_batch_requests as f64,
                ));
            }
            let req = http::Request::from_parts(parts, HttpBody::from(bytes.to_vec()));
            let left = limit.saturating_sub(started.elapsed());
            let mut resp = match tokio::time::timeout(left, inner.call(req)).await {
                Ok(r) => fix_null_answer(r?).await,
                Err(_) => rpc_refusal(
                    503,
                    codes::LIMIT_EXCEEDED,
                    format!(
                        "request not answered within the {} s time limit",
                        limit.as_secs_f64()
                    ),
                    "request timeout s",
                    limit.as_secs_f64(),
                ),
            };
            if let Some(o) = origin {
                add_cors(&mut resp, &o);
            }
            Ok(resp)
        };
        Box::pin(tracing::Instrument::instrument(fut, span))
    }
}

/// The layer that adds the GET routes.
#[derive(Debug, Clone, Copy, Default)]
pub struct GetRoutesLayer;

impl<S> Layer<S> for GetRoutesLayer {
    type Service = GetRoutes<S>;

    fn layer(&self, inner: S) -> GetRoutes<S> {
        GetRoutes { inner }
    }
}

/// The service made by [`GetRoutesLayer`].
#[derive(Debug, Clone)]
pub struct GetRoutes<S> {
    inner: S,
}

type BoxFuture<T> = Pin<Box<dyn Future<Output = T> + Send + 'static>>;

/// A routed GET request: path and raw query.
#[derive(Debug, Clone, PartialEq, Eq)]
enum Route {
    Health,
    Schema,
    Cell {
        quantity: String,
        query: String,
    },
    Site {
        name: String,
        quantity: String,
        query: String,
    },
    NotFound(String),
}

fn route(path: &str, query: Option<&str>) -> Option<Route> {
    match path {
        "/health" => Some(Route::Health),
        "/schema" => Some(Route::Schema),
        p if p == "/cell" || p.starts_with("/cell/") => {
            let rest = p.strip_prefix("/cell/").unwrap_or("");
            if rest.is_empty() || rest.contains('/') {
                Some(Route::NotFound(format!(
                    "use GET /cell/{{quantity}}?name=value&name=value, not {p}"
                )))
            } else {
                let quantity = decode(rest);
                Some(Route::Cell {
                    quantity,
                    query: query.unwrap_or("").to_string(),
                })
            }
        }
        p if p == "/site" || p.starts_with("/site/") => {
            let rest = p.strip_prefix("/site/").unwrap_or("");
            let parts: Vec<&str> = rest.split('/').collect();
            match parts.as_slice() {
                [name, quantity] if !name.is_empty() && !quantity.is_empty() => Some(Route::Site {
                    name: decode(name),
                    quantity: decode(quantity),
                    query: query.unwrap_or("").to_string(),
                }),
                _ => Some(Route::NotFound(format!(
                    "use GET /site/{{name}}/{{quantity}}?path=value&path=value, not {p}; sites: {}",
                    {
                        let n = api::site::names();
                        if n.is_empty() {
                            "none registered (serve --site NAME=FILE)".to_string()
                        } else {
                            n.join(", ")
                        }
                    }
                ))),
            }
        }
        _ => None,
    }
}

/// A percent-decoded path segment.
fn decode(segment: &str) -> String {
    form_urlencoded::parse(format!("q={segment}").as_bytes())
        .next()
        .map(|(_, v)| v.into_owned())
        .unwrap_or_default()
}

fn text(status: u16, body: String) -> HttpResponse {
    http::Response::builder()
        .status(status)
        .header(http::header::CONTENT_TYPE, "text/plain; charset=utf-8")
        .body(HttpBody::from(body))
        .unwrap_or_else(|_| http::Response::new(HttpBody::from("internal error")))
}

fn json_body(body: String) -> HttpResponse {
    http::Response::builder()
        .status(200)
        .header(
            http::header::CONTENT_TYPE,
            "application/json; charset=utf-8",
        )
        .body(HttpBody::from(body))
        .unwrap_or_else(|_| http::Response::new(HttpBody::from("internal error")))
}

async fn answer(route: Route) -> HttpResponse {
    match route {
        Route::Health => text(200, "ok".to_string()),
        Route::Schema => json_body(api::openrpc::document_text()),
        Route::NotFound(reason) => text(404, reason),
        Route::Cell { quantity, query } => {
            let pairs = cell::pairs_from_query(&query);
            let job = tokio::task::spawn_blocking(move || cell::cell(&quantity, &pairs));
            match job.await {
                Ok(Ok(number)) => text(200, number),
                Ok(Err(e)) => text(e.status, e.reason),
                Err(e) => text(500, format!("internal error: {e}")),
            }
        }
        Route::Site {
            name,
            quantity,
            query,
        } => {
            let pairs = cell::pairs_from_query(&query);
            let job =
                tokio::task::spawn_blocking(move || api::site::site_cell(&name, &quantity, &pairs));
            match job.await {
                Ok(Ok(number)) => text(200, number),
                Ok(Err(e)) => text(e.status, e.reason),
                Err(e) => text(500, format!("internal error: {e}")),
            }
        }
    }
}

impl<S> Service<HttpRequest> for GetRoutes<S>
where
    S: Service<HttpRequest, Response = HttpResponse, Error = BoxError>,
    S::Future: Send + 'static,
{
    type Response = HttpResponse;
    type Error = BoxError;
    type Future = BoxFuture<Result<HttpResponse, BoxError>>;

    fn poll_ready(&mut self, cx: &mut Context<'_>) -> Poll<Result<(), BoxError>> {
        self.inner.poll_ready(cx)
    }

    fn call(&mut self, req: HttpRequest) -> Self::Future {
        let is_get = req.method() == http::Method::GET || req.method() == http::Method::HEAD;
        if is_get && !jsonrpsee::server::ws::is_upgrade_request(&req) {
            if let Some(r) = super::addin::answer(&req) {
                return Box::pin(async move { Ok(r) });
            }
            if let Some(r) = route(req.uri().path(), req.uri().query()) {
                return Box::pin(async move { Ok(answer(r).await) });
            }
        }
        Box::pin(self.inner.call(req))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn routes() {
        assert_eq!(route("/health", None), Some(Route::Health));
        assert_eq!(route("/schema", Some("x=1")), Some(Route::Schema));
        assert_eq!(
            route("/cell/h", Some("p=10%20MPa")),
            Some(Route::Cell {
                quantity: "h".into(),
                query: "p=10%20MPa".into()
            })
        );
        assert!(matches!(route("/cell/", None), Some(Route::NotFound(_))));
        assert!(matches!(route("/cell/h/x", None), Some(Route::NotFound(_))));
        assert_eq!(route("/", None), None);
        assert_eq!(route("/other", None), None);
    }

    #[test]
    fn constant_time_compare() {
        assert!(constant_time_eq(b"secret-token", b"secret-token"));
        assert!(!constant_time_eq(b"secret-tokem", b"secret-token"));
        assert!(!constant_time_eq(b"secret", b"secret-token"));
        assert!(!constant_time_eq(b"secret-token-longer", b"secret-token"));
        assert!(!constant_time_eq(b"", b"x"));
    }

    #[test]
    fn nesting_scan() {
        assert!(!nesting_exceeds(br#"{"a":[1,[2]]}"#, 3));
        assert!(nesting_exceeds(br#"{"a":[1,[2]]}"#, 2));
        // Brackets inside strings (and escaped quotes) do not count.
        assert!(!nesting_exceeds(br#"{"a":"[[[[\"[[[["}"#, 1));
        let deep = "[".repeat(100) + &"]".repeat(100);
        assert!(nesting_exceeds(deep.as_bytes(), 64));
        assert!(!nesting_exceeds(deep.as_bytes(), 100));
    }

    #[test]
    fn batch_lengths() {
        assert_eq!(batch_len(b"{}"), None);
        assert_eq!(batch_len(b" [ ] "), Some(0));
        assert_eq!(batch_len(b"[1]"), Some(1));
        assert_eq!(batch_len(br#"[{"a":[1,2,3]},{"b":"x,y"},3]"#), Some(3));
        assert_eq!(batch_len(br#"["\",", 1]"#), Some(2));
    }

    #[test]
    fn host_names() {
        assert_eq!(host_name("LocalHost:8790"), "localhost");
        assert_eq!(host_name("[::1]:80"), "[::1]");
        assert_eq!(host_name("example.com."), "example.com");
        let cfg = GuardConfig {
            token: None,
            allow_hosts: vec!["calc.plant.example".into()],
            allow_origins: vec![],
            listen: "127.0.0.1:8790".parse().unwrap(),
            max_body_bytes: 10,
            max_json_depth: 4,
            max_batch_requests: 3,
            request_timeout: Duration::from_secs(1),
        };
        assert!(cfg.host_allowed("localhost:8790"));
        assert!(cfg.host_allowed("127.0.0.1:8790"));
        assert!(cfg.host_allowed("[::1]:8790"));
        assert!(cfg.host_allowed("calc.plant.example:8790"));
        assert!(!cfg.host_allowed("evil.example:8790"));
        assert!(!cfg.host_allowed("10.0.0.1:8790"));
        let with = GuardConfig {
            token: Some("s3cret-value".into()),
            ..cfg
        };
        assert!(!format!("{with:?}").contains("s3cret-value"));
    }
}
