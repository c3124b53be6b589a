//! The one-number interface: `GET /cell/{quantity}?{given...}` and `steamcell get`, for
//! spreadsheet cells that want a bare number rather than JSON.
//!
//! The query pairs become the `given` object of `water.state` (values are URL-decoded by the
//! caller; a value that is a plain finite number goes as a JSON number, anything else such as
//! "10 MPa" as a string), except the reserved names in [`RESERVED`] which become top-level
//! params. The answer is the field `{quantity}` of the result, written as the shortest text that
//! parses back to the same f64 (Rust `{}` of f64). Units are those of the request: `units=` a
//! preset, a JSON object or `key=unit` items (`units=preset=bar,p=barg`), `units.KEY=UNIT` one
//! per-quantity unit (`units.p=barg`), and `unit=` the unit of the answered quantity itself
//! (`/cell/p?...&unit=barg`).
//!
//! Invariant: every failure is a [`CellError`] with an HTTP status and a one-line reason; a
//! failure of the method itself takes the status of [`ApiError::http_status`].

use super::{find, vocab, ApiError};
use crate::water::pairs::INPUTS;
use schemars::gen::SchemaSettings;
use serde_json::{Map, Value};
use std::sync::OnceLock;

/// The method the cell interface calls.
pub const STATE_METHOD: &str = "water.state";

/// Query names that are top-level params of `water.state` rather than given quantities.
pub const RESERVED: &[&str] = &[
    "units",
    "unit",
    "ambient",
    "formulation",
    "prefer",
    "backward_only",
    "metastable",
];

/// A failed cell request: an HTTP status and a one-line human-readable reason.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct CellError {
    /// For a method's error [`ApiError::http_status`]; else 400 for a malformed query, 404 for
    /// an unknown quantity, 422 for a quantity with no value for this state.
    pub status: u16,
    /// One line, no trailing newline.
    pub reason: String,
}

impl CellError {
    fn new(status: u16, reason: impl Into<String>) -> CellError {
        CellError {
            status,
            reason: reason.into(),
        }
    }
}

impl From<ApiError> for CellError {
    fn from(e: ApiError) -> CellError {
        CellError::new(e.http_status(), one_line(&e.message))
    }
}

fn one_line(s: &str) -> String {
    s.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// The top-level result fields of the state method (the quantities a cell may ask for).
pub fn known_quantities() -> &'static [String] {
    static KNOWN: OnceLock<Vec<String>> = OnceLock::new();
    KNOWN.get_or_init(|| {
        let Some(m) = find(STATE_METHOD) else {
            return Vec::new();
        };
        let mut gen = SchemaSettings::draft07().into_generator();
        let schema = serde_json::to_value((m.result_schema)(&mut gen)).unwrap_or(Value::Null);
        let defs: Map<String, Value> = gen
            .definitions()
            .iter()
            .map(|(k, v)| (k.clone(), serde_json::to_value(v).unwrap_or(Value::Null)))
            .collect();
        // The method's own result: its `$ref`, or the first part of an `allOf` (the
        // `uncertainty` fields a method may add are not quantities of a cell).
        let own = schema
            .get("allOf")
            .and_then(|a| a.get(0))
            .unwrap_or(&schema);
        let resolved = match own.get("$ref").and_then(Value::as_str) {
            Some(r) => defs
                .get(r.rsplit('/').next().unwrap_or(""))
                .cloned()
                .unwrap_or(Value::Null),
            None => own.clone(),
        };
        resolved
            .get("properties")
            .and_then(Value::as_object)
            .map(|p| p.keys().filter(|k| *k != "units").cloned().collect())
            .unwrap_or_default()
    })
}

/// A query value on the wire: a plain finite number as a JSON number, anything else ("10 MPa")
/// as a string.
pub fn wire_value(text: &str) -> Value {
    match text.trim().parse::<f64>() {
        Ok(x) if x.is_finite() => serde_json::Number::from_f64(x)
            .map(Value::Number)
            .unwrap_or_else(|| Value::String(text.to_string())),
        _ => Value::String(text.to_string()),
    }
}

/// The refusal of a query name that is neither a given quantity nor an option: every name
/// a cell accepts.
fn unknown_name(k: &str) -> String {
    let given: Vec<&str> = INPUTS.iter().map(|f| f.name()).collect();
    format!(
        "'{k}' is not a given quantity nor an option; given quantities (two of): {}; options: {}, units.KEY (the unit of one quantity, e.g. units.p=barg)",
        given.join(", "),
        RESERVED.join(", ")
    )
}

/// Builds the `water.state` params from decoded query pairs (a `unit` pair stays a top-level
/// name for [`request`] to place).
pub fn params_from_pairs(pairs: &[(String, String)]) -> Result<Value, CellError> {
    let mut given = Map::new();
    let mut top = Map::new();
    let mut unit_keys: Vec<(String, String)> = Vec::new();
    for (k, v) in pairs {
        if k.is_empty() {
            return Err(CellError::new(400, format!("empty name in '={v}'")));
        }
        if let Some(key) = k.strip_prefix("units.") {
            if unit_keys.iter().any(|(q, _)| q == key) {
                return Err(CellError::new(400, format!("'{k}' is given twice")));
            }
            unit_keys.push((key.to_string(), v.clone()));
            continue;
        }
        let (target, value) = if RESERVED.contains(&k.as_str()) {
            let value = if k == "ambient" {
                wire_value(v)
            } else if k == "units" {
                let units =
                    vocab::units_from_text(v).map_err(|e| CellError::new(400, e.to_string()))?;
                serde_json::to_value(units).unwrap_or(Value::Null)
            } else if k == "backward_only" || k == "metastable" {
                match v.as_str() {
                    "true" | "1" | "yes" => Value::Bool(true),
                    "false" | "0" | "no" => Value::Bool(false),
                    _ => {
                        return Err(CellError::new(
                            400,
                            format!("{k} = '{v}' is not a switch; accepted: true, false"),
                        ))
                    }
                }
            } else {
                Value::String(v.clone())
            };
            (&mut top, value)
        } else if INPUTS.iter().any(|f| f.name() == k) {
            (&mut given, wire_value(v))
        } else {
            return Err(CellError::new(400, unknown_name(k)));
        };
        if target.insert(k.clone(), value).is_some() {
            return Err(CellError::new(400, format!("'{k}' is given twice")));
        }
    }
    if !unit_keys.is_empty() {
        let mut units: Option<vocab::Units> = top
            .remove("units")
            .map(|u| serde_json::from_value(u).unwrap_or(vocab::Units::Preset(String::new())));
        for (key, unit) in unit_keys {
            units = Some(
                vocab::units_with(units, &key, &unit)
                    .map_err(|e| CellError::new(400, e.to_string()))?,
            );
        }
        top.insert(
            "units".into(),
            serde_json::to_value(units).unwrap_or(Value::Null),
        );
    }
    top.insert("given".to_string(), Value::Object(given));
    Ok(Value::Object(top))
}

/// The `water.state` params of one cell: checks that `quantity` is a result field (404
/// otherwise) and builds the params from the decoded `pairs` (400 for a malformed pair).
pub fn request(quantity: &str, pairs: &[(String, String)]) -> Result<Value, CellError> {
    let known = known_quantities();
    if find(STATE_METHOD).is_none() {
        return Err(CellError::new(
            404,
            format!("method {STATE_METHOD} is not available"),
        ));
    }
    if !known.iter().any(|k| k == quantity) {
        return Err(CellError::new(
            404,
            format!("unknown quantity '{quantity}'; known: {}", known.join(", ")),
        ));
    }
    let mut params = params_from_pairs(pairs)?;
    if let Some(Value::String(unit)) = params.as_object_mut().and_then(|o| o.remove("unit")) {
        // checked here, so that the message names `unit` (the name the caller wrote) rather
        // than the `units` key it becomes
        vocab::answer_unit(quantity, &unit).map_err(|e| {
            let reason = match e {
                crate::error::Error::UnknownUnit { .. } => format!("unit for {quantity}: {e}"),
                e => e.to_string(),
            };
            CellError::new(400, reason)
        })?;
        let units: Option<vocab::Units> = params
            .get("units")
            .cloned()
            .map(|u| serde_json::from_value(u).unwrap_or(vocab::Units::Preset(String::new())));
        if let Some(vocab::Units::Choice(m)) = &units {
            if m.contains_key(quantity) {
                return Err(CellError::new(
                    400,
                    format!(
                        "unit = '{unit}' and units.{quantity} = '{}' both give the unit of {quantity}; give one",
                        m[quantity]
                    ),
                ));
            }
        }
        let units = vocab::units_with(units, quantity, &unit)
            .map_err(|e| CellError::new(400, e.to_string()))?;
        params["units"] = serde_json::to_value(units).unwrap_or(Value::Null);
    }
    Ok(params)
}

/// The field `quantity` of a `water.state` result, as text (422 when it is not defined for
/// the state).
pub fn pick(result: &Value, quantity: &str) -> Result<String, CellError> {
    match result.get(quantity) {
        Some(Value::Number(n)) => match n.as_f64() {
            Some(x) => Ok(format!("{x}")),
            None => Ok(n.to_string()),
        },
        Some(Value::Null) | None => {
            let why = result["undefined"][quantity]
                .as_str()
                .unwrap_or("not defined for this state");
            Err(CellError::new(422, format!("{quantity}: {why}")))
        }
        Some(Value::String(s)) => Ok(one_line(s)),
        Some(Value::Bool(b)) => Ok(b.to_string()),
        Some(_) => Err(CellError::new(
            404,
            format!("{quantity} is not a single value; use the JSON-RPC method {STATE_METHOD}"),
        )),
    }
}

/// Answers one cell in-process (`steamcell get`): the field `quantity` of `water.state` for the
/// decoded `pairs`, as text. The server's route makes the same [`request`] and [`pick`] around
/// its call path.
pub fn cell(quantity: &str, pairs: &[(String, String)]) -> Result<String, CellError> {
    let params = request(quantity, pairs)?;
    let result = super::call(STATE_METHOD, params)?;
    pick(&result, quantity)
}

/// Splits command-line `key=value` words into pairs (the value may contain '=' and spaces).
pub fn pairs_from_args<S: AsRef<str>>(args: &[S]) -> Result<Vec<(String, String)>, CellError> {
    args.iter()
        .map(|a| {
            let a = a.as_ref();
            a.split_once('=')
                .map(|(k, v)| (k.trim().to_string(), v.trim().to_string()))
                .ok_or_else(|| CellError::new(400, format!("'{a}' is not of the form name=value")))
        })
        .collect()
}

/// Decodes a URL query string (`a=1&b=10%20MPa`, '+' as space) into pairs.
pub fn pairs_from_query(query: &str) -> Vec<(String, String)> {
    form_urlencoded::parse(query.as_bytes())
        .map(|(k, v)| (k.into_owned(), v.into_owned()))
        .collect()
}
