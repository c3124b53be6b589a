//! No silent impossible result: the reproductions of issue 15 owned by the feasibility layer,
//! each answered by a specific error or a coded warning (each of these tests fails on the code
//! before it), and the property tests of the layer: a pinch never above the true smallest
//! temperature difference (fine grid plus the phase-change points), and every component
//! result closing its mass and energy balance with entropy generation >= 0.
//!
//! Sources: IAPWS R7-97(2012) (IF97: 273.15 K lowest temperature, the saturation line from
//! 273.15 K, the metastable-vapour equation's range in its Sec. 6.2 and its check values in
//! Table 18); the zone method for condensing heaters (heat-exchanger design texts, from
//! memory). Independent checks are built from saturation states and energy balances here, not
//! from the code under test.

use proptest::prelude::*;
use serde_json::{json, Value};
use steamcell::api::{self, columns, ServerCtx};
use steamcell::plant::components::*;
use steamcell::plant::{ph, pt, sat_liquid, sat_vapour};
use steamcell::water::state::{Phase, State};

const C: f64 = 273.15;

fn ok(method: &str, params: Value) -> Value {
    api::call(method, params.clone()).unwrap_or_else(|e| panic!("{method} {params}: {e:?}"))
}

fn err(method: &str, params: Value) -> api::ApiError {
    match api::call(method, params) {
        Ok(v) => panic!("{method} should be refused, answered {v}"),
        Err(e) => e,
    }
}

fn codes(v: &Value) -> Vec<String> {
    v["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .map(|w| w["code"].as_str().unwrap().to_string())
        .collect()
}

fn num(v: &Value) -> f64 {
    v.as_f64().unwrap_or_else(|| panic!("not a number: {v}"))
}

// ---------------------------------------------------------------- reproduction 1

/// Hot 2 bar 140 -> 60 degC (10 kg/s), cold 20 bar 50 -> 122 degC. Independent check: the
/// hot stream's dew point is T_sat(0.2 MPa) = 120.21 degC (IF97); from the hot inlet to the
/// dew point the hot stream gives m (h_in - h''), and the cold stream there is at the
/// enthalpy its outlet has less that duty over its flow: about 120.80 degC, 0.59 K hotter.
/// Twenty equal enthalpy steps reported "pinch 1.78 K".
#[test]
fn repro_1_cross_at_the_dew_point_is_refused() {
    let p = json!({"hot": {"inlet": {"p": "2 bar", "T": "140 degC", "flow": 10}, "outlet": {"T": "60 degC"}},
                   "cold": {"inlet": {"p": "20 bar", "T": "50 degC"}, "outlet": {"T": "122 degC"}}});
    // The independent numbers.
    let hi = pt(0.2, 140.0 + C).unwrap();
    let ho = pt(0.2, 60.0 + C).unwrap();
    let ci = pt(2.0, 50.0 + C).unwrap();
    let co = pt(2.0, 122.0 + C).unwrap();
    let mh = 10.0;
    let mc = mh * (hi.props.h - ho.props.h) / (co.props.h - ci.props.h);
    let dew = sat_vapour(0.2).unwrap();
    let q_dew = mh * (hi.props.h - dew.props.h);
    let cold_at_dew = ph(2.0, co.props.h - q_dew / mc).unwrap();
    let cross = cold_at_dew.props.t - dew.props.t;
    assert!((dew.props.t - C - 120.21).abs() < 0.01);
    assert!((cross - 0.59).abs() < 0.01, "cross {cross}");
    let e = err("exchanger.balance", p);
    assert_eq!(e.code, 1009, "{}", e.message);
    assert!(e.message.contains("temperature cross"), "{}", e.message);
    assert!(e.message.contains("dew point"), "{}", e.message);
    // the difference stated with 6 significant digits, in the request's unit (K)
    let stated: f64 = e
        .message
        .split(" K hotter")
        .next()
        .and_then(|m| m.rsplit(' ').next())
        .and_then(|v| v.parse().ok())
        .unwrap_or_else(|| panic!("no difference in K: {}", e.message));
    assert!((stated - cross).abs() < 1e-5, "{stated} {cross}");
}

/// The same heater with the feedwater leaving at 118 degC is feasible. Zone by zone
/// (desuperheating, condensing, drain cooling), computed here from the saturation states and
/// energy balances: each zone's duty, end differences and LMTD, UA = duty / LMTD, the overall
/// UA and the effective mean difference duty / UA; the end-to-end LMTD is not given.
#[test]
fn repro_1_heater_zones_by_hand() {
    let p = json!({"hot": {"inlet": {"p": "2 bar", "T": "140 degC", "flow": 10}, "outlet": {"T": "60 degC"}},
                   "cold": {"inlet": {"p": "20 bar", "T": "50 degC"}, "outlet": {"T": "118 degC"}}});
    let r = ok("exchanger.balance", p);
    let hi = pt(0.2, 140.0 + C).unwrap();
    let ho = pt(0.2, 60.0 + C).unwrap();
    let ci = pt(2.0, 50.0 + C).unwrap();
    let co = pt(2.0, 118.0 + C).unwrap();
    let (dew, bub) = (sat_vapour(0.2).unwrap(), sat_liquid(0.2).unwrap());
    let mh = 10.0;
    let q = mh * (hi.props.h - ho.props.h);
    let mc = q / (co.props.h - ci.props.h);
    // Boundaries from the hot end: hot T and cold T.
    let q1 = mh * (hi.props.h - dew.props.h);
    let q2 = mh * (hi.props.h - bub.props.h);
    let cold_t = |qq: f64| ph(2.0, co.props.h - qq / mc).unwrap().props.t;
    let hot = [hi.props.t, dew.props.t, bub.props.t, ho.props.t];
    let cold = [co.props.t, cold_t(q1), cold_t(q2), ci.props.t];
    let duties = [q1, q2 - q1, q - q2];
    let lm = |a: f64, b: f64| (a - b) / (a / b).ln();
    let mut ua = 0.0;
    let zones = r["zones"].as_array().unwrap();
    assert_eq!(zones.len(), 3);
    for (i, name) in ["desuperheating", "condensing", "drain cooling"]
        .iter()
        .enumerate()
    {
        let z = &zones[i];
        assert_eq!(z["hot"], *name);
        assert_eq!(z["cold"], "heating");
        let l = lm(hot[i] - cold[i], hot[i + 1] - cold[i + 1]);
        assert!((num(&z["duty"]) - duties[i]).abs() < 1e-6 * q, "{z}");
        assert!((num(&z["lmtd"]) - l).abs() < 1e-6, "{z} vs {l}");
        assert!((num(&z["hot_T_in"]) - (hot[i] - C)).abs() < 1e-6);
        assert!((num(&z["cold_T_out"]) - (cold[i] - C)).abs() < 1e-6);
        ua += duties[i] / l;
    }
    assert!((num(&r["ua"]) - ua).abs() < 1e-6 * ua);
    assert!((num(&r["effective_mtd"]) - q / ua).abs() < 1e-6);
    assert!(
        r["lmtd"].is_null(),
        "the two ends alone do not size a zoned heater"
    );
    // TTD and DCA of a condensing heater.
    assert!((num(&r["terminal_temperature_difference"]) - (dew.props.t - co.props.t)).abs() < 1e-9);
    assert!((num(&r["drain_cooler_approach"]) - 10.0).abs() < 1e-9);
    // The pinch is at the dew point here (a kink of the hot curve): 120.21 - T_cold there.
    assert_eq!(r["pinch_at"], "the hot stream's dew point");
    assert!((num(&r["pinch"]) - (hot[1] - cold[1])).abs() < 1e-6);
    assert!(codes(&r).is_empty(), "{:?}", r["warnings"]);
}

// ---------------------------------------------------------------- reproduction 3

/// Below the triple-point pressure (611.657 Pa) no liquid or wet state exists; IF97 starts at
/// 273.15 K (IAPWS R7-97(2012)). `p = 0.005 bar, h = 2200` gave a wet state at -2.73 degC.
#[test]
fn repro_3_below_the_triple_point_is_refused_on_every_path() {
    let e = err(
        "water.state",
        json!({"given": {"p": "0.005 bar", "h": 2200}}),
    );
    assert_eq!(e.code, 1001);
    assert!(e.message.contains("triple-point"), "{}", e.message);
    // The vapour that does exist there is still answered.
    let v = ok(
        "water.state",
        json!({"given": {"p": "0.005 bar", "h": 2600}}),
    );
    assert_eq!(v["phase"], "vapour");
    assert!(num(&v["T"]) > 0.0);
    // Batch rows, JSON and packed.
    let b = ok(
        "water.batch",
        json!({"given": {"p": ["0.005 bar", "0.005 bar"], "h": [2200, 2600]}, "want": ["T"]}),
    );
    assert!(b["columns"]["T"][0].is_null());
    assert_eq!(b["failed_rows"][0]["code"], 1001);
    assert!(b["failed_rows"][0]["message"]
        .as_str()
        .unwrap()
        .contains("triple-point"));
    // POST /columns (the packed route).
    let head = json!({"given": ["p", "h"], "rows": 1, "want": ["T"]});
    let body = columns::frame(&head, &[vec![0.0005], vec![2200.0]]);
    let out = columns::columns(&ServerCtx::default(), &body).unwrap();
    let (h, data) = columns::split_frame(&out).unwrap();
    assert_eq!(h["failed"], 1, "{h}");
    assert!(f64::from_le_bytes(data[..8].try_into().unwrap()).is_nan());
    // A component stream, and a component state computed inside (the isentropic exhaust).
    let e = err(
        "valve.throttle",
        json!({"inlet": {"p": "0.005 bar", "h": 2200}, "outlet_p": "0.004 bar"}),
    );
    assert_eq!(e.code, 1001);
    let e = err(
        "turbine.expand",
        json!({"inlet": {"p": "10 bar", "T": "300 degC"}, "outlet_p": "0.005 bar", "efficiency": 0.8}),
    );
    assert_eq!(e.code, 1001);
    assert!(e.message.contains("triple-point"), "{}", e.message);
}

// ---------------------------------------------------------------- reproductions 5 and 12

/// The metastable-vapour equation is valid from the saturated-vapour line to the 5 %
/// equilibrium-moisture line (h' + 0.95 (h'' - h') at the pressure), triple-point pressure to
/// 10 MPa (IAPWS R7-97(2012) Sec. 6.2). 40 barg, 20 degC gave h = -2,176,964 kJ/kg; 200 degC
/// gave 2454 kJ/kg, below the 5 % line (about 2716 kJ/kg there).
#[test]
fn repro_5_metastable_outside_its_range_is_refused() {
    let sat = ok("water.saturation", json!({"p": "40 barg"}));
    let (hl, hv) = (num(&sat["liquid"]["h"]), num(&sat["vapour"]["h"]));
    let h95 = hl + 0.95 * (hv - hl);
    for t in ["20 degC", "200 degC"] {
        let e = err(
            "water.state",
            json!({"given": {"p": "40 barg", "T": t}, "metastable": true}),
        );
        assert_eq!(e.code, 1001, "{t}: {}", e.message);
        assert!(
            e.message.contains("5 % equilibrium-moisture"),
            "{}",
            e.message
        );
    }
    // 240 degC (12 K below saturation) lies inside: answered as metastable vapour above the
    // 5 % line.
    let v = ok(
        "water.state",
        json!({"given": {"p": "40 barg", "T": "240 degC"}, "metastable": true}),
    );
    assert_eq!(v["metastable"], true);
    assert!(num(&v["h"]) > h95);
    // The limit the message names is the temperature where the equation meets the 5 % line.
    let e = err(
        "water.state",
        json!({"given": {"p": "40 barg", "T": "200 degC"}, "metastable": true}),
    );
    // The limit is stated in the caller's unit (degC here, as the request gave T).
    let limit: f64 = e.data["limit"].as_f64().unwrap();
    let unit = e.data["unit"].as_str().unwrap();
    assert_eq!(unit, "degC", "{}", e.message);
    let at = ok(
        "water.state",
        json!({"given": {"p": "40 barg", "T": format!("{} {unit}", limit + 1e-6)}, "metastable": true}),
    );
    assert!((num(&at["h"]) - h95).abs() < 1e-3, "{} vs {h95}", at["h"]);
    // The batch refuses the same rows.
    let b = ok(
        "water.batch",
        json!({"given": {"p": ["40 barg", "40 barg"], "T": ["20 degC", "240 degC"]}, "want": ["h"], "metastable": true}),
    );
    assert_eq!(b["failed_rows"][0]["code"], 1001);
    assert!(b["columns"]["h"][1].is_number());
}

/// `metastable: true` above 10 MPa below saturation returned stable liquid though the schema
/// said it is refused (reproduction 12).
#[test]
fn repro_12_metastable_above_10_mpa_is_refused() {
    let e = err(
        "water.state",
        json!({"given": {"p": "15 MPa", "T": "300 degC"}, "metastable": true}),
    );
    assert_eq!(e.code, 1001);
    assert_eq!(e.data["limit"], 10.0);
    let b = ok(
        "water.batch",
        json!({"given": {"p": [15], "T": [300]}, "want": ["h"], "metastable": true}),
    );
    assert_eq!(b["failed_rows"][0]["code"], 1001);
    // Superheated states at 15 MPa are stable states and stay answered.
    let v = ok(
        "water.state",
        json!({"given": {"p": "15 MPa", "T": "400 degC"}, "metastable": true}),
    );
    assert_eq!(v["metastable"], false);
}

/// IAPWS R7-97(2012) Table 18: the metastable-vapour check points (p, T) = (1 MPa, 450 K),
/// (1 MPa, 440 K), (1.5 MPa, 450 K) lie inside the range and are answered with the printed h
/// (0.276881115e4, 0.274015123e4, 0.272134539e4 kJ/kg; tests/data/if97.json).
#[test]
fn table_18_points_stay_inside_the_metastable_range() {
    for (p, t, h) in [
        (1.0, 450.0, 0.276881115e4),
        (1.0, 440.0, 0.274015123e4),
        (1.5, 450.0, 0.272134539e4),
    ] {
        let v = ok(
            "water.state",
            json!({"given": {"p": p, "T": format!("{t} K")}, "metastable": true}),
        );
        assert_eq!(v["metastable"], true);
        assert!(
            (num(&v["h"]) - h).abs() <= 0.5e-5,
            "{p} MPa {t} K: {}",
            v["h"]
        );
    }
}

// ---------------------------------------------------------------- reproduction 7

/// Saturated liquid given as x = 0 flashes exactly as the same liquid given by T, and gets the
/// same warning; saturated steam let down 100 -> 60 bar leaves wet (x = 0.962: h''(10 MPa) is
/// below h''(6 MPa), independent check from the saturation states) with a warning.
#[test]
fn repro_7_valve_flashing_and_wet_let_down_are_warned() {
    let by_x = ok(
        "valve.throttle",
        json!({"inlet": {"p": "10 bar", "x": 0}, "outlet_p": "1 bar"}),
    );
    assert_eq!(codes(&by_x), ["valve_flashing"]);
    let sat = ok("water.saturation", json!({"p": "10 bar"}));
    let by_t = ok(
        "valve.throttle",
        json!({"inlet": {"p": "10.01 bar", "T": format!("{} degC", num(&sat["T"]))}, "outlet_p": "1 bar"}),
    );
    assert_eq!(codes(&by_t), ["valve_flashing"]);

    let r = ok(
        "valve.throttle",
        json!({"inlet": {"p": "100 bar", "x": 1}, "outlet_p": "60 bar"}),
    );
    let hv10 = sat_vapour(10.0).unwrap().props.h;
    let (l6, v6) = (sat_liquid(6.0).unwrap(), sat_vapour(6.0).unwrap());
    let x = (hv10 - l6.props.h) / (v6.props.h - l6.props.h);
    assert!((x - 0.962).abs() < 0.001);
    assert!((num(&r["outlet"]["x"]) - x).abs() < 1e-9);
    assert_eq!(codes(&r), ["valve_outlet_wet"]);
    // The demo's let-down (superheated 42 barg, 410 degC to 4 barg) stays dry: no warning.
    let d = ok(
        "valve.throttle",
        json!({"inlet": {"p": "42 barg", "T": "410 degC"}, "outlet_p": "4 barg"}),
    );
    assert!(codes(&d).is_empty());
}

// ---------------------------------------------------------------- reproduction 10

/// NPSH available of a saturated suction: 0 m exactly from the state (it was "-0.00 m"),
/// with a warning that asks for the suction head; with `suction_head` it is that head.
/// A subcooled suction: (p - psat(T)) / (rho g) + suction_head (g = 9.80665 m/s2, CGPM 1901).
#[test]
fn repro_10_npsh_with_a_suction_head() {
    let r = ok(
        "pump.raise",
        json!({"inlet": {"p": "1 bar", "x": 0}, "outlet_p": "10 bar", "efficiency": 0.8}),
    );
    assert_eq!(r["npsh_available"], 0.0);
    assert_eq!(codes(&r), ["npsh_state_only"]);
    let r = ok(
        "pump.raise",
        json!({"inlet": {"p": "1 bar", "x": 0}, "outlet_p": "10 bar", "efficiency": 0.8, "suction_head": "4 m"}),
    );
    assert_eq!(r["npsh_available"], 4.0);
    assert!(codes(&r).is_empty());
    let inlet = pt(0.3, 80.0 + C).unwrap();
    let psat = ok("water.saturation", json!({"T": "80 degC"}));
    let own = (0.3 - num(&psat["p"])) * 1e6 / (inlet.props.rho * 9.80665);
    let r = ok(
        "pump.raise",
        json!({"inlet": {"p": "0.3 MPa", "T": "80 degC"}, "outlet_p": "10 bar", "efficiency": 0.8, "suction_head": "2.5 m"}),
    );
    assert!((num(&r["npsh_available"]) - (own + 2.5)).abs() < 1e-9);
}

/// A liquid-liquid exchanger has no terminal temperature difference or drain-cooler approach
/// (they are feedwater-heater terms of a condensing hot side); its LMTD is the two ends'.
#[test]
fn repro_10_no_ttd_for_a_liquid_liquid_exchanger() {
    let r = ok(
        "exchanger.balance",
        json!({"hot": {"inlet": {"p": "2 bar", "T": "90 degC", "flow": 10}, "outlet": {"T": "60 degC"}},
               "cold": {"inlet": {"p": "20 bar", "T": "50 degC"}, "outlet": {"T": "70 degC"}}}),
    );
    assert!(r["terminal_temperature_difference"].is_null());
    assert!(r["drain_cooler_approach"].is_null());
    let (a, b): (f64, f64) = (90.0 - 70.0, 60.0 - 50.0);
    assert!((num(&r["lmtd"]) - (a - b) / (a / b).ln()).abs() < 1e-6);
    assert_eq!(r["zones"].as_array().unwrap().len(), 1);
    assert_eq!(r["zones"][0]["hot"], "liquid cooling");
}

// ---------------------------------------------------------------- reproduction 11

/// A batch of steam tags says it expects vapour; the 40 barg, 200 degC row (liquid: T_sat at
/// 4.1013 MPa is 251.85 degC) is flagged, and its superheat is T - T_sat, negative, not NaN.
#[test]
fn repro_11_batch_expect_flags_rows_and_superheat_is_signed() {
    let b = ok(
        "water.batch",
        json!({"given": {"p": ["40 barg", "40 barg"], "T": ["200 degC", "300 degC"]},
               "want": ["superheat", "phase"], "expect": "vapour"}),
    );
    assert_eq!(b["flagged"], 1);
    assert_eq!(b["flagged_rows"][0]["row"], 0);
    assert_eq!(b["flagged_rows"][0]["phase"], "liquid");
    let ts = num(&ok("water.saturation", json!({"p": "40 barg"}))["T"]);
    assert!((num(&b["columns"]["superheat"][0]) - (200.0 - ts)).abs() < 1e-9);
    assert!((num(&b["columns"]["superheat"][1]) - (300.0 - ts)).abs() < 1e-9);
    // Without expect nothing is flagged; an unknown phase name is refused.
    let b = ok(
        "water.batch",
        json!({"given": {"p": ["40 barg"], "T": ["200 degC"]}, "want": ["h"]}),
    );
    assert_eq!(b["flagged"], 0);
    let e = err(
        "water.batch",
        json!({"given": {"p": ["40 barg"], "T": ["200 degC"]}, "expect": "steamy"}),
    );
    assert_eq!(e.code, 1006);
    // The packed route flags the same row.
    let head = json!({"given": ["p", "T"], "rows": 2, "want": ["h"], "expect": "vapour"});
    let body = columns::frame(&head, &[vec![4.101325, 4.101325], vec![200.0, 300.0]]);
    let out = columns::columns(&ServerCtx::default(), &body).unwrap();
    let (h, _) = columns::split_frame(&out).unwrap();
    assert_eq!(h["flagged"], 1, "{h}");
    assert_eq!(h["flagged_rows"][0]["row"], 0);
    // A single state: the superheat of a subcooled liquid is minus its subcooling.
    let v = ok(
        "water.state",
        json!({"given": {"p": "40 barg", "T": "200 degC"}}),
    );
    assert!((num(&v["superheat"]) - (200.0 - ts)).abs() < 1e-9);
}

// ---------------------------------------------------------------- reproduction 9

/// `{k: v}`.
fn obj(k: &str, v: Value) -> Value {
    let mut m = serde_json::Map::new();
    m.insert(k.to_string(), v);
    Value::Object(m)
}

/// Resolves a `$ref` of the OpenRPC document, and an optional (anyOf [X, null]).
fn resolve<'a>(doc: &'a Value, s: &'a Value) -> &'a Value {
    if let Some(r) = s["$ref"].as_str() {
        let name = r.rsplit('/').next().unwrap();
        return resolve(doc, &doc["components"]["schemas"][name]);
    }
    if let Some(any) = s["anyOf"].as_array() {
        let non_null: Vec<&Value> = any.iter().filter(|x| x["type"] != "null").collect();
        if non_null.len() == 1 {
            return resolve(doc, non_null[0]);
        }
    }
    s
}

/// Whether a schema accepts an array anywhere among its alternatives.
fn accepts_array(doc: &Value, s: &Value) -> bool {
    let s = resolve(doc, s);
    if s["type"] == "array"
        || s["type"]
            .as_array()
            .is_some_and(|t| t.contains(&json!("array")))
    {
        return true;
    }
    ["anyOf", "oneOf"].iter().any(|k| {
        s[*k]
            .as_array()
            .is_some_and(|alts| alts.iter().any(|a| accepts_array(doc, a)))
    })
}

/// Whether a schema is an object with named fields (a struct, or an internally tagged enum).
fn is_struct(doc: &Value, s: &Value) -> bool {
    let s = resolve(doc, s);
    s["properties"].is_object()
        || s["oneOf"].as_array().is_some_and(|alts| {
            alts.iter()
                .all(|a| resolve(doc, a)["properties"].is_object())
        })
}

/// Every place of every method's params where an object with named fields is expected (up
/// to two levels below a param, through lists and maps): an array given there is refused
/// (serde alone reads `"given": [3e6, 300]` as p = 3e6, T = 300).
#[test]
fn repro_9_an_array_is_refused_wherever_an_object_is_expected() {
    let doc: Value =
        serde_json::from_str(include_str!("../../schema/steamcell.openrpc.json")).unwrap();
    let mut probes: Vec<(String, Value)> = Vec::new();
    // (method, the params object with one array planted)
    fn walk(
        doc: &Value,
        s: &Value,
        depth: usize,
        plant: &dyn Fn(Value) -> Value,
        out: &mut Vec<Value>,
    ) {
        let r = resolve(doc, s);
        if is_struct(doc, r) && !accepts_array(doc, r) {
            out.push(plant(json!([1, 2])));
            if depth < 2 {
                if let Some(props) = r["properties"].as_object() {
                    for (k, ps) in props {
                        walk(doc, ps, depth + 1, &|v| plant(obj(k, v)), out);
                    }
                }
            }
        } else if r["type"] == "array" && depth < 2 {
            walk(doc, &r["items"], depth + 1, &|v| plant(json!([v])), out);
        } else if r["additionalProperties"].is_object() && depth < 2 {
            walk(
                doc,
                &r["additionalProperties"],
                depth + 1,
                &|v| plant(json!({"k": v})),
                out,
            );
        }
    }
    for m in doc["methods"].as_array().unwrap() {
        let name = m["name"].as_str().unwrap();
        for prm in m["params"].as_array().unwrap() {
            let pname = prm["name"].as_str().unwrap().to_string();
            let mut out = Vec::new();
            let pn = pname.clone();
            walk(&doc, &prm["schema"], 0, &move |v| obj(&pn, v), &mut out);
            for params in out {
                probes.push((name.to_string(), params));
            }
        }
    }
    assert!(probes.len() >= 30, "only {} probes", probes.len());
    if std::env::var("FEAS_DEBUG").is_ok() {
        eprintln!("{} probes", probes.len());
    }
    for (method, params) in probes {
        let e = err(&method, params.clone());
        assert_eq!(e.code, -32602, "{method} {params}: {}", e.message);
        assert!(
            e.message
                .contains("an array where an object with named fields"),
            "{method} {params}: {}",
            e.message
        );
    }
}

// ---------------------------------------------------------------- nominal cases

/// No warning fires on the nominal examples: the README's calls, the demo's requests
/// (`examples/demo`), the audit's leaks and traps (`examples/audit/audit.py`), and a feed pump
/// drawing from a deaerator at saturation with its suction head. (The audit's bare line warns
/// of its hot surface and its condensate on purpose: that is the finding it prices. The example
/// site's 1.2 bar header is fed by a wet extraction, x = 0.978, and says so.)
#[test]
fn nominal_examples_give_no_warnings() {
    let basis = json!({"hours_per_year": 8000, "fuel_cost": "32 EUR/MWh", "boiler_efficiency": 0.84, "makeup_T": "12 degC"});
    let with_basis = |mut v: Value| {
        for (k, x) in basis.as_object().unwrap() {
            v[k] = x.clone();
        }
        v
    };
    let mut cases: Vec<(String, Value)> = vec![
        (
            "turbine.expand".into(),
            json!({"inlet": {"p": "10 MPa", "T": "700 degC", "flow": 10}, "outlet_p": "0.4 MPa", "efficiency": 0.7}),
        ),
        (
            "turbine.expand".into(),
            json!({"inlet": {"p": "42 barg", "T": "410 degC", "flow": "20 t/h"}, "outlet_p": "4 barg", "efficiency": 0.72}),
        ),
        (
            "orifice.flow".into(),
            json!({"inlet": {"p": "10 barg", "x": 1}, "diameter": "3 mm", "hours_per_year": 8000, "fuel_cost": "30 EUR/MWh", "boiler_efficiency": 0.85}),
        ),
        (
            "orifice.flow".into(),
            with_basis(
                json!({"inlet": {"p": "4 barg", "x": 1}, "diameter": "4.5 mm", "downstream_p": "0.5 barg"}),
            ),
        ),
        (
            "orifice.flow".into(),
            with_basis(
                json!({"inlet": {"p": "10 barg", "x": 1}, "diameter": "1.5 mm", "downstream_p": "0.5 barg"}),
            ),
        ),
        (
            "pump.raise".into(),
            json!({"inlet": {"p": "0.3 barg", "x": 0, "flow": "30 t/h"}, "outlet_p": "48 barg", "efficiency": 0.7, "suction_head": "8 m"}),
        ),
    ];
    let dir = concat!(env!("CARGO_MANIFEST_DIR"), "/examples/demo");
    let mut files: Vec<_> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "json"))
        .collect();
    files.sort();
    for f in files {
        let req: Value = serde_json::from_str(&std::fs::read_to_string(&f).unwrap()).unwrap();
        cases.push((
            req["method"].as_str().unwrap().to_string(),
            req["params"].clone(),
        ));
    }
    assert!(cases.len() >= 12);
    for (method, params) in cases {
        let r = ok(&method, params.clone());
        assert!(
            codes(&r).is_empty(),
            "{method} {params}: {:?}",
            r["warnings"]
        );
    }
}

/// Component warnings state their values in the caller's units (issue 21: they printed MPa,
/// K and kJ/kg whatever the request asked). 100, 60 and 30 bar are 1450, 870.2 and 435.1 psia
/// (1 psi = 6894.757 Pa, NIST SP 811); h'' at 10 MPa, 2725.5 kJ/kg (IAPWS-IF97), is 1172 Btu/lb
/// (1 Btu/lb = 2.326 kJ/kg exactly); a difference of 2 K or 3 K is 3.6 or 5.4 degF (exactly 1.8
/// degF per K).
#[test]
fn component_warnings_speak_the_callers_units() {
    let message = |method: &str, params: Value, code: &str| -> String {
        let r = ok(method, params);
        r["warnings"]
            .as_array()
            .unwrap()
            .iter()
            .find(|w| w["code"] == code)
            .unwrap_or_else(|| panic!("no {code}: {}", r["warnings"]))["message"]
            .as_str()
            .unwrap()
            .to_string()
    };
    let m = message(
        "valve.throttle",
        json!({"inlet": {"p": "100 bar", "x": 1}, "outlet_p": "60 bar", "units": "us"}),
        "valve_outlet_wet",
    );
    assert!(
        m.contains("throttled from 1450 psia to 870.2 psia its enthalpy 1172 Btu/lb"),
        "{m}"
    );
    assert!(m.contains("above about 435.1 psia"), "{m}");
    let m = message(
        "valve.throttle",
        json!({"inlet": {"p": "100 bar", "x": 1}, "outlet_p": "60 bar", "units": {"preset": "bar", "flow": "t/h"}}),
        "valve_outlet_wet",
    );
    assert!(m.contains("throttled from 100 bar to 60 bar"), "{m}");
    let pinch = json!({"hot": {"inlet": {"p": "2 bar", "T": "90 degC", "flow": 10}, "outlet": {"T": "60 degC"}}, "cold": {"inlet": {"p": "20 bar", "T": "58 degC"}, "outlet": {"T": "70 degC"}}});
    let mut us = pinch.clone();
    us["units"] = json!("us");
    let m = message("exchanger.balance", us, "small_pinch");
    assert!(
        m.contains("the pinch is only 3.6 degF") && m.contains("below 5.4 degF"),
        "{m}"
    );
    let m = message("exchanger.balance", pinch, "small_pinch");
    assert!(
        m.contains("the pinch is only 2 K") && m.contains("below 3 K"),
        "{m}"
    );
}

/// Issue 23, reproduction 3: errors, like warnings, state their values in the request's units.
/// The deaerator's "already hotter than saturation at {p} MPa", turbine.expand's measured-outlet
/// checks, the throttle drop, exchanger.balance's temperature cross and the cycle's heater
/// checks printed MPa, K, kJ/kg and kg/s whatever the request asked. The numbers: 115 degC =
/// 239 degF; saturation at 2 bar 120.212 degC = 248.381 degF (IAPWS-IF97); 1.3 bar = 18.8549
/// psia; 10 bar = 145.038 psia; 120 bar = 1740.45 psia (unit definitions).
#[test]
fn component_errors_speak_the_callers_units() {
    let bar_th = json!({"preset": "bar", "flow": "t/h"});
    let refused = |method: &str, mut params: Value, units: &Value| -> String {
        params["units"] = units.clone();
        let e = err(method, params);
        e.message
    };
    let deaerator = json!({"p": "1.3 bar", "steam": {"p": "2 bar", "T": "150 degC"}, "waters": [{"p": "3 bar", "T": "130 degC", "flow": "5 t/h"}]});
    let m = refused("deaerator.balance", deaerator.clone(), &json!("us"));
    assert!(
        m.starts_with("the water entering is already hotter than saturation at 18.8549 psia: the deaerator would need ")
            && m.contains(" lb/h of steam removed"),
        "{m}"
    );
    let m = refused("deaerator.balance", deaerator, &bar_th);
    assert!(
        m.starts_with("the water entering is already hotter than saturation at 1.3 bar")
            && m.contains(" t/h of steam removed"),
        "{m}"
    );
    let measured = |t: &str| json!({"inlet": {"p": "10 bar", "T": "300 degC"}, "outlet_p": "2 bar", "outlet": {"p": "2 bar", "T": t}});
    let m = refused("turbine.expand", measured("115 degC"), &json!("us"));
    assert!(
        m.starts_with("the measured outlet temperature 239 degF is at or below the saturation temperature 248.381 degF at outlet_p = 29.0075 psia"),
        "{m}"
    );
    let m = refused("turbine.expand", measured("115 degC"), &bar_th);
    assert!(
        m.starts_with("the measured outlet temperature 115 degC is at or below the saturation temperature 120.212 degC at outlet_p = 2 bar"),
        "{m}"
    );
    let m = refused("turbine.expand", measured("320 degC"), &json!("us"));
    assert!(
        m.starts_with("the measured outlet enthalpy ")
            && m.contains(" Btu/lb is not below the inlet enthalpy ")
            && !m.contains("kJ/kg"),
        "{m}"
    );
    let throttled = json!({"inlet": {"p": "10 bar", "T": "300 degC"}, "outlet_p": "2 bar", "throttle_dp": "12 bar", "efficiency": 0.8});
    let m = refused("turbine.expand", throttled.clone(), &json!("us"));
    assert!(
        m.starts_with("throttle_dp = 174.045 psi is not below the inlet pressure 145.038 psia"),
        "{m}"
    );
    let m = refused("turbine.expand", throttled, &bar_th);
    assert!(
        m.starts_with("throttle_dp = 12 bar is not below the inlet pressure 10 bar"),
        "{m}"
    );
    let cross = json!({"hot": {"inlet": {"p": "2 bar", "T": "140 degC", "flow": 10}, "outlet": {"T": "60 degC"}},
                       "cold": {"inlet": {"p": "20 bar", "T": "50 degC"}, "outlet": {"T": "122 degC"}}});
    let m = refused("exchanger.balance", cross, &json!("us"));
    assert!(
        m.contains("the hot stream is at 248.381 degF and the cold stream at ")
            && m.contains(" degF hotter"),
        "{m}"
    );
    let heater = json!({"boiler_p": "100 bar", "boiler_T": "500 degC", "condenser_p": "0.1 bar",
                        "turbine_efficiency": 0.85, "heaters": [{"p": "120 bar", "kind": "open"}]});
    let m = refused("cycle.rankine", heater.clone(), &json!("us"));
    assert!(
        m.starts_with("heater at 1740.45 psia: its pressure must lie between the condenser (1.45038 psia) and the boiler (1450.38 psia)"),
        "{m}"
    );
    let m = refused("cycle.rankine", heater, &bar_th);
    assert!(
        m.starts_with("heater at 120 bar: its pressure must lie between the condenser (0.1 bar) and the boiler (100 bar)"),
        "{m}"
    );
}

/// Dry saturated steam (x = 1) is not wet: a site's boiler making it and the header it feeds
/// gave `wet_steam` ("x = 1.0000") before issue 21; a header a little wetter still warns.
#[test]
fn dry_saturated_steam_is_not_warned_as_wet() {
    let site = |x: f64| {
        json!({"network": {
            "units": {
                "MK": { "kind": "makeup", "T": "20 degC" },
                "P": { "kind": "pump", "p": "12 bar", "efficiency": 0.7 },
                "B": { "kind": "boiler", "efficiency": 0.85 },
                "H": { "kind": "header", "p": "10 bar" },
                "U": { "kind": "user", "demand": "1 kg/s", "return_T": "80 degC" }
            },
            "streams": {
                "mk_p": { "from": "MK", "to": "P" },
                "p_b": { "from": "P", "to": "B" },
                "b_h": { "from": "B", "to": "H", "x": x },
                "h_u": { "from": "H", "to": "U" }
            }
        }})
    };
    let r = ok("balance.solve", site(1.0));
    assert!(codes(&r).is_empty(), "{}", r["warnings"]);
    // 0.1 % moisture is wet steam, at the boiler and at the header
    let r = ok("balance.solve", site(0.999));
    let wet: Vec<&Value> = r["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|w| w["code"] == "wet_steam")
        .collect();
    assert_eq!(wet.len(), 2, "{}", r["warnings"]);
}

// ---------------------------------------------------------------- property tests

/// The smallest hot-minus-cold temperature difference along a counterflow exchanger with
/// constant side pressures, computed independently: 4000 equal duty steps plus the exact
/// phase-change points of both streams (from h' and h'' at each side's pressure).
fn true_min_dt(hi: &State, ho: &State, ci: &State, co: &State) -> f64 {
    let (ph_, pc) = (hi.props.p, ci.props.p);
    let hot_h = |q: f64| hi.props.h + q * (ho.props.h - hi.props.h);
    let cold_h = |q: f64| co.props.h + q * (ci.props.h - co.props.h);
    let dt = |q: f64| ph(ph_, hot_h(q)).unwrap().props.t - ph(pc, cold_h(q)).unwrap().props.t;
    let mut qs: Vec<f64> = (0..=4000).map(|i| i as f64 / 4000.0).collect();
    for (p, h0, h1) in [(ph_, hi.props.h, ho.props.h), (pc, co.props.h, ci.props.h)] {
        if p < 22.0 {
            for sat in [sat_liquid(p).unwrap(), sat_vapour(p).unwrap()] {
                let q = (sat.props.h - h0) / (h1 - h0);
                if q > 0.0 && q < 1.0 {
                    qs.push(q);
                }
            }
        }
    }
    qs.into_iter().map(dt).fold(f64::INFINITY, f64::min)
}

fn check_exchanger(hot: Side, cold: Side) -> Result<(), TestCaseError> {
    let res = exchanger_balance(&hot, &cold);
    if std::env::var("FEAS_DEBUG").is_ok() {
        eprintln!(
            "exchanger case: {}",
            if res.is_ok() { "ok" } else { "refused" }
        );
    }
    match res {
        Ok(r) => {
            let m = true_min_dt(&r.hot_in, &r.hot_out, &r.cold_in, &r.cold_out);
            prop_assert!(
                r.pinch <= m + 1e-7,
                "pinch {} above the true minimum {m}",
                r.pinch
            );
            prop_assert!(r.pinch > 0.0);
            prop_assert!(r.balance.energy_residual() < 1e-9);
            prop_assert!(r.entropy_generation >= -1e-9 * (r.hot_flow + r.cold_flow) * 10.0);
            let zone_duty: f64 = r.zones.iter().map(|z| z.duty).sum();
            prop_assert!((zone_duty - r.duty).abs() <= 1e-9 * r.duty.max(1.0));
        }
        Err(e) => {
            // Refused: a cross, and really one: the independent profile with the cold outlet
            // from the energy balance reaches zero somewhere.
            let msg = e.to_string();
            prop_assert!(msg.contains("temperature cross"), "{msg}");
            let (hi, ho, ci) = (hot.inlet, hot.outlet.unwrap(), cold.inlet);
            let q = hot.flow.unwrap() * (hi.props.h - ho.props.h);
            if let Ok(co) = ph(ci.props.p, ci.props.h + q / cold.flow.unwrap()) {
                let m = true_min_dt(&hi, &ho, &ci, &co);
                prop_assert!(
                    m <= 1e-6,
                    "refused as a cross, but the smallest difference is {m} K"
                );
            }
        }
    }
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 48, .. ProptestConfig::default() })]

    /// Feedwater heaters: extraction steam (superheated or saturated) condensing and
    /// sub-cooled against feedwater, the cold outlet from the energy balance.
    #[test]
    fn pinch_is_the_true_minimum_for_heaters(
        p_h in 0.02f64..5.0, sh in 0.0f64..80.0, sub in 0.0f64..40.0,
        p_c in 0.5f64..25.0, below in 5.0f64..120.0, mh in 0.5f64..20.0, ratio in 2.0f64..40.0,
    ) {
        let ts = sat_vapour(p_h).unwrap().props.t;
        let hi = if sh < 1.0 { sat_vapour(p_h).unwrap() } else { pt(p_h, ts + sh).unwrap() };
        let ho = if sub < 1.0 { sat_liquid(p_h).unwrap() } else { pt(p_h, ts - sub).unwrap() };
        let t_ci = (ts - below).max(C + 5.0);
        let ci = pt(p_c, t_ci).unwrap();
        prop_assume!(ci.phase == Phase::Liquid);
        check_exchanger(
            Side { inlet: hi, outlet: Some(ho), flow: Some(mh) },
            Side { inlet: ci, outlet: None, flow: Some(mh * ratio) },
        )?;
    }

    /// Evaporators and single-phase exchangers: hot pressurised water or gas against a cold
    /// stream that may boil and superheat, the cold outlet from the energy balance.
    #[test]
    fn pinch_is_the_true_minimum_for_boiling_and_single_phase(
        p_h in 0.1f64..20.0, t_h in 120.0f64..450.0, drop in 10.0f64..200.0,
        p_c in 0.01f64..5.0, t_c in 10.0f64..100.0, mh in 1.0f64..20.0, mc in 0.2f64..20.0,
    ) {
        let hi = pt(p_h, t_h + C).unwrap();
        let ho_t = (t_h - drop).max(t_c + 1.0);
        let ho = pt(p_h, ho_t + C).unwrap();
        prop_assume!(hi.phase != Phase::Wet && ho.phase != Phase::Wet);
        let ci = pt(p_c, t_c + C).unwrap();
        prop_assume!(ci.phase == Phase::Liquid);
        check_exchanger(
            Side { inlet: hi, outlet: Some(ho), flow: Some(mh) },
            Side { inlet: ci, outlet: None, flow: Some(mc) },
        )?;
    }

    /// Every component closes its mass and energy balance and generates entropy >= 0 (to
    /// 1e-9 of its entropy flows).
    #[test]
    fn components_conserve_and_generate_entropy(
        p1 in 0.2f64..15.0, sh in 1.0f64..200.0, ratio in 0.05f64..0.95, x in 0.0f64..1.0,
        sub in 1.0f64..80.0, eta in 0.3f64..1.0, m in 0.1f64..50.0, spray_sh in 6.0f64..30.0,
    ) {
        let ts = sat_vapour(p1).unwrap().props.t;
        let steam = pt(p1, ts + sh).unwrap();
        let p2 = p1 * ratio;
        let s_ok = |s: f64, scale: f64| s >= -1e-9 * scale.abs().max(1.0);
        let close = |b: &steamcell::plant::Balance| b.mass_residual() < 1e-9 && b.energy_residual() < 1e-9;
        let t = turbine_expand(&steam, p2, TurbineSpec::Efficiency(eta), Some(m)).unwrap();
        prop_assert!(close(&t.balance) && s_ok(t.entropy_generation, m * steam.props.s));
        let v = valve_throttle(&steam, p2, Some(m)).unwrap();
        prop_assert!(close(&v.balance) && s_ok(v.entropy_generation, m * steam.props.s));
        let wet = steamcell::plant::solve(steamcell::water::Given::PX(p1, x)).unwrap();
        let v = valve_throttle(&wet, p2, Some(m)).unwrap();
        prop_assert!(close(&v.balance) && s_ok(v.entropy_generation, m * wet.props.s));
        let liquid = pt(p1, ts - sub).unwrap();
        let pu = pump_raise(&liquid, p1 * 3.0, eta, PumpEfficiencyKind::Isentropic, Some(m)).unwrap();
        prop_assert!(close(&pu.balance) && s_ok(pu.entropy_generation, m * liquid.props.s));
        let f = flash_separate(&wet, p2, Some(m)).unwrap();
        prop_assert!(close(&f.balance) && s_ok(f.entropy_generation, m * wet.props.s));
        let f = flash_separate(&liquid, p2, Some(m)).unwrap();
        prop_assert!(close(&f.balance) && s_ok(f.entropy_generation, m * liquid.props.s));
        let water = pt(p1 * 1.5, (ts - sub).max(C + 10.0)).unwrap();
        if let Ok(d) = desuperheater_spray(&steam, Some(m), &water, None, SprayTarget::Superheat(spray_sh.min(sh - 0.5).max(0.1))) {
            prop_assert!(close(&d.balance) && s_ok(d.entropy_generation, m * steam.props.s));
        }
        let h = header_mix(&[(steam, m), (wet, m * 0.5)], p1).unwrap();
        prop_assert!(close(&h.balance) && s_ok(h.entropy_generation, m * steam.props.s));
        let b = boiler_fire(&pt(p1 * 1.1, (ts - sub).max(C + 10.0)).unwrap(), &steam, m, 0.02, eta).unwrap();
        prop_assert!(close(&b.balance) && s_ok(b.entropy_generation, m * steam.props.s));
        let pd = (p2 * 0.5).clamp(0.05, 1.0);
        let cold = pt(pd, C + 20.0).unwrap();
        if let Ok(d) = deaerator_balance(pd, &steam, &[(cold, m)], 0.01) {
            prop_assert!(close(&d.balance) && s_ok(d.entropy_generation, m * steam.props.s));
        }
    }
}
