//! Degrees of freedom of a site network: a table of under- and over-specified variants of one
//! small site, each refused with `invalid_input` (code 1006) and a message naming the right
//! stream or unit and the usual choice. The expected texts are ours (the messages are the
//! product); the physics of the base network is checked in tests/it/balance.rs.

use serde_json::{json, Value};
use steamcell::api;

/// A small site that solves: boiler -> HP header -> turbine and let-down -> LP header ->
/// process user, deaerator and a vent; condensate and make-up to the deaerator; feed pump.
fn base() -> Value {
    json!({
        "units": {
            "B": { "kind": "boiler", "p": "40 bar", "T": "400 degC", "efficiency": 0.9 },
            "HP": { "kind": "header", "p": "40 bar" },
            "T": { "kind": "turbine", "efficiency": 0.75 },
            "LV": { "kind": "valve" },
            "LP": { "kind": "header", "p": "3 bar" },
            "U": { "kind": "user", "demand": 10, "return_fraction": 0.5, "return_T": "80 degC" },
            "DA": { "kind": "deaerator", "p": "1.2 bar", "steam": "lp_da" },
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

fn solve(net: &Value) -> Result<Value, api::ApiError> {
    api::call("balance.solve", json!({ "network": net }))
}

fn set(net: &mut Value, path: &str, v: Value) {
    let parts: Vec<&str> = path.split('.').collect();
    let mut cur = net;
    for p in &parts[..parts.len() - 1] {
        cur = cur
            .get_mut(*p)
            .unwrap_or_else(|| panic!("no {p} in {path}"));
    }
    cur.as_object_mut()
        .unwrap()
        .insert(parts[parts.len() - 1].to_string(), v);
}

fn remove(net: &mut Value, path: &str) {
    let parts: Vec<&str> = path.split('.').collect();
    let mut cur = net;
    for p in &parts[..parts.len() - 1] {
        cur = cur.get_mut(*p).unwrap();
    }
    assert!(
        cur.as_object_mut()
            .unwrap()
            .remove(parts[parts.len() - 1])
            .is_some(),
        "nothing at {path}"
    );
}

#[test]
fn base_network_solves() {
    let r = solve(&base()).expect("the base network is well specified");
    assert!(r["residual"].as_f64().unwrap() < 1e-9);
}

type Edit = fn(&mut Value);

#[test]
fn under_and_over_specified_networks_are_refused_with_a_precise_message() {
    // (case, edit, expected fragments of the message)
    let table: Vec<(&str, Edit, Vec<&str>)> = vec![
        (
            "user without demand",
            |n| remove(n, "units.U.demand"),
            vec!["under-specified", "give the steam demand of user U"],
        ),
        (
            "turbine with neither flow nor power",
            |n| remove(n, "streams.hp_t.flow"),
            vec!["under-specified", "turbine T", "or its power"],
        ),
        (
            "turbine with flow and power",
            |n| set(n, "units.T.power", json!("1 MW")),
            vec![
                "over-specified",
                "turbine T (power)",
                "stream hp_t (fixed flow)",
                "remove one of",
            ],
        ),
        (
            "vent and let-down both free",
            |n| remove(n, "streams.lp_vt.flow"),
            vec![
                "under-specified",
                "lp_vt",
                "header LP has 2 outlets with no rule to share its steam (lp_da, lp_vt)",
            ],
        ),
        (
            "every flow at header LP fixed",
            |n| set(n, "streams.lv_lp.flow", json!(3.0)),
            vec![
                "over-specified",
                "header LP has no free outlet flow: let a vent or make-up close the balance",
            ],
        ),
        (
            "boiler without steam temperature",
            |n| remove(n, "units.B.T"),
            vec![
                "under-specified",
                "give the steam temperature T of boiler B",
            ],
        ),
        (
            "boiler steam temperature twice",
            |n| set(n, "streams.b_hp.T", json!("410 degC")),
            vec![
                "over-specified",
                "boiler B: the steam temperature is given both",
            ],
        ),
        (
            "header without pressure",
            |n| remove(n, "units.HP.p"),
            vec!["under-specified", "header HP: give its pressure p"],
        ),
        (
            "header outlet with a temperature",
            |n| set(n, "streams.lp_u.T", json!("200 degC")),
            vec![
                "over-specified",
                "stream lp_u: its state is set by header LP",
            ],
        ),
        (
            "header outlet with another pressure",
            |n| set(n, "streams.lp_u.p", json!("5 bar")),
            vec![
                "over-specified",
                "stream lp_u: its pressure is set by header LP",
            ],
        ),
        (
            "return fraction without a condensate stream",
            |n| remove(n, "streams.u_da"),
            vec!["over-specified", "no condensate stream leaves user U"],
        ),
        (
            "pump without efficiency",
            |n| remove(n, "units.FP.efficiency"),
            vec!["under-specified", "pump FP: give its efficiency"],
        ),
        (
            "turbine without efficiency",
            |n| remove(n, "units.T.efficiency"),
            vec![
                "under-specified",
                "turbine T: give its isentropic efficiency",
            ],
        ),
        (
            "no make-up",
            |n| {
                remove(n, "units.MK");
                remove(n, "streams.mk_da");
            },
            vec!["over-specified", "the site has no makeup unit"],
        ),
        (
            "deaerator vent stream without a fraction",
            |n| set(n, "streams.da_vt", json!({ "from": "DA", "to": "VT" })),
            vec!["name its vent stream"],
        ),
        (
            "deaerator vent stream named but no fraction",
            |n| {
                set(n, "streams.da_vt", json!({ "from": "DA", "to": "VT" }));
                set(n, "units.DA.vent", json!("da_vt"));
            },
            vec![
                "under-specified",
                "give vent_fraction of deaerator DA or the flow of its vent stream da_vt",
            ],
        ),
        (
            "user demand given twice",
            |n| set(n, "streams.lp_u.flow", json!(10)),
            vec![
                "over-specified",
                "user U: the steam demand is given both as demand and as the flow of stream lp_u",
            ],
        ),
        (
            "boiler without efficiency",
            |n| remove(n, "units.B.efficiency"),
            vec!["under-specified", "boiler B: give the boiler efficiency"],
        ),
        (
            "stream to a unit that does not exist",
            |n| set(n, "streams.lp_vt.to", json!("VENT2")),
            vec!["stream lp_vt", "'VENT2' is not a unit of the network"],
        ),
        (
            "under and over at once",
            |n| {
                remove(n, "units.U.demand");
                set(n, "units.T.power", json!("1 MW"));
            },
            vec!["under-specified", "over-specified", "turbine T (power)"],
        ),
        (
            "a leak without its diameter",
            |n| {
                set(n, "units.L", json!({ "kind": "leak" }));
                set(n, "streams.hp_l", json!({ "from": "HP", "to": "L" }));
            },
            vec!["under-specified", "leak L: give diameter, the diameter of the hole"],
        ),
        (
            "a leak whose flow is given too",
            |n| {
                set(n, "units.L", json!({ "kind": "leak", "diameter": "3 mm" }));
                set(n, "streams.hp_l", json!({ "from": "HP", "to": "L", "flow": 0.1 }));
            },
            vec![
                "over-specified",
                "stream hp_l: its flow is set by leak L (the flow through the hole)",
            ],
        ),
        (
            "a failed trap without its live steam",
            |n| {
                set(n, "units.TR", json!({ "kind": "trap", "state": "failed_open", "diameter": "5 mm" }));
                set(n, "units.U.return_fraction", json!(0.5));
                set(n, "streams.u_da", json!({ "from": "U", "to": "TR" }));
                set(n, "streams.tr_da", json!({ "from": "TR", "to": "DA" }));
            },
            vec![
                "under-specified",
                "trap TR: a trap failed_open passes live steam: name the stream that brings it with `steam`",
            ],
        ),
        (
            "a line without its geometry",
            |n| {
                set(n, "units.LN", json!({ "kind": "line", "length": "100 m" }));
                set(n, "streams.lp_u", json!({ "from": "LP", "to": "LN" }));
                set(n, "streams.ln_u", json!({ "from": "LN", "to": "U" }));
            },
            vec!["under-specified", "line LN: give its inner_diameter, wall_thickness"],
        ),
    ];
    assert!(table.len() >= 16);
    for (case, edit, want) in table {
        let mut n = base();
        edit(&mut n);
        let e = match solve(&n) {
            Ok(_) => panic!("{case}: the network was accepted"),
            Err(e) => e,
        };
        assert_eq!(e.code, 1006, "{case}: {e}");
        for w in want {
            assert!(
                e.message.contains(w),
                "{case}: message lacks {w:?}:\n{}",
                e.message
            );
        }
        assert!(
            !e.message.to_lowercase().contains("singular")
                && !e.message.to_lowercase().contains("matrix"),
            "{case}: {}",
            e.message
        );
    }
}

#[test]
fn a_closed_loop_is_not_over_specified() {
    // boiler -> turbine -> condenser -> pump -> boiler: one mass balance follows from the
    // others; the steam flow fixes the loop.
    let net = json!({
        "units": {
            "B": { "kind": "boiler", "p": "40 bar", "T": "400 degC", "efficiency": 0.9, "steam_flow": 10 },
            "T": { "kind": "turbine", "efficiency": 0.8 },
            "C": { "kind": "condenser", "p": "0.1 bar" },
            "P": { "kind": "pump", "efficiency": 0.75, "p": "40 bar" }
        },
        "streams": {
            "s1": { "from": "B", "to": "T" },
            "s2": { "from": "T", "to": "C" },
            "s3": { "from": "C", "to": "P" },
            "s4": { "from": "P", "to": "B" }
        }
    });
    let r = solve(&net).expect("closed loop solves");
    for s in ["s1", "s2", "s3", "s4"] {
        assert!((r["streams"][s]["flow"].as_f64().unwrap() - 10.0).abs() < 1e-9);
    }
}

/// The refusal as data: `data.diagnosis` of a 1006 error lists the findings (code, units,
/// streams, quantity, message), what each unit was given and who fixes each stream; the
/// message is the rendering of the same findings.
fn diagnosis(net: &Value) -> (String, Value) {
    let e = solve(net).expect_err("refused");
    assert_eq!(e.code, 1006, "{e}");
    assert_eq!(e.data["kind"], "invalid_input");
    assert_eq!(e.data["message"], e.message.as_str());
    (e.message, e.data["diagnosis"].clone())
}

/// The API message is "site balance: under-specified: a | b || over-specified: c", each part
/// the message of one finding of `data.diagnosis`, in order.
fn message_from_data(d: &Value) -> String {
    let part = |side: &str| -> Vec<String> {
        d[side]
            .as_array()
            .unwrap()
            .iter()
            .map(|f| f["message"].as_str().unwrap().to_string())
            .collect()
    };
    let (u, o) = (part("under"), part("over"));
    let mut parts = Vec::new();
    if !u.is_empty() {
        parts.push(format!("under-specified: {}", u.join(" | ")));
    }
    if !o.is_empty() {
        parts.push(format!("over-specified: {}", o.join(" | ")));
    }
    format!("site balance: {}", parts.join(" || "))
}

#[test]
fn a_missing_efficiency_is_a_finding_on_its_unit() {
    let mut n = base();
    remove(&mut n, "units.FP.efficiency");
    remove(&mut n, "units.HP.p");
    let (message, d) = diagnosis(&n);
    assert_eq!(message, message_from_data(&d));
    let under = d["under"].as_array().unwrap();
    let codes: Vec<&str> = under.iter().map(|f| f["code"].as_str().unwrap()).collect();
    assert_eq!(
        codes,
        [
            "missing_pump_efficiency",
            "missing_pressure",
            "pressure_not_fixed",
            "pressure_not_fixed"
        ],
        "{d:#}"
    );
    assert_eq!(under[0]["code"], "missing_pump_efficiency");
    assert_eq!(under[0]["units"], json!(["FP"]));
    assert_eq!(under[0]["quantity"], "efficiency");
    assert_eq!(under[0]["message"], "pump FP: give its efficiency");
    assert_eq!(under[1]["code"], "missing_pressure");
    assert_eq!(under[1]["units"], json!(["HP"]));
    assert_eq!(under[1]["quantity"], "p");
    // the streams leaving header HP have no pressure: each names both of its units
    assert_eq!(under[2]["streams"], json!(["hp_lv"]));
    assert_eq!(under[2]["units"], json!(["HP", "LV"]));
    assert_eq!(under[3]["streams"], json!(["hp_t"]));
    assert_eq!(d["over"], json!([]));
    // per unit: what it was given and which findings name it
    assert_eq!(d["units"]["FP"]["kind"], "pump");
    assert_eq!(d["units"]["FP"]["given"], json!(["p"]));
    assert_eq!(
        d["units"]["FP"]["under"],
        json!(["missing_pump_efficiency"])
    );
    assert_eq!(d["units"]["T"]["under"], json!(["pressure_not_fixed"]));
    assert_eq!(d["units"]["MK"]["under"], json!([]));
    // per stream: the flows were not analysed (the units were refused first); who fixes p
    // and the state
    assert_eq!(d["streams"]["hp_t"]["flow"], "given");
    assert_eq!(d["streams"]["t_lp"]["flow"], "unknown");
    assert_eq!(
        d["streams"]["fp_b"]["p"],
        json!({ "source": "unit", "unit": "FP" })
    );
    assert_eq!(
        d["streams"]["t_lp"]["p"],
        json!({ "source": "unit", "unit": "LP" })
    );
    assert_eq!(
        d["streams"]["b_hp"]["p"],
        json!({ "source": "unit", "unit": "B" })
    );
    assert_eq!(
        d["streams"]["hp_t"]["p"],
        json!({ "source": "missing" }),
        "header HP has no pressure"
    );
    assert_eq!(
        d["streams"]["t_lp"]["state"],
        json!({ "source": "unit", "unit": "T" })
    );
}

#[test]
fn free_flows_are_data_with_their_usual_choices() {
    let mut n = base();
    remove(&mut n, "units.U.demand");
    let (message, d) = diagnosis(&n);
    assert_eq!(message, message_from_data(&d));
    let f = &d["under"][0];
    assert_eq!(f["code"], "flows_not_fixed");
    assert_eq!(f["missing"], 1);
    assert_eq!(f["quantity"], "flow");
    let undetermined: Vec<&str> = f["undetermined"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| s.as_str().unwrap())
        .collect();
    assert!(undetermined.contains(&"lp_u"), "{undetermined:?}");
    assert_eq!(f["streams"], f["undetermined"]);
    assert_eq!(f["free"].as_array().unwrap().len(), 1);
    let hints = f["hints"].as_array().unwrap();
    assert!(
        hints
            .iter()
            .any(|h| h["code"] == "give_user_demand" && h["unit"] == "U"),
        "{hints:?}"
    );
    // every undetermined stream is "free", a stream with a given flow "given", the others
    // "fixed"
    for (name, s) in d["streams"].as_object().unwrap() {
        let want = if undetermined.contains(&name.as_str()) {
            "free"
        } else if ["hp_t", "lp_vt"].contains(&name.as_str()) {
            "given"
        } else {
            "fixed"
        };
        assert_eq!(s["flow"], want, "{name}");
    }
    assert_eq!(
        d["units"]["U"]["given"],
        json!(["return_fraction", "return_T"])
    );
}

#[test]
fn clashing_equations_are_data_with_the_specifications_to_remove() {
    let mut n = base();
    set(&mut n, "units.T.power", json!("1 MW"));
    let (message, d) = diagnosis(&n);
    assert_eq!(message, message_from_data(&d));
    let f = &d["over"][0];
    assert_eq!(f["code"], "equations_clash");
    let eq = f["equations"].as_array().unwrap();
    assert!(eq.iter().any(|e| e["owner"] == "T"
        && e["owner_kind"] == "turbine"
        && e["what"] == "power"
        && e["specification"] == true));
    assert!(eq.iter().any(|e| e["owner"] == "hp_t"
        && e["owner_kind"] == "stream"
        && e["what"] == "fixed flow"
        && e["specification"] == true));
    assert!(eq
        .iter()
        .any(|e| e["what"] == "mass balance" && e["specification"] == false));
    let remove = f["hints"]
        .as_array()
        .unwrap()
        .iter()
        .find(|h| h["code"] == "remove_one_specification")
        .expect("a hint to remove a specification");
    assert!(remove["message"]
        .as_str()
        .unwrap()
        .contains("turbine T (power)"));
    assert!(f["units"].as_array().unwrap().contains(&json!("T")));
    assert!(f["streams"].as_array().unwrap().contains(&json!("hp_t")));
    assert!(d["units"]["T"]["over"]
        .as_array()
        .unwrap()
        .contains(&json!("equations_clash")));
}

#[test]
fn a_conflicting_stream_pressure_carries_the_units_value() {
    let mut n = base();
    set(&mut n, "streams.lp_u.p", json!("5 bar"));
    let (message, d) = diagnosis(&n);
    assert_eq!(message, message_from_data(&d));
    let f = &d["over"][0];
    assert_eq!(f["code"], "pressure_set_by_source");
    assert_eq!(f["streams"], json!(["lp_u"]));
    assert_eq!(f["units"], json!(["LP"]));
    assert_eq!(f["quantity"], "p");
    // 3 bar, in the balance's internal unit
    assert!((f["value"].as_f64().unwrap() - 0.3).abs() < 1e-12);
    assert_eq!(f["value_unit"], "MPa");
    assert_eq!(d["streams"]["lp_u"]["p"], json!({ "source": "stream" }));
}

#[test]
fn the_core_returns_the_diagnosis_typed() {
    use steamcell::api::balance::NetworkIn;
    use steamcell::api::vocab::Ctx;
    use steamcell::error::Error;
    use steamcell::plant::balance::{self as b, Finding, Side, UnitRef};
    let mut n = base();
    remove(&mut n, "units.B.efficiency");
    set(&mut n, "units.FP.p", json!("0.5 bar"));
    let net: NetworkIn = serde_json::from_value(n).unwrap();
    let net = net.to_network(&Ctx::new(None, None).unwrap()).unwrap();
    let Err(Error::Specification { diagnosis }) = b::solve(&net) else {
        panic!("refused with a diagnosis")
    };
    assert_eq!(
        diagnosis.findings,
        vec![
            Finding::MissingBoilerEfficiency {
                unit: UnitRef::new("B", "boiler"),
            },
            Finding::PumpDoesNotRaise {
                unit: UnitRef::new("FP", "pump"),
                discharge: b::Amount::pressure(0.05),
                suction: b::Amount::pressure(0.12),
            },
        ]
    );
    assert_eq!(diagnosis.findings[0].side(), Side::Under);
    assert_eq!(diagnosis.findings[1].side(), Side::Over);
    assert_eq!(
        diagnosis.to_string(),
        "site balance: under-specified: boiler B: give the boiler efficiency (heat to steam over fuel heat input, from the plant's test data) || over-specified: pump FP: the discharge pressure 0.05 MPa is not above the suction pressure 0.12 MPa"
    );
    assert_eq!(diagnosis.streams.len(), 12);
    assert_eq!(diagnosis.units.len(), 10);
}

#[test]
fn an_ill_formed_network_is_refused_without_a_diagnosis() {
    // a structural error (a stream to no unit) is found before the count: plain invalid_input
    let mut n = base();
    set(&mut n, "streams.lp_vt.to", json!("VENT2"));
    let e = solve(&n).expect_err("refused");
    assert_eq!(e.code, 1006);
    assert!(e.data.get("diagnosis").is_none(), "{}", e.data);
}

#[test]
fn values_that_need_no_solve_are_refused_by_the_count() {
    // (case, edit, finding code, fragment of its message)
    let table: Vec<(&str, Edit, &str, &str)> = vec![
        (
            "T and h on a turbine exhaust",
            |n| {
                set(n, "streams.t_lp.T", json!("150 degC"));
                set(n, "streams.t_lp.h", json!(2700));
            },
            "state_given_twice",
            "stream t_lp: give at most one of T, h, x (with p) — it has 2",
        ),
        (
            "a pump discharging below its suction",
            |n| set(n, "units.FP.p", json!("0.5 bar")),
            "pump_does_not_raise",
            "pump FP: the discharge pressure 0.05 MPa is not above the suction pressure 0.12 MPa",
        ),
    ];
    for (case, edit, code, message) in table {
        let mut n = base();
        edit(&mut n);
        let (text, d) = diagnosis(&n);
        assert!(
            text.starts_with("site balance: over-specified: "),
            "{case}: {text}"
        );
        assert!(text.contains(message), "{case}: {text}");
        assert_eq!(d["over"][0]["code"], code, "{case}: {d:#}");
        assert_eq!(d["over"][0]["message"], message, "{case}");
    }
}

#[test]
fn a_desuperheater_above_the_critical_pressure_is_refused_by_the_count() {
    // critical pressure 22.064 MPa: IAPWS R7-97(2012), Eq. (4)
    let net = json!({
        "units": {
            "M": { "kind": "makeup", "T": "500 degC" },
            "W": { "kind": "makeup", "T": "20 degC" },
            "DS": { "kind": "desuperheater", "water": "w", "T": "450 degC", "p": "250 bar" },
            "V": { "kind": "vent" }
        },
        "streams": {
            "s": { "from": "M", "to": "DS", "flow": 1, "p": "300 bar" },
            "w": { "from": "W", "to": "DS", "p": "300 bar" },
            "out": { "from": "DS", "to": "V" }
        }
    });
    let (text, d) = diagnosis(&net);
    assert_eq!(
        d["over"][0]["code"], "desuperheater_above_critical",
        "{d:#}"
    );
    assert_eq!(d["over"][0]["value"], 25.0);
    assert_eq!(d["over"][0]["value_unit"], "MPa");
    assert!(
        text.contains("desuperheater DS: the outlet pressure 25 MPa is at or above the critical pressure 22.064 MPa"),
        "{text}"
    );
}

/// Issue 23, reproductions 1 and 2: a specified value outside its range is an input out of
/// range (1001 `out_of_range`, refused before any count), not an over-specification: it is named
/// by its path and stated in the unit it was given in (else the request's unit for it). A
/// negative demand was refused as "over-specified: ... demand = -1.38889 kg/s is negative" in
/// kg/s whatever the request; a negative turbine power, boiler steam flow or fixed stream flow
/// was accepted and solved into negative flows (the refusal then suggested raising the power
/// to about 0). The limits are those of the quantities' meaning (a user takes steam, a turbine
/// gives work, a flow runs from its source to its destination, an efficiency lies in (0, 1], a
/// pressure is absolute): common practice, no source.
#[test]
fn values_outside_their_range_are_refused_as_out_of_range_in_the_callers_unit() {
    let bar_th = json!({"preset": "bar", "flow": "t/h"});
    // (path, value, request units, message)
    let table: Vec<(&str, Value, Value, &str)> = vec![
        ("units.U.demand", json!("-5 t/h"), json!(null),
            "units.U.demand = -5 t/h is below the lowest value 0 t/h of a user's steam demand"),
        ("units.U.demand", json!(-5), bar_th.clone(),
            "units.U.demand = -5 t/h is below the lowest value 0 t/h of a user's steam demand"),
        ("units.U.demand", json!(-5), json!("us"),
            "units.U.demand = -5 lb/h is below the lowest value 0 lb/h of a user's steam demand"),
        ("units.T.power", json!("-2 MW"), json!(null),
            "units.T.power = -2 MW is below the lowest value 0 MW of a turbine's power"),
        ("units.T.power", json!(-300), json!("us"),
            "units.T.power = -300 kW is below the lowest value 0 kW of a turbine's power"),
        ("units.B.steam_flow", json!(-1), bar_th.clone(),
            "units.B.steam_flow = -1 t/h is below the lowest value 0 t/h of a boiler's steam flow"),
        ("streams.hp_t.flow", json!("-18 t/h"), json!(null),
            "streams.hp_t.flow = -18 t/h is below the lowest value 0 t/h of a stream's flow"),
        ("units.T.efficiency", json!(1.2), json!(null),
            "units.T.efficiency = 1.2 is above the highest value 1 of an efficiency"),
        ("units.FP.efficiency", json!("-10 %"), json!(null),
            "units.FP.efficiency = -10 % is below the lowest value 0 % of an efficiency"),
        ("units.B.efficiency", json!(0), json!(null),
            "units.B.efficiency = 0 is below the lowest value 0 of an efficiency (0 < efficiency <= 1)"),
        ("units.B.blowdown_fraction", json!(0.6), json!(null),
            "units.B.blowdown_fraction = 0.6 is above the highest value 0.5 of a blowdown fraction"),
        ("units.U.return_fraction", json!(1.5), json!(null),
            "units.U.return_fraction = 1.5 is above the highest value 1 of a condensate return fraction"),
        ("units.DA.vent_fraction", json!(-0.1), json!(null),
            "units.DA.vent_fraction = -0.1 is below the lowest value 0 of a vent fraction"),
        ("units.LP.p", json!("-2 barg"), json!(null),
            "units.LP.p = -2 barg is below the lowest value -1.01325 barg of an absolute pressure"),
        ("units.LP.p", json!(-3), json!("us"),
            "units.LP.p = -3 psia is below the lowest value 0 psia of an absolute pressure"),
        ("streams.t_lp.p", json!("-3 bar"), json!(null),
            "streams.t_lp.p = -3 bar is below the lowest value 0 bar of an absolute pressure"),
        ("streams.t_lp.x", json!(1.5), json!(null),
            "streams.t_lp.x = 1.5 is above the highest value 1 of a quality"),
    ];
    for (path, value, units, message) in table {
        let mut n = base();
        set(&mut n, path, value.clone());
        let mut params = json!({ "network": n });
        if !units.is_null() {
            params["units"] = units.clone();
        }
        let e = api::call("balance.solve", params).expect_err(path);
        assert_eq!(e.code, 1001, "{path} = {value} ({units}): {e}");
        assert_eq!(e.data["quantity"], path, "{e}");
        assert!(
            e.message.starts_with(message),
            "{path} = {value} ({units}): {}",
            e.message
        );
    }
}

/// A desuperheater's target superheat is not negative (0 asks for saturated vapour, which is
/// warned about): a negative one is refused as out of range, in the caller's unit.
#[test]
fn a_negative_target_superheat_is_out_of_range() {
    let net = json!({
        "units": {
            "M": { "kind": "makeup", "T": "300 degC" },
            "W": { "kind": "makeup", "T": "20 degC" },
            "DS": { "kind": "desuperheater", "water": "w", "superheat": "-9 degF", "p": "10 bar" },
            "V": { "kind": "vent" }
        },
        "streams": {
            "s": { "from": "M", "to": "DS", "flow": 1, "p": "10 bar" },
            "w": { "from": "W", "to": "DS", "p": "20 bar" },
            "out": { "from": "DS", "to": "V" }
        }
    });
    let e = solve(&net).expect_err("refused");
    assert_eq!(e.code, 1001, "{e}");
    assert!(
        e.message
            .starts_with("units.DS.superheat = -9 degF is below the lowest value 0 degF"),
        "{}",
        e.message
    );
}

/// Issue 23, reproduction 3: a range error met inside a unit while the site is solved (a state
/// outside the formulation) did not say which unit it came from; it is prefixed with the unit
/// like the balance's other errors, and still stated in the caller's unit. Make-up water at
/// 14 degF (-10 degC) is ice at atmospheric pressure (IAPWS R14-08, the melting curve).
#[test]
fn a_range_error_inside_a_unit_names_the_unit() {
    let mut n = base();
    set(&mut n, "units.MK.T", json!(14));
    let e = api::call("balance.solve", json!({"network": n, "units": "us"})).expect_err("ice");
    assert_eq!(e.code, 1001, "{e}");
    assert_eq!(e.data["quantity"], "makeup MK: T", "{e}");
    assert_eq!(e.data["unit"], "degF", "{e}");
    assert!(
        e.message
            .starts_with("makeup MK: T = 14 degF is below the lowest value 32.002"),
        "{}",
        e.message
    );
}
