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

pub mod http;
pub mod stdio;

use crate::api::{self, limits, ApiError};
use jsonrpsee::server::{BatchRequestConfig, RpcModule, Server, ServerConfig, ServerHandle};
use jsonrpsee::types::ErrorObjectOwned;
use std::io::Write;
use std::net::SocketAddr;

/// The default listen address of `steamcell serve`.
pub const DEFAULT_LISTEN: &str = "127.0.0.1:8790";

/// Converts an API error into a JSON-RPC error object.
pub fn to_error_object(e: ApiError) -> ErrorObjectOwned {
    let code = i32::try_from(e.code).unwrap_or(api::codes::INTERNAL_ERROR as i32);
    ErrorObjectOwned::owned(code, e.message, Some(e.data))
}

/// The JSON-RPC module with every registry method registered (as a blocking method).
pub fn rpc_module() -> RpcModule<()> {
    let mut module = RpcModule::new(());
    for spec in api::registry() {
        let name = spec.name;
        let result = module.register_blocking_method(name, move |params, _ctx, _ext| {
            let value = match params.as_str() {
                None => serde_json::Value::Null,
                Some(text) => serde_json::from_str(text).map_err(|e| {
                    to_error_object(ApiError::invalid_params(
                        ".",
                        format!("invalid params: {e}"),
                    ))
                })?,
            };
            match api::find(name) {
                Some(spec) => spec.invoke(value).map_err(to_error_object),
                None => Err(to_error_object(ApiError::method_not_found(name))),
            }
        });
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

/// Binds `listen` and starts serving on the current tokio runtime.
pub async fn start(listen: &str) -> std::io::Result<Running> {
    api::mark_started();
    let config = ServerConfig::builder()
        .max_request_body_size(limits::MAX_REQUEST_BODY_BYTES)
        .max_response_body_size(limits::MAX_RESPONSE_BODY_BYTES)
        .max_connections(limits::MAX_CONNECTIONS)
        .set_batch_request_config(BatchRequestConfig::Limit(limits::MAX_BATCH_REQUESTS))
        .build();
    let server = Server::builder()
        .set_config(config)
        .set_http_middleware(tower::ServiceBuilder::new().layer(http::GetRoutesLayer))
        .build(listen)
        .await?;
    let addr = server.local_addr()?;
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
pub async fn serve(listen: &str) -> std::io::Result<()> {
    let running = start(listen).await?;
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
