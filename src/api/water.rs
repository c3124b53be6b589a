//! STUB: replaced by the lead. Water property methods on the wire (`water.*`).
//!
//! This stub exists only so the server framework can be built and tested: `water.state` here
//! follows the wire contract (params `given`, optional `units`, `ambient`, `formulation`; result
//! with one field per property symbol plus `units`) but computes nothing physical: h = p + T.
//! Units: numbers are taken as given; texts must start with a number, the unit after it is
//! ignored. Invariant: none worth stating, it is a stub.

use super::MethodSpec;
use crate::error::{Bound, Error};
use schemars::JsonSchema;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// A given value: a number in the preset's unit, or a text with its unit, e.g. "10 MPa".
#[derive(Debug, Clone, Deserialize, JsonSchema)]
#[serde(untagged)]
pub enum GivenValue {
    /// A number in the unit of the chosen preset.
    Number(f64),
    /// A number followed by its unit, e.g. "700 degC".
    Text(String),
}

/// Params of `water.state`.
#[derive(Debug, Clone, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct StateParams {
    /// The two quantities that fix the state, by symbol (p, T, h, s, u, v, rho, x).
    pub given: BTreeMap<String, GivenValue>,
    /// Unit preset for numbers without a unit and for the result: "engineering", "si" or "us".
    #[serde(default)]
    pub units: Option<String>,
    /// Ambient pressure used for gauge pressures (e.g. "1.01325 bar").
    #[serde(default)]
    pub ambient: Option<GivenValue>,
    /// Formulation to use; only "IAPWS-IF97" is offered.
    #[serde(default)]
    pub formulation: Option<String>,
}

/// Result of `water.state`.
#[derive(Debug, Clone, Serialize, JsonSchema)]
pub struct StateResult {
    /// Pressure.
    pub p: f64,
    /// Temperature.
    #[serde(rename = "T")]
    pub t: f64,
    /// Specific enthalpy; null where not defined.
    pub h: Option<f64>,
    /// Unit of each field, by field name.
    pub units: BTreeMap<String, String>,
}

fn value_of(name: &str, v: &GivenValue) -> crate::Result<f64> {
    let x = match v {
        GivenValue::Number(x) => *x,
        GivenValue::Text(t) => {
            let first = t.split_whitespace().next().unwrap_or("");
            let num: String = first
                .chars()
                .take_while(|c| c.is_ascii_digit() || matches!(c, '.' | '-' | '+' | 'e' | 'E'))
                .collect();
            if first.eq_ignore_ascii_case("nan") || first.eq_ignore_ascii_case("inf") {
                f64::NAN
            } else {
                num.parse::<f64>().map_err(|_| {
                    Error::invalid(format!("{name}: '{t}' does not start with a number"))
                })?
            }
        }
    };
    Error::check_finite(name, x)
}

// STUB: replaced by the lead.
fn state(p: StateParams) -> crate::Result<StateResult> {
    let preset = p.units.as_deref().unwrap_or("engineering");
    let units = match preset {
        "engineering" => [("p", "MPa"), ("T", "degC"), ("h", "kJ/kg")],
        "si" => [("p", "Pa"), ("T", "K"), ("h", "J/kg")],
        "us" => [("p", "psia"), ("T", "degF"), ("h", "Btu/lb")],
        other => {
            return Err(Error::invalid(format!(
                "unknown unit preset '{other}'; accepted: si, engineering, us"
            )))
        }
    };
    let get = |k: &str| {
        p.given
            .get(k)
            .ok_or_else(|| Error::invalid(format!("the stub needs p and T; {k} is missing")))
            .and_then(|v| value_of(k, v))
    };
    let pv = get("p")?;
    let tv = get("T")?;
    if tv < 0.0 {
        return Err(Error::out_of_range(
            "T",
            tv,
            0.0,
            units[1].1,
            Bound::Below,
            "STUB",
        ));
    }
    Ok(StateResult {
        p: pv,
        t: tv,
        h: if pv == 0.0 { None } else { Some(pv + tv) },
        units: units
            .iter()
            .map(|(k, u)| (k.to_string(), u.to_string()))
            .collect(),
    })
}

/// The water methods. STUB: replaced by the lead.
pub fn methods() -> Vec<MethodSpec> {
    vec![MethodSpec::new::<StateParams, StateResult>(
        "water.state",
        "Properties of water or steam at one state (STUB)",
        "STUB: the stub returns p and T as given and h = p + T (null when p = 0); T < 0 gives out_of_range.",
        state,
    )]
}
