//! Uncertainty of any result: the optional `uncertainty` param of every method with numeric
//! inputs (the component methods, `cycle.rankine`, `balance.solve`, `orifice.flow`,
//! `pipe.flow`, `water.state`, `water.saturation`; not the bulk and sweep methods, see
//! [`takes_uncertainty`]).
//!
//! The param maps input paths, dotted as in the params (`inlet.T`, `outlet_p`, `efficiency`,
//! `units.BPT.efficiency` for `balance.solve`, `inlets.0.flow`), to standard uncertainties
//! ("1 K", "0.05 bar", "0.5 %" of the value as given, or a bare number for a dimensionless
//! input), with options `k`, `method`, `samples`, `seed`, `correlations` and `outputs`. The
//! method runs unchanged at the nominal params and at perturbed params: each input is written
//! back in the caller's own unit (a number stays a number in the request's units, a text keeps
//! its unit), so every unit the caller used works and the method itself converts it.
//!
//! GUM (JCGM 100:2008, 5.1.2 and 5.2.2, first order): for every numeric (floating-point) field
//! of the result (not the balance residuals, which check the solution), sensitivities by
//! central differences at two steps per input, its own standard uncertainty u and u/2 (the
//! sensitivity reported is the smaller step's; the two must agree to 1 % of the field's
//! combined u, else a warning says the result is not linear over the input's range), combined
//! with the correlations: u_y^2 = sum_ij c_i u_i r_ij c_j u_j; each input's share of the
//! variance is c_i u_i sum_j r_ij c_j u_j / u_y^2 (the shares sum to 1). A step that the method
//! refuses (a limit within u of the input) is quartered twice, then taken one
//! sided, with a warning. Monte Carlo (JCGM 101:2008, on request): the inputs drawn from a
//! normal distribution (correlated through the Cholesky factor of the correlation matrix) by
//! our own generator (xoshiro256** seeded by SplitMix64, normal deviates by Box-Muller, one
//! sequential stream, so a seed gives the same draws on every machine), the method evaluated
//! for each draw (in parallel; results in draw order), and for every field the mean, the
//! standard deviation and the probabilistically symmetric coverage interval for the coverage
//! probability of k (p = erf(k / sqrt 2)).
//!
//! Cost: one nominal evaluation, per input one probe for its dimension (it stops at the unit
//! check), one check of a bare number's unit, four evaluations for the two step sets; Monte
//! Carlo adds `samples` evaluations. A component method takes tens of microseconds, so a GUM
//! answer takes about a millisecond; `cycle.rankine` and `balance.solve` take milliseconds per
//! evaluation, so a GUM answer with ten inputs takes 50 evaluations and a Monte Carlo of 10,000
//! samples about as many seconds as one call takes milliseconds. Methods without the param pay
//! one lookup in the params object.
//!
//! Invariant: the method's own body computes every number (the wrapper only writes inputs and
//! reads result fields); a request without `uncertainty` reaches the method unchanged and its
//! answer is returned unchanged.

use super::{codes, vocab, ApiError, CallFn, MethodSpec, ServerCtx};
use crate::error::Error;
use crate::units::{self, Dim, Preset, Unit, UnitSystem};
use rayon::prelude::*;
use schemars::gen::SchemaGenerator;
use schemars::schema::{InstanceType, Metadata, Schema, SchemaObject, SubschemaValidation};
use schemars::JsonSchema;
use serde::{Deserialize, Serialize};
use serde_json::{json, Map, Value};
use std::collections::BTreeMap;

/// Methods with numeric inputs that take no `uncertainty` param: the bulk methods (columns,
/// chart points) and the sweep (already a set of evaluations). The `server.*` methods have no
/// numeric inputs.
pub const WITHOUT_UNCERTAINTY: &[&str] = &["water.batch", "water.curve", "balance.sweep"];

/// Whether the method `name` takes the `uncertainty` param.
pub fn takes_uncertainty(name: &str) -> bool {
    !name.starts_with("server.") && !WITHOUT_UNCERTAINTY.contains(&name)
}

/// Methods whose input paths may leave out a leading object of the params: (method, object).
/// `balance.solve`'s inputs are named as in the network (`units.BPT.efficiency`), as for
/// `balance.sweep` and the `/site` route.
pub const PATH_ROOTS: &[(&str, &str)] = &[("balance.solve", "network")];

/// Most inputs with an uncertainty in one call.
pub const MAX_INPUTS: usize = 50;
/// Default number of Monte Carlo samples.
pub const DEFAULT_SAMPLES: u64 = 10_000;
/// Fewest Monte Carlo samples.
pub const MIN_SAMPLES: u64 = 100;
/// Most Monte Carlo samples.
pub const MAX_SAMPLES: u64 = 100_000;
/// Most values a Monte Carlo keeps (samples times result fields) for its coverage intervals;
/// name fewer fields with `outputs` beyond it.
pub const MAX_MC_VALUES: u64 = 20_000_000;
/// Default seed of the Monte Carlo generator.
pub const DEFAULT_SEED: u64 = 1;
/// Default coverage factor.
pub const DEFAULT_K: f64 = 2.0;
/// The sensitivities at the steps u and u/2 must agree to this fraction of the field's u.
pub const STEP_AGREEMENT: f64 = 0.01;
/// A field's u below this fraction of its value is the solvers' round-off (they converge to
/// 1e-9 relative and better), so its two step sizes are not compared.
pub const NOISE: f64 = 1e-8;
/// Most warnings listed (the rest are counted).
const MAX_WARNINGS: usize = 20;

/// The sources of the method, for the answer.
pub const SOURCES: &[&str] = &[
    "JCGM 100:2008 (GUM), Evaluation of measurement data - Guide to the expression of uncertainty in measurement, 5.1 (uncorrelated) and 5.2 (correlated input quantities), first order",
    "JCGM 101:2008, Propagation of distributions using a Monte Carlo method (on request), 7.7 coverage interval",
];

/// The standing caution of an uncertainty statement.
pub const CAUTION: &str = "A result with its expanded uncertainty U is compared with a guarantee under the test code the contract names (for a turbine, its acceptance test code), which sets the instruments, corrections and how U is combined and applied; this propagation of the stated input uncertainties through the model is not a substitute for it. It covers only the inputs given, not the model's own uncertainty (property formulations, efficiencies assumed)";

/// The `uncertainty` param: every key other than the options below names an input by its
/// dotted path in the params (`inlet.T`, `outlet_p`, `efficiency`, `units.BPT.efficiency` for
/// `balance.solve`, `inlets.0.flow`), or nests it (`{"inlet": {"T": "1 K"}}`), with its
/// standard uncertainty: a text with a unit of the input's dimension ("1 K", "0.05 bar",
/// "0.2 t/h"), a text in percent of the input's value as given ("0.5 %"), or a bare number for
/// a dimensionless input (efficiency 0.005 = half a point). The result gains `uncertainty` (for
/// every numeric field, at the same path: value, u, U, k and the contributions) and
/// `uncertainty_basis` (method, inputs, steps, warnings, sources).
#[derive(Debug, Clone, Default, PartialEq, Deserialize, Serialize, JsonSchema)]
pub struct UncertaintyParams {
    /// Coverage factor k of the expanded uncertainty U = k u (default 2; greater than 0, at
    /// most 10).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub k: Option<f64>,
    /// "gum" (default: first order, JCGM 100:2008) or "monte_carlo" (the GUM answer and,
    /// for every field, a Monte Carlo mean, u and coverage interval, JCGM 101:2008).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub method: Option<String>,
    /// Monte Carlo samples (100 to 100,000; default 10,000).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub samples: Option<u64>,
    /// Seed of the Monte Carlo generator (default 1): the same seed gives the same draws.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub seed: Option<u64>,
    /// Correlations between inputs, each `{"inputs": ["inlet.T", "outlet.T"], "r": 0.8}`
    /// (-1 to 1; uncorrelated unless given).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub correlations: Option<Vec<Correlation>>,
    /// Result fields to report, by dotted path or its start: a list (`["efficiency",
    /// "outlet"]`) or one text, comma-separated (`"efficiency, outlet"`); default every numeric
    /// field.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub outputs: Option<Outputs>,
    /// The inputs: dotted path (or nested object) to standard uncertainty.
    #[serde(flatten)]
    pub inputs: BTreeMap<String, Value>,
}

/// The `outputs` option: a list of paths, or one comma-separated text.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(untagged)]
pub enum Outputs {
    /// A list of dotted paths.
    List(Vec<String>),
    /// One text, paths separated by commas.
    Text(String),
}

impl Outputs {
    /// The paths.
    pub fn paths(&self) -> Vec<String> {
        match self {
            Outputs::List(l) => l.clone(),
            Outputs::Text(t) => t
                .split(',')
                .map(|p| p.trim().to_string())
                .filter(|p| !p.is_empty())
                .collect(),
        }
    }
}

/// A correlation coefficient between two inputs.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct Correlation {
    /// The two inputs, by the paths used in `uncertainty`.
    pub inputs: Vec<String>,
    /// Correlation coefficient, -1 to 1.
    pub r: f64,
}

/// One input's contribution to a field's uncertainty.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct Contribution {
    /// The input's path.
    pub input: String,
    /// Sensitivity coefficient: change of the field per unit of the input (in the field's unit
    /// per the input's unit as given).
    pub sensitivity: f64,
    /// The input's standard uncertainty, in its unit as given.
    pub u: f64,
    /// sensitivity times u, in the field's unit.
    pub contribution: f64,
    /// The input's share of the field's variance (with correlations the covariance terms
    /// shared out; the shares sum to 1).
    pub share: f64,
    /// The sensitivity at the step u minus that at u/2, times u (in the field's unit): the
    /// check of the step.
    pub step_difference: f64,
    /// True when only one side of the input could be evaluated (a one-sided difference).
    pub one_sided: bool,
}

/// The Monte Carlo answer for one field.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct MonteCarloField {
    /// Mean of the field over the samples.
    pub mean: f64,
    /// Standard deviation of the field over the samples (its standard uncertainty).
    pub u: f64,
    /// Lower end of the probabilistically symmetric coverage interval.
    pub low: f64,
    /// Upper end of the coverage interval.
    pub high: f64,
    /// Samples in which the field was computed.
    pub samples: u64,
}

/// The uncertainty of one numeric result field (in `uncertainty`, at the field's own path).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct FieldUncertainty {
    /// The field's value (as in the result).
    pub value: f64,
    /// The field's unit, where the result names it.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub unit: Option<String>,
    /// Combined standard uncertainty, in the field's unit.
    pub u: f64,
    /// Expanded uncertainty k u.
    #[serde(rename = "U")]
    pub expanded: f64,
    /// Coverage factor.
    pub k: f64,
    /// u / |value| (null for a zero value).
    pub relative: Option<f64>,
    /// Per input: sensitivity, u, contribution and share of the variance.
    pub contributions: Vec<Contribution>,
    /// The Monte Carlo answer (method "monte_carlo").
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub monte_carlo: Option<MonteCarloField>,
}

/// An input as the propagation used it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct InputUsed {
    /// Its path.
    pub input: String,
    /// Its value as given, in `unit`.
    pub value: f64,
    /// Its unit as given (the request's unit for it for a bare number).
    pub unit: String,
    /// Its dimension.
    pub dimension: String,
    /// Its standard uncertainty in `unit`.
    pub u: f64,
    /// The uncertainty as given.
    pub given: Value,
    /// The central-difference steps used, in `unit` (the first is the sensitivity's check).
    pub steps: Vec<f64>,
}

/// Settings of a Monte Carlo run.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct MonteCarloBasis {
    /// Samples drawn.
    pub samples: u64,
    /// Seed.
    pub seed: u64,
    /// Samples the method refused (counted out of every field).
    pub failed: u64,
    /// Coverage probability of the intervals, erf(k / sqrt 2).
    pub coverage_probability: f64,
    /// The generator.
    pub generator: String,
}

/// A field whose uncertainty could not be propagated.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct NotPropagated {
    /// The field's path.
    pub field: String,
    /// Why.
    pub reason: String,
}

/// How the uncertainties of a result were found (`uncertainty_basis`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct UncertaintyBasis {
    /// "GUM first order" or "GUM first order and Monte Carlo".
    pub method: String,
    /// Coverage factor of every U.
    pub k: f64,
    /// The inputs with their values, units, uncertainties and steps.
    pub inputs: Vec<InputUsed>,
    /// The correlations used.
    pub correlations: Vec<Correlation>,
    /// The Monte Carlo settings (method "monte_carlo").
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub monte_carlo: Option<MonteCarloBasis>,
    /// Evaluations of the method.
    pub evaluations: u64,
    /// Fields whose uncertainty is not given, with the reason.
    pub not_propagated: Vec<NotPropagated>,
    /// Steps refused, two step sizes that disagree, Monte Carlo samples refused.
    pub warnings: Vec<String>,
    /// The sources of the method.
    pub sources: Vec<String>,
    /// The standing caution.
    pub caution: String,
}

impl MethodSpec {
    /// Gives the method the `uncertainty` param (see the module doc): the params schema gains
    /// the param, the result schema `uncertainty` and `uncertainty_basis`, and the body runs
    /// the propagation when the param is present.
    pub fn with_uncertainty(mut self) -> MethodSpec {
        let params = std::mem::replace(&mut self.params_schema, Box::new(|_| Schema::Bool(true)));
        self.params_schema = Box::new(move |g| {
            let mut s = params(g);
            if let Schema::Object(o) = &mut s {
                let u = described::<UncertaintyParams>(
                    g,
                    "Standard uncertainties of inputs, by dotted path (\"inlet.T\": \"1 K\", \"outlet_p\": \"0.05 bar\", \"efficiency\": \"0.5 %\" of the value, or nested objects), with options k (default 2), method (\"gum\" or \"monte_carlo\"), samples, seed, correlations and outputs. The result then gains `uncertainty` (u, U, k and the contributions of every numeric field, at the field's path) and `uncertainty_basis` (JCGM 100:2008 first order; Monte Carlo by JCGM 101:2008 on request).",
                );
                o.object().properties.insert("uncertainty".into(), u);
            }
            s
        });
        let result = std::mem::replace(&mut self.result_schema, Box::new(|_| Schema::Bool(true)));
        self.result_schema = Box::new(move |g| {
            let base = result(g);
            let mut extra = SchemaObject {
                instance_type: Some(InstanceType::Object.into()),
                ..Default::default()
            };
            let fields = SchemaObject {
                metadata: Some(Box::new(Metadata {
                    description: Some("With the `uncertainty` param: for every numeric field of the result, at the same dotted path, a FieldUncertainty (value, unit, u, U, k, relative, contributions, monte_carlo); a list of the result becomes a list (null where an element has no numeric field)".into()),
                    ..Default::default()
                })),
                instance_type: Some(InstanceType::Object.into()),
                ..Default::default()
            };
            let _ = g.subschema_for::<FieldUncertainty>();
            extra
                .object()
                .properties
                .insert("uncertainty".into(), Schema::Object(fields));
            let basis = described::<UncertaintyBasis>(
                g,
                "With the `uncertainty` param: how the uncertainties were found (method, inputs, steps, warnings, sources, caution)",
            );
            extra
                .object()
                .properties
                .insert("uncertainty_basis".into(), basis);
            Schema::Object(SchemaObject {
                subschemas: Some(Box::new(SubschemaValidation {
                    all_of: Some(vec![base, Schema::Object(extra)]),
                    ..Default::default()
                })),
                ..Default::default()
            })
        });
        let inner = std::mem::replace(&mut self.call, Box::new(|_, _| Ok(Value::Null)));
        let name = self.name;
        let quick = self.quick;
        let call: CallFn = Box::new(move |ctx, mut params| {
            let asked = params
                .as_object_mut()
                .and_then(|o| o.remove("uncertainty"))
                .filter(|u| !u.is_null());
            match asked {
                None => inner(ctx, params),
                Some(req) => {
                    let method = Method {
                        name,
                        ctx,
                        call: &inner,
                    };
                    busy(quick, || propagate(&method, params, req))
                }
            }
        });
        self.call = call;
        self
    }
}

/// Runs `f`, a propagation of a quick method. A quick method answers on a connection's worker
/// of the server's multi-threaded runtime; a propagation takes many evaluations (a Monte Carlo
/// seconds), so the runtime is told first that this thread will be busy and moves the worker's
/// other tasks to another thread (`block_in_place`). Anywhere else (a method on the blocking
/// pool, a current-thread runtime, no runtime: the command line and tests) `f` runs as is.
fn busy<R>(quick: bool, f: impl FnOnce() -> R) -> R {
    use tokio::runtime::{Handle, RuntimeFlavor};
    let on_worker = quick
        && Handle::try_current().is_ok_and(|h| h.runtime_flavor() == RuntimeFlavor::MultiThread);
    if on_worker {
        tokio::task::block_in_place(f)
    } else {
        f()
    }
}

/// A `$ref` to `T`'s schema with its own description (so the property is described).
fn described<T: JsonSchema>(g: &mut SchemaGenerator, description: &str) -> Schema {
    let r = g.subschema_for::<T>();
    Schema::Object(SchemaObject {
        metadata: Some(Box::new(Metadata {
            description: Some(description.into()),
            ..Default::default()
        })),
        subschemas: Some(Box::new(SubschemaValidation {
            all_of: Some(vec![r]),
            ..Default::default()
        })),
        ..Default::default()
    })
}

/// The method being propagated through.
struct Method<'a> {
    name: &'static str,
    ctx: &'a ServerCtx,
    call: &'a CallFn,
}

impl Method<'_> {
    fn eval(&self, params: Value) -> Result<Value, ApiError> {
        (self.call)(self.ctx, params)
    }
}

fn invalid(message: String) -> ApiError {
    Error::invalid(message).into()
}

fn bad_param(path: &str, message: String) -> ApiError {
    ApiError::invalid_params(path, message)
}

// ------------------------------------------------------------------------ paths

fn get<'a>(v: &'a Value, path: &str) -> Option<&'a Value> {
    let mut at = v;
    for seg in path.split('.') {
        at = match at {
            Value::Object(o) => o.get(seg)?,
            Value::Array(a) => a.get(seg.parse::<usize>().ok()?)?,
            _ => return None,
        };
    }
    Some(at)
}

fn get_mut<'a>(v: &'a mut Value, path: &str) -> Option<&'a mut Value> {
    let mut at = v;
    for seg in path.split('.') {
        at = match at {
            Value::Object(o) => o.get_mut(seg)?,
            Value::Array(a) => a.get_mut(seg.parse::<usize>().ok()?)?,
            _ => return None,
        };
    }
    Some(at)
}

/// `params` with the value at `path` replaced.
fn with(params: &Value, path: &str, value: Value) -> Value {
    let mut p = params.clone();
    if let Some(slot) = get_mut(&mut p, path) {
        *slot = value;
    }
    p
}

/// Splits "42 barg" into (42, "barg"): the longest leading decimal number, then the rest.
fn split_value(text: &str) -> Option<(f64, &str)> {
    let t = text.trim();
    let ok = |c: char| c.is_ascii_digit() || matches!(c, '+' | '-' | '.' | 'e' | 'E');
    let end = t.find(|c: char| !ok(c)).unwrap_or(t.len());
    (1..=end)
        .rev()
        .find_map(|i| t[..i].parse::<f64>().ok().map(|x| (x, t[i..].trim())))
}

/// The numeric-looking leaves of the params (for the message naming the inputs).
fn numeric_inputs(v: &Value, prefix: &str, out: &mut Vec<String>) {
    match v {
        Value::Object(o) => {
            for (k, x) in o {
                if k == "units" && x.is_string() {
                    continue;
                }
                numeric_inputs(x, &join(prefix, k), out);
            }
        }
        Value::Array(a) => {
            for (i, x) in a.iter().enumerate() {
                numeric_inputs(x, &join(prefix, &i.to_string()), out);
            }
        }
        Value::Number(_) => out.push(prefix.to_string()),
        Value::String(s) if split_value(s).is_some() => out.push(prefix.to_string()),
        _ => {}
    }
}

fn join(prefix: &str, key: &str) -> String {
    if prefix.is_empty() {
        key.to_string()
    } else {
        format!("{prefix}.{key}")
    }
}

/// The inputs of the `uncertainty` object, nested objects and lists flattened to dotted paths
/// (a list element's index is a segment, as the spreadsheet functions build it); null leaves
/// are no input.
fn flatten(prefix: &str, v: &Value, out: &mut Vec<(String, Value)>) {
    match v {
        Value::Object(o) => {
            for (k, x) in o {
                flatten(&join(prefix, k), x, out);
            }
        }
        Value::Array(a) => {
            for (i, x) in a.iter().enumerate() {
                flatten(&join(prefix, &i.to_string()), x, out);
            }
        }
        Value::Null => {}
        other => out.push((prefix.to_string(), other.clone())),
    }
}

// ------------------------------------------------------------------------ inputs

/// How an input is written back: a bare number, or a number with the caller's unit text.
#[derive(Debug, Clone)]
enum Written {
    Number,
    Text(String),
}

/// One input with its uncertainty, ready to perturb.
#[derive(Debug, Clone)]
struct Input {
    /// The path as the caller wrote it in `uncertainty`.
    path: String,
    /// The path in the params.
    full: String,
    dim: Dim,
    /// The value as given, in its unit.
    x: f64,
    unit: Unit,
    written: Written,
    /// Standard uncertainty in the input's unit.
    u: f64,
    given: Value,
}

impl Input {
    fn value_at(&self, x: f64) -> Value {
        match &self.written {
            Written::Number => json!(x),
            Written::Text(u) => Value::String(format!("{x} {u}")),
        }
    }
}

fn dim_named(name: &str) -> Option<Dim> {
    Dim::ALL.into_iter().find(|d| d.name() == name)
}

/// The request's units for bare numbers: `units` as a preset name or an object of a preset
/// and units per quantity, read as the methods read it (the engineering preset when absent or
/// unreadable: the method itself then refuses the `units` param).
fn units_of(params: &Value) -> UnitSystem {
    params
        .get("units")
        .and_then(|u| serde_json::from_value::<vocab::Units>(u.clone()).ok())
        .and_then(|u| vocab::unit_system(Some(&u)).ok())
        .unwrap_or_else(|| UnitSystem::new(Preset::Engineering))
}

/// Finds the dimension of the input at `full` by writing a value with a unit of an unlikely
/// dimension: the method's own unit check names the dimension it expects.
fn probe_dim(
    m: &Method,
    params: &Value,
    path: &str,
    full: &str,
    evaluations: &mut u64,
) -> Result<Dim, ApiError> {
    let mut last = None;
    for probe in ["1 N/m", "1 m/s"] {
        *evaluations += 1;
        match m.eval(with(params, full, json!(probe))) {
            Err(e) if e.code == codes::WRONG_DIMENSION => {
                if let Some(d) = e
                    .data
                    .get("expected")
                    .and_then(Value::as_str)
                    .and_then(dim_named)
                {
                    return Ok(d);
                }
            }
            Err(e) => last = Some(e),
            Ok(_) => {}
        }
    }
    let why = match last {
        Some(e) if e.code == codes::INVALID_PARAMS => {
            "it takes no unit (a count or a setting, not a measured quantity)"
        }
        _ => "the method does not read it as a quantity with a unit in these params",
    };
    Err(invalid(format!(
        "uncertainty.{path}: `{path}` is not a numeric input of {}: {why}",
        m.name
    )))
}

fn read_input(
    m: &Method,
    params: &Value,
    nominal: &Value,
    system: &UnitSystem,
    path: &str,
    given: &Value,
    evaluations: &mut u64,
) -> Result<Input, ApiError> {
    let roots: Vec<&str> = PATH_ROOTS
        .iter()
        .filter(|(n, _)| *n == m.name)
        .map(|(_, r)| *r)
        .collect();
    let full = std::iter::once(path.to_string())
        .chain(roots.iter().map(|r| format!("{r}.{path}")))
        .find(|f| get(params, f).is_some());
    let listing = || {
        let mut found = Vec::new();
        numeric_inputs(params, "", &mut found);
        for r in &roots {
            let pre = format!("{r}.");
            for f in found.iter_mut() {
                if let Some(rest) = f.strip_prefix(&pre) {
                    *f = rest.to_string();
                }
            }
        }
        found.join(", ")
    };
    let Some(full) = full else {
        return Err(invalid(format!(
            "uncertainty.{path}: {} has no input `{path}` in these params (give its value to state its uncertainty); numeric inputs given: {}",
            m.name,
            listing()
        )));
    };
    let value = get(params, &full).cloned().unwrap_or(Value::Null);
    let (x, unit_text) = match &value {
        Value::Number(n) => (n.as_f64().unwrap_or(f64::NAN), None),
        Value::String(s) => match split_value(s) {
            Some((x, u)) if !u.is_empty() => (x, Some(u.to_string())),
            Some((x, _)) => (x, None),
            None => (f64::NAN, None),
        },
        _ => (f64::NAN, None),
    };
    if !x.is_finite() {
        return Err(invalid(format!(
            "uncertainty.{path}: `{path}` is not a numeric input of {}; numeric inputs given: {}",
            m.name,
            listing()
        )));
    }
    let dim = probe_dim(m, params, path, &full, evaluations)?;
    let (unit, written) = match unit_text {
        Some(u) => (units::parse_unit(path, dim, &u)?, Written::Text(u)),
        None if dim == Dim::Dimensionless => (system.for_dim(dim), Written::Number),
        None => {
            // A bare number: read in the unit the request's units give its name (as the method
            // names it: without the params' root), else the preset's. Check that the method
            // reads it so, by writing it with that unit and comparing the answers.
            let name = roots
                .iter()
                .find_map(|r| full.strip_prefix(&format!("{r}.")))
                .unwrap_or(&full);
            let unit = system.unit(name, dim);
            *evaluations += 1;
            let same = m
                .eval(with(params, &full, json!(format!("{x} {}", unit.symbol))))
                .is_ok_and(|r| &r == nominal);
            if !same {
                return Err(invalid(format!(
                    "uncertainty.{path}: cannot tell the unit of the bare number {x} at `{path}`; give the input as a text with its unit (e.g. \"{x} {}\")",
                    unit.symbol
                )));
            }
            (
                unit,
                if value.is_string() {
                    Written::Text(String::new())
                } else {
                    Written::Number
                },
            )
        }
    };
    let written = match written {
        Written::Text(t) if t.is_empty() => Written::Text(unit.symbol.to_string()),
        w => w,
    };
    let u = standard_uncertainty(path, dim, x, &unit, given)?;
    Ok(Input {
        path: path.to_string(),
        full,
        dim,
        x,
        unit,
        written,
        u,
        given: given.clone(),
    })
}

/// Whether an uncertainty as given is zero ("0 K", 0, "0 %").
fn is_zero(given: &Value) -> bool {
    match given {
        Value::Number(n) => n.as_f64() == Some(0.0),
        Value::String(s) => split_value(s).is_some_and(|(v, _)| v == 0.0),
        _ => false,
    }
}

/// The standard uncertainty `given` for the input at `path` (value `x` in `unit`), in `unit`.
fn standard_uncertainty(
    path: &str,
    dim: Dim,
    x: f64,
    unit: &Unit,
    given: &Value,
) -> Result<f64, ApiError> {
    let quantity = format!("uncertainty.{path}");
    let example = match dim {
        Dim::Temperature => "\"1 K\"",
        Dim::Pressure => "\"0.05 bar\"",
        Dim::MassFlow => "\"0.5 t/h\"",
        _ => "\"0.5 %\"",
    };
    let (v, u_text) = match given {
        Value::Number(n) => (n.as_f64().unwrap_or(f64::NAN), ""),
        Value::String(s) => match split_value(s) {
            Some((v, u)) => (v, u),
            None => {
                return Err(invalid(format!(
                    "{quantity}: '{s}' is not a standard uncertainty; give a number with a unit of {} (e.g. {example}) or a percentage of the value",
                    dim.name()
                )))
            }
        },
        other => {
            return Err(invalid(format!(
                "{quantity}: {other} is not a standard uncertainty; give a number with a unit of {} (e.g. {example}) or a percentage of the value",
                dim.name()
            )))
        }
    };
    Error::check_finite(&quantity, v)?;
    if v < 0.0 {
        return Err(invalid(format!(
            "{quantity} = {given} is negative; a standard uncertainty is positive"
        )));
    }
    let u = if u_text == "%" {
        if x == 0.0 {
            return Err(invalid(format!(
                "{quantity} = {given} is a percentage of the value, and `{path}` is 0; give the uncertainty with a unit (e.g. {example})"
            )));
        }
        v / 100.0 * x.abs()
    } else if u_text.is_empty() {
        if dim != Dim::Dimensionless {
            return Err(invalid(format!(
                "{quantity} = {given} has no unit, and `{path}` is a {}; give a unit (e.g. {example}) or a percentage of the value",
                dim.name()
            )));
        }
        // A dimensionless input's uncertainty is absolute: 0.005 is half a point.
        v / unit.scale()
    } else {
        // An uncertainty is a difference: of a temperature in K (or degC, degF as a
        // difference), of a pressure in a plain unit (no gauge, no absolute qualifier).
        let udim = match dim {
            Dim::Temperature => Dim::TemperatureDifference,
            Dim::Pressure => Dim::PressureDifference,
            d => d,
        };
        if udim == Dim::PressureDifference {
            let found = units::dims_of(u_text.trim());
            let as_difference = found.iter().any(|f| f.dim == Dim::PressureDifference);
            if let Some(p) = found.iter().find(|f| f.dim == Dim::Pressure) {
                if !as_difference {
                    let kind = if p.gauge { "gauge" } else { "absolute" };
                    // the example in the difference unit of the same size (barg: bar, psia: psi)
                    let same_size = units::accepted(Dim::PressureDifference)
                        .into_iter()
                        .filter_map(|a| units::parse_unit(&quantity, udim, &a).ok())
                        .find(|d| d.scale() == p.scale())
                        .map_or("bar", |d| d.symbol);
                    return Err(invalid(format!(
                        "{quantity} = {given}: '{}' is a{} {kind} pressure unit, but the uncertainty of a pressure is a pressure difference, which has no gauge or absolute qualifier; write it in a unit of pressure difference ({}), e.g. \"{} {}\"",
                        u_text.trim(),
                        if p.gauge { "" } else { "n" },
                        units::accepted(Dim::PressureDifference).join(", "),
                        v,
                        same_size
                    )));
                }
            }
        }
        let uu = units::parse_unit(&quantity, udim, u_text)?;
        v * uu.scale() / unit.scale()
    };
    Error::check_finite(&quantity, u)?;
    Ok(u)
}

// ------------------------------------------------------------------------ correlations

/// The correlation matrix of `inputs` from the request, validated.
fn correlation_matrix(inputs: &[Input], given: &[Correlation]) -> Result<Vec<Vec<f64>>, ApiError> {
    let n = inputs.len();
    let mut r = vec![vec![0.0; n]; n];
    for (i, row) in r.iter_mut().enumerate() {
        row[i] = 1.0;
    }
    let index = |name: &str| inputs.iter().position(|i| i.path == name);
    let mut seen = Vec::new();
    for (k, c) in given.iter().enumerate() {
        let at = format!("uncertainty.correlations.{k}");
        if c.inputs.len() != 2 {
            return Err(bad_param(
                &at,
                format!("{at}: name two inputs, got {}", c.inputs.len()),
            ));
        }
        let (a, b) = (&c.inputs[0], &c.inputs[1]);
        let names = inputs
            .iter()
            .map(|i| i.path.as_str())
            .collect::<Vec<_>>()
            .join(", ");
        let (Some(i), Some(j)) = (index(a), index(b)) else {
            let missing = if index(a).is_none() { a } else { b };
            return Err(invalid(format!(
                "{at}: `{missing}` has no uncertainty in this request; correlations are between inputs with an uncertainty: {names}"
            )));
        };
        if i == j {
            return Err(invalid(format!(
                "{at}: an input is not correlated with itself ({a}); name two different inputs"
            )));
        }
        if !c.r.is_finite() || !(-1.0..=1.0).contains(&c.r) {
            return Err(invalid(format!(
                "{at}: r = {} between {a} and {b} is outside -1 to 1",
                c.r
            )));
        }
        let key = (i.min(j), i.max(j));
        if seen.contains(&key) {
            return Err(invalid(format!(
                "{at}: the correlation between {a} and {b} is given twice"
            )));
        }
        seen.push(key);
        r[i][j] = c.r;
        r[j][i] = c.r;
    }
    Ok(r)
}

/// The lower Cholesky factor of a positive semi-definite matrix (a zero pivot gives a zero
/// column), or None when the matrix is not positive semi-definite.
fn cholesky(a: &[Vec<f64>]) -> Option<Vec<Vec<f64>>> {
    const TOL: f64 = 1e-10;
    let n = a.len();
    let mut l = vec![vec![0.0; n]; n];
    for j in 0..n {
        let d = a[j][j] - (0..j).map(|k| l[j][k] * l[j][k]).sum::<f64>();
        if d < -TOL {
            return None;
        }
        if d <= TOL {
            // A zero pivot: the rest of the column must vanish too.
            for i in j + 1..n {
                let s = a[i][j] - (0..j).map(|k| l[i][k] * l[j][k]).sum::<f64>();
                if s.abs() > 1e-8 {
                    return None;
                }
            }
            continue;
        }
        let d = d.sqrt();
        l[j][j] = d;
        for i in j + 1..n {
            let s = a[i][j] - (0..j).map(|k| l[i][k] * l[j][k]).sum::<f64>();
            l[i][j] = s / d;
        }
    }
    Some(l)
}

// ------------------------------------------------------------------------ result fields

/// The floating-point leaves of a result (integers such as IF97 region numbers are not
/// quantities), by dotted path.
fn float_leaves(v: &Value, prefix: &str, out: &mut Vec<(String, f64)>) {
    match v {
        Value::Object(o) => {
            for (k, x) in o {
                float_leaves(x, &join(prefix, k), out);
            }
        }
        Value::Array(a) => {
            for (i, x) in a.iter().enumerate() {
                float_leaves(x, &join(prefix, &i.to_string()), out);
            }
        }
        Value::Number(n) if n.is_f64() => {
            if let Some(x) = n.as_f64() {
                out.push((prefix.to_string(), x));
            }
        }
        _ => {}
    }
}

/// A balance residual (`residual`, `mass_residual`, `energy_residual`): a numerical check of
/// the solution, not a result, so it carries no uncertainty.
fn is_residual(path: &str) -> bool {
    let last = path.rsplit('.').next().unwrap_or(path);
    last == "residual" || last.ends_with("_residual")
}

fn wanted(path: &str, outputs: &Option<Vec<String>>) -> bool {
    match outputs {
        None => true,
        Some(list) => list.iter().any(|o| {
            path == o || (path.starts_with(o.as_str()) && path[o.len()..].starts_with('.'))
        }),
    }
}

/// The unit of the field at `path`, from the nearest `units` (or `units_used`) map of the
/// result that names it: by its path relative to that map's object, the same without list
/// indices (`extractions.h` for `extractions.0.h`), or its own name.
fn unit_of(result: &Value, path: &str) -> Option<String> {
    let segs: Vec<&str> = path.split('.').collect();
    for cut in (0..segs.len()).rev() {
        let obj = if cut == 0 {
            Some(result)
        } else {
            get(result, &segs[..cut].join("."))
        };
        let Some(obj) = obj else { continue };
        let rel = segs[cut..].join(".");
        let bare = segs[cut..]
            .iter()
            .filter(|s| s.parse::<usize>().is_err())
            .copied()
            .collect::<Vec<_>>()
            .join(".");
        let last = segs[segs.len() - 1];
        for map in ["units", "units_used"] {
            for key in [rel.as_str(), bare.as_str(), last] {
                if let Some(u) = obj
                    .get(map)
                    .and_then(|u| u.get(key))
                    .and_then(Value::as_str)
                {
                    return Some(u.to_string());
                }
            }
        }
    }
    None
}

fn number_at(v: &Value, path: &str) -> Option<f64> {
    get(v, path)
        .and_then(Value::as_f64)
        .filter(|x| x.is_finite())
}

/// The mirror of `result` holding `leaf(path)` at every field that has one; a list stays a list
/// (null where an element has none).
fn mirror(v: &Value, prefix: &str, leaf: &mut dyn FnMut(&str) -> Option<Value>) -> Option<Value> {
    match v {
        Value::Object(o) => {
            let mut m = Map::new();
            for (k, x) in o {
                if let Some(y) = mirror(x, &join(prefix, k), leaf) {
                    m.insert(k.clone(), y);
                }
            }
            (!m.is_empty()).then_some(Value::Object(m))
        }
        Value::Array(a) => {
            let items: Vec<Value> = a
                .iter()
                .enumerate()
                .map(|(i, x)| mirror(x, &join(prefix, &i.to_string()), leaf).unwrap_or(Value::Null))
                .collect();
            items
                .iter()
                .any(|x| !x.is_null())
                .then_some(Value::Array(items))
        }
        Value::Number(n) if n.is_f64() => leaf(prefix),
        _ => None,
    }
}

// ------------------------------------------------------------------------ propagation

/// The sensitivities of every field to one input.
struct Sensitivity {
    /// Per field (same order as the field list): (sensitivity, check difference, one sided).
    per_field: Vec<Option<(f64, f64, bool)>>,
    steps: Vec<f64>,
}

fn sensitivities(
    m: &Method,
    params: &Value,
    nominal: &Value,
    fields: &[(String, f64)],
    input: &Input,
    warnings: &mut Vec<String>,
    evaluations: &mut u64,
) -> Result<Sensitivity, ApiError> {
    let at = |x: f64, evaluations: &mut u64| {
        *evaluations += 1;
        m.eval(with(params, &input.full, input.value_at(x)))
    };
    let diff = |plus: &Value, xp: f64, minus: &Value, xm: f64| -> Vec<Option<f64>> {
        fields
            .iter()
            .map(|(f, _)| {
                let (a, b) = (number_at(plus, f)?, number_at(minus, f)?);
                Some((a - b) / (xp - xm))
            })
            .collect()
    };
    let x = input.x;
    let mut first_error = None;
    let mut central = None;
    let mut plus_ok: Option<(f64, Value)> = None;
    let mut minus_ok: Option<(f64, Value)> = None;
    for (n, s) in [input.u, input.u / 4.0, input.u / 16.0]
        .into_iter()
        .enumerate()
    {
        let (xp, xm) = (x + s, x - s);
        let plus = at(xp, evaluations);
        let minus = at(xm, evaluations);
        match (&plus, &minus) {
            (Ok(p), Ok(q)) => {
                if n > 0 {
                    warnings.push(format!(
                        "{}: the method refused the step of u = {} {} ({}); the sensitivities use a step of {} {}",
                        input.path,
                        input.u,
                        input.unit.symbol,
                        first_error.as_deref().unwrap_or("refused"),
                        s,
                        input.unit.symbol
                    ));
                }
                central = Some((s, diff(p, xp, q, xm)));
                break;
            }
            _ => {
                for r in [&plus, &minus] {
                    if let (Err(e), None) = (r, &first_error) {
                        first_error = Some(e.message.clone());
                    }
                }
                if let (Ok(p), None) = (&plus, &plus_ok) {
                    plus_ok = Some((xp, p.clone()));
                }
                if let (Ok(q), None) = (&minus, &minus_ok) {
                    minus_ok = Some((xm, q.clone()));
                }
            }
        }
    }
    let Some((s, coarse)) = central else {
        // One side only: a forward or backward difference from the nominal answer.
        let side = plus_ok.or(minus_ok);
        let Some((xs, r)) = side else {
            return Err(invalid(format!(
                "uncertainty.{}: {} cannot be evaluated at {} +- {} {} ({})",
                input.path,
                m.name,
                x,
                input.u,
                input.unit.symbol,
                first_error.unwrap_or_default()
            )));
        };
        warnings.push(format!(
            "{}: the method refused one side of the input ({}); the sensitivities are one-sided differences over {} {}",
            input.path,
            first_error.unwrap_or_default(),
            (xs - x).abs(),
            input.unit.symbol
        ));
        let d = diff(&r, xs, nominal, x);
        return Ok(Sensitivity {
            per_field: d.into_iter().map(|c| c.map(|c| (c, 0.0, true))).collect(),
            steps: vec![(xs - x).abs()],
        });
    };
    // The check: the same at half the step.
    let h = s / 2.0;
    let (xp, xm) = (x + h, x - h);
    let fine = match (at(xp, evaluations), at(xm, evaluations)) {
        (Ok(p), Ok(q)) => Some(diff(&p, xp, &q, xm)),
        (Err(e), _) | (_, Err(e)) => {
            warnings.push(format!(
                "{}: the check step of {} {} was refused ({}); the sensitivities are unchecked",
                input.path, h, input.unit.symbol, e.message
            ));
            None
        }
    };
    let per_field = match fine {
        Some(fine) => fine
            .into_iter()
            .zip(coarse)
            .map(|(f, c)| match (f, c) {
                (Some(f), Some(c)) => Some((f, (c - f) * input.u, false)),
                (Some(f), None) => Some((f, 0.0, false)),
                (None, Some(c)) => Some((c, 0.0, false)),
                (None, None) => None,
            })
            .collect(),
        None => coarse
            .into_iter()
            .map(|c| c.map(|c| (c, 0.0, false)))
            .collect(),
    };
    Ok(Sensitivity {
        per_field,
        steps: vec![s, h],
    })
}

/// Runs the propagation for the method `m` on `params` (without `uncertainty`) and the
/// request `req`.
fn propagate(m: &Method, params: Value, req: Value) -> Result<Value, ApiError> {
    let req: UncertaintyParams = serde_path_to_error::deserialize(req).map_err(|e| {
        let path = format!("uncertainty.{}", e.path());
        let inner = e.into_inner();
        bad_param(&path, format!("invalid params: field `{path}`: {inner}"))
    })?;
    let k = req.k.unwrap_or(DEFAULT_K);
    if !(k.is_finite() && k > 0.0 && k <= 10.0) {
        return Err(invalid(format!(
            "uncertainty.k = {k} is not a coverage factor; give a number greater than 0 and at most 10"
        )));
    }
    let monte_carlo = match req.method.as_deref() {
        None | Some("gum") => false,
        Some("monte_carlo") => true,
        Some(other) => {
            return Err(invalid(format!(
                "uncertainty.method = '{other}' is not a method; accepted: gum, monte_carlo"
            )))
        }
    };
    if !monte_carlo && (req.samples.is_some() || req.seed.is_some()) {
        return Err(invalid(
            "uncertainty.samples and uncertainty.seed are for method monte_carlo; add \"method\": \"monte_carlo\" or leave them out".to_string(),
        ));
    }
    let samples = req.samples.unwrap_or(DEFAULT_SAMPLES);
    if monte_carlo && samples < MIN_SAMPLES {
        // too few to estimate a standard deviation and a coverage interval: a bad value, not
        // a limit of the server
        return Err(invalid(format!(
            "uncertainty.samples = {samples} is below the least {MIN_SAMPLES} Monte Carlo samples; give {MIN_SAMPLES} to {MAX_SAMPLES}"
        )));
    }
    if monte_carlo && samples > MAX_SAMPLES {
        return Err(Error::LimitExceeded {
            what: "Monte Carlo samples (uncertainty.samples)".to_string(),
            limit: MAX_SAMPLES as f64,
            value: samples as f64,
        }
        .into());
    }
    let mut given = Vec::new();
    for (key, v) in &req.inputs {
        flatten(key, v, &mut given);
    }
    if given.is_empty() {
        return Err(invalid(
            "uncertainty: name at least one input with its standard uncertainty, e.g. {\"inlet.T\": \"1 K\"}".to_string(),
        ));
    }
    if given.len() > MAX_INPUTS {
        return Err(Error::LimitExceeded {
            what: "inputs with an uncertainty in one call".into(),
            limit: MAX_INPUTS as f64,
            value: given.len() as f64,
        }
        .into());
    }

    let mut evaluations = 1u64;
    let nominal = m.eval(params.clone())?;
    if !nominal.is_object() {
        return Err(ApiError::internal(format!(
            "{}: the result is not an object, so it cannot carry its uncertainty",
            m.name
        )));
    }
    let system = units_of(&params);
    let mut inputs = Vec::with_capacity(given.len());
    for (path, g) in &given {
        if is_zero(g) {
            // A zero uncertainty contributes nothing: the input is left out (a spreadsheet
            // names list elements from 0 without gaps, so it may give 0 for one it skips).
            continue;
        }
        inputs.push(read_input(
            m,
            &params,
            &nominal,
            &system,
            path,
            g,
            &mut evaluations,
        )?);
    }
    if inputs.is_empty() {
        return Err(invalid(
            "uncertainty: every input given has a zero uncertainty; give at least one positive standard uncertainty".to_string(),
        ));
    }
    let correlations = req.correlations.clone().unwrap_or_default();
    let r = correlation_matrix(&inputs, &correlations)?;
    let chol = cholesky(&r).ok_or_else(|| {
        let listed = correlations
            .iter()
            .map(|c| format!("r({}, {}) = {}", c.inputs[0], c.inputs[1], c.r))
            .collect::<Vec<_>>()
            .join(", ");
        invalid(format!(
            "uncertainty.correlations: {listed} cannot hold together (the correlation matrix is not positive semi-definite)"
        ))
    })?;

    let mut fields = Vec::new();
    float_leaves(&nominal, "", &mut fields);
    let outputs = req.outputs.as_ref().map(Outputs::paths);
    fields.retain(|(p, _)| wanted(p, &outputs) && !is_residual(p));
    if let Some(outs) = &outputs {
        for o in outs {
            if !fields
                .iter()
                .any(|(p, _)| wanted(p, &Some(vec![o.clone()])))
            {
                return Err(invalid(format!(
                    "uncertainty.outputs: `{o}` is not a numeric field of the result of {} (nor the start of one)",
                    m.name
                )));
            }
        }
    }

    let mut warnings = Vec::new();
    let mut sens = Vec::with_capacity(inputs.len());
    for input in &inputs {
        sens.push(sensitivities(
            m,
            &params,
            &nominal,
            &fields,
            input,
            &mut warnings,
            &mut evaluations,
        )?);
    }

    // Combine per field.
    let n = inputs.len();
    let mut leaves: BTreeMap<String, FieldUncertainty> = BTreeMap::new();
    let mut not_propagated = Vec::new();
    let mut step_warnings = 0usize;
    for (f, (path, value)) in fields.iter().enumerate() {
        let per: Vec<Option<(f64, f64, bool)>> = sens.iter().map(|s| s.per_field[f]).collect();
        if let Some(i) = per.iter().position(Option::is_none) {
            not_propagated.push(NotPropagated {
                field: path.clone(),
                reason: format!(
                    "not defined on both sides of {} +- its step",
                    inputs[i].path
                ),
            });
            continue;
        }
        let cu: Vec<f64> = (0..n)
            .map(|i| per[i].map_or(0.0, |(c, _, _)| c) * inputs[i].u)
            .collect();
        let cov: Vec<f64> = (0..n)
            .map(|i| cu[i] * (0..n).map(|j| r[i][j] * cu[j]).sum::<f64>())
            .collect();
        let var: f64 = cov.iter().sum::<f64>().max(0.0);
        let u = var.sqrt();
        let mut contributions = Vec::with_capacity(n);
        for i in 0..n {
            let (c, check, one_sided) = per[i].unwrap_or((0.0, 0.0, false));
            // Below 1e-8 of the value, u is the solvers' own noise: nothing to check.
            if u > NOISE * value.abs() && check.abs() > STEP_AGREEMENT * u {
                step_warnings += 1;
                if warnings.len() < MAX_WARNINGS {
                    warnings.push(format!(
                        "{path}: the sensitivity to {} changes by {:.2} % of u between the steps u and u/2: the result is not linear over the input's uncertainty (compare with method monte_carlo)",
                        inputs[i].path,
                        100.0 * check.abs() / u
                    ));
                }
            }
            contributions.push(Contribution {
                input: inputs[i].path.clone(),
                sensitivity: c,
                u: inputs[i].u,
                contribution: cu[i],
                share: if var > 0.0 { cov[i] / var } else { 0.0 },
                step_difference: check,
                one_sided,
            });
        }
        leaves.insert(
            path.clone(),
            FieldUncertainty {
                value: *value,
                unit: unit_of(&nominal, path),
                u,
                expanded: k * u,
                k,
                relative: (*value != 0.0).then(|| u / value.abs()),
                contributions,
                monte_carlo: None,
            },
        );
    }
    if step_warnings > 0 && warnings.len() >= MAX_WARNINGS {
        warnings.push(format!(
            "{step_warnings} fields in all have sensitivities that change between the two steps"
        ));
    }

    let mc_basis = if monte_carlo {
        let kept = fields.len() as u64 * samples;
        if kept > MAX_MC_VALUES {
            return Err(Error::LimitExceeded {
                what: format!(
                    "Monte Carlo values kept (samples times the {} result fields; name fewer with uncertainty.outputs)",
                    fields.len()
                ),
                limit: MAX_MC_VALUES as f64,
                value: kept as f64,
            }
            .into());
        }
        let seed = req.seed.unwrap_or(DEFAULT_SEED);
        let p = coverage_probability(k);
        let (per_field, failed, first_error) =
            monte_carlo_run(m, &params, &inputs, &chol, &fields, samples, seed);
        evaluations += samples;
        if failed == samples {
            return Err(invalid(format!(
                "uncertainty: every Monte Carlo sample was refused by {} ({})",
                m.name,
                first_error.unwrap_or_default()
            )));
        }
        if failed > 0 {
            warnings.push(format!(
                "Monte Carlo: {failed} of {samples} samples were refused by the method (first: {}); the statistics use the others",
                first_error.unwrap_or_default()
            ));
        }
        for ((path, _), mut values) in fields.iter().zip(per_field) {
            if let (Some(leaf), Some(mc)) = (leaves.get_mut(path), mc_field(&mut values, p)) {
                leaf.monte_carlo = Some(mc);
            }
        }
        Some(MonteCarloBasis {
            samples,
            seed,
            failed,
            coverage_probability: p,
            generator: "xoshiro256** seeded by SplitMix64, normal deviates by Box-Muller, one sequential stream".into(),
        })
    } else {
        None
    };

    let mut built = mirror(&nominal, "", &mut |path| {
        leaves.get(path).and_then(|l| serde_json::to_value(l).ok())
    })
    .unwrap_or_else(|| Value::Object(Map::new()));
    if !built.is_object() {
        built = Value::Object(Map::new());
    }
    let basis = UncertaintyBasis {
        method: if monte_carlo {
            "GUM first order and Monte Carlo".into()
        } else {
            "GUM first order".into()
        },
        k,
        inputs: inputs
            .iter()
            .zip(&sens)
            .map(|(i, s)| InputUsed {
                input: i.path.clone(),
                value: i.x,
                unit: i.unit.symbol.to_string(),
                dimension: i.dim.name().to_string(),
                u: i.u,
                given: i.given.clone(),
                steps: s.steps.clone(),
            })
            .collect(),
        correlations,
        monte_carlo: mc_basis,
        evaluations,
        not_propagated,
        warnings,
        sources: SOURCES.iter().map(|s| s.to_string()).collect(),
        caution: CAUTION.to_string(),
    };
    let mut out = nominal;
    if let Value::Object(o) = &mut out {
        o.insert("uncertainty".into(), built);
        o.insert(
            "uncertainty_basis".into(),
            serde_json::to_value(basis).map_err(|e| ApiError::internal(e.to_string()))?,
        );
    }
    Ok(out)
}

// ------------------------------------------------------------------------ property uncertainty

/// One component of a property's uncertainty.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct PropertyComponent {
    /// "IAPWS-95" (the release's statement for the region) or "IF97 - IAPWS-95" (IF97's
    /// deviation at this state).
    pub name: String,
    /// Standard uncertainty of this component, in the property's unit.
    pub u: f64,
    /// The release's relative expanded uncertainty for the region (k = 2; IAPWS-95 component).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub relative_expanded: Option<f64>,
    /// The region of the release's figure that holds the state (IAPWS-95 component).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub region: Option<String>,
    /// IF97 minus IAPWS-95 at the same (p, T) (vapour pressure: at the same T), in the
    /// property's unit (IF97 component); u = |deviation| / sqrt(3).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub deviation: Option<f64>,
    /// Where the figure comes from: release, section, figure, and the quoted words.
    pub source: String,
    /// "quoted", "from memory" or "computed".
    pub basis: String,
}

/// The uncertainty of one property of a state.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct PropertyStatement {
    /// The property's value at the state (for p_sat: the vapour pressure at the state's T).
    pub value: f64,
    /// Its unit.
    pub unit: String,
    /// Combined standard uncertainty.
    pub u: f64,
    /// Expanded uncertainty k u.
    #[serde(rename = "U")]
    pub expanded: f64,
    /// Coverage factor (2).
    pub k: f64,
    /// u / |value|.
    pub relative: f64,
    /// The components, added in quadrature.
    pub components: Vec<PropertyComponent>,
}

/// The property uncertainties of a state (`property_uncertainty`): rho, w, cp and p_sat where
/// the release states one.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct PropertyUncertainty {
    /// Per property ("rho", "w", "cp", "p_sat"): value, u, U, k and its components.
    #[serde(flatten)]
    pub properties: BTreeMap<String, PropertyStatement>,
    /// Properties without a statement, with the reason.
    pub undefined: BTreeMap<String, String>,
    /// How the figures were obtained and how to read them.
    pub note: String,
}

/// What `property_uncertainty` says about its figures.
pub const PROPERTY_NOTE: &str = "IAPWS-95 uncertainties by region of the phase diagram (IAPWS R6-95(2018), section on the estimates of uncertainty and its figures), read as expanded uncertainties with k = 2; each component names its source and whether its figure is quoted from a public summary of the release or read from the release's figures from memory (an indication). For IAPWS-IF97 states, IF97's deviation from IAPWS-95 at the state is a second component (rectangular, u = |d| / sqrt(3)). The uncertainty of the formulation, not of a measurement";

fn property_dim(p: crate::water::uncertainty::Property) -> (&'static str, Dim) {
    use crate::water::uncertainty::Property as P;
    match p {
        P::Density => ("rho", Dim::Density),
        P::SpeedOfSound => ("w", Dim::Speed),
        P::IsobaricHeatCapacity => ("cp", Dim::SpecificEntropy),
        P::VapourPressure => ("p", Dim::Pressure),
    }
}

/// The property uncertainties of the state `st` (solved with `f`) in the units of `ctx`.
pub fn property_uncertainty(
    st: &crate::water::State,
    f: crate::water::Formulation,
    ctx: &super::vocab::Ctx,
) -> PropertyUncertainty {
    use crate::water::uncertainty as pu;
    let all = pu::of_state(st, f);
    let mut properties = BTreeMap::new();
    for s in &all.statements {
        let (field, dim) = property_dim(s.property);
        let unit = ctx.out_unit(field, dim);
        let d = |x: f64| x / unit.scale();
        let mut components = vec![PropertyComponent {
            name: "IAPWS-95".into(),
            u: d(s.u_iapws95),
            relative_expanded: Some(s.relative_expanded),
            region: Some(s.row.region.to_string()),
            deviation: None,
            source: s.row.citation(),
            basis: s.row.basis.name().to_string(),
        }];
        if let Some(dev) = s.if97_deviation {
            components.push(PropertyComponent {
                name: "IF97 - IAPWS-95".into(),
                u: d(s.u_if97),
                relative_expanded: None,
                region: None,
                deviation: Some(d(dev)),
                source: "IAPWS-IF97 (IAPWS R7-97(2012)) minus IAPWS-95 (IAPWS R6-95(2018)) at this state, both computed here; rectangular distribution of half-width |d| (JCGM 100:2008, 4.3.7)".into(),
                basis: "computed".into(),
            });
        }
        let u = d(s.u);
        let value = ctx.out(field, dim, s.value);
        properties.insert(
            s.property.name().to_string(),
            PropertyStatement {
                value,
                unit: unit.symbol.to_string(),
                u,
                expanded: pu::K_STATED * u,
                k: pu::K_STATED,
                relative: if value != 0.0 { u / value.abs() } else { 0.0 },
                components,
            },
        );
    }
    let mut undefined: BTreeMap<String, String> = all
        .undefined
        .iter()
        .map(|(p, why)| (p.name().to_string(), why.to_string()))
        .collect();
    for s in &all.statements {
        if let (Some(why), "IAPWS-IF97") = (s.deviation_note, f.name()) {
            undefined.insert(
                format!("{}_if97_deviation", s.property.name()),
                why.to_string(),
            );
        }
    }
    PropertyUncertainty {
        properties,
        undefined,
        note: PROPERTY_NOTE.to_string(),
    }
}

/// The property uncertainty columns of a `water.batch` (`property_uncertainty`): for each of
/// rho, w, cp and p_sat a column `u_<name>` of standard uncertainties in the property's unit
/// (NaN where a row failed or the release states none), with that unit. Rows are solved again
/// (the state is not kept by the row pipeline), on all cores above
/// [`super::rows::PARALLEL_THRESHOLD`] rows.
pub fn property_columns(
    ctx: &super::vocab::Ctx,
    opts: &crate::water::Options,
    f: crate::water::Formulation,
    a: &super::rows::InputColumn,
    b: &super::rows::InputColumn,
) -> Vec<(String, Vec<f64>, String)> {
    use crate::water::uncertainty::{of_state, Property};
    use crate::water::{pairs::given_from, solve, Field};
    let (fa, fb) = (Field::parse(a.name), Field::parse(b.name));
    let row = |i: usize| -> [f64; 4] {
        let mut out = [f64::NAN; 4];
        let (Some(fa), Some(fb)) = (fa, fb) else {
            return out;
        };
        let st =
            given_from(&[(fa, a.values[i]), (fb, b.values[i])]).and_then(|g| solve(g, opts, f));
        if let Ok(st) = st {
            for s in of_state(&st, f).statements {
                let k = Property::ALL
                    .iter()
                    .position(|p| *p == s.property)
                    .unwrap_or(0);
                let (field, dim) = property_dim(s.property);
                out[k] = s.u / ctx.out_unit(field, dim).scale();
            }
        }
        out
    };
    let n = a.len().min(b.len());
    let rows: Vec<[f64; 4]> = if n >= super::rows::PARALLEL_THRESHOLD {
        (0..n).into_par_iter().map(row).collect()
    } else {
        (0..n).map(row).collect()
    };
    Property::ALL
        .iter()
        .enumerate()
        .map(|(k, p)| {
            let (field, dim) = property_dim(*p);
            (
                format!("u_{}", p.name()),
                rows.iter().map(|r| r[k]).collect(),
                ctx.unit(field, dim).to_string(),
            )
        })
        .collect()
}

// ------------------------------------------------------------------------ Monte Carlo

/// The coverage probability of a coverage factor for a normal distribution, erf(k / sqrt 2),
/// by Abramowitz and Stegun 7.1.26 (absolute error below 1.5e-7).
pub fn coverage_probability(k: f64) -> f64 {
    let x = k / std::f64::consts::SQRT_2;
    let t = 1.0 / (1.0 + 0.327_591_1 * x);
    let poly = t
        * (0.254_829_592
            + t * (-0.284_496_736
                + t * (1.421_413_741 + t * (-1.453_152_027 + t * 1.061_405_429))));
    1.0 - poly * (-x * x).exp()
}

/// SplitMix64 (Steele, Lea and Flood 2014), to seed the generator.
fn splitmix64(state: &mut u64) -> u64 {
    *state = state.wrapping_add(0x9E37_79B9_7F4A_7C15);
    let mut z = *state;
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// xoshiro256** (Blackman and Vigna 2018) with normal deviates by the Box-Muller transform.
pub struct Normal {
    s: [u64; 4],
    spare: Option<f64>,
}

impl Normal {
    /// A generator seeded from `seed` through SplitMix64.
    pub fn new(seed: u64) -> Normal {
        let mut sm = seed;
        Normal {
            s: [
                splitmix64(&mut sm),
                splitmix64(&mut sm),
                splitmix64(&mut sm),
                splitmix64(&mut sm),
            ],
            spare: None,
        }
    }

    fn next_u64(&mut self) -> u64 {
        let s = &mut self.s;
        let result = s[1].wrapping_mul(5).rotate_left(7).wrapping_mul(9);
        let t = s[1] << 17;
        s[2] ^= s[0];
        s[3] ^= s[1];
        s[1] ^= s[2];
        s[0] ^= s[3];
        s[2] ^= t;
        s[3] = s[3].rotate_left(45);
        result
    }

    /// A uniform deviate in (0, 1].
    fn uniform(&mut self) -> f64 {
        ((self.next_u64() >> 11) + 1) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// A standard normal deviate.
    pub fn deviate(&mut self) -> f64 {
        if let Some(z) = self.spare.take() {
            return z;
        }
        let (u1, u2) = (self.uniform(), self.uniform());
        let r = (-2.0 * u1.ln()).sqrt();
        let a = 2.0 * std::f64::consts::PI * u2;
        self.spare = Some(r * a.sin());
        r * a.cos()
    }
}

/// Runs the samples; returns per field its values (NaN where a sample failed or lacks it), the
/// number of failed samples and the first failure's message.
fn monte_carlo_run(
    m: &Method,
    params: &Value,
    inputs: &[Input],
    chol: &[Vec<f64>],
    fields: &[(String, f64)],
    samples: u64,
    seed: u64,
) -> (Vec<Vec<f64>>, u64, Option<String>) {
    let n = inputs.len();
    let mut gen = Normal::new(seed);
    let draws: Vec<Vec<f64>> = (0..samples)
        .map(|_| {
            let z: Vec<f64> = (0..n).map(|_| gen.deviate()).collect();
            (0..n)
                .map(|i| {
                    let corr: f64 = (0..=i).map(|j| chol[i][j] * z[j]).sum();
                    inputs[i].x + inputs[i].u * corr
                })
                .collect()
        })
        .collect();
    let results: Vec<Result<Vec<f64>, String>> = draws
        .par_iter()
        .map(|x| {
            let mut p = params.clone();
            for (i, input) in inputs.iter().enumerate() {
                if let Some(slot) = get_mut(&mut p, &input.full) {
                    *slot = input.value_at(x[i]);
                }
            }
            m.eval(p)
                .map(|r| {
                    fields
                        .iter()
                        .map(|(f, _)| number_at(&r, f).unwrap_or(f64::NAN))
                        .collect()
                })
                .map_err(|e| e.message)
        })
        .collect();
    let mut per_field = vec![Vec::with_capacity(samples as usize); fields.len()];
    let mut failed = 0;
    let mut first = None;
    for r in results {
        match r {
            Ok(vals) => {
                for (f, v) in vals.into_iter().enumerate() {
                    per_field[f].push(v);
                }
            }
            Err(e) => {
                failed += 1;
                first.get_or_insert(e);
            }
        }
    }
    (per_field, failed, first)
}

/// Mean, standard deviation and the probabilistically symmetric coverage interval for
/// probability `p` (JCGM 101:2008, 7.7.1) of the finite values.
fn mc_field(values: &mut Vec<f64>, p: f64) -> Option<MonteCarloField> {
    values.retain(|x| x.is_finite());
    let m = values.len();
    if m < 2 {
        return None;
    }
    let mean = values.iter().sum::<f64>() / m as f64;
    let var = values.iter().map(|x| (x - mean) * (x - mean)).sum::<f64>() / (m - 1) as f64;
    values.sort_by(f64::total_cmp);
    let q = ((p * m as f64) + 0.5).floor() as usize;
    let q = q.clamp(1, m);
    let r = (m - q) / 2;
    Some(MonteCarloField {
        mean,
        u: var.sqrt(),
        low: values[r],
        high: values[(r + q - 1).min(m - 1)],
        samples: m as u64,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn split_value_reads_numbers_and_units() {
        assert_eq!(split_value("42 barg"), Some((42.0, "barg")));
        assert_eq!(split_value("1e-3 MPa"), Some((1e-3, "MPa")));
        assert_eq!(split_value("0.5 %"), Some((0.5, "%")));
        assert_eq!(split_value("-1.5"), Some((-1.5, "")));
        assert_eq!(split_value("1 K"), Some((1.0, "K")));
        assert_eq!(split_value("K"), None);
    }

    /// A positive semi-definite matrix factors (a zero pivot allowed); an indefinite one not.
    #[test]
    fn cholesky_accepts_semi_definite_and_refuses_indefinite() {
        let full = vec![vec![1.0, 1.0], vec![1.0, 1.0]];
        let l = cholesky(&full).unwrap();
        assert_eq!(l[1][0], 1.0);
        let bad = vec![
            vec![1.0, 0.9, -0.9],
            vec![0.9, 1.0, 0.9],
            vec![-0.9, 0.9, 1.0],
        ];
        assert!(cholesky(&bad).is_none());
    }

    /// erf(2 / sqrt 2) = 0.954499736... (the normal coverage of +-2 sigma; common practice).
    #[test]
    fn coverage_of_k2() {
        assert!((coverage_probability(2.0) - 0.954_499_736).abs() < 2e-7);
        assert!((coverage_probability(1.0) - 0.682_689_492).abs() < 2e-7);
    }

    /// The generator's deviates have mean 0 and variance 1 to their statistical uncertainty,
    /// and a seed gives the same stream.
    #[test]
    fn normal_deviates() {
        let n = 200_000;
        let mut g = Normal::new(7);
        let xs: Vec<f64> = (0..n).map(|_| g.deviate()).collect();
        let mean = xs.iter().sum::<f64>() / n as f64;
        let var = xs.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1) as f64;
        assert!(mean.abs() < 4.0 / (n as f64).sqrt(), "{mean}");
        assert!((var - 1.0).abs() < 4.0 * (2.0 / n as f64).sqrt(), "{var}");
        let mut h = Normal::new(7);
        assert_eq!(h.deviate(), xs[0]);
        assert_eq!(h.deviate(), xs[1]);
    }
}
