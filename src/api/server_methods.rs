//! The `server.*` methods: what this server is (`server.info`) and how to call it
//! (`server.schema`, the OpenRPC document).
//!
//! No units here. Invariant: `server.info` never fails and its non-volatile part (everything but
//! `uptime_s`, `requests_served`, `requests_failed` and `connections`) depends only on the build
//! and the `serve` flags.

use super::{openrpc, registry, MethodSpec, ServerCtx};
use schemars::JsonSchema;
use serde::{Deserialize, Serialize};

/// Formulations this build offers: (name, release text).
pub const FORMULATIONS: &[(&str, &str)] = &[
    (
        "IAPWS-IF97",
        "IAPWS R7-97(2012) with SR2-01, SR3-03, SR4-04, SR5-05; transport: IAPWS R12-08 and R15-11 (industrial use), surface tension IAPWS R1-76(2014), ice limits IAPWS R14-08(2011)",
    ),
    (
        "IAPWS-95",
        "IAPWS R6-95(2018); transport: IAPWS R12-08 and R15-11 (full correlations), surface tension IAPWS R1-76(2014), ice limits IAPWS R14-08(2011)",
    ),
];

/// No parameters; send `{}`, `[]` or omit params.
#[derive(Debug, Clone, Default, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct NoParams {}

/// A property formulation offered by this server.
#[derive(Debug, Clone, Serialize, JsonSchema)]
pub struct Formulation {
    /// Short name, e.g. "IAPWS-IF97".
    pub name: String,
    /// The release and supplementary releases implemented.
    pub release: String,
}

/// A unit preset.
#[derive(Debug, Clone, Serialize, JsonSchema)]
pub struct UnitPreset {
    /// Preset name, as accepted by the `units` param.
    pub name: String,
    /// What units it selects.
    pub description: String,
}

/// Limits this server enforces (the `steamcell serve` flags in force).
#[derive(Debug, Clone, Serialize, JsonSchema)]
pub struct Limits {
    /// Largest request body (HTTP body or stdio line), bytes.
    pub max_request_body_bytes: u32,
    /// Largest response body, bytes.
    pub max_response_body_bytes: u32,
    /// Most calls in one JSON-RPC batch array.
    pub max_batch_requests: u32,
    /// Most rows in one table-style method call.
    pub max_batch_rows: u32,
    /// Most simultaneous connections.
    pub max_connections: u32,
    /// Deepest nesting of `[` and `{` accepted in a request body.
    pub max_json_depth: u32,
    /// Largest WebSocket message, bytes.
    pub max_websocket_message_bytes: u32,
    /// Most method calls running at once (over all connections); beyond it a call answers
    /// limit_exceeded (1008).
    pub max_in_flight: u32,
    /// Time limit of one HTTP request (reading the body and computing), seconds.
    pub request_timeout_s: f64,
}

/// What this server is and how it is doing.
#[derive(Debug, Clone, Serialize, JsonSchema)]
pub struct ServerInfo {
    /// Program name, "steamcell".
    pub name: String,
    /// steamcell version (semantic versioning).
    pub version: String,
    /// Formulations offered.
    pub formulations: Vec<Formulation>,
    /// Unit presets accepted by the `units` param.
    pub unit_presets: Vec<UnitPreset>,
    /// Limits enforced.
    pub limits: Limits,
    /// Names of all methods.
    pub methods: Vec<String>,
    /// Digest of the built-in validation run; identifies the validated build.
    pub digest: String,
    /// Seconds since the server started.
    pub uptime_s: f64,
    /// Method calls served since start (all transports, this one included).
    pub requests_served: u64,
    /// Method calls that answered an error since start (all transports).
    pub requests_failed: u64,
    /// HTTP/WebSocket connections open now (this one included when served over HTTP).
    pub connections: u64,
}

/// An OpenRPC 1.2.6 document describing every method, its params, result and errors.
#[derive(Debug, Clone, Serialize)]
#[serde(transparent)]
pub struct OpenRpcDocument(pub serde_json::Value);

impl JsonSchema for OpenRpcDocument {
    fn schema_name() -> String {
        "OpenRpcDocument".to_string()
    }

    fn json_schema(_: &mut schemars::gen::SchemaGenerator) -> schemars::schema::Schema {
        use schemars::schema::{InstanceType, Metadata, ObjectValidation, SchemaObject};
        SchemaObject {
            metadata: Some(Box::new(Metadata {
                description: Some(
                    "An OpenRPC 1.2.6 document (see the OpenRPC specification) describing every \
                     method, its params, result and errors."
                        .to_string(),
                ),
                ..Default::default()
            })),
            instance_type: Some(InstanceType::Object.into()),
            object: Some(Box::new(ObjectValidation {
                required: ["openrpc", "info", "methods"]
                    .iter()
                    .map(|s| s.to_string())
                    .collect(),
                ..Default::default()
            })),
            ..Default::default()
        }
        .into()
    }
}

/// The formulations this build offers, with their releases.
pub fn formulations() -> Vec<Formulation> {
    FORMULATIONS
        .iter()
        .map(|(n, r)| Formulation {
            name: n.to_string(),
            release: r.to_string(),
        })
        .collect()
}

/// The `server.info` body.
pub fn info(ctx: &ServerCtx, _: NoParams) -> crate::Result<ServerInfo> {
    Ok(ServerInfo {
        name: "steamcell".to_string(),
        version: env!("CARGO_PKG_VERSION").to_string(),
        formulations: formulations(),
        unit_presets: crate::units::Preset::ALL
            .iter()
            .map(|p| UnitPreset {
                name: p.name().to_string(),
                description: p.description().to_string(),
            })
            .collect(),
        limits: {
            let l = ctx.limits;
            Limits {
                max_request_body_bytes: l.max_request_body_bytes,
                max_response_body_bytes: l.max_response_body_bytes,
                max_batch_requests: l.max_batch_requests,
                max_batch_rows: l.max_batch_rows,
                max_connections: l.max_connections,
                max_json_depth: l.max_json_depth,
                max_websocket_message_bytes: l.max_ws_message_bytes,
                max_in_flight: l.max_in_flight,
                request_timeout_s: l.request_timeout_ms as f64 / 1000.0,
            }
        },
        methods: registry().iter().map(|m| m.name.to_string()).collect(),
        digest: super::validation_digest(),
        uptime_s: ctx.uptime_s(),
        requests_served: ctx.requests_served(),
        requests_failed: ctx.requests_failed(),
        connections: ctx.connections(),
    })
}

/// The `server.schema` body.
pub fn schema(_: NoParams) -> crate::Result<OpenRpcDocument> {
    Ok(OpenRpcDocument(openrpc::document()))
}

/// The server methods.
pub fn methods() -> Vec<MethodSpec> {
    vec![
        MethodSpec::with_ctx::<NoParams, ServerInfo>(
            "server.info",
            "What this server is: version, formulations, unit presets, limits, uptime",
            "Returns the program version, the formulations and unit presets offered, the limits \
             enforced, the method names, the validation digest, the uptime in seconds, the \
             number of method calls served and failed, and the open connections. Never fails.",
            info,
        )
        .quick(),
        MethodSpec::new::<NoParams, OpenRpcDocument>(
            "server.schema",
            "The OpenRPC document describing every method",
            "Returns the OpenRPC 1.2.6 document of this server (the same as GET /schema and \
             `steamcell schema`): every method with its by-name params, result and error codes.",
            schema,
        ),
    ]
}
