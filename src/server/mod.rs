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
pub mod http;
pub mod stdio;

use crate::api::site::Sites;
use crate::api::{self, limits, ApiError, ServerCtx};
use jsonrpsee::core::middleware::{Batch, Notification, ResponseFuture, RpcServiceT};
use jsonrpsee::server::middleware::rpc::RpcServiceBuilder;
use jsonrpsee::server::{
    BatchRequestConfig, MethodResponse, RpcModule, Server, ServerConfig, ServerHandle,
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

/// Converts an API error into a JSON-RPC error object.
pub fn to_error_object(e: ApiError) -> ErrorObjectOwned {
    let code = i32::try_from(e.code).unwrap_or(api::codes::INTERNAL_ERROR as i32);
    ErrorObjectOwned::owned(code, e.message, Some(e.data))
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

/// The one call path (see the module doc): takes an in-flight slot or refuses with the
/// in-flight limit error, runs `body`, counts the call, writes the `call` log line and the
/// audit line. `name` is the method (or, for GET /site and POST /columns, the route).
pub fn run_call<T: audit::Digest>(
    ctx: &ServerCtx,
    name: &str,
    params: CallParams<'_>,
    request: Option<RequestId>,
    body: impl FnOnce() -> Result<T, ApiError>,
) -> Result<T, ApiError> {
    let id = CallId(request, ctx.next_call_id());
    let started = Instant::now();
    ctx.count_request();
    let answer = match ctx.try_begin() {
        None => Err(limits::busy(u64::from(ctx.limits.max_in_flight))),
        Some(_running) => body(),
    };
    if answer.is_err() {
        ctx.count_failure();
    }
    let code = answer.as_ref().err().map(|e| e.code);
    tracing::info!(
        request_id = %id,
        method = name,
        elapsed_ms = started.elapsed().as_secs_f64() * 1e3,
        error_code = ?code,
        "call"
    );
    if let Some(file) = ctx.audit_file() {
        let outcome = answer.as_ref().map_err(|e| e.code);
        audit::record(file, &id.to_string(), name, params, outcome);
    }
    answer
}

/// A refusal of a whole request (before any call runs): counted as a failed request and logged.
pub fn refuse(ctx: &ServerCtx, e: ApiError) -> ApiError {
    ctx.count_request();
    ctx.count_failure();
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
/// without `data`, so it is off.
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
        match refused {
            Some(e) => ResponseFuture::ready(MethodResponse::error(
                Id::Null,
                to_error_object(refuse(&self.ctx, e)),
            )),
            None => ResponseFuture::future(self.inner.call(request)),
        }
    }

    fn batch<'a>(&self, batch: Batch<'a>) -> impl Future<Output = MethodResponse> + Send + 'a {
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
            let request = ext.get::<RequestId>().copied();
            run_call(ctx, name, logged, request, || {
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

/// The one line printed on start.
pub fn listening_line(addr: SocketAddr) -> String {
    format!(
        "steamcell {} listening on http://{addr} (ws://{addr}) formulations: {}",
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
    /// Its context (limits, counters, sites, audit file).
    pub ctx: Arc<ServerCtx>,
}

/// How `steamcell serve` runs: address, access control, limits, audit file. Its `Debug` output
/// never shows the token.
#[derive(Clone)]
pub struct ServeConfig {
    /// Address to listen on, e.g. `127.0.0.1:8790` (port 0 picks a free port).
    pub listen: String,
    /// Bearer token required on every request (except `GET /health`); required to listen on
    /// a non-loopback address.
    pub token: Option<String>,
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

impl std::fmt::Debug for ServeConfig {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("ServeConfig")
            .field("listen", &self.listen)
            .field("token", &self.token.as_ref().map(|_| "<redacted>"))
            .field("allow_hosts", &self.allow_hosts)
            .field("allow_origins", &self.allow_origins)
            .field("limits", &self.limits)
            .field("audit", &self.audit)
            .field("sites", &self.sites)
            .finish()
    }
}

impl ServeConfig {
    /// Loopback only, no token, default limits, no audit.
    pub fn local(listen: &str) -> ServeConfig {
        ServeConfig {
            listen: listen.to_string(),
            token: None,
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

/// Refuses a non-loopback listen address without a token (the reason as the error text).
pub fn check_exposure(cfg: &ServeConfig) -> std::io::Result<()> {
    if cfg.token.is_none() && !is_loopback_listen(&cfg.listen)? {
        return Err(std::io::Error::new(
            std::io::ErrorKind::PermissionDenied,
            format!(
                "refusing to listen on {} (not a loopback address) without a token: give \
                 --token-file PATH or set STEAMCELL_TOKEN, or listen on 127.0.0.1",
                cfg.listen
            ),
        ));
    }
    if cfg.token.as_deref().is_some_and(|t| t.is_empty()) {
        return Err(std::io::Error::new(
            std::io::ErrorKind::InvalidInput,
            "the token is empty",
        ));
    }
    Ok(())
}

/// The context of a server started with `cfg`: its limits, its audit file (opened for
/// appending) and its sites (each read and solved now).
pub fn context(cfg: &ServeConfig) -> std::io::Result<Arc<ServerCtx>> {
    let mut ctx = ServerCtx::new(cfg.limits);
    if let Some(path) = &cfg.audit {
        ctx = ctx.with_audit(audit::open(path)?);
    }
    if !cfg.sites.is_empty() {
        let sites = Sites::load(&cfg.sites)
            .map_err(|e| std::io::Error::new(std::io::ErrorKind::InvalidInput, e))?;
        ctx = ctx.with_sites(sites);
    }
    Ok(Arc::new(ctx))
}

/// Binds `cfg.listen` and starts serving on the current tokio runtime.
pub async fn start(cfg: &ServeConfig) -> std::io::Result<Running> {
    check_exposure(cfg)?;
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
        .set_first_request_timeout(Some(timeout))
        .build();
    let listener = std::net::TcpListener::bind(&cfg.listen)?;
    listener.set_nonblocking(true)?;
    let addr = listener.local_addr()?;
    let guard = http::GuardLayer::new(
        http::GuardConfig {
            token: cfg.token.clone(),
            allow_hosts: cfg.allow_hosts.clone(),
            allow_origins: cfg.allow_origins.clone(),
            listen: addr,
        },
        Arc::clone(&ctx),
    );
    let batch_ctx = Arc::clone(&ctx);
    let server = Server::builder()
        .set_config(config)
        .set_http_middleware(tower::ServiceBuilder::new().layer(guard))
        .set_rpc_middleware(
            RpcServiceBuilder::new().layer_fn(move |inner| MessageLimits {
                inner,
                ctx: Arc::clone(&batch_ctx),
            }),
        )
        .build_from_tcp(listener)?;
    let handle = server.start(rpc_module(Arc::clone(&ctx)));
    Ok(Running { addr, handle, ctx })
}

/// Resolves on Ctrl-C, or on SIGTERM where there are signals.
pub async fn shutdown_signal() {
    #[cfg(unix)]
    {
        use tokio::signal::unix::{signal, SignalKind};
        match signal(SignalKind::terminate()) {
            Ok(mut term) => {
                tokio::select! {
                    _ = tokio::signal::ctrl_c() => {}
                    _ = term.recv() => {}
                }
            }
            Err(_) => {
                let _ = tokio::signal::ctrl_c().await;
            }
        }
    }
    #[cfg(not(unix))]
    {
        let _ = tokio::signal::ctrl_c().await;
    }
}

/// `steamcell serve`: listen, print the one line, serve until Ctrl-C or SIGTERM, then stop
/// accepting and let in-flight calls finish.
pub async fn serve(cfg: &ServeConfig) -> std::io::Result<()> {
    let running = start(cfg).await?;
    {
        let mut out = std::io::stdout().lock();
        writeln!(out, "{}", listening_line(running.addr))?;
        out.flush()?;
    }
    shutdown_signal().await;
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
