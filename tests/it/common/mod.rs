//! Helpers shared by the black-box server tests (security, bad_input, load): start the real
//! `steamcell serve` binary with flags, and speak minimal HTTP/1.1 over std `TcpStream`.
#![allow(dead_code)]

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
    let addr = line
        .split("http://")
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

/// Asserts a refusal by the in-flight limit: error 1008 whose message names the calls in flight.
pub fn assert_in_flight_refusal(v: &serde_json::Value) {
    assert_eq!(v["error"]["code"], 1008, "{v}");
    let msg = v["error"]["message"].as_str().unwrap_or_default();
    assert!(msg.contains("in flight"), "{v}");
}
