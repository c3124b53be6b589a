//! Property methods: `water.state`, `water.batch`, `water.saturation`, `water.curve`, and the wire
//! types they share with the component methods (values with units, the state pair, the full
//! state object).
//!
//! Units: every numeric input is a number in the request's preset (`engineering` by default) or
//! a string with its unit; every result is in the preset and lists the unit of every field.
//!
//! Invariant: this module only converts and shapes; the physics is `crate::water::state`
//! (IAPWS-IF97), `crate::water::state95` (IAPWS-95) and `crate::water::transport`.

use super::MethodSpec;
use crate::error::{Error, Result};
use crate::units::{self, Dim, Preset, AMBIENT_DEFAULT_MPA};
use crate::water::state::{self, Given, Options, Phase, State};
use crate::water::transport::{self, Transport};
use crate::water::{iapws95, state95, Formulation};
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
        )
        .quick(),
        MethodSpec::with_ctx::<BatchParams, BatchResult>(
            "water.batch",
            "Properties for columns of states (historian data): one row per state",
            "Give two columns in `given` (of equal length: JSON arrays of numbers in the preset's units or strings with units, or packed columns {\"f64le\": base64 of little-endian doubles}) and the properties wanted. A bad row gives null (NaN in packed columns) in its columns and an entry in `errors` (one entry per row with encoding \"json\", the failed rows only with \"f64le\"); it never fails the whole call.",
            water_batch,
        ),
        MethodSpec::new::<SaturationParams, SaturationResult>(
            "water.saturation",
            "Saturated liquid and vapour at a temperature or a pressure",
            "Give either T or p. Returns the saturation pressure and temperature, the full saturated-liquid and saturated-vapour states, and the latent enthalpy and entropy of vaporisation.",
            water_saturation,
        )
        .quick(),
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

/// The state keys given among the eight, converted to internal units; `prefix` (e.g.
/// "inlet.") names them in errors. Shared by `water.state` and the component streams.
pub fn state_key_values(
    ctx: &Ctx,
    prefix: &str,
    keys: [&Option<Input>; 8],
) -> Result<BTreeMap<&'static str, f64>> {
    const NAMES: [(&str, Dim); 8] = [
        ("p", Dim::Pressure),
        ("T", Dim::Temperature),
        ("h", Dim::SpecificEnergy),
        ("s", Dim::SpecificEntropy),
        ("u", Dim::SpecificEnergy),
        ("v", Dim::SpecificVolume),
        ("rho", Dim::Density),
        ("x", Dim::Dimensionless),
    ];
    let mut vals = BTreeMap::new();
    for ((name, dim), value) in NAMES.into_iter().zip(keys) {
        if let Some(input) = value {
            vals.insert(name, ctx.value(&format!("{prefix}{name}"), dim, input)?);
        }
    }
    Ok(vals)
}

impl GivenPair {
    /// Converts to a physics pair in internal units.
    pub fn to_given(&self, ctx: &Ctx) -> Result<Given> {
        let keys = [
            &self.p, &self.t, &self.h, &self.s, &self.u, &self.v, &self.rho, &self.x,
        ];
        pair_from_values(&state_key_values(ctx, "", keys)?)
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
    let inv = super::rows::inv_rho;
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

/// The formulation named by a request's `formulation` param (IAPWS-IF97 when absent).
pub fn parse_formulation(f: Option<&str>) -> Result<Formulation> {
    match f {
        None | Some("if97") | Some("IAPWS-IF97") => Ok(Formulation::If97),
        Some("iapws95") | Some("IAPWS-95") => Ok(Formulation::Iapws95),
        Some(other) => Err(Error::invalid(format!(
            "formulation '{other}' is not available; accepted: if97 (IAPWS-IF97), iapws95 (IAPWS-95)"
        ))),
    }
}

/// Solves a pair with the formulation. IAPWS-IF97 keeps its own range, which starts at
/// 273.15 K at every pressure (a sliver a few mK inside ice Ih near 0.1 MPa, taken as
/// metastable liquid, so that "0 degC" at atmospheric pressure works); a (p,T) input below it
/// that lies in an ice phase is refused with the ice message of IAPWS R14-08.
pub fn solve_with(given: Given, opts: &Options, f: Formulation) -> Result<State> {
    match f {
        Formulation::Iapws95 => state95::solve(given, opts),
        Formulation::If97 => match state::solve(given, opts) {
            Err(e @ Error::OutOfRange { .. }) => {
                if let Given::PT(p, t) = given {
                    if p.is_finite() && t.is_finite() && t < crate::water::melting::T_VII_MAX {
                        crate::water::melting::check_not_ice(p, t)?;
                    }
                }
                Err(e)
            }
            other => other,
        },
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
    /// Property formulation: "if97" (IAPWS-IF97, the default, with the industrial transport
    /// correlations) or "iapws95" (IAPWS-95, also "IAPWS-95", with the full transport
    /// correlations).
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
    /// Dynamic viscosity (IAPWS R12-08; null for wet states).
    pub mu: Option<f64>,
    /// Thermal conductivity (IAPWS R15-11; null for wet states).
    pub lambda: Option<f64>,
    /// Kinematic viscosity mu / rho (null for wet states).
    pub nu: Option<f64>,
    /// Thermal diffusivity lambda / (rho cp) (null for wet states).
    pub thermal_diffusivity: Option<f64>,
    /// Prandtl number mu cp / lambda, dimensionless (null for wet states).
    pub pr: Option<f64>,
    /// Superheat above the saturation temperature at the state's pressure (vapour below the
    /// critical pressure only; null otherwise).
    pub superheat: Option<f64>,
    /// Phase: "liquid", "vapour", "wet" or "supercritical".
    pub phase: String,
    /// IAPWS-IF97 region: 1, 2, 3, 4 (wet) or 5. For IAPWS-95 states informational: the IF97
    /// region the state would have (beyond IF97's range, that of the nearest IF97 state).
    pub region: u8,
    /// Whether the metastable-vapour equation was used.
    pub metastable: bool,
    /// Why a null property is not given, by field name.
    pub undefined: BTreeMap<String, String>,
    /// The unit of every numeric field, and the preset's name under "preset".
    pub units: BTreeMap<String, String>,
    /// Ambient pressure used for gauge units, in the preset's pressure unit.
    pub ambient: f64,
    /// The formulation that produced the numbers: "IAPWS-IF97" or "IAPWS-95".
    pub formulation: String,
}

/// Dimensions of every numeric field of [`StateResult`].
pub const STATE_FIELDS: [(&str, Dim); 22] = [
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
    ("mu", Dim::Viscosity),
    ("lambda", Dim::Conductivity),
    ("nu", Dim::Diffusivity),
    ("thermal_diffusivity", Dim::Diffusivity),
    ("pr", Dim::Dimensionless),
];

/// The transport fields of [`StateResult`].
pub const TRANSPORT_FIELDS: [&str; 5] = ["mu", "lambda", "nu", "thermal_diffusivity", "pr"];

/// Internal value of a named field of a state of an IAPWS-IF97 solution (NaN where undefined).
pub fn field_internal(st: &State, name: &str) -> Option<f64> {
    field_value(st, Formulation::If97, None, name)
}

/// Internal value of a named field of a state solved with `f`; `tr` is the state's transport
/// (computed here when None and a transport field is asked for).
pub fn field_value(st: &State, f: Formulation, tr: Option<&Transport>, name: &str) -> Option<f64> {
    field_index(name).map(|i| field_value_at(st, f, tr, i))
}

/// The index of a numeric field in [`STATE_FIELDS`].
pub fn field_index(name: &str) -> Option<usize> {
    STATE_FIELDS.iter().position(|(n, _)| *n == name)
}

/// Internal value of the field `STATE_FIELDS[idx]` of a state solved with `f` (NaN where
/// undefined or for an index beyond the table); `tr` as for [`field_value`]. Resolving the
/// name once and reading by index keeps string matching out of per-row loops.
pub fn field_value_at(st: &State, f: Formulation, tr: Option<&Transport>, idx: usize) -> f64 {
    let p = &st.props;
    if idx >= 17 {
        let own;
        let tr = match tr {
            Some(t) => t,
            None => {
                own = transport::for_state(st, f);
                &own
            }
        };
        return match idx {
            17 => tr.mu,
            18 => tr.lambda,
            19 => tr.nu,
            20 => tr.a,
            21 => tr.pr,
            _ => f64::NAN,
        };
    }
    // The arms follow the order of STATE_FIELDS (checked by a unit test).
    match idx {
        0 => p.p,
        1 => p.t,
        2 => p.rho,
        3 => p.v,
        4 => p.u,
        5 => p.h,
        6 => p.s,
        7 => p.cp,
        8 => p.cv,
        9 => p.w,
        10 => st.x.unwrap_or(f64::NAN),
        11 => p.kappa,
        12 => p.mu_jt,
        13 => p.alpha_v,
        14 => p.kappa_t,
        15 => p.z,
        _ => superheat(st, f),
    }
}

fn superheat(st: &State, f: Formulation) -> f64 {
    if st.phase == Phase::Vapour && st.props.p < state::P_C {
        let ts = match f {
            Formulation::If97 => state::saturation_p(st.props.p).map(|r| r.0),
            Formulation::Iapws95 => iapws95::saturation_p(st.props.p).map(|s| s.t),
        };
        if let Ok(ts) = ts {
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

/// Shapes a solved IAPWS-IF97 state for the wire.
pub fn state_result(st: &State, ctx: &Ctx) -> StateResult {
    state_result_with(st, ctx, Formulation::If97)
}

/// Shapes a state solved with formulation `f` for the wire (transport properties included).
pub fn state_result_with(st: &State, ctx: &Ctx, f: Formulation) -> StateResult {
    let tr = transport::for_state(st, f);
    let o = |name: &str| {
        field_value(st, f, Some(&tr), name).and_then(|v| ctx.out(dim_of(name).unwrap(), v))
    };
    let mut undefined = BTreeMap::new();
    if st.phase == Phase::Wet {
        for f in ["cp", "cv", "w", "kappa", "mu_jt", "alpha_v", "kappa_t"] {
            undefined.insert(
                f.to_string(),
                "not defined for a two-phase (wet) mixture".to_string(),
            );
        }
        for f in TRANSPORT_FIELDS {
            undefined.insert(
                f.to_string(),
                "transport properties of a two-phase (wet) mixture are not defined".to_string(),
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
        mu: o("mu"),
        lambda: o("lambda"),
        nu: o("nu"),
        thermal_diffusivity: o("thermal_diffusivity"),
        pr: o("pr"),
        superheat: o("superheat"),
        phase: st.phase.name().to_string(),
        region: st.region.number(),
        metastable: st.metastable,
        undefined,
        units: units_map,
        ambient: ctx.preset.from_internal(Dim::Pressure, ctx.ambient),
        formulation: f.name().to_string(),
    }
}

fn water_state(p: StateParams) -> Result<StateResult> {
    let f = parse_formulation(p.formulation.as_deref())?;
    let ctx = Ctx::new(p.units.as_deref(), p.ambient.as_ref())?;
    let given = p.given.to_given(&ctx)?;
    let st = solve_with(given, &p.flags.options()?, f)?;
    Ok(state_result_with(&st, &ctx, f))
}

/// A column of inputs: a JSON array, or a packed column of little-endian doubles.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(untagged)]
pub enum Column {
    /// One value per row: numbers in the preset's units or strings with units.
    Values(Vec<Input>),
    /// Packed numbers in the preset's units.
    Packed(PackedColumn),
}

/// A packed column: `{"f64le": "<base64>"}`, the base64 text (standard alphabet, with padding)
/// of the column's IEEE-754 doubles in little-endian byte order, 8 bytes per row. NaN marks a
/// missing value (in results: a row whose value is undefined or failed).
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct PackedColumn {
    /// Base64 of little-endian f64 values.
    pub f64le: String,
}

impl PackedColumn {
    /// Packs values (NaN for missing).
    pub fn pack(values: &[f64]) -> PackedColumn {
        use base64::Engine;
        let mut bytes = Vec::with_capacity(values.len() * 8);
        for v in values {
            bytes.extend_from_slice(&v.to_le_bytes());
        }
        PackedColumn {
            f64le: base64::engine::general_purpose::STANDARD.encode(bytes),
        }
    }

    /// Unpacks, naming the column in errors.
    pub fn unpack(&self, name: &str) -> Result<Vec<f64>> {
        use base64::Engine;
        let bytes = base64::engine::general_purpose::STANDARD
            .decode(self.f64le.as_bytes())
            .map_err(|e| {
                Error::invalid(format!(
                    "given.{name}: the f64le column is not valid base64 ({e})"
                ))
            })?;
        if bytes.len() % 8 != 0 {
            return Err(Error::invalid(format!(
                "given.{name}: the f64le column has {} bytes, not a multiple of 8 (one little-endian double per row)",
                bytes.len()
            )));
        }
        Ok(bytes
            .chunks_exact(8)
            .map(|c| f64::from_le_bytes(c.try_into().expect("chunks of 8")))
            .collect())
    }
}

/// Parameters of `water.batch`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct BatchParams {
    /// Exactly two columns of equal length, keyed by property name (p, T, h, s, u, v, rho, x):
    /// JSON arrays, or packed columns `{"f64le": "<base64>"}`.
    pub given: BTreeMap<String, Column>,
    /// Properties wanted, e.g. ["h", "s"]. Any numeric field of `water.state` plus "phase"
    /// and "region". Default: ["T", "p", "h", "s", "v", "x"].
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub want: Option<Vec<String>>,
    /// Encoding of the result columns: "json" (default: arrays with null where undefined) or
    /// "f64le" (packed columns, NaN where undefined; "phase" then comes as a JSON array).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub encoding: Option<String>,
    /// Unit preset (see `water.state`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<String>,
    /// Ambient pressure for gauge units (default 101.325 kPa).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
    /// Property formulation: "if97" (default) or "iapws95" (see `water.state`).
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

/// An error of one batch row, with its row index (0-based).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct RowErrorAt {
    /// Row index, 0-based.
    pub row: usize,
    /// The error code (see the error table).
    pub code: i64,
    /// One-line message.
    pub message: String,
}

/// A result column.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(untagged)]
pub enum ColumnOut {
    /// Numbers, null where undefined or failed.
    Numbers(Vec<Option<f64>>),
    /// Texts ("phase"), null where failed.
    Texts(Vec<Option<String>>),
    /// Packed numbers (encoding "f64le"), NaN where undefined or failed.
    Packed(PackedColumn),
}

/// Whether an `encoding` param asks for packed result columns ("f64le") or JSON numbers.
fn packed_encoding(encoding: Option<&str>) -> Result<bool> {
    match encoding {
        None | Some("json") => Ok(false),
        Some("f64le") => Ok(true),
        Some(other) => Err(Error::invalid(format!(
            "encoding = '{other}'; accepted: json, f64le"
        ))),
    }
}

/// The per-row errors of `water.batch`, dense or sparse by encoding.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(untagged)]
pub enum BatchErrors {
    /// Encoding "f64le": the failed rows only, in row order, each with its row index.
    Sparse(Vec<RowErrorAt>),
    /// Encoding "json": one entry per row, null or the row's error.
    Dense(Vec<Option<RowError>>),
}

/// Result of `water.batch`: one column per wanted property, plus per-row errors.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct BatchResult {
    /// Result columns keyed by property, in the preset's units; "phase" holds texts and
    /// "region" the IF97 region numbers.
    pub columns: BTreeMap<String, ColumnOut>,
    /// Per-row errors: with encoding "json" one entry per row, null or the row's error; with
    /// "f64le" the failed rows only (sparse), each with its row index.
    pub errors: BatchErrors,
    /// The failed rows only (both encodings), in row order.
    pub failed_rows: Vec<RowErrorAt>,
    /// Number of rows.
    pub rows: usize,
    /// Number of failed rows.
    pub failed: usize,
    /// The unit of every result column.
    pub units: BTreeMap<String, String>,
    /// The encoding of the numeric result columns: "json" or "f64le".
    pub encoding: String,
}

/// Most rows in one `water.batch` call by default (`serve --max-batch-rows` changes the limit in
/// force, see [`super::limits::Settings::max_batch_rows`]).
pub const MAX_BATCH_ROWS: usize = super::limits::MAX_BATCH_ROWS as usize;

pub use super::rows::PARALLEL_THRESHOLD;

fn static_name(name: &str) -> Option<(&'static str, Dim)> {
    Some(match name {
        "p" => ("p", Dim::Pressure),
        "T" => ("T", Dim::Temperature),
        "h" => ("h", Dim::SpecificEnergy),
        "u" => ("u", Dim::SpecificEnergy),
        "s" => ("s", Dim::SpecificEntropy),
        "v" => ("v", Dim::SpecificVolume),
        "rho" => ("rho", Dim::Density),
        "x" => ("x", Dim::Dimensionless),
        _ => return None,
    })
}

/// The dimension of an input column name, or an error listing the accepted names.
pub fn input_dim(name: &str) -> Result<(&'static str, Dim)> {
    static_name(name).ok_or_else(|| {
        Error::invalid(format!(
            "given: '{name}' is not an input property; accepted: p, T, h, s, u, v, rho, x"
        ))
    })
}

/// The unit of a result column in the preset, if it has one.
pub fn column_unit(ctx: &Ctx, name: &str) -> Option<&'static str> {
    dim_of(name).map(|d| ctx.unit(d))
}

/// Checks a `want` list: numeric fields of `water.state`, "region", and "phase" when texts are
/// allowed.
pub fn check_want(want: &[String], texts: bool) -> Result<()> {
    if want.is_empty() {
        return Err(Error::invalid("want is empty: name at least one property"));
    }
    for w in want {
        let ok = dim_of(w).is_some() || w == "region" || (texts && w == "phase");
        if !ok {
            return Err(Error::invalid(format!(
                "want: '{w}' is not a property; accepted: {}, region{}",
                STATE_FIELDS.map(|f| f.0).join(", "),
                if texts { ", phase" } else { "" }
            )));
        }
    }
    Ok(())
}

fn water_batch(server: &super::ServerCtx, p: BatchParams) -> Result<BatchResult> {
    use super::rows::InputColumn;
    let f = parse_formulation(p.formulation.as_deref())?;
    let ctx = Ctx::new(p.units.as_deref(), p.ambient.as_ref())?;
    let opts = p.flags.options()?;
    let packed_out = packed_encoding(p.encoding.as_deref())?;
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
    check_want(&want, true)?;
    let mut cols = Vec::with_capacity(2);
    for (k, col) in &p.given {
        let (name, dim) = static_name(k).ok_or_else(|| {
            Error::invalid(format!(
                "given: '{k}' is not an input property; accepted: p, T, h, s, u, v, rho, x"
            ))
        })?;
        let n = match col {
            Column::Values(v) => v.len(),
            Column::Packed(pc) => pc.f64le.len() / 4 * 3 / 8,
        };
        let max_rows = server.limits.max_batch_rows();
        if n > max_rows {
            return Err(Error::LimitExceeded {
                what: "rows in one water.batch call".into(),
                limit: max_rows as f64,
                value: n as f64,
            });
        }
        cols.push(match col {
            Column::Values(v) => {
                InputColumn::from_results(name, v.iter().map(|x| ctx.value(name, dim, x)))
            }
            Column::Packed(pc) => {
                InputColumn::from_numbers(name, ctx.preset.unit(dim), &pc.unpack(name)?)
            }
        });
    }
    let rows = super::rows::compute(&ctx, &opts, f, &cols[0], &cols[1], &want)?;
    let n = rows.n;
    let mut columns = BTreeMap::new();
    for (j, w) in want.iter().enumerate() {
        let col = if w == "phase" {
            ColumnOut::Texts(
                (0..n)
                    .map(|i| rows.phase(i, j).map(|ph| ph.name().to_string()))
                    .collect(),
            )
        } else {
            let values = rows.column(j);
            if packed_out {
                ColumnOut::Packed(PackedColumn::pack(&values))
            } else {
                ColumnOut::Numbers(
                    values
                        .into_iter()
                        .map(|x| if x.is_nan() { None } else { Some(x) })
                        .collect(),
                )
            }
        };
        columns.insert(w.clone(), col);
    }
    let mut failed_rows = Vec::with_capacity(rows.failed.len());
    let mut dense = if packed_out {
        Vec::new()
    } else {
        vec![None; n]
    };
    for (i, e) in rows.failed {
        let api: super::ApiError = e.into();
        let message = format!("row {i}: {}", api.message);
        if !packed_out {
            dense[i] = Some(RowError {
                code: api.code,
                message: message.clone(),
            });
        }
        failed_rows.push(RowErrorAt {
            row: i,
            code: api.code,
            message,
        });
    }
    let errors = if packed_out {
        BatchErrors::Sparse(failed_rows.clone())
    } else {
        BatchErrors::Dense(dense)
    };
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
        failed: failed_rows.len(),
        failed_rows,
        rows: n,
        units: units_map,
        encoding: if packed_out { "f64le" } else { "json" }.to_string(),
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
    /// Property formulation: "if97" (default) or "iapws95" (the IAPWS-95 phase equilibrium
    /// from the Maxwell criterion, 273.16 K to 647.095 K).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub formulation: Option<String>,
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
    /// Surface tension of the liquid against its vapour (IAPWS R1-76(2014)).
    pub surface_tension: f64,
    /// Units of p, T, h_fg, s_fg, v_fg, surface_tension.
    pub units: BTreeMap<String, String>,
    /// The formulation that produced the numbers: "IAPWS-IF97" or "IAPWS-95".
    pub formulation: String,
}

fn water_saturation(p: SaturationParams) -> Result<SaturationResult> {
    let f = parse_formulation(p.formulation.as_deref())?;
    let ctx = Ctx::new(p.units.as_deref(), p.ambient.as_ref())?;
    let (ps, ts, l, v) = match (&p.t, &p.p) {
        (Some(t), None) => {
            let t = ctx.value("T", Dim::Temperature, t)?;
            match f {
                Formulation::If97 => {
                    let (ps, l, v) = state::saturation_t(t)?;
                    (ps, t, l, v)
                }
                Formulation::Iapws95 => {
                    let sat = iapws95::saturation_t(t)?;
                    (sat.psat, t, sat.liquid, sat.vapour)
                }
            }
        }
        (None, Some(pp)) => {
            let pp = ctx.value("p", Dim::Pressure, pp)?;
            match f {
                Formulation::If97 => {
                    let (ts, l, v) = state::saturation_p(pp)?;
                    (pp, ts, l, v)
                }
                Formulation::Iapws95 => {
                    let sat = iapws95::saturation_p(pp)?;
                    (pp, sat.t, sat.liquid, sat.vapour)
                }
            }
        }
        _ => {
            return Err(Error::invalid(
                "give exactly one of T or p for a saturation state",
            ))
        }
    };
    let sigma = transport::surface_tension(ts.min(transport::surface_tension::T_MAX))?;
    let to_state = |props: crate::water::Props, phase: Phase| {
        let liquid = phase == Phase::Liquid;
        // The IF97 region of each side (informational for IAPWS-95).
        let region = if ts <= state::T_13 {
            if liquid {
                crate::water::if97::regions::Region::R1
            } else {
                crate::water::if97::regions::Region::R2
            }
        } else {
            crate::water::if97::regions::Region::R3
        };
        let st = State {
            props,
            x: Some(if liquid { 0.0 } else { 1.0 }),
            region,
            phase,
            metastable: false,
            iterations: 0,
        };
        let mut r = state_result_with(&st, &ctx, f);
        // A saturated phase has a quality: 0 or 1.
        r.x = Some(if liquid { 0.0 } else { 1.0 });
        r.undefined.remove("x");
        r
    };
    let mut units_map = BTreeMap::new();
    units_map.insert("p".into(), ctx.unit(Dim::Pressure).into());
    units_map.insert("T".into(), ctx.unit(Dim::Temperature).into());
    units_map.insert("h_fg".into(), ctx.unit(Dim::SpecificEnergy).into());
    units_map.insert("s_fg".into(), ctx.unit(Dim::SpecificEntropy).into());
    units_map.insert("v_fg".into(), ctx.unit(Dim::SpecificVolume).into());
    units_map.insert(
        "surface_tension".into(),
        ctx.unit(Dim::SurfaceTension).into(),
    );
    units_map.insert("preset".into(), ctx.preset.name().into());
    let pre = ctx.preset;
    Ok(SaturationResult {
        p: pre.from_internal(Dim::Pressure, ps),
        t: pre.from_internal(Dim::Temperature, ts),
        h_fg: pre.from_internal(Dim::SpecificEnergy, v.h - l.h),
        s_fg: pre.from_internal(Dim::SpecificEntropy, v.s - l.s),
        v_fg: pre.from_internal(Dim::SpecificVolume, v.v - l.v),
        surface_tension: pre.from_internal(Dim::SurfaceTension, sigma),
        liquid: to_state(l, Phase::Liquid),
        vapour: to_state(v, Phase::Vapour),
        units: units_map,
        formulation: f.name().to_string(),
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
    /// "json" (default) or "f64le": each series' T, s, h, p, v as packed columns (base64 of
    /// little-endian doubles), the same numbers bit for bit.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub encoding: Option<String>,
}

/// One series of chart points, its columns packed (encoding "f64le").
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct PackedSeries {
    /// What the series is, e.g. "saturated liquid" or "isobar 1 MPa".
    pub name: String,
    /// Temperatures.
    #[serde(rename = "T")]
    pub t: PackedColumn,
    /// Entropies.
    pub s: PackedColumn,
    /// Enthalpies.
    pub h: PackedColumn,
    /// Pressures.
    pub p: PackedColumn,
    /// Specific volumes.
    pub v: PackedColumn,
}

impl From<&Series> for PackedSeries {
    fn from(s: &Series) -> Self {
        PackedSeries {
            name: s.name.clone(),
            t: PackedColumn::pack(&s.t),
            s: PackedColumn::pack(&s.s),
            h: PackedColumn::pack(&s.h),
            p: PackedColumn::pack(&s.p),
            v: PackedColumn::pack(&s.v),
        }
    }
}

/// A series of `water.curve`: JSON numbers, or packed with encoding "f64le".
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(untagged)]
pub enum SeriesOut {
    /// Encoding "json".
    Numbers(Series),
    /// Encoding "f64le".
    Packed(PackedSeries),
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
    pub series: Vec<SeriesOut>,
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
    let packed = packed_encoding(c.encoding.as_deref())?;
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
    let series = series
        .into_iter()
        .map(|s| {
            if packed {
                SeriesOut::Packed((&s).into())
            } else {
                SeriesOut::Numbers(s)
            }
        })
        .collect();
    Ok(CurveResult {
        series,
        units: units_map,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// `field_value_at` reads by index; its arms follow this order of `STATE_FIELDS`.
    #[test]
    fn field_indices_follow_state_fields() {
        let names = STATE_FIELDS.map(|f| f.0);
        assert_eq!(
            names,
            [
                "p",
                "T",
                "rho",
                "v",
                "u",
                "h",
                "s",
                "cp",
                "cv",
                "w",
                "x",
                "kappa",
                "mu_jt",
                "alpha_v",
                "kappa_t",
                "z",
                "superheat",
                "mu",
                "lambda",
                "nu",
                "thermal_diffusivity",
                "pr"
            ]
        );
        assert_eq!(&names[17..], &TRANSPORT_FIELDS);
        let st = state::at_pt(1.0, 500.0, &state::Options::STANDARD).unwrap();
        let pr = st.props;
        for (name, want) in [("h", pr.h), ("cp", pr.cp), ("w", pr.w), ("z", pr.z)] {
            let got = field_value(&st, Formulation::If97, None, name).unwrap();
            assert_eq!(got.to_bits(), want.to_bits(), "{name}");
        }
    }
}
