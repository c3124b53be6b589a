//! Property methods: `water.state`, `water.batch`, `water.saturation`, `water.curve`, and the wire
//! types they share with the component methods (values with units, the state pair, the full
//! state object).
//!
//! Units: every numeric input is a number in the request's preset (`engineering` by default) or
//! a string with its unit; every result is in the preset and lists the unit of every field.
//!
//! Invariant: this module only converts and shapes; the physics is `crate::water::state`.

use super::MethodSpec;
use crate::error::{Error, Result};
use crate::units::{self, Dim, Preset, AMBIENT_DEFAULT_MPA};
use crate::water::state::{self, Given, Options, Phase, State};
use schemars::JsonSchema;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// The methods of this module, for the registry.
pub fn methods() -> Vec<MethodSpec> {
    vec![
        MethodSpec::new::<StateParams, StateResult>(
            "water.state",
            "Every property of one state of water or steam from two properties that fix it",
            "Give two of p, T, h, s, u, v, rho, x in `given` (numbers in the `units` preset, or strings with a unit such as \"42 barg\" or \"410 degC\"). Returns p, T, rho, v, u, h, s, cp, cv, w, x and derived properties in the preset's units, with the phase and the IAPWS-IF97 region. Properties that are not defined for the state (cp, cv, w of a wet mixture) are null and `undefined` says why.",
            water_state,
        ),
        MethodSpec::new::<BatchParams, BatchResult>(
            "water.batch",
            "Properties for columns of states (historian data): one row per state",
            "Give two columns in `given` (arrays of equal length, numbers in the preset's units or strings with units) and the properties wanted. A bad row gives null in its columns and an entry in `errors`; it never fails the whole call.",
            water_batch,
        ),
        MethodSpec::new::<SaturationParams, SaturationResult>(
            "water.saturation",
            "Saturated liquid and vapour at a temperature or a pressure",
            "Give either T or p. Returns the saturation pressure and temperature, the full saturated-liquid and saturated-vapour states, and the latent enthalpy and entropy of vaporisation.",
            water_saturation,
        ),
        MethodSpec::new::<CurveParams, CurveResult>(
            "water.curve",
            "Points for charts: the saturation dome, an isobar, an isotherm or an isentrope",
            "Returns series of (T, s, h, p, v) points for T-s, h-s and p-h charts. The dome has two series (saturated liquid and saturated vapour); a line crossing the dome includes its saturation points.",
            water_curve,
        ),
    ]
}

/// A numeric input: a number in the request's unit preset, or a string with its unit.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(untagged)]
pub enum Input {
    /// A number in the request's unit preset.
    Number(f64),
    /// A number with a unit, e.g. "42 barg", "410 degC", "1200 Btu/lb", "90 t/h".
    Text(String),
}

/// Context shared by every conversion of one request: preset and ambient pressure.
#[derive(Debug, Clone, Copy)]
pub struct Ctx {
    /// Output and bare-number preset.
    pub preset: Preset,
    /// Ambient pressure for gauge units, MPa.
    pub ambient: f64,
}

impl Ctx {
    /// Builds the context from the request's `units` and `ambient`.
    pub fn new(units: Option<&str>, ambient: Option<&Input>) -> Result<Ctx> {
        let preset = match units {
            Some(u) => Preset::parse(u)?,
            None => Preset::Engineering,
        };
        let mut ctx = Ctx {
            preset,
            ambient: AMBIENT_DEFAULT_MPA,
        };
        if let Some(a) = ambient {
            let amb = ctx.value("ambient", Dim::Pressure, a)?;
            if !(amb > 0.0 && amb <= 0.2) {
                return Err(Error::invalid(format!(
                    "ambient = {amb} MPa is not a plausible ambient pressure (0 to 0.2 MPa absolute)"
                )));
            }
            ctx.ambient = amb;
        }
        Ok(ctx)
    }

    /// Converts an input to internal units.
    pub fn value(&self, quantity: &str, dim: Dim, input: &Input) -> Result<f64> {
        let parsed = match input {
            Input::Number(x) => units::parse_number(quantity, dim, *x, self.preset, self.ambient)?,
            Input::Text(t) => units::parse_text(quantity, dim, t, self.preset, self.ambient)?,
        };
        Ok(parsed.internal)
    }

    /// Converts an internal value to the preset's unit (NaN becomes None).
    pub fn out(&self, dim: Dim, internal: f64) -> Option<f64> {
        if internal.is_finite() {
            Some(self.preset.from_internal(dim, internal))
        } else {
            None
        }
    }

    /// The preset's unit symbol for a dimension.
    pub fn unit(&self, dim: Dim) -> &'static str {
        self.preset.unit(dim).symbol
    }
}

/// Two properties that fix a state. Exactly two fields must be given.
#[derive(Debug, Clone, Default, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct GivenPair {
    /// Pressure (absolute unless a gauge unit such as barg or psig is written).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub p: Option<Input>,
    /// Temperature.
    #[serde(rename = "T", default, skip_serializing_if = "Option::is_none")]
    pub t: Option<Input>,
    /// Specific enthalpy.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub h: Option<Input>,
    /// Specific entropy.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub s: Option<Input>,
    /// Specific internal energy.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub u: Option<Input>,
    /// Specific volume.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub v: Option<Input>,
    /// Density.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rho: Option<Input>,
    /// Vapour mass fraction (quality) of a wet state, 0 to 1 (or "91 %").
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub x: Option<Input>,
}

/// The pair names accepted, for messages.
pub const PAIRS: &str = "(p,T), (p,h), (p,s), (h,s), (T,x), (p,x), (T,h), (T,s), (p,v), (p,rho), (T,v), (T,rho), (u,v), (u,rho), (p,u)";

impl GivenPair {
    /// Converts to a physics pair in internal units.
    pub fn to_given(&self, ctx: &Ctx) -> Result<Given> {
        let fields: [(&str, &Option<Input>, Dim); 8] = [
            ("p", &self.p, Dim::Pressure),
            ("T", &self.t, Dim::Temperature),
            ("h", &self.h, Dim::SpecificEnergy),
            ("s", &self.s, Dim::SpecificEntropy),
            ("u", &self.u, Dim::SpecificEnergy),
            ("v", &self.v, Dim::SpecificVolume),
            ("rho", &self.rho, Dim::Density),
            ("x", &self.x, Dim::Dimensionless),
        ];
        let mut vals: BTreeMap<&str, f64> = BTreeMap::new();
        for (name, value, dim) in fields {
            if let Some(input) = value {
                vals.insert(name, ctx.value(name, dim, input)?);
            }
        }
        pair_from_values(&vals)
    }
}

/// Builds a physics pair from named internal values (exactly two).
pub fn pair_from_values(vals: &BTreeMap<&str, f64>) -> Result<Given> {
    if vals.len() != 2 {
        let names: Vec<&str> = vals.keys().copied().collect();
        return Err(Error::invalid(format!(
            "give exactly two properties to fix a state (got {}: {}); accepted pairs: {PAIRS}",
            vals.len(),
            if names.is_empty() {
                "none".to_string()
            } else {
                names.join(", ")
            }
        )));
    }
    let g = |k: &str| vals.get(k).copied();
    let inv = |rho: f64| -> Result<f64> {
        if rho > 0.0 {
            Ok(1.0 / rho)
        } else {
            Err(Error::out_of_range(
                "rho",
                rho,
                0.0,
                "kg/m3",
                crate::error::Bound::Below,
                "IAPWS-IF97",
            ))
        }
    };
    let pair = if let (Some(p), Some(t)) = (g("p"), g("T")) {
        Given::PT(p, t)
    } else if let (Some(p), Some(h)) = (g("p"), g("h")) {
        Given::PH(p, h)
    } else if let (Some(p), Some(s)) = (g("p"), g("s")) {
        Given::PS(p, s)
    } else if let (Some(h), Some(s)) = (g("h"), g("s")) {
        Given::HS(h, s)
    } else if let (Some(t), Some(x)) = (g("T"), g("x")) {
        Given::TX(t, x)
    } else if let (Some(p), Some(x)) = (g("p"), g("x")) {
        Given::PX(p, x)
    } else if let (Some(t), Some(h)) = (g("T"), g("h")) {
        Given::TH(t, h)
    } else if let (Some(t), Some(s)) = (g("T"), g("s")) {
        Given::TS(t, s)
    } else if let (Some(p), Some(v)) = (g("p"), g("v")) {
        Given::PV(p, v)
    } else if let (Some(p), Some(rho)) = (g("p"), g("rho")) {
        Given::PV(p, inv(rho)?)
    } else if let (Some(t), Some(v)) = (g("T"), g("v")) {
        Given::TV(t, v)
    } else if let (Some(t), Some(rho)) = (g("T"), g("rho")) {
        Given::TV(t, inv(rho)?)
    } else if let (Some(u), Some(v)) = (g("u"), g("v")) {
        Given::UV(u, v)
    } else if let (Some(u), Some(rho)) = (g("u"), g("rho")) {
        Given::UV(u, inv(rho)?)
    } else if let (Some(p), Some(u)) = (g("p"), g("u")) {
        Given::PU(p, u)
    } else {
        let names: Vec<&str> = vals.keys().copied().collect();
        return Err(Error::invalid(format!(
            "the pair ({}) is not supported; accepted pairs: {PAIRS}",
            names.join(",")
        )));
    };
    Ok(pair)
}

/// Options shared by every state request.
#[derive(Debug, Clone, Default, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct SolveFlags {
    /// Return the raw IF97 backward-equation answer without Newton refinement (only for
    /// (p,h), (p,s) and (h,s); the answer then reproduces the inputs only to the backward
    /// equations' stated consistency).
    #[serde(default)]
    pub backward_only: bool,
    /// Allow the IF97 metastable-vapour equation for (p,T) below the saturation temperature
    /// (p <= 10 MPa). Refused otherwise.
    #[serde(default)]
    pub metastable: bool,
    /// When a pair admits two states (e.g. (T,h) of a compressed liquid and a wet mixture),
    /// return the one in this phase: "liquid", "vapour", "wet" or "supercritical".
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub prefer: Option<String>,
}

impl SolveFlags {
    /// Physics options.
    pub fn options(&self) -> Result<Options> {
        let prefer = match self.prefer.as_deref() {
            None => None,
            Some("liquid") => Some(Phase::Liquid),
            Some("vapour") | Some("vapor") => Some(Phase::Vapour),
            Some("wet") => Some(Phase::Wet),
            Some("supercritical") => Some(Phase::Supercritical),
            Some(other) => {
                return Err(Error::invalid(format!(
                "prefer = '{other}' is not a phase; accepted: liquid, vapour, wet, supercritical"
            )))
            }
        };
        Ok(Options {
            backward_only: self.backward_only,
            metastable: self.metastable,
            prefer,
            ..Options::STANDARD
        })
    }
}

fn check_formulation(f: Option<&str>) -> Result<()> {
    match f {
        None | Some("if97") | Some("IAPWS-IF97") => Ok(()),
        Some(other) => Err(Error::invalid(format!(
            "formulation '{other}' is not available; accepted: if97"
        ))),
    }
}

/// Parameters of `water.state`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct StateParams {
    /// Exactly two properties that fix the state.
    pub given: GivenPair,
    /// Unit preset of bare numbers and of the answer: "engineering" (default: MPa, degC,
    /// kJ/kg, kJ/(kg K)), "si" (Pa, K, J/kg, J/(kg K)) or "us" (psia, degF, Btu/lb, Btu/(lb F)).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<String>,
    /// Ambient pressure for gauge units (barg, psig, kPag); default 101.325 kPa.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
    /// Property formulation: "if97" (IAPWS-IF97, the default and only one in this version).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub formulation: Option<String>,
    /// Solver switches.
    #[serde(flatten)]
    pub flags: SolveFlags,
}

/// One full state of water or steam, in the request's unit preset (see `units`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct StateResult {
    /// Pressure (absolute).
    pub p: Option<f64>,
    /// Temperature.
    #[serde(rename = "T")]
    pub t: Option<f64>,
    /// Density.
    pub rho: Option<f64>,
    /// Specific volume.
    pub v: Option<f64>,
    /// Specific internal energy.
    pub u: Option<f64>,
    /// Specific enthalpy.
    pub h: Option<f64>,
    /// Specific entropy.
    pub s: Option<f64>,
    /// Specific isobaric heat capacity (null for wet states).
    pub cp: Option<f64>,
    /// Specific isochoric heat capacity (null for wet states).
    pub cv: Option<f64>,
    /// Speed of sound (null for wet states).
    pub w: Option<f64>,
    /// Vapour mass fraction of a wet state (null for single-phase states).
    pub x: Option<f64>,
    /// Isentropic exponent w^2 / (p v) (null for wet states).
    pub kappa: Option<f64>,
    /// Joule-Thomson coefficient (dT/dp)_h (null for wet states).
    pub mu_jt: Option<f64>,
    /// Isobaric cubic expansion coefficient (null for wet states).
    pub alpha_v: Option<f64>,
    /// Isothermal compressibility (null for wet states).
    pub kappa_t: Option<f64>,
    /// Compressibility factor Z = p v / (R T).
    pub z: Option<f64>,
    /// Superheat above the saturation temperature at the state's pressure (vapour below the
    /// critical pressure only; null otherwise).
    pub superheat: Option<f64>,
    /// Phase: "liquid", "vapour", "wet" or "supercritical".
    pub phase: String,
    /// IAPWS-IF97 region: 1, 2, 3, 4 (wet) or 5.
    pub region: u8,
    /// Whether the metastable-vapour equation was used.
    pub metastable: bool,
    /// Why a null property is not given, by field name.
    pub undefined: BTreeMap<String, String>,
    /// The unit of every numeric field, and the preset's name under "preset".
    pub units: BTreeMap<String, String>,
    /// Ambient pressure used for gauge units, in the preset's pressure unit.
    pub ambient: f64,
    /// The formulation that produced the numbers.
    pub formulation: String,
}

/// Dimensions of every numeric field of [`StateResult`].
pub const STATE_FIELDS: [(&str, Dim); 17] = [
    ("p", Dim::Pressure),
    ("T", Dim::Temperature),
    ("rho", Dim::Density),
    ("v", Dim::SpecificVolume),
    ("u", Dim::SpecificEnergy),
    ("h", Dim::SpecificEnergy),
    ("s", Dim::SpecificEntropy),
    ("cp", Dim::SpecificEntropy),
    ("cv", Dim::SpecificEntropy),
    ("w", Dim::Speed),
    ("x", Dim::Dimensionless),
    ("kappa", Dim::Dimensionless),
    ("mu_jt", Dim::TemperaturePerPressure),
    ("alpha_v", Dim::InverseTemperature),
    ("kappa_t", Dim::InversePressure),
    ("z", Dim::Dimensionless),
    ("superheat", Dim::TemperatureDifference),
];

/// Internal value of a named field of a state (NaN where undefined).
pub fn field_internal(st: &State, name: &str) -> Option<f64> {
    let p = &st.props;
    Some(match name {
        "p" => p.p,
        "T" => p.t,
        "rho" => p.rho,
        "v" => p.v,
        "u" => p.u,
        "h" => p.h,
        "s" => p.s,
        "cp" => p.cp,
        "cv" => p.cv,
        "w" => p.w,
        "x" => st.x.unwrap_or(f64::NAN),
        "kappa" => p.kappa,
        "mu_jt" => p.mu_jt,
        "alpha_v" => p.alpha_v,
        "kappa_t" => p.kappa_t,
        "z" => p.z,
        "superheat" => superheat(st),
        _ => return None,
    })
}

fn superheat(st: &State) -> f64 {
    if st.phase == Phase::Vapour && st.props.p < state::P_C {
        if let Ok((ts, _, _)) = state::saturation_p(st.props.p) {
            return st.props.t - ts;
        }
    }
    f64::NAN
}

fn dim_of(name: &str) -> Option<Dim> {
    STATE_FIELDS
        .iter()
        .find(|(n, _)| *n == name)
        .map(|(_, d)| *d)
}

/// Shapes a solved state for the wire.
pub fn state_result(st: &State, ctx: &Ctx) -> StateResult {
    let o = |name: &str| field_internal(st, name).and_then(|v| ctx.out(dim_of(name).unwrap(), v));
    let mut undefined = BTreeMap::new();
    if st.phase == Phase::Wet {
        for f in ["cp", "cv", "w", "kappa", "mu_jt", "alpha_v", "kappa_t"] {
            undefined.insert(
                f.to_string(),
                "not defined for a two-phase (wet) mixture".to_string(),
            );
        }
        undefined.insert(
            "superheat".into(),
            "a wet mixture is at the saturation temperature".into(),
        );
    } else {
        undefined.insert(
            "x".into(),
            format!(
                "single-phase {} state: the quality is defined only for wet mixtures",
                st.phase.name()
            ),
        );
        if o("superheat").is_none() {
            undefined.insert(
                "superheat".into(),
                "defined for vapour below the critical pressure only".into(),
            );
        }
    }
    let mut units_map = BTreeMap::new();
    for (name, dim) in STATE_FIELDS {
        units_map.insert(name.to_string(), ctx.unit(dim).to_string());
    }
    units_map.insert("ambient".into(), ctx.unit(Dim::Pressure).to_string());
    units_map.insert("preset".into(), ctx.preset.name().to_string());
    StateResult {
        p: o("p"),
        t: o("T"),
        rho: o("rho"),
        v: o("v"),
        u: o("u"),
        h: o("h"),
        s: o("s"),
        cp: o("cp"),
        cv: o("cv"),
        w: o("w"),
        x: o("x"),
        kappa: o("kappa"),
        mu_jt: o("mu_jt"),
        alpha_v: o("alpha_v"),
        kappa_t: o("kappa_t"),
        z: o("z"),
        superheat: o("superheat"),
        phase: st.phase.name().to_string(),
        region: st.region.number(),
        metastable: st.metastable,
        undefined,
        units: units_map,
        ambient: ctx.preset.from_internal(Dim::Pressure, ctx.ambient),
        formulation: "IAPWS-IF97".to_string(),
    }
}

fn water_state(p: StateParams) -> Result<StateResult> {
    check_formulation(p.formulation.as_deref())?;
    let ctx = Ctx::new(p.units.as_deref(), p.ambient.as_ref())?;
    let given = p.given.to_given(&ctx)?;
    let st = state::solve(given, &p.flags.options()?)?;
    Ok(state_result(&st, &ctx))
}

/// A column of inputs.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(untagged)]
pub enum Column {
    /// One value per row: numbers in the preset's units or strings with units.
    Values(Vec<Input>),
}

/// Parameters of `water.batch`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct BatchParams {
    /// Exactly two columns of equal length, keyed by property name (p, T, h, s, u, v, rho, x).
    pub given: BTreeMap<String, Column>,
    /// Properties wanted, e.g. ["h", "s"]. Any numeric field of `water.state` plus "phase"
    /// and "region". Default: ["T", "p", "h", "s", "v", "x"].
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub want: Option<Vec<String>>,
    /// Unit preset (see `water.state`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<String>,
    /// Ambient pressure for gauge units (default 101.325 kPa).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
    /// Property formulation ("if97").
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub formulation: Option<String>,
    /// Solver switches.
    #[serde(flatten)]
    pub flags: SolveFlags,
}

/// An error of one batch row.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct RowError {
    /// The error code (see the error table).
    pub code: i64,
    /// One-line message.
    pub message: String,
}

/// Result of `water.batch`: one column per wanted property, plus per-row errors.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct BatchResult {
    /// Result columns keyed by property: numbers (null where undefined or failed); "phase"
    /// holds strings and "region" integers.
    pub columns: BTreeMap<String, Vec<serde_json::Value>>,
    /// One entry per row: null, or the row's error.
    pub errors: Vec<Option<RowError>>,
    /// Number of rows.
    pub rows: usize,
    /// Number of failed rows.
    pub failed: usize,
    /// The unit of every result column.
    pub units: BTreeMap<String, String>,
}

/// Most rows in one `water.batch` call by default (`serve --max-batch-rows` changes the limit in
/// force, see [`super::limits::max_batch_rows`]).
pub const MAX_BATCH_ROWS: usize = super::limits::MAX_BATCH_ROWS as usize;

fn water_batch(p: BatchParams) -> Result<BatchResult> {
    check_formulation(p.formulation.as_deref())?;
    let ctx = Ctx::new(p.units.as_deref(), p.ambient.as_ref())?;
    let opts = p.flags.options()?;
    if p.given.len() != 2 {
        return Err(Error::invalid(format!(
            "give exactly two input columns in `given` (got {}); accepted pairs: {PAIRS}",
            p.given.len()
        )));
    }
    let want: Vec<String> = p.want.clone().unwrap_or_else(|| {
        ["T", "p", "h", "s", "v", "x"]
            .iter()
            .map(|s| s.to_string())
            .collect()
    });
    if want.is_empty() {
        return Err(Error::invalid("want is empty: name at least one property"));
    }
    for w in &want {
        if dim_of(w).is_none() && w != "phase" && w != "region" {
            return Err(Error::invalid(format!(
                "want: '{w}' is not a property; accepted: {}, phase, region",
                STATE_FIELDS.map(|f| f.0).join(", ")
            )));
        }
    }
    let cols: Vec<(&str, Dim, &Vec<Input>)> = p
        .given
        .iter()
        .map(|(k, Column::Values(v))| {
            let dim = match k.as_str() {
                "p" => Ok(Dim::Pressure),
                "T" => Ok(Dim::Temperature),
                "h" | "u" => Ok(Dim::SpecificEnergy),
                "s" => Ok(Dim::SpecificEntropy),
                "v" => Ok(Dim::SpecificVolume),
                "rho" => Ok(Dim::Density),
                "x" => Ok(Dim::Dimensionless),
                other => Err(Error::invalid(format!(
                    "given: '{other}' is not an input property; accepted: p, T, h, s, u, v, rho, x"
                ))),
            }?;
            Ok((k.as_str(), dim, v))
        })
        .collect::<Result<_>>()?;
    let n = cols[0].2.len();
    if cols[1].2.len() != n {
        return Err(Error::invalid(format!(
            "the input columns differ in length: {} has {} rows, {} has {}",
            cols[0].0,
            n,
            cols[1].0,
            cols[1].2.len()
        )));
    }
    let max_rows = super::limits::max_batch_rows();
    if n > max_rows {
        return Err(Error::LimitExceeded {
            what: "rows in one water.batch call".into(),
            limit: max_rows as f64,
            value: n as f64,
        });
    }
    let mut columns: BTreeMap<String, Vec<serde_json::Value>> = want
        .iter()
        .map(|w| (w.clone(), Vec::with_capacity(n)))
        .collect();
    let mut errors = Vec::with_capacity(n);
    let mut failed = 0;
    for i in 0..n {
        let row = (|| -> Result<State> {
            let mut vals = BTreeMap::new();
            for (name, dim, col) in &cols {
                vals.insert(*name, ctx.value(name, *dim, &col[i])?);
            }
            state::solve(pair_from_values(&vals)?, &opts)
        })();
        match row {
            Ok(st) => {
                for w in &want {
                    let v = match w.as_str() {
                        "phase" => serde_json::Value::from(st.phase.name()),
                        "region" => serde_json::Value::from(st.region.number()),
                        name => match field_internal(&st, name)
                            .and_then(|x| ctx.out(dim_of(name).unwrap(), x))
                        {
                            Some(x) => serde_json::Value::from(x),
                            None => serde_json::Value::Null,
                        },
                    };
                    columns.get_mut(w).unwrap().push(v);
                }
                errors.push(None);
            }
            Err(e) => {
                failed += 1;
                for w in &want {
                    columns.get_mut(w).unwrap().push(serde_json::Value::Null);
                }
                let api: super::ApiError = e.into();
                errors.push(Some(RowError {
                    code: api.code,
                    message: format!("row {i}: {}", api.message),
                }));
            }
        }
    }
    let mut units_map = BTreeMap::new();
    for w in &want {
        if let Some(d) = dim_of(w) {
            units_map.insert(w.clone(), ctx.unit(d).to_string());
        }
    }
    units_map.insert("preset".into(), ctx.preset.name().to_string());
    Ok(BatchResult {
        columns,
        errors,
        rows: n,
        failed,
        units: units_map,
    })
}

/// Parameters of `water.saturation`: give T or p.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct SaturationParams {
    /// Saturation temperature (273.15 K to 647.096 K).
    #[serde(rename = "T", default, skip_serializing_if = "Option::is_none")]
    pub t: Option<Input>,
    /// Saturation pressure (611.213 Pa to 22.064 MPa).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub p: Option<Input>,
    /// Unit preset (see `water.state`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<String>,
    /// Ambient pressure for gauge units (default 101.325 kPa).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
}

/// Result of `water.saturation`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct SaturationResult {
    /// Saturation pressure.
    pub p: f64,
    /// Saturation temperature.
    #[serde(rename = "T")]
    pub t: f64,
    /// Saturated liquid (x = 0 side).
    pub liquid: StateResult,
    /// Saturated vapour (x = 1 side).
    pub vapour: StateResult,
    /// Latent enthalpy of vaporisation h'' - h'.
    pub h_fg: f64,
    /// Entropy of vaporisation s'' - s'.
    pub s_fg: f64,
    /// Volume change on vaporisation v'' - v'.
    pub v_fg: f64,
    /// Units of p, T, h_fg, s_fg, v_fg.
    pub units: BTreeMap<String, String>,
}

fn water_saturation(p: SaturationParams) -> Result<SaturationResult> {
    let ctx = Ctx::new(p.units.as_deref(), p.ambient.as_ref())?;
    let (ps, ts, l, v) = match (&p.t, &p.p) {
        (Some(t), None) => {
            let t = ctx.value("T", Dim::Temperature, t)?;
            let (ps, l, v) = state::saturation_t(t)?;
            (ps, t, l, v)
        }
        (None, Some(pp)) => {
            let pp = ctx.value("p", Dim::Pressure, pp)?;
            let (ts, l, v) = state::saturation_p(pp)?;
            (pp, ts, l, v)
        }
        _ => {
            return Err(Error::invalid(
                "give exactly one of T or p for a saturation state",
            ))
        }
    };
    let liquid = state::at_tx(ts, 0.0).map(|mut s| {
        s.props = l;
        s
    })?;
    let vapour = state::at_tx(ts, 1.0).map(|mut s| {
        s.props = v;
        s
    })?;
    let to_state = |st: State, phase: Phase| {
        let mut st = st;
        st.phase = phase;
        st.x = Some(if phase == Phase::Liquid { 0.0 } else { 1.0 });
        let mut r = state_result(&st, &ctx);
        r.phase = if phase == Phase::Liquid {
            "liquid".into()
        } else {
            "vapour".into()
        };
        r.undefined.remove("cp");
        r.undefined.remove("cv");
        r.undefined.remove("w");
        r.undefined.remove("kappa");
        r.undefined.remove("mu_jt");
        r.undefined.remove("alpha_v");
        r.undefined.remove("kappa_t");
        r.region = if ts <= state::T_13 {
            if phase == Phase::Liquid {
                1
            } else {
                2
            }
        } else {
            3
        };
        let o =
            |name: &str| field_internal(&st, name).and_then(|x| ctx.out(dim_of(name).unwrap(), x));
        r.cp = o("cp");
        r.cv = o("cv");
        r.w = o("w");
        r.kappa = o("kappa");
        r.mu_jt = o("mu_jt");
        r.alpha_v = o("alpha_v");
        r.kappa_t = o("kappa_t");
        r
    };
    let mut units_map = BTreeMap::new();
    units_map.insert("p".into(), ctx.unit(Dim::Pressure).into());
    units_map.insert("T".into(), ctx.unit(Dim::Temperature).into());
    units_map.insert("h_fg".into(), ctx.unit(Dim::SpecificEnergy).into());
    units_map.insert("s_fg".into(), ctx.unit(Dim::SpecificEntropy).into());
    units_map.insert("v_fg".into(), ctx.unit(Dim::SpecificVolume).into());
    units_map.insert("preset".into(), ctx.preset.name().into());
    let pre = ctx.preset;
    Ok(SaturationResult {
        p: pre.from_internal(Dim::Pressure, ps),
        t: pre.from_internal(Dim::Temperature, ts),
        h_fg: pre.from_internal(Dim::SpecificEnergy, v.h - l.h),
        s_fg: pre.from_internal(Dim::SpecificEntropy, v.s - l.s),
        v_fg: pre.from_internal(Dim::SpecificVolume, v.v - l.v),
        liquid: to_state(liquid, Phase::Liquid),
        vapour: to_state(vapour, Phase::Vapour),
        units: units_map,
    })
}

/// Parameters of `water.curve`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct CurveParams {
    /// "dome" (saturation lines), "isobar" (give p), "isotherm" (give T) or "isentrope" (give s).
    pub kind: String,
    /// Pressure of an isobar.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub p: Option<Input>,
    /// Temperature of an isotherm.
    #[serde(rename = "T", default, skip_serializing_if = "Option::is_none")]
    pub t: Option<Input>,
    /// Entropy of an isentrope.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub s: Option<Input>,
    /// Start of the range: a temperature for isobars and the dome, a pressure for isotherms
    /// and isentropes. Defaults cover the IF97 range.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub from: Option<Input>,
    /// End of the range (same quantity as `from`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub to: Option<Input>,
    /// Number of points per series (2 to 2000, default 60).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub points: Option<usize>,
    /// Unit preset (see `water.state`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<String>,
}

/// One series of chart points.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct Series {
    /// What the series is, e.g. "saturated liquid" or "isobar 1 MPa".
    pub name: String,
    /// Temperatures.
    #[serde(rename = "T")]
    pub t: Vec<f64>,
    /// Entropies.
    pub s: Vec<f64>,
    /// Enthalpies.
    pub h: Vec<f64>,
    /// Pressures.
    pub p: Vec<f64>,
    /// Specific volumes.
    pub v: Vec<f64>,
}

/// Result of `water.curve`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct CurveResult {
    /// The series of points.
    pub series: Vec<Series>,
    /// Units of T, s, h, p, v.
    pub units: BTreeMap<String, String>,
}

struct SeriesBuilder<'a> {
    ctx: &'a Ctx,
    s: Series,
}

impl<'a> SeriesBuilder<'a> {
    fn new(ctx: &'a Ctx, name: String) -> Self {
        SeriesBuilder {
            ctx,
            s: Series {
                name,
                t: vec![],
                s: vec![],
                h: vec![],
                p: vec![],
                v: vec![],
            },
        }
    }
    fn push(&mut self, pr: &crate::water::Props) {
        let pre = self.ctx.preset;
        self.s.t.push(pre.from_internal(Dim::Temperature, pr.t));
        self.s.s.push(pre.from_internal(Dim::SpecificEntropy, pr.s));
        self.s.h.push(pre.from_internal(Dim::SpecificEnergy, pr.h));
        self.s.p.push(pre.from_internal(Dim::Pressure, pr.p));
        self.s.v.push(pre.from_internal(Dim::SpecificVolume, pr.v));
    }
}

fn water_curve(c: CurveParams) -> Result<CurveResult> {
    let ctx = Ctx::new(c.units.as_deref(), None)?;
    let n = c.points.unwrap_or(60);
    if !(2..=2000).contains(&n) {
        return Err(Error::invalid(format!("points = {n} is outside 2..2000")));
    }
    let opts = Options::STANDARD;
    let lin = |a: f64, b: f64, i: usize| a + (b - a) * i as f64 / (n - 1) as f64;
    let geo =
        |a: f64, b: f64, i: usize| (a.ln() + (b.ln() - a.ln()) * i as f64 / (n - 1) as f64).exp();
    let from = |dim: Dim, default: f64| -> Result<f64> {
        c.from
            .as_ref()
            .map(|x| ctx.value("from", dim, x))
            .unwrap_or(Ok(default))
    };
    let to = |dim: Dim, default: f64| -> Result<f64> {
        c.to.as_ref()
            .map(|x| ctx.value("to", dim, x))
            .unwrap_or(Ok(default))
    };
    let mut series = Vec::new();
    match c.kind.as_str() {
        "dome" => {
            let a = from(Dim::Temperature, state::T_MIN)?;
            let b = to(Dim::Temperature, state::T_C)?;
            let mut liq = SeriesBuilder::new(&ctx, "saturated liquid".into());
            let mut vap = SeriesBuilder::new(&ctx, "saturated vapour".into());
            for i in 0..n {
                let t = lin(a, b, i);
                let (_, l, v) = state::saturation_t(t)?;
                liq.push(&l);
                vap.push(&v);
            }
            series.push(liq.s);
            series.push(vap.s);
        }
        "isobar" => {
            let p = ctx.value(
                "p",
                Dim::Pressure,
                c.p.as_ref()
                    .ok_or_else(|| Error::invalid("an isobar needs p"))?,
            )?;
            let a = from(Dim::Temperature, state::T_MIN)?;
            let b = to(Dim::Temperature, state::T_MAX_123)?;
            let mut sb = SeriesBuilder::new(
                &ctx,
                format!(
                    "isobar {} {}",
                    ctx.preset.from_internal(Dim::Pressure, p),
                    ctx.unit(Dim::Pressure)
                ),
            );
            let sat = if p < state::P_C {
                state::saturation_p(p).ok()
            } else {
                None
            };
            let mut done_sat = false;
            for i in 0..n {
                let t = lin(a, b, i);
                if let Some((ts, l, v)) = &sat {
                    if !done_sat && t >= *ts {
                        if *ts >= a {
                            sb.push(l);
                            sb.push(v);
                        }
                        done_sat = true;
                    }
                    if (t - ts).abs() < 1e-9 {
                        continue;
                    }
                }
                if let Ok(st) = state::at_pt(p, t, &opts) {
                    sb.push(&st.props);
                }
            }
            series.push(sb.s);
        }
        "isotherm" => {
            let t = ctx.value(
                "T",
                Dim::Temperature,
                c.t.as_ref()
                    .ok_or_else(|| Error::invalid("an isotherm needs T"))?,
            )?;
            let a = from(Dim::Pressure, 1e-3)?;
            let b = to(Dim::Pressure, state::P_MAX)?;
            let mut sb = SeriesBuilder::new(
                &ctx,
                format!(
                    "isotherm {} {}",
                    ctx.preset.from_internal(Dim::Temperature, t),
                    ctx.unit(Dim::Temperature)
                ),
            );
            let sat = if t < state::T_C {
                state::saturation_t(t).ok()
            } else {
                None
            };
            let mut done_sat = false;
            for i in 0..n {
                let p = geo(a.max(1e-6), b, i);
                if let Some((ps, l, v)) = &sat {
                    if !done_sat && p >= *ps {
                        if *ps >= a {
                            sb.push(v);
                            sb.push(l);
                        }
                        done_sat = true;
                    }
                }
                if let Ok(st) = state::at_pt(p, t, &opts) {
                    sb.push(&st.props);
                }
            }
            series.push(sb.s);
        }
        "isentrope" => {
            let s = ctx.value(
                "s",
                Dim::SpecificEntropy,
                c.s.as_ref()
                    .ok_or_else(|| Error::invalid("an isentrope needs s"))?,
            )?;
            let a = from(Dim::Pressure, 1e-3)?;
            let b = to(Dim::Pressure, state::P_MAX)?;
            let mut sb = SeriesBuilder::new(
                &ctx,
                format!(
                    "isentrope {} {}",
                    ctx.preset.from_internal(Dim::SpecificEntropy, s),
                    ctx.unit(Dim::SpecificEntropy)
                ),
            );
            for i in 0..n {
                let p = geo(a.max(1e-6), b, i);
                if let Ok(st) = state::at_ps(p, s, &opts) {
                    sb.push(&st.props);
                }
            }
            series.push(sb.s);
        }
        other => {
            return Err(Error::invalid(format!(
                "kind = '{other}' is not a curve; accepted: dome, isobar, isotherm, isentrope"
            )))
        }
    }
    let mut units_map = BTreeMap::new();
    units_map.insert("T".into(), ctx.unit(Dim::Temperature).into());
    units_map.insert("s".into(), ctx.unit(Dim::SpecificEntropy).into());
    units_map.insert("h".into(), ctx.unit(Dim::SpecificEnergy).into());
    units_map.insert("p".into(), ctx.unit(Dim::Pressure).into());
    units_map.insert("v".into(), ctx.unit(Dim::SpecificVolume).into());
    units_map.insert("preset".into(), ctx.preset.name().into());
    Ok(CurveResult {
        series,
        units: units_map,
    })
}
