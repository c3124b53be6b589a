//! The OpenRPC 1.2.6 document of the server, built from the method registry.
//!
//! Each method is listed with `paramStructure: "by-name"`: its params are the fields of one
//! params object, each a content descriptor whose schema comes from the Rust params type (doc
//! comments become descriptions). Shared types go to `components.schemas`; every error code of
//! [`ERROR_CODES`](super::ERROR_CODES) goes to `components.errors`.
//!
//! Invariant: the document depends only on the build (no clock, no counters), so the committed
//! copy in `schema/steamcell.openrpc.json` can be compared byte for byte.

use super::{registry, ERROR_CODES};
use schemars::gen::SchemaSettings;
use serde_json::{json, Map, Value};
use std::sync::OnceLock;

/// Where shared schemas live inside the document.
pub const DEFINITIONS_PATH: &str = "#/components/schemas/";

static DOC: OnceLock<Value> = OnceLock::new();

/// The OpenRPC document (built once, then cloned).
pub fn document() -> Value {
    DOC.get_or_init(build).clone()
}

/// The document as pretty JSON text with a trailing newline (the committed file's form).
pub fn document_text() -> String {
    let mut s = serde_json::to_string_pretty(&document()).unwrap_or_else(|_| "{}".to_string());
    s.push('\n');
    s
}

fn schema_value(s: schemars::schema::Schema) -> Value {
    serde_json::to_value(s).unwrap_or(Value::Bool(true))
}

/// The description of a schema, following one `$ref` into `defs` if needed.
fn description_of(schema: &Value, defs: &Map<String, Value>) -> Option<String> {
    if let Some(d) = schema.get("description").and_then(Value::as_str) {
        return Some(d.to_string());
    }
    let r = schema.get("$ref").and_then(Value::as_str).or_else(|| {
        schema
            .get("allOf")
            .and_then(|a| a.get(0))
            .and_then(|s| s.get("$ref"))
            .and_then(Value::as_str)
    })?;
    let name = r.strip_prefix(DEFINITIONS_PATH)?;
    defs.get(name)?
        .get("description")
        .and_then(Value::as_str)
        .map(str::to_string)
}

/// The content descriptors of the fields of a params object schema.
fn param_descriptors(params: &Value, defs: &Map<String, Value>) -> Vec<Value> {
    let required: Vec<&str> = params
        .get("required")
        .and_then(Value::as_array)
        .map(|a| a.iter().filter_map(Value::as_str).collect())
        .unwrap_or_default();
    let Some(props) = params.get("properties").and_then(Value::as_object) else {
        return Vec::new();
    };
    props
        .iter()
        .map(|(name, schema)| {
            json!({
                "name": name,
                "description": description_of(schema, defs).unwrap_or_default(),
                "required": required.contains(&name.as_str()),
                "schema": schema,
            })
        })
        .collect()
}

fn error_ref(kind: &str) -> Value {
    json!({ "$ref": format!("#/components/errors/{kind}") })
}

fn build() -> Value {
    let settings = SchemaSettings::draft07().with(|s| {
        s.definitions_path = DEFINITIONS_PATH.to_string();
        s.meta_schema = None;
    });
    let mut gen = settings.into_generator();

    // Errors a method body can return; the transport-level ones are in components only.
    let method_errors: Vec<Value> = ERROR_CODES
        .iter()
        .filter(|(code, _, _)| *code > 0 || *code == super::codes::INVALID_PARAMS)
        .map(|(_, kind, _)| error_ref(kind))
        .collect();

    let mut raw = Vec::new();
    for m in registry() {
        let params = schema_value((m.params_schema)(&mut gen));
        let result = schema_value((m.result_schema)(&mut gen));
        raw.push((m, params, result));
    }
    let defs: Map<String, Value> = gen
        .definitions()
        .iter()
        .map(|(k, v)| {
            (
                k.clone(),
                serde_json::to_value(v).unwrap_or(Value::Bool(true)),
            )
        })
        .collect();

    let methods: Vec<Value> = raw
        .iter()
        .map(|(m, params, result)| {
            json!({
                "name": m.name,
                "summary": m.summary,
                "description": m.description,
                "paramStructure": "by-name",
                "params": param_descriptors(params, &defs),
                "result": {
                    "name": "result",
                    "description": description_of(result, &defs).unwrap_or_default(),
                    "schema": result,
                },
                "errors": method_errors,
            })
        })
        .collect();

    let errors: Map<String, Value> = ERROR_CODES
        .iter()
        .map(|(code, kind, description)| {
            (
                kind.to_string(),
                json!({ "code": code, "message": description, "data": { "kind": kind } }),
            )
        })
        .collect();

    json!({
        "openrpc": "1.2.6",
        "info": {
            "title": "steamcell",
            "version": env!("CARGO_PKG_VERSION"),
            "description": concat!(
                env!("CARGO_PKG_DESCRIPTION"),
                ". JSON-RPC 2.0 over HTTP POST and WebSocket on one port, and over stdio \
                 (one request or batch per line). Params are always one object (by name). \
                 Error codes 1001-1009 are steamcell's own; -32700..-32600 are JSON-RPC 2.0's."
            ),
            "license": { "name": env!("CARGO_PKG_LICENSE") },
        },
        "servers": [{
            "name": "local",
            "url": "http://127.0.0.1:8790",
            "summary": "Default address of `steamcell serve` (also ws://127.0.0.1:8790)",
        }],
        "methods": methods,
        "components": {
            "schemas": defs,
            "errors": errors,
        },
    })
}
