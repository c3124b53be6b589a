//! Shared reading of the IAPWS check values in tests/data/ for the per-release test files:
//! case selection, the printed-digit tolerance and one assertion that names the case, release
//! and table.
#![allow(dead_code)]

use serde_json::Value;

/// The cases of `tests/data/if97-supplementary.json` filed under `release`.
pub fn supplementary_cases(release: &str) -> Vec<Value> {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/data/if97-supplementary.json"
    );
    let text = std::fs::read_to_string(path).expect("tests/data/if97-supplementary.json");
    let v: Value = serde_json::from_str(&text).expect("valid JSON");
    v["cases"]
        .as_array()
        .expect("cases")
        .iter()
        .filter(|c| c["release"] == release)
        .cloned()
        .collect()
}

/// A number of a case: `part` is "inputs" or "expected".
pub fn num(c: &Value, part: &str, key: &str) -> f64 {
    c[part][key]
        .as_f64()
        .unwrap_or_else(|| panic!("{}: {part}.{key}", c["id"]))
}

/// Printed-digit tolerance: max(1e-9 |x|, half a unit of the last of `digits` significant digits).
pub fn tolerance(x: f64, digits: i32) -> f64 {
    let half_unit = 0.5 * 10f64.powi(x.abs().log10().floor() as i32 - digits + 1);
    half_unit.max(1e-9 * x.abs())
}

/// Asserts that `got` matches the case's printed `key` to its printed digits.
pub fn check(release: &str, c: &Value, key: &str, got: f64) {
    let want = num(c, "expected", key);
    let digits = c["digits"].as_i64().expect("digits") as i32;
    let tol = tolerance(want, digits);
    assert!(
        (got - want).abs() <= tol,
        "{} (IAPWS {release}, {}): {key} = {got:.12e}, printed {want:.12e}, tolerance {tol:.1e}",
        c["id"],
        c["table"]
    );
}
