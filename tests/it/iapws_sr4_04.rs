//! Check values of IAPWS SR4-04(2014): region 3 p(h,s) (3a/3b), the (h,s) boundary equations
//! h'1(s), h'3a(s), h''2ab(s), h''2c3b(s), hB13(s), TB23(h,s) and Tsat(h,s): every SR4-04 case of
//! tests/data/if97-supplementary.json, to all printed digits (relative 1e-9 or half a unit of the
//! last printed digit, whichever is looser). The `consistent` cases are held to the same
//! printed-digit tolerance: their note compares the printed value with the basic equations
//! (0.001 kJ/kg, 25 mK), while this test evaluates the release's own equation, which reproduces
//! the printed digits. Also: the (h,s) region of each check point, and the fixed boundary values
//! used by the region choice.

use serde_json::Value;
use steamcell::water::if97::backward::hs::{self, RegionHs};
use steamcell::water::if97::backward::region3::{self, Sub3};
use steamcell::water::if97::backward::{region1, region2};
use steamcell::water::if97::region4 as sat;

const RELEASE: &str = "SR4-04(2014)";

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

fn hs_of(c: &Value) -> (f64, f64) {
    (num(c, "inputs", "h"), num(c, "inputs", "s"))
}

#[test]
fn every_sr4_04_case() {
    let all = cases();
    assert_eq!(all.len(), 27, "IAPWS {RELEASE}: case count");
    for c in &all {
        let id = &c["id"];
        let s_in = || num(c, "inputs", "s");
        match c["table"].as_str().expect("table") {
            "p3(h,s) check values" => {
                let (h, s) = hs_of(c);
                let want = match c["subregion"].as_str() {
                    Some("3a") => Sub3::A,
                    Some("3b") => Sub3::B,
                    other => panic!("{id}: subregion {other:?}"),
                };
                assert_eq!(
                    region3::sub3_s(s),
                    want,
                    "{id} (IAPWS {RELEASE}): subregion"
                );
                check(c, "p", region3::p_hs(h, s));
            }
            "h'1(s) check values" => check(c, "h", hs::h1_sat_liquid(s_in())),
            "h'3a(s) check values" => check(c, "h", hs::h3a_sat_liquid(s_in())),
            "h''2ab(s) check values" => check(c, "h", hs::h2ab_sat_vapour(s_in())),
            "h''2c3b(s) check values" => check(c, "h", hs::h2c3b_sat_vapour(s_in())),
            "hB13(s) check values" => check(c, "h", hs::h_b13(s_in())),
            "TB23(h,s) check values" => {
                let (h, s) = hs_of(c);
                check(c, "T", hs::t_b23_hs(h, s));
            }
            "Tsat(h,s) check values" => {
                let (h, s) = hs_of(c);
                check(c, "T", hs::tsat_hs(h, s));
            }
            other => panic!("{id}: unexpected table {other}"),
        }
    }
}

#[test]
fn check_points_land_in_their_region() {
    // The p3(h,s) check points of IAPWS SR4-04(2014) lie in region 3, the Tsat(h,s) ones in the
    // two-phase region 4.
    let mut n = 0;
    for c in cases() {
        let want = match c["table"].as_str() {
            Some("p3(h,s) check values") => RegionHs::R3,
            Some("Tsat(h,s) check values") => RegionHs::R4,
            _ => continue,
        };
        let (h, s) = hs_of(&c);
        assert_eq!(
            hs::region_hs(h, s),
            Some(want),
            "{} (IAPWS {RELEASE}, {}): region",
            c["id"],
            c["table"]
        );
        n += 1;
    }
    assert_eq!(n, 9);
}

#[test]
fn region_hs_outside_and_edges() {
    // Common practice, no source: states outside regions 1 to 4 give None, never a panic.
    assert_eq!(hs::region_hs(f64::NAN, 1.0), None);
    assert_eq!(
        hs::region_hs(-10.0, 0.0),
        None,
        "below the saturated liquid at 273.15 K"
    );
    assert_eq!(
        hs::region_hs(2000.0, 9.3),
        None,
        "colder than 273.15 K right of s''(273.15 K)"
    );
    assert_eq!(
        hs::region_hs(4500.0, 9.0),
        None,
        "hotter than region 2 (region 5 or beyond)"
    );
    assert_eq!(
        hs::region_hs(1500.0, 1.0),
        None,
        "above 100 MPa in region 1"
    );
    // Either side of the region-1 saturated-liquid line h'1(s) at s = 2 kJ/(kg K).
    let h = hs::h1_sat_liquid(2.0);
    assert_eq!(hs::region_hs(h - 1e-6, 2.0), Some(RegionHs::R4));
    assert_eq!(hs::region_hs(h + 1e-6, 2.0), Some(RegionHs::R1));
    // Either side of hB13(s) at s = 3.6 kJ/(kg K).
    let h = hs::h_b13(3.6);
    assert_eq!(hs::region_hs(h - 1e-6, 3.6), Some(RegionHs::R1));
    assert_eq!(hs::region_hs(h + 1e-6, 3.6), Some(RegionHs::R3));
    // Either side of h''2ab(s) at s = 7 kJ/(kg K).
    let h = hs::h2ab_sat_vapour(7.0);
    assert_eq!(hs::region_hs(h - 1e-6, 7.0), Some(RegionHs::R4));
    assert_eq!(hs::region_hs(h + 1e-6, 7.0), Some(RegionHs::R2));
    // Low-pressure vapour right of s''(273.15 K).
    assert_eq!(hs::region_hs(3000.0, 12.0), Some(RegionHs::R2));
}

// Fixed boundary values of `hs` (SR4-04(2014) and SR3-03(2014) validity statements), checked
// against the equations they bound. Tolerances are the equations' own consistency with the
// basic equations: R7-97(2012) 25 mK for T1(p,s), 10 mK for T2(p,s); observed values are
// given beside each check.

#[test]
fn s_liquid_623() {
    // h'(623.15 K) = 1670.858218 kJ/kg (SR3-03(2014), p3sat(h) validity). Observed deviations
    // 3.2e-3 (h'1, h'3a), 8.4e-3 (hB13) kJ/kg.
    let h_liq_623 = 1670.858218;
    assert!((hs::h1_sat_liquid(hs::S_LIQ_623) - h_liq_623).abs() < 0.01);
    assert!((hs::h3a_sat_liquid(hs::S_LIQ_623) - h_liq_623).abs() < 0.01);
    assert!((hs::h_b13(hs::S_LIQ_623) - h_liq_623).abs() < 0.01);
    // h'1 and h'3a join at s'(623.15 K) (observed 1.5e-7 kJ/kg).
    assert!((hs::h1_sat_liquid(hs::S_LIQ_623) - hs::h3a_sat_liquid(hs::S_LIQ_623)).abs() < 1e-5);
    // p3sat(s'(623.15 K)) = p_s(623.15 K) (observed 7e-4 MPa, about 4 mK in T_s).
    assert!((region3::p3sat_s(hs::S_LIQ_623) - sat::psat(623.15)).abs() < 1e-3);
}

#[test]
fn s_vapour_623_and_b23_corner() {
    // h''(623.15 K) = 2563.592004 kJ/kg (SR3-03(2014), p3sat(h) validity) is H_B23_MIN.
    assert_eq!(hs::H_B23_MIN, 2563.592004);
    // Observed 8e-8 kJ/kg.
    assert!((hs::h2c3b_sat_vapour(hs::S_VAP_623) - hs::H_B23_MIN).abs() < 1e-5);
    // Observed 4e-5 K.
    assert!((hs::tsat_hs(hs::H_B23_MIN, hs::S_VAP_623) - 623.15).abs() < 1e-3);
    // B23 starts at the saturated vapour at 623.15 K (observed 1.5 mK).
    assert!((hs::t_b23_hs(hs::H_B23_MIN, hs::S_VAP_623) - 623.15).abs() < 0.025);
}

#[test]
fn s_b13_min_is_on_the_100_mpa_isobar_at_623_15_k() {
    let s = hs::S_B13_MIN;
    let h = hs::h_b13(s);
    // Observed 0.012 MPa (p1) and 0.009 MPa (p3) below 100 MPa.
    assert!((region1::p_hs(h, s) - 100.0).abs() < 0.02);
    assert!((region3::p_hs(h, s) - 100.0).abs() < 0.02);
    // Observed 21 mK (T1(p,s) tolerance 25 mK).
    assert!((region1::t_ps(100.0, s) - 623.15).abs() < 0.025);
}

#[test]
fn s_at_273_15_k() {
    let p_273 = sat::psat(273.15);
    // Saturated vapour: observed 8e-6 K in Tsat(h,s), 5.1 mK in T2b(p,s) (tolerance 10 mK).
    let h = hs::h2ab_sat_vapour(hs::S_VAP_273);
    assert!((hs::tsat_hs(h, hs::S_VAP_273) - 273.15).abs() < 1e-3);
    assert!((region2::t_ps(p_273, hs::S_VAP_273) - 273.15).abs() < 0.010);
    // Saturated liquid: observed 3.6 mK in T1(p,s) (tolerance 25 mK).
    assert!((region1::t_ps(p_273, hs::S_LIQ_273) - 273.15).abs() < 0.025);
}

#[test]
fn critical_entropy_and_5_85_joint() {
    // The two saturated lines meet at s_c (observed 5e-11 kJ/kg), at the critical pressure
    // 22.064 MPa (R7-97(2012)) through p3(h,s) (observed 1e-12 MPa) and p3sat(s) (5.5e-4 MPa).
    let hc = hs::h3a_sat_liquid(region3::S_C);
    assert!((hc - hs::h2c3b_sat_vapour(region3::S_C)).abs() < 1e-6);
    assert!((region3::p_hs(hc, region3::S_C) - 22.064).abs() < 1e-6);
    assert!((region3::p3sat_s(region3::S_C) - 22.064).abs() < 1e-3);
    // h''2c3b and h''2ab join at s = 5.85 (observed 6e-7 kJ/kg).
    assert!((hs::h2c3b_sat_vapour(5.85) - hs::h2ab_sat_vapour(5.85)).abs() < 1e-5);
}
