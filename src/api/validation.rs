//! Built-in verification: the IAPWS computer-program verification cases (IAPWS R7-97(2012) and
//! the supplementary releases SR2-01, SR3-03, SR4-04, SR5-05), compiled into the binary from
//! `tests/data/`, evaluated with this build's equations, and a digest over the results.
//!
//! `server.selftest` returns every case; `server.info` returns the digest, so a team can confirm
//! in one call that everybody runs the same validated build.
//!
//! It lives in the API layer because the cases are JSON (the check-value files of
//! `tests/data/`); [`printed_tolerance`] is the project's one rule for matching a printed value
//! "to all printed digits", used here and by every reference test.
//!
//! Invariant: the digest depends only on the computed numbers (bit patterns), the case ids and
//! the expected values; a change in any equation changes it.

use crate::water::if97::{b23, backward, region1, region2, region3, region4, region5};
use serde_json::Value;
use std::sync::OnceLock;

const IF97_JSON: &str = include_str!("../../tests/data/if97.json");
const SUPPLEMENTARY_JSON: &str = include_str!("../../tests/data/if97-supplementary.json");

/// One evaluated verification value.
#[derive(Debug, Clone, PartialEq)]
pub struct CaseResult {
    /// Case id, e.g. "if97-t5-1:h".
    pub id: String,
    /// Release and table, e.g. "IAPWS R7-97(2012) Table 5".
    pub source: String,
    /// What was evaluated.
    pub equation: String,
    /// Inputs, as printed.
    pub inputs: String,
    /// Quantity compared.
    pub quantity: String,
    /// Printed value.
    pub expected: f64,
    /// Computed value.
    pub computed: f64,
    /// Relative deviation (computed - expected) / |expected| (absolute where expected is 0).
    pub deviation: f64,
    /// Tolerance used: the larger of 1e-9 relative and half a unit in the last printed digit.
    pub tolerance: f64,
    /// Whether the case passed.
    pub passed: bool,
    /// Status of the printed value in the check-value collection: confirmed or consistent.
    pub status: String,
}

fn num(v: &Value) -> f64 {
    v.as_f64().unwrap_or(f64::NAN)
}

/// The tolerance for matching a value printed with `digits` significant digits "to all printed
/// digits": the larger of 1e-9 |printed| and half a unit in the last printed digit, as an
/// absolute difference in the printed value's unit. A printed 0 must be matched exactly.
pub fn printed_tolerance(printed: f64, digits: u32) -> f64 {
    if printed == 0.0 {
        return 0.0;
    }
    let last = printed.abs().log10().floor() as i32 - digits as i32 + 1;
    (0.5 * 10f64.powi(last)).max(1e-9 * printed.abs())
}

/// Evaluates one case's quantity with this build's equations, or None when the case is not
/// one of the built-in kinds.
fn evaluate(case: &Value, quantity: &str) -> Option<f64> {
    let table = case["table"].as_str()?;
    let eq = case["equation"].as_str().unwrap_or("");
    let sub = case["subregion"].as_str().unwrap_or("");
    let i = &case["inputs"];
    let p = num(&i["p"]);
    let t = num(&i["T"]);
    let h = num(&i["h"]);
    let s = num(&i["s"]);
    let pick = |pr: crate::water::Props| -> Option<f64> {
        Some(match quantity {
            "v" => pr.v,
            "h" => pr.h,
            "u" => pr.u,
            "s" => pr.s,
            "cp" => pr.cp,
            "cv" => pr.cv,
            "w" => pr.w,
            "p" => pr.p,
            _ => return None,
        })
    };
    match table {
        "Table 5" => pick(region1::props(p, t)),
        "Table 15" => pick(region2::props(p, t)),
        "Table 18" => pick(region2::metastable_props(p, t)),
        "Table 33" => pick(region3::props(num(&i["rho"]), t)),
        "Table 42" => pick(region5::props(p, t)),
        "Table 35" => Some(region4::psat(t)),
        "Table 36" => Some(region4::tsat(p)),
        "Table 7" => Some(backward::region1::t_ph(p, h)),
        "Table 9" => Some(backward::region1::t_ps(p, s)),
        "Table 24" => Some(backward::region2::t_ph(p, h)),
        "Table 29" => Some(backward::region2::t_ps(p, s)),
        "B23 equation check" => Some(if quantity == "p" {
            b23::p_b23(t)
        } else {
            b23::t_b23(p)
        }),
        "B2bc equation check" => Some(if quantity == "p" {
            backward::region2::p_2bc(h)
        } else {
            backward::region2::h_2bc(p)
        }),
        "p1(h,s) check values" => Some(backward::region1::p_hs(h, s)),
        "p2(h,s) check values" => Some(backward::region2::p_hs(h, s)),
        "h2ab(s) check value" => Some(backward::region2::h_2ab(s)),
        "h3ab(p) check value" => Some(backward::region3::h_3ab(p)),
        "T3(p,h) check values" => Some(backward::region3::t_ph(p, h)),
        "v3(p,h) check values" => Some(backward::region3::v_ph(p, h)),
        "T3(p,s) check values" => Some(backward::region3::t_ps(p, s)),
        "v3(p,s) check values" => Some(backward::region3::v_ps(p, s)),
        "p3sat(h) check values" => Some(backward::region3::p3sat_h(h)),
        "p3sat(s) check values" => Some(backward::region3::p3sat_s(s)),
        "p3(h,s) check values" => Some(backward::region3::p_hs(h, s)),
        "h'1(s) check values" => Some(backward::hs::h1_sat_liquid(s)),
        "h'3a(s) check values" => Some(backward::hs::h3a_sat_liquid(s)),
        "h''2ab(s) check values" => Some(backward::hs::h2ab_sat_vapour(s)),
        "h''2c3b(s) check values" => Some(backward::hs::h2c3b_sat_vapour(s)),
        "hB13(s) check values" => Some(backward::hs::h_b13(s)),
        "TB23(h,s) check values" => Some(backward::hs::t_b23_hs(h, s)),
        "Tsat(h,s) check values" => Some(backward::hs::tsat_hs(h, s)),
        "v(p,T) check values" => {
            let _ = sub;
            Some(backward::region3_vpt::v_pt(p, t))
        }
        "T3xy(p) check values" => {
            use backward::region3_vpt as b;
            let f: fn(f64) -> f64 = match eq.rsplit(' ').next()? {
                "T3ab(p)" => b::t_3ab,
                "T3cd(p)" => b::t_3cd,
                "T3ef(p)" => b::t_3ef,
                "T3gh(p)" => b::t_3gh,
                "T3ij(p)" => b::t_3ij,
                "T3jk(p)" => b::t_3jk,
                "T3mn(p)" => b::t_3mn,
                "T3op(p)" => b::t_3op,
                "T3qu(p)" => b::t_3qu,
                "T3rx(p)" => b::t_3rx,
                "T3uv(p)" => b::t_3uv,
                "T3wx(p)" => b::t_3wx,
                _ => return None,
            };
            Some(f(p))
        }
        _ => None,
    }
}

fn source_of(file_release: &str, case: &Value) -> String {
    let release = case["release"].as_str().unwrap_or(file_release);
    format!("IAPWS {} {}", release, case["table"].as_str().unwrap_or(""))
}

fn run_file(json: &str, release: &str, out: &mut Vec<CaseResult>) {
    let doc: Value = serde_json::from_str(json).expect("built-in check values are valid JSON");
    for case in doc["cases"].as_array().into_iter().flatten() {
        let id = case["id"].as_str().unwrap_or("?");
        let digits = case["digits"].as_u64().unwrap_or(9) as u32;
        let Some(expected) = case["expected"].as_object() else {
            continue;
        };
        for (q, val) in expected {
            let want = num(val);
            let Some(got) = evaluate(case, q) else {
                continue;
            };
            let d = case["digits_by_value"][q.as_str()]
                .as_u64()
                .map(|x| x as u32)
                .unwrap_or(digits);
            // Relative, like the deviation (absolute where the printed value is 0).
            let (dev, tol) = if want == 0.0 {
                (got - want, printed_tolerance(want, d))
            } else {
                (
                    (got - want) / want.abs(),
                    printed_tolerance(want, d) / want.abs(),
                )
            };
            out.push(CaseResult {
                id: format!("{id}:{q}"),
                source: source_of(release, case),
                equation: case["equation"].as_str().unwrap_or("").to_string(),
                inputs: case["inputs"].to_string(),
                quantity: q.clone(),
                expected: want,
                computed: got,
                deviation: dev,
                tolerance: tol,
                passed: dev.abs() <= tol,
                status: case["status"].as_str().unwrap_or("").to_string(),
            });
        }
    }
}

/// Every built-in verification case, evaluated (computed once per process).
pub fn cases() -> &'static [CaseResult] {
    static CASES: OnceLock<Vec<CaseResult>> = OnceLock::new();
    CASES.get_or_init(|| {
        let mut out = Vec::new();
        run_file(IF97_JSON, "R7-97(2012)", &mut out);
        run_file(SUPPLEMENTARY_JSON, "", &mut out);
        out
    })
}

/// FNV-1a 64-bit hash, enough to tell builds apart (not a security measure).
fn fnv1a(bytes: &[u8], mut h: u64) -> u64 {
    for b in bytes {
        h ^= *b as u64;
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    h
}

/// The validation digest: a hash over every case id, expected and computed bit pattern.
pub fn digest() -> String {
    static DIGEST: OnceLock<String> = OnceLock::new();
    DIGEST
        .get_or_init(|| {
            let mut h = 0xcbf2_9ce4_8422_2325u64;
            for c in cases() {
                h = fnv1a(c.id.as_bytes(), h);
                h = fnv1a(&c.expected.to_bits().to_le_bytes(), h);
                h = fnv1a(&c.computed.to_bits().to_le_bytes(), h);
            }
            let passed = cases().iter().filter(|c| c.passed).count();
            format!("if97-{:016x}-{}of{}", h, passed, cases().len())
        })
        .clone()
}
