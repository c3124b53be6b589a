//! The HTTP front of `steamcell serve`: one tower layer, [`GuardLayer`], in front of the
//! jsonrpsee service. It decides whether a request may reach anything at all:
//!
//! - `Host` (or the HTTP/2 authority) must name this server: `localhost`, a loopback address,
//!   the listen address (any IP literal when listening on 0.0.0.0 or ::), or a name given with
//!   `--allow-host`; otherwise 403 (DNS-rebinding defence).
//! - An `Origin` header must be one given with `--allow-origin`; otherwise 403. CORS headers
//!   are sent only for such an origin, and only then is a preflight `OPTIONS` answered (204).
//! - With tokens, every request except `GET /health`, `/addin/` files and an allowed preflight
//!   needs `Authorization: Bearer <token>` naming a token in force and not expired (hashed and
//!   compared in constant time, see [`crate::api::tokens`]); otherwise 401. The token's identity
//!   travels with the request (its extensions) to every call it makes, which checks it again
//!   ([`super::run_call`]); `GET /schema` and `GET /metrics` check the token's allow-list here
//!   (403).
//! - A POST must declare `Content-Type: application/json` (`/columns`: its own type);
//!   otherwise 415.
//! - A POST body is read under the size limit and the time limit; a JSON-RPC body is then held
//!   to the nesting and batch limits before any parsing ([`super::check_request_text`], the
//!   same check as a stdio line).
//! - The whole request must be answered within the time limit (GET routes included).
//!   WebSocket upgrades pass the Host/Origin/token checks, then live on unlimited in time (each
//!   message is bounded in size by jsonrpsee, each call and batch by [`super::MessageLimits`]).
//!
//! Beside JSON-RPC it serves the plain routes:
//!
//! - `GET /health` -> `ok` (text/plain)
//! - `GET /schema` -> the OpenRPC document (application/json)
//! - `GET /metrics` -> the counters in the Prometheus text format ([`crate::api::metrics`])
//! - `GET /validation` -> the validation record ([`crate::api::record`]): HTML, or JSON with
//!   `Accept: application/json` or `?format=json`; through the call path as `GET /validation`
//! - `GET /cell/{quantity}?{name=value...}` -> the bare number (text/plain), see
//!   [`crate::api::cell`]: the route's `water.state` call runs through the call path.
//! - `GET /site/{name}/{quantity}?{path=value...}` -> a number of a registered site's balance
//!   (text/plain), see [`crate::api::site`]; the (cached) solve runs through the call path.
//! - `GET /addin/...` -> the Excel add-in's files, public like `/health` (see
//!   [`super::addin`], which also adds the private-network answer to an allowed preflight).
//! - `POST /columns` -> packed columns, see [`crate::api::columns`]; through the call path.
//!
//! Statuses: a call's answer inside a JSON-RPC response (result or error, including the
//! in-flight refusal of one call) is 200, as are jsonrpsee's own parse and invalid-request
//! answers; a refusal of a whole request (body size, body time, UTF-8, nesting, batch size,
//! answer time) and every failure of a computing plain route take
//! [`ApiError::http_status`](crate::api::ApiError::http_status). Refusals of a JSON-RPC request
//! carry a JSON-RPC error response (id null); `/columns` failures the bare error object
//! {code, message, data}; GET route failures a one-line text reason. Access-control refusals
//! (400, 401, 403, 405, 415) answer a text reason.
//!
//! Every request gets a request id ([`RequestId`], in the request extensions, logged and
//! written to the audit file); refusals are logged at `info` with the reason, never with the
//! token.
//!
//! Invariant: anything else (other POSTs, WebSocket upgrades, other GET paths) passes to
//! jsonrpsee untouched.

use super::{check_request_text, refuse, run_call, CallParams, Caller};
use crate::api::metrics::Denied;
use crate::api::server_ctx::Connection;
use crate::api::site::{self, Sites};
use crate::api::tokens::{self, Identity, Refusal};
use crate::api::{self, cell, codes, limits, ApiError, ServerCtx};
use http_body_util::BodyExt;
use jsonrpsee::core::BoxError;
use jsonrpsee::server::{HttpBody, HttpRequest, HttpResponse};
use serde_json::{json, Value};
use std::future::Future;
use std::net::{IpAddr, SocketAddr};
use std::pin::Pin;
use std::sync::Arc;
use std::task::{Context, Poll};
use std::time::Instant;
use tower::{Layer, Service};

pub use super::RequestId;

/// Compares two byte strings in time that depends only on the length of `expected`.
pub fn constant_time_eq(given: &[u8], expected: &[u8]) -> bool {
    let mut diff = u8::from(given.len() != expected.len());
    for (i, e) in expected.iter().enumerate() {
        let g = given.get(i).copied().unwrap_or(0);
        diff |= std::hint::black_box(g ^ e);
    }
    std::hint::black_box(diff) == 0
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

/// What the guard enforces besides the tokens (which the server's context holds).
#[derive(Debug, Clone)]
pub struct GuardConfig {
    /// Host names accepted besides localhost names and the listen address (lower case).
    pub allow_hosts: Vec<String>,
    /// Origins allowed for cross-origin requests (exact match, e.g. `https://a.example`).
    pub allow_origins: Vec<String>,
    /// The bound address.
    pub listen: SocketAddr,
    /// Whether the server speaks TLS (the add-in manifest then names https).
    pub tls: bool,
}

/// Marks a request that arrived over TLS.
#[derive(Debug, Clone, Copy)]
pub struct OverTls;

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
}

/// The bearer token of a request ("" when there is none).
fn bearer(req: &HttpRequest) -> &str {
    req.headers()
        .get(http::header::AUTHORIZATION)
        .and_then(|v| v.to_str().ok())
        .and_then(|v| {
            let (scheme, rest) = v.trim().split_once(' ')?;
            scheme.eq_ignore_ascii_case("bearer").then(|| rest.trim())
        })
        .unwrap_or("")
}

/// The layer that guards every request, see the module doc.
#[derive(Debug, Clone)]
pub struct GuardLayer {
    config: Arc<GuardConfig>,
    ctx: Arc<ServerCtx>,
}

impl GuardLayer {
    /// A guard enforcing `config` and the limits of `ctx`, running calls on the call path of
    /// `ctx`.
    pub fn new(config: GuardConfig, ctx: Arc<ServerCtx>) -> GuardLayer {
        GuardLayer {
            config: Arc::new(config),
            ctx,
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
            _conn: Arc::new(self.ctx.open_connection()),
            ctx: self.ctx.clone(),
        }
    }
}

/// The service made by [`GuardLayer`] (one per connection).
#[derive(Debug, Clone)]
pub struct Guard<S> {
    inner: S,
    config: Arc<GuardConfig>,
    ctx: Arc<ServerCtx>,
    _conn: Arc<Connection>,
}

/// An access-control refusal: a text reason.
fn deny(status: u16, reason: String) -> HttpResponse {
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

fn deny_b(status: u16, reason: String) -> Box<HttpResponse> {
    Box::new(deny(status, reason))
}

/// How a failure is written: inside a JSON-RPC response (id null), or as the bare error object
/// (`/columns`). (GET routes write a [`cell::CellError`]'s text reason.)
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Form {
    Rpc,
    Object,
}

fn error_object(e: &ApiError) -> Value {
    json!({ "code": e.code, "message": e.message, "data": e.data })
}

/// The answer of a failure `e` with `status`, written in `form`.
fn failure(status: u16, e: &ApiError, form: Form) -> HttpResponse {
    let body = match form {
        Form::Object => error_object(e),
        Form::Rpc => json!({ "jsonrpc": "2.0", "error": error_object(e), "id": null }),
    };
    http::Response::builder()
        .status(status)
        .header(
            http::header::CONTENT_TYPE,
            "application/json; charset=utf-8",
        )
        .body(HttpBody::from(body.to_string()))
        .unwrap_or_else(|_| http::Response::new(HttpBody::from("internal error")))
}

/// A refusal of a whole request: counted, logged, answered with its mapped status.
fn refusal(ctx: &ServerCtx, e: ApiError, form: Form) -> HttpResponse {
    let e = refuse(ctx, e);
    failure(e.http_status(), &e, form)
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
        // A JSON-RPC answer like jsonrpsee's own invalid-request answers: 200.
        let e = ApiError {
            code: codes::INVALID_REQUEST,
            message: "Invalid request: not a JSON-RPC 2.0 request object (jsonrpc \"2.0\", \
                      method, id a string, number or null)"
                .to_string(),
            data: json!({ "kind": "invalid_request" }),
        };
        return failure(200, &e, Form::Rpc);
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

/// What a request was admitted with: its allowed `Origin` (CORS headers go back to it) and its
/// token's identity.
struct Admitted {
    origin: Option<String>,
    token: Option<Identity>,
}

/// The checks that need no body: `Err` is the refusal to send.
fn admit(
    config: &GuardConfig,
    ctx: &ServerCtx,
    req: &HttpRequest,
) -> Result<Admitted, Box<HttpResponse>> {
    let host = req
        .headers()
        .get(http::header::HOST)
        .and_then(|v| v.to_str().ok())
        .map(str::to_string)
        .or_else(|| req.uri().authority().map(|a| a.to_string()));
    match host {
        None => return Err(deny_b(400, "missing Host header".to_string())),
        Some(h) if !config.host_allowed(&h) => {
            ctx.metrics().denied(Denied::Host);
            return Err(deny_b(
                403,
                format!(
                    "Host '{}' is not this server (add it with --allow-host)",
                    host_name(&h)
                ),
            ));
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
                ctx.metrics().denied(Denied::Origin);
                return Err(deny_b(
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
            None => Err(deny_b(
                405,
                "OPTIONS is answered only for a CORS preflight".into(),
            )),
        };
    }
    let health = (req.method() == http::Method::GET || req.method() == http::Method::HEAD)
        && req.uri().path() == "/health";
    // The add-in's files hold no secret and a browser loads them without a token.
    let public = health || super::addin::is_addin_request(req);
    let mut token = None;
    if !public && ctx.tokens().required() {
        match ctx
            .tokens()
            .admit(bearer(req), crate::api::clock::now_unix())
        {
            Ok(who) => token = Some(who),
            Err(why) => {
                let reason = match why {
                    Refusal::Unknown => {
                        ctx.metrics().denied(Denied::Token);
                        "missing or wrong token: send Authorization: Bearer <token>".to_string()
                    }
                    Refusal::Expired(name) => {
                        ctx.metrics().denied(Denied::Expired);
                        format!("the token '{name}' has expired: ask for a new one")
                    }
                };
                let mut r = deny(401, reason);
                // An allowed page may read the refusal (and tell its user to fix the token).
                if let Some(o) = &origin {
                    add_cors(&mut r, o);
                }
                return Err(Box::new(r));
            }
        }
    }
    // The plain routes that are not calls check the token's allow-list here.
    let is_get = req.method() == http::Method::GET || req.method() == http::Method::HEAD;
    let permission = match req.uri().path() {
        "/schema" if is_get => Some("server.schema"),
        "/metrics" if is_get => Some(tokens::METRICS_PERMISSION),
        _ => None,
    };
    if let (Some(p), Some(who)) = (permission, &token) {
        if let Err(e) = ctx
            .tokens()
            .authorize(who, p, crate::api::clock::now_unix())
        {
            ctx.metrics().denied(Denied::Forbidden);
            let mut r = deny(403, e.message);
            if let Some(o) = &origin {
                add_cors(&mut r, o);
            }
            return Err(Box::new(r));
        }
    }
    if req.method() == http::Method::POST {
        if req.uri().path() == "/columns" {
            if !has_content_type(req, api::columns::CONTENT_TYPE) {
                return Err(deny_b(
                    415,
                    format!(
                        "unsupported Content-Type: POST /columns takes {}",
                        api::columns::CONTENT_TYPE
                    ),
                ));
            }
        } else if !is_json_content_type(req) {
            return Err(deny_b(
                415,
                "unsupported Content-Type: send application/json".to_string(),
            ));
        }
    }
    Ok(Admitted { origin, token })
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
        let ctx = self.ctx.clone();
        let id = RequestId(ctx.next_request_id());
        let span = tracing::info_span!("request", id = id.0, method = %req.method(), path = %req.uri().path());
        let _enter = span.enter();
        let Admitted { origin, token } = match admit(&self.config, &ctx, &req) {
            Ok(a) => a,
            Err(resp) => return Box::pin(async move { Ok(*resp) }),
        };
        req.extensions_mut().insert(id);
        if self.config.tls {
            req.extensions_mut().insert(OverTls);
        }
        let caller = Caller {
            request: Some(id),
            token: token.clone(),
        };
        if let Some(who) = token {
            req.extensions_mut().insert(who);
        }
        // The clone that was made ready goes into the future; a fresh clone stays.
        let clone = self.inner.clone();
        let mut inner = std::mem::replace(&mut self.inner, clone);
        let upgrade = jsonrpsee::server::ws::is_upgrade_request(&req);
        let is_get = req.method() == http::Method::GET || req.method() == http::Method::HEAD;
        if is_get && !upgrade {
            if let Some(r) = super::addin::answer(&req) {
                return Box::pin(async move { Ok(r) });
            }
        }
        let get_route = if is_get && !upgrade {
            route(req.uri().path(), req.uri().query(), ctx.sites()).map(|r| match r {
                Route::Validation { json: false } if wants_json(&req) => {
                    Route::Validation { json: true }
                }
                r => r,
            })
        } else {
            None
        };
        if get_route.is_none() && (upgrade || req.method() != http::Method::POST) {
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
            let mut resp = match get_route {
                Some(r) => get_answer(ctx, r, caller, started).await,
                None => post_answer(ctx, inner, req, caller, started).await?,
            };
            if let Some(o) = origin {
                add_cors(&mut resp, &o);
            }
            Ok(resp)
        };
        Box::pin(tracing::Instrument::instrument(fut, span))
    }
}

/// Runs `f` (a closure around [`run_call`]) and waits for it until the request's time limit:
/// inline for a quick method, else on the blocking pool; past the limit, the answer-time
/// refusal (the computation runs on to its end and holds its in-flight slot until then).
async fn compute<T: Send + 'static>(
    ctx: &ServerCtx,
    quick: bool,
    started: Instant,
    f: impl FnOnce() -> Result<T, ApiError> + Send + 'static,
) -> Result<T, ApiError> {
    if quick {
        return f();
    }
    let limit = ctx.limits.request_timeout();
    let left = limit.saturating_sub(started.elapsed());
    match tokio::time::timeout(left, tokio::task::spawn_blocking(f)).await {
        Ok(Ok(answer)) => answer,
        Ok(Err(e)) => Err(ApiError::internal(format!("internal error: {e}"))),
        Err(_) => Err(refuse(ctx, limits::answer_time(limit))),
    }
}

/// Reads a POST body under the size and time limits, then answers `/columns` or passes the
/// JSON-RPC body (after its nesting, UTF-8 and batch checks) to jsonrpsee.
async fn post_answer<S>(
    ctx: Arc<ServerCtx>,
    mut inner: S,
    req: HttpRequest,
    caller: Caller,
    started: Instant,
) -> Result<HttpResponse, BoxError>
where
    S: Service<HttpRequest, Response = HttpResponse, Error = BoxError>,
{
    let limit = ctx.limits.request_timeout();
    // The bulk route carries raw columns: its body may hold two columns of the most rows a
    // batch may have.
    let columns_route = req.uri().path() == "/columns";
    let form = if columns_route {
        Form::Object
    } else {
        Form::Rpc
    };
    let body_limit = ctx.limits.max_request_body_bytes as usize;
    let max = if columns_route {
        body_limit.max(ctx.limits.max_batch_rows() * 16 + api::columns::MAX_HEADER + 4)
    } else {
        body_limit
    };
    let declared = req
        .headers()
        .get(http::header::CONTENT_LENGTH)
        .and_then(|v| v.to_str().ok())
        .and_then(|v| v.parse::<u64>().ok());
    if let Some(n) = declared.filter(|n| *n > max as u64) {
        let seen = usize::try_from(n).unwrap_or(usize::MAX);
        return Ok(refusal(&ctx, limits::body_too_large(max, seen), form));
    }
    let (parts, body) = req.into_parts();
    let read = http_body_util::Limited::new(body, max).collect();
    let bytes = match tokio::time::timeout(limit, read).await {
        Err(_) => return Ok(refusal(&ctx, limits::body_time(limit), form)),
        Ok(Err(e)) => {
            if e.downcast_ref::<http_body_util::LengthLimitError>()
                .is_some()
            {
                return Ok(refusal(&ctx, limits::body_too_large(max, max + 1), form));
            }
            return Ok(deny(400, format!("request body could not be read: {e}")));
        }
        Ok(Ok(c)) => c.to_bytes(),
    };
    if columns_route {
        let c = Arc::clone(&ctx);
        let answer = compute(&ctx, false, started, move || {
            let header = api::columns::header_text(&bytes);
            let logged = header.map_or(CallParams::Absent, CallParams::Text);
            run_call(&c, "POST /columns", logged, &caller, || {
                api::columns::columns(&c, &bytes)
            })
        })
        .await;
        return Ok(match answer {
            Ok(body) => http::Response::builder()
                .status(200)
                .header(http::header::CONTENT_TYPE, api::columns::CONTENT_TYPE)
                .body(HttpBody::from(body))
                .unwrap_or_else(|_| http::Response::new(HttpBody::from("internal error"))),
            Err(e) => failure(e.http_status(), &e, Form::Object),
        });
    }
    if let Err(e) = check_request_text(&ctx.limits, &bytes) {
        return Ok(refusal(&ctx, e, Form::Rpc));
    }
    if std::str::from_utf8(&bytes).is_err() {
        let e = ApiError {
            code: codes::PARSE_ERROR,
            message: "Parse error: the request body is not valid UTF-8".to_string(),
            data: json!({ "kind": "parse_error" }),
        };
        return Ok(refusal(&ctx, e, Form::Rpc));
    }
    let mut req = http::Request::from_parts(parts, HttpBody::from(bytes.to_vec()));
    req.extensions_mut().insert(super::TextChecked);
    let left = limit.saturating_sub(started.elapsed());
    Ok(match tokio::time::timeout(left, inner.call(req)).await {
        Ok(r) => fix_null_answer(r?).await,
        Err(_) => refusal(&ctx, limits::answer_time(limit), Form::Rpc),
    })
}

type BoxFuture<T> = Pin<Box<dyn Future<Output = T> + Send + 'static>>;

/// A routed GET request: path and raw query.
#[derive(Debug, Clone, PartialEq, Eq)]
enum Route {
    Health,
    Schema,
    Metrics,
    Validation {
        json: bool,
    },
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

fn route(path: &str, query: Option<&str>, sites: &Sites) -> Option<Route> {
    match path {
        "/health" => Some(Route::Health),
        "/schema" => Some(Route::Schema),
        "/metrics" => Some(Route::Metrics),
        "/validation" => Some(Route::Validation {
            json: form_urlencoded::parse(query.unwrap_or("").as_bytes())
                .any(|(k, v)| k == "format" && v == "json"),
        }),
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
                        let n = sites.names();
                        if n.is_empty() {
                            "none registered (serve --site NAME=FILE)".to_string()
                        } else {
                            n.join(", ")
                        }
                    }
                ))),
            }
        }
        // JSON-RPC (POST) and WebSocket live at "/"; a GET of any other path is no route.
        "/" => None,
        p => Some(Route::NotFound(format!(
            "no route GET {p}; the routes: POST / (JSON-RPC; WebSocket), GET /cell/{{quantity}}, \
             GET /site/{{name}}/{{quantity}}, POST /columns, GET /health, GET /schema, \
             GET /metrics, GET /validation, GET /addin/manifest.xml"
        ))),
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

fn cell_text(answer: Result<String, cell::CellError>) -> HttpResponse {
    match answer {
        Ok(number) => text(200, number),
        Err(e) => text(e.status, e.reason),
    }
}

/// Whether a request asks for JSON (`Accept: application/json` before any HTML).
fn wants_json(req: &HttpRequest) -> bool {
    req.headers()
        .get(http::header::ACCEPT)
        .and_then(|v| v.to_str().ok())
        .is_some_and(|a| {
            let json = a.find("application/json");
            let html = a.find("text/html");
            matches!((json, html), (Some(j), h) if h.is_none_or(|h| j < h))
        })
}

fn with_type(status: u16, content_type: &str, body: String) -> HttpResponse {
    http::Response::builder()
        .status(status)
        .header(http::header::CONTENT_TYPE, content_type)
        .body(HttpBody::from(body))
        .unwrap_or_else(|_| http::Response::new(HttpBody::from("internal error")))
}

/// Answers a GET route; `/cell`, `/site` and `/validation` run their computation through the
/// call path.
async fn get_answer(
    ctx: Arc<ServerCtx>,
    route: Route,
    caller: Caller,
    started: Instant,
) -> HttpResponse {
    match route {
        Route::Health => text(200, "ok".to_string()),
        Route::Schema => json_body(api::openrpc::document_text()),
        Route::Metrics => with_type(
            200,
            api::metrics::CONTENT_TYPE,
            api::metrics::exposition(&ctx),
        ),
        Route::Validation { json } => {
            let c = Arc::clone(&ctx);
            let answer = compute(&ctx, false, started, move || {
                let logged = serde_json::json!({ "format": if json { "json" } else { "html" } });
                run_call(
                    &c,
                    "GET /validation",
                    CallParams::Json(&logged),
                    &caller,
                    || {
                        let r = api::record::record();
                        Ok(if json {
                            api::record::to_json(&r).into_bytes()
                        } else {
                            api::record::to_html(&r).into_bytes()
                        })
                    },
                )
            })
            .await;
            match answer {
                Ok(body) => with_type(
                    200,
                    if json {
                        "application/json; charset=utf-8"
                    } else {
                        "text/html; charset=utf-8"
                    },
                    String::from_utf8(body).unwrap_or_default(),
                ),
                Err(e) => text(e.http_status(), e.message),
            }
        }
        Route::NotFound(reason) => text(404, reason),
        Route::Cell { quantity, query } => {
            let pairs = cell::pairs_from_query(&query);
            let params = match cell::request(&quantity, &pairs) {
                Ok(p) => p,
                Err(e) => return text(e.status, e.reason),
            };
            let Some(spec) = api::find(cell::STATE_METHOD) else {
                return text(
                    404,
                    format!("method {} is not available", cell::STATE_METHOD),
                );
            };
            let c = Arc::clone(&ctx);
            let result = compute(&ctx, spec.quick, started, move || {
                run_call(&c, spec.name, CallParams::Json(&params), &caller, || {
                    spec.run(&c, params.clone())
                })
            })
            .await;
            cell_text(
                result
                    .map_err(cell::CellError::from)
                    .and_then(|v| cell::pick(&v, &quantity)),
            )
        }
        Route::Site {
            name,
            quantity,
            query,
        } => {
            let checked = ctx
                .sites()
                .network(&name)
                .and_then(|_| site::check_quantity(&quantity));
            let pairs = cell::pairs_from_query(&query);
            // Route-level refusals come before the call path, as for /cell: the audited query
            // pairs are then distinct names.
            if let Err(e) = checked.and_then(|()| site::check_pairs(&pairs)) {
                return text(e.status, e.reason);
            }
            let logged = Value::Object(
                pairs
                    .iter()
                    .map(|(k, v)| (k.clone(), Value::String(v.clone())))
                    .collect(),
            );
            let method = format!("GET /site/{name}");
            let c = Arc::clone(&ctx);
            let asked = quantity.clone();
            let result = compute(&ctx, false, started, move || {
                run_call(&c, &method, CallParams::Json(&logged), &caller, || {
                    c.sites().solved_for(&name, &asked, &pairs)
                })
            })
            .await;
            cell_text(
                result
                    .map_err(cell::CellError::from)
                    .and_then(|v| site::pick(&v, &quantity)),
            )
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn routes() {
        let sites = Sites::default();
        let route = |p, q| route(p, q, &sites);
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
        assert!(matches!(route("/other", None), Some(Route::NotFound(_))));
        assert!(matches!(route("/columns", None), Some(Route::NotFound(_))));
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
    fn host_names() {
        assert_eq!(host_name("LocalHost:8790"), "localhost");
        assert_eq!(host_name("[::1]:80"), "[::1]");
        assert_eq!(host_name("example.com."), "example.com");
        let cfg = GuardConfig {
            allow_hosts: vec!["calc.plant.example".into()],
            allow_origins: vec![],
            listen: "127.0.0.1:8790".parse().unwrap(),
            tls: false,
        };
        assert!(cfg.host_allowed("localhost:8790"));
        assert!(cfg.host_allowed("127.0.0.1:8790"));
        assert!(cfg.host_allowed("[::1]:8790"));
        assert!(cfg.host_allowed("calc.plant.example:8790"));
        assert!(!cfg.host_allowed("evil.example:8790"));
        assert!(!cfg.host_allowed("10.0.0.1:8790"));
    }

    /// A refusal answers the mapped status; a GET route the error's one-line message.
    #[test]
    fn failure_statuses() {
        let e = limits::busy(1);
        assert_eq!(failure(e.http_status(), &e, Form::Object).status(), 503);
        let e = limits::batch_too_large(2, 3);
        assert_eq!(failure(e.http_status(), &e, Form::Rpc).status(), 413);
        let c = cell::CellError::from(limits::busy(1));
        assert_eq!(c.status, 503);
        assert!(c.reason.contains("in flight"), "{}", c.reason);
    }
}
