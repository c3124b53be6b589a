//! The client side of `steamcell call --url URL`: one JSON-RPC call to a running server over
//! HTTP or HTTPS (HTTP/1.1 on one connection), with a bearer token, the CA certificates to
//! trust (`--ca-file`, else the system's trust store) and an optional pinned validation digest
//! (`--expect-digest`: `server.info` is asked first, and a server whose digest differs is
//! refused with both digests named, before the call is made).
//!
//! Invariant: the token is sent only in the `Authorization` header, never printed.

use http_body_util::BodyExt;
use serde_json::Value;
use std::path::Path;
use std::sync::Arc;

/// Why a remote call gave no result.
#[derive(Debug, Clone, PartialEq)]
pub enum ClientError {
    /// The server could not be reached or did not answer JSON-RPC (the reason).
    Transport(String),
    /// The server answered the call with an error.
    Rpc {
        /// Error code.
        code: i64,
        /// One-line message.
        message: String,
    },
    /// The server's validation digest is not the expected one.
    Digest {
        /// The digest asked for.
        expected: String,
        /// The server's.
        found: String,
    },
}

impl std::fmt::Display for ClientError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ClientError::Transport(m) => write!(f, "{m}"),
            ClientError::Rpc { code, message } => write!(f, "error {code}: {message}"),
            ClientError::Digest { expected, found } => write!(
                f,
                "refusing the server: its validation digest {found} is not the expected {expected} (a different or unvalidated build)"
            ),
        }
    }
}

/// Where to send requests: scheme, host, port, path.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Target {
    /// HTTPS.
    pub tls: bool,
    /// Host name or IP address (IPv6 without brackets).
    pub host: String,
    /// Port.
    pub port: u16,
    /// The `Host` header value.
    pub authority: String,
    /// Request path, "/" by default.
    pub path: String,
}

/// Reads `http://host:port/path`, `https://...` or `host:port` (plain HTTP).
pub fn parse_url(url: &str) -> Result<Target, String> {
    let (tls, rest) = if let Some(r) = url.strip_prefix("https://") {
        (true, r)
    } else if let Some(r) = url.strip_prefix("http://") {
        (false, r)
    } else if url.contains("://") {
        return Err(format!("'{url}' is not an http:// or https:// URL"));
    } else {
        (false, url)
    };
    let (authority, path) = match rest.find('/') {
        Some(i) => (&rest[..i], &rest[i..]),
        None => (rest, "/"),
    };
    let (host, port) = if let Some(r) = authority.strip_prefix('[') {
        let (h, after) = r
            .split_once(']')
            .ok_or_else(|| format!("'{url}': unclosed [ in the address"))?;
        (h.to_string(), after.strip_prefix(':'))
    } else {
        match authority.rsplit_once(':') {
            Some((h, p)) => (h.to_string(), Some(p)),
            None => (authority.to_string(), None),
        }
    };
    if host.is_empty() {
        return Err(format!("'{url}' names no host"));
    }
    let port = match port {
        Some(p) => p
            .parse::<u16>()
            .map_err(|_| format!("'{url}': the port '{p}' is not a number from 0 to 65535"))?,
        None if tls => 443,
        None => 80,
    };
    Ok(Target {
        tls,
        host,
        port,
        authority: authority.to_string(),
        path: path.to_string(),
    })
}

/// What to do about a refused server certificate, after the TLS library's own words (which
/// name the fault in its terms only, e.g. `CaUsedAsEndEntity`); empty for other failures.
fn tls_hint(e: &std::io::Error) -> &'static str {
    use rustls::{CertificateError as C, Error};
    let Some(Error::InvalidCertificate(c)) = e.get_ref().and_then(|i| i.downcast_ref::<Error>())
    else {
        return "";
    };
    match c {
        C::UnknownIssuer => {
            ": the server's certificate is not signed by a CA this computer trusts; give that CA's certificate with --ca-file"
        }
        C::NotValidForName | C::NotValidForNameContext { .. } => {
            ": the server's certificate does not name this host; call the server by a name or address its certificate holds"
        }
        C::Expired | C::ExpiredContext { .. } => ": the server's certificate has expired",
        C::NotValidYet | C::NotValidYetContext { .. } => {
            ": the server's certificate is not valid yet (check the clocks)"
        }
        c if format!("{c:?}").contains("CaUsedAsEndEntity") => {
            ": the server's certificate is a CA certificate (basicConstraints CA:TRUE, what `openssl req -x509` makes unless told otherwise); the server needs one made with CA:FALSE (README, Team server)"
        }
        _ => "",
    }
}

/// A server to call.
pub struct Remote {
    target: Target,
    tls: Option<Arc<rustls::ClientConfig>>,
    token: Option<String>,
}

impl Remote {
    /// A server at `url`; `ca_file` for HTTPS (else the system's trust store); `token` sent as
    /// a bearer token.
    pub fn new(url: &str, ca_file: Option<&Path>, token: Option<String>) -> Result<Remote, String> {
        let target = parse_url(url)?;
        let tls = if target.tls {
            Some(Arc::new(super::tls::client_config(ca_file)?))
        } else {
            None
        };
        Ok(Remote { target, tls, token })
    }

    async fn post(&self, body: String) -> Result<(u16, Vec<u8>), String> {
        let t = &self.target;
        let tcp = tokio::net::TcpStream::connect((t.host.as_str(), t.port))
            .await
            .map_err(|e| format!("cannot reach {}:{}: {e}", t.host, t.port))?;
        let _ = tcp.set_nodelay(true);
        match &self.tls {
            None => self.exchange(tcp, body).await,
            Some(cfg) => {
                let name = rustls::pki_types::ServerName::try_from(t.host.clone())
                    .map_err(|e| format!("'{}' is not a host name: {e}", t.host))?;
                let stream = tokio_rustls::TlsConnector::from(Arc::clone(cfg))
                    .connect(name, tcp)
                    .await
                    .map_err(|e| {
                        format!("TLS with {}:{} failed: {e}{}", t.host, t.port, tls_hint(&e))
                    })?;
                self.exchange(stream, body).await
            }
        }
    }

    async fn exchange<I>(&self, io: I, body: String) -> Result<(u16, Vec<u8>), String>
    where
        I: tokio::io::AsyncRead + tokio::io::AsyncWrite + Send + Unpin + 'static,
    {
        let t = &self.target;
        let (mut sender, conn) =
            hyper::client::conn::http1::handshake(hyper_util::rt::TokioIo::new(io))
                .await
                .map_err(|e| format!("HTTP with {}:{} failed: {e}", t.host, t.port))?;
        tokio::spawn(async move {
            let _ = conn.await;
        });
        let mut req = http::Request::post(t.path.as_str())
            .header(http::header::HOST, t.authority.as_str())
            .header(http::header::CONTENT_TYPE, "application/json");
        if let Some(tok) = &self.token {
            req = req.header(http::header::AUTHORIZATION, format!("Bearer {tok}"));
        }
        let req = req
            .body(http_body_util::Full::new(hyper::body::Bytes::from(body)))
            .map_err(|e| format!("bad request: {e}"))?;
        let resp = sender
            .send_request(req)
            .await
            .map_err(|e| format!("no answer from {}:{}: {e}", t.host, t.port))?;
        let status = resp.status().as_u16();
        let bytes = resp
            .into_body()
            .collect()
            .await
            .map_err(|e| format!("the answer of {}:{} broke off: {e}", t.host, t.port))?
            .to_bytes();
        Ok((status, bytes.to_vec()))
    }

    /// One JSON-RPC call: the result, or the error.
    pub async fn call(&self, method: &str, params: Value) -> Result<Value, ClientError> {
        let body =
            serde_json::json!({ "jsonrpc": "2.0", "id": 1, "method": method, "params": params })
                .to_string();
        let (status, bytes) = self.post(body).await.map_err(ClientError::Transport)?;
        let answer: Value = serde_json::from_slice(&bytes).map_err(|_| {
            let hint = if status == 401 {
                " (give the token with --token-file FILE or STEAMCELL_TOKEN)"
            } else {
                ""
            };
            ClientError::Transport(format!(
                "HTTP {status} from {}: {}{hint}",
                self.target.authority,
                String::from_utf8_lossy(&bytes[..bytes.len().min(300)]).trim()
            ))
        })?;
        if let Some(e) = answer.get("error").filter(|e| !e.is_null()) {
            return Err(ClientError::Rpc {
                code: e.get("code").and_then(Value::as_i64).unwrap_or(0),
                message: e
                    .get("message")
                    .and_then(Value::as_str)
                    .unwrap_or("error")
                    .to_string(),
            });
        }
        answer
            .get("result")
            .cloned()
            .ok_or_else(|| ClientError::Transport(format!("answer without result: {answer}")))
    }

    /// Refuses the server unless its `server.info` digest is `expected`.
    pub async fn pin(&self, expected: &str) -> Result<(), ClientError> {
        let info = self.call("server.info", serde_json::json!({})).await?;
        let found = info
            .get("digest")
            .and_then(Value::as_str)
            .unwrap_or("")
            .to_string();
        if found != expected {
            return Err(ClientError::Digest {
                expected: expected.to_string(),
                found,
            });
        }
        Ok(())
    }
}

/// `steamcell call --url`: the pretty JSON text of the result of `method` with `params_text`
/// (a JSON object), after pinning the digest when one is expected.
pub fn call_text(
    url: &str,
    ca_file: Option<&Path>,
    token: Option<String>,
    expect_digest: Option<&str>,
    method: &str,
    params_text: &str,
) -> Result<String, ClientError> {
    let params: Value = serde_json::from_str(params_text).map_err(|e| ClientError::Rpc {
        code: crate::api::codes::PARSE_ERROR,
        message: format!("the params are not JSON: {e}"),
    })?;
    let remote = Remote::new(url, ca_file, token).map_err(ClientError::Transport)?;
    let rt = tokio::runtime::Builder::new_current_thread()
        .enable_all()
        .build()
        .map_err(|e| ClientError::Transport(e.to_string()))?;
    rt.block_on(async {
        if let Some(d) = expect_digest {
            remote.pin(d).await?;
        }
        let result = remote.call(method, params).await?;
        Ok(serde_json::to_string_pretty(&result).unwrap_or_default())
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn urls() {
        let t = parse_url("https://calc.plant.example:8443/").unwrap();
        assert!(t.tls);
        assert_eq!(
            (t.host.as_str(), t.port, t.path.as_str()),
            ("calc.plant.example", 8443, "/")
        );
        let t = parse_url("127.0.0.1:8790").unwrap();
        assert!(!t.tls);
        assert_eq!((t.host.as_str(), t.port), ("127.0.0.1", 8790));
        let t = parse_url("http://[::1]:99").unwrap();
        assert_eq!(
            (t.host.as_str(), t.port, t.authority.as_str()),
            ("::1", 99, "[::1]:99")
        );
        assert_eq!(parse_url("https://x").unwrap().port, 443);
        assert!(parse_url("ftp://x").is_err());
        assert!(parse_url("http://x:port").is_err());
    }
}
