//! Load test of the real `steamcell serve` binary on loopback: 64 concurrent keep-alive HTTP
//! clients (std threads, std `TcpStream`) mix single `water.state` calls and small
//! `water.batch` calls for 3 s. Every answer is checked against the in-process
//! `steamcell::api::call` result (numbers to a relative 1e-14: the server binary and this test
//! may be built at different optimisation levels), no request may be dropped, and the server's
//! resident memory (VmRSS in /proc/PID/status) may not grow by more than 32 MiB between the
//! middle and the end of the run.
//!
//! Source of the expectations: the in-process call of the same library (consistency, not a
//! published value); the check point of each client's first call is IAPWS R7-97(2012) Table 5
//! (p = 3 MPa, T = 300 K: h = 115.331273 kJ/kg).

use crate::common;

use common::*;
use serde_json::{json, Value};
use std::io::{BufReader, Write};
use std::net::TcpStream;
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::sync::Arc;
use std::time::Duration;

const CLIENTS: usize = 64;
const RUN: Duration = Duration::from_secs(3);

/// The request mix: (method, params, expected result from the in-process call).
fn mix() -> Vec<(String, Value, Value)> {
    let mut out = Vec::new();
    for (i, (p, t)) in [
        (3.0, 300.0),
        (0.0035, 300.0),
        (30.0, 700.0),
        (10.0, 773.15),
        (1.0, 450.0),
        (0.1, 373.0),
        (30.0, 1500.0),
        (20.0, 640.0),
    ]
    .iter()
    .enumerate()
    {
        let params = json!({ "given": { "p": format!("{p} MPa"), "T": format!("{t} K") } });
        out.push(("water.state".to_string(), params, Value::Null));
        let ps: Vec<f64> = (0..8)
            .map(|k| p * 1e6 * (1.0 + 0.01 * (k + i) as f64))
            .collect();
        let ts: Vec<f64> = (0..8).map(|k| t + k as f64).collect();
        let params =
            json!({ "given": { "p": ps, "T": ts }, "want": ["h", "s", "v"], "units": "si" });
        out.push(("water.batch".to_string(), params, Value::Null));
    }
    for m in &mut out {
        // The params as the server will read them (through JSON text).
        m.1 = serde_json::from_str(&m.1.to_string()).unwrap();
        m.2 = steamcell::api::call(&m.0, m.1.clone()).expect("the mix computes in-process");
        assert!(
            m.2.get("failed").is_none_or(|f| f == 0),
            "{} {}: {}",
            m.0,
            m.1,
            m.2
        );
    }
    out
}

/// Equal JSON, numbers to a relative 1e-14.
fn same(a: &Value, b: &Value) -> bool {
    match (a, b) {
        (Value::Number(x), Value::Number(y)) => {
            let (x, y) = (x.as_f64().unwrap(), y.as_f64().unwrap());
            x == y || (x - y).abs() <= 1e-14 * x.abs().max(y.abs())
        }
        (Value::Array(x), Value::Array(y)) => {
            x.len() == y.len() && x.iter().zip(y).all(|(a, b)| same(a, b))
        }
        (Value::Object(x), Value::Object(y)) => {
            x.len() == y.len() && x.iter().all(|(k, v)| y.get(k).is_some_and(|w| same(v, w)))
        }
        _ => a == b,
    }
}

fn rss_kib(pid: u32) -> u64 {
    let status = std::fs::read_to_string(format!("/proc/{pid}/status")).unwrap_or_default();
    status
        .lines()
        .find_map(|l| l.strip_prefix("VmRSS:"))
        .and_then(|v| v.split_whitespace().next())
        .and_then(|v| v.parse().ok())
        .unwrap_or(0)
}

#[test]
fn sixty_four_clients_every_answer_checked() {
    let s = start(&[], &[]);
    let mix = Arc::new(mix());
    let stop = Arc::new(AtomicBool::new(false));
    let served = Arc::new(AtomicU64::new(0));
    let mut threads = Vec::new();
    for c in 0..CLIENTS {
        let (addr, mix, stop, served) = (s.addr.clone(), mix.clone(), stop.clone(), served.clone());
        threads.push(std::thread::spawn(move || -> Result<u64, String> {
            let mut conn = TcpStream::connect(&addr).map_err(|e| e.to_string())?;
            conn.set_read_timeout(Some(Duration::from_secs(30)))
                .unwrap();
            conn.set_nodelay(true).unwrap();
            let mut reader = BufReader::new(conn.try_clone().unwrap());
            let mut n = 0u64;
            let mut k = c;
            while n == 0 || !stop.load(Ordering::Relaxed) {
                let (method, params, expected) = &mix[k % mix.len()];
                k += 7;
                let body = json!({ "jsonrpc": "2.0", "id": n, "method": method, "params": params })
                    .to_string();
                let req = format!(
                    "POST / HTTP/1.1\r\nHost: {addr}\r\nContent-Type: application/json\r\n\
                     Content-Length: {}\r\n\r\n{body}",
                    body.len()
                );
                conn.write_all(req.as_bytes())
                    .map_err(|e| format!("client {c}: write: {e}"))?;
                let r = read_response(&mut reader).map_err(|e| format!("client {c}: read: {e}"))?;
                if r.status != 200 {
                    return Err(format!("client {c}: HTTP {} {}", r.status, r.text()));
                }
                let v = r.json();
                if v["id"] != n || !same(&v["result"], expected) {
                    return Err(format!("client {c}: {method} {params} answered {v}"));
                }
                n += 1;
                served.fetch_add(1, Ordering::Relaxed);
            }
            Ok(n)
        }));
    }
    let pid = s.child.id();
    std::thread::sleep(RUN / 2);
    let rss_mid = rss_kib(pid);
    let served_mid = served.load(Ordering::Relaxed);
    std::thread::sleep(RUN / 2);
    stop.store(true, Ordering::Relaxed);
    let mut total = 0;
    for t in threads {
        let n = t.join().unwrap().unwrap_or_else(|e| panic!("{e}"));
        assert!(n >= 1);
        total += n;
    }
    let rss_end = rss_kib(pid);
    eprintln!(
        "load: {total} requests by {CLIENTS} clients in {RUN:?}; VmRSS {rss_mid} KiB -> {rss_end} KiB"
    );
    assert!(
        served_mid > 0 && total > served_mid,
        "requests in both halves"
    );
    assert!(rss_mid > 0, "VmRSS readable");
    assert!(
        rss_end <= rss_mid + 32 * 1024,
        "server memory grew from {rss_mid} KiB to {rss_end} KiB in the second half"
    );
    // The server counted at least every request of this test, and none failed.
    let info = post(
        &s.addr,
        &[],
        br#"{"jsonrpc":"2.0","id":1,"method":"server.info"}"#,
    )
    .json();
    assert!(info["result"]["requests_served"].as_u64().unwrap() > total);
    assert_eq!(info["result"]["requests_failed"], 0);
    // The first answer of a fresh client still holds the Table 5 value.
    assert_check(&post(&s.addr, &[], CHECK_REQUEST.as_bytes()).json());
}
