//! IAPWS-IF97 regions: the limits of the formulation and the region of a (p, T) point, after
//! IAPWS R7-97(2012) Fig. 1 and section 4 (region definitions).
//!
//! Units: p MPa, T K, rho kg/m3, R kJ/(kg K).
//!
//! Invariant: [`region_pt`] returns one of regions 1, 2, 3 and 5 for every finite (p, T) inside
//! the range of validity, and a structured error naming the quantity otherwise; it never returns
//! region 4, which holds wet states that (p, T) cannot identify (the caller chooses them through
//! a vapour fraction).

use super::{b23, region4};
use crate::error::{Bound, Error, Result};

/// Name of the formulation, as errors cite it.
pub const FORMULATION: &str = "IAPWS-IF97";
/// Specific gas constant of IAPWS-IF97, kJ/(kg K) (R7-97(2012) Eq. (1)).
pub const R: f64 = 0.461526;
/// Critical temperature, K (R7-97(2012) Eq. (2)); the one definition of IF97's critical
/// constants, re-exported as `if97::T_C` and `state::T_C`.
pub const T_C: f64 = 647.096;
/// Critical pressure, MPa (R7-97(2012) Eq. (3)).
pub const P_C: f64 = 22.064;
/// Critical density, kg/m3 (R7-97(2012) Eq. (4)).
pub const RHO_C: f64 = 322.0;
/// Lowest temperature of the formulation, K.
pub const T_MIN: f64 = 273.15;
/// Boundary temperature between regions 1 and 3 (and lowest temperature of B23), K.
pub const T_13: f64 = 623.15;
/// Highest temperature of the B23 boundary (p_B23 = 100 MPa), K.
pub const T_B23_MAX: f64 = 863.15;
/// Boundary temperature between regions 2 and 5, K.
pub const T_25: f64 = 1073.15;
/// Highest temperature of the formulation (region 5), K.
pub const T_MAX: f64 = 2273.15;
/// Highest pressure for T <= 1073.15 K, MPa.
pub const P_MAX: f64 = 100.0;
/// Highest pressure for 1073.15 K < T <= 2273.15 K (region 5, 2007 revision), MPa.
pub const P_MAX_R5: f64 = 50.0;

/// An IAPWS-IF97 region (R7-97(2012) Fig. 1).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Region {
    /// Region 1: compressed liquid, Gibbs equation g(p, T).
    R1,
    /// Region 2: vapour (and the metastable-vapour equation), Gibbs equation g(p, T).
    R2,
    /// Region 3: dense states near and above the critical point, Helmholtz equation f(rho, T).
    R3,
    /// Region 4: the saturation line and the wet states on it.
    R4,
    /// Region 5: high-temperature steam, Gibbs equation g(p, T).
    R5,
}

impl Region {
    /// The region number as the release counts it, 1 to 5.
    pub fn number(self) -> u8 {
        match self {
            Region::R1 => 1,
            Region::R2 => 2,
            Region::R3 => 3,
            Region::R4 => 4,
            Region::R5 => 5,
        }
    }
}

/// The region of the single-phase state at pressure `p` (MPa) and temperature `t` (K).
///
/// Range: 273.15 K <= T <= 1073.15 K with 0 < p <= 100 MPa, and 1073.15 K < T <= 2273.15 K with
/// 0 < p <= 50 MPa. Rules on the boundaries (each boundary point belongs to exactly one region):
/// - T <= 623.15 K: region 1 when p >= p_s(T) (Eq. (30)) or T <= T_s(p) (Eq. (31)), else
///   region 2. A point exactly on the saturation line is therefore taken as saturated liquid,
///   region 1, whichever of the two equations (inverse to each other only to rounding) produced
///   it: both (p_s(T), T) and (p, T_s(p)) are region 1.
/// - 623.15 K < T <= 863.15 K: region 2 when p <= p_B23(T) (Eq. (5)), else region 3; the B23
///   line itself is region 2.
/// - 863.15 K < T <= 1073.15 K: region 2; T = 1073.15 K is region 2.
/// - 1073.15 K < T <= 2273.15 K: region 5.
///
/// Errors: [`Error::NotFinite`] for NaN or infinite p or T; [`Error::OutOfRange`] (quantity "T"
/// in K or "p" in MPa, formulation "IAPWS-IF97") outside the range, with p <= 0 refused against
/// the limit 0 MPa. T is checked before p. Region 4 is never returned.
pub fn region_pt(p: f64, t: f64) -> Result<Region> {
    Error::check_finite("p", p)?;
    Error::check_finite("T", t)?;
    if t < T_MIN {
        return Err(Error::out_of_range(
            "T",
            t,
            T_MIN,
            "K",
            Bound::Below,
            FORMULATION,
        ));
    }
    if t > T_MAX {
        return Err(Error::out_of_range(
            "T",
            t,
            T_MAX,
            "K",
            Bound::Above,
            FORMULATION,
        ));
    }
    if p <= 0.0 {
        return Err(Error::out_of_range(
            "p",
            p,
            0.0,
            "MPa",
            Bound::Below,
            FORMULATION,
        ));
    }
    let p_max = if t <= T_25 { P_MAX } else { P_MAX_R5 };
    if p > p_max {
        return Err(Error::out_of_range(
            "p",
            p,
            p_max,
            "MPa",
            Bound::Above,
            FORMULATION,
        ));
    }
    let region = if t <= T_13 {
        if on_or_above_saturation(p, t) {
            Region::R1
        } else {
            Region::R2
        }
    } else if t <= T_B23_MAX {
        if p <= b23::p_b23(t) {
            Region::R2
        } else {
            Region::R3
        }
    } else if t <= T_25 {
        Region::R2
    } else {
        Region::R5
    };
    Ok(region)
}

/// True when (p, T) lies on the liquid side of the saturation line or on it (T <= 623.15 K):
/// p >= p_s(T), or T <= T_s(p). Eq. (31) is evaluated only within 1e-12 of the line, where the
/// two equations can disagree by rounding.
fn on_or_above_saturation(p: f64, t: f64) -> bool {
    let ps = region4::psat(t);
    if p >= ps {
        return true;
    }
    p >= ps * (1.0 - 1e-12) && t <= region4::tsat(p)
}
