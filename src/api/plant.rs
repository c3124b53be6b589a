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
    state_key_values, state_result, warnings_out, Ctx, Input, StateResult, WarningOut,
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
            concat!("Give the inlet stream, the outlet pressure and either the isentropic efficiency or the measured outlet (temperature, or quality for a wet exhaust). Returns inlet, actual and isentropic outlet states, specific work, power (with a flow), the efficiency and the exhaust moisture. Warns above about 12 % exhaust moisture (common practice) and near the critical point.", " Caution: results support engineering work; they are not a substitute for the governing codes, the equipment maker's data or a licensed engineer's review."),
            turbine_expand,
        )
        .quick(),
        MethodSpec::new::<TrainParams, TrainResult>(
            "turbine.train",
            "Several turbine stages in series, each with an outlet pressure, efficiency and optional extraction",
            concat!("Returns every stage's states and power, the expansion-line points and the total power.", " Caution: results support engineering work; they are not a substitute for the governing codes, the equipment maker's data or a licensed engineer's review."),
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
            concat!("Returns the numbered state table, extraction fractions, net specific work, heat input, thermal efficiency, heat rate (kJ/kWh and Btu/kWh), steam rate, back-work ratio, and the net power for a flow or the flow for a net power. The turbine efficiency applies from each turbine's inlet to every extraction and the exhaust; closed heaters drain as saturated liquid cascaded to the next lower heater.", " Caution: results support engineering work; they are not a substitute for the governing codes, the equipment maker's data or a licensed engineer's review."),
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

fn units_map(ctx: &Ctx, fields: &[(&str, Dim)]) -> BTreeMap<String, String> {
    let mut m: BTreeMap<String, String> = fields
        .iter()
        .map(|(n, d)| (n.to_string(), ctx.unit(n, *d).to_string()))
        .collect();
    for (n, d) in [
        ("flows", Dim::MassFlow),
        ("power", Dim::Power),
        ("heat", Dim::HeatFlow),
        ("balance.energy", Dim::HeatFlow),
    ] {
        m.insert(n.into(), ctx.unit(n, d).into());
    }
    m.insert("preset".into(), ctx.preset.name().into());
    m
}

fn sr(ctx: &Ctx, st: &State) -> StateResult {
    state_result(st, ctx)
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

// ---------------------------------------------------------------- turbine.expand

/// Parameters of `turbine.expand`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct TurbineParams {
    /// Inlet stream (two state keys; flow optional, for the power).
    pub inlet: Stream,
    /// Outlet (exhaust) pressure.
    pub outlet_p: Input,
    /// Isentropic efficiency, 0 < eta <= 1 (give this or `outlet`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub efficiency: Option<Input>,
    /// Measured outlet: T (superheated exhaust) or x (wet exhaust), or any state key; its
    /// pressure is `outlet_p`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub outlet: Option<Stream>,
    /// Unit preset (see `water.state`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<String>,
    /// Ambient pressure for gauge units (default 101.325 kPa).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
}

/// Result of `turbine.expand`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct TurbineResult {
    /// Inlet state.
    pub inlet: StateResult,
    /// Actual outlet state.
    pub outlet: StateResult,
    /// Outlet of the isentropic expansion to the same pressure.
    pub isentropic_outlet: StateResult,
    /// Specific work h_in - h_out.
    pub specific_work: f64,
    /// Isentropic specific work.
    pub isentropic_work: f64,
    /// Power (when a flow was given).
    pub power: Option<f64>,
    /// Isentropic efficiency, given or derived from the measured outlet.
    pub efficiency: f64,
    /// Exhaust moisture 1 - x (0 for superheated exhaust).
    pub moisture: f64,
    /// Mass and energy balance.
    pub balance: BalanceOut,
    /// Practitioner warnings.
    pub warnings: Vec<WarningOut>,
    /// Standing caution.
    pub caution: String,
    /// Units of the numeric fields.
    pub units: BTreeMap<String, String>,
}

fn expansion_out(ctx: &Ctx, ex: &c::Expansion) -> TurbineResult {
    TurbineResult {
        inlet: sr(ctx, &ex.inlet),
        outlet: sr(ctx, &ex.outlet),
        isentropic_outlet: sr(ctx, &ex.isentropic_outlet),
        specific_work: o(ctx, "specific_work", Dim::SpecificEnergy, ex.specific_work),
        isentropic_work: o(
            ctx,
            "isentropic_work",
            Dim::SpecificEnergy,
            ex.isentropic_work,
        ),
        power: of(ctx, "power", Dim::Power, ex.power),
        efficiency: ex.efficiency,
        moisture: ex.moisture,
        balance: balance(ctx, &ex.balance),
        warnings: warnings_out(&ex.warnings),
        caution: CAUTION.into(),
        units: units_map(
            ctx,
            &[
                ("specific_work", Dim::SpecificEnergy),
                ("isentropic_work", Dim::SpecificEnergy),
                ("power", Dim::Power),
                ("efficiency", Dim::Dimensionless),
                ("moisture", Dim::Dimensionless),
            ],
        ),
    }
}

fn turbine_expand(p: TurbineParams) -> Result<TurbineResult> {
    let ctx = Ctx::new(p.units.as_deref(), p.ambient.as_ref())?;
    let inlet = p.inlet.state(&ctx, "inlet")?;
    let flow = p.inlet.flow(&ctx, "inlet")?;
    let p2 = pressure(&ctx, "outlet_p", &p.outlet_p)?;
    let spec = match (&p.efficiency, &p.outlet) {
        (Some(e), None) => c::TurbineSpec::Efficiency(number(&ctx, "efficiency", e)?),
        (None, Some(out)) => c::TurbineSpec::Outlet(out.state_with_p(&ctx, "outlet", p2)?),
        _ => {
            return Err(Error::invalid(
                "give either efficiency or the measured outlet, not both and not neither",
            ))
        }
    };
    let ex = c::turbine_expand(&inlet, p2, spec, flow)?;
    Ok(expansion_out(&ctx, &ex))
}

// ---------------------------------------------------------------- turbine.train

/// One stage of `turbine.train`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct StageIn {
    /// Stage outlet pressure.
    pub outlet_p: Input,
    /// Stage isentropic efficiency.
    pub efficiency: Input,
    /// Steam extracted at the stage outlet (mass flow), default 0.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub extraction: Option<Input>,
}

/// Parameters of `turbine.train`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct TrainParams {
    /// Inlet stream with its flow.
    pub inlet: Stream,
    /// Stages in order of falling pressure.
    pub stages: Vec<StageIn>,
    /// Unit preset.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<String>,
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
    /// Isentropic stage outlet.
    pub isentropic_outlet: StateResult,
    /// Flow through the stage.
    pub flow: f64,
    /// Extraction at the stage outlet.
    pub extraction: f64,
    /// Stage specific work.
    pub specific_work: f64,
    /// Stage power.
    pub power: f64,
    /// Stage efficiency.
    pub efficiency: f64,
}

/// Result of `turbine.train`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct TrainResult {
    /// Stages.
    pub stages: Vec<StageOut>,
    /// Expansion-line points (h, s) from the inlet through every stage outlet.
    pub expansion_line: Vec<LinePoint>,
    /// Total power.
    pub power: f64,
    /// Exhaust flow.
    pub exhaust_flow: f64,
    /// Overall isentropic efficiency from the inlet to the final exhaust.
    pub overall_efficiency: f64,
    /// Mass and energy balance.
    pub balance: BalanceOut,
    /// Warnings.
    pub warnings: Vec<WarningOut>,
    /// Standing caution.
    pub caution: String,
    /// Units.
    pub units: BTreeMap<String, String>,
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

fn line_point(ctx: &Ctx, st: &State) -> LinePoint {
    LinePoint {
        p: o(ctx, "expansion_line.p", Dim::Pressure, st.props.p),
        t: o(ctx, "expansion_line.T", Dim::Temperature, st.props.t),
        h: o(ctx, "expansion_line.h", Dim::SpecificEnergy, st.props.h),
        s: o(ctx, "expansion_line.s", Dim::SpecificEntropy, st.props.s),
    }
}

fn turbine_train(p: TrainParams) -> Result<TrainResult> {
    let ctx = Ctx::new(p.units.as_deref(), p.ambient.as_ref())?;
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
    let t = c::turbine_train(&inlet, flow, &stages)?;
    let mut line = vec![line_point(&ctx, &inlet)];
    let stages_out = t
        .stages
        .iter()
        .map(|s| {
            line.push(line_point(&ctx, &s.expansion.outlet));
            StageOut {
                inlet: sr(&ctx, &s.expansion.inlet),
                outlet: sr(&ctx, &s.expansion.outlet),
                isentropic_outlet: sr(&ctx, &s.expansion.isentropic_outlet),
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
                efficiency: s.expansion.efficiency,
            }
        })
        .collect();
    Ok(TrainResult {
        stages: stages_out,
        expansion_line: line,
        power: o(&ctx, "power", Dim::Power, t.power),
        exhaust_flow: o(&ctx, "exhaust_flow", Dim::MassFlow, t.exhaust_flow),
        overall_efficiency: t.overall_efficiency,
        balance: balance(&ctx, &t.balance),
        warnings: warnings_out(&t.warnings),
        caution: CAUTION.into(),
        units: units_map(
            &ctx,
            &[
                ("power", Dim::Power),
                ("exhaust_flow", Dim::MassFlow),
                ("stages.specific_work", Dim::SpecificEnergy),
                ("expansion_line.p", Dim::Pressure),
                ("expansion_line.T", Dim::Temperature),
                ("expansion_line.h", Dim::SpecificEnergy),
                ("expansion_line.s", Dim::SpecificEntropy),
            ],
        ),
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
    /// Unit preset.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<String>,
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
    let ctx = Ctx::new(p.units.as_deref(), p.ambient.as_ref())?;
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
        inlet: sr(&ctx, &r.inlet),
        outlet: sr(&ctx, &r.outlet),
        isentropic_outlet: sr(&ctx, &r.isentropic_outlet),
        specific_work: o(&ctx, "specific_work", Dim::SpecificEnergy, r.specific_work),
        power: of(&ctx, "power", Dim::Power, r.power),
        efficiency: r.efficiency,
        efficiency_kind: match kind {
            c::PumpEfficiencyKind::Isentropic => "isentropic".into(),
            c::PumpEfficiencyKind::Hydraulic => "hydraulic".into(),
        },
        head: o(&ctx, "head", Dim::Length, r.head),
        npsh_available: of(&ctx, "npsh_available", Dim::Length, r.npsh_available),
        balance: balance(&ctx, &r.balance),
        warnings: warnings_out(&r.warnings),
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
    /// Unit preset.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<String>,
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
    let ctx = Ctx::new(p.units.as_deref(), p.ambient.as_ref())?;
    let inlet = p.inlet.state(&ctx, "inlet")?;
    let flow = p.inlet.flow(&ctx, "inlet")?;
    let p2 = pressure(&ctx, "outlet_p", &p.outlet_p)?;
    let r = c::valve_throttle(&inlet, p2, flow)?;
    Ok(ValveResult {
        inlet: sr(&ctx, &r.inlet),
        outlet: sr(&ctx, &r.outlet),
        superheat: of(&ctx, "superheat", Dim::TemperatureDifference, r.superheat),
        temperature_drop: o(
            &ctx,
            "temperature_drop",
            Dim::TemperatureDifference,
            r.temperature_drop,
        ),
        balance: balance(&ctx, &r.balance),
        warnings: warnings_out(&r.warnings),
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
    /// Unit preset.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<String>,
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
    let ctx = Ctx::new(p.units.as_deref(), p.ambient.as_ref())?;
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
        steam: sr(&ctx, &r.steam),
        water: sr(&ctx, &r.water),
        outlet: sr(&ctx, &r.outlet),
        spray_flow: o(&ctx, "spray_flow", Dim::MassFlow, r.spray_flow),
        spray_ratio: r.spray_ratio,
        outlet_flow: o(&ctx, "outlet_flow", Dim::MassFlow, r.outlet_flow),
        superheat: o(&ctx, "superheat", Dim::TemperatureDifference, r.superheat),
        balance: balance(&ctx, &r.balance),
        warnings: warnings_out(&r.warnings),
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
    /// Unit preset.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<String>,
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
    let ctx = Ctx::new(p.units.as_deref(), p.ambient.as_ref())?;
    let inlet = p.inlet.state(&ctx, "inlet")?;
    let flow = p.inlet.flow(&ctx, "inlet")?;
    let pv = pressure(&ctx, "p", &p.p)?;
    let r = c::flash_separate(&inlet, pv, flow)?;
    Ok(FlashResult {
        inlet: sr(&ctx, &r.inlet),
        mixture: sr(&ctx, &r.mixture),
        vapour: sr(&ctx, &r.vapour),
        liquid: sr(&ctx, &r.liquid),
        flash_fraction: r.flash_fraction,
        vapour_flow: o(&ctx, "vapour_flow", Dim::MassFlow, r.vapour_flow),
        liquid_flow: o(&ctx, "liquid_flow", Dim::MassFlow, r.liquid_flow),
        balance: balance(&ctx, &r.balance),
        warnings: warnings_out(&r.warnings),
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
    /// Unit preset.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<String>,
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
    let ctx = Ctx::new(p.units.as_deref(), p.ambient.as_ref())?;
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
        outlet: sr(&ctx, &r.outlet),
        flow: o(&ctx, "flow", Dim::MassFlow, r.flow),
        balance: balance(&ctx, &r.balance),
        warnings: warnings_out(&r.warnings),
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
    /// Unit preset.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<String>,
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
    let ctx = Ctx::new(p.units.as_deref(), p.ambient.as_ref())?;
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
        hot_in: sr(&ctx, &r.hot_in),
        hot_out: sr(&ctx, &r.hot_out),
        hot_flow: o(&ctx, "hot_flow", Dim::MassFlow, r.hot_flow),
        cold_in: sr(&ctx, &r.cold_in),
        cold_out: sr(&ctx, &r.cold_out),
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
        warnings: warnings_out(&r.warnings),
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
    /// Unit preset.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<String>,
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
    let ctx = Ctx::new(p.units.as_deref(), p.ambient.as_ref())?;
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
        feedwater: sr(&ctx, &r.feedwater),
        steam: sr(&ctx, &r.steam),
        blowdown: sr(&ctx, &r.blowdown),
        steam_flow: m("steam_flow", r.steam_flow),
        feedwater_flow: m("feedwater_flow", r.feedwater_flow),
        blowdown_flow: m("blowdown_flow", r.blowdown_flow),
        heat_to_steam: q("heat_to_steam", r.heat_to_steam),
        blowdown_energy: q("blowdown_energy", r.blowdown_energy),
        fuel_heat_input: q("fuel_heat_input", r.fuel_heat_input),
        losses: q("losses", r.losses),
        balance: balance(&ctx, &r.balance),
        warnings: warnings_out(&r.warnings),
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
    /// Unit preset.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<String>,
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
    let ctx = Ctx::new(p.units.as_deref(), p.ambient.as_ref())?;
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
        steam: sr(&ctx, &r.steam),
        outlet: sr(&ctx, &r.outlet),
        steam_flow: m("steam_flow", r.steam_flow),
        outlet_flow: m("outlet_flow", r.outlet_flow),
        vent_flow: m("vent_flow", r.vent_flow),
        balance: balance(&ctx, &r.balance),
        warnings: warnings_out(&r.warnings),
        caution: CAUTION.into(),
        units: units_map(&ctx, &[]),
    })
}

// ---------------------------------------------------------------- cycle.rankine

/// A feedwater heater of `cycle.rankine`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct HeaterIn {
    /// Extraction pressure.
    pub p: Input,
    /// "open" (direct contact) or "closed".
    pub kind: String,
    /// Terminal temperature difference of a closed heater (default 0).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ttd: Option<Input>,
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
    /// Reheat pressure.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub reheat_p: Option<Input>,
    /// Reheat temperature.
    #[serde(rename = "reheat_T", default, skip_serializing_if = "Option::is_none")]
    pub reheat_t: Option<Input>,
    /// Condenser pressure (give this or condenser_T).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub condenser_p: Option<Input>,
    /// Condenser saturation temperature.
    #[serde(
        rename = "condenser_T",
        default,
        skip_serializing_if = "Option::is_none"
    )]
    pub condenser_t: Option<Input>,
    /// Turbine isentropic efficiency (default 1, the ideal cycle).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub turbine_efficiency: Option<Input>,
    /// Pump isentropic efficiency (default 1).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pump_efficiency: Option<Input>,
    /// Feedwater heaters.
    #[serde(default)]
    pub heaters: Vec<HeaterIn>,
    /// Steam flow leaving the boiler (gives the net power).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub flow: Option<Input>,
    /// Net power wanted (gives the flow).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub net_power: Option<Input>,
    /// Unit preset.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<String>,
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
    /// Heater pressure.
    pub p: f64,
    /// "open" or "closed".
    pub kind: String,
    /// Extraction per unit of boiler steam.
    pub fraction: f64,
    /// Extraction steam enthalpy.
    pub h: f64,
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
    /// Thermal efficiency.
    pub thermal_efficiency: f64,
    /// Heat rate in kJ/kWh.
    pub heat_rate_kj_per_kwh: f64,
    /// Heat rate in Btu/kWh.
    pub heat_rate_btu_per_kwh: f64,
    /// Steam rate (the preset's steam-rate unit).
    pub steam_rate: f64,
    /// Back-work ratio.
    pub back_work_ratio: f64,
    /// Boiler steam flow.
    pub flow: Option<f64>,
    /// Net power.
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
}

fn cycle_rankine(p: RankineParams) -> Result<RankineResult> {
    let ctx = Ctx::new(p.units.as_deref(), p.ambient.as_ref())?;
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
    let pc = match (&p.condenser_p, &p.condenser_t) {
        (Some(cp), None) => pressure(&ctx, "condenser_p", cp)?,
        (None, Some(ct)) => {
            let t = ctx.value("condenser_T", Dim::Temperature, ct)?;
            physics::saturation(SaturationAt::T(t), Formulation::If97)?.p
        }
        _ => {
            return Err(Error::invalid(
                "give exactly one of condenser_p and condenser_T",
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
    let heaters = p
        .heaters
        .iter()
        .enumerate()
        .map(|(i, h)| {
            Ok(cy::HeaterSpec {
                p: pressure(&ctx, &format!("heaters[{i}].p"), &h.p)?,
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
    let r = cy::rankine(&spec)?;
    let e = |name: &str, x: f64| o(&ctx, name, Dim::SpecificEnergy, x);
    Ok(RankineResult {
        points: r
            .points
            .iter()
            .map(|pt| PointOut {
                number: pt.number,
                label: pt.label.clone(),
                state: sr(&ctx, &pt.state),
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
                fraction: x.fraction,
                h: e("extractions.h", x.state.props.h),
            })
            .collect(),
        turbine_work: e("turbine_work", r.turbine_work),
        pump_work: e("pump_work", r.pump_work),
        net_work: e("net_work", r.net_work),
        heat_input: e("heat_input", r.heat_input),
        heat_rejected: e("heat_rejected", r.heat_rejected),
        thermal_efficiency: r.thermal_efficiency,
        heat_rate_kj_per_kwh: r.heat_rate,
        heat_rate_btu_per_kwh: r.heat_rate_btu,
        steam_rate: o(&ctx, "steam_rate", Dim::SteamRate, r.steam_rate),
        back_work_ratio: r.back_work_ratio,
        flow: of(&ctx, "flow", Dim::MassFlow, r.flow),
        net_power: of(&ctx, "net_power", Dim::Power, r.net_power),
        exhaust_moisture: r.exhaust_moisture,
        energy_residual: r.energy_residual,
        warnings: warnings_out(&r.warnings),
        caution: CAUTION.into(),
        units: units_map(
            &ctx,
            &[
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
            ],
        ),
    })
}
