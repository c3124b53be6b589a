//! The API's shared vocabulary: the wire types and conversions every method family uses — a
//! numeric input with or without its unit ([`Input`]), the request's conversion context
//! ([`Ctx`]: unit preset and ambient pressure, per-field output units), the state pair
//! ([`GivenPair`], [`state_key_values`]), the solver switches ([`SolveFlags`]), the formulation
//! param ([`parse_formulation`]) and the full state object ([`StateResult`], [`state_result`]).
//!
//! Units: the `units` param ([`Units`]) is a preset or an object choosing units per dimension,
//! per field name and per dotted path ([`unit_system`] checks it against [`FIELD_DIMS`]);
//! inputs are numbers in the request's units or strings with a unit; [`Ctx::value`] converts
//! them to internal units and records the unit each came in, [`Ctx::out`] converts each output
//! field back to the unit the caller gets for it, by the field's name, and [`Ctx::restate`]
//! re-states a range error in the caller's units (applied to every method by [`restating`]).
//!
//! Invariant: conversion and shaping only; every physics decision (formulation, ranges, ice,
//! which pair, which field means what) is `crate::water`'s (`water::solve`, `water::PAIRS`,
//! `water::Field`).

use crate::error::{Error, Result};
use crate::plant::warnings::Warning;
use crate::units::{self, Dim, Preset, Unit, UnitSystem, AMBIENT_DEFAULT_MPA};
use crate::water::pairs::{self, INPUTS};
use crate::water::state::{Given, Options, Phase, State};
use crate::water::transport;
use crate::water::{Field, Formulation};
use schemars::JsonSchema;
use serde::{Deserialize, Serialize};
use std::cell::RefCell;
use std::collections::BTreeMap;
use std::sync::{Arc, Mutex};

/// A numeric input: a number in the request's units, or a string with its unit.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(untagged)]
pub enum Input {
    /// A number in the request's units (the unit `units` gives this quantity, else the
    /// preset's).
    Number(f64),
    /// A number with a unit, e.g. "42 barg", "410 degC", "1200 Btu/lb", "90 t/h".
    Text(String),
}

/// The `units` param: a preset name, or an object with a preset and units per quantity.
///
/// Object keys: `preset` (the base preset, default "engineering"); a dimension, which sets every
/// quantity of that dimension (`pressure`, `pressure_difference`, `temperature`,
/// `temperature_difference`, `specific_energy`, `specific_entropy`, `specific_volume`,
/// `density`, `speed`, `mass_flow` or `flow`, `power`, `heat_flow`, `length`, `energy`, `mass`,
/// ...); a field name, which sets every field of that name in the params and the answer (`p`,
/// `T`, `h`, `flow`, `net_power`, `pressure_drop`, ...); or a dotted path, which sets the fields
/// it ends (`outlet.p`, `totals.net_power`, `stages.power`). Precedence: the longest matching
/// path, then the field name, then the dimension, then the preset. Values are unit spellings as
/// inputs accept them, gauge pressures included ("barg", "psig": answered relative to
/// `ambient`, which every answer then echoes). Bare numbers in the params are read in the same
/// units as the answer gives them.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(untagged)]
pub enum Units {
    /// A preset: "engineering" (default: MPa, degC, kJ/kg, kJ/(kg K), kg/s, kW), "si" (Pa,
    /// K, J/kg, J/(kg K), kg/s, W), "us" (psia, degF, Btu/lb, Btu/(lb F), lb/h, kW), "bar"
    /// (engineering in bar) or "bar_th" (bar with t/h).
    Preset(String),
    /// A preset with units per quantity, e.g. {"preset": "engineering", "p": "barg", "flow":
    /// "t/h", "power": "MW", "outlet.T": "degF"}.
    Choice(BTreeMap<String, String>),
}

impl From<&str> for Units {
    fn from(s: &str) -> Units {
        Units::Preset(s.to_string())
    }
}

/// Field names that a `units` object may name, with their dimension: every numeric field of
/// the answers and every numeric input of the params that has a unit (the state fields of
/// [`Field::ALL`] besides). A name with two dimensions ("heat": a heat flow, and a yearly
/// energy) takes a unit of either. `tests/it/units_choice.rs` walks the schema so that a new
/// numeric field fails until it is listed here or among the fixed-unit names.
pub const FIELD_DIMS: &[(&str, Dim)] = {
    use Dim::*;
    &[
        ("air_T", Temperature),
        ("ambient", Pressure),
        ("approach_velocity", Speed),
        ("auxiliary_power", Power),
        ("back_work_ratio", Dimensionless),
        ("bare_emissivity", Dimensionless),
        ("baumann_factor", Dimensionless),
        ("blowdown_energy", HeatFlow),
        ("blowdown_flow", MassFlow),
        ("blowdown_fraction", Dimensionless),
        ("blowdown_lost", MassFlow),
        ("boiler_dp", PressureDifference),
        ("boiler_efficiency", Dimensionless),
        ("boiler_losses", HeatFlow),
        ("boiler_p", Pressure),
        ("boiler_T", Temperature),
        ("cold_end_difference", TemperatureDifference),
        ("cold_flow", MassFlow),
        ("cold_T_in", Temperature),
        ("cold_T_out", Temperature),
        ("condensate", MassFlow),
        ("condensate_lost", MassFlow),
        ("condenser_duty", HeatFlow),
        ("condenser_p", Pressure),
        ("condenser_T", Temperature),
        ("conductivity", Conductivity),
        ("critical_p", Pressure),
        ("crossover_p", Pressure),
        ("cw_flow", MassFlow),
        ("cw_inlet_T", Temperature),
        ("cw_outlet_T", Temperature),
        ("cw_p", Pressure),
        ("cw_rise", TemperatureDifference),
        ("dca", TemperatureDifference),
        ("demand", MassFlow),
        ("diameter", Length),
        ("discharge_coefficient", Dimensionless),
        ("distance", Length),
        ("downstream_p", Pressure),
        ("dp_acceleration", PressureDifference),
        ("dp_elevation", PressureDifference),
        ("dp_fittings", PressureDifference),
        ("dp_friction", PressureDifference),
        ("drain_cooler_approach", TemperatureDifference),
        ("drain_fraction", Dimensionless),
        ("drain_h", SpecificEnergy),
        ("drain_T", Temperature),
        ("dry_efficiency", Dimensionless),
        ("duty", HeatFlow),
        ("effective_mtd", TemperatureDifference),
        ("efficiency", Dimensionless),
        ("efficiency_with_valve", Dimensionless),
        ("elevation_change", Length),
        ("emissivity", Dimensionless),
        ("end_moisture", Dimensionless),
        ("energy", HeatFlow),
        ("energy_flow", HeatFlow),
        ("energy_in", HeatFlow),
        ("energy_lost", HeatFlow),
        ("energy_out", HeatFlow),
        ("equivalent_length", Length),
        ("exhaust_area", Area),
        ("exhaust_flow", MassFlow),
        ("exhaust_moisture", Dimensionless),
        ("expansion_efficiency", Dimensionless),
        ("extraction", MassFlow),
        ("factor", Dimensionless),
        ("feedwater_flow", MassFlow),
        ("flash_fraction", Dimensionless),
        ("flow", MassFlow),
        ("fraction", Dimensionless),
        ("friction_factor", Dimensionless),
        ("fuel", Energy),
        ("fuel_cost", PricePerEnergy),
        ("fuel_heat_input", HeatFlow),
        ("generator_efficiency", Dimensionless),
        ("generator_loss", Power),
        ("given_efficiency", Dimensionless),
        ("gross_heat_rate", HeatRate),
        ("gross_power", Power),
        ("h_fg", SpecificEnergy),
        ("head", Length),
        ("heat", HeatFlow),
        ("heat", Energy),
        ("heat_input", SpecificEnergy),
        ("heat_loss", HeatFlow),
        ("heat_loss_per_length", HeatFlowPerLength),
        ("heat_rejected", SpecificEnergy),
        ("heat_to_steam", HeatFlow),
        ("hot_end_difference", TemperatureDifference),
        ("hot_flow", MassFlow),
        ("hot_T_in", Temperature),
        ("hot_T_out", Temperature),
        ("hp_efficiency", Dimensionless),
        ("inlet_velocity", Speed),
        ("inner_diameter", Length),
        ("insulation_emissivity", Dimensionless),
        ("internal_power", Power),
        ("ip_efficiency", Dimensionless),
        ("isentropic_work", SpecificEnergy),
        ("leak_diameter", Length),
        ("leak_flow", MassFlow),
        ("length", Length),
        ("line_condensate", MassFlow),
        ("line_dp", PressureDifference),
        ("line_heat_loss", HeatFlow),
        ("liquid_flow", MassFlow),
        ("lmtd", TemperatureDifference),
        ("loss", SpecificEnergy),
        ("loss_discharged", MassFlow),
        ("loss_fuel", HeatFlow),
        ("loss_fuel_per_year", Energy),
        ("loss_heat", HeatFlow),
        ("loss_heat_per_year", Energy),
        ("losses", HeatFlow),
        ("lp_efficiency", Dimensionless),
        ("makeup_heat", HeatFlow),
        ("makeup_T", Temperature),
        ("makeup_water", MassFlow),
        ("mass", MassFlow),
        ("mass_flow", MassFlow),
        ("mass_in", MassFlow),
        ("mass_lost", MassFlow),
        ("mass_out", MassFlow),
        ("mean_moisture", Dimensionless),
        ("mechanical_efficiency", Dimensionless),
        ("mechanical_loss", Power),
        ("moisture", Dimensionless),
        ("net_heat_rate", HeatRate),
        ("net_power", Power),
        ("net_work", SpecificEnergy),
        ("npsh_available", Length),
        ("outlet_flow", MassFlow),
        ("outlet_p", Pressure),
        ("outlet_T", Temperature),
        ("outlet_velocity", Speed),
        ("overall_efficiency", Dimensionless),
        ("pinch", TemperatureDifference),
        ("pipe_diameter", Length),
        ("power", Power),
        ("pressure_drop", PressureDifference),
        ("process_heat", HeatFlow),
        ("process_steam", MassFlow),
        ("pump_efficiency", Dimensionless),
        ("pump_power", Power),
        ("pump_work", SpecificEnergy),
        ("reheat_dp", PressureDifference),
        ("reheat_p", Pressure),
        ("reheat_T", Temperature),
        ("return_fraction", Dimensionless),
        ("return_T", Temperature),
        ("roughness", Length),
        ("s_fg", SpecificEntropy),
        ("saving", HeatFlow),
        ("saving_fraction", Dimensionless),
        ("section_efficiency", Dimensionless),
        ("shaft_power", Power),
        ("shell_p", Pressure),
        ("specific_work", SpecificEnergy),
        ("spray_flow", MassFlow),
        ("spray_ratio", Dimensionless),
        ("start_moisture", Dimensionless),
        ("steam", Mass),
        ("steam_cost", PricePerMass),
        ("steam_flow", MassFlow),
        ("steam_lost", MassFlow),
        ("steam_lost_per_year", Mass),
        ("steam_rate", SteamRate),
        ("suction_head", Length),
        ("surface_T", Temperature),
        ("surface_tension", SurfaceTension),
        ("surroundings_T", Temperature),
        ("target_superheat", TemperatureDifference),
        ("target_T", Temperature),
        ("temperature_drop", TemperatureDifference),
        ("terminal_temperature_difference", TemperatureDifference),
        ("thermal_efficiency", Dimensionless),
        ("thickness", Length),
        ("throat_p", Pressure),
        ("throttle_dp", PressureDifference),
        ("touch_limit_T", Temperature),
        ("trap_steam", MassFlow),
        ("ttd", TemperatureDifference),
        ("turbine_efficiency", Dimensionless),
        ("turbine_power", Power),
        ("turbine_work", SpecificEnergy),
        ("v_fg", SpecificVolume),
        ("vapour_flow", MassFlow),
        ("velocity", Speed),
        ("vent_flow", MassFlow),
        ("vent_fraction", Dimensionless),
        ("vented_steam", MassFlow),
        ("volume_flow", VolumeFlow),
        ("wall_conductivity", Conductivity),
        ("wall_thickness", Length),
        ("wet_efficiency", Dimensionless),
        ("wet_from_p", Pressure),
        ("wind_speed", Speed),
        ("work", SpecificEnergy),
        ("work_lost", SpecificEnergy),
        ("yearly_fuel_saving", Energy),
        ("yearly_heat_saving", Energy),
    ]
};

/// The dimensions of the field named `leaf` (a state field or one of [`FIELD_DIMS`]).
pub fn field_dims(leaf: &str) -> Vec<Dim> {
    let mut dims: Vec<Dim> = Field::parse(leaf).map(|f| f.dim()).into_iter().collect();
    dims.extend(
        FIELD_DIMS
            .iter()
            .filter(|(n, _)| *n == leaf)
            .map(|(_, d)| *d),
    );
    dims
}

/// Every key a `units` object accepts besides `preset`, for messages: the dimensions, then the
/// field names.
pub fn units_keys() -> Vec<&'static str> {
    let mut keys: Vec<&'static str> = Dim::ALL.iter().map(|d| d.key()).collect();
    keys.push("flow");
    keys.extend(Field::ALL.iter().map(|f| f.name()));
    for (n, _) in FIELD_DIMS {
        if !keys.contains(n) {
            keys.push(n);
        }
    }
    keys
}

fn dims_text(dims: &[Dim]) -> String {
    dims.iter()
        .map(|d| d.name())
        .collect::<Vec<_>>()
        .join(" or ")
}

/// The unit `text` for the `units` key `key`, whose quantities are of dimensions `dims`: one
/// unit per dimension it fits (at least one), or the error naming what is accepted.
fn key_units(key: &str, dims: &[Dim], text: &str) -> Result<Vec<Unit>> {
    key_units_as(&format!("units.{key}"), key, dims, text)
}

/// As [`key_units`], with the messages naming `label`, the name the caller wrote the unit
/// under ("units.h", or "unit" for the unit of an answered quantity `key`).
fn key_units_as(label: &str, key: &str, dims: &[Dim], text: &str) -> Result<Vec<Unit>> {
    let quantity = label;
    let fits: Vec<Unit> = dims
        .iter()
        .filter_map(|d| units::parse_unit(quantity, *d, text).ok())
        .collect();
    let leaf = key.rsplit('.').next().unwrap_or(key);
    let gauge_pressure = units::dims_of(text.trim()).iter().any(|u| u.gauge);
    let fits: Vec<Unit> = fits
        .into_iter()
        .filter(|u| !(u.gauge && leaf == "ambient"))
        .collect();
    if !fits.is_empty() {
        return Ok(fits);
    }
    if gauge_pressure {
        if leaf == "ambient" {
            return Err(Error::invalid(format!(
                "{label}: '{}' is a gauge unit, but the ambient pressure is absolute; write its absolute unit (e.g. kPa, bar, psia)",
                text.trim()
            )));
        }
        if dims.contains(&Dim::PressureDifference) {
            return Err(Error::invalid(format!(
                "{label}: '{}' is a gauge unit, but {key} is a pressure difference, which has no gauge; write its plain unit (e.g. bar, kPa, psi)",
                text.trim()
            )));
        }
        if !dims.contains(&Dim::Pressure) {
            return Err(Error::invalid(format!(
                "{label}: '{}' is a gauge pressure unit; gauge units are for pressures only, and {key} is a {}",
                text.trim(),
                dims_text(dims)
            )));
        }
    }
    // The first dimension's error names the problem (an unknown unit lists that dimension's
    // spellings, a unit of another dimension says which).
    let mut err = units::parse_unit(quantity, dims[0], text).unwrap_err();
    if let Error::UnknownUnit { accepted, .. } = &mut err {
        for d in &dims[1..] {
            for a in units::accepted(*d) {
                if !accepted.contains(&a) {
                    accepted.push(a);
                }
            }
        }
    }
    if let Error::WrongDimension {
        expected, quantity, ..
    } = &mut err
    {
        *expected = dims_text(dims);
        // "unit 'bar (pressure)' is not a unit of specific energy, which h needs": the unit
        // the caller wrote is named first, so the quantity is named by its key
        if label != format!("units.{key}") {
            *quantity = key.to_string();
        }
    }
    Err(err)
}

/// The units of a request from its `units` param (the `engineering` preset when absent).
pub fn unit_system(units: Option<&Units>) -> Result<UnitSystem> {
    let map = match units {
        None => return Ok(UnitSystem::new(Preset::Engineering)),
        Some(Units::Preset(name)) => return Ok(UnitSystem::new(Preset::parse(name)?)),
        Some(Units::Choice(map)) => map,
    };
    let preset = match map.get("preset") {
        Some(name) => Preset::parse(name)?,
        None => Preset::Engineering,
    };
    let mut system = UnitSystem::new(preset);
    for (key, text) in map {
        if key == "preset" {
            continue;
        }
        let by_dim = Dim::from_key(key);
        let leaf = key.rsplit('.').next().unwrap_or(key);
        let leaf = leaf.split('[').next().unwrap_or(leaf);
        let mut dims: Vec<Dim> = by_dim.into_iter().collect();
        // A dotted key names a field; a plain key may be a dimension and a field at once
        // ("power", "flow", "energy").
        if key.contains('.') {
            dims.clear();
        }
        let field = field_dims(leaf);
        for d in &field {
            if !dims.contains(d) {
                dims.push(*d);
            }
        }
        if dims.is_empty() || key.is_empty() || key.split('.').any(str::is_empty) {
            return Err(Error::invalid(format!(
                "units: '{key}' is not a dimension or a field name; accepted keys: preset, {}, or a dotted path ending in a field name (e.g. outlet.p, totals.net_power)",
                units_keys().join(", ")
            )));
        }
        for unit in key_units(key, &dims, text)? {
            if by_dim == Some(unit.dim) && !key.contains('.') {
                system.set_dim(unit);
            }
            if field.contains(&unit.dim) {
                system.set_name(key, unit);
            }
        }
    }
    Ok(system)
}

/// The `units` param from a text (a query value, a command-line flag): a preset name ("bar"),
/// a JSON object (`{"preset": "bar", "p": "barg"}`), or `key=unit` items separated by commas or
/// semicolons (`preset=bar, p=barg, flow=t/h`). Checked as the param is ([`unit_system`]).
pub fn units_from_text(text: &str) -> Result<Units> {
    let t = text.trim();
    let units = if t.starts_with('{') {
        let map: BTreeMap<String, String> = serde_json::from_str(t).map_err(|e| {
            Error::invalid(format!(
                "units: '{t}' is not a JSON object of unit texts ({e})"
            ))
        })?;
        Units::Choice(map)
    } else if t.contains('=') {
        let mut map = BTreeMap::new();
        for item in t.split([',', ';']).map(str::trim).filter(|i| !i.is_empty()) {
            let Some((k, v)) = item.split_once('=') else {
                return Err(Error::invalid(format!(
                    "units: '{item}' is not key=unit (e.g. preset=bar, p=barg, flow=t/h)"
                )));
            };
            if map
                .insert(k.trim().to_string(), v.trim().to_string())
                .is_some()
            {
                return Err(Error::invalid(format!(
                    "units: '{}' is given twice",
                    k.trim()
                )));
            }
        }
        Units::Choice(map)
    } else {
        Units::Preset(t.to_string())
    };
    unit_system(Some(&units))?;
    Ok(units)
}

/// `units` with one more key (`key` = `unit`): a preset becomes an object with it as its
/// `preset`; a key given twice is refused.
pub fn units_with(units: Option<Units>, key: &str, unit: &str) -> Result<Units> {
    let mut map = match units {
        None => BTreeMap::new(),
        Some(Units::Preset(p)) => BTreeMap::from([("preset".to_string(), p)]),
        Some(Units::Choice(m)) => m,
    };
    if map.insert(key.to_string(), unit.to_string()).is_some() {
        return Err(Error::invalid(format!("units: '{key}' is given twice")));
    }
    let units = Units::Choice(map);
    unit_system(Some(&units))?;
    Ok(units)
}

/// Checks `text` as the unit of the answered field `quantity` (the `unit` of `/cell` and
/// `steamcell get`), with the messages naming `unit` and the quantity ("unit: 'barg' is a gauge
/// pressure unit; gauge units are for pressures only, and h is a specific energy").
pub fn answer_unit(quantity: &str, text: &str) -> Result<()> {
    let dims = field_dims(quantity);
    if dims.is_empty() {
        return Err(Error::invalid(format!(
            "unit = '{text}': {quantity} is not a quantity with a unit"
        )));
    }
    key_units_as("unit", quantity, &dims, text).map(|_| ())
}

/// What a request's conversions recorded: the units its inputs came in (for messages in the
/// caller's units), the fields whose unit a name or path key chose, and whether an answer holds
/// a gauge pressure.
#[derive(Debug, Default)]
struct Log {
    inputs: Vec<(String, Dim, Unit)>,
    refined: BTreeMap<String, &'static str>,
    gauge_out: bool,
    /// The first gauge unit of the request (in or out): the ambient is echoed in its absolute
    /// unit unless the request names a unit for `ambient`.
    gauge: Option<Unit>,
    /// Every output field converted through [`Ctx::out_unit`], by its name, with its unit
    /// (for the component methods' `units` maps, [`Ctx::output_units`]).
    outputs: BTreeMap<String, &'static str>,
}

/// Context shared by every conversion of one request: its units and ambient pressure, and a log
/// of the units its inputs came in and its answer goes out in.
#[derive(Debug, Clone)]
pub struct Ctx {
    /// The base preset of the request's units.
    pub preset: Preset,
    /// Ambient pressure for gauge units, MPa.
    pub ambient: f64,
    /// The request's units.
    pub system: Arc<UnitSystem>,
    log: Arc<Mutex<Log>>,
}

thread_local! {
    /// The first context built by each method call in progress on this thread (see
    /// [`restating`]).
    static SCOPE: RefCell<Vec<Option<Ctx>>> = const { RefCell::new(Vec::new()) };
}

/// Runs one method body and re-states its range error in the caller's units ([`Ctx::restate`]),
/// with the first [`Ctx`] the body built. Method bodies are synchronous, so the context lives in
/// a thread-local stack for the duration of the call.
pub fn restating<T>(f: impl FnOnce() -> Result<T>) -> Result<T> {
    struct Pop;
    impl Drop for Pop {
        fn drop(&mut self) {
            SCOPE.with(|s| {
                s.borrow_mut().pop();
            });
        }
    }
    SCOPE.with(|s| s.borrow_mut().push(None));
    let pop = Pop;
    let r = f();
    let ctx = SCOPE.with(|s| s.borrow().last().cloned().flatten());
    drop(pop);
    match (r, ctx) {
        (Err(e), Some(c)) => Err(c.restate(e)),
        (r, _) => r,
    }
}

impl Ctx {
    /// Builds the context from the request's `units` and `ambient`.
    pub fn new(units: Option<&Units>, ambient: Option<&Input>) -> Result<Ctx> {
        let system = unit_system(units)?;
        let mut ctx = Ctx {
            preset: system.preset(),
            ambient: AMBIENT_DEFAULT_MPA,
            system: Arc::new(system),
            log: Arc::new(Mutex::new(Log::default())),
        };
        if let Some(a) = ambient {
            // The ambient is absolute: a gauge unit would be relative to itself (it is read
            // against the standard ambient, which is no ambient the caller meant).
            let parsed = ctx.parse("ambient", Dim::Pressure, a)?;
            let unit = parsed.unit;
            if unit.gauge {
                let text = match a {
                    Input::Text(t) => t.trim().to_string(),
                    Input::Number(x) => format!("{x} {}", unit.symbol),
                };
                return Err(Error::invalid(format!(
                    "ambient = '{text}' is a gauge pressure, but the ambient pressure is absolute; write it in an absolute unit (e.g. {}, kPa, psia)",
                    unit.absolute().symbol
                )));
            }
            let amb = parsed.internal;
            if !(amb > 0.0 && amb <= 0.2) {
                // in the unit the caller wrote (a bare number: the request's unit for it)
                let (v, _) = crate::error::fmt_value_and_limit(
                    unit.from_internal(amb, AMBIENT_DEFAULT_MPA),
                    0.0,
                );
                let hi = unit.from_internal(0.2, AMBIENT_DEFAULT_MPA);
                return Err(Error::invalid(format!(
                    "ambient = {v} {} is not a plausible ambient pressure (0 to {} {} absolute)",
                    unit.symbol,
                    crate::error::fmt_sig(hi, 6),
                    unit.symbol
                )));
            }
            ctx.note_input("ambient", Dim::Pressure, unit);
            ctx.ambient = amb;
        }
        SCOPE.with(|s| {
            if let Some(top) = s.borrow_mut().last_mut() {
                if top.is_none() {
                    *top = Some(ctx.clone());
                }
            }
        });
        Ok(ctx)
    }

    /// A context with the preset alone and the standard ambient.
    pub fn preset(preset: Preset) -> Ctx {
        Ctx {
            preset,
            ambient: AMBIENT_DEFAULT_MPA,
            system: Arc::new(UnitSystem::new(preset)),
            log: Arc::new(Mutex::new(Log::default())),
        }
    }

    fn log(&self) -> std::sync::MutexGuard<'_, Log> {
        self.log.lock().unwrap_or_else(|e| e.into_inner())
    }

    /// The unit a bare number of the input `quantity` (of dimension `dim`) is read in: the
    /// unit the request's units give that name, else the preset's (the ambient pressure:
    /// absolute).
    pub fn in_unit(&self, quantity: &str, dim: Dim) -> Unit {
        let u = self.system.unit(quantity, dim);
        if is_ambient(quantity) {
            u.absolute()
        } else {
            u
        }
    }

    /// Converts an input to internal units, recording the unit it came in.
    pub fn value(&self, quantity: &str, dim: Dim, input: &Input) -> Result<f64> {
        let parsed = self.parse(quantity, dim, input)?;
        self.note_input(quantity, dim, parsed.unit);
        Ok(parsed.internal)
    }

    /// Converts an input to internal units without recording it (bulk columns).
    pub fn value_quiet(&self, quantity: &str, dim: Dim, input: &Input) -> Result<f64> {
        Ok(self.parse(quantity, dim, input)?.internal)
    }

    fn parse(&self, quantity: &str, dim: Dim, input: &Input) -> Result<units::Parsed> {
        let default = self.in_unit(quantity, dim);
        match input {
            Input::Number(x) => units::parse_number_in(quantity, *x, default, self.ambient),
            Input::Text(t) => units::parse_text_in(quantity, dim, t, default, self.ambient),
        }
    }

    /// Records that the input `quantity` came in `unit` (bulk columns, once per column).
    pub fn note_input(&self, quantity: &str, dim: Dim, unit: Unit) {
        let mut log = self.log();
        if unit.gauge && log.gauge.is_none() {
            log.gauge = Some(unit);
        }
        log.inputs.push((quantity.to_string(), dim, unit));
    }

    /// The unit of the output field `name` (a dotted path for nested fields, e.g.
    /// "balance.mass_in") of dimension `dim` (see [`UnitSystem`]). Every output conversion goes
    /// through here, by field name, so that a unit chosen per quantity acts on its fields; the
    /// fields a name key chose are recorded for the answer's `units` map.
    pub fn out_unit(&self, name: &str, dim: Dim) -> Unit {
        let u = self.system.unit(name, dim);
        if is_ambient(name) {
            return u.absolute();
        }
        let mut log = self.log();
        if !log.outputs.contains_key(name) {
            log.outputs.insert(name.to_string(), u.symbol);
        }
        if u.gauge || self.system.has_names() {
            log.gauge_out |= u.gauge;
            if u.gauge && log.gauge.is_none() {
                log.gauge = Some(u);
            }
            if self.system.named(name, dim).is_some() && u != self.system.for_dim(dim) {
                log.refined.insert(name.to_string(), u.symbol);
            }
        }
        u
    }

    /// The unit of the field `name` of a nested state object whose fields sit under `prefix`
    /// (not recorded: a state object carries its own `units` map).
    pub fn state_unit(&self, prefix: &str, name: &str, dim: Dim) -> Unit {
        if is_ambient(name) {
            return self.system.unit(name, dim).absolute();
        }
        if prefix.is_empty() || !self.system.has_names() {
            self.system.unit(name, dim)
        } else {
            self.system.unit(&format!("{prefix}.{name}"), dim)
        }
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

    /// Every output field converted so far ([`Ctx::out`], [`Ctx::unit`], ...), by the name
    /// it was converted under (a field name, or a dotted path such as "balance.mass_in" or
    /// "stages.power" for the fields of nested objects and lists), with its unit symbol.
    pub fn output_units(&self) -> BTreeMap<String, &'static str> {
        self.log().outputs.clone()
    }

    /// The unit the ambient pressure is echoed in: the one the request names for `ambient`,
    /// else the absolute unit of the first gauge unit the request used (barg: bar), else the
    /// request's pressure unit (absolute).
    pub fn ambient_unit(&self) -> Unit {
        if let Some(u) = self.system.named("ambient", Dim::Pressure) {
            return u.absolute();
        }
        let first_gauge = self.log().gauge;
        match first_gauge {
            Some(g) => g.absolute(),
            None => self.system.for_dim(Dim::Pressure).absolute(),
        }
    }

    /// The ambient pressure for a `units` map, as "<value> <unit>" in [`Ctx::ambient_unit`]
    /// (the shortest text that reads back as the ambient used, e.g. "0.98 bar").
    pub fn ambient_text(&self) -> String {
        let u = self.ambient_unit();
        format!("{} {}", u.shortest(self.ambient, self.ambient), u.symbol)
    }

    /// Completes a result's `units` map: the preset's name, every field whose unit a name or
    /// path key chose (by its dotted name), and, when a field is in a gauge unit, the ambient
    /// pressure it is relative to ("ambient": "1.01325 bar") unless the map names its own.
    pub fn finish_units(&self, map: &mut BTreeMap<String, String>) {
        map.insert("preset".into(), self.preset.name().into());
        let (refined, gauge) = {
            let log = self.log();
            (log.refined.clone(), log.gauge_out)
        };
        for (name, symbol) in refined {
            map.entry(name).or_insert_with(|| symbol.to_string());
        }
        if gauge && !map.contains_key("ambient") {
            map.insert("ambient".into(), self.ambient_text());
        }
    }

    /// The unit the input `quantity` came in: recorded under that name, or under one leaf of
    /// that name when every such input came in the same unit.
    fn input_unit(&self, quantity: &str, dim: Dim) -> Option<Unit> {
        let log = self.log();
        let same = |(n, d, _): &&(String, Dim, Unit)| *d == dim && n == quantity;
        if let Some((_, _, u)) = log.inputs.iter().rev().find(same) {
            return Some(*u);
        }
        let leaf = |n: &str| -> String {
            let l = n.rsplit('.').next().unwrap_or(n);
            l.split('[').next().unwrap_or(l).to_string()
        };
        let want = leaf(quantity);
        let mut found: Option<Unit> = None;
        for (n, d, u) in &log.inputs {
            if *d == dim && leaf(n) == want {
                match found {
                    Some(f) if f != *u => return None,
                    _ => found = Some(*u),
                }
            }
        }
        found
    }

    /// Re-states a range error in the caller's units: a quantity given with a unit is answered
    /// in that unit, a bare number or a computed quantity in the request's unit for it; other
    /// errors, and quantities whose dimension is not known, pass unchanged.
    pub fn restate(&self, e: Error) -> Error {
        let Error::OutOfRange {
            quantity,
            value,
            limit,
            unit,
            bound,
            formulation,
        } = e
        else {
            return e;
        };
        let leaf = quantity.rsplit('.').next().unwrap_or(&quantity);
        let leaf = leaf.split('[').next().unwrap_or(leaf);
        let logged: Vec<Dim> = {
            let log = self.log();
            log.inputs
                .iter()
                .filter(|(n, _, _)| n == &quantity)
                .map(|(_, d, _)| *d)
                .collect()
        };
        let candidates: Vec<Dim> = logged.into_iter().chain(field_dims(leaf)).collect();
        let dim = candidates.into_iter().find(|d| d.internal_symbol() == unit);
        let Some(dim) = dim else {
            return Error::OutOfRange {
                quantity,
                value,
                limit,
                unit,
                bound,
                formulation,
            };
        };
        let target = self
            .input_unit(&quantity, dim)
            .unwrap_or_else(|| self.system.unit(&quantity, dim));
        Error::OutOfRange {
            value: target.from_internal(value, self.ambient),
            limit: target.from_internal(limit, self.ambient),
            unit: target.symbol.to_string(),
            quantity,
            bound,
            formulation,
        }
    }
}

fn is_ambient(name: &str) -> bool {
    name == "ambient" || name.ends_with(".ambient")
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
    /// The unit of every numeric field (gauge units such as "barg" are relative to `ambient`),
    /// and the preset's name under "preset".
    pub units: BTreeMap<String, String>,
    /// Ambient pressure used for gauge units, in its unit under `units.ambient` (absolute).
    pub ambient: f64,
    /// The formulation that produced the numbers: "IAPWS-IF97" or "IAPWS-95".
    pub formulation: String,
}

/// Shapes a solved IAPWS-IF97 state for the wire.
pub fn state_result(st: &State, ctx: &Ctx) -> StateResult {
    state_result_with(st, ctx, Formulation::If97)
}

/// Shapes a solved IAPWS-IF97 state that sits at `prefix` in its answer (e.g. "outlet"), so
/// that a `units` key such as "outlet.p" reaches it.
pub fn state_result_at(st: &State, ctx: &Ctx, prefix: &str) -> StateResult {
    state_result_in(st, ctx, Formulation::If97, prefix)
}

/// Shapes a state solved with formulation `f` for the wire (transport properties included).
pub fn state_result_with(st: &State, ctx: &Ctx, f: Formulation) -> StateResult {
    state_result_in(st, ctx, f, "")
}

fn state_result_in(st: &State, ctx: &Ctx, f: Formulation, prefix: &str) -> StateResult {
    let tr = transport::for_state(st, f);
    let value = |fd: Field| fd.value(st, f, Some(&tr));
    let unit = |fd: Field| ctx.state_unit(prefix, fd.name(), fd.dim());
    let o = |fd: Field| {
        let x = value(fd);
        if x.is_finite() {
            Some(unit(fd).from_internal(x, ctx.ambient))
        } else {
            None
        }
    };
    let mut undefined = BTreeMap::new();
    let mut units_map = BTreeMap::new();
    for fd in Field::ALL {
        if let Some(why) = fd.undefined_reason(st, value(fd)) {
            undefined.insert(fd.name().to_string(), why.to_string());
        }
        units_map.insert(fd.name().to_string(), unit(fd).symbol.to_string());
    }
    // The ambient is echoed in the unit named for it, else in the absolute unit of a gauge
    // pressure of the state (barg: bar), else in the state's unit for `ambient`.
    let p_unit = unit(Field::P);
    let ambient_unit = match ctx.system.named("ambient", Dim::Pressure) {
        Some(u) => u.absolute(),
        None if p_unit.gauge => p_unit.absolute(),
        None => ctx.state_unit(prefix, "ambient", Dim::Pressure),
    };
    units_map.insert("ambient".into(), ambient_unit.symbol.to_string());
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
        ambient: ambient_unit
            .shortest(ctx.ambient, ctx.ambient)
            .parse()
            .unwrap_or_else(|_| ambient_unit.from_internal(ctx.ambient, ctx.ambient)),
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

impl WarningOut {
    /// A warning for the wire, its values stated in the request's units: the unit the
    /// request gives the quantity's field name, else its dimension's (as the result's fields
    /// of that name are).
    pub fn new(ctx: &Ctx, w: &Warning) -> WarningOut {
        WarningOut {
            code: w.code.name().to_string(),
            message: w.message_in(|q| {
                let u = ctx.system.unit(q.name, q.dim);
                (u.from_internal(q.value, ctx.ambient), u.symbol)
            }),
        }
    }
}

/// The warnings of a result, for the wire, in the request's units ([`WarningOut::new`]).
pub fn warnings_out(ctx: &Ctx, ws: &[Warning]) -> Vec<WarningOut> {
    ws.iter().map(|w| WarningOut::new(ctx, w)).collect()
}

/// Runs a method body (inside [`restating`]) and states the values of its input or
/// feasibility error's message in the caller's units ([`Ctx::restate_message`]), with the first
/// [`Ctx`] the body built.
pub fn stating<T>(f: impl FnOnce() -> Result<T>) -> Result<T> {
    f().map_err(|e| {
        let ctx = SCOPE.with(|s| s.borrow().last().cloned().flatten());
        match ctx {
            Some(c) => c.restate_message(e),
            None => e,
        }
    })
}

impl Ctx {
    /// A value named in an error's message in the request's units: the unit its `units` give
    /// the quantity's field name, else its dimension's (as for a warning, [`WarningOut::new`],
    /// so that temperatures and temperature differences of one message agree).
    pub fn state_quantity(&self, q: &crate::error::Quantity) -> (f64, &'static str) {
        let u = self.system.unit(q.name, q.dim);
        (u.from_internal(q.value, self.ambient), u.symbol)
    }

    /// States the values of an input or feasibility error's message (built from quantities,
    /// `Error::invalid_with`, `Error::infeasible_with`) in the caller's units
    /// ([`Ctx::state_quantity`]); other errors pass unchanged.
    pub fn restate_message(&self, e: Error) -> Error {
        e.stated(|q| self.state_quantity(q))
    }
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
