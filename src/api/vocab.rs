//! The API's shared vocabulary: the wire types and conversions every method family uses — a
//! numeric input with or without its unit ([`Input`]), the request's conversion context
//! ([`Ctx`]: unit preset and ambient pressure, per-field output units), the state pair
//! ([`GivenPair`], [`state_key_values`]), the solver switches ([`SolveFlags`]), the formulation
//! param ([`parse_formulation`]) and the full state object ([`StateResult`], [`state_result`]).
//!
//! Units: inputs are numbers in the request's preset or strings with a unit; [`Ctx::value`]
//! converts them to internal units, [`Ctx::out`] converts each output field back to the unit
//! the caller gets for it (today the preset's unit of its dimension).
//!
//! Invariant: conversion and shaping only; every physics decision (formulation, ranges, ice,
//! which pair, which field means what) is `crate::water`'s (`water::solve`, `water::PAIRS`,
//! `water::Field`).

use crate::error::{Error, Result};
use crate::plant::warnings::Warning;
use crate::units::{self, Dim, Preset, Unit, AMBIENT_DEFAULT_MPA};
use crate::water::pairs::{self, INPUTS};
use crate::water::state::{Given, Options, Phase, State};
use crate::water::transport;
use crate::water::{Field, Formulation};
use schemars::JsonSchema;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

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

    /// The unit of the output field `name` (of dimension `dim`): the preset's unit for `dim`.
    /// Every output conversion goes through here, by field name, so that a unit chosen per
    /// quantity can act on one field.
    pub fn out_unit(&self, name: &str, dim: Dim) -> Unit {
        let _ = name;
        self.preset.unit(dim)
    }

    /// Converts the internal value of the output field `name` to its unit ([`Ctx::out_unit`]).
    pub fn out(&self, name: &str, dim: Dim, internal: f64) -> f64 {
        self.out_unit(name, dim)
            .from_internal(internal, self.ambient)
    }

    /// As [`Ctx::out`], with None for NaN or an infinity (an undefined value).
    pub fn out_defined(&self, name: &str, dim: Dim, internal: f64) -> Option<f64> {
        if internal.is_finite() {
            Some(self.out(name, dim, internal))
        } else {
            None
        }
    }

    /// The unit symbol of the output field `name` (of dimension `dim`), for the `units` maps.
    pub fn unit(&self, name: &str, dim: Dim) -> &'static str {
        self.out_unit(name, dim).symbol
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

/// The state keys given among the eight of [`INPUTS`] (p, T, h, s, u, v, rho, x, in that
/// order), converted to internal units; `prefix` (e.g. "inlet.") names them in errors. Shared
/// by `water.state` and the component streams.
pub fn state_key_values(
    ctx: &Ctx,
    prefix: &str,
    keys: [&Option<Input>; 8],
) -> Result<Vec<(Field, f64)>> {
    let mut vals = Vec::with_capacity(2);
    for (field, value) in INPUTS.into_iter().zip(keys) {
        if let Some(input) = value {
            let name = field.name();
            vals.push((
                field,
                ctx.value(&format!("{prefix}{name}"), field.dim(), input)?,
            ));
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
        pairs::given_from(&state_key_values(ctx, "", keys)?)
    }
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
    /// Allow the IF97 metastable-vapour equation for (p,T) below the saturation temperature,
    /// where IAPWS R7-97(2012) makes it valid: from the saturated-vapour line to the 5 %
    /// equilibrium-moisture line, from the triple-point pressure to 10 MPa. A (p,T) below
    /// saturation outside that range is refused (error 1001, naming the limit).
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
    /// T - T_sat(p), the superheat above the saturation temperature at the state's pressure:
    /// negative for a subcooled liquid (minus its subcooling) and for a metastable vapour;
    /// null for a wet state and at or above the critical pressure.
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

/// Shapes a solved IAPWS-IF97 state for the wire.
pub fn state_result(st: &State, ctx: &Ctx) -> StateResult {
    state_result_with(st, ctx, Formulation::If97)
}

/// Shapes a state solved with formulation `f` for the wire (transport properties included).
pub fn state_result_with(st: &State, ctx: &Ctx, f: Formulation) -> StateResult {
    let tr = transport::for_state(st, f);
    let value = |fd: Field| fd.value(st, f, Some(&tr));
    let o = |fd: Field| ctx.out_defined(fd.name(), fd.dim(), value(fd));
    let mut undefined = BTreeMap::new();
    let mut units_map = BTreeMap::new();
    for fd in Field::ALL {
        if let Some(why) = fd.undefined_reason(st, value(fd)) {
            undefined.insert(fd.name().to_string(), why.to_string());
        }
        units_map.insert(
            fd.name().to_string(),
            ctx.unit(fd.name(), fd.dim()).to_string(),
        );
    }
    units_map.insert(
        "ambient".into(),
        ctx.unit("ambient", Dim::Pressure).to_string(),
    );
    units_map.insert("preset".into(), ctx.preset.name().to_string());
    StateResult {
        p: o(Field::P),
        t: o(Field::T),
        rho: o(Field::Rho),
        v: o(Field::V),
        u: o(Field::U),
        h: o(Field::H),
        s: o(Field::S),
        cp: o(Field::Cp),
        cv: o(Field::Cv),
        w: o(Field::W),
        x: o(Field::X),
        kappa: o(Field::Kappa),
        mu_jt: o(Field::MuJt),
        alpha_v: o(Field::AlphaV),
        kappa_t: o(Field::KappaT),
        z: o(Field::Z),
        mu: o(Field::Mu),
        lambda: o(Field::Lambda),
        nu: o(Field::Nu),
        thermal_diffusivity: o(Field::ThermalDiffusivity),
        pr: o(Field::Pr),
        superheat: o(Field::Superheat),
        phase: st.phase.name().to_string(),
        region: st.region.number(),
        metastable: st.metastable,
        undefined,
        units: units_map,
        ambient: ctx.out("ambient", Dim::Pressure, ctx.ambient),
        formulation: f.name().to_string(),
    }
}

/// A warning on the wire: its code in the warning catalogue (README, "Warnings") and its
/// one-line message with the values of the case and what to check.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct WarningOut {
    /// The catalogue code: a stable snake-case name, e.g. "exhaust_moisture".
    pub code: String,
    /// What was found, with its values, and what to check.
    pub message: String,
}

impl From<&Warning> for WarningOut {
    fn from(w: &Warning) -> Self {
        WarningOut {
            code: w.code.name().to_string(),
            message: w.message.clone(),
        }
    }
}

/// The warnings of a result, for the wire.
pub fn warnings_out(ws: &[Warning]) -> Vec<WarningOut> {
    ws.iter().map(WarningOut::from).collect()
}

#[cfg(test)]
mod tests {
    /// Every physics decision is the core's: no API file calls a formulation's solver, its
    /// saturation line, IF97's region map or the ice check directly; they go through
    /// `water::solve`, `water::solve_first_order` and `water::saturation`.
    #[test]
    fn the_api_solves_through_the_core_entry_points() {
        let files = [
            ("balance.rs", include_str!("balance.rs")),
            ("cell.rs", include_str!("cell.rs")),
            ("columns.rs", include_str!("columns.rs")),
            ("plant.rs", include_str!("plant.rs")),
            ("rows.rs", include_str!("rows.rs")),
            ("site.rs", include_str!("site.rs")),
            ("vocab.rs", include_str!("vocab.rs")),
            ("water.rs", include_str!("water.rs")),
        ];
        let banned = [
            "state::solve",
            "state::at_",
            "state::saturation",
            "state95::",
            "iapws95::",
            "regions::",
            "melting::",
            "transport::surface_tension",
        ];
        for (file, text) in files {
            // This module's own test names the banned paths; check the code above it only.
            let code = text.split("#[cfg(test)]").next().unwrap_or(text);
            for b in banned {
                assert!(!code.contains(b), "src/api/{file} calls {b} directly");
            }
        }
    }
}
