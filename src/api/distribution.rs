//! Distribution-system methods: `orifice.flow` (a leak, a failed or leaking steam trap, any hole
//! or nozzle) and `pipe.flow` (pressure drop, heat loss and the state along a steam or water
//! line, insulated and bare side by side), each with the yearly steam, energy and cost lost.
//!
//! Units: every input a number in the request's preset or a string with its unit; lengths in the
//! preset's length unit (m, or ft in `us`; "50 mm", "2 in" accepted), prices currency-neutral
//! ("30 EUR/MWh", "8 $/MMBtu", "25 /t"). Results in the preset, with a `units` map.
//!
//! Invariant: thin wrappers; the calculations are `crate::plant::{orifice, pipe, losses}`. Errors
//! of those calculations that name a length, pressure, temperature, flow, speed or conductivity
//! are re-stated in the caller's units.

use super::plant::{BalanceOut, Stream};
use super::vocab::{state_result_at, warnings_out, Ctx, Input, StateResult, Units, WarningOut};
use super::MethodSpec;
use crate::error::{Error, Result};
use crate::plant::correlations::FrictionModel;
use crate::plant::losses::{Costing, Price, YearlyLoss};
use crate::plant::orifice::{self as orf, Approach, Flashing, Shape};
use crate::plant::pipe::{self, Layer, LineSpec, Surroundings, Wall};
use crate::plant::{Balance, CAUTION};
use crate::units::Dim;
use crate::water::state::State;
use schemars::JsonSchema;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// The methods of this module, for the registry.
pub fn methods() -> Vec<MethodSpec> {
    vec![
        MethodSpec::new::<OrificeParams, OrificeResult>(
            "orifice.flow",
            "Flow of steam, water or a wet mixture through a hole or nozzle (a leak, a failed steam trap) and what it costs in a year",
            concat!("Give the upstream state (the stagnation state of a vessel or header, or a static state with approach_velocity or pipe_diameter), the hole diameter and the downstream pressure (default: the ambient pressure, a leak to atmosphere). The flow is the real-fluid isentropic flow (IAPWS-IF97 states along p, s = const; homogeneous equilibrium flashing for liquid and wet inlets) with its mass flux maximised over the throat pressure: choked when the maximum lies above the downstream pressure. The discharge coefficient defaults by shape (sharp-edged 0.61, nozzle 0.97; common practice). Returns the mass flow, whether it is choked, the throat (critical) pressure and state, the jet velocity, an ideal-gas comparison for vapour inlets, and the yearly steam, boiler heat, fuel and cost lost. A failed-open or leaking steam trap is this method with the trap's orifice (or an equivalent hole).", " Caution: results support engineering work; they are not a substitute for the governing codes, the equipment maker's data or a licensed engineer's review."),
            orifice_flow,
        ),
        MethodSpec::new::<PipeParams, PipeResult>(
            "pipe.flow",
            "A steam or water line: pressure drop, heat loss, condensate, surface temperature and outlet state, insulated and bare side by side",
            concat!("Darcy-Weisbach with the Colebrook-White friction factor (or Swamee-Jain, Haaland), fittings as K values or equivalent lengths, elevation and acceleration, marched in segments along the line with the energy balance of each (heat loss, kinetic and potential energy). Heat loss through the pipe wall, insulation layers and jacket to still or moving air: Churchill-Chu natural convection, Churchill-Bernstein cross-flow, grey radiation. With insulation layers the line is also computed bare (or, with insulation_installed false, insulated as proposed): the heat loss, surface temperature and yearly energy and cost of both, and the saving. Warns above a touch temperature (default 60 degC) and above good-practice velocities (common practice).", " Caution: results support engineering work; they are not a substitute for the governing codes, the equipment maker's data or a licensed engineer's review."),
            pipe_flow,
        ),
    ]
}

// ---------------------------------------------------------------- shared: costing, errors

/// Default hours per year: continuous operation.
const HOURS_DEFAULT: f64 = 8760.0;
/// Default make-up water temperature, K (15 degC; common practice, no source).
const MAKEUP_T_DEFAULT: f64 = 288.15;

fn costing(
    ctx: &Ctx,
    hours: &Option<Input>,
    fuel_cost: &Option<Input>,
    steam_cost: &Option<Input>,
    eta: &Option<Input>,
    makeup_t: &Option<Input>,
) -> Result<Costing> {
    let price = match (fuel_cost, steam_cost) {
        (Some(_), Some(_)) => {
            return Err(Error::invalid(
                "give fuel_cost (per fuel energy) or steam_cost (per mass of steam), not both",
            ))
        }
        (Some(c), None) => Some(Price::PerFuelEnergy(ctx.value(
            "fuel_cost",
            Dim::PricePerEnergy,
            c,
        )?)),
        (None, Some(c)) => Some(Price::PerSteamMass(ctx.value(
            "steam_cost",
            Dim::PricePerMass,
            c,
        )?)),
        (None, None) => None,
    };
    let c = Costing {
        hours_per_year: hours
            .as_ref()
            .map(|h| ctx.value("hours_per_year", Dim::Dimensionless, h))
            .transpose()?
            .unwrap_or(HOURS_DEFAULT),
        price,
        boiler_efficiency: eta
            .as_ref()
            .map(|e| ctx.value("boiler_efficiency", Dim::Dimensionless, e))
            .transpose()?,
        makeup_t: makeup_t
            .as_ref()
            .map(|t| ctx.value("makeup_T", Dim::Temperature, t))
            .transpose()?
            .unwrap_or(MAKEUP_T_DEFAULT),
    };
    c.check().map_err(|e| ctx.restate(e))?;
    Ok(c)
}

/// A loss over a year.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct YearlyOut {
    /// Hours per year used.
    pub hours_per_year: f64,
    /// Steam lost per year (for a heat loss: the steam that carries that heat from the make-up
    /// water's enthalpy), in the preset's mass unit (t, kg in si, klb in us).
    pub steam: f64,
    /// Boiler heat to make the loss good per year, in the preset's energy unit (MWh, GJ in si,
    /// MMBtu in us).
    pub heat: f64,
    /// Fuel energy per year (heat / boiler_efficiency; null without a boiler efficiency).
    pub fuel: Option<f64>,
    /// Cost per year in the currency of the price given (null without a price).
    pub cost: Option<f64>,
    /// Make-up water temperature used.
    #[serde(rename = "makeup_T")]
    pub makeup_t: f64,
    /// How the amounts were reckoned.
    pub basis: String,
}

const BASIS_STEAM: &str = "steam lost = flow x hours; boiler heat = steam x (h of the steam - h of make-up water at makeup_T pumped to the steam pressure); fuel = heat / boiler_efficiency; cost = fuel x fuel_cost or steam x steam_cost. Feed-pump work, deaerator venting, blowdown, water treatment and lost condensate return are not counted";
const BASIS_HEAT: &str = "boiler heat = heat loss x hours (made good one for one by the boiler); steam = the steam that carries that heat (heat / (h of the inlet - h of make-up water at makeup_T)); fuel = heat / boiler_efficiency; cost = fuel x fuel_cost or steam x steam_cost";

/// The yearly loss `y` as the field `at` ("yearly", "insulation.bare.yearly") of its answer.
fn yearly(ctx: &Ctx, at: &str, c: &Costing, y: &YearlyLoss, basis: &str) -> YearlyOut {
    let f = |name: &str| format!("{at}.{name}");
    YearlyOut {
        hours_per_year: c.hours_per_year,
        steam: ctx.out(&f("steam"), Dim::Mass, y.steam),
        heat: ctx.out(&f("heat"), Dim::Energy, y.heat),
        fuel: y.fuel.map(|x| ctx.out(&f("fuel"), Dim::Energy, x)),
        cost: y.cost,
        makeup_t: ctx.out(&f("makeup_T"), Dim::Temperature, c.makeup_t),
        basis: basis.to_string(),
    }
}

fn balance_out(ctx: &Ctx, b: &Balance) -> BalanceOut {
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

fn units_of(ctx: &Ctx, fields: &[(&str, Dim)]) -> BTreeMap<String, String> {
    let mut m: BTreeMap<String, String> = fields
        .iter()
        .map(|(n, d)| (n.to_string(), ctx.unit(n, *d).to_string()))
        .collect();
    for (key, dim) in [
        ("yearly.steam", Dim::Mass),
        ("yearly.heat", Dim::Energy),
        ("yearly.fuel", Dim::Energy),
        ("yearly.makeup_T", Dim::Temperature),
        ("balance.mass", Dim::MassFlow),
        ("balance.energy", Dim::HeatFlow),
    ] {
        m.insert(key.into(), ctx.unit(key, dim).into());
    }
    m.insert(
        "yearly.cost".into(),
        "currency of the price given (per year)".into(),
    );
    m.insert("yearly.hours_per_year".into(), "h".into());
    ctx.finish_units(&mut m);
    m
}

fn sr(ctx: &Ctx, at: &str, st: &State) -> StateResult {
    state_result_at(st, ctx, at)
}

/// The output field `name` (its dotted path in the answer) in its unit.
fn o(ctx: &Ctx, name: &str, dim: Dim, x: f64) -> f64 {
    ctx.out(name, dim, x)
}

fn length(ctx: &Ctx, name: &str, v: &Input) -> Result<f64> {
    ctx.value(name, Dim::Length, v)
}

// ---------------------------------------------------------------- orifice.flow

/// Parameters of `orifice.flow`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct OrificeParams {
    /// Upstream state (two state keys, no flow: the flow is the answer). Without
    /// approach_velocity or pipe_diameter it is the stagnation state (a vessel, header or large
    /// pipe).
    pub inlet: Stream,
    /// Diameter of the hole at its narrowest (preset length unit; "3 mm", "0.125 in").
    pub diameter: Input,
    /// Pressure downstream of the hole (default: the ambient pressure, a leak to atmosphere).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub downstream_p: Option<Input>,
    /// "sharp_edged" (default: a leak, a drilled trap orifice, a thin plate) or "nozzle" (a
    /// rounded entry); sets the default discharge coefficient.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub shape: Option<String>,
    /// Discharge coefficient, 0 < cd <= 1 (default by shape: 0.61 sharp-edged, 0.97 nozzle;
    /// common practice).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub discharge_coefficient: Option<Input>,
    /// Flashing model for a liquid or wet inlet: "equilibrium" (default, homogeneous
    /// equilibrium) or "frozen" (liquid inlets only: the liquid passes the hole unflashed, the
    /// upper limit of short openings).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub flashing: Option<String>,
    /// Velocity of the upstream (static) state towards the hole; the stagnation state follows.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub approach_velocity: Option<Input>,
    /// Inner diameter of the pipe the hole ends (the upstream state is static in it; the
    /// approach velocity follows from the flow).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pipe_diameter: Option<Input>,
    /// Hours per year the loss runs (default 8760).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub hours_per_year: Option<Input>,
    /// Fuel price per fuel energy, currency-neutral ("30 EUR/MWh", "8 $/MMBtu"; a bare number is
    /// per MWh, per GJ in si, per MMBtu in us). Needs boiler_efficiency.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fuel_cost: Option<Input>,
    /// Steam price per mass of steam ("25 /t", "12 $/klb"; a bare number is per t, per klb in
    /// us); instead of fuel_cost.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub steam_cost: Option<Input>,
    /// Boiler efficiency, fuel to steam (0 < eta <= 1; gives the fuel energy).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub boiler_efficiency: Option<Input>,
    /// Make-up water temperature (default 15 degC).
    #[serde(rename = "makeup_T", default, skip_serializing_if = "Option::is_none")]
    pub makeup_t: Option<Input>,
    /// Units of bare numbers and of the answer: a preset ("engineering" by default, "si", "us",
    /// "bar", "bar_th") or an object with a preset and units per dimension, field or path, e.g.
    /// {"preset": "engineering", "p": "barg", "flow": "t/h", "power": "MW"}.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<Units>,
    /// Ambient pressure for gauge units and the default downstream pressure.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
}

/// The ideal-gas comparison of `orifice.flow`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct IdealGasOut {
    /// Isentropic exponent of the stagnation state (w^2 / (p v)).
    pub kappa: f64,
    /// Ideal-gas critical pressure p0 (2/(kappa+1))^(kappa/(kappa-1)).
    pub critical_p: f64,
    /// Whether the ideal gas would be choked.
    pub choked: bool,
    /// Ideal-gas mass flow with the same discharge coefficient.
    pub mass_flow: f64,
    /// Ideal-gas flow over the real-fluid flow, minus one.
    pub deviation: f64,
}

/// Result of `orifice.flow`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct OrificeResult {
    /// Upstream state as given.
    pub inlet: StateResult,
    /// Stagnation state (the inlet itself without an approach velocity).
    pub stagnation: StateResult,
    /// State at the throat (null for frozen liquid flow: superheated liquid is not an
    /// equilibrium state).
    pub throat: Option<StateResult>,
    /// State downstream once the jet has mixed out (downstream pressure, stagnation enthalpy):
    /// for a leak of hot water, the flash steam fraction is its quality.
    pub downstream: StateResult,
    /// Mass flow through the hole.
    pub mass_flow: f64,
    /// Whether the flow is choked (the mass-flux maximum lies above the downstream pressure).
    pub choked: bool,
    /// Throat pressure: the critical pressure when choked, else the downstream pressure.
    pub throat_p: f64,
    /// Critical pressure (null when not choked).
    pub critical_p: Option<f64>,
    /// Jet velocity at the throat.
    pub velocity: f64,
    /// Approach velocity used.
    pub approach_velocity: f64,
    /// Ideal mass flux at the throat (discharge coefficient 1), in the preset's mass-flow unit per
    /// square metre (per square foot in us).
    pub ideal_mass_flux: f64,
    /// Discharge coefficient used.
    pub discharge_coefficient: f64,
    /// Where the discharge coefficient comes from.
    pub discharge_coefficient_source: String,
    /// Flashing model used: "equilibrium" (homogeneous equilibrium), "frozen", or "none" for a
    /// vapour or supercritical inlet.
    pub flashing: String,
    /// Ideal-gas comparison (vapour and supercritical inlets).
    pub ideal_gas: Option<IdealGasOut>,
    /// Yearly steam, energy and cost lost.
    pub yearly: YearlyOut,
    /// Balance of the jet: stagnation enthalpy in; throat enthalpy plus kinetic energy out.
    pub balance: BalanceOut,
    /// Practitioner warnings.
    pub warnings: Vec<WarningOut>,
    /// Standing caution.
    pub caution: String,
    /// Units of the numeric fields.
    pub units: BTreeMap<String, String>,
}

fn orifice_flow(p: OrificeParams) -> Result<OrificeResult> {
    let ctx = Ctx::new(p.units.as_ref(), p.ambient.as_ref())?;
    if p.inlet.flow.is_some() {
        return Err(Error::invalid(
            "inlet.flow: orifice.flow computes the flow through the hole; give only the upstream state",
        ));
    }
    let inlet = p.inlet.state(&ctx, "inlet").map_err(|e| ctx.restate(e))?;
    let d = length(&ctx, "diameter", &p.diameter)?;
    let p_down = match &p.downstream_p {
        Some(x) => ctx.value("downstream_p", Dim::Pressure, x)?,
        None => ctx.ambient,
    };
    let shape = match p.shape.as_deref() {
        None | Some("sharp_edged") => Shape::SharpEdged,
        Some("nozzle") => Shape::Nozzle,
        Some(other) => {
            return Err(Error::invalid(format!(
                "shape '{other}' is not known; accepted: sharp_edged, nozzle"
            )))
        }
    };
    let (cd, cd_source) = match &p.discharge_coefficient {
        Some(x) => (
            ctx.value("discharge_coefficient", Dim::Dimensionless, x)?,
            "given".to_string(),
        ),
        None => (shape.default_cd(), shape.cd_source().to_string()),
    };
    let flashing = match p.flashing.as_deref() {
        None | Some("equilibrium") => Flashing::Equilibrium,
        Some("frozen") => Flashing::Frozen,
        Some(other) => {
            return Err(Error::invalid(format!(
                "flashing '{other}' is not known; accepted: equilibrium, frozen"
            )))
        }
    };
    let approach = match (&p.approach_velocity, &p.pipe_diameter) {
        (None, None) => Approach::Stagnation,
        (Some(v), None) => Approach::Velocity(ctx.value("approach_velocity", Dim::Speed, v)?),
        (None, Some(dp)) => Approach::PipeDiameter(length(&ctx, "pipe_diameter", dp)?),
        (Some(_), Some(_)) => {
            return Err(Error::invalid(
                "give approach_velocity or pipe_diameter, not both",
            ))
        }
    };
    let c = costing(
        &ctx,
        &p.hours_per_year,
        &p.fuel_cost,
        &p.steam_cost,
        &p.boiler_efficiency,
        &p.makeup_t,
    )?;
    let spec = orf::OrificeSpec {
        diameter: d,
        cd,
        downstream_p: p_down,
        flashing,
        approach,
    };
    let r = orf::orifice_flow(&inlet, &spec).map_err(|e| ctx.restate(e))?;
    let y = c
        .steam_loss(r.mass_flow, r.stagnation.props.h, r.stagnation.props.p)
        .map_err(|e| ctx.restate(e))?;
    // The mass flux has a unit of its own: lb/(h ft2) in the us preset, else kg/(s m2).
    let us = ctx.preset == crate::units::Preset::Us;
    let flux_unit = if us {
        crate::units::Preset::Us.from_internal(Dim::MassFlow, 1.0)
            / crate::units::Preset::Us
                .from_internal(Dim::Length, 1.0)
                .powi(2)
    } else {
        1.0
    };
    let vapour = matches!(
        r.stagnation.phase,
        crate::water::state::Phase::Vapour | crate::water::state::Phase::Supercritical
    ) || r.stagnation.x.is_some_and(|x| x >= 1.0 - 1e-12);
    let mflow = |name: &str, x: f64| o(&ctx, name, Dim::MassFlow, x);
    let pr = |name: &str, x: f64| o(&ctx, name, Dim::Pressure, x);
    let mut units = units_of(
        &ctx,
        &[
            ("mass_flow", Dim::MassFlow),
            ("throat_p", Dim::Pressure),
            ("critical_p", Dim::Pressure),
            ("velocity", Dim::Speed),
            ("approach_velocity", Dim::Speed),
            ("discharge_coefficient", Dim::Dimensionless),
            ("ideal_gas.kappa", Dim::Dimensionless),
            ("ideal_gas.critical_p", Dim::Pressure),
            ("ideal_gas.mass_flow", Dim::MassFlow),
            ("ideal_gas.deviation", Dim::Dimensionless),
        ],
    );
    units.insert(
        "ideal_mass_flux".into(),
        if us { "lb/(h ft2)" } else { "kg/(s m2)" }.into(),
    );
    let mut out = OrificeResult {
        inlet: sr(&ctx, "inlet", &r.inlet),
        stagnation: sr(&ctx, "stagnation", &r.stagnation),
        throat: r.throat.as_ref().map(|s| sr(&ctx, "throat", s)),
        downstream: sr(&ctx, "downstream", &r.downstream),
        mass_flow: mflow("mass_flow", r.mass_flow),
        choked: r.choked,
        throat_p: pr("throat_p", r.throat_p),
        critical_p: r.critical_p.map(|x| pr("critical_p", x)),
        velocity: o(&ctx, "velocity", Dim::Speed, r.velocity),
        approach_velocity: o(&ctx, "approach_velocity", Dim::Speed, r.approach_velocity),
        ideal_mass_flux: r.ideal_mass_flux * flux_unit,
        discharge_coefficient: o(&ctx, "discharge_coefficient", Dim::Dimensionless, r.cd),
        discharge_coefficient_source: cd_source,
        flashing: if vapour {
            "none".into()
        } else {
            r.flashing.name().into()
        },
        ideal_gas: r.ideal_gas.map(|g| IdealGasOut {
            kappa: o(&ctx, "ideal_gas.kappa", Dim::Dimensionless, g.kappa),
            critical_p: pr("ideal_gas.critical_p", g.critical_p),
            choked: g.choked,
            mass_flow: mflow("ideal_gas.mass_flow", g.mass_flow),
            deviation: g.deviation,
        }),
        yearly: yearly(&ctx, "yearly", &c, &y, BASIS_STEAM),
        balance: balance_out(&ctx, &r.balance),
        warnings: warnings_out(&ctx, &r.warnings),
        caution: CAUTION.into(),
        units,
    };
    ctx.finish_units(&mut out.units);
    Ok(out)
}

// ---------------------------------------------------------------- pipe.flow

/// A fitting of a line: its loss coefficient K or its equivalent length (one of the two).
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct FittingIn {
    /// What it is (for the caller's own reference), e.g. "gate valve".
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// Loss coefficient K in velocity heads (dp = K rho V^2 / 2).
    #[serde(rename = "K", default, skip_serializing_if = "Option::is_none")]
    pub k: Option<Input>,
    /// Equivalent length of straight pipe (friction only).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub equivalent_length: Option<Input>,
    /// How many (default 1).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub count: Option<u32>,
}

/// An insulation layer, or a jacket.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct LayerIn {
    /// Thickness (> 0; preset length unit, or "50 mm", "2 in").
    pub thickness: Input,
    /// Thermal conductivity at the layer's mean temperature (preset unit: mW/(m K) in
    /// engineering; or "0.045 W/(m K)"), from the maker's data.
    pub conductivity: Input,
}

/// A metal (or other) jacket over the insulation.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct JacketIn {
    /// Emissivity of the jacket's surface (bright aluminium about 0.1, stainless about 0.3,
    /// painted or dull about 0.9; common practice, no source).
    pub emissivity: Input,
    /// Thickness (default: negligible).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub thickness: Option<Input>,
    /// Conductivity (default: that of steel, 50 W/(m K)).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub conductivity: Option<Input>,
}

/// Parameters of `pipe.flow`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct PipeParams {
    /// Inlet stream: two state keys and the flow.
    pub inlet: Stream,
    /// Length of the line.
    pub length: Input,
    /// Inner diameter of the pipe.
    pub inner_diameter: Input,
    /// Pipe wall thickness.
    pub wall_thickness: Input,
    /// Absolute roughness of the inner surface (default 0.045 mm, commercial steel).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub roughness: Option<Input>,
    /// Conductivity of the pipe wall (default 50 W/(m K), carbon steel).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub wall_conductivity: Option<Input>,
    /// Fittings: each a K value or an equivalent length, with a count; spread evenly along the
    /// line.
    #[serde(default)]
    pub fittings: Vec<FittingIn>,
    /// Elevation of the outlet above the inlet (negative: the line falls; default 0).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub elevation_change: Option<Input>,
    /// Insulation layers from the pipe outwards (empty: a bare line).
    #[serde(default)]
    pub insulation: Vec<LayerIn>,
    /// Jacket over the insulation (its emissivity is the outer surface's).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub jacket: Option<JacketIn>,
    /// Whether the insulation given is installed (default true). false: the line runs bare and
    /// the insulation is a proposal (the comparison shows what it would save).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub insulation_installed: Option<bool>,
    /// Emissivity of the outer surface of the insulation without a jacket (default 0.9).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub insulation_emissivity: Option<Input>,
    /// Emissivity of the bare pipe (default 0.8, oxidised steel).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub bare_emissivity: Option<Input>,
    /// Air temperature (default 20 degC; 200 K to 400 K).
    #[serde(rename = "air_T", default, skip_serializing_if = "Option::is_none")]
    pub air_t: Option<Input>,
    /// Wind speed across the line (default 0: still air, indoors).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub wind_speed: Option<Input>,
    /// Temperature of the surroundings the surface radiates to (default: air_T).
    #[serde(
        rename = "surroundings_T",
        default,
        skip_serializing_if = "Option::is_none"
    )]
    pub surroundings_t: Option<Input>,
    /// Friction factor: "colebrook" (default, Colebrook-White solved iteratively),
    /// "swamee_jain" or "haaland" (explicit).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub friction_factor: Option<String>,
    /// Number of segments of the march (default one per 5 m, 40 to 4000).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub segments: Option<u32>,
    /// Surface temperature above which a personnel-protection warning is given (default
    /// 60 degC; common practice).
    #[serde(
        rename = "touch_limit_T",
        default,
        skip_serializing_if = "Option::is_none"
    )]
    pub touch_limit_t: Option<Input>,
    /// Hours per year the line runs (default 8760).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub hours_per_year: Option<Input>,
    /// Fuel price per fuel energy ("30 EUR/MWh"); needs boiler_efficiency.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fuel_cost: Option<Input>,
    /// Steam price per mass of steam ("25 /t"); instead of fuel_cost.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub steam_cost: Option<Input>,
    /// Boiler efficiency, fuel to steam.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub boiler_efficiency: Option<Input>,
    /// Make-up water temperature (default 15 degC).
    #[serde(rename = "makeup_T", default, skip_serializing_if = "Option::is_none")]
    pub makeup_t: Option<Input>,
    /// Units of bare numbers and of the answer: a preset ("engineering" by default, "si", "us",
    /// "bar", "bar_th") or an object with a preset and units per dimension, field or path, e.g.
    /// {"preset": "engineering", "p": "barg", "flow": "t/h", "power": "MW"}.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<Units>,
    /// Ambient pressure for gauge units, also the air pressure.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
}

/// One point of a line's profile.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct ProfilePoint {
    /// Distance from the inlet.
    pub distance: f64,
    /// Pressure.
    pub p: f64,
    /// Temperature.
    #[serde(rename = "T")]
    pub t: f64,
    /// Specific enthalpy.
    pub h: f64,
    /// Quality of a wet state (null for a single-phase state).
    pub x: Option<f64>,
    /// Velocity.
    pub velocity: f64,
    /// Outer surface temperature.
    #[serde(rename = "surface_T")]
    pub surface_t: f64,
    /// Heat loss per length here.
    pub heat_loss_per_length: f64,
}

/// The line in one condition (as built, or the alternative).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct ConditionOut {
    /// "insulated" or "bare".
    pub condition: String,
    /// Heat lost along the line.
    pub heat_loss: f64,
    /// Mean heat loss per length.
    pub heat_loss_per_length: f64,
    /// Highest outer surface temperature.
    #[serde(rename = "surface_T")]
    pub surface_t: f64,
    /// Outlet temperature.
    #[serde(rename = "outlet_T")]
    pub outlet_t: f64,
    /// Condensate formed (steam lines; null for a water line).
    pub condensate: Option<f64>,
    /// Yearly energy and cost of the heat loss.
    pub yearly: YearlyOut,
}

/// Insulated and bare side by side.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct InsulationOut {
    /// The line insulated.
    pub insulated: ConditionOut,
    /// The line bare.
    pub bare: ConditionOut,
    /// Heat saved by the insulation (bare minus insulated).
    pub saving: f64,
    /// Fraction of the bare heat loss the insulation saves.
    pub saving_fraction: f64,
    /// Yearly boiler heat saved.
    pub yearly_heat_saving: f64,
    /// Yearly fuel saved (null without a boiler efficiency).
    pub yearly_fuel_saving: Option<f64>,
    /// Yearly cost saved (null without a price).
    pub yearly_cost_saving: Option<f64>,
}

/// Result of `pipe.flow`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct PipeResult {
    /// Inlet state.
    pub inlet: StateResult,
    /// Outlet state.
    pub outlet: StateResult,
    /// Condition the line runs in: "insulated" or "bare".
    pub condition: String,
    /// Pressure drop inlet to outlet.
    pub pressure_drop: f64,
    /// Part of the drop from wall friction (with the fittings' equivalent lengths).
    pub dp_friction: f64,
    /// Part of the drop from the fittings' K values.
    pub dp_fittings: f64,
    /// Part of the drop from the elevation change.
    pub dp_elevation: f64,
    /// Part of the drop from acceleration (the fluid expanding).
    pub dp_acceleration: f64,
    /// Velocity at the inlet.
    pub inlet_velocity: f64,
    /// Velocity at the outlet.
    pub outlet_velocity: f64,
    /// Reynolds number at the inlet.
    pub reynolds: f64,
    /// Darcy friction factor at the inlet.
    pub friction_factor: f64,
    /// Friction-factor correlation used, with its source.
    pub friction_model: String,
    /// Heat lost along the line.
    pub heat_loss: f64,
    /// Mean heat loss per length.
    pub heat_loss_per_length: f64,
    /// Condensate formed in a steam line (null for a water line).
    pub condensate: Option<f64>,
    /// Highest outer surface temperature.
    #[serde(rename = "surface_T")]
    pub surface_t: f64,
    /// Touch limit used for the personnel-protection check.
    #[serde(rename = "touch_limit_T")]
    pub touch_limit_t: f64,
    /// Whether the surface stays at or below the touch limit.
    pub touch_safe: bool,
    /// Segments used.
    pub segments: u32,
    /// The state along the line (at most about 200 points, the inlet and outlet included).
    pub profile: Vec<ProfilePoint>,
    /// Yearly energy and cost of the heat loss as the line runs.
    pub yearly: YearlyOut,
    /// Insulated and bare side by side (when insulation is given).
    pub insulation: Option<InsulationOut>,
    /// Mass and energy balance (inlet enthalpy and kinetic energy in; the outlet's with its
    /// potential energy, and the heat lost, out).
    pub balance: BalanceOut,
    /// Practitioner warnings.
    pub warnings: Vec<WarningOut>,
    /// Standing caution.
    pub caution: String,
    /// Units of the numeric fields.
    pub units: BTreeMap<String, String>,
}

fn condition_out(
    ctx: &Ctx,
    name: &str,
    r: &pipe::LineResult,
    c: &Costing,
    length: f64,
) -> Result<(ConditionOut, YearlyLoss)> {
    let y = c
        .heat_loss(r.heat_loss, r.inlet.props.h, r.inlet.props.p)
        .map_err(|e| ctx.restate(e))?;
    let f = |field: &str| format!("insulation.{name}.{field}");
    Ok((
        ConditionOut {
            condition: name.into(),
            heat_loss: o(ctx, &f("heat_loss"), Dim::HeatFlow, r.heat_loss),
            heat_loss_per_length: o(
                ctx,
                &f("heat_loss_per_length"),
                Dim::HeatFlowPerLength,
                r.heat_loss / length,
            ),
            surface_t: o(ctx, &f("surface_T"), Dim::Temperature, r.max_surface_t),
            outlet_t: o(ctx, &f("outlet_T"), Dim::Temperature, r.outlet.props.t),
            condensate: r
                .condensate
                .map(|m| o(ctx, &f("condensate"), Dim::MassFlow, m)),
            yearly: yearly(ctx, &f("yearly"), c, &y, BASIS_HEAT),
        },
        y,
    ))
}

fn pipe_flow(p: PipeParams) -> Result<PipeResult> {
    let ctx = Ctx::new(p.units.as_ref(), p.ambient.as_ref())?;
    let inlet = p.inlet.state(&ctx, "inlet").map_err(|e| ctx.restate(e))?;
    let flow = p.inlet.flow_required(&ctx, "inlet")?;
    let opt = |name: &str, dim: Dim, v: &Option<Input>, default: f64| -> Result<f64> {
        v.as_ref()
            .map(|x| ctx.value(name, dim, x))
            .transpose()
            .map(|x| x.unwrap_or(default))
    };
    let len = length(&ctx, "length", &p.length)?;
    let d = length(&ctx, "inner_diameter", &p.inner_diameter)?;
    let wall_t = length(&ctx, "wall_thickness", &p.wall_thickness)?;
    let rough = opt(
        "roughness",
        Dim::Length,
        &p.roughness,
        pipe::ROUGHNESS_STEEL,
    )?;
    let k_wall = opt(
        "wall_conductivity",
        Dim::Conductivity,
        &p.wall_conductivity,
        pipe::K_STEEL,
    )?;
    let mut k_total = 0.0;
    let mut le_total = 0.0;
    for (i, f) in p.fittings.iter().enumerate() {
        let n = f.count.unwrap_or(1) as f64;
        match (&f.k, &f.equivalent_length) {
            (Some(k), None) => {
                k_total += n * ctx.value(&format!("fittings[{i}].K"), Dim::Dimensionless, k)?
            }
            (None, Some(l)) => {
                le_total += n * length(&ctx, &format!("fittings[{i}].equivalent_length"), l)?
            }
            _ => {
                return Err(Error::invalid(format!(
                    "fittings[{i}]: give K or equivalent_length (one of the two)"
                )))
            }
        }
    }
    let dz = opt("elevation_change", Dim::Length, &p.elevation_change, 0.0)?;
    let mut layers = Vec::new();
    for (i, l) in p.insulation.iter().enumerate() {
        layers.push(Layer {
            thickness: length(&ctx, &format!("insulation[{i}].thickness"), &l.thickness)?,
            conductivity: ctx.value(
                &format!("insulation[{i}].conductivity"),
                Dim::Conductivity,
                &l.conductivity,
            )?,
        });
    }
    let mut ins_eps = opt(
        "insulation_emissivity",
        Dim::Dimensionless,
        &p.insulation_emissivity,
        pipe::EMISSIVITY_INSULATION,
    )?;
    if let Some(j) = &p.jacket {
        if p.insulation.is_empty() {
            return Err(Error::invalid(
                "jacket: a jacket covers insulation; give the insulation layers too",
            ));
        }
        if p.insulation_emissivity.is_some() {
            return Err(Error::invalid(
                "give the outer emissivity once: jacket.emissivity or insulation_emissivity",
            ));
        }
        ins_eps = ctx.value("jacket.emissivity", Dim::Dimensionless, &j.emissivity)?;
        if let Some(t) = &j.thickness {
            layers.push(Layer {
                thickness: length(&ctx, "jacket.thickness", t)?,
                conductivity: opt(
                    "jacket.conductivity",
                    Dim::Conductivity,
                    &j.conductivity,
                    pipe::K_STEEL,
                )?,
            });
        }
    }
    let bare_eps = opt(
        "bare_emissivity",
        Dim::Dimensionless,
        &p.bare_emissivity,
        pipe::EMISSIVITY_BARE,
    )?;
    let air_t = opt("air_T", Dim::Temperature, &p.air_t, 293.15)?;
    let air = Surroundings {
        air_t,
        air_p: ctx.ambient,
        wind: opt("wind_speed", Dim::Speed, &p.wind_speed, 0.0)?,
        radiant_t: opt("surroundings_T", Dim::Temperature, &p.surroundings_t, air_t)?,
    };
    let friction = match p.friction_factor.as_deref() {
        None | Some("colebrook") => FrictionModel::Colebrook,
        Some("swamee_jain") => FrictionModel::SwameeJain,
        Some("haaland") => FrictionModel::Haaland,
        Some(other) => {
            return Err(Error::invalid(format!(
                "friction_factor '{other}' is not known; accepted: colebrook, swamee_jain, haaland"
            )))
        }
    };
    let touch = opt(
        "touch_limit_T",
        Dim::Temperature,
        &p.touch_limit_t,
        pipe::TOUCH_LIMIT,
    )?;
    let c = costing(
        &ctx,
        &p.hours_per_year,
        &p.fuel_cost,
        &p.steam_cost,
        &p.boiler_efficiency,
        &p.makeup_t,
    )?;
    Error::check_finite("length", len)?;
    let segments = match p.segments {
        Some(n) => n as usize,
        None => pipe::default_segments(len.max(0.0)),
    };
    let bare_wall = Wall {
        inner_diameter: d,
        thickness: wall_t,
        conductivity: k_wall,
        layers: vec![],
        emissivity: bare_eps,
    };
    let insulated_wall = Wall {
        layers: layers.clone(),
        emissivity: ins_eps,
        ..bare_wall.clone()
    };
    let installed = p.insulation_installed.unwrap_or(true) && !layers.is_empty();
    let spec_for = |wall: Wall| LineSpec {
        length: len,
        roughness: rough,
        wall,
        k_total,
        equivalent_length: le_total,
        elevation_change: dz,
        friction,
        segments,
        air,
    };
    let (as_built, alternative) = if installed {
        (insulated_wall.clone(), Some(bare_wall.clone()))
    } else if layers.is_empty() {
        (bare_wall.clone(), None)
    } else {
        (bare_wall.clone(), Some(insulated_wall.clone()))
    };
    // Check the insulated geometry even when it is only the alternative.
    pipe::check_spec(&spec_for(insulated_wall)).map_err(|e| ctx.restate(e))?;
    let r = pipe::line_flow(&inlet, flow, &spec_for(as_built)).map_err(|e| ctx.restate(e))?;
    let alt = alternative
        .map(|w| pipe::line_flow(&inlet, flow, &spec_for(w)).map_err(|e| ctx.restate(e)))
        .transpose()?;
    let built_name = if installed { "insulated" } else { "bare" };
    let (built_cond, built_y) = condition_out(&ctx, built_name, &r, &c, len)?;
    let built_yearly = yearly(&ctx, "yearly", &c, &built_y, BASIS_HEAT);
    let insulation = match &alt {
        Some(a) => {
            let alt_name = if installed { "bare" } else { "insulated" };
            let (alt_cond, alt_y) = condition_out(&ctx, alt_name, a, &c, len)?;
            let (ins, bare, yi, yb) = if installed {
                (built_cond.clone(), alt_cond, built_y, alt_y)
            } else {
                (alt_cond, built_cond.clone(), alt_y, built_y)
            };
            let q_ins = if installed { r.heat_loss } else { a.heat_loss };
            let q_bare = if installed { a.heat_loss } else { r.heat_loss };
            Some(InsulationOut {
                saving: o(&ctx, "insulation.saving", Dim::HeatFlow, q_bare - q_ins),
                saving_fraction: o(
                    &ctx,
                    "insulation.saving_fraction",
                    Dim::Dimensionless,
                    if q_bare > 0.0 {
                        (q_bare - q_ins) / q_bare
                    } else {
                        0.0
                    },
                ),
                yearly_heat_saving: o(
                    &ctx,
                    "insulation.yearly_heat_saving",
                    Dim::Energy,
                    yb.heat - yi.heat,
                ),
                yearly_fuel_saving: match (yb.fuel, yi.fuel) {
                    (Some(b), Some(i)) => {
                        Some(o(&ctx, "insulation.yearly_fuel_saving", Dim::Energy, b - i))
                    }
                    _ => None,
                },
                yearly_cost_saving: match (yb.cost, yi.cost) {
                    (Some(b), Some(i)) => Some(b - i),
                    _ => None,
                },
                insulated: ins,
                bare,
            })
        }
        None => None,
    };

    let warnings = pipe::line_warnings(&r, built_name, touch);

    let stride = r.points.len().div_ceil(200).max(1);
    let mut profile: Vec<ProfilePoint> = Vec::new();
    let last = r.points.len() - 1;
    for (i, pt) in r.points.iter().enumerate() {
        if i % stride == 0 || i == last {
            profile.push(ProfilePoint {
                distance: o(&ctx, "profile.distance", Dim::Length, pt.x),
                p: o(&ctx, "profile.p", Dim::Pressure, pt.state.props.p),
                t: o(&ctx, "profile.T", Dim::Temperature, pt.state.props.t),
                h: o(&ctx, "profile.h", Dim::SpecificEnergy, pt.state.props.h),
                x: pt
                    .state
                    .x
                    .map(|x| o(&ctx, "profile.x", Dim::Dimensionless, x)),
                velocity: o(&ctx, "profile.velocity", Dim::Speed, pt.velocity),
                surface_t: o(&ctx, "profile.surface_T", Dim::Temperature, pt.surface_t),
                heat_loss_per_length: o(
                    &ctx,
                    "profile.heat_loss_per_length",
                    Dim::HeatFlowPerLength,
                    pt.q,
                ),
            });
        }
    }
    let units = units_of(
        &ctx,
        &[
            ("pressure_drop", Dim::PressureDifference),
            ("dp_friction", Dim::PressureDifference),
            ("dp_fittings", Dim::PressureDifference),
            ("dp_elevation", Dim::PressureDifference),
            ("dp_acceleration", Dim::PressureDifference),
            ("inlet_velocity", Dim::Speed),
            ("outlet_velocity", Dim::Speed),
            ("heat_loss", Dim::HeatFlow),
            ("heat_loss_per_length", Dim::HeatFlowPerLength),
            ("condensate", Dim::MassFlow),
            ("surface_T", Dim::Temperature),
            ("touch_limit_T", Dim::Temperature),
            ("profile.distance", Dim::Length),
            ("profile.p", Dim::Pressure),
            ("profile.T", Dim::Temperature),
            ("profile.h", Dim::SpecificEnergy),
            ("profile.velocity", Dim::Speed),
            ("profile.surface_T", Dim::Temperature),
            ("profile.heat_loss_per_length", Dim::HeatFlowPerLength),
            ("insulation.*.heat_loss", Dim::HeatFlow),
            ("insulation.*.heat_loss_per_length", Dim::HeatFlowPerLength),
            ("insulation.*.surface_T", Dim::Temperature),
            ("insulation.*.outlet_T", Dim::Temperature),
            ("insulation.*.condensate", Dim::MassFlow),
            ("insulation.saving", Dim::HeatFlow),
            ("insulation.yearly_heat_saving", Dim::Energy),
            ("insulation.yearly_fuel_saving", Dim::Energy),
        ],
    );
    let mut out = PipeResult {
        inlet: sr(&ctx, "inlet", &r.inlet),
        outlet: sr(&ctx, "outlet", &r.outlet),
        condition: built_name.into(),
        pressure_drop: o(
            &ctx,
            "pressure_drop",
            Dim::PressureDifference,
            r.pressure_drop,
        ),
        dp_friction: o(&ctx, "dp_friction", Dim::PressureDifference, r.dp_friction),
        dp_fittings: o(&ctx, "dp_fittings", Dim::PressureDifference, r.dp_fittings),
        dp_elevation: o(
            &ctx,
            "dp_elevation",
            Dim::PressureDifference,
            r.dp_elevation,
        ),
        dp_acceleration: o(
            &ctx,
            "dp_acceleration",
            Dim::PressureDifference,
            r.dp_acceleration,
        ),
        inlet_velocity: o(&ctx, "inlet_velocity", Dim::Speed, r.points[0].velocity),
        outlet_velocity: o(&ctx, "outlet_velocity", Dim::Speed, r.points[last].velocity),
        reynolds: r.points[0].reynolds,
        friction_factor: r.points[0].friction_factor,
        friction_model: format!("{}: {}", friction.name(), friction.source()),
        heat_loss: o(&ctx, "heat_loss", Dim::HeatFlow, r.heat_loss),
        heat_loss_per_length: o(
            &ctx,
            "heat_loss_per_length",
            Dim::HeatFlowPerLength,
            r.heat_loss / len,
        ),
        condensate: r
            .condensate
            .map(|m| o(&ctx, "condensate", Dim::MassFlow, m)),
        surface_t: o(&ctx, "surface_T", Dim::Temperature, r.max_surface_t),
        touch_limit_t: o(&ctx, "touch_limit_T", Dim::Temperature, touch),
        touch_safe: r.max_surface_t <= touch,
        segments: segments as u32,
        profile,
        yearly: built_yearly,
        insulation,
        balance: balance_out(&ctx, &r.balance),
        warnings: warnings_out(&ctx, &warnings),
        caution: CAUTION.into(),
        units,
    };
    ctx.finish_units(&mut out.units);
    Ok(out)
}
