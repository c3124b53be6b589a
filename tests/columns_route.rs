//! `POST /columns` on the real binary: raw f64le columns in and out, the same numbers as the
//! in-process codec, and clear refusals for a wrong content type or a broken frame.

mod common;

use serde_json::json;
use steamcell::api::columns::{frame, split_frame, CONTENT_TYPE};

#[test]
fn columns_over_http() {
    let s = common::start(&[], &[]);
    let n = 50_000;
    let p: Vec<f64> = (0..n).map(|i| 0.1 + (i % 500) as f64 * 0.05).collect();
    let t: Vec<f64> = (0..n).map(|i| 150.0 + (i % 301) as f64).collect();
    let body = frame(
        &json!({"given": ["p", "T"], "rows": n, "want": ["h", "s", "v"]}),
        &[p.clone(), t.clone()],
    );
    let ct = format!("Content-Type: {CONTENT_TYPE}");
    let r = common::request(&s.addr, "POST", "/columns", &[&ct], &body);
    assert_eq!(r.status, 200, "{}", r.text());
    assert_eq!(r.header("content-type"), Some(CONTENT_TYPE));
    let (head, data) = split_frame(&r.body).unwrap();
    assert_eq!(head["rows"], n);
    assert_eq!(data.len(), 3 * n * 8);
    // Row 0 against the in-process state (the server may be built at another optimisation
    // level, so 1e-14 rather than bit identity across processes).
    let h0 = f64::from_le_bytes(data[0..8].try_into().unwrap());
    let want = steamcell::api::call("water.state", json!({"given": {"p": p[0], "T": t[0]}}))
        .unwrap()["h"]
        .as_f64()
        .unwrap();
    assert!((h0 - want).abs() <= 1e-14 * want, "{h0} vs {want}");

    // Wrong content type: 415; broken frame: 400 with a JSON error naming the problem.
    let r = common::request(
        &s.addr,
        "POST",
        "/columns",
        &["Content-Type: application/json"],
        &body,
    );
    assert_eq!(r.status, 415, "{}", r.text());
    let r = common::request(&s.addr, "POST", "/columns", &[&ct], &body[..body.len() - 8]);
    assert_eq!(r.status, 400);
    assert!(
        r.json()["message"].as_str().unwrap().contains("data bytes"),
        "{}",
        r.text()
    );
    // Still serving JSON-RPC afterwards.
    let r = common::post(
        &s.addr,
        &["Content-Type: application/json"],
        br#"{"jsonrpc":"2.0","id":1,"method":"water.state","params":{"given":{"p":3,"T":"300 K"}}}"#,
    );
    common::assert_check(&r.json());
}

/// A bulk request counts against `--max-in-flight` like a JSON-RPC call: while a large
/// /columns request runs with the limit at 1, a second /columns request gets 503 with the
/// limit error (1008), and the first completes.
#[test]
fn columns_count_as_calls_in_flight() {
    let s = common::start(&["--max-in-flight", "1"], &[]);
    let n = 1_000_000;
    let p: Vec<f64> = (0..n).map(|i| 0.1 + (i % 500) as f64 * 0.05).collect();
    let t: Vec<f64> = (0..n).map(|i| 150.0 + (i % 301) as f64).collect();
    let big = frame(
        &json!({"given": ["p", "T"], "rows": n, "want": ["h", "s", "v", "cp", "w"]}),
        &[p, t],
    );
    let small = frame(
        &json!({"given": ["p", "T"], "rows": 1, "want": ["h"]}),
        &[vec![3.0], vec![300.0]],
    );
    let ct = format!("Content-Type: {CONTENT_TYPE}");
    let addr = s.addr.clone();
    let ct2 = ct.clone();
    let slow =
        std::thread::spawn(move || common::request(&addr, "POST", "/columns", &[&ct2], &big));
    let t0 = std::time::Instant::now();
    let mut refused = None;
    while t0.elapsed() < std::time::Duration::from_secs(30) && !slow.is_finished() {
        let r = common::request(&s.addr, "POST", "/columns", &[&ct], &small);
        if r.status == 503 {
            refused = Some(r);
            break;
        }
        std::thread::sleep(std::time::Duration::from_millis(2));
    }
    let r = refused.expect("a second bulk request while one runs is refused");
    let v = r.json();
    assert_eq!(v["error"]["code"], 1008, "{v}");
    assert!(
        v["error"]["message"]
            .as_str()
            .unwrap()
            .contains("in flight"),
        "{v}"
    );
    let done = slow.join().unwrap();
    assert_eq!(done.status, 200, "{}", done.text());
    assert_eq!(split_frame(&done.body).unwrap().0["rows"], n);
    let r = common::request(&s.addr, "POST", "/columns", &[&ct], &small);
    assert_eq!(r.status, 200, "{}", r.text());
}
