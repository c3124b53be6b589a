//! IAPWS R15-11 (thermal conductivity) check values from tests/data/conductivity-2011.json:
//! Table 4 (without the critical enhancement) and Table 5 (with it, at 647.35 K, using IAPWS-95
//! and the full R12-08 viscosity). Values in mW/(m K).

use serde_json::Value;
use steamcell::api::validation::printed_tolerance;
use steamcell::water::iapws95;
use steamcell::water::transport::{
    conductivity, conductivity_background, conductivity_with, prandtl, thermal_diffusivity,
    transport_95, viscosity, viscosity_industrial,
};

fn cases(file: &str) -> Vec<Value> {
    let path = format!("{}/tests/data/{file}", env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(&path).expect("check-value file");
    let v: Value = serde_json::from_str(&text).expect("valid JSON");
    v["cases"].as_array().expect("cases").clone()
}

/// Tolerance "to all printed digits": relative 1e-9 of the printed value or half a unit of the
/// last printed digit, whichever is looser (project rule).
fn check(id: &str, got: f64, want: f64, digits: i32) {
    let tol = printed_tolerance(want, digits as u32);
    assert!(
        (got - want).abs() <= tol,
        "{id}: got {got:.12e}, want {want:.12e} (tol {tol:e})"
    );
}

fn num(v: &Value, key: &str) -> f64 {
    v[key].as_f64().unwrap_or_else(|| panic!("missing {key}"))
}

#[test]
fn table4_without_critical_enhancement() {
    // IAPWS R15-11 Table 4.
    let mut n = 0;
    for c in cases("conductivity-2011.json")
        .iter()
        .filter(|c| c["table"] == "Table 4")
    {
        let id = c["id"].as_str().unwrap();
        let (t, rho) = (num(&c["inputs"], "T"), num(&c["inputs"], "rho"));
        let got = conductivity_background(rho, t) * 1e3;
        check(
            id,
            got,
            num(&c["expected"], "lambda"),
            c["digits"].as_i64().unwrap() as i32,
        );
        n += 1;
    }
    assert_eq!(n, 4);
}

#[test]
fn table5_with_critical_enhancement() {
    // IAPWS R15-11 Table 5, T = 647.35 K.
    let mut n = 0;
    for c in cases("conductivity-2011.json")
        .iter()
        .filter(|c| c["table"] == "Table 5")
    {
        let id = c["id"].as_str().unwrap();
        let (t, rho) = (num(&c["inputs"], "T"), num(&c["inputs"], "rho"));
        let got = conductivity(rho, t) * 1e3;
        check(
            id,
            got,
            num(&c["expected"], "lambda"),
            c["digits"].as_i64().unwrap() as i32,
        );
        n += 1;
    }
    assert_eq!(n, 8);
}

#[test]
fn industrial_variant_agrees_with_full_given_the_same_inputs() {
    // conductivity_with fed with IAPWS-95 inputs is the full correlation (Table 5 row 5 state);
    // with the industrial viscosity (mu_bar_2 = 1) it differs only near the critical point.
    let (rho, t) = (322.0, 647.35);
    let p = iapws95::props(rho, t);
    let z = iapws95::drho_dp_t(rho, t);
    let full = conductivity_with(rho, t, p.cp, p.cv, viscosity(rho, t), z);
    assert!((full - conductivity(rho, t)).abs() <= 1e-15 * full);
    let ind = conductivity_with(rho, t, p.cp, p.cv, viscosity_industrial(rho, t), z);
    assert!(ind > full, "a smaller viscosity gives a larger enhancement");
    // Far from critical the enhancement is small: 298.15 K liquid.
    let (rho, t) = (998.0, 298.15);
    let p = iapws95::props(rho, t);
    let l = conductivity_with(
        rho,
        t,
        p.cp,
        p.cv,
        viscosity_industrial(rho, t),
        iapws95::drho_dp_t(rho, t),
    );
    let b = conductivity_background(rho, t);
    assert!(l >= b && (l - b) < 1e-3 * b, "{l} {b}");
}

#[test]
fn derived_quantities() {
    // Definitions (common practice, no source): nu = mu/rho, a = lambda/(rho cp), Pr = mu cp/lambda.
    let (rho, t) = (998.0, 298.15);
    let tr = transport_95(rho, t);
    let cp = iapws95::props(rho, t).cp;
    assert!((tr.nu - tr.mu / rho).abs() <= 1e-15 * tr.nu);
    assert!((tr.a - thermal_diffusivity(tr.lambda, rho, cp)).abs() <= 1e-15 * tr.a);
    assert!((tr.pr - prandtl(tr.mu, cp, tr.lambda)).abs() <= 1e-12 * tr.pr);
    // Liquid water at 25 °C: Pr about 6.1 (common practice, no source).
    assert!(tr.pr > 5.9 && tr.pr < 6.3, "Pr {}", tr.pr);
    assert!((tr.pr - tr.nu / tr.a).abs() <= 1e-12 * tr.pr);
}
