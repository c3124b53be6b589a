//! API layer tests: error mapping and code table, params decoding, the registry, the cell
//! interface's params building, and sample responses through the real `RpcModule`
//! (`raw_json_request`, insta snapshots).
//!
//! Sources: JSON-RPC 2.0 specification, section 5.1 "Error object" (reserved range
//! -32768..-32000, codes -32700/-32600/-32601/-32602/-32603); the steamcell code table
//! (1001..1009) is ours, fixed by `api::ERROR_CODES`.

use serde_json::{json, Value};
use steamcell::api::{self, cell, codes, ApiError, ERROR_CODES};
use steamcell::error::{Bound, Error};

fn every_variant() -> Vec<(Error, i64, &'static str)> {
    vec![
        (
            Error::out_of_range("T", 2000.0, 1073.15, "K", Bound::Above, "IAPWS-IF97"),
            1001,
            "out_of_range",
        ),
        (
            Error::NotFinite {
                quantity: "p".into(),
            },
            1002,
            "not_finite",
        ),
        (Error::no_unique("two states"), 1003, "no_unique_state"),
        (
            Error::UnknownUnit {
                text: "furlong".into(),
                accepted: vec!["m".into()],
            },
            1004,
            "unknown_unit",
        ),
        (
            Error::WrongDimension {
                quantity: "p".into(),
                unit: "K".into(),
                expected: "pressure".into(),
            },
            1005,
            "wrong_dimension",
        ),
        (Error::invalid("bad"), 1006, "invalid_input"),
        (Error::not_converged("T(p,h)", 50), 1007, "not_converged"),
        (
            Error::LimitExceeded {
                what: "rows".into(),
                limit: 10.0,
                value: 11.0,
            },
            1008,
            "limit_exceeded",
        ),
        (Error::infeasible("temperature cross"), 1009, "infeasible"),
    ]
}

#[test]
fn every_error_variant_has_its_stable_code_and_kind() {
    // Source: steamcell code table (api::ERROR_CODES), fixed by contract.
    for (e, code, kind) in every_variant() {
        let message = e.to_string();
        let a = ApiError::from(e);
        assert_eq!(a.code, code, "{kind}");
        assert_eq!(a.data["kind"], kind);
        assert_eq!(a.kind(), kind);
        assert_eq!(a.message, message);
        assert_eq!(api::error_kind(code), Some(kind));
    }
}

#[test]
fn error_data_carries_the_variant_fields() {
    let a = ApiError::from(Error::out_of_range(
        "T",
        2000.0,
        1073.15,
        "K",
        Bound::Above,
        "IAPWS-IF97",
    ));
    assert_eq!(
        a.data,
        json!({"kind": "out_of_range", "quantity": "T", "value": 2000.0, "limit": 1073.15,
               "unit": "K", "bound": "above", "formulation": "IAPWS-IF97"})
    );
    let a = ApiError::from(Error::UnknownUnit {
        text: "furlong".into(),
        accepted: vec!["m".into(), "ft".into()],
    });
    assert_eq!(
        a.data,
        json!({"kind": "unknown_unit", "unit": "furlong", "accepted": ["m", "ft"]})
    );
    let a = ApiError::from(Error::not_converged("T(p,h)", 50));
    assert_eq!(
        a.data,
        json!({"kind": "not_converged", "what": "T(p,h)", "iterations": 50})
    );
}

#[test]
fn code_table_is_unique_and_own_codes_avoid_the_reserved_range() {
    // Source: JSON-RPC 2.0 specification, section 5.1 (reserved -32768..-32000).
    let mut seen = std::collections::HashSet::new();
    for (code, kind, description) in ERROR_CODES {
        assert!(seen.insert(*code), "duplicate code {code}");
        assert!(!description.is_empty(), "{kind} has no description");
        if *code > 0 {
            assert!(!(-32768..=-32000).contains(code));
        }
    }
    let standard = [
        (-32700, "parse_error"),
        (-32600, "invalid_request"),
        (-32601, "method_not_found"),
        (-32602, "invalid_params"),
        (-32603, "internal_error"),
    ];
    for (code, kind) in standard {
        assert_eq!(api::error_kind(code), Some(kind));
    }
    // Every core error has its code, and the server adds one of its own: a call the
    // caller's token does not permit (tokens live in the server, not in the core).
    let mut own: Vec<i64> = every_variant().iter().map(|v| v.1).collect();
    own.push(api::codes::FORBIDDEN);
    assert_eq!(
        ERROR_CODES
            .iter()
            .filter(|c| c.0 > 0)
            .map(|c| c.0)
            .collect::<Vec<_>>(),
        own
    );
}

/// The README's table of error codes lists every own code with its kind, and the five
/// JSON-RPC ones, so that the documented table cannot drift from `ERROR_CODES`.
#[test]
fn the_readme_lists_every_error_code() {
    let readme = include_str!("../../README.md");
    for (code, kind, _) in ERROR_CODES {
        if *code > 0 {
            assert!(
                readme.contains(&format!("| {code} | {kind} |")),
                "README's error table lacks {code} {kind}"
            );
        } else {
            assert!(
                readme
                    .lines()
                    .any(|l| l.starts_with('|') && l.contains(&code.to_string())),
                "README's error table lacks {code}"
            );
        }
    }
}

#[test]
fn params_decoding_names_the_field() {
    #[derive(serde::Deserialize, Debug)]
    #[serde(deny_unknown_fields)]
    #[allow(dead_code)]
    struct P {
        a: f64,
        inner: Inner,
    }
    #[derive(serde::Deserialize, Debug)]
    #[serde(deny_unknown_fields)]
    #[allow(dead_code)]
    struct Inner {
        b: String,
    }
    let ok: P = api::decode_params(json!({"a": 1.0, "inner": {"b": "x"}})).unwrap();
    assert_eq!(ok.a, 1.0);

    let e = api::decode_params::<P>(json!({"inner": {"b": "x"}})).unwrap_err();
    assert_eq!(e.code, codes::INVALID_PARAMS);
    assert!(e.message.contains("`a`"), "{}", e.message);

    let e = api::decode_params::<P>(json!({"a": 1, "inner": {"b": "x"}, "zz": 0})).unwrap_err();
    assert_eq!(e.code, -32602);
    assert!(e.message.contains("`zz`"), "{}", e.message);
    assert_eq!(e.data["path"], "zz");

    let e = api::decode_params::<P>(json!({"a": 1, "inner": {"b": 3}})).unwrap_err();
    assert_eq!(e.data["path"], "inner.b");
    assert!(e.message.contains("inner.b"), "{}", e.message);

    let e = api::decode_params::<P>(json!([1, {"b": "x"}])).unwrap_err();
    assert_eq!(e.code, -32602);
    assert!(e.message.contains("not an array"), "{}", e.message);

    let e = api::decode_params::<P>(json!("text")).unwrap_err();
    assert_eq!(e.code, -32602);
}

#[test]
fn absent_or_empty_params_count_as_an_empty_object() {
    for p in [Value::Null, json!([]), json!({})] {
        assert!(api::call("server.info", p).is_ok());
    }
}

#[test]
fn registry_names_are_unique_and_documented() {
    let mut seen = std::collections::HashSet::new();
    for m in api::registry() {
        assert!(seen.insert(m.name), "duplicate method {}", m.name);
        assert!(m.name.contains('.'), "{} is not group.name", m.name);
        assert!(!m.summary.is_empty() && !m.description.is_empty());
    }
    for needed in ["water.state", "server.info", "server.schema"] {
        assert!(api::find(needed).is_some(), "{needed} missing");
    }
    let e = api::call("no.such", json!({})).unwrap_err();
    assert_eq!(e.code, codes::METHOD_NOT_FOUND);
}

/// Calls are counted by the server that runs them (its context), through its call path: one
/// success and one failure here, none in another server or by an in-process call.
#[test]
fn requests_are_counted_by_their_server() {
    let rt = tokio::runtime::Builder::new_current_thread()
        .enable_all()
        .build()
        .unwrap();
    let ctx = std::sync::Arc::new(api::ServerCtx::default());
    let other = std::sync::Arc::new(api::ServerCtx::default());
    let module = steamcell::server::rpc_module(ctx.clone());
    let _other_module = steamcell::server::rpc_module(other.clone());
    for req in [
        r#"{"jsonrpc":"2.0","id":1,"method":"server.info"}"#,
        r#"{"jsonrpc":"2.0","id":2,"method":"water.state","params":{}}"#,
    ] {
        rt.block_on(module.raw_json_request(req, 1)).unwrap();
    }
    api::call("server.info", json!({})).unwrap();
    assert_eq!((ctx.requests_served(), ctx.requests_failed()), (2, 1));
    assert_eq!(other.requests_served(), 0);
}

#[test]
fn cell_params_put_reserved_names_on_top_and_numbers_as_numbers() {
    let pairs = cell::pairs_from_query("p=10+MPa&T=500&units=si&ambient=1.01325%20bar&x=0.5");
    let params = cell::params_from_pairs(&pairs).unwrap();
    assert_eq!(
        params,
        json!({"given": {"p": "10 MPa", "T": 500.0, "x": 0.5},
               "units": "si", "ambient": "1.01325 bar"})
    );
    let twice = cell::pairs_from_query("p=1&p=2");
    assert_eq!(cell::params_from_pairs(&twice).unwrap_err().status, 400);
    // "nan" and "inf" are not finite: they go on as text, for the method to refuse.
    let p = cell::params_from_pairs(&cell::pairs_from_query("p=nan")).unwrap();
    assert_eq!(p["given"]["p"], "nan");
    let args = cell::pairs_from_args(&["p=42barg", "T = 410degC"]).unwrap();
    assert_eq!(
        args,
        vec![
            ("p".to_string(), "42barg".to_string()),
            ("T".to_string(), "410degC".to_string())
        ]
    );
    assert_eq!(cell::pairs_from_args(&["p"]).unwrap_err().status, 400);
}

/// The one mapping from an API error to an HTTP status (GET routes, /columns, refusals of a
/// whole HTTP request): bad input 400, no answer for the state 422, unknown method 404, a size
/// limit 413 (rows, body, batch, nesting), a busy server or a late answer 503, a late body 408.
#[test]
fn http_status_follows_the_error_kind() {
    let of = |code: i64| ApiError {
        code,
        message: String::new(),
        data: json!({}),
    };
    for (code, status) in [
        (1001, 422),
        (1002, 400),
        (1003, 422),
        (1004, 400),
        (1005, 400),
        (1006, 400),
        (1007, 422),
        (1008, 413),
        (1009, 422),
        (-32700, 400),
        (-32600, 400),
        (-32602, 400),
        (-32601, 404),
        (-32603, 500),
    ] {
        assert_eq!(of(code).http_status(), status, "code {code}");
    }
    let rows = ApiError::from(Error::LimitExceeded {
        what: "rows in one water.batch call".into(),
        limit: 10.0,
        value: 11.0,
    });
    assert_eq!(rows.http_status(), 413);
    assert_eq!(api::limits::busy(4).http_status(), 503);
    let limit = std::time::Duration::from_secs(2);
    assert_eq!(api::limits::answer_time(limit).http_status(), 503);
    assert_eq!(api::limits::body_time(limit).http_status(), 408);
    assert_eq!(api::limits::body_too_large(10, 11).http_status(), 413);
    assert_eq!(api::limits::too_deep(4, 5).http_status(), 413);
    assert_eq!(api::limits::batch_too_large(4, 5).http_status(), 413);
    // A GET route's failure carries the mapped status and the message as one line.
    let e = cell::CellError::from(api::limits::busy(4));
    assert_eq!((e.status, e.reason.contains("in flight")), (503, true));
}

#[test]
fn cell_unknown_quantity_is_404() {
    let e = cell::cell("no_such_field", &cell::pairs_from_query("p=1&T=2")).unwrap_err();
    assert_eq!(e.status, 404);
    assert!(e.reason.contains("no_such_field"));
    assert!(!e.reason.contains('\n'));
    let e = cell::cell("units", &cell::pairs_from_query("p=1&T=2")).unwrap_err();
    assert_eq!(e.status, 404);
}

// ---- sample responses through the real RpcModule ----

fn rpc(request: &str) -> Value {
    let rt = tokio::runtime::Builder::new_current_thread()
        .enable_all()
        .build()
        .unwrap();
    let module = steamcell::server::rpc_module(Default::default());
    let (resp, _rx) = rt
        .block_on(module.raw_json_request(request, 1))
        .expect("valid request");
    serde_json::from_str(resp.get()).unwrap()
}

#[test]
fn sample_server_info() {
    let mut v = rpc(r#"{"jsonrpc":"2.0","id":1,"method":"server.info","params":{}}"#);
    let result = v["result"].as_object_mut().unwrap();
    // Volatile fields: present, of the right type, then removed for the snapshot.
    assert!(result.remove("uptime_s").unwrap().as_f64().unwrap() >= 0.0);
    assert!(result.remove("requests_served").unwrap().as_u64().unwrap() >= 1);
    assert!(result.remove("requests_failed").unwrap().as_u64().is_some());
    assert!(result.remove("connections").unwrap().as_u64().is_some());
    assert_eq!(result["version"], env!("CARGO_PKG_VERSION"));
    insta::assert_json_snapshot!("server_info", v);
}

#[test]
fn sample_water_state() {
    let v = rpc(
        r#"{"jsonrpc":"2.0","id":"s1","method":"water.state","params":{"given":{"p":"10 MPa","T":500},"units":"si"}}"#,
    );
    assert_eq!(v["id"], "s1");
    insta::assert_json_snapshot!("water_state", v);
}

#[test]
fn sample_errors() {
    let unknown_field = rpc(
        r#"{"jsonrpc":"2.0","id":2,"method":"water.state","params":{"given":{"p":1,"T":2},"colour":"red"}}"#,
    );
    assert_eq!(unknown_field["error"]["code"], -32602);
    insta::assert_json_snapshot!("error_unknown_field", unknown_field);

    let missing = rpc(r#"{"jsonrpc":"2.0","id":3,"method":"water.state","params":{}}"#);
    assert_eq!(missing["error"]["code"], -32602);
    assert!(missing["error"]["message"]
        .as_str()
        .unwrap()
        .contains("given"));
    insta::assert_json_snapshot!("error_missing_field", missing);

    let positional =
        rpc(r#"{"jsonrpc":"2.0","id":4,"method":"water.state","params":[{"p":1},"si"]}"#);
    assert_eq!(positional["error"]["code"], -32602);

    let no_method = rpc(r#"{"jsonrpc":"2.0","id":5,"method":"water.nothing"}"#);
    assert_eq!(no_method["error"]["code"], -32601);
    insta::assert_json_snapshot!("error_method_not_found", no_method);
}

/// Sample responses of the other property methods and of the component methods, pinned so a
/// change in any number or field is seen in review. The turbine case is the trade fact of
/// `tests/it/plant_components.rs` (10 MPa, 700 degC to 0.4 MPa at an efficiency of 0.7).
#[test]
fn sample_method_responses() {
    let cases = [
        (
            "wet_state",
            r#"{"jsonrpc":"2.0","id":1,"method":"water.state","params":{"given":{"p":"0.12 bar","x":0.91}}}"#,
        ),
        (
            "saturation",
            r#"{"jsonrpc":"2.0","id":1,"method":"water.saturation","params":{"T":"100 degC"}}"#,
        ),
        (
            "batch",
            r#"{"jsonrpc":"2.0","id":1,"method":"water.batch","params":{"given":{"p":[1, 10, -1],"T":[200, 300, 20]},"want":["h","s","phase"]}}"#,
        ),
        (
            "turbine",
            r#"{"jsonrpc":"2.0","id":1,"method":"turbine.expand","params":{"inlet":{"p":"10 MPa","T":"700 degC","flow":10},"outlet_p":"0.4 MPa","efficiency":0.7}}"#,
        ),
        (
            "us_units",
            r#"{"jsonrpc":"2.0","id":1,"method":"water.state","params":{"given":{"p":"600 psig","T":"750 degF"},"units":"us"}}"#,
        ),
    ];
    for (name, req) in cases {
        let v = rpc(req);
        assert!(v.get("result").is_some(), "{name}: {v}");
        insta::assert_json_snapshot!(name, v);
    }
}
