//! `server.selftest` and the validation digest reported by `server.info`: the built-in IAPWS
//! verification cases of [`super::validation`], shaped for the wire.
//!
//! Invariant: values here are in the releases' own units (MPa, K, kJ/kg, kJ/(kg K), m3/kg), as
//! printed in the verification tables, never in a unit preset.

use super::server_methods::NoParams;
use super::validation;
use super::MethodSpec;
use schemars::JsonSchema;
use serde::Serialize;

/// A short text identifying the validation state of this build: a hash over every built-in
/// verification case's id, printed value and computed value, and the pass count.
pub fn validation_digest() -> String {
    validation::digest()
}

/// One verification case.
#[derive(Debug, Clone, Serialize, JsonSchema)]
pub struct SelftestCase {
    /// Case id and quantity, e.g. "if97-t5-1:h".
    pub id: String,
    /// Release and table the printed value comes from, e.g. "IAPWS R7-97(2012) Table 5".
    pub source: String,
    /// The equation evaluated.
    pub equation: String,
    /// Inputs as printed (JSON text, release units: p MPa, T K, h kJ/kg, s kJ/(kg K), rho kg/m3).
    pub inputs: String,
    /// Quantity compared.
    pub quantity: String,
    /// Printed value (release units).
    pub expected: f64,
    /// Value computed by this build (release units).
    pub computed: f64,
    /// Relative deviation (computed - expected) / |expected|.
    pub deviation: f64,
    /// Relative tolerance: the larger of 1e-9 and half a unit in the last printed digit.
    pub tolerance: f64,
    /// Whether |deviation| <= tolerance.
    pub passed: bool,
    /// Status of the printed value in the project's check-value collection (confirmed or
    /// consistent against an independent implementation).
    pub status: String,
}

/// Result of `server.selftest`.
#[derive(Debug, Clone, Serialize, JsonSchema)]
pub struct SelftestResult {
    /// Cases that passed.
    pub passed: usize,
    /// Cases that failed.
    pub failed: usize,
    /// The validation digest (the same as `server.info`'s).
    pub digest: String,
    /// Program version.
    pub version: String,
    /// Every case.
    pub cases: Vec<SelftestCase>,
}

/// Every built-in case with its result (the body of `server.selftest`).
pub fn run() -> SelftestResult {
    let cases: Vec<SelftestCase> = validation::cases()
        .iter()
        .map(|c| SelftestCase {
            id: c.id.clone(),
            source: c.source.clone(),
            equation: c.equation.clone(),
            inputs: c.inputs.clone(),
            quantity: c.quantity.clone(),
            expected: c.expected,
            computed: c.computed,
            deviation: c.deviation,
            tolerance: c.tolerance,
            passed: c.passed,
            status: c.status.clone(),
        })
        .collect();
    let passed = cases.iter().filter(|c| c.passed).count();
    SelftestResult {
        passed,
        failed: cases.len() - passed,
        digest: validation::digest(),
        version: env!("CARGO_PKG_VERSION").to_string(),
        cases,
    }
}

fn selftest(_: NoParams) -> crate::Result<SelftestResult> {
    Ok(run())
}

/// The start-up gate of `steamcell serve`: `Err` lists every failing case (id, source, printed
/// and computed value, deviation, tolerance) when any built-in case fails, and the server
/// must not serve.
pub fn startup_check() -> Result<(), String> {
    let r = run();
    if r.failed == 0 {
        return Ok(());
    }
    let list: Vec<String> = r
        .cases
        .iter()
        .filter(|c| !c.passed)
        .map(|c| {
            format!(
                "{} ({}): printed {}, computed {}, deviation {:.3e}, tolerance {:.3e}",
                c.id, c.source, c.expected, c.computed, c.deviation, c.tolerance
            )
        })
        .collect();
    Err(format!(
        "the built-in self-test failed: {} of {} verification cases do not match their printed values, so this build does not compute what the IAPWS releases print; refusing to serve. Failing cases: {}",
        r.failed,
        r.cases.len(),
        list.join("; ")
    ))
}

/// The self-test method.
pub fn methods() -> Vec<MethodSpec> {
    vec![MethodSpec::new::<NoParams, SelftestResult>(
        "server.selftest",
        "Run every built-in IAPWS verification case and report each one",
        "Evaluates the computer-program verification values of IAPWS R7-97(2012) and the supplementary releases SR2-01, SR3-03, SR4-04 and SR5-05 with this build and returns, per case, the source table, printed value, computed value, relative deviation, tolerance and pass/fail: a validation record a QA reviewer can file.",
        selftest,
    )]
}
