//! Site steam-balance methods: `balance.solve` and `balance.sweep`.
//!
//! Units: every number in the network is in the request's preset (`engineering` by default)
//! or a string with its unit; every result is in the preset (mass flow, power and heat flow
//! included) and lists its units.
//!
//! Invariant: thin wrappers; the network solver is `crate::plant::balance`.

use super::plant::BalanceOut;
use super::vocab::{
    state_result, state_result_at, warnings_out, Ctx, Input, StateResult, Units, WarningOut,
};
use super::MethodSpec;
use crate::error::{Error, Result};
use crate::plant::balance::{self as b, Network, StreamSpec, Unit};
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
            concat!("Give the network as named `units` (each with `kind`: boiler, turbine, valve, desuperheater, header, deaerator, flash, pump, condenser, exchanger, user, vent, makeup, and its specification) and named `streams` (`from`, `to` and optional fixed flow, p, T, h, x). The degrees of freedom are counted first: an under- or over-specified network is refused with a message naming the streams and units and the usual choice. All mass and energy balances are then solved together (recycles included) to 1e-9 relative. Returns every stream's state and flow, every unit's power, duty, efficiency, balance and warnings, site totals (fuel heat input, net power, steam to process, make-up water, vented steam) and Sankey nodes and links.", " Caution: the model is only as good as its specifications (efficiencies and losses from the plant's own test data); results are not a substitute for the governing codes, the equipment maker's data or a licensed engineer's review."),
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
}

/// A site network.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct NetworkIn {
    /// Units by name.
    pub units: BTreeMap<String, UnitSpec>,
    /// Streams by name.
    pub streams: BTreeMap<String, StreamIn>,
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
                                    "Unit kind: boiler, turbine, valve, desuperheater, header, deaerator, flash, pump, condenser, exchanger, user, vent or makeup.".into(),
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
        Ok(Network { units, streams })
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
    /// Mass flow (negative when the balance needs it reversed; see the warnings).
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
    /// Warnings.
    pub warnings: Vec<WarningOut>,
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
    /// Site mass in (make-up).
    pub mass_in: f64,
    /// Site mass out (vents, lost condensate and blowdown).
    pub mass_out: f64,
    /// Site energy in: fuel heat input + make-up enthalpy flow + pump power.
    pub energy_in: f64,
    /// Site energy out: turbine power + process heat + condenser duty + boiler losses +
    /// vented and lost enthalpy flows.
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
    /// Standing caution.
    pub caution: String,
    /// Units of the numeric fields.
    pub units_used: BTreeMap<String, String>,
}

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
    u.insert("T".into(), ctx.unit("T", Dim::Temperature).into());
    u.insert("h".into(), ctx.unit("h", Dim::SpecificEnergy).into());
    ctx.finish_units(&mut u);
    u
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
                        warnings: warnings_out(&r.warnings),
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
        warnings: warnings_out(&s.warnings),
        caution: b::CAUTION.into(),
        units_used: units_used(ctx),
    }
}

fn balance_solve(p: SolveParams) -> Result<SolveResult> {
    let ctx = Ctx::new(p.units.as_ref(), p.ambient.as_ref())?;
    let net = p.network.to_network(&ctx)?;
    let sol = b::solve(&net)?;
    Ok(solution_out(&ctx, &sol))
}

/// Parameters of `balance.sweep`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct SweepParams {
    /// The site network.
    pub network: NetworkIn,
    /// Dotted path of the specification to vary, e.g. "units.LP_users.demand" or
    /// "streams.S1.flow" (the field is created when absent; its parent must exist).
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
        "p" => Pressure,
        "T" | "return_T" => Temperature,
        "superheat" => TemperatureDifference,
        "h" => SpecificEnergy,
        "flow" | "steam_flow" | "demand" => MassFlow,
        "power" => Power,
        "efficiency" | "blowdown_fraction" | "vent_fraction" | "return_fraction" | "x" => {
            Dimensionless
        }
        other => {
            return Err(Error::invalid(format!(
                "path '{path}': '{other}' is not a numeric specification (p, T, h, x, flow, steam_flow, demand, power, efficiency, superheat, return_T, blowdown_fraction, vent_fraction, return_fraction)"
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
    let base =
        serde_json::to_value(&p.network).map_err(|e| Error::invalid(format!("network: {e}")))?;
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
            if p.points == 1 {
                from
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
                    warnings: warnings_out(&sol.warnings),
                });
            }
            Err(e) => {
                failed += 1;
                points.push(PointOut {
                    value: *v,
                    ok: false,
                    error: Some(e.to_string()),
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
