//! Transports: JSON-RPC 2.0 over HTTP POST and WebSocket on one port (`steamcell serve`), plain
//! HTTP routes beside it (`GET /health`, `/schema`, `/cell/{quantity}`, `/site/{name}/{quantity}`,
//! `POST /columns`, see [`http`]), and newline-delimited JSON-RPC over stdin/stdout
//! (`steamcell stdio`, see [`stdio`]).
//!
//! One call path: every method call of every transport, and every computing plain route, runs
//! through [`run_call`] with the server's [`ServerCtx`]: the in-flight limit (`--max-in-flight`),
//! the request counters, one `call` log line and one audit line (`--audit`). JSON-RPC calls reach
//! it through the one [`RpcModule`] built by [`rpc_module`] from the API registry, so validation
//! and error codes are identical on HTTP, WebSocket and stdio; a request refused as a whole
//! (too big, too deep, too many calls in a batch, too slow) gets the same error from the
//! constructors of [`api::limits`] on every transport (checked by [`check_request_text`] where
//! the transport holds the raw text, and by the [`MessageLimits`] middleware for WebSocket
//! messages).
//!
//! Quick methods ([`api::MethodSpec::quick`]) run inline on the connection's async worker;
//! every other method runs on the blocking thread pool, so a long computation never stalls a
//! worker.
//!
//! Invariant: the server prints exactly one line to stdout when it listens (see
//! [`listening_line`]); everything else it says goes to stderr through `tracing`.

pub mod addin;
pub mod audit;
pub mod client;
pub mod config;
pub mod http;
pub mod stdio;
pub mod tls;

use crate::api::metrics::{Denied, TlsFailure};
use crate::api::site::Sites;
use crate::api::tokens::{self, Identity, Tokens};
use crate::api::{self, limits, ApiError, ServerCtx};
use jsonrpsee::core::middleware::{
    Batch, BatchEntry, BatchEntryErr, Notification, ResponseFuture, RpcServiceT,
};
use jsonrpsee::server::middleware::rpc::RpcServiceBuilder;
use jsonrpsee::server::{
    stop_channel, BatchRequestConfig, HttpBody, HttpRequest, MethodResponse, Methods, RpcModule,
    Server, ServerConfig, ServerHandle, StopHandle,
};
use jsonrpsee::types::{ErrorObjectOwned, Id, Request};
use serde_json::Value;
use std::future::Future;
use std::io::Write;
use std::net::{SocketAddr, ToSocketAddrs};
use std::path::PathBuf;
use std::sync::Arc;
use std::time::Instant;

/// The default listen address of `steamcell serve`.
pub const DEFAULT_LISTEN: &str = "127.0.0.1:8790";

/// The id of one HTTP request or stdio line (also carried by the WebSocket calls of an upgraded
/// connection); a call's id in the log and the audit file is `request.call`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct RequestId(pub u64);

/// Who makes a call: the request it came with (HTTP request or stdio line; `None` in-process)
/// and the token the request was admitted with (`None` when the server needs none).
#[derive(Debug, Clone, Default)]
pub struct Caller {
    /// The request id.
    pub request: Option<RequestId>,
    /// The token's identity.
    pub token: Option<Identity>,
}

impl Caller {
    /// The caller of a request, from its extensions (set by the HTTP guard).
    pub fn of(ext: &jsonrpsee::Extensions) -> Caller {
        Caller {
            request: ext.get::<RequestId>().copied(),
            token: ext.get::<Identity>().cloned(),
        }
    }
}

/// Converts an API error into a JSON-RPC error object.
pub fn to_error_object(e: ApiError) -> ErrorObjectOwned {
    let code = i32::try_from(e.code).unwrap_or(api::codes::INTERNAL_ERROR as i32);
    ErrorObjectOwned::owned(code, e.message, Some(e.data))
}

/// The error of a call to a method the server does not have: the same object on every
/// transport and in-process (`unknown method 'NAME'`, data `method`), where the JSON-RPC
/// layer's own answer would be a bare "Method not found".
pub fn unknown_method(name: &str) -> Option<ApiError> {
    (!api::registry().iter().any(|m| m.name == name)).then(|| ApiError::method_not_found(name))
}

/// What the call log and the audit line record as a call's params.
#[derive(Debug, Clone, Copy)]
pub enum CallParams<'a> {
    /// No params were sent.
    Absent,
    /// The params as received (JSON text, or a route's JSON header).
    Text(&'a str),
    /// The params a route built (GET /cell's `water.state` params, GET /site's query pairs).
    Json(&'a Value),
}

/// `request.call`, formatted only when a log line or an audit line needs it.
struct CallId(Option<RequestId>, u64);

impl std::fmt::Display for CallId {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}.{}", self.0.map_or(0, |r| r.0), self.1)
    }
}

/// The one call path (see the module doc): checks that the caller's token (still) permits the
/// call, takes an in-flight slot or refuses with the in-flight limit error, runs `body`, counts
/// the call (`server.info` counters and `GET /metrics`), writes the `call` log line and the
/// audit line. `name` is the method (or, for GET /site, GET /validation and POST /columns, the
/// route).
pub fn run_call<T: audit::Digest>(
    ctx: &ServerCtx,
    name: &str,
    params: CallParams<'_>,
    caller: &Caller,
    body: impl FnOnce() -> Result<T, ApiError>,
) -> Result<T, ApiError> {
    let id = CallId(caller.request, ctx.next_call_id());
    let started = Instant::now();
    ctx.count_request();
    let answer = match permit(ctx, caller, name) {
        Err(e) => Err(e),
        Ok(()) => match ctx.try_begin() {
            None => {
                ctx.metrics().refusal(limits::what::CALLS_IN_FLIGHT);
                Err(limits::busy(u64::from(ctx.limits.max_in_flight)))
            }
            Some(_running) => body(),
        },
    };
    let elapsed = started.elapsed();
    if answer.is_err() {
        ctx.count_failure();
    }
    let code = answer.as_ref().err().map(|e| e.code);
    ctx.metrics().call(name, code, elapsed);
    if let Ok(v) = &answer {
        if name == "water.batch" || name == "POST /columns" {
            if let Some((rows, failed)) = v.rows() {
                ctx.metrics().rows(name, rows, failed);
            }
        }
    }
    let token = caller.token.as_ref().map(|t| &*t.name);
    tracing::info!(
        request_id = %id,
        method = name,
        token = token.unwrap_or(""),
        elapsed_ms = elapsed.as_secs_f64() * 1e3,
        error_code = ?code,
        "call"
    );
    if let Some(file) = ctx.audit_file() {
        let outcome = answer.as_ref().map_err(|e| e.code);
        audit::record(file, &id.to_string(), name, token, params, outcome);
    }
    answer
}

/// Whether the caller's token permits the call `name` now (see [`Tokens::authorize`]).
fn permit(ctx: &ServerCtx, caller: &Caller, name: &str) -> Result<(), ApiError> {
    let t = ctx.tokens();
    if !t.required() {
        return Ok(());
    }
    let permission = tokens::permission_for(name);
    let answer = match &caller.token {
        Some(who) => t.authorize(who, permission, api::clock::now_unix()),
        None => Err(tokens::forbidden(
            "",
            permission,
            "missing",
            "no token: this server needs one".to_string(),
        )),
    };
    if answer.is_err() {
        ctx.metrics().denied(Denied::Forbidden);
    }
    answer
}

/// A refusal of a whole request (before any call runs): counted as a failed request and logged.
pub fn refuse(ctx: &ServerCtx, e: ApiError) -> ApiError {
    ctx.count_request();
    ctx.count_failure();
    if let Some(what) = e.data.get("what").and_then(Value::as_str) {
        ctx.metrics().refusal(what);
    }
    tracing::info!(code = e.code, "refused: {}", e.message);
    e
}

/// The deepest `[`/`{` nesting of `body` outside JSON strings.
pub fn nesting_depth(body: &[u8]) -> u32 {
    let mut depth = 0u32;
    let mut deepest = 0u32;
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
                    deepest = deepest.max(depth);
                }
                b']' | b'}' => depth = depth.saturating_sub(1),
                _ => {}
            }
        }
    }
    deepest
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

/// The checks of a JSON-RPC request text that come before parsing, on every transport that holds
/// the raw text (an HTTP body, a stdio line): size, `[`/`{` nesting, calls in a batch. `Err` is
/// the refusal, the same error on each transport.
pub fn check_request_text(l: &limits::Settings, text: &[u8]) -> Result<(), ApiError> {
    let max_bytes = l.max_request_body_bytes as usize;
    if text.len() > max_bytes {
        return Err(limits::body_too_large(max_bytes, text.len()));
    }
    let depth = nesting_depth(text);
    if depth > l.max_json_depth {
        return Err(limits::too_deep(l.max_json_depth, depth));
    }
    check_batch_len(l, batch_len(text))
}

/// Refuses a batch of more than `--max-batch-requests` calls.
pub fn check_batch_len(l: &limits::Settings, calls: Option<usize>) -> Result<(), ApiError> {
    match calls {
        Some(n) if n > l.max_batch_requests as usize => {
            Err(limits::batch_too_large(l.max_batch_requests as usize, n))
        }
        _ => Ok(()),
    }
}

/// Marks a request whose raw text [`check_request_text`] has already checked (an HTTP body), so
/// that [`MessageLimits`] does not scan it again.
#[derive(Debug, Clone, Copy)]
pub struct TextChecked;

/// JSON-RPC middleware applying the request checks of [`check_request_text`] to messages whose
/// raw text no check has seen (WebSocket messages): a batch of more than
/// `--max-batch-requests` calls, and params nested deeper than `--max-json-depth` (counting
/// the request object and the batch array, as a scan of the whole text would) are refused with
/// the same error as over HTTP and stdio. jsonrpsee's own batch limit answers another code
/// without `data`, so it is off. On every transport it also answers a call of an unknown
/// method (alone or in a batch) with [`unknown_method`]'s error instead of jsonrpsee's bare
/// "Method not found" (stdio does the same in its loop).
#[derive(Clone)]
pub struct MessageLimits<S> {
    inner: S,
    ctx: Arc<ServerCtx>,
}

impl<S> MessageLimits<S> {
    /// The deepest nesting of a message holding these params, `outer` levels around them.
    fn too_deep<'p>(
        &self,
        outer: u32,
        params: impl Iterator<Item = Option<&'p serde_json::value::RawValue>>,
    ) -> Option<ApiError> {
        let max = self.ctx.limits.max_json_depth;
        let depth = params
            .map(|p| outer + p.map_or(0, |r| nesting_depth(r.get().as_bytes())))
            .max()
            .unwrap_or(0);
        (depth > max).then(|| limits::too_deep(max, depth))
    }
}

impl<S> RpcServiceT for MessageLimits<S>
where
    S: RpcServiceT<
            MethodResponse = MethodResponse,
            BatchResponse = MethodResponse,
            NotificationResponse = MethodResponse,
        > + Send
        + Sync,
{
    type MethodResponse = MethodResponse;
    type NotificationResponse = MethodResponse;
    type BatchResponse = MethodResponse;

    fn call<'a>(&self, request: Request<'a>) -> impl Future<Output = MethodResponse> + Send + 'a {
        let refused = if request.extensions().get::<TextChecked>().is_some() {
            None
        } else {
            self.too_deep(1, std::iter::once(request.params.as_deref()))
        };
        if let Some(e) = refused {
            return ResponseFuture::ready(MethodResponse::error(
                Id::Null,
                to_error_object(refuse(&self.ctx, e)),
            ));
        }
        match unknown_method(request.method_name()) {
            Some(e) => ResponseFuture::ready(MethodResponse::error(
                request.id().clone(),
                to_error_object(e),
            )),
            None => ResponseFuture::future(self.inner.call(request)),
        }
    }

    fn batch<'a>(&self, mut batch: Batch<'a>) -> impl Future<Output = MethodResponse> + Send + 'a {
        // A call of an unknown method answers the same error as alone.
        for entry in batch.iter_mut() {
            let unknown = match entry {
                Ok(BatchEntry::Call(req)) => {
                    unknown_method(req.method_name()).map(|e| (req.id().clone(), e))
                }
                _ => None,
            };
            if let Some((id, e)) = unknown {
                *entry = Err(BatchEntryErr::new(id, to_error_object(e)));
            }
        }
        let checked = batch
            .iter()
            .flatten()
            .next()
            .is_some_and(|e| e.extensions().get::<TextChecked>().is_some());
        let refused = if checked {
            None
        } else {
            check_batch_len(&self.ctx.limits, Some(batch.len()))
                .err()
                .or_else(|| {
                    let params = batch.iter().flatten().map(|e| e.params().map(|p| &**p));
                    self.too_deep(2, params)
                })
        };
        match refused {
            Some(e) => ResponseFuture::ready(MethodResponse::error(
                Id::Null,
                to_error_object(refuse(&self.ctx, e)),
            )),
            None => ResponseFuture::future(self.inner.batch(batch)),
        }
    }

    fn notification<'a>(
        &self,
        n: Notification<'a>,
    ) -> impl Future<Output = MethodResponse> + Send + 'a {
        self.inner.notification(n)
    }
}

/// The JSON-RPC module with every registry method registered on the call path of `ctx`: quick
/// methods inline, the rest as blocking methods.
pub fn rpc_module(ctx: Arc<ServerCtx>) -> RpcModule<ServerCtx> {
    let mut module = RpcModule::from_arc(ctx);
    for spec in api::registry() {
        let name = spec.name;
        let body = move |params: jsonrpsee::types::Params,
                         ctx: &ServerCtx,
                         ext: &jsonrpsee::Extensions| {
            let text = params.as_str();
            let logged = text.map_or(CallParams::Absent, CallParams::Text);
            let caller = Caller::of(ext);
            run_call(ctx, name, logged, &caller, || {
                let value = match text {
                    None => Value::Null,
                    Some(t) => serde_json::from_str(t).map_err(|e| {
                        ApiError::invalid_params(".", format!("invalid params: {e}"))
                    })?,
                };
                spec.run(ctx, value)
            })
            .map_err(to_error_object)
        };
        let result = if spec.quick {
            module
                .register_method(name, move |params, ctx, ext| body(params, ctx, ext))
                .map(|_| ())
        } else {
            module
                .register_blocking_method(name, move |params, ctx, ext| body(params, &ctx, &ext))
                .map(|_| ())
        };
        if let Err(e) = result {
            tracing::error!("method {name} not registered: {e}");
        }
    }
    module
}

/// The formulation names, comma-separated, as printed on start.
pub fn formulation_names() -> String {
    api::server_methods::FORMULATIONS
        .iter()
        .map(|(n, _)| *n)
        .collect::<Vec<_>>()
        .join(", ")
}

/// The one line printed on start (`https://` and `wss://` with TLS).
pub fn listening_line(addr: SocketAddr, tls: bool) -> String {
    let (h, w) = if tls {
        ("https", "wss")
    } else {
        ("http", "ws")
    };
    format!(
        "steamcell {} listening on {h}://{addr} ({w}://{addr}) formulations: {}",
        env!("CARGO_PKG_VERSION"),
        formulation_names()
    )
}

/// A started server: its bound address and its handle.
pub struct Running {
    /// The address actually bound (the real port when 0 was asked for).
    pub addr: SocketAddr,
    /// Stops the server (`handle.stop()`), and resolves when it has stopped (`handle.stopped()`).
    pub handle: ServerHandle,
    /// Its context (limits, counters, tokens, sites, audit file).
    pub ctx: Arc<ServerCtx>,
    /// Its TLS certificate and key, when it serves HTTPS.
    pub tls: Option<Arc<tls::Tls>>,
}

impl Running {
    /// Re-reads what can change while the server runs (SIGHUP): the tokens file and the TLS
    /// certificate and key. Each failure is logged and keeps what is in force; the messages
    /// of the failures are returned.
    pub fn reload(&self) -> Vec<String> {
        let mut failed = Vec::new();
        match self.ctx.tokens().reload() {
            Ok(Some(n)) => {
                self.ctx.metrics().reload(true);
                tracing::warn!("tokens file reloaded: {n} tokens in force");
            }
            Ok(None) => {}
            Err(e) => {
                self.ctx.metrics().reload(false);
                tracing::error!("tokens file not reloaded, the tokens in force stay: {e}");
                failed.push(e);
            }
        }
        if let Some(t) = &self.tls {
            match t.reload() {
                Ok(()) => tracing::warn!("TLS certificate and key reloaded"),
                Err(e) => {
                    tracing::error!("TLS certificate not reloaded, the one in force stays: {e}");
                    failed.push(e);
                }
            }
        }
        failed
    }
}

/// Where a server's tokens come from.
#[derive(Clone, Default)]
pub enum TokenSource {
    /// No token: every caller is served (loopback only).
    #[default]
    None,
    /// One token (`--token-file` or `STEAMCELL_TOKEN`), named `default`.
    Single(String),
    /// A tokens file (`--tokens-file`), one line per user or service, reloaded on SIGHUP.
    File(PathBuf),
}

impl std::fmt::Debug for TokenSource {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            TokenSource::None => write!(f, "None"),
            TokenSource::Single(_) => write!(f, "Single(<redacted>)"),
            TokenSource::File(p) => write!(f, "File({p:?})"),
        }
    }
}

impl TokenSource {
    /// Whether callers need a token.
    pub fn required(&self) -> bool {
        !matches!(self, TokenSource::None)
    }
}

/// How `steamcell serve` runs: address, TLS, access control, limits, audit file. Its `Debug`
/// output never shows a token.
#[derive(Debug, Clone)]
pub struct ServeConfig {
    /// Address to listen on, e.g. `127.0.0.1:8790` (port 0 picks a free port).
    pub listen: String,
    /// Where the tokens come from; a token is required to listen on a non-loopback address.
    pub tokens: TokenSource,
    /// Certificate and key for HTTPS/WSS on the listen port.
    pub tls: Option<tls::TlsFiles>,
    /// Allows a non-loopback address with tokens but without TLS (tokens then cross the network
    /// in clear text).
    pub insecure_http: bool,
    /// Extra host names accepted in the `Host` header.
    pub allow_hosts: Vec<String>,
    /// Origins allowed for cross-origin (browser) requests; CORS headers only for these.
    pub allow_origins: Vec<String>,
    /// The limits in force (held by the server's [`ServerCtx`], reported by `server.info`).
    pub limits: limits::Settings,
    /// Append one JSON line per method call to this file.
    pub audit: Option<PathBuf>,
    /// Site networks for `GET /site/{name}/...`: (name, network file), loaded and solved at
    /// start.
    pub sites: Vec<(String, PathBuf)>,
}

impl ServeConfig {
    /// Loopback only, no token, no TLS, default limits, no audit.
    pub fn local(listen: &str) -> ServeConfig {
        ServeConfig {
            listen: listen.to_string(),
            tokens: TokenSource::None,
            tls: None,
            insecure_http: false,
            allow_hosts: Vec::new(),
            allow_origins: Vec::new(),
            limits: limits::Settings::DEFAULT,
            audit: None,
            sites: Vec::new(),
        }
    }
}

/// True when every address `listen` resolves to is a loopback address.
pub fn is_loopback_listen(listen: &str) -> std::io::Result<bool> {
    let addrs: Vec<SocketAddr> = listen.to_socket_addrs()?.collect();
    Ok(!addrs.is_empty() && addrs.iter().all(|a| a.ip().is_loopback()))
}

/// What [`check_exposure`] allows with a warning.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Exposure {
    /// Loopback, or TLS with tokens: nothing to say.
    Fine,
    /// A non-loopback address with tokens but without TLS, allowed by `--insecure-http`: the
    /// warning to print at start.
    Insecure(String),
}

/// Refuses a non-loopback listen address without a token, or with tokens but without TLS unless
/// `--insecure-http` (the reason as the error text).
pub fn check_exposure(cfg: &ServeConfig) -> std::io::Result<Exposure> {
    if let TokenSource::Single(t) = &cfg.tokens {
        if t.is_empty() {
            return Err(std::io::Error::new(
                std::io::ErrorKind::InvalidInput,
                "the token is empty",
            ));
        }
    }
    if is_loopback_listen(&cfg.listen)? {
        return Ok(Exposure::Fine);
    }
    if !cfg.tokens.required() {
        return Err(std::io::Error::new(
            std::io::ErrorKind::PermissionDenied,
            format!(
                "refusing to listen on {} (not a loopback address) without a token: give \
                 --tokens-file FILE or --token-file PATH or set STEAMCELL_TOKEN, or listen on \
                 127.0.0.1",
                cfg.listen
            ),
        ));
    }
    if cfg.tls.is_none() {
        if !cfg.insecure_http {
            return Err(std::io::Error::new(
                std::io::ErrorKind::PermissionDenied,
                format!(
                    "refusing to listen on {} (not a loopback address) without TLS: the tokens \
                     would cross the network in clear text. Give --tls-cert FILE --tls-key FILE, \
                     or --insecure-http to accept that (behind a TLS proxy, or on a trusted \
                     network)",
                    cfg.listen
                ),
            ));
        }
        return Ok(Exposure::Insecure(format!(
            "WARNING: serving plain HTTP on {} (not a loopback address) because of \
             --insecure-http: tokens and results cross the network unencrypted",
            cfg.listen
        )));
    }
    Ok(Exposure::Fine)
}

/// The context of a server started with `cfg`: its limits, its tokens (a tokens file read
/// now), its audit file (opened for appending) and its sites (each read and solved now).
pub fn context(cfg: &ServeConfig) -> std::io::Result<Arc<ServerCtx>> {
    let invalid = |e: String| std::io::Error::new(std::io::ErrorKind::InvalidInput, e);
    let mut ctx = ServerCtx::new(cfg.limits);
    ctx = ctx.with_tokens(match &cfg.tokens {
        TokenSource::None => Tokens::none(),
        TokenSource::Single(t) => Tokens::single(t),
        TokenSource::File(p) => Tokens::from_file(p).map_err(invalid)?,
    });
    if let Some(path) = &cfg.audit {
        ctx = ctx.with_audit(audit::open(path).map_err(|e| {
            std::io::Error::new(
                e.kind(),
                format!("cannot open the audit file {}: {e}", path.display()),
            )
        })?);
    }
    if !cfg.sites.is_empty() {
        let sites = Sites::load(&cfg.sites).map_err(invalid)?;
        ctx = ctx.with_sites(sites);
    }
    Ok(Arc::new(ctx))
}

/// Everything `steamcell serve --check-config` checks without binding: the exposure rules,
/// the built-in self-test, the tokens file, the TLS certificate and key, the audit file and the
/// sites. `Ok` holds the warning of an allowed insecure exposure.
pub fn check(cfg: &ServeConfig) -> std::io::Result<Exposure> {
    let exposure = check_exposure(cfg)?;
    api::selftest::startup_check().map_err(std::io::Error::other)?;
    if let Some(files) = &cfg.tls {
        tls::Tls::load(files)
            .map_err(|e| std::io::Error::new(std::io::ErrorKind::InvalidInput, e))?;
    }
    context(cfg)?;
    Ok(exposure)
}

/// Binds `cfg.listen` and starts serving on the current tokio runtime, after the built-in
/// self-test passed (a failing case refuses the start, the failing cases in the error).
pub async fn start(cfg: &ServeConfig) -> std::io::Result<Running> {
    check_exposure(cfg)?;
    api::selftest::startup_check().map_err(std::io::Error::other)?;
    let tls = match &cfg.tls {
        Some(files) => {
            Some(Arc::new(tls::Tls::load(files).map_err(|e| {
                std::io::Error::new(std::io::ErrorKind::InvalidInput, e)
            })?))
        }
        None => None,
    };
    let ctx = context(cfg)?;
    let l = cfg.limits;
    let timeout = l.request_timeout();
    let config = ServerConfig::builder()
        // jsonrpsee applies this to HTTP bodies and WebSocket messages; HTTP bodies are held
        // to their own limit by the guard first.
        .max_request_body_size(l.max_ws_message_bytes.max(l.max_request_body_bytes))
        .max_response_body_size(l.max_response_body_bytes)
        .max_connections(l.max_connections)
        // Batches are held to the limit by the guard (HTTP) and `MessageLimits` (WebSocket).
        .set_batch_request_config(BatchRequestConfig::Unlimited)
        .build();
    let listener = std::net::TcpListener::bind(&cfg.listen)?;
    listener.set_nonblocking(true)?;
    let addr = listener.local_addr()?;
    let listener = tokio::net::TcpListener::from_std(listener)?;
    let guard = http::GuardLayer::new(
        http::GuardConfig {
            allow_hosts: cfg.allow_hosts.clone(),
            allow_origins: cfg.allow_origins.clone(),
            listen: addr,
            tls: tls.is_some(),
        },
        Arc::clone(&ctx),
    );
    let batch_ctx = Arc::clone(&ctx);
    let services = Server::builder()
        .set_config(config)
        .set_rpc_middleware(
            RpcServiceBuilder::new().layer_fn(move |inner| MessageLimits {
                inner,
                ctx: Arc::clone(&batch_ctx),
            }),
        )
        .to_service_builder();
    let methods: Methods = rpc_module(Arc::clone(&ctx)).into();
    let (stop, handle) = stop_channel();
    let accept = Accept {
        listener,
        addr,
        tls: tls.clone(),
        ctx: Arc::clone(&ctx),
        first_request_timeout: timeout,
    };
    tokio::spawn(accept.run(
        move |stop: StopHandle| {
            guard_layer_service(&guard, services.clone().build(methods.clone(), stop))
        },
        stop,
    ));
    Ok(Running {
        addr,
        handle,
        ctx,
        tls,
    })
}

fn guard_layer_service<S>(guard: &http::GuardLayer, inner: S) -> http::Guard<S> {
    use tower::Layer;
    guard.layer(inner)
}

/// The accept loop of a started server.
struct Accept {
    listener: tokio::net::TcpListener,
    addr: SocketAddr,
    tls: Option<Arc<tls::Tls>>,
    ctx: Arc<ServerCtx>,
    first_request_timeout: std::time::Duration,
}

/// jsonrpsee's per-connection tower service as the accept loop serves it (one name for the
/// bounds that `Accept::run`, `Conn` and `ToHyper` share).
trait RpcService:
    tower::Service<
        HttpRequest,
        Response = jsonrpsee::server::HttpResponse,
        Error = jsonrpsee::core::BoxError,
        Future: Send + 'static,
    > + Clone
    + Send
    + 'static
{
}

impl<S> RpcService for S where
    S: tower::Service<
            HttpRequest,
            Response = jsonrpsee::server::HttpResponse,
            Error = jsonrpsee::core::BoxError,
            Future: Send + 'static,
        > + Clone
        + Send
        + 'static
{
}

impl Accept {
    /// Accepts connections until `stop`; each is served on its own task (after its TLS
    /// handshake) by a fresh service from `make` (one guard per connection: the connection is
    /// counted while it lives). Stopping lets every connection finish its requests.
    async fn run<S, F>(self, make: F, stop: StopHandle)
    where
        F: Fn(StopHandle) -> S + Send + 'static,
        S: RpcService,
    {
        let stopped = stop.clone().shutdown();
        tokio::pin!(stopped);
        loop {
            let (socket, peer) = tokio::select! {
                _ = &mut stopped => break,
                accepted = self.listener.accept() => match accepted {
                    Ok(a) => a,
                    Err(e) => {
                        tracing::debug!("accept failed: {e}");
                        // Out of file descriptors and the like: do not spin.
                        tokio::time::sleep(std::time::Duration::from_millis(10)).await;
                        continue;
                    }
                },
            };
            let _ = socket.set_nodelay(true);
            let conn = Conn {
                tls: self.tls.clone(),
                ctx: Arc::clone(&self.ctx),
                addr: self.addr,
                first_request_timeout: self.first_request_timeout,
                stop: stop.clone(),
            };
            let service = make(stop.clone());
            tokio::spawn(async move {
                conn.serve(socket, peer, service).await;
            });
        }
    }
}

/// One accepted connection.
struct Conn {
    tls: Option<Arc<tls::Tls>>,
    ctx: Arc<ServerCtx>,
    addr: SocketAddr,
    first_request_timeout: std::time::Duration,
    stop: StopHandle,
}

impl Conn {
    async fn serve<S>(self, socket: tokio::net::TcpStream, peer: SocketAddr, service: S)
    where
        S: RpcService,
    {
        let Some(tls) = self.tls.clone() else {
            return self.http(socket, service).await;
        };
        let limit = self.first_request_timeout;
        let mut first = [0u8; 1];
        match tokio::time::timeout(limit, socket.peek(&mut first)).await {
            Ok(Ok(1)) if first[0] == tls::HANDSHAKE_RECORD => {}
            Ok(Ok(1)) => {
                self.ctx.metrics().tls_failure(TlsFailure::PlainHttp);
                tracing::info!(%peer, "refused: plain text on the TLS port");
                plain_text_refusal(socket, self.addr).await;
                return;
            }
            _ => return,
        }
        match tokio::time::timeout(limit, tls.acceptor().accept(socket)).await {
            Ok(Ok(stream)) => self.http(stream, service).await,
            Ok(Err(e)) => {
                self.ctx.metrics().tls_failure(TlsFailure::Handshake);
                tracing::info!(%peer, "TLS handshake failed: {e}");
            }
            Err(_) => {
                self.ctx.metrics().tls_failure(TlsFailure::Handshake);
                tracing::info!(%peer, "TLS handshake not finished within {limit:?}");
            }
        }
    }

    /// Serves HTTP/1.1 (with WebSocket upgrades) or HTTP/2 on `io` until the client closes,
    /// no first request comes within the time limit, or the server stops (then gracefully).
    async fn http<I, S>(self, io: I, service: S)
    where
        I: tokio::io::AsyncRead + tokio::io::AsyncWrite + Send + Unpin + 'static,
        S: RpcService,
    {
        let seen = Arc::new(tokio::sync::Notify::new());
        let hyper_service = ToHyper {
            inner: service,
            seen: Arc::clone(&seen),
        };
        let builder =
            hyper_util::server::conn::auto::Builder::new(hyper_util::rt::TokioExecutor::new());
        let conn =
            builder.serve_connection_with_upgrades(hyper_util::rt::TokioIo::new(io), hyper_service);
        let stopped = self.stop.shutdown();
        let limit = self.first_request_timeout;
        let no_first_request = async {
            if tokio::time::timeout(limit, seen.notified()).await.is_err() {
                return;
            }
            std::future::pending::<()>().await
        };
        tokio::pin!(conn, stopped, no_first_request);
        let res = tokio::select! {
            res = &mut conn => res,
            _ = &mut stopped => {
                conn.as_mut().graceful_shutdown();
                conn.await
            }
            _ = &mut no_first_request => Ok(()),
        };
        if let Err(e) = res {
            tracing::debug!("connection ended: {e}");
        }
    }
}

/// The per-connection tower service as hyper's service: request bodies wrapped as jsonrpsee's
/// body, and the first request announced (for the first-request time limit).
#[derive(Clone)]
struct ToHyper<S> {
    inner: S,
    seen: Arc<tokio::sync::Notify>,
}

impl<S> hyper::service::Service<::http::Request<hyper::body::Incoming>> for ToHyper<S>
where
    S: RpcService,
{
    type Response = jsonrpsee::server::HttpResponse;
    type Error = jsonrpsee::core::BoxError;
    type Future = S::Future;

    fn call(&self, req: ::http::Request<hyper::body::Incoming>) -> Self::Future {
        self.seen.notify_one();
        let mut s = self.inner.clone();
        tower::Service::call(&mut s, req.map(HttpBody::new))
    }
}

/// Answers plain text sent to the TLS port with a plain-HTTP 400 that names the https://
/// address, then closes (after reading what the client sent, so that the answer is not lost
/// to a reset).
async fn plain_text_refusal(mut socket: tokio::net::TcpStream, addr: SocketAddr) {
    use tokio::io::{AsyncReadExt, AsyncWriteExt};
    let mut buf = vec![0u8; 16 * 1024];
    let _ =
        tokio::time::timeout(std::time::Duration::from_millis(200), socket.read(&mut buf)).await;
    let body = format!(
        "{}\n",
        tls::PLAIN_HTTP_ANSWER.replace("{addr}", &addr.to_string())
    );
    let answer = format!(
        "HTTP/1.1 400 Bad Request\r\nContent-Type: text/plain; charset=utf-8\r\nContent-Length: {}\r\nConnection: close\r\n\r\n{body}",
        body.len()
    );
    let _ = socket.write_all(answer.as_bytes()).await;
    let _ = socket.shutdown().await;
    let _ = tokio::time::timeout(std::time::Duration::from_millis(200), async {
        while matches!(socket.read(&mut buf).await, Ok(n) if n > 0) {}
    })
    .await;
}

/// A future that resolves on Ctrl-C, or on SIGTERM where there are signals. The Unix handlers
/// are installed when this is called, not when the future is first polled, so a signal that
/// arrives after the listening line was printed is never lost (the default action of SIGTERM
/// would kill the process without the graceful stop).
pub fn shutdown_signal() -> impl std::future::Future<Output = ()> {
    #[cfg(unix)]
    {
        use tokio::signal::unix::{signal, SignalKind};
        let term = signal(SignalKind::terminate()).ok();
        let int = signal(SignalKind::interrupt()).ok();
        async move {
            match (term, int) {
                (Some(mut term), Some(mut int)) => {
                    tokio::select! {
                        _ = int.recv() => {}
                        _ = term.recv() => {}
                    }
                }
                _ => {
                    let _ = tokio::signal::ctrl_c().await;
                }
            }
        }
    }
    #[cfg(not(unix))]
    {
        async {
            let _ = tokio::signal::ctrl_c().await;
        }
    }
}

/// Reloads the tokens file and the TLS certificate of `running` on every SIGHUP (Unix only),
/// without touching the connections.
fn reload_on_sighup(running: &Running) {
    #[cfg(unix)]
    {
        use tokio::signal::unix::{signal, SignalKind};
        let Ok(mut hup) = signal(SignalKind::hangup()) else {
            tracing::warn!("SIGHUP cannot be caught: no reloads");
            return;
        };
        let handle = Running {
            addr: running.addr,
            handle: running.handle.clone(),
            ctx: Arc::clone(&running.ctx),
            tls: running.tls.clone(),
        };
        tokio::spawn(async move {
            while hup.recv().await.is_some() {
                handle.reload();
            }
        });
    }
    #[cfg(not(unix))]
    let _ = running;
}

/// `steamcell serve`: listen, print the one line, serve until Ctrl-C or SIGTERM (reloading the
/// tokens and the certificate on SIGHUP), then stop accepting and let in-flight calls finish.
pub async fn serve(cfg: &ServeConfig) -> std::io::Result<()> {
    if let Exposure::Insecure(warning) = check_exposure(cfg)? {
        eprintln!("steamcell: {warning}");
        tracing::warn!("{warning}");
    }
    let running = start(cfg).await?;
    reload_on_sighup(&running);
    let stop = shutdown_signal();
    {
        let mut out = std::io::stdout().lock();
        writeln!(
            out,
            "{}",
            listening_line(running.addr, running.tls.is_some())
        )?;
        out.flush()?;
    }
    stop.await;
    tracing::info!("shutting down");
    let _ = running.handle.stop();
    running.handle.stopped().await;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A bulk method marked quick would stall a connection worker: none of the methods that
    /// take columns, curves, cycles or networks is quick, and the single-state methods are.
    #[test]
    fn bulk_methods_are_not_quick() {
        let quick = |name: &str| {
            api::find(name)
                .unwrap_or_else(|| panic!("{name} is not a registered method"))
                .quick
        };
        for bulk in [
            "water.batch",
            "water.curve",
            "turbine.train",
            "cycle.rankine",
            "balance.solve",
            "balance.sweep",
            "server.schema",
            "server.selftest",
        ] {
            assert!(!quick(bulk), "{bulk} must run as a blocking method");
        }
        for single in [
            "water.state",
            "water.saturation",
            "turbine.expand",
            "server.info",
        ] {
            assert!(quick(single), "{single} is one bounded evaluation");
        }
    }

    #[test]
    fn nesting_scan() {
        assert_eq!(nesting_depth(br#"{"a":[1,[2]]}"#), 3);
        // Brackets inside strings (and escaped quotes) do not count.
        assert_eq!(nesting_depth(br#"{"a":"[[[[\"[[[["}"#), 1);
        let deep = "[".repeat(100) + &"]".repeat(100);
        assert_eq!(nesting_depth(deep.as_bytes()), 100);
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
    fn request_text_refusals_name_their_limit() {
        let l = limits::Settings {
            max_request_body_bytes: 40,
            max_json_depth: 3,
            max_batch_requests: 2,
            ..limits::Settings::DEFAULT
        };
        let e = check_request_text(&l, &[b' '; 41]).unwrap_err();
        assert_eq!(
            (e.code, e.data["what"].as_str()),
            (1008, Some(limits::what::REQUEST_BODY_BYTES))
        );
        assert_eq!(
            (e.data["limit"].as_f64(), e.data["value"].as_f64()),
            (Some(40.0), Some(41.0))
        );
        let e = check_request_text(&l, b"[[[[1]]]]").unwrap_err();
        assert_eq!(
            (e.data["limit"].as_f64(), e.data["value"].as_f64()),
            (Some(3.0), Some(4.0))
        );
        let e = check_request_text(&l, b"[1,2,3]").unwrap_err();
        assert_eq!(e.data["what"], limits::what::BATCH_CALLS);
        assert_eq!(e.http_status(), 413);
        assert!(check_request_text(&l, b"[1,2]").is_ok());
    }
}
