//! The validation self-test summary reported by `server.info` as `digest`.
//!
//! STUB: replaced by the lead. The real version runs the built-in check values and returns a
//! short digest of the results, so a caller can see which validated build answers.

/// A short text identifying the validation state of this build.
///
/// STUB: replaced by the lead; returns a fixed text for now.
pub fn validation_digest() -> String {
    "stub".to_string()
}
