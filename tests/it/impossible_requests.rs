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
    ]
}

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
