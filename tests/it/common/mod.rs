//! Helpers shared by the black-box server tests (security, bad_input, load, transports): start
//! the real `steamcell serve` binary with flags, and speak minimal HTTP/1.1 and WebSocket over
//! std `TcpStream`; start `steamcell stdio` and speak lines.
#![allow(dead_code)]

pub mod team;

use std::io::{BufRead, BufReader, Write};
use std::net::TcpStream;
use std::process::{Child, Command, Stdio};
use std::time::Duration;

pub const BIN: &str = env!("CARGO_BIN_EXE_steamcell");

/// A running `steamcell serve`, killed when dropped.
pub struct Server {
    pub child: Child,
    pub addr: String,
}

impl Drop for Server {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

/// Starts `steamcell serve --listen 127.0.0.1:0 ARGS...` (or with `--listen` in `args`) with
/// extra environment `env`, and waits for its one listening line.
pub fn start(args: &[&str], env: &[(&str, &str)]) -> Server {
    let mut cmd = Command::new(BIN);
    cmd.arg("serve");
    if !args.contains(&"--listen") {
        cmd.args(["--listen", "127.0.0.1:0"]);
    }
    cmd.args(args)
        .env_remove("STEAMCELL_TOKEN")
        .stdout(Stdio::piped())
        .stderr(Stdio::null());
    for (k, v) in env {
        cmd.env(k, v);
    }
    let mut child = cmd.spawn().expect("binary starts");
    let stdout = child.stdout.take().unwrap();
    let mut line = String::new();
    BufReader::new(stdout).read_line(&mut line).unwrap();
    // http:// or, with TLS, https://
    let addr = line
        .split("://")
        .nth(1)
        .and_then(|s| s.split_whitespace().next())
        .unwrap_or_else(|| panic!("no address in {line:?}"))
        .to_string();
    Server { child, addr }
}

/// An HTTP response: status, lower-cased headers, body bytes.
#[derive(Debug)]
pub struct Response {
    pub status: u16,
    pub headers: Vec<(String, String)>,
    pub body: Vec<u8>,
}

impl Response {
    pub fn header(&self, name: &str) -> Option<&str> {
        self.headers
            .iter()
            .find(|(k, _)| k.eq_ignore_ascii_case(name))
            .map(|(_, v)| v.as_str())
    }

    pub fn text(&self) -> String {
        String::from_utf8_lossy(&self.body).into_owned()
    }

    pub fn json(&self) -> serde_json::Value {
        serde_json::from_slice(&self.body)
            .unwrap_or_else(|e| panic!("not JSON ({e}): {}", self.text()))
    }
}

/// Reads one HTTP/1.1 response from `r` (Content-Length or chunked body).
pub fn read_response<R: BufRead>(r: &mut R) -> std::io::Result<Response> {
    let mut status_line = String::new();
    if r.read_line(&mut status_line)? == 0 {
        return Err(std::io::Error::new(
            std::io::ErrorKind::UnexpectedEof,
            "connection closed before a response",
        ));
    }
    let status: u16 = status_line
        .split_whitespace()
        .nth(1)
        .and_then(|s| s.parse().ok())
        .ok_or_else(|| std::io::Error::other(format!("bad status line {status_line:?}")))?;
    let mut headers = Vec::new();
    loop {
        let mut l = String::new();
        r.read_line(&mut l)?;
        let l = l.trim_end();
        if l.is_empty() {
            break;
        }
        if let Some((k, v)) = l.split_once(':') {
            headers.push((k.trim().to_ascii_lowercase(), v.trim().to_string()));
        }
    }
    let get = |n: &str| headers.iter().find(|(k, _)| k == n).map(|(_, v)| v.clone());
    let mut body = Vec::new();
    if get("transfer-encoding").is_some_and(|v| v.eq_ignore_ascii_case("chunked")) {
        loop {
            let mut size = String::new();
            r.read_line(&mut size)?;
            let n = usize::from_str_radix(size.trim(), 16).map_err(std::io::Error::other)?;
            let mut chunk = vec![0; n + 2];
            r.read_exact(&mut chunk)?;
            if n == 0 {
                break;
            }
            body.extend_from_slice(&chunk[..n]);
        }
    } else if let Some(n) = get("content-length").and_then(|v| v.parse::<usize>().ok()) {
        body = vec![0; n];
        r.read_exact(&mut body)?;
    }
    Ok(Response {
        status,
        headers,
        body,
    })
}

/// One request on a fresh connection (`Connection: close`): method, target, extra header lines
/// (each "Name: value"), raw body. Host defaults to the server address unless given.
pub fn request(addr: &str, method: &str, target: &str, headers: &[&str], body: &[u8]) -> Response {
    let mut s = TcpStream::connect(addr).unwrap();
    s.set_read_timeout(Some(Duration::from_secs(60))).unwrap();
    let mut head = format!("{method} {target} HTTP/1.1\r\n");
    if !headers
        .iter()
        .any(|h| h.to_ascii_lowercase().starts_with("host:"))
    {
        head.push_str(&format!("Host: {addr}\r\n"));
    }
    for h in headers {
        head.push_str(h);
        head.push_str("\r\n");
    }
    head.push_str(&format!(
        "Content-Length: {}\r\nConnection: close\r\n\r\n",
        body.len()
    ));
    let mut raw = head.into_bytes();
    raw.extend_from_slice(body);
    // A server that refuses an oversized body may answer and close before the whole body is
    // written; the answer is still there to read.
    if let Err(e) = s.write_all(&raw) {
        assert!(
            matches!(
                e.kind(),
                std::io::ErrorKind::BrokenPipe | std::io::ErrorKind::ConnectionReset
            ),
            "{e}"
        );
    }
    read_response(&mut BufReader::new(s)).unwrap()
}

/// A JSON-RPC POST with `Content-Type: application/json` plus `headers`.
pub fn post(addr: &str, headers: &[&str], body: &[u8]) -> Response {
    let mut h = vec!["Content-Type: application/json"];
    h.extend_from_slice(headers);
    request(addr, "POST", "/", &h, body)
}

/// The check request: IAPWS R7-97(2012) Table 5, p = 3 MPa, T = 300 K -> h = 115.331273 kJ/kg.
pub const CHECK_REQUEST: &str = r#"{"jsonrpc":"2.0","id":"check","method":"water.state","params":{"given":{"p":"3 MPa","T":"300 K"}}}"#;

/// Asserts that a check response carries h = 115.331273 kJ/kg to the printed digits
/// (IAPWS R7-97(2012) Table 5; half a unit of the last printed digit).
pub fn assert_check(v: &serde_json::Value) {
    let h = v["result"]["h"]
        .as_f64()
        .unwrap_or_else(|| panic!("no result.h in {v}"));
    assert!(
        (h - 115.331273).abs() <= 0.5e-6,
        "h = {h}, IAPWS R7-97(2012) Table 5 prints 115.331273"
    );
}

/// Asserts a refusal by the in-flight limit: error 1008 whose message names the calls in flight
/// and whose `data` names the limit. `v` is a JSON-RPC response (HTTP, WebSocket, stdio) or the
/// bare error object of a plain route (`POST /columns`).
pub fn assert_in_flight_refusal(v: &serde_json::Value) {
    let e = v.get("error").unwrap_or(v);
    assert_eq!(e["code"], 1008, "{v}");
    let msg = e["message"].as_str().unwrap_or_default();
    assert!(msg.contains("in flight"), "{v}");
    assert_eq!(e["data"]["kind"], "limit_exceeded", "{v}");
    assert_eq!(e["data"]["what"], "method calls in flight", "{v}");
    assert!(
        e["data"]["limit"].is_number() && e["data"]["value"].is_number(),
        "{v}"
    );
}

/// Asserts a GET route's refusal by the in-flight limit: 503 with the one-line message of
/// [`assert_in_flight_refusal`]'s error.
pub fn assert_in_flight_refusal_text(r: &Response) {
    assert_eq!(r.status, 503, "{}", r.text());
    assert!(r.text().contains("in flight"), "{}", r.text());
    assert!(!r.text().trim_end().contains('\n'), "{}", r.text());
}

/// A minimal WebSocket client (RFC 6455) for the raw JSON-RPC text of one connection.
pub struct Ws {
    s: TcpStream,
    r: BufReader<TcpStream>,
}

impl Ws {
    /// Opens `ws://addr/` with the upgrade handshake.
    pub fn connect(addr: &str) -> Ws {
        Ws::connect_with(addr, &[])
    }

    /// Opens `ws://addr/` with extra header lines (e.g. `Authorization: Bearer ...`).
    pub fn connect_with(addr: &str, headers: &[&str]) -> Ws {
        let mut s = TcpStream::connect(addr).unwrap();
        s.set_read_timeout(Some(Duration::from_secs(60))).unwrap();
        let extra: String = headers.iter().map(|h| format!("{h}\r\n")).collect();
        write!(
            s,
            "GET / HTTP/1.1\r\nHost: {addr}\r\nUpgrade: websocket\r\nConnection: Upgrade\r\n\
             Sec-WebSocket-Key: dGhlIHNhbXBsZSBub25jZQ==\r\nSec-WebSocket-Version: 13\r\n{extra}\r\n"
        )
        .unwrap();
        let mut r = BufReader::new(s.try_clone().unwrap());
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
        Ws { s, r }
    }

    /// Sends one text message (masked, as a client must) and returns the next text message.
    pub fn call(&mut self, text: &str) -> String {
        self.s
            .write_all(&ws_text_frame(text, [0x5a, 0x17, 0xc3, 0x08]))
            .unwrap();
        ws_next_text(&mut self.r)
    }
}

/// One masked WebSocket text frame (RFC 6455 5.2) carrying `text`.
pub fn ws_text_frame(text: &str, mask: [u8; 4]) -> Vec<u8> {
    let payload = text.as_bytes();
    let mut frame = vec![0x81u8];
    match payload.len() {
        n if n < 126 => frame.push(0x80 | n as u8),
        n if n <= 0xffff => {
            frame.push(0x80 | 126);
            frame.extend_from_slice(&(n as u16).to_be_bytes());
        }
        n => {
            frame.push(0x80 | 127);
            frame.extend_from_slice(&(n as u64).to_be_bytes());
        }
    }
    frame.extend_from_slice(&mask);
    frame.extend(payload.iter().enumerate().map(|(i, b)| b ^ mask[i % 4]));
    frame
}

/// Reads WebSocket frames (unmasked, as a server sends them) until a text frame, and returns
/// its text; other frames (pings) are skipped.
pub fn ws_next_text(r: &mut impl std::io::Read) -> String {
    loop {
        let mut head = [0u8; 2];
        r.read_exact(&mut head).unwrap();
        let mut len = u64::from(head[1] & 0x7f);
        if len == 126 {
            let mut b = [0u8; 2];
            r.read_exact(&mut b).unwrap();
            len = u64::from(u16::from_be_bytes(b));
        } else if len == 127 {
            let mut b = [0u8; 8];
            r.read_exact(&mut b).unwrap();
            len = u64::from_be_bytes(b);
        }
        let mut body = vec![0u8; len as usize];
        r.read_exact(&mut body).unwrap();
        if head[0] & 0x0f == 1 {
            return String::from_utf8(body).unwrap();
        }
    }
}

/// A running `steamcell stdio`, killed when dropped.
pub struct StdioProc {
    child: Child,
    stdin: std::process::ChildStdin,
    out: BufReader<std::process::ChildStdout>,
}

impl StdioProc {
    /// Starts `steamcell stdio`.
    pub fn start() -> StdioProc {
        let mut child = Command::new(BIN)
            .arg("stdio")
            .stdin(Stdio::piped())
            .stdout(Stdio::piped())
            .stderr(Stdio::null())
            .spawn()
            .unwrap();
        let stdin = child.stdin.take().unwrap();
        let out = BufReader::new(child.stdout.take().unwrap());
        StdioProc { child, stdin, out }
    }

    /// Writes one line and reads the answer line.
    pub fn call(&mut self, line: &str) -> String {
        writeln!(self.stdin, "{line}").unwrap();
        self.stdin.flush().unwrap();
        let mut answer = String::new();
        self.out.read_line(&mut answer).unwrap();
        answer
    }
}

impl Drop for StdioProc {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}
