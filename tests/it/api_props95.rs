//! The IAPWS-95 and transport additions through the wire (`water.state`, `water.batch`,
//! `water.saturation` on the real RpcModule): check values of IAPWS R6-95(2018) Table 7,
//! IAPWS R12-08 Table 4, IAPWS R15-11 Table 4 and IAPWS R1-76(2014), given as (T, rho) in si units;
//! ice inputs refused with a message naming the melting curve (IAPWS R14-08(2011)).

use serde_json::Value;
use steamcell::api::validation::printed_tolerance;

fn rpc(method: &str, params: &str) -> Value {
    let rt = tokio::runtime::Builder::new_current_thread()
        .enable_all()
        .build()
        .unwrap();
    let module = steamcell::server::rpc_module(Default::default());
    let req = format!(r#"{{"jsonrpc":"2.0","id":1,"method":"{method}","params":{params}}}"#);
    let (resp, _rx) = rt
        .block_on(module.raw_json_request(&req, 1))
        .expect("valid request");
    serde_json::from_str(resp.get()).unwrap()
}

/// Printed-digit tolerance: relative 1e-9 or half a unit of the last of `digits` significant
/// digits, whichever is looser.
fn check(what: &str, got: &Value, want: f64, digits: i32) {
    let got = got.as_f64().unwrap_or_else(|| panic!("{what}: {got}"));
    let tol = printed_tolerance(want, digits as u32);
    assert!((got - want).abs() <= tol, "{what}: {got} vs {want}");
}

/// IAPWS R6-95(2018) Table 7, T = 300 K, rho = 996.5560 kg/m3: p = 0.992418352e-1 MPa,
/// cv = 4.13018112 kJ/(kg K), w = 1501.51914 m/s, s = 0.393062643 kJ/(kg K) (9 digits).
#[test]
fn iapws95_table7_through_the_wire() {
    let v = rpc(
        "water.state",
        r#"{"given":{"T":300,"rho":996.556},"units":"si","formulation":"iapws95"}"#,
    );
    let r = &v["result"];
    assert_eq!(r["formulation"], "IAPWS-95", "{v}");
    check("p", &r["p"], 0.992418352e-1 * 1e6, 9);
    check("cv", &r["cv"], 4.13018112e3, 9);
    check("w", &r["w"], 1501.51914, 9);
    check("s", &r["s"], 0.393062643e3, 9);
    // "IAPWS-95" is accepted as a name too; the default stays IF97.
    let v = rpc(
        "water.state",
        r#"{"given":{"T":300,"rho":996.556},"units":"si","formulation":"IAPWS-95"}"#,
    );
    assert_eq!(v["result"]["formulation"], "IAPWS-95");
    let v = rpc("water.state", r#"{"given":{"p":1,"T":100}}"#);
    assert_eq!(v["result"]["formulation"], "IAPWS-IF97");
}

/// IAPWS R12-08 Table 4 (T = 298.15 K, rho = 998 kg/m3: mu = 889.735100 uPa s, mu_bar_2 = 1) and
/// IAPWS R15-11 Table 4 (same state: lambda = 607.712868 mW/(m K), without the critical
/// enhancement). Far from the critical point the full correlations reduce to these (the
/// enhancement terms vanish: Delta chi < 0 there), so the IAPWS-95 state gives them.
#[test]
fn transport_check_values_through_the_wire() {
    let v = rpc(
        "water.state",
        r#"{"given":{"T":298.15,"rho":998},"units":"si","formulation":"iapws95"}"#,
    );
    let r = &v["result"];
    check("mu", &r["mu"], 889.735100e-6, 9);
    check("lambda", &r["lambda"], 607.712868e-3, 9);
    let (mu, lam, rho) = (889.7351e-6, 607.712868e-3, 998.0);
    let cp = r["cp"].as_f64().unwrap();
    check("nu", &r["nu"], mu / rho, 7);
    check(
        "thermal_diffusivity",
        &r["thermal_diffusivity"],
        lam / (rho * cp),
        7,
    );
    check("pr", &r["pr"], mu * cp / lam, 7);
    assert_eq!(r["units"]["mu"], "Pa s");
    assert_eq!(r["units"]["lambda"], "W/(m K)");
    // The IF97 state at the same (T, rho) with the industrial variants: R12-08 Table 4 is
    // mu_bar_2 = 1 by definition; the conductivity differs only through IF97's cp/cv, here not
    // at all (no enhancement): the same values to the density's IF97-vs-IAPWS-95 agreement.
    let v = rpc(
        "water.state",
        r#"{"given":{"T":298.15,"rho":998},"units":"si"}"#,
    );
    let r = &v["result"];
    check("IF97 mu", &r["mu"], 889.735100e-6, 9);
    check("IF97 lambda", &r["lambda"], 607.712868e-3, 9);
}

/// Transport of a wet mixture is undefined: null with a reason, in water.state and water.batch.
#[test]
fn wet_states_have_no_transport() {
    for f in ["if97", "iapws95"] {
        let v = rpc(
            "water.state",
            &format!(r#"{{"given":{{"T":100,"x":0.5}},"formulation":"{f}"}}"#),
        );
        let r = &v["result"];
        for k in ["mu", "lambda", "nu", "thermal_diffusivity", "pr"] {
            assert!(r[k].is_null(), "{f} {k}: {v}");
            assert!(
                r["undefined"][k].as_str().unwrap().contains("wet"),
                "{f} {k}: {v}"
            );
        }
    }
    let v = rpc(
        "water.batch",
        r#"{"given":{"T":[100,100],"x":[0.5,"0 %"]},"want":["mu","lambda","pr"],"formulation":"iapws95"}"#,
    );
    let c = &v["result"]["columns"];
    assert!(c["mu"][0].is_null() && c["mu"][1].is_null(), "{v}");
    assert_eq!(v["result"]["units"]["mu"], "uPa s", "{v}");
    let v = rpc(
        "water.batch",
        r#"{"given":{"T":[298.15,298.15],"rho":[998,1200]},"want":["mu","lambda"],"units":"si","formulation":"iapws95"}"#,
    );
    let c = &v["result"]["columns"];
    // IAPWS R12-08 Table 4 and R15-11 Table 4 at 298.15 K, 998 and 1200 kg/m3.
    check("batch mu 998", &c["mu"][0], 889.735100e-6, 9);
    check("batch mu 1200", &c["mu"][1], 1437.649467e-6, 10);
    check("batch lambda 998", &c["lambda"][0], 607.712868e-3, 9);
    check("batch lambda 1200", &c["lambda"][1], 799.038144e-3, 9);
}

/// IAPWS R1-76(2014) table of values: 58.91 mN/m at 100 degC (4 digits), both formulations;
/// engineering preset gives mN/m.
#[test]
fn surface_tension_at_100_degc() {
    for f in ["if97", "iapws95"] {
        let v = rpc(
            "water.saturation",
            &format!(r#"{{"T":100,"formulation":"{f}"}}"#),
        );
        let r = &v["result"];
        check("sigma", &r["surface_tension"], 58.91, 4);
        assert_eq!(r["units"]["surface_tension"], "mN/m");
        assert_eq!(
            r["formulation"],
            if f == "if97" {
                "IAPWS-IF97"
            } else {
                "IAPWS-95"
            }
        );
        assert!(r["liquid"]["mu"].as_f64().unwrap() > 0.0, "{v}");
    }
    // si: N/m.
    let v = rpc("water.saturation", r#"{"T":373.15,"units":"si"}"#);
    check("sigma si", &v["result"]["surface_tension"], 58.91e-3, 4);
}

/// IAPWS R14-08(2011): 270 K at 0.1 MPa is ice Ih, and at 300 K a pressure above the ice VI
/// melting pressure is ice VI: out_of_range naming the melting curve, in both formulations.
#[test]
fn ice_is_out_of_range() {
    let p_vi = steamcell::water::melting::melting_pressure_vi(300.0).unwrap();
    assert!(p_vi < 1000.0, "{p_vi}");
    let hi = format!("{} MPa", p_vi + 5.0);
    for f in ["if97", "iapws95"] {
        for (p, t, curve) in [
            ("0.1 MPa".to_string(), "270 K", "ice Ih"),
            (hi.clone(), "300 K", "ice VI"),
        ] {
            let v = rpc(
                "water.state",
                &format!(r#"{{"given":{{"p":"{p}","T":"{t}"}},"formulation":"{f}"}}"#),
            );
            let e = &v["error"];
            assert_eq!(e["data"]["kind"], "out_of_range", "{f} {p} {t}: {v}");
            let msg = e["message"].as_str().unwrap();
            assert!(
                msg.contains("melting curve") && msg.contains(curve),
                "{f} {p} {t}: {msg}"
            );
        }
    }
}

/// IAPWS R14-08(2011): a component stream solves through the same entry point as
/// `water.state`, so an inlet at 0.1 MPa, 270 K (ice Ih) gets the same melting-curve message,
/// and 100 Pa, 270 K (vapour: below the sublimation pressure at 270 K, about 470 Pa, checked
/// here with the R14-08 sublimation curve) IF97's range error, not the ice message.
#[test]
fn ice_in_a_component_stream() {
    let p_sub = steamcell::water::melting::sublimation_pressure(270.0).unwrap();
    assert!(p_sub > 4.5e-4 && p_sub < 4.9e-4, "{p_sub}");
    let v = rpc(
        "valve.throttle",
        r#"{"inlet":{"p":"0.1 MPa","T":"270 K"},"outlet_p":"0.05 MPa"}"#,
    );
    let e = &v["error"];
    assert_eq!(e["data"]["kind"], "out_of_range", "{v}");
    let msg = e["message"].as_str().unwrap();
    assert!(
        msg.contains("melting curve") && msg.contains("ice Ih"),
        "{msg}"
    );
    let v = rpc(
        "valve.throttle",
        r#"{"inlet":{"p":"0.0001 MPa","T":"270 K"},"outlet_p":"0.00005 MPa"}"#,
    );
    let msg = v["error"]["message"].as_str().unwrap();
    assert!(
        msg.contains("273.15 K") && msg.contains("IAPWS-IF97") && !msg.contains("ice"),
        "{msg}"
    );
}

/// An unknown formulation is refused with the accepted names.
#[test]
fn unknown_formulation() {
    let v = rpc(
        "water.state",
        r#"{"given":{"p":1,"T":100},"formulation":"ideal"}"#,
    );
    let msg = v["error"]["message"].as_str().unwrap();
    assert!(msg.contains("if97") && msg.contains("iapws95"), "{msg}");
}
