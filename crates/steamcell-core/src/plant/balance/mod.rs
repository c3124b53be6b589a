//! Site steam balance: a network of named units (boilers, turbines with extractions, let-down
//! valves, desuperheaters, headers, deaerators, flash vessels, pumps, condensers, exchangers,
//! process users, vents and make-up, and the distribution losses: leaks, steam traps and lines)
//! joined by named streams, solved for every stream's flow and state with all mass and energy
//! balances holding at once; the losses priced with the network's costing.
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
//! close to 1e-9 relative (checked; otherwise `NotConverged`), and no stream's flow is negative
//! (a balance that needs one is refused with the streams and what to change).

mod diagnosis;
mod dof;
mod model;
mod solve;
mod units;

pub use diagnosis::{
    Amount, ClashHint, Diagnosis, Equation, Finding, FlowHint, FlowStatus, Owner, ReversedFlow,
    Side, Source, SpecChange, StreamStatus, UnitRef, UnitStatus,
};
pub use model::Model;
pub use solve::{solve, solve_from, sweep};

use super::correlations::FrictionModel;
use super::losses::{Price, YearlyLoss};
use super::pipe::Layer;
use super::warnings::Warning;
use super::Balance;
use crate::water::state::State;
use std::collections::BTreeMap;

/// The standing caution of a site balance.
pub const CAUTION: &str = "The model is only as good as its specifications: efficiencies and losses must come from the plant's own test data. Results support engineering work; they are not a substitute for the governing codes, the equipment maker's data or a licensed engineer's review. Follow local codes.";

/// Relative residual every unit and the site must reach.
pub const TOLERANCE: f64 = 1e-9;

/// Hours per year of the costing when the network gives none: continuous operation.
pub const HOURS_PER_YEAR_DEFAULT: f64 = 8760.0;

/// Make-up water temperature of the costing when neither the network's costing nor a make-up
/// unit gives one, K (15 degC; common practice, no source).
pub const MAKEUP_T_DEFAULT: f64 = 288.15;

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
    /// A hole in a header or line (a leak): its inlet's state is the stagnation state; the
    /// flow through the hole follows from it (`orifice::orifice_flow`, real fluid, choked or
    /// not); it leaves through its outlet stream or, without one, leaves the site.
    Leak {
        /// Hole diameter, m (0: no hole, e.g. repaired).
        diameter: Option<f64>,
        /// Discharge coefficient (default 0.61, a sharp-edged hole).
        discharge_coefficient: Option<f64>,
        /// Pressure outside the hole without an outlet stream, MPa (default atmospheric,
        /// 0.101325 MPa); with an outlet, the outlet stream's pressure (this sets it).
        downstream_p: Option<f64>,
    },
    /// A steam trap draining condensate; failed open or leaking, it also passes live steam
    /// from its `steam` inlet through a hole (`orifice::orifice_flow`).
    Trap {
        /// Healthy, failed open or leaking.
        state: TrapState,
        /// Diameter of the trap's orifice (maker's data), m: the hole of a failed-open trap.
        diameter: Option<f64>,
        /// Diameter of the equivalent hole of a leaking trap (the auditor's estimate), m.
        leak_diameter: Option<f64>,
        /// Discharge coefficient (default 0.61, a sharp-edged hole).
        discharge_coefficient: Option<f64>,
        /// Name of the inlet stream of live steam (from the header the trap drains).
        steam: Option<String>,
        /// Pressure downstream without an outlet stream, MPa (default atmospheric); with an
        /// outlet, the outlet stream's pressure (this sets it).
        downstream_p: Option<f64>,
    },
    /// A distribution line between two units: heat loss and condensate from
    /// `pipe::line_flow`; the pressure drop it needs is reported, not imposed (stream
    /// pressures are fixed before the flows are known).
    Line(Box<LineUnit>),
}

/// The state of a steam trap.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TrapState {
    /// Passes condensate only.
    Healthy,
    /// Its orifice passes live steam as well (blowing through).
    FailedOpen,
    /// Passes some live steam: an equivalent hole smaller than the orifice.
    Leaking,
}

impl TrapState {
    /// Wire name.
    pub fn name(self) -> &'static str {
        match self {
            TrapState::Healthy => "healthy",
            TrapState::FailedOpen => "failed_open",
            TrapState::Leaking => "leaking",
        }
    }
}

/// A line of the network (internal units; None: not given, or the default).
#[derive(Debug, Clone, PartialEq)]
pub struct LineUnit {
    /// Length, m.
    pub length: Option<f64>,
    /// Inner diameter, m.
    pub inner_diameter: Option<f64>,
    /// Pipe wall thickness, m.
    pub wall_thickness: Option<f64>,
    /// Absolute roughness, m (default 0.045 mm, commercial steel).
    pub roughness: Option<f64>,
    /// Pipe wall conductivity, W/(m K) (default 50, carbon steel).
    pub wall_conductivity: Option<f64>,
    /// Sum of the fittings' loss coefficients K.
    pub k_total: f64,
    /// Sum of the fittings' equivalent lengths, m.
    pub equivalent_length: f64,
    /// Elevation of the outlet above the inlet, m.
    pub elevation_change: f64,
    /// Insulation layers from the pipe outwards (empty: bare), the jacket last if any.
    pub layers: Vec<Layer>,
    /// Emissivity of the outer surface (default 0.9 insulated, 0.8 bare).
    pub emissivity: Option<f64>,
    /// Air temperature, K (default 293.15).
    pub air_t: Option<f64>,
    /// Air pressure, MPa (default 0.101325).
    pub air_p: Option<f64>,
    /// Wind speed, m/s (default 0).
    pub wind: Option<f64>,
    /// Temperature the surface radiates to, K (default the air's).
    pub radiant_t: Option<f64>,
    /// Friction-factor correlation.
    pub friction: FrictionModel,
    /// Segments of the march (default `pipe::default_segments`).
    pub segments: Option<usize>,
    /// Name of the drain outlet carrying the condensate formed (saturated liquid); without one
    /// the condensate stays in the steam as moisture.
    pub drain: Option<String>,
    /// Surface temperature above which a personnel-protection warning is given, K (default
    /// 60 degC).
    pub touch_limit_t: Option<f64>,
}

/// How the network's losses are priced (internal units; None: the default).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct SiteCosting {
    /// Hours per year the site runs, h (default 8760).
    pub hours_per_year: Option<f64>,
    /// Fuel price per kJ or steam price per kg.
    pub price: Option<Price>,
    /// Boiler efficiency (default: the site's own boilers, heat to steam over fuel).
    pub boiler_efficiency: Option<f64>,
    /// Make-up water temperature, K (default: the site's make-up water, else 15 degC).
    pub makeup_t: Option<f64>,
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
            Unit::Leak { .. } => "leak",
            Unit::Trap { .. } => "trap",
            Unit::Line(_) => "line",
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
            Unit::Leak {
                diameter,
                discharge_coefficient,
                downstream_p,
            } => {
                some(&mut v, "diameter", diameter);
                some(&mut v, "discharge_coefficient", discharge_coefficient);
                some(&mut v, "downstream_p", downstream_p);
            }
            Unit::Trap {
                state,
                diameter,
                leak_diameter,
                discharge_coefficient,
                steam,
                downstream_p,
            } => {
                if *state != TrapState::Healthy {
                    v.push("state");
                }
                some(&mut v, "diameter", diameter);
                some(&mut v, "leak_diameter", leak_diameter);
                some(&mut v, "discharge_coefficient", discharge_coefficient);
                some(&mut v, "steam", steam);
                some(&mut v, "downstream_p", downstream_p);
            }
            Unit::Line(l) => {
                some(&mut v, "length", &l.length);
                some(&mut v, "inner_diameter", &l.inner_diameter);
                some(&mut v, "wall_thickness", &l.wall_thickness);
                some(&mut v, "roughness", &l.roughness);
                some(&mut v, "wall_conductivity", &l.wall_conductivity);
                if l.k_total != 0.0 || l.equivalent_length != 0.0 {
                    v.push("fittings");
                }
                if l.elevation_change != 0.0 {
                    v.push("elevation_change");
                }
                if !l.layers.is_empty() {
                    v.push("insulation");
                }
                some(&mut v, "emissivity", &l.emissivity);
                some(&mut v, "air_T", &l.air_t);
                some(&mut v, "wind_speed", &l.wind);
                some(&mut v, "surroundings_T", &l.radiant_t);
                some(&mut v, "segments", &l.segments);
                some(&mut v, "drain", &l.drain);
                some(&mut v, "touch_limit_T", &l.touch_limit_t);
            }
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
    /// How the losses are priced.
    pub costing: SiteCosting,
}

/// A solved stream.
#[derive(Debug, Clone, PartialEq)]
pub struct StreamResult {
    /// Source unit.
    pub from: String,
    /// Destination unit.
    pub to: String,
    /// Mass flow, kg/s (never negative: a balance that needs a stream reversed is refused).
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
    /// What a leak, trap or line loses and costs (None for other units).
    pub loss: Option<LossResult>,
    /// Warnings.
    pub warnings: Vec<Warning>,
}

/// What a leak, trap or line loses, and what that costs with the network's costing.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LossResult {
    /// Live steam (or water) lost through the hole, kg/s: a leak's flow, the live steam of a
    /// failed or leaking trap (0 for a line and a healthy trap).
    pub steam: f64,
    /// Heat lost from a line to its surroundings, kW (0 for leaks and traps).
    pub heat: f64,
    /// Condensate formed in a line, kg/s.
    pub condensate: f64,
    /// Boiler heat to make the loss good, kW: steam x (h - h of make-up water) + heat.
    pub makeup_heat: f64,
    /// Fuel heat input for it, kW (None without a boiler efficiency).
    pub fuel: Option<f64>,
    /// The yearly amounts.
    pub yearly: YearlyLoss,
    /// Whether the flow through the hole is choked (leaks, failed or leaking traps).
    pub choked: Option<bool>,
    /// Pressure drop the line needs at its flow, MPa (computed by the line march; reported,
    /// not imposed on the streams).
    pub pressure_drop: Option<f64>,
    /// Highest velocity in the line, m/s.
    pub velocity: Option<f64>,
    /// Highest outer surface temperature of the line, K.
    pub surface_t: Option<f64>,
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
    /// Flow through leaks, kg/s (whatever their destination).
    pub leak_flow: f64,
    /// Live steam through failed and leaking traps, kg/s.
    pub trap_steam: f64,
    /// Steam lost: leak flow + trap live steam, kg/s.
    pub steam_lost: f64,
    /// Heat lost from lines, kW.
    pub line_heat_loss: f64,
    /// Condensate formed in lines, kg/s.
    pub line_condensate: f64,
    /// Mass leaving the site at leaks and traps without an outlet stream, kg/s.
    pub loss_discharged: f64,
    /// Enthalpy flow of that mass, kW.
    pub loss_discharged_energy: f64,
    /// Boiler heat to make every leak, trap and line loss good, kW.
    pub loss_heat: f64,
    /// Fuel heat input for it, kW (None without a boiler efficiency).
    pub loss_fuel: Option<f64>,
    /// Hours per year of the costing.
    pub hours_per_year: f64,
    /// Steam lost per year (leaks and traps), kg.
    pub steam_lost_per_year: f64,
    /// Boiler heat to make the losses good per year, kJ.
    pub loss_heat_per_year: f64,
    /// Fuel for it per year, kJ (None without a boiler efficiency).
    pub loss_fuel_per_year: Option<f64>,
    /// Cost of the losses per year, in the currency of the price (None without a price, or a
    /// fuel price without a boiler efficiency).
    pub loss_cost_per_year: Option<f64>,
    /// Boiler efficiency the costing used (None: none given and no boiler on the site).
    pub loss_boiler_efficiency: Option<f64>,
    /// Whether that efficiency was given in the network's costing (else: the site's boilers).
    pub loss_boiler_efficiency_given: bool,
    /// Make-up water temperature the costing used, K.
    pub loss_makeup_t: f64,
    /// Site mass balance: make-up in.
    pub mass_in: f64,
    /// Site mass balance: vents, lost condensate, blowdown and what leaks and traps discharge
    /// out.
    pub mass_out: f64,
    /// Site energy in: fuel + make-up enthalpy + pump power.
    pub energy_in: f64,
    /// Site energy out: turbine power + process heat + condenser duty + boiler losses +
    /// vented and lost enthalpy + what leaks and traps discharge + heat lost from lines.
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
