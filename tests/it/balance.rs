//! Site steam balance: closure of every unit and of the site, reduction to single components
//! (the network must give exactly what the component functions give), practitioner warnings
//! and the sweep.
//!
//! Sources: the balances are the first law and conservation of mass (no external source);
//! the component references are `steamcell::plant::components` (tested on their own against
//! published cases in tests/it/plant_components.rs). The 12 % moisture limit is common practice,
//! no source. A published steam/power balance (Cengel & Boles, Example 10-8, an ideal
//! cogeneration plant) is reproduced in tests/it/textbook_cogeneration.rs.

use serde_json::{json, Value};
use steamcell::api::balance::NetworkIn;
use steamcell::api::vocab::Ctx;
use steamcell::api::{self};
use steamcell::plant::balance::{self as b, Network, Solution};
use steamcell::plant::components as c;
use steamcell::plant::warnings::Code;
use steamcell::plant::{ph, pt, sat_liquid};

const SITE: &str = include_str!("../../examples/site/site.json");

fn network(v: &Value) -> Network {
    let n: NetworkIn = serde_json::from_value(v.clone()).expect("network JSON");
    n.to_network(&Ctx::new(None, None).unwrap())
        .expect("network")
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / a.abs().max(b.abs()).max(1e-300)
}

/// Recomputes every unit's and the site's balances from the stream results alone.
fn check_closure(sol: &Solution, net: &Network) {
    let mh = |s: &str| {
        let r = &sol.streams[s];
        (r.flow, r.flow * r.state.props.h)
    };
    let scale_e = sol
        .streams
        .values()
        .map(|r| (r.flow * r.state.props.h).abs())
        .fold(0.0, f64::max);
    for (name, unit) in &net.units {
        let r = &sol.units[name];
        let (mut mi, mut ei, mut mo, mut eo) = (0.0, 0.0, 0.0, 0.0);
        for (sn, s) in &net.streams {
            if &s.to == name {
                let (m, e) = mh(sn);
                mi += m;
                ei += e;
            }
            if &s.from == name {
                let (m, e) = mh(sn);
                mo += m;
                eo += e;
            }
        }
        // heat, work and losses that cross the unit's boundary
        let q_in = r.fuel_heat_input.unwrap_or(0.0)
            + if r.kind == "pump" {
                r.power.unwrap()
            } else {
                0.0
            };
        let q_out = match r.kind {
            "boiler" => r.fuel_heat_input.unwrap() - r.duty.unwrap(),
            "turbine" => r.power.unwrap(),
            "condenser" | "user" => r.duty.unwrap(),
            _ => 0.0,
        } + r.energy_lost;
        match unit {
            b::Unit::Makeup { .. } | b::Unit::Vent => {}
            _ => {
                assert!(
                    (mi - mo - r.mass_lost).abs() <= 1e-9 * mi.abs().max(1e-6),
                    "{name}: mass {mi} in, {mo} + {} out",
                    r.mass_lost
                );
                assert!(
                    (ei + q_in - eo - q_out).abs() <= 1e-9 * (ei + q_in).abs().max(1e-6 * scale_e),
                    "{name}: energy {} in, {} out",
                    ei + q_in,
                    eo + q_out
                );
            }
        }
    }
    let t = &sol.totals;
    // fuel + make-up in; power + process + losses out
    let e_in = t.fuel_heat_input + t.makeup_energy + t.pump_power;
    let e_out = t.turbine_power
        + t.process_heat
        + t.condenser_duty
        + t.boiler_losses
        + t.vented_energy
        + t.water_lost_energy;
    assert!(
        rel(e_in, e_out) < 1e-9,
        "site energy {e_in} in, {e_out} out"
    );
    let m_out = t.vented + t.condensate_lost + t.blowdown_lost;
    assert!(
        rel(t.makeup_water, m_out) < 1e-9,
        "site mass {} in, {m_out} out",
        t.makeup_water
    );
    assert!(sol.residual < b::TOLERANCE, "residual {}", sol.residual);
}

#[test]
fn example_site_solves_and_every_balance_closes() {
    let v: Value = serde_json::from_str(SITE).unwrap();
    let net = network(&v);
    assert!(net.units.len() >= 20);
    let sol = b::solve(&net).expect("the example site solves");
    check_closure(&sol, &net);
    assert!(
        sol.iterations >= 2 && sol.iterations < 100,
        "{}",
        sol.iterations
    );
    // specifications hold
    let f = |s: &str| sol.streams[s].flow;
    assert!(rel(f("b1_steam"), 30.0) < 1e-12, "108 t/h = 30 kg/s");
    assert!(rel(f("mp_to_users"), 10.0) < 1e-12);
    assert!(rel(sol.units["CT"].power.unwrap(), 15_000.0) < 1e-9);
    // boilers: feedwater = steam / (1 - blowdown fraction)
    assert!(rel(f("fw_b1"), 30.0 / 0.98) < 1e-12);
    // desuperheater outlet at its target
    assert!((sol.streams["ds1_out"].state.props.t - 523.15).abs() < 1e-9);
    // deaerator outlet saturated liquid at 1.2 bar
    let sl = sat_liquid(0.12).unwrap();
    assert!(rel(sol.streams["da_out"].state.props.h, sl.props.h) < 1e-12);
    // process steam = sum of demands = 10 + 12 + 6 + 2 kg/s
    assert!(rel(sol.totals.process_steam, 30.0) < 1e-12);
    // every flow is forward in this site, the LLP vent closed (it opens only on upsets)
    for (n, s) in &sol.streams {
        if n == "llp_vent" {
            assert_eq!(s.flow, 0.0);
        } else {
            assert!(s.flow > 0.0, "{n}: {}", s.flow);
        }
    }
}

#[test]
fn example_site_through_the_api() {
    let v: Value = serde_json::from_str(SITE).unwrap();
    let r = api::call("balance.solve", json!({ "network": v, "units": "si" })).unwrap();
    assert!(r["residual"].as_f64().unwrap() < 1e-9);
    assert!(r["caution"]
        .as_str()
        .unwrap()
        .contains("plant's own test data"));
    assert!(r["caution"].as_str().unwrap().contains("licensed engineer"));
    // si preset: power in W
    let ct = r["units"]["CT"]["power"].as_f64().unwrap();
    assert!(rel(ct, 15e6) < 1e-9, "{ct}");
    assert_eq!(r["units_used"]["power"], "W");
    assert!(r["streams"]["b1_steam"]["state"]["T"].as_f64().unwrap() > 723.0);
    let links = r["sankey"]["links"].as_array().unwrap();
    assert!(links
        .iter()
        .any(|l| l["source"] == "fuel" && l["target"] == "B1"));
    assert!(links.iter().any(|l| l["stream"] == "b1_steam"));
    let tot = &r["totals"];
    assert!(tot["energy_residual"].as_f64().unwrap() < 1e-9);
    assert!(tot["net_power"].as_f64().unwrap() > 0.0);
}

/// boiler -> turbine -> condenser -> pump -> boiler, compared with the component functions.
fn loop_net(eta_t: f64) -> Value {
    json!({
        "units": {
            "B": { "kind": "boiler", "p": "40 bar", "T": "400 degC", "efficiency": 0.9, "steam_flow": 10 },
            "T": { "kind": "turbine", "efficiency": eta_t },
            "C": { "kind": "condenser", "p": "0.08 bar" },
            "P": { "kind": "pump", "efficiency": 0.75, "p": "40 bar" }
        },
        "streams": {
            "s1": { "from": "B", "to": "T" },
            "s2": { "from": "T", "to": "C" },
            "s3": { "from": "C", "to": "P" },
            "s4": { "from": "P", "to": "B" }
        }
    })
}

#[test]
fn a_single_turbine_gives_exactly_what_turbine_expand_gives() {
    let net = network(&loop_net(0.9));
    let sol = b::solve(&net).unwrap();
    check_closure(&sol, &net);
    let inlet = pt(4.0, 673.15).unwrap();
    let ex = c::turbine_expand(&inlet, 0.008, c::TurbineSpec::Efficiency(0.9), Some(10.0)).unwrap();
    let s2 = &sol.streams["s2"].state;
    assert_eq!(
        s2.props.h, ex.outlet.props.h,
        "same outlet enthalpy, bit for bit"
    );
    assert!(rel(sol.units["T"].power.unwrap(), ex.power.unwrap()) < 1e-12);
    assert!(rel(sol.units["T"].efficiency.unwrap(), 0.9) < 1e-9);
    // exhaust moisture above about 12 % is warned about, as the component does
    assert!(ex.moisture > 0.12);
    assert!(sol.units["T"]
        .warnings
        .iter()
        .any(|w| w.message.contains("12 %")));
    // boiler: the same fuel as boiler_fire with the solved feedwater
    let fw = sol.streams["s4"].state;
    let bf = c::boiler_fire(&fw, &inlet, 10.0, 0.0, 0.9).unwrap();
    assert!(rel(sol.units["B"].fuel_heat_input.unwrap(), bf.fuel_heat_input) < 1e-12);
    // pump: the same work as pump_raise (isentropic efficiency)
    let s3 = sol.streams["s3"].state;
    let pr = c::pump_raise(
        &s3,
        4.0,
        0.75,
        c::PumpEfficiencyKind::Isentropic,
        Some(10.0),
    )
    .unwrap();
    assert!(rel(sol.units["P"].power.unwrap(), pr.power.unwrap()) < 1e-12);
    // closed cycle: fuel = power + condenser duty + boiler losses
    let t = &sol.totals;
    assert!(
        rel(
            t.fuel_heat_input + t.pump_power,
            t.turbine_power + t.condenser_duty + t.boiler_losses
        ) < 1e-9
    );
}

#[test]
fn a_single_header_gives_exactly_what_header_mix_gives() {
    let v = json!({
        "units": {
            "M1": { "kind": "makeup", "T": "20 degC" },
            "M2": { "kind": "makeup", "T": "90 degC" },
            "H": { "kind": "header", "p": "3 bar" },
            "V": { "kind": "vent" }
        },
        "streams": {
            "a": { "from": "M1", "to": "H", "flow": 2 },
            "b": { "from": "M2", "to": "H", "flow": 3 },
            "out": { "from": "H", "to": "V" }
        }
    });
    let net = network(&v);
    let sol = b::solve(&net).unwrap();
    check_closure(&sol, &net);
    let mix = c::header_mix(
        &[
            (pt(0.3, 293.15).unwrap(), 2.0),
            (pt(0.3, 363.15).unwrap(), 3.0),
        ],
        0.3,
    )
    .unwrap();
    assert!(rel(sol.streams["out"].state.props.h, mix.outlet.props.h) < 1e-14);
    assert!(rel(sol.streams["out"].flow, 5.0) < 1e-14);
}

/// A let-down station: 40 bar, 400 degC steam throttled to 10 bar and sprayed to `target`
/// (also used by `impossible_requests.rs`).
pub(crate) fn letdown(target: &str) -> Value {
    json!({
        "units": {
            "B": { "kind": "boiler", "p": "40 bar", "T": "400 degC", "efficiency": 0.9 },
            "LV": { "kind": "valve" },
            "DS": { "kind": "desuperheater", "water": "w", "T": target },
            "LP": { "kind": "header", "p": "10 bar" },
            "U": { "kind": "user", "demand": 8, "return_T": "80 degC" },
            "MK": { "kind": "makeup", "T": "105 degC" },
            "MK2": { "kind": "makeup", "T": "20 degC" }
        },
        "streams": {
            "steam": { "from": "B", "to": "LV" },
            "ld": { "from": "LV", "to": "DS" },
            "w": { "from": "MK", "to": "DS", "p": "20 bar" },
            "out": { "from": "DS", "to": "LP" },
            "lp_u": { "from": "LP", "to": "U" },
            "fw": { "from": "MK2", "to": "B", "p": "45 bar" }
        }
    })
}

#[test]
fn a_let_down_station_gives_exactly_what_the_components_give() {
    let net = network(&letdown("220 degC"));
    let sol = b::solve(&net).unwrap();
    check_closure(&sol, &net);
    let steam = pt(4.0, 673.15).unwrap();
    let v = c::valve_throttle(&steam, 1.0, None).unwrap();
    assert!(rel(sol.streams["ld"].state.props.h, v.outlet.props.h) < 1e-14);
    let water = pt(2.0, 378.15).unwrap();
    let steam_flow = sol.streams["ld"].flow;
    let ds = c::desuperheater_spray(
        &v.outlet,
        Some(steam_flow),
        &water,
        Some(1.0),
        c::SprayTarget::Temperature(493.15),
    )
    .unwrap();
    assert!(rel(sol.streams["w"].flow, ds.spray_flow) < 1e-12);
    assert!(rel(steam_flow + ds.spray_flow, 8.0) < 1e-12);
}

#[test]
fn a_desuperheater_target_below_saturation_is_warned_about() {
    // Tsat(1 MPa) is about 179.9 degC
    let net = network(&letdown("170 degC"));
    let sol = b::solve(&net).unwrap();
    check_closure(&sol, &net);
    assert!(sol.units["DS"]
        .warnings
        .iter()
        .any(|w| w.message.contains("below saturation")));
    assert_eq!(sol.streams["out"].state.x, Some(1.0));
}

fn small_site(demand: f64, vent_flow: Option<f64>, valve_flow: Option<f64>) -> Value {
    let mut v = json!({
        "units": {
            "B": { "kind": "boiler", "p": "40 bar", "T": "400 degC", "efficiency": 0.9, "blowdown_fraction": 0.03 },
            "HP": { "kind": "header", "p": "40 bar" },
            "T": { "kind": "turbine", "efficiency": 0.75 },
            "LV": { "kind": "valve" },
            "LP": { "kind": "header", "p": "3 bar" },
            "U": { "kind": "user", "demand": demand, "return_fraction": 0.5, "return_T": "80 degC" },
            "DA": { "kind": "deaerator", "p": "1.2 bar", "steam": "lp_da", "vent_fraction": 0.01 },
            "FP": { "kind": "pump", "efficiency": 0.7, "p": "50 bar" },
            "MK": { "kind": "makeup", "T": "20 degC" },
            "VT": { "kind": "vent" }
        },
        "streams": {
            "b_hp": { "from": "B", "to": "HP" },
            "hp_t": { "from": "HP", "to": "T", "flow": 5 },
            "t_lp": { "from": "T", "to": "LP" },
            "hp_lv": { "from": "HP", "to": "LV" },
            "lv_lp": { "from": "LV", "to": "LP" },
            "lp_u": { "from": "LP", "to": "U" },
            "lp_da": { "from": "LP", "to": "DA" },
            "lp_vt": { "from": "LP", "to": "VT" },
            "u_da": { "from": "U", "to": "DA" },
            "mk_da": { "from": "MK", "to": "DA" },
            "da_fp": { "from": "DA", "to": "FP" },
            "fp_b": { "from": "FP", "to": "B" }
        }
    });
    if let Some(f) = vent_flow {
        v["streams"]["lp_vt"]["flow"] = json!(f);
    }
    if let Some(f) = valve_flow {
        v["streams"]["lv_lp"]["flow"] = json!(f);
    }
    v
}

/// (name or path, value) pairs.
type Named = Vec<(String, f64)>;

/// The reversed streams and the suggested changes of a refusal by negative flows.
fn reversed(net: &Network) -> (Named, Named) {
    match b::solve(net) {
        Err(steamcell::error::Error::Specification { diagnosis }) => {
            match &diagnosis.findings[..] {
                [b::Finding::NegativeFlows { flows, changes, .. }] => (
                    flows
                        .iter()
                        .map(|r| (r.stream.clone(), r.flow.value))
                        .collect(),
                    changes
                        .iter()
                        .map(|c| (c.path.clone(), c.by.value))
                        .collect(),
                ),
                other => panic!("{other:?}"),
            }
        }
        other => panic!("not refused by negative flows: {other:?}"),
    }
}

#[test]
fn a_let_down_valve_needed_backwards_is_refused() {
    // 5 kg/s through the turbine into LP but only 1 kg/s of demand: the let-down would have to
    // carry steam back up to the HP header (issue 15: once a warning beside a plain result)
    let (flows, changes) = reversed(&network(&small_site(1.0, Some(0.2), None)));
    let names: Vec<&str> = flows.iter().map(|(n, _)| n.as_str()).collect();
    assert_eq!(names, ["hp_lv", "lv_lp"]);
    assert!(flows.iter().all(|(_, f)| *f < 0.0));
    // the usual ways out: more demand, less turbine flow, more vented
    let paths: Vec<&str> = changes.iter().map(|(p, _)| p.as_str()).collect();
    assert_eq!(
        paths,
        ["units.U.demand", "streams.hp_t.flow", "streams.lp_vt.flow"]
    );
    assert!(changes[0].1 > 0.0 && changes[1].1 < 0.0 && changes[2].1 > 0.0);
    // each suggested change is enough (found by solving the site again with it): the demand
    // raised by it, rounded as printed, solves with the let-down just forward
    let by: f64 = format!("{:.5e}", changes[0].1).parse().unwrap();
    let sol = b::solve(&network(&small_site(1.0 + by, Some(0.2), None))).unwrap();
    let f = sol.streams["lv_lp"].flow;
    assert!((0.0..1e-4).contains(&f), "{f}");
}

#[test]
fn a_header_short_of_steam_is_refused() {
    // the let-down is closed (0 flow) and the vent closes the LP balance: 10 kg/s demand with
    // 5 kg/s from the turbine leaves the header short; its vent would run backwards
    let (flows, changes) = reversed(&network(&small_site(10.0, None, Some(0.0))));
    assert_eq!(flows[0].0, "lp_vt");
    assert!(flows[0].1 < 0.0);
    assert!(changes
        .iter()
        .any(|(p, by)| p == "streams.lv_lp.flow" && *by > 0.0));
}

#[test]
fn losses_blowdown_and_deaerator_vent_close_the_site() {
    let net = network(&small_site(8.0, Some(0.2), None));
    let sol = b::solve(&net).unwrap();
    check_closure(&sol, &net);
    let t = &sol.totals;
    let bfw = sol.streams["fp_b"].flow;
    let bs = sol.streams["b_hp"].flow;
    assert!(rel(t.blowdown_lost, bfw - bs) < 1e-12);
    assert!(rel(bs, bfw * 0.97) < 1e-12);
    // deaerator vent: 1 % of its heating steam, plus the LP vent stream
    assert!(rel(t.vented, 0.2 + 0.01 * sol.streams["lp_da"].flow) < 1e-12);
    assert!(rel(t.condensate_lost, 4.0) < 1e-12);
}

#[test]
fn a_sweep_reports_every_point_and_keeps_failures() {
    let v: Value = serde_json::from_str(SITE).unwrap();
    let r = api::call(
        "balance.sweep",
        json!({
            "network": v,
            "path": "units.LP_users.demand",
            "from": 12, "to": 18, "points": 5,
            "streams": ["llp_vent", "b2_steam"]
        }),
    )
    .unwrap();
    let pts = r["points"].as_array().unwrap();
    assert_eq!(pts.len(), 5);
    assert_eq!(r["failed"], 0);
    let b2: Vec<f64> = pts
        .iter()
        .map(|p| p["streams"]["b2_steam"]["flow"].as_f64().unwrap())
        .collect();
    for w in b2.windows(2) {
        assert!(
            w[1] > w[0],
            "more LP demand needs more steam from B2: {b2:?}"
        );
    }
    // a range that leaves the efficiency's validity: the bad points are reported, not dropped
    let r = api::call(
        "balance.sweep",
        json!({
            "network": v,
            "path": "units.BPT.efficiency",
            "from": 0.6, "to": 1.2, "points": 4
        }),
    )
    .unwrap();
    let pts = r["points"].as_array().unwrap();
    assert_eq!(pts.len(), 4);
    assert_eq!(r["failed"], 1);
    assert_eq!(pts[3]["ok"], false);
    assert!(pts[3]["error"].as_str().unwrap().contains("efficiency"));
    assert!(pts[0]["totals"]["net_power"].as_f64().unwrap() > 0.0);
}

#[test]
fn sweep_path_errors_name_the_path() {
    let v: Value = serde_json::from_str(SITE).unwrap();
    let e = api::call(
        "balance.sweep",
        json!({ "network": v, "path": "units.NOPE.demand", "from": 1, "to": 2, "points": 2 }),
    )
    .unwrap_err();
    assert!(e.message.contains("units.NOPE"), "{}", e.message);
}

#[test]
fn a_warm_start_reproduces_the_cold_answer() {
    let v: Value = serde_json::from_str(SITE).unwrap();
    let net = network(&v);
    let cold = b::solve(&net).unwrap();
    let warm = b::solve_from(&net, Some(&cold)).unwrap();
    assert!(warm.iterations <= cold.iterations);
    for (n, s) in &cold.streams {
        assert!(rel(s.flow, warm.streams[n].flow) < 1e-9, "{n}");
    }
    let _ = ph; // keep the import list honest for future checks
}

/// A flash vessel fed with hot condensate at 10 bar, flashed at 2 bar: the network gives what
/// `flash_separate` gives, and the vessel's balance closes.
#[test]
fn a_single_flash_vessel_gives_exactly_what_flash_separate_gives() {
    let v = json!({
        "units": {
            "M": { "kind": "makeup", "T": "170 degC" },
            "F": { "kind": "flash", "p": "2 bar", "vapour": "v" },
            "V1": { "kind": "vent" },
            "V2": { "kind": "vent" }
        },
        "streams": {
            "a": { "from": "M", "to": "F", "flow": 5, "p": "10 bar" },
            "v": { "from": "F", "to": "V1" },
            "l": { "from": "F", "to": "V2" }
        }
    });
    let net = network(&v);
    let sol = b::solve(&net).unwrap();
    check_closure(&sol, &net);
    let inlet = pt(1.0, 443.15).unwrap();
    let f = c::flash_separate(&inlet, 0.2, Some(5.0)).unwrap();
    assert!(rel(sol.streams["v"].flow, f.vapour_flow) < 1e-12);
    assert!(rel(sol.streams["l"].flow, f.liquid_flow) < 1e-12);
    assert!(rel(sol.streams["v"].state.props.h, f.vapour.props.h) < 1e-14);
    assert!(rel(sol.streams["l"].state.props.h, f.liquid.props.h) < 1e-14);
    assert_eq!(sol.streams["v"].state.x, Some(1.0));
}

fn exchanger_net(hot_out: Value) -> Value {
    json!({
        "units": {
            "M1": { "kind": "makeup", "T": "170 degC" },
            "M2": { "kind": "makeup", "T": "20 degC" },
            "X": { "kind": "exchanger", "hot_in": "hi", "hot_out": "ho" },
            "V1": { "kind": "vent" },
            "V2": { "kind": "vent" }
        },
        "streams": {
            "hi": { "from": "M1", "to": "X", "flow": 5, "p": "10 bar" },
            "ho": hot_out,
            "ci": { "from": "M2", "to": "X", "flow": 8, "p": "3 bar" },
            "co": { "from": "X", "to": "V2" }
        }
    })
}

/// Hot water 170 -> 60 degC heating cold water of a known flow: the network gives what
/// `exchanger_balance` gives; fixing the hot outlet by h instead of T gives the same answer.
#[test]
fn a_single_exchanger_gives_exactly_what_exchanger_balance_gives() {
    let v = exchanger_net(json!({ "from": "X", "to": "V1", "T": "60 degC" }));
    let net = network(&v);
    let sol = b::solve(&net).unwrap();
    check_closure(&sol, &net);
    let hot = c::Side {
        inlet: pt(1.0, 443.15).unwrap(),
        outlet: Some(pt(1.0, 333.15).unwrap()),
        flow: Some(5.0),
    };
    let cold = c::Side {
        inlet: pt(0.3, 293.15).unwrap(),
        outlet: None,
        flow: Some(8.0),
    };
    let x = c::exchanger_balance(&hot, &cold).unwrap();
    assert!(rel(sol.units["X"].duty.unwrap(), x.duty) < 1e-12);
    assert!(rel(sol.streams["co"].state.props.h, x.cold_out.props.h) < 1e-12);
    assert!(rel(sol.streams["co"].state.props.t, x.cold_out.props.t) < 1e-12);

    // The same hot outlet given by its enthalpy (in kJ/kg).
    let h = sol.streams["ho"].state.props.h;
    let v = exchanger_net(json!({ "from": "X", "to": "V1", "h": h }));
    let net_h = network(&v);
    let sol_h = b::solve(&net_h).unwrap();
    check_closure(&sol_h, &net_h);
    // (p, h) -> T holds h to the solver's 1e-11 relative, T here to about 2e-12.
    let t_h = sol_h.streams["ho"].state.props.t;
    assert!(
        rel(t_h, 333.15) < 1e-10,
        "T = {t_h}, p = {}",
        sol_h.streams["ho"].state.props.p
    );
    assert!(rel(sol_h.units["X"].duty.unwrap(), x.duty) < 1e-9);
}

/// A model built once (the network checked and every pressure resolved) solves to the same
/// answer as `solve`, bit for bit, cold and from a guess; a refused network is refused by the
/// build step already, with the same error.
#[test]
fn a_model_built_once_solves_like_solve() {
    let v: Value = serde_json::from_str(SITE).unwrap();
    let net = network(&v);
    let model = b::Model::build(&net).expect("the example site is well specified");
    // Debug text: every f64 printed exactly (shortest round trip), NaN fields included
    let same = |a: &Solution, b: &Solution| format!("{a:?}") == format!("{b:?}");
    let cold = model.solve().unwrap();
    assert!(same(&cold, &b::solve(&net).unwrap()));
    let warm = model.solve_from(Some(&cold)).unwrap();
    assert!(same(&warm, &b::solve_from(&net, Some(&cold)).unwrap()));

    let mut v = v;
    v["units"]["BFP"]
        .as_object_mut()
        .unwrap()
        .remove("efficiency");
    let net = network(&v);
    let e = b::Model::build(&net).expect_err("a pump without efficiency");
    assert!(
        matches!(&e, steamcell::error::Error::Specification { .. }),
        "{e:?}"
    );
    assert_eq!(e, b::solve(&net).unwrap_err());
    assert!(
        e.to_string().contains("pump BFP: give its efficiency"),
        "{e}"
    );
}

/// The site balance is validated once: after `Model::build` the solver needs no `expect`,
/// `unwrap` or `unreachable!` on specification values, and behaviour per unit kind is reached
/// through the unit traits, never through a `match` with a fallback arm (a new kind must
/// not compile silently). Source: the project's own rule (DEVELOPERS.md, invariants).
#[test]
fn the_balance_solver_has_no_fallbacks() {
    fn files(dir: &std::path::Path, out: &mut Vec<std::path::PathBuf>) {
        for e in std::fs::read_dir(dir).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                files(&p, out);
            } else if p.extension().is_some_and(|x| x == "rs") {
                out.push(p);
            }
        }
    }
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("crates/steamcell-core/src/plant/balance");
    let mut list = Vec::new();
    files(&root, &mut list);
    assert!(list.len() > 10, "{list:?}");
    let mut bad = Vec::new();
    for f in &list {
        let text = std::fs::read_to_string(f).unwrap();
        for (i, line) in text.lines().enumerate() {
            let code = line.split("//").next().unwrap_or("");
            for pat in ["unreachable!", ".expect(", ".unwrap()", "_ =>"] {
                if code.contains(pat) {
                    bad.push(format!("{}:{}: {}", f.display(), i + 1, line.trim()));
                }
            }
        }
    }
    assert!(bad.is_empty(), "{}", bad.join("\n"));
}

// ---- issue 15, reproduction 6: negative flows and continuous venting

/// The example site as it was first written (the condensing turbine's extraction to the LLP
/// header fixed, the LLP vent taking the rest) with the extraction at `ct_to_llp` kg/s. At
/// 10 kg/s it vents about 3.15 kg/s for ever; at 5 kg/s the vent stream would have to run
/// backwards (-1.505 kg/s; with the deaerator's own vent, `vented_steam` was -1.48 kg/s), which
/// was answered as a plain number.
fn venting_site(ct_to_llp: f64) -> Value {
    let mut v: Value = serde_json::from_str(SITE).unwrap();
    if let Some(s) = v["streams"]["llp_vent"].as_object_mut() {
        s.remove("flow");
    }
    v["streams"]["ct_to_llp"]["flow"] = json!(format!("{ct_to_llp} kg/s"));
    v
}

/// Every bare number of a mass flow in `v` written as a text in kg/s, so that the network means
/// the same in any preset.
fn flows_in_kg_s(mut v: Value) -> Value {
    for (_, u) in v["units"].as_object_mut().unwrap() {
        for f in ["demand", "steam_flow"] {
            if let Some(x) = u.get(f).and_then(Value::as_f64) {
                u[f] = json!(format!("{x} kg/s"));
            }
        }
    }
    for (_, s) in v["streams"].as_object_mut().unwrap() {
        if let Some(x) = s.get("flow").and_then(Value::as_f64) {
            s["flow"] = json!(format!("{x} kg/s"));
        }
    }
    v
}

#[test]
fn negative_flows_are_refused_with_the_streams_and_what_to_change() {
    // in the us preset: the flow and the change are in lb/h
    let e = api::call(
        "balance.solve",
        json!({ "network": flows_in_kg_s(venting_site(5.0)), "units": "us" }),
    )
    .unwrap_err();
    let m = &e.message;
    assert!(m.contains("llp_vent"), "{m}");
    assert!(m.contains("lb/h"), "{m}");
    assert!(!m.contains("kg/s"), "{m}");
    // the flow: about -1.505 kg/s = -11,944 lb/h (1 kg/s = 7936.64 lb/h)
    assert!(m.contains("-1194"), "{m}");
    // what to change: more extraction into LLP
    assert!(m.contains("streams.ct_to_llp.flow"), "{m}");
    assert!(!m.contains('\n'), "one line: {m}");
    let over = &e.data["diagnosis"]["over"];
    assert_eq!(over[0]["code"], "negative_flows", "{over}");
    assert_eq!(over[0]["streams"], json!(["llp_vent"]), "{over}");
    // the same network in the engineering preset speaks kg/s
    let e = api::call("balance.solve", json!({ "network": venting_site(5.0) })).unwrap_err();
    assert!(
        e.message.contains("-1.50") && e.message.contains("kg/s"),
        "{}",
        e.message
    );
}

#[test]
fn a_sweep_marks_points_with_negative_flows_not_ok() {
    let r = api::call(
        "balance.sweep",
        json!({
            "network": venting_site(10.0),
            "path": "streams.ct_to_llp.flow",
            "from": 4, "to": 10, "points": 4,
            "streams": ["llp_vent"]
        }),
    )
    .unwrap();
    let pts = r["points"].as_array().unwrap();
    // the LLP header balances at about 6.6 kg/s: 4 and 6 would need the vent reversed
    assert_eq!(r["failed"], 2, "{r}");
    for p in &pts[..2] {
        assert_eq!(p["ok"], false);
        let e = p["error"].as_str().unwrap();
        assert!(e.contains("llp_vent") && e.contains("negative"), "{e}");
        assert!(p["totals"].is_null());
    }
    for p in &pts[2..] {
        assert_eq!(p["ok"], true);
        assert!(p["streams"]["llp_vent"]["flow"].as_f64().unwrap() > 0.0);
    }
}

#[test]
fn a_header_venting_steam_continuously_is_warned_about() {
    let net = network(&venting_site(10.0));
    let sol = b::solve(&net).unwrap();
    check_closure(&sol, &net);
    let vent = sol.streams["llp_vent"].flow;
    assert!((vent - 3.15).abs() < 0.05, "{vent}");
    let w: Vec<_> = sol.units["LLP"]
        .warnings
        .iter()
        .filter(|w| w.code == Code::SteamVented && w.message.contains("llp_vent"))
        .collect();
    assert_eq!(w.len(), 1, "{:?}", sol.units["LLP"].warnings);
    assert!(w[0].message.contains("a year"), "{}", w[0]);
}

#[test]
fn the_example_site_does_not_vent_steam() {
    let v: Value = serde_json::from_str(SITE).unwrap();
    let net = network(&v);
    let sol = b::solve(&net).unwrap();
    // the LLP vent is closed in normal operation; the extraction follows the LLP demand
    assert_eq!(sol.streams["llp_vent"].flow, 0.0);
    assert!(sol.streams["ct_to_llp"].flow > 0.0);
    // what is vented is the deaerator's purge only: 0.5 % of its heating steam
    assert!(rel(sol.totals.vented, 0.005 * sol.streams["llp_to_da"].flow) < 1e-12);
    assert!(
        !sol.warnings.iter().any(|w| w.code == Code::SteamVented),
        "{:?}",
        sol.warnings
    );
}

/// Issue 23, reproduction 4: a site exchanger whose hot side leaves hotter than it came (heat
/// from the cold side to the hot side) or colder than the cold side enters (a temperature
/// cross) was answered with a plain balance and a warning (heat_flows_backwards,
/// temperature_cross_at_end), while exchanger.balance refuses the same exchanger (1009). Both
/// are refused now, as exchanger.balance refuses them (second law), in the request's units, and
/// a sweep marks such points not ok with the reason. Hot 170 degC water (5 kg/s) heats 8 kg/s of
/// 20 degC water: leaving at 95 degC it gives 5/8 of its drop to the cold side (about 67 degC),
/// no cross.
#[test]
fn a_site_exchanger_passing_heat_from_cold_to_hot_is_refused() {
    let solve = |hot_out_t: &str, units: Value| {
        api::call(
            "balance.solve",
            json!({"network": exchanger_net(json!({ "from": "X", "to": "V1", "T": hot_out_t })), "units": units}),
        )
    };
    let e = solve("171 degC", json!("us")).expect_err("backwards");
    assert_eq!(e.code, 1009, "{e}");
    assert!(
        e.message.starts_with(
            "exchanger X: heat would flow from the cold side to the hot side (second law"
        ) && e
            .message
            .contains("the hot stream ho leaves at 339.8 degF, hotter than it enters at 338 degF"),
        "{}",
        e.message
    );
    let e = solve("15 degC", json!({"preset": "bar", "flow": "t/h"})).expect_err("cross");
    assert_eq!(e.code, 1009, "{e}");
    assert!(
        e.message.starts_with("exchanger X: temperature cross: at the cold end (hot outlet, cold inlet) the hot stream is at 15 degC and the cold stream at 20 degC, 5 K hotter"),
        "{}",
        e.message
    );
    let r = solve("95 degC", json!(null)).expect("feasible");
    assert!(r["warnings"].as_array().unwrap().is_empty(), "{r}");
    let r = api::call(
        "balance.sweep",
        json!({
            "network": exchanger_net(json!({ "from": "X", "to": "V1", "T": "95 degC" })),
            "path": "streams.ho.T",
            "from": "15 degC", "to": "175 degC", "points": 3,
            "streams": ["co"]
        }),
    )
    .unwrap();
    let pts = r["points"].as_array().unwrap();
    assert_eq!(r["failed"], 2, "{r}");
    let reason = |i: usize| pts[i]["error"].as_str().unwrap_or("").to_string();
    assert_eq!(pts[0]["ok"], false);
    assert!(
        reason(0).contains("exchanger X: temperature cross"),
        "{}",
        reason(0)
    );
    assert_eq!(pts[1]["ok"], true);
    assert!(pts[1]["warnings"].as_array().unwrap().is_empty());
    assert_eq!(pts[2]["ok"], false);
    assert!(
        reason(2).contains("exchanger X: heat would flow from the cold side to the hot side"),
        "{}",
        reason(2)
    );
}

/// Issue 23, reproduction 3: a site exchanger asked for more heat than its hot side holds (1
/// kg/s of 170 degC water to heat 8 kg/s from 20 to 120 degC) failed with "h = -2637.92 kJ/kg is
/// below the lowest value ... of IAPWS-IF97", naming neither the exchanger nor the request's
/// units. It is refused as infeasible, naming the exchanger, its stream and the duty, in the
/// request's units.
#[test]
fn a_site_exchanger_driven_too_far_names_itself_in_the_callers_units() {
    let mut net = exchanger_net(json!({ "from": "X", "to": "V1" }));
    net["streams"]["hi"]["flow"] = json!("1 kg/s");
    net["streams"]["ci"]["flow"] = json!("8 kg/s");
    net["streams"]["co"]["T"] = json!("120 degC");
    for (units, h_unit, flow) in [
        (json!(null), "kJ/kg", "a hot flow of 1 kg/s"),
        (json!("us"), "Btu/lb", "a hot flow of 7936.64 lb/h"),
        (
            json!({"preset": "bar", "flow": "t/h"}),
            "kJ/kg",
            "a hot flow of 3.6 t/h",
        ),
    ] {
        let e = api::call("balance.solve", json!({"network": net, "units": units}))
            .expect_err("refused");
        assert_eq!(e.code, 1009, "{units}: {e}");
        assert!(
            e.message.starts_with(
                "exchanger X: the energy balance puts the hot outlet stream ho at h = -"
            ) && e.message.contains(&format!(" {h_unit} (a duty of "))
                && e.message.contains(flow)
                && e.message.contains("temperature cross"),
            "{units}: {}",
            e.message
        );
    }
}
