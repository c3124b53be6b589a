//! Shared reading of the IAPWS check values in tests/data/ for the per-release test files:
//! case selection and one assertion that names the case, release
//! and table, with the project's one printed-digit tolerance
//! (`steamcell::api::validation::printed_tolerance`).
#![allow(dead_code)]

use serde_json::Value;
use steamcell::api::validation::printed_tolerance;

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

/// Asserts that `got` matches the case's printed `key` to its printed digits.
pub fn check(release: &str, c: &Value, key: &str, got: f64) {
    let want = num(c, "expected", key);
    let digits = c["digits"].as_i64().expect("digits") as i32;
    let tol = printed_tolerance(want, digits as u32);
    assert!(
        (got - want).abs() <= tol,
        "{} (IAPWS {release}, {}): {key} = {got:.12e}, printed {want:.12e}, tolerance {tol:.1e}",
        c["id"],
        c["table"]
    );
}
