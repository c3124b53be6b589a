//! IAPWS R1-76(2014) (surface tension) check values from tests/data/surface-tension.json: the
//! constants of Eq. (1) and the table of values (mN/m, two decimals), plus the range limits.

use serde_json::Value;
use steamcell::api::validation::printed_tolerance;
use steamcell::water::tables::surface_tension as tab;
use steamcell::water::transport::surface_tension;
use steamcell::Error;

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
fn constants_of_eq1() {
    // IAPWS R1-76(2014) Eq. (1) constants.
    let c = &cases("surface-tension.json")[0];
    assert_eq!(c["id"], "st-constants");
    let e = &c["expected"];
    let d = &c["digits_by_value"];
    check("B", tab::B, num(e, "B"), d["B"].as_i64().unwrap() as i32);
    check(
        "b",
        tab::SMALL_B,
        num(e, "b"),
        d["b"].as_i64().unwrap() as i32,
    );
    check(
        "mu",
        tab::MU,
        num(e, "mu"),
        d["mu"].as_i64().unwrap() as i32,
    );
    check(
        "Tc",
        tab::T_C,
        num(e, "Tc"),
        d["Tc"].as_i64().unwrap() as i32,
    );
}

#[test]
fn table_of_values() {
    // IAPWS R1-76(2014) table of values (several obtained from Eq. (1), see each case's note).
    let mut n = 0;
    for c in cases("surface-tension.json")
        .iter()
        .filter(|c| c["table"] == "Table of values")
    {
        let id = c["id"].as_str().unwrap();
        let t = num(&c["inputs"], "T");
        let got = surface_tension(t).unwrap() * 1e3;
        check(
            id,
            got,
            num(&c["expected"], "sigma"),
            c["digits"].as_i64().unwrap() as i32,
        );
        n += 1;
    }
    assert_eq!(n, 11);
}

#[test]
fn range() {
    assert_eq!(surface_tension(647.096).unwrap(), 0.0);
    assert!(surface_tension(248.15).unwrap() > surface_tension(273.16).unwrap());
    for t in [248.14, 647.1, 700.0] {
        assert!(
            matches!(surface_tension(t), Err(Error::OutOfRange { .. })),
            "{t}"
        );
    }
    assert!(matches!(
        surface_tension(f64::NAN),
        Err(Error::NotFinite { .. })
    ));
}
