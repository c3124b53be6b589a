//! The API layer: every wire type and the method registry. With `src/server` (the transports)
//! it is the only part of steamcell that reads or writes JSON.
//!
//! It owns the wire error type [`ApiError`] (with the stable code table [`ERROR_CODES`] and the
//! one mapping to an HTTP status, [`ApiError::http_status`]), the method registry
//! ([`MethodSpec`], [`registry`]) that every transport (HTTP, WebSocket, stdio, the GET routes,
//! the command line) dispatches through, the limits and their refusals ([`limits`]) and the
//! state of one server ([`ServerCtx`]: limits, counters, sites, audit file) that the methods
//! needing it receive. Units on the wire are whatever the caller asked for; conversion happens
//! in the method bodies.
//!
//! Invariant: every method is described once, here, by a [`MethodSpec`] (name, docs, schemas,
//! body, and whether it is quick); transports never parse parameters themselves, so validation
//! and error codes are the same on every transport.
//!
//! Adding a method: write `fn my_method(p: MyParams) -> crate::Result<MyResult>` where both types
//! derive `Deserialize`/`Serialize` and `JsonSchema` (params with `#[serde(deny_unknown_fields)]`,
//! every field with a `///` doc comment), then push
//! `MethodSpec::new::<MyParams, MyResult>("group.name", "summary", "description", my_method)`
//! into the `methods()` list of its module (`water::methods()` or `server_methods::methods()`).
//! A body that reads the server's limits, counters or sites takes `(&ServerCtx, MyParams)` and
//! is described with [`MethodSpec::with_ctx`]; append `.quick()` only when one call is bounded
//! to a handful of property evaluations.

pub mod balance;
pub mod cell;
pub mod clock;
pub mod columns;
pub mod distribution;
pub mod limits;
pub mod metrics;
pub mod openrpc;
pub mod plant;
pub mod record;
pub mod rows;
pub mod selftest;
pub mod server_ctx;
pub mod server_methods;
pub mod site;
pub mod strict;
pub mod tokens;
pub mod uncertainty;
pub mod validation;
pub mod vocab;
pub mod water;

pub use selftest::validation_digest;
pub use server_ctx::ServerCtx;

use crate::error::{Bound, Error};
use schemars::gen::SchemaGenerator;
use schemars::schema::Schema;
use schemars::JsonSchema;
use serde::de::DeserializeOwned;
use serde::Serialize;
use serde_json::{json, Value};
use std::fmt;
use std::sync::OnceLock;

/// Stable error codes (outside the JSON-RPC reserved range -32768..-32000 for our own kinds).
pub mod codes {
    /// A quantity lies outside the range of validity of a formulation.
    pub const OUT_OF_RANGE: i64 = 1001;
    /// A number is NaN or infinite.
    pub const NOT_FINITE: i64 = 1002;
    /// The input pair admits more than one state, or none.
    pub const NO_UNIQUE_STATE: i64 = 1003;
    /// A unit text is not recognised.
    pub const UNKNOWN_UNIT: i64 = 1004;
    /// A unit of the wrong dimension for the quantity.
    pub const WRONG_DIMENSION: i64 = 1005;
    /// A value or combination of inputs is not acceptable.
    pub const INVALID_INPUT: i64 = 1006;
    /// An iterative solution did not converge.
    pub const NOT_CONVERGED: i64 = 1007;
    /// A request exceeds a configured limit.
    pub const LIMIT_EXCEEDED: i64 = 1008;
    /// Valid inputs that violate a physical law for the requested operation.
    pub const INFEASIBLE: i64 = 1009;
    /// The caller's token does not permit the call (method not allowed, revoked, expired).
    pub const FORBIDDEN: i64 = 1010;
    /// JSON-RPC 2.0: the text is not valid JSON.
    pub const PARSE_ERROR: i64 = -32700;
    /// JSON-RPC 2.0: the JSON is not a valid request object.
    pub const INVALID_REQUEST: i64 = -32600;
    /// JSON-RPC 2.0: no such method.
    pub const METHOD_NOT_FOUND: i64 = -32601;
    /// JSON-RPC 2.0: the params do not decode (missing, extra or ill-typed field).
    pub const INVALID_PARAMS: i64 = -32602;
    /// JSON-RPC 2.0: a fault inside the server.
    pub const INTERNAL_ERROR: i64 = -32603;
}

/// Every error code the API can return: (code, kind, description). Documented in the OpenRPC
/// document (`components.errors`) and in DEVELOPERS.md.
pub const ERROR_CODES: &[(i64, &str, &str)] = &[
    (
        codes::OUT_OF_RANGE,
        "out_of_range",
        "A quantity lies outside the range of validity of the formulation. data: quantity, value, limit, unit, bound (\"below\" or \"above\"), formulation.",
    ),
    (
        codes::NOT_FINITE,
        "not_finite",
        "A number is NaN or infinite. data: quantity.",
    ),
    (
        codes::NO_UNIQUE_STATE,
        "no_unique_state",
        "The given pair of quantities admits more than one state, or none. data: message.",
    ),
    (
        codes::UNKNOWN_UNIT,
        "unknown_unit",
        "A unit text is not recognised. data: unit (the text given), accepted (list of accepted spellings).",
    ),
    (
        codes::WRONG_DIMENSION,
        "wrong_dimension",
        "A unit has the wrong dimension for the quantity. data: quantity, unit, expected (dimension name).",
    ),
    (
        codes::INVALID_INPUT,
        "invalid_input",
        "A value or combination of inputs is not acceptable (missing, extra, ill-formed). data: message; a site network refused by its degree-of-freedom count (balance.solve) also carries diagnosis: {under: [finding], over: [finding], units: {name: {kind, given, under, over}}, streams: {name: {flow, p, state}}}, where a finding is {code, message, units, streams, quantity, value, value_unit} (plus missing, undetermined, free and hints for code flows_not_fixed; equations and hints for equations_clash; hints for negative_flows: what the reversed streams mean at a header, let-down valve, deaerator, desuperheater or make-up).",
    ),
    (
        codes::NOT_CONVERGED,
        "not_converged",
        "An iterative solution did not converge inside its limits. data: what, iterations.",
    ),
    (
        codes::LIMIT_EXCEEDED,
        "limit_exceeded",
        "A request exceeds a configured limit (rows, sizes). data: what, limit, value.",
    ),
    (
        codes::INFEASIBLE,
        "infeasible",
        "The inputs are valid but violate a physical law for the requested operation. data: message.",
    ),
    (
        codes::FORBIDDEN,
        "forbidden",
        "The caller's token does not permit this call: the method is not in its allow-list, or the token was revoked or has expired since the connection was opened. data: token (its name), method, reason (\"method\", \"revoked\" or \"expired\").",
    ),
    (
        codes::PARSE_ERROR,
        "parse_error",
        "JSON-RPC 2.0 parse error: the request text is not valid JSON.",
    ),
    (
        codes::INVALID_REQUEST,
        "invalid_request",
        "JSON-RPC 2.0 invalid request: the JSON is not a request object (jsonrpc \"2.0\", method, id).",
    ),
    (
        codes::METHOD_NOT_FOUND,
        "method_not_found",
        "JSON-RPC 2.0: no method of that name.",
    ),
    (
        codes::INVALID_PARAMS,
        "invalid_params",
        "JSON-RPC 2.0 invalid params: params must be one object (by name); a field is missing, unknown or of the wrong type. data: path (dotted path of the offending field, \".\" for the params object itself).",
    ),
    (
        codes::INTERNAL_ERROR,
        "internal_error",
        "JSON-RPC 2.0 internal error: a fault inside the server (please report it).",
    ),
];

/// Looks up the kind name of an error code in [`ERROR_CODES`].
pub fn error_kind(code: i64) -> Option<&'static str> {
    ERROR_CODES
        .iter()
        .find(|(c, _, _)| *c == code)
        .map(|(_, k, _)| *k)
}

/// An error as sent on the wire: a JSON-RPC 2.0 error object.
#[derive(Debug, Clone, PartialEq)]
pub struct ApiError {
    /// Stable code, see [`ERROR_CODES`].
    pub code: i64,
    /// One-line human-readable message.
    pub message: String,
    /// An object with `kind` (snake-case name of the code) and the fields of the error.
    pub data: Value,
}

impl ApiError {
    /// An invalid-params error (-32602) for the field at dotted `path` ("." for the whole object).
    pub fn invalid_params(path: &str, message: impl Into<String>) -> ApiError {
        ApiError {
            code: codes::INVALID_PARAMS,
            message: message.into(),
            data: json!({ "kind": "invalid_params", "path": path }),
        }
    }

    /// A method-not-found error (-32601).
    pub fn method_not_found(name: &str) -> ApiError {
        ApiError {
            code: codes::METHOD_NOT_FOUND,
            message: format!("unknown method '{name}'"),
            data: json!({ "kind": "method_not_found", "method": name }),
        }
    }

    /// An internal error (-32603).
    pub fn internal(message: impl Into<String>) -> ApiError {
        let message = message.into();
        ApiError {
            code: codes::INTERNAL_ERROR,
            data: json!({ "kind": "internal_error", "message": message }),
            message,
        }
    }

    /// The HTTP status of this error where it is answered outside a JSON-RPC response (the
    /// GET routes, `/columns`, and the refusal of a whole HTTP request): 400 for bad input,
    /// 422 for a state or operation that has no answer, 404 for an unknown method, 413 for a
    /// request beyond a size limit (body, batch, nesting, rows), 408 for a body not received in
    /// time, 503 for a busy server or an answer not ready in time, 403 for a call the caller's
    /// token does not permit, 500 otherwise. The one
    /// mapping from an error to a status.
    pub fn http_status(&self) -> u16 {
        match self.code {
            codes::LIMIT_EXCEEDED => match self.data.get("what").and_then(Value::as_str) {
                Some(limits::what::CALLS_IN_FLIGHT | limits::what::ANSWER_TIME) => 503,
                Some(limits::what::BODY_TIME) => 408,
                _ => 413,
            },
            codes::INVALID_PARAMS
            | codes::INVALID_REQUEST
            | codes::PARSE_ERROR
            | codes::NOT_FINITE
            | codes::UNKNOWN_UNIT
            | codes::WRONG_DIMENSION
            | codes::INVALID_INPUT => 400,
            codes::OUT_OF_RANGE
            | codes::NO_UNIQUE_STATE
            | codes::NOT_CONVERGED
            | codes::INFEASIBLE => 422,
            codes::METHOD_NOT_FOUND => 404,
            codes::FORBIDDEN => 403,
            _ => 500,
        }
    }

    /// The `kind` name of this error (from `data.kind`, else from the code table).
    pub fn kind(&self) -> &str {
        self.data
            .get("kind")
            .and_then(Value::as_str)
            .or_else(|| error_kind(self.code))
            .unwrap_or("unknown")
    }
}

impl fmt::Display for ApiError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "error {}: {}", self.code, self.message)
    }
}

impl std::error::Error for ApiError {}

fn bound_name(b: Bound) -> &'static str {
    match b {
        Bound::Below => "below",
        Bound::Above => "above",
    }
}

impl From<Error> for ApiError {
    fn from(e: Error) -> ApiError {
        let message = e.to_string();
        let (code, data) = match e {
            Error::OutOfRange {
                quantity,
                value,
                limit,
                unit,
                bound,
                formulation,
            } => (
                codes::OUT_OF_RANGE,
                json!({
                    "kind": "out_of_range",
                    "quantity": quantity,
                    "value": value,
                    "limit": limit,
                    "unit": unit,
                    "bound": bound_name(bound),
                    "formulation": formulation,
                }),
            ),
            Error::NotFinite { quantity } => (
                codes::NOT_FINITE,
                json!({ "kind": "not_finite", "quantity": quantity }),
            ),
            Error::NoUniqueState { message } => (
                codes::NO_UNIQUE_STATE,
                json!({ "kind": "no_unique_state", "message": message }),
            ),
            Error::UnknownUnit { text, accepted } => (
                codes::UNKNOWN_UNIT,
                json!({ "kind": "unknown_unit", "unit": text, "accepted": accepted }),
            ),
            Error::WrongDimension {
                quantity,
                unit,
                expected,
            } => (
                codes::WRONG_DIMENSION,
                json!({
                    "kind": "wrong_dimension",
                    "quantity": quantity,
                    "unit": unit,
                    "expected": expected,
                }),
            ),
            Error::InvalidInput { message } => (
                codes::INVALID_INPUT,
                json!({ "kind": "invalid_input", "message": message.to_string() }),
            ),
            Error::NotConverged { what, iterations } => (
                codes::NOT_CONVERGED,
                json!({ "kind": "not_converged", "what": what, "iterations": iterations }),
            ),
            Error::LimitExceeded { what, limit, value } => (
                codes::LIMIT_EXCEEDED,
                json!({ "kind": "limit_exceeded", "what": what, "limit": limit, "value": value }),
            ),
            Error::Infeasible { message } => (
                codes::INFEASIBLE,
                json!({ "kind": "infeasible", "message": message.to_string() }),
            ),
            Error::Specification { diagnosis } => (
                codes::INVALID_INPUT,
                json!({
                    "kind": "invalid_input",
                    "message": message,
                    "diagnosis": balance::diagnosis_json(&diagnosis),
                }),
            ),
        };
        ApiError {
            code,
            message,
            data,
        }
    }
}

/// Builds a schema for a type, given the shared generator of one document.
pub type SchemaFn = Box<dyn Fn(&mut SchemaGenerator) -> Schema + Send + Sync>;
/// Runs a method on its JSON params, in the context of one server.
pub type CallFn = Box<dyn Fn(&ServerCtx, Value) -> Result<Value, ApiError> + Send + Sync>;

/// One API method: its name, documentation, schemas, body, and how a server runs it.
pub struct MethodSpec {
    /// Wire name, `group.name`, e.g. `water.state`.
    pub name: &'static str,
    /// One-line summary.
    pub summary: &'static str,
    /// Longer description (may be several sentences).
    pub description: &'static str,
    /// The params object schema, inlined (an object schema with `properties`).
    pub params_schema: SchemaFn,
    /// The result schema (usually a `$ref` into the generator's definitions).
    pub result_schema: SchemaFn,
    /// True when one call is a handful of property evaluations (microseconds, bounded by the
    /// solvers' iteration limits): a server runs it inline on the connection's async worker.
    /// Every other method (columns, curves, cycles, site balances, the schema, the self-test)
    /// runs on the blocking thread pool, so a long computation never stalls a worker. Set with
    /// [`MethodSpec::quick`].
    pub quick: bool,
    /// The method body on decoded JSON: takes the server context and the params value, returns
    /// the result value.
    pub call: CallFn,
}

impl fmt::Debug for MethodSpec {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.debug_struct("MethodSpec")
            .field("name", &self.name)
            .field("summary", &self.summary)
            .field("quick", &self.quick)
            .finish_non_exhaustive()
    }
}

fn to_result<R: Serialize>(r: crate::Result<R>) -> Result<Value, ApiError> {
    let r = r.map_err(ApiError::from)?;
    serde_json::to_value(r)
        .map_err(|e| ApiError::internal(format!("result does not serialise: {e}")))
}

impl MethodSpec {
    /// Describes a method from its params type `P`, result type `R` and plain body `f`.
    pub fn new<P, R>(
        name: &'static str,
        summary: &'static str,
        description: &'static str,
        f: fn(P) -> crate::Result<R>,
    ) -> MethodSpec
    where
        P: DeserializeOwned + JsonSchema + 'static,
        R: Serialize + JsonSchema + 'static,
    {
        MethodSpec {
            name,
            summary,
            description,
            params_schema: Box::new(|g| P::json_schema(g)),
            result_schema: Box::new(|g| g.subschema_for::<R>()),
            quick: false,
            call: Box::new(move |_, params| {
                let p = decode_params(params)?;
                to_result(vocab::restating(|| vocab::stating(|| f(p))))
            }),
        }
    }

    /// Describes a method whose body reads the server context (its limits, counters or sites).
    pub fn with_ctx<P, R>(
        name: &'static str,
        summary: &'static str,
        description: &'static str,
        f: fn(&ServerCtx, P) -> crate::Result<R>,
    ) -> MethodSpec
    where
        P: DeserializeOwned + JsonSchema + 'static,
        R: Serialize + JsonSchema + 'static,
    {
        MethodSpec {
            name,
            summary,
            description,
            params_schema: Box::new(|g| P::json_schema(g)),
            result_schema: Box::new(|g| g.subschema_for::<R>()),
            quick: false,
            call: Box::new(move |ctx, params| {
                let p = decode_params(params)?;
                to_result(vocab::restating(|| vocab::stating(|| f(ctx, p))))
            }),
        }
    }

    /// Marks the method quick (see [`MethodSpec::quick`]): only for a method whose one call is
    /// bounded to a handful of property evaluations.
    pub fn quick(mut self) -> MethodSpec {
        self.quick = true;
        self
    }

    /// Runs the method on `params` in the context `ctx` (no limit, count or record: that is the
    /// server's call path).
    pub fn run(&self, ctx: &ServerCtx, params: Value) -> Result<Value, ApiError> {
        (self.call)(ctx, params)
    }
}

/// Decodes a params value into `P`. Absent params (`null`) and an empty array count as `{}`;
/// any other array is refused (params are by name), and so is an array anywhere an object with
/// named fields is expected ([`strict::Strict`]: serde would read it by position). Errors name
/// the offending field's path.
pub fn decode_params<P: DeserializeOwned>(params: Value) -> Result<P, ApiError> {
    let params = match params {
        Value::Null => Value::Object(Default::default()),
        Value::Array(a) if a.is_empty() => Value::Object(Default::default()),
        Value::Array(_) => {
            return Err(ApiError::invalid_params(
                ".",
                "invalid params: params must be one object with named fields, not an array",
            ))
        }
        Value::Object(o) => Value::Object(o),
        other => {
            return Err(ApiError::invalid_params(
                ".",
                format!(
                    "invalid params: params must be an object, got {}",
                    type_name(&other)
                ),
            ))
        }
    };
    serde_path_to_error::deserialize(strict::Strict(params)).map_err(|e| {
        let path = e.path().to_string();
        let inner = e.into_inner();
        let last = path.rsplit('.').next().unwrap_or("");
        let msg = if path == "." || inner.to_string().contains(&format!("`{last}`")) {
            format!("invalid params: {inner}")
        } else {
            format!("invalid params: field `{path}`: {inner}")
        };
        ApiError::invalid_params(&path, msg)
    })
}

fn type_name(v: &Value) -> &'static str {
    match v {
        Value::Null => "null",
        Value::Bool(_) => "a boolean",
        Value::Number(_) => "a number",
        Value::String(_) => "a string",
        Value::Array(_) => "an array",
        Value::Object(_) => "an object",
    }
}

static REGISTRY: OnceLock<Vec<MethodSpec>> = OnceLock::new();

/// All methods, in documentation order: the water methods, the component methods, then the
/// server methods; every method with numeric inputs but the bulk ones takes the `uncertainty`
/// param ([`uncertainty::takes_uncertainty`]).
pub fn registry() -> &'static [MethodSpec] {
    REGISTRY.get_or_init(|| {
        let mut all = water::methods();
        all.extend(plant::methods());
        all.extend(distribution::methods());
        all.extend(balance::methods());
        all.extend(server_methods::methods());
        all.extend(selftest::methods());
        all.into_iter()
            .map(|m| {
                if uncertainty::takes_uncertainty(m.name) {
                    m.with_uncertainty()
                } else {
                    m
                }
            })
            .collect()
    })
}

/// The method of that name, if any.
pub fn find(name: &str) -> Option<&'static MethodSpec> {
    registry().iter().find(|m| m.name == name)
}

/// Runs method `name` on `params` in the context `ctx`.
pub fn call_in(ctx: &ServerCtx, name: &str, params: Value) -> Result<Value, ApiError> {
    match find(name) {
        Some(m) => m.run(ctx, params),
        None => Err(ApiError::method_not_found(name)),
    }
}

/// Runs method `name` on `params` in-process, in a fresh context with the default limits (the
/// command line, library users, tests).
pub fn call(name: &str, params: Value) -> Result<Value, ApiError> {
    call_in(&ServerCtx::default(), name, params)
}

/// Runs method `name` on params given as JSON text with their `units` replaced by `units` (a
/// preset, a JSON object or `key=unit` items, see [`vocab::units_from_text`]), as the command
/// line's `--units` does; returns the result as pretty JSON text.
pub fn call_text_with_units(
    name: &str,
    params: &str,
    units: Option<&str>,
) -> Result<String, ApiError> {
    let params = params_with_units(params, units)?;
    call_text(name, &params)
}

/// The params text with `units` (the text of `--units`: a preset, key=unit items or a JSON
/// object) put in as the params' `units`, replacing theirs; the params unchanged without it.
pub fn params_with_units(params: &str, units: Option<&str>) -> Result<String, ApiError> {
    let Some(units) = units else {
        return Ok(params.to_string());
    };
    let mut value: Value = serde_json::from_str(params).map_err(|e| ApiError {
        code: codes::PARSE_ERROR,
        message: format!("params are not valid JSON: {e}"),
        data: json!({ "kind": "parse_error" }),
    })?;
    let units = vocab::units_from_text(units).map_err(ApiError::from)?;
    match &mut value {
        Value::Object(o) => {
            o.insert(
                "units".into(),
                serde_json::to_value(units).map_err(|e| ApiError::internal(e.to_string()))?,
            );
        }
        _ => {
            return Err(ApiError::invalid_params(
                ".",
                "--units needs params that are one object",
            ))
        }
    }
    Ok(value.to_string())
}

/// Runs method `name` on params given as JSON text; returns the result as pretty JSON text.
/// Text that is not JSON gives a parse error (-32700).
pub fn call_text(name: &str, params: &str) -> Result<String, ApiError> {
    let params: Value = serde_json::from_str(params).map_err(|e| ApiError {
        code: codes::PARSE_ERROR,
        message: format!("params are not valid JSON: {e}"),
        data: json!({ "kind": "parse_error" }),
    })?;
    let result = call(name, params)?;
    serde_json::to_string_pretty(&result).map_err(|e| ApiError::internal(e.to_string()))
}
