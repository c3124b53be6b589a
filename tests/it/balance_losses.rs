//! Leaks, steam traps and lines as units of a site balance (`balance.solve`): their flows and
//! heat losses are those of `orifice.flow` and `pipe.flow` for the solved states, every balance
//! closes with them, their yearly cost is in the site totals, a sweep shows what fixing one
//! saves, and bad input is refused with the field named.
//!
//! Sources: the flows through holes and along lines are checked against the project's own
//! `orifice.flow` and `pipe.flow` (each tested against its published sources in
//! tests/it/distribution.rs); the costing is checked by hand calculation (marked); the
//! balances are the first law and conservation of mass. The network is our invented example
//! examples/site/site_with_losses.json.

use serde_json::{json, Value};
use steamcell::api::balance::NetworkIn;
use steamcell::api::vocab::Ctx;
use steamcell::api::{self};
use steamcell::plant::balance::{self as b, Network, Solution};
use steamcell::plant::correlations::FrictionModel;
use steamcell::plant::orifice::{orifice_flow, Approach, Flashing, OrificeSpec};
use steamcell::plant::pipe::{self, Layer, LineSpec, Surroundings, Wall};
use steamcell::plant::pt;
use steamcell::plant::warnings::Code;

const LOSSES: &str = include_str!("../../examples/site/site_with_losses.json");

fn site() -> Value {
    serde_json::from_str(LOSSES).unwrap()
}

fn network(v: &Value) -> Network {
    let n: NetworkIn = serde_json::from_value(v.clone()).expect("network JSON");
    n.to_network(&Ctx::new(None, None).unwrap())
        .expect("network")
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / a.abs().max(b.abs()).max(1e-300)
}

/// Every unit's mass and energy balance recomputed from the stream results, with the heat,
/// work and losses crossing its boundary, and the site's (first law, conservation of mass).
fn check_closure(sol: &Solution, net: &Network) {
    let scale_e = sol
        .streams
        .values()
        .map(|r| (r.flow * r.state.props.h).abs())
        .fold(0.0, f64::max);
    for (name, unit) in &net.units {
        let r = &sol.units[name];
        let (mut mi, mut ei, mut mo, mut eo) = (0.0, 0.0, 0.0, 0.0);
        for (sn, s) in &net.streams {
            let x = &sol.streams[sn];
            if &s.to == name {
                mi += x.flow;
                ei += x.flow * x.state.props.h;
            }
            if &s.from == name {
                mo += x.flow;
                eo += x.flow * x.state.props.h;
            }
        }
        let q_in = r.fuel_heat_input.unwrap_or(0.0)
            + if r.kind == "pump" {
                r.power.unwrap()
            } else {
                0.0
            };
        let q_out = match r.kind {
            "boiler" => r.fuel_heat_input.unwrap() - r.duty.unwrap(),
            "turbine" => r.power.unwrap(),
            "condenser" | "user" | "line" => r.duty.unwrap(),
            _ => 0.0,
        } + r.energy_lost;
        if matches!(unit, b::Unit::Makeup { .. } | b::Unit::Vent) {
            continue;
        }
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
    let t = &sol.totals;
    let e_in = t.fuel_heat_input + t.makeup_energy + t.pump_power;
    let e_out = t.turbine_power
        + t.process_heat
        + t.condenser_duty
        + t.boiler_losses
        + t.vented_energy
        + t.water_lost_energy
        + t.loss_discharged_energy
        + t.line_heat_loss;
    assert!(
        rel(e_in, e_out) < 1e-9,
        "site energy {e_in} in, {e_out} out"
    );
    let m_out = t.vented + t.condensate_lost + t.blowdown_lost + t.loss_discharged;
    assert!(
        rel(t.makeup_water, m_out) < 1e-9,
        "site mass {} in, {m_out} out",
        t.makeup_water
    );
    assert!(sol.residual < b::TOLERANCE, "residual {}", sol.residual);
}

fn solved() -> (Network, Solution) {
    let net = network(&site());
    let sol = b::solve(&net).expect("the example with losses solves");
    (net, sol)
}

#[test]
fn the_example_with_losses_closes_every_balance() {
    let (net, sol) = solved();
    check_closure(&sol, &net);
    for (n, s) in &sol.streams {
        assert!(s.flow >= 0.0, "{n}: {}", s.flow);
    }
    let t = &sol.totals;
    assert!(t.leak_flow > 0.0 && t.trap_steam > 0.0 && t.line_heat_loss > 0.0);
    assert_eq!(t.steam_lost, t.leak_flow + t.trap_steam);
    // what the two leaks to atmosphere discharge leaves the site
    let leaks = sol.streams["hp_leak"].flow + sol.streams["mp_leak"].flow;
    assert!(rel(t.loss_discharged, leaks) < 1e-15);
    // the losses' energy-flow links end at the losses boundary
    for u in [
        "HP_flange_leak",
        "MP_gland_leak",
        "LP_main",
        "LP_bare_valve",
    ] {
        assert!(
            sol.links
                .iter()
                .any(|l| l.source == u && l.target == "losses" && l.energy > 0.0),
            "{u}"
        );
    }
}

/// The spec of `orifice.flow` for a leak of the example: a sharp-edged hole (cd 0.61) to the
/// ambient pressure, from the stagnation state.
fn hole(d: f64, downstream_p: f64) -> OrificeSpec {
    OrificeSpec {
        diameter: d,
        cd: 0.61,
        downstream_p,
        flashing: Flashing::Equilibrium,
        approach: Approach::Stagnation,
    }
}

#[test]
fn a_leak_flows_exactly_as_orifice_flow_from_the_header_state() {
    let (_, sol) = solved();
    for (leak, stream, d) in [
        ("HP_flange_leak", "hp_leak", 0.003),
        ("MP_gland_leak", "mp_leak", 0.002),
    ] {
        let s = &sol.streams[stream];
        let want = orifice_flow(&s.state, &hole(d, 0.101325)).unwrap();
        assert_eq!(s.flow, want.mass_flow, "{leak}: the stream's flow");
        let loss = sol.units[leak].loss.unwrap();
        assert_eq!(loss.steam, want.mass_flow, "{leak}: its loss");
        assert_eq!(loss.choked, Some(want.choked));
        assert!(want.choked, "steam at 15 and 60 bar to atmosphere chokes");
    }
    // the same through the API's orifice.flow, from the header state as p and h: the state is
    // solved again from (p, h), so to 1e-9
    let s = &sol.streams["hp_leak"].state;
    let r = api::call(
        "orifice.flow",
        json!({ "inlet": { "p": s.props.p, "h": s.props.h }, "diameter": "3 mm" }),
    )
    .unwrap();
    let api_flow = r["mass_flow"].as_f64().unwrap();
    assert!(
        rel(api_flow, sol.streams["hp_leak"].flow) < 1e-9,
        "{api_flow}"
    );
}

#[test]
fn a_failed_trap_passes_what_orifice_flow_gives_and_a_healthy_one_none() {
    let (_, sol) = solved();
    let s = &sol.streams["mp_trap_steam"];
    // the trap discharges into the condensate header at 2 bar
    let want = orifice_flow(
        &s.state,
        &hole(0.005, sol.streams["mp_trap_out"].state.props.p),
    )
    .unwrap();
    assert_eq!(s.flow, want.mass_flow);
    assert_eq!(
        sol.units["MP_users_trap"].loss.unwrap().steam,
        want.mass_flow
    );
    assert_eq!(sol.totals.trap_steam, want.mass_flow);
    // the healthy trap on the main's drain passes condensate only
    assert_eq!(sol.units["LP_main_trap"].loss.unwrap().steam, 0.0);
    // the failed trap's condensate and live steam reach the condensate header together
    let out = sol.streams["mp_trap_out"].flow;
    let cond = sol.streams["mp_users_cond"].flow;
    assert!(rel(out, cond + want.mass_flow) < 1e-12);
    // healthy again: no live steam, and the steam stream carries nothing
    let mut v = site();
    v["units"]["MP_users_trap"]["state"] = json!("healthy");
    let sol = b::solve(&network(&v)).unwrap();
    assert_eq!(sol.streams["mp_trap_steam"].flow, 0.0);
    assert_eq!(sol.totals.trap_steam, 0.0);
}

/// The `pipe.flow` spec of a line of the example (engineering defaults: roughness 0.045 mm,
/// steel wall 50 W/(m K), Colebrook, air at 20 degC and the ambient pressure, still).
fn line_spec(length: f64, layers: Vec<Layer>, emissivity: f64, k_total: f64) -> LineSpec {
    LineSpec {
        length,
        roughness: pipe::ROUGHNESS_STEEL,
        wall: Wall {
            inner_diameter: 0.303,
            thickness: 0.0095,
            conductivity: pipe::K_STEEL,
            layers,
            emissivity,
        },
        k_total,
        equivalent_length: 0.0,
        elevation_change: 0.0,
        friction: FrictionModel::Colebrook,
        segments: pipe::default_segments(length),
        air: Surroundings {
            air_t: 293.15,
            air_p: 0.101325,
            wind: 0.0,
            radiant_t: 293.15,
        },
    }
}

#[test]
fn a_line_loses_exactly_the_heat_pipe_flow_gives() {
    let (_, sol) = solved();
    let main = line_spec(
        250.0,
        vec![Layer {
            thickness: 0.08,
            conductivity: 0.05,
        }],
        0.1,
        4.0 * 0.3 + 0.15,
    );
    let bare = line_spec(2.0, vec![], pipe::EMISSIVITY_BARE, 0.0);
    for (line, inlet, spec) in [
        ("LP_main", "lp_to_main", main),
        ("LP_bare_valve", "lp_main_out", bare),
    ] {
        let s = &sol.streams[inlet];
        let want = pipe::line_flow(&s.state, s.flow, &spec).unwrap();
        let r = &sol.units[line];
        let loss = r.loss.unwrap();
        assert_eq!(loss.heat, want.heat_loss, "{line}");
        assert_eq!(r.duty, Some(want.heat_loss), "{line}");
        assert_eq!(loss.pressure_drop, Some(want.pressure_drop), "{line}");
        assert_eq!(loss.surface_t, Some(want.max_surface_t), "{line}");
        assert_eq!(
            loss.condensate,
            want.condensate.unwrap_or(0.0) * 1.0,
            "{line}"
        );
    }
    // through the API's pipe.flow, from the inlet state as p and h (to 1e-9)
    let s = &sol.streams["lp_to_main"];
    let r = api::call(
        "pipe.flow",
        json!({
            "inlet": { "p": s.state.props.p, "h": s.state.props.h, "flow": s.flow },
            "length": "250 m", "inner_diameter": "303 mm", "wall_thickness": "9.5 mm",
            "insulation": [{ "thickness": "80 mm", "conductivity": "0.05 W/(m K)" }],
            "jacket": { "emissivity": 0.1 },
            "fittings": [{ "K": 0.3, "count": 4 }, { "K": 0.15 }]
        }),
    )
    .unwrap();
    let q = r["heat_loss"].as_f64().unwrap();
    assert!(
        rel(
            q,
            sol.totals.line_heat_loss - sol.units["LP_bare_valve"].duty.unwrap()
        ) < 1e-9
    );
    // the outlet: the inlet's enthalpy less the heat lost per unit flow, at the outlet stream's
    // pressure (the line's own drop is reported, not imposed)
    let out = &sol.streams["lp_main_out"];
    let hin = s.state.props.h;
    // (the (p, h) solver returns a state whose h matches the one asked to about 1e-11
    // relative, so not to the last bit)
    let want_h = hin - sol.units["LP_main"].duty.unwrap() / s.flow;
    assert!(
        rel(out.state.props.h, want_h) < 1e-11,
        "{} vs {want_h}",
        out.state.props.h
    );
    assert_eq!(out.state.props.p, s.state.props.p);
}

/// A small site making saturated steam, with a long bare line whose condensate leaves through
/// a drain to a trap discharging to atmosphere: boiler -> header -> line -> user.
fn drained_line() -> Value {
    json!({
        "units": {
            "MK": { "kind": "makeup", "T": "20 degC" },
            "P": { "kind": "pump", "p": "12 bar", "efficiency": 0.7 },
            "B": { "kind": "boiler", "efficiency": 0.85 },
            "H": { "kind": "header", "p": "10 bar" },
            "L": { "kind": "line", "length": "400 m", "inner_diameter": "102.3 mm",
                   "wall_thickness": "6 mm", "drain": "l_drain" },
            "TR": { "kind": "trap" },
            "U": { "kind": "user", "demand": "1 kg/s", "return_T": "80 degC" }
        },
        "streams": {
            "mk_p": { "from": "MK", "to": "P" },
            "p_b": { "from": "P", "to": "B" },
            "b_h": { "from": "B", "to": "H", "x": 1 },
            "h_l": { "from": "H", "to": "L" },
            "l_u": { "from": "L", "to": "U" },
            "l_drain": { "from": "L", "to": "TR" }
        }
    })
}

#[test]
fn a_drained_line_sends_its_condensate_to_the_trap_and_closes() {
    let v = drained_line();
    let net = network(&v);
    let sol = b::solve(&net).unwrap();
    check_closure(&sol, &net);
    let inlet = &sol.streams["h_l"];
    let spec = LineSpec {
        length: 400.0,
        roughness: pipe::ROUGHNESS_STEEL,
        wall: Wall {
            inner_diameter: 0.1023,
            thickness: 0.006,
            conductivity: pipe::K_STEEL,
            layers: vec![],
            emissivity: pipe::EMISSIVITY_BARE,
        },
        k_total: 0.0,
        equivalent_length: 0.0,
        elevation_change: 0.0,
        friction: FrictionModel::Colebrook,
        segments: pipe::default_segments(400.0),
        air: Surroundings {
            air_t: 293.15,
            air_p: 0.101325,
            wind: 0.0,
            radiant_t: 293.15,
        },
    };
    let want = pipe::line_flow(&inlet.state, inlet.flow, &spec).unwrap();
    let cond = want.condensate.unwrap();
    assert!(cond > 0.0, "a bare saturated-steam line condenses");
    let drain = &sol.streams["l_drain"];
    assert!(rel(drain.flow, cond) < 1e-12, "{} vs {cond}", drain.flow);
    assert_eq!(
        drain.state.x,
        Some(0.0),
        "the drain carries saturated liquid"
    );
    assert!(rel(sol.totals.line_condensate, cond) < 1e-12);
    assert_eq!(sol.units["L"].loss.unwrap().heat, want.heat_loss);
    // the user gets the demand; the make-up replaces it and what the trap discharges
    assert!(rel(sol.streams["l_u"].flow, 1.0) < 1e-12);
    assert!(rel(sol.totals.makeup_water, 1.0 + cond) < 1e-12);
    assert!(rel(sol.totals.loss_discharged, cond) < 1e-12);
    // the bare line's surface is far above the touch limit: warned about, in the line's result
    assert!(sol.units["L"]
        .warnings
        .iter()
        .any(|w| w.code == Code::SurfaceAboveTouchLimit));
    // without the drain the condensate stays in the steam as moisture, which is warned about
    let mut v = drained_line();
    v["units"]["L"].as_object_mut().unwrap().remove("drain");
    v["units"].as_object_mut().unwrap().remove("TR");
    v["streams"].as_object_mut().unwrap().remove("l_drain");
    let net = network(&v);
    let sol = b::solve(&net).unwrap();
    check_closure(&sol, &net);
    assert!(sol.streams["l_u"].state.x.unwrap() < 1.0);
    assert!(sol.units["L"]
        .warnings
        .iter()
        .any(|w| w.code == Code::LineCondensate && w.message.contains("carried on as moisture")));
}

#[test]
fn the_cost_of_the_losses_is_in_the_totals_by_hand_calculation() {
    let (_, sol) = solved();
    let t = &sol.totals;
    // Hand calculation (ours, from the costing's definition): every loss valued as boiler
    // heat; leaks and traps m (h - h_makeup(p)), lines their heat; the boiler efficiency is
    // the site's own boilers' (heat to steam over fuel); 8000 h; 30 per MWh of fuel.
    let eta = (t.fuel_heat_input - t.boiler_losses) / t.fuel_heat_input;
    assert_eq!(t.loss_boiler_efficiency, Some(eta));
    let makeup_t = 293.15; // the site's make-up water, 20 degC
    assert_eq!(t.loss_makeup_t, makeup_t);
    let mut heat = 0.0;
    for (unit, stream) in [
        ("HP_flange_leak", "hp_leak"),
        ("MP_gland_leak", "mp_leak"),
        ("MP_users_trap", "mp_trap_steam"),
    ] {
        let s = &sol.streams[stream];
        let hm = pt(s.state.props.p, makeup_t).unwrap().props.h;
        let q = s.flow * (s.state.props.h - hm);
        assert!(
            rel(sol.units[unit].loss.unwrap().makeup_heat, q) < 1e-12,
            "{unit}"
        );
        heat += q;
    }
    heat += sol.units["LP_main"].duty.unwrap() + sol.units["LP_bare_valve"].duty.unwrap();
    assert!(rel(t.loss_heat, heat) < 1e-12, "{} vs {heat}", t.loss_heat);
    assert!(rel(t.loss_fuel.unwrap(), heat / eta) < 1e-12);
    let seconds = 8000.0 * 3600.0;
    let fuel_kj = heat / eta * seconds;
    assert!(rel(t.loss_fuel_per_year.unwrap(), fuel_kj) < 1e-12);
    let cost = fuel_kj / 3.6e6 * 30.0; // kJ -> MWh, 30 per MWh
    assert!(
        rel(t.loss_cost_per_year.unwrap(), cost) < 1e-12,
        "{:?} vs {cost}",
        t.loss_cost_per_year
    );
    assert!(rel(t.steam_lost_per_year, t.steam_lost * seconds) < 1e-12);
    // and on the wire, in the preset's units: t per year, MWh per year
    let r = api::call("balance.solve", json!({ "network": site() })).unwrap();
    let w = &r["totals"];
    assert!(
        rel(
            w["steam_lost_per_year"].as_f64().unwrap(),
            t.steam_lost * seconds / 1000.0
        ) < 1e-12
    );
    assert!(rel(w["loss_fuel_per_year"].as_f64().unwrap(), fuel_kj / 3.6e6) < 1e-12);
    assert!(rel(w["loss_cost_per_year"].as_f64().unwrap(), cost) < 1e-12);
    assert_eq!(
        r["costing"]["boiler_efficiency_source"],
        "the site's boilers"
    );
    assert_eq!(r["costing"]["makeup_T"], 20.0);
    // a steam price instead: the cost is steam x price (lines: the steam that carries the heat)
    let mut v = site();
    v["costing"] =
        json!({ "hours_per_year": 8000, "steam_cost": "25 /t", "boiler_efficiency": 0.8 });
    let sol = b::solve(&network(&v)).unwrap();
    let mut steam_t = 0.0;
    for u in sol.units.values() {
        if let Some(l) = u.loss {
            steam_t += l.yearly.steam / 1000.0;
        }
    }
    assert!(rel(sol.totals.loss_cost_per_year.unwrap(), 25.0 * steam_t) < 1e-12);
    assert_eq!(sol.totals.loss_boiler_efficiency, Some(0.8));
}

#[test]
fn a_sweep_of_a_leak_to_zero_shows_the_saving() {
    let r = api::call(
        "balance.sweep",
        json!({
            "network": site(),
            "path": "units.HP_flange_leak.diameter",
            "from": "3 mm", "to": 0, "points": 4,
            "streams": ["hp_leak"]
        }),
    )
    .unwrap();
    assert_eq!(r["failed"], 0, "{r}");
    assert_eq!(r["unit"], "m");
    let pts = r["points"].as_array().unwrap();
    let total = |i: usize, k: &str| pts[i]["totals"][k].as_f64().unwrap();
    assert_eq!(pts[3]["value"], 0.0, "the last point is exactly zero");
    assert_eq!(pts[3]["streams"]["hp_leak"]["flow"], 0.0);
    for i in 1..4 {
        assert!(total(i, "leak_flow") < total(i - 1, "leak_flow"));
        assert!(total(i, "loss_cost_per_year") < total(i - 1, "loss_cost_per_year"));
        assert!(total(i, "fuel_heat_input") < total(i - 1, "fuel_heat_input"));
    }
    // the cost of the leak at 3 mm, as the totals price it, is what fixing it saves in the
    // costing; the site's fuel falls by about as much (the HP steam is made in the boilers)
    let saved_cost = total(0, "loss_cost_per_year") - total(3, "loss_cost_per_year");
    let leak = api::call("balance.solve", json!({ "network": site() })).unwrap();
    let leak_cost = leak["units"]["HP_flange_leak"]["loss"]["yearly"]["cost"]
        .as_f64()
        .unwrap();
    assert!(
        rel(saved_cost, leak_cost) < 0.02,
        "{saved_cost} vs {leak_cost}"
    );
    let saved_fuel = total(0, "fuel_heat_input") - total(3, "fuel_heat_input");
    let leak_fuel = leak["units"]["HP_flange_leak"]["loss"]["fuel"]
        .as_f64()
        .unwrap();
    assert!(
        rel(saved_fuel, leak_fuel) < 0.1,
        "{saved_fuel} vs {leak_fuel}"
    );
}

#[test]
fn the_site_route_and_the_command_line_give_the_loss_totals() {
    let file = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/examples/site/site_with_losses.json"
    );
    let r = api::call("balance.solve", json!({ "network": site() })).unwrap();
    for q in ["steam_lost", "loss_cost_per_year", "line_heat_loss"] {
        let got = steamcell::api::site::from_file(std::path::Path::new(file), q, &[]).unwrap();
        assert_eq!(got, format!("{}", r["totals"][q].as_f64().unwrap()), "{q}");
    }
    // a costing field is a path like the others
    let got = steamcell::api::site::from_file(
        std::path::Path::new(file),
        "loss_cost_per_year",
        &["costing.fuel_cost=60 /MWh".to_string()],
    )
    .unwrap();
    let doubled = got.parse::<f64>().unwrap();
    assert!(
        rel(
            doubled,
            2.0 * r["totals"]["loss_cost_per_year"].as_f64().unwrap()
        ) < 1e-12
    );
}

// ---- the degrees of freedom and bad input

fn refused(v: &Value) -> api::ApiError {
    api::call("balance.solve", json!({ "network": v })).expect_err("refused")
}

#[test]
fn missing_specifications_of_losses_are_findings_on_their_units() {
    let mut v = site();
    v["units"]["HP_flange_leak"]
        .as_object_mut()
        .unwrap()
        .remove("diameter");
    v["units"]["MP_users_trap"]
        .as_object_mut()
        .unwrap()
        .remove("steam");
    v["streams"]
        .as_object_mut()
        .unwrap()
        .remove("mp_trap_steam");
    v["units"]["LP_bare_valve"]
        .as_object_mut()
        .unwrap()
        .remove("length");
    let e = refused(&v);
    assert_eq!(e.code, 1006, "{e}");
    let d = &e.data["diagnosis"];
    let under: Vec<(&str, &str)> = d["under"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| (f["code"].as_str().unwrap(), f["units"][0].as_str().unwrap()))
        .collect();
    assert_eq!(
        under,
        [
            ("missing_hole", "HP_flange_leak"),
            ("missing_line_geometry", "LP_bare_valve"),
            ("missing_trap_steam", "MP_users_trap"),
        ],
        "{d:#}"
    );
    let m = &e.message;
    assert!(m.contains("leak HP_flange_leak: give diameter"), "{m}");
    assert!(m.contains("line LP_bare_valve: give its length"), "{m}");
    assert!(
        m.contains("trap MP_users_trap: a trap failed_open passes live steam"),
        "{m}"
    );
    assert_eq!(d["under"][1]["quantity"], "length");
    assert_eq!(d["units"]["HP_flange_leak"]["kind"], "leak");
    assert_eq!(
        d["units"]["HP_flange_leak"]["under"],
        json!(["missing_hole"])
    );
    // a leaking trap needs its equivalent hole
    let mut v = site();
    v["units"]["MP_users_trap"]["state"] = json!("leaking");
    let e = refused(&v);
    assert!(e.message.contains("give leak_diameter"), "{}", e.message);
}

#[test]
fn over_specified_losses_are_findings_too() {
    // a flow given on a leak's inlet, which the hole fixes
    let mut v = site();
    v["streams"]["hp_leak"]["flow"] = json!(0.1);
    let e = refused(&v);
    let over = &e.data["diagnosis"]["over"];
    assert_eq!(over[0]["code"], "flow_set_by_unit", "{over}");
    assert_eq!(over[0]["streams"], json!(["hp_leak"]));
    assert!(
        e.message.contains("its flow is set by leak HP_flange_leak"),
        "{}",
        e.message
    );
    // a leak into a place at a higher pressure than the header with the hole
    let mut v = site();
    v["units"]["MP_gland_leak"]["downstream_p"] = json!("20 bar");
    let e = refused(&v);
    let over = &e.data["diagnosis"]["over"];
    assert_eq!(over[0]["code"], "no_pressure_drop", "{over}");
    assert!(
        e.message
            .contains("2 MPa is not below the upstream pressure 1.5 MPa"),
        "{}",
        e.message
    );
    // in the us preset the pressures are restated in psia
    let e = api::call(
        "balance.solve",
        json!({ "network": flows_in_kg_s(v), "units": "us" }),
    )
    .unwrap_err();
    assert!(e.message.contains("psia"), "{}", e.message);
}

/// Every bare number of a mass flow as a text in kg/s, so that the network means the same in
/// any preset.
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
fn bad_input_of_losses_is_refused_with_the_field_named() {
    let cases: [(&str, Value, &str); 9] = [
        (
            "units.HP_flange_leak.diameter",
            json!("-3 mm"),
            "units.HP_flange_leak.diameter = -3 mm is below the lowest value 0 mm of a hole",
        ),
        (
            "units.HP_flange_leak.discharge_coefficient",
            json!(1.2),
            "units.HP_flange_leak.discharge_coefficient = 1.2 is above the highest value 1",
        ),
        (
            "units.MP_users_trap.diameter",
            json!(-1),
            "units.MP_users_trap.diameter = -1 m is below the lowest value 0 m",
        ),
        (
            "units.LP_main.inner_diameter",
            json!(0),
            "units.LP_main.inner_diameter = 0 m is below the lowest value 0 m of a pipe",
        ),
        (
            "units.LP_main.roughness",
            json!("200 mm"),
            "units.LP_main.roughness = 200 mm is above the highest value 151.5 mm of a pipe (the roughness cannot exceed the inner radius)",
        ),
        (
            "units.LP_main.wall_thickness",
            json!(-0.01),
            "units.LP_main.wall_thickness",
        ),
        ("units.MP_users_trap.state", json!("broken"), "'broken' is not a trap state"),
        (
            "units.LP_main.friction_factor",
            json!("moody"),
            "units.LP_main.friction_factor: 'moody' is not known",
        ),
        (
            "costing.hours_per_year",
            json!(9000),
            "costing.hours_per_year = 9000 h is above the highest value 8784 h",
        ),
    ];
    for (path, value, needle) in cases {
        let mut v = site();
        steamcell::api::balance::set_path(&mut v, path, value.clone()).unwrap();
        let e = refused(&v);
        assert!(
            e.message.contains(needle),
            "{path} = {value}: {}",
            e.message
        );
        assert!(!e.message.contains('\n'));
    }
    // the message speaks the unit a quantity was given in (above: mm); a plain number is in
    // the preset's unit, and re-stated in it: a length of the us preset is in ft
    let mut v = flows_in_kg_s(site());
    v["units"]["HP_flange_leak"]["diameter"] = json!(-0.01);
    let e = api::call("balance.solve", json!({ "network": v, "units": "us" })).unwrap_err();
    assert!(e.message.contains("ft"), "{}", e.message);
    // both a fuel and a steam price
    let mut v = site();
    v["costing"]["steam_cost"] = json!("25 /t");
    assert!(refused(&v).message.contains("not both"));
}

#[test]
fn a_trap_on_a_stream_that_is_not_condensate_is_refused() {
    // the trap's condensate inlet comes straight from the steam header
    let mut v = drained_line();
    v["streams"]["h_tr"] = json!({ "from": "H", "to": "TR", "flow": 0.05 });
    v["units"]["L"].as_object_mut().unwrap().remove("drain");
    v["streams"].as_object_mut().unwrap().remove("l_drain");
    let e = refused(&v);
    assert!(
        e.message.contains(
            "trap TR: its condensate inlet h_tr carries wet steam (x = 1.0000), not condensate"
        ),
        "{}",
        e.message
    );
    // a trap whose only inlet is its live steam
    let mut v = drained_line();
    v["units"]["TR"] =
        json!({ "kind": "trap", "state": "failed_open", "diameter": "5 mm", "steam": "l_drain" });
    let e = refused(&v);
    assert!(
        e.message
            .contains("its only inlet is its steam stream l_drain"),
        "{}",
        e.message
    );
}

#[test]
fn a_line_that_cannot_carry_its_flow_is_refused_with_the_length_reached() {
    // a 2-inch line cannot carry 1 kg/s of 10 bar steam over 400 m (about 90 m/s at the inlet:
    // its pressure is used up on the way)
    let mut v = drained_line();
    v["units"]["L"]["inner_diameter"] = json!("52.5 mm");
    v["units"]["L"]["wall_thickness"] = json!("3.9 mm");
    let e = refused(&v);
    assert!(
        e.message
            .contains("units.L.length = 400 m is above the highest value"),
        "{}",
        e.message
    );
    assert!(
        e.message.contains("its pressure is used up"),
        "{}",
        e.message
    );
}

/// A bare 2.5-inch line carrying 1 kg/s of saturated 10 bar steam into a 9.5 bar header: at
/// that flow it needs more drop than the 0.5 bar between its ends, runs fast and hot and
/// condenses without a drain.
fn tight_line() -> Value {
    json!({
        "units": {
            "MK": { "kind": "makeup", "T": "20 degC" },
            "P": { "kind": "pump", "p": "12 bar", "efficiency": 0.7 },
            "B": { "kind": "boiler", "efficiency": 0.85 },
            "H": { "kind": "header", "p": "10 bar" },
            "L": { "kind": "line", "length": "150 m", "inner_diameter": "62.7 mm",
                   "wall_thickness": "5.2 mm" },
            "H2": { "kind": "header", "p": "9.5 bar" },
            "U": { "kind": "user", "demand": "1 kg/s", "return_T": "80 degC" }
        },
        "streams": {
            "mk_p": { "from": "MK", "to": "P" },
            "p_b": { "from": "P", "to": "B" },
            "b_h": { "from": "B", "to": "H", "x": 1 },
            "h_l": { "from": "H", "to": "L" },
            "l_h2": { "from": "L", "to": "H2" },
            "h2_u": { "from": "H2", "to": "U" }
        }
    })
}

/// The message of the line's warning with `code` in a balance.solve result (the site list,
/// prefixed with the unit).
fn line_warning(v: &Value, code: &str) -> String {
    let w = v["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .find(|w| w["code"] == code)
        .unwrap_or_else(|| panic!("no {code} in {}", v["warnings"]));
    let m = w["message"].as_str().unwrap();
    assert!(m.starts_with("line L: "), "{m}");
    // the unit's own list has it too, without the prefix
    let own = &v["units"]["L"]["warnings"];
    assert!(
        own.as_array()
            .unwrap()
            .iter()
            .any(|u| u["code"] == code && m.ends_with(u["message"].as_str().unwrap())),
        "{own}"
    );
    m.to_string()
}

fn sig4(x: f64) -> String {
    steamcell::error::fmt_sig(x, 4)
}

/// The site balance's line warnings state their values in the caller's units (issue 21: they
/// were in MPa, kg/s, m/s and K whatever the request asked), as the line's `loss` fields of the
/// same name are.
#[test]
fn line_warnings_speak_the_callers_units() {
    let solve = |units: Value| {
        api::call(
            "balance.solve",
            json!({ "network": tight_line(), "units": units }),
        )
        .unwrap()
    };
    let us = solve(json!("us"));
    let loss = &us["units"]["L"]["loss"];
    for w in us["warnings"].as_array().unwrap() {
        let m = w["message"].as_str().unwrap();
        for internal in ["MPa", " K", "kg/s", "m/s", "kW"] {
            assert!(!m.contains(internal), "{internal} in {m}");
        }
    }
    // 1 kg/s = 7937 lb/h (1 lb = 0.45359237 kg exactly) and 0.5 bar = 7.252 psi (1 psi =
    // 6894.757 Pa), NIST SP 811
    let m = line_warning(&us, "line_drop_exceeds_available");
    let dp = sig4(loss["pressure_drop"].as_f64().unwrap());
    assert!(
        m.contains(&format!("it needs a pressure drop of {dp} psi to carry 7937 lb/h but only 7.252 psi lie between its ends")),
        "{m}"
    );
    // 40 m/s = 131.2 ft/s (1 ft = 0.3048 m exactly)
    let m = line_warning(&us, "velocity_high");
    let v = sig4(loss["velocity"].as_f64().unwrap());
    assert!(
        m.contains(&format!("reaches {v} ft/s, above about 131.2 ft/s")),
        "{m}"
    );
    // 60 degC = 140 degF
    let m = line_warning(&us, "surface_above_touch_limit");
    let t = sig4(loss["surface_T"].as_f64().unwrap());
    assert!(
        m.contains(&format!("reaches {t} degF, above the touch limit 140 degF")),
        "{m}"
    );
    let m = line_warning(&us, "line_condensate");
    let c = sig4(loss["condensate"].as_f64().unwrap());
    assert!(
        m.contains(&format!("line L: {c} lb/h of condensate forms")),
        "{m}"
    );

    // bar with every mass flow in t/h: 1 kg/s = 3.6 t/h
    let bar = solve(json!({"preset": "bar", "flow": "t/h"}));
    let loss = &bar["units"]["L"]["loss"];
    let m = line_warning(&bar, "line_drop_exceeds_available");
    let dp = sig4(loss["pressure_drop"].as_f64().unwrap());
    assert!(
        m.contains(&format!("it needs a pressure drop of {dp} bar to carry 3.6 t/h but only 0.5 bar lie between its ends")),
        "{m}"
    );
    let m = line_warning(&bar, "line_condensate");
    let c = sig4(loss["condensate"].as_f64().unwrap());
    assert!(m.contains(&format!("{c} t/h of condensate")), "{m}");
    let m = line_warning(&bar, "surface_above_touch_limit");
    assert!(m.contains("degC, above the touch limit 60 degC"), "{m}");
    let m = line_warning(&bar, "velocity_high");
    assert!(m.contains("m/s, above about 40 m/s"), "{m}");
    // the line carries the user's 1 kg/s = 3.6 t/h
    assert!(
        (bar["streams"]["h_l"]["flow"].as_f64().unwrap() - 3.6).abs() < 1e-9,
        "{}",
        bar["streams"]["h_l"]
    );
}

/// A line's pressure drop is a difference: with gauge pressures asked for it is in bar, not
/// barg (it was stated as a gauge pressure, 1.01325 bar short), like its warning.
#[test]
fn a_line_pressure_drop_is_not_a_gauge_pressure() {
    let solve = |units: Value| {
        api::call(
            "balance.solve",
            json!({ "network": tight_line(), "units": units }),
        )
        .unwrap()
    };
    let bar = solve(json!("bar"));
    let barg = solve(json!({"preset": "bar", "pressure": "barg"}));
    let dp = |v: &Value| v["units"]["L"]["loss"]["pressure_drop"].as_f64().unwrap();
    assert!(dp(&bar) > 1.0, "{}", dp(&bar));
    assert_eq!(dp(&barg), dp(&bar));
    assert_eq!(
        barg["units_used"]["pressure_drop"], "bar",
        "{}",
        barg["units_used"]
    );
    assert_eq!(barg["units_used"]["p"], "barg", "{}", barg["units_used"]);
    let m = line_warning(&barg, "line_drop_exceeds_available");
    assert!(
        m.contains(&format!("a pressure drop of {} bar", sig4(dp(&barg)))),
        "{m}"
    );
}
