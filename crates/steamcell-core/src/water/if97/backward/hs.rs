//! Equations of IAPWS SR4-04(2014) in (h,s): the saturated-liquid lines h'1(s), h'3a(s), the
//! saturated-vapour lines h''2ab(s), h''2c3b(s), the boundaries h_B13(s) and T_B23(h,s), the
//! two-phase temperature Tsat(h,s), and the (h,s) region determination for regions 1 to 4.
//!
//! Units: h kJ/kg, s kJ/(kg K), T K, p MPa. Invariant: the boundary functions are raw
//! evaluations; `region_hs` decides with them, the B23 equation and the p(h,s) backward
//! equations only (no basic equation), and never panics.

use super::{region1, region2, region3, Series};
use crate::water::if97::b23;
use crate::water::tables::{
    sr4_04_h1_sat_liquid as h1l, sr4_04_h2ab_sat_vapour as h2abv,
    sr4_04_h2c3b_sat_vapour as h2c3bv, sr4_04_h3a_sat_liquid as h3al, sr4_04_hb13 as hb13,
    sr4_04_tb23_hs as tb23, sr4_04_tsat_hs as tsat,
};

// Fixed boundary values. Source: SR4-04(2014) / SR3-03(2014) range-of-validity statements as
// transcribed in the coefficient tables' `Validity:` docs (not from memory). All except
// S_B23_MIN, S_B23_MAX and H_B23_MAX (which need the basic equations) are checked against the
// equations they bound in tests/it/iapws_sr4_04.rs.

/// s'(273.15 K), saturated liquid at 273.15 K, kJ/(kg K) (SR4-04(2014), h'1(s) validity).
pub const S_LIQ_273: f64 = -1.545495919e-4;
/// s''(273.15 K), saturated vapour at 273.15 K, kJ/(kg K) (SR4-04(2014), h''2ab(s) validity).
pub const S_VAP_273: f64 = 9.155759395;
/// s'(623.15 K), kJ/(kg K) (SR4-04(2014), h'1(s) and h'3a(s) validity).
pub const S_LIQ_623: f64 = 3.778281340;
/// s''(623.15 K), kJ/(kg K) (SR4-04(2014), Tsat(h,s) validity; SR3-03(2014), p3sat(s)).
pub const S_VAP_623: f64 = 5.210887825;
/// s(100 MPa, 623.15 K), lower end of the B13 line, kJ/(kg K) (SR4-04(2014), h_B13(s) validity).
pub const S_B13_MIN: f64 = 3.397782955;
/// Entropy range of the B23 line in (h,s), kJ/(kg K) (SR4-04(2014), T_B23(h,s) validity).
pub const S_B23_MIN: f64 = 5.048096828;
/// Upper end of the entropy range of the B23 line, kJ/(kg K).
pub const S_B23_MAX: f64 = 5.260578707;
/// Enthalpy range of the B23 line in (h,s), kJ/kg (SR4-04(2014), T_B23(h,s) validity).
pub const H_B23_MIN: f64 = 2.563592004e3;
/// Upper end of the enthalpy range of the B23 line, kJ/kg.
pub const H_B23_MAX: f64 = 2.812942061e3;
/// Upper pressure limit of regions 1 to 3, MPa (R7-97(2012)).
pub const P_MAX: f64 = 100.0;
/// Lowest temperature of regions 1, 2 and 4, K (R7-97(2012)).
pub const T_MIN: f64 = 273.15;
/// Highest temperature of region 2, K (R7-97(2012)).
pub const T2_MAX: f64 = 1073.15;

static H1L: Series = Series::new(&h1l::TERMS);
static H3AL: Series = Series::new(&h3al::TERMS);
static H2ABV: Series = Series::new(&h2abv::TERMS);
static H2C3BV: Series = Series::new(&h2c3bv::TERMS);
static HB13: Series = Series::new(&hb13::TERMS);
static TB23: Series = Series::new(&tb23::TERMS);
static TSAT: Series = Series::new(&tsat::TERMS);

/// h'1(s) in kJ/kg, saturated liquid (region-1 side): eta = sum n (sigma - 1.09)^I (sigma + 0.366e-4)^J;
/// valid s'(273.15 K) <= s <= s'(623.15 K).
pub fn h1_sat_liquid(s: f64) -> f64 {
    let sigma = s / h1l::S_STAR;
    H1L.eval(sigma - 1.09, sigma + 0.366e-4) * h1l::H_STAR
}

/// h'3a(s) in kJ/kg, saturated liquid (region-3 side): same form as h'1(s);
/// valid s'(623.15 K) <= s <= s_c.
pub fn h3a_sat_liquid(s: f64) -> f64 {
    let sigma = s / h3al::S_STAR;
    H3AL.eval(sigma - 1.09, sigma + 0.366e-4) * h3al::H_STAR
}

/// h''2ab(s) in kJ/kg, saturated vapour (subregions 2a/2b):
/// ln eta = sum n (1/sigma1 - 0.513)^I (sigma2 - 0.524)^J; valid 5.85 <= s <= s''(273.15 K).
pub fn h2ab_sat_vapour(s: f64) -> f64 {
    let sigma1 = s / h2abv::S1_STAR;
    let sigma2 = s / h2abv::S2_STAR;
    H2ABV.eval(1.0 / sigma1 - 0.513, sigma2 - 0.524).exp() * h2abv::H_STAR
}

/// h''2c3b(s) in kJ/kg, saturated vapour (subregions 2c/3b):
/// eta = [sum n (sigma - 1.02)^I (sigma - 0.726)^J]^4; valid s_c <= s <= 5.85.
pub fn h2c3b_sat_vapour(s: f64) -> f64 {
    let sigma = s / h2c3bv::S_STAR;
    let sum = H2C3BV.eval(sigma - 1.02, sigma - 0.726);
    let sq = sum * sum;
    sq * sq * h2c3bv::H_STAR
}

/// h_B13(s) in kJ/kg, boundary between regions 1 and 3 (the 623.15 K isotherm):
/// eta = sum n (sigma - 0.884)^I (sigma - 0.864)^J; valid s(100 MPa, 623.15 K) <= s <= s'(623.15 K).
pub fn h_b13(s: f64) -> f64 {
    let sigma = s / hb13::S_STAR;
    HB13.eval(sigma - 0.884, sigma - 0.864) * hb13::H_STAR
}

/// T_B23(h,s) in K on the boundary between regions 2 and 3:
/// theta = sum n (eta - 0.727)^I (sigma - 0.864)^J.
pub fn t_b23_hs(h: f64, s: f64) -> f64 {
    TB23.eval(h / tb23::H_STAR - 0.727, s / tb23::S_STAR - 0.864) * tb23::T_STAR
}

/// Saturation temperature Tsat(h,s) in K in the two-phase region:
/// theta = sum n (eta - 0.119)^I (sigma - 1.07)^J; valid for s >= s''(623.15 K).
pub fn tsat_hs(h: f64, s: f64) -> f64 {
    TSAT.eval(h / tsat::H_STAR - 0.119, s / tsat::S_STAR - 1.07) * tsat::T_STAR
}

/// IF97 region of an (h,s) state, as decided by `region_hs`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RegionHs {
    /// Region 1 (compressed liquid).
    R1,
    /// Region 2 (vapour); subregion by `region2::sub2_hs`.
    R2,
    /// Region 3 (near-critical); subregion by `region3::sub3_s`.
    R3,
    /// Region 4 (two-phase).
    R4,
}

/// Region of (h,s) for the backward equations p(h,s) and Tsat(h,s), following the boundary
/// scheme of SR4-04(2014): saturated-liquid lines h'1(s) (s <= s'(623.15 K)) and h'3a(s)
/// (up to s_c), saturated-vapour lines h''2c3b(s) (up to 5.85) and h''2ab(s) (up to s''(273.15 K)),
/// h_B13(s) between regions 1 and 3, T_B23(h,s) with the B23 equation between regions 2 and 3.
/// The outer limits use the backward equations: p(h,s) <= 100 MPa, T >= 273.15 K (region 1 left
/// of s'(273.15 K), region 2 right of s''(273.15 K)) and T <= 1073.15 K in region 2; the two-phase
/// region ends at the 273.15 K isotherm, the straight line of slope 273.15 K through h'1(s'(273.15 K)).
/// `None` outside regions 1 to 4 (including region 5) or for non-finite input.
pub fn region_hs(h: f64, s: f64) -> Option<RegionHs> {
    if !(h.is_finite() && s.is_finite()) {
        return None;
    }
    if s < S_LIQ_273 {
        return region1_checked(h, s);
    }
    if s <= S_LIQ_623 {
        if h < h1_sat_liquid(s) {
            return two_phase(h, s);
        }
        if s >= S_B13_MIN && h > h_b13(s) {
            return region3_checked(h, s);
        }
        return region1_checked(h, s);
    }
    if s <= region3::S_C {
        if h < h3a_sat_liquid(s) {
            return two_phase(h, s);
        }
        return region3_checked(h, s);
    }
    if s <= region2::S_2BC {
        if h < h2c3b_sat_vapour(s) {
            return two_phase(h, s);
        }
        if s < S_B23_MIN || (s <= S_B23_MAX && h < H_B23_MIN) {
            return region3_checked(h, s);
        }
        if s > S_B23_MAX || h > H_B23_MAX {
            return region2_checked(h, s);
        }
        // B23 box: region 3 where the 2c pressure lies above the B23 pressure at T_B23(h,s)
        // (decision rule of SR4-04(2014); procedure recalled from memory of the release text).
        let p_b = b23::p_b23(t_b23_hs(h, s));
        let p_2c = region2::p_hs_sub(region2::Sub2::C, h, s);
        if p_2c > p_b {
            return region3_checked(h, s);
        }
        return region2_checked(h, s);
    }
    if s <= S_VAP_273 && h < h2ab_sat_vapour(s) {
        return two_phase(h, s);
    }
    region2_checked(h, s)
}

fn two_phase(h: f64, s: f64) -> Option<RegionHs> {
    // Along the 273.15 K isotherm in the two-phase region dh = T ds.
    let h_low = h1_sat_liquid(S_LIQ_273) + T_MIN * (s - S_LIQ_273);
    if h >= h_low {
        Some(RegionHs::R4)
    } else {
        None
    }
}

fn region1_checked(h: f64, s: f64) -> Option<RegionHs> {
    let p = region1::p_hs(h, s);
    if !(p > 0.0 && p <= P_MAX) {
        return None;
    }
    if s < S_LIQ_273 {
        let t = region1::t_ps(p, s);
        if t.is_nan() || t < T_MIN {
            return None;
        }
    }
    Some(RegionHs::R1)
}

fn region3_checked(h: f64, s: f64) -> Option<RegionHs> {
    let p = region3::p_hs(h, s);
    if p > 0.0 && p <= P_MAX {
        Some(RegionHs::R3)
    } else {
        None
    }
}

fn region2_checked(h: f64, s: f64) -> Option<RegionHs> {
    let p = region2::p_hs(h, s);
    if !(p > 0.0 && p <= P_MAX) {
        return None;
    }
    let t = region2::t_ps(p, s);
    if !(T_MIN..=T2_MAX).contains(&t) {
        return None;
    }
    Some(RegionHs::R2)
}
