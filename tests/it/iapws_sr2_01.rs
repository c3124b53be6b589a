//! Check values of IAPWS SR2-01(2014), backward equations p(h,s) for regions 1 and 2 and the
//! 2a/2b boundary h2ab(s): every SR2-01 case of tests/data/if97-supplementary.json, to all printed
//! digits (relative 1e-9 or half a unit of the last printed digit, whichever is looser). The
//! `consistent` cases are held to the same printed-digit tolerance: their note compares the
//! printed value with the basic equation, while this test evaluates the release's own
//! equation, which reproduces the printed digits.

use serde_json::Value;
use steamcell::water::if97::backward::hs::{region_hs, RegionHs};
use steamcell::water::if97::backward::{region1, region2};

const RELEASE: &str = "SR2-01(2014)";

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

fn sub_of(c: &Value) -> region2::Sub2 {
    match c["subregion"].as_str() {
        Some("2a") => region2::Sub2::A,
        Some("2b") => region2::Sub2::B,
        Some("2c") => region2::Sub2::C,
        other => panic!("{}: subregion {other:?}", c["id"]),
    }
}

#[test]
fn every_sr2_01_case() {
    let all = cases();
    assert_eq!(all.len(), 13, "IAPWS {RELEASE}: case count");
    for c in &all {
        match c["table"].as_str().expect("table") {
            "p1(h,s) check values" => check(
                c,
                "p",
                region1::p_hs(num(c, "inputs", "h"), num(c, "inputs", "s")),
            ),
            "p2(h,s) check values" => {
                let (h, s) = (num(c, "inputs", "h"), num(c, "inputs", "s"));
                assert_eq!(
                    region2::sub2_hs(h, s),
                    sub_of(c),
                    "{} (IAPWS {RELEASE}): subregion",
                    c["id"]
                );
                check(c, "p", region2::p_hs(h, s));
            }
            "h2ab(s) check value" => check(c, "h", region2::h_2ab(num(c, "inputs", "s"))),
            other => panic!("{}: unexpected table {other}", c["id"]),
        }
    }
}

#[test]
fn check_points_land_in_their_region() {
    // Each p(h,s) check point of IAPWS SR2-01(2014) lies in the region of its equation.
    for c in cases() {
        let want = match c["table"].as_str() {
            Some("p1(h,s) check values") => RegionHs::R1,
            Some("p2(h,s) check values") => RegionHs::R2,
            _ => continue,
        };
        let (h, s) = (num(&c, "inputs", "h"), num(&c, "inputs", "s"));
        assert_eq!(
            region_hs(h, s),
            Some(want),
            "{} (IAPWS {RELEASE}, {}): region",
            c["id"],
            c["table"]
        );
    }
}
