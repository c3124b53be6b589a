//! Component and cycle methods: `turbine.expand`, `turbine.train`, `pump.raise`,
//! `valve.throttle`, `desuperheater.spray`, `flash.separate`, `header.mix`,
//! `exchanger.balance`, `boiler.fire`, `deaerator.balance`, `cycle.rankine`.
//!
//! Streams are objects with two state keys (any pair `water.state` accepts) and, where a flow
//! matters, `flow` (kg/s in `si` and `engineering`, lb/h in `us`; strings such as "90 t/h").
//! Every result carries its mass and energy balance, warnings and the standing caution.
//!
//! Invariant: thin wrappers; the calculations are `crate::plant`.

use super::vocab::{
    state_key_values, state_result_at, warnings_out, Ctx, Input, StateResult, Units, WarningOut,
};
use super::MethodSpec;
use crate::error::{Error, Result};
use crate::plant::components as c;
use crate::plant::cycle as cy;
use crate::plant::{Balance, CAUTION};
use crate::units::Dim;
use crate::water::pairs::given_from;
use crate::water::state::{Options, State};
use crate::water::{self as physics, Field, Formulation, SaturationAt};
use schemars::JsonSchema;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// The methods of this module, for the registry.
pub fn methods() -> Vec<MethodSpec> {
    vec![
        MethodSpec::new::<TurbineParams, TurbineResult>(
            "turbine.expand",
            "Steam turbine expansion with an isentropic efficiency or from a measured outlet",
            concat!("Give the inlet stream, the outlet pressure and either the isentropic efficiency or the measured outlet (temperature, or quality for a wet exhaust). Returns inlet, actual and isentropic outlet states, specific work, power (with a flow), the efficiency and the exhaust moisture. A measured exhaust temperature at or below saturation is refused (it cannot fix a wet exhaust), as is a measured outlet implying negative work or an efficiency above 1. Plant options: a throttle-valve pressure drop at the inlet (throttle_dp; the efficiency then applies from the valve outlet), the Baumann moisture loss (moisture_loss, baumann_factor), the exhaust leaving loss from the annulus area (exhaust_area: the expansion-line and used-energy end points), and mechanical and generator losses (efficiencies or fixed powers) giving shaft and gross electrical power. Warns above about 12 % exhaust moisture (common practice), near the critical point and above about 300 m/s exhaust annulus velocity.", " Caution: results support engineering work; they are not a substitute for the governing codes, the equipment maker's data or a licensed engineer's review."),
            turbine_expand,
        )
        .quick(),
        MethodSpec::new::<TrainParams, TrainResult>(
            "turbine.train",
            "Several turbine stages in series, each with an outlet pressure, efficiency and optional extraction",
            concat!("Returns every stage's states and power, the expansion-line points, the sections and the total power. efficiency_basis names what a stage efficiency means: \"stage\" (default: from the stage's own inlet) or \"section\" (from the inlet of its section, e.g. HP, IP, LP, as cycle.rankine does by default); every stage reports both. Plant options as turbine.expand: throttle valve before the first stage, Baumann moisture loss per stage, leaving loss of the last stage, mechanical and generator losses of the train.", " Caution: results support engineering work; they are not a substitute for the governing codes, the equipment maker's data or a licensed engineer's review."),
            turbine_train,
        ),
        MethodSpec::new::<PumpParams, PumpResult>(
            "pump.raise",
            "Pump: outlet state, work, power, head and NPSH available",
            concat!("efficiency_kind \"isentropic\" (default: w = (h(p2,s1) - h1)/eta) or \"hydraulic\" (w = v1 (p2 - p1)/eta). NPSH available is (p1 - psat(T1))/(rho1 g) at the inlet (suction) state plus `suction_head` (the liquid level above the pump inlet less the suction-line losses, when the inlet is the suction vessel's state).", " Caution: results support engineering work; they are not a substitute for the governing codes, the equipment maker's data or a licensed engineer's review."),
            pump_raise,
        )
        .quick(),
        MethodSpec::new::<ValveParams, ValveResult>(
            "valve.throttle",
            "Isenthalpic let-down to a lower pressure: outlet state and superheat",
            concat!("A let-down (pressure-reducing) valve or any adiabatic throttling.", " Caution: results support engineering work; they are not a substitute for the governing codes, the equipment maker's data or a licensed engineer's review."),
            valve_throttle,
        )
        .quick(),
        MethodSpec::new::<SprayParams, SprayResult>(
            "desuperheater.spray",
            "Spray water needed to bring steam to a target temperature or superheat",
            concat!("Give the steam stream (with flow for a spray flow in kg/s), the spray water state, and target_T or target_superheat; outlet_p defaults to the steam pressure. Refuses targets at or below saturation.", " Caution: results support engineering work; they are not a substitute for the governing codes, the equipment maker's data or a licensed engineer's review."),
            desuperheater_spray,
        )
        .quick(),
        MethodSpec::new::<FlashParams, FlashResult>(
            "flash.separate",
            "Hot condensate let down into a flash vessel: flash-steam fraction and the flows of each phase",
            concat!("The vessel separates saturated vapour and saturated liquid at its pressure.", " Caution: results support engineering work; they are not a substitute for the governing codes, the equipment maker's data or a licensed engineer's review."),
            flash_separate,
        )
        .quick(),
        MethodSpec::new::<HeaderParams, HeaderResult>(
            "header.mix",
            "Adiabatic mixing of any number of streams into a header at one pressure",
            concat!("Every inlet needs a flow.", " Caution: results support engineering work; they are not a substitute for the governing codes, the equipment maker's data or a licensed engineer's review."),
            header_mix,
        )
        .quick(),
        MethodSpec::new::<ExchangerParams, ExchangerResult>(
            "exchanger.balance",
            "Two-stream counterflow heat exchanger or feedwater heater: solve the one unknown of outlets and flows",
            concat!("Give both inlets and three of: hot outlet, cold outlet, hot flow, cold flow. An outlet may give only T (or h, or x); its pressure then defaults to its inlet's. Returns duty, end differences, the pinch (checked at the ends, at every bubble and dew point of both streams and between them) and where it is, the zones between the phase-change points (desuperheating, condensing, drain cooling, ...) with each zone's duty, LMTD and UA, the overall UA and the effective mean temperature difference, the end-to-end LMTD where no stream changes phase inside, and, where the hot stream condenses, the terminal temperature difference and drain-cooler approach; refuses a temperature cross, naming where it happens.", " Caution: results support engineering work; they are not a substitute for the governing codes, the equipment maker's data or a licensed engineer's review."),
            exchanger_balance,
        )
        .quick(),
        MethodSpec::new::<BoilerParams, BoilerResult>(
            "boiler.fire",
            "Boiler: heat to steam, fuel heat input, blowdown flow and energy",
            concat!("blowdown_fraction is of the feedwater flow; blowdown leaves as saturated liquid at the steam pressure; efficiency is heat to water and steam over fuel heat input.", " Caution: results support engineering work; they are not a substitute for the governing codes, the equipment maker's data or a licensed engineer's review."),
            boiler_fire,
        )
        .quick(),
        MethodSpec::new::<DeaeratorParams, DeaeratorResult>(
            "deaerator.balance",
            "Deaerator: heating steam flow to bring water streams to saturated liquid at the deaerator pressure",
            concat!("Every water stream needs a flow; vent_fraction (default 0) of the heating steam leaves through the vent as saturated vapour.", " Caution: results support engineering work; they are not a substitute for the governing codes, the equipment maker's data or a licensed engineer's review."),
            deaerator_balance,
        )
        .quick(),
        MethodSpec::new::<RankineParams, RankineResult>(
            "cycle.rankine",
            "Rankine cycle with optional reheat and open and closed feedwater heaters",
            concat!("Returns the numbered state table, extraction fractions, net specific work, heat input, thermal efficiency, heat rate (kJ/kWh and Btu/kWh), steam rate, back-work ratio, the turbine sections, gross and net heat rates, and the net power for a flow or the flow for a net power. By default (efficiency_basis \"section\") each section's efficiency applies from the section's inlet to every extraction and its exhaust; \"stage\" applies it to each stage between extractions from its own inlet. Closed heaters drain as saturated liquid (or at the entering feedwater temperature plus a DCA) cascaded to the next lower heater, or pumped forward into the feedwater. Plant options: HP, IP and LP section efficiencies (crossover_p), Baumann moisture loss, LP leaving loss from the exhaust area, throttle-valve, boiler, reheater and extraction-line pressure drops, mechanical and generator losses and station load (gross and net output), and a condenser fixed by its cooling water. A boiler outlet that is not steam is refused.", " Caution: results support engineering work; they are not a substitute for the governing codes, the equipment maker's data or a licensed engineer's review."),
            cycle_rankine,
        ),
    ]
}

/// A stream: two state keys and, where it matters, a mass flow.
#[derive(Debug, Clone, Default, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct Stream {
    /// Pressure.
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
    /// Quality (vapour mass fraction).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub x: Option<Input>,
    /// Mass flow (kg/s in si and engineering, lb/h in us, or a string such as "90 t/h").
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub flow: Option<Input>,
}

impl Stream {
    fn values(&self, ctx: &Ctx, name: &str) -> Result<Vec<(Field, f64)>> {
        let keys = [
            &self.p, &self.t, &self.h, &self.s, &self.u, &self.v, &self.rho, &self.x,
        ];
        state_key_values(ctx, &format!("{name}."), keys)
    }

    fn solve(name: &str, vals: &[(Field, f64)]) -> Result<State> {
        let given = given_from(vals).map_err(|e| Error::invalid(format!("{name}: {e}")))?;
        physics::solve(given, &Options::STANDARD, Formulation::If97)
    }

    /// The stream's state.
    pub fn state(&self, ctx: &Ctx, name: &str) -> Result<State> {
        Stream::solve(name, &self.values(ctx, name)?)
    }

    /// The stream's state, with the pressure defaulting to `p_default` (MPa) when only one
    /// state key is given.
    pub fn state_with_p(&self, ctx: &Ctx, name: &str, p_default: f64) -> Result<State> {
        let mut vals = self.values(ctx, name)?;
        if vals.len() == 1 && vals[0].0 != Field::P {
            vals.push((Field::P, p_default));
        }
        Stream::solve(name, &vals)
    }

    /// The stream's flow in kg/s, if given.
    pub fn flow(&self, ctx: &Ctx, name: &str) -> Result<Option<f64>> {
        self.flow
            .as_ref()
            .map(|f| ctx.value(&format!("{name}.flow"), Dim::MassFlow, f))
            .transpose()
    }

    /// The stream's flow in kg/s, required.
    pub fn flow_required(&self, ctx: &Ctx, name: &str) -> Result<f64> {
        self.flow(ctx, name)?
            .ok_or_else(|| Error::invalid(format!("{name}: give a flow")))
    }
}

/// Mass and energy balance on the wire.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct BalanceOut {
    /// Mass in (the preset's mass-flow unit; per unit flow when no flow was given).
    pub mass_in: f64,
    /// Mass out.
    pub mass_out: f64,
    /// Energy in: enthalpy flows plus heat and work added (the preset's heat-flow unit).
    pub energy_in: f64,
    /// Energy out: enthalpy flows plus heat and work removed.
    pub energy_out: f64,
    /// |in - out| / in for mass.
    pub mass_residual: f64,
    /// |in - out| / max(in, out) for energy.
    pub energy_residual: f64,
}

fn balance(ctx: &Ctx, b: &Balance) -> BalanceOut {
    let m = |name: &str, x: f64| ctx.out(name, Dim::MassFlow, x);
    let e = |name: &str, x: f64| ctx.out(name, Dim::HeatFlow, x);
    BalanceOut {
        mass_in: m("balance.mass_in", b.mass_in),
        mass_out: m("balance.mass_out", b.mass_out),
        energy_in: e("balance.energy_in", b.energy_in),
        energy_out: e("balance.energy_out", b.energy_out),
        mass_residual: b.mass_residual(),
        energy_residual: b.energy_residual(),
    }
}

/// The `units` map of a component's answer: the unit of every top-level numeric field it
/// converted and of its `balance` object's fields ("balance.mass_in"), by name (as
/// `water.state` names its fields); the `fields` named (also when absent from this answer);
/// and the group keys `flows`, `power`, `heat` and `balance.energy`, the unit of the mass
/// flows, powers and heat flows of nested objects and lists ("stages.power"). State objects
/// carry their own maps.
///
/// A nested field other than the balance's is not listed from the conversions: some are
/// converted under a name that is no field path (a zone's four temperatures as "zones.T", so
/// that a `units` key "T" reaches them), so only the top level and the balance, whose
/// conversion names are their field paths, are listed.
fn units_map(ctx: &Ctx, fields: &[(&str, Dim)]) -> BTreeMap<String, String> {
    let mut m: BTreeMap<String, String> = fields
        .iter()
        .map(|(n, d)| (n.to_string(), ctx.unit(n, *d).to_string()))
        .collect();
    for (n, u) in ctx.output_units() {
        if !n.contains('.') || n.starts_with("balance.") {
            m.entry(n).or_insert_with(|| u.to_string());
        }
    }
    for (n, d) in [
        ("flows", Dim::MassFlow),
        ("power", Dim::Power),
        ("heat", Dim::HeatFlow),
        ("balance.energy", Dim::HeatFlow),
    ] {
        m.insert(n.into(), ctx.unit(n, d).into());
    }
    ctx.finish_units(&mut m);
    m
}

fn sr(ctx: &Ctx, at: &str, st: &State) -> StateResult {
    state_result_at(st, ctx, at)
}

/// The output field `name` in its unit.
fn o(ctx: &Ctx, name: &str, dim: Dim, x: f64) -> f64 {
    ctx.out(name, dim, x)
}

/// The optional output field `name` in its unit.
fn of(ctx: &Ctx, name: &str, dim: Dim, x: Option<f64>) -> Option<f64> {
    x.map(|x| ctx.out(name, dim, x))
}

fn pressure(ctx: &Ctx, name: &str, v: &Input) -> Result<f64> {
    ctx.value(name, Dim::Pressure, v)
}

fn number(ctx: &Ctx, name: &str, v: &Input) -> Result<f64> {
    ctx.value(name, Dim::Dimensionless, v)
}

// ---------------------------------------------------------------- plant-turbine options

/// A pressure drop: a pressure difference in the caller's units (a bare number in the preset's
/// pressure unit, or a text such as "0.5 bar"; gauge units are refused), or a percentage of
/// the upstream pressure `upstream` (MPa) written with "%" ("4 %").
fn pressure_drop(ctx: &Ctx, name: &str, v: &Input, upstream: f64) -> Result<f64> {
    if let Input::Text(t) = v {
        if t.trim_end().ends_with('%') {
            return Ok(number(ctx, name, v)? * upstream);
        }
    }
    // A difference: no gauge unit, and "psi" is unambiguous here.
    ctx.value(name, Dim::PressureDifference, v)
}

fn opt_drop(ctx: &Ctx, name: &str, v: &Option<Input>, upstream: f64) -> Result<f64> {
    v.as_ref()
        .map(|x| pressure_drop(ctx, name, x, upstream))
        .transpose()
        .map(|x| x.unwrap_or(0.0))
}

/// A drive loss given as an efficiency or a fixed power (not both).
fn drive_loss(
    ctx: &Ctx,
    which: &str,
    eff: &Option<Input>,
    loss: &Option<Input>,
) -> Result<c::DriveLoss> {
    match (eff, loss) {
        (None, None) => Ok(c::DriveLoss::None),
        (Some(e), None) => Ok(c::DriveLoss::Efficiency(number(
            ctx,
            &format!("{which}_efficiency"),
            e,
        )?)),
        (None, Some(l)) => Ok(c::DriveLoss::Fixed(ctx.value(
            &format!("{which}_loss"),
            Dim::Power,
            l,
        )?)),
        (Some(_), Some(_)) => Err(Error::invalid(format!(
            "give {which}_efficiency or {which}_loss, not both"
        ))),
    }
}

/// The moisture-loss rule: None, or the Baumann factor.
fn moisture_rule(ctx: &Ctx, rule: &Option<String>, factor: &Option<Input>) -> Result<Option<f64>> {
    match rule.as_deref() {
        None | Some("none") => {
            if factor.is_some() {
                return Err(Error::invalid(
                    "baumann_factor needs moisture_loss: \"baumann\"",
                ));
            }
            Ok(None)
        }
        Some("baumann") => Ok(Some(match factor {
            Some(f) => number(ctx, "baumann_factor", f)?,
            None => 1.0,
        })),
        Some(other) => Err(Error::invalid(format!(
            "moisture_loss = '{other}'; accepted: none, baumann"
        ))),
    }
}

fn efficiency_basis(v: &Option<String>, default: c::EfficiencyBasis) -> Result<c::EfficiencyBasis> {
    match v.as_deref() {
        None => Ok(default),
        Some("stage") => Ok(c::EfficiencyBasis::Stage),
        Some("section") => Ok(c::EfficiencyBasis::Section),
        Some(other) => Err(Error::invalid(format!(
            "efficiency_basis = '{other}'; accepted: stage (each stage from its own inlet), section (from the inlet of the stage's section)"
        ))),
    }
}

fn area(ctx: &Ctx, name: &str, v: &Option<Input>) -> Result<Option<f64>> {
    v.as_ref()
        .map(|x| ctx.value(name, Dim::Area, x))
        .transpose()
}

/// The moisture loss of an expansion by the Baumann rule.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct MoistureLossOut {
    /// The rule: "Baumann" (the efficiency of the wet part of the expansion is the dry
    /// efficiency times 1 - factor times its mean moisture).
    pub rule: String,
    /// Baumann factor.
    pub factor: f64,
    /// The dry efficiency given.
    pub dry_efficiency: f64,
    /// Pressure where the expansion line enters the wet region (the inlet's for a wet inlet;
    /// null when the expansion stays dry).
    pub wet_from_p: Option<f64>,
    /// Moisture where the wet part starts.
    pub start_moisture: f64,
    /// Moisture at the expansion-line end.
    pub end_moisture: f64,
    /// Mean moisture of the wet part.
    pub mean_moisture: f64,
    /// Efficiency of the wet part.
    pub wet_efficiency: f64,
    /// Resulting efficiency of the whole expansion, moisture loss included.
    pub efficiency: f64,
    /// Specific work lost to moisture.
    pub work_lost: f64,
}

fn moisture_out(ctx: &Ctx, prefix: &str, m: &c::MoistureLoss) -> MoistureLossOut {
    MoistureLossOut {
        rule: "Baumann".into(),
        factor: m.factor,
        dry_efficiency: m.dry_efficiency,
        wet_from_p: of(
            ctx,
            &format!("{prefix}.wet_from_p"),
            Dim::Pressure,
            m.wet_from_p,
        ),
        start_moisture: m.start_moisture,
        end_moisture: m.end_moisture,
        mean_moisture: m.mean_moisture,
        wet_efficiency: m.wet_efficiency,
        efficiency: m.efficiency,
        work_lost: o(
            ctx,
            &format!("{prefix}.work_lost"),
            Dim::SpecificEnergy,
            m.work_lost,
        ),
    }
}

/// The exhaust leaving loss: V = flow v / area at the expansion-line end point, loss V^2/2.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct LeavingLossOut {
    /// Exhaust annulus area.
    pub exhaust_area: f64,
    /// Mass flow through the annulus.
    pub flow: f64,
    /// Volume flow at the expansion-line end point.
    pub volume_flow: f64,
    /// Annulus velocity.
    pub velocity: f64,
    /// Leaving loss per unit mass of exhaust steam.
    pub loss: f64,
    /// Leaving loss as a power.
    pub power: f64,
    /// Expansion-line end point (ELEP): the static exhaust state on the expansion line.
    pub expansion_line_end_point: StateResult,
    /// Used-energy end point (UEEP): the ELEP plus the leaving loss, what the condenser gets.
    pub used_energy_end_point: StateResult,
}

fn leaving_out(ctx: &Ctx, l: &c::LeavingLoss) -> LeavingLossOut {
    LeavingLossOut {
        exhaust_area: o(ctx, "leaving_loss.exhaust_area", Dim::Area, l.area),
        flow: o(ctx, "leaving_loss.flow", Dim::MassFlow, l.flow),
        volume_flow: o(
            ctx,
            "leaving_loss.volume_flow",
            Dim::VolumeFlow,
            l.volume_flow,
        ),
        velocity: o(ctx, "leaving_loss.velocity", Dim::Speed, l.velocity),
        loss: o(ctx, "leaving_loss.loss", Dim::SpecificEnergy, l.loss),
        power: o(ctx, "leaving_loss.power", Dim::Power, l.power),
        expansion_line_end_point: sr(
            ctx,
            "leaving_loss.expansion_line_end_point",
            &l.expansion_line_end,
        ),
        used_energy_end_point: sr(
            ctx,
            "leaving_loss.used_energy_end_point",
            &l.used_energy_end,
        ),
    }
}

const LEAVING_UNITS: [(&str, Dim); 6] = [
    ("leaving_loss.exhaust_area", Dim::Area),
    ("leaving_loss.flow", Dim::MassFlow),
    ("leaving_loss.volume_flow", Dim::VolumeFlow),
    ("leaving_loss.velocity", Dim::Speed),
    ("leaving_loss.loss", Dim::SpecificEnergy),
    ("leaving_loss.power", Dim::Power),
];

/// Power from the blades to the generator terminals: each figure is the one before it less its
/// loss (internal_power - mechanical_loss - generator_loss = gross_power exactly).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct DriveOut {
    /// Internal (blade) power: flow times specific work.
    pub internal_power: f64,
    /// Mechanical loss (bearings, seals, shaft-driven pumps).
    pub mechanical_loss: f64,
    /// Shaft power at the coupling.
    pub shaft_power: f64,
    /// Generator loss.
    pub generator_loss: f64,
    /// Gross electrical output at the generator terminals.
    pub gross_power: f64,
}

fn drive_out(ctx: &Ctx, d: &c::Drive) -> DriveOut {
    let w = |n: &str, x: f64| o(ctx, &format!("drive.{n}"), Dim::Power, x);
    DriveOut {
        internal_power: w("internal_power", d.internal_power),
        mechanical_loss: w("mechanical_loss", d.mechanical_loss),
        shaft_power: w("shaft_power", d.shaft_power),
        generator_loss: w("generator_loss", d.generator_loss),
        gross_power: w("gross_power", d.gross_power),
    }
}

// ---------------------------------------------------------------- turbine.expand

/// Parameters of `turbine.expand`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct TurbineParams {
    /// Inlet stream (two state keys; flow optional, for the power). With a throttle valve, the
    /// state before it (at the stop valve).
    pub inlet: Stream,
    /// Outlet (exhaust) pressure.
    pub outlet_p: Input,
    /// Isentropic efficiency, 0 < eta <= 1 (give this or `outlet`), from the turbine inlet after
    /// the throttle valve to the outlet pressure; with a moisture-loss rule, the dry efficiency.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub efficiency: Option<Input>,
    /// Measured outlet: T (superheated exhaust) or x (wet exhaust), or any state key; its
    /// pressure is `outlet_p`. A temperature at or below saturation is refused (it cannot fix a
    /// wet exhaust), as is an outlet that implies negative work or an efficiency above 1.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub outlet: Option<Stream>,
    /// Pressure drop across the throttle (governing) valve at the inlet, isenthalpic: a pressure
    /// difference ("0.4 bar"; a bare number in the preset's pressure unit) or a percentage of
    /// the inlet pressure ("3 %"). Default 0.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub throttle_dp: Option<Input>,
    /// Moisture loss of a wet expansion: "none" (default) or "baumann" (the wet part's efficiency
    /// is the dry efficiency times 1 - baumann_factor times its mean moisture).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub moisture_loss: Option<String>,
    /// Baumann factor, 0 to 2.5 (default 1, Baumann's own rule), with moisture_loss "baumann".
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub baumann_factor: Option<Input>,
    /// Exhaust annulus area (e.g. "28 m2"), for the leaving loss V^2/2 with V = flow v / area at
    /// the expansion-line end point; needs the inlet flow.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub exhaust_area: Option<Input>,
    /// Mechanical efficiency, 0 < eta <= 1 (or give mechanical_loss).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub mechanical_efficiency: Option<Input>,
    /// Mechanical loss as a fixed power (or give mechanical_efficiency); needs the inlet flow.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub mechanical_loss: Option<Input>,
    /// Generator efficiency, 0 < eta <= 1 (or give generator_loss).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub generator_efficiency: Option<Input>,
    /// Generator loss as a fixed power (or give generator_efficiency); needs the inlet flow.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub generator_loss: Option<Input>,
    /// Units of bare numbers and of the answer: a preset ("engineering" by default, "si", "us",
    /// "bar", "bar_th") or an object with a preset and units per dimension, field or path, e.g.
    /// {"preset": "engineering", "p": "barg", "flow": "t/h", "power": "MW"}.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<Units>,
    /// Ambient pressure for gauge units (default 101.325 kPa).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
}

/// Result of `turbine.expand`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct TurbineResult {
    /// Inlet state (before the throttle valve, when there is one).
    pub inlet: StateResult,
    /// Actual outlet state (the used-energy end point when there is a leaving loss).
    pub outlet: StateResult,
    /// Outlet of the isentropic expansion from the turbine inlet (after the throttle valve) to
    /// the same pressure.
    pub isentropic_outlet: StateResult,
    /// Specific work h_in - h_out.
    pub specific_work: f64,
    /// Isentropic specific work from the turbine inlet.
    pub isentropic_work: f64,
    /// Internal power, flow times specific work (when a flow was given).
    pub power: Option<f64>,
    /// Isentropic efficiency, given or derived from the measured outlet (with a moisture rule,
    /// the dry efficiency given; see moisture_loss.efficiency).
    pub efficiency: f64,
    /// Exhaust moisture 1 - x at the expansion-line end (0 for superheated exhaust).
    pub moisture: f64,
    /// Mass and energy balance.
    pub balance: BalanceOut,
    /// Practitioner warnings.
    pub warnings: Vec<WarningOut>,
    /// Standing caution.
    pub caution: String,
    /// Units of the numeric fields.
    pub units: BTreeMap<String, String>,
    /// The turbine inlet after the throttle valve (with throttle_dp).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub turbine_inlet: Option<StateResult>,
    /// Throttle-valve pressure drop (with throttle_dp).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub throttle_dp: Option<f64>,
    /// Efficiency from the inlet before the throttle valve to the outlet, the valve's loss
    /// included (with throttle_dp).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub efficiency_with_valve: Option<f64>,
    /// The moisture loss (with moisture_loss "baumann").
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub moisture_loss: Option<MoistureLossOut>,
    /// The exhaust leaving loss with the expansion-line and used-energy end points (with
    /// exhaust_area).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub leaving_loss: Option<LeavingLossOut>,
    /// Internal, shaft and gross electrical power (with a flow and a mechanical or generator
    /// loss).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub drive: Option<DriveOut>,
}

fn expansion_out(ctx: &Ctx, ex: &c::Expansion) -> TurbineResult {
    let valve = ex.throttle_dp > 0.0;
    let mut units = vec![
        ("specific_work", Dim::SpecificEnergy),
        ("isentropic_work", Dim::SpecificEnergy),
        ("power", Dim::Power),
        ("efficiency", Dim::Dimensionless),
        ("moisture", Dim::Dimensionless),
    ];
    if valve {
        units.push(("throttle_dp", Dim::PressureDifference));
    }
    if ex.moisture_loss.is_some() {
        units.push(("moisture_loss.wet_from_p", Dim::Pressure));
        units.push(("moisture_loss.work_lost", Dim::SpecificEnergy));
    }
    if ex.leaving.is_some() {
        units.extend(LEAVING_UNITS);
    }
    if ex.drive.is_some() {
        units.push(("drive", Dim::Power));
    }
    TurbineResult {
        inlet: sr(ctx, "inlet", &ex.inlet),
        outlet: sr(ctx, "outlet", &ex.outlet),
        isentropic_outlet: sr(ctx, "isentropic_outlet", &ex.isentropic_outlet),
        specific_work: o(ctx, "specific_work", Dim::SpecificEnergy, ex.specific_work),
        isentropic_work: o(
            ctx,
            "isentropic_work",
            Dim::SpecificEnergy,
            ex.isentropic_work,
        ),
        power: of(ctx, "power", Dim::Power, ex.power),
        efficiency: o(ctx, "efficiency", Dim::Dimensionless, ex.efficiency),
        moisture: o(ctx, "moisture", Dim::Dimensionless, ex.moisture),
        balance: balance(ctx, &ex.balance),
        warnings: warnings_out(ctx, &ex.warnings),
        caution: CAUTION.into(),
        units: units_map(ctx, &units),
        turbine_inlet: valve.then(|| sr(ctx, "turbine_inlet", &ex.turbine_inlet)),
        throttle_dp: valve.then(|| o(ctx, "throttle_dp", Dim::PressureDifference, ex.throttle_dp)),
        efficiency_with_valve: ex.efficiency_with_valve,
        moisture_loss: ex
            .moisture_loss
            .as_ref()
            .map(|m| moisture_out(ctx, "moisture_loss", m)),
        leaving_loss: ex.leaving.as_ref().map(|l| leaving_out(ctx, l)),
        drive: ex.drive.as_ref().map(|d| drive_out(ctx, d)),
    }
}

fn turbine_expand(p: TurbineParams) -> Result<TurbineResult> {
    let ctx = Ctx::new(p.units.as_ref(), p.ambient.as_ref())?;
    let inlet = p.inlet.state(&ctx, "inlet")?;
    let flow = p.inlet.flow(&ctx, "inlet")?;
    let p2 = pressure(&ctx, "outlet_p", &p.outlet_p)?;
    let opts = c::TurbineOptions {
        throttle_dp: opt_drop(&ctx, "throttle_dp", &p.throttle_dp, inlet.props.p)?,
        baumann: moisture_rule(&ctx, &p.moisture_loss, &p.baumann_factor)?,
        exhaust_area: area(&ctx, "exhaust_area", &p.exhaust_area)?,
        mechanical: drive_loss(
            &ctx,
            "mechanical",
            &p.mechanical_efficiency,
            &p.mechanical_loss,
        )?,
        generator: drive_loss(
            &ctx,
            "generator",
            &p.generator_efficiency,
            &p.generator_loss,
        )?,
    };
    let spec = match (&p.efficiency, &p.outlet) {
        (Some(e), None) => c::TurbineSpec::Efficiency(number(&ctx, "efficiency", e)?),
        (None, Some(out)) => c::TurbineSpec::Outlet(out.state_with_p(&ctx, "outlet", p2)?),
        _ => {
            return Err(Error::invalid(
                "give either efficiency or the measured outlet, not both and not neither",
            ))
        }
    };
    let ex = c::turbine_expand_with(&inlet, p2, spec, flow, &opts)?;
    Ok(expansion_out(&ctx, &ex))
}

// ---------------------------------------------------------------- turbine.train

/// One stage of `turbine.train`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct StageIn {
    /// Stage outlet pressure.
    pub outlet_p: Input,
    /// Stage isentropic efficiency: from the stage's own inlet (efficiency_basis "stage", the
    /// default) or from the inlet of its section ("section"); with a moisture-loss rule, dry.
    pub efficiency: Input,
    /// Steam extracted at the stage outlet (mass flow), default 0.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub extraction: Option<Input>,
    /// The section the stage belongs to, e.g. "HP", "IP", "LP" (default "turbine"); a section's
    /// stages follow one another.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub section: Option<String>,
}

/// Parameters of `turbine.train`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct TrainParams {
    /// Inlet stream with its flow (before the throttle valve, when there is one).
    pub inlet: Stream,
    /// Stages in order of falling pressure.
    pub stages: Vec<StageIn>,
    /// How the stage efficiencies are meant: "stage" (default: each stage from its own inlet)
    /// or "section" (each from the inlet of its section, so a section's stage outlets lie on
    /// one expansion line, as `cycle.rankine` does by default).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub efficiency_basis: Option<String>,
    /// Pressure drop across the throttle (governing) valve before the first stage, isenthalpic:
    /// a pressure difference or a percentage of the inlet pressure ("3 %"). Default 0.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub throttle_dp: Option<Input>,
    /// Moisture loss of wet stages: "none" (default) or "baumann".
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub moisture_loss: Option<String>,
    /// Baumann factor, 0 to 2.5 (default 1), with moisture_loss "baumann".
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub baumann_factor: Option<Input>,
    /// Exhaust annulus area of the last stage, for its leaving loss.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub exhaust_area: Option<Input>,
    /// Mechanical efficiency of the train, 0 < eta <= 1 (or give mechanical_loss).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub mechanical_efficiency: Option<Input>,
    /// Mechanical loss as a fixed power (or give mechanical_efficiency).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub mechanical_loss: Option<Input>,
    /// Generator efficiency, 0 < eta <= 1 (or give generator_loss).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub generator_efficiency: Option<Input>,
    /// Generator loss as a fixed power (or give generator_efficiency).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub generator_loss: Option<Input>,
    /// Units of bare numbers and of the answer: a preset ("engineering" by default, "si", "us",
    /// "bar", "bar_th") or an object with a preset and units per dimension, field or path, e.g.
    /// {"preset": "engineering", "p": "barg", "flow": "t/h", "power": "MW"}.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<Units>,
    /// Ambient pressure for gauge units.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
}

/// One stage of the result.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct StageOut {
    /// Stage inlet.
    pub inlet: StateResult,
    /// Stage outlet.
    pub outlet: StateResult,
    /// Isentropic stage outlet (from the stage's own inlet).
    pub isentropic_outlet: StateResult,
    /// Flow through the stage.
    pub flow: f64,
    /// Extraction at the stage outlet.
    pub extraction: f64,
    /// Stage specific work.
    pub specific_work: f64,
    /// Stage power.
    pub power: f64,
    /// Stage efficiency: isentropic efficiency from the stage's own inlet to its expansion-line
    /// end.
    pub efficiency: f64,
    /// Isentropic efficiency from the inlet of the stage's section to its expansion-line end.
    pub section_efficiency: f64,
    /// The efficiency given (its meaning set by efficiency_basis).
    pub given_efficiency: f64,
    /// The section of the stage.
    pub section: String,
    /// The stage's moisture loss (with moisture_loss "baumann"; under the section basis, of the
    /// expansion line from the section inlet).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub moisture_loss: Option<MoistureLossOut>,
}

/// A section of `turbine.train`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct TrainSectionOut {
    /// Section name.
    pub name: String,
    /// Its first stage (0-based).
    pub first_stage: usize,
    /// Its last stage (0-based).
    pub last_stage: usize,
    /// Section inlet.
    pub inlet: LinePoint,
    /// Section outlet.
    pub outlet: LinePoint,
    /// Section power.
    pub power: f64,
    /// Isentropic efficiency from the section inlet to its expansion-line end.
    pub efficiency: f64,
}

/// Result of `turbine.train`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct TrainResult {
    /// Stages.
    pub stages: Vec<StageOut>,
    /// Expansion-line points (h, s) from the inlet through every stage outlet.
    pub expansion_line: Vec<LinePoint>,
    /// Total internal power.
    pub power: f64,
    /// Exhaust flow.
    pub exhaust_flow: f64,
    /// Overall isentropic efficiency from the inlet (before the throttle valve) to the final
    /// exhaust.
    pub overall_efficiency: f64,
    /// Mass and energy balance.
    pub balance: BalanceOut,
    /// Warnings.
    pub warnings: Vec<WarningOut>,
    /// Standing caution.
    pub caution: String,
    /// Units.
    pub units: BTreeMap<String, String>,
    /// How the stage efficiencies were meant: "stage" or "section".
    pub efficiency_basis: String,
    /// The sections, in order.
    pub sections: Vec<TrainSectionOut>,
    /// The turbine inlet after the throttle valve (with throttle_dp).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub turbine_inlet: Option<StateResult>,
    /// Throttle-valve pressure drop (with throttle_dp).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub throttle_dp: Option<f64>,
    /// The last stage's leaving loss (with exhaust_area).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub leaving_loss: Option<LeavingLossOut>,
    /// Internal, shaft and gross electrical power (with a mechanical or generator loss).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub drive: Option<DriveOut>,
}

/// A point of an expansion line.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct LinePoint {
    /// Pressure.
    pub p: f64,
    /// Temperature.
    #[serde(rename = "T")]
    pub t: f64,
    /// Enthalpy.
    pub h: f64,
    /// Entropy.
    pub s: f64,
}

fn line_point_at(ctx: &Ctx, prefix: &str, st: &State) -> LinePoint {
    LinePoint {
        p: o(ctx, &format!("{prefix}.p"), Dim::Pressure, st.props.p),
        t: o(ctx, &format!("{prefix}.T"), Dim::Temperature, st.props.t),
        h: o(ctx, &format!("{prefix}.h"), Dim::SpecificEnergy, st.props.h),
        s: o(
            ctx,
            &format!("{prefix}.s"),
            Dim::SpecificEntropy,
            st.props.s,
        ),
    }
}

fn line_point(ctx: &Ctx, st: &State) -> LinePoint {
    line_point_at(ctx, "expansion_line", st)
}

fn turbine_train(p: TrainParams) -> Result<TrainResult> {
    let ctx = Ctx::new(p.units.as_ref(), p.ambient.as_ref())?;
    let inlet = p.inlet.state(&ctx, "inlet")?;
    let flow = p.inlet.flow_required(&ctx, "inlet")?;
    let stages = p
        .stages
        .iter()
        .enumerate()
        .map(|(i, s)| {
            Ok(c::StageSpec {
                outlet_p: pressure(&ctx, &format!("stages[{i}].outlet_p"), &s.outlet_p)?,
                efficiency: number(&ctx, &format!("stages[{i}].efficiency"), &s.efficiency)?,
                extraction: match &s.extraction {
                    Some(x) => ctx.value(&format!("stages[{i}].extraction"), Dim::MassFlow, x)?,
                    None => 0.0,
                },
            })
        })
        .collect::<Result<Vec<_>>>()?;
    let sections = if p.stages.iter().any(|s| s.section.is_some()) {
        p.stages
            .iter()
            .map(|s| s.section.clone().unwrap_or_else(|| "turbine".into()))
            .collect()
    } else {
        Vec::new()
    };
    let opts = c::TrainOptions {
        basis: efficiency_basis(&p.efficiency_basis, c::EfficiencyBasis::Stage)?,
        sections,
        turbine: c::TurbineOptions {
            throttle_dp: opt_drop(&ctx, "throttle_dp", &p.throttle_dp, inlet.props.p)?,
            baumann: moisture_rule(&ctx, &p.moisture_loss, &p.baumann_factor)?,
            exhaust_area: area(&ctx, "exhaust_area", &p.exhaust_area)?,
            mechanical: drive_loss(
                &ctx,
                "mechanical",
                &p.mechanical_efficiency,
                &p.mechanical_loss,
            )?,
            generator: drive_loss(
                &ctx,
                "generator",
                &p.generator_efficiency,
                &p.generator_loss,
            )?,
        },
    };
    let t = c::turbine_train_with(&inlet, flow, &stages, &opts)?;
    let mut line = vec![line_point(&ctx, &inlet)];
    if t.throttle_dp > 0.0 {
        line.push(line_point(&ctx, &t.turbine_inlet));
    }
    let stages_out = t
        .stages
        .iter()
        .map(|s| {
            line.push(line_point(&ctx, &s.expansion.outlet));
            StageOut {
                inlet: sr(&ctx, "stages.inlet", &s.expansion.inlet),
                outlet: sr(&ctx, "stages.outlet", &s.expansion.outlet),
                isentropic_outlet: sr(
                    &ctx,
                    "stages.isentropic_outlet",
                    &s.expansion.isentropic_outlet,
                ),
                flow: o(&ctx, "stages.flow", Dim::MassFlow, s.flow),
                extraction: o(&ctx, "stages.extraction", Dim::MassFlow, s.extraction),
                specific_work: o(
                    &ctx,
                    "stages.specific_work",
                    Dim::SpecificEnergy,
                    s.expansion.specific_work,
                ),
                power: o(
                    &ctx,
                    "stages.power",
                    Dim::Power,
                    s.expansion.power.unwrap_or(0.0),
                ),
                efficiency: o(
                    &ctx,
                    "stages.efficiency",
                    Dim::Dimensionless,
                    s.stage_efficiency,
                ),
                section_efficiency: s.section_efficiency,
                given_efficiency: s.given_efficiency,
                section: s.section.clone(),
                moisture_loss: s
                    .expansion
                    .moisture_loss
                    .as_ref()
                    .map(|m| moisture_out(&ctx, "stages.moisture_loss", m)),
            }
        })
        .collect();
    let sections_out = t
        .sections
        .iter()
        .map(|s| TrainSectionOut {
            name: s.name.clone(),
            first_stage: s.first_stage,
            last_stage: s.last_stage,
            inlet: line_point_at(&ctx, "sections.inlet", &s.inlet),
            outlet: line_point_at(&ctx, "sections.outlet", &s.outlet),
            power: o(&ctx, "sections.power", Dim::Power, s.power),
            efficiency: s.efficiency,
        })
        .collect();
    let mut units = vec![
        ("power", Dim::Power),
        ("exhaust_flow", Dim::MassFlow),
        ("stages.specific_work", Dim::SpecificEnergy),
        ("expansion_line.p", Dim::Pressure),
        ("expansion_line.T", Dim::Temperature),
        ("expansion_line.h", Dim::SpecificEnergy),
        ("expansion_line.s", Dim::SpecificEntropy),
        ("sections.power", Dim::Power),
    ];
    if t.throttle_dp > 0.0 {
        units.push(("throttle_dp", Dim::PressureDifference));
    }
    if opts.turbine.baumann.is_some() {
        units.push(("stages.moisture_loss.wet_from_p", Dim::Pressure));
        units.push(("stages.moisture_loss.work_lost", Dim::SpecificEnergy));
    }
    if t.leaving.is_some() {
        units.extend(LEAVING_UNITS);
    }
    if t.drive.is_some() {
        units.push(("drive", Dim::Power));
    }
    Ok(TrainResult {
        stages: stages_out,
        expansion_line: line,
        power: o(&ctx, "power", Dim::Power, t.power),
        exhaust_flow: o(&ctx, "exhaust_flow", Dim::MassFlow, t.exhaust_flow),
        overall_efficiency: o(
            &ctx,
            "overall_efficiency",
            Dim::Dimensionless,
            t.overall_efficiency,
        ),
        balance: balance(&ctx, &t.balance),
        warnings: warnings_out(&ctx, &t.warnings),
        caution: CAUTION.into(),
        units: units_map(&ctx, &units),
        efficiency_basis: t.basis.name().into(),
        sections: sections_out,
        turbine_inlet: (t.throttle_dp > 0.0).then(|| sr(&ctx, "turbine_inlet", &t.turbine_inlet)),
        throttle_dp: (t.throttle_dp > 0.0)
            .then(|| o(&ctx, "throttle_dp", Dim::PressureDifference, t.throttle_dp)),
        leaving_loss: t.leaving.as_ref().map(|l| leaving_out(&ctx, l)),
        drive: t.drive.as_ref().map(|d| drive_out(&ctx, d)),
    })
}

// ---------------------------------------------------------------- pump.raise

/// Parameters of `pump.raise`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct PumpParams {
    /// Inlet (suction) stream, liquid; flow optional.
    pub inlet: Stream,
    /// Discharge pressure.
    pub outlet_p: Input,
    /// Pump efficiency, 0 < eta <= 1.
    pub efficiency: Input,
    /// "isentropic" (default) or "hydraulic".
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub efficiency_kind: Option<String>,
    /// Suction head (a length of liquid): the height of the suction vessel's liquid surface
    /// above the pump inlet less the suction-line losses, when `inlet` is the vessel's state
    /// (e.g. saturated liquid in a deaerator tank). The NPSH available is then
    /// (p - psat(T)) / (rho g) plus this head. Without it the NPSH available is the inlet
    /// state's own (0 for a saturated suction, with a warning asking for this).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub suction_head: Option<Input>,
    /// Units of bare numbers and of the answer: a preset ("engineering" by default, "si", "us",
    /// "bar", "bar_th") or an object with a preset and units per dimension, field or path, e.g.
    /// {"preset": "engineering", "p": "barg", "flow": "t/h", "power": "MW"}.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<Units>,
    /// Ambient pressure for gauge units.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
}

/// Result of `pump.raise`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct PumpResult {
    /// Inlet state.
    pub inlet: StateResult,
    /// Outlet state.
    pub outlet: StateResult,
    /// Isentropic outlet.
    pub isentropic_outlet: StateResult,
    /// Specific work added.
    pub specific_work: f64,
    /// Power (with a flow).
    pub power: Option<f64>,
    /// Efficiency used.
    pub efficiency: f64,
    /// Which efficiency: "isentropic" or "hydraulic".
    pub efficiency_kind: String,
    /// Differential head in the inlet liquid.
    pub head: f64,
    /// NPSH available: (p - psat(T)) / (rho g) at the inlet plus the suction head (null above
    /// the critical temperature).
    pub npsh_available: Option<f64>,
    /// Balance.
    pub balance: BalanceOut,
    /// Warnings.
    pub warnings: Vec<WarningOut>,
    /// Standing caution.
    pub caution: String,
    /// Units.
    pub units: BTreeMap<String, String>,
}

fn pump_raise(p: PumpParams) -> Result<PumpResult> {
    let ctx = Ctx::new(p.units.as_ref(), p.ambient.as_ref())?;
    let inlet = p.inlet.state(&ctx, "inlet")?;
    let flow = p.inlet.flow(&ctx, "inlet")?;
    let p2 = pressure(&ctx, "outlet_p", &p.outlet_p)?;
    let eta = number(&ctx, "efficiency", &p.efficiency)?;
    let kind = match p.efficiency_kind.as_deref() {
        None | Some("isentropic") => c::PumpEfficiencyKind::Isentropic,
        Some("hydraulic") => c::PumpEfficiencyKind::Hydraulic,
        Some(other) => {
            return Err(Error::invalid(format!(
                "efficiency_kind = '{other}'; accepted: isentropic, hydraulic"
            )))
        }
    };
    let suction = p
        .suction_head
        .as_ref()
        .map(|z| ctx.value("suction_head", Dim::Length, z))
        .transpose()?;
    let r = c::pump_raise_from(&inlet, p2, eta, kind, flow, suction)?;
    Ok(PumpResult {
        inlet: sr(&ctx, "inlet", &r.inlet),
        outlet: sr(&ctx, "outlet", &r.outlet),
        isentropic_outlet: sr(&ctx, "isentropic_outlet", &r.isentropic_outlet),
        specific_work: o(&ctx, "specific_work", Dim::SpecificEnergy, r.specific_work),
        power: of(&ctx, "power", Dim::Power, r.power),
        efficiency: o(&ctx, "efficiency", Dim::Dimensionless, r.efficiency),
        efficiency_kind: match kind {
            c::PumpEfficiencyKind::Isentropic => "isentropic".into(),
            c::PumpEfficiencyKind::Hydraulic => "hydraulic".into(),
        },
        head: o(&ctx, "head", Dim::Length, r.head),
        npsh_available: of(&ctx, "npsh_available", Dim::Length, r.npsh_available),
        balance: balance(&ctx, &r.balance),
        warnings: warnings_out(&ctx, &r.warnings),
        caution: CAUTION.into(),
        units: units_map(
            &ctx,
            &[
                ("specific_work", Dim::SpecificEnergy),
                ("power", Dim::Power),
                ("head", Dim::Length),
                ("npsh_available", Dim::Length),
            ],
        ),
    })
}

// ---------------------------------------------------------------- valve.throttle

/// Parameters of `valve.throttle`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct ValveParams {
    /// Inlet stream; flow optional.
    pub inlet: Stream,
    /// Outlet pressure.
    pub outlet_p: Input,
    /// Units of bare numbers and of the answer: a preset ("engineering" by default, "si", "us",
    /// "bar", "bar_th") or an object with a preset and units per dimension, field or path, e.g.
    /// {"preset": "engineering", "p": "barg", "flow": "t/h", "power": "MW"}.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<Units>,
    /// Ambient pressure for gauge units.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
}

/// Result of `valve.throttle`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct ValveResult {
    /// Inlet state.
    pub inlet: StateResult,
    /// Outlet state.
    pub outlet: StateResult,
    /// Superheat after the valve (null when the outlet is not superheated vapour).
    pub superheat: Option<f64>,
    /// Temperature drop across the valve.
    pub temperature_drop: f64,
    /// Balance.
    pub balance: BalanceOut,
    /// Warnings.
    pub warnings: Vec<WarningOut>,
    /// Standing caution.
    pub caution: String,
    /// Units.
    pub units: BTreeMap<String, String>,
}

fn valve_throttle(p: ValveParams) -> Result<ValveResult> {
    let ctx = Ctx::new(p.units.as_ref(), p.ambient.as_ref())?;
    let inlet = p.inlet.state(&ctx, "inlet")?;
    let flow = p.inlet.flow(&ctx, "inlet")?;
    let p2 = pressure(&ctx, "outlet_p", &p.outlet_p)?;
    let r = c::valve_throttle(&inlet, p2, flow)?;
    Ok(ValveResult {
        inlet: sr(&ctx, "inlet", &r.inlet),
        outlet: sr(&ctx, "outlet", &r.outlet),
        superheat: of(&ctx, "superheat", Dim::TemperatureDifference, r.superheat),
        temperature_drop: o(
            &ctx,
            "temperature_drop",
            Dim::TemperatureDifference,
            r.temperature_drop,
        ),
        balance: balance(&ctx, &r.balance),
        warnings: warnings_out(&ctx, &r.warnings),
        caution: CAUTION.into(),
        units: units_map(
            &ctx,
            &[
                ("superheat", Dim::TemperatureDifference),
                ("temperature_drop", Dim::TemperatureDifference),
            ],
        ),
    })
}

// ---------------------------------------------------------------- desuperheater.spray

/// Parameters of `desuperheater.spray`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct SprayParams {
    /// Steam stream (with flow for the spray flow).
    pub steam: Stream,
    /// Spray water state.
    pub water: Stream,
    /// Outlet pressure (default: the steam pressure).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub outlet_p: Option<Input>,
    /// Target outlet temperature (give this or target_superheat).
    #[serde(rename = "target_T", default, skip_serializing_if = "Option::is_none")]
    pub target_t: Option<Input>,
    /// Target superheat above saturation at the outlet pressure (a temperature difference).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub target_superheat: Option<Input>,
    /// Units of bare numbers and of the answer: a preset ("engineering" by default, "si", "us",
    /// "bar", "bar_th") or an object with a preset and units per dimension, field or path, e.g.
    /// {"preset": "engineering", "p": "barg", "flow": "t/h", "power": "MW"}.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<Units>,
    /// Ambient pressure for gauge units.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
}

/// Result of `desuperheater.spray`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct SprayResult {
    /// Steam inlet.
    pub steam: StateResult,
    /// Spray water.
    pub water: StateResult,
    /// Outlet.
    pub outlet: StateResult,
    /// Spray-water flow (per unit steam flow when no steam flow was given).
    pub spray_flow: f64,
    /// Spray per unit of inlet steam.
    pub spray_ratio: f64,
    /// Outlet flow.
    pub outlet_flow: f64,
    /// Outlet superheat.
    pub superheat: f64,
    /// Balance.
    pub balance: BalanceOut,
    /// Warnings.
    pub warnings: Vec<WarningOut>,
    /// Standing caution.
    pub caution: String,
    /// Units.
    pub units: BTreeMap<String, String>,
}

fn desuperheater_spray(p: SprayParams) -> Result<SprayResult> {
    let ctx = Ctx::new(p.units.as_ref(), p.ambient.as_ref())?;
    let steam = p.steam.state(&ctx, "steam")?;
    let flow = p.steam.flow(&ctx, "steam")?;
    let water = p.water.state(&ctx, "water")?;
    let p2 = p
        .outlet_p
        .as_ref()
        .map(|x| pressure(&ctx, "outlet_p", x))
        .transpose()?;
    let target = match (&p.target_t, &p.target_superheat) {
        (Some(t), None) => {
            c::SprayTarget::Temperature(ctx.value("target_T", Dim::Temperature, t)?)
        }
        (None, Some(dt)) => c::SprayTarget::Superheat(ctx.value(
            "target_superheat",
            Dim::TemperatureDifference,
            dt,
        )?),
        _ => {
            return Err(Error::invalid(
                "give exactly one of target_T and target_superheat",
            ))
        }
    };
    let r = c::desuperheater_spray(&steam, flow, &water, p2, target)?;
    Ok(SprayResult {
        steam: sr(&ctx, "steam", &r.steam),
        water: sr(&ctx, "water", &r.water),
        outlet: sr(&ctx, "outlet", &r.outlet),
        spray_flow: o(&ctx, "spray_flow", Dim::MassFlow, r.spray_flow),
        spray_ratio: o(&ctx, "spray_ratio", Dim::Dimensionless, r.spray_ratio),
        outlet_flow: o(&ctx, "outlet_flow", Dim::MassFlow, r.outlet_flow),
        superheat: o(&ctx, "superheat", Dim::TemperatureDifference, r.superheat),
        balance: balance(&ctx, &r.balance),
        warnings: warnings_out(&ctx, &r.warnings),
        caution: CAUTION.into(),
        units: units_map(
            &ctx,
            &[
                ("spray_flow", Dim::MassFlow),
                ("outlet_flow", Dim::MassFlow),
                ("superheat", Dim::TemperatureDifference),
            ],
        ),
    })
}

// ---------------------------------------------------------------- flash.separate

/// Parameters of `flash.separate`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct FlashParams {
    /// Hot condensate stream (flow optional).
    pub inlet: Stream,
    /// Flash-vessel pressure.
    pub p: Input,
    /// Units of bare numbers and of the answer: a preset ("engineering" by default, "si", "us",
    /// "bar", "bar_th") or an object with a preset and units per dimension, field or path, e.g.
    /// {"preset": "engineering", "p": "barg", "flow": "t/h", "power": "MW"}.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<Units>,
    /// Ambient pressure for gauge units.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
}

/// Result of `flash.separate`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct FlashResult {
    /// Inlet state.
    pub inlet: StateResult,
    /// Mixture just after the pressure drop.
    pub mixture: StateResult,
    /// Flash steam.
    pub vapour: StateResult,
    /// Remaining condensate.
    pub liquid: StateResult,
    /// Flash-steam mass fraction.
    pub flash_fraction: f64,
    /// Flash-steam flow (per unit inlet flow when none given).
    pub vapour_flow: f64,
    /// Liquid flow.
    pub liquid_flow: f64,
    /// Balance.
    pub balance: BalanceOut,
    /// Warnings.
    pub warnings: Vec<WarningOut>,
    /// Standing caution.
    pub caution: String,
    /// Units.
    pub units: BTreeMap<String, String>,
}

fn flash_separate(p: FlashParams) -> Result<FlashResult> {
    let ctx = Ctx::new(p.units.as_ref(), p.ambient.as_ref())?;
    let inlet = p.inlet.state(&ctx, "inlet")?;
    let flow = p.inlet.flow(&ctx, "inlet")?;
    let pv = pressure(&ctx, "p", &p.p)?;
    let r = c::flash_separate(&inlet, pv, flow)?;
    Ok(FlashResult {
        inlet: sr(&ctx, "inlet", &r.inlet),
        mixture: sr(&ctx, "mixture", &r.mixture),
        vapour: sr(&ctx, "vapour", &r.vapour),
        liquid: sr(&ctx, "liquid", &r.liquid),
        flash_fraction: o(&ctx, "flash_fraction", Dim::Dimensionless, r.flash_fraction),
        vapour_flow: o(&ctx, "vapour_flow", Dim::MassFlow, r.vapour_flow),
        liquid_flow: o(&ctx, "liquid_flow", Dim::MassFlow, r.liquid_flow),
        balance: balance(&ctx, &r.balance),
        warnings: warnings_out(&ctx, &r.warnings),
        caution: CAUTION.into(),
        units: units_map(
            &ctx,
            &[
                ("vapour_flow", Dim::MassFlow),
                ("liquid_flow", Dim::MassFlow),
            ],
        ),
    })
}

// ---------------------------------------------------------------- header.mix

/// Parameters of `header.mix`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct HeaderParams {
    /// Inlet streams, each with a flow.
    pub inlets: Vec<Stream>,
    /// Header pressure.
    pub p: Input,
    /// Units of bare numbers and of the answer: a preset ("engineering" by default, "si", "us",
    /// "bar", "bar_th") or an object with a preset and units per dimension, field or path, e.g.
    /// {"preset": "engineering", "p": "barg", "flow": "t/h", "power": "MW"}.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<Units>,
    /// Ambient pressure for gauge units.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
}

/// Result of `header.mix`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct HeaderResult {
    /// Outlet state.
    pub outlet: StateResult,
    /// Outlet flow.
    pub flow: f64,
    /// Balance.
    pub balance: BalanceOut,
    /// Warnings.
    pub warnings: Vec<WarningOut>,
    /// Standing caution.
    pub caution: String,
    /// Units.
    pub units: BTreeMap<String, String>,
}

fn header_mix(p: HeaderParams) -> Result<HeaderResult> {
    let ctx = Ctx::new(p.units.as_ref(), p.ambient.as_ref())?;
    let ph = pressure(&ctx, "p", &p.p)?;
    let inlets = p
        .inlets
        .iter()
        .enumerate()
        .map(|(i, s)| {
            let name = format!("inlets[{i}]");
            Ok((s.state(&ctx, &name)?, s.flow_required(&ctx, &name)?))
        })
        .collect::<Result<Vec<_>>>()?;
    let r = c::header_mix(&inlets, ph)?;
    Ok(HeaderResult {
        outlet: sr(&ctx, "outlet", &r.outlet),
        flow: o(&ctx, "flow", Dim::MassFlow, r.flow),
        balance: balance(&ctx, &r.balance),
        warnings: warnings_out(&ctx, &r.warnings),
        caution: CAUTION.into(),
        units: units_map(&ctx, &[("flow", Dim::MassFlow)]),
    })
}

// ---------------------------------------------------------------- exchanger.balance

/// One side of `exchanger.balance`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct SideIn {
    /// Inlet stream (flow here or in `flow`).
    pub inlet: Stream,
    /// Outlet: two state keys, or one (T, h or x) with the pressure of the inlet.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub outlet: Option<Stream>,
}

/// Parameters of `exchanger.balance`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct ExchangerParams {
    /// Hot side (for a feedwater heater: the extraction steam).
    pub hot: SideIn,
    /// Cold side (for a feedwater heater: the feedwater).
    pub cold: SideIn,
    /// Units of bare numbers and of the answer: a preset ("engineering" by default, "si", "us",
    /// "bar", "bar_th") or an object with a preset and units per dimension, field or path, e.g.
    /// {"preset": "engineering", "p": "barg", "flow": "t/h", "power": "MW"}.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<Units>,
    /// Ambient pressure for gauge units.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
}

/// Result of `exchanger.balance`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct ExchangerResult {
    /// Hot inlet.
    pub hot_in: StateResult,
    /// Hot outlet.
    pub hot_out: StateResult,
    /// Hot flow.
    pub hot_flow: f64,
    /// Cold inlet.
    pub cold_in: StateResult,
    /// Cold outlet.
    pub cold_out: StateResult,
    /// Cold flow.
    pub cold_flow: f64,
    /// Duty.
    pub duty: f64,
    /// Counterflow log-mean temperature difference of the two ends; null where a stream
    /// changes phase inside the exchanger (desuperheating, condensing and drain-cooling zones
    /// of a feedwater heater), where the two ends alone do not give the mean difference:
    /// size from `effective_mtd` or `ua` (zone by zone) instead.
    pub lmtd: Option<f64>,
    /// Hot in - cold out.
    pub hot_end_difference: f64,
    /// Hot out - cold in.
    pub cold_end_difference: f64,
    /// Smallest temperature difference along the exchanger (pinch), found at the ends, at
    /// every phase-change point (bubble and dew points) of both streams and between them.
    pub pinch: f64,
    /// Where the pinch is, in words (e.g. "the hot stream's dew point").
    pub pinch_at: String,
    /// The zones between the phase-change points, hot end first: what each stream does
    /// (desuperheating, condensing, drain cooling; heating, boiling, superheating), the duty,
    /// the temperatures, the zone's LMTD and UA. One zone without a phase change.
    pub zones: Vec<ZoneOut>,
    /// Overall UA: the sum of the zones' (duty over temperature difference).
    pub ua: f64,
    /// Effective mean temperature difference duty / UA, zone by zone: the mean difference to
    /// size the surface from (`lmtd` is the two ends' alone).
    pub effective_mtd: f64,
    /// Feedwater-heater terminal temperature difference: Tsat(hot-side p) - cold out; only
    /// where the hot stream condenses (null for a single-phase exchanger, where it has no
    /// meaning).
    pub terminal_temperature_difference: Option<f64>,
    /// Feedwater-heater drain-cooler approach: hot out (the drain) - cold in; only where the
    /// hot stream condenses (null otherwise).
    pub drain_cooler_approach: Option<f64>,
    /// Balance.
    pub balance: BalanceOut,
    /// Warnings.
    pub warnings: Vec<WarningOut>,
    /// Standing caution.
    pub caution: String,
    /// Units.
    pub units: BTreeMap<String, String>,
}

fn exchanger_balance(p: ExchangerParams) -> Result<ExchangerResult> {
    let ctx = Ctx::new(p.units.as_ref(), p.ambient.as_ref())?;
    let side = |s: &SideIn, name: &str| -> Result<c::Side> {
        let inlet = s.inlet.state(&ctx, &format!("{name}.inlet"))?;
        let outlet = s
            .outlet
            .as_ref()
            .map(|o| o.state_with_p(&ctx, &format!("{name}.outlet"), inlet.props.p))
            .transpose()?;
        let flow = match (
            s.inlet.flow(&ctx, &format!("{name}.inlet"))?,
            s.outlet.as_ref(),
        ) {
            (Some(f), _) => Some(f),
            (None, Some(o)) => o.flow(&ctx, &format!("{name}.outlet"))?,
            (None, None) => None,
        };
        Ok(c::Side {
            inlet,
            outlet,
            flow,
        })
    };
    let hot = side(&p.hot, "hot")?;
    let cold = side(&p.cold, "cold")?;
    let r = c::exchanger_balance(&hot, &cold)?;
    let dt = |name: &str, x: f64| o(&ctx, name, Dim::TemperatureDifference, x);
    Ok(ExchangerResult {
        hot_in: sr(&ctx, "hot_in", &r.hot_in),
        hot_out: sr(&ctx, "hot_out", &r.hot_out),
        hot_flow: o(&ctx, "hot_flow", Dim::MassFlow, r.hot_flow),
        cold_in: sr(&ctx, "cold_in", &r.cold_in),
        cold_out: sr(&ctx, "cold_out", &r.cold_out),
        cold_flow: o(&ctx, "cold_flow", Dim::MassFlow, r.cold_flow),
        duty: o(&ctx, "duty", Dim::HeatFlow, r.duty),
        lmtd: r.lmtd.map(|x| dt("lmtd", x)),
        hot_end_difference: dt("hot_end_difference", r.hot_end_difference),
        cold_end_difference: dt("cold_end_difference", r.cold_end_difference),
        pinch: dt("pinch", r.pinch),
        pinch_at: r.pinch_at.clone(),
        zones: r
            .zones
            .iter()
            .map(|z| ZoneOut {
                hot: z.hot_process.into(),
                cold: z.cold_process.into(),
                duty: o(&ctx, "zones.duty", Dim::HeatFlow, z.duty),
                hot_t_in: o(&ctx, "zones.T", Dim::Temperature, z.hot_t.0),
                hot_t_out: o(&ctx, "zones.T", Dim::Temperature, z.hot_t.1),
                cold_t_in: o(&ctx, "zones.T", Dim::Temperature, z.cold_t.1),
                cold_t_out: o(&ctx, "zones.T", Dim::Temperature, z.cold_t.0),
                lmtd: dt("zones.lmtd", z.lmtd),
                ua: conductance(&ctx, "zones.ua", z.ua),
            })
            .collect(),
        ua: conductance(&ctx, "ua", r.ua),
        effective_mtd: dt("effective_mtd", r.effective_mtd),
        terminal_temperature_difference: r
            .terminal_temperature_difference
            .map(|x| dt("terminal_temperature_difference", x)),
        drain_cooler_approach: r
            .drain_cooler_approach
            .map(|x| dt("drain_cooler_approach", x)),
        balance: balance(&ctx, &r.balance),
        warnings: warnings_out(&ctx, &r.warnings),
        caution: CAUTION.into(),
        units: {
            let mut units = units_map(
                &ctx,
                &[
                    ("hot_flow", Dim::MassFlow),
                    ("cold_flow", Dim::MassFlow),
                    ("duty", Dim::HeatFlow),
                    ("lmtd", Dim::TemperatureDifference),
                    ("pinch", Dim::TemperatureDifference),
                    ("effective_mtd", Dim::TemperatureDifference),
                    ("zones.duty", Dim::HeatFlow),
                    ("zones.T", Dim::Temperature),
                    ("zones.lmtd", Dim::TemperatureDifference),
                ],
            );
            units.insert("ua".into(), conductance_unit(&ctx, "ua"));
            units.insert("zones.ua".into(), conductance_unit(&ctx, "zones.ua"));
            units
        },
    })
}

/// One zone of `exchanger.balance`, between phase-change points.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct ZoneOut {
    /// What the hot stream does: "desuperheating", "condensing", "drain cooling", "vapour
    /// cooling", "liquid cooling" or "supercritical cooling".
    pub hot: String,
    /// What the cold stream does: "heating", "boiling", "superheating" or "supercritical
    /// heating".
    pub cold: String,
    /// The zone's duty.
    pub duty: f64,
    /// Hot-stream temperature entering the zone.
    #[serde(rename = "hot_T_in")]
    pub hot_t_in: f64,
    /// Hot-stream temperature leaving the zone.
    #[serde(rename = "hot_T_out")]
    pub hot_t_out: f64,
    /// Cold-stream temperature entering the zone.
    #[serde(rename = "cold_T_in")]
    pub cold_t_in: f64,
    /// Cold-stream temperature leaving the zone.
    #[serde(rename = "cold_T_out")]
    pub cold_t_out: f64,
    /// The zone's log-mean temperature difference (straight temperature lines in the zone).
    pub lmtd: f64,
    /// The zone's UA = duty / LMTD.
    pub ua: f64,
}

/// A thermal conductance UA (internal kW/K) in the preset's heat-flow unit per its
/// temperature-difference unit (kW/K, W/K, MMBtu/h per degF).
fn conductance(ctx: &Ctx, name: &str, ua: f64) -> f64 {
    ctx.out(name, Dim::HeatFlow, ua) / ctx.out(name, Dim::TemperatureDifference, 1.0)
}

/// The unit of a thermal conductance, as [`conductance`] gives it.
fn conductance_unit(ctx: &Ctx, name: &str) -> String {
    format!(
        "{}/{}",
        ctx.unit(name, Dim::HeatFlow),
        ctx.unit(name, Dim::TemperatureDifference)
    )
}

// ---------------------------------------------------------------- boiler.fire

/// Parameters of `boiler.fire`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct BoilerParams {
    /// Feedwater state.
    pub feedwater: Stream,
    /// Steam state with its flow (or give `steam_flow`).
    pub steam: Stream,
    /// Steam flow (if not in `steam.flow`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub steam_flow: Option<Input>,
    /// Blowdown as a fraction of the feedwater flow (default 0).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub blowdown_fraction: Option<Input>,
    /// Boiler efficiency: heat to water and steam over fuel heat input.
    pub efficiency: Input,
    /// Units of bare numbers and of the answer: a preset ("engineering" by default, "si", "us",
    /// "bar", "bar_th") or an object with a preset and units per dimension, field or path, e.g.
    /// {"preset": "engineering", "p": "barg", "flow": "t/h", "power": "MW"}.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<Units>,
    /// Ambient pressure for gauge units.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
}

/// Result of `boiler.fire`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct BoilerResult {
    /// Feedwater.
    pub feedwater: StateResult,
    /// Steam.
    pub steam: StateResult,
    /// Blowdown.
    pub blowdown: StateResult,
    /// Steam flow.
    pub steam_flow: f64,
    /// Feedwater flow.
    pub feedwater_flow: f64,
    /// Blowdown flow.
    pub blowdown_flow: f64,
    /// Heat to water and steam.
    pub heat_to_steam: f64,
    /// Energy in the blowdown above the feedwater's.
    pub blowdown_energy: f64,
    /// Fuel heat input.
    pub fuel_heat_input: f64,
    /// Losses.
    pub losses: f64,
    /// Balance.
    pub balance: BalanceOut,
    /// Warnings.
    pub warnings: Vec<WarningOut>,
    /// Standing caution.
    pub caution: String,
    /// Units.
    pub units: BTreeMap<String, String>,
}

fn boiler_fire(p: BoilerParams) -> Result<BoilerResult> {
    let ctx = Ctx::new(p.units.as_ref(), p.ambient.as_ref())?;
    let fw = p.feedwater.state(&ctx, "feedwater")?;
    let st = p.steam.state(&ctx, "steam")?;
    let flow = match (&p.steam_flow, p.steam.flow(&ctx, "steam")?) {
        (Some(f), None) => ctx.value("steam_flow", Dim::MassFlow, f)?,
        (None, Some(f)) => f,
        _ => {
            return Err(Error::invalid(
                "give the steam flow once: in steam.flow or in steam_flow",
            ))
        }
    };
    let bd = p
        .blowdown_fraction
        .as_ref()
        .map(|x| number(&ctx, "blowdown_fraction", x))
        .transpose()?
        .unwrap_or(0.0);
    let eta = number(&ctx, "efficiency", &p.efficiency)?;
    let r = c::boiler_fire(&fw, &st, flow, bd, eta)?;
    let q = |name: &str, x: f64| o(&ctx, name, Dim::HeatFlow, x);
    let m = |name: &str, x: f64| o(&ctx, name, Dim::MassFlow, x);
    Ok(BoilerResult {
        feedwater: sr(&ctx, "feedwater", &r.feedwater),
        steam: sr(&ctx, "steam", &r.steam),
        blowdown: sr(&ctx, "blowdown", &r.blowdown),
        steam_flow: m("steam_flow", r.steam_flow),
        feedwater_flow: m("feedwater_flow", r.feedwater_flow),
        blowdown_flow: m("blowdown_flow", r.blowdown_flow),
        heat_to_steam: q("heat_to_steam", r.heat_to_steam),
        blowdown_energy: q("blowdown_energy", r.blowdown_energy),
        fuel_heat_input: q("fuel_heat_input", r.fuel_heat_input),
        losses: q("losses", r.losses),
        balance: balance(&ctx, &r.balance),
        warnings: warnings_out(&ctx, &r.warnings),
        caution: CAUTION.into(),
        units: units_map(&ctx, &[]),
    })
}

// ---------------------------------------------------------------- deaerator.balance

/// Parameters of `deaerator.balance`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct DeaeratorParams {
    /// Deaerator pressure.
    pub p: Input,
    /// Heating steam state.
    pub steam: Stream,
    /// Water streams in (make-up, condensate returns), each with a flow.
    pub waters: Vec<Stream>,
    /// Fraction of the heating steam vented (default 0).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub vent_fraction: Option<Input>,
    /// Units of bare numbers and of the answer: a preset ("engineering" by default, "si", "us",
    /// "bar", "bar_th") or an object with a preset and units per dimension, field or path, e.g.
    /// {"preset": "engineering", "p": "barg", "flow": "t/h", "power": "MW"}.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<Units>,
    /// Ambient pressure for gauge units.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
}

/// Result of `deaerator.balance`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct DeaeratorResult {
    /// Heating steam.
    pub steam: StateResult,
    /// Outlet (saturated liquid).
    pub outlet: StateResult,
    /// Heating-steam flow.
    pub steam_flow: f64,
    /// Outlet flow.
    pub outlet_flow: f64,
    /// Vent flow.
    pub vent_flow: f64,
    /// Balance.
    pub balance: BalanceOut,
    /// Warnings.
    pub warnings: Vec<WarningOut>,
    /// Standing caution.
    pub caution: String,
    /// Units.
    pub units: BTreeMap<String, String>,
}

fn deaerator_balance(p: DeaeratorParams) -> Result<DeaeratorResult> {
    let ctx = Ctx::new(p.units.as_ref(), p.ambient.as_ref())?;
    let pd = pressure(&ctx, "p", &p.p)?;
    let steam = p.steam.state(&ctx, "steam")?;
    let waters = p
        .waters
        .iter()
        .enumerate()
        .map(|(i, s)| {
            let name = format!("waters[{i}]");
            Ok((s.state(&ctx, &name)?, s.flow_required(&ctx, &name)?))
        })
        .collect::<Result<Vec<_>>>()?;
    let vf = p
        .vent_fraction
        .as_ref()
        .map(|x| number(&ctx, "vent_fraction", x))
        .transpose()?
        .unwrap_or(0.0);
    let r = c::deaerator_balance(pd, &steam, &waters, vf)?;
    let m = |name: &str, x: f64| o(&ctx, name, Dim::MassFlow, x);
    Ok(DeaeratorResult {
        steam: sr(&ctx, "steam", &r.steam),
        outlet: sr(&ctx, "outlet", &r.outlet),
        steam_flow: m("steam_flow", r.steam_flow),
        outlet_flow: m("outlet_flow", r.outlet_flow),
        vent_flow: m("vent_flow", r.vent_flow),
        balance: balance(&ctx, &r.balance),
        warnings: warnings_out(&ctx, &r.warnings),
        caution: CAUTION.into(),
        units: units_map(&ctx, &[]),
    })
}

// ---------------------------------------------------------------- cycle.rankine

/// A feedwater heater of `cycle.rankine`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct HeaterIn {
    /// Extraction pressure at the turbine (the heater's shell pressure is this less line_dp).
    pub p: Input,
    /// "open" (direct contact) or "closed".
    pub kind: String,
    /// Terminal temperature difference of a closed heater: shell saturation temperature less
    /// the feedwater outlet temperature (default 0). A negative TTD needs superheated extraction
    /// steam whose superheat can pay for it (a desuperheating zone); otherwise it is refused.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ttd: Option<Input>,
    /// Pressure drop of the extraction line from the turbine to the heater shell: a pressure
    /// difference or a percentage of the extraction pressure ("3 %"). Default 0.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub line_dp: Option<Input>,
    /// Drain-cooler approach of a closed heater: the drain leaves at the entering feedwater
    /// temperature plus this (above 0 K and below the shell's saturation). Default: no drain
    /// cooler, the drain leaves saturated.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub dca: Option<Input>,
    /// Where a closed heater's drain goes: "cascade" (default: throttled to the next lower
    /// heater or the condenser) or "pump_forward" (pumped into the feedwater just after the
    /// heater).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub drain: Option<String>,
}

/// A condenser fixed by its cooling water (instead of condenser_p or condenser_T).
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct CondenserIn {
    /// Cooling-water inlet temperature.
    #[serde(rename = "cw_inlet_T")]
    pub cw_inlet_t: Input,
    /// Cooling-water flow (give this or cw_rise; needs the steam flow or the net power).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cw_flow: Option<Input>,
    /// Cooling-water temperature rise (give this or cw_flow).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cw_rise: Option<Input>,
    /// Terminal temperature difference: condensing temperature less the cooling-water outlet
    /// temperature (above 0).
    pub ttd: Input,
    /// Cooling-water pressure, where its enthalpies are taken (default: the ambient pressure;
    /// they hardly depend on it).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cw_p: Option<Input>,
}

/// Parameters of `cycle.rankine`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct RankineParams {
    /// Boiler outlet (throttle) pressure.
    pub boiler_p: Input,
    /// Throttle temperature.
    #[serde(rename = "boiler_T")]
    pub boiler_t: Input,
    /// Reheat pressure: the cold-reheat (high-pressure turbine exhaust) pressure.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub reheat_p: Option<Input>,
    /// Reheat temperature.
    #[serde(rename = "reheat_T", default, skip_serializing_if = "Option::is_none")]
    pub reheat_t: Option<Input>,
    /// Condenser pressure (give this, condenser_T or condenser).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub condenser_p: Option<Input>,
    /// Condenser saturation temperature.
    #[serde(
        rename = "condenser_T",
        default,
        skip_serializing_if = "Option::is_none"
    )]
    pub condenser_t: Option<Input>,
    /// A condenser fixed by its cooling water: inlet temperature, flow or rise, TTD.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub condenser: Option<CondenserIn>,
    /// Turbine isentropic efficiency of every section without its own (default 1, the ideal
    /// cycle).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub turbine_efficiency: Option<Input>,
    /// High-pressure section efficiency (default turbine_efficiency). Needs two sections: a
    /// reheat or a crossover_p.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub hp_efficiency: Option<Input>,
    /// Intermediate-pressure section efficiency: from the hot reheat to the crossover (needs a
    /// reheat and crossover_p).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ip_efficiency: Option<Input>,
    /// Low-pressure section efficiency: from the crossover (or the hot reheat) to the condenser.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub lp_efficiency: Option<Input>,
    /// Crossover pressure: the exhaust of the IP section (with reheat) or of the HP section
    /// (without), the inlet of the LP section.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub crossover_p: Option<Input>,
    /// How each section efficiency applies: "section" (default: from the section's inlet to
    /// every extraction point and its exhaust, one expansion line per section) or "stage" (to
    /// each stage between extraction points from its own inlet, as turbine.train's default).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub efficiency_basis: Option<String>,
    /// Moisture loss of wet expansions: "none" (default) or "baumann".
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub moisture_loss: Option<String>,
    /// Baumann factor, 0 to 2.5 (default 1), with moisture_loss "baumann".
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub baumann_factor: Option<Input>,
    /// LP exhaust annulus area (total of all flows), for the leaving loss; needs the flow or the
    /// net power.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub exhaust_area: Option<Input>,
    /// Throttle (governing) valve pressure drop between the boiler outlet and the HP turbine:
    /// a pressure difference or a percentage of boiler_p ("3 %"). Default 0.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub throttle_dp: Option<Input>,
    /// Boiler pressure drop from the feedwater inlet to the steam outlet (the feed pump delivers
    /// boiler_p plus this): a pressure difference or a percentage of boiler_p. Default 0.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub boiler_dp: Option<Input>,
    /// Reheater pressure drop from the cold reheat (reheat_p) to the hot reheat: a pressure
    /// difference or a percentage of reheat_p ("8 %"). Default 0.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub reheat_dp: Option<Input>,
    /// Pump isentropic efficiency (default 1).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pump_efficiency: Option<Input>,
    /// Mechanical efficiency of the turbine-generator, 0 < eta <= 1 (or mechanical_loss).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub mechanical_efficiency: Option<Input>,
    /// Mechanical loss as a fixed power (or mechanical_efficiency); needs the flow or the net
    /// power.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub mechanical_loss: Option<Input>,
    /// Generator efficiency, 0 < eta <= 1 (or generator_loss).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub generator_efficiency: Option<Input>,
    /// Generator loss as a fixed power (or generator_efficiency); needs the flow or the net
    /// power.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub generator_loss: Option<Input>,
    /// Further station load taken from the gross output besides the pumps (a power, default 0);
    /// needs the flow or the net power.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub auxiliary_power: Option<Input>,
    /// Feedwater heaters.
    #[serde(default)]
    pub heaters: Vec<HeaterIn>,
    /// Steam flow leaving the boiler (gives the net power).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub flow: Option<Input>,
    /// Net electrical power wanted: gross output less pumps and station load (gives the flow).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub net_power: Option<Input>,
    /// Units of bare numbers and of the answer: a preset ("engineering" by default, "si", "us",
    /// "bar", "bar_th") or an object with a preset and units per dimension, field or path, e.g.
    /// {"preset": "engineering", "p": "barg", "flow": "t/h", "power": "MW"}.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<Units>,
    /// Ambient pressure for gauge units.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
}

/// A numbered state of the cycle.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct PointOut {
    /// Point number.
    pub number: usize,
    /// What the point is.
    pub label: String,
    /// State.
    pub state: StateResult,
}

/// An extraction of the cycle.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct ExtractionOut {
    /// Extraction pressure at the turbine.
    pub p: f64,
    /// "open" or "closed".
    pub kind: String,
    /// Extraction per unit of boiler steam.
    pub fraction: f64,
    /// Extraction steam enthalpy.
    pub h: f64,
    /// Heater shell pressure (the extraction pressure less the line's drop).
    pub shell_p: f64,
    /// Where a closed heater's drain goes: "cascade" or "pump_forward" (null for open heaters).
    pub drain: Option<String>,
    /// Drain temperature of a closed heater.
    #[serde(rename = "drain_T")]
    pub drain_t: Option<f64>,
    /// Drain enthalpy of a closed heater.
    pub drain_h: Option<f64>,
    /// Drain flow leaving a closed heater per unit of boiler steam (its extraction and the
    /// drains cascaded into it).
    pub drain_fraction: Option<f64>,
}

/// A turbine section of the cycle.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct CycleSectionOut {
    /// "HP", "IP", "LP", or "turbine" for a cycle with one section.
    pub name: String,
    /// Section inlet.
    pub inlet: LinePoint,
    /// Section exhaust (its expansion-line end point).
    pub exhaust: LinePoint,
    /// The efficiency given (dry, with a moisture rule; applied as efficiency_basis says).
    pub efficiency: f64,
    /// Isentropic efficiency from the section inlet to its exhaust, moisture loss included.
    pub expansion_efficiency: f64,
    /// Specific work per unit of boiler steam (the flow through each stage counted; the LP's
    /// after the leaving loss).
    pub work: f64,
    /// Section power (when the flow is known).
    pub power: Option<f64>,
    /// Exhaust moisture of the section.
    pub exhaust_moisture: f64,
    /// The section's moisture loss (moisture_loss "baumann", section basis).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub moisture_loss: Option<MoistureLossOut>,
}

/// The cycle's power from the blades to the net output: each figure is the one before it less
/// its loss (turbine_power - mechanical_loss - generator_loss - pump_power - auxiliary_power =
/// net_power exactly).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct PowerOut {
    /// Internal (blade) power of all sections.
    pub turbine_power: f64,
    /// Mechanical loss.
    pub mechanical_loss: f64,
    /// Shaft power.
    pub shaft_power: f64,
    /// Generator loss.
    pub generator_loss: f64,
    /// Gross electrical output.
    pub gross_power: f64,
    /// Power of every pump (feed, condensate, drain pumps, at their shafts).
    pub pump_power: f64,
    /// Further station load.
    pub auxiliary_power: f64,
    /// Net electrical output.
    pub net_power: f64,
}

/// The condenser fixed by its cooling water.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct CondenserOut {
    /// Condenser pressure found.
    pub p: f64,
    /// Condensing temperature.
    #[serde(rename = "T")]
    pub t: f64,
    /// Cooling-water inlet temperature.
    #[serde(rename = "cw_inlet_T")]
    pub cw_inlet_t: f64,
    /// Cooling-water outlet temperature.
    #[serde(rename = "cw_outlet_T")]
    pub cw_outlet_t: f64,
    /// Cooling-water temperature rise.
    pub cw_rise: f64,
    /// Terminal temperature difference.
    pub ttd: f64,
    /// Cooling-water flow (given, or from the duty when the steam flow is known).
    pub cw_flow: Option<f64>,
    /// Condenser duty (when the steam flow is known).
    pub duty: Option<f64>,
    /// Fixed-point iterations used to find the pressure (0 with a given rise).
    pub iterations: usize,
}

/// Result of `cycle.rankine`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct RankineResult {
    /// State table.
    pub points: Vec<PointOut>,
    /// Extractions, highest pressure first.
    pub extractions: Vec<ExtractionOut>,
    /// Turbine work per unit boiler steam.
    pub turbine_work: f64,
    /// Pump work per unit boiler steam.
    pub pump_work: f64,
    /// Net specific work.
    pub net_work: f64,
    /// Heat input (boiler and reheater) per unit boiler steam.
    pub heat_input: f64,
    /// Heat rejected per unit boiler steam.
    pub heat_rejected: f64,
    /// Thermal efficiency: net work (turbine less pumps) over heat input.
    pub thermal_efficiency: f64,
    /// Heat rate in kJ/kWh (of the thermal efficiency).
    pub heat_rate_kj_per_kwh: f64,
    /// Heat rate in Btu/kWh (of the thermal efficiency).
    pub heat_rate_btu_per_kwh: f64,
    /// Steam rate (the preset's steam-rate unit).
    pub steam_rate: f64,
    /// Back-work ratio.
    pub back_work_ratio: f64,
    /// Boiler steam flow.
    pub flow: Option<f64>,
    /// Net electrical power.
    pub net_power: Option<f64>,
    /// Exhaust moisture.
    pub exhaust_moisture: f64,
    /// First-law residual of the cycle.
    pub energy_residual: f64,
    /// Warnings.
    pub warnings: Vec<WarningOut>,
    /// Standing caution.
    pub caution: String,
    /// Units.
    pub units: BTreeMap<String, String>,
    /// Mass residual of the cycle (condenser, open heaters, boiler; per unit boiler steam).
    pub mass_residual: f64,
    /// How the section efficiencies applied: "section" or "stage".
    pub efficiency_basis: String,
    /// The turbine sections in the order of the steam.
    pub sections: Vec<CycleSectionOut>,
    /// Gross heat rate: heat input over gross electrical output (the preset's heat-rate unit).
    pub gross_heat_rate: f64,
    /// Net heat rate: heat input over net electrical output (the preset's heat-rate unit).
    pub net_heat_rate: f64,
    /// Power from the blades to the net output (when the flow is known).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub power: Option<PowerOut>,
    /// The LP exhaust leaving loss (with exhaust_area).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub leaving_loss: Option<LeavingLossOut>,
    /// The condenser fixed by its cooling water (with condenser).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub condenser: Option<CondenserOut>,
}

fn cycle_rankine(p: RankineParams) -> Result<RankineResult> {
    let ctx = Ctx::new(p.units.as_ref(), p.ambient.as_ref())?;
    let pb = pressure(&ctx, "boiler_p", &p.boiler_p)?;
    let tb = ctx.value("boiler_T", Dim::Temperature, &p.boiler_t)?;
    let reheat = match (&p.reheat_p, &p.reheat_t) {
        (Some(rp), Some(rt)) => Some((
            pressure(&ctx, "reheat_p", rp)?,
            ctx.value("reheat_T", Dim::Temperature, rt)?,
        )),
        (None, None) => None,
        _ => {
            return Err(Error::invalid(
                "give both reheat_p and reheat_T, or neither",
            ))
        }
    };
    let (pc, cooling) = match (&p.condenser_p, &p.condenser_t, &p.condenser) {
        (Some(cp), None, None) => (pressure(&ctx, "condenser_p", cp)?, None),
        (None, Some(ct), None) => {
            let t = ctx.value("condenser_T", Dim::Temperature, ct)?;
            (
                physics::saturation(SaturationAt::T(t), Formulation::If97)?.p,
                None,
            )
        }
        (None, None, Some(c)) => {
            let cw = cy::CoolingWater {
                inlet_t: ctx.value("condenser.cw_inlet_T", Dim::Temperature, &c.cw_inlet_t)?,
                flow: c
                    .cw_flow
                    .as_ref()
                    .map(|x| ctx.value("condenser.cw_flow", Dim::MassFlow, x))
                    .transpose()?,
                rise: c
                    .cw_rise
                    .as_ref()
                    .map(|x| ctx.value("condenser.cw_rise", Dim::TemperatureDifference, x))
                    .transpose()?,
                ttd: ctx.value("condenser.ttd", Dim::TemperatureDifference, &c.ttd)?,
                p: match &c.cw_p {
                    Some(x) => pressure(&ctx, "condenser.cw_p", x)?,
                    None => ctx.ambient,
                },
            };
            (f64::NAN, Some(cw))
        }
        _ => {
            return Err(Error::invalid(
                "give exactly one of condenser_p, condenser_T and condenser (cooling water)",
            ))
        }
    };
    let eff = |x: &Option<Input>, name: &str| -> Result<f64> {
        let e = x
            .as_ref()
            .map(|v| number(&ctx, name, v))
            .transpose()?
            .unwrap_or(1.0);
        if !(e > 0.0 && e <= 1.0) {
            return Err(Error::invalid(format!(
                "{name} = {e} is outside 0 < eta <= 1"
            )));
        }
        Ok(e)
    };
    let section_eff = |x: &Option<Input>, name: &str| -> Result<Option<f64>> {
        x.as_ref().map(|_| eff(x, name)).transpose()
    };
    let mut heater_plant = Vec::with_capacity(p.heaters.len());
    let heaters = p
        .heaters
        .iter()
        .enumerate()
        .map(|(i, h)| {
            let hp = pressure(&ctx, &format!("heaters[{i}].p"), &h.p)?;
            heater_plant.push(cy::HeaterPlant {
                line_dp: opt_drop(&ctx, &format!("heaters[{i}].line_dp"), &h.line_dp, hp)?,
                dca: h
                    .dca
                    .as_ref()
                    .map(|x| ctx.value(&format!("heaters[{i}].dca"), Dim::TemperatureDifference, x))
                    .transpose()?,
                drain: match h.drain.as_deref() {
                    None | Some("cascade") => cy::DrainMode::Cascade,
                    Some("pump_forward") => cy::DrainMode::PumpForward,
                    Some(other) => {
                        return Err(Error::invalid(format!(
                            "heaters[{i}].drain = '{other}'; accepted: cascade, pump_forward"
                        )))
                    }
                },
            });
            Ok(cy::HeaterSpec {
                p: hp,
                kind: match h.kind.as_str() {
                    "open" => cy::HeaterKind::Open,
                    "closed" => cy::HeaterKind::Closed,
                    other => {
                        return Err(Error::invalid(format!(
                            "heaters[{i}].kind = '{other}'; accepted: open, closed"
                        )))
                    }
                },
                ttd: h
                    .ttd
                    .as_ref()
                    .map(|x| ctx.value(&format!("heaters[{i}].ttd"), Dim::TemperatureDifference, x))
                    .transpose()?
                    .unwrap_or(0.0),
            })
        })
        .collect::<Result<Vec<_>>>()?;
    let spec = cy::RankineSpec {
        boiler_p: pb,
        boiler_t: tb,
        reheat,
        condenser_p: pc,
        turbine_efficiency: eff(&p.turbine_efficiency, "turbine_efficiency")?,
        pump_efficiency: eff(&p.pump_efficiency, "pump_efficiency")?,
        heaters,
        flow: p
            .flow
            .as_ref()
            .map(|x| ctx.value("flow", Dim::MassFlow, x))
            .transpose()?,
        net_power: p
            .net_power
            .as_ref()
            .map(|x| ctx.value("net_power", Dim::Power, x))
            .transpose()?,
    };
    if p.reheat_dp.is_some() && reheat.is_none() {
        return Err(Error::invalid(
            "reheat_dp needs a reheat (reheat_p and reheat_T)",
        ));
    }
    let plant = cy::RankinePlant {
        efficiency_basis: efficiency_basis(&p.efficiency_basis, c::EfficiencyBasis::Section)?,
        crossover_p: p
            .crossover_p
            .as_ref()
            .map(|x| pressure(&ctx, "crossover_p", x))
            .transpose()?,
        hp_efficiency: section_eff(&p.hp_efficiency, "hp_efficiency")?,
        ip_efficiency: section_eff(&p.ip_efficiency, "ip_efficiency")?,
        lp_efficiency: section_eff(&p.lp_efficiency, "lp_efficiency")?,
        baumann: moisture_rule(&ctx, &p.moisture_loss, &p.baumann_factor)?,
        exhaust_area: area(&ctx, "exhaust_area", &p.exhaust_area)?,
        throttle_dp: opt_drop(&ctx, "throttle_dp", &p.throttle_dp, pb)?,
        boiler_dp: opt_drop(&ctx, "boiler_dp", &p.boiler_dp, pb)?,
        reheat_dp: opt_drop(
            &ctx,
            "reheat_dp",
            &p.reheat_dp,
            reheat.map(|(rp, _)| rp).unwrap_or(0.0),
        )?,
        heaters: heater_plant,
        mechanical: drive_loss(
            &ctx,
            "mechanical",
            &p.mechanical_efficiency,
            &p.mechanical_loss,
        )?,
        generator: drive_loss(
            &ctx,
            "generator",
            &p.generator_efficiency,
            &p.generator_loss,
        )?,
        auxiliary_power: p
            .auxiliary_power
            .as_ref()
            .map(|x| ctx.value("auxiliary_power", Dim::Power, x))
            .transpose()?
            .unwrap_or(0.0),
        cooling_water: cooling,
    };
    let r = cy::rankine_plant(&spec, &plant)?;
    let e = |name: &str, x: f64| o(&ctx, name, Dim::SpecificEnergy, x);
    let pw = |name: &str, x: f64| o(&ctx, name, Dim::Power, x);
    let mut units = vec![
        ("turbine_work", Dim::SpecificEnergy),
        ("pump_work", Dim::SpecificEnergy),
        ("net_work", Dim::SpecificEnergy),
        ("heat_input", Dim::SpecificEnergy),
        ("heat_rejected", Dim::SpecificEnergy),
        ("steam_rate", Dim::SteamRate),
        ("flow", Dim::MassFlow),
        ("net_power", Dim::Power),
        ("extractions.p", Dim::Pressure),
        ("extractions.h", Dim::SpecificEnergy),
        ("extractions.shell_p", Dim::Pressure),
        ("extractions.drain_T", Dim::Temperature),
        ("extractions.drain_h", Dim::SpecificEnergy),
        ("gross_heat_rate", Dim::HeatRate),
        ("net_heat_rate", Dim::HeatRate),
        ("sections.work", Dim::SpecificEnergy),
        ("sections.power", Dim::Power),
        ("sections.inlet.p", Dim::Pressure),
        ("sections.inlet.T", Dim::Temperature),
        ("sections.inlet.h", Dim::SpecificEnergy),
        ("sections.inlet.s", Dim::SpecificEntropy),
        ("sections.exhaust.p", Dim::Pressure),
        ("sections.exhaust.T", Dim::Temperature),
        ("sections.exhaust.h", Dim::SpecificEnergy),
        ("sections.exhaust.s", Dim::SpecificEntropy),
    ];
    if plant.baumann.is_some() {
        units.push(("sections.moisture_loss.wet_from_p", Dim::Pressure));
        units.push(("sections.moisture_loss.work_lost", Dim::SpecificEnergy));
    }
    if r.power.is_some() {
        units.push(("power", Dim::Power));
    }
    if r.leaving.is_some() {
        units.extend(LEAVING_UNITS);
    }
    if r.condenser.is_some() {
        units.extend([
            ("condenser.p", Dim::Pressure),
            ("condenser.T", Dim::Temperature),
            ("condenser.cw_inlet_T", Dim::Temperature),
            ("condenser.cw_outlet_T", Dim::Temperature),
            ("condenser.cw_rise", Dim::TemperatureDifference),
            ("condenser.ttd", Dim::TemperatureDifference),
            ("condenser.cw_flow", Dim::MassFlow),
            ("condenser.duty", Dim::HeatFlow),
        ]);
    }
    Ok(RankineResult {
        points: r
            .points
            .iter()
            .map(|pt| PointOut {
                number: pt.number,
                label: pt.label.clone(),
                state: sr(&ctx, "points.state", &pt.state),
            })
            .collect(),
        extractions: r
            .extractions
            .iter()
            .map(|x| ExtractionOut {
                p: o(&ctx, "extractions.p", Dim::Pressure, x.p),
                kind: match x.kind {
                    cy::HeaterKind::Open => "open".into(),
                    cy::HeaterKind::Closed => "closed".into(),
                },
                fraction: o(&ctx, "extractions.fraction", Dim::Dimensionless, x.fraction),
                h: e("extractions.h", x.state.props.h),
                shell_p: o(&ctx, "extractions.shell_p", Dim::Pressure, x.shell_p),
                drain: x.drain_mode.map(|d| d.name().into()),
                drain_t: x
                    .drain
                    .map(|d| o(&ctx, "extractions.drain_T", Dim::Temperature, d.props.t)),
                drain_h: x.drain.map(|d| e("extractions.drain_h", d.props.h)),
                drain_fraction: x.drain_fraction,
            })
            .collect(),
        turbine_work: e("turbine_work", r.turbine_work),
        pump_work: e("pump_work", r.pump_work),
        net_work: e("net_work", r.net_work),
        heat_input: e("heat_input", r.heat_input),
        heat_rejected: e("heat_rejected", r.heat_rejected),
        thermal_efficiency: o(
            &ctx,
            "thermal_efficiency",
            Dim::Dimensionless,
            r.thermal_efficiency,
        ),
        heat_rate_kj_per_kwh: r.heat_rate,
        heat_rate_btu_per_kwh: r.heat_rate_btu,
        steam_rate: o(&ctx, "steam_rate", Dim::SteamRate, r.steam_rate),
        back_work_ratio: o(
            &ctx,
            "back_work_ratio",
            Dim::Dimensionless,
            r.back_work_ratio,
        ),
        flow: of(&ctx, "flow", Dim::MassFlow, r.flow),
        net_power: of(&ctx, "net_power", Dim::Power, r.net_power),
        exhaust_moisture: o(
            &ctx,
            "exhaust_moisture",
            Dim::Dimensionless,
            r.exhaust_moisture,
        ),
        energy_residual: r.energy_residual,
        warnings: warnings_out(&ctx, &r.warnings),
        caution: CAUTION.into(),
        units: units_map(&ctx, &units),
        mass_residual: r.mass_residual,
        efficiency_basis: r.efficiency_basis.name().into(),
        sections: r
            .sections
            .iter()
            .map(|s| CycleSectionOut {
                name: s.name.into(),
                inlet: line_point_at(&ctx, "sections.inlet", &s.inlet),
                exhaust: line_point_at(&ctx, "sections.exhaust", &s.exhaust),
                efficiency: s.efficiency,
                expansion_efficiency: s.expansion_efficiency,
                work: e("sections.work", s.work),
                power: r.flow.map(|f| pw("sections.power", f * s.work)),
                exhaust_moisture: c::moisture(&s.exhaust),
                moisture_loss: s
                    .moisture_loss
                    .as_ref()
                    .map(|m| moisture_out(&ctx, "sections.moisture_loss", m)),
            })
            .collect(),
        gross_heat_rate: o(&ctx, "gross_heat_rate", Dim::HeatRate, r.gross_heat_rate),
        net_heat_rate: o(&ctx, "net_heat_rate", Dim::HeatRate, r.net_heat_rate),
        power: r.power.map(|b| PowerOut {
            turbine_power: pw("power.turbine_power", b.turbine_power),
            mechanical_loss: pw("power.mechanical_loss", b.mechanical_loss),
            shaft_power: pw("power.shaft_power", b.shaft_power),
            generator_loss: pw("power.generator_loss", b.generator_loss),
            gross_power: pw("power.gross_power", b.gross_power),
            pump_power: pw("power.pump_power", b.pump_power),
            auxiliary_power: pw("power.auxiliary_power", b.auxiliary_power),
            net_power: pw("power.net_power", b.net_power),
        }),
        leaving_loss: r.leaving.as_ref().map(|l| leaving_out(&ctx, l)),
        condenser: r.condenser.map(|c| CondenserOut {
            p: o(&ctx, "condenser.p", Dim::Pressure, c.p),
            t: o(&ctx, "condenser.T", Dim::Temperature, c.t_sat),
            cw_inlet_t: o(&ctx, "condenser.cw_inlet_T", Dim::Temperature, c.cw_inlet_t),
            cw_outlet_t: o(
                &ctx,
                "condenser.cw_outlet_T",
                Dim::Temperature,
                c.cw_outlet_t,
            ),
            cw_rise: o(
                &ctx,
                "condenser.cw_rise",
                Dim::TemperatureDifference,
                c.cw_rise,
            ),
            ttd: o(&ctx, "condenser.ttd", Dim::TemperatureDifference, c.ttd),
            cw_flow: of(&ctx, "condenser.cw_flow", Dim::MassFlow, c.cw_flow),
            duty: of(&ctx, "condenser.duty", Dim::HeatFlow, c.duty),
            iterations: c.iterations,
        }),
    })
}
