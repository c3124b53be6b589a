//! A deliberate fault for one test, in debug builds only: IAPWS R7-97(2012) Table 2's n_3 (the
//! region-1 coefficient -0.37563603672040e1) changed in its eighth significant digit, so that the
//! built-in verification cases of region 1 fail and `steamcell serve` refuses to start
//! (`tests/it/validation_record.rs::corrupted_coefficient_fails_the_start_up_self_test`).
//!
//! Switched on once per process by [`corrupt_one_coefficient`] (the `steamcell` binary calls it
//! when the environment variable `STEAMCELL_DEBUG_CORRUPT_COEFFICIENT` is set, in debug builds);
//! never switched off. In a release build this module does not exist and region 1 reads its
//! one coefficient table directly, so no release binary can compute with the fault.
//!
//! Invariant: switching it on changes only which table region 1 reads; the arithmetic is the
//! same expressions in the same order, so results without the fault are unchanged to the bit.

use std::sync::atomic::{AtomicBool, Ordering};

static ON: AtomicBool = AtomicBool::new(false);

/// Relative change applied to n_3 of Table 2 (a transcription error in the eighth digit).
pub const RELATIVE_CHANGE: f64 = 1e-7;

/// Switches the fault on for the rest of the process.
pub fn corrupt_one_coefficient() {
    ON.store(true, Ordering::Relaxed);
}

/// Whether the fault is on.
#[inline]
pub fn on() -> bool {
    ON.load(Ordering::Relaxed)
}
