//! Check values of the IAPWS-IF97 backward equations, IAPWS R7-97(2012): Table 7 (region 1
//! T(p,h)), Table 9 (region 1 T(p,s)), Table 24 (region 2 T(p,h)), Table 29 (region 2 T(p,s)) and
//! the B2bc equation check (Eqs. (20), (21)). Values from tests/data/if97.json, to all printed
//! digits: relative 1e-9 or half a unit of the last printed digit, whichever is looser.

use serde_json::Value;
use steamcell::api::validation::printed_tolerance;
use steamcell::water::if97::backward::{region1, region2};

fn cases() -> Vec<Value> {
    let text =
        std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/tests/data/if97.json"))
            .expect("tests/data/if97.json");
    let v: Value = serde_json::from_str(&text).expect("valid JSON");
    v["cases"].as_array().expect("cases").clone()
}

fn num(c: &Value, part: &str, key: &str) -> f64 {
    c[part][key]
        .as_f64()
        .unwrap_or_else(|| panic!("{}: {part}.{key}", c["id"]))
}

fn check(c: &Value, key: &str, got: f64) {
    let want = num(c, "expected", key);
    let digits = c["digits"].as_i64().expect("digits") as i32;
    let tol = printed_tolerance(want, digits as u32);
    assert!(
        (got - want).abs() <= tol,
        "{} ({}, IAPWS R7-97(2012)): {key} = {got:.12e}, printed {want:.12e}, tolerance {tol:.1e}",
        c["id"],
        c["table"]
    );
}

fn sub_of(c: &Value) -> region2::Sub2 {
    match c["subregion"].as_str() {
        Some("2a") => region2::Sub2::A,
        Some("2b") => region2::Sub2::B,
        Some("2c") => region2::Sub2::C,
        other => panic!("{}: subregion {other:?}", c["id"]),
    }
}

fn run(table: &str, expected_count: usize, f: impl Fn(&Value)) {
    let all = cases();
    let mine: Vec<&Value> = all.iter().filter(|c| c["table"] == table).collect();
    assert_eq!(
        mine.len(),
        expected_count,
        "IAPWS R7-97(2012) {table}: case count"
    );
    for c in mine {
        f(c);
    }
}

#[test]
fn table_7_region1_t_ph() {
    run("Table 7", 3, |c| {
        check(
            c,
            "T",
            region1::t_ph(num(c, "inputs", "p"), num(c, "inputs", "h")),
        )
    });
}

#[test]
fn table_9_region1_t_ps() {
    run("Table 9", 3, |c| {
        check(
            c,
            "T",
            region1::t_ps(num(c, "inputs", "p"), num(c, "inputs", "s")),
        )
    });
}

#[test]
fn table_24_region2_t_ph() {
    run("Table 24", 9, |c| {
        let (p, h) = (num(c, "inputs", "p"), num(c, "inputs", "h"));
        assert_eq!(
            region2::sub2_ph(p, h),
            sub_of(c),
            "{} (Table 24): subregion",
            c["id"]
        );
        check(c, "T", region2::t_ph(p, h));
    });
}

#[test]
fn table_29_region2_t_ps() {
    run("Table 29", 9, |c| {
        let (p, s) = (num(c, "inputs", "p"), num(c, "inputs", "s"));
        assert_eq!(
            region2::sub2_ps(p, s),
            sub_of(c),
            "{} (Table 29): subregion",
            c["id"]
        );
        check(c, "T", region2::t_ps(p, s));
    });
}

#[test]
fn b2bc_equation_check() {
    run("B2bc equation check", 2, |c| {
        if c["inputs"].get("h").is_some() {
            check(c, "p", region2::p_2bc(num(c, "inputs", "h")));
        } else {
            check(c, "h", region2::h_2bc(num(c, "inputs", "p")));
        }
    });
}

#[test]
fn b2bc_used_only_above_6_5467_mpa() {
    // Coefficient collection README (R7-97(2012) B2bc validity from 6.5467 MPa): between 4 and
    // 6.5467 MPa all of region 2 is 2b for T(p,h); above, h below h_B2bc(p) is 2c.
    assert_eq!(region2::sub2_ph(5.0, 2700.0), region2::Sub2::B);
    assert_eq!(region2::sub2_ph(6.5, 2700.0), region2::Sub2::B);
    assert_eq!(region2::sub2_ph(4.0, 2700.0), region2::Sub2::A);
    let h = region2::h_2bc(20.0);
    assert_eq!(region2::sub2_ph(20.0, h - 1e-6), region2::Sub2::C);
    assert_eq!(region2::sub2_ph(20.0, h), region2::Sub2::B);
    // p_2bc and h_2bc are inverses (common practice, no source).
    assert!((region2::p_2bc(h) - 20.0).abs() < 1e-10);
}
