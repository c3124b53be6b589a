//! Surface tension of ordinary water against its vapour, IAPWS R1-76(2014), Eq. (1):
//! sigma = B tau^mu (1 + b tau), tau = 1 - T/T_c.
//!
//! Units: T K in; sigma N/m out (the release's B and table values are in mN/m).
//!
//! Invariant: defined from 248.15 K (supercooled liquid, the 2014 revision's extrapolation) to
//! T_c = 647.096 K, where sigma = 0; other temperatures are refused.

use crate::error::{Bound, Error, Result};
use crate::water::tables::surface_tension as tab;

/// Lowest temperature accepted, K (supercooled liquid; R1-76(2014) extrapolation limit).
pub const T_MIN: f64 = 248.15;
/// Highest temperature accepted, K (the critical temperature, sigma = 0).
pub const T_MAX: f64 = tab::T_C;

const NAME: &str = "IAPWS R1-76(2014)";

/// Surface tension in N/m at T K, 248.15 K <= T <= 647.096 K.
pub fn surface_tension(t: f64) -> Result<f64> {
    Error::check_finite("T", t)?;
    if t < T_MIN {
        return Err(Error::out_of_range("T", t, T_MIN, "K", Bound::Below, NAME));
    }
    if t > T_MAX {
        return Err(Error::out_of_range("T", t, T_MAX, "K", Bound::Above, NAME));
    }
    let tau = 1.0 - t / tab::T_C;
    Ok(1e-3 * tab::B * tau.powf(tab::MU) * (1.0 + tab::SMALL_B * tau))
}
