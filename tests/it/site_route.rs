//! The site bridge: `serve --site NAME=FILE` with `GET /site/{name}/{quantity}?{path=value}` and
//! `steamcell site FILE QUANTITY [path=value]`, against the real binary. The numbers must be
//! exactly those of `balance.solve` on the same network (the bridge adds nothing of its own);
//! failures answer a status and a one-line reason, and the server keeps running.
//!
//! Source: the example site of our own in examples/site/site.json (invented; the balance itself
//! is checked in tests/it/balance.rs).

use crate::common;

use common::{post, request, start, BIN};
use serde_json::{json, Value};
use std::process::Command;

const SITE_FILE: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/examples/site/site.json");

fn site() -> Value {
    serde_json::from_str(&std::fs::read_to_string(SITE_FILE).unwrap()).unwrap()
}

fn get(addr: &str, target: &str) -> (u16, String) {
    let r = request(addr, "GET", target, &[], b"");
    (r.status, r.text())
}

/// `balance.solve` over JSON-RPC on the same server.
fn solve(addr: &str, network: &Value, units: Option<&str>) -> Value {
    let mut params = json!({ "network": network });
    if let Some(u) = units {
        params["units"] = json!(u);
    }
    let body = json!({"jsonrpc": "2.0", "id": 1, "method": "balance.solve", "params": params});
    let r = post(addr, &[], body.to_string().as_bytes()).json();
    assert!(r["error"].is_null(), "{r}");
    r["result"].clone()
}

fn as_text(x: &Value) -> String {
    format!("{}", x.as_f64().unwrap())
}

#[test]
fn site_numbers_are_those_of_balance_solve() {
    let s = start(&["--site", &format!("mill={SITE_FILE}")], &[]);
    let base = solve(&s.addr, &site(), None);
    for q in [
        "net_power",
        "fuel_heat_input",
        "makeup_water",
        "process_heat",
    ] {
        let (status, body) = get(&s.addr, &format!("/site/mill/{q}"));
        assert_eq!(status, 200, "{q}: {body}");
        assert_eq!(body, as_text(&base["totals"][q]), "{q}");
    }
    // a dotted path reaches a unit or a stream
    let (status, body) = get(&s.addr, "/site/mill/units.BPT.power");
    assert_eq!(
        (status, body),
        (200, as_text(&base["units"]["BPT"]["power"]))
    );
    let (status, body) = get(&s.addr, "/site/mill/streams.ds1_out.state.T");
    assert_eq!(
        (status, body),
        (200, as_text(&base["streams"]["ds1_out"]["state"]["T"]))
    );

    // a what-if: more medium-pressure demand, in t/h, answered in the us preset
    let mut changed = site();
    changed["units"]["MP_users"]["demand"] = json!("40 t/h");
    let want = solve(&s.addr, &changed, Some("us"));
    let (status, body) = get(
        &s.addr,
        "/site/mill/net_power?units.MP_users.demand=40%20t%2Fh&units=us",
    );
    assert_eq!((status, body), (200, as_text(&want["totals"]["net_power"])));
    assert_ne!(
        as_text(&want["totals"]["fuel_heat_input"]),
        as_text(&base["totals"]["fuel_heat_input"])
    );
}

#[test]
fn site_failures_are_specific_and_the_server_keeps_running() {
    let s = start(&["--site", &format!("mill={SITE_FILE}")], &[]);
    let cases = [
        (
            "/site/plant/net_power",
            404,
            "no site 'plant'; registered: mill",
        ),
        ("/site/mill/net_pwr", 404, "'net_pwr' is not in totals"),
        ("/site/mill/units.NOPE.power", 404, "'NOPE' is not in units"),
        ("/site/mill", 404, "use GET /site/{name}/{quantity}"),
        (
            "/site/mill/net_power?demand=3",
            400,
            "'demand' is not a specification path",
        ),
        ("/site/mill/net_power?units.NOPE.demand=3", 400, "NOPE"),
        (
            "/site/mill/net_power?units.MP_users.demand=3%20bar",
            400,
            "bar",
        ),
        // a second fixed turbine power over-specifies the balance: named, not "singular"
        ("/site/mill/net_power?units.BPT.power=5000", 400, "BPT"),
        // unit= is named as the caller wrote it, with the quantity (not as units.net_power)
        (
            "/site/mill/net_power?unit=barg",
            400,
            "unit: 'barg' is a gauge pressure unit; gauge units are for pressures only, and net_power is a power",
        ),
        (
            "/site/mill/net_power?unit=t/h",
            400,
            "which net_power needs",
        ),
    ];
    for (target, status, needle) in cases {
        let (st, body) = get(&s.addr, target);
        assert_eq!(st, status, "{target}: {body}");
        assert!(body.contains(needle), "{target}: {body}");
        assert!(!body.contains('\n'), "{target}: one line: {body:?}");
    }
    let (st, _) = get(&s.addr, "/site/mill/net_power");
    assert_eq!(st, 200);
}

#[test]
fn a_server_without_sites_says_how_to_register_one() {
    let s = start(&[], &[]);
    let (st, body) = get(&s.addr, "/site/mill/net_power");
    assert_eq!(st, 404);
    assert!(body.contains("--site NAME=FILE"), "{body}");
}

#[test]
fn a_broken_site_file_stops_the_start_with_its_reason() {
    let dir = std::env::temp_dir().join(format!("steamcell-site-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let bad = dir.join("bad.json");
    let mut net = site();
    net["units"]["CT"]["power"] = Value::Null; // drop a needed specification
    std::fs::write(&bad, net.to_string()).unwrap();
    let out = Command::new(BIN)
        .args(["serve", "--listen", "127.0.0.1:0", "--site"])
        .arg(format!("x={}", bad.display()))
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("bad.json") && err.contains("under-specified"),
        "{err}"
    );
    let out = Command::new(BIN)
        .args(["serve", "--listen", "127.0.0.1:0", "--site", "nofile"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&out.stderr).contains("NAME=FILE"));
}

#[test]
fn the_command_line_gives_the_same_numbers() {
    let s = start(&["--site", &format!("mill={SITE_FILE}")], &[]);
    for (args, target) in [
        (vec!["net_power"], "/site/mill/net_power"),
        (
            vec!["units.BPT.power", "units.LP_users.demand=15"],
            "/site/mill/units.BPT.power?units.LP_users.demand=15",
        ),
    ] {
        let out = Command::new(BIN)
            .arg("site")
            .arg(SITE_FILE)
            .args(&args)
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        let (st, body) = get(&s.addr, target);
        assert_eq!(st, 200, "{body}");
        assert_eq!(
            String::from_utf8_lossy(&out.stdout).trim(),
            body,
            "{args:?}"
        );
    }
    let out = Command::new(BIN)
        .args(["site", SITE_FILE, "nothing_here"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("nothing_here"));
}

/// Issue 15, reproduction 6: a site whose balance needs a stream reversed answers no number,
/// over GET and on the command line. The site is the example as it was first written (its LLP
/// vent free, the turbine's extraction to LLP fixed); with that extraction cut to 5 kg/s the
/// vent would have to run backwards (-1.48 kg/s).
#[test]
fn a_reversed_flow_gives_no_number() {
    let dir = std::env::temp_dir().join(format!("steamcell-site-rev-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join("venting.json");
    let mut net = site();
    if let Some(s) = net["streams"]["llp_vent"].as_object_mut() {
        s.remove("flow");
    }
    net["streams"]["ct_to_llp"]["flow"] = json!(10);
    std::fs::write(&file, net.to_string()).unwrap();
    let s = start(&["--site", &format!("mill={}", file.display())], &[]);
    let (st, body) = get(&s.addr, "/site/mill/vented_steam?streams.ct_to_llp.flow=5");
    assert_eq!(st, 400, "{body}");
    assert!(
        body.contains("llp_vent") && body.contains("streams.ct_to_llp.flow"),
        "{body}"
    );
    let (st, _) = get(&s.addr, "/site/mill/vented_steam");
    assert_eq!(st, 200);
    let out = Command::new(BIN)
        .arg("site")
        .arg(&file)
        .args(["vented_steam", "streams.ct_to_llp.flow=5"])
        .output()
        .unwrap();
    assert!(!out.status.success());
    assert!(out.stdout.is_empty(), "no number on stdout");
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("llp_vent"), "{err}");
}

/// Issue 23, reproduction 1: `steamcell site examples/site/site.json net_power
/// "units.MP_users.demand=-5 t/h"` answered "site balance: over-specified: user MP_users: demand
/// = -1.3888888888888888 kg/s is negative": the wrong category, internal units and 17 digits.
/// A negative demand is an input out of range, stated in the unit it was given in (else the
/// request's unit for it).
#[test]
fn a_negative_demand_is_out_of_range_in_the_callers_unit() {
    for (args, want) in [
        (
            vec!["units.MP_users.demand=-5 t/h"],
            "units.MP_users.demand = -5 t/h is below the lowest value 0 t/h of a user's steam demand",
        ),
        (
            vec!["units.MP_users.demand=-5", "units=bar_th"],
            "units.MP_users.demand = -5 t/h is below the lowest value 0 t/h of a user's steam demand",
        ),
        (
            vec!["units.MP_users.demand=-1.5 kg/s", "units=us"],
            "units.MP_users.demand = -1.5 kg/s is below the lowest value 0 kg/s of a user's steam demand",
        ),
    ] {
        let out = Command::new(BIN)
            .args(["site", SITE_FILE, "net_power"])
            .args(&args)
            .output()
            .unwrap();
        assert!(!out.status.success(), "{args:?}");
        assert!(out.stdout.is_empty(), "no number on stdout");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(err.contains(want), "{args:?}: {err}");
        assert!(!err.contains("over-specified"), "{args:?}: {err}");
    }
}
