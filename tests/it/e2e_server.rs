//! End-to-end tests of the real `steamcell` binary: `serve` over HTTP POST (single, batch,
//! malformed), WebSocket, the GET routes, `stdio`, `call` and `get`, and graceful shutdown.
//!
//! Source of the protocol expectations: JSON-RPC 2.0 specification (sections 4.1 notifications,
//! 5 response object with the request's id, 5.1 error codes, 6 batch); HTTP status meanings
//! per RFC 9110. Property values: IAPWS R7-97(2012) Table 5 (p = 3 MPa, T = 300 K:
//! h = 115.331273 kJ/kg) and Table 15 (p = 0.0035 MPa, T = 300 K: h = 2549.91145 kJ/kg), to the
//! printed digits; values without a printed source are compared with the in-process call.

use serde_json::{json, Value};
use std::io::{BufRead, BufReader, Read, Write};
use std::net::TcpStream;
use std::process::{Child, ChildStdout, Command, Stdio};
use std::time::Duration;

const BIN: &str = env!("CARGO_BIN_EXE_steamcell");

/// A running `steamcell serve`, killed when dropped.
struct Server {
    child: Child,
    addr: String,
    line: String,
}

impl Drop for Server {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

fn start_server() -> Server {
    let mut child = Command::new(BIN)
        .args(["serve", "--listen", "127.0.0.1:0"])
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn()
        .expect("binary starts");
    let stdout: ChildStdout = child.stdout.take().unwrap();
    let mut line = String::new();
    BufReader::new(stdout).read_line(&mut line).unwrap();
    let line = line.trim_end().to_string();
    let addr = line
        .split("http://")
        .nth(1)
        .and_then(|s| s.split_whitespace().next())
        .unwrap_or_else(|| panic!("no address in {line:?}"))
        .to_string();
    Server { child, addr, line }
}

/// A minimal HTTP/1.1 exchange: returns (status, content-type, body).
fn http(addr: &str, method: &str, target: &str, body: &str) -> (u16, String, String) {
    let mut s = TcpStream::connect(addr).unwrap();
    s.set_read_timeout(Some(Duration::from_secs(20))).unwrap();
    let req = format!(
        "{method} {target} HTTP/1.1\r\nHost: {addr}\r\nContent-Type: application/json\r\n\
         Content-Length: {}\r\nConnection: close\r\n\r\n{body}",
        body.len()
    );
    s.write_all(req.as_bytes()).unwrap();
    let mut raw = Vec::new();
    s.read_to_end(&mut raw).unwrap();
    let raw = String::from_utf8(raw).unwrap();
    let (head, rest) = raw.split_once("\r\n\r\n").expect("http response");
    let status: u16 = head.split_whitespace().nth(1).unwrap().parse().unwrap();
    let header = |name: &str| {
        head.lines()
            .find_map(|l| {
                let (k, v) = l.split_once(':')?;
                k.eq_ignore_ascii_case(name).then(|| v.trim().to_string())
            })
            .unwrap_or_default()
    };
    let body = if header("transfer-encoding").eq_ignore_ascii_case("chunked") {
        dechunk(rest)
    } else {
        rest.to_string()
    };
    (status, header("content-type"), body)
}

fn dechunk(mut s: &str) -> String {
    let mut out = String::new();
    while let Some((size, rest)) = s.split_once("\r\n") {
        let n = usize::from_str_radix(size.trim(), 16).unwrap_or(0);
        if n == 0 {
            break;
        }
        out.push_str(&rest[..n]);
        s = &rest[n + 2..];
    }
    out
}

fn post(addr: &str, body: &str) -> Value {
    let (status, ctype, body) = http(addr, "POST", "/", body);
    assert_eq!(status, 200, "{body}");
    assert!(ctype.starts_with("application/json"), "{ctype}");
    serde_json::from_str(&body).unwrap()
}

#[test]
fn serve_prints_one_line_with_the_real_port() {
    let s = start_server();
    assert!(
        s.line.starts_with(&format!(
            "steamcell {} listening on http://127.0.0.1:",
            env!("CARGO_PKG_VERSION")
        )),
        "{}",
        s.line
    );
    assert!(s.line.ends_with(&format!(
        "(ws://{}) formulations: IAPWS-IF97, IAPWS-95",
        s.addr
    )));
    let port: u16 = s.addr.rsplit(':').next().unwrap().parse().unwrap();
    assert_ne!(port, 0);
}

/// Within the printed digits of a 9-digit IAPWS check value.
fn near(v: &Value, printed: f64) {
    let got = v.as_f64().unwrap_or_else(|| panic!("not a number: {v}"));
    assert!(
        (got - printed).abs() <= 5e-9 * printed.abs(),
        "got {got}, printed {printed}"
    );
}

#[test]
fn http_post_single_batch_and_bad_input() {
    let s = start_server();
    // Single call: the response carries the request's id (JSON-RPC 2.0 section 5).
    let v = post(
        &s.addr,
        r#"{"jsonrpc":"2.0","id":41,"method":"water.state","params":{"given":{"p":3,"T":"300 K"}}}"#,
    );
    assert_eq!(v["jsonrpc"], "2.0");
    assert_eq!(v["id"], 41);
    near(&v["result"]["h"], 115.331273); // IAPWS R7-97(2012) Table 5

    // Batch: one answer per call with an id, none for the notification (sections 4.1, 6).
    let v = post(
        &s.addr,
        r#"[{"jsonrpc":"2.0","id":"a","method":"water.state","params":{"given":{"p":3,"T":"300 K"}}},
            {"jsonrpc":"2.0","method":"server.info"},
            {"jsonrpc":"2.0","id":"b","method":"no.such"},
            {"jsonrpc":"2.0","id":"c","method":"water.state","params":{"given":{"p":1,"T":2},"extra":1}},
            {"jsonrpc":"2.0","id":"d","method":"water.state","params":{"given":{"p":1,"T":-1}}}]"#,
    );
    let arr = v.as_array().expect("batch answers an array");
    assert_eq!(arr.len(), 4, "{v}");
    let by_id = |id: &str| arr.iter().find(|r| r["id"] == id).unwrap().clone();
    near(&by_id("a")["result"]["h"], 115.331273); // IAPWS R7-97(2012) Table 5
    assert_eq!(by_id("b")["error"]["code"], -32601);
    assert_eq!(by_id("c")["error"]["code"], -32602);
    assert!(by_id("c")["error"]["message"]
        .as_str()
        .unwrap()
        .contains("extra"));
    assert_eq!(by_id("d")["error"]["code"], 1001);
    assert_eq!(by_id("d")["error"]["data"]["kind"], "out_of_range");
    assert_eq!(by_id("d")["error"]["data"]["bound"], "below");

    // Malformed JSON: parse error with a null id (section 5.1), and the server goes on.
    let v = post(&s.addr, "{not json");
    assert_eq!(v["error"]["code"], -32700);
    assert_eq!(v["id"], Value::Null);
    let v = post(
        &s.addr,
        r#"{"jsonrpc":"2.0","id":"after","method":"server.info"}"#,
    );
    assert_eq!(v["id"], "after");
    assert_eq!(v["result"]["name"], "steamcell");
    assert!(v["result"]["requests_served"].as_u64().unwrap() >= 3);
}

#[test]
fn get_routes() {
    let s = start_server();
    let (status, ctype, body) = http(&s.addr, "GET", "/health", "");
    assert_eq!((status, body.as_str()), (200, "ok"));
    assert!(ctype.starts_with("text/plain"));

    let (status, ctype, body) = http(&s.addr, "GET", "/schema", "");
    assert_eq!(status, 200);
    assert!(ctype.starts_with("application/json"));
    let doc: Value = serde_json::from_str(&body).unwrap();
    assert_eq!(doc, steamcell::api::openrpc::document());

    // Values are URL-decoded and passed as text ("10 MPa"); reserved names go on top.
    let (status, ctype, body) = http(&s.addr, "GET", "/cell/h?p=3.5%20kPa&T=300+K&units=si", "");
    assert_eq!(status, 200, "{body}");
    // IAPWS R7-97(2012) Table 15, in J/kg.
    near(&Value::from(body.parse::<f64>().unwrap() / 1e3), 2549.91145);
    assert!(ctype.starts_with("text/plain"));
    let (status, _, body) = http(&s.addr, "GET", "/cell/T?p=1.5&T=25", "");
    assert_eq!(status, 200, "{body}");
    assert!((body.parse::<f64>().unwrap() - 25.0).abs() < 1e-9, "{body}");

    // Errors: one line of text and a non-200 status.
    let cases = [
        ("/cell/cp?p=0.1&x=0.5", 422), // null field: no cp for a wet mixture
        ("/cell/h?p=0&T=500", 422),    // out_of_range: p = 0
        ("/cell/h?p=1&T=-3", 422),     // out_of_range
        ("/cell/h?p=abc&T=3", 400),    // invalid_input
        ("/cell/h?p=1&T=3&units=furlongs", 400),
        ("/cell/zz?p=1&T=3", 404),
        ("/cell/", 404),
        ("/cell/h/x", 404),
        ("/cells/h?p=1&T=300", 404), // an unknown route (it answered 405 "POST is required")
        ("/columns", 404),           // a POST route
    ];
    for (target, want) in cases {
        let (status, ctype, body) = http(&s.addr, "GET", target, "");
        assert_eq!(status, want, "{target}: {body}");
        assert!(ctype.starts_with("text/plain"), "{target}: {ctype}");
        assert!(
            !body.is_empty() && !body.contains('\n'),
            "{target}: {body:?}"
        );
    }
    let (_, _, body) = http(&s.addr, "GET", "/cells/h", "");
    assert!(
        body.starts_with("no route GET /cells/h; the routes: ") && body.contains("GET /cell/"),
        "{body}"
    );
    // Still serving after the errors.
    let (status, _, _) = http(&s.addr, "GET", "/health", "");
    assert_eq!(status, 200);
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn websocket_calls() {
    use jsonrpsee::core::client::{BatchResponse, ClientT};
    use jsonrpsee::core::params::{BatchRequestBuilder, ObjectParams};
    use jsonrpsee::ws_client::WsClientBuilder;

    let s = tokio::task::spawn_blocking(start_server).await.unwrap();
    let client = WsClientBuilder::default()
        .build(format!("ws://{}", s.addr))
        .await
        .unwrap();
    let info: Value = client
        .request("server.info", ObjectParams::new())
        .await
        .unwrap();
    assert_eq!(info["name"], "steamcell");

    let mut p = ObjectParams::new();
    p.insert("given", json!({"p": 3, "T": "300 K"})).unwrap();
    let state: Value = client.request("water.state", p).await.unwrap();
    near(&state["h"], 115.331273); // IAPWS R7-97(2012) Table 5

    let mut bad = ObjectParams::new();
    bad.insert("given", json!({"p": 2, "T": 3})).unwrap();
    bad.insert("units", "furlongs").unwrap();
    let err = client
        .request::<Value, _>("water.state", bad)
        .await
        .unwrap_err();
    match err {
        jsonrpsee::core::client::Error::Call(e) => {
            assert_eq!(e.code(), 1006);
            assert_eq!(
                e.data().map(|d| d.get()),
                Some(
                    r#"{"kind":"invalid_input","message":"unknown unit preset 'furlongs'; accepted: si, engineering, us, bar, bar_th"}"#
                )
            );
        }
        other => panic!("expected a call error, got {other:?}"),
    }

    let mut batch = BatchRequestBuilder::new();
    for t in [1, 2, 3] {
        let mut p = ObjectParams::new();
        p.insert("given", json!({"p": 10, "T": t})).unwrap();
        batch.insert("water.state", p).unwrap();
    }
    let res: BatchResponse<Value> = client.batch_request(batch).await.unwrap();
    let hs: Vec<f64> = res
        .into_ok()
        .unwrap()
        .map(|v| v["h"].as_f64().unwrap())
        .collect();
    // Batch order kept: each answer is the in-process answer for its own request.
    let want: Vec<f64> = [1, 2, 3]
        .iter()
        .map(|t| {
            steamcell::api::call("water.state", json!({"given": {"p": 10, "T": t}})).unwrap()["h"]
                .as_f64()
                .unwrap()
        })
        .collect();
    // The test harness and the server binary may be built at different optimisation levels,
    // which can move the last bit of a result; the order is what this checks.
    for (got, want) in hs.iter().zip(&want) {
        assert!(
            (got - want).abs() <= 1e-14 * want.abs(),
            "{hs:?} vs {want:?}"
        );
    }
}

#[test]
fn stdio_lines() {
    let mut child = Command::new(BIN)
        .arg("stdio")
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    struct Kill(Child);
    impl Drop for Kill {
        fn drop(&mut self) {
            let _ = self.0.kill();
            let _ = self.0.wait();
        }
    }
    let mut stdin = child.stdin.take().unwrap();
    let mut out = BufReader::new(child.stdout.take().unwrap());
    let mut guard = Kill(child);
    let mut ask = |line: &str| -> Value {
        writeln!(stdin, "{line}").unwrap();
        stdin.flush().unwrap();
        let mut answer = String::new();
        out.read_line(&mut answer).unwrap();
        serde_json::from_str(&answer).unwrap_or_else(|e| panic!("{answer:?}: {e}"))
    };
    let v = ask(
        r#"{"jsonrpc":"2.0","id":1,"method":"water.state","params":{"given":{"p":3,"T":"300 K"}}}"#,
    );
    near(&v["result"]["h"], 115.331273); // IAPWS R7-97(2012) Table 5
    assert_eq!(v["id"].clone(), json!(1));
    let v = ask("this is not json");
    assert_eq!(v["error"]["code"], -32700);
    assert_eq!(v["id"], Value::Null);
    // A notification gets no line: the next line read answers the request after it.
    let v = ask(r#"{"jsonrpc":"2.0","method":"server.info"}
{"jsonrpc":"2.0","id":"n","method":"server.info"}"#);
    assert_eq!(v["id"], "n");
    let v = ask(
        r#"[{"jsonrpc":"2.0","id":1,"method":"server.info"},{"jsonrpc":"2.0","method":"server.info"},{"jsonrpc":"2.0","id":2,"method":"no.such"},{"id":3}]"#,
    );
    let arr = v.as_array().unwrap();
    assert_eq!(arr.len(), 3, "{v}");
    assert_eq!(arr[0]["id"], 1);
    assert_eq!(arr[1]["error"]["code"], -32601);
    assert_eq!(arr[2]["id"], 3);
    assert_eq!(arr[2]["error"]["code"], -32600);
    let v = ask("[]");
    assert_eq!(v["error"]["code"], -32600);
    let v = ask(r#"{"jsonrpc":"2.0","id":9,"method":"water.state","params":{"given":{"p":1}}}"#);
    assert_eq!(v["error"]["code"], 1006); // one property does not fix a state
                                          // EOF ends the loop with exit 0.
    drop(stdin);
    let status = guard.0.wait().unwrap();
    assert!(status.success());
}

#[test]
fn call_and_get_commands() {
    let out = Command::new(BIN)
        .args(["call", "water.state", r#"{"given":{"p":3,"T":"300 K"}}"#])
        .output()
        .unwrap();
    assert!(out.status.success());
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    near(&v["h"], 115.331273); // IAPWS R7-97(2012) Table 5
    assert!(String::from_utf8_lossy(&out.stdout).contains("\n  \"")); // pretty

    let out = Command::new(BIN)
        .args(["call", "water.state", r#"{"given":{"p":1,"T":2},"zz":1}"#])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).starts_with("error -32602: "));
    assert!(out.stdout.is_empty());

    let out = Command::new(BIN)
        .args(["call", "no.such"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).starts_with("error -32601: "));

    let out = Command::new(BIN)
        .args(["get", "h", "p=42barg", "T=410degC", "units=si"])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let want = steamcell::api::call(
        "water.state",
        json!({"given": {"p": "42barg", "T": "410degC"}, "units": "si"}),
    )
    .unwrap()["h"]
        .as_f64()
        .unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        text.ends_with('\n') && !text.trim().contains(' '),
        "{text:?}"
    );
    let got: f64 = text.trim().parse().unwrap();
    assert!((got - want).abs() <= 1e-14 * want, "{got} vs {want}");

    let out = Command::new(BIN)
        .args(["get", "cp", "p=0.1", "x=0.5"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(out.stdout.is_empty());
    assert_eq!(
        String::from_utf8_lossy(&out.stderr),
        "cp: not defined for a two-phase (wet) mixture\n"
    );
    let out = Command::new(BIN)
        .args(["get", "h", "p=0", "T=410"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("p = 0 MPa") && err.contains("IAPWS-IF97"),
        "{err}"
    );
    let out = Command::new(BIN).args(["get", "h", "p"]).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
}

#[cfg(unix)]
#[test]
fn sigterm_shuts_down_cleanly() {
    let mut s = start_server();
    let (status, _, _) = http(&s.addr, "GET", "/health", "");
    assert_eq!(status, 200);
    let pid = s.child.id().to_string();
    let killed = Command::new("kill").args(["-TERM", &pid]).status().unwrap();
    assert!(killed.success());
    let deadline = std::time::Instant::now() + Duration::from_secs(10);
    loop {
        if let Some(status) = s.child.try_wait().unwrap() {
            assert!(status.success(), "exit status {status}");
            break;
        }
        assert!(std::time::Instant::now() < deadline, "no exit within 10 s");
        std::thread::sleep(Duration::from_millis(50));
    }
    assert!(TcpStream::connect(&s.addr).is_err(), "still accepting");
}
