//! Load benchmark against a running `steamcell serve` (see scripts/load-bench.sh):
//!
//! 1. N concurrent keep-alive HTTP clients (default 64) mixing single `water.state` calls and
//!    small `water.batch` calls for S seconds (default 10): requests/s, p50/p99 latency.
//! 2. Single `water.state` round trip, one client: p50/p99 over HTTP keep-alive and WebSocket.
//! 3. `water.batch` of 100,000 (p,T) rows -> h,s: wall time and rows/s.
//!
//! Usage: `cargo run --release --example load_bench -- ADDR [CLIENTS] [SECONDS]`.

use serde_json::{json, Value};
use std::io::{BufRead, BufReader, Read, Write};
use std::net::TcpStream;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;
use std::time::{Duration, Instant};

struct Conn {
    addr: String,
    w: TcpStream,
    r: BufReader<TcpStream>,
}

impl Conn {
    fn new(addr: &str) -> Conn {
        let w = TcpStream::connect(addr).expect("connect");
        w.set_nodelay(true).unwrap();
        let r = BufReader::new(w.try_clone().unwrap());
        Conn {
            addr: addr.to_string(),
            w,
            r,
        }
    }

    fn post(&mut self, body: &str) -> Value {
        let req = format!(
            "POST / HTTP/1.1\r\nHost: {}\r\nContent-Type: application/json\r\nContent-Length: {}\r\n\r\n{body}",
            self.addr,
            body.len()
        );
        self.w.write_all(req.as_bytes()).expect("write");
        let mut line = String::new();
        self.r.read_line(&mut line).expect("status");
        assert!(line.contains(" 200 "), "{line}");
        let mut len = 0usize;
        let mut chunked = false;
        loop {
            let mut h = String::new();
            self.r.read_line(&mut h).unwrap();
            let h = h.trim_end().to_ascii_lowercase();
            if h.is_empty() {
                break;
            }
            if let Some(v) = h.strip_prefix("content-length:") {
                len = v.trim().parse().unwrap();
            }
            if h.starts_with("transfer-encoding:") && h.contains("chunked") {
                chunked = true;
            }
        }
        let mut body = Vec::new();
        if chunked {
            loop {
                let mut size = String::new();
                self.r.read_line(&mut size).unwrap();
                let n = usize::from_str_radix(size.trim(), 16).unwrap();
                let mut c = vec![0; n + 2];
                self.r.read_exact(&mut c).unwrap();
                if n == 0 {
                    break;
                }
                body.extend_from_slice(&c[..n]);
            }
        } else {
            body = vec![0; len];
            self.r.read_exact(&mut body).unwrap();
        }
        let v: Value = serde_json::from_slice(&body).expect("JSON");
        assert!(v.get("error").is_none(), "{v}");
        v
    }
}

fn pct(sorted: &[f64], q: f64) -> f64 {
    if sorted.is_empty() {
        return f64::NAN;
    }
    sorted[((sorted.len() - 1) as f64 * q).round() as usize]
}

fn report(name: &str, mut lat_us: Vec<f64>, elapsed: Duration) {
    lat_us.sort_by(|a, b| a.total_cmp(b));
    println!(
        "{name}: {} requests in {:.1} s = {:.0} req/s; latency p50 {:.0} us, p99 {:.0} us",
        lat_us.len(),
        elapsed.as_secs_f64(),
        lat_us.len() as f64 / elapsed.as_secs_f64(),
        pct(&lat_us, 0.5),
        pct(&lat_us, 0.99)
    );
}

fn state_body(i: usize) -> String {
    json!({"jsonrpc":"2.0","id":i,"method":"water.state",
           "params":{"given":{"p":format!("{} MPa", 1.0 + (i % 20) as f64),"T":format!("{} K", 300.0 + (i % 400) as f64)}}})
    .to_string()
}

fn small_batch_body(i: usize) -> String {
    let p: Vec<f64> = (0..10).map(|k| 1e6 * (1.0 + (k + i % 7) as f64)).collect();
    let t: Vec<f64> = (0..10).map(|k| 400.0 + 10.0 * k as f64).collect();
    json!({"jsonrpc":"2.0","id":i,"method":"water.batch",
           "params":{"given":{"p":p,"T":t},"want":["h","s"],"units":"si"}})
    .to_string()
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let addr = args
        .get(1)
        .cloned()
        .unwrap_or_else(|| "127.0.0.1:8790".into());
    let clients: usize = args.get(2).and_then(|s| s.parse().ok()).unwrap_or(64);
    let seconds: f64 = args.get(3).and_then(|s| s.parse().ok()).unwrap_or(10.0);

    // 1. Concurrent mixed load.
    let stop = Arc::new(AtomicBool::new(false));
    let t0 = Instant::now();
    let threads: Vec<_> = (0..clients)
        .map(|c| {
            let (addr, stop) = (addr.clone(), stop.clone());
            std::thread::spawn(move || {
                let mut conn = Conn::new(&addr);
                let mut lat = Vec::new();
                let mut i = c;
                while !stop.load(Ordering::Relaxed) {
                    let body = if i % 4 == 0 {
                        small_batch_body(i)
                    } else {
                        state_body(i)
                    };
                    let t = Instant::now();
                    conn.post(&body);
                    lat.push(t.elapsed().as_secs_f64() * 1e6);
                    i += clients;
                }
                lat
            })
        })
        .collect();
    std::thread::sleep(Duration::from_secs_f64(seconds));
    stop.store(true, Ordering::Relaxed);
    let lat: Vec<f64> = threads
        .into_iter()
        .flat_map(|t| t.join().unwrap())
        .collect();
    report(
        &format!("{clients} clients, 3:1 water.state:water.batch(10 rows)"),
        lat,
        t0.elapsed(),
    );

    // 2. Single round trips, one client.
    let mut conn = Conn::new(&addr);
    for i in 0..200 {
        conn.post(&state_body(i));
    }
    let t0 = Instant::now();
    let mut lat = Vec::new();
    for i in 0..5000 {
        let t = Instant::now();
        conn.post(&state_body(i));
        lat.push(t.elapsed().as_secs_f64() * 1e6);
    }
    report("water.state round trip, HTTP keep-alive", lat, t0.elapsed());

    let rt = tokio::runtime::Builder::new_current_thread()
        .enable_all()
        .build()
        .unwrap();
    rt.block_on(async {
        use jsonrpsee::core::client::ClientT;
        use jsonrpsee::core::params::ObjectParams;
        let ws = jsonrpsee::ws_client::WsClientBuilder::default()
            .build(format!("ws://{addr}"))
            .await
            .expect("WebSocket connect");
        let params = |i: usize| {
            let mut p = ObjectParams::new();
            p.insert(
                "given",
                json!({"p": format!("{} MPa", 1.0 + (i % 20) as f64), "T": format!("{} K", 300.0 + (i % 400) as f64)}),
            )
            .unwrap();
            p
        };
        for i in 0..200 {
            let _: Value = ws.request("water.state", params(i)).await.unwrap();
        }
        let t0 = Instant::now();
        let mut lat = Vec::new();
        for i in 0..5000 {
            let t = Instant::now();
            let _: Value = ws.request("water.state", params(i)).await.unwrap();
            lat.push(t.elapsed().as_secs_f64() * 1e6);
        }
        report("water.state round trip, WebSocket", lat, t0.elapsed());
    });

    // 3. One big table.
    let n = 100_000;
    let p: Vec<f64> = (0..n).map(|k| 1e5 + (k % 1000) as f64 * 1e4).collect();
    let t: Vec<f64> = (0..n).map(|k| 300.0 + (k % 500) as f64).collect();
    let body = json!({"jsonrpc":"2.0","id":1,"method":"water.batch",
                      "params":{"given":{"p":p,"T":t},"want":["h","s"],"units":"si"}})
    .to_string();
    let mut best = f64::INFINITY;
    for _ in 0..3 {
        let t = Instant::now();
        let v = conn.post(&body);
        best = best.min(t.elapsed().as_secs_f64());
        assert_eq!(v["result"]["rows"], n);
    }
    println!(
        "water.batch {n} (p,T) rows -> h,s over HTTP: best of 3 {:.3} s = {:.0} rows/s ({} bytes request)",
        best,
        n as f64 / best,
        body.len()
    );
}
