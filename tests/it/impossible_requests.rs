//! A catalogue of impossible or ambiguous requests, each answered by a specific error (code and
//! cause in the message) or a coded warning, never by a plain number: the table below runs
//! every case through the in-process API (the same path as every transport). The warning
//! codes met here must be in the catalogue (`plant::warnings::CATALOGUE`) and documented in
//! the README's warning table.
//!
//! The physics of each refusal is checked against its source in the file that owns it
//! (`feasibility.rs`, `iapws_*.rs`, `plant_components.rs`); this table checks that nothing
//! slips through as a number.

use serde_json::{json, Value};
use steamcell::api;
use steamcell::plant::warnings::Code;

/// What a request must get.
enum Want {
    /// An error with this code whose message contains the text.
    Error(i64, &'static str),
    /// A result that carries a warning with this code.
    Warning(&'static str),
    /// A batch whose first row failed with this code and text.
    RowError(i64, &'static str),
    /// A batch whose first row is flagged in this phase.
    Flagged(&'static str),
}

use Want::*;

fn table() -> Vec<(&'static str, &'static str, Value, Want)> {
    vec![
        // --- states outside the formulations
        (
            "wet state below the triple point",
            "water.state",
            json!({"given": {"p": "0.005 bar", "h": 2200}}),
            Error(1001, "triple-point"),
        ),
        (
            "IAPWS-95 state below the triple point",
            "water.state",
            json!({"given": {"p": "0.005 bar", "h": 2200}, "formulation": "iapws95"}),
            Error(1003, "triple-point"),
        ),
        (
            "(p,s) below the triple point",
            "water.state",
            json!({"given": {"p": "0.005 bar", "s": 5}}),
            Error(1001, "triple-point"),
        ),
        (
            "ice at 1 bar",
            "water.state",
            json!({"given": {"p": "1 bar", "T": "-10 degC"}}),
            Error(1001, "ice"),
        ),
        (
            "negative pressure",
            "water.state",
            json!({"given": {"p": "-3 bar", "T": 300}}),
            Error(1001, "lowest value"),
        ),
        (
            "above 100 MPa",
            "water.state",
            json!({"given": {"p": "150 MPa", "T": "300 degC"}}),
            Error(1001, "highest value 100"),
        ),
        (
            "above 2273.15 K (2000 degC, answered in the caller's unit)",
            "water.state",
            json!({"given": {"p": "1 MPa", "T": "2500 degC"}}),
            Error(1001, "highest value 2000 degC"),
        ),
        (
            "metastable far below saturation",
            "water.state",
            json!({"given": {"p": "40 barg", "T": "20 degC"}, "metastable": true}),
            Error(1001, "metastable-vapour"),
        ),
        (
            "metastable beyond the 5 % line",
            "water.state",
            json!({"given": {"p": "40 barg", "T": "200 degC"}, "metastable": true}),
            Error(1001, "5 % equilibrium-moisture"),
        ),
        (
            "metastable above 10 MPa",
            "water.state",
            json!({"given": {"p": "15 MPa", "T": "300 degC"}, "metastable": true}),
            Error(1001, "10 MPa"),
        ),
        (
            "saturation below the triple point",
            "water.saturation",
            json!({"p": "0.005 bar"}),
            Error(1001, "lowest value"),
        ),
        (
            "saturation above the critical point",
            "water.saturation",
            json!({"T": "400 degC"}),
            Error(1001, "373.946 degC"),
        ),
        // --- ambiguous or ill-formed inputs
        (
            "density with two liquid states",
            "water.state",
            json!({"given": {"p": "0.1 MPa", "rho": 999.9}}),
            Error(1003, "admits 2 states"),
        ),
        (
            "three state keys",
            "water.state",
            json!({"given": {"p": 1, "T": 300, "h": 3000}}),
            Error(1006, "exactly two"),
        ),
        (
            "quality above 1",
            "water.state",
            json!({"given": {"p": 1, "x": 1.2}}),
            Error(1006, "outside 0..1"),
        ),
        (
            "unknown unit",
            "water.state",
            json!({"given": {"p": "42 furlong", "T": 300}}),
            Error(1004, "furlong"),
        ),
        (
            "unit of the wrong dimension",
            "water.state",
            json!({"given": {"p": "400 degC", "T": 300}}),
            Error(1005, "pressure"),
        ),
        (
            "implausible ambient",
            "water.state",
            json!({"given": {"p": 1, "T": 300}, "ambient": "5 bar"}),
            Error(1006, "ambient"),
        ),
        (
            "given as an array",
            "water.state",
            json!({"given": [3e6, 300]}),
            Error(-32602, "an array where an object"),
        ),
        (
            "a stream as an array",
            "header.mix",
            json!({"inlets": [["1 MPa", "200 degC", 1]], "p": "0.5 MPa"}),
            Error(-32602, "an array where an object"),
        ),
        (
            "a site unit as an array",
            "balance.solve",
            json!({"network": {"units": {"B": ["boiler"]}, "streams": {}}}),
            Error(-32602, "an array where an object"),
        ),
        (
            "unknown expected phase",
            "water.batch",
            json!({"given": {"p": [1], "T": [300]}, "expect": "steamy"}),
            Error(1006, "not a phase"),
        ),
        // --- batch rows
        (
            "batch row below the triple point",
            "water.batch",
            json!({"given": {"p": ["0.005 bar"], "h": [2200]}, "want": ["T"]}),
            RowError(1001, "triple-point"),
        ),
        (
            "batch row metastable beyond its range",
            "water.batch",
            json!({"given": {"p": ["40 barg"], "T": ["20 degC"]}, "want": ["h"], "metastable": true}),
            RowError(1001, "metastable"),
        ),
        (
            "batch row of ice",
            "water.batch",
            json!({"given": {"p": ["1 bar"], "T": ["-10 degC"]}, "want": ["h"]}),
            RowError(1001, "ice"),
        ),
        (
            "steam tag that is liquid",
            "water.batch",
            json!({"given": {"p": ["40 barg"], "T": ["200 degC"]}, "want": ["h"], "expect": "vapour"}),
            Flagged("liquid"),
        ),
        (
            "water tag that is steam",
            "water.batch",
            json!({"given": {"p": ["1 bar"], "T": ["150 degC"]}, "want": ["h"], "expect": "liquid"}),
            Flagged("vapour"),
        ),
        // --- exchangers
        (
            "cross at the dew point",
            "exchanger.balance",
            json!({"hot": {"inlet": {"p": "2 bar", "T": "140 degC", "flow": 10}, "outlet": {"T": "60 degC"}}, "cold": {"inlet": {"p": "20 bar", "T": "50 degC"}, "outlet": {"T": "122 degC"}}}),
            Error(1009, "dew point"),
        ),
        (
            "hot flow too small for the duty",
            "exchanger.balance",
            json!({"hot": {"inlet": {"p": "2 bar", "T": "140 degC", "flow": 0.1}}, "cold": {"inlet": {"p": "20 bar", "T": "50 degC", "flow": 30}, "outlet": {"T": "70 degC"}}}),
            Error(1009, "temperature cross"),
        ),
        (
            "cold flow too small for the duty",
            "exchanger.balance",
            json!({"hot": {"inlet": {"p": "2 bar", "T": "140 degC", "flow": 10}, "outlet": {"T": "60 degC"}}, "cold": {"inlet": {"p": "20 bar", "T": "50 degC", "flow": 1}}}),
            Error(1009, "temperature cross"),
        ),
        (
            "cold outlet above the hot inlet",
            "exchanger.balance",
            json!({"hot": {"inlet": {"p": "2 bar", "T": "90 degC", "flow": 10}, "outlet": {"T": "60 degC"}}, "cold": {"inlet": {"p": "20 bar", "T": "50 degC"}, "outlet": {"T": "95 degC"}}}),
            Error(1009, "temperature cross"),
        ),
        (
            "heat from cold to hot",
            "exchanger.balance",
            json!({"hot": {"inlet": {"p": "2 bar", "T": "90 degC", "flow": 10}, "outlet": {"T": "95 degC"}}, "cold": {"inlet": {"p": "20 bar", "T": "50 degC"}, "outlet": {"T": "70 degC"}}}),
            Error(1009, "swap the sides"),
        ),
        (
            "no unknown",
            "exchanger.balance",
            json!({"hot": {"inlet": {"p": "2 bar", "T": "90 degC", "flow": 10}, "outlet": {"T": "60 degC"}}, "cold": {"inlet": {"p": "20 bar", "T": "50 degC", "flow": 3}, "outlet": {"T": "70 degC"}}}),
            Error(1006, "exactly three"),
        ),
        (
            "pinch of 2 K",
            "exchanger.balance",
            json!({"hot": {"inlet": {"p": "2 bar", "T": "90 degC", "flow": 10}, "outlet": {"T": "60 degC"}}, "cold": {"inlet": {"p": "20 bar", "T": "58 degC"}, "outlet": {"T": "70 degC"}}}),
            Warning("small_pinch"),
        ),
        // --- valves, pumps
        (
            "valve opening uphill",
            "valve.throttle",
            json!({"inlet": {"p": "10 bar", "T": "200 degC"}, "outlet_p": "20 bar"}),
            Error(1001, "let-down valve"),
        ),
        (
            "valve stream below the triple point",
            "valve.throttle",
            json!({"inlet": {"p": "0.005 bar", "h": 2200}, "outlet_p": "0.004 bar"}),
            Error(1001, "triple-point"),
        ),
        (
            "saturated liquid flashing",
            "valve.throttle",
            json!({"inlet": {"p": "10 bar", "x": 0}, "outlet_p": "1 bar"}),
            Warning("valve_flashing"),
        ),
        (
            "saturated steam let down wet",
            "valve.throttle",
            json!({"inlet": {"p": "100 bar", "x": 1}, "outlet_p": "60 bar"}),
            Warning("valve_outlet_wet"),
        ),
        (
            "pump fed with vapour",
            "pump.raise",
            json!({"inlet": {"p": "1 bar", "T": "150 degC"}, "outlet_p": "10 bar", "efficiency": 0.8}),
            Error(1006, "needs liquid"),
        ),
        (
            "pump outlet below inlet",
            "pump.raise",
            json!({"inlet": {"p": "5 bar", "T": "75 degC"}, "outlet_p": "1 bar", "efficiency": 0.8}),
            Error(1001, "outlet pressure must be above"),
        ),
        (
            "pump efficiency above 1",
            "pump.raise",
            json!({"inlet": {"p": "5 bar", "T": "75 degC"}, "outlet_p": "10 bar", "efficiency": 1.05}),
            Error(1001, "efficiency"),
        ),
        (
            "saturated suction without a head",
            "pump.raise",
            json!({"inlet": {"p": "1 bar", "x": 0}, "outlet_p": "10 bar", "efficiency": 0.8}),
            Warning("npsh_state_only"),
        ),
        (
            "small NPSH",
            "pump.raise",
            json!({"inlet": {"p": "0.5 bar", "T": "75 degC"}, "outlet_p": "10 bar", "efficiency": 0.8}),
            Warning("npsh_low"),
        ),
        // --- desuperheaters, flash vessels, headers
        (
            "spray target below saturation",
            "desuperheater.spray",
            json!({"steam": {"p": "10 bar", "T": "300 degC"}, "water": {"p": "20 bar", "T": "105 degC"}, "target_T": "150 degC"}),
            Error(1009, "saturation"),
        ),
        (
            "spray target above the steam",
            "desuperheater.spray",
            json!({"steam": {"p": "10 bar", "T": "300 degC"}, "water": {"p": "20 bar", "T": "105 degC"}, "target_T": "350 degC"}),
            Error(1009, "cannot heat the steam"),
        ),
        (
            "spray of 3 K superheat",
            "desuperheater.spray",
            json!({"steam": {"p": "10 bar", "T": "300 degC"}, "water": {"p": "20 bar", "T": "105 degC"}, "target_superheat": "3 K"}),
            Warning("small_superheat"),
        ),
        (
            "spray water below the outlet pressure",
            "desuperheater.spray",
            json!({"steam": {"p": "10 bar", "T": "300 degC"}, "water": {"p": "5 bar", "T": "105 degC"}, "target_superheat": "20 K"}),
            Warning("spray_water_pressure_low"),
        ),
        (
            "flash vessel above the inlet pressure",
            "flash.separate",
            json!({"inlet": {"p": "1 bar", "T": "80 degC"}, "p": "10 bar"}),
            Error(1001, "flash vessel"),
        ),
        (
            "condensate too cold to flash",
            "flash.separate",
            json!({"inlet": {"p": "10 bar", "T": "80 degC"}, "p": "1 bar"}),
            Warning("no_flash"),
        ),
        (
            "header with no flow",
            "header.mix",
            json!({"inlets": [{"p": "1 MPa", "T": "250 degC", "flow": 0}], "p": "1 MPa"}),
            Error(1006, "sum to zero"),
        ),
        (
            "header fed uphill",
            "header.mix",
            json!({"inlets": [{"p": "0.8 MPa", "T": "250 degC", "flow": 1}, {"p": "1.2 MPa", "T": "250 degC", "flow": 1}], "p": "1 MPa"}),
            Error(1009, "second law"),
        ),
        (
            "header fed slightly uphill",
            "header.mix",
            json!({"inlets": [{"p": "0.999 MPa", "T": "250 degC", "flow": 0.01}, {"p": "1.2 MPa", "T": "250 degC", "flow": 10}], "p": "1 MPa"}),
            Warning("inlet_below_header_pressure"),
        ),
        (
            "wet header steam",
            "header.mix",
            json!({"inlets": [{"p": "1 MPa", "x": 0.9, "flow": 1}], "p": "1 MPa"}),
            Warning("wet_steam"),
        ),
        // --- boilers, deaerators, turbines, cycles
        (
            "boiler steam colder than its feedwater",
            "boiler.fire",
            json!({"feedwater": {"p": "50 bar", "T": "300 degC"}, "steam": {"p": "42 bar", "T": "200 degC", "flow": 10}, "efficiency": 0.85}),
            Error(1009, "not above the feedwater"),
        ),
        (
            "boiler blowdown of 60 %",
            "boiler.fire",
            json!({"feedwater": {"p": "50 bar", "T": "105 degC"}, "steam": {"p": "42 bar", "T": "400 degC", "flow": 10}, "efficiency": 0.85, "blowdown_fraction": 0.6}),
            Error(1001, "blowdown"),
        ),
        (
            "boiler making wet steam",
            "boiler.fire",
            json!({"feedwater": {"p": "50 bar", "T": "105 degC"}, "steam": {"p": "42 bar", "x": 0.95, "flow": 10}, "efficiency": 0.85}),
            Warning("wet_steam"),
        ),
        (
            "boiler fed below its pressure",
            "boiler.fire",
            json!({"feedwater": {"p": "30 bar", "T": "105 degC"}, "steam": {"p": "42 bar", "T": "400 degC", "flow": 10}, "efficiency": 0.85}),
            Warning("feedwater_pressure_low"),
        ),
        (
            "deaerator fed hotter than saturation",
            "deaerator.balance",
            json!({"p": "1.3 bar", "steam": {"p": "2 bar", "T": "150 degC"}, "waters": [{"p": "3 bar", "T": "130 degC", "flow": 5}]}),
            Error(1009, "already hotter than saturation"),
        ),
        (
            "deaerator steam below its pressure",
            "deaerator.balance",
            json!({"p": "1.3 bar", "steam": {"p": "1.2 bar", "T": "150 degC"}, "waters": [{"p": "3 bar", "T": "30 degC", "flow": 5}]}),
            Warning("heating_steam_pressure_low"),
        ),
        (
            "turbine outlet above its inlet",
            "turbine.expand",
            json!({"inlet": {"p": "40 bar", "T": "300 degC"}, "outlet_p": "50 bar", "efficiency": 0.9}),
            Error(1001, "turbine"),
        ),
        (
            "turbine exhausting below the triple point",
            "turbine.expand",
            json!({"inlet": {"p": "10 bar", "T": "300 degC"}, "outlet_p": "0.005 bar", "efficiency": 0.8}),
            Error(1001, "triple-point"),
        ),
        (
            "turbine exhaust too wet",
            "turbine.expand",
            json!({"inlet": {"p": "40 bar", "T": "300 degC"}, "outlet_p": "0.1 bar", "efficiency": 0.9}),
            Warning("exhaust_moisture"),
        ),
        (
            "condenser below the triple point",
            "cycle.rankine",
            json!({"boiler_p": "100 bar", "boiler_T": "500 degC", "condenser_p": "0.005 bar"}),
            Error(1001, "triple-point"),
        ),
        // --- site balances that once answered with a negative-flow warning (issue 21): each
        // is refused, naming the unit and what to change
        (
            "let-down valve raising the pressure",
            "balance.solve",
            json!({"network": valve_uphill()}),
            Error(1006, "valve LV: the downstream pressure 4.5 MPa is not below the upstream pressure 4 MPa"),
        ),
        (
            "turbine exhausting at its inlet pressure",
            "balance.solve",
            json!({"network": site_with(&[("units.LP.p", json!("40 bar"))])}),
            Error(1006, "turbine T: the downstream pressure 4 MPa is not below the upstream pressure 4 MPa"),
        ),
        (
            "turbine outlet measured hotter than its inlet (negative power)",
            "balance.solve",
            json!({"network": site_with(&[("streams.t_lp.T", json!("420 degC"))])}),
            Error(1006, "turbine T: the measured T of outlet stream t_lp gives h = "),
        ),
        (
            "turbine outlet measured below the isentropic end point (efficiency above 1)",
            "balance.solve",
            json!({"network": site_with(&[("streams.t_lp.x", json!(0.8))])}),
            Error(1006, "an expansion cannot lose entropy"),
        ),
        (
            "let-down valve needed backwards",
            "balance.solve",
            json!({"network": site_with(&[("units.U.demand", json!(1))])}),
            Error(1006, "let-down valve LV would have to pass steam back from its low-pressure side: header LP, which it feeds, has a surplus"),
        ),
        (
            "header short of steam (its vent reversed)",
            "balance.solve",
            json!({"network": site_with(&[("streams.lp_vt.flow", Value::Null), ("streams.lv_lp.flow", json!(0))])}),
            Error(1006, "header LP is short of steam by 5.2"),
        ),
        (
            "deaerator fed water hotter than saturation (negative heating steam)",
            "balance.solve",
            json!({"network": site_with(&[("units.MK.T", json!("130 degC")), ("streams.mk_da.p", json!("3 bar"))])}),
            Error(1006, "deaerator DA would need a negative heating-steam flow (lp_da)"),
        ),
        (
            "desuperheater target above the steam temperature (negative spray)",
            "balance.solve",
            json!({"network": letdown("390 degC")}),
            Error(1006, "desuperheater DS would need a negative spray flow (w)"),
        ),
        // --- site exchangers once answered with a warning (heat_flows_backwards,
        // temperature_cross_at_end; issue 23): refused as exchanger.balance refuses them
        (
            "site exchanger whose hot side leaves hotter than it came",
            "balance.solve",
            exchanger_site("171 degC"),
            Error(1009, "exchanger X: heat would flow from the cold side to the hot side"),
        ),
        (
            "site exchanger whose hot side leaves colder than the cold side enters",
            "balance.solve",
            exchanger_site("15 degC"),
            Error(1009, "exchanger X: temperature cross: at the cold end"),
        ),
        // --- specified values outside their range (issue 23): out of range, by path
        (
            "negative turbine power in a site",
            "balance.solve",
            json!({"network": site_with(&[("units.T.power", json!("-1 MW"))])}),
            Error(1001, "units.T.power = -1 MW is below the lowest value 0 MW"),
        ),
        (
            "negative demand in a site",
            "balance.solve",
            json!({"network": site_with(&[("units.U.demand", json!("-5 t/h"))])}),
            Error(1001, "units.U.demand = -5 t/h is below the lowest value 0 t/h"),
        ),
    ]
}

/// A make-up at 170 degC (5 kg/s at 10 bar) heating 8 kg/s of 20 degC water at 3 bar in an
/// exchanger whose hot outlet is at `hot_out_t` (invented).
fn exchanger_site(hot_out_t: &str) -> Value {
    json!({"network": {
        "units": {
            "M1": { "kind": "makeup", "T": "170 degC" },
            "M2": { "kind": "makeup", "T": "20 degC" },
            "X": { "kind": "exchanger", "hot_in": "hi", "hot_out": "ho" },
            "V1": { "kind": "vent" },
            "V2": { "kind": "vent" }
        },
        "streams": {
            "hi": { "from": "M1", "to": "X", "flow": 5, "p": "10 bar" },
            "ho": { "from": "X", "to": "V1", "T": hot_out_t },
            "ci": { "from": "M2", "to": "X", "flow": 8, "p": "3 bar" },
            "co": { "from": "X", "to": "V2" }
        }
    }})
}

/// A small site of our own (invented): a 40 bar boiler and header, a back-pressure turbine
/// (5 kg/s) and a let-down valve into a 3 bar header with a user of 10 kg/s, a deaerator, a
/// feed pump, a make-up and a vent taking a fixed 0.2 kg/s.
fn small_site() -> Value {
    json!({
        "units": {
            "B": { "kind": "boiler", "p": "40 bar", "T": "400 degC", "efficiency": 0.9, "blowdown_fraction": 0.03 },
            "HP": { "kind": "header", "p": "40 bar" },
            "T": { "kind": "turbine", "efficiency": 0.75 },
            "LV": { "kind": "valve" },
            "LP": { "kind": "header", "p": "3 bar" },
            "U": { "kind": "user", "demand": 10, "return_fraction": 0.5, "return_T": "80 degC" },
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
            "lp_vt": { "from": "LP", "to": "VT", "flow": 0.2 },
            "u_da": { "from": "U", "to": "DA" },
            "mk_da": { "from": "MK", "to": "DA" },
            "da_fp": { "from": "DA", "to": "FP" },
            "fp_b": { "from": "FP", "to": "B" }
        }
    })
}

/// [`small_site`] with values set (null: removed) at dotted paths.
fn site_with(changes: &[(&str, Value)]) -> Value {
    let mut v = small_site();
    for (path, x) in changes {
        let keys: Vec<&str> = path.split('.').collect();
        let (last, head) = keys.split_last().unwrap();
        let mut o = &mut v;
        for k in head {
            o = &mut o[*k];
        }
        match x {
            Value::Null => {
                o.as_object_mut().unwrap().remove(*last);
            }
            _ => o[*last] = x.clone(),
        }
    }
    v
}

/// [`small_site`] without its turbine and with the 3 bar header at 45 bar, above the 40 bar
/// the let-down valve takes from.
fn valve_uphill() -> Value {
    let mut v = site_with(&[
        ("units.LP.p", json!("45 bar")),
        ("units.FP.p", json!("60 bar")),
    ]);
    v["units"].as_object_mut().unwrap().remove("T");
    for s in ["hp_t", "t_lp"] {
        v["streams"].as_object_mut().unwrap().remove(s);
    }
    v
}

// A let-down station: 40 bar, 400 degC steam throttled to 10 bar and sprayed to `target`
// (the network of `balance.rs`).
use crate::balance::letdown;

#[test]
fn impossible_and_ambiguous_requests_never_get_a_plain_number() {
    let cases = table();
    assert!(cases.len() >= 40, "only {} cases", cases.len());
    let known: Vec<&str> = Code::ALL.iter().map(|c| c.name()).collect();
    let readme = include_str!("../../README.md");
    let mut failures = Vec::new();
    for (name, method, params, want) in cases {
        let got = api::call(method, params);
        let problem = match (&want, &got) {
            (Error(code, text), Err(e)) => (e.code != *code || !e.message.contains(text))
                .then(|| format!("error {} {}", e.code, e.message)),
            (Warning(code), Ok(v)) => {
                let ws = v["warnings"].as_array().cloned().unwrap_or_default();
                let hit = ws
                    .iter()
                    .any(|w| w["code"] == *code && !w["message"].as_str().unwrap_or("").is_empty());
                (!hit || !known.contains(code) || !readme.contains(&format!("`{code}`")))
                    .then(|| format!("warnings {ws:?}"))
            }
            (RowError(code, text), Ok(v)) => {
                let r = &v["failed_rows"][0];
                let first_null = v["columns"]
                    .as_object()
                    .unwrap()
                    .values()
                    .all(|c| c[0].is_null());
                (r["row"] != 0
                    || r["code"] != *code
                    || !r["message"].as_str().unwrap_or("").contains(text)
                    || !first_null)
                    .then(|| format!("batch {v}"))
            }
            (Flagged(phase), Ok(v)) => (v["flagged_rows"][0]["row"] != 0
                || v["flagged_rows"][0]["phase"] != *phase)
                .then(|| format!("batch {v}")),
            (_, Ok(v)) => Some(format!(
                "a plain answer {}",
                v.to_string().chars().take(200).collect::<String>()
            )),
            (_, Err(e)) => Some(format!("error {} {}", e.code, e.message)),
        };
        if let Some(p) = problem {
            failures.push(format!("{name} ({method}): got {p}"));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// Every catalogue code is documented in the README's warning table, with its meaning.
#[test]
fn every_warning_code_is_documented() {
    let readme = include_str!("../../README.md");
    for c in Code::ALL {
        assert!(
            readme.contains(&format!("| `{}` |", c.name())),
            "README lacks the warning code {}",
            c.name()
        );
    }
}

/// A request that makes each catalogue code fire that the table above does not (the table's
/// warnings count too): a code that nothing can make fire is a defect (issue 21 removed six:
/// the negative-flow warnings of the site balance, which refuses negative flows).
fn firing() -> Vec<(&'static str, &'static str, Value)> {
    // a bare 2.5-inch line carrying 1 kg/s of 10 bar steam into a 9.5 bar header: its drop
    // at that flow exceeds the 0.5 bar between its ends
    let line_site = |demand: f64| {
        json!({"network": {
            "units": {
                "MK": { "kind": "makeup", "T": "20 degC" },
                "P": { "kind": "pump", "p": "12 bar", "efficiency": 0.7 },
                "B": { "kind": "boiler", "efficiency": 0.85 },
                "H": { "kind": "header", "p": "10 bar" },
                "L": { "kind": "line", "length": "150 m", "inner_diameter": "62.7 mm", "wall_thickness": "5.2 mm" },
                "H2": { "kind": "header", "p": "9.5 bar" },
                "U": { "kind": "user", "demand": demand, "return_T": "80 degC" }
            },
            "streams": {
                "mk_p": { "from": "MK", "to": "P" },
                "p_b": { "from": "P", "to": "B" },
                "b_h": { "from": "B", "to": "H", "x": 1 },
                "h_l": { "from": "H", "to": "L" },
                "l_h2": { "from": "L", "to": "H2" },
                "h2_u": { "from": "H2", "to": "U" }
            }
        }})
    };
    // a header at 10 bar fed 1 kg/s of steam (T or x on the boiler's stream) into a pump
    let pump_on_steam = |x: f64| {
        json!({"network": {
            "units": {
                "MK": { "kind": "makeup", "T": "20 degC" },
                "P0": { "kind": "pump", "p": "12 bar", "efficiency": 0.7 },
                "B": { "kind": "boiler", "efficiency": 0.85 },
                "H": { "kind": "header", "p": "10 bar" },
                "P": { "kind": "pump", "p": "20 bar", "efficiency": 0.7 },
                "V": { "kind": "vent" }
            },
            "streams": {
                "mk_p": { "from": "MK", "to": "P0" },
                "p_b": { "from": "P0", "to": "B" },
                "b_h": { "from": "B", "to": "H", "flow": 1, "x": x },
                "h_p": { "from": "H", "to": "P" },
                "p_v": { "from": "P", "to": "V" }
            }
        }})
    };
    let mut venting: Value =
        serde_json::from_str(include_str!("../../examples/site/site.json")).unwrap();
    venting["streams"]["llp_vent"]
        .as_object_mut()
        .unwrap()
        .remove("flow");
    venting["streams"]["ct_to_llp"]["flow"] = json!("10 kg/s");
    let bare = |inlet: Value, length: &str, d: &str, wall: &str| json!({"inlet": inlet, "length": length, "inner_diameter": d, "wall_thickness": wall});
    vec![
        (
            "near_critical",
            "orifice.flow",
            json!({"inlet": {"p": "22 MPa", "T": "400 degC"}, "diameter": "1 mm"}),
        ),
        (
            "turbine_inlet_not_superheated",
            "turbine.expand",
            json!({"inlet": {"p": "10 bar", "x": 0.98}, "outlet_p": "2 bar", "efficiency": 0.8}),
        ),
        (
            "flash_inlet_superheated",
            "flash.separate",
            json!({"inlet": {"p": "10 bar", "T": "250 degC", "flow": 1}, "p": "2 bar"}),
        ),
        (
            "orifice_beta_high",
            "orifice.flow",
            json!({"inlet": {"p": "10 barg", "x": 1}, "diameter": "9 mm", "pipe_diameter": "10 mm"}),
        ),
        (
            "flashing_lower_estimate",
            "orifice.flow",
            json!({"inlet": {"p": "10 barg", "x": 0}, "diameter": "3 mm"}),
        ),
        (
            "approach_velocity_high",
            "orifice.flow",
            json!({"inlet": {"p": "2 bar", "x": 1}, "diameter": "20 mm", "approach_velocity": "150 m/s"}),
        ),
        (
            "surface_above_touch_limit",
            "pipe.flow",
            bare(
                json!({"p": "5 barg", "x": 1, "flow": "3 t/h"}),
                "25 m",
                "62.7 mm",
                "5.2 mm",
            ),
        ),
        (
            "velocity_high",
            "pipe.flow",
            bare(
                json!({"p": "5 barg", "x": 1, "flow": "3 t/h"}),
                "25 m",
                "62.7 mm",
                "5.2 mm",
            ),
        ),
        (
            "line_condensate",
            "pipe.flow",
            bare(
                json!({"p": "5 barg", "x": 1, "flow": "3 t/h"}),
                "25 m",
                "62.7 mm",
                "5.2 mm",
            ),
        ),
        (
            "pressure_drop_high",
            "pipe.flow",
            bare(
                json!({"p": "5 barg", "x": 1, "flow": "3 t/h"}),
                "25 m",
                "62.7 mm",
                "5.2 mm",
            ),
        ),
        // water at Re of about 3000 in a half-inch line
        (
            "transitional_flow",
            "pipe.flow",
            bare(
                json!({"p": "3 bar", "T": "20 degC", "flow": "0.037 kg/s"}),
                "10 m",
                "15.8 mm",
                "2.8 mm",
            ),
        ),
        // water 3.5 K below saturation losing 0.4 bar along the line
        (
            "line_flashing",
            "pipe.flow",
            json!({"inlet": {"p": "3 bar", "T": "130 degC", "flow": "2 kg/s"}, "length": "50 m", "inner_diameter": "40.9 mm", "wall_thickness": "3.7 mm", "insulation": [{"thickness": "50 mm", "conductivity": "0.04 W/(m K)"}]}),
        ),
        (
            "mach_high",
            "pipe.flow",
            bare(
                json!({"p": "10 bar", "T": "300 degC", "flow": "2 kg/s"}),
                "5 m",
                "52.5 mm",
                "3.9 mm",
            ),
        ),
        (
            "desuperheater_target_saturated",
            "balance.solve",
            json!({"network": letdown("170 degC")}),
        ),
        (
            "condensate_not_liquid",
            "balance.solve",
            json!({"network": {
                "units": {
                    "MK": { "kind": "makeup", "T": "20 degC" },
                    "P": { "kind": "pump", "p": "12 bar", "efficiency": 0.7 },
                    "B": { "kind": "boiler", "efficiency": 0.85, "T": "250 degC" },
                    "H": { "kind": "header", "p": "10 bar" },
                    "U": { "kind": "user", "demand": 1, "return_fraction": 0.5, "return_T": "150 degC" },
                    "V": { "kind": "vent" }
                },
                "streams": {
                    "mk_p": { "from": "MK", "to": "P" },
                    "p_b": { "from": "P", "to": "B" },
                    "b_h": { "from": "B", "to": "H" },
                    "h_u": { "from": "H", "to": "U" },
                    "u_v": { "from": "U", "to": "V", "p": "1 bar" }
                }
            }}),
        ),
        (
            "user_receives_liquid",
            "balance.solve",
            json!({"network": {
                "units": {
                    "MK": { "kind": "makeup", "T": "20 degC" },
                    "P": { "kind": "pump", "p": "5 bar", "efficiency": 0.7 },
                    "U": { "kind": "user", "demand": 1, "return_T": "80 degC" }
                },
                "streams": {
                    "mk_p": { "from": "MK", "to": "P" },
                    "p_u": { "from": "P", "to": "U" }
                }
            }}),
        ),
        ("pump_inlet_not_liquid", "balance.solve", pump_on_steam(0.9)),
        (
            "exhaust_velocity_high",
            "turbine.expand",
            json!({"inlet": {"p": "40 bar", "T": "400 degC", "flow": 30}, "outlet_p": "0.05 bar", "efficiency": 0.85, "exhaust_area": "2 m2"}),
        ),
        // saturation at 2 bar is about 120.2 degC
        (
            "measured_outlet_near_saturation",
            "turbine.expand",
            json!({"inlet": {"p": "10 bar", "T": "300 degC"}, "outlet_p": "2 bar", "outlet": {"p": "2 bar", "T": "121.5 degC"}}),
        ),
        ("steam_vented", "balance.solve", json!({"network": venting})),
        ("line_no_flow", "balance.solve", line_site(0.0)),
        (
            "line_drop_exceeds_available",
            "balance.solve",
            line_site(1.0),
        ),
    ]
}

#[test]
fn every_warning_code_fires() {
    let mut fired: Vec<String> = table()
        .into_iter()
        .filter_map(|(_, _, _, want)| match want {
            Warning(code) => Some(code.to_string()),
            _ => None,
        })
        .collect();
    let mut failures = Vec::new();
    for (code, method, params) in firing() {
        match api::call(method, params) {
            Ok(v) => {
                let ws = v["warnings"].as_array().cloned().unwrap_or_default();
                if ws.iter().any(|w| w["code"] == code) {
                    fired.push(code.to_string());
                } else {
                    failures.push(format!("{code} ({method}): warnings {ws:?}"));
                }
            }
            Err(e) => failures.push(format!("{code} ({method}): error {e}")),
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
    for c in Code::ALL {
        assert!(
            fired.iter().any(|f| f == c.name()),
            "no request makes {} fire: remove it or add the request that does",
            c.name()
        );
    }
    // a pump fed superheated steam is warned about too (the check once asked for a quality,
    // which vapour has none)
    let v = api::call("balance.solve", {
        let mut p = firing()
            .into_iter()
            .find(|(c, _, _)| *c == "pump_inlet_not_liquid")
            .unwrap()
            .2;
        p["network"]["streams"]["b_h"]
            .as_object_mut()
            .unwrap()
            .remove("x");
        p["network"]["units"]["B"]["T"] = json!("250 degC");
        p
    })
    .unwrap();
    let hit = v["warnings"].as_array().unwrap().iter().any(|w| {
        w["code"] == "pump_inlet_not_liquid" && w["message"].as_str().unwrap().contains("vapour")
    });
    assert!(hit, "{}", v["warnings"]);
}

/// The refusal of negative flows says what they mean at the units they join (the words of
/// the warnings it replaced, naming the unit), in the caller's units, in the message, in the
/// diagnosis and at a sweep's failed point.
#[test]
fn negative_flows_are_refused_naming_the_unit_and_what_to_change() {
    let short = site_with(&[
        ("streams.lp_vt.flow", Value::Null),
        ("streams.lv_lp.flow", json!("0 kg/s")),
        ("streams.hp_t.flow", json!("5 kg/s")),
        ("units.U.demand", json!("10 kg/s")),
    ]);
    // in the us preset the shortage is in lb/h: 10 kg/s of demand against 5 from the turbine,
    // about 5.2 kg/s short = about 41,400 lb/h (1 lb = 0.45359237 kg exactly, NIST SP 811)
    let e = api::call("balance.solve", json!({"network": short, "units": "us"})).unwrap_err();
    assert_eq!(e.code, 1006, "{e}");
    let over = &e.data["diagnosis"]["over"][0];
    assert_eq!(over["code"], "negative_flows", "{over}");
    let hint = &over["hints"][0];
    assert_eq!(hint["code"], "header_short_of_steam", "{over}");
    assert_eq!(hint["unit"], "LP", "{over}");
    assert_eq!(hint["streams"], json!(["lp_vt"]), "{over}");
    let m = hint["message"].as_str().unwrap();
    assert!(m.starts_with("header LP is short of steam by 41"), "{m}");
    assert!(m.contains("lb/h") && !m.contains("kg/s"), "{m}");
    assert!(e.message.contains(m), "{}", e.message);
    // the let-down needed backwards, and a sweep point that needs it: not ok, with the reason
    let backwards = site_with(&[("units.U.demand", json!(1))]);
    let e = api::call("balance.solve", json!({"network": backwards})).unwrap_err();
    let hint = &e.data["diagnosis"]["over"][0]["hints"][0];
    assert_eq!(hint["code"], "let_down_backwards", "{hint}");
    assert_eq!(hint["unit"], "LV", "{hint}");
    let r = api::call(
        "balance.sweep",
        json!({"network": small_site(), "path": "units.U.demand", "from": 1, "to": 10, "points": 2}),
    )
    .unwrap();
    let p = &r["points"][0];
    assert_eq!(p["ok"], false, "{p}");
    assert!(
        p["error"]
            .as_str()
            .unwrap()
            .contains("let-down valve LV would have to pass steam back"),
        "{p}"
    );
    assert_eq!(r["points"][1]["ok"], true, "{}", r["points"][1]);
    // the measured turbine outlet's enthalpies in the caller's units (Btu/lb)
    let hot = site_with(&[("streams.t_lp.T", json!("420 degC"))]);
    let e = api::call("balance.solve", json!({"network": hot, "units": "us"})).unwrap_err();
    let f = &e.data["diagnosis"]["over"][0];
    assert_eq!(f["code"], "measured_expansion_impossible", "{f}");
    assert_eq!(f["streams"], json!(["t_lp"]), "{f}");
    assert!(f["value"].as_f64().unwrap() < 0.0, "{f}");
    let m = f["message"].as_str().unwrap();
    assert!(m.contains("Btu/lb") && !m.contains("kJ/kg"), "{m}");
}
