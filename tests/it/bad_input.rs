//! Malformed and out-of-range requests sent to the real `steamcell serve` binary over HTTP:
//! each answers its expected JSON-RPC error code (or HTTP status) with a message naming the
//! problem, and after EACH one a valid request is still answered correctly.
//!
//! Sources: error codes per the JSON-RPC 2.0 specification section 5.1 (-32700, -32600,
//! -32601, -32602) and this server's code table (`steamcell::api::ERROR_CODES`); HTTP statuses
//! per RFC 9110 (413, 415); JSON grammar per RFC 8259 (no NaN/Infinity literals); ranges of
//! validity per IAPWS R7-97(2012) section 1 (273.15 K <= T <= 1073.15 K for p <= 100 MPa,
//! triple point 273.16 K) and quality 0..1 (common practice, no source). Check value after every
//! case: IAPWS R7-97(2012) Table 5, p = 3 MPa, T = 300 K -> h = 115.331273 kJ/kg.

use crate::common;

use common::*;

/// What a malformed request must answer.
enum Expect {
    /// A JSON-RPC error with this code whose message contains the text (case-insensitive).
    Rpc(i64, &'static str),
    /// An HTTP status whose body contains the text (case-insensitive).
    Http(u16, &'static str),
}
use Expect::{Http, Rpc};

/// A request text for `method` with params given as JSON text.
fn call(method: &str, params: &str) -> Vec<u8> {
    format!(r#"{{"jsonrpc":"2.0","id":7,"method":"{method}","params":{params}}}"#).into_bytes()
}

fn state(given: &str) -> Vec<u8> {
    call("water.state", &format!(r#"{{"given":{given}}}"#))
}

fn rows(n: usize) -> Vec<u8> {
    let p = vec!["1"; n].join(",");
    let t = vec!["300"; n].join(",");
    call(
        "water.batch",
        &format!(r#"{{"given":{{"p":[{p}],"T":[{t}]}},"units":"si"}}"#),
    )
}

fn nested(depth: usize) -> Vec<u8> {
    call(
        "water.state",
        &format!(r#"{{"given":{}{}}}"#, "[".repeat(depth), "]".repeat(depth)),
    )
}

fn cases() -> Vec<(&'static str, Vec<u8>, Expect)> {
    let b = |s: &str| s.as_bytes().to_vec();
    let mut invalid_utf8 = b(
        r#"{"jsonrpc":"2.0","id":1,"method":"water.state","params":{"given":{"p":"3 MPa","T":"300 "#,
    );
    invalid_utf8.extend_from_slice(&[0xff, 0xfe, b'"', b'}', b'}', b'}']);
    let mut lone_bytes = vec![0xc3, 0x28, 0xa0, 0xa1];
    lone_bytes.extend_from_slice(b"{}");
    let big_batch = format!(
        "[{}]",
        vec![r#"{"jsonrpc":"2.0","id":1,"method":"server.info"}"#; 1001].join(",")
    );
    let oversized = call(
        "water.state",
        &format!(
            r#"{{"given":{{"p":"3 MPa","T":"300 K"}},"pad":"{}"}}"#,
            "x".repeat(1_100_000)
        ),
    );
    vec![
        // Not JSON at all.
        ("empty body", b(""), Rpc(-32700, "parse error")),
        ("lone brace", b("{"), Rpc(-32700, "parse error")),
        ("plain words", b("hello steam"), Rpc(-32700, "parse error")),
        (
            "truncated object",
            b(r#"{"jsonrpc":"2.0","id":1,"method":"server.info""#),
            Rpc(-32700, "parse error"),
        ),
        (
            "trailing garbage",
            b(r#"{"jsonrpc":"2.0","id":1,"method":"server.info"} x"#),
            Rpc(-32700, "parse error"),
        ),
        (
            "single quotes",
            b("{'jsonrpc':'2.0','id':1,'method':'server.info'}"),
            Rpc(-32700, "parse error"),
        ),
        (
            "trailing comma",
            b(r#"{"jsonrpc":"2.0","id":1,"method":"server.info",}"#),
            Rpc(-32700, "parse error"),
        ),
        (
            "invalid UTF-8 inside a string",
            invalid_utf8,
            Rpc(-32700, "parse error"),
        ),
        (
            "invalid UTF-8 bytes",
            lone_bytes,
            Rpc(-32700, "parse error"),
        ),
        (
            "NaN literal",
            state(r#"{"p":NaN,"T":"300 K"}"#),
            Rpc(-32700, "parse error"),
        ),
        (
            "Infinity literal",
            state(r#"{"p":Infinity,"T":"300 K"}"#),
            Rpc(-32700, "parse error"),
        ),
        (
            "-Infinity literal",
            state(r#"{"p":-Infinity,"T":"300 K"}"#),
            Rpc(-32700, "parse error"),
        ),
        // Not a JSON-RPC 2.0 request.
        (
            "jsonrpc 1.0",
            b(r#"{"jsonrpc":"1.0","id":1,"method":"server.info"}"#),
            Rpc(-32600, "invalid request"),
        ),
        (
            "jsonrpc missing",
            b(r#"{"id":1,"method":"server.info"}"#),
            Rpc(-32600, "invalid request"),
        ),
        (
            "jsonrpc as a number",
            b(r#"{"jsonrpc":2.0,"id":1,"method":"server.info"}"#),
            Rpc(-32600, "invalid request"),
        ),
        (
            "method missing",
            b(r#"{"jsonrpc":"2.0","id":1}"#),
            Rpc(-32600, "invalid request"),
        ),
        (
            "method a number",
            b(r#"{"jsonrpc":"2.0","id":1,"method":5}"#),
            Rpc(-32600, "invalid request"),
        ),
        (
            "id an object",
            b(r#"{"jsonrpc":"2.0","id":{"a":1},"method":"server.info"}"#),
            Rpc(-32600, "invalid request"),
        ),
        // JSON that is neither an object nor an array: jsonrpsee answers a parse error.
        ("a bare number", b("42"), Rpc(-32700, "parse error")),
        (
            "a bare string",
            b(r#""water.state""#),
            Rpc(-32700, "parse error"),
        ),
        ("empty batch", b("[]"), Rpc(-32600, "invalid request")),
        (
            "gigantic batch (1001 calls)",
            big_batch.into_bytes(),
            Rpc(1008, "exceeds the limit of 1000"),
        ),
        // Unknown methods.
        (
            "unknown method",
            call("water.nope", "{}"),
            Rpc(-32601, "unknown method"),
        ),
        (
            "empty method name",
            call("", "{}"),
            Rpc(-32601, "unknown method"),
        ),
        (
            "method of another case",
            call("Water.State", "{}"),
            Rpc(-32601, "unknown method"),
        ),
        // Params of the wrong shape or type.
        (
            "params a string",
            call("water.state", r#""p=3""#),
            Rpc(-32602, "params"),
        ),
        (
            "params a number",
            call("water.state", "5"),
            Rpc(-32602, "params"),
        ),
        (
            "params by position",
            call("water.state", r#"["3 MPa","300 K"]"#),
            Rpc(-32602, "not an array"),
        ),
        (
            "given missing",
            call("water.state", "{}"),
            Rpc(-32602, "given"),
        ),
        (
            "given a number",
            call("water.state", r#"{"given":5}"#),
            Rpc(-32602, "given"),
        ),
        // An array is never read by position (serde would fill p, T, ... in order): refused
        // for every params object (issue 15, reproduction 9).
        (
            "given an array",
            call("water.state", r#"{"given":["3 MPa"]}"#),
            Rpc(-32602, "an array where an object with named fields"),
        ),
        (
            "given an array of two numbers",
            call("water.state", r#"{"given":[3e6, 300]}"#),
            Rpc(-32602, "an array where an object with named fields"),
        ),
        (
            "a stream as an array",
            call(
                "valve.throttle",
                r#"{"inlet":["10 bar","200 degC"],"outlet_p":"1 bar"}"#,
            ),
            Rpc(-32602, "field `inlet`: an array where an object"),
        ),
        (
            "extra field",
            call(
                "water.state",
                r#"{"given":{"p":"3 MPa","T":"300 K"},"bogus":1}"#,
            ),
            Rpc(-32602, "bogus"),
        ),
        (
            "p a boolean",
            state(r#"{"p":true,"T":"300 K"}"#),
            Rpc(-32602, "given.p"),
        ),
        // null counts as absent.
        (
            "p null",
            state(r#"{"p":null,"T":"300 K"}"#),
            Rpc(1006, "got 1: T"),
        ),
        (
            "p an array",
            state(r#"{"p":[3],"T":"300 K"}"#),
            Rpc(-32602, "given.p"),
        ),
        (
            "p an object",
            state(r#"{"p":{"v":3},"T":"300 K"}"#),
            Rpc(-32602, "given.p"),
        ),
        (
            "units a number",
            call(
                "water.state",
                r#"{"given":{"p":"3 MPa","T":"300 K"},"units":3}"#,
            ),
            Rpc(-32602, "units"),
        ),
        (
            "huge exponent 1e999",
            state(r#"{"p":1e999,"T":"300 K"}"#),
            Rpc(-32602, "out of range"),
        ),
        (
            "huge negative exponent -1e999",
            state(r#"{"p":-1e999,"T":"300 K"}"#),
            Rpc(-32602, "out of range"),
        ),
        (
            "400-digit number",
            state(&format!(r#"{{"p":1{},"T":"300 K"}}"#, "0".repeat(400))),
            Rpc(-32602, "out of range"),
        ),
        // Missing and extra quantities.
        ("given empty", state("{}"), Rpc(1006, "exactly two")),
        (
            "one quantity",
            state(r#"{"p":"3 MPa"}"#),
            Rpc(1006, "exactly two"),
        ),
        (
            "three quantities",
            state(r#"{"p":"3 MPa","T":"300 K","h":100}"#),
            Rpc(1006, "exactly two"),
        ),
        (
            "not a property",
            state(r#"{"p":"3 MPa","q":"300 K"}"#),
            Rpc(-32602, "unknown field `q`"),
        ),
        // Numbers that are not numbers.
        (
            "NaN in a unit text",
            state(r#"{"p":"NaN MPa","T":"300 K"}"#),
            Rpc(1006, "not a number"),
        ),
        (
            "inf in a unit text",
            state(r#"{"p":"inf MPa","T":"300 K"}"#),
            Rpc(1006, "not a number"),
        ),
        (
            "empty text",
            state(r#"{"p":"","T":"300 K"}"#),
            Rpc(1006, "not a number"),
        ),
        (
            "unit without number",
            state(r#"{"p":"MPa","T":"300 K"}"#),
            Rpc(1006, "not a number"),
        ),
        // Outside the range of validity.
        (
            "negative absolute pressure",
            state(r#"{"p":"-1 MPa","T":"300 K"}"#),
            Rpc(1001, "below"),
        ),
        (
            "zero pressure",
            state(r#"{"p":"0 MPa","T":"300 K"}"#),
            Rpc(1001, "below"),
        ),
        (
            "gauge below vacuum",
            state(r#"{"p":"-2 barg","T":"300 K"}"#),
            Rpc(1001, "below"),
        ),
        (
            "pressure above 100 MPa",
            state(r#"{"p":"200 MPa","T":"300 K"}"#),
            Rpc(1001, "above"),
        ),
        (
            "T below the triple point",
            state(r#"{"p":"3 MPa","T":"200 K"}"#),
            Rpc(1001, "below"),
        ),
        (
            "T below the triple point in degC",
            state(r#"{"p":"3 MPa","T":"-10 degC"}"#),
            Rpc(1001, "below"),
        ),
        (
            "T below absolute zero",
            state(r#"{"p":"3 MPa","T":"-500 degC"}"#),
            Rpc(1001, "below"),
        ),
        (
            "T above 2273.15 K",
            state(r#"{"p":"3 MPa","T":"3000 K"}"#),
            Rpc(1001, "above"),
        ),
        (
            "quality above 1",
            state(r#"{"p":"1 MPa","x":1.5}"#),
            Rpc(1006, "outside 0..1"),
        ),
        (
            "quality below 0",
            state(r#"{"p":"1 MPa","x":-0.1}"#),
            Rpc(1006, "outside 0..1"),
        ),
        (
            "saturation above the critical point",
            call("water.saturation", r#"{"T":"700 K"}"#),
            Rpc(1001, "above"),
        ),
        // Units.
        (
            "unit that does not exist",
            state(r#"{"p":"3 furlong","T":"300 K"}"#),
            Rpc(1004, "furlong"),
        ),
        (
            "unit with a typo",
            state(r#"{"p":"3 MPaX","T":"300 K"}"#),
            Rpc(1004, "mpax"),
        ),
        (
            "temperature unit for p",
            state(r#"{"p":"3 K","T":"300 K"}"#),
            Rpc(1005, "pressure"),
        ),
        (
            "pressure unit for T",
            state(r#"{"p":"3 MPa","T":"300 MPa"}"#),
            Rpc(1005, "temperature"),
        ),
        (
            "temperature unit for h",
            state(r#"{"p":"3 MPa","h":"300 K"}"#),
            Rpc(1005, "h"),
        ),
        (
            "unknown unit preset",
            call(
                "water.state",
                r#"{"given":{"p":"3 MPa","T":"300 K"},"units":"imperial2"}"#,
            ),
            Rpc(1006, "unknown unit preset"),
        ),
        (
            "unknown formulation",
            call(
                "water.state",
                r#"{"given":{"p":"3 MPa","T":"300 K"},"formulation":"foo"}"#,
            ),
            Rpc(1006, "foo"),
        ),
        // Table calls.
        (
            "batch with one column",
            call("water.batch", r#"{"given":{"p":[1,2]}}"#),
            Rpc(1006, "exactly two"),
        ),
        (
            "batch columns of unequal length",
            call(
                "water.batch",
                r#"{"given":{"p":[1,2],"T":[300]},"units":"si"}"#,
            ),
            Rpc(1006, "differ in length"),
        ),
        (
            "batch wants a non-property",
            call(
                "water.batch",
                r#"{"given":{"p":[1],"T":[300]},"want":["zz"]}"#,
            ),
            Rpc(1006, "zz"),
        ),
        (
            "batch wants nothing",
            call("water.batch", r#"{"given":{"p":[1],"T":[300]},"want":[]}"#),
            Rpc(1006, "want is empty"),
        ),
        ("batch rows above the limit", rows(1001), Rpc(1008, "rows")),
        // Size and shape limits.
        (
            "nesting 65 deep",
            nested(65),
            Rpc(1008, "nested deeper than 64"),
        ),
        (
            "nesting 100000 deep",
            nested(100_000),
            Rpc(1008, "nested deeper than 64"),
        ),
        ("oversized body", oversized, Http(413, "too large")),
    ]
}

#[test]
fn malformed_requests_answer_their_error_and_the_server_goes_on() {
    let s = start(
        &["--max-batch-rows", "1000", "--max-body-bytes", "1048576"],
        &[],
    );
    let table = cases();
    assert!(table.len() >= 60, "{} cases", table.len());
    let mut failures = Vec::new();
    for (name, body, expect) in &table {
        let r = post(&s.addr, &[], body);
        let ok = match expect {
            Rpc(code, text) => {
                let v: serde_json::Value =
                    serde_json::from_slice(&r.body).unwrap_or(serde_json::Value::Null);
                // A batch-level refusal may come as the only element of an array.
                let v = if v.is_array() && v.as_array().unwrap().len() == 1 {
                    v[0].clone()
                } else {
                    v
                };
                let msg = v["error"]["message"].as_str().unwrap_or("").to_lowercase();
                let got = v["error"]["code"].as_i64();
                if got == Some(*code) && msg.contains(&text.to_lowercase()) {
                    None
                } else {
                    Some(format!(
                        "HTTP {} {}",
                        r.status,
                        r.text().chars().take(300).collect::<String>()
                    ))
                }
            }
            Http(status, text) => {
                if r.status == *status && r.text().to_lowercase().contains(&text.to_lowercase()) {
                    None
                } else {
                    Some(format!(
                        "HTTP {} {}",
                        r.status,
                        r.text().chars().take(300).collect::<String>()
                    ))
                }
            }
        };
        if let Some(got) = ok {
            failures.push(format!("{name}: got {got}"));
        }
        // After each case the server still answers a valid request correctly.
        let check = post(&s.addr, &[], CHECK_REQUEST.as_bytes());
        assert_eq!(check.status, 200, "after {name}");
        assert_check(&check.json());
    }
    assert!(
        failures.is_empty(),
        "{} of {} cases:\n{}",
        failures.len(),
        table.len(),
        failures.join("\n")
    );
}

#[test]
fn content_type_other_than_json_is_415() {
    let s = start(&[], &[]);
    let r = request(
        &s.addr,
        "POST",
        "/",
        &["Content-Type: text/plain"],
        CHECK_REQUEST.as_bytes(),
    );
    assert_eq!(r.status, 415);
    assert!(r.text().contains("application/json"), "{}", r.text());
    assert_check(&post(&s.addr, &[], CHECK_REQUEST.as_bytes()).json());
}
