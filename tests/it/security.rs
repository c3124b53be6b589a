//! Access control of the real `steamcell serve` binary: a non-loopback listen address needs a
//! token; the bearer token (401), the Host check (403, DNS-rebinding defence), the Origin and
//! CORS rules (403, headers only for `--allow-origin`), the Content-Type rule for simple
//! cross-origin POSTs (415), the audit file and graceful shutdown with a request in flight.
//!
//! Sources: HTTP status meanings per RFC 9110 (401, 403, 415) and the bearer scheme per
//! RFC 6750; CORS per the WHATWG Fetch standard (preflight, Access-Control-Allow-Origin);
//! property value IAPWS R7-97(2012) Table 5 (p = 3 MPa, T = 300 K: h = 115.331273 kJ/kg).

use crate::common;

use common::*;
use std::io::{BufReader, Write};
use std::net::TcpStream;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

const TOKEN: &str = "correct-horse-battery-staple-42";

fn token_file() -> std::path::PathBuf {
    let dir = std::env::temp_dir().join(format!("steamcell-sec-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let p = dir.join("token");
    std::fs::write(&p, format!("{TOKEN}\n")).unwrap();
    p
}

#[test]
fn remote_bind_without_token_refuses_to_start() {
    let out = Command::new(BIN)
        .args(["serve", "--listen", "0.0.0.0:0"])
        .env_remove("STEAMCELL_TOKEN")
        .stdin(Stdio::null())
        .output()
        .unwrap();
    assert_eq!(
        out.status.code(),
        Some(1),
        "exit code 1 on a start-up refusal"
    );
    assert!(out.stdout.is_empty(), "no listening line");
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("without a token"), "{err}");
    assert!(err.contains("--token-file"), "{err}");
    assert!(err.contains("STEAMCELL_TOKEN"), "{err}");
}

#[test]
fn empty_token_refuses_to_start() {
    let out = Command::new(BIN)
        .args(["serve", "--listen", "127.0.0.1:0"])
        .env("STEAMCELL_TOKEN", "  ")
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&out.stderr).contains("token is empty"));
}

#[test]
fn token_from_file_on_remote_bind() {
    let tf = token_file();
    let s = start(
        &[
            "--listen",
            "0.0.0.0:0",
            "--token-file",
            tf.to_str().unwrap(),
            // Plain HTTP off loopback needs saying so (TLS: tests/it/tls.rs).
            "--insecure-http",
        ],
        &[],
    );
    let port = s.addr.rsplit(':').next().unwrap();
    let addr = format!("127.0.0.1:{port}");
    // Missing token.
    let r = post(&addr, &[], CHECK_REQUEST.as_bytes());
    assert_eq!(r.status, 401);
    assert_eq!(r.header("www-authenticate"), Some("Bearer"));
    assert!(r.text().contains("token"), "{}", r.text());
    assert!(!r.text().contains(TOKEN), "the token is never echoed");
    // Wrong token, same length and shorter.
    let wrong = format!("Authorization: Bearer {}", TOKEN.replace('4', "5"));
    assert_eq!(post(&addr, &[&wrong], CHECK_REQUEST.as_bytes()).status, 401);
    assert_eq!(
        post(
            &addr,
            &["Authorization: Bearer correct"],
            CHECK_REQUEST.as_bytes()
        )
        .status,
        401
    );
    assert_eq!(
        post(
            &addr,
            &[&format!("Authorization: Basic {TOKEN}")],
            CHECK_REQUEST.as_bytes()
        )
        .status,
        401
    );
    // Right token.
    let right = format!("Authorization: Bearer {TOKEN}");
    let r = post(&addr, &[&right], CHECK_REQUEST.as_bytes());
    assert_eq!(r.status, 200);
    assert_check(&r.json());
    // GET routes need it too, except /health (liveness probes carry no secret).
    assert_eq!(request(&addr, "GET", "/schema", &[], b"").status, 401);
    assert_eq!(request(&addr, "GET", "/schema", &[&right], b"").status, 200);
    let h = request(&addr, "GET", "/health", &[], b"");
    assert_eq!((h.status, h.text().as_str()), (200, "ok"));
    // WebSocket upgrade without the token.
    let ws = [
        "Connection: Upgrade",
        "Upgrade: websocket",
        "Sec-WebSocket-Version: 13",
        "Sec-WebSocket-Key: dGhlIHNhbXBsZSBub25jZQ==",
    ];
    assert_eq!(request(&addr, "GET", "/", &ws, b"").status, 401);
    let mut with = ws.to_vec();
    with.push(&right);
    assert_eq!(request(&addr, "GET", "/", &with, b"").status, 101);
    // Listening on 0.0.0.0: any IP literal names this server, a DNS name does not.
    assert_eq!(
        post(
            &addr,
            &[&right, "Host: evil.example"],
            CHECK_REQUEST.as_bytes()
        )
        .status,
        403
    );
}

#[test]
fn token_from_env_on_loopback() {
    let s = start(&[], &[("STEAMCELL_TOKEN", TOKEN)]);
    assert_eq!(post(&s.addr, &[], CHECK_REQUEST.as_bytes()).status, 401);
    let right = format!("Authorization: Bearer {TOKEN}");
    assert_eq!(
        post(&s.addr, &[&right], CHECK_REQUEST.as_bytes()).status,
        200
    );
}

#[test]
fn foreign_host_is_refused() {
    let s = start(&["--allow-host", "calc.plant.example"], &[]);
    for host in [
        "evil.example",
        "evil.example:80",
        "10.1.2.3",
        "localhost.evil.example",
    ] {
        let r = post(
            &s.addr,
            &[&format!("Host: {host}")],
            CHECK_REQUEST.as_bytes(),
        );
        assert_eq!(r.status, 403, "Host {host}");
        assert!(r.text().contains("is not this server"), "{}", r.text());
        assert!(!r.text().contains('\n'), "one line");
        let g = request(&s.addr, "GET", "/health", &[&format!("Host: {host}")], b"");
        assert_eq!(g.status, 403, "GET with Host {host}");
    }
    for host in [
        "localhost",
        "LOCALHOST:1",
        "127.0.0.1",
        "[::1]:9",
        "calc.plant.example:8790",
    ] {
        let r = post(
            &s.addr,
            &[&format!("Host: {host}")],
            CHECK_REQUEST.as_bytes(),
        );
        assert_eq!(r.status, 200, "Host {host}");
    }
}

#[test]
fn no_cors_by_default_and_cross_origin_refused() {
    let s = start(&[], &[]);
    let r = post(&s.addr, &[], CHECK_REQUEST.as_bytes());
    assert_eq!(r.status, 200);
    assert!(r.header("access-control-allow-origin").is_none());
    // A browser's cross-origin POST carries Origin: refused before any computation.
    let r = post(
        &s.addr,
        &["Origin: https://evil.example"],
        CHECK_REQUEST.as_bytes(),
    );
    assert_eq!(r.status, 403);
    assert!(r.text().contains("cross-origin"), "{}", r.text());
    assert!(r.header("access-control-allow-origin").is_none());
    // Preflight: not answered.
    let r = request(
        &s.addr,
        "OPTIONS",
        "/",
        &[
            "Origin: https://evil.example",
            "Access-Control-Request-Method: POST",
        ],
        b"",
    );
    assert_eq!(r.status, 403);
    assert!(r.header("access-control-allow-origin").is_none());
    // A browser-simple POST (text/plain, no preflight), even without Origin.
    let r = request(
        &s.addr,
        "POST",
        "/",
        &["Content-Type: text/plain"],
        CHECK_REQUEST.as_bytes(),
    );
    assert_eq!(r.status, 415);
    assert!(r.text().contains("Content-Type"), "{}", r.text());
    for ct in [
        "application/x-www-form-urlencoded",
        "multipart/form-data; boundary=x",
    ] {
        let h = format!("Content-Type: {ct}");
        let r = request(&s.addr, "POST", "/", &[&h], CHECK_REQUEST.as_bytes());
        assert_eq!(r.status, 415, "{ct}");
    }
    let r = request(&s.addr, "POST", "/", &[], CHECK_REQUEST.as_bytes());
    assert_eq!(r.status, 415, "no Content-Type");
    // WebSocket from a web page (browsers always send Origin).
    let r = request(
        &s.addr,
        "GET",
        "/",
        &[
            "Connection: Upgrade",
            "Upgrade: websocket",
            "Sec-WebSocket-Version: 13",
            "Sec-WebSocket-Key: dGhlIHNhbXBsZSBub25jZQ==",
            "Origin: https://evil.example",
        ],
        b"",
    );
    assert_eq!(r.status, 403);
}

#[test]
fn allowed_origin_gets_cors_for_itself_only() {
    let good = "https://sheet.example";
    let s = start(&["--allow-origin", good], &[]);
    let r = post(
        &s.addr,
        &[&format!("Origin: {good}")],
        CHECK_REQUEST.as_bytes(),
    );
    assert_eq!(r.status, 200);
    assert_eq!(r.header("access-control-allow-origin"), Some(good));
    assert_check(&r.json());
    let r = request(
        &s.addr,
        "OPTIONS",
        "/",
        &[
            &format!("Origin: {good}"),
            "Access-Control-Request-Method: POST",
            "Access-Control-Request-Headers: content-type",
        ],
        b"",
    );
    assert_eq!(r.status, 204);
    assert_eq!(r.header("access-control-allow-origin"), Some(good));
    assert!(r
        .header("access-control-allow-headers")
        .unwrap_or("")
        .contains("content-type"));
    let other = "https://other.example";
    let r = post(
        &s.addr,
        &[&format!("Origin: {other}")],
        CHECK_REQUEST.as_bytes(),
    );
    assert_eq!(r.status, 403);
    assert!(r.header("access-control-allow-origin").is_none());
    let r = request(&s.addr, "OPTIONS", "/", &[&format!("Origin: {other}")], b"");
    assert_eq!(r.status, 403);
    // Without Origin: no CORS header.
    let r = post(&s.addr, &[], CHECK_REQUEST.as_bytes());
    assert!(r.header("access-control-allow-origin").is_none());
}

#[test]
fn slow_client_cannot_hold_the_server() {
    let s = start(&["--request-timeout", "1"], &[]);
    // Headers, then a body that never completes.
    let mut slow = TcpStream::connect(&s.addr).unwrap();
    slow.set_read_timeout(Some(Duration::from_secs(10)))
        .unwrap();
    write!(
        slow,
        "POST / HTTP/1.1\r\nHost: {}\r\nContent-Type: application/json\r\nContent-Length: 1000\r\n\r\n{{\"jsonrpc\"",
        s.addr
    )
    .unwrap();
    // Meanwhile others are served.
    let r = post(&s.addr, &[], CHECK_REQUEST.as_bytes());
    assert_check(&r.json());
    let t0 = Instant::now();
    let r = read_response(&mut BufReader::new(slow.try_clone().unwrap())).unwrap();
    assert_eq!(r.status, 408);
    assert!(r.text().contains("time limit"), "{}", r.text());
    assert!(t0.elapsed() < Duration::from_secs(5));
    // Headers that never complete: the connection is closed after the time limit.
    let mut slow = TcpStream::connect(&s.addr).unwrap();
    slow.set_read_timeout(Some(Duration::from_secs(10)))
        .unwrap();
    write!(slow, "POST / HTTP/1.1\r\nHost: x").unwrap();
    let t0 = Instant::now();
    let mut buf = [0u8; 64];
    let n = std::io::Read::read(&mut slow, &mut buf).unwrap_or(0);
    assert_eq!(n, 0, "closed without an answer");
    assert!(t0.elapsed() < Duration::from_secs(5), "{:?}", t0.elapsed());
    let r = post(&s.addr, &[], CHECK_REQUEST.as_bytes());
    assert_check(&r.json());
}

#[test]
fn in_flight_limit_answers_1008() {
    let s = start(&["--max-in-flight", "1"], &[]);
    let addr = s.addr.clone();
    let big = big_batch(200_000);
    let slow = std::thread::spawn(move || post(&addr, &[], big.as_bytes()));
    // Wait until the big batch is running, then a second call is refused.
    let t0 = Instant::now();
    let mut refused = None;
    while t0.elapsed() < Duration::from_secs(20) && !slow.is_finished() {
        let v = post(&s.addr, &[], CHECK_REQUEST.as_bytes()).json();
        if v["error"]["code"] == 1008 {
            refused = Some(v);
            break;
        }
        std::thread::sleep(Duration::from_millis(5));
    }
    let v = refused.expect("a second call while one runs is refused");
    assert_in_flight_refusal(&v);
    let r = slow.join().unwrap().json();
    assert_eq!(r["result"]["rows"], 200_000);
    assert_check(&post(&s.addr, &[], CHECK_REQUEST.as_bytes()).json());
}

fn big_batch(n: usize) -> String {
    let p: Vec<String> = (0..n)
        .map(|i| format!("{}", 1.0 + (i % 100) as f64 * 0.1))
        .collect();
    let t: Vec<String> = (0..n)
        .map(|i| format!("{}", 300.0 + (i % 50) as f64))
        .collect();
    format!(
        r#"{{"jsonrpc":"2.0","id":1,"method":"water.batch","params":{{"given":{{"p":[{}],"T":[{}]}},"want":["h","s"],"units":"si"}}}}"#,
        p.join(","),
        t.join(",")
    )
}

#[cfg(unix)]
#[test]
fn sigterm_lets_the_in_flight_request_finish() {
    // The batch must still run at SIGTERM for the test to mean anything; a fast machine may
    // finish a batch within the wait, so the batch grows until one is caught in flight.
    let mut caught = None;
    for rows in [200_000, 400_000, 800_000] {
        let s = start(&[], &[]);
        let addr = s.addr.clone();
        let big = big_batch(rows);
        let slow = std::thread::spawn(move || {
            let r = post(&addr, &[], big.as_bytes());
            (r, Instant::now())
        });
        std::thread::sleep(Duration::from_millis(300));
        let pid = s.child.id().to_string();
        let killed = Command::new("kill").args(["-TERM", &pid]).status().unwrap();
        let killed_at = Instant::now();
        assert!(killed.success());
        let (r, answered_at) = slow.join().unwrap();
        if answered_at > killed_at {
            caught = Some((s, r, rows));
            break;
        }
    }
    let (s, r, rows) = caught.expect("no batch up to 800,000 rows was still running at SIGTERM");
    assert_eq!(r.status, 200);
    let v = r.json();
    assert_eq!(v["result"]["rows"], rows, "the in-flight batch completed");
    let mut s = s;
    let t0 = Instant::now();
    loop {
        if let Some(st) = s.child.try_wait().unwrap() {
            assert!(st.success(), "clean exit after SIGTERM: {st:?}");
            break;
        }
        assert!(
            t0.elapsed() < Duration::from_secs(20),
            "server did not stop"
        );
        std::thread::sleep(Duration::from_millis(20));
    }
    assert!(
        TcpStream::connect(&s.addr).is_err(),
        "new connections refused"
    );
}

#[test]
fn audit_file_has_one_line_per_call() {
    let dir = std::env::temp_dir().join(format!("steamcell-audit-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("audit.jsonl");
    let _ = std::fs::remove_file(&path);
    let s = start(&["--audit", path.to_str().unwrap()], &[]);
    assert_check(&post(&s.addr, &[], CHECK_REQUEST.as_bytes()).json());
    let bad = r#"{"jsonrpc":"2.0","id":2,"method":"water.state","params":{"given":{"p":"-1 MPa","T":"300 K"}}}"#;
    let e = post(&s.addr, &[], bad.as_bytes()).json();
    let code = e["error"]["code"].as_i64().unwrap();
    let text = std::fs::read_to_string(&path).unwrap();
    let lines: Vec<serde_json::Value> = text
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    assert_eq!(lines.len(), 2, "{text}");
    let ok = &lines[0];
    assert_eq!(ok["method"], "water.state");
    assert_eq!(ok["params"]["given"]["p"], "3 MPa");
    assert_eq!(ok["result_digest"].as_str().unwrap().len(), 16);
    assert!(ok["error_code"].is_null());
    assert_eq!(ok["version"], env!("CARGO_PKG_VERSION"));
    assert_eq!(ok["formulation"], "IAPWS-IF97");
    assert_eq!(
        ok["validation_digest"].as_str().unwrap(),
        steamcell::api::validation_digest()
    );
    let t = ok["time"].as_str().unwrap();
    assert!(
        t.ends_with('Z') && t.len() == 24 && &t[10..11] == "T",
        "{t}"
    );
    assert!(ok["request_id"].as_str().is_some_and(|s| !s.is_empty()));
    assert_eq!(lines[1]["error_code"], code);
    assert!(lines[1]["result_digest"].is_null());
    assert_ne!(lines[0]["request_id"], lines[1]["request_id"]);
}

#[test]
fn server_info_reports_limits_and_counters() {
    let s = start(
        &[
            "--max-batch-rows",
            "10",
            "--max-json-depth",
            "8",
            "--request-timeout",
            "2.5",
            "--max-in-flight",
            "7",
        ],
        &[],
    );
    let info = r#"{"jsonrpc":"2.0","id":1,"method":"server.info"}"#;
    let v = post(&s.addr, &[], info.as_bytes()).json();
    let l = &v["result"]["limits"];
    assert_eq!(l["max_batch_rows"], 10);
    assert_eq!(l["max_json_depth"], 8);
    assert_eq!(l["request_timeout_s"], 2.5);
    assert_eq!(l["max_in_flight"], 7);
    assert!(v["result"]["connections"].as_u64().unwrap() >= 1);
    assert!(v["result"]["requests_served"].as_u64().unwrap() >= 1);
    // The batch row limit in force is the flag's.
    let rows = r#"{"jsonrpc":"2.0","id":3,"method":"water.batch","params":{"given":{"p":[1,1,1,1,1,1,1,1,1,1,1],"T":[300,300,300,300,300,300,300,300,300,300,300]},"units":"si"}}"#;
    let e = post(&s.addr, &[], rows.as_bytes()).json();
    assert_eq!(e["error"]["code"], 1008, "{e}");
    let deep = format!(
        r#"{{"jsonrpc":"2.0","id":4,"method":"server.info","params":{}{}}}"#,
        "[".repeat(9),
        "]".repeat(9)
    );
    let e = post(&s.addr, &[], deep.as_bytes()).json();
    assert_eq!(e["error"]["code"], 1008, "{e}");
    let v = post(&s.addr, &[], info.as_bytes()).json();
    // The row limit and the depth refusal are counted failures (an unknown method is answered
    // by the JSON-RPC layer before any method runs, and is not).
    assert!(v["result"]["requests_failed"].as_u64().unwrap() >= 2, "{v}");
}

#[test]
fn logs_never_show_the_token() {
    let mut child = Command::new(BIN)
        .args(["serve", "--listen", "127.0.0.1:0", "--log-level", "trace"])
        .env("STEAMCELL_TOKEN", TOKEN)
        .env_remove("RUST_LOG")
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut line = String::new();
    std::io::BufRead::read_line(&mut BufReader::new(child.stdout.take().unwrap()), &mut line)
        .unwrap();
    let addr = line
        .split("http://")
        .nth(1)
        .unwrap()
        .split_whitespace()
        .next()
        .unwrap()
        .to_string();
    let right = format!("Authorization: Bearer {TOKEN}");
    let wrong = format!("Authorization: Bearer {TOKEN}x");
    assert_eq!(post(&addr, &[&right], CHECK_REQUEST.as_bytes()).status, 200);
    assert_eq!(post(&addr, &[&wrong], CHECK_REQUEST.as_bytes()).status, 401);
    assert_eq!(post(&addr, &[], CHECK_REQUEST.as_bytes()).status, 401);
    let _ = child.kill();
    let out = child.wait_with_output().unwrap();
    let log = String::from_utf8_lossy(&out.stderr);
    assert!(log.contains("refused"), "the refusals are logged: {log}");
    assert!(log.contains("water.state"), "the call is logged: {log}");
    assert!(!log.contains(TOKEN), "the token appears in the log: {log}");
}
