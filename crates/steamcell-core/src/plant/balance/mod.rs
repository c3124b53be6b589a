//! Site steam balance: a network of named units (boilers, turbines with extractions, let-down
//! valves, desuperheaters, headers, deaerators, flash vessels, pumps, condensers, exchangers,
//! process users, vents and make-up) joined by named streams, solved for every stream's flow
//! and state with all mass and energy balances holding at once.
//!
//! Units: p MPa, T K, h kJ/kg, flow kg/s, power and heat flow kW (the plant module's internal
//! units). Energy flows are m h with the IAPWS-IF97 enthalpy reference (liquid at the triple
//! point), so site totals are absolute enthalpy flows.
//!
//! Method: [`Model::build`] checks the network once (structure, specifications, ranges) and
//! fixes every stream's pressure (from units and streams); then successive substitution:
//! with the flows known, every stream state follows from its source unit (mixing, expansion,
//! saturation...); with the states known, the flows satisfy a square linear system (mass
//! balances, energy balances of deaerators and desuperheaters, splits, specifications), solved
//! directly. Recycles (deaerator feedwater, condensate returns) need no tearing of their own.
//! Before solving, the degrees of freedom are counted: the flow system's rank tells which
//! streams are free (under-specified) and which equations clash (over-specified). A refused
//! network gets an [`Error::Specification`](crate::error::Error::Specification) whose
//! [`Diagnosis`] names the units, streams and quantities and suggests the usual choice.
//!
//! Layout: `model.rs` (the validated model), `units/` (one module per unit kind, behind two
//! traits), `solve.rs` (the iteration and the results), `dof.rs` (the linear flow system and
//! its rank), `diagnosis.rs` (the findings as data and their text).
//!
//! Invariant: on success every unit's mass and energy balance and the site's overall balance
//! close to 1e-9 relative (checked; otherwise `NotConverged`).

mod diagnosis;
mod dof;
mod model;
mod solve;
mod units;

pub use diagnosis::{
    ClashHint, Diagnosis, Equation, Finding, FlowHint, FlowStatus, Interval, Owner, Side, Source,
    StreamStatus, UnitRef, UnitStatus,
};
pub use model::Model;
pub use solve::{solve, solve_from, sweep};

use super::warnings::Warning;
use super::Balance;
use crate::water::state::State;
use std::collections::BTreeMap;

/// The standing caution of a site balance.
pub const CAUTION: &str = "The model is only as good as its specifications: efficiencies and losses must come from the plant's own test data. Results support engineering work; they are not a substitute for the governing codes, the equipment maker's data or a licensed engineer's review. Follow local codes.";

/// Relative residual every unit and the site must reach.
pub const TOLERANCE: f64 = 1e-9;

/// A fixed state value of a stream (besides its pressure).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum FixedState {
    /// Temperature, K.
    T(f64),
    /// Specific enthalpy, kJ/kg.
    H(f64),
    /// Quality 0..1.
    X(f64),
}

/// A stream: from one unit to another, with optional fixed values.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct StreamSpec {
    /// Source unit name.
    pub from: String,
    /// Destination unit name.
    pub to: String,
    /// Fixed mass flow, kg/s.
    pub flow: Option<f64>,
    /// Fixed pressure, MPa.
    pub p: Option<f64>,
    /// Fixed temperature, K.
    pub t: Option<f64>,
    /// Fixed enthalpy, kJ/kg.
    pub h: Option<f64>,
    /// Fixed quality.
    pub x: Option<f64>,
}

/// A unit and its specification (internal units). `None` means "not specified".
#[derive(Debug, Clone, PartialEq)]
pub enum Unit {
    /// Feedwater in, steam out (and an optional blowdown stream named `blowdown`).
    Boiler {
        /// Steam pressure, MPa (or on the steam stream).
        p: Option<f64>,
        /// Steam temperature, K (or T/h/x on the steam stream).
        t: Option<f64>,
        /// Heat to water and steam over fuel heat input.
        efficiency: Option<f64>,
        /// Blowdown as a fraction of the feedwater flow (default 0).
        blowdown_fraction: f64,
        /// Name of the blowdown outlet stream; without one the blowdown leaves the site.
        blowdown: Option<String>,
        /// Steam flow, kg/s.
        steam_flow: Option<f64>,
    },
    /// One inlet; outlets at their pressures (extractions and exhaust), expanded section by
    /// section in order of falling pressure.
    Turbine {
        /// Isentropic efficiency of every section (an outlet with a measured T/h/x uses it
        /// instead).
        efficiency: Option<f64>,
        /// Shaft power, kW.
        power: Option<f64>,
    },
    /// Isenthalpic let-down.
    Valve {
        /// Outlet pressure, MPa (default: the outlet stream's or its destination's).
        p: Option<f64>,
    },
    /// Steam and spray water (stream named `water`) in; one outlet at a target.
    Desuperheater {
        /// Name of the spray-water inlet stream.
        water: Option<String>,
        /// Outlet pressure, MPa (default: the outlet's destination, else the steam's).
        p: Option<f64>,
        /// Target outlet temperature, K.
        t: Option<f64>,
        /// Target superheat, K.
        superheat: Option<f64>,
    },
    /// Adiabatic mixing at a pressure; every outlet at the mixed state.
    Header {
        /// Header pressure, MPa.
        p: Option<f64>,
    },
    /// Water inlets and heating steam (stream named `steam`) to saturated liquid.
    Deaerator {
        /// Pressure, MPa.
        p: Option<f64>,
        /// Name of the heating-steam inlet.
        steam: Option<String>,
        /// Name of the vent outlet stream (saturated vapour), if any.
        vent: Option<String>,
        /// Vent flow as a fraction of the heating steam.
        vent_fraction: Option<f64>,
    },
    /// Inlets flashed to saturated vapour (stream named `vapour`) and liquid.
    Flash {
        /// Vessel pressure, MPa.
        p: Option<f64>,
        /// Name of the vapour outlet.
        vapour: Option<String>,
    },
    /// Liquid raised to a pressure.
    Pump {
        /// Discharge pressure, MPa (default: the outlet's destination).
        p: Option<f64>,
        /// Isentropic efficiency.
        efficiency: Option<f64>,
    },
    /// Inlets condensed to saturated liquid at a pressure; the duty leaves the site.
    Condenser {
        /// Pressure, MPa.
        p: Option<f64>,
    },
    /// Two-stream exchanger without pressure drop; outlet states from the outlet streams
    /// (T/h/x); one may be free.
    Exchanger {
        /// Name of the hot inlet stream.
        hot_in: Option<String>,
        /// Name of the hot outlet stream.
        hot_out: Option<String>,
    },
    /// Process steam consumer: steam in, condensate return out (optional), the rest lost.
    User {
        /// Steam demand, kg/s.
        demand: Option<f64>,
        /// Fraction of the steam returned as condensate (default 0).
        return_fraction: f64,
        /// Condensate temperature, K (of the returned and the lost condensate).
        return_t: Option<f64>,
    },
    /// Boundary sink: takes whatever is left.
    Vent,
    /// Boundary source: water at a temperature, whatever is needed.
    Makeup {
        /// Make-up water temperature, K.
        t: Option<f64>,
    },
}

impl Unit {
    /// The kind name used on the wire.
    pub fn kind(&self) -> &'static str {
        match self {
            Unit::Boiler { .. } => "boiler",
            Unit::Turbine { .. } => "turbine",
            Unit::Valve { .. } => "valve",
            Unit::Desuperheater { .. } => "desuperheater",
            Unit::Header { .. } => "header",
            Unit::Deaerator { .. } => "deaerator",
            Unit::Flash { .. } => "flash",
            Unit::Pump { .. } => "pump",
            Unit::Condenser { .. } => "condenser",
            Unit::Exchanger { .. } => "exchanger",
            Unit::User { .. } => "user",
            Unit::Vent => "vent",
            Unit::Makeup { .. } => "makeup",
        }
    }

    /// The specifications given on the unit, as named on the wire.
    pub fn given(&self) -> Vec<&'static str> {
        fn some<T>(v: &mut Vec<&'static str>, name: &'static str, x: &Option<T>) {
            if x.is_some() {
                v.push(name);
            }
        }
        let mut v = Vec::new();
        match self {
            Unit::Boiler {
                p,
                t,
                efficiency,
                blowdown_fraction,
                blowdown,
                steam_flow,
            } => {
                some(&mut v, "p", p);
                some(&mut v, "T", t);
                some(&mut v, "efficiency", efficiency);
                if *blowdown_fraction != 0.0 {
                    v.push("blowdown_fraction");
                }
                some(&mut v, "blowdown", blowdown);
                some(&mut v, "steam_flow", steam_flow);
            }
            Unit::Turbine { efficiency, power } => {
                some(&mut v, "efficiency", efficiency);
                some(&mut v, "power", power);
            }
            Unit::Valve { p } | Unit::Header { p } | Unit::Condenser { p } => some(&mut v, "p", p),
            Unit::Desuperheater {
                water,
                p,
                t,
                superheat,
            } => {
                some(&mut v, "water", water);
                some(&mut v, "p", p);
                some(&mut v, "T", t);
                some(&mut v, "superheat", superheat);
            }
            Unit::Deaerator {
                p,
                steam,
                vent,
                vent_fraction,
            } => {
                some(&mut v, "p", p);
                some(&mut v, "steam", steam);
                some(&mut v, "vent", vent);
                some(&mut v, "vent_fraction", vent_fraction);
            }
            Unit::Flash { p, vapour } => {
                some(&mut v, "p", p);
                some(&mut v, "vapour", vapour);
            }
            Unit::Pump { p, efficiency } => {
                some(&mut v, "p", p);
                some(&mut v, "efficiency", efficiency);
            }
            Unit::Exchanger { hot_in, hot_out } => {
                some(&mut v, "hot_in", hot_in);
                some(&mut v, "hot_out", hot_out);
            }
            Unit::User {
                demand,
                return_fraction,
                return_t,
            } => {
                some(&mut v, "demand", demand);
                if *return_fraction != 0.0 {
                    v.push("return_fraction");
                }
                some(&mut v, "return_T", return_t);
            }
            Unit::Vent => {}
            Unit::Makeup { t } => some(&mut v, "T", t),
        }
        v
    }
}

/// A site network.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Network {
    /// Units by name.
    pub units: BTreeMap<String, Unit>,
    /// Streams by name.
    pub streams: BTreeMap<String, StreamSpec>,
}

/// A solved stream.
#[derive(Debug, Clone, PartialEq)]
pub struct StreamResult {
    /// Source unit.
    pub from: String,
    /// Destination unit.
    pub to: String,
    /// Mass flow, kg/s (negative: the balance needs it to run backwards; see the warnings).
    pub flow: f64,
    /// State.
    pub state: State,
}

/// A solved unit.
#[derive(Debug, Clone, PartialEq)]
pub struct UnitResult {
    /// Kind name.
    pub kind: &'static str,
    /// Shaft power, kW: produced (turbine) or absorbed (pump).
    pub power: Option<f64>,
    /// Heat duty, kW: to steam (boiler), rejected (condenser), exchanged (exchanger), to
    /// process (user).
    pub duty: Option<f64>,
    /// Fuel heat input, kW (boiler).
    pub fuel_heat_input: Option<f64>,
    /// Efficiency: the boiler's, the pump's, or the turbine's overall isentropic efficiency
    /// from inlet to its lowest-pressure outlet.
    pub efficiency: Option<f64>,
    /// Mass leaving the site from this unit (lost condensate, blowdown without a stream,
    /// deaerator vent without a stream), kg/s.
    pub mass_lost: f64,
    /// Enthalpy flow leaving the site with that mass, kW.
    pub energy_lost: f64,
    /// Mass and energy balance of the unit.
    pub balance: Balance,
    /// Warnings.
    pub warnings: Vec<Warning>,
}

/// Site totals (kW and kg/s).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Totals {
    /// Fuel heat input of all boilers.
    pub fuel_heat_input: f64,
    /// Boiler losses (fuel input - heat to water and steam).
    pub boiler_losses: f64,
    /// Gross turbine power.
    pub turbine_power: f64,
    /// Pump power.
    pub pump_power: f64,
    /// Net power = turbine power - pump power.
    pub net_power: f64,
    /// Steam to process users, kg/s.
    pub process_steam: f64,
    /// Heat to process users.
    pub process_heat: f64,
    /// Condenser duty.
    pub condenser_duty: f64,
    /// Make-up water, kg/s.
    pub makeup_water: f64,
    /// Enthalpy flow of the make-up water.
    pub makeup_energy: f64,
    /// Steam (or water) to vents, kg/s, including deaerator vents without a stream.
    pub vented: f64,
    /// Enthalpy flow to vents.
    pub vented_energy: f64,
    /// Condensate not returned by users, kg/s.
    pub condensate_lost: f64,
    /// Blowdown leaving the site, kg/s.
    pub blowdown_lost: f64,
    /// Enthalpy flow of the lost condensate and blowdown.
    pub water_lost_energy: f64,
    /// Site mass balance: make-up in.
    pub mass_in: f64,
    /// Site mass balance: vents and losses out.
    pub mass_out: f64,
    /// Site energy in: fuel + make-up enthalpy + pump power.
    pub energy_in: f64,
    /// Site energy out: turbine power + process heat + condenser duty + boiler losses +
    /// vented and lost enthalpy.
    pub energy_out: f64,
}

impl Totals {
    /// |mass in - out| / max(in, out).
    pub fn mass_residual(&self) -> f64 {
        (self.mass_in - self.mass_out).abs()
            / self.mass_in.abs().max(self.mass_out.abs()).max(1e-300)
    }
    /// |energy in - out| / max(in, out).
    pub fn energy_residual(&self) -> f64 {
        (self.energy_in - self.energy_out).abs()
            / self.energy_in.abs().max(self.energy_out.abs()).max(1e-300)
    }
}

/// A node of the energy-flow (Sankey) summary: a unit or a boundary ("fuel", "power",
/// "process", "losses", "cooling").
#[derive(Debug, Clone, PartialEq)]
pub struct SankeyNode {
    /// Node name (unit name or boundary name).
    pub name: String,
    /// Unit kind, or "boundary".
    pub kind: String,
}

/// A link of the energy-flow summary.
#[derive(Debug, Clone, PartialEq)]
pub struct SankeyLink {
    /// Source node name.
    pub source: String,
    /// Target node name.
    pub target: String,
    /// The stream carried, if the link is a stream.
    pub stream: Option<String>,
    /// Energy flow, kW (m h for streams).
    pub energy: f64,
    /// Mass flow, kg/s (0 for heat and work).
    pub mass: f64,
}

/// A solved site.
#[derive(Debug, Clone, PartialEq)]
pub struct Solution {
    /// Streams by name.
    pub streams: BTreeMap<String, StreamResult>,
    /// Units by name.
    pub units: BTreeMap<String, UnitResult>,
    /// Site totals.
    pub totals: Totals,
    /// Energy-flow nodes.
    pub nodes: Vec<SankeyNode>,
    /// Energy-flow links.
    pub links: Vec<SankeyLink>,
    /// Outer iterations (state update + flow solve).
    pub iterations: usize,
    /// Largest relative residual over all units, the flow equations and the site.
    pub residual: f64,
    /// All warnings, each prefixed with its unit or stream.
    pub warnings: Vec<Warning>,
}
