//! `POST /columns` on the real binary: raw f64le columns in and out, the same numbers as the
//! in-process codec, and clear refusals for a wrong content type or a broken frame.

use crate::common;

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

/// A bulk request counts against `--max-in-flight` like a JSON-RPC call: while a long
/// `balance.sweep` (one core, seconds) holds the only slot, a /columns request gets 503 with
/// the limit error (1008); once the sweep is done, /columns answers again. (A large /columns
/// request as the slot holder would occupy both cores of a small machine with its parallel
/// rows, so the refusal could not be observed reliably.)
#[test]
fn columns_count_as_calls_in_flight() {
    let s = common::start(&["--max-in-flight", "1"], &[]);
    let site: serde_json::Value =
        serde_json::from_str(include_str!("../../examples/site/site.json")).unwrap();
    let sweep = json!({
        "jsonrpc": "2.0", "id": 1, "method": "balance.sweep",
        "params": {"network": site, "path": "units.LP_users.demand", "from": 6, "to": 18, "points": 1000}
    })
    .to_string();
    let small = frame(
        &json!({"given": ["p", "T"], "rows": 1, "want": ["h"]}),
        &[vec![3.0], vec![300.0]],
    );
    let ct = format!("Content-Type: {CONTENT_TYPE}");
    let mut seen = None;
    for _attempt in 0..3 {
        let addr = s.addr.clone();
        let body = sweep.clone();
        let slow = std::thread::spawn(move || common::post(&addr, &[], body.as_bytes()));
        // Let the sweep take the slot first (else the first probe may take it and the
        // sweep is the one refused; then the attempt is repeated).
        std::thread::sleep(std::time::Duration::from_millis(100));
        let t0 = std::time::Instant::now();
        let mut refused = None;
        while t0.elapsed() < std::time::Duration::from_secs(60) && !slow.is_finished() {
            let r = common::request(&s.addr, "POST", "/columns", &[&ct], &small);
            if r.status == 503 {
                refused = Some(r);
                break;
            }
            std::thread::sleep(std::time::Duration::from_millis(5));
        }
        let done = slow.join().unwrap().json();
        if let Some(r) = refused {
            assert_eq!(
                done["result"]["points"].as_array().map(Vec::len),
                Some(1000),
                "{done}"
            );
            seen = Some(r);
            break;
        }
    }
    let r = seen.expect("a bulk request while a call holds the only slot is refused");
    common::assert_in_flight_refusal(&r.json());
    let r = common::request(&s.addr, "POST", "/columns", &[&ct], &small);
    assert_eq!(r.status, 200, "{}", r.text());
}
