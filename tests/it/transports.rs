//! Every transport answers the same way (the real binary): JSON-RPC over HTTP, WebSocket and
//! stdio give the same error object (code, message, `data`) for a batch beyond the limit and for
//! a bad param, and `GET /cell` the same message with the status the error code maps to; the
//! plain routes `GET /cell`, `GET /site` and `POST /columns` count against `--max-in-flight` and
//! are written to the audit file like any method call.
//!
//! Sources: JSON-RPC 2.0 specification section 5.1 (error object: code, message, data) and 6
//! (batch); this server's code table (`steamcell::api::ERROR_CODES`); the range of validity of
//! IAPWS R7-97(2012) section 1 (p > 0); the example site of our own in
//! `examples/site/site.json`.

use crate::common::{self, *};
use serde_json::{json, Value};
use steamcell::api::columns::{frame, CONTENT_TYPE};
use steamcell::api::{limits, ApiError};

const SITE_FILE: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/examples/site/site.json");

/// The error object of a JSON-RPC response text (a refusal of a whole batch is one object).
fn error_of(text: &str) -> Value {
    let v: Value = serde_json::from_str(text).unwrap_or_else(|e| panic!("{e}: {text}"));
    assert!(v["id"].is_null() || v.get("error").is_some(), "{v}");
    v["error"].clone()
}

/// The same request text over HTTP POST, WebSocket and stdio (default limits): the three error
/// objects, and the HTTP status.
fn over_every_transport(request: &str) -> (u16, [Value; 3]) {
    let s = start(&[], &[]);
    let r = post(&s.addr, &[], request.as_bytes());
    let http = error_of(&r.text());
    let ws = error_of(&Ws::connect(&s.addr).call(request));
    let stdio = error_of(&StdioProc::start().call(request));
    (r.status, [http, ws, stdio])
}

fn api_error(e: &Value) -> ApiError {
    ApiError {
        code: e["code"].as_i64().unwrap(),
        message: e["message"].as_str().unwrap().to_string(),
        data: e["data"].clone(),
    }
}

/// A batch of 1001 calls (the default limit is 1000): error 1008 with data {kind, what, limit,
/// value}, the same on HTTP (status 413), WebSocket and stdio.
#[test]
fn oversize_batch_is_refused_alike() {
    let calls = vec![r#"{"jsonrpc":"2.0","id":1,"method":"server.info"}"#; 1001];
    let request = format!("[{}]", calls.join(","));
    let (status, [http, ws, stdio]) = over_every_transport(&request);
    let want = limits::batch_too_large(limits::MAX_BATCH_REQUESTS as usize, 1001);
    assert_eq!(
        http,
        json!({"code": want.code, "message": want.message, "data": want.data})
    );
    assert_eq!(http["data"]["kind"], "limit_exceeded");
    assert_eq!(http["data"]["what"], "calls in one batch");
    assert_eq!(
        (
            http["data"]["limit"].as_f64(),
            http["data"]["value"].as_f64()
        ),
        (Some(1000.0), Some(1001.0))
    );
    assert_eq!(ws, http, "WebSocket");
    assert_eq!(stdio, http, "stdio");
    assert_eq!(status, 413);
    assert_eq!(status, want.http_status());
}

/// Params nested deeper than the limit (64), in a single request and in a batch: the same 1008
/// with the depth of the whole message on every transport.
#[test]
fn too_deep_request_is_refused_alike() {
    let call = format!(
        r#"{{"jsonrpc":"2.0","id":1,"method":"water.state","params":{{"given":{}{}}}}}"#,
        "[".repeat(70),
        "]".repeat(70)
    );
    for (request, depth) in [(call.clone(), 72.0), (format!("[{call}]"), 73.0)] {
        let (status, [http, ws, stdio]) = over_every_transport(&request);
        assert_eq!(http["code"], 1008, "{http}");
        assert_eq!(http["data"]["what"], "JSON nesting depth");
        assert_eq!(http["data"]["limit"], 64.0);
        assert_eq!(http["data"]["value"], depth);
        assert_eq!(ws, http, "WebSocket");
        assert_eq!(stdio, http, "stdio");
        assert_eq!(status, 413);
    }
}

/// A method the server does not have: the same error object (naming the method) on every
/// JSON-RPC transport, alone and inside a batch, as the in-process call path and the CLI
/// give it (the JSON-RPC layer's own answer was a bare "Method not found" without `data`).
#[test]
fn unknown_method_is_refused_alike() {
    let want = ApiError::method_not_found("water.nope");
    let want = json!({"code": want.code, "message": want.message, "data": want.data});
    assert_eq!(want["message"], "unknown method 'water.nope'");
    let request = r#"{"jsonrpc":"2.0","id":3,"method":"water.nope","params":{}}"#;
    let (status, [http, ws, stdio]) = over_every_transport(request);
    assert_eq!(status, 200);
    assert_eq!(http, want);
    assert_eq!(ws, http, "WebSocket");
    assert_eq!(stdio, http, "stdio");
    let in_process = steamcell::api::call("water.nope", json!({})).unwrap_err();
    assert_eq!(api_error(&http), in_process);

    // In a batch, beside a call that computes; the answer keeps the call's id.
    let batch = r#"[{"jsonrpc":"2.0","id":4,"method":"water.nope","params":{}},
        {"jsonrpc":"2.0","id":5,"method":"water.state","params":{"given":{"p":3,"T":"300 K"}}}]"#;
    let s = start(&[], &[]);
    let answers = [
        post(&s.addr, &[], batch.as_bytes()).text(),
        Ws::connect(&s.addr).call(batch),
        StdioProc::start().call(&batch.replace('\n', " ")),
    ];
    for text in answers {
        let v: Value = serde_json::from_str(&text).unwrap();
        let by_id = |id: i64| {
            v.as_array()
                .unwrap()
                .iter()
                .find(|a| a["id"] == id)
                .unwrap_or_else(|| panic!("no answer {id}: {v}"))
                .clone()
        };
        assert_eq!(by_id(4)["error"], want, "{text}");
        // IAPWS R7-97(2012) Table 5: h = 115.331273 kJ/kg at 3 MPa, 300 K.
        let h = by_id(5)["result"]["h"].as_f64().unwrap();
        assert!((h - 115.331273).abs() < 1e-6, "{h}");
    }
}

/// A bad param (a negative pressure, below the IF97 range): the same error object on every
/// JSON-RPC transport, and on `GET /cell` the same message with the status its code maps to.
#[test]
fn bad_param_is_refused_alike() {
    let request = r#"{"jsonrpc":"2.0","id":"b","method":"water.state","params":{"given":{"p":"-1 MPa","T":"300 K"}}}"#;
    let (status, [http, ws, stdio]) = over_every_transport(request);
    assert_eq!(
        status, 200,
        "a call's error travels in a 200 JSON-RPC response"
    );
    assert_eq!(http["code"], 1001, "{http}");
    assert_eq!(http["data"]["kind"], "out_of_range");
    assert_eq!(http["data"]["quantity"], "p");
    assert_eq!(ws, http, "WebSocket");
    assert_eq!(stdio, http, "stdio");

    let s = start(&[], &[]);
    let r = request_get(&s.addr, "/cell/h?p=-1%20MPa&T=300%20K");
    let e = api_error(&http);
    assert_eq!(r.status, e.http_status(), "{}", r.text());
    assert_eq!(r.status, 422);
    assert_eq!(r.text(), e.message);

    // A unit that is not one: 1004 everywhere, 400 on GET /cell.
    let request = r#"{"jsonrpc":"2.0","id":"u","method":"water.state","params":{"given":{"p":"3 furlongs","T":"300 K"}}}"#;
    let (_, [http, ws, stdio]) = over_every_transport(request);
    assert_eq!(http["code"], 1004, "{http}");
    assert_eq!(http["data"]["unit"], "furlongs");
    assert_eq!((&ws, &stdio), (&http, &http));
    let r = request_get(&s.addr, "/cell/h?p=3%20furlongs&T=300%20K");
    assert_eq!(r.status, 400);
    assert_eq!(r.text(), api_error(&http).message);
}

fn request_get(addr: &str, target: &str) -> Response {
    common::request(addr, "GET", target, &[], b"")
}

/// While a long `balance.sweep` holds the only in-flight slot, `GET /cell` and `GET /site` are
/// refused (503, the in-flight message); afterwards they answer. Every call, refused or not,
/// the plain routes included, has its line in the audit file.
#[test]
fn get_routes_count_as_calls_in_flight_and_are_audited() {
    let dir = std::env::temp_dir().join(format!("steamcell-transports-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let audit = dir.join("audit.jsonl");
    let _ = std::fs::remove_file(&audit);
    let s = start(
        &[
            "--max-in-flight",
            "1",
            "--site",
            &format!("mill={SITE_FILE}"),
            "--audit",
            audit.to_str().unwrap(),
        ],
        &[],
    );
    let site: Value = serde_json::from_str(include_str!("../../examples/site/site.json")).unwrap();
    let sweep = json!({
        "jsonrpc": "2.0", "id": 1, "method": "balance.sweep",
        "params": {"network": site, "path": "units.LP_users.demand", "from": 6, "to": 18, "points": 1000}
    })
    .to_string();
    let cell = "/cell/h?p=3%20MPa&T=300%20K";
    let site_q = "/site/mill/net_power?units.MP_users.demand=40%20t%2Fh";
    let mut seen = None;
    for _attempt in 0..3 {
        let addr = s.addr.clone();
        let body = sweep.clone();
        let slow = std::thread::spawn(move || post(&addr, &[], body.as_bytes()));
        // Let the sweep take the slot first (else a probe may take it and the sweep is the
        // one refused; then the attempt is repeated).
        std::thread::sleep(std::time::Duration::from_millis(100));
        let t0 = std::time::Instant::now();
        let (mut cell_refused, mut site_refused) = (None, None);
        while t0.elapsed() < std::time::Duration::from_secs(60)
            && !slow.is_finished()
            && (cell_refused.is_none() || site_refused.is_none())
        {
            if cell_refused.is_none() {
                let r = request_get(&s.addr, cell);
                if r.status == 503 {
                    cell_refused = Some(r);
                }
            }
            if site_refused.is_none() {
                let r = request_get(&s.addr, site_q);
                if r.status == 503 {
                    site_refused = Some(r);
                }
            }
            std::thread::sleep(std::time::Duration::from_millis(5));
        }
        let done = slow.join().unwrap().json();
        if let (Some(c), Some(st)) = (cell_refused, site_refused) {
            assert_eq!(
                done["result"]["points"].as_array().map(Vec::len),
                Some(1000),
                "{done}"
            );
            seen = Some((c, st));
            break;
        }
    }
    let (c, st) = seen.expect("GET routes while a call holds the only slot are refused");
    assert_in_flight_refusal_text(&c);
    assert_in_flight_refusal_text(&st);
    // Free again: both answer.
    let r = request_get(&s.addr, cell);
    assert_eq!(r.status, 200, "{}", r.text());
    let h: f64 = r.text().parse().unwrap();
    // IAPWS R7-97(2012) Table 5: p = 3 MPa, T = 300 K -> h = 115.331273 kJ/kg.
    assert!((h - 115.331273).abs() <= 0.5e-6, "{h}");
    let r = request_get(&s.addr, site_q);
    assert_eq!(r.status, 200, "{}", r.text());
    // And /columns, through the same call path.
    let small = frame(
        &json!({"given": ["p", "T"], "rows": 1, "want": ["h"]}),
        &[vec![3.0], vec![300.0]],
    );
    let ct = format!("Content-Type: {CONTENT_TYPE}");
    let r = common::request(&s.addr, "POST", "/columns", &[&ct], &small);
    assert_eq!(r.status, 200, "{}", r.text());

    let text = std::fs::read_to_string(&audit).unwrap();
    let lines: Vec<Value> = text
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    let of = |method: &str, code: Option<i64>| {
        lines
            .iter()
            .filter(|l| l["method"] == method && l["error_code"].as_i64() == code)
            .count()
    };
    assert!(of("balance.sweep", None) >= 1, "{text}");
    // GET /cell is recorded as the water.state call it makes, with the params it built.
    assert!(of("water.state", Some(1008)) >= 1, "{text}");
    assert!(of("water.state", None) >= 1, "{text}");
    let ok_cell = lines
        .iter()
        .find(|l| l["method"] == "water.state" && l["error_code"].is_null())
        .unwrap();
    assert_eq!(
        ok_cell["params"],
        json!({"given": {"p": "3 MPa", "T": "300 K"}})
    );
    assert_eq!(ok_cell["result_digest"].as_str().map(str::len), Some(16));
    // GET /site under its route name, with the query pairs.
    assert!(of("GET /site/mill", Some(1008)) >= 1, "{text}");
    let ok_site = lines
        .iter()
        .find(|l| l["method"] == "GET /site/mill" && l["error_code"].is_null())
        .expect("the answered site request is audited");
    assert_eq!(ok_site["params"]["units.MP_users.demand"], "40 t/h");
    // POST /columns with its frame header.
    let cols = lines
        .iter()
        .find(|l| l["method"] == "POST /columns")
        .expect("the /columns request is audited");
    assert_eq!(cols["params"]["want"], json!(["h"]));
    assert!(cols["error_code"].is_null());
}
