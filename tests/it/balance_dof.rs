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
    ];
    assert!(table.len() >= 12);
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
