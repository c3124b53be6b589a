//! `balance.sweep` in units: `from`/`to` are numbers in the preset or texts with their unit,
//! read in the dimension of the swept field; the result names the unit of its values.
//!
//! Sources: unit conversions only (1 t/h = 1000/3600 kg/s by definition; 1 bar = 0.1 MPa), no
//! external reference needed; the site is the invented example of examples/site.

use serde_json::{json, Value};
use steamcell::api::balance::{spec_dim, NetworkIn};
use steamcell::api::{self};

const SITE: &str = include_str!("../../examples/site/site.json");

fn site() -> Value {
    serde_json::from_str(SITE).unwrap()
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / a.abs().max(b.abs()).max(1e-300)
}

#[test]
fn from_and_to_with_units_are_read_in_the_swept_quantity() {
    let r = api::call(
        "balance.sweep",
        json!({"network": site(), "path": "units.MP_users.demand",
               "from": "36 t/h", "to": "72 t/h", "points": 3}),
    )
    .unwrap();
    assert_eq!(r["unit"], "kg/s", "engineering preset: mass flow in kg/s");
    let v: Vec<f64> = r["points"]
        .as_array()
        .unwrap()
        .iter()
        .map(|p| p["value"].as_f64().unwrap())
        .collect();
    for (got, want) in v.iter().zip([10.0, 15.0, 20.0]) {
        assert!(rel(*got, want) < 1e-14, "{v:?}");
    }
    // the first point is the site as written (demand "36 t/h")
    let solved = api::call("balance.solve", json!({"network": site()})).unwrap();
    let a = r["points"][0]["totals"]["net_power"].as_f64().unwrap();
    let b = solved["totals"]["net_power"].as_f64().unwrap();
    assert!(rel(a, b) < 1e-9, "{a} vs {b}");
    // in the us preset the values and their unit follow the preset
    let r = api::call(
        "balance.sweep",
        json!({"network": site(), "path": "units.MP_users.demand", "units": "us",
               "from": "36 t/h", "to": "72 t/h", "points": 2}),
    )
    .unwrap();
    assert_eq!(r["unit"], "lb/h");
    let lb = r["points"][0]["value"].as_f64().unwrap();
    assert!(rel(lb, 36000.0 / 0.45359237) < 1e-12, "{lb}");
}

#[test]
fn bare_numbers_stay_as_given_and_gauge_pressures_become_absolute() {
    let r = api::call(
        "balance.sweep",
        json!({"network": site(), "path": "units.BPT.efficiency", "from": 0.7, "to": 0.8, "points": 3}),
    )
    .unwrap();
    assert_eq!(r["points"][0]["value"], 0.7);
    assert_eq!(r["points"][2]["value"], 0.8);
    let r = api::call(
        "balance.sweep",
        json!({"network": site(), "path": "units.MP.p", "from": "14 barg", "to": "16 barg", "points": 2}),
    )
    .unwrap();
    assert_eq!(r["unit"], "MPa");
    let p0 = r["points"][0]["value"].as_f64().unwrap();
    assert!(rel(p0, 1.4 + 0.101325) < 1e-12, "{p0}");
    assert_eq!(r["points"][0]["ok"], true, "{}", r["points"][0]);
}

#[test]
fn a_unit_of_another_dimension_or_a_text_field_is_refused_with_its_name() {
    let e = api::call(
        "balance.sweep",
        json!({"network": site(), "path": "units.MP_users.demand", "from": "5 bar", "to": 40, "points": 2}),
    )
    .unwrap_err();
    assert!(
        e.message.contains("from") && e.message.contains("bar"),
        "{}",
        e.message
    );
    let e = api::call(
        "balance.sweep",
        json!({"network": site(), "path": "units.DS1.water", "from": 1, "to": 2, "points": 2}),
    )
    .unwrap_err();
    assert!(
        e.message.contains("units.DS1.water") && e.message.contains("not a numeric"),
        "{}",
        e.message
    );
}

/// Every numeric field of a network (every property whose schema is the number-or-text input)
/// has a dimension for the sweep: a field added to the network later fails here until
/// `spec_dim` knows it.
#[test]
fn every_numeric_network_field_has_a_sweep_dimension() {
    let schema = serde_json::to_value(schemars::schema_for!(NetworkIn)).unwrap();
    let mut names = std::collections::BTreeSet::new();
    fn walk(v: &Value, names: &mut std::collections::BTreeSet<String>) {
        match v {
            Value::Object(o) => {
                if let Some(Value::Object(props)) = o.get("properties") {
                    for (k, p) in props {
                        if p.to_string().contains("#/definitions/Input") {
                            names.insert(k.clone());
                        }
                    }
                }
                o.values().for_each(|x| walk(x, names));
            }
            Value::Array(a) => a.iter().for_each(|x| walk(x, names)),
            _ => {}
        }
    }
    walk(&schema, &mut names);
    assert!(names.len() >= 10, "{names:?}");
    for n in &names {
        assert!(spec_dim(&format!("units.X.{n}")).is_ok(), "{n}");
    }
}
