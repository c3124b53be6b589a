//! Plain HTTP GET routes served beside JSON-RPC on the same port, as a tower layer in front of
//! the jsonrpsee service:
//!
//! - `GET /health` -> `ok` (text/plain)
//! - `GET /schema` -> the OpenRPC document (application/json)
//! - `GET /cell/{quantity}?{name=value...}` -> the bare number (text/plain), see
//!   [`crate::api::cell`]; failures answer 400/404/422/500 with a one-line reason (text/plain).
//!
//! Invariant: anything else (POST, WebSocket upgrades, other paths) passes to jsonrpsee
//! untouched.

use crate::api::{self, cell};
use jsonrpsee::core::BoxError;
use jsonrpsee::server::{HttpBody, HttpRequest, HttpResponse};
use std::future::Future;
use std::pin::Pin;
use std::task::{Context, Poll};
use tower::{Layer, Service};

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
    Cell { quantity: String, query: String },
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
                let quantity = form_urlencoded::parse(format!("q={rest}").as_bytes())
                    .next()
                    .map(|(_, v)| v.into_owned())
                    .unwrap_or_default();
                Some(Route::Cell {
                    quantity,
                    query: query.unwrap_or("").to_string(),
                })
            }
        }
        _ => None,
    }
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
}
