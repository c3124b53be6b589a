//! Check values of IAPWS SR3-03(2014), region 3 backward equations T(p,h), v(p,h), T(p,s),
//! v(p,s), the 3a/3b boundary h3ab(p) and the saturation pressures p3sat(h), p3sat(s): every
//! SR3-03 case of tests/data/if97-supplementary.json, to all printed digits (relative 1e-9 or
//! half a unit of the last printed digit, whichever is looser). The `consistent` cases are held
//! to the same printed-digit tolerance: their note compares the printed value with the basic
//! equation (0.01 % in v, 25 mK in T, 10 mK in Tsat), while this test evaluates the release's own
//! equation, which reproduces the printed digits.

use serde_json::Value;
use steamcell::water::if97::backward::region3::{self, Sub3};

const RELEASE: &str = "SR3-03(2014)";

use crate::reference;

fn cases() -> Vec<Value> {
    reference::supplementary_cases(RELEASE)
}

fn num(c: &Value, part: &str, key: &str) -> f64 {
    reference::num(c, part, key)
}

fn check(c: &Value, key: &str, got: f64) {
    reference::check(RELEASE, c, key, got)
}

fn sub_of(c: &Value) -> Sub3 {
    match c["subregion"].as_str() {
        Some("3a") => Sub3::A,
        Some("3b") => Sub3::B,
        other => panic!("{}: subregion {other:?}", c["id"]),
    }
}

#[test]
fn every_sr3_03_case() {
    let all = cases();
    assert_eq!(all.len(), 31, "IAPWS {RELEASE}: case count");
    for c in &all {
        let id = &c["id"];
        match c["table"].as_str().expect("table") {
            "h3ab(p) check value" => check(c, "h", region3::h_3ab(num(c, "inputs", "p"))),
            "T3(p,h) check values" | "v3(p,h) check values" => {
                let (p, h) = (num(c, "inputs", "p"), num(c, "inputs", "h"));
                assert_eq!(
                    region3::sub3_ph(p, h),
                    sub_of(c),
                    "{id} (IAPWS {RELEASE}): subregion"
                );
                if c["expected"].get("T").is_some() {
                    check(c, "T", region3::t_ph(p, h));
                } else {
                    check(c, "v", region3::v_ph(p, h));
                }
            }
            "T3(p,s) check values" | "v3(p,s) check values" => {
                let (p, s) = (num(c, "inputs", "p"), num(c, "inputs", "s"));
                assert_eq!(
                    region3::sub3_s(s),
                    sub_of(c),
                    "{id} (IAPWS {RELEASE}): subregion"
                );
                if c["expected"].get("T").is_some() {
                    check(c, "T", region3::t_ps(p, s));
                } else {
                    check(c, "v", region3::v_ps(p, s));
                }
            }
            "p3sat(h) check values" => check(c, "p", region3::p3sat_h(num(c, "inputs", "h"))),
            "p3sat(s) check values" => check(c, "p", region3::p3sat_s(num(c, "inputs", "s"))),
            other => panic!("{id}: unexpected table {other}"),
        }
    }
}

#[test]
fn subregion_splits() {
    // IAPWS SR3-03(2014): 3a for h <= h3ab(p), for s <= s_c = 4.41202148223476 kJ/(kg K).
    let h = region3::h_3ab(30.0);
    assert_eq!(region3::sub3_ph(30.0, h), Sub3::A);
    assert_eq!(region3::sub3_ph(30.0, h + 1e-9), Sub3::B);
    assert_eq!(region3::sub3_s(4.41202148223476), Sub3::A);
    assert_eq!(region3::sub3_s(4.412021482235), Sub3::B);
}
