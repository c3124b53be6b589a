//! Region 3 backward equations of IAPWS SR3-03(2014): T(p,h), v(p,h), T(p,s), v(p,s) for
//! subregions 3a/3b with the boundaries h_3ab(p) and s_c, the saturation pressures p3sat(h) and
//! p3sat(s); and p(h,s) for 3a/3b of IAPWS SR4-04(2014).
//!
//! Units: p MPa, T K, h kJ/kg, s kJ/(kg K), v m3/kg. Invariant: raw evaluation of each
//! published form; the subregion functions implement the releases' splits only.

use super::Series;
use crate::water::tables::{
    sr3_03_h3ab as h3ab, sr3_03_p3sat_h as psh, sr3_03_p3sat_s as pss, sr3_03_region3a_tph as tha,
    sr3_03_region3a_tps as tsa, sr3_03_region3a_vph as vha, sr3_03_region3a_vps as vsa,
    sr3_03_region3b_tph as thb, sr3_03_region3b_tps as tsb, sr3_03_region3b_vph as vhb,
    sr3_03_region3b_vps as vsb, sr4_04_region3a_phs as pha, sr4_04_region3b_phs as phb,
};

/// Subregion of region 3 for the (p,h), (p,s) and (h,s) backward equations.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Sub3 {
    /// Subregion 3a (liquid-like side of the critical isentrope).
    A,
    /// Subregion 3b (vapour-like side).
    B,
}

/// Critical entropy s_c in kJ/(kg K), the 3a/3b split for (p,s) and (h,s) (SR3-03(2014)).
pub const S_C: f64 = h3ab::S_C;

static THA: Series = Series::new(&tha::TERMS);
static THB: Series = Series::new(&thb::TERMS);
static VHA: Series = Series::new(&vha::TERMS);
static VHB: Series = Series::new(&vhb::TERMS);
static TSA: Series = Series::new(&tsa::TERMS);
static TSB: Series = Series::new(&tsb::TERMS);
static VSA: Series = Series::new(&vsa::TERMS);
static VSB: Series = Series::new(&vsb::TERMS);
static PSH: Series = Series::new(&psh::TERMS);
static PSS: Series = Series::new(&pss::TERMS);
static PHA: Series = Series::new(&pha::TERMS);
static PHB: Series = Series::new(&phb::TERMS);

/// 3a/3b boundary h_3ab(p) in kJ/kg: eta = n1 + n2 pi + n3 pi^2 + n4 pi^3 (SR3-03(2014)).
pub fn h_3ab(p: f64) -> f64 {
    let n = &h3ab::TERMS;
    let pi = p / h3ab::P_STAR;
    (n[0] + pi * (n[1] + pi * (n[2] + pi * n[3]))) * h3ab::H_STAR
}

/// Subregion for (p,h): 3a where h <= h_3ab(p), else 3b.
pub fn sub3_ph(p: f64, h: f64) -> Sub3 {
    if h <= h_3ab(p) {
        Sub3::A
    } else {
        Sub3::B
    }
}

/// Subregion for (p,s) and (h,s): 3a where s <= s_c, else 3b.
pub fn sub3_s(s: f64) -> Sub3 {
    if s <= S_C {
        Sub3::A
    } else {
        Sub3::B
    }
}

/// T(p,h) in K: theta = sum n (pi + a)^I (eta - b)^J, (a, b) = (0.240, 0.615) for 3a,
/// (0.298, 0.720) for 3b.
pub fn t_ph(p: f64, h: f64) -> f64 {
    match sub3_ph(p, h) {
        Sub3::A => THA.eval(p / tha::P_STAR + 0.240, h / tha::H_STAR - 0.615) * tha::T_STAR,
        Sub3::B => THB.eval(p / thb::P_STAR + 0.298, h / thb::H_STAR - 0.720) * thb::T_STAR,
    }
}

/// v(p,h) in m3/kg: omega = sum n (pi + a)^I (eta - b)^J, (a, b) = (0.128, 0.727) for 3a,
/// (0.0661, 0.720) for 3b.
pub fn v_ph(p: f64, h: f64) -> f64 {
    match sub3_ph(p, h) {
        Sub3::A => VHA.eval(p / vha::P_STAR + 0.128, h / vha::H_STAR - 0.727) * vha::V_STAR,
        Sub3::B => VHB.eval(p / vhb::P_STAR + 0.0661, h / vhb::H_STAR - 0.720) * vhb::V_STAR,
    }
}

/// T(p,s) in K: theta = sum n (pi + a)^I (sigma - b)^J, (a, b) = (0.240, 0.703) for 3a,
/// (0.760, 0.818) for 3b.
pub fn t_ps(p: f64, s: f64) -> f64 {
    match sub3_s(s) {
        Sub3::A => TSA.eval(p / tsa::P_STAR + 0.240, s / tsa::S_STAR - 0.703) * tsa::T_STAR,
        Sub3::B => TSB.eval(p / tsb::P_STAR + 0.760, s / tsb::S_STAR - 0.818) * tsb::T_STAR,
    }
}

/// v(p,s) in m3/kg: omega = sum n (pi + a)^I (sigma - b)^J, (a, b) = (0.187, 0.755) for 3a,
/// (0.298, 0.816) for 3b.
pub fn v_ps(p: f64, s: f64) -> f64 {
    match sub3_s(s) {
        Sub3::A => VSA.eval(p / vsa::P_STAR + 0.187, s / vsa::S_STAR - 0.755) * vsa::V_STAR,
        Sub3::B => VSB.eval(p / vsb::P_STAR + 0.298, s / vsb::S_STAR - 0.816) * vsb::V_STAR,
    }
}

/// Saturation pressure p3sat(h) in MPa: pi = sum n (eta - 1.02)^I (eta - 0.608)^J
/// (SR3-03(2014)); valid h'(623.15 K) <= h <= h''(623.15 K).
pub fn p3sat_h(h: f64) -> f64 {
    let eta = h / psh::H_STAR;
    PSH.eval(eta - 1.02, eta - 0.608) * psh::P_STAR
}

/// Saturation pressure p3sat(s) in MPa: pi = sum n (sigma - 1.03)^I (sigma - 0.699)^J
/// (SR3-03(2014)); valid s'(623.15 K) <= s <= s''(623.15 K).
pub fn p3sat_s(s: f64) -> f64 {
    let sigma = s / pss::S_STAR;
    PSS.eval(sigma - 1.03, sigma - 0.699) * pss::P_STAR
}

/// p(h,s) in MPa (SR4-04(2014)): 3a (s <= s_c): pi = sum n (eta - 1.01)^I (sigma - 0.750)^J;
/// 3b: p*/p = sum n (eta - 0.681)^I (sigma - 0.792)^J.
pub fn p_hs(h: f64, s: f64) -> f64 {
    match sub3_s(s) {
        Sub3::A => PHA.eval(h / pha::H_STAR - 1.01, s / pha::S_STAR - 0.750) * pha::P_STAR,
        Sub3::B => phb::P_STAR / PHB.eval(h / phb::H_STAR - 0.681, s / phb::S_STAR - 0.792),
    }
}
