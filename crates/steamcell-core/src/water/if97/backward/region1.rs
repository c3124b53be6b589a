//! Region 1 backward equations: T(p,h) (IAPWS R7-97(2012) Eq. (11), Table 6), T(p,s) (Eq. (13),
//! Table 8) and p(h,s) (IAPWS SR2-01(2014), p1(h,s)).
//!
//! Units: p MPa, T K, h kJ/kg, s kJ/(kg K). Invariant: raw evaluation of each published form,
//! valid in region 1; no range check.

use super::Series;
use crate::water::tables::{
    if97_backward_region1_tph as tph, if97_backward_region1_tps as tps, sr2_01_region1_phs as phs,
};

static TPH: Series = Series::new(&tph::TABLE_6);
static TPS: Series = Series::new(&tps::TABLE_8);
static PHS: Series = Series::new(&phs::TERMS);

/// T(p,h) in K: theta = sum n pi^I (eta + 1)^J (R7-97(2012) Eq. (11)).
pub fn t_ph(p: f64, h: f64) -> f64 {
    let pi = p / tph::P_STAR;
    let eta = h / tph::H_STAR;
    TPH.eval(pi, eta + 1.0) * tph::T_STAR
}

/// T(p,s) in K: theta = sum n pi^I (sigma + 2)^J (R7-97(2012) Eq. (13)).
pub fn t_ps(p: f64, s: f64) -> f64 {
    let pi = p / tps::P_STAR;
    let sigma = s / tps::S_STAR;
    TPS.eval(pi, sigma + 2.0) * tps::T_STAR
}

/// p(h,s) in MPa: pi = sum n (eta + 0.05)^I (sigma + 0.05)^J (SR2-01(2014), p1(h,s)).
pub fn p_hs(h: f64, s: f64) -> f64 {
    let eta = h / phs::H_STAR;
    let sigma = s / phs::S_STAR;
    PHS.eval(eta + 0.05, sigma + 0.05) * phs::P_STAR
}
