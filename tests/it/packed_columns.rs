//! Packed binary columns for `water.batch` and `water.curve`: the packed and JSON paths give bit-identical numbers,
//! the parallel path equals the sequential one bit for bit, malformed columns get clear errors,
//! and a 1,000,000-row packed round trip works.

use base64::Engine;
use serde_json::{json, Value};
use steamcell::api::call;
use steamcell::water::state::{self, Given, Options};

fn pack(v: &[f64]) -> Value {
    let mut bytes = Vec::new();
    for x in v {
        bytes.extend_from_slice(&x.to_le_bytes());
    }
    json!({ "f64le": base64::engine::general_purpose::STANDARD.encode(bytes) })
}

fn unpack(v: &Value) -> Vec<f64> {
    let bytes = base64::engine::general_purpose::STANDARD
        .decode(v["f64le"].as_str().unwrap())
        .unwrap();
    bytes
        .chunks_exact(8)
        .map(|c| f64::from_le_bytes(c.try_into().unwrap()))
        .collect()
}

/// (p MPa, T degC) rows over regions 1, 2 and 3, with a few bad rows.
fn rows(n: usize) -> (Vec<f64>, Vec<f64>) {
    let mut p = Vec::with_capacity(n);
    let mut t = Vec::with_capacity(n);
    for i in 0..n {
        let f = (i as f64 * 0.618_033_988_749_895).fract();
        let g = (i as f64 * 0.414_213_562_373_095).fract();
        p.push(0.01 + 39.0 * f);
        t.push(5.0 + 690.0 * g);
    }
    if n > 10 {
        t[3] = -40.0; // below the range
        p[7] = f64::NAN; // not a number
    }
    (p, t)
}

#[test]
fn packed_and_json_paths_are_bit_identical() {
    let (p, t) = rows(5000);
    let json_res = call(
        "water.batch",
        json!({"given": {"p": p.iter().map(|x| if x.is_nan() { json!("NaN") } else { json!(x) }).collect::<Vec<_>>(), "T": t}, "want": ["h", "s", "v"]}),
    )
    .unwrap();
    let packed_res = call(
        "water.batch",
        json!({"given": {"p": pack(&p), "T": pack(&t)}, "want": ["h", "s", "v"], "encoding": "f64le"}),
    )
    .unwrap();
    assert_eq!(packed_res["encoding"], "f64le");
    // Sparse errors with f64le: the failed rows only, the same entries as `failed_rows`.
    assert_eq!(packed_res["errors"], packed_res["failed_rows"]);
    assert_eq!(packed_res["errors"].as_array().unwrap().len(), 2);
    assert_eq!(json_res["errors"].as_array().unwrap().len(), 5000);
    let failed: Vec<u64> = packed_res["failed_rows"]
        .as_array()
        .unwrap()
        .iter()
        .map(|e| e["row"].as_u64().unwrap())
        .collect();
    assert_eq!(failed, vec![3, 7]);
    let msg = packed_res["failed_rows"][1]["message"].as_str().unwrap();
    assert!(msg.contains("row 7") && msg.contains("p"), "{msg}");
    for q in ["h", "s", "v"] {
        let a: Vec<Option<f64>> = json_res["columns"][q]
            .as_array()
            .unwrap()
            .iter()
            .map(|x| x.as_f64())
            .collect();
        let b = unpack(&packed_res["columns"][q]);
        assert_eq!(a.len(), b.len());
        for (i, (x, y)) in a.iter().zip(&b).enumerate() {
            match x {
                Some(x) => assert_eq!(x.to_bits(), y.to_bits(), "{q} row {i}"),
                None => assert!(y.is_nan(), "{q} row {i}"),
            }
        }
    }
}

#[test]
fn parallel_equals_sequential_bit_for_bit() {
    let (p, t) = rows(20_000);
    let res = call(
        "water.batch",
        json!({"given": {"p": pack(&p), "T": pack(&t)}, "want": ["h"], "encoding": "f64le", "units": "engineering"}),
    )
    .unwrap();
    let h = unpack(&res["columns"]["h"]);
    for i in (0..p.len()).step_by(7) {
        let seq = state::solve(Given::PT(p[i], t[i] + 273.15), &Options::STANDARD);
        match seq {
            Ok(st) => assert_eq!(st.props.h.to_bits(), h[i].to_bits(), "row {i}"),
            Err(_) => assert!(h[i].is_nan(), "row {i}"),
        }
    }
}

#[test]
fn malformed_columns_get_clear_errors() {
    let bad = [
        (
            json!({"given": {"p": {"f64le": "not base64!"}, "T": [1.0]}}),
            "not valid base64",
        ),
        (
            json!({"given": {"p": {"f64le": "AAAA"}, "T": [1.0]}}),
            "not a multiple of 8",
        ),
        (
            json!({"given": {"p": pack(&[1.0, 2.0]), "T": pack(&[100.0])}}),
            "differ in length",
        ),
        (
            json!({"given": {"p": pack(&[1.0]), "T": pack(&[100.0])}, "encoding": "arrow"}),
            "encoding",
        ),
    ];
    for (params, needle) in bad {
        let e = call("water.batch", params.clone()).unwrap_err();
        assert!(e.message.contains(needle), "{params}: {}", e.message);
    }
    // NaN inputs fail their row only.
    let r = call(
        "water.batch",
        json!({"given": {"p": pack(&[1.0, f64::NAN]), "T": pack(&[100.0, 100.0])}, "want": ["h"]}),
    )
    .unwrap();
    assert_eq!(r["failed"], 1);
    assert_eq!(r["errors"][1]["code"], 1002);
    let msg = r["errors"][1]["message"].as_str().unwrap();
    assert!(
        msg.contains("row 1") && msg.contains('p') && msg.contains("NaN"),
        "the message names the row, the quantity and the value: {msg}"
    );
    assert!(r["columns"]["h"][0].is_number());
}

#[test]
fn a_million_rows_round_trip() {
    let n = 1_000_000;
    let p: Vec<f64> = (0..n).map(|i| 0.1 + (i % 1000) as f64 * 0.01).collect();
    let t: Vec<f64> = (0..n).map(|i| 200.0 + (i % 997) as f64 * 0.3).collect();
    let res = call(
        "water.batch",
        json!({"given": {"p": pack(&p), "T": pack(&t)}, "want": ["h", "s", "v"], "encoding": "f64le"}),
    )
    .unwrap();
    assert_eq!(res["rows"], n);
    assert_eq!(res["failed"], 0);
    let h = unpack(&res["columns"]["h"]);
    assert_eq!(h.len(), n);
    let st = state::at_pt(p[12345], t[12345] + 273.15, &Options::STANDARD).unwrap();
    assert_eq!(st.props.h.to_bits(), h[12345].to_bits());
    // One row more than the limit is refused with the limit's code.
    let e = call(
        "water.batch",
        json!({"given": {"p": pack(&vec![1.0; n + 1]), "T": pack(&vec![100.0; n + 1])}}),
    )
    .unwrap_err();
    assert_eq!(e.code, 1008, "{}", e.message);
}

/// The bulk route's codec (`POST /columns`) gives exactly the numbers of `water.batch`.
#[test]
fn columns_route_codec_matches_batch() {
    use steamcell::api::columns::{columns, frame, split_frame};
    let (p, t) = rows(3000);
    let header = json!({"given": ["p", "T"], "rows": p.len(), "want": ["h", "s", "v"]});
    let body = frame(&header, &[p.clone(), t.clone()]);
    let ctx = steamcell::api::ServerCtx::default();
    let answer = columns(&ctx, &body).unwrap();
    let (head, data) = split_frame(&answer).unwrap();
    assert_eq!(head["rows"], 3000);
    assert_eq!(head["failed"], 2);
    assert_eq!(head["units"]["h"], "kJ/kg");
    let batch = call(
        "water.batch",
        json!({"given": {"p": pack(&p), "T": pack(&t)}, "want": ["h", "s", "v"], "encoding": "f64le"}),
    )
    .unwrap();
    for (k, q) in ["h", "s", "v"].iter().enumerate() {
        let a = unpack(&batch["columns"][q]);
        let b: Vec<f64> = data[k * 3000 * 8..(k + 1) * 3000 * 8]
            .chunks_exact(8)
            .map(|c| f64::from_le_bytes(c.try_into().unwrap()))
            .collect();
        assert!(
            a.iter().zip(&b).all(|(x, y)| x.to_bits() == y.to_bits()),
            "{q}"
        );
    }
    // Framing errors are clear.
    let e = columns(&ctx, &body[..body.len() - 3]).unwrap_err();
    assert!(e.message.contains("data bytes"), "{}", e.message);
    let e = columns(&ctx, &[1, 0]).unwrap_err();
    assert!(e.message.contains("4-byte header"), "{}", e.message);
}

/// Regression: JSON numbers must parse to the nearest double (serde_json's `float_roundtrip`);
/// without it "13.700000000000001" came in one ulp off and the JSON and packed paths differed
/// in the last bit.
#[test]
fn json_numbers_parse_exactly() {
    let text = r#"{"given": {"p": [13.700000000000001, 15.600000000000001], "T": [218.0, 50.0]}, "want": ["h"], "encoding": "f64le"}"#;
    let params: Value = serde_json::from_str(text).unwrap();
    let p = [13.700000000000001f64, 15.600000000000001];
    assert_eq!(
        params["given"]["p"][0].as_f64().unwrap().to_bits(),
        p[0].to_bits()
    );
    let a = unpack(&call("water.batch", params).unwrap()["columns"]["h"]);
    let b = unpack(
        &call(
            "water.batch",
            json!({"given": {"p": pack(&p), "T": pack(&[218.0, 50.0])}, "want": ["h"], "encoding": "f64le"}),
        )
        .unwrap()["columns"]["h"],
    );
    assert_eq!(a[0].to_bits(), b[0].to_bits());
    assert_eq!(a[1].to_bits(), b[1].to_bits());
}

/// `water.curve` with encoding "f64le": every series' columns come packed and unpack to the
/// JSON numbers bit for bit; an unknown encoding is refused by name.
#[test]
fn curve_series_pack_bit_for_bit() {
    for kind in [json!({"kind": "dome"}), json!({"kind": "isobar", "p": 10})] {
        let mut packed_params = kind.clone();
        packed_params["encoding"] = json!("f64le");
        packed_params["points"] = json!(200);
        let mut json_params = kind.clone();
        json_params["points"] = json!(200);
        let a = call("water.curve", json_params).unwrap();
        let b = call("water.curve", packed_params).unwrap();
        let (sa, sb) = (
            a["series"].as_array().unwrap(),
            b["series"].as_array().unwrap(),
        );
        assert_eq!(sa.len(), sb.len());
        for (x, y) in sa.iter().zip(sb) {
            assert_eq!(x["name"], y["name"]);
            for q in ["T", "s", "h", "p", "v"] {
                assert!(y[q]["f64le"].is_string(), "{q} packed");
                let want: Vec<u64> = x[q]
                    .as_array()
                    .unwrap()
                    .iter()
                    .map(|v| v.as_f64().unwrap().to_bits())
                    .collect();
                let got: Vec<u64> = unpack(&y[q]).iter().map(|v| v.to_bits()).collect();
                assert!(got.len() >= 200);
                assert_eq!(got, want, "{} {q}", x["name"]);
            }
        }
    }
    let e = call("water.curve", json!({"kind": "dome", "encoding": "f32"})).unwrap_err();
    assert!(
        e.message.contains("encoding") && e.message.contains("f64le"),
        "{}",
        e.message
    );
}
