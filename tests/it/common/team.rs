//! Helpers of the team-server tests (TLS, named tokens, metrics, validation record, deploy):
//! certificates made in the test with rcgen (a private CA and a server certificate for
//! localhost and 127.0.0.1), HTTPS and WSS requests over rustls, a tokens file, SIGHUP, and a
//! server whose standard error is kept for reading.

use super::{read_response, Response, BIN};
use std::io::{BufRead, BufReader, Read, Write};
use std::net::TcpStream;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::sync::Arc;
use std::time::Duration;

/// A fresh directory for one test.
pub fn temp_dir(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("steamcell-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

/// A private CA and a server certificate signed by it, written as PEM files.
pub struct Certs {
    /// The CA certificate (what a client trusts).
    pub ca: PathBuf,
    /// The server's certificate.
    pub cert: PathBuf,
    /// The server's private key.
    pub key: PathBuf,
}

/// Makes a CA named `name` and a server certificate for localhost and 127.0.0.1 in `dir`.
pub fn make_certs(dir: &Path, name: &str) -> Certs {
    use rcgen::{BasicConstraints, CertificateParams, DnType, IsCa, Issuer, KeyPair};
    let ca_key = KeyPair::generate().unwrap();
    let mut ca_params = CertificateParams::new(Vec::<String>::new()).unwrap();
    ca_params.is_ca = IsCa::Ca(BasicConstraints::Unconstrained);
    ca_params
        .distinguished_name
        .push(DnType::CommonName, format!("{name} test CA"));
    let ca_cert = ca_params.self_signed(&ca_key).unwrap();
    let issuer = Issuer::new(ca_params, ca_key);
    let key = KeyPair::generate().unwrap();
    let mut params =
        CertificateParams::new(vec!["localhost".to_string(), "127.0.0.1".to_string()]).unwrap();
    params
        .distinguished_name
        .push(DnType::CommonName, "steamcell test server");
    let cert = params.signed_by(&key, &issuer).unwrap();
    let certs = Certs {
        ca: dir.join(format!("{name}-ca.pem")),
        cert: dir.join(format!("{name}-cert.pem")),
        key: dir.join(format!("{name}-key.pem")),
    };
    std::fs::write(&certs.ca, ca_cert.pem()).unwrap();
    std::fs::write(&certs.cert, cert.pem()).unwrap();
    std::fs::write(&certs.key, key.serialize_pem()).unwrap();
    certs
}

/// A rustls client trusting the CA of `ca` (PEM).
pub fn client_config(ca: &Path) -> Arc<rustls::ClientConfig> {
    use rustls::pki_types::pem::PemObject;
    let mut roots = rustls::RootCertStore::empty();
    for c in rustls::pki_types::CertificateDer::pem_file_iter(ca).unwrap() {
        roots.add(c.unwrap()).unwrap();
    }
    Arc::new(
        rustls::ClientConfig::builder_with_provider(Arc::new(
            rustls::crypto::ring::default_provider(),
        ))
        .with_safe_default_protocol_versions()
        .unwrap()
        .with_root_certificates(roots)
        .with_no_client_auth(),
    )
}

/// A TLS connection to `addr` (host 127.0.0.1) trusting `ca`; `Err` carries the handshake
/// failure.
pub fn tls_connect(
    addr: &str,
    ca: &Path,
) -> std::io::Result<rustls::StreamOwned<rustls::ClientConnection, TcpStream>> {
    let tcp = TcpStream::connect(addr)?;
    tcp.set_read_timeout(Some(Duration::from_secs(60)))?;
    let name = rustls::pki_types::ServerName::try_from("127.0.0.1").unwrap();
    let conn =
        rustls::ClientConnection::new(client_config(ca), name).map_err(std::io::Error::other)?;
    let mut s = rustls::StreamOwned::new(conn, tcp);
    // Drive the handshake now, so that a refused certificate shows here.
    while s.conn.is_handshaking() {
        s.conn.complete_io(&mut s.sock)?;
    }
    Ok(s)
}

/// The text of one HTTP/1.1 request with `Connection: close` unless `keep` is set.
pub fn request_text(
    addr: &str,
    method: &str,
    target: &str,
    headers: &[&str],
    body: &[u8],
    keep: bool,
) -> Vec<u8> {
    let mut head = format!("{method} {target} HTTP/1.1\r\nHost: {addr}\r\n");
    for h in headers {
        head.push_str(h);
        head.push_str("\r\n");
    }
    head.push_str(&format!("Content-Length: {}\r\n", body.len()));
    if !keep {
        head.push_str("Connection: close\r\n");
    }
    head.push_str("\r\n");
    let mut raw = head.into_bytes();
    raw.extend_from_slice(body);
    raw
}

/// One HTTPS request on a fresh connection trusting `ca`.
pub fn https(
    addr: &str,
    ca: &Path,
    method: &str,
    target: &str,
    headers: &[&str],
    body: &[u8],
) -> Response {
    let mut s = tls_connect(addr, ca).unwrap();
    s.write_all(&request_text(addr, method, target, headers, body, false))
        .unwrap();
    read_response(&mut BufReader::new(s)).unwrap()
}

/// A JSON-RPC POST over HTTPS.
pub fn https_post(addr: &str, ca: &Path, headers: &[&str], body: &[u8]) -> Response {
    let mut h = vec!["Content-Type: application/json"];
    h.extend_from_slice(headers);
    https(addr, ca, "POST", "/", &h, body)
}

/// A kept-alive HTTP/1.1 connection (plain or TLS) for several requests in a row.
pub struct KeepAlive<S: Read + Write> {
    addr: String,
    r: BufReader<S>,
}

impl KeepAlive<TcpStream> {
    /// A plain connection.
    pub fn plain(addr: &str) -> KeepAlive<TcpStream> {
        let s = TcpStream::connect(addr).unwrap();
        s.set_read_timeout(Some(Duration::from_secs(60))).unwrap();
        KeepAlive {
            addr: addr.to_string(),
            r: BufReader::new(s),
        }
    }
}

impl<S: Read + Write> KeepAlive<S> {
    /// One JSON-RPC POST on the connection (kept open).
    pub fn post(&mut self, headers: &[&str], body: &[u8]) -> Response {
        let mut h = vec!["Content-Type: application/json"];
        h.extend_from_slice(headers);
        let raw = request_text(&self.addr, "POST", "/", &h, body, true);
        self.r.get_mut().write_all(&raw).unwrap();
        read_response(&mut self.r).unwrap()
    }
}

/// A WebSocket over any stream (plain or TLS), text messages only.
pub struct AnyWs<S: Read + Write> {
    r: BufReader<S>,
}

impl<S: Read + Write> AnyWs<S> {
    /// The upgrade handshake on `s` (with extra header lines, e.g. the token); panics unless 101.
    pub fn open(s: S, addr: &str, headers: &[&str]) -> AnyWs<S> {
        let mut r = BufReader::new(s);
        let mut head = format!(
            "GET / HTTP/1.1\r\nHost: {addr}\r\nUpgrade: websocket\r\nConnection: Upgrade\r\n\
             Sec-WebSocket-Key: dGhlIHNhbXBsZSBub25jZQ==\r\nSec-WebSocket-Version: 13\r\n"
        );
        for h in headers {
            head.push_str(h);
            head.push_str("\r\n");
        }
        head.push_str("\r\n");
        r.get_mut().write_all(head.as_bytes()).unwrap();
        let mut status = String::new();
        r.read_line(&mut status).unwrap();
        assert!(status.contains(" 101 "), "{status}");
        loop {
            let mut l = String::new();
            r.read_line(&mut l).unwrap();
            if l.trim_end().is_empty() {
                break;
            }
        }
        AnyWs { r }
    }

    /// Sends one text message and returns the next text message.
    pub fn call(&mut self, text: &str) -> String {
        let frame = super::ws_text_frame(text, [0x21, 0x7e, 0x03, 0x5c]);
        self.r.get_mut().write_all(&frame).unwrap();
        self.r.get_mut().flush().unwrap();
        super::ws_next_text(&mut self.r)
    }
}

/// A tokens-file line for `name` with `token` and `options` (the SHA-256 hash as the server
/// wants it, computed here with ring, independently of the server's code).
pub fn token_line(name: &str, token: &str, options: &str) -> String {
    let d = ring::digest::digest(&ring::digest::SHA256, token.as_bytes());
    let hex: String = d.as_ref().iter().map(|b| format!("{b:02x}")).collect();
    format!("{name} sha256:{hex} {options}")
}

/// A running `steamcell serve` whose standard error goes to a file; killed when dropped.
pub struct Logged {
    pub child: Child,
    /// host:port as the listening line printed it.
    pub addr: String,
    /// The listening line.
    pub line: String,
    /// The file holding its standard error.
    pub stderr: PathBuf,
}

impl Logged {
    /// What the server wrote to standard error so far.
    pub fn stderr_text(&self) -> String {
        std::fs::read_to_string(&self.stderr).unwrap_or_default()
    }

    /// Sends SIGHUP (reload the tokens file and the certificate).
    pub fn hangup(&self) {
        let ok = Command::new("kill")
            .args(["-HUP", &self.child.id().to_string()])
            .status()
            .unwrap()
            .success();
        assert!(ok, "kill -HUP failed");
    }
}

impl Drop for Logged {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

/// Starts `steamcell serve ARGS` (with `--listen 127.0.0.1:0` unless given) keeping its
/// standard error in `dir/stderr-N`, and waits for the listening line.
pub fn start_logged(dir: &Path, args: &[&str], env: &[(&str, &str)]) -> Logged {
    static N: std::sync::atomic::AtomicUsize = std::sync::atomic::AtomicUsize::new(0);
    let n = N.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
    let stderr = dir.join(format!("stderr-{n}"));
    let mut cmd = Command::new(BIN);
    cmd.arg("serve");
    if !args.contains(&"--listen") && !args.contains(&"--config") {
        cmd.args(["--listen", "127.0.0.1:0"]);
    }
    cmd.args(args)
        .env_remove("STEAMCELL_TOKEN")
        .env_remove("STEAMCELL_DEBUG_CORRUPT_COEFFICIENT")
        .env("RUST_LOG", "warn,steamcell=info")
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(std::fs::File::create(&stderr).unwrap());
    for (k, v) in env {
        cmd.env(k, v);
    }
    let mut child = cmd.spawn().expect("binary starts");
    let stdout = child.stdout.take().unwrap();
    let mut line = String::new();
    BufReader::new(stdout).read_line(&mut line).unwrap();
    let addr = line
        .split("://")
        .nth(1)
        .and_then(|s| s.split_whitespace().next())
        .unwrap_or_else(|| {
            panic!(
                "no address in {line:?}; stderr: {}",
                std::fs::read_to_string(&stderr).unwrap_or_default()
            )
        })
        .to_string();
    Logged {
        child,
        addr,
        line,
        stderr,
    }
}

/// Runs `steamcell ARGS` to its end (no token in the environment): exit code, stdout, stderr.
pub fn run(args: &[&str], env: &[(&str, &str)]) -> (Option<i32>, String, String) {
    let mut cmd = Command::new(BIN);
    cmd.args(args)
        .env_remove("STEAMCELL_TOKEN")
        .env_remove("STEAMCELL_DEBUG_CORRUPT_COEFFICIENT")
        .stdin(Stdio::null());
    for (k, v) in env {
        cmd.env(k, v);
    }
    let out = cmd.output().unwrap();
    (
        out.status.code(),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// Polls `f` every 50 ms until it is true, for at most 20 s.
pub fn eventually(what: &str, mut f: impl FnMut() -> bool) {
    let deadline = std::time::Instant::now() + Duration::from_secs(20);
    while std::time::Instant::now() < deadline {
        if f() {
            return;
        }
        std::thread::sleep(Duration::from_millis(50));
    }
    panic!("{what}: not within 20 s");
}
