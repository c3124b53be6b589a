//! Transports: JSON-RPC 2.0 over HTTP POST and WebSocket on one port (`steamcell serve`), plain
//! HTTP GET routes beside it (`/health`, `/schema`, `/cell/{quantity}`), and newline-delimited
//! JSON-RPC over stdin/stdout (`steamcell stdio`).
//!
//! Every transport dispatches through the one [`RpcModule`] built by [`rpc_module`] from the
//! API registry, so validation and error codes are identical everywhere. Method bodies run on
//! the blocking thread pool so a long computation never stalls the async runtime.
//!
//! Invariant: the server prints exactly one line to stdout when it listens (see
//! [`listening_line`]); everything else it says goes to stderr through `tracing`.

pub mod addin;
pub mod audit;
pub mod http;
pub mod stdio;

use crate::api::{self, counters, limits, ApiError};
use jsonrpsee::server::{BatchRequestConfig, RpcModule, Server, ServerConfig, ServerHandle};
use jsonrpsee::types::ErrorObjectOwned;
use std::io::Write;
use std::net::{SocketAddr, ToSocketAddrs};
use std::path::PathBuf;
use std::sync::atomic::{AtomicU64, Ordering};
use std::time::{Duration, Instant};

/// The default listen address of `steamcell serve`.
pub const DEFAULT_LISTEN: &str = "127.0.0.1:8790";

/// Converts an API error into a JSON-RPC error object.
pub fn to_error_object(e: ApiError) -> ErrorObjectOwned {
    let code = i32::try_from(e.code).unwrap_or(api::codes::INTERNAL_ERROR as i32);
    ErrorObjectOwned::owned(code, e.message, Some(e.data))
}

static NEXT_CALL: AtomicU64 = AtomicU64::new(1);

/// Runs one call of method `name`: in-flight limit, dispatch, log line and audit line.
fn run_call(
    name: &'static str,
    params_text: Option<&str>,
    request: Option<http::RequestId>,
) -> Result<serde_json::Value, ApiError> {
    let call = NEXT_CALL.fetch_add(1, Ordering::Relaxed);
    let request_id = match request {
        Some(r) => format!("{}.{call}", r.0),
        None => format!("0.{call}"),
    };
    let started = Instant::now();
    let limit = u64::from(limits::current().max_in_flight);
    let answer = match counters::InFlight::try_begin(limit) {
        None => {
            counters::count_refused();
            Err(ApiError::from(crate::Error::LimitExceeded {
                what: "method calls in flight".into(),
                limit: limit as f64,
                value: (counters::in_flight() + 1) as f64,
            }))
        }
        Some(_running) => {
            let value = match params_text {
                None => Ok(serde_json::Value::Null),
                Some(text) => serde_json::from_str(text)
                    .map_err(|e| ApiError::invalid_params(".", format!("invalid params: {e}"))),
            };
            value.and_then(|v| match api::find(name) {
                Some(spec) => spec.invoke(v),
                None => Err(ApiError::method_not_found(name)),
            })
        }
    };
    let code = answer.as_ref().err().map(|e| e.code);
    tracing::info!(
        request_id = %request_id,
        method = name,
        elapsed_ms = started.elapsed().as_secs_f64() * 1e3,
        error_code = ?code,
        "call"
    );
    if audit::enabled() {
        let outcome = match &answer {
            Ok(v) => Ok(v.clone()),
            Err(e) => Err(e.code),
        };
        audit::record(&request_id, name, params_text, &outcome);
    }
    answer
}

/// Methods whose one call is a handful of property evaluations (microseconds, bounded by the
/// solvers' iteration limits): they run on the connection's async worker, without the hand-off
/// to the blocking pool that costs tens of microseconds per call. Everything else (columns,
/// curves, cycles, site balances, the schema, the self-test) runs as a blocking method.
pub const QUICK_METHODS: &[&str] = &[
    "water.state",
    "water.saturation",
    "turbine.expand",
    "pump.raise",
    "valve.throttle",
    "desuperheater.spray",
    "flash.separate",
    "header.mix",
    "exchanger.balance",
    "boiler.fire",
    "deaerator.balance",
    "server.info",
];

/// The JSON-RPC module with every registry method registered: [`QUICK_METHODS`] inline, the
/// rest as blocking methods.
pub fn rpc_module() -> RpcModule<()> {
    let mut module = RpcModule::new(());
    for spec in api::registry() {
        let name = spec.name;
        let body =
            move |params: jsonrpsee::types::Params, _ctx: &(), ext: &jsonrpsee::Extensions| {
                run_call(name, params.as_str(), ext.get::<http::RequestId>().copied())
                    .map_err(to_error_object)
            };
        let result = if QUICK_METHODS.contains(&name) {
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
    /// The limits in force (also set process-wide for `server.info` and the methods).
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

/// Binds `cfg.listen` and starts serving on the current tokio runtime.
pub async fn start(cfg: &ServeConfig) -> std::io::Result<Running> {
    check_exposure(cfg)?;
    api::mark_started();
    limits::configure(cfg.limits);
    if let Some(path) = &cfg.audit {
        audit::open(path)?;
    }
    if !cfg.sites.is_empty() {
        api::site::register(&cfg.sites)
            .map_err(|e| std::io::Error::new(std::io::ErrorKind::InvalidInput, e))?;
    }
    let l = cfg.limits;
    let timeout = Duration::from_millis(l.request_timeout_ms.max(1));
    let config = ServerConfig::builder()
        // jsonrpsee applies this to HTTP bodies and WebSocket messages; HTTP bodies are held
        // to their own limit by the guard first.
        .max_request_body_size(l.max_ws_message_bytes.max(l.max_request_body_bytes))
        .max_response_body_size(l.max_response_body_bytes)
        .max_connections(l.max_connections)
        .set_batch_request_config(BatchRequestConfig::Limit(l.max_batch_requests))
        .set_first_request_timeout(Some(timeout))
        .build();
    let listener = std::net::TcpListener::bind(&cfg.listen)?;
    listener.set_nonblocking(true)?;
    let addr = listener.local_addr()?;
    let guard = http::GuardLayer::new(http::GuardConfig {
        token: cfg.token.clone(),
        allow_hosts: cfg.allow_hosts.clone(),
        allow_origins: cfg.allow_origins.clone(),
        listen: addr,
        max_body_bytes: l.max_request_body_bytes as usize,
        max_json_depth: l.max_json_depth,
        max_batch_requests: l.max_batch_requests as usize,
        request_timeout: timeout,
    });
    let server = Server::builder()
        .set_config(config)
        .set_http_middleware(
            tower::ServiceBuilder::new()
                .layer(guard)
                .layer(http::GetRoutesLayer),
        )
        .build_from_tcp(listener)?;
    let handle = server.start(rpc_module());
    Ok(Running { addr, handle })
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

    /// A misspelt name in QUICK_METHODS would silently fall back to the blocking pool, and a
    /// bulk method in it would stall a connection worker: every name is a registry method,
    /// and none of the methods that take columns, curves, cycles or networks is listed.
    #[test]
    fn quick_methods_are_real_and_small() {
        let names: Vec<&str> = api::registry().iter().map(|s| s.name).collect();
        for q in QUICK_METHODS {
            assert!(names.contains(q), "{q} is not a registered method");
        }
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
            assert!(names.contains(&bulk), "{bulk} is not a registered method");
            assert!(
                !QUICK_METHODS.contains(&bulk),
                "{bulk} must run as a blocking method"
            );
        }
    }
}
