//! Site steam-balance methods: `balance.solve` and `balance.sweep`.
//!
//! Units: every number in the network is in the request's preset (`engineering` by default)
//! or a string with its unit; every result is in the preset (mass flow, power and heat flow
//! included) and lists its units.
//!
//! Invariant: thin wrappers; the network solver is `crate::plant::balance`. Errors of a solve
//! (a refused network's findings, a quantity out of range) are re-stated in the caller's units.

use super::distribution::{FittingIn, JacketIn, LayerIn};
use super::plant::BalanceOut;
use super::vocab::{
    state_result, state_result_at, warnings_out, Ctx, Input, StateResult, Units, WarningOut,
};
use super::MethodSpec;
use crate::error::{Error, Result};
use crate::plant::balance::{
    self as b, LineUnit, Network, SiteCosting, StreamSpec, TrapState, Unit,
};
use crate::plant::correlations::FrictionModel;
use crate::plant::losses::Price;
use crate::plant::pipe::Layer;
use crate::plant::Balance;
use crate::units::Dim;
use schemars::JsonSchema;
use serde::{Deserialize, Serialize};
use serde_json::{json, Value};
use std::collections::BTreeMap;

/// Most points of one `balance.sweep`.
pub const MAX_SWEEP_POINTS: usize = 1000;

/// The methods of this module, for the registry.
pub fn methods() -> Vec<MethodSpec> {
    vec![
        MethodSpec::new::<SolveParams, SolveResult>(
            "balance.solve",
            "Site steam balance: every stream's flow and state, every unit's duty and power, site totals and an energy-flow summary",
            concat!("Give the network as named `units` (each with `kind`: boiler, turbine, valve, desuperheater, header, deaerator, flash, pump, condenser, exchanger, user, vent, makeup, and the distribution losses leak, trap and line, with its specification), named `streams` (`from`, `to` and optional fixed flow, p, T, h, x) and an optional `costing` (hours per year, fuel or steam price, boiler efficiency, make-up water temperature). The degrees of freedom are counted first: an under- or over-specified network is refused with a message naming the streams and units and the usual choice. All mass and energy balances are then solved together (recycles included) to 1e-9 relative; a balance that needs a stream to run backwards is refused with the streams, their flows and the specifications that would fix them. A leak's flow is the real-fluid flow through its hole from the header state (as orifice.flow), a failed or leaking trap passes live steam through its orifice, a line loses heat and forms condensate as pipe.flow computes (its pressure drop is reported, not imposed). Returns every stream's state and flow, every unit's power, duty, efficiency, balance, losses and warnings, site totals (fuel heat input, net power, steam to process, make-up water, vented steam, steam lost through leaks and traps, heat lost from lines, and their boiler heat, fuel and yearly cost) and Sankey nodes and links.", " Caution: the model is only as good as its specifications (efficiencies and losses from the plant's own test data); results are not a substitute for the governing codes, the equipment maker's data or a licensed engineer's review."),
            balance_solve,
        ),
        MethodSpec::new::<SweepParams, SweepResult>(
            "balance.sweep",
            "Vary one specification of a site network over a range and solve each point",
            concat!("`path` is a dotted path into the network, e.g. `units.LP_users.demand` or `streams.S1.flow`; the value goes from `from` to `to` in `points` equal steps (each a number in the request's preset or a text with its unit such as \"20 t/h\", read in the dimension of that field; the result's `unit` is the unit of every point's value). Each point is solved from the previous answer; a point that cannot be solved is reported with its error, not dropped. Returns the site totals and the chosen streams' flow, p, T, h and x per point.", " Caution: the model is only as good as its specifications; results are not a substitute for the governing codes, the equipment maker's data or a licensed engineer's review."),
            balance_sweep,
        ),
    ]
}

/// A stream of a site network.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct StreamIn {
    /// Name of the unit the stream leaves.
    pub from: String,
    /// Name of the unit the stream enters.
    pub to: String,
    /// Fixed mass flow.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub flow: Option<Input>,
    /// Fixed pressure (otherwise set by its source unit or its destination header,
    /// deaerator, condenser or desuperheater).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub p: Option<Input>,
    /// Fixed temperature (only where the source unit does not set the state: boiler steam,
    /// turbine outlets (measured), desuperheater outlet, exchanger outlets, condensate
    /// returns, make-up).
    #[serde(rename = "T", default, skip_serializing_if = "Option::is_none")]
    pub t: Option<Input>,
    /// Fixed specific enthalpy (same places as T).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub h: Option<Input>,
    /// Fixed quality (same places as T).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub x: Option<Input>,
}

/// A unit of a site network, by `kind`.
// a wire type read once per request: the size of its largest variant (a line) does not matter
#[allow(clippy::large_enum_variant)]
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(tag = "kind", rename_all = "snake_case", deny_unknown_fields)]
pub enum UnitIn {
    /// Boiler: one feedwater inlet; the steam outlet and, optionally, a blowdown outlet.
    Boiler {
        /// Steam pressure (or p on the steam stream).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        p: Option<Input>,
        /// Steam temperature (or T on the steam stream).
        #[serde(rename = "T", default, skip_serializing_if = "Option::is_none")]
        t: Option<Input>,
        /// Boiler efficiency: heat to water and steam over fuel heat input (0..1).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        efficiency: Option<Input>,
        /// Blowdown as a fraction of the feedwater flow (default 0); saturated liquid at the
        /// steam pressure.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        blowdown_fraction: Option<Input>,
        /// Name of the blowdown outlet stream; without one the blowdown leaves the site.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        blowdown: Option<String>,
        /// Steam flow.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        steam_flow: Option<Input>,
    },
    /// Turbine: one inlet; outlets (extractions and exhaust) at their stream pressures,
    /// expanded section by section in order of falling pressure.
    Turbine {
        /// Isentropic efficiency of every section (an outlet stream with a measured T, h or x
        /// uses that instead).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        efficiency: Option<Input>,
        /// Shaft power (fixes the steam flow).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        power: Option<Input>,
    },
    /// Let-down (pressure-reducing) valve: isenthalpic, one inlet, one outlet.
    Valve {
        /// Outlet pressure (default: its outlet's destination, e.g. a desuperheater or header).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        p: Option<Input>,
    },
    /// Desuperheater: steam and spray water in, one outlet at a target.
    Desuperheater {
        /// Name of the spray-water inlet stream.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        water: Option<String>,
        /// Outlet pressure (default: its outlet's destination, else the steam pressure).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        p: Option<Input>,
        /// Target outlet temperature.
        #[serde(rename = "T", default, skip_serializing_if = "Option::is_none")]
        t: Option<Input>,
        /// Target superheat (a temperature difference).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        superheat: Option<Input>,
    },
    /// Header: adiabatic mixing at a pressure; any number of inlets and outlets, all outlets
    /// at the header state.
    Header {
        /// Header pressure.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        p: Option<Input>,
    },
    /// Deaerator: water inlets and a heating-steam inlet to saturated liquid; optional vent.
    Deaerator {
        /// Pressure.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        p: Option<Input>,
        /// Name of the heating-steam inlet stream.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        steam: Option<String>,
        /// Name of the vent outlet stream (saturated vapour), if any.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        vent: Option<String>,
        /// Vent flow as a fraction of the heating steam (default 0; without a vent stream the
        /// vent leaves the site).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        vent_fraction: Option<Input>,
    },
    /// Flash vessel: inlets flashed to saturated vapour and liquid at a pressure.
    Flash {
        /// Vessel pressure.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        p: Option<Input>,
        /// Name of the vapour outlet stream (the other outlet is the liquid).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        vapour: Option<String>,
    },
    /// Pump: liquid raised to a pressure (isentropic efficiency).
    Pump {
        /// Discharge pressure (default: its outlet's destination).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        p: Option<Input>,
        /// Isentropic efficiency.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        efficiency: Option<Input>,
    },
    /// Condenser: inlets to saturated liquid at a pressure; the duty leaves the site.
    Condenser {
        /// Pressure.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        p: Option<Input>,
    },
    /// Two-stream exchanger without pressure drop: outlet states from T, h or x on the
    /// outlet streams; one of the two may be left free.
    Exchanger {
        /// Name of the hot inlet stream.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        hot_in: Option<String>,
        /// Name of the hot outlet stream.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        hot_out: Option<String>,
    },
    /// Process steam user: steam in, optional condensate return out, the rest lost.
    User {
        /// Steam demand (mass flow).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        demand: Option<Input>,
        /// Fraction of the steam returned as condensate (0..1, default 0).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        return_fraction: Option<Input>,
        /// Condensate temperature (returned and lost condensate).
        #[serde(rename = "return_T", default, skip_serializing_if = "Option::is_none")]
        return_t: Option<Input>,
    },
    /// Vent: boundary sink that takes whatever is left.
    Vent {},
    /// Make-up: boundary source of water at a temperature, whatever is needed.
    Makeup {
        /// Water temperature.
        #[serde(rename = "T", default, skip_serializing_if = "Option::is_none")]
        t: Option<Input>,
    },
    /// Leak: a hole in a header or line. One inlet (from the unit with the hole, whose state
    /// is the stagnation state); its flow is the real-fluid flow through the hole as
    /// orifice.flow gives it. Without an outlet the flow leaves the site (to atmosphere); with
    /// one (a condensate header, a vent) it goes there.
    Leak {
        /// Diameter of the hole (preset length unit, or "3 mm"); 0: no hole (repaired), for a
        /// sweep to zero.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        diameter: Option<Input>,
        /// Discharge coefficient, 0 < cd <= 1 (default 0.61, a sharp-edged hole; common
        /// practice).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        discharge_coefficient: Option<Input>,
        /// Pressure outside the hole when it has no outlet stream (default: the ambient
        /// pressure); with an outlet stream, that stream's pressure.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        downstream_p: Option<Input>,
    },
    /// Steam trap: a condensate inlet (a line's drain, a user's condensate) and, when it
    /// passes live steam, a `steam` inlet from the header it drains; an outlet to a condensate
    /// header or flash vessel, or none (discharged out of the site). Failed open or leaking,
    /// the live steam is the flow through its orifice (or the equivalent leak hole) as
    /// orifice.flow gives it (common practice, no source: an upper estimate when the trap also
    /// carries condensate).
    Trap {
        /// "healthy" (default: condensate only), "failed_open" (its orifice blows live steam)
        /// or "leaking" (an equivalent hole smaller than the orifice).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        state: Option<String>,
        /// Diameter of the trap's orifice (maker's data): the hole of a failed-open trap.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        diameter: Option<Input>,
        /// Diameter of the equivalent hole of a leaking trap (the auditor's estimate).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        leak_diameter: Option<Input>,
        /// Discharge coefficient of the hole, 0 < cd <= 1 (default 0.61; common practice).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        discharge_coefficient: Option<Input>,
        /// Name of the inlet stream of live steam (from the header the trap drains); needed
        /// when failed open or leaking.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        steam: Option<String>,
        /// Pressure downstream when it has no outlet stream (default: the ambient pressure).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        downstream_p: Option<Input>,
    },
    /// Distribution line: one inlet, its outlet and an optional drain. Heat loss, condensate,
    /// pressure drop and velocity as pipe.flow computes them at the solved inlet state and
    /// flow. The outlet pressure is the stream's or its destination's (else the inlet's): the
    /// line's own drop is reported and warned about, not imposed; the outlet enthalpy is the
    /// inlet's less the heat lost per unit flow.
    Line {
        /// Length of the line.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        length: Option<Input>,
        /// Inner diameter of the pipe.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        inner_diameter: Option<Input>,
        /// Pipe wall thickness.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        wall_thickness: Option<Input>,
        /// Absolute roughness of the inner surface (default 0.045 mm, commercial steel).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        roughness: Option<Input>,
        /// Conductivity of the pipe wall (default 50 W/(m K), carbon steel).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        wall_conductivity: Option<Input>,
        /// Fittings: each a K value or an equivalent length, with a count.
        #[serde(default, skip_serializing_if = "Vec::is_empty")]
        fittings: Vec<FittingIn>,
        /// Elevation of the outlet above the inlet (default 0).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        elevation_change: Option<Input>,
        /// Insulation layers from the pipe outwards (empty: a bare line).
        #[serde(default, skip_serializing_if = "Vec::is_empty")]
        insulation: Vec<LayerIn>,
        /// Jacket over the insulation (its emissivity is the outer surface's).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        jacket: Option<JacketIn>,
        /// Emissivity of the outer surface without a jacket (default 0.9 insulated, 0.8 bare
        /// oxidised steel; common practice).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        emissivity: Option<Input>,
        /// Air temperature (default 20 degC).
        #[serde(rename = "air_T", default, skip_serializing_if = "Option::is_none")]
        air_t: Option<Input>,
        /// Wind speed across the line (default 0: still air).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        wind_speed: Option<Input>,
        /// Temperature of the surroundings the surface radiates to (default: air_T).
        #[serde(
            rename = "surroundings_T",
            default,
            skip_serializing_if = "Option::is_none"
        )]
        surroundings_t: Option<Input>,
        /// Friction factor: "colebrook" (default), "swamee_jain" or "haaland".
        #[serde(default, skip_serializing_if = "Option::is_none")]
        friction_factor: Option<String>,
        /// Segments of the march (default one per 5 m, 40 to 4000).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        segments: Option<u32>,
        /// Name of the drain outlet stream that carries the condensate formed (saturated
        /// liquid, usually to a trap); without one it stays in the steam as moisture.
        #[serde(default, skip_serializing_if = "Option::is_none")]
        drain: Option<String>,
        /// Surface temperature above which a personnel-protection warning is given (default
        /// 60 degC; common practice).
        #[serde(
            rename = "touch_limit_T",
            default,
            skip_serializing_if = "Option::is_none"
        )]
        touch_limit_t: Option<Input>,
    },
}

/// How a network's losses (leaks, traps, lines) are priced; every field optional.
#[derive(Debug, Clone, PartialEq, Default, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct CostingIn {
    /// Hours per year the site runs (default 8760).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub hours_per_year: Option<Input>,
    /// Fuel price per fuel energy, currency-neutral ("30 EUR/MWh", "8 $/MMBtu"; a bare number
    /// is per MWh, per GJ in si, per MMBtu in us).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fuel_cost: Option<Input>,
    /// Steam price per mass of steam ("25 /t"; a bare number is per t, per klb in us); instead
    /// of fuel_cost.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub steam_cost: Option<Input>,
    /// Boiler efficiency, fuel to steam (default: the site's own boilers, their heat to water
    /// and steam over their fuel heat input).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub boiler_efficiency: Option<Input>,
    /// Make-up water temperature (default: the site's make-up water, flow-weighted, else
    /// 15 degC).
    #[serde(rename = "makeup_T", default, skip_serializing_if = "Option::is_none")]
    pub makeup_t: Option<Input>,
}

/// A site network.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct NetworkIn {
    /// Units by name.
    pub units: BTreeMap<String, UnitSpec>,
    /// Streams by name.
    pub streams: BTreeMap<String, StreamIn>,
    /// How the losses of leaks, traps and lines are priced (default: 8760 h, no price, the
    /// site's own boilers and make-up water).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub costing: Option<CostingIn>,
}

/// A unit of a site network: an object with `kind` and that kind's fields (see [`UnitIn`]).
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize)]
#[serde(transparent)]
pub struct UnitSpec(pub UnitIn);

impl JsonSchema for UnitSpec {
    fn schema_name() -> String {
        "Unit".into()
    }
    fn json_schema(g: &mut schemars::gen::SchemaGenerator) -> schemars::schema::Schema {
        use schemars::schema::Schema;
        let mut s = UnitIn::json_schema(g);
        if let Schema::Object(o) = &mut s {
            if let Some(sub) = o.subschemas.as_mut() {
                for v in sub.one_of.iter_mut().flatten() {
                    if let Schema::Object(vo) = v {
                        if let Some(obj) = vo.object.as_mut() {
                            if let Some(Schema::Object(k)) = obj.properties.get_mut("kind") {
                                k.metadata().description = Some(
                                    "Unit kind: boiler, turbine, valve, desuperheater, header, deaerator, flash, pump, condenser, exchanger, user, vent, makeup, leak, trap or line.".into(),
                                );
                            }
                        }
                    }
                }
            }
        }
        s
    }
}

fn opt(ctx: &Ctx, q: &str, dim: Dim, v: &Option<Input>) -> Result<Option<f64>> {
    v.as_ref().map(|x| ctx.value(q, dim, x)).transpose()
}

impl NetworkIn {
    /// Converts to the library network in internal units.
    pub fn to_network(&self, ctx: &Ctx) -> Result<Network> {
        use Dim::*;
        let mut units = BTreeMap::new();
        for (n, UnitSpec(u)) in &self.units {
            let q = |f: &str| format!("units.{n}.{f}");
            let unit = match u {
                UnitIn::Boiler {
                    p,
                    t,
                    efficiency,
                    blowdown_fraction,
                    blowdown,
                    steam_flow,
                } => Unit::Boiler {
                    p: opt(ctx, &q("p"), Pressure, p)?,
                    t: opt(ctx, &q("T"), Temperature, t)?,
                    efficiency: opt(ctx, &q("efficiency"), Dimensionless, efficiency)?,
                    blowdown_fraction: opt(
                        ctx,
                        &q("blowdown_fraction"),
                        Dimensionless,
                        blowdown_fraction,
                    )?
                    .unwrap_or(0.0),
                    blowdown: blowdown.clone(),
                    steam_flow: opt(ctx, &q("steam_flow"), MassFlow, steam_flow)?,
                },
                UnitIn::Turbine { efficiency, power } => Unit::Turbine {
                    efficiency: opt(ctx, &q("efficiency"), Dimensionless, efficiency)?,
                    power: opt(ctx, &q("power"), Power, power)?,
                },
                UnitIn::Valve { p } => Unit::Valve {
                    p: opt(ctx, &q("p"), Pressure, p)?,
                },
                UnitIn::Desuperheater {
                    water,
                    p,
                    t,
                    superheat,
                } => Unit::Desuperheater {
                    water: water.clone(),
                    p: opt(ctx, &q("p"), Pressure, p)?,
                    t: opt(ctx, &q("T"), Temperature, t)?,
                    superheat: opt(ctx, &q("superheat"), TemperatureDifference, superheat)?,
                },
                UnitIn::Header { p } => Unit::Header {
                    p: opt(ctx, &q("p"), Pressure, p)?,
                },
                UnitIn::Deaerator {
                    p,
                    steam,
                    vent,
                    vent_fraction,
                } => Unit::Deaerator {
                    p: opt(ctx, &q("p"), Pressure, p)?,
                    steam: steam.clone(),
                    vent: vent.clone(),
                    vent_fraction: opt(ctx, &q("vent_fraction"), Dimensionless, vent_fraction)?,
                },
                UnitIn::Flash { p, vapour } => Unit::Flash {
                    p: opt(ctx, &q("p"), Pressure, p)?,
                    vapour: vapour.clone(),
                },
                UnitIn::Pump { p, efficiency } => Unit::Pump {
                    p: opt(ctx, &q("p"), Pressure, p)?,
                    efficiency: opt(ctx, &q("efficiency"), Dimensionless, efficiency)?,
                },
                UnitIn::Condenser { p } => Unit::Condenser {
                    p: opt(ctx, &q("p"), Pressure, p)?,
                },
                UnitIn::Exchanger { hot_in, hot_out } => Unit::Exchanger {
                    hot_in: hot_in.clone(),
                    hot_out: hot_out.clone(),
                },
                UnitIn::User {
                    demand,
                    return_fraction,
                    return_t,
                } => Unit::User {
                    demand: opt(ctx, &q("demand"), MassFlow, demand)?,
                    return_fraction: opt(
                        ctx,
                        &q("return_fraction"),
                        Dimensionless,
                        return_fraction,
                    )?
                    .unwrap_or(0.0),
                    return_t: opt(ctx, &q("return_T"), Temperature, return_t)?,
                },
                UnitIn::Vent {} => Unit::Vent,
                UnitIn::Makeup { t } => Unit::Makeup {
                    t: opt(ctx, &q("T"), Temperature, t)?,
                },
                UnitIn::Leak {
                    diameter,
                    discharge_coefficient,
                    downstream_p,
                } => Unit::Leak {
                    diameter: opt(ctx, &q("diameter"), Length, diameter)?,
                    discharge_coefficient: opt(
                        ctx,
                        &q("discharge_coefficient"),
                        Dimensionless,
                        discharge_coefficient,
                    )?,
                    downstream_p: self.outside_p(ctx, n, &q("downstream_p"), downstream_p)?,
                },
                UnitIn::Trap {
                    state,
                    diameter,
                    leak_diameter,
                    discharge_coefficient,
                    steam,
                    downstream_p,
                } => Unit::Trap {
                    state: match state.as_deref() {
                        None | Some("healthy") => TrapState::Healthy,
                        Some("failed_open") => TrapState::FailedOpen,
                        Some("leaking") => TrapState::Leaking,
                        Some(other) => {
                            return Err(Error::invalid(format!(
                                "units.{n}.state: '{other}' is not a trap state; accepted: healthy, failed_open, leaking"
                            )))
                        }
                    },
                    diameter: opt(ctx, &q("diameter"), Length, diameter)?,
                    leak_diameter: opt(ctx, &q("leak_diameter"), Length, leak_diameter)?,
                    discharge_coefficient: opt(
                        ctx,
                        &q("discharge_coefficient"),
                        Dimensionless,
                        discharge_coefficient,
                    )?,
                    steam: steam.clone(),
                    downstream_p: self.outside_p(ctx, n, &q("downstream_p"), downstream_p)?,
                },
                UnitIn::Line {
                    length,
                    inner_diameter,
                    wall_thickness,
                    roughness,
                    wall_conductivity,
                    fittings,
                    elevation_change,
                    insulation,
                    jacket,
                    emissivity,
                    air_t,
                    wind_speed,
                    surroundings_t,
                    friction_factor,
                    segments,
                    drain,
                    touch_limit_t,
                } => {
                    let mut k_total = 0.0;
                    let mut le_total = 0.0;
                    for (i, f) in fittings.iter().enumerate() {
                        let c = f.count.unwrap_or(1) as f64;
                        match (&f.k, &f.equivalent_length) {
                            (Some(k), None) => {
                                k_total += c * ctx.value(&q(&format!("fittings[{i}].K")), Dimensionless, k)?
                            }
                            (None, Some(l)) => {
                                le_total += c * ctx.value(
                                    &q(&format!("fittings[{i}].equivalent_length")),
                                    Length,
                                    l,
                                )?
                            }
                            (Some(_), Some(_)) | (None, None) => {
                                return Err(Error::invalid(format!(
                                    "units.{n}.fittings[{i}]: give K or equivalent_length (one of the two)"
                                )))
                            }
                        }
                    }
                    let mut layers = Vec::new();
                    for (i, l) in insulation.iter().enumerate() {
                        layers.push(Layer {
                            thickness: ctx.value(
                                &q(&format!("insulation[{i}].thickness")),
                                Length,
                                &l.thickness,
                            )?,
                            conductivity: ctx.value(
                                &q(&format!("insulation[{i}].conductivity")),
                                Conductivity,
                                &l.conductivity,
                            )?,
                        });
                    }
                    let mut emissivity = opt(ctx, &q("emissivity"), Dimensionless, emissivity)?;
                    if let Some(j) = jacket {
                        if insulation.is_empty() {
                            return Err(Error::invalid(format!(
                                "units.{n}.jacket: a jacket covers insulation; give the insulation layers too"
                            )));
                        }
                        if emissivity.is_some() {
                            return Err(Error::invalid(format!(
                                "units.{n}: give the outer emissivity once: jacket.emissivity or emissivity"
                            )));
                        }
                        emissivity =
                            Some(ctx.value(&q("jacket.emissivity"), Dimensionless, &j.emissivity)?);
                        if let Some(t) = &j.thickness {
                            layers.push(Layer {
                                thickness: ctx.value(&q("jacket.thickness"), Length, t)?,
                                conductivity: opt(
                                    ctx,
                                    &q("jacket.conductivity"),
                                    Conductivity,
                                    &j.conductivity,
                                )?
                                .unwrap_or(crate::plant::pipe::K_STEEL),
                            });
                        }
                    }
                    Unit::Line(Box::new(LineUnit {
                        length: opt(ctx, &q("length"), Length, length)?,
                        inner_diameter: opt(ctx, &q("inner_diameter"), Length, inner_diameter)?,
                        wall_thickness: opt(ctx, &q("wall_thickness"), Length, wall_thickness)?,
                        roughness: opt(ctx, &q("roughness"), Length, roughness)?,
                        wall_conductivity: opt(
                            ctx,
                            &q("wall_conductivity"),
                            Conductivity,
                            wall_conductivity,
                        )?,
                        k_total,
                        equivalent_length: le_total,
                        elevation_change: opt(ctx, &q("elevation_change"), Length, elevation_change)?
                            .unwrap_or(0.0),
                        layers,
                        emissivity,
                        air_t: opt(ctx, &q("air_T"), Temperature, air_t)?,
                        air_p: Some(ctx.ambient),
                        wind: opt(ctx, &q("wind_speed"), Speed, wind_speed)?,
                        radiant_t: opt(ctx, &q("surroundings_T"), Temperature, surroundings_t)?,
                        friction: match friction_factor.as_deref() {
                            None | Some("colebrook") => FrictionModel::Colebrook,
                            Some("swamee_jain") => FrictionModel::SwameeJain,
                            Some("haaland") => FrictionModel::Haaland,
                            Some(other) => {
                                return Err(Error::invalid(format!(
                                    "units.{n}.friction_factor: '{other}' is not known; accepted: colebrook, swamee_jain, haaland"
                                )))
                            }
                        },
                        segments: segments.map(|x| x as usize),
                        drain: drain.clone(),
                        touch_limit_t: opt(ctx, &q("touch_limit_T"), Temperature, touch_limit_t)?,
                    }))
                }
            };
            units.insert(n.clone(), unit);
        }
        let mut streams = BTreeMap::new();
        for (n, s) in &self.streams {
            let q = |f: &str| format!("streams.{n}.{f}");
            streams.insert(
                n.clone(),
                StreamSpec {
                    from: s.from.clone(),
                    to: s.to.clone(),
                    flow: opt(ctx, &q("flow"), MassFlow, &s.flow)?,
                    p: opt(ctx, &q("p"), Pressure, &s.p)?,
                    t: opt(ctx, &q("T"), Temperature, &s.t)?,
                    h: opt(ctx, &q("h"), SpecificEnergy, &s.h)?,
                    x: opt(ctx, &q("x"), Dimensionless, &s.x)?,
                },
            );
        }
        let costing = match &self.costing {
            None => SiteCosting::default(),
            Some(c) => {
                let q = |f: &str| format!("costing.{f}");
                let price = match (&c.fuel_cost, &c.steam_cost) {
                    (Some(_), Some(_)) => {
                        return Err(Error::invalid(
                            "costing: give fuel_cost (per fuel energy) or steam_cost (per mass of steam), not both",
                        ))
                    }
                    (Some(x), None) => Some(Price::PerFuelEnergy(ctx.value(
                        &q("fuel_cost"),
                        PricePerEnergy,
                        x,
                    )?)),
                    (None, Some(x)) => Some(Price::PerSteamMass(ctx.value(
                        &q("steam_cost"),
                        PricePerMass,
                        x,
                    )?)),
                    (None, None) => None,
                };
                SiteCosting {
                    hours_per_year: opt(
                        ctx,
                        &q("hours_per_year"),
                        Dimensionless,
                        &c.hours_per_year,
                    )?,
                    price,
                    boiler_efficiency: opt(
                        ctx,
                        &q("boiler_efficiency"),
                        Dimensionless,
                        &c.boiler_efficiency,
                    )?,
                    makeup_t: opt(ctx, &q("makeup_T"), Temperature, &c.makeup_t)?,
                }
            }
        };
        Ok(Network {
            units,
            streams,
            costing,
        })
    }

    /// The pressure outside a leak or trap: as given, else the ambient pressure when it has
    /// no outlet stream (a leak to atmosphere), else None (its outlet stream's).
    fn outside_p(
        &self,
        ctx: &Ctx,
        unit: &str,
        q: &str,
        given: &Option<Input>,
    ) -> Result<Option<f64>> {
        match given {
            Some(x) => ctx.value(q, Dim::Pressure, x).map(Some),
            None => Ok((!self.streams.values().any(|s| s.from == unit)).then_some(ctx.ambient)),
        }
    }
}

/// Parameters of `balance.solve`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct SolveParams {
    /// The site network.
    pub network: NetworkIn,
    /// Units of bare numbers and of the answer: a preset ("engineering" by default, "si", "us",
    /// "bar", "bar_th") or an object with a preset and units per dimension, field or path, e.g.
    /// {"preset": "engineering", "p": "barg", "flow": "t/h", "power": "MW"}.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<Units>,
    /// Ambient pressure for gauge units (default 101.325 kPa).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
}

/// A solved stream.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct StreamOut {
    /// Source unit.
    pub from: String,
    /// Destination unit.
    pub to: String,
    /// Mass flow (never negative: a balance that needs a stream reversed is refused with the
    /// specifications that would fix it).
    pub flow: f64,
    /// Enthalpy flow m h (IAPWS-IF97 reference).
    pub energy_flow: f64,
    /// Full state.
    pub state: StateResult,
}

/// A solved unit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct UnitOut {
    /// Unit kind.
    pub kind: String,
    /// Shaft power: produced (turbine) or absorbed (pump).
    pub power: Option<f64>,
    /// Heat duty: to water and steam (boiler), rejected (condenser), exchanged
    /// (exchanger), to process (user).
    pub duty: Option<f64>,
    /// Fuel heat input (boiler).
    pub fuel_heat_input: Option<f64>,
    /// Efficiency: the boiler's or pump's, or the turbine's overall isentropic efficiency
    /// from its inlet to its lowest-pressure outlet.
    pub efficiency: Option<f64>,
    /// Mass leaving the site at this unit (lost condensate, blowdown or vent without a stream).
    pub mass_lost: f64,
    /// Enthalpy flow leaving with that mass.
    pub energy_lost: f64,
    /// Mass and energy balance of the unit (heat, work and losses included).
    pub balance: BalanceOut,
    /// What a leak, trap or line loses and what it costs (null for other units).
    pub loss: Option<LossOut>,
    /// Warnings.
    pub warnings: Vec<WarningOut>,
}

/// A loss over a year, with the network's costing.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct LossYearlyOut {
    /// Steam lost per year (for a line: the steam that carries the heat lost), in the preset's
    /// mass unit (t, kg in si, klb in us).
    pub steam: f64,
    /// Boiler heat to make the loss good per year, in the preset's energy unit (MWh, GJ in si,
    /// MMBtu in us).
    pub heat: f64,
    /// Fuel energy per year (null without a boiler efficiency).
    pub fuel: Option<f64>,
    /// Cost per year in the currency of the price (null without a price).
    pub cost: Option<f64>,
}

/// What a leak, trap or line loses.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct LossOut {
    /// Live steam (or water) lost through the hole: a leak's flow, the live steam of a failed
    /// or leaking trap (0 for a healthy trap and a line).
    pub steam: f64,
    /// Heat lost from a line to its surroundings (0 for leaks and traps).
    pub heat: f64,
    /// Condensate formed in a line.
    pub condensate: f64,
    /// Boiler heat to make the loss good: steam x (h - h of make-up water) + heat.
    pub makeup_heat: f64,
    /// Fuel heat input for it (null without a boiler efficiency).
    pub fuel: Option<f64>,
    /// Whether the flow through the hole is choked (null for a line or a healthy trap).
    pub choked: Option<bool>,
    /// Pressure drop the line needs at its flow (computed by the line march; reported, not
    /// imposed on the streams).
    pub pressure_drop: Option<f64>,
    /// Highest velocity in the line.
    pub velocity: Option<f64>,
    /// Highest outer surface temperature of the line.
    #[serde(rename = "surface_T")]
    pub surface_t: Option<f64>,
    /// The yearly amounts.
    pub yearly: LossYearlyOut,
}

/// Site totals.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct TotalsOut {
    /// Fuel heat input of all boilers.
    pub fuel_heat_input: f64,
    /// Boiler losses (fuel heat input - heat to water and steam).
    pub boiler_losses: f64,
    /// Gross turbine power.
    pub turbine_power: f64,
    /// Pump power.
    pub pump_power: f64,
    /// Net power: turbine power - pump power.
    pub net_power: f64,
    /// Steam to process users (mass flow).
    pub process_steam: f64,
    /// Heat to process users.
    pub process_heat: f64,
    /// Condenser duty.
    pub condenser_duty: f64,
    /// Make-up water (mass flow).
    pub makeup_water: f64,
    /// Vented steam (mass flow), deaerator vents without a stream included.
    pub vented_steam: f64,
    /// Condensate not returned (mass flow).
    pub condensate_lost: f64,
    /// Blowdown leaving the site (mass flow).
    pub blowdown_lost: f64,
    /// Flow through leak units (mass flow), whatever their destination.
    pub leak_flow: f64,
    /// Live steam through failed and leaking traps (mass flow).
    pub trap_steam: f64,
    /// Steam lost: leak flow + trap live steam (mass flow).
    pub steam_lost: f64,
    /// Heat lost from lines to their surroundings.
    pub line_heat_loss: f64,
    /// Condensate formed in lines (mass flow).
    pub line_condensate: f64,
    /// Mass leaving the site at leaks and traps without an outlet stream (mass flow).
    pub loss_discharged: f64,
    /// Boiler heat to make every leak, trap and line loss good (heat flow): steam lost x (h -
    /// h of make-up water) + heat lost from lines.
    pub loss_heat: f64,
    /// Fuel heat input for it (loss_heat / boiler efficiency; null without one).
    pub loss_fuel: Option<f64>,
    /// Hours per year of the costing.
    pub hours_per_year: f64,
    /// Steam lost through leaks and traps per year, in the preset's mass unit (t, kg in si,
    /// klb in us).
    pub steam_lost_per_year: f64,
    /// Boiler heat to make the losses good per year, in the preset's energy unit (MWh, GJ in
    /// si, MMBtu in us).
    pub loss_heat_per_year: f64,
    /// Fuel for it per year (null without a boiler efficiency).
    pub loss_fuel_per_year: Option<f64>,
    /// Cost of the losses per year, in the currency of the network's price (null without a
    /// price, or with a fuel price and no boiler efficiency).
    pub loss_cost_per_year: Option<f64>,
    /// Site mass in (make-up).
    pub mass_in: f64,
    /// Site mass out (vents, lost condensate, blowdown, and what leaks and traps discharge).
    pub mass_out: f64,
    /// Site energy in: fuel heat input + make-up enthalpy flow + pump power.
    pub energy_in: f64,
    /// Site energy out: turbine power + process heat + condenser duty + boiler losses +
    /// vented and lost enthalpy flows + what leaks and traps discharge + heat lost from lines.
    pub energy_out: f64,
    /// |mass in - mass out| / max.
    pub mass_residual: f64,
    /// |energy in - energy out| / max.
    pub energy_residual: f64,
}

/// A node of the energy-flow summary.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct NodeOut {
    /// Unit name, or a boundary: "fuel", "power", "process", "losses", "cooling".
    pub name: String,
    /// Unit kind, or "boundary".
    pub kind: String,
}

/// A link of the energy-flow summary.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct LinkOut {
    /// Source node name.
    pub source: String,
    /// Target node name.
    pub target: String,
    /// The stream carried, when the link is a stream (null for heat, work and losses).
    pub stream: Option<String>,
    /// Energy flow (m h for a stream, IAPWS-IF97 reference).
    pub energy: f64,
    /// Mass flow (0 for heat and work).
    pub mass: f64,
}

/// Energy-flow summary for a Sankey chart.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct SankeyOut {
    /// Nodes: every unit and the boundaries.
    pub nodes: Vec<NodeOut>,
    /// Links: every stream, fuel, power, process heat, cooling and losses.
    pub links: Vec<LinkOut>,
}

/// Result of `balance.solve`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct SolveResult {
    /// Streams by name.
    pub streams: BTreeMap<String, StreamOut>,
    /// Units by name.
    pub units: BTreeMap<String, UnitOut>,
    /// Site totals.
    pub totals: TotalsOut,
    /// Energy-flow summary.
    pub sankey: SankeyOut,
    /// Outer iterations (state update and flow solve).
    pub iterations: usize,
    /// Largest relative residual over all units, the flow equations and the site.
    pub residual: f64,
    /// All warnings, each prefixed with its unit.
    pub warnings: Vec<WarningOut>,
    /// How the losses were priced.
    pub costing: CostingOut,
    /// Standing caution.
    pub caution: String,
    /// Units of the numeric fields.
    pub units_used: BTreeMap<String, String>,
}

/// How the losses were priced.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct CostingOut {
    /// Hours per year.
    pub hours_per_year: f64,
    /// Boiler efficiency used (null: none given and no boiler on the site).
    pub boiler_efficiency: Option<f64>,
    /// Where the efficiency comes from: "given", "the site's boilers" or "none".
    pub boiler_efficiency_source: String,
    /// Make-up water temperature used.
    #[serde(rename = "makeup_T")]
    pub makeup_t: f64,
    /// How the amounts are reckoned.
    pub basis: String,
}

/// How the losses' amounts are reckoned (`costing.basis` of every `balance.solve`).
pub const LOSS_BASIS: &str = "each leak and trap loss is valued as steam replaced by make-up water raised to the lost steam's enthalpy in the boiler, each line loss as boiler heat one for one; fuel = boiler heat / boiler efficiency; cost = fuel x fuel_cost or steam x steam_cost (for a line, the steam that carries its heat); yearly = rate x hours_per_year. This is the auditor's convention for one loss; the site balance itself shows what the site really saves when a loss is fixed (compare fuel_heat_input, e.g. with balance.sweep), which is less when the lost steam's energy comes back through condensate returns or the deaerator. Feed-pump work, water treatment and blowdown are not counted";

fn bal(ctx: &Ctx, x: &Balance) -> BalanceOut {
    let m = |name: &str, v: f64| ctx.out(name, Dim::MassFlow, v);
    let e = |name: &str, v: f64| ctx.out(name, Dim::HeatFlow, v);
    BalanceOut {
        mass_in: m("balance.mass_in", x.mass_in),
        mass_out: m("balance.mass_out", x.mass_out),
        energy_in: e("balance.energy_in", x.energy_in),
        energy_out: e("balance.energy_out", x.energy_out),
        mass_residual: if x.mass_in == 0.0 && x.mass_out == 0.0 {
            0.0
        } else {
            x.mass_residual()
        },
        energy_residual: if x.energy_in == 0.0 && x.energy_out == 0.0 {
            0.0
        } else {
            x.energy_residual()
        },
    }
}

fn totals_out(ctx: &Ctx, t: &b::Totals) -> TotalsOut {
    let m = |name: &str, v: f64| ctx.out(name, Dim::MassFlow, v);
    let e = |name: &str, v: f64| ctx.out(name, Dim::HeatFlow, v);
    let w = |name: &str, v: f64| ctx.out(name, Dim::Power, v);
    TotalsOut {
        fuel_heat_input: e("totals.fuel_heat_input", t.fuel_heat_input),
        boiler_losses: e("totals.boiler_losses", t.boiler_losses),
        turbine_power: w("totals.turbine_power", t.turbine_power),
        pump_power: w("totals.pump_power", t.pump_power),
        net_power: w("totals.net_power", t.net_power),
        process_steam: m("totals.process_steam", t.process_steam),
        process_heat: e("totals.process_heat", t.process_heat),
        condenser_duty: e("totals.condenser_duty", t.condenser_duty),
        makeup_water: m("totals.makeup_water", t.makeup_water),
        vented_steam: m("totals.vented_steam", t.vented),
        condensate_lost: m("totals.condensate_lost", t.condensate_lost),
        blowdown_lost: m("totals.blowdown_lost", t.blowdown_lost),
        leak_flow: m("totals.leak_flow", t.leak_flow),
        trap_steam: m("totals.trap_steam", t.trap_steam),
        steam_lost: m("totals.steam_lost", t.steam_lost),
        line_heat_loss: e("totals.line_heat_loss", t.line_heat_loss),
        line_condensate: m("totals.line_condensate", t.line_condensate),
        loss_discharged: m("totals.loss_discharged", t.loss_discharged),
        loss_heat: e("totals.loss_heat", t.loss_heat),
        loss_fuel: t.loss_fuel.map(|v| e("totals.loss_fuel", v)),
        hours_per_year: t.hours_per_year,
        steam_lost_per_year: ctx.out(
            "totals.steam_lost_per_year",
            Dim::Mass,
            t.steam_lost_per_year,
        ),
        loss_heat_per_year: ctx.out(
            "totals.loss_heat_per_year",
            Dim::Energy,
            t.loss_heat_per_year,
        ),
        loss_fuel_per_year: t
            .loss_fuel_per_year
            .map(|v| ctx.out("totals.loss_fuel_per_year", Dim::Energy, v)),
        loss_cost_per_year: t.loss_cost_per_year,
        mass_in: m("totals.mass_in", t.mass_in),
        mass_out: m("totals.mass_out", t.mass_out),
        energy_in: e("totals.energy_in", t.energy_in),
        energy_out: e("totals.energy_out", t.energy_out),
        mass_residual: if t.mass_in == 0.0 && t.mass_out == 0.0 {
            0.0
        } else {
            t.mass_residual()
        },
        energy_residual: t.energy_residual(),
    }
}

fn units_used(ctx: &Ctx) -> BTreeMap<String, String> {
    let mut u = BTreeMap::new();
    u.insert("flow".into(), ctx.unit("flow", Dim::MassFlow).into());
    u.insert("power".into(), ctx.unit("power", Dim::Power).into());
    u.insert("heat".into(), ctx.unit("heat", Dim::HeatFlow).into());
    u.insert("energy".into(), ctx.unit("energy", Dim::HeatFlow).into());
    u.insert("p".into(), ctx.unit("p", Dim::Pressure).into());
    u.insert(
        "pressure_drop".into(),
        ctx.unit("pressure_drop", Dim::PressureDifference).into(),
    );
    u.insert("T".into(), ctx.unit("T", Dim::Temperature).into());
    u.insert("h".into(), ctx.unit("h", Dim::SpecificEnergy).into());
    u.insert("mass".into(), ctx.unit("mass", Dim::Mass).into());
    u.insert(
        "energy_per_year".into(),
        ctx.unit("energy_per_year", Dim::Energy).into(),
    );
    u.insert("speed".into(), ctx.unit("speed", Dim::Speed).into());
    u.insert(
        "cost".into(),
        "currency of the price given (per year)".into(),
    );
    u.insert("hours_per_year".into(), "h".into());
    ctx.finish_units(&mut u);
    u
}

fn loss_out(ctx: &Ctx, l: &b::LossResult) -> LossOut {
    let m = |name: &str, v: f64| ctx.out(name, Dim::MassFlow, v);
    let e = |name: &str, v: f64| ctx.out(name, Dim::HeatFlow, v);
    let y = &l.yearly;
    LossOut {
        steam: m("units.loss.steam", l.steam),
        heat: e("units.loss.heat", l.heat),
        condensate: m("units.loss.condensate", l.condensate),
        makeup_heat: e("units.loss.makeup_heat", l.makeup_heat),
        fuel: l.fuel.map(|v| e("units.loss.fuel", v)),
        choked: l.choked,
        pressure_drop: l
            .pressure_drop
            .map(|v| ctx.out("units.loss.pressure_drop", Dim::PressureDifference, v)),
        velocity: l
            .velocity
            .map(|v| ctx.out("units.loss.velocity", Dim::Speed, v)),
        surface_t: l
            .surface_t
            .map(|v| ctx.out("units.loss.surface_T", Dim::Temperature, v)),
        yearly: LossYearlyOut {
            steam: ctx.out("units.loss.yearly.steam", Dim::Mass, y.steam),
            heat: ctx.out("units.loss.yearly.heat", Dim::Energy, y.heat),
            fuel: y
                .fuel
                .map(|v| ctx.out("units.loss.yearly.fuel", Dim::Energy, v)),
            cost: y.cost,
        },
    }
}

/// Shapes a library solution for the wire.
pub fn solution_out(ctx: &Ctx, s: &b::Solution) -> SolveResult {
    let m = |name: &str, v: f64| ctx.out(name, Dim::MassFlow, v);
    let e = |name: &str, v: f64| ctx.out(name, Dim::HeatFlow, v);
    let w = |name: &str, v: f64| ctx.out(name, Dim::Power, v);
    SolveResult {
        streams: s
            .streams
            .iter()
            .map(|(n, r)| {
                (
                    n.clone(),
                    StreamOut {
                        from: r.from.clone(),
                        to: r.to.clone(),
                        flow: m("streams.flow", r.flow),
                        energy_flow: e("streams.energy_flow", r.flow * r.state.props.h),
                        state: state_result_at(&r.state, ctx, "streams.state"),
                    },
                )
            })
            .collect(),
        units: s
            .units
            .iter()
            .map(|(n, r)| {
                (
                    n.clone(),
                    UnitOut {
                        kind: r.kind.into(),
                        power: r.power.map(|v| w("units.power", v)),
                        duty: r.duty.map(|v| e("units.duty", v)),
                        fuel_heat_input: r.fuel_heat_input.map(|v| e("units.fuel_heat_input", v)),
                        efficiency: r
                            .efficiency
                            .map(|v| ctx.out("units.efficiency", Dim::Dimensionless, v)),
                        mass_lost: m("units.mass_lost", r.mass_lost),
                        energy_lost: e("units.energy_lost", r.energy_lost),
                        balance: bal(ctx, &r.balance),
                        loss: r.loss.as_ref().map(|l| loss_out(ctx, l)),
                        warnings: warnings_out(ctx, &r.warnings),
                    },
                )
            })
            .collect(),
        totals: totals_out(ctx, &s.totals),
        sankey: SankeyOut {
            nodes: s
                .nodes
                .iter()
                .map(|n| NodeOut {
                    name: n.name.clone(),
                    kind: n.kind.clone(),
                })
                .collect(),
            links: s
                .links
                .iter()
                .map(|l| LinkOut {
                    source: l.source.clone(),
                    target: l.target.clone(),
                    stream: l.stream.clone(),
                    energy: e("sankey.links.energy", l.energy),
                    mass: m("sankey.links.mass", l.mass),
                })
                .collect(),
        },
        iterations: s.iterations,
        residual: s.residual,
        warnings: warnings_out(ctx, &s.warnings),
        costing: CostingOut {
            hours_per_year: s.totals.hours_per_year,
            boiler_efficiency: s.totals.loss_boiler_efficiency,
            boiler_efficiency_source: match (
                s.totals.loss_boiler_efficiency_given,
                s.totals.loss_boiler_efficiency,
            ) {
                (true, _) => "given",
                (false, Some(_)) => "the site's boilers",
                (false, None) => "none",
            }
            .into(),
            makeup_t: ctx.out("costing.makeup_T", Dim::Temperature, s.totals.loss_makeup_t),
            basis: LOSS_BASIS.into(),
        },
        caution: b::CAUTION.into(),
        units_used: units_used(ctx),
    }
}

/// Re-states a balance error in the caller's units: the amounts of a refused network's
/// findings, a quantity out of range and the values of an input or feasibility message.
pub fn restate(ctx: &Ctx, e: Error) -> Error {
    match e {
        Error::Specification { mut diagnosis } => {
            diagnosis.restate(|dim, v| (ctx.out("diagnosis", dim, v), ctx.unit("diagnosis", dim)));
            Error::Specification { diagnosis }
        }
        Error::OutOfRange {
            quantity,
            value,
            limit,
            unit,
            bound,
            formulation,
        } if quantity.contains(": ") => {
            // a range error met inside a unit: "kind name: h"; the quantity after the prefix
            let (prefix, q) = quantity.rsplit_once(": ").unwrap_or(("", &quantity));
            match ctx.restate(Error::OutOfRange {
                quantity: q.to_string(),
                value,
                limit,
                unit,
                bound,
                formulation,
            }) {
                Error::OutOfRange {
                    quantity: q,
                    value,
                    limit,
                    unit,
                    bound,
                    formulation,
                } => Error::OutOfRange {
                    quantity: format!("{prefix}: {q}"),
                    value,
                    limit,
                    unit,
                    bound,
                    formulation,
                },
                other => other,
            }
        }
        other => ctx.restate_message(ctx.restate(other)),
    }
}

fn balance_solve(p: SolveParams) -> Result<SolveResult> {
    let ctx = Ctx::new(p.units.as_ref(), p.ambient.as_ref())?;
    let net = p.network.to_network(&ctx)?;
    let sol = b::solve(&net).map_err(|e| restate(&ctx, e))?;
    Ok(solution_out(&ctx, &sol))
}

/// Parameters of `balance.sweep`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct SweepParams {
    /// The site network.
    pub network: NetworkIn,
    /// Dotted path of the specification to vary, e.g. "units.LP_users.demand",
    /// "streams.S1.flow", "units.flange_leak.diameter" or "costing.fuel_cost" (the field is
    /// created when absent; its parent must exist).
    pub path: String,
    /// First value: a number in the request's preset for the swept quantity, or a text with
    /// its unit ("20 t/h", "5 barg", "91 %"), read in the dimension of the field at `path`.
    pub from: Input,
    /// Last value (number or text with its unit, like `from`).
    pub to: Input,
    /// Number of points, 1 to 1000 (1 gives `from` only).
    pub points: usize,
    /// Streams whose flow and state to report per point (default: none).
    #[serde(default)]
    pub streams: Vec<String>,
    /// Units of bare numbers and of the answer: a preset ("engineering" by default, "si", "us",
    /// "bar", "bar_th") or an object with a preset and units per dimension, field or path, e.g.
    /// {"preset": "engineering", "p": "barg", "flow": "t/h", "power": "MW"}.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<Units>,
    /// Ambient pressure for gauge units.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
}

/// A chosen stream at one sweep point.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct PickOut {
    /// Mass flow.
    pub flow: f64,
    /// Pressure.
    pub p: Option<f64>,
    /// Temperature.
    #[serde(rename = "T")]
    pub t: Option<f64>,
    /// Specific enthalpy.
    pub h: Option<f64>,
    /// Quality (null when single-phase).
    pub x: Option<f64>,
}

/// One sweep point.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct PointOut {
    /// The value of the varied specification, in `unit` of the result.
    pub value: f64,
    /// Whether the point was solved.
    pub ok: bool,
    /// Why the point could not be solved (null when solved).
    pub error: Option<String>,
    /// Site totals (null when not solved).
    pub totals: Option<TotalsOut>,
    /// The chosen streams (empty when not solved).
    pub streams: BTreeMap<String, PickOut>,
    /// Outer iterations used.
    pub iterations: usize,
    /// Warnings at this point.
    pub warnings: Vec<WarningOut>,
}

/// Result of `balance.sweep`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct SweepResult {
    /// The varied path.
    pub path: String,
    /// Unit of every point's `value`: the preset's unit of the swept quantity.
    pub unit: String,
    /// Points in order.
    pub points: Vec<PointOut>,
    /// Points that could not be solved.
    pub failed: usize,
    /// Standing caution.
    pub caution: String,
    /// Units of the numeric fields.
    pub units_used: BTreeMap<String, String>,
}

/// The dimension of the specification at a dotted network path (its last part), as
/// [`NetworkIn::to_network`] reads it: the dimension in which `balance.sweep` reads `from`/`to`.
pub fn spec_dim(path: &str) -> Result<Dim> {
    use Dim::*;
    let field = path.rsplit('.').next().unwrap_or_default();
    Ok(match field {
        "p" | "downstream_p" => Pressure,
        "T" | "return_T" | "air_T" | "surroundings_T" | "touch_limit_T" | "makeup_T" => {
            Temperature
        }
        "superheat" => TemperatureDifference,
        "h" => SpecificEnergy,
        "flow" | "steam_flow" | "demand" => MassFlow,
        "power" => Power,
        "efficiency" | "blowdown_fraction" | "vent_fraction" | "return_fraction" | "x"
        | "discharge_coefficient" | "emissivity" | "K" | "boiler_efficiency"
        | "hours_per_year" => Dimensionless,
        "diameter" | "leak_diameter" | "length" | "inner_diameter" | "wall_thickness"
        | "roughness" | "elevation_change" | "thickness" | "equivalent_length" => Length,
        "wall_conductivity" | "conductivity" => Conductivity,
        "wind_speed" => Speed,
        "fuel_cost" => PricePerEnergy,
        "steam_cost" => PricePerMass,
        other => {
            return Err(Error::invalid(format!(
                "path '{path}': '{other}' is not a numeric specification (p, T, h, x, flow, steam_flow, demand, power, efficiency, superheat, return_T, blowdown_fraction, vent_fraction, return_fraction; of leaks, traps and lines: diameter, leak_diameter, discharge_coefficient, downstream_p, length, inner_diameter, wall_thickness, roughness, wall_conductivity, elevation_change, emissivity, air_T, wind_speed, surroundings_T, touch_limit_T; of the costing: hours_per_year, fuel_cost, steam_cost, boiler_efficiency, makeup_T)"
            )))
        }
    })
}

/// Sets the value at a dotted path of a JSON object; the parent must exist.
pub fn set_path(root: &mut Value, path: &str, v: Value) -> Result<()> {
    let parts: Vec<&str> = path.split('.').collect();
    if parts.len() < 2 || parts.iter().any(|p| p.is_empty()) {
        return Err(Error::invalid(format!(
            "path '{path}' is not a dotted path such as units.NAME.FIELD"
        )));
    }
    let mut cur = root;
    for (i, p) in parts[..parts.len() - 1].iter().enumerate() {
        cur = cur.get_mut(*p).ok_or_else(|| {
            Error::invalid(format!(
                "path '{path}': '{}' does not exist in the network",
                parts[..=i].join(".")
            ))
        })?;
    }
    match cur {
        Value::Object(o) => {
            o.insert(parts[parts.len() - 1].to_string(), v);
            Ok(())
        }
        _ => Err(Error::invalid(format!(
            "path '{path}': its parent is not an object"
        ))),
    }
}

fn balance_sweep(p: SweepParams) -> Result<SweepResult> {
    let ctx = Ctx::new(p.units.as_ref(), p.ambient.as_ref())?;
    if p.points == 0 || p.points > MAX_SWEEP_POINTS {
        return Err(Error::LimitExceeded {
            what: "balance.sweep points".into(),
            limit: MAX_SWEEP_POINTS as f64,
            value: p.points as f64,
        });
    }
    let dim = spec_dim(&p.path)?;
    // from/to in the request's unit of the swept quantity (a bare number is taken as given)
    let in_preset = |q: &str, x: &Input| -> Result<f64> {
        let internal = ctx.value(q, dim, x)?;
        Ok(match x {
            Input::Number(v) => *v,
            Input::Text(_) => ctx.out(&p.path, dim, internal),
        })
    };
    let from = in_preset("from", &p.from)?;
    let to = in_preset("to", &p.to)?;
    let mut base =
        serde_json::to_value(&p.network).map_err(|e| Error::invalid(format!("network: {e}")))?;
    if p.path.starts_with("costing.") && base.get("costing").is_none() {
        base["costing"] = json!({});
    }
    // check the path once
    let mut probe = base.clone();
    set_path(&mut probe, &p.path, Value::from(from))?;
    for s in &p.streams {
        if !p.network.streams.contains_key(s) {
            return Err(Error::invalid(format!(
                "streams: '{s}' is not a stream of the network"
            )));
        }
    }
    let values: Vec<f64> = (0..p.points)
        .map(|i| {
            if p.points == 1 || i == 0 {
                from
            } else if i == p.points - 1 {
                // exactly `to` (a sweep to zero ends at zero, not at a rounding error)
                to
            } else {
                from + (to - from) * i as f64 / (p.points - 1) as f64
            }
        })
        .collect();
    let results = b::sweep(&values, |v| {
        let mut net = base.clone();
        set_path(&mut net, &p.path, Value::from(v))?;
        let n: NetworkIn = serde_json::from_value(net)
            .map_err(|e| Error::invalid(format!("path '{}': {e}", p.path)))?;
        n.to_network(&ctx)
    });
    let mut points = Vec::new();
    let mut failed = 0;
    for (v, r) in values.iter().zip(results) {
        match r {
            Ok(sol) => {
                let streams = p
                    .streams
                    .iter()
                    .filter_map(|n| sol.streams.get(n).map(|s| (n, s)))
                    .map(|(n, s)| {
                        let st = state_result(&s.state, &ctx);
                        (
                            n.clone(),
                            PickOut {
                                flow: ctx.out("streams.flow", Dim::MassFlow, s.flow),
                                p: st.p,
                                t: st.t,
                                h: st.h,
                                x: st.x,
                            },
                        )
                    })
                    .collect();
                points.push(PointOut {
                    value: *v,
                    ok: true,
                    error: None,
                    totals: Some(totals_out(&ctx, &sol.totals)),
                    streams,
                    iterations: sol.iterations,
                    warnings: warnings_out(&ctx, &sol.warnings),
                });
            }
            Err(e) => {
                failed += 1;
                points.push(PointOut {
                    value: *v,
                    ok: false,
                    error: Some(restate(&ctx, e).to_string()),
                    totals: None,
                    streams: BTreeMap::new(),
                    iterations: 0,
                    warnings: Vec::new(),
                });
            }
        }
    }
    Ok(SweepResult {
        unit: ctx.unit(&p.path, dim).into(),
        path: p.path,
        points,
        failed,
        caution: b::CAUTION.into(),
        units_used: units_used(&ctx),
    })
}

fn source_json(s: &b::Source) -> Value {
    match s {
        b::Source::Stream => json!({ "source": "stream" }),
        b::Source::Unit(u) => json!({ "source": "unit", "unit": u }),
        b::Source::Missing => json!({ "source": "missing" }),
    }
}

fn finding_json(f: &b::Finding) -> Value {
    let (value, value_unit) = match f.value() {
        Some((v, u)) => (Some(v), Some(u)),
        None => (None, None),
    };
    let mut o = json!({
        "code": f.code(),
        "message": f.to_string(),
        "units": f.units().iter().map(|u| u.name.as_str()).collect::<Vec<_>>(),
        "streams": f.streams(),
        "quantity": f.quantity(),
        "value": value,
        "value_unit": value_unit,
    });
    if let b::Finding::FlowsNotFixed {
        missing,
        undetermined,
        free,
        hints,
    } = f
    {
        o["missing"] = json!(missing);
        o["undetermined"] = json!(undetermined);
        o["free"] = json!(free);
        o["hints"] = hints
            .iter()
            .map(|h| {
                json!({
                    "code": h.code(),
                    "message": h.to_string(),
                    "unit": h.unit(),
                    "streams": h.streams(),
                })
            })
            .collect();
    }
    if let b::Finding::NegativeFlows { hints, .. } = f {
        o["hints"] = hints
            .iter()
            .map(|h| {
                json!({
                    "code": h.code(),
                    "message": h.to_string(),
                    "unit": h.unit(),
                    "streams": h.streams(),
                })
            })
            .collect();
    }
    if let b::Finding::EquationsClash { equations, hints } = f {
        o["equations"] = equations
            .iter()
            .map(|e| {
                let (owner, kind) = match &e.owner {
                    b::Owner::Unit(u) => (u.name.as_str(), u.kind),
                    b::Owner::Stream(s) => (s.as_str(), "stream"),
                };
                json!({
                    "owner": owner,
                    "owner_kind": kind,
                    "what": e.what,
                    "specification": e.specification,
                    "message": e.to_string(),
                })
            })
            .collect();
        o["hints"] = hints
            .iter()
            .map(|h| json!({ "code": h.code(), "message": h.to_string() }))
            .collect();
    }
    o
}

/// The degree-of-freedom diagnosis of a refused network as the `diagnosis` of the error's
/// `data` (documented with code 1006 in [`super::ERROR_CODES`]): the under- and
/// over-specified findings, what each unit was given and which findings name it, and who
/// fixes each stream's flow, pressure and state.
pub fn diagnosis_json(d: &b::Diagnosis) -> Value {
    let mut units = serde_json::Map::new();
    for u in &d.units {
        let named = |side: b::Side| -> Vec<&'static str> {
            d.findings
                .iter()
                .filter(|f| f.side() == side && f.units().iter().any(|r| r.name == u.unit.name))
                .map(|f| f.code())
                .collect()
        };
        units.insert(
            u.unit.name.clone(),
            json!({
                "kind": u.unit.kind,
                "given": u.given,
                "under": named(b::Side::Under),
                "over": named(b::Side::Over),
            }),
        );
    }
    let mut streams = serde_json::Map::new();
    for s in &d.streams {
        let flow = match s.flow {
            b::FlowStatus::Given => "given",
            b::FlowStatus::Fixed => "fixed",
            b::FlowStatus::Free => "free",
            b::FlowStatus::Unknown => "unknown",
        };
        streams.insert(
            s.name.clone(),
            json!({
                "flow": flow,
                "p": source_json(&s.pressure),
                "state": source_json(&s.state),
            }),
        );
    }
    json!({
        "under": d.under().map(finding_json).collect::<Vec<_>>(),
        "over": d.over().map(finding_json).collect::<Vec<_>>(),
        "units": units,
        "streams": streams,
    })
}
