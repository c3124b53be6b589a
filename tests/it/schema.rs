//! The OpenRPC document: matches the committed `schema/steamcell.openrpc.json`, matches its
//! snapshot, and describes every method, param and result field.
//!
//! Source: OpenRPC Specification 1.2.6 (method object: name, params, result; content descriptor:
//! name, schema; `paramStructure` "by-name"). The "every field described" rule is ours.

use serde_json::Value;
use steamcell::api::openrpc;

const COMMITTED: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/schema/steamcell.openrpc.json");

#[test]
fn committed_schema_is_current() {
    let committed = std::fs::read_to_string(COMMITTED).unwrap_or_default();
    assert!(
        committed == openrpc::document_text(),
        "schema/steamcell.openrpc.json is out of date: run `cargo run -- schema` and commit it"
    );
}

#[test]
fn schema_snapshot() {
    insta::assert_json_snapshot!("openrpc", openrpc::document());
}

/// Collects the JSON pointers of properties that lack a description.
fn undescribed(v: &Value, at: &str, out: &mut Vec<String>) {
    match v {
        Value::Object(o) => {
            if let Some(Value::Object(props)) = o.get("properties") {
                for (name, schema) in props {
                    let ok = schema
                        .get("description")
                        .and_then(Value::as_str)
                        .is_some_and(|d| !d.trim().is_empty());
                    if !ok {
                        out.push(format!("{at}/properties/{name}"));
                    }
                }
            }
            for (k, child) in o {
                undescribed(child, &format!("{at}/{k}"), out);
            }
        }
        Value::Array(a) => {
            for (i, child) in a.iter().enumerate() {
                undescribed(child, &format!("{at}/{i}"), out);
            }
        }
        _ => {}
    }
}

#[test]
fn everything_is_described() {
    let doc = openrpc::document();
    assert_eq!(doc["openrpc"], "1.2.6");
    let methods = doc["methods"].as_array().unwrap();
    assert!(!methods.is_empty());
    let nonempty = |v: &Value| v.as_str().is_some_and(|s| !s.trim().is_empty());
    for m in methods {
        let name = m["name"].as_str().unwrap();
        assert!(nonempty(&m["summary"]), "{name}: no summary");
        assert!(nonempty(&m["description"]), "{name}: no description");
        assert_eq!(m["paramStructure"], "by-name", "{name}");
        for p in m["params"].as_array().unwrap() {
            assert!(
                nonempty(&p["description"]),
                "{name}: param {} undescribed",
                p["name"]
            );
            assert!(p["schema"].is_object(), "{name}: param {}", p["name"]);
        }
        assert!(
            nonempty(&m["result"]["description"]),
            "{name}: result undescribed"
        );
        assert!(
            !m["errors"].as_array().unwrap().is_empty(),
            "{name}: no errors"
        );
    }
    for (kind, s) in doc["components"]["schemas"].as_object().unwrap() {
        assert!(nonempty(&s["description"]), "schema {kind} undescribed");
    }
    let mut missing = Vec::new();
    undescribed(&doc, "", &mut missing);
    assert!(missing.is_empty(), "undescribed properties: {missing:#?}");
}

#[test]
fn every_error_code_is_documented_and_every_ref_resolves() {
    let doc = openrpc::document();
    let errors = doc["components"]["errors"].as_object().unwrap();
    for (code, kind, _) in steamcell::api::ERROR_CODES {
        assert_eq!(errors[*kind]["code"], *code);
    }
    let text = doc.to_string();
    for piece in text.split("\"$ref\":\"#/components/").skip(1) {
        let path = piece.split('"').next().unwrap();
        let (section, name) = path.split_once('/').unwrap();
        assert!(
            doc["components"][section].get(name).is_some(),
            "dangling $ref {path}"
        );
    }
}
