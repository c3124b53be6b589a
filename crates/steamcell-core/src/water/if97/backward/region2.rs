//! Region 2 backward equations: subregions 2a/2b/2c, T(p,h) (IAPWS R7-97(2012) Eqs. (22)-(24),
//! Tables 20-22), T(p,s) (Eqs. (25)-(27), Tables 25-27), the B2bc boundary (Eqs. (20), (21),
//! Table 19), and p(h,s) with the h_2ab(s) boundary (IAPWS SR2-01(2014)).
//!
//! Units: p MPa, T K, h kJ/kg, s kJ/(kg K). Invariant: raw evaluation of each published form;
//! the subregion functions implement the releases' splits, nothing else is range-checked.

use super::{QuarterSeries, Series};
use crate::water::tables::{
    if97_b2bc as b2bc, if97_backward_region2_tph_a as tha, if97_backward_region2_tph_b as thb,
    if97_backward_region2_tph_c as thc, if97_backward_region2_tps_a as tsa,
    if97_backward_region2_tps_b as tsb, if97_backward_region2_tps_c as tsc, sr2_01_h2ab as h2ab,
    sr2_01_region2a_phs as pha, sr2_01_region2b_phs as phb, sr2_01_region2c_phs as phc,
};

/// Subregion of region 2 for the backward equations.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Sub2 {
    /// Subregion 2a.
    A,
    /// Subregion 2b.
    B,
    /// Subregion 2c.
    C,
}

/// 2a/2b split pressure of T(p,h) and T(p,s), MPa (R7-97(2012) Section 6.3.1).
pub const P_2AB: f64 = 4.0;
/// 2b/2c split entropy of T(p,s) and p(h,s), kJ/(kg K) (R7-97(2012) Section 6.3.1; SR2-01(2014)).
pub const S_2BC: f64 = 5.85;
/// Lowest pressure of the B2bc line (T = 554.485 K), MPa (R7-97(2012) B2bc validity); below it
/// and above 4 MPa all of region 2 is subregion 2b for T(p,h) (coefficient collection README).
pub const P_B2BC_MIN: f64 = 6.5467;

static THA: Series = Series::new(&tha::TABLE_20);
static THB: Series = Series::new(&thb::TABLE_21);
static THC: Series = Series::new(&thc::TABLE_22);
static TSA: QuarterSeries = QuarterSeries::new(&tsa::TABLE_25);
static TSB: Series = Series::new(&tsb::TABLE_26);
static TSC: Series = Series::new(&tsc::TABLE_27);
static PHA: Series = Series::new(&pha::TERMS);
static PHB: Series = Series::new(&phb::TERMS);
static PHC: Series = Series::new(&phc::TERMS);

/// B2bc boundary p(h) in MPa: pi = n1 + n2 eta + n3 eta^2 (R7-97(2012) Eq. (20)).
pub fn p_2bc(h: f64) -> f64 {
    let n = &b2bc::TABLE_19;
    let eta = h / b2bc::H_STAR;
    (n[0] + n[1] * eta + n[2] * eta * eta) * b2bc::P_STAR
}

/// B2bc boundary h(p) in kJ/kg: eta = n4 + [(pi - n5)/n3]^(1/2) (R7-97(2012) Eq. (21)).
pub fn h_2bc(p: f64) -> f64 {
    let n = &b2bc::TABLE_19;
    let pi = p / b2bc::P_STAR;
    (n[3] + ((pi - n[4]) / n[2]).sqrt()) * b2bc::H_STAR
}

/// Subregion for T(p,h): 2a for p <= 4 MPa; above, 2b where h >= h_B2bc(p) and 2c below it,
/// the B2bc line being used only above 6.5467 MPa (all 2b between 4 and 6.5467 MPa).
pub fn sub2_ph(p: f64, h: f64) -> Sub2 {
    if p <= P_2AB {
        Sub2::A
    } else if p <= P_B2BC_MIN || h >= h_2bc(p) {
        Sub2::B
    } else {
        Sub2::C
    }
}

/// Subregion for T(p,s): 2a for p <= 4 MPa; above, 2b for s >= 5.85 kJ/(kg K), else 2c.
pub fn sub2_ps(p: f64, s: f64) -> Sub2 {
    if p <= P_2AB {
        Sub2::A
    } else if s >= S_2BC {
        Sub2::B
    } else {
        Sub2::C
    }
}

/// T(p,h) in K of the subregion chosen by `sub2_ph`.
pub fn t_ph(p: f64, h: f64) -> f64 {
    t_ph_sub(sub2_ph(p, h), p, h)
}

/// T(p,h) in K of a given subregion (R7-97(2012) Eqs. (22)-(24)).
pub fn t_ph_sub(sub: Sub2, p: f64, h: f64) -> f64 {
    match sub {
        // theta = sum n pi^I (eta - 2.1)^J
        Sub2::A => THA.eval(p / tha::P_STAR, h / tha::H_STAR - 2.1) * tha::T_STAR,
        // theta = sum n (pi - 2)^I (eta - 2.6)^J
        Sub2::B => THB.eval(p / thb::P_STAR - 2.0, h / thb::H_STAR - 2.6) * thb::T_STAR,
        // theta = sum n (pi + 25)^I (eta - 1.8)^J
        Sub2::C => THC.eval(p / thc::P_STAR + 25.0, h / thc::H_STAR - 1.8) * thc::T_STAR,
    }
}

/// T(p,s) in K of the subregion chosen by `sub2_ps`.
pub fn t_ps(p: f64, s: f64) -> f64 {
    t_ps_sub(sub2_ps(p, s), p, s)
}

/// T(p,s) in K of a given subregion (R7-97(2012) Eqs. (25)-(27)).
pub fn t_ps_sub(sub: Sub2, p: f64, s: f64) -> f64 {
    match sub {
        // theta = sum n pi^I (sigma - 2)^J, I fractional
        Sub2::A => TSA.eval(p / tsa::P_STAR, s / tsa::S_STAR - 2.0) * tsa::T_STAR,
        // theta = sum n pi^I (10 - sigma)^J
        Sub2::B => TSB.eval(p / tsb::P_STAR, 10.0 - s / tsb::S_STAR) * tsb::T_STAR,
        // theta = sum n pi^I (2 - sigma)^J
        Sub2::C => TSC.eval(p / tsc::P_STAR, 2.0 - s / tsc::S_STAR) * tsc::T_STAR,
    }
}

/// 2a/2b boundary h_2ab(s) in kJ/kg: eta = n1 + n2 sigma + n3 sigma^2 + n4 sigma^3 (SR2-01(2014)).
pub fn h_2ab(s: f64) -> f64 {
    let n = &h2ab::TERMS;
    let sigma = s / h2ab::S_STAR;
    (n[0] + sigma * (n[1] + sigma * (n[2] + sigma * n[3]))) * h2ab::H_STAR
}

/// Subregion for p(h,s) (SR2-01(2014)): 2c for s < 5.85 kJ/(kg K); otherwise 2a where
/// h <= h_2ab(s), 2b above.
pub fn sub2_hs(h: f64, s: f64) -> Sub2 {
    if s < S_2BC {
        Sub2::C
    } else if h <= h_2ab(s) {
        Sub2::A
    } else {
        Sub2::B
    }
}

/// p(h,s) in MPa of the subregion chosen by `sub2_hs`.
pub fn p_hs(h: f64, s: f64) -> f64 {
    p_hs_sub(sub2_hs(h, s), h, s)
}

/// p(h,s) in MPa of a given subregion: pi = [sum n (eta - a)^I (sigma - b)^J]^4 (SR2-01(2014)).
pub fn p_hs_sub(sub: Sub2, h: f64, s: f64) -> f64 {
    let (sum, p_star) = match sub {
        Sub2::A => (
            PHA.eval(h / pha::H_STAR - 0.5, s / pha::S_STAR - 1.2),
            pha::P_STAR,
        ),
        Sub2::B => (
            PHB.eval(h / phb::H_STAR - 0.6, s / phb::S_STAR - 1.01),
            phb::P_STAR,
        ),
        Sub2::C => (
            PHC.eval(h / phc::H_STAR - 0.7, s / phc::S_STAR - 1.1),
            phc::P_STAR,
        ),
    };
    let sq = sum * sum;
    sq * sq * p_star
}
