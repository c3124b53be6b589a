//! Units per quantity: every method answers in a `units` object (dimension, field and path
//! keys), every unit the input parser accepts round-trips through an answer, gauge output with a
//! non-standard ambient, per-column units of the bulk paths (JSON, packed and `/columns` bit for
//! bit), the bad `units` objects, and the unit reproductions of issue 15 (messages in the
//! caller's units, "42 psi", digit grouping, 3 bar = 0.3 MPa exactly).
//!
//! The unit factors themselves are exact definitions (SI brochure, the 1959 international yard
//! and pound, IT Btu; common practice, no source) checked in `crates/steamcell-core/src/units.rs`;
//! here the checks are of the wiring: which unit each field is answered in.

use serde_json::{json, Value};
use steamcell::api::{self, vocab};
use steamcell::units::{self, Dim, Preset, Unit, UnitSystem, AMBIENT_DEFAULT_MPA};

fn call(method: &str, params: Value) -> Value {
    api::call(method, params).unwrap_or_else(|e| panic!("{method}: {e}"))
}

fn fails(method: &str, params: Value) -> api::ApiError {
    match api::call(method, params) {
        Ok(v) => panic!("{method} should fail, answered {v}"),
        Err(e) => e,
    }
}

fn site() -> Value {
    serde_json::from_str(include_str!("../../examples/site/site.json")).unwrap()
}

/// The example site with every bare number that has a unit written with its unit of the
/// engineering preset, so that the same network reads alike in any `units`.
fn site_with_units() -> Value {
    fn walk(v: &mut Value) {
        if let Value::Object(o) = v {
            for (k, x) in o.iter_mut() {
                let unit = match k.as_str() {
                    "p" => Some("MPa"),
                    "T" | "return_T" => Some("degC"),
                    "superheat" => Some("K"),
                    "h" => Some("kJ/kg"),
                    "flow" | "steam_flow" | "demand" => Some("kg/s"),
                    "power" => Some("kW"),
                    _ => None,
                };
                match (unit, x.as_f64()) {
                    (Some(u), Some(n)) => *x = json!(format!("{n:?} {u}")),
                    _ => walk(x),
                }
            }
        }
    }
    let mut net = site();
    walk(&mut net);
    net
}

/// One call of every method of the API but the server's own, in the made-up Quillon Creek
/// paper mill (values of our own).
fn samples() -> Vec<(&'static str, Value)> {
    let net = site_with_units();
    let stream = net["streams"]
        .as_object()
        .and_then(|o| o.keys().next().cloned())
        .unwrap();
    vec![
        (
            "water.state",
            json!({"given": {"p": "42 barg", "T": "410 degC"}}),
        ),
        (
            "water.batch",
            json!({"given": {"p": {"values": [1, 4.2, 10, 0.1], "unit": "MPa"}, "T": {"values": [300, 410, 250, 99.6], "unit": "degC"}},
                   "want": ["T", "p", "h", "s", "u", "v", "rho", "w", "x", "superheat", "cp", "mu", "lambda", "nu", "alpha_v", "kappa_t", "mu_jt"]}),
        ),
        ("water.saturation", json!({"p": "4 barg"})),
        (
            "water.curve",
            json!({"kind": "isobar", "p": "10 bar", "points": 8}),
        ),
        (
            "turbine.expand",
            json!({"inlet": {"p": "42 barg", "T": "410 degC", "flow": "22 t/h"}, "outlet_p": "4 barg", "efficiency": 0.72}),
        ),
        (
            "turbine.train",
            json!({"inlet": {"p": "60 bar", "T": "480 degC", "flow": "90 t/h"},
                   "stages": [{"outlet_p": "12 bar", "efficiency": 0.8, "extraction": "20 t/h"},
                              {"outlet_p": "3 bar", "efficiency": 0.78}]}),
        ),
        (
            "pump.raise",
            json!({"inlet": {"p": "0.3 barg", "T": "104 degC", "flow": "30 t/h"}, "outlet_p": "48 barg", "efficiency": 0.7}),
        ),
        (
            "valve.throttle",
            json!({"inlet": {"p": "42 barg", "T": "410 degC", "flow": "8 t/h"}, "outlet_p": "4 barg"}),
        ),
        (
            "desuperheater.spray",
            json!({"steam": {"p": "4 barg", "h": "3233 kJ/kg", "flow": "8 t/h"},
                   "water": {"p": "48 barg", "T": "105 degC"}, "target_superheat": "15 K"}),
        ),
        (
            "flash.separate",
            json!({"inlet": {"p": "4 barg", "x": 0, "flow": "18 t/h"}, "p": "0.3 barg"}),
        ),
        (
            "header.mix",
            json!({"p": "4 barg", "inlets": [{"p": "4 barg", "T": "200 degC", "flow": "10 t/h"},
                                               {"p": "4 barg", "T": "160 degC", "flow": "5 t/h"}]}),
        ),
        (
            "exchanger.balance",
            json!({"hot": {"inlet": {"p": "10 bar", "T": "250 degC", "flow": "5 t/h"}, "outlet": {"T": "120 degC"}},
                   "cold": {"inlet": {"p": "20 bar", "T": "50 degC", "flow": "40 t/h"}}}),
        ),
        (
            "boiler.fire",
            json!({"feedwater": {"p": "48 barg", "T": "105 degC"},
                   "steam": {"p": "42 barg", "T": "410 degC", "flow": "30 t/h"},
                   "blowdown_fraction": 0.03, "efficiency": 0.84}),
        ),
        (
            "deaerator.balance",
            json!({"p": "0.3 barg", "steam": {"p": "0.3 barg", "x": 1},
                   "waters": [{"p": "3 barg", "T": "12 degC", "flow": "6 t/h"},
                              {"p": "0.3 barg", "x": 0, "flow": "16.2 t/h"}],
                   "vent_fraction": 0.005}),
        ),
        (
            "cycle.rankine",
            json!({"boiler_p": "100 bar", "boiler_T": "500 degC", "condenser_p": "0.1 bar",
                   "turbine_efficiency": 0.85, "pump_efficiency": 0.8, "net_power": "50 MW",
                   "heaters": [{"p": "5 bar", "kind": "open"}]}),
        ),
        (
            "orifice.flow",
            json!({"inlet": {"p": "10 barg", "x": 1}, "diameter": "3 mm", "hours_per_year": 8000,
                   "fuel_cost": "30 EUR/MWh", "boiler_efficiency": 0.85}),
        ),
        (
            "pipe.flow",
            json!({"inlet": {"p": "10 barg", "T": "250 degC", "flow": "5 t/h"}, "length": "100 m",
                   "inner_diameter": "80 mm", "wall_thickness": "4 mm",
                   "insulation": [{"thickness": "50 mm", "conductivity": "0.04 W/(m K)"}],
                   "fuel_cost": "30 EUR/MWh", "boiler_efficiency": 0.85}),
        ),
        ("balance.solve", json!({"network": net.clone()})),
        (
            "balance.sweep",
            json!({"network": net, "path": "units.MP_users.demand", "from": "30 t/h", "to": "40 t/h",
                   "points": 2, "streams": [stream]}),
        ),
    ]
}

/// A units object of dimension keys only, every one away from the default preset.
fn dims_object() -> Value {
    json!({"preset": "engineering", "pressure": "barg", "temperature": "degF",
           "specific_energy": "Btu/lb", "specific_entropy": "Btu/(lb F)", "flow": "t/h",
           "power": "MW", "heat_flow": "MW", "specific_volume": "ft3/lb", "density": "lb/ft3",
           "speed": "ft/s", "length": "mm", "energy": "GJ", "mass": "lb",
           "viscosity": "cP", "thermal_conductivity": "W/(m K)", "diffusivity": "cSt",
           "heat_flow_per_length": "kW/m", "steam_rate": "lb/kWh", "surface_tension": "dyn/cm"})
}

fn system(units: &Value) -> UnitSystem {
    let u: vocab::Units = serde_json::from_value(units.clone()).unwrap();
    vocab::unit_system(Some(&u)).unwrap()
}

/// The unit of the numeric field at `path` (dotted, no indices) in an answer in `sys`, when its
/// name has one dimension.
fn unit_at(sys: &UnitSystem, path: &str) -> Option<Unit> {
    let leaf = path.rsplit('.').next().unwrap_or(path);
    let dims = vocab::field_dims(leaf);
    if dims.len() != 1 || dims[0] == Dim::Dimensionless {
        return None;
    }
    let u = sys.unit(path, dims[0]);
    Some(if leaf == "ambient" { u.absolute() } else { u })
}

/// Walks two answers of the same call side by side and checks every numeric field whose unit
/// is known in both: the same internal value to 1e-12. Returns how many fields it checked.
fn same_quantities(a: &Value, sa: &UnitSystem, b: &Value, sb: &UnitSystem, path: &str) -> usize {
    match (a, b) {
        (Value::Object(x), Value::Object(y)) => x
            .iter()
            .filter(|(k, _)| {
                *k != "units"
                    || !x[*k]
                        .as_object()
                        .is_some_and(|m| m.values().all(Value::is_string))
            })
            .map(|(k, v)| {
                let p = if path.is_empty() {
                    k.clone()
                } else {
                    format!("{path}.{k}")
                };
                y.get(k).map_or(0, |w| same_quantities(v, sa, w, sb, &p))
            })
            .sum(),
        (Value::Array(x), Value::Array(y)) => {
            assert_eq!(x.len(), y.len(), "{path}");
            x.iter()
                .zip(y)
                .map(|(v, w)| same_quantities(v, sa, w, sb, path))
                .sum()
        }
        (Value::Number(x), Value::Number(y)) => {
            let (Some(ua), Some(ub)) = (unit_at(sa, path), unit_at(sb, path)) else {
                return 0;
            };
            let ia = ua.to_internal(x.as_f64().unwrap(), AMBIENT_DEFAULT_MPA);
            let ib = ub.to_internal(y.as_f64().unwrap(), AMBIENT_DEFAULT_MPA);
            assert!(
                (ia - ib).abs() <= 1e-12 * (ia.abs() + ib.abs()) + 1e-13,
                "{path}: {x} {} vs {y} {} ({ia} vs {ib})",
                ua.symbol,
                ub.symbol
            );
            1
        }
        _ => 0,
    }
}

/// Every method answers in a units object of dimension keys: every numeric field with a
/// known dimension carries the same quantity as in the default preset, in the unit the object
/// chose (so no field is converted past the request's units).
#[test]
fn every_method_answers_in_a_units_object() {
    let obj = dims_object();
    let (s_obj, s_eng) = (system(&obj), UnitSystem::new(Preset::Engineering));
    for (method, params) in samples() {
        let plain = call(method, params.clone());
        let mut p = params.clone();
        p["units"] = obj.clone();
        let chosen = call(method, p);
        let checked = same_quantities(&chosen, &s_obj, &plain, &s_eng, "");
        assert!(checked > 0, "{method}: no field checked");
        // the maps say so: a pressure is barg and the ambient it is relative to is echoed
        let text = chosen.to_string();
        assert!(
            !text.contains("\"MPa\""),
            "{method}: a field left in MPa: {text}"
        );
    }
}

/// A few answers in units chosen per field and per path, as snapshots.
#[test]
fn sample_answers_in_units_per_quantity() {
    let cases = [
        (
            "state_in_barg_degf",
            "water.state",
            json!({"given": {"p": 42, "T": 750}, "units": {"preset": "bar_th", "p": "barg", "T": "degF", "h": "Btu/lb"}}),
        ),
        (
            "turbine_per_field",
            "turbine.expand",
            json!({"inlet": {"p": "42 barg", "T": "410 degC", "flow": 22}, "outlet_p": 4, "efficiency": "72 %",
                   "units": {"pressure": "barg", "flow": "t/h", "power": "MW", "outlet.T": "degF", "efficiency": "%", "mass_in": "kg/h"}}),
        ),
        (
            "batch_per_column",
            "water.batch",
            json!({"given": {"p": {"values": [42, 4], "unit": "barg"}, "T": [410, 200]},
                   "want": ["h", "p", "phase"], "units": {"h": "Btu/lb", "p": "psig"}, "ambient": "95 kPa"}),
        ),
    ];
    for (name, method, params) in cases {
        insta::assert_json_snapshot!(name, call(method, params));
    }
}

/// Path keys refine one field; name keys every field of that name; the maps list each field a
/// name or path chose, and nested states carry their own.
#[test]
fn paths_refine_names_and_maps_say_so() {
    let r = call(
        "turbine.expand",
        json!({"inlet": {"p": "42 barg", "T": "410 degC", "flow": "22 t/h"}, "outlet_p": "4 barg", "efficiency": 0.72,
               "units": {"T": "K", "outlet.T": "degF", "mass_in": "t/h", "power": "MW"}}),
    );
    assert_eq!(r["inlet"]["units"]["T"], "K");
    assert_eq!(r["isentropic_outlet"]["units"]["T"], "K");
    assert_eq!(r["outlet"]["units"]["T"], "degF");
    assert_eq!(r["units"]["balance.mass_in"], "t/h");
    assert_eq!(r["units"]["power"], "MW");
    assert_eq!(r["units"]["flows"], "kg/s");
    assert!(
        (r["balance"]["mass_in"].as_f64().unwrap() - 22.0).abs() < 1e-12,
        "{r}"
    );
    assert!((r["inlet"]["T"].as_f64().unwrap() - 683.15).abs() < 1e-12);
    // the site balance: one total in MW, its map names it
    let b = call(
        "balance.solve",
        json!({"network": site(), "units": {"totals.net_power": "MW"}}),
    );
    let kw = call("balance.solve", json!({"network": site()}));
    assert_eq!(b["units_used"]["totals.net_power"], "MW");
    assert_eq!(b["units_used"]["power"], "kW");
    let mw = b["totals"]["net_power"].as_f64().unwrap();
    let k = kw["totals"]["net_power"].as_f64().unwrap();
    assert!((mw * 1000.0 / k - 1.0).abs() < 1e-12, "{mw} MW vs {k} kW");
    assert_eq!(b["totals"]["turbine_power"], kw["totals"]["turbine_power"]);
}

/// Bare numbers are read in the units the answer gives the same quantity.
#[test]
fn bare_numbers_follow_the_units_object() {
    let a = call(
        "water.state",
        json!({"given": {"p": 42, "T": 410}, "units": {"p": "barg"}}),
    );
    let b = call(
        "water.state",
        json!({"given": {"p": "42 barg", "T": "410 degC"}}),
    );
    assert_eq!(a["h"], b["h"]);
    assert_eq!(a["p"], json!(42.0));
    let a = call(
        "header.mix",
        json!({"p": 4, "inlets": [{"p": 4, "T": 200, "flow": 10}], "units": {"pressure": "barg", "flow": "t/h"}}),
    );
    assert!((a["flow"].as_f64().unwrap() - 10.0).abs() < 1e-12, "{a}");
}

/// The value of `dim` that a spelling's round trip starts from (internal units), with the
/// request that gives it in that unit and the path of the answer that gives it back.
fn echo(dim: Dim, alias: &str, unit: Unit) -> Option<(&'static str, Value, Vec<&'static str>)> {
    let amb = AMBIENT_DEFAULT_MPA;
    let text = |internal: f64| format!("{:?} {alias}", unit.from_internal(internal, amb));
    Some(match dim {
        Dim::Pressure => (
            "water.state",
            json!({"given": {"p": text(2.0), "T": "300 degC"}, "units": {"p": alias}}),
            vec!["p"],
        ),
        Dim::Temperature => (
            "water.state",
            json!({"given": {"p": "2 MPa", "T": text(573.15)}, "units": {"T": alias}}),
            vec!["T"],
        ),
        Dim::SpecificEnergy => (
            "water.state",
            json!({"given": {"p": "2 MPa", "h": text(3000.0)}, "units": {"h": alias}}),
            vec!["h"],
        ),
        Dim::SpecificEntropy => (
            "water.state",
            json!({"given": {"p": "2 MPa", "s": text(6.8)}, "units": {"s": alias}}),
            vec!["s"],
        ),
        Dim::SpecificVolume => (
            "water.state",
            json!({"given": {"T": "300 degC", "v": text(0.12)}, "units": {"v": alias}}),
            vec!["v"],
        ),
        Dim::Density => (
            "water.state",
            json!({"given": {"T": "300 degC", "rho": text(8.5)}, "units": {"rho": alias}}),
            vec!["rho"],
        ),
        Dim::Dimensionless => (
            "water.state",
            json!({"given": {"p": "2 MPa", "x": text(0.4)}, "units": {"x": alias}}),
            vec!["x"],
        ),
        Dim::MassFlow => (
            "header.mix",
            json!({"p": "4 barg", "inlets": [{"p": "4 barg", "T": "200 degC", "flow": text(2.5)}], "units": {"flow": alias}}),
            vec!["flow"],
        ),
        Dim::Power => (
            "cycle.rankine",
            json!({"boiler_p": "100 bar", "boiler_T": "500 degC", "condenser_p": "0.1 bar", "net_power": text(5.0e4), "units": {"net_power": alias}}),
            vec!["net_power"],
        ),
        Dim::TemperatureDifference => (
            "desuperheater.spray",
            json!({"steam": {"p": "4 barg", "h": "3233 kJ/kg", "flow": "8 t/h"}, "water": {"p": "48 barg", "T": "105 degC"},
                   "target_superheat": text(15.0), "units": {"superheat": alias}}),
            vec!["superheat"],
        ),
        Dim::Speed => (
            "orifice.flow",
            json!({"inlet": {"p": "10 barg", "T": "250 degC"}, "diameter": "3 mm", "approach_velocity": text(20.0),
                   "units": {"approach_velocity": alias}}),
            vec!["approach_velocity"],
        ),
        Dim::Length => (
            "orifice.flow",
            json!({"inlet": {"p": "10 barg", "T": "250 degC"}, "diameter": "3 mm", "pipe_diameter": "50 mm",
                   "units": {"length": alias}}),
            vec![],
        ),
        _ => return None,
    })
}

/// Every unit the input parser accepts, for a quantity that comes back in the answer, gives
/// back the value it was given in that unit, to 1e-12 (gauge units with the standard ambient;
/// h, s, v and rho through the solved state, to the solver's 1e-9, and the answer in that unit
/// is the answer in the preset converted, to 1e-12).
#[test]
fn every_accepted_unit_round_trips_through_an_answer() {
    let mut done = 0;
    for (alias, unit) in units::spellings() {
        let Some((method, params, path)) = echo(unit.dim, alias, unit) else {
            continue;
        };
        if path.is_empty() {
            continue;
        }
        let given = match unit.dim {
            Dim::Pressure => 2.0,
            Dim::Temperature => 573.15,
            Dim::SpecificEnergy => 3000.0,
            Dim::SpecificEntropy => 6.8,
            Dim::SpecificVolume => 0.12,
            Dim::Density => 8.5,
            Dim::Dimensionless => 0.4,
            Dim::MassFlow => 2.5,
            Dim::Power => 5.0e4,
            Dim::TemperatureDifference => 15.0,
            Dim::Speed => 20.0,
            _ => unreachable!(),
        };
        let expect = unit.from_internal(given, AMBIENT_DEFAULT_MPA);
        let pick = |r: &Value| -> f64 {
            let mut at = r;
            for p in &path {
                at = &at[*p];
            }
            at.as_f64().unwrap_or_else(|| panic!("{alias}: {r}"))
        };
        let mut plain = params.clone();
        plain.as_object_mut().unwrap().remove("units");
        let r = call(method, params);
        let got = pick(&r);
        // h, s, v and rho come back from the solved state (the solver's promise: 1e-9, in
        // practice about 1e-12); the answer in the unit is the answer in the preset converted,
        // to 1e-12. Every other quantity comes back as it was given, to 1e-12.
        let solved = matches!(
            unit.dim,
            Dim::SpecificEnergy | Dim::SpecificEntropy | Dim::SpecificVolume | Dim::Density
        );
        let tol = if solved { 1e-9 } else { 1e-12 };
        assert!(
            (got - expect).abs() <= tol * expect.abs().max(1e-3),
            "{alias} ({}): gave {expect}, answered {got}",
            unit.dim.name()
        );
        let base = Preset::Engineering
            .unit(unit.dim)
            .to_internal(pick(&call(method, plain)), AMBIENT_DEFAULT_MPA);
        let back = unit.to_internal(got, AMBIENT_DEFAULT_MPA);
        assert!(
            (back - base).abs() <= 1e-12 * base.abs().max(1e-3),
            "{alias}: {back} vs {base}"
        );
        done += 1;
    }
    // every spelling of every dimension that comes back (p, T, h, s, v, rho, x, flow, power,
    // superheat, speed): 98 when this was written
    assert!(done >= 98, "{done} spellings checked");
}

/// Every spelling of a dimension that is only answered (never given), through a field of that
/// dimension: accepted as that field's unit, and the same quantity as in the preset.
#[test]
fn every_accepted_unit_is_accepted_for_output() {
    let fields: &[(Dim, &str, Value)] = &[
        (
            Dim::PressureDifference,
            "pressure_drop",
            samples()[16].1.clone(),
        ),
        (
            Dim::Viscosity,
            "mu",
            json!({"given": {"p": "1 MPa", "T": "300 degC"}}),
        ),
        (
            Dim::Conductivity,
            "lambda",
            json!({"given": {"p": "1 MPa", "T": "300 degC"}}),
        ),
        (
            Dim::Diffusivity,
            "nu",
            json!({"given": {"p": "1 MPa", "T": "300 degC"}}),
        ),
        (
            Dim::InverseTemperature,
            "alpha_v",
            json!({"given": {"p": "1 MPa", "T": "300 degC"}}),
        ),
        (
            Dim::InversePressure,
            "kappa_t",
            json!({"given": {"p": "1 MPa", "T": "300 degC"}}),
        ),
        (
            Dim::TemperaturePerPressure,
            "mu_jt",
            json!({"given": {"p": "1 MPa", "T": "300 degC"}}),
        ),
        (
            Dim::SurfaceTension,
            "surface_tension",
            json!({"T": "100 degC"}),
        ),
        (Dim::HeatFlow, "duty", samples()[11].1.clone()),
        (Dim::SteamRate, "steam_rate", samples()[14].1.clone()),
        (Dim::Energy, "yearly_heat_saving", samples()[16].1.clone()),
        (Dim::Mass, "steam", samples()[15].1.clone()),
        (
            Dim::HeatFlowPerLength,
            "heat_loss_per_length",
            samples()[16].1.clone(),
        ),
        (Dim::Length, "head", samples()[6].1.clone()),
    ];
    let method_of = |d: Dim| match d {
        Dim::Viscosity
        | Dim::Conductivity
        | Dim::Diffusivity
        | Dim::InverseTemperature
        | Dim::InversePressure
        | Dim::TemperaturePerPressure => "water.state",
        Dim::SurfaceTension => "water.saturation",
        Dim::PressureDifference | Dim::Energy | Dim::HeatFlowPerLength => "pipe.flow",
        Dim::HeatFlow => "exchanger.balance",
        Dim::SteamRate => "cycle.rankine",
        Dim::Mass => "orifice.flow",
        Dim::Length => "pump.raise",
        _ => unreachable!(),
    };
    let mut done = 0;
    for (dim, field, params) in fields {
        let method = method_of(*dim);
        let plain = call(method, params.clone());
        let find = |v: &Value| -> f64 {
            let v = if *field == "yearly_heat_saving" {
                &v["insulation"][field]
            } else if *field == "steam" {
                &v["yearly"][field]
            } else {
                &v[field]
            };
            v.as_f64().unwrap_or_else(|| panic!("{field} in {method}"))
        };
        let base = Preset::Engineering
            .unit(*dim)
            .to_internal(find(&plain), AMBIENT_DEFAULT_MPA);
        for (alias, unit) in units::spellings().filter(|(_, u)| u.dim == *dim) {
            let mut p = params.clone();
            p["units"] = json!({ *field: alias });
            let r = call(method, p);
            let got = unit.to_internal(find(&r), AMBIENT_DEFAULT_MPA);
            assert!(
                (got - base).abs() <= 1e-12 * base.abs(),
                "{field} in {alias}: {got} vs {base}"
            );
            done += 1;
        }
    }
    assert!(done > 40, "{done}");
}

/// Prices are only given: a bare price read through a units key is the price given as a text
/// with that unit, bit for bit.
#[test]
fn prices_per_quantity_unit() {
    let base = samples()[15].1.clone();
    for (alias, unit) in units::spellings().filter(|(_, u)| u.dim == Dim::PricePerEnergy) {
        let mut a = base.clone();
        a["fuel_cost"] = json!(30.0);
        a["units"] = json!({ "fuel_cost": alias });
        let mut b = base.clone();
        b["fuel_cost"] = json!(format!("30 {alias}"));
        let (a, b) = (call("orifice.flow", a), call("orifice.flow", b));
        assert_eq!(
            a["yearly"]["cost"], b["yearly"]["cost"],
            "{alias} {}",
            unit.symbol
        );
    }
}

/// A gauge pressure answered relative to an ambient pressure the caller gave, with that ambient
/// echoed in an absolute unit.
#[test]
fn gauge_output_with_a_non_standard_ambient() {
    // 5 barg at 95 kPa ambient is 0.595 MPa absolute; in psig that is 0.5 MPa over ambient
    let r = call(
        "water.state",
        json!({"given": {"p": "5 barg", "T": "200 degC"}, "ambient": "95 kPa", "units": {"p": "psig", "ambient": "kPa"}}),
    );
    let psi = 6.894_757_293_168_361e-3; // MPa per psi, exact definition
    assert!(
        (r["p"].as_f64().unwrap() - 0.5 / psi).abs() < 1e-12 * 72.5,
        "{r}"
    );
    assert_eq!(r["units"]["p"], "psig");
    assert_eq!(r["units"]["ambient"], "kPa");
    assert!((r["ambient"].as_f64().unwrap() - 95.0).abs() < 1e-12, "{r}");
    // the same absolute state as 0.595 MPa
    let abs = call("water.state", json!({"given": {"p": 0.595, "T": 200}}));
    assert_eq!(r["h"], abs["h"]);
    // a component: gauge pressures in its states and the ambient in its map
    let t = call(
        "orifice.flow",
        json!({"inlet": {"p": "10 barg", "x": 1}, "diameter": "3 mm", "ambient": "0.9 bar",
               "units": {"pressure": "barg"}}),
    );
    assert_eq!(t["units"]["throat_p"], "barg");
    assert_eq!(t["units"]["ambient"], "0.9 bar");
    assert_eq!(t["inlet"]["units"]["p"], "barg");
    assert!(
        (t["inlet"]["p"].as_f64().unwrap() - 10.0).abs() < 1e-12,
        "{t}"
    );
    assert!(
        (t["inlet"]["ambient"].as_f64().unwrap() - 0.9).abs() < 1e-15,
        "{t}"
    );
    // the downstream pressure defaults to the ambient: 0 barg
    assert!(t["downstream"]["p"].as_f64().unwrap().abs() < 1e-12, "{t}");
    // a pressure difference has no gauge: barg for pressures gives bar for drops
    let mut p = samples()[16].1.clone();
    p["units"] = json!({"pressure": "barg"});
    let pf = call("pipe.flow", p);
    assert_eq!(pf["units"]["pressure_drop"], "bar");
}

fn packed(values: &[f64]) -> String {
    use base64::Engine;
    let mut b = Vec::new();
    for v in values {
        b.extend_from_slice(&v.to_le_bytes());
    }
    base64::engine::general_purpose::STANDARD.encode(b)
}

fn unpacked(text: &Value) -> Vec<f64> {
    use base64::Engine;
    base64::engine::general_purpose::STANDARD
        .decode(text["f64le"].as_str().unwrap())
        .unwrap()
        .chunks_exact(8)
        .map(|c| f64::from_le_bytes(c.try_into().unwrap()))
        .collect()
}

/// Tagged columns (barg, degC in; bar, kJ/kg out; phase wanted) give the same numbers bit for
/// bit on every bulk path: JSON with a column unit, one text per value, packed base64 with a
/// column unit, and the binary `/columns` route with `given_units`.
#[test]
fn tagged_columns_are_bit_identical_on_every_path() {
    let n = 3000; // above the parallel threshold
    let p: Vec<f64> = (0..n).map(|i| -1.2 + (i % 997) as f64 * 0.21).collect(); // barg
    let t: Vec<f64> = (0..n).map(|i| 20.0 + (i % 991) as f64 * 0.83).collect(); // degC
    let want = json!(["h", "p", "s", "phase", "region"]);
    let units = json!({"preset": "engineering", "p": "bar", "h": "kJ/kg"});
    let json_tagged = call(
        "water.batch",
        json!({"given": {"p": {"values": p, "unit": "barg"}, "T": {"values": t, "unit": "degC"}},
               "want": want, "units": units, "ambient": "0.98 bar"}),
    );
    let texts: Vec<String> = p.iter().map(|x| format!("{x:?} barg")).collect();
    let json_texts = call(
        "water.batch",
        json!({"given": {"p": texts, "T": t}, "want": want, "units": units, "ambient": "0.98 bar"}),
    );
    let f64le = call(
        "water.batch",
        json!({"given": {"p": {"f64le": packed(&p), "unit": "barg"}, "T": {"f64le": packed(&t), "unit": "degC"}},
               "want": want, "units": units, "ambient": "0.98 bar", "encoding": "f64le"}),
    );
    let header = json!({"given": ["p", "T"], "rows": n, "want": want, "given_units": {"p": "barg", "T": "degC"},
                        "units": units, "ambient": "0.98 bar"});
    let cols_in = vec![p.clone(), t.clone()];
    let body = api::columns::frame(&header, &cols_in);
    let out = api::columns::columns(&api::server_ctx::ServerCtx::default(), &body).unwrap();
    let (head, data) = api::columns::split_frame(&out).unwrap();
    let col = |k: usize| -> Vec<f64> {
        data[k * n * 8..(k + 1) * n * 8]
            .chunks_exact(8)
            .map(|c| f64::from_le_bytes(c.try_into().unwrap()))
            .collect()
    };
    assert_eq!(
        head["legends"]["phase"],
        json!(["liquid", "vapour", "wet", "supercritical"])
    );
    assert_eq!(head["units"]["p"], "bar");
    assert_eq!(head["units"]["ambient"], "0.98 bar");
    assert_eq!(f64le["legends"]["phase"], head["legends"]["phase"]);
    assert_eq!(json_tagged["units"], json_texts["units"]);
    assert_eq!(json_tagged["units"]["ambient"], "0.98 bar");
    let legend: Vec<String> = serde_json::from_value(head["legends"]["phase"].clone()).unwrap();
    for (k, w) in ["h", "p", "s", "phase", "region"].iter().enumerate() {
        let bin = col(k);
        let packed_col = unpacked(&f64le["columns"][w]);
        for i in 0..n {
            let (a, b) = (&json_tagged["columns"][w][i], &json_texts["columns"][w][i]);
            assert_eq!(a, b, "{w} row {i}");
            assert_eq!(bin[i].to_bits(), packed_col[i].to_bits(), "{w} row {i}");
            if *w == "phase" {
                match a.as_str() {
                    Some(text) => assert_eq!(legend[bin[i] as usize], text, "row {i}"),
                    None => assert!(bin[i].is_nan()),
                }
            } else {
                match a.as_f64() {
                    Some(x) => assert_eq!(x.to_bits(), bin[i].to_bits(), "{w} row {i}"),
                    None => assert!(bin[i].is_nan(), "{w} row {i}"),
                }
            }
        }
    }
    // every bad row (below the ambient: a negative absolute pressure) is named in barg, the
    // unit the column came in
    let failed = json_tagged["failed_rows"].as_array().unwrap();
    assert!(!failed.is_empty());
    assert!(
        failed[0]["message"]
            .as_str()
            .unwrap()
            .contains(" barg is below"),
        "{}",
        failed[0]
    );
    assert_eq!(head["failed"], json!(failed.len()));
}

/// The bad `units` objects: each refused with the specific error listing what is accepted.
#[test]
fn bad_units_objects_are_refused_specifically() {
    let state = |units: Value| {
        fails(
            "water.state",
            json!({"given": {"p": 1, "T": 300}, "units": units}),
        )
    };
    // an unknown unit for a quantity: the accepted spellings of its dimension
    let e = state(json!({"p": "furlongs"}));
    assert_eq!(e.code, 1004, "{e}");
    assert!(
        e.message.contains("barg") && e.message.contains("psig"),
        "{e}"
    );
    // a unit of the wrong dimension
    let e = state(json!({"h": "degC"}));
    assert_eq!(e.code, 1005, "{e}");
    assert!(
        e.message.contains("specific energy") && e.message.contains("units.h"),
        "{e}"
    );
    // an unknown key: the accepted keys
    let e = state(json!({"flw": "t/h"}));
    assert_eq!(e.code, 1006, "{e}");
    assert!(
        e.message.contains("'flw'")
            && e.message.contains("pressure")
            && e.message.contains("net_power"),
        "{e}"
    );
    // gauge output for a non-pressure
    let e = state(json!({"T": "barg"}));
    assert_eq!(e.code, 1006, "{e}");
    assert!(
        e.message.contains("gauge units are for pressures only"),
        "{e}"
    );
    // gauge for a pressure difference, for the ambient
    let e = state(json!({"pressure_drop": "psig"}));
    assert!(
        e.message
            .contains("pressure difference, which has no gauge"),
        "{e}"
    );
    let e = state(json!({"ambient": "barg"}));
    assert!(e.message.contains("ambient pressure is absolute"), "{e}");
    // psi alone is ambiguous
    let e = state(json!({"p": "psi"}));
    assert!(e.message.contains("write psia or psig"), "{e}");
    // an unknown preset inside the object
    let e = state(json!({"preset": "metric"}));
    assert!(e.message.contains("bar_th"), "{e}");
    // a path ending in no field
    let e = state(json!({"outlet.zz": "K"}));
    assert!(e.message.contains("'outlet.zz'"), "{e}");
    // the same keys in the bulk column header
    let header =
        json!({"given": ["p", "T"], "rows": 1, "want": ["h"], "given_units": {"p": "degC"}});
    let body = api::columns::frame(&header, &[vec![1.0], vec![300.0]]);
    let e = api::columns::columns(&api::server_ctx::ServerCtx::default(), &body).unwrap_err();
    assert_eq!(e.code, 1005, "{e}");
    let e = fails(
        "water.batch",
        json!({"given": {"p": {"values": [1], "unit": "barx"}, "T": [300]}}),
    );
    assert_eq!(e.code, 1004, "{e}");
}

// ------------------------------------------------------------- issue 15, the unit reproductions

/// "-3 bar" was answered "p = -0.30000000000000004 MPa": a value given in a unit is answered in
/// that unit, a bare number in the request's units.
#[test]
fn messages_speak_the_callers_units() {
    let e = fails("water.state", json!({"given": {"p": "-3 bar", "T": 300}}));
    assert!(
        e.message
            .starts_with("p = -3 bar is below the lowest value 0.00001 bar"),
        "{e}"
    );
    assert_eq!(e.data["unit"], "bar");
    assert_eq!(e.data["value"], json!(-3.0));
    let e = fails(
        "water.state",
        json!({"given": {"p": -3, "T": 300}, "units": "bar"}),
    );
    assert!(e.message.starts_with("p = -3 bar is below"), "{e}");
    let e = fails(
        "water.state",
        json!({"given": {"p": "1 MPa", "T": "4000 degF"}}),
    );
    assert!(
        e.message
            .contains("T = 4000 degF is above the highest value 3632 degF"),
        "{e}"
    );
    // a pure number has no unit "1"
    let e = fails(
        "turbine.expand",
        json!({"inlet": {"p": "10 MPa", "T": "500 degC"}, "outlet_p": "1 MPa", "efficiency": 1.05}),
    );
    assert_eq!(
        e.message,
        "efficiency = 1.05 is above the highest value 1 of an efficiency"
    );
    let e = fails(
        "turbine.expand",
        json!({"inlet": {"p": "10 MPa", "T": "500 degC"}, "outlet_p": "1 MPa", "efficiency": "105 %"}),
    );
    assert_eq!(
        e.message,
        "efficiency = 105 % is above the highest value 100 % of an efficiency"
    );
    // at most 6 significant digits, more only to tell the value from its limit
    let e = fails(
        "turbine.expand",
        json!({"inlet": {"p": "10 MPa", "T": "500 degC"}, "outlet_p": "1 MPa", "efficiency": 1.0000001}),
    );
    assert!(
        e.message
            .starts_with("efficiency = 1.0000001 is above the highest value 1 "),
        "{e}"
    );
}

/// "42 psi" was silently read as psia.
#[test]
fn psi_alone_is_refused() {
    let e = fails(
        "water.state",
        json!({"given": {"p": "42 psi", "T": "300 degF"}}),
    );
    assert_eq!(
        e.message,
        "p: 'psi' does not say whether the pressure is absolute or gauge; write psia or psig"
    );
    assert!(api::call(
        "water.state",
        json!({"given": {"p": "42 psia", "T": "300 degF"}})
    )
    .is_ok());
    assert!(api::call(
        "water.state",
        json!({"given": {"p": "42 psig", "T": "300 degF"}})
    )
    .is_ok());
}

/// "2,000,000 lb/h" gave "unknown unit ',000,000 lb/h'".
#[test]
fn digit_grouping_is_named() {
    let e = fails(
        "header.mix",
        json!({"p": "10 bar", "inlets": [{"p": "20 bar", "T": "300 degC", "flow": "2,000,000 lb/h"}]}),
    );
    assert_eq!(e.code, 1006, "{e}");
    assert!(
        e.message.contains("groups digits") && e.message.contains("e.g. 2000000 lb/h"),
        "{e}"
    );
    let e = fails("water.state", json!({"given": {"p": "3,5 bar", "T": 300}}));
    assert!(e.message.contains("e.g. 3.5 bar"), "{e}");
    let e = fails(
        "water.state",
        json!({"given": {"p": "1 000 kPa", "T": 300}}),
    );
    assert!(e.message.contains("e.g. 1000 kPa"), "{e}");
}

/// "3 bar" was p = 0.30000000000000004 MPa: decimal units divide by their exact factor.
#[test]
fn three_bar_is_exactly_three_tenths_of_a_megapascal() {
    let r = call(
        "water.state",
        json!({"given": {"p": "3 bar", "T": "200 degC"}}),
    );
    assert_eq!(r["p"], json!(0.3));
    let r = call(
        "water.state",
        json!({"given": {"p": "0.3 MPa", "T": 200}, "units": {"p": "bar"}}),
    );
    assert_eq!(r["p"], json!(3.0));
    let r = call(
        "water.state",
        json!({"given": {"p": 3, "T": 200}, "units": {"p": "bar"}}),
    );
    assert_eq!(r["p"], json!(3.0));
    let r = call(
        "water.state",
        json!({"given": {"p": "300 kPa", "T": "200 degC"}, "units": "si"}),
    );
    assert_eq!(r["p"], json!(300000.0));
    let r = call(
        "water.state",
        json!({"given": {"p": "2.5 barg", "T": "200 degC"}, "units": {"p": "barg"}}),
    );
    assert_eq!(r["p"], json!(2.5));
}

// ------------------------------------------------------------- the GET routes and the CLI

/// `GET /cell` takes `units=` (a preset, key=unit items or JSON), `units.KEY=` and `unit=`.
#[test]
fn cell_units_and_unit() {
    let pairs = |l: &[(&str, &str)]| -> Vec<(String, String)> {
        l.iter()
            .map(|(k, v)| (k.to_string(), v.to_string()))
            .collect()
    };
    let cell = |q: &str, l: &[(&str, &str)]| api::cell::cell(q, &pairs(l));
    assert_eq!(
        cell(
            "p",
            &[("p", "42 barg"), ("T", "410 degC"), ("unit", "barg")]
        )
        .unwrap(),
        "42"
    );
    assert_eq!(
        cell(
            "p",
            &[("p", "42 barg"), ("T", "410 degC"), ("units.p", "barg")]
        )
        .unwrap(),
        "42"
    );
    assert_eq!(
        cell(
            "p",
            &[("p", "42"), ("T", "410"), ("units", "preset=bar,p=barg")]
        )
        .unwrap(),
        "42"
    );
    assert_eq!(
        cell(
            "h",
            &[
                ("p", "42 barg"),
                ("T", "410 degC"),
                ("units", r#"{"h": "kJ/kg"}"#)
            ]
        )
        .unwrap(),
        cell("h", &[("p", "42 barg"), ("T", "410 degC")]).unwrap()
    );
    let e = cell("phase", &[("p", "1"), ("T", "300"), ("unit", "K")]).unwrap_err();
    assert_eq!(e.status, 400);
    assert!(
        e.reason.contains("not a quantity with a unit"),
        "{}",
        e.reason
    );
    let e = cell("T", &[("p", "1"), ("T", "300"), ("unit", "barg")]).unwrap_err();
    assert_eq!(e.status, 400);
    let e = cell("h", &[("p", "1"), ("T", "300"), ("units.h", "degC")]).unwrap_err();
    assert_eq!(e.status, 400);
}

/// `GET /site` (and `steamcell site`) take `units=` and `unit=` for the answered quantity.
#[test]
fn site_unit() {
    let net = site();
    let p = |l: &[(&str, &str)]| -> Vec<(String, String)> {
        l.iter()
            .map(|(k, v)| (k.to_string(), v.to_string()))
            .collect()
    };
    let kw: f64 = api::site::answer(&net, "net_power", &[])
        .unwrap()
        .parse()
        .unwrap();
    let mw: f64 = api::site::answer(&net, "net_power", &p(&[("unit", "MW")]))
        .unwrap()
        .parse()
        .unwrap();
    assert!((mw * 1000.0 / kw - 1.0).abs() < 1e-12);
    let th: f64 = api::site::answer(&net, "process_steam", &p(&[("unit", "t/h")]))
        .unwrap()
        .parse()
        .unwrap();
    let kgs: f64 = api::site::answer(&net, "process_steam", &[])
        .unwrap()
        .parse()
        .unwrap();
    assert!((th / 3.6 / kgs - 1.0).abs() < 1e-12);
    let e = api::site::answer(&net, "net_power", &p(&[("unit", "t/h")])).unwrap_err();
    assert_eq!(e.status, 400, "{}", e.reason);
}

/// The command line: `--units` on call, get and site, `--unit` on get and site.
#[test]
fn command_line_units() {
    let run = |args: &[&str]| -> String {
        let out = std::process::Command::new(env!("CARGO_BIN_EXE_steamcell"))
            .args(args)
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "{args:?}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
        String::from_utf8(out.stdout).unwrap().trim().to_string()
    };
    assert_eq!(
        run(&["get", "p", "p=42barg", "T=410degC", "--unit", "barg"]),
        "42"
    );
    // bare numbers in the request's units: 4.2 barg in, 4.2 barg out; 42 bar(a) in
    assert_eq!(
        run(&["get", "p", "p=4.2", "T=410", "--units", "preset=bar,p=barg"]),
        "4.2"
    );
    assert_eq!(run(&["get", "p", "p=42", "T=410", "--units", "bar"]), "42");
    let text = run(&[
        "call",
        "water.state",
        r#"{"given": {"p": "3 bar", "T": "200 degC"}}"#,
        "--units",
        "bar_th",
    ]);
    assert!(text.contains("\"p\": 3.0"), "{text}");
    let site_file = concat!(env!("CARGO_MANIFEST_DIR"), "/examples/site/site.json");
    let mw: f64 = run(&["site", site_file, "net_power", "--unit", "MW"])
        .parse()
        .unwrap();
    let kw: f64 = run(&["site", site_file, "net_power"]).parse().unwrap();
    assert!((mw * 1000.0 / kw - 1.0).abs() < 1e-12);
}

// ------------------------------------------------------------- the vocabulary stays complete

/// Every numeric field of every answer and every numeric param with a unit has a dimension a
/// `units` key can name (`vocab::FIELD_DIMS` or a state field), or is one of the fixed-unit
/// fields below: a new field fails here until it is listed.
#[test]
fn every_numeric_field_is_in_the_units_vocabulary() {
    // Pure counts, ratios fixed as fractions, fields whose unit is in their name, currency
    // amounts, and the self-test's own numbers.
    const FIXED: &[&str] = &[
        "cost",
        "loss_cost_per_year",
        "yearly_cost_saving",
        "hours_per_year",
        "heat_rate_kj_per_kwh",
        "heat_rate_btu_per_kwh",
        "ideal_mass_flux",
        "mass_residual",
        "energy_residual",
        "residual",
        "reynolds",
        "friction_factor",
        "deviation",
        "value",
        "from",
        "to",
        "request_timeout_s",
        "uptime_s",
        "computed",
        "expected",
        "tolerance",
        "K",
        // a conductance: the unit of heat flow over the unit of temperature difference chosen
        // for it (its units map says which, e.g. "kW/K")
        "ua",
        // the uncertainty's numbers: coverage factor, correlation and probability are pure
        // numbers; an input's steps are in that input's `unit` beside them
        "k",
        "r",
        "coverage_probability",
        "steps",
        // the bulk columns: each column's unit is its own (`unit`) or its property's
        "given",
        "values",
        "columns",
    ];
    let doc: Value = serde_json::from_str(&api::openrpc::document_text()).unwrap();
    let defs = doc["components"]["schemas"].as_object().unwrap().clone();
    fn is_number(s: &Value) -> bool {
        match &s["type"] {
            Value::String(t) => t == "number",
            Value::Array(a) => a.iter().any(|t| t == "number"),
            _ => false,
        }
    }
    fn walk(
        s: &Value,
        name: &str,
        defs: &serde_json::Map<String, Value>,
        seen: &mut Vec<String>,
        out: &mut Vec<String>,
    ) {
        if let Some(r) = s["$ref"].as_str() {
            let d = r.rsplit('/').next().unwrap();
            if d == "Input" {
                out.push(name.to_string());
                return;
            }
            if seen.iter().any(|x| x == d) {
                return;
            }
            seen.push(d.to_string());
            walk(&defs[d], name, defs, seen, out);
            seen.pop();
            return;
        }
        for k in ["anyOf", "oneOf", "allOf"] {
            for x in s[k].as_array().into_iter().flatten() {
                walk(x, name, defs, seen, out);
            }
        }
        if is_number(s) {
            out.push(name.to_string());
            return;
        }
        if s["items"].is_object() {
            walk(&s["items"], name, defs, seen, out);
        }
        if s["additionalProperties"].is_object() {
            walk(&s["additionalProperties"], name, defs, seen, out);
        }
        for (k, v) in s["properties"].as_object().into_iter().flatten() {
            walk(v, k, defs, seen, out);
        }
    }
    let mut names = Vec::new();
    for m in doc["methods"].as_array().unwrap() {
        let method = m["name"].as_str().unwrap();
        if method.starts_with("server.") {
            continue;
        }
        for p in m["params"].as_array().unwrap() {
            walk(
                &p["schema"],
                p["name"].as_str().unwrap(),
                &defs,
                &mut vec![],
                &mut names,
            );
        }
        walk(&m["result"]["schema"], "", &defs, &mut vec![], &mut names);
    }
    names.sort();
    names.dedup();
    let missing: Vec<&String> = names
        .iter()
        .filter(|n| {
            !n.is_empty() && vocab::field_dims(n).is_empty() && !FIXED.contains(&n.as_str())
        })
        .collect();
    assert!(
        missing.is_empty(),
        "fields without a dimension: {missing:?}"
    );
    assert!(names.len() > 100, "{}", names.len());
}

// ------------------------------------------------ issue 22, a new user's trial of the units

/// Reproduction: `steamcell get p p=42barg T=410degC ambient=0.98barg --unit bar` answered
/// 43.99325, the ambient read as 0.98 bar over the standard ambient (1.99 bar absolute). The
/// ambient pressure is absolute: a gauge unit for it is refused on every path (params, /cell
/// and `steamcell get`, a component, the bulk paths), saying so.
#[test]
fn ambient_in_a_gauge_unit_is_refused_on_every_path() {
    use steamcell::api::cell;
    let pairs =
        cell::pairs_from_args(&["p=42barg", "T=410degC", "ambient=0.98barg", "unit=bar"]).unwrap();
    let e = cell::cell("p", &pairs).unwrap_err();
    assert_eq!(e.status, 400, "{e:?}");
    assert!(
        e.reason.contains("'0.98barg' is a gauge pressure")
            && e.reason.contains("ambient pressure is absolute"),
        "{e:?}"
    );
    let e = cell::cell(
        "p",
        &cell::pairs_from_query("p=42barg&T=410degC&ambient=2%20psig"),
    )
    .unwrap_err();
    assert!(e.reason.contains("ambient pressure is absolute"), "{e:?}");
    // written absolute, the same ambient is used: 42 barg over 0.98 bar is 42.98 bar
    // (definition of a gauge pressure; common practice, no source)
    let pairs =
        cell::pairs_from_args(&["p=42barg", "T=410degC", "ambient=0.98bar", "unit=bar"]).unwrap();
    let p: f64 = cell::cell("p", &pairs).unwrap().parse().unwrap();
    assert!((p - 42.98).abs() < 1e-12, "{p}");

    let absolute = |e: &api::ApiError| {
        assert_eq!(e.code, 1006, "{e}");
        assert!(e.message.contains("ambient pressure is absolute"), "{e}");
    };
    absolute(&fails(
        "water.state",
        json!({"given": {"p": "42 barg", "T": "410 degC"}, "ambient": "0.98 barg"}),
    ));
    absolute(&fails(
        "turbine.expand",
        json!({"inlet": {"p": "42 barg", "T": "410 degC"}, "outlet_p": "4 barg",
               "efficiency": 0.8, "ambient": "14 psig"}),
    ));
    absolute(&fails(
        "water.batch",
        json!({"given": {"p": ["42 barg"], "T": [410]}, "want": ["h"], "ambient": "1 kPag"}),
    ));
    let header = json!({"given": ["p", "T"], "rows": 1, "want": ["h"],
                        "given_units": {"p": "barg"}, "ambient": "0.98 barg"});
    let body = api::columns::frame(&header, &[vec![42.0], vec![410.0]]);
    absolute(&api::columns::columns(&api::server_ctx::ServerCtx::default(), &body).unwrap_err());
    // units.ambient was refused already
    let e = fails(
        "water.state",
        json!({"given": {"p": 1, "T": 300}, "units": {"ambient": "barg"}}),
    );
    assert!(e.message.contains("ambient pressure is absolute"), "{e}");
}

/// Reproduction: `ambient = 2 barg` was refused as "0.301325 MPa is not a plausible ambient
/// pressure (0 to 0.2 MPa absolute)", in a unit the caller never wrote. An implausible ambient
/// is refused in the unit it was given in (a bare number: the request's unit for it).
#[test]
fn an_implausible_ambient_is_refused_in_the_callers_unit() {
    let msg = |ambient: Value, units: Value| {
        let mut p = json!({"given": {"p": 1, "T": 300}, "ambient": ambient});
        if !units.is_null() {
            p["units"] = units;
        }
        fails("water.state", p).message
    };
    // 0.2 MPa is 2 bar and 29.0075 psi (6 significant digits; exact definitions of the bar and
    // the psi, common practice, no source)
    let m = msg(json!("3 bar"), Value::Null);
    assert!(
        m.contains("ambient = 3 bar") && m.contains("0 to 2 bar"),
        "{m}"
    );
    let m = msg(json!("30 psia"), Value::Null);
    assert!(m.contains("30 psia") && m.contains("29.0075 psia"), "{m}");
    let m = msg(json!(3), json!("bar"));
    assert!(
        m.contains("ambient = 3 bar") && m.contains("0 to 2 bar"),
        "{m}"
    );
    let m = msg(json!("-5 kPa"), Value::Null);
    assert!(m.contains("-5 kPa") && m.contains("0 to 200 kPa"), "{m}");
}

/// Reproduction: `/cell/h?p=42&T=410&unit=barg` and `steamcell get h p=42 T=410 --unit barg`
/// answered "units.h: 'barg' …", a key the caller never wrote. The refusal names `unit` and the
/// quantity.
#[test]
fn a_cell_unit_refusal_names_unit_and_the_quantity() {
    use steamcell::api::cell;
    let e = cell::cell("h", &cell::pairs_from_query("p=42&T=410&unit=barg")).unwrap_err();
    assert_eq!(e.status, 400, "{e:?}");
    assert!(
        e.reason.starts_with("unit: 'barg'")
            && e.reason.contains("h is a specific energy")
            && !e.reason.contains("units."),
        "{e:?}"
    );
    let e = cell::cell("h", &cell::pairs_from_query("p=42&T=410&unit=bar")).unwrap_err();
    assert!(
        e.reason.starts_with("unit 'bar (pressure)'")
            && e.reason.contains("which h needs")
            && !e.reason.contains("units."),
        "{e:?}"
    );
    let e = cell::cell("h", &cell::pairs_from_query("p=42&T=410&unit=furlong")).unwrap_err();
    assert!(
        e.reason.starts_with("unit for h: unknown unit 'furlong'") && e.reason.contains("kJ/kg"),
        "{e:?}"
    );
    let e = cell::cell(
        "h",
        &cell::pairs_from_query("p=42&T=410&unit=kJ/kg&units.h=Btu/lb"),
    )
    .unwrap_err();
    assert!(
        e.reason
            .contains("unit = 'kJ/kg' and units.h = 'Btu/lb' both give the unit of h"),
        "{e:?}"
    );
    // a key the caller did write is still named as written
    let e = cell::cell("h", &cell::pairs_from_query("p=42&T=410&units.h=barg")).unwrap_err();
    assert!(e.reason.starts_with("units.h: 'barg'"), "{e:?}");
}

/// Reproduction: `/cell/h?p=42&T=410&foo=1` answered "expected one of p, T, …" without the
/// options a cell accepts. The refusal lists the given quantities and every option.
#[test]
fn an_unknown_cell_name_lists_the_quantities_and_the_options() {
    use steamcell::api::cell;
    let e = cell::cell("h", &cell::pairs_from_query("p=42&T=410&foo=1")).unwrap_err();
    assert_eq!(e.status, 400, "{e:?}");
    for name in ["'foo'", "p, T, h, s, u, v, rho, x", "units.KEY"]
        .into_iter()
        .chain(cell::RESERVED.iter().copied())
    {
        assert!(e.reason.contains(name), "{name}: {e:?}");
    }
    // each listed option is accepted
    let pairs = cell::pairs_from_query(
        "p=42&T=410&units=bar&unit=kJ/kg&ambient=1%20bar&formulation=if97&prefer=liquid&backward_only=false&metastable=false",
    );
    cell::cell("h", &pairs).unwrap();
}

/// Reproduction: `POST /columns` with `"given_units": {"p": "degC"}` said "which given.p.unit
/// needs", a key of `water.batch`; the bulk route names `given_units.p`, as written.
#[test]
fn a_columns_unit_refusal_names_given_units() {
    let header =
        json!({"given": ["p", "T"], "rows": 1, "want": ["h"], "given_units": {"p": "degC"}});
    let body = api::columns::frame(&header, &[vec![1.0], vec![300.0]]);
    let e = api::columns::columns(&api::server_ctx::ServerCtx::default(), &body).unwrap_err();
    assert_eq!(e.code, 1005, "{e}");
    assert!(
        e.message.contains("which given_units.p needs") && !e.message.contains("given.p.unit"),
        "{e}"
    );
    // water.batch names its own key
    let e = fails(
        "water.batch",
        json!({"given": {"p": {"values": [1], "unit": "degC"}, "T": [300]}, "want": ["h"]}),
    );
    assert!(e.message.contains("which given.p.unit needs"), "{e}");
}

/// Reproduction: the component answers' `units` maps named their mass flows, heat flows and
/// powers by group (`flows`, `heat`, `power`) only, so `steam_flow` of `boiler.fire` had no
/// key of its own (and the uncertainty of `balance.energy_in` no unit). Every numeric field at
/// the top of a component's answer and in its `balance` is now named in its map, as
/// `water.state` names its fields; the group keys stay (nested objects and lists, such as
/// `stages`, go by them). Pure ratios with no unit conversion (the balance residuals) and the
/// heat rates whose unit is in their name are the exceptions.
#[test]
fn component_units_maps_name_every_numeric_field() {
    const COMPONENTS: &[&str] = &[
        "turbine.expand",
        "turbine.train",
        "pump.raise",
        "valve.throttle",
        "desuperheater.spray",
        "flash.separate",
        "header.mix",
        "exchanger.balance",
        "boiler.fire",
        "deaerator.balance",
        "cycle.rankine",
    ];
    const UNCONVERTED: &[&str] = &[
        "mass_residual",
        "energy_residual",
        "heat_rate_btu_per_kwh",
        "heat_rate_kj_per_kwh",
    ];
    // group keys ("zones.T": the four temperatures of each exchanger zone)
    const GROUPS: &[&str] = &[
        "preset",
        "ambient",
        "flows",
        "heat",
        "power",
        "balance.energy",
        "zones.T",
    ];
    let mut seen = Vec::new();
    for (m, p) in samples() {
        if !COMPONENTS.contains(&m) {
            continue;
        }
        seen.push(m);
        let r = call(m, p);
        let units = r["units"].as_object().unwrap();
        let mut fields: Vec<String> = Vec::new();
        for (k, v) in r.as_object().unwrap() {
            if v.is_number() {
                fields.push(k.clone());
            }
        }
        for (k, v) in r["balance"].as_object().into_iter().flatten() {
            if v.is_number() {
                fields.push(format!("balance.{k}"));
            }
        }
        for n in &fields {
            let leaf = n.rsplit('.').next().unwrap();
            assert!(
                units.contains_key(n) || UNCONVERTED.contains(&leaf),
                "{m}: {n} is not in its units map {:?}",
                units.keys().collect::<Vec<_>>()
            );
        }
        // and the map names no field the answer lacks (a field may be null: no value here; a
        // dotted path through a list names the field of its elements)
        fn found(v: &Value, path: &[&str]) -> bool {
            match (v, path.split_first()) {
                (Value::Array(a), _) => a.iter().any(|x| found(x, path)),
                (Value::Object(o), Some((k, rest))) => o.get(*k).is_some_and(|x| found(x, rest)),
                (x, None) => x.is_number() || x.is_null(),
                _ => false,
            }
        }
        for k in units.keys() {
            let path: Vec<&str> = k.split('.').collect();
            assert!(
                GROUPS.contains(&k.as_str()) || found(&r, &path),
                "{m}: the map names {k}, which is no numeric field of the answer"
            );
        }
    }
    assert_eq!(seen.len(), COMPONENTS.len(), "{seen:?}");
    // boiler.fire: its steam flow in t/h by the flow unit, named; its heat flows in kW
    let r = call(
        "boiler.fire",
        json!({"feedwater": {"p": "45 bar", "T": "105 degC"}, "steam": {"p": "42 bar", "T": "400 degC"},
               "steam_flow": "20 t/h", "efficiency": 0.88, "units": {"flow": "t/h"}}),
    );
    assert_eq!(r["units"]["steam_flow"], "t/h", "{}", r["units"]);
    assert_eq!(r["units"]["fuel_heat_input"], "kW", "{}", r["units"]);
    assert!((r["steam_flow"].as_f64().unwrap() - 20.0).abs() < 1e-12);
}

/// A unit of the wrong dimension is answered with the units that would do: a gauge pressure
/// for a pressure drop lists the pressure-difference units (no gauge ones), a mass for a
/// pressure lists the pressure units (gauge ones included).
#[test]
fn a_wrong_dimension_lists_the_units_that_would_do() {
    let e = fails(
        "turbine.expand",
        json!({"inlet": {"p": 42, "T": 410, "flow": 20}, "outlet_p": 4, "efficiency": 0.72,
               "throttle_dp": "0.5 barg"}),
    );
    assert_eq!(e.code, 1005, "{}", e.message);
    assert!(
        e.message.contains("which throttle_dp needs (")
            && e.message.contains("bar, mbar, psi")
            && !e.message.contains("barg,"),
        "{}",
        e.message
    );
    let e = fails("water.state", json!({"given": {"p": "3 kg", "T": 300}}));
    assert_eq!(e.code, 1005, "{}", e.message);
    assert!(
        e.message.contains("which p needs (") && e.message.contains("barg, psig"),
        "{}",
        e.message
    );
}
